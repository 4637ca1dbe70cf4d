"""Pressure, temperature and other units, and quantities written with a unit suffix.

Canonical units inside vpaudit are kelvin, pascal, J/mol, J/(mol K) and kg/mol; units are
converted only at the edges (readers, command options, reporters).

Notes
-----
Pressure factors are exact by definition (:mod:`vpaudit.constants`, tested against
:mod:`scipy.constants`). The conventional millimetre of mercury is kept distinct from the torr:
1 mmHg = 133.322387415 Pa (NIST SP 811, Appendix B.8), which is 1.4e-7 relative above
1 Torr = 101325/760 Pa (scipy's ``mmHg`` constant equals its ``torr``).
"""

from __future__ import annotations

import re
from typing import Final

import numpy as np

from .constants import ATM, BAR, CALORIE, PSI, TORR, ZERO_CELSIUS
from .errors import UnitError

__all__ = [
    "PRESSURE_UNITS",
    "TEMPERATURE_UNITS",
    "ENTHALPY_UNITS",
    "MOLAR_MASS_UNITS",
    "ENTROPY_UNITS",
    "MMHG_PA",
    "QUANTITY_UNITS",
    "parse_enthalpy",
    "pressure_factor",
    "to_kelvin",
    "from_kelvin",
    "temperature_affine",
    "parse_quantity",
    "parse_temperature",
    "parse_pressure",
]

#: Conventional millimetre of mercury in pascal (NIST SP 811, Appendix B.8).
MMHG_PA: Final[float] = 133.322387415

#: Pressure units accepted in tables and options, with their value in pascal.
PRESSURE_UNITS: Final[dict[str, float]] = {
    "Pa": 1.0,
    "kPa": 1e3,
    "MPa": 1e6,
    "bar": BAR,
    "mbar": BAR / 1000.0,
    "atm": ATM,
    "Torr": TORR,
    "mmHg": MMHG_PA,
    "psi": PSI,
}

#: Temperature units: (scale, offset) with T[K] = scale * theta + offset.
TEMPERATURE_UNITS: Final[dict[str, tuple[float, float]]] = {
    "K": (1.0, 0.0),
    "degC": (1.0, ZERO_CELSIUS),
    "degF": (5.0 / 9.0, ZERO_CELSIUS - 32.0 * 5.0 / 9.0),
}

#: Enthalpy units in J/mol (thermochemical calorie, 4.184 J exactly).
ENTHALPY_UNITS: Final[dict[str, float]] = {
    "J/mol": 1.0,
    "kJ/mol": 1000.0,
    "cal/mol": CALORIE,
    "kcal/mol": 1000.0 * CALORIE,
}

#: Molar-entropy units in J/(mol K) (thermochemical calorie).
ENTROPY_UNITS: Final[dict[str, float]] = {
    "J/(mol K)": 1.0,
    "cal/(mol K)": CALORIE,
}

#: Molar-mass units in kg/mol.
MOLAR_MASS_UNITS: Final[dict[str, float]] = {"g/mol": 1e-3, "kg/mol": 1.0}

_REFERENCE_T_UNITS = ("K", "degC")
#: Accepted units per quantity, with their kind (``temperature``, ``pressure``, ...).
QUANTITY_UNITS: Final[dict[str, tuple[str, tuple[str, ...]]]] = {
    "melting_point": ("temperature", _REFERENCE_T_UNITS),
    "triple_point_temperature": ("temperature", _REFERENCE_T_UNITS),
    "normal_boiling_point": ("temperature", _REFERENCE_T_UNITS),
    "critical_temperature": ("temperature", _REFERENCE_T_UNITS),
    "triple_point_pressure": ("pressure", tuple(PRESSURE_UNITS)),
    "critical_pressure": ("pressure", tuple(PRESSURE_UNITS)),
    "enthalpy_of_fusion": ("enthalpy", tuple(ENTHALPY_UNITS)),
    "enthalpy_of_vaporization": ("enthalpy", tuple(ENTHALPY_UNITS)),
    "enthalpy_of_sublimation": ("enthalpy", tuple(ENTHALPY_UNITS)),
    "molar_mass": ("molar_mass", tuple(MOLAR_MASS_UNITS)),
    # the standard (298.15 K, 1 bar) changes of the phase change to the ideal gas, from
    # standard thermochemical tables (formation enthalpies and standard entropies)
    "standard_enthalpy_of_vaporization": ("enthalpy", tuple(ENTHALPY_UNITS)),
    "standard_enthalpy_of_sublimation": ("enthalpy", tuple(ENTHALPY_UNITS)),
    "standard_entropy_of_vaporization": ("entropy", tuple(ENTROPY_UNITS)),
    "standard_entropy_of_sublimation": ("entropy", tuple(ENTROPY_UNITS)),
}


#: What people type for a unit vpaudit spells otherwise (a hint, never a silent rewrite).
_SPELLED = {
    "°C": "degC",
    "C": "degC",
    "°F": "degF",
    "F": "degF",
    "°K": "K",
    "hPa": "mbar (1 hPa = 1 mbar = 100 Pa)",
    "mmhg": "mmHg",
    "torr": "Torr",
    "j/mol": "J/mol",
    "kj/mol": "kJ/mol",
    "kelvin": "K",
    "celsius": "degC",
    "fahrenheit": "degF",
    "pascal": "Pa",
}


def _unknown(kind: str, unit: str, valid: dict) -> UnitError:
    """An unknown unit, with the likely intended one when there is one."""
    hint = (
        _SPELLED.get(unit)
        or _SPELLED.get(unit.lower())
        or next((name for name in valid if name.lower() == unit.lower()), None)
    )
    what = f"unknown {kind} unit" if kind else "unknown unit"
    did = f" (did you mean {hint}?)" if hint else ""
    return UnitError(f"{what} {unit!r}{did}; valid units: {', '.join(valid)}")


def pressure_factor(unit: str) -> float:
    """Return the value of one ``unit`` of pressure in pascal.

    Parameters
    ----------
    unit : str
        One of :data:`PRESSURE_UNITS`.

    Returns
    -------
    float
        Pascal per unit. [Pa]

    Raises
    ------
    UnitError
        If the unit is unknown; the message lists the valid units.
    """
    try:
        return PRESSURE_UNITS[unit]
    except KeyError:
        raise _unknown("pressure", unit, PRESSURE_UNITS) from None


def temperature_affine(unit: str) -> tuple[float, float]:
    """Return ``(scale, offset)`` such that T[K] = scale * theta + offset.

    Parameters
    ----------
    unit : str
        ``K``, ``degC`` or ``degF``.
    """
    try:
        return TEMPERATURE_UNITS[unit]
    except KeyError:
        raise _unknown("temperature", unit, TEMPERATURE_UNITS) from None


def to_kelvin(value, unit: str):
    """Convert temperatures in ``unit`` to kelvin (scalar or array). [K]"""
    scale, offset = temperature_affine(unit)
    return (
        np.asarray(value, dtype=float) * scale + offset
        if np.ndim(value)
        else (float(value) * scale + offset)
    )


def from_kelvin(value, unit: str):
    """Convert temperatures in kelvin to ``unit`` (scalar or array)."""
    scale, offset = temperature_affine(unit)
    return (
        (np.asarray(value, dtype=float) - offset) / scale
        if np.ndim(value)
        else ((float(value) - offset) / scale)
    )


_QUANTITY = re.compile(
    r"^\s*([+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)\s*([^\s0-9.+-][^\s]*)?\s*$"
)


def parse_quantity(text: str, default_unit: str, units: dict[str, object]) -> tuple[float, str]:
    """Split a quantity such as ``1200K`` or ``0.01 Torr`` into its number and unit.

    Parameters
    ----------
    text : str
        The number (vpaudit's strict grammar) followed by an optional unit suffix.
    default_unit : str
        Unit of a bare number.
    units : dict
        The accepted unit names.

    Returns
    -------
    tuple of (float, str)
        The number as written and its unit.
    """
    m = _QUANTITY.match(text)
    if not m:
        raise UnitError(
            f"cannot read {text!r} as a quantity: write a number and a unit, e.g. "
            f"'1200K' or '0.01Torr'"
        )
    from .readers.grammar import NumberSyntaxError, parse_number

    try:  # the table's own grammar: no overflow, no subnormal, no NaN
        value = parse_number(m.group(1))
    except NumberSyntaxError as exc:
        raise UnitError(f"cannot read {text!r}: {exc}") from None
    unit = m.group(2) or default_unit
    if unit not in units:
        raise _unknown("", unit, units)
    return value, unit


def parse_temperature(text: str) -> float:
    """Parse ``1200K``, ``926.85degC`` or ``2000degF`` (bare numbers are K) into kelvin.

    Raises
    ------
    UnitError
        If the text does not parse or the result is not a positive absolute temperature.
    """
    value, unit = parse_quantity(text, "K", TEMPERATURE_UNITS)
    kelvin = to_kelvin(value, unit)
    if kelvin <= 0:
        raise UnitError(f"{text!r} is {kelvin:g} K: an absolute temperature must be positive")
    return kelvin


def parse_enthalpy(text: str) -> float:
    """Parse ``12.47kJ/mol`` or ``12470`` (bare numbers are J/mol) into J/mol.

    Raises
    ------
    UnitError
        If the text does not parse, or the enthalpy is not positive or not finite in J/mol.
    """
    value, unit = parse_quantity(text, "J/mol", ENTHALPY_UNITS)
    if value <= 0:
        raise UnitError(f"{text!r}: an enthalpy of a phase change must be positive")
    j = value * ENTHALPY_UNITS[unit]
    if not np.isfinite(j):
        raise UnitError(f"{text!r} is beyond any enthalpy a float can hold in J/mol")
    return j


def parse_pressure(text: str) -> float:
    """Parse ``1Pa``, ``0.01Torr`` or ``2.5bar`` (bare numbers are Pa) into pascal.

    Raises
    ------
    UnitError
        If the text does not parse, or the pressure is not positive or not finite in Pa.
    """
    value, unit = parse_quantity(text, "Pa", PRESSURE_UNITS)
    if value <= 0:
        raise UnitError(f"{text!r}: a vapour pressure must be positive")
    pa = value * pressure_factor(unit)
    if not np.isfinite(pa):
        raise UnitError(f"{text!r} is beyond any pressure a float can hold in Pa")
    return pa
