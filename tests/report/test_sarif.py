"""Every SARIF log vpaudit writes validates against the SARIF 2.1.0 JSON schemas (vendored in
tests/data/sarif/, origin in its README) and the independent models of sarif-pydantic; its
fixes carry the exact replacement that ``vpaudit apply`` writes."""

from __future__ import annotations

import json
import shutil
import subprocess

import pytest
from click.testing import CliRunner
from sarif_schema import validate

from vpaudit.cli import main


@pytest.fixture
def table(tmp_path, sample_db):
    out = tmp_path / "t"
    shutil.copytree(sample_db, out, ignore=shutil.ignore_patterns("*.py", "*.md", "PLANTED*"))
    return out


def test_the_audit_sarif_with_suggestions_validates(table, monkeypatch):
    # suggestions once gave fixes without artifactChanges: 23 schema errors
    monkeypatch.chdir(table.parent)
    out = CliRunner().invoke(main, ["audit", "t", "--format", "sarif", "--fail-on", "never"])
    log = json.loads(out.output)
    validate(log)
    fixes = [r for r in log["runs"][0]["results"] if r.get("fixes")]
    assert len(fixes) >= 7


def test_rule_help_reads_as_text_without_source_indentation(table, monkeypatch):
    # a rule's help is its check's docstring; viewers show it as plain text, so the
    # indentation it has in the source must not reach them
    monkeypatch.chdir(table.parent)
    out = CliRunner().invoke(main, ["audit", "t", "--format", "sarif", "--fail-on", "never"])
    rules = json.loads(out.output)["runs"][0]["tool"]["driver"]["rules"]
    helped = [r for r in rules if "help" in r]  # every check (the reader's rules have none)
    assert len(helped) > 20
    for rule in helped:
        lines = rule["help"]["text"].splitlines()
        assert lines and not any(line.startswith("    ") for line in lines), rule["id"]


def test_a_fix_is_the_replacement_apply_writes(table, monkeypatch):
    monkeypatch.chdir(table.parent)
    out = CliRunner().invoke(main, ["audit", "t", "--format", "sarif", "--fail-on", "never"])
    log = json.loads(out.output)
    result = next(
        r
        for r in log["runs"][0]["results"]
        if r["ruleId"] == "slope-not-positive" and r.get("fixes")
    )
    (change,) = result["fixes"][0]["artifactChanges"]
    (rep,) = change["replacements"]
    path = table.parent / change["artifactLocation"]["uri"]
    lines = path.read_text(encoding="utf-8").split("\n")
    start, end = rep["deletedRegion"]["startLine"], rep["deletedRegion"]["endLine"]
    expected = lines[: start - 1] + [rep["insertedContent"]["text"]] + lines[end:]
    applied = CliRunner().invoke(main, ["apply", "t", "slope-not-positive:dorvane-s1"])
    assert applied.exit_code == 0, applied.output
    assert path.read_text(encoding="utf-8").split("\n") == expected


def test_the_gate_sarif_validates(table, monkeypatch):
    root = table.parent
    for args in (["init", "-q"], ["add", "-A"]):
        subprocess.run(["git", "-C", str(root), *args], check=True, capture_output=True)
    subprocess.run(
        [
            "git",
            "-C",
            str(root),
            "-c",
            "user.name=t",
            "-c",
            "user.email=t@example.invalid",
            "commit",
            "-qm",
            "base",
        ],
        check=True,
        capture_output=True,
    )
    metals = table / "records" / "metals.csv"
    metals.write_text(metals.read_text().replace(",-30871.5273,", ",30871.5273,"))
    monkeypatch.chdir(root)
    out = CliRunner().invoke(main, ["gate", "t", "--base", "HEAD", "--format", "sarif"])
    assert out.exit_code == 1, out.output
    validate(json.loads(out.output))


def test_a_log_keeps_to_the_results_a_run_may_hold(table, monkeypatch):
    """GitHub code scanning rejects a run of more than 25,000 results (docs.github.com,
    "SARIF results exceed one or more limits"); a table whose every substance is flagged
    gave hundreds of thousands. The log keeps the most serious and says how many it left
    out; shown on the demo (invented data) with the limit lowered to 10."""
    from vpaudit.report import sarif

    assert sarif.RESULT_LIMIT == 25_000
    monkeypatch.chdir(table.parent)
    args = ["audit", "t", "--format", "sarif", "--fail-on", "never"]
    full = json.loads(CliRunner().invoke(main, args).output)["runs"][0]
    assert "invocations" not in full and "properties" not in full  # the demo fits whole
    monkeypatch.setattr(sarif, "RESULT_LIMIT", 10)
    log = json.loads(CliRunner().invoke(main, args).output)
    validate(log)
    run = log["runs"][0]
    assert len(run["results"]) == 10
    findings = [r for r in full["results"] if r["ruleId"] != "shared-slip"]
    kept = [r for r in run["results"] if r["ruleId"] != "shared-slip"]
    assert all(r["level"] == "error" for r in kept)  # 25 errors in the demo: errors only
    left = len(findings) - len(kept)
    assert run["properties"] == {"results_left_out": left}
    (note,) = run["invocations"][0]["toolExecutionNotifications"]
    assert note["message"]["text"].startswith(f"{left} of {len(findings)} findings are left out")
    # the kept results are the full log's, in its order
    keys = [r["partialFingerprints"]["vpaudit/v1"] for r in findings]
    kept_keys = [r["partialFingerprints"]["vpaudit/v1"] for r in kept]
    assert kept_keys == [k for k in keys if k in set(kept_keys)]


def test_a_log_reads_each_table_file_once_for_all_its_fixes(table, monkeypatch):
    """Each fix read its record's whole file again, for every finding that carried it: on
    a table of 10^5 substances with every liquid's log base wrong the SARIF log did not
    finish in 13 minutes. Each file is now read once, each fix made once."""
    from vpaudit import revisions

    reads = []
    real = revisions.FileText.read.__func__

    def counted(cls, path):
        reads.append(str(path))
        return real(cls, path)

    monkeypatch.setattr(revisions.FileText, "read", classmethod(counted))
    monkeypatch.chdir(table.parent)
    out = CliRunner().invoke(main, ["audit", "t", "--format", "sarif", "--fail-on", "never"])
    results = json.loads(out.output)["runs"][0]["results"]
    fixed = [r for r in results if r.get("fixes")]
    files = {c["artifactLocation"]["uri"] for r in fixed for c in r["fixes"][0]["artifactChanges"]}
    assert len(fixed) > len(files) >= 2  # several fixes, in fewer files
    assert sorted(reads) == sorted(set(reads)) and len(reads) == len(files)
