"""Diagnosis: the likely slip behind a suspect record, tested on corrupted real data.

Clean data: Alcock, Itkin & Horrigan (1984), Can. Metall. Q. 23, 309 (metal solid/liquid
pairs) with CRC Handbook melting points, enthalpies of fusion and boiling points, and the
Antoine constants of Poling, Prausnitz & O'Connell, The Properties of Gases and Liquids,
5th ed., with CRC boiling points -- all via the ``chemicals`` package (tests/_support/refdata.py).
"""

from __future__ import annotations

import csv
import io
import json
import math
import random
import re
from decimal import Decimal

import numpy as np
import pytest
from anchors import anchor_rows
from hypothesis import given, settings
from hypothesis import strategies as st
from refdata import CRC, alcock_pairs, table_from_rows
from report_schema import validate_report
from sarif_schema import validate
from slips import Case, cases_table, corrupt, labelled_cases, poling_record, reproduces

from vpaudit.auditing import audit, audit_table
from vpaudit.diagnose import SLIP_KINDS
from vpaudit.report import RENDERERS

_ALCOCK = None


def alcock(name: str):
    """The solid and liquid records of one Alcock element and its CRC references."""
    global _ALCOCK
    if _ALCOCK is None:
        _ALCOCK = alcock_pairs()
    recs, refs = _ALCOCK
    return (
        [dict(r) for r in recs if r["substance"] == name],
        [dict(r) for r in refs if r["substance"] == name],
    )


def suggestion_for(records, refs, record_id):
    result = audit_table(table_from_rows(records, refs))
    sugs = [f.suggestion for f in result.findings if record_id in f.records and f.suggestion]
    flagged = [f for f in result.findings if f.severity.rank >= 1]
    return (sugs[0] if sugs else None), flagged


def _text(v):
    return repr(float(v))


# One hand-made case per kind: (element, phase, how the slip is made)
SLIPS = {
    # liquid silver: log10 coefficients typed in as ln
    "log-base": ("Ag", "liquid", lambda r: corrupt(r, "log-base", random.Random(0))[0]),
    # solid copper: coefficients for Torr marked Pa
    "pressure-unit": (
        "Cu",
        "solid",
        lambda r: _convert_marked(r, pressure_unit="Torr"),
    ),
    # liquid gold: the minus sign of B lost
    "sign": ("Au", "liquid", lambda r: {**_texts(r), "B": _text(-r["B"])}),
    # solid nickel: A off by a factor 10
    "decimal-shift": (
        "Ni",
        "solid",
        lambda r: {**_texts(r), "A": format(Decimal(_text(r["A"])).scaleb(-1), "f")},
    ),
    # liquid aluminium: C and D in each other's columns
    "coefficient-swap": (
        "Al",
        "liquid",
        lambda r: {**_texts(r), "C": _text(r["D"]), "D": _text(r["C"])},
    ),
    # liquid lead: the first two digits of A transposed
    "digit-transposition": ("Pb", "liquid", lambda r: {**_texts(r), "A": _swap_first(r["A"])}),
}


def _texts(r):
    return {k: (_text(v) if k in "ABCDE" and v is not None else v) for k, v in r.items()}


def _swap_first(v):
    t = _text(v)
    return t[1] + t[0] + t[2:]


def _convert_marked(r, pressure_unit):
    from vpaudit.equations.convert import convert_record

    conv = convert_record(r, pressure_unit=pressure_unit)
    out = _texts(r)
    out.update({c: _text(conv[c]) for c in "ABCD" if r.get(c) is not None})
    return out


@pytest.mark.parametrize("kind", sorted(SLIPS))
def test_each_slip_in_a_real_record_is_named_and_undone(kind):
    element, phase, make = SLIPS[kind]
    recs, refs = alcock(element)
    i = next(k for k, r in enumerate(recs) if r["phase"] == phase)
    original = recs[i]
    recs[i] = make(original)
    sug, flagged = suggestion_for(recs, refs, original["id"])
    assert flagged, "the slip must be detected"
    assert sug is not None and sug["kind"] == kind and sug["record"] == original["id"]
    assert sug["confidence"] >= 0.8
    # the corrected coefficients reproduce the original curve to rounding
    assert reproduces(original, recs[i], sug, tol=1e-9)


def test_swapped_phase_labels_of_a_real_pair_are_named():
    recs, refs = alcock("Ag")  # Alcock Ag solid and liquid, CRC melting point
    s, lq = recs
    swapped = [dict(s, phase="liquid"), dict(lq, phase="solid")]
    sug, _ = suggestion_for(swapped, refs, s["id"])
    assert sug["kind"] == "phase-swap" and sug["confidence"] >= 0.8
    assert {sug["record"], sug["also"][0]["record"]} == {s["id"], lq["id"]}


@pytest.mark.parametrize("ranges_in", ["degC", "K"])
def test_antoine_constants_in_degc_marked_k(ranges_in):
    # Poling et al., Antoine constants of ethanol (log10 P[Pa], T in K), via chemicals; CRC
    # normal boiling point 351.39 K (CRC Handbook, from memory; only used as the reference)
    from chemicals.vapor_pressure import Psat_data_AntoinePoling as ant

    rec = poling_record(ant.loc["64-17-5"], "ethanol-l", "ethanol")
    from vpaudit.equations.convert import convert_record

    conv = convert_record(rec, temperature_unit="degC")
    bad = dict(rec, A=conv["A"], B=conv["B"], C=conv["C"])
    if ranges_in == "degC":
        bad.update(t_min=conv["t_min"], t_max=conv["t_max"])
    refs = [
        {
            "substance": "ethanol",
            "quantity": "normal_boiling_point",
            "value": 351.39,
            "unit": "K",
            "source": CRC,
        }
    ]
    sug, flagged = suggestion_for([bad], refs, "ethanol-l")
    assert flagged and sug is not None and sug["kind"] == "temperature-unit"
    assert sug["corrected"]["temperature_unit"] == "degC"
    if ranges_in == "degC":
        # read as kelvin, the degC range (about 3..100) is absurd for a liquid boiling at
        # 351 K: only one reading of the range makes sense
        assert sug["confidence"] >= 0.8
        assert reproduces(rec, bad, sug, tol=1e-9)
    else:
        # the K range read as degC (about 550..640 K) would put the curve 200 K above the
        # boiling point it must meet, where the Tb reference predicts little: the curve is the
        # same either way, so only the likelihood's normalization (a looser tolerance is a
        # less sharp prediction) tells the readings apart, and it favours the K range, which
        # holds the boiling point
        assert reproduces(rec, bad, sug, tol=1e-9)
        assert sug["confidence"] >= 0.8


def test_two_names_of_one_pressure_unit_share_one_prior():
    # Torr and mmHg differ by 1.4e-7 (1 Torr = 101325/760 Pa; 1 mmHg = 133.322387415 Pa,
    # BIPM SI brochure, 9th ed., table 8, non-SI units): one hypothesis, whose prior must
    # equal that of any other unit, not twice it
    from vpaudit.diagnose import candidates_for

    rec = dict(
        id="x", form="antoine", phase="liquid", log_base="10", pressure_unit="Pa",
        A=10.0, B=1500.0, C=-50.0, t_min=280.0, t_max=360.0, temperature_unit="K",
    )  # fmt: skip
    prior = {
        c.changes[0].value: c.log_prior
        for c in candidates_for(rec, 0, [])
        if c.kind == "pressure-unit"
    }
    both = np.logaddexp(prior["Torr"], prior["mmHg"])
    assert both == pytest.approx(prior["kPa"]) and prior["bar"] == pytest.approx(prior["kPa"])
    # and for a record in mmHg, "Torr" is no slip at all: it is not offered
    offered = {
        c.changes[0].value
        for c in candidates_for(dict(rec, pressure_unit="mmHg"), 0, [])
        if c.kind == "pressure-unit"
    }
    assert "Torr" not in offered and "mmHg" not in offered and "Pa" in offered


def test_two_names_of_one_pressure_unit_are_one_fix_where_their_keys_round_apart():
    # An invented metal pair (synthetic, not real properties) whose solid's coefficients are
    # for mmHg but marked Pa: the Torr and mmHg readings give curves 1.4e-7 apart, which the
    # rounding of their keys to 1e-6 happened to split, so they were offered as a fix and an
    # equally likely runner-up at 0.64 each; as one fix they are almost certain
    records = [
        dict(
            id="m-s", substance="m", phase="solid", form="three-term", log_base="e",
            pressure_unit="Pa", A=25.2781431, B=-37540.8267, C=-0.584833944, t_min=784.618,
            t_max=1307.7, source="synthetic", uncertainty=0.03,
        ),
        dict(
            id="m-l", substance="m", phase="liquid", form="three-term", log_base="e",
            pressure_unit="Pa", A=31.7551442, B=-36597.9743, C=-0.906075426, t_min=1307.7,
            t_max=1961.55, source="synthetic", uncertainty=0.03,
        ),
    ]  # fmt: skip
    refs = [
        dict(substance="m", quantity="melting_point", value=1307.7, unit="K", source="s"),
        dict(substance="m", quantity="enthalpy_of_fusion", value=11332.1, unit="J/mol", source="s"),
    ]  # fmt: skip
    result = audit_table(table_from_rows(records, refs))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert sug["kind"] == "pressure-unit" and sug["record"] == "m-s"
    assert sug["corrected"]["pressure_unit"] in ("Torr", "mmHg")
    assert "runner_up" not in sug and "Equivalent" in sug["explanation"]
    assert sug["confidence"] >= 0.8


def test_a_lone_antoine_curve_in_degc_keeps_its_range_in_k():
    # Poling et al., Antoine constants of ethanol (via chemicals), rewritten for degC and
    # marked K with the range left in K; the only witness is the CRC standard data at
    # 298.15 K (tests/_support/anchors.py: dH_vap and dS0_vap, method CRC). Read in degC, the range
    # (about 550..640 K) would start far above the curve's own boiling point (about 351 K),
    # where 0.2-0.3 % of real liquid equations start theirs (Landolt, Wagner, Poling and
    # Perry compilations, measured): the range as written is the likely one
    from chemicals.vapor_pressure import Psat_data_AntoinePoling as ant

    from vpaudit.equations.convert import convert_record

    rec = poling_record(ant.loc["64-17-5"], "ethanol-l", "ethanol")
    conv = convert_record(rec, temperature_unit="degC")
    bad = dict(rec, A=conv["A"], B=conv["B"], C=conv["C"])
    refs = anchor_rows("64-17-5", "ethanol", "liquid")
    assert len(refs) == 2
    sug, flagged = suggestion_for([bad], refs, "ethanol-l")
    assert flagged and sug is not None and sug["kind"] == "temperature-unit"
    assert reproduces(rec, bad, sug, tol=1e-9)


def test_a_lone_solid_in_bar_is_not_read_as_a_lost_sign_of_its_log_t_term():
    # Alcock et al. (1984) solid cadmium (via chemicals: C = -0.8052, no D term, 298-594 K),
    # its coefficients rewritten for bar and marked Pa, the only witness the CRC standard
    # data of sublimation at 298.15 K (tests/_support/anchors.py). Flipping C to +0.8052
    # shifts ln P at 298 K by 2 C ln T = 9.2, close to ln(1e5) = 11.5, and leaves the
    # anchor within its allowance; but it turns the implied dCp of sublimation from -6.7
    # to +6.7 J/(mol K), which 9 of 396 real log-linear equations have (candidates.py): the
    # pressure unit must win
    recs, _ = alcock("Cd")
    solid = next(r for r in recs if r["phase"] == "solid")
    bad = _convert_marked(solid, pressure_unit="bar")
    refs = anchor_rows("7440-43-9", "Cd", "solid")
    assert len(refs) == 2
    sug, flagged = suggestion_for([bad], refs, solid["id"])
    assert flagged and sug is not None
    assert sug["kind"] == "pressure-unit" and sug["corrected"]["pressure_unit"] in ("bar", "atm")
    # the prior alone: the sign fix of C is the rare kind of equation, the others are not
    from vpaudit.diagnose.candidates import candidates_for, heat_capacity_mid

    assert heat_capacity_mid(solid) == pytest.approx(-0.8052)
    assert heat_capacity_mid(solid, "C", 0.8052) == pytest.approx(0.8052)
    as_read = dict(solid, **{f"{c}_text": _text(solid[c]) for c in "ABCD"})
    prior = {
        (c.kind, c.changes[0].field): c.log_prior
        for c in candidates_for(as_read, 0, [])
        if c.kind == "sign"
    }
    assert prior[("sign", "C")] == pytest.approx(prior[("sign", "A")] + np.log(9 / 396))


def test_two_readings_no_data_can_tell_apart_are_said_to_be_one():
    # Alcock et al. (1984) solid silver (via chemicals), its coefficients rewritten for atm
    # and marked Pa, the only witness the CRC standard data of sublimation at 298.15 K
    # (tests/_support/anchors.py). atm and bar differ by 1.3 % (101325 against 100000 Pa,
    # by definition), less than the record's 5 % uncertainty: each reading takes about half
    # the weight, and the suggestion says that together they are all but certain
    recs, _ = alcock("Ag")
    solid = next(r for r in recs if r["phase"] == "solid")
    bad = _convert_marked(solid, pressure_unit="atm")
    refs = anchor_rows("7440-22-4", "Ag", "solid")
    sug, flagged = suggestion_for([bad], refs, solid["id"])
    assert flagged and sug is not None and sug["kind"] == "pressure-unit"
    assert {sug["corrected"]["pressure_unit"], sug["runner_up"]["corrected"]["pressure_unit"]} == {
        "atm",
        "bar",
    }
    assert sug["confidence"] < 0.8  # neither alone
    got = re.search(
        r"to within ([\d.]+) % over the range.*together their confidence is (\d\.\d\d)",
        sug["explanation"],
    )
    assert got, sug["explanation"]
    assert float(got.group(1)) == pytest.approx(1.3, abs=0.05)  # 101325/100000 - 1
    assert float(got.group(2)) >= 0.8


def test_two_readings_apart_in_level_name_the_witness_that_would_decide():
    # Alcock et al. (1984) solid silver in mmHg marked Pa, the CRC standard data of
    # sublimation its only witness (as above): Torr and mbar split the weight (they differ
    # by R ln 1.333 = 2.4 J/(mol K) in the standard entropy, within its allowance), and the
    # suggestion says by how much they differ in pressure (133.322 Pa against 100 Pa, by
    # definition) and which witness would decide
    recs, refs = alcock("Ag")
    i = next(k for k, r in enumerate(recs) if r["phase"] == "solid")
    solid = recs[i]
    bad = _convert_marked(solid, pressure_unit="mmHg")
    anchor = anchor_rows("7440-22-4", "Ag", "solid")
    sug, _ = suggestion_for([bad], anchor, solid["id"])
    assert sug is not None and sug["runner_up"]["corrected"] == {"pressure_unit": "mbar"}
    got = re.search(
        r"differ by a factor ([\d.]+) in pressure at every temperature", sug["explanation"]
    )
    assert got and got.group(1) == "1.33"  # 1.3332 to three figures
    assert "the other phase's curve" in sug["explanation"]
    assert "normal boiling point" not in sug["explanation"]  # a solid's: no such witness
    # and that witness does decide: with its Alcock liquid beside it, mmHg (or Torr) alone
    recs[i] = bad
    sug, _ = suggestion_for(recs, refs + anchor, solid["id"])
    assert sug["corrected"]["pressure_unit"] in ("mmHg", "Torr") and sug["confidence"] >= 0.95
    assert "runner_up" not in sug


def test_two_readings_a_precise_record_tells_apart_are_not_called_one():
    # the same silver solid, but stated to 1 %: bar and atm, 1.3 % apart, are then two
    # curves the record distinguishes, and the suggestion must not call them one
    recs, _ = alcock("Ag")
    solid = next(r for r in recs if r["phase"] == "solid")
    bad = dict(_convert_marked(solid, pressure_unit="atm"), uncertainty=0.01)
    refs = anchor_rows("7440-22-4", "Ag", "solid")
    sug, flagged = suggestion_for([bad], refs, solid["id"])
    assert flagged and sug is not None and sug["kind"] == "pressure-unit"
    assert "no data can tell them apart" not in sug["explanation"]


def test_a_clean_pair_gets_no_suggestion():
    recs, refs = alcock("Cu")  # Alcock Cu pair with CRC references: consistent
    result = audit_table(table_from_rows(recs, refs))
    assert not [f for f in result.findings if f.severity.rank >= 1]
    assert all(f.suggestion is None for f in result.findings)


def test_a_disagreement_no_single_slip_explains_gets_no_suggestion():
    # Alcock Ag liquid with every pressure 1.45 times too high: no unit, base, sign, digit or
    # column slip gives that factor, so nothing may be suggested
    import math

    recs, refs = alcock("Ag")
    lq = next(r for r in recs if r["phase"] == "liquid")
    lq["A"] = lq["A"] + math.log(1.45)
    result = audit_table(table_from_rows(recs, refs))
    flagged = [f for f in result.findings if f.severity.rank >= 1]
    assert flagged
    assert all(f.suggestion is None for f in flagged)
    assert "undecided" not in result.summary  # nor is any reading said to clear it


def test_two_slips_in_two_records_are_found_and_weighed_together(tmp_path):
    """The demo's bellorium (invented) carries a log-base slip on its liquid; a pull request
    then loses the sign of B on its solid. One slip per substance cannot explain both: the
    liquid's fix is offered where it clears the liquid's error, and the solid's own errors
    carry the sign fix as a second slip beside it. Weighed together (both applied, audited
    as one hypothesis against every single slip and none), the two clear every finding,
    which either alone cannot: both are stated almost certain, and each names the other."""
    import shutil
    from pathlib import Path

    root = tmp_path / "db"
    shutil.copytree(Path(__file__).resolve().parents[2] / "sample_db", root)
    metals = root / "records" / "metals.csv"
    lines = metals.read_text().splitlines(keepends=True)
    at = next(i for i, line in enumerate(lines) if line.startswith("bellorium-s1,"))
    assert ",-14736.5418," in lines[at]
    lines[at] = lines[at].replace(",-14736.5418,", ",14736.5418,")
    metals.write_text("".join(lines))
    result = audit(root, substances=["bellorium"])
    by_check = {f.check: f.suggestion for f in result.findings}
    first, second = by_check["enthalpy-implausible"], by_check["slope-not-positive"]
    assert (first["kind"], first["record"], first["corrected"]) == (
        "log-base",
        "bellorium-l1",
        {"log_base": "10"},
    )
    assert (second["kind"], second["record"], second["corrected"]) == (
        "sign",
        "bellorium-s1",
        {"B": -14736.5418},
    )
    assert second["beside"] == "bellorium-l1" and "beside" not in first
    validate_report(json.loads(RENDERERS["json"](result)))  # and so does a second fix
    assert first["confidence"] == second["confidence"] >= 0.8
    for sug, other in ((first, "bellorium-s1"), (second, "bellorium-l1")):
        assert f"and beside it, in {other}," in sug["explanation"]
        assert "two slips, one in each record, weighed together" in sug["explanation"]
        assert "4 of the 4 error(s) and warning(s) on bellorium clear" in sug["explanation"]
    # the solid/liquid mismatch at the melting point needs both fixes: weighed together it
    # is explained, and carries the first, whose explanation names the second (it carried
    # neither)
    assert by_check["melting-point-mismatch"] == first


def test_one_fix_alone_is_held_where_a_second_record_has_a_problem_no_slip_explains(tmp_path):
    """The same bellorium, its solid's B made 0.5 % steeper instead (no single slip of the
    solid gives that back): the liquid's log-base fix leaves the pair's problem, the
    weighing of two fixes together has no second fix to weigh, and the fix stays held at
    even odds, saying why."""
    import shutil
    from pathlib import Path

    root = tmp_path / "db"
    shutil.copytree(Path(__file__).resolve().parents[2] / "sample_db", root)
    metals = root / "records" / "metals.csv"
    text = metals.read_text()
    assert text.count(",-14736.5418,") == 1
    metals.write_text(text.replace(",-14736.5418,", ",-14810.2245,"))
    result = audit(root, substances=["bellorium"])
    sugs = [f.suggestion for f in result.findings if f.suggestion]
    assert sugs and all(s["record"] == "bellorium-l1" and s["kind"] == "log-base" for s in sugs)
    assert all(s["confidence"] <= 0.5 for s in sugs)
    assert "weighed together" not in sugs[0]["explanation"]


def test_sample_table_every_planted_slip_has_the_right_suggestion():
    import csv
    from pathlib import Path

    root = Path(__file__).resolve().parents[2] / "sample_db"
    expected = {
        "bellorium": ("log-base", "bellorium-l1", {"log_base": "10"}),
        "cassine": ("pressure-unit", "cassine-s1", {"pressure_unit": "Torr"}),
        "dorvane": ("sign", "dorvane-s1", {"B": -9842.23737}),
        "elmsite": ("phase-swap", "elmsite-s1", {"phase": "solid"}),
        "galdrite": ("decimal-shift", "galdrite-l1", {"A": 10.7706297}),
        "lanthorne": ("sign", "lanthorne-l1", {"D": -0.001}),
        "selmane": ("temperature-unit", "selmane-l1", None),
        "pennarol": ("pressure-unit", "pennarol-l1", {"pressure_unit": "kPa"}),
    }
    no_slip = {"kestrium", "islingite", "norrane"}  # a disagreement, a range, a citation
    with open(root / "PLANTED.csv", encoding="utf-8") as fh:
        planted = {r["substance"] for r in csv.DictReader(fh)}
    assert planted == set(expected) | no_slip
    result = audit(root)
    for f in result.findings:
        if f.severity.rank < 1:
            continue
        if f.substance in no_slip:
            assert f.suggestion is None, f
        elif f.substance in expected:
            kind, rid, corrected = expected[f.substance]
            s = f.suggestion
            assert s is not None and s["kind"] == kind and s["record"] == rid, f
            assert s["confidence"] >= 0.8
            if corrected is not None:
                assert s["corrected"] == corrected
    assert all(f.suggestion is None for f in result.findings if f.substance not in expected)


def test_suggestion_contract_in_json():
    import json
    from pathlib import Path

    from vpaudit.report import RENDERERS

    data = json.loads(RENDERERS["json"](audit(Path(__file__).resolve().parents[2] / "sample_db")))
    sugs = [f["suggestion"] for f in data["findings"] if f["suggestion"]]
    assert sugs
    for s in sugs:
        assert set(s) >= {"kind", "record", "corrected", "confidence", "explanation"}
        assert s["kind"] in SLIP_KINDS and 0.0 <= s["confidence"] <= 1.0


def test_labelled_accuracy_does_not_regress():
    # a small labelled sample (tests/_support/slips.py; the full measurement is
    # benchmarks/diagnosis_accuracy.py): the top suggestion is the true slip in most flagged
    # cases, and confident suggestions are rarely wrong
    cases = labelled_cases(seed=7, per_kind=6, poling=6)
    result = audit_table(cases_table(cases))
    by_sub: dict[str, list] = {}
    for f in result.findings:
        by_sub.setdefault(f.substance, []).append(f)
    right = total = confident = confident_wrong = 0
    for c in cases:
        fs = [f for f in by_sub.get(c.substance, []) if f.severity.rank >= 1]
        if not fs:
            continue
        sug = next((f.suggestion for f in fs if f.suggestion), None)
        ok = _right(c, sug)
        if c.kind not in ("other", "clean"):
            total += 1
            right += ok
        if sug and sug["confidence"] >= 0.8:
            confident += 1
            confident_wrong += not ok
    assert total > 40
    assert right / total >= 0.85
    assert confident_wrong <= max(1, 0.05 * confident)


def test_a_stated_confidence_is_what_the_words_and_the_text_say():
    # The JSON's confidence is rounded down (never 1.0, never 0.8 for 0.7996), the text
    # shows it rounded down to two decimals, and "Almost certainly" leads exactly the
    # suggestions at 0.8 or above that are not held: what a reviewer reads, what
    # --min-confidence filters on and what the benchmarks count as confident agree.
    import re

    result = audit_table(cases_table(labelled_cases(seed=7, per_kind=6, poling=6)))
    sugs = [f.suggestion for f in result.findings if f.suggestion]
    assert len({s["confidence"] for s in sugs}) > 10
    for s in sugs:
        c = s["confidence"]
        assert 0.0 < c < 1.0 and c == round(c, 3)
        shown = re.search(r"confidence (\d\.\d\d)\]", s["explanation"]).group(1)
        assert float(shown) <= c < float(shown) + 0.01 + 1e-12
        if s["explanation"].startswith("Almost certainly"):
            assert c >= 0.8
        elif not s["explanation"].startswith("Possibly"):  # "Probably"
            assert c < 0.8


def _right(c: Case, sug) -> bool:
    if c.kind in ("other", "clean"):
        return sug is None
    if sug is None:
        return False
    if c.kind == "phase-swap":
        return sug["kind"] == "phase-swap"
    bad = next(r for r in c.records if r["id"] == sug["record"])
    return sug["record"] == c.record and reproduces(c.original, bad, sug)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.floats(-1e3, 1e3) | st.just(-np.inf), min_size=1, max_size=20))
def test_log_sum_exp_equals_scipy(values):
    """The posterior normaliser: equal to scipy.special.logsumexp (the reference library)."""
    from scipy.special import logsumexp

    from vpaudit.diagnose.scoring import _logsumexp

    x = np.array(values)
    assert _logsumexp(x) == pytest.approx(float(logsumexp(x)), rel=1e-12, abs=1e-12)


@given(
    st.sampled_from(["", "-", "+"]),
    st.integers(0, 10**6),
    st.one_of(st.just(""), st.integers(0, 10**4).map(lambda f: f".{f}")),
    st.one_of(st.just(""), st.integers(-30, 30).map(lambda e: f"e{e}")),
)
def test_a_transposition_is_a_number_a_source_could_print(sign, whole, frac, exp):
    """Each digit-transposition candidate swaps two adjacent, different digits of the
    mantissa, parses as a number, and never starts with a superfluous zero: a table's
    ``-300`` is not a source's ``-030`` mistyped (that reading would be a decimal shift
    wearing another name)."""
    import re

    from vpaudit.diagnose.candidates import _transpositions
    from vpaudit.readers.grammar import parse_number

    text = f"{sign}{whole}{frac}{exp}"
    for i, new in _transpositions(text):
        assert new[i] == text[i + 1] and new[i + 1] == text[i] and new[i] != new[i + 1]
        assert new[:i] == text[:i] and new[i + 2 :] == text[i + 2 :]
        assert "e" not in text[: i + 2]
        assert not re.match(r"[+-]?0\d", new), new
        assert parse_number(new) == float(new)  # the table grammar reads it
    assert [new for _, new in _transpositions("-300")] == []
    assert [new for _, new in _transpositions("0.05")] == ["0.50"]


def test_screening_scores_all_units_at_once_as_one_at_a_time():
    """The screening scores all candidates in one pass over columns; each unit's score must
    equal its own sum, computed here one piece at a time: evidence costs (z^2, or the soft-L1
    cost) capped, NaN as the cap, plus the floor of errors, warnings and impossible errors."""
    import math

    from vpaudit.diagnose.scoring import CALIBRATION
    from vpaudit.diagnose.variants import Screening

    rng = np.random.default_rng(3)
    pieces, floors = [], []
    for k in range(300):
        z = rng.normal(0.0, 3.0, int(rng.integers(0, 8)))
        if k % 7 == 0 and z.size:
            z[0] = np.nan
        pieces.append(np.abs(z))
        floors.append(tuple(int(x) for x in rng.integers(0, 3, 3)))
    bounds = np.concatenate([[0], np.cumsum([z.size for z in pieces])])
    screening = Screening(np.concatenate(pieces), bounds, np.array(floors), [b""] * len(pieces))
    for loss in ("quadratic", "soft-l1"):
        cal = dict(CALIBRATION, loss=loss, impossible_cost=7.5)  # unlike an error's
        cap = cal["component_cap"]

        def cost(x, loss=loss, cap=cap):
            if math.isnan(x):
                return cap
            c = x * x if loss == "quadratic" else 2.0 * (math.sqrt(1.0 + x * x) - 1.0)
            return min(c, cap)

        one_by_one = [
            sum(cost(float(x)) for x in z)
            + e * cal["error_cost"]
            + w * cal["warning_cost"]
            + i * cal["impossible_cost"]
            for z, (e, w, i) in zip(pieces, floors, strict=True)
        ]
        assert screening.scores(cal).tolist() == pytest.approx(one_by_one, rel=1e-12)


def test_a_compound_metadata_slip_is_named_with_all_its_parts():
    # Poling et al. Antoine constants of acetone (CAS 67-64-1; log10 P[Pa], T in K, via
    # chemicals) rewritten for log10 P in mmHg and theta in degC, as a handbook prints them,
    # and entered as ln P, Pa and K: three metadata slips at once, none of which alone
    # explains the record
    from compilations import poling_antoine
    from refdata import table_from_rows
    from slips import reproduces

    from vpaudit.auditing import audit_table
    from vpaudit.equations.convert import convert_record

    records, refs = poling_antoine()
    clean = next(r for r in records if r["substance"] == "67-64-1")
    conv = convert_record(clean, log_base="10", pressure_unit="mmHg", temperature_unit="degC")
    bad = dict(clean, log_base="e", **{c: conv[c] for c in ("A", "B", "C")})
    mine = [x for x in refs if x["substance"] == "67-64-1"]
    result = audit_table(table_from_rows([bad], mine))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert sug["kind"] == "metadata-combination"
    assert {"log_base", "pressure_unit", "temperature_unit"} <= set(sug["corrected"])
    assert reproduces(clean, bad, sug)
    assert sug["confidence"] < 0.8  # three readings at once: said, not asserted


def test_the_screening_bound_counts_each_check_at_the_policys_severity():
    # a lost minus sign on B of Alcock's solid copper: slope-not-positive (an error that
    # says the curve is impossible, by default) must count as a warning in the screening's
    # lower bound when the policy makes it one, else the bound exceeds what the checks
    # would report
    from vpaudit.checks._context import AuditContext
    from vpaudit.diagnose.variants import _hard_failures
    from vpaudit.policy import Policy

    recs, refs = alcock("Cu")
    bad = [dict(r, B=-r["B"]) if r["phase"] == "solid" else r for r in recs]
    table = table_from_rows(bad, refs)
    unit = np.zeros(1, dtype=np.int64)
    default = _hard_failures(AuditContext(table, Policy()), unit, 1)[0]
    lowered = _hard_failures(
        AuditContext(table, Policy("evaluated", {"slope-not-positive": {"severity": "warning"}})),
        unit,
        1,
    )[0]
    assert default[2] == 1  # counted as impossible, not as an ordinary error
    assert lowered[0] == default[0] and lowered[2] == 0 and lowered[1] == default[1] + 1


def test_the_screening_bound_counts_a_placeholder_lower_end_as_the_check_does():
    # Alcock's solid copper with its range written from 1 K ("no lower limit"): ln P falls
    # below -700 only toward the bottom, which pressure-not-finite reports as a warning
    # (a placeholder lower end), not as an impossible curve; the screening's bound must
    # count it the same way, else it would exceed what the checks report
    from vpaudit.checks._context import AuditContext
    from vpaudit.diagnose.variants import _hard_failures
    from vpaudit.policy import Policy

    recs, refs = alcock("Cu")
    bad = [dict(r, t_min=1.0) if r["phase"] == "solid" else r for r in recs]
    table = table_from_rows(bad, refs)
    found = [
        f.severity.value
        for f in audit_table(table, diagnose=False).findings
        if f.check == "pressure-not-finite"
    ]
    assert found == ["warning"]
    errors, warnings, impossible = _hard_failures(
        AuditContext(table, Policy()), np.zeros(1, dtype=np.int64), 1
    )[0]
    assert impossible == 0 and warnings >= 1


def test_the_screening_bound_counts_a_curve_flatter_than_any_real_one():
    """Landolt's 61828-31-7 (odd-CAS row, via chemicals; Antoine, ln P[Pa], 520-804 K)
    with B entered 1000 times too small (6254.51 -> 6.25451): the curve is flatter than any
    real one (slope-too-flat, an impossible error) and misses the CRC boiling point by 10.4
    in ln P. Its clean curve itself misses that boiling point by 0.15 (a warning), so the
    true fix leaves a capped residual like every other candidate; the screening, which did
    not count slope-too-flat, then ranked the true fix below ten candidates that keep the
    flat line, and the full checks never saw it (no suggestion). Now it is found."""
    from compilations import _complete, landolt

    records, refs = landolt()
    rid = "61828-31-7-lb-l"
    rec = next(r for r in records if r["id"] == rid)
    sub = rec["substance"]
    bad = dict(rec, B=float(Decimal(repr(rec["B"])).scaleb(-3)))
    recs = [bad if r["id"] == rid else r for r in records if r["substance"] == sub]
    recs = [r for r in recs if _complete(r)]
    result = audit_table(table_from_rows(recs, [r for r in refs if r["substance"] == sub]))
    assert {f.check for f in result.findings if f.severity.value == "error"} == {
        "boiling-point-mismatch",
        "slope-too-flat",
    }
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert (sug["kind"], sug["record"]) == ("decimal-shift", rid)
    assert sug["corrected"]["B"] == pytest.approx(rec["B"], rel=1e-12)


def test_a_fix_that_takes_a_curve_farther_from_a_distant_boiling_point_is_held():
    """Landolt's 126-84-1 as carried (odd-CAS row, via chemicals): C = +214 over 288-301 K,
    a curve flatter than any real one. Flipping the sign of C makes it plausible, but the
    fixed curve, extrapolated to the CRC boiling point 73 K above the range, misses it by
    1.44 in ln P where the curve as written missed by 0.31. That boiling point is only a
    note so far outside the range, yet the fix contradicts it: it is offered at even odds,
    not as almost certain (it rose to 0.98 once the screening counted flat curves)."""
    from compilations import _complete, landolt

    records, refs = landolt()
    sub = "126-84-1"
    recs = [r for r in records if r["substance"] == sub and _complete(r)]
    result = audit_table(table_from_rows(recs, [r for r in refs if r["substance"] == sub]))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert (sug["kind"], sug["corrected"]) == ("sign", {"C": pytest.approx(-214.382)})
    assert sug["confidence"] == 0.5
    assert "boiling-point-mismatch: difference_lnP 0.313 -> 1.44" in sug["explanation"]


def test_an_unrelated_problem_does_not_hide_a_clear_slip_and_is_named():
    # Alcock's solid copper with coefficients for mmHg marked Pa, and the CRC enthalpy of
    # fusion (13.26 kJ/mol) doubled: a second problem the slip does not explain. A candidate
    # whose curves cross must meet that reference; the records as written cannot even be
    # compared with it, which counts as broken evidence too, so the slip is still found,
    # and the suggestion names what it leaves unexplained
    import math

    recs, refs = alcock("Cu")
    bad = [
        dict(r, A=r["A"] - math.log(133.322387415)) if r["phase"] == "solid" else r for r in recs
    ]
    refs = [
        dict(r, value=2.0 * r["value"]) if r["quantity"] == "enthalpy_of_fusion" else r
        for r in refs
    ]
    sug, _ = suggestion_for(bad, refs, "Cu-solid")
    assert sug is not None and sug["kind"] == "pressure-unit" and sug["confidence"] >= 0.8
    solid = next(r for r in recs if r["phase"] == "solid")
    assert reproduces(solid, next(r for r in bad if r["phase"] == "solid"), sug)
    unexplained = "which it does not explain: fusion-enthalpy-mismatch (Cu-liquid, Cu-solid)"
    assert unexplained in sug["explanation"]


def test_an_error_no_single_slip_explains_does_not_silence_the_fix_of_one_that_does():
    """Perry's liquid of CAS 590-67-0 as carried (via chemicals, power-term form, ln P[Pa]):
    as written it misses the CRC_ORG normal boiling point (428.15 K) beyond tolerance, a
    problem of the record or of that reference that no candidate clears. With the sign of B
    lost on top (-10682 -> 10682) the record also draws slope-not-positive, which the sign
    fix clears. The diagnosis required a fix to clear every error on its record, so it said
    nothing; now the fix is offered, held at even odds, and the error it leaves is named."""
    from compilations import perry

    records, refs = perry()
    rid = "590-67-0-pe"
    rec = next(r for r in records if r["id"] == rid)
    bad = dict(rec, B=-rec["B"])
    refs = [r for r in refs if r["substance"] == rec["substance"]]
    result = audit_table(table_from_rows([rec], refs))
    before = {(f.check, f.severity.value) for f in result.findings}
    assert ("boiling-point-mismatch", "error") in before  # the record's own problem
    sug, flagged = suggestion_for([bad], refs, rid)
    assert flagged and sug is not None
    assert (sug["kind"], sug["corrected"]) == ("sign", {"B": rec["B"]})
    assert sug["confidence"] == 0.5
    assert "which it does not explain: boiling-point-mismatch (590-67-0-pe)" in sug["explanation"]
    assert "No single slip explains the error it leaves on 590-67-0-pe" in sug["explanation"]
    # the fix is shown on the finding it clears, not on the one it leaves
    result = audit_table(table_from_rows([bad], refs))
    carries = {f.check: f.suggestion is not None for f in result.findings}
    assert carries == {"slope-not-positive": True, "boiling-point-mismatch": False}


def test_a_likelier_fix_that_leaves_its_record_broken_gives_way_to_one_that_does_not():
    """Landolt's 1-tetradecanol (112-72-1, odd-CAS row, via chemicals) with its constants
    for bar marked Pa (A lowered by ln 1e5). The log-base reading is likelier on its prior
    (one hypothesis against one per pressure unit) and clears the entropy error, but leaves
    the record missing its CRC_ORG normal boiling point by far: it does not explain its
    record. The bar and atm readings clear every error (the record as carried misses that
    boiling point by 0.19 in ln P, within how far evaluations differ: a warning). The
    diagnosis said nothing; now it offers the likeliest fix that explains its record, at the
    low confidence its share of the evidence gives."""
    from compilations import _complete, landolt

    records, refs = landolt()
    rec = next(r for r in records if r["id"] == "112-72-1-lb-l" and _complete(r))
    bad = dict(rec, A=rec["A"] - math.log(1e5))
    refs = [r for r in refs if r["substance"] == rec["substance"]]
    sug, flagged = suggestion_for([bad], refs, rec["id"])
    assert flagged and sug is not None
    assert sug["kind"] == "pressure-unit" and sug["corrected"]["pressure_unit"] in ("bar", "atm")
    assert sug["confidence"] < 0.5
    # it says which likelier reading it passed over, and why
    passed = "A likelier reading is not suggested, since it leaves an error on 112-72-1-lb-l: "
    assert passed + "the coefficients are for log10 P" in sug["explanation"]
    result = audit_table(table_from_rows([bad], refs))
    log_base = [f for f in result.findings if f.suggestion and f.suggestion["kind"] == "log-base"]
    assert not log_base
    # the close runner-up (the other of bar and atm) is shown rounded down, as the fix's
    # own figure is, never above it (it read "confidence 0.07" beside "runner-up (0.08)")
    shown = float(re.search(r"confidence (\d\.\d\d)\]", sug["explanation"]).group(1))
    runner = float(re.search(r"Close runner-up \((\d\.\d\d)\)", sug["explanation"]).group(1))
    assert runner <= shown


def test_an_anchor_whose_enthalpy_misses_weighs_its_entropy_less():
    # acetic acid (Landolt's liquid equation, odd CAS, via chemicals) with its coefficients
    # for atm marked Pa; the only witness is the CRC standard data at 298.15 K. Its vapour
    # associates, so even the clean curve misses the standard dH_vap(298) by -18 % (beyond
    # the anchor's allowance) and dS0 by -13.5 J/(mol K): the entropy, which rests on the
    # same extrapolation, must not make a confident choice between units (it put MPa at a
    # stated 0.81 before); the true unit stays among the two best
    from compilations import landolt

    records, _ = landolt()
    rec = next(r for r in records if r["substance"] == "64-19-7" and r["phase"] == "liquid")
    bad = dict(rec, A=rec["A"] - float(np.log(101325.0)))
    refs = anchor_rows("64-19-7", "64-19-7", "liquid")
    assert len(refs) == 2
    sug, flagged = suggestion_for([bad], refs, rec["id"])
    assert flagged and sug is not None and sug["confidence"] < 0.8
    named = {sug["corrected"].get("pressure_unit")}
    named.add(sug.get("runner_up", {}).get("corrected", {}).get("pressure_unit"))
    assert "atm" in named


def test_a_fix_smaller_than_sources_disagree_is_held_at_even_odds():
    """Hexadecane (CAS 544-76-3) as the compilations carry it (via chemicals): Landolt's
    solid (odd-CAS row) against Perry's and Poling's Wagner liquids misses the CRC melting
    point by 0.08-0.12 in ln P. Transposing two digits of the solid's C (-48.15 -> -48.51)
    would clear it, but moves the curve by 0.07 in ln P, less than independent sources of
    one liquid disagree at their 90th percentile (0.10, measured by ``benchmarks/calibrate.py
    --scatter``): the fix is offered as possible, not as almost certain (it was 0.996)."""
    from compilations import _complete, together

    records, refs = together()
    sub = "544-76-3"
    recs = [r for r in records if r["substance"] == sub and _complete(r)]
    result = audit_table(table_from_rows(recs, [r for r in refs if r["substance"] == sub]))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert (sug["kind"], sug["record"], sug["corrected"]) == (
        "digit-transposition",
        "544-76-3-lb-s",
        {"C": -48.51},
    )
    assert sug["confidence"] == 0.5
    assert sug["explanation"].startswith("Possibly")
    assert "cannot be told from such a disagreement" in sug["explanation"]


def test_the_source_scatter_is_what_the_compilations_show():
    """SOURCE_SCATTER is the 90th percentile of how far two liquid equations of one substance
    in the compilations (via chemicals) disagree over their common range (1,081 pairs: 0.105
    when it was set)."""
    from compilations import source_gaps

    from vpaudit.diagnose.scoring import SOURCE_SCATTER

    gaps = source_gaps()
    assert len(gaps) > 1000
    p90 = float(np.percentile(gaps, 90))
    assert abs(p90 - SOURCE_SCATTER) < 0.02, p90


def test_a_fix_that_moves_its_record_farther_from_the_other_sources_is_held():
    """2-Octanol (CAS 123-96-6) as the compilations carry it (via chemicals): McGarry's
    Wagner 3,6 equation misses the YAWS normal boiling point (452.95 K) by 0.44 in ln P and
    stands 0.94 in ln P from the median of Poling's Antoine and Wagner equations. Swapping its
    C and D would meet the boiling point but move it to 1.13 from the other two sources: the
    sources-disagree evidence is beyond its cap either way, so only the comparison of the
    distances shows that the fix contradicts them. It was offered at 0.98; it is held at
    even odds, and the explanation says why."""
    from compilations import _complete, together

    records, refs = together()
    sub = "123-96-6"
    recs = [r for r in records if r["substance"] == sub and _complete(r)]
    result = audit_table(table_from_rows(recs, [r for r in refs if r["substance"] == sub]))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert (sug["kind"], sug["record"]) == ("coefficient-swap", "123-96-6-mg")
    assert sug["confidence"] == 0.5
    assert sug["explanation"].startswith("Possibly")
    assert "stands farther from an independent witness" in sug["explanation"]
    assert "sources-disagree: difference_lnP 0.937 -> 1.13" in sug["explanation"]


def test_a_fix_that_brings_its_record_back_to_its_sources_keeps_its_confidence():
    """The same liquids of 2-octanol with a slip planted on Poling's Wagner equation (its
    log base marked 10 where the constants are natural): the fix brings the record back to
    the other sources, so nothing holds it, and it stays almost certain."""
    from compilations import _complete, together

    records, refs = together()
    sub = "123-96-6"
    recs = [dict(r) for r in records if r["substance"] == sub and _complete(r)]
    for r in recs:
        if r["id"] == "123-96-6-pw":
            r["log_base"] = "10"
    result = audit_table(table_from_rows(recs, [r for r in refs if r["substance"] == sub]))
    # the substance's fix (McGarry's equation may carry a second, possible, one beside it)
    sug = next(
        f.suggestion for f in result.findings if f.suggestion and "beside" not in f.suggestion
    )
    assert (sug["kind"], sug["record"]) == ("log-base", "123-96-6-pw")
    assert sug["confidence"] >= 0.8
    assert "farther from an independent witness" not in sug["explanation"]


def test_a_fix_that_leaves_a_flat_line_is_disqualified():
    """Landolt's 1551-27-5 (odd CAS, via chemicals: an Antoine liquid with A 25.02, B 5746,
    C +5.1) with B entered 1000 times too large. Swapping B and C clears every error of the
    slipped record but leaves ln P = 25.02 - 5.1/(T + 5.7e6): a flat line at 740 bar whose
    pressure level alone falls in the entropy band, with dH near 1e-7 J/mol. It was offered
    at 0.91. slope-too-flat makes that an error the fix creates, so it is no fix, and the
    decimal shift of B is the top suggestion."""
    from compilations import _complete, landolt

    records, refs = landolt()
    sub = "1551-27-5"
    recs = [dict(r, B=r["B"] * 1000) for r in records if r["substance"] == sub and _complete(r)]
    result = audit_table(table_from_rows(recs, [r for r in refs if r["substance"] == sub]))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert sug["kind"] == "decimal-shift"
    assert abs(sug["corrected"]["B"] - 5746.0597) < 0.01


def test_a_fix_that_leaves_a_curve_flatter_than_any_real_one_is_held():
    """An invented liquid of a quantum fluid's range (15-25 K, where slope-flatter-than-real
    does not apply), ln P = 15.8 - 100/T, entered as log10 coefficients marked ln: read as
    log10 again, the curve is 2.3 times steeper and clears its error, but with d ln P/d ln T
    4.0 at 25 K it stays below the flattest real curve (4.4, helium-3 near its critical
    point, Poling via chemicals): the reading is held at even odds with the reason."""
    import math

    rec = dict(
        id="x-l", substance="x", phase="liquid", form="antoine", log_base="e",
        pressure_unit="Pa", temperature_unit="K", A=15.8 / math.log(10),
        B=100.0 / math.log(10), C=0.0, t_min=15.0, t_max=25.0, source="case",
    )  # fmt: skip
    result = audit_table(table_from_rows([rec]))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert sug["kind"] == "log-base" and sug["confidence"] == 0.5
    assert "still flatter than any real vapour-pressure curve" in sug["explanation"]


def test_a_record_no_single_slip_makes_a_real_curve_gets_no_fix():
    """Landolt's 767-09-9 as chemicals carries it (odd CAS): an Antoine liquid with C = 0 and
    B = 392 K, so dH = 3.3 kJ/mol at 335-414 K, d ln P/d ln T = 0.95. Read as log10 it is
    2.2 there, flatter than any real curve above 45 K (slope-flatter-than-real): that reading
    makes an error and is out. Read as constants in degC, it puts its pole at 0 degC, 0.82 of
    the range's start, nearer than for 99 % of real Antoine equations: too rare to suggest.
    Nothing is known of the substance that could confirm either; no fix is offered (the
    degC reading, its rarity not weighed, would be stated at 0.97)."""
    from compilations import _complete, landolt

    records, refs = landolt()
    sub = "767-09-9"
    recs = [r for r in records if r["substance"] == sub and _complete(r)]
    result = audit_table(table_from_rows(recs, [r for r in refs if r["substance"] == sub]))
    assert result.summary["error"] >= 2  # its entropy and its slope
    assert not [f for f in result.findings if f.suggestion]


def test_the_low_pressure_liquid_prior_is_what_real_equations_show():
    """Real liquid equations whose range ends below 800 K almost never stay below 1 Pa (29 of
    4,034 when the prior was set, all Landolt's); above it, liquid metals do (Alcock's Pa,
    Th and Zr), so the prior stops there (compilations and Alcock via chemicals)."""
    import math

    from compilations import low_pressure_liquids

    from vpaudit.diagnose.scoring import _EFFUSION_LIQUIDS, _LIQUID_BELOW_1_PA

    got = low_pressure_liquids(_EFFUSION_LIQUIDS)
    n, k = (sum(v[i] for v in got.values()) for i in (0, 1))
    assert n > 4000 and abs(math.log(k / n) - _LIQUID_BELOW_1_PA) < 0.3, (k, n)
    alcock_hot = got["Alcock et al. (1984)"]
    assert alcock_hot[3] / alcock_hot[2] > 0.05  # not rare among liquid metals


def test_the_antoine_pole_priors_are_what_real_equations_show():
    """How near its range a real Antoine equation puts its pole (theta = -C): above 0.85
    t_min for 9 of Landolt's 3,355 odd-CAS equations (0.27 %), above 0.63 t_min for 34
    (1.0 %), for none of Poling's 325 (compilations via chemicals). The temperature-unit
    prior of a reading that would put the pole there is that rarity."""
    import math

    from compilations import _complete, landolt, poling_antoine

    from vpaudit.diagnose.candidates import _POLE_NEAR_RANGE, _POLE_NEARER_THAN_MOST

    def share(records, above):
        ratios = [
            -r["C"] / r["t_min"]
            for r in records
            if _complete(r) and r["form"] == "antoine" and r["t_min"] > 0
        ]
        return sum(x > above for x in ratios) / len(ratios)

    landolt_records = landolt()[0]
    assert abs(math.log(share(landolt_records, 0.85)) - _POLE_NEAR_RANGE) < 0.15
    assert abs(math.log(share(landolt_records, 0.63)) - _POLE_NEARER_THAN_MOST) < 0.15
    assert share(poling_antoine()[0], 0.63) == 0.0


def test_a_fix_that_leaves_a_liquid_below_1_pa_is_not_preferred():
    """Landolt's tetraethylhydrazine liquid (CAS 4267-00-9, via chemicals:
    ln(P/Pa) = A - B/(T + C), 322-367 K, about 9 kPa at 343 K) entered with the constants of
    a source in bar marked Pa (A lowered by ln 1e5). Alone (no reference, no partner), the
    entropy band is all that objects, and reading the coefficients as log10 instead (a
    common slip) brings the entropy into the band as well: a liquid at 0.004 Pa near 343 K
    with dH 77 kJ/mol. It was the top suggestion (0.68). Real liquid equations below 800 K
    almost never stay below 1 Pa, so that reading is now far less likely: a pressure unit is
    on top, with a modest confidence, as the evidence leaves the unit open. bar and MPa tie
    exactly (the entropy band is flat inside): the first made (MPa) is on top on every numpy
    (a stable sort; the order of a tie used to follow numpy's sort, bar with numpy 2, MPa
    with 1.26), and the true bar is named as its close runner-up."""
    import math

    from compilations import landolt

    records, _ = landolt()
    rec = dict(next(r for r in records if r["id"] == "4267-00-9-lb-l"))
    rec["A"] = float(rec["A"]) - math.log(1e5)
    result = audit_table(table_from_rows([rec]))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert sug["kind"] == "pressure-unit", sug
    assert sug["corrected"] == {"pressure_unit": "MPa"}
    assert sug["runner_up"]["corrected"] == {"pressure_unit": "bar"}
    assert sug["confidence"] < 0.8
    validate_report(json.loads(RENDERERS["json"](result)))  # a runner-up meets the schema


def test_a_liquid_metal_below_1_pa_keeps_a_confident_fix():
    """Alcock's liquid zirconium (2127-2500 K, below 1 Pa throughout) with the digit
    transposition 1.3555 -> 1.5355 in C: liquid metals are routinely measured that low,
    and the fix stays certain (it lost its suggestion when the prior had no bound)."""
    recs, refs = alcock("Zr")
    liquid = next(r for r in recs if r["phase"] == "liquid")
    assert liquid["C"] == 1.3555 and liquid["t_min"] > 800.0
    liquid["C"] = 1.5355
    sug, _ = suggestion_for(recs, refs, liquid["id"])
    assert sug is not None and sug["kind"] == "digit-transposition", sug
    assert sug["corrected"] == {"C": 1.3555} and sug["confidence"] >= 0.8


def test_the_usual_exponents_of_a_power_term_are_what_perry_uses():
    """Perry's table 2-8 (via chemicals): E of the D T^E term is 1, 2 or 6 in 338 of its
    340 equations (5.7 and 0 in one each): the premise of the prior of a fix that would
    leave another exponent."""
    from collections import Counter

    from compilations import perry

    from vpaudit.diagnose.candidates import _EXPONENT_UNUSUAL, _USUAL_EXPONENTS

    got = Counter(r["E"] in _USUAL_EXPONENTS for r in perry()[0])
    assert got[True] + got[False] == 340 and got[False] <= 3
    assert abs(_EXPONENT_UNUSUAL - np.log(got[False] / 340)) < 0.5


def test_an_impossible_curve_is_far_likelier_from_a_slip_than_from_anything_else():
    """The premise of the diagnosis's cost of an impossible curve: of the labelled set's
    flagged single slips, 141 draw an error that says the curve is impossible and 332 other
    errors only; of the real compilations' flagged substances with no slip planted, 8 and
    198 (tests/_support/compilations.py ``impossible_errors``: Alcock, Poling, Landolt's
    odd-CAS rows, McGarry and Perry via chemicals). The measured odds must stay near those
    the cost was derived from."""
    import math

    from compilations import impossible_errors

    from vpaudit.diagnose.scoring import _IMPOSSIBLE_ODDS, CALIBRATION

    got = impossible_errors()
    (a, b), (c, d) = got["slips"], got["no slip"]
    assert a + b > 400 and c + d > 150, got
    assert c / (c + d) < 0.1  # rare on real equations as published
    assert abs(math.log((a / b) / (c / d)) - math.log(_IMPOSSIBLE_ODDS)) < 0.4, got
    assert CALIBRATION["impossible_cost"] == pytest.approx(
        CALIBRATION["error_cost"] + 2 * CALIBRATION["temperature"] * math.log(_IMPOSSIBLE_ODDS),
        abs=0.01,
    )


def test_a_lost_sign_that_leaves_an_impossible_curve_is_suggested_alone():
    """Landolt's liquid of CAS 13081-67-9 (via chemicals: ln(P/Pa) = A - B/(T + C), B = 5902
    K, 342-459 K) with the minus sign of its 1/T term lost, alone (no reference, no partner):
    the curve falls with temperature, which no real equation does. Undoing the sign clears
    it and nothing else does, yet with an error weighed like any other the records as
    written ("no single slip") outweighed it and nothing was suggested."""
    from compilations import landolt

    records, _ = landolt()
    rec = dict(next(r for r in records if r["id"] == "13081-67-9-lb-l"))
    original = float(rec["B"])
    rec["B"] = -original
    result = audit_table(table_from_rows([rec]))
    assert [f.check for f in result.findings if f.severity.value == "error"] == [
        "slope-not-positive"
    ]
    sug = next((f.suggestion for f in result.findings if f.suggestion), None)
    assert sug is not None and sug["kind"] == "sign", sug
    assert sug["corrected"] == {"B": original}


def test_an_impossible_error_costs_more_than_another_in_a_full_outcome():
    """A verified candidate's misfit counts an error of a check registered as impossible at
    ``impossible_cost``, another error at ``error_cost``, a warning at ``warning_cost``."""
    from vpaudit.checks._registry import REGISTRY, Severity
    from vpaudit.diagnose.scoring import CALIBRATION
    from vpaudit.diagnose.variants import _Outcome

    assert REGISTRY["slope-not-positive"].impossible
    assert not REGISTRY["boiling-point-mismatch"].impossible

    class F:  # the two attributes the misfit reads
        def __init__(self, check, severity):
            self.check, self.severity = check, severity

    found = [
        F("slope-not-positive", Severity.error),
        F("boiling-point-mismatch", Severity.error),
        F("slope-not-positive", Severity.warning),  # lowered by a policy: a warning
        F("reference-not-used", Severity.note),
    ]
    cal = dict(CALIBRATION, impossible_cost=11.0, error_cost=3.0, warning_cost=1.0)
    assert _Outcome(found, np.empty(0)).score(cal) == 15.0


def test_an_exponent_a_hundred_times_too_large_is_shifted_back_not_dropped():
    """Perry's isopropanol (67-63-0, via chemicals: ln(P/Pa) = A + B/T + C ln T + D T^E with
    E = 6) entered with E = 600. Losing the term entirely (E = -600, or 0.6 with the tiny D)
    fits its CRC boiling point nearly as well, and the sign fix, one variant against six
    decimal shifts, was offered as certain (0.99). No real equation of the form uses such an
    exponent: the decimal shift back to 6 is the suggestion."""
    from compilations import perry

    records, refs = perry()
    rec = dict(next(r for r in records if r["substance"] == "67-63-0"))
    assert rec["E"] == 6.0
    rec["E"] = 600.0
    sug, _ = suggestion_for([rec], [r for r in refs if r["substance"] == "67-63-0"], rec["id"])
    assert sug is not None and sug["kind"] == "decimal-shift", sug
    assert sug["corrected"] == {"E": 6.0}


def test_a_fix_that_makes_a_record_match_another_source_says_so():
    """Two liquid records of one invented substance (not real properties), the second typed
    in with ln for log10 (the water-like Antoine constants 8.07131, 1730.63, 233.426 in
    log10 mmHg and degC). The fix of its log base makes it the first record's curve: the
    explanation says that record agrees (and the table then holds one equation twice). A
    third record of another source (1 % higher pressures) is not named: it is not the same
    curve."""
    base = {
        "substance": "aqualine", "phase": "liquid", "form": "antoine", "log_base": "10",
        "pressure_unit": "mmHg", "temperature_unit": "degC", "A": 8.07131, "B": 1730.63,
        "C": 233.426, "t_min": 1.0, "t_max": 100.0,
    }  # fmt: skip
    recs = [
        dict(base, id="aq-1", source="invented handbook"),
        dict(base, id="aq-2", log_base="e", source="invented, typed in"),
        dict(base, id="aq-3", A=8.07131 + 0.00432, source="invented, another lab"),
    ]
    result = audit_table(table_from_rows(recs, []))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert (sug["kind"], sug["record"]) == ("log-base", "aq-2")
    assert "gives the same curve over the same range as aq-1, which agrees" in sug["explanation"]
    assert "aq-3" not in sug["explanation"]


@given(
    base=st.sampled_from(["e", "10"]),
    unit=st.sampled_from(["Pa", "kPa", "bar", "mmHg", "psi"]),
    tunit=st.sampled_from(["K", "degC", "degF"]),
)
@settings(max_examples=30, deadline=None)
def test_metadata_combinations_are_every_pairing_of_fixes_of_different_kinds(base, unit, tunit):
    """candidates_for's metadata combinations, made kind by kind, are exactly the pairings
    and triples of the single metadata fixes (log base, pressure unit, temperature unit)
    that change different kinds, in the order of all the pairings (the order breaks ties
    between equal fixes, so it is part of the output). An invented Antoine liquid."""
    from itertools import combinations

    from vpaudit.diagnose.candidates import candidates_for

    rec = {
        "id": "r", "phase": "liquid", "form": "antoine", "log_base": base,
        "pressure_unit": unit, "temperature_unit": tunit, "A": 9.1, "A_text": "9.1",
        "B": 1700.0, "B_text": "1700", "C": -40.0 if tunit == "K" else 230.0,
        "C_text": "-40" if tunit == "K" else "230", "t_min": 280.0, "t_max": 380.0,
    }  # fmt: skip
    if tunit != "K":
        rec["t_min"], rec["t_max"] = 10.0, 100.0
    got = candidates_for(rec, 0, [])
    single = [c for c in got if c.kind in ("log-base", "pressure-unit", "temperature-unit")]
    expected = [
        " and ".join(c.label for c in combo)
        for n in (2, 3)
        for combo in combinations(single, n)
        if len({c.kind for c in combo}) == n
    ]
    assert [c.label for c in got if c.kind == "metadata-combination"] == expected
    assert expected  # a log base and a pressure unit at least


def _propane_for_mmhg_marked_pa():
    """Poling et al.'s Antoine equation of propane (via chemicals), rewritten for mmHg and
    marked Pa: a lone liquid whose entropy of vaporization falls 40.7 J/(mol K) (R ln
    133.3) below where it was, out of its plausible band."""
    from chemicals.vapor_pressure import Psat_data_AntoinePoling as ant

    from vpaudit.equations.convert import convert_record

    rec = poling_record(ant.loc["74-98-6"], "propane-l", "propane")
    conv = convert_record(rec, pressure_unit="mmHg")
    return rec, dict(rec, A=conv["A"], B=conv["B"], C=conv["C"])


def test_readings_that_each_clear_the_errors_are_named_when_none_is_singled_out():
    # with no witness but its own entropy band, the mmHg reading cannot be told from kPa,
    # mbar, psi or a degC range: no fix is suggested, yet the readings and what the table
    # lacks are said (and the true one is among them)
    from compilations import references

    from vpaudit.report import RENDERERS
    from vpaudit.report.html import render_report

    rec, bad = _propane_for_mmhg_marked_pa()
    table = table_from_rows([bad], [])
    result = audit_table(table)
    flagged = [f for f in result.findings if f.severity.rank >= 1]
    assert flagged and all(f.suggestion is None for f in flagged)
    (lead,) = result.summary["undecided"]
    validate_report(json.loads(RENDERERS["json"](result)))  # schemas/report.schema.json
    assert lead["substance"] == "propane" and lead["record"] == "propane-l"
    assert len(lead["fixes"]) >= 2 and lead["share"] >= 0.5
    assert any(reproduces(rec, bad, fix, tol=1e-6) for fix in lead["fixes"])
    assert "normal boiling point" in lead["lacking"]
    text = RENDERERS["text"](result)
    assert "No fix is suggested" in text and "normal boiling point" in text
    assert text.count("No fix is suggested") == 1
    assert "**Diagnosis:** No fix is suggested" in RENDERERS["markdown"](result)
    page = render_report(result, table, plots=False)
    assert "none singled out; " in page and page.count("No fix is suggested") == 1
    # the SARIF log says it once, in the first error's message and as a property, with no
    # fix entry (a lead, not a fix), and stays a valid SARIF 2.1.0 log
    log = json.loads(RENDERERS["sarif"](result))
    validate(log)
    said = [r for r in log["runs"][0]["results"] if "undecided" in r["properties"]]
    assert len(said) == 1 and said[0]["level"] == "error" and "fixes" not in said[0]
    assert said[0]["properties"]["undecided"] == lead
    assert "\n\nDiagnosis: No fix is suggested" in said[0]["message"]["text"]
    # the CSV report carries it once, in its own column, beside an empty suggestion cell
    rows = list(csv.DictReader(io.StringIO(RENDERERS["csv"](result))))
    leads = [r for r in rows if r["undecided"]]
    assert len(leads) == 1 and leads[0]["severity"] == "error" and not leads[0]["suggestion"]
    assert json.loads(leads[0]["undecided"]) == lead
    # with the CRC normal boiling point (chemicals, method CRC_ORG or the next that knows
    # it) the readings are told apart: the pressure unit is suggested, nothing is left open
    refs = [x for x in references("74-98-6", "propane", True, False) if "Tb" in x["source"]]
    assert refs
    result = audit_table(table_from_rows([bad], refs))
    sug = next(f.suggestion for f in result.findings if f.suggestion)
    assert sug["kind"] == "pressure-unit" and reproduces(rec, bad, sug, tol=1e-6)
    assert "undecided" not in result.summary
