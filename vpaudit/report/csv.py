"""CSV report: one row per finding."""

from __future__ import annotations

import csv
import io
import json
from collections.abc import Iterator

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
    for a in range(0, max(len(findings), 1), CHUNK):
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        if a == 0:
            w.writerow(COLUMNS)
        for f in findings[a : a + CHUNK]:
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
        yield buf.getvalue()


def render(result) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` as CSV, one finding per row."""
    return "".join(chunks(result))
