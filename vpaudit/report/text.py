"""Terminal report: grouped by substance, worst first, with a one-line summary."""

from __future__ import annotations

import textwrap
from collections import defaultdict

from ..auditing import CAUTION
from ._coverage import coverage_sentence
from ._escape import visible
from ._fixes import Explained, Undecided, apply_command, same_fix
from ._shared import shared_slip_sentences


def _counts(findings) -> str:
    parts = []
    for sev in ("error", "warning", "note"):
        n = sum(f.severity.value == sev for f in findings)
        if n:
            parts.append(f"{n} {sev}{'s' if n != 1 else ''}")
    return ", ".join(parts) or "nothing found"


def render(result, width: int = 100) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` for a terminal."""
    s = result.summary
    policy = result.policy_description.get("label", "preset evaluated")
    if result.gated:
        lines = [
            f"vpaudit gate of {result.table_path or 'table'} against {result.gate.base}: "
            f"{result.gate.affected} substance(s) changed; re-audited their {s['records']} "
            f"records and {s['pairs']} solid/liquid pairs (policy: {policy})",
            "",
        ]
    else:
        lines = [
            f"vpaudit audit of {result.table_path or 'table'}: {s['records']} records, "
            f"{s['substances']} substances, {s['pairs']} solid/liquid pairs "
            f"(policy: {policy})",
            "",
        ]
    wrap = textwrap.TextWrapper(
        width=width,
        initial_indent=" " * 6,
        subsequent_indent=" " * 6,
        break_on_hyphens=False,  # check names and kinds stay whole
    )
    status_of = result.status_of if result.gated else None
    undecided = Undecided(s)  # said once per substance, in the first block that has it

    def block(findings) -> None:
        groups = defaultdict(list)
        for f in findings:
            groups[f.substance].append(f)

        def rank(name):
            fs = groups[name]
            return (-max(f.severity.rank for f in fs), -len(fs), name)

        for name in sorted(groups, key=rank):
            fs = groups[name]
            lines.append(f"{name or '(table)'} -- {_counts(fs)}")
            explained = Explained()  # each substance's fix is explained once
            for f in fs:
                where = f" ({f.file}{f':{f.line}' if f.line else ''})" if f.file else ""
                ident = f.spec if status_of else (f"{f.check}: {', '.join(f.records)}")
                lines.append(f"  {f.severity.label:<8}{ident}{where}")
                lines.extend(wrap.wrap(f.message))
                lead = undecided.sentence(f)
                if lead:
                    lines.extend(wrap.wrap(f"diagnosis: {lead}"))
                if f.suggestion:
                    sug = f.suggestion
                    if not explained.first(sug):
                        lines.append(f"      suggestion: {same_fix(sug)}")
                        continue
                    lines.extend(wrap.wrap(f"suggestion: {sug.get('explanation', '')}"))
                    if not status_of:
                        lines.append(
                            f"      to apply it: {apply_command(result.table_path, f.spec)}"
                        )
            lines.append("")

    if status_of is None:
        block(result.findings)
    else:
        for status, title in (
            ("new", "New since {base}"),
            ("existing", "Already there at {base}"),
            ("accepted", "Accepted (accepted.toml)"),
        ):
            part = [f for f in result.findings if status_of(f) == status]
            lines.append(f"== {title.format(base=result.gate.base)}: {len(part)} finding(s)")
            lines.append("")
            block(part)
        resolved = result.gate.resolved
        lines.append(
            f"== Resolved (at {result.gate.base}, cleared by the change): "
            f"{len(resolved)} finding(s)"
        )
        lines.append("")
        by_substance = defaultdict(list)
        for f in resolved:
            by_substance[f.substance].append(f)
        for name, fs in by_substance.items():
            lines.append(f"{name or '(table)'} -- {_counts(fs)}")
            lines.extend(f"  {f.severity.label:<8}{f.spec}" for f in fs)
            lines.append("")
        lines.append(
            f"{result.gate.affected} substance(s) changed since {result.gate.base} were "
            "re-audited; the others are unchanged."
        )
    if s.get("not_diagnosed"):
        lines.append(
            f"{s['not_diagnosed']} further substance(s) with errors or warnings were not "
            "diagnosed (the diagnosis stops at --diagnose-limit substances, worst first)."
        )
    flagged = len({f.substance for f in result.findings if f.substance})
    whole = sum(not f.substance for f in result.findings)  # about the table, not a substance
    summary = f"Summary: {_counts(result.findings)}"
    if flagged:
        audited = "substance(s) re-audited" if status_of else "substance(s)"
        summary += f" in {flagged} of {s['substances']} {audited}"
    if whole:
        summary += f"; {whole} about the table as a whole"
    lines.append(summary + ".")
    for sentence in shared_slip_sentences(s):  # record ids and paths stay whole
        lines.extend(textwrap.wrap(sentence, width=width, break_on_hyphens=False))
    covered = coverage_sentence(s)
    if covered:
        lines.extend(textwrap.wrap(covered, width=width, break_on_hyphens=False))
    lines = [visible(line) for line in lines]  # table text shown, never obeyed
    lines.append(textwrap.fill(f"Caution: {CAUTION}", width=width))
    return "\n".join(lines) + "\n"
