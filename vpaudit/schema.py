"""Pydantic models of the table format: coefficient records, references, points, policy
(and, from :mod:`vpaudit.report.contract`, the JSON report's schema beside theirs).

The models are the contract: ``schemas/`` holds the JSON Schema generated from them (a test
keeps it in sync), and they produce the detailed message for any row that fails. The bulk
path of the readers applies the same rules column by column (:mod:`vpaudit.tableframe`);
a test proves both give the same verdict on every row.
"""

from __future__ import annotations

import math
from enum import StrEnum
from typing import Annotated, Literal

from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from .equations.forms import COEFFICIENTS, FORMS
from .units import (
    PRESSURE_UNITS,
    QUANTITY_UNITS,
    TEMPERATURE_UNITS,
    to_kelvin,
)

__all__ = [
    "Phase",
    "Quantity",
    "QUANTITY_UNITS",
    "CoefficientRecord",
    "ReferenceValue",
    "MeasuredPoint",
    "CheckOverride",
    "PolicyFile",
    "MODELS",
    "json_schemas",
]

Finite = Annotated[float, Field(allow_inf_nan=False)]
Text = Annotated[str, Field(min_length=1)]
FormName = Literal[tuple(FORMS)]  # type: ignore[valid-type]
PressureUnit = Literal[tuple(PRESSURE_UNITS)]  # type: ignore[valid-type]
TemperatureUnit = Literal[tuple(TEMPERATURE_UNITS)]  # type: ignore[valid-type]


class Phase(StrEnum):
    """The condensed phase a curve describes."""

    solid = "solid"
    liquid = "liquid"


class Quantity(StrEnum):
    """The substance facts a reference value may state."""

    melting_point = "melting_point"
    triple_point_temperature = "triple_point_temperature"
    triple_point_pressure = "triple_point_pressure"
    normal_boiling_point = "normal_boiling_point"
    critical_temperature = "critical_temperature"
    critical_pressure = "critical_pressure"
    enthalpy_of_fusion = "enthalpy_of_fusion"
    enthalpy_of_vaporization = "enthalpy_of_vaporization"
    enthalpy_of_sublimation = "enthalpy_of_sublimation"
    molar_mass = "molar_mass"
    standard_enthalpy_of_vaporization = "standard_enthalpy_of_vaporization"
    standard_enthalpy_of_sublimation = "standard_enthalpy_of_sublimation"
    standard_entropy_of_vaporization = "standard_entropy_of_vaporization"
    standard_entropy_of_sublimation = "standard_entropy_of_sublimation"


_STRICT = ConfigDict(extra="forbid", allow_inf_nan=False, str_strip_whitespace=False)


class CoefficientRecord(BaseModel):
    """One vapour-pressure equation of one substance and phase, with its provenance.

    Coefficients are stored exactly as the source prints them, in the convention of
    ``form``, ``log_base``, ``pressure_unit`` and ``temperature_unit``.
    """

    model_config = _STRICT

    id: Text = Field(description="Unique, stable identifier of the record.")
    substance: Text = Field(description="The substance as the table names it.")
    phase: Phase = Field(description="The condensed phase: solid or liquid.")
    modification: str | None = Field(None, description="Label of a solid modification.")
    form: FormName = Field(description="Equation form (see the table format).")
    log_base: Literal["e", "10"] = Field(description="Base of log P (and log T).")
    pressure_unit: PressureUnit = Field(description="Unit of P in the equation.")
    temperature_unit: TemperatureUnit = Field(
        "K", description="Unit of T; degC/degF only for antoine."
    )
    A: Finite | None = None
    B: Finite | None = None
    C: Finite | None = None
    D: Finite | None = None
    E: Finite | None = None
    t_crit: Finite | None = Field(None, description="Critical temperature (record's unit).")
    p_crit: Finite | None = Field(None, description="Critical pressure (record's unit).")
    t_min: Finite = Field(description="Lower end of the validity range (record's unit).")
    t_max: Finite = Field(description="Upper end of the validity range (record's unit).")
    source: Text = Field(description="Citation of the source.")
    source_locator: str | None = Field(None, description="Table, page or DOI in the source.")
    uncertainty: Finite | None = Field(None, gt=0, description="Relative uncertainty of P.")
    note: str | None = None
    entered_by: str | None = None
    entered_on: str | None = Field(None, description="Kept as text, never read as a date.")

    @model_validator(mode="after")
    def _consistent(self) -> CoefficientRecord:
        spec = FORMS[self.form]
        given = {c for c in COEFFICIENTS if getattr(self, c) is not None}
        missing = [c for c in spec.coefficients if c not in given]
        unused = sorted(given - set(spec.coefficients))
        if missing:
            raise ValueError(f"form {self.form!r} needs coefficient(s) {', '.join(missing)}")
        if unused:
            raise ValueError(f"form {self.form!r} does not use coefficient(s) {', '.join(unused)}")
        if self.temperature_unit not in spec.temperature_units:
            raise ValueError(
                f"temperature_unit {self.temperature_unit!r} is not allowed for form "
                f"{self.form!r} (allowed: {', '.join(spec.temperature_units)})"
            )
        if spec.needs_critical and (self.t_crit is None or self.p_crit is None):
            raise ValueError(f"form {self.form!r} needs t_crit and p_crit")
        if spec.needs_critical and (self.t_crit <= 0 or self.p_crit <= 0):  # type: ignore[operator]
            raise ValueError("t_crit and p_crit must be positive")
        lo = to_kelvin(self.t_min, self.temperature_unit)
        hi = to_kelvin(self.t_max, self.temperature_unit)
        if lo <= 0:
            raise ValueError(f"t_min is {lo:g} K: absolute temperatures must be positive")
        if not lo < hi:
            raise ValueError(f"t_min ({self.t_min:g}) must be below t_max ({self.t_max:g})")
        if self.form == "antoine":
            pole = -self.C  # type: ignore[operator]
            if self.t_min <= pole <= self.t_max:
                raise ValueError(f"the Antoine pole theta = -C = {pole:g} lies inside the range")
        return self


class ReferenceValue(BaseModel):
    """A tabulated fact about a substance (melting point, enthalpy of fusion, ...)."""

    model_config = _STRICT

    substance: Text
    quantity: Quantity
    value: Finite
    unit: Text
    at_temperature: Finite | None = Field(None, gt=0, description="Temperature of the value. [K]")
    uncertainty: Finite | None = Field(None, gt=0, description="Absolute, in the value's unit.")
    source: Text
    note: str | None = None

    @model_validator(mode="after")
    def _unit_fits(self) -> ReferenceValue:
        kind, units = QUANTITY_UNITS[self.quantity.value]
        if self.unit not in units:
            raise ValueError(
                f"unit {self.unit!r} does not fit {self.quantity.value} (use {', '.join(units)})"
            )
        if kind == "temperature" and to_kelvin(self.value, self.unit) <= 0:
            raise ValueError("an absolute temperature must be positive")
        if kind in ("pressure", "molar_mass") and self.value <= 0:
            raise ValueError(f"{self.quantity.value} must be positive")
        return self


class MeasuredPoint(BaseModel):
    """One measured vapour pressure of a substance and phase."""

    model_config = _STRICT

    substance: Text
    phase: Phase
    T: Finite
    P: Finite = Field(gt=0)
    temperature_unit: TemperatureUnit = "K"
    pressure_unit: PressureUnit = "Pa"
    source: Text
    uncertainty: Finite | None = Field(None, gt=0, description="Relative uncertainty of P.")
    note: str | None = None

    @field_validator("T")
    @classmethod
    def _finite(cls, v: float) -> float:
        if not math.isfinite(v):
            raise ValueError("T must be finite")
        return v

    @model_validator(mode="after")
    def _positive(self) -> MeasuredPoint:
        if to_kelvin(self.T, self.temperature_unit) <= 0:
            raise ValueError("T must be a positive absolute temperature")
        return self


class CheckOverride(BaseModel):
    """The policy's settings for one check."""

    model_config = ConfigDict(extra="allow", allow_inf_nan=False)

    severity: Literal["error", "warning", "note", "off"] | None = None


class PolicyFile(BaseModel):
    """The ``vpaudit.toml`` policy file: a preset and per-check overrides."""

    model_config = ConfigDict(extra="forbid")

    preset: str = Field("evaluated", description="Named preset the overrides start from.")
    checks: dict[str, CheckOverride] = Field(default_factory=dict)


#: The models whose JSON Schemas live in ``schemas/``.
MODELS: dict[str, type[BaseModel]] = {
    "record": CoefficientRecord,
    "reference": ReferenceValue,
    "point": MeasuredPoint,
    "policy": PolicyFile,
}


def json_schemas() -> dict[str, str]:
    """The JSON Schema text of each model, as kept in ``schemas/<name>.schema.json``."""
    import json

    from .report.contract import Report  # the output's contract beside the input's

    return {
        name: json.dumps(model.model_json_schema(), indent=2, sort_keys=True) + "\n"
        for name, model in {**MODELS, "report": Report}.items()
    }


if __name__ == "__main__":  # python -m vpaudit.schema  regenerates schemas/
    from pathlib import Path

    for _name, _text in json_schemas().items():
        Path("schemas", f"{_name}.schema.json").write_text(_text, encoding="utf-8")
