"""Write a table back out as CSV files, numbers exactly as they were read (their text)."""

from __future__ import annotations

import csv
from pathlib import Path

import pandas as pd

from .readers.table import POINT_COLUMNS, RECORD_COLUMNS, REFERENCE_COLUMNS, Table

__all__ = ["export_table"]


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
