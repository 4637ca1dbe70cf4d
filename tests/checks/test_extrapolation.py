"""The extrapolation allowance against the drift it stands for, measured on real data:
Landolt liquids (odd CAS numbers) against Poling's, McGarry's and Perry's equations for the
same substances, as ``chemicals`` carries them (benchmarks/extrapolation.py)."""

import sys
from pathlib import Path

import numpy as np
import pytest

from vpaudit.checks.extrapolation import allowance

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "benchmarks"))
extrapolation = pytest.importorskip("extrapolation")


def test_zero_inside_the_range_and_growing_outside():
    t = np.array([300.0, 400.0, 500.0, 600.0, 700.0])
    a = allowance(np.full(5, 400.0), np.full(5, 600.0), t)
    assert a[1] == a[2] == a[3] == 0.0
    assert a[0] > 0 and a[4] > 0
    assert allowance(400.0, 600.0, 280.0) > a[0]  # farther below, more


@pytest.fixture(scope="module")
def drift():
    return extrapolation.drift()


@pytest.mark.parametrize("side", ["below", "above"])
def test_the_allowance_is_the_measured_95th_percentile(drift, side):
    # at each distance (a fraction f of the temperature) the allowance covers about 95 %
    # of the real pairs -- between 90 and 98.5 % -- in every bin with 150 pairs or more
    for hi in extrapolation.EDGES[1:]:
        v = np.array(drift[(side, hi)])
        assert v.size >= 150
        ends = (1.0 + hi, 2.0) if side == "below" else (0.5, 1.0 - hi)
        lo = extrapolation.EDGES[extrapolation.EDGES.index(hi) - 1]
        # a pair's largest drift in the bin lies at most at the bin's far edge
        covered = np.mean(v <= allowance(*ends, 1.0))
        assert 0.90 <= covered <= 0.985, (side, lo, hi, covered)
