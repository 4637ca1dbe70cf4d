"""Measure how far a vapour-pressure equation drifts outside its own range, on real data:
every liquid of Landolt's compilation (odd CAS numbers; tests/_support/compilations.py) that
also has an equation in Poling's, McGarry's or Perry's tables. Each equation of a pair is
extrapolated into the part of the other's range that lies beyond its own, and the change of
their difference, from its value at the extrapolated equation's range end, is taken against
the relative distance f = |T - T_end| / T. Prints the quantiles per bin of f, below and
above the range, beside the allowance ``vpaudit.checks.extrapolation`` uses (fitted to the
95th percentile).

    python benchmarks/extrapolation.py
"""

from __future__ import annotations

import sys
from collections import defaultdict
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests" / "_support"))

from compilations import COMPILATIONS, _complete  # noqa: E402
from refdata import table_from_rows  # noqa: E402

from vpaudit.checks.extrapolation import allowance  # noqa: E402
from vpaudit.equations.engine import curves_from_frame, evaluate  # noqa: E402

EDGES = (0.0, 0.02, 0.04, 0.06, 0.08, 0.10, 0.125, 0.15, 0.20, 0.25)


def _curves(recs):
    rows = [dict(r, id=f"r{i}", substance=f"s{i}") for i, r in enumerate(recs)]
    return curves_from_frame(table_from_rows(rows).records)


def pairs() -> list[tuple[dict, dict]]:
    """Landolt liquids with a second source, both ways round."""
    landolt, _ = COMPILATIONS["landolt"](None)
    landolt = [
        r for r in landolt if _complete(r) and r["phase"] == "liquid" and r["t_min"] < r["t_max"]
    ]
    others: dict[str, list[dict]] = defaultdict(list)
    for name in ("poling-antoine", "wagner", "perry"):
        recs, _ = COMPILATIONS[name](None)
        for r in recs:
            if _complete(r) and r["phase"] == "liquid":
                others[r["substance"]].append(r)
    got = [(a, b) for a in landolt for b in others.get(a["substance"], [])]
    return got + [(b, a) for a, b in got]


def drift() -> dict[tuple[str, float], list[float]]:
    """Per (side, upper edge of the bin of f): the largest drift of each pair in the bin."""
    ps = pairs()
    ca, cb = _curves([a for a, _ in ps]), _curves([b for _, b in ps])
    out: dict[tuple[str, float], list[float]] = defaultdict(list)
    for k, (a, b) in enumerate(ps):
        if min(a["t_max"], b["t_max"]) <= max(a["t_min"], b["t_min"]):
            continue  # no common range: no difference to start from
        for side, end, far in (
            ("below", a["t_min"], b["t_min"]),
            ("above", a["t_max"], b["t_max"]),
        ):
            if (far >= end) if side == "below" else (far <= end):
                continue
            t = np.linspace(end, far, 40)
            d = (
                evaluate(ca.take([k]), t[None, :], 0)[0][0]
                - evaluate(cb.take([k]), t[None, :], 0)[0][0]
            )
            change = np.abs(d - d[0])
            f = np.abs(t - end) / t
            for lo, hi in zip(EDGES[:-1], EDGES[1:], strict=True):
                m = (f > lo) & (f <= hi) & np.isfinite(change)
                if m.any():
                    out[(side, hi)].append(float(change[m].max()))
    return out


def main() -> None:
    got = drift()
    print("side   f up to  pairs  median    p90    p95  | allowance (at f)")
    for side in ("below", "above"):
        for hi in EDGES[1:]:
            v = np.array(got.get((side, hi), []))
            if v.size == 0:
                continue
            # a range ending a fraction hi of the temperature away: f = |T - T_end| / T
            ends = (1.0 + hi, 2.0) if side == "below" else (0.5, 1.0 - hi)
            model = allowance(ends[0], ends[1], 1.0)
            med, p90, p95 = np.percentile(v, [50, 90, 95])
            print(
                f"{side:6s} {hi:7.3f} {v.size:6d} {med:7.3f} {p90:6.3f} {p95:6.3f}"
                f"  | {float(model):.3f}"
            )


if __name__ == "__main__":
    main()
