"""Checks of single records, on the curve over its own range: the range itself, a pressure
that is finite and not absurdly low, a slope of the right sign and steepness (what the curve
implies -- entropy, heat capacity -- is in :mod:`.implied`; the boiling point and the critical
point have their own modules).
"""

from __future__ import annotations

import math

import numpy as np

from ..equations.engine import temperature_at
from ._context import AuditContext
from ._registry import Scope, Severity, Threshold, check
from ._text import kelvin, kj, pressure_at_ln
from .hits import Hit, Hits

__all__: list[str] = []


@check(
    "range-invalid",
    Severity.error,
    Scope.record,
    "The validity range is missing, empty, below 0 K, or holds an Antoine pole.",
    "An equation is only defined on its stated range; the Antoine form diverges at theta = -C.",
    tiers={"single-temperature": Severity.warning},
)
def range_invalid(ctx: AuditContext, th: dict[str, float]):
    """Report rule problems of the range read from the table (missing, empty, t_min <= 0 K,
    an Antoine pole theta = -C inside [t_min, t_max]).

    Such a record cannot be evaluated over its range; every other check skips it. A range
    of a single temperature (t_min = t_max: compilations carry equations estimated from one
    point, often the normal boiling point, or whose range was lost) is a warning: it says
    nothing wrong about the equation, which the other checks test at that one temperature.
    """
    problems = ctx.table.problems
    if not len(problems):
        return
    bad = problems.loc[problems["rule"].isin(["range", "pole"])]
    rows = ctx.rows_of(bad["file"], bad["line"])  # one lookup for all problems
    t_min = ctx.table.records["t_min"].to_numpy(dtype=float, na_value=np.nan)
    t_max = ctx.table.records["t_max"].to_numpy(dtype=float, na_value=np.nan)
    for pr, row in zip(bad.itertuples(index=False), rows, strict=True):
        if row < 0:
            continue
        if pr.rule == "range" and t_min[row] == t_max[row]:
            yield Hit(
                int(row),
                f"the range is a single temperature ({kelvin(t_min[row])}): the equation is "
                "tested there only; give the range the source gives.",
                {"field": pr.column},
                tier="single-temperature",
            )
            continue
        yield Hit(int(row), f"{pr.message}.", {"field": pr.column})


def pressure_tiers(ctx: AuditContext, ex) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Which evaluable records ``pressure-not-finite`` reports as not representable, which
    as a placeholder lower end of the range (finite and within the limit at the top, beyond
    it only toward the bottom), and which ``pressure-too-low`` reports (a top within the
    limit but below 1e-30 Pa, whatever the bottom does): one definition for both checks and
    for the diagnosis's screening. ``ex`` holds the range extrema of ``ctx``'s curves.
    """
    lim = ctx.thresholds("pressure-not-finite")["max_abs_lnP"]
    min_top = ctx.thresholds("pressure-too-low")["min_top_lnP"]
    with np.errstate(invalid="ignore"):
        top_ok = np.abs(ex.y_max) <= lim
        too_low = ctx.evaluable & top_ok & (ex.y_max < min_top) & np.isfinite(ex.y_min)
        bad = (
            ctx.evaluable
            & ~(np.isfinite(ex.y_min) & np.isfinite(ex.y_max) & (np.abs(ex.y_min) <= lim) & top_ok)
            & ~too_low
        )
        at_bottom = bad & np.isfinite(ex.y_min) & (ex.y_min < -lim) & top_ok
    return bad & ~at_bottom, at_bottom, too_low


@check(
    "pressure-not-finite",
    Severity.error,
    Scope.record,
    "ln P overflows, underflows or is not finite somewhere in the range.",
    "A double holds P between about 1e-308 and 1e308 Pa; outside, the value is lost.",
    (Threshold("max_abs_lnP", 700.0, "-", "largest |ln(P/Pa)| accepted"),),
    tiers={"placeholder-lower-end": Severity.warning},
    impossible=True,
)
def pressure_not_finite(ctx: AuditContext, th: dict[str, float]):
    """Evaluate ln P at the ends of the range and at the stationary points of the curve; a
    non-finite value or |ln(P/Pa)| beyond the limit is an error (overflowing exponent,
    wrong sign of a large coefficient, a Wagner record above its critical point).

    One case is a warning: a curve that is finite and within the limit at the top of its
    range and falls below -limit only toward the bottom. Every vapour-pressure curve does
    that near 0 K (ln P goes as -dH/(R T)); a range that reaches there (compilations write
    t_min = 1 K for "no lower limit") claims pressures no measurement could give, which is
    a fault of the range, not of the coefficients. That holds only for a curve whose top
    is a pressure real equations reach: one that stays below ``pressure-too-low``'s limit
    over its whole range is that check's (an error), not a placeholder.
    """
    lim = th["max_abs_lnP"]
    ex = ctx.range_extrema
    not_finite, at_bottom, _ = pressure_tiers(ctx, ex)
    for i in np.flatnonzero(not_finite | at_bottom):
        lo, hi = ex.y_min[i], ex.y_max[i]
        t_lo, t_hi = ctx.curves.t_min[i], ctx.curves.t_max[i]
        if at_bottom[i]:
            t_lim = temperature_at(ctx.curves.take([i]), np.array([-lim]), t_lo, t_hi)[0]
            yield Hit(
                i,
                f"ln(P/Pa) falls to {lo:.4g} at the bottom of the range ({kelvin(t_lo)}"
                f"..{kelvin(t_hi)})"
                + (f", below -{lim:g} under {kelvin(t_lim)}" if np.isfinite(t_lim) else "")
                + ": the curve rises to ln(P/Pa) = "
                f"{hi:.4g} at the top, but no measurement gives pressures that low; the range's "
                "lower end looks like a placeholder. Give the range the source measured.",
                {"lnP_min": lo, "lnP_max": hi, "limit_lnP": lim},
                tier="placeholder-lower-end",
            )
            continue
        span = (
            f"runs from {lo:.4g} to {hi:.4g}"
            if np.isfinite(lo) and np.isfinite(hi)
            else "is not a finite number somewhere"
        )
        yield Hit(
            i,
            f"ln(P/Pa) {span} over {kelvin(t_lo)}..{kelvin(t_hi)}: beyond +/-{lim:g}, or not "
            "finite, the pressure cannot be represented; check the coefficients' signs and "
            "exponents.",
            {"lnP_min": lo, "lnP_max": hi, "limit_lnP": lim},
        )


@check(
    "pressure-too-low",
    Severity.error,
    Scope.record,
    "The curve stays below 1e-30 Pa over its whole range.",
    "No vapour-pressure measurement or evaluation reaches such pressures: measured on the "
    "compilations and the Alcock et al. (1984) equations via chemicals, the lowest top of a "
    "range is Alcock's solid tin at its melting point, 1e-20 Pa; liquids stay above 1e-5 Pa.",
    (
        Threshold(
            "min_top_lnP",
            -69.08,
            "-",
            "least ln(P/Pa) a curve must reach somewhere in its range (1e-30 Pa)",
        ),
    ),
    impossible=True,
)
def pressure_too_low(ctx: AuditContext, th: dict[str, float]):
    """The highest pressure of the range, at the extrema of ``pressure-not-finite``, is
    below the limit: the equation claims pressures ten decades below the lowest any real
    equation is stated for. A 1/T coefficient ten or a hundred times too large gives such a
    curve (ln P scales with it), and so does a pressure unit read many decades off. A curve
    whose top cannot be represented is ``pressure-not-finite``'s; one whose top can, but
    whose bottom falls below what a double holds, is this check's (its top is the fault).
    """
    ex = ctx.range_extrema
    sel = np.flatnonzero(pressure_tiers(ctx, ex)[2])
    top = ex.y_max[sel]
    messages = [
        f"ln(P/Pa) reaches at most {y:.4g} over {kelvin(a)}..{kelvin(b)} (P = "
        f"{pressure_at_ln(y, digits=3)}): no real vapour-pressure equation is stated for "
        "pressures that low (the lowest,"
        " solid tin at its melting point, reaches 1e-20 Pa). A 1/T coefficient ten or a "
        "hundred times too large is the usual cause."
        for y, a, b in zip(
            top.tolist(),
            ctx.curves.t_min[sel].tolist(),
            ctx.curves.t_max[sel].tolist(),
            strict=True,
        )
    ]
    yield Hits(sel, messages, {"lnP_max": top, "limit_lnP": np.full(sel.size, th["min_top_lnP"])})


@check(
    "slope-not-positive",
    Severity.error,
    Scope.record,
    "The implied enthalpy dH = R T^2 dlnP/dT is not positive everywhere in the range.",
    "Clausius-Clapeyron: vapour pressure rises with temperature, dH > 0.",
    impossible=True,
)
def slope_not_positive(ctx: AuditContext, th: dict[str, float]):
    """Vapour pressure must rise with temperature over the whole validity range.

    The minimum of dH(T) over the range is found exactly: at the ends, or where dH is
    stationary (dCp = 0), which the log-linear and Antoine forms give analytically; Wagner
    curves are scanned on a 64-point grid. A non-positive minimum means a lost sign (usually
    of the 1/T coefficient) or a curve used far outside its range.
    """
    ex = ctx.range_extrema
    with np.errstate(invalid="ignore"):
        bad = ctx.evaluable & ~(ex.h_min > 0)
    sel = np.flatnonzero(bad)
    h_min, h_min_t = ex.h_min[sel], ex.h_min_T[sel]
    t_crit = ctx.curves.own_t_crit[sel]
    messages = [
        f"the implied enthalpy falls to {kj(h)} at {kelvin(t)}: vapour pressure must rise "
        "with temperature; a sign of the 1/T coefficient is the usual cause."
        if not math.isnan(h)
        else f"the implied enthalpy has no value at {kelvin(t)}"
        + (
            f", above the record's own critical temperature {kelvin(tc)}, where the curve "
            "is not defined"
            if t > tc
            else ": the curve is not defined there"
        )
        + "; vapour pressure must rise with temperature over the whole range."
        for h, t, tc in zip(h_min.tolist(), h_min_t.tolist(), t_crit.tolist(), strict=True)
    ]
    yield Hits(
        sel,
        messages,
        {"enthalpy_min_J_per_mol": h_min, "at_K": h_min_t},
    )


@check(
    "slope-too-flat",
    Severity.error,
    Scope.record,
    "The curve is flatter than any vapour-pressure curve: d ln P/d ln T = dH/(R T) falls "
    "below 2 in the range.",
    "Clausius-Clapeyron: d ln P/d ln T = dH/(R T dZ), which stays large up to the critical "
    "point (there about -A of the Wagner form, 5 to 8). Measured on the compilations via "
    "chemicals: no clean Poling, McGarry, Poling-Wagner or Perry equation falls below 4.4 "
    "(helium-3), no Alcock metal below 17.6.",
    (
        Threshold(
            "min_log_slope",
            2.0,
            "-",
            "least d ln P/d ln T accepted (half the flattest real curve's, 4.4)",
        ),
    ),
    impossible=True,
)
def slope_too_flat(ctx: AuditContext, th: dict[str, float]):
    """A positive but vanishing slope: the curve barely rises with temperature, as if the
    enthalpy of the phase change were a small fraction of R T. No condensed phase is held
    so loosely; an Antoine equation whose C is far larger than its temperatures (B and C
    swapped, or a slipped decimal of B) degenerates into such a nearly flat line, whose
    pressure level alone can fall inside the entropy band. Tested where the implied enthalpy
    is least (the range extrema of ``slope-not-positive``); a curve whose enthalpy is not
    positive is that check's.
    """
    ex = ctx.range_extrema
    yield _flat_hits(
        ex,
        np.flatnonzero(ctx.evaluable & too_flat(ex, th)),
        "flatter than any vapour-pressure curve (the flattest real ones, of helium near its "
        "critical point, stay above 4). An Antoine C far larger than the temperatures (B and C "
        "swapped) or a slipped decimal of B is the usual cause.",
    )


def _flat_hits(ex, sel: np.ndarray, why: str) -> Hits:
    """The hits of the slope checks for the rows ``sel`` of the range extrema ``ex``: each
    message ends in ``why``.
    """
    h_min, h_min_t, r = ex.h_min[sel], ex.h_min_T[sel], ex.log_slope[sel]
    messages = [
        f"the implied enthalpy falls to {kj(h)} at {kelvin(t)}, {rk:.2g} R T (d ln P/d ln T "
        f"= {rk:.2g}): {why}"
        for h, t, rk in zip(h_min.tolist(), h_min_t.tolist(), r.tolist(), strict=True)
    ]
    return Hits(sel, messages, {"enthalpy_min_J_per_mol": h_min, "at_K": h_min_t, "log_slope": r})


@check(
    "slope-flatter-than-real",
    Severity.error,
    Scope.record,
    "Above 45 K, where only classical fluids are liquid, the curve is flatter than any real "
    "one: d ln P/d ln T = dH/(R T) falls below 4.",
    "Clausius-Clapeyron: d ln P/d ln T = dH/(R T dZ) is least at the critical point, about "
    "-A of the Wagner form (argon, via CoolProp: 5.8 at 0.98 Tc). Measured on the "
    "compilations via chemicals: of the clean Poling, McGarry, Poling-Wagner and Perry "
    "equations above 45 K none falls below 4.8 (McGarry's 1-heptanol at its critical point); "
    "the one flatter, at 4.4, is Poling's helium-3 at 1.1 K.",
    (
        Threshold(
            "min_log_slope",
            4.0,
            "-",
            "least d ln P/d ln T accepted above quantum_limit: a sixth below the least of the "
            "clean compilations' equations there (4.8)",
        ),
        Threshold(
            "quantum_limit",
            45.0,
            "K",
            "above it no quantum fluid is liquid (critical points via chemicals, method "
            "MATTHEWS: helium-4 5.19 K, hydrogen 33.2 K, neon 44.4 K)",
        ),
    ),
)
def slope_flatter_than_real(ctx: AuditContext, th: dict[str, float]):
    """``slope-too-flat``'s test with the floor of classical fluids, where the curve is least
    steep above ``quantum_limit``: an Antoine equation in degC marked K (its C 273.15 K too
    large) rises at a few times R T, like a liquid at its critical point, at pressures no
    such liquid has, and its pressure level alone can fall inside the entropy band. A
    curve flatter than ``slope-too-flat``'s floor is that check's. Strong evidence, not
    proof: the floor lies a sixth below the least real equation, where ``slope-too-flat``'s
    lies half below it, so the diagnosis weighs it as an ordinary error, not as a curve
    that cannot exist.
    """
    ex = ctx.range_extrema
    bad = (
        ctx.evaluable & flatter_than_real(ex, th) & ~too_flat(ex, ctx.thresholds("slope-too-flat"))
    )
    yield _flat_hits(
        ex,
        np.flatnonzero(bad),
        f"flatter than any real vapour-pressure curve above {th['quantum_limit']:g} K, where "
        "only classical fluids are liquid (real curves are least steep at their critical "
        "points, and stay above 4.8 there). An Antoine equation in degC marked K (C 273.15 K "
        "too large), B and C swapped or a slipped decimal of B is the usual cause.",
    )


def too_flat(ex, th: dict[str, float]) -> np.ndarray:
    """Whether each curve of the range extrema ``ex`` is flatter than ``min_log_slope`` of
    ``slope-too-flat`` (``th``) where its enthalpy is least, that enthalpy positive. The
    check and the diagnosis's screening both use it.
    """
    with np.errstate(invalid="ignore"):
        return (ex.h_min > 0) & (ex.log_slope < th["min_log_slope"])


def flatter_than_real(ex, th: dict[str, float]) -> np.ndarray:
    """:func:`too_flat` with ``slope-flatter-than-real``'s floor (``th``), above its
    ``quantum_limit``. The check and the diagnosis's screening both use it.
    """
    with np.errstate(invalid="ignore"):
        return too_flat(ex, th) & (ex.h_min_T >= th["quantum_limit"])
