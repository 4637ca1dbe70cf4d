"""The critical point: no liquid range beyond the critical temperature, and a liquid curve
whose range reaches it must reach the critical pressure there.

The liquid-vapour curve ends at the critical point (Tc, Pc). An equation whose stated range
runs up to Tc (compilations state such ranges as Tmin..Tc, and Wagner equations carry their
own Tc and Pc) claims the curve up to that point, so ln P(Tc) = ln Pc, whatever its form. A
lost sign or a slipped decimal in a term that matters only near Tc (the D T^E term of a
Perry-type equation) moves ln P there by 0.2 to several units while leaving the boiling
point untouched; a critical pressure in the wrong unit does the same for a Wagner record.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ..equations.engine import evaluate, temperature_at
from ._context import AuditContext, match
from ._registry import Scope, Severity, Threshold, check
from ._text import kelvin, ln_ratio, pressure, pressure_at_ln
from .hits import Hit

__all__ = ["CriticalResiduals", "critical_residuals"]


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
        Threshold(
            "evaluations_max",
            0.013,
            "-",
            "relative margin beyond Tc within which, past the tolerance, it is a warning "
            "that may concern the reference (the 99th percentile of Tc evaluations)",
        ),
        Threshold(
            "compilations_max",
            0.08,
            "-",
            "relative margin beyond a reference Tc within which a range that ends at a "
            "critical point of its own (see compilations_ln_pc) is a warning: the 99th "
            "percentile of the Tc differences between a compilation (Yaws) and an evaluation "
            "(CRC), 676 substances via chemicals",
        ),
        Threshold(
            "compilations_ln_pc",
            0.32,
            "ln P",
            "largest |ln P(t_max) - ln Pc| of a reference Pc for which the range's end is a "
            "critical point of its own: the 99th percentile of the Pc differences between "
            "the same two, 649 substances",
        ),
    ),
    tiers={"reference-doubted": Severity.warning},
)
def above_critical(ctx: AuditContext, th: dict[str, float]):
    """A liquid record whose t_max exceeds the critical temperature describes no equilibrium
    above Tc. Tc is the record's own (Wagner forms), else the reference value; a reference
    from another evaluation than the record's is uncertain by its stated uncertainty or, when
    none is stated, by the relative tolerance (how far independent evaluations of Tc differ).
    A range ending at the record's own Tc, or within that margin of a reference, is not a
    defect: compilations state Wagner ranges as Tmin..Tc.

    Two evaluations of Tc can disagree by more than that, and then the reference may be the
    one that is off. When the substance has a reference critical pressure and the curve
    reaches it nearer its own range end than the reference Tc, the range ends at its
    source's Tc: a warning that names the reference (and when the curve reaches it at the
    reference Tc, the reference critical point lies on the curve: an error). Without a
    reference Pc, a range that passes a reference Tc stating no uncertainty by more than
    the tolerance but less than ``evaluations_max`` (the 99th percentile of those
    differences) is a warning that says the reference may be off, as for a boiling point. A
    range that ends where another source of the substance puts its own Tc (a Wagner
    equation's, within the tolerance) is a warning naming the reference: two sources agree
    against it. A reference Tc below the whole range is named as the likely culprit.

    Compilations carry critical constants of their own, and they differ from evaluated
    ones far more than evaluations differ among themselves (Yaws against CRC: 5 % in Tc
    and 0.17 in ln Pc at the 95th percentile, 8 % and 0.32 at the 99th). A compilation's
    range stated as Tmin..Tc then ends past the reference Tc, with the curve passing near
    the reference critical point on its way: Perry's vinyl chloride ends at 432 K and 5.75
    MPa, Yaws's critical point, against IUPAC's 429 K and 5.3 MPa. So when the reference
    Tc states no uncertainty and the curve's end is itself a critical point within those
    99th percentiles of the reference (``compilations_max`` in T, ``compilations_ln_pc``
    in ln P against the reference Pc nearest it), two evaluations of the critical point
    disagree on where the curve ends: a warning that says so. A slip that carries a curve
    past its critical point moves its pressure there by far more (a lost sign, a wrong
    unit: several units of ln P).
    """
    own = ctx.curves.own_t_crit
    chosen = critical_references(ctx, th["tolerance"])
    ref, u, ref_row = chosen.value, chosen.uncertainty, chosen.ref
    margin = np.where(np.isfinite(u), u, th["tolerance"] * ref)
    tc = np.where(np.isfinite(own), own, ref)
    allowed = np.where(np.isfinite(own), own * (1 + 1e-9), ref + margin)
    with np.errstate(invalid="ignore"):
        bad = ctx.evaluable & ctx.liquid & (ctx.curves.t_max > allowed)
        # a reference Tc below the whole range (phenanthrene's 0.9 K in one table) says
        # more about the reference than about the record: no liquid curve lies entirely
        # above its critical point
        below = ~np.isfinite(own) & (ref + margin < ctx.curves.t_min)
    pc_known = np.isfinite(ctx.reference("critical_pressure"))
    disputed = np.flatnonzero(bad & ~below & ~np.isfinite(own))
    end = _pressure_at_range_end(ctx, disputed)
    sides = _critical_pressure_sides(ctx, end, ref)
    others = _own_tc_at_range_end(ctx, disputed, th["tolerance"])
    rival = _rival_critical_point(ctx, end, ref, u, th)
    for i in np.flatnonzero(bad):
        if below[i]:
            yield _implausible_tc(ctx, i, ref[i], int(ref_row[i]))
            continue
        if i in sides:
            yield _disputed_tc(ctx, i, ref[i], *sides[i])
            continue
        if i in others:
            yield _outvoted_tc(ctx, i, ref[i], int(ref_row[i]), *others[i])
            continue
        if i in rival:
            yield _rival_tc(ctx, i, ref[i], int(ref_row[i]), *rival[i], th)
            continue
        whose = "the record's own" if np.isfinite(own[i]) else "the reference"
        doubted = False
        if np.isfinite(own[i]):
            beyond = ""
        elif np.isfinite(u[i]):
            beyond = f" (beyond its stated uncertainty of {margin[i]:.3g} K)"
        elif not pc_known[i] and ctx.curves.t_max[i] <= ref[i] * (1.0 + th["evaluations_max"]):
            doubted = True
            beyond = (
                f" by more than the {th['tolerance'] * 100:g} % ({margin[i]:.3g} K) by which "
                "independent evaluations of Tc usually differ, but within the "
                f"{th['evaluations_max'] * 100:g} % by which they can (99th percentile): the "
                "reference may be the one that is off; check both against their sources"
            )
        else:
            beyond = (
                f" by more than the {th['tolerance'] * 100:g} % ({margin[i]:.3g} K) by which "
                "independent evaluations of Tc differ"
            )
        yield Hit(
            i,
            f"the range ends at {kelvin(ctx.curves.t_max[i])}, above {whose} critical "
            f"temperature {kelvin(tc[i])}{beyond}"
            + ("." if doubted else ", where no liquid exists."),
            {
                "t_max_K": ctx.curves.t_max[i],
                "critical_temperature_K": tc[i],
                "allowed_K": allowed[i],
                "residual_K": ctx.curves.t_max[i] - tc[i],
            },
            tier="reference-doubted" if doubted else None,
        )


class _RangeEnds(NamedTuple):
    """Records whose range ends above a reference Tc, each with the curve's ln P at its
    range end and the substance's reference Pc nearest it (the first in table order on a
    tie); only records whose substance has a reference Pc.
    """

    rows: np.ndarray
    y_end: np.ndarray  # ln P(t_max) [ln Pa]
    pc: np.ndarray  # [Pa]
    pc_row: np.ndarray  # its row of the references table


def _pressure_at_range_end(ctx: AuditContext, rows: np.ndarray) -> _RangeEnds:
    """:class:`_RangeEnds` of the records in ``rows``: every reference Pc of a substance is
    weighed, so that the order of the rows never decides which one a range is held to.
    """
    c = ctx.curves.take(rows)
    y_end = evaluate(c, c.t_max, order=0)[0]
    i, j, pcs = ctx.nearest_references("critical_pressure", rows, y_end, log=True)
    return _RangeEnds(rows[i], y_end[i], pcs.value[j], pcs.rows[j])


def _critical_pressure_sides(ctx: AuditContext, end: _RangeEnds, tc_ref: np.ndarray) -> dict:
    """For the records of ``end`` (ranges that end above the reference Tc ``tc_ref``, per
    record): where the curve itself reaches the reference Pc nearest its range end (T*,
    found up to 10 % beyond its range). A range stated as Tmin..Tc ends at its own source's
    Tc, so a curve that reaches that Pc nearer its own range end than the reference Tc
    sides with its source: returns {row: (T*, Pc)} for those, which are a dispute between
    two evaluations of Tc, not a range beyond the critical point.
    """
    if end.rows.size == 0:
        return {}
    c = ctx.curves.take(end.rows)
    t_star = temperature_at(c, np.log(end.pc), c.t_min, 1.1 * c.t_max)
    with np.errstate(invalid="ignore"):
        own_side = np.abs(t_star - c.t_max) < np.abs(t_star - tc_ref[end.rows])
    return {
        int(r): (float(t), float(p))
        for r, t, p, ok in zip(end.rows, t_star, end.pc, own_side, strict=True)
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


def _own_tc_at_range_end(ctx: AuditContext, rows: np.ndarray, tolerance: float) -> dict:
    """For the records in ``rows``: another record of the same substance that carries its
    own Tc (a Wagner equation) within ``tolerance`` (relative) of where the record's range
    ends. Returns {row: (its row, its Tc)} for those that have one. Two sources that put
    the critical point at the same temperature outweigh one reference from a third
    evaluation.
    """
    own = ctx.curves.own_t_crit
    wagner = np.flatnonzero(np.isfinite(own) & (ctx.codes >= 0))
    if rows.size == 0 or wagner.size == 0:
        return {}
    wagner = wagner[np.argsort(ctx.codes[wagner], kind="stable")]
    codes_ = ctx.codes[wagner]
    first = np.searchsorted(codes_, ctx.codes[rows], side="left")
    last = np.searchsorted(codes_, ctx.codes[rows], side="right")
    t_max = ctx.curves.t_max
    out = {}
    for i, a, b in zip(rows.tolist(), first.tolist(), last.tolist(), strict=True):
        for j in wagner[a:b].tolist():  # the substance's own-Tc records: a few at most
            if j != i and abs(own[j] - t_max[i]) <= tolerance * own[j]:
                out[i] = (j, float(own[j]))
                break
    return out


def _outvoted_tc(ctx: AuditContext, row: int, tc: float, ref_row: int, other: int, other_tc: float):
    """``above-critical`` for a range that ends where another source of the substance puts
    its own Tc: a warning naming the reference (row ``ref_row`` of the references, at its
    own file and line) as the likelier to be off.
    """
    source, file, line = ctx.reference_row_at(ref_row)
    t_max = float(ctx.curves.t_max[row])
    return Hit(
        row,
        f"the range ends at {kelvin(t_max)}, above the reference critical temperature "
        f"{kelvin(tc)} ({source}); but {ctx.id(other)}, another source of the substance, "
        f"puts its own critical temperature at {kelvin(other_tc)}, where this range ends: "
        "two sources agree against the reference, which is the likelier to be off (check it "
        "against its source).",
        {
            "t_max_K": t_max,
            "critical_temperature_K": float(tc),
            "other_source_critical_temperature_K": other_tc,
            "likely_culprit": "reference",
        },
        tier="reference-doubted",
        file=file,
        line=line,
    )


def _rival_critical_point(
    ctx: AuditContext, end: _RangeEnds, tc_ref: np.ndarray, tc_u: np.ndarray, th: dict
) -> dict:
    """For the records of ``end`` whose reference Tc (``tc_ref``, uncertainty ``tc_u``, per
    record) states no uncertainty: those whose range end is a critical point of its own
    within the spread of compilations' critical constants, ``compilations_max`` above the
    reference Tc and ``compilations_ln_pc`` in ln P from the reference Pc nearest the
    curve's end. Returns {row: (ln P(t_max), Pc, Pc's reference row)}.
    """
    r = end.rows
    with np.errstate(invalid="ignore"):
        ok = (
            ~np.isfinite(tc_u[r])
            & (ctx.curves.t_max[r] <= tc_ref[r] * (1.0 + th["compilations_max"]))
            & (np.abs(end.y_end - np.log(end.pc)) <= th["compilations_ln_pc"])
        )
    return {
        int(r[k]): (float(end.y_end[k]), float(end.pc[k]), int(end.pc_row[k]))
        for k in np.flatnonzero(ok).tolist()
    }


def _rival_tc(
    ctx: AuditContext, row: int, tc: float, tc_row: int, y_end: float, pc: float, pc_row: int, th
):
    """``above-critical`` for a range that ends at a critical point of its own, near the
    reference's (:func:`_rival_critical_point`): a warning that two evaluations of the
    critical point disagree.
    """
    tc_source = ctx.reference_row_at(tc_row)[0]
    pc_source = ctx.reference_row_at(pc_row)[0]
    t_max = float(ctx.curves.t_max[row])
    d = y_end - float(np.log(pc))
    return Hit(
        row,
        f"the range ends at {kelvin(t_max)}, {(t_max / tc - 1.0) * 100:.2g} % above the "
        f"reference critical temperature {kelvin(tc)} ({tc_source}), where the curve gives "
        f"{pressure_at_ln(y_end, np.exp(y_end), 4)}, {ln_ratio(d)} {'above' if d > 0 else 'below'} "
        f"the reference critical "
        f"pressure {pressure(pc)} ({pc_source}). The range's end is thus a critical point "
        "of its own, within how far a compilation's critical constants differ from an "
        f"evaluation's (99th percentile: {th['compilations_max'] * 100:g} % in Tc, "
        f"{th['compilations_ln_pc']:g} in ln Pc): the record's source and the reference "
        "disagree on where the curve ends. Check both against their sources.",
        {
            "t_max_K": t_max,
            "critical_temperature_K": float(tc),
            "critical_pressure_Pa": float(pc),
            "ln_p_at_range_end": y_end,
            "difference_lnP": d,
            "residual_K": t_max - float(tc),
        },
        tier="reference-doubted",
    )


def _implausible_tc(ctx: AuditContext, row: int, tc: float, ref_row: int):
    """``above-critical`` for a reference Tc below a liquid record's whole range: a warning
    that names the reference (row ``ref_row`` of the references, at its own file and line)
    as the likely culprit.
    """
    source, file, line = ctx.reference_row_at(ref_row)
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


class CriticalReferences(NamedTuple):
    """Per record, the reference critical temperature it is judged against (NaN where its
    substance has none): of several values, the one whose allowance reaches highest, so
    that a range is never held to one value while another allows it; with every (record,
    reference) comparison of the liquids beside.
    """

    value: np.ndarray  # Tc [K]
    uncertainty: np.ndarray  # its stated absolute uncertainty [K], NaN where none
    ref: np.ndarray  # its row in the references table (-1: none)
    k: np.ndarray  # the record of each comparison (a record row)
    pair_ref: np.ndarray  # its reference row
    met: np.ndarray  # whether the range ends within that reference's allowance


def critical_references(ctx: AuditContext, tolerance: float) -> CriticalReferences:
    """:class:`CriticalReferences` of the table; ``tolerance`` is the relative margin of a
    reference that states no uncertainty (``above-critical``'s).
    """
    refs = ctx.references_of("critical_temperature")
    ok = np.isfinite(refs.value)
    n = ctx.n
    value, unc, row = np.full(n, np.nan), np.full(n, np.nan), np.full(n, -1, dtype=np.int64)
    i, j = match(ctx.codes, np.where(ok, refs.codes, -1))  # negative codes never match
    empty = np.empty(0, dtype=np.int64)
    if i.size == 0:
        return CriticalReferences(value, unc, row, empty, empty, np.empty(0, dtype=bool))
    order = np.lexsort((j, i))  # by record, then in the order of the references table
    i, j = i[order], j[order]
    u = refs.uncertainty[j]
    allowed = refs.value[j] + np.where(np.isfinite(u), u, tolerance * refs.value[j])
    # the highest allowance of each record, the first such reference on a tie
    by = np.lexsort((np.arange(i.size), -allowed, i))
    best = by[np.unique(i[by], return_index=True)[1]]
    rows = i[best]
    value[rows], unc[rows], row[rows] = refs.value[j[best]], u[best], refs.rows[j[best]]
    liquid = ctx.evaluable[i] & ctx.liquid[i]
    with np.errstate(invalid="ignore"):
        met = ctx.curves.t_max[i] <= allowed
    return CriticalReferences(value, unc, row, i[liquid], refs.rows[j][liquid], met[liquid])


def contradicted_critical_temperatures(ctx: AuditContext):
    """Hits of ``reference-contradicted`` for the reference critical temperatures that a
    liquid range passes while another reference value of its substance allows it: the
    range sides with the other value (its source's Tc), and two evaluations of Tc disagree.
    """
    got = critical_references(ctx, ctx.thresholds("above-critical")["tolerance"])
    if got.k.size == np.unique(got.k).size:  # one reference per substance: nothing to weigh
        return
    value = ctx.table.references["value_si"].to_numpy(dtype=float)
    # a range that passes a reference Tc while meeting another (a Wagner record is held to
    # its own Tc instead)
    passes = ~got.met & ~np.isfinite(ctx.curves.own_t_crit[got.k])
    met_any = np.zeros(ctx.n, dtype=bool)
    met_any[got.k[got.met]] = True
    candidates = np.unique(got.pair_ref[passes & met_any[got.k]]).tolist()
    for r, at, other, sides in ctx.contradictions(
        got.k, got.pair_ref, got.met, candidates, eligible=passes
    ):
        by = np.unique(got.k[at][sides])  # the liquids that pass it and meet the other
        ids = tuple(ctx.id(x) for x in by.tolist())
        opening, file, line = ctx.reference_disagreement("critical temperature", r, other, kelvin)
        one = len(ids) == 1
        t_max = ctx.curves.t_max[by]
        yield Hit(
            int(by[0]),
            opening + f"the range{'' if one else 's'} of {', '.join(ids)} "
            f"end{'s' if one else ''} at {kelvin(float(t_max.max()))}, above this one and "
            f"within that one. The reference value {kelvin(value[r])} looks wrong, or the "
            "record's source used the other: check both against their sources.",
            {
                "critical_temperature_K": float(value[r]),
                "other_critical_temperature_K": float(value[other]),
                "t_max_K": [float(x) for x in t_max],
            },
            records=ids,
            file=file,
            line=line,
        )


def contradicted_critical_pressures(ctx: AuditContext):
    """Hits of ``reference-contradicted`` for the reference critical pressures that no
    liquid reaching Tc meets (under any pairing with a reference Tc), while those liquids
    meet another reference value of the substance: the curves side with the other value,
    and two evaluations of Pc disagree.
    """
    got = _every_comparison(ctx)
    if got is None:
        return
    tol = ctx.thresholds("critical-pressure-mismatch")["tolerance"]
    with np.errstate(invalid="ignore"):
        met = np.abs(got.residual) <= tol
    value = ctx.table.references["value_si"].to_numpy(dtype=float)
    # each: the liquids compared with it, the first other value they meet, which meet it
    for r, at, other, sides in ctx.contradictions(got.rows, got.pc_ref, met):
        by = np.unique(got.rows[at][sides])
        ids = tuple(ctx.id(x) for x in by.tolist())
        miss = np.abs(got.d[at][sides])
        opening, file, line = ctx.reference_disagreement("critical pressure", r, other, pressure)
        one = len(ids) == 1
        yield Hit(
            int(by[0]),
            opening + f"at the critical point the curve{'' if one else 's'} of {', '.join(ids)} "
            f"meet{'s' if one else ''} that one and miss{'es' if one else ''} this one by "
            f"{ln_ratio(float(np.min(miss)))}{'' if one else ' or more'}. The reference "
            f"value {pressure(value[r])} looks wrong, or the record's source used the other: "
            "check both against their sources.",
            {
                "critical_pressure_Pa": float(value[r]),
                "other_critical_pressure_Pa": float(value[other]),
                "difference_lnP": float(np.min(miss)),
            },
            records=ids,
            file=file,
            line=line,
        )


class CriticalResiduals(NamedTuple):
    """The liquid records whose range reaches the reference critical temperature, and how
    far their curve passes from the reference critical point.
    """

    rows: np.ndarray  # record rows
    t: np.ndarray  # where the curve is compared: Tc, or its own range end if below [K]
    tc: np.ndarray  # reference Tc [K]
    pc: np.ndarray  # reference Pc [Pa]
    d: np.ndarray  # ln P(t) - ln Pc
    slack: np.ndarray  # what Tc's own uncertainty explains of d, through the slope [ln P]
    pc_slack: np.ndarray  # what a stated uncertainty of Pc explains of d (else 0) [ln P]
    residual: np.ndarray  # d beyond both, added in quadrature, signed [ln P]
    tc_ref: np.ndarray  # the row of that Tc in the references table
    pc_ref: np.ndarray  # the row of that Pc
    pairings: np.ndarray  # how many pairings of reference Tc and Pc the record was compared with


def _every_comparison(ctx: AuditContext) -> CriticalResiduals | None:
    """Every comparison of :func:`critical_residuals`: each liquid record whose range
    reaches a reference Tc, with each pairing of a reference Tc and Pc of its substance
    (rows ordered by record, then Tc row, then Pc row); None when there is none. Made once
    per table (``critical-pressure-mismatch`` and ``reference-contradicted`` both read it).
    """
    return ctx.memo(("critical comparisons",), lambda: _compare_every(ctx))


def _compare_every(ctx: AuditContext) -> CriticalResiduals | None:
    """:func:`_every_comparison`, computed."""
    th = ctx.thresholds("critical-pressure-mismatch")
    tcs = ctx.references_of("critical_temperature")
    pcs = ctx.references_of("critical_pressure")
    c = ctx.curves
    liquid = ctx.evaluable & ctx.liquid
    with np.errstate(invalid="ignore"):
        i, j = match(np.where(liquid, ctx.codes, -1), np.where(tcs.value > 0, tcs.codes, -1))
        i2, k2 = match(np.where(liquid, ctx.codes, -1), np.where(pcs.value > 0, pcs.codes, -1))
    rows, j, k = _every_pairing(i, j, i2, k2)
    tc = tcs.value[j]
    with np.errstate(invalid="ignore"):
        end = np.fmin(c.t_max, c.own_t_crit)[rows]  # a Wagner curve stops at its own Tc
        near = (end >= (1.0 - th["reach"]) * tc) & (tc > c.t_min[rows])
    rows, j, k, tc, end = rows[near], j[near], k[near], tc[near], end[near]
    if rows.size == 0:
        return None
    pc = pcs.value[k]
    t = np.minimum(tc, end)
    y, y1, _ = evaluate(c.take(rows), t, order=1)
    d = y - np.log(pc)
    u_tc = tcs.uncertainty[j]
    u_tc = np.where(np.isfinite(u_tc), u_tc, th["tc_uncertainty"] * tc)
    slack = np.abs(y1) * u_tc
    u_pc = pcs.uncertainty[k]
    with np.errstate(invalid="ignore", divide="ignore"):
        pc_slack = np.where(np.isfinite(u_pc), u_pc / pc, 0.0)
    # hypot(x, 0) is |x| exactly: without a stated Pc uncertainty nothing changes
    residual = np.sign(d) * np.maximum(np.abs(d) - np.hypot(slack, pc_slack), 0.0)
    one = np.ones(rows.size, dtype=np.int64)
    return CriticalResiduals(
        rows, t, tc, pc, d, slack, pc_slack, residual, tcs.rows[j], pcs.rows[k], one
    )


def critical_residuals(ctx: AuditContext) -> CriticalResiduals | None:
    """The residual of every liquid record whose range ends within ``reach`` of a reference
    Tc (below it, or beyond it) and whose substance has a reference Pc; None when there is
    none.

    The curve is compared at Tc, or at its own range end (a Wagner record's own Tc) when that
    is lower: ln P(t) - ln Pc, less what moving Tc within its uncertainty explains (the
    reference's stated uncertainty, else the relative ``tc_uncertainty``, times the slope)
    and what a stated uncertainty of Pc explains (u_Pc / Pc), added in quadrature.
    A substance with several reference values of Tc or Pc (several sources) is compared
    with each pairing of them, and each record is judged by the pairing it meets best, the
    first in the references table on a tie: a record is never held to one evaluation of
    the critical point while another allows it (values of Tc that disagree are named by
    ``reference-contradicted``).
    """
    got = _every_comparison(ctx)
    if got is None:
        return None
    # each record's best pairing (a NaN residual last), the first in table order on a tie
    order = np.lexsort((got.pc_ref, got.tc_ref, np.abs(got.residual), got.rows))
    _, first, pairings = np.unique(got.rows[order], return_index=True, return_counts=True)
    best = order[first]
    return CriticalResiduals(*(x[best] for x in got[:-1]), pairings)


def _every_pairing(
    i: np.ndarray, j: np.ndarray, i2: np.ndarray, k2: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every (record, j, k) for which (record, j) is in the pairs (``i``, ``j``) and
    (record, k) in (``i2``, ``k2``): each record's references of one quantity paired with
    each of another, ordered by record, then ``j``, then ``k``.
    """
    order = np.lexsort((k2, i2))
    i2, k2 = i2[order], k2[order]
    order = np.lexsort((j, i))
    i, j = i[order], j[order]
    lo = np.searchsorted(i2, i, side="left")
    n = np.searchsorted(i2, i, side="right") - lo
    at = np.repeat(lo - (np.cumsum(n) - n), n) + np.arange(int(n.sum()))
    return np.repeat(i, n), np.repeat(j, n), k2[at]


@check(
    "critical-pressure-mismatch",
    Severity.error,
    Scope.record,
    "A liquid curve whose range reaches the critical temperature misses the critical "
    "pressure there.",
    "The liquid-vapour curve ends at the critical point: P(Tc) = Pc. Independent evaluations "
    "of Pc differ: between the IUPAC and CRC critical pressures of 502 substances (via "
    "chemicals, methods IUPAC and CRC) |ln ratio| is at most 0.040 for 90 %, 0.083 for 95 % "
    "and 0.22 for 99 % of them; those of Tc by 0.16, 0.41 and 1.3 %.",
    (
        Threshold(
            "reach",
            0.01,
            "-",
            "relative distance below Tc within which a range end counts as reaching it",
        ),
        Threshold(
            "tc_uncertainty",
            0.005,
            "-",
            "relative uncertainty of a reference Tc that states none (as above-critical)",
        ),
        Threshold(
            "tolerance",
            0.10,
            "ln P",
            "miss beyond which it is a note (the 95th percentile of Pc evaluations, with "
            "the record's default uncertainty)",
        ),
        Threshold(
            "error_above",
            0.35,
            "ln P",
            "miss beyond which it is an error (beyond the 99th percentiles of Pc and Tc "
            "evaluations added: 0.22 + 0.09)",
        ),
    ),
    tiers={"below-error-above": Severity.note},
    witness="residual_lnP",
)
def critical_pressure_mismatch(ctx: AuditContext, th: dict[str, float]):
    """Compared in ln P at the reference Tc (or at the record's own range end when that is
    below it, by at most ``reach``), less what Tc's uncertainty explains through the curve's
    slope and what a reference Pc's stated uncertainty explains, in quadrature. Beyond
    ``tolerance`` the two evaluations of the critical point disagree more than
    independent evaluations of Pc usually do, a note that may as well concern the
    reference; beyond ``error_above``, more than they ever do in the comparison, an error.
    A table that keeps several sources' Tc or Pc has each pairing of them tried, and the
    record is judged by the evaluation of the critical point it meets best.
    """
    got = critical_residuals(ctx)
    if got is None:
        return
    with np.errstate(invalid="ignore"):
        # a curve with no finite value there gives no Pc to compare (inside its range that
        # is pressure-not-finite's)
        bad = np.isfinite(got.residual) & ~(np.abs(got.residual) <= th["tolerance"])
    for k in np.flatnonzero(bad):
        i = int(got.rows[k])
        error = not abs(got.residual[k]) <= th["error_above"]
        with np.errstate(over="ignore", under="ignore"):
            p = float(np.exp(got.d[k]) * got.pc[k])
        y = float(got.d[k] + np.log(got.pc[k]))  # ln(P/Pa), where P leaves a float's range
        yield Hit(
            i,
            (
                f"at the reference critical temperature {kelvin(got.tc[k])}"
                if got.t[k] == got.tc[k]
                else f"at its range end {kelvin(got.t[k])}, the reference critical "
                f"temperature being {kelvin(got.tc[k])},"
            )
            + f" the curve gives {pressure_at_ln(y, p)} against the reference critical pressure "
            f"{pressure(got.pc[k])}: off by {ln_ratio(got.d[k])}, "
            + (
                "more than independent evaluations of the critical point ever differ. A "
                "term that matters only near Tc (a sign or decimal of the high-order "
                "coefficient) or the pressure unit of a critical pressure is the usual cause."
                if error
                else "more than independent evaluations of Pc usually differ: the record or "
                "the reference may be off; check both against their sources."
            )
            + (
                f" Of the substance's {got.pairings[k]} pairings of a reference Tc with a "
                "reference Pc, this is the one the curve meets best (Tc: "
                f"{ctx.reference_row_at(int(got.tc_ref[k]))[0]}; Pc: "
                f"{ctx.reference_row_at(int(got.pc_ref[k]))[0]})."
                if got.pairings[k] > 1
                else ""
            ),
            {
                "at_K": got.t[k],
                "critical_temperature_K": got.tc[k],
                "critical_pressure_Pa": got.pc[k],
                "difference_lnP": got.d[k],
                "tc_allowance_lnP": got.slack[k],
                **({"pc_allowance_lnP": got.pc_slack[k]} if got.pc_slack[k] else {}),
                "residual_lnP": got.residual[k],
                "tolerance_lnP": th["tolerance"],
            },
            tier=None if error else "below-error-above",
        )
