"""Starting topologies of the lowest-TAC search: the stagewise MILP, and a designed network laid into stages.

* :func:`stagewise_milp`, the stagewise superstructure MILP of Yee & Grossmann (1990) with utilities at the
  stream ends and isothermal mixing, whose area cost is linearised as a fixed charge per unit plus a cost
  per kW estimated from loads and approach temperatures (:func:`unit_estimates` updates them from a
  refined network);
* :func:`start_from_network` (:func:`topology_from_network` without the loads), the exchangers of a
  network (the maximum-energy-recovery design) laid into stages along every stream, their duties a
  starting guess of the topology's loads;
* :func:`mer_network`, that maximum-energy-recovery design within its share of the run's time budget, or
  None (with a note) when it cannot be had, so that the search falls back on its other starts.

The search that refines and improves these topologies is in :mod:`heatloom.network.tac.search`.

References
----------
.. [1] Yee, T. F., Grossmann, I. E. (1990). Simultaneous optimization models for heat integration—II.
   Heat exchanger network synthesis. Computers & Chemical Engineering 14(10), 1165-1184.
   doi:10.1016/0098-1354(90)85010-8
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import pulp

from ...equipment.sizing import log_mean
from ...errors import InfeasibleError, InputError, SolverError
from ...model.costs import UnitKind
from ..solvers import Budget, new_variable
from ..structure import Network
from .nlp import SUPPLY_END_LEVELS, TacProblem, Topology, TopologySolution, unit_costs

__all__ = ["stagewise_milp", "unit_estimates", "topology_from_network", "start_from_network", "mer_network",
           "contracted_levels", "MER_SHARE", "MER_CAP"]

MER_SHARE = 0.1
"""Part of the remaining time given to the starting MER design [-], as its ``time_limit`` (which
:func:`heatloom.network.design.design_mer` shares among its solves)."""

MER_CAP = 20.0
"""Longest time given to the starting MER design [s]."""


def _unit_area_cost_per_kw(law, u: float, load: float, approach: float) -> float:
    """Secant of the area term of a law through zero and the estimated load [money/(kW·year)]."""
    _, b, c = law
    load = max(load, 1e-6)
    return b * (load / (u * max(approach, 1e-3))) ** c / load


def stagewise_milp(p: TacProblem, stages: int, estimates: dict, *, name: str = "tac stagewise MILP"
                   ) -> tuple[pulp.LpProblem, Callable[[], Topology]]:
    """The stagewise superstructure MILP with a linearised area cost; the problem and a reader of its topology.

    .. math::

        \\min \\sum_u p_u Q_u + \\sum_{ijk} (a\\,z_{ijk} + c_{ijk} q_{ijk})
        + \\sum_{util} (a\\,z_u + c_u Q_u)

    subject to the stage and overall heat balances, monotone stage temperatures, logical constraints
    q ≤ Ω z and approach constraints ΔT ≥ EMAT − Γ(1 − z) at both ends of every unit (the sum of the sides'
    ΔTmin contributions instead of EMAT where larger, :meth:`TacProblem.need`) (Yee & Grossmann 1990,
    constraints (1)-(12)), with utility units at the stream ends, one per utility level in series ordered
    by temperature: at the target ends, and at the supply ends too (preheaters, precoolers, before the
    first stage) where a side has :data:`heatloom.network.tac.nlp.SUPPLY_END_LEVELS` levels or more.
    Forbidden unit kinds have no variables (:meth:`TacProblem.can_match` and the level
    checks); a required one carries at least :meth:`TacProblem.least_load`.  The per-kW area costs
    :math:`c` are secants of b·(Q/(U·θ))^c through zero at an estimated load Q̂ and approach θ̂
    (``estimates``), updated by the caller from refined networks.

    Parameters
    ----------
    p : TacProblem
    stages : int
        K [-].
    estimates : dict
        (unit key) → (load [kW], log-mean approach [K]) for matches (i, j, k), ("heat", j, level) and
        ("cool", i, level); missing keys are estimated from the stream temperatures.
    """
    prob = pulp.LpProblem(name.replace(" ", "_"), pulp.LpMinimize)
    K = stages
    nh, nc = len(p.hot_names), len(p.cold_names)
    temps = np.concatenate([p.hot_in, p.hot_out, p.cold_in, p.cold_out,
                            [u.supply_temperature for u in (*p.heat_levels, *p.cool_levels)]])
    needs = [p.need(i, j) for i in (*range(nh), None) for j in (*range(nc), None)]
    gamma = float(temps.max() - temps.min() + 2 * max(needs))   # EMAT without contributions
    util_q, util_z = {}, {}
    cost_terms = []

    def guess(key, default_load, default_dt):
        return estimates.get(key, (default_load, default_dt))

    def utility_chain(side: str, s: int, start, levels_used):
        """Utility units of one stream in series from ``start`` (a temperature or an expression); their
        variables, rows and cost terms; returns (the temperature after them, their duties)."""
        nonlocal prob
        cooling = side in ("cool", "precool")
        levels = p.cool_levels if cooling else p.heat_levels
        cp = p.hot_cp[s] if cooling else p.cold_cp[s]
        duty = p.hot_duty[s] if cooling else p.cold_duty[s]
        h_s = p.hot_h[s] if cooling else p.cold_h[s]
        before, total = start, []
        for lv in levels_used:
            util = levels[lv]
            key = (side, s, lv)
            util_q[key] = new_variable(prob, f"q{side}_{s}_{lv}", 0, float(duty))
            util_z[key] = new_variable(prob, f"z{side}_{s}_{lv}", cat=pulp.LpBinary)
            prob += util_q[key] <= float(duty) * util_z[key]
            after = before + (-1.0 if cooling else 1.0) * util_q[key] * (1.0 / cp)
            need = p.need(s, None) if cooling else p.need(None, s)
            if cooling:   # hot end: stream before − utility outlet; cold end: after − utility inlet
                prob += before - util.target_temperature >= need - gamma * (1 - util_z[key])
                prob += after - util.supply_temperature >= need - gamma * (1 - util_z[key])
                dt0 = max(0.5 * (p.hot_out[s] + p.hot_in[s]) - util.target_temperature, 2 * p.emat)
            else:
                prob += util.supply_temperature - after >= need - gamma * (1 - util_z[key])
                prob += util.target_temperature - before >= need - gamma * (1 - util_z[key])
                dt0 = max(util.target_temperature - 0.5 * (p.cold_out[s] + p.cold_in[s]), 2 * p.emat)
            u = 1.0 / (1.0 / h_s + 1.0 / util.film_coefficient)
            load, dt = guess(key, 0.5 * duty, dt0)
            law = p.laws[UnitKind.COOLER if cooling else UnitKind.HEATER]
            cost_terms.append(law[0] * util_z[key] + (_unit_area_cost_per_kw(law, u, load, dt) + util.cost)
                              * util_q[key])
            total.append(util_q[key])
            before = after
        return before, total

    def possible(cooling: bool, s: int) -> list:
        levels = p.cool_levels if cooling else p.heat_levels
        return [lv for lv in range(len(levels))
                if (p.cool_level_possible(s, lv) if cooling else p.heat_level_possible(s, lv))]

    # utility units at the supply ends (several levels on a side only), then the stages
    pre_cool = len(p.cool_levels) >= SUPPLY_END_LEVELS
    pre_heat = len(p.heat_levels) >= SUPPLY_END_LEVELS
    th = {(i, 0): utility_chain("precool", i, float(p.hot_in[i]), possible(True, i) if pre_cool else [])[0]
          for i in range(nh)}
    tc = {(j, K): utility_chain("preheat", j, float(p.cold_in[j]), possible(False, j) if pre_heat else [])[0]
          for j in range(nc)}
    for i in range(nh):
        for k in range(1, K + 1):
            th[i, k] = new_variable(prob, f"th_{i}_{k}", float(p.hot_out[i]), float(p.hot_in[i]))
    for j in range(nc):
        for k in range(K):
            tc[j, k] = new_variable(prob, f"tc_{j}_{k}", float(p.cold_in[j]), float(p.cold_out[j]))
    q, z = {}, {}
    for i in range(nh):
        for j in range(nc):
            if not p.can_match(i, j):
                continue
            omega = float(min(p.hot_duty[i], p.cold_duty[j]))
            u = 1.0 / (1.0 / p.hot_h[i] + 1.0 / p.cold_h[j])
            for k in range(K):
                key = (i, j, k)
                # default approach: the two streams' temperatures at the stage's middle, if evenly cooled/heated
                f = (k + 0.5) / K
                th_mid = p.hot_in[i] - f * (p.hot_in[i] - p.hot_out[i])
                tc_mid = p.cold_out[j] - f * (p.cold_out[j] - p.cold_in[j])
                load, dt = guess(key, 0.5 * omega, max(th_mid - tc_mid, 2 * p.emat))
                q[key] = new_variable(prob, f"q_{i}_{j}_{k}", 0, omega)
                z[key] = new_variable(prob, f"z_{i}_{j}_{k}", cat=pulp.LpBinary)
                prob += q[key] <= omega * z[key]
                prob += th[i, k] - tc[j, k] >= p.need(i, j) - gamma * (1 - z[key])
                prob += th[i, k + 1] - tc[j, k + 1] >= p.need(i, j) - gamma * (1 - z[key])
                law = p.laws[UnitKind.EXCHANGER]
                cost_terms.append(law[0] * z[key] + _unit_area_cost_per_kw(law, u, load, dt) * q[key])
            if ("x", i, j) in p.required:   # a required match carries some load, in some stage
                prob += pulp.lpSum(q[i, j, k] for k in range(K)) >= p.least_load(("x", i, j))
    for i in range(nh):
        for k in range(K):
            prob += p.hot_cp[i] * (th[i, k] - th[i, k + 1]) == pulp.lpSum(
                q[i, j, k] for j in range(nc) if (i, j, k) in q)
    for j in range(nc):
        for k in range(K):
            prob += p.cold_cp[j] * (tc[j, k] - tc[j, k + 1]) == pulp.lpSum(
                q[i, j, k] for i in range(nh) if (i, j, k) in q)
    # utility units in series at the target ends; a required heater or cooler carries its least load in all
    # its units together (target and supply ends)
    for cooling, count in ((True, nh), (False, nc)):
        side = "cool" if cooling else "heat"
        for s in range(count):
            cp = p.hot_cp[s] if cooling else p.cold_cp[s]
            end = th[s, K] if cooling else tc[s, 0]
            target = p.hot_out[s] if cooling else p.cold_out[s]
            _, total = utility_chain(side, s, end, possible(cooling, s))
            sign = 1.0 if cooling else -1.0
            prob += cp * sign * (end - target) == pulp.lpSum(total)
    for kind in sorted(p.required, key=str):
        units = [v for key, v in util_q.items() if key[0].endswith(kind[0]) and key[1:] == kind[1:]]
        if kind[0] in ("heat", "cool") and units:
            prob += pulp.lpSum(units) >= p.least_load(kind)
    prob += pulp.lpSum(cost_terms)

    def read() -> Topology:
        tol = 1e-6 * p.scale
        matches = frozenset(k for k, v in q.items() if (v.varValue or 0.0) > tol)

        def kept(side):
            return frozenset((s, lv) for (sd, s, lv), v in util_q.items() if sd == side and (v.varValue or 0) > tol)

        return Topology(K, matches, kept("heat"), kept("cool"), kept("preheat"), kept("precool"))

    return prob, read


def unit_estimates(p: TacProblem, sol: TopologySolution) -> dict:
    """(load [kW], log-mean approach [K]) of every unit of a refined solution, the ``estimates`` of the next
    :func:`stagewise_milp`.

    Parameters
    ----------
    p : TacProblem
    sol : TopologySolution
        A refined topology (:func:`heatloom.network.tac.nlp.solve_topology`).

    Returns
    -------
    dict
        Unit key (as in :class:`Topology`) → (load [kW], log-mean approach [K]), for units with a load and
        positive approaches at both ends.
    """
    out = {}
    for d in unit_costs(p, sol.topology, sol.x):
        a, b = d["hot_in"] - d["cold_out"], d["hot_out"] - d["cold_in"]
        if d["duty"] > 0 and a > 0 and b > 0:
            out[d["key"]] = (d["duty"], float(log_mean(a, b)))
    return out


# ------------------------------------------------------------------------------------ MER topology

def topology_from_network(p: TacProblem, net: Network) -> Topology | None:
    """Lay the exchangers of a network into stages along every stream (None if no part of it can be):
    the topology of :func:`start_from_network`."""
    start = start_from_network(p, net)
    return None if start is None else start[0]


def start_from_network(p: TacProblem, net: Network) -> tuple[Topology, dict] | None:
    """Lay the exchangers of a network into stages along every stream, with their duties as a starting guess
    of the topology's loads ((hot, cold, stage) → kW); None if no part of it can be laid out.

    Units of a stream are ordered from its hot end; units with the same temperatures on a stream are its
    parallel branches and share a stage.  Each unit's stage is the length of the longest chain of units
    before it; a network whose orders conflict (a loop of precedences, or a split branch that carries
    units of one stream at different temperatures) has no stagewise form: then its smallest exchangers are
    left out one by one until the rest has one, and the streams that lost an exchanger get a utility unit
    at their end where a utility can serve them (the search may add matches back).  Utility units are put
    at the stream ends, one per stream and level that uses any: at the supply end
    (:attr:`Topology.preheaters`, :attr:`Topology.precoolers`) where the side has
    :data:`heatloom.network.tac.nlp.SUPPLY_END_LEVELS` levels or more and the network has them before every
    exchanger of their stream, or their level cannot take the stream to its target (a cool steam level
    between two exchangers of a stream heated beyond it); else at the target end.
    """
    hot_idx = {n: k for k, n in enumerate(p.hot_names)}
    cold_idx = {n: k for k, n in enumerate(p.cold_names)}
    ex = [e for e in net.exchangers if e.hot in hot_idx and e.cold in cold_idx]
    tol = 1e-6

    def supply_end_heater(h) -> bool:   # below every exchanger of its cold stream
        below = [e.cold_in for e in ex if e.cold == h.cold]
        return len(p.heat_levels) >= SUPPLY_END_LEVELS and bool(below) and h.cold_out <= min(below) + tol

    def supply_end_cooler(c) -> bool:   # above every exchanger of its hot stream
        above = [e.hot_in for e in ex if e.hot == c.hot]
        return len(p.cool_levels) >= SUPPLY_END_LEVELS and bool(above) and c.hot_out >= max(above) - tol

    def heat_at_target(j, lv) -> bool:   # the level can take cold j to its target
        return p.heat_levels[lv].supply_temperature - p.need(None, j) >= p.cold_out[j] - tol

    def cool_at_target(i, lv) -> bool:   # the level can take hot i to its target
        return p.cool_levels[lv].supply_temperature + p.need(i, None) <= p.hot_out[i] + tol

    heaters, preheaters, coolers, precoolers = set(), set(), set(), set()
    for h in net.heaters:
        for lv, u in enumerate(p.heat_levels):
            if h.cold in cold_idx and u.name == h.utility:
                j = cold_idx[h.cold]
                # a level that cannot reach the target (LP steam between two exchangers of a stream heated to
                # 225 °C) goes to the supply end, where the search can give it any duty
                at_supply = supply_end_heater(h) or (len(p.heat_levels) >= SUPPLY_END_LEVELS
                                                     and not heat_at_target(j, lv))
                (preheaters if at_supply else heaters).add((j, lv))
    for c in net.coolers:
        for lv, u in enumerate(p.cool_levels):
            if c.hot in hot_idx and u.name == c.utility:
                i = hot_idx[c.hot]
                at_supply = supply_end_cooler(c) or (len(p.cool_levels) >= SUPPLY_END_LEVELS
                                                     and not cool_at_target(i, lv))
                (precoolers if at_supply else coolers).add((i, lv))
    left_out: list = []
    while True:
        laid = _stagewise_matches(ex, hot_idx, cold_idx)
        if laid is not None or not ex:
            break
        smallest = min(range(len(ex)), key=lambda n: ex[n].duty)
        left_out.append(ex.pop(smallest))
    if laid is None:
        return None
    matches = set(laid)
    for e in left_out:
        i, j = hot_idx[e.hot], cold_idx[e.cold]
        if not any(c[0] == i for c in coolers):
            coolers.update((i, lv) for lv in range(len(p.cool_levels))[-1:] if p.cool_level_possible(i, lv))
        if not any(h[0] == j for h in heaters):
            heaters.update((j, lv) for lv in range(len(p.heat_levels))[-1:] if p.heat_level_possible(j, lv))
    stages = max((k for (_, _, k) in matches), default=0) + 1
    return (Topology(stages, frozenset(matches), frozenset(heaters), frozenset(coolers), frozenset(preheaters),
                     frozenset(precoolers)),
            {key: ex[n].duty for key, n in laid.items()})


def contracted_levels(count: int, together, before) -> list[int] | None:
    """A level per item (0, 1, ...) such that an item before another has a lower level and the items of one
    group share a level; each item as low as the order allows (longest path) [-].

    Parameters
    ----------
    count : int
        Items 0 .. count − 1 [-].
    together : iterable of sequences of int
        Groups of items that must share a level.
    before : iterable of (int, int)
        (a, b): item a comes before item b.

    Returns
    -------
    list of int or None
        None when the order has a cycle (also when two items of one group must follow each other).

    Examples
    --------
    >>> contracted_levels(4, [(1, 2)], [(0, 1), (2, 3)])
    [0, 1, 1, 2]
    >>> contracted_levels(3, [(0, 1)], [(0, 1)]) is None
    True
    """
    parent = list(range(count))

    def find(a: int) -> int:
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a

    for group in together:
        for a, b in zip(group, group[1:]):
            parent[find(b)] = find(a)
    nodes = sorted({find(n) for n in range(count)})
    succ: dict[int, set] = {n: set() for n in nodes}
    for a, b in before:
        ra, rb = find(a), find(b)
        if ra == rb:
            return None
        succ[ra].add(rb)
    level = {n: 0 for n in nodes}
    indeg = {n: 0 for n in nodes}
    for a in nodes:
        for b in succ[a]:
            indeg[b] += 1
    ready = [n for n in nodes if indeg[n] == 0]
    seen = 0
    while ready:
        a = ready.pop()
        seen += 1
        for b in succ[a]:
            level[b] = max(level[b], level[a] + 1)
            indeg[b] -= 1
            if indeg[b] == 0:
                ready.append(b)
    if seen != len(nodes):
        return None
    return [level[find(n)] for n in range(count)]


def _stagewise_matches(ex: list, hot_idx: dict, cold_idx: dict) -> dict | None:
    """(hot, cold, stage) → index in ``ex`` of every exchanger laid into stages, or None when their orders
    conflict."""
    together, before = [], set()
    for side in ("hot", "cold"):
        by_stream: dict = {}
        for n, e in enumerate(ex):
            t = (round(e.hot_in, 6), round(e.hot_out, 6)) if side == "hot" else (round(e.cold_out, 6),
                                                                                    round(e.cold_in, 6))
            by_stream.setdefault(getattr(e, side), {}).setdefault(t, []).append(n)
        for groups in by_stream.values():
            ordered = [groups[t] for t in sorted(groups, reverse=True)]
            together += ordered
            for g1, g2 in zip(ordered, ordered[1:]):
                before.add((g1[0], g2[0]))
    levels = contracted_levels(len(ex), together, before)
    if levels is None:
        return None
    matches: dict = {}
    for n, e in enumerate(ex):
        key = (hot_idx[e.hot], cold_idx[e.cold], levels[n])
        if key in matches:
            return None
        matches[key] = n
    return matches


def mer_network(streams, dt_min: float, utilities, budget: Budget, *, costs=None, solver=None,
                default_film_coefficient: float | None = None, forbidden=(), required=()) -> Network | None:
    """The maximum-energy-recovery network of :func:`heatloom.network.design.design_mer`, or None.

    It is given :data:`MER_SHARE` of the time left, at most :data:`MER_CAP`, as its time limit (every
    solve inside gets at most that); its reports go to the budget.  When the budget is spent, or the design fails (a solve stopped without a solution,
    no placement keeps ΔTmin, an input the MER design cannot take), the budget gets a note and None is
    returned: the search starts from its other topologies.

    Parameters
    ----------
    streams : StreamTable
    dt_min : float
        ΔTmin of the MER design [K].
    utilities : sequence of Utility
    budget : Budget
        The run's time budget.
    costs, solver, default_film_coefficient, forbidden, required
        As for :func:`heatloom.network.design.design_mer`.
    """
    from ..design import design_mer

    label = f"MER network at ΔTmin {dt_min:g} K"
    limit = budget.share_or_none(MER_SHARE, MER_CAP)
    if limit is None:
        budget.notes.append(f"no {label} as a starting topology: the time limit was all but spent")
        return None
    try:
        mer = design_mer(streams, dt_min, utilities, costs=costs, solver=solver, time_limit=limit,
                         default_film_coefficient=default_film_coefficient, forbidden=forbidden,
                         required=required)
    except (InfeasibleError, InputError, SolverError) as exc:
        budget.notes.append(f"no {label} as a starting topology ({exc}); the search started from the others")
        return None
    for report in mer.solves:
        budget.record(report)
    return mer
