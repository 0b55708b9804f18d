"""Solver choice and status reporting (heatloom.network.solvers).

Tests that need HiGHS carry the registered ``highs`` marker and are skipped without ``highspy``; CBC
comes with PuLP and is skipped only if PuLP ships without it.  The time-limit checks use market split
problems (Cornuéjols & Dawande 1999, "A class of hard small 0-1 programs", INFORMS J. Computing 11(2),
205-210): m equality constraints with random coefficients 0-99 and right-hand sides half the row sums,
n = 10(m − 1) binaries; such instances are almost always infeasible and branch and bound cannot prove it
within seconds.  Their coefficients here are drawn from a seeded generator (invented data).
"""

import math
import random

import pulp
import pytest

from heatloom.errors import InputError, SolverError, SolverUnavailableError
from heatloom.network import solvers
from heatloom.network.matches import subnetworks
from heatloom.network.milp import min_matches, plan_matches
from heatloom.network.solvers import SolverName, SolveStatus, available_solvers, resolve_solver, solve
from heatloom.network.transshipment import transshipment

HAVE_HIGHS = SolverName.HIGHS in available_solvers()
HAVE_CBC = SolverName.CBC in available_solvers()
needs_highs = [pytest.mark.highs, pytest.mark.skipif(not HAVE_HIGHS, reason="highspy not installed")]
needs_cbc = pytest.mark.skipif(not HAVE_CBC, reason="PuLP without its bundled CBC")


def each_solver():
    return [pytest.param("highs", marks=needs_highs), pytest.param("cbc", marks=needs_cbc)]


def market_split(m: int, n: int, seed: int, *, slack: bool) -> pulp.LpProblem:
    """Market split instance; with ``slack`` the optimisation form (minimise the total deviation)."""
    rng = random.Random(seed)
    a = [[rng.randint(0, 99) for _ in range(n)] for _ in range(m)]
    p = pulp.LpProblem(f"market_split_{m}_{n}", pulp.LpMinimize)
    x = [p.add_variable(f"x{j}", cat=pulp.LpBinary) for j in range(n)]
    plus = [p.add_variable(f"plus{i}", 0) for i in range(m)] if slack else []
    minus = [p.add_variable(f"minus{i}", 0) for i in range(m)] if slack else []
    p += pulp.lpSum(plus) + pulp.lpSum(minus) if slack else pulp.lpSum(x)
    for i in range(m):
        row = pulp.lpSum(a[i][j] * x[j] for j in range(n))
        if slack:
            row = row + plus[i] - minus[i]
        p += row == sum(a[i]) // 2, f"row{i}"
    return p


def small_lp(kind: str) -> pulp.LpProblem:
    p = pulp.LpProblem(f"small_{kind}", pulp.LpMinimize)
    x = p.add_variable("x", 0, 1 if kind == "infeasible" else None)
    z = p.add_variable("z", 0, 10, cat=pulp.LpInteger)
    p += (-x if kind == "unbounded" else x + z)
    p += x + 2 * z >= (2.5 if kind != "infeasible" else 30)
    return p


# ------------------------------------------------------------------------------------------- choice

@pytest.mark.highs
@pytest.mark.skipif(not HAVE_HIGHS, reason="highspy not installed")
def test_default_is_highs_when_installed():
    assert resolve_solver(None) is SolverName.HIGHS
    assert available_solvers()[0] is SolverName.HIGHS


def test_default_falls_back_to_cbc(monkeypatch):
    monkeypatch.setitem(solvers._AVAILABLE, SolverName.HIGHS, lambda: False)
    if HAVE_CBC:
        assert resolve_solver(None) is SolverName.CBC
    monkeypatch.setitem(solvers._AVAILABLE, SolverName.CBC, lambda: False)
    with pytest.raises(SolverUnavailableError, match="no solver is installed"):
        resolve_solver(None)


def test_names_and_unknown_name():
    assert resolve_solver(SolverName.CBC) is SolverName.CBC
    assert resolve_solver(" CBC ") is SolverName.CBC
    with pytest.raises(InputError, match=r"unknown solver 'gurobi'; valid solvers: 'highs', 'cbc'"):
        resolve_solver("gurobi")
    with pytest.raises(InputError, match="unknown solver"):
        solve(small_lp("optimal"), "glpk", time_limit=5)


def test_named_solver_not_installed(monkeypatch):
    monkeypatch.setitem(solvers._AVAILABLE, SolverName.HIGHS, lambda: False)
    with pytest.raises(SolverUnavailableError, match="solver 'highs' is not installed"):
        resolve_solver("highs")
    # SolverUnavailableError is also an ImportError and a SolverError
    with pytest.raises(ImportError):
        solve(small_lp("optimal"), SolverName.HIGHS)
    with pytest.raises(SolverError):
        solve(small_lp("optimal"), "highs")


@pytest.mark.parametrize("limit", [0, -1, float("nan"), float("inf"), "soon"])
def test_time_limit_must_be_positive(limit):
    with pytest.raises(InputError, match="time limit must be a"):
        solve(small_lp("optimal"), time_limit=limit)


# ------------------------------------------------------------------------------------------ statuses

@pytest.mark.parametrize("name", each_solver())
def test_optimal_infeasible_unbounded(name):
    r = solve(small_lp("optimal"), name, time_limit=5.5)
    assert r.status is SolveStatus.OPTIMAL and r.has_solution and r.optimal
    assert r.objective == pytest.approx(1.5)          # z = 1, x = 0.5 (z = 2, x = 0 costs 2)
    assert r.gap == pytest.approx(0.0, abs=1e-4)
    assert r.solver == name and r.time_limit == 5.5 and r.wall_time >= 0
    assert solve(small_lp("infeasible"), name, time_limit=5).status is SolveStatus.INFEASIBLE
    r = solve(small_lp("unbounded"), name, time_limit=5)
    assert r.status in (SolveStatus.UNBOUNDED, SolveStatus.INFEASIBLE_OR_UNBOUNDED)
    assert r.objective is None and not r.has_solution


@pytest.mark.slow
@pytest.mark.parametrize("name", each_solver())
def test_time_limit_with_a_feasible_solution(name):
    # the optimisation form always has a solution (all x = 0) but its optimum cannot be proven in 1 s
    r = solve(market_split(5, 40, seed=1, slack=True), name, time_limit=1)
    assert r.status is SolveStatus.TIME_LIMIT
    assert r.has_solution and not r.optimal
    assert r.objective is not None and r.objective > 0
    assert r.bound is not None and r.bound <= r.objective
    assert r.gap == pytest.approx(abs(r.objective - r.bound) / abs(r.objective))
    assert "time" in r.detail.lower()


@pytest.mark.slow
@pytest.mark.parametrize("name", each_solver())
def test_time_limit_without_a_solution(name):
    problem = market_split(5, 40, seed=2, slack=False)
    r = solve(problem, name, time_limit=1, check=False)
    assert r.status is SolveStatus.ERROR and r.objective is None and r.gap is None
    with pytest.raises(SolverError, match="stopped without any solution of 'hard instance'"):
        solve(problem, name, time_limit=1, name="hard instance")


@pytest.mark.parametrize("name", each_solver())
def test_solvers_are_silent(name, capfd):
    solve(small_lp("optimal"), name, time_limit=5)
    out, err = capfd.readouterr()
    assert out == "" and err == ""


def test_report_to_dict():
    r = solve(small_lp("optimal"), time_limit=5, name="tiny")
    d = r.to_dict()
    assert d["status"] == "optimal" and d["problem"] == "tiny"
    assert set(d) == {"solver", "status", "objective", "gap", "bound", "wall_time", "time_limit", "problem",
                      "detail"}
    assert math.isfinite(d["wall_time"])


# ---------------------------------------------------------------------- both solvers, same models

@pytest.mark.highs
@pytest.mark.skipif(not (HAVE_HIGHS and HAVE_CBC), reason="needs both HiGHS and CBC")
@pytest.mark.parametrize("name", ["targeting_klemes_table_4_2", "targeting_sinnott_four_stream",
                                  "targeting_ray_das_problem_5_1"])
def test_highs_and_cbc_agree(reference, name):
    # Published problems (sources in the files); the two solvers must give the same utilities, the same
    # fewest matches in every subnetwork and the same utility-cost objective.
    data, streams = reference(name)
    a = plan_matches(streams, data["dtmin"], solver="highs")
    b = plan_matches(streams, data["dtmin"], solver="cbc")
    assert {r.solver for r in a.reports} == {"highs"} and {r.solver for r in b.reports} == {"cbc"}
    assert a.utility_duties == pytest.approx(b.utility_duties, abs=1e-6)
    assert [s.number_of_matches for s in a.subnetworks] == [s.number_of_matches for s in b.subnetworks]
    assert all(s.optimal for s in a.subnetworks + b.subnetworks)
    t = transshipment(streams, data["dtmin"], solver="cbc")
    assert t.reports[0].objective == pytest.approx(a.transshipment.reports[0].objective, abs=1e-9)


@pytest.mark.highs
@pytest.mark.skipif(not (HAVE_HIGHS and HAVE_CBC), reason="needs both HiGHS and CBC")
def test_min_matches_model_same_optimum_on_both(reference):
    # Ray & Das, ch. 5, Problem 5.1 below its pinch: 5 participants, 4 matches (N - 1).
    data, streams = reference("targeting_ray_das_problem_5_1")
    below = subnetworks(transshipment(streams, data["dtmin"]))[1]
    a = min_matches(below, solver="highs", time_limit=30)
    b = min_matches(below, solver="cbc", time_limit=30)
    assert a.report.objective == pytest.approx(b.report.objective) == pytest.approx(4.0)
    assert a.number_of_matches == b.number_of_matches == 4


# ------------------------------------------------------------------------------------------- budget

def test_budget_shares_what_is_left(monkeypatch):
    now = [100.0]
    monkeypatch.setattr(solvers.Budget, "clock", staticmethod(lambda: now[0]))
    b = solvers.Budget(10.0)
    assert b.share(0.5) == pytest.approx(5.0)
    now[0] += 4.0
    assert b.remaining == pytest.approx(6.0)
    assert b.share(0.5) == pytest.approx(3.0)
    p = b.part(0.5)
    assert p.total == pytest.approx(3.0) and p.hits is b.hits
    now[0] += 3.0
    assert p.remaining == 0.0 and p.exhausted and not b.exhausted
    assert p.share(1.0) == pytest.approx(b.floor) and b.floor == pytest.approx(0.1)
    report = solvers.SolveReport("highs", SolveStatus.ERROR, None, None, None, 1.0, 1.0, "x", "Time limit")
    p.record(report)
    p.record(solvers.SolveReport("highs", SolveStatus.OPTIMAL, 1.0, 0.0, 1.0, 1.0, 1.0, "y"))
    assert b.hits == [report] and "'x'" in b.hits_note() and "10 s" in b.hits_note()
    with pytest.raises(InputError):
        solvers.Budget(0)
