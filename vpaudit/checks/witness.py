"""Which records an independent witness vouches for.

A solid/liquid pair that disagrees (at the melting point, in its crossing, in Hess's law)
says that one of its two records is off, not which. A witness that concerns one record
alone can say it: a liquid whose curve meets its reference normal boiling point, or a curve
that meets both standard values at 298.15 K, is backed by data that owe nothing to its
partner, so when only one record of a disagreeing pair is backed, the other is the likelier
culprit. Each witness is the one its check applies, with that check's tolerance.
"""

from __future__ import annotations

import numpy as np

from ._context import AuditContext
from .anchor import allowances, anchor_values
from .record import _boiling_residuals

__all__ = ["DISAGREEMENTS", "vouched", "witness_of"]

#: Findings that two curves disagree, where one witnessed curve points at the other.
DISAGREEMENTS = frozenset(
    {
        "no-crossing",
        "crossing-orientation",
        "crossing-outside-range",
        "melting-point-mismatch",
        "fusion-enthalpy-mismatch",
        "sources-disagree",
    }
)

#: What backs a record, as the finding says it.
BOILING = "its reference normal boiling point"
ANCHOR = "both standard values at 298.15 K"


def vouched(ctx: AuditContext) -> np.ndarray:
    """Per record row, the witness that backs it: 0 none, 1 its reference normal boiling
    point (within the ``boiling-point-mismatch`` tolerance), 2 both 298.15 K standard values
    (within the warning allowances of ``anchor-enthalpy`` and ``anchor-entropy``, judged:
    not extrapolated beyond their reach).
    """
    out = np.zeros(ctx.n, dtype=np.int8)
    got = _boiling_residuals(ctx)
    if got is not None:
        rows, *_, d, tol, _ = got
        with np.errstate(invalid="ignore"):  # a witness needs a finite tolerance
            out[rows[(np.abs(d) <= tol) & np.isfinite(tol)]] = 1
    a = anchor_values(ctx)
    if a is not None:
        al = allowances(ctx, a)
        with np.errstate(invalid="ignore"):
            ok = (
                al["h_judged"]
                & al["s_judged"]
                & (np.abs(a["h"] - a["h_ref"]) <= al["h_warn"])
                & (np.abs(a["s"] - a["s_ref"]) <= al["s_warn"])
            )
        rows = a["rows"][ok]
        out[rows[out[rows] == 0]] = 2
    return out


def witness_of(code: int) -> str:
    """The witness of :func:`vouched` code ``code``, in words."""
    return BOILING if code == 1 else ANCHOR
