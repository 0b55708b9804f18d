"""One utility unit for the branches of a split stream that each end in that utility.

The rule checked: below the pinch every cold stream at the pinch needs a hot partner with CP_hot >=
CP_cold, so where the cold streams at the pinch outnumber the hot ones a hot stream is split (the
pinch design method, Linnhoff & Hindmarsh 1983, Chem. Eng. Sci. 38(5), 745-763, stream splitting at the
pinch); Euler's minimum-units target N − 1 is from the same paper.  The branches then leave their
process units at different temperatures; mixed (non-isothermally, by enthalpy) they need one cooler, not
one each.  The problems are invented data (labelled below); every expected value is worked out by hand in
the comments, not taken from heatloom.
"""

import pytest

import heatloom.network.design as design_module
import heatloom.network.tickoff as tickoff_module
from heatloom.model import StreamTable, Utility
from heatloom.network import check_network, design_mer
from heatloom.network.merge import unit_approach
from heatloom.network.placement import Side
from heatloom.network.tickoff import tick_off_placement
from heatloom.network.utility_tails import join_utility_tails

# Invented, below a pinch at 100/90 °C (ΔTmin 10 K, each side shifted 5 K): H 100→40 °C, CP 4 kW/K
# (240 kW); C1 70→90 °C, CP 2 (40 kW); C2 60→90 °C, CP 1.5 (45 kW); the cold utility at 10 °C takes
# 240 − 85 = 155 kW.
H = Side("H", True, (100.0, 40.0), (0.0, 240.0), 5.0)
C1 = Side("C1", False, (70.0, 90.0), (0.0, 40.0), 5.0)
C2 = Side("C2", False, (60.0, 90.0), (0.0, 45.0), 5.0)
CU = Side("cu", False, (10.0, 10.0), (0.0, 155.0), 5.0, utility=True)
CP = {"H": 4.0, "C1": 2.0, "C2": 1.5}


def test_two_coolers_on_two_branches_become_one():
    # H split in halves (CP 2 each): one half against C1 from 100 to 80 °C (40 kW, stretch 0-80 kW of H at
    # full flow), the other against C2 from 100 to 77.5 °C (45 kW, stretch 0-90 kW); then a cooler on each
    # half: 80→40 °C (80 kW) and 77.5→40 °C (75 kW).  Mixed, the halves are at (80 + 77.5) / 2 = 78.75 °C
    # and one cooler takes 4 × (78.75 − 40) = 155 kW (by hand).
    sides = [H, C1, C2, CU]
    units = [(0, 1, (0.0, 80.0, 0.5, 0.0, 40.0, 1.0), 40.0), (0, 2, (0.0, 90.0, 0.5, 0.0, 45.0, 1.0), 45.0),
             (0, 3, (80.0, 240.0, 0.5, 0.0, 80.0, 1.0), 80.0), (0, 3, (90.0, 240.0, 0.5, 80.0, 155.0, 1.0), 75.0)]
    out = join_utility_tails(sides, units, 1e-9)
    assert out[:2] == units[:2]   # the process units are kept as they are
    assert len(out) == 3
    i, j, (h0, h1, fh, c0, c1, fc), q = out[2]
    assert (i, j, q, fh) == (0, 3, pytest.approx(155.0), pytest.approx(1.0))
    assert H.temperature(h0) == pytest.approx(78.75)
    assert H.temperature(h1) == pytest.approx(40.0)
    assert (c0, c1, fc) == pytest.approx((0.0, 155.0, 1.0))
    # the cooler keeps 10 K: 40 − 10 = 30 K at its cold end, 20 K above ΔTmin (by hand)
    assert unit_approach(H, h0, h1, fh, CU, c0, c1, fc) == pytest.approx(20.0)


def test_a_cooler_that_leaves_flow_to_a_process_unit_is_not_joined():
    # The same halves, but the second cooler stops at 60 °C (stretch 90-200 kW, 55 kW) and that half ends
    # against C2 below it: the share in the cooler falls at 60 °C, so a branch would leave the utility for
    # a process unit; no tail, nothing joined.  And one cooler alone is left as it is.
    sides = [H, C1, C2, CU]
    units = [(0, 3, (80.0, 240.0, 0.5, 0.0, 80.0, 1.0), 80.0), (0, 3, (90.0, 200.0, 0.5, 80.0, 135.0, 1.0), 55.0)]
    assert join_utility_tails(sides, units, 1e-9) == units
    assert join_utility_tails(sides, units[:1], 1e-9) == units[:1]


def test_a_joined_heater_that_would_break_dt_min_is_kept_apart():
    # Invented, above a pinch: C 80→180 °C, CP 1 (100 kW) split in halves, heated by steam condensing at
    # 190 °C (shift 5 K: the heater must keep the cold side at or below 180 °C).  One half leaves its
    # process unit at 120 °C, the other at 170 °C; each half is heated to 180 °C (30 and 5 kW).  Mixed
    # at 145 °C and heated to 180 °C in one unit the approach is 10 K at the hot end: joined (by hand).
    # With steam at 185 °C (5 K short of ΔTmin at 180 °C) no heater keeps ΔTmin, joined or not: kept apart.
    cold = Side("C", False, (80.0, 180.0), (0.0, 100.0), 5.0)
    for steam, joined in ((190.0, True), (185.0, False)):
        hu = Side("steam", True, (steam, steam), (0.0, 35.0), 5.0, utility=True)
        units = [(1, 0, (0.0, 30.0, 1.0, 40.0, 100.0, 0.5), 30.0), (1, 0, (30.0, 35.0, 1.0, 90.0, 100.0, 0.5), 5.0)]
        out = join_utility_tails([cold, hu], units, 1e-9)
        if joined:
            (i, j, (h0, h1, fh, c0, c1, fc), q), = out
            assert (i, j, q, fc) == (1, 0, pytest.approx(35.0), pytest.approx(1.0))
            assert (cold.temperature(c0), cold.temperature(c1)) == pytest.approx((145.0, 180.0))
        else:
            assert out == units


def _pinch_rules_below(units):
    """The pinch design method's feasibility rules below the pinch for the units starting at it (hot inlet
    100 °C, cold outlet 90 °C): one hot branch per cold stream at the pinch, CP_hot >= CP_cold."""
    at_pinch = [u for u in units if u.cold != "cu" and u.hot_in == pytest.approx(100.0)
                and u.cold_out == pytest.approx(90.0)]
    for u in at_pinch:
        assert CP[u.hot] * u.hot_fraction >= CP[u.cold] * u.cold_fraction - 1e-9
    return at_pinch


def test_tick_off_below_a_tight_pinch_needs_one_split_and_one_cooler(monkeypatch):
    # At the pinch: one hot stream (H) and two cold ones (C1, C2): N_hot = 1 < N_cold = 2, so H must be
    # split once (Linnhoff & Hindmarsh 1983).  The CP rule holds for a split: CP_H = 4 >= 2 + 1.5, and the
    # margin 0.5 kW/K times the 20 K from 95 down to the shifted inlet of C1 (75 °C) leaves 10 kW in the
    # cascade there: tight.  Sides: H, C1, C2, cold utility: Euler's target 4 − 1 = 3 units (by hand):
    # H→C1, H→C2 on branches, one cooler on H after the branches mix.
    result = tick_off_placement([H], [C1, C2, CU])
    units = result.placement.units
    assert len(units) == 3 and result.remainder == 0
    at_pinch = _pinch_rules_below(units)
    assert {u.cold for u in at_pinch} == {"C1", "C2"}
    assert sum(u.hot_fraction for u in at_pinch) <= 1 + 1e-9   # two branches of H: a split
    coolers = [u for u in units if u.cold == "cu"]
    assert len(coolers) == 1 and coolers[0].duty == pytest.approx(155.0) and coolers[0].hot_out == pytest.approx(40.0)
    got = {n: 0.0 for n in ("H", "C1", "C2", "cu")}
    for u in units:
        got[u.hot] += u.duty
        got[u.cold] += u.duty
        assert u.hot_in - u.cold_out >= 10 - 1e-9 and u.hot_out - u.cold_in >= 10 - 1e-9
    assert got == pytest.approx({"H": 240, "C1": 40, "C2": 45, "cu": 155})
    # without the join each branch keeps its cooler: one unit above the target
    monkeypatch.setattr(tickoff_module, "join_utility_tails", lambda sides, units, tol: list(units))
    monkeypatch.setattr("heatloom.network.neighbourhood.join_utility_tails", lambda sides, units, tol: list(units))
    assert len(tick_off_placement([H], [C1, C2, CU]).placement.units) == 4


def test_design_with_a_tight_pinch_meets_the_euler_target(monkeypatch):
    # The same problem as a stream table, with an invented part above the pinch: H2 150→100 °C, CP 1 (50 kW)
    # and C3 90→140 °C, CP 2 (100 kW).  Problem table by hand (shifted 5 K): above 95 °C H2 gives 50 kW, C3
    # takes 100 kW, hot utility 50 kW; below it 155 kW to the cold utility; pinch at 95 °C shifted.
    # Euler's target: above H2, C3, steam: 2 units; below H, C1, C2, cooling water: 3 units; 5 in all.
    monkeypatch.setattr(design_module, "TICK_OFF_ABOVE", 0)   # the tick-off method at this size
    streams = StreamTable.from_arrays(["H", "H2", "C1", "C2", "C3"], [100, 150, 70, 60, 90], [40, 100, 90, 90, 140],
                                      [4.0, 1.0, 2.0, 1.5, 2.0])
    utilities = [Utility("steam", 200.0, 199.0, cost=100.0, film_coefficient=1.0),
                 Utility("cw", 10.0, 11.0, cost=10.0, film_coefficient=1.0)]
    net = design_mer(streams, 10.0, utilities, default_film_coefficient=1.0)
    check_network(net, streams, utilities)
    assert net.hot_utility == pytest.approx(50.0) and net.cold_utility == pytest.approx(155.0)
    assert net.units == net.unit_target == 5
    assert [c.hot for c in net.coolers] == ["H"]
