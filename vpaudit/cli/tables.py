"""The commands that move a table in and out of a DuckDB store and query it: ``import``,
``export`` and ``query``.
"""

from __future__ import annotations

import click

from ._app import main, say
from ._options import JOBS, QUIET, progress, runtime_for

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
    from ..store import import_table

    with progress(quiet, "importing") as bar:
        counts = import_table(
            table,
            db,
            normalize=normalize_typography,
            runtime=runtime_for(jobs),
            report=lambda r: say(
                f"rewrote {r['file']}:{r['line']} [{r['column']}] {r['before']!r} -> "
                f"{r['after']!r}",
                err=True,
            ),
        )
        if bar is not None:
            bar.update(1)
    say(
        f"imported {counts['records']} records, {counts['references']} references and "
        f"{counts['points']} points into {db}"
    )


@main.command("export")
@click.option("--db", required=True, type=click.Path(exists=True, dir_okay=False))
@click.option("--to", "to", required=True, type=click.Path(file_okay=False))
def export_cmd(db, to):
    """Write the table held in a DuckDB store back out as CSV files."""
    from ..api import open_table
    from ..writers import export_table

    counts = export_table(open_table(db), to)
    say(
        f"exported {counts['records']} records, {counts['references']} references and "
        f"{counts['points']} points to {to}"
    )


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
    from ..api import is_store, open_table
    from ..store import query

    source = table if is_store(table) else open_table(table)
    frame = query(source, sql, timeout)
    if fmt == "csv":
        click.echo(frame.to_csv(index=False), nl=False)
    elif fmt == "json":
        click.echo(frame.to_json(orient="records", indent=1))
    else:
        say(frame.to_string(index=False) if len(frame) else "(no rows)")
