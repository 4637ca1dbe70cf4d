"""The crossing search: the four-point path for log-linear pairs gives the grid scan's
results (issue: the vectorized checks must equal the straightforward ones)."""

import dataclasses

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from vpaudit.checks.crossings import crossings
from vpaudit.checks.extrema import sampled
from vpaudit.equations.engine import Curves

TOL = 0.05  # the default melting-point tolerance in ln P
GRID = 32  # the default grid of the no-crossing check
WINDOW = 0.3


def _pairs(liquid: np.ndarray, diff: np.ndarray) -> tuple[Curves, Curves]:
    """Three-term curves (A, B, C in ln P = A + B/T + C ln T): the liquid, and the solid
    whose difference from it is ``diff``."""
    k = len(liquid)
    params_l = np.zeros((k, 8))
    params_l[:, :3] = liquid
    params_s = params_l.copy()
    params_s[:, :3] += diff
    fam = np.zeros(k, dtype=np.int8)
    lo, hi = np.full(k, 100.0), np.full(k, 5000.0)
    return Curves(fam, params_s, lo, hi), Curves(fam, params_l, lo, hi)


def _both(cs, cl, anchor):
    fast = crossings(cs, cl, anchor, WINDOW, GRID, TOL, exact=True)
    scan = crossings(cs, cl, anchor, WINDOW, GRID, TOL, exact=False)
    return fast, scan


def _difference_near(rng_or_values, anchor):
    """Difference curves A + B x - C ln x (x = 1/T) with their stationary point and
    their value at the anchor spread around the window, so that 0, 1 and 2 crossings,
    near-tangent ones and ones beyond the window all occur."""
    c, s, delta = rng_or_values
    x_a = 1.0 / anchor
    b = c / (x_a * (1.0 + s))
    a = delta - b * x_a + c * np.log(x_a)
    return np.column_stack([a, b, c])


def test_four_point_path_equals_the_grid_scan_on_many_random_pairs():
    rng = np.random.default_rng(7)
    k = 40000
    anchor = rng.uniform(250.0, 3500.0, k)
    c = rng.choice([-1.0, 1.0], k) * 10 ** rng.uniform(-2, 2.5, k)
    c[rng.random(k) < 0.05] = 0.0  # straight lines in 1/T
    s = rng.uniform(-0.6, 0.6, k)
    delta = rng.normal(0.0, 0.4, k)
    diff = _difference_near((c, s, delta), anchor)
    diff[rng.random(k) < 0.05, 1] = 0.0  # B = 0: no stationary point
    liquid = np.column_stack(
        [rng.uniform(15, 30, k), -rng.uniform(2e3, 6e4, k), rng.uniform(-5, 1, k)]
    )
    cs, cl = _pairs(liquid, diff)
    fast, scan = _both(cs, cl, anchor)
    count, sig, t, y, slope = fast
    assert np.array_equal(count, scan[0])
    assert np.array_equal(sig, scan[1])
    # the same crossing: the roots come from different brackets, so they agree to the
    # root finder's tolerance, not bit for bit
    assert np.array_equal(np.isnan(t), np.isnan(scan[2]))
    np.testing.assert_allclose(t, scan[2], rtol=1e-9)
    np.testing.assert_allclose(y, scan[3], rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(slope, scan[4], rtol=1e-6, atol=1e-12)
    # and the sample holds every case the shortcut must get right
    assert {0, 1, 2} <= set(count.tolist()) and {0, 1, 2} <= set(sig.tolist())


@settings(max_examples=300, deadline=None)
@given(
    anchor=st.floats(200.0, 4000.0),
    c=st.floats(-300.0, 300.0),
    s=st.floats(-0.9, 0.9),
    delta=st.floats(-2.0, 2.0),
)
def test_four_point_path_equals_the_grid_scan(anchor, c, s, delta):
    diff = _difference_near((np.array([c]), np.array([s]), np.array([delta])), anchor)
    cs, cl = _pairs(np.array([[20.0, -2e4, -1.0]]), diff)
    fast, scan = _both(cs, cl, np.array([anchor]))
    assert fast[0][0] == scan[0][0] and fast[1][0] == scan[1][0]
    if np.isnan(scan[2][0]):
        assert np.isnan(fast[2][0])
    else:
        assert fast[2][0] == pytest.approx(scan[2][0], rel=1e-9)


def test_pairs_outside_the_shortcut_still_take_the_scan():
    """An Antoine liquid (family 1) cannot use the shortcut; its result comes from the scan
    and must not be disturbed by log-linear neighbours in the same block."""
    liquid = np.array([[21.0, -4000.0, -1.0], [21.0, -4000.0, -1.0]])
    diff = np.array([[0.0, -800.0, 0.0], [0.0, -800.0, 0.0]])
    cs, cl = _pairs(liquid, diff)
    anchor = np.array([1000.0, 1000.0])
    ref = crossings(cs, cl, anchor, WINDOW, GRID, TOL, exact=False)
    fam = cl.family.copy()
    fam[1] = 1  # pretend the second liquid is an Antoine curve: A - B/(T + C) with C = 0
    p = cl.params.copy()
    p[1] = [21.0, 4000.0, 0.0, 0, 0, 0, 0, 0]  # the same curve written as Antoine
    cl2 = Curves(fam, p, cl.t_min, cl.t_max)
    got = crossings(cs, cl2, anchor, WINDOW, GRID, TOL, exact=True)
    for a, b in zip(got, ref, strict=True):
        np.testing.assert_allclose(a, b, rtol=1e-9)


def test_closed_form_range_ends_equal_the_general_evaluation():
    """Range extrema of log-linear curves without a D term are taken in closed form
    (dH = R (C T - B), dCp = R C); they must equal the engine's analytic derivatives
    (dH = R T^2 y', dCp = R (2 T y' + T^2 y'')) at the same temperatures."""
    from vpaudit.constants import R
    from vpaudit.equations.engine import evaluate

    rng = np.random.default_rng(11)
    k = 5000
    params = np.zeros((k, 8))
    params[:, 0] = rng.uniform(10, 40, k)
    params[:, 1] = -rng.uniform(1e3, 8e4, k)
    params[:, 2] = rng.uniform(-6, 3, k)
    lo = rng.uniform(100, 2000, k)
    hi = lo * rng.uniform(1.05, 3.0, k)
    curves = Curves(np.zeros(k, dtype=np.int8), params, lo, hi)
    h, ts, y, cp = sampled(curves, lo, hi)
    yy, y1, y2 = evaluate(curves, ts)
    assert np.array_equal(y, yy)  # the same operations: the same bits
    np.testing.assert_allclose(h, R * ts * ts * y1, rtol=1e-9)
    np.testing.assert_allclose(cp, R * (2 * ts * y1 + ts * ts * y2), rtol=1e-6, atol=1e-9)
    assert np.array_equal(ts[:, 0], lo) and np.array_equal(ts[:, 1], hi)


def test_range_sampling_of_no_curves_is_empty():
    """An empty block of curves gives empty samples, not an error."""

    c = Curves(np.zeros(0, np.int8), np.zeros((0, 8)), np.zeros(0), np.zeros(0))
    h, ts, y, cp = sampled(c, c.t_min, c.t_max)
    assert h.shape == ts.shape == y.shape == cp.shape == (0, 2)


def test_range_extrema_in_closed_form_equal_the_blockwise_reductions():
    """Plain log-linear records are reduced over whole columns (_plain_extrema); every key
    of the range extrema must equal, to the bit, what the block path gives the same records
    (ties of dH at both ends with C = 0, base-10 and mmHg records, ranges crossing the
    10 kPa limit, a critical temperature cutting the ideal part, Antoine records beside)."""
    from refdata import table_from_rows

    from vpaudit.checks._context import AuditContext
    from vpaudit.policy import Policy

    rng = np.random.default_rng(5)
    records, refs = [], []
    for i in range(600):
        lo = float(rng.uniform(150, 1500))
        rec = {
            "id": f"r{i}",
            "substance": f"s{i // 2}",
            "phase": "solid" if i % 2 == 0 else "liquid",
            "form": "three-term",
            "A": float(rng.uniform(15, 35)),
            "B": float(-rng.uniform(2e3, 6e4)),
            "C": 0.0 if i % 7 == 0 else float(rng.uniform(-4, 2)),
            "t_min": lo,
            "t_max": lo * float(rng.uniform(1.05, 3.0)),
            "log_base": "e",
            "pressure_unit": "Pa",
            "source": "invented for this test",
        }
        if i % 5 == 0:
            rec.update(log_base="10", pressure_unit="mmHg", A=rec["A"] / 2.3, B=rec["B"] / 2.3)
        if i % 11 == 0:
            rec.update(form="antoine", A=21.0, B=3000.0, C=-40.0, temperature_unit="K")
        records.append(rec)
        if i % 6 == 0:
            refs.append(
                {
                    "substance": rec["substance"],
                    "quantity": "critical_temperature",
                    "value": lo * 1.6,
                    "unit": "K",
                    "source": "invented for this test",
                }
            )
    ctx = AuditContext(table_from_rows(records, refs), Policy())
    with np.errstate(all="ignore"):
        fast = ctx.extrema_over_ranges(closed_form=True)
        blocks = ctx.extrema_over_ranges(closed_form=False)
    assert np.isfinite(fast.cp_hi).sum() > 100  # the dCp part is exercised
    assert (fast.cp_hi < ctx.curves.t_max).sum() > 50  # cut by 10 kPa or 0.7 Tc
    for f in dataclasses.fields(blocks):
        key = f.name
        np.testing.assert_array_equal(getattr(fast, key), getattr(blocks, key), err_msg=key)


def test_pairs_with_d_terms_scan_their_difference_as_one_curve():
    """Where both curves are log-linear with at most one D T^E term between them, or one E
    in both, the scan evaluates y_s - y_l as one curve (A, B, C, D subtract): the same
    sign changes and brackets as evaluating each curve, on 20,000 random invented pairs
    (E = 1, E = -3, a D term in one curve only, and different exponents, which keep two
    evaluations)."""
    from vpaudit.checks.crossings import _difference_curves, _scan_crossings

    rng = np.random.default_rng(11)
    k = 20000
    anchor = rng.uniform(250.0, 3500.0, k)
    liquid = np.column_stack(
        [rng.uniform(15, 30, k), -rng.uniform(2e3, 6e4, k), rng.uniform(-5, 1, k)]
    )
    c = rng.choice([-1.0, 1.0], k) * 10 ** rng.uniform(-2, 1.5, k)
    diff = _difference_near((c, rng.uniform(-0.6, 0.6, k), rng.normal(0.0, 0.4, k)), anchor)
    cs, cl = _pairs(liquid, diff)
    exponent = rng.choice([1.0, -3.0], (2, k))
    for curves, e in ((cs, exponent[0]), (cl, exponent[1])):
        has = rng.random(k) < 0.7
        scale = np.where(e == 1.0, 1e-5 / anchor, 1e-2 * anchor**3)
        curves.params[:, 3] = np.where(has, rng.normal(0.0, 1.0, k) * scale, 0.0)
        curves.params[:, 4] = e
    simple, joint, d = _difference_curves(cs, cl)
    assert 0.5 * k < joint.sum() < k and not simple[joint & (cs.params[:, 3] != 0)].any()
    x_lo, x_hi = 1.0 / (anchor * (1.0 + WINDOW)), (1.0 + WINDOW) / anchor
    got = _scan_crossings(cs, cl, joint, d, x_lo, x_hi, 1.0 / anchor, GRID, TOL)
    ref = _scan_crossings(cs, cl, np.zeros(k, dtype=bool), d, x_lo, x_hi, 1.0 / anchor, GRID, TOL)
    for a, b in zip(got, ref, strict=True):
        np.testing.assert_array_equal(a, b)
    assert {0, 1, 2} <= set(got[0].tolist())
