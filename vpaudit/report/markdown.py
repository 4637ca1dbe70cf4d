"""Markdown report for a pull-request comment: counts, then findings, worst first."""

from __future__ import annotations

from ..auditing import CAUTION
from ._coverage import coverage_sentence
from ._escape import markdown_text as _cell
from ._fixes import Explained, Undecided, same_fix
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


def render(result) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` as Markdown."""
    s = result.summary
    out = [
        f"## vpaudit: {s['error']} error(s), {s['warning']} warning(s), {s['note']} note(s)",
        "",
        f"{s['records']} records, {s['substances']} substances, {s['pairs']} solid/liquid "
        "pairs audited.",
        "",
    ]
    status_of = result.status_of if result.gated else None
    if status_of is not None:
        new = [f for f in result.findings if status_of(f) == "new"]
        rest = [f for f in result.findings if status_of(f) != "new"]
        out[0] = (
            f"## vpaudit gate: {len(new)} new finding(s) since {_cell(result.gate.base)} "
            f"({sum(f.severity.value == 'error' for f in new)} error(s))"
        )
        serious, notes = new, rest
    else:
        serious = [f for f in result.findings if f.severity.value != "note"]
        notes = [f for f in result.findings if f.severity.value == "note"]
    if serious:
        out += ["| severity | check | substance | records | finding |", "|---|---|---|---|---|"]
        explained, undecided = Explained(), Undecided(s)
        for f in serious:
            out.append(
                f"| {f.severity.label} | `{f.check}` | {_cell(f.substance)} | "
                f"{_cell(', '.join(f.records))} | {_cell(f.message)}"
                f"{_suggestion(f, explained, undecided)} |"
            )
        out.append("")
    if notes:
        label = "already there or accepted" if status_of else "note(s)"
        out += [f"<details><summary>{len(notes)} {label}</summary>", ""]
        for f in notes:
            tag = f" [{status_of(f)}]" if status_of else ""
            out.append(
                f"- `{f.check}`{tag} {_cell(f.substance)} "
                f"({_cell(', '.join(f.records))}): {_cell(f.message)}"
            )
        out += ["", "</details>", ""]
    if status_of is not None and result.gate.resolved:
        resolved = result.gate.resolved
        out += [
            f"<details><summary>{len(resolved)} resolved: at {_cell(result.gate.base)}, "
            "cleared by the change</summary>",
            "",
        ]
        out += [
            f"- {f.severity.label} `{f.check}` {_cell(f.substance)} ({_cell(', '.join(f.records))})"
            for f in resolved
        ]
        out += ["", "</details>", ""]
    for sentence in shared_slip_sentences(s):
        out += [_cell(sentence), ""]
    covered = coverage_sentence(s)
    if covered:
        out += [covered, ""]
    out.append(f"> {CAUTION}")
    return "\n".join(out) + "\n"
