"""The ``vpaudit`` command line: click only. Parse options, call the library, render, exit.

Exit status: 0 clean, 1 findings at or above ``--fail-on``, 2 usage or input error.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import click

from . import __version__
from .errors import VpauditError

EXIT_OK = 0
EXIT_FINDINGS = 1
EXIT_USAGE = 2

FORMATS = ("text", "json", "markdown", "csv", "sarif")


class _Group(click.Group):
    """Catch vpaudit's own errors: print ``ErrorName: message`` and exit 2."""

    def invoke(self, ctx):  # noqa: D102
        try:
            return super().invoke(ctx)
        except VpauditError as exc:
            click.echo(f"{type(exc).__name__}: {exc}", err=True)
            ctx.exit(EXIT_USAGE)


@click.group(cls=_Group, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="vpaudit")
def main() -> None:
    """Audit tables of vapour-pressure equation coefficients.

    TABLE is a table directory (records/, references/, points/), a single table file, or a
    .duckdb store made by 'vpaudit import'.
    """


def _progress(quiet: bool, label: str, length: int = 1):
    """A progress bar on stderr when it is a terminal (never in CI, pipes or --quiet)."""
    import contextlib

    if quiet or not sys.stderr.isatty():
        return contextlib.nullcontext(None)
    return click.progressbar(length=length, label=label.ljust(18), file=sys.stderr, show_eta=False)


def _jobs(jobs: int | None) -> None:
    if jobs is not None:
        from .readers import table as _table

        _table.JOBS = max(1, jobs)


QUIET = click.option("--quiet", "-q", is_flag=True, help="No progress display.")
JOBS = click.option(
    "--jobs",
    "-j",
    type=int,
    help="Threads for reading large files (default: one per core, at most 4).",
)


def _report_options(fail_help: str):
    """--format, --output, --fail-on and --policy, shared by the commands that report."""

    def wrap(func):
        for option in reversed(
            (
                click.option(
                    "--format", "fmt", type=click.Choice(FORMATS), default="text", show_default=True
                ),
                click.option(
                    "--output", "-o", type=click.Path(dir_okay=False), help="Write the report here."
                ),
                click.option(
                    "--fail-on",
                    type=click.Choice(["error", "warning", "never"]),
                    default="error",
                    show_default=True,
                    help=fail_help,
                ),
                click.option(
                    "--policy", help="A preset (evaluated, compilation) or a policy TOML file."
                ),
            )
        ):
            func = option(func)
        return func

    return wrap


def _emit(text: str, output: str | None) -> None:
    if output:
        Path(output).write_text(text, encoding="utf-8")
    else:
        click.echo(text, nl=False)


# --- audit ---------------------------------------------------------------------------------


@main.command("audit")
@click.argument("table", type=click.Path(exists=True))
@_report_options("Exit 1 when anything is at or above this severity.")
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
    from .api import open_table
    from .audit import audit_table
    from .policy import load_policy
    from .report import RENDERERS

    _jobs(jobs)
    with _progress(quiet, "reading the table") as bar:
        t = open_table(table, normalize=normalize_typography)
        if bar is not None:
            bar.update(1)
    _report_rewrites(t)
    from .checks import REGISTRY

    n_checks = len(only.split(",")) if only else len(REGISTRY)
    with _progress(quiet, "auditing", n_checks) as bar:

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
        )
    if db:
        from .store import store_table

        if len(t.problems):
            click.echo(
                f"not stored in {db}: the table breaks rules of the format (see the "
                "findings); 'vpaudit import' stores only clean tables",
                err=True,
            )
        else:
            store_table(t, db, str(table), result)
    _emit(RENDERERS[fmt](result), output)
    sys.exit(EXIT_FINDINGS if result.fails(fail_on) else EXIT_OK)


def _report_rewrites(table) -> None:
    for r in table.rewrites:
        click.echo(
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
    from .docs import checks_json, checks_markdown, checks_text

    click.echo(
        {"text": checks_text, "json": checks_json, "markdown": checks_markdown}[fmt](), nl=False
    )


# --- eval ----------------------------------------------------------------------------------


@main.command("eval")
@click.argument("table", type=click.Path(exists=True))
@click.argument("substance")
@click.option("--at", "at", help="Temperature, e.g. 1200K, 926.85degC (bare number: K).")
@click.option("--pressure", help="Pressure, e.g. 1Pa, 0.01Torr (bare number: Pa).")
@click.option("--unit", default="Pa", show_default=True, help="Pressure unit of the output.")
@click.option("--extrapolate", is_flag=True, help="With --pressure, search beyond the ranges.")
@click.option(
    "--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True
)
def eval_cmd(table, substance, at, pressure, unit, extrapolate, fmt):
    """Vapour pressure of SUBSTANCE at a temperature, or the temperature at a pressure."""
    from .api import open_table
    from .lookup import eval_substance
    from .report.lookup import render_eval
    from .units import parse_pressure, parse_temperature, pressure_factor

    pressure_factor(unit)
    t = parse_temperature(at) if at else None
    p = parse_pressure(pressure) if pressure else None
    answer = eval_substance(open_table(table), substance, t, p, extrapolate)
    if fmt == "json":
        click.echo(json.dumps(answer, indent=2))
    else:
        click.echo(render_eval(answer, unit), nl=False)


# --- show ----------------------------------------------------------------------------------


@main.command("show")
@click.argument("table", type=click.Path(exists=True))
@click.argument("substance")
@click.option("--policy", help="A preset or a policy TOML file.")
def show_cmd(table, substance, policy):
    """Everything about one substance: records, crossings, references and findings."""
    from .api import open_table
    from .audit import audit_table
    from .policy import load_policy
    from .report.lookup import render_show

    t = open_table(table)
    from .lookup import substance_records

    substance_records(t, substance)
    result = audit_table(
        t, load_policy(t.policy_path, policy), substances=[substance], table_path=str(table)
    )
    click.echo(render_show(t, substance, result), nl=False)


# --- import / export -----------------------------------------------------------------------


@main.command("import")
@click.argument("table", type=click.Path(exists=True))
@click.option(
    "--db",
    required=True,
    type=click.Path(dir_okay=False),
    help="The DuckDB file to write (created when missing).",
)
@click.option(
    "--normalize-typography",
    is_flag=True,
    help="Rewrite PDF look-alikes in numbers and list each rewrite.",
)
@QUIET
@JOBS
def import_cmd(table, db, normalize_typography, quiet, jobs):
    """Load TABLE into a DuckDB store, all or nothing."""
    from .store import import_table

    _jobs(jobs)

    with _progress(quiet, "importing") as bar:
        counts = import_table(
            table,
            db,
            normalize=normalize_typography,
            report=lambda r: click.echo(
                f"rewrote {r['file']}:{r['line']} [{r['column']}] {r['before']!r} -> "
                f"{r['after']!r}",
                err=True,
            ),
        )
        if bar is not None:
            bar.update(1)
    click.echo(
        f"imported {counts['records']} records, {counts['references']} references and "
        f"{counts['points']} points into {db}"
    )


@main.command("export")
@click.option("--db", required=True, type=click.Path(exists=True, dir_okay=False))
@click.option("--to", "to", required=True, type=click.Path(file_okay=False))
def export_cmd(db, to):
    """Write the table held in a DuckDB store back out as CSV files."""
    from .api import open_table
    from .writers import export_table

    counts = export_table(open_table(db), to)
    click.echo(
        f"exported {counts['records']} records, {counts['references']} references and "
        f"{counts['points']} points to {to}"
    )


# --- gate / accept ---------------------------------------------------------------------------


@main.command("gate")
@click.argument("table", type=click.Path(exists=True))
@click.option("--base", required=True, help="The git revision to compare with (e.g. origin/main).")
@_report_options("Exit 1 when a NEW finding is at or above this severity.")
def gate_cmd(table, base, fmt, output, fail_on, policy):
    """Report what a change to TABLE introduces since the git revision --base.

    Findings that already existed at --base, or that are accepted in the table's
    accepted.toml, do not fail the gate. Nothing is fetched: in a shallow CI checkout,
    fetch the base revision first.
    """
    from .gate import gate
    from .report import RENDERERS

    result = gate(table, base, policy)
    _emit(RENDERERS[fmt](result), output)
    sys.exit(EXIT_FINDINGS if result.fails(fail_on) else EXIT_OK)


@main.command("accept")
@click.argument("finding")
@click.option(
    "--table",
    type=click.Path(exists=True, file_okay=False),
    default=".",
    show_default=True,
    help="The table directory holding accepted.toml.",
)
@click.option("--reason", required=True, help="Why the finding is accepted.")
@click.option("--until", help="Expiry date, e.g. 2027-06-30.")
@click.option("--by", help="Who accepts it (default: git user.name).")
def accept_cmd(finding, table, reason, until, by):
    """Accept FINDING (CHECK:RECORD[,RECORD]) in the table's accepted.toml."""
    from .gate import accept

    path = accept(table, finding, reason, until, by)
    click.echo(f"accepted {finding} in {path}")


# --- plot ----------------------------------------------------------------------------------


@main.command("plot")
@click.argument("table", type=click.Path(exists=True))
@click.argument("substance")
@click.option(
    "--output",
    "-o",
    required=True,
    type=click.Path(dir_okay=False),
    help="The picture: FILE.png or FILE.svg.",
)
@click.option("--unit", default="Pa", show_default=True, help="Pressure unit of the right axis.")
def plot_cmd(table, substance, output, unit):
    """Draw ln P against 1/T for SUBSTANCE: both phases, ranges, crossing, references."""
    from .api import open_table
    from .plot import plot_substance

    drawn = plot_substance(open_table(table), substance, output, unit)
    cross = ", ".join(f"{c['T_K']:.5g} K" for c in drawn["crossings"]) or "none"
    click.echo(f"wrote {output}: {len(drawn['records'])} record(s), crossing(s): {cross}")


# --- report --------------------------------------------------------------------------------


@main.command("report")
@click.argument("table", type=click.Path(exists=True))
@click.option(
    "--output", "-o", required=True, type=click.Path(dir_okay=False), help="The HTML file to write."
)
@click.option("--policy", help="A preset (evaluated, compilation) or a policy TOML file.")
@click.option("--no-plots", is_flag=True, help="Leave out the pictures (faster).")
def report_cmd(table, output, policy, no_plots):
    """Write one self-contained HTML report of the audit of TABLE."""
    from .api import open_table
    from .audit import audit_table
    from .policy import load_policy
    from .report.html import render_report

    t = open_table(table)
    result = audit_table(t, load_policy(t.policy_path, policy), table_path=str(table))
    Path(output).write_text(render_report(result, t, plots=not no_plots), encoding="utf-8")
    click.echo(f"wrote {output}: {len(result.findings)} finding(s)")


# --- query ---------------------------------------------------------------------------------


@main.command("query")
@click.argument("table", type=click.Path(exists=True))
@click.argument("sql")
@click.option(
    "--format",
    "fmt",
    type=click.Choice(["table", "csv", "json"]),
    default="table",
    show_default=True,
)
@click.option(
    "--timeout",
    type=float,
    default=10.0,
    show_default=True,
    help="Seconds before the query is stopped.",
)
def query_cmd(table, sql, fmt, timeout):
    """Run one read-only SELECT over the tables records, references, points, problems.

    The query cannot read or write files (DuckDB's external access is off and its
    configuration locked) and is stopped after --timeout seconds.
    """
    from .api import open_table
    from .store import query

    source = table if str(table).endswith((".duckdb", ".db")) else open_table(table)
    frame = query(source, sql, timeout)
    if fmt == "csv":
        click.echo(frame.to_csv(index=False), nl=False)
    elif fmt == "json":
        click.echo(frame.to_json(orient="records", indent=1))
    else:
        click.echo(frame.to_string(index=False) if len(frame) else "(no rows)")


if __name__ == "__main__":  # pragma: no cover
    main()
