"""The DuckDB store: records, references, points, audit runs and findings.

The table's text files are the source of truth; a DuckDB file is a derived store that can be
rebuilt from them at any time (``vpaudit import``) and written back out (``vpaudit export``).
An in-memory database is used when a command is given a table directory.

Every import is one transaction: the whole table is parsed and validated first, then written
at once; on any error nothing changes. After a write the database is checkpointed, so no
``.wal`` file is left beside it.
"""

from __future__ import annotations

import json
from pathlib import Path

import duckdb
import numpy as np
import pandas as pd

from .errors import StoreError
from .readers.table import POINT_COLUMNS, RECORD_COLUMNS, REFERENCE_COLUMNS, Table

__all__ = [
    "SCHEMA_VERSION",
    "connect",
    "write_table",
    "read_table",
    "is_store",
    "write_run",
    "read_findings",
]

#: Version of the store's table layout; a store of another version is refused.
SCHEMA_VERSION = 1


def _ddl(columns, extra: list[tuple[str, str]]) -> str:
    parts = []
    for c in columns:
        if c.kind == "number":
            parts += [f'"{c.name}" DOUBLE', f'"{c.name}_text" VARCHAR']
        else:
            parts.append(f'"{c.name}" VARCHAR')
    parts += [f'"{n}" {t}' for n, t in extra]
    parts += ['"file" VARCHAR', '"line" BIGINT']
    return ", ".join(parts)


_TABLES = {
    "records": _ddl(RECORD_COLUMNS, []),
    "references": _ddl(REFERENCE_COLUMNS, [("value_si", "DOUBLE")]),
    "points": _ddl(POINT_COLUMNS, [("T_K", "DOUBLE"), ("P_Pa", "DOUBLE")]),
    "problems": '"file" VARCHAR, "line" BIGINT, "column" VARCHAR, "rule" VARCHAR, '
    '"message" VARCHAR, "id" VARCHAR, "substance" VARCHAR',
    "rewrites": '"file" VARCHAR, "line" BIGINT, "column" VARCHAR, "before" VARCHAR, '
    '"after" VARCHAR, "rewrites" VARCHAR',
    "runs": '"run_id" BIGINT, "started_at" TIMESTAMP, "table_path" VARCHAR, "policy" VARCHAR, '
    '"records" BIGINT, "substances" BIGINT, "pairs" BIGINT, "errors" BIGINT, '
    '"warnings" BIGINT, "notes" BIGINT',
    "findings": '"run_id" BIGINT, "check" VARCHAR, "severity" VARCHAR, "substance" VARCHAR, '
    '"records" VARCHAR[], "message" VARCHAR, "evidence" VARCHAR, '
    '"suggestion" VARCHAR, "file" VARCHAR, "line" BIGINT',
}
_DATA = ("records", "references", "points", "problems", "rewrites")


def is_store(path: str | Path) -> bool:
    """Whether ``path`` names a DuckDB file (by its ending)."""
    return str(path).endswith((".duckdb", ".db"))


def connect(path: str | Path | None = None, read_only: bool = False) -> duckdb.DuckDBPyConnection:
    """Open the store (a file, or an in-memory database when ``path`` is None).

    The connection has DuckDB's progress bar off (it would print into JSON output) and the
    store's tables created when missing.

    Raises
    ------
    StoreError
        When the file is locked by another process, is not a DuckDB file, or has another
        schema version.
    """
    try:
        con = duckdb.connect(":memory:" if path is None else str(path), read_only=read_only)
    except duckdb.IOException as exc:
        text = str(exc)
        if "lock" in text.lower():
            raise StoreError(
                f"{path} is in use by another process ({text.splitlines()[0]}); "
                "wait for it to finish and try again"
            ) from None
        raise StoreError(f"cannot open {path}: {text}") from None
    except duckdb.Error as exc:
        raise StoreError(f"cannot open {path}: {exc}") from None
    con.execute("SET enable_progress_bar = false")
    if not read_only:
        _ensure_schema(con, path)
    else:
        _check_version(con, path)
    return con


def _ensure_schema(con: duckdb.DuckDBPyConnection, path) -> None:
    con.execute('CREATE TABLE IF NOT EXISTS meta ("key" VARCHAR PRIMARY KEY, "value" VARCHAR)')
    row = con.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
    if row is None:
        con.execute("INSERT INTO meta VALUES ('schema_version', ?)", [str(SCHEMA_VERSION)])
    elif int(row[0]) != SCHEMA_VERSION:
        raise StoreError(
            f"{path} has store schema version {row[0]}; this vpaudit reads "
            f"version {SCHEMA_VERSION}: rebuild it with 'vpaudit import'"
        )
    for name, ddl in _TABLES.items():
        con.execute(f'CREATE TABLE IF NOT EXISTS "{name}" ({ddl})')


def _check_version(con, path) -> None:
    try:
        row = con.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
    except duckdb.Error:
        raise StoreError(f"{path} is not a vpaudit store (no meta table)") from None
    if row is None or int(row[0]) != SCHEMA_VERSION:
        raise StoreError(
            f"{path} has store schema version {row and row[0]}; this vpaudit "
            f"reads version {SCHEMA_VERSION}"
        )


def _frame_for(con, name: str, frame: pd.DataFrame) -> pd.DataFrame:
    cols = [r[0] for r in con.execute(f'DESCRIBE "{name}"').fetchall()]
    out = pd.DataFrame({c: frame[c] if c in frame else None for c in cols})
    return out


def write_table(con: duckdb.DuckDBPyConnection, table: Table, source: str | None = None) -> None:
    """Replace the store's table with ``table``, all in one transaction.

    Parameters
    ----------
    con : duckdb connection
        From :func:`connect`.
    table : Table
        A table that has been read and validated in full.
    source : str, optional
        Where the table was read from, kept in ``meta``.
    """
    frames = {
        "records": table.records,
        "references": table.references,
        "points": table.points,
        "problems": table.problems,
        "rewrites": pd.DataFrame(
            table.rewrites, columns=["file", "line", "column", "before", "after", "rewrites"]
        ),
    }
    con.execute("BEGIN TRANSACTION")
    try:
        for name in _DATA:
            con.execute(f'DELETE FROM "{name}"')
            incoming = _frame_for(con, name, frames[name])
            if len(incoming):
                con.register("_incoming", incoming)
                try:
                    con.execute(f'INSERT INTO "{name}" SELECT * FROM _incoming')
                finally:
                    con.unregister("_incoming")
        con.execute("INSERT OR REPLACE INTO meta VALUES ('source', ?)", [source or ""])
        con.execute("COMMIT")
    except BaseException:
        con.execute("ROLLBACK")
        raise


def checkpoint(con: duckdb.DuckDBPyConnection) -> None:
    """Write everything into the database file so no ``.wal`` is left beside it."""
    con.execute("CHECKPOINT")


def _df(con, sql: str) -> pd.DataFrame:
    return con.execute(sql).df()


def read_table(con: duckdb.DuckDBPyConnection, path: str | None = None) -> Table:
    """Read the table held by the store back into column-wise frames."""
    frames = {}
    for name in ("records", "references", "points", "problems"):
        frame = _df(con, f'SELECT * FROM "{name}"')
        for col in frame.columns:
            if frame[col].dtype == object or str(frame[col].dtype).startswith("str"):
                frame[col] = frame[col].astype(object).where(frame[col].notna(), None)
        frames[name] = frame
    rewrites = _df(con, 'SELECT * FROM "rewrites"').to_dict("records")
    root = Path(path).parent if path else None
    return Table(
        frames["records"],
        frames["references"],
        frames["points"],
        frames["problems"],
        rewrites,
        None,
        root,
    )


def write_run(con: duckdb.DuckDBPyConnection, result, table_path: str) -> int:
    """Store one audit run and its findings; returns the run id."""
    row = con.execute('SELECT coalesce(max(run_id), 0) + 1 FROM "runs"').fetchone()
    run_id = int(row[0])
    s = result.summary
    con.execute("BEGIN TRANSACTION")
    try:
        con.execute(
            'INSERT INTO "runs" VALUES (?, current_timestamp, ?, ?, ?, ?, ?, ?, ?, ?)',
            [
                run_id,
                table_path,
                json.dumps(result.policy_description),
                s["records"],
                s["substances"],
                s["pairs"],
                s["error"],
                s["warning"],
                s["note"],
            ],
        )
        rows = [
            (
                run_id,
                f.check,
                f.severity.value,
                f.substance,
                list(f.records),
                f.message,
                json.dumps(f.evidence, default=_jsonable),
                json.dumps(f.suggestion) if f.suggestion is not None else None,
                f.file,
                f.line,
            )
            for f in result.findings
        ]
        if rows:
            con.executemany('INSERT INTO "findings" VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)', rows)
        con.execute("COMMIT")
    except BaseException:
        con.execute("ROLLBACK")
        raise
    return run_id


def _jsonable(value):
    if isinstance(value, np.generic):
        return value.item()
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")


def read_findings(con: duckdb.DuckDBPyConnection, run_id: int | None = None) -> pd.DataFrame:
    """The findings of one run (the latest when ``run_id`` is None)."""
    if run_id is None:
        row = con.execute('SELECT max(run_id) FROM "runs"').fetchone()
        run_id = row[0]
    return con.execute('SELECT * FROM "findings" WHERE run_id = ?', [run_id]).df()


def import_table(
    path: str | Path, db: str | Path, normalize: bool = False, report=None
) -> dict[str, int]:
    """Read, validate and load a table into the store ``db``, all or nothing.

    Every input is parsed and validated first; a table with any read error or rule problem
    is rejected whole (every problem listed) and the database is left exactly as it was.

    Raises
    ------
    TableErrors
        Input that cannot be read as written.
    RecordRuleError
        Records that read fine but break a rule (range, source, duplicate id, pole).
    """
    from .errors import RecordRuleError
    from .readers.table import load_table

    table = load_table(path, normalize=normalize)
    for r in table.rewrites:
        if report:
            report(r)
    if len(table.problems):
        raise RecordRuleError(
            f"{p.file}:{p.line} [{p.column}] {p.message}" for p in table.problems.itertuples()
        )
    con = connect(db)
    try:
        write_table(con, table, str(path))
        checkpoint(con)
    finally:
        con.close()
    return {
        "records": len(table.records),
        "references": len(table.references),
        "points": len(table.points),
    }
