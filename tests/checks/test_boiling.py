"""The normal boiling point as a witness, on the Landolt-Boernstein Antoine constants (odd-CAS
rows, via chemicals; tests/_support/compilations.py) against the normal boiling points
chemicals carries (methods CRC_ORG, YAWS, COMMON_CHEMISTRY, each named where used)."""

import numpy as np
import pytest
from chemicals import Tb
from compilations import _complete, landolt, odd_cas
from refdata import invented_antoine, table_from_rows

from vpaudit.auditing import audit_table
from vpaudit.checks._context import LN_P_STANDARD
from vpaudit.checks._registry import get_check
from vpaudit.equations.engine import curves_from_frame, temperature_at


@pytest.fixture(scope="module")
def landolt_liquids():
    records, _ = landolt()
    return [r for r in records if _complete(r) and r["phase"] == "liquid"]


def _reference(substance: str, method: str) -> dict:
    return {
        "substance": substance,
        "quantity": "normal_boiling_point",
        "value": float(Tb(substance, method=method)),
        "unit": "K",
        "source": f"Tb via chemicals, method {method}",
    }


def test_many_real_ranges_end_at_their_own_normal_boiling_point(landolt_liquids):
    # the premise of the own-boiling-point tier, measured: a third of Landolt's liquids reach
    # 101325 Pa within 1 K of the upper end of their range (measured up to boiling), against
    # about 1 % per kelvin in the neighbouring bins
    c = curves_from_frame(table_from_rows(landolt_liquids).records)
    with np.errstate(all="ignore"):
        t_b = temperature_at(c, LN_P_STANDARD, 0.5 * c.t_min, 3.0 * c.t_max)
    gap = np.abs(t_b - c.t_max)
    at_end = np.count_nonzero(gap <= 1.0) / len(landolt_liquids)
    beside = np.count_nonzero((gap > 3.0) & (gap <= 5.0)) / len(landolt_liquids)
    assert at_end > 0.30
    assert beside < 0.05


def test_a_record_carrying_its_sources_boiling_point_is_not_blamed_for_the_reference(
    landolt_liquids,
):
    # 1070-71-9 (odd CAS): Landolt's range is 279-315 K and its curve reaches 101325 Pa at
    # 315.5 K. chemicals' normal boiling points: CRC_ORG 334.15 K; YAWS and COMMON_CHEMISTRY
    # 315.6 K. Against CRC_ORG the record draws a warning naming the disagreement of its
    # source and the reference, not an error; against YAWS, nothing.
    assert odd_cas("1070-71-9")
    rec = next(r for r in landolt_liquids if r["substance"] == "1070-71-9")
    crc = audit_table(
        table_from_rows([rec], [_reference("1070-71-9", "CRC_ORG")]),
        diagnose=False,
        only=["boiling-point-mismatch"],
    ).findings
    assert [f.severity.value for f in crc] == ["warning"]
    assert "source's own normal boiling point" in crc[0].message
    yaws = audit_table(
        table_from_rows([rec], [_reference("1070-71-9", "YAWS")]),
        diagnose=False,
        only=["boiling-point-mismatch"],
    ).findings
    assert len(yaws) == 0


def test_a_slip_that_moves_the_curve_off_its_range_end_is_still_an_error(landolt_liquids):
    # the same record with mmHg constants entered as Pa (A lowered by ln 133.322): it no
    # longer reaches 101325 Pa at its range end, and it misses YAWS's 315.6 K by 4.9 in ln P
    rec = next(r for r in landolt_liquids if r["substance"] == "1070-71-9")
    bad = dict(rec, A=rec["A"] - np.log(133.322))
    found = audit_table(
        table_from_rows([bad], [_reference("1070-71-9", "YAWS")]),
        diagnose=False,
        only=["boiling-point-mismatch"],
    ).findings
    assert [f.severity.value for f in found] == ["error"]


def test_a_second_reference_that_the_record_meets_names_the_first_as_the_one_to_doubt(
    landolt_liquids,
):
    """Landolt's liquid 1068-87-7 (odd CAS) reaches 101325 Pa
    at 409.9 K. chemicals carries two normal boiling points for it: CRC_ORG 396.15 K and
    YAWS 409.87 K. With the first alone the record draws an error (as before); with both,
    in that order, it meets YAWS, draws no boiling-point error, and the CRC_ORG value is
    the finding, located at its own line and naming the YAWS value it disagrees with. A
    table that keeps two sources' values no longer has its verdict depend on their order.
    """
    (rec,) = [r for r in landolt_liquids if r["substance"] == "1068-87-7"]
    crc, yaws = _reference("1068-87-7", "CRC_ORG"), _reference("1068-87-7", "YAWS")
    assert abs(crc["value"] - 396.15) < 0.01 and abs(yaws["value"] - 409.87) < 0.01

    def found(refs):
        result = audit_table(table_from_rows([rec], refs))
        return {
            (f.check, f.severity.value, f.line): f
            for f in result.findings
            if f.check in ("boiling-point-mismatch", "reference-contradicted")
        }

    alone = found([crc])
    assert [k[:2] for k in alone] == [("boiling-point-mismatch", "error")]
    for refs in ([crc, yaws], [yaws, crc]):
        both = found(refs)
        assert [k[:2] for k in both] == [("reference-contradicted", "warning")]
        (f,) = both.values()
        assert f.line == 1 + refs.index(crc)  # the CRC_ORG row
        assert "396.15 K (Tb via chemicals, method CRC_ORG)" in f.message
        assert "other reference 409.87 K (Tb via chemicals, method YAWS)" in f.message
        assert f.suggestion is None


def test_a_pressure_beyond_a_float_is_written_from_its_logarithm():
    """An invented two-term liquid whose B was entered a hundred times too large: at its
    reference boiling point ln(P/Pa) is about -837, where P underflows to 0 and the ratio to
    101325 Pa overflows. The message gives both from their logarithms, not '0 Pa' and
    'a factor inf'."""
    rec = invented_antoine("w", 20.0, 300000.0, 0.0, 300.0, 400.0)
    ref = {
        "substance": "w",
        "quantity": "normal_boiling_point",
        "value": 350.0,
        "unit": "K",
        "source": "invented",
    }
    result = audit_table(table_from_rows([rec], [ref]), diagnose=False)
    (f,) = [f for f in result.findings if f.check == "boiling-point-mismatch"]
    assert "the curve gives e^-837.1 Pa instead of 101325 Pa" in f.message, f.message
    assert "a factor e^849 in pressure" in f.message
    assert " inf" not in f.message and " 0 Pa" not in f.message


def test_the_boiling_over_critical_bound_is_guldbergs_rule_as_measured():
    """The ratio T_b/T_c of real liquids, from chemicals' normal boiling points (methods
    CRC_ORG, CRC_INORG, YAWS, COMMON_CHEMISTRY, the first that knows it) and critical
    temperatures (IUPAC, MATTHEWS, CRC), over every substance of the three critical tables:
    Guldberg's rule (about 2/3). The bound beyond which a curve's own boiling point is not
    believed against a reference Tb is its 99.5th percentile."""
    from chemicals import Tc, critical
    from compilations import _TB, _TC, _lookup

    cas = (
        set(critical.critical_data_IUPAC.index)
        | set(critical.critical_data_Matthews.index)
        | set(critical.critical_data_CRC.index)
    )
    ratios = []
    for c in sorted(cas):
        tb, tc = _lookup(Tb, c, _TB), _lookup(Tc, c, _TC)
        if tb is not None and tc is not None:
            ratios.append(tb[0] / tc[0])
    ratios = np.array(ratios)
    assert ratios.size > 900
    assert abs(np.median(ratios) - 2 / 3) < 0.03
    th = {k: t.default for k, t in get_check("boiling-point-mismatch").thresholds.items()}
    assert abs(np.percentile(ratios, 99.5) - th["boiling_over_critical"]) < 0.01


@pytest.mark.parametrize(
    "rid, change, slip",
    [
        # benzene (Poling's Antoine constants) with two digits of B transposed, and sulfur
        # trioxide with its constants for mmHg: each reaches 101325 Pa at 0.91 and 0.95 of
        # the reference Tc (IUPAC 562.05 K, MATTHEWS 491.0 K), so the reference Tb is not
        # taken for one at reduced pressure
        ("71-43-2-pa-l", {"B": 1814.24}, "digit-transposition"),
        ("7446-11-9-pa-l", {"A": 9.05084697986706}, "pressure-unit"),
    ],
)
def test_a_curve_boiling_near_its_critical_point_is_blamed_not_the_reference(rid, change, slip):
    from compilations import poling_antoine

    records, refs = poling_antoine()
    rec = dict(next(r for r in records if r["id"] == rid), **change)
    mine = [x for x in refs if x["substance"] == rec["substance"]]
    assert {x["quantity"] for x in mine} >= {"normal_boiling_point", "critical_temperature"}
    result = audit_table(table_from_rows([rec], mine))
    (f,) = [f for f in result.findings if f.check == "boiling-point-mismatch"]
    assert f.severity.value == "error", f.message
    assert "of the critical temperature" in f.message
    assert f.suggestion is not None and f.suggestion["kind"] == slip


def _mismatch(records: list[dict], refs: list[dict], rid: str):
    """The one boiling-point-mismatch finding on record ``rid`` of an audit of ``records``."""
    result = audit_table(table_from_rows(records, refs))
    (f,) = [f for f in result.findings if f.check == "boiling-point-mismatch" and rid in f.records]
    return f


def test_a_second_source_that_meets_the_reference_says_which_record_to_doubt():
    # 2-butanol (78-92-2) as McGarry (1983) and Poling et al. (2001) give its Wagner
    # constants (via chemicals), with the CRC_ORG normal boiling point (372.55 K). McGarry's
    # B with its sign lost bends the curve at the low end of its range (0.4 in ln P at 265
    # K) and leaves it 0.16 off at the boiling point: within the 1.5 % by which evaluations
    # of T_b differ, a warning. Alone, the record may be right and the reference off; with
    # Poling's curve meeting the reference, the finding says the record is the likelier
    from compilations import wagner

    records, refs = wagner()
    mine = [r for r in records if r["substance"] == "78-92-2"]
    assert {r["id"] for r in mine} == {"78-92-2-mg", "78-92-2-pw"}
    slipped = [dict(r, B=-r["B"]) if r["id"] == "78-92-2-mg" else r for r in mine]
    tb = [
        x for x in refs if x["substance"] == "78-92-2" and x["quantity"] == "normal_boiling_point"
    ]

    alone = _mismatch([r for r in slipped if r["id"] == "78-92-2-mg"], tb, "78-92-2-mg")
    both = _mismatch(slipped, tb, "78-92-2-mg")
    assert alone.severity.value == both.severity.value == "warning"
    assert "the reference may be the one that is off" in alone.message
    assert "another source of the substance meets the reference" in both.message
    assert "this record is the likelier to be off" in both.message


def test_a_source_that_meets_the_reference_outweighs_a_records_own_boiling_point():
    # pyridine (110-86-1) as Landolt-Boernstein's Antoine constants (odd CAS, via chemicals)
    # give it reaches 101325 Pa at 428 K, where its range ends: its source's own boiling
    # point, 40 K above the CRC_ORG 388.35 K (YAWS and Common Chemistry: 388.4 K). Alone
    # it is a disagreement of source and reference, a warning; with Poling's Antoine curve
    # (via chemicals) meeting the reference, two sources against one, an error that names
    # the record's source as the likelier to be off
    from compilations import poling_antoine

    records, refs = landolt()
    lb = next(r for r in records if r["id"] == "110-86-1-lb-l")
    pa_records, _ = poling_antoine()
    pa = next(r for r in pa_records if r["substance"] == "110-86-1")
    tb = [_reference("110-86-1", "CRC_ORG")]

    alone, both = _mismatch([lb], tb, lb["id"]), _mismatch([lb, pa], tb, lb["id"])
    assert alone.severity.value == "warning" and "check which is right" in alone.message
    assert both.severity.value == "error"
    assert "this record's source is the likelier to be off" in both.message
