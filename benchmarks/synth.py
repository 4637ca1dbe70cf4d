"""Tables for benchmarks, N substances of a solid and a liquid record each, of two kinds.

:func:`generate`: invented substances. The curves are consistent by construction
(constant-dCp Clausius-Clapeyron integrals, or for a share of the liquids Antoine equations
with the same slope, that meet at the melting point); a fraction of substances carries one
planted defect. All values are invented.

:func:`replicas`: tables made like real data. Each substance is a copy of a real published
solid/liquid pair (the Alcock, Itkin & Horrigan (1984) metal equations with their D T term,
as the chemicals package carries them), both constant terms shifted by the same amount so
that the copies differ but each pair stays as consistent as the original, with the
original's CRC melting point and enthalpy of fusion as references: the warnings and errors
the real equations draw come with them.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
from scipy.constants import R

HEADER = [
    "id",
    "substance",
    "phase",
    "form",
    "log_base",
    "pressure_unit",
    "A",
    "B",
    "C",
    "t_min",
    "t_max",
    "source",
    "uncertainty",
]
DEFECTS = ("sign-B", "log-base", "pressure-unit", "swap", "decimal-A")


def coefficients(tm, dh, dcp, lnp):
    c = dcp / R
    b = -(dh - dcp * tm) / R
    a = lnp - b / tm - c * np.log(tm)
    return a, b, c


def antoine(tm, dh, lnp, pole_fraction):
    """Antoine constants ln P = A - B / (T + C) (T in K) with slope dH/(R Tm^2) and value lnp
    at Tm, and the pole -C at ``pole_fraction`` * Tm, below the range (which starts at Tm).

    A fraction of 0.03-0.08 gives an implied dCp of about -15 to -40 J/(mol K) at Tm, near
    the three-term liquids'; with 0.1-0.3 (dCp to -190) the extrapolated liquid bends back
    across the solid inside the crossing window and draws multiple-crossings warnings.
    """
    c = -pole_fraction * tm
    b = dh * (tm + c) ** 2 / (R * tm * tm)
    a = lnp + b / (tm + c)
    return a, b, c


def generate(
    folder: Path,
    n: int,
    defect_rate: float = 0.03,
    seed: int = 1,
    antoine_share: float = 0.1,
    every_log_base: bool = False,
) -> dict:
    """Write ``records/records.csv`` and ``references/references.csv`` for ``n`` substances;
    returns {substance: defect} for the planted ones. A share ``antoine_share`` of the
    liquids is written in the Antoine form (the rest, and every solid, in the three-term
    form), so the audit meets two equation forms and pairs of mixed forms.
    ``every_log_base``: every liquid's coefficients are for log10 P but marked ln P (a whole
    compilation typed in under one wrong header), so every substance is flagged."""
    rng = np.random.default_rng(seed)
    tm = rng.uniform(300.0, 2500.0, n)
    hvap = tm * rng.uniform(180.0, 260.0, n)
    hfus = tm * rng.uniform(8.0, 14.0, n)
    ds0 = rng.uniform(95.0, 125.0, n)
    lnp = math.log(101325.0) + (ds0 - hvap / tm) / R
    dcp_l = -rng.uniform(5.0, 15.0, n)
    dcp_s = -rng.uniform(2.0, 8.0, n)
    al, bl, cl = coefficients(tm, hvap, dcp_l, lnp)
    is_ant = rng.random(n) < antoine_share
    aa, ba, ca = antoine(tm, hvap, lnp, rng.uniform(0.03, 0.08, n))
    al, bl, cl = np.where(is_ant, aa, al), np.where(is_ant, ba, bl), np.where(is_ant, ca, cl)
    as_, bs, cs = coefficients(tm, hvap + hfus, dcp_s, lnp)
    defect = np.full(n, "", dtype=object)
    pick = rng.random(n) < defect_rate
    defect[pick] = rng.choice(DEFECTS, pick.sum())
    if every_log_base:
        defect[:] = "log-base"
    bs = np.where(defect == "sign-B", -bs, bs)
    al_w = np.where(defect == "log-base", al / math.log(10), al)
    bl_w = np.where(defect == "log-base", bl / math.log(10), bl)  # C stays: ln T, or T + C
    as_ = np.where(defect == "pressure-unit", as_ - math.log(133.322), as_)
    al_w = np.where(defect == "decimal-A", al_w * 10.0, al_w)
    names = np.char.add("sub", np.arange(n).astype(str))
    (folder / "records").mkdir(parents=True, exist_ok=True)
    (folder / "references").mkdir(parents=True, exist_ok=True)
    swap = defect == "swap"
    with open(folder / "records" / "records.csv", "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(HEADER)
        for i in range(n):
            ps, pl = ("liquid", "solid") if swap[i] else ("solid", "liquid")
            w.writerow(
                [
                    f"{names[i]}-s",
                    names[i],
                    ps,
                    "three-term",
                    "e",
                    "Pa",
                    f"{as_[i]:.9g}",
                    f"{bs[i]:.9g}",
                    f"{cs[i]:.9g}",
                    f"{0.6 * tm[i]:.6g}",
                    f"{tm[i]:.6g}",
                    "synthetic",
                    "0.03",
                ]
            )
            w.writerow(
                [
                    f"{names[i]}-l",
                    names[i],
                    pl,
                    "antoine" if is_ant[i] else "three-term",
                    "e",
                    "Pa",
                    f"{al_w[i]:.9g}",
                    f"{bl_w[i]:.9g}",
                    f"{cl[i]:.9g}",
                    f"{tm[i]:.6g}",
                    f"{1.5 * tm[i]:.6g}",
                    "synthetic",
                    "0.03",
                ]
            )
    with open(folder / "references" / "references.csv", "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["substance", "quantity", "value", "unit", "source"])
        for i in range(n):
            w.writerow([names[i], "melting_point", f"{tm[i]:.6g}", "K", "synthetic"])
            w.writerow([names[i], "enthalpy_of_fusion", f"{hfus[i]:.6g}", "J/mol", "synthetic"])
    return {str(names[i]): str(defect[i]) for i in np.flatnonzero(pick)}


REPLICA_HEADER = [*HEADER[:9], "D", *HEADER[9:]]


def replicas(
    folder: Path, n: int, slip_rate: float = 0.03, seed: int = 1, every_log_base: bool = False
) -> dict:
    """Write ``records/records.csv`` and ``references/references.csv`` for ``n`` copies of
    the real Alcock metal pairs (see the module's docstring); returns {substance: slip} for
    the planted ones. A share ``slip_rate`` of the substances carries one slip (log10
    coefficients marked ln on the liquid, mmHg constants marked Pa on the solid, or a lost
    sign of B on the solid); ``every_log_base`` puts the first on every liquid.
    """
    import sys

    sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests" / "_support"))
    from refdata import alcock_pairs

    records, refs = alcock_pairs()
    metals = sorted({r["substance"] for r in records})
    pair = {(r["substance"], r["phase"]): r for r in records}
    by_metal: dict[str, list[dict]] = {}
    for ref in refs:
        by_metal.setdefault(ref["substance"], []).append(ref)
    rng = np.random.default_rng(seed)
    which = rng.integers(0, len(metals), n)
    shift = rng.uniform(-1.0, 1.0, n)
    slip = np.full(n, "", dtype=object)
    pick = rng.random(n) < slip_rate
    slip[pick] = rng.choice(("log-base", "pressure-unit", "sign-B"), int(pick.sum()))
    if every_log_base:
        slip[:] = "log-base"
    (folder / "records").mkdir(parents=True, exist_ok=True)
    (folder / "references").mkdir(parents=True, exist_ok=True)
    ln10, ln_mmhg = math.log(10.0), math.log(133.322)
    with open(folder / "records" / "records.csv", "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(REPLICA_HEADER)
        for i in range(n):
            metal = metals[which[i]]
            name = f"rep{i}-{metal}"
            for phase in ("solid", "liquid"):
                r = pair[(metal, phase)]
                a, b, c, d = r["A"] + shift[i], r["B"], r["C"], r["D"]
                if slip[i] == "log-base" and phase == "liquid":
                    # log10 P = A/ln 10 + (B/ln 10)/T + C log10 T + (D/ln 10) T: the
                    # coefficient of the log T term stays (ln 10 C log10 T = C ln T)
                    a, b, d = a / ln10, b / ln10, d / ln10
                elif slip[i] == "pressure-unit" and phase == "solid":
                    a -= ln_mmhg
                elif slip[i] == "sign-B" and phase == "solid":
                    b = -b
                w.writerow(
                    [
                        f"{name}-{phase[0]}",
                        name,
                        phase,
                        "four-term-t",
                        "e",
                        "Pa",
                        f"{a:.9g}",
                        f"{b:.9g}",
                        f"{c:.9g}",
                        f"{d:.9g}",
                        f"{r['t_min']:.6g}",
                        f"{r['t_max']:.6g}",
                        "replica of a published equation",
                        f"{r['uncertainty']}",
                    ]
                )
    with open(folder / "references" / "references.csv", "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["substance", "quantity", "value", "unit", "source"])
        for i in range(n):
            metal = metals[which[i]]
            for ref in by_metal.get(metal, ()):
                w.writerow(
                    [f"rep{i}-{metal}", ref["quantity"], f"{ref['value']:.9g}", ref["unit"], "CRC"]
                )
    return {f"rep{i}-{metals[which[i]]}": str(slip[i]) for i in np.flatnonzero(slip != "")}
