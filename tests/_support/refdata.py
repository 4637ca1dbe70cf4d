"""Outside reference data turned into vpaudit tables (test-only: uses chemicals and iapws).

* Alcock, Itkin & Horrigan (1984), "Vapour pressure equations for the metallic elements:
  298-2500 K", Canadian Metallurgical Quarterly 23, 309-313 -- as carried by the
  ``chemicals`` package (``Psub_data_Alcock_elements``, ``Psat_data_Alcock_elements``), whose
  coefficients are already ln(P/Pa) = A + B/T + C ln T + D T^E with E = 1.
* Melting points: CRC Handbook of Chemistry and Physics, inorganic compounds table, via
  ``chemicals.Tm(CAS, method='CRC_INORG')``; enthalpies of fusion: CRC Handbook via
  ``chemicals.Hfus(CAS, method='CRC')``.
* Water: IAPWS R14-08 (sublimation pressure of ice Ih) and IAPWS-IF97 / IAPWS-95 saturation
  via the ``iapws`` package.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from vpaudit.readers.files import RawFrame
from vpaudit.readers.rules import Collector
from vpaudit.readers.table import Table, frame_from_raw

ALCOCK = "Alcock, Itkin & Horrigan (1984), Can. Metall. Q. 23, 309, via the chemicals package"
CRC = "CRC Handbook of Chemistry and Physics, via chemicals (CRC_INORG / CRC)"


def table_from_rows(
    records: list[dict], references: list[dict] = (), points: list[dict] = ()
) -> Table:
    """Build a Table from plain dicts through the real column-wise reader path."""
    from vpaudit.readers.table import _finish

    out = Collector()
    parts = {"records": [], "references": [], "points": []}
    for kind, rows in (("records", records), ("references", references), ("points", points)):
        if not rows:
            continue
        cols: list[str] = []
        for r in rows:
            for k in r:
                if k not in cols:
                    cols.append(k)
        cells = {
            c: [
                None
                if r.get(c) is None
                else (
                    repr(float(r[c]))
                    if isinstance(r[c], float | int | np.floating) and not isinstance(r[c], bool)
                    else str(r[c])
                )
                for r in rows
            ]
            for c in cols
        }
        raw = RawFrame(f"<{kind}>", cols, cells, list(range(1, len(rows) + 1)))
        parts[kind].append(frame_from_raw(raw, kind, out))
    return _finish(parts, out)


def invented_antoine(name: str, A: float, B: float, C: float, t_min: float, t_max: float) -> dict:
    """A liquid record ``name`` of an invented substance of the same name (not a real
    substance): ln(P/Pa) = A - B/(T + C) over [t_min, t_max] K."""
    return {
        "id": name,
        "substance": name,
        "phase": "liquid",
        "form": "antoine",
        "log_base": "e",
        "pressure_unit": "Pa",
        "temperature_unit": "K",
        "A": A,
        "B": B,
        "C": C,
        "t_min": t_min,
        "t_max": t_max,
        "source": "invented (not a real substance)",
    }


def alcock_pairs() -> tuple[list[dict], list[dict]]:
    """Solid and liquid records and CRC references of every Alcock element with both."""
    from chemicals import Hfus, Tm
    from chemicals.vapor_pressure import (
        Psat_data_Alcock_elements as liq,
    )
    from chemicals.vapor_pressure import (
        Psub_data_Alcock_elements as sol,
    )

    records, refs = [], []
    for cas in sol.index.intersection(liq.index):
        name = str(sol.loc[cas, "Name"])
        for phase, data in (("solid", sol), ("liquid", liq)):
            row = data.loc[cas]
            records.append(
                {
                    "id": f"{name}-{phase}",
                    "substance": name,
                    "phase": phase,
                    "form": "four-term-t",
                    "log_base": "e",
                    "pressure_unit": "Pa",
                    "A": float(row["A"]),
                    "B": float(row["B"]),
                    "C": float(row["C"]),
                    "D": float(row["D"]),
                    "t_min": float(row["Tmin"]),
                    "t_max": float(row["Tmax"]),
                    "source": ALCOCK,
                    "uncertainty": 0.05,
                }
            )
        tm = Tm(cas, method="CRC_INORG")
        refs.append(
            {
                "substance": name,
                "quantity": "melting_point",
                "value": float(tm),
                "unit": "K",
                "source": CRC,
            }
        )
        try:
            hf = Hfus(cas, method="CRC")
        except Exception:
            hf = None
        if hf:
            refs.append(
                {
                    "substance": name,
                    "quantity": "enthalpy_of_fusion",
                    "value": float(hf),
                    "unit": "J/mol",
                    "source": CRC,
                }
            )
    return records, refs


def alcock_table() -> Table:
    records, refs = alcock_pairs()
    return table_from_rows(records, refs)


def lsq_fit(t: np.ndarray, lnp: np.ndarray, form: str = "four-term-t") -> dict:
    """Least-squares coefficients of a log-linear form (base e, Pa, K) to (T, ln P)."""
    cols = [np.ones_like(t), 1.0 / t, np.log(t)]
    if form == "four-term-t":
        cols.append(t)
    elif form == "four-term-cube":
        cols.append(t**-3.0)
    a = np.column_stack(cols)
    scale = np.abs(a).max(axis=0)
    coef, *_ = np.linalg.lstsq(a / scale, lnp, rcond=None)
    coef = coef / scale
    out = dict(zip("ABCD", coef.tolist(), strict=False))
    resid = lnp - a @ coef
    out["_max_resid"] = float(np.abs(resid).max())
    return out


def water_records() -> tuple[dict, dict, float, float]:
    """Fits of the IAPWS water curves: ice Ih sublimation (R14-08) over 200-273.16 K and
    the IF97 saturation line over 273.16-373.15 K; returns records and their max fit
    residuals in ln P."""
    from iapws._iapws import _Sublimation_Pressure
    from iapws.iapws97 import _PSat_T

    ts = np.linspace(200.0, 273.16, 200)
    ps = np.array([_Sublimation_Pressure(t) for t in ts]) * 1e6
    tl = np.linspace(273.16, 373.15, 200)
    pl = np.array([_PSat_T(t) for t in tl]) * 1e6
    fs = lsq_fit(ts, np.log(ps))
    fl = lsq_fit(tl, np.log(pl))
    base = {
        "substance": "water",
        "form": "four-term-t",
        "log_base": "e",
        "pressure_unit": "Pa",
        "uncertainty": 0.001,
    }
    solid = {
        **base,
        "id": "water-ice",
        "phase": "solid",
        "t_min": 200.0,
        "t_max": 273.16,
        "source": "fit to IAPWS R14-08 (via iapws)",
        **{k: v for k, v in fs.items() if not k.startswith("_")},
    }
    liquid = {
        **base,
        "id": "water-liquid",
        "phase": "liquid",
        "t_min": 273.16,
        "t_max": 373.15,
        "source": "fit to IAPWS-IF97 saturation line (via iapws)",
        **{k: v for k, v in fl.items() if not k.startswith("_")},
    }
    return solid, liquid, fs["_max_resid"], fl["_max_resid"]


def frame(rows: list[dict]) -> pd.DataFrame:
    return table_from_rows(rows).records


WATER_M = 0.018015268  # kg/mol, IAPWS-95 molar mass of water


def water_fusion() -> float:
    """Enthalpy of fusion of ice Ih at the triple point, J/mol: h(liquid, IAPWS-95) minus
    h(ice Ih, IAPWS R10-06), both at 273.16 K and 611.657 Pa, via iapws."""
    from iapws import IAPWS95
    from iapws._iapws import _Ice

    liq = IAPWS95(T=273.16, x=0)
    ice = _Ice(273.16, 611.657e-6)
    return (liq.h - ice["h"]) * 1000.0 * WATER_M


def water_enthalpies(t: float) -> tuple[float, float]:
    """True enthalpy of vaporization (IAPWS-95, saturated vapour minus liquid) at t [K] and
    the apparent one R T^2 dlnP/dT would give there, i.e. dH / dZ; both J/mol."""
    from iapws import IAPWS95
    from scipy.constants import R

    liq = IAPWS95(T=t, x=0)
    vap = IAPWS95(T=t, x=1)
    dh = (vap.h - liq.h) * 1000.0 * WATER_M
    p = liq.P * 1e6
    dz = p * (1.0 / vap.rho - 1.0 / liq.rho) * WATER_M / (R * t)
    return dh, dh / dz


POLING = (
    "Poling, Prausnitz & O'Connell, The Properties of Gases and Liquids, 5th ed., "
    "Antoine constants, via chemicals"
)
MCGARRY = (
    "McGarry (1983), Ind. Eng. Chem. Process Des. Dev. 22, 313, Wagner constants, via chemicals"
)
PERRY = "Perry's Chemical Engineers' Handbook, 8th ed., Table 2-8, via chemicals"


def compilation_table(limit: int | None = None) -> Table:
    """Three literature compilations of the same liquids, as three sources per substance:
    Antoine (Poling), Wagner 3,6 (McGarry) and Perry's ln P = C1 + C2/T + C3 ln T + C4 T^C5,
    with CRC Handbook normal boiling points (chemicals, method CRC_ORG)."""
    from chemicals import Tb
    from chemicals.vapor_pressure import (
        Psat_data_AntoinePoling as ant,
    )
    from chemicals.vapor_pressure import (
        Psat_data_Perrys2_8 as per,
    )
    from chemicals.vapor_pressure import (
        Psat_data_WagnerMcGarry as wag,
    )

    common = ant.index.intersection(wag.index).intersection(per.index)
    if limit:
        common = common[:limit]
    records, refs = [], []
    for cas in common:
        a, w, p = ant.loc[cas], wag.loc[cas], per.loc[cas]
        name = str(p["Chemical"]).lower()
        base = {"substance": name, "phase": "liquid", "pressure_unit": "Pa"}
        records.append(
            {
                **base,
                "id": f"{cas}-poling",
                "form": "antoine",
                "log_base": "10",
                "A": a["A"],
                "B": a["B"],
                "C": a["C"],
                "t_min": a["Tmin"],
                "t_max": a["Tmax"],
                "source": POLING,
            }
        )
        records.append(
            {
                **base,
                "id": f"{cas}-mcgarry",
                "form": "wagner-3-6",
                "log_base": "e",
                "A": w["A"],
                "B": w["B"],
                "C": w["C"],
                "D": w["D"],
                "t_crit": w["Tc"],
                "p_crit": w["Pc"],
                "t_min": w["Tmin"],
                "t_max": 0.999 * w["Tc"],
                "source": MCGARRY,
            }
        )
        records.append(
            {
                **base,
                "id": f"{cas}-perry",
                "form": "power-term",
                "log_base": "e",
                "A": p["C1"],
                "B": p["C2"],
                "C": p["C3"],
                "D": p["C4"],
                "E": p["C5"],
                "t_min": p["Tmin"],
                "t_max": p["Tmax"],
                "source": PERRY,
            }
        )
        try:
            tb = Tb(cas, method="CRC_ORG")
        except Exception:
            tb = None
        if tb:
            refs.append(
                {
                    "substance": name,
                    "quantity": "normal_boiling_point",
                    "value": float(tb),
                    "unit": "K",
                    "source": "CRC Handbook of Chemistry and Physics via chemicals",
                }
            )
    return table_from_rows(records, refs)


def water_references() -> list[dict]:
    """The IAPWS triple point (R14-08: 273.16 K, 611.657 Pa) and the enthalpy of fusion of
    ice Ih there (IAPWS-95 and R10-06 via iapws), as reference rows."""
    src = "IAPWS R14-08"
    return [
        {
            "substance": "water",
            "quantity": "triple_point_temperature",
            "value": 273.16,
            "unit": "K",
            "source": src,
        },
        {
            "substance": "water",
            "quantity": "triple_point_pressure",
            "value": 611.657,
            "unit": "Pa",
            "source": src,
        },
        {
            "substance": "water",
            "quantity": "enthalpy_of_fusion",
            "value": water_fusion(),
            "unit": "J/mol",
            "source": "IAPWS-95 and IAPWS R10-06 via iapws",
        },
    ]
