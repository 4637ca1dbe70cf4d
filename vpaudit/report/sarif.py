"""SARIF 2.1.0 report: one run, the check registry as the rules, one result per finding
located at the record's file and line, and one per slip that many records of a source share
(``shared-slip``, at the first of its records, the others as related locations). Where no
fix is singled out yet several readings each clear a substance's errors, the first error of
the record they correct says so in its message and carries them as ``properties.undecided``
(a lead, not a fix: no ``fixes`` entry).

A log holds at most :data:`RESULT_LIMIT` results, the most serious first (in a gate's log the
new findings first); how many it leaves out is said in a tool execution notification of the
run's invocation and in ``runs[0].properties.results_left_out``.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

from .. import __version__
from ..checks._registry import ordered
from ._fixes import Undecided, fix_key, undecided_sentence

SCHEMA = "https://json.schemastore.org/sarif-2.1.0.json"
#: The most results a run may hold: GitHub code scanning rejects an upload with more than
#: 25,000 results per run (and shows the 5,000 most severe); docs.github.com, "SARIF results
#: exceed one or more limits".
RESULT_LIMIT = 25_000
_EXTRA_RULES = {
    "internal-error": "A check failed to run; the others still ran.",
    "acceptance-expired": "An accepted finding's acceptance has expired.",
    "acceptance-unused": "An accepted finding no longer occurs.",
    "base-unreadable": "The table could not be read at the gate's base revision.",
    "shared-slip": "Many records of one source are given the same fix of their metadata: "
    "the source's header misread once for all of them, or a slip that recurs in its typing "
    "(not a check: the records' own findings carry the verdicts).",
}


def _uri(path: str | None) -> str | None:
    if not path:
        return None
    p = Path(path)
    try:
        return p.resolve().relative_to(Path.cwd().resolve()).as_posix()
    except ValueError:
        return p.as_posix()


def _fix(suggestion: dict, files: dict) -> dict | None:
    """A SARIF fix: the suggestion's explanation and the exact replacement of each record's
    line(s) that ``vpaudit apply`` would write (None when the files no longer hold them);
    ``files`` keeps each table file read once for all the log's fixes.
    """
    from ..errors import VpauditError
    from ..readers.lines import split_lines
    from ..revisions import suggestion_edits

    try:
        edits = suggestion_edits(suggestion, files)
    except (VpauditError, OSError):
        return None
    changes = []
    for e in edits:
        last = e.line + len(split_lines(e.line_before)) - 1  # the block's last line
        changes.append(
            {
                "artifactLocation": {"uri": _uri(e.file)},
                "replacements": [
                    {
                        "deletedRegion": {"startLine": e.line, "endLine": last},
                        "insertedContent": {"text": e.line_after.rstrip("\r\n")},
                    }
                ],
            }
        )
    return {"description": {"text": suggestion.get("explanation", "")}, "artifactChanges": changes}


def render(result) -> str:
    """Render an audit or gate result as a SARIF 2.1.0 log."""
    rules = [
        {
            "id": c.name,
            "name": c.name,
            "shortDescription": {"text": c.summary},
            "fullDescription": {"text": c.basis},
            "help": {"text": c.doc or c.summary},
            "defaultConfiguration": {"level": c.severity.sarif_level},
        }
        for c in ordered()
    ]
    rules += [
        {"id": k, "name": k, "shortDescription": {"text": v}} for k, v in _EXTRA_RULES.items()
    ]
    index = {r["id"]: i for i, r in enumerate(rules)}
    status_of = result.status_of if result.gated else None
    results = []
    fixed_at: dict[str, dict] = {}  # a corrected record -> its location, for the shared slips
    new_records: set[str] = set()
    open_ = Undecided(result.summary)
    fixes: dict[tuple, dict | None] = {}  # each fix made once, each file read once
    files: dict = {}
    shared = len(result.summary.get("shared_slips") or [])  # a result each, made below
    kept = _most_serious(result, RESULT_LIMIT - shared)
    for f in result.findings.take(kept) if kept is not None else result.findings:
        lead = open_.entry(f)
        text = (
            f.message if lead is None else f"{f.message}\n\nDiagnosis: {undecided_sentence(lead)}"
        )
        r = {
            "ruleId": f.check,
            "ruleIndex": index.get(f.check, 0),
            "level": f.severity.sarif_level,
            "message": {"text": text},
            "partialFingerprints": {
                "vpaudit/v1": hashlib.sha256(json.dumps(f.key).encode()).hexdigest()[:32]
            },
            "properties": {
                "substance": f.substance,
                "records": list(f.records),
                "evidence": f.evidence,
            },
        }
        if lead is not None:  # no fix singled out: the readings that each clear the errors
            r["properties"]["undecided"] = lead
        uri = _uri(f.file)
        if uri:
            loc = {"physicalLocation": {"artifactLocation": {"uri": uri}}}
            if f.line:
                loc["physicalLocation"]["region"] = {"startLine": int(f.line)}
            r["locations"] = [loc]
            if f.suggestion:
                fixed_at.setdefault(f.suggestion.get("record"), loc)
        if status_of:
            status = status_of(f)
            if status == "new":
                new_records.update(f.records)
            r["baselineState"] = {"new": "new", "existing": "unchanged", "accepted": "unchanged"}[
                status
            ]
            if status == "accepted":
                r["suppressions"] = [
                    {
                        "kind": "external",
                        "status": "accepted",
                        "justification": "accepted in accepted.toml",
                    }
                ]
        if f.suggestion:
            key = fix_key(f.suggestion)  # findings of one substance share their fix
            if key not in fixes:
                fixes[key] = _fix(f.suggestion, files)
            if fixes[key] is not None:
                r["fixes"] = [fixes[key]]
        results.append(r)
    results += _shared_slips(result, index, fixed_at, new_records if status_of else None)
    run: dict = {
        "tool": {"driver": {"name": "vpaudit", "version": __version__, "rules": rules}},
        "results": results,
    }
    if kept is not None:
        left = len(result.findings) - len(kept)
        run["invocations"] = [
            {
                "executionSuccessful": True,
                "toolExecutionNotifications": [
                    {
                        "level": "warning",
                        "message": {
                            "text": f"{left} of {len(result.findings)} findings are left out: "
                            f"a run holds at most {RESULT_LIMIT} results (GitHub code scanning "
                            "rejects more), the most serious"
                            + (", new ones first" if status_of else "")
                            + ". The JSON and CSV reports list every finding."
                        },
                    }
                ],
            }
        ]
        run["properties"] = {"results_left_out": left}
    log = {"$schema": SCHEMA, "version": "2.1.0", "runs": [run]}
    return json.dumps(log, indent=1, default=float) + "\n"


def _most_serious(result, room: int) -> list[int] | None:
    """The rows of the ``room`` findings a log keeps, in table order, when there are more:
    in a gate's log the new findings first, then by severity, then in table order; None
    when all fit.
    """
    findings = result.findings
    if len(findings) <= room:
        return None
    new = [status == "new" for status in result.statuses()] if result.gated else None
    severity = findings.severity
    order = sorted(
        range(len(findings)),
        key=lambda i: (not new[i] if new else False, -severity[i].rank, i),
    )
    return sorted(order[: max(room, 0)])


def _shared_slips(
    result, index: dict[str, int], fixed_at: dict[str, dict], new_records: set[str] | None
) -> list[dict]:
    """One result per slip that many records of one source share or that recurs there
    (``summary["shared_slips"]``), worded as the text report words it: a warning for a
    source's header misread once, a note for a slip that recurs. It stands at the first of
    its records whose fix the log locates, the others as related locations; in a gate's log
    it is new when one of its records has a new finding.
    """
    from ._shared import shared_slip_sentences

    groups = result.summary.get("shared_slips") or []
    out = []
    for g, sentence in zip(groups, shared_slip_sentences(result.summary), strict=True):
        key = ["shared-slip", g["file"], g["source"], g["phase"], g["change"]]
        r = {
            "ruleId": "shared-slip",
            "ruleIndex": index["shared-slip"],
            "level": "warning" if g["whole_source"] else "note",
            "message": {"text": sentence},
            "partialFingerprints": {
                "vpaudit/v1": hashlib.sha256(json.dumps(key).encode()).hexdigest()[:32]
            },
            "properties": {"shared_slip": g},
        }
        where = [(rec, fixed_at[rec]) for rec in g["records"] if rec in fixed_at]
        if where:
            r["locations"] = [where[0][1]]
            r["relatedLocations"] = [
                {**loc, "id": k, "message": {"text": rec}}
                for k, (rec, loc) in enumerate(where[1:], 1)
            ]
        if new_records is not None:
            new = any(rec in new_records for rec in g["records"])
            r["baselineState"] = "new" if new else "unchanged"
        out.append(r)
    return out
