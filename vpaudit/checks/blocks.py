"""Columns of the findings table kept as the blocks the checks gave, made into Python values
only when read.

A check reports thousands of rows at once, and most fields of its findings follow from a
few arrays: the substance, the record ids, the file and the line of each row all follow
from the table rows. :class:`BlockColumn` keeps such blocks and, for each finding, which
block and which position in it hold its value; reordering or slicing the findings moves
two integer arrays, and a value is made (a Python string, a tuple) only when a report, the
diagnosis or a row view reads it, a chunk of rows at a time. :class:`ValueColumn` is the
column of plain values (substances, records, messages, locations);
:class:`~vpaudit.checks.evidence.EvidenceColumn` the column of evidence dicts.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from itertools import chain
from operator import itemgetter
from typing import Any

import numpy as np

__all__ = ["BlockColumn", "ValueColumn"]

#: Rows made into Python values at a time when a whole column is iterated.
_STEP = 20_000

#: The integer type of the block and position of each row.
_INDEX = np.int32


def _index(values) -> np.ndarray:
    """``values`` as block or position numbers."""
    return np.asarray(values, dtype=_INDEX)


class BlockColumn:
    """Rows of blocks: row ``k`` is position ``pos[k]`` of block ``block[k]``; a block of -1
    means the value ``own[pos[k]]``, given on its own (a row appended or changed later).

    Behaves as a list: indexing, slicing (a copy), iteration, ``append``, ``extend``,
    assignment to one row, :meth:`put`, :meth:`take` and :meth:`values`. A subclass says
    what a block is and how its values are made (:meth:`_one` and :meth:`values`).
    """

    __slots__ = ("_blocks", "_block", "_pos", "_own")

    def __init__(
        self,
        blocks: list | None = None,
        block: np.ndarray | None = None,
        pos: np.ndarray | None = None,
        own: list | None = None,
    ) -> None:
        self._blocks = blocks or []
        self._block = np.empty(0, dtype=_INDEX) if block is None else _index(block)
        self._pos = np.empty(0, dtype=_INDEX) if pos is None else _index(pos)
        self._own = own or []

    @classmethod
    def of_own(cls, values: Iterable) -> BlockColumn:
        """A column of ``values``, each given on its own."""
        own = list(values)
        n = len(own)
        return cls([], np.full(n, -1, dtype=_INDEX), np.arange(n, dtype=_INDEX), own)

    @classmethod
    def of_block(cls, block: Any, n: int) -> BlockColumn:
        """A column of the ``n`` rows of one block."""
        return cls([block], np.zeros(n, dtype=_INDEX), np.arange(n, dtype=_INDEX), [])

    # --- what a block is (subclasses) -------------------------------------------------------
    def _one(self, block: Any, position: int) -> Any:
        """The value at ``position`` of ``block``."""
        raise NotImplementedError

    def values(self, rows: np.ndarray) -> list:
        """The values of rows ``rows``, made a block at a time."""
        raise NotImplementedError

    # --- a list -------------------------------------------------------------------------------
    def __len__(self) -> int:
        return int(self._block.size)

    def __getitem__(self, k):
        if isinstance(k, slice):  # copies: a row set in one never changes the other
            return type(self)(self._blocks, self._block[k].copy(), self._pos[k].copy(), self._own)
        b, p = int(self._block[k]), int(self._pos[k])
        return self._own[p] if b < 0 else self._one(self._blocks[b], p)

    def __setitem__(self, k: int, value: Any) -> None:
        # the own values only grow, so columns made from this one may share them
        self._own.append(value)
        self._block[k] = -1
        self._pos[k] = len(self._own) - 1

    def __iter__(self) -> Iterator:
        n = len(self)
        chunks = (np.arange(a, min(a + _STEP, n)) for a in range(0, n, _STEP))
        return chain.from_iterable(map(self.values, chunks))

    def __eq__(self, other: object) -> bool:
        if isinstance(other, BlockColumn | list):
            return list(self) == list(other)
        return NotImplemented

    __hash__ = None  # type: ignore[assignment]  # mutable, as a list

    def __repr__(self) -> str:
        return f"<{type(self).__name__}: {len(self)} row(s) in {len(self._blocks)} block(s)>"

    def tolist(self) -> list:
        """Every row's value."""
        return self.values(np.arange(len(self)))

    def append(self, value: Any) -> None:
        """Add one row."""
        self._own.append(value)
        self._block = np.append(self._block, _INDEX(-1))
        self._pos = np.append(self._pos, _INDEX(len(self._own) - 1))

    def extend(self, other: BlockColumn | Iterable) -> None:
        """Add the rows of ``other`` (a column of the same kind, or values) at the end."""
        if not isinstance(other, BlockColumn):
            other = type(self).of_own(other)
        block, pos = self._adopt(other)
        self._block = np.concatenate([self._block, block])
        self._pos = np.concatenate([self._pos, pos])

    def put(self, rows, other: BlockColumn) -> None:
        """Set rows ``rows`` to the rows of ``other`` (a column of the same kind), in that
        order.
        """
        rows = np.asarray(rows, dtype=np.int64)
        self._block[rows], self._pos[rows] = self._adopt(other)

    def _adopt(self, other: BlockColumn) -> tuple[np.ndarray, np.ndarray]:
        """Take in the blocks and own values of ``other``; return the block and position
        of each of its rows in this column.
        """
        block = np.where(other._block >= 0, other._block + len(self._blocks), -1)
        pos = np.where(other._block >= 0, other._pos, other._pos + len(self._own))
        self._blocks = [*self._blocks, *other._blocks]
        if other._own:
            self._own = [*self._own, *other._own]
        return _index(block), _index(pos)

    def take(self, rows) -> BlockColumn:
        """The rows ``rows``, in that order."""
        rows = np.asarray(rows, dtype=np.int64)
        return type(self)(self._blocks, self._block[rows], self._pos[rows], self._own)

    def _where(self, rows: np.ndarray) -> Iterator[tuple[np.ndarray, int, np.ndarray]]:
        """Rows ``rows`` grouped by block: for each, the indices into ``rows`` it covers, the
        block (-1: values given on their own) and the positions in it.
        """
        rows = np.asarray(rows, dtype=np.int64)
        block, pos = self._block[rows], self._pos[rows]
        if not block.size:
            return
        first = int(block[0])
        if (block == first).all():  # the usual chunk: one block
            yield np.arange(rows.size), first, pos
            return
        order = np.argsort(block, kind="stable")
        starts = np.flatnonzero(np.diff(block[order])) + 1
        for at in np.split(order, starts):
            yield at, int(block[at[0]]), pos[at]


class ValueColumn(BlockColumn):
    """A column of plain values (texts, tuples, numbers, None) whose blocks are lists (the
    values themselves) or functions that make the values of given positions
    (``make(positions) -> list``, positions an integer array).
    """

    __slots__ = ()

    @classmethod
    def made_by(cls, make: Callable[[np.ndarray], list], n: int) -> ValueColumn:
        """A column of ``n`` rows whose values ``make`` makes when read."""
        return cls.of_block(make, n)  # type: ignore[return-value]

    @classmethod
    def of_list(cls, values: list) -> ValueColumn:
        """A column of the list ``values``, as it is (one block)."""
        if not values:
            return cls()
        return cls.of_block(values, len(values))  # type: ignore[return-value]

    def _one(self, block: Any, position: int) -> Any:
        if isinstance(block, list):
            return block[position]
        return block(np.array([position], dtype=np.int64))[0]

    def values(self, rows: np.ndarray) -> list:
        """The values of rows ``rows``, made a block at a time."""
        made: list = []
        groups = list(self._where(rows))
        for _, b, where in groups:
            if b < 0:
                own = self._own
                made += [own[p] for p in where.tolist()]
            else:
                block = self._blocks[b]
                if isinstance(block, list):
                    made += [block[p] for p in where.tolist()]
                else:
                    made += block(where.astype(np.int64))
        if len(groups) < 2:  # one block: made in the order asked
            return made
        back = np.empty(len(made), dtype=np.int64)  # where each row asked was made
        back[np.concatenate([at for at, _, _ in groups])] = np.arange(len(made))
        return list(itemgetter(*back.tolist())(made))
