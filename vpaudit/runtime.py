"""Runtime tuning, in one place: how many threads vpaudit's own work may use and from what
size it splits work, the two threading helpers that work uses, and the process settings
that only the command line applies.

Nothing here changes a result: every switch trades time or memory, and the tests compare
the threaded paths with the plain ones. The library never changes its host's process
(allocator, collector, exit); :func:`process_settings` and :class:`FastExit` are for
``vpaudit``'s own command line. Measurements behind the settings are in
``docs/performance.md``.
"""

from __future__ import annotations

import ctypes
import os
import sys
import threading
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from .readers.files import ReadAhead

__all__ = [
    "PARALLEL_ROWS",
    "BLOCK_ROWS",
    "Runtime",
    "DEFAULT",
    "SharedBlocks",
    "in_thread",
    "process_settings",
    "release_scratch",
    "FastExit",
]

#: Rows (records, or the rows of one file) from which work is split across threads:
#: below it, starting threads costs more than it saves.
PARALLEL_ROWS = 200_000

#: Rows per block of the (rows x grid) array work: keeps temporaries below glibc's dynamic
#: mmap threshold (32 MB), so they are reused instead of page-faulted anew.
BLOCK_ROWS = 32768


@dataclass(frozen=True)
class Runtime:
    """How vpaudit's own work may use the machine; passed down, never set globally.

    Attributes
    ----------
    jobs : int
        Threads (``--jobs``); 0 means one per core, at most 4 for parsing.
    parallel_rows : int
        Rows from which work is split across threads (:data:`PARALLEL_ROWS`; the tests set
        it to 0 to run the threaded paths on small tables).
    block_rows : int
        Rows per block of the array work (:data:`BLOCK_ROWS`; the tests make blocks small
        so that both threads take some).
    ahead : ReadAhead, optional
        Files being read on a thread since before the command imported the rest
        (:func:`vpaudit.readers.files.read_ahead`), for the readers to take.
    """

    jobs: int = 0
    parallel_rows: int = PARALLEL_ROWS
    block_rows: int = BLOCK_ROWS
    ahead: ReadAhead | None = None

    def workers(self) -> int:
        """Threads that parse the columns of one large file."""
        return self.jobs or min(4, os.cpu_count() or 1)

    def threads_allowed(self) -> bool:
        """Whether ``jobs`` and the machine allow a second thread."""
        return (self.jobs or os.cpu_count() or 1) >= 2

    def split(self, rows: int) -> bool:
        """Whether work over ``rows`` rows goes on a second thread."""
        return rows >= self.parallel_rows and self.threads_allowed()


#: The runtime of a library call that passes none.
DEFAULT = Runtime()


class SharedBlocks:
    """Blocks ``[a, a + size)`` of ``range(n)`` that threads take in turn, each calling
    ``work(slice)`` on the blocks it takes; the blocks write disjoint parts of their
    outputs, so no two threads touch the same element.

    :meth:`run` takes blocks until none is left; :meth:`wait` returns once every block
    taken by any thread is done, and raises the first error a block raised.
    """

    def __init__(self, n: int, size: int, work: Callable[[slice], None]) -> None:
        self._starts = iter(range(0, n, size))
        self._n, self._size, self._work = n, size, work
        self._lock = threading.Condition()
        self._busy = 0
        self.error: BaseException | None = None

    def run(self) -> None:
        """Do blocks until none is left."""
        while True:
            with self._lock:
                a = next(self._starts, None)
                if a is None:
                    return
                self._busy += 1
            try:
                self._work(slice(a, min(self._n, a + self._size)))
            except BaseException as exc:  # noqa: BLE001  (raised again by wait)
                self.error = self.error or exc
            finally:
                with self._lock:
                    self._busy -= 1
                    self._lock.notify_all()

    def wait(self) -> None:
        """Return when every block taken is done; raise the first error of any."""
        with self._lock:
            while self._busy:
                self._lock.wait()
        if self.error is not None:
            raise self.error


def in_thread(func: Callable[..., Any], *args: Any, name: str = "vpaudit-work"):
    """Start ``func(*args)`` on a daemon thread; returns a function that waits and returns
    its result (or raises its exception).
    """
    box: dict = {}

    def target() -> None:
        try:
            box["value"] = func(*args)
        except BaseException as exc:  # noqa: BLE001  (raised again by the waiter)
            box["error"] = exc

    thread = threading.Thread(target=target, name=name, daemon=True)
    thread.start()

    def wait():
        thread.join()
        if "error" in box:
            raise box["error"]
        return box["value"]

    return wait


# --- process settings: the command line only --------------------------------------------
# mallopt parameters, from glibc's <malloc.h>
_M_TRIM_THRESHOLD = -1
_M_MMAP_THRESHOLD = -3
_M_ARENA_MAX = -8


def _keep_freed_memory(mmap_threshold: int = 256 << 20, trim_threshold: int = 1 << 30) -> bool:
    """Ask glibc to serve blocks below ``mmap_threshold`` bytes from the heap and keep up to
    ``trim_threshold`` bytes of freed heap for reuse, instead of faulting fresh pages for
    every large temporary. False on a C library without ``mallopt`` (nothing changes).
    """
    if not sys.platform.startswith("linux"):
        return False
    try:
        mallopt = ctypes.CDLL(None).mallopt  # the C library the interpreter runs on
    except (OSError, AttributeError):
        return False
    mallopt.argtypes = (ctypes.c_int, ctypes.c_int)
    mallopt.restype = ctypes.c_int
    return bool(mallopt(_M_MMAP_THRESHOLD, mmap_threshold)) and bool(
        mallopt(_M_TRIM_THRESHOLD, trim_threshold)
    )


def _one_arena() -> bool:
    """Ask glibc to serve every thread from one arena, so that the blocks a second thread
    frees (the solid/liquid pairs' scan, the columns parsed beside each other) are reused
    by the others instead of kept in an arena of their own; the threads rarely allocate at
    the same moment. False on a C library without ``mallopt`` (nothing changes).
    """
    if not sys.platform.startswith("linux"):
        return False
    try:
        mallopt = ctypes.CDLL(None).mallopt
    except (OSError, AttributeError):
        return False
    mallopt.argtypes = (ctypes.c_int, ctypes.c_int)
    mallopt.restype = ctypes.c_int
    return bool(mallopt(_M_ARENA_MAX, 1))


def _no_huge_page_advice() -> None:
    """Stop numpy advising transparent huge pages for large arrays (a fault may then compact
    memory first); a no-op where numpy lacks the switch.
    """
    import numpy as np

    core = getattr(np, "_core", None) or getattr(np, "core", None)
    switch = getattr(getattr(core, "multiarray", None), "_set_madvise_hugepage", None)
    if switch is not None:
        switch(False)


def _fewer_gc_passes() -> None:
    """A young collection every 100 000 allocations, a full one almost never: the findings
    of a large table are many containers that a full collection would scan again and again.
    """
    import gc

    gc.set_threshold(100_000, 50, 1000)


def process_settings() -> None:
    """The allocator and collector settings of a bulk command-line run (never applied on
    import of the library: a library must not change its host's process).
    """
    _keep_freed_memory()
    _one_arena()
    _no_huge_page_advice()
    _fewer_gc_passes()


def release_scratch() -> None:
    """Return the free memory both allocators hold (Arrow's pool and glibc's heap) to the
    operating system; called once after a large table is read, whose freed scratch space
    numpy, on the other allocator, could not reuse.
    """
    import pyarrow as pa

    pa.default_memory_pool().release_unused()
    if sys.platform.startswith("linux"):
        try:
            trim = ctypes.CDLL(None).malloc_trim
        except (OSError, AttributeError):
            return
        trim.argtypes = (ctypes.c_size_t,)
        trim(0)


class FastExit(SystemExit):
    """Raised by a command whose work is done and written, with nothing left to close: the
    console command (:func:`vpaudit.cli.run`) flushes the output streams and ends the
    process without the interpreter's teardown, which would free every object of a large
    audit one by one only to end. Any other caller sees a plain :class:`SystemExit`.
    """

    def end_process(self) -> None:
        """Flush stdout and stderr and end the process with this exit code (141, as a
        program ended by SIGPIPE, when the reader of the output has closed it).
        """
        try:
            sys.stdout.flush()
            sys.stderr.flush()
        except BrokenPipeError:
            os._exit(141)
        os._exit(self.code or 0)
