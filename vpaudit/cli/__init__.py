"""The ``vpaudit`` command line: click only. Parse options, call the library, render, exit.

Where each command lives:

* :mod:`._app`: the command group, ``run`` (the console command), the exit statuses and how
  a failure is said (one line, never a traceback);
* :mod:`._options`: parameter types for quantities with units, the options the reporting
  commands share, the progress display and where output goes;
* :mod:`.audit`: ``audit``, ``checks``, ``report``, ``gate``, ``accept``;
* :mod:`.curves`: ``eval``, ``show``, ``plot``, ``fit``, ``convert``;
* :mod:`.revise`: ``apply``, ``review``, ``history``;
* :mod:`.tables`: ``import``, ``export``, ``query``.

Importing the package registers every command on :func:`main`; none of them imports numpy
or pandas before it runs.
"""

from __future__ import annotations

from . import audit, curves, revise, tables  # noqa: F401  (each registers its commands)
from ._app import (
    EXIT_FINDINGS,
    EXIT_INTERNAL,
    EXIT_INTERRUPTED,
    EXIT_OK,
    EXIT_PIPE_CLOSED,
    EXIT_USAGE,
    main,
    run,
)

__all__ = [
    "EXIT_FINDINGS",
    "EXIT_INTERNAL",
    "EXIT_INTERRUPTED",
    "EXIT_OK",
    "EXIT_PIPE_CLOSED",
    "EXIT_USAGE",
    "main",
    "run",
]
