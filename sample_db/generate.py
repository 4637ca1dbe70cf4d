"""Regenerate the demo table in this folder (invented data, NOT real properties).

Scenario: the source-materials table of "Harrowgate Thin Films", a fictional vacuum-coating
plant. Every substance name, number and source here is invented. Each substance gets an
invented melting point, enthalpy of fusion, enthalpy of vaporization at the melting point,
heat-capacity changes and triple-point pressure; the solid and liquid curves are then the
exact integrals of Clausius-Clapeyron with constant dCp,

    ln P(T) = ln P_tp - (dH0 - dCp*Tm)/R * (1/T - 1/Tm) + dCp/R * ln(T/Tm),

so they meet at the triple point by construction. Records are then written in a mix of
forms, bases and units (exact conversions), and the slips listed in PLANTED are applied.

Run:  python sample_db/generate.py
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
from scipy.constants import R

from vpaudit.equations import convert_record
from vpaudit.units import PRESSURE_UNITS

HERE = Path(__file__).resolve().parent
RNG = np.random.default_rng(20261201)

# name, Tm [K], dH_fus [kJ/mol], dH_vap at Tm [kJ/mol], dS_vap at Tm and 1 atm
# [J/(mol K)] (sets the triple-point pressure), M [g/mol], kind. All invented.
SUBSTANCES = [
    ("ardenite", 1179.4, 12.47, 244.1, 105.1, 61.64, "metal"),
    ("bellorium", 876.2, 10.62, 266.7, 106.2, 30.98, "metal"),
    ("cassine", 1278.3, 12.8, 316.7, 98.0, 68.34, "metal"),
    ("dorvane", 610.7, 5.34, 180.2, 102.3, 115.95, "metal"),
    ("elmsite", 1618.3, 18.75, 359.5, 123.3, 61.4, "metal"),
    ("fennium", 491.5, 7.44, 279.9, 99.3, 100.31, "metal"),
    ("galdrite", 1778.6, 13.93, 325.5, 113.9, 50.89, "metal"),
    ("harlowene", 710.2, 7.19, 111.6, 101.8, 66.52, "metal"),
    ("islingite", 2068.3, 22.24, 591.2, 108.7, 86.53, "metal"),
    ("jorvate", 431.3, 3.55, 239.5, 112.1, 109.93, "metal"),
    ("kestrium", 1837.2, 13.97, 426.9, 123.4, 44.57, "metal"),
    ("lanthorne", 1116.0, 6.41, 416.9, 109.7, 140.93, "metal"),
    ("morwenite", 578.7, 6.44, 101.3, 120.5, 114.2, "metal"),
    ("norrane", 604.5, 4.46, 163.3, 108.8, 211.11, "metal"),
    ("orvelite", 1374.7, 12.97, 356.0, 97.7, 209.68, "metal"),
    ("pellinium", 2148.1, 22.23, 420.2, 104.0, 50.51, "metal"),
    ("quarnite", 1673.2, 14.77, 391.1, 100.7, 54.53, "metal"),
    ("rostane", 268.8, 9.56, 44.3, 97.0, 23.76, "volatile"),
    ("selmane", 293.7, 10.53, 35.8, 103.0, 74.64, "volatile"),
    ("tavelene", 212.3, 8.94, 18.1, 100.3, 40.93, "volatile"),
    ("umbrite", 1501.5, 7.48, 254.4, 100.9, 9.16, "metal"),
    ("varnium", 930.6, 6.98, 147.8, 103.4, 139.12, "metal"),
    ("wexlite", 1267.8, 11.34, 260.8, 122.7, 111.7, "metal"),
    ("yarrowite", 985.7, 11.3, 311.6, 97.5, 28.61, "metal"),
    ("zennite", 1056.8, 5.06, 406.6, 107.0, 127.83, "metal"),
    ("amberlane", 339.0, 17.72, 53.6, 93.3, 116.73, "volatile"),
    ("brisenol", 272.5, 9.66, 40.1, 92.0, 41.73, "volatile"),
    ("corlithane", 181.9, 6.14, 33.6, 109.5, 56.33, "volatile"),
    ("drennite", 1596.0, 53.7, 388.4, 106.2, 27.91, "metalloid"),
    ("eskerine", 1139.8, 34.06, 292.4, 109.5, 69.18, "metalloid"),
    # last, so that the random draws of the others stay as they were: a lone liquid (plant)
    ("pennarol", 250.0, 9.0, 42.0, 95.0, 88.1, "volatile"),
]


def curve(tm, dh0, dcp, lnp_tp):
    """Three-term coefficients (ln, Pa, K) of the curve through (Tm, P_tp) with dH(Tm)=dh0."""
    c = dcp / R
    b = -(dh0 - dcp * tm) / R
    a = lnp_tp - b / tm - c * math.log(tm)
    return a, b, c


def four_term_t(tm, dh0, dcp, lnp_tp, d):
    """Four-term-t coefficients (ln, Pa, K) with dCp/R = C + 2 D T equal to dcp at Tm, dH(Tm)
    = dh0 and ln P(Tm) = lnp_tp: dH/R = -B + C T + D T^2 (Clausius-Clapeyron,
    dH = R T^2 dlnP/dT)."""
    c = dcp / R - 2.0 * d * tm
    b = c * tm + d * tm * tm - dh0 / R
    a = lnp_tp - b / tm - c * math.log(tm) - d * tm
    return {"form": "four-term-t", "A": a, "B": b, "C": c, "D": d}


def fmt(x, digits=7):
    return f"{x:.{digits}g}"


def record(rid, name, phase, a, b, c, t_min, t_max, source, **extra):
    rec = {
        "id": rid,
        "substance": name,
        "phase": phase,
        "modification": None,
        "form": "three-term",
        "log_base": "e",
        "pressure_unit": "Pa",
        "temperature_unit": "K",
        "A": a,
        "B": b,
        "C": c,
        "D": None,
        "E": None,
        "t_crit": None,
        "p_crit": None,
        "t_min": t_min,
        "t_max": t_max,
        "source": source,
        "source_locator": None,
        "uncertainty": 0.03,
        "note": None,
        "entered_by": "demo generator",
        "entered_on": "2026-12-01",
    }
    rec.update(extra)
    return rec


SOURCES = [
    "Harrowgate materials datasheet HTF-DS-07 (invented demo source)",
    "Fictional Compendium of Coating Vapours, 2nd ed. (invented demo source)",
    "Harrowgate lab notebook LN-214 (invented demo source)",
]
STYLES = [
    ("e", "Pa"),
    ("10", "Pa"),
    ("10", "atm"),
    ("10", "Torr"),
    ("e", "kPa"),
    ("10", "mmHg"),
    ("10", "bar"),
]


def build():
    records, refs, points = [], [], []
    for k, (name, tm, hfus, hvap, ds_vap, mw, kind) in enumerate(SUBSTANCES):
        metal = kind != "volatile"
        # dS = dH/T + R ln(P/P0) at the triple point fixes P_tp.
        lnp_tp = math.log(101325.0) + (ds_vap - hvap * 1e3 / tm) / R
        dcp_l = -(8.0 + 4.0 * RNG.random()) if metal else -(35.0 + 20.0 * RNG.random())
        dcp_s = -(4.0 + 3.0 * RNG.random()) if metal else -(15.0 + 10.0 * RNG.random())
        liquid = curve(tm, hvap * 1e3, dcp_l, lnp_tp)
        solid = curve(tm, (hvap + hfus) * 1e3, dcp_s, lnp_tp)
        s_lo = round(max(0.55 * tm, 150.0 if not metal else 298.15), 2)
        l_hi = round(min(1.6 * tm, tm + 1200.0) if metal else 1.45 * tm, 1)
        base, unit = STYLES[k % len(STYLES)]
        src = SOURCES[k % len(SOURCES)]
        for phase, (a, b, c), lo, hi in (("solid", solid, s_lo, tm), ("liquid", liquid, tm, l_hi)):
            rec = record(f"{name}-{phase[0]}1", name, phase, a, b, c, lo, round(hi, 2), src)
            if name == "lanthorne" and phase == "liquid":
                rec.update(four_term_t(tm, hvap * 1e3, dcp_l, lnp_tp, -1.0e-3))
            rec = convert_record(rec, log_base=base, pressure_unit=unit)
            rec["note"] = None
            records.append(rec)
        refs.append(
            {
                "substance": name,
                "quantity": "melting_point",
                "value": fmt(tm, 6),
                "unit": "K",
                "source": "Harrowgate reference sheet RS-1 (invented demo source)",
            }
        )
        refs.append(
            {
                "substance": name,
                "quantity": "enthalpy_of_fusion",
                "value": fmt(hfus, 4),
                "unit": "kJ/mol",
                "source": "Harrowgate reference sheet RS-1 (invented demo source)",
            }
        )
        refs.append(
            {
                "substance": name,
                "quantity": "molar_mass",
                "value": fmt(mw, 5),
                "unit": "g/mol",
                "source": "Harrowgate reference sheet RS-1 (invented demo source)",
            }
        )
        if not metal:  # standard data of vaporization at 298.15 K (P0 = 1 bar), as
            # standard thermochemical tables give them, from the liquid curve itself
            a, b, c = liquid
            t0 = 298.15
            h298 = R * (-b + c * t0)
            s298 = h298 / t0 + R * (a + b / t0 + c * math.log(t0) - math.log(1e5))
            for quantity, value, unit in (
                ("standard_enthalpy_of_vaporization", fmt(h298 / 1e3, 5), "kJ/mol"),
                ("standard_entropy_of_vaporization", fmt(s298, 5), "J/(mol K)"),
            ):
                refs.append(
                    {
                        "substance": name,
                        "quantity": quantity,
                        "value": value,
                        "unit": unit,
                        "source": "Fictional Tables of Standard Properties (invented demo source)",
                    }
                )
        # Normal boiling point of the liquid curve, when it is reached below 2.5 Tm.
        a, b, c = liquid
        ts = np.linspace(tm, 2.5 * tm, 20001)
        y = a + b / ts + c * np.log(ts)
        hit = np.flatnonzero(y >= math.log(101325.0))
        if hit.size and hit[0] > 0:
            i = hit[0]
            tb = ts[i - 1] + (math.log(101325.0) - y[i - 1]) / (y[i] - y[i - 1]) * (
                ts[i] - ts[i - 1]
            )
            refs.append(
                {
                    "substance": name,
                    "quantity": "normal_boiling_point",
                    "value": fmt(tb, 6),
                    "unit": "K",
                    "source": "Harrowgate reference sheet RS-1 (invented demo source)",
                }
            )
        if k % 4 == 0:  # a few measured points, 1 % scatter
            for t in np.linspace(tm * 1.05, l_hi * 0.95, 4):
                p = math.exp(a + b / t + c * math.log(t)) * (1.0 + 0.01 * RNG.standard_normal())
                points.append(
                    {
                        "substance": name,
                        "phase": "liquid",
                        "T": fmt(t, 6),
                        "P": fmt(p, 5),
                        "temperature_unit": "K",
                        "pressure_unit": "Pa",
                        "source": "Harrowgate effusion cell runs EC-3 (invented demo source)",
                        "uncertainty": "0.03",
                    }
                )
    # solid points for the first substance, from an RNG of their own (the other points and
    # coefficients stay as they were), so that `vpaudit fit --pair` can be tried
    name, tm = SUBSTANCES[0][0], SUBSTANCES[0][1]
    solid = next(r for r in records if r["id"] == f"{name}-s1")
    a, b, c = (float(solid[k]) for k in ("A", "B", "C"))
    scale = math.log(10.0) if str(solid["log_base"]) == "10" else 1.0
    to_pa = PRESSURE_UNITS[str(solid["pressure_unit"])]
    rng = np.random.default_rng(20261202)
    for t in np.linspace(float(solid["t_min"]) * 1.1, tm * 0.97, 5):
        lnp = scale * (a + b / t) + c * math.log(t)
        p = math.exp(lnp) * to_pa * (1.0 + 0.01 * rng.standard_normal())
        points.append(
            {
                "substance": name,
                "phase": "solid",
                "T": fmt(t, 6),
                "P": fmt(p, 5),
                "temperature_unit": "K",
                "pressure_unit": "Pa",
                "source": "Harrowgate Knudsen cell runs KC-1 (invented demo source)",
                "uncertainty": "0.03",
            }
        )
    return records, refs, points


def plant(records, refs, points):
    """Apply the planted slips; returns {substance: (record id, check meant to find it)}."""
    by_id = {r["id"]: r for r in records}
    planted = {}

    def rec(rid):
        return by_id[rid]

    # 1. log10 coefficients typed in with log_base e.
    r = rec("bellorium-l1")
    r.update(convert_record(r, log_base="10", pressure_unit="Pa"))
    r["log_base"] = "e"
    planted["bellorium"] = ("bellorium-l1", "enthalpy-implausible")
    # 2. Torr coefficients labelled Pa.
    r = rec("cassine-s1")
    r.update(convert_record(r, pressure_unit="Torr"))
    r["pressure_unit"] = "Pa"
    planted["cassine"] = ("cassine-s1", "melting-point-mismatch")
    # 3. Antoine equation in degC labelled K (liquid of a volatile substance).
    r = rec("selmane-l1")
    canon = convert_record(r, log_base="10", pressure_unit="mmHg")
    ts = np.linspace(r["t_min"], r["t_max"], 60)
    lnp = canon["A"] + canon["B"] / ts + canon["C"] * np.log10(ts)
    from scipy.optimize import least_squares

    fit = least_squares(lambda p: p[0] - p[1] / (ts - 273.15 + p[2]) - lnp, [7.0, 1500.0, 230.0])
    a, b, c = fit.x
    r.update(
        {
            "form": "antoine",
            "log_base": "10",
            "pressure_unit": "mmHg",
            "temperature_unit": "K",
            "A": a,
            "B": b,
            "C": c,
            "D": None,
            "t_min": r["t_min"],
            "t_max": r["t_max"],
            "note": "Antoine constants from the compendium",
        }
    )
    planted["selmane"] = ("selmane-l1", "boiling-point-mismatch")
    # 4. Lost minus sign on the 1/T coefficient.
    r = rec("dorvane-s1")
    r["B"] = abs(float(r["B"]))
    planted["dorvane"] = ("dorvane-s1", "slope-not-positive")
    # 5. Solid and liquid labels swapped.
    s, liq = rec("elmsite-s1"), rec("elmsite-l1")
    s["phase"], liq["phase"] = "liquid", "solid"
    planted["elmsite"] = ("elmsite-s1", "crossing-orientation")
    # 6. Decimal slip in the constant term.
    r = rec("galdrite-l1")
    r["A"] = float(r["A"]) / 10.0
    planted["galdrite"] = ("galdrite-l1", "melting-point-mismatch")
    # 7. A liquid record whose range was entered far beyond the critical temperature.
    r = rec("islingite-l1")
    refs.append(
        {
            "substance": "islingite",
            "quantity": "critical_temperature",
            "value": fmt(float(r["t_max"]) * 0.8, 5),
            "unit": "K",
            "source": "Harrowgate reference sheet RS-1 (invented demo source)",
        }
    )
    planted["islingite"] = ("islingite-l1", "above-critical")
    # 8. Two sources of one liquid that disagree: a second, 25 % higher source.
    r = dict(rec("kestrium-l1"))
    r.update({"id": "kestrium-l2", "source": SOURCES[(SOURCES.index(r["source"]) + 1) % 3]})
    shift = math.log10(1.25) if r["log_base"] == "10" else math.log(1.25)
    r["A"] = float(r["A"]) + shift
    records.append(r)
    planted["kestrium"] = ("kestrium-l2", "sources-disagree")
    # 9. Lost minus sign of the D coefficient of a four-term equation: dCp turns positive.
    r = rec("lanthorne-l1")
    r["D"] = -float(r["D"])
    planted["lanthorne"] = ("lanthorne-l1", "heat-capacity-sign")
    # 10. Missing source.
    rec("norrane-s1")["source"] = None
    planted["norrane"] = ("norrane-s1", "missing-source")
    # 11. A lone liquid (no solid record, no melting or boiling point on file: only its
    # standard data at 298.15 K) whose coefficients give kPa but are marked Pa.
    records.remove(rec("pennarol-s1"))
    refs[:] = [
        x
        for x in refs
        if x["substance"] != "pennarol"
        or x["quantity"] not in ("melting_point", "enthalpy_of_fusion", "normal_boiling_point")
    ]
    r = rec("pennarol-l1")
    r.update(convert_record(r, pressure_unit="kPa"))
    r["pressure_unit"] = "Pa"
    planted["pennarol"] = ("pennarol-l1", "anchor-entropy")
    return planted


COLUMNS = [
    "id",
    "substance",
    "phase",
    "modification",
    "form",
    "log_base",
    "pressure_unit",
    "temperature_unit",
    "A",
    "B",
    "C",
    "D",
    "E",
    "t_crit",
    "p_crit",
    "t_min",
    "t_max",
    "source",
    "source_locator",
    "uncertainty",
    "note",
    "entered_by",
    "entered_on",
]


def cell(v):
    if v is None:
        return ""
    if isinstance(v, float):
        return fmt(v, 9)
    return str(v)


def write(records, refs, points, planted):
    (HERE / "records").mkdir(exist_ok=True)
    (HERE / "references").mkdir(exist_ok=True)
    (HERE / "points").mkdir(exist_ok=True)
    metals = [r for r in records if r["substance"] not in VOLATILE]
    volatile = [r for r in records if r["substance"] in VOLATILE]
    for path, rows in (
        (HERE / "records" / "metals.csv", metals),
        (HERE / "records" / "volatiles.csv", volatile),
    ):
        with open(path, "w", newline="", encoding="utf-8") as fh:
            w = csv.writer(fh, lineterminator="\n")
            w.writerow(COLUMNS)
            for r in rows:
                r["uncertainty"] = 0.03
                w.writerow([cell(r.get(c)) for c in COLUMNS])
    for path, rows, cols in (
        (
            HERE / "references" / "reference_values.csv",
            refs,
            ["substance", "quantity", "value", "unit", "source"],
        ),
        (
            HERE / "points" / "effusion_runs.csv",
            points,
            [
                "substance",
                "phase",
                "T",
                "P",
                "temperature_unit",
                "pressure_unit",
                "source",
                "uncertainty",
            ],
        ),
    ):
        with open(path, "w", newline="", encoding="utf-8") as fh:
            w = csv.writer(fh, lineterminator="\n")
            w.writerow(cols)
            for r in rows:
                w.writerow([r.get(c, "") for c in cols])
    with open(HERE / "PLANTED.csv", "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["substance", "record", "check"])
        for name, (rid, check) in sorted(planted.items()):
            w.writerow([name, rid, check])


VOLATILE = {s[0] for s in SUBSTANCES if s[6] == "volatile"}

if __name__ == "__main__":
    recs, refs_, pts = build()
    planted_ = plant(recs, refs_, pts)
    write(recs, refs_, pts, planted_)
    print(
        f"wrote {len(recs)} records, {len(refs_)} references, {len(pts)} points; "
        f"{len(planted_)} planted slips"
    )
