"""Units (vpaudit/units.py, vpaudit/constants.py): the conversion factors against their
published definitions, and the quantities typed with a unit suffix (property-based)."""

import math

import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from vpaudit import constants as vc
from vpaudit.errors import UnitError
from vpaudit.units import (
    ENTHALPY_UNITS,
    PRESSURE_UNITS,
    from_kelvin,
    parse_enthalpy,
    parse_pressure,
    parse_quantity,
    parse_temperature,
    pressure_factor,
    to_kelvin,
)


def test_constants_equal_scipy_codata_values():
    """vpaudit writes its exact SI constants out (no scipy import at start-up); each must
    equal scipy.constants (CODATA 2018; all these are exact by definition)."""
    assert vc.R == sc.R
    assert vc.ATM == sc.atm and vc.BAR == sc.bar and vc.TORR == sc.torr
    assert vc.PSI == pytest.approx(sc.psi, rel=1e-15)
    assert vc.ZERO_CELSIUS == sc.zero_Celsius and vc.CALORIE == sc.calorie


#: Each pressure unit in pascal, from outside the project: scipy.constants (exact SI
#: definitions) and, for the conventional millimetre of mercury, NIST SP 811 (2008),
#: Appendix B.8: 1 mmHg = 133.322 387 415 Pa (1.4e-7 above the torr, 101325/760 Pa).
PUBLISHED_PA = {
    "Pa": 1.0,
    "kPa": sc.kilo,
    "MPa": sc.mega,
    "bar": sc.bar,
    "mbar": sc.bar * sc.milli,
    "atm": sc.atm,
    "Torr": sc.torr,
    "mmHg": 133.322387415,
    "psi": sc.psi,
}


def test_every_pressure_unit_has_its_published_value():
    assert set(PRESSURE_UNITS) == set(PUBLISHED_PA)
    for unit, pa in PUBLISHED_PA.items():
        assert pressure_factor(unit) == pytest.approx(pa, rel=1e-15), unit


def test_temperature_scales_meet_their_fixed_points():
    """degC: T = t + 273.15 K exactly (SI Brochure, 9th ed., 2.3.1); degF: 32 degF and 212
    degF are 273.15 K and 373.15 K, and -40 degF is -40 degC (definition of the scale)."""
    assert to_kelvin(0.0, "degC") == 273.15
    assert to_kelvin(32.0, "degF") == pytest.approx(273.15, abs=1e-12)
    assert to_kelvin(212.0, "degF") == pytest.approx(373.15, abs=1e-12)
    assert to_kelvin(-40.0, "degF") == pytest.approx(to_kelvin(-40.0, "degC"), abs=1e-12)


def test_the_thermochemical_calorie():
    """1 kcal/mol = 4184 J/mol exactly (thermochemical calorie; scipy.constants.calorie)."""
    assert ENTHALPY_UNITS["kcal/mol"] == 1000.0 * sc.calorie == 4184.0
    assert parse_enthalpy("12.47kJ/mol") == pytest.approx(12470.0, rel=1e-15)


@settings(max_examples=50, deadline=None)
@given(t=st.floats(1e-3, 1e5), unit=st.sampled_from(["K", "degC", "degF"]))
def test_temperature_units_round_trip(t, unit):
    assert to_kelvin(from_kelvin(t, unit), unit) == pytest.approx(t, rel=1e-13, abs=1e-9)


def test_quantities_with_unit_suffixes():
    # degC to K is exact by definition (+273.15); 1 Torr = 101325/760 Pa (exact)
    assert parse_temperature("926.85degC") == pytest.approx(1200.0, abs=1e-9)
    assert parse_temperature("1200") == 1200.0
    assert parse_pressure("0.01Torr") == pytest.approx(101325 / 760 / 100, rel=1e-15)
    assert parse_pressure("1 bar") == 1e5
    with pytest.raises(UnitError, match="positive"):
        parse_temperature("-300degC")
    # the option that reads an enthalpy names no particular phase change in its refusal
    with pytest.raises(UnitError, match="an enthalpy of a phase change must be positive"):
        parse_enthalpy("-6.0kJ/mol")


@settings(max_examples=200, deadline=None)
@given(
    x=st.floats(1e-300, 1e300, allow_nan=False, allow_infinity=False),
    unit=st.sampled_from(sorted(PRESSURE_UNITS)),
    space=st.sampled_from(["", " "]),
)
def test_a_typed_pressure_reads_back_exactly(x, unit, space):
    """Any positive float as Python writes it, with or without a space before the unit,
    reads back as that float times the unit's factor (refused where that overflows)."""
    text = f"{x!r}{space}{unit}"
    assert parse_quantity(text, "Pa", PRESSURE_UNITS) == (x, unit)
    pa = x * PRESSURE_UNITS[unit]
    if math.isfinite(pa):
        assert parse_pressure(text) == pa
    else:  # 1e300 MPa: no float holds it in Pa, and it is refused, not read as infinity
        with pytest.raises(UnitError, match="beyond any pressure"):
            parse_pressure(text)


@pytest.mark.parametrize(
    ("text", "hint"),
    [("1200°C", "degC"), ("5 hPa", "mbar"), ("1 torr", "Torr"), ("3 kelvin", "K")],
)
def test_a_unit_spelled_otherwise_names_vpaudit_spelling(text, hint):
    """A unit spelled as people type it is refused with the spelling vpaudit uses (never
    silently rewritten)."""
    parse = parse_temperature if hint in ("degC", "K") else parse_pressure
    with pytest.raises(UnitError, match=f"did you mean {hint}"):
        parse(text)
