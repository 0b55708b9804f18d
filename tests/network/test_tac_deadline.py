"""A TAC refinement started near the end of a run stops at the run's deadline, and still gives a sound network.

Published data: the two hot / two cold problem of Yee & Grossmann (1990) as given by Roetzel, Luo & Chen 2020,
Design and Operation of Heat Exchangers and their Networks, ch. 6, Table 6.16, with its cost law and prices;
the networks are recomputed with that law by ht.LMTD (``refdata.assert_sound``).  The segmented problem is
invented (``synthesis_problems.segmented_problem``).
"""

import time

import pytest
from refdata import assert_sound, cost_settings, load_reference, reference_utilities
from synthesis_problems import segmented_problem

from heatloom.model.costs import CostLaw, CostSettings
from heatloom.network.solvers import solve
from heatloom.network.structure import check_network
from heatloom.network.tac import nlp, profiles
from heatloom.network.tac.build import network_from_solution
from heatloom.network.tac.nlp import Topology, make_problem, solve_topology
from heatloom.network.tac.starts import stagewise_milp

TOPOLOGY = Topology(2, frozenset({(0, 0, 0), (0, 1, 0), (1, 0, 1), (1, 1, 1)}), frozenset({(0, 0), (1, 0)}),
                    frozenset({(0, 0), (1, 0)}))


def iterations(monkeypatch, module):
    """The iteration count of every ``minimize`` call of a module, as it runs."""
    counts = []
    original = module.minimize

    def wrapped(*args, **kwargs):
        res = original(*args, **kwargs)
        counts.append(res.nit)
        return res

    monkeypatch.setattr(module, "minimize", wrapped)
    return counts


def test_a_refinement_past_its_deadline_stops_at_once_and_stays_feasible(monkeypatch):
    data, streams = load_reference("synthesis_yee_grossmann_2h2c")
    utilities = reference_utilities(data)
    costs = cost_settings(data["cost_law"])
    p = make_problem(streams, utilities, costs, 1.0)
    nit = iterations(monkeypatch, nlp)
    full = solve_topology(p, TOPOLOGY)
    assert max(nit) > 2
    nit.clear()
    cut = solve_topology(p, TOPOLOGY, deadline=time.monotonic() - 1.0)
    assert cut is not None and max(nit) <= 1              # one SLSQP step instead of a whole refinement
    assert cut.tac >= full.tac - 1e-6 * full.tac          # stopped early: never cheaper than the full one
    net = network_from_solution(p, cut, streams, utilities, costs)
    assert_sound(net, data, streams, utilities)


def test_a_segmented_refinement_past_its_deadline_stops_at_once_and_stays_feasible(monkeypatch):
    streams, utilities = segmented_problem()   # invented
    costs = CostSettings(annualised=True, exchanger=CostLaw(2000, 700, 0.8))
    p = make_problem(streams, utilities, costs, 5.0)
    prob, read = stagewise_milp(p, 2, {})
    assert solve(prob, time_limit=30).has_solution
    # the MILP's matches, with a heater and a cooler on every stream: loads free to move
    top = Topology(read().stages, read().matches, frozenset({(0, 0), (1, 0)}), frozenset({(0, 0), (1, 0)}))
    nit = iterations(monkeypatch, profiles)
    full = solve_topology(p, top)
    assert full is not None and max(nit) > 2
    nit.clear()
    # started from the full refinement's loads, as the search starts a neighbour from its parent's
    cut = solve_topology(p, top, [dict(zip(full.keys, full.duties))], deadline=time.monotonic() - 1.0)
    assert cut is not None and max(nit) <= 1
    assert cut.tac >= full.tac - 1e-6 * full.tac
    net = network_from_solution(p, cut, streams, utilities, costs)
    check_network(net, streams, utilities, dt_min=5.0, contributions=False)
    assert net.total_annual_cost == pytest.approx(cut.tac, rel=1e-9)
