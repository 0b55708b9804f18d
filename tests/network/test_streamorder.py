"""The order of a design's units along a stream, recovered from their temperatures (network/streamorder.py).

The networks are invented.  The check is independent of the recovery: the tree it gives, written as branch
labels and read as a split (retrofit/flowtree.py), is walked by the enthalpy balance of every unit and every
mixer from the design's duties, and must give back the temperatures the design states for every unit (a
constant CP, so each outlet is inlet − Q/(f·CP), computed by hand below as well).
"""

from __future__ import annotations

import pytest

from heatloom.model import Stream
from heatloom.model.existing import ExistingUnit
from heatloom.network.streamorder import stream_branches, stream_order, unordered_streams
from heatloom.network.structure import Cooler, Exchanger, Network
from heatloom.retrofit.flowtree import flow_steps, walk_steps

CP = 10.0   # kW/K of the hot stream H


def unit(name, f, t_in, t_out, stage):
    """An exchanger on H (fraction f, t_in → t_out °C) against a cold stream of its own (temperatures only
    need to be plausible here)."""
    duty = f * CP * (t_in - t_out)
    return Exchanger("H", f"C{name}", duty, t_in, t_out, 20.0, 30.0, hot_fraction=f, stage=stage, name=name)


def resplit_network():
    """H from 115 °C split five ways: A (0.3) to 83 °C; B (0.1) to 102 °C; C1 (0.2) and C2 (0.4) to 107 °C,
    where they mix and split again into D1 (0.45) and D2 (0.15) to 102 °C; there B, D1 and D2 go on together
    (0.7) through E to 99 °C and F to 83 °C, where A joins; a cooler takes H to 60 °C.  Stages are given in
    an order that does not follow the flow."""
    xs = [unit("A", 0.3, 115, 83, 9), unit("B", 0.1, 115, 102, 3), unit("C1", 0.2, 115, 107, 7),
          unit("C2", 0.4, 115, 107, 1), unit("D1", 0.45, 107, 102, 2), unit("D2", 0.15, 107, 102, 8),
          unit("E", 0.7, 102, 99, 5), unit("F", 0.7, 99, 83, 4)]
    cw = Cooler("H", "CW", CP * 23, 83, 60, 20, 30, stage=10, region="whole", name="CW")
    return Network(tuple(xs), (), (cw,), 10.0)


def test_flows_that_mix_and_split_again_are_recovered():
    net = resplit_network()
    assert unordered_streams(net) == []
    # branches in the order of their first units' stages (C2 1, B 3, C1 7, A 9): the branch through E and F
    # first, in it the split of C1/C2 then D1/D2 beside B
    assert stream_order(net)[("hot", "H")] == [
        [[[[[["C2"], ["C1"]], [["D1"], ["D2"]]], ["B"]], "E", "F"], ["A"]], [["CW"]]]
    # branch labels and places, outer first: E is the second item of branch 1; D2 is on branch 2 of the split
    # that is the second item of branch 1 of the split that is the first item of branch 1
    branches = stream_branches(net)
    assert branches["E"][0] == ((1,), (2,))
    assert branches["D2"][0] == ((1, 1, 2), (1, 2, 1))
    assert branches["A"][0] == ((2,), (1,))


def test_the_recovered_tree_walks_back_to_the_design_temperatures():
    net = resplit_network()
    branches = stream_branches(net)
    units = []
    for x in net.exchangers:
        on = branches[x.name][0]
        units.append(ExistingUnit(x.name, "H", x.cold, duty=x.duty, hot_position=1, hot_fraction=x.hot_fraction,
                                  hot_branch="/".join(map(str, on[0])), hot_branch_order=on[1]))
    stream = Stream.simple("H", 115, 60, CP)
    steps = flow_steps(units, "H", 1)
    temps = walk_steps(stream, steps, 115.0, lambda u: u.duty)
    for x in net.exchangers:
        assert temps[("H", 1, x.name)] == pytest.approx(x.hot_out, abs=1e-9), x.name
    # by hand: the mixer after F and A at 0.7·83 + 0.3·83 = 83 °C; inside, B, D1, D2 meet at 102 °C
    assert temps[("H", 1)] == pytest.approx(83.0, abs=1e-9)
    inlet = {s.unit.name: s.inlet for s in steps if s.unit is not None}
    assert temps[inlet["E"]] == pytest.approx(102.0, abs=1e-9)
    assert temps[inlet["D1"]] == pytest.approx(107.0, abs=1e-9)


def test_a_split_of_many_equal_branches_gives_up_the_search_for_a_mixing_group(monkeypatch):
    """30 branches of 1/30 from 115 °C, 20 of them to 102 °C and 10 to 100 °C; then E takes 2/3 of H from
    102 to 90 °C.  Only all 20 branches ending at 102 °C carry 2/3 together, a group larger than the search
    looks at (MAX_MIXING_SEARCH), so it tries every smaller group: about a million here, C(n, 12) in general.
    With the number of groups capped, the search stops at the cap and the stream falls back to the grid order
    (the network stays complete, every unit placed)."""
    from heatloom.network import streamorder

    calls = []
    same = streamorder._same
    monkeypatch.setattr(streamorder, "_same", lambda a, b: calls.append(1) or same(a, b))
    monkeypatch.setattr(streamorder, "MAX_MIXING_GROUPS", 1000)
    n, m = 30, 20
    xs = [unit(f"B{k}", 1 / n, 115, 102 if k < m else 100, 1) for k in range(n)]
    xs.append(unit("E", m / n, 102, 90, 2))
    mixed = m / n * 90 + (1 - m / n) * 100   # by hand: 93.33 °C
    cw = Cooler("H", "CW", CP * (mixed - 60), mixed, 60, 20, 30, stage=10, region="whole", name="CW")
    net = Network(tuple(xs), (), (cw,), 10.0)
    assert unordered_streams(net) == ["H"]
    assert len(calls) < 5000   # the groups tried, and the few other comparisons of fractions
    frame = net.to_frame()
    assert set(frame["unit"]) >= {x.name for x in xs} | {"CW"}
    assert frame["hot_order"].notna().all()   # every unit has its place along H (the grid order)
