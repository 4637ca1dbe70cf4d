"""What the commands share: parameter types for quantities with units, the options of the
commands that report, the progress display, the runtime of ``--jobs`` and where output goes.
"""

from __future__ import annotations

import sys

import click

from ..errors import VpauditError

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
        from .. import units

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
        from ..units import pressure_factor

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


def progress(quiet: bool, label: str, length: int = 1):
    """A progress bar on stderr when it is a terminal (never in CI, pipes or --quiet)."""
    import contextlib

    if quiet or not sys.stderr.isatty():
        return contextlib.nullcontext(None)
    return click.progressbar(length=length, label=label.ljust(18), file=sys.stderr, show_eta=False)


def runtime_for(jobs: int | None, ahead=None):
    """The :class:`vpaudit.runtime.Runtime` of ``--jobs`` (one thread at the least when
    given; one per core when not) and of the files being read ahead.
    """
    from ..runtime import Runtime

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


def report_options(fail_help: str):
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


def emit(text, output: str | None) -> None:
    """Write ``text`` (a string, or pieces of one) to ``output``, else (or for ``-``) to
    standard output.
    """
    parts = [text] if isinstance(text, str) else text
    if output and output != "-":
        from .._atomic import atomic_path

        with atomic_path(output) as path, open(path, "w", encoding="utf-8") as fh:
            for part in parts:
                fh.write(part)
    else:
        for part in parts:
            click.echo(part, nl=False)
