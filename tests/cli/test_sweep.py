"""Every command, given a missing output folder, an unknown substance or an unknown record,
answers in one plain line and exits 2: never a traceback, never a silent "nothing found"."""

from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import pytest
from click.testing import CliRunner

from vpaudit.cli import main

SAMPLE = Path(__file__).resolve().parents[2] / "sample_db"


@pytest.fixture(scope="module")
def table(tmp_path_factory):
    sample_db = SAMPLE
    root = tmp_path_factory.mktemp("sweep")
    dest = root / "t"
    shutil.copytree(sample_db, dest, ignore=shutil.ignore_patterns("*.py", "*.md", "PLANTED*"))
    for args in (["init", "-q"], ["add", "-A"]):
        subprocess.run(["git", "-C", str(root), *args], check=True, capture_output=True)
    subprocess.run(
        ["git", "-C", str(root), "-c", "user.name=t", "-c", "user.email=t@example.invalid"]
        + ["commit", "-qm", "base"],
        check=True,
        capture_output=True,
    )
    return dest


MISSING = "{tmp}/no-such-folder/out"

CASES = {
    # a missing output folder
    "audit -o": (["audit", "{t}", "-o", MISSING + ".txt"], "no-such-folder"),
    "report -o": (["report", "{t}", "-o", MISSING + ".html", "--no-plots"], "no-such-folder"),
    "gate -o": (["gate", "{t}", "--base", "HEAD", "-o", MISSING + ".sarif"], "no-such-folder"),
    "plot -o": (["plot", "{t}", "kestrium", "-o", MISSING + ".png"], "no-such-folder"),
    "import --db": (
        ["import", "{t}/records/volatiles.csv", "--db", MISSING + ".duckdb"],
        "no-such-folder",
    ),
    "fit --write": (
        [
            "fit",
            "{t}",
            "--substance",
            "ardenite",
            "--phase",
            "liquid",
            "--form",
            "two-term",
            "--write",
            MISSING + ".csv",
        ],
        "no-such-folder",
    ),
    "export --db": (["export", "--db", MISSING + ".duckdb", "--to", MISSING], "does not exist"),
    # an unknown substance (wrong case)
    "audit --substance": (["audit", "{t}", "--substance", "Kestrium"], "did you mean kestrium"),
    "show": (["show", "{t}", "Kestrium"], "did you mean kestrium"),
    "eval": (["eval", "{t}", "Kestrium", "--at", "1200K"], "did you mean kestrium"),
    "plot": (["plot", "{t}", "Kestrium", "-o", "{tmp}/x.png"], "did you mean kestrium"),
    "fit": (["fit", "{t}", "--substance", "Kestrium"], "no points of 'Kestrium'"),
    # an unknown record
    "apply": (["apply", "{t}", "slope-not-positive:nosuch-l1"], "nosuch-l1"),
    "history": (["history", "{t}", "nosuch-l1"], "no record with id 'nosuch-l1'"),
    "convert": (["convert", "{t}", "nosuch-l1", "--log-base", "10"], "nosuch-l1"),
    "accept record": (
        ["accept", "range-gap:nosuch-l1", "--table", "{t}", "--reason", "x"],
        "no record with id 'nosuch-l1'",
    ),
    "accept check": (
        ["accept", "bogus-check:ardenite-l1", "--table", "{t}", "--reason", "x"],
        "'bogus-check' is not a check of vpaudit",
    ),
    "accept TABLE record": (
        ["accept", "{t}", "range-gap:nosuch-l1", "--reason", "x"],
        "no record with id 'nosuch-l1'",
    ),
    "accept, table twice": (
        ["accept", "{t}", "range-gap:ardenite-l1", "--table", "{t}", "--reason", "x"],
        "give the table once",
    ),
    # quantities
    "eval --at 1200k": (["eval", "{t}", "ardenite", "--at", "1200k"], "did you mean K?"),
    "eval 1200k": (["eval", "{t}", "ardenite", "1200k"], "did you mean K?"),
    "eval, temperature twice": (
        ["eval", "{t}", "ardenite", "1200K", "--at", "1200K"],
        "give the temperature once",
    ),
    "eval --at 1200°C": (["eval", "{t}", "ardenite", "--at", "1200°C"], "did you mean degC?"),
    "eval --pressure hPa": (["eval", "{t}", "ardenite", "--pressure", "3hPa"], "mbar"),
    "eval --pressure subnormal": (["eval", "{t}", "ardenite", "--pressure", "1e-320Pa"], "under"),
    "audit --jobs -3": (["audit", "{t}", "--jobs", "-3"], "-3"),
    "query --timeout 0": (["query", "{t}", "select 1", "--timeout", "0"], "time limit"),
    # nothing to convert to: it printed the record unchanged
    "convert, no target": (["convert", "{t}", "ardenite-l1"], "say what to convert to"),
    # a confidence above 1: it said there was nothing to review
    "review --min-confidence 2": (["review", "{t}", "--min-confidence", "2"], "0.0<=x<=1.0"),
    # a misspelt check: the near names, not all thirty
    "audit --only typo": (["audit", "{t}", "--only", "range-gapp"], "did you mean range-gap"),
}


@pytest.mark.parametrize("case", sorted(CASES))
def test_every_command_answers_a_mistake_in_one_line_and_exit_2(table, tmp_path, case):
    args, expected = CASES[case]
    args = [a.format(t=table, tmp=tmp_path) for a in args]
    out = CliRunner().invoke(main, args)
    text = out.output
    assert out.exit_code == 2, (case, out.exit_code, text)
    assert (
        "Traceback" not in text and out.exception is None or isinstance(out.exception, SystemExit)
    ), (case, text)
    assert expected in text, (case, text)
    assert "Error:" not in text.split("\n")[0] or text.startswith(("Usage", "Error")), text
    for line in text.splitlines():  # no Python class name opens a message
        assert not line.startswith(("VpauditError", "TableErrors", "EquationError")), line


def test_a_table_of_references_only_has_nothing_to_audit(table, tmp_path):
    refs = tmp_path / "refs.csv"
    shutil.copy(table / "references" / "reference_values.csv", refs)
    out = CliRunner().invoke(main, ["audit", str(refs)])
    assert out.exit_code == 2 and "holds no coefficient records" in out.output
