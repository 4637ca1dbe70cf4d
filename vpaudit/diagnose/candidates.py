"""The hypotheses of the diagnosis: the slip kinds, their priors, and the candidate
corrections of one record (:func:`candidates_for`).
"""

from __future__ import annotations

import math
import re
from collections import Counter, defaultdict
from decimal import Decimal, InvalidOperation
from itertools import combinations as _combinations
from itertools import product as _product
from typing import NamedTuple

import numpy as np

from ..checks._context import P_STANDARD
from ..equations.families import FAMILIES
from ..equations.forms import FORMS
from ..units import PRESSURE_UNITS, TEMPERATURE_UNITS

#: The slip kinds, in reporting order, with the hypothesis each tests.
SLIP_KINDS: dict[str, str] = {
    "log-base": "the coefficients are in the other log base than the record says",
    "pressure-unit": "the pressure unit is another one of the supported units",
    "temperature-unit": "degC/degF/K confusion (Antoine)",
    "sign": "one coefficient's sign was lost or added",
    "phase-swap": "the solid and liquid labels of a pair are swapped",
    "decimal-shift": "one coefficient is off by a power of ten",
    "coefficient-swap": "two coefficients were entered in each other's columns",
    "digit-transposition": "two adjacent digits of one coefficient are swapped",
    "metadata-combination": "two or three of log base, pressure unit and temperature unit "
    "are wrong at once (a source in log10 P, mmHg and degC entered as ln P, Pa and K)",
}

#: How much rarer two metadata slips at once are taken to be than one (an assumption, not a
#: measurement: each is a separate misreading of the source's header).
_COMBINATION_PRIOR = math.log(0.1)

_DECIMAL_SHIFTS = (-3, -2, -1, 1, 2, 3)
#: Log of how rare a real Antoine equation is whose pole lies above 0.85 t_min (0.3 % of
#: Landolt's odd-CAS equations, none of Poling's): the prior of a temperature-unit fix that
#: would put it there.
_POLE_NEAR_RANGE = math.log(0.003)
#: The same above 0.63 t_min (1.0 % of Landolt's odd-CAS equations, none of Poling's).
_POLE_NEARER_THAN_MOST = math.log(0.010)
#: Log of how rare a real liquid equation is whose range starts above 1.2 times its own
#: normal boiling point (measured on the liquids of four compilations with an implied boiling
#: point: 0.2 % of Landolt's 2,938 odd-CAS equations, 0.3 % of the 339 Wagner equations of
#: McGarry and Poling, none of Poling's 325 Antoine or Perry's 340): the prior of a
#: temperature-unit fix that would read the range there (an Antoine range in K read as degC
#: or degF lands 255-460 K higher).
_RANGE_ABOVE_BOILING = math.log(0.003)


#: Log of how rare a real log-linear equation is whose implied dCp at the middle of its range
#: (in 1/T) is positive: 9 of 396 with a log T term (none of the 33 solids and 3 of the 23
#: liquids of Alcock et al. (1984), 6 of Perry's 340 liquids; benchmarks/calibrate.py
#: --priors). The prior of a sign fix of C or D that would make it positive.
_HEAT_CAPACITY_POSITIVE = math.log(9 / 396)

#: The exponents E of the D T^E term that real equations of the power-term form use: 1, 2 or 6
#: in 338 of Perry's 340 (5.7 and 0 the other two; ``benchmarks/calibrate.py --priors``).
_USUAL_EXPONENTS = frozenset({1.0, 2.0, 6.0})
#: Log of how rare a real power-term equation is with another exponent: 2 of the 340. The
#: prior of a fix that would leave E at another value (E = 600 read as -600 or as 0.6 would
#: drop the term, not restore it).
_EXPONENT_UNUSUAL = math.log(2 / 340)


class Change(NamedTuple):
    """One cell of a corrected record: ``field`` of record ``row`` becomes ``value``
    (``text`` is the number as it would be written in the table).
    """

    row: int
    field: str
    value: object
    text: str | None = None


class Candidate(NamedTuple):
    """One hypothesis: the slip ``kind`` in record ``row``, undone by ``changes``."""

    kind: str
    row: int
    changes: tuple[Change, ...]
    log_prior: float
    label: str


# --- candidates ------------------------------------------------------------------------------


def _flip_sign(text: str) -> str:
    t = text.strip()
    if t.startswith("-"):
        return t[1:]
    if t.startswith("+"):
        return "-" + t[1:]
    return "-" + t


def _shift_text(text: str, k: int) -> str | None:
    try:
        d = Decimal(text.strip()).scaleb(k)
    except InvalidOperation:
        return None
    s = format(d, "f") if abs(d.adjusted()) < 16 else str(d)
    return s


def _transpositions(text: str) -> list[tuple[int, str]]:
    """Every text of ``text`` with two adjacent, different digits of its mantissa swapped,
    with the position swapped, save those a source cannot have printed: a number whose
    integer part starts with a zero followed by another digit (``-300`` is not ``-030``
    mistyped; ``0.05`` keeps its ``0.``).
    """
    t = text.strip()
    out = []
    mantissa_end = next((i for i, ch in enumerate(t) if ch in "eE"), len(t))
    for i in range(mantissa_end - 1):
        a, b = t[i], t[i + 1]
        if a.isdigit() and b.isdigit() and a != b:
            new = t[:i] + b + a + t[i + 2 :]
            if not _LEADING_ZERO.match(new):
                out.append((i, new))
    return out


#: A number written with a superfluous leading zero: sign, a zero, then another digit.
_LEADING_ZERO = re.compile(r"[+-]?0\d")


def candidates_for(
    rec: dict, row: int, partners: list[tuple[int, str]], log_prior: float = 0.0
) -> list[Candidate]:
    """Every single-slip correction of one record.

    Parameters
    ----------
    rec : dict
        The record's fields as read (``form``, ``log_base``, ``A`` and ``A_text``, ...).
    row : int
        Its row in the table.
    partners : list of (int, str)
        Rows and ids of the records of the other phase of the same substance (for
        ``phase-swap``).
    log_prior : float
        Added to every candidate's log prior (its kind's share is added here).

    Returns
    -------
    list of Candidate
        Log priors are relative within each kind (``-ln`` of the number of variants); the
        caller adds the kind's prior.
    """
    spec = FORMS[rec["form"]]
    by_kind: dict[str, list[tuple[tuple[Change, ...], str]]] = defaultdict(list)
    base = rec["log_base"]
    other = "10" if base == "e" else "e"
    word = {"e": "ln P", "10": "log10 P"}
    by_kind["log-base"].append(
        (
            (Change(row, "log_base", other),),
            f"the coefficients are for {word[other]}, not {word[base]} "
            f"(log_base {base} -> {other})",
        )
    )
    unit = rec["pressure_unit"]
    for u in PRESSURE_UNITS:
        # another name of the record's own unit (Torr for mmHg) would change nothing
        if _UNIT_NAME[u] != _UNIT_NAME.get(unit, unit):
            by_kind["pressure-unit"].append(
                (
                    (Change(row, "pressure_unit", u),),
                    f"the coefficients give P in {u}, not {unit} (pressure_unit {unit} -> {u})",
                )
            )
    # corrections that would give an equation real tables rarely hold: their log prior
    implausible: dict[tuple[Change, ...], float] = {}
    if FAMILIES[spec.family].AFFINE_T:  # a form that may be written in degC or degF
        tu = rec.get("temperature_unit") or "K"
        s1, o1 = TEMPERATURE_UNITS[tu]
        for v in spec.temperature_units:
            if v == tu:
                continue
            s2, o2 = TEMPERATURE_UNITS[v]
            # Real Antoine equations put their pole (theta = -C) far below their range: for
            # 99 % of Landolt's 3,355 equations (odd CAS) below 0.63 t_min, for all 325 of
            # Poling's below 0.48 t_min, above 0.85 t_min for 0.3 %. A unit that would put
            # it that close to the range is that unlikely.
            pole = -float(rec["C"]) * s2 + o2 if rec.get("C") is not None else -math.inf
            t_lo = float(rec.get("t_min") or math.nan)
            tb = _antoine_boiling_point(rec, s2, o2) if rec["phase"] == "liquid" else math.nan
            # constants and range both read in v
            rare = _rarity(pole, t_lo * s2 + o2, tb)
            if rare:
                implausible[(Change(row, "temperature_unit", v),)] = rare
            by_kind["temperature-unit"].append(
                (
                    (Change(row, "temperature_unit", v),),
                    f"the Antoine constants and the range are for theta in {v}, not {tu} "
                    f"(temperature_unit {tu} -> {v})",
                )
            )
            # the range was converted to the record's unit but the constants were not
            changes = [Change(row, "temperature_unit", v), *range_read_in(rec, row, v)]
            by_kind["temperature-unit"].append(
                (
                    tuple(changes),
                    f"the Antoine constants are for theta in {v}, not {tu}; the range was "
                    f"already in {tu} (temperature_unit {tu} -> {v}, range converted)",
                )
            )
            # the range as written, in its own unit
            rare = _rarity(pole, t_lo * s1 + o1, tb)
            if rare:
                implausible[tuple(changes)] = rare
    coeffs = [c for c in spec.coefficients if rec.get(c + "_text")]
    for c in coeffs:
        text = str(rec[c + "_text"])
        v = float(rec[c])
        if v != 0.0:
            new = _flip_sign(text)
            change = (Change(row, c, -v, new),)
            by_kind["sign"].append((change, f"the sign of {c} was lost or added ({text} -> {new})"))
            if c in ("C", "D") and _turns_heat_capacity_positive(rec, c, -v):
                implausible[change] = _HEAT_CAPACITY_POSITIVE
        for k in _DECIMAL_SHIFTS:
            new = _shift_text(text, k)
            if new is None or v == 0.0:
                continue
            by_kind["decimal-shift"].append(
                (
                    (Change(row, c, float(new), new),),
                    f"{c} was entered {10.0 ** abs(k):g} times too "
                    f"{'small' if k > 0 else 'large'} ({text} -> {new})",
                )
            )
        for _, new in _transpositions(text):
            by_kind["digit-transposition"].append(
                (
                    (Change(row, c, float(new), new),),
                    f"two adjacent digits of {c} are transposed ({text} -> {new})",
                )
            )
    for i, a in enumerate(coeffs):
        for b in coeffs[i + 1 :]:
            ta, tb = str(rec[a + "_text"]), str(rec[b + "_text"])
            if float(rec[a]) == float(rec[b]):
                continue
            by_kind["coefficient-swap"].append(
                (
                    (Change(row, a, float(rec[b]), tb), Change(row, b, float(rec[a]), ta)),
                    f"{a} and {b} were entered in each other's columns ({a} {ta} <-> {b} {tb})",
                )
            )
    phase = rec["phase"]
    flip = "liquid" if phase == "solid" else "solid"
    for prow, pid in partners:
        by_kind["phase-swap"].append(
            (
                (Change(row, "phase", flip), Change(prow, "phase", phase)),
                f"the solid and liquid labels of {rec['id']} and {pid} are swapped "
                f"({rec['id']} is the {flip}, {pid} the {phase})",
            )
        )
    # Two or three metadata slips at once: every pairing of the single metadata fixes above
    # that change different fields (a temperature-unit fix that converted the range counts
    # as one temperature fix).
    # Made kind by kind (one fix of each of two or three kinds), in the order of all the
    # metadata fixes' pairings: the same candidates as pairing every two fixes and keeping
    # those of different kinds, without making the others.
    meta = [by_kind[k] for k in ("log-base", "pressure-unit", "temperature-unit") if by_kind.get(k)]
    for n in (2, 3):
        for combo in (c for kinds in _combinations(meta, n) for c in _product(*kinds)):
            changes = tuple(c for ch, _ in combo for c in ch)
            by_kind["metadata-combination"].append(
                (changes, " and ".join(label for _, label in combo))
            )
            rare = [implausible[ch] for ch, _ in combo if ch in implausible]
            if rare:
                implausible[changes] = min(rare)
    if "E" in spec.coefficients:  # the exponent of the power term
        for items in by_kind.values():
            for ch, _ in items:
                e = [c.value for c in ch if c.field == "E" and c.row == row]
                if e and float(e[0]) not in _USUAL_EXPONENTS:  # type: ignore[arg-type]
                    implausible[ch] = min(implausible.get(ch, 0.0), _EXPONENT_UNUSUAL)
    out = []
    for kind, items in by_kind.items():
        # the kind's prior is shared among its distinct corrections: two names of one
        # pressure unit (Torr and mmHg, 1.4e-7 apart) are one hypothesis, not two
        canonical = [_canonical(ch) for ch, _ in items]
        same = Counter(canonical)
        lp = log_prior - math.log(len(same))
        if kind == "metadata-combination":
            lp += _COMBINATION_PRIOR
        out.extend(
            Candidate(
                kind,
                row,
                ch,
                lp - math.log(same[key]) + implausible.get(ch, 0.0),
                label,
            )
            for (ch, label), key in zip(items, canonical, strict=True)
        )
    return out


def range_read_in(rec: dict, row: int, unit: str) -> list[Change]:
    """The changes that rewrite the range of record ``rec`` (at ``row``) from its own
    temperature unit into ``unit``: the same temperatures, written in ``unit`` (rounded to
    1e-10 of it), for a correction whose constants are in ``unit`` while its range was
    already converted to the record's.
    """
    s1, o1 = TEMPERATURE_UNITS[rec.get("temperature_unit") or "K"]
    s2, o2 = TEMPERATURE_UNITS[unit]
    out = []
    for f in ("t_min", "t_max"):
        val = rec.get(f)
        if val is not None and np.isfinite(val):
            new = round(((val * s1 + o1) - o2) / s2, 10)
            out.append(Change(row, f, float(new), repr(float(new))))
    return out


def _rarity(pole: float, t_lo: float, tb: float) -> float:
    """The log prior of a temperature-unit reading of an Antoine equation whose pole
    (theta = -C, in K) and range start ``t_lo`` [K] are as given, with its own normal
    boiling point ``tb`` [K] (nan for a solid): how rare real equations are with the pole
    near the range, or a liquid range starting well above the boiling point; 0 when
    neither.
    """
    if pole > 0.85 * t_lo:
        return _POLE_NEAR_RANGE
    if pole > 0.63 * t_lo:
        return _POLE_NEARER_THAN_MOST
    if t_lo > 1.2 * tb:
        return _RANGE_ABOVE_BOILING
    return 0.0


def _canonical(changes: tuple[Change, ...]) -> tuple:
    """``changes`` with each pressure unit named by the first unit of the same size."""
    return tuple(
        (
            c.row,
            c.field,
            _UNIT_NAME.get(c.value, c.value) if c.field == "pressure_unit" else c.value,
        )
        for c in changes
    )


def heat_capacity_mid(rec: dict, field: str | None = None, value: float = 0.0) -> float:
    """The implied dCp/R of a log-linear record at the middle of its range in 1/T, with
    ``field`` set to ``value`` when given (NaN for another family or no finite range).

    For y = A + B/T + C ln T + D T^E in base e, dCp/R = C + D E (E + 1) T^E (a log10 form
    has its D multiplied by ln 10 and its C unchanged, since C multiplies log T).
    """
    spec = FORMS[rec["form"]]
    if FAMILIES[spec.family].NAME != "log-linear":
        return math.nan
    got = {k: rec.get(k) for k in ("C", "D", "E")}
    if field is not None:
        got[field] = value
    try:
        t = 2.0 / (1.0 / float(rec["t_min"]) + 1.0 / float(rec["t_max"]))
        c = float(got["C"] or 0.0)
        d = float(got["D"] or 0.0) * (math.log(10.0) if rec["log_base"] == "10" else 1.0)
        e = spec.exponent if spec.exponent is not None else float(got["E"] or 0.0)
        return c + d * e * (e + 1.0) * t**e if d else c
    except (KeyError, TypeError, ValueError, ZeroDivisionError, OverflowError):
        return math.nan


def _turns_heat_capacity_positive(rec: dict, field: str, value: float) -> bool:
    """Whether setting ``field`` to ``value`` turns the record's implied dCp at mid-range
    from zero or negative (the usual sign) to positive.
    """
    return heat_capacity_mid(rec) <= 0.0 < heat_capacity_mid(rec, field, value)


def _antoine_boiling_point(rec: dict, scale: float, offset: float) -> float:
    """The normal boiling point, in K, of an Antoine record read with theta = (T - offset) /
    scale (its constants and its pressure unit as they stand); NaN when the curve never
    reaches 101 325 Pa on the right of its pole.
    """
    try:
        a, b, c = float(rec["A"]), float(rec["B"]), float(rec["C"])
        p_std = P_STANDARD / PRESSURE_UNITS[rec["pressure_unit"]]
        y = math.log(p_std) if rec["log_base"] == "e" else math.log10(p_std)
        theta = b / (a - y) - c
    except (KeyError, TypeError, ValueError, ZeroDivisionError):
        return math.nan
    if not (a > y and theta + c > 0.0):
        return math.nan
    return theta * scale + offset


#: Each pressure unit -> the first listed unit of the same size within 1e-6 (Torr -> Torr,
#: mmHg -> Torr).
_UNIT_NAME = {
    u: next(v for v in PRESSURE_UNITS if abs(PRESSURE_UNITS[v] / f - 1.0) < 1e-6)
    for u, f in PRESSURE_UNITS.items()
}
