"""Findings: what a check reports. Data, never exceptions."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ._registry import Severity

__all__ = ["Finding"]


@dataclass
class Finding:
    """One suspect entry, with the numbers behind the verdict.

    Treat a finding as a value: the diagnosis attaches its suggestion with
    :func:`dataclasses.replace`, never by assignment (the gate's ``status`` aside). The
    class is not frozen because a frozen dataclass sets each field through
    ``object.__setattr__``, four times the cost (docs/performance.md).

    Attributes
    ----------
    check : str
        Name of the check that reported it.
    severity : Severity
        error, warning or note.
    substance : str
        The substance as the table names it.
    records : tuple of str
        Ids of the records involved (empty for a substance-level finding).
    message : str
        One plain sentence with the numbers and units.
    evidence : dict
        The numbers behind it; keys carry their unit (``crossing_K``, ``difference_lnP``).
    suggestion : dict or None
        A likely cause and fix, when the diagnosis finds one.
    file, line : str or None, int or None
        Where the record the finding is about stands in the table files (the suspect a
        diagnosis names, else the first record).
    status : str or None
        Set by the gate only: ``new``, ``existing`` or ``accepted`` against the base
        revision; None in an audit. It travels with the finding (``dataclasses.replace``
        keeps it) and is not part of the audit's JSON.
    """

    check: str
    severity: Severity
    substance: str
    records: tuple[str, ...]
    message: str
    evidence: dict[str, Any] = field(default_factory=dict)
    suggestion: dict[str, Any] | None = None
    file: str | None = None
    line: int | None = None
    status: str | None = None

    @property
    def key(self) -> tuple[str, str, tuple[str, ...]]:
        """Identity across revisions: check, substance and record ids (not the message)."""
        return (self.check, self.substance, tuple(sorted(self.records)))

    def to_dict(self) -> dict[str, Any]:
        """The JSON form (the output contract), with the location added."""
        return {
            "check": self.check,
            "severity": str(self.severity),  # a StrEnum's str is its value (and faster)
            "substance": self.substance,
            "records": list(self.records),
            "message": self.message,
            "evidence": self.evidence,
            "suggestion": self.suggestion,
            "location": {"file": self.file, "line": self.line},
        }
