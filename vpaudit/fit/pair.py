"""A solid and a liquid curve fitted together so that they meet at the triple point by
construction: equality-constrained least squares through the KKT system (see
:mod:`vpaudit.fit`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize_scalar

from ..constants import R
from ..equations.families import log_linear
from ..equations.forms import FORMS
from ..errors import FitError
from .points import _SINGULAR, FitResult, _columns, _wls


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
