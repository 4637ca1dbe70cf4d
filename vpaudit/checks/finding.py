"""Findings: what a check reports. Data, never exceptions.

An audit's findings are one table, :class:`Findings`: a column per field (check, severity,
substance, records, message, evidence, suggestion, file, line, status), a finding a row.
Checks add whole blocks of rows; sorting, moving a finding to its suspect record, the gate's
status and the reports work on the columns. :class:`Finding` is the row view, for code that
wants one finding at a time.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from typing import Any, overload

import numpy as np

from ._registry import Severity
from .blocks import BlockColumn, ValueColumn
from .evidence import EvidenceColumn

__all__ = ["Finding", "Findings", "FIELDS", "REPORTED"]


@dataclass
class Finding:
    """One suspect entry, with the numbers behind the verdict.

    A row of :class:`Findings` (a check may also yield one on its own). Taken from a
    table it is a copy: change the table with :meth:`Findings.set`.

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
    rows : tuple of int
        The table rows of ``records``, in the same order, when the check knows them (empty
        for a finding made by hand); for the audit's own use, not part of any report.
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
    rows: tuple[int, ...] = ()

    @property
    def key(self) -> tuple[str, str, tuple[str, ...]]:
        """Identity across revisions: check, substance and record ids (not the message)."""
        return (self.check, self.substance, tuple(sorted(self.records)))

    @property
    def spec(self) -> str:
        """The finding as ``apply`` and ``accept`` take it: ``CHECK:RECORD[,RECORD]``."""
        return f"{self.check}:{','.join(self.records)}"

    def to_dict(self) -> dict[str, Any]:
        """The JSON form (the output contract), with the location added."""
        return _as_dict(
            self.check,
            self.severity,
            self.substance,
            self.records,
            self.message,
            self.evidence,
            self.suggestion,
            self.file,
            self.line,
        )


def _as_dict(check, severity, substance, records, message, evidence, suggestion, file, line):
    """One finding's JSON form (:meth:`Finding.to_dict`), from its fields."""
    return {
        "check": check,
        "severity": str(severity),  # a StrEnum's str is its value (and faster)
        "substance": substance,
        "records": list(records),
        "message": message,
        "evidence": evidence,
        "suggestion": suggestion,
        "location": {"file": file, "line": line},
    }


#: The fields of a finding, in the order of :class:`Finding` (the columns of
#: :class:`Findings`).
FIELDS = (
    "check",
    "severity",
    "substance",
    "records",
    "message",
    "evidence",
    "suggestion",
    "file",
    "line",
    "status",
    "rows",
)

#: The fields every report carries, in that order (not the gate's status or the rows).
REPORTED = FIELDS[:9]

#: A fresh default of each field that has one (:class:`Finding`'s).
_DEFAULTS = {
    "evidence": dict,
    "suggestion": lambda: None,
    "file": lambda: None,
    "line": lambda: None,
    "status": lambda: None,
    "rows": tuple,
}

#: The fields kept as blocks (:class:`~vpaudit.checks.blocks.ValueColumn`): most of them
#: follow from the table rows of a check's block, and are made when read.
_BLOCKED = frozenset({"substance", "records", "message", "file", "line", "rows"})

#: Sorting position of each severity: errors first.
_FIRST = {s: -s.rank for s in Severity}


class Findings:
    """Findings as a table: one column per field of :data:`FIELDS`, row ``i`` of every
    column one finding. The check, severity, suggestion and status are lists; the evidence
    an :class:`~vpaudit.checks.evidence.EvidenceColumn`; the other fields
    :class:`~vpaudit.checks.blocks.ValueColumn` (values made when read).

    Checks produce blocks of rows (:meth:`block`); the audit joins them (:meth:`extend`),
    changes single cells (:meth:`set`) and sorts the rows (:meth:`sort`) without making a
    :class:`Finding` per row. Iterating, or indexing with an integer, gives :class:`Finding`
    row views: copies, so changing one does not change the table (use :meth:`set`).
    Indexing with a slice, or :meth:`take`, gives a new table.
    """

    __slots__ = FIELDS

    def __init__(self, **columns: list) -> None:
        unknown = set(columns) - set(FIELDS)
        if unknown:
            raise TypeError(f"unknown finding fields: {', '.join(sorted(unknown))}")
        n = len(next(iter(columns.values()))) if columns else 0
        for name in FIELDS:
            col = columns.get(name)
            if col is None:  # a field not given: its default in every row
                if n and name not in _DEFAULTS:
                    raise TypeError(f"the findings' {name!r} column is missing")
                col = [_DEFAULTS[name]() for _ in range(n)] if n else []
            if name == "evidence" and not isinstance(col, EvidenceColumn):
                col = EvidenceColumn.of_dicts(col)
            elif name in _BLOCKED and not isinstance(col, ValueColumn):
                col = ValueColumn.of_list(list(col))
            if len(col) != n:
                raise ValueError(f"column {name!r} has {len(col)} rows, not {n}")
            setattr(self, name, col)

    @classmethod
    def of(cls, rows: Iterable[Finding]) -> Findings:
        """A table of the findings ``rows``."""
        rows = list(rows)
        return cls(**{name: [getattr(f, name) for f in rows] for name in FIELDS})

    @classmethod
    def block(
        cls,
        check: str,
        severity: Severity,
        substance: ValueColumn | list[str],
        records: ValueColumn | list[tuple[str, ...]],
        message: ValueColumn | list[str],
        evidence: EvidenceColumn,
        file: ValueColumn | list[str | None],
        line: ValueColumn | list[int | None],
        rows: ValueColumn | list[tuple[int, ...]],
    ) -> Findings:
        """Rows of one check and one severity, from their other columns (lists, or
        columns whose values are made when read).
        """
        n = len(message)
        return cls(
            check=[check] * n,
            severity=[severity] * n,
            substance=substance,
            records=records,
            message=message,
            evidence=evidence,
            suggestion=[None] * n,
            file=file,
            line=line,
            status=[None] * n,
            rows=rows,
        )

    def __len__(self) -> int:
        return len(self.check)

    def __bool__(self) -> bool:
        return bool(self.check)

    def __iter__(self) -> Iterator[Finding]:
        for row in zip(*(getattr(self, name) for name in FIELDS), strict=True):
            yield Finding(*row)

    @overload
    def __getitem__(self, k: int) -> Finding: ...

    @overload
    def __getitem__(self, k: slice) -> Findings: ...

    def __getitem__(self, k):
        if isinstance(k, slice):
            return Findings(**{name: getattr(self, name)[k] for name in FIELDS})
        return Finding(*(getattr(self, name)[k] for name in FIELDS))

    def __eq__(self, other: object) -> bool:
        if isinstance(other, Findings):
            return all(getattr(self, n) == getattr(other, n) for n in FIELDS)
        if isinstance(other, list):
            return list(self) == other
        return NotImplemented

    def __repr__(self) -> str:
        return f"<Findings: {len(self)} row(s)>"

    def __getstate__(self) -> dict[str, list]:
        # the values made when read are made for a copy: their blocks are the checks' own
        # functions, which do not travel (pickle, multiprocessing)
        return {name: list(getattr(self, name)) for name in FIELDS}

    def __setstate__(self, state: dict[str, list]) -> None:
        self.__init__(**state)

    def take(self, rows: Iterable[int]) -> Findings:
        """The table of rows ``rows``, in that order."""
        rows = list(rows)
        return Findings(**{n: _take(getattr(self, n), rows) for n in FIELDS})

    def append(self, f: Finding) -> None:
        """Add the finding ``f`` as the last row."""
        for name in FIELDS:
            getattr(self, name).append(getattr(f, name))

    def extend(self, other: Findings | Iterable[Finding]) -> None:
        """Add the rows of another table (or findings) at the end."""
        if not isinstance(other, Findings):
            other = Findings.of(other)
        for name in FIELDS:
            getattr(self, name).extend(getattr(other, name))

    def set(self, k: int, **changes: Any) -> None:
        """Change fields of row ``k`` (the gate's status, a moved location, a suggestion)."""
        for name, value in changes.items():
            if name not in FIELDS:
                raise TypeError(f"unknown finding field {name!r}")
            getattr(self, name)[k] = value

    def count(self, severity: Severity) -> int:
        """How many rows have ``severity``."""
        return self.severity.count(severity)

    def dicts(self, start: int = 0, stop: int | None = None, status: bool = False) -> list[dict]:
        """The JSON form of rows ``start`` to ``stop`` (:meth:`Finding.to_dict`), made
        from the columns; with ``status``, each with its gate status (``new`` when unset).
        """
        part = slice(start, stop)
        columns = [getattr(self, name)[part] for name in REPORTED]
        out = [_as_dict(*row) for row in zip(*columns, strict=True)]
        if status:
            for d, s in zip(out, self.status[part], strict=True):
                d["status"] = s or "new"
        return out

    def keys(self) -> list[tuple[str, str, tuple[str, ...]]]:
        """:attr:`Finding.key` of every row."""
        return [
            (c, s, tuple(sorted(r)))
            for c, s, r in zip(self.check, self.substance, self.records, strict=True)
        ]

    def sort(self, key: Callable[[Finding], Any] | None = None) -> None:
        """Sort the rows in place, stably: by default errors first, then by substance,
        check and records; else by ``key`` of each row's :class:`Finding`.
        """
        if key is None:
            order = _default_order(self.severity, self.substance, self.check, self.records)
        else:
            rows = list(self)
            order = sorted(range(len(self)), key=lambda i: key(rows[i]))
        for name in FIELDS:
            setattr(self, name, _take(getattr(self, name), order))


def _default_order(
    severity: list, substance: ValueColumn, check: list, records: ValueColumn
) -> list[int]:
    """The rows in the order of ``sorted`` on (errors first, substance, check, records),
    stably: the first three as integer ranks (each text ranked as Python orders it) sorted
    by one array sort, then only the runs of rows equal in all three ordered by their
    records tuples.
    """
    import pandas as pd

    n = len(severity)
    if n < 2:
        return list(range(n))
    first = np.fromiter((_FIRST[s] for s in severity), dtype=np.int64, count=n)
    sub = pd.factorize(np.asarray(substance.tolist(), dtype=object), sort=True)[0]
    chk = pd.factorize(np.asarray(check, dtype=object), sort=True)[0]
    order = np.lexsort((chk, sub, first))  # stable: the last key is the first sorted on
    a, b, c = first[order], sub[order], chk[order]
    same = (a[1:] == a[:-1]) & (b[1:] == b[:-1]) & (c[1:] == c[:-1])
    out = order.tolist()
    if same.any():  # runs of rows equal in all three: by their records
        starts = np.flatnonzero(np.diff(np.concatenate(([0], same.astype(np.int8)))) == 1)
        ends = np.flatnonzero(np.diff(np.concatenate((same.astype(np.int8), [0]))) == -1) + 1
        tied = np.zeros(n, dtype=bool)  # the rows of the runs, whose records are read
        runs = zip(starts.tolist(), ends.tolist(), strict=True)
        tied[np.concatenate([order[lo : hi + 1] for lo, hi in runs])] = True
        at = np.flatnonzero(tied)
        recs = dict(zip(at.tolist(), records.values(at), strict=True))
        for lo, hi in zip(starts.tolist(), ends.tolist(), strict=True):
            out[lo : hi + 1] = sorted(out[lo : hi + 1], key=recs.__getitem__)
    return out


def _take(column, rows: list[int]):
    """Rows ``rows`` of one column of :class:`Findings`."""
    if isinstance(column, BlockColumn):
        return column.take(np.asarray(rows, dtype=np.int64))
    return [column[i] for i in rows]
