"""Real literature compilations as vpaudit tables, with the reference values that come with
them (test-only: uses ``chemicals``). Each source and lookup is named; nothing is cleaned.

Compilations (as the ``chemicals`` package carries them):

* Landolt-Boernstein Antoine constants of liquids and solids (``Psat_data_Landolt_Antoine``,
  ``Psub_data_Landolt_Antoine``): ln(P/Pa) = A - B/(T/K + C). **Only the rows whose CAS
  number ends in an odd digit are used**; the others are reserved for independent
  evaluation and never read here.
* Poling, Prausnitz & O'Connell, *The Properties of Gases and Liquids*, 5th ed.: Antoine
  (``Psat_data_AntoinePoling``, log10(P/Pa) = A - B/(T/K + C)) and Wagner 2.5,5
  (``Psat_data_WagnerPoling``).
* McGarry (1983) Wagner 3,6 equations (``Psat_data_WagnerMcGarry``), ranges stated as
  Tmin..Tc, as compilations state them.
* Perry's Chemical Engineers' Handbook, 8th ed., table 2-8 (``Psat_data_Perrys2_8``):
  ln(P/Pa) = C1 + C2/T + C3 ln T + C4 T^C5.

Reference values, each through a documented ``method=`` lookup of ``chemicals`` (none from
the reserved web compilation): normal boiling point ``Tb`` (CRC_ORG, CRC_INORG, YAWS,
COMMON_CHEMISTRY, in that order), melting point ``Tm`` (CRC_ORG, CRC_INORG, OPEN_NTBKM),
critical temperature ``Tc`` (IUPAC, MATTHEWS, CRC), enthalpy of fusion ``Hfus`` (CRC). They
are kept as the package carries them: a tool that assumes the reference is always right
will blame good records.
"""

from __future__ import annotations

import math

from refdata import table_from_rows

LANDOLT = "Landolt-Boernstein Antoine constants, via chemicals (odd-CAS rows)"
POLING_ANT = "Poling et al. (2001), Antoine constants, via chemicals"
POLING_WAG = "Poling et al. (2001), Wagner 2.5,5 constants, via chemicals"
MCGARRY = "McGarry (1983), Wagner 3,6 constants, via chemicals"
PERRY = "Perry's Chemical Engineers' Handbook, 8th ed., table 2-8, via chemicals"

_TB = ("CRC_ORG", "CRC_INORG", "YAWS", "COMMON_CHEMISTRY")
_TM = ("CRC_ORG", "CRC_INORG", "OPEN_NTBKM")
_TC = ("IUPAC", "MATTHEWS", "CRC")


def odd_cas(cas: str) -> bool:
    """Whether a CAS number ends in an odd digit (the rows of the Landolt tables that are
    ours to use)."""
    return int(str(cas).replace("-", "")[-1]) % 2 == 1


def _lookup(fn, cas: str, methods) -> tuple[float, str] | None:
    for m in methods:
        try:
            v = fn(cas, method=m)
        except Exception:  # noqa: BLE001  (a method without the substance)
            continue
        if v is not None and math.isfinite(float(v)):
            return float(v), m
    return None


def references(cas: str, name: str, liquid: bool, solid: bool) -> list[dict]:
    """The reference values of one substance, each with its method named in its source."""
    from chemicals import Hfus, Pc, Tb, Tc, Tm

    out = []

    def add(quantity, found, unit, what):
        if found is not None:
            value, method = found
            out.append(
                {
                    "substance": name,
                    "quantity": quantity,
                    "value": value,
                    "unit": unit,
                    "source": f"{what} via chemicals, method {method}",
                }
            )

    if liquid:
        add("normal_boiling_point", _lookup(Tb, cas, _TB), "K", "Tb")
        add("critical_temperature", _lookup(Tc, cas, _TC), "K", "Tc")
        add("critical_pressure", _lookup(Pc, cas, _TC), "Pa", "Pc")
    if solid:
        add("melting_point", _lookup(Tm, cas, _TM), "K", "Tm")
        found = _lookup(Hfus, cas, ("CRC",))
        if found is not None and found[0] > 0:
            add("enthalpy_of_fusion", found, "J/mol", "Hfus")
    return out


def _antoine(cas, row, phase, source, base, tag) -> dict:
    return {
        "id": f"{cas}-{tag}-{phase[0]}",
        "substance": cas,
        "phase": phase,
        "form": "antoine",
        "log_base": base,
        "pressure_unit": "Pa",
        "temperature_unit": "K",
        "A": float(row["A"]),
        "B": float(row["B"]),
        "C": float(row["C"]),
        "t_min": float(row["Tmin"]),
        "t_max": float(row["Tmax"]),
        "source": source,
    }


#: Critical temperatures of evaluations and data compilations (estimation methods, the
#: equation-of-state library's values and the web compilation's are left out).
_TC_EVERY = ("IUPAC", "MATTHEWS", "CRC", "YAWS", "PINAMARTINES")
#: Melting points of data compilations (the estimation method and the web compilation's are
#: left out).
_TM_EVERY = ("CRC_ORG", "CRC_INORG", "OPEN_NTBKM", "COMMON_CHEMISTRY", "WIKIDATA")


def every_boiling_point(refs: list[dict], quantity: str = "normal_boiling_point") -> list[dict]:
    """``refs`` with, for each substance that has a normal boiling point (or, with
    ``quantity="critical_temperature"`` or ``"melting_point"``, a critical temperature or a
    melting point), the values of the other methods of :data:`_TB` (:data:`_TC_EVERY`,
    :data:`_TM_EVERY`) that know it as further reference rows (a table that keeps several
    sources' values), each with its method named.
    """
    from chemicals import Tb, Tc, Tm

    fn, methods, what = {
        "normal_boiling_point": (Tb, _TB, "Tb"),
        "critical_temperature": (Tc, _TC_EVERY, "Tc"),
        "melting_point": (Tm, _TM_EVERY, "Tm"),
    }[quantity]
    out = list(refs)
    for r in refs:
        if r["quantity"] != quantity:
            continue
        for method in methods:
            if method in r["source"]:
                continue
            found = _lookup(fn, r["substance"], (method,))
            if found is not None:
                out.append(dict(r, value=found[0], source=f"{what} via chemicals, method {method}"))
    return out


def landolt(limit: int | None = None, pairs_only: bool = False):
    """Landolt's liquids and solids of odd CAS number: records and references."""
    from chemicals.vapor_pressure import Psat_data_Landolt_Antoine as liq
    from chemicals.vapor_pressure import Psub_data_Landolt_Antoine as sol

    liquids = [c for c in liq.index if odd_cas(c)]
    solids = {c for c in sol.index if odd_cas(c)}
    if pairs_only:
        liquids = [c for c in liquids if c in solids]
    if limit:
        liquids = liquids[:limit]
    records, refs = [], []
    for cas in liquids:
        records.append(_antoine(cas, liq.loc[cas], "liquid", LANDOLT, "e", "lb"))
        has_solid = cas in solids
        if has_solid:
            records.append(_antoine(cas, sol.loc[cas], "solid", LANDOLT, "e", "lb"))
        refs += references(cas, cas, True, has_solid)
    return records, refs


def poling_antoine(limit: int | None = None):
    from chemicals.vapor_pressure import Psat_data_AntoinePoling as ant

    rows = list(ant.index[:limit] if limit else ant.index)
    records = [_antoine(c, ant.loc[c], "liquid", POLING_ANT, "10", "pa") for c in rows]
    refs = [r for c in rows for r in references(c, c, True, False)]
    return records, refs


def wagner(limit: int | None = None):
    """McGarry's Wagner 3,6 (range Tmin..Tc) and Poling's Wagner 2.5,5 equations."""
    from chemicals.vapor_pressure import Psat_data_WagnerMcGarry as mcg
    from chemicals.vapor_pressure import Psat_data_WagnerPoling as wp

    records, cases = [], set()
    for table, form, source, tag, t_max in (
        (mcg, "wagner-3-6", MCGARRY, "mg", None),
        (wp, "wagner-2.5-5", POLING_WAG, "pw", "Tmax"),
    ):
        rows = list(table.index[:limit] if limit else table.index)
        for cas in rows:
            w = table.loc[cas]
            records.append(
                {
                    "id": f"{cas}-{tag}",
                    "substance": cas,
                    "phase": "liquid",
                    "form": form,
                    "log_base": "e",
                    "pressure_unit": "Pa",
                    "A": float(w["A"]),
                    "B": float(w["B"]),
                    "C": float(w["C"]),
                    "D": float(w["D"]),
                    "t_crit": float(w["Tc"]),
                    "p_crit": float(w["Pc"]),
                    "t_min": float(w["Tmin"]),
                    "t_max": float(w[t_max]) if t_max else float(w["Tc"]),
                    "source": source,
                }
            )
            cases.add(cas)
    refs = [r for c in sorted(cases) for r in references(c, c, True, False)]
    return records, refs


def perry(limit: int | None = None):
    from chemicals.vapor_pressure import Psat_data_Perrys2_8 as per

    rows = list(per.index[:limit] if limit else per.index)
    records = [
        {
            "id": f"{c}-pe",
            "substance": c,
            "phase": "liquid",
            "form": "power-term",
            "log_base": "e",
            "pressure_unit": "Pa",
            "A": float(per.loc[c, "C1"]),
            "B": float(per.loc[c, "C2"]),
            "C": float(per.loc[c, "C3"]),
            "D": float(per.loc[c, "C4"]),
            "E": float(per.loc[c, "C5"]),
            "t_min": float(per.loc[c, "Tmin"]),
            "t_max": float(per.loc[c, "Tmax"]),
            "source": PERRY,
        }
        for c in rows
    ]
    refs = [r for c in rows for r in references(c, c, True, False)]
    return records, refs


def together(limit: int | None = None):
    """Every compilation at once: a substance in several of them has several sources (and
    its references once)."""
    records, refs, seen = [], [], set()
    for build in (landolt, poling_antoine, wagner, perry):
        recs, rfs = build(limit)
        records += recs
        for r in rfs:
            key = (r["substance"], r["quantity"])
            if key not in seen:
                seen.add(key)
                refs.append(r)
    return records, refs


COMPILATIONS = {
    "landolt": landolt,
    "poling-antoine": poling_antoine,
    "wagner": wagner,
    "perry": perry,
    "all together": together,
}


def _complete(rec: dict) -> bool:
    """Whether the compilation gives every number the record needs (some rows state no
    range; they cannot be records)."""
    return all(
        math.isfinite(v) for k, v in rec.items() if isinstance(v, float) and k != "E"
    ) and all(k in rec for k in ("t_min", "t_max"))


def compilation_table(name: str, limit: int | None = None):
    """One compilation as a Table (records and their references)."""
    records, refs = COMPILATIONS[name](limit)
    records = [r for r in records if _complete(r)]
    keep = {r["substance"] for r in records}
    return table_from_rows(records, [r for r in refs if r["substance"] in keep])


def source_gaps() -> list[float]:
    """How far two sources of one liquid disagree: for every pair of liquid equations of one
    substance in the compilations together whose ranges overlap, the largest
    |ln P1 - ln P2| on 9 points of the common range (the diagnosis's SOURCE_SCATTER is its
    90th percentile)."""
    import itertools

    import numpy as np

    from vpaudit.equations.engine import curves_from_frame, evaluate

    records, _ = together()
    records = [r for r in records if _complete(r) and r["phase"] == "liquid"]
    c = curves_from_frame(table_from_rows(records).records)
    by_sub: dict[str, list[int]] = {}
    for i, r in enumerate(records):
        by_sub.setdefault(r["substance"], []).append(i)
    gaps = []
    for rows in by_sub.values():
        for a, b in itertools.combinations(rows, 2):
            lo, hi = max(c.t_min[a], c.t_min[b]), min(c.t_max[a], c.t_max[b])
            if hi > lo:
                t = np.linspace(lo, hi, 9)
                y = evaluate(c.take(np.array([a, b])), np.vstack([t, t]), order=0)[0]
                gap = float(np.max(np.abs(y[0] - y[1])))
                if math.isfinite(gap):
                    gaps.append(gap)
    return gaps


def low_pressure_liquids(split: float) -> dict[str, tuple[int, int, int, int]]:
    """How many real liquid equations never reach 1 Pa over their range (ln P at t_max
    below 0), per source: (equations whose range ends below ``split`` K, of which below
    1 Pa; equations whose range ends at or above it, of which below 1 Pa). The premise of
    the diagnosis's ``_LIQUID_BELOW_1_PA`` prior and of its ``_EFFUSION_LIQUIDS`` bound.
    Sources: the compilations (Landolt's odd-CAS rows, Poling's Antoine, McGarry's and
    Poling's Wagner, Perry's) and the Alcock et al. (1984) liquids, via chemicals; only the
    equations the audit can evaluate over their range."""
    import numpy as np
    from refdata import alcock_pairs

    from vpaudit.checks._context import AuditContext
    from vpaudit.equations.engine import evaluate
    from vpaudit.policy import Policy

    sets = {
        "Landolt (odd CAS)": landolt()[0],
        "Poling Antoine": poling_antoine()[0],
        "McGarry and Poling Wagner": wagner()[0],
        "Perry": perry()[0],
        "Alcock et al. (1984)": alcock_pairs()[0],
    }
    out = {}
    for name, records in sets.items():
        records = [r for r in records if _complete(r) and r["phase"] == "liquid"]
        ctx = AuditContext(table_from_rows(records), Policy())
        c = ctx.curves.take(np.flatnonzero(ctx.evaluable))
        low = evaluate(c, c.t_max, 0)[0] < 0.0
        cool = c.t_max < split
        out[name] = (
            int(cool.sum()),
            int((cool & low).sum()),
            int((~cool).sum()),
            int((~cool & low).sum()),
        )
    return out


def impossible_errors() -> dict[str, tuple[int, int]]:
    """How often an error that says a curve is impossible (a check registered with
    ``impossible=True``: a slope not positive or flatter than any real curve, a pressure that
    cannot be represented) comes from a slip and how often from anything else: (substances
    flagged with such an error, substances flagged with other errors only), for

    * ``"slips"``: the labelled set's single slips (tests/_support/slips.py, Alcock et al.
      (1984) pairs and 40 Poling Antoine liquids, the benchmark's seed), and
    * ``"no slip"``: the real compilations as carried, no slip planted (Landolt's odd-CAS
      rows, Poling's Antoine, McGarry's and Poling's Wagner, Perry's, via chemicals).

    The premise of the diagnosis's ``_IMPOSSIBLE_ODDS``.
    """
    from collections import defaultdict

    from slips import cases_table, labelled_cases

    from vpaudit.auditing import audit_table
    from vpaudit.checks._registry import REGISTRY

    def split(findings, wanted=None) -> tuple[int, int]:
        errors = defaultdict(set)
        for f in findings:
            if f.severity.value == "error" and (wanted is None or f.substance in wanted):
                errors[f.substance].add(f.check)
        k = sum(any(REGISTRY[c].impossible for c in v) for v in errors.values())
        return k, len(errors) - k

    cases = labelled_cases(seed=20261202, per_kind=None, poling=40)
    slipped = {c.substance for c in cases if c.kind not in ("other", "clean")}
    labelled = audit_table(cases_table(cases), diagnose=False).findings
    records, refs = together()
    records = [r for r in records if _complete(r)]
    keep = {r["substance"] for r in records}
    refs = [r for r in refs if r["substance"] in keep]
    clean = audit_table(table_from_rows(records, refs), diagnose=False).findings
    return {"slips": split(labelled, slipped), "no slip": split(clean)}
