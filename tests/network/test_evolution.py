"""Evolution of a designed network: loop breaking, utility paths and path relaxation.

Published sources, cited beside each use: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6,
ch. 3, Table 3.6 (four-stream problem, targets 50 kW hot and 30 kW cold at ΔTmin 10 K, pinch 90/80 °C),
and the two-hot/two-cold problem of Roetzel, Luo & Chen 2020, ch. 6 (data of Yee & Grossmann), both in
tests/data/references/.  Loops, utility paths and path relaxation: Linnhoff & Hindmarsh (1983), "The pinch
design method for heat exchanger networks", Chem. Eng. Sci. 38(5), 745-763.  The energy penalties are
checked against energy balances written out in the tests, not against values the code produced.
"""

import networkx as nx
import pytest
from refdata import reference_utilities

from heatloom.errors import InputError
from heatloom.model import StreamTable
from heatloom.network import check_network, design_mer
from heatloom.network.evolution import evolve
from heatloom.network.sizing import size_network
from heatloom.network.structure import Exchanger, Network


def loops(net: Network) -> int:
    """Independent loops of a network by Euler's relation L = U − N + S (Linnhoff & Hindmarsh 1983)."""
    g = nx.MultiGraph()
    for e in net.exchangers:
        g.add_edge(e.hot, e.cold)
    for h in net.heaters:
        g.add_edge(h.utility, h.cold)
    for c in net.coolers:
        g.add_edge(c.hot, c.utility)
    return net.units - g.number_of_nodes() + nx.number_connected_components(g)


def every_unit_keeps(net: Network, dt_min: float) -> None:
    """Both ends of every unit at least ΔTmin apart (single-segment streams: the ends are the minimum)."""
    for e in net.exchangers:
        assert e.hot_in - e.cold_out >= dt_min - 1e-6 and e.hot_out - e.cold_in >= dt_min - 1e-6, e
    for h in net.heaters:
        assert h.utility_in - h.cold_out >= dt_min - 1e-6 and h.utility_out - h.cold_in >= dt_min - 1e-6, h
    for c in net.coolers:
        assert c.hot_in - c.utility_out >= dt_min - 1e-6 and c.hot_out - c.utility_in >= dt_min - 1e-6, c


def with_h(streams: StreamTable, h: float) -> StreamTable:
    return StreamTable.from_arrays([s.name for s in streams], [s.supply_temperature for s in streams],
                                   [s.target_temperature for s in streams],
                                   [s.segments[0].heat_capacity_flow for s in streams],
                                   film_coefficient=[h] * len(streams))


def test_sinnott_loop_is_broken_with_the_penalty_of_an_energy_balance(reference):
    data, streams = reference("targeting_sinnott_four_stream")
    streams = with_h(streams, 0.5)
    net = design_mer(streams, 10)
    # Sinnott Table 3.6: 50 kW hot and 30 kW cold utility at ΔTmin 10 K; the MER design matches 2→3 on both
    # sides of the pinch, a loop
    assert (net.hot_utility, net.cold_utility) == (pytest.approx(50), pytest.approx(30))
    assert loops(net) == 1
    pair = [e for e in net.exchangers if (e.hot, e.cold) == ("2", "3")]
    small = min(pair, key=lambda e: e.duty)
    ev = evolve(net, streams, dt_min=10, min_duty=small.duty + 1)
    assert ev.network.units == net.units - 1
    assert loops(ev.network) == 0
    check_network(ev.network, streams, dt_min=10)
    every_unit_keeps(ev.network, 10)

    # independent energy balance.  Below the pinch stream 1 (180 → 60 °C, CP 3) gives 3 × (90 − 60) = 90 kW to
    # stream 3 (20 → 135 °C, CP 2), which leaves that exchanger at 20 + 90/2 = 65 °C; after the loop is broken
    # match 2→3 is the next unit on stream 3, so stream 2 (150 → 30 °C, CP 1) may leave it no colder than
    # 65 + 10 = 75 °C: the match carries at most 1 × (150 − 75) = 75 kW of the 60 + 30 = 90 kW the loop held.
    below = next(e for e in net.exchangers if (e.hot, e.cold) == ("1", "3"))
    assert below.duty == pytest.approx(90)
    penalty = 90 - 1.0 * (150 - (20 + 90 / 2 + 10))
    assert penalty == 15
    assert ev.hot_penalty == pytest.approx(penalty, abs=1e-6)
    assert ev.cold_penalty == pytest.approx(penalty, abs=1e-6)
    assert sum(s.hot_penalty for s in ev.steps) == pytest.approx(penalty, abs=1e-6)
    # first law over the evolved network: heaters = cold duties − recovery, coolers = hot duties − recovery
    cold_duty = 2 * (135 - 20) + 4.5 * (140 - 80)
    hot_duty = 3 * (180 - 60) + 1 * (150 - 30)
    assert ev.network.hot_utility == pytest.approx(cold_duty - ev.network.heat_recovery, abs=1e-6)
    assert ev.network.cold_utility == pytest.approx(hot_duty - ev.network.heat_recovery, abs=1e-6)
    assert ev.network.hot_utility == pytest.approx(50 + penalty, abs=1e-6)
    (step,) = ev.steps
    assert step.via == "loop" and step.relaxed == pytest.approx(penalty, abs=1e-6)
    assert step.removed[0].startswith(f"{small.name} (2→3")
    assert "energy penalty +15 kW hot" in step.describe()
    assert any("evolved" in n for n in ev.network.notes)

    # match 2→3 is now on no loop: with a larger limit it goes along the utility path heater–3–(2→3)–2–cooler,
    # its whole 75 kW moving to the heater on 3 and the cooler on 2 (the heater then gives 3 all but the 90 kW
    # of match 1→3: 2 × 115 − 90 = 140 kW = 65 + 75)
    again = evolve(ev.network, streams, dt_min=10, min_duty=80)
    removed = [s for s in again.steps if "(2→3" in s.removed[0]]
    assert len(removed) == 1 and removed[0].via == "utility path"
    assert removed[0].hot_penalty == pytest.approx(75, abs=1e-6)
    assert removed[0].cold_penalty == pytest.approx(75, abs=1e-6)
    assert again.network.hot_utility == pytest.approx(2 * 115 - 90, abs=1e-6)
    check_network(again.network, streams, dt_min=10)
    every_unit_keeps(again.network, 10)


def test_yee_grossmann_loops_broken_and_a_unit_removed_along_a_utility_path(reference):
    data, streams = reference("synthesis_yee_grossmann_2h2c")
    utilities = reference_utilities(data)
    net = design_mer(streams, 10, utilities)
    assert loops(net) >= 1
    ev = evolve(net, streams, utilities, break_loops=True)
    assert loops(ev.network) == 0
    assert ev.network.units < net.units
    check_network(ev.network, streams, utilities, dt_min=10)
    every_unit_keeps(ev.network, 10)
    # first law: both utilities rise by the heat no longer recovered
    lost = net.heat_recovery - ev.network.heat_recovery
    assert ev.hot_penalty == pytest.approx(lost, abs=1e-6)
    assert ev.cold_penalty == pytest.approx(lost, abs=1e-6)
    assert sum(s.cold_penalty for s in ev.steps) == pytest.approx(lost, abs=1e-6)



def test_a_branch_of_two_units_in_series_is_not_evolved_and_the_note_says_so():
    # invented data: C1 (30 → 130 °C, CP 2) split in two equal branches; one branch passes H1 then H2 in series
    # (30 → 80 → 130 °C), the other H3 (30 → 130 °C); H1, H2 150 → 100 °C CP 1, H3 150 → 100 °C CP 2
    streams = StreamTable.from_arrays(["H1", "H2", "H3", "C1"], [150, 150, 150, 30], [100, 100, 100, 130],
                                      [1.0, 1.0, 2.0, 2.0], film_coefficient=[1.0] * 4)
    a = Exchanger(hot="H1", cold="C1", duty=50.0, hot_in=150.0, hot_out=100.0, cold_in=30.0, cold_out=80.0,
                  cold_fraction=0.5, name="A")
    b = Exchanger(hot="H2", cold="C1", duty=50.0, hot_in=150.0, hot_out=100.0, cold_in=80.0, cold_out=130.0,
                  cold_fraction=0.5, name="B", stage=1)
    c = Exchanger(hot="H3", cold="C1", duty=100.0, hot_in=150.0, hot_out=100.0, cold_in=30.0, cold_out=130.0,
                  cold_fraction=0.5, name="C")
    net = Network((a, b, c), (), (), 10.0)
    check_network(net, streams)
    ev = evolve(net, streams, [], min_duty=60)
    assert ev.steps == ()
    assert ev.network.units == 3
    assert any(n.startswith("A (H1→C1") and "stream 'C1' is not evolved" in n for n in ev.notes), ev.notes


@pytest.mark.slow
def test_units_on_split_branches_are_removed_and_the_network_still_checks(reference):
    # Roetzel, Luo & Chen 2020, ch. 6: aromatics plant (4 hot, 5 cold streams) with its utilities
    data, streams = reference("synthesis_aromatics_plant_4h5c")
    utilities = reference_utilities(data)
    net = design_mer(streams, 10, utilities)
    split = {e.name for e in net.exchangers if min(e.hot_fraction, e.cold_fraction) < 1 - 1e-9}
    if not split:
        pytest.skip("this design splits no stream")
    ev = evolve(net, streams, utilities, min_duty=2000)
    removed = {s.removed[i].split(" ")[0] for s in ev.steps for i in range(len(s.removed))}
    assert removed & split, "a unit of a split branch went"
    assert ev.network.units < net.units
    check_network(ev.network, streams, utilities, dt_min=10)
    lost = net.heat_recovery - ev.network.heat_recovery
    assert ev.hot_penalty == pytest.approx(lost, abs=1e-6) and ev.cold_penalty == pytest.approx(lost, abs=1e-6)


def test_size_network_gives_the_design_areas(reference):
    data, streams = reference("synthesis_yee_grossmann_2h2c")
    utilities = reference_utilities(data)
    net = design_mer(streams, 10, utilities)
    again = size_network(net, streams, utilities)
    for a, b in zip(net.exchangers + net.heaters + net.coolers, again.exchangers + again.heaters + again.coolers):
        assert b.area == pytest.approx(a.area, rel=1e-9)
        assert b.cost == pytest.approx(a.cost, rel=1e-9)
    assert again.total_annual_cost == pytest.approx(net.total_annual_cost, rel=1e-9)


@pytest.mark.parametrize("option", ["min_duty", "min_area"])
def test_limits_must_be_positive(reference, option):
    data, streams = reference("targeting_sinnott_four_stream")
    streams = with_h(streams, 0.5)
    net = design_mer(streams, 10)
    with pytest.raises(InputError, match=option):
        evolve(net, streams, **{option: 0.0})


def test_a_network_at_dtmin_to_within_the_check_tolerance_is_evolved():
    # Sinnott's Table 3.6 streams (C&R Vol. 6, ch. 3; h 0.5 assumed) designed at ΔTmin 10 K: its pinch units sit
    # at exactly 10 K.  Evolved at 10 K + 5e-7 K they are below it by less than check_network's 1e-6 K, which a
    # solver's or a float's noise gives: the network is evolved, not refused as breaking ΔTmin
    from heatloom.model import StreamTable
    from heatloom.network import design_mer
    from heatloom.network.evolution import evolve

    s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140], [3.0, 1.0, 2.0, 4.5],
                                film_coefficient=[0.5] * 4)
    ev = evolve(design_mer(s, 10.0), s, dt_min=10.0 + 5e-7, min_duty=40.0)
    assert ev.steps and not any("not evolved" in n for n in ev.notes)
