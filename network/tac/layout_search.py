"""The search over layouts beyond the stagewise form: moves, kicks, random restarts (:func:`restructure`).

A layout (:class:`heatloom.network.tac.branches.Layout`) is refined by the fixed-structure NLP of
:func:`heatloom.network.tac.branches.solve_layout`; this module searches over layouts: a unit moved to any
other place on one of its streams or removed (:func:`layout_moves`), a unit added anywhere
(:func:`layout_additions`), kicks of two random moves, and restarts from random layouts
(:func:`random_layout`) when the kicks stall.  :func:`beyond_stagewise` runs it from the best stagewise
network of :func:`heatloom.network.tac.search.design_tac` and returns its network when cheaper.
"""

from __future__ import annotations

import time

import numpy as np

from ... import defaults
from ...errors import InfeasibleError, InputError
from ...model.costs import CostSettings
from ...tasks import local_pool, numeric_threads
from ..structure import Network
from .branches import (
    Layout,
    LayoutSolution,
    layout_from_solution,
    layout_stages,
    network_from_layout,
    representable,
    solve_layout,
)
from .nlp import TopologySolution
from .problem import TacProblem

__all__ = ["restructure", "layout_moves", "layout_additions", "random_layout", "beyond_stagewise",
           "RESTRUCTURE_SHARE", "RESTRUCTURE_STALL", "RESTRUCTURE_STREAMS", "RESTRUCTURE_PATIENCE", "RESTRUCTURE_RESTART",
           "RESTRUCTURE_NEW_SHARE"]

RESTRUCTURE_SHARE = defaults.RESTRUCTURE_SHARE
"""Part of the time limit :func:`heatloom.network.tac.search.design_tac` keeps for the search beyond the
stagewise form when ``restructure`` is asked for [-]."""

RESTRUCTURE_STALL = 0.6
"""Part of the time limit after which a stagewise search that has found nothing cheaper hands the rest of
its time to the search beyond the stagewise form when ``restructure`` is asked for [-]: on Yee & Grossmann
the stagewise search finds 79,233 per year at once and nothing more in the 230 s it has, while the layout
search's random restarts find cheaper networks with more time; on the aromatics plant it found a cheaper
stagewise network after 166 s without one (at 300 s: 25.7 s, then 192 s), and 0.25 handed over before it
(one run each; set from these, not tuned further)."""

RESTRUCTURE_STREAMS = defaults.RESTRUCTURE_STREAMS
"""Largest problem (process streams) given that search: each layout is a dense NLP over all units'
duties and fractions [-]."""

RESTRUCTURE_PATIENCE = 400
"""Layouts tried in a row without improvement before a descent of :func:`restructure` stops [-]."""

RESTRUCTURE_RESTART = 3
"""Kicks in a row that find nothing cheaper after which :func:`restructure` starts again from a random
layout (:func:`random_layout`) [-]: on Yee & Grossmann the cheapest basin found (78,172 per year, two units in
series on a branch) lies many moves from the stagewise optimum (78,704)."""

RESTRUCTURE_NEW_SHARE = 0.05
"""Starting duty of a unit a kick of :func:`restructure` adds, as a share of the smaller duty of its
streams [-]."""


def _normal(path, bypass: bool = True) -> tuple:
    """Drop empty blocks and branches (with ``bypass``, keeping one bypass in a split that still has two
    units' branches or one unit's branch and the bypass; without, the emptied branch goes and the rest of
    the split carries the whole flow), and turn a one-branch block of several units into units in series."""
    out = []
    keep_bypass = bypass
    for block in path:
        full = [tuple(br) for br in block if br]
        bypass = keep_bypass and len(full) < len(block)
        if not full:
            continue
        if len(full) == 1 and not bypass:
            out += [((u,),) for u in full[0]]
        else:
            out.append(tuple(full) + (((),) if bypass else ()))
    return tuple(out)


def _places(path) -> list:
    """Every place a unit can be put on a path: a new block before each block and at the end, the end or
    any place inside each branch of a split, or a new branch of any block (a single unit becomes a split)."""
    out = [("block", b) for b in range(len(path) + 1)]
    for b, block in enumerate(path):
        if len(block) > 1:
            out += [("in", b, r, k) for r, br in enumerate(block) for k in range(len(br) + 1)]
        out.append(("branch", b))
    return out


def _put(path, x, place) -> tuple:
    path = [list(list(br) for br in block) for block in path]
    if place[0] == "block":
        path.insert(place[1], [[x]])
    elif place[0] == "in":
        path[place[1]][place[2]].insert(place[3], x)
    else:
        path[place[1]].append([x])
    return _normal(path)


def _take(path, x, bypass: bool = True) -> tuple:
    return _normal([[[y for y in br if y != x] for br in block] for block in path], bypass)


def _sides(key) -> list[tuple[str, int]]:
    if key[0] == "x":
        return [("hot", key[1]), ("cold", key[2])]
    return [("hot", key[1])] if key[0] == "cool" else [("cold", key[1])]


def layout_moves(lay: Layout) -> list[Layout]:
    """Every layout one move away: a unit moved to another place on one of its streams, or removed.  A unit
    that leaves a branch of its own empty leaves either a bypass there or a split without that branch (a
    split of two becomes the other branch's units in series)."""
    out = []
    for x, key in enumerate(lay.units):
        for side, s in _sides(key):
            paths = list(lay.hot if side == "hot" else lay.cold)
            for rest in dict.fromkeys((_take(paths[s], x), _take(paths[s], x, bypass=False))):
                for place in _places(rest):
                    new = list(paths)
                    new[s] = _put(rest, x, place)
                    out.append(Layout(lay.units, tuple(new), lay.cold) if side == "hot" else
                               Layout(lay.units, lay.hot, tuple(new)))
        keep = [k for k in range(len(lay.units)) if k != x]
        ren = {k: n for n, k in enumerate(keep)}

        def drop(paths, bypass, x=x, ren=ren):
            return tuple(_normal([[[ren[y] for y in br if y != x] for br in block] for block in path], bypass)
                         for path in paths)
        out += dict.fromkeys(Layout(tuple(lay.units[k] for k in keep), drop(lay.hot, bypass), drop(lay.cold, bypass))
                             for bypass in (True, False))
    return out


def layout_additions(p: TacProblem, lay: Layout) -> list[Layout]:
    """Every layout with one unit more: an exchanger of a pair that may match (:meth:`TacProblem.can_match`)
    or a heater or cooler of any utility level not forbidden, at every place on its streams (:func:`_places`).  The new
    unit is the last of ``units``."""
    n = len(lay.units)
    out = []
    for i in range(len(p.hot_names)):
        for j in range(len(p.cold_names)):
            if not p.can_match(i, j):
                continue
            for ph in _places(lay.hot[i]):
                for pc in _places(lay.cold[j]):
                    hot, cold = list(lay.hot), list(lay.cold)
                    hot[i], cold[j] = _put(lay.hot[i], n, ph), _put(lay.cold[j], n, pc)
                    out.append(Layout(lay.units + (("x", i, j),), tuple(hot), tuple(cold)))
    for kind, paths, levels in (("cool", lay.hot, p.cool_levels), ("heat", lay.cold, p.heat_levels)):
        for s, path in enumerate(paths):
            for level in range(len(levels)):
                if (kind, s, level) in p.forbidden:
                    continue
                for place in _places(path):
                    new = list(paths)
                    new[s] = _put(path, n, place)
                    out.append(Layout(lay.units + ((kind, s, level),), tuple(new), lay.cold) if kind == "cool"
                               else Layout(lay.units + ((kind, s, level),), lay.hot, tuple(new)))
    return out


def _start(lay: Layout, parent: LayoutSolution, new_duty: float = 0.1) -> tuple[np.ndarray, np.ndarray]:
    """A starting point for a neighbour: the parent's duties (re-indexed by unit; ``new_duty`` [kW] for a
    unit the parent lacks), and each branch's share of its split's duty as its fraction (a bypass one
    tenth), as with isothermal mixing."""
    old = {}
    for k, key in enumerate(parent.layout.units):
        old.setdefault(key, []).append(parent.duties[k])
    duties = np.array([old[key].pop(0) if old.get(key) else new_duty for key in lay.units])
    fr = []
    for sd, s, b in lay.splits():
        share = np.array([sum(duties[x] for x in br) for br in (lay.hot if sd == "hot" else lay.cold)[s][b]])
        share = np.where(share > 0, share, 0.1 * max(share.sum(), 1e-9))
        fr += list(share / share.sum())
    return duties, np.array(fr)


def _usable(p: TacProblem, lay: Layout) -> bool:
    """A layout the search may keep: some unit, every required one (:attr:`TacProblem.required`),
    representable, with one order of the units along every stream (see :func:`restructure`)."""
    return bool(lay.units) and not (p.required and p.missing(lay.units)) and representable(lay) \
        and layout_stages(lay, heads_together=False) is not None


def restructure(p: TacProblem, sol: LayoutSolution, deadline: float, *, seed=None,
                patience: int = RESTRUCTURE_PATIENCE, stats: dict | None = None,
                kicks_until: float | None = None) -> LayoutSolution:
    """Iterated local search over layouts from ``sol`` until ``deadline`` (a ``time.monotonic`` reading
    [s]); returns the cheapest solution found.

    Descent: first improvement over the moves of :func:`layout_moves` in random order (``seed``), each
    layout solved from the parent's duties with duty-share, equal and random fractions, until no move
    improves or ``patience`` moves in a row fail.  Kick (while time is left, and no kick begins after
    ``kicks_until`` when given): two random moves from the
    current layout, either of which may add a unit (:func:`layout_additions`, started at
    :data:`RESTRUCTURE_NEW_SHARE` of the smaller duty of its streams), then a descent; its result replaces
    the current layout when cheaper.  After :data:`RESTRUCTURE_RESTART` kicks in a row without a cheaper
    layout the search starts again from a random layout (:func:`random_layout`) and kicks from there; the
    cheapest layout of all is returned.  No refinement is started that would end past the deadline if it took as long
    as the longest so far.  ``stats``, when given, receives the number of layouts refined ("layouts"),
    of kicks ("kicks"), of restarts ("restarts") and whether the deadline stopped the search ("timed_out").  Layouts a
    :class:`heatloom.network.structure.Network` cannot carry are skipped: a split with a bypass
    (:func:`~heatloom.network.tac.branches.representable`), or units that cannot be put in one order along every
    stream (:func:`~heatloom.network.tac.branches.layout_stages` without ``heads_together`` gives None).
    """
    stats = {} if stats is None else stats
    stats.update(layouts=0, kicks=0, restarts=0, timed_out=False)
    rng = np.random.default_rng(seed)
    solved: dict = {sol.layout.key(): sol}
    longest = [0.0]   # the longest refinement so far [s]: none is started that would end past the deadline

    def room() -> bool:
        if time.monotonic() + longest[0] > deadline:
            stats["timed_out"] = True
            return False
        return True

    def solve(lay: Layout, parent: LayoutSolution) -> LayoutSolution | None:
        key = lay.key()
        if key not in solved:
            new = RESTRUCTURE_NEW_SHARE * min(_stream_duties(p, lay.units[-1]))
            d0, f0 = _start(lay, parent, new)
            f1 = np.array([rng.uniform(0.2, 0.8) for _ in f0])
            stats["layouts"] += 1
            began = time.monotonic()
            solved[key] = solve_layout(p, lay, [(d0, f0), (d0, np.full(len(f0), 0.5)),
                                                (d0 * rng.uniform(0.7, 1.3, len(d0)), f1)])
            longest[0] = max(longest[0], time.monotonic() - began)
        return solved[key]

    def descent(cur: LayoutSolution) -> LayoutSolution:
        improved = True
        while improved and room():
            improved = False
            moves = layout_moves(cur.layout)
            fails = 0
            for idx in rng.permutation(len(moves)):
                if fails >= patience or not room():
                    break
                lay = moves[idx]
                if lay.key() in solved or not _usable(p, lay):
                    continue
                cand = solve(lay, cur)
                if cand is not None and cand.tac < cur.tac * (1 - 1e-7):
                    cur, improved = cand, True
                    break
                fails += 1
        return cur

    best = base = descent(sol)
    stalled = 0
    while room() and (kicks_until is None or time.monotonic() < kicks_until):
        if stalled >= RESTRUCTURE_RESTART:   # start again from a random layout, far from this basin
            stalled = 0
            fresh = _random_start(p, rng, room)
            if fresh is not None:
                stats["restarts"] += 1
                base = descent(fresh)
                best = min(best, base, key=lambda x: x.tac)
            continue
        stats["kicks"] += 1
        cur = base
        for _ in range(2):
            options = layout_moves(cur.layout) + layout_additions(p, cur.layout)
            for idx in rng.permutation(len(options))[:20]:
                lay = options[idx]
                if not _usable(p, lay) or not room():
                    continue
                cand = solve(lay, cur)
                if cand is not None:
                    cur = cand
                    break
        cand = descent(cur)
        if cand.tac < base.tac * (1 - 1e-7):
            base, stalled = cand, 0
            best = min(best, base, key=lambda x: x.tac)
        else:
            stalled += 1
    return best


def random_layout(p: TacProblem, rng: np.random.Generator) -> Layout:
    """A random layout that a feasible point is easy to find for: between N − 2 and N + 1 exchangers of pairs
    that may match (N process streams; the required ones too), in random order along their streams with
    random two-branch splits (a branch may carry two units in series), and at the end of every stream a
    heater or cooler of a random utility level that can serve it (the search removes the ones it does
    not need).

    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> from heatloom.model.costs import CostSettings
    >>> from heatloom.network.tac.problem import make_problem
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 100], [2.0, 3.0], film_coefficient=[1.0, 1.0])
    >>> u = [Utility("steam", 180, 179, 100.0, UtilityKind.HOT, 3.0), Utility("cw", 15, 25, 10.0, UtilityKind.COLD, 2.0)]
    >>> lay = random_layout(make_problem(s, u, CostSettings(), 1.0), np.random.default_rng(0))
    >>> sorted(set(lay.units))   # the exchanger(s), and a utility unit at the end of each stream
    [('cool', 0, 0), ('heat', 0, 0), ('x', 0, 0)]
    >>> lay.hot[0][-1] == ((lay.units.index(('cool', 0, 0)),),)
    True
    """
    nh, nc = len(p.hot_names), len(p.cold_names)
    pairs = [("x", i, j) for i in range(nh) for j in range(nc) if p.can_match(i, j)]
    count = int(rng.integers(max(nh + nc - 2, 1), nh + nc + 2)) if pairs else 0
    units = [pairs[k] for k in rng.integers(0, len(pairs), count)] if pairs else []
    units += [k for k in sorted(p.required, key=str) if k[0] == "x" and k not in units]
    ends: dict = {}
    for kind, n, levels, possible in (("cool", nh, p.cool_levels, p.cool_level_possible),
                                      ("heat", nc, p.heat_levels, p.heat_level_possible)):
        for s in range(n):
            ok = [level for level in range(len(levels)) if possible(s, level)]
            if ok:
                ends[(kind, s)] = len(units)
                units.append((kind, s, int(rng.choice(ok))))

    def path(members: list, end) -> tuple:
        members = [int(x) for x in rng.permutation(members)]
        out = []
        while members:
            if len(members) >= 2 and rng.random() < 0.35:
                a, b = [members.pop()], [members.pop()]
                if members and rng.random() < 0.25:
                    (a if rng.random() < 0.5 else b).append(members.pop())
                out.append((tuple(a), tuple(b)))
            else:
                out.append(((members.pop(),),))
        return tuple(out) + ((((end,),),) if end is not None else ())

    hot = tuple(path([k for k, u in enumerate(units) if u[0] == "x" and u[1] == i], ends.get(("cool", i)))
                for i in range(nh))
    cold = tuple(path([k for k, u in enumerate(units) if u[0] == "x" and u[2] == j], ends.get(("heat", j)))
                 for j in range(nc))
    return Layout(tuple(units), hot, cold)


def _random_start(p: TacProblem, rng: np.random.Generator, room, tries: int = 20) -> LayoutSolution | None:
    """A solved random layout (:func:`random_layout`, kept to the layouts the search may keep), each tried
    from a few random duties and fractions; None when ``tries`` layouts give none or time runs out."""
    for _ in range(tries):
        if not room():
            return None
        lay = random_layout(p, rng)
        if not _usable(p, lay):
            continue
        starts = []
        for _ in range(4):
            duties = np.array([rng.uniform(0.05, 0.8) * min(_stream_duties(p, key)) for key in lay.units])
            fractions = []
            for sd, s, b in lay.splits():
                w = rng.uniform(0.2, 1.0, len((lay.hot if sd == "hot" else lay.cold)[s][b]))
                fractions += list(w / w.sum())
            starts.append((duties, np.array(fractions)))
        sol = solve_layout(p, lay, starts)
        if sol is not None:
            return sol
    return None


def _stream_duties(p: TacProblem, key) -> tuple[float, ...]:
    """Duties [kW] of the process streams of a layout unit."""
    if key[0] == "x":
        return float(p.hot_duty[key[1]]), float(p.cold_duty[key[2]])
    return (float((p.hot_duty if key[0] == "cool" else p.cold_duty)[key[1]]),)


def _restructure_job(args) -> tuple[LayoutSolution, dict]:
    """One search of :func:`restructure` in a worker process: (cheapest solution, its stats)."""
    p, start, deadline, seed, kicks_until = args
    stats: dict = {}
    with numeric_threads(1):   # the same arithmetic in a worker and in this process
        best = restructure(p, start, deadline, seed=seed, stats=stats, kicks_until=kicks_until)
    return best, stats


def beyond_stagewise(p: TacProblem, sol: TopologySolution, streams, utilities, costs: CostSettings, notes: list,
                     budget, seed: int, workers: int = 1, to_deadline: bool = False) -> Network | None:
    """The network of :func:`restructure` from a stagewise solution until ``budget.deadline``, when it is
    cheaper and passes the final check (with ``notes`` and a note of its own); else None, with a note
    appended to ``notes``.

    Parameters
    ----------
    p : TacProblem
    sol : TopologySolution
        The best stagewise solution.
    streams, utilities, costs
        As given to :func:`heatloom.network.tac.search.design_tac`.
    notes : list of str
    budget : heatloom.network.solvers.Budget
        Its deadline ends the search [s, ``time.monotonic`` clock], and no kick begins after
        :data:`RESTRUCTURE_SHARE` of its total from the search's start; its reports go to the network.
    seed : int
        Seed of the order of the moves [-]; with several workers, worker k searches with seed + k.
    workers : int
        Local processes [-]: each runs its own search (its own seed) from the same start until the deadline,
        and the cheapest result is kept; 1 searches in this process.
    to_deadline : bool
        Kick until the deadline (the stagewise search handed its time over, :data:`RESTRUCTURE_STALL`)
        instead of for :data:`RESTRUCTURE_SHARE` of the time limit from the search's start.
    """
    lay, duties, fractions = layout_from_solution(p, sol)
    start = solve_layout(p, lay, [(duties, fractions)])
    if start is None:
        return None
    # the kicks keep to the search's share of the time limit when the stagewise search ended early
    kicks_until = None if to_deadline else time.monotonic() + RESTRUCTURE_SHARE * budget.total
    jobs = [(p, start, budget.deadline, int(seed) + k, kicks_until) for k in range(max(1, int(workers)))]
    if len(jobs) == 1:
        results = [_restructure_job(jobs[0])]
    else:
        with local_pool(len(jobs)) as pool:
            results = list(pool.map(_restructure_job, jobs))
    best = min((r[0] for r in results), key=lambda x: x.tac)
    stats = {key: sum(r[1][key] for r in results) for key in ("layouts", "kicks", "restarts")}
    stats["timed_out"] = any(r[1]["timed_out"] for r in results)
    done = f"{stats['layouts']} layouts refined, {stats['kicks']} kicks, {stats['restarts']} random restarts" + (
        f" over {len(jobs)} parallel searches (seeds {int(seed)}–{int(seed) + len(jobs) - 1})" if len(jobs) > 1 else "") + (
        ", stopped by the time limit" if stats["timed_out"] else "")
    if not best.tac < sol.tac * (1 - 1e-6):
        notes.append("search beyond the stagewise form (units moved anywhere along their streams, utility units "
                     f"on split branches, units in series on a branch): nothing cheaper found ({done})")
        return None
    extra = [f"search beyond the stagewise form: units moved along their streams (utility units on split "
             f"branches, beside exchangers, units in series on a branch) lowered the TAC from {sol.tac:.6g} to "
             f"{best.tac:.6g} ({done}); each unit's stage orders it along its streams"]
    try:
        return network_from_layout(p, best, streams, utilities, costs, notes=[*notes, *extra],
                                   solves=budget.reports)
    except (InfeasibleError, InputError) as exc:
        notes.append(f"search beyond the stagewise form: its network failed the final check ({exc}); the "
                     "stagewise network is given")
        return None
