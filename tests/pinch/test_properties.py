"""Property tests of targeting (hypothesis, derandomised): invariants every correct problem table keeps.

Invented random stream sets only; the published checks are in test_published_targets.py.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom.model import Segment, Stream, StreamTable
from heatloom.pinch import grand_composite, target

SETTINGS = settings(max_examples=60, derandomize=True, deadline=None)


@st.composite
def stream_tables(draw, min_size=2, max_size=8):
    n = draw(st.integers(min_size, max_size))
    streams = []
    for i in range(n):
        a = draw(st.integers(0, 300))
        b = draw(st.integers(0, 300).filter(lambda x, a=a: x != a))
        cp = draw(st.integers(1, 200)) / 10
        streams.append(Stream.simple(f"S{i}", a, b, cp))
    return StreamTable(streams)


def naive_targets(streams: StreamTable, dt_min: float) -> tuple[float, float]:
    """Textbook problem table written plainly, interval by interval (for cross-checking only)."""
    shifted = []
    for s in streams:
        d = -dt_min / 2 if s.is_hot else dt_min / 2
        shifted.append((s.supply_temperature + d, s.target_temperature + d,
                        s.segments[0].heat_capacity_flow, s.is_hot))
    bounds = sorted({t for a, b, _, _ in shifted for t in (a, b)}, reverse=True)
    cascade, worst = 0.0, 0.0
    for top, bottom in zip(bounds, bounds[1:]):
        net = 0.0
        for a, b, cp, hot in shifted:
            if min(a, b) <= bottom and max(a, b) >= top:
                net += cp if hot else -cp
        cascade += net * (top - bottom)
        worst = min(worst, cascade)
    return -worst, cascade - worst


@SETTINGS
@given(stream_tables(), st.integers(0, 40))
def test_energy_balance_closes(streams, dt_min):
    t = target(streams, dt_min)
    hot = sum(s.duty for s in streams.hot)
    cold = sum(s.duty for s in streams.cold)
    assert t.hot_utility - t.cold_utility == pytest.approx(cold - hot, abs=1e-9 * (hot + cold + 1))
    assert t.hot_utility >= 0 and t.cold_utility >= 0
    assert np.all(t.table.heat_flow >= 0)


@SETTINGS
@given(stream_tables(), st.integers(0, 40))
def test_agrees_with_plain_interval_loop(streams, dt_min):
    qh, qc = naive_targets(streams, dt_min)
    t = target(streams, dt_min)
    scale = sum(s.duty for s in streams) + 1
    assert t.hot_utility == pytest.approx(qh, abs=1e-9 * scale)
    assert t.cold_utility == pytest.approx(qc, abs=1e-9 * scale)


@SETTINGS
@given(stream_tables(), st.integers(0, 40), st.randoms(use_true_random=False))
def test_independent_of_stream_order(streams, dt_min, rnd):
    shuffled = list(streams)
    rnd.shuffle(shuffled)
    a, b = target(streams, dt_min), target(StreamTable(shuffled), dt_min)
    assert a.hot_utility == pytest.approx(b.hot_utility, abs=1e-9)
    assert a.cold_utility == pytest.approx(b.cold_utility, abs=1e-9)
    assert [p.shifted for p in a.pinches] == [p.shifted for p in b.pinches]


@SETTINGS
@given(stream_tables(), st.integers(0, 40), st.floats(0.05, 0.95))
def test_splitting_a_stream_into_segments_changes_nothing(streams, dt_min, where):
    s0 = streams.streams[0]
    g = s0.segments[0]
    mid = g.supply_temperature + where * (g.target_temperature - g.supply_temperature)
    split = Stream(s0.name, (Segment(g.supply_temperature, mid, g.heat_capacity_flow),
                             Segment(mid, g.target_temperature, g.heat_capacity_flow)))
    other = StreamTable((split, *streams.streams[1:]))
    a, b = target(streams, dt_min), target(other, dt_min)
    scale = sum(s.duty for s in streams) + 1
    assert a.hot_utility == pytest.approx(b.hot_utility, abs=1e-9 * scale)
    assert a.cold_utility == pytest.approx(b.cold_utility, abs=1e-9 * scale)


@SETTINGS
@given(stream_tables(), st.integers(0, 39), st.integers(1, 10))
def test_targets_grow_with_dtmin(streams, dt_min, step):
    a, b = target(streams, dt_min), target(streams, dt_min + step)
    tol = 1e-9 * (sum(s.duty for s in streams) + 1)
    assert b.hot_utility >= a.hot_utility - tol
    assert b.cold_utility >= a.cold_utility - tol


@SETTINGS
@given(stream_tables(), st.integers(0, 40), st.integers(-200, 200))
def test_shifting_every_temperature_moves_only_the_pinch(streams, dt_min, offset):
    moved = StreamTable([Stream.simple(s.name, s.supply_temperature + offset, s.target_temperature + offset,
                                       s.segments[0].heat_capacity_flow) for s in streams])
    a, b = target(streams, dt_min), target(moved, dt_min)
    scale = sum(s.duty for s in streams) + 1
    assert a.hot_utility == pytest.approx(b.hot_utility, abs=1e-9 * scale)
    assert [p.shifted + offset for p in a.pinches] == pytest.approx([p.shifted for p in b.pinches])


@SETTINGS
@given(stream_tables(), st.integers(0, 40))
def test_grand_composite_touches_zero_at_every_pinch(streams, dt_min):
    t = target(streams, dt_min)
    g = grand_composite(t.table)
    for p in t.pinches:
        assert np.interp(p.shifted, g.temperature, g.enthalpy) == 0
    assert g.enthalpy.min() >= 0
    assert g.enthalpy[-1] == pytest.approx(t.hot_utility) and g.enthalpy[0] == pytest.approx(t.cold_utility)


@SETTINGS
@given(stream_tables(), st.integers(0, 40))
def test_composites_are_dt_min_apart_at_the_pinch(streams, dt_min):
    t = target(streams, dt_min)
    hot, cold = t.hot_composite(), t.cold_composite()
    if not (hot.enthalpy.size and cold.enthalpy.size):
        return
    tol = 1e-9 * (hot.enthalpy[-1] + cold.enthalpy[-1])
    # The hot composite lies at least ΔTmin above the cold one: in temperature terms, the hot heat
    # below T + ΔTmin never exceeds the cold curve's enthalpy at T (cold utility included). Both are
    # continuous, monotone functions of T, so checking every breakpoint of either is enough.
    temps = np.unique(np.concatenate([cold.temperature, hot.temperature - dt_min]))
    h_hot = np.interp(temps + dt_min, hot.temperature, hot.enthalpy)
    h_cold = np.interp(temps, cold.temperature, cold.enthalpy)
    assert np.all(h_hot <= h_cold + tol)
    for p in t.pinches:
        # the two curves meet at the pinch: same enthalpy at the hot and the cold pinch temperature
        assert math.isclose(np.interp(p.hot, hot.temperature, hot.enthalpy),
                            np.interp(p.cold, cold.temperature, cold.enthalpy), abs_tol=tol)
