"""The registry of equation forms: which coefficients each uses and what it needs.

Each family module of :mod:`vpaudit.equations.families` declares its forms (``FORMS``, a
tuple of :class:`FormSpec`); this module gathers them, in family order, into the one
mapping that says what a form *is*; the schema, the readers, the engine and the
documentation read it.
"""

from __future__ import annotations

from typing import Final

from .families import FAMILIES
from .families._common import FormSpec
from .families.wagner import EXPONENTS

__all__ = ["COEFFICIENTS", "FormSpec", "FORMS", "form_spec", "LOG_LINEAR", "WAGNER"]

#: The coefficient columns of a record, in order.
COEFFICIENTS: Final[tuple[str, ...]] = ("A", "B", "C", "D", "E")

FORMS: Final[dict[str, FormSpec]] = {s.name: s for m in FAMILIES.values() for s in m.FORMS}

LOG_LINEAR: Final[frozenset[str]] = frozenset(
    n for n, s in FORMS.items() if s.family == "log-linear"
)
#: The last two exponents of each Wagner form.
WAGNER: Final[dict[str, tuple[float, float]]] = EXPONENTS


def form_spec(name: str) -> FormSpec:
    """Return the :class:`FormSpec` of ``name``; an unknown name lists the valid ones."""
    from ..errors import EquationError

    try:
        return FORMS[name]
    except KeyError:
        raise EquationError(
            f"unknown equation form {name!r}; valid forms: {', '.join(FORMS)}"
        ) from None
