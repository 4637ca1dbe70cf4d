"""The entropy band of enthalpy-implausible at cryogenic temperatures, on the helium-4
equations of three compilations (McGarry's Wagner, Perry's table 2-8, Poling's Antoine, all
via chemicals): the entropy of vaporization at the normal boiling point falls with it
(CRC enthalpies of vaporization at T_b via chemicals: helium 80 J/mol at 4.222 K, 18.9
J/(mol K)), so a real helium curve is no error, and a slipped one still is."""

import math

import pytest
from compilations import _complete, perry, poling_antoine, wagner
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
