"""The commands that correct a table and show its history: ``apply``, ``review`` and
``history``.
"""

from __future__ import annotations

import json
import shlex
import textwrap

import click

from ._app import main, say


def _table_dir(table: str) -> None:
    from ..api import is_store

    if is_store(table):
        raise click.UsageError(
            "corrections are written to the table's text files, the source of truth: give the "
            "table directory, then rebuild the store with 'vpaudit import'"
        )


def _reimport(table, db) -> None:
    if db:
        from ..store import import_table

        counts = import_table(table, db)
        say(f"re-imported {counts['records']} records into {db}")


def _show_entry(e: dict) -> None:
    from ..report.revisions import revised_line

    say(revised_line(e))


@main.command("apply")
@click.argument("table", type=click.Path(exists=True))
@click.argument("finding")
@click.option("--reason", help="Why (default: the suggestion's explanation).")
@click.option("--by", help="Who (default: git user.name).")
@click.option("--db", type=click.Path(dir_okay=False), help="Also rebuild this DuckDB store.")
def apply_cmd(table, finding, reason, by, db):
    """Apply the suggested fix of FINDING (CHECK:RECORD[,RECORD]) as a new revision.

    The record's line in its table file is rewritten (nothing else in the file changes) and
    the old revision is kept in the table's history (see 'vpaudit history').
    """
    from ..revisions import apply_finding

    _table_dir(table)
    done = apply_finding(table, finding, reason, by)
    for e in done.entries:
        _show_entry(e)
    from ..report.revisions import remains_line

    say(f"re-audited {', '.join(done.substances)}: {remains_line(done.left, table=table)}")
    _reimport(table, db)


@main.command("review")
@click.argument("table", type=click.Path(exists=True))
@click.option("--by", help="Who (default: git user.name).")
@click.option("--db", type=click.Path(dir_okay=False), help="Also rebuild this DuckDB store.")
@click.option(
    "--min-confidence",
    type=click.FloatRange(0.0, 1.0),
    default=0.0,
    show_default=True,
    help="Only offer suggestions at least this confident.",
)
def review_cmd(table, by, db, min_confidence):
    """Walk the suggested fixes of TABLE one by one and apply, skip or stop at each."""
    from ..api import open_table
    from ..auditing import audit_table
    from ..policy import load_policy
    from ..report.revisions import nothing_to_review, offer_lines, remains_line
    from ..revisions import apply_suggestion, review_offers, suggestion_edits, what_remains

    _table_dir(table)
    t = open_table(table)
    result = audit_table(t, load_policy(t.policy_path), table_path=str(table))
    offers = review_offers(result, min_confidence)
    if not offers:
        why = nothing_to_review(result, min_confidence, shlex.quote(table))
        say(textwrap.fill(why, 100, break_on_hyphens=False))  # commands and paths stay whole
        return
    from ..report._shared import shared_slip_sentences

    for sentence in shared_slip_sentences(result.summary):  # before the fixes one by one
        say(textwrap.fill(sentence, width=100, break_on_hyphens=False))
    applied = 0
    changed: set[str] = set()
    for k, f in enumerate(offers, 1):
        # every field and line that applying it changes
        for line in offer_lines(k, len(offers), f, suggestion_edits(f.suggestion)):
            say(line)
        try:
            answer = click.prompt(
                "  apply it? [a]pply, [s]kip, [q]uit",
                default="s",
                type=click.Choice(["a", "s", "q"]),
                show_choices=False,
            )
        except click.Abort:  # the answers ran out (a script's input) or Ctrl-C: as quit
            say("\n  no answer: stopped here, as [q]uit")
            break
        if answer == "q":
            break
        if answer == "a":
            for e in apply_suggestion(table, t, f, None, by):
                _show_entry(e)
            applied += 1
            changed.add(f.substance)
    say(f"\napplied {applied} of {len(offers)} suggested fix(es)")
    if applied:
        subs = sorted(changed)
        say(f"re-audited {', '.join(subs)}: {remains_line(what_remains(table, subs))}")
        _reimport(table, db)


@main.command("history")
@click.argument("table", type=click.Path(exists=True))
@click.argument("record")
@click.option(
    "--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True
)
def history_cmd(table, record, fmt):
    """Every revision of RECORD: as first entered, and each correction with who, when, why."""
    from ..api import open_table
    from ..report.revisions import history_lines
    from ..revisions import history
    from ..substance import check_records

    entries = history(table, record)
    if not entries:
        check_records(open_table(table), [record])
    if fmt == "json":
        click.echo(json.dumps(entries, indent=2))
        return
    for line in history_lines(record, entries):
        say(line)
