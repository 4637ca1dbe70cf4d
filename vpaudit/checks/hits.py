"""What a check returns: its hits, the records it found and what it found there.

A check is a generator over the audit's arrays (:class:`~vpaudit.checks._context.AuditContext`)
and its own thresholds under the policy. It yields :class:`Hits` (a block of records found
together, one array operation) or :class:`Hit` (one record, or a row of the references or
the table's problems). It states no check name and no severity: the runner
(:func:`vpaudit.auditing.run_checks`) stamps the check's name, gives each hit the severity
of its declared tier under the policy
(:meth:`~vpaudit.checks._registry.CheckSpec.severity_under`) and makes the findings table
(:class:`~vpaudit.checks.finding.Findings`).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .blocks import ValueColumn

__all__ = ["Hit", "Hits", "sentences"]


def sentences(say: Callable[..., list[str]], *columns: np.ndarray) -> ValueColumn:
    """The messages of a block of hits, made when read: ``say`` of the rows' values of
    ``columns`` (arrays, one value per row), one sentence per row.

    A check whose findings may number hundreds of thousands gives its sentences so (the
    sentence is most of a finding's memory); the columns are copied, so that a check may
    reuse its arrays.
    """
    kept = [np.array(c, copy=True) for c in columns]
    return ValueColumn.made_by(lambda p: say(*(c[p] for c in kept)), len(kept[0]))


@dataclass
class Hits:
    """Records found by a check together, one finding each.

    Attributes
    ----------
    rows : ndarray of int
        The table row of each finding's record (where it is located).
    messages : list of str or ValueColumn
        One plain sentence per row, with the numbers and units (or :func:`sentences`,
        made when read).
    evidence : dict
        The numbers behind the verdicts: each key (with its unit in the name) maps to a
        column (an array or a list, one value per row) or to one value shared by all.
    records : list of tuple of str, optional
        The record ids of each finding, when not the row's own record (or, with
        ``partners``, the ids of the row's record and its partner's).
    partners : ndarray of int, optional
        A second record row for each finding (a solid/liquid pair), named second.
    tier : str, optional
        The declared tier of every finding of the block (None: the check's own severity).
    """

    rows: np.ndarray
    messages: list[str] | ValueColumn
    evidence: dict[str, Any]
    records: list[tuple[str, ...]] | None = None
    partners: np.ndarray | None = None
    tier: str | None = None


@dataclass
class Hit:
    """One finding of a check.

    Attributes
    ----------
    row : int or None
        The table row of the record it is about; None for a row of the table's problems
        (then ``substance``, ``file`` and ``line`` say where it is).
    message : str
        One plain sentence with the numbers and units.
    evidence : dict
        The numbers behind the verdict (keys carry their unit).
    records : tuple of str, optional
        The record ids involved, when not the row's own record.
    rows : tuple of int, optional
        The table rows of ``records``, when known.
    tier : str, optional
        The declared tier of this finding (None: the check's own severity).
    substance : str, optional
        The substance, when ``row`` is None.
    file, line : str and int, optional
        Where the finding stands, when not at the row's record (a reference value's own
        line, a problem found by the reader).
    """

    row: int | None
    message: str
    evidence: dict[str, Any] = field(default_factory=dict)
    records: tuple[str, ...] | None = None
    rows: tuple[int, ...] | None = None
    tier: str | None = None
    substance: str | None = None
    file: str | None = None
    line: int | None = None
