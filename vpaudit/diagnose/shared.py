"""Slips that many records of one file and source share.

The diagnosis weighs each substance on its own. But a metadata slip -- log10 P read as ln P,
mmHg taken for Pa, degC for K -- is usually made once for a whole source: its header or a
column is misread, and every record typed from it carries the same slip. When the diagnosis
suggests the same change of metadata for many substances whose records stand in one file
and cite one source, that is itself a finding about the source, and the reviewer should
check the source's header before applying the fixes one by one.

:func:`shared_slips` tallies the suggested fixes (as attached to the findings) by file,
source and phase of the record they correct, and reports each change that at least
:data:`MIN_SUBSTANCES` substances are confidently given (at :data:`CONFIDENT` or above: a
less confident fix is often wrong, and the substances diagnosed first, the worst, may share
another problem) and that most of the confident suggestions there are (so that slips of many
kinds, each typed on its own, do not add up to one). Beside it, it counts the records of
that file, source and phase written with the same metadata, and how many of them draw
errors or warnings: most of them point at a header misread for the whole source; a few, at
a slip that recurs in the typing. It changes no finding, suggestion or confidence.
"""

from __future__ import annotations

import operator
from collections import Counter, defaultdict
from itertools import chain, compress, repeat
from typing import Any

import numpy as np

from .._columns import eq
from ..checks._context import AuditContext
from ..checks._registry import Severity
from ..checks.finding import Findings

__all__ = ["CONFIDENT", "MIN_SUBSTANCES", "METADATA", "shared_slips"]

#: The metadata fields a slip of a whole source changes (its header: the log base, the
#: pressure and the temperature unit of its equations).
METADATA = ("log_base", "pressure_unit", "temperature_unit")

#: Least confidence of a suggestion counted as evidence of a shared slip (the project's
#: "confident": a fix stated at 0.8 or above is right at least that often, docs/diagnosis.md).
CONFIDENT = 0.8

#: Least number of substances confidently given the same change of metadata for it to be
#: reported as shared (fewer can be a coincidence of independent slips). A choice, not a
#: measurement, as are the two shares below: the report states the counts beside it.
MIN_SUBSTANCES = 3

#: Least share of the confident suggestions on records of one file, source and phase that
#: the change must have: where slips of many kinds were typed one by one, none has most.
MIN_SHARE = 0.5

#: Least share of the records with the same metadata that draw errors or warnings for the
#: slip to be called one of the whole source (a header misread once), not a recurring one.
WHOLE_SOURCE = 0.5


def _change(sug: dict, rec: dict[str, Any]) -> tuple[tuple[str, str, str], ...]:
    """The metadata that ``sug`` changes on its record: (field, as written, corrected)."""
    corrected = sug.get("corrected") or {}
    return tuple(
        (f, str(rec[f]), str(corrected[f]))
        for f in METADATA
        if f in corrected and str(corrected[f]) != str(rec[f])
    )


def shared_slips(ctx: AuditContext, findings: Findings) -> list[dict[str, Any]]:
    """The changes of metadata that the diagnosis confidently suggests for several
    substances whose records share a file, a source and a phase.

    Parameters
    ----------
    ctx : AuditContext
        The audit's context (its table and record rows).
    findings : Findings
        The audit's findings, with the diagnosis's suggestions attached.

    Returns
    -------
    list of dict
        One per shared change, most substances first: ``file``, ``source``, ``phase``,
        ``change`` (``{field: [as written, corrected]}``), ``substances`` (how many are
        given it), ``confident`` (of those, at :data:`CONFIDENT` or above), ``records`` (the
        first five records it corrects, by id), ``same_metadata`` (records of that file,
        source and phase written with the same metadata), ``flagged`` (of those, how many
        draw errors or warnings) and ``whole_source`` (whether most of those are flagged).
    """
    seen: dict[tuple[str, str], dict] = {}  # (substance, record) -> its suggestion
    given_one = map(operator.is_not, findings.suggestion, repeat(None))
    pairs = zip(findings.substance, findings.suggestion, strict=True)
    for sub, sug in compress(pairs, given_one):
        seen.setdefault((sub, sug["record"]), sug)
    if len(seen) < MIN_SUBSTANCES:
        return []
    rec = ctx.table.records
    rows = np.flatnonzero(rec["id"].isin([rid for _, rid in seen]).to_numpy())
    # the fields that group the suggestions, of their records only, as plain values
    fields = ["file", "source", "phase", *METADATA]
    cells = {
        r: dict(zip(fields, values, strict=True))
        for r, values in zip(
            rows.tolist(),
            rec[fields].iloc[rows].astype(object).itertuples(index=False),
            strict=True,
        )
    }
    row_of = {ctx.id(r): r for r in cells}
    by_group: dict[tuple, list[tuple[str, dict, dict]]] = defaultdict(list)
    for (sub, rid), sug in seen.items():
        r = row_of.get(rid)
        if r is None:
            continue
        at = cells[r]
        group = (_text(at["file"]), _text(at["source"]), _text(at["phase"]))
        by_group[group].append((sub, sug, at))
    out = []
    flagged_rows = None
    for (file, source, phase), items in by_group.items():
        changes = Counter()
        given: dict[tuple, list[tuple[str, dict, dict]]] = defaultdict(list)
        for sub, sug, at in items:
            change = _change(sug, at)
            if change:
                changes[change] += 1
                given[change].append((sub, sug, at))
        # only confident suggestions are evidence (those below 0.8 are often wrong, and
        # the worst substances, which are diagnosed first, may share another problem)
        n_confident = sum(s["confidence"] >= CONFIDENT for _, s, _ in items)
        for change, _ in changes.most_common():
            sure = {sub for sub, s, _ in given[change] if s["confidence"] >= CONFIDENT}
            if len(sure) < MIN_SUBSTANCES or len(sure) < MIN_SHARE * n_confident:
                continue
            subs = {sub for sub, _, _ in given[change]}
            same = _is(rec["file"], file) & _is(rec["source"], source) & eq(rec["phase"], phase)
            for f, written, _ in change:
                same &= eq(rec[f], written)
            if flagged_rows is None:
                flagged_rows = _flagged_rows(findings, len(rec))
            flagged = flagged_rows & same
            n_same, n_flagged = int(same.sum()), int(flagged.sum())
            out.append(
                {
                    "file": file,
                    "source": source,
                    "phase": phase,
                    "change": {f: [written, new] for f, written, new in change},
                    "substances": len(subs),
                    "confident": len(sure),
                    "records": sorted(s["record"] for _, s, _ in given[change])[:5],
                    "same_metadata": n_same,
                    "flagged": n_flagged,
                    "whole_source": n_flagged >= WHOLE_SOURCE * n_same,
                }
            )
    out.sort(key=lambda g: (-g["substances"], g["file"], g["source"], g["phase"]))
    return out


def _text(value: Any) -> str:
    """A text cell as a string, "" where it is empty."""
    return "" if value is None or value != value else str(value)


def _is(column, value: str) -> np.ndarray:
    """Whether each cell of a text column is ``value`` ("" matching an empty cell)."""
    return column.isna().to_numpy() if value == "" else eq(column, value)


def _flagged_rows(findings: Findings, n: int) -> np.ndarray:
    """Whether each record row is named by an error or a warning (iterated in C: an audit of
    every record of a large table can have millions of findings).
    """
    flagged = np.zeros(n, dtype=bool)
    serious = map(operator.is_not, findings.severity, repeat(Severity.note))
    rows = np.fromiter(chain.from_iterable(compress(findings.rows, serious)), dtype=np.int64)
    flagged[rows] = True
    return flagged
