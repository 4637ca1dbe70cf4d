"""A bounded, seeded fuzz test of every writer's round trip: what vpaudit writes, it reads
back exactly (export, fit --write's append, apply's in-place edit, accept)."""

from __future__ import annotations

import csv
import random
import shutil

import pytest

from vpaudit.gate import accept, load_accepted
from vpaudit.readers import load_table
from vpaudit.revisions import apply_correction
from vpaudit.writers import append_records, csv_cell, export_table

PIECES = [
    '"',
    ",",
    ";",
    "\n",
    "\r",
    "\r\n",
    " ",
    "\t",
    "#",
    "x",
    "é",
    "\U0001f600",
    "\u2028",
    "\x85",
    "'",
    "\\",
    "-",
    ":",
    "null",
    "~",
    "1.5",
]


def texts(seed: int, n: int):
    rng = random.Random(seed)
    for _ in range(n):
        t = "".join(rng.choice(PIECES) for _ in range(rng.randint(1, 6)))
        if t.strip(" \t\r\n\x85\u2028"):  # an all-blank cell is an empty cell
            yield t


@pytest.fixture
def demo(tmp_path, sample_db):
    out = tmp_path / "demo"
    shutil.copytree(sample_db, out, ignore=shutil.ignore_patterns("*.py", "*.md", "PLANTED*"))
    return out


def _record(i: int, note: str, source: str) -> dict:
    return {
        "id": f"fz-{i}",
        "substance": "fuzzite",
        "phase": "liquid",
        "form": "two-term",
        "log_base": "e",
        "pressure_unit": "Pa",
        "temperature_unit": "K",
        "A": 20.0 + i,
        "B": -5000.0,
        "t_min": 300.0,
        "t_max": 400.0,
        "source": source,
        "note": note,
    }


def test_append_then_export_read_back_every_text(tmp_path):
    notes = list(texts(1, 80))
    records = [_record(i, n, "src " + n) for i, n in enumerate(notes)]
    target = tmp_path / "records.csv"
    for k in range(0, len(records), 7):  # several appends to one file
        append_records(target, records[k : k + 7])
    table = load_table(target)
    assert table.records["note"].astype(object).tolist() == notes
    assert table.records["source"].astype(object).tolist() == ["src " + n for n in notes]
    export_table(table, tmp_path / "out")
    again = load_table(tmp_path / "out")
    assert again.records["note"].astype(object).tolist() == notes
    assert again.records["A_text"].tolist() == table.records["A_text"].tolist()


def test_accept_reads_back_every_reason(demo):
    reasons = list(texts(2, 40))
    for reason in reasons:
        accept(demo, "range-gap:ardenite-s1", reason, by="fuzz")
    assert [a.reason for a in load_accepted(demo / "accepted.toml")] == reasons


@pytest.mark.parametrize("seed", range(3))
def test_apply_edits_only_its_record_whatever_the_neighbours_hold(demo, seed):
    rng = random.Random(seed)
    metals = demo / "records" / "metals.csv"
    table = load_table(demo)
    rec = table.records
    # hostile notes on random records, quoted by the project's own rule
    lines = metals.read_text(encoding="utf-8").split("\n")
    header = lines[0].split(",")
    col = header.index("note")
    pool = list(texts(10 + seed, 40))
    for k in range(1, len(lines)):
        if lines[k] and rng.random() < 0.5:
            cells = next(csv.reader([lines[k]]))
            cells[col] = rng.choice(pool)
            lines[k] = ",".join(csv_cell(c) for c in cells)
    metals.write_text("\n".join(lines), encoding="utf-8")
    before = load_table(demo).records
    target = rng.choice([r for r in rec["id"].astype(object) if str(r).startswith(("a", "g", "d"))])
    row = before.index[before["id"].astype(object) == target][0]
    apply_correction(
        demo,
        target,
        str(metals),
        int(before["line"].iat[row]),
        {"uncertainty": 0.5},
        {"uncertainty": "0.5"},
        reason="fuzz",
    )
    after = load_table(demo).records
    changed = after["uncertainty_text"].astype(object) != before["uncertainty_text"].astype(object)
    assert after["id"][changed].astype(object).tolist() == [target]
    for c in ("note", "A_text", "B_text", "source"):
        assert after[c].astype(object).tolist() == before[c].astype(object).tolist(), c
