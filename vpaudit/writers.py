"""Write a table back out as CSV files, numbers exactly as they were read (their text)."""

from __future__ import annotations

import csv
from pathlib import Path

import pandas as pd

from .readers.table import POINT_COLUMNS, RECORD_COLUMNS, REFERENCE_COLUMNS, Table

__all__ = ["append_records", "export_table", "records_csv"]


def _write(frame: pd.DataFrame, columns, path: Path) -> int:
    names = [c.name for c in columns]
    path.parent.mkdir(parents=True, exist_ok=True)
    with open(path, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(names)
        cols = []
        for c in columns:
            src = c.name + "_text" if c.kind == "number" else c.name
            values = frame[src] if src in frame else pd.Series([None] * len(frame))
            cols.append(
                ["" if v is None or (isinstance(v, float) and v != v) else str(v) for v in values]
            )
        for row in zip(*cols, strict=True):
            w.writerow(row)
    return len(frame)


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
    import io

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    names = [c.name for c in RECORD_COLUMNS]
    w.writerow(names)
    for r in records:
        w.writerow([_cell(r, n) for n in names])
    return buf.getvalue()


def append_records(path: str | Path, records: list[dict]) -> int:
    """Append ``records`` to a records CSV file, leaving every existing byte as it is (a new
    file gets the full header). Returns the line number of the first appended row.
    """
    import io

    from .errors import Location, TableError

    p = Path(path)
    if not p.exists() or p.stat().st_size == 0:
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text(records_csv(records), encoding="utf-8")
        return 2
    text = p.read_text(encoding="utf-8-sig")
    lines = text.splitlines()
    header_at = next(k for k, ln in enumerate(lines) if ln.strip() and not ln.startswith("#"))
    names = next(csv.reader([lines[header_at]]))
    needed = {
        k for r in records for k, v in r.items() if v not in (None, "") and not k.endswith("_text")
    }
    missing = sorted(needed - set(names))
    if missing:
        raise TableError(
            f"the file has no column {', '.join(missing)} for the new record; add it first",
            Location(str(p), header_at + 1),
        )
    ending = "\r\n" if "\r\n" in text else "\n"
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator=ending)
    for r in records:
        w.writerow([_cell(r, n) for n in names])
    with open(p, "a", encoding="utf-8", newline="") as fh:
        if text and not text.endswith(("\n", "\r")):
            fh.write(ending)
        fh.write(buf.getvalue())
    return len(text.splitlines()) + 1
