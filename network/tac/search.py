"""Networks of lowest total annual cost: stagewise superstructure, MILP topologies, exact-cost refinement.

The sequence (DEVELOPERS.md, "Method notes"):

1. **Starting topologies.**  (a) The maximum-energy-recovery network of :func:`heatloom.network.design.
   design_mer` at ΔTmin 10 K, its exchangers laid into stages along every stream; (b) the stagewise MILP
   of Yee & Grossmann (1990) with K = max(#hot, #cold) stages, utilities at the stream ends and isothermal
   mixing, whose area cost is linearised as a fixed charge per unit plus a cost per kW estimated from the
   current load and approach-temperature estimates (:func:`heatloom.network.tac.starts.stagewise_milp`);
   the estimates are updated from the refined network and the MILP solved again a few times.
2. **Exact refinement** of each topology (:func:`heatloom.network.tac.nlp.solve_topology`): loads,
   stage temperatures and utility duties by SLSQP (trust-constr when SLSQP fails at once) against the exact
   TAC with the exact LMTD and EMAT at both ends of every unit, isothermal mixing; units whose load
   vanishes are removed.  Topologies with stream splits that come within :data:`POLISH_WITHIN` of the best
   have their split fractions freed (:func:`heatloom.network.tac.polish.polish_splits`: branches may then
   leave a stage at different temperatures, non-isothermal mixing), and keep that only when it is cheaper.
3. **Topology search** (iterated local search): remove a unit, add a match (in an existing stage or a new
   one), move a match to another stage, add or remove a utility unit (at a stream's target end, or at its
   supply end where the side has two or more utility levels: a cheap, cool steam level preheating a cold
   stream before its process exchangers), each neighbour refined by step 2;
   local optima are kicked by a few random moves, more as the walk stalls.  Several starts run in
   parallel in local processes (:func:`heatloom.tasks.local_pool`: from a fork server, one BLAS thread each;
   see :func:`heatloom.tasks.pool_context`), each with its own random stream derived from ``seed``; start 0
   begins while the MILPs are being solved.
4. One wall-clock budget (:class:`heatloom.network.solvers.Budget`): the time limit is the whole run's; each
   solve gets a share of what is left, and one that stops without a solution leaves the run to its other
   starts (the utilities-only network is always one), with a note.
5. A last polish (:func:`heatloom.network.tac.polish.polish_cheapest`, in the last :data:`FINAL_RESERVE` of
   the time limit, problems of up to 20 streams): the split fractions of the cheapest networks with stream
   splits are freed again from their own and from random fractions: the optimum of a split network with
   non-isothermal mixing need not be the local one next to isothermal mixing.
6. Only with ``restructure=True`` (problems of up to :data:`RESTRUCTURE_STREAMS` streams of one segment
   each): the last :data:`RESTRUCTURE_SHARE` of the time limit goes to a search beyond the stagewise form
   (:func:`heatloom.network.tac.layout_search.restructure`): the best network becomes a layout of blocks along
   every stream, and units are moved anywhere along their streams (a utility unit beside an exchanger on
   a split stream, units in series on a branch) or removed, each layout refined against the exact cost;
   with several workers each runs its own search (its own seed) and the cheapest is taken; its network
   is kept when it is cheaper.  When the stagewise search has found nothing cheaper for
   :data:`RESTRUCTURE_STALL` of the time limit it stops and the search beyond it gets all the time left.
7. The best network is built with its temperatures, sized with the exact LMTD, costed from its own
   temperatures and checked by :func:`heatloom.network.structure.check_network` with ΔTmin = EMAT.  When
   the starting MER network costs less (its utility units may sit where the stagewise form cannot put
   them), it is returned instead, with a note.

There is no ΔTmin: only the exchanger minimum approach temperature (EMAT) bounds the design.  The search is
a heuristic: the result is the best network found within the budget, not a proven optimum.  Costs are
screening estimates; designs must be checked against local codes by qualified, licensed engineers.

References
----------
.. [1] Yee, T. F., Grossmann, I. E. (1990). Simultaneous optimization models for heat integration—II.
   Heat exchanger network synthesis. Computers & Chemical Engineering 14(10), 1165-1184.
   doi:10.1016/0098-1354(90)85010-8
"""

from __future__ import annotations

import os
import time
from collections.abc import Callable, Iterable, Sequence
from dataclasses import replace

import numpy as np

from ... import defaults
from ...errors import InfeasibleError, InputError
from ...model import MatchRules, StreamTable, Utility
from ...model.costs import CostSettings
from ...tasks import local_pool, numeric_threads
from ..design import match_rules
from ..solvers import Budget, SolveStatus
from ..structure import Network, check_network, process_sides
from .build import keeping_rules, network_from_solution, overshoot_notes
from .layout_search import RESTRUCTURE_SHARE, RESTRUCTURE_STALL, RESTRUCTURE_STREAMS, beyond_stagewise
from .nlp import (
    SUPPLY_END_LEVELS,
    TacProblem,
    Topology,
    TopologySolution,
    make_problem,
    solve_topology,
)
from .polish import polish_cheapest, polish_splits
from .starts import mer_network, stagewise_milp, start_from_network, unit_estimates

__all__ = ["design_tac", "network_from_solution"]

MER_DT_MIN = 10.0
"""ΔTmin of the maximum-energy-recovery network used as a starting topology [K] (*common practice* value
for a first design; only its topology is kept)."""

MILP_SHARE = 0.15
"""Part of the remaining time given to each stagewise MILP solve [-]."""

MILP_CAP = 30.0
"""Longest limit of one stagewise MILP solve [s]."""


# --------------------------------------------------------------------------------------------- search

ACCEPT = 0.002
"""A kicked local optimum up to this much dearer than the walk's current one is accepted [-]."""

RESTART = 8
"""Rounds without a new best after which the walk returns to the best [-]."""

POLISH_WITHIN = 0.003
"""Topologies with stream splits whose isothermal-mixing cost is within this of the best found [-] have their
split fractions freed (:func:`heatloom.network.tac.polish.polish_splits`)."""

FINAL_RESERVE = 0.03
"""Part of the time limit kept from the search for that last polish [-]."""

PATIENCE = 400
"""Neighbours tried in a row without improvement before a local search stops [-]: small topologies are
searched exhaustively, large ones approximately (more kicks in the same time)."""

def _is_match(key) -> bool:
    return isinstance(key[0], (int, np.integer))


def _loads(sol: TopologySolution) -> dict:
    return {k: d for k, d in zip(sol.keys, sol.duties) if _is_match(k)}


def _utility_duties(sol: TopologySolution) -> dict:
    """("cool", i) / ("heat", j) → utility duty of that stream [kW]."""
    out: dict = {}
    for k, d in zip(sol.keys, sol.duties):
        if not _is_match(k):
            out[k[0], k[1]] = out.get((k[0], k[1]), 0.0) + d
    return out


def canonical(top: Topology, guess: dict | None = None) -> tuple[Topology, dict | None]:
    """Drop the stages with no match (renumbering the rest) and re-key a guess of loads to match."""
    used = sorted({k for (_, _, k) in top.matches})
    remap = {k: n for n, k in enumerate(used)}
    out = top.replace(stages=max(len(used), 1), matches=((i, j, remap[k]) for (i, j, k) in top.matches))
    if guess is None:
        return out, None
    g = {}
    for key, v in guess.items():
        if not _is_match(key):
            g[key] = v
        elif key[2] in remap:
            g[key[0], key[1], remap[key[2]]] = v
    return out, g


def unit_kinds(top: Topology) -> list:
    """The kind of every unit of a topology, as in :attr:`TacProblem.required`: ("x", i, j) per match (once
    per stage it is in), ("heat", j, level) per heater or preheater, ("cool", i, level) per cooler or
    precooler."""
    return [("x", i, j) for (i, j, _) in top.matches] + [("heat", *h) for h in (*top.heaters, *top.preheaters)] + \
        [("cool", *c) for c in (*top.coolers, *top.precoolers)]


def _without(top: Topology, keys) -> Topology:
    ks = set(keys)
    return top.replace(matches=(m for m in top.matches if m not in ks),
                       heaters=(h for h in top.heaters if ("heat", *h) not in ks),
                       coolers=(c for c in top.coolers if ("cool", *c) not in ks),
                       preheaters=(h for h in top.preheaters if ("preheat", *h) not in ks),
                       precoolers=(c for c in top.precoolers if ("precool", *c) not in ks))


class _Search:
    """Iterated local search over topologies, with a cache of refined topologies (one per process)."""

    def __init__(self, p: TacProblem, max_stages: int, seed, deadline: float, patience: int = PATIENCE,
                 polish: bool = True):
        self.p = p
        self.patience = patience
        self.max_stages = max_stages
        self.rng = np.random.default_rng(seed)
        self.deadline = deadline
        self.cache: dict = {}
        self.evals = 0
        self.timed_out = False
        self.polish = polish
        self.best_tac = float("inf")

    def out_of_time(self) -> bool:
        if time.monotonic() > self.deadline:
            self.timed_out = True
        return self.timed_out

    def evaluate(self, top: Topology, guess: dict | None = None, *, vertex: bool | None = None,
                 again: bool = False) -> TopologySolution | None:
        """The refined topology (cached), or None when it is infeasible or lacks a required match.  It is
        refined from ``guess`` (loads by unit key) and, with ``vertex`` (by default when there is no
        guess), from the LP vertex too; ``again`` refines it even when the cache has it."""
        top, guess = canonical(top, guess)
        key = top.key()
        if key in self.cache and not again:
            return self.cache[key]
        if self.p.required and self.p.missing(unit_kinds(top)):
            self.cache[key] = None
            return None
        self.evals += 1
        sol = solve_topology(self.p, top, [guess] if guess else [],
                             extra_vertex=not guess if vertex is None else vertex, deadline=self.deadline)
        if sol is not None:
            tiny = 1e-4 * self.p.scale   # ten times the least load the refinement allows
            small = [k for k, d in zip(sol.keys, sol.duties) if d <= tiny]
            if small:
                sol2 = self.evaluate(_without(top, small), _loads(sol))
                if sol2 is not None and sol2.tac < sol.tac:
                    sol = sol2
        if sol is not None and self.polish and sol.tac < self.best_tac * (1 + POLISH_WITHIN):
            sol = polish_splits(self.p, sol, deadline=self.deadline)
        if sol is not None:
            self.best_tac = min(self.best_tac, sol.tac)
        self.cache[key] = sol
        return sol

    def moves(self, top: Topology) -> list:
        p, K = self.p, top.stages
        nh, nc = len(p.hot_names), len(p.cold_names)
        grow = K < self.max_stages
        kinds = unit_kinds(top)
        mv: list = [("remove", m) for m in sorted(top.matches)
                    if ("x", m[0], m[1]) not in p.required or kinds.count(("x", m[0], m[1])) > 1]
        # a utility unit, at either end; the last one of a required kind stays
        for units, tag, kind in ((top.heaters, "heat", "heat"), (top.coolers, "cool", "cool"),
                                 (top.preheaters, "preheat", "heat"), (top.precoolers, "precool", "cool")):
            mv += [("remove", (tag, *u)) for u in sorted(units)
                   if (kind, *u) not in p.required or kinds.count((kind, *u)) > 1]
        for i in range(nh):
            for j in range(nc):
                if not p.can_match(i, j):
                    continue
                mv += [("add", (i, j, k)) for k in range(K) if (i, j, k) not in top.matches]
                if grow:
                    mv += [("add_new", (i, j, pos)) for pos in range(K + 1)]
        for m in sorted(top.matches):
            i, j, k = m
            mv += [("move", m, k2) for k2 in range(K) if k2 != k and (i, j, k2) not in top.matches]
            if grow:
                mv += [("move_new", m, pos) for pos in range(K + 1) if pos not in (k, k + 1)]
        mv += [("add_heater", (j, lv)) for j in range(nc) for lv in range(len(p.heat_levels))
               if (j, lv) not in top.heaters and p.heat_level_possible(j, lv)]
        mv += [("add_cooler", (i, lv)) for i in range(nh) for lv in range(len(p.cool_levels))
               if (i, lv) not in top.coolers and p.cool_level_possible(i, lv)]
        if len(p.heat_levels) >= SUPPLY_END_LEVELS:
            mv += [("add_preheater", (j, lv)) for j in range(nc) for lv in range(len(p.heat_levels))
                   if (j, lv) not in top.preheaters and p.heat_level_possible(j, lv)]
        if len(p.cool_levels) >= SUPPLY_END_LEVELS:
            mv += [("add_precooler", (i, lv)) for i in range(nh) for lv in range(len(p.cool_levels))
                   if (i, lv) not in top.precoolers and p.cool_level_possible(i, lv)]
        return mv

    def _new_load(self, i: int, j: int, utility: dict) -> float:
        """First guess of a new match's load: the utility it could save, else a fifth of the smaller duty."""
        saved = min(utility.get(("cool", i), 0.0), utility.get(("heat", j), 0.0))
        return saved if saved > 0 else 0.2 * min(self.p.hot_duty[i], self.p.cold_duty[j])

    def apply(self, top: Topology, loads: dict, move, utility: dict | None = None) -> tuple[Topology, dict]:
        """The topology after a move, and a guess of its loads (those of ``loads``, re-keyed)."""
        utility = utility or {}
        kind, arg = move[0], move[1]
        matches, heaters, coolers = set(top.matches), set(top.heaters), set(top.coolers)
        preheaters, precoolers = set(top.preheaters), set(top.precoolers)
        loads = dict(loads)
        K = top.stages
        if kind == "remove":
            if _is_match(arg):
                matches.discard(arg)
                loads.pop(arg, None)
            else:
                units = {"heat": heaters, "cool": coolers, "preheat": preheaters, "precool": precoolers}
                units[arg[0]].discard(arg[1:])
        elif kind == "add_heater":
            heaters.add(arg)
        elif kind == "add_cooler":
            coolers.add(arg)
        elif kind == "add_preheater":
            preheaters.add(arg)
        elif kind == "add_precooler":
            precoolers.add(arg)
        elif kind in ("add", "move"):
            if kind == "move":
                matches.discard(arg)
                q = loads.pop(arg, None)
                new = (arg[0], arg[1], move[2])
            else:
                new = arg
                q = self._new_load(arg[0], arg[1], utility)
            matches.add(new)
            if q is not None:
                loads[new] = q
        else:  # a new stage inserted at position pos
            if kind == "move_new":
                matches.discard(arg)
                q = loads.pop(arg, None)
                i, j, pos = arg[0], arg[1], move[2]
            else:
                i, j, pos = arg
                q = self._new_load(i, j, utility)

            def shift(k, pos=pos):
                return k + 1 if k >= pos else k

            matches = {(a, b, shift(k)) for (a, b, k) in matches}
            loads = {((key[0], key[1], shift(key[2])) if _is_match(key) else key): v for key, v in loads.items()}
            matches.add((i, j, pos))
            if q is not None:
                loads[i, j, pos] = q
            K += 1
        return Topology(K, frozenset(matches), frozenset(heaters), frozenset(coolers), frozenset(preheaters),
                        frozenset(precoolers)), loads

    def local_search(self, sol: TopologySolution) -> TopologySolution:
        """First improvement over the neighbours in random order, until ``patience`` of them in a row (or all)
        fail to improve."""
        improved = True
        while improved and not self.out_of_time():
            improved = False
            mv = self.moves(sol.topology)
            base = _loads(sol)
            utility = _utility_duties(sol)
            for count, idx in enumerate(self.rng.permutation(len(mv))):
                if self.out_of_time() or count >= self.patience:
                    break
                cand = self.evaluate(*self.apply(sol.topology, base, mv[idx], utility))
                if cand is not None and cand.tac < sol.tac - 1e-9 * abs(sol.tac):
                    sol = cand
                    improved = True
                    break
        return sol

    def kick(self, sol: TopologySolution, strength: int) -> TopologySolution:
        """A few random moves at once, refined; the incumbent if twenty tries find nothing feasible."""
        for _ in range(20):
            top, loads = sol.topology, _loads(sol)
            for _ in range(strength):
                # a kind of move first (remove, add, move...), then one of that kind: adds would dominate
                by_kind: dict = {}
                for m in self.moves(top):
                    by_kind.setdefault(m[0].split("_")[0], []).append(m)
                kinds = sorted(by_kind)
                mv = by_kind[kinds[self.rng.integers(len(kinds))]]
                top, loads = self.apply(top, loads, mv[self.rng.integers(len(mv))])
            cand = self.evaluate(top, loads)
            if cand is not None:
                return cand
        return sol

    def iterate(self, sol: TopologySolution, rounds: int, polished: bool = False) -> TopologySolution:
        """``rounds`` kicks, each followed by a local search, from a local optimum of ``sol``.

        The walk kicks its current solution and moves to the new local optimum when it costs less than
        the current one plus ``ACCEPT`` (relative); after ``RESTART`` rounds without a new best it returns
        to the best.
        """
        best = current = sol if polished else self.local_search(sol)
        stuck = 0
        for _ in range(rounds):
            if self.out_of_time():
                break
            # kicks grow stronger while no new best is found: 1, 1, 2, 2, ... moves, back to 1 at each restart
            cand = self.local_search(self.kick(current, 1 + (stuck % RESTART) // 2))
            if cand.tac < best.tac - 1e-9 * abs(best.tac):
                best = current = cand
                stuck = 0
                continue
            stuck += 1
            if cand.tac < current.tac * (1 + ACCEPT):
                current = cand
            if stuck % RESTART == 0:
                current = best
        return best


def _run_start(args) -> tuple[TopologySolution, int, bool]:
    """One start of the search in a worker process: (best solution, refinements, timed out)."""
    p, top, loads, seed, rounds, deadline, max_stages, polished = args
    with numeric_threads(1):   # the same arithmetic in a worker and in this process
        s = _Search(p, max_stages, seed, deadline)
        sol = s.evaluate(top, loads)
        if sol is None:
            sol = s.evaluate(top)
        if sol is None:
            return None, s.evals, s.timed_out
        best = s.iterate(sol, rounds, polished and sol.topology == top)
    return best, s.evals, s.timed_out


# ------------------------------------------------------------------------------------------- design

ROUNDS_PER_EPOCH = 4
"""Kicks of the iterated local search between two reports of progress [-]."""


def _mer_start(search: _Search, top: Topology, loads: dict, notes: list) -> TopologySolution | None:
    """The MER network's topology refined from the LP vertex; with streams of several segments, where that
    finds no feasible loads, from the MER network's own duties; when none keep the approaches, the same
    with a heater and a cooler at the end of every stream a utility can serve alone
    (:func:`_fallback_topology`; the refinement drops the ones it does not need), with a note.

    Its own duties matter with streams of several segments, whose approaches are not linear in the loads:
    the vertex can be no feasible start there.  They are not a second start where the vertex gives one:
    on the shipped solvent-recovery case that took the time of two MILP iterations (120 s: 154,522 per
    year and 12 units against 151,995 and 10), and with streams of one segment it led the aromatics plant
    to another basin (0.1 % dearer in 300 s); with one segment an infeasible vertex proves the topology
    infeasible.  The utility units matter where the MER design passes hot oil through several heaters in
    series (a header above :data:`heatloom.defaults.TICK_OFF_ABOVE` streams): a heater of the TAC model
    takes the utility over its whole range, so a heater that raised a stream from 275 to 295 °C with oil
    330 → 327 °C cannot be laid out as one, and the heat it leaves to process exchangers needs somewhere
    else to go.
    """
    p = search.p
    guess = loads if p.segmented else None
    sol = search.evaluate(top)
    if sol is None and guess is not None:
        sol = search.evaluate(top, guess, again=True)
    if sol is not None:
        return sol
    ends = _fallback_topology(p)
    wider = top.replace(heaters=top.heaters | ends.heaters, coolers=top.coolers | ends.coolers)
    if wider.key() == top.key():
        return None
    sol = search.evaluate(wider, guess, vertex=True)
    if sol is not None:
        notes.append("no loads of the MER network's topology keep every approach in the stagewise form (a "
                     "heater or cooler of the MER network may use only part of its utility's range); it "
                     "started the search with a heater and a cooler added at the end of every stream a "
                     "utility can serve alone")
    return sol


def _fallback_topology(p: TacProblem) -> Topology:
    """No exchanger: every stream served by the utility levels that can serve it alone."""
    heaters = set()
    for j in range(len(p.cold_names)):
        ok = [lv for lv, u in enumerate(p.heat_levels)
              if p.heat_level_possible(j, lv) and u.target_temperature - p.need(None, j) > p.cold_in[j]]
        heaters.update((j, lv) for lv in ok[-1:])
    coolers = set()
    for i in range(len(p.hot_names)):
        ok = [lv for lv, u in enumerate(p.cool_levels) if p.cool_level_possible(i, lv)]
        coolers.update((i, lv) for lv in ok[-1:])
    return Topology(1, frozenset(), frozenset(heaters), frozenset(coolers))


def _unserved(p: TacProblem) -> str:
    """Words naming the streams that no utility level may serve at their end in the TAC model, and why
    (empty when every stream has one)."""
    words = []
    for names, ends, levels, ok, kind, where in (
            (p.cold_names, p.cold_in, p.heat_levels, p.heat_level_possible, "cold", "above"),
            (p.hot_names, p.hot_in, p.cool_levels, p.cool_level_possible, "hot", "below")):
        for s, name in enumerate(names):
            if not any(ok(s, level) for level in range(len(levels))):
                each = ", ".join(f"'{u.name}' {u.supply_temperature:g} → {u.target_temperature:g} °C" for u in levels)
                words.append(f"{kind} stream '{name}' (supply {ends[s]:g} °C): the TAC model runs every "
                             f"{'heater' if kind == 'cold' else 'cooler'} over its utility's whole range, so the "
                             f"utility must enter and leave {where} the stream's supply temperature by the approach "
                             f"({each})")
    if not words:
        return ""
    return ("; " + "; ".join(words) + ". MER design (--mode mer) takes a non-isothermal utility over parts of its "
            "range (piped through its units in series); or give a utility level that can serve these streams")


ISOTHERMAL_NOTE = "isothermal mixing: the branches of a split stream leave a stage at one temperature"
NONISOTHERMAL_NOTE = ("stream splits with free flow fractions: the branches of a split stream may leave a stage at "
                      "different temperatures before they mix (non-isothermal mixing)")


def design_tac(streams: StreamTable, utilities: Sequence[Utility] | None = None, *,
               costs: CostSettings | None = None, emat: float = defaults.EMAT, stages: int | None = None,
               time_limit: float = 120.0, seed: int = 0, starts: int = 2, rounds: int = 40,
               workers: int | None = None, milp_iterations: int = 3, solver: str | None = None,
               default_film_coefficient: float | None = None,
               progress: Callable[[float, int, int], None] | None = None, restructure: bool = False,
               forbidden: Iterable[tuple[str, str]] = (), required: Iterable[tuple[str, str]] = (),
               branch_overshoot: bool = False) -> Network:
    """A network of low total annual cost: stagewise MILP topologies refined against the exact cost.

    Parameters
    ----------
    streams : StreamTable
        Process streams with film coefficients, of one constant CP each or of several segments
        (:mod:`heatloom.network.tac.profiles`: the approach is kept at every segment break inside a unit,
        areas are summed segment by segment); a stream's ΔTmin contribution,
        where given, is a lower bound on the approach of its units (with the other side's, see
        :meth:`heatloom.network.tac.nlp.TacProblem.need`).
    utilities : sequence of Utility, optional
        Utility levels with prices [money/(kW·year)] and film coefficients; when omitted, the assumed
        utilities of :func:`heatloom.pinch.utilities.ideal_utilities` (stated in the notes).
    costs : CostSettings, optional
        Cost laws and annualisation; the defaults of :mod:`heatloom.defaults` when omitted.
    emat : float
        Exchanger minimum approach temperature every unit keeps at both ends [K] (default 1 K).
    stages : int, optional
        Stages K of the MILP [-]; max(#hot, #cold) when omitted.  The search may use up to 2K.
    time_limit : float
        Wall-clock limit of the whole design [s]: every solve inside (the MER start, the stagewise MILPs)
        is given its share of what is left (:class:`heatloom.network.solvers.Budget`), and the search
        stops when it is reached; the notes say which solves hit their share.  A solve that stops without
        a solution falls back to the next start, with a note; it never aborts the run.
    seed : int
        Seed of the search's random streams: same inputs, seed, starts and rounds give the same network
        when the time limit is not reached.
    starts : int
        Independent searches run side by side [-], from the best distinct starting topologies.
    rounds : int
        Kicks of the iterated local search per start [-].
    workers : int, optional
        Local processes [-]; min(starts, CPU count) when omitted; 1 runs everything in this process.
    milp_iterations : int
        MILP solves with updated area-cost estimates [-].
    solver : str, optional
        "highs" or "cbc" (see :mod:`heatloom.network.solvers`).
    default_film_coefficient : float, optional
        [kW/(m²·K)] assumed where a stream or utility has none.
    progress : callable, optional
        Called as ``progress(best_tac, done, total)`` after the starting topologies and after each epoch of
        the search (``done`` of ``total`` epochs).
    restructure : bool
        Give the last :data:`RESTRUCTURE_SHARE` of the time limit to a search beyond the stagewise form
        (:func:`heatloom.network.tac.layout_search.restructure`: units moved anywhere along their streams, a
        utility unit onto a split branch beside an exchanger; problems of up to :data:`RESTRUCTURE_STREAMS`
        streams of one segment each), one search per worker, and all the time left once the stagewise
        search has found nothing cheaper for :data:`RESTRUCTURE_STALL` of the time limit.  Its network is
        returned when it is cheaper.
    forbidden : iterable of (str, str)
        (hot, cold) name pairs never matched, in any stage or place; a name may be a utility's (forbid
        steam on a stream).
    required : iterable of (str, str)
        (hot, cold) pairs matched in at least one unit (a utility's: that utility serves the stream).
        Every topology the search keeps has them, each carrying at least
        :data:`heatloom.network.tac.problem.REQUIRED_SHARE` of the most it could carry alone
        (:meth:`TacProblem.least_load`); the notes give the duty of each.
    branch_overshoot : bool
        Let the branches of a split stream pass the stream's target temperature before they mix back to it
        (a cold branch hotter than the target, a hot branch colder; :meth:`TacProblem.branch_limits`): only
        the units' approaches limit them.  Off by default: every branch stays inside its stream's range.  The
        notes name every branch of the result that passes its target, with the usual cautions
        (:func:`heatloom.network.tac.build.overshoot_notes`).

    Returns
    -------
    Network
        Passes :func:`check_network` with ΔTmin = EMAT; ``total_annual_cost`` is recomputed from the
        network's own temperatures with the exact LMTD.

    Raises
    ------
    InputError
        Bad EMAT, budgets, film coefficients, missing utilities.
    InfeasibleError
        No network found (no utility can serve some stream, or none found with the required matches).

    Examples
    --------
    Invented data: one hot and one cold stream, steam and cooling water.

    >>> from heatloom.model import UtilityKind
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> u = [Utility("steam", 180, 179, 120.0, UtilityKind.HOT, 3.0), Utility("water", 15, 25, 10.0, None, 2.0)]
    >>> net = design_tac(s, u, emat=5.0, starts=1, rounds=0, milp_iterations=1)
    >>> [(e.hot, e.cold) for e in net.exchangers], len(net.coolers)
    ([('H', 'C')], 1)
    >>> bool(net.total_annual_cost == net.capital_cost + net.operating_cost)
    True
    """
    from ...pinch.utilities import ideal_utilities

    for value, what in ((starts, "starts"), (rounds, "rounds"), (milp_iterations, "MILP iterations")):
        if not isinstance(value, (int, np.integer)) or isinstance(value, bool) or value < (1 if what == "starts" else 0):
            raise InputError(f"{what} must be a whole number >= {1 if what == 'starts' else 0}, got {value!r}")
    if not (time_limit > 0) or not np.isfinite(time_limit):
        raise InputError(f"time limit must be a finite number of seconds > 0, got {time_limit!r}")
    budget = Budget(float(time_limit))
    beyond = bool(restructure) and len(streams) <= RESTRUCTURE_STREAMS and \
        all(len(s.segments) == 1 for s in streams)
    reserve = RESTRUCTURE_SHARE * float(time_limit) if beyond else 0.0
    # the search's deadline; then the last polish, then (when asked for) the search beyond the stagewise form
    deadline = budget.deadline - FINAL_RESERVE * float(time_limit) - reserve
    notes: list[str] = [f"EMAT {emat:g} K at both ends of every unit (no ΔTmin)"]
    if utilities is None:
        utilities = ideal_utilities(streams, emat)
        hu, cu = utilities
        notes.append(f"no utilities given: assumed an isothermal hot utility at {hu.supply_temperature:g} °C and an "
                     f"isothermal cold utility at {cu.supply_temperature:g} °C with default prices and film "
                     "coefficients; give --utilities FILE")
    costs = costs or CostSettings()
    forbidden, required = match_rules(streams, utilities, forbidden, required)
    rules = MatchRules(tuple(sorted(forbidden)), tuple(sorted(required)))
    p = make_problem(streams, utilities, costs, emat, default_film_coefficient=default_film_coefficient,
                     rules=rules, branch_overshoot=branch_overshoot)
    least = {p.unit_sides(kind): p.least_load(kind) for kind in p.required}
    if rules:
        notes.append(rules.describe() + ": " + " and ".join(
            ["no topology with a forbidden match is tried"] * bool(forbidden)
            + ["every topology kept has the required matches"] * bool(required)))
    if p.has_contributions:
        notes.append("ΔTmin contributions of the stream table kept as lower bounds on the approach: each unit "
                     "keeps the larger of EMAT and the sum of its two sides' contributions (EMAT/2 for a side "
                     "without one)")
    if default_film_coefficient is not None:
        notes.append(f"film coefficient {default_film_coefficient:g} kW/(m²·K) assumed where none was given")
    if branch_overshoot:
        notes.append("branch overshoot allowed: the branches of a split stream may pass the stream's target "
                     "temperature before they mix back to it (only the units' approaches limit them)" +
                     ("; not on this problem, whose streams of several segments mix their split branches at one "
                      "temperature" if p.segmented else ""))
    K = int(stages) if stages is not None else max(len(p.hot_names), len(p.cold_names))
    if K < 1:
        raise InputError(f"stages must be >= 1, got {stages!r}")
    max_stages = 2 * K
    seq = np.random.SeedSequence(int(seed))
    search = _Search(p, max_stages, seq.spawn(1)[0], deadline)
    candidates: list[TopologySolution] = []
    sources: list[str] = []

    def keep(sol, label):
        if sol is not None and all(sol.topology.key() != c.topology.key() for c in candidates):
            candidates.append(sol)
            sources.append(label)

    keep(search.evaluate(_fallback_topology(p)), "utilities only")
    # (a) the maximum-energy-recovery network's topology (none, with a note, when it cannot be had in time)
    mer = mer_network(streams, max(MER_DT_MIN, emat), utilities, budget, costs=costs, solver=solver,
                      default_film_coefficient=default_film_coefficient, forbidden=forbidden, required=required)
    start = start_from_network(p, mer) if mer is not None else None
    if start is not None:
        keep(_mer_start(search, *start, notes), f"MER network at ΔTmin {max(MER_DT_MIN, emat):g} K")
    epochs = max(1, -(-rounds // ROUNDS_PER_EPOCH)) if rounds else 0
    n_workers = workers if workers is not None else min(starts, os.cpu_count() or 1)
    pool = local_pool(n_workers) if n_workers > 1 and starts > 1 and epochs else None

    def job(s, c, epoch):
        todo = min(ROUNDS_PER_EPOCH, rounds - epoch * ROUNDS_PER_EPOCH)
        return (p, c.topology, _loads(c), np.random.SeedSequence([int(seed), s, epoch]), todo, deadline, max_stages,
                epoch > 0)

    evals, timed_out = 0, False
    handed_over = None   # when the stagewise search handed its time to the search beyond it [s from the start]
    try:
        # with local processes, start 0 searches from the best topology so far while the MILPs are solved
        # (start 0 begins there in any case, so that the result does not depend on the number of processes)
        early = None
        first = min(candidates, key=lambda c: c.tac) if candidates else None
        if pool is not None and first is not None:
            early = (first, pool.submit(_run_start, job(0, first, 0)))
        # (b) the stagewise MILP with linearised area costs, estimates updated from the refined networks
        est: dict = {}
        for c in candidates:
            est.update(unit_estimates(p, c))
        seen = set()
        for it in range(milp_iterations):
            if deadline - time.monotonic() < 0.3 * time_limit:
                break
            prob, read = stagewise_milp(p, K, est, name=f"tac stagewise MILP {it + 1}")
            label = f"TAC stagewise MILP, iteration {it + 1}"
            report = budget.solve(prob, solver, fraction=MILP_SHARE, cap=MILP_CAP, name=label)
            if report is None or not report.has_solution:
                if report is not None:
                    budget.notes.append(f"'{label}' gave no topology ({report.status.value}): the search "
                                        "went on from the other starting topologies")
                break
            top = read()
            if top.key() in seen:
                break
            seen.add(top.key())
            sol = search.evaluate(top)
            keep(sol, f"MILP iteration {it + 1}")
            if sol is None:   # no new estimates: the next MILP would be this one again
                break
            est.update(unit_estimates(p, sol))
            cheapest = min(c.tac for c in candidates)
            if report.status is SolveStatus.TIME_LIMIT and report.objective is not None and \
                    report.objective > cheapest and it + 1 < milp_iterations:
                budget.notes.append(
                    f"'{label}' stopped at its share with a topology its own estimate puts at "
                    f"{report.objective:,.0f} per year, above the cheapest network already found ({cheapest:,.0f}): "
                    "no further MILP iterations, their time went to the search")
                break
        if not candidates:
            if required:
                raise InfeasibleError(f"no network found with the required matches {', '.join(f'{h}:{c}' for h, c in sorted(required))} "
                                      f"keeping EMAT {emat:g} K within the time limit (starting topologies: the MER "
                                      "network and the stagewise MILPs; see the notes of the solves)")
            raise InfeasibleError(f"no network keeps EMAT {emat:g} K: some stream cannot be served by any utility"
                                  + (f" it may use (forbidden: {', '.join(f'{h}:{c}' for h, c in sorted(forbidden))})"
                                     if forbidden else "") + _unserved(p))
        order = sorted(range(len(candidates)), key=lambda n: candidates[n].tac)
        # start 0 from ``first`` (already under way), the others from the cheapest of the rest
        pool_order = ([first] if first is not None else []) + \
            [candidates[n] for n in order if candidates[n] is not first]
        current = [pool_order[s % len(pool_order)] for s in range(starts)]
        best = min(current, key=lambda s: s.tac)
        if progress is not None:
            progress(best.tac, 0, epochs)
        evals, timed_out = search.evals, search.timed_out
        last_gain = time.monotonic()   # when the search last found a cheaper network
        for epoch in range(epochs):
            if time.monotonic() > deadline and not (epoch == 0 and early is not None):
                timed_out = True
                break
            if beyond and time.monotonic() - last_gain > RESTRUCTURE_STALL * time_limit:
                handed_over = budget.elapsed
                break
            pending = []
            for s, c in enumerate(current):
                if epoch == 0 and s == 0 and early is not None:
                    pending.append(early[1])
                else:
                    pending.append(pool.submit(_run_start, job(s, c, epoch)) if pool is not None else None)
            results = [f.result() if f is not None else _run_start(job(s, c, epoch))
                       for s, (f, c) in enumerate(zip(pending, current))]
            for s, (sol, n, out) in enumerate(results):
                evals += n
                timed_out |= out
                if sol is not None and sol.tac < current[s].tac:
                    current[s] = sol
            cheapest = min(current, key=lambda s: s.tac)
            if cheapest.tac < best.tac * (1 - 1e-9):
                last_gain = time.monotonic()
            best = cheapest
            if progress is not None:
                progress(best.tac, epoch + 1, epochs)
    finally:
        if pool is not None:
            pool.shutdown(cancel_futures=True)
    wall = budget.elapsed
    notes += budget.summary()
    notes.append(f"TAC search: {len(candidates)} starting topologies ({', '.join(sources)}); {starts} start(s) × "
                 f"{rounds} rounds of iterated local search, seed {seed}; {evals} topologies refined against the "
                 f"exact cost; {wall:.1f} s")
    if timed_out:
        notes.append(f"the time limit of {time_limit:g} s stopped the search: the network is the best found in time "
                     "and may differ from run to run (raise --time-limit for a reproducible result)")
    if handed_over is not None:
        notes.append(f"the stagewise search found nothing cheaper for {RESTRUCTURE_STALL * time_limit:g} s and handed "
                     f"the rest of the time limit to the search beyond the stagewise form at {handed_over:.0f} s "
                     "(the network depends on the time it had)")
    notes.append(NONISOTHERMAL_NOTE if best.fractions else ISOTHERMAL_NOTE)
    notes.append("heuristic search: the lowest cost found, not a proven optimum")
    notes.append(costs.describe())
    if p.segmented:
        notes.append("streams of several segments: loads and stage temperatures in enthalpy coordinates, the "
                     "approach kept at both ends and at every segment break inside each unit, areas summed "
                     "interval by interval between the breaks; split streams mix isothermally")
    notes.append("Areas: counter-current, exact LMTD, U from 1/U = 1/h_hot + 1/h_cold (clean surfaces, no fouling "
                 "allowance)" + ("; streams of several segments sized interval by interval." if p.segmented else "."))
    # the best network that passes the final check (never expected to fail; if it does, the next best is kept)
    failures: list[str] = []
    ranked = sorted({id(c): c for c in (best, *current, *candidates)}.values(), key=lambda c: c.tac)
    ranked = polish_cheapest(p, ranked, budget.deadline - reserve)
    net = None
    if beyond:
        net = beyond_stagewise(p, ranked[0], streams, utilities, costs, notes, budget, seed, workers=n_workers,
                               to_deadline=handed_over is not None)
        if net is not None:   # a layout's split fractions are free: its branches mix at their own temperatures
            net = _with_mixing_note(net, any(f < 1.0 for _, _, _, f, _, _ in process_sides(net)))
        if net is not None:
            try:
                net = keeping_rules(net, forbidden, required, least)
            except InfeasibleError as exc:
                failures.append(str(exc))
                net = None
    for sol in ranked if net is None else ():
        try:
            extra = [f"the {len(failures)} cheaper network(s) found failed the final check ({'; '.join(failures)}); "
                     "the cheapest that passes is given"] if failures else []
            net = keeping_rules(network_from_solution(p, sol, streams, utilities, costs, notes=[*notes, *extra],
                                                      solves=budget.reports), forbidden, required, least)
            # the note of this solution's mixing (the final polish may have freed the fractions of a network
            # whose search mixed isothermally, and the cheapest may fail the check)
            net = _with_mixing_note(net, bool(sol.fractions))
            break
        except (InfeasibleError, InputError) as exc:   # a failed check, or a unit the sizing refuses
            failures.append(str(exc))
    if mer is not None and (net is None or mer.total_annual_cost < net.total_annual_cost * (1 - 1e-9)):
        return _mer_as_result(p, mer, net, streams, utilities, notes, budget, forbidden, required)
    if net is None:
        raise InfeasibleError(f"no network found passes the final check: {failures[0]}")
    beyond_target = overshoot_notes(net, streams)
    if branch_overshoot and not beyond_target:
        beyond_target = ["no split branch of this network passes its stream's target"]
    return replace(net, notes=(*net.notes, *beyond_target)) if beyond_target else net


def _with_mixing_note(net: Network, nonisothermal: bool) -> Network:
    """The network with the mixing note (:data:`ISOTHERMAL_NOTE` or :data:`NONISOTHERMAL_NOTE`) that fits it, in
    the place of the one the search's notes gave."""
    want = NONISOTHERMAL_NOTE if nonisothermal else ISOTHERMAL_NOTE
    return replace(net, notes=tuple(want if n in (ISOTHERMAL_NOTE, NONISOTHERMAL_NOTE) else n for n in net.notes))


def _mer_as_result(p: TacProblem, mer: Network, net: Network | None, streams, utilities, notes, budget,
                   forbidden, required) -> Network:
    """The starting MER network as the result, when it costs less than every stagewise network found: its
    utility units may sit where the stagewise form cannot put them (a heater between two process exchangers
    on a cold stream, fed by a cheaper, cooler utility level; the stagewise form has utility units at the
    stream ends only, supply or target).  Checked with EMAT and the contributions."""
    than = (f"less than the cheapest stagewise network the search found ({net.total_annual_cost:,.0f})"
            if net is not None else "and no stagewise network found passed the final check")
    why = (f"the starting MER network (ΔTmin {mer.dt_min:g} K) costs {mer.total_annual_cost:,.0f} "
           f"{mer.currency}/year, {than}: it is given as designed, with its ΔTmin kept in every unit (its "
           "utility units may sit where the stagewise form, with utility units at the supply and target ends of "
           "the streams only, cannot put them: between two process exchangers on a stream)")
    kept = [n for n in notes if not n.startswith(("isothermal mixing", "stream splits with free flow fractions"))]
    result = replace(mer, dt_min=p.emat, notes=(*kept, why), solves=tuple(budget.reports))
    check_network(result, streams, utilities, dt_min=p.emat, contributions=True)
    return keeping_rules(result, forbidden, required)   # the MER design's own duties: no least load
