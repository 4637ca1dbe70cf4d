"""Read one table file into text cells with their line numbers; no type is ever inferred.

Every reader returns a :class:`RawFrame` (:mod:`.raw`): column names, the cells of each
column as text (``None`` where empty) and the 1-based line where each row starts. Numbers
are parsed later, by one grammar, for every format alike. This module finds a table's files,
gives each to the reader of its format (:mod:`.csv_format`, :mod:`.yaml_format`,
:mod:`.json_format`, :mod:`.parquet_format`) and reads them ahead on a thread for the
command line.
"""

from __future__ import annotations

import threading
from pathlib import Path

from . import csv_format
from .json_format import read_json
from .parquet_format import read_parquet
from .raw import MAX_FILE_BYTES, MAX_ROWS, PARTS, RawFrame, error_at
from .yaml_format import read_yaml

__all__ = [
    "RawFrame",
    "read_raw",
    "read_ahead",
    "ReadAhead",
    "table_files",
    "MAX_FILE_BYTES",
    "MAX_ROWS",
    "SUFFIXES",
]


#: File endings recognised as table files.
SUFFIXES = {
    ".csv": "csv",
    ".tsv": "csv",
    ".yaml": "yaml",
    ".yml": "yaml",
    ".json": "json",
    ".parquet": "parquet",
    ".pq": "parquet",
}

_READERS = {
    "csv": csv_format.read_csv,
    "yaml": read_yaml,
    "json": read_json,
    "parquet": read_parquet,
}


#: Spreadsheet files: never read, but never passed over in silence in a table folder either
#: (a sheet saved beside the CSV files is a table the user meant to audit).
SPREADSHEETS = frozenset({".xlsx", ".xlsm", ".xls", ".ods", ".numbers"})


def table_files(root: Path) -> list[tuple[Path, str]]:
    """The table files of the directory ``root`` with the kind of each, in reading order:
    ``records/``, ``references/``, ``points/``, each folder's files (at any depth) sorted.
    A spreadsheet there is listed too, so that reading it says it is not read; other files
    (notes, backups) are passed over.
    """
    found = []
    for kind in PARTS:
        folder = root / kind
        if folder.is_dir():
            for f in sorted(folder.rglob("*")):
                suffix = f.suffix.lower()
                if f.is_file() and (suffix in SUFFIXES or suffix in SPREADSHEETS):
                    found.append((f, kind))
    return found


class _Ahead:
    """One file being read ahead: its stamp when it was started, then its frame or error."""

    def __init__(self, path: Path, stamp: tuple[int, int]) -> None:
        self.path = path
        self.stamp = stamp
        self.done = threading.Event()
        self.frame: RawFrame | None = None
        self.error: BaseException | None = None


class ReadAhead:
    """Files being read on a thread, by path, until :func:`read_raw` takes them."""

    def __init__(self) -> None:
        self.jobs: dict[str, _Ahead] = {}

    def take(self, path: str | Path) -> RawFrame | None:
        """The frame read ahead for ``path`` (waiting for it), or None when there is none
        or the file has changed since its read began; raises the read's error.
        """
        job = self.jobs.pop(str(path), None)
        if job is None:
            return None
        job.done.wait()
        if job.stamp != _stamp(Path(path)):  # changed since: read it again
            return None
        if job.error is not None:
            raise job.error
        return job.frame

    def wait(self) -> None:
        """Wait until every file started is read (for tests)."""
        for job in list(self.jobs.values()):
            job.done.wait()


def _stamp(path: Path) -> tuple[int, int] | None:
    try:
        st = path.stat()
    except OSError:
        return None
    return (st.st_size, st.st_mtime_ns)


def read_ahead(path: str | Path) -> ReadAhead | None:
    """Start reading the table files at ``path`` (a table directory or one file) on a
    daemon thread, one after another; returns what :func:`read_raw` takes them from
    (passed down in :class:`vpaudit.runtime.Runtime`), None when nothing was started.

    For the command line: ``vpaudit audit`` calls it before it imports pandas, the checks
    and the reporters (docs/performance.md), so that the files are read meanwhile, and the next
    file is read while the frame of the last one is built. :func:`read_raw` takes a file's
    result only while the file's size and modification time are those it had when its read
    began (else it reads the file again), and raises a read's error itself. A ``.duckdb``
    store, a missing path or a directory without table files starts nothing; what is never
    taken is dropped with the process.

    This module needs only numpy, pyarrow and yaml. The pyarrow modules the readers use are
    imported here, on the calling thread, before the thread starts: the thread then imports
    nothing, so it never imports beside the calling thread's imports of pandas and the rest.
    """
    p = Path(path)
    if p.is_dir():  # a spreadsheet is not read ahead: reading it says it is not read
        paths = [f for f, _ in table_files(p) if f.suffix.lower() in SUFFIXES]
    elif p.is_file() and p.suffix.lower() in SUFFIXES:
        paths = [p]
    else:
        return None
    import pyarrow  # noqa: F401  (imported here: see above)
    import pyarrow.compute  # noqa: F401
    import pyarrow.csv  # noqa: F401

    if any(SUFFIXES[f.suffix.lower()] == "parquet" for f in paths):
        import pyarrow.parquet  # noqa: F401

    ahead = ReadAhead()
    for f in paths:
        stamp = _stamp(f)
        if stamp is not None:
            ahead.jobs.setdefault(str(f), _Ahead(f, stamp))
    jobs = list(ahead.jobs.values())
    if not jobs:
        return None

    def work() -> None:
        for job in jobs:
            try:
                job.frame = _read_raw(job.path)
            except BaseException as exc:  # noqa: BLE001  (raised by read_raw, which takes it)
                job.error = exc
            finally:
                job.done.set()

    threading.Thread(target=work, name="vpaudit-read-ahead", daemon=True).start()
    return ahead


def read_raw(path: str | Path, ahead: ReadAhead | None = None) -> RawFrame:
    """Read any supported table file into a :class:`RawFrame` (or take the one ``ahead``
    read, waiting for it).

    Raises
    ------
    TableError
        For an unknown file ending, a file that cannot be read, or malformed content; the
        message names the file and line.
    """
    if ahead is not None:
        frame = ahead.take(path)
        if frame is not None:
            return frame
    return _read_raw(path)


def _read_raw(path: str | Path) -> RawFrame:
    p = Path(path)
    fmt = SUFFIXES.get(p.suffix.lower())
    if fmt is None:
        if p.suffix.lower() in SPREADSHEETS:
            raise error_at(
                str(path),
                "a spreadsheet is not read: save each sheet as CSV (UTF-8) and move the "
                "spreadsheet out of the table's folders",
            )
        raise error_at(
            str(path),
            f"unknown file type {p.suffix!r}; expected one of {', '.join(sorted(SUFFIXES))}",
        )
    if not p.is_file():
        raise error_at(str(path), "no such file")
    if fmt == "parquet":
        return read_parquet(str(path))
    size = p.stat().st_size
    if size > MAX_FILE_BYTES:
        raise error_at(str(path), f"file is larger than the limit of {MAX_FILE_BYTES} bytes")
    if fmt == "csv" and size > csv_format.STREAM_BYTES:
        frame = csv_format.read_csv_streamed(str(path))
        if frame is not None:
            return frame
    return _READERS[fmt](str(path), p.read_bytes())
