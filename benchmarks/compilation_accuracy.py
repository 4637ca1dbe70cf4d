"""Measure vpaudit on real literature compilations it was not tuned on
(tests/_support/compilations.py: Landolt odd-CAS rows, Poling Antoine, McGarry and Poling
Wagner, Perry's; references through documented ``chemicals`` lookups), per compilation:

* records of the clean compilation drawing an error, by check (each is either the tool's
  own false alarm or a real defect of the data as carried: the table lists the checks so
  that each class can be looked at);
* planted single slips (tests/_support/slips.py ``corrupt``, one per substance, on a seeded sample)
  flagged at error level -- a slip that moves ln P by less than 0.03 everywhere in the
  range (a transposed last digit) is not counted, since no data can tell it; those not
  flagged, by the largest change they make to ln P in the range and by what could witness
  them (a reference Tb, and whether the slip moves ln P there; standard data; another
  source; the partner phase);
* the diagnosis on those: top suggestion is the planted slip, confident (>= 0.8)
  suggestions that are wrong, and confident suggestions on clean substances;
* the same figures as the compilation's substances come (:func:`overall`): the clean
  sample and the troubled one (``--troubled`` below) weighted by their shares.

With ``--every-tb`` each substance carries the normal boiling point of every method that
knows it, not only the first (a table that keeps several sources' values); ``--every-tc``
the same for the critical temperature, ``--every-tm`` for the melting point; ``--anchors``
adds the CRC standard enthalpy and
entropy of each phase change at 298.15 K (the 298.15 K anchor) where they exist.

``--judge-clean`` judges each clean record that draws an error against independent data
(:func:`judge_clean`), and says which errors are the tool's own false alarms.

``--troubled`` plants the slips in substances that already draw an error as carried (a pair
inconsistent at its melting point, a boiling point the curve misses...) instead
(:func:`planted_in_troubled`): the slip must be named although that problem stays.

    python benchmarks/compilation_accuracy.py [--sample 200] [--seed 20261202]
    python benchmarks/compilation_accuracy.py --judge-clean [--only landolt]
    python benchmarks/compilation_accuracy.py --troubled --sample 240
"""

from __future__ import annotations

import argparse
import math
import random
import sys
import time
from collections import Counter
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests" / "_support"))

from compilations import COMPILATIONS, _complete, every_boiling_point  # noqa: E402
from refdata import table_from_rows  # noqa: E402
from slips import SLIP_KINDS, corrupt, reproduces  # noqa: E402

from vpaudit.auditing import audit_table  # noqa: E402


def clean_errors(
    name: str,
    every_tb: bool = False,
    every_tc: bool = False,
    anchors: bool = False,
    every_tm: bool = False,
):
    records, refs = COMPILATIONS[name](None)
    records = [r for r in records if _complete(r)]
    keep = {r["substance"] for r in records}
    refs = [r for r in refs if r["substance"] in keep]
    if every_tb:
        refs = every_boiling_point(refs)
    if every_tc:
        refs = every_boiling_point(refs, "critical_temperature")
    if every_tm:
        refs = every_boiling_point(refs, "melting_point")
    if anchors:
        refs = refs + _anchor_references(records)
    result = audit_table(table_from_rows(records, refs), diagnose=False)
    errs = [f for f in result.findings if f.severity.value == "error"]
    flagged = {x for f in errs for x in f.records}
    confident_on_clean = 0
    return records, refs, flagged, Counter(f.check for f in errs), confident_on_clean


def _anchor_references(records: list[dict]) -> list[dict]:
    """The CRC standard enthalpy and entropy of each record's phase change at 298.15 K
    (tests/_support/anchors.py: chemicals.reaction, method CRC), for every substance and
    phase that has them: a table that carries standard data beside its equations."""
    from anchors import anchor_rows

    out = []
    for sub, phase in sorted({(r["substance"], r["phase"]) for r in records}):
        out += anchor_rows(sub, sub, phase)
    return out


#: Checks whose error says the curve itself cannot be a vapour-pressure curve, or has the
#: impossible sign of dCp: no reference is needed to judge them.
_OWN_PHYSICS = {"heat-capacity-sign", "range-invalid"}
_PAIR = {
    "melting-point-mismatch",
    "no-crossing",
    "crossing-orientation",
    "crossing-outside-range",
    "multiple-crossings",
    "triple-pressure-mismatch",
    "fusion-enthalpy-mismatch",
    "fusion-entropy-implausible",
}
#: How far an implied enthalpy of vaporization may stand from the CRC value at the CRC
#: boiling point and still confirm the record. Measured on the 250 clean Landolt liquids
#: (odd CAS) that have a CRC value (chemicals ``Hvap_data_CRC``): median 5 %, 90th
#: percentile 10 %, 95th 14 %.
_HVAP_AGREES = 0.15


def _errors_by_record(records, refs) -> dict[str, set[str]]:
    result = audit_table(table_from_rows(records, refs), diagnose=False)
    out: dict[str, set[str]] = {}
    for f in result.findings:
        if f.severity.value == "error":
            for rid in f.records:
                out.setdefault(rid, set()).add(f.check)
    return out


def _hvap_at_tb(records: list[dict]) -> dict[str, tuple[float, float]]:
    """For each liquid record whose substance has a CRC enthalpy of vaporization at the CRC
    normal boiling point (chemicals ``Hvap_data_CRC``): (implied dH there, CRC value) [J/mol].
    """
    import numpy as np
    from chemicals.phase_change import Hvap_data_CRC as crc

    from vpaudit.checks._context import AuditContext
    from vpaudit.constants import R
    from vpaudit.equations.engine import evaluate
    from vpaudit.policy import Policy

    liquids = [
        r
        for r in records
        if r["phase"] == "liquid"
        and r["substance"] in crc.index
        and np.isfinite(crc.loc[r["substance"], "HvapTb"])
        and np.isfinite(crc.loc[r["substance"], "Tb"])
    ]
    if not liquids:
        return {}
    ctx = AuditContext(table_from_rows(liquids), Policy())
    tb = np.array([float(crc.loc[r["substance"], "Tb"]) for r in liquids])
    _, y1, _ = evaluate(ctx.curves, tb, order=1)
    h = R * tb * tb * y1
    return {
        r["id"]: (float(h[k]), float(crc.loc[r["substance"], "HvapTb"]))
        for k, r in enumerate(liquids)
    }


def judge_clean(name: str) -> Counter:
    """Each clean record that draws an error, judged against independent data:

    * ``another reference value is met``: with the normal boiling point, critical
      temperature and melting point of every method of chemicals that knows them (a table
      that keeps several sources' values), the record draws no error: one reference value,
      which another contradicts, made the error -- the tool blamed a good record (a false
      alarm);
    * ``impossible curve``: an error that says the curve itself cannot be a vapour-pressure
      curve (a check registered ``impossible``), a dCp of the wrong sign or an invalid range:
      a defect of the record whatever the references;
    * ``range beyond every Tc``, ``pair inconsistent at every Tm``: the defect stands against
      every method's value;
    * ``entropy band, enthalpy confirmed by CRC`` (a false alarm: the implied dH at the CRC
      boiling point is within 15 % of the CRC enthalpy of vaporization there, so the band,
      not the record, is wrong) or ``entropy band, enthalpy contradicted by CRC`` (a defect);
      ``entropy band, no CRC enthalpy`` when there is none to judge by;
    * ``boiling point missed by 2+ methods`` (a defect by the consensus of independent values)
      or ``boiling point of one method only`` (judged by that one value: unconfirmed).
    """
    from compilations import _complete, every_boiling_point

    from vpaudit.checks._registry import REGISTRY

    records, refs = COMPILATIONS[name](None)
    records = [r for r in records if _complete(r)]
    keep = {r["substance"] for r in records}
    refs = [r for r in refs if r["substance"] in keep]
    first = _errors_by_record(records, refs)
    every = every_boiling_point(refs)
    every = every_boiling_point(every, "critical_temperature")
    every = every_boiling_point(every, "melting_point")
    after = _errors_by_record(records, every)
    hvap = _hvap_at_tb(records)
    by_id = {r["id"]: r for r in records}
    tb_methods: dict[str, set[str]] = {}
    for x in every:
        if x["quantity"] == "normal_boiling_point":
            tb_methods.setdefault(x["substance"], set()).add(x["source"])
    out: Counter = Counter()
    for rid in first:
        left = after.get(rid, set())
        if not left:
            out["another reference value is met (false alarm)"] += 1
        elif any(REGISTRY[c].impossible or c in _OWN_PHYSICS for c in left):
            out["impossible curve"] += 1
        elif "above-critical" in left:
            out["range beyond every Tc"] += 1
        elif left & _PAIR:
            out["pair inconsistent at every Tm"] += 1
        elif "enthalpy-implausible" in left:
            got = hvap.get(rid)
            if got is None:
                out["entropy band, no CRC enthalpy (unconfirmed)"] += 1
            elif abs(got[0] - got[1]) <= _HVAP_AGREES * got[1]:
                out["entropy band, enthalpy confirmed by CRC (false alarm)"] += 1
            else:
                out["entropy band, enthalpy contradicted by CRC"] += 1
        elif "boiling-point-mismatch" in left:
            n = len(tb_methods.get(by_id[rid]["substance"], ()))
            out[
                "boiling point missed by 2+ methods"
                if n >= 2
                else "boiling point of one method only (unconfirmed)"
            ] += 1
        else:
            out["other: " + ", ".join(sorted(left))] += 1
    return out


def _shift(original: dict, bad: dict, points: int = 33, at: float | None = None) -> float:
    """How far a slip moves the curve: the largest |ln P| change over the record's range, on
    ``points`` temperatures, or at the one temperature ``at`` [K] (inf where the slipped
    record cannot be read or evaluated there)."""
    import numpy as np

    from vpaudit.equations.engine import curves_from_frame, evaluate

    a = dict(original, id="a")
    b = {
        k: (float(v) if k in "ABCDE" or k in ("p_crit", "t_min", "t_max") else v)
        for k, v in bad.items()
        if v is not None
    }
    b["id"] = "b"
    try:
        cv = curves_from_frame(table_from_rows([a, b]).records)
    except Exception:  # noqa: BLE001  (a slip the reader refuses is visible)
        return math.inf
    t = (
        np.array([at])
        if at is not None
        else np.linspace(float(original["t_min"]), float(original["t_max"]), points)
    )
    with np.errstate(all="ignore"):
        y = evaluate(cv, np.vstack([t, t]), 0)[0]
    d = np.abs(y[0] - y[1])
    return float(np.nanmax(d)) if np.all(np.isfinite(d)) else math.inf


def _visible(original: dict, bad: dict, threshold: float = 0.03) -> bool:
    """Whether a slip moves ln P by more than ``threshold`` (the default relative
    uncertainty of a record) somewhere in the range: a transposed sixth digit does not, and
    is not counted as a slip to detect (judged on 9 temperatures, as the figures quoted in
    docs/diagnosis.md were)."""
    return _shift(original, bad, points=9) > threshold


#: Bins of how far a missed slip moves its curve (the largest |ln P| change in its range).
SHIFT_BINS = ((0.1, "< 0.1"), (0.3, "0.1-0.3"), (1.0, "0.3-1"), (math.inf, ">= 1"))


def _witnesses(sub_records: list[dict], target: dict, bad: dict, sub_refs: list[dict]) -> str:
    """What could witness a slip in ``target`` (slipped to ``bad``): a reference normal
    boiling point (liquids; with how far the slip moves ln P there: a slip that moves the
    curve far from Tb and little at it leaves that witness nothing to see), standard data at
    298.15 K, another record of its phase, a record of the other phase; "none" where the
    curve stands alone."""
    have = []
    quantities = {x["quantity"] for x in sub_refs}
    tbs = [float(x["value"]) for x in sub_refs if x["quantity"] == "normal_boiling_point"]
    if target["phase"] == "liquid" and tbs:
        at = _shift(target, bad, at=sorted(tbs)[len(tbs) // 2])
        have.append(f"Tb (moved {'< 0.1' if at < 0.1 else '>= 0.1'} there)")
    if any(q.startswith("standard_") for q in quantities):
        have.append("298.15 K")
    others = [r for r in sub_records if r is not target]
    if any(r["phase"] == target["phase"] for r in others):
        have.append("another source")
    if any(r["phase"] != target["phase"] for r in others):
        have.append("partner phase")
    return " + ".join(have) or "none"


#: (stated confidence, right) of every suggestion on a planted slip, per compilation
STATED: dict[str, list[tuple[float, bool]]] = {}
BINS = ((0.15, 0.5), (0.5, 0.8), (0.8, 0.95), (0.95, 1.0001))


def calibration_table() -> None:
    """Stated confidence against the fraction right, per compilation: the confidence was
    fitted on the evaluated labelled set, and this is how it carries over."""
    print("\nconfidence by compilation: suggestions / mean stated / fraction right")
    print(f"{'':15s}" + "".join(f"  {lo:.2f}-{min(hi, 1):.2f}        " for lo, hi in BINS))
    for name, rows in STATED.items():
        cells = []
        for lo, hi in BINS:
            b = [(c, ok) for c, ok in rows if lo <= c < hi]
            if b:
                mean = sum(c for c, _ in b) / len(b)
                frac = sum(ok for _, ok in b) / len(b)
                cells.append(f"{len(b):4d} {mean:5.2f} {frac:5.2f}")
            else:
                cells.append(f"{0:4d}   -     -  ")
        print(f"{name:15s}" + "".join(f"  {c:20s}" for c in cells))


def cross_validation() -> None:
    """Calibration that transfers: for each compilation, the Platt scaling of the confidence
    refitted on the other compilations' suggestions (leave one compilation out; "all
    together" overlaps the others and is left out), and the held-out log-loss and confident
    suggestions under the shipped scaling (fitted on the evaluated labelled set) and the
    refitted one."""
    import numpy as np
    from scipy.optimize import minimize

    from vpaudit.diagnose import CALIBRATION

    a0, b0 = CALIBRATION["logit_scale"], CALIBRATION["logit_shift"]

    def raw(c: float) -> float:  # the posterior's logit behind a stated confidence
        c = min(max(c, 1e-9), 1 - 1e-9)
        return (math.log(c / (1 - c)) - b0) / a0

    data = {
        n: (np.array([raw(c) for c, _ in r]), np.array([ok for _, ok in r], dtype=float))
        for n, r in STATED.items()
        if n != "all together" and r
    }

    def loss(ab, x, y):
        z = ab[0] * x + ab[1]
        return float(np.mean(np.logaddexp(0.0, -z) * y + np.logaddexp(0.0, z) * (1 - y)))

    print("\nconfidence refitted on the other compilations (leave one out): held-out")
    print(
        f"{'':15s} {'n':>4s}  {'log-loss shipped':>16s} {'refitted':>9s}  "
        f"{'scale, shift':>13s}  confident (>= 0.8) right: shipped, refitted"
    )
    for held, (x, y) in data.items():
        xs = np.concatenate([d[0] for n, d in data.items() if n != held])
        ys = np.concatenate([d[1] for n, d in data.items() if n != held])
        ab = minimize(loss, [a0, b0], args=(xs, ys), method="Nelder-Mead").x
        shipped = 1 / (1 + np.exp(-(a0 * x + b0)))
        refit = 1 / (1 + np.exp(-(ab[0] * x + ab[1])))
        conf = [
            f"{int((p >= 0.8).sum())}: {y[p >= 0.8].mean():.2f}" if (p >= 0.8).any() else "0"
            for p in (shipped, refit)
        ]
        print(
            f"{held:15s} {x.size:4d}  {loss([a0, b0], x, y):16.3f} {loss(ab, x, y):9.3f}  "
            f"{ab[0]:5.2f}, {ab[1]:5.2f}  {conf[0]}, {conf[1]}"
        )


def _first_suggestion(findings):
    """The substance's suggestion (not a second slip beside it, which names ``beside``)."""
    sugs = [f.suggestion for f in findings if f.suggestion]
    return next((g for g in sugs if "beside" not in g), sugs[0] if sugs else None)


def _seeded_order(records, refs, seed):
    """The records by substance, the substances in one seeded order, each one's position in
    it, and the references by substance: what both ways of planting slips draw from."""
    by_sub: dict[str, list[dict]] = {}
    for r in records:
        by_sub.setdefault(r["substance"], []).append(r)
    order = sorted(by_sub)
    random.Random(seed).shuffle(order)
    refs_by: dict[str, list[dict]] = {}
    for r in refs:
        refs_by.setdefault(r["substance"], []).append(r)
    return by_sub, order, {s: k for k, s in enumerate(order)}, refs_by


def _draw(sub, by_sub, position, seed, kinds):
    """Substance ``sub``'s slip, from its own generator: (its position, the generator, the
    kind of slip, its records, the record that takes the slip)."""
    k = position[sub]
    rng = random.Random(f"{seed}:{sub}")
    rs = by_sub[sub]
    kind = kinds[k % len(kinds)]
    return k, rng, kind, rs, rng.choice(rs)


def planted(name, records, refs, flagged_clean, sample, seed):
    """One slip in one record of each of ``sample`` clean substances (no error before).

    The substances are taken in one seeded order of all of them, the clean ones kept, and
    each substance's slip (kind, record, value) is drawn from its own generator: a change of
    a check's verdict on one clean substance adds or removes that substance alone, so runs
    of two versions of the code compare the same planted slips.
    """
    by_sub, order, position, refs_by = _seeded_order(records, refs, seed)
    clean = [s for s in order if not any(r["id"] in flagged_clean for r in by_sub[s])]
    cases, recs, out_refs = [], [], []
    witnesses: dict[str, str] = {}
    for sub in clean[:sample]:
        k, rng, kind, rs, target = _draw(sub, by_sub, position, seed, list(SLIP_KINDS))
        if kind == "phase-swap":
            if len({r["phase"] for r in rs}) < 2:
                kind = "sign"
        got = None
        if kind == "phase-swap":
            swapped = [dict(r, phase="solid" if r["phase"] == "liquid" else "liquid") for r in rs]
            new = f"{sub}#{k}"
            recs += [dict(r, substance=new, id=f"{r['id']}#{k}") for r in swapped]
            out_refs += [dict(x, substance=new) for x in refs_by.get(sub, [])]
            cases.append((new, kind, None, None, None))
            continue
        got = corrupt(target, kind, rng)
        if got is None:
            got, kind = corrupt(target, "sign", rng), "sign"
        bad, _ = got
        if not _visible(target, bad):
            continue  # a slip that moves the curve less than its uncertainty: no data can tell
        new = f"{sub}#{k}"
        for r in rs:
            rr = dict(bad if r is target else r)
            recs.append(dict(rr, substance=new, id=f"{r['id']}#{k}"))
        out_refs += [dict(x, substance=new) for x in refs_by.get(sub, [])]
        cases.append(
            (new, kind, f"{target['id']}#{k}", dict(target, id=f"{target['id']}#{k}"), bad)
        )
        witnesses[new] = _witnesses(rs, target, bad, refs_by.get(sub, []))
    result = audit_table(table_from_rows(recs, out_refs))
    NEW_DEFECTS.setdefault(name, []).extend(new_defects(result, recs, out_refs))
    detected = right = right_flagged = confident = confident_wrong = 0
    near_flagged = silent_flagged = 0
    missed: Counter = Counter()
    stated = STATED.setdefault(name, [])
    open_ = {u["substance"]: u for u in result.summary.get("undecided", ())}
    for new, kind, rid, original, bad in cases:
        fs = [f for f in result.findings if f.substance == new]
        flagged = any(f.severity.value == "error" for f in fs)
        if flagged:
            detected += 1
        else:
            missed[kind] += 1
            if original is not None:
                shift = _shift(original, bad)
                size = next(label for top, label in SHIFT_BINS if shift < top)
                MISSED_BY.setdefault(name, Counter())[(size, witnesses[new])] += 1
            if SHOW_MISSED:
                print(f"      missed {kind} in {rid}: {_describe(original, bad)}")
                for f in fs:
                    print(f"        {f.severity.value} {f.check}: {f.message[:160]}")
        sug = _first_suggestion(fs)
        if sug is None:
            silent_flagged += flagged
            if flagged and kind != "phase-swap":
                tally = UNDECIDED.setdefault(name, [0, 0, 0])
                lead = open_.get(new)
                tally[0] += 1
                tally[1] += lead is not None
                tally[2] += lead is not None and any(
                    fix["record"] == rid
                    and "also" not in fix
                    and reproduces(original, dict(bad, id=rid), fix)
                    for fix in lead["fixes"]
                )
            if SHOW_WRONG and flagged:
                print(f"      no suggestion for {kind} in {rid}: {_describe(original, bad)}")
            continue
        if kind == "phase-swap":
            ok = near = sug["kind"] == "phase-swap"
        else:
            ok = sug["record"] == rid and reproduces(original, dict(bad, id=rid), sug)
            near = ok or (
                sug["record"] == rid and reproduces(original, dict(bad, id=rid), sug, tol=0.03)
            )
        right += ok
        right_flagged += ok and flagged
        near_flagged += near and flagged
        if SHOW_WRONG and flagged and not ok:
            print(
                f"      wrong top fix for {kind} in {rid}: {_describe(original, bad)}\n"
                f"        suggested {sug['kind']} on {sug['record']} {sug['corrected']} "
                f"at {sug['confidence']:.2f}"
            )
        stated.append((sug["confidence"], ok))
        if sug["confidence"] >= 0.8:
            confident += 1
            confident_wrong += not ok
    near = (near_flagged, silent_flagged)
    return len(cases), detected, right, confident, confident_wrong, missed, right_flagged, near


def planted_in_troubled(name, records, refs, flagged_clean, sample, seed):
    """One slip in one record of each of ``sample`` substances that already draw an error
    as the compilation carries them (an inconsistent solid/liquid pair, a boiling point the
    curve misses, ...): the diagnosis must name the planted slip although another problem
    stays. The same seeded orders as :func:`planted`.

    Returns (cases, detected, right, confident, confident wrong, silent, other, second):
    detected is a new error (check and records) on the slipped record; right, the
    substance's suggestion undoes the planted slip; silent, no suggestion; other, a
    suggestion for another record; second, of those, the fix offered beside it (a second
    slip, ``beside``) undoes the planted one.
    """
    by_sub, order, position, refs_by = _seeded_order(records, refs, seed)
    troubled = [s for s in order if any(r["id"] in flagged_clean for r in by_sub[s])]
    kinds = [k for k in SLIP_KINDS if k != "phase-swap"]
    cases, recs, plain, out_refs = [], [], [], []
    for sub in troubled[:sample]:
        k, rng, kind, rs, target = _draw(sub, by_sub, position, seed, kinds)
        got = corrupt(target, kind, rng)
        if got is None:
            got, kind = corrupt(target, "sign", rng), "sign"
        bad, _ = got
        if not _visible(target, bad):
            continue
        new = f"{sub}#{k}"
        for r in rs:
            recs.append(dict(bad if r is target else r, substance=new, id=f"{r['id']}#{k}"))
            plain.append(dict(r, substance=new, id=f"{r['id']}#{k}"))
        out_refs += [dict(x, substance=new) for x in refs_by.get(sub, [])]
        rid = f"{target['id']}#{k}"
        cases.append((new, kind, rid, dict(target, id=rid), bad))
    before = audit_table(table_from_rows(plain, out_refs), diagnose=False)
    had = {(f.check, f.records) for f in before.findings if f.severity.value == "error"}
    result = audit_table(table_from_rows(recs, out_refs))
    by_new: dict[str, list] = {}
    for f in result.findings:
        by_new.setdefault(f.substance, []).append(f)
    det = right = conf = cw = silent = other = second = 0
    for new, kind, rid, original, bad in cases:
        fs = by_new.get(new, [])
        seen = any(
            f.severity.value == "error" and rid in f.records and (f.check, f.records) not in had
            for f in fs
        )
        det += seen
        sug = _first_suggestion(fs)
        ok = False
        if sug is None:
            silent += 1
        elif sug["record"] != rid:
            other += 1
            # the planted slip named by the fix offered beside the substance's first one
            second += any(
                f.suggestion
                and "beside" in f.suggestion
                and f.suggestion["record"] == rid
                and reproduces(original, dict(bad, id=rid), f.suggestion)
                for f in fs
            )
        else:
            ok = reproduces(original, dict(bad, id=rid), sug)
        right += ok
        if SHOW_WRONG and not ok:
            what = "no suggestion"
            if sug is not None:
                what = f"{sug['kind']} on {sug['record']} {sug['corrected']}"
                what += f" at {sug['confidence']:.2f}"
            if not seen:
                what += " (no new error: not detected)"
            print(f"      {kind} in {rid}: {_describe(original, bad)}\n        {what}")
        if sug is not None and sug["confidence"] >= 0.8:
            conf += 1
            cw += not ok
    return len(cases), det, right, conf, cw, silent, other, second


def planted_two(name, records, refs, flagged_clean, sample, seed):
    """One slip in each record of ``sample`` clean substances with a solid and a liquid
    record (no error before): two slips in two records, which the diagnosis weighs one at a
    time and then together. The same seeded orders as :func:`planted`; each record's slip
    from its own generator.

    Returns (cases, both named, one named, silent, confident, confident wrong): both named,
    the substance's two suggestions (the first and the one ``beside`` it) undo the two
    planted slips; one named, one of them does; confident, the suggestions at 0.8 or more;
    confident wrong, those that do not undo their record's slip.
    """
    by_sub, order, position, refs_by = _seeded_order(records, refs, seed)
    pairs = [
        s
        for s in order
        if len(by_sub[s]) == 2
        and {r["phase"] for r in by_sub[s]} == {"solid", "liquid"}
        and not any(r["id"] in flagged_clean for r in by_sub[s])
    ]
    kinds = [k for k in SLIP_KINDS if k not in ("phase-swap", "metadata-combination")]
    cases, recs, out_refs = [], [], []
    for sub in pairs[:sample]:
        k = position[sub]
        planted_here = []
        for j, r in enumerate(by_sub[sub]):
            rng = random.Random(f"{seed}:{sub}:{j}")
            got = corrupt(r, kinds[(k + 3 * j) % len(kinds)], rng) or corrupt(r, "sign", rng)
            bad = got[0]
            if not _visible(r, bad):
                break
            planted_here.append((r, bad))
        if len(planted_here) < 2:
            continue
        new = f"{sub}#{k}"
        for r, bad in planted_here:
            recs.append(dict(bad, substance=new, id=f"{r['id']}#{k}"))
        out_refs += [dict(x, substance=new) for x in refs_by.get(sub, [])]
        cases.append((new, [(dict(r, id=f"{r['id']}#{k}"), bad) for r, bad in planted_here]))
    result = audit_table(table_from_rows(recs, out_refs))
    by_new: dict[str, list] = {}
    for f in result.findings:
        by_new.setdefault(f.substance, []).append(f)
    both = one = silent = conf = cw = 0
    for new, planted_here in cases:
        sugs = {}
        for f in by_new.get(new, []):
            if f.suggestion:
                sugs.setdefault(f.suggestion["record"], f.suggestion)
        if not sugs:
            silent += 1
            continue
        truth = {original["id"]: (original, bad) for original, bad in planted_here}
        ok = {
            rid: rid in truth and reproduces(truth[rid][0], dict(truth[rid][1], id=rid), sug)
            for rid, sug in sugs.items()
        }
        right = [ok.get(rid, False) for rid in truth]
        both += all(right)
        one += sum(right) == 1
        for rid, sug in sugs.items():
            if sug["confidence"] >= 0.8:
                conf += 1
                cw += not ok[rid]
        if SHOW_WRONG and not all(right):
            said = "; ".join(
                f"{s['kind']} on {r} {s['corrected']} at {s['confidence']:.2f}"
                for r, s in sugs.items()
            )
            planted_said = "; ".join(_describe(o, b) for o, b in planted_here)
            print(f"      {new}: planted {planted_said}\n        suggested {said}")
    return len(cases), both, one, silent, conf, cw


SHOW_MISSED = False
SHOW_WRONG = False
#: Per compilation: (suggestion kind, errors its fix creates) for every suggestion made.
NEW_DEFECTS: dict[str, list[tuple[str, list[str]]]] = {}
#: per compilation: flagged slips given no suggestion, those given the readings that each
#: clear their errors instead (summary "undecided"), and those whose readings hold the
#: true fix
UNDECIDED: dict[str, list[int]] = {}
#: per compilation: missed planted slips by (how far the slip moves the curve, its witnesses)
MISSED_BY: dict[str, Counter] = {}


def new_defects(result, recs: list[dict], refs: list[dict]) -> list[tuple[str, list[str]]]:
    """Apply every suggestion (the first one of each substance) to its records, audit the
    fixed substances again, and list the errors each fix creates: an error whose check and
    records were not an error before the fix (a pole moved into the range, a slope turned
    negative...)."""
    before: dict[str, set] = {}
    first: dict[str, dict] = {}
    for f in result.findings:
        if f.severity.value == "error":
            before.setdefault(f.substance, set()).add((f.check, f.records))
        if f.suggestion and "beside" not in f.suggestion and f.substance not in first:
            first[f.substance] = f.suggestion
    if not first:
        return []
    by_id = {r["id"]: r for r in recs if r["substance"] in first}
    fixed = dict(by_id)
    for sug in first.values():
        for part in (sug, *sug.get("also", [])):
            rid = part["record"]
            fixed[rid] = dict(fixed[rid], **part["corrected"])
    fixed_recs = [
        {k: (float(v) if k in "ABCDE" and v is not None else v) for k, v in r.items()}
        for r in fixed.values()
    ]
    again = audit_table(
        table_from_rows(fixed_recs, [r for r in refs if r["substance"] in first]),
        diagnose=False,
    )
    after: dict[str, list[str]] = {}
    for f in again.findings:
        if f.severity.value == "error" and (f.check, f.records) not in before.get(
            f.substance, set()
        ):
            after.setdefault(f.substance, []).append(f.check)
    return [(sug["kind"], after.get(sub, [])) for sub, sug in first.items()]


def _describe(original: dict | None, bad: dict | None) -> str:
    if original is None or bad is None:
        return "phases swapped"
    changed = {k: (original.get(k), v) for k, v in bad.items() if str(original.get(k)) != str(v)}
    return f"range {original.get('t_min')}-{original.get('t_max')} K, changed {changed}"


def confident_on_clean(records, refs) -> tuple[int, int]:
    """The records of the compilation as carried that are given a confident (>= 0.8) fix,
    and how many of those fixes independent data confirm: the record, a liquid, misses the
    normal boiling point of every other method of chemicals that knows it (YAWS,
    COMMON_CHEMISTRY, CRC_ORG, CRC_INORG, not the table's own reference) and meets one of
    them with the fix applied, within the boiling-point check's tolerance. A confident fix
    that is not confirmed counts as wrong.
    """
    from compilations import every_boiling_point

    result = audit_table(table_from_rows(records, refs))
    fixes: dict[str, dict] = {}
    for f in result.findings:
        if f.suggestion and f.suggestion["confidence"] >= 0.8:
            fixes.setdefault(f.suggestion["record"], f.suggestion)
    by_id = {r["id"]: r for r in records}
    confirmed = 0
    for rid, sug in fixes.items():
        own = [
            x
            for x in refs
            if x["substance"] == by_id[rid]["substance"] and x["quantity"] == "normal_boiling_point"
        ]
        others = every_boiling_point(own)[len(own) :]
        if by_id[rid]["phase"] != "liquid" or not others:
            continue
        fixed = dict(by_id[rid], **sug["corrected"])
        confirmed += _meets_boiling_points(fixed, others) and not _meets_boiling_points(
            by_id[rid], others
        )
    return len(fixes), confirmed


def _meets_boiling_points(record: dict, refs: list[dict]) -> bool:
    """Whether the liquid ``record`` draws no boiling-point finding against ``refs``."""
    got = audit_table(table_from_rows([record], refs), only=["boiling-point-mismatch"])
    return not got.findings


def overall(name, records, refs, flagged, clean, args) -> str:
    """The planted-slip figures of a compilation as its substances come: the clean sample
    (:func:`planted`) and the troubled one (:func:`planted_in_troubled`, the same sample
    size and seed) each weighted by its share of the compilation's substances (a stratified
    estimate). A sample of all substances drawn at random would hold a few troubled ones
    only, and say little about them; the strata are measured apart and weighed.

    The troubled stratum plants no phase swap (its pairs are already inconsistent); its
    detection is a new error on the slipped record.
    """
    global SHOW_WRONG
    subs = {r["substance"] for r in records}
    troubled = {r["substance"] for r in records if r["id"] in flagged}
    show, SHOW_WRONG = SHOW_WRONG, False  # the troubled sample's misses are --troubled's
    try:
        got = planted_in_troubled(name, records, refs, flagged, args.sample, args.seed)
    finally:
        SHOW_WRONG = show
    strata = [(len(subs) - len(troubled), clean)]
    if got[0]:
        strata.append((len(troubled), got[:5]))
    total = sum(w for w, _ in strata)

    def rate(k: int) -> float:  # the weighted fraction of planted slips with measure k
        return sum(w / total * m[k] / m[0] for w, m in strata)

    conf = rate(3)
    return (
        f"    as the compilation's substances come ({len(troubled)} of {len(subs)} already "
        f"draw an error; each stratum weighted by its share): detected {rate(1):.1%}, "
        f"top-1 right {rate(2):.1%}, confident wrong {(rate(4) / conf if conf else 0):.1%} "
        f"of the confident (troubled stratum: {got[0]} planted)"
    )


def _rows(header: str, names, measure, row, args) -> None:
    """Print ``header``, then one row per set of real records with planted slips that
    ``measure`` counts (``row`` formats its counts), skipping a set with no case. ``alcock``
    is the evaluated metal pairs (Alcock et al. 1984, with their CRC Tm and Hfus)."""
    print(header)
    for name in names:
        if name == "alcock":
            from refdata import alcock_pairs

            records, refs = alcock_pairs()
            result = audit_table(table_from_rows(records, refs), diagnose=False)
            flagged = {x for f in result.findings if f.severity.value == "error" for x in f.records}
        else:
            records, refs, flagged, _, _ = clean_errors(name)
        got = measure(name, records, refs, flagged, args.sample, args.seed)
        if got[0]:
            print(f"{name:15s} {row(*got)}")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--sample", type=int, default=200, help="substances given a slip each")
    ap.add_argument("--seed", type=int, default=20261202)
    ap.add_argument(
        "--show-missed", action="store_true", help="print each planted slip not flagged"
    )
    ap.add_argument(
        "--show-wrong", action="store_true", help="print each flagged slip given a wrong top fix"
    )
    ap.add_argument(
        "--only",
        choices=[*COMPILATIONS, "alcock"],
        help="one compilation (alcock: with --two-slips only)",
    )
    ap.add_argument(
        "--every-tb",
        action="store_true",
        help="give each substance the normal boiling point of every method of chemicals "
        "that knows it (CRC_ORG, CRC_INORG, YAWS, COMMON_CHEMISTRY), as a table that keeps "
        "several sources' values would, not only the first",
    )
    ap.add_argument(
        "--every-tc",
        action="store_true",
        help="the same for the critical temperature (IUPAC, MATTHEWS, CRC, YAWS, PINAMARTINES)",
    )
    ap.add_argument(
        "--every-tm",
        action="store_true",
        help="the same for the melting point (every method of chemicals that knows it)",
    )
    ap.add_argument(
        "--anchors",
        action="store_true",
        help="give each substance the CRC standard enthalpy and entropy of its phase changes "
        "at 298.15 K (the 298.15 K anchor) as reference rows",
    )
    ap.add_argument(
        "--two-slips",
        action="store_true",
        help="plant a slip in each record of clean solid/liquid pairs instead (two slips in "
        "two records, weighed together)",
    )
    ap.add_argument(
        "--troubled",
        action="store_true",
        help="plant the slips in substances that already draw an error instead",
    )
    ap.add_argument(
        "--judge-clean",
        action="store_true",
        help="judge each clean record that draws an error against independent data",
    )
    args = ap.parse_args()
    if args.judge_clean:
        for name in [args.only] if args.only else COMPILATIONS:
            got = judge_clean(name)
            total = sum(got.values())
            false = sum(v for k, v in got.items() if "false alarm" in k)
            unconfirmed = sum(v for k, v in got.items() if "unconfirmed" in k)
            n = len([r for r in COMPILATIONS[name](None)[0] if _complete(r)])
            print(
                f"{name}: {total} clean records with an error of {n}; the tool's own false "
                f"alarms by independent data {false} ({false / n:.1%}), unconfirmed "
                f"{unconfirmed} ({unconfirmed / n:.1%})"
            )
            for k, v in got.most_common():
                print(f"    {v:5d}  {k}")
        return
    global SHOW_MISSED, SHOW_WRONG
    SHOW_MISSED, SHOW_WRONG = args.show_missed, args.show_wrong
    if args.two_slips:
        _rows(
            "compilation      pairs  both named  one named  no suggestion  confident"
            "  confident wrong",
            [args.only] if args.only else [*COMPILATIONS, "alcock"],
            planted_two,
            lambda n, both, one, silent, conf, cw: (
                f"{n:6d} {both / n:11.1%} {one / n:10.1%} {silent:14d}"
                f" {conf:10d} {(cw / conf if conf else 0):16.1%}"
            ),
            args,
        )
        return
    if args.troubled:
        _rows(
            "compilation      planted  detected  top-1 right  no suggestion  another record"
            " (second fix right)  confident  confident wrong",
            [args.only] if args.only else COMPILATIONS,
            planted_in_troubled,
            lambda n, det, right, conf, cw, silent, other, second: (
                f"{n:8d} {det / n:9.1%} {right / n:12.1%} {silent:14d}"
                f" {other:15d} {second:19d} {conf:10d} {(cw / conf if conf else 0):16.1%}"
            ),
            args,
        )
        return
    print(
        "compilation      records  with error  false-alarm rate  | planted  detected  "
        "top-1 right  confident  confident wrong | records of the compilation given a "
        "confident fix (confirmed by independent boiling points)"
    )
    for name in [args.only] if args.only else COMPILATIONS:
        t0 = time.perf_counter()
        records, refs, flagged, by_check, _ = clean_errors(
            name, args.every_tb, args.every_tc, args.anchors, args.every_tm
        )
        n, det, right, conf, cw, missed, right_flagged, (near, silent) = planted(
            name, records, refs, flagged, args.sample, args.seed
        )
        conf_clean, confirmed = confident_on_clean(records, refs)
        print(
            f"{name:15s} {len(records):8d} {len(flagged):11d} {len(flagged) / len(records):17.1%}"
            f"  | {n:7d} {det / n:9.1%} {right / n:12.1%} {conf:10d} "
            f"{(cw / conf if conf else 0):15.1%} | {conf_clean} ({confirmed} confirmed)"
            f"   ({time.perf_counter() - t0:.0f} s)"
        )
        print("    errors on the clean compilation by check:", dict(by_check.most_common()))
        print("    planted slips not flagged as errors, by kind:", dict(missed.most_common()))
        by = MISSED_BY.get(name, Counter())
        if by:
            print(
                "    the same, by the largest change the slip makes to ln P in the record's "
                "range, and what could witness it:"
            )
            for (size, wit), count in sorted(
                by.items(), key=lambda kv: ([b for _, b in SHIFT_BINS].index(kv[0][0]), -kv[1])
            ):
                print(f"      {size:>8s} in ln P  {count:3d}  witnesses: {wit}")
        print(
            f"    top suggestion right on the flagged slips: {right_flagged} of {det} "
            f"({right_flagged / det if det else 0:.1%}); a fix within 0.03 in ln P of the "
            f"true one (as bar is of atm): {near} ({near / det if det else 0:.1%}); "
            f"no suggestion: {silent}"
        )
        if name in UNDECIDED:
            silent_other, led, among = UNDECIDED[name]
            print(
                f"    of the {silent_other} flagged slips given no suggestion (phase swaps "
                f"aside), {led} are given the readings that each clear their errors, the "
                f"true fix among them for {among}"
            )
        made = NEW_DEFECTS.get(name, [])
        bad = [(kind, errs) for kind, errs in made if errs]
        print(
            f"    suggested fixes that create a new error when applied: {len(bad)} of {len(made)}",
            dict(Counter(c for _, errs in bad for c in errs).most_common()),
        )
        print(overall(name, records, refs, flagged, (n, det, right, conf, cw), args))
    calibration_table()
    if not args.only:
        cross_validation()
    print("(lone curves with standard data only: benchmarks/lone_curves.py)")


if __name__ == "__main__":
    main()
