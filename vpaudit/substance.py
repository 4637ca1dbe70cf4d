"""Answers about one substance: vapour pressure at a temperature, or temperature at a
pressure, with the implied enthalpy and heat-capacity change (``vpaudit eval``).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pandas as pd

from .constants import R
from .equations.engine import curves_from_frame, evaluate, heat_capacity_from, temperature_at
from .errors import VpauditError
from .readers.table import Table

__all__ = ["evaporation_flux", "eval_substance", "substance_records"]


def evaporation_flux(pressure, temperature, molar_mass, alpha: float = 1.0):
    """Maximum free-evaporation mass flux into vacuum (Hertz-Knudsen-Langmuir).

    Parameters
    ----------
    pressure : array_like
        Vapour pressure. [Pa]
    temperature : array_like
        Temperature of the evaporating surface. [K]
    molar_mass : float
        Molar mass of the evaporating species. [kg/mol]
    alpha : float
        Evaporation coefficient, 0 < alpha <= 1. [-]

    Returns
    -------
    ndarray
        Mass flux. [kg m^-2 s^-1]

    Notes
    -----
    J = alpha P sqrt(M / (2 pi R T)). A vapour of dimers or molecules needs the molar mass of
    that species.

    References
    ----------
    .. [1] I. Langmuir, "The vapor pressure of metallic tungsten", Phys. Rev. 2 (1913) 329.
    """
    p = np.asarray(pressure, dtype=float)
    t = np.asarray(temperature, dtype=float)
    return alpha * p * np.sqrt(molar_mass / (2.0 * math.pi * R * t))


def near_names(wanted: str, names: list[str], what: str = "") -> str:
    """A hint naming the names close to ``wanted`` (case, containment, spelling), else how
    many ``what`` the table has and the first few.
    """
    import difflib

    low = wanted.lower()
    close = [n for n in names if n.lower() == low]
    close += [n for n in names if n not in close and (low in n.lower() or n.lower() in low)]
    close += [n for n in difflib.get_close_matches(wanted, names, n=3) if n not in close]
    if close:
        return f"; did you mean {', '.join(close[:5])}?"
    if not names:
        return f"; the table has no{' ' + what if what else 'ne'}"
    return f"; the table has {len(names)}{' ' + what if what else ''}, e.g. {', '.join(names[:5])}"


def check_substances(table: Table, substances) -> None:
    """Raise when a substance named is not in the table's records, naming near matches."""
    known = set(table.records["substance"].astype(object).dropna())
    for name in substances:
        if name not in known:
            raise VpauditError(
                f"no records for substance {name!r}{near_names(name, sorted(known))}"
            )


def check_records(table: Table, ids) -> None:
    """Raise when a record id named is not in the table, naming near matches."""
    known = set(table.records["id"].astype(object).dropna())
    for rid in ids:
        if rid not in known:
            raise VpauditError(f"no record with id {rid!r}{near_names(rid, sorted(known))}")


def substance_records(table: Table, substance: str):
    """The records of ``substance``; an unknown name lists near matches."""
    check_substances(table, [substance])
    rec = table.records
    return rec[rec["substance"] == substance].reset_index(drop=True)


def substance_table(table: Table, substance: str) -> Table:
    """The part of ``table`` about ``substance``: its records (numbered from 0 in table
    order), its references and its points.
    """
    rec = table.records
    ref, pts = table.references, table.points
    return type(table)(
        rec[rec["substance"] == substance].reset_index(drop=True),
        ref[ref["substance"] == substance] if len(ref) else ref,
        pts[pts["substance"] == substance] if len(pts) else pts,
        table.problems,
        [],
        table.policy_path,
    )


def eval_substance(
    table: Table,
    substance: str,
    temperature: float | None = None,
    pressure: float | None = None,
    extrapolate: bool = False,
) -> dict[str, Any]:
    """Evaluate every record of ``substance`` at a temperature or a pressure.

    Parameters
    ----------
    table : Table
    substance : str
    temperature : float, optional
        Temperature [K]: report each record's vapour pressure there.
    pressure : float, optional
        Pressure [Pa]: report the temperature at which each record reaches it.
    extrapolate : bool
        With ``pressure``, search beyond each record's range (to half its t_min and twice
        its t_max).

    Returns
    -------
    dict
        The ``vpaudit eval --format json`` contract (see the README).
    """
    if (temperature is None) == (pressure is None):
        raise VpauditError(
            "give exactly one of a temperature (after SUBSTANCE, or --at) or a pressure "
            "(--pressure)"
        )
    rows = substance_records(table, substance)
    curves = curves_from_frame(rows)
    n = len(rows)
    if temperature is not None:
        t = np.full(n, float(temperature))
    else:
        lo = curves.t_min * (0.5 if extrapolate else 1.0)
        hi = curves.t_max * (2.0 if extrapolate else 1.0)
        t = temperature_at(curves, math.log(pressure), lo, hi)
    y, y1, y2 = evaluate(curves, np.where(np.isfinite(t), t, curves.t_min), order=2)
    found = np.isfinite(t)
    # a curve extrapolated far from its range can leave a float's range: no value (null)
    with np.errstate(over="ignore", invalid="ignore"):
        p = np.where(found, np.exp(y), np.nan)
        h_ideal = np.where(found, R * t * t * y1, np.nan)
        cp = np.where(found, heat_capacity_from(t, y1, y2), np.nan)
    dz, critical, tc = _real_gas(table, substance, np.where(found, t, np.nan), y, h_ideal)
    real = np.isfinite(dz)
    h = np.where(real, dz * h_ideal, h_ideal)
    because = _why_ideal(t, h_ideal, real, critical, tc)
    with np.errstate(invalid="ignore"):
        in_range = found & (t >= curves.t_min) & (t <= curves.t_max)
    mm = table.references
    mm = (
        mm.loc[(mm["substance"] == substance) & (mm["quantity"] == "molar_mass"), "value_si"]
        if len(mm)
        else []
    )
    molar_mass = float(mm.iloc[0]) if len(mm) else None
    melting = _melting_point(table, substance)
    flux = evaporation_flux(p, t, molar_mass) if molar_mass else np.full(n, np.nan)
    phases = rows["phase"].to_numpy(dtype=object)
    stable = _stable_phase(phases, p, t, temperature is not None, in_range)
    against = _against_melting_point(stable, phases, t, melting)
    records = []
    for i in range(n):
        records.append(
            {
                "id": str(rows["id"].iat[i]),
                "phase": str(phases[i]),
                "pressure_Pa": _num(p[i] if temperature is not None else pressure),
                "temperature_K": _num(t[i]),
                "enthalpy_J_per_mol": _num(h[i]),
                "ideal_gas_enthalpy_J_per_mol": _num(h_ideal[i]),
                "vapour": "real-gas" if real[i] else "ideal-gas",
                "ideal_gas_because": because[i],
                "critical_constants_given": bool(critical[i]),
                "critical_temperature_K": _num(tc[i]),
                "compressibility_change": _num(dz[i]),
                "heat_capacity_change_J_per_mol_K": _num(cp[i]),
                "in_range": bool(in_range[i]),
                "evaporation_flux_kg_per_m2_s": _num(flux[i]),
                "range_K": [_num(curves.t_min[i]), _num(curves.t_max[i])],
                "source": rows["source"].iat[i],
            }
        )
    return {
        "substance": substance,
        "temperature_K": None if temperature is None else float(temperature),
        "pressure_Pa": None if pressure is None else float(pressure),
        "stable_phase": stable,
        "melting_point_K": None if melting is None else melting[0],
        "stable_phase_contradicts_melting_point": against,
        "molar_mass_kg_per_mol": molar_mass,
        "records": records,
    }


def _real_gas(
    table: Table, substance: str, t: np.ndarray, y: np.ndarray, h_ideal: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The change of compressibility dZ = Z_vapour - Z_condensed of each record of
    ``substance`` at ``t`` [K] where its curve gives ln(P/Pa) = ``y`` (NaN where the vapour
    is taken as an ideal gas); whether the table gives the Tc and Pc the correction needs
    (a reference, or a Wagner record's own); and that Tc [K] (NaN where none).

    The exact Clapeyron equation makes the enthalpy of the phase change dZ R T^2 dlnP/dT
    (:mod:`vpaudit.checks.real_gas`); it is not corrected where the curve falls as T rises
    (no saturation curve there). Tc and Pc are never estimated here: the estimate from a
    curve's own boiling point (Guldberg's rule) holds for organic liquids, and ``eval``
    serves metals near their boiling points as well.
    """
    from .checks._context import AuditContext
    from .checks.real_gas import critical_constants, departure
    from .policy import load_policy

    ctx = AuditContext(substance_table(table, substance), load_policy(table.policy_path))
    rows = np.arange(len(t))
    tc, pc, omega = critical_constants(ctx, rows)
    with np.errstate(invalid="ignore"):
        d = departure(ctx, rows, t, y, constants=(tc, pc, omega))
        dz = np.where(np.isfinite(t) & (h_ideal > 0.0), d.delta_z, np.nan)
    return dz, np.isfinite(tc) & np.isfinite(pc), tc


#: From this T/Tc up, a vapour too dense for a second virial coefficient is a real one near
#: its critical point (a real saturated vapour reaches |B P/(R T)| = 0.3 only from about
#: 0.95 Tc); below, no saturated vapour is that dense.
NEAR_CRITICAL = 0.9


def _why_ideal(
    t: np.ndarray, h_ideal: np.ndarray, real: np.ndarray, critical: np.ndarray, tc: np.ndarray
) -> list[str | None]:
    """Why ``eval`` read each record's vapour at ``t`` [K] as an ideal gas (None where it
    did not, or where the record has no value there): ``h_ideal`` = R T^2 dlnP/dT [J/mol];
    ``real``, ``critical`` and ``tc`` [K] as :func:`_real_gas` gives them.
    """
    out: list[str | None] = []
    rows = zip(
        t.tolist(), h_ideal.tolist(), real.tolist(), critical.tolist(), tc.tolist(), strict=True
    )
    for tk, hk, r, c, tck in rows:
        if r or not math.isfinite(tk):
            out.append(None)
        elif math.isfinite(tck) and tk > tck:
            out.append("above-critical-temperature")
        elif not math.isfinite(hk):  # no value there (a float's range left)
            out.append(None)
        elif hk <= 0.0:
            out.append("curve-falls")
        elif not c:
            out.append("no-critical-constants")
        elif tk >= NEAR_CRITICAL * tck:
            out.append("near-critical-point")
        else:  # too dense a vapour, or an acentric factor no real substance has
            out.append("no-saturated-vapour")
    return out


def _num(v) -> float | None:
    v = float(v)
    return v if math.isfinite(v) else None


def _melting_point(table: Table, substance: str) -> tuple[float, float] | None:
    """The first reference melting point of ``substance`` as (Tm [K], its stated uncertainty
    [K], NaN where none), or None.
    """
    from .units import temperature_affine

    ref = table.references
    if not len(ref):
        return None
    rows = ref.loc[(ref["substance"] == substance) & (ref["quantity"] == "melting_point")]
    if not len(rows):
        return None
    u = rows["uncertainty"].iloc[0] if "uncertainty" in rows else None
    try:  # an uncertainty is a width: scaled by the unit, never offset
        width = abs(float(u)) * temperature_affine(str(rows["unit"].iloc[0]))[0]
    except (TypeError, ValueError):
        width = math.nan
    return float(rows["value_si"].iloc[0]), width


#: How far from the reference melting point [fraction of it] the stable phase the curves
#: give may be the other one before ``eval`` says they contradict it (common practice, not a
#: measurement: the triple point, where the curves meet, lies within a few tenths of a kelvin
#: of the normal melting point for most substances; the rest covers the curves' own scatter).
MELTING_ALLOWANCE = 0.01


def _against_melting_point(
    stable: str | None, phases, t: np.ndarray, melting: tuple[float, float] | None
) -> bool:
    """Whether the stable phase the curves give contradicts the reference melting point
    ``melting`` = (Tm [K], its uncertainty [K] or NaN): the solid at a temperature [K] well
    above Tm, or the liquid well below it (the temperatures ``t`` at which the stable
    phase's records were evaluated, their median).
    """
    if stable is None or melting is None:
        return False
    tm, u = melting
    at = t[(phases == stable) & np.isfinite(t)]
    if not at.size or not math.isfinite(tm):
        return False
    tol = max(MELTING_ALLOWANCE * tm, u if math.isfinite(u) else 0.0)
    mid = float(np.median(at))
    return mid > tm + tol if stable == "solid" else mid < tm - tol


def _stable_phase(phases, p, t, at_temperature: bool, in_range) -> str | None:
    """At a temperature the stable condensed phase has the lower vapour pressure; at a
    pressure it is the one that reaches it at the higher temperature. Records inside their
    range are preferred; the median of each phase's records is compared.
    """
    values = {}
    for ph in ("solid", "liquid"):
        m = phases == ph
        use = m & in_range if (m & in_range).any() else m
        v = (p if at_temperature else t)[use]
        v = v[np.isfinite(v)]
        if v.size:
            values[ph] = float(np.median(v))
    if len(values) < 2:
        return None
    if at_temperature:
        return min(values, key=values.get)
    return max(values, key=values.get)


def record_dict(table: Table, record_id: str) -> dict:
    """One record as a plain dict of its fields (numbers as floats, ``<field>_text`` beside
    each); an unknown id is an error that names a few valid ones.
    """
    check_records(table, [record_id])
    ids = table.records["id"].astype(object)
    rows = (ids == record_id).to_numpy().nonzero()[0]
    return record_at(table, int(rows[0]))


def record_at(table: Table, row: int) -> dict:
    """Record ``row`` of ``table`` as a plain dict (numbers as floats, empty cells as None,
    ``<field>_text`` beside each number).
    """
    return records_at(table, [row])[0]


def records_at(table: Table, rows) -> list[dict]:
    """:func:`record_at` for many rows at once (one take from the frame, not one per row)."""

    def plain(v):
        if v is None or v is pd.NA or (isinstance(v, float) and v != v):
            return None
        return v.item() if isinstance(v, np.generic) else v

    frame = table.records.iloc[np.asarray(list(rows), dtype=np.int64)]
    return [{k: plain(v) for k, v in d.items()} for d in frame.to_dict("records")]
