"""What every reader of a table file shares: the :class:`RawFrame` it returns (text cells
with their line numbers; no type is ever inferred), the limits on a file's size, rows and
columns, and the checks of its bytes, header and text that name file and line.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np

from ..errors import Location, TableError

#: Largest table file read, in bytes (a clear error above it).
MAX_FILE_BYTES = 2 * 1024**3
#: Largest number of rows read from one file.
MAX_ROWS = 20_000_000
#: Most columns a table file may have (the table format has fewer than 30; unknown columns
#: are an error anyway). Checked before a header is parsed.
MAX_COLUMNS = 200
#: The kinds of table file: the folders of a table directory, in the order they are read,
#: and the keys a YAML or JSON file may name its kind by.
PARTS = ("records", "references", "points")


@dataclass
class RawFrame:
    """The text cells of one table file.

    Attributes
    ----------
    path : str
        The file as given.
    columns : list of str
        Column names in file order.
    cells : dict of str to list of (str or None), or to a pyarrow string array
        The cells of each column, verbatim; ``None`` or ``""`` for an empty cell.
    lines : list of int or ndarray
        The 1-based line where each row starts (the row number for Parquet).
    kind_hint : str or None
        ``records``, ``references`` or ``points`` when the file says so itself (a YAML or
        JSON mapping with that key, or the folder it lies in).
    """

    path: str
    columns: list[str]
    cells: dict[str, object]
    lines: list[int] | np.ndarray
    kind_hint: str | None = None
    notes: list[str] = field(default_factory=list)

    def __len__(self) -> int:
        return len(self.lines)


def error_at(
    path: str, message: str, line: int | None = None, column: str | None = None
) -> TableError:
    """A :class:`TableError` about ``path``, at ``line`` and ``column`` where known."""
    return TableError(message, Location(path, line, column))


def check_header(path: str, names: list[str], line: int) -> list[str]:
    """The column names of a header (at ``line``), stripped; an empty or repeated name is an
    error.
    """
    seen: dict[str, int] = {}
    out = []
    for i, raw in enumerate(names):
        name = raw.strip(" \t")
        if not name:
            raise error_at(path, f"header column {i + 1} is empty", line)
        if name in seen:
            raise error_at(
                path,
                f"header names column {name!r} twice (columns {seen[name] + 1} and {i + 1})",
                line,
            )
        seen[name] = i
        out.append(name)
    return out


def checked_bytes(path: str, data: bytes) -> bytes:
    """The file's bytes after the checks every text format shares: size limit, no NUL byte,
    a UTF-8 byte-order mark removed.
    """
    if len(data) > MAX_FILE_BYTES:
        raise error_at(path, f"file is {len(data)} bytes; the limit is {MAX_FILE_BYTES} bytes")
    nul = data.find(b"\x00")
    if nul >= 0:
        raise error_at(
            path, f"NUL byte at byte offset {nul}: not a text file", data.count(b"\n", 0, nul) + 1
        )
    return data[3:] if data.startswith(b"\xef\xbb\xbf") else data


def decode_text(path: str, data: bytes) -> str:
    """A text file's bytes as text, after :func:`checked_bytes`; invalid UTF-8 is an error
    naming its line.
    """
    data = checked_bytes(path, data)
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        raise error_at(
            path,
            f"invalid UTF-8 at byte offset {exc.start} "
            f"(byte 0x{data[exc.start]:02x}); save the file as UTF-8",
            line,
        ) from None


_SURROGATE = re.compile("[\ud800-\udfff]")


def no_surrogate(path: str, text: str, line: int | None, key: str) -> None:
    r"""Refuse a lone surrogate (an escape such as ``\ud83d`` without its pair): no text
    file can hold it, and every output would fail on it.
    """
    m = _SURROGATE.search(text)
    if m:
        raise error_at(
            path,
            f"field {key!r} holds an unpaired surrogate U+{ord(m.group()):04X} (an escape "
            "such as \\ud83d without its pair): write the character itself",
            line,
            key,
        )
