"""The registry of equation forms: which coefficients each uses and what it needs.

This mapping is the single place that says what a form *is*; the schema, the readers, the
engine and the documentation read it.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Final

__all__ = ["COEFFICIENTS", "FormSpec", "FORMS", "form_spec", "LOG_LINEAR", "WAGNER"]

#: The coefficient columns of a record, in order.
COEFFICIENTS: Final[tuple[str, ...]] = ("A", "B", "C", "D", "E")


@dataclass(frozen=True)
class FormSpec:
    """What one equation form needs.

    Attributes
    ----------
    name : str
        The ``form`` value in tables.
    family : str
        ``log-linear``, ``antoine`` or ``wagner``: which evaluator serves it.
    coefficients : tuple of str
        The coefficient columns the form uses; every one is required, all others must be empty.
    equation : str
        The equation as written in the table format (y = log P in the record's base).
    temperature_units : tuple of str
        Temperature units the form may be written in.
    needs_critical : bool
        Whether ``t_crit`` and ``p_crit`` are required.
    exponent : float or None
        For log-linear forms, the fixed exponent of the D term (D*T^E), or None when E is a
        coefficient (``power-term``) or the form has no D term.
    """

    name: str
    family: str
    coefficients: tuple[str, ...]
    equation: str
    temperature_units: tuple[str, ...] = ("K",)
    needs_critical: bool = False
    exponent: float | None = None


FORMS: Final[dict[str, FormSpec]] = {
    s.name: s
    for s in (
        FormSpec("two-term", "log-linear", ("A", "B"), "y = A + B/T"),
        FormSpec("three-term", "log-linear", ("A", "B", "C"), "y = A + B/T + C log T"),
        FormSpec(
            "four-term-t",
            "log-linear",
            ("A", "B", "C", "D"),
            "y = A + B/T + C log T + D T",
            exponent=1.0,
        ),
        FormSpec(
            "four-term-cube",
            "log-linear",
            ("A", "B", "C", "D"),
            "y = A + B/T + C log T + D/T^3",
            exponent=-3.0,
        ),
        FormSpec(
            "power-term",
            "log-linear",
            ("A", "B", "C", "D", "E"),
            "y = A + B/T + C log T + D T^E",
        ),
        FormSpec(
            "antoine",
            "antoine",
            ("A", "B", "C"),
            "y = A - B/(theta + C)",
            temperature_units=("K", "degC", "degF"),
        ),
        FormSpec(
            "wagner-3-6",
            "wagner",
            ("A", "B", "C", "D"),
            "ln(P/Pc) = (Tc/T)(A tau + B tau^1.5 + C tau^3 + D tau^6), tau = 1 - T/Tc",
            needs_critical=True,
        ),
        FormSpec(
            "wagner-2.5-5",
            "wagner",
            ("A", "B", "C", "D"),
            "ln(P/Pc) = (Tc/T)(A tau + B tau^1.5 + C tau^2.5 + D tau^5), tau = 1 - T/Tc",
            needs_critical=True,
        ),
    )
}

LOG_LINEAR: Final[frozenset[str]] = frozenset(
    n for n, s in FORMS.items() if s.family == "log-linear"
)
WAGNER: Final[dict[str, tuple[float, float]]] = {
    "wagner-3-6": (3.0, 6.0),
    "wagner-2.5-5": (2.5, 5.0),
}


def form_spec(name: str) -> FormSpec:
    """Return the :class:`FormSpec` of ``name``; an unknown name lists the valid ones."""
    from ..errors import EquationError

    try:
        return FORMS[name]
    except KeyError:
        raise EquationError(
            f"unknown equation form {name!r}; valid forms: {', '.join(FORMS)}"
        ) from None
