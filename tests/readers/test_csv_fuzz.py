"""A bounded, seeded fuzz test of the CSV reader against Python's strict ``csv`` module.

The reader takes pyarrow's bulk path for regular files and Python's strict ``csv`` module for
the others. Whichever it takes, every cell must be read exactly as the strict module reads it
(Python standard library, ``csv.reader(..., strict=True)``), on the same line, or the file
refused at the same line: never a cell read as a different text. The reference below is
written straight from the module's documentation, not from vpaudit's code.
"""

from __future__ import annotations

import csv
import io
import random

import pytest

from vpaudit.errors import TableError
from vpaudit.readers import csv_format, files
from vpaudit.readers.csv_format import read_csv

HEADER = "a,b,c"
# pieces that stress quoting, line ends and numbers: weighted towards the hard ones
PIECES = ['"', '"', '""', ",", ",", "\n", "\r\n", "12.5", "-3", "e4", " ", "x", "1"]


def reference(data: str):
    """What Python's strict csv module reads: the rows' cells ("" as None) and each row's
    first line, or ("error", line)."""
    lines = io.StringIO(data, newline="").readlines()  # universal newlines, ends kept
    start = 0
    while start < len(lines) and (lines[start].startswith("#") or not lines[start].strip()):
        start += 1
    body = io.StringIO("".join(lines[start + 1 :]), newline="")
    reader = csv.reader(body, delimiter=",", quotechar='"', doublequote=True, strict=True)
    rows, firsts, previous = [], [], 0
    try:
        for row in reader:
            first, previous = start + 2 + previous, reader.line_num
            if not row or all(c == "" for c in row):
                continue
            if len(row) != 3:
                return ("error", first)
            rows.append([c if c != "" else None for c in row])
            firsts.append(first)
    except csv.Error:
        return ("error", start + 2 + previous)
    return ([list(col) for col in zip(*rows, strict=True)] if rows else [[], [], []], firsts)


BULK = []


def vpaudit_reads(data: str, path=None):
    try:
        if path is None:
            raw = read_csv("fuzz.csv", data.encode("utf-8"))
        else:  # from a file: the streamed path for large files, when forced
            path.write_bytes(data.encode("utf-8"))
            raw = files._read_raw(path)
    except TableError as exc:
        return ("error", exc.location.line)
    cols = []
    for name in ("a", "b", "c"):
        cells = raw.cells[name]
        values = cells if isinstance(cells, list) else cells.to_pylist()
        cols.append([v if v != "" else None for v in values])
    BULK.append(not isinstance(raw.lines, list))  # pyarrow's path gives an array
    return (cols, [int(x) for x in raw.lines])


def cases(seed: int, n: int):
    rng = random.Random(seed)
    for _ in range(n):
        rows = []
        for _ in range(rng.randint(1, 4)):
            cells = []
            for _ in range(3):
                if rng.random() < 0.85:  # a well-formed cell, quoted or not
                    text = rng.choice(["12.5", "-3e4", "x", "", "1 2", "a,b", 'a""b', "l1\nl2"])
                    quote = rng.random() < 0.4 or any(ch in text for ch in ',"\n')
                    cells.append(f'"{text}"' if quote else text)
                else:  # anything at all
                    cells.append("".join(rng.choice(PIECES) for _ in range(rng.randint(0, 4))))
            rows.append(",".join(cells))
        yield HEADER + "\n" + "\n".join(rows) + rng.choice(["\n", "", "\r\n"])


@pytest.mark.parametrize("seed", range(4))
@pytest.mark.parametrize("streamed", [False, True])
def test_csv_reader_agrees_with_the_strict_csv_module_on_random_files(
    seed, streamed, tmp_path, monkeypatch
):
    path = None
    if streamed:  # every file takes the large-file path, read in blocks of 5 bytes
        monkeypatch.setattr(csv_format, "STREAM_BYTES", 0)
        monkeypatch.setattr(csv_format, "_BLOCK", 5)
        path = tmp_path / "fuzz.csv"
    n, read, refused = 400, 0, 0
    BULK.clear()
    for data in cases(seed + 10 * streamed, n):
        ours, theirs = vpaudit_reads(data, path), reference(data)
        assert ours == theirs, repr(data)
        read += ours[0] != "error"
        refused += ours[0] == "error"
    # the generator must exercise both outcomes, or the test proves nothing
    assert read > n // 10 and refused > n // 10
    assert sum(BULK) > read // 4 and not all(BULK)  # both reading paths are exercised


@pytest.mark.parametrize(
    "cell",
    ['"12.5"3', '"-"20.5', '"1"29.4857321', '"12.5" ', '"a,"3'],
)
def test_text_after_a_closing_quote_is_refused_with_its_line_on_every_path(cell):
    # an adversarial sweep found the bulk reader joining these into 12.53, -20.5, 129.48...
    # while the strict reader refused them; one blank line decided which one read the file
    good = "1,2,3\n"
    for data in (
        HEADER + "\n" + good + f"{cell},2,3\n",  # regular: bulk path
        HEADER + "\n" + good + "\n" + f"{cell},2,3\n",  # a blank line: strict path
    ):
        assert vpaudit_reads(data)[0] == "error", data
        assert vpaudit_reads(data) == reference(data)


def test_a_row_spanning_lines_moves_the_later_line_numbers():
    data = HEADER + '\n1,"two\nline note",3\n4,5,6\n7,"a\r\nb",9\n10,11,12\n'
    assert vpaudit_reads(data)[1] == [2, 4, 5, 7]
    assert vpaudit_reads(data) == reference(data)
