"""How far a curve may drift from the truth where it is evaluated outside its own range.

A vapour-pressure equation is fitted over its stated range; beyond it, an error in its slope
grows linearly with the distance and an error in its curvature (the implied heat-capacity
change) quadratically. Checks that compare a curve with a reference value or with another
curve at a temperature outside the curve's range (the normal boiling point, the melting
point) widen their tolerance by this allowance, so that they test the data, not the
extrapolation.

The allowance is measured, not assumed: for every liquid of the Landolt compilation (odd CAS
numbers) that also has an equation in Poling's, McGarry's or Perry's tables, each equation is
extrapolated into the other's range, and the change of their difference from its value at
the extrapolated equation's range end is taken at the relative distance
f = |T - T_end| / T. Its 95th percentile (``benchmarks/extrapolation.py`` measures it again
and prints it beside the model) is, in ln P,

* below the range (toward low pressure): 0.019 at f = 0.02, 0.089 at 0.06, 0.19 at 0.10,
  0.34 at 0.15, 0.54 at 0.20, 0.81 at 0.25 -- fitted by 0.9 f + 9 f^2;
* above the range: 0.008 at f = 0.02, 0.048 at 0.06, 0.078 at 0.10, 0.14 at 0.15, 0.21 at
  0.20, 0.29 at 0.25 -- fitted by 0.5 f + 2.8 f^2.

Both have the linear-plus-quadratic shape that an error of slope and of curvature give. They
are measured on liquids; solids, which have no second source here, are given the same.
"""

from __future__ import annotations

import numpy as np

__all__ = ["BELOW", "ABOVE", "allowance"]

#: (linear, quadratic) coefficients of the allowance [ln P] in the relative distance below
#: a range, and above it (the 95th percentiles measured as the module says).
BELOW = (0.9, 9.0)
ABOVE = (0.5, 2.8)


def allowance(t_min, t_max, t) -> np.ndarray:
    """The extrapolation allowance in ln P of curves of ranges [t_min, t_max] evaluated at t.

    Parameters
    ----------
    t_min, t_max : array_like
        Range ends of each curve. [K]
    t : array_like
        Temperature of the comparison, one per curve. [K]

    Returns
    -------
    ndarray
        0 inside the range; a*f + b*f**2 outside it, with f the distance from the nearer
        end relative to t and (a, b) as :data:`BELOW` or :data:`ABOVE`. [-] (ln P)
    """
    t_min, t_max, t = (np.asarray(v, dtype=float) for v in (t_min, t_max, t))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        below = np.clip((t_min - t) / t, 0.0, None)
        above = np.clip((t - t_max) / t, 0.0, None)
        # a temperature near 0 K puts f beyond any float's square: no allowance (below)
        out = BELOW[0] * below + BELOW[1] * below**2 + ABOVE[0] * above + ABOVE[1] * above**2
    return np.where(np.isfinite(out), out, 0.0)
