"""Measure how often the diagnosis names the true slip, and whether its confidence means
what it says, on a labelled set made by corrupting clean real data (tests/_support/slips.py: Alcock
et al. (1984) metal pairs and Poling et al. Antoine liquids, via ``chemicals``).

    python benchmarks/diagnosis_accuracy.py            # the shipped calibration
    python benchmarks/diagnosis_accuracy.py --grid     # also search the scoring constants

A suggestion is *right* when applying it to the corrupted record gives back the original
curve (ln P within 1e-6 over the range), range and phase; for the kinds ``other`` (a
mismatch no single slip explains) and ``clean`` the right answer is no suggestion.
"""

from __future__ import annotations

import argparse
import itertools
import sys
import time
from collections import defaultdict
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests" / "_support"))

from slips import cases_table, labelled_cases, reproduces  # noqa: E402

from vpaudit.auditing import audit_table  # noqa: E402
from vpaudit.checks._context import AuditContext  # noqa: E402
from vpaudit.diagnose import CALIBRATION, choose, hypotheses  # noqa: E402
from vpaudit.policy import Policy  # noqa: E402


def evaluate_cases(cases, flagged, hyps, ctx, calibration):
    """One row per flagged case: kind, whether a suggestion was made, its confidence, right."""
    rows = []
    for c in cases:
        if c.substance not in flagged:
            rows.append((c.kind, False, None, None))
            continue
        h = hyps.get(c.substance)
        sug = choose(ctx, h, calibration)["suggestion"] if h else None
        if c.kind in ("other", "clean"):
            right = sug is None
        elif sug is None:
            right = False
        else:
            bad = next(r for r in c.records if r["id"] == sug["record"])
            if c.kind == "phase-swap":
                right = sug["kind"] == "phase-swap"
            else:
                right = sug["record"] == c.record and reproduces(c.original, bad, sug)
        rows.append((c.kind, True, None if sug is None else sug["confidence"], right))
    return rows


def summary(rows):
    slips = [r for r in rows if r[1] and r[0] not in ("other", "clean")]
    acc = np.mean([r[3] for r in slips]) if slips else float("nan")
    confident = [r for r in rows if r[1] and r[2] is not None and r[2] >= 0.8]
    wrong = np.mean([not r[3] for r in confident]) if confident else 0.0
    given = [r for r in rows if r[1] and r[2] is not None]
    eps = 1e-6
    loss = (
        -np.mean([np.log(np.clip(r[2] if r[3] else 1 - r[2], eps, 1)) for r in given])
        if given
        else float("nan")
    )
    return acc, wrong, len(confident), loss


def prepare(seed, per_kind, poling):
    t0 = time.perf_counter()
    cases = labelled_cases(seed=seed, per_kind=per_kind, poling=poling)
    table = cases_table(cases)
    policy = Policy()
    result = audit_table(table, policy, diagnose=False)
    flagged = {f.substance for f in result.findings if f.severity.rank >= 1}
    ctx = AuditContext(table, policy)
    hyps = hypotheses(ctx, result.findings)
    n_ver = sum(len(h[1]) for h in hyps.values())
    n_all = n_ver + sum(len(h[3]) for h in hyps.values())
    print(
        f"seed {seed}: {len(cases)} labelled cases ({len(table.records)} records), "
        f"{len(flagged)} flagged; {n_all} candidate corrections screened, {n_ver} verified "
        f"by the full checks, in {time.perf_counter() - t0:.1f} s"
    )
    return cases, flagged, hyps, ctx


def fit_confidence(args) -> None:
    """Platt scaling of the stated confidence, fitted on an independent labelled set (another
    seed: other substances drawn, other slips), by maximum likelihood of right/wrong.
    """
    from scipy.optimize import minimize

    cases, flagged, hyps, ctx = prepare(args.seed + 1, args.per_kind, args.poling)
    raw = {"logit_scale": 1.0, "logit_shift": 0.0}
    rows = [r for r in evaluate_cases(cases, flagged, hyps, ctx, raw) if r[2] is not None]
    p = np.clip(np.array([r[2] for r in rows]), 1e-9, 1 - 1e-9)
    y = np.array([bool(r[3]) for r in rows], dtype=float)
    z = np.log(p / (1 - p))

    def nll(ab):
        q = 1 / (1 + np.exp(-(ab[0] * z + ab[1])))
        q = np.clip(q, 1e-12, 1 - 1e-12)
        return -np.sum(y * np.log(q) + (1 - y) * np.log(1 - q))

    a, b = minimize(nll, [1.0, 0.0], method="Nelder-Mead").x
    print(
        f"Platt scaling fitted on seed {args.seed + 1} ({len(rows)} suggestions): "
        f"logit_scale {a:.3f}, logit_shift {b:.3f}"
    )


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--grid", action="store_true", help="search the scoring constants")
    ap.add_argument("--per-kind", type=int, default=None, help="substances per kind (all)")
    ap.add_argument("--poling", type=int, default=40, help="Poling liquids used")
    ap.add_argument(
        "--fit-confidence",
        action="store_true",
        help="fit the Platt scaling of the confidence on a second, independent labelled set",
    )
    ap.add_argument("--seed", type=int, default=20261202, help="seed of the reported set")
    args = ap.parse_args()

    cases, flagged, hyps, ctx = prepare(args.seed, args.per_kind, args.poling)
    if args.fit_confidence:
        fit_confidence(args)

    if args.grid:
        print("\nloss          T   P0  cap  clear  accuracy  confident-wrong (n)  log-loss")
        for loss_, T, p0, cap, err in itertools.product(
            ("quadratic",), (0.75, 1.0, 1.5), (0.1, 0.3), (8.0, 12.0), (True, False)
        ):
            cal = {
                "temperature": T,
                "prior_none": p0,
                "component_cap": cap,
                "require_clear": err,
                "loss": loss_,
            }
            acc, wrong, n, loss = summary(evaluate_cases(cases, flagged, hyps, ctx, cal))
            print(
                f"{loss_:10s} {T:5.1f} {p0:4.1f} {cap:4.0f} {err!s:6}  {acc:8.3f}  "
                f"{wrong:15.3f} ({n:4d})  {loss:8.3f}"
            )

    rows = evaluate_cases(cases, flagged, hyps, ctx, None)
    acc, wrong, n, loss = summary(rows)
    print(f"\nShipped calibration {CALIBRATION}")
    print("\nkind                  cases  flagged  suggested  right   (right = true slip; for")
    print("                                                         other/clean: no suggestion)")
    by = defaultdict(list)
    for r in rows:
        by[r[0]].append(r)
    for kind, rs in by.items():
        fl = [r for r in rs if r[1]]
        sg = [r for r in fl if r[2] is not None]
        right = sum(bool(r[3]) for r in fl)
        print(
            f"{kind:20s} {len(rs):6d} {len(fl):8d} {len(sg):10d} {right:6d}  "
            f"({right / max(1, len(fl)):.0%})"
        )
    print(
        f"\nTop suggestion is the true slip: {acc:.1%} of flagged corrupted records\n"
        f"Confident suggestions (>= 0.8) that are wrong: {wrong:.1%} of {n}\n"
        f"Log-loss of the stated confidence: {loss:.3f}"
    )
    print("\nCalibration: suggestions binned by stated confidence")
    print("confidence    suggestions  mean stated  fraction right")
    given = [r for r in rows if r[1] and r[2] is not None]
    for lo, hi in ((0.15, 0.5), (0.5, 0.8), (0.8, 0.95), (0.95, 1.0001)):
        b = [r for r in given if lo <= r[2] < hi]
        if b:
            print(
                f"{lo:.2f}-{min(hi, 1):.2f}   {len(b):12d}  {np.mean([r[2] for r in b]):11.3f}"
                f"  {np.mean([bool(r[3]) for r in b]):14.3f}"
            )
        else:
            print(f"{lo:.2f}-{min(hi, 1):.2f}   {0:12d}")


if __name__ == "__main__":
    main()
