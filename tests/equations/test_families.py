"""The family modules (vpaudit.equations.families): one per ``family`` of the form registry,
each with the same interface, and what each states checked against its own algebra.

Coefficients: water's Antoine constants in Pa, K (log10 P/mmHg = 8.07131 - 1730.63/(t/degC
+ 233.426), a common textbook set, written from memory), an invented three-term and
four-term-t curve, and argon's Wagner 3,6 equation as ``chemicals`` carries it
(Psat_data_WagnerMcGarry).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from vpaudit.equations.engine import FAMILY_CODES
from vpaudit.equations.families import BY_CODE, FAMILIES, family_of
from vpaudit.equations.forms import FORMS

LN10, MMHG = math.log(10.0), 133.322387415
ANTOINE = [LN10 * 8.07131 + math.log(MMHG), LN10 * 1730.63, 233.426 - 273.15]


def test_every_family_of_the_registry_has_one_module_with_the_interface():
    assert set(FAMILIES) == {spec.family for spec in FORMS.values()}
    assert FAMILY_CODES == {name: m.CODE for name, m in FAMILIES.items()}
    assert sorted(BY_CODE) == list(range(len(FAMILIES)))
    for m in FAMILIES.values():
        for name in (
            "evaluate",
            "stationary",
            "model",
            "linear",
            "canonical",
            "FORMS",
            "LOG_SCALED",
            "UNIT_IN_A",
        ):
            assert hasattr(m, name), (m.NAME, name)
        forms = [f for f, spec in FORMS.items() if spec.family == m.NAME]
        assert forms == [spec.name for spec in m.FORMS]  # each form declared by its family
        assert all(family_of(f) is m for f in forms)
        assert set(m.LOG_SCALED) <= set().union(*(FORMS[f].coefficients for f in forms))
        assert m.AFFINE_T == any(len(FORMS[f].temperature_units) > 1 for f in forms)


def test_water_antoine_boils_at_100_degc():
    # the textbook constants give 760 mmHg at 100 degC to 4 digits
    p = np.array([ANTOINE + [0.0] * 5])
    y, _, _ = FAMILIES["antoine"].evaluate(p, np.array([373.15]), 0)
    assert math.exp(y[0]) == pytest.approx(101325.0, rel=2e-3)


def test_records_as_written_become_the_canonical_parameters():
    """Each family's ``canonical``, through the engine: water's Antoine constants as the
    textbook writes them (log10, mmHg, degC) and argon's Wagner 3,6 equation in log10 and
    kPa give the parameters in ln, Pa and K above; a record of an unknown form stays zero.
    """
    import pandas as pd

    from vpaudit.equations.engine import curves_from_frame

    argon = pytest.importorskip("chemicals.vapor_pressure").Psat_data_WagnerMcGarry.loc["7440-37-1"]
    row = dict.fromkeys(("A", "B", "C", "D", "E", "t_crit", "p_crit", "t_min", "t_max"), None)
    frame = pd.DataFrame(
        [
            {**row, "form": "antoine", "log_base": "10", "pressure_unit": "mmHg",
             "temperature_unit": "degC", "A": 8.07131, "B": 1730.63, "C": 233.426},
            {**row, "form": "wagner-3-6", "log_base": "10", "pressure_unit": "kPa",
             "temperature_unit": "K", "A": argon.A / LN10, "B": argon.B / LN10,
             "C": argon.C / LN10, "D": argon.D / LN10, "t_crit": argon.Tc,
             "p_crit": argon.Pc / 1000.0},
            {**row, "form": "no-such-form", "log_base": "e", "pressure_unit": "Pa",
             "temperature_unit": "K", "A": 1.0, "B": 2.0, "C": 3.0},
        ]
    )  # fmt: skip
    c = curves_from_frame(frame)
    wag = [argon.A, argon.B, argon.C, argon.D, 3.0, 6.0, argon.Tc, math.log(argon.Pc)]
    assert c.params[0] == pytest.approx(ANTOINE + [0.0] * 5, rel=1e-12)
    assert c.params[1] == pytest.approx(wag, rel=1e-12)
    assert not c.params[2].any()
    assert list(c.family) == [FAMILY_CODES["antoine"], FAMILY_CODES["wagner"], 0]


def _cases():
    argon = pytest.importorskip("chemicals.vapor_pressure").Psat_data_WagnerMcGarry.loc["7440-37-1"]
    wag = [argon.A, argon.B, argon.C, argon.D, 3.0, 6.0, argon.Tc, math.log(argon.Pc)]
    return [
        ("log-linear", [25.0, -12000.0, -1.2, 0.0, 0.0, 0, 0, 0], np.linspace(600, 1200, 7)),
        ("log-linear", [30.0, -15000.0, -2.0, 1e-3, 1.0, 0, 0, 0], np.linspace(600, 1200, 7)),
        ("antoine", ANTOINE + [0.0] * 5, np.linspace(280, 370, 7)),
        ("wagner", wag, np.linspace(90, 140, 7)),
    ]


@pytest.mark.parametrize("k", range(4))
def test_derivatives_are_those_of_y(k):
    name, params, t = _cases()[k]
    m = FAMILIES[name]
    p = np.array([params])
    y, y1, y2 = m.evaluate(p, t[None, :], 2)
    h = 1e-4 * t
    yp, y1p, _ = m.evaluate(p, (t + h)[None, :], 2)
    ym, y1m, _ = m.evaluate(p, (t - h)[None, :], 2)
    assert np.allclose(y1, (yp - ym) / (2 * h), rtol=1e-6)
    assert np.allclose(y2, (y1p - y1m) / (2 * h), rtol=1e-5)


def test_stationary_points_are_where_dh_or_dcp_stop_changing():
    # log-linear with a D T^E term: dH' = R (C + D E (E+1) T^E) = 0 there; Antoine: dCp' = 0
    p = np.array([[30.0, -15000.0, -2.0, 1e-3, 1.0, 0, 0, 0]])
    t = FAMILIES["log-linear"].stationary(p)[0]
    assert -2.0 + 1e-3 * 1.0 * 2.0 * t == pytest.approx(0.0, abs=1e-12)
    # Antoine: dCp = 2 R B T C/(T + C)^3 is stationary at T = C/2 (in range only for C > 0)
    pa = np.array([[20.0, 3000.0, 60.0, 0, 0, 0, 0, 0]])
    ts = FAMILIES["antoine"].stationary(pa)[0]
    assert ts == 30.0

    def cp(t):
        _, y1, y2 = FAMILIES["antoine"].evaluate(pa, np.array([[t]]), 2)
        return float(2 * t * y1[0, 0] + t * t * y2[0, 0])

    slope_there = (cp(ts + 1e-3) - cp(ts - 1e-3)) / 2e-3
    slope_away = (cp(2 * ts + 1e-3) - cp(2 * ts - 1e-3)) / 2e-3
    assert abs(slope_there) < 1e-6 * abs(slope_away)
    assert FAMILIES["wagner"].stationary(p) is None


@pytest.mark.parametrize("form", list(FORMS))
def test_fit_model_gradient_is_that_of_its_y(form):
    m = family_of(form)
    n = len(FORMS[form].coefficients)
    t = np.linspace(300.0, 500.0, 9)
    fixed = {"t_crit": 600.0, "p_crit": 4.0e6}
    p = {
        "antoine": np.array(ANTOINE),
        "power-term": np.array([20.0, -5000.0, -1.0, 1e-4, 1.5]),
    }.get(
        form,
        np.array(
            [-7.0, 1.5, -2.5, -1.5][:n] if m.NAME == "wagner" else [20.0, -5000.0, -1.0, 1e-4][:n]
        ),
    )
    y, g = m.model(form, p, t, fixed)
    for j in range(n):
        dp = np.zeros(n)
        dp[j] = 1e-6 * max(abs(p[j]), 1.0)
        yp, _ = m.model(form, p + dp, t, fixed)
        ym, _ = m.model(form, p - dp, t, fixed)
        assert np.allclose(g[:, j], (yp - ym) / (2 * dp[j]), rtol=1e-5, atol=1e-9), (form, j)
