"""Checks across sources: several records of one substance and phase."""

from __future__ import annotations

import numpy as np
import pandas as pd

from .._columns import codes
from ..equations.engine import evaluate
from ._context import LN_P_STANDARD, AuditContext, same_key_pairs
from ._registry import Scope, Severity, Threshold, check
from ._text import kelvin, ln_ratio
from .hits import Hit
from .implied import heat_capacity_positive

__all__: list[str] = []

_GRID = 9


def _blamed_by_boiling_point(ctx: AuditContext, pair: tuple[int, int]):
    """For two liquid records, the one the reference normal boiling point singles out:
    (suspect row, the other row, Tb [K], the suspect's ln P(Tb) - ln 101325), or None when
    there is no reference, the rows are solids, or both (or neither) meet it within the
    boiling-point check's own tolerance. A substance with several reference values is
    weighed by every one: a record that meets none of them while the other meets one is
    singled out, whatever the order of the rows, and Tb is the value the other meets best.
    """
    a, b = pair
    if not (ctx.liquid[a] and ctx.liquid[b]):
        return None
    refs = ctx.references_of("normal_boiling_point")
    tbs = refs.value[(refs.codes == ctx.codes[a]) & np.isfinite(refs.value)]
    if tbs.size == 0:
        return None
    rows = np.array([a, b])
    c = ctx.curves.take(np.repeat(rows, tbs.size))
    off = evaluate(c, np.tile(tbs, 2), 0)[0].reshape(2, tbs.size) - LN_P_STANDARD
    tol = ctx.thresholds("boiling-point-mismatch")["tolerance"]
    meets = np.abs(off) <= tol
    if meets[0].any() == meets[1].any():
        return None  # both meet some value (or neither does): no single record to blame
    k = 1 if meets[0].any() else 0
    # the value the other record meets best (the lowest on a tie): not the order of rows
    score = np.where(meets[1 - k], np.abs(off[1 - k]), np.inf)
    j = int(np.lexsort((tbs, score))[0])
    return int(rows[k]), int(rows[1 - k]), float(tbs[j]), float(off[k, j])


def _odd_heat_capacity(ctx: AuditContext, pair: tuple[int, int]) -> tuple[int, int] | None:
    """For two records of one substance and phase: (the one that draws heat-capacity-sign,
    the other) when exactly one does, else None (or when the policy turns that check off).
    A real condensed phase holds more heat than its vapour; a curve that says otherwise
    where its twin does not is the likelier of the two to carry a slip (a lost sign of a
    Wagner or log T term bends it so).
    """
    if ctx.policy.severity("heat-capacity-sign") is None:
        return None
    hc = ctx.memo(
        ("heat capacity positive",),
        lambda: heat_capacity_positive(ctx, ctx.thresholds("heat-capacity-sign")),
    )
    a, b = pair
    if bool(hc[a]) == bool(hc[b]):
        return None
    return (a, b) if hc[a] else (b, a)


@check(
    "sources-disagree",
    Severity.warning,
    Scope.sources,
    "A record deviates from the consensus of the other sources of the same substance "
    "and phase beyond the combined uncertainty.",
    "Robust consensus: the median of the other records at each temperature of the common "
    "range; a k-sigma test on the combined stated uncertainties.",
    (
        Threshold("factor", 2.0, "-", "coverage factor k on the combined uncertainty"),
        Threshold("default_uncertainty", 0.05, "-", "relative uncertainty when none is given"),
        Threshold("range_margin", 0.02, "-", "relative margin beyond a range still compared"),
    ),
    witness="difference_lnP",
)
def sources_disagree(ctx: AuditContext, th: dict[str, float]):
    """For each record, on a 9-point grid over its range (in 1/T), the other records of the
    same substance, phase and modification that cover each temperature give a median; the
    largest |ln P_i - median| is compared with k * sqrt(u_i^2 + u_others^2). With only two
    records the disagreement is reported once, naming both; it blames one only when the
    reference normal boiling point meets one curve (within the boiling-point check's
    tolerance) and not the other, or, with no such reference, when one of them implies a
    positive dCp (heat-capacity-sign) and the other does not (a lost sign of a Wagner D or
    log T term bends a curve so). It stays a warning: a third source or measured points
    decide.
    """
    mod_code = codes(ctx.table.records["modification"])[0] + 1  # 0: no modification
    key = (ctx.codes * 2 + ctx.liquid) * (mod_code.max(initial=0) + 1) + mod_code
    rows = np.flatnonzero(ctx.evaluable)
    size = np.zeros(ctx.n, dtype=np.int64)
    kr = key[rows]
    if rows.size and kr.min() >= 0 and kr.max() < 4 * ctx.n + 16:  # count without sorting
        size[rows] = np.bincount(kr)[kr]
    else:
        _, inverse, counts = np.unique(kr, return_inverse=True, return_counts=True)
        size[rows] = counts[inverse]
    rows = rows[size[rows] >= 2]
    if rows.size == 0:
        return
    i, j = same_key_pairs(key, rows, rows)
    keep = i != j
    i, j = i[keep], j[keep]
    ci, cj = ctx.curves.take(i), ctx.curves.take(j)
    frac = np.linspace(0.0, 1.0, _GRID)[None, :]
    x = 1.0 / ci.t_max[:, None] + (1.0 / ci.t_min - 1.0 / ci.t_max)[:, None] * frac
    t = 1.0 / x
    m = th["range_margin"]
    covered = (t >= cj.t_min[:, None] * (1 - m)) & (t <= cj.t_max[:, None] * (1 + m))
    yj = np.where(covered, evaluate(cj, t, 0)[0], np.nan)
    uj = np.where(np.isnan(ctx.uncertainty[j]), th["default_uncertainty"], ctx.uncertainty[j])
    long = pd.DataFrame(
        {
            "i": np.repeat(i, _GRID),
            "g": np.tile(np.arange(_GRID), i.size),
            "y": yj.ravel(),
            "u": np.repeat(uj, _GRID),
        }
    )
    long = long[np.isfinite(long["y"].to_numpy())]
    if not len(long):
        return
    cons = long.groupby(["i", "g"]).agg(med=("y", "median"), u=("u", "mean")).reset_index()
    r_ = cons["i"].to_numpy(dtype=np.int64)
    g = cons["g"].to_numpy()
    tt = 1.0 / (
        1.0 / ctx.curves.t_max[r_]
        + (1.0 / ctx.curves.t_min[r_] - 1.0 / ctx.curves.t_max[r_]) * g / (_GRID - 1)
    )
    yi = evaluate(ctx.curves.take(r_), tt, 0)[0]
    d = yi - cons["med"].to_numpy()
    ui = np.where(np.isnan(ctx.uncertainty[r_]), th["default_uncertainty"], ctx.uncertainty[r_])
    tol = th["factor"] * np.sqrt(ui**2 + cons["u"].to_numpy() ** 2)
    cons = cons.assign(d=d, tol=tol, t=tt, z=np.abs(d) / tol)
    # where the record's own curve has no value (pressure-not-finite's, or a Wagner curve
    # beyond its own critical temperature: above-critical's) there is nothing to compare
    cons = cons[~np.isnan(cons["z"].to_numpy())]
    if not len(cons):
        return
    worst = cons.loc[cons.groupby("i")["z"].idxmax()]
    worst = worst[worst["z"] > 1.0]
    partner = dict(zip(i.tolist(), j.tolist(), strict=True))  # the other one, in pairs
    reported: set[tuple[int, int]] = set()
    for w in worst.itertuples(index=False):
        r = int(w.i)
        n = int(size[r])
        if n == 2:
            pair = (min(r, partner[r]), max(r, partner[r]))
            if pair in reported:
                continue
            reported.add(pair)
            blame = _blamed_by_boiling_point(ctx, pair)
            odd = _odd_heat_capacity(ctx, pair) if blame is None else None
            if odd is not None:
                where, ok = odd
                judge = (
                    f"no reference decides, but {ctx.id(where)} implies a positive dCp "
                    f"(heat-capacity-sign) where {ctx.id(ok)} does not: {ctx.id(where)} is the "
                    "likelier to be wrong; a third source or measured points decide."
                )
            elif blame is None:
                judge = (
                    "with two sources neither can be blamed: a third source or measured points "
                    "decide."
                )
                where = pair[0]
            else:
                where, ok, tb, off = blame
                judge = (
                    f"the reference normal boiling point ({kelvin(tb)}) sides with "
                    f"{ctx.id(ok)}: {ctx.id(where)} is off by {ln_ratio(off)} there."
                )
            yield Hit(
                where,
                f"the two {ctx.phase_of(r)} records disagree by {ln_ratio(w.d)} at "
                f"{kelvin(w.t)}, beyond their combined uncertainty ({w.tol:.3g} in ln P); " + judge,
                {"difference_lnP": w.d, "at_K": w.t, "tolerance_lnP": w.tol, "sources": 2},
                records=(ctx.id(pair[0]), ctx.id(pair[1])),
            )
        else:
            yield Hit(
                r,
                f"this record deviates from the median of {n - 1} other sources by "
                f"{ln_ratio(w.d)} at {kelvin(w.t)}, {w.z:.1f} times the combined "
                f"uncertainty allowance ({w.tol:.3g} in ln P).",
                {"difference_lnP": w.d, "at_K": w.t, "tolerance_lnP": w.tol, "sources": n},
            )
