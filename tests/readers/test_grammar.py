"""The strict number grammar: never a value different from what was written."""

import math
import re

import numpy as np
import pytest
from hypothesis import example, given
from hypothesis import strategies as st

from vpaudit.readers.grammar import (
    NumberSyntaxError,
    normalize_typography,
    parse_number,
    parse_number_column,
)


@pytest.mark.parametrize(
    "text, value",
    [
        ("1.5", 1.5),
        ("-1234.5", -1234.5),
        ("+2", 2.0),
        (".5", 0.5),
        ("5.", 5.0),
        ("1e3", 1000.0),
        ("1.0E+03", 1000.0),
        ("  7.25\t", 7.25),
        ("-0", -0.0),
        ("00012", 12.0),
        ("2.2250738585072014e-308", 2.2250738585072014e-308),
    ],
)
def test_accepts_the_grammar(text, value):
    assert parse_number(text) == value


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("\u22121234.5", "U+2212 MINUS SIGN"),
        ("12,5", "decimal commas"),
        ("1.23D+04", "Fortran exponent"),
        ("1\u00a0234", "U+00A0 NO-BREAK SPACE"),
        ("1\u2009234", "U+2009 THIN SPACE"),
        ("inf", "not a finite number"),
        ("-Infinity", "not a finite number"),
        ("nan", "stands for a missing value"),
        ("N/A", "stands for a missing value"),
        (" - ", "stands for a missing value"),
        ("nan1", "U+006E"),  # not a placeholder: the first character that is not read
        ("1_000", "digit separators"),
        ("\u0661\u0662", "ARABIC-INDIC DIGIT ONE"),
        ("1.2.3", "not a number"),
        ("--1", "not a number"),
        ("1e", "not a number"),
        ("", "empty"),
        ("1e400", "overflows"),
        ("1e-400", "underflows to zero"),
        ("4.9e-324", "underflows"),
        ("0x1A", "U+0078"),
    ],
)
def test_rejects_everything_else_with_the_reason(text, fragment):
    with pytest.raises(NumberSyntaxError, match=re.escape(fragment)):
        parse_number(text)


def test_zero_is_not_underflow():
    assert parse_number("0.000e-400") == 0.0


@given(st.floats(allow_nan=False, allow_infinity=False))
@example(5e-324)
@example(1.7976931348623157e308)
def test_repr_round_trips_exactly(x):
    text = repr(x)
    if x != 0 and abs(x) < 2.2250738585072014e-308:
        with pytest.raises(NumberSyntaxError):
            parse_number(text)
    else:
        assert parse_number(text) == x
        values, missing, invalid = parse_number_column([text])
        assert not invalid[0] and not missing[0]
        assert values[0] == x


@given(st.text(max_size=30))
@example("1e99999")
@example("\u0664")
def test_arbitrary_text_never_parses_to_an_altered_or_non_finite_value(text):
    try:
        value = parse_number(text)
    except NumberSyntaxError:
        value = None
    values, missing, invalid = parse_number_column([text])
    if value is None:
        assert invalid[0] or missing[0]
        assert np.isnan(values[0])
    else:
        assert math.isfinite(value)
        assert value == float(text.strip(" \t"))
        assert values[0] == value and not invalid[0]


def test_column_path_agrees_with_the_scalar_path():
    cells = ["1.5", "-2e3", None, "", "  ", "\u22121", "1e400", "abc", "3."]
    values, missing, invalid = parse_number_column(cells)
    assert list(missing) == [False, False, True, True, True, False, False, False, False]
    assert list(invalid) == [False, False, False, False, False, True, True, True, False]
    assert values[0] == 1.5 and values[1] == -2000.0 and values[8] == 3.0


@pytest.mark.parametrize(
    "text, expected",
    [
        ("\u22121234.5", "-1234.5"),
        ("\u20131.5", "-1.5"),
        ("1\u2009234.5", "1234.5"),
        ("1.23D+04", "1.23e+04"),
        ("1.5\u00d710\u207b\u00b3", "1.5e-3"),
        ("2.0x10^-5", "2.0e-5"),
    ],
)
def test_opt_in_normalisation_rewrites_look_alikes_and_says_so(text, expected):
    new, rewrites = normalize_typography(text)
    assert new == expected
    assert rewrites
    assert parse_number(new) == float(expected)


def test_normalisation_never_touches_decimal_commas():
    new, rewrites = normalize_typography("12,5")
    assert new == "12,5" and not rewrites


def test_fast_column_path_rejects_what_the_cast_alone_would_accept():
    # pyarrow's string-to-double cast takes these; the grammar does not (or they overflow)
    cells = ["1.5", "inf", "NaN", "Infinity", "-inf", "1e400", "1e-400", "4.9e-324", "0.0", ""]
    values, missing, invalid = parse_number_column(cells)
    assert list(invalid) == [False, True, True, True, True, True, True, True, False, False]
    assert list(missing) == [False] * 9 + [True]
    assert values[0] == 1.5 and values[8] == 0.0 and np.isnan(values[1:8]).all()


@given(
    st.lists(
        st.one_of(
            st.floats(allow_nan=False, allow_infinity=False).map(repr),
            st.sampled_from(["", "inf", "nan", "1e400", "+.5", "1."]),
        ),
        max_size=20,
    )
)
def test_column_path_equals_scalar_path_cell_by_cell(cells):
    values, missing, invalid = parse_number_column(cells)
    for cell, v, m, bad in zip(cells, values, missing, invalid, strict=True):
        if cell == "":
            assert m
            continue
        try:
            expected = parse_number(cell)
        except NumberSyntaxError:
            assert bad
        else:
            assert not bad and v == expected


_SUP = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")


@given(
    mantissa=st.integers(min_value=1, max_value=999),
    exponent=st.integers(min_value=-30, max_value=30),
    sign=st.sampled_from(["×", "x", "·", "*"]),
    marker=st.sampled_from(["^", "**", "superscript"]),
)
@example(mantissa=3, exponent=0, sign="x", marker="^")
def test_a_marked_power_of_ten_is_rewritten_to_its_exact_value(mantissa, exponent, sign, marker):
    power = str(exponent).translate(_SUP) if marker == "superscript" else f"{marker}{exponent}"
    new, rewrites = normalize_typography(f"{mantissa}{sign}10{power}")
    assert rewrites and parse_number(new) == float(f"{mantissa}e{exponent}")


@pytest.mark.parametrize("text", ["3x100", "3x1000", "2×105", "3x10", "1.5·1012"])
def test_an_unmarked_power_of_ten_is_left_for_the_reader_to_refuse(text):
    # "3x100" was rewritten to 3 (3e0), not 300: without ^, ** or superscript digits the
    # exponent cannot be told from the digits of a factor
    new, rewrites = normalize_typography(text)
    assert new == text and not rewrites
    with pytest.raises(NumberSyntaxError):
        parse_number(new)
