"""Markdown report for a pull-request comment: counts, then findings, worst first."""

from __future__ import annotations

from ..audit import CAUTION


def _cell(text: str) -> str:
    return str(text).replace("|", "\\|").replace("\n", " ")


def render(result) -> str:
    """Render an :class:`~vpaudit.audit.AuditResult` as Markdown."""
    s = result.summary
    out = [
        f"## vpaudit: {s['error']} error(s), {s['warning']} warning(s), {s['note']} note(s)",
        "",
        f"{s['records']} records, {s['substances']} substances, {s['pairs']} solid/liquid "
        "pairs audited.",
        "",
    ]
    serious = [f for f in result.findings if f.severity.value != "note"]
    notes = [f for f in result.findings if f.severity.value == "note"]
    if serious:
        out += ["| severity | check | substance | records | finding |", "|---|---|---|---|---|"]
        for f in serious:
            out.append(
                f"| {f.severity.value} | `{f.check}` | {_cell(f.substance)} | "
                f"{_cell(', '.join(f.records))} | {_cell(f.message)} |"
            )
        out.append("")
    if notes:
        out += [f"<details><summary>{len(notes)} note(s)</summary>", ""]
        for f in notes:
            out.append(
                f"- `{f.check}` {_cell(f.substance)} ({_cell(', '.join(f.records))}): "
                f"{_cell(f.message)}"
            )
        out += ["", "</details>", ""]
    out.append(f"> {CAUTION}")
    return "\n".join(out) + "\n"
