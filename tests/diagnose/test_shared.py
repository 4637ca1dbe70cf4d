"""A slip many records of one source share (vpaudit.diagnose.shared), on real equations.

The records are the first liquids of the Antoine constants of Poling, Prausnitz and
O'Connell (2001), "The Properties of Gases and Liquids", 5th ed., as the chemicals package
carries them (``Psat_data_AntoinePoling``: log10 of P in Pa, T in K), with their reference
values from chemicals (tests/_support/compilations.py); one test takes the solids of Alcock,
Itkin & Horrigan (1984) with the CRC standard data of sublimation instead. The slips are
planted by tests/_support/slips.py.
"""

from __future__ import annotations

import json
import math
import random

import pytest
from compilations import POLING_ANT, poling_antoine
from refdata import table_from_rows
from report_schema import validate_report
from sarif_schema import validate
from slips import corrupt

from vpaudit.auditing import audit_table
from vpaudit.report import RENDERERS
from vpaudit.report.html import render_report as html

N = 40


@pytest.fixture(scope="module")
def poling():
    records, refs = poling_antoine(N)
    assert len(records) == N and all(r["log_base"] == "10" for r in records)
    return records, refs


def _audit(records, refs):
    return audit_table(table_from_rows(records, refs))


def _errored(result) -> int:
    return len({f.substance for f in result.findings if f.severity.value == "error"})


def test_a_header_misread_for_the_whole_source_is_named(poling):
    """Every record marked ln P while its source prints log10 P (a header misread once): the
    report names the one change and points at the source's header; applied to the whole
    source, the change leaves errors only where the clean compilation has them.
    """
    records, refs = poling
    result = _audit([dict(r, log_base="e") for r in records], refs)
    (g,) = result.summary["shared_slips"]
    validate_report(json.loads(RENDERERS["json"](result)))  # schemas/report.schema.json
    assert g["change"] == {"log_base": ["e", "10"]}
    assert (g["source"], g["phase"], g["file"]) == (POLING_ANT, "liquid", "<records>")
    assert g["same_metadata"] == g["flagged"] == N
    assert g["whole_source"]
    tried = g["tried"]
    assert tried["substances"] == tried["of"] == tried["with_errors"] == N
    assert tried["with_errors_after"] == _errored(_audit(records, refs))
    # most substances are given that fix (each on its own evidence), most of them confidently
    assert g["substances"] >= 0.75 * N and g["confident"] >= 0.5 * N
    text = RENDERERS["text"](result)
    assert "Shared slip:" in text and "log_base e -> 10" in text
    assert "header was likely misread" in text
    assert "log_base e -&gt; 10" in html(result, plots=False)


def test_two_header_slips_at_once_are_singled_out_by_the_whole_source(poling):
    """A source that prints log10 of P in mmHg, entered as ln P in Pa (two metadata slips at
    once): each substance's evidence cannot tell that compound change from its neighbours, so
    no fix is confident, but applied to the whole source it alone clears it.
    """
    records, refs = poling
    # 1 Torr = 101325/760 Pa by definition; 1 mmHg is 1.4e-7 of it larger (NIST SP 811)
    torr = math.log10(101325 / 760)
    result = _audit([dict(r, log_base="e", A=r["A"] - torr) for r in records], refs)
    (g,) = result.summary["shared_slips"]
    assert g["change"]["log_base"] == ["e", "10"]
    assert g["change"]["pressure_unit"][0] == "Pa"
    assert g["change"]["pressure_unit"][1] in ("mmHg", "Torr")  # one fix, two names
    assert g["substances"] >= 0.75 * N
    assert g["whole_source"] and g["tried"]["with_errors"] == N
    assert g["tried"]["with_errors_after"] == _errored(_audit(records, refs))
    assert "Shared slip:" in RENDERERS["text"](result)


def test_constants_in_degc_with_the_range_in_kelvin_are_one_shared_slip(poling):
    """A source whose Antoine constants are for theta in degC, entered as K with the range
    already converted to K (C 273.15 too large): the change tried on the whole source
    rewrites each record's range in degC with its unit, and clears it.
    """
    records, refs = poling
    result = _audit([dict(r, C=r["C"] + 273.15) for r in records], refs)
    (g,) = result.summary["shared_slips"]
    assert g["change"] == {"temperature_unit": ["K", "degC"]} and g["range_rewritten"]
    assert g["whole_source"] and g["tried"]["with_errors"] == N
    assert g["tried"]["with_errors_after"] == _errored(_audit(records, refs))
    assert "the range, already in K, rewritten in degC" in RENDERERS["text"](result)


def test_a_recurring_slip_is_not_called_a_header(poling):
    """The same log-base slip in a few records of the source, the others right: reported as a
    slip that recurs, since most records written the same way draw nothing.
    """
    records, refs = poling
    rng = random.Random(7)
    slipped = set(rng.sample(range(N), 6))
    planted = [
        corrupt(r, "log-base", rng)[0] if k in slipped else dict(r) for k, r in enumerate(records)
    ]
    result = _audit(planted, refs)
    groups = result.summary.get("shared_slips", [])
    assert [g["change"] for g in groups] == [{"log_base": ["10", "e"]}]
    (g,) = groups
    assert g["substances"] >= 3 and g["flagged"] < 0.5 * g["same_metadata"] == N / 2
    # applied to every record so written, the change would break the others
    assert not g["whole_source"]
    assert g["tried"]["with_errors_after"] > g["tried"]["with_errors"]
    assert "Recurring slip:" in RENDERERS["text"](result)


def test_slips_of_many_kinds_add_up_to_no_shared_slip(poling):
    """Single slips of every kind, one per record in a third of the records (as typed one
    by one): no change is shared by most of the suggestions, so none is reported.
    """
    records, refs = poling
    rng = random.Random(11)
    kinds = ["log-base", "pressure-unit", "sign", "decimal-shift", "digit-transposition"]
    planted, k = [], 0
    for i, r in enumerate(records):
        got = corrupt(r, kinds[k % len(kinds)], rng) if i % 3 == 0 else None
        if got is not None:
            k += 1
        planted.append(got[0] if got is not None else dict(r))
    result = _audit(planted, refs)
    assert any(f.suggestion for f in result.findings)  # the slips are diagnosed one by one
    assert "shared_slips" not in result.summary
    assert "slip:" not in RENDERERS["text"](result)


def test_review_names_the_shared_slip_before_the_fixes(poling, tmp_path):
    """``vpaudit review`` says first that one change explains the whole source, so that a
    reviewer checks the source before walking its fixes one by one.
    """
    from click.testing import CliRunner

    from vpaudit.cli import main
    from vpaudit.writers import export_table

    records, refs = poling
    export_table(table_from_rows([dict(r, log_base="e") for r in records], refs), tmp_path)
    run = CliRunner().invoke(main, ["review", str(tmp_path)], input="q\n")
    assert run.exit_code == 0, run.output
    first = run.output.index("Shared slip:")
    assert "log_base e -> 10" in run.output and first < run.output.index("[1/")


def test_show_tries_a_substance_s_fix_on_its_whole_source(poling, tmp_path):
    """``vpaudit show`` audits one substance, yet says whether its fix of metadata is the
    source's: with every record marked ln P (the source prints log10 P) the change clears
    the whole source; with the slip in one record only, it would break the others.
    """
    from click.testing import CliRunner

    from vpaudit.cli import main
    from vpaudit.writers import export_table

    records, refs = poling
    name = records[0]["substance"]
    export_table(table_from_rows([dict(r, log_base="e") for r in records], refs), tmp_path / "a")
    run = CliRunner().invoke(main, ["show", str(tmp_path / "a"), name])
    assert run.exit_code == 0, run.output
    said = run.output.split("The source as a whole:")[1]
    assert said.lstrip().startswith("Shared slip: the fix of")
    # said before the findings and their commands: check the source before applying them
    assert run.output.index("The source as a whole:") < run.output.index("to apply it:")
    assert "log_base e -> 10" in said and f"tried on their {N} substances" in said
    clean = _errored(_audit(records, refs))
    assert f"leaves errors on {clean} of the {N} substances that had them" in said

    # the same source written in ln P (A and B times ln 10: the same curves), one record
    # keeping its log10 constants: the fix is that record's, and on the others it breaks
    ln10 = math.log(10.0)
    as_ln = [dict(r, A=r["A"] * ln10, B=r["B"] * ln10, log_base="e") for r in records]
    as_ln[0] = dict(records[0], log_base="e")
    export_table(table_from_rows(as_ln, refs), tmp_path / "b")
    run = CliRunner().invoke(main, ["show", str(tmp_path / "b"), name])
    assert run.exit_code == 0, run.output
    assert "log_base e -> 10" in run.output  # the record's own fix
    said = run.output.split("The source as a whole:")[1]
    assert "Shared slip" not in said
    # fixed, it clears; every other record is read as log10 and breaks
    assert f"would leave {N - 1} of those {N} substances with errors, against {clean + 1}" in said
    assert "a slip of this record, not of the source's header" in said


def test_the_gate_names_a_shared_slip_a_change_brings(poling, tmp_path):
    """A pull request that re-enters a whole source under a wrong header (every record's log
    base marked ln): the gate's report names the shared slip beside the new findings.
    """
    import subprocess

    from click.testing import CliRunner

    from vpaudit.cli import main
    from vpaudit.writers import export_table

    def git(*args):
        subprocess.run(["git", "-C", str(repo), *args], check=True, capture_output=True)

    records, refs = poling
    repo = tmp_path / "repo"
    export_table(table_from_rows(records, refs), repo / "table")
    git("init", "-q")
    git("config", "user.email", "steward@example.invalid")
    git("config", "user.name", "Steward")
    git("add", "-A")
    git("commit", "-qm", "base")
    export_table(table_from_rows([dict(r, log_base="e") for r in records], refs), repo / "table")
    git("commit", "-qam", "head: the source entered again")
    run = CliRunner().invoke(main, ["gate", str(repo / "table"), "--base", "HEAD~1"])
    assert run.exit_code == 1, run.output  # new errors
    assert "Shared slip:" in run.output and "log_base e -> 10" in run.output
    # a code-scanning consumer of the SARIF log sees it too: one result of its own, new,
    # at the line of the first record it names, the others related
    run = CliRunner().invoke(
        main, ["gate", str(repo / "table"), "--base", "HEAD~1", "--format", "sarif"]
    )
    log = json.loads(run.output)
    validate(log)
    (shared,) = [r for r in log["runs"][0]["results"] if r["ruleId"] == "shared-slip"]
    assert shared["level"] == "warning" and shared["baselineState"] == "new"
    assert shared["message"]["text"].startswith("Shared slip:")
    g = shared["properties"]["shared_slip"]
    first, *others = g["records"]
    lines = (repo / "table" / "records" / "records.csv").read_text().splitlines()
    at = shared["locations"][0]["physicalLocation"]
    assert at["artifactLocation"]["uri"].endswith("records/records.csv")
    assert lines[at["region"]["startLine"] - 1].startswith(first + ",")
    assert [r["message"]["text"] for r in shared["relatedLocations"]] == others


def test_units_no_evidence_tells_apart_are_named_together():
    """The solids of Alcock, Itkin & Horrigan (1984) as chemicals carries them, with the CRC
    standard enthalpy and entropy of sublimation (tests/_support/anchors.py) as their only
    witness, every one entered in Pa while its coefficients give bar: bar and atm (1.3 %
    apart in pressure) each clear the source, so the report names both, whichever the
    diagnosis gave more substances.
    """
    from anchors import anchor_rows
    from chemicals.vapor_pressure import Psub_data_Alcock_elements as sol
    from refdata import alcock_pairs
    from slips import _cells, _pressure_slip

    by_name = {str(sol.loc[c, "Name"]): c for c in sol.index}
    records, refs = [], []
    for r in alcock_pairs()[0]:
        rows = anchor_rows(by_name[r["substance"]], r["substance"], "solid")
        if r["phase"] == "solid" and len(rows) == 2:
            records.append(_pressure_slip(r, _cells(r), "bar")[0])
            refs += rows
    clean = _errored(
        _audit([r for r in alcock_pairs()[0] if r["id"] in {x["id"] for x in records}], refs)
    )
    result = _audit(records, refs)
    (g,) = result.summary["shared_slips"]
    named = [g["change"]] + [o["change"] for o in g["or"]]
    assert sorted(c["pressure_unit"][1] for c in named) == ["atm", "bar"]
    assert g["whole_source"] and g["tried"]["with_errors_after"] == clean
    assert "no evidence tells them apart" in RENDERERS["text"](result)
