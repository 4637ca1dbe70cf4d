"""The pull-request gate on a scripted git repository, accepted findings, and SARIF."""

import datetime as dt
import json
import shutil
import subprocess

import numpy as np
import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st
from report_schema import validate_report

from vpaudit.cli import main
from vpaudit.gate import gate, load_accepted


def git(repo, *args):
    subprocess.run(["git", "-C", str(repo), *args], check=True, capture_output=True)


@pytest.fixture
def repo(tmp_path, sample_db):
    """Base commit: the demo table (with its old, known problems)."""
    root = tmp_path / "repo"
    shutil.copytree(sample_db, root / "table", ignore=shutil.ignore_patterns("*.py"))
    git(root.parent, "init", "-q", str(root))
    git(root, "config", "user.email", "steward@example.invalid")
    git(root, "config", "user.name", "Demo Steward")
    git(root, "add", "-A")
    git(root, "commit", "-qm", "base")
    git(root, "tag", "base")
    return root


BAD = (
    "zorvane-l1,zorvane,liquid,,three-term,e,Pa,K,25.0,12000.0,-1.2,,,,,900,1500,"
    "invented demo source,,0.03,,test,2026-12-01\n"
)


def _head_change(repo):
    """Head: one bad record added and one reference changed."""
    metals = repo / "table" / "records" / "metals.csv"
    metals.write_text(metals.read_text() + BAD)
    refs = repo / "table" / "references" / "reference_values.csv"
    text = refs.read_text().replace(
        "ardenite,melting_point,1179.4,", "ardenite,melting_point,1259.4,"
    )
    assert text != refs.read_text()
    refs.write_text(text)
    git(repo, "commit", "-qam", "head")
    return metals


def _edit_record(path, rid, old, new):
    """Replace ``old`` by ``new`` in the line of record ``rid`` of the CSV file ``path``."""
    lines = path.read_text().splitlines(keepends=True)
    at = next(i for i, line in enumerate(lines) if line.startswith(f"{rid},"))
    assert old in lines[at]
    lines[at] = lines[at].replace(old, new)
    path.write_text("".join(lines))


def run(*args):
    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


def test_gate_reports_exactly_the_new_findings(repo):
    metals = _head_change(repo)
    result = gate(repo / "table", "base")
    new = {(f.check, f.substance) for f in result.findings if result.status_of(f) == "new"}
    # the bad record (a lost minus sign on B) and the unchanged ardenite pair, whose
    # reference melting point moved by 80 K
    assert ("slope-not-positive", "zorvane") in new
    assert ("melting-point-mismatch", "ardenite") in new
    assert {s for _, s in new} == {"zorvane", "ardenite"}
    assert result.gate.affected == 2
    assert result.fails("error")
    line = len(metals.read_text().splitlines())
    hit = [f for f in result.findings if f.check == "slope-not-positive"]
    assert hit[0].line == line and hit[0].file.endswith("metals.csv")
    r = run("gate", repo / "table", "--base", "base")
    assert r.exit_code == 1 and "New since base" in r.output


def test_accepting_the_new_findings_passes_the_gate(repo):
    _head_change(repo)
    result = gate(repo / "table", "base")
    for f in result.findings:
        if result.status_of(f) == "new":
            r = run(
                "accept",
                f"{f.check}:{','.join(f.records)}",
                "--table",
                repo / "table",
                "--reason",
                "checked against the lab notebook",
                "--until",
                "2099-12-31",
            )
            assert r.exit_code == 0, r.output
    r = run("gate", repo / "table", "--base", "base", "--format", "json")
    assert r.exit_code == 0, r.output
    data = json.loads(r.output)
    validate_report(data)  # schemas/report.schema.json
    assert {f["status"] for f in data["findings"]} <= {"existing", "accepted"}
    assert any(f["status"] == "accepted" for f in data["findings"])


def test_a_findings_status_travels_with_it(repo):
    # the status is part of the finding, not a table keyed by object identity: a copy made
    # with dataclasses.replace keeps it, and a fresh finding is never taken for a judged one
    import dataclasses

    from vpaudit.checks.finding import Finding

    _head_change(repo)
    first = next(f for f in gate(repo / "table", "base").findings if f.check != "missing-source")
    r = run(
        "accept", f"{first.check}:{','.join(first.records)}", "--table", repo / "table",
        "--reason", "checked against the lab notebook", "--until", "2099-12-31",
    )  # fmt: skip
    assert r.exit_code == 0, r.output
    result = gate(repo / "table", "base")
    assert "accepted" in {result.status_of(f) for f in result.findings}
    for f in result.findings:
        copy = dataclasses.replace(f, message=f.message + " (copy)")
        assert result.status_of(copy) == result.status_of(f)
        fresh = Finding(f.check, f.severity, f.substance, f.records, f.message)
        assert result.status_of(fresh) == "new"


def test_the_gates_csv_says_which_findings_are_new(repo, tmp_path):
    # a CI job that reads the CSV must tell the findings that fail the gate from those the
    # base had: a last column gives each row's status, as the JSON's "status" does; read
    # back by Python's csv module (a standard consumer)
    import csv

    metals = _head_change(repo)
    # and bellorium re-entered by another hand: re-audited, its log-base error is not new
    _edit_record(metals, "bellorium-l1", ",demo generator,", ",demo steward,")
    git(repo, "commit", "-qam", "bellorium re-entered")
    out_csv, out_json = tmp_path / "gate.csv", tmp_path / "gate.json"
    for fmt, out in (("csv", out_csv), ("json", out_json)):
        r = run("gate", repo / "table", "--base", "base", "--format", fmt, "-o", out)
        assert r.exit_code == 1
    with out_csv.open(newline="", encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    findings = json.loads(out_json.read_text())["findings"]
    assert [r["status"] for r in rows] == [f["status"] for f in findings]
    assert {r["status"] for r in rows} == {"new", "existing"}
    assert {(r["check"], r["substance"]) for r in rows if r["status"] == "new"} >= {
        ("slope-not-positive", "zorvane"),
        ("melting-point-mismatch", "ardenite"),
    }
    assert ("enthalpy-implausible", "bellorium", "existing") in {
        (r["check"], r["substance"], r["status"]) for r in rows
    }
    # an audit's CSV has no such column (nothing to compare with)
    audit = run("audit", repo / "table", "--format", "csv", "--fail-on", "never").output
    assert audit.splitlines()[0].split(",")[-1] == "undecided"


def test_expired_acceptance_is_reported_and_fails_again(repo):
    _head_change(repo)
    run(
        "accept",
        "slope-not-positive:zorvane-l1",
        "--table",
        repo / "table",
        "--reason",
        "temporary",
        "--until",
        (dt.date.today() + dt.timedelta(days=30)).isoformat(),
    )
    result = gate(repo / "table", "base", today=dt.date.today() + dt.timedelta(days=31))
    checks = {f.check for f in result.findings if result.status_of(f) == "new"}
    assert "acceptance-expired" in checks and "slope-not-positive" in checks


def test_an_acceptance_renewed_after_it_expired_is_the_one_in_force(repo):
    """Accepting a finding again (here after its acceptance expired, with the table before
    the finding, as the other commands take it) renews it: the gate reads the last entry
    for the finding, reports no expiry, does not fail on it, and the earlier entry stays in
    the file."""
    _head_change(repo)
    table = repo / "table"
    later = dt.date.today() + dt.timedelta(days=31)
    first = run(
        "accept", table, "slope-not-positive:zorvane-l1", "--reason", "temporary",
        "--until", (dt.date.today() + dt.timedelta(days=30)).isoformat(),
    )  # fmt: skip
    assert first.exit_code == 0, first.output
    again = run(
        "accept", table, "slope-not-positive:zorvane-l1", "--reason", "reviewed again",
        "--until", (later + dt.timedelta(days=60)).isoformat(),
    )  # fmt: skip
    assert again.exit_code == 0, again.output
    assert "replaces the earlier acceptance ('temporary'" in again.output
    assert len(load_accepted(table / "accepted.toml")) == 2
    result = gate(table, "base", today=later)
    status = {f.check: result.status_of(f) for f in result.findings}
    assert status["slope-not-positive"] == "accepted"
    assert "acceptance-expired" not in status and "acceptance-unused" not in status


def test_a_hand_written_entry_with_its_substance_and_a_later_accept_are_one_finding(repo):
    """An entry written by hand with ``substance =`` and a later ``vpaudit accept`` of the
    same finding (check and record ids, which are unique in a table) are one finding: the
    later is in force and renews it, and the earlier is history, not a second entry in
    force that the gate would report as unused."""
    _head_change(repo)
    table = repo / "table"
    (table / "accepted.toml").write_text(
        '[[accepted]]\ncheck = "slope-not-positive"\nrecords = ["zorvane-l1"]\n'
        'substance = "zorvane"\nreason = "written by hand"\nby = "steward"\n'
        "until = 2000-01-01\n",
        encoding="utf-8",
    )
    again = run("accept", table, "slope-not-positive:zorvane-l1", "--reason", "reviewed")
    assert again.exit_code == 0, again.output
    assert "replaces the earlier acceptance ('written by hand'" in again.output
    result = gate(table, "base")
    status = {f.check: result.status_of(f) for f in result.findings}
    assert status["slope-not-positive"] == "accepted"
    assert "acceptance-expired" not in status and "acceptance-unused" not in status


def test_a_change_that_touches_nothing_relevant_passes(repo):
    readme = repo / "table" / "README.md"
    readme.write_text(readme.read_text() + "\nA note for stewards.\n")
    git(repo, "commit", "-qam", "docs")
    r = run("gate", repo / "table", "--base", "base")
    assert r.exit_code == 0, r.output
    assert "New since base: 0 finding(s)" in r.output


def test_a_change_that_mends_a_record_lists_what_it_cleared(repo, tmp_path):
    """The demo's bellorium-l1 is a log10 equation marked ln (its planted slip): marking it
    log10 clears its substance's findings. The gate lists exactly those the base audit has
    on bellorium and the head audit has not (each table audited whole, here), as resolved,
    in the text, the Markdown and the JSON; nothing is new, and the gate passes."""
    from vpaudit import audit

    metals = repo / "table" / "records" / "metals.csv"
    before = audit(repo / "table")
    _edit_record(metals, "bellorium-l1", ",liquid,,three-term,e,Pa,", ",liquid,,three-term,10,Pa,")
    git(repo, "commit", "-qam", "mend bellorium-l1")
    after = audit(repo / "table")
    cleared = {k for k in before.findings.keys() if k[1] == "bellorium"} - set(
        after.findings.keys()
    )
    assert any(k[0] == "enthalpy-implausible" for k in cleared)

    result = gate(repo / "table", "base")
    assert {f.key for f in result.gate.resolved} == cleared
    assert not any(result.status_of(f) == "new" for f in result.findings)
    r = run("gate", repo / "table", "--base", "base")
    assert r.exit_code == 0, r.output
    assert f"Resolved (at base, cleared by the change): {len(cleared)} finding(s)" in r.output
    assert "enthalpy-implausible:bellorium-l1" in r.output
    r = run("gate", repo / "table", "--base", "base", "--format", "json")
    out = json.loads(r.output)
    validate_report(out)
    assert out["summary"]["resolved"] == len(cleared) == len(out["resolved"])
    assert {(d["check"], d["substance"], tuple(sorted(d["records"]))) for d in out["resolved"]} == (
        cleared
    )
    r = run("gate", repo / "table", "--base", "base", "--format", "markdown")
    assert f"{len(cleared)} resolved: at base, cleared by the change" in r.output


def test_missing_base_revision_says_what_it_needs(repo):
    r = run("gate", repo / "table", "--base", "no-such-rev")
    assert r.exit_code == 2
    assert "is not in this clone" in r.output and "git fetch" in r.output


def test_sarif_is_valid_2_1_0_and_points_at_the_record_lines(repo, monkeypatch):
    # validated with the independent pydantic models of sarif-pydantic (SARIF 2.1.0)
    from sarif_pydantic import Sarif

    metals = _head_change(repo)
    monkeypatch.chdir(repo)
    r = run("gate", "table", "--base", "base", "--format", "sarif")
    log = json.loads(r.output)
    Sarif.model_validate(log)
    assert log["version"] == "2.1.0"
    run_ = log["runs"][0]
    rule_ids = {rule["id"] for rule in run_["tool"]["driver"]["rules"]}
    assert "melting-point-mismatch" in rule_ids
    bad = [
        x
        for x in run_["results"]
        if x["ruleId"] == "slope-not-positive" and x["baselineState"] == "new"
    ]
    loc = bad[0]["locations"][0]["physicalLocation"]
    assert loc["artifactLocation"]["uri"] == "table/records/metals.csv"
    assert loc["region"]["startLine"] == len(metals.read_text().splitlines())
    for x in run_["results"]:
        assert x["ruleId"] in rule_ids


def test_a_capped_gate_log_keeps_the_new_findings_first(repo, monkeypatch):
    # a run holds at most sarif.RESULT_LIMIT results (GitHub code scanning rejects more):
    # what a gate's log keeps are the findings the change brought, then the worst others
    from sarif_schema import validate

    from vpaudit.report import sarif

    metals = repo / "table" / "records" / "metals.csv"
    # bellorium's old errors come along: its solid's note changes (re-audited, nothing new)
    _edit_record(metals, "bellorium-s1", ",,0.03,", ",rechecked,0.03,")
    _head_change(repo)
    result = gate(repo / "table", "base")
    status = [result.status_of(f) for f in result.findings]
    n_new = status.count("new")
    assert 0 < n_new and status.count("existing") > 0
    monkeypatch.chdir(repo)
    monkeypatch.setattr(sarif, "RESULT_LIMIT", n_new)
    log = json.loads(run("gate", "table", "--base", "base", "--format", "sarif").output)
    validate(log)
    states = [x["baselineState"] for x in log["runs"][0]["results"]]
    assert states == ["new"] * n_new  # the new ones, though old errors came along


def test_a_capped_gate_comment_names_the_command_that_lists_every_finding(repo, monkeypatch):
    # a pull-request comment holds at most markdown.COMMENT_LIMIT characters; what it leaves
    # out, the gate's own CSV lists, and the command it names must run as written (--base)
    from vpaudit.report import markdown as md
    from vpaudit.report._escape import markdown_text

    _head_change(repo)
    full = run("gate", repo / "table", "--base", "base", "--format", "markdown").output
    monkeypatch.setattr(md, "COMMENT_LIMIT", len(full) - 1)
    short = run("gate", repo / "table", "--base", "base", "--format", "markdown").output
    assert len(short) < len(full) and "more finding(s) not shown" in short
    command = f"vpaudit gate {repo / 'table'} --base base --format csv"
    assert f"({markdown_text(command)})" in short
    listed = run(*command.split()[1:])
    assert listed.exit_code == 1 and listed.output.startswith("severity,check,")


def test_changed_substances_are_found_from_the_diff(repo):
    metals = repo / "table" / "records" / "metals.csv"
    lines = metals.read_text().splitlines(keepends=True)
    # delete the kestrium-l2 row (a second source): kestrium changes, nothing else does
    kept = [ln for ln in lines if not ln.startswith("kestrium-l2,")]
    assert len(kept) == len(lines) - 1
    metals.write_text("".join(kept))
    # an untracked new file with one more substance
    extra = repo / "table" / "records" / "extra.csv"
    extra.write_text(lines[0] + BAD)
    result = gate(repo / "table", "base")
    assert result.gate.affected == 2  # kestrium and zorvane
    new = {(f.check, f.substance) for f in result.findings if result.status_of(f) == "new"}
    assert ("slope-not-positive", "zorvane") in new
    assert {sub for _, sub in new} == {"zorvane"}  # kestrium's old finding is simply gone


def test_a_policy_change_reaudits_everything(repo):
    (repo / "table" / "vpaudit.toml").write_text(
        'preset = "evaluated"\n[checks.melting-point-mismatch]\ntolerance = 0.01\n'
    )
    git(repo, "add", "-A")
    git(repo, "commit", "-qm", "stricter")
    result = gate(repo / "table", "base")
    assert result.gate.affected == 31  # every substance of the table


def test_rows_are_compared_by_content_not_by_the_lines_a_diff_names(repo):
    refs = repo / "table" / "references" / "reference_values.csv"
    text = refs.read_text().splitlines(keepends=True)
    # a comment line moves every row but changes none: nothing to re-audit
    refs.write_text("# provenance: reference sheet RS-1\n" + "".join(text))
    assert gate(repo / "table", "base").gate.affected == 0
    # a header that swaps two columns changes what every row of the file says
    header = text[0].replace("value", "VALUE").replace("unit", "value").replace("VALUE", "unit")
    refs.write_text(header + "".join(text[1:]))
    from vpaudit.errors import TableErrors

    with pytest.raises(TableErrors):  # the head is read as written: units are not numbers
        gate(repo / "table", "base")


@pytest.mark.parametrize(
    "name, config",
    [
        ("nouveautés.csv", ()),  # git quotes non-ASCII names in its diff headers
        ("new file.csv", ()),  # git appends a TAB to a header naming a path with a space
        ("new.csv", ("-c", "diff.noprefix=true")),  # no a/ and b/ in the headers
        ("new.csv", ("-c", "diff.mnemonicPrefix=true")),
    ],
)
def test_no_file_name_or_git_setting_lets_a_bad_record_through(repo, name, config, monkeypatch):
    # each of these gave "0 substance(s) changed" and exit 0 while the diff headers were parsed
    if config:
        git(repo, "config", config[1].split("=")[0], config[1].split("=")[1])
    header = (repo / "table" / "records" / "metals.csv").read_text().splitlines()[0]
    (repo / "table" / "records" / name).write_text(header + "\n" + BAD)
    git(repo, "add", "-A")
    git(repo, "commit", "-qm", "a new file with a bad record")
    out = run("gate", repo / "table", "--base", "base")
    assert out.exit_code == 1, out.output
    assert "zorvane" in out.output


def test_a_row_below_a_two_line_note_is_the_one_re_audited(repo):
    # a quoted note spanning two lines once shifted every later row's line by one, and the
    # gate re-audited the record above the changed one: a sign flip passed with exit 0
    metals = repo / "table" / "records" / "metals.csv"
    lines = metals.read_text().splitlines(keepends=True)
    lines[1] = lines[1].replace(",,demo generator", ',"measured twice;\nsee log",demo generator')
    metals.write_text("".join(lines))
    git(repo, "commit", "-qam", "a two-line note")
    git(repo, "tag", "-f", "base")
    text = metals.read_text()
    flipped = text.replace(",-14361.1213,", ",14361.1213,")  # bellorium-l1 loses its sign
    assert flipped != text
    metals.write_text(flipped)
    out = run("gate", repo / "table", "--base", "base")
    assert out.exit_code == 1, out.output
    assert "bellorium" in out.output


def test_a_change_that_mends_an_unreadable_base_audits_the_head(repo):
    metals = repo / "table" / "records" / "metals.csv"
    good = metals.read_text()
    metals.write_text(good.replace(",29.4857321,", ",29,48573,"))  # a ragged row
    git(repo, "commit", "-qam", "broken")
    git(repo, "tag", "-f", "base")
    metals.write_text(good)
    out = run("gate", repo / "table", "--base", "base", "--fail-on", "never")
    assert out.exit_code == 0, out.output
    assert "could not be read at base" in out.output
    assert "base:table/records/metals.csv:2" in out.output
    assert "vpaudit-gate-" not in out.output  # no deleted temporary path


def test_an_unreadable_work_tree_is_said_at_its_own_line_while_the_base_is_read(
    repo, tmp_path, monkeypatch
):
    """The base is fetched and read beside the work tree: a problem in the work tree is the
    error said (at its file and line), a missing base revision only when the work tree
    reads, and the base's temporary copy is gone either way (in a temporary folder of this
    test's own, so that another process's gate cannot come or go in it)."""
    import tempfile

    own = tmp_path / "tmp"
    own.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(own))
    metals = repo / "table" / "records" / "metals.csv"
    metals.write_text(metals.read_text().replace(",29.4857321,", ",29,48573,"))  # ragged
    for rev in ("base", "no-such-rev"):
        out = run("gate", repo / "table", "--base", rev)
        assert out.exit_code == 2, out.output
        assert "metals.csv:2" in out.output and "is not in this clone" not in out.output
    assert list(own.iterdir()) == []


@pytest.mark.parametrize(
    "args, message",
    [
        (["--until", "20270630"], "not a date written like 2027-06-30"),
        (["--until", "2027-W26-3"], "not a date written like 2027-06-30"),
        (["--until", "2027-02-30"], "not a date of the calendar"),
        (["--until", "2020-01-01"], "is in the past"),
        (["--reason", "why \udc8d"], "unpaired surrogate"),
    ],
)
def test_accept_refuses_what_it_cannot_write_and_leaves_the_file_valid(repo, args, message):
    # each of these once wrote an accepted.toml that no later accept or gate could read
    table = repo / "table"
    ok = run("accept", "range-gap:ardenite-s1", "--table", table, "--reason", "checked")
    assert ok.exit_code == 0, ok.output
    before = (table / "accepted.toml").read_bytes()
    base = ["accept", "sources-disagree:kestrium-l1,kestrium-l2", "--table", table]
    out = run(*base, *(args if "--reason" in args else ["--reason", "x", *args]))
    assert out.exit_code == 2 and message in out.output, out.output
    assert (table / "accepted.toml").read_bytes() == before
    assert len(load_accepted(table / "accepted.toml")) == 1


def test_accept_writes_any_reason_that_reads_back_exactly(repo):
    table = repo / "table"
    reason = 'quoted "text", a back\\slash, a tab\t, an emoji \U0001f600 and a new\nline'
    out = run("accept", "range-gap:ardenite-s1", "--table", table, "--reason", reason)
    assert out.exit_code == 0, out.output
    (entry,) = load_accepted(table / "accepted.toml")
    assert entry.reason == reason


@pytest.mark.parametrize(
    "text",
    [
        "accepted = [1, 2]\n",
        '[[accepted]]\ncheck="c"\nrecords=["r"]\nreason="x"\nby="y"\nuntil = 2027-06-30T10:00:00\n',
        '[[accepted]]\ncheck="c"\nrecords="r"\nreason="x"\nby="y"\n',
    ],
)
def test_a_malformed_accepted_file_is_a_located_error_not_a_crash(repo, text):
    (repo / "table" / "accepted.toml").write_text(text)
    out = run("gate", repo / "table", "--base", "base")
    assert out.exit_code == 2 and "accepted.toml" in out.output, out.output


@settings(max_examples=60, deadline=None)
@given(
    st.lists(
        st.tuples(
            st.sampled_from(["Fe", "Zn", "Cu", "Ag"]),
            st.sampled_from([1.0, 2.5, np.nan, 0.0, -0.0]),
            st.sampled_from(["three-term", "antoine", None]),
        ),
        min_size=0,
        max_size=8,
    ),
    st.data(),
)
def test_changed_substances_are_those_whose_rows_differ_as_multisets(rows, data):
    """The gate's row keys against the obvious oracle: the rows of each side as a multiset
    of their contents (file and line left out); a substance changed iff one of its rows
    is on one side more often than on the other. Both sides as often have the same length
    (rows changed in place, compared place by place first) as not; a categorical field has
    each side's own categories, as a reader makes them."""
    from collections import Counter

    from vpaudit.gate import _changed_substances

    edited = list(rows)
    for _ in range(data.draw(st.integers(0, 3))):
        action = data.draw(st.sampled_from(["change", "drop", "add", "move"]))
        if action == "add" or not edited:
            edited.append((data.draw(st.sampled_from(["Fe", "Ni"])), 7.0, "wagner"))
        elif action == "drop":
            edited.pop(data.draw(st.integers(0, len(edited) - 1)))
        elif action == "change":
            k = data.draw(st.integers(0, len(edited) - 1))
            if data.draw(st.booleans()):
                edited[k] = (edited[k][0], 9.0, edited[k][2])
            else:  # another text in the categorical field
                other = data.draw(st.sampled_from(["three-term", "antoine", "wagner", None]))
                edited[k] = (*edited[k][:2], other)
        else:
            edited.reverse()

    before, after = Counter(map(_row_content, rows)), Counter(map(_row_content, edited))
    expected = {k[0] for k in before.keys() | after.keys() if before[k] != after[k]}
    assert _changed_substances(_one_file(edited), _one_file(rows)) == expected


def test_a_text_changed_in_place_is_seen_whatever_the_codes_of_its_categories():
    """A reader makes a text field categorical from the values present, so the same code
    can mean another text on each side: here 'three-term' (code 1 of antoine, three-term)
    became 'wagner' (code 1 of antoine, wagner), in place, with nothing else changed."""
    from vpaudit.gate import _changed_substances

    base = [("Fe", 1.0, "antoine"), ("Zn", 1.0, "three-term")]
    head = [("Fe", 1.0, "antoine"), ("Zn", 1.0, "wagner")]
    assert _changed_substances(_one_file(head), _one_file(base)) == {"Zn"}
    assert _changed_substances(_one_file(base), _one_file(base)) == set()


def _row_content(row):
    return (row[0], "nan" if row[1] != row[1] else row[1], row[2])


def _one_file(content):
    """A table of (substance, A, form) records in one file; no other rows."""
    from types import SimpleNamespace

    import pandas as pd

    from vpaudit.gate import PARTS

    frame = pd.DataFrame(
        {
            "substance": pd.Series([s for s, _, _ in content], dtype="string[pyarrow]"),
            "A": [a for _, a, _ in content],
            # a text field the reader makes categorical, from the values present
            "form": pd.Categorical([f for _, _, f in content]),
            "file": ["f.csv"] * len(content),
            "line": list(range(2, 2 + len(content))),
        }
    )
    empty = frame.iloc[:0]
    return SimpleNamespace(**{kind: frame if kind == "records" else empty for kind in PARTS})


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_the_gate_says_what_auditing_both_whole_tables_says(repo, seed):
    """Random edits of the demo table (a coefficient, range, log base, unit or phase
    changed, a record deleted or copied under a new id), committed as head: the gate's new
    and resolved findings are exactly the set differences of auditing the whole base and
    the whole head (the gate re-audits only the changed substances)."""
    import csv
    import io
    import random

    from vpaudit import audit

    rng = random.Random(seed)
    table = repo / "table"
    base = set(audit(table).findings.keys())
    for _ in range(3):
        path = rng.choice(sorted((table / "records").glob("*.csv")))
        hdr, *body = list(csv.reader(io.StringIO(path.read_text())))
        i = rng.randrange(len(body))
        op = rng.choice(["edit", "delete", "copy"])
        if op == "edit":
            col = rng.choice(["A", "B", "t_min", "t_max", "log_base", "pressure_unit", "phase"])
            k, old = hdr.index(col), body[i][hdr.index(col)]
            body[i][k] = {
                "log_base": {"e": "10", "10": "e"}.get(old, old),
                "pressure_unit": "bar" if old != "bar" else "Torr",
                "phase": {"solid": "liquid", "liquid": "solid"}.get(old, old),
            }.get(col, repr(float(old) * rng.choice([-1.0, 10.0, 1.01])) if old else old)
        elif op == "delete":
            body.pop(i)
        else:
            body.append([body[i][0] + "-copy", *body[i][1:]])
        out = io.StringIO()
        csv.writer(out, lineterminator="\n").writerows([hdr, *body])
        path.write_text(out.getvalue())
    git(repo, "commit", "-qam", f"random edits {seed}")
    head = set(audit(table).findings.keys())
    result = gate(table, "base")
    new = {f.key for f in result.findings if result.status_of(f) == "new"}
    assert head != base  # the edits changed what the audit finds
    assert new == head - base
    assert {f.key for f in result.gate.resolved} == base - head
