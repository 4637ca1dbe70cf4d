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

from .blocks import BlockColumn

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


class EvidenceColumn(BlockColumn):
    """Evidence of each finding: rows of blocks of columns, or dicts given one by one.

    A block is ``(keys, columns)``: one column (an array, a list or a shared value) per
    key. A row of block -1 is a dict given whole (a finding made one at a time, or changed
    later). Behaves as a list of dicts (:class:`~vpaudit.checks.blocks.BlockColumn`).
    """

    __slots__ = ()

    @classmethod
    def of_dicts(cls, dicts: Iterable[dict]) -> EvidenceColumn:
        """A column of the dicts ``dicts``, as they are."""
        return cls.of_own(dicts)  # type: ignore[return-value]

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
        return cls.of_block((keys, columns), n)  # type: ignore[return-value]

    def _one(self, block, position: int) -> dict:
        keys, columns = block
        return dict(zip(keys, (_value(c, position) for c in columns), strict=True))

    def groups(self, rows: np.ndarray) -> Iterator[tuple[np.ndarray, tuple | None, list, list]]:
        """Rows ``rows`` grouped by where their numbers are kept, for a reader that works a
        column at a time (:meth:`dicts`, the JSON report): for each group, the indices into
        ``rows`` it covers, its keys (None for dicts given whole), its values (a list per
        key, as :func:`_values` gives them; for dicts given whole, the list of dicts) and,
        per key, whether every value is a plain number or None (a numeric array's).
        """
        for at, b, where in self._where(rows):
            if b < 0:
                own = self._own
                yield at, None, [own[p] for p in where.tolist()], []
                continue
            keys, columns = self._blocks[b]
            where = where.astype(np.int64)
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

    values = dicts
