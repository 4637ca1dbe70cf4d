"""The entropy band of enthalpy-implausible at cryogenic temperatures, on the helium-4
equations of three compilations (McGarry's Wagner, Perry's table 2-8, Poling's Antoine, all
via chemicals): the entropy of vaporization at the normal boiling point falls with it
(CRC enthalpies of vaporization at T_b via chemicals: helium 80 J/mol at 4.222 K, 18.9
J/(mol K)), so a real helium curve is no error, and a slipped one still is."""

import math

import pytest
from compilations import _complete, landolt, perry, poling_antoine, wagner
from refdata import table_from_rows

from vpaudit.auditing import audit_table

HELIUM = "7440-59-7"


@pytest.mark.parametrize("build", [wagner, perry, poling_antoine])
def test_a_real_helium_curve_is_not_implausible_and_a_slipped_one_is(build):
    records, refs = build()
    he = [r for r in records if r["substance"] == HELIUM and _complete(r)]
    refs = [r for r in refs if r["substance"] == HELIUM]
    assert he, "the compilation carries helium-4"

    def errors(recs):
        result = audit_table(table_from_rows(recs, refs), diagnose=False)
        return [f for f in result.findings if f.check == "enthalpy-implausible"]

    assert errors(he) == []
    # its coefficients for kPa marked Pa: dS shifts by R ln 1000 = 57 J/(mol K)
    slipped = []
    for r in he:
        if r["form"].startswith("wagner"):
            slipped.append(dict(r, p_crit=r["p_crit"] / 1000.0))
        elif r.get("log_base") == "10":
            slipped.append(dict(r, A=r["A"] - 3.0))
        else:
            slipped.append(dict(r, A=r["A"] - math.log(1000.0)))
    assert [f.severity.value for f in errors(slipped)] == ["error"] * len(he)


#: mmHg in Pa (exact by definition of the conventional millimetre of mercury).
MMHG = 133.322387415


def _implausible(records, refs=()):
    result = audit_table(table_from_rows(records, list(refs)), diagnose=False)
    return [
        (f.records[0], f.severity.value)
        for f in result.findings
        if f.check == "enthalpy-implausible"
    ]


@pytest.mark.parametrize(
    ("cas", "shift", "what"),
    [
        # toluene (Poling, 286-410 K): coefficients for mmHg marked Pa: at the middle of the
        # range dS = 95 -> 55 J/(mol K) at a pressure 133 times lower (ln(P/P0) -1.5 -> -6.4)
        ("108-88-3", -math.log10(MMHG), "mmHg read as Pa"),
        # ethanol (Poling, 277-370 K): coefficients for Pa marked mmHg: dS = 120 -> 160 at a
        # pressure 133 times higher (ln(P/P0) -1.6 -> +3.3), above any boiling entropy
        ("64-17-5", +math.log10(MMHG), "Pa read as mmHg"),
    ],
)
def test_an_mmhg_slip_on_a_lone_liquid_leaves_the_band_that_follows_the_pressure(cas, shift, what):
    """Poling's Antoine constants via chemicals (log10 P[Pa]), with no reference value:
    the slip moves dS by R ln 133 = 40.7 J/(mol K), which a fixed 40..235 band let pass;
    the band that follows the pressure does not."""
    records, _ = poling_antoine()
    rec = next(r for r in records if r["substance"] == cas)
    assert _implausible([rec]) == []
    slipped = dict(rec, A=rec["A"] + shift)
    assert _implausible([slipped]) == [(rec["id"], "error")], what


@pytest.mark.parametrize(
    ("cas", "factor", "what"),
    [
        # (Landolt, 425-551 K, ln(P/P0) -7.8 at mid-range in 1/T; dCp -15 J/(mol K) there):
        # coefficients for bar marked Pa: dS = 158 -> 62 J/(mol K) at ln(P/P0) -19.3, where
        # the edge that rises with that dCp stands at 73.9
        ("500061-92-7", 1e5, "bar read as Pa"),
        # (Landolt, 337-367 K; dCp -412 J/(mol K)): coefficients for mmHg marked Pa: dS = 110
        # -> 69.0 J/(mol K) at ln(P/P0) -9.5, where the edge (rising by 20) stands at 69.6
        ("766-92-7", MMHG, "mmHg read as Pa"),
    ],
)
def test_a_unit_slip_far_below_the_boiling_point_leaves_the_rising_lower_edge(cas, factor, what):
    """Landolt's Antoine constants of lone liquids (odd-CAS rows, ln P[Pa], via chemicals;
    no reference value): the slip lands at 62-69 J/(mol K), above the lower edge of 60 that
    held at every pressure below P0/e^3 before that edge rose with the curve's own |dCp|, up
    to 20 J/(mol K)."""
    records, _ = landolt()
    rec = next(r for r in records if r["substance"] == cas and r["phase"] == "liquid")
    assert _implausible([rec]) == []
    slipped = dict(rec, A=rec["A"] - math.log(factor))
    assert _implausible([slipped]) == [(rec["id"], "error")], what


def test_the_clean_liquids_of_three_compilations_stay_in_the_band():
    """Every liquid equation of Poling's Antoine table, Perry's table 2-8 and the McGarry
    and Poling Wagner tables (via chemicals) lies in the band at the pressure where it is
    tested, but helium-3 (dS 21.8 J/(mol K) at 3.2 K: a quantum liquid, below even the
    cryogenic edge)."""
    out = []
    for build in (poling_antoine, perry, wagner):
        records, _ = build()
        out += _implausible([r for r in records if _complete(r)])
    assert out == [("14762-55-1-pa-l", "error")]
