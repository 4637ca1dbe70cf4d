"""The one strict number grammar used for every numeric cell in every format.

A number is written as::

    [+|-] digits [. [digits]] [(e|E) [+|-] digits]      or      [+|-] . digits [...]

with ASCII characters only. Leading and trailing ASCII spaces and tabs are ignored (they
cannot change the value). Everything else -- the Unicode minus sign, decimal commas,
digit-group spaces, Fortran ``D`` exponents, ``inf``, ``nan``, underscores, non-ASCII
digits -- is an error that names the offending character. Values that overflow to
infinity or underflow below the smallest normal double are errors too, so a parsed number
is always the correctly rounded double of exactly what was written.

:func:`normalize_typography` is the explicit opt-in that rewrites the usual look-alikes
found in text copied from PDF files, and returns each rewrite so it can be logged.
"""

from __future__ import annotations

import math
import re
import sys
import unicodedata

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc

__all__ = [
    "NUMBER_PATTERN",
    "NumberSyntaxError",
    "parse_number",
    "parse_number_column",
    "parse_number_texts",
    "normalize_typography",
]

#: The grammar as a regular expression (no nested quantifiers: linear time).
NUMBER_PATTERN = r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?"
_NUMBER = re.compile(NUMBER_PATTERN)
_ANCHORED = "^[ \t]*" + NUMBER_PATTERN + "[ \t]*$"
_ALLOWED = set("0123456789+-.eE \t")
_SMALLEST_NORMAL = sys.float_info.min
#: A zero as written: no digit but 0 in the mantissa (an exponent changes nothing).
_ZERO_LITERAL = r"^[+-]?(0+\.?0*|\.0+)([eE][+-]?[0-9]+)?$"

_HINTS = {
    "\u2212": "use '-'",
    "\u2013": "use '-'",
    "\u2012": "use '-'",
    "\u2010": "use '-'",
    "\u2011": "use '-'",
    ",": "decimal commas are not read; use '.' as the decimal point and no digit grouping",
    "\u00a0": "remove the space (digit grouping is not read)",
    "\u2009": "remove the space (digit grouping is not read)",
    "\u202f": "remove the space (digit grouping is not read)",
    "D": "a Fortran exponent: write 'E' instead of 'D'",
    "d": "a Fortran exponent: write 'e' instead of 'd'",
    "\u00d7": "write the power of ten as an exponent, e.g. '1.5e-3'",
    "_": "digit separators are not read",
}
_NORMALIZE_TYPOGRAPHY_HINT = " (or pass --normalize-typography to rewrite PDF look-alikes)"


#: What spreadsheets and exports write for a missing value (compared without case).
_MISSING = frozenset(
    {"nan", "na", "n/a", "n.a.", "#n/a", "null", "none", "missing", "-", "--", "\u2014", "?"}
)
#: What they write for an infinite one.
_INFINITE = frozenset({"inf", "+inf", "-inf", "infinity", "+infinity", "-infinity", "\u221e"})


class NumberSyntaxError(ValueError):
    """A cell that is not a number in vpaudit's grammar; the message says why."""


def _char_name(ch: str) -> str:
    name = unicodedata.name(ch, None)
    code = f"U+{ord(ch):04X}"
    return f"{code} {name}" if name else code


def explain(text: str) -> str:
    """Return a one-sentence reason why ``text`` is not a number in the grammar."""
    stripped = text.strip(" \t")
    if stripped == "":
        return "empty value where a number is required"
    if stripped.casefold() in _MISSING:
        return f"{text!r} stands for a missing value, which is an empty cell here"
    if stripped.casefold() in _INFINITE:
        return f"{text!r} is not a finite number: only finite values are read"
    for ch in stripped:
        if ch not in _ALLOWED:
            hint = _HINTS.get(ch, "only ASCII digits, sign, '.', and 'e'/'E' are read")
            if ch in "\u2212\u2013\u2009\u00a0\u202fDd\u00d7":
                hint += _NORMALIZE_TYPOGRAPHY_HINT
            return f"unexpected {_char_name(ch)} in {text!r}; {hint}"
    return (
        f"{text!r} is not a number: expected [sign]digits[.digits][e[sign]digits], "
        "e.g. -1234.5 or 1.2e-3"
    )


def _range_problem(text: str, value: float) -> str | None:
    if math.isinf(value):
        return f"{text!r} overflows: it is beyond the largest double (about 1.8e308)"
    if value == 0.0:
        mantissa = re.split(r"[eE]", text.strip(" \t"))[0]
        if any(c in "123456789" for c in mantissa):
            return f"{text!r} underflows to zero: it is below the smallest double"
    elif abs(value) < _SMALLEST_NORMAL:
        return f"{text!r} underflows: below 2.2e-308 a double loses digits"
    return None


def parse_number(text: str) -> float:
    """Parse one cell by the strict grammar.

    Parameters
    ----------
    text : str
        The cell as written.

    Returns
    -------
    float
        The correctly rounded double of the decimal number written.

    Raises
    ------
    NumberSyntaxError
        If the text is not a number in the grammar, or overflows or underflows; the message
        names the first offending character by its Unicode name.
    """
    if not isinstance(text, str):
        raise NumberSyntaxError(f"expected a number written as text, got {type(text).__name__}")
    stripped = text.strip(" \t")
    if not _NUMBER.fullmatch(stripped):
        raise NumberSyntaxError(explain(text))
    value = float(stripped)
    problem = _range_problem(text, value)
    if problem:
        raise NumberSyntaxError(problem)
    return value


def parse_number_column(values) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Parse a whole column of cells at once by the same grammar as :func:`parse_number`.

    Parameters
    ----------
    values : sequence of str or None, or a pyarrow string array
        The cells as written; ``None`` or an empty (or all-space) string is a missing value.

    Returns
    -------
    values : ndarray of float
        The parsed numbers, NaN where missing or invalid.
    missing : ndarray of bool
        True where the cell was empty.
    invalid : ndarray of bool
        True where the cell is not a number in the grammar, or overflows or underflows.
        :func:`parse_number` on such a cell raises with the reason.
    """
    out, missing, invalid, _ = parse_number_texts(values)
    return out, missing, invalid


def _parse_fast(arr):
    """The common case in one pass: pyarrow's string-to-double cast accepts exactly this
    grammar plus the words inf, nan and infinity (which give non-finite values and are
    re-checked here one by one). Returns None when any cell needs the full path (the cast
    fails on it: a space, a comma, a Unicode minus, ...); a test compares both paths.
    """
    blank = pc.fill_null(pc.equal(arr, ""), True)
    # the common column has no empty cell: then it is used as it is, without a copy
    cleaned = pc.if_else(blank, pa.scalar(None, pa.string()), arr) if pc.any(blank).as_py() else arr
    try:
        cast = pc.cast(cleaned, pa.float64())
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
        return None
    out = cast.to_numpy(zero_copy_only=False).astype(float, copy=True)
    missing_np = blank.to_numpy(zero_copy_only=False).astype(bool)
    invalid = np.zeros(out.size, dtype=bool)
    with np.errstate(invalid="ignore"):
        suspicious = ~missing_np & (~np.isfinite(out) | (np.abs(out) < _SMALLEST_NORMAL))
    zeros = np.flatnonzero(suspicious & (out == 0.0))
    if zeros.size:  # a zero written as one ("0", "0.0", "-0e5") is no underflow
        literal = pc.match_substring_regex(cleaned.take(pa.array(zeros)), _ZERO_LITERAL)
        suspicious[zeros[literal.to_numpy(zero_copy_only=False).astype(bool)]] = False
    for i in np.flatnonzero(suspicious):
        try:
            out[i] = parse_number(cleaned[int(i)].as_py())
        except NumberSyntaxError:
            invalid[i] = True
    out[invalid | missing_np] = np.nan
    return out, missing_np, invalid, cleaned


def parse_number_texts(values):
    """:func:`parse_number_column`, plus the trimmed text of each cell (an Arrow string
    array, null where missing).
    """
    arr = (
        values
        if isinstance(values, pa.Array | pa.ChunkedArray)
        else pa.array(values, type=pa.string())
    )
    fast = _parse_fast(arr)
    if fast is not None:
        return fast
    spaced = pc.any(pc.or_(pc.match_substring(arr, " "), pc.match_substring(arr, "\t")))
    trimmed = pc.utf8_trim(arr, characters=" \t") if spaced.as_py() else arr
    missing = pc.fill_null(pc.equal(pc.utf8_length(trimmed), 0), True)
    matches = pc.fill_null(pc.match_substring_regex(trimmed, _ANCHORED), False)
    good = pc.and_(matches, pc.invert(missing))
    as_float = pc.cast(pc.if_else(good, trimmed, pa.scalar("nan", pa.string())), pa.float64())
    out = as_float.to_numpy(zero_copy_only=False).astype(float, copy=True)
    missing_np = missing.to_numpy(zero_copy_only=False).astype(bool)
    good_np = good.to_numpy(zero_copy_only=False).astype(bool)
    invalid = ~missing_np & ~good_np
    # Range problems: overflow to inf, underflow to zero or to a subnormal.
    with np.errstate(invalid="ignore"):
        suspicious = good_np & (np.isinf(out) | (np.abs(out) < _SMALLEST_NORMAL))
    for i in np.flatnonzero(suspicious):
        if _range_problem(trimmed[int(i)].as_py(), out[i]) is not None:
            invalid[i] = True
    out[invalid | missing_np] = np.nan
    texts = pc.if_else(missing, pa.scalar(None, pa.string()), trimmed)
    return out, missing_np, invalid, texts


_MINUS_LIKE = "\u2212\u2013\u2012\u2010\u2011\ufe63\uff0d"
_SPACE_LIKE = "\u00a0\u2009\u202f\u2007\u200a\u2008\u2002\u2003\u2004\u2005\u2006"
_SUPERSCRIPT = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")
# the exponent must be marked (^, ** or superscript digits): "3x100" is 3 x 100 or a lost
# superscript, and is left for the reader to refuse rather than guessed
_TIMES_TEN = re.compile(
    r"^(?P<m>[+-]?[0-9.]+)\s*[×x·*]\s*10"
    r"(?:(?:\^|\*\*)(?P<e>[-+]?[0-9]+)|(?P<s>[⁺⁻]?[⁰¹²³⁴⁵⁶⁷⁸⁹]+))$"
)
_FORTRAN = re.compile(r"^(?P<m>[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+))[dD](?P<e>[+-]?[0-9]+)$")


def normalize_typography(text: str) -> tuple[str, list[str]]:
    """Rewrite the usual PDF look-alikes of a number into the grammar (explicit opt-in).

    Rewrites: minus-like dashes (U+2212, U+2013, ...) to ``-``; no-break and thin spaces
    removed; Fortran exponents ``1.23D+04`` to ``1.23e+04``; ``1.5×10⁻³`` (or ``x10^-3``)
    to ``1.5e-3``. Decimal commas are never rewritten (a comma may group digits).

    Parameters
    ----------
    text : str
        The cell as written.

    Returns
    -------
    new_text : str
        The rewritten cell (unchanged when nothing applied).
    rewrites : list of str
        One description per rewrite applied, for the log.
    """
    rewrites: list[str] = []
    out = text
    for ch in _MINUS_LIKE:
        if ch in out:
            out = out.replace(ch, "-")
            rewrites.append(f"{_char_name(ch)} -> '-'")
    for ch in _SPACE_LIKE:
        if ch in out:
            out = out.replace(ch, "")
            rewrites.append(f"removed {_char_name(ch)}")
    stripped = out.strip(" \t")
    m = _FORTRAN.match(stripped)
    if m:
        out = f"{m['m']}e{m['e']}"
        rewrites.append("Fortran exponent D -> e")
    else:
        m = _TIMES_TEN.match(stripped)
        if m:
            out = f"{m['m']}e{m['e'] or m['s'].translate(_SUPERSCRIPT)}"
            rewrites.append("power of ten written as an exponent")
    return out, rewrites
