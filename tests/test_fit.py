"""Fitting: recovery of known curves, uncertainties, IAPWS water, pairs, conversion."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.constants import R
from scipy.optimize import brentq

from vpaudit.equations.forms import FORMS
from vpaudit.errors import EquationError
from vpaudit.fit import convert_or_refit, fit_pair, fit_points


def _curve(dh0, dcp, t0, lnp0):
    """ln P of the exact constant-dCp integral of Clausius-Clapeyron through (t0, lnp0):
    y = A + B/T + C ln T with C = dCp/R, B = -(dH0 - dCp t0)/R."""
    c = dcp / R
    b = -(dh0 - dcp * t0) / R
    a = lnp0 - b / t0 - c * np.log(t0)
    return np.array([a, b, c])


@settings(max_examples=40, deadline=None)
@given(
    dh=st.floats(30e3, 500e3),
    dcp=st.floats(-60.0, -1.0),
    t0=st.floats(250.0, 2500.0),
    seed=st.integers(0, 2**32 - 1),
)
def test_fit_recovers_known_coefficients_from_noisy_points(dh, dcp, t0, seed):
    true = _curve(dh, dcp, t0, np.log(10.0))
    t = np.linspace(0.7 * t0, 1.3 * t0, 25)
    y = true[0] + true[1] / t + true[2] * np.log(t)
    rng = np.random.default_rng(seed)
    f = fit_points(t, np.exp(y + rng.normal(0, 1e-3, t.size)), "three-term", 1e-3)
    # each coefficient within 5 standard errors of the truth (a 6e-7 chance to fail per
    # coefficient for a correct fit and correct standard errors)
    assert np.all(np.abs(f.values - true) <= 5 * f.standard_errors)
    assert f.rms < 3e-3


def test_standard_errors_agree_with_monte_carlo():
    rng = np.random.default_rng(20261202)
    t = np.linspace(600.0, 1200.0, 40)
    true = np.array([30.0, -30000.0, -1.0])
    y = true[0] + true[1] / t + true[2] * np.log(t)
    fits = [
        fit_points(t, np.exp(y + rng.normal(0, 0.01, t.size)), "three-term", 0.01)
        for _ in range(400)
    ]
    spread = np.std([f.values for f in fits], axis=0, ddof=1)
    # 400 samples: the relative error of a standard deviation is about 1/sqrt(800) = 3.5 %
    assert_allclose(spread, fits[0].standard_errors, rtol=0.12)
    # the 95 % band is pointwise: at each temperature it covers the true ln P in about 95 %
    # of the fits (400 fits: a standard error of 1.1 %)
    for k in (0, 20, 39):
        covered = [
            abs(f.ln_pressure(t[k : k + 1])[0] - y[k]) <= f.band(t[k : k + 1])[0] for f in fits
        ]
        assert 0.91 <= np.mean(covered) <= 0.99


def test_fit_to_iapws_if97_saturation_is_within_its_stated_uncertainty():
    # IAPWS-IF97 saturation pressure (region 4) via the iapws package, 273.16-373.15 K. The
    # saturation pressure of IAPWS-95 is uncertain by about 0.025 % in this range (Wagner &
    # Pruss, J. Phys. Chem. Ref. Data 31 (2002) 387; value from memory): a four-term fit must
    # reproduce the standard well within that.
    from iapws.iapws97 import _PSat_T

    t = np.linspace(273.16, 373.15, 120)
    p = np.array([_PSat_T(x) for x in t]) * 1e6
    f = fit_points(t, p, "four-term-t")
    assert np.max(np.abs(f.residuals)) < 2.5e-4
    # and the Wagner form with the IAPWS-95 critical point (647.096 K, 22.064 MPa, IAPWS
    # R6-95) over 273.16-640 K within 0.1 %
    t = np.linspace(273.16, 640.0, 200)
    p = np.array([_PSat_T(x) for x in t]) * 1e6
    w = fit_points(t, p, "wagner-3-6", t_crit=647.096, p_crit=22.064e6)
    assert np.max(np.abs(w.residuals)) < 1e-3


def test_antoine_fit_recovers_poling_constants():
    # Poling et al. Antoine constants of benzene (71-43-2), via chemicals: points computed
    # from them are fitted back to the same constants
    from chemicals.vapor_pressure import Psat_data_AntoinePoling as ant

    a = ant.loc["71-43-2"]
    t = np.linspace(a["Tmin"], a["Tmax"], 30)
    ln10 = np.log(10.0)
    y = ln10 * (a["A"] - a["B"] / (t + a["C"]))
    f = fit_points(t, np.exp(y), "antoine")
    assert_allclose(f.values, [ln10 * a["A"], ln10 * a["B"], a["C"]], rtol=1e-7)


def test_robust_fit_lists_and_leaves_out_outliers():
    rng = np.random.default_rng(3)
    t = np.linspace(600.0, 1200.0, 40)
    y = 30.0 - 30000.0 / t - np.log(t)
    p = np.exp(y + rng.normal(0, 0.01, t.size))
    p[[5, 20]] *= [1.5, 0.6]
    plain = fit_points(t, p, "three-term", 0.01)
    robust = fit_points(t, p, "three-term", 0.01, robust=True)
    # both planted outliers go; a genuine 3-sigma point among 40 may go too (p = 0.1)
    assert {5, 20} <= set(robust.rejected.tolist()) and len(robust.rejected) <= 3
    assert robust.rms < 0.015 < plain.rms


def test_wagner_needs_its_critical_point():
    with pytest.raises(EquationError, match="critical point"):
        fit_points([300.0, 310.0, 320.0, 330.0, 340.0], [1e3] * 5, "wagner-3-6")


def test_a_pair_fit_without_the_solid_points_says_which_phase_has_points(tmp_path):
    """The demo's drennite has liquid points only: a pair fit names the phase it lacks (it
    said "no points" and listed every substance with points, its own among them); a
    misspelt name gets the near matches, as the other commands give them."""
    from click.testing import CliRunner

    from vpaudit.cli import main as cli
    from vpaudit.errors import FitError

    runner = CliRunner()
    got = runner.invoke(cli, ["fit", "sample_db", "--substance", "drennite", "--pair"])
    assert got.exit_code == 2, got.output
    assert "cannot fit: 'drennite' has measured points of the liquid only, none of the solid" in (
        got.output
    )
    got = runner.invoke(cli, ["fit", "sample_db", "--substance", "drenite"])
    assert got.exit_code == 2 and "no points of 'drenite'; did you mean drennite," in got.output
    assert issubclass(FitError, EquationError)


def test_a_fit_the_audit_finds_nothing_on_says_what_it_was_audited_with(tmp_path):
    """Ten saturation pressures of water from IAPWS-IF97 (the iapws package), 280-370 K,
    fitted in the three-term form: the new record draws no finding, and the command says
    what it was audited with rather than a bare "nothing found"."""
    from click.testing import CliRunner
    from iapws import IAPWS97

    from vpaudit.cli import main as cli

    (tmp_path / "points").mkdir()
    rows = ["substance,phase,T,P,temperature_unit,pressure_unit,source"]
    rows += [
        f"water,liquid,{t},{IAPWS97(T=t, x=0).P * 1e6!r},K,Pa,IAPWS-IF97 via iapws"
        for t in range(280, 371, 10)
    ]
    (tmp_path / "points" / "water.csv").write_text("\n".join(rows) + "\n")
    got = CliRunner().invoke(cli, ["fit", str(tmp_path), "--substance", "water"])
    assert got.exit_code == 0, got.output
    assert got.output.rstrip().endswith(
        "audit of the new record(s), with the substance's references, measured points and "
        "records of the other phase: no errors, warnings or notes"
    )


def _pair_points(seed=1):
    rng = np.random.default_rng(seed)
    ts = np.linspace(600.0, 1000.0, 20)
    tl = np.linspace(1000.0, 1500.0, 20)
    s = _curve(300e3, -5.0, 1000.0, np.log(2.0))
    lq = _curve(285e3, -12.0, 1000.0, np.log(2.0))
    ys = s[0] + s[1] / ts + s[2] * np.log(ts)
    yl = lq[0] + lq[1] / tl + lq[2] * np.log(tl)
    return (
        (ts, np.exp(ys + rng.normal(0, 0.01, ts.size)), 0.01),
        (tl, np.exp(yl + rng.normal(0, 0.01, tl.size)), 0.01),
    )


def test_a_record_whose_pressure_overflows_is_not_refitted_and_warns_nothing():
    """Perry's table 2-8 row for CAS 78-80-8 (via chemicals: ln P = A + B/T + C ln T + D T^E,
    E = 1) with its exponent entered as 100, so that D T^100 overflows ln P over the range,
    cannot be refitted to another form: a clear error naming the record, and no numpy
    overflow warning."""
    import warnings

    rec = {
        "id": "p",
        "form": "power-term",
        "log_base": "e",
        "pressure_unit": "Pa",
        "temperature_unit": "K",
        "A": 95.453,
        "B": -5448.8,
        "C": -12.384,
        "D": 0.015643,
        "E": 100.0,
        "t_min": 160.15,
        "t_max": 492.0,
    }
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(EquationError, match="'p' cannot be refitted: its pressure is not"):
            convert_or_refit(rec, form="three-term")


def test_pair_refit_meets_the_imposed_triple_point():
    sol, liq = _pair_points()
    res = fit_pair(sol, liq, triple_temperature=1003.0, fusion_enthalpy=15e3)
    crossing = brentq(
        lambda x: res.solid.ln_pressure([x])[0] - res.liquid.ln_pressure([x])[0],
        900.0,
        1100.0,
        xtol=1e-13,
    )
    assert abs(crossing - 1003.0) < 1e-9
    assert_allclose(res.fusion_enthalpy, 15e3, rtol=1e-9)
    # the constraint costs: chi-square can only grow
    assert res.chi2 >= res.chi2_free - 1e-9


def test_pair_refit_finds_the_triple_point_when_not_given():
    sol, liq = _pair_points()
    res = fit_pair(sol, liq)
    assert 990.0 < res.triple_temperature < 1010.0  # the curves were built to meet at 1000 K
    assert res.fusion_enthalpy > 0


def test_convert_is_exact_when_it_can_be_and_refits_otherwise():
    rec = {
        "id": "x",
        "form": "three-term",
        "log_base": "e",
        "pressure_unit": "Pa",
        "temperature_unit": "K",
        "A": 30.0,
        "B": -30000.0,
        "C": -1.0,
        "t_min": 800.0,
        "t_max": 1200.0,
    }
    out, dev, exact = convert_or_refit(rec, log_base="10", pressure_unit="Torr")
    assert exact and dev == 0.0
    two, dev, exact = convert_or_refit(rec, form="two-term", max_deviation=0.05)
    assert not exact and 0 < dev < 0.05
    t = np.linspace(800.0, 1200.0, 50)
    y = 30.0 - 30000.0 / t - np.log(t)
    assert np.max(np.abs(two["A"] + two["B"] / t - y)) <= dev * (1 + 1e-9)
    with pytest.raises(EquationError, match="deviates"):
        convert_or_refit(rec, form="two-term", max_deviation=1e-6)
    # a range that starts at 0 K (range-invalid in the audit) cannot be sampled: said, not a
    # ZeroDivisionError (found by fuzzing the command line)
    for t_min, t_max in ((0.0, 1200.0), (-5.0, 1200.0), (800.0, float("nan"))):
        with pytest.raises(EquationError, match="no range a refit could sample"):
            convert_or_refit(dict(rec, t_min=t_min, t_max=t_max), form="antoine")


@settings(max_examples=150, deadline=None, derandomize=True)
@given(
    st.lists(st.tuples(st.floats(1.0, 5000.0), st.floats(1e-20, 1e9)), min_size=1, max_size=12),
    st.sampled_from(sorted(FORMS)),
    st.booleans(),
)
@example(  # found by this test: it warned "overflow encountered in power"
    list(
        zip(
            [4454.415825246225, 1.0, 3877.2230827353683, 1.0, 1.0, 1.0, 1.0, 1.0],
            [
                744498917.5368938,
                565320164.1187983,
                477384788.40066665,
                0.5,
                142805966.49663395,
                626403506.8662516,
                477384788.40066665,
                1e-20,
            ],
            strict=True,
        )
    ),
    "power-term",
    True,
)
def test_any_points_fit_with_finite_coefficients_or_say_why(points, form, robust):
    """Points anywhere from 1 K to 5000 K and 1e-20 to 1e9 Pa, repeated temperatures and
    all: each fit gives finite coefficients or a FitError, and no floating-point warning
    (the free exponent of the power-term form overflowed in the optimizer's trial steps)."""
    import warnings

    t = np.array([x for x, _ in points])
    p = np.array([y for _, y in points])
    extra = {"t_crit": float(t.max()) * 1.1, "p_crit": 1e7} if form.startswith("wagner") else {}
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        try:
            fit = fit_points(t, p, form, robust=robust, **extra)
        except EquationError:
            return
    assert np.all(np.isfinite(fit.values))


def test_a_pair_held_to_a_triple_point_no_pressure_can_reach_is_refused():
    # invented points whose curves fall with temperature, held to a triple point at 1 K:
    # the curves meet at ln(P/Pa) = 2.3e4 there, which overflowed math.exp (an internal
    # error of `vpaudit fit --pair --triple-point 1K`)
    solid = (np.array([1000.0, 1500.0, 2000.0]), np.array([1e5, 1e2, 1.0]), None)
    liquid = (np.array([2100.0, 2500.0, 3000.0]), np.array([0.8, 0.1, 0.01]), None)
    with pytest.raises(EquationError, match="a pressure no number can hold"):
        fit_pair(solid, liquid, "two-term", triple_temperature=1.0)
