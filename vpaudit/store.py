"""The DuckDB store: records, references, points, audit runs and findings.

The table's text files are the source of truth; a DuckDB file is a derived store that can be
rebuilt from them at any time (``vpaudit import``) and written back out (``vpaudit export``).
An in-memory database is used when a command is given a table directory.

Every import is one transaction: the whole table is parsed and validated first, then written
at once; on any error nothing changes. After a write the database is checkpointed, so no
``.wal`` file is left beside it.

Guarantees checked on every open (:func:`verify`):

* a content manifest -- row counts and a SHA-256 digest per kind over every stored cell
  (each number's verbatim text and its value, SI values, file and line included) -- is stored
  inside the database, in the import's own transaction, and written beside it as
  ``<db>.manifest.json``; a database whose content, inner manifest and outer manifest do not
  all agree is refused;
* a stray ``<db>.wal`` (a store not closed cleanly, or copied without its log) is refused;
* writers take an advisory lock ``<db>.lock`` with a bounded wait and a message naming the
  holder; DuckDB's own lock conflict is reported in plain words.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import re
import shlex
import sys
import time
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
    "write_run",
    "read_findings",
]

#: Version of the store's table layout; a store of another version is refused.
SCHEMA_VERSION = 2  # 2: the manifest covers every stored column, values included


def _columns(columns, extra: list[tuple[str, str]]) -> list[tuple[str, str]]:
    out = []
    for c in columns:
        if c.kind == "number":
            out += [(c.name, "DOUBLE"), (c.name + "_text", "VARCHAR")]
        else:
            out.append((c.name, "VARCHAR"))
    return out + extra + [("file", "VARCHAR"), ("line", "BIGINT")]


#: Every column of the tables the store keeps for a table, with its SQL type.
_COLUMNS: dict[str, list[tuple[str, str]]] = {
    "records": _columns(RECORD_COLUMNS, []),
    "references": _columns(REFERENCE_COLUMNS, [("value_si", "DOUBLE")]),
    "points": _columns(POINT_COLUMNS, [("T_K", "DOUBLE"), ("P_Pa", "DOUBLE")]),
    "problems": [
        ("file", "VARCHAR"),
        ("line", "BIGINT"),
        ("column", "VARCHAR"),
        ("rule", "VARCHAR"),
        ("message", "VARCHAR"),
        ("id", "VARCHAR"),
        ("substance", "VARCHAR"),
    ],
    "rewrites": [
        ("file", "VARCHAR"),
        ("line", "BIGINT"),
        ("column", "VARCHAR"),
        ("before", "VARCHAR"),
        ("after", "VARCHAR"),
        ("rewrites", "VARCHAR"),
    ],
}
#: What the manifest covers: every table the tool reads a table back from.
_MANIFEST_KINDS = tuple(_COLUMNS)
_TABLES = {
    **{kind: ", ".join(f'"{n}" {t}' for n, t in cols) for kind, cols in _COLUMNS.items()},
    "runs": '"run_id" BIGINT, "started_at" TIMESTAMP, "table_path" VARCHAR, "policy" VARCHAR, '
    '"records" BIGINT, "substances" BIGINT, "pairs" BIGINT, "errors" BIGINT, '
    '"warnings" BIGINT, "notes" BIGINT',
    "findings": '"run_id" BIGINT, "check" VARCHAR, "severity" VARCHAR, "substance" VARCHAR, '
    '"records" VARCHAR[], "message" VARCHAR, "evidence" VARCHAR, '
    '"suggestion" VARCHAR, "file" VARCHAR, "line" BIGINT',
}


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
    if path is not None:
        _refuse_foreign(Path(path))
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


def _refuse_foreign(path: Path) -> None:
    """Refuse a path that holds something other than a DuckDB database.

    DuckDB opens some other files (a CSV file becomes an in-memory view) without complaint,
    so an import into ``--db table.csv`` would report success and store nothing.
    """
    if path.is_dir():
        raise StoreError(f"{path} is a directory; --db takes a store file (.duckdb)")
    if not path.is_file() or path.stat().st_size == 0:
        return
    with open(path, "rb") as fh:
        head = fh.read(12)
    if head[8:12] != b"DUCK":  # DuckDB's file header: its magic bytes at offset 8
        raise StoreError(
            f"{path} is not a vpaudit store (not a DuckDB database file): give the name of "
            "an existing store or of a new file, e.g. --db table.duckdb"
        )


def _ensure_schema(con: duckdb.DuckDBPyConnection, path) -> None:
    tables = {r[0] for r in con.execute("SELECT table_name FROM duckdb_tables()").fetchall()}
    if tables and "meta" not in tables:
        raise StoreError(
            f"{path} is a DuckDB database but not a vpaudit store (it holds "
            f"{', '.join(sorted(tables)[:5])}); give a new file name for the store"
        )
    con.execute('CREATE TABLE IF NOT EXISTS meta ("key" VARCHAR PRIMARY KEY, "value" VARCHAR)')
    row = con.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
    if row is None:
        con.execute("INSERT INTO meta VALUES ('schema_version', ?)", [str(SCHEMA_VERSION)])
    elif int(row[0]) != SCHEMA_VERSION:
        raise StoreError(
            f"{path} has store schema version {row[0]}; this vpaudit reads "
            f"version {SCHEMA_VERSION}: remove it (and {Path(str(path)).name}.manifest.json) "
            "and import the table again"
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
            f"reads version {SCHEMA_VERSION}: remove it (and {Path(str(path)).name}.manifest.json) "
            "and import the table again"
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
    frames = _frames(table)
    con.execute("BEGIN TRANSACTION")
    try:
        for name in _MANIFEST_KINDS:
            con.execute(f'DELETE FROM "{name}"')
            incoming = _frame_for(con, name, frames[name])
            if len(incoming):
                con.register("_incoming", incoming)
                try:
                    con.execute(f'INSERT INTO "{name}" SELECT * FROM _incoming')
                finally:
                    con.unregister("_incoming")
        con.execute("INSERT OR REPLACE INTO meta VALUES ('source', ?)", [source or ""])
        con.execute(
            "INSERT OR REPLACE INTO meta VALUES ('manifest', ?)",
            [json.dumps(manifest(table), sort_keys=True)],
        )
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
        frame = _df(con, f'SELECT * FROM "{name}" ORDER BY "file", "line"')
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


def digest(frame: pd.DataFrame, kind: str) -> str:
    """SHA-256 over every cell of a table frame that the store keeps -- each text cell, each
    number as its verbatim text *and* as the value the checks use (SI values included) --
    in file-and-line order: the same for the text files and the store.
    """
    if not len(frame):
        return hashlib.sha256(b"").hexdigest()
    files = frame["file"].astype(str).to_numpy() if "file" in frame else np.zeros(len(frame))
    lines = frame["line"].to_numpy() if "line" in frame else np.zeros(len(frame))
    order = np.lexsort((lines, files))
    h = hashlib.sha256()
    for c, sql_type in _COLUMNS[kind]:
        h.update(c.encode())
        if c not in frame:
            h.update(b"\x00absent")
            continue
        if sql_type == "DOUBLE":  # the value's bits, every NaN alike
            values = pd.to_numeric(frame[c], errors="coerce").to_numpy(np.float64)[order]
            h.update(np.where(np.isnan(values), np.nan, values).tobytes())
        elif sql_type == "BIGINT":
            h.update(frame[c].to_numpy(np.int64)[order].tobytes())
        else:
            values = frame[c].astype(object).to_numpy()[order]
            text = np.where(pd.isna(values), "\x00", values.astype(str)).astype(object)
            h.update(pd.util.hash_array(text).tobytes())
    return h.hexdigest()


def manifest(table: Table) -> dict:
    """Row counts and content digests of the tables the store keeps for a table."""
    return {
        "schema_version": SCHEMA_VERSION,
        **{
            kind: {"rows": int(len(frame)), "sha256": digest(frame, kind)}
            for kind, frame in _frames(table).items()
        },
    }


def _frames(table: Table) -> dict[str, pd.DataFrame]:
    return {
        "records": table.records,
        "references": table.references,
        "points": table.points,
        "problems": table.problems,
        "rewrites": pd.DataFrame(table.rewrites, columns=[c for c, _ in _COLUMNS["rewrites"]]),
    }


def _side(db: Path, suffix: str) -> Path:
    return db.with_name(db.name + suffix)


def verify(db: str | Path, table: Table | None = None) -> Table:
    """Open a store for reading and prove it is what was imported.

    Raises
    ------
    StoreError
        On a stray ``.wal``, a missing or unreadable manifest, or content that does not match
        the manifests; the message says how to rebuild the store.
    """
    db = Path(db)
    rebuild = (
        f"rebuild it from the table files with: vpaudit import TABLE --db {shlex.quote(str(db))}"
    )
    if not db.is_file():
        raise StoreError(f"{db}: no such store")
    if _side(db, ".wal").exists():
        raise StoreError(
            f"{db} has a stray {db.name}.wal: it was not closed cleanly, or "
            f"was copied without its log, so its content is uncertain; {rebuild}"
        )
    side = _side(db, ".manifest.json")
    try:
        outer = json.loads(side.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise StoreError(f"{db} has no manifest ({side.name}) beside it; {rebuild}") from None
    except (OSError, ValueError) as exc:
        raise StoreError(f"{side} cannot be read ({exc}); {rebuild}") from None
    con = connect(db, read_only=True)
    try:
        row = con.execute("SELECT value FROM meta WHERE key = 'manifest'").fetchone()
        table = read_table(con, str(db))
    finally:
        con.close()
    inner = json.loads(row[0]) if row else None
    actual = manifest(table)
    if inner != outer:
        raise StoreError(
            f"{db}: the manifest beside it does not match the one inside it (an "
            f"import was interrupted, or the files were mixed up); {rebuild}"
        )
    if actual != inner:
        bad = [k for k in _MANIFEST_KINDS if actual[k] != inner.get(k)]
        raise StoreError(
            f"{db}: the {', '.join(bad)} in the store differ from its manifest "
            f"(it was changed outside vpaudit); {rebuild}"
        )
    return table


class WriterLock:
    """An advisory lock ``<db>.lock`` held while a vpaudit process writes the store.

    Parameters
    ----------
    db : Path
        The store.
    timeout : float
        Seconds to wait for another writer before giving up with a message naming it.
    """

    def __init__(self, db: str | Path, timeout: float = 30.0) -> None:
        self.path = _side(Path(db), ".lock")
        self.timeout = timeout
        self._fh = None

    def __enter__(self) -> WriterLock:
        import fcntl

        self._fh = open(self.path, "a+", encoding="utf-8")
        deadline = time.monotonic() + self.timeout
        while True:
            try:
                fcntl.flock(self._fh, fcntl.LOCK_EX | fcntl.LOCK_NB)
                break
            except BlockingIOError:
                if time.monotonic() >= deadline:
                    self._fh.seek(0)
                    holder = self._fh.read().strip() or "another process"
                    self._fh.close()
                    raise StoreError(
                        f"{self.path.with_suffix('')} is being written by {holder}; "
                        f"waited {self.timeout:g} s, try again when it is done"
                    ) from None
                time.sleep(0.05)
        self._fh.seek(0)
        self._fh.truncate()
        self._fh.write(
            f"PID {os.getpid()} ({' '.join(sys.argv[:2]) or 'python'}) since "
            f"{time.strftime('%Y-%m-%d %H:%M:%S')}"
        )
        self._fh.flush()
        return self

    def __exit__(self, *exc) -> None:
        import fcntl

        if self._fh is not None:
            self._fh.seek(0)
            self._fh.truncate()
            fcntl.flock(self._fh, fcntl.LOCK_UN)
            self._fh.close()


def store_table(
    table: Table, db: str | Path, source: str, result=None, lock_timeout: float = 30.0
) -> None:
    """Write a validated table (and optionally an audit run) into ``db``, all or nothing:
    one transaction, a checkpoint so no ``.wal`` is left, then the manifest beside it
    (written to a temporary file and renamed, so it is never half-written).
    """
    db = Path(db)
    with WriterLock(db, lock_timeout):
        con = connect(db)
        try:
            write_table(con, table, source)
            if result is not None:
                write_run(con, result, source)
            checkpoint(con)
        finally:
            con.close()
        side = _side(db, ".manifest.json")
        tmp = _side(db, ".manifest.json.tmp")
        tmp.write_text(json.dumps(manifest(table), sort_keys=True, indent=1), encoding="utf-8")
        os.replace(tmp, side)


def import_table(
    path: str | Path,
    db: str | Path,
    normalize: bool = False,
    report=None,
    lock_timeout: float = 30.0,
    runtime=None,
) -> dict[str, int]:
    """Read, validate and load a table into the store ``db``, all or nothing.

    Every input is parsed and validated first; a table with any read error or rule problem
    is rejected whole (every problem listed) and the database is left exactly as it was.
    ``runtime`` (:class:`vpaudit.runtime.Runtime`) sets the threads of the reading.

    Raises
    ------
    TableErrors
        Input that cannot be read as written.
    RecordRuleError
        Records that read fine but break a rule (range, source, duplicate id, pole).
    StoreError
        The store is locked by another writer beyond the wait, or cannot be written.
    """
    from .errors import RecordRuleError
    from .readers.table import load_table
    from .runtime import DEFAULT

    table = load_table(path, normalize=normalize, runtime=runtime or DEFAULT)
    for r in table.rewrites:
        if report:
            report(r)
    if len(table.problems):
        raise RecordRuleError(
            f"{p.file}:{p.line} [{p.column}] {p.message}" for p in table.problems.itertuples()
        )
    store_table(table, db, str(path), lock_timeout=lock_timeout)
    return {
        "records": len(table.records),
        "references": len(table.references),
        "points": len(table.points),
    }


# The lock-down of query connections; lock_configuration last, so nothing can undo it.
_LOCKED = {
    "enable_progress_bar": False,
    "enable_external_access": False,
    "autoload_known_extensions": False,
    "autoinstall_known_extensions": False,
    "lock_configuration": True,
}


#: The longest time limit a query may be given, in seconds.
MAX_QUERY_SECONDS = 3600.0


def query(table: Table | str | Path, sql: str, timeout: float = 10.0) -> pd.DataFrame:
    """Run one read-only SELECT over a table's records, references, points and problems.

    The connection cannot read or write files outside the database (DuckDB's external access
    off, extensions off, configuration locked) and the query is interrupted after
    ``timeout`` seconds. Anything but a single SELECT is refused.

    Parameters
    ----------
    table : Table, or path of a ``.duckdb`` store
    sql : str
    timeout : float
        Seconds before the query is interrupted.
    """
    import threading

    from .errors import VpauditError

    try:
        statements = duckdb.extract_statements(sql)
    except duckdb.Error as exc:
        raise VpauditError(f"the query does not parse: {str(exc).splitlines()[0]}") from None
    if not (math.isfinite(timeout) and 0 < timeout <= MAX_QUERY_SECONDS):
        raise VpauditError(
            f"the query's time limit must be more than 0 and at most {MAX_QUERY_SECONDS:g} "
            f"seconds, not {timeout!r}"
        )
    if len(statements) != 1 or statements[0].type != duckdb.StatementType.SELECT:
        kinds = ", ".join(str(st.type).split(".")[-1] for st in statements) or "nothing"
        raise VpauditError(f"only a single SELECT statement is run (got: {kinds})")
    # older DuckDB releases parse PRAGMA as a SELECT of a table function: read the keyword
    first = re.match(r"[\s(]*([A-Za-z]+)", re.sub(r"--[^\n]*|/\*.*?\*/", " ", sql, flags=re.S))
    if first is None or first[1].upper() not in ("SELECT", "WITH", "FROM", "VALUES", "TABLE"):
        word = first[1].upper() if first else "nothing"
        raise VpauditError(f"only a single SELECT statement is run (got: {word})")
    if isinstance(table, str | Path):
        verify(table)
        con = duckdb.connect(
            str(table),
            read_only=True,
            config={
                k: v
                for k, v in _LOCKED.items()
                if k not in ("enable_progress_bar", "lock_configuration")
            },
        )
        con.execute("SET enable_progress_bar = false")
        con.execute("SET lock_configuration = true")
    else:
        con = duckdb.connect(":memory:")
        for name in ("records", "references", "points", "problems"):
            con.register(f"_{name}", getattr(table, name))
            con.execute(f'CREATE TABLE "{name}" AS SELECT * FROM "_{name}"')
            con.unregister(f"_{name}")
        for key, value in _LOCKED.items():
            con.execute(f"SET {key} = {str(value).lower()}")
    timer = threading.Timer(timeout, con.interrupt)
    timer.start()
    try:
        return con.execute(sql).df()
    except duckdb.InterruptException:
        raise VpauditError(f"the query ran longer than {timeout:g} s and was stopped") from None
    except duckdb.PermissionException as exc:
        raise VpauditError(f"refused: {str(exc).splitlines()[0]}") from None
    except duckdb.CatalogException as exc:  # a table or column that is not there: say which are
        got = con.execute("SELECT table_name FROM duckdb_tables() ORDER BY 1").fetchall()
        names = [r[0] for r in got]
        raise VpauditError(
            f"the query failed: {_first_lines(exc)} (the tables are {', '.join(names)})"
        ) from None
    except duckdb.Error as exc:
        raise VpauditError(f"the query failed: {_first_lines(exc)}") from None
    finally:
        timer.cancel()
        con.close()


def _first_lines(exc: Exception) -> str:
    """A DuckDB error's first line, and its candidate names when it gives them (a column
    not found: ``Candidate bindings: "check"``).
    """
    lines = str(exc).splitlines()
    hint = [ln.strip() for ln in lines[1:3] if ln.startswith("Candidate")]
    return " ".join([lines[0] if lines else type(exc).__name__, *hint])
