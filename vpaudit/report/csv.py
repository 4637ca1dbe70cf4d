"""CSV report: one row per finding; a gate's adds each finding's ``status`` (new, existing
or accepted) as a last column, since its exit status counts only the new ones.
"""

from __future__ import annotations

import csv
import io
import json
from collections.abc import Iterator

from ..checks.finding import REPORTED

COLUMNS = [
    "severity",
    "check",
    "substance",
    "records",
    "message",
    "file",
    "line",
    "evidence",
    "suggestion",
]


#: Findings written per chunk (see :func:`chunks`).
CHUNK = 20_000


def chunks(result) -> Iterator[str]:
    """The CSV text of :func:`render`, in pieces that join to it, a chunk of findings each."""
    findings = result.findings
    gated = result.gated
    for a in range(0, max(len(findings), 1), CHUNK):
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        if a == 0:
            w.writerow(COLUMNS + ["status"] if gated else COLUMNS)
        part = slice(a, a + CHUNK)
        columns = (getattr(findings, name)[part] for name in REPORTED)
        statuses = findings.status[part] if gated else None
        for k, (check, sev, sub, recs, msg, ev, sug, file, line) in enumerate(
            zip(*columns, strict=True)
        ):
            row = [
                sev.value,
                check,
                sub,
                " ".join(recs),
                msg,
                file or "",
                line or "",
                json.dumps(ev, sort_keys=True),
                json.dumps(sug) if sug else "",
            ]
            if statuses is not None:
                row.append(statuses[k] or "new")
            w.writerow(row)
        yield buf.getvalue()


def render(result) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` as CSV, one finding per row."""
    return "".join(chunks(result))
