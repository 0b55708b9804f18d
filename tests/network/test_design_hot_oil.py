"""MER design with a non-isothermal hot utility (hot oil) that must serve cold streams above its return
temperature.

Invented data: the stream tables are the generated problems of benchmarks/bench_design.py (fixed seeds,
no plant), written out here; the hot oil (330 → 250 °C or 300 → 200 °C) and the cooling water (10 → 15 °C)
are ours. Before the fix every one of these designs failed ("no hot side can serve 'C12' between 251 and
288 °C"): a unit over the oil's whole range cannot heat a stream that starts above 240 °C, while the
energy target counts the oil's heat spread evenly over its range (the utility as a stream of unknown
flow on the shifted scale, as the transshipment model of Papoulias & Grossmann 1983 and our utility
placement LP in pinch/utilities.py read it).

Every check below is recomputed here from the units' terminal temperatures and duties, independently of
the design code: stream balances, ΔTmin at both ends of every unit, and the oil's use band by band: a
flow F of oil that enters at its supply temperature cannot give more than F·(T_supply − T) of heat while
it is hotter than T, whatever its units' order, splits and mixing (a heat balance, *common practice*).
"""

import numpy as np
import pytest
from synthesis_problems import THIRTEEN, TWELVE

from heatloom.model import StreamTable, Utility, UtilityKind
from heatloom.network.design import design_mer
from heatloom.network.placement import Side, interval_placement
from heatloom.pinch.targets import target
from heatloom.retrofit.existing import ExistingNetwork
from heatloom.retrofit.simulate import simulate

DT = 10.0


def table(d) -> StreamTable:
    return StreamTable.from_arrays(d["names"], d["supply"], d["target"], d["cp"],
                                   film_coefficient=[0.5] * len(d["names"]))


def utilities(oil_in: float, oil_out: float) -> list[Utility]:
    return [Utility("oil", oil_in, oil_out, 60.0, UtilityKind.HOT, 1.0),
            Utility("CW", 10.0, 15.0, 6.0, UtilityKind.COLD, 1.5)]


def oil_heat_above(units, temperatures):
    """Heat the units take from the oil while it is hotter than each temperature [kW]: each unit's duty
    spread evenly over its own stretch of the oil (constant CP)."""
    out = []
    for t in temperatures:
        q = 0.0
        for duty, hi, lo in units:
            if hi - lo <= 1e-12:
                q += duty if hi > t else 0.0
            else:
                q += duty * float(np.clip((hi - t) / (hi - lo), 0.0, 1.0))
        out.append(q)
    return np.array(out)


def assert_oil_within_its_flow(units, supply: float, ret: float, duty: float):
    """Every stretch inside the oil's range, and no more heat above any temperature than its flow holds."""
    flow = duty / (supply - ret)
    for _, hi, lo in units:
        assert ret - 1e-9 <= lo <= hi <= supply + 1e-9
    grid = np.linspace(ret, supply, 161)
    assert (oil_heat_above(units, grid) <= flow * (supply - grid) + 1e-6 * duty).all()
    assert sum(u[0] for u in units) == pytest.approx(duty, rel=1e-7)


def assert_network_sound(net, streams: StreamTable):
    """Balances and ΔTmin recomputed from the units' own temperatures (not by check_network)."""
    tol = 1e-6 * max(s.duty for s in streams)
    for s in streams:
        cp = s.segments[0].heat_capacity_flow
        got = sum(e.duty for e in net.exchangers if s.name in (e.hot, e.cold))
        got += sum(h.duty for h in net.heaters if h.cold == s.name)
        got += sum(c.duty for c in net.coolers if c.hot == s.name)
        assert got == pytest.approx(cp * abs(s.supply_temperature - s.target_temperature), abs=tol), s.name
    for e in net.exchangers:
        assert e.duty == pytest.approx(e.hot_fraction * by_cp(streams, e.hot) * (e.hot_in - e.hot_out), abs=tol)
        assert e.duty == pytest.approx(e.cold_fraction * by_cp(streams, e.cold) * (e.cold_out - e.cold_in), abs=tol)
        assert min(e.hot_in - e.cold_out, e.hot_out - e.cold_in) >= DT - 1e-6
    for h in net.heaters:
        assert min(h.utility_in - h.cold_out, h.utility_out - h.cold_in) >= DT - 1e-6
    for c in net.coolers:
        assert min(c.hot_in - c.utility_out, c.hot_out - c.utility_in) >= DT - 1e-6


def by_cp(streams, name):
    return next(s for s in streams if s.name == name).segments[0].heat_capacity_flow


def test_interval_placement_takes_the_oil_band_by_band_where_one_unit_cannot():
    oil = Side("oil", True, (330.0, 250.0), (0.0, 800.0), 5.0, utility=True)
    c1 = Side("C1", False, (100.0, 240.0), (0.0, 400.0), 5.0)
    c2 = Side("C2", False, (251.0, 288.0), (0.0, 400.0), 5.0)   # starts above the oil's return less ΔTmin
    with pytest.raises(ValueError, match="C2"):
        interval_placement([oil], [c1, c2], cut_utilities=False)
    units = interval_placement([oil], [c1, c2]).units
    for name, duty in (("C1", 400.0), ("C2", 400.0)):
        assert sum(u.duty for u in units if u.cold == name) == pytest.approx(duty)
    for u in units:
        assert min(u.hot_in - u.cold_out, u.hot_out - u.cold_in) >= DT - 1e-9
    assert_oil_within_its_flow([(u.duty, u.hot_in, u.hot_out) for u in units], 330.0, 250.0, 800.0)


def test_tick_off_design_pipes_the_oil_above_the_pinch():
    """13 streams (the tick-off path): C2 must be heated from 283 to 284 °C above the pinch (293 °C hot);
    only the oil's part above the pinch can, and the rest of the oil's heat goes below it."""
    streams, utils = table(THIRTEEN), utilities(330.0, 250.0)
    t = target(streams, DT, utils)
    oil_duty = next(d.duty for d in t.placement.duties if d.utility.name == "oil")
    # the oil's even spread puts 37/80 of its heat above the 288 °C shifted pinch, which C2's 1.9 kW needs
    assert oil_duty == pytest.approx(1.9 * 80.0 / 37.0, rel=1e-9)
    net = design_mer(streams, DT, utilities=utils, time_limit=20)
    assert_network_sound(net, streams)
    oil_units = [(h.duty, h.utility_in, h.utility_out) for h in net.heaters if h.utility == "oil"]
    assert_oil_within_its_flow(oil_units, 330.0, 250.0, oil_duty)
    above = [h for h in net.heaters if h.region == "above"]
    assert above and all(h.utility_out >= 293.0 - 1e-9 for h in above)   # the oil above the pinch only
    assert any("piped" in n for n in net.notes)
    assert net.units <= round(1.1 * net.unit_target)
    # as an existing network (the start of a retrofit) each heater keeps its part of the oil's range, and the
    # simulation at the design's areas finds no problem (over the whole range C2's heater would have none)
    existing = ExistingNetwork.from_network(net, streams, utils)
    sim = simulate(existing, DT)
    assert sim.problems == ()
    states = {u.name: u for u in sim.units}
    for k, h in enumerate(net.heaters, start=1):
        assert (states[f"H{k}"].hot_in, states[f"H{k}"].hot_out) == (h.utility_in, h.utility_out)
        assert states[f"H{k}"].duty == pytest.approx(h.duty, rel=1e-6, abs=1e-6)


@pytest.mark.parametrize("oil", [(330.0, 250.0), (300.0, 200.0)])
def test_fewest_matches_design_with_oil(oil):
    """12 streams (the fewest-matches path). With oil 300 → 200 °C the oil's even spread needs more than the
    least hot utility (it must reach C3 and C5 at 285 °C), the surplus crosses the process pinch to the
    cooling water, so the design must not cut there."""
    streams, utils = table(TWELVE), utilities(*oil)
    t = target(streams, DT, utils)
    oil_duty = next(d.duty for d in t.placement.duties if d.utility.name == "oil")
    net = design_mer(streams, DT, utilities=utils, time_limit=20)
    assert_network_sound(net, streams)
    assert_oil_within_its_flow([(h.duty, h.utility_in, h.utility_out) for h in net.heaters], *oil, oil_duty)
    assert sum(c.duty for c in net.coolers) == pytest.approx(
        next(d.duty for d in t.placement.duties if d.utility.name == "CW"), rel=1e-7)
    if oil == (300.0, 200.0):
        assert oil_duty > t.hot_utility + 1.0   # more than the problem table's least hot utility
        # no cut at the process pinch (cold side at its shifted temperature − ΔTmin/2): one region holds units
        # heating cold streams on both sides of it (the design may still cut where the plan's cascade carries no
        # heat, here at 277 °C shifted, where the oil's heat above meets the demand above)
        pinch_cold = t.pinches[0].shifted - DT / 2
        regions: dict = {}
        for u in (*net.exchangers, *net.heaters):
            regions.setdefault(u.region, []).append(u)
        assert any(min(u.cold_in for u in us) < pinch_cold - 1.0 < pinch_cold + 1.0 < max(u.cold_out for u in us)
                   for us in regions.values())
    # a guard against blow-ups (48 units with oil 330 → 250 °C before the region piped it); the count depends on
    # how far the time-limited placement MILPs get on a loaded machine
    assert net.units <= 1.5 * net.unit_target
