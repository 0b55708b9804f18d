"""fit_points: safe side, tolerance, preserved ends and duty, fewest segments.

There is no published worked example of this fit; its results are checked against invariants (property
tests on invented curves) and against an independent brute-force search over all vertex subsets.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom.errors import InputError
from heatloom.io.points import fit_points, fit_vertices

EPS = 1e-7


def deviation(t, x, vertices):
    """Fitted minus data temperature at every data point (fit = chords between kept points)."""
    vt, vx = t[vertices], x[vertices]
    return np.interp(x, vx, vt) - t


def admissible(t, x, vertices, tolerance, hot):
    d = deviation(t, x, list(vertices))
    if hot:  # fitted hot stream never hotter than the data, and at most `tolerance` colder
        return bool(np.all(d <= EPS) and np.all(d >= -tolerance - EPS))
    return bool(np.all(d >= -EPS) and np.all(d <= tolerance + EPS))


def brute_force_fewest(t, x, tolerance, hot):
    n = len(t)
    for k in range(0, n - 1):
        for inner in itertools.combinations(range(1, n - 1), k):
            if admissible(t, x, (0, *inner, n - 1), tolerance, hot):
                return k + 1
    raise AssertionError("every data interval as its own segment is always admissible")


@st.composite
def curves(draw, max_points=9):
    n = draw(st.integers(2, max_points))
    steps = st.floats(0.05, 60.0, allow_nan=False)
    dx = np.array(draw(st.lists(steps, min_size=n - 1, max_size=n - 1)))
    dt = np.array(draw(st.lists(steps, min_size=n - 1, max_size=n - 1)))
    hot = draw(st.booleans())
    duty_sign = draw(st.sampled_from([-1.0, 1.0]))
    t0 = draw(st.floats(-100.0, 600.0))
    q0 = draw(st.floats(-5000.0, 5000.0))
    rising = np.concatenate([[t0], t0 + np.cumsum(dt)])  # lowest temperature t0 >= -100 °C
    t = rising[::-1].copy() if hot else rising
    q = np.concatenate([[q0], q0 + duty_sign * np.cumsum(dx)])
    tolerance = draw(st.sampled_from([0.0, 0.1, 0.5, 2.0, 10.0]))
    return t, q, tolerance, hot


@settings(derandomize=True, max_examples=250, deadline=None)
@given(curves())
def test_fit_invariants_and_fewest_segments(curve):
    t, q, tolerance, hot = curve
    segs = fit_points(t, q, tolerance=tolerance)
    # ends and total duty preserved
    assert segs[0].supply_temperature == t[0] and segs[-1].target_temperature == t[-1]
    assert sum(s.duty for s in segs) == pytest.approx(abs(q[-1] - q[0]), rel=1e-9)
    assert all(s.is_hot == hot for s in segs)
    for a, b in zip(segs, segs[1:]):
        assert a.target_temperature == b.supply_temperature
    # the segments, drawn against cumulative duty, stay on the safe side within the tolerance
    x = np.abs(q - q[0])
    vx = np.concatenate([[0.0], np.cumsum([s.duty for s in segs])])
    vt = np.array([segs[0].supply_temperature] + [s.target_temperature for s in segs])
    d = np.interp(x, vx, vt) - t
    if hot:
        assert np.all(d <= EPS) and np.all(d >= -tolerance - EPS)
    else:
        assert np.all(d >= -EPS) and np.all(d <= tolerance + EPS)
    # and no admissible choice of data points uses fewer segments
    assert len(segs) == brute_force_fewest(t, x, tolerance, hot)


@settings(derandomize=True, max_examples=40, deadline=None)
@given(curves(max_points=60))
def test_longer_curves_keep_the_invariants(curve):
    t, q, tolerance, hot = curve
    v = fit_vertices(t, q, tolerance=tolerance)
    assert v[0] == 0 and v[-1] == len(t) - 1 and np.all(np.diff(v) > 0)
    assert admissible(t, np.abs(q - q[0]), v, tolerance, hot)


def test_straight_line_is_one_segment():
    t = np.linspace(300.0, 100.0, 200)
    q = np.linspace(0.0, 1000.0, 200)
    segs = fit_points(t, q, tolerance=0.0)
    assert len(segs) == 1 and segs[0].heat_capacity_flow == pytest.approx(5.0)


def test_curve_bending_the_unsafe_way_keeps_every_point():
    # a falling convex hot curve: every chord spanning two or more intervals lies above the data
    x = np.linspace(0.0, 100.0, 11)
    t = 100.0 + 0.01 * (100.0 - x) ** 2
    assert len(fit_points(t, x, tolerance=100.0)) == 10


def test_curve_bending_the_safe_way_merges_within_tolerance():
    x = np.linspace(0.0, 100.0, 11)
    t = 200.0 - 0.01 * x**2  # falling and concave: chords lie below the data (safe for a hot stream)
    segs = fit_points(t, x, tolerance=100.0)
    assert len(segs) == 1
    # with a tight tolerance more segments are needed, never more than the data intervals
    assert 1 < len(fit_points(t, x, tolerance=0.5)) <= 10


def test_example_cp_values():
    segs = fit_points([200, 150, 100, 90], [0, 50, 100, 200], tolerance=0.5)
    assert [(s.supply_temperature, s.target_temperature, s.heat_capacity_flow) for s in segs] == [
        (200.0, 100.0, 1.0), (100.0, 90.0, 10.0)]


def test_duty_may_run_in_either_direction():
    a = fit_points([20, 50, 90], [0, 30, 70], tolerance=0.1)
    b = fit_points([20, 50, 90], [-5, -35, -75], tolerance=0.1)
    assert a == b and len(a) == 1 and not a[0].is_hot


@pytest.mark.parametrize("t, q, match", [
    ([100.0], [0.0], "point 1: a temperature–duty curve needs at least two points, got 1"),
    ([100.0, 90.0], [0.0], "two lists of equal length"),
    ([100.0, 90.0, 95.0], [0.0, 1.0, 2.0], "point 3: temperature turns back at 95"),
    ([100.0, 90.0, 80.0], [0.0, 1.0, 0.5], "point 3: cumulative duty turns back"),
    ([100.0, 100.0], [0.0, 1.0], "point 2: temperature does not change"),
    ([100.0, 90.0], [1.0, 1.0], "point 2: cumulative duty does not change"),
    ([100.0, np.nan], [0.0, 1.0], "point 2: temperature must be a finite number"),
    ([100.0, 90.0], [0.0, np.inf], "point 2: cumulative duty must be a finite number"),
])
def test_invalid_points(t, q, match):
    with pytest.raises(InputError, match=match):
        fit_points(t, q, tolerance=0.5)


@pytest.mark.parametrize("tolerance", [-0.1, float("nan"), float("inf"), "half"])
def test_invalid_tolerance(tolerance):
    with pytest.raises(InputError, match="fit tolerance"):
        fit_points([100.0, 90.0], [0.0, 10.0], tolerance=tolerance)
