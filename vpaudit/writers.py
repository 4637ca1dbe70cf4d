"""Write a table back out as CSV files, numbers exactly as they were read (their text).

Every CSV cell vpaudit writes goes through :func:`csv_cell`, which quotes a cell holding the
delimiter, a quote, or any line end (CR as well as LF: Python's ``csv`` writer leaves a CR
unquoted when the line terminator is LF, and such a file does not read back). Files are
written whole and atomically, and what is written is read back before it replaces anything.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from ._atomic import write_atomic
from .readers.lines import split_lines
from .readers.table import POINT_COLUMNS, RECORD_COLUMNS, REFERENCE_COLUMNS, Table

__all__ = ["append_records", "csv_cell", "csv_line", "export_table", "records_csv"]


def csv_cell(text: str, delimiter: str = ",") -> str:
    """One CSV cell as written: quoted (quotes doubled) when it holds the delimiter, a
    quote or a line end, or begins or ends with a space, else as it is.
    """
    if any(ch in text for ch in (delimiter, '"', "\r", "\n")) or text != text.strip(" \t"):
        return '"' + text.replace('"', '""') + '"'
    return text


def csv_line(cells, delimiter: str = ",", ending: str = "\n") -> str:
    """One CSV row as written, with its line end."""
    return delimiter.join(csv_cell(c, delimiter) for c in cells) + ending


def _texts(frame: pd.DataFrame, columns) -> list[list[str]]:
    cols = []
    for c in columns:
        src = c.name + "_text" if c.kind == "number" else c.name
        values = frame[src] if src in frame else pd.Series([None] * len(frame))
        cols.append(["" if v is None or pd.isna(v) else str(v) for v in values])
    return [list(row) for row in zip(*cols, strict=True)]


def _write(frame: pd.DataFrame, columns, path: Path) -> int:
    names = [c.name for c in columns]
    rows = _texts(frame, columns)
    text = csv_line(names) + "".join(csv_line(r) for r in rows)
    _read_back(path, text, names, rows)
    path.parent.mkdir(parents=True, exist_ok=True)
    write_atomic(path, text)
    return len(frame)


def _read_back(path: Path, text: str, names: list[str], rows: list[list[str]], skip: int = 0):
    """Refuse to write ``text`` unless the CSV reader reads ``rows`` back from it exactly
    (after its first ``skip`` rows).
    """
    from .errors import WriteError
    from .readers.csv_format import read_csv

    raw = read_csv(str(path), text.encode("utf-8"))
    for j, name in enumerate(names):
        cells = raw.cells.get(name)
        got = cells if isinstance(cells, list) else cells.to_pylist()
        want = [r[j] or None for r in rows]
        if [g or None for g in got[skip:]] != want:
            raise WriteError(
                f"{path}: vpaudit would write column {name!r} in a form it cannot read "
                "back; nothing was written"
            )


def export_table(table: Table, folder: str | Path) -> dict[str, int]:
    """Write ``table`` as ``records/records.csv``, ``references/references.csv`` and
    ``points/points.csv`` under ``folder``; returns the row count of each.
    """
    root = Path(folder)
    return {
        "records": _write(table.records, RECORD_COLUMNS, root / "records" / "records.csv"),
        "references": _write(
            table.references, REFERENCE_COLUMNS, root / "references" / "references.csv"
        ),
        "points": _write(table.points, POINT_COLUMNS, root / "points" / "points.csv"),
    }


def _cell(rec: dict, name: str) -> str:
    v = rec.get(name + "_text") or rec.get(name)
    if v is None or (isinstance(v, float) and v != v):
        return ""
    if isinstance(v, float):
        return repr(v)
    return str(v)


def records_csv(records: list[dict]) -> str:
    """Records as CSV text in the table format (header and one row each)."""
    names = [c.name for c in RECORD_COLUMNS]
    return csv_line(names) + "".join(csv_line([_cell(r, n) for n in names]) for r in records)


def append_records(path: str | Path, records: list[dict]) -> int:
    """Append ``records`` to a records CSV file, leaving every existing byte as it is (a new
    file, or one with only comments, gets the full header). Returns the line number of the
    first appended row, as the readers count lines.

    The file is written whole and atomically, after the new rows were read back from the
    new text exactly; its delimiter and line ends are kept.

    Raises
    ------
    WriteError
        When the file is not a CSV file, lacks a column the records need, or already holds
        one of their ids.
    """
    from .errors import WriteError
    from .readers.csv_format import read_csv

    p = Path(path)
    if p.suffix.lower() not in (".csv", ".tsv"):
        raise WriteError(
            f"{p}: new records are appended to a CSV records file, and this is a "
            f"{p.suffix or 'bare'} file; give a .csv file (a new one is created with its header)"
        )
    raw_bytes = p.read_bytes() if p.exists() else b""
    bom = raw_bytes.startswith(b"\xef\xbb\xbf")
    text = raw_bytes[3:].decode("utf-8") if bom else raw_bytes.decode("utf-8")
    lines = split_lines(text)
    header_at = next(
        (k for k, ln in enumerate(lines) if ln.strip() and not ln.startswith("#")), None
    )
    ending = "\r\n" if "\r\n" in text else "\n"
    if text and not text.endswith(("\n", "\r")):
        text += ending
        lines = split_lines(text)
    if header_at is None:  # new, empty, or only comments: the full header first
        names = [c.name for c in RECORD_COLUMNS]
        delimiter = ","
        text += csv_line(names, delimiter, ending)
        old_rows = 0
    else:
        head = lines[header_at].rstrip("\r\n")
        delimiter = "," if "," in head else (";" if ";" in head else "\t")
        raw = read_csv(str(p), text.encode("utf-8"))
        names = raw.columns
        old_rows = len(raw)
        ids = raw.cells.get("id")
        known = set(ids if isinstance(ids, list) else ids.to_pylist()) if ids is not None else set()
        clash = sorted(known & {str(r.get("id")) for r in records})
        if clash:
            raise WriteError(
                f"{p} already holds a record with id {', '.join(map(repr, clash))}; "
                "give the new record another id"
            )
    needed = {
        k for r in records for k, v in r.items() if v not in (None, "") and not k.endswith("_text")
    }
    missing = sorted(needed - set(names))
    if missing:
        raise WriteError(
            f"{p}:{(header_at or 0) + 1}: the file has no column {', '.join(missing)} for the "
            "new record; add it first"
        )
    first = len(split_lines(text)) + 1
    rows = [[_cell(r, n) for n in names] for r in records]
    text += "".join(csv_line(row, delimiter, ending) for row in rows)
    _read_back(p, text, names, rows, skip=old_rows)
    write_atomic(p, (b"\xef\xbb\xbf" if bom else b"") + text.encode("utf-8"))
    return first
