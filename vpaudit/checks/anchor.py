"""The 298.15 K anchor: each curve, extrapolated to 298.15 K with its own implied dCp, against
the standard enthalpy and entropy of its phase change from standard thermochemical tables.

At 298.15 K and P0 = 1 bar the tables give, independently of any vapour-pressure equation,
dH(298) and dS0(298) of sublimation (gas - solid) and vaporization (gas - liquid). A curve
implies both (the second- and third-law methods of high-temperature vapour-pressure
evaluation):

    dH(298)  = R T^2 y'(T)                      (second law: from the slope)
    dS0(298) = dH(298)/T + R ln(P(298)/P0)      (third law: from the level)

for an ideal vapour; the vapour is taken as the real gas it is (:mod:`.real_gas`: dZ and
the step to the ideal-gas standard state, a second virial coefficient) where the
substance's Tc and Pc are known or, for a liquid, can be estimated from its own curve.
Without it a volatile liquid's curve misses its standard values by itself: Landolt's
liquids with P(298) above 30 kPa, 13 with the CRC data, by +2.1 % in dH and +2.8 J/(mol K)
in dS0 at the median; corrected with their tabulated Tc and Pc, +0.4 % and +0.1 J/(mol K),
with estimated ones -0.1 % and -0.7 J/(mol K) -- against the 2.4 J/(mol K) that tell mbar
from mmHg (docs/calibration.md).

A log10/ln slip scales dH by 2.3; a wrong pressure unit shifts dS0 by R ln(factor) (40.7
J/(mol K) for Torr read as Pa) and leaves dH alone; a degC/K slip in an Antoine equation
wrecks both. The evaluation of the curve at 298.15 K *is* the extrapolation with its own
dCp, so the allowance grows with the distance from the range: a fitted dCp is uncertain.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ..equations.engine import evaluate
from ._context import AuditContext, match
from ._registry import Scope, Severity, Threshold, check
from ._text import kelvin, kj, pressure_at_ln
from .boiling import boiling_residuals
from .hits import Hit
from .joins import outvoted
from .real_gas import ideal_gas, standard_state

T_ANCHOR = 298.15

_GROWTH = Threshold(
    "cp_uncertainty",
    15.0,
    "J/(mol K)",
    "uncertainty of the curve's implied dCp, which the extrapolation carries",
)
_CP_MAX = Threshold(
    "cp_max",
    200.0,
    "J/(mol K)",
    "largest |dCp| of a real phase change; an extrapolation's change beyond it widens the "
    "allowance",
)
_FACTOR = Threshold(
    "factor",
    3.0,
    "-",
    "coverage factor on a standard value's stated uncertainty, which widens the allowance "
    "beyond it (as enthalpy-mismatch's)",
)
_REACH = Threshold(
    "max_ratio",
    2.0,
    "-",
    "longest extrapolation judged: range edge / 298.15 K, or its inverse (beyond: none)",
)
# Measured on Landolt's liquids of odd CAS number against the CRC standard data (chemicals):
# with 298.15 K in the range, |dH(298) - reference| is within 1.5 % for half of 164 curves,
# 9.4 % for 90 % and 17.7 % for 95 %; |dS0(298) - reference| within 2.1, 12.1 and 13.8
# J/(mol K). A log10/ln slip moves dH by +130 % or -57 %; a pressure-unit slip moves dS0 by
# 38 (mbar) to 96 (atm, bar) J/(mol K).
_ENTHALPY = (
    Threshold("tolerance", 0.10, "-", "relative dH difference beyond which it is a warning"),
    Threshold("error_above", 0.40, "-", "relative dH difference beyond which it is an error"),
    _GROWTH,
    _CP_MAX,
    _REACH,
    _FACTOR,
)
_ENTROPY = (
    Threshold("tolerance", 15.0, "J/(mol K)", "dS0 difference beyond which it is a warning"),
    Threshold("error_above", 30.0, "J/(mol K)", "dS0 difference beyond which it is an error"),
    _GROWTH,
    _CP_MAX,
    _REACH,
    _FACTOR,
)


class AnchorValues(NamedTuple):
    """Each record with a standard reference of its phase, at 298.15 K (arrays, one value
    per record in ``rows``).
    """

    rows: np.ndarray  # record rows
    h: np.ndarray  # implied dH(298) [J/mol]
    s: np.ndarray  # implied dS0(298) [J/(mol K)]
    p: np.ndarray  # the curve's P(298) [Pa] (infinite where ln P overflows: see y)
    h_ref: np.ndarray  # standard dH(298) of the phase change, NaN if none [J/mol]
    s_ref: np.ndarray  # standard dS0(298), NaN if none [J/(mol K)]
    h_u: np.ndarray  # the stated uncertainty of h_ref, NaN if none [J/mol]
    s_u: np.ndarray  # the stated uncertainty of s_ref, NaN if none [J/(mol K)]
    edge: np.ndarray  # the range edge nearest 298.15 K [K]
    distance: np.ndarray  # |edge - 298.15 K|, the extrapolation [K]
    ratio: np.ndarray  # edge / 298.15 K [-]
    y: np.ndarray  # ln(P(298)/Pa) [-]
    # what the extrapolation adds to dH and dS0, signed so that a real (negative) dCp adds a
    # positive amount: dH(298) - dH(edge) above 298.15 K, the reverse below [J/mol]
    h_change: np.ndarray
    s_change: np.ndarray  # the same for dS0 [J/(mol K)]
    real_gas: np.ndarray  # bool: h and s take the vapour as a real gas
    estimated: np.ndarray  # bool: that with a Tc and a Pc estimated from the curve itself
    h_ideal_gas: np.ndarray  # h read as for an ideal vapour, R T^2 y' [J/mol]
    s_ideal_gas: np.ndarray  # s so read [J/(mol K)]


class Allowances(NamedTuple):
    """The anchor checks' bounds on |implied - reference| for :class:`AnchorValues`: the
    warning bound with no extrapolation (``*_base``), the warning and error bounds grown
    with the extrapolation, where each is judged at all (``*_judged``), and whether the
    standard value's stated uncertainty set the bounds (``*_stated``).
    """

    h_base: np.ndarray  # [J/mol]
    h_warn: np.ndarray
    h_error: np.ndarray
    h_judged: np.ndarray  # bool
    s_base: np.ndarray  # [J/(mol K)]
    s_warn: np.ndarray
    s_error: np.ndarray
    s_judged: np.ndarray  # bool
    h_stated: np.ndarray  # bool
    s_stated: np.ndarray  # bool


def anchor_values(ctx: AuditContext) -> AnchorValues | None:
    """For every record with a standard reference of its phase: the implied dH and dS0 at
    298.15 K, the references, the distance of the extrapolation and the nearest range edge
    (:class:`AnchorValues`). None when no record has one.

    A table may keep several sources' standard data for one substance: each curve is held
    to the value of each quantity nearest what it implies (the lower on a tie), as for a
    boiling point, so that the order of the rows never decides.

    Computed once per table (the two checks, ``reference-contradicted`` and the witnesses
    read it).
    """
    return ctx.memo(("anchor values",), lambda: _anchor_values(ctx))


def _anchor_values(ctx: AuditContext) -> AnchorValues | None:
    """:func:`anchor_values`, computed."""
    liquid = ctx.liquid
    quantities = {
        "h": ("standard_enthalpy_of_vaporization", "standard_enthalpy_of_sublimation"),
        "s": ("standard_entropy_of_vaporization", "standard_entropy_of_sublimation"),
    }
    has = np.zeros(ctx.n, dtype=bool)
    for pair in quantities.values():
        has |= np.isfinite(np.where(liquid, ctx.reference(pair[0]), ctx.reference(pair[1])))
    rows = np.flatnonzero(ctx.evaluable & has)
    if rows.size == 0:
        return None
    c = ctx.curves.take(rows)
    edge = np.clip(T_ANCHOR, c.t_min, c.t_max)  # where the curve is still in its range
    with np.errstate(all="ignore"):
        t = np.full(rows.size, T_ANCHOR)
        y, y1, _ = evaluate(c, t, order=1)
        at298 = standard_state(ctx, rows, t, y, y1)
        h, s = at298.h, at298.s
        p = np.exp(y)  # a curve extrapolated to absurd heights overflows: y keeps it
        # the same at the range edge: what the curve's own dCp adds on the way to 298.15 K,
        # both ends read alike as for an ideal vapour (the curve's own curvature: at a range
        # edge of high pressure the real-gas terms may not be computable at all)
        ye, ye1, _ = evaluate(c, edge, order=1)
        h_edge, s_edge = ideal_gas(edge, ye, ye1)
        down = np.sign(edge - T_ANCHOR)  # +1 extrapolated downwards, -1 upwards, 0 in range
        h_change = down * (at298.h_ideal_gas - h_edge)
        s_change = down * (at298.s_ideal_gas - s_edge)
    implied = {"h": h, "s": s}
    ref, unc = {}, {}
    for key, (of_liquid, of_solid) in quantities.items():
        ref[key], unc[key] = np.full(rows.size, np.nan), np.full(rows.size, np.nan)
        for quantity, phase in ((of_liquid, liquid[rows]), (of_solid, ~liquid[rows])):
            at = np.flatnonzero(phase)
            ref[key][at], unc[key][at] = ctx.nearest_values(
                quantity, rows[at], implied[key][at], lower_on_tie=True
            )
    return AnchorValues(
        rows=rows,
        h=h,
        s=s,
        p=p,
        h_ref=ref["h"],
        s_ref=ref["s"],
        h_u=unc["h"],
        s_u=unc["s"],
        edge=edge,
        distance=np.abs(edge - T_ANCHOR),
        ratio=edge / T_ANCHOR,
        y=y,
        h_change=h_change,
        s_change=s_change,
        real_gas=at298.real_gas,
        estimated=at298.estimated,
        h_ideal_gas=at298.h_ideal_gas,
        s_ideal_gas=at298.s_ideal_gas,
    )


def _unreal(change: np.ndarray, real: np.ndarray) -> np.ndarray:
    """The part of an extrapolation's ``change`` (signed as in :class:`AnchorValues`) that
    no real dCp gives: beyond ``real`` (``cp_max`` over the extrapolation), or of the wrong
    sign (a positive dCp, which no condensed phase has against its vapour).
    """
    return np.fmax(change - real, 0.0) + np.fmax(-change, 0.0)


def within_reach(ratio: np.ndarray, max_ratio: float) -> np.ndarray:
    """Whether a curve whose range edge nearest 298.15 K is ``ratio`` times 298.15 K is
    near enough to be judged at 298.15 K: from 298.15 K / ``max_ratio`` to ``max_ratio``
    times it (as far upwards as downwards).
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.abs(np.log(ratio)) <= np.log(max_ratio)


def allowances(ctx: AuditContext, a: AnchorValues) -> Allowances:
    """The two checks' allowances for :func:`anchor_values` ``a`` (one definition, for the
    checks and for the diagnosis, which weighs the same residuals).

    A standard value that states its uncertainty u is met within ``factor`` u where that is
    more than the tolerance (and an error needs more than both ``error_above`` and that):
    the tolerances are how far real curves land from values that state none.
    Extrapolated, the allowance grows by ``cp_uncertainty`` per kelvin (dH) or per unit of
    |ln(edge / 298.15 K)| (dS0), and by whatever the curve's own change over the
    extrapolation exceeds what a dCp of ``cp_max`` gives. Measured on Landolt's liquids of
    odd CAS number extrapolated to 298.15 K (186 curves, CRC standard data): the implied
    mean |dCp| on the way is 69 J/(mol K) at the median, 218 at p90 and 418 at p95 --
    Antoine equations nearing their pole -- where real dCp of vaporization stay within
    about 200 (common practice; value from memory for the heaviest organics).
    """
    th_h, th_s = ctx.thresholds("anchor-enthalpy"), ctx.thresholds("anchor-entropy")
    with np.errstate(invalid="ignore", divide="ignore"):
        # the part of the extrapolated change that no real dCp gives is not evidence: an
        # equation's curvature outside its range is not measured (an Antoine equation
        # extrapolated towards its pole, T = -C, gains enthalpy fast)
        # (|ln(edge / 298.15 K)|: a range below 298.15 K is extrapolated upwards)
        log_ratio = np.abs(np.log(a.ratio))
        h_real = th_h["cp_max"] * a.distance
        s_real = th_s["cp_max"] * log_ratio
        growth_h = th_h["cp_uncertainty"] * a.distance + _unreal(a.h_change, h_real)
        growth_s = th_s["cp_uncertainty"] * log_ratio + _unreal(a.s_change, s_real)
        # a stated uncertainty widens a bound beyond it (NaN where none: fmax ignores it)
        stated_h, stated_s = th_h["factor"] * a.h_u, th_s["factor"] * a.s_u
        h_base = np.fmax(th_h["tolerance"] * np.abs(a.h_ref), stated_h)
        s_base = np.fmax(np.full_like(growth_s, th_s["tolerance"]), stated_s)
        return Allowances(
            h_base=h_base,
            h_warn=h_base + growth_h,
            h_error=np.fmax(th_h["error_above"] * np.abs(a.h_ref), stated_h) + growth_h,
            # a curve with no finite value at 298.15 K (its extrapolation meets a pole) is
            # not judged: there is no extrapolation to weigh
            h_judged=np.isfinite(a.h_ref)
            & within_reach(a.ratio, th_h["max_ratio"])
            & np.isfinite(a.h),
            s_base=s_base,
            s_warn=s_base + growth_s,
            s_error=np.fmax(th_s["error_above"], stated_s) + growth_s,
            s_judged=np.isfinite(a.s_ref)
            & within_reach(a.ratio, th_s["max_ratio"])
            & np.isfinite(a.s),
            h_stated=stated_h > th_h["tolerance"] * np.abs(a.h_ref),
            s_stated=stated_s > th_s["tolerance"],
        )


def _outvoted(ctx: AuditContext, a: AnchorValues, al: Allowances, key: str):
    """For the enthalpy (``key`` "h") or the entropy ("s"): each row of ``a``'s group (its
    substance, phase and standard value; -1 where the curve is not judged) and whether two
    or more judged curves of the group miss the value on the same side, beyond the warning
    allowance, while agreeing with each other within it: several records against one
    standard value, which ``reference-contradicted`` names instead of an error on each.
    """
    if key == "h":
        implied, ref, allowed, judged = a.h, a.h_ref, al.h_warn, al.h_judged
    else:
        implied, ref, allowed, judged = a.s, a.s_ref, al.s_warn, al.s_judged
    codes_ = ctx.codes[a.rows]
    judged = judged & (codes_ >= 0)
    groups = np.full(a.rows.size, -1)
    if judged.any():
        cells = np.column_stack([codes_[judged], ctx.liquid[a.rows][judged], ref[judged]])
        groups[judged] = np.unique(cells, axis=0, return_inverse=True)[1].ravel()
    with np.errstate(invalid="ignore"):
        return groups, outvoted(groups, implied - ref, allowed)


def _lands_on_boiling_point(ctx: AuditContext, a: AnchorValues) -> np.ndarray:
    """Whether each record of ``a`` is a liquid whose curve lands on its reference normal
    boiling point within the unwidened tolerance of ``boiling-point-mismatch``: a witness of
    its level that no log-base, pressure-unit or temperature-scale slip would leave met.
    Computed once per table (both anchor checks read it).
    """

    def compute() -> np.ndarray:
        got = boiling_residuals(ctx)
        if got is None:
            return np.zeros(a.rows.size, dtype=bool)
        with np.errstate(invalid="ignore"):
            return np.isin(a.rows, got.rows[np.abs(got.d) <= got.base])

    return ctx.memo(("anchor lands on its boiling point",), compute)


def _beyond(value, ref, warn, error, judged):
    """Rows beyond the warning bound, and whether each is beyond the error bound too."""
    with np.errstate(invalid="ignore"):
        off = np.abs(value - ref)
        return judged & ~(off <= warn), ~(off <= error)


def _where(edge: float) -> str:
    """Where the curve is taken: at 298.15 K within its range, or extrapolated to it from
    the range edge ``edge`` [K].
    """
    if edge == T_ANCHOR:
        return "at 298.15 K, within its range"
    return f"extrapolated to 298.15 K with its own dCp from {kelvin(edge)}"


def _what(is_liquid: bool) -> str:
    return "vaporization" if is_liquid else "sublimation"


@check(
    "anchor-enthalpy",
    Severity.error,
    Scope.record,
    "The enthalpy the curve implies at 298.15 K misses the standard-table value of its phase "
    "change.",
    "Second law: dH(298) = R T^2 dlnP/dT, against dH_f(gas) - dH_f(condensed) from standard "
    "thermochemical tables (the vapour taken as a real gas by a second virial coefficient, "
    "from the table's Tc and Pc or ones estimated from the curve). Calibrated on Alcock et "
    "al. (1984) solids (28 of 29 within 1.4 %) and Landolt's liquids (95 % within 17.7 %) "
    "against the CRC standard data carried by chemicals.",
    _ENTHALPY,
    tiers={"below-error-above": Severity.warning, "boiling-point-met": Severity.warning},
    witness="relative_difference",
)
def anchor_enthalpy(ctx: AuditContext, th: dict[str, float]):
    """A warning beyond ``tolerance`` times the reference, an error beyond ``error_above``
    times it (a reference that states its uncertainty u: beyond ``factor`` u where that is
    more), each plus ``cp_uncertainty`` times the kelvins extrapolated (dH(298) -
    dH(edge) is the integral of dCp), plus the part of the curve's own change over the
    extrapolation that a dCp of ``cp_max`` would not give. Curves whose range lies more
    than ``max_ratio`` above 298.15 K, or wholly below 298.15 K / ``max_ratio``, are not
    judged: the extrapolation is too long. A curve that lands on its reference normal
    boiling point gets a warning where it would get an error (boiling-point-met): no slip of
    its level leaves it there, so the standard value may be the party that is off; two or
    more agreeing curves that miss one standard value leave it to reference-contradicted.
    """
    a = anchor_values(ctx)
    if a is None:
        return
    al = allowances(ctx, a)
    allowed = al.h_warn
    bad, error = _beyond(a.h, a.h_ref, allowed, al.h_error, al.h_judged)
    bad &= ~_outvoted(ctx, a, al, "h")[1]  # reported once, by reference-contradicted
    lands = _lands_on_boiling_point(ctx, a)
    for k in np.flatnonzero(bad):
        i = int(a.rows[k])
        rel = (a.h[k] - a.h_ref[k]) / a.h_ref[k]
        yield Hit(
            i,
            f"{_where(a.edge[k])}, the "
            f"curve implies dH_{_what(ctx.liquid[i])[:3]}(298) = {kj(a.h[k])}"
            + (f" ({_as_real_gas(kj(a.h_ideal_gas[k]), a.estimated[k])})" if a.real_gas[k] else "")
            + " against the "
            f"standard-table {kj(a.h_ref[k])}: {rel * 100:+.1f} %, beyond the allowance of "
            f"{kj(allowed[k])}"
            + _stated(al.h_stated[k], th["factor"], kj(a.h_u[k]))
            + ". "
            + (
                _LANDS.format("a log-base or temperature-scale slip")
                if lands[k]
                else "Usual causes: log10 coefficients read as ln or the reverse (a factor "
                "2.3), or an Antoine equation in degC marked K."
            ),
            {
                "enthalpy_J_per_mol": a.h[k],
                **({"ideal_gas_enthalpy_J_per_mol": a.h_ideal_gas[k]} if a.real_gas[k] else {}),
                "reference_J_per_mol": a.h_ref[k],
                "relative_difference": rel,
                "allowance_J_per_mol": allowed[k],
                "extrapolated_from_K": a.edge[k],
                **({"reference_uncertainty_J_per_mol": a.h_u[k]} if np.isfinite(a.h_u[k]) else {}),
            },
            tier=_tier(error[k], lands[k]),
        )


def _as_real_gas(ideal: str, estimated: bool) -> str:
    """The words that say a value takes the vapour as a real gas (with a Tc and a Pc
    ``estimated`` from the curve, or given), with its ideal-gas reading ``ideal`` (what R
    T^2 dlnP/dT alone gives), so that a reader can follow the number.
    """
    how = ", Tc and Pc estimated from the curve" if estimated else ""
    return f"its vapour taken as a real gas{how}; as an ideal gas, {ideal}"


def _stated(widened: bool, factor: float, u: str) -> str:
    """The words that say a standard value's stated uncertainty ``u`` set the allowance."""
    return f" ({factor:g} times the standard value's stated uncertainty of {u})" if widened else ""


#: What an anchor finding says of a curve that lands on its reference normal boiling point.
_LANDS = (
    "The curve lands on its reference normal boiling point, which {} would not leave it "
    "doing: the standard value, or the curve's shape between its boiling point and 298.15 K, "
    "is off; which one, this table cannot say."
)


def _tier(error: bool, lands: bool) -> str | None:
    """An anchor finding's tier: an error beyond ``error_above``, save for a curve that lands
    on its reference normal boiling point, which a slip of its level would not leave met (a
    warning: the standard value may be the party that is off); a warning within it.
    """
    if not error:
        return "below-error-above"
    return "boiling-point-met" if lands else None


@check(
    "anchor-entropy",
    Severity.error,
    Scope.record,
    "The standard entropy the curve implies at 298.15 K misses the standard-table value of "
    "its phase change.",
    "Third law: dS0(298) = dH(298)/T + R ln(P(298)/1 bar), against S0(gas) - S0(condensed) "
    "from standard thermochemical tables (the vapour taken as a real gas, as for "
    "anchor-enthalpy). Calibrated on Alcock et al. (1984) solids (28 of "
    "29 within 2.8 J/(mol K)) and Landolt's liquids (95 % within 13.8 J/(mol K)) against "
    "the CRC standard data carried by chemicals.",
    _ENTROPY,
    tiers={"below-error-above": Severity.warning, "boiling-point-met": Severity.warning},
    witness="difference_J_per_mol_K",
)
def anchor_entropy(ctx: AuditContext, th: dict[str, float]):
    """A warning beyond ``tolerance``, an error beyond ``error_above`` (a reference that
    states its uncertainty u: beyond ``factor`` u where that is more), each plus
    ``cp_uncertainty`` times |ln(edge / 298.15 K)| (dS(298) - dS(edge) is the integral of
    dCp/T), plus the part of the curve's own change that ``cp_max`` would not give. A
    pressure-unit slip shifts dS0 by R ln(factor) and leaves dH alone: this is its witness
    on a lone curve. The reach, the boiling-point-met warning and the curves that outvote
    a standard value are as for ``anchor-enthalpy``.
    """
    a = anchor_values(ctx)
    if a is None:
        return
    al = allowances(ctx, a)
    allowed = al.s_warn
    bad, error = _beyond(a.s, a.s_ref, allowed, al.s_error, al.s_judged)
    bad &= ~_outvoted(ctx, a, al, "s")[1]  # reported once, by reference-contradicted
    lands = _lands_on_boiling_point(ctx, a)
    for k in np.flatnonzero(bad):
        i = int(a.rows[k])
        d = a.s[k] - a.s_ref[k]
        yield Hit(
            i,
            f"{_where(a.edge[k])}, the "
            f"curve implies the standard entropy of {_what(ctx.liquid[i])} dS0(298) = "
            f"{a.s[k]:.1f} J/(mol K) (P = {pressure_at_ln(a.y[k], a.p[k], 3)}"
            + (
                f"; {_as_real_gas(f'{a.s_ideal_gas[k]:.1f} J/(mol K)', a.estimated[k])}"
                if a.real_gas[k]
                else ""
            )
            + ") against the "
            f"standard-table {a.s_ref[k]:.1f} J/(mol K): off by {d:+.1f}, beyond the allowance of "
            f"{allowed[k]:.3g}"
            + _stated(al.s_stated[k], th["factor"], f"{a.s_u[k]:.3g} J/(mol K)")
            + ". "
            + (
                _LANDS.format("a wrong pressure unit")
                if lands[k]
                else "Usual cause: a wrong pressure unit (R ln of the factor: 40.7 J/(mol K) "
                "for Torr read as Pa, 57 for kPa, 96 for atm or bar)."
            ),
            {
                "entropy_J_per_mol_K": a.s[k],
                **({"ideal_gas_entropy_J_per_mol_K": a.s_ideal_gas[k]} if a.real_gas[k] else {}),
                "reference_J_per_mol_K": a.s_ref[k],
                "difference_J_per_mol_K": d,
                "allowance_J_per_mol_K": allowed[k],
                "extrapolated_from_K": a.edge[k],
                **(
                    {"reference_uncertainty_J_per_mol_K": a.s_u[k]} if np.isfinite(a.s_u[k]) else {}
                ),
            },
            tier=_tier(error[k], lands[k]),
        )


def contradicted_standard_data(ctx: AuditContext):
    """Hits of ``reference-contradicted`` for the standard data at 298.15 K: a substance's
    reference standard enthalpy or entropy of a phase change that no curve of the phase
    meets, within the anchor checks' warning allowance, while they meet another reference
    value of it. The curves side with the other value; the contradicted one is named at its
    own file and line (the checks hold each curve to the value it meets best, so the curves
    draw no finding for it). Curves whose range is too far from 298.15 K to be judged take
    no part.

    So is a standard value that two or more curves of its phase miss on the same side while
    they agree with each other (:func:`_outvoted`): several records against one value.
    """
    a = anchor_values(ctx)
    if a is None:
        return
    al = allowances(ctx, a)
    yield from _outvoted_hits(ctx, a, al)
    th = {"h": ctx.thresholds("anchor-enthalpy"), "s": ctx.thresholds("anchor-entropy")}
    growth = {"h": al.h_warn - al.h_base, "s": al.s_warn - al.s_base}
    judged = {k: within_reach(a.ratio, th[k]["max_ratio"]) for k in th}
    liquid = ctx.liquid[a.rows]
    value = ctx.table.references["value_si"].to_numpy(dtype=float)
    for key, implied, words, unit, si in (
        ("h", a.h, "enthalpy", kj, "J_per_mol"),
        ("s", a.s, "entropy", lambda v: f"{v:.1f} J/(mol K)", "J_per_mol_K"),
    ):
        for phase, what in ((liquid, "vaporization"), (~liquid, "sublimation")):
            quantity = f"standard_{words}_of_{what}"
            if ctx.one_value_each(quantity):  # nothing to weigh
                continue
            refs = ctx.references_of(quantity)
            at = np.flatnonzero(phase & judged[key] & np.isfinite(implied))
            i, j = match(ctx.codes[a.rows[at]], np.where(np.isfinite(refs.value), refs.codes, -1))
            if i.size == np.unique(i).size:  # one value per curve: nothing to weigh
                continue
            k, ref = at[i], refs.rows[j]
            miss = implied[k] - refs.value[j]
            base = th[key]["tolerance"] * (np.abs(refs.value[j]) if key == "h" else 1.0)
            base = np.fmax(base, th[key]["factor"] * refs.uncertainty[j])  # as allowances()
            met = np.abs(miss) <= base + growth[key][k]
            for r, on, other, sides in ctx.contradictions(a.rows[k], ref, met):
                by = k[on][sides]
                ids = tuple(ctx.id(int(x)) for x in a.rows[by])
                worst = miss[on][sides]
                worst = float(worst[np.argmax(np.abs(worst))])
                opening, file, line = ctx.reference_disagreement(
                    f"standard {words} of {what} at 298.15 K", r, other, unit
                )
                one = len(ids) == 1
                yield Hit(
                    int(a.rows[by[0]]),
                    opening + f"the curve{'' if one else 's'} of {', '.join(ids)} "
                    f"meet{'s' if one else ''} that one and miss{'es' if one else ''} this one "
                    f"by {'' if one else 'up to '}"
                    + (f"{worst / 1000:+.3g} kJ/mol" if key == "h" else f"{worst:+.1f} J/(mol K)")
                    + ". The reference value looks wrong, not the "
                    f"record{'' if one else 's'}: check it against its source.",
                    {
                        "quantity": quantity,
                        f"reference_{si}": float(value[r]),
                        f"other_reference_{si}": float(value[other]),
                        f"difference_{si}": worst,
                    },
                    records=ids,
                    file=file,
                    line=line,
                )


def _outvoted_hits(ctx: AuditContext, a: AnchorValues, al: Allowances):
    """The hits of :func:`contradicted_standard_data` for standard values that the curves
    of their phase outvote (:func:`_outvoted`), one per value, at the value's file and line.
    """
    for key, implied, ref, words, fmt, si in (
        ("h", a.h, a.h_ref, "enthalpy", kj, "J_per_mol"),
        ("s", a.s, a.s_ref, "entropy", lambda v: f"{v:.1f} J/(mol K)", "J_per_mol_K"),
    ):
        groups, out = _outvoted(ctx, a, al, key)
        for g in np.unique(groups[out]):
            k = np.flatnonzero(groups == g)
            i = int(a.rows[k[0]])
            what = _what(bool(ctx.liquid[i]))
            refs = ctx.references_of(f"standard_{words}_of_{what}")
            at = np.flatnonzero((refs.codes == ctx.codes[i]) & (refs.value == ref[k[0]]))
            source, file, line = ctx.reference_row_at(int(refs.rows[at[0]]))
            miss = implied[k] - ref[k]
            worst = float(miss[np.argmax(np.abs(miss))])
            ids = tuple(ctx.id(int(x)) for x in a.rows[k])
            yield Hit(
                i,
                f"the reference standard {words} of {what} at 298.15 K {fmt(float(ref[k[0]]))} "
                f"({source}) disagrees with the {k.size} curves of {', '.join(ids)}, which "
                f"agree with each other: they imply {fmt(float(np.mean(implied[k])))} (off by "
                "up to "
                + (f"{worst / 1000:+.3g} kJ/mol" if key == "h" else f"{worst:+.1f} J/(mol K)")
                + "). The reference value looks wrong, not the records: check it against its "
                "source.",
                {
                    "quantity": f"standard_{words}_of_{what}",
                    f"reference_{si}": float(ref[k[0]]),
                    f"implied_{si}": [float(x) for x in implied[k]],
                    f"difference_{si}": worst,
                },
                records=ids,
                file=file,
                line=line,
            )
