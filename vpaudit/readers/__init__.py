"""Readers for table files: CSV, YAML, JSON, Parquet and whole table directories.

No library infers a type here: every cell is read as text and numbers are parsed by the
one strict grammar of :mod:`vpaudit.readers.grammar`.
"""

from .grammar import NumberSyntaxError, normalize_typography, parse_number, parse_number_column
from .table import KINDS, RawFrame, Table, load_table, read_file

__all__ = [
    "KINDS",
    "NumberSyntaxError",
    "RawFrame",
    "Table",
    "load_table",
    "normalize_typography",
    "parse_number",
    "parse_number_column",
    "read_file",
]
