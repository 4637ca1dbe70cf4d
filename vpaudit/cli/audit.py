"""The commands that audit a table and report: ``audit``, ``checks``, ``report``, ``gate``
and ``accept``.
"""

from __future__ import annotations

import os
import sys

import click

from ..errors import VpauditError
from ._app import EXIT_FINDINGS, EXIT_OK, main, say
from ._options import JOBS, QUIET, emit, progress, report_options, runtime_for

# --- audit ---------------------------------------------------------------------------------


@main.command("audit")
@click.argument("table", type=click.Path(exists=True))
@report_options("Exit 1 when anything is at or above this severity.")
@click.option("--only", help="Comma-separated check names to run.")
@click.option("--substance", multiple=True, help="Audit only this substance (repeatable).")
@click.option("--db", type=click.Path(dir_okay=False), help="Store the run in this DuckDB file.")
@click.option(
    "--normalize-typography",
    is_flag=True,
    help="Rewrite PDF look-alikes in numbers (U+2212, thin spaces, 1.2D+03, x10^-3) "
    "and list each rewrite.",
)
@click.option(
    "--diagnose-limit",
    type=click.IntRange(min=0),
    default=1000,
    show_default=True,
    help="Look for the likely slip behind the errors and warnings of at most this many "
    "substances (worst first); 0 turns the diagnosis off.",
)
@QUIET
@JOBS
def audit_cmd(
    table,
    fmt,
    output,
    fail_on,
    policy,
    only,
    substance,
    db,
    normalize_typography,
    diagnose_limit,
    quiet,
    jobs,
):
    """Test every record and solid/liquid pair of TABLE against thermodynamics."""
    ahead = None
    if jobs is None or jobs > 1:  # the files are read while pandas and the rest are imported
        from ..readers.files import read_ahead

        ahead = read_ahead(table)
    from ..api import open_table
    from ..auditing import audit_table
    from ..policy import load_policy
    from ..report import pieces

    runtime = runtime_for(jobs, ahead)
    with progress(quiet, "reading the table") as bar:
        t = open_table(table, normalize=normalize_typography, runtime=runtime)
        if bar is not None:
            bar.update(1)
    _report_rewrites(t)
    _has_records(t, table)
    from ..checks import REGISTRY

    n_checks = len(only.split(",")) if only else len(REGISTRY)
    with progress(quiet, "auditing", n_checks) as bar:

        def step(done, total, name):
            if bar is not None:
                bar.update(1)

        result = audit_table(
            t,
            load_policy(t.policy_path, policy),
            only=[s.strip() for s in only.split(",")] if only else None,
            substances=list(substance) or None,
            table_path=str(table),
            progress=step,
            diagnose=diagnose_limit,
            runtime=runtime,
        )
    if db:
        from ..store import store_table

        if len(t.problems):
            say(
                f"not stored in {db}: the table breaks rules of the format (see the "
                "findings); 'vpaudit import' stores only clean tables",
                err=True,
            )
        else:
            store_table(t, db, str(table), result)
    emit(pieces(fmt, result), output)
    code = EXIT_FINDINGS if result.fails(fail_on) else EXIT_OK
    if not db:  # nothing is left to close: end without the interpreter's teardown
        from ..runtime import FastExit

        raise FastExit(code)
    sys.exit(code)


def _has_records(t, where) -> None:
    """A table without a coefficient record has nothing to audit: say so, not "nothing found"."""
    if not len(t.records):
        raise VpauditError(
            f"{where} holds no coefficient records ({len(t.references)} reference value(s), "
            f"{len(t.points)} measured point(s)): there is nothing to audit. Records go in "
            "records/ (CSV, YAML, JSON or Parquet files with a 'form' column)."
        )


def _report_rewrites(table) -> None:
    for r in table.rewrites:
        say(
            f"rewrote {r['file']}:{r['line']} [{r['column']}] {r['before']!r} -> "
            f"{r['after']!r} ({r['rewrites']})",
            err=True,
        )


# --- checks --------------------------------------------------------------------------------


@main.command("checks")
@click.option(
    "--format",
    "fmt",
    type=click.Choice(["text", "json", "markdown"]),
    default="text",
    show_default=True,
)
def checks_cmd(fmt):
    """List the checks with their severity, thresholds and the rule behind each."""
    from ..docs import checks_json, checks_markdown, checks_text

    say({"text": checks_text, "json": checks_json, "markdown": checks_markdown}[fmt](), nl=False)


# --- report --------------------------------------------------------------------------------


@main.command("report")
@click.argument("table", type=click.Path(exists=True))
@click.option(
    "--output",
    "-o",
    required=True,
    type=click.Path(dir_okay=False, allow_dash=True),
    help="The HTML file to write (- for standard output).",
)
@click.option("--policy", help="A preset (evaluated, compilation) or a policy TOML file.")
@click.option("--no-plots", is_flag=True, help="Leave out the pictures (faster).")
@click.option(
    "--max-substances",
    type=click.IntRange(min=1),
    default=1000,
    show_default=True,
    help="List at most this many flagged substances, worst first, with their findings (the "
    "JSON and CSV reports list every finding).",
)
@QUIET
def report_cmd(table, output, policy, no_plots, max_substances, quiet):
    """Write one self-contained HTML report of the audit of TABLE."""
    from ..api import open_table
    from ..auditing import audit_table
    from ..checks import REGISTRY
    from ..policy import load_policy
    from ..report.html import page_plan, render_report

    with progress(quiet, "reading the table") as bar:
        t = open_table(table)
        if bar is not None:
            bar.update(1)
    with progress(quiet, "auditing", len(REGISTRY)) as bar:
        result = audit_table(
            t,
            load_policy(t.policy_path, policy),
            table_path=str(table),
            progress=None if bar is None else lambda done, total, name: bar.update(1),
        )
    # a picture takes about a second: a bar for them, one per substance section
    _, order, _, sections = page_plan(result.findings, max_substances)
    pictures = 0 if no_plots else len(sections)
    with progress(quiet or not pictures, "drawing pictures", max(pictures, 1)) as bar:
        page = render_report(
            result,
            t,
            plots=not no_plots,
            max_substances=max_substances,
            progress=None if bar is None else lambda done, total: bar.update(1),
        )
    emit(page, output)
    if output != "-":  # the page itself went to standard output
        import importlib.util

        bare = ""
        if not no_plots and importlib.util.find_spec("matplotlib") is None:
            bare = " (without pictures: they need matplotlib, pip install 'vpaudit[plot]')"
        if len(order) > max_substances:
            bare += (
                f"; the page lists the {max_substances} worst of {len(order)} substances with "
                "findings (--max-substances); the JSON and CSV reports list every finding"
            )
        say(f"wrote {output}: {len(result.findings)} finding(s){bare}")


# --- gate / accept ---------------------------------------------------------------------------


@main.command("gate")
@click.argument("table", type=click.Path(exists=True))
@click.option("--base", required=True, help="The git revision to compare with (e.g. origin/main).")
@report_options("Exit 1 when a NEW finding is at or above this severity.")
def gate_cmd(table, base, fmt, output, fail_on, policy):
    """Report what a change to TABLE introduces since the git revision --base.

    Findings that already existed at --base, or that are accepted in the table's
    accepted.toml, do not fail the gate. Nothing is fetched: in a shallow CI checkout,
    fetch the base revision first.
    """
    from ..gate import gate
    from ..report import pieces

    result = gate(table, base, policy)
    emit(pieces(fmt, result), output)
    sys.exit(EXIT_FINDINGS if result.fails(fail_on) else EXIT_OK)


@main.command("accept")
@click.argument("first", metavar="[TABLE] FINDING")
@click.argument("second", required=False, metavar="")
@click.option(
    "--table",
    "table_opt",
    type=click.Path(exists=True, file_okay=False),
    default=None,
    help="The table directory holding accepted.toml [default: the current directory].",
)
@click.option("--reason", required=True, help="Why the finding is accepted.")
@click.option("--until", help="Expiry date, e.g. 2027-06-30.")
@click.option("--by", help="Who accepts it (default: git user.name).")
def accept_cmd(first, second, table_opt, reason, until, by):
    """Accept FINDING (CHECK:RECORD[,RECORD]) in the table's accepted.toml.

    The table directory comes first, as in the other commands (vpaudit accept TABLE
    FINDING), or with --table; without either it is the current directory.
    """
    from ..gate import accept

    if second is None:
        table, finding = table_opt or ".", first
    elif table_opt is not None:
        raise click.UsageError("give the table once: before FINDING or with --table")
    else:
        table, finding = first, second
        if not os.path.isdir(table):
            raise click.UsageError(f"TABLE {table!r} is not a table directory")
    path, replaced = accept(table, finding, reason, until, by)
    said = f"accepted {finding} in {path}"
    if replaced is not None:
        was = f"{replaced.reason!r}, by {replaced.by}"
        if replaced.until is not None:
            was += f", until {replaced.until}"
        said += f"; it replaces the earlier acceptance ({was}), kept in the file as history"
    say(said)
