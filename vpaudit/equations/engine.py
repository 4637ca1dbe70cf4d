"""Canonical evaluation of vapour-pressure equations over numpy arrays.

Every record is turned once into canonical parameters of its *family*, in base e, pascal
and kelvin:

* ``log-linear`` (two-term, three-term, four-term-t, four-term-cube, power-term) -- all are
  y = A + B/T + C ln T + D T^E, with E fixed at 1 (four-term-t) or -3 (four-term-cube) and
  D = 0 where the form has no D term;
* ``antoine`` -- y = A - B/(T + C) with T in kelvin;
* ``wagner`` -- y = ln Pc + (Tc/T)(a tau + b tau^1.5 + c tau^e3 + d tau^e4), tau = 1 - T/Tc.

Evaluation returns y = ln(P/Pa) and its analytic first and second derivatives with respect
to T, from which the Clausius-Clapeyron relation gives the implied (apparent) enthalpy
dH = R T^2 y' and heat-capacity change dCp = R (2 T y' + T^2 y'').

The evaluation itself is each family's (:mod:`.families`).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .._columns import codes, eq, lookup
from ..constants import R
from ..units import PRESSURE_UNITS, TEMPERATURE_UNITS
from .families import BY_CODE, FAMILIES
from .families._common import Written
from .forms import FORMS

__all__ = [
    "ANTOINE",
    "FAMILY_CODES",
    "LOG_LINEAR",
    "WAGNER_FAMILY",
    "Curves",
    "curves_from_frame",
    "evaluate",
    "evaluate_rows",
    "ln_pressure",
    "enthalpy",
    "heat_capacity_change",
    "temperature_at",
    "bracketed_root",
]

FAMILY_CODES = {name: fam.CODE for name, fam in FAMILIES.items()}
#: The family codes by name, for code that asks what kind a curve is.
LOG_LINEAR, ANTOINE, WAGNER_FAMILY = (FAMILY_CODES[f] for f in ("log-linear", "antoine", "wagner"))
LN10 = float(np.log(10.0))
NPARAM = 8
#: Curves per block when :func:`evaluate` gets one temperature per curve.
_BLOCK = 65536


@dataclass(frozen=True)
class Curves:
    """Canonical parameters of n records, ready for vectorized evaluation.

    Attributes
    ----------
    family : ndarray of int8, shape (n,)
        0 log-linear, 1 Antoine, 2 Wagner (:data:`FAMILY_CODES`).
    params : ndarray, shape (n, 8)
        Canonical parameters (module docstring); unused slots are 0. [base e, Pa, K]
    t_min, t_max : ndarray, shape (n,)
        Validity range. [K]
    """

    family: np.ndarray
    params: np.ndarray
    t_min: np.ndarray
    t_max: np.ndarray

    def __len__(self) -> int:
        return len(self.family)

    def take(self, rows) -> Curves:
        """Return the curves of ``rows`` (an index array or boolean mask)."""
        return Curves(self.family[rows], self.params[rows], self.t_min[rows], self.t_max[rows])

    @property
    def is_wagner(self) -> np.ndarray:
        """Which curves are Wagner equations (they carry their own Tc and Pc)."""
        return self.family == WAGNER_FAMILY

    @property
    def plain(self) -> np.ndarray:
        """Which curves are log-linear without a D term, y = A + B/T + C ln T: their
        extrema and crossings have closed forms.
        """
        return (self.family == LOG_LINEAR) & (self.params[:, 3] == 0)

    @property
    def power_term(self) -> np.ndarray:
        """Which curves are log-linear with a D T^E term (D, E in slots 3 and 4, canonical:
        the term is in ln P), y = A + B/T + C ln T + D T^E.
        """
        return (self.family == LOG_LINEAR) & (self.params[:, 3] != 0)

    @property
    def own_t_crit(self) -> np.ndarray:
        """Each curve's own critical temperature (Wagner equations), NaN elsewhere. [K]"""
        return np.where(self.is_wagner, self.params[:, 6], np.nan)

    @property
    def own_ln_p_crit(self) -> np.ndarray:
        """Each curve's own ln(Pc/Pa) (Wagner equations), NaN elsewhere."""
        return np.where(self.is_wagner, self.params[:, 7], np.nan)


def _column(frame: pd.DataFrame, name: str) -> np.ndarray:
    return frame[name].to_numpy(dtype=float, na_value=np.nan)


def curves_from_frame(records: pd.DataFrame) -> Curves:
    """Build canonical :class:`Curves` from a records frame, column-wise.

    Parameters
    ----------
    records : pandas.DataFrame
        Columns ``form``, ``log_base``, ``pressure_unit``, ``temperature_unit``, ``A``..``E``,
        ``t_crit``, ``p_crit``, ``t_min``, ``t_max`` as read from a table.

    Returns
    -------
    Curves
        One row per record, in the frame's order.

    Notes
    -----
    A base-10 log-linear record becomes base e by multiplying A, B and D by ln 10 while C
    (the log T coefficient) is unchanged, since ln 10 * C * log10 T = C ln T. A pressure unit
    adds ln(factor) to the constant term. An Antoine record in degC or degF, with
    T = s theta + o, becomes B' = s B and C' = s C - o (degC: C' = C - 273.15).
    """
    n = len(records)
    lnb = np.where(eq(records["log_base"], "10"), LN10, 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        lnf = np.log(lookup(records["pressure_unit"], PRESSURE_UNITS))
    tunit = records["temperature_unit"]
    scale = lookup(tunit, {u: v[0] for u, v in TEMPERATURE_UNITS.items()}, 1.0)
    offset = lookup(tunit, {u: v[1] for u, v in TEMPERATURE_UNITS.items()}, 0.0)
    form_code, form_names = codes(records["form"])
    # What each form needs, as small tables indexed by form code (the last entry for an
    # empty or unknown form, whose curve stays all zeros and family 0).
    specs = [FORMS.get(name) for name in form_names] + [None]
    known_t = np.array([sp is not None for sp in specs])
    family_t = np.array([FAMILY_CODES[sp.family] if sp else 0 for sp in specs], dtype=np.int8)
    form_t = tuple(sp.name if sp else "" for sp in specs)
    has_d_t = np.array([bool(sp) and "D" in sp.coefficients for sp in specs])
    exponent_t = np.array(
        [np.nan if not sp or sp.exponent is None else sp.exponent for sp in specs]
    )
    k = np.where(form_code >= 0, form_code, len(form_names))
    family = family_t[k]
    columns = {c: _column(records, c) for c in ("A", "B", "C", "D", "E", "t_crit", "p_crit")}
    present = [code for code in BY_CODE if (family_t[:-1][known_t[:-1]] == code).any()]
    need_d = bool(has_d_t[:-1].any())
    # Column-major: each parameter is one contiguous column, so the checks read A, B or C
    # of all curves without striding over the other seven, and the slots no record uses (D
    # and E without a D-term form, the Wagner slots without a Wagner record) are never
    # written: their zero pages are never touched, 80 of the 128 MB at 2 x 10^6 records (a
    # fresh page costs more than the arithmetic on this project's machines).
    params = np.zeros((n, NPARAM), order="F")
    # Block by block, so that every temporary stays small and is reused; each family module
    # makes its records' parameters (:func:`.families.log_linear.canonical`, ...).
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        for a in range(0, n, _BLOCK):
            sl = slice(a, min(a + _BLOCK, n))
            kk = k[sl]
            fam, known = family[sl], known_t[kk]
            block = {c: col[sl] for c, col in columns.items()}
            for c in "ABCDE" if need_d else "ABC":  # D and E only where a form has them
                block[c] = np.nan_to_num(block[c])
            written = Written(
                kk,
                form_t,
                has_d_t[kk],
                exponent_t[kk],
                *(block[c] for c in ("A", "B", "C", "D", "E", "t_crit", "p_crit")),
                lnb[sl],
                lnf[sl],
                scale[sl],
                offset[sl],
            )
            p = params[sl]
            for code in present:
                mine = known & (fam == code)
                if not mine.any():
                    continue
                every = mine.all()
                for slot, values in BY_CODE[code].canonical(written).items():
                    if every:
                        p[:, slot] = values
                    else:
                        np.copyto(p[:, slot], values, where=mine)
    t_min = _column(records, "t_min") * scale + offset
    t_max = _column(records, "t_max") * scale + offset
    return Curves(family, params, t_min, t_max)


#: The evaluator of each family code (one module per family: :mod:`.families`).
_EVALUATORS = {code: fam.evaluate for code, fam in BY_CODE.items()}


def evaluate(curves: Curves, temperature, order: int = 2):
    """Evaluate y = ln(P/Pa) and its derivatives for every curve.

    Parameters
    ----------
    curves : Curves
        n curves.
    temperature : array_like, shape (n,) or (n, m)
        Temperatures, one row per curve (broadcast from a scalar or shape (m,) too). [K]
    order : int
        0 for y only; 1 or 2 for y, dy/dT and d2y/dT2.

    Returns
    -------
    y, dy, d2y : ndarray, shape of ``temperature``
        ln(P/Pa) [-], its first [1/K] and second [1/K^2] derivatives (None when order is 0).
    """
    n = len(curves)
    t = np.asarray(temperature, dtype=float)
    if t.ndim == 0:
        t = np.full(n, float(t))
    elif t.ndim == 1 and t.shape[0] != n:
        t = np.broadcast_to(t, (n, t.shape[0]))
    t = np.asarray(t, dtype=float)
    y = np.empty(t.shape)
    y1 = np.empty(t.shape) if order else None
    y2 = np.empty(t.shape) if order else None
    if t.ndim == 1 and n > _BLOCK:  # long inputs a block at a time: small temporaries
        return _blockwise(curves, n, t, order, (y, y1, y2), lambda a, b: slice(a, b))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        for code, fn in _EVALUATORS.items():
            rows = np.flatnonzero(curves.family == code)
            if rows.size == 0:
                continue
            if rows.size == n:
                a, b, c = fn(curves.params, t, order)
                y[...] = a
                if order:
                    y1[...], y2[...] = b, c
                continue
            a, b, c = fn(curves.params[rows], t[rows], order)
            y[rows] = a
            if order:
                y1[rows], y2[rows] = b, c
    return y, y1, y2


def _blockwise(curves: Curves, size: int, t: np.ndarray, order: int, out, select):
    """Fill ``out`` (y, y', y'') block by block; ``select(a, b)`` picks the curves of
    positions a..b (a slice, or an index array's part).
    """
    y, y1, y2 = out
    for a in range(0, size, _BLOCK):
        part = slice(a, a + _BLOCK)
        b = evaluate(curves.take(select(a, a + _BLOCK)), t[part], order)
        y[part] = b[0]
        if order:
            y1[part], y2[part] = b[1], b[2]
    return y, y1, y2


def evaluate_rows(curves: Curves, rows: np.ndarray, temperature, order: int = 2):
    """:func:`evaluate` for the curves ``curves[rows]`` without copying them all at once.

    Parameters
    ----------
    curves : Curves
        All curves.
    rows : ndarray of int, shape (k,)
        The curves wanted (repeats allowed, e.g. the solid of every pair).
    temperature : array_like, shape (k,)
        One temperature per wanted curve. [K]
    order : int
        As for :func:`evaluate`.

    Returns
    -------
    y, dy, d2y : ndarray, shape (k,)
        As for :func:`evaluate`; the work runs in blocks, so temporaries stay small.
    """
    rows = np.asarray(rows, dtype=np.int64)
    t = np.broadcast_to(np.asarray(temperature, dtype=float), rows.shape)
    if rows.size <= _BLOCK:
        return evaluate(curves.take(rows), t, order)
    out = (np.empty(rows.size), *(np.empty(rows.size) if order else None for _ in range(2)))
    return _blockwise(curves, rows.size, t, order, out, lambda a, b: rows[a:b])


def ln_pressure(curves: Curves, temperature) -> np.ndarray:
    """Return ln(P/Pa) of every curve at ``temperature`` [K] (see :func:`evaluate`)."""
    return evaluate(curves, temperature, order=0)[0]


def enthalpy(curves: Curves, temperature) -> np.ndarray:
    """Implied (apparent) enthalpy of the phase change, dH = R T^2 d ln P/dT. [J/mol]

    Notes
    -----
    Clausius-Clapeyron with an ideal vapour and a negligible condensed volume; near the
    critical point this is dH/dZ rather than dH.
    """
    t = np.asarray(temperature, dtype=float)
    _, y1, _ = evaluate(curves, t)
    return R * np.broadcast_to(t, y1.shape) ** 2 * y1


def heat_capacity_change(curves: Curves, temperature) -> np.ndarray:
    """Implied dCp = Cp(gas) - Cp(condensed) = R (2 T y' + T^2 y''). [J/(mol K)]"""
    t = np.asarray(temperature, dtype=float)
    _, y1, y2 = evaluate(curves, t)
    return heat_capacity_from(np.broadcast_to(t, y1.shape), y1, y2)


def heat_capacity_from(t: np.ndarray, y1: np.ndarray, y2: np.ndarray) -> np.ndarray:
    """:func:`heat_capacity_change` from derivatives already evaluated: dCp = d(dH)/dT =
    R (2 T y' + T^2 y'') at ``t`` [K], y = ln(P/Pa) (Clausius-Clapeyron, dH = R T^2 y').
    [J/(mol K)]
    """
    with np.errstate(invalid="ignore", over="ignore"):
        return R * (2.0 * t * y1 + t * t * y2)


#: Relative size of a Newton step below which a change of direction is taken for
#: rounding noise (:func:`bracketed_root`).
_NOISE_STEP = 1e-10


def bracketed_root(
    fun: Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]],
    lo: np.ndarray,
    hi: np.ndarray,
    iterations: int = 80,
    xtol: float = 1e-14,
) -> np.ndarray:
    """Find one root per row of g(x) = 0 inside [lo, hi], safeguarded Newton over arrays.

    Parameters
    ----------
    fun : callable
        ``fun(x, rows) -> (g, dg/dx)`` for the rows ``rows`` (an index array) at ``x``.
    lo, hi : ndarray, shape (k,)
        Bracket ends; a row whose g does not change sign across them gets NaN.
    iterations : int
        Iteration cap (bisection alone halves the bracket each step).
    xtol : float
        Relative tolerance on x.

    Returns
    -------
    ndarray, shape (k,)
        The root of each row, NaN where there is no sign change.

    Notes
    -----
    Each step takes the Newton step from the current point when it stays strictly inside the
    bracket, and bisects otherwise; the bracket shrinks at every step, so the iteration
    converges for any continuous g with a sign change, quadratically near a simple root.
    Two cases that used to run to tens of steps end in a few: a Newton step that lands just
    past an end (a root at the end of the bracket) goes to that end instead of bisecting,
    and a tiny step back (Newton cycling in the rounding noise of g) ends the search.
    """
    a = np.array(lo, dtype=float)
    b = np.array(hi, dtype=float)
    k = a.size
    rows = np.arange(k)
    ga, _ = fun(a, rows)
    gb, _ = fun(b, rows)
    ok = np.isfinite(ga) & np.isfinite(gb) & (np.sign(ga) * np.sign(gb) <= 0)
    root = np.full(k, np.nan)
    exact_a = ok & (ga == 0)
    exact_b = ok & (gb == 0) & ~exact_a
    root[exact_a] = a[exact_a]
    root[exact_b] = b[exact_b]
    active = np.flatnonzero(ok & ~exact_a & ~exact_b)
    # Orient each bracket so that g(a) < 0 < g(b).
    flip = ga[active] > 0
    a_act, b_act = a[active].copy(), b[active].copy()
    a_act[flip], b_act[flip] = b[active][flip], a[active][flip]
    x = 0.5 * (a_act + b_act)
    last = np.zeros_like(x)  # the previous step
    for _ in range(iterations):
        if active.size == 0:
            break
        g, dg = fun(x, active)
        neg = g < 0
        a_act = np.where(neg, x, a_act)
        b_act = np.where(neg, b_act, x)
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = x - g / dg
        lo_b, hi_b = np.minimum(a_act, b_act), np.maximum(a_act, b_act)
        # A Newton step that lands on an end or just past it (by rounding, or by a
        # thousandth of the step: near a root at the end of the bracket, Newton overshoots
        # by the square of its step) goes to that end instead of being traded for a
        # bisection, which would approach such a root one halving at a time.
        slack = xtol * np.abs(x) + 1e-3 * np.abs(newton - x)
        inside = np.isfinite(newton) & (newton >= lo_b - slack) & (newton <= hi_b + slack)
        x_new = np.where(inside, np.clip(newton, lo_b, hi_b), 0.5 * (a_act + b_act))
        x_new = np.where(g == 0, x, x_new)
        step = x_new - x
        done = (
            (np.abs(step) <= xtol * np.abs(x))
            | (g == 0)
            | (np.abs(hi_b - lo_b) <= xtol * np.abs(x))
            # Newton steps near a simple root keep one direction; a tiny step back is
            # rounding noise in g, where the iterates would cycle until the cap
            | (inside & (step * last < 0) & (np.abs(step) <= _NOISE_STEP * np.abs(x)))
        )
        x = x_new
        last = step
        if done.any():
            root[active[done]] = x[done]
            keep = ~done
            active, x, a_act, b_act = active[keep], x[keep], a_act[keep], b_act[keep]
            last = last[keep]
    if active.size:
        root[active] = x
    return root


def temperature_at(curves: Curves, ln_p, t_lo=None, t_hi=None) -> np.ndarray:
    """The temperature at which each curve reaches ln(P/Pa) = ``ln_p``.

    Parameters
    ----------
    curves : Curves
        n curves.
    ln_p : array_like, shape (n,) or scalar
        Target ln(P/Pa).
    t_lo, t_hi : array_like, optional
        Search window [K]; the validity range by default. Pass a wider window to extrapolate.

    Returns
    -------
    ndarray, shape (n,)
        The temperature [K], NaN where the curve does not reach ``ln_p`` in the window.

    Notes
    -----
    Solved in x = 1/T, in which ln P is nearly linear, by :func:`bracketed_root`.
    """
    n = len(curves)
    target = np.broadcast_to(np.asarray(ln_p, dtype=float), (n,))
    lo = curves.t_min if t_lo is None else np.broadcast_to(np.asarray(t_lo, float), (n,))
    hi = curves.t_max if t_hi is None else np.broadcast_to(np.asarray(t_hi, float), (n,))

    def fun(x, rows):
        t = 1.0 / x
        y, y1, _ = evaluate(curves.take(rows), t, order=1)
        return y - target[rows], -y1 * t * t

    with np.errstate(divide="ignore", invalid="ignore"):
        x = bracketed_root(fun, 1.0 / hi, 1.0 / lo)
    return 1.0 / x
