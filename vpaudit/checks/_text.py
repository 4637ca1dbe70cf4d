"""Number formatting shared by the checks' messages."""

from __future__ import annotations

import math

__all__ = ["kelvin", "ln_ratio", "kj", "jk", "pressure"]


def kelvin(t: float) -> str:
    """``1234.5 K``."""
    return "n/a" if t is None or not math.isfinite(t) else f"{t:.5g} K"


def ln_ratio(d: float) -> str:
    """A difference in ln P with the pressure ratio it means: ``0.31 in ln P (x1.36)``."""
    if not math.isfinite(d):
        return "n/a"
    factor = math.exp(abs(d)) if abs(d) < 700 else float("inf")
    return f"{abs(d):.3g} in ln P (a factor {factor:.3g} in pressure)"


def kj(h: float) -> str:
    """An enthalpy in kJ/mol."""
    return "n/a" if not math.isfinite(h) else f"{h / 1000:.4g} kJ/mol"


def jk(s: float) -> str:
    """An entropy or heat capacity in J/(mol K)."""
    return "n/a" if not math.isfinite(s) else f"{s:.3g} J/(mol K)"


def pressure(p: float) -> str:
    """A pressure in Pa with sensible digits."""
    return "n/a" if not math.isfinite(p) else f"{p:.4g} Pa"
