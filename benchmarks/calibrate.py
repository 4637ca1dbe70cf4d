"""Print the distributions behind the default tolerances, measured on real evaluated data.

Data: the metallic elements of Alcock, Itkin & Horrigan (1984) via ``chemicals`` (solid and
liquid equations), CRC Handbook melting points and enthalpies of fusion via ``chemicals``,
and fits to the IAPWS water curves via ``iapws``. Run:

    python benchmarks/calibrate.py [--priors | --boiling | --scatter | --entropy-edge
                                    | --solid-ranges]

``--priors`` prints only the rarities behind the diagnosis's priors (a positive dCp, the
exponent of a power term, a liquid below 1 Pa) and the odds behind the cost of an
impossible curve; ``--boiling`` judges
the clean Landolt liquids' boiling-point errors against the other boiling points carried;
``--scatter`` measures how far independent sources of one liquid disagree (the diagnosis's
``SOURCE_SCATTER``); ``--entropy-edge`` measures the rise of the entropy band's lower
edge below P0/e^3 (``enthalpy-implausible``'s ``liquid_min_dcp``); ``--solid-ranges`` where
real solids' ranges start and end against their CRC melting point (``solid-above-melting``).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from scipy.constants import R

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests" / "_support"))

from refdata import (  # noqa: E402
    alcock_pairs,
    alcock_table,
    table_from_rows,
    water_records,
    water_references,
)

from vpaudit._columns import eq  # noqa: E402
from vpaudit.auditing import audit_table  # noqa: E402
from vpaudit.checks._context import LN_P_STANDARD, AuditContext  # noqa: E402
from vpaudit.equations.engine import evaluate  # noqa: E402
from vpaudit.policy import Policy  # noqa: E402


def quantiles(x):
    x = np.asarray(x, float)
    x = x[np.isfinite(x)]
    if x.size == 0:
        return "no values"
    q = np.percentile(x, [0, 10, 50, 90, 100])
    return "min {:.4g}  p10 {:.4g}  median {:.4g}  p90 {:.4g}  max {:.4g}  (n={})".format(
        *q, x.size
    )


def report(table, label):
    ctx = AuditContext(table, Policy())
    pr = ctx.pairs
    tm = pr.tm
    cs, cl = ctx.curves.take(pr.solid), ctx.curves.take(pr.liquid)
    ys, s1, _ = evaluate(cs, tm, 1)
    yl, l1, _ = evaluate(cl, tm, 1)
    d = ys - yl
    hs, hl = R * tm**2 * s1, R * tm**2 * l1
    hfus_ref = ctx.reference("enthalpy_of_fusion", pr.solid)
    print(f"== {label}: {len(pr.solid)} pairs")
    print("ln P_s - ln P_l at the reference melting point:", quantiles(d))
    print("|same|:", quantiles(np.abs(d)))
    print("crossing - melting point [K]:", quantiles(pr.t_cross - tm))
    print(
        "Hess residual (dH_sub - dH_vap - dH_fus,ref)/dH_sub:", quantiles((hs - hl - hfus_ref) / hs)
    )
    print("implied dH_fus / reference:", quantiles((hs - hl) / hfus_ref))
    print("implied dS_fus at crossing [J/(mol K)]:", quantiles(R * pr.t_cross * pr.slope_diff))
    ex = ctx.range_extrema
    for ph in ("solid", "liquid"):
        m = ctx.liquid if ph == "liquid" else ctx.solid
        print(f"{ph}: max implied dCp over range [J/(mol K)]:", quantiles(ex.cp_max[m]))
        print(f"{ph}: min implied dCp over range [J/(mol K)]:", quantiles(ex.cp_min[m]))
        c = ctx.curves.take(np.flatnonzero(m))
        t = 2.0 / (1.0 / c.t_min + 1.0 / c.t_max)
        y, y1, _ = evaluate(c, t, 1)
        ds = R * t * y1 + R * (y - LN_P_STANDARD)
        print(f"{ph}: standard entropy of the phase change at mid-range:", quantiles(ds))
    result = audit_table(table)
    print("audit:", result.summary)
    for f in result.findings:
        print(f"  {f.severity.value:8s} {f.check:28s} {f.substance:6s} {f.message[:110]}")
    print()


def report_evaluated():
    report(alcock_table(), "Alcock et al. (1984) metals, CRC melting points")
    s, l_, rs, rl = water_records()
    print(f"IAPWS water fits: max |residual| in ln P: ice {rs:.2e}, liquid {rl:.2e}")
    water = table_from_rows([s, l_], water_references())
    report(water, "water (IAPWS fits)")


def report_compilation():
    from refdata import compilation_table

    from vpaudit.policy import Policy

    table = compilation_table()
    print(
        f"== literature compilations: {len(table.records)} liquid records, "
        f"{table.records['substance'].nunique()} substances, 3 sources each"
    )
    for preset in ("evaluated", "compilation"):
        result = audit_table(table, Policy(preset))
        counts = {}
        for f in result.findings:
            counts.setdefault((f.check, f.severity.value), 0)
            counts[(f.check, f.severity.value)] += 1
        print(f"preset {preset}: {result.summary}")
        for (check, sev), n in sorted(counts.items()):
            print(f"    {n:4d} {sev:8s} {check}")
    ctx = AuditContext(table, Policy())
    tb = ctx.reference("normal_boiling_point")
    rows = np.flatnonzero(np.isfinite(tb) & (tb >= ctx.curves.t_min) & (tb <= ctx.curves.t_max))
    y = evaluate(ctx.curves.take(rows), tb[rows], 0)[0]
    d = y - LN_P_STANDARD
    for form in ("antoine", "wagner-3-6", "power-term"):
        m = eq(table.records["form"], form)[rows]
        print(f"ln P(Tb,CRC) - ln 101325, {form}:", quantiles(np.abs(d[m])))
    result = audit_table(table, Policy("evaluated"), only=["sources-disagree"])
    z = [f.evidence["difference_lnP"] for f in result.findings]
    print("sources-disagree |d| of flagged records (evaluated preset):", quantiles(np.abs(z)))


def report_priors():
    """The rarities behind the diagnosis's priors (vpaudit/diagnose/candidates.py): how many
    real log-linear equations with a log T term imply a positive dCp at the middle of their
    range (in 1/T), per source: Alcock et al. (1984) solids and liquids, Perry's liquids."""
    from compilations import perry

    from vpaudit.equations.engine import curves_from_frame, heat_capacity_change

    records, _ = alcock_pairs()
    sets = {
        "Alcock solids": [r for r in records if r["phase"] == "solid"],
        "Alcock liquids": [r for r in records if r["phase"] == "liquid"],
        "Perry liquids": perry()[0],
    }
    total = positive = 0
    for name, recs in sets.items():
        recs = [r for r in recs if r.get("C") not in (None, 0.0)]
        c = curves_from_frame(table_from_rows(recs).records)
        cp = heat_capacity_change(c, 2.0 / (1.0 / c.t_min + 1.0 / c.t_max))
        n, k = len(recs), int((cp > 0).sum())
        total, positive = total + n, positive + k
        print(f"{name}: {k} of {n} with a log T term imply dCp > 0 at mid-range")
    print(f"all: {positive} of {total} ({positive / total:.1%})")
    from collections import Counter

    exponents = Counter(float(r["E"]) for r in perry()[0] if r.get("E") is not None)
    print(f"Perry liquids, the exponent E of D T^E: {dict(sorted(exponents.items()))}")
    report_low_pressure_liquids()
    report_impossible_errors()


def report_impossible_errors():
    """How often an error that says the curve is impossible comes from a slip and how often
    from anything else (tests/_support/compilations.py ``impossible_errors``): the odds behind
    the diagnosis's ``impossible_cost``."""
    import math

    from compilations import impossible_errors

    got = impossible_errors()
    for name, (k, n) in got.items():
        print(f"{name}: {k} substances flagged with an impossible curve, {n} with other errors")
    (a, b), (c, d) = got["slips"], got["no slip"]
    odds = (a / b) / (c / d)
    print(f"odds ratio {odds:.2f}: 2 ln = {2 * math.log(odds):.2f} above an ordinary error's cost")


def report_low_pressure_liquids():
    """How many real liquid equations never reach 1 Pa over their range, per source, for
    ranges ending below and above the diagnosis's _EFFUSION_LIQUIDS: the rarity behind its
    _LIQUID_BELOW_1_PA prior (vpaudit/diagnose/scoring.py)."""
    from compilations import low_pressure_liquids

    from vpaudit.diagnose.scoring import _EFFUSION_LIQUIDS

    got = low_pressure_liquids(_EFFUSION_LIQUIDS)
    for name, (n_cool, low_cool, n_hot, low_hot) in got.items():
        print(
            f"{name}: below 1 Pa over the whole range: {low_cool} of {n_cool} ending below "
            f"{_EFFUSION_LIQUIDS:g} K, {low_hot} of {n_hot} ending above"
        )
    n, k = (sum(v[i] for v in got.values()) for i in (0, 1))
    print(f"all ending below {_EFFUSION_LIQUIDS:g} K: {k} of {n} ({k / n:.1%})")


def report_boiling_opinions():
    """The clean Landolt liquids (odd CAS) that draw a boiling-point-mismatch error, judged
    against the other normal boiling points chemicals carries (methods CRC_ORG, CRC_INORG,
    YAWS, COMMON_CHEMISTRY, WIKIDATA; the web compilation is reserved and not read): does
    another source meet the record (within 1 % of where its curve reaches 101325 Pa), do the
    sources agree with the reference, or differ among themselves?"""
    import math
    from collections import Counter

    from chemicals import Tb
    from compilations import _complete, landolt

    from vpaudit.equations.engine import curves_from_frame, temperature_at

    records, refs = landolt()
    records = [r for r in records if _complete(r)]
    result = audit_table(table_from_rows(records, refs), diagnose=False)
    errors = [
        f
        for f in result.findings
        if f.check == "boiling-point-mismatch" and f.severity.value == "error"
    ]
    by_id = {r["id"]: r for r in records}
    verdicts: Counter = Counter()
    for f in errors:
        rec = by_id[f.records[0]]
        c = curves_from_frame(table_from_rows([rec]).records)
        implied = temperature_at(c, LN_P_STANDARD, 0.5 * c.t_min, 3.0 * c.t_max)[0]
        values = []
        for method in ("CRC_ORG", "CRC_INORG", "YAWS", "COMMON_CHEMISTRY", "WIKIDATA"):
            try:
                v = Tb(rec["substance"], method=method)
            except Exception:  # noqa: BLE001  (a method without the substance)
                continue
            if v:
                values.append(float(v))
        ref = f.evidence["boiling_point_K"]
        if math.isfinite(implied) and any(abs(v - implied) / implied < 0.01 for v in values):
            verdicts["another source meets the record"] += 1
        elif any(abs(v - ref) > 0.5 for v in values):
            verdicts["sources differ, none meets the record"] += 1
        elif len(values) >= 2:
            verdicts["the other sources agree with the reference"] += 1
        else:
            verdicts["one source only"] += 1
    print(f"Landolt liquids (odd CAS), {len(errors)} boiling-point errors:", dict(verdicts))


def report_source_scatter():
    """How far two sources of one liquid disagree over their common range, in the literature
    compilations together (Landolt odd-CAS rows, Poling's Antoine and Wagner, McGarry's
    Wagner, Perry's; tests/_support/compilations.py ``source_gaps``). Its 90th percentile
    is the diagnosis's SOURCE_SCATTER: a fix that moves a curve by less cannot be told from
    such a disagreement."""
    from compilations import source_gaps

    from vpaudit.diagnose.scoring import SOURCE_SCATTER

    gaps = source_gaps()
    q = np.percentile(gaps, [25, 50, 75, 90, 95])
    print(
        f"{len(gaps)} pairs of liquid sources with overlapping ranges: max |ln P1 - ln P2| "
        "p25, p50, p75, p90, p95 = "
        + ", ".join(f"{x:.3g}" for x in q)
        + f" (SOURCE_SCATTER = {SOURCE_SCATTER:g})"
    )


def report_entropy_edge():
    """The lower edge of enthalpy-implausible's band below P0/e^3, with and without its rise
    (``liquid_min_dcp``; the curve's own |dCp| where it states a smaller one): the clean
    liquid equations of the four compilations and of Alcock et al. (1984) that fall below
    it, and the fraction of pressure-unit slips (coefficients for a larger unit marked with
    the smaller: the pressure falls by the factor) on the equations inside the band that
    leave it. At the tested point of the check (the reference T_b in range, else the middle
    of the range in 1/T)."""
    from compilations import COMPILATIONS, _complete

    from vpaudit.checks.implied import entropy_band, standard_entropy
    from vpaudit.equations.engine import heat_capacity_from

    policy = Policy()
    th = policy.thresholds("enthalpy-implausible")
    flat = {**th, "liquid_min_dcp": 0.0}
    sets = {n: COMPILATIONS[n]() for n in ("landolt", "poling-antoine", "wagner", "perry")}
    sets["alcock"] = alcock_pairs()
    cols = []
    for name, (records, refs) in sets.items():
        records = [r for r in records if _complete(r)]
        ctx = AuditContext(table_from_rows(records, refs), policy)
        rows = np.flatnonzero(ctx.evaluable & ctx.liquid)
        _, liquid, t, y, y1, ds, _, _, _ = standard_entropy(ctx, th, rows)
        _, _, y2 = evaluate(ctx.curves.take(rows), t, order=2)
        ids = ctx.table.records["id"].to_numpy()[rows]
        keep = np.isfinite(ds)
        cols.append(
            (
                name,
                ids[keep],
                t[keep],
                (y - LN_P_STANDARD)[keep],
                ds[keep],
                heat_capacity_from(t, y1, y2)[keep],
            )
        )
    for label, thr in (("without the rise", flat), ("with the rise", th)):
        print(f"lower edge {label}:")
        below_all = []
        for name, ids, t, lp, ds, dcp in cols:
            lo, hi = entropy_band(thr, np.ones(t.size, bool), t, lp, dcp)
            below = ds < lo
            below_all += [
                f"{i} ({d:.1f} at ln(P/P0) {x:.1f})"
                for i, d, x in zip(ids[below], ds[below], lp[below], strict=True)
                if x < -3
            ]
            print(f"  {name}: {int(below.sum())} of {t.size} clean liquids below it")
        print("  below it where ln(P/P0) < -3: " + ("; ".join(below_all) or "none"))
    print(
        "pressure-unit slips (pressure down by the factor) leaving the band, all "
        "compilations (not Alcock):"
    )
    t, lp, ds, dcp = (
        np.concatenate([c[k] for c in cols if c[0] != "alcock"]) for k in (2, 3, 4, 5)
    )
    liquid = np.ones(t.size, bool)
    lo, hi = entropy_band(th, liquid, t, lp, dcp)
    lo0, hi0 = entropy_band(flat, liquid, t, lp, dcp)
    inside = (ds >= np.maximum(lo, lo0)) & (ds <= hi)
    for unit, f in (
        ("mbar", 100.0),
        ("mmHg", 133.322387415),
        ("kPa", 1e3),
        ("psi", 6894.757293168),
        ("bar", 1e5),
    ):
        d = np.log(f)
        got = []
        for thr in (flat, th):
            l2, s2 = lp[inside] - d, ds[inside] - R * d
            a, b = entropy_band(thr, liquid[inside], t[inside], l2, dcp[inside])
            got.append(float(((s2 < a) | (s2 > b)).mean()))
        print(f"  {unit:<5} ({f:.6g}): {got[0]:.0%} -> {got[1]:.0%} of {int(inside.sum())}")


def report_solid_ranges():
    """Where the ranges of real solid equations start and end, relative to the highest CRC
    melting point of their substance (via chemicals): Alcock et al. (1984) and Landolt's
    solids (odd CAS). ``solid-above-melting`` makes an error of a start above it by more
    than its tolerance."""
    from compilations import COMPILATIONS, _complete

    tol = Policy().thresholds("solid-above-melting")["tolerance"]
    sets = {"landolt": COMPILATIONS["landolt"](), "alcock": alcock_pairs()}
    for name, (records, refs) in sets.items():
        tm: dict[str, float] = {}
        for r in refs:
            if r["quantity"] == "melting_point":
                tm[r["substance"]] = max(tm.get(r["substance"], 0.0), float(r["value"]))
        got = [
            (r["t_min"] / tm[r["substance"]], r["t_max"] / tm[r["substance"]], r["id"])
            for r in records
            if r["phase"] == "solid" and _complete(r) and r["substance"] in tm
        ]
        start = np.array([g[0] for g in got])
        end = np.array([g[1] for g in got])
        above = sorted((g for g in got if g[0] > 1.0 + tol), key=lambda g: -g[0])
        print(
            f"{name}: {len(got)} solids with a melting point; range start / Tm at most "
            f"{start.max():.3f}; range end / Tm p50 {np.percentile(end, 50):.3f}, p99 "
            f"{np.percentile(end, 99):.3f}, max {end.max():.3f}; starting more than "
            f"{tol:.0%} above it: "
            + (", ".join(f"{i} ({a:.3f}..{b:.3f})" for a, b, i in above) or "none")
        )


if __name__ == "__main__":
    if "--solid-ranges" in sys.argv:
        report_solid_ranges()
    elif "--entropy-edge" in sys.argv:
        report_entropy_edge()
    elif "--scatter" in sys.argv:
        report_source_scatter()
    elif "--boiling" in sys.argv:
        report_boiling_opinions()
    elif "--priors" in sys.argv:
        report_priors()
    else:
        report_evaluated()
        report_compilation()
