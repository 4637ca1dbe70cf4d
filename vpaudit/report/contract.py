"""The JSON report's contract as models: ``schemas/report.schema.json`` is generated from
them (``python -m vpaudit.schema``; a test keeps it in sync and validates the reports that
the audit and the gate write against it with an independent JSON Schema validator).

The models describe what :mod:`vpaudit.report.json` writes; they are not used to write it.
Fields present only in some reports are optional: the gate's ``status`` of each finding,
its ``resolved`` list and summary counts, the summary's ``not_diagnosed``,
``shared_slips`` and ``undecided``. A new field must be added here, or the test fails.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import BaseModel, ConfigDict, Field

__all__ = ["Report"]

_CLOSED = ConfigDict(extra="forbid")

Severity = Literal["error", "warning", "note"]
#: A corrected field's value: a number, or the text of a unit, log base or phase.
Value = float | str
Count = Annotated[int, Field(ge=0)]


class Where(BaseModel):
    """A record's file and line."""

    model_config = _CLOSED
    file: str
    line: int = Field(ge=1)


class Location(BaseModel):
    """Where a finding stands: its record's file and line (null for a finding on the table
    as a whole).
    """

    model_config = _CLOSED
    file: str | None
    line: int | None = Field(ge=1)


class AlsoChanged(BaseModel):
    """The partner record a fix changes too (a phase swap's other record)."""

    model_config = _CLOSED
    record: str
    corrected: dict[str, Value]
    location: Where | None = None


class Suggestion(BaseModel):
    """The likely slip behind a finding and its fix (:mod:`vpaudit.diagnose`)."""

    model_config = _CLOSED
    kind: str = Field(description="The slip kind (vpaudit.diagnose.SLIP_KINDS).")
    record: str = Field(description="The record the fix corrects.")
    corrected: dict[str, Value] = Field(description="Each changed field and its new value.")
    corrected_text: dict[str, str] | None = Field(
        None, description="A changed coefficient as it would be written in the table."
    )
    confidence: float = Field(ge=0, le=0.999, description="Rounded down to three decimals.")
    explanation: str
    location: Where
    also: list[AlsoChanged] | None = None
    runner_up: Suggestion | None = Field(None, description="A close second fix.")
    beside: str | None = Field(
        None, description="On a fix of a second slip: the record of the substance's first fix."
    )


class Resolved(BaseModel):
    """A finding as a gate's ``resolved`` list gives it (one the base had that the change
    cleared): its check, severity, substance, records and message.
    """

    model_config = _CLOSED
    check: str
    severity: Severity
    substance: str
    records: list[str]
    message: str


class Finding(Resolved):
    """One finding of one check on one or more records."""

    evidence: dict[str, Any] = Field(description="The numbers behind the verdict.")
    suggestion: Suggestion | None
    location: Location
    status: Literal["new", "existing", "accepted"] | None = Field(
        None, description="A gate's: whether the change brought the finding."
    )


class Tried(BaseModel):
    """A shared slip's change applied to every record of its source so written."""

    model_config = _CLOSED
    substances: Count
    of: Count
    with_errors: Count
    with_errors_after: Count


class OtherChange(BaseModel):
    """A change no evidence tells apart from a shared slip's (bar beside atm)."""

    model_config = _CLOSED
    change: dict[str, list[Value]]
    substances: Count
    tried: Tried | None


class SharedSlip(BaseModel):
    """One change of metadata that many records of one file, source and phase share."""

    model_config = _CLOSED
    file: str
    source: str
    phase: str
    change: dict[str, list[Value]] = Field(description="{field: [as written, corrected]}")
    range_rewritten: bool
    substances: Count
    confident: Count
    records: list[str]
    same_metadata: Count
    flagged: Count
    tried: Tried | None
    whole_source: bool
    or_: list[OtherChange] = Field(alias="or")


class Reading(BaseModel):
    """One reading of a record that clears its substance's errors."""

    model_config = _CLOSED
    kind: str
    record: str
    corrected: dict[str, Value]
    also: list[AlsoChanged] | None = None


class Undecided(BaseModel):
    """A substance given no fix although several readings each clear its every error."""

    model_config = _CLOSED
    substance: str
    record: str
    location: Where
    share: float = Field(ge=0, le=1)
    fixes: list[Reading]
    lacking: list[str] = Field(description="The witnesses that could tell them apart.")


class Summary(BaseModel):
    """The counts, and what could not be tested."""

    model_config = _CLOSED
    records: Count
    substances: Count
    pairs: Count
    error: Count
    warning: Count
    note: Count
    not_checked: dict[str, int]
    not_diagnosed: int | None = Field(None, ge=0)
    shared_slips: list[SharedSlip] | None = None
    undecided: list[Undecided] | None = None
    new: int | None = Field(None, ge=0, description="A gate's: findings the change brought.")
    resolved: int | None = Field(None, ge=0, description="A gate's: findings it cleared.")
    base: str | None = Field(None, description="A gate's: the revision compared with.")
    substances_reaudited: int | None = Field(None, ge=0)


class Report(BaseModel):
    """``vpaudit audit --format json`` and ``vpaudit gate --format json``."""

    model_config = _CLOSED
    summary: Summary
    findings: list[Finding]
    resolved: list[Resolved] | None = Field(None, description="A gate's.")
