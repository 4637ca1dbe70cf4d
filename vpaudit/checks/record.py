"""Checks of single records: range, finiteness, slope, magnitudes, references, points."""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
import pandas as pd

from .._columns import eq
from ..constants import R
from ..equations.engine import Curves, evaluate, temperature_at
from ._context import LN_P_STANDARD, AuditContext, match
from ._registry import Scope, Severity, Threshold, check
from ._text import jk, kelvin, kj, ln_ratio
from .extrapolation import allowance
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
def range_invalid(ctx: AuditContext):
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


@check(
    "pressure-not-finite",
    Severity.error,
    Scope.record,
    "ln P overflows, underflows or is not finite somewhere in the range.",
    "A double holds P between about 1e-308 and 1e308 Pa; outside, the value is lost.",
    (Threshold("max_abs_lnP", 700.0, "-", "largest |ln(P/Pa)| accepted"),),
    tiers={"placeholder-lower-end": Severity.warning},
)
def pressure_not_finite(ctx: AuditContext):
    """Evaluate ln P at the ends of the range and at the stationary points of the curve; a
    non-finite value or |ln(P/Pa)| beyond the limit is an error (overflowing exponent,
    wrong sign of a large coefficient, a Wagner record above its critical point).

    One case is a warning: a curve that is finite and within the limit at the top of its
    range and falls below -limit only toward the bottom. Every vapour-pressure curve does
    that near 0 K (ln P goes as -dH/(R T)); a range that reaches there (compilations write
    t_min = 1 K for "no lower limit") claims pressures no measurement could give, which is
    a fault of the range, not of the coefficients.
    """
    lim = ctx.thresholds("pressure-not-finite")["max_abs_lnP"]
    ex = ctx.range_extrema
    with np.errstate(invalid="ignore"):
        bad = ctx.evaluable & ~(
            np.isfinite(ex.y_min)
            & np.isfinite(ex.y_max)
            & (np.abs(ex.y_min) <= lim)
            & (np.abs(ex.y_max) <= lim)
        )
        at_bottom = np.isfinite(ex.y_min) & (ex.y_min < -lim) & (np.abs(ex.y_max) <= lim)
    for i in np.flatnonzero(bad):
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
        yield Hit(
            i,
            f"ln(P/Pa) runs from {lo:.4g} to {hi:.4g} over {kelvin(t_lo)}.."
            f"{kelvin(t_hi)}: beyond +/-{lim:g}, or not finite, the pressure "
            "cannot be represented; check the coefficients' signs and exponents.",
            {"lnP_min": lo, "lnP_max": hi, "limit_lnP": lim},
        )


@check(
    "slope-not-positive",
    Severity.error,
    Scope.record,
    "The implied enthalpy dH = R T^2 dlnP/dT is not positive everywhere in the range.",
    "Clausius-Clapeyron: vapour pressure rises with temperature, dH > 0.",
)
def slope_not_positive(ctx: AuditContext):
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
    messages = [
        f"the implied enthalpy falls to {kj(h)} at {kelvin(t)}: vapour pressure must rise "
        "with temperature; a sign of the 1/T coefficient is the usual cause."
        for h, t in zip(h_min.tolist(), h_min_t.tolist(), strict=True)
    ]
    yield Hits(
        sel,
        messages,
        {"enthalpy_min_J_per_mol": h_min, "at_K": h_min_t},
    )


@check(
    "enthalpy-implausible",
    Severity.error,
    Scope.record,
    "The implied standard entropy of the phase change lies outside a plausible band.",
    "Trouton's rule (dS_vap about 85-88 J/(mol K) at the normal boiling point; common "
    "practice) and its generalisation dS = dH/T + R ln(P/P0) at any temperature. The band "
    "is measured on real compilations (chemicals: Landolt odd-CAS rows, Poling, Perry, "
    "McGarry): liquids 48..227 and solids 23..466 J/(mol K) hold 99 % of the clean records; "
    "long-chain and associating organics lie far above Trouton's value.",
    (
        Threshold("liquid_min", 40.0, "J/(mol K)", "lowest plausible dS of vaporization"),
        Threshold("liquid_max", 235.0, "J/(mol K)", "highest plausible dS of vaporization"),
        Threshold("solid_min", 20.0, "J/(mol K)", "lowest plausible dS of sublimation"),
        Threshold("solid_max", 480.0, "J/(mol K)", "highest plausible dS of sublimation"),
    ),
)
def enthalpy_implausible(ctx: AuditContext):
    """The entropy of the phase change to the ideal gas at P0 = 101325 Pa,
    dS = dH(T)/T + R ln(P(T)/P0), is nearly the same for most substances at any T (at the
    normal boiling point it is Trouton's dH_vap/T_b). It is evaluated at the reference
    normal boiling point when that lies in a liquid record's range, else at the middle of the
    range in 1/T. A log10/ln slip scales dH by 2.3; a pressure-unit slip shifts R ln P by
    R ln(factor) (96 J/(mol K) for atm read as Pa): both leave the band.
    """
    th = ctx.thresholds("enthalpy-implausible")
    rows = np.flatnonzero(ctx.evaluable)
    if rows.size == 0:
        return
    c = ctx.curves if rows.size == ctx.n else ctx.curves.take(rows)  # no copy when all are
    t_mid = 2.0 / (1.0 / c.t_min + 1.0 / c.t_max)
    tb = ctx.reference("normal_boiling_point", rows)
    use_tb = ctx.liquid[rows] & (tb >= c.t_min) & (tb <= c.t_max)
    t = np.where(use_tb, tb, t_mid)
    y, y1, _ = evaluate(c, t, order=1)
    ds = R * t * y1 + R * (y - LN_P_STANDARD)
    liquid = ctx.liquid[rows]
    lo = np.where(liquid, th["liquid_min"], th["solid_min"])
    hi = np.where(liquid, th["liquid_max"], th["solid_max"])
    with np.errstate(invalid="ignore"):
        bad = ~((ds >= lo) & (ds <= hi))
    hint = (
        " Usual causes: log10 coefficients read as ln or the reverse (dH off by a "
        "factor 2.3), or a wrong pressure unit (dS shifted by R ln of the factor)."
    )
    sel = np.flatnonzero(bad)
    ds, t, lo, hi = ds[sel], t[sel], lo[sel], hi[sel]
    h = R * t**2 * y1[sel]
    p = np.exp(y[sel])
    messages = [
        f"the implied entropy of {'vaporization' if is_liquid else 'sublimation'} referred to "
        f"the standard pressure, dS = dH/T + R ln(P/101325 Pa), is {jk(dsk)} at {kelvin(tk)} "
        f"(dH = {kj(hk)}, P = {pk:.3g} Pa), outside the plausible {lok:g}..{hik:g} "
        f"J/(mol K).{hint}"
        for is_liquid, dsk, tk, hk, pk, lok, hik in zip(
            liquid[sel].tolist(),
            ds.tolist(),
            t.tolist(),
            h.tolist(),
            p.tolist(),
            lo.tolist(),
            hi.tolist(),
            strict=True,
        )
    ]
    yield Hits(
        rows[sel],
        messages,
        {
            "entropy_J_per_mol_K": ds,
            "at_K": t,
            "enthalpy_J_per_mol": h,
            "band_min": lo,
            "band_max": hi,
            "at_boiling_point": use_tb[sel],
        },
    )


@check(
    "heat-capacity-sign",
    Severity.warning,
    Scope.record,
    "The implied dCp = Cp(gas) - Cp(condensed) is clearly positive in the range.",
    "Cp of a condensed phase exceeds that of its vapour for nearly every substance "
    "(Dulong-Petit 3R for solids, 5/2 R for a monatomic gas); common practice.",
    (
        Threshold("tolerance", 10.0, "J/(mol K)", "largest positive dCp accepted"),
        Threshold("error_above", 60.0, "J/(mol K)", "dCp above which the finding is an error"),
        Threshold("antoine_factor", 3.0, "-", "widening of both limits for Antoine records"),
        Threshold(
            "max_pressure",
            1e4,
            "Pa",
            "dCp is tested only where P is below this and T below 0.7 Tc (near-ideal vapour)",
        ),
        Threshold(
            "resolvable",
            0.03,
            "ln P",
            "least bow in ln P across the tested range that a dCp must make to be an error, "
            "for a record that states no uncertainty (else its own)",
        ),
    ),
    tiers={"beyond-error-above": Severity.error},
)
def heat_capacity_sign(ctx: AuditContext):
    """The implied dCp comes from the curvature and is poorly fixed by a narrow-range fit: small
    positive values (a few J/(mol K)) occur in good fits (even in fits to ice, whose Cp
    falls with temperature), so only values beyond the tolerance are reported, and only
    values far beyond it are errors. A two-term equation implies dCp = 0 exactly, a choice,
    not an error. The Antoine form's implied dCp swings widely, so its limits are wider.
    Only the near-ideal part of the range is tested (P below ``max_pressure``, T below
    0.7 Tc): closer to the critical point the slope gives dH/dZ, and its derivative picks up
    -dH dZ'/dZ^2, about +100 J/(mol K) at 1 atm for an organic liquid -- not a heat capacity.

    A dCp beyond ``error_above`` is an error only where the data could have shown it: a
    constant dCp bends ln P away from a straight line in 1/T by dCp/R times the bow of ln T
    over the range (:func:`bow_of_ln_t`), which over a narrow range is tiny (+100 J/(mol K)
    over 163-176 K: 0.009 in ln P). Below the record's uncertainty, the curvature is the
    fit's noise, and the finding stays a warning.
    """
    th = ctx.thresholds("heat-capacity-sign")
    ex = ctx.range_extrema
    factor = np.where(ctx.antoine, th["antoine_factor"], 1.0)
    with np.errstate(invalid="ignore"):
        bad = ctx.evaluable & (ex.cp_max > th["tolerance"] * factor)
    rows = np.flatnonzero(bad)
    bow = ex.cp_max[rows] / R * bow_of_ln_t(ex.cp_lo[rows], ex.cp_hi[rows])
    u = ctx.uncertainty[rows]
    u = np.where(np.isnan(u), th["resolvable"], u)
    for k, i in enumerate(rows):
        cp, t = ex.cp_max[i], ex.cp_max_T[i]
        far = cp > th["error_above"] * factor[i]
        yield Hit(
            i,
            f"the implied dCp reaches {jk(cp)} at {kelvin(t)}; it should be negative "
            "(the condensed phase holds more heat than its vapour): check the sign of the "
            "log T coefficient, or whether the curve is used outside its fitted range"
            + (
                f". Over this narrow range that curvature bends ln P by only {bow[k]:.2g}, "
                "within the record's uncertainty."
                if far and not bow[k] > u[k]
                else "."
            ),
            {
                "heat_capacity_change_J_per_mol_K": cp,
                "at_K": t,
                "tolerance": th["tolerance"] * factor[i],
                "bow_lnP": bow[k],
            },
            tier="beyond-error-above" if far and bow[k] > u[k] else None,
        )


def bow_of_ln_t(t_lo, t_hi) -> np.ndarray:
    """The largest departure of ln T from its chord in x = 1/T over [t_lo, t_hi].

    A constant dCp adds (dCp/R)(ln T + T0/T) to ln P; the second term is linear in 1/T, so
    dCp/R times this bow is how far the curvature moves ln P from a straight line over the
    range. ln T = -ln x is convex in x, so the chord lies above it, farthest at the
    logarithmic mean x* = (x2 - x1)/ln(x2/x1).

    Parameters
    ----------
    t_lo, t_hi : array_like
        Range ends. [K]

    Returns
    -------
    ndarray
        The bow [-] (0 for an empty or single-temperature range, NaN where an end is not
        finite).
    """
    x1 = 1.0 / np.asarray(t_hi, dtype=float)
    x2 = 1.0 / np.asarray(t_lo, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        r = np.log(x2 / x1)
        xs = (x2 - x1) / r
        chord = -np.log(x1) - (xs - x1) * r / (x2 - x1)
        out = chord + np.log(xs)
    return np.where(x2 > x1, out, np.where(np.isfinite(x1 + x2), 0.0, np.nan))


@check(
    "heat-capacity-magnitude",
    Severity.warning,
    Scope.record,
    "|dCp| is far beyond what a condensed phase can have.",
    "Condensed-phase heat capacities stay within a few hundred J/(mol K) for the "
    "substances such tables hold; common practice.",
    (
        Threshold("limit", 250.0, "J/(mol K)", "largest |dCp| accepted"),
        Threshold("antoine_factor", 3.0, "-", "widening for Antoine records"),
    ),
)
def heat_capacity_magnitude(ctx: AuditContext):
    """The largest |dCp| over the range is compared with a limit; ends of the range suffice
    for log-linear forms (dCp is monotone in T), the Antoine dCp is also tested at its
    stationary point, and Wagner curves on a grid, over the near-ideal part of the range
    (as for ``heat-capacity-sign``). Large magnitudes mean a decimal slip in the log T or D
    coefficient or a fit extrapolated far beyond its data.
    Tested over the near-ideal part of the range, as ``heat-capacity-sign``.
    """
    th = ctx.thresholds("heat-capacity-magnitude")
    ex = ctx.range_extrema
    mag = np.fmax(np.abs(ex.cp_min), np.abs(ex.cp_max))
    limit = th["limit"] * np.where(ctx.antoine, th["antoine_factor"], 1.0)
    with np.errstate(invalid="ignore"):
        bad = ctx.evaluable & (mag > limit)
    for i in np.flatnonzero(bad):
        yield Hit(
            i,
            f"the implied |dCp| reaches {jk(mag[i])} in the range, beyond the {limit[i]:g} "
            "J/(mol K) a condensed phase plausibly has: look for a slipped decimal in the log T "
            "or D coefficient.",
            {"heat_capacity_change_abs_max_J_per_mol_K": mag[i], "limit": limit[i]},
        )


@check(
    "above-critical",
    Severity.error,
    Scope.record,
    "A liquid record's range passes the critical temperature by more than the critical "
    "temperature is known to.",
    "The liquid-vapour curve ends at the critical point. Independent evaluations of Tc "
    "differ: between the IUPAC and CRC critical temperatures of 688 substances (via "
    "chemicals, methods IUPAC and CRC) the relative difference is at most 0.16 % for 90 %, "
    "0.41 % for 95 % and 1.3 % for 99 % of them.",
    (
        Threshold(
            "tolerance",
            0.005,
            "-",
            "relative margin beyond Tc allowed when the reference states no uncertainty",
        ),
    ),
    tiers={"reference-doubted": Severity.warning},
)
def above_critical(ctx: AuditContext):
    """A liquid record whose t_max exceeds the critical temperature describes no equilibrium
    above Tc. Tc is the record's own (Wagner forms), else the reference value; a reference
    from another evaluation than the record's is uncertain by its stated uncertainty or, when
    none is stated, by the relative tolerance (how far independent evaluations of Tc differ).
    A range ending at the record's own Tc, or within that margin of a reference, is not a
    defect: compilations state Wagner ranges as Tmin..Tc.

    Two evaluations of Tc can disagree by more than that, and then the reference may be the
    one that is off. When the substance has a reference critical pressure and the curve
    reaches it nearer its own range end than the reference Tc, the range ends at its
    source's Tc: a warning that names the reference. A reference Tc below the whole range
    is named the same way.
    """
    th = ctx.thresholds("above-critical")
    own = ctx.curves.own_t_crit
    ref = ctx.reference("critical_temperature")
    u = ctx.reference_uncertainty("critical_temperature")
    margin = np.where(np.isfinite(u), u, th["tolerance"] * ref)
    tc = np.where(np.isfinite(own), own, ref)
    allowed = np.where(np.isfinite(own), own * (1 + 1e-9), ref + margin)
    with np.errstate(invalid="ignore"):
        bad = ctx.evaluable & ctx.liquid & (ctx.curves.t_max > allowed)
        # a reference Tc below the whole range (phenanthrene's 0.9 K in one table) says
        # more about the reference than about the record: no liquid curve lies entirely
        # above its critical point
        below = ~np.isfinite(own) & (ref + margin < ctx.curves.t_min)
    sides = _critical_pressure_sides(ctx, np.flatnonzero(bad & ~below & ~np.isfinite(own)), ref)
    for i in np.flatnonzero(bad):
        if below[i]:
            yield _implausible_tc(ctx, i, ref[i])
            continue
        if i in sides:
            yield _disputed_tc(ctx, i, ref[i], *sides[i])
            continue
        whose = "the record's own" if np.isfinite(own[i]) else "the reference"
        if np.isfinite(own[i]):
            beyond = ""
        elif np.isfinite(u[i]):
            beyond = f" (beyond its stated uncertainty of {margin[i]:.3g} K)"
        else:
            beyond = (
                f" by more than the {th['tolerance'] * 100:g} % ({margin[i]:.3g} K) by which "
                "independent evaluations of Tc differ"
            )
        yield Hit(
            i,
            f"the range ends at {kelvin(ctx.curves.t_max[i])}, above {whose} critical "
            f"temperature {kelvin(tc[i])}{beyond}, where no liquid exists.",
            {
                "t_max_K": ctx.curves.t_max[i],
                "critical_temperature_K": tc[i],
                "allowed_K": allowed[i],
                "residual_K": ctx.curves.t_max[i] - tc[i],
            },
        )


def _critical_pressure_sides(ctx: AuditContext, rows: np.ndarray, tc_ref: np.ndarray) -> dict:
    """For the records in ``rows`` whose range ends above a reference Tc and whose substance
    has a reference critical pressure: where the curve itself reaches that Pc (T*, found up
    to 10 % beyond its range). A range stated as Tmin..Tc ends at its own source's Tc, so a
    curve that reaches the reference Pc nearer its own range end than the reference Tc sides
    with its source: returns {row: (T*, Pc)} for those, which are a dispute between two
    evaluations of Tc, not a range beyond the critical point.
    """
    if rows.size == 0:
        return {}
    pc = ctx.reference("critical_pressure", rows)
    keep = np.isfinite(pc)
    rows, pc = rows[keep], pc[keep]
    if rows.size == 0:
        return {}
    c = ctx.curves.take(rows)
    t_star = temperature_at(c, np.log(pc), c.t_min, 1.1 * c.t_max)
    with np.errstate(invalid="ignore"):
        own_side = np.abs(t_star - c.t_max) < np.abs(t_star - tc_ref[rows])
    return {
        int(r): (float(t), float(p))
        for r, t, p, ok in zip(rows, t_star, pc, own_side, strict=True)
        if ok
    }


def _disputed_tc(ctx: AuditContext, row: int, tc: float, t_star: float, pc: float):
    """``above-critical`` for a range that ends at its own source's Tc, which the curve
    and the reference Pc support against the reference Tc: a warning naming the reference.
    """
    c = ctx.curves
    t_max = float(c.t_max[row])
    return Hit(
        row,
        f"the range ends at {kelvin(t_max)}, above the reference critical temperature "
        f"{kelvin(tc)}; but the curve reaches the reference critical pressure {pc:.4g} Pa at "
        f"{kelvin(t_star)}, near its own range end: the range ends at its source's Tc, and the "
        "reference Tc is the likelier to be off (two evaluations of Tc disagree; check the "
        "reference against its source).",
        {
            "t_max_K": t_max,
            "critical_temperature_K": float(tc),
            "critical_pressure_Pa": pc,
            "reaches_critical_pressure_K": t_star,
            "likely_culprit": "reference",
        },
        tier="reference-doubted",
    )


def _implausible_tc(ctx: AuditContext, row: int, tc: float):
    """``above-critical`` for a reference Tc below a liquid record's whole range: a warning
    that names the reference (at its own file and line) as the likely culprit.
    """
    source, file, line = _reference_at(ctx, "critical_temperature", ctx.codes[row])
    c = ctx.curves
    return Hit(
        row,
        f"the reference critical temperature {kelvin(tc)} ({source}) lies below the whole "
        f"range of {ctx.id(row)} ({kelvin(c.t_min[row])} to {kelvin(c.t_max[row])}); no "
        "liquid curve lies entirely above its critical point, so the reference value looks "
        "wrong, not the record: check it against its source.",
        {
            "critical_temperature_K": float(tc),
            "t_min_K": float(c.t_min[row]),
            "t_max_K": float(c.t_max[row]),
            "likely_culprit": "reference",
        },
        tier="reference-doubted",
        file=file,
        line=line,
    )


def _reference_at(ctx: AuditContext, quantity: str, code: int):
    """(source, file, line) of substance ``code``'s reference ``quantity`` (its first row),
    for a finding that names the reference; ("?", None, None) when there is none.
    """
    refs = ctx.table.references
    at = np.flatnonzero(eq(refs["quantity"], quantity) & (ctx.ref_codes == code))
    if not at.size:
        return "?", None, None
    r0 = int(at[0])
    return str(refs["source"].iat[r0]), str(refs["file"].iat[r0]), int(refs["line"].iat[r0])


class BoilingResiduals(NamedTuple):
    """The liquid records with a reference normal boiling point, and how they meet it."""

    rows: np.ndarray  # record rows
    curves: Curves  # their curves
    t: np.ndarray  # reference T_b [K]
    y: np.ndarray  # ln(P/Pa) at T_b
    y1: np.ndarray  # its slope there [1/K]
    d: np.ndarray  # ln P(T_b) - ln 101325
    tol: np.ndarray  # tolerance of d, widened for extrapolation [ln P]
    stated: np.ndarray  # whether the reference states its uncertainty
    base: np.ndarray  # the tolerance before that widening [ln P]


def _boiling_residuals(ctx: AuditContext) -> BoilingResiduals | None:
    """For the liquid records with a reference normal boiling point: d = ln P(T_b) -
    ln 101325 and its tolerance (k times the combined uncertainty of curve and reference,
    never less than the tolerance, and widened in quadrature by the extrapolation allowance
    where T_b lies outside the range: :mod:`vpaudit.checks.extrapolation`); None when there
    are none.
    """
    th = ctx.thresholds("boiling-point-mismatch")
    tb = ctx.reference("normal_boiling_point")
    rows = np.flatnonzero(ctx.evaluable & ctx.liquid & np.isfinite(tb))
    if rows.size == 0:
        return None
    c = ctx.curves.take(rows)
    t = tb[rows]
    y, y1, _ = evaluate(c, t, order=1)
    d = y - LN_P_STANDARD
    u_p = ctx.uncertainty[rows]
    u_p = np.where(np.isnan(u_p), th["default_uncertainty"], u_p)
    u_tb = ctx.reference_uncertainty("normal_boiling_point", rows)
    stated = ~np.isnan(u_tb)
    u_tb = np.where(stated, u_tb, th["tb_uncertainty"])
    with np.errstate(over="ignore"):  # a slope that overflows leaves an infinite sigma
        sigma = np.sqrt(u_p**2 + (np.abs(y1) * u_tb) ** 2)
    base = np.maximum(th["tolerance"], th["factor"] * sigma)
    # a T_b outside the range is reached by extrapolation, which drifts (measured)
    tol = np.hypot(base, allowance(c.t_min, c.t_max, t))
    return BoilingResiduals(rows, c, t, y, y1, d, tol, stated, base)


def _outvoted(ctx: AuditContext, rows: np.ndarray, d: np.ndarray, tol: np.ndarray) -> np.ndarray:
    """For each row, whether its substance has two or more liquid records that all miss the
    reference T_b on the same side, beyond their tolerance, while agreeing with each other
    within it: several sources against one reference value.
    """
    out = np.zeros(rows.size, dtype=bool)
    codes_ = ctx.codes[rows]
    with np.errstate(invalid="ignore"):
        miss = ~(np.abs(d) <= tol)
    for code in np.unique(codes_[miss]):
        k = np.flatnonzero(codes_ == code)
        if k.size < 2 or not miss[k].all():
            continue
        same_side = (np.sign(d[k]) == np.sign(d[k[0]])).all()
        agree = (d[k].max() - d[k].min()) <= tol[k].min()
        if same_side and agree:
            out[k] = True
    return out


MMHG = 133.322387415  # Pa per mmHg (conventional millimetre of mercury)


def _reduced_pressure_reference(th, c, t, y, y1, t_implied):
    """Which reference boiling points look like boiling points at reduced pressure filed as
    normal ones: the curve gives a vacuum-distillation pressure at the reference (between
    ``reduced_min`` and ``reduced_max``) and reaches 101325 Pa above ``reduced_above``
    (boiling points at reduced pressure are reported for liquids distilled under vacuum,
    which boil high), its entropy of vaporization where it reaches
    101325 Pa, R T y'(T), obeys Trouton's rule as extended to associating liquids, and the
    one it would need at the reference T_b does not. A slip in the record's pressure level
    (a wrong unit) leaves the reference's entropy normal and the implied one off, so it is
    not taken for this. Returns (flags, entropy at the reference, entropy where the curve
    reaches 101325 Pa), both in J/(mol K) from the ideal-gas Clausius-Clapeyron relation.
    """
    s_ref = R * t * y1
    with np.errstate(invalid="ignore"):
        _, y1_imp, _ = evaluate(c, np.where(np.isfinite(t_implied), t_implied, t), order=1)
        s_imp = np.where(np.isfinite(t_implied), R * t_implied * y1_imp, np.nan)
        p = np.exp(y)
        flags = (
            (t < t_implied)
            & (t_implied >= th["reduced_above"])
            & (p >= th["reduced_min"])
            & (p <= th["reduced_max"])
            & (s_imp >= th["trouton_min"])
            & (s_imp <= th["trouton_max"])
            & (s_ref > th["trouton_max"])
        )
    return flags, s_ref, s_imp


@check(
    "boiling-point-mismatch",
    Severity.error,
    Scope.record,
    "The liquid curve misses 101325 Pa at the reference normal boiling point.",
    "Definition of the normal boiling point (P = 101325 Pa).",
    (
        Threshold("tolerance", 0.05, "ln P", "smallest |ln P(Tb) - ln 101325| ever reported"),
        Threshold(
            "factor",
            3.0,
            "-",
            "coverage factor k on the combined uncertainty of curve and reference",
        ),
        Threshold(
            "default_uncertainty",
            0.03,
            "-",
            "relative uncertainty of P of a record that states none",
        ),
        Threshold(
            "tb_uncertainty",
            1.0,
            "K",
            "uncertainty of a reference Tb that states none",
        ),
        Threshold(
            "evaluations",
            4.0e-5,
            "1/K",
            "relative difference of Tb, per kelvin of Tb, within which a mismatch beyond "
            "the combined uncertainty is a warning: how far independent evaluations differ",
        ),
        Threshold(
            "evaluations_max",
            0.03,
            "-",
            "largest such relative difference (measured up to 700 K, held above)",
        ),
        Threshold(
            "trouton_min",
            75.0,
            "J/(mol K)",
            "lowest entropy of vaporization at a normal boiling point taken as normal "
            "(Trouton's rule; common practice)",
        ),
        Threshold(
            "trouton_max",
            130.0,
            "J/(mol K)",
            "highest entropy of vaporization at a normal boiling point taken as normal "
            "(associating liquids; common practice)",
        ),
        Threshold(
            "reduced_above",
            400.0,
            "K",
            "lowest normal boiling point of a liquid whose boiling point is reported at "
            "reduced pressure (vacuum distillation; common practice)",
        ),
        Threshold(
            "reduced_min",
            10.0,
            "Pa",
            "lowest pressure of a boiling point at reduced pressure looked for",
        ),
        Threshold(
            "reduced_max",
            50000.0,
            "Pa",
            "highest pressure of a boiling point at reduced pressure looked for",
        ),
        Threshold(
            "near",
            0.10,
            "-",
            "relative distance of Tb from the range within which "
            "a mismatch is an error (farther: a note)",
        ),
    ),
    tiers={"extrapolated": Severity.note, "reference-doubted": Severity.warning},
)
def boiling_point_mismatch(ctx: AuditContext):
    """Compared in ln P, as for the melting point: ln P(T_b) - ln 101325 against k times
    the combined uncertainty of the two parties, sqrt(u_P^2 + (y'(T_b) u_Tb)^2): the record's
    stated relative uncertainty of P (or a default) and the reference T_b's stated
    uncertainty (or a default) carried into ln P through the curve's own slope -- never less
    than the tolerance. The default for T_b is measured: independent evaluations of the
    normal boiling points of about 1,200 organic liquids (chemicals, methods CRC_ORG, YAWS
    and COMMON_CHEMISTRY) differ by 0.2-0.4 K at the median and 1.1-1.5 K at the 75th
    percentile. That distribution has a long tail, which grows with T_b (CRC_ORG against
    YAWS over 4,677 substances, 95th percentile of the relative difference: 1.1-1.3 % below
    400 K, 1.6-2.2 % from 400 to 600 K, 2.9 % from 600 to 700 K; a boiling point at reduced
    pressure filed as the normal one is a common cause). So, against a reference that
    states no uncertainty, a mismatch beyond the combined uncertainty but within
    4e-5/K x T_b of T_b (that 95th percentile: 1.3 % at 325 K, 2 % at 500 K, 2.6 % at
    650 K, held at 3 % above 750 K, where the comparison has too few substances) is a
    warning, since the reference may be the party that is off; beyond it, an
    error. A reference with a stated uncertainty is held to it. The implied boiling
    temperature is evidence. When T_b lies outside the range, the tolerance grows in
    quadrature by the extrapolation allowance (:mod:`vpaudit.checks.extrapolation`); when it
    lies far outside, the check is a note: many evaluated liquid equations stop hundreds of
    kelvin below the boiling point.
    """
    th = ctx.thresholds("boiling-point-mismatch")
    got = _boiling_residuals(ctx)
    if got is None:
        return
    rows, c, t, y, y1, d, tol, stated = got[:8]
    # beyond the combined uncertainty but within how far independent evaluations of T_b
    # differ, a reference that states no uncertainty may as well be the party that is off:
    # a warning
    rel = np.minimum(th["evaluations"] * t, th["evaluations_max"])
    spread = np.where(stated, 0.0, np.abs(y1) * rel * t)
    with np.errstate(invalid="ignore"):
        # a reference that the substance's agreeing sources outvote is reported by
        # reference-contradicted, once, instead of an error on each record
        bad = ~(np.abs(d) <= tol) & ~_outvoted(ctx, rows, d, tol)
    if not bad.any():
        return
    dist = np.maximum(c.t_min - t, t - c.t_max).clip(min=0.0) / t
    # search up to three times the range, but never past a Wagner record's own Tc
    top = np.where(c.is_wagner, np.fmin(3.0 * c.t_max, c.params[:, 6]), 3.0 * c.t_max)
    t_implied = temperature_at(c, LN_P_STANDARD, 0.5 * c.t_min, top)
    reduced, s_ref, s_imp = _reduced_pressure_reference(th, c, t, y, y1, t_implied)
    for k in np.flatnonzero(bad):
        i = rows[k]
        far = dist[k] > th["near"]
        within = abs(d[k]) <= spread[k]
        tier = None
        if far:
            tier = "extrapolated"
        elif within or reduced[k]:
            tier = "reference-doubted"
        if reduced[k] and not far:
            yield Hit(
                i,
                f"the reference normal boiling point {kelvin(t[k])} looks like a boiling "
                f"point at reduced pressure, not the record: the curve gives "
                f"{np.exp(y[k]):.4g} Pa ({np.exp(y[k]) / MMHG:.3g} mmHg) there, and "
                f"reaches 101325 Pa at {kelvin(t_implied[k])} with an entropy of "
                f"vaporization of {jk(s_imp[k])}, as Trouton's rule expects; at the "
                f"reference it would be {jk(s_ref[k])}. Check the reference against its "
                "source for a pressure.",
                {
                    "boiling_point_K": t[k],
                    "difference_lnP": d[k],
                    "tolerance_lnP": tol[k],
                    "residual_over_tolerance": abs(d[k]) / tol[k],
                    "implied_boiling_point_K": t_implied[k],
                    "outside_range_fraction": dist[k],
                    "entropy_at_reference_J_molK": s_ref[k],
                    "entropy_at_implied_J_molK": s_imp[k],
                    "likely_culprit": "reference",
                },
                tier=tier,
            )
            continue
        where = (
            f"; {kelvin(t[k])} is {dist[k] * 100:.0f} % outside the range, so this is "
            "an extrapolation"
            if far
            else (
                f"; that is within the {rel[k] * 100:.2g} % by which "
                "independent evaluations of normal boiling points near it differ, so the "
                "reference may be the one that is off"
                if within
                else ""
            )
        )
        yield Hit(
            i,
            f"at the reference normal boiling point {kelvin(t[k])} the curve gives "
            f"{np.exp(y[k]):.4g} Pa instead of 101325 Pa, off by {ln_ratio(d[k])}; "
            + (
                f"it reaches 101325 Pa at {kelvin(t_implied[k])}"
                if np.isfinite(t_implied[k])
                else f"it does not reach 101325 Pa between {kelvin(0.5 * c.t_min[k])} and "
                f"{kelvin(top[k])}"
            )
            + f"{where}.",
            {
                "boiling_point_K": t[k],
                "difference_lnP": d[k],
                "tolerance_lnP": tol[k],
                "residual_over_tolerance": abs(d[k]) / tol[k],
                "implied_boiling_point_K": t_implied[k],
                "outside_range_fraction": dist[k],
            },
            tier=tier,
        )


@check(
    "reference-contradicted",
    Severity.warning,
    Scope.sources,
    "Several sources of a substance agree with each other and not with its reference normal "
    "boiling point: the reference looks wrong, not the records.",
    "Reference values in compilations are not all right; independent sources that agree "
    "outweigh one value from another evaluation.",
)
def reference_contradicted(ctx: AuditContext):
    """Two or more liquid records of a substance miss the reference T_b on the same side,
    each beyond the boiling-point tolerance, and agree with each other within it. The
    reference is named as the likely culprit, located at its own file and line, and the
    records draw no boiling-point error: blaming each record would repeat one wrong value.
    """
    got = _boiling_residuals(ctx)
    if got is None:
        return
    rows, c, t, d, tol = got.rows, got.curves, got.t, got.d, got.tol
    out = _outvoted(ctx, rows, d, tol)
    if not out.any():
        return
    t_implied = temperature_at(c, LN_P_STANDARD, 0.5 * c.t_min, 3.0 * c.t_max)
    for code in np.unique(ctx.codes[rows[out]]):
        k = np.flatnonzero(out & (ctx.codes[rows] == code))
        source, file, line = _reference_at(ctx, "normal_boiling_point", code)
        implied = t_implied[k]
        ids = tuple(ctx.id(rows[j]) for j in k)
        yield Hit(
            int(rows[k[0]]),
            f"the reference normal boiling point {kelvin(t[k[0]])} ({source}) disagrees with "
            f"all {k.size} liquid records, which agree with each other: they reach 101325 Pa "
            f"at {kelvin(float(np.nanmean(implied)))} (off by {ln_ratio(float(d[k].mean()))} "
            "at the reference). The reference value looks wrong, not the records: check it "
            "against its source.",
            {
                "boiling_point_K": float(t[k[0]]),
                "implied_boiling_points_K": [float(x) for x in implied],
                "difference_lnP": [float(x) for x in d[k]],
                "tolerance_lnP": float(tol[k].min()),
            },
            records=ids,
            file=file,
            line=line,
        )


def _delta_z(ctx: AuditContext, rows: np.ndarray, t: np.ndarray, y: np.ndarray):
    """Z_vapour - Z_condensed estimated from a second-virial coefficient (Pitzer-Curl
    correlation in the Abbott form, B Pc/(R Tc) = B0 + omega B1), the condensed Z neglected;
    NaN where Tc and Pc are not known. The acentric factor comes from the curve itself.
    """
    tc = ctx.critical_temperature()[rows]
    pc = ctx.reference("critical_pressure", rows)
    pc = np.where(np.isnan(pc), np.exp(ctx.curves.own_ln_p_crit[rows]), pc)  # else its own
    c = ctx.curves.take(rows)
    y07 = evaluate(c, 0.7 * tc, order=0)[0]
    with np.errstate(invalid="ignore", divide="ignore"):
        omega = -1.0 - (y07 - np.log(pc)) / np.log(10.0)
        tr = t / tc
        b0 = 0.083 - 0.422 / tr**1.6
        b1 = 0.139 - 0.172 / tr**4.2
        z = 1.0 + (b0 + omega * b1) * (np.exp(y) / pc) / tr
    return z


@check(
    "enthalpy-mismatch",
    Severity.warning,
    Scope.record,
    "The implied dH_vap or dH_sub differs from a reference value.",
    "Clausius-Clapeyron; the slope gives dH/dZ, 2-7 % above dH_vap at a normal boiling "
    "point (corrected with a Pitzer-Curl second virial coefficient where Tc and Pc are "
    "known).",
    (
        Threshold("tolerance", 0.05, "-", "relative difference accepted"),
        Threshold("nonideal_allowance", 0.07, "-", "added when P > 10 kPa and dZ is unknown"),
        Threshold("error_above", 0.30, "-", "relative difference above which it is an error"),
    ),
    tiers={"beyond-error-above": Severity.error},
)
def enthalpy_mismatch(ctx: AuditContext):
    """Each reference enthalpy of vaporization (liquid records) or sublimation (solid
    records) is compared with R T^2 dlnP/dT * dZ at its stated temperature (298.15 K if none
    is given), when that temperature lies within the record's range (+/- 5 %).
    """
    th = ctx.thresholds("enthalpy-mismatch")
    refs = ctx.table.references
    if not len(refs):
        return
    vap = eq(refs["quantity"], "enthalpy_of_vaporization")
    sub = eq(refs["quantity"], "enthalpy_of_sublimation")
    ref_key = np.where(vap | sub, ctx.ref_codes * 2 + vap, -1)
    rows, ref_rows = match(ctx.codes * 2 + ctx.liquid, ref_key)
    m = refs.iloc[ref_rows].reset_index(drop=True)
    t = m["at_temperature"].to_numpy(dtype=float, na_value=np.nan)
    t = np.where(np.isnan(t), 298.15, t)
    c = ctx.curves.take(rows)
    inside = ctx.evaluable[rows] & (t >= 0.95 * c.t_min) & (t <= 1.05 * c.t_max)
    y, y1, _ = evaluate(c, t, order=1)
    apparent = R * t * t * y1
    dz = _delta_z(ctx, rows, t, y)
    known = np.isfinite(dz)
    h = np.where(known, apparent * dz, apparent)
    ref = m["value_si"].to_numpy(dtype=float)
    rel = (h - ref) / ref
    tol = th["tolerance"] + np.where(~known & (np.exp(y) > 1e4), th["nonideal_allowance"], 0)
    with np.errstate(invalid="ignore"):
        bad = inside & ~(np.abs(rel) <= tol)
    for k in np.flatnonzero(bad):
        i = rows[k]
        what = "vaporization" if ctx.liquid[i] else "sublimation"
        yield Hit(
            i,
            f"the implied enthalpy of {what} at {kelvin(t[k])} is {kj(h[k])}, "
            f"{rel[k] * 100:+.1f} % from the reference {kj(ref[k])} "
            f"({m['source'].iat[k]}); tolerance {tol[k] * 100:.0f} %.",
            {
                "implied_J_per_mol": h[k],
                "apparent_J_per_mol": apparent[k],
                "delta_Z": dz[k] if known[k] else None,
                "reference_J_per_mol": ref[k],
                "relative_difference": rel[k],
                "tolerance": tol[k],
                "at_K": t[k],
            },
            tier="beyond-error-above" if abs(rel[k]) > th["error_above"] else None,
        )


@check(
    "points-misfit",
    Severity.warning,
    Scope.record,
    "Measured points deviate from the record beyond their uncertainty.",
    "Residuals in ln P against the combined stated uncertainties (k-sigma test).",
    (
        Threshold("factor", 3.0, "-", "coverage factor k on the combined uncertainty"),
        Threshold("default_uncertainty", 0.05, "-", "relative uncertainty when none is given"),
        Threshold("range_margin", 0.02, "-", "relative margin beyond the range still compared"),
    ),
)
def points_misfit(ctx: AuditContext):
    """Every measured point of the record's substance and phase within its range (plus a
    small margin) is compared in ln P; the uncertainty of each residual combines the point's
    and the record's relative uncertainties. Reported with RMS and worst point.
    """
    th = ctx.thresholds("points-misfit")
    pts = ctx.table.points
    if not len(pts):
        return
    rec_key = np.where(ctx.evaluable, ctx.codes * 2 + ctx.liquid, -1)
    pt_key = np.where(ctx.point_codes >= 0, ctx.point_codes * 2 + eq(pts["phase"], "liquid"), -1)
    rows, pt_rows = match(rec_key, pt_key)
    if not rows.size:
        return
    m = pts.iloc[pt_rows].reset_index(drop=True)
    t = m["T_K"].to_numpy(dtype=float)
    c = ctx.curves.take(rows)
    margin = th["range_margin"]
    inside = (t >= c.t_min * (1 - margin)) & (t <= c.t_max * (1 + margin))
    y = evaluate(c, t, order=0)[0]
    r = np.log(m["P_Pa"].to_numpy(dtype=float)) - y
    u_pt = m["uncertainty"].to_numpy(dtype=float, na_value=np.nan)
    u_rec = ctx.uncertainty[rows]
    u_pt = np.where(np.isnan(u_pt), th["default_uncertainty"], u_pt)
    u_rec = np.where(np.isnan(u_rec), 0.0, u_rec)
    sigma = np.sqrt(u_pt**2 + u_rec**2)
    z = np.abs(r) / sigma
    frame = pd.DataFrame({"row": rows, "r": r, "z": z, "t": t})[inside]
    if not len(frame):
        return
    g = frame.groupby("row")
    stats = pd.DataFrame(
        {
            "rms": np.sqrt(frame.assign(r2=frame["r"] ** 2).groupby("row")["r2"].mean()),
            "zmax": g["z"].max(),
            "n": g["r"].size(),
        }
    )
    worst = frame.loc[g["z"].idxmax()].set_index("row")
    for i, st in stats[stats["zmax"] > th["factor"]].iterrows():
        w = worst.loc[i]
        yield Hit(
            int(i),
            f"{int(st['n'])} measured point(s) deviate by {st['rms']:.3g} in ln P (RMS); the "
            f"worst, at {kelvin(w['t'])}, by {ln_ratio(w['r'])}, {w['z']:.1f} times its "
            f"combined uncertainty (limit {th['factor']:g}).",
            {
                "points": int(st["n"]),
                "rms_lnP": st["rms"],
                "worst_lnP": w["r"],
                "worst_at_K": w["t"],
                "worst_sigmas": w["z"],
                "factor": th["factor"],
            },
        )
