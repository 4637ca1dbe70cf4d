"""Exact conversion of a record to another log base, pressure unit or temperature unit.

Every conversion here is exact algebra (a change of log base, pressure unit or
temperature scale is an affine change of the coefficients): a converted record
reproduces the original ln P to rounding error. A conversion that would need a refit (a
log-linear record in degC, another form) is refused with :class:`~vpaudit.errors.EquationError`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from ..errors import EquationError
from ..units import pressure_factor, temperature_affine
from .families import FAMILIES
from .forms import COEFFICIENTS, form_spec

__all__ = ["convert_record", "to_canonical_record"]

_LN = {"e": 1.0, "10": math.log(10.0)}


def _num(rec: Mapping[str, Any], key: str) -> float | None:
    v = rec.get(key)
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return None
    return float(v)


def convert_record(
    record: Mapping[str, Any],
    *,
    log_base: str | None = None,
    pressure_unit: str | None = None,
    temperature_unit: str | None = None,
) -> dict[str, Any]:
    """Return a copy of ``record`` written in another base and units, exactly.

    Parameters
    ----------
    record : mapping
        A record with the table's fields (``form``, ``log_base``, ``A`` ...).
    log_base : {'e', '10'}, optional
        Target base of log P (and of log T in the log-linear forms).
    pressure_unit : str, optional
        Target pressure unit.
    temperature_unit : str, optional
        Target temperature unit; only the Antoine form may change it.

    Returns
    -------
    dict
        The converted record; ``<field>_text`` of every changed number is its shortest text
        free of rounding noise (:func:`tidy_text`), and
        ``note`` says what was converted.

    Raises
    ------
    EquationError
        If the conversion cannot be exact.

    Notes
    -----
    Base b1 to b2 multiplies every coefficient but the log T one by ln b1 / ln b2 (the log T
    coefficient C of the log-linear forms is unchanged, since ln b * C * log_b T = C ln T; the
    Antoine C is a temperature and is unchanged too). A pressure unit change adds
    log_b(f1/f2) to the constant term (Wagner: converts Pc). An Antoine temperature unit
    change theta1 = alpha theta2 + beta gives B2 = B/alpha and C2 = (C + beta)/alpha.
    """
    spec = form_spec(str(record["form"]))
    out = dict(record)
    coef = {c: _num(record, c) for c in COEFFICIENTS}
    b1 = str(record["log_base"])
    b2 = b1 if log_base is None else str(log_base)
    u1 = str(record["pressure_unit"])
    u2 = u1 if pressure_unit is None else str(pressure_unit)
    v1 = str(record.get("temperature_unit") or "K")
    v2 = v1 if temperature_unit is None else str(temperature_unit)
    if b2 not in _LN:
        raise EquationError(f"unknown log base {b2!r}; valid: e, 10")
    if v2 not in spec.temperature_units:
        raise EquationError(
            f"form {spec.name!r} cannot be written in {v2}: it needs an absolute temperature "
            "(an exact conversion is impossible; refit instead)"
        )
    k = _LN[b1] / _LN[b2]
    f_ratio = pressure_factor(u1) / pressure_factor(u2)
    changed: list[str] = []
    family = FAMILIES[spec.family]
    for c in family.LOG_SCALED:
        if coef[c] is not None and k != 1.0:
            coef[c] *= k
    if f_ratio != 1.0:
        if family.UNIT_IN_A:
            coef["A"] += math.log(f_ratio) / _LN[b2]  # type: ignore[operator]
        else:  # Wagner: log_b(P/Pc) = (Tc/T) S(tau), the unit is Pc's
            out["p_crit"] = float(record["p_crit"]) * f_ratio
            changed.append("p_crit")
    if family.AFFINE_T and v2 != v1:
        s1, o1 = temperature_affine(v1)
        s2, o2 = temperature_affine(v2)
        alpha, beta = s2 / s1, (o2 - o1) / s1
        coef["B"] = coef["B"] / alpha  # type: ignore[operator]
        coef["C"] = (coef["C"] + beta) / alpha  # type: ignore[operator]
        for key in ("t_min", "t_max", "t_crit"):
            v = _num(record, key)
            if v is not None:
                out[key] = (v - beta) / alpha
                changed.append(key)
    for c in COEFFICIENTS:
        if coef[c] is not None and coef[c] != _num(record, c):
            out[c] = coef[c]
            changed.append(c)
    for key in changed:
        out[key + "_text"] = tidy_text(float(out[key]))
        out[key] = float(out[key + "_text"])
    out["log_base"], out["pressure_unit"], out["temperature_unit"] = b2, u2, v2
    if (b2, u2, v2) != (b1, u1, v1):
        note = f"converted exactly from log_base {b1}, {u1}, {v1}"
        out["note"] = f"{record['note']}; {note}" if record.get("note") else note
    return out


def tidy_text(value: float, ulps: int = 4) -> str:
    """The shortest decimal text within ``ulps`` units in the last place of ``value``.

    An exact conversion done in floating point carries a few ulps of rounding: C + 273.15
    for 207.413914 gives 480.56391399999995, one ulp from 480.563914, the number a person
    would have typed. The text keeps every digit the conversion determines and none of its
    rounding noise (a relative change below 1e-15, far inside the 1e-12 that a round trip
    must reproduce).
    """
    if not math.isfinite(value) or value == 0.0:
        return repr(value)
    tolerance = ulps * math.ulp(value)
    for digits in range(1, 18):
        text = f"{value:.{digits}g}"
        if abs(float(text) - value) <= tolerance:
            return repr(float(text))
    return repr(value)


def to_canonical_record(record: Mapping[str, Any]) -> dict[str, Any]:
    """Return ``record`` in vpaudit's canonical convention: base e, pascal, kelvin."""
    return convert_record(record, log_base="e", pressure_unit="Pa", temperature_unit="K")
