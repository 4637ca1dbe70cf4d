"""Slips on lone curves, where the 298.15 K standard data are the only witness.

A lone curve has no partner phase, no boiling-point reference and one source. Two sets of
real curves, each with the CRC standard data that ``chemicals.reaction`` carries (built by
tests/_support/anchors.py):

* the solids of Alcock, Itkin & Horrigan (1984) (``chemicals``), with the standard enthalpy
  and entropy of sublimation;
* Landolt's liquids (odd CAS only: the even ones are reserved for evaluation), with both
  standard values of vaporization, whose range starts below twice 298.15 K and which draw no
  error as they are.

Every metadata slip is planted in every curve, not a random one (tests/_support/slips.py,
``unit_slips``): the log base, each other pressure unit, and for Antoine equations degC and
degF with the range in K or in the same scale. Each corrupted curve is its own substance.
Prints, by kind: cases, detected (an error), the top suggestion right (it gives back the
original curve and range), the same within 0.03 in ln P (the default relative uncertainty of a
record: bar for atm is 1.3 % off), and the confident (>= 0.8) suggestions with how many are
wrong; then the most any rule could name right, where units no data tells apart (bar and
atm) are both planted in a curve and a suggestion can name only one of them.

Run: ``python benchmarks/lone_curves.py`` (about a minute); ``--critical`` gives Landolt's
liquids their critical temperature and pressure as well.
"""

from __future__ import annotations

import argparse
import math
import sys
from collections import Counter, defaultdict
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests" / "_support"))

from anchors import anchor_rows  # noqa: E402
from compilations import _complete, landolt, references  # noqa: E402
from refdata import alcock_pairs, table_from_rows  # noqa: E402
from slips import reproduces, unit_slips  # noqa: E402

from vpaudit.auditing import audit_table  # noqa: E402
from vpaudit.units import PRESSURE_UNITS, pressure_factor  # noqa: E402


def alcock_pool() -> list[tuple[dict, list[dict]]]:
    from chemicals.vapor_pressure import Psub_data_Alcock_elements as sol

    by_name = {str(sol.loc[c, "Name"]): c for c in sol.index}
    records, _ = alcock_pairs()
    pool = []
    for r in records:
        if r["phase"] != "solid":
            continue
        rows = anchor_rows(by_name[r["substance"]], r["substance"], "solid")
        if len(rows) == 2:
            pool.append((r, rows))
    return pool


def landolt_pool(critical: bool = False) -> list[tuple[dict, list[dict]]]:
    records, _ = landolt(None)
    pool = []
    for r in records:
        if r["phase"] != "liquid" or not _complete(r):
            continue
        rows = anchor_rows(r["substance"], r["substance"], "liquid")
        if len(rows) == 2 and float(r["t_min"]) / 298.15 <= 2.0:
            if critical:  # Tc and Pc too, each with its method named (compilations.py)
                rows += [
                    x
                    for x in references(r["substance"], r["substance"], True, False)
                    if x["quantity"] in ("critical_temperature", "critical_pressure")
                ]
            pool.append((r, rows))
    return pool


def clean_only(pool):
    """The curves that draw no error as they are (a slip must be the only problem)."""
    table = table_from_rows([r for r, _ in pool], [x for _, rows in pool for x in rows])
    result = audit_table(table, diagnose=False)
    bad = {x for f in result.findings if f.severity.value == "error" for x in f.records}
    return [(r, rows) for r, rows in pool if r["id"] not in bad], len(bad)


def measure(name: str, pool) -> None:
    pool, dropped = clean_only(pool)
    recs, refs, cases = [], [], []
    for k, (r, rows) in enumerate(pool):
        for j, (kind, bad, what) in enumerate(unit_slips(r)):
            new, rid = f"{r['substance']}#{k}.{j}", f"{r['id']}#{k}.{j}"
            recs.append(dict(bad, substance=new, id=rid))
            refs += [dict(x, substance=new) for x in rows]
            cases.append((new, kind, what, dict(r, id=rid), dict(bad, id=rid)))
    result = audit_table(table_from_rows(recs, refs))
    by_sub = defaultdict(list)
    for f in result.findings:
        by_sub[f.substance].append(f)
    tally = defaultdict(lambda: [0, 0, 0, 0, 0, 0])
    pressure_misses: Counter = Counter()
    for new, kind, what, original, bad in cases:
        fs = by_sub[new]
        sug = next((f.suggestion for f in fs if f.suggestion), None)
        right = near = False
        if sug is not None and sug["record"] == original["id"]:
            right = reproduces(original, bad, sug)
            near = reproduces(original, bad, sug, tol=0.03)
        if kind == "pressure-unit" and not right:
            pressure_misses[_miss_class(what, original, sug)] += 1
        for key in (kind, "all"):
            t = tally[key]
            t[0] += 1
            t[1] += any(f.severity.value == "error" for f in fs)
            t[2] += right
            t[3] += near
            if sug is not None and sug["confidence"] >= 0.8:
                t[4] += 1
                t[5] += not right
    print(f"\n{name}: {len(pool)} clean curves ({dropped} left out: an error as they are)")
    print("kind              cases  detected  top-1 right  within 0.03  confident  wrong")
    for kind, (n, det, right, near, conf, wrong) in tally.items():
        print(
            f"{kind:16s} {n:6d} {det / n:9.1%} {right / n:12.1%} {near / n:12.1%}"
            f" {conf:10d} {wrong:6d}"
        )
    if pressure_misses:
        print("pressure-unit slips whose top fix is not the true one:", dict(pressure_misses))
    twins, n = _twins(cases), len(cases)
    print(
        f"the most any rule could name right, as no data tells bar from atm: "
        f"{(n - twins) / n:.1%} ({twins} of the {n} slips must get the other unit of a pair)"
    )


def _planted_unit(what: str) -> str:
    """The pressure unit a pressure-unit slip's coefficients are for ("?" if not said)."""
    unit = what.split(" for ", 1)[1].split(",", 1)[0] if " for " in what else "?"
    if what.startswith("Pc in "):
        unit = what[len("Pc in ") :].split(",", 1)[0]
    return unit


def _twins(cases) -> int:
    """How many planted pressure-unit slips no rule can name: of units within 2 % of each
    other (bar and atm, 1.3 % apart: less than any record's uncertainty, so that no witness
    tells them apart), planted in one curve, a suggestion can name only one for both."""
    by_curve = defaultdict(list)
    for new, kind, what, _, _ in cases:
        unit = _planted_unit(what)
        if kind == "pressure-unit" and unit in PRESSURE_UNITS:
            by_curve[new.rsplit(".", 1)[0]].append(math.log(pressure_factor(unit)))
    n = 0
    for logs in by_curve.values():
        logs.sort()
        readings = 1 + sum(b - a >= math.log(1.02) for a, b in zip(logs, logs[1:], strict=False))
        n += len(logs) - readings
    return n


def _miss_class(what: str, original: dict, sug: dict | None) -> str:
    """Why a pressure-unit slip was missed: no suggestion, another kind of fix, or another
    unit, by how far apart the true and the suggested unit are (the 298.15 K witness shifts
    dS by R ln of that ratio: bar/atm 0.11, mbar/mmHg 2.4 J/(mol K))."""
    if sug is None:
        return "no suggestion"
    if sug["kind"] != "pressure-unit":
        return f"suggested {sug['kind']}"
    true_unit = _planted_unit(what)
    other = sug["corrected"].get("pressure_unit")
    if true_unit not in PRESSURE_UNITS or other not in PRESSURE_UNITS:
        return "another unit"
    gap = abs(math.log(pressure_factor(true_unit) / pressure_factor(other)))
    if gap < 0.02:
        return "a unit within 2 % (bar/atm)"
    if gap < 0.35:
        return "a unit within 35 % (mbar/mmHg)"
    return "a unit farther apart"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument(
        "--critical",
        action="store_true",
        help="give Landolt's liquids their critical temperature and pressure too (IUPAC, "
        "MATTHEWS or CRC via chemicals), as a table that carries them would: the anchor then "
        "takes the vapour as a real gas, and the critical point is a witness of its own",
    )
    args = ap.parse_args()
    if not args.critical:
        measure("Alcock et al. (1984) solids, CRC standard data of sublimation", alcock_pool())
    measure(
        "Landolt liquids (odd CAS), CRC standard data of vaporization"
        + (", with Tc and Pc" if args.critical else ""),
        landolt_pool(args.critical),
    )


if __name__ == "__main__":
    main()
