"""One module per equation family: everything that depends on the shape of an equation.

Each family module holds, for its forms:

* ``NAME`` and ``CODE`` -- the family's name in the form registry and its code in
  :class:`vpaudit.equations.engine.Curves`;
* ``FORMS`` -- its equation forms (:class:`._common.FormSpec`: the coefficients each uses,
  the equation as written, its temperature units), which
  :data:`vpaudit.equations.forms.FORMS` gathers;
* ``evaluate(params, t, order)`` -- y = ln(P/Pa) and its first and second derivatives in T
  from the canonical parameters (base e, Pa, K; the engine's module docstring lists them);
* ``stationary(params)`` -- the temperature at which the implied dH or dCp of each curve
  is stationary, where the form gives it in closed form (NaN elsewhere), for the search of
  extrema over a range;
* ``model(form, p, t, fixed)`` -- ln(P/Pa) and its gradient in the coefficients, for fitting,
  with ``design(form, t, fixed)`` (the design matrix) for the forms that are linear in their
  coefficients and ``start(form, t, y, w, wls)`` (a starting point) for the others;
* ``canonical(written)`` -- the canonical parameters of records of the family from their
  coefficients and conventions as written (:class:`._common.Written`), slot by slot;
* ``LOG_SCALED`` and ``UNIT_IN_A`` -- which coefficients a change of log base multiplies, and
  whether a pressure unit shifts the constant term (else the critical pressure), for exact
  conversion; ``AFFINE_T`` -- whether the form may be written in degC or degF.

A new family is one module here, listed in :data:`FAMILIES`.
"""

from __future__ import annotations

from types import ModuleType

from . import antoine, log_linear, wagner

__all__ = ["BY_CODE", "FAMILIES", "family_of"]

#: The family modules by name, in code order.
FAMILIES: dict[str, ModuleType] = {m.NAME: m for m in (log_linear, antoine, wagner)}
#: The family modules by code.
BY_CODE: dict[int, ModuleType] = {m.CODE: m for m in FAMILIES.values()}


def family_of(form: str) -> ModuleType:
    """The family module of equation form ``form`` (a name of ``FORMS``)."""
    from ..forms import FORMS

    return FAMILIES[FORMS[form].family]
