"""Utility units at the supply end of a stream in the lowest-TAC design, and the MER network returned when
no stagewise network is cheaper.

All data are invented (scenarios of our own, not from a plant or a publication).  A site with several steam
levels preheats a cold feed with its cheap, cool steam before the process exchanger that takes it further,
and a hot effluent raises steam from its hottest part before it meets the process: the stagewise form puts
utility units at both ends of a stream for that (``Topology.preheaters`` / ``precoolers``).  The expected
costs of the two small cases are computed here, independently of the design code: every network of the one
structure that can win (a supply-end utility unit, one exchanger, utility units at the target ends) on a
fine grid of its two free temperatures, with the exact log mean and the cost law written out in this file.
check_network, independent of the search, checks every returned network at EMAT.
"""

import numpy as np
import pytest

from heatloom.model import Segment, Stream, StreamTable, Utility, UtilityKind
from heatloom.model.costs import CostLaw, CostSettings
from heatloom.network.design import design_mer
from heatloom.network.solvers import solve
from heatloom.network.structure import check_network
from heatloom.network.tac.problem import make_problem
from heatloom.network.tac.search import design_tac
from heatloom.network.tac.starts import stagewise_milp

LAW = (1000.0, 300.0, 0.8)   # money/year = 1000 + 300·A^0.8, A in m² (invented, annualised)
COSTS = CostSettings(annualised=True, exchanger=CostLaw(*LAW))
EMAT = 1.0


def _log_mean(a, b):
    a, b = np.asarray(a, float), np.asarray(b, float)
    with np.errstate(divide="ignore", invalid="ignore"):
        lm = (a - b) / np.log(a / b)
    return np.where(np.abs(a - b) < 1e-9, a, lm)


def _unit_cost(duty, u, dt1, dt2):
    """Annual capital cost of a counter-current unit: 0 where it carries nothing."""
    area = duty / (u * _log_mean(dt1, dt2))
    return np.where(duty > 1e-9, LAW[0] + LAW[1] * np.maximum(area, 0.0) ** LAW[2], 0.0)


def _u(h1, h2):
    return 1.0 / (1.0 / h1 + 1.0 / h2)


def _run(streams, utilities, restructure=False):
    """The lowest-TAC design; with ``restructure`` the stagewise result (its supply-end units included) also
    becomes a layout for the search beyond the stagewise form."""
    net = design_tac(streams, utilities, costs=COSTS, emat=EMAT, seed=0, starts=1, rounds=6, workers=1,
                     time_limit=10 if restructure else 60, restructure=restructure)
    check_network(net, streams, utilities, dt_min=EMAT)
    assert not any("starting MER network" in n for n in net.notes)
    return net


# ---------------------------------------------------------------------------------------- preheater

def preheat_case():
    """Feed C 100 → 200 °C (CP 10 kW/K); effluent H 230 → 180 °C (CP 10); LP steam at 150 °C (30 per
    kW·year), HP steam at 260 °C (120), cooling water 20 → 30 °C (10); film coefficients in kW/(m²·K)."""
    streams = StreamTable((Stream.simple("H", 230, 180, 10, film_coefficient=1.0),
                           Stream.simple("C", 100, 200, 10, film_coefficient=1.0)))
    utilities = [Utility("LP steam", 150, 149, 30.0, UtilityKind.HOT, 4.0),
                 Utility("HP steam", 260, 259, 120.0, UtilityKind.HOT, 4.0),
                 Utility("cooling water", 20, 30, 10.0, UtilityKind.COLD, 1.5)]
    return streams, utilities


def _preheat_family_cost():
    """Least TAC of: LP steam C 100 → t1, exchanger H→C of load q (C t1 → t1 + q/10), HP steam to 200 °C,
    cooling water for what H keeps; every approach ≥ EMAT; grid of t1 and q."""
    t1, q = np.meshgrid(np.linspace(100.0, 149.0, 2451), np.linspace(5.0, 500.0, 100))
    tc = t1 + q / 10.0                      # C after the exchanger
    th = 230.0 - q / 10.0                   # H after the exchanger
    ok = (230.0 - tc >= EMAT) & (th - t1 >= EMAT) & (259.0 - tc >= EMAT) & (150.0 - t1 >= EMAT - 1e-9)
    u_steam, u_x, u_cw = _u(1.0, 4.0), _u(1.0, 1.0), _u(1.0, 1.5)
    lp, hp, cw = 10.0 * (t1 - 100.0), 10.0 * (200.0 - tc), 10.0 * (th - 180.0)
    tac = (_unit_cost(lp, u_steam, 150.0 - t1, 49.0) + _unit_cost(q, u_x, 230.0 - tc, th - t1)
           + _unit_cost(hp, u_steam, 60.0, 259.0 - tc) + _unit_cost(cw, u_cw, th - 30.0, 160.0)
           + 30.0 * lp + 120.0 * hp + 10.0 * cw)
    return float(np.min(np.where(ok, tac, np.inf)))


@pytest.mark.parametrize("restructure", [False, True])
def test_cheap_steam_preheats_the_feed_before_its_process_exchanger(restructure):
    streams, utilities = preheat_case()
    net = _run(streams, utilities, restructure)
    x = next(e for e in net.exchangers if e.cold == "C")
    lp = [h for h in net.heaters if h.utility == "LP steam"]
    assert lp and all(h.cold_out <= x.cold_in + 1e-6 for h in lp)      # at the feed's supply end
    assert lp[0].cold_in == 100.0
    best = _preheat_family_cost()
    # the search reaches the best of that structure (the grid is a little coarse, so it may do better)
    assert best * (1 - 5e-3) <= net.total_annual_cost <= best * (1 + 1e-4)
    # independent of the structure: the utility bill is the heaters' duties at their prices
    price = {u.name: u.cost for u in utilities}
    bill = sum(u.duty * price[u.utility] for u in (*net.heaters, *net.coolers))
    assert abs(net.operating_cost - bill) <= 1e-6 * bill


# ---------------------------------------------------------------------------------------- precooler

def precool_case():
    """Effluent H 300 → 60 °C (CP 10 kW/K); feed C 40 → 120 °C (CP 10); steam raised at 150 °C from boiler
    feed water (a cold utility at 1 per kW·year: the steam is worth nearly what it costs to handle),
    cooling water 20 → 30 °C (20), LP steam at 150 °C for heating (30)."""
    streams = StreamTable((Stream.simple("H", 300, 60, 10, film_coefficient=1.0),
                           Stream.simple("C", 40, 120, 10, film_coefficient=1.0)))
    utilities = [Utility("LP steam", 150, 149, 30.0, UtilityKind.HOT, 4.0),
                 Utility("steam raising", 150, 151, 1.0, UtilityKind.COLD, 4.0),
                 Utility("cooling water", 20, 30, 20.0, UtilityKind.COLD, 1.5)]
    return streams, utilities


def _precool_family_cost():
    """Least TAC of: steam raised from H 300 → t1, exchanger H→C of load q (H t1 → t1 − q/10, C 40 → 40 +
    q/10), cooling water for the rest of H, LP steam for the rest of C; every approach ≥ EMAT."""
    t1, q = np.meshgrid(np.linspace(152.0, 300.0, 7401), np.linspace(8.0, 800.0, 100))
    th, tc = t1 - q / 10.0, 40.0 + q / 10.0
    ok = (t1 - tc >= EMAT) & (th - 40.0 >= EMAT) & (th >= 60.0) & (149.0 - tc >= EMAT)
    u_steam, u_x, u_cw = _u(1.0, 4.0), _u(1.0, 1.0), _u(1.0, 1.5)
    sr, cw, lp = 10.0 * (300.0 - t1), 10.0 * (th - 60.0), 10.0 * (120.0 - tc)
    tac = (_unit_cost(sr, u_steam, 300.0 - 151.0, t1 - 150.0) + _unit_cost(q, u_x, t1 - tc, th - 40.0)
           + _unit_cost(cw, u_cw, th - 30.0, 40.0) + _unit_cost(lp, u_steam, 150.0 - 120.0, 149.0 - tc)
           + 1.0 * sr + 20.0 * cw + 30.0 * lp)
    return float(np.min(np.where(ok, tac, np.inf)))


def _end_only_cost():
    """Least TAC with the utility units at the target ends only: exchanger H 300 → 300 − q/10 first, then
    steam raising down to t2 ≥ 151 °C, then cooling water to 60 °C; LP steam for the rest of C."""
    q, t2 = np.meshgrid(np.linspace(8.0, 800.0, 100), np.linspace(151.0, 300.0, 1491))
    th, tc = 300.0 - q / 10.0, 40.0 + q / 10.0
    t2 = np.minimum(t2, th)
    ok = (300.0 - tc >= EMAT) & (th - 40.0 >= EMAT) & (149.0 - tc >= EMAT)
    u_steam, u_x, u_cw = _u(1.0, 4.0), _u(1.0, 1.0), _u(1.0, 1.5)
    sr, cw, lp = 10.0 * (th - t2), 10.0 * (t2 - 60.0), 10.0 * (120.0 - tc)
    tac = (_unit_cost(q, u_x, 300.0 - tc, th - 40.0) + _unit_cost(sr, u_steam, th - 151.0, np.maximum(t2 - 150.0, 1e-9))
           + _unit_cost(cw, u_cw, t2 - 30.0, 40.0) + _unit_cost(lp, u_steam, 150.0 - 120.0, 149.0 - tc)
           + 1.0 * sr + 20.0 * cw + 30.0 * lp)
    return float(np.min(np.where(ok, tac, np.inf)))


@pytest.mark.parametrize("restructure", [False, True])
def test_a_hot_effluent_raises_steam_before_it_meets_the_process(restructure):
    streams, utilities = precool_case()
    net = _run(streams, utilities, restructure)
    x = next(e for e in net.exchangers if e.hot == "H")
    raised = [c for c in net.coolers if c.utility == "steam raising"]
    assert raised and all(c.hot_out >= x.hot_in - 1e-6 for c in raised)   # at the effluent's supply end
    assert raised[0].hot_in == 300.0
    best = _precool_family_cost()
    assert best * (1 - 5e-3) <= net.total_annual_cost <= best * (1 + 1e-4)
    # what the supply end is worth here: the best network with utility units at the target ends only
    assert net.total_annual_cost < 0.9 * _end_only_cost()


# ------------------------------------------------------------------------- MER network returned

def test_the_mer_network_is_returned_when_no_stagewise_network_is_cheaper():
    """Feed C1 40 → 240 °C; a cool effluent H1 (130 → 70 °C) heats it first, LP steam (cheap) next, a hot
    effluent H2 (320 → 220 °C) at the top: the MER design at ΔTmin 10 K puts steam between the two process
    exchangers, where no stagewise network (utility units at the stream ends) can."""
    streams = StreamTable((Stream.simple("H1", 130, 70, 10, film_coefficient=1.0),
                           Stream.simple("H2", 320, 220, 8, film_coefficient=1.0),
                           Stream.simple("C1", 40, 240, 10, film_coefficient=1.0)))
    utilities = [Utility("LP steam", 160, 159, 30.0, UtilityKind.HOT, 4.0),
                 Utility("HP steam", 300, 299, 200.0, UtilityKind.HOT, 4.0),
                 Utility("cooling water", 20, 30, 10.0, UtilityKind.COLD, 1.5)]
    mer = design_mer(streams, 10.0, utilities)
    low = next(e for e in mer.exchangers if e.hot == "H1")
    high = next(e for e in mer.exchangers if e.hot == "H2")
    assert any(low.cold_out - 1e-9 <= h.cold_in and h.cold_out <= high.cold_in + 1e-9 for h in mer.heaters)
    net = design_tac(streams, utilities, seed=0, starts=1, rounds=4, workers=1, time_limit=60)
    assert net.total_annual_cost == mer.total_annual_cost
    check_network(net, streams, utilities, dt_min=1.0, contributions=True)
    assert net.dt_min == 1.0
    assert any(n.startswith("the starting MER network (ΔTmin 10 K) costs") for n in net.notes)


def test_a_boiling_feed_is_preheated_by_two_steam_levels_and_costs_less_than_the_mer_network():
    """Streams of several segments: a hot stream H5 289.7 → 203.3 °C and a feed C2 that boils over 1 K at
    125 °C, then heats to 208.4 °C; four hot utility levels and cooling water (shrunk from a generated
    robustness case).  The MER design at ΔTmin 10 K preheats C2 with LP and MP steam before H5 takes it to
    its target; the TAC design keeps that order (both steam levels at C2's supply end, in enthalpy
    coordinates) at EMAT 1 K, for less than the MER network costs by the same laws."""
    streams = StreamTable((
        Stream("H5", (Segment(289.7, 203.3, 6.3, 1.4, 4.0),)),
        Stream("C2", (Segment(125.0, 126.0, 252.4, 4.4, 4.0), Segment(126.0, 208.4, 12.2, 1.2, 4.0)))))
    utilities = [Utility("hot oil", 360, 310, 260.0, UtilityKind.HOT, 1.0),
                 Utility("HP steam", 300, 299, 220.0, UtilityKind.HOT, 4.0),
                 Utility("MP steam", 200, 199, 150.0, UtilityKind.HOT, 4.0),
                 Utility("LP steam", 150, 149, 110.0, UtilityKind.HOT, 4.0),
                 Utility("cooling water", 20, 30, 12.0, UtilityKind.COLD, 1.5)]
    mer = design_mer(streams, 10.0, utilities)
    x = next(e for e in mer.exchangers if e.cold == "C2")
    assert all(h.cold_out <= x.cold_in + 1e-9 for h in mer.heaters)
    net = design_tac(streams, utilities, seed=0, starts=1, rounds=4, workers=1, time_limit=60)
    assert net.total_annual_cost < mer.total_annual_cost
    check_network(net, streams, utilities, dt_min=1.0, contributions=True)
    assert not any("starting MER network" in n for n in net.notes)
    x = next(e for e in net.exchangers if e.cold == "C2")
    assert {h.utility for h in net.heaters} == {"LP steam", "MP steam"}
    assert all(h.cold_out <= x.cold_in + 1e-6 for h in net.heaters)
    assert min(h.cold_in for h in net.heaters) == 125.0


def test_match_rules_hold_for_supply_end_units():
    """With LP steam dearer than HP steam (125 against 120 per kW·year) nothing asks for it; required, it
    is the preheater (below the exchanger it cannot serve C) and carries at least the required least load,
    a tenth of the most LP steam could give C alone: 10 kW/K × (149 − 100) K × 0.1 = 49 kW.  Forbidden
    (at its usual price), it appears nowhere on the stream."""
    streams, utilities = preheat_case()
    kw = {"costs": COSTS, "emat": EMAT, "seed": 0, "starts": 1, "rounds": 3, "workers": 1, "time_limit": 60}
    dear = [Utility(u.name, u.supply_temperature, u.target_temperature, 125.0, u.kind, u.film_coefficient)
            if u.name == "LP steam" else u for u in utilities]
    assert not any(h.utility == "LP steam" for h in design_tac(streams, dear, **kw).heaters)
    net = design_tac(streams, dear, required=[("LP steam", "C")], **kw)
    lp = [h for h in net.heaters if h.utility == "LP steam"]
    assert sum(h.duty for h in lp) >= 49.0 - 1e-6
    x = next(e for e in net.exchangers if e.cold == "C")
    assert all(h.cold_out <= x.cold_in + 1e-6 for h in lp)
    net = design_tac(streams, utilities, forbidden=[("LP steam", "C")], **kw)
    assert not any(h.utility == "LP steam" for h in net.heaters)
    check_network(net, streams, utilities, dt_min=EMAT)


def test_the_stagewise_milp_proposes_supply_end_units():
    """The starting MILP (Yee & Grossmann's stagewise model with a linearised area cost) holds supply-end
    utility units too: in the first case LP steam can serve the feed only below the exchanger (it condenses
    at 150 °C, the exchanger leaves the feed above 148 °C), in the second the steam raised at 150 °C can only
    take the effluent's hot end; both are worth far more than their area costs (30 against 120 per kW·year,
    1 against 20)."""
    for case, side, level in ((preheat_case, "preheaters", "LP steam"), (precool_case, "precoolers", "steam raising")):
        streams, utilities = case()
        p = make_problem(streams, utilities, COSTS, EMAT)
        prob, read = stagewise_milp(p, 2, {})
        solve(prob, time_limit=30)
        top = read()
        levels = p.heat_levels if side == "preheaters" else p.cool_levels
        assert [levels[lv].name for _, lv in getattr(top, side)] == [level]


def _drawn_feed_network():
    """Streams, utilities and a MER network drawn by hand (invented): a feed heated 60 → 200 °C by H1 to
    110 °C, LP steam at 150 °C to 130 °C, H2 to 170 °C and HP steam at 250 °C to 200 °C."""
    from heatloom.network.structure import Exchanger, Heater, Network

    streams = StreamTable([Stream.simple("H1", 120.0, 70.0, 10.0, film_coefficient=1.0),
                           Stream.simple("H2", 180.0, 140.0, 10.0, film_coefficient=1.0),
                           Stream.simple("feed", 60.0, 200.0, 10.0, film_coefficient=1.0)])
    utilities = [Utility("HP steam", 250.0, 250.0, 80.0, UtilityKind.HOT, 3.0),
                 Utility("LP steam", 150.0, 150.0, 40.0, UtilityKind.HOT, 3.0),
                 Utility("CW", 20.0, 30.0, 10.0, UtilityKind.COLD, 1.5)]
    mer = Network((Exchanger("H1", "feed", 500.0, 120.0, 70.0, 60.0, 110.0),
                   Exchanger("H2", "feed", 400.0, 180.0, 140.0, 130.0, 170.0)),
                  (Heater("feed", "LP steam", 200.0, 110.0, 130.0, 150.0, 150.0),
                   Heater("feed", "HP steam", 300.0, 170.0, 200.0, 250.0, 250.0)), (), 10.0)
    return streams, utilities, mer


def test_a_steam_level_between_two_exchangers_that_cannot_reach_the_target_starts_at_the_supply_end():
    """A MER network (drawn here, invented) heats a feed 60 → 200 °C: H1 takes it to 110 °C, LP steam at
    150 °C to 130 °C, H2 to 170 °C, HP steam at 250 °C to 200 °C.  LP steam cannot take the feed to its 200 °C
    target, so at the target end (the only place the stagewise form had) the topology was infeasible and the
    TAC search lost its MER start (found on generated 20 streams with three steam levels).  It now starts at
    the supply end, and the topology's loads are feasible: checked by building the network of its optimum
    and checking it at EMAT (check_network, independent of the NLP)."""
    from heatloom.network.tac.build import network_from_solution
    from heatloom.network.tac.nlp import solve_topology
    from heatloom.network.tac.starts import topology_from_network

    streams, utilities, mer = _drawn_feed_network()
    check_network(mer, streams, utilities)   # the drawn network itself is sound
    p = make_problem(streams, utilities, COSTS, EMAT)
    top = topology_from_network(p, mer)
    names = [u.name for u in p.heat_levels]
    assert {(p.cold_names[j], names[lv]) for j, lv in top.preheaters} == {("feed", "LP steam")}
    assert {(p.cold_names[j], names[lv]) for j, lv in top.heaters} == {("feed", "HP steam")}
    sol = solve_topology(p, top)
    assert sol is not None
    net = network_from_solution(p, sol, streams, utilities, COSTS)
    check_network(net, streams, utilities, dt_min=EMAT)
    lp = [h for h in net.heaters if h.utility == "LP steam"]
    assert lp and all(h.cold_in == pytest.approx(60.0) and h.cold_out <= 150.0 - EMAT + 1e-9 for h in lp)


def test_the_mer_start_carries_the_duties_of_its_exchangers():
    """The MER network drawn above (invented): the feed meets H2 (400 kW) at its hot end and H1 (500 kW)
    below it, so laid into stages H2's exchanger comes first.  The start gives the search those duties as
    its guess of the topology's loads (before, only the topology: the refinement began at the LP vertex,
    which on streams of several segments is often no feasible start, and otherwise a poorer one)."""
    from heatloom.network.tac.starts import start_from_network

    streams, utilities, mer = _drawn_feed_network()
    p = make_problem(streams, utilities, COSTS, EMAT)
    top, loads = start_from_network(p, mer)
    h1, h2, feed = p.hot_names.index("H1"), p.hot_names.index("H2"), p.cold_names.index("feed")
    assert loads == {(h2, feed, 0): pytest.approx(400.0), (h1, feed, 1): pytest.approx(500.0)}
    assert set(loads) == set(top.matches)


def test_a_mer_heater_over_part_of_its_oil_range_still_starts_the_search():
    """Invented: H1 340 → 250 °C and a feed 200 → 295 °C (10 kW/K each), hot oil 330 → 250 °C.  The MER
    design preheats the feed with oil from 200 to 205 °C and H1 takes it to 295 °C.  Laid into the stagewise
    form the heater sits at the feed's target end, where oil returning at 250 °C cannot heat it from 290 °C,
    and H1 has no cooler to leave its heat to: no loads of that topology keep the approaches, and the search
    lost its MER start (only "utilities only" was left).  It now starts from that topology with a heater and
    a cooler at every stream end, with a note; the result passes check_network at EMAT."""
    streams = StreamTable.from_arrays(["H1", "feed"], [340.0, 200.0], [250.0, 295.0], [10.0, 10.0],
                                      film_coefficient=[1.0, 1.0])
    utilities = [Utility("oil", 330.0, 250.0, 60.0, UtilityKind.HOT, 1.0),
                 Utility("CW", 20.0, 30.0, 10.0, UtilityKind.COLD, 1.0)]
    net = design_tac(streams, utilities, costs=COSTS, emat=EMAT, time_limit=30, seed=0, starts=1, workers=1,
                     rounds=2)
    starts = next(n for n in net.notes if n.startswith("TAC search:"))
    assert "MER network at ΔTmin 10 K" in starts
    assert any(n.startswith("no loads of the MER network's topology keep every approach") for n in net.notes)
    check_network(net, streams, utilities, dt_min=EMAT)
