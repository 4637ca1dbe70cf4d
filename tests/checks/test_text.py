"""The number formatting of the checks' messages (vpaudit/checks/_text.py): a pressure or a
pressure ratio beyond a float's range is written from its logarithm, never as inf or 0; a
suggestion's confidence is never shown above what it is."""

import math

from hypothesis import given
from hypothesis import strategies as st

from vpaudit.checks._text import confidence, ln_ratio, pressure_at_ln


@given(st.floats(min_value=-1e6, max_value=1e6, allow_nan=False))
def test_a_pressure_from_its_logarithm_is_never_inf_or_zero(y):
    text = pressure_at_ln(y)
    assert text.endswith(" Pa") and "inf" not in text and "nan" not in text
    if abs(y) <= 700:
        assert math.isclose(float(text[:-3]), math.exp(y), rel_tol=1e-3)
    else:
        assert text.startswith("e^") and math.isclose(float(text[2:-3]), y, rel_tol=1e-3)
        assert text != "0 Pa"


@given(st.floats(min_value=-1e6, max_value=1e6, allow_nan=False))
def test_a_ratio_in_ln_p_names_a_finite_factor(d):
    text = ln_ratio(d)
    assert "inf" not in text and "nan" not in text
    assert text.startswith(f"{abs(d):.3g} in ln P")


def test_the_caller_s_own_pressure_is_written_as_given():
    # the value the caller computed is kept (its last digit must not move)
    assert pressure_at_ln(math.log(1234.5), 1234.5, 4) == "1234 Pa"
    assert pressure_at_ln(-893.0) == "e^-893 Pa"
    assert pressure_at_ln(float("nan")) == "n/a"


@given(st.floats(min_value=0.0, max_value=1.0))
def test_a_confidence_is_shown_rounded_down_to_two_decimals(c):
    shown = float(confidence(c))
    assert len(confidence(c)) == 4 and shown <= c + 1e-9 and c - shown < 0.01
    assert (shown >= 0.8) == (c >= 0.8) or abs(c - 0.8) < 1e-9


def test_a_fix_short_of_confident_never_reads_080():
    # Landolt's 126-84-1 drew its sign-of-C fix at 0.797, printed as 0.80 beside "Probably"
    assert confidence(0.797) == "0.79" and confidence(0.8) == "0.80"
    assert confidence(0.996) == "0.99" and confidence(1.0) == "1.00"
    assert confidence(0.29) == "0.29"  # 0.29 * 100 is 28.999999999999996 in floating point
