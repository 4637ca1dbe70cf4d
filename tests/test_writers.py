"""Every writer's output reads back exactly, or nothing is written."""

from __future__ import annotations

import shutil

import pytest
from click.testing import CliRunner

from vpaudit.cli import main
from vpaudit.errors import WriteError
from vpaudit.readers import load_table
from vpaudit.writers import append_records, csv_cell, export_table

FIT = ["--substance", "ardenite", "--phase", "liquid", "--form", "two-term", "--write"]


@pytest.fixture
def table(tmp_path, sample_db):
    dest = tmp_path / "db"
    shutil.copytree(sample_db, dest)
    return dest


def fit_into(table, target):
    return CliRunner().invoke(main, ["fit", str(table), *FIT, str(target)])


@pytest.mark.parametrize("text", ["a\rb", "a\r\nb", "a\nb", 'say "x"', "a,b", " lead", "tail "])
def test_a_cell_with_any_line_end_or_delimiter_is_quoted(text):
    # a CR was written unquoted by the csv module (line terminator LF): the export did not
    # import again
    cell = csv_cell(text)
    assert cell.startswith('"') and cell.endswith('"')


def test_export_of_a_note_with_a_cr_reads_back(table, tmp_path):
    metals = table / "records" / "metals.csv"
    text = metals.read_text(encoding="utf-8")
    metals.write_text(text.replace(",,demo generator", ',"one\rtwo",demo generator', 1))
    before = load_table(table)
    export_table(before, tmp_path / "out")
    after = load_table(tmp_path / "out")
    notes = before.records["note"].astype(object).tolist()
    assert "one\rtwo" in notes
    assert after.records["note"].astype(object).tolist() == notes
    assert after.records["A_text"].tolist() == before.records["A_text"].tolist()


def test_fit_write_refuses_a_yaml_file(table, tmp_path):
    # it once appended CSV text to a YAML file
    target = tmp_path / "new.yaml"
    target.write_text("- id: x\n")
    out = fit_into(table, target)
    assert out.exit_code == 2 and "CSV records file" in out.output
    assert target.read_text() == "- id: x\n"


def test_fit_write_into_a_comment_only_file_adds_the_header(table, tmp_path):
    # a comment-only file gave StopIteration
    target = tmp_path / "fitted.csv"
    target.write_text("# fitted records, invented demo\n")
    out = fit_into(table, target)
    assert out.exit_code == 0, out.output
    assert target.read_text().startswith("# fitted records, invented demo\nid,substance,")
    assert load_table(target).records["id"].astype(object).tolist() == ["ardenite-l-fit"]


def test_fit_write_keeps_a_semicolon_file_semicolon(table):
    # a semicolon-delimited file once gave "no column A" though it had one
    metals = table / "records" / "metals.csv"
    header = metals.read_text().splitlines()[0].replace(",", ";")
    target = table / "records" / "semi.csv"
    target.write_text(header + "\n")
    out = fit_into(table, target)
    assert out.exit_code == 0, out.output
    row = target.read_text().splitlines()[1]
    assert row.startswith("ardenite-l-fit;ardenite;liquid;") and "," not in row.split(";")[0]
    assert "ardenite-l-fit" in set(load_table(table).records["id"].astype(object))


def test_fit_write_twice_refuses_the_duplicate_id(table):
    target = table / "records" / "fitted.csv"
    assert fit_into(table, target).exit_code == 0
    before = target.read_bytes()
    out = fit_into(table, target)
    assert out.exit_code == 2 and "already holds a record with id 'ardenite-l-fit'" in out.output
    assert target.read_bytes() == before


def test_append_records_reports_the_line_the_readers_give(tmp_path):
    target = tmp_path / "r.csv"
    target.write_text(
        "id,substance,phase,form,log_base,pressure_unit,A,B,t_min,t_max,source,note\n"
        'a1,demo,liquid,two-term,e,Pa,20,-5000,300,400,invented,"two\nlines"\n'
    )
    record = {
        "id": "a2",
        "substance": "demo",
        "phase": "liquid",
        "form": "two-term",
        "log_base": "e",
        "pressure_unit": "Pa",
        "A": 21.0,
        "B": -5000.0,
        "t_min": 300.0,
        "t_max": 400.0,
        "source": "invented",
    }
    line = append_records(target, [record])
    t = load_table(target)
    assert t.records["line"].tolist() == [2, line] == [2, 4]
    with pytest.raises(WriteError, match="already holds"):
        append_records(target, [record])


def test_fit_write_audits_the_record_with_its_partner_before_writing(table, tmp_path):
    # the fitted liquid meets the table's solid: the audit sees the pair (a crossing outside
    # the range), as apply's re-audit would, and an error stops the write unless --force
    target = tmp_path / "fitted.csv"
    out = fit_into(table, target)
    assert out.exit_code == 0, out.output
    assert "crossing-outside-range" in out.output  # needs the solid partner
    bad = CliRunner().invoke(
        main,
        [
            "fit",
            str(table),
            "--substance",
            "ardenite",
            "--phase",
            "liquid",
            "--form",
            "two-term",
            "--id",
            "ardenite-s1",
            "--write",
            str(tmp_path / "other.csv"),
        ],
    )
    assert bad.exit_code == 2 and "already holds a record with id 'ardenite-s1'" in bad.output
