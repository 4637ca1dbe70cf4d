"""The ``vpaudit`` command group: how every command starts and ends.

Exit status: 0 clean, 1 findings at or above ``--fail-on``, 2 usage or input error (a table
that cannot be read, a missing file or folder, an unknown name), 3 a fault of vpaudit itself.
"""

from __future__ import annotations

import os
import sys

import click

from .. import __version__
from .._caution import CAUTION
from ..errors import VpauditError

EXIT_OK = 0
EXIT_FINDINGS = 1
EXIT_USAGE = 2
EXIT_INTERNAL = 3
#: The reader of the output closed it early: the status a shell gives a program ended by
#: SIGPIPE (128 + 13).
EXIT_PIPE_CLOSED = 141
#: Interrupted (Ctrl-C): the status a shell gives a program ended by SIGINT (128 + 2).
EXIT_INTERRUPTED = 130


def say(message: object = "", **kwargs) -> None:
    """``click.echo`` for lines a person reads: table text's control characters are shown
    as escapes, never sent to the terminal (machine formats are echoed as they are).
    """
    from ..report._escape import visible

    click.echo(visible(message, keep="\n"), **kwargs)


def run() -> None:
    """The ``vpaudit`` console command: :func:`main` on ``sys.argv``.

    A command that raises :class:`vpaudit.runtime.FastExit` (an audit whose report is
    written and which wrote no store) ends the process without the interpreter's teardown,
    which would free the audit's objects one by one only to end; output streams are
    flushed first. Everything else, and every in-process caller of :func:`main` (tests,
    scripts, which see a plain ``SystemExit``), exits the usual way.
    """
    from ..runtime import FastExit

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
            say(f"vpaudit: {exc.kind}: {exc}", err=True)
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
            say(f"vpaudit: cannot read or write a file: {where}{exc.strerror or exc}", err=True)
            ctx.exit(EXIT_USAGE)
        except (KeyboardInterrupt, click.Abort):
            # Ctrl-C: not the status of findings (1) but a shell's for SIGINT (128 + 2);
            # every write vpaudit makes is whole or not at all
            say("\nvpaudit: interrupted", err=True)
            ctx.exit(EXIT_INTERRUPTED)
        except (click.exceptions.Exit, click.ClickException, SystemExit):
            raise
        except Exception as exc:  # noqa: BLE001  (a bug: said in one line, not a traceback)
            if os.environ.get("VPAUDIT_DEBUG"):
                raise
            say(
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
    from ..runtime import process_settings

    process_settings()
