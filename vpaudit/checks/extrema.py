"""The extrema of each record's implied enthalpy dH(T), heat-capacity change dCp(T) and
ln P over its validity range: exact for the log-linear and Antoine forms (the ends and the
analytic stationary points), on a grid for the Wagner forms.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from ..constants import R
from ..equations.engine import Curves, evaluate, heat_capacity_from, temperature_at
from ..equations.families import BY_CODE

__all__ = ["RangeExtrema", "extrema_over_ranges", "sampled"]

#: Grid points inside a Wagner curve's range (plus both ends).
_WAGNER_GRID = 64


@dataclass(frozen=True)
class RangeExtrema:
    """Per record (row i is record i; NaN where the record is not evaluable).

    Attributes
    ----------
    h_min : ndarray
        Least implied enthalpy of the phase change over the range [J/mol]; ``h_min_T``
        where it is [K].
    y_min, y_max : ndarray
        Least and greatest ln(P/Pa) over the range.
    cp_min, cp_max : ndarray
        Least and greatest implied dCp [J/(mol K)] over the near-ideal part of the range,
        ``cp_lo`` to ``cp_hi`` [K]; ``cp_max_T`` where the greatest is [K].
    """

    h_min: np.ndarray
    h_min_T: np.ndarray  # noqa: N815  (a temperature)
    y_min: np.ndarray
    y_max: np.ndarray
    cp_min: np.ndarray
    cp_max: np.ndarray
    cp_max_T: np.ndarray  # noqa: N815
    cp_lo: np.ndarray
    cp_hi: np.ndarray

    @cached_property
    def log_slope(self) -> np.ndarray:
        """The curve's slope on log-log axes, d ln P/d ln T = dH/(R T), where its implied
        enthalpy is least [-]: the slope checks' measure of how flat a curve is.
        """
        with np.errstate(invalid="ignore", divide="ignore"):
            return self.h_min / (R * self.h_min_T)


def extrema_over_ranges(
    curves: Curves,
    evaluable: np.ndarray,
    ln_p_max: float,
    t_crit: np.ndarray | None,
    block_rows: int,
    closed_form: bool = True,
) -> RangeExtrema:
    """Exact least dH(T) and extrema of dCp(T) and ln P over each record's range.

    dH and ln P are taken over the whole range. dCp is taken only over the part where the
    vapour is near-ideal, P <= ``max_pressure`` of ``heat-capacity-sign`` (10 kPa by
    default) and T <= 0.7 Tc where Tc is known: above, the slope gives dH/dZ, whose
    temperature derivative is not dCp. Keys ``cp_lo``/``cp_hi`` give that sub-range; NaN
    where the record has none.

    Log-linear and Antoine curves: ends of the range plus the analytic stationary points
    (dH is stationary where dCp = 0: T^E = -C/(D E (E+1)); the Antoine dCp where
    T = C'/2). Wagner curves: a 64-point grid plus the ends. Log-linear curves without a
    D term (the common case) are reduced in closed form over whole columns
    (:func:`_plain_extrema`); ``closed_form=False`` sends them through the blocks like the
    others (for the test that compares the two).
    """
    n = evaluable.size
    out = {
        k: np.full(n, np.nan)
        for k in (
            "h_min",
            "h_min_T",
            "y_min",
            "y_max",
            "cp_min",
            "cp_max",
            "cp_max_T",
            "cp_lo",
            "cp_hi",
        )
    }
    rows = np.flatnonzero(evaluable)
    if rows.size == 0:
        return RangeExtrema(**out)
    c = curves if rows.size == n else curves.take(rows)  # no copy when all are
    y_lo = np.empty(rows.size)
    y_hi = np.empty(rows.size)
    simple = c.plain
    plain = np.flatnonzero(simple) if closed_form else None
    if plain is not None:  # in blocks too: fresh pages cost more than the arithmetic
        for a in range(0, plain.size, block_rows):
            part = plain[a : a + block_rows]
            y_lo[part], y_hi[part] = _plain_extrema(c, part, rows[part], out)
    blocks = list(_blocks(c, simple, block_rows, plain=not closed_form))
    for part in blocks:  # one block at a time: temporaries stay block-sized
        cb = c.take(part)
        r = rows[part]
        h, ts, y, _ = sampled(cb, cb.t_min, cb.t_max, need_cp=False)
        k = np.arange(part.size)
        with np.errstate(invalid="ignore"):
            hm = np.argmin(np.where(np.isnan(h), np.inf, h), axis=1)
            out["h_min"][r] = np.where(np.isnan(h).any(axis=1), np.nan, h[k, hm])
            out["h_min_T"][r] = ts[k, hm]
            finite = np.isfinite(y).all(axis=1)
            out["y_min"][r] = np.where(finite, y.min(axis=1), np.nan)
            out["y_max"][r] = np.where(finite, y.max(axis=1), np.nan)
        wagner = cb.is_wagner[0]  # a block holds one kind of curve (_blocks)
        y_lo[part] = y[:, 0]  # the ends are sampled first (a grid: first and last)
        y_hi[part] = y[:, -1] if wagner else y[:, 1]
    # The near-ideal part of the range, for dCp: up to where P reaches the limit (solved
    # for all records at once: the root finder's cost is per call, not per record).
    hi = c.t_max.copy()
    with np.errstate(invalid="ignore"):
        straddle = np.flatnonzero((y_lo <= ln_p_max) & (y_hi > ln_p_max))
    if straddle.size:
        t_cut = temperature_at(c.take(straddle), ln_p_max)
        hi[straddle] = np.where(np.isfinite(t_cut), t_cut, c.t_max[straddle])
    if t_crit is not None:  # else every Tc is NaN and fmin keeps hi
        hi = np.fmin(hi, 0.7 * t_crit[rows])
    with np.errstate(invalid="ignore"):
        ideal = (y_lo <= ln_p_max) & (hi > c.t_min)
    if plain is not None and plain.size:  # dCp = R C: the same at every temperature
        sub = plain[ideal[plain]]
        rs = rows[sub]
        cp = R * c.params[sub, 2]
        lo_t = c.t_min[sub]
        out["cp_min"][rs] = out["cp_max"][rs] = cp
        out["cp_max_T"][rs] = lo_t  # the first, as argmax takes
        out["cp_lo"][rs], out["cp_hi"][rs] = lo_t, hi[sub]
    for part in blocks:
        sub = part[ideal[part]]
        if not sub.size:
            continue
        cs = c.take(sub)
        _, tcp, _, cp = sampled(cs, cs.t_min, hi[sub], need_h=False)
        j = np.arange(sub.size)
        with np.errstate(invalid="ignore"):
            lo_i = np.argmin(np.where(np.isnan(cp), np.inf, cp), axis=1)
            hi_i = np.argmax(np.where(np.isnan(cp), -np.inf, cp), axis=1)
        rs = rows[sub]
        out["cp_min"][rs] = cp[j, lo_i]
        out["cp_max"][rs], out["cp_max_T"][rs] = cp[j, hi_i], tcp[j, hi_i]
        out["cp_lo"][rs], out["cp_hi"][rs] = cs.t_min, hi[sub]
    return RangeExtrema(**out)


def sampled(c: Curves, lo: np.ndarray, hi: np.ndarray, need_h: bool = True, need_cp: bool = True):
    """dH, the temperatures, ln P and dCp at the candidate extrema of each curve in
    [lo, hi]: the ends (columns 0 and 1, or first and last for a grid) and the analytic
    stationary points; Wagner curves get a grid (66 columns) and are evaluated apart, so
    other forms do not pay for it.

    Where no curve has a stationary point in its form (a log-linear curve without a D
    term, the common case) the ends alone are taken, in closed form: dH = R (C T - B)
    is linear in T and dCp = R C constant, so nothing but ln P needs a logarithm. The
    quantities not asked for (``need_h``, ``need_cp``) are None on that path.
    """
    m = c.family.size
    p = c.params
    if c.plain.all():  # also the empty case
        ts = np.column_stack([lo, hi])
        a, b, cc = (p[:, i : i + 1] for i in range(3))
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            y = a + b * (1.0 / ts) + cc * np.log(ts)  # as the engine evaluates it
            h = R * (cc * ts - b) if need_h else None
            cp = np.broadcast_to(R * cc, ts.shape) if need_cp else None
        return h, ts, y, cp
    wag = c.is_wagner
    if wag.any():
        width = _WAGNER_GRID + 2
        ts = np.empty((m, width))
        frac = np.linspace(0.0, 1.0, width)[None, :]
        ts[wag] = lo[wag, None] + (hi - lo)[wag, None] * frac
    rest = ~wag
    if rest.any():
        p = p[rest]
        fam = c.family[rest]
        # each family's stationary points in closed form (a Wagner curve has none: grid)
        inner = []
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            for code, family in BY_CODE.items():
                t_st = family.stationary(p)
                if t_st is not None:
                    t_st = np.where(fam == code, t_st, np.nan)
                    if not np.isnan(t_st).all():
                        inner.append(t_st)
        l_r, h_r = lo[rest], hi[rest]
        cand = np.column_stack([l_r, h_r, *inner])
        if inner:
            cand = np.where(np.isfinite(cand), cand, l_r[:, None])
            cand = np.clip(cand, l_r[:, None], h_r[:, None])
        if wag.any():
            ts[rest] = np.pad(cand, ((0, 0), (0, ts.shape[1] - cand.shape[1])), mode="edge")
        else:
            ts = cand
    y, y1, y2 = evaluate(c, ts)
    return R * ts * ts * y1, ts, y, heat_capacity_from(ts, y1, y2)


def _blocks(c: Curves, simple: np.ndarray, block_rows: int, plain: bool = True):
    """Index blocks of at most ``block_rows`` rows of one kind each: log-linear curves without a D
    term (``simple``; taken in closed form, left out with ``plain=False``), the other
    log-linear and Antoine curves (ends and stationary points), Wagner curves (a grid).
    """
    wagner = c.is_wagner
    groups = [np.flatnonzero(~simple & ~wagner), np.flatnonzero(wagner)]
    if plain:
        groups.insert(0, np.flatnonzero(simple))
    for group in groups:
        for a in range(0, group.size, block_rows):
            yield group[a : a + block_rows]


def _plain_extrema(c: Curves, part: np.ndarray, rows: np.ndarray, out: dict):
    """Range extrema of the log-linear curves ``part`` of ``c`` (no D term), whose records
    are ``rows``, written into ``out``; returns ln P at the two ends of the ranges.

    y = A + B/T + C ln T has dH = R (C T - B), linear in T, so dH and ln P (monotone
    wherever dH keeps its sign, and taken at the ends as for the other forms) have their
    extrema at the range ends. These are the reductions the blocks make over two sampled
    columns, done over whole 1-D columns: the same values, to the bit, at a fraction of
    the cost (a test compares the two paths).
    """
    a, b, cc = (c.params[part, i] for i in range(3))
    lo, hi = c.t_min[part], c.t_max[part]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        y_lo = a + b * (1.0 / lo) + cc * np.log(lo)  # as the engine evaluates it
        y_hi = a + b * (1.0 / hi) + cc * np.log(hi)
        h_lo = R * (cc * lo - b)
        h_hi = R * (cc * hi - b)
        nan_lo, nan_hi = np.isnan(h_lo), np.isnan(h_hi)
        # argmin over (lo, hi) with NaN as +inf: the high end only where strictly lower
        at_hi = np.where(nan_hi, np.inf, h_hi) < np.where(nan_lo, np.inf, h_lo)
        out["h_min"][rows] = np.where(nan_lo | nan_hi, np.nan, np.where(at_hi, h_hi, h_lo))
        out["h_min_T"][rows] = np.where(at_hi, hi, lo)
        finite = np.isfinite(y_lo) & np.isfinite(y_hi)
        out["y_min"][rows] = np.where(finite, np.minimum(y_lo, y_hi), np.nan)
        out["y_max"][rows] = np.where(finite, np.maximum(y_lo, y_hi), np.nan)
    return y_lo, y_hi
