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
