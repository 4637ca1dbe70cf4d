"""Terminal report: grouped by substance, worst first, with a one-line summary."""

from __future__ import annotations

import textwrap
from collections import Counter, defaultdict

from ..auditing import CAUTION
from ._coverage import coverage_sentence
from ._escape import visible
from ._fixes import Explained, Undecided, apply_command, same_fix
from ._shared import shared_slip_sentences


def _counts(severities) -> str:
    """``3 errors, 1 warning``: how many of each of ``severities`` (one per finding)."""
    n = Counter(sev.value for sev in severities)
    parts = [f"{n[k]} {k}{'s' if n[k] != 1 else ''}" for k in ("error", "warning", "note") if n[k]]
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

    findings = result.findings
    severity, check, suggestion = findings.severity, findings.check, findings.suggestion
    # the fields that are made when read, made once for the whole report
    substance, records = findings.substance.tolist(), findings.records.tolist()
    message, file_ = findings.message.tolist(), findings.file.tolist()
    line_ = findings.line.tolist()

    def block(rows) -> None:
        """The findings of ``rows`` (table rows), by substance, worst first: read from the
        table's columns, a row view made only where a diagnosis lead may go.
        """
        groups = defaultdict(list)
        for i in rows:
            groups[substance[i]].append(i)

        def rank(name):
            rs = groups[name]
            return (-max(severity[i].rank for i in rs), -len(rs), name)

        for name in sorted(groups, key=rank):
            rs = groups[name]
            lines.append(f"{name or '(table)'} -- {_counts(severity[i] for i in rs)}")
            explained = Explained()  # each substance's fix is explained once
            for i in rs:
                ids, file, line = records[i], file_[i], line_[i]
                spec = f"{check[i]}:{','.join(ids)}"
                where = f" ({file}{f':{line}' if line else ''})" if file else ""
                ident = spec if status_of else f"{check[i]}: {', '.join(ids)}"
                lines.append(f"  {severity[i].label:<8}{ident}{where}")
                lines.extend(wrap.wrap(message[i]))
                lead = undecided.sentence(findings[i]) if undecided.pending(name) else None
                if lead:
                    lines.extend(wrap.wrap(f"diagnosis: {lead}"))
                sug = suggestion[i]
                if sug:
                    if not explained.first(sug):
                        lines.append(f"      suggestion: {same_fix(sug)}")
                        continue
                    lines.extend(wrap.wrap(f"suggestion: {sug.get('explanation', '')}"))
                    if not status_of:
                        lines.append(f"      to apply it: {apply_command(result.table_path, spec)}")
            lines.append("")

    if status_of is None:
        block(range(len(findings)))
    else:
        statuses = result.statuses()
        for status, title in (
            ("new", "New since {base}"),
            ("existing", "Already there at {base}"),
            ("accepted", "Accepted (accepted.toml)"),
        ):
            part = [i for i, st in enumerate(statuses) if st == status]
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
            lines.append(f"{name or '(table)'} -- {_counts(f.severity for f in fs)}")
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
    flagged = len({name for name in substance if name})
    whole = sum(not name for name in substance)  # about the table, not a substance
    summary = f"Summary: {_counts(severity)}"
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
