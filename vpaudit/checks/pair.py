"""Checks of solid/liquid pairs of one substance: whether they can be checked, and where and
how their curves cross (the triple point they imply). At the triple point the solid's and
the liquid's vapour pressures are equal and the solid curve is the steeper one
(d(y_s - y_l)/dT = dH_fus/(R T^2) > 0); the triple point against reference values is in
:mod:`.triple`.
"""

from __future__ import annotations

import numpy as np

from ..constants import R
from ..equations.engine import evaluate_rows
from ._context import AuditContext
from ._registry import Scope, Severity, Threshold, check
from ._text import kelvin, kj, ln_ratio
from .extrapolation import allowance
from .hits import sentences

__all__: list[str] = []


@check(
    "pair-not-checkable",
    Severity.note,
    Scope.pair,
    "A solid/liquid pair whose ranges stop too far from the melting point to be compared.",
    "Comparing two curves by extrapolating both far beyond their ranges tests the "
    "extrapolation, not the data.",
    (
        Threshold(
            "max_extrapolation",
            0.25,
            "-",
            "largest distance from a range to the melting point, relative to it",
        ),
    ),
)
def pair_not_checkable(ctx: AuditContext, th: dict[str, float]):
    """Pairs whose solid range ends, or liquid range starts, farther from the melting point
    (reference, else the middle of the gap) than the limit are reported as not checkable,
    and the other pair checks skip them.
    """
    pr = ctx.pairs
    ks = np.flatnonzero(~pr.checkable)
    if ks.size == 0:
        return
    far, anchor = pr.extrapolation[ks], pr.anchor[ks]

    def say(far, anchor) -> list[str]:
        return [
            f"the solid and liquid ranges stop {f * 100:.0f} % away from "
            f"the melting region near {kelvin(a)}: the pair is not checked."
            for f, a in zip(far.tolist(), anchor.tolist(), strict=True)
        ]

    yield ctx.pair_hits(
        ks,
        sentences(say, far, anchor),
        {"extrapolation_fraction": far, "anchor_K": anchor},
    )


@check(
    "no-crossing",
    Severity.error,
    Scope.pair,
    "The solid and liquid curves do not cross near the melting point.",
    "At the triple point both phases have the same vapour pressure.",
    (
        Threshold(
            "window",
            0.3,
            "-",
            "half-width of the searched window around the melting point, relative, in 1/T",
        ),
        Threshold("grid", 32, "-", "points of the sign-change scan of the window"),
    ),
    tiers={"touching": Severity.warning},
    witness="difference_lnP_at_anchor",
)
def no_crossing(ctx: AuditContext, th: dict[str, float]):
    """The difference y_s - y_l is scanned for sign changes on a grid in 1/T over the
    window around the melting point and each bracket refined by safeguarded Newton. No
    sign change means no triple point: a pressure-unit or base slip in one record, or a
    record of another substance.

    Two curves that meet at the melting point within the tolerance of
    ``melting-point-mismatch`` (widened as it is for extrapolated curves) but touch there
    without crossing have nearly the same slope, which ``fusion-enthalpy-mismatch``
    reports: that is a warning, not a missing triple point.
    """
    pr = ctx.pairs
    w = th["window"]
    rows = np.flatnonzero(pr.checkable & (pr.crossings == 0))
    at = pr.anchor[rows]
    diff = (
        evaluate_rows(ctx.curves, pr.solid[rows], at, 0)[0]
        - evaluate_rows(ctx.curves, pr.liquid[rows], at, 0)[0]
    )
    lo, hi = at / (1 + w), at * (1 + w)
    tol = widened_tolerance(ctx, rows, at, ctx.thresholds("melting-point-mismatch")["tolerance"])
    with np.errstate(invalid="ignore"):
        touch = np.abs(diff) <= tol
    for near in (False, True):
        sel = np.flatnonzero(touch == near)
        if sel.size == 0:
            continue

        def say(lo, hi, at, diff, tol, near=near) -> list[str]:
            return [
                f"the solid and liquid curves do not cross between {kelvin(a_lo)} and "
                f"{kelvin(a_hi)}; at {kelvin(a)} they differ by {ln_ratio(d)}"
                + (
                    f", within the melting-point tolerance there ({t:.3g}): they touch "
                    "without crossing, their slopes nearly equal."
                    if near
                    else "."
                )
                for a_lo, a_hi, a, d, t in zip(
                    lo.tolist(), hi.tolist(), at.tolist(), diff.tolist(), tol.tolist(), strict=True
                )
            ]

        messages = sentences(say, lo[sel], hi[sel], at[sel], diff[sel], tol[sel])
        evidence = {
            "window_min_K": lo[sel],
            "window_max_K": hi[sel],
            "anchor_K": at[sel],
            "difference_lnP_at_anchor": diff[sel],
        }
        if near:
            evidence["tolerance_lnP"] = tol[sel]
        yield ctx.pair_hits(
            rows[sel],
            messages,
            evidence,
            tier="touching" if near else None,
        )


@check(
    "multiple-crossings",
    Severity.warning,
    Scope.pair,
    "The solid and liquid curves cross more than once near the melting point.",
    "Two smooth curves of the same substance meet once, at the triple point.",
)
def multiple_crossings(ctx: AuditContext, th: dict[str, float]):
    """More than one crossing in the window where the curves separate by more than the
    melting-point tolerance between crossings: at least one curve bends wrongly (a slipped
    log T or D coefficient). Nearly parallel curves that wander across each other within the
    tolerance (seen in evaluated data) are not reported.
    """
    pr = ctx.pairs
    ks = np.flatnonzero(pr.checkable & (pr.significant_crossings > 1))
    if ks.size == 0:
        return
    n, t = pr.crossings[ks].astype(np.int64), pr.t_cross[ks]
    yield ctx.pair_hits(
        ks,
        [
            f"the solid and liquid curves cross {c} times near the "
            f"melting point (the one nearest it at {kelvin(x)}), separating by more "
            "than the melting-point tolerance in between; they should cross once."
            for c, x in zip(n.tolist(), t.tolist(), strict=True)
        ],
        {"crossings": n, "nearest_K": t},
    )


def crossed(ctx: AuditContext) -> np.ndarray:
    pr = ctx.pairs
    return pr.checkable & np.isfinite(pr.t_cross)


@check(
    "crossing-orientation",
    Severity.error,
    Scope.pair,
    "At the crossing the solid curve is the flatter one, or the solid's range lies above "
    "the liquid's.",
    "d(ln P_s - ln P_l)/dT = dH_fus/(R T^2) > 0 at the triple point: the solid is stable "
    "(lower P) below it.",
)
def crossing_orientation(ctx: AuditContext, th: dict[str, float]):
    """A crossing where the solid curve is flatter implies dH_fus <= 0: the phase labels
    are swapped or one record is broken. A solid range wholly above the liquid's says the
    same. When the ranges are in the labels' order (the solid's ends where or before the
    liquid's begins), the message names coefficients swapped without their ranges, or a
    broken slope, instead.
    """
    pr = ctx.pairs
    above = pr.checkable & (ctx.curves.t_min[pr.solid] >= ctx.curves.t_max[pr.liquid])
    wrong = crossed(ctx) & ~(pr.slope_diff > 0)
    sel = np.flatnonzero(wrong | above)
    t = pr.t_cross[sel]
    hfus = R * t * t * pr.slope_diff[sel]
    # ranges in the order of the labels (the solid's ending at or below where the liquid's
    # begins) speak against labels swapped with their whole records: then the coefficients
    # were swapped without their ranges, or one curve's slope is off
    ordered = ctx.curves.t_max[pr.solid[sel]] <= ctx.curves.t_min[pr.liquid[sel]]
    messages = [
        (
            f"at the crossing ({kelvin(tk)}) the solid curve is the flatter one, implying "
            f"an enthalpy of fusion of {kj(hk)} (must be positive): "
            + (
                "the ranges are in the labels' order (the solid's below the liquid's), so "
                "the two records' coefficients look swapped, or one curve's slope is off."
                if in_order and not is_above
                else "the solid and liquid labels look swapped."
            )
        )
        if is_wrong
        else (
            f"the solid's range ({kelvin(s_lo)}..) lies above the liquid's "
            f"(..{kelvin(l_hi)}): the phase labels look swapped."
        )
        for tk, hk, is_wrong, s_lo, l_hi, in_order, is_above in zip(
            t.tolist(),
            hfus.tolist(),
            wrong[sel].tolist(),
            ctx.curves.t_min[pr.solid[sel]].tolist(),
            ctx.curves.t_max[pr.liquid[sel]].tolist(),
            ordered.tolist(),
            above[sel].tolist(),
            strict=True,
        )
    ]
    yield ctx.pair_hits(
        sel,
        messages,
        {
            "crossing_K": t,
            "implied_fusion_enthalpy_J_per_mol": hfus,
            "solid_range_above_liquid": above[sel],
        },
    )


@check(
    "crossing-outside-range",
    Severity.warning,
    Scope.pair,
    "The curves cross only where one record is extrapolated beyond its range, and they "
    "disagree where the ranges end.",
    "A curve is only vouched for inside its stated range; where the curves agree within "
    "the melting-point tolerance at the end of the range, the crossing's position is noise "
    "(the crossing moves by dy / d(y_s - y_l)/dT).",
    (
        Threshold(
            "max_extrapolation",
            0.03,
            "-",
            "largest extrapolation beyond a range, relative to the crossing T",
        ),
    ),
    witness="difference_lnP_at_range_end",
)
def crossing_outside_range(ctx: AuditContext, th: dict[str, float]):
    """The crossing lies above the solid's t_max or below the liquid's t_min by more than
    the allowed fraction, *and* at that range end the curves differ in ln P by more than the
    melting-point tolerance: the triple point rests on an extrapolation the data do not
    support. Two nearly parallel curves that agree at the range end within the tolerance may
    cross far away without meaning anything (seen for Zr and Ti in the evaluated metals).
    """
    pr = ctx.pairs
    lim = th["max_extrapolation"]
    tol = ctx.thresholds("melting-point-mismatch")["tolerance"]
    t = pr.t_cross
    s_lo, s_hi = ctx.curves.t_min[pr.solid], ctx.curves.t_max[pr.solid]
    l_lo, l_hi = ctx.curves.t_min[pr.liquid], ctx.curves.t_max[pr.liquid]
    with np.errstate(invalid="ignore"):
        over_s = np.maximum(t - s_hi, s_lo - t) / t
        over_l = np.maximum(l_lo - t, t - l_hi) / t
        worst = np.fmax(over_s, over_l)
        edge = np.where(over_s >= over_l, np.clip(t, s_lo, s_hi), np.clip(t, l_lo, l_hi))
    edge = np.where(np.isfinite(edge), edge, pr.anchor)
    with np.errstate(invalid="ignore"):
        far = np.flatnonzero(crossed(ctx) & (worst > lim))
    d = np.full(t.size, np.nan)  # the curves are compared only where the crossing is far
    d[far] = (
        evaluate_rows(ctx.curves, pr.solid[far], edge[far], 0)[0]
        - evaluate_rows(ctx.curves, pr.liquid[far], edge[far], 0)[0]
    )
    with np.errstate(invalid="ignore"):
        bad = crossed(ctx) & (worst > lim) & (np.abs(d) > tol)
    sel = np.flatnonzero(bad)
    on_solid = (over_s >= over_l)[sel]
    which = ["solid" if s else "liquid" for s in on_solid.tolist()]
    t, worst, edge, d = t[sel], worst[sel], edge[sel], d[sel]

    def say(t, worst, edge, d, on_solid) -> list[str]:
        return [
            f"the curves cross at {kelvin(tk)}, {wk * 100:.1f} % beyond the "
            f"{'solid' if sk else 'liquid'} record's range (limit {lim * 100:g} %), and where "
            f"that range ends ({kelvin(ek)}) they differ by {ln_ratio(dk)}: the triple "
            "point rests on an extrapolation."
            for tk, wk, ek, dk, sk in zip(
                t.tolist(),
                worst.tolist(),
                edge.tolist(),
                d.tolist(),
                on_solid.tolist(),
                strict=True,
            )
        ]

    yield ctx.pair_hits(
        sel,
        sentences(say, t, worst, edge, d, on_solid),
        {
            "crossing_K": t,
            "extrapolation_fraction": worst,
            "record": which,
            "limit": lim,
            "range_end_K": edge,
            "difference_lnP_at_range_end": d,
        },
    )


def widened_tolerance(ctx: AuditContext, ks: np.ndarray, t: np.ndarray, tol):
    """The melting-point tolerance ``tol`` [ln P] of pairs ``ks`` compared at ``t`` [K],
    widened in quadrature by each curve's extrapolation allowance there
    (:mod:`vpaudit.checks.extrapolation`).
    """
    pr, c = ctx.pairs, ctx.curves
    s_rows, l_rows = pr.solid[ks], pr.liquid[ks]
    drift = np.hypot(
        allowance(c.t_min[s_rows], c.t_max[s_rows], t),
        allowance(c.t_min[l_rows], c.t_max[l_rows], t),
    )
    return np.hypot(tol, drift)
