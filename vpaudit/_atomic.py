"""Writes that are whole or not at all, and a lock that makes writers take turns.

Every file vpaudit writes for a user (a table file edited by ``apply``, ``accepted.toml``,
a records file that ``fit --write`` extends, an export, a store's manifest, a report or a
picture written with ``-o``) is written to a
temporary file beside it, flushed to disk, and renamed over the old one: a reader, or a
process killed at any moment, sees the old file or the new one, never a mix.
"""

from __future__ import annotations

import contextlib
import fcntl
import os
import time
from collections.abc import Iterator
from pathlib import Path

from .errors import VpauditError

__all__ = ["append_line", "atomic_path", "file_lock", "write_atomic"]


def _sync_dir(folder: Path) -> None:
    fd = os.open(folder, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def write_atomic(path: str | Path, data: bytes | str) -> None:
    """Replace ``path`` with ``data`` (text is written as UTF-8), all or nothing
    (:func:`atomic_path`).
    """
    blob = data.encode("utf-8") if isinstance(data, str) else data
    with atomic_path(path) as tmp:
        tmp.write_bytes(blob)


@contextlib.contextmanager
def atomic_path(path: str | Path) -> Iterator[Path]:
    """A path to write ``path`` through (a report, a picture): a temporary file beside it,
    renamed over it when the block ends without an error (a writer that reads the format
    from the ending must be told it). On an error or an interrupt it is removed and the old
    file, if any, stands: a report cut off half-way is never left where a CI job would
    upload it. A path that is not a regular file (``/dev/stdout``, a named pipe) is written
    directly.
    """
    path = Path(path)
    if path.exists() and not path.is_file():
        yield path
        return
    # no table file's ending: a reader of the folder never takes it for one of its files
    tmp = path.with_name(f".{path.name}.vpaudit-tmp-{os.getpid()}")
    try:
        yield tmp
        with open(tmp, "rb+") as fh:
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except OSError as exc:
        if exc.filename != str(tmp):
            raise
        # a missing folder or a refused write: said of the file asked for, not of the
        # temporary one
        raise type(exc)(exc.errno, exc.strerror, str(path)) from None
    finally:
        tmp.unlink(missing_ok=True)
    _sync_dir(path.parent)


def append_line(path: str | Path, line: str) -> None:
    """Append one line (a newline is added) and flush it to disk before returning."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    with open(path, "a", encoding="utf-8") as fh:
        fh.write(line + "\n")
        fh.flush()
        os.fsync(fh.fileno())


@contextlib.contextmanager
def file_lock(path: str | Path, timeout: float = 30.0, what: str = "the table") -> Iterator[None]:
    """Hold an advisory lock on ``path`` (a file or a directory that exists) while the block
    runs; nothing is created.

    vpaudit locks the table directory itself while ``apply`` or ``accept`` writes into it,
    so no lock file is left in a folder under version control. A second vpaudit process
    waits up to ``timeout`` seconds, then fails with a message saying what is locked.
    """
    fd = os.open(path, os.O_RDONLY)
    try:
        deadline = time.monotonic() + timeout
        while True:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                break
            except BlockingIOError:
                if time.monotonic() > deadline:
                    raise VpauditError(
                        f"{what} is being changed by another vpaudit process (waited "
                        f"{timeout:g} s for its lock on {path}); wait for it to finish and "
                        "try again"
                    ) from None
                time.sleep(0.05)
        yield
    finally:
        os.close(fd)  # closing the descriptor releases the lock
