"""Markdown report for a pull-request comment: counts, then findings, worst first."""

from __future__ import annotations

from collections.abc import Iterator

from ..auditing import CAUTION
from ._coverage import coverage_sentence
from ._escape import markdown_text as _cell
from ._fixes import Explained, Undecided, every_finding_command, same_fix
from ._shared import shared_slip_sentences


def _suggestion(f, explained: Explained, undecided: Undecided) -> str:
    """The likely cause and fix, when the diagnosis found one: explained at its first
    finding, named as the same fix at the others; else the readings that each clear the
    substance's errors, where several do.
    """
    if not f.suggestion:
        lead = undecided.sentence(f)
        return f" **Diagnosis:** {_cell(lead)}" if lead else ""
    if not explained.first(f.suggestion):
        return f" **Suggestion:** {_cell(same_fix(f.suggestion))}"
    return f" **Suggestion:** {_cell(f.suggestion.get('explanation', ''))}"


#: The most characters a report holds: GitHub's limit on the body of a pull-request comment
#: (its API refuses a longer one: "Body is too long (maximum is 65536 characters)").
COMMENT_LIMIT = 65_536
#: Characters kept free for the line that says how many findings were left out.
_SPARE = 400


class _Room:
    """What is left of :data:`COMMENT_LIMIT` as lines are added, and what did not fit."""

    def __init__(self, room: int) -> None:
        self.room = room
        self.left_out = 0

    def take(
        self, head: list[str], rows: Iterator[str], total: int, foot: list[str] = ()
    ) -> list[str]:
        """A block: its ``head``, as many of its ``total`` rows as fit, its ``foot``;
        nothing when not even one row fits.
        """
        out, used = [], sum(len(x) + 1 for x in [*head, *foot])
        for row in rows:
            if used + len(row) + 1 > self.room:
                break
            out.append(row)
            used += len(row) + 1
        self.left_out += total - len(out)
        if not out:
            return []
        self.room -= used
        return [*head, *out, *foot]


def render(result) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` as Markdown, within the
    :data:`COMMENT_LIMIT` of a pull-request comment: findings worst first as long as they
    fit, then a line that says how many were left to the JSON, CSV or SARIF report.
    """
    s = result.summary
    out = [
        f"## vpaudit: {s['error']} error(s), {s['warning']} warning(s), {s['note']} note(s)",
        "",
        f"{s['records']} records, {s['substances']} substances, {s['pairs']} solid/liquid "
        "pairs audited.",
        "",
    ]
    status_of = result.status_of if result.gated else None
    findings = result.findings
    severity = findings.severity
    # rows of the table, read from its columns; a row view is made only for a row shown
    if status_of is not None:
        new = [status == "new" for status in result.statuses()]
        serious = [i for i, is_new in enumerate(new) if is_new]
        notes = [i for i, is_new in enumerate(new) if not is_new]
        out[0] = (
            f"## vpaudit gate: {len(serious)} new finding(s) since {_cell(result.gate.base)} "
            f"({sum(severity[i].value == 'error' for i in serious)} error(s))"
        )
    else:
        serious = [i for i, sev in enumerate(severity) if sev.value != "note"]
        notes = [i for i, sev in enumerate(severity) if sev.value == "note"]
    tail = []
    for sentence in shared_slip_sentences(s):
        tail += [_cell(sentence), ""]
    covered = coverage_sentence(s)
    if covered:
        tail += [covered, ""]
    tail.append(f"> {CAUTION}")
    room = _Room(COMMENT_LIMIT - _SPARE - sum(len(x) + 1 for x in out + tail))
    if serious:
        explained, undecided = Explained(), Undecided(s)
        rows = (
            f"| {f.severity.label} | `{f.check}` | {_cell(f.substance)} | "
            f"{_cell(', '.join(f.records))} | {_cell(f.message)}"
            f"{_suggestion(f, explained, undecided)} |"
            for f in map(findings.__getitem__, serious)
        )
        head = ["| severity | check | substance | records | finding |", "|---|---|---|---|---|"]
        out += room.take(head, rows, len(serious)) + [""]
    if notes:
        label = "already there or accepted" if status_of else "note(s)"
        rows = (
            f"- `{f.check}`{f' [{status_of(f)}]' if status_of else ''} {_cell(f.substance)} "
            f"({_cell(', '.join(f.records))}): {_cell(f.message)}"
            for f in map(findings.__getitem__, notes)
        )
        head = [f"<details><summary>{len(notes)} {label}</summary>", ""]
        out += room.take(head, rows, len(notes), ["", "</details>", ""])
    if status_of is not None and result.gate.resolved:
        resolved = result.gate.resolved
        head = [
            f"<details><summary>{len(resolved)} resolved: at {_cell(result.gate.base)}, "
            "cleared by the change</summary>",
            "",
        ]
        rows = (
            f"- {f.severity.label} `{f.check}` {_cell(f.substance)} ({_cell(', '.join(f.records))})"
            for f in resolved
        )
        out += room.take(head, rows, len(resolved), ["", "</details>", ""])
    if room.left_out:
        command = every_finding_command(result)
        out += [
            f"*{room.left_out} more finding(s) not shown: a pull-request comment holds at most "
            f"{COMMENT_LIMIT:,} characters. The JSON, CSV and SARIF reports list every one "
            f"({_cell(command)}).*",
            "",
        ]
    return "\n".join(out + tail) + "\n"
