"""Reports written a piece at a time (report.pieces, used by the command line) join to
exactly the text ``render`` gives, whatever the chunk size, and stay valid JSON and CSV."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest

from vpaudit.auditing import audit_table
from vpaudit.readers import load_table
from vpaudit.report import RENDERERS, pieces
from vpaudit.report import csv as csv_report
from vpaudit.report import json as json_report


@pytest.fixture(scope="module")
def result():
    return audit_table(load_table(Path(__file__).resolve().parents[2] / "sample_db"))


@pytest.mark.parametrize("fmt", sorted(RENDERERS))
@pytest.mark.parametrize("chunk", [1, 2, 7, 20_000])
def test_pieces_join_to_the_rendered_report(result, fmt, chunk, monkeypatch):
    monkeypatch.setattr(json_report, "CHUNK", chunk)
    monkeypatch.setattr(csv_report, "CHUNK", chunk)
    parts = list(pieces(fmt, result))
    assert "".join(parts) == RENDERERS[fmt](result)
    if fmt in ("json", "csv") and chunk < len(result.findings):
        assert len(parts) > 2  # written in pieces, not as one string
    if fmt == "json":
        assert len(json.loads("".join(parts))["findings"]) == len(result.findings)
    if fmt == "csv":
        assert len(list(csv.reader(io.StringIO("".join(parts))))) == len(result.findings) + 1


def test_a_report_without_findings_is_whole_too(result):
    empty = type(result)(**{**result.__dict__, "findings": []})
    for fmt in ("json", "csv"):
        text = "".join(pieces(fmt, empty))
        assert text == RENDERERS[fmt](empty)
    assert json.loads("".join(pieces("json", empty)))["findings"] == []
