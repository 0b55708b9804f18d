"""Units placed interval by interval written as rectangles on their sides, so neighbourhood moves can
re-place them.

Euler's minimum-units target (N − 1 units for N streams in one connected network, N − s for s
independent subsystems) is from Linnhoff & Hindmarsh 1983 (Chem. Eng. Sci. 38(5), 745-763).  The
streams are invented data; the results are checked against energy balances and temperature differences
worked out by hand in the comments.
"""

import numpy as np
import pytest

from heatloom.network.merge import unit_approach
from heatloom.network.neighbourhood import improve_units
from heatloom.network.placement import PlacedUnit, Side, interval_placement
from heatloom.network.remainder import as_rectangles

# Invented: two hot streams 150 → 50 °C and two cold streams 20 → 120 °C, all 1 kW/K (100 kW each);
# shifts 5 K (ΔTmin 10 K).  Shifted, the hot streams run 145 → 45 °C and the cold ones 25 → 125 °C.
H1 = Side("H1", True, (150.0, 50.0), (0.0, 100.0), 5.0)
H2 = Side("H2", True, (150.0, 50.0), (0.0, 100.0), 5.0)
C1 = Side("C1", False, (20.0, 120.0), (0.0, 100.0), 5.0)
C2 = Side("C2", False, (20.0, 120.0), (0.0, 100.0), 5.0)
SIDES = [H1, H2, C1, C2]
ALLOWED = {(h.name, c.name) for h in (H1, H2) for c in (C1, C2)}


def cover(rects, k):
    """Shares of side k covering the midpoints of a fine grid of its enthalpy [-]."""
    grid = np.linspace(0.0, SIDES[k].duty, 201)
    mid = 0.5 * (grid[1:] + grid[:-1])
    out = np.zeros(mid.size)
    for i, j, r, _ in rects:
        for side, (a, b, f) in ((i, r[:3]), (j, r[3:])):
            if side == k:
                out += f * ((mid > a) & (mid < b))
    return out


@pytest.mark.slow
def test_interval_units_as_rectangles_then_moved_to_two_units():
    placed = interval_placement([H1, H2], [C1, C2]).units
    rects = as_rectangles(SIDES, [], placed, 1e-9)
    assert rects is not None and len(rects) == len(placed)
    for (i, j, (h0, h1, fh, c0, c1, fc), q), u in zip(rects, placed):
        # 1 kW/K streams: the stretch is the temperature change, the duty its share of it
        assert (SIDES[i].name, SIDES[j].name) == (u.hot, u.cold)
        assert fh * (h1 - h0) == pytest.approx(q) and fc * (c1 - c0) == pytest.approx(q)
        assert (h0, c1) == pytest.approx((150.0 - u.hot_in, u.cold_out - 20.0))
        assert unit_approach(SIDES[i], h0, h1, fh, SIDES[j], c0, c1, fc) >= -1e-9
    for k in range(4):   # every stream carries its whole flow everywhere
        assert cover(rects, k) == pytest.approx(np.ones(200))
    # one move is enough to reach H1 → one cold stream and H2 → the other, 100 kW each with 30 K at both
    # ends (by hand): two independent pairs, the minimum N − 2 = 2 units
    assert len(rects) > 2   # interval by interval: more units than the target
    units, _ = improve_units(SIDES, rects, ALLOWED, set(), 1e-7, np.random.default_rng(0), 2.0)
    assert len(units) == 2
    for i, j, r, q in units:
        assert q == pytest.approx(100.0)
        assert unit_approach(SIDES[i], *r[:3], SIDES[j], *r[3:]) == pytest.approx(20.0)


def test_units_that_leave_a_side_uncovered_are_refused():
    # H1 → C1 over 150 → 100 °C only (50 kW): half of each stream has no unit
    half = [PlacedUnit("H1", "C1", 0, 50.0, 150.0, 100.0, 70.0, 120.0, 1.0, 1.0)]
    assert as_rectangles([H1, C1], [], half, 1e-9) is None
    whole = [PlacedUnit("H1", "C1", 0, 100.0, 150.0, 50.0, 20.0, 120.0, 1.0, 1.0)]
    assert as_rectangles([H1, C1], [], whole, 1e-9) == [(0, 1, (0.0, 100.0, 1.0, 0.0, 100.0, 1.0), 100.0)]


def test_an_isothermal_segment_is_refused_not_misread():
    # Invented: a vapour condensing at 110 °C (100 kW), then cooled to 60 °C at 1 kW/K (50 kW).  A unit on
    # the condensing part runs 110 → 110 °C: its temperatures do not tell where on the 100 kW it lies,
    # so no rectangle is made (by hand: a stretch of zero enthalpy cannot carry 100 kW).
    vapour = Side("V", True, (110.0, 110.0, 60.0), (0.0, 100.0, 150.0), 5.0)
    cold = Side("C", False, (20.0, 100.0), (0.0, 150.0), 5.0)
    units = [PlacedUnit("V", "C", 0, 100.0, 110.0, 110.0, 50.0, 100.0, 1.0, 1.0),
             PlacedUnit("V", "C", 0, 50.0, 110.0, 60.0, 20.0, 50.0, 1.0, 1.0)]
    assert as_rectangles([vapour, cold], [], units, 1e-9) is None


@pytest.mark.slow
def test_moves_repair_a_search_that_stopped_early(monkeypatch):
    # Every search from the sides is stopped before its first step (a deadline already past), so what it
    # leaves is placed interval by interval; those units, written as rectangles, are then re-placed by the
    # neighbourhood moves (whose own searches are not stopped), down to the two independent pairs of
    # 100 kW (by hand, as above).  Without the rectangles the remainder's units stay.
    import heatloom.network.tickoff as tickoff

    search = tickoff.tick_off_search

    def stopped(*args, start=None, deadline=None, **kwargs):
        return search(*args, start=start, deadline=-np.inf if start is None else deadline, **kwargs)

    monkeypatch.setattr(tickoff, "tick_off_search", stopped)
    result = tickoff.tick_off_placement([H1, H2], [C1, C2], time_limit=3.0, neighbourhood=0.6)
    assert result.moves >= 1 and result.remainder == 0
    assert len(result.placement.units) == 2
    for u in result.placement.units:
        assert u.duty == pytest.approx(100.0)
        assert u.hot_in - u.cold_out >= 10 - 1e-9 and u.hot_out - u.cold_in >= 10 - 1e-9
    monkeypatch.setattr(tickoff, "as_rectangles", lambda *args: None)
    result = tickoff.tick_off_placement([H1, H2], [C1, C2], time_limit=1.0, neighbourhood=0.6)
    assert result.moves == 0 and result.remainder == len(result.placement.units) > 2


def test_interval_placement_cuts_a_cold_piece_where_one_utility_level_hands_over_to_the_next():
    # invented (shrunk from a generated robustness case): C20 heated 288.1 → 308.7 °C (9.1 kW/K), hot oil
    # 360 → 310 °C with the 170.17 kW above 290 °C, steam at 300 → 299 °C with the 17.29 kW below; shifts
    # 5 K each, so a unit needs 10 K.  Steam can serve C20 only up to 290 °C (300 − 10) and hot oil only from
    # an inlet of at most 300 °C (310 − 10): the piece must be cut at 290 °C, not served as one
    c = Side("C20", False, (288.1, 308.7), (0.0, 9.1 * 20.6), 5.0)
    oil = Side("hot oil", True, (360.0, 310.0), (0.0, 9.1 * 18.7), 5.0, utility=True)
    steam = Side("steam", True, (300.0, 299.0), (0.0, 9.1 * 1.9), 5.0, utility=True)
    units = interval_placement([oil, steam], [c]).units
    assert sum(u.duty for u in units) == pytest.approx(9.1 * 20.6)
    for u in units:   # each utility unit runs over the utility's whole range, both ends checked here
        assert u.hot_in - u.cold_out >= 10 - 1e-9 and u.hot_out - u.cold_in >= 10 - 1e-9
    assert sum(u.duty for u in units if u.hot == "steam") == pytest.approx(9.1 * 1.9)
