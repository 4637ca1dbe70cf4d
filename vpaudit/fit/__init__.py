"""Fitting equations to measured points, and solid/liquid pairs that meet by construction.

All fits work in canonical units, y = ln(P/Pa) against T in kelvin, with each point's
standard uncertainty in y (a relative uncertainty u of P gives sigma_y = u). The record that
is written can then be converted exactly to any log base and pressure unit.

* Log-linear forms and, with Tc and Pc fixed, both Wagner forms are linear in their
  coefficients: weighted linear least squares, solved by an orthogonal factorization of the
  column-scaled design matrix.
* Antoine (y = A - B/(T + C)) and the power-term form (the exponent E) are nonlinear:
  ``scipy.optimize.least_squares`` (trust-region reflective), started from the best point of
  a profile over the nonlinear parameter, for which the rest is linear.
* Covariance: (J^T W J)^-1 when the points carry uncertainties (they are taken as absolute,
  as in ``scipy.optimize.curve_fit(absolute_sigma=True)``), scaled by the reduced
  chi-square when they do not. The 95 % band of ln P is 1.96 sqrt(g^T Cov g) with g the
  gradient of ln P with respect to the coefficients (delta method).
* Robust option: a soft-L1 loss (``least_squares(loss='soft_l1', f_scale=1)``, in units of
  each point's sigma); points whose standardized residual then exceeds ``reject_at`` are
  listed as rejected and the final, ordinary fit leaves them out.
* Pair fit: solid and liquid curves fitted together under the equality constraint
  y_s(T_tp) = y_l(T_tp) (and optionally y(T_tp) = ln P_tp, and the slope difference
  R T_tp^2 (y_s' - y_l') = dH_fus, Hess's law at the triple point), solved exactly through
  the Karush-Kuhn-Tucker system of equality-constrained least squares; with no T_tp given,
  it is found by a bounded one-dimensional search of the constrained chi-square.

References
----------
.. [1] W. Wagner, Cryogenics 13 (1973) 470-482 (the Wagner form).
.. [2] J. Nocedal and S. J. Wright, Numerical Optimization, 2nd ed., Springer (2006),
   section 16.1 (equality-constrained quadratic programs, the KKT system).
"""

from .from_table import convert_or_refit, fit_table, fit_table_pair, provenance
from .pair import PairFitResult, fit_pair
from .points import FITTABLE, FitResult, fit_points

__all__ = [
    "FITTABLE",
    "FitResult",
    "PairFitResult",
    "convert_or_refit",
    "fit_pair",
    "fit_points",
    "fit_table",
    "fit_table_pair",
    "provenance",
]
