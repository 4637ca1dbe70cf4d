"""Number formatting shared by the checks' messages."""

from __future__ import annotations

import math

__all__ = ["kelvin", "ln_ratio", "kj", "jk", "pressure", "pressure_at_ln", "confidence"]

#: Beyond this |ln(P/Pa)| a pressure is written as e^(ln P): exp() leaves a float's range
#: near 709 (overflow to inf) and -745 (underflow to 0).
_LN_FLOAT = 700.0


def kelvin(t: float) -> str:
    """``1234.5 K``."""
    return "n/a" if t is None or not math.isfinite(t) else f"{t:.5g} K"


def ln_ratio(d: float) -> str:
    """A difference in ln P with the pressure ratio it means: ``0.31 in ln P (x1.36)``."""
    if not math.isfinite(d):
        return "n/a"
    if abs(d) >= _LN_FLOAT:
        return f"{abs(d):.3g} in ln P (a factor e^{abs(d):.3g} in pressure)"
    return f"{abs(d):.3g} in ln P (a factor {math.exp(abs(d)):.3g} in pressure)"


def kj(h: float) -> str:
    """An enthalpy in kJ/mol."""
    return "n/a" if not math.isfinite(h) else f"{h / 1000:.4g} kJ/mol"


def jk(s: float) -> str:
    """An entropy or heat capacity in J/(mol K)."""
    return "n/a" if not math.isfinite(s) else f"{s:.3g} J/(mol K)"


def pressure(p: float) -> str:
    """A pressure in Pa with sensible digits."""
    return "n/a" if not math.isfinite(p) else f"{p:.4g} Pa"


def pressure_at_ln(y: float, p: float | None = None, digits: int = 4) -> str:
    """A pressure given by ln(P/Pa) ``y`` (and P itself, ``p``, when the caller has it):
    ``1.234e+05 Pa`` with ``digits`` significant digits, or ``e^-893 Pa`` where P would
    overflow or underflow a float (never ``inf`` or ``0``).
    """
    if not math.isfinite(y):
        return "n/a"
    if abs(y) > _LN_FLOAT:
        return f"e^{y:.4g} Pa"
    return f"{math.exp(y) if p is None else p:.{digits}g} Pa"


def confidence(c: float) -> str:
    """A suggestion's confidence (0..1) with two decimals, rounded down: a figure is never
    shown above what it is, so a fix short of the 0.8 that reads "Almost certainly" never
    shows as 0.80 (0.797 reads 0.79, 0.996 reads 0.99; 1 reads 1.00).
    """
    return f"{math.floor(c * 100 + 1e-9) / 100:.2f}"
