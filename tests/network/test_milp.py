"""Fewest-matches MILP and match plan (heatloom.network.milp).

Published checks use the reference problems in tests/data/references/ (each file names its source; the
source is repeated beside every assertion).  The fewest matches are checked against Euler's minimum-units
rule (Linnhoff & Hindmarsh 1983, Chem. Eng. Sci. 38(5), 745: U_min = N − 1 per subnetwork, or N − S when
the participants split into S independent balanced groups), with S found here by brute force, and, on
small invented problems, against an exhaustive search over match sets with a transportation LP written
independently below.  Invented data (hypothesis, derandomised) are used only for such property checks.
"""

import itertools

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from refdata import reference_utilities
from scipy.optimize import linprog
from synthesis_problems import SYNTHESIS_SMALL, TARGETING, problems

from heatloom.errors import InfeasibleError, InputError
from heatloom.model import Stream, StreamTable, Utility
from heatloom.network.matches import MatchKind, TieBreak, subnetworks
from heatloom.network.milp import min_matches, plan_matches
from heatloom.network.transshipment import transshipment
from heatloom.pinch import target

# ------------------------------------------------------------------------------ independent checks

def max_balanced_groups(hot_heat: np.ndarray, cold_heat: np.ndarray) -> int:
    """Largest S such that the participants split into S groups, each balanced and cascade-feasible.

    A group can be served on its own when its heat balance closes and, at every interval boundary, its hot
    heat released above covers its cold demand above.  Dynamic programme over subsets (small N only).
    """
    net = np.vstack([hot_heat, -cold_heat])
    n = net.shape[0]
    tol = 1e-6 * max(float(hot_heat.sum()), 1.0)
    valid = np.zeros(1 << n, bool)
    for mask in range(1, 1 << n):
        cum = np.cumsum(net[[i for i in range(n) if mask >> i & 1]].sum(axis=0))
        valid[mask] = abs(cum[-1]) <= tol and cum.min() >= -tol
    best = [0] + [-1] * ((1 << n) - 1)
    for mask in range(1, 1 << n):
        low = mask & -mask
        g = mask
        while g:
            if g & low and valid[g] and best[mask ^ g] >= 0:
                best[mask] = max(best[mask], 1 + best[mask ^ g])
            g = (g - 1) & mask
    return best[-1]


def transportation_feasible(hot_heat, cold_heat, pairs) -> bool:
    """Can the heat be distributed using only these (hot, cold) index pairs?

    Transportation form (heat of hot i released in interval k sent to cold j in interval kc >= k), a
    formulation independent of the transshipment model under test, solved with scipy.
    """
    cols = [(i, k, j, kc) for i, j in pairs for k in range(hot_heat.shape[1]) if hot_heat[i, k] > 1e-12
            for kc in range(k, cold_heat.shape[1]) if cold_heat[j, kc] > 1e-12]
    if not cols:
        return False
    rows_h = {(i, k): r for r, (i, k) in enumerate(sorted({(i, k) for i, k, _, _ in cols}))}
    rows_c = {(j, kc): r for r, (j, kc) in enumerate(sorted({(j, kc) for _, _, j, kc in cols}))}
    need = [(j, kc) for j in range(cold_heat.shape[0]) for kc in range(cold_heat.shape[1])
            if cold_heat[j, kc] > 1e-12]
    if any(x not in rows_c for x in need):
        return False
    a_ub = np.zeros((len(rows_h), len(cols)))
    a_eq = np.zeros((len(rows_c), len(cols)))
    for c, (i, k, j, kc) in enumerate(cols):
        a_ub[rows_h[i, k], c] = 1.0
        a_eq[rows_c[j, kc], c] = 1.0
    b_ub = np.array([hot_heat[i, k] for (i, k) in rows_h]) * (1 + 1e-9) + 1e-9
    b_eq = np.array([cold_heat[j, kc] for (j, kc) in rows_c])
    res = linprog(np.zeros(len(cols)), A_ub=a_ub, b_ub=b_ub, A_eq=a_eq, b_eq=b_eq, method="highs")
    return res.status == 0


def fewest_matches_by_search(sub) -> int:
    """Smallest number of allowed pairs that can carry the heat, by exhaustive search.

    Candidate sets must touch every participant and leave every connected group balanced (both necessary)
    before the transportation LP is tried.
    """
    n_h, n_c = len(sub.hot), len(sub.cold)
    duty = np.concatenate([sub.hot_heat.sum(axis=1), -sub.cold_heat.sum(axis=1)])
    tol = 1e-6 * max(float(sub.hot_heat.sum()), 1.0)
    pairs = [(i, j) for i in range(n_h) for j in range(n_c)
             if not (sub.hot_is_utility[i] and sub.cold_is_utility[j])]

    def groups_balance(chosen) -> bool:
        parent = list(range(n_h + n_c))

        def root(x):
            while parent[x] != x:
                x = parent[x]
            return x

        for i, j in chosen:
            parent[root(i)] = root(n_h + j)
        sums: dict[int, float] = {}
        for x in range(n_h + n_c):
            sums[root(x)] = sums.get(root(x), 0.0) + duty[x]
        return all(abs(v) <= tol for v in sums.values())

    for size in range(max(n_h, n_c), len(pairs) + 1):
        for chosen in itertools.combinations(pairs, size):
            if {i for i, _ in chosen} != set(range(n_h)) or {j for _, j in chosen} != set(range(n_c)):
                continue
            if groups_balance(chosen) and transportation_feasible(sub.hot_heat, sub.cold_heat, chosen):
                return size
    raise AssertionError("no match set carries the heat")


def check_heat_load_distribution(plan, streams: StreamTable) -> None:
    """Every balance of the heat-load distribution, per subnetwork and overall."""
    iv = plan.transshipment.intervals
    scale = max(iv.duty_scale, 1.0)
    tol = 1e-6 * scale
    totals: dict[str, float] = {}
    for part in plan.subnetworks:
        sub = part.subnetwork
        m = sub.size
        given = {n: np.zeros(m) for n in sub.hot}
        taken = {n: np.zeros(m) for n in sub.cold}
        for match in part.matches:
            assert match.subnetwork == sub.index and match.label == sub.label
            assert match.load == pytest.approx(sum(q for _, q in match.interval_loads), abs=tol)
            assert not (match.hot in sub.hot and sub.hot_is_utility[sub.hot.index(match.hot)]
                        and sub.cold_is_utility[sub.cold.index(match.cold)])
            for k, q in match.interval_loads:
                assert sub.first <= k < sub.first + m
                assert q > 0
                given[match.hot][k - sub.first] += q
                taken[match.cold][k - sub.first] += q
            totals[match.hot] = totals.get(match.hot, 0.0) + match.load
            totals[match.cold] = totals.get(match.cold, 0.0) + match.load
        for i, name in enumerate(sub.hot):
            # sum of the stream's match loads equals its duty in the subnetwork
            assert given[name].sum() == pytest.approx(sub.hot_heat[i].sum(), abs=tol)
            # the cascade: heat is given in the interval it is released or a colder one, never a hotter one
            assert np.all(np.cumsum(given[name]) <= np.cumsum(sub.hot_heat[i]) + tol)
            res = np.asarray(part.residuals[name])
            np.testing.assert_allclose(res[1:], np.cumsum(sub.hot_heat[i] - given[name]), atol=tol)
            assert np.all(res >= -tol)
        for j, name in enumerate(sub.cold):
            # each cold participant gets exactly its demand, interval by interval
            np.testing.assert_allclose(taken[name], sub.cold_heat[j], atol=tol)
    for s in streams:
        assert totals.get(s.name, 0.0) == pytest.approx(s.duty, abs=tol)
    for name, duty in plan.utility_duties.items():
        assert totals.get(name, 0.0) == pytest.approx(duty, abs=tol)


# ------------------------------------------------------------------------------ fewest matches (b)

@pytest.mark.parametrize("name", TARGETING)
def test_fewest_matches_meet_the_minimum_units_target(reference, name):
    data, streams = reference(name)
    plan = plan_matches(streams, data["dtmin"])
    assert plan.proven_minimum
    # subnetworks are cut at the pinches of the problem table
    pinches = [p.shifted for p in target(streams, data["dtmin"]).pinches]
    assert len(plan.subnetworks) == len(pinches) + 1
    for part in plan.subnetworks:
        sub = part.subnetwork
        # Euler's rule without loops: U_min = N − S (Linnhoff & Hindmarsh 1983); S = 1 unless a subset
        # of the streams and utilities balances on its own.
        s = max_balanced_groups(sub.hot_heat, sub.cold_heat)
        assert part.number_of_matches == sub.unit_target + 1 - s
    check_heat_load_distribution(plan, streams)


def test_fewest_matches_per_side_of_published_pinches(reference):
    # N − 1 on each side of the pinch, counting streams and utilities present there (Linnhoff &
    # Hindmarsh 1983).  Pinches as printed: Ray & Das ch. 5 Problem 5.1 (150/130 °C), Problem 5.4 and
    # Sinnott ch. 3 (90/80 °C).  Counts derived by hand from the stream data and those pinches:
    data, streams = reference("targeting_ray_das_problem_5_1")
    plan = plan_matches(streams, data["dtmin"])
    # above 150/130 °C: stream 1, stream 3, hot utility -> 2; below: 1, 2, 3, 4, cold utility -> 4
    assert [p.number_of_matches for p in plan.subnetworks] == [2, 4]
    data, streams = reference("targeting_ray_das_problem_5_4")
    # above 90/80 °C: 1, 2, 3, 4, hot utility -> 4; below: 1, 2, 3, cold utility -> 3
    assert [p.number_of_matches for p in plan_matches(streams, data["dtmin"]).subnetworks] == [4, 3]
    data, streams = reference("targeting_sinnott_four_stream")
    plan = plan_matches(streams, data["dtmin"])
    # Sinnott, Table 3.6 data: above the pinch streams 1 (3 kW/K × 90 K) and 4 (4.5 kW/K × 60 K) both
    # carry 270 kW, a balanced pair of their own, so the fewest matches are N − 2 = 3, one below N − 1 = 4;
    # below the pinch N − 1 = 3.  The reference file records no units count printed with Sinnott's
    # network design text; a total of 7 units for that design is recalled (from memory, unverified) and
    # is not asserted.
    above, below = plan.subnetworks
    assert above.subnetwork.unit_target == 4 and above.number_of_matches == 3
    assert {(m.hot, m.cold) for m in above.matches} >= {("1", "4")}
    assert below.number_of_matches == below.subnetwork.unit_target == 3
    assert plan.unit_target == 7 and plan.number_of_matches == 6


def test_threshold_problem_is_one_subnetwork(reference):
    # Ray & Das, ch. 5, Problem 5.2: hot utility only (threshold), so a single subnetwork with no cooler.
    data, streams = reference("targeting_ray_das_problem_5_2_threshold")
    plan = plan_matches(streams, data["dtmin"])
    (part,) = plan.subnetworks
    assert part.subnetwork.label == "whole problem"
    assert "cold utility" not in part.subnetwork.cold
    assert not any(m.kind is MatchKind.COOLER for m in part.matches)
    assert part.number_of_matches == part.subnetwork.unit_target    # 4 hot + 2 cold participants - 1
    check_heat_load_distribution(plan, streams)


@pytest.mark.parametrize("name", SYNTHESIS_SMALL)
def test_synthesis_problems_heat_load_distribution(reference, name):
    data, streams = reference(name)
    plan = plan_matches(streams, 10.0, reference_utilities(data))
    assert plan.proven_minimum
    check_heat_load_distribution(plan, streams)
    for part in plan.subnetworks:
        sub = part.subnetwork
        assert part.number_of_matches >= sub.unit_target + 1 - max_balanced_groups(sub.hot_heat, sub.cold_heat)
        for m in part.matches:
            assert m.kind is (MatchKind.HEATER if m.hot == "HU" else MatchKind.COOLER if m.cold == "CU"
                              else MatchKind.EXCHANGER)


@pytest.mark.slow
def test_fifteen_stream_problem(reference):
    # Björk & Pettersson 2003 data via Roetzel, Luo & Chen 2020, Table 6.31; ΔTmin 10 K our choice.
    data, streams = reference("synthesis_fifteen_stream_8h7c")
    plan = plan_matches(streams, 10.0, reference_utilities(data), time_limit=120)
    check_heat_load_distribution(plan, streams)
    for part in plan.subnetworks:
        sub = part.subnetwork
        assert max(len(sub.hot), len(sub.cold)) <= part.number_of_matches <= sub.unit_target


def test_utility_pinch_splits_the_problem(reference):
    # Sinnott's streams with LP steam at 100 °C: the steam level pinches the cascade at 95 °C shifted
    # (tests/pinch/test_utilities.py), so there are three subnetworks and each steam level serves only
    # the part above its own temperature.
    data, streams = reference("targeting_sinnott_four_stream")
    levels = [Utility("HP steam", 250, 249, 150.0), Utility("LP steam", 100, 99, 80.0),
              Utility("cooling water", 20, 30, 10.0)]
    plan = plan_matches(streams, 10, levels)
    assert plan.transshipment.pinches == (95.0, 85.0)
    top, middle, bottom = (p.subnetwork for p in plan.subnetworks)
    assert "HP steam" in top.hot and "LP steam" not in top.hot
    assert "LP steam" in middle.hot and "HP steam" not in middle.hot
    assert "cooling water" in bottom.cold
    assert middle.label == "between the pinches at 95 and 85 °C shifted"
    check_heat_load_distribution(plan, streams)
    # allowed(top, bottom): the pairs of the subnetworks inside that shifted range
    assert plan.allowed(bottom=95.0) == {(m.hot, m.cold) for m in plan.subnetworks[0].matches}
    assert plan.allowed(top=85.0) == {(m.hot, m.cold) for m in plan.subnetworks[2].matches}
    assert plan.allowed(top=95.0, bottom=85.0) == {(m.hot, m.cold) for m in plan.subnetworks[1].matches}
    assert plan.allowed() == set(plan.pair_loads)


def test_forbidden_matches(reference):
    # Sinnott's data above the pinch: stream 4 needs 270 kW between 85 and 145 °C shifted; stream 2
    # (60 kW) and the hot utility (50 kW) cannot cover it, so the match 1-4 is indispensable.
    data, streams = reference("targeting_sinnott_four_stream")
    above = subnetworks(transshipment(streams, 10))[0]
    free = min_matches(above)
    forced = min_matches(above, forbidden=[("2", "3")])
    assert ("2", "3") not in {(m.hot, m.cold) for m in forced.matches}
    assert forced.number_of_matches >= free.number_of_matches
    with pytest.raises(InfeasibleError, match="without the forbidden matches"):
        min_matches(above, forbidden=[("1", "4")])
    with pytest.raises(InfeasibleError, match="demand of '4'"):
        min_matches(above, forbidden=[("1", "4"), ("2", "4"), ("hot utility", "4")])
    with pytest.raises(InputError, match="forbidden match must be a"):
        min_matches(above, forbidden=["14x"])


def test_required_matches(reference, monkeypatch):
    # Sinnott's data (C&R Vol. 6, Table 3.6). Above the pinch the fewest matches need no 2-4 match (1-4
    # balance at 270 kW, see test_forbidden_matches); requiring it gives a plan with 2-4 carrying heat,
    # still at the published targets (50 / 30 kW), and the greedy fallback honours it too.
    import heatloom.network.milp as milp_module
    from heatloom.network.milp import required_subnetworks
    from heatloom.network.solvers import SolveReport, SolveStatus

    data, streams = reference("targeting_sinnott_four_stream")
    plan = plan_matches(streams, 10, required=[("2", "4")])
    assert plan.pair_loads[("2", "4")] > 0
    assert plan.utility_duties == pytest.approx({"hot utility": 50.0, "cold utility": 30.0})
    check_heat_load_distribution(plan, streams)
    subs = subnetworks(transshipment(streams, 10))
    assert required_subnetworks(subs, [("2", "4")]) == {("2", "4"): 0}
    # stream 2 ends at 30 °C, stream 4 starts at 80 °C: below the pinch 2 cannot heat 4, above it can
    with pytest.raises(InputError, match="both forbidden and required"):
        required_subnetworks(subs, [("2", "4")], [("2", "4")])
    with pytest.raises(InfeasibleError, match="required match"):
        min_matches(subs[1], required=[("2", "4")])   # 4 takes no heat below the pinch

    def stalled(problem, *args, **kwargs):
        return SolveReport("highs", SolveStatus.ERROR, None, None, None, 0.0, 1.0, kwargs.get("name", ""),
                           "Time limit reached")

    monkeypatch.setattr(milp_module, "solve", stalled)
    greedy = milp_module.min_matches(subs[0], required=[("2", "4")])
    assert "greedy" in greedy.note
    assert ("2", "4") in {(m.hot, m.cold) for m in greedy.matches}
    assert sum(m.load for m in greedy.matches) == pytest.approx(sum(subs[0].cold_duties.values()))


def test_compact_tie_break_keeps_the_number_of_matches(reference):
    data, streams = reference("targeting_klemes_table_4_2")
    plain = plan_matches(streams, data["dtmin"])
    compact = plan_matches(streams, data["dtmin"], tie_break=TieBreak.COMPACT)
    assert compact.number_of_matches == plain.number_of_matches
    cells = [sum(len(m.interval_loads) for m in p.matches) for p in (plain, compact)]
    assert cells[1] <= cells[0]
    check_heat_load_distribution(compact, streams)
    assert len(compact.subnetworks[0].reports) == 3   # fewest matches, tie-break, fixed-match LP


def test_plan_to_dict_and_note(reference):
    data, streams = reference("targeting_sinnott_four_stream")
    plan = plan_matches(streams, data["dtmin"])
    d = plan.to_dict()
    assert d["free_utilities"] and "free utilities assumed" in d["note"]
    assert d["utilities"] == pytest.approx({"hot utility": 50.0, "cold utility": 30.0})
    assert d["number_of_matches"] == len(d["matches"]) == 6
    assert {m["kind"] for m in d["matches"]} == {"exchanger", "heater", "cooler"}
    assert all(r["status"] == "optimal" for r in d["solves"])


@st.composite
def small_problems(draw):
    hot = draw(st.integers(1, 3))
    cold = draw(st.integers(1, 3))
    streams = []
    for i in range(hot + cold):
        a = draw(st.integers(20, 200))
        b = draw(st.integers(20, 200).filter(lambda x, a=a: abs(x - a) >= 5))
        a, b = (max(a, b), min(a, b)) if i < hot else (min(a, b), max(a, b))
        streams.append(Stream.simple(f"{'H' if i < hot else 'C'}{i}", a, b, draw(st.integers(1, 40)) / 4))
    return StreamTable(streams), draw(st.integers(1, 20))


@settings(max_examples=30, derandomize=True, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(small_problems())
def test_fewest_matches_match_exhaustive_search(problem):
    streams, dt_min = problem
    plan = plan_matches(streams, dt_min)
    check_heat_load_distribution(plan, streams)
    for part in plan.subnetworks:
        sub = part.subnetwork
        assert part.number_of_matches == fewest_matches_by_search(sub)
        assert part.number_of_matches >= sub.unit_target + 1 - max_balanced_groups(sub.hot_heat, sub.cold_heat)


@settings(max_examples=20, derandomize=True, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(problems())
def test_heat_load_distribution_with_segments_levels_and_contributions(problem):
    # invented problems with two-segment streams, own ΔTmin contributions and four utility levels
    streams, dt_min, levels = problem
    plan = plan_matches(streams, dt_min, levels, time_limit=20)
    check_heat_load_distribution(plan, streams)
    assert plan.utility_duties == pytest.approx(transshipment(streams, dt_min, levels).utility_duties)
    for part in plan.subnetworks:
        sub = part.subnetwork
        assert part.number_of_matches >= max(len(sub.hot), len(sub.cold))
        if part.optimal and len(sub.hot) + len(sub.cold) <= 8:
            assert part.number_of_matches >= sub.unit_target + 1 - max_balanced_groups(sub.hot_heat,
                                                                                      sub.cold_heat)


def test_no_integer_solution_in_time_falls_back_to_the_relaxation(reference, monkeypatch):
    # When the fewest-matches MILP ends without any integer solution (as on large problems at their time
    # limit), the matches used by its LP relaxation are kept: a feasible heat-load distribution, not
    # proven minimal, and the reports say so.
    import heatloom.network.milp as milp_module
    from heatloom.network.solvers import SolveReport, SolveStatus

    real = milp_module.solve
    calls = []

    def stalled_first(problem, *args, **kwargs):
        calls.append(kwargs.get("name", ""))
        if len(calls) == 1:
            return SolveReport("highs", SolveStatus.ERROR, None, None, None, 0.0, 1.0, kwargs.get("name", ""),
                               "Time limit reached")
        return real(problem, *args, **kwargs)

    monkeypatch.setattr(milp_module, "solve", stalled_first)
    data, streams = reference("targeting_sinnott_four_stream")
    below = subnetworks(transshipment(streams, 10))[1]
    result = milp_module.min_matches(below)
    assert not result.optimal
    assert "relaxation" in result.reports[1].problem
    # still a complete heat-load distribution of the subnetwork
    hot = {n: 0.0 for n in below.hot}
    cold = {n: 0.0 for n in below.cold}
    for m in result.matches:
        hot[m.hot] += m.load
        cold[m.cold] += m.load
    assert hot == pytest.approx(below.hot_duties)
    assert cold == pytest.approx(below.cold_duties)


def test_no_solution_at_all_falls_back_to_a_greedy_heat_load_distribution(reference, monkeypatch):
    # When neither the fewest-matches MILP nor its LP relaxation return a solution, a greedy heat-load
    # distribution is used: not minimal, but it closes the subnetwork's balance at the published targets
    # (Sinnott, C&R Vol. 6, Table 3.6: hot utility 50 kW, cold utility 30 kW at ΔTmin 10 K) and only
    # sends heat down the cascade; the note says so.
    import heatloom.network.milp as milp_module
    from heatloom.network.solvers import SolveReport, SolveStatus

    def stalled(problem, *args, **kwargs):
        return SolveReport("highs", SolveStatus.ERROR, None, None, None, 0.0, 1.0, kwargs.get("name", ""),
                           "Time limit reached")

    monkeypatch.setattr(milp_module, "solve", stalled)
    data, streams = reference("targeting_sinnott_four_stream")
    t = transshipment(streams, 10)
    assert t.utility_duties == pytest.approx({"hot utility": 50.0, "cold utility": 30.0})
    for sub in subnetworks(t):
        result = milp_module.min_matches(sub)
        assert not result.optimal and "greedy" in result.note and len(result.reports) == 2
        hot = {n: 0.0 for n in sub.hot}
        cold = {n: 0.0 for n in sub.cold}
        for m in result.matches:
            hot[m.hot] += m.load
            cold[m.cold] += m.load
            assert (m.hot, m.cold) != ("hot utility", "cold utility")
        assert hot == pytest.approx(sub.hot_duties)
        assert cold == pytest.approx(sub.cold_duties)
        # heat released above a boundary covers what is taken above it (cascade residuals never negative)
        assert min(min(r) for r in result.residuals.values()) >= 0
        for i, name in enumerate(sub.hot):
            given = np.cumsum(sub.hot_heat[i])
            taken = np.zeros(sub.size)
            for m in result.matches:
                if m.hot == name:
                    for k, q in m.interval_loads:
                        taken[k - sub.first] += q
            assert np.all(np.cumsum(taken) <= given + 1e-9)


def test_plan_with_a_budget_shares_it(reference):
    # Every solve of a plan with a budget is given a share of what was left, never more than the budget.
    from heatloom.network.solvers import Budget

    data, streams = reference("targeting_sinnott_four_stream")
    budget = Budget(5.0)
    plan = plan_matches(streams, 10, budget=budget)
    assert plan.number_of_matches == 6    # as without a budget (Sinnott Table 3.6 data, see above)
    assert all(r.time_limit <= 5.0 for r in plan.reports)
    assert all(r.time_limit < 5.0 for r in plan.reports[2:])


def test_alternative_sets_of_fewest_matches_are_all_found(reference):
    # Below the pinch of Sinnott's problem (C&R Vol. 6, Table 3.6 data) every set of three matches that
    # can carry the heat is found by exhaustive search with the independent transportation LP above;
    # alternative_matches, cutting off each set it has returned, must return exactly those, then none.
    from heatloom.network.matches import alternative_matches

    data, streams = reference("targeting_sinnott_four_stream")
    below = subnetworks(transshipment(streams, 10))[1]
    first = min_matches(below)
    pairs = [(i, j) for i in range(len(below.hot)) for j in range(len(below.cold))
             if not (below.hot_is_utility[i] and below.cold_is_utility[j])]
    by_search = {frozenset((below.hot[i], below.cold[j]) for i, j in chosen)
                 for chosen in itertools.combinations(pairs, first.number_of_matches)
                 if transportation_feasible(below.hot_heat, below.cold_heat, chosen)}
    assert len(by_search) >= 2
    tried = [{(m.hot, m.cold) for m in first.matches}]
    while True:
        alt, report = alternative_matches(below, first.matches, tried)
        if alt is None:
            break
        assert report.optimal and alt not in tried
        tried.append(alt)
    assert {frozenset(t) for t in tried} == by_search
