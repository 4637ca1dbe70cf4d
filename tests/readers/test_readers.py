"""Readers: every cell read as text, every hazard a located error or a documented rewrite."""

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest
from conftest import write
from hypothesis import given
from hypothesis import strategies as st

from vpaudit.errors import TableError, TableErrors
from vpaudit.readers import load_table, read_file
from vpaudit.runtime import DEFAULT, Runtime

HEADER = "id,substance,phase,form,log_base,pressure_unit,A,B,C,t_min,t_max,source"
ROW = "r1,zinc-demo,solid,three-term,e,Pa,{A},-15000,-1.2,300,600,demo source"


def csv_text(a="25.5", extra=""):
    return HEADER + "\n" + ROW.format(A=a) + extra + "\n"


def errors_of(path, **kw):
    with pytest.raises(TableError) as info:
        read_file(path, **kw)
    exc = info.value
    return [str(e) for e in exc.errors] if isinstance(exc, TableErrors) else [str(exc)]


def test_csv_reads_numbers_and_keeps_their_text(tmp_path):
    t = read_file(write(tmp_path / "r.csv", csv_text("25.50")))
    rec = t.records.iloc[0]
    assert rec["A"] == 25.5 and rec["A_text"] == "25.50"
    assert rec["line"] == 2 and rec["file"].endswith("r.csv")


def test_unicode_minus_is_a_located_error_naming_the_character(tmp_path):
    path = write(tmp_path / "r.csv", csv_text("\u221225.5"))
    (msg,) = errors_of(path)
    assert "r.csv:2 [A]" in msg
    assert "unexpected U+2212 MINUS SIGN in '\u221225.5'; use '-'" in msg


def test_opt_in_normalisation_rewrites_and_logs(tmp_path):
    path = write(tmp_path / "r.csv", csv_text("\u221225.5"))
    t = read_file(path, normalize=True)
    assert t.records["A"].iat[0] == -25.5
    (rw,) = t.rewrites
    assert rw["line"] == 2 and rw["before"] == "\u221225.5" and rw["after"] == "-25.5"


def test_decimal_comma_in_semicolon_file_is_an_error_not_a_value(tmp_path):
    text = HEADER.replace(",", ";") + "\n" + ROW.format(A="12,5").replace(",", ";", 6)
    text = text.replace("12;5", "12,5")
    path = write(tmp_path / "r.csv", text.replace(",", ";").replace("12;5", "12,5") + "\n")
    (msg,) = errors_of(path)
    assert "[A]" in msg and "decimal commas" in msg


def test_bom_and_crlf_are_read_exactly(tmp_path):
    data = ("\ufeff" + csv_text()).replace("\n", "\r\n").encode("utf-8")
    t = read_file(write(tmp_path / "r.csv", data))
    assert list(t.records["id"]) == ["r1"] and t.records["A"].iat[0] == 25.5


def test_ragged_row_is_an_error_with_its_line(tmp_path):
    path = write(tmp_path / "r.csv", csv_text(extra=",surplus"))
    (msg,) = errors_of(path)
    assert ":2" in msg and "13 cells but the header names 12" in msg


def test_empty_file_duplicate_and_empty_header(tmp_path):
    assert "file is empty" in errors_of(write(tmp_path / "e.csv", ""))[0]
    dup = HEADER + ",A\n"
    assert "names column 'A' twice" in errors_of(write(tmp_path / "d.csv", dup))[0]
    assert "column 3 is empty" in errors_of(write(tmp_path / "h.csv", "id,substance,,x\n"))[0]


def test_invalid_utf8_and_nul_bytes_are_located(tmp_path):
    bad = csv_text().encode() + b"r2,\xe9\n"
    msg = errors_of(write(tmp_path / "l1.csv", bad))[0]
    assert "invalid UTF-8 at byte offset" in msg and "l1.csv:3" in msg
    msg = errors_of(write(tmp_path / "nul.csv", b"id\x00x\n"))[0]
    assert "NUL byte at byte offset 2" in msg


def test_unknown_column_form_unit_and_coefficient_misuse(tmp_path):
    text = (
        HEADER
        + ",colour\n"
        + ROW.format(A="1")
        + ",red\n"
        + "r2,zinc-demo,solid,four-term-x,e,Pa,1,-1,1,300,600,s,\n"
        + "r3,zinc-demo,vapour,three-term,e,psia,1,-1,1,300,600,s,\n"
        + "r4,zinc-demo,solid,two-term,e,Pa,1,-1,1,300,600,s,\n"
    )
    msgs = "\n".join(errors_of(write(tmp_path / "r.csv", text)))
    assert "unknown column 'colour'" in msgs
    assert "unknown form 'four-term-x'" in msgs
    assert "unknown phase 'vapour'" in msgs and "unknown pressure_unit 'psia'" in msgs
    assert "form 'two-term' does not use coefficient C" in msgs


def test_degc_on_a_log_linear_form_is_refused(tmp_path):
    text = HEADER + ",temperature_unit\n" + ROW.format(A="1") + ",degC\n"
    msg = errors_of(write(tmp_path / "r.csv", text))[0]
    assert "needs an absolute temperature" in msg


@pytest.mark.parametrize("bulk", [False, True], ids=["small-file", "bulk-path"])
def test_rule_problems_are_reported_not_raised(tmp_path, bulk):
    # large files count their ids while the columns are parsed, on two threads
    runtime = Runtime(jobs=2, parallel_rows=1) if bulk else DEFAULT
    text = (
        HEADER
        + "\n"
        + ROW.format(A="1")
        + "\n"
        + ROW.format(A="1").replace("300,600", "600,300").replace("r1", "r2")
        + "\n"
        + ROW.format(A="1").replace("demo source", "")
        + "\n"
    )
    t = load_table(write(tmp_path / "r.csv", text), runtime=runtime)
    rules = sorted(t.problems["rule"])
    assert rules == ["duplicate-id", "duplicate-id", "range", "source"]


YAML_HAZARDS = """\
- id: NO
  substance: 0123
  phase: liquid
  form: two-term
  log_base: "10"
  pressure_unit: Pa
  A: 1e3
  B: -1.0e+3
  t_min: 300
  t_max: 400
  source: 2001-01-01
  entered_on: 1:30
"""


def test_yaml_scalars_stay_text(tmp_path):
    t = read_file(write(tmp_path / "r.yaml", YAML_HAZARDS))
    r = t.records.iloc[0]
    assert r["id"] == "NO" and r["substance"] == "0123"
    assert r["A"] == 1000.0 and r["B"] == -1000.0
    assert r["source"] == "2001-01-01" and r["entered_on"] == "1:30"
    assert r["line"] == 1


def test_yaml_duplicate_key_and_alias_are_errors(tmp_path):
    dup = YAML_HAZARDS + "  A: 2\n"
    assert "field 'A' is given twice" in errors_of(write(tmp_path / "d.yaml", dup))[0]
    alias = "- &x {id: a}\n- *x\n"
    assert "aliases are not allowed" in errors_of(write(tmp_path / "a.yaml", alias))[0]


def test_json_keeps_number_text_and_rejects_nan_and_duplicates(tmp_path):
    good = (
        '{"records": [\n {"id": "a", "substance": "s", "phase": "solid", "form": "two-term",'
        ' "log_base": "e", "pressure_unit": "Pa", "A": 25.50, "B": -1.5e4, "t_min": 300,'
        ' "t_max": 600, "source": "x"},\n {"id": "b", "substance": "s", "phase": "liquid",'
        ' "form": "two-term", "log_base": "e", "pressure_unit": "Pa", "A": 24, "B": -14000,'
        ' "t_min": 600, "t_max": 900, "source": "x"}\n]}\n'
    )
    t = read_file(write(tmp_path / "r.json", good))
    assert list(t.records["A_text"]) == ["25.50", "24"]
    assert list(t.records["line"]) == [2, 3]
    nan = good.replace("25.50", "NaN")
    assert "NaN is not a number vpaudit reads" in errors_of(write(tmp_path / "n.json", nan))[0]
    dup = good.replace('"A": 24,', '"A": 24, "A": 25,')
    assert "given twice" in errors_of(write(tmp_path / "u.json", dup))[0]
    boolean = good.replace('"A": 24', '"A": true')
    assert "holds a bool" in errors_of(write(tmp_path / "b.json", boolean))[0]


def _parquet(path, a_type):
    table = pa.table(
        {
            "id": ["p1"],
            "substance": ["s"],
            "phase": ["solid"],
            "form": ["two-term"],
            "log_base": ["e"],
            "pressure_unit": ["Pa"],
            "A": pa.array([25.1], type=a_type),
            "B": pa.array([-15000.0]),
            "t_min": pa.array([300.0]),
            "t_max": pa.array([600.0]),
            "source": ["x"],
        }
    )
    pq.write_table(table, path)
    return path


def test_parquet_float64_is_exact_and_float32_refused(tmp_path):
    t = read_file(_parquet(tmp_path / "ok.parquet", pa.float64()))
    assert t.records["A"].iat[0] == 25.1
    msg = errors_of(_parquet(tmp_path / "bad.parquet", pa.float32()))[0]
    assert "[A]" in msg and "float" in msg


def test_table_directory_and_kind_mismatch(tmp_path, sample_db):
    t = load_table(sample_db)
    assert len(t.records) > 50 and len(t.references) > 50 and len(t.points) > 10
    write(tmp_path / "tbl" / "references" / "r.csv", csv_text())
    with pytest.raises(TableError, match="columns are those of records"):
        load_table(tmp_path / "tbl")


def test_a_spreadsheet_in_a_table_folder_is_refused_by_name_and_notes_are_passed_over(tmp_path):
    """A sheet saved beside the CSV files is a table the user meant to audit: it was passed
    over in silence, and the audit looked clean. It is refused with its name and what to do;
    a note in the folder is still not read."""
    write(tmp_path / "tbl" / "records" / "r.csv", csv_text())
    (tmp_path / "tbl" / "records" / "README.md").write_text("where these came from\n")
    assert len(load_table(tmp_path / "tbl").records) == 1
    (tmp_path / "tbl" / "records" / "more.xlsx").write_bytes(b"PK\x03\x04 not read")
    with pytest.raises(TableError, match=r"more\.xlsx: a spreadsheet is not read: save each"):
        load_table(tmp_path / "tbl")


def test_no_value_is_ever_different_from_the_text(sample_db):
    t = load_table(sample_db)
    for col in ("A", "B", "C", "t_min", "t_max"):
        text = t.records[col + "_text"]
        mask = text.notna().to_numpy()
        assert np.array_equal(
            t.records[col].to_numpy()[mask], np.array([float(x) for x in text[mask]])
        )


STREAM_CASES = {
    "plain": csv_text(),
    "bom-crlf": ("\ufeff" + csv_text()).replace("\n", "\r\n"),
    "comments-and-blank-lines": '# source: invented\n\n# second comment, "quoted"\n'
    + csv_text()
    + ROW.format(A="1").replace("r1", "r2")
    + "\n",
    "quoted-cells": HEADER + '\n"r1","zinc-demo",solid,three-term,e,Pa,"25.5",-15000,-1.2,300,'
    '600,"a ""quoted"" source, with comma"\n',
    "ragged": csv_text(extra=",surplus"),
    "blank-line-between-rows": csv_text() + "\n" + ROW.format(A="2").replace("r1", "r2") + "\n",
    "unclosed-quote": csv_text().replace("demo source", '"demo source'),
    "bare-cr": csv_text().replace("\n", "\r"),
    "nul": csv_text() + "r2\x00\n",
    "header-only": HEADER + "\n",
    "semicolons": csv_text().replace(",", ";"),
    "comment-then-bad-header": "# a comment\n" + HEADER + ",A\n" + ROW.format(A="1") + "\n",
    "comment-then-invalid-utf8-header": "# a comment\nid,subst\udce9nce\n",
}


@pytest.mark.parametrize("case", sorted(STREAM_CASES))
def test_streamed_large_file_path_reads_exactly_as_the_whole_file_path(tmp_path, monkeypatch, case):
    """Files above STREAM_BYTES are checked block by block and read by pyarrow from the file;
    forcing that path on small files must give the same frame or the same located errors."""
    from vpaudit.readers import csv_format

    path = write(tmp_path / "r.csv", STREAM_CASES[case].encode("utf-8", "surrogateescape"))

    def outcome():
        try:
            t = read_file(path)
        except TableError as exc:
            errs = exc.errors if isinstance(exc, TableErrors) else [exc]
            return None, [str(e) for e in errs]
        return t.records, []

    whole, whole_errors = outcome()
    monkeypatch.setattr(csv_format, "STREAM_BYTES", 0)
    monkeypatch.setattr(csv_format, "_BLOCK", 7)  # blocks split lines, quotes and CR LF pairs
    taken = []
    real = csv_format.read_csv_streamed
    monkeypatch.setattr(
        csv_format, "read_csv_streamed", lambda p: taken.append(real(p)) or taken[-1]
    )
    streamed, streamed_errors = outcome()
    # the regular files really take the streamed path; the others fall back to the whole file
    plain = case in {"plain", "bom-crlf", "comments-and-blank-lines", "quoted-cells", "semicolons"}
    assert (taken[0] is not None) == plain
    assert streamed_errors == whole_errors
    if whole is None:
        assert streamed is None
    else:
        import pandas as pd

        pd.testing.assert_frame_equal(streamed, whole)


def test_absent_optional_columns_read_as_written_empty_or_default(tmp_path):
    # An absent column is built without a list of cells (its default, or empty,
    # throughout): the frame must be the one a file writing that column out gives.
    full_header = HEADER + ",temperature_unit,modification,note,entered_by"
    rows = [ROW.format(A=str(20 + i)).replace("r1", f"r{i}") for i in range(5)]
    short = read_file(write(tmp_path / "a.csv", HEADER + "\n" + "\n".join(rows) + "\n"))
    spelled = read_file(
        write(tmp_path / "b.csv", full_header + "\n" + "\n".join(r + ",K,,," for r in rows) + "\n")
    )
    for col in ("temperature_unit", "modification", "note", "entered_by"):
        a, b = short.records[col], spelled.records[col]
        assert a.dtype == b.dtype, col
        assert a.isna().tolist() == b.isna().tolist(), col
        assert a.dropna().astype(str).tolist() == b.dropna().astype(str).tolist(), col
    assert short.records["temperature_unit"].astype(str).tolist() == ["K"] * 5


def test_absent_optional_columns_hold_no_cell_of_their_own(tmp_path):
    # An absent number column is NaN throughout and an absent text column null, as if
    # written out empty; neither stores a value per row (at 1e6 substances they took
    # 150-190 MB of the audit's peak): the numbers are one read-only value, and every
    # absent text column shares one null array.
    rows = [ROW.format(A=str(20 + i)).replace("r1", f"r{i}") for i in range(1000)]
    short = read_file(write(tmp_path / "a.csv", HEADER + "\n" + "\n".join(rows) + "\n"))
    spelled = read_file(
        write(
            tmp_path / "b.csv",
            HEADER + ",D,t_crit,note\n" + "\n".join(r + ",,," for r in rows) + "\n",
        )
    )
    rec, full = short.records, spelled.records
    for col in ("D", "t_crit"):
        got = rec[col].to_numpy()
        assert np.isnan(got).all() and np.isnan(full[col].to_numpy()).all(), col
        if int(pd.__version__.split(".")[0]) >= 3:  # pandas 2 copies the floats into a block
            assert got.strides == (0,) and not got.flags.writeable, col
        assert rec[col + "_text"].isna().all() and full[col + "_text"].isna().all(), col
    assert rec["note"].isna().all() and full["note"].isna().all()
    absent = [rec[c].array.__arrow_array__() for c in ("D_text", "t_crit_text", "note")]
    assert len({a.chunks[0].buffers()[1].address for a in absent}) == 1


def test_optional_text_columns_present_in_one_file_and_absent_in_another(tmp_path):
    # With pandas 3, a column of text in one file and absent (or empty) in another stopped
    # every command: "dtype of categories must be the same".
    full = HEADER + ",modification,entered_by,source_locator"
    (tmp_path / "records").mkdir()
    write(tmp_path / "records" / "a.csv", full + "\n" + ROW.format(A="25.5") + ",alpha,ann,p. 4\n")
    write(
        tmp_path / "records" / "b.csv",
        HEADER + "\n" + ROW.format(A="26.5").replace("r1,zinc-demo", "r2,tin-demo") + "\n",
    )
    write(
        tmp_path / "records" / "c.csv",
        full + "\n" + ROW.format(A="27.5").replace("r1,zinc-demo", "r3,lead-demo") + ",,,\n",
    )
    rec = load_table(tmp_path).records
    assert list(rec["id"]) == ["r1", "r2", "r3"]
    assert rec["modification"].astype(object).tolist()[0] == "alpha"
    assert rec["entered_by"].isna().tolist() == [False, True, True]
    assert rec["source_locator"].astype(object).tolist()[0] == "p. 4"


def test_a_note_with_line_separators_does_not_move_line_numbers(tmp_path):
    # U+2028, U+0085 and form feed are no line ends for any reader (readers.lines)
    note = "see\u2028table\x85two\x0cthree"
    text = HEADER + ",note\n" + ROW.format(A="25.5") + f",{note}\n"
    text += ROW.format(A="bad").replace("r1", "r2") + ",x\n"
    path = write(tmp_path / "r.csv", text)
    (msg,) = errors_of(path)
    assert "r.csv:3 [A]" in msg
    yaml_text = f'- id: r1\n  note: "{note[:-6]}"\n  A: 1\n- id: r2\n  A: 2\n'  # YAML: no FF
    from vpaudit.readers.json_format import read_json
    from vpaudit.readers.yaml_format import read_yaml

    assert read_yaml("t.yaml", yaml_text.encode()).lines == [1, 4]
    json_text = f'[{{"id": "r1", "note": "{note[:-6]}"}},\n {{"id": "r2"}}]'
    assert read_json("t.json", json_text.encode()).lines == [1, 2]


@pytest.mark.parametrize("null", ["null", "~", "Null", "NULL", ""])
def test_a_yaml_null_source_is_a_missing_source_not_a_citation(tmp_path, null):
    # "source: null" was kept as the text "null" and counted as a citation
    text = (
        "- id: r1\n  substance: zinc-demo\n  phase: solid\n  form: two-term\n  log_base: e\n"
        f"  pressure_unit: Pa\n  A: 25.5\n  B: -15000\n  t_min: 300\n  t_max: 600\n"
        f"  source: {null}\n"
    )
    t = read_file(write(tmp_path / "r.yaml", text))
    assert t.records["source"].isna().all()
    assert list(t.problems["rule"]) == ["source"]
    text = text.replace(f"source: {null}", 'source: "null"')
    quoted = read_file(write(tmp_path / "q.yaml", text))
    assert quoted.records["source"].astype(object).tolist() == ["null"]


def test_a_parquet_file_is_measured_before_it_is_decoded(tmp_path, monkeypatch):
    # a 440 KB file under the row limit decoded to 4.5 GB before failing with MemoryError
    from vpaudit.readers import parquet_format

    path = tmp_path / "r.parquet"
    pq.write_table(pa.table({"note": ["x" * 1000] * 2000}), path, compression="zstd")
    monkeypatch.setattr(parquet_format, "MAX_FILE_BYTES", 1_000_000)
    (msg,) = errors_of(path)
    assert "decode to more than 1000000 bytes" in msg  # stopped batch by batch
    monkeypatch.setattr(parquet_format, "MAX_ROWS", 100)
    monkeypatch.setattr(parquet_format, "MAX_FILE_BYTES", 10**9)
    decoded = []
    monkeypatch.setattr(pq.ParquetFile, "iter_batches", lambda *a, **k: decoded.append(1))
    (msg,) = errors_of(path)
    assert "2000 rows; the limit is 100" in msg and not decoded  # from the metadata alone


@pytest.mark.parametrize("suffix", [".csv", ".parquet", ".json", ".yaml"])
def test_a_file_of_a_million_columns_is_refused_before_it_is_parsed(tmp_path, suffix):
    # a 10 MB header of 10^6 columns took 32 s and 4.9 GB before its one-line error
    import time

    n = 1_000_000 if suffix == ".csv" else 5_000
    names = [f"c{i}" for i in range(n)]
    path = tmp_path / f"r{suffix}"
    if suffix == ".csv":
        path.write_text(",".join(names) + "\n" + ",".join("1" for _ in names) + "\n")
    elif suffix == ".parquet":
        pq.write_table(pa.table({c: ["1"] for c in names}), path)
    elif suffix == ".json":
        import json

        path.write_text(json.dumps([dict.fromkeys(names, "1")]))
    else:
        path.write_text("- " + "\n  ".join(f"{c}: 1" for c in names) + "\n")
    t0 = time.perf_counter()
    (msg,) = errors_of(path)
    assert "at most 200" in msg or "more than 200 fields" in msg
    assert time.perf_counter() - t0 < 5


@pytest.mark.parametrize(
    "name, text",
    [("deep.json", "[" * 1000 + "]" * 1000), ("deep.yaml", "- " + "[" * 400 + "]" * 400 + "\n")],
)
def test_deep_nesting_is_a_located_error_not_a_recursion_error(tmp_path, name, text):
    (msg,) = errors_of(write(tmp_path / name, text))
    assert "malformed" in msg or "expected" in msg


def test_no_two_columns_of_a_kind_differ_only_in_spelling():
    """A column name misspelt in case, spacing or underscores points at one column only:
    no two columns of one kind of file squash to the same name."""
    from vpaudit.readers.table import _SPECS, _squashed

    for kind, spec in _SPECS.items():
        names = [c.name for c in spec]
        assert len({_squashed(n) for n in names}) == len(names), kind


@given(
    kind=st.sampled_from(["records", "references", "points"]),
    pick=st.integers(min_value=0),
    flips=st.lists(st.booleans(), min_size=40, max_size=40),
    spaced=st.sampled_from(["", " ", "-"]),
    unit=st.sampled_from(["", " (K)", " [Pa]", "(J/mol)"]),
)
def test_a_misspelt_header_is_pointed_at_its_column(kind, pick, flips, spaced, unit):
    """Any change of case, underscores written as spaces or hyphens, and a unit in brackets
    after the name: the reader's hint names the column meant, and never a column for its
    own exact name (property-based)."""
    from vpaudit.readers.table import _SPECS, near_column

    names = [c.name for c in _SPECS[kind]]
    name = names[pick % len(names)]
    written = "".join(
        (ch.swapcase() if flip else ch) for ch, flip in zip(name, flips, strict=False)
    )
    written = written.replace("_", spaced) + unit
    assert near_column(name, names) is None
    if written != name:
        assert near_column(written, names) == name
