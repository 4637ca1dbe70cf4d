"""heat-capacity-sign names the term of each family whose sign bends a curve that way."""

from __future__ import annotations

import math

import pytest
from refdata import table_from_rows

from vpaudit.auditing import audit_table
from vpaudit.constants import R


def test_an_antoine_curve_whose_pole_lies_below_0_k_is_sent_to_its_c():
    """ln P = A - B/(T + C) gives dH = R B T^2/(T + C)^2 and dCp = dH' = 2 R B T C/(T + C)^3
    (differentiation by hand), positive wherever C > 0, i.e. the pole T = -C lies below
    0 K. An invented record with C = +200 K: the check reports the analytic value at the
    range's low end and sends the reader to C, not to a log T term the form does not have."""
    rec = {
        "id": "x-l", "substance": "x", "phase": "liquid", "form": "antoine", "log_base": "e",
        "pressure_unit": "Pa", "temperature_unit": "K", "A": 25.0, "B": 9000.0, "C": 200.0,
        "t_min": 250.0, "t_max": 400.0, "source": "invented",
    }  # fmt: skip
    (f,) = [
        f for f in audit_table(table_from_rows([rec], [])).findings
        if f.check == "heat-capacity-sign"
    ]  # fmt: skip
    t, b, c = 250.0, 9000.0, 200.0
    assert f.evidence["heat_capacity_change_J_per_mol_K"] == pytest.approx(
        2 * R * b * t * c / (t + c) ** 3, rel=1e-9
    )
    assert f.evidence["at_K"] == t
    assert "check C (an Antoine curve whose pole lies below 0 K bends so)" in f.message
    assert "log T" not in f.message


def test_a_wagner_curve_is_sent_to_its_c_and_d_terms():
    """n-butane's Wagner 2.5,5 equation (Poling et al. via chemicals) with the sign of D
    lost implies a positive dCp at the low end of its range; its form has no log T term."""
    from compilations import wagner

    records, _ = wagner()
    rec = next(r for r in records if r["id"] == "106-97-8-pw")
    assert rec["D"] < 0 and math.isfinite(rec["D"])
    found = audit_table(table_from_rows([dict(rec, D=-rec["D"])], [])).findings
    (f,) = [f for f in found if f.check == "heat-capacity-sign"]
    assert "check the signs of the C and D terms" in f.message
    clean = audit_table(table_from_rows([rec], [])).findings
    assert not [f for f in clean if f.check == "heat-capacity-sign"]
