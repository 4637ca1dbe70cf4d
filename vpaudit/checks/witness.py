"""Which records an independent witness vouches for, and how finely.

A solid/liquid pair (or two sources) that disagree say that one of the two curves is off,
not which. A witness that concerns one record alone can say it: a liquid whose curve meets
its reference normal boiling point, or a curve that meets both standard values at
298.15 K, is backed by data that owe nothing to its partner. It backs the curve only as
finely as its own tolerance, though: the boiling point to the tolerance of
``boiling-point-mismatch`` in ln P, the standard entropy to its allowance over R (15 J/(mol
K) is 1.8 in ln P, a factor 6 in pressure). So a witnessed record points at its partner
only when its witness is finer than the disagreement, the disagreement lies within (or
near) its own range, and the partner has no such witness.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import R
from ._context import AuditContext
from .anchor import allowances, anchor_values
from .boiling import boiling_residuals

__all__ = ["DISAGREEMENTS", "NEAR_RANGE", "Witnesses", "vouched"]

#: Findings that two curves disagree, where one witnessed curve points at the other: each
#: with the evidence keys of how far apart they are, in ln P, and where, in K.
DISAGREEMENTS = {
    "no-crossing": ("difference_lnP_at_anchor", "anchor_K"),
    "crossing-outside-range": ("difference_lnP_at_range_end", "range_end_K"),
    "melting-point-mismatch": ("difference_lnP", "melting_point_K"),
    "sources-disagree": ("difference_lnP", "at_K"),
}
#: How far outside its own range (a fraction of the temperature) a witnessed curve still
#: vouches for its value where the two disagree.
NEAR_RANGE = 0.05

#: What backs a record, as the finding says it.
_WORDS = {1: "its reference normal boiling point", 2: "both standard values at 298.15 K"}


@dataclass(frozen=True)
class Witnesses:
    """Per record row: how finely a witness pins its curve, in ln P (``resolution``; inf
    where none backs it), and which witness (``kind``: 0 none, 1 the reference normal
    boiling point, 2 the 298.15 K standard values).
    """

    resolution: np.ndarray
    kind: np.ndarray

    def words(self, row: int) -> str:
        """The witness of record ``row``, in words."""
        return _WORDS[int(self.kind[row])]


def vouched(ctx: AuditContext) -> Witnesses:
    """The witnesses of every record. A liquid whose curve meets its reference normal
    boiling point within the ``boiling-point-mismatch`` tolerance is pinned to that
    tolerance; a curve that meets both 298.15 K standard values within the warning
    allowances of ``anchor-enthalpy`` and ``anchor-entropy`` (judged: not extrapolated
    beyond their reach) is pinned to the entropy allowance over R, its level in ln P.
    """
    resolution = np.full(ctx.n, np.inf)
    kind = np.zeros(ctx.n, dtype=np.int8)
    a = anchor_values(ctx)
    if a is not None:
        al = allowances(ctx, a)
        with np.errstate(invalid="ignore"):
            ok = (
                al.h_judged
                & al.s_judged
                & (np.abs(a.h - a.h_ref) <= al.h_warn)
                & (np.abs(a.s - a.s_ref) <= al.s_warn)
            )
        rows = a.rows[ok]
        resolution[rows] = al.s_warn[ok] / R
        kind[rows] = 2
    got = boiling_residuals(ctx)
    if got is not None:
        # the tolerance before the extrapolation allowance: a slip moves a curve's level
        # everywhere, so a curve that lands on its boiling point, however far from its
        # range, carries none
        rows, d, tol = got.rows, got.d, got.base
        with np.errstate(invalid="ignore"):  # a witness needs a finite tolerance
            ok = (np.abs(d) <= tol) & np.isfinite(tol) & (tol < resolution[rows])
        resolution[rows[ok]] = tol[ok]
        kind[rows[ok]] = 1
    return Witnesses(resolution, kind)
