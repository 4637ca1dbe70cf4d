"""The ``vpaudit`` command line: click only. Parse options, call the library, render, exit.

Exit status: 0 clean, 1 findings at or above ``--fail-on``, 2 usage or input error (a table
that cannot be read, a missing file or folder, an unknown name), 3 a fault of vpaudit itself.
"""

from __future__ import annotations

import json
import os
import sys
import textwrap

import click

from . import __version__
from ._caution import CAUTION
from .errors import VpauditError

EXIT_OK = 0
EXIT_FINDINGS = 1
EXIT_USAGE = 2
EXIT_INTERNAL = 3
#: The reader of the output closed it early: the status a shell gives a program ended by
#: SIGPIPE (128 + 13).
EXIT_PIPE_CLOSED = 141
#: Interrupted (Ctrl-C): the status a shell gives a program ended by SIGINT (128 + 2).
EXIT_INTERRUPTED = 130

FORMATS = ("text", "json", "markdown", "csv", "sarif")
#: The equation forms, spelled out (as FORMATS) so that starting the command imports no
#: numpy; a test keeps it equal to the form registry (equations.forms.FORMS).
FORMS = (
    "two-term",
    "three-term",
    "four-term-t",
    "four-term-cube",
    "power-term",
    "antoine",
    "wagner-3-6",
    "wagner-2.5-5",
)


class Quantity(click.ParamType):
    """A quantity with a unit suffix (``1200K``, ``0.01Torr``, ``12.47kJ/mol``), read by
    vpaudit's number grammar and converted to SI; a bare number is in the SI unit.
    """

    def __init__(self, kind: str) -> None:
        self.kind = kind
        self.name = {"temperature": "TEMPERATURE", "pressure": "PRESSURE", "enthalpy": "ENTHALPY"}[
            kind
        ]

    def convert(self, value, param, ctx):  # noqa: D102
        if isinstance(value, float):
            return value
        from . import units

        parse = {
            "temperature": units.parse_temperature,
            "pressure": units.parse_pressure,
            "enthalpy": units.parse_enthalpy,
        }[self.kind]
        try:
            si = parse(value)
        except VpauditError as exc:
            self.fail(str(exc), param, ctx)
        if self.kind == "pressure" and ctx is not None:  # the unit it was given in, for output
            ctx.meta["pressure_unit"] = units.parse_quantity(value, "Pa", units.PRESSURE_UNITS)[1]
        return si


class UnitName(click.ParamType):
    """The name of a pressure unit (``Pa``, ``Torr``, ...), with a hint for a near miss."""

    name = "UNIT"

    def convert(self, value, param, ctx):  # noqa: D102
        from .units import pressure_factor

        try:
            pressure_factor(value)
        except VpauditError as exc:
            self.fail(str(exc), param, ctx)
        return value


TEMPERATURE, PRESSURE, ENTHALPY = (
    Quantity("temperature"),
    Quantity("pressure"),
    Quantity("enthalpy"),
)


def _say(message: object = "", **kwargs) -> None:
    """``click.echo`` for lines a person reads: table text's control characters are shown
    as escapes, never sent to the terminal (machine formats are echoed as they are).
    """
    from .report._escape import visible

    click.echo(visible(message, keep="\n"), **kwargs)


def run() -> None:
    """The ``vpaudit`` console command: :func:`main` on ``sys.argv``.

    A command that raises :class:`vpaudit.runtime.FastExit` (an audit whose report is
    written and which wrote no store) ends the process without the interpreter's teardown,
    which would free the audit's objects one by one only to end; output streams are
    flushed first. Everything else, and every in-process caller of :func:`main` (tests,
    scripts, which see a plain ``SystemExit``), exits the usual way.
    """
    from .runtime import FastExit

    try:
        main(standalone_mode=True)
    except FastExit as exc:
        exc.end_process()


class _Group(click.Group):
    """One plain line for every failure, never a traceback.

    vpaudit's own errors and the operating system's (a missing folder, a file that cannot
    be written) print ``vpaudit: <what went wrong>: <message>`` and exit 2. Anything else is
    a fault of vpaudit itself: one line that says so and exit 3 (``VPAUDIT_DEBUG=1`` shows
    the traceback).
    """

    def invoke(self, ctx):  # noqa: D102
        try:
            return super().invoke(ctx)
        except VpauditError as exc:
            _say(f"vpaudit: {exc.kind}: {exc}", err=True)
            ctx.exit(EXIT_USAGE)
        except BrokenPipeError:
            # the program reading the output closed it early (| head): say nothing more, as
            # a program ended by SIGPIPE; what is left to flush goes nowhere
            try:
                os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
            except (OSError, ValueError):  # no real stdout (a test's runner)
                pass
            ctx.exit(EXIT_PIPE_CLOSED)
        except OSError as exc:
            where = f"{exc.filename}: " if exc.filename else ""
            _say(f"vpaudit: cannot read or write a file: {where}{exc.strerror or exc}", err=True)
            ctx.exit(EXIT_USAGE)
        except (KeyboardInterrupt, click.Abort):
            # Ctrl-C: not the status of findings (1) but a shell's for SIGINT (128 + 2);
            # every write vpaudit makes is whole or not at all
            _say("\nvpaudit: interrupted", err=True)
            ctx.exit(EXIT_INTERRUPTED)
        except (click.exceptions.Exit, click.ClickException, SystemExit):
            raise
        except Exception as exc:  # noqa: BLE001  (a bug: said in one line, not a traceback)
            if os.environ.get("VPAUDIT_DEBUG"):
                raise
            _say(
                f"vpaudit: internal error ({type(exc).__name__}: {exc}). This is a fault of "
                "vpaudit, not of your table; please report it with the command that caused it "
                "(VPAUDIT_DEBUG=1 shows the traceback).",
                err=True,
            )
            ctx.exit(EXIT_INTERNAL)


@click.group(
    cls=_Group,
    context_settings={"help_option_names": ["-h", "--help"]},
    epilog=f"Caution: {CAUTION} Every report (audit, gate, report) says so once.",
)
@click.version_option(__version__, prog_name="vpaudit")
def main() -> None:
    """Audit tables of vapour-pressure equation coefficients.

    TABLE is a table directory (records/, references/, points/), a single table file, or a
    .duckdb store made by 'vpaudit import'.
    """
    from .runtime import process_settings

    process_settings()


def _progress(quiet: bool, label: str, length: int = 1):
    """A progress bar on stderr when it is a terminal (never in CI, pipes or --quiet)."""
    import contextlib

    if quiet or not sys.stderr.isatty():
        return contextlib.nullcontext(None)
    return click.progressbar(length=length, label=label.ljust(18), file=sys.stderr, show_eta=False)


def _runtime(jobs: int | None, ahead=None):
    """The :class:`vpaudit.runtime.Runtime` of ``--jobs`` (one thread at the least when
    given; one per core when not) and of the files being read ahead.
    """
    from .runtime import Runtime

    return Runtime(jobs=0 if jobs is None else max(1, jobs), ahead=ahead)


QUIET = click.option("--quiet", "-q", is_flag=True, help="No progress display.")
JOBS = click.option(
    "--jobs",
    "-j",
    type=click.IntRange(min=0),
    help="Threads for reading large files and for the audit's shared array work "
    "(default: one per core, at most 4; 1 runs vpaudit's own work on one thread, while "
    "pyarrow's CSV reader keeps its own thread pool).",
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
                    "--output",
                    "-o",
                    type=click.Path(dir_okay=False, allow_dash=True),
                    help="Write the report here (- for standard output).",
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


def _emit(text, output: str | None) -> None:
    """Write ``text`` (a string, or pieces of one) to ``output``, else (or for ``-``) to
    standard output.
    """
    parts = [text] if isinstance(text, str) else text
    if output and output != "-":
        from ._atomic import atomic_path

        with atomic_path(output) as path, open(path, "w", encoding="utf-8") as fh:
            for part in parts:
                fh.write(part)
    else:
        for part in parts:
            click.echo(part, nl=False)


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
    ahead = None
    if jobs is None or jobs > 1:  # the files are read while pandas and the rest are imported
        from .readers.files import read_ahead

        ahead = read_ahead(table)
    from .api import open_table
    from .auditing import audit_table
    from .policy import load_policy
    from .report import pieces

    runtime = _runtime(jobs, ahead)
    with _progress(quiet, "reading the table") as bar:
        t = open_table(table, normalize=normalize_typography, runtime=runtime)
        if bar is not None:
            bar.update(1)
    _report_rewrites(t)
    _has_records(t, table)
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
            runtime=runtime,
        )
    if db:
        from .store import store_table

        if len(t.problems):
            _say(
                f"not stored in {db}: the table breaks rules of the format (see the "
                "findings); 'vpaudit import' stores only clean tables",
                err=True,
            )
        else:
            store_table(t, db, str(table), result)
    _emit(pieces(fmt, result), output)
    code = EXIT_FINDINGS if result.fails(fail_on) else EXIT_OK
    if not db:  # nothing is left to close: end without the interpreter's teardown
        from .runtime import FastExit

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
        _say(
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

    _say({"text": checks_text, "json": checks_json, "markdown": checks_markdown}[fmt](), nl=False)


# --- eval ----------------------------------------------------------------------------------


class _NegativeTemperature(click.Command):
    """``eval``'s command: a temperature after SUBSTANCE that starts with a minus sign
    (``-10degC``) is read as that temperature, not as an unknown option. It moves to the end
    of the arguments after ``--``, where click reads only positional arguments; the value of
    an option (``--at -10degC``) stays where it is.
    """

    def parse_args(self, ctx, args):  # noqa: D102
        if "--" not in args:
            valued = {
                name
                for p in self.params
                if isinstance(p, click.Option) and not p.is_flag
                for name in p.opts
            }
            for k, arg in enumerate(args):
                negative = len(arg) > 1 and arg[0] == "-" and (arg[1].isdigit() or arg[1] == ".")
                if negative and not (k and args[k - 1] in valued):
                    args = [*args[:k], *args[k + 1 :], "--", arg]
                    break
        return super().parse_args(ctx, args)


@main.command("eval", cls=_NegativeTemperature)
@click.argument("table", type=click.Path(exists=True))
@click.argument("substance")
@click.argument("temperature", required=False, type=TEMPERATURE)
@click.option(
    "--at", "at", type=TEMPERATURE, help="Temperature, e.g. 1200K, 926.85degC (bare number: K)."
)
@click.option("--pressure", type=PRESSURE, help="Pressure, e.g. 1Pa, 0.01Torr (bare number: Pa).")
@click.option(
    "--unit",
    type=UnitName(),
    default=None,
    help="Pressure unit of the output [default: the unit --pressure is given in, else Pa].",
)
@click.option("--extrapolate", is_flag=True, help="With --pressure, search beyond the ranges.")
@click.option(
    "--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True
)
def eval_cmd(table, substance, temperature, at, pressure, unit, extrapolate, fmt):
    """Vapour pressure of SUBSTANCE at a temperature, or the temperature at a pressure.

    The temperature may follow SUBSTANCE (vpaudit eval TABLE water 50degC, or -10degC)
    or be given with --at. Each record's enthalpy of the phase change there comes with it,
    its vapour taken as a real gas where the table gives a Tc and a Pc.
    """
    from .api import open_table
    from .report.answers import render_eval
    from .substance import eval_substance

    if temperature is not None:
        if at is not None:
            raise click.UsageError("give the temperature once: after SUBSTANCE or with --at")
        at = temperature

    answer = eval_substance(open_table(table), substance, at, pressure, extrapolate)
    if fmt == "json":
        click.echo(json.dumps(answer, indent=2))
    else:
        if unit is None:
            unit = click.get_current_context().meta.get("pressure_unit", "Pa")
        _say(render_eval(answer, unit), nl=False)


# --- show ----------------------------------------------------------------------------------


@main.command("show")
@click.argument("table", type=click.Path(exists=True))
@click.argument("substance")
@click.option("--policy", help="A preset or a policy TOML file.")
def show_cmd(table, substance, policy):
    """Everything about one substance: records, crossings, references, findings and the
    suggested fixes, each with the command that applies it.
    """
    from .api import open_table
    from .auditing import audit_table
    from .policy import load_policy
    from .report.answers import render_show

    t = open_table(table)
    from .substance import substance_records

    substance_records(t, substance)
    result = audit_table(
        t, load_policy(t.policy_path, policy), substances=[substance], table_path=str(table)
    )
    _say(render_show(t, substance, result), nl=False)


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

    with _progress(quiet, "importing") as bar:
        counts = import_table(
            table,
            db,
            normalize=normalize_typography,
            runtime=_runtime(jobs),
            report=lambda r: _say(
                f"rewrote {r['file']}:{r['line']} [{r['column']}] {r['before']!r} -> "
                f"{r['after']!r}",
                err=True,
            ),
        )
        if bar is not None:
            bar.update(1)
    _say(
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
    _say(
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
    from .report import pieces

    result = gate(table, base, policy)
    _emit(pieces(fmt, result), output)
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
    from .gate import accept

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
    _say(said)


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
    _say(f"wrote {output}: {len(drawn['records'])} record(s), crossing(s): {cross}")


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
def report_cmd(table, output, policy, no_plots):
    """Write one self-contained HTML report of the audit of TABLE."""
    from .api import open_table
    from .auditing import audit_table
    from .policy import load_policy
    from .report.html import render_report

    t = open_table(table)
    result = audit_table(t, load_policy(t.policy_path, policy), table_path=str(table))
    _emit(render_report(result, t, plots=not no_plots), output)
    if output != "-":  # the page itself went to standard output
        import importlib.util

        bare = ""
        if not no_plots and importlib.util.find_spec("matplotlib") is None:
            bare = " (without pictures: they need matplotlib, pip install 'vpaudit[plot]')"
        _say(f"wrote {output}: {len(result.findings)} finding(s){bare}")


# --- fit / convert ---------------------------------------------------------------------------


@main.command("fit")
@click.argument("table", type=click.Path(exists=True))
@click.option("--substance", required=True, help="The substance whose points are fitted.")
@click.option(
    "--form",
    default="three-term",
    show_default=True,
    type=click.Choice(FORMS),
)
@click.option("--phase", type=click.Choice(["solid", "liquid"]), help="Fit this phase's points.")
@click.option("--robust", is_flag=True, help="Soft-L1 loss; points beyond 3 sigma are rejected.")
@click.option(
    "--pair", is_flag=True, help="Fit solid and liquid together, meeting at the triple point."
)
@click.option(
    "--triple-point", type=TEMPERATURE, help="Impose the triple point, e.g. 1234.5K (pair fits)."
)
@click.option(
    "--triple-pressure", type=PRESSURE, help="Also impose its pressure, e.g. 3.2Pa (pair fits)."
)
@click.option(
    "--fusion-enthalpy",
    type=ENTHALPY,
    help="Also impose dH_fus there, e.g. 12.47kJ/mol (bare number: J/mol; pair fits).",
)
@click.option(
    "--no-references", is_flag=True, help="Pair fits: ignore the table's triple point and dH_fus."
)
@click.option(
    "--t-crit",
    type=TEMPERATURE,
    help="Wagner forms: critical temperature (default: the table's reference).",
)
@click.option(
    "--p-crit",
    type=PRESSURE,
    help="Wagner forms: critical pressure (default: the table's reference).",
)
@click.option("--id", "record_id", help="Id of the new record.")
@click.option(
    "--write",
    "write_to",
    type=click.Path(dir_okay=False),
    help="Append the new record(s) to this records CSV file.",
)
@click.option("--force", is_flag=True, help="With --write: write even a record that draws errors.")
def fit_cmd(
    table,
    substance,
    form,
    phase,
    robust,
    pair,
    triple_point,
    triple_pressure,
    fusion_enthalpy,
    no_references,
    t_crit,
    p_crit,
    record_id,
    write_to,
    force,
):
    """Fit an equation to the measured points of TABLE and audit the new record.

    The record carries the points' sources as provenance; --write appends it to a records
    file without touching the file's other lines.
    """
    from .api import open_table
    from .auditing import audit_new_records
    from .fit import fit_table, fit_table_pair
    from .report.fit_summary import render_fit, render_pair

    t = open_table(table)
    if pair:
        res, recs = fit_table_pair(
            t,
            substance,
            form,
            triple_temperature=triple_point,
            triple_pressure=triple_pressure,
            fusion_enthalpy=fusion_enthalpy,
            use_references=not no_references,
        )
        findings = audit_new_records(t, recs, substance)
        text = render_pair(res, recs, findings)
    else:
        res, rec = fit_table(
            t,
            substance,
            form,
            phase,
            robust=robust,
            t_crit=t_crit,
            p_crit=p_crit,
            record_id=record_id,
        )
        recs = [rec]
        findings = audit_new_records(t, recs, substance)
        text = render_fit(res, rec, findings)
    click.echo(text, nl=False)
    if write_to:
        from .revisions import add_records

        line = add_records(write_to, t, recs, findings, force=force)
        _say(f"appended {len(recs)} record(s) to {write_to} at line {line}")


@main.command("convert")
@click.argument("table", type=click.Path(exists=True))
@click.argument("record")
@click.option("--form", help="Target equation form (a refit unless it is the same form).")
@click.option("--log-base", type=click.Choice(["e", "10"]))
@click.option("--pressure-unit", type=UnitName(), help="Target pressure unit, e.g. Torr.")
@click.option("--temperature-unit", type=click.Choice(["K", "degC", "degF"]))
@click.option(
    "--max-deviation",
    type=click.FloatRange(min=0, min_open=True, max=10),
    default=1e-3,
    show_default=True,
    help="Largest ln P deviation a refit may have over the range.",
)
@click.option("--t-crit", type=TEMPERATURE, help="Wagner targets: critical temperature.")
@click.option("--p-crit", type=PRESSURE, help="Wagner targets: critical pressure.")
@click.option(
    "--format", "fmt", type=click.Choice(["csv", "json"]), default="csv", show_default=True
)
def convert_cmd(
    table,
    record,
    form,
    log_base,
    pressure_unit,
    temperature_unit,
    max_deviation,
    t_crit,
    p_crit,
    fmt,
):
    """Write RECORD in another form, log base or unit: exactly where possible, else refitted."""
    from .api import open_table
    from .fit import convert_or_refit
    from .report.fit_summary import render_conversion
    from .substance import record_dict

    if not any((form, log_base, pressure_unit, temperature_unit)):
        raise click.UsageError(
            "say what to convert to: --form, --log-base, --pressure-unit or --temperature-unit"
        )
    rec = record_dict(open_table(table), record)
    out, dev, exact = convert_or_refit(
        rec,
        form=form,
        log_base=log_base,
        pressure_unit=pressure_unit,
        temperature_unit=temperature_unit,
        max_deviation=max_deviation,
        t_crit=t_crit,
        p_crit=p_crit,
    )
    click.echo(render_conversion(record, out, dev, exact, fmt), nl=False)


# --- apply / review / history ------------------------------------------------------------------


def _table_dir(table: str) -> None:
    from .api import is_store

    if is_store(table):
        raise click.UsageError(
            "corrections are written to the table's text files, the source of truth: give the "
            "table directory, then rebuild the store with 'vpaudit import'"
        )


def _reimport(table, db) -> None:
    if db:
        from .store import import_table

        counts = import_table(table, db)
        _say(f"re-imported {counts['records']} records into {db}")


def _show_entry(e: dict) -> None:
    from .report.revisions import revised_line

    _say(revised_line(e))


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
    from .revisions import apply_finding

    _table_dir(table)
    done = apply_finding(table, finding, reason, by)
    for e in done.entries:
        _show_entry(e)
    from .report.revisions import remains_line

    _say(f"re-audited {', '.join(done.substances)}: {remains_line(done.left, table=table)}")
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
    from .api import open_table
    from .auditing import audit_table
    from .policy import load_policy
    from .report.revisions import offer_lines, remains_line
    from .revisions import apply_suggestion, review_offers, suggestion_edits, what_remains

    _table_dir(table)
    t = open_table(table)
    result = audit_table(t, load_policy(t.policy_path), table_path=str(table))
    offers = review_offers(result, min_confidence)
    if not offers:
        _say("no suggested fixes to review")
        return
    from .report._shared import shared_slip_sentences

    for sentence in shared_slip_sentences(result.summary):  # before the fixes one by one
        _say(textwrap.fill(sentence, width=100))
    applied = 0
    changed: set[str] = set()
    for k, f in enumerate(offers, 1):
        # every field and line that applying it changes
        for line in offer_lines(k, len(offers), f, suggestion_edits(f.suggestion)):
            _say(line)
        try:
            answer = click.prompt(
                "  apply it? [a]pply, [s]kip, [q]uit",
                default="s",
                type=click.Choice(["a", "s", "q"]),
                show_choices=False,
            )
        except click.Abort:  # the answers ran out (a script's input) or Ctrl-C: as quit
            _say("\n  no answer: stopped here, as [q]uit")
            break
        if answer == "q":
            break
        if answer == "a":
            for e in apply_suggestion(table, t, f, None, by):
                _show_entry(e)
            applied += 1
            changed.add(f.substance)
    _say(f"\napplied {applied} of {len(offers)} suggested fix(es)")
    if applied:
        subs = sorted(changed)
        _say(f"re-audited {', '.join(subs)}: {remains_line(what_remains(table, subs))}")
        _reimport(table, db)


@main.command("history")
@click.argument("table", type=click.Path(exists=True))
@click.argument("record")
@click.option(
    "--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True
)
def history_cmd(table, record, fmt):
    """Every revision of RECORD: as first entered, and each correction with who, when, why."""
    from .api import open_table
    from .report.revisions import history_lines
    from .revisions import history
    from .substance import check_records

    entries = history(table, record)
    if not entries:
        check_records(open_table(table), [record])
    if fmt == "json":
        click.echo(json.dumps(entries, indent=2))
        return
    for line in history_lines(record, entries):
        _say(line)


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
    from .api import is_store, open_table
    from .store import query

    source = table if is_store(table) else open_table(table)
    frame = query(source, sql, timeout)
    if fmt == "csv":
        click.echo(frame.to_csv(index=False), nl=False)
    elif fmt == "json":
        click.echo(frame.to_json(orient="records", indent=1))
    else:
        _say(frame.to_string(index=False) if len(frame) else "(no rows)")


if __name__ == "__main__":  # pragma: no cover
    main()
