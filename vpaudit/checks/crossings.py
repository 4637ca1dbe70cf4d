"""Solid/liquid pairs: every solid record that reaches the melting region against every
liquid record of the same substance, the crossing of their curves nearest the melting point
(a grid in 1/T, then safeguarded Newton), and both curves there.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..equations.engine import LOG_LINEAR, Curves, bracketed_root, evaluate
from ..runtime import SharedBlocks
from .joins import same_key_pairs

if TYPE_CHECKING:
    from ._context import AuditContext

__all__ = ["Pairs", "MeltingSlopes", "find_pairs", "crossings", "newton_from_end"]


@dataclass(frozen=True)
class Pairs:
    """One entry per solid/liquid pair.

    Attributes
    ----------
    solid, liquid : ndarray of int
        Record rows.
    anchor : ndarray
        Where the crossing is searched: the median of the substance's reference melting
        points, else of its triple-point temperatures, else the middle of the ranges' gap
        or overlap [K].
    tm : ndarray
        The reference melting point the pair is held to [K]: of several sources' values the
        one nearest the crossing (without one, nearest their median; the lower on a tie),
        else the triple-point temperature chosen so (NaN where there is neither).
    tm_uncertainty : ndarray
        The stated uncertainty of that value [K] (NaN where none is stated).
    checkable : ndarray of bool
        Whether neither range must be extrapolated beyond the limit to reach the anchor.
    extrapolation : ndarray
        The larger relative extrapolation of the two ranges to the anchor.
    crossings : ndarray of int
        Sign changes of y_s - y_l in the window around the anchor.
    significant_crossings : ndarray of int
        Sign changes between points where the curves differ by more than the melting-point
        tolerance.
    t_cross : ndarray
        The crossing nearest the anchor [K] (NaN where none).
    y_cross : ndarray
        ln(P/Pa) there.
    slope_diff : ndarray
        d(y_s - y_l)/dT there [1/K].
    """

    solid: np.ndarray
    liquid: np.ndarray
    anchor: np.ndarray
    tm: np.ndarray
    tm_uncertainty: np.ndarray
    checkable: np.ndarray
    extrapolation: np.ndarray
    crossings: np.ndarray
    significant_crossings: np.ndarray
    t_cross: np.ndarray
    y_cross: np.ndarray
    slope_diff: np.ndarray

    def __len__(self) -> int:
        return int(self.solid.size)


@dataclass(frozen=True)
class MeltingSlopes:
    """Both curves of every pair at ``at``: the reference melting point, else the crossing
    (1 K where there is neither; the user masks those) [K]: ln(P/Pa) (``ys``, ``yl``) and
    d ln P/dT (``s1``, ``l1``) [1/K].
    """

    at: np.ndarray
    ys: np.ndarray
    s1: np.ndarray
    yl: np.ndarray
    l1: np.ndarray


def find_pairs(
    ctx: AuditContext, share: Callable[[SharedBlocks | None], None]
) -> tuple[Pairs, MeltingSlopes]:
    """Every solid record whose range reaches the melting region against every liquid
    record of the same substance, with the crossing of their curves.

    The crossings are searched in blocks of pairs that ``share`` offers to another thread
    while they last (:meth:`AuditContext.lend_a_hand`); both curves at the melting point
    are taken in the same blocks.
    """
    p = ctx.policy.thresholds("no-crossing")
    reach = ctx.policy.thresholds("pair-not-checkable")["max_extrapolation"]
    rows = np.arange(ctx.n)
    s, lq = same_key_pairs(
        ctx.codes, rows[ctx.solid & ctx.evaluable], rows[ctx.liquid & ctx.evaluable]
    )
    t_max_s = ctx.curves.t_max[s]
    t_min_l = ctx.curves.t_min[lq]
    # where to search: the median of the melting points (the order of the rows never
    # decides), else the triple-point temperature
    tm = ctx.reference_median("melting_point", s)
    tm = np.where(np.isnan(tm), ctx.reference_median("triple_point_temperature", s), tm)
    anchor = np.where(np.isnan(tm), 0.5 * (t_max_s + t_min_l), tm)
    # Keep, per substance, the solids whose range reaches the melting region; a solid
    # modification that ends far below it (it transforms before melting) is not paired.
    if s.size:
        best = np.full(ctx.n_names, -np.inf)
        np.maximum.at(best, ctx.codes[s], t_max_s)
        keep = (t_max_s >= best[ctx.codes[s]] - 1e-9) | (t_max_s >= anchor * (1 - reach))
        s, lq, anchor, tm = s[keep], lq[keep], anchor[keep], tm[keep]
        t_max_s, t_min_l = t_max_s[keep], t_min_l[keep]
    ext_s = np.maximum(0.0, anchor - ctx.curves.t_max[s]) / anchor
    ext_s = np.maximum(ext_s, np.maximum(0.0, ctx.curves.t_min[s] - anchor) / anchor)
    ext_l = np.maximum(0.0, ctx.curves.t_min[lq] - anchor) / anchor
    ext_l = np.maximum(ext_l, np.maximum(0.0, anchor - ctx.curves.t_max[lq]) / anchor)
    extrapolation = np.maximum(ext_s, ext_l)
    checkable = extrapolation <= reach
    # Crossings in the window [anchor/(1+w), anchor*(1+w)], searched in x = 1/T, one
    # block of pairs at a time: every temporary stays block-sized.
    w = p["window"]
    k = s.size
    tol = ctx.policy.thresholds("melting-point-mismatch")["tolerance"]
    count = np.zeros(k, dtype=np.int64)
    significant = np.zeros(k, dtype=np.int64)
    t_cross, y_cross, slope_diff = (np.full(k, np.nan) for _ in range(3))
    tm_u = np.full(k, np.nan)

    # both curves at the reference melting point, else at the crossing (melting_slopes),
    # taken in the same blocks while their curves are at hand
    melt = {key: np.empty(k) for key in ("at", "ys", "s1", "yl", "l1")}

    def block(r: slice) -> None:
        cs, cl = ctx.curves.take(s[r]), ctx.curves.take(lq[r])
        count[r], significant[r], t_cross[r], y_cross[r], slope_diff[r] = crossings(
            cs, cl, anchor[r], w, int(p["grid"]), tol
        )
        tm[r], tm_u[r] = _melting_point_held(ctx, s[r], t_cross[r], anchor[r])
        at = np.where(np.isfinite(tm[r]), tm[r], t_cross[r])
        melt["at"][r] = at = np.where(np.isfinite(at), at, 1.0)
        melt["ys"][r], melt["s1"][r], _ = evaluate(cs, at, order=1)
        melt["yl"][r], melt["l1"][r], _ = evaluate(cl, at, order=1)

    # The blocks are open to another thread while they last (lend_a_hand).
    work = SharedBlocks(k, ctx.runtime.block_rows, block)
    share(work)
    try:
        work.run()
        work.wait()
    finally:
        share(None)
    pairs = Pairs(
        solid=s,
        liquid=lq,
        anchor=anchor,
        tm=tm,
        tm_uncertainty=tm_u,
        checkable=checkable,
        extrapolation=extrapolation,
        crossings=count,
        significant_crossings=significant,
        t_cross=t_cross,
        y_cross=y_cross,
        slope_diff=slope_diff,
    )
    return pairs, MeltingSlopes(**melt)


def _melting_point_held(
    ctx: AuditContext, solid: np.ndarray, t_cross: np.ndarray, anchor: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """The reference melting point [K] each pair of solid records ``solid`` is held to, and
    its stated uncertainty [K]: of the substance's melting points the one nearest the
    crossing ``t_cross``, as for a boiling point (without a crossing, the one nearest the
    ``anchor``, their median; the lower on a tie, whatever the order of the rows); else its
    triple-point temperature, chosen the same way; NaN where there is neither (or no
    uncertainty is stated).
    """
    target = np.where(np.isfinite(t_cross), t_cross, anchor)
    tm, u = ctx.nearest_values("melting_point", solid, target, lower_on_tie=True)
    none = np.flatnonzero(np.isnan(tm))
    tm[none], u[none] = ctx.nearest_values(
        "triple_point_temperature", solid[none], target[none], lower_on_tie=True
    )
    return tm, u


def crossings(
    cs: Curves,
    cl: Curves,
    anchor: np.ndarray,
    w: float,
    grid: int,
    tol: float,
    exact: bool = True,
):
    """The crossing of each solid curve ``cs`` with its liquid curve ``cl`` nearest the
    anchor, in the window [anchor/(1+w), anchor (1+w)]: sign changes of y_s - y_l on a grid
    in x = 1/T, then safeguarded Newton on the bracket nearest the anchor.

    Where y_s - y_l = A + B x - C ln x (both curves log-linear without a D term, the common
    case) the grid's verdicts follow from four of its points (:func:`_convex_crossings`),
    with the same results; ``exact=False`` scans every grid point (for the test that
    compares the two).

    Returns the number of sign changes, the number of significant ones, and at the
    crossing its temperature [K], ln P and d(y_s - y_l)/dT [1/K] (NaN without one).
    """
    x_hi = (1.0 + w) / anchor
    x_lo = 1.0 / (anchor * (1.0 + w))
    simple, joint, diff = _difference_curves(cs, cl)
    d_a, d_b, d_c = (np.ascontiguousarray(diff.params[:, i]) for i in range(3))
    k = anchor.size
    count = np.zeros(k, dtype=np.int64)
    significant = np.zeros(k, dtype=np.int64)
    lo_b = np.full(k, np.nan)
    hi_b = np.full(k, np.nan)
    root = np.full(k, np.nan)
    with np.errstate(invalid="ignore"):
        fast = (
            simple
            & np.isfinite(diff.params[:, :3]).all(axis=1)
            & (x_lo > 0)
            & (x_hi > x_lo)
            & np.isfinite(x_hi)
        )
    if not exact:
        fast[:] = False
    if fast.any():
        f = np.flatnonzero(fast)
        count[f], significant[f], root[f] = _convex_crossings(
            diff.take(f), x_lo[f], x_hi[f], 1.0 / anchor[f], grid, tol
        )
    slow = np.flatnonzero(~fast)
    if slow.size:
        count[slow], significant[slow], lo_b[slow], hi_b[slow] = _scan_crossings(
            cs.take(slow),
            cl.take(slow),
            joint[slow],
            diff.take(slow),
            x_lo[slow],
            x_hi[slow],
            1.0 / anchor[slow],
            grid,
            tol,
        )

    def fun(x, r):
        t = 1.0 / x
        g = np.empty(r.size)
        dg = np.empty(r.size)
        easy = simple[r]
        if easy.any():  # the difference curve in x = 1/T: A + B x - C ln x
            re, xe = r[easy], x[easy]
            g[easy] = d_a[re] + d_b[re] * xe - d_c[re] * np.log(xe)
            dg[easy] = d_b[re] - d_c[re] / xe
        if (~easy).any():
            rr, tt = r[~easy], t[~easy]
            ys, ys1, _ = evaluate(cs.take(rr), tt, order=1)
            yl, yl1, _ = evaluate(cl.take(rr), tt, order=1)
            g[~easy], dg[~easy] = ys - yl, -(ys1 - yl1) * tt * tt
        return g, dg

    has = slow[count[slow] > 0]
    if has.size:
        root[has] = bracketed_root(lambda x, r: fun(x, has[r]), lo_b[has], hi_b[has])
    with np.errstate(divide="ignore", invalid="ignore"):
        t_cross = 1.0 / root
        at = np.where(np.isnan(t_cross), anchor, t_cross)
        ys, ys1, _ = evaluate(cs, at, order=1)
        _, yl1, _ = evaluate(cl, at, order=1)
    none = np.isnan(t_cross)
    return (
        count,
        significant,
        t_cross,
        np.where(none, np.nan, ys),
        np.where(none, np.nan, ys1 - yl1),
    )


def _convex_crossings(diff: Curves, x_lo, x_hi, x_anchor, grid: int, tol: float):
    """:func:`_scan_crossings` and the root nearest the anchor, for difference curves
    g(x) = A + B x - C ln x, from four grid points instead of all.

    g'' = C / x^2 keeps one sign, so g is convex (C >= 0) or concave (C < 0) and so is
    its sampled sequence. A convex sequence falls to its smallest value and then rises:
    it changes sign at most once on each side of that point, its points below -tol form one
    block, and those above +tol lie before and after it. So the grid's counts follow from
    its two ends and its extreme point, which lies at one of the two grid points beside the
    stationary point x* = C/B (or at an end). Each sign change is then solved on its side
    of the extreme point, and the one whose grid cell is nearest the anchor is kept, as the
    scan keeps the bracket nearest it. Exact zeros at grid points, which the scan does not
    count as sign changes, are the one case that can differ (a test compares both paths).

    Returns
    -------
    count, significant : ndarray of int
    root : ndarray
        x = 1/T of the crossing nearest the anchor, NaN where there is none. [1/K]
    """
    k = x_lo.size
    a, b, c = (np.ascontiguousarray(diff.params[:, i]) for i in range(3))
    span = x_hi - x_lo
    last = grid - 1
    frac = np.linspace(0.0, 1.0, grid)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        u = (c / b - x_lo) / span * last  # x* in grid steps
    u = np.where(np.isfinite(u), np.clip(u, 0, last), 0.0)
    idx = np.column_stack([np.zeros(k), np.full(k, float(last)), np.floor(u), np.ceil(u)]).astype(
        np.int64
    )
    xs = x_lo[:, None] + span[:, None] * frac[idx]  # the grid's own points, bit for bit
    with np.errstate(divide="ignore", invalid="ignore"):
        f = ln_p_rows(diff, 1.0 / xs)  # as the scan evaluates them
    convex = c >= 0
    pick = np.where(convex, np.argmin(f, axis=1), np.argmax(f, axis=1))
    rows = np.arange(k)
    f_ext = f[rows, pick]
    f0, f1 = f[:, 0], f[:, 1]
    left = np.sign(f0) * np.sign(f_ext) < 0
    right = np.sign(f_ext) * np.sign(f1) < 0
    count = left.astype(np.int64) + right
    with np.errstate(invalid="ignore"):
        significant = np.where(
            convex,
            (f_ext < -tol) * ((f0 > tol).astype(np.int64) + (f1 > tol)),
            (f_ext > tol) * ((f0 < -tol).astype(np.int64) + (f1 < -tol)),
        )
    x_ext = xs[rows, pick]

    roots = np.full((k, 2), np.nan)
    for side, has, lo, hi in ((0, left, x_lo, x_ext), (1, right, x_ext, x_hi)):
        h = np.flatnonzero(has)
        if h.size:
            start, other = (lo[h], hi[h]) if side == 0 else (hi[h], lo[h])
            roots[h, side] = newton_from_end(a[h], b[h], c[h], start, other)
    # the grid cell of each root, and the distance of that cell's middle to the anchor
    with np.errstate(invalid="ignore"):
        cell = np.clip(np.floor((roots - x_lo[:, None]) / span[:, None] * last), 0, last - 1)
    cell = np.where(np.isfinite(cell), cell, 0).astype(np.int64)
    x_a = x_lo[:, None] + span[:, None] * frac[cell]
    x_b = x_lo[:, None] + span[:, None] * frac[cell + 1]
    dist = np.where(np.isfinite(roots), np.abs(0.5 * (x_b + x_a) - x_anchor[:, None]), np.inf)
    root = np.where(dist[:, 1] < dist[:, 0], roots[:, 1], roots[:, 0])
    return count, significant, root


def newton_from_end(a, b, c, start, other, iterations: int = 40, xtol: float = 1e-14):
    """The root of g(x) = a + b x - c ln x between ``start`` and ``other``, by Newton's
    method from ``start``, for a g that is convex or concave on the bracket with g(start)
    on the side of its curvature (g(start) g'' > 0).

    Fourier's condition: from such an end the tangent lies between the curve and the
    chord, so each Newton step lands between the current point and the root, and the
    iterates approach the root monotonically without leaving the bracket. No safeguard is
    needed, so a step is six array operations instead of the twenty of
    :func:`bracketed_root`, which takes over for a row that has not converged after
    ``iterations`` steps (a near-double root, where Newton is slow), from its last
    iterate. In :func:`_convex_crossings` a bracket always starts from its outer end: the
    extreme point lies between the two sign changes, and g there has the curvature's
    opposite sign.
    """
    x = np.array(start, dtype=float)
    active = np.arange(x.size)
    xa, aa, ba, ca = x, a, b, c
    way = np.sign(other - start)  # the direction of every step
    wa = way
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        for _ in range(iterations):
            step = (aa + ba * xa - ca * np.log(xa)) / (ba - ca / xa)
            # the steps go one way until g is rounding noise: a step back (or none) ends
            back = ~(step * wa < 0)  # also a NaN step (checked below)
            xa = np.where(back, xa, xa - step)
            done = back | (np.abs(step) <= xtol * np.abs(xa))
            if done.any():
                x[active[done]] = xa[done]
                keep = ~done
                active, xa, wa = active[keep], xa[keep], wa[keep]
                aa, ba, ca = aa[keep], ba[keep], ca[keep]
            if not active.size:
                break
        lo, hi = np.minimum(start, other), np.maximum(start, other)
        g_x = a + b * x - c * np.log(x)
        # not converged, or not a root inside the bracket (not expected): the bracket's
        # own safeguarded search
        bad = np.flatnonzero(~((x >= lo) & (x <= hi) & np.isfinite(g_x)))
        redo = np.union1d(active, bad)
        if redo.size:
            x[redo] = bracketed_root(
                lambda xx, r: (
                    a[redo[r]] + b[redo[r]] * xx - c[redo[r]] * np.log(xx),
                    b[redo[r]] - c[redo[r]] / xx,
                ),
                start[redo],
                other[redo],
            )
    return x


def _difference_curves(cs: Curves, cl: Curves) -> tuple[np.ndarray, np.ndarray, Curves]:
    """Where both curves are log-linear, with at most one D T^E term between them or the
    same exponent E in both, y_s - y_l is itself a log-linear curve (A, B, C and D
    subtract). Returns where both have no D term (``simple``: a closed form), where the
    difference is such a curve (``joint``), and the difference curves (zeros elsewhere).
    """
    simple = cs.plain & cl.plain
    ps, pl = cs.params, cl.params
    log_linear = (cs.family == LOG_LINEAR) & (cl.family == LOG_LINEAR)
    one_d = (ps[:, 3] == 0) | (pl[:, 3] == 0) | (ps[:, 4] == pl[:, 4])
    joint = log_linear & one_d
    d = np.zeros_like(ps)
    d[joint, :4] = ps[joint, :4] - pl[joint, :4]
    d[joint, 4] = np.where(ps[joint, 3] != 0, ps[joint, 4], pl[joint, 4])
    return simple, joint, Curves(np.zeros_like(cs.family), d, cs.t_min, cs.t_max)


def _difference(
    cs: Curves, cl: Curves, joint: np.ndarray, diff: Curves, ts: np.ndarray
) -> np.ndarray:
    """y_s - y_l at ``ts`` (one row per pair), one evaluation where the difference is itself
    a log-linear curve (``joint``).
    """
    if joint.all():
        return ln_p_rows(diff, ts)
    f = np.empty(ts.shape)
    if joint.any():
        f[joint] = ln_p_rows(diff.take(joint), ts[joint])
    rest = ~joint
    f[rest] = ln_p_rows(cs.take(rest), ts[rest]) - ln_p_rows(cl.take(rest), ts[rest])
    return f


def _scan_crossings(
    cs: Curves,
    cl: Curves,
    joint: np.ndarray,
    diff: Curves,
    x_lo,
    x_hi,
    x_anchor,
    grid: int,
    tol: float,
):
    """Sign changes of y_s - y_l on a grid in x = 1/T over [x_lo, x_hi], for each pair.

    Returns the number of sign changes, the number of *significant* ones (between points
    where the curves differ by more than ``tol``), and the bracket [lo, hi] in x of the
    change nearest ``x_anchor`` (NaN where there is none).
    """
    k = x_lo.size
    frac = np.linspace(0.0, 1.0, grid)[None, :]
    xs = x_lo[:, None] + (x_hi - x_lo)[:, None] * frac
    with np.errstate(divide="ignore", invalid="ignore"):
        ts = 1.0 / xs
        f = _difference(cs, cl, joint, diff, ts)
        sign = np.sign(f)
        finite = np.isfinite(f)
        change = (sign[:, 1:] * sign[:, :-1] < 0) & finite[:, 1:] & finite[:, :-1]
        count = change.sum(axis=1)
        sig = np.where(np.abs(f) > tol, sign, 0.0)
    # previous non-zero sign before each column (a forward fill of column indices)
    cols = np.arange(grid)[None, :]
    last = np.maximum.accumulate(np.where(sig != 0, cols, -1), axis=1)
    prev = np.concatenate([np.full((k, 1), -1), last[:, :-1]], axis=1)
    prev_sign = np.where(prev >= 0, np.take_along_axis(sig, np.maximum(prev, 0), 1), 0)
    significant = ((sig != 0) & (prev_sign != 0) & (sig != prev_sign)).sum(axis=1)
    mid = 0.5 * (xs[:, 1:] + xs[:, :-1])
    dist = np.where(change, np.abs(mid - x_anchor[:, None]), np.inf)
    j = np.argmin(dist, axis=1)
    has = count > 0
    idx = np.arange(k)
    lo = np.where(has, xs[idx, j], np.nan)
    hi = np.where(has, xs[idx, np.minimum(j + 1, grid - 1)], np.nan)
    return count, significant, lo, hi


def ln_p_rows(curves: Curves, temperature: np.ndarray) -> np.ndarray:
    """Ln P of curve i at the temperatures of row i of ``temperature`` (shape (n, m))."""
    return evaluate(curves, temperature, order=0)[0]
