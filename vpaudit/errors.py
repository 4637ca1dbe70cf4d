"""The exception tree of vpaudit.

Every error the library raises on purpose derives from :class:`VpauditError`; the CLI
catches that class, prints ``vpaudit: <what went wrong, in words>: <message>`` (each class's
``kind``) and exits with status 2 (an operating-system error, such as a missing output
folder, too)::

    VpauditError
    ├── TableError            input that cannot be read as written (file, line, column)
    │   └── TableErrors       several TableError at once, all of them listed
    ├── RecordRuleError       records that read fine but break a rule (import rejects them)
    ├── WriteError            a file that cannot be written as asked (nothing is written)
    ├── UnitError             an unknown unit or a quantity that does not parse
    ├── EquationError         an equation that cannot be evaluated or converted exactly
    │   └── FitError          measured points that cannot be fitted as asked
    ├── PolicyError           a policy file or override that is not valid
    ├── StoreError            the DuckDB store cannot be opened, read or written
    └── UnknownCheckError     a check name that is not registered
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

__all__ = [
    "VpauditError",
    "TableError",
    "TableErrors",
    "RecordRuleError",
    "UnitError",
    "WriteError",
    "EquationError",
    "FitError",
    "PolicyError",
    "StoreError",
    "UnknownCheckError",
    "Location",
]


class VpauditError(Exception):
    """Base class of every error vpaudit raises on purpose."""

    #: What went wrong, in words, for the command line's one-line message.
    kind = "error"


@dataclass(frozen=True)
class Location:
    """Where in the input a value stands.

    Attributes
    ----------
    file : str
        Path of the file as given by the user.
    line : int or None
        1-based physical line (CSV row, YAML/JSON item start, Parquet row number).
    column : str or None
        The column or field name.
    """

    file: str
    line: int | None = None
    column: str | None = None

    def __str__(self) -> str:
        out = self.file
        if self.line is not None:
            out += f":{self.line}"
        if self.column is not None:
            out += f" [{self.column}]"
        return out


class TableError(VpauditError):
    """Input that cannot be read as written.

    Parameters
    ----------
    message : str
        What was expected and what was found.
    location : Location, optional
        File, line and column of the offending value.
    """

    kind = "cannot read the table"

    def __init__(self, message: str, location: Location | None = None) -> None:
        self.message = message
        self.location = location
        super().__init__(f"{location}: {message}" if location else message)


class TableErrors(TableError):
    """Several located errors, reported together so a user can fix them in one pass."""

    def __init__(self, errors: Iterable[TableError], limit: int = 50) -> None:
        self.errors = list(errors)
        shown = [str(e) for e in self.errors[:limit]]
        more = len(self.errors) - len(shown)
        text = f"{len(self.errors)} problem(s) in the input:\n  " + "\n  ".join(shown)
        if more > 0:
            text += f"\n  ... and {more} more"
        VpauditError.__init__(self, text)
        self.message = text
        self.location = None


class RecordRuleError(VpauditError):
    """Records that read fine but break a rule of the table format."""

    kind = "nothing imported"

    def __init__(self, problems: Iterable[str], limit: int = 50) -> None:
        self.problems = list(problems)
        shown = self.problems[:limit]
        more = len(self.problems) - len(shown)
        text = (
            f"{len(self.problems)} record(s) break a rule of the table format, and a store "
            "takes a table whole or not at all (it is left as it was):\n  "
        ) + ("\n  ".join(shown))
        if more > 0:
            text += f"\n  ... and {more} more"
        super().__init__(text)


class WriteError(VpauditError):
    """A file vpaudit was asked to write that it cannot write as asked (nothing is written)."""

    kind = "cannot write"


class UnitError(VpauditError):
    """An unknown unit, or a quantity with a unit suffix that does not parse."""

    kind = "cannot read a quantity"


class EquationError(VpauditError):
    """An equation that cannot be evaluated, inverted or converted exactly."""

    kind = "cannot evaluate or convert the equation"


class FitError(EquationError):
    """Measured points that cannot be fitted as asked: none of the substance or phase, too
    few for the form's coefficients, or a design that does not determine them.
    """

    kind = "cannot fit"


class PolicyError(VpauditError):
    """A policy file, preset or override that is not valid."""

    kind = "the policy is not valid"


class StoreError(VpauditError):
    """The DuckDB store cannot be opened, read or written."""

    kind = "cannot use the store"


class UnknownCheckError(VpauditError):
    """A check name that is not registered; the message lists the valid names."""

    kind = "unknown check"
