"""CSV report: one row per finding; a gate's adds each finding's ``status`` (new, existing
or accepted) as a last column, since its exit status counts only the new ones.

Where no fix is singled out yet several readings each clear a substance's errors, the first
error or warning of the record they correct carries them in the ``undecided`` column, as the
JSON entry of ``summary["undecided"]`` (a lead, not a fix: the ``suggestion`` cell stays
empty), as in the text report and the SARIF log.
"""

from __future__ import annotations

import csv
import io
import json
from collections.abc import Iterator

from ..checks.finding import REPORTED
from ._fixes import Undecided

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
    "undecided",
]


#: Findings written per chunk (see :func:`chunks`).
CHUNK = 20_000


def chunks(result) -> Iterator[str]:
    """The CSV text of :func:`render`, in pieces that join to it, a chunk of findings each."""
    findings = result.findings
    gated = result.gated
    undecided = Undecided(result.summary)
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
                _lead(undecided, findings, a + k, sub),
            ]
            if statuses is not None:
                row.append(statuses[k] or "new")
            w.writerow(row)
        yield buf.getvalue()


def _lead(undecided: Undecided, findings, i: int, substance: str) -> str:
    """The ``undecided`` cell of finding ``i`` (of ``substance``): its substance's readings
    where this finding is where they are said (only substances with such readings make a
    row view).
    """
    if not undecided.pending(substance):
        return ""
    entry = undecided.entry(findings[i])
    return json.dumps(entry) if entry else ""


def render(result) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` as CSV, one finding per row."""
    return "".join(chunks(result))
