"""Retrofit options for an existing network: modifications, their cost, payback and net present value.

:func:`retrofit_options` looks for changes to an :class:`~heatloom.retrofit.existing.ExistingNetwork` that
save utilities, prices them, and ranks the sets of changes worth making.  How:

1. **Candidates, linearised at the present operating point.**  From the simulated network
   (:func:`heatloom.retrofit.simulate.simulate`), with every unit's inlet temperatures and mean heat
   capacity flows held where they are:

   * *added area* on an exchanger: the duty it could reach before its approach falls to the minimum
     (``min_approach``) or the heater/cooler at the end of either of its streams runs out, and for each of
     ``sizes`` (fractions of that extra duty) the area it needs by ε-NTU
     (:func:`heatloom.equipment.rating.ntu_from_effectiveness`) at the same inlets;
   * a *new exchanger* between every hot and cold process stream, at every place along each (directly
     before any of its units; never after the heater or cooler that ends it): the largest duty keeping
     ``min_approach`` at both ends (and at inner segment breaks), capped by the end heater and cooler, and
     the counter-current area of each size;
   * *resequencing*: every exchanger moved to every other place along each of its streams;
   * *repiping*: one side of every exchanger moved to another stream of the same kind, at every place, U
     rescaled by the film coefficients (measured U are kept in proportion);
   * *pairs*: every resequencing or repiping followed by added area on the same unit, sized at the state
     the move leaves (re-linearised there).

   Stream splits of the existing network stay as they are (:mod:`heatloom.retrofit.branches`): added area
   is tried on branch units too, but new units, moves and repiping go between positions, never inside a
   split (between its branches), and no unit is moved off a branch; no new split is proposed.

2. **Exact value of every candidate alone.**  Each is applied (areas fixed afterwards), the network is
   simulated again by ε-NTU, and the candidate is kept only if the network still works (every stream at
   target, no reversed unit) and **every unit keeps its minimum approach**: ``min_approach`` for new,
   moved and repiped units; for the others ``min_approach`` or, if the unit already ran closer, no closer
   than it did.  A heater or cooler at the end of a stream whose duty rises beyond what its installed area
   can do gets the area it needs, priced as added area and listed as a change.

3. **Selection by a MILP** (:mod:`heatloom.retrofit.selection`): at most one size of each candidate,
   at most one change per unit and per place on a stream, budget, payback limit, required saving, number of
   changes.  The MILP chooses among the candidates with the best NPV and the best saving alone
   (``max_groups`` of each, at all their sizes); **every compatible pair of them whose effects meet** (they
   change the temperatures of a common stream) **is simulated**, and the pairs' exact interactions enter
   the model as second-order terms.  **Every set the MILP picks is simulated**; when the model's numbers and
   the simulation differ by more than the tolerance, the set's exact value goes into the model
   (re-linearisation at the new point) and it is solved again, until they agree.  The MILP is solved for
   the largest NPV, for the largest saving, and for the least investment at savings in between; the best
   single changes are added.

4. **Ranking by net present value** (largest first; equal NPV: shorter payback).  Savings, investment,
   payback and NPV of every option are the simulated ones; the MILP's estimates are reported beside.

Money: saving per year = Σ over utilities of price × (duty before − duty after) [money/year]; simple
payback = investment / saving per year [year]; NPV = saving per year × (1 − (1 + i)⁻ⁿ)/i − investment
(the annuity present-worth factor, the inverse of :func:`heatloom.equipment.cost.capital_recovery_factor`),
with i and n from the cost settings.  Retrofit cost laws: :class:`RetrofitCosts` (defaults in
:mod:`heatloom.defaults`, illustrative).

Results are screening estimates: every change must be checked against the plant's data sheets, hydraulics
(pressure drop, pump and control margins), materials, fouling and local codes by qualified, licensed
engineers before anything is built.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Collection, Sequence
from dataclasses import dataclass, replace

import numpy as np

from .. import defaults
from ..errors import InfeasibleError, InputError
from ..model.costs import CostSettings, RetrofitCosts
from ..model.existing import OperatingMode
from ..validation import check_dt_min, non_negative
from .changes import (
    Candidate,
    Change,
    ChangeKind,
    Evaluation,
    Evaluator,
    added_area_candidates,
    annuity_factor,
    apply_changes,
    move_candidates,
    new_exchanger_candidates,
    touched_streams,
)
from .diagnose import area_efficiency, cross_pinch
from .existing import ExistingNetwork
from .selection import (
    ABSOLUTE_TOLERANCE_KW,
    ABSOLUTE_TOLERANCE_MONEY,
    RELATIVE_TOLERANCE,
    Item,
    SelectionObjective,
    SetValue,
    agree,
    select,
)
from .simulate import Simulation, simulate

__all__ = [
    "ChangeKind",
    "RetrofitCosts",
    "Change",
    "RetrofitOption",
    "Retrofit",
    "DEFAULT_SIZES",
    "annuity_factor",
    "apply_changes",
    "retrofit_options",
]

DEFAULT_SIZES = (0.25, 0.5, 0.75, 1.0)
"""Sizes tried for added area and new exchangers, as fractions of the largest extra duty [-]."""


# --------------------------------------------------------------------------------------------------
# options


@dataclass(frozen=True, eq=False)
class RetrofitOption:
    """One set of changes, simulated and costed.

    Attributes
    ----------
    rank : int
        1 = best (largest NPV).
    changes : tuple of Change
    steps : tuple of str
        The changes in plain words.
    saving, cold_saving : float
        Hot and cold utility saved, simulated [kW].
    saving_per_year : float
        [money/year]
    investment : float
        [money]
    payback_years : float or None
        investment / saving_per_year [year]; None when nothing is saved.
    npv : float
        [money]
    milp_saving, milp_saving_per_year, milp_investment : float
        The selection MILP's numbers for the same set [kW, money/year, money].
    origin : str
        How the option was found.
    simulation : Simulation
        The network after the changes.
    currency : str
    """

    rank: int
    changes: tuple[Change, ...]
    steps: tuple[str, ...]
    saving: float
    cold_saving: float
    saving_per_year: float
    investment: float
    payback_years: float | None
    npv: float
    milp_saving: float
    milp_saving_per_year: float
    milp_investment: float
    origin: str
    simulation: Simulation
    currency: str = ""

    @property
    def hot_utility(self) -> float:
        """Hot utility after the changes [kW]."""
        return self.simulation.hot_utility

    def network(self):
        """The network after the changes as a :class:`heatloom.network.Network` (design JSON shape), with its
        utility cost [money/year]."""
        net = self.simulation.to_network()
        prices = {u.name: u.cost for u in self.simulation.network.utilities}
        operating = float(sum(prices.get(k, 0.0) * q for k, q in self.simulation.utility_duties.items()))
        return net.with_costs(operating_cost=operating, currency=self.currency)

    def to_dict(self) -> dict:
        return {"rank": self.rank, "changes": list(self.steps), "saving": self.saving,
                "cold_saving": self.cold_saving, "saving_per_year": self.saving_per_year,
                "investment": self.investment, "payback_years": self.payback_years, "npv": self.npv,
                "hot_utility": self.simulation.hot_utility, "cold_utility": self.simulation.cold_utility,
                "milp": {"saving": self.milp_saving, "saving_per_year": self.milp_saving_per_year,
                         "investment": self.milp_investment},
                "origin": self.origin, "modifications": [c.to_dict() for c in self.changes],
                "network": self.network().to_dict()}


@dataclass(frozen=True, eq=False)
class Retrofit:
    """The retrofit study of an existing network (see :func:`retrofit_options`).

    Attributes
    ----------
    simulation : Simulation
        The network as it is.
    dt_min, min_approach : float
        [K]
    options : tuple of RetrofitOption
        Ranked best first (largest NPV).
    cross_pinch : CrossPinch or None
    efficiency : AreaEfficiency or None
    candidates : dict
        Change kind → (candidates tried, candidates that work alone and save energy).
    points : tuple of (float, float, float)
        (investment [money], saving [kW], saving per year [money/year]) of every working set simulated.
    frontier : tuple of (float, float)
        (investment [money], saving [kW]) of the simulated sets that save more than every cheaper one.
    costs : CostSettings
    retrofit_costs : RetrofitCosts
    annuity : float
        [year]
    solves : tuple of SolveReport
    evaluations : int
        Network simulations made [-].
    notes : tuple of str
    """

    simulation: Simulation
    dt_min: float
    min_approach: float
    options: tuple[RetrofitOption, ...]
    cross_pinch: object
    efficiency: object
    candidates: dict
    points: tuple
    frontier: tuple
    costs: CostSettings
    retrofit_costs: RetrofitCosts
    annuity: float
    solves: tuple
    evaluations: int
    notes: tuple[str, ...] = ()

    @property
    def best(self) -> RetrofitOption | None:
        return self.options[0] if self.options else None

    def to_dict(self) -> dict:
        sim = self.simulation
        return {
            "current": {"hot_utility": sim.hot_utility, "cold_utility": sim.cold_utility,
                        "utilities": dict(sim.utility_duties)},
            "targets": {"hot_utility": sim.hot_utility_target, "cold_utility": sim.cold_utility_target,
                        "dtmin": self.dt_min},
            "dtmin": self.dt_min,
            "min_approach": self.min_approach,
            "area_efficiency": None if self.efficiency is None else self.efficiency.to_dict(),
            "cross_pinch": {} if self.cross_pinch is None else _per_unit(self.cross_pinch),
            "ranking": "npv",
            "options": [o.to_dict() for o in self.options],
            "candidates": {k: {"tried": a, "kept": b} for k, (a, b) in self.candidates.items()},
            "frontier": [{"investment": i, "saving": s} for i, s in self.frontier],
            "currency": self.costs.currency,
            "interest_rate": self.costs.interest_rate,
            "years": self.costs.years,
            "annuity_factor": self.annuity,
            "cost_basis": self.costs.describe() + " " + self.retrofit_costs.describe(self.costs.currency),
            "retrofit_costs": self.retrofit_costs.to_dict(),
            "tolerance": {"relative": _TOL["relative"], "kW": _TOL["absolute_kw"], "money": _TOL["absolute_money"]},
            "simulations": self.evaluations,
            "solves": [r.to_dict() for r in self.solves],
            "notes": list(self.notes),
        }

    def to_frame(self):
        """One row per option: rank, savings, investment, payback, NPV, changes."""
        import pandas as pd

        cur = self.costs.currency
        return pd.DataFrame([{"rank": o.rank, "saving [kW]": o.saving, "cold saving [kW]": o.cold_saving,
                              f"saving [{cur}/year]": o.saving_per_year, f"investment [{cur}]": o.investment,
                              "payback [year]": o.payback_years, f"NPV [{cur}]": o.npv,
                              "MILP saving [kW]": o.milp_saving, "hot utility after [kW]": o.hot_utility,
                              "changes": "; ".join(o.steps), "origin": o.origin} for o in self.options])


_TOL = {"relative": RELATIVE_TOLERANCE, "absolute_kw": ABSOLUTE_TOLERANCE_KW,
        "absolute_money": ABSOLUTE_TOLERANCE_MONEY}


# --------------------------------------------------------------------------------------------------
# evaluation of a set of changes


def _per_unit(xp) -> dict[str, float]:
    """Net heat each unit moves across the pinch(es) [kW]."""
    out: dict[str, float] = {}
    for u in xp.units:
        out[u.unit] = out.get(u.unit, 0.0) + u.net
    return out


def _word_place(net: ExistingNetwork, name: str, stream: str) -> str:
    groups = net.stages(stream)
    seq = [" / ".join(u.name for u in g) if len(g) == 1 else f"the split {' / '.join(u.name for u in g)}"
           for g in groups]
    i = next(k for k, g in enumerate(groups) if name in {u.name for u in g})
    if len(groups[i]) > 1:
        others = ", ".join(u.name for u in groups[i] if u.name != name)
        return f"on a branch of the split of {stream} with {others}"
    prev = seq[i - 1] if i > 0 else None
    nxt = seq[i + 1] if i + 1 < len(seq) else None
    if prev and nxt:
        return f"on {stream} after {prev} and before {nxt}"
    if nxt:
        return f"first on {stream}, before {nxt}"
    if prev:
        return f"last on {stream}, after {prev}"
    return f"the only unit on {stream}"


def _steps(before: ExistingNetwork, before_sim: Simulation, sim: Simulation,
           changes: Sequence[Change]) -> tuple[str, ...]:
    net = sim.network
    out = []
    for c in changes:
        st = sim.unit(c.unit)
        u = net.unit(c.unit)
        sides = f"{u.hot} → {u.cold}"
        if c.kind is ChangeKind.NEW_EXCHANGER:
            out.append(f"new exchanger {c.unit}, {c.area:.1f} m², {st.duty:.0f} kW between {c.hot} and {c.cold}: "
                       f"{_word_place(net, c.unit, c.hot)}; {_word_place(net, c.unit, c.cold)}")
        elif c.kind is ChangeKind.ADDED_AREA:
            old = before.unit(c.unit).area if c.unit in {x.name for x in before.units} else None
            trim = u.mode is OperatingMode.TRIM
            why = f" so it can take its larger duty of {st.duty:.0f} kW" if trim else \
                f"; it then transfers {st.duty:.0f} kW"
            grow = f", {old:.1f} → {old + c.area:.1f} m²" if old is not None and not trim else ""
            out.append(f"add {c.area:.1f} m² to {c.unit} ({sides}{grow}){why}")
        elif c.kind is ChangeKind.RESEQUENCE:
            out.append(f"move {c.unit} ({sides}) {_word_place(net, c.unit, c.stream)}; it then transfers "
                       f"{st.duty:.0f} kW")
        else:
            old = getattr(before.unit(c.unit), c.side)
            out.append(f"repipe {c.unit}: its {c.side} side from {old} to {c.stream}, "
                       f"{_word_place(net, c.unit, c.stream)}; it then transfers {st.duty:.0f} kW ({sides})")
    for st in sim.units:
        if st.mode is OperatingMode.TRIM and abs(st.duty) <= 0.5 and abs(before_sim.unit(st.name).duty) > 0.5:
            out.append(f"{st.name} ({st.hot} → {st.cold}) falls idle ({st.duty:.0f} kW): keep it as a spare or "
                       "take it out of service")
    return tuple(out)


def retrofit_options(network: ExistingNetwork, dt_min: float, *, costs: CostSettings | None = None,
                     retrofit_costs: RetrofitCosts | None = None, budget: float | None = None,
                     max_payback: float | None = None, required_saving: float | None = None,
                     min_approach: float | None = None, kinds: Collection[ChangeKind] | None = None,
                     sizes: Sequence[float] = DEFAULT_SIZES, max_changes: int = 3, max_options: int = 10,
                     max_groups: int = 12,
                     min_saving: float | None = None, default_film_coefficient: float | None = None,
                     solver: str | None = None, time_limit: float = 10.0, max_iterations: int = 40,
                     progress: Callable[[str], None] | None = None) -> Retrofit:
    """Ranked, costed retrofit options for an existing network (see the module notes for the method).

    Parameters
    ----------
    network : ExistingNetwork
    dt_min : float
        ΔTmin of the energy targets and the cross-pinch analysis [K].
    costs : CostSettings, optional
        Currency, interest rate and plant life for the NPV (default :class:`CostSettings`).
    retrofit_costs : RetrofitCosts, optional
        Cost laws of the changes (default :class:`RetrofitCosts`).
    budget : float, optional
        Largest investment of an option [money].
    max_payback : float, optional
        Largest simple payback of an option [year].
    required_saving : float, optional
        Smallest hot-utility saving of an option [kW].
    min_approach : float, optional
        Smallest approach any unit may be left with [K]; default ``dt_min`` (1 K if that is 0).
    kinds : collection of ChangeKind, optional
        Modifications allowed (default all).
    sizes : sequence of float, optional
        Fractions of the largest extra duty tried for added area and new exchangers [-], in (0, 1].
    max_changes : int, optional
        Most changes in one option [-] (a heater or cooler enlarged to follow does not count).
    max_options : int, optional
        Options returned at most [-].
    max_groups : int, optional
        The MILP chooses among this many candidates with the best NPV alone and as many with the best
        saving alone, each at all its sizes [-]; every compatible pair of them is simulated.
    min_saving : float, optional
        Smallest hot-utility saving that counts as saving energy [kW]; default max(0.5 kW, 0.1 % of the
        present hot utility).
    default_film_coefficient : float, optional
        [kW/(m²·K)] for streams without one, for the U of new exchangers.
    solver : str, optional
        ``"highs"`` or ``"cbc"`` (default: HiGHS when installed).
    time_limit : float, optional
        Of each MILP solve [s].
    max_iterations : int, optional
        MILP passes at most in each selection [-].
    progress : callable, optional
        Called with a short text at each stage.

    Returns
    -------
    Retrofit

    Raises
    ------
    InputError
        Bad limits, sizes or costs (NPV needs an interest rate and a plant life).
    InfeasibleError
        The existing network does not work as simulated (a stream misses its target, a unit reversed).

    Examples
    --------
    H1 150 → 40 °C (2 kW/K) and C1 60 → 120 °C (3 kW/K); a small exchanger and a cooler that removes heat
    above the pinch.  The best option adds area to E1 and saves all 60 kW of hot utility beyond the target.

    >>> from heatloom.model import StreamTable, Utility
    >>> from heatloom.model.existing import ExistingUnit
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 60], [40, 120], [2.0, 3.0], film_coefficient=[1.0, 1.0])
    >>> u = [Utility("steam", 180, 179, 200.0, film_coefficient=1.0),
    ...      Utility("water", 20, 30, 10.0, film_coefficient=1.0)]
    >>> net = ExistingNetwork(s, [ExistingUnit("E1", "H1", "C1", duty=100.0),
    ...                           ExistingUnit("H1", "steam", "C1", duty=80.0),
    ...                           ExistingUnit("C1", "H1", "water", duty=120.0)], u)
    >>> r = retrofit_options(net, 10, solver="cbc")
    >>> best = r.best
    >>> round(best.saving, 1), best.steps[0].startswith("add"), round(best.milp_saving, 1)
    (60.0, True, 60.0)
    """
    dt = None if dt_min is None else check_dt_min(dt_min)
    if dt is None:
        raise InputError("ΔTmin is required [K]")
    emat = non_negative(min_approach, "minimum approach", "K", optional=True)
    emat = (dt if dt > 0 else 1.0) if emat is None else emat
    if not emat > 0:
        raise InputError(f"minimum approach must be > 0 K, got {min_approach!r}")
    budget = non_negative(budget, "budget", "money", optional=True)
    max_payback = non_negative(max_payback, "largest payback", "years", optional=True)
    required_saving = non_negative(required_saving, "required saving", "kW", optional=True)
    sizes = tuple(float(f) for f in sizes)
    if not sizes or not all(0 < f <= 1 for f in sizes):
        raise InputError(f"sizes must be fractions in (0, 1], got {sizes!r}")
    for v, what in ((max_changes, "max_changes"), (max_options, "max_options"), (max_groups, "max_groups")):
        if isinstance(v, bool) or not isinstance(v, (int, np.integer)) or v < 1:
            raise InputError(f"{what} must be a whole number >= 1, got {v!r}")
    costs = CostSettings() if costs is None else costs
    if costs.interest_rate is None or costs.years is None:
        raise InputError("the NPV of retrofit options needs interest_rate and years in the costs file (they are "
                         "optional only for annualised laws)", column="interest_rate")
    rcosts = RetrofitCosts() if retrofit_costs is None else retrofit_costs
    kinds = set(ChangeKind) if kinds is None else {ChangeKind(k) for k in kinds}
    annuity = annuity_factor(costs.interest_rate, costs.years)
    tell = progress or (lambda text: None)
    notes: list[str] = []

    tell("simulating the existing network")
    ctx = Evaluator(network, dt, emat, rcosts)
    sim0 = ctx.sim
    if sim0.problems:
        raise InfeasibleError("the existing network does not work as simulated, so it cannot be the base of a "
                              f"retrofit: {sim0.problems[0]}")
    original = simulate(network, dt)
    if abs(original.hot_utility - sim0.hot_utility) > 1e-6 * max(1.0, original.hot_utility):
        notes.append("dropping the stated duties of units with known areas changed the simulated hot utility "
                     f"from {original.hot_utility:.6g} to {sim0.hot_utility:.6g} kW")
    floor_min = min_saving if min_saving is not None else max(0.5, 1e-3 * sim0.hot_utility)
    # a design's units at exactly ΔTmin come back a hair under it from the rounded areas of its table; the search
    # keeps every unit at or above the smaller of ΔTmin and its present approach either way
    below = [u.name for u in sim0.units
             if u.min_approach < emat - defaults.TABLE_APPROACH_TOLERANCE and abs(u.duty) > 1e-9]
    if below:
        notes.append(f"units already below the minimum approach {emat:g} K may not get closer than they are: "
                     + ", ".join(below))

    xp = cross_pinch(sim0, dt)
    try:
        eff = area_efficiency(sim0, default_film_coefficient=default_film_coefficient)
    except (InputError, InfeasibleError) as e:
        eff = None
        notes.append(f"no area efficiency: {e}")

    tell("generating candidates")
    cands: list[Candidate] = []
    if ChangeKind.ADDED_AREA in kinds:
        for u in ctx.base.exchangers:
            cands += added_area_candidates(ctx, ctx.base, sim0, u.name, sizes, f"area:{u.name}")
    if ChangeKind.NEW_EXCHANGER in kinds:
        cands += new_exchanger_candidates(ctx, sizes, default_film_coefficient, notes)
    moves = move_candidates(ctx, default_film_coefficient, notes)
    moves = [m for m in moves if m.kind in kinds]

    tell(f"simulating {len(cands) + len(moves)} candidates")
    tried = {k: 0 for k in ChangeKind}
    kept = {k: 0 for k in ChangeKind}
    items: list[Item] = []
    by_key: dict[int, Candidate] = {}
    # names of new units (N-1, N-2, ...) meet no unit, stream or utility name of the network
    names = {u.name for u in network.units} | {s.name for s in network.streams} | \
        {u.name for u in network.utilities}

    def fresh(k: int) -> str:
        n = k
        while f"N-{n}" in names:
            n += 1000
        return f"N-{n}"

    def add(cand: Candidate) -> Evaluation:
        k = len(by_key)
        changes = tuple(replace(c, unit=fresh(k)) if c.kind is ChangeKind.NEW_EXCHANGER else c for c in cand.changes)
        cand = replace(cand, changes=changes)
        tried[cand.kind] += 1
        ev = ctx.evaluate(changes)
        by_key[k] = cand
        v = ev.value
        if v.feasible and v.saving > floor_min and v.saving_per_year > 0:
            kept[cand.kind] += 1
            items.append(Item(k, cand.group, cand.resources, len(cand.changes), v))
        return ev

    for cand in cands:
        add(cand)
    for cand in moves:
        ev = ctx.evaluate(cand.changes)
        add(cand)
        if ev.value.feasible and ChangeKind.ADDED_AREA in kinds:   # pair: the move, then more area there
            net_m = ev.simulation.network
            for pair in added_area_candidates(ctx, net_m, ev.simulation, cand.changes[0].unit, sizes, cand.group,
                                    prefix=cand.changes):
                add(pair)

    def changes_of(keys: frozenset) -> list[Change]:
        return [c for k in sorted(keys) for c in by_key[k].changes]

    def evaluate(keys: frozenset) -> SetValue:
        return ctx.evaluate(changes_of(keys)).value

    # the candidates the MILP chooses from: the best groups by NPV and by saving
    best_of: dict[str, Item] = {}
    for it in items:
        b = best_of.get(it.group)
        if b is None or it.value.npv(annuity) > b.value.npv(annuity):
            best_of[it.group] = it
    by_npv = sorted(best_of, key=lambda g: -best_of[g].value.npv(annuity))[:max_groups]
    by_saving = sorted(best_of, key=lambda g: -max(i.value.saving for i in items if i.group == g))[:max_groups]
    chosen_groups = set(by_npv) | set(by_saving)
    if len(chosen_groups) < len(best_of):
        notes.append(f"the MILP chooses among the {len(chosen_groups)} best of {len(best_of)} working candidates "
                     f"(the {max_groups} best by NPV and by saving, each at every size)")
    pool = [it for it in items if it.group in chosen_groups]

    # exact pairs (second-order terms of the MILP): every two compatible candidates whose effects meet
    tell(f"simulating pairs of {len(pool)} candidates")
    touched = {it.key: touched_streams(sim0, ctx.evaluate(by_key[it.key].changes).simulation) for it in pool}
    known: dict[frozenset, SetValue] = {}
    for i, a in enumerate(pool):
        for b in pool[i + 1:]:
            if a.group == b.group or a.resources & b.resources or not touched[a.key] & touched[b.key]:
                continue
            if a.changes + b.changes > max_changes:
                continue
            known[frozenset({a.key, b.key})] = evaluate(frozenset({a.key, b.key}))
    items = pool
    forbidden: set[frozenset] = set()
    common = {"annuity": annuity, "capacities": ctx.trim, "budget": budget, "max_payback": max_payback,
              "max_changes": max_changes, "known": known, "forbidden": forbidden, "solver": solver,
              "time_limit": time_limit, "max_iterations": max_iterations, **_TOL}
    selections = []
    solves = []
    if items:
        tell(f"selecting among {len(items)} candidates (MILP)")
        top = 0.0
        for label, objective in (("MILP: largest NPV", SelectionObjective.MAX_NPV),
                                 ("MILP: largest saving", SelectionObjective.MAX_SAVING)):
            sel = select(items, evaluate, objective=objective, required_saving=required_saving, **common)
            solves += sel.reports
            notes += [n for n in sel.notes if n not in notes]
            if sel.items:
                selections.append((label, sel))
                if objective is SelectionObjective.MAX_SAVING:
                    top = sel.value.saving
        for f in (0.2, 0.4, 0.6, 0.8):
            req = f * top
            if required_saving is not None and req < required_saving:
                continue
            if not req > floor_min:
                continue
            sel = select(items, evaluate, objective=SelectionObjective.MIN_INVESTMENT, required_saving=req, **common)
            solves += sel.reports
            notes += [n for n in sel.notes if n not in notes]
            if sel.items:
                selections.append((f"MILP: least investment for {req:.0f} kW saved", sel))
    else:
        notes.append("no single change saves energy while keeping the minimum approach in every unit")

    # options: the MILP's sets and the best single changes (each group's best NPV)
    proposals: dict[frozenset, tuple[str, SetValue]] = {}
    for label, sel in selections:
        proposals.setdefault(sel.items, (label, sel.estimate))
    singles = {}
    for it in items:
        if (budget is not None and it.value.investment > budget) or (
                required_saving is not None and it.value.saving < required_saving) or (
                max_payback is not None and it.value.investment > max_payback * it.value.saving_per_year):
            continue
        best = singles.get(it.group)
        if best is None or it.value.npv(annuity) > best.value.npv(annuity):
            singles[it.group] = it
    for it in sorted(singles.values(), key=lambda i: -i.value.npv(annuity))[:max_options]:
        proposals.setdefault(frozenset({it.key}), ("best single change", it.value))

    tell("confirming the options by simulation")
    options = []
    for keys, (label, estimate) in proposals.items():
        changes = changes_of(keys)
        renamed, k = [], 0
        for c in changes:
            if c.kind is ChangeKind.NEW_EXCHANGER:
                k += 1
                n = k
                while f"N-{n}" in names:
                    n += 1
                renamed.append(replace(c, unit=f"N-{n}"))
            else:
                renamed.append(c)
        ev = ctx.evaluate(renamed)
        v = ev.value
        if not v.feasible or not v.saving > floor_min:
            continue
        if not agree(estimate, v, relative=_TOL["relative"], absolute_kw=_TOL["absolute_kw"],
                     absolute_money=_TOL["absolute_money"]):
            notes.append(f"option from '{label}': the MILP's estimate ({estimate.saving:.4g} kW) and the simulation "
                         f"({v.saving:.4g} kW) differ beyond the tolerance")
        if (budget is not None and v.investment > budget * (1 + _TOL["relative"])) or (
                max_payback is not None and v.investment > max_payback * v.saving_per_year * (1 + _TOL["relative"])):
            continue
        payback = v.investment / v.saving_per_year if v.saving_per_year > 0 else None
        options.append(RetrofitOption(0, ev.changes, _steps(ctx.base, sim0, ev.simulation, ev.changes), v.saving,
                                      v.cold_saving, v.saving_per_year, v.investment, payback,
                                      annuity * v.saving_per_year - v.investment, estimate.saving,
                                      estimate.saving_per_year, estimate.investment, label, ev.simulation,
                                      costs.currency))
    options.sort(key=lambda o: (-o.npv, o.payback_years if o.payback_years is not None else math.inf))
    options = [replace(o, rank=r) for r, o in enumerate(options[:max_options], start=1)]

    points = tuple((ev.value.investment, ev.value.saving, ev.value.saving_per_year) for ev in ctx.cache.values()
                   if ev.value.feasible and ev.value.saving > floor_min)
    frontier, top = [], 0.0
    for inv, sav, _ in sorted(points):      # the largest saving simulated for each level of investment
        if sav > top + 1e-9:
            frontier.append((inv, sav))
            top = sav
    if network.has_splits:
        notes.append("the existing stream splits are kept: added area is tried on their branch units, but new "
                     "exchangers, moves and repiping go only before or after a split, never inside it (between its "
                     "branches), and no unit is moved off a branch; no new split is proposed")
    else:
        notes.append("no new stream splits are proposed")
    if not options:
        notes.append("no option saves energy within the limits given")
    return Retrofit(sim0, dt, emat, tuple(options), xp, eff,
                    {k.value: (tried[k], kept[k]) for k in ChangeKind}, points, tuple(frontier), costs, rcosts,
                    annuity, tuple(solves), ctx.count, tuple(dict.fromkeys(notes)))
