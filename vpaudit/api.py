"""Opening tables from any place a command accepts: directory, single file, DuckDB store."""

from __future__ import annotations

from pathlib import Path

from .readers.table import Table, load_table
from .store import connect, is_store, read_table

__all__ = ["open_table"]


def open_table(path: str | Path, normalize: bool = False) -> Table:
    """Open a table directory, a single table file, or a ``.duckdb`` store.

    Parameters
    ----------
    path : str or Path
        Where the table is.
    normalize : bool
        Opt in to rewriting PDF look-alikes in numbers (text files only).
    """
    if is_store(path):
        con = connect(path, read_only=True)
        try:
            return read_table(con, str(path))
        finally:
            con.close()
    return load_table(path, normalize=normalize)
