"""Diagnosis: the likely transcription slip behind a suspect record, and its fix.

Most bad entries carry one slip, and each slip leaves a fingerprint (a log-base slip
scales the implied dH by 2.3, a pressure unit shifts ln P by the log of its factor, ...).
For every record involved in an error or warning, each hypothesis below is tested by
applying the inverse of the slip and re-running the checks on the corrected record together
with everything that bears on it: its partner phase, the other sources of its substance,
its reference values and its measured points.

========================  ==================================================================
kind                      hypothesis
========================  ==================================================================
``log-base``              the coefficients are in the other log base than the record says
``pressure-unit``         the pressure unit is another one of the supported units
``temperature-unit``      degC/degF/K confusion (Antoine)
``sign``                  one coefficient's sign was lost or added
``phase-swap``            the solid and liquid labels of a pair are swapped
``decimal-shift``         one coefficient is off by a power of ten (10^-3 .. 10^3)
``coefficient-swap``      two coefficients were entered in each other's columns
``digit-transposition``   two adjacent digits of one coefficient are swapped
========================  ==================================================================

How it is computed
------------------
All candidates are audited at once: each becomes a *variant* substance in one synthetic
table (the substance's records with one slip undone, its references and points copied), so
the work runs over whole arrays, never once per candidate. A screening pass computes the
continuous evidence and the errors the hard checks must give (no findings are built); the
ten best candidates of each substance then run through every registered check exactly as
in the audit. Each variant gets a misfit score

    S = sum over findings (3 per error, 1 per warning)
        + sum of min(rho(z), cap) over the continuous evidence (z = residual / its scale),

with rho(z) = 2 (sqrt(1 + z^2) - 1), a robust (soft-L1) cost, capped per piece of
evidence (each residual is either consistent, or off for a reason of its own by an amount
no slip predicts -- a mixture likelihood, so one broken piece of evidence weighs as much
as any other whatever its size): the ln P difference of the
solid and liquid curves at the reference melting point, the Hess residual of the fusion
enthalpy, ln P at the reference normal boiling point, the distance of the implied entropy
of the phase change from its plausible band, the differences between sources, and the
residuals of measured points. Candidates are weighed as hypotheses:

    posterior(c)  ~  prior(c) exp(-S_c / (2 T)),
    posterior(no single slip)  ~  P0 exp(-S_0 / (2 T)),

where S_0 is the misfit of the records as written, so that a correction must bring
several pieces of evidence to consistency, not merely improve one, to win;

where the prior of each kind is shared equally among its variants (a kind with 40 possible
digit transpositions gives each a fortieth: the penalty for how unlikely one particular
slip is) and among the suspect records. Corrections that give the same curve and range
(Torr and mmHg differ by 1.4e-7) are one fix and their weights add. The confidence of a
suggestion is its posterior through a Platt scaling; T, P0 and the cap were chosen, and the
scaling fitted, on corrupted real data (``benchmarks/diagnosis_accuracy.py``,
docs/diagnosis.md) so that a confidence c is right about a fraction c of the time. When the
evidence does not single out one fix the suggestion is ``None``; when the runner-up is
close it is reported too.
"""

from __future__ import annotations

import math
from collections import Counter, defaultdict
from dataclasses import dataclass, replace
from decimal import Decimal, InvalidOperation
from itertools import combinations as _combinations

import numpy as np
import pandas as pd

from ._columns import TEXT
from .checks._context import LN_P_STANDARD, P_STANDARD, AuditContext, match, same_key_pairs
from .checks._registry import REGISTRY, Severity
from .checks.finding import Finding
from .constants import R
from .equations.engine import evaluate
from .equations.families import FAMILIES
from .equations.forms import FORMS
from .readers.files import RawFrame
from .readers.table import Table, _Collector, _record_rules, text_categorical
from .substance import records_at
from .units import PRESSURE_UNITS, TEMPERATURE_UNITS

__all__ = [
    "SLIP_KINDS",
    "Candidate",
    "Change",
    "attach_suggestions",
    "candidates_for",
    "choose",
    "diagnose",
    "hypotheses",
    "CALIBRATION",
    "DIAGNOSE_LIMIT",
]

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

#: Calibrated constants of the scoring (benchmarks/diagnosis_accuracy.py): the temperature
#: T dividing the misfit, the prior of "no single slip explains it", and the lowest
#: confidence reported as a suggestion.
CALIBRATION = {
    "temperature": 1.0,
    "prior_none": 0.3,
    "loss": "quadratic",
    "component_cap": 8.0,
    "error_cost": 3.0,
    "warning_cost": 1.0,
    "min_confidence": 0.15,
    "require_clear": True,
    "logit_scale": 1.802,
    "logit_shift": 0.570,
}

#: Checks that say nothing about the numbers of a record (they are the same in every variant).
_NOT_EVIDENCE = frozenset(
    {"missing-source", "duplicate-record", "internal-error", "reference-contradicted"}
)
_DECIMAL_SHIFTS = (-3, -2, -1, 1, 2, 3)
#: Log of how rare a real Antoine equation is whose pole lies above 0.85 t_min (0.3 % of
#: Landolt's odd-CAS equations, none of Poling's): the prior of a temperature-unit fix that
#: would put it there.
_POLE_NEAR_RANGE = math.log(0.003)
#: Log of how rare a real liquid equation is whose range starts above 1.2 times its own
#: normal boiling point (measured on the liquids of four compilations with an implied boiling
#: point: 0.2 % of Landolt's 2,938 odd-CAS equations, 0.3 % of the 339 Wagner equations of
#: McGarry and Poling, none of Poling's 325 Antoine or Perry's 340): the prior of a
#: temperature-unit fix that would read the range there (an Antoine range in K read as degC
#: or degF lands 255-460 K higher).
_RANGE_ABOVE_BOILING = math.log(0.003)
#: Candidates per substance that go on from the screening to the full checks.
_VERIFIED = 10
#: Variant rows audited at once (bounds the memory of the synthetic tables).
_CHUNK_ROWS = 200_000


@dataclass(frozen=True)
class Change:
    """One cell of a corrected record: ``field`` of record ``row`` becomes ``value``
    (``text`` is the number as it would be written in the table).
    """

    row: int
    field: str
    value: object
    text: str | None = None


@dataclass(frozen=True)
class Candidate:
    """One hypothesis: the slip ``kind`` in record ``row``, undone by ``changes``."""

    kind: str
    row: int
    changes: tuple[Change, ...]
    log_prior: float
    label: str


# --- candidates ------------------------------------------------------------------------------


def _logsumexp(x: np.ndarray) -> float:
    """log(sum(exp(x))) without overflow (the largest term factored out); scipy.special's
    version is dear to import (docs/performance.md).
    """
    top = float(np.max(x))
    if not np.isfinite(top):
        return top
    return top + float(np.log(np.sum(np.exp(x - top))))


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
    t = text.strip()
    out = []
    mantissa_end = next((i for i, ch in enumerate(t) if ch in "eE"), len(t))
    for i in range(mantissa_end - 1):
        a, b = t[i], t[i + 1]
        if a.isdigit() and b.isdigit() and a != b:
            out.append((i, t[:i] + b + a + t[i + 2 :]))
    return out


def _fmt(value) -> str:
    return str(value) if isinstance(value, str) else f"{value:g}"


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
    implausible: set[tuple[Change, ...]] = set()
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
            if pole > 0.85 * (t_lo * s2 + o2) or t_lo * s2 + o2 > 1.2 * tb:
                # constants and range both read in v
                implausible.add((Change(row, "temperature_unit", v),))
            by_kind["temperature-unit"].append(
                (
                    (Change(row, "temperature_unit", v),),
                    f"the Antoine constants and the range are for theta in {v}, not {tu} "
                    f"(temperature_unit {tu} -> {v})",
                )
            )
            # the range was converted to the record's unit but the constants were not
            changes = [Change(row, "temperature_unit", v)]
            for f in ("t_min", "t_max"):
                val = rec.get(f)
                if val is not None and np.isfinite(val):
                    new = round(((val * s1 + o1) - o2) / s2, 10)
                    changes.append(Change(row, f, float(new), repr(float(new))))
            by_kind["temperature-unit"].append(
                (
                    tuple(changes),
                    f"the Antoine constants are for theta in {v}, not {tu}; the range was "
                    f"already in {tu} (temperature_unit {tu} -> {v}, range converted)",
                )
            )
            if pole > 0.85 * (t_lo * s1 + o1) or t_lo * s1 + o1 > 1.2 * tb:
                # the range as written, in its own unit
                implausible.add(tuple(changes))
    coeffs = [c for c in spec.coefficients if rec.get(c + "_text")]
    for c in coeffs:
        text = str(rec[c + "_text"])
        v = float(rec[c])
        if v != 0.0:
            new = _flip_sign(text)
            by_kind["sign"].append(
                ((Change(row, c, -v, new),), f"the sign of {c} was lost or added ({text} -> {new})")
            )
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
    meta = [
        (k, ch, label)
        for k in ("log-base", "pressure-unit", "temperature-unit")
        for ch, label in by_kind.get(k, [])
    ]
    for n in (2, 3):
        for combo in _combinations(meta, n):
            if len({k for k, _, _ in combo}) < n:
                continue
            changes = tuple(c for _, ch, _ in combo for c in ch)
            by_kind["metadata-combination"].append(
                (changes, " and ".join(label for _, _, label in combo))
            )
            if any(ch in implausible for _, ch, _ in combo):
                implausible.add(changes)
    out = []
    for kind, items in by_kind.items():
        # the kind's prior is shared among its distinct corrections: two names of one
        # pressure unit (Torr and mmHg, 1.4e-7 apart) are one hypothesis, not two
        same = Counter(_canonical(ch) for ch, _ in items)
        lp = log_prior - math.log(len(same))
        if kind == "metadata-combination":
            lp += _COMBINATION_PRIOR
        out.extend(
            Candidate(
                kind,
                row,
                ch,
                lp
                - math.log(same[_canonical(ch)])
                + (_POLE_NEAR_RANGE if ch in implausible else 0.0),
                label,
            )
            for ch, label in items
        )
    return out


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

# --- variants: all candidates audited at once ------------------------------------------------


def _quiet(func):
    """Run ``func`` with numpy's floating-point warnings off: candidate corrections are
    wrong on purpose, and their overflows become evidence, never warnings.
    """
    import functools

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        with np.errstate(all="ignore"):
            return func(*args, **kwargs)

    return wrapper


def _key(f: Finding) -> tuple[str, tuple[str, ...]]:
    """A finding's identity across variants (whose substances are renamed): check and ids."""
    return (f.check, tuple(sorted(f.records)))


def _rho(z: np.ndarray) -> np.ndarray:
    """The robust (soft-L1) cost of a standardized residual."""
    return 2.0 * (np.sqrt(1.0 + z * z) - 1.0)


def _groups(codes: np.ndarray, wanted=None) -> dict[int, np.ndarray]:
    """The rows of each code in ``wanted`` (all non-negative codes by default)."""
    if wanted is None:
        order = np.argsort(codes, kind="stable")
        sc = codes[order]
        wanted = np.unique(sc[sc >= 0])
    else:  # a few codes of a large table: sort only their rows
        wanted = np.asarray(sorted(set(int(w) for w in wanted)), dtype=np.int64)
        rows = np.flatnonzero(np.isin(codes, wanted))
        order = rows[np.argsort(codes[rows], kind="stable")]
        sc = codes[order]
    lo = np.searchsorted(sc, wanted, side="left")
    hi = np.searchsorted(sc, wanted, side="right")
    return {int(c): order[a:b] for c, a, b in zip(wanted, lo, hi, strict=True) if b > a}


_TEXT_FIELDS = ("phase", "log_base", "pressure_unit", "temperature_unit")


def _variant_table(
    table: Table, ctx: AuditContext, units: list[tuple[int, tuple[Change, ...]]]
) -> Table:
    """One table holding every unit (a substance code and the changes applied to it) as its
    own substance, named by the unit's index.
    """
    wanted = {code for code, _ in units}
    rec_g = _groups(ctx.codes, wanted)
    ref_g = _groups(ctx.ref_codes, wanted)
    pt_g = _groups(ctx.point_codes, wanted)
    empty = np.empty(0, dtype=np.int64)

    def replicate(frame: pd.DataFrame, groups) -> tuple[pd.DataFrame, np.ndarray]:
        parts = [groups.get(code, empty) for code, _ in units]
        idx = np.concatenate(parts) if parts else empty
        unit_of = np.repeat(np.arange(len(units)), [p.size for p in parts])
        out = frame.iloc[idx].reset_index(drop=True)
        out["substance"] = pd.Series(unit_of.astype(str), dtype=TEXT)
        return out, idx

    recs, src_rows = replicate(table.records, rec_g)
    # where each (unit, original row) landed
    starts = np.concatenate(([0], np.cumsum([rec_g.get(c, empty).size for c, _ in units])))
    pos: dict[tuple[int, int], int] = {}
    for u, (code, changes) in enumerate(units):
        if changes:
            rows = rec_g[code]
            for k, r in enumerate(rows):
                pos[(u, int(r))] = int(starts[u] + k)
    edits: dict[str, list[tuple[int, object, str | None]]] = defaultdict(list)
    for u, (_, changes) in enumerate(units):
        for ch in changes:
            edits[ch.field].append((pos[(u, ch.row)], ch.value, ch.text))
    for field, items in edits.items():
        at = np.array([i for i, _, _ in items], dtype=np.int64)
        if field in _TEXT_FIELDS:
            col = recs[field].astype(object).to_numpy(copy=True)
            col[at] = [v for _, v, _ in items]
            recs[field] = pd.Series(col, dtype=TEXT)
        else:
            col = recs[field].to_numpy(dtype=float, copy=True)
            col[at] = [float(v) for _, v, _ in items]  # type: ignore[arg-type]
            recs[field] = col
            txt = recs[field + "_text"].astype(object).to_numpy(copy=True)
            txt[at] = [t for _, _, t in items]
            recs[field + "_text"] = pd.Series(txt, dtype=TEXT)
    for field in _TEXT_FIELDS:  # categoricals of the original file cannot take new values
        if isinstance(recs[field].dtype, pd.CategoricalDtype):
            recs[field] = recs[field].astype(object).astype(TEXT)
    recs["file"] = text_categorical(np.zeros(len(recs), dtype=np.int8), ["<variant>"])
    recs["line"] = np.arange(1, len(recs) + 1, dtype=np.int64)
    refs, _ = replicate(table.references, ref_g)
    pts, _ = replicate(table.points, pt_g)
    out = _Collector()
    raw = RawFrame("<variant>", list(recs.columns), {}, recs["line"].tolist())
    _record_rules(recs, raw, out)
    problems = pd.DataFrame(
        out.problems, columns=["file", "line", "column", "rule", "message", "id", "substance"]
    )
    return Table(recs, refs, pts, problems)


def _misfit(ctx: AuditContext) -> tuple[np.ndarray, np.ndarray]:
    """|z| of every piece of continuous evidence: (substance code, |z|) arrays."""
    policy = ctx.policy
    out_codes: list[np.ndarray] = []
    out_cost: list[np.ndarray] = []

    def add(codes: np.ndarray, z: np.ndarray) -> None:
        z = np.asarray(z, dtype=float)
        # a residual that cannot be computed counts as the worst (it is capped later)
        out_codes.append(np.asarray(codes, dtype=np.int64))
        out_cost.append(np.where(np.isfinite(z), np.abs(z), np.inf))

    def add_widened(codes: np.ndarray, resid: np.ndarray, sigma: np.ndarray, widen) -> None:
        """A residual whose scale ``sigma`` was widened by ``widen`` (>= 1) for an
        extrapolation, with the normalization of its Gaussian likelihood, 2 ln(widen): a
        reading that moves a range away from its witness predicts it less sharply and must
        not fit better for that (as a |z| whose square it is).
        """
        add(codes, resid / sigma)
        with np.errstate(invalid="ignore", divide="ignore"):
            occam = np.sqrt(2.0 * np.log(np.maximum(widen, 1.0)))
        add(codes, np.nan_to_num(occam, nan=0.0))

    # a correction that makes a curve unusable over its range (an Antoine pole moved into it)
    # must not escape the evidence that the other checks would weigh
    unusable = ctx.codes[~ctx.evaluable & (ctx.codes >= 0)]
    add(unusable, np.full(unusable.size, np.inf))
    # solid/liquid pairs at the reference melting point, and Hess's law at the crossing
    pr = ctx.pairs
    tol = policy.thresholds("melting-point-mismatch")["tolerance"]
    has_tm = np.isfinite(pr.tm)
    if has_tm.any():
        s, lq, tm = pr.solid[has_tm], pr.liquid[has_tm], pr.tm[has_tm]
        d = (
            evaluate(ctx.curves.take(s), tm, order=0)[0]
            - evaluate(ctx.curves.take(lq), tm, order=0)[0]
        )
        add(ctx.codes[s], d / (0.5 * tol))
        # a solid range usually ends, and a liquid range starts, at the melting point
        gap = np.abs(ctx.curves.t_max[s] - tm) + np.abs(ctx.curves.t_min[lq] - tm)
        add(ctx.codes[s], gap / (0.05 * tm))
    hfus = ctx.reference("enthalpy_of_fusion", pr.solid)
    cross = np.isfinite(pr.t_cross) & np.isfinite(hfus)
    # a reference dH_fus is evidence under every hypothesis: one whose curves do not cross
    # cannot meet it, and that counts as broken evidence, as an uncomputable residual does
    lost = ~np.isfinite(pr.t_cross) & np.isfinite(hfus)
    add(ctx.codes[pr.solid[lost]], np.full(int(lost.sum()), np.inf))
    if cross.any():
        s, t = pr.solid[cross], pr.t_cross[cross]
        _, ys1, _ = evaluate(ctx.curves.take(s), t, order=1)
        h_sub = R * t * t * ys1
        resid = (R * t * t * pr.slope_diff[cross] - hfus[cross]) / np.abs(h_sub)
        hess = policy.thresholds("fusion-enthalpy-mismatch")
        add(ctx.codes[s], resid / (0.5 * hess.get("tolerance", 0.03)))
    rows = np.flatnonzero(ctx.evaluable)
    # the normal boiling point, in ln P, looser the farther it lies outside the range
    tb = ctx.reference("normal_boiling_point", rows)
    liq = ctx.liquid[rows] & np.isfinite(tb)
    if liq.any():
        r = rows[liq]
        c = ctx.curves.take(r)
        t = tb[liq]
        d = evaluate(c, t, order=0)[0] - LN_P_STANDARD
        dist = np.maximum(c.t_min - t, t - c.t_max).clip(min=0.0) / t
        tol_b = policy.thresholds("boiling-point-mismatch")["tolerance"]
        widen = 1.0 + 20.0 * dist
        add_widened(ctx.codes[r], d, 0.5 * tol_b * widen, widen)
    # the entropy of the phase change (Trouton's rule generalised), outside its band
    th = policy.thresholds("enthalpy-implausible")
    if rows.size:
        c = ctx.curves.take(rows)
        t = 2.0 / (1.0 / c.t_min + 1.0 / c.t_max)
        y, y1, _ = evaluate(c, t, order=1)
        ds = R * t * y1 + R * (y - LN_P_STANDARD)
        liquid = ctx.liquid[rows]
        lo = np.where(liquid, th["liquid_min"], th["solid_min"])
        hi = np.where(liquid, th["liquid_max"], th["solid_max"])
        add(ctx.codes[rows], np.maximum(lo - ds, 0.0) / 10.0 + np.maximum(ds - hi, 0.0) / 10.0)
    # the 298.15 K anchor: the standard enthalpy and entropy, each against the warning
    # allowance of its check (the checks' own definitions: checks.anchor.anchor_values)
    from .checks.anchor import allowances, anchor_values

    a = anchor_values(ctx)
    if a is not None:
        al = allowances(ctx, a)
        # no cut at max_ratio here: a candidate must not escape the evidence by moving its
        # range away from 298.15 K (the allowance still grows with the distance)
        for value, ref, allow, base in (
            (a["h"], a["h_ref"], al["h_warn"], al["h_base"]),
            (a["s"], a["s_ref"], al["s_warn"], al["s_base"]),
        ):
            m = np.isfinite(ref)
            # widened with the extrapolation: an Antoine range read in degC, farther from
            # 298.15 K, gains nothing by its wider allowance
            add_widened(
                ctx.codes[a["rows"][m]], value[m] - ref[m], 0.5 * allow[m], allow[m] / base[m]
            )
    # other sources of the same substance and phase, at the middle of the common range
    key = np.where(ctx.evaluable, ctx.codes * 2 + ctx.liquid, -1)
    ev = np.flatnonzero(key >= 0)
    i, j = same_key_pairs(key, ev, ev)
    keep = i < j
    i, j = i[keep], j[keep]
    if i.size:
        lo = np.maximum(ctx.curves.t_min[i], ctx.curves.t_min[j])
        hi = np.minimum(ctx.curves.t_max[i], ctx.curves.t_max[j])
        lo, hi = np.where(lo < hi, lo, hi), np.where(lo < hi, hi, lo)  # no overlap: the gap
        t = 2.0 / (1.0 / lo + 1.0 / hi)
        d = evaluate(ctx.curves.take(i), t, 0)[0] - evaluate(ctx.curves.take(j), t, 0)[0]
        u_def = policy.thresholds("sources-disagree")["default_uncertainty"]
        ui = np.nan_to_num(ctx.uncertainty[i], nan=u_def)
        uj = np.nan_to_num(ctx.uncertainty[j], nan=u_def)
        add(ctx.codes[i], d / np.sqrt(ui**2 + uj**2))
    # measured points of the same substance and phase within the range
    pts = ctx.table.points
    if len(pts):
        pt_key = np.where(
            ctx.point_codes >= 0,
            ctx.point_codes * 2 + (pts["phase"].astype(object) == "liquid").to_numpy(),
            -1,
        )
        r, p = match(key, pt_key)
        if r.size:
            t = pts["T_K"].to_numpy(dtype=float)[p]
            c = ctx.curves.take(r)
            inside = (t >= c.t_min * 0.98) & (t <= c.t_max * 1.02)
            res = np.log(pts["P_Pa"].to_numpy(dtype=float)[p]) - evaluate(c, t, 0)[0]
            u_def = policy.thresholds("points-misfit")["default_uncertainty"]
            u_pt = np.nan_to_num(
                pts["uncertainty"].to_numpy(dtype=float, na_value=np.nan)[p], nan=u_def
            )
            z2 = np.where(inside, (res / u_pt) ** 2, 0.0)
            n = np.bincount(r, weights=inside.astype(float), minlength=ctx.n)
            ss = np.bincount(r, weights=z2, minlength=ctx.n)
            has = np.flatnonzero(n > 0)
            # the RMS standardized residual counts as two pieces of evidence
            add(
                np.repeat(ctx.codes[has], 2),
                np.repeat(np.sqrt(ss[has] / n[has]), 2),
            )
    if not out_codes:
        return np.empty(0, dtype=np.int64), np.empty(0)
    return np.concatenate(out_codes), np.concatenate(out_cost)


@dataclass
class _Outcome:
    findings: list[Finding]
    z: np.ndarray  # |standardized residual| of each piece of continuous evidence
    key: bytes = b""  # what the correction amounts to (curves, ranges, phases), rounded
    floor: tuple[int, int] = (0, 0)  # screening only: errors, warnings the checks must give

    def score(self, cal: dict) -> float:
        """The misfit S: capped evidence costs plus the cost of each finding."""
        key = (cal["loss"], cal["component_cap"], cal["error_cost"], cal["warning_cost"])
        cache = self.__dict__.setdefault("_scores", {})
        if key not in cache:
            cache[key] = self._score(cal)
        return cache[key]

    def _score(self, cal: dict) -> float:
        fc = {"error": cal["error_cost"], "warning": cal["warning_cost"], "note": 0.0}
        with np.errstate(invalid="ignore", over="ignore"):
            cost = self.z * self.z if cal["loss"] == "quadratic" else _rho(self.z)
        cost = np.where(np.isnan(cost), np.inf, cost)
        floor = self.floor[0] * fc["error"] + self.floor[1] * fc["warning"]
        return (
            float(np.minimum(cost, cal["component_cap"]).sum())
            + floor
            + sum(fc[f.severity.value] for f in self.findings)
        )


def _prime_scores(outcomes: list[_Outcome], cal: dict) -> None:
    """:meth:`_Outcome.score` of many outcomes at once (one pass over all their evidence
    instead of a few numpy calls on a short array each); fills each outcome's cache.
    """
    if not outcomes:
        return
    key = (cal["loss"], cal["component_cap"], cal["error_cost"], cal["warning_cost"])
    sizes = np.fromiter((o.z.size for o in outcomes), dtype=np.int64, count=len(outcomes))
    z = np.concatenate([np.asarray(o.z, dtype=float).ravel() for o in outcomes])
    with np.errstate(invalid="ignore", over="ignore"):
        cost = z * z if cal["loss"] == "quadratic" else _rho(z)
    cost = np.minimum(np.where(np.isnan(cost), np.inf, cost), cal["component_cap"])
    owner = np.repeat(np.arange(len(outcomes)), sizes)
    evidence = np.bincount(owner, weights=cost, minlength=len(outcomes))
    fc = {"error": cal["error_cost"], "warning": cal["warning_cost"], "note": 0.0}
    for o, e in zip(outcomes, evidence.tolist(), strict=True):
        floor = o.floor[0] * fc["error"] + o.floor[1] * fc["warning"]
        total = e + floor + sum(fc[str(f.severity)] for f in o.findings)
        o.__dict__.setdefault("_scores", {})[key] = total


def _hard_failures(vctx: AuditContext, unit_of_code: np.ndarray, n: int) -> list:
    """Errors and warnings that some checks must report for each unit (pressure-not-finite,
    slope-not-positive, heat-capacity-sign, no-crossing, melting-point-mismatch), counted
    from the same arrays as those checks without building findings: a lower bound of each
    unit's findings cost.
    """
    ex = vctx.range_extrema
    ev = vctx.evaluable
    lim = vctx.thresholds("pressure-not-finite")["max_abs_lnP"]
    th = vctx.thresholds("heat-capacity-sign")
    factor = np.where(vctx.antoine, th["antoine_factor"], 1.0)
    with np.errstate(invalid="ignore"):
        finite = (
            np.isfinite(ex.y_min)
            & np.isfinite(ex.y_max)
            & (np.abs(ex.y_min) <= lim)
            & (np.abs(ex.y_max) <= lim)
        )
        far = ex.cp_max > th["error_above"] * factor
        cp = vctx.severity("heat-capacity-sign")
        tiers = [
            (ev & ~finite, vctx.severity("pressure-not-finite")),
            (ev & ~(ex.h_min > 0), vctx.severity("slope-not-positive")),
            (ev & far, vctx.escalated("heat-capacity-sign") if cp else None),
            (ev & (ex.cp_max > th["tolerance"] * factor) & ~far, cp),
        ]
    # each at the severity the policy gives it (a lowered check counts for less)
    errors = np.zeros(vctx.n)
    warnings = np.zeros(vctx.n)
    for mask, sev in tiers:
        if sev is not None and sev.rank >= 1:
            (errors if sev is Severity.error else warnings)[mask] += 1.0
    # the pair checks no-crossing and melting-point-mismatch, counted at the solid record
    pr = vctx.pairs
    tol = vctx.thresholds("melting-point-mismatch")["tolerance"]
    with np.errstate(invalid="ignore"):
        fails = {"no-crossing": pr.checkable & (pr.crossings == 0)}
        at = np.flatnonzero(pr.checkable & np.isfinite(pr.tm))
        d = (
            evaluate(vctx.curves.take(pr.solid[at]), pr.tm[at], 0)[0]
            - evaluate(vctx.curves.take(pr.liquid[at]), pr.tm[at], 0)[0]
        )
        mm = np.zeros(pr.solid.size, dtype=bool)
        mm[at] = ~(np.abs(d) <= tol)
        fails["melting-point-mismatch"] = mm
    for name, bad in fails.items():
        sev = vctx.severity(name)
        if sev is not None and sev.rank >= 1:
            target = errors if sev is Severity.error else warnings
            np.add.at(target, pr.solid[bad], 1.0)
    unit = np.where(vctx.codes >= 0, unit_of_code[np.maximum(vctx.codes, 0)], -1)
    ok = unit >= 0
    e = np.bincount(unit[ok], weights=errors[ok], minlength=n).astype(int)
    w = np.bincount(unit[ok], weights=warnings[ok], minlength=n).astype(int)
    return list(zip(e.tolist(), w.tolist(), strict=True))


def _audit_units(
    table: Table,
    ctx: AuditContext,
    units: list[tuple[int, tuple[Change, ...]]],
    checks: bool = True,
) -> list[_Outcome]:
    """Audit every unit (a substance with one correction); without ``checks`` only the
    continuous evidence is computed (the screening stage: no findings are built).
    """
    from .auditing import run_checks

    names = [n for n in REGISTRY if n not in _NOT_EVIDENCE]
    outcomes: list[_Outcome] = []
    sizes = np.bincount(ctx.codes[ctx.codes >= 0], minlength=ctx.n_names)
    a = 0
    while a < len(units):  # chunks of at most _CHUNK_ROWS variant records
        b, rows = a, 0
        while b < len(units) and (b == a or rows + sizes[units[b][0]] <= _CHUNK_ROWS):
            rows += sizes[units[b][0]]
            b += 1
        part = units[a:b]
        vt = _variant_table(table, ctx, part)
        vctx = AuditContext(vt, ctx.policy, ctx.runtime)
        with np.errstate(all="ignore"):
            found = run_checks(vctx, names) if checks else []
            mis = _misfit(vctx)
        by_unit: dict[int, list[Finding]] = defaultdict(list)
        for f in found:
            if f.substance:
                by_unit[int(f.substance)].append(f)
        unit_of_code = np.array([int(n) for n in vctx.names], dtype=np.int64)
        mc, cost = mis
        mu = unit_of_code[mc] if mc.size else mc
        order = np.argsort(mu, kind="stable")
        split = np.searchsorted(mu[order], np.arange(len(part) + 1))
        costs = [cost[order[split[u] : split[u + 1]]] for u in range(len(part))]
        keys = _unit_keys(vctx, len(part))
        floors = _hard_failures(vctx, unit_of_code, len(part)) if not checks else None
        outcomes.extend(
            _Outcome(by_unit[u], costs[u], keys[u], floors[u] if floors else (0, 0))
            for u in range(len(part))
        )
        a = b
    return outcomes


# --- scoring and suggestions -----------------------------------------------------------------


def _unit_keys(vctx: AuditContext, n_units: int) -> list[bytes]:
    """What each unit's records amount to: their curves at five temperatures over their
    ranges, the ranges and the phases, rounded (equal keys are one fix written two ways,
    such as Torr and mmHg). Rows of a unit are contiguous and in the same order in every
    unit of a substance.
    """
    c = vctx.curves
    frac = np.linspace(0.0, 1.0, 5)[None, :]
    t = c.t_min[:, None] + (c.t_max - c.t_min)[:, None] * frac
    y = evaluate(c, t, 0)[0]
    parts = np.column_stack([y, c.t_min, c.t_max, vctx.liquid.astype(float)])
    parts = np.round(np.nan_to_num(parts, nan=1e300, posinf=1e300, neginf=-1e300), 6)
    unit = np.array([int(n) for n in vctx.names], dtype=np.int64)[vctx.codes]
    bounds = np.searchsorted(unit, np.arange(n_units + 1))
    return [parts[bounds[u] : bounds[u + 1]].tobytes() for u in range(n_units)]


def _suspects(findings: list[Finding], limit: int | None) -> tuple[dict[str, set[str]], int]:
    """The records of each substance with errors or warnings, worst substances first, at
    most ``limit`` substances; returns them and how many were left out.
    """
    suspects: dict[str, set[str]] = defaultdict(set)
    weight: dict[str, tuple[int, int]] = defaultdict(lambda: (0, 0))
    for f in findings:
        if f.severity.rank >= 1 and f.check not in _NOT_EVIDENCE and f.substance:
            suspects[f.substance].update(f.records)
            w = weight[f.substance]
            weight[f.substance] = (max(w[0], f.severity.rank), w[1] + 1)
    if limit is None or len(suspects) <= limit:
        return dict(suspects), 0
    order = sorted(suspects, key=lambda n: (-weight[n][0], -weight[n][1], n))
    return {n: suspects[n] for n in order[:limit]}, len(order) - limit


@_quiet
def hypotheses(
    ctx: AuditContext,
    findings: list[Finding],
    limit: int | None = None,
    suspects: dict[str, set[str]] | None = None,
) -> dict[str, tuple]:
    """Every single-slip candidate of every suspect record, audited (the costly part).

    ``limit`` bounds the substances diagnosed (worst first); ``suspects`` are those
    substances' records when the caller has found them already (:func:`_suspects`).

    Returns
    -------
    dict
        Substance -> (outcome as written, candidates, their outcomes), for :func:`choose`.
    """
    table = ctx.table
    if suspects is None:
        suspects = _suspects(findings, limit)[0]
    if not suspects:
        return {}
    wanted = {i for s in suspects.values() for i in s}
    row_of: dict[str, int] = {}
    for r in np.flatnonzero(table.records["id"].isin(list(wanted)).to_numpy()):
        row_of.setdefault(ctx.id(r), int(r))
    # the substance code of each suspect (from one of its rows), and the rows of those codes
    code_of = {
        name: int(ctx.codes[row_of[i]])
        for name, rids in suspects.items()
        for i in rids
        if i in row_of
    }
    members = _groups(ctx.codes, set(code_of.values()))
    as_written = dict(zip(row_of.values(), records_at(table, row_of.values()), strict=True))
    cal = CALIBRATION
    prior_kind = math.log((1.0 - cal["prior_none"]) / len(SLIP_KINDS))
    units: list[tuple[int, tuple[Change, ...]]] = []
    plan: dict[str, tuple[int, list[Candidate]]] = {}
    for name, rids in suspects.items():
        rows = sorted(row_of[i] for i in rids if i in row_of)
        if not rows:
            continue
        code = code_of[name]
        cands: list[Candidate] = []
        seen: set = set()
        sub_rows = members.get(code, np.empty(0, dtype=np.int64))
        for row in rows:
            rec = as_written[row]
            if rec.get("form") not in FORMS:
                continue
            partners = [
                (int(p), ctx.id(p))
                for p in sub_rows
                if p != row and ctx.phase_of(p) != rec["phase"]
            ]
            for c in candidates_for(rec, row, partners, prior_kind - math.log(len(rows))):
                key = (c.kind, frozenset(c.changes))
                if key in seen:  # a phase swap is proposed from both of its records
                    continue
                seen.add(key)
                cands.append(c)
        plan[name] = (len(units), cands)
        units.append((code, ()))
        units.extend((code, c.changes) for c in cands)
    # Screening: the continuous evidence of every candidate (arrays only, no findings); the
    # checks then run on the best few of each substance. A screened-out candidate still
    # counts in the normalization with its evidence alone -- an upper bound on its weight, so
    # the confidence of the chosen fix can only be understated by the screening.
    screened = _audit_units(table, ctx, units, checks=False)
    cal = CALIBRATION
    _prime_scores(screened, cal)
    units2: list[tuple[int, tuple[Change, ...]]] = []
    plan2: dict[str, tuple[int, list[Candidate], list]] = {}
    for name, (start, cands) in plan.items():
        outs = screened[start + 1 : start + 1 + len(cands)]
        rank = sorted(
            range(len(cands)),
            key=lambda k: -(cands[k].log_prior - outs[k].score(cal) / (2 * cal["temperature"])),
        )
        keep = sorted(rank[:_VERIFIED])
        dropped = [(cands[k].log_prior, outs[k]) for k in rank[_VERIFIED:]]
        plan2[name] = (len(units2), [cands[k] for k in keep], dropped)
        units2.append(units[start])
        units2.extend(units[start + 1 + k] for k in keep)
    outcomes = _audit_units(table, ctx, units2)
    return {
        name: (outcomes[start], cands, outcomes[start + 1 : start + 1 + len(cands)], dropped)
        for name, (start, cands, dropped) in plan2.items()
    }


@_quiet
def diagnose(
    ctx: AuditContext,
    findings: list[Finding],
    calibration: dict | None = None,
    limit: int | None = None,
    suspects: dict[str, set[str]] | None = None,
) -> dict[str, dict]:
    """The best single-slip fix for each substance with errors or warnings.

    Parameters
    ----------
    ctx : AuditContext
        The audit's context (the table, its curves and the policy).
    findings : list of Finding
        The audit's findings.
    calibration : dict, optional
        Scoring constants; :data:`CALIBRATION` by default.
    limit : int, optional
        Diagnose at most this many substances, those with errors and most findings first.
    suspects : dict, optional
        Those substances' suspect record ids, when already found (:func:`_suspects`).

    Returns
    -------
    dict
        Substance -> ``{"suggestion": dict or None, "clears": set of finding keys}``.
    """
    return {
        name: choose(ctx, h, calibration)
        for name, h in hypotheses(ctx, findings, limit, suspects).items()
    }


@_quiet
def choose(ctx: AuditContext, hypothesis: tuple, calibration: dict | None = None) -> dict:
    """Weigh the audited candidates of one substance (from :func:`hypotheses`) and return
    ``{"suggestion": dict or None, "clears": set of finding keys, "none": float}``.
    """
    cal = {**CALIBRATION, **(calibration or {})}
    base, cands, outs, dropped = hypothesis
    T = cal["temperature"]
    before = _errors_and_warnings(base)
    if not cands:
        return {"suggestion": None, "clears": set(), "none": 1.0}
    # A fix that creates an error the records as written do not have (a pole moved into
    # the range, a range made invalid, a slope made negative) is disqualified outright: it
    # is not a capped penalty that the substance's other problems could outweigh.
    errors_before = {_key(f) for f in base.findings if f.severity is Severity.error}
    harmful = [
        any(f.severity is Severity.error and _key(f) not in errors_before for f in o.findings)
        for o in outs
    ]
    # hypotheses: no single slip (the records as written), and each verified candidate
    logw = np.array(
        [math.log(cal["prior_none"]) - base.score(cal) / (2 * T)]
        + [
            -math.inf if bad else c.log_prior - o.score(cal) / (2 * T)
            for c, o, bad in zip(cands, outs, harmful, strict=True)
        ]
    )
    # Screened-out candidates: one whose correction is equivalent to a verified one (same
    # curves, ranges and phases, so the same evidence) takes that one's score and joins its
    # group; the others enter the normalization with an upper bound of their weight.
    verified = {}
    for k, o in enumerate(outs):
        if not harmful[k]:
            verified.setdefault(o.key, logw[1 + k] - cands[k].log_prior)
    joined: dict[bytes, list[float]] = defaultdict(list)
    rest = []
    for lp, o in dropped:
        if o.key in verified:
            joined[o.key].append(lp + verified[o.key])
        else:
            rest.append(lp - o.score(cal) / (2 * T))
    extra = [w for ws in joined.values() for w in ws]
    z = _logsumexp(np.concatenate([logw, rest, extra]))
    post = np.exp(logw - z)
    # merge equivalent corrections (same curves, ranges and phases)
    order = np.argsort(-post[1:])
    groups: dict[bytes, list[int]] = {}
    for k in order:
        if post[1 + k] < 1e-4:
            break
        groups.setdefault(outs[k].key, []).append(int(k))
    ranked = sorted(
        (
            (sum(post[1 + k] for k in ks) + sum(math.exp(w - z) for w in joined[key]), ks)
            for key, ks in groups.items()
        ),
        key=lambda g: -g[0],
    )
    if not ranked or ranked[0][0] < max(cal["min_confidence"], post[0]):
        return {"suggestion": None, "clears": set(), "none": float(post[0])}
    raw, ks = ranked[0]
    # equivalent fixes: the one the evidence fits best (to rounding), then the likelier kind,
    # then the first generated (Torr before mmHg)
    best = min(ks, key=lambda k: (round(outs[k].score(cal), 3), -cands[k].log_prior, k))
    cleared = before - _errors_and_warnings(outs[best])
    if not cleared & errors_before:
        # warnings alone (a range gap, a small heat-capacity excursion) are no evidence of a
        # transcription slip: a fix that clears no error is not suggested
        return {"suggestion": None, "clears": set(), "none": float(post[0])}
    if cal["require_clear"]:
        # a fix must clear the errors on the record it corrects: one that leaves them is at
        # best part of the story, and is not suggested
        rid = ctx.id(cands[best].row)
        if any(
            f.severity is Severity.error and rid in f.records and _key(f) in before
            for f in outs[best].findings
        ):
            return {"suggestion": None, "clears": set(), "none": float(post[0])}
    sug = _suggestion(ctx, cands[best], outs[best], _stated(raw, cal), cleared, before, ks, cands)
    if len(ranked) > 1 and ranked[1][0] >= 0.5 * raw:  # a close runner-up is reported too
        raw2, ks2 = ranked[1]
        k2 = ks2[0]
        c2 = _stated(raw2, cal)
        cleared2 = before - _errors_and_warnings(outs[k2])
        sug["runner_up"] = _suggestion(ctx, cands[k2], outs[k2], c2, cleared2, before, ks2, cands)
        sug["explanation"] += f" Close runner-up ({c2:.2f}): {cands[k2].label}."
    return {"suggestion": sug, "clears": cleared, "none": float(post[0])}


def _stated(p: float, cal: dict) -> float:
    """The confidence stated for a posterior ``p``: logit(c) = a logit(p) + b, with a and b
    fitted on held-out labelled cases (Platt scaling) so that c means what it says.
    """
    p = min(max(float(p), 1e-12), 1 - 1e-12)
    z = cal["logit_scale"] * math.log(p / (1 - p)) + cal["logit_shift"]
    return 1.0 / (1.0 + math.exp(-z))


def _errors_and_warnings(out: _Outcome) -> set:
    """The identities of an outcome's errors and warnings."""
    return {_key(f) for f in out.findings if f.severity.rank >= 1}


def _suggestion(
    ctx: AuditContext,
    cand: Candidate,
    out: _Outcome,
    conf: float,
    cleared: set,
    before: set,
    group: list[int],
    cands: list[Candidate],
) -> dict:
    """The suggestion of one fix, in the output contract's form."""
    rid = ctx.id(cand.row)
    corrected = {ch.field: ch.value for ch in cand.changes if ch.row == cand.row}
    texts = {ch.field: ch.text for ch in cand.changes if ch.row == cand.row and ch.text}
    sug: dict = {
        "kind": cand.kind,
        "record": rid,
        "corrected": corrected,
        "confidence": round(float(conf), 3),
        "explanation": "",
        "location": ctx.location(cand.row),
    }
    if texts:
        sug["corrected_text"] = texts
    others = [ch for ch in cand.changes if ch.row != cand.row]
    if others:
        sug["also"] = [
            {
                "record": ctx.id(ch.row),
                "corrected": {ch.field: ch.value},
                "location": ctx.location(ch.row),
            }
            for ch in others
        ]
    remaining = _errors_and_warnings(out)
    n_before = len(before)
    if conf >= 0.8:
        lead = "Almost certainly"
    elif conf >= 0.5:
        lead = "Probably"
    else:
        lead = "Possibly (the evidence does not single out one fix)"
    text = f"{lead} {cand.label} [{cand.kind}, confidence {conf:.2f}]."
    if n_before:
        text += (
            f" With that fixed, {len(cleared)} of the {n_before} error(s) and warning(s) on "
            f"{ctx.substance_of(cand.row)} clear"
            + (
                f"; {len(remaining)} {'remains' if len(remaining) == 1 else 'remain'}"
                if remaining
                else " and none remain."
            )
        )
        if remaining:  # what the fix does not explain, by name
            named = [f"{check} ({', '.join(ids)})" for check, ids in sorted(remaining)]
            more = f" and {len(named) - 3} more" if len(named) > 3 else ""
            text += f", which it does not explain: {'; '.join(named[:3])}{more}."
    alt = sorted({cands[k].label for k in group if cands[k].label != cand.label})
    if alt:
        text += f" Equivalent: {alt[0]}."
    sug["explanation"] = text
    return sug


#: Substances diagnosed in one audit by default (the cost per substance is in
#: docs/performance.md), so a table whose every substance is broken still finishes in
#: seconds; the rest are counted in the summary.
DIAGNOSE_LIMIT = 1000


@_quiet
def attach_suggestions(
    ctx: AuditContext, findings: list[Finding], limit: int = DIAGNOSE_LIMIT
) -> tuple[list[Finding], int]:
    """Findings with the diagnosis attached, and the number of substances left undiagnosed.

    Each error or warning that the best fix of its substance clears, or that names the
    corrected record, carries it as ``suggestion``. A finding on several records that the
    fix singles one of out points at that one (its file and line), not at the first named:
    a pair's error lands on the suspect, not on its clean partner.
    """
    suspects, skipped = _suspects(findings, limit)
    diag = diagnose(ctx, findings, limit=limit, suspects=suspects)
    if not diag:
        return findings, skipped
    out = []
    for f in findings:
        d = diag.get(f.substance)
        sug = d["suggestion"] if d else None
        if (
            sug is not None
            and f.severity.rank >= 1
            and (_key(f) in d["clears"] or sug["record"] in f.records)
        ):
            where = sug["location"] if sug["record"] in f.records else {}
            f = replace(
                f, suggestion=sug, file=where.get("file", f.file), line=where.get("line", f.line)
            )
        out.append(f)
    return out, skipped
