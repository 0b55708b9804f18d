"""TAC design: published benchmark problems, exact costs recomputed independently, checks, reproducibility.

Published sources (cited beside each use): the synthesis problems of tests/data/references/ with their
film coefficients, utilities, cost laws and published total annual costs (Roetzel, Luo & Chen 2020,
Design and Operation of Heat Exchangers and their Networks, ch. 6: Table 6.16 and its TAC table for the
Yee & Grossmann 1990 two hot / two cold problem; Table 6.23 and its TAC table for the Colberg & Morari
1990 three hot / four cold problem).  Areas are recomputed with the reference library ``ht`` (ht.LMTD) and
U = 1/(1/h_hot + 1/h_cold); the published cost laws are parsed here from the files' text, independently of
the code under test.  Invented data (marked) serve only the property checks.
"""


import ht
import numpy as np
import pytest
from refdata import cost_settings, load_reference, published_laws, reference_utilities

from heatloom.errors import InputError
from heatloom.model import Segment, Stream, StreamTable, Utility, UtilityKind
from heatloom.model.costs import CostLaw, CostSettings
from heatloom.network.design import design_mer
from heatloom.network.structure import check_network
from heatloom.network.tac.nlp import Topology, _log_mean_and_gradient, make_problem, solve_topology
from heatloom.network.tac.search import design_tac
from heatloom.network.tac.starts import stagewise_milp, topology_from_network


def recomputed_tac(net, data, streams) -> float:
    """TAC from the network's own temperatures: ht.LMTD, U from the film coefficients, published law."""
    laws = published_laws(data["cost_law"])
    h = {s.name: s.segments[0].film_coefficient for s in streams}
    h.update({u["name"]: u["h"] for u in data["utilities"]})
    price = {u["name"]: u["cost_per_kW_year"] for u in data["utilities"]}
    total = 0.0

    def capital(kind, duty, hot, cold, thi, tho, tci, tco):
        u = 1.0 / (1.0 / h[hot] + 1.0 / h[cold])
        area = duty / (u * ht.LMTD(thi, tho, tci, tco))         # counter-current by default
        a, b, c = laws[kind]
        return a + b * area ** c

    for e in net.exchangers:
        total += capital("exchanger", e.duty, e.hot, e.cold, e.hot_in, e.hot_out, e.cold_in, e.cold_out)
    for x in net.heaters:
        total += capital("heater", x.duty, x.utility, x.cold, x.utility_in, x.utility_out, x.cold_in, x.cold_out)
        total += price[x.utility] * x.duty
    for x in net.coolers:
        total += capital("cooler", x.duty, x.hot, x.utility, x.hot_in, x.hot_out, x.utility_in, x.utility_out)
        total += price[x.utility] * x.duty
    return total


def end_approaches(net):
    for e in net.exchangers:
        yield e.hot_in - e.cold_out, e.hot_out - e.cold_in
    for x in net.heaters:
        yield x.utility_in - x.cold_out, x.utility_out - x.cold_in
    for x in net.coolers:
        yield x.hot_in - x.utility_out, x.hot_out - x.utility_in


def design_reference(name, **options):
    data, streams = load_reference(name)
    utilities = reference_utilities(data)
    net = design_tac(streams, utilities, costs=cost_settings(data["cost_law"]), **options)
    return data, streams, utilities, net


def assert_sound(net, data, streams, utilities, emat=1.0):
    check_network(net, streams, utilities, dt_min=emat)
    assert min(min(pair) for pair in end_approaches(net)) >= emat - 1e-6
    assert net.total_annual_cost == pytest.approx(recomputed_tac(net, data, streams), rel=1e-9)
    assert net.total_annual_cost == pytest.approx(net.capital_cost + net.operating_cost, rel=1e-12)


# ----------------------------------------------------------------------------------------- published

@pytest.mark.slow
def test_yee_grossmann_2h2c_within_two_percent_of_best_published():
    # Roetzel, Luo & Chen 2020, ch. 6, Table 6.16 data; best published TAC 77 964 $/yr (book's own, stream
    # splits); Wang et al. 2017 (no split) 79 233 $/yr.  Tolerance asked for: 2 % of the best published TAC.
    data, streams, utilities, net = design_reference("synthesis_yee_grossmann_2h2c", seed=3, starts=1, rounds=24,
                                                     time_limit=300)
    best = data["published_tac"][0][1]
    assert best == 77964
    assert net.total_annual_cost <= 1.02 * best
    assert_sound(net, data, streams, utilities)


@pytest.mark.slow
def test_colberg_morari_3h4c_within_two_percent_of_best_published():
    # Roetzel, Luo & Chen 2020, ch. 6, Table 6.23 data (temperatures in K, converted by refdata); best
    # published TAC 176 200 $/yr (book's own, two sub-networks); Yee & Grossmann 1990 recomputed 185 106.
    data, streams, utilities, net = design_reference("synthesis_colberg_morari_3h4c", seed=0, starts=1, rounds=8,
                                                     time_limit=300)
    best = data["published_tac"][0][1]
    assert best == 176200
    assert net.total_annual_cost <= 1.02 * best
    assert_sound(net, data, streams, utilities)


@pytest.mark.slow
def test_short_run_is_sound_and_reproducible_with_a_seed():
    # Roetzel, Luo & Chen 2020, Table 6.16 data; a short search (the published-TAC tests above run longer)
    runs = [design_reference("synthesis_yee_grossmann_2h2c", seed=11, starts=1, rounds=2, time_limit=120)
            for _ in range(2)]
    (data, streams, utilities, a), (_, _, _, b) = runs
    assert_sound(a, data, streams, utilities)
    assert a.total_annual_cost == b.total_annual_cost
    assert [e.to_dict() for e in a.exchangers] == [e.to_dict() for e in b.exchangers]
    assert [c.to_dict() for c in a.coolers] == [c.to_dict() for c in b.coolers]
    # the search never returns anything worse than the MER network it starts from, costed the same way
    mer = design_mer(streams, 10.0, utilities, costs=cost_settings(data["cost_law"]))
    assert a.total_annual_cost <= mer.total_annual_cost + 1e-6


def test_larger_emat_is_kept_everywhere():
    # Roetzel, Luo & Chen 2020, Table 6.16 data, designed with EMAT 10 K instead of 1 K
    data, streams, utilities, net = design_reference("synthesis_yee_grossmann_2h2c", emat=10.0, seed=0, starts=1,
                                                     rounds=1, milp_iterations=1, time_limit=120)
    assert net.dt_min == 10.0
    assert_sound(net, data, streams, utilities, emat=10.0)
    assert any("EMAT 10 K" in n for n in net.notes)


# ------------------------------------------------------------------------------- the pieces, exactly

def test_log_mean_and_gradient_match_ht_and_finite_differences():
    # log mean against ht.LMTD (counter-current, Th_in, Th_out, Tc_in, Tc_out); gradient by central
    # differences; includes a nearly balanced pair (series branch)
    a = np.array([30.0, 5.0, 5.0 + 1e-7, 100.0, 1.0])
    b = np.array([70.0, 5.0, 5.0, 1.0, 1.0001])
    lm, ga, gb = _log_mean_and_gradient(a, b)
    for ai, bi, li in zip(a, b, lm):
        # ht evaluates (a − b)/ln(a/b) directly and loses digits when a ≈ b (here 1e-9 relative): rel 1e-8
        assert li == pytest.approx(ht.LMTD(200.0, 100.0 + bi, 100.0, 200.0 - ai), rel=1e-8)
    h = 1e-6

    def lmtd(x, y):
        return _log_mean_and_gradient(np.array([x]), np.array([y]))[0][0]

    for ai, bi, gai, gbi in zip(a, b, ga, gb):
        assert gai == pytest.approx((lmtd(ai + h, bi) - lmtd(ai - h, bi)) / (2 * h), rel=1e-5, abs=1e-7)
        assert gbi == pytest.approx((lmtd(ai, bi + h) - lmtd(ai, bi - h)) / (2 * h), rel=1e-5, abs=1e-7)


def test_refined_topology_cost_matches_its_network():
    # Roetzel, Luo & Chen 2020, Table 6.16 data; a fixed two-stage topology (both hot streams split over
    # both cold streams in each stage, one cooler per hot stream, heaters on both cold streams)
    data, streams = load_reference("synthesis_yee_grossmann_2h2c")
    utilities = reference_utilities(data)
    p = make_problem(streams, utilities, cost_settings(data["cost_law"]), 1.0)
    top = Topology(2, frozenset({(0, 0, 0), (0, 1, 0), (1, 0, 1), (1, 1, 1)}), frozenset({(0, 0), (1, 0)}),
                   frozenset({(0, 0), (1, 0)}))
    sol = solve_topology(p, top, extra_vertex=True)
    assert sol is not None
    from heatloom.network.tac.search import network_from_solution

    net = network_from_solution(p, sol, streams, utilities, cost_settings(data["cost_law"]))
    assert net.total_annual_cost == pytest.approx(sol.tac, rel=1e-9)
    assert_sound(net, data, streams, utilities)
    # isothermal mixing: the branches of a split stream leave a stage at one temperature
    for k in (0, 1):
        outs = {round(e.hot_out, 9) for e in net.exchangers if e.hot == "H1" and e.stage == k}
        assert len(outs) <= 1


def test_infeasible_topology_is_reported_as_none():
    # Roetzel, Luo & Chen 2020, Table 6.16 data: with no heater on C2 and H2 its only source, C2's whole
    # duty, 40 kW/K × 60 K = 2400 kW, must come from H2, which has only 15 kW/K × 120 K = 1800 kW to give.
    data, streams = load_reference("synthesis_yee_grossmann_2h2c")
    p = make_problem(streams, reference_utilities(data), cost_settings(data["cost_law"]), 1.0)
    top = Topology(1, frozenset({(1, 1, 0)}), frozenset({(0, 0)}), frozenset({(0, 0), (1, 0)}))
    assert solve_topology(p, top) is None


def test_mer_network_lays_into_stages_and_milp_gives_a_topology():
    # Roetzel, Luo & Chen 2020, Table 6.23 data
    data, streams = load_reference("synthesis_colberg_morari_3h4c")
    utilities = reference_utilities(data)
    costs = cost_settings(data["cost_law"])
    p = make_problem(streams, utilities, costs, 1.0)
    mer = design_mer(streams, 10.0, utilities, costs=costs)
    top = topology_from_network(p, mer)
    assert top is not None
    assert len(top.matches) == len(mer.exchangers)
    assert solve_topology(p, top) is not None
    from heatloom.network.solvers import solve

    prob, read = stagewise_milp(p, 4, {})
    report = solve(prob, time_limit=30)
    assert report.has_solution
    milp_top = read()
    assert milp_top.stages == 4
    assert solve_topology(p, milp_top) is not None


# ------------------------------------------------------------------- utilities and invented problems

def invented_problem():
    """Invented data (a small plant of our own): two hot, two cold streams; two steam levels (isothermal,
    non-isothermal hot oil) and two cold utilities (cooling water, chilled water)."""
    streams = StreamTable((Stream.simple("reactor effluent", 260, 60, 12.0, film_coefficient=0.8),
                           Stream.simple("column bottoms", 180, 15, 8.0, film_coefficient=0.6),
                           Stream.simple("feed", 30, 230, 10.0, film_coefficient=0.7),
                           Stream.simple("reboiler loop", 140, 250, 6.0, film_coefficient=1.2)))
    utilities = [Utility("LP steam", 160, 159, 90.0, UtilityKind.HOT, 3.0),
                 Utility("hot oil", 300, 270, 150.0, UtilityKind.HOT, 0.9),
                 Utility("cooling water", 20, 35, 10.0, UtilityKind.COLD, 1.5),
                 Utility("chilled water", 5, 10, 60.0, UtilityKind.COLD, 1.5)]
    return streams, utilities


def test_several_utility_levels_in_series_at_the_stream_ends():
    # invented data; the network must balance, keep EMAT, and put the utility levels in temperature order
    streams, utilities = invented_problem()
    costs = CostSettings(annualised=True, exchanger=CostLaw(4000, 600, 0.7))
    net = design_tac(streams, utilities, costs=costs, emat=2.0, seed=1, starts=1, rounds=2, milp_iterations=2,
                     time_limit=120)
    check_network(net, streams, utilities, dt_min=2.0)
    assert min(min(pair) for pair in end_approaches(net)) >= 2.0 - 1e-6
    # column bottoms must end at 15 °C: only chilled water (5 → 10 °C) reaches it (cooling water enters at 20 °C)
    assert any(c.hot == "column bottoms" and c.utility == "chilled water" for c in net.coolers)
    # the cooling water cooler of a stream, if any, comes before (hotter than) its chilled water cooler
    for s in ("reactor effluent", "column bottoms"):
        units = {c.utility: c for c in net.coolers if c.hot == s}
        if len(units) == 2:
            assert units["cooling water"].hot_out == pytest.approx(units["chilled water"].hot_in)
    # the feed must reach 230 °C: LP steam (159 °C outlet) cannot finish it; hot oil heats its last part
    feed_heaters = sorted((h for h in net.heaters if h.cold == "feed"), key=lambda h: h.cold_in)
    assert feed_heaters and feed_heaters[-1].utility == "hot oil"
    assert feed_heaters[-1].cold_out == pytest.approx(230.0)
    operating = sum(h.duty * {u.name: u.cost for u in utilities}[h.utility] for h in net.heaters) + \
        sum(c.duty * {u.name: u.cost for u in utilities}[c.utility] for c in net.coolers)
    assert net.operating_cost == pytest.approx(operating, rel=1e-12)


def test_refusals():
    streams, utilities = invented_problem()
    with pytest.raises(InputError, match="EMAT must be"):
        design_tac(streams, utilities, emat=0.0)
    with pytest.raises(InputError, match="starts must be"):
        design_tac(streams, utilities, starts=0)
    segmented = StreamTable((Stream("vapour", (Segment(200, 150, 2.0, 1.0), Segment(150, 149, 300.0, 1.0))),
                             Stream.simple("feed", 30, 120, 5.0, film_coefficient=1.0)))
    with pytest.raises(InputError, match="segments"):
        design_tac(segmented, utilities)
    bare = StreamTable((Stream.simple("H", 150, 40, 1.0), Stream.simple("C", 20, 120, 1.0)))
    with pytest.raises(InputError, match="film coefficient h missing"):
        design_tac(bare, utilities)
    only_hot = [u for u in utilities if u.is_hot]
    with pytest.raises(InputError, match="hot and one cold utility"):
        design_tac(streams, only_hot)


@pytest.mark.slow
def test_parallel_starts_give_the_same_network_as_one_process():
    # Roetzel, Luo & Chen 2020, Table 6.16 data: two starts on two local processes or in this process
    options = {"seed": 4, "starts": 2, "rounds": 1, "milp_iterations": 1, "time_limit": 120}
    _, _, _, pooled = design_reference("synthesis_yee_grossmann_2h2c", workers=2, **options)
    data, streams, utilities, inline = design_reference("synthesis_yee_grossmann_2h2c", workers=1, **options)
    assert pooled.total_annual_cost == inline.total_annual_cost
    assert [e.to_dict() for e in pooled.exchangers] == [e.to_dict() for e in inline.exchangers]
    assert_sound(pooled, data, streams, utilities)
