"""DuckDB store: all-or-nothing imports, export/import round trip, runs and findings."""

import shutil

import duckdb
import pytest
from click.testing import CliRunner
from conftest import write

from vpaudit.api import open_table
from vpaudit.auditing import audit_table
from vpaudit.cli import main
from vpaudit.errors import RecordRuleError, StoreError, TableErrors
from vpaudit.readers import load_table
from vpaudit.store import connect, import_table, read_findings, write_run
from vpaudit.writers import export_table


def _counts(db):
    con = duckdb.connect(str(db), read_only=True)
    try:
        return tuple(
            con.execute(f'SELECT count(*) FROM "{t}"').fetchone()[0]
            for t in ("records", "references", "points")
        )
    finally:
        con.close()


def test_import_export_import_reproduces_every_record(tmp_path, clean_sample):
    db = tmp_path / "a.duckdb"
    counts = import_table(clean_sample, db)
    assert not (tmp_path / "a.duckdb.wal").exists()
    export_table(open_table(db), tmp_path / "out")
    db2 = tmp_path / "b.duckdb"
    import_table(tmp_path / "out", db2)
    a, b = open_table(db).records, open_table(db2).records
    assert len(a) == counts["records"] == len(b)
    cols = [
        c
        for c in a.columns
        if c.endswith("_text") or c in ("id", "substance", "phase", "form", "source", "note")
    ]
    left = a[cols].sort_values("id").reset_index(drop=True).astype(object)
    right = b[cols].sort_values("id").reset_index(drop=True).astype(object)
    assert left.where(left.notna(), None).equals(right.where(right.notna(), None))


def test_table_with_one_bad_row_changes_nothing_and_names_the_row(tmp_path, clean_sample):
    db = tmp_path / "s.duckdb"
    import_table(clean_sample, db)
    before = _counts(db)
    bad = tmp_path / "bad"
    shutil.copytree(clean_sample, bad)
    path = bad / "records" / "metals.csv"
    lines = path.read_text().splitlines()
    lines[3] = lines[3].replace(",three-term,", ",three-trem,", 1)
    path.write_text("\n".join(lines) + "\n")
    with pytest.raises(TableErrors, match=r"metals\.csv:4 \[form\]: unknown form 'three-trem'"):
        import_table(bad, db)
    assert _counts(db) == before


def test_rule_problems_reject_the_import(tmp_path, clean_sample, sample_db):
    db = tmp_path / "s.duckdb"
    import_table(clean_sample, db)
    before = _counts(db)
    with pytest.raises(RecordRuleError, match=r"metals\.csv:28 \[source\] no source is cited"):
        import_table(sample_db, db)  # the demo's planted missing source
    text = (
        "id,substance,phase,form,log_base,pressure_unit,A,B,t_min,t_max,source\n"
        "x1,s,solid,two-term,e,Pa,25,-1e4,600,300,src\n"
    )
    bad = write(tmp_path / "t" / "records" / "r.csv", text)
    with pytest.raises(RecordRuleError, match=r"r\.csv:2 \[t_max\] the range is empty"):
        import_table(bad.parent.parent, db)
    assert _counts(db) == before


def test_audit_runs_and_findings_are_stored(tmp_path, sample_db):
    con = connect(tmp_path / "r.duckdb")
    try:
        result = audit_table(load_table(sample_db))
        run = write_run(con, result, str(sample_db))
        stored = read_findings(con, run)
        assert len(stored) == len(result.findings)
        assert set(stored["check"]) == {f.check for f in result.findings}
    finally:
        con.close()


def test_a_db_path_that_is_not_a_store_is_refused_and_left_alone(tmp_path, clean_sample):
    # DuckDB opens a CSV file as an in-memory database: the import once reported success
    # and stored nothing
    other = tmp_path / "existing.csv"
    other.write_text("a,b\n1,2\n")
    with pytest.raises(StoreError, match="not a vpaudit store"):
        import_table(clean_sample, other)
    assert other.read_text() == "a,b\n1,2\n"
    foreign = tmp_path / "other.duckdb"
    con = duckdb.connect(str(foreign))
    con.execute("CREATE TABLE parts (x INTEGER)")
    con.close()
    with pytest.raises(StoreError, match="not a vpaudit store"):
        import_table(clean_sample, foreign)
    out = CliRunner().invoke(main, ["import", str(clean_sample), "--db", str(other)])
    assert out.exit_code == 2 and "not a vpaudit store" in out.output
