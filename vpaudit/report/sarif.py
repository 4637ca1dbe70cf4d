"""SARIF 2.1.0 report: one run, the check registry as the rules, one result per finding
located at the record's file and line.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

from .. import __version__
from ..checks._registry import ordered

SCHEMA = "https://json.schemastore.org/sarif-2.1.0.json"
_EXTRA_RULES = {
    "internal-error": "A check failed to run; the others still ran.",
    "acceptance-expired": "An accepted finding's acceptance has expired.",
    "acceptance-unused": "An accepted finding no longer occurs.",
    "base-unreadable": "The table could not be read at the gate's base revision.",
}


def _uri(path: str | None) -> str | None:
    if not path:
        return None
    p = Path(path)
    try:
        return p.resolve().relative_to(Path.cwd().resolve()).as_posix()
    except ValueError:
        return p.as_posix()


def _fix(suggestion: dict) -> dict | None:
    """A SARIF fix: the suggestion's explanation and the exact replacement of each record's
    line(s) that ``vpaudit apply`` would write (None when the files no longer hold them).
    """
    from ..errors import VpauditError
    from ..readers.lines import split_lines
    from ..revisions import suggestion_edits

    try:
        edits = suggestion_edits(suggestion)
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
    for f in result.findings:
        r = {
            "ruleId": f.check,
            "ruleIndex": index.get(f.check, 0),
            "level": f.severity.sarif_level,
            "message": {"text": f.message},
            "partialFingerprints": {
                "vpaudit/v1": hashlib.sha256(json.dumps(f.key).encode()).hexdigest()[:32]
            },
            "properties": {
                "substance": f.substance,
                "records": list(f.records),
                "evidence": f.evidence,
            },
        }
        uri = _uri(f.file)
        if uri:
            loc = {"physicalLocation": {"artifactLocation": {"uri": uri}}}
            if f.line:
                loc["physicalLocation"]["region"] = {"startLine": int(f.line)}
            r["locations"] = [loc]
        if status_of:
            status = status_of(f)
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
            fix = _fix(f.suggestion)
            if fix is not None:
                r["fixes"] = [fix]
        results.append(r)
    log = {
        "$schema": SCHEMA,
        "version": "2.1.0",
        "runs": [
            {
                "tool": {"driver": {"name": "vpaudit", "version": __version__, "rules": rules}},
                "results": results,
            }
        ],
    }
    return json.dumps(log, indent=1, default=float) + "\n"
