"""Tests of heatloom.equipment.segments: segment-wise sizing and profile cuts.

Checks are hand calculations (stated beside each) and agreement with the plain LMTD area of
:mod:`heatloom.equipment.sizing`, itself checked against ``ht`` in test_sizing.py.  Data in property tests
are invented (hypothesis).
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom.equipment.segments import ISOTHERMAL_GLIDE, cut_profile, size_segments, utility_segment
from heatloom.equipment.sizing import area_from_duty, lmtd, overall_coefficient
from heatloom.errors import InputError, TemperatureCrossError
from heatloom.model import Segment, Utility, UtilityKind

# --------------------------------------------------------------------------------------------------
# segment-wise sizing


@settings(derandomize=True, max_examples=100, deadline=None)
@given(st.floats(50, 400), st.floats(1, 100), st.floats(0.1, 20), st.floats(0.2, 5), st.floats(0.2, 5),
       st.floats(0.05, 0.9), st.floats(1, 50))
def test_single_segment_pair_equals_plain_lmtd(th1, dth, cph, hh, hc, frac_cold, approach):
    th2 = th1 - dth
    q = cph * dth
    tc2 = th1 - approach
    dtc = frac_cold * (tc2 + 200)                  # cold span, any size that keeps the cold end feasible
    tc1 = tc2 - dtc
    if not (th2 - tc1 > 1e-6):
        return
    hot = [Segment(th1, th2, cph, hh)]
    cold = [Segment(tc1, tc2, q / dtc, hc)]
    res = size_segments(hot, cold)
    plain = area_from_duty(q, overall_coefficient(hh, hc), lmtd(th1, th2, tc1, tc2))
    assert res.area == pytest.approx(plain, rel=1e-9)
    assert len(res.intervals) == 1


@settings(derandomize=True, max_examples=60, deadline=None)
@given(st.floats(0.05, 0.95), st.floats(0.05, 0.95))
def test_splitting_a_segment_does_not_change_area(f1, f2):
    # splitting linear segments at arbitrary points (same CP and h) leaves the area unchanged
    hot = [Segment(200, 120, 2.0, 0.8)]
    cold = [Segment(30, 110, 2.0, 1.2)]
    ref = size_segments(hot, cold, hot_fouling=0.2).area
    tm = 120 + 80 * f1
    tn = 30 + 80 * f2
    hot2 = [Segment(200, tm, 2.0, 0.8), Segment(tm, 120, 2.0, 0.8)]
    cold2 = [Segment(30, tn, 2.0, 1.2), Segment(tn, 110, 2.0, 1.2)]
    assert size_segments(hot2, cold2, hot_fouling=0.2).area == pytest.approx(ref, rel=1e-10)


def test_segment_sizing_hand_example():
    # hot 200→150 (CP 2, h 1) then 150→100 (CP 4, h 0.5); cold 40→140 (CP 3, h 1); 300 kW.
    # Hand calculation: cold end interval 200 kW, ΔT 60 → 43.33 K, U = 1/3; hot end 100 kW, ΔT 43.33 → 60 K, U = 1/2
    hot = [Segment(200, 150, 2.0, 1.0), Segment(150, 100, 4.0, 0.5)]
    cold = [Segment(40, 140, 3.0, 1.0)]
    res = size_segments(hot, cold)
    lm = (60 - 130 / 3) / math.log(60 / (130 / 3))
    assert [i.duty for i in res.intervals] == pytest.approx([200.0, 100.0])
    assert res.area == pytest.approx(200 / (lm / 3) + 100 / (lm / 2), rel=1e-12)
    assert res.intervals[0].cold_out == pytest.approx(40 + 200 / 3)
    assert res.to_frame()["area"].sum() == pytest.approx(res.area)
    # a fixed U replaces the film coefficients
    assert size_segments(hot, cold, u=0.5).area == pytest.approx(300 / (0.5 * lm), rel=1e-12)


def test_segment_sizing_breakpoints_of_both_sides():
    hot = [Segment(250, 200, 1.0, 1.0), Segment(200, 199, 100.0, 5.0), Segment(199, 150, 1.0, 1.0)]
    cold = [Segment(20, 100, 1.0, 1.0), Segment(100, 159.5, 2.0, 0.5)]
    res = size_segments(hot, cold)
    assert res.duty == pytest.approx(199.0)
    assert len(res.intervals) == 4
    assert sum(i.duty for i in res.intervals) == pytest.approx(199.0)


def test_cut_profile():
    segs = (Segment(200, 150, 1.0), Segment(150, 149, 300.0), Segment(149, 100, 2.0))
    cut = cut_profile(segs, 180, 120)
    assert [(s.supply_temperature, s.target_temperature) for s in cut] == [(180, 150), (150, 149), (149, 120)]
    assert sum(s.duty for s in cut) == pytest.approx(30 + 300 + 58)
    with pytest.raises(InputError, match="cut temperature 250 °C is outside the profile"):
        cut_profile(segs, 250, 120)
    with pytest.raises(InputError, match="runs against the profile"):
        cut_profile(segs, 120, 180)


def test_segment_sizing_errors():
    with pytest.raises(TemperatureCrossError, match=r"at 100 kW from the cold end the hot side is at 150 °C and "
                                                    r"the cold side at 160 °C"):
        size_segments([Segment(200, 150, 1.0, 1.0), Segment(150, 100, 2.0, 1.0)], [Segment(60, 210, 1.0, 1.0)])
    with pytest.raises(InputError, match="the hot side gives 100 kW but the cold side takes 90 kW"):
        size_segments([Segment(200, 100, 1.0, 1.0)], [Segment(20, 110, 1.0, 1.0)])
    with pytest.raises(InputError, match="has no film coefficient h"):
        size_segments([Segment(200, 100, 1.0)], [Segment(20, 120, 1.0, 1.0)])
    with pytest.raises(InputError, match="hot side segment 20 → 120 °C runs the wrong way"):
        size_segments([Segment(20, 120, 1.0, 1.0)], [Segment(20, 120, 1.0, 1.0)])
    with pytest.raises(InputError, match="do not chain"):
        size_segments([Segment(200, 150, 1.0, 1.0), Segment(140, 100, 1.0, 1.0)], [Segment(20, 110, 1.0, 1.0)])


def test_isothermal_utility_segment_sizes_as_condensing_steam():
    # condensing steam at 200 °C heats 1 kW/K from 40 to 140 °C (100 kW), U = 1 kW/(m²·K): by hand the LMTD
    # is (160 − 60)/ln(160/60) K and A = ln(8/3) m²; the tiny glide changes it by less than 1e-6 relative
    steam = Utility("steam", 200, 200, 100.0, UtilityKind.HOT)
    g = utility_segment(steam, 200.0, 200.0, 100.0, 5.0)
    assert (g.supply_temperature, g.target_temperature) == (200.0, 200.0 - ISOTHERMAL_GLIDE)
    assert g.duty == pytest.approx(100.0, rel=1e-12) and g.film_coefficient == 5.0
    area = size_segments([g], [Segment(40, 140, 1.0)], u=1.0).area
    assert area == pytest.approx(math.log(8 / 3), rel=1e-6)
    # a cold utility warms; a utility with a glide keeps it
    water = utility_segment(Utility("water", 20, 20, 1.0, UtilityKind.COLD), 20.0, 20.0, 10.0)
    assert water.target_temperature == 20.0 + ISOTHERMAL_GLIDE and not water.is_hot
    assert utility_segment(Utility("oil", 250, 200, 5.0), 250.0, 230.0, 40.0).heat_capacity_flow == 2.0
