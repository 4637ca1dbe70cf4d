"""Checks of a solid/liquid pair at its triple point against reference values, and of a
solid against its melting point: the melting point and the triple pressure, Hess's law
(dH_sub = dH_fus + dH_vap), the entropy of fusion, the ranges that should meet there and
where a solid can exist (none above the triple point: ``solid-above-melting``).
"""

from __future__ import annotations

import math

import numpy as np

from ..constants import R
from ..equations.engine import evaluate_rows
from ._context import AuditContext, match, stated_tolerance
from ._registry import Scope, Severity, Threshold, check
from ._text import jk, kelvin, kj, ln_ratio, pressure
from .hits import Hit, Hits, sentences
from .pair import crossed, widened_tolerance

__all__: list[str] = []


def melting_tolerance(
    u_tm: np.ndarray, slope_diff: np.ndarray, th: dict[str, float]
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The tolerance [ln P] of ``melting-point-mismatch`` for pairs whose reference melting
    point states the uncertainty ``u_tm`` [K] (NaN where none; :attr:`Pairs.tm_uncertainty`)
    and whose curves part by ``slope_diff`` (d(y_s - y_l)/dT at the melting point, [1/K]):
    ``factor`` times the slope difference times that uncertainty where that is larger than
    ``tolerance``, else ``tolerance``. Returns (tolerance, whether the stated uncertainty set
    it, that uncertainty [K]); the check and the diagnosis both use it.
    """
    with np.errstate(invalid="ignore"):
        tol, by_stated = stated_tolerance(th, np.abs(slope_diff) * u_tm)
    return tol, by_stated, u_tm


def fusion_reference(
    ctx: AuditContext, solid: np.ndarray, implied: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """For the pairs of solid records ``solid``, whose curves imply the enthalpy of fusion
    ``implied`` [J/mol], the substance's reference enthalpy of fusion nearest it (the lower
    on a tie, and where ``implied`` is not a number) and its stated uncertainty; NaN where
    there is none (or none is stated). [J/mol] A table may keep several sources' values:
    each pair is held to the one it meets best, as for a boiling point, so the order of the
    rows never decides; with one value, that value.
    """
    return ctx.nearest_values("enthalpy_of_fusion", solid, implied, lower_on_tie=True)


def fusion_tolerance(
    u: np.ndarray, h_sub: np.ndarray, th: dict[str, float]
) -> tuple[np.ndarray, np.ndarray]:
    """The tolerance of ``fusion-enthalpy-mismatch``, relative to dH_sub, for pairs whose
    reference dH_fus states the uncertainty ``u`` [J/mol] (NaN where none) and whose solid
    implies ``h_sub`` [J/mol]: ``factor`` u / dH_sub where that is larger than
    ``tolerance``, else ``tolerance``. Returns (tolerance, whether the stated uncertainty set
    it); the check and the diagnosis both use it.
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        return stated_tolerance(th, u / np.abs(h_sub))


def contradicted_melting_points(ctx: AuditContext):
    """Hits of ``reference-contradicted`` for the reference melting points that no checkable
    solid/liquid pair of their substance meets (within the tolerance of
    ``melting-point-mismatch``) while the pairs meet another reference value of it: the
    curves side with the other value, which the pair checks hold them to, and the
    contradicted one is named at its own file and line when every such pair misses it by
    more than twice that tolerance.
    """
    if ctx.one_value_each("melting_point"):  # nothing to weigh (and no pairs to wait for)
        return
    refs = ctx.references_of("melting_point")
    pr = ctx.pairs
    th = ctx.thresholds("melting-point-mismatch")
    k, j = _pairs_by_reference(ctx, refs, np.flatnonzero(pr.checkable))
    if k is None:
        return
    t = refs.value[j]
    ys, s1, _ = evaluate_rows(ctx.curves, pr.solid[k], t, order=1)
    yl, l1, _ = evaluate_rows(ctx.curves, pr.liquid[k], t, order=1)
    d = ys - yl
    tol = melting_tolerance(refs.uncertainty[j], s1 - l1, th)[0]
    # sources' melting points a kelvin apart, which the tolerance of an organic pair (0.05
    # in ln P: about 1 K) just separates, are not named: the pair checks take the one the
    # curves meet, and naming the other as wrong would be a quibble
    yield from _named_pair_references(
        ctx,
        "melting point",
        kelvin,
        k,
        refs.rows[j],
        d,
        np.abs(d) <= tol,
        np.abs(d) > 2.0 * tol,
        lambda worst, one: f"differ by {'' if one else 'up to '}{ln_ratio(worst)} at this one",
        ("melting_point_K", "other_melting_point_K", "difference_lnP"),
    )


def contradicted_fusion_enthalpies(ctx: AuditContext):
    """Hits of ``reference-contradicted`` for the reference enthalpies of fusion that no
    checkable solid/liquid pair of their substance meets (within the tolerance of
    ``fusion-enthalpy-mismatch``, a fraction of dH_sub) while the pairs meet another
    reference value of it, each missing it by more than twice that tolerance: the curves
    side with the other value, which the pair checks hold them to, and the contradicted one
    is named at its own file and line.
    """
    if ctx.one_value_each("enthalpy_of_fusion"):  # nothing to weigh (and no pairs to wait for)
        return
    refs = ctx.references_of("enthalpy_of_fusion")
    pr, ms = ctx.pairs, ctx.melting_slopes
    tol = ctx.thresholds("fusion-enthalpy-mismatch")["tolerance"]
    hs, hl = R * ms.at**2 * ms.s1, R * ms.at**2 * ms.l1
    at = np.where(np.isfinite(pr.tm), pr.tm, pr.t_cross)
    with np.errstate(invalid="ignore"):
        pairs = np.flatnonzero(pr.checkable & np.isfinite(at) & (hs > 0) & (hl > 0))
    k, j = _pairs_by_reference(ctx, refs, pairs)
    if k is None:
        return
    residual = (hs[k] - hl[k] - refs.value[j]) / hs[k]
    yield from _named_pair_references(
        ctx,
        "enthalpy of fusion",
        kj,
        k,
        refs.rows[j],
        residual,
        np.abs(residual) <= tol,
        np.abs(residual) > 2.0 * tol,
        lambda worst, one: (
            f"miss this one by {'' if one else 'up to '}{worst * 100:+.1f} % of dH_sub "
            "(Hess's law at the melting point)"
        ),
        ("fusion_J_per_mol", "other_fusion_J_per_mol", "residual_of_sublimation"),
    )


def _pairs_by_reference(ctx: AuditContext, refs, pairs: np.ndarray):
    """Every (pair, reference value) of one substance for the pairs ``pairs``: (pair
    indices, positions into ``refs``), grouped by pair; (None, None) when no pair has two
    values to weigh.
    """
    pr = ctx.pairs
    i, j = match(ctx.codes[pr.solid[pairs]], np.where(np.isfinite(refs.value), refs.codes, -1))
    if i.size == np.unique(i).size:  # one value per pair: nothing to weigh
        return None, None
    return pairs[i], j


def _named_pair_references(ctx, words, fmt, k, ref_rows, miss, met, clear, how_far, keys):
    """The hits naming each reference value (``words``, written by ``fmt``) that the pairs
    ``k`` miss (``miss``, not ``met``) while they meet another, when every such pair
    misses it ``clear``-ly; ``how_far(worst, one)`` says by how much, ``keys`` name the
    evidence (the value, the other value, the misses).
    """
    pr = ctx.pairs
    value = ctx.table.references["value_si"].to_numpy(dtype=float)
    for r, on, other, sides in ctx.contradictions(k, ref_rows, met):
        if not np.all(clear[on][sides]):
            continue
        by = k[on][sides]
        ids = tuple(x for b in by.tolist() for x in (ctx.id(pr.solid[b]), ctx.id(pr.liquid[b])))
        ids = tuple(dict.fromkeys(ids))
        missed = miss[on][sides]
        worst = float(missed[np.argmax(np.abs(missed))])
        opening, file, line = ctx.reference_disagreement(words, r, other, fmt)
        yield Hit(
            int(pr.solid[by[0]]),
            opening + f"the solid and liquid curves of {', '.join(ids)} meet that one and "
            f"{how_far(worst, by.size == 1)}. The reference value {fmt(value[r])} looks "
            "wrong, not the records: check it against its source.",
            {
                keys[0]: float(value[r]),
                keys[1]: float(value[other]),
                keys[2]: [float(x) for x in missed],
            },
            records=ids,
            file=file,
            line=line,
        )


def _tolerance_text(th: dict[str, float], by_stated: bool, u: float) -> str:
    """The melting-point tolerance in words: the threshold, or what a stated uncertainty
    ``u`` [K] of the reference melting point made of it.
    """
    if not by_stated:
        return f"{th['tolerance']:g}"
    return (
        f"{th['factor']:g} times the reference melting point's stated uncertainty of "
        f"{u:.3g} K, through the curves' slopes"
    )


@check(
    "melting-point-mismatch",
    Severity.error,
    Scope.pair,
    "Solid and liquid curves disagree in ln P at the reference melting point.",
    "The triple point lies within hundredths of a kelvin of the normal melting point; "
    "the equations must agree there (tested in ln P, the quantity they determine).",
    (
        Threshold(
            "tolerance",
            0.05,
            "ln P",
            "largest |ln P_s - ln P_l| at the melting point of curves that reach it",
        ),
        Threshold(
            "factor",
            3.0,
            "-",
            "coverage factor on a reference melting point's stated uncertainty, carried into "
            "ln P by the curves' slope difference (as boiling-point-mismatch's)",
        ),
    ),
    tiers={"within-extrapolation-allowance": Severity.warning},
    witness="difference_lnP",
)
def melting_point_mismatch(ctx: AuditContext, th: dict[str, float]):
    """The primary triple-point test. A fixed tolerance on the crossing *temperature* fails
    good data: the crossing moves by dT = -(y_s - y_l) R Tm^2 / dH_fus, hundreds of kelvin per
    unit of ln P for a high-melting metal. So the pressure mismatch at the reference melting
    point is tested, and the crossing temperature, its distance from the reference and the
    kelvin tolerance derived from the ln P one are reported as evidence.

    A curve whose range stops short of the melting point is extrapolated to it; the
    tolerance then grows by each curve's extrapolation allowance
    (:mod:`vpaudit.checks.extrapolation`, measured on real compilations), added in
    quadrature. A mismatch beyond the tolerance but within that is a warning: it may be the
    extrapolation's, not the data's.

    A reference melting point that states its uncertainty u widens the tolerance to
    ``factor`` |y_s' - y_l'| u where that is larger: the curves' difference moves that much
    across u (dH_fus / (R Tm^2) per kelvin; 0.027 in ln P per kelvin for 20 kJ/mol at 300 K).
    The records' own stated uncertainty of P does not widen it: the solid and the liquid of
    one evaluation are fitted to meet at the triple point, so their levels are not off
    independently (the evaluated metal pairs meet within 0.03 in ln P).
    """
    pr = ctx.pairs
    tm = pr.tm
    rows = np.flatnonzero(pr.checkable & np.isfinite(tm))
    if rows.size == 0:
        return
    at = ctx.melting_slopes  # at the reference melting point where there is one
    ys, s1, yl, l1 = at.ys[rows], at.s1[rows], at.yl[rows], at.l1[rows]
    d = ys - yl
    tol, by_stated, u_tm = melting_tolerance(pr.tm_uncertainty[rows], s1 - l1, th)
    bad = ~(np.abs(d) <= tol)
    widened = widened_tolerance(ctx, rows, tm[rows], tol)
    hfus_imp = R * tm[rows] ** 2 * (s1 - l1)
    hfus_ref = fusion_reference(ctx, pr.solid[rows], hfus_imp)[0]
    hfus = np.where(np.isfinite(hfus_ref) & (hfus_ref > 0), hfus_ref, np.abs(hfus_imp))
    k_tol = tol * R * tm[rows] ** 2 / hfus
    excused = np.abs(d) <= widened
    for within in (False, True):
        sel = np.flatnonzero(bad & (excused == within))
        if sel.size == 0:
            continue
        ks = rows[sel]
        tk_, tm_, d_, ktol_, w_ = pr.t_cross[ks], tm[ks], d[sel], k_tol[sel], widened[sel]

        def say(tk_, tm_, d_, ktol_, w_, tol_, by_stated_, u_tm_, within=within) -> list[str]:
            base_ = [_tolerance_text(th, b, u) for b, u in zip(by_stated_, u_tm_, strict=True)]
            return [
                f"at the reference melting point {kelvin(tmk)} the solid and liquid curves "
                f"differ by {ln_ratio(dj)}, beyond the tolerance of "
                + (base if wj == tj else f"{wj:.3g} for curves extrapolated this far")
                + (
                    f"; they cross at {kelvin(tk)}, {tk - tmk:+.4g} K from it"
                    if math.isfinite(tk)
                    else "; they do not cross nearby"
                )
                + f" (the tolerance in kelvin is about +/-{ktol:.3g} K)."
                if not within
                else f"at the reference melting point {kelvin(tmk)} the solid and liquid "
                f"curves differ by {ln_ratio(dj)}, beyond the tolerance of {base} for curves "
                f"that reach it, but within the {wj:.3g} that 95 % of real equations "
                "extrapolated this far stay within: the extrapolation may be the cause; "
                + (
                    f"they cross at {kelvin(tk)}, {tk - tmk:+.4g} K from it."
                    if math.isfinite(tk)
                    else "they do not cross nearby."
                )
                for tk, tmk, dj, ktol, wj, tj, base in zip(
                    tk_.tolist(),
                    tm_.tolist(),
                    d_.tolist(),
                    ktol_.tolist(),
                    w_.tolist(),
                    tol_.tolist(),
                    base_,
                    strict=True,
                )
            ]

        messages = sentences(say, tk_, tm_, d_, ktol_, w_, tol[sel], by_stated[sel], u_tm[sel])
        yield ctx.pair_hits(
            ks,
            messages,
            {
                "melting_point_K": tm_,
                "difference_lnP": d_,
                "tolerance_lnP": w_,
                "crossing_K": tk_,
                "crossing_minus_melting_K": tk_ - tm_,
                "tolerance_K": ktol_,
            },
            tier="within-extrapolation-allowance" if within else None,
        )


@check(
    "triple-pressure-mismatch",
    Severity.warning,
    Scope.pair,
    "The pressure at the crossing differs from a reference triple-point pressure.",
    "Both curves pass through the triple point (T_tp, P_tp).",
    (
        Threshold("tolerance", 0.10, "ln P", "largest |ln P_cross - ln P_tp|"),
        Threshold(
            "factor",
            3.0,
            "-",
            "coverage factor on a reference P_tp's stated uncertainty, carried into ln P "
            "(u / P_tp), which widens the tolerance beyond it (as enthalpy-mismatch's)",
        ),
    ),
    witness="difference_lnP",
)
def triple_pressure_mismatch(ctx: AuditContext, th: dict[str, float]):
    """Compared in ln P at the crossing (pairs whose curves do not cross are not compared
    here: ``no-crossing`` reports them). A substance with several reference values is
    judged by the one nearest the pressure at the crossing; one that states its
    uncertainty u widens the tolerance to ``factor`` u / P_tp where that is larger.
    """
    pr = ctx.pairs
    ptp, u = ctx.nearest_values(
        "triple_point_pressure", pr.solid, pr.y_cross, log=True, lower_on_tie=True
    )
    with np.errstate(invalid="ignore", divide="ignore"):
        tol, by_stated = stated_tolerance(th, u / ptp)
        diff = pr.y_cross - np.log(ptp)
        bad = pr.checkable & np.isfinite(diff) & (np.abs(diff) > tol)
    ks = np.flatnonzero(bad)
    if ks.size == 0:
        return
    p_cross, ref, d = np.exp(pr.y_cross[ks]), ptp[ks], diff[ks]
    yield ctx.pair_hits(
        ks,
        [
            f"the curves cross at {pressure(p)} ({kelvin(t)}), "
            f"{ln_ratio(x)} away from the reference triple-point pressure {pressure(r)}"
            + (
                f", beyond {tk:.3g} in ln P ({th['factor']:g} times its stated uncertainty of "
                f"{pressure(uk)}, relative to it)"
                if widened
                else ""
            )
            + "."
            for p, t, x, r, tk, widened, uk in zip(
                p_cross.tolist(),
                pr.t_cross[ks].tolist(),
                d.tolist(),
                ref.tolist(),
                tol[ks].tolist(),
                by_stated[ks].tolist(),
                u[ks].tolist(),
                strict=True,
            )
        ],
        {
            "crossing_pressure_Pa": p_cross,
            "reference_Pa": ref,
            "difference_lnP": d,
            "tolerance_lnP": tol[ks],
        },
    )


@check(
    "fusion-enthalpy-mismatch",
    Severity.warning,
    Scope.pair,
    "Hess's law at the melting point: dH_sub - dH_vap differs from the reference dH_fus.",
    "Hess's law at the triple point, dH_sub = dH_fus + dH_vap; the residual is measured "
    "relative to dH_sub, the quantity the curves determine.",
    (
        Threshold("tolerance", 0.03, "-", "largest |dH_sub - dH_vap - dH_fus| / dH_sub"),
        Threshold(
            "factor",
            3.0,
            "-",
            "coverage factor on a reference dH_fus's stated uncertainty, which widens the "
            "tolerance beyond it (as enthalpy-mismatch's)",
        ),
    ),
    witness="residual_of_sublimation",
)
def fusion_enthalpy_mismatch(ctx: AuditContext, th: dict[str, float]):
    """The difference of two large slopes is sensitive: dH_fus of a metal is a few percent
    of dH_sub, so a 1 % error in one slope becomes a 30-40 % error in the implied dH_fus.
    Hence the residual relative to dH_sub. Evaluated at the reference melting point, else at
    the crossing. A substance with several reference values is judged by the one the pair
    meets best (:func:`fusion_reference`); one that states its uncertainty u widens the
    tolerance to ``factor`` u / dH_sub where that is larger (:func:`fusion_tolerance`).
    """
    pr = ctx.pairs
    if not len(ctx.references_of("enthalpy_of_fusion").rows):
        return
    ms = ctx.melting_slopes  # at the reference melting point, else at the crossing
    a = ms.at
    hs, hl = R * a * a * ms.s1, R * a * a * ms.l1
    ref, u = fusion_reference(ctx, pr.solid, hs - hl)
    at = np.where(np.isfinite(pr.tm), pr.tm, pr.t_cross)
    rows = np.flatnonzero(pr.checkable & np.isfinite(ref) & np.isfinite(at))
    if rows.size == 0:
        return
    tol, by_stated = fusion_tolerance(u, hs, th)
    with np.errstate(invalid="ignore", divide="ignore"):
        residual = (hs - hl - ref) / hs
        # a non-positive slope is slope-not-positive's finding
        bad = (hs[rows] > 0) & (hl[rows] > 0) & (np.abs(residual[rows]) > tol[rows])
    ks = rows[bad]
    at, hs, hl, ref, residual = at[ks], hs[ks], hl[ks], ref[ks], residual[ks]
    tol, by_stated, u = tol[ks], by_stated[ks], u[ks]
    implied = hs - hl

    def say(at, implied, ref, residual, hs, tol, by_stated, u) -> list[str]:
        return [
            f"at {kelvin(atk)} the curves imply dH_sub - dH_vap = {kj(imp)} against "
            f"the reference dH_fus {kj(refk)}: a residual of {rel * 100:+.1f} % of "
            f"dH_sub ({kj(hsk)}), beyond {tk * 100:.3g} %"
            + (
                f" ({th['factor']:g} times the reference's stated uncertainty of {kj(uk)})"
                if stated
                else ""
            )
            + "."
            for atk, imp, refk, rel, hsk, tk, stated, uk in zip(
                at.tolist(),
                implied.tolist(),
                ref.tolist(),
                residual.tolist(),
                hs.tolist(),
                tol.tolist(),
                by_stated.tolist(),
                u.tolist(),
                strict=True,
            )
        ]

    yield ctx.pair_hits(
        ks,
        sentences(say, at, implied, ref, residual, hs, tol, by_stated, u),
        {
            "at_K": at,
            "implied_fusion_J_per_mol": implied,
            "reference_fusion_J_per_mol": ref,
            "sublimation_J_per_mol": hs,
            "vaporization_J_per_mol": hl,
            "residual_of_sublimation": residual,
            "tolerance": tol,
        },
    )


@check(
    "fusion-entropy-implausible",
    Severity.note,
    Scope.pair,
    "The implied entropy of fusion lies outside the Richards/Walden range.",
    "Richards' rule (dS_fus about R, 8-15 J/(mol K), for metals) and Walden's rule "
    "(about 50-60 J/(mol K) for rigid organic molecules); common practice.",
    (
        Threshold("min", 2.0, "J/(mol K)", "lowest plausible dS_fus"),
        Threshold("max", 100.0, "J/(mol K)", "highest plausible dS_fus"),
    ),
)
def fusion_entropy_implausible(ctx: AuditContext, th: dict[str, float]):
    """dS_fus = R T (d(y_s - y_l)/dT) at the crossing, against a wide band (a note: the
    implied dH_fus is a sensitive difference of slopes).
    """
    pr = ctx.pairs
    ok = crossed(ctx) & (pr.slope_diff > 0)
    ds = R * pr.t_cross * pr.slope_diff
    with np.errstate(invalid="ignore"):
        bad = ok & ~((ds >= th["min"]) & (ds <= th["max"]))
    sel = np.flatnonzero(bad)
    t, ds = pr.t_cross[sel], ds[sel]

    def say(t, ds) -> list[str]:
        return [
            f"the implied entropy of fusion at the crossing ({kelvin(tk)}) is "
            f"{jk(dsk)}, outside the usual {th['min']:g}..{th['max']:g} J/(mol K)."
            for tk, dsk in zip(t.tolist(), ds.tolist(), strict=True)
        ]

    yield ctx.pair_hits(
        sel,
        sentences(say, t, ds),
        {"fusion_entropy_J_per_mol_K": ds, "crossing_K": t},
    )


@check(
    "range-gap",
    Severity.warning,
    Scope.pair,
    "The solid's range ends, or the liquid's starts, far from the melting point.",
    "A solid curve usually ends at the melting point and a liquid curve starts there.",
    (Threshold("max_gap", 0.03, "-", "largest gap to the melting point, relative to it"),),
)
def range_gap(ctx: AuditContext, th: dict[str, float]):
    """Temperatures between the end of the solid range and the start of the liquid range are
    covered by no record: the gap t_min(liquid) - t_max(solid), relative to the melting point
    (reference, else the crossing), against the limit. Ranges that meet or overlap leave no
    gap, wherever the reference melting point lies (that is melting-point-mismatch's test).
    """
    pr = ctx.pairs
    lim = th["max_gap"]
    at = np.where(np.isfinite(pr.tm), pr.tm, pr.t_cross)
    lo, hi = ctx.curves.t_max[pr.solid], ctx.curves.t_min[pr.liquid]
    with np.errstate(invalid="ignore"):
        gap = (hi - lo) / at
        bad = pr.checkable & np.isfinite(at) & (gap > lim)
    ks = np.flatnonzero(bad)
    if ks.size == 0:
        return
    at, lo, hi, gap = at[ks], lo[ks], hi[ks], gap[ks]
    yield ctx.pair_hits(
        ks,
        [
            f"no record covers {kelvin(a)}..{kelvin(b)}: the solid's range ends "
            f"{b - a:.4g} K ({g * 100:.1f} % of the melting point "
            f"{kelvin(m)}) before the liquid's starts (limit {lim * 100:g} %)."
            for a, b, g, m in zip(lo.tolist(), hi.tolist(), gap.tolist(), at.tolist(), strict=True)
        ],
        {
            "melting_point_K": at,
            "solid_t_max_K": lo,
            "liquid_t_min_K": hi,
            "gap_fraction": gap,
            "limit": lim,
        },
    )


@check(
    "solid-above-melting",
    Severity.error,
    Scope.record,
    "A solid's range lies above the reference melting point.",
    "A crystal does not outlast its melting point: its vapour-pressure curve ends at the "
    "triple point, within hundredths of a kelvin of the normal melting point.",
    (
        Threshold(
            "tolerance",
            0.03,
            "-",
            "how far above the highest reference melting point, relative to it, a solid's "
            "range may start (loosely stated ranges; range-gap's limit)",
        ),
        Threshold(
            "factor",
            3.0,
            "-",
            "coverage factor on a reference melting point's stated uncertainty",
        ),
    ),
)
def solid_above_melting(ctx: AuditContext, th: dict[str, float]):
    """A solid record whose whole range lies above every reference melting point of its
    substance (else the triple-point temperature) by more than the tolerance (and than
    ``factor`` times the value's stated uncertainty) describes a solid where none exists.
    Its label may be wrong (a liquid's equation filed as solid), its range may be in
    another temperature unit (a range in degC read as K lies 273 K higher), or the melting
    point may be another substance's. Measured on the solids with a CRC melting point:
    Alcock et al.'s 33 start at most at 0.69 of it; of
    Landolt's 130 (odd CAS) one starts above it, at 1.057 (3,4-dichlorophenyl isocyanate,
    whose solid equation carries the liquid's range, 333-463 K, against a melting point of
    315 K; ``python benchmarks/calibrate.py --solid-ranges``). A range that only ends above
    the melting point is not tested here: its pair checks see where the curves meet.
    """
    solid = ctx.solid & np.isfinite(ctx.curves.t_min) & (ctx.codes >= 0)
    if not solid.any():
        return
    refs = ctx.references_of("melting_point")
    top = np.full(ctx.n_names, np.nan)
    u_top = np.zeros(ctx.n_names)
    if refs.rows.size:
        ok = np.isfinite(refs.value)
        c, v = refs.codes[ok], refs.value[ok]
        u = np.nan_to_num(refs.uncertainty[ok], nan=0.0)
        order = np.lexsort((v, c))  # the highest value of each substance last
        c, v, u = c[order], v[order], u[order]
        last = np.flatnonzero(np.r_[c[1:] != c[:-1], True])
        top[c[last]], u_top[c[last]] = v[last], u[last]
    codes = ctx.codes
    tm = np.where(codes >= 0, top[np.maximum(codes, 0)], np.nan)
    u_tm = np.where(codes >= 0, u_top[np.maximum(codes, 0)], 0.0)
    ttp = ctx.reference("triple_point_temperature")
    missing = np.isnan(tm)
    tm = np.where(missing, ttp, tm)
    u_tm = np.where(missing, 0.0, u_tm)
    t_min = ctx.curves.t_min
    with np.errstate(invalid="ignore"):
        limit = np.maximum(tm * (1.0 + th["tolerance"]), tm + th["factor"] * u_tm)
        bad = solid & np.isfinite(tm) & (t_min > limit)
    rows = np.flatnonzero(bad)
    if rows.size == 0:
        return
    t0, t1, m = t_min[rows], ctx.curves.t_max[rows], tm[rows]
    yield Hits(
        rows,
        [
            f"the solid's range {kelvin(a)}..{kelvin(b)} starts {(a / x - 1) * 100:.1f} % "
            f"above the reference melting point {kelvin(x)} (limit {th['tolerance'] * 100:g} "
            "%): no solid exists there. Look for a liquid's equation filed as solid, a range "
            "in another temperature unit, or a melting point of another substance."
            for a, b, x in zip(t0.tolist(), t1.tolist(), m.tolist(), strict=True)
        ],
        {"t_min_K": t0, "melting_point_K": m, "limit_K": limit[rows]},
    )
