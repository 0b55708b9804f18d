"""Fewest-matches MILP of heat-exchanger network synthesis, solved one pinch subnetwork at a time.

The subnetworks and the model of their fewest matches (the expanded transshipment MILP of Papoulias &
Grossmann 1983) are built in :mod:`heatloom.network.matches`; this module solves them:
:func:`min_matches` solves one subnetwork within its share of the run's time budget, falling back to the
model's LP relaxation and then to a greedy heat-load distribution (with a note) when a solve stops without
a solution, and :func:`plan_matches` runs the transshipment LP, splits the problem at its pinches and
plans every subnetwork.  The heat-load distribution (which match exchanges how much heat in which
interval) is what :mod:`heatloom.network.design` turns into exchangers with temperatures.

References
----------
.. [1] Papoulias, S. A., Grossmann, I. E. (1983). A structural optimization approach in process synthesis
   II: Heat recovery networks. Computers & Chemical Engineering 7(6), 707-721.
   doi:10.1016/0098-1354(83)85023-6
.. [2] Floudas, C. A., Ciric, A. R., Grossmann, I. E. (1986). Automatic synthesis of optimum heat
   exchanger network configurations. AIChE Journal 32(2), 276-290. doi:10.1002/aic.690320215
.. [3] Linnhoff, B., Hindmarsh, E. (1983). The pinch design method for heat exchanger networks. Chemical
   Engineering Science 38(5), 745-763. doi:10.1016/0009-2509(83)80185-7
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import pulp

from ..errors import InfeasibleError, InputError
from ..model import StreamTable, Utility
from .matches import (
    Match,
    Subnetwork,
    SubnetworkMatches,
    TieBreak,
    fix_integers,
    heuristic_matches,
    min_matches_model,
    pair_set,
    subnetworks,
)
from .solvers import Budget, SolveReport, SolverName, SolveStatus, solve
from .transshipment import Transshipment, transshipment

__all__ = [
    "min_matches",
    "MatchPlan",
    "plan_matches",
    "required_subnetworks",
]


# ------------------------------------------------------------------------------------- subnetworks


# ------------------------------------------------------------------------------ fewest matches (b)


def _pairs(pairs) -> str:
    return ", ".join(f"{h}→{c}" for h, c in sorted(pairs))


def _relaxed_matches(problem: pulp.LpProblem, solver, time_limit: float, label: str) -> SolveReport:
    """Solve the LP relaxation of the fewest-matches model and round every used match up to 1."""
    binaries = [v for v in problem.variables() if v.cat == pulp.LpInteger]
    for v in binaries:
        v.cat = pulp.LpContinuous
    report = solve(problem, solver, time_limit=time_limit, check=False,
                   name=f"relaxation of fewest matches (no integer solution in time), {label}")
    for v in binaries:
        v.cat = pulp.LpInteger
        v.varValue = 1.0 if (v.varValue or 0.0) > 1e-9 else 0.0
    return report


def min_matches(sub: Subnetwork, *, solver: SolverName | str | None = None, time_limit: float = 60.0,
                tie_break: TieBreak = TieBreak.NONE, forbidden: Iterable[tuple[str, str]] = (),
                budget: Budget | None = None, required: Iterable[tuple[str, str]] = ()) -> SubnetworkMatches:
    """The fewest matches of one subnetwork and their heat loads.

    Solves :func:`min_matches_model` (with an absolute gap below one, which proves the integer minimum),
    then with ``TieBreak.COMPACT`` the tie-break stage at that number of matches, then recomputes the
    loads by an LP with the matches fixed.

    Parameters
    ----------
    sub : Subnetwork
    solver : SolverName, str or None
    time_limit : float
        Limit of each solve [s] when no ``budget`` is given; when the first one reaches it, the best
        matches found are returned with ``optimal`` False.
    tie_break : TieBreak
    forbidden : iterable of (str, str)
        (hot, cold) name pairs that must not be matched.
    budget : Budget, optional
        Wall-clock budget of this subnetwork: each solve takes its share of what is left instead of
        ``time_limit``, and solves that stop at their share are recorded in it.
    required : iterable of (str, str)
        (hot, cold) name pairs that must be matched in this subnetwork (every method honours them).

    Returns
    -------
    SubnetworkMatches

    Raises
    ------
    InfeasibleError
        When the heat cannot be distributed (only possible with forbidden or required matches); the
        message names them.

    Without an integer solution in time, the matches the LP relaxation uses are returned (not proven
    minimal); when the relaxation has none either, or the budget is spent, those of
    :func:`heuristic_matches`; ``note`` says so.

    Examples
    --------
    Above the pinch of Sinnott's four-stream problem, streams 1 and 4 both carry 270 kW, so they form a
    balanced pair of their own: one match fewer than the N − 1 target.

    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> above = subnetworks(transshipment(s, 10))[0]
    >>> result = min_matches(above)
    >>> result.number_of_matches, above.unit_target
    (3, 4)
    """
    forbidden = pair_set(forbidden)
    required = pair_set(required, "required")
    problem, read = min_matches_model(sub, forbidden=forbidden, required=required)

    def limit(fraction: float) -> float:
        return time_limit if budget is None else budget.share(fraction)

    def kept(report: SolveReport) -> SolveReport:
        return report if budget is None else budget.record(report)

    def heuristic(reports: list[SolveReport], why: str) -> SubnetworkMatches:
        matches, residuals = heuristic_matches(sub, forbidden, required)
        return SubnetworkMatches(sub, matches, residuals, tuple(reports),
                                 f"{sub.label}: {why}; matches from a greedy heat-load distribution "
                                 f"({len(matches)} matches, not proven fewest)")

    if budget is not None and budget.exhausted:
        return heuristic([], "no time left of the budget for the fewest-matches MILP")
    report = kept(solve(problem, solver, time_limit=limit(0.75), absolute_gap=0.999, check=False,
                        name=f"fewest matches, {sub.label}"))
    if report.status in (SolveStatus.INFEASIBLE, SolveStatus.INFEASIBLE_OR_UNBOUNDED):
        rules = ([f"without the forbidden matches {_pairs(forbidden)}"] if forbidden else []) + \
            ([f"with the required matches {_pairs(required)}"] if required else [])
        raise InfeasibleError(f"{sub.label}: no set of matches can distribute the heat at the energy targets "
                              + " and ".join(rules))
    reports = [report]
    if not report.status.has_solution:
        # No integer solution within the time limit: every match the LP relaxation uses is a feasible
        # (not minimal) set of matches; keep it so the design can go on, and say so in the reports.
        if budget is not None and budget.exhausted:
            return heuristic(reports, "the fewest-matches MILP stopped without a solution")
        relaxed = kept(_relaxed_matches(problem, solver, limit(1.0), sub.label))
        reports.append(relaxed)
        if not relaxed.status.has_solution:
            return heuristic(reports, "the fewest-matches MILP and its LP relaxation stopped without a "
                                      "solution")
        tie_break = TieBreak.NONE
    if tie_break is TieBreak.COMPACT and not (budget is not None and budget.exhausted):
        count = sum(1 for v in problem.variables() if v.name.startswith("y_") and (v.varValue or 0) > 0.5)
        second, read_second = min_matches_model(sub, forbidden=forbidden, max_matches=count, required=required)
        rep2 = kept(solve(second, solver, time_limit=limit(0.5), absolute_gap=0.999, check=False,
                          name=f"compact tie-break, {sub.label}"))
        reports.append(rep2)
        if rep2.status.has_solution:
            problem, read = second, read_second
    matches, residuals = read()
    fix_integers(problem)
    polish = kept(solve(problem, solver, time_limit=limit(1.0), check=False,
                        name=f"loads with the matches fixed, {sub.label}"))
    reports.append(polish)
    if polish.status is SolveStatus.OPTIMAL:
        matches, residuals = read()
    return SubnetworkMatches(sub, matches, residuals, tuple(reports))


# ----------------------------------------------------------------------------------- plan (c)

@dataclass(frozen=True, eq=False)
class MatchPlan:
    """Utility duties and the fewest matches of every subnetwork, ready for placing exchangers.

    Attributes
    ----------
    transshipment : Transshipment
        The utility-cost LP, its intervals and cascade.
    subnetworks : tuple of SubnetworkMatches
        Hottest first.
    tie_break : TieBreak
    note : str
        Assumptions worth telling the user (the free utilities assumed when none were given).
    """

    transshipment: Transshipment
    subnetworks: tuple[SubnetworkMatches, ...]
    tie_break: TieBreak
    note: str = ""

    @property
    def matches(self) -> tuple[Match, ...]:
        """Every match, hottest subnetwork first."""
        return tuple(m for s in self.subnetworks for m in s.matches)

    @property
    def number_of_matches(self) -> int:
        return sum(s.number_of_matches for s in self.subnetworks)

    @property
    def unit_target(self) -> int:
        """Sum of the N − 1 targets of the subnetworks [-]."""
        return sum(s.subnetwork.unit_target for s in self.subnetworks)

    @property
    def utility_duties(self) -> dict[str, float]:
        """[kW]"""
        return self.transshipment.utility_duties

    @property
    def free_utilities(self) -> bool:
        """True when no utilities were given and the transshipment LP assumed two free ones
        (:func:`heatloom.network.transshipment.free_target_utilities`)."""
        return self.transshipment.free_utilities

    @property
    def proven_minimum(self) -> bool:
        """True when every subnetwork's number of matches is proven minimal."""
        return all(s.optimal for s in self.subnetworks)

    @property
    def reports(self) -> tuple[SolveReport, ...]:
        """Every solve: the two LP stages, then those of each subnetwork."""
        return self.transshipment.reports + tuple(r for s in self.subnetworks for r in s.reports)

    @property
    def pair_loads(self) -> dict[tuple[str, str], float]:
        """Total load of each (hot, cold) pair over all subnetworks [kW]."""
        out: dict[tuple[str, str], float] = {}
        for m in self.matches:
            out[m.hot, m.cold] = out.get((m.hot, m.cold), 0.0) + m.load
        return out

    @property
    def notes(self) -> tuple[str, ...]:
        """How the matches of a subnetwork were found when not by the fewest-matches MILP."""
        return tuple(s.note for s in self.subnetworks if s.note)

    def matches_within(self, top: float | None = None, bottom: float | None = None) -> tuple[Match, ...]:
        """The matches of the subnetworks lying between two shifted temperatures.

        Parameters
        ----------
        top, bottom : float, optional
            Shifted temperatures [°C]; None leaves that end open.  A subnetwork counts when its whole
            shifted range lies within (a pinch region of the design step holds one or more subnetworks:
            several when utility levels add pinches of their own).
        """
        tol = 1e-9 * max(1.0, float(np.max(np.abs(self.transshipment.intervals.temperatures))))
        out = []
        for s in self.subnetworks:
            t = s.subnetwork.temperatures
            if (top is None or t[0] <= top + tol) and (bottom is None or t[-1] >= bottom - tol):
                out += s.matches
        return tuple(out)

    def allowed(self, top: float | None = None, bottom: float | None = None) -> set[tuple[str, str]]:
        """The (hot, cold) pairs matched in the subnetworks lying between two shifted temperatures
        (``top``, ``bottom`` [°C] as for :meth:`matches_within`)."""
        return {(m.hot, m.cold) for m in self.matches_within(top, bottom)}

    def to_dict(self) -> dict:
        return {"dtmin": self.transshipment.intervals.dt_min, "free_utilities": self.free_utilities,
                "note": self.note, "utilities": self.utility_duties,
                "hot_utility": self.transshipment.hot_utility, "cold_utility": self.transshipment.cold_utility,
                "utility_cost": self.transshipment.utility_cost,
                "pinches_shifted": list(self.transshipment.pinches), "tie_break": self.tie_break.value,
                "number_of_matches": self.number_of_matches, "unit_target": self.unit_target,
                "pair_loads": [{"hot": h, "cold": c, "load": q} for (h, c), q in self.pair_loads.items()],
                "proven_minimum": self.proven_minimum,
                "shifted_temperatures": self.transshipment.intervals.temperatures.tolist(),
                "subnetworks": [s.to_dict() for s in self.subnetworks],
                "matches": [m.to_dict() for m in self.matches],
                "units": {"temperature": "°C", "duty": "kW", "dtmin": "K", "utility_cost": "money/year"},
                "solves": [r.to_dict() for r in self.reports]}


def plan_matches(streams: StreamTable, dt_min: float, utilities: Sequence[Utility] | None = None, *,
                 solver: SolverName | str | None = None, time_limit: float = 60.0,
                 tie_break: TieBreak = TieBreak.NONE, forbidden: Iterable[tuple[str, str]] = (),
                 budget: Budget | None = None, required: Iterable[tuple[str, str]] = (),
                 fewest: bool = True) -> MatchPlan:
    """Cheapest utility duties, then the fewest matches with their heat loads, subnetwork by subnetwork.

    Runs :func:`transshipment`, splits at its pinches (:func:`subnetworks`) and runs :func:`min_matches`
    on each part.  The result is a heat-load distribution, not yet a network: exchanger temperatures,
    splits and areas come from the design step.  Designs built from it must be checked against local
    codes and standards by qualified, licensed engineers.

    Parameters
    ----------
    streams : StreamTable
    dt_min : float
        [K]
    utilities : sequence of Utility, optional
        Utility levels with prices [money/(kW·year)]; when omitted, two free utilities (a hot one
        hotter and a cold one colder than every process temperature, see
        :func:`heatloom.network.transshipment.free_target_utilities`) and the result's ``note`` says so.
    solver, time_limit, tie_break, forbidden
        As for :func:`min_matches`; ``time_limit`` [s] bounds each solve (two LP stages, then the solves
        of every subnetwork).
    budget : Budget, optional
        Wall-clock budget of the whole plan, used instead of ``time_limit``: the LPs take a fifth of it,
        each subnetwork a part in proportion to the size of its model.
    required : iterable of (str, str)
        (hot, cold) name pairs that must be matched: each in the subnetwork where the pair can carry the
        most heat (:func:`required_subnetworks`).
    fewest : bool
        False: only the utility duties and the subnetworks (no match is planned, no MILP solved); for a
        design that distributes the heat itself (:mod:`heatloom.network.tickoff`).

    Returns
    -------
    MatchPlan

    Raises
    ------
    InputError
        When a required pair can exchange heat in no subnetwork.
    InfeasibleError
        When the forbidden and required matches leave no distribution of the heat at the targets.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> plan = plan_matches(s, 10)
    >>> plan.utility_duties, plan.number_of_matches, plan.unit_target
    ({'hot utility': 50.0, 'cold utility': 30.0}, 6, 7)
    """
    forbidden = pair_set(forbidden)
    required = pair_set(required, "required") - forbidden
    t = transshipment(streams, dt_min, utilities, solver=solver,
                      time_limit=time_limit if budget is None else budget.share(0.2))
    subs = subnetworks(t)
    where = required_subnetworks(subs, required, forbidden)
    if not fewest:
        parts = tuple(SubnetworkMatches(s, (), {}, ()) for s in subs)
    elif budget is None:
        parts = tuple(min_matches(s, solver=solver, time_limit=time_limit, tie_break=tie_break,
                                  forbidden=forbidden, required={p for p, k in where.items() if k == s.index})
                      for s in subs)
    else:
        weights = [len(s.hot) * len(s.cold) * s.size for s in subs]
        parts = tuple(min_matches(s, solver=solver, tie_break=tie_break, forbidden=forbidden,
                                  budget=budget.part(w / max(sum(weights[k:]), 1)),
                                  required={p for p, i in where.items() if i == s.index})
                      for k, (s, w) in enumerate(zip(subs, weights)))
    note = ""
    if t.free_utilities:
        hot, cold = t.intervals.utilities
        note = (f"no utilities given: free utilities assumed, '{hot.name}' at {hot.supply_temperature:g} °C "
                f"and '{cold.name}' at {cold.supply_temperature:g} °C, isothermal, hotter / colder than every "
                "process temperature, at no cost")
    return MatchPlan(t, parts, tie_break, note)


def required_subnetworks(subs: Sequence[Subnetwork], required: Iterable[tuple[str, str]],
                         forbidden: Iterable[tuple[str, str]] = ()) -> dict[tuple[str, str], int]:
    """The subnetwork (its index) where each required pair is matched: where it can carry the most heat.

    A pair can exchange heat in a subnetwork when both take part in it and the hot side releases heat at
    or above some interval where the cold side takes heat (the bound :math:`U_{ij}` of
    :func:`heatloom.network.matches.min_matches_model`).

    Raises
    ------
    InputError
        When a pair is both forbidden and required, or can carry heat in no subnetwork at the targets.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.network.transshipment import transshipment
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> subs = subnetworks(transshipment(s, 10))
    >>> required_subnetworks(subs, [("2", "4"), ("1", "3")])
    {('1', '3'): 0, ('2', '4'): 0}
    """
    forbidden = pair_set(forbidden)
    both = sorted(pair_set(required, "required") & forbidden)
    if both:
        raise InputError(f"match{'es' if len(both) > 1 else ''} {_pairs(both)} both forbidden and required")
    out, impossible = {}, []
    for h, c in sorted(pair_set(required, "required")):
        best, where = 0.0, None
        for s in subs:
            if h not in s.hot or c not in s.cold:
                continue
            i, j = s.hot.index(h), s.cold.index(c)
            if s.hot_is_utility[i] and s.cold_is_utility[j]:
                continue
            cum = np.cumsum(s.hot_heat[i])
            cap = float(np.max(np.minimum(cum, np.cumsum(s.cold_heat[j][::-1])[::-1]), initial=0.0))
            if cap > best:
                best, where = cap, s.index
        if where is None or best <= 1e-9 * max(float(s.hot_heat.sum()) for s in subs):
            impossible.append((h, c))
        else:
            out[h, c] = where
    if impossible:
        raise InputError(f"required match{'es' if len(impossible) > 1 else ''} {_pairs(impossible)} cannot "
                         "exchange heat at the energy targets (the hot side is never hot enough for the cold "
                         "side within ΔTmin on the same side of a pinch)")
    return out
