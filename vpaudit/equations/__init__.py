"""The equation engine: every form in canonical units, ln P[Pa] of T[K], over arrays.

* :mod:`.forms` -- the registry of forms (which coefficients each uses);
* :mod:`.families` -- one module per family of forms: evaluation with derivatives,
  stationary points, the fit model, what a change of log base or unit does;
* :mod:`.engine` -- canonical parameters, evaluation with analytic first and second
  derivatives, implied enthalpy and heat-capacity change, inversion T(P);
* :mod:`.convert` -- exact conversion of a record to another unit or log base.
"""

from .convert import convert_record, to_canonical_record
from .engine import (
    Curves,
    bracketed_root,
    curves_from_frame,
    enthalpy,
    evaluate,
    heat_capacity_change,
    ln_pressure,
    temperature_at,
)
from .forms import COEFFICIENTS, FORMS, FormSpec, form_spec

__all__ = [
    "COEFFICIENTS",
    "FORMS",
    "Curves",
    "FormSpec",
    "bracketed_root",
    "convert_record",
    "curves_from_frame",
    "enthalpy",
    "evaluate",
    "form_spec",
    "heat_capacity_change",
    "ln_pressure",
    "temperature_at",
    "to_canonical_record",
]
