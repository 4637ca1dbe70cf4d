"""Checks of what one curve implies and of how it meets its own record's witnesses: the
entropy of the phase change (a band), the heat-capacity change (its sign and magnitude), a
term too small to matter, a reference enthalpy at its own temperature, measured points.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .._columns import eq
from ..constants import R
from ..equations.engine import evaluate, heat_capacity_from
from ._context import LN_P_STANDARD, AuditContext, match, stated_tolerance
from ._registry import Scope, Severity, Threshold, check
from ._text import jk, kelvin, kj, ln_ratio, pressure_at_ln
from .hits import Hit, Hits, sentences
from .real_gas import departure

__all__: list[str] = []

#: Trouton's entropy of vaporization at the normal boiling point, the reference of the
#: entropy band's rise below it (common practice: 85-88 J/(mol K)). [J/(mol K)]
TROUTON = 88.0


@check(
    "enthalpy-implausible",
    Severity.error,
    Scope.record,
    "The implied standard entropy of the phase change lies outside a plausible band.",
    "Trouton's rule (dS_vap about 85-88 J/(mol K) at the normal boiling point; common "
    "practice) and its generalisation dS = dH/T + R ln(P/P0) at any temperature, which "
    "grows below the boiling point by the integral of -dCp/T (Kirchhoff). The band of "
    "liquids follows the pressure where it is tested; its edges are measured on real "
    "compilations (chemicals: Landolt odd-CAS rows, Poling, Perry, McGarry; "
    "docs/calibration.md).",
    (
        Threshold(
            "liquid_min",
            40.0,
            "J/(mol K)",
            "lowest plausible dS of vaporization where P is above P0/e (near and above the "
            "normal boiling point)",
        ),
        Threshold(
            "liquid_min_low_pressure",
            60.0,
            "J/(mol K)",
            "lowest plausible dS of vaporization at P0/e^3 (about 5 kPa); linear in ln P "
            "between the two",
        ),
        Threshold(
            "liquid_min_dcp",
            20.0,
            "J/(mol K)",
            "below P0/e^3 the lower edge rises with the curve's own |dCp|, at most this: "
            "the smallest |dCp| of vaporization of molecular liquids (methane, argon: "
            "21-29 via CoolProp)",
        ),
        Threshold(
            "cryogenic_fraction",
            0.5,
            "-",
            "below it, where lower: this fraction of the Trouton-Hildebrand-Everett entropy "
            "R (4.4 + ln T/K) (cryogenic and quantum liquids)",
        ),
        Threshold(
            "liquid_max",
            140.0,
            "J/(mol K)",
            "highest plausible dS of vaporization at and above the normal boiling point",
        ),
        Threshold(
            "liquid_max_dcp",
            250.0,
            "J/(mol K)",
            "largest |dCp| of vaporization by which the upper edge rises below the normal "
            "boiling point",
        ),
        Threshold("solid_min", 20.0, "J/(mol K)", "lowest plausible dS of sublimation"),
        Threshold("solid_max", 480.0, "J/(mol K)", "highest plausible dS of sublimation"),
    ),
)
def enthalpy_implausible(ctx: AuditContext, th: dict[str, float]):
    """The entropy of the phase change to the ideal gas at P0 = 101325 Pa, dS = dH(T)/T + R
    ln(P(T)/P0), is nearly the same for most substances at their normal boiling point
    (Trouton's dH_vap/T_b). It is evaluated at the reference normal boiling point (the
    median of the substance's values when it has several) when that lies in a liquid
    record's range, else at the middle of the range in 1/T. Below the boiling point it
    grows, since d(dS)/dT = dCp/T and dCp < 0 -- most for heavy and long-chain liquids,
    measured far below their boiling point -- so the band of a liquid widens upward as
    ln(P/P0) falls (:func:`entropy_band`). A log10/ln slip scales dH by 2.3; a
    pressure-unit slip by a factor f moves dS by R ln f and ln(P/P0) by ln f together, a
    step across the band's slope (mmHg read as Pa: -40.7 J/(mol K) at a pressure 133
    times lower, where the band's lower edge is higher): both leave the band.
    """
    evaluable = np.flatnonzero(ctx.evaluable)
    # in blocks of rows, so that the band's temporaries stay block-sized; then the few rows
    # outside it once more, for their messages (the same arithmetic, row by row)
    step = ctx.runtime.block_rows
    found = [
        part[standard_entropy(ctx, th, part)[0]]
        for part in (evaluable[a : a + step] for a in range(0, evaluable.size, step))
    ]
    rows = np.concatenate(found) if found else evaluable
    if rows.size == 0:
        return
    _, liquid, t, y, y1, ds, lo, hi, use_tb = standard_entropy(ctx, th, rows)
    h = R * t**2 * y1
    messages = sentences(_entropy_sentences, liquid, ds, t, h, y, lo, hi)
    yield Hits(
        rows,
        messages,
        {
            "entropy_J_per_mol_K": ds,
            "at_K": t,
            "enthalpy_J_per_mol": h,
            "band_min": lo,
            "band_max": hi,
            "at_boiling_point": use_tb,
        },
    )


def standard_entropy(ctx: AuditContext, th: dict[str, float], rows: np.ndarray):
    """For the records ``rows``: (outside, liquid, T, ln P, d ln P/dT, dS, band low, band
    high, at the boiling point) of :func:`enthalpy_implausible`: the standard entropy of the
    phase change dS [J/(mol K)] at the reference normal boiling point where it lies in a
    liquid's range, else at the middle of the range in 1/T [K], and whether it lies outside
    its band (:func:`entropy_band`).
    """
    c = ctx.curves.take(rows)
    t_mid = 2.0 / (1.0 / c.t_min + 1.0 / c.t_max)
    tb = ctx.reference_median("normal_boiling_point", rows)  # with one value, that value
    liquid = ctx.liquid[rows]
    use_tb = liquid & (tb >= c.t_min) & (tb <= c.t_max)
    t = np.where(use_tb, tb, t_mid)
    y, y1, y2 = evaluate(c, t, order=1)
    ds = R * t * y1 + R * (y - LN_P_STANDARD)
    dcp = heat_capacity_from(t, y1, y2)
    lo, hi = entropy_band(th, liquid, t, y - LN_P_STANDARD, dcp)
    with np.errstate(invalid="ignore"):
        # a curve with no finite value there is pressure-not-finite's (its range extrema)
        outside = np.isfinite(ds) & ~((ds >= lo) & (ds <= hi))
    return outside, liquid, t, y, y1, ds, lo, hi, use_tb


def entropy_band(
    th: dict,
    liquid: np.ndarray,
    t: np.ndarray,
    ln_p_rel: np.ndarray,
    dcp: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """The plausible band of the standard entropy of the phase change at ``t`` [K], where
    the curve gives ln(P/P0) = ``ln_p_rel`` and implies ``dcp`` [J/(mol K)] (engine's
    ``heat_capacity_from``); one definition, for ``enthalpy-implausible`` and the
    diagnosis. [J/(mol K)]

    Liquids: the entropy dS = dH/T + R ln(P/P0) is Trouton's dS_b at the normal boiling
    point T_b and grows below it as d(dS)/dT = dCp/T (Kirchhoff), by -dCp ln(T_b/T) for a
    constant dCp < 0; and ln(P0/P) = (dS_b/R)(T_b/T - 1) to first order. So the upper edge
    is ``liquid_max`` at and above P0 and ``liquid_max`` + ``liquid_max_dcp``
    ln(1 + R ln(P0/P) / 88 J/(mol K)) below it (Trouton's 88 as dS_b): it rises fast just
    below the boiling point and slowly far below it, where a heavy liquid is measured and
    where a metal's entropy stays near Trouton's.

    The lower edge, which no dCp lowers below the boiling point, is ``liquid_min`` near and
    above it (compilations carry equations estimated from one point at the boiling point at
    44-49 J/(mol K)) and ``liquid_min_low_pressure`` at P0/e^3, linear in ln P between. Below
    P1 = P0/e^3 it rises as the upper edge does, by k ln(1 + R ln(P1/P) / 88 J/(mol K)),
    with k the curve's own |dCp| (``dcp``) there, at most ``liquid_min_dcp``: a curve is
    held to the growth it states itself, up to the growth of the molecular liquid with the
    smallest |dCp| of vaporization (methane 20.5-22.6, argon 23.8-28.8 J/(mol K) between
    0.75 T_b and T_b, ideal gas minus saturated liquid, CoolProp). A straight line in 1/T
    (the two-term form, an Antoine equation with C = 0) and a curve with a positive dCp
    (``heat-capacity-sign``'s) state no growth and keep the edge of P1: a straight line
    may be a metal's, whose entropy of vaporization can be low and its |dCp| small (barium:
    140 kJ/mol at 2118 K, 66 J/(mol K), CRC via chemicals).
    At cryogenic temperatures the entropy of vaporization at the normal boiling point falls
    with it (the Trouton-Hildebrand-Everett rule; CRC enthalpies of vaporization at T_b via
    chemicals, Hvap_data_CRC: argon 73.7 J/(mol K) at 87.3 K, nitrogen 72.0 at 77.4 K, neon
    63.1 at 27.1 K, hydrogen 44.1 at 20.4 K, helium 18.9 at 4.2 K, where an ideal-gas curve
    implies 28-33). There the lower edge is ``cryogenic_fraction`` of R (4.4 + ln T/K)
    wherever that is below ``liquid_min`` (below about 185 K), with no rise: quantum liquids
    keep their low entropy below the boiling point (helium-4 in three compilations: 23-25
    J/(mol K) at 2.6-2.9 K and ln(P/P0) about -2). Solids: [solid_min, solid_max].

    A pressure-unit slip by a factor f moves the entropy by R ln f and ln(P/P0) by ln f:
    across the band's slope, so it leaves the band sooner than a fixed band would let it
    (mmHg for Pa: 40.7 J/(mol K) down, where the lower edge stands up to 20 higher; Pa for
    mmHg: 40.7 up, where the upper edge stands about 100 lower). The edges' values are
    measured on real compilations (docs/calibration.md, "The entropy band follows the
    pressure").
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        cryo = th["cryogenic_fraction"] * R * (4.4 + np.log(t))
        below = np.maximum(-ln_p_rel, 0.0)
    ramp = np.clip((below - 1.0) / 2.0, 0.0, 1.0)
    rise = (th["liquid_min_low_pressure"] - th["liquid_min"]) * ramp
    # below P0/e^3 (where the ramp ends), the growth the curve states, up to liquid_min_dcp
    k = np.clip(np.nan_to_num(-dcp, nan=0.0), 0.0, th["liquid_min_dcp"])
    rise += k * np.log1p(R * np.maximum(below - 3.0, 0.0) / TROUTON)
    lo_liquid = np.where(cryo < th["liquid_min"], cryo, th["liquid_min"] + rise)
    lo = np.where(liquid, lo_liquid, th["solid_min"])
    rise_hi = th["liquid_max_dcp"] * np.log1p(R * below / TROUTON)
    hi = np.where(liquid, th["liquid_max"] + rise_hi, th["solid_max"])
    return lo, hi


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
def heat_capacity_sign(ctx: AuditContext, th: dict[str, float]):
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
    ex = ctx.range_extrema
    factor = np.where(ctx.antoine, th["antoine_factor"], 1.0)
    rows = np.flatnonzero(heat_capacity_positive(ctx, th))
    bow = ex.cp_max[rows] / R * bow_of_ln_t(ex.cp_lo[rows], ex.cp_hi[rows])
    u = ctx.uncertainty[rows]
    u = np.where(np.isnan(u), th["resolvable"], u)
    cp, t, factor = ex.cp_max[rows], ex.cp_max_T[rows], factor[rows]
    with np.errstate(invalid="ignore"):
        far = cp > th["error_above"] * factor
        shown = bow > u  # False where the bow is not known
    # the term whose sign bends the curve so, in each family's own coefficients
    # (_BENDING_TERM: log-linear, Antoine, Wagner)
    term = np.where(ctx.curves.is_wagner[rows], 2, np.where(ctx.antoine[rows], 1, 0))
    term = term.astype(np.int8)
    quiet = far & ~shown
    for tier, sel in ((None, ~(far & shown)), ("beyond-error-above", far & shown)):
        ks = np.flatnonzero(sel)
        if ks.size:
            yield Hits(
                rows[ks],
                sentences(_dcp_sentences, cp[ks], t[ks], bow[ks], quiet[ks], term[ks]),
                {
                    "heat_capacity_change_J_per_mol_K": cp[ks],
                    "at_K": t[ks],
                    "tolerance": th["tolerance"] * factor[ks],
                    "bow_lnP": bow[ks],
                },
                tier=tier,
            )


def heat_capacity_positive(ctx: AuditContext, th: dict[str, float]) -> np.ndarray:
    """Whether each record draws ``heat-capacity-sign`` under its thresholds ``th``: an
    implied dCp beyond the tolerance (wider for Antoine records) in the near-ideal part of
    its range (one definition, for that check and for the sources it weighs).
    """
    factor = np.where(ctx.antoine, th["antoine_factor"], 1.0)
    with np.errstate(invalid="ignore"):
        return ctx.evaluable & (ctx.range_extrema.cp_max > th["tolerance"] * factor)


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
def heat_capacity_magnitude(ctx: AuditContext, th: dict[str, float]):
    """The largest |dCp| over the range is compared with a limit; ends of the range suffice
    for log-linear forms (dCp is monotone in T), the Antoine dCp is also tested at its
    stationary point, and Wagner curves on a grid, over the near-ideal part of the range
    (as for ``heat-capacity-sign``). Large magnitudes mean a decimal slip in the log T or D
    coefficient or a fit extrapolated far beyond its data.
    Tested over the near-ideal part of the range, as ``heat-capacity-sign``.
    """
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
    "term-without-effect",
    Severity.error,
    Scope.record,
    "A fitted D T^E term changes ln P by almost nothing over the range.",
    "A coefficient a fit gave changes the curve it was fitted to; a term worth less than a "
    "part per million in P was not printed by any source (the least such term of Perry's 339 "
    "power-term equations is worth 0.0055 in ln P; docs/calibration.md).",
    (
        Threshold(
            "least_effect",
            1.0e-6,
            "ln P",
            "largest change of ln P over the range below which a nonzero D T^E term is "
            "taken to have no effect (a part per million in P)",
        ),
    ),
)
def term_without_effect(ctx: AuditContext, th: dict[str, float]):
    """The D T^E term of a log-linear record (the four-term and power-term forms) is worth
    abs(D T^E) in ln P, largest at one end of the range (a power of T is monotone). A nonzero D
    whose term stays below ``least_effect`` everywhere in the range cannot be the fitted
    equation: a lost sign of the exponent E turns Perry's D T^6 (D about 1e-17; Perry's terms
    are worth 0.0055 to 49 in ln P over their ranges, 1.4 at the median) into D T^-6, worth
    1e-28 or less; a slipped decimal of E (6 read as 0.6) does the same. The curve as written
    lacks the term the source fitted.
    """
    rows, effect = _weak_terms(ctx, th)
    if not rows.size:
        return
    e = ctx.curves.params[rows, 4]
    yield Hits(
        rows,
        [
            f"its D T^E term (E = {ex:g}) changes ln P by at most {ef:.2g} over the range, "
            "less than a part per million in P: a fitted term has an effect. A lost sign of "
            "the exponent E, or a slipped decimal of E or D, is the usual cause."
            for ex, ef in zip(e.tolist(), effect.tolist(), strict=True)
        ],
        {"term_effect_max_lnP": effect},
    )


def _weak_terms(ctx: AuditContext, th: dict[str, float]) -> tuple[np.ndarray, np.ndarray]:
    """The rows whose D T^E term changes ln P by less than ``least_effect`` over their
    range, and by how much at most (abs(D T^E) at the end of the range where it is largest).
    """
    c = ctx.curves
    rows = np.flatnonzero(ctx.evaluable & c.power_term)
    d, e = c.params[rows, 3], c.params[rows, 4]
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        effect = np.fmax(np.abs(d * c.t_min[rows] ** e), np.abs(d * c.t_max[rows] ** e))
    bad = effect < th["least_effect"]
    return rows[bad], effect[bad]


def without_effect(ctx: AuditContext, th: dict[str, float]) -> np.ndarray:
    """Which records carry a D T^E term without effect (``term-without-effect``), as a
    mask over all records (for the diagnosis's screening).
    """
    mask = np.zeros(ctx.n, dtype=bool)
    mask[_weak_terms(ctx, th)[0]] = True
    return mask


@check(
    "enthalpy-mismatch",
    Severity.warning,
    Scope.record,
    "The implied dH_vap or dH_sub differs from a reference value.",
    "Clausius-Clapeyron; the slope gives dH/dZ, 2-7 % above dH_vap at a normal boiling "
    "point (corrected with a Pitzer-Curl second virial coefficient and the liquid's Rackett "
    "volume where Tc and Pc are known).",
    (
        Threshold("tolerance", 0.05, "-", "relative difference accepted"),
        Threshold(
            "factor",
            3.0,
            "-",
            "coverage factor on a reference's stated uncertainty, which widens the tolerance "
            "beyond it (as boiling-point-mismatch's)",
        ),
        Threshold("nonideal_allowance", 0.07, "-", "added when P > 10 kPa and dZ is unknown"),
        Threshold("error_above", 0.30, "-", "relative difference above which it is an error"),
    ),
    tiers={"beyond-error-above": Severity.error},
    witness="relative_difference",
)
def enthalpy_mismatch(ctx: AuditContext, th: dict[str, float]):
    """Each reference enthalpy of vaporization (liquid records) or sublimation (solid
    records) is compared with R T^2 dlnP/dT * dZ at its stated temperature (298.15 K if none
    is given), when that temperature lies within the record's range (+/- 5 %). A reference
    that states its uncertainty u widens the relative tolerance to ``factor`` u / dH where
    that is larger (never below ``tolerance``, the slope's own uncertainty), and an error
    needs a difference beyond both ``error_above`` and that.
    """
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
    dz = departure(ctx, rows, t, y).delta_z
    known = np.isfinite(dz)
    h = np.where(known, apparent * dz, apparent)
    ref = m["value_si"].to_numpy(dtype=float)
    rel = (h - ref) / ref
    u_ref = np.full(len(refs), np.nan)  # stated uncertainties [J/mol], NaN where none
    for q in ("enthalpy_of_vaporization", "enthalpy_of_sublimation"):
        got = ctx.references_of(q)
        u_ref[got.rows] = got.uncertainty
    u_ref = u_ref[ref_rows]
    with np.errstate(invalid="ignore", divide="ignore"):
        tol, widened = stated_tolerance(th, u_ref / np.abs(ref))
    tol = tol + np.where(~known & (np.exp(y) > 1e4), th["nonideal_allowance"], 0)
    with np.errstate(invalid="ignore"):
        bad = inside & ~(np.abs(rel) <= tol)
    for k in np.flatnonzero(bad):
        i = rows[k]
        what = "vaporization" if ctx.liquid[i] else "sublimation"
        why = (
            f" ({th['factor']:g} times the reference's stated uncertainty of {kj(u_ref[k])})"
            if widened[k]
            else ""
        )
        yield Hit(
            i,
            f"the implied enthalpy of {what} at {kelvin(t[k])} is {kj(h[k])}, "
            f"{rel[k] * 100:+.1f} % from the reference {kj(ref[k])} "
            f"({m['source'].iat[k]}); tolerance {tol[k] * 100:.0f} %{why}.",
            {
                "implied_J_per_mol": h[k],
                "apparent_J_per_mol": apparent[k],
                "delta_Z": dz[k] if known[k] else None,
                "reference_J_per_mol": ref[k],
                "relative_difference": rel[k],
                "tolerance": tol[k],
                "at_K": t[k],
            },
            tier="beyond-error-above" if abs(rel[k]) > max(th["error_above"], tol[k]) else None,
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
    witness="rms_lnP",
)
def points_misfit(ctx: AuditContext, th: dict[str, float]):
    """Every measured point of the record's substance and phase within its range (plus a
    small margin) is compared in ln P; the uncertainty of each residual combines the point's
    and the record's relative uncertainties. Reported with RMS and worst point.
    """
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
    # where the curve has no value (pressure-not-finite's, or a Wagner curve beyond its own
    # critical temperature: above-critical's) there is no residual to weigh
    frame = pd.DataFrame({"row": rows, "r": r, "z": z, "t": t})[inside & ~np.isnan(z)]
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


def _entropy_sentences(liquid, ds, t, h, y, lo, hi) -> list[str]:
    """The messages of ``enthalpy-implausible`` (arrays, one value per finding)."""
    hint = (
        " Usual causes: log10 coefficients read as ln or the reverse (dH off by a "
        "factor 2.3), or a wrong pressure unit (dS shifted by R ln of the factor)."
    )
    with np.errstate(over="ignore", under="ignore"):
        p = np.exp(y)
    return [
        f"the implied entropy of {'vaporization' if is_liquid else 'sublimation'} referred to "
        f"the standard pressure, dS = dH/T + R ln(P/101325 Pa), is {jk(dsk)} at {kelvin(tk)} "
        f"(dH = {kj(hk)}, P = {pressure_at_ln(yk, pk, 3)}), outside the plausible "
        f"{lok:.0f}..{hik:.0f} "
        f"J/(mol K){' at that pressure' if is_liquid else ''}.{hint}"
        for is_liquid, dsk, tk, hk, yk, pk, lok, hik in zip(
            liquid.tolist(),
            ds.tolist(),
            t.tolist(),
            h.tolist(),
            y.tolist(),
            p.tolist(),
            lo.tolist(),
            hi.tolist(),
            strict=True,
        )
    ]


#: The term whose sign bends a curve so, by family (log-linear, Antoine, Wagner).
_BENDING_TERM = (
    "the sign of the log T coefficient",
    "C (an Antoine curve whose pole lies below 0 K bends so)",
    "the signs of the C and D terms",
)


def _dcp_sentences(cp, t, bow, quiet, term) -> list[str]:
    """The messages of ``heat-capacity-sign`` (arrays, one value per finding; ``term`` an
    index into :data:`_BENDING_TERM`).
    """
    return [
        f"the implied dCp reaches {jk(c)} at {kelvin(x)}; it should be negative "
        f"(the condensed phase holds more heat than its vapour): check {what}, or whether "
        "the curve is used outside its fitted range"
        + (
            f". Over this narrow range that curvature bends ln P by only {b:.2g}, "
            "within the record's uncertainty."
            if q
            else "."
        )
        for c, x, b, q, what in zip(
            cp.tolist(),
            t.tolist(),
            bow.tolist(),
            quiet.tolist(),
            map(_BENDING_TERM.__getitem__, term.tolist()),
            strict=True,
        )
    ]
