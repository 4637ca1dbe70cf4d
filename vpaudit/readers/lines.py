"""Physical lines, counted one way by every reader and every writer.

A line ends at LF, at CR LF, or at a lone CR (Python's universal newlines, what its ``csv``
module counts), and at nothing else. ``str.splitlines`` also breaks at U+2028, U+2029,
U+0085, form feed and a few other characters, and PyYAML counts U+0085, U+2028 and U+2029
as line breaks: a note holding one of those must not move the line numbers that findings
report and that ``vpaudit apply`` edits, so nothing in vpaudit counts lines any other way
than through this module.
"""

from __future__ import annotations

import re
from bisect import bisect_right

__all__ = ["line_at", "line_starts", "split_lines"]

_BREAK = re.compile(r"\r\n|\r|\n")


def split_lines(text: str) -> list[str]:
    """The physical lines of ``text``, each with its own line end (the last may have none).

    Joining the result gives ``text`` back exactly.
    """
    out, pos = [], 0
    for m in _BREAK.finditer(text):
        out.append(text[pos : m.end()])
        pos = m.end()
    if pos < len(text):
        out.append(text[pos:])
    return out


def line_starts(text: str) -> list[int]:
    """The offset in ``text`` at which each physical line begins (the first is 0)."""
    return [0, *(m.end() for m in _BREAK.finditer(text))]


def line_at(starts: list[int], offset: int) -> int:
    """The 1-based line that holds ``offset``, given :func:`line_starts` of the text."""
    return bisect_right(starts, offset)
