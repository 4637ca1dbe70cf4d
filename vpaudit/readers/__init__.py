"""Readers for table files: CSV, YAML, JSON, Parquet and whole table directories.

No library infers a type here: every cell is read as text and numbers are parsed by the
one strict grammar of :mod:`vpaudit.readers.grammar`.

The names below are imported on first use (PEP 562): :mod:`vpaudit.readers.files` needs
neither pandas nor the grammar, and the command line starts reading the table's files with
it (:func:`~vpaudit.readers.files.read_ahead`) before it imports the rest.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from .._lazy import lazy_names

_HOME = {
    "NumberSyntaxError": ".grammar",
    "normalize_typography": ".grammar",
    "parse_number": ".grammar",
    "parse_number_column": ".grammar",
    "PARTS": ".table",
    "RawFrame": ".table",
    "Table": ".table",
    "load_table": ".table",
    "read_file": ".table",
}

if TYPE_CHECKING:
    from .grammar import NumberSyntaxError, normalize_typography, parse_number, parse_number_column
    from .table import PARTS, RawFrame, Table, load_table, read_file


__getattr__, __dir__ = lazy_names(__name__, globals(), _HOME)

__all__ = [
    "PARTS",
    "NumberSyntaxError",
    "RawFrame",
    "Table",
    "load_table",
    "normalize_typography",
    "parse_number",
    "parse_number_column",
    "read_file",
]
