"""Opening tables from any place a command accepts: directory, single file, DuckDB store."""

from __future__ import annotations

from pathlib import Path

from .readers.table import Table, load_table

__all__ = ["open_table"]


def open_table(path: str | Path, normalize: bool = False) -> Table:
    """Open a table directory, a single table file, or a ``.duckdb`` store (verified against
    its manifest, see :func:`vpaudit.store.verify`).

    Parameters
    ----------
    path : str or Path
        Where the table is.
    normalize : bool
        Opt in to rewriting PDF look-alikes in numbers (text files only).
    """
    if str(path).endswith((".duckdb", ".db")):
        from .store import verify

        return verify(path)
    return load_table(path, normalize=normalize)
