"""Process-wide memory settings for bulk runs of the command line.

A million-substance audit makes many short-lived arrays of tens of megabytes, and on this
project's machines a page fault is dear, so two defaults cost seconds:

* glibc serves blocks above its mmap threshold (adaptive, at most 32 MB) with fresh
  ``mmap`` pages and unmaps them on release, so every such temporary is faulted and zeroed
  anew: at 10^6 substances that was 7 of 15 s of system time. Raising the threshold and
  the trim threshold keeps freed memory in the heap for reuse.
* numpy asks for transparent huge pages (``madvise``) on arrays of 4 MB and more. Where the
  kernel's THP defrag setting is ``madvise`` (a common default), such a fault may compact
  memory before it returns: touching 1 GB took 2.6 s instead of 0.4 s here, and a
  10^6-substance audit 6-7 s instead of 5.6 s (three runs each).

* Python's cycle collector scans every live container object at each full collection,
  and the default thresholds trigger several while the ~90 000 findings of a 10^6-substance
  table (with their evidence dicts) are made and written: 0.5 s of the JSON output alone.
  Far higher thresholds keep the young collections (which free any cycle soon) and make
  full ones rare: 6.7-8.6 s instead of 8.2-10.9 s end to end, the same peak memory.

Measured by ``benchmarks/audit_scale.py``. The settings are applied by the CLI only, never
on import of the library (a library must not change its host's allocator or collector).
"""

from __future__ import annotations

import ctypes
import sys

__all__ = ["keep_freed_memory", "no_huge_page_advice", "fewer_gc_passes", "release_scratch"]

# mallopt parameters, from glibc's <malloc.h>
_M_TRIM_THRESHOLD = -1
_M_MMAP_THRESHOLD = -3


def keep_freed_memory(mmap_threshold: int = 256 << 20, trim_threshold: int = 1 << 30) -> bool:
    """Ask glibc to serve blocks below ``mmap_threshold`` bytes from the heap and to keep
    up to ``trim_threshold`` bytes of freed heap for reuse.

    Returns True when applied; False on a C library without ``mallopt`` (macOS, Windows,
    musl), where nothing changes.
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


def fewer_gc_passes() -> None:
    """Raise the cycle collector's thresholds for a bulk run (see the module notes): a young
    collection every 100 000 allocations, a full one almost never.
    """
    import gc

    gc.set_threshold(100_000, 50, 1000)


def no_huge_page_advice() -> None:
    """Stop numpy from advising transparent huge pages for its large arrays (see the module
    notes); a no-op where numpy lacks the switch.
    """
    import numpy as np

    core = getattr(np, "_core", None) or getattr(np, "core", None)
    switch = getattr(getattr(core, "multiarray", None), "_set_madvise_hugepage", None)
    if switch is not None:
        switch(False)


def release_scratch() -> None:
    """Return the free memory both allocators hold (Arrow's pool and glibc's heap) to the
    operating system.

    Called once after a large table is read: reading leaves hundreds of megabytes of freed
    scratch space behind (a third of the peak at 10^6 substances), which numpy, using the
    other allocator, could not reuse. Costs a few milliseconds.
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
