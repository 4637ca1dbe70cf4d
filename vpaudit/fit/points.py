"""Fitting one equation to measured points: linear and nonlinear least squares, the
covariance and the 95 % band of ln P (see :mod:`vpaudit.fit` for the method).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from ..equations.families import family_of
from ..equations.forms import FORMS, WAGNER
from ..errors import FitError

#: Forms :func:`fit_points` can fit.
FITTABLE = tuple(FORMS)
_Z95 = 1.959963984540054  # two-sided 95 % quantile of the standard normal


@dataclass
class FitResult:
    """One fitted curve.

    Attributes
    ----------
    form : str
    names : list of str
        Coefficient names, in the order of ``values`` and of the covariance.
    values : ndarray
        Coefficients in canonical units (base e, Pa, K). [-, K, -, ...]
    covariance : ndarray
        Their covariance.
    standard_errors : ndarray
    residuals : ndarray
        ln P(point) - ln P(fit) of every point used. [-]
    temperatures : ndarray
        Temperatures of the points used. [K]
    rejected : ndarray of int
        Indices (into the input) of points left out as outliers.
    chi2 : float
        Sum of squared standardized residuals.
    dof : int
        Points used minus coefficients.
    absolute_sigma : bool
        Whether the covariance uses the stated uncertainties as they are.
    t_crit, p_crit : float or None
        Wagner forms: the fixed critical point. [K, Pa]
    """

    form: str
    names: list[str]
    values: np.ndarray
    covariance: np.ndarray
    residuals: np.ndarray
    temperatures: np.ndarray
    rejected: np.ndarray
    chi2: float
    dof: int
    absolute_sigma: bool
    t_crit: float | None = None
    p_crit: float | None = None
    extra: dict[str, Any] = field(default_factory=dict)

    @property
    def standard_errors(self) -> np.ndarray:
        """Standard errors of the coefficients."""
        return np.sqrt(np.diag(self.covariance))

    @property
    def rms(self) -> float:
        """RMS residual in ln P."""
        return float(np.sqrt(np.mean(self.residuals**2)))

    @property
    def worst(self) -> tuple[float, float]:
        """(temperature [K], residual in ln P) of the worst point."""
        k = int(np.argmax(np.abs(self.residuals)))
        return float(self.temperatures[k]), float(self.residuals[k])

    @property
    def t_min(self) -> float:
        """Lowest temperature of the points used. [K]"""
        return float(self.temperatures.min())

    @property
    def t_max(self) -> float:
        """Highest temperature of the points used. [K]"""
        return float(self.temperatures.max())

    def ln_pressure(self, temperature) -> np.ndarray:
        """ln(P/Pa) of the fitted curve. [-]"""
        return _model(self.form, self.values, np.asarray(temperature, float), self._fixed)[0]

    @property
    def _fixed(self) -> dict:
        return {"t_crit": self.t_crit, "p_crit": self.p_crit}

    def band(self, temperature) -> np.ndarray:
        """Half-width of the 95 % confidence band of ln P at ``temperature`` [K]."""
        t = np.asarray(temperature, float)
        g = _model(self.form, self.values, t, self._fixed)[1]
        var = np.einsum("ij,jk,ik->i", g, self.covariance, g)
        return _Z95 * np.sqrt(np.maximum(var, 0.0))

    def record(self, **fields: Any) -> dict[str, Any]:
        """The fit as a table record (base e, Pa, K); ``fields`` add id, substance, source..."""
        rec: dict[str, Any] = {
            "form": self.form,
            "log_base": "e",
            "pressure_unit": "Pa",
            "temperature_unit": "K",
            "t_min": self.t_min,
            "t_max": self.t_max,
        }
        for n, v in zip(self.names, self.values, strict=True):
            rec[n] = float(v)
        if self.form in WAGNER:
            rec["t_crit"], rec["p_crit"] = self.t_crit, self.p_crit
        rec.update(fields)
        return rec


# --- models: y and dy/dcoefficients, each family's own (vpaudit.equations.families) ---------


def _columns(form: str, t: np.ndarray, fixed: dict) -> np.ndarray:
    """Design matrix of a linear form: y = X @ coefficients (Wagner: y - ln Pc)."""
    return family_of(form).design(form, t, fixed)


def _model(form: str, p: np.ndarray, t: np.ndarray, fixed: dict):
    """Y = ln(P/Pa) and its gradient with respect to the coefficients, shape (m, k)."""
    return family_of(form).model(form, p, t, fixed)


# --- linear algebra ----------------------------------------------------------------------------

_SINGULAR = (
    "the fit cannot determine the coefficients: its equations are singular for these "
    "points or this range"
)


def _wls(x: np.ndarray, y: np.ndarray, w: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Weighted least squares (w = 1/sigma^2): coefficients and (X^T W X)^-1, from a QR of
    the column-scaled, row-weighted design matrix.
    """
    sw = np.sqrt(w)
    xw = x * sw[:, None]
    scale = np.abs(xw).max(axis=0)
    scale[scale == 0] = 1.0
    if not (np.isfinite(xw).all() and np.isfinite(y).all()):
        raise FitError(_SINGULAR + " (a term overflows at these temperatures)")
    try:
        q, r = np.linalg.qr(xw / scale)
        beta = np.linalg.solve(r, q.T @ (y * sw)) / scale
        rinv = np.linalg.inv(r)
    except np.linalg.LinAlgError:
        raise FitError(_SINGULAR) from None
    cov = (rinv @ rinv.T) / np.outer(scale, scale)
    return beta, cov


def _nonlinear(form, t, y, sigma, p0, loss="linear"):
    def fun(p):
        return (_model(form, p, t, {})[0] - y) / sigma

    def jac(p):
        return _model(form, p, t, {})[1] / sigma[:, None]

    res = least_squares(fun, p0, jac=jac, method="trf", loss=loss, f_scale=1.0, x_scale="jac")
    return res.x


def _start(form: str, t: np.ndarray, y: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Starting point of a nonlinear fit (the family's profile over its nonlinear
    parameter, the linear coefficients solved at each).
    """
    return family_of(form).start(form, t, y, w, _wls)


def fit_points(
    temperature,
    pressure,
    form: str = "three-term",
    uncertainty=None,
    *,
    robust: bool = False,
    reject_at: float = 3.0,
    t_crit: float | None = None,
    p_crit: float | None = None,
) -> FitResult:
    """Fit one equation form to measured (T, P) points.

    Parameters
    ----------
    temperature : array_like
        Temperatures of the points. [K]
    pressure : array_like
        Vapour pressures. [Pa]
    form : str
        An equation form of :data:`vpaudit.equations.forms.FORMS`.
    uncertainty : array_like, optional
        Relative standard uncertainty of each P (= sigma of ln P); without it every point
        weighs the same and the covariance is scaled by the reduced chi-square. [-]
    robust : bool
        Down-weight outliers with a soft-L1 loss and leave out points beyond ``reject_at``.
    reject_at : float
        Standardized residual beyond which a point is rejected (robust fits). [-]
    t_crit, p_crit : float, optional
        The fixed critical point of the Wagner forms. [K, Pa]

    Returns
    -------
    FitResult

    Raises
    ------
    FitError
        Unknown form, too few points, or a Wagner form without a critical point (an
        :class:`~vpaudit.errors.EquationError`).
    """
    if form not in FORMS:
        raise FitError(f"unknown equation form {form!r}; valid forms: {', '.join(FORMS)}")
    t = np.asarray(temperature, dtype=float)
    p = np.asarray(pressure, dtype=float)
    if t.shape != p.shape or t.ndim != 1:
        raise FitError("temperature and pressure must be 1-D arrays of equal length")
    if not (np.all(t > 0) and np.all(p > 0) and np.all(np.isfinite(t + p))):
        raise FitError("every point needs a positive, finite T and P")
    names = list(FORMS[form].coefficients)
    if t.size <= len(names):
        raise FitError(
            f"form {form!r} has {len(names)} coefficients: it needs more than {len(names)} "
            f"points, got {t.size}"
        )
    fixed = {"t_crit": t_crit, "p_crit": p_crit}
    if form in WAGNER:
        if not (t_crit and p_crit):
            raise FitError(f"form {form!r} needs the critical point (t_crit, p_crit)")
        if np.any(t >= t_crit):
            raise FitError(f"form {form!r}: every point must lie below t_crit {t_crit:g} K")
    absolute = uncertainty is not None
    sigma = (
        np.broadcast_to(np.asarray(uncertainty, dtype=float), t.shape).copy()
        if absolute
        else np.ones_like(t)
    )
    if np.any(~(sigma > 0)):
        raise FitError("uncertainties must be positive")
    y = np.log(p)
    keep = np.ones(t.size, dtype=bool)
    linear = family_of(form).linear(form)

    def solve(mask, loss="linear"):
        tm, ym, sm = t[mask], y[mask], sigma[mask]
        w = 1.0 / sm**2
        if linear and loss == "linear":
            x = _columns(form, tm, fixed)
            off = math.log(p_crit) if form in WAGNER else 0.0
            return _wls(x, ym - off, w)[0]
        if linear:
            x = _columns(form, tm, fixed)
            off = math.log(p_crit) if form in WAGNER else 0.0
            p0 = _wls(x, ym - off, w)[0]

            def fun(b):
                return (x @ b + off - ym) / sm

            return least_squares(fun, p0, loss=loss, f_scale=1.0, x_scale="jac").x
        p0 = _start(form, tm, ym, w)
        return _nonlinear(form, tm, ym, sm, p0, loss)

    # the optimizer's trial steps may overflow (a free exponent, points no form fits):
    # they are steps, not results, and the result is checked below
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        if robust:
            beta = solve(keep, "soft_l1")
            z = (y - _model(form, beta, t, fixed)[0]) / sigma
            if not absolute:  # no stated uncertainty: standardize by a robust scale (MAD)
                z = z / max(1.4826 * np.median(np.abs(z)), 1e-300)
            keep = np.abs(z) <= reject_at
            if keep.sum() <= len(names):
                raise FitError("the robust fit rejected too many points to fit the form")
        beta = solve(keep)
        yk, g = _model(form, beta, t[keep], fixed)
        w = 1.0 / sigma[keep] ** 2
        resid = y[keep] - yk
        chi2 = float(np.sum(w * resid**2))
        dof = int(keep.sum() - len(names))
        jw = g * np.sqrt(w)[:, None]
        scale = np.abs(jw).max(axis=0)
        scale[scale == 0] = 1.0
        cov = np.linalg.pinv((jw / scale).T @ (jw / scale)) / np.outer(scale, scale)
    if not np.all(np.isfinite(beta)):
        raise FitError(_SINGULAR + " (no finite coefficients fit these points)")
    if not absolute:
        cov = cov * (chi2 / dof if dof > 0 else np.nan)
    return FitResult(
        form,
        names,
        np.asarray(beta, float),
        cov,
        resid,
        t[keep],
        np.flatnonzero(~keep),
        chi2,
        dof,
        absolute,
        t_crit if form in WAGNER else None,
        p_crit if form in WAGNER else None,
    )


# --- solid/liquid pairs -------------------------------------------------------------------------
