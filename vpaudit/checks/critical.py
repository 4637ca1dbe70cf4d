"""The critical point: a liquid curve whose range reaches the critical temperature must reach
the critical pressure there.

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

from ..equations.engine import evaluate
from ._context import AuditContext
from ._registry import Scope, Severity, Threshold, check
from ._text import kelvin, ln_ratio, pressure
from .hits import Hit

__all__ = ["CriticalResiduals", "critical_residuals"]


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
    residual: np.ndarray  # d beyond the slack, signed [ln P]


def critical_residuals(ctx: AuditContext) -> CriticalResiduals | None:
    """The residual of every liquid record whose range ends within ``reach`` of the
    reference Tc (below it, or beyond it) and whose substance has a reference Pc; None when
    there is none. One definition, for the check and for the diagnosis.

    The curve is compared at Tc, or at its own range end (a Wagner record's own Tc) when that
    is lower: ln P(t) - ln Pc, less what moving Tc within its uncertainty explains (the
    reference's stated uncertainty, else the relative ``tc_uncertainty``, times the slope).
    """
    th = ctx.thresholds("critical-pressure-mismatch")
    tc = ctx.reference("critical_temperature")
    pc = ctx.reference("critical_pressure")
    c = ctx.curves
    with np.errstate(invalid="ignore"):
        end = np.fmin(c.t_max, c.own_t_crit)  # a Wagner curve stops at its own Tc
        near = (
            ctx.evaluable
            & ctx.liquid
            & np.isfinite(tc)
            & (pc > 0)
            & (end >= (1.0 - th["reach"]) * tc)
            & (tc > c.t_min)
        )
    rows = np.flatnonzero(near)
    if rows.size == 0:
        return None
    cr = c.take(rows)
    t = np.minimum(tc[rows], end[rows])
    y, y1, _ = evaluate(cr, t, order=1)
    d = y - np.log(pc[rows])
    u_tc = ctx.reference_uncertainty("critical_temperature", rows)
    u_tc = np.where(np.isfinite(u_tc), u_tc, th["tc_uncertainty"] * tc[rows])
    slack = np.abs(y1) * u_tc
    residual = np.sign(d) * np.maximum(np.abs(d) - slack, 0.0)
    return CriticalResiduals(rows, t, tc[rows], pc[rows], d, slack, residual)


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
            "miss beyond which it is a warning (the 95th percentile of Pc evaluations, "
            "with the record's default uncertainty)",
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
)
def critical_pressure_mismatch(ctx: AuditContext):
    """Compared in ln P at the reference Tc (or at the record's own range end when that is
    below it, by at most ``reach``), less what Tc's uncertainty explains through the curve's
    slope. Beyond ``tolerance`` the two evaluations of the critical point disagree more than
    independent evaluations of Pc usually do, a warning that may as well concern the
    reference; beyond ``error_above``, more than they ever do in the comparison, an error.
    """
    th = ctx.thresholds("critical-pressure-mismatch")
    got = critical_residuals(ctx)
    if got is None:
        return
    with np.errstate(invalid="ignore"):
        bad = ~(np.abs(got.residual) <= th["tolerance"])
    for k in np.flatnonzero(bad):
        i = int(got.rows[k])
        error = not abs(got.residual[k]) <= th["error_above"]
        p = float(np.exp(got.d[k]) * got.pc[k])
        yield Hit(
            i,
            (
                f"at the reference critical temperature {kelvin(got.tc[k])}"
                if got.t[k] == got.tc[k]
                else f"at its range end {kelvin(got.t[k])}, the reference critical "
                f"temperature being {kelvin(got.tc[k])},"
            )
            + f" the curve gives {pressure(p)} against the reference critical pressure "
            f"{pressure(got.pc[k])}: off by {ln_ratio(got.d[k])}, "
            + (
                "more than independent evaluations of the critical point ever differ. A "
                "term that matters only near Tc (a sign or decimal of the high-order "
                "coefficient) or the pressure unit of a critical pressure is the usual cause."
                if error
                else "more than independent evaluations of Pc usually differ: the record or "
                "the reference may be off; check both against their sources."
            ),
            {
                "at_K": got.t[k],
                "critical_temperature_K": got.tc[k],
                "critical_pressure_Pa": got.pc[k],
                "difference_lnP": got.d[k],
                "tc_allowance_lnP": got.slack[k],
                "residual_lnP": got.residual[k],
                "tolerance_lnP": th["tolerance"],
            },
            tier=None if error else "below-error-above",
        )
