"""Choosing retrofit changes with a MILP whose estimates are checked against exact evaluations.

The selection model of :mod:`heatloom.retrofit.options`, kept apart so it can be tested without a
network.  Its inputs are *items* — a modification at one size (a new exchanger of a given area, so many m²
added to one unit, a unit moved or repiped) — each with its exact value when made on its own: hot and cold
utility saved [kW], money saved per year, investment, and how much it lowers the duty of each heater and
cooler at the end of a stream.  A binary x_k per item; the model's saving of a set of items is

.. math:: \\hat S(x) = \\sum_k S_k x_k + \\sum_{\\{k,l\\} \\in \\mathcal{P}} w_{kl}\\,y_{kl}
          + \\sum_{T \\in \\mathcal{K}} c_T\\,z_T

(the same for money, investment and duty reductions).  The first sum is the linear estimate (effects add
up).  The second holds the exact interaction of every pair evaluated, w_kl = S({k,l}) − S_k − S_l, with
y_kl = x_k·x_l written exactly for binary x (McCormick: y >= x_k + x_l − 1, y <= x_k, y <= x_l).  The
third corrects, for every larger set T evaluated exactly, c_T = S(T) − (the first two sums at T), through a
binary z_T that equals 1 exactly when the selection *is* T:

.. math:: z_T \\le x_k\\ (k \\in T),\\quad z_T \\le 1 - x_j\\ (j \\notin T),\\quad
          z_T \\ge \\sum_{k \\in T} x_k - \\sum_{j \\notin T} x_j - (|T| - 1).

So the model is exact for every set it has seen and of second order (pairs) elsewhere.  Sets found infeasible get a no-good
cut :math:`\\sum_{k \\in T} x_k - \\sum_{j \\notin T} x_j \\le |T| - 1`.  Other constraints: at most one size
of each candidate (*group*), at most one item per *resource* (a unit, a place on a stream), the duty
reductions of each end heater or cooler at most its duty (it cannot go below zero), an optional budget,
payback limit (investment <= years × money saved per year, linear), required saving and number of changes.

:func:`select` solves, evaluates the chosen set exactly, and when the model's numbers and the exact ones
differ by more than the tolerance (:data:`RELATIVE_TOLERANCE`, :data:`ABSOLUTE_TOLERANCE_KW`,
:data:`ABSOLUTE_TOLERANCE_MONEY`) adds that set to :math:`\\mathcal{K}` — re-linearises at the new point —
and solves again, until the model picks a set whose estimate agrees with its exact evaluation (or the pass
limit is reached: then the best set verified on the way is returned and the result says it did not
converge).  The optimum is exact over the evaluated sets and over sets whose effects are those of their pairs;
it can miss a set whose items, three or more together, help each other more than their pairs say (the
model never saw it).

References
----------
Balas, E., Jeroslow, R. (1972) Canonical cuts on the unit hypercube. SIAM Journal on Applied Mathematics
23(1), 61-69 (the no-good cut) — from memory, unverified.
"""

from __future__ import annotations

import enum
from collections.abc import Callable, Mapping, MutableMapping, MutableSet, Sequence
from dataclasses import dataclass, field

import pulp

from ..errors import SolverError
from ..network.solvers import SolveReport, SolverName, SolveStatus, new_variable, solve
from ..validation import non_negative

__all__ = [
    "SelectionObjective",
    "SetValue",
    "Item",
    "Selection",
    "RELATIVE_TOLERANCE",
    "ABSOLUTE_TOLERANCE_KW",
    "ABSOLUTE_TOLERANCE_MONEY",
    "agree",
    "selection_model",
    "select",
]

RELATIVE_TOLERANCE = 1e-3
"""Largest relative difference between the MILP's numbers and the exact ones for them to agree [-]."""
ABSOLUTE_TOLERANCE_KW = 0.05
"""Absolute floor of the agreement tolerance on a saving [kW]."""
ABSOLUTE_TOLERANCE_MONEY = 1.0
"""Absolute floor of the agreement tolerance on money per year and on investment [money]."""


class SelectionObjective(enum.Enum):
    """What the selection model optimises."""

    MAX_NPV = "max npv"
    """Largest net present value: annuity factor × money saved per year − investment."""
    MAX_SAVING = "max saving"
    """Largest hot-utility saving (least investment among equal savings)."""
    MIN_INVESTMENT = "min investment"
    """Least investment (for a required saving)."""


@dataclass(frozen=True)
class SetValue:
    """What a set of items does, exactly (evaluated) or as the MILP estimates it.

    Attributes
    ----------
    feasible : bool
    saving, cold_saving : float
        Hot and cold utility saved [kW].
    saving_per_year : float
        Money saved on utilities [money/year].
    investment : float
        [money]
    reductions : mapping
        End heater or cooler name → how much its duty falls [kW].
    reason : str or None
        Why an infeasible set is infeasible.
    """

    feasible: bool
    saving: float = 0.0
    cold_saving: float = 0.0
    saving_per_year: float = 0.0
    investment: float = 0.0
    reductions: Mapping[str, float] = field(default_factory=dict)
    reason: str | None = None

    def npv(self, annuity: float) -> float:
        """annuity × saving_per_year − investment [money]."""
        return annuity * self.saving_per_year - self.investment


@dataclass(frozen=True)
class Item:
    """One modification at one size, with its exact value when made alone.

    Attributes
    ----------
    key : int
        Unique key.
    group : str
        Items of one group exclude each other (the sizes of one candidate).
    resources : frozenset of str
        Items sharing a resource exclude each other (a unit, a place on a stream).
    changes : int
        Changes the item counts for in ``max_changes`` [-].
    value : SetValue
        Exact value of the item alone (feasible).
    """

    key: int
    group: str
    resources: frozenset[str]
    changes: int
    value: SetValue


@dataclass(frozen=True)
class Selection:
    """The outcome of :func:`select`.

    Attributes
    ----------
    items : frozenset of int or None
        Keys of the chosen items (empty: change nothing); None when no set meets the constraints.
    estimate : SetValue or None
        The MILP's numbers for the set.
    value : SetValue or None
        The exact evaluation of the set.
    objective : SelectionObjective
    iterations : int
        MILP solves made [-].
    converged : bool
        True when the estimate agrees with the exact value within the tolerance.
    reports : tuple of SolveReport
    notes : tuple of str
    """

    items: frozenset[int] | None
    estimate: SetValue | None
    value: SetValue | None
    objective: SelectionObjective
    iterations: int
    converged: bool
    reports: tuple[SolveReport, ...] = ()
    notes: tuple[str, ...] = ()


def _close(a: float, b: float, floor: float, rel: float) -> bool:
    return abs(a - b) <= max(floor, rel * max(abs(a), abs(b)))


def agree(estimate: SetValue, exact: SetValue, *, relative: float = RELATIVE_TOLERANCE,
          absolute_kw: float = ABSOLUTE_TOLERANCE_KW, absolute_money: float = ABSOLUTE_TOLERANCE_MONEY) -> bool:
    """True when the MILP's numbers for a set agree with its exact evaluation.

    Saving within max(``absolute_kw``, ``relative`` × saving); money per year and investment within
    max(``absolute_money``, ``relative`` × value).

    Examples
    --------
    >>> agree(SetValue(True, 100.0, 100.0, 9000.0, 50000.0), SetValue(True, 100.04, 100.0, 9005.0, 50000.0))
    True
    >>> agree(SetValue(True, 100.0, 100.0, 9000.0, 50000.0), SetValue(True, 98.0, 98.0, 8800.0, 50000.0))
    False
    """
    return (exact.feasible and _close(estimate.saving, exact.saving, absolute_kw, relative)
            and _close(estimate.saving_per_year, exact.saving_per_year, absolute_money, relative)
            and _close(estimate.investment, exact.investment, absolute_money, relative))


def _pairs(subset):
    items = sorted(subset)
    return [(a, b) for i, a in enumerate(items) for b in items[i + 1:]]


def selection_model(items: Sequence[Item], known: Mapping[frozenset, SetValue] | None = None, forbidden=(), *,
                    objective: SelectionObjective = SelectionObjective.MAX_NPV, annuity: float = 1.0,
                    capacities: Mapping[str, float] | None = None, budget: float | None = None,
                    max_payback: float | None = None, required_saving: float | None = None,
                    max_changes: int | None = None):
    """The selection MILP (see the module notes) and a reader of its solution.

    Parameters
    ----------
    items : sequence of Item
    known : mapping of frozenset to SetValue
        Sets of item keys evaluated exactly (feasible ones correct the estimate; infeasible ones are cut).
    forbidden : iterable of frozenset
        Sets of item keys that may not be chosen as they are (no-good cuts).
    objective : SelectionObjective
    annuity : float
        Present value of one money unit per year over the plant life [year]: (1 − (1 + i)⁻ⁿ)/i.
    capacities : mapping, optional
        End heater or cooler → its present duty [kW]; the duty reductions chosen may not exceed it.
    budget : float, optional
        Largest investment [money].
    max_payback : float, optional
        Largest simple payback [year]: investment <= max_payback × saving_per_year.
    required_saving : float, optional
        Smallest hot-utility saving [kW].
    max_changes : int, optional
        Largest number of changes [-].

    Returns
    -------
    problem : pulp.LpProblem
    read : callable
        ``read()`` → (frozenset of chosen keys, SetValue estimate).

    Examples
    --------
    Two items that each save 100 kW for 10 000 money, and together (evaluated) only 150 kW:

    >>> a = Item(0, "a", frozenset(), 1, SetValue(True, 100.0, 100.0, 10_000.0, 10_000.0))
    >>> b = Item(1, "b", frozenset(), 1, SetValue(True, 100.0, 100.0, 10_000.0, 10_000.0))
    >>> both = SetValue(True, 150.0, 150.0, 15_000.0, 20_000.0)
    >>> p, read = selection_model([a, b], {frozenset({0, 1}): both}, objective=SelectionObjective.MAX_SAVING)
    >>> _ = solve(p, "cbc", time_limit=10)
    >>> keys, estimate = read()
    >>> sorted(keys), estimate.saving
    ([0, 1], 150.0)
    """
    known = {} if known is None else known
    budget = non_negative(budget, "budget", "money", optional=True)
    max_payback = non_negative(max_payback, "largest payback", "years", optional=True)
    required_saving = non_negative(required_saving, "required saving", "kW", optional=True)
    sense = pulp.LpMinimize if objective is SelectionObjective.MIN_INVESTMENT else pulp.LpMaximize
    problem = pulp.LpProblem("retrofit_selection", sense)
    keys = [it.key for it in items]
    by_key = {it.key: it for it in items}
    x = {k: new_variable(problem, f"x_{k}", 0, 1, pulp.LpBinary) for k in keys}
    fields_ = ("saving", "cold_saving", "saving_per_year", "investment")
    terms: dict[str, list] = {f: [(x[it.key], getattr(it.value, f)) for it in items] for f in fields_}
    cap = dict(capacities or {})
    red_terms: dict[str, list] = {u: [(x[it.key], it.value.reductions.get(u, 0.0)) for it in items
                                      if it.value.reductions.get(u, 0.0)] for u in cap}
    groups: dict[str, list] = {}
    resources: dict[str, list] = {}
    for it in items:
        groups.setdefault(it.group, []).append(x[it.key])
        for r in it.resources:
            resources.setdefault(r, []).append(x[it.key])
    for n, vs in enumerate(groups.values()):
        if len(vs) > 1:
            problem += pulp.lpSum(vs) <= 1, f"group_{n}"
    for n, vs in enumerate(resources.values()):
        if len(vs) > 1:
            problem += pulp.lpSum(vs) <= 1, f"resource_{n}"
    pair_terms: dict[frozenset, dict] = {}
    for n, (subset, value) in enumerate(known.items()):
        if len(subset) != 2 or not subset <= x.keys():
            continue
        k, j = sorted(subset)
        if not value.feasible:
            problem += x[k] + x[j] <= 1, f"nogood_pair_{n}"
            continue
        corr = {f: getattr(value, f) - getattr(by_key[k].value, f) - getattr(by_key[j].value, f) for f in fields_}
        corr.update({f"red:{u}": value.reductions.get(u, 0.0) - by_key[k].value.reductions.get(u, 0.0)
                     - by_key[j].value.reductions.get(u, 0.0) for u in cap})
        if not any(abs(c) > 1e-12 for c in corr.values()):
            continue
        y = new_variable(problem, f"y_{k}_{j}", 0, 1)   # y = x_k·x_j (McCormick, exact for binary x)
        problem += y >= x[k] + x[j] - 1, f"y_lo_{n}"
        problem += y <= x[k], f"y_k_{n}"
        problem += y <= x[j], f"y_j_{n}"
        for f in fields_:
            if corr[f]:
                terms[f].append((y, corr[f]))
        for u in cap:
            if corr[f"red:{u}"]:
                red_terms[u].append((y, corr[f"red:{u}"]))
        pair_terms[subset] = corr
    for n, (subset, value) in enumerate(known.items()):
        if len(subset) < 3 or not subset <= x.keys():
            continue
        inside = [x[k] for k in subset]
        outside = [x[k] for k in keys if k not in subset]
        if not value.feasible:
            problem += pulp.lpSum(inside) - pulp.lpSum(outside) <= len(inside) - 1, f"nogood_{n}"
            continue
        z = new_variable(problem, f"z_{n}", 0, 1, pulp.LpBinary)   # z = 1 exactly when the selection is `subset`
        for i, v in enumerate(inside):
            problem += z <= v, f"z_in_{n}_{i}"
        for i, v in enumerate(outside):
            problem += z <= 1 - v, f"z_out_{n}_{i}"
        problem += z >= pulp.lpSum(inside) - pulp.lpSum(outside) - (len(inside) - 1), f"z_on_{n}"
        pairs = [pair_terms[frozenset(p)] for p in _pairs(subset) if frozenset(p) in pair_terms]
        for f in fields_:
            c = getattr(value, f) - sum(getattr(by_key[k].value, f) for k in subset) - sum(p[f] for p in pairs)
            if c:
                terms[f].append((z, c))
        for u in cap:
            c = value.reductions.get(u, 0.0) - sum(by_key[k].value.reductions.get(u, 0.0) for k in subset) \
                - sum(p[f"red:{u}"] for p in pairs)
            if c:
                red_terms[u].append((z, c))
    for n, subset in enumerate(forbidden):
        if not subset or not subset <= x.keys():
            continue
        inside = [x[k] for k in subset]
        outside = [x[k] for k in keys if k not in subset]
        problem += pulp.lpSum(inside) - pulp.lpSum(outside) <= len(inside) - 1, f"forbidden_{n}"
    expr = {f: pulp.LpAffineExpression(t) for f, t in terms.items()}
    for n, (u, t) in enumerate(red_terms.items()):
        if t:
            problem += pulp.LpAffineExpression(t) <= cap[u] * (1 + 1e-9) + 1e-9, f"capacity_{n}"
    if budget is not None:
        problem += expr["investment"] <= budget, "budget"
    if max_payback is not None:
        problem += expr["investment"] - max_payback * expr["saving_per_year"] <= 0, "payback"
    if required_saving is not None:
        problem += expr["saving"] >= required_saving, "required_saving"
    if max_changes is not None:
        problem += pulp.lpSum(by_key[k].changes * x[k] for k in keys) <= max_changes, "max_changes"
    count = pulp.lpSum(x.values())
    if objective is SelectionObjective.MAX_NPV:
        problem += annuity * expr["saving_per_year"] - expr["investment"] - 1e-3 * count
    elif objective is SelectionObjective.MAX_SAVING:
        problem += expr["saving"] - 1e-9 * expr["investment"] - 1e-6 * count
    else:
        problem += expr["investment"] - 1e-6 * annuity * expr["saving_per_year"] + 1e-3 * count

    def read() -> tuple[frozenset, SetValue]:
        chosen = frozenset(k for k in keys if (x[k].varValue or 0.0) > 0.5)
        values = {f: float(sum(c * (v.varValue or 0.0) for v, c in terms[f])) for f in fields_}
        reds = {u: float(sum(c * (v.varValue or 0.0) for v, c in t)) for u, t in red_terms.items()}
        return chosen, SetValue(True, values["saving"], values["cold_saving"], values["saving_per_year"],
                                values["investment"], reds)

    return problem, read


def _meets(value: SetValue, budget, max_payback, required_saving, rel: float = RELATIVE_TOLERANCE) -> bool:
    slack = 1 + rel
    if budget is not None and value.investment > budget * slack + ABSOLUTE_TOLERANCE_MONEY:
        return False
    if max_payback is not None and value.investment > max_payback * value.saving_per_year * slack \
            + ABSOLUTE_TOLERANCE_MONEY:
        return False
    if required_saving is not None and value.saving < required_saving / slack - ABSOLUTE_TOLERANCE_KW:
        return False
    return True


def _score(value: SetValue, objective: SelectionObjective, annuity: float) -> float:
    if objective is SelectionObjective.MAX_NPV:
        return value.npv(annuity)
    if objective is SelectionObjective.MAX_SAVING:
        return value.saving
    return -value.investment


def select(items: Sequence[Item], evaluate: Callable[[frozenset], SetValue], *,
           objective: SelectionObjective = SelectionObjective.MAX_NPV, annuity: float = 1.0,
           capacities: Mapping[str, float] | None = None, budget: float | None = None,
           max_payback: float | None = None, required_saving: float | None = None,
           max_changes: int | None = None, known: MutableMapping[frozenset, SetValue] | None = None,
           forbidden: MutableSet[frozenset] | None = None, solver: SolverName | str | None = None,
           time_limit: float = 10.0, max_iterations: int = 40, relative: float = RELATIVE_TOLERANCE,
           absolute_kw: float = ABSOLUTE_TOLERANCE_KW,
           absolute_money: float = ABSOLUTE_TOLERANCE_MONEY) -> Selection:
    """Solve the selection MILP, evaluate its choice exactly, re-linearise and repeat until they agree.

    Parameters
    ----------
    items : sequence of Item
        Feasible items, each with its exact value alone.
    evaluate : callable
        frozenset of item keys → exact SetValue (called for sets of two or more items).
    objective, annuity, capacities, budget, max_payback, required_saving, max_changes
        See :func:`selection_model`.
    known : mutable mapping, optional
        Exact values of sets, shared between calls (updated here).
    forbidden : mutable set, optional
        Infeasible sets, shared between calls (updated here).
    solver : str, optional
        See :func:`heatloom.network.solvers.resolve_solver`.
    time_limit : float, optional
        Of each MILP solve [s].
    max_iterations : int, optional
        MILP solves at most [-].
    relative, absolute_kw, absolute_money : float, optional
        Agreement tolerance (see :func:`agree`).

    Returns
    -------
    Selection

    Raises
    ------
    SolverError
        The solver failed or stopped without any solution.

    Examples
    --------
    The two items of :func:`selection_model`, evaluated by a function that knows they interfere; the first
    pass picks both (estimate 200 kW), the evaluation says 150 kW, the second pass agrees.

    >>> a = Item(0, "a", frozenset(), 1, SetValue(True, 100.0, 100.0, 10_000.0, 10_000.0))
    >>> b = Item(1, "b", frozenset(), 1, SetValue(True, 100.0, 100.0, 10_000.0, 10_000.0))
    >>> both = SetValue(True, 150.0, 150.0, 15_000.0, 20_000.0)
    >>> s = select([a, b], lambda keys: both, objective=SelectionObjective.MAX_SAVING, solver="cbc")
    >>> sorted(s.items), s.value.saving, s.estimate.saving, s.iterations, s.converged
    ([0, 1], 150.0, 150.0, 2, True)
    """
    known = {} if known is None else known
    forbidden = set() if forbidden is None else forbidden
    by_key = {it.key: it for it in items}
    tol = {"relative": relative, "absolute_kw": absolute_kw, "absolute_money": absolute_money}
    reports: list[SolveReport] = []
    best: tuple[float, frozenset, SetValue, SetValue] | None = None
    notes: list[str] = []
    for iteration in range(1, max_iterations + 1):
        problem, read = selection_model(items, known, forbidden, objective=objective, annuity=annuity,
                                        capacities=capacities, budget=budget, max_payback=max_payback,
                                        required_saving=required_saving, max_changes=max_changes)
        report = solve(problem, solver, time_limit=time_limit, check=False,
                       name=f"retrofit selection ({objective.value}), pass {iteration}")
        reports.append(report)
        if not report.has_solution:
            if report.status in (SolveStatus.INFEASIBLE, SolveStatus.INFEASIBLE_OR_UNBOUNDED):
                if best is not None:
                    break
                return Selection(None, None, None, objective, iteration, True, tuple(reports),
                                 ("no set of changes meets the constraints",))
            raise SolverError(f"the retrofit selection model ended with '{report.status.value}' "
                              f"({report.detail})")
        chosen, estimate = read()
        if not chosen:
            return Selection(chosen, estimate, SetValue(True), objective, iteration, True, tuple(reports),
                             tuple(notes))
        if len(chosen) == 1:
            exact = by_key[next(iter(chosen))].value
        elif chosen in known:
            exact = known[chosen]
        else:
            exact = evaluate(chosen)
            known[chosen] = exact
        if not exact.feasible:
            forbidden.add(chosen)
            continue
        if _meets(exact, budget, max_payback, required_saving):
            score = _score(exact, objective, annuity)
            if best is None or score > best[0]:
                best = (score, chosen, estimate, exact)
        if agree(estimate, exact, **tol):
            return Selection(chosen, estimate, exact, objective, iteration, True, tuple(reports), tuple(notes))
    if best is None:
        return Selection(None, None, None, objective, len(reports), False, tuple(reports),
                         (f"no verified set of changes within {max_iterations} passes",))
    notes.append(f"the MILP's estimate and the exact evaluation did not agree within {len(reports)} passes; the "
                 "best set verified on the way is kept")
    _, chosen, estimate, exact = best
    return Selection(chosen, estimate, exact, objective, len(reports), False, tuple(reports), tuple(notes))
