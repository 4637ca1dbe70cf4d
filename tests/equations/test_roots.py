"""The vectorized root finders against scipy's Brent solver (scipy.optimize.brentq), on the
difference curves the crossing search solves, g(x) = A + B x - C ln x with x = 1/T, in the
cases that used to cost tens of iterations: rounding noise near the root, and roots at the
end of the bracket."""

import numpy as np
from scipy.optimize import brentq

from vpaudit.checks.crossings import newton_from_end
from vpaudit.equations.engine import bracketed_root


def _counted(a, b, c):
    calls = []

    def fun(x, r):
        calls.append(r.size)
        return a[r] + b[r] * x - c[r] * np.log(x), b[r] - c[r] / x

    return fun, calls


def _brent(a, b, c, lo, hi):
    out = np.full(lo.size, np.nan)
    for i in range(lo.size):
        g = lambda x, i=i: a[i] + b[i] * x - c[i] * np.log(x)  # noqa: E731
        if g(lo[i]) == 0 or g(hi[i]) == 0:  # a root at an end is that end
            out[i] = lo[i] if g(lo[i]) == 0 else hi[i]
        elif g(lo[i]) * g(hi[i]) < 0:
            out[i] = brentq(g, lo[i], hi[i], xtol=1e-22, rtol=4 * np.finfo(float).eps)
    return out


def test_rounding_noise_near_the_root_ends_the_search():
    # A root where g is evaluated with cancellation (|A| ~ 150, g ~ 1e-14 near the root):
    # Newton's steps cycle by a few ulps around it. The search must stop there, not run
    # to its iteration cap (82 evaluations before the guard).
    k = 300
    a, b, c = np.full(k, -149.74785209127052), np.full(k, 4517.647058823528), np.full(k, 24.0)
    lo, hi = np.linspace(1 / 260, 0.00499, k), np.full(k, 0.00530149)
    fun, calls = _counted(a, b, c)
    root = bracketed_root(fun, lo, hi)
    assert len(calls) <= 12
    np.testing.assert_allclose(root, _brent(a, b, c, lo, hi), rtol=1e-12)


def test_roots_at_the_end_of_the_bracket_are_found_without_bisecting_to_them():
    # Roots at the high end of the bracket to rounding (A chosen so that g(x_hi) = 0 in
    # exact arithmetic): Newton lands on or just past the end, which used to be traded for
    # a bisection, 30-40 halvings per such root.
    rng = np.random.default_rng(3)
    k = 3000
    hi = 1 / rng.uniform(300, 3000, k)
    lo = 0.7 * hi
    b, c = -rng.uniform(2e3, 6e4, k), rng.uniform(-3, 3, k)
    a = -b * hi + c * np.log(hi)
    fun, calls = _counted(a, b, c)
    root = bracketed_root(fun, lo, hi)
    assert len(calls) <= 15
    ref = _brent(a, b, c, lo, hi)
    assert np.array_equal(np.isnan(root), np.isnan(ref))
    np.testing.assert_allclose(root, ref, rtol=1e-12)


def test_newton_from_the_outer_end_equals_brent_on_convex_and_concave_curves():
    # newton_from_end: both sides of the extreme point of convex (C > 0) and concave
    # (C < 0) curves, including near-double roots (the extreme value just past zero).
    rng = np.random.default_rng(8)
    k = 4000
    x_star = 1 / rng.uniform(300, 3000, k)
    c = rng.choice([-1.0, 1.0], k) * 10 ** rng.uniform(-2, 2.5, k)
    b = c / x_star
    depth = -np.sign(c) * 10 ** rng.uniform(-9, 0, k)  # g at the extreme point
    a = depth - b * x_star + c * np.log(x_star)
    for lo, hi, start, other in (
        (0.6 * x_star, x_star, 0.6 * x_star, x_star),  # left side, from its outer end
        (x_star, 1.5 * x_star, 1.5 * x_star, x_star),  # right side, from its outer end
    ):
        ref = _brent(a, b, c, lo, hi)
        has = np.isfinite(ref)
        assert has.sum() > 0.8 * k
        got = newton_from_end(a[has], b[has], c[has], start[has], other[has])
        # near a double root the root itself is ill-conditioned (g' -> 0): there the two
        # agree in the residual, elsewhere in the root
        well = np.abs(depth[has]) > 1e-6
        np.testing.assert_allclose(got[well], ref[has][well], rtol=1e-10)
        residual = a[has] + b[has] * got - c[has] * np.log(got)
        assert np.abs(residual).max() < 1e-11
        assert ((got >= lo[has]) & (got <= hi[has])).all()
