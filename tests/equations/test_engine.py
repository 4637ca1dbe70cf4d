"""Equation engine against outside references, derivatives, conversions and inversion."""

import math
import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from refdata import frame, lsq_fit, water_enthalpies
from scipy.constants import R

from vpaudit.equations import (
    convert_record,
    curves_from_frame,
    enthalpy,
    evaluate,
    heat_capacity_change,
    ln_pressure,
    temperature_at,
)
from vpaudit.errors import EquationError
from vpaudit.units import MMHG_PA, PRESSURE_UNITS

SAMPLE = Path(__file__).resolve().parents[2] / "sample_db"


def rec(**kw):
    base = {
        "id": "r",
        "substance": "s",
        "phase": "liquid",
        "log_base": "e",
        "pressure_unit": "Pa",
        "temperature_unit": "K",
        "source": "test",
    }
    base.update(kw)
    return base


def curves(*records):
    clean = [{k: v for k, v in r.items() if not k.endswith("_text")} for r in records]
    return curves_from_frame(frame(clean))


# --- outside references -----------------------------------------------------------------


def test_textbook_water_antoine_gives_one_atmosphere_at_100_degC():
    # Water, 1-100 degC, log10(P/mmHg) = 8.07131 - 1730.63/(233.426 + t/degC): the widely
    # printed textbook constants and their worked result, P(100 degC) = 760 mmHg
    # (values written from memory; checked against IAPWS-IF97 below).
    c = curves(
        rec(
            form="antoine",
            log_base="10",
            pressure_unit="mmHg",
            temperature_unit="degC",
            A=8.07131,
            B=1730.63,
            C=233.426,
            t_min=1,
            t_max=100,
        )
    )
    p = math.exp(ln_pressure(c, 373.15)[0]) / MMHG_PA
    assert p == pytest.approx(760.0, rel=2e-4)
    from iapws.iapws97 import _PSat_T

    for t in (293.15, 323.15, 353.15):  # IAPWS-IF97 saturation pressure, within 0.5 %
        assert math.exp(ln_pressure(c, t)[0]) == pytest.approx(_PSat_T(t) * 1e6, rel=5e-3)


def test_antoine_matches_chemicals_for_poling_constants():
    # Antoine constants of Poling, Prausnitz & O'Connell, "The Properties of Gases and
    # Liquids", 5th ed., as carried by chemicals (Psat_data_AntoinePoling, Pa and K);
    # reference implementation chemicals.vapor_pressure.Antoine and dAntoine_dT.
    from chemicals.vapor_pressure import Antoine, Psat_data_AntoinePoling, dAntoine_dT

    data = Psat_data_AntoinePoling.iloc[:40]
    rows = [
        rec(
            id=str(i),
            form="antoine",
            log_base="10",
            A=r.A,
            B=r.B,
            C=r.C,
            t_min=r.Tmin,
            t_max=r.Tmax,
        )
        for i, r in enumerate(data.itertuples())
    ]
    c = curves(*rows)
    t = 0.5 * (data["Tmin"].to_numpy() + data["Tmax"].to_numpy())
    y, y1, _ = evaluate(c, t)
    p_ref = np.array(
        [Antoine(tt, r.A, r.B, r.C) for tt, r in zip(t, data.itertuples(), strict=True)]
    )
    dp_ref = np.array(
        [dAntoine_dT(tt, r.A, r.B, r.C) for tt, r in zip(t, data.itertuples(), strict=True)]
    )
    assert_allclose(np.exp(y), p_ref, rtol=1e-12)
    assert_allclose(np.exp(y) * y1, dp_ref, rtol=1e-10)


@pytest.mark.parametrize(
    "form, table, fn, dfn",
    [
        ("wagner-3-6", "Psat_data_WagnerMcGarry", "Wagner_original", "dWagner_original_dT"),
        ("wagner-2.5-5", "Psat_data_WagnerPoling", "Wagner", "dWagner_dT"),
    ],
)
def test_wagner_matches_chemicals(form, table, fn, dfn):
    # Wagner constants of McGarry (1983), Ind. Eng. Chem. Process Des. Dev. 22, 313 (3,6
    # form) and of Poling et al. (2,5-5 form), as carried by chemicals; reference
    # implementations chemicals.vapor_pressure.Wagner_original / Wagner and their derivatives.
    import chemicals.vapor_pressure as vp

    data = getattr(vp, table).dropna(subset=["A", "B", "C", "D", "Tc", "Pc", "Tmin"]).iloc[:40]
    f, df = getattr(vp, fn), getattr(vp, dfn)
    rows = [
        rec(
            id=str(i),
            form=form,
            A=r.A,
            B=r.B,
            C=r.C,
            D=r.D,
            t_crit=r.Tc,
            p_crit=r.Pc,
            t_min=r.Tmin,
            t_max=0.95 * r.Tc,
        )
        for i, r in enumerate(data.itertuples())
    ]
    c = curves(*rows)
    t = 0.5 * (data["Tmin"].to_numpy() + 0.9 * data["Tc"].to_numpy())
    y, y1, _ = evaluate(c, t)
    ref = np.array(
        [f(tt, r.Tc, r.Pc, r.A, r.B, r.C, r.D) for tt, r in zip(t, data.itertuples(), strict=True)]
    )
    dref = np.array(
        [df(tt, r.Tc, r.Pc, r.A, r.B, r.C, r.D) for tt, r in zip(t, data.itertuples(), strict=True)]
    )
    assert_allclose(np.exp(y), ref, rtol=1e-11)
    assert_allclose(np.exp(y) * y1, dref, rtol=1e-9)


def test_iapws_water_curves_and_their_enthalpies():
    # IAPWS-IF97 saturation line (via iapws) fitted with the four-term-t form over
    # 273.16-373.15 K; the implied apparent enthalpy R T^2 dlnP/dT must equal the IAPWS-95
    # enthalpy of vaporization divided by dZ (exact Clapeyron), within the fit's accuracy.
    from iapws.iapws97 import _PSat_T

    tl = np.linspace(273.16, 373.15, 200)
    fit = lsq_fit(tl, np.log([_PSat_T(t) * 1e6 for t in tl]))
    assert fit["_max_resid"] < 2e-4  # measured: 6.0e-5 in ln P
    c = curves(
        rec(
            form="four-term-t",
            A=fit["A"],
            B=fit["B"],
            C=fit["C"],
            D=fit["D"],
            t_min=273.16,
            t_max=373.15,
        )
    )
    for t in (280.0, 300.0, 330.0, 360.0):
        dh, apparent = water_enthalpies(t)
        assert enthalpy(c, t)[0] == pytest.approx(apparent, rel=2e-3)
        assert abs(apparent / dh - 1) < 0.03  # dZ correction below 3 % up to 360 K
    # Liquid water near room temperature: dCp = Cp(vapour) - Cp(liquid) about -42 J/(mol K)
    # (a value from memory)
    assert heat_capacity_change(c, 298.15)[0] == pytest.approx(-42, abs=4)


def test_iapws_ice_sublimation_and_its_enthalpy():
    # IAPWS R14-08 sublimation pressure of ice Ih (via iapws), fitted over 200-273.16 K; the
    # implied enthalpy vs the IAPWS enthalpy of sublimation: h(vapour, IAPWS-95) minus
    # h(ice, IAPWS R10-06) at the same T and P, via iapws.
    from iapws import IAPWS95
    from iapws._iapws import _Ice, _Sublimation_Pressure
    from refdata import WATER_M

    ts = np.linspace(200.0, 273.16, 200)
    fit = lsq_fit(ts, np.log([_Sublimation_Pressure(t) * 1e6 for t in ts]))
    assert fit["_max_resid"] < 1e-5  # measured: 2.6e-6 in ln P
    c = curves(
        rec(
            form="four-term-t",
            phase="solid",
            A=fit["A"],
            B=fit["B"],
            C=fit["C"],
            D=fit["D"],
            t_min=200.0,
            t_max=273.16,
        )
    )
    for t in (210.0, 240.0, 270.0):
        p = _Sublimation_Pressure(t)
        rho = p * 1e6 * WATER_M / (R * t)  # dilute vapour; fixes the vapour root of IAPWS-95
        with warnings.catch_warnings():  # iapws warns that IAPWS-95 is extrapolated below
            warnings.simplefilter("ignore", UserWarning)  # the triple point (dilute vapour)
            vapour = IAPWS95(T=t, rho=rho)
        dh = (vapour.h - _Ice(t, p)["h"]) * 1000.0 * WATER_M
        assert enthalpy(c, t)[0] == pytest.approx(dh, rel=2e-3)
        assert math.exp(ln_pressure(c, t)[0]) == pytest.approx(p * 1e6, rel=1e-5)


@pytest.mark.parametrize("fluid", ["Propane", "n-Hexane", "Toluene", "Ethanol", "Argon", "Benzene"])
def test_coolprop_saturation_curves(fluid):
    # Saturation curves of reference equations of state via CoolProp, fitted over
    # [T_triple + 2 K, 0.7 Tc]; ln P at points between the fit nodes, and the implied
    # apparent enthalpy against CoolProp's (h_vap - h_liq) / dZ.
    from CoolProp.CoolProp import PropsSI

    tt = PropsSI("Ttriple", fluid) + 2.0
    tc = PropsSI("Tcrit", fluid)
    nodes = np.linspace(tt, 0.7 * tc, 60)
    lnp = np.log([PropsSI("P", "T", t, "Q", 0, fluid) for t in nodes])
    fit = lsq_fit(nodes, lnp, "four-term-t")
    c = curves(
        rec(
            form="four-term-t",
            A=fit["A"],
            B=fit["B"],
            C=fit["C"],
            D=fit["D"],
            t_min=tt,
            t_max=0.7 * tc,
        )
    )
    mids = 0.5 * (nodes[1:] + nodes[:-1])[::6]
    p_ref = np.array([PropsSI("P", "T", t, "Q", 0, fluid) for t in mids])
    assert_allclose(ln_pressure(c, mids[None, :])[0], np.log(p_ref), atol=5e-3)
    for t in mids[1:-1:3]:
        hl, hv = (PropsSI("H", "T", t, "Q", q, fluid) for q in (0, 1))
        dl, dv = (PropsSI("Dmolar", "T", t, "Q", q, fluid) for q in (0, 1))
        p = PropsSI("P", "T", t, "Q", 0, fluid)
        dz = p * (1 / dv - 1 / dl) / (R * t)
        dh = (hv - hl) * PropsSI("molarmass", fluid)
        assert enthalpy(c, t)[0] == pytest.approx(dh / dz, rel=1e-2)


# --- derivatives against finite differences, every form ---------------------------------

FORM_RECORDS = {
    "two-term": {"A": 25.0, "B": -12000.0},
    "three-term": {"A": 30.0, "B": -12000.0, "C": -1.2},
    "four-term-t": {"A": 30.0, "B": -12000.0, "C": -1.2, "D": 2e-4},
    "four-term-cube": {"A": 30.0, "B": -12000.0, "C": -1.2, "D": 3e5},
    "power-term": {"A": 30.0, "B": -12000.0, "C": -1.2, "D": 1e-6, "E": 1.7},
    "antoine": {"A": 9.5, "B": 1500.0, "C": -45.0},
    "wagner-3-6": {"A": -7.5, "B": 1.5, "C": -2.5, "D": -1.5, "t_crit": 600.0, "p_crit": 4e6},
    "wagner-2.5-5": {"A": -7.5, "B": 1.5, "C": -2.5, "D": -1.5, "t_crit": 600.0, "p_crit": 4e6},
}


@settings(max_examples=60, deadline=None)
@given(
    form=st.sampled_from(sorted(FORM_RECORDS)),
    scale=st.floats(0.5, 1.5),
    frac=st.floats(0.05, 0.95),
    base=st.sampled_from(["e", "10"]),
)
def test_analytic_derivatives_match_finite_differences(form, scale, frac, base):
    coef = {k: (v * scale if k in "ABCD" else v) for k, v in FORM_RECORDS[form].items()}
    c = curves(rec(form=form, log_base=base, t_min=250.0, t_max=550.0, **coef))
    t = 250.0 + 300.0 * frac
    h = 1e-4 * t
    y, y1, y2 = evaluate(c, t)
    ym, yp = ln_pressure(c, t - h)[0], ln_pressure(c, t + h)[0]
    fd1 = (yp - ym) / (2 * h)
    fd2 = (yp - 2 * y[0] + ym) / h**2
    assert y1[0] == pytest.approx(fd1, rel=1e-6, abs=1e-12)
    assert y2[0] == pytest.approx(fd2, rel=1e-3, abs=1e-9)


def test_implied_quantities_of_the_three_term_form_are_exact():
    # Clausius-Clapeyron on y = A + B/T + C ln T: dH/R = -B + C T, dCp/R = C
    c = curves(rec(form="three-term", A=30.0, B=-12000.0, C=-1.2, t_min=300, t_max=900))
    t = np.array([300.0, 600.0, 900.0])
    assert_allclose(enthalpy(c, t[None, :])[0], R * (12000.0 - 1.2 * t), rtol=1e-13)
    assert_allclose(heat_capacity_change(c, t[None, :])[0], R * -1.2, rtol=1e-12)


# --- exact conversions ------------------------------------------------------------------

UNITS = sorted(PRESSURE_UNITS)


@settings(max_examples=150, deadline=None)
@given(
    form=st.sampled_from(sorted(FORM_RECORDS)),
    scale=st.floats(0.5, 1.5),
    b1=st.sampled_from(["e", "10"]),
    b2=st.sampled_from(["e", "10"]),
    u1=st.sampled_from(UNITS),
    u2=st.sampled_from(UNITS),
    v2=st.sampled_from(["K", "degC", "degF"]),
)
def test_exact_conversions_reproduce_ln_p(form, scale, b1, b2, u1, u2, v2):
    coef = {k: (v * scale if k in "ABCD" else v) for k, v in FORM_RECORDS[form].items()}
    r = rec(form=form, log_base=b1, pressure_unit=u1, t_min=260.0, t_max=540.0, **coef)
    target_t = v2 if form == "antoine" else "K"
    converted = convert_record(r, log_base=b2, pressure_unit=u2, temperature_unit=target_t)
    back = convert_record(converted, log_base=b1, pressure_unit=u1, temperature_unit="K")
    c = curves(r, {**converted, "id": "c"}, {**back, "id": "b"})
    t = np.linspace(270.0, 530.0, 7)
    y = ln_pressure(c, t)
    # rel 1e-12 of the magnitude of the terms summed (ln P itself may be near zero)
    scale_y = np.abs(y).max() + 50.0
    assert_allclose(y[1], y[0], rtol=0, atol=1e-12 * scale_y)
    assert_allclose(y[2], y[0], rtol=0, atol=1e-12 * scale_y)
    assert_allclose(c.t_min, 260.0, rtol=1e-12)


def test_conversion_that_cannot_be_exact_is_refused():
    r = rec(form="three-term", A=30.0, B=-1e4, C=-1.0, t_min=300, t_max=600)
    with pytest.raises(EquationError, match="needs an absolute temperature"):
        convert_record(r, temperature_unit="degC")


def test_degc_to_kelvin_antoine_changes_c_by_273_15():
    r = rec(
        form="antoine",
        log_base="10",
        temperature_unit="degC",
        A=8.0,
        B=1700.0,
        C=230.0,
        t_min=0,
        t_max=100,
    )
    k = convert_record(r, temperature_unit="K")
    assert k["C"] == pytest.approx(230.0 - 273.15, abs=1e-12) and k["B"] == 1700.0


# --- inversion ------------------------------------------------------------------------------


@settings(max_examples=60, deadline=None)
@given(form=st.sampled_from(sorted(FORM_RECORDS)), frac=st.floats(0.0, 1.0))
def test_temperature_at_inverts_ln_p(form, frac):
    c = curves(rec(form=form, t_min=250.0, t_max=550.0, **FORM_RECORDS[form]))
    t = 250.0 + 300.0 * frac
    y = ln_pressure(c, t)[0]
    assert temperature_at(c, y)[0] == pytest.approx(t, rel=1e-12)


def test_temperature_at_outside_the_range_is_nan_unless_extrapolating():
    c = curves(rec(form="two-term", A=25.0, B=-12000.0, t_min=300.0, t_max=600.0))
    target = 25.0 - 12000.0 / 700.0
    assert np.isnan(temperature_at(c, target)[0])
    assert temperature_at(c, target, 300.0, 1200.0)[0] == pytest.approx(700.0, rel=1e-12)


def test_blockwise_evaluation_equals_one_pass(monkeypatch):
    """Long inputs are evaluated in blocks (evaluate) and picked rows without copying all
    curves (evaluate_rows); both must give the one-pass values bit for bit."""
    from vpaudit.equations import engine

    rng = np.random.default_rng(5)
    n = 3 * engine._BLOCK + 17
    fam = rng.integers(0, 2, n).astype(np.int8)  # log-linear and Antoine mixed
    params = np.zeros((n, 8))
    params[:, 0] = rng.uniform(15, 30, n)
    params[:, 1] = np.where(fam == 0, -1, 1) * rng.uniform(2e3, 5e4, n)
    params[:, 2] = np.where(fam == 0, rng.uniform(-4, 1, n), -rng.uniform(10, 60, n))
    curves = engine.Curves(fam, params, np.full(n, 300.0), np.full(n, 900.0))
    t = rng.uniform(300, 900, n)
    rows = rng.integers(0, n, n + 5)  # repeats, as the solid of every pair
    tr = rng.uniform(300, 900, rows.size)
    blocked = engine.evaluate(curves, t)
    picked = engine.evaluate_rows(curves, rows, tr)
    monkeypatch.setattr(engine, "_BLOCK", 10**9)  # one pass
    for a, b in zip(blocked, engine.evaluate(curves, t), strict=True):
        assert np.array_equal(a, b)
    for a, b in zip(picked, engine.evaluate(curves.take(rows), tr), strict=True):
        assert np.array_equal(a, b)


@given(st.floats(allow_nan=False, allow_infinity=False, width=64))
def test_tidy_text_stays_within_four_ulps(value):
    from vpaudit.equations.convert import tidy_text

    text = tidy_text(value)
    assert abs(float(text) - value) <= 4 * math.ulp(value)
    assert len(text) <= len(repr(value))


def test_an_exact_conversion_prints_the_digits_a_person_would_type():
    # K -> degC adds 273.15 to the Antoine C and subtracts it from the range: the decimal
    # sums (Python's decimal module, exact) such as 20.55, not float noise such as
    # 20.55000000000001, once printed
    from decimal import Decimal

    from click.testing import CliRunner

    from vpaudit.cli import main

    out = (
        CliRunner()
        .invoke(main, ["convert", str(SAMPLE), "selmane-l1", "--temperature-unit", "degC"])
        .output
    )
    before = next(
        ln.split(",")
        for ln in (SAMPLE / "records" / "volatiles.csv").read_text().splitlines()
        if ln.startswith("selmane-l1,")
    )
    row = out.splitlines()[-1].split(",")
    assert row[10] == str(Decimal(before[10]) + Decimal("273.15"))
    assert row[15] == str(Decimal(before[15]) - Decimal("273.15")) == "20.55"


@pytest.mark.parametrize("form", ["wagner-3-6", "wagner-2.5-5"])
def test_wagner_at_the_critical_point_gives_the_limits_not_nan(form):
    # Wagner (1973), eq. 5, differentiated: at tau = 0 the slope has the finite limit
    # y' -> -a/Tc (the implied dH stays finite), while y'' diverges like tau^-0.5 through
    # the b term. A range stated as Tmin..Tc put 0/0 there and every such record drew a
    # false slope error.
    rec = {
        "id": "w",
        "substance": "w",
        "phase": "liquid",
        "form": form,
        "log_base": "e",
        "pressure_unit": "Pa",
        "A": -7.7,
        "B": 1.5,
        "C": -2.9,
        "D": -1.2,
        "t_crit": 560.0,
        "p_crit": 4.2e6,
        "t_min": 300.0,
        "t_max": 560.0,
    }
    c = curves_from_frame(frame([rec]))
    tc = 560.0
    y, y1, y2 = evaluate(c, np.array([tc, tc * (1 + 1e-12)]), 2)
    assert_allclose(y[0], math.log(4.2e6), rtol=1e-15)  # ln Pc at Tc
    assert_allclose(y1[0], [7.7 / tc] * 2, rtol=1e-9)  # -a/Tc, also a rounding above Tc
    assert np.isinf(y2[0, 0])
    # the limit agrees with a one-sided finite difference just below Tc
    h = 1e-4
    yl = evaluate(c, np.array([tc - h, tc - 2 * h]), 0)[0][0]
    assert_allclose((yl[0] - yl[1]) / h, 7.7 / tc, rtol=2e-3)


def test_wagner_compilation_ranges_ending_at_tc_draw_no_slope_error():
    # McGarry's Wagner 3,6 equations (chemicals, Psat_data_WagnerMcGarry) with the range
    # stated as Tmin..Tc, as compilations state it (tests/_support/compilations.py)
    from compilations import compilation_table

    from vpaudit.auditing import audit_table

    table = compilation_table("wagner")
    assert (table.records["t_max_text"] == table.records["t_crit_text"]).sum() >= 200
    result = audit_table(table, diagnose=False)
    assert not [f for f in result.findings if f.check == "slope-not-positive"]
    assert not [f for f in result.findings if "nan" in f.message or "n/a" in f.message]
