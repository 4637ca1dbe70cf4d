"""The evidence column of the findings table, kept as the checks gave it.

A check that reports many rows gives its evidence as columns (one array or list per key,
or one value shared by all rows). :class:`EvidenceColumn` keeps those blocks of columns and,
for each finding, which block and which position in it hold its numbers; a finding's
evidence dict is made only when it is read, a chunk of rows at a time when a report is
written. Reordering or slicing the findings moves two integer arrays, not a dict per
finding, and a table of millions of findings holds its numbers as arrays.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Iterator
from typing import Any

import numpy as np

__all__ = ["EvidenceColumn", "clean"]


class _Shared:
    """One value shared by every row of a block."""

    __slots__ = ("value",)

    def __init__(self, value: Any) -> None:
        self.value = value


def clean(evidence: dict) -> dict:
    """Evidence as JSON-ready Python values: numpy scalars unwrapped, non-finite floats as
    None (changes ``evidence`` in place and returns it).
    """
    for k, v in evidence.items():
        if type(v) is float or type(v) is np.float64:
            if not math.isfinite(v):
                evidence[k] = None
        elif isinstance(v, np.generic):
            v = v.item()
            evidence[k] = None if isinstance(v, float) and not math.isfinite(v) else v
    return evidence


def _values(column, positions: np.ndarray) -> list:
    """The Python values of ``column`` at ``positions``: numbers as Python numbers, a float
    that is not finite as None; a list's items as they are.
    """
    if isinstance(column, _Shared):
        return [column.value] * positions.size
    if isinstance(column, np.ndarray):
        part = column[positions]
        out = part.tolist()
        if part.dtype.kind == "f":
            for i in np.flatnonzero(~np.isfinite(part)).tolist():
                out[i] = None
        return out
    return [column[p] for p in positions.tolist()]


def _value(column, position: int):
    """One value of ``column``, as :func:`_values` gives it."""
    if isinstance(column, _Shared):
        return column.value
    if isinstance(column, np.ndarray):
        value = column[position].item()
        if column.dtype.kind == "f" and not math.isfinite(value):
            return None
        return value
    return column[position]


class EvidenceColumn:
    """Evidence of each finding: rows of blocks of columns, or dicts given one by one.

    Row ``k`` is position ``pos[k]`` of block ``block[k]``; a block of -1 means the dict
    ``own[pos[k]]``, given whole (a finding made one at a time, or changed later).
    Behaves as a list of dicts: indexing, slicing, iteration, ``append``, ``extend``,
    assignment to one row and :meth:`take`.
    """

    __slots__ = ("_blocks", "_block", "_pos", "_own")

    def __init__(
        self,
        blocks: list[tuple[tuple[str, ...], list]] | None = None,
        block: np.ndarray | None = None,
        pos: np.ndarray | None = None,
        own: list[dict] | None = None,
    ) -> None:
        self._blocks = blocks or []
        self._block = np.empty(0, dtype=np.int64) if block is None else block
        self._pos = np.empty(0, dtype=np.int64) if pos is None else pos
        self._own = own or []

    @classmethod
    def of_dicts(cls, dicts: Iterable[dict]) -> EvidenceColumn:
        """A column of the dicts ``dicts``, as they are."""
        own = list(dicts)
        n = len(own)
        return cls([], np.full(n, -1, dtype=np.int64), np.arange(n, dtype=np.int64), own)

    @classmethod
    def of_columns(cls, evidence: dict, n: int) -> EvidenceColumn:
        """A column of ``n`` rows from ``evidence``, which maps each key to a column (an
        array, one value per row, or a list, taken as it is) or to one value for all rows.
        Float arrays give Python floats, None where not finite.
        """
        keys = tuple(evidence)
        columns = []
        for value in evidence.values():
            if isinstance(value, np.ndarray | list):
                if len(value) != n:
                    raise ValueError(f"evidence column of {len(value)} rows, not {n}")
                columns.append(value)
            else:
                columns.append(_Shared(clean({"v": value})["v"]))
        return cls([(keys, columns)], np.zeros(n, dtype=np.int64), np.arange(n, dtype=np.int64), [])

    # --- a list of dicts ---------------------------------------------------------------------
    def __len__(self) -> int:
        return int(self._block.size)

    def __getitem__(self, k):
        if isinstance(k, slice):  # copies: a row set in one never changes the other
            return EvidenceColumn(
                self._blocks, self._block[k].copy(), self._pos[k].copy(), self._own
            )
        b, p = int(self._block[k]), int(self._pos[k])
        if b < 0:
            return self._own[p]
        keys, columns = self._blocks[b]
        return dict(zip(keys, (_value(c, p) for c in columns), strict=True))

    def __setitem__(self, k: int, value: dict) -> None:
        # the list of dicts only grows, so columns made from this one may share it
        self._own.append(value)
        self._block[k] = -1
        self._pos[k] = len(self._own) - 1

    def __iter__(self) -> Iterator[dict]:
        step = 20_000
        for a in range(0, len(self), step):
            yield from self.dicts(np.arange(a, min(a + step, len(self))))

    def __eq__(self, other: object) -> bool:
        if isinstance(other, EvidenceColumn | list):
            return list(self) == list(other)
        return NotImplemented

    def __repr__(self) -> str:
        return f"<EvidenceColumn: {len(self)} row(s) in {len(self._blocks)} block(s)>"

    def tolist(self) -> list[dict]:
        """Every row's dict."""
        return list(self)

    def append(self, value: dict) -> None:
        """Add one row, given as a dict."""
        self.extend(EvidenceColumn.of_dicts([value]))

    def extend(self, other: EvidenceColumn | Iterable[dict]) -> None:
        """Add the rows of ``other`` (a column or dicts) at the end."""
        if not isinstance(other, EvidenceColumn):
            other = EvidenceColumn.of_dicts(other)
        block = np.where(other._block >= 0, other._block + len(self._blocks), -1)
        pos = np.where(other._block >= 0, other._pos, other._pos + len(self._own))
        self._blocks = [*self._blocks, *other._blocks]
        self._own = [*self._own, *other._own]
        self._block = np.concatenate([self._block, block])
        self._pos = np.concatenate([self._pos, pos])

    def take(self, rows) -> EvidenceColumn:
        """The rows ``rows``, in that order."""
        rows = np.asarray(rows, dtype=np.int64)
        return EvidenceColumn(self._blocks, self._block[rows], self._pos[rows], self._own)

    def groups(self, rows: np.ndarray) -> Iterator[tuple[np.ndarray, tuple | None, list, list]]:
        """Rows ``rows`` grouped by where their numbers are kept, for a reader that works a
        column at a time (:meth:`dicts`, the JSON report): for each group, the indices into
        ``rows`` it covers, its keys (None for dicts given whole), its values (a list per
        key, as :func:`_values` gives them; for dicts given whole, the list of dicts) and,
        per key, whether every value is a plain number or None (a numeric array's).
        """
        rows = np.asarray(rows, dtype=np.int64)
        block, pos = self._block[rows], self._pos[rows]
        for b in np.unique(block).tolist():
            at = np.flatnonzero(block == b)
            where = pos[at]
            if b < 0:
                own = self._own
                yield at, None, [own[p] for p in where.tolist()], []
                continue
            keys, columns = self._blocks[b]
            plain = [isinstance(c, np.ndarray) and c.dtype.kind in "biuf" for c in columns]
            yield at, keys, [_values(c, where) for c in columns], plain

    def dicts(self, rows: np.ndarray) -> list[dict]:
        """The dicts of rows ``rows``, made a block at a time."""
        out: list = [None] * len(rows)
        for at, keys, values, _ in self.groups(rows):
            if keys is None:
                made = values
            elif keys:
                made = [dict(zip(keys, row, strict=True)) for row in zip(*values, strict=True)]
            else:
                made = [{} for _ in range(at.size)]
            for i, d in zip(at.tolist(), made, strict=True):
                out[i] = d
        return out
