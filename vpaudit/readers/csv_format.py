"""CSV and TSV files: the layout sniffed from the header, every cell kept as its text, a
large regular file read in blocks by pyarrow, any other cell by cell with exact line
numbers.
"""

from __future__ import annotations

import csv
import io
import re

import numpy as np

from ..errors import TableError
from .lines import split_lines
from .raw import (
    MAX_COLUMNS,
    MAX_ROWS,
    RawFrame,
    check_header,
    checked_bytes,
    decode_text,
    error_at,
)

_LINE_END = re.compile(rb"\r\n|\r|\n")  # as readers.lines counts them


def _csv_layout(path: str, data: bytes) -> tuple[int, int, str, list[str]]:
    """Index of the header line (after ``#`` comments and blank lines), the byte offset
    where the rows start, the delimiter and the column names.
    """
    start, pos = 0, 0
    while True:
        m = _LINE_END.search(data, pos)
        end = len(data) if m is None else m.end()
        raw_line = data[pos:end]
        if not (raw_line.startswith(b"#") or not raw_line.strip()):
            break
        if m is None:
            raise error_at(path, "file is empty: expected a header line naming the columns")
        start, pos = start + 1, end
    width = max(raw_line.count(d) for d in (b",", b";", b"\t")) + 1
    if width > MAX_COLUMNS:  # before a header of a million columns is parsed
        raise error_at(
            path,
            f"the header line has {width} or more columns; the table format has at most "
            f"{MAX_COLUMNS}",
            start + 1,
        )
    try:
        header_line = raw_line.decode("utf-8").rstrip("\r\n")
    except UnicodeDecodeError:
        decode_text(path, data)  # raises with the byte offset
        raise
    delimiter = (
        ","
        if "," in header_line
        else ";"
        if ";" in header_line
        else ("\t" if "\t" in header_line else ",")
    )
    try:
        header = next(csv.reader([header_line], delimiter=delimiter, strict=True))
    except (csv.Error, StopIteration) as exc:
        raise error_at(path, f"cannot read the header: {exc}", start + 1) from None
    return start, end, delimiter, check_header(path, header, start + 1)


class _QuoteCheck:
    """Whether pyarrow reads the file's quotes as Python's strict ``csv`` reader does.

    Python's strict reader refuses text after a closing quote (``"12.5"3``), where pyarrow
    joins it onto the quoted part (12.53). In a file whose quotes all sit where quoting puts
    them, the quote number k (from 0, counted from the first row) opens a field when k is
    even and closes it, or begins an escaped ``""``, when k is odd. So every even quote must
    stand at the start of a field (after the delimiter, a line end or the start of the rows)
    or right after the odd quote it escapes, and every odd quote must be followed by another
    quote, the delimiter, a line end or the end of the file. A file that breaks either rule
    is read by the strict reader, which names the line, or reads a literal quote inside an
    unquoted cell as written. Feed the rows' bytes in order, in blocks of any size.
    """

    def __init__(self, delimiter: str) -> None:
        self._ends = np.zeros(256, dtype=bool)
        for ch in (delimiter, "\r", "\n", '"'):
            self._ends[ord(ch)] = True
        self._starts = self._ends.copy()  # a quote may open a field after one of these
        self._count = 0
        self._last = ord("\n")  # the byte before the block: the rows start a field
        self.pending = False  # the last block ended on an odd quote
        self.ok = True

    def feed(self, block) -> None:
        if not len(block) or not self.ok:
            return
        if isinstance(block, bytes) and not self.pending and b'"' not in block:
            self._last = block[-1]
            return
        arr = np.frombuffer(block, dtype=np.uint8)
        if self.pending:
            self.ok = bool(self._ends[arr[0]])
            self.pending = False
        at = np.flatnonzero(arr == 34)
        odd = (self._count + np.arange(at.size)) % 2 == 1
        self._count += at.size
        before = np.where(at > 0, arr[np.maximum(at - 1, 0)], self._last)
        self._last = int(arr[-1])
        after = at[odd] + 1
        inside = after < arr.size
        self.ok = (
            self.ok
            and bool(self._starts[before[~odd]].all())
            and bool(self._ends[arr[after[inside]]].all())
        )
        self.pending = not inside.all()


def _csv_bulk(source, start: int, columns: list[str], delimiter: str, newlines: int, ends_nl: bool):
    """Read the rows with pyarrow's multi-threaded CSV reader, every column as a string.

    ``source`` is the rows' bytes, or a pyarrow file positioned at the first row;
    ``newlines`` the number of LF bytes in the rows and ``ends_nl`` whether they end with
    one, from which each row's first line follows (a quoted cell may span lines). Returns
    None when the file needs the exact path instead: anything pyarrow does not read as a
    plain table (a blank line, a ragged row, invalid UTF-8); that path then reads it or
    reports the problem with its line. The callers have already sent files with an unclosed
    quote, text after a closing quote or bare CR line ends there.
    """
    import pyarrow as pa
    import pyarrow.compute as pc
    import pyarrow.csv as pcsv

    try:
        table = pcsv.read_csv(
            pa.py_buffer(source) if isinstance(source, bytes | memoryview) else source,
            read_options=pcsv.ReadOptions(column_names=columns, block_size=1 << 24),
            parse_options=pcsv.ParseOptions(
                delimiter=delimiter,
                quote_char='"',
                double_quote=True,
                escape_char=False,
                newlines_in_values=newlines > 0,
                ignore_empty_lines=False,
            ),
            convert_options=pcsv.ConvertOptions(
                column_types={c: pa.string() for c in columns},
                strings_can_be_null=False,
                quoted_strings_can_be_null=False,
                null_values=[],
                check_utf8=True,
            ),
        )
    except (pa.ArrowInvalid, pa.ArrowException):
        return None
    if table.num_rows and pc.any(pc.equal(table.column(0), "")).as_py():
        return None  # maybe a blank line, which pyarrow reads as a row: the exact path skips it
    n = table.num_rows
    lines = np.arange(start + 2, start + 2 + n, dtype=np.int64)
    if newlines > n - (0 if ends_nl else 1):  # a row spans more than one line
        spans = np.zeros(n, dtype=np.int64)
        for c in columns:
            spans += pc.count_substring(table.column(c), "\n").to_numpy(zero_copy_only=False)
        lines[1:] += np.cumsum(spans)[:-1]
    cells = {c: table.column(c) for c in columns}
    return cells, lines


def _regular(data: bytes) -> bool:
    """No unclosed quote and no bare CR line end: pyarrow may read it."""
    if b'"' in data and data.count(b'"') % 2:
        return False
    return not (b"\r" in data and data.count(b"\r") != data.count(b"\r\n"))


def read_csv(path: str, data: bytes) -> RawFrame:
    """Read a CSV file: explicit settings, every cell as text.

    Leading lines starting with ``#`` are comments (provenance headers). The delimiter is
    taken from the header line: ``,`` if it holds one, else ``;``, else a tab. Blank lines
    are skipped; a row with another number of cells than the header is an error. Regular
    files go through pyarrow's CSV reader (all columns typed as strings, so nothing is
    inferred); irregular ones through Python's csv module, which locates every problem.
    """
    data = checked_bytes(path, data)
    if not data.strip():
        raise error_at(path, "file is empty: expected a header line naming the columns")
    start, body_at, delimiter, columns = _csv_layout(path, data)
    body = memoryview(data)[body_at:]
    if not bytes(body[:4096]).strip() and not bytes(body).strip():  # copies only if blank
        bulk = ({c: [] for c in columns}, [])
    elif _regular(data):
        quotes = _QuoteCheck(delimiter)
        if b'"' in data:
            quotes.feed(body)
        newlines, ends_nl = data.count(b"\n", body_at), data.endswith(b"\n")
        bulk = _csv_bulk(body, start, columns, delimiter, newlines, ends_nl) if quotes.ok else None
    else:
        bulk = None
    if bulk is not None:
        cells, lines = bulk
        if len(lines) > MAX_ROWS:
            raise error_at(path, f"more than {MAX_ROWS} rows in one file")
        return RawFrame(path, columns, cells, lines)
    return _read_csv_exact(path, decode_text(path, data), start, delimiter, columns)


#: Files above this size are checked in blocks and handed to pyarrow by path, so their
#: bytes are never held whole in memory.
STREAM_BYTES = 32 * 1024**2
_BLOCK = 16 * 1024**2
_HEAD = 1024**2  # the header line must begin within this many bytes


def read_csv_streamed(path: str) -> RawFrame | None:
    """:func:`read_csv` for a large file without holding its bytes: the checks that
    :func:`checked_bytes` and :func:`_regular` make on the whole file run block by block, the
    header is read from the head, and pyarrow reads the rows from the file itself.

    Returns None when the file is not plain (a NUL byte, an unclosed quote, a bare CR line
    end, a header not within the first megabyte or not valid, no rows): the whole-file path
    then reads it and locates any problem.
    """
    import pyarrow as pa

    with open(path, "rb") as fh:
        head = fh.read(_HEAD)
    skipped = 3 if head.startswith(b"\xef\xbb\xbf") else 0  # bytes before the header
    start = 0  # lines before the header
    nl = head.find(b"\n", skipped)
    while nl >= 0 and (head.startswith(b"#", skipped) or not head[skipped : nl + 1].strip()):
        skipped, start = nl + 1, start + 1  # comment and blank lines
        nl = head.find(b"\n", skipped)
    if nl < 0:
        return None
    try:
        head[skipped : nl + 1].decode("utf-8")
        _, body_at, delimiter, columns = _csv_layout(path, head[skipped : nl + 1])
    except (UnicodeDecodeError, TableError):
        return None  # the whole-file path reports it with the right line and offset
    body_at += skipped
    quotes, check = 0, _QuoteCheck(delimiter)
    cr = crlf = newlines = offset = 0
    with open(path, "rb") as fh:
        block, prev_cr, ends_nl = fh.read(_BLOCK), False, False
        while block:
            if b"\x00" in block:
                return None
            rows = block[max(0, body_at - offset) :] if offset < body_at else block
            if b'"' in block:  # a search is far faster than a count: count only if present
                quotes += block.count(b'"')
            check.feed(rows)
            if b"\r" in block or prev_cr:
                cr += block.count(b"\r")
                crlf += block.count(b"\r\n") + (prev_cr and block.startswith(b"\n"))
            newlines += rows.count(b"\n")
            prev_cr, ends_nl = block.endswith(b"\r"), block.endswith(b"\n")
            offset += len(block)
            block = fh.read(_BLOCK)
    if quotes % 2 or cr != crlf or not check.ok:
        return None
    with pa.OSFile(path) as source:
        source.seek(body_at)
        bulk = _csv_bulk(source, start, columns, delimiter, newlines, ends_nl)
    if bulk is None or not len(bulk[1]):
        return None
    cells, lines = bulk
    if len(lines) > MAX_ROWS:
        raise error_at(path, f"more than {MAX_ROWS} rows in one file")
    return RawFrame(path, columns, cells, lines)


def _read_csv_exact(
    path: str, text: str, start: int, delimiter: str, columns: list[str]
) -> RawFrame:
    """Python's csv module, row by row, with the physical line of every row."""
    body = io.StringIO("".join(split_lines(text)[start:]), newline="")
    reader = csv.reader(body, delimiter=delimiter, quotechar='"', doublequote=True, strict=True)
    next(reader)
    ncol = len(columns)
    rows: list[list[str]] = []
    row_lines: list[int] = []
    previous = reader.line_num
    try:
        for row in reader:
            first = start + previous + 1
            previous = reader.line_num
            if not row or all(c == "" for c in row):
                continue
            if len(row) != ncol:
                raise error_at(
                    path,
                    f"row has {len(row)} cells but the header names {ncol} "
                    f"columns (delimiter {delimiter!r})",
                    first,
                )
            rows.append(row)
            row_lines.append(first)
            if len(rows) > MAX_ROWS:
                raise error_at(path, f"more than {MAX_ROWS} rows in one file")
    except csv.Error as exc:
        hint = (
            " (a double quote opened in this row is never closed)"
            if "end of data" in str(exc)
            else ""
        )
        raise error_at(path, f"malformed CSV: {exc}{hint}", start + previous + 1) from None
    cells: dict[str, object] = {}
    for j, name in enumerate(columns):
        cells[name] = [r[j] if r[j] != "" else None for r in rows]
    return RawFrame(path, columns, cells, row_lines)
