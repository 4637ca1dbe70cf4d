"""The normal boiling point: each liquid curve against the reference T_b, and a reference
that the substance's agreeing sources outvote.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ..constants import R
from ..equations.engine import Curves, evaluate, temperature_at
from ..units import MMHG_PA
from ._context import LN_P_STANDARD, AuditContext, match
from ._registry import Scope, Severity, Threshold, check
from ._text import jk, kelvin, ln_ratio, pressure_at_ln
from .extrapolation import allowance
from .hits import Hit
from .joins import outvoted

__all__ = ["BoilingResiduals", "ReferenceMeets", "boiling_residuals"]


class BoilingResiduals(NamedTuple):
    """The liquid records with a reference normal boiling point, and how they meet it: each
    against the reference of its substance that it meets best (the table's first where
    they meet several equally), with every (record, reference) comparison beside.
    """

    rows: np.ndarray  # record rows
    curves: Curves  # their curves
    t: np.ndarray  # reference T_b [K]
    y: np.ndarray  # ln(P/Pa) at T_b
    y1: np.ndarray  # its slope there [1/K]
    d: np.ndarray  # ln P(T_b) - ln 101325
    tol: np.ndarray  # tolerance of d, widened for extrapolation [ln P]
    stated: np.ndarray  # whether the reference states its uncertainty
    base: np.ndarray  # the tolerance before that widening [ln P]
    ref: np.ndarray  # the row of that reference in the references table
    pairs: ReferenceMeets  # every comparison of a record with a reference of its substance


class ReferenceMeets(NamedTuple):
    """Every comparison of a liquid record with a reference T_b of its substance."""

    k: np.ndarray  # the record, as an index into :attr:`BoilingResiduals.rows`
    ref: np.ndarray  # the row of the reference in the references table
    d: np.ndarray  # ln P(T_b) - ln 101325 at that reference
    met: np.ndarray  # whether the curve meets it within the tolerance


def boiling_residuals(ctx: AuditContext) -> BoilingResiduals | None:
    """For the liquid records with a reference normal boiling point: d = ln P(T_b) -
    ln 101325 and its tolerance (k times the combined uncertainty of curve and reference,
    never less than the tolerance, and widened in quadrature by the extrapolation allowance
    where T_b lies outside the range: :mod:`vpaudit.checks.extrapolation`); None when there
    are none.

    A substance may have several reference values (from different sources): each record
    is compared with all of them and judged against the one it meets best (the smallest
    |d| over its tolerance), since a reference that another reference and the record
    contradict is the one to doubt (``reference-contradicted`` reports it).

    Computed once per table (the boiling-point check, ``reference-contradicted``, the anchor
    checks and the witnesses read it); the arrays are shared, not to be changed.
    """
    return ctx.memo(("boiling residuals",), lambda: _boiling_residuals(ctx))


def _boiling_residuals(ctx: AuditContext) -> BoilingResiduals | None:
    """:func:`boiling_residuals`, computed."""
    th = ctx.thresholds("boiling-point-mismatch")
    refs = ctx.references_of("normal_boiling_point")
    key = np.where(ctx.evaluable & ctx.liquid, ctx.codes, -1)  # negative codes never match
    ref_key = np.where(np.isfinite(refs.value), refs.codes, -1)
    i, j = match(key, ref_key)  # every (record, reference) of one substance
    if i.size == 0:
        return None
    order = np.lexsort((j, i))  # by record, then in the order of the references table
    i, j = i[order], j[order]
    c_all = ctx.curves.take(i)
    t = refs.value[j]
    y, y1, _ = evaluate(c_all, t, order=1)
    d = y - LN_P_STANDARD
    u_p = ctx.uncertainty[i]
    u_p = np.where(np.isnan(u_p), th["default_uncertainty"], u_p)
    u_tb = refs.uncertainty[j]
    stated = ~np.isnan(u_tb)
    u_tb = np.where(stated, u_tb, th["tb_uncertainty"])
    with np.errstate(over="ignore"):  # a slope that overflows leaves an infinite sigma
        sigma = np.sqrt(u_p**2 + (np.abs(y1) * u_tb) ** 2)
    base = np.maximum(th["tolerance"], th["factor"] * sigma)
    # a T_b outside the range is reached by extrapolation, which drifts (measured)
    tol = np.hypot(base, allowance(c_all.t_min, c_all.t_max, t))
    rows, first, k = np.unique(i, return_index=True, return_inverse=True)
    best = first
    if rows.size < i.size:  # some substance has several references: the one met best
        with np.errstate(invalid="ignore", divide="ignore"):
            score = np.abs(d) / tol
        score = np.where(np.isnan(score), np.inf, score)
        # the least score of each record, the first such reference on a tie
        by = np.lexsort((np.arange(i.size), score, k))
        best = by[np.unique(k[by], return_index=True)[1]]
    with np.errstate(invalid="ignore"):
        met = np.abs(d) <= tol
    return BoilingResiduals(
        rows,
        ctx.curves.take(rows) if rows.size < i.size else c_all,
        t[best],
        y[best],
        y1[best],
        d[best],
        tol[best],
        stated[best],
        base[best],
        refs.rows[j[best]],
        ReferenceMeets(k.reshape(-1), refs.rows[j], d, met),
    )


def _corroborated(
    ctx: AuditContext, rows: np.ndarray, d: np.ndarray, tol: np.ndarray
) -> np.ndarray:
    """For each row, whether another liquid record of its substance meets the reference T_b
    within its own tolerance: an independent source that confirms the reference.
    """
    codes_ = ctx.codes[rows]
    named = codes_ >= 0  # a record without a substance has no other source
    with np.errstate(invalid="ignore"):
        met = (np.abs(d) <= tol) & named
    n_met = np.bincount(codes_[met], minlength=int(codes_.max(initial=0)) + 1)
    out = np.zeros(rows.size, dtype=bool)
    out[named] = (n_met[codes_[named]] - met[named]) > 0
    return out


def _reduced_pressure_reference(th, c, t, y, y1, t_implied, t_crit):
    """Which reference boiling points look like boiling points at reduced pressure filed as
    normal ones: the curve gives a vacuum-distillation pressure at the reference (between
    ``reduced_min`` and ``reduced_max``) and reaches 101325 Pa above ``reduced_above``
    (boiling points at reduced pressure are reported for liquids distilled under vacuum,
    which boil high), its entropy of vaporization where it reaches
    101325 Pa, R T y'(T), obeys Trouton's rule as extended to associating liquids, and the
    one it would need at the reference T_b does not. A slip in the record's pressure level
    (a wrong unit) leaves the reference's entropy normal and the implied one off, so it is
    not taken for this. Nor is it where the substance's critical temperature ``t_crit`` [K]
    (NaN where unknown) puts the curve's own boiling point closer to it than a real liquid's
    (Guldberg's rule, T_b/T_c near 2/3, measured as ``boiling_over_critical``): then the
    reference and the critical temperature agree, and the curve is the party that is off.
    Returns (flags, the rows that only the critical temperature keeps from being flagged,
    entropy at the reference, entropy where the curve reaches 101325 Pa), the entropies in
    J/(mol K) from the ideal-gas Clausius-Clapeyron relation.
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
        near_critical = flags & (t_implied > th["boiling_over_critical"] * t_crit)
    return flags & ~near_critical, near_critical, s_ref, s_imp


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
            13332.0,
            "Pa",
            "highest pressure of a boiling point at reduced pressure looked for (100 mmHg: "
            "19 of the 20 such references on the compilations lie at 0.7-60 mmHg)",
        ),
        Threshold(
            "boiling_over_critical",
            0.87,
            "-",
            "highest normal boiling point of a liquid, as a fraction of its critical "
            "temperature, for a curve taken to be right against a reference boiling point "
            "at reduced pressure (Guldberg's rule; the 99.5th percentile of 1,005 substances, "
            "chemicals' Tb methods CRC_ORG, CRC_INORG, YAWS, COMMON_CHEMISTRY against Tc "
            "methods IUPAC, MATTHEWS, CRC; median 0.68)",
        ),
        Threshold(
            "own_boiling",
            1.0,
            "K",
            "distance of the temperature where a curve reaches 101325 Pa from the upper end "
            "of its range within which the record is taken to carry its source's own normal "
            "boiling point (ranges are stated to 1 K; 35 % of Landolt's liquids end there)",
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
    witness="difference_lnP",
)
def boiling_point_mismatch(ctx: AuditContext, th: dict[str, float]):
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
    warning, since the reference may be the party that is off (where another source of the
    substance meets the reference, the warning says this record is the likelier to be off
    instead); beyond it, an error. A reference with a stated uncertainty is held to it. A
    curve that reaches 101325 Pa within 1 K of the upper end of its range (a third of
    Landolt's liquids: their sources measured up to boiling) carries its source's own normal
    boiling point; a transcription slip in its coefficients or pressure unit would have
    moved that point, so a mismatch there is a disagreement of the source and the reference,
    and a warning that says so -- unless another source of the substance meets the
    reference: then this record's source is the likelier to be off, and the mismatch an
    error. A reference that the curve would meet at a vacuum-distillation pressure (10 Pa to
    100 mmHg, with Trouton's entropy where the curve reaches 101325 Pa) looks like a boiling
    point at reduced pressure filed as the normal one, and is named as the likely culprit --
    unless another source of the substance meets it, or the substance's critical temperature
    would put the curve's own boiling point nearer to it than a real liquid's (Guldberg's
    rule): then the record is the one that is off.
    The implied boiling temperature is evidence. When T_b lies outside the range,
    the tolerance grows in quadrature by the extrapolation allowance
    (:mod:`vpaudit.checks.extrapolation`); when it lies far outside, the check is a note:
    many evaluated liquid equations stop hundreds of kelvin below the boiling point.
    """
    got = boiling_residuals(ctx)
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
        bad = ~(np.abs(d) <= tol) & ~outvoted(ctx.codes[rows], d, tol)
    if not bad.any():
        return
    dist = np.maximum(c.t_min - t, t - c.t_max).clip(min=0.0) / t
    # search up to three times the range, but never past a Wagner record's own Tc
    top = np.where(c.is_wagner, np.fmin(3.0 * c.t_max, c.params[:, 6]), 3.0 * c.t_max)
    t_implied = temperature_at(c, LN_P_STANDARD, 0.5 * c.t_min, top)
    t_crit = ctx.critical_temperature()[rows]
    reduced, near_critical, s_ref, s_imp = _reduced_pressure_reference(
        th, c, t, y, y1, t_implied, t_crit
    )
    # another source of the substance that meets the reference shows that the reference is
    # a normal boiling point after all: the record, not the reference, is off
    corroborated = _corroborated(ctx, rows, d, tol)
    confirmed = reduced & corroborated
    reduced &= ~confirmed
    # a curve that reaches 101325 Pa where its range ends carries its source's own normal
    # boiling point (measured up to it): a slip in the record would have moved that point
    own = np.abs(t_implied - c.t_max) <= th["own_boiling"]
    for k in np.flatnonzero(bad):
        i = rows[k]
        far = dist[k] > th["near"]
        within = abs(d[k]) <= spread[k]
        tier = None
        if far:
            tier = "extrapolated"
        elif within or reduced[k] or (own[k] and not corroborated[k]):
            # the reference may be the party that is off; a curve that carries its source's
            # own boiling point stays an error where another source meets the reference (two
            # against one, beyond how far evaluations of T_b differ)
            tier = "reference-doubted"
        evidence = {
            "boiling_point_K": t[k],
            "difference_lnP": d[k],
            "tolerance_lnP": tol[k],
            "residual_over_tolerance": abs(d[k]) / tol[k],
            "implied_boiling_point_K": t_implied[k],
            "outside_range_fraction": dist[k],
        }
        if reduced[k] and not far:
            yield Hit(
                i,
                f"the reference normal boiling point {kelvin(t[k])} looks like a boiling "
                f"point at reduced pressure, not the record: the curve gives "
                f"{np.exp(y[k]):.4g} Pa ({np.exp(y[k]) / MMHG_PA:.3g} mmHg) there, and "
                f"reaches 101325 Pa at {kelvin(t_implied[k])} with an entropy of "
                f"vaporization of {jk(s_imp[k])}, as Trouton's rule expects; at the "
                f"reference it would be {jk(s_ref[k])}. Check the reference against its "
                "source for a pressure.",
                {
                    **evidence,
                    "entropy_at_reference_J_molK": s_ref[k],
                    "entropy_at_implied_J_molK": s_imp[k],
                    "likely_culprit": "reference",
                },
                tier=tier,
            )
            continue
        if far:
            where = (
                f"; {kelvin(t[k])} is {dist[k] * 100:.0f} % outside the range, so this is "
                "an extrapolation"
            )
        elif within and corroborated[k]:
            # still a warning (a difference evaluations of T_b have), but not the
            # reference's: another source meets it
            where = (
                f"; that is within the {rel[k] * 100:.2g} % by which "
                "independent evaluations of normal boiling points near it differ, but "
                "another source of the substance meets the reference, so this record is the "
                "likelier to be off"
            )
        elif within:
            where = (
                f"; that is within the {rel[k] * 100:.2g} % by which "
                "independent evaluations of normal boiling points near it differ, so the "
                "reference may be the one that is off"
            )
        elif own[k]:
            where = (
                f", where its range ends ({kelvin(c.t_max[k])}): the record carries its "
                "source's own normal boiling point, which a slip in the record would have "
                "moved, so its source and the reference disagree; "
                + (
                    "another source of the substance meets the reference, so this record's "
                    "source is the likelier to be off"
                    if corroborated[k]
                    else "check which is right"
                )
            )
        elif near_critical[k]:
            where = (
                f"; the curve would fit a boiling point at reduced pressure filed as the "
                f"normal one, but its own would then lie at {t_implied[k] / t_crit[k]:.2f} of "
                f"the critical temperature {kelvin(t_crit[k])}, nearer than a real liquid's "
                "(about 2/3), so the record is the one that is off"
            )
        elif confirmed[k]:
            where = (
                "; the curve would fit a boiling point at reduced pressure filed as the "
                "normal one, but another source of the substance meets the reference, so "
                "the record is the one that is off"
            )
        else:
            where = ""
        if np.isnan(y[k]):  # a Wagner curve beyond its own critical temperature
            tc = c.own_t_crit[k]
            gives = (
                f"the curve has no value at the reference normal boiling point {kelvin(t[k])}"
                + (
                    f", above the record's own critical temperature {kelvin(tc)}"
                    if t[k] > tc
                    else ""
                )
            )
        else:
            gives = (
                f"at the reference normal boiling point {kelvin(t[k])} the curve gives "
                f"{pressure_at_ln(y[k], np.exp(y[k]))} instead of 101325 Pa, off by "
                f"{ln_ratio(d[k])}"
            )
        yield Hit(
            i,
            gives
            + "; "
            + (
                f"it reaches 101325 Pa at {kelvin(t_implied[k])}"
                if np.isfinite(t_implied[k])
                else f"it does not reach 101325 Pa between {kelvin(0.5 * c.t_min[k])} and "
                f"{kelvin(top[k])}"
            )
            + f"{where}.",
            evidence,
            tier=tier,
        )


@check(
    "reference-contradicted",
    Severity.warning,
    Scope.sources,
    "Several sources of a substance agree with each other and not with its reference normal "
    "boiling point or standard enthalpy or entropy at 298.15 K, or its records meet another "
    "reference value (of the boiling point, "
    "the critical temperature or pressure, the melting point, the enthalpy of fusion, or the "
    "standard enthalpy or entropy at 298.15 K) and not this one: the reference looks wrong, "
    "not the records.",
    "Reference values in compilations are not all right; independent sources that agree "
    "outweigh one value from another evaluation.",
    reads_pairs=True,  # melting points and enthalpies of fusion are weighed by the pairs
)
def reference_contradicted(ctx: AuditContext, th: dict[str, float]):
    """Two or more liquid records of a substance miss the reference T_b on the same side,
    each beyond the boiling-point tolerance, and agree with each other within it. The
    reference is named as the likely culprit, located at its own file and line, and the
    records draw no boiling-point error: blaming each record would repeat one wrong value.

    A substance may also have several reference values of T_b (from different sources).
    One that none of its liquid records meets, while they meet another, is contradicted by
    that reference and the records together: it is named, at its own file and line, beside
    the reference the records meet, and the records draw no error (each is judged against
    the reference it meets best). So is a reference critical temperature that a liquid's
    range passes while another reference value of the substance allows it
    (:func:`vpaudit.checks.critical.contradicted_critical_temperatures`), and a reference
    critical pressure that the liquids reaching Tc miss while they meet another
    (:func:`vpaudit.checks.critical.contradicted_critical_pressures`), and a reference
    standard enthalpy or entropy at 298.15 K that the curves of its phase miss while they
    meet another, or that two or more agreeing curves of its phase miss on the same side
    (:func:`vpaudit.checks.anchor.contradicted_standard_data`), and a
    reference melting point or enthalpy of fusion that the solid/liquid pairs miss while
    they meet another (:func:`vpaudit.checks.triple.contradicted_melting_points`,
    :func:`vpaudit.checks.triple.contradicted_fusion_enthalpies`).
    """
    # imported here: importing them at the top would register their checks before these
    from .anchor import contradicted_standard_data
    from .critical import contradicted_critical_pressures, contradicted_critical_temperatures
    from .triple import contradicted_fusion_enthalpies, contradicted_melting_points

    yield from _contradicted_boiling_points(ctx)
    yield from contradicted_critical_temperatures(ctx)
    yield from contradicted_critical_pressures(ctx)
    yield from contradicted_standard_data(ctx)
    yield from contradicted_melting_points(ctx)
    yield from contradicted_fusion_enthalpies(ctx)


def _contradicted_boiling_points(ctx: AuditContext):
    """The hits of :func:`reference_contradicted` about the normal boiling point."""
    got = boiling_residuals(ctx)
    if got is None:
        return
    rows, c, t, d, tol = got.rows, got.curves, got.t, got.d, got.tol
    out = outvoted(ctx.codes[rows], d, tol)
    t_implied = None
    if out.any():
        t_implied = temperature_at(c, LN_P_STANDARD, 0.5 * c.t_min, 3.0 * c.t_max)
    for code in np.unique(ctx.codes[rows[out]]):
        k = np.flatnonzero(out & (ctx.codes[rows] == code))
        source, file, line = ctx.reference_row_at(int(got.ref[k[0]]))
        implied = t_implied[k]
        reached = implied[np.isfinite(implied)]
        ids = tuple(ctx.id(rows[j]) for j in k)
        yield Hit(
            int(rows[k[0]]),
            f"the reference normal boiling point {kelvin(t[k[0]])} ({source}) disagrees with "
            f"all {k.size} liquid records, which agree with each other: "
            + (
                f"they reach 101325 Pa at {kelvin(float(reached.mean()))}"
                if reached.size
                else "none reaches 101325 Pa near its range"
            )
            + f" (off by {ln_ratio(float(d[k].mean()))} at the reference). The reference "
            "value looks wrong, not the records: check it against its source.",
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
    yield from _contradicted_by_another_reference(ctx, got)


def _contradicted_by_another_reference(ctx: AuditContext, got: BoilingResiduals):
    """The reference values of T_b that no liquid record of their substance meets while
    the records meet another reference value of it (:func:`reference_contradicted`).
    """
    pairs = got.pairs
    if pairs.k.size == got.rows.size:  # one reference per substance: nothing to weigh
        return
    value = ctx.table.references["value_si"].to_numpy(dtype=float)
    # each: the records of its substance (and how they miss it), the first other
    # reference that they meet, and which of them meet it
    for r, at, other, by in ctx.contradictions(pairs.k, pairs.ref, pairs.met):
        k = pairs.k[at]
        ids = tuple(ctx.id(got.rows[j]) for j in k[by])
        miss = pairs.d[at][by]
        opening, file, line = ctx.reference_disagreement("normal boiling point", r, other, kelvin)
        worst = float(miss[np.argmax(np.abs(miss))])
        one = len(ids) == 1
        yield Hit(
            int(got.rows[k[by][0]]),
            opening
            + f"the liquid record{'' if one else 's'} {', '.join(ids)} meet{'s' if one else ''} "
            f"that one and miss{'es' if one else ''} this one by "
            f"{'' if one else 'up to '}{ln_ratio(worst)}. The reference value "
            f"{kelvin(value[r])} looks wrong, not the record{'' if one else 's'}: check it "
            "against its source.",
            {
                "boiling_point_K": float(value[r]),
                "other_boiling_point_K": float(value[other]),
                "difference_lnP": [float(x) for x in miss],
            },
            records=ids,
            file=file,
            line=line,
        )
