"""Slips that many records of one file and source share.

The diagnosis weighs each substance on its own. But a metadata slip -- log10 P read as ln P,
mmHg taken for Pa, degC for K -- is usually made once for a whole source: its header or a
column is misread, and every record typed from it carries the same slip. When the diagnosis
suggests the same change of metadata for many substances whose records stand in one file
and cite one source, that is itself a finding about the source, and the reviewer should
check the source's header before applying the fixes one by one.

:func:`shared_slips` groups the suggested fixes (as attached to the findings) by file,
source and phase of the record they correct. A change of log base or unit (or of several
at once) that at least :data:`MIN_SUBSTANCES` substances of a group are given, and that
most of the group's suggestions are, is then tested on the source as a whole: applied to
every record of the group written with the same metadata, for up to
:data:`SAMPLE_SUBSTANCES` of its substances in table order (flagged or not), are the
substances left with errors fewer than half as many as before, most of them having had
one? Then the source's header was likely misread once for all its records (a *shared*
slip), however unsure each substance's own fix is: a change that each substance's evidence
alone cannot single out among its neighbours (log10 and mmHg at once, say) is singled out by
clearing the whole source. Changes that no evidence tells apart (bar and atm, 1.3 % apart
in pressure) propose the test together; each that clears the source is named. Where the
test fails, a change that at least :data:`MIN_SUBSTANCES` substances are given at
:data:`CONFIDENT` or above, most of the confident suggestions of the group, is a slip that
*recurs* in the typing of the source.
Less confident fixes count only through the test: they are often wrong, and the substances
diagnosed first, the worst of a large table, may share another problem. Slips of many kinds
typed one by one never add up to either. No finding, suggestion or confidence changes.
"""

from __future__ import annotations

import math
import operator
from collections import defaultdict
from itertools import chain, compress, repeat
from typing import Any

import numpy as np

from .._columns import eq
from ..checks._context import AuditContext
from ..checks._registry import Severity
from ..checks.finding import Findings
from ..policy import Policy
from ..readers.table import Table
from ..substance import records_at
from ..units import PRESSURE_UNITS
from .candidates import Change, range_read_in
from .variants import _audit_units

__all__ = [
    "CONFIDENT",
    "METADATA",
    "MIN_SUBSTANCES",
    "SAMPLE_SUBSTANCES",
    "shared_slips",
    "tried_on_source",
]

#: The metadata fields a slip of a whole source changes (its header: the log base, the
#: pressure and the temperature unit of its equations).
METADATA = ("log_base", "pressure_unit", "temperature_unit")

#: Least confidence of a suggestion counted as evidence of a recurring slip (the project's
#: "confident": a fix stated at 0.8 or above is right at least that often, docs/diagnosis.md).
CONFIDENT = 0.8

#: Least number of substances given the same change of metadata for it to be reported
#: (fewer can be a coincidence of independent slips). A choice, not a measurement, as are
#: the shares below: the report states the counts beside it.
MIN_SUBSTANCES = 3

#: Least share of the suggestions of a group (file, source, phase) that the change must be:
#: where slips of many kinds were typed one by one, none has most.
MIN_SHARE = 0.5

#: Substances of a group on which a change is tried as a whole (in table order): a bound on
#: the cost, the diagnosis's own limit (docs/diagnosis.md gives the cost).
SAMPLE_SUBSTANCES = 1000

#: A change explains the whole source when, applied to all of the sample, it leaves at most
#: this share of the substances with errors that had them, and most had them.
CLEARS = 0.5

#: Pressure units whose factors differ by less than this (in ln P) are one correction to any
#: evidence (bar and atm: 0.013; a record's default uncertainty is 0.03).
ALIKE_PRESSURE = 0.02

#: A change alike to a shared slip that, tried on the source instead, leaves errors on at most
#: this share of the substances tried more than it does, clears it as well: both are named.
ALIKE = 0.05


#: A change of metadata: (field, as written, corrected) for each field it changes, and
#: whether the range was already written in the record's unit (a temperature-unit fix).
ChangeKey = tuple[tuple[tuple[str, str, str], ...], bool]


def _change(sug: dict, rec: dict[str, Any]) -> ChangeKey:
    """The metadata that ``sug`` changes on its record, as a :data:`ChangeKey`."""
    corrected = sug.get("corrected") or {}
    fields = tuple(
        (f, str(rec[f]), str(corrected[f]))
        for f in METADATA
        if f in corrected and str(corrected[f]) != str(rec[f])
    )
    return fields, "t_min" in corrected or "t_max" in corrected


def shared_slips(ctx: AuditContext, findings: Findings) -> list[dict[str, Any]]:
    """The changes of metadata that the diagnosis suggests for several substances whose
    records share a file, a source and a phase, and that explain the whole source or recur
    in it.

    Parameters
    ----------
    ctx : AuditContext
        The audit's context (its table and record rows).
    findings : Findings
        The audit's findings, with the diagnosis's suggestions attached.

    Returns
    -------
    list of dict
        One per such change, most substances first: ``file``, ``source``, ``phase``,
        ``change`` (``{field: [as written, corrected]}``), ``range_rewritten`` (whether the
        range, already in the record's temperature unit, is rewritten in the corrected
        one, as the constants alone were in it), ``substances`` (how many are
        given it), ``confident`` (of those, at :data:`CONFIDENT` or above), ``records`` (the
        first five records it corrects, by id), ``same_metadata`` (records of that file,
        source and phase written with the same metadata), ``flagged`` (of those, how many
        draw errors or warnings), ``tried`` (``{"substances", "of", "with_errors",
        "with_errors_after"}``: the change applied to every such record of the first
        :data:`SAMPLE_SUBSTANCES` of their substances in the table, of how many, and how
        many of those have errors before and after; None where it was not tried),
        ``whole_source`` (whether it cleared most of them: a header misread once for the
        whole source) and ``or`` (the changes alike to it that clear the source as well,
        each ``{"change", "substances", "tried"}``: bar beside atm, which no evidence tells
        apart).
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
        given: dict[ChangeKey, list[tuple[str, dict]]] = defaultdict(list)
        for sub, sug, at in items:
            key = _change(sug, at)
            if key[0]:
                given[key].append((sub, sug))
        n_confident = sum(s["confidence"] >= CONFIDENT for _, s, _ in items)
        done: set[ChangeKey] = set()
        for key, got in sorted(given.items(), key=lambda kv: -len(kv[1])):
            if key in done:
                continue
            # changes no evidence tells apart (bar and atm, 1.3 % apart) propose one fix
            alike = [k for k in given if k not in done and _alike(k, key)]
            done.update(alike)
            subs = {sub for sub, _ in got}
            sure = {sub for sub, s in got if s["confidence"] >= CONFIDENT}
            recurs = len(sure) >= MIN_SUBSTANCES and len(sure) >= MIN_SHARE * n_confident
            proposers = {sub for k in alike for sub, _ in given[k]}
            n_alike = sum(len(given[k]) for k in alike)
            proposed = len(proposers) >= MIN_SUBSTANCES and n_alike >= MIN_SHARE * len(items)
            if not (recurs or proposed):
                continue
            same = _same_metadata(rec, (file, source, phase), key)
            # the change and those alike, each tried on the source (as written once)
            others = [k for k in alike if k != key]
            trials = _try_on_source(ctx, np.flatnonzero(same), [key, *others]) if proposed else []
            tried = trials[0] if trials else None
            whole = tried is not None and _clears(tried)
            if not (whole or recurs):
                continue
            # each change alike that clears the source as well is named beside it
            also = [
                {"change": _as_dict(k), "substances": len(given[k]), "tried": t}
                for k, t in zip(others, trials[1:], strict=True)
                if whole
                and t["with_errors_after"]
                <= tried["with_errors_after"] + max(1, ALIKE * tried["substances"])
            ]
            if flagged_rows is None:
                flagged_rows = _flagged_rows(findings, len(rec))
            out.append(
                {
                    "file": file,
                    "source": source,
                    "phase": phase,
                    "change": _as_dict(key),
                    "range_rewritten": key[1],
                    "substances": len(subs),
                    "confident": len(sure),
                    "records": sorted(s["record"] for _, s in got)[:5],
                    "same_metadata": int(same.sum()),
                    "flagged": int((flagged_rows & same).sum()),
                    "tried": tried,
                    "whole_source": whole,
                    "or": also,
                }
            )
    out.sort(key=lambda g: (-g["substances"], g["file"], g["source"], g["phase"]))
    return out


def tried_on_source(table: Table, policy: Policy, findings: Findings) -> list[dict[str, Any]]:
    """Each change of metadata suggested in ``findings`` (the audit of one substance, as
    ``vpaudit show`` makes it), tried on the whole source of the record it corrects: every
    record of ``table`` in the same file, source and phase written with the same metadata,
    for the first :data:`SAMPLE_SUBSTANCES` of their substances in table order, audited as
    written and as changed (as :func:`shared_slips` tries a change many substances are
    given).

    Parameters
    ----------
    table : Table
        The whole table the substance was audited in.
    policy : Policy
        The audit's policy.
    findings : Findings
        The substance's findings, with the diagnosis's suggestions attached.

    Returns
    -------
    list of dict
        One per corrected record whose source has at least :data:`MIN_SUBSTANCES`
        substances written that way: ``record``, ``file``, ``source``, ``phase``,
        ``change``, ``range_rewritten``, ``same_metadata`` (records), ``tried`` (as in
        :func:`shared_slips`) and ``whole_source`` (whether the change clears most of the
        source's substances that have errors: its header misread once for all of them).
    """
    from ..auditing import restrict

    rec = table.records
    fields = ["file", "source", "phase", *METADATA]
    out: list[dict[str, Any]] = []
    done: set[str] = set()
    for sug in findings.suggestion:
        if sug is None or sug["record"] in done:
            continue
        done.add(sug["record"])
        rows = np.flatnonzero(eq(rec["id"], sug["record"]))
        if not rows.size:
            continue
        at = dict(zip(fields, rec[fields].iloc[rows[0]].astype(object), strict=True))
        key = _change(sug, at)
        if not key[0]:
            continue
        group = (_text(at["file"]), _text(at["source"]), _text(at["phase"]))
        same = np.flatnonzero(_same_metadata(rec, group, key))
        names = list(dict.fromkeys(rec["substance"].iloc[same].astype(str)))
        if len(names) < MIN_SUBSTANCES:
            continue
        part = restrict(table, set(names[:SAMPLE_SUBSTANCES]))
        ctx = AuditContext(part, policy)
        rows = np.flatnonzero(_same_metadata(part.records, group, key))
        (tried,) = _try_on_source(ctx, rows, [key])
        tried["of"] = len(names)
        out.append(
            {
                "record": sug["record"],
                "file": group[0],
                "source": group[1],
                "phase": group[2],
                "change": _as_dict(key),
                "range_rewritten": key[1],
                "same_metadata": int(same.size),
                "tried": tried,
                "whole_source": _clears(tried),
            }
        )
    return out


def _same_metadata(rec, group: tuple[str, str, str], key: ChangeKey) -> np.ndarray:
    """Which records stand in the file, source and phase ``group`` written with the metadata
    that the change ``key`` corrects.
    """
    file, source, phase = group
    same = _is(rec["file"], file) & _is(rec["source"], source) & eq(rec["phase"], phase)
    for f, written, _ in key[0]:
        same &= eq(rec[f], written)
    return same


def _as_dict(key: ChangeKey) -> dict[str, list[str]]:
    """A change as the output gives it: ``{field: [as written, corrected]}``."""
    return {f: [written, new] for f, written, new in key[0]}


def _alike(a: ChangeKey, b: ChangeKey) -> bool:
    """Whether two changes of metadata amount to the same correction within what no
    evidence tells apart: the same fields and values, save pressure units whose factors
    differ by less than :data:`ALIKE_PRESSURE` (bar and atm, 1.3 %).
    """
    if a[1] != b[1] or [f for f, _, _ in a[0]] != [f for f, _, _ in b[0]]:
        return False
    for (f, w1, n1), (_, w2, n2) in zip(a[0], b[0], strict=True):
        if w1 != w2:
            return False
        if n1 != n2 and not (
            f == "pressure_unit"
            and n1 in PRESSURE_UNITS
            and n2 in PRESSURE_UNITS
            and abs(math.log(PRESSURE_UNITS[n1] / PRESSURE_UNITS[n2])) < ALIKE_PRESSURE
        ):
            return False
    return True


def _clears(tried: dict[str, int]) -> bool:
    """Whether a change tried on a source's records explains the whole source: most of the
    substances tried had errors, and it leaves at most :data:`CLEARS` of them with any.
    """
    before, after = tried["with_errors"], tried["with_errors_after"]
    return before > 0.5 * tried["substances"] and after <= CLEARS * before


def _try_on_source(
    ctx: AuditContext, rows: np.ndarray, keys: list[ChangeKey]
) -> list[dict[str, int]]:
    """Apply each change of ``keys`` in turn to every record ``rows`` of up to
    :data:`SAMPLE_SUBSTANCES` of their substances (the first in table order) and audit
    those substances as written (once) and as changed: how many have errors either way,
    one dict per change.
    """
    codes = ctx.codes[rows]
    rows, codes = rows[codes >= 0], codes[codes >= 0]
    first = np.sort(np.unique(codes, return_index=True)[1])
    n_all = first.size
    sample = codes[first[:SAMPLE_SUBSTANCES]].tolist()
    keep = np.isin(codes, sample)
    rows, codes = rows[keep], codes[keep]
    units = [(c, ()) for c in sample]
    for key in keys:
        changes = _changes(ctx, rows, codes, key)
        units += [(c, tuple(changes[c])) for c in sample]
    outcomes = _audit_units(ctx.table, ctx, units)
    errored = [any(f.severity is Severity.error for f in o.findings) for o in outcomes]
    n = len(sample)
    return [
        {
            "substances": n,
            "of": n_all,
            "with_errors": sum(errored[:n]),
            "with_errors_after": sum(errored[n * (k + 1) : n * (k + 2)]),
        }
        for k in range(len(keys))
    ]


def _changes(
    ctx: AuditContext, rows: np.ndarray, codes: np.ndarray, key: ChangeKey
) -> dict[int, list[Change]]:
    """The change ``key`` as the cell changes of records ``rows``, by substance code."""
    fields, range_converted = key
    out: dict[int, list[Change]] = defaultdict(list)
    written = records_at(ctx.table, rows) if range_converted else repeat(None)
    unit = next((new for f, _, new in fields if f == "temperature_unit"), None)
    for r, code, at in zip(rows.tolist(), codes.tolist(), written, strict=False):
        out[code] += [Change(r, f, new) for f, _, new in fields]
        if at is not None and unit is not None:  # the range as written, read in the new unit
            out[code] += range_read_in(at, r, unit)
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
