"""Opening tables from any place a command accepts: directory, single file, DuckDB store."""

from __future__ import annotations

from pathlib import Path

from .readers.table import Table, load_table
from .runtime import DEFAULT, Runtime

__all__ = ["is_store", "open_table"]

#: The endings of a DuckDB store made by ``vpaudit import``.
STORE_SUFFIXES = (".duckdb", ".db")


def is_store(path: str | Path) -> bool:
    """Whether ``path`` names a DuckDB store rather than a table's files."""
    return str(path).endswith(STORE_SUFFIXES)


def open_table(path: str | Path, normalize: bool = False, runtime: Runtime = DEFAULT) -> Table:
    """Open a table directory, a single table file, or a ``.duckdb`` store (verified against
    its manifest, see :func:`vpaudit.store.verify`).

    Parameters
    ----------
    path : str or Path
        Where the table is.
    normalize : bool
        Opt in to rewriting PDF look-alikes in numbers (text files only).
    runtime : Runtime
        Threads, and files read ahead (:mod:`vpaudit.runtime`); text files only.
    """
    if is_store(path):
        from .store import verify

        return verify(path)
    return load_table(path, normalize=normalize, runtime=runtime)
