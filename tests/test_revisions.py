"""Revisions: apply a suggested fix, keep the history, touch only the intended lines."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from vpaudit.cli import main
from vpaudit.revisions import RevisionError, apply_correction, history

SAMPLE = Path(__file__).resolve().parents[1] / "sample_db"


@pytest.fixture
def table(tmp_path):
    dest = tmp_path / "db"
    shutil.copytree(SAMPLE, dest)
    return dest


def _lines(p: Path) -> list[bytes]:
    return p.read_bytes().splitlines(keepends=True)


def test_apply_finding_writes_the_fix_and_audits_again(table):
    # the library call behind 'vpaudit apply': the demo's planted lost minus sign on B
    from vpaudit.revisions import apply_finding

    done = apply_finding(table, "slope-not-positive:dorvane-s1", by="tester")
    assert [e["record"] for e in done.entries] == ["dorvane-s1"]
    # the reason recorded is the suggestion's explanation, its kind and confidence said once
    why = done.entries[0]["why"]
    assert why.count("[sign, confidence 0.") == 1 and why.count("sign (confidence") == 0
    assert done.substances == ["dorvane"] and done.remaining == 0
    with pytest.raises(RevisionError, match="no finding"):
        apply_finding(table, "slope-not-positive:dorvane-s1", by="tester")  # fixed already


def test_apply_of_one_of_two_slips_names_the_command_for_the_other(table):
    """The demo's bellorium (invented) with a second slip, a lost sign of B on its solid:
    applying the fix on the pair's mismatch at the melting point (the liquid's log base)
    leaves the solid's errors, and the line that names them gives the command that applies
    the fix now suggested for them; run, it leaves the substance clean."""
    metals = table / "records" / "metals.csv"
    text = metals.read_text()
    at = next(line for line in text.splitlines() if line.startswith("bellorium-s1,"))
    assert ",-14736.5418," in at
    metals.write_text(text.replace(at, at.replace(",-14736.5418,", ",14736.5418,")))
    spec = "melting-point-mismatch:bellorium-s1,bellorium-l1"
    first = CliRunner().invoke(main, ["apply", str(table), spec, "--by", "tester"])
    assert first.exit_code == 0, first.output
    assert "log_base: 'e' -> '10'" in first.output
    tail = first.output.split("re-audited bellorium: ", 1)[1]
    assert "slope-not-positive (bellorium-s1)" in tail
    assert "[sign on bellorium-s1, confidence 0." in tail
    command = tail.split("; a fix is suggested for ", 1)[1].split(": vpaudit ", 1)[1].split()
    assert command[:2] == ["apply", str(table)]
    second = CliRunner().invoke(main, [*command, "--by", "tester"])
    assert second.exit_code == 0, second.output
    assert "B: '14736.5418' -> '-14736.5418'" in second.output
    assert "re-audited bellorium: clean" in second.output


def test_apply_then_history_shows_both_and_only_the_line_changes(table):
    before = _lines(table / "records" / "metals.csv")
    run = CliRunner().invoke(
        main, ["apply", str(table), "slope-not-positive:dorvane-s1", "--by", "tester"]
    )
    assert run.exit_code == 0, run.output
    assert "B: '9842.23737' -> '-9842.23737'" in run.output
    assert "re-audited dorvane: clean" in run.output
    after = _lines(table / "records" / "metals.csv")
    changed = [k for k, (a, b) in enumerate(zip(before, after, strict=True)) if a != b]
    assert changed == [7]  # line 8, the record's own line, and nothing else
    assert after[7] == before[7].replace(b",9842.23737,", b",-9842.23737,")
    entries = history(table, "dorvane-s1")
    assert [e["revision"] for e in entries] == [0, 1]
    assert entries[0]["line_after"].encode() == before[7]
    assert entries[1]["by"] == "tester" and entries[1]["finding"] == "slope-not-positive:dorvane-s1"
    assert entries[1]["suggestion"]["kind"] == "sign"
    shown = CliRunner().invoke(main, ["history", str(table), "dorvane-s1"])
    assert "revision 0 (as entered)" in shown.output and "revision 1" in shown.output
    assert "B: '9842.23737' -> '-9842.23737'" in shown.output


def test_every_planted_fix_applies_and_the_audit_is_then_clean(table):
    fixes = [
        "enthalpy-implausible:bellorium-l1",
        "melting-point-mismatch:cassine-s1,cassine-l1",
        "slope-not-positive:dorvane-s1",
        "crossing-orientation:elmsite-s1,elmsite-l1",
        "melting-point-mismatch:galdrite-s1,galdrite-l1",
        "heat-capacity-sign:lanthorne-l1",
        "boiling-point-mismatch:selmane-l1",
        "anchor-entropy:pennarol-l1",
    ]
    for f in fixes:
        run = CliRunner().invoke(main, ["apply", str(table), f, "--by", "tester"])
        assert run.exit_code == 0, run.output
        assert ": clean" in run.output
    run = CliRunner().invoke(main, ["audit", str(table), "--format", "json", "-q"])
    left = {f["substance"] for f in json.loads(run.output)["findings"] if f["severity"] != "note"}
    assert left == {"kestrium", "islingite", "norrane"}  # the three planted non-slips


def test_a_finding_without_suggestion_is_refused(table):
    run = CliRunner().invoke(main, ["apply", str(table), "missing-source:norrane-s1"])
    assert run.exit_code == 2
    assert "carries no suggestion" in run.output


def test_a_finding_the_suggested_fix_leaves_names_the_finding_that_carries_it(tmp_path):
    """Perry's liquid of CAS 590-67-0 (via chemicals) with the sign of B lost, beside the
    CRC_ORG boiling point that it misses as carried: the sign fix is suggested on
    slope-not-positive, and asking to apply it through the boiling-point finding it does
    not explain says where the fix is, and changes nothing."""
    import csv
    import sys

    sys.path.insert(0, str(Path(__file__).resolve().parent / "_support"))
    from compilations import perry

    records, refs = perry()
    rec = next(r for r in records if r["id"] == "590-67-0-pe")
    cols = ["id", "substance", "phase", "form", "log_base", "pressure_unit"]
    cols += ["A", "B", "C", "D", "E", "t_min", "t_max", "source"]
    (tmp_path / "records").mkdir()
    (tmp_path / "references").mkdir()
    with open(tmp_path / "records" / "r.csv", "w", newline="", encoding="utf-8") as f:
        w = csv.DictWriter(f, cols, extrasaction="ignore")
        w.writeheader()
        w.writerow(
            {k: repr(v) if isinstance(v, float) else v for k, v in rec.items()}
            | {"B": repr(-rec["B"])}
        )
    with open(tmp_path / "references" / "x.csv", "w", newline="", encoding="utf-8") as f:
        w = csv.DictWriter(f, ["substance", "quantity", "value", "unit", "source"])
        w.writeheader()
        w.writerows(r for r in refs if r["substance"] == rec["substance"])
    before = (tmp_path / "records" / "r.csv").read_bytes()
    run = CliRunner().invoke(main, ["apply", str(tmp_path), "boiling-point-mismatch:590-67-0-pe"])
    assert run.exit_code == 2
    assert "the fix suggested for 590-67-0 (slope-not-positive:590-67-0-pe)" in run.output
    assert (tmp_path / "records" / "r.csv").read_bytes() == before
    run = CliRunner().invoke(main, ["apply", str(tmp_path), "slope-not-positive:590-67-0-pe"])
    assert run.exit_code == 0, run.output
    assert "B: " in run.output
    # what the fix leaves is named, not only counted
    assert "1 error remains: boiling-point-mismatch (590-67-0-pe)" in run.output


def test_review_walks_the_suggestions(table):
    # apply the first, skip the second, stop at the third
    run = CliRunner().invoke(main, ["review", str(table), "--by", "tester"], input="a\ns\nq\n")
    assert run.exit_code == 0, run.output
    assert "[1/" in run.output and "applied 1 of" in run.output
    log = table / "history" / "revisions.jsonl"
    assert sum('"record"' in ln for ln in log.read_text().splitlines()) == 1  # one revision
    # what the applied fix left on its substance is said, as apply says it
    first = run.output.split("[1/", 1)[1].split(":", 1)[0].split("] ", 1)[1]
    assert f"re-audited {first}: " in run.output.split("applied 1 of", 1)[1]


def test_review_whose_answers_run_out_stops_as_quit(table):
    # a script that pipes one answer: the first fix is applied, then the input ends; the
    # review stops there and says what it did (it printed "Aborted!" and exited 1, the
    # status of findings)
    run = CliRunner().invoke(main, ["review", str(table), "--by", "tester"], input="a\n")
    assert run.exit_code == 0, run.output
    assert "no answer: stopped here, as [q]uit" in run.output
    assert "applied 1 of" in run.output
    log = table / "history" / "revisions.jsonl"
    assert sum('"record"' in ln for ln in log.read_text().splitlines()) == 1


def test_review_with_nothing_to_offer_says_why(table, tmp_path):
    """review never says a bare "nothing": the demo (invented) above any confidence its
    fixes reach, a lone liquid whose errors no fix is singled out for, and a clean table."""
    import csv
    import sys

    sys.path.insert(0, str(Path(__file__).resolve().parent / "_support"))
    from chemicals.vapor_pressure import Psat_data_AntoinePoling as ant
    from slips import poling_record

    from vpaudit.equations.convert import convert_record

    before = (table / "records" / "metals.csv").read_bytes()
    run = CliRunner().invoke(main, ["review", str(table), "--min-confidence", "1"])
    assert run.exit_code == 0, run.output
    said = " ".join(run.output.split())
    assert "suggested fixes are all below --min-confidence 1 (the most confident: 0.99)" in said
    assert (table / "records" / "metals.csv").read_bytes() == before
    # Poling et al.'s propane (via chemicals) rewritten for mmHg and marked Pa: no fix is
    # singled out, and the readings that clear it are where to look
    rec = poling_record(ant.loc["74-98-6"], "propane-l", "propane")
    conv = convert_record(rec, pressure_unit="mmHg")
    cols = ["id", "substance", "phase", "form", "log_base", "pressure_unit"]
    cols += ["A", "B", "C", "t_min", "t_max", "source"]

    def write(folder, row):
        (folder / "records").mkdir(parents=True)
        with open(folder / "records" / "r.csv", "w", newline="", encoding="utf-8") as f:
            w = csv.DictWriter(f, cols, extrasaction="ignore")
            w.writeheader()
            w.writerow({k: repr(v) if isinstance(v, float) else v for k, v in row.items()})
        return folder

    lone = write(tmp_path / "lone", dict(rec, A=conv["A"], B=conv["B"], C=conv["C"]))
    said = " ".join(CliRunner().invoke(main, ["review", str(lone)]).output.split())
    assert "the audit finds 1 error in 1 substance" in said
    assert "singles out no fix for it" in said
    where = f"(vpaudit show {lone} propane names them)"
    assert f"for propane several readings each clear the errors {where}" in said
    clean = write(tmp_path / "clean", rec)
    said = " ".join(CliRunner().invoke(main, ["review", str(clean)]).output.split())
    assert said == "no suggested fixes to review: the audit finds no error or warning"


def test_review_offers_one_fix_per_record_at_or_above_the_confidence_asked():
    """revisions.review_offers: what review walks through. The demo's planted slips (the
    invented sample_db) draw several findings on one record; each record is offered once."""
    from vpaudit.api import open_table
    from vpaudit.auditing import audit_table
    from vpaudit.revisions import review_offers

    result = audit_table(open_table(SAMPLE))
    offers = review_offers(result)
    records = [f.suggestion["record"] for f in offers]
    with_suggestion = {f.suggestion["record"] for f in result.findings if f.suggestion}
    assert sorted(records) == sorted(with_suggestion)  # every one, once
    sure = review_offers(result, 0.95)
    assert sure and all(f.suggestion["confidence"] >= 0.95 for f in sure)
    assert len(sure) <= len(offers)
    assert review_offers(result, 1.0) == [f for f in offers if f.suggestion["confidence"] >= 1.0]


def test_fitted_records_are_appended_only_when_their_ids_are_new_and_they_draw_no_error(
    table,
):
    """revisions.add_records, behind fit --write: an id the table holds is refused, a record
    with an error needs force, and nothing is written when refused."""
    from vpaudit.api import open_table
    from vpaudit.auditing import audit_new_records
    from vpaudit.errors import VpauditError
    from vpaudit.fit import fit_table
    from vpaudit.revisions import add_records

    t = open_table(table)
    target = table / "records" / "fitted.csv"
    _, rec = fit_table(t, "ardenite", "three-term", "liquid", record_id="ardenite-l1")
    with pytest.raises(VpauditError, match="already holds a record with id 'ardenite-l1'"):
        add_records(target, t, [rec], [])
    assert not target.exists()
    _, rec = fit_table(t, "ardenite", "three-term", "liquid", record_id="ardenite-l9")
    findings = audit_new_records(t, [rec], "ardenite")
    errors = [f for f in findings if f.severity.value == "error"]
    broken = dict(rec, A=rec["A"] + 5.0)  # pressure e^5 too high: it meets nothing
    bad = audit_new_records(t, [broken], "ardenite")
    assert any(f.severity.value == "error" for f in bad)
    with pytest.raises(VpauditError, match="--force writes it anyway"):
        add_records(target, t, [broken], bad)
    assert not target.exists()
    assert errors == []  # the fit to ardenite's own points meets its solid
    line = add_records(target, t, [rec], findings)
    assert line == 2 and "ardenite-l9" in target.read_text()


def test_second_revision_is_numbered_and_old_ones_kept(table):
    f = table / "records" / "metals.csv"
    rec = "galdrite-l1"
    apply_correction(table, rec, str(f), 15, {"A": 10.7706297}, reason="first", by="a")
    apply_correction(table, rec, str(f), 15, {"A": 10.7706298}, reason="second", by="b")
    h = history(table, rec)
    assert [e["revision"] for e in h] == [0, 1, 2]
    assert h[1]["after"] == {"A": "10.7706297"} and h[2]["before"] == {"A": "10.7706297"}
    assert "1.07706297" in h[0]["line_after"]


def test_a_stale_location_is_refused(table):
    f = table / "records" / "metals.csv"
    with pytest.raises(RevisionError, match="expected record"):
        apply_correction(table, "galdrite-l1", str(f), 14, {"A": 1.0}, reason="x")


def test_yaml_and_json_edits_touch_only_the_value(tmp_path):
    yaml_text = (
        "# provenance header\n"
        "- id: y1\n  substance: s\n  phase: liquid\n  form: two-term\n  log_base: e\n"
        "  pressure_unit: Pa   # as printed\n  A: 25.0\n  B: -1.0e4\n"
        "  t_min: 400\n  t_max: 600\n  source: book\n"
        "- id: y2\n  substance: s\n  phase: solid\n  form: two-term\n  log_base: e\n"
        "  pressure_unit: Pa\n  A: 26.0\n  B: -1.1e4\n  t_min: 300\n  t_max: 400\n  source: book\n"
    )
    y = tmp_path / "r.yaml"
    y.write_text(yaml_text)
    apply_correction(tmp_path, "y1", str(y), 2, {"pressure_unit": "kPa"}, reason="t")
    new = y.read_text().splitlines()
    old = yaml_text.splitlines()
    diff = [k for k, (a, b) in enumerate(zip(old, new, strict=True)) if a != b]
    assert diff == [6] and new[6] == "  pressure_unit: kPa   # as printed"
    js = tmp_path / "r.json"
    js.write_text(
        '[\n  {"id": "j1", "substance": "s", "phase": "liquid", "form": "two-term",\n'
        '   "log_base": "e", "pressure_unit": "Pa", "A": 25.0, "B": -10000.0,\n'
        '   "t_min": 400, "t_max": 600, "source": "book"}\n]\n'
    )
    before = js.read_text()
    apply_correction(tmp_path, "j1", str(js), 2, {"B": 10000.0}, {"B": "10000.0"}, reason="t")
    assert js.read_text() == before.replace('"B": -10000.0', '"B": 10000.0')
    from vpaudit.readers import load_table

    load_table(js)  # still a valid table file


def test_fit_writes_a_record_that_reads_back(table):
    out = table / "records" / "fitted.csv"
    run = CliRunner().invoke(
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
            "--write",
            str(out),
        ],
    )
    assert run.exit_code == 0, run.output
    assert "standard error" in run.output and "95 % band" in run.output
    assert "Harrowgate effusion cell runs EC-3" in out.read_text()  # provenance kept
    from vpaudit.readers import load_table

    t = load_table(table)
    assert "ardenite-l-fit" in set(t.records["id"].astype(object))


def test_convert_and_pair_fit_commands(table, tmp_path):
    run = CliRunner().invoke(
        main, ["convert", str(table), "ardenite-l1", "--log-base", "10", "--pressure-unit", "Torr"]
    )
    assert run.exit_code == 0 and "exact conversion" in run.output
    assert ",three-term,10,Torr,K," in run.output
    run = CliRunner().invoke(main, ["convert", str(table), "ardenite-l1", "--form", "two-term"])
    assert run.exit_code == 2 and "deviates by up to" in run.output
    # a pair fit needs points of both phases: points generated from the demo's own curves
    from vpaudit.api import open_table
    from vpaudit.fit import fit_table_pair
    from vpaudit.substance import record_dict

    t = open_table(table)
    rows = []
    for rid in ("ardenite-s1", "ardenite-l1"):
        r = record_dict(t, rid)
        for temp in np.linspace(r["t_min"], r["t_max"], 8):
            y = r["A"] + r["B"] / temp + r["C"] * np.log(temp)
            rows.append(f"ardenite,{r['phase']},{float(temp)!r},{float(np.exp(y))!r},0.01")
    pts = table / "points" / "pair.csv"
    pts.write_text(
        "substance,phase,T,P,uncertainty,source\n" + "".join(f"{x},demo\n" for x in rows)
    )
    res, recs = fit_table_pair(open_table(table), "ardenite")
    assert abs(res.triple_temperature - 1179.4) < 1.0  # the demo pair meets at its melting point
    run = CliRunner().invoke(main, ["fit", str(table), "--substance", "ardenite", "--pair"])
    assert run.exit_code == 0, run.output
    assert "triple point:" in run.output and "cost of the constraint" in run.output


def _with_note(table, rid: str, note: str) -> Path:
    f = table / "records" / "metals.csv"
    lines = f.read_text(encoding="utf-8").split("\n")
    header = lines[0].split(",")
    k = next(i for i, ln in enumerate(lines) if ln.startswith(rid + ","))
    cells = next(__import__("csv").reader([lines[k]]))
    cells[header.index("note")] = note
    lines[k] = ",".join(f'"{c}"' if any(ch in c for ch in ',"\n') else c for c in cells)
    f.write_text("\n".join(lines), encoding="utf-8")
    return f


def test_apply_edits_the_record_it_names_past_line_separators_in_a_note(table):
    # str.splitlines() broke at U+2028, so apply reported "revised bellorium-l1" but edited
    # bellorium-s1's line; the readers count only LF, CR LF and CR
    f = _with_note(table, "ardenite-l1", "two\u2028parts\x85and\x0cmore")
    before = f.read_text(encoding="utf-8")
    run = CliRunner().invoke(
        main, ["apply", str(table), "enthalpy-implausible:bellorium-l1", "--by", "t"]
    )
    assert run.exit_code == 0, run.output
    after = f.read_text(encoding="utf-8")
    changed = [
        (a.split(",")[0], b.split(",")[0])
        for a, b in zip(before.split("\n"), after.split("\n"), strict=True)
        if a != b
    ]
    assert changed == [("bellorium-l1", "bellorium-l1")]
    h = history(table, "bellorium-l1")
    assert h[0]["line_after"].startswith("bellorium-l1,")


def test_apply_rewrites_a_record_whose_note_spans_two_lines(table):
    # a multi-line note before the fixed field once gave an IndexError
    f = _with_note(table, "dorvane-s1", "first line\nsecond line")
    run = CliRunner().invoke(main, ["apply", str(table), "slope-not-positive:dorvane-s1"])
    assert run.exit_code == 0, run.output
    text = f.read_text(encoding="utf-8")
    assert ",-9842.23737," in text and '"first line\nsecond line"' in text
    (entry,) = history(table, "dorvane-s1")[1:]
    assert entry["line_before"].count("\n") == 2 and entry["after"] == {"B": "-9842.23737"}


def test_a_revision_killed_half_way_is_settled_from_the_file(table, monkeypatch):
    from vpaudit import revisions

    f = table / "records" / "metals.csv"
    original = f.read_bytes()
    real = revisions.append_line
    calls = []

    def dies_after_the_intent(log, line):  # a kill after the intent was written
        calls.append(line)
        if len(calls) == 2:
            raise KeyboardInterrupt
        real(log, line)

    monkeypatch.setattr(revisions, "append_line", dies_after_the_intent)
    with pytest.raises(KeyboardInterrupt):
        apply_correction(table, "galdrite-l1", str(f), 15, {"A": 10.7706297}, reason="x")
    monkeypatch.setattr(revisions, "append_line", real)
    # the file was changed, the completion never written: history shows the revision
    assert f.read_bytes() != original
    assert [e["revision"] for e in history(table, "galdrite-l1")] == [0, 1]
    # an intent whose file write never happened does not count
    f.write_bytes(original)
    assert history(table, "galdrite-l1") == []
    # the next apply settles the log and numbers its revision after the real ones
    apply_correction(table, "galdrite-l1", str(f), 15, {"A": 10.7706298}, reason="y")
    assert [e["revision"] for e in history(table, "galdrite-l1")] == [0, 1]
    log = (table / "history" / "revisions.jsonl").read_text().splitlines()
    assert sum('"abandoned"' in ln for ln in log) == 1


def test_a_second_apply_waits_for_the_first(table):
    from vpaudit._atomic import file_lock
    from vpaudit.errors import VpauditError

    lock = table
    with file_lock(lock):
        with pytest.raises(VpauditError, match="another vpaudit process"):
            with file_lock(lock, timeout=0.2):
                pass
    f = table / "records" / "metals.csv"
    apply_correction(table, "galdrite-l1", str(f), 15, {"A": 10.7706297}, reason="x")
