"""The Wagner family: ln(P/Pc) = (Tc/T)(A tau + B tau^1.5 + C tau^e3 + D tau^e4),
tau = 1 - T/Tc, with (e3, e4) = (3, 6) or (2.5, 5).

Canonical parameters (base e, Pa, K): a, b, c, d, e3, e4, Tc, ln Pc in slots 0-7.

References
----------
.. [1] W. Wagner, "New vapour pressure measurements for argon and nitrogen and a new method
   for establishing rational vapour pressure equations", Cryogenics 13 (1973) 470-482.
"""

from __future__ import annotations

import math

import numpy as np

from ._common import FormSpec, Written, shaped

NAME = "wagner"
CODE = 2
#: Coefficients a change of log base multiplies (all four: log_b(P/Pc) is the left side).
LOG_SCALED = ("A", "B", "C", "D")
#: A pressure unit converts the critical pressure, not a coefficient.
UNIT_IN_A = False
#: Written in kelvin only.
AFFINE_T = False
#: The last two exponents (e3, e4) of each form.
EXPONENTS = {"wagner-3-6": (3.0, 6.0), "wagner-2.5-5": (2.5, 5.0)}
#: The forms of this family.
FORMS = (
    FormSpec(
        "wagner-3-6",
        NAME,
        ("A", "B", "C", "D"),
        "ln(P/Pc) = (Tc/T)(A tau + B tau^1.5 + C tau^3 + D tau^6), tau = 1 - T/Tc",
        needs_critical=True,
    ),
    FormSpec(
        "wagner-2.5-5",
        NAME,
        ("A", "B", "C", "D"),
        "ln(P/Pc) = (Tc/T)(A tau + B tau^1.5 + C tau^2.5 + D tau^5), tau = 1 - T/Tc",
        needs_critical=True,
    ),
)


def evaluate(p: np.ndarray, t: np.ndarray, order: int):
    """Return y = ln(P/Pa), y' and y'' (None when ``order`` is 0) of curves ``p`` at ``t`` [K]."""
    a, b, c, d, e3, e4, tc, lnpc = (shaped(p[:, i], t) for i in range(8))
    with np.errstate(invalid="ignore", divide="ignore"):
        tau = 1.0 - t / tc
        # A range stated as Tmin..Tc puts a grid point at Tc itself, or a rounding above it:
        # that is tau = 0, not a temperature beyond the equation.
        tau = np.where((tau < 0.0) & (tau > -1e-9), 0.0, tau)
        sq = np.sqrt(tau)
        S = a * tau + b * tau * sq + c * tau**e3 + d * tau**e4
        y = lnpc + tc / t * S
        if order == 0:
            return y, None, None
        # Derivatives of S with respect to tau (powers written so that tau = 0 gives their
        # limits, never 0/0: S1 -> a), then the chain rule with dtau/dT = -1/Tc. At Tc the
        # slope stays finite, y' -> -a/Tc, while S2 and the implied dCp diverge like
        # tau^-0.5 through the b term: Wagner (1973), eq. 5, differentiated.
        S1 = a + 1.5 * b * sq + c * e3 * tau ** (e3 - 1.0) + d * e4 * tau ** (e4 - 1.0)
        S2 = (
            0.75 * b / sq
            + c * e3 * (e3 - 1.0) * tau ** (e3 - 2.0)
            + d * e4 * (e4 - 1.0) * tau ** (e4 - 2.0)
        )
        y1 = -tc / t**2 * S - S1 / t
        y2 = 2.0 * tc * S / t**3 + 2.0 * S1 / t**2 + S2 / (t * tc)
    return y, y1, y2


def stationary(p: np.ndarray) -> None:
    """No closed form: the extrema of a Wagner curve are searched on a grid."""
    return None


def design(form: str, t: np.ndarray, fixed: dict) -> np.ndarray:
    """Design matrix: y - ln Pc = X @ (A, B, C, D), with Tc from ``fixed["t_crit"]``."""
    tc = fixed["t_crit"]
    e3, e4 = EXPONENTS[form]
    tau = 1.0 - t / tc
    f = tc / t
    return np.column_stack([f * tau, f * tau**1.5, f * tau**e3, f * tau**e4])


def model(form: str, p: np.ndarray, t: np.ndarray, fixed: dict):
    """Return y = ln(P/Pa) and its gradient in A, B, C, D, shape (m, 4)."""
    x = design(form, t, fixed)
    return x @ p + math.log(fixed["p_crit"]), x


def linear(form: str) -> bool:
    """Linear in A, B, C, D once Tc and Pc are fixed."""
    return True


def canonical(w: Written) -> dict[int, np.ndarray]:
    """The canonical parameters (slot -> values) of Wagner records as written: base 10
    multiplies all four coefficients by ln 10 (log10(P/Pc) is the left side), a pressure
    unit converts the critical pressure, and the form fixes the last two exponents.
    """
    e3, e4 = (np.array([EXPONENTS.get(f, (0.0, 0.0))[i] for f in w.forms])[w.form] for i in (0, 1))
    return {
        0: w.log_factor * w.A,
        1: w.log_factor * w.B,
        2: w.log_factor * w.C,
        3: w.log_factor * w.D,
        4: e3,
        5: e4,
        6: w.t_crit,
        7: np.log(w.p_crit) + w.ln_unit,
    }
