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

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.optimize import least_squares, minimize_scalar

from .constants import R
from .equations.families import family_of, log_linear
from .equations.forms import FORMS, WAGNER
from .errors import EquationError, FitError

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


@dataclass
class PairFitResult:
    """A solid and a liquid curve fitted together to meet at the triple point.

    Attributes
    ----------
    solid, liquid : FitResult
        The constrained fits.
    triple_temperature : float
        The triple point imposed or found. [K]
    triple_pressure : float
        ln P of both curves there, as a pressure. [Pa]
    fusion_enthalpy : float
        R T_tp^2 (y_s' - y_l') at the triple point. [J/mol]
    chi2_free, chi2 : float
        Chi-square of the separate (free) fits and of the constrained fit: their
        difference is what the constraint costs.
    rms_free, rms : tuple of float
        RMS residuals (solid, liquid) of the free and constrained fits. [ln P]
    """

    solid: FitResult
    liquid: FitResult
    triple_temperature: float
    triple_pressure: float
    fusion_enthalpy: float
    chi2_free: float
    chi2: float
    rms_free: tuple[float, float]
    rms: tuple[float, float]


def _gradient_t(form: str, t: float) -> tuple[np.ndarray, np.ndarray]:
    """d/dT of the design row at t, and the row itself (log-linear forms)."""
    return log_linear.design_slope(form, t), _columns(form, np.array([t]), {})[0]


def _constrained(xs, ys, ws, xl, yl, wl, c, d):
    """Equality-constrained weighted least squares through the KKT system; returns the
    coefficients of both curves and their covariance (the top-left block of the inverse).
    """
    ks, kl = xs.shape[1], xl.shape[1]
    k = ks + kl
    x = np.zeros((xs.shape[0] + xl.shape[0], k))
    x[: xs.shape[0], :ks] = xs
    x[xs.shape[0] :, ks:] = xl
    y = np.concatenate([ys, yl])
    w = np.concatenate([ws, wl])
    scale = np.abs(x * np.sqrt(w)[:, None]).max(axis=0)
    scale[scale == 0] = 1.0
    xsc = x / scale
    csc = c / scale
    h = xsc.T @ (xsc * w[:, None])
    m = c.shape[0]
    kkt = np.zeros((k + m, k + m))
    kkt[:k, :k] = h
    kkt[:k, k:] = csc.T
    kkt[k:, :k] = csc
    rhs = np.concatenate([xsc.T @ (w * y), d])
    try:
        inv = np.linalg.inv(kkt)
    except np.linalg.LinAlgError:
        raise FitError(_SINGULAR) from None
    sol = inv @ rhs
    beta = sol[:k] / scale
    cov = inv[:k, :k] / np.outer(scale, scale)
    return beta[:ks], beta[ks:], cov, float(np.sum(w * (x @ beta - y) ** 2))


def fit_pair(
    solid: tuple,
    liquid: tuple,
    form: str = "three-term",
    *,
    triple_temperature: float | None = None,
    triple_pressure: float | None = None,
    fusion_enthalpy: float | None = None,
    bounds: tuple[float, float] | None = None,
) -> PairFitResult:
    """Fit a solid and a liquid curve that meet at the triple point by construction.

    Parameters
    ----------
    solid, liquid : tuple
        ``(temperature [K], pressure [Pa], uncertainty or None)`` of each phase's points.
    form : str
        A log-linear form (two-term, three-term, four-term-t, four-term-cube) for both.
    triple_temperature : float, optional
        Impose the triple point here [K]; by default it is fitted.
    triple_pressure : float, optional
        Also impose the pressure there. [Pa]
    fusion_enthalpy : float, optional
        Also impose Hess's law there: R T^2 (y_s' - y_l') = dH_fus. [J/mol]
    bounds : (float, float), optional
        Search window of a fitted triple point [K]; by default from the highest solid
        point to the lowest liquid point, widened by 10 %.

    Returns
    -------
    PairFitResult
    """
    if form not in ("two-term", "three-term", "four-term-t", "four-term-cube"):
        raise FitError(
            f"a pair fit needs a log-linear form (two-term, three-term, four-term-t, "
            f"four-term-cube), not {form!r}"
        )

    def prep(pts):
        t, p, u = pts
        t = np.asarray(t, float)
        y = np.log(np.asarray(p, float))
        w = 1.0 / np.broadcast_to(np.asarray(u if u is not None else 1.0, float), t.shape) ** 2
        return t, y, w, u is not None

    ts, ys, ws, abs_s = prep(solid)
    tl, yl, wl, abs_l = prep(liquid)
    xs, xl = _columns(form, ts, {}), _columns(form, tl, {})
    ks = xs.shape[1]

    def solve(ttp):
        ds, rs = _gradient_t(form, ttp)
        rows = [np.concatenate([rs, -rs])]
        rhs = [0.0]
        if triple_pressure is not None:
            rows.append(np.concatenate([rs, np.zeros(ks)]))
            rhs.append(math.log(triple_pressure))
        if fusion_enthalpy is not None:
            rows.append(np.concatenate([ds, -ds]) * R * ttp * ttp)
            rhs.append(fusion_enthalpy)
        b_s, b_l, cov, chi2 = _constrained(xs, ys, ws, xl, yl, wl, np.array(rows), np.array(rhs))
        # The KKT solve meets the value constraints to ~1e-10 in ln P; the constant A (the
        # first coefficient, 1 at every T) absorbs the rounding exactly, slopes unchanged.
        if triple_pressure is not None:
            b_s[0] += math.log(triple_pressure) - rs @ b_s
        b_l[0] += rs @ b_s - rs @ b_l
        return b_s, b_l, cov, chi2

    bs, covs = _wls(xs, ys, ws)
    bl, covl = _wls(xl, yl, wl)
    chi2_free = float(np.sum(ws * (xs @ bs - ys) ** 2) + np.sum(wl * (xl @ bl - yl) ** 2))
    if triple_temperature is None:
        lo, hi = bounds or (min(ts.max(), tl.min()) / 1.1, max(ts.max(), tl.min()) * 1.1)
        opt = minimize_scalar(
            lambda tt: solve(tt)[3], bounds=(lo, hi), method="bounded", options={"xatol": 1e-10}
        )
        ttp = float(opt.x)
    else:
        ttp = float(triple_temperature)
    b_s, b_l, cov, chi2 = solve(ttp)
    n = ts.size + tl.size
    ncon = 1 + (triple_pressure is not None) + (fusion_enthalpy is not None)
    absolute = abs_s and abs_l
    if not absolute:
        dof = n - 2 * ks + ncon
        cov = cov * (chi2 / dof if dof > 0 else np.nan)

    def result(beta, c, t, y, w):
        r = y - _columns(form, t, {}) @ beta
        return FitResult(
            form,
            list(FORMS[form].coefficients),
            beta,
            c,
            r,
            t,
            np.empty(0, dtype=np.int64),
            float(np.sum(w * r * r)),
            int(t.size - ks),
            absolute,
        )

    fs = result(b_s, cov[:ks, :ks], ts, ys, ws)
    fl = result(b_l, cov[ks:, ks:], tl, yl, wl)
    ds, rs = _gradient_t(form, ttp)
    y_tp = float(rs @ b_s)
    if not abs(y_tp) <= 700.0:  # exp() leaves a float's range near 709
        raise FitError(
            f"the fitted curves meet at the triple point {ttp:.6g} K at ln(P/Pa) = {y_tp:.4g}, "
            "a pressure no number can hold: these points do not determine a pair there"
        )
    return PairFitResult(
        fs,
        fl,
        ttp,
        math.exp(y_tp),
        float(R * ttp * ttp * (ds @ b_s - ds @ b_l)),
        chi2_free,
        chi2,
        (
            float(np.sqrt(np.mean((xs @ bs - ys) ** 2))),
            float(np.sqrt(np.mean((xl @ bl - yl) ** 2))),
        ),
        (fs.rms, fl.rms),
    )


# --- from tables: points in, records out -------------------------------------------------------


def _points(table, substance: str, phase: str | None):
    from ._columns import eq

    pts = table.points
    if not len(pts):
        raise FitError("the table has no measured points to fit")
    m = eq(pts["substance"], substance)
    if phase:
        m = m & eq(pts["phase"], phase)  # eq may hand back a read-only view
    if not m.any():
        own = eq(pts["substance"], substance)
        if phase and own.any():
            phases = " and ".join(sorted(set(pts.loc[own, "phase"].astype(object).dropna())))
            raise FitError(
                f"{substance!r} has measured points of the {phases} only, none of the {phase}"
            )
        from .substance import near_names

        have = sorted(set(pts["substance"].astype(object).dropna()))
        raise FitError(
            f"no points of {substance!r}{near_names(substance, have, 'substance(s) with points')}"
        )
    sel = pts.loc[m]
    t = sel["T_K"].to_numpy(dtype=float)
    p = sel["P_Pa"].to_numpy(dtype=float)
    u = sel["uncertainty"].to_numpy(dtype=float, na_value=np.nan)
    unc = None if np.isnan(u).all() else np.where(np.isnan(u), np.nanmax(u), u)
    sources = sorted(set(sel["source"].astype(object).dropna()))
    return t, p, unc, sources, sel


def _reference(table, substance: str, quantity: str) -> float | None:
    from ._columns import eq

    refs = table.references
    if not len(refs):
        return None
    m = eq(refs["substance"], substance) & eq(refs["quantity"], quantity)
    return float(refs.loc[m, "value_si"].iloc[0]) if m.any() else None


def provenance(sources: list[str], n: int, what: str, extra: str = "") -> dict[str, str]:
    """The source, note, entered_by and entered_on of a fitted record."""
    import datetime as _dt

    from .revisions import _who

    return {
        "source": f"{what} to {n} measured points: " + "; ".join(sources),
        "note": f"fitted by vpaudit on {_dt.date.today().isoformat()}{extra}",
        "entered_by": _who(None),
        "entered_on": _dt.date.today().isoformat(),
    }


def fit_table(
    table,
    substance: str,
    form: str,
    phase: str | None = None,
    *,
    robust: bool = False,
    t_crit: float | None = None,
    p_crit: float | None = None,
    record_id: str | None = None,
) -> tuple[FitResult, dict]:
    """Fit ``form`` to the measured points of ``substance`` (one phase) in ``table``.

    Wagner forms take the critical point from ``t_crit``/``p_crit`` or the table's
    ``critical_temperature``/``critical_pressure`` references. Returns the fit and the new
    record (base e, Pa, K) with the points' sources as provenance.
    """
    t, p, unc, sources, sel = _points(table, substance, phase)
    phases = sorted(set(sel["phase"].astype(object)))
    if len(phases) > 1:
        raise FitError(
            f"{substance!r} has points of both phases; choose one with --phase, or fit both "
            "together with --pair"
        )
    if form in WAGNER:
        t_crit = t_crit or _reference(table, substance, "critical_temperature")
        p_crit = p_crit or _reference(table, substance, "critical_pressure")
    res = fit_points(t, p, form, unc, robust=robust, t_crit=t_crit, p_crit=p_crit)
    extra = f"; RMS {res.rms:.3g} in ln P"
    if len(res.rejected):
        extra += f"; {len(res.rejected)} point(s) rejected as outliers"
    rec = res.record(
        id=record_id or f"{substance}-{phases[0][0]}-fit",
        substance=substance,
        phase=phases[0],
        uncertainty=float(f"{max(res.rms, 1e-6):.3g}"),
        **provenance(sources, t.size - len(res.rejected), f"{form} fit", extra),
    )
    return res, rec


def fit_table_pair(
    table,
    substance: str,
    form: str = "three-term",
    *,
    triple_temperature: float | None = None,
    triple_pressure: float | None = None,
    fusion_enthalpy: float | None = None,
    use_references: bool = True,
) -> tuple[PairFitResult, list[dict]]:
    """Fit the solid and liquid points of ``substance`` together, meeting at the triple
    point (given, else the table's ``triple_point_temperature`` reference, else fitted).
    With ``use_references`` the reference enthalpy of fusion is imposed too.
    """
    ts, ps, us, src_s, _ = _points(table, substance, "solid")
    tl, pl, ul, src_l, _ = _points(table, substance, "liquid")
    if use_references:
        triple_temperature = triple_temperature or _reference(
            table, substance, "triple_point_temperature"
        )
        triple_pressure = triple_pressure or _reference(table, substance, "triple_point_pressure")
        fusion_enthalpy = fusion_enthalpy or _reference(table, substance, "enthalpy_of_fusion")
    res = fit_pair(
        (ts, ps, us),
        (tl, pl, ul),
        form,
        triple_temperature=triple_temperature,
        triple_pressure=triple_pressure,
        fusion_enthalpy=fusion_enthalpy,
    )
    extra = (
        f"; fitted as a pair meeting at {res.triple_temperature:.6g} K "
        f"(constraint cost: chi-square {res.chi2_free:.4g} -> {res.chi2:.4g})"
    )
    recs = []
    for fit, phase, src, n in (
        (res.solid, "solid", src_s, ts.size),
        (res.liquid, "liquid", src_l, tl.size),
    ):
        rec = fit.record(
            id=f"{substance}-{phase[0]}-pairfit",
            substance=substance,
            phase=phase,
            uncertainty=float(f"{max(fit.rms, 1e-6):.3g}"),
            **provenance(src, n, f"{form} pair fit", extra),
        )
        # the solid ends and the liquid starts at the triple point
        if phase == "solid":
            rec["t_max"] = max(rec["t_max"], res.triple_temperature)
        else:
            rec["t_min"] = min(rec["t_min"], res.triple_temperature)
        recs.append(rec)
    return res, recs


def convert_or_refit(
    record: dict,
    *,
    form: str | None = None,
    log_base: str | None = None,
    pressure_unit: str | None = None,
    temperature_unit: str | None = None,
    max_deviation: float = 1e-3,
    t_crit: float | None = None,
    p_crit: float | None = None,
) -> tuple[dict, float, bool]:
    """Write ``record`` in another form, base or units: exactly where the algebra allows
    (:func:`vpaudit.equations.convert.convert_record`), otherwise by a refit over its range.

    Returns
    -------
    record : dict
        The converted record.
    deviation : float
        The largest |ln P| difference from the original over the range (0 when exact).
    exact : bool

    Raises
    ------
    EquationError
        When a refit deviates by more than ``max_deviation`` in ln P.
    """
    from .equations.convert import convert_record
    from .equations.engine import curves_from_frame, evaluate

    src_form = str(record["form"])
    target_form = form or src_form
    spec = FORMS[target_form]
    if target_form == src_form and (
        temperature_unit is None or temperature_unit in spec.temperature_units
    ):
        out = convert_record(
            record,
            log_base=log_base,
            pressure_unit=pressure_unit,
            temperature_unit=temperature_unit,
        )
        return out, 0.0, True
    from .readers.table import RECORD_COLUMNS, records_table

    names = {c.name for c in RECORD_COLUMNS}
    fields = {k: v for k, v in record.items() if k in names or k[:-5] in names}
    # the curve needs only the equation's fields; the reader also asks for these
    fields = {"id": "x", "substance": "x", "phase": "liquid", "source": "x", **fields}
    curve = curves_from_frame(records_table([fields]).records)  # the reader's own path
    lo, hi = float(curve.t_min[0]), float(curve.t_max[0])
    if not (0.0 < lo <= hi < math.inf):  # NaN fails too
        raise EquationError(
            f"record {record.get('id', '?')!r} has no range a refit could sample "
            f"({record.get('t_min')}..{record.get('t_max')} K, in K: {lo:g}..{hi:g}): "
            "give it a range of positive temperatures (the audit's range-invalid says why)"
        )
    t = 1.0 / np.linspace(1.0 / hi, 1.0 / lo, 200)
    y = evaluate(curve, t, 0)[0].reshape(-1)
    if target_form in WAGNER:
        t_crit = t_crit or record.get("t_crit")
        p_crit = p_crit or record.get("p_crit")
        if not (t_crit and p_crit):
            raise EquationError(f"form {target_form!r} needs --t-crit and --p-crit")
        t_crit, p_crit = float(t_crit), float(p_crit)
    with np.errstate(over="ignore", under="ignore", invalid="ignore"):
        p = np.exp(y)
    if not np.all(np.isfinite(p) & (p > 0)):
        finite = y[np.isfinite(y)]
        span = (
            f"ln(P/Pa) from {finite.min():.4g} to {finite.max():.4g}"
            if finite.size
            else "ln(P/Pa) is nowhere a finite number"
        )
        raise EquationError(
            f"record {record.get('id')!r} cannot be refitted: its pressure is not a finite, "
            f"representable number everywhere over {lo:g}..{hi:g} K ({span}); check its "
            "coefficients first (vpaudit audit)"
        )
    fit = fit_points(t, p, target_form, t_crit=t_crit, p_crit=p_crit)
    dev = float(np.max(np.abs(fit.ln_pressure(t) - y)))
    if not dev <= max_deviation:
        raise EquationError(
            f"form {target_form!r} cannot represent record {record.get('id')!r} over "
            f"{lo:g}..{hi:g} K: a refit deviates by up to {dev:.3g} in ln P, above the "
            f"allowed {max_deviation:g} (raise --max-deviation to accept it)"
        )
    keep = {
        k: v
        for k, v in record.items()
        if k in ("id", "substance", "phase", "modification", "source", "source_locator")
    }
    out = fit.record(**keep)
    out["t_min"], out["t_max"] = lo, hi
    note = f"refitted from form {src_form} over {lo:g}..{hi:g} K; max deviation {dev:.3g} in ln P"
    out["note"] = f"{record['note']}; {note}" if record.get("note") else note
    out["uncertainty"] = record.get("uncertainty")
    for key in ("entered_by", "entered_on"):  # a conversion of the record, not a new entry
        out[key] = record.get(key)
    if log_base or pressure_unit or temperature_unit:
        out = convert_record(
            out, log_base=log_base, pressure_unit=pressure_unit, temperature_unit=temperature_unit
        )
    return out, dev, False
