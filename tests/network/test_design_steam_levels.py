"""MER design of a site with several steam levels at plant size (the tick-off path, more than 12 streams).

Invented data: the stream table is generated(14) of benchmarks/bench_design.py (fixed seed, no plant),
written out here; the utilities are ours (HP, MP and LP steam at 320, 210 and 150 °C, steam raised at
140 °C, cooling water 10 → 15 °C; the STEAM_LEVELS of that benchmark).

With several levels the cheapest utility duties leave the cascade with utility pinches (no heat flow) inside
the process pinch regions. Before the design cut its regions there, the tick-off search of the region above
the process pinch, with all three levels and two utility pinches in it, found no placement, and the fallback
ended with 79 units against Euler's target of 24 on this table (197 against 43 on 20 streams).

The checks are computed here, independently of the design code: a problem table of the streams and of the
network's own utility duties (each isothermal hot level releasing its heat just below its shifted
temperature, a cold one taking it just above, cooling water spread evenly over its range: the cascade of the
transshipment model, Papoulias & Grossmann 1983), its zero-flow points, and Euler's minimum-units target,
N − 1 for every part between two of them (Linnhoff et al. 1982, *User Guide on Process Integration*, IChemE,
the minimum-units target applied to each subnetwork; Hohmann 1971).
"""

import numpy as np
import pytest

from heatloom.model import StreamTable, Utility, UtilityKind
from heatloom.network.design import design_mer
from heatloom.network.structure import check_network

DT = 10.0

FOURTEEN = dict(   # generated(14) of benchmarks/bench_design.py (invented)
    names=["H1", "C1", "H2", "C2", "H3", "C3", "H4", "C4", "H5", "C5", "H6", "C6", "H7", "C7"],
    supply=[65.0, 21.0, 83.0, 119.0, 241.0, 59.0, 195.0, 104.0, 235.0, 88.0, 197.0, 128.0, 174.0, 83.0],
    target=[20.0, 74.0, 54.0, 240.0, 187.0, 125.0, 162.0, 133.0, 209.0, 172.0, 28.0, 261.0, 55.0, 153.0],
    cp=[11.6, 49.6, 38.6, 8.2, 14.7, 34.1, 30.7, 10.2, 1.8, 4.8, 38.4, 15.5, 5.1, 35.3])

LEVELS = [Utility("HP steam", 320, 320, 80.0, UtilityKind.HOT, 3.0),
          Utility("MP steam", 210, 210, 60.0, UtilityKind.HOT, 3.0),
          Utility("LP steam", 150, 150, 40.0, UtilityKind.HOT, 3.0),
          Utility("steam raising", 140, 140, 2.0, UtilityKind.COLD, 3.0),
          Utility("CW", 10, 15, 10.0, UtilityKind.COLD, 1.5)]


def cascade_cuts_and_target(d, utilities, duties):
    """Zero-flow points of the cascade (shifted °C) and Euler's target summed over the parts between them."""
    half = DT / 2
    streams = [(n, ts - half, tt - half, cp) if ts > tt else (n, ts + half, tt + half, cp)
               for n, ts, tt, cp in zip(d["names"], d["supply"], d["target"], d["cp"])]
    ranges = {u.name: ((u.supply_temperature - half, u.target_temperature - half) if u.is_hot else
                       (u.supply_temperature + half, u.target_temperature + half)) for u in utilities}
    temps = sorted({t for _, a, b, _ in streams for t in (a, b)} | {t for r in ranges.values() for t in r},
                   reverse=True)
    k = len(temps) - 1
    heat = {}   # participant -> heat it brings (+) or takes (-) in each interval, hottest first [kW]
    for name, a, b, cp in streams:
        hi, lo = max(a, b), min(a, b)
        heat[name] = np.array([(1 if a > b else -1) * cp * max(0.0, min(hi, temps[i]) - max(lo, temps[i + 1]))
                               for i in range(k)])
    for u in utilities:
        q, (a, b) = duties.get(u.name, 0.0), ranges[u.name]
        row = np.zeros(k)
        if a == b:   # isothermal: a hot level just below its temperature, a cold one just above
            i = temps.index(a) if u.is_hot else temps.index(a) - 1
            row[i] = q
        else:
            hi, lo = max(a, b), min(a, b)
            row = np.array([q * max(0.0, min(hi, temps[i]) - max(lo, temps[i + 1])) / (hi - lo) for i in range(k)])
        heat[u.name] = row if u.is_hot else -row
    flow = np.cumsum(sum(heat.values()))
    scale = max(sum(np.abs(r).sum() for r in heat.values()), 1.0)
    assert flow.min() >= -1e-7 * scale and abs(flow[-1]) <= 1e-7 * scale   # the duties balance the process
    activity = np.cumsum(sum(np.abs(r) for r in heat.values()))
    cut_after = [i for i in range(k - 1) if abs(flow[i]) <= 1e-7 * scale
                 and activity[i] > 1e-7 * scale and activity[-1] - activity[i] > 1e-7 * scale]
    bounds = [-1, *cut_after, k - 1]
    target = sum(sum(1 for r in heat.values() if np.abs(r[a + 1:b + 1]).sum() > 1e-7 * scale) - 1
                 for a, b in zip(bounds, bounds[1:]))
    return [temps[i + 1] for i in cut_after], target


def test_three_steam_levels_on_fourteen_streams_design_near_the_fewest_units():
    streams = StreamTable.from_arrays(FOURTEEN["names"], FOURTEEN["supply"], FOURTEEN["target"],
                                      FOURTEEN["cp"], film_coefficient=[0.5] * 14)
    net = design_mer(streams, DT, LEVELS, time_limit=5)
    check_network(net, streams, LEVELS)
    duties: dict = {}
    for unit in (*net.heaters, *net.coolers):
        duties[unit.utility] = duties.get(unit.utility, 0.0) + unit.duty
    assert {k for k, v in duties.items() if v > 1e-6} >= {"HP steam", "MP steam", "LP steam"}
    cuts, target = cascade_cuts_and_target(FOURTEEN, LEVELS, duties)
    # utility pinches inside the region above the process pinch: the case the design used to fail
    assert len(cuts) >= 3
    assert net.unit_target == target
    # the design gives 28 on our machine (regression value, not a source) within 3.4 s; before the cut at
    # the utility pinches 31 with this budget and 79 with 20 s
    assert net.units <= 1.2 * target
    # every unit keeps ΔTmin at both ends, the steam at its level (recomputed from the units' temperatures)
    level = {u.name: u.supply_temperature for u in LEVELS}
    for h in net.heaters:
        assert h.utility_in == h.utility_out == level[h.utility]
        assert h.utility_in - h.cold_out >= DT - 1e-9
    for x in net.exchangers:
        assert min(x.hot_in - x.cold_out, x.hot_out - x.cold_in) >= DT - 1e-9


@pytest.mark.parametrize("label, before", [("between pinches 1", "between pinches 2"),
                                           ("between pinches 2", "below"), ("above", "between pinches 1")])
def test_regions_between_several_pinches_keep_their_order_on_the_grid(label, before):
    """Regions between utility pinches are drawn hottest first, after 'above' and before 'below'."""
    from heatloom.network.streamorder import grid_key
    from heatloom.network.structure import Cooler

    def cooler(region):
        return Cooler("H", "CW", 10.0, 60, 50, 10, 15, stage=0, region=region)

    assert grid_key(cooler(label)) < grid_key(cooler(before))
