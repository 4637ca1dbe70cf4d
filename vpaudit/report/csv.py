"""CSV report: one row per finding."""

from __future__ import annotations

import csv
import io
import json

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


def render(result) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` as CSV, one finding per row."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(COLUMNS)
    for f in result.findings:
        w.writerow(
            [
                f.severity.value,
                f.check,
                f.substance,
                " ".join(f.records),
                f.message,
                f.file or "",
                f.line or "",
                json.dumps(f.evidence, sort_keys=True),
                json.dumps(f.suggestion) if f.suggestion else "",
            ]
        )
    return buf.getvalue()
