"""Merging the units of a tick-off placement: a stretch of a stream re-split, one unit per partner.

The rule checked: a stream split into parallel branches lets one stream serve several partners with one
unit each (stream splitting in the pinch design method, Linnhoff & Hindmarsh 1983, Chem. Eng. Sci. 38(5),
745-763, section 4).  The small cases are invented data (labelled below); every result is checked
against energy balances and temperature differences worked out by hand in the comments, not against
values heatloom produced.  The larger case checks invariants (each side's cover, ΔTmin in every unit)
on the generated benchmark problem, itself invented data.
"""

import sys
from pathlib import Path

import numpy as np
import pytest

from heatloom.network.merge import merge_units, unit_approach
from heatloom.network.placement import Side

# Invented: H 150 → 50 °C at 2 kW/K (200 kW); C1 20 → 70 °C and C2 30 → 80 °C at 2 kW/K (100 kW each);
# every side's shift 5 K, so each unit needs 10 K.
H = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
C1 = Side("C1", False, (20.0, 70.0), (0.0, 100.0), 5.0)
C2 = Side("C2", False, (30.0, 80.0), (0.0, 100.0), 5.0)


def cover(units, k, sides):
    """Shares of side k covering each point of its enthalpy (midpoints of a fine grid) [-]."""
    grid = np.linspace(0.0, sides[k].duty, 401)
    mid = 0.5 * (grid[1:] + grid[:-1])
    out = np.zeros(mid.size)
    for i, j, r, _ in units:
        for side, (a, b, f) in ((i, r[:3]), (j, r[3:])):
            if side == k and not sides[k].utility:
                out += f * ((mid > a) & (mid < b))
    return out


def test_staircase_becomes_two_parallel_branches():
    # H cooled alternately by C1 and C2 in four 50 kW units (each keeps ΔTmin, by hand):
    # 150→125 against C1 45→70 (80 K, 80 K); 125→100 against C2 55→80 (45 K, 45 K);
    # 100→75 against C1 20→45 (55 K, 55 K); 75→50 against C2 30→55 (20 K, 20 K).
    staircase = [(0, 1, (0.0, 50.0, 1.0, 50.0, 100.0, 1.0), 50.0), (0, 2, (50.0, 100.0, 1.0, 50.0, 100.0, 1.0), 50.0),
                 (0, 1, (100.0, 150.0, 1.0, 0.0, 50.0, 1.0), 50.0), (0, 2, (150.0, 200.0, 1.0, 0.0, 50.0, 1.0), 50.0)]
    sides = [H, C1, C2]
    merged = sorted(merge_units(sides, staircase))
    assert len(merged) == 2
    for (_, _, r, q), partner in zip(merged, (C1, C2)):
        h0, h1, fh, c0, c1, fc = r
        # one branch of half the flow (CP 1 kW/K, no more than the partner's 2 kW/K) over the whole of H:
        # 1 kW/K × (150 − 50) K = 100 kW = the partner's 2 kW/K × 50 K
        assert (h0, h1, fc, c0, c1) == (0.0, 200.0, 1.0, 0.0, 100.0)
        assert fh == pytest.approx(0.5, rel=1e-12)
        assert q == pytest.approx(100.0, rel=1e-12)
        assert fh * 2.0 * (150.0 - 50.0) == pytest.approx(2.0 * (partner.temperatures[1] - partner.temperatures[0]))
    # approaches by hand: C1 150 − 70 = 80 K and 50 − 20 = 30 K; C2 150 − 80 = 70 K and 50 − 30 = 20 K,
    # each less the 10 K needed
    assert unit_approach(H, *merged[0][2][:3], C1, *merged[0][2][3:]) == pytest.approx(20.0)
    assert unit_approach(H, *merged[1][2][:3], C2, *merged[1][2][3:]) == pytest.approx(10.0)
    for k in range(3):   # every point of every stream still carries its whole flow
        assert cover(merged, k, sides) == pytest.approx(cover(staircase, k, sides))


def test_block_in_series_when_a_parallel_branch_would_break_dt_min():
    # Invented: H 150 → 50 °C at 2 kW/K; C1 90 → 130 °C at 1 kW/K (40 kW), C2 20 → 100 °C at 2 kW/K
    # (160 kW).  Four units, each checked by hand:
    # 150→140 / C1 110→130 (20, 30 K); 140→130 / C2 90→100 (40, 40 K);
    # 130→120 / C1 90→110 (20, 30 K); 120→50 / C2 20→90 (30, 30 K).
    h = H
    c1 = Side("C1", False, (90.0, 130.0), (0.0, 40.0), 5.0)
    c2 = Side("C2", False, (20.0, 100.0), (0.0, 160.0), 5.0)
    units = [(0, 1, (0.0, 20.0, 1.0, 20.0, 40.0, 1.0), 20.0), (0, 2, (20.0, 40.0, 1.0, 140.0, 160.0, 1.0), 20.0),
             (0, 1, (40.0, 60.0, 1.0, 0.0, 20.0, 1.0), 20.0), (0, 2, (60.0, 200.0, 1.0, 0.0, 140.0, 1.0), 140.0)]
    sides = [h, c1, c2]
    for i, j, r, _ in units:
        assert unit_approach(sides[i], *r[:3], sides[j], *r[3:]) >= 0.0
    merged = sorted(merge_units(sides, units))
    # in parallel the C1 branch (0.2 of the flow) would leave at 50 °C against C1's inlet 90 °C; in series
    # C1 takes H from 150 to 130 °C (2 × 20 = 40 kW: 150 − 130 = 20 K, 130 − 90 = 40 K) and C2 the rest,
    # 130 → 50 °C (2 × 80 = 160 kW: 130 − 100 = 30 K, 50 − 20 = 30 K)
    assert [(i, j, r, q) for i, j, r, q in merged] == [(0, 1, (0.0, 40.0, 1.0, 0.0, 40.0, 1.0), 40.0),
                                                       (0, 2, (40.0, 200.0, 1.0, 0.0, 160.0, 1.0), 160.0)]
    assert [h.temperature(40.0), h.temperature(200.0)] == [130.0, 50.0]


def test_units_stay_when_a_partner_is_not_one_rectangle():
    # Invented: H's two units with C1 take C1 at different shares of its flow (C1's other branch goes to
    # C2's... here simply left to a third unit); C1's pieces do not join into one stretch at one share, so
    # nothing merges.
    c3 = Side("C3", False, (20.0, 70.0), (0.0, 100.0), 5.0)
    units = [(0, 1, (0.0, 50.0, 1.0, 50.0, 100.0, 1.0), 50.0),
             (0, 1, (50.0, 100.0, 1.0, 0.0, 50.0 / 0.8, 0.8), 50.0),
             (0, 2, (100.0, 200.0, 1.0, 0.0, 100.0, 1.0), 100.0)]
    sides = [H, C1, c3]
    assert sorted(merge_units(sides, units)) == sorted(units)


@pytest.mark.parametrize("n", [20, pytest.param(40, marks=pytest.mark.slow)])
def test_every_stream_carries_its_whole_flow_after_merging(n):
    """On the invented benchmark problems (benchmarks/bench_design.py, ΔTmin 10 K; tick-off method, whose
    units are merged): at every temperature of every stream the branches of its units add up to its whole
    flow, each unit's duty is its share × CP × its temperature change, and ΔTmin holds (check_network)."""
    sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "benchmarks"))
    from bench_design import generated

    from heatloom.network import check_network, design_mer

    table = generated(n)
    net = design_mer(table, 10.0, time_limit=30.0, default_film_coefficient=1.0)
    check_network(net, table)
    for s in table:
        cp = s.segments[0].heat_capacity_flow
        lo, hi = sorted((s.supply_temperature, s.target_temperature))
        grid = np.linspace(lo, hi, 801)
        mid = 0.5 * (grid[1:] + grid[:-1])
        flow = np.zeros(mid.size)
        units = [(u.hot_in, u.hot_out, u.hot_fraction, u.duty) for u in (*net.exchangers, *net.coolers)
                 if u.hot == s.name] + \
                [(u.cold_in, u.cold_out, u.cold_fraction, u.duty) for u in (*net.exchangers, *net.heaters)
                 if u.cold == s.name]
        for t_in, t_out, f, q in units:
            a, b = sorted((t_in, t_out))
            assert q == pytest.approx(f * cp * (b - a), rel=1e-6)
            flow += f * ((mid > a + 1e-9) & (mid < b - 1e-9))
        # points within 1e-6 K of a unit's end are not counted above; none of the midpoints is that close
        assert flow == pytest.approx(1.0, abs=1e-6)
