"""Neighbourhood moves on a tick-off placement: units of a few sides taken out and placed again.

Euler's minimum-units target (N − 1 units for N streams in one connected network, N − s for s
independent subsystems) and the tick-off rule are from Linnhoff & Hindmarsh 1983 (Chem. Eng. Sci.
38(5), 745-763).  The streams are invented data; the results are checked against energy balances and
temperature differences worked out by hand in the comments.
"""

import numpy as np
import pytest

from heatloom.network.merge import merge_units, unit_approach
from heatloom.network.neighbourhood import holes, improve_units
from heatloom.network.placement import Side

# Invented: two hot streams 150 → 50 °C and two cold streams 20 → 120 °C, all 1 kW/K (100 kW each);
# shifts 5 K (ΔTmin 10 K).
H1 = Side("H1", True, (150.0, 50.0), (0.0, 100.0), 5.0)
H2 = Side("H2", True, (150.0, 50.0), (0.0, 100.0), 5.0)
C1 = Side("C1", False, (20.0, 120.0), (0.0, 100.0), 5.0)
C2 = Side("C2", False, (20.0, 120.0), (0.0, 100.0), 5.0)
SIDES = [H1, H2, C1, C2]
# A loop of four 50 kW units, each with 30 K at both ends (by hand, equal CPs): H1 150→100 against C1
# 70→120, H1 100→50 against C2 20→70, H2 150→100 against C2 70→120, H2 100→50 against C1 20→70.
LOOP = [(0, 2, (0.0, 50.0, 1.0, 50.0, 100.0, 1.0), 50.0), (0, 3, (50.0, 100.0, 1.0, 0.0, 50.0, 1.0), 50.0),
        (1, 3, (0.0, 50.0, 1.0, 50.0, 100.0, 1.0), 50.0), (1, 2, (50.0, 100.0, 1.0, 0.0, 50.0, 1.0), 50.0)]
ALLOWED = {(h.name, c.name) for h in (H1, H2) for c in (C1, C2)}


def test_the_loop_keeps_dt_min_and_cannot_be_merged():
    for i, j, r, _ in LOOP:
        assert unit_approach(SIDES[i], *r[:3], SIDES[j], *r[3:]) == pytest.approx(20.0)   # 30 K − 10 K
    assert len(merge_units(SIDES, LOOP)) == 4   # each stream's two units have different partners


def test_the_holes_of_the_loop_are_the_whole_streams():
    assert sorted(holes(SIDES, LOOP, 1e-9)) == [(k, 0.0, 100.0, 1.0) for k in range(4)]


def test_a_move_places_the_loop_again_with_two_units():
    # H1 → one cold stream and H2 → the other, 100 kW each (1 kW/K × 100 K), 30 K at both ends: two
    # independent pairs, the minimum N − 2 = 2 units for four streams in two subsystems
    units, moves = improve_units(SIDES, LOOP, ALLOWED, set(), 1e-7, np.random.default_rng(0), 2.0)
    assert moves >= 1
    assert len(units) == 2
    for i, j, r, q in units:
        assert q == pytest.approx(100.0)
        assert unit_approach(SIDES[i], *r[:3], SIDES[j], *r[3:]) == pytest.approx(20.0)
    assert {i for i, _, _, _ in units} == {0, 1} and {j for _, j, _, _ in units} == {2, 3}


def test_a_move_keeps_a_required_pair_and_never_uses_a_forbidden_one():
    allowed = ALLOWED - {("H1", "C1")}
    start = [u for u in LOOP]
    start[0] = (0, 3, (0.0, 50.0, 1.0, 50.0, 100.0, 1.0), 50.0)   # H1 150→100 against C2 70→120
    start[2] = (1, 2, (0.0, 50.0, 1.0, 50.0, 100.0, 1.0), 50.0)   # H2 150→100 against C1 70→120
    # the start: H1 → C2 twice, H2 → C1 twice (in series, so merging alone gives two units)
    units, _ = improve_units(SIDES, start, allowed, {("H2", "C1")}, 1e-7, np.random.default_rng(1), 1.0)
    pairs = {(SIDES[i].name, SIDES[j].name) for i, j, _, _ in units}
    assert ("H2", "C1") in pairs and ("H1", "C1") not in pairs
    assert sum(q for *_, q in units) == pytest.approx(200.0)
