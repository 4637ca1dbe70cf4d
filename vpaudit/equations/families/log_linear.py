"""The log-linear family: y = A + B/T + C ln T + D T^E (two-term, three-term, four-term-t,
four-term-cube, power-term).

Canonical parameters (base e, Pa, K): A, B, C, D, E in slots 0-4; E is fixed at 1
(four-term-t) or -3 (four-term-cube), and D = 0 where the form has no D term. All forms but
power-term are linear in their coefficients.
"""

from __future__ import annotations

import numpy as np

from ._common import FormSpec, Written, shaped

NAME = "log-linear"
CODE = 0
#: Coefficients a change of log base multiplies (C multiplies log T, which changes too).
LOG_SCALED = ("A", "B", "D")
#: A pressure unit shifts the constant term.
UNIT_IN_A = True
#: Written in kelvin only (ln T needs an absolute temperature).
AFFINE_T = False
#: The forms of this family.
FORMS = (
    FormSpec("two-term", NAME, ("A", "B"), "y = A + B/T"),
    FormSpec("three-term", NAME, ("A", "B", "C"), "y = A + B/T + C log T"),
    FormSpec(
        "four-term-t",
        NAME,
        ("A", "B", "C", "D"),
        "y = A + B/T + C log T + D T",
        exponent=1.0,
    ),
    FormSpec(
        "four-term-cube",
        NAME,
        ("A", "B", "C", "D"),
        "y = A + B/T + C log T + D/T^3",
        exponent=-3.0,
    ),
    FormSpec(
        "power-term",
        NAME,
        ("A", "B", "C", "D", "E"),
        "y = A + B/T + C log T + D T^E",
    ),
)


def evaluate(p: np.ndarray, t: np.ndarray, order: int):
    """Return y = ln(P/Pa), y' and y'' (None when ``order`` is 0) of curves ``p`` at ``t`` [K]."""
    A, B, C = (shaped(p[:, i], t) for i in range(3))
    inv = 1.0 / t
    y = A + B * inv + C * np.log(t)
    if order:
        y1 = (C - B * inv) * inv
        y2 = (2.0 * B * inv - C) * inv * inv
    else:
        y1 = y2 = None
    rows = np.flatnonzero(p[:, 3] != 0.0)
    if rows.size:  # the D T^E term, only where a record has one
        D, E = (shaped(p[rows, i], t) for i in (3, 4))
        tr = t[rows] if t.shape[0] == p.shape[0] else np.broadcast_to(t, y.shape)[rows]
        te = tr**E
        y[rows] += D * te
        if order:
            y1[rows] += D * E * te / tr
            y2[rows] += D * E * (E - 1.0) * te / (tr * tr)
    return y, y1, y2


def stationary(p: np.ndarray) -> np.ndarray:
    """Where dH = R (C T - B + D E T^(E+1)) is stationary: C + D E (E+1) T^E = 0. [K]

    NaN for curves without a D term (dH is then linear in T).
    """
    dee = p[:, 3] * p[:, 4] * (p[:, 4] + 1.0)
    return np.where(dee != 0, (-p[:, 2] / dee) ** (1.0 / p[:, 4]), np.nan)


def design(form: str, t: np.ndarray, fixed: dict) -> np.ndarray:
    """Design matrix of a linear log-linear form: y = X @ coefficients."""
    cols = [np.ones_like(t), 1.0 / t, np.log(t)]
    if form == "two-term":
        cols = cols[:2]
    elif form == "four-term-t":
        cols.append(t)
    elif form == "four-term-cube":
        cols.append(t**-3.0)
    return np.column_stack(cols)


def design_slope(form: str, t: float) -> np.ndarray:
    """d/dT of the design row of a linear log-linear form at ``t`` [K] (pair fits impose a
    slope difference at the triple point).
    """
    return np.asarray(
        {
            "two-term": [0.0, -1.0 / t**2],
            "three-term": [0.0, -1.0 / t**2, 1.0 / t],
            "four-term-t": [0.0, -1.0 / t**2, 1.0 / t, 1.0],
            "four-term-cube": [0.0, -1.0 / t**2, 1.0 / t, -3.0 / t**4],
        }[form]
    )


def model(form: str, p: np.ndarray, t: np.ndarray, fixed: dict):
    """Return y = ln(P/Pa) and its gradient in the coefficients, shape (m, k)."""
    if form == "power-term":
        a, b, c, d, e = p
        te = t**e
        y = a + b / t + c * np.log(t) + d * te
        g = np.column_stack([np.ones_like(t), 1.0 / t, np.log(t), te, d * te * np.log(t)])
        return y, g
    x = design(form, t, fixed)
    return x @ p + 0.0, x  # + 0.0: a -0.0 prints as 0.0, as the fit always printed it


def linear(form: str) -> bool:
    """Whether ``form`` is linear in its coefficients (power-term's exponent is not)."""
    return form != "power-term"


def start(form: str, t: np.ndarray, y: np.ndarray, w: np.ndarray, wls) -> np.ndarray:
    """Starting point of the power-term fit: the best of a profile over the exponent E, the
    linear coefficients solved by ``wls`` (weighted least squares) at each.
    """
    best = (np.inf, None)
    for e in (-3.0, -2.0, -1.5, -0.5, 0.5, 1.0, 1.5, 2.0, 3.0, 4.0, 6.0):
        x = np.column_stack([np.ones_like(t), 1.0 / t, np.log(t), t**e])
        beta, _ = wls(x, y, w)
        chi = float(np.sum(w * (x @ beta - y) ** 2))
        if chi < best[0]:
            best = (chi, np.array([*beta, e]))
    return best[1]


def canonical(w: Written) -> dict[int, np.ndarray]:
    """The canonical parameters (slot -> values) of log-linear records as written: base 10
    becomes base e by multiplying A, B and D by ln 10 while C (of log T) stays, since
    ln 10 C log10 T = C ln T; a pressure unit adds ln(factor) to A. The D and E slots are
    written only when some record has a D term (their pages stay untouched otherwise).
    """
    out = {0: w.log_factor * w.A + w.ln_unit, 1: w.log_factor * w.B, 2: w.C}
    if w.has_d.any():
        out[3] = np.where(w.has_d, w.log_factor * w.D, 0.0)
        out[4] = np.where(w.has_d, np.where(np.isnan(w.exponent), w.E, w.exponent), 0.0)
    return out
