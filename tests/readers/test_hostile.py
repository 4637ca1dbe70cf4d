"""The corpus of hostile inputs in tests/data/hostile: each gives its expected located error,
or is read exactly; no input yields a number different from what was written."""

import csv
from pathlib import Path

import pytest

from vpaudit.errors import TableError, TableErrors
from vpaudit.readers import read_file

CORPUS = Path(__file__).resolve().parents[1] / "data" / "hostile"


def _expected():
    with open(CORPUS / "expected.csv", encoding="utf-8") as fh:
        rows = [line for line in fh if not line.startswith("#")]
    return list(csv.DictReader(rows))


def _messages(exc: TableError) -> list[TableError]:
    return exc.errors if isinstance(exc, TableErrors) else [exc]


@pytest.mark.parametrize("case", _expected(), ids=lambda c: c["file"])
def test_hostile_input(case):
    path = CORPUS / case["file"]
    if case["expect"] == "OK":
        table = read_file(path)
        assert len(table.records) >= 1
        for col in ("A", "B", "t_min", "t_max"):
            for value, text in zip(table.records[col], table.records[col + "_text"], strict=True):
                assert value == float(text)  # exactly what was written
        return
    with pytest.raises(TableError) as info:
        read_file(path)
    errors = _messages(info.value)
    hits = [e for e in errors if case["expect"] in e.message]
    assert hits, f"{case['file']}: expected {case['expect']!r}, got {[str(e) for e in errors]}"
    if case["line"]:
        assert any(e.location and e.location.line == int(case["line"]) for e in hits)
    assert all(e.location and e.location.file.endswith(case["file"]) for e in hits)


def test_corpus_is_complete():
    listed = {c["file"] for c in _expected()}
    present = {p.name for p in CORPUS.iterdir() if p.name != "expected.csv"}
    assert listed == present


def test_ten_megabyte_single_line(tmp_path):
    # a 10 MB line (no newline): a header cell of 10^7 characters is refused with its line
    path = tmp_path / "long.csv"
    path.write_text("x" * 10_000_000, encoding="utf-8")
    with pytest.raises(TableError, match=r"long\.csv:1: cannot read the header: field larger"):
        read_file(path)
    path.write_text("id,form,A\nr1,two-term," + "1" * 10_000_000 + "\n", encoding="utf-8")
    with pytest.raises(TableError) as info:
        read_file(path)
    assert "overflows" in str(info.value) or "required column" in str(info.value)
