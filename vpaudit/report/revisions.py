"""Text of the revision commands (``apply``, ``review``, ``history``): what a person reads
at the terminal about revisions of records. The command line only prints these lines.
"""

from __future__ import annotations

import shlex

from ..checks._text import confidence
from ._fixes import apply_command

__all__ = ["history_lines", "nothing_to_review", "offer_lines", "revised_line"]


def revised_line(e: dict) -> str:
    """One line for a revision just written: the record, where, and each field's change."""
    changes = ", ".join(f"{k}: {e['before'].get(k)!r} -> {v!r}" for k, v in e["after"].items())
    return f"revised {e['record']} (revision {e['revision']}) in {e['file']}:{e['line']}: {changes}"


def offer_lines(k: int, n: int, finding, edits) -> list[str]:
    """The ``k``-th of ``n`` suggested fixes offered by ``review``: the finding, the
    suggestion and every field and line that applying it changes (``edits``, as
    :func:`vpaudit.revisions.suggestion_edits` gives them).
    """
    s = finding.suggestion
    lines = [
        f"\n[{k}/{n}] {finding.substance}: {finding.check} on {', '.join(finding.records)}",
        f"  {finding.message}",
        f"  suggestion for {s['record']}: {s['explanation']}",
    ]
    for edit in edits:
        for field, new in edit.after.items():
            lines.append(f"  {field}: {edit.before.get(field)!r} -> {new!r}")
        lines.append(f"  {edit.file}:{edit.line}\n  - {edit.line_before.rstrip()}")
        lines.append(f"  + {edit.line_after.rstrip()}")
    return lines


def _counted(findings) -> str:
    """``2 errors and 1 warning``: the errors and warnings among ``findings`` (all of them
    errors or warnings).
    """
    errors = sum(f.severity.rank >= 2 for f in findings)
    return " and ".join(
        f"{n} {word}{'s' if n > 1 else ''}"
        for n, word in ((errors, "error"), (len(findings) - errors, "warning"))
        if n
    )


def nothing_to_review(result, min_confidence: float, table: str) -> str:
    """Why ``review`` has no fix to offer: the table is clean, its suggestions are all below
    ``min_confidence``, or no fix is singled out for its errors (and where several readings
    each clear a substance's errors, which substances, and where they are named).
    """
    flagged = [f for f in result.findings if f.severity.rank >= 1]
    if not flagged:
        return "no suggested fixes to review: the audit finds no error or warning"
    substances = len({f.substance for f in flagged})
    line = (
        f"no suggested fixes to review: the audit finds {_counted(flagged)} in {substances} "
        f"substance{'s' if substances > 1 else ''}"
    )
    # one fix per corrected record, as review offers them
    below = {f.suggestion["record"]: f.suggestion["confidence"] for f in flagged if f.suggestion}
    if below:
        n = len(below)
        line += (
            f"; {'its' if n == 1 else f'the {n}'} suggested fix{'' if n == 1 else 'es'} "
            f"{'is' if n == 1 else 'are all'} below --min-confidence {min_confidence:g} "
            f"(the most confident: {confidence(max(below.values()))})"
        )
    else:
        line += ", and the evidence singles out no fix for " + (
            "it" if len(flagged) == 1 else "any of them"
        )
    leads = sorted({u["substance"] for u in result.summary.get("undecided", ())})
    if leads:
        named = ", ".join(leads[:3]) + (f" and {len(leads) - 3} more" if len(leads) > 3 else "")
        which = shlex.quote(leads[0]) if len(leads) == 1 else "SUBSTANCE"
        line += (
            f"; for {named} several readings each clear the errors (vpaudit show "
            f"{table} {which} names them)"
        )
    return line + f". vpaudit audit {table} lists the findings."


def history_lines(record: str, entries: list[dict]) -> list[str]:
    """Every revision of ``record`` as ``history`` prints it: as first entered, then each
    correction with who, when and why, its field changes and the line it wrote.
    """
    if not entries:
        return [f"{record}: no revisions (the record is as first entered)"]
    lines: list[str] = []
    for e in entries:
        if e["revision"] == 0:
            lines.append(f"revision 0 (as entered), {e['file']}:{e['line']}")
            lines.append(f"  {e['line_after'].rstrip()}")
            continue
        lines.append(
            f"revision {e['revision']}, {e['when']} by {e['by']}"
            + (f", answering {e['finding']}" if e.get("finding") else "")
        )
        lines.append(f"  why: {e['why']}")
        for k, v in e["after"].items():
            lines.append(f"  {k}: {e['before'].get(k)!r} -> {v!r}")
        lines.append(f"  {e['line_after'].rstrip()}")
    return lines


def remains_line(left: list, shown: int = 3, table: str | None = None) -> str:
    """The errors and warnings left after a fix, in words: how many of each, and which
    (check and records, the first ``shown``), so that what remains is not a surprise; with
    ``table``, the command that applies the fix suggested for one of them, if any (a second
    slip, in another record, that the fix just applied did not explain).
    """
    if not left:
        return "clean (no errors or warnings)"
    named = "; ".join(f"{f.check} ({', '.join(f.records)})" for f in left[:shown])
    more = f" and {len(left) - shown} more (vpaudit audit lists them)" if len(left) > shown else ""
    verb = "remains" if len(left) == 1 else "remain"
    line = f"{_counted(left)} {verb}: {named}{more}"
    nxt = next((f for f in left if f.suggestion), None) if table is not None else None
    if nxt is not None:
        sug = nxt.suggestion
        line += (
            f"; a fix is suggested for {nxt.check} ({', '.join(nxt.records)}) "
            f"[{sug.get('kind', 'fix')} on {sug.get('record', '?')}, confidence "
            f"{confidence(sug.get('confidence', 0.0))}]: "
            f"{apply_command(table, nxt.spec)}"
        )
    return line
