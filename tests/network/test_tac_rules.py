"""Forbidden and required matches in the lowest-TAC design, and required matches kept by evolution.

Published data: the two hot / two cold problem of Yee & Grossmann (1990) as given by Roetzel, Luo & Chen
2020, Design and Operation of Heat Exchangers and their Networks, ch. 6, Table 6.16, with its cost law and
utility prices (tests/data/references); every network is recomputed with its published law by ht.LMTD
(``refdata.assert_sound``).  Sinnott's four-stream problem (Coulson & Richardson's
Chemical Engineering Vol. 6, ch. 3, Table 3.6; h 0.5 kW/(m²·K) is this test's assumption) for evolution.
The least load of a required match is computed here from the stream data (10 % of the most the match could
carry alone), independently of ``TacProblem.least_load``.  Invented data are marked.
"""

import pytest
from refdata import assert_sound, cost_settings, load_reference, reference_utilities

from heatloom.errors import InfeasibleError, InputError
from heatloom.model import MatchRules, StreamTable, Utility, UtilityKind
from heatloom.model.costs import CostSettings
from heatloom.network import design_mer
from heatloom.network.evolution import evolve
from heatloom.network.solvers import solve
from heatloom.network.tac.branches import Layout
from heatloom.network.tac.layout_search import layout_additions
from heatloom.network.tac.nlp import make_problem
from heatloom.network.tac.search import design_tac
from heatloom.network.tac.starts import stagewise_milp

FAST = {"seed": 0, "starts": 1, "rounds": 2, "workers": 1, "milp_iterations": 2, "time_limit": 60}


def yee_grossmann():
    data, streams = load_reference("synthesis_yee_grossmann_2h2c")
    return data, streams, reference_utilities(data), cost_settings(data["cost_law"])


def pairs(net) -> dict:
    """(hot side, cold side) → total duty [kW] of every unit of a network."""
    out: dict = {}
    for unit in (*net.exchangers, *net.heaters, *net.coolers):
        out[unit.sides] = out.get(unit.sides, 0.0) + unit.duty
    return out


def test_a_forbidden_match_is_never_used():
    data, streams, utilities, costs = yee_grossmann()
    free = design_tac(streams, utilities, costs=costs, **FAST)
    assert ("H1", "C2") in pairs(free)            # the match the lowest-cost networks lean on
    net = design_tac(streams, utilities, costs=costs, forbidden=[("H1", "C2")], **FAST)
    assert ("H1", "C2") not in pairs(net)
    assert_sound(net, data, streams, utilities)
    assert any("forbidden H1→C2" in n for n in net.notes)


def test_a_forbidden_utility_never_serves_the_stream():
    data, streams, utilities, costs = yee_grossmann()
    net = design_tac(streams, utilities, costs=costs, forbidden=[("HU", "C2"), ("H1", "CU")], **FAST)
    assert ("HU", "C2") not in pairs(net) and ("H1", "CU") not in pairs(net)
    assert_sound(net, data, streams, utilities)


def test_a_required_match_carries_at_least_a_tenth_of_what_it_could_carry_alone():
    data, streams, utilities, costs = yee_grossmann()
    free = design_tac(streams, utilities, costs=costs, **FAST)
    assert ("H2", "C2") not in pairs(free)
    net = design_tac(streams, utilities, costs=costs, required=[("H2", "C2")], **FAST)
    assert_sound(net, data, streams, utilities)
    # H2 423 → 303 K, CP 15; C2 353 → 413 K, CP 40 (Table 6.16); EMAT 1 K: alone, at the supply ends, the
    # match carries at most min(15·120, 40·60, 15·(423 − 353 − 1), 40·(423 − 353 − 1)) = 1035 kW
    least = 0.1 * min(15 * 120, 40 * 60, 15 * (423 - 353 - 1), 40 * (423 - 353 - 1))
    assert pairs(net)[("H2", "C2")] >= least * (1 - 1e-9)
    note = next(n for n in net.notes if n.startswith("required matches carry"))
    assert "H2:C2" in note and f"at least {least:,.4g} kW" in note


def test_a_required_utility_serves_its_stream():
    data, streams, utilities, costs = yee_grossmann()
    net = design_tac(streams, utilities, costs=costs, required=[("H1", "CU")], **FAST)
    assert_sound(net, data, streams, utilities)
    # H1 443 → 333 K, CP 30; cooling water 293 → 313 K: at most 30·(443 − 333) = 3300 kW down to H1's target
    assert pairs(net)[("H1", "CU")] >= 0.1 * 30 * (443 - 333) * (1 - 1e-9)


def test_the_stagewise_milp_keeps_the_rules():
    data, streams, utilities, costs = yee_grossmann()
    rules = MatchRules(forbidden=(("H1", "C2"),), required=(("H2", "C2"),))
    p = make_problem(streams, utilities, costs, 1.0, rules=rules)
    prob, read = stagewise_milp(p, 2, {})
    assert solve(prob, time_limit=30).has_solution
    top = read()
    assert not any((i, j) == (0, 1) for i, j, _ in top.matches)       # H1 → C2 has no variable
    assert any((i, j) == (1, 1) for i, j, _ in top.matches)


def test_layouts_never_add_a_forbidden_utility():
    # invented: one hot and one cold stream, two steam levels and cooling water
    s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 140], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    u = [Utility("LP", 160, 159, 90.0, UtilityKind.HOT, 3.0), Utility("HP", 200, 199, 120.0, UtilityKind.HOT, 3.0),
         Utility("water", 15, 25, 10.0, UtilityKind.COLD, 2.0)]
    p = make_problem(s, u, CostSettings(), 5.0, rules=MatchRules(forbidden=(("LP", "C"), ("H", "C"))))
    # one stream each: a path of one block of one branch carrying one unit
    lay = Layout((("cool", 0, 0), ("heat", 0, 1)), ((((0,),),),), ((((1,),),),))
    added = {x.units[-1] for x in layout_additions(p, lay)}
    assert ("heat", 0, 1) in added and ("cool", 0, 0) in added
    assert not any(k[0] == "x" for k in added)                     # H → C forbidden
    assert ("heat", 0, [n for n, v in enumerate(p.heat_levels) if v.name == "LP"][0]) not in added


def test_a_required_match_that_cannot_exchange_heat_is_refused():
    # invented: the cold stream enters hotter than the hot one
    s = StreamTable.from_arrays(["H", "C", "C2"], [100, 120, 20], [40, 150, 60], [2.0, 1.0, 1.0],
                                film_coefficient=[1.0] * 3)
    u = [Utility("steam", 200, 199, 120.0, UtilityKind.HOT, 3.0), Utility("water", 10, 20, 10.0, UtilityKind.COLD, 2.0)]
    with pytest.raises(InputError, match="required match H:C cannot exchange heat"):
        design_tac(s, u, required=[("H", "C")], **FAST)
    with pytest.raises(InputError, match="unknown cold side 'C9'"):
        design_tac(s, u, forbidden=[("H", "C9")], **FAST)


def test_rules_that_leave_no_network_are_an_infeasible_error():
    # invented: the only hot utility is forbidden on the only stream that needs heat beyond the hot stream
    s = StreamTable.from_arrays(["H", "C"], [100, 30], [40, 150], [2.0, 1.0], film_coefficient=[1.0, 1.0])
    u = [Utility("steam", 200, 199, 120.0, UtilityKind.HOT, 3.0), Utility("water", 10, 20, 10.0, UtilityKind.COLD, 2.0)]
    with pytest.raises(InfeasibleError, match=r"cannot be served by any utility it may use \(forbidden: steam:C\)"):
        design_tac(s, u, forbidden=[("steam", "C")], **FAST)



def test_hot_oil_that_returns_below_a_stream_s_supply_names_the_stream_and_the_way_out():
    # invented: C must be heated from 263 to 273 °C; the only hot stream is at 200 °C, and hot oil 330 → 250 °C
    # run over its whole range (the TAC model's heater) leaves at 250 °C, below C's supply + EMAT
    s = StreamTable.from_arrays(["H", "C", "C2"], [200, 263, 30], [40, 273, 100], [1.0, 1.0, 1.0],
                                film_coefficient=[1.0] * 3)
    u = [Utility("oil", 330, 250, 60.0, UtilityKind.HOT, 1.0), Utility("water", 10, 20, 10.0, UtilityKind.COLD, 2.0)]
    with pytest.raises(InfeasibleError, match=r"cold stream 'C' \(supply 263 °C\).*'oil' 330 → 250 °C.*--mode mer"):
        design_tac(s, u, **FAST)


SINNOTT = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140], [3.0, 1.0, 2.0, 4.5],
                                  film_coefficient=[0.5] * 4)


def test_evolution_keeps_the_last_unit_of_a_required_match():
    # Sinnott's Table 3.6 streams at ΔTmin 10 K: two units 2→3 (60 and 30 kW, one each side of the pinch)
    net = design_mer(SINNOTT, 10.0)
    assert sorted(d for (h, c), d in [(x.sides, x.duty) for x in net.exchangers] if (h, c) == ("2", "3")) == \
        pytest.approx([30.0, 60.0])
    free = evolve(net, SINNOTT, min_duty=100.0)
    assert ("2", "3") not in pairs(free.network)                    # both go when nothing requires them
    kept = evolve(net, SINNOTT, min_duty=100.0, required=[("2", "3")])
    assert ("2", "3") in pairs(kept.network)
    assert any("required match 2:3" in n for n in kept.notes)
    # the first law: what the evolved network no longer recovers comes back in both utilities
    assert kept.network.hot_utility - net.hot_utility == pytest.approx(
        kept.network.cold_utility - net.cold_utility, abs=1e-6)
