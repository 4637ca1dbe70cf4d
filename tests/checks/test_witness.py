"""Which record of a disagreeing pair is the likelier culprit, from a witness that concerns
one record alone (vpaudit.checks.witness, auditing.point_at_suspects).

Reference data: Alcock, Itkin & Horrigan (1984) copper, solid and liquid (chemicals), with
the CRC Handbook melting point, enthalpy of fusion and normal boiling point (chemicals,
method CRC_INORG: 2833.15 K).
"""

from __future__ import annotations

import pytest
from refdata import CRC, alcock_pairs, table_from_rows

from vpaudit.auditing import audit_table


@pytest.fixture(scope="module")
def copper():
    from chemicals import Tb

    recs, refs = alcock_pairs()
    recs = [r for r in recs if r["substance"] == "Cu"]
    refs = [r for r in refs if r["substance"] == "Cu"]
    tb = {
        "substance": "Cu",
        "quantity": "normal_boiling_point",
        "value": float(Tb("7440-50-8", method="CRC_INORG")),
        "unit": "K",
        "source": CRC,
    }
    return recs, refs, tb


def _solid_off(recs):
    # the solid 35 % high in pressure (A + 0.3): the pair disagrees at the melting point,
    # and nothing concerns the solid alone
    return [dict(r, A=r["A"] + 0.3) if r["phase"] == "solid" else r for r in recs]


def test_the_pair_finding_names_the_record_no_witness_backs(copper):
    recs, refs, tb = copper
    result = audit_table(table_from_rows(_solid_off(recs), [*refs, tb]), diagnose=False)
    (f,) = [f for f in result.findings if f.check == "melting-point-mismatch"]
    assert f.evidence["likely_culprit"] == "Cu-solid"
    assert "Cu-liquid meets its reference normal boiling point (within" in f.message
    assert "Cu-solid has no such witness and is the likelier culprit" in f.message
    solid_line = next(i for i, r in enumerate(recs, 1) if r["phase"] == "solid")  # rows from 1
    assert f.line == solid_line


def test_without_a_witness_no_culprit_is_named(copper):
    recs, refs, _ = copper
    result = audit_table(table_from_rows(_solid_off(recs), refs), diagnose=False)
    (f,) = [f for f in result.findings if f.check == "melting-point-mismatch"]
    assert "likely_culprit" not in f.evidence and "culprit" not in f.message


def test_a_witness_that_fails_backs_nothing(copper):
    # the liquid off instead (A + 0.3): it misses its boiling point by 0.3 in ln P, more
    # than the check's own tolerance (0.09), so it is no witness and no culprit is named --
    # though 0.3 is within how far a curve extrapolated 35 % beyond its range (1850 K to
    # 2833 K) drifts, so the boiling point alone draws no finding
    recs, refs, tb = copper
    off = [dict(r, A=r["A"] + 0.3) if r["phase"] == "liquid" else r for r in recs]
    result = audit_table(table_from_rows(off, [*refs, tb]), diagnose=False)
    (f,) = [f for f in result.findings if f.check == "melting-point-mismatch"]
    assert "likely_culprit" not in f.evidence and "culprit" not in f.message
    assert not [g for g in result.findings if g.check == "boiling-point-mismatch"]


@pytest.mark.parametrize("offset", [0.3, 3.0])
def test_the_standard_data_back_a_solid_only_as_finely_as_their_allowance(copper, offset):
    # CRC standard data of copper's sublimation at 298.15 K (tests/_support/anchors.py,
    # chemicals.reaction) back the solid, but only within the entropy allowance, 15 J/(mol K)
    # or 1.8 in ln P: a liquid off by 0.3 in ln P is not pointed at, one off by 3.0 is (it
    # has no boiling point here), and the finding moves to its line
    from anchors import anchor_rows

    recs, refs, _ = copper
    off = [dict(r, A=r["A"] + offset) if r["phase"] == "liquid" else r for r in recs]
    result = audit_table(
        table_from_rows(off, [*refs, *anchor_rows("7440-50-8", "Cu", "solid")]), diagnose=False
    )
    (f,) = [f for f in result.findings if f.check == "melting-point-mismatch"]
    if offset < 1.8:
        assert "likely_culprit" not in f.evidence
        return
    assert f.evidence["likely_culprit"] == "Cu-liquid"
    assert "Cu-solid meets both standard values at 298.15 K (within 1.8" in (f.message)
    assert f.line == next(i for i, r in enumerate(recs, 1) if r["phase"] == "liquid")


def test_two_sources_name_the_one_whose_heat_capacity_change_is_positive():
    """n-butane (CAS 106-97-8) as McGarry (1983) and Poling et al. (2001) give it in Wagner
    form (chemicals), with the CRC boiling point and critical constants (chemicals): with
    the sign of Poling's D term lost, the curves part at the low end of the range; both
    still meet the boiling point, which cannot decide, but the changed curve implies a
    positive dCp of vaporization there and McGarry's does not, so sources-disagree names
    it (a warning still: a third source decides). As published, the two agree."""
    from compilations import references, wagner

    records, _ = wagner()
    pair = [r for r in records if r["substance"] == "106-97-8"]
    assert [r["id"] for r in pair] == ["106-97-8-mg", "106-97-8-pw"]
    refs = references("106-97-8", "106-97-8", True, False)
    clean = audit_table(table_from_rows(pair, refs))
    assert not [f for f in clean.findings if f.check == "sources-disagree"]
    slipped = [pair[0], dict(pair[1], D=-pair[1]["D"])]
    found = audit_table(table_from_rows(slipped, refs)).findings
    (f,) = [f for f in found if f.check == "sources-disagree"]
    assert f.severity.value == "warning"
    assert "no reference decides, but 106-97-8-pw implies a positive dCp" in f.message
    (hc,) = [g for g in found if g.check == "heat-capacity-sign"]
    assert hc.records == ("106-97-8-pw",)
    assert f.line == hc.line  # the finding stands at the suspect's line
