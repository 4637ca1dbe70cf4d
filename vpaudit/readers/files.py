"""Read one table file into text cells with their line numbers; no type is ever inferred.

Every reader returns a :class:`RawFrame`: column names, the cells of each column as text
(``None`` where empty) and the 1-based line where each row starts. Numbers are parsed later,
by one grammar, for every format alike.
"""

from __future__ import annotations

import csv
import io
import json
import re
import threading
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import yaml

from ..errors import Location, TableError
from .lines import line_at, line_starts, split_lines

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

#: Largest table file read, in bytes (a clear error above it).
MAX_FILE_BYTES = 2 * 1024**3
#: Largest number of rows read from one file.
MAX_ROWS = 20_000_000
#: Most columns a table file may have (the table format has fewer than 30; unknown columns
#: are an error anyway). Checked before a header is parsed.
MAX_COLUMNS = 200
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


def _err(path: str, message: str, line: int | None = None, column: str | None = None) -> TableError:
    return TableError(message, Location(path, line, column))


def _check_header(path: str, names: list[str], line: int) -> list[str]:
    seen: dict[str, int] = {}
    out = []
    for i, raw in enumerate(names):
        name = raw.strip(" \t")
        if not name:
            raise _err(path, f"header column {i + 1} is empty", line)
        if name in seen:
            raise _err(
                path,
                f"header names column {name!r} twice (columns {seen[name] + 1} and {i + 1})",
                line,
            )
        seen[name] = i
        out.append(name)
    return out


def _checked(path: str, data: bytes) -> bytes:
    """The file's bytes after the checks every text format shares: size limit, no NUL byte,
    a UTF-8 byte-order mark removed.
    """
    if len(data) > MAX_FILE_BYTES:
        raise _err(path, f"file is {len(data)} bytes; the limit is {MAX_FILE_BYTES} bytes")
    nul = data.find(b"\x00")
    if nul >= 0:
        raise _err(
            path, f"NUL byte at byte offset {nul}: not a text file", data.count(b"\n", 0, nul) + 1
        )
    return data[3:] if data.startswith(b"\xef\xbb\xbf") else data


def _decode(path: str, data: bytes) -> str:
    data = _checked(path, data)
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        raise _err(
            path,
            f"invalid UTF-8 at byte offset {exc.start} "
            f"(byte 0x{data[exc.start]:02x}); save the file as UTF-8",
            line,
        ) from None


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
            raise _err(path, "file is empty: expected a header line naming the columns")
        start, pos = start + 1, end
    width = max(raw_line.count(d) for d in (b",", b";", b"\t")) + 1
    if width > MAX_COLUMNS:  # before a header of a million columns is parsed
        raise _err(
            path,
            f"the header line has {width} or more columns; the table format has at most "
            f"{MAX_COLUMNS}",
            start + 1,
        )
    try:
        header_line = raw_line.decode("utf-8").rstrip("\r\n")
    except UnicodeDecodeError:
        _decode(path, data)  # raises with the byte offset
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
        raise _err(path, f"cannot read the header: {exc}", start + 1) from None
    return start, end, delimiter, _check_header(path, header, start + 1)


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
    data = _checked(path, data)
    if not data.strip():
        raise _err(path, "file is empty: expected a header line naming the columns")
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
            raise _err(path, f"more than {MAX_ROWS} rows in one file")
        return RawFrame(path, columns, cells, lines)
    return _read_csv_exact(path, _decode(path, data), start, delimiter, columns)


#: Files above this size are checked in blocks and handed to pyarrow by path, so their
#: bytes are never held whole in memory.
STREAM_BYTES = 32 * 1024**2
_BLOCK = 16 * 1024**2
_HEAD = 1024**2  # the header line must begin within this many bytes


def _read_csv_streamed(path: str) -> RawFrame | None:
    """:func:`read_csv` for a large file without holding its bytes: the checks that
    :func:`_checked` and :func:`_regular` make on the whole file run block by block, the
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
        raise _err(path, f"more than {MAX_ROWS} rows in one file")
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
                raise _err(
                    path,
                    f"row has {len(row)} cells but the header names {ncol} "
                    f"columns (delimiter {delimiter!r})",
                    first,
                )
            rows.append(row)
            row_lines.append(first)
            if len(rows) > MAX_ROWS:
                raise _err(path, f"more than {MAX_ROWS} rows in one file")
    except csv.Error as exc:
        hint = (
            " (a double quote opened in this row is never closed)"
            if "end of data" in str(exc)
            else ""
        )
        raise _err(path, f"malformed CSV: {exc}{hint}", start + previous + 1) from None
    cells: dict[str, object] = {}
    for j, name in enumerate(columns):
        cells[name] = [r[j] if r[j] != "" else None for r in rows]
    return RawFrame(path, columns, cells, row_lines)


# --- YAML: composed node by node, so scalars stay text and duplicates are seen ------------


#: The plain scalars YAML 1.1 and 1.2 both read as null; quoted, they stay text.
_SURROGATE = re.compile("[\ud800-\udfff]")


def _no_surrogate(path: str, text: str, line: int | None, key: str) -> None:
    r"""Refuse a lone surrogate (an escape such as ``\ud83d`` without its pair): no text
    file can hold it, and every output would fail on it.
    """
    m = _SURROGATE.search(text)
    if m:
        raise _err(
            path,
            f"field {key!r} holds an unpaired surrogate U+{ord(m.group()):04X} (an escape "
            "such as \\ud83d without its pair): write the character itself",
            line,
            key,
        )


_YAML_NULLS = frozenset({"", "~", "null", "Null", "NULL"})


def _yaml_scalar(path: str, node: yaml.Node, key: str, at) -> str | None:
    if isinstance(node, yaml.ScalarNode):
        if node.style is None and node.value in _YAML_NULLS:
            return None  # an unquoted null is a missing value, as JSON's null is
        _no_surrogate(path, node.value, at(node.start_mark), key)
        return node.value
    raise _err(
        path,
        f"field {key!r} holds a {node.id}; expected a single value",
        at(node.start_mark),
        key,
    )


def _yaml_items(path: str, node: yaml.Node, at) -> tuple[list[yaml.MappingNode], str | None]:
    hint = None
    if isinstance(node, yaml.MappingNode):
        keys = [k.value for k, _ in node.value]
        if len(keys) == 1 and keys[0] in PARTS:
            hint = keys[0]
            node = node.value[0][1]
        else:
            raise _err(
                path,
                "expected a list of items, or a mapping with one key "
                "'records', 'references' or 'points' holding that list",
                at(node.start_mark),
            )
    if not isinstance(node, yaml.SequenceNode):
        raise _err(path, "expected a list of items", at(node.start_mark))
    items = []
    for item in node.value:
        if not isinstance(item, yaml.MappingNode):
            raise _err(
                path,
                "each item must be a mapping of field names to values",
                at(item.start_mark),
            )
        items.append(item)
    return items, hint


class _NoAliasComposer(yaml.BaseLoader):
    def compose_node(self, parent, index):  # noqa: D102
        if self.check_event(yaml.AliasEvent):
            event = self.peek_event()
            raise yaml.composer.ComposerError(
                None, None, "aliases are not allowed in table files", event.start_mark
            )
        return super().compose_node(parent, index)


def read_yaml(path: str, data: bytes) -> RawFrame:
    """Read a YAML list of mappings; every scalar stays the text written.

    No YAML 1.1 typing applies (``NO``, ``0123``, ``1:30``, ``2001-01-01`` stay text), a
    duplicate key is an error, and aliases are refused.
    """
    text = _decode(path, data)
    if not text.strip():
        raise _err(path, "file is empty: expected a list of items")
    starts = line_starts(text)

    def at(mark) -> int:  # PyYAML's own line count also breaks at U+2028 and U+0085
        return line_at(starts, mark.index)

    try:
        loader = _NoAliasComposer(text)
        try:
            root = loader.get_single_node()
        finally:
            loader.dispose()
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark
        raise _err(path, f"malformed YAML: {exc.problem}", at(mark) if mark else None) from None
    except yaml.YAMLError as exc:
        raise _err(path, f"malformed YAML: {exc}") from None
    except RecursionError:
        raise _err(path, "malformed YAML: nested too deeply for a table file") from None
    if root is None:
        raise _err(path, "file is empty: expected a list of items")
    items, hint = _yaml_items(path, root, at)
    columns: list[str] = []
    records: list[dict[str, str | None]] = []
    lines = []
    for item in items:
        row: dict[str, str | None] = {}
        for knode, vnode in item.value:
            key = knode.value if isinstance(knode, yaml.ScalarNode) else None
            if not key:
                raise _err(path, "field names must be plain text", at(knode.start_mark))
            if key in row:
                raise _err(
                    path,
                    f"field {key!r} is given twice in one item",
                    at(knode.start_mark),
                    key,
                )
            row[key] = _yaml_scalar(path, vnode, key, at)
            if key not in columns:
                columns.append(key)
                if len(columns) > MAX_COLUMNS:
                    raise _err(
                        path,
                        f"the items name more than {MAX_COLUMNS} fields; the table format "
                        "has fewer",
                        at(knode.start_mark),
                        key,
                    )
        records.append(row)
        lines.append(at(item.start_mark))
    cells = {c: [r.get(c) for r in records] for c in columns}
    return RawFrame(path, columns, cells, lines, hint)


# --- JSON: numbers kept as their text, NaN/Infinity and duplicate keys refused -----------


def _no_constant(name: str):
    raise ValueError(f"{name} is not a number vpaudit reads; leave the field empty")


def _pairs(pairs):
    out = {}
    for k, v in pairs:
        if k in out:
            raise ValueError(f"field {k!r} is given twice in one object")
        out[k] = v
    return out


def read_json(path: str, data: bytes) -> RawFrame:
    """Read a JSON list of objects, or an object with one key holding that list.

    Numbers keep their exact text; ``NaN``/``Infinity`` and duplicate keys are errors; each
    item's line is where its object starts.
    """
    text = _decode(path, data)
    starts = line_starts(text)
    decoder = json.JSONDecoder(
        parse_float=str, parse_int=str, parse_constant=_no_constant, object_pairs_hook=_pairs
    )
    stripped = text.lstrip()
    if not stripped:
        raise _err(path, "file is empty: expected a list of objects")
    hint = None
    pos = len(text) - len(stripped)
    if stripped.startswith("{"):
        m = re.match(r'\{\s*"(records|references|points)"\s*:\s*\[', stripped)
        if not m:
            raise _err(
                path,
                "expected a list of objects, or an object with one key "
                "'records', 'references' or 'points' holding that list",
                1,
            )
        hint = m.group(1)
        pos += m.end() - 1
    elif not stripped.startswith("["):
        raise _err(path, "expected a list of objects", 1)
    # Walk the array item by item, so each item's line is known.
    items, lines = [], []
    i = pos + 1
    n = len(text)
    ws = re.compile(r"[ \t\r\n]*")
    try:
        i = ws.match(text, i).end()
        if i < n and text[i] == "]":
            i += 1
        else:
            while True:
                i = ws.match(text, i).end()
                obj, end = decoder.raw_decode(text, i)
                items.append(obj)
                lines.append(line_at(starts, i))
                i = ws.match(text, end).end()
                if i < n and text[i] == ",":
                    i += 1
                    continue
                if i < n and text[i] == "]":
                    i += 1
                    break
                raise json.JSONDecodeError("expected ',' or ']'", text, i)
        i = ws.match(text, i).end()
        if hint:
            if i < n and text[i] == "}":
                i = ws.match(text, i + 1).end()
            else:
                raise json.JSONDecodeError("expected '}' after the list", text, i)
        if i != n:
            raise json.JSONDecodeError("unexpected text after the list", text, i)
    except json.JSONDecodeError as exc:
        raise _err(path, f"malformed JSON: {exc.msg}", line_at(starts, exc.pos)) from None
    except ValueError as exc:
        raise _err(path, f"malformed JSON: {exc}", line_at(starts, i)) from None
    except RecursionError:
        raise _err(
            path, "malformed JSON: nested too deeply for a table file", line_at(starts, i)
        ) from None
    columns: list[str] = []
    for obj, line in zip(items, lines, strict=True):
        if not isinstance(obj, dict):
            raise _err(path, "each item must be an object of field names to values", line)
        for k, v in obj.items():
            if k not in columns:
                columns.append(k)
                if len(columns) > MAX_COLUMNS:
                    raise _err(
                        path,
                        f"the objects name more than {MAX_COLUMNS} fields; the table format "
                        "has fewer",
                        line,
                        k,
                    )
            if isinstance(v, bool) or isinstance(v, list | dict):
                raise _err(
                    path,
                    f"field {k!r} holds a {type(v).__name__}; expected text or a number",
                    line,
                    k,
                )
            if isinstance(v, str):
                _no_surrogate(path, v, line, k)
            _no_surrogate(path, k, line, k)
    cells = {c: [obj.get(c) for obj in items] for c in columns}
    return RawFrame(path, columns, cells, lines, hint)


def read_parquet(path: str, data: bytes | None = None) -> RawFrame:
    """Read a Parquet file; column types are checked, never coerced.

    Text columns are read as text; float64 columns as the shortest text that round-trips
    (``repr``); int64 columns exactly. float32 and float16 coefficients lose digits and are
    an error, as are booleans, dates and nested types.
    """
    import pyarrow as pa
    import pyarrow.parquet as pq

    try:
        parquet = pq.ParquetFile(path)
        meta = parquet.metadata
    except Exception as exc:  # pyarrow raises several types for broken files
        raise _err(path, f"cannot read the Parquet file: {exc}") from None
    # the limits are checked on the file's own metadata before anything is decoded, and on
    # the decoded size batch by batch: a small file can hold columns that decode to gigabytes
    if meta.num_columns > MAX_COLUMNS:
        raise _err(path, f"{meta.num_columns} columns; the table format has at most {MAX_COLUMNS}")
    if meta.num_rows > MAX_ROWS:
        raise _err(path, f"{meta.num_rows} rows; the limit is {MAX_ROWS} per file")
    batches, decoded = [], 0
    try:
        for batch in parquet.iter_batches(batch_size=1 << 16):
            decoded += batch.nbytes
            if decoded > MAX_FILE_BYTES:
                raise _err(
                    path,
                    f"the data decode to more than {MAX_FILE_BYTES} bytes; the limit is "
                    f"{MAX_FILE_BYTES} bytes",
                )
            batches.append(batch)
        table = pa.Table.from_batches(batches, schema=parquet.schema_arrow)
    except TableError:
        raise
    except Exception as exc:  # pyarrow raises several types for broken files
        raise _err(path, f"cannot read the Parquet file: {exc}") from None
    cells: dict[str, object] = {}
    columns = _check_header(path, list(table.column_names), 1)
    for name, col in zip(columns, table.columns, strict=True):
        t = col.type
        values = col.to_pylist()
        if pa.types.is_string(t) or pa.types.is_large_string(t):
            cells[name] = [v if v != "" else None for v in values]
        elif pa.types.is_float64(t):
            cells[name] = [None if v is None else repr(v) for v in values]
        elif pa.types.is_int64(t) or pa.types.is_int32(t):
            for v in values:
                if v is not None and abs(v) > 2**53:
                    raise _err(
                        path, f"integer {v} is too large to be exact as a double", None, name
                    )
            cells[name] = [None if v is None else str(v) for v in values]
        elif pa.types.is_floating(t):
            raise _err(
                path,
                f"column is {t}: it cannot hold the digits of a coefficient; store float64 or text",
                None,
                name,
            )
        elif pa.types.is_null(t):
            cells[name] = [None] * len(values)
        else:
            raise _err(path, f"column type {t} is not read; store text or float64", None, name)
    return RawFrame(path, columns, cells, list(range(1, table.num_rows + 1)))


_READERS = {"csv": read_csv, "yaml": read_yaml, "json": read_json, "parquet": read_parquet}


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
            raise _err(
                str(path),
                "a spreadsheet is not read: save each sheet as CSV (UTF-8) and move the "
                "spreadsheet out of the table's folders",
            )
        raise _err(
            str(path),
            f"unknown file type {p.suffix!r}; expected one of {', '.join(sorted(SUFFIXES))}",
        )
    if not p.is_file():
        raise _err(str(path), "no such file")
    if fmt == "parquet":
        return read_parquet(str(path))
    size = p.stat().st_size
    if size > MAX_FILE_BYTES:
        raise _err(str(path), f"file is larger than the limit of {MAX_FILE_BYTES} bytes")
    if fmt == "csv" and size > STREAM_BYTES:
        frame = _read_csv_streamed(str(path))
        if frame is not None:
            return frame
    return _READERS[fmt](str(path), p.read_bytes())
