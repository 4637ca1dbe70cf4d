"""The Antoine family: y = A - B/(theta + C), theta in K, degC or degF.

Canonical parameters (base e, Pa, K): A, B, C in slots 0-2, with the temperature scale
folded in (T = s theta + o gives B' = s B and C' = s C - o).

References
----------
.. [1] C. Antoine, "Tensions des vapeurs; nouvelle relation entre les tensions et les
   temperatures", C. R. Acad. Sci. 107 (1888) 681-684.
"""

from __future__ import annotations

import numpy as np

from ._common import FormSpec, Written, shaped

NAME = "antoine"
CODE = 1
#: Coefficients a change of log base multiplies (C is a temperature).
LOG_SCALED = ("A", "B")
#: A pressure unit shifts the constant term.
UNIT_IN_A = True
#: May be written in degC or degF (an affine change of theta).
AFFINE_T = True
#: The forms of this family.
FORMS = (
    FormSpec(
        "antoine",
        NAME,
        ("A", "B", "C"),
        "y = A - B/(theta + C)",
        temperature_units=("K", "degC", "degF"),
    ),
)


def evaluate(p: np.ndarray, t: np.ndarray, order: int):
    """Return y = ln(P/Pa), y' and y'' (None when ``order`` is 0) of curves ``p`` at ``t`` [K]."""
    A, B, C = (shaped(p[:, i], t) for i in range(3))
    s = t + C
    y = A - B / s
    if order == 0:
        return y, None, None
    y1 = B / (s * s)
    y2 = -2.0 * y1 / s
    return y, y1, y2


def stationary(p: np.ndarray) -> np.ndarray:
    """Where the implied dCp = 2 R B T C/(T + C)^3 is stationary: T = C/2. [K]"""
    return p[:, 2] / 2.0


def model(form: str, p: np.ndarray, t: np.ndarray, fixed: dict):
    """Return y = ln(P/Pa) and its gradient in A, B, C, shape (m, 3)."""
    a, b, c = p
    s = t + c
    return a - b / s, np.column_stack([np.ones_like(t), -1.0 / s, b / (s * s)])


def linear(form: str) -> bool:
    """The Antoine C enters nonlinearly."""
    return False


def start(form: str, t: np.ndarray, y: np.ndarray, w: np.ndarray, wls) -> np.ndarray:
    """Starting point of the fit: the best of a profile over C, A and B solved by ``wls``
    (weighted least squares) at each.
    """
    best = (np.inf, None)
    lo = -0.95 * t.min()
    for c in np.linspace(lo, 0.5 * t.min(), 80):
        x = np.column_stack([np.ones_like(t), -1.0 / (t + c)])
        beta, _ = wls(x, y, w)
        chi = float(np.sum(w * (x @ beta - y) ** 2))
        if chi < best[0]:
            best = (chi, np.array([beta[0], beta[1], c]))
    return best[1]


def canonical(w: Written) -> dict[int, np.ndarray]:
    """The canonical parameters (slot -> values) of Antoine records as written: base 10
    multiplies A and B by ln 10, a pressure unit adds ln(factor) to A, and theta in degC or
    degF, T = s theta + o, gives B' = s B and C' = s C - o (degC: C' = C - 273.15).
    """
    return {
        0: w.log_factor * w.A + w.ln_unit,
        1: w.log_factor * w.scale * w.B,
        2: w.scale * w.C - w.offset,
    }
