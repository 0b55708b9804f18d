"""Maximum-energy-recovery network design with the fewest units, sized and costed.

The sequence (DEVELOPERS.md, "Method notes"):

1. energy targets and utility duties by the problem table and the utility-placement LP
   (:func:`heatloom.pinch.target`), checked against the Papoulias–Grossmann transshipment LP when the
   match plan is made;
2. the minimum number of matches with heat-load distribution for each pinch subnetwork (a MILP on PuLP,
   :func:`heatloom.network.milp.plan_matches`); without an integer solution in time, the matches of its
   LP relaxation, and without that either a greedy heat-load distribution;
3. placement with temperatures, in series or in parallel with stream splits, by a stagewise model
   restricted to the matches (:func:`heatloom.network.placement.stage_model`), one model per pinch
   region and independent stream group (:func:`stream_groups`).  Each planned match as one unit first;
   if that cannot keep ΔTmin, other sets of as few matches of the group, then the planned matches in
   two places or any pair of the group (fewer units wins), and as the last resort the tick-off method or
   units interval by interval (:func:`heatloom.network.placement.interval_placement`), no solver, the one
   with fewer units.  The notes say which.  Forbidden and required matches hold at every step;
   Above :data:`TICK_OFF_ABOVE` process streams, steps 2 and 3 are one: the tick-off method
   (:mod:`heatloom.network.tickoff`) distributes the heat and places the units region by region, every
   unit ticking off a stream part while the remainder still meets the targets, its units merged where a
   stream can serve its partners in one branch each (:mod:`heatloom.network.merge`) and, with 60 % of
   its time, improved by moves that place the units of a few streams again
   (:mod:`heatloom.network.neighbourhood`); the MILP chain is the fallback there;
4. sizing of every unit (segment-wise LMTD area, U from the film coefficients), costing, and the checks of
   :func:`heatloom.network.structure.check_network`: a network that breaks a balance or ΔTmin is never
   returned.

``time_limit`` is one wall-clock budget for the whole run (:class:`heatloom.network.solvers.Budget`):
every solve takes its share of what is left, and the notes name the solves that stopped at theirs.
"""

from __future__ import annotations

import time
from collections.abc import Iterable, Sequence
from dataclasses import replace

from .. import defaults
from ..errors import InfeasibleError, InputError
from ..model import MatchRules, Stream, StreamTable, Utility
from ..model.costs import CostSettings
from ..model.exchangers import ExchangerType
from ..pinch import target
from ..pinch.area import missing_film_coefficients
from ..pinch.utilities import ideal_utilities, utility_shifted_range
from .merge import approach_shortfalls
from .parallel_supply import header_words, parallel_sides, with_returns
from .placement import Placement, Side, interval_placement, stage_model
from .sizing import geometry_kind, size_network
from .solvers import Budget, SolveReport, solve
from .structure import Cooler, Exchanger, Heater, Network, check_network, stream_enthalpy
from .tickoff import tick_off_placement
from .transshipment import Region, pinch_regions

__all__ = ["TICK_OFF_ABOVE", "design_mer", "stream_groups", "match_rules"]

TICK_OFF_ABOVE = defaults.TICK_OFF_ABOVE
"""Above this many process streams [-] the design places units by the tick-off method
(:mod:`heatloom.network.tickoff`) without the fewest-matches MILP; at or below it the MILP chain runs and
the tick-off method is one of its fallbacks.  Our choice from benchmarks/bench_design.py (generated
problems, ΔTmin 10 K): at 10 streams both reach the target, at 20 the tick-off method 24 units against
the target 24 in under a second where the MILP chain placed 25-27 in 30-45 s, and the fifteen-stream
published problem (Björk & Pettersson 2003 data) gets 29 units either way."""


def stream_groups(hot: Sequence[Side], cold: Sequence[Side], matches: Sequence
                  ) -> list[tuple[list[Side], list[Side], set[tuple[str, str]]]]:
    """Independent stream groups of a pinch region: the connected parts of its planned matches.

    Streams linked by no chain of planned matches exchange no heat, so each part can be placed on its
    own (a much smaller model).  A utility takes part in several groups with the load of its matches in
    each (utility units run in parallel anyway); each group's utility load is then set by its balance.
    Returns one group holding everything when the matches leave a side out or a group would not balance
    (the plan dropped a load below its tolerance).

    Parameters
    ----------
    hot, cold : sequence of Side
        The sides of the region.
    matches : sequence of heatloom.network.milp.Match
        The planned matches of the region, with their loads [kW].

    Returns
    -------
    list of (hot sides, cold sides, planned pairs)

    Examples
    --------
    >>> from types import SimpleNamespace as M
    >>> h = [Side("H1", True, (150.0, 50.0), (0.0, 100.0), 5.0), Side("H2", True, (90.0, 60.0), (0.0, 30.0), 5.0)]
    >>> c = [Side("C1", False, (20.0, 70.0), (0.0, 100.0), 5.0), Side("C2", False, (30.0, 45.0), (0.0, 30.0), 5.0)]
    >>> [sorted(p) for _, _, p in stream_groups(h, c, [M(hot="H1", cold="C1", load=100.0),
    ...                                                M(hot="H2", cold="C2", load=30.0)])]
    [[('H1', 'C1')], [('H2', 'C2')]]
    """
    everything = [(list(hot), list(cold), {(m.hot, m.cold) for m in matches})]
    utility = {s.name for s in (*hot, *cold) if s.utility}
    parent = {s.name: s.name for s in (*hot, *cold) if not s.utility}

    def root(x: str) -> str:
        while parent[x] != x:
            parent[x] = parent[parent[x]]
            x = parent[x]
        return x

    linked = {m.hot for m in matches} | {m.cold for m in matches}
    if linked != {s.name for s in (*hot, *cold)}:   # a side without a match, or a match of no side
        return everything
    for m in matches:
        if m.hot in parent and m.cold in parent:
            parent[root(m.hot)] = root(m.cold)
    keys = sorted({root(n) for n in parent}, key=lambda r: [n for n in parent].index(r))
    out = []
    for key in keys:
        hs = [s for s in hot if not s.utility and root(s.name) == key]
        cs = [s for s in cold if not s.utility and root(s.name) == key]
        mine = [m for m in matches if root(m.cold if m.hot in utility else m.hot) == key]
        loads: dict[str, float] = {}
        for m in mine:
            for n in (m.hot, m.cold):
                if n in utility:
                    loads[n] = loads.get(n, 0.0) + m.load
        imbalance = sum(s.duty for s in hs) - sum(s.duty for s in cs)   # > 0: heat for the cold utility
        scale = max(sum(s.duty for s in hs), 1.0)
        if loads:   # the largest utility load closes the group's balance
            big = max(loads, key=loads.get)
            is_hot = next(s for s in (*hot, *cold) if s.name == big).hot
            others = sum(v if next(s for s in (*hot, *cold) if s.name == n).hot else -v
                         for n, v in loads.items() if n != big)
            loads[big] = (-imbalance - others) if is_hot else (imbalance + others)
            if loads[big] <= 1e-9 * scale:
                return everything
        elif abs(imbalance) > 1e-7 * scale:
            return everything
        for s in (*hot, *cold):
            if s.name in loads:
                side = Side(s.name, s.hot, s.temperatures, (0.0, loads[s.name]), s.shift, utility=True)
                (hs if s.hot else cs).append(side)
        if not hs or not cs:
            return everything
        out.append((hs, cs, {(m.hot, m.cold) for m in mine}))
    return out


def _place(hot: list[Side], cold: list[Side], allowed: set[tuple[str, str]], label: str, proven: bool,
           solver, budget: Budget, source=None, tries: int = 6, forbidden=frozenset(), required=frozenset()
           ) -> tuple[Placement, list[SolveReport], str]:
    """Place one stream group: stagewise MILPs in turn, then the tick-off or the interval placement.

    1. each planned match as one unit; 2. when ``source`` (the group's subnetwork and its matches) is
    given, up to ``tries`` other sets of as few matches, one unit each
    (:func:`heatloom.network.milp.alternative_matches`); 3. the planned matches, some in two places;
    4. any pair of the group (fewer units than 3. often); 5. only when neither has a solution, any pair
    with one more stage; 6. the tick-off placement (:func:`heatloom.network.tickoff.tick_off_placement`)
    or units interval by interval (:func:`interval_placement`), the one with fewer units.  Of 3. and 4.
    the placement with fewer units wins (the planned matches on a tie).  A model of more than 20 000 unit
    binaries is not built (it could not be solved in a share of the budget).  No step matches a pair of
    ``forbidden``; the pairs of ``required`` in the group are placed by every step.
    Returns the placement, the solve reports and a note when it did not come from the first model.
    """
    from .matches import alternative_matches

    stages = max(len(hot), len(cold))
    reports: list[SolveReport] = []
    names = {s.name for s in (*hot, *cold)}
    mine = {p for p in required if p[0] in names and p[1] in names}

    short: list[str] = []   # placements refused: a unit below ΔTmin at a segment break inside it

    def attempt(pairs, k, once, share, what, required=frozenset()):
        prob, read = stage_model(hot, cold, pairs, k, required=set(required) | (mine & set(pairs)), once=once,
                                 name="placement")
        report = budget.record(solve(prob, solver=solver, time_limit=budget.share(share), check=False,
                                     name=f"placement ({label}, {what})"))
        reports.append(report)
        if not report.has_solution:
            return None, False
        result = read()
        bad = approach_shortfalls(result.units, hot, cold)
        if bad:
            short.append(f"{what}: {', '.join(f'{u.hot}→{u.cold}' for u in bad)}")
            return None, False
        return result, report.optimal

    def refused() -> str:
        return (f"; placements refused for a unit below ΔTmin at a segment break inside it ({'; '.join(short)})"
                if short else "")

    if not budget.exhausted:
        result, _ = attempt(allowed, stages, True, 0.5, "one unit per match", allowed if proven else frozenset())
        if result is not None:
            return result, reports, ""
        tried = [set(allowed)]
        for _ in range(tries if source is not None else 0):
            if budget.remaining < 0.5 * budget.total or budget.exhausted:
                break
            alt, rep = alternative_matches(*source, tried, solver=solver, time_limit=budget.share(0.25),
                                           forbidden=forbidden, required=mine)
            reports.append(budget.record(rep))
            if alt is None:
                break
            tried.append(alt)
            result, _ = attempt(alt, stages, True, 0.25, "another set of matches, one unit each")
            if result is not None:
                return result, reports, (f"subnetwork '{label}': the planned matches could not be placed one "
                                         f"unit each; another set of {len(alt)} matches could{refused()}")
    everything = {(i.name, j.name) for i in hot for j in cold if not (i.utility and j.utility)
                  and (i.name, j.name) not in forbidden}
    best = None
    for pairs, k, share, what in [(allowed, stages, 0.4, "planned matches in two places"),
                                  (everything, stages, 0.7, "any match"),
                                  (everything, stages + 1, 1.0, "any match, one more stage")]:
        if budget.exhausted or (best is not None and k > stages):
            break
        if len(pairs) * k > 20000:   # too large to build and solve in a share of the budget
            continue
        result, optimal = attempt(pairs, k, False, share, what, allowed if pairs is allowed and proven
                                  else frozenset())
        if result is not None and (best is None or len(result.units) < len(best[0].units)):
            best = (result, what)   # ties keep the planned matches
        if optimal and pairs is everything:
            break
    if best is not None:
        return best[0], reports, (f"subnetwork '{label}': the planned matches could not be placed one unit "
                                  f"each keeping ΔTmin; {len(best[0].units)} units placed allowing "
                                  f"{best[1]} instead{refused()}")
    why = ("no time left of the budget" if not reports else "the placement models stopped without a solution"
           + refused())
    ticked = tick_off_placement(hot, cold, forbidden=forbidden, required=mine,
                                time_limit=max(0.5 * budget.remaining, 0.5), tries=20,
                                deadline=time.monotonic() + max(budget.root.remaining, 0.5))
    try:
        result = interval_placement(hot, cold, preferred=allowed, forbidden=forbidden)
    except ValueError as exc:
        if ticked is None:
            raise InfeasibleError(f"no placement of the matches of subnetwork '{label}' keeps ΔTmin at both "
                                  f"ends of every unit ({exc})") from None
        result = None
    if ticked is not None and (result is None or len(ticked.placement.units) < len(result.units)
                               or not mine <= {(u.hot, u.cold) for u in result.units}):
        return ticked.placement, reports, (f"subnetwork '{label}': {why}; {_tick_off_words(ticked)} instead")
    return result, reports, (f"subnetwork '{label}': {why}; units placed interval by interval instead "
                             f"({len(result.units)} units, more than the fewest)")


def _tick_off_words(result) -> str:
    rest = (f", {result.remainder} of them for what was left placed interval by interval or by the stagewise "
            "MILP and not replaced by a move" if result.remainder else "")
    moves = f", {result.moves} neighbourhood moves" if result.moves else ""
    return (f"units placed by the tick-off method ({len(result.placement.units)} units{rest}; best of "
            f"{result.tries} searches{moves})")


def match_rules(streams: StreamTable, utilities: Sequence[Utility], forbidden, required
                ) -> tuple[set[tuple[str, str]], set[tuple[str, str]]]:
    """Forbidden and required (hot, cold) pairs checked against the names of the streams and utilities.

    Parameters
    ----------
    streams : StreamTable
    utilities : sequence of Utility
    forbidden, required : iterable of (str, str)
        (hot, cold) name pairs; a hot name is a hot stream or a hot utility, a cold name a cold stream or
        a cold utility.

    Raises
    ------
    InputError
        For a name that is not a hot (first) or cold (second) stream or utility, a pair of two utilities,
        or a pair both forbidden and required (the checks and wording of :class:`heatloom.model.MatchRules`).

    Examples
    --------
    >>> from heatloom.pinch.utilities import ideal_utilities
    >>> s = StreamTable.from_arrays(["H1", "C1"], [180, 20], [60, 135], [3.0, 2.0])
    >>> match_rules(s, ideal_utilities(s, 10), [("H1", "C1")], [])
    ({('H1', 'C1')}, set())
    >>> match_rules(s, ideal_utilities(s, 10), [("H2", "C1")], [])
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: forbidden match H2:C1: unknown hot side 'H2'; the hot streams and utilities are 'H1', 'hot utility (assumed)'
    """
    from .matches import pair_set

    out = [pair_set(forbidden, "forbidden"), pair_set(required, "required")]
    MatchRules(forbidden=tuple(sorted(out[0])), required=tuple(sorted(out[1]))).check(streams, utilities)
    return out[0], out[1]


def _process_side(stream: Stream, region: Region, shift: float) -> Side | None:
    """The part of a process stream inside a region, as a Side (None when it has none there)."""
    s = -shift if stream.is_hot else shift
    hi = float("inf") if region.top is None else region.top - s
    lo = float("-inf") if region.bottom is None else region.bottom - s
    t_start, t_end = stream.supply_temperature, stream.target_temperature
    if stream.is_hot:
        a, b = min(t_start, hi), max(t_end, lo)
        if a <= b:
            return None
    else:
        a, b = max(t_start, lo), min(t_end, hi)
        if b <= a:
            return None
    base = stream_enthalpy(stream, a)
    temps = [a] + [g.target_temperature for g in stream.segments
                   if (b < g.target_temperature < a if stream.is_hot else a < g.target_temperature < b)] + [b]
    enth = [stream_enthalpy(stream, t) - base for t in temps]
    if enth[-1] <= 1e-12 * max(stream.duty, 1.0):
        return None
    return Side(stream.name, stream.is_hot, tuple(temps), tuple(enth), shift)


def _utility_side(u: Utility, duty: float, dt_min: float) -> Side:
    return Side(u.name, u.is_hot, (u.supply_temperature, u.target_temperature), (0.0, duty), 0.5 * dt_min,
                utility=True)


def _design_regions(t, plan) -> tuple[tuple[Region, tuple[Region, ...]], ...]:
    """The pinch regions a design places units in, each with its parts between the plan's utility pinches.

    The cuts are where the cascade with the plan's utility duties carries no heat (the fewest-matches
    plan's subnetworks, :attr:`Transshipment.pinches`).  The regions are cut at the process pinches among
    them; each region's parts are cut at the utility pinches inside it too, so that a site with several
    steam levels can be designed level by level (the parts, one region when it holds no utility pinch).
    A process pinch is not a cut with a non-isothermal utility whose even spread forces more than the least
    hot utility (hot oil that must be pumped hard to reach the hottest demand): its surplus crosses the
    process pinch to the cold utility, the plan's cascade carries heat there, and a cut would leave both
    regions unbalanced.

    The labels are those of the finest cut (:func:`pinch_regions` of every cut, hottest first); a region of
    several parts takes ``above``, ``below`` or ``whole`` where it reaches an end of the scale, else its top
    part's label, so that no two regions of a design share a label."""
    zero = plan.transshipment.pinches
    scale = max((abs(p.shifted) for p in t.pinches), default=1.0)
    process = [z for z in zero if any(abs(p.shifted - z) <= 1e-9 * max(scale, 1.0) for p in t.pinches)]
    parts = pinch_regions(zero)
    out = []
    for region in pinch_regions(process):
        mine = tuple(r for r in parts if (region.top is None or (r.top is not None and r.top <= region.top))
                     and (region.bottom is None or (r.bottom is not None and r.bottom >= region.bottom)))
        if len(mine) == 1:
            out.append((mine[0], mine))
            continue
        label = {(True, True): "whole", (True, False): "above", (False, True): "below"}.get(
            (region.top is None, region.bottom is None), mine[0].label)
        out.append((Region(label, region.top, region.bottom), mine))
    return tuple(out)


def _isothermal_region(u: Utility, dt_min: float, region: Region) -> bool:
    """Whether an isothermal utility belongs to a region: a hot one releases its heat just below its
    shifted temperature, a cold one takes it from just above (the cascade's reading,
    :func:`heatloom.network.transshipment.transshipment`), so a level that sits on a cut belongs to the
    region below it (hot) or above it (cold).

    >>> from heatloom.model import UtilityKind
    >>> lp = Utility("LP steam", 150.0, 150.0, 40.0, UtilityKind.HOT, 3.0)
    >>> [_isothermal_region(lp, 10.0, r) for r in pinch_regions([211.0, 145.0])]
    [False, False, True]
    >>> raising = Utility("steam raising", 140.0, 140.0, 2.0, UtilityKind.COLD, 3.0)
    >>> [_isothermal_region(raising, 10.0, r) for r in pinch_regions([211.0, 145.0])]
    [False, True, False]
    """
    level = utility_shifted_range(u, dt_min)[0]
    if u.is_hot:
        return (region.bottom is None or region.bottom < level) and (region.top is None or level <= region.top)
    return (region.bottom is None or region.bottom <= level) and (region.top is None or level < region.top)


def _utility_part(u: Utility, duty: float, dt_min: float, region: Region) -> Side | None:
    """The part of a non-isothermal utility of ``duty`` [kW] within a pinch region: its range cut at the
    region's shifted ends, with the share of the duty that range holds; None when it has none there.

    >>> from heatloom.model import UtilityKind
    >>> oil = Utility("oil", 330.0, 250.0, 60.0, UtilityKind.HOT, 1.0)
    >>> _utility_part(oil, 80.0, 10.0, Region("above", None, 288.0)).temperatures
    (330.0, 293.0)
    >>> round(_utility_part(oil, 80.0, 10.0, Region("below", 288.0, None)).duty, 9)
    43.0
    """
    hi, lo = utility_shifted_range(u, dt_min)
    top = hi if region.top is None else min(hi, region.top)
    bottom = lo if region.bottom is None else max(lo, region.bottom)
    if top - bottom <= 1e-12 * max(abs(hi), 1.0):
        return None
    shift = 0.5 * dt_min if u.is_hot else -0.5 * dt_min
    share = (top - bottom) / (hi - lo)
    temps = (top + shift, bottom + shift) if u.is_hot else (bottom + shift, top + shift)
    return Side(u.name, u.is_hot, temps, (0.0, duty * share), 0.5 * dt_min, utility=True)


def _region_sides(streams: StreamTable, utilities: Sequence[Utility], duties: dict, region: Region,
                  dt_min: float, scale: float):
    """The hot and cold sides of a pinch region (None when it has none)."""
    hot_sides, cold_sides = [], []
    for s in streams:
        side = _process_side(s, region, s.shift(dt_min))
        if side is not None:
            (hot_sides if s.is_hot else cold_sides).append(side)
    for u in utilities:
        d = duties.get(u.name, 0.0)
        if d <= 1e-9 * max(scale, 1.0):
            continue
        if not u.isothermal:
            # a non-isothermal utility spreads its duty evenly over its shifted range (the problem table's
            # and the transshipment's reading): each region gets the part of it between its pinches
            side = _utility_part(u, d, dt_min, region)
            if side is not None and side.duty > 1e-9 * max(scale, 1.0):
                (hot_sides if u.is_hot else cold_sides).append(side)
        elif _isothermal_region(u, dt_min, region):
            (hot_sides if u.is_hot else cold_sides).append(_utility_side(u, d, dt_min))
    if not hot_sides and not cold_sides:
        return None
    if not hot_sides or not cold_sides:
        raise InfeasibleError(f"subnetwork '{region.label}' has only "
                              f"{'hot' if hot_sides else 'cold'} sides; the targets cannot be met")
    return hot_sides, cold_sides


def _tick_off_region(label, hot, cold, utilities, forbidden, required, part, deadline, solver,
                     least_utility_flow):
    """Units of one region by :func:`tick_off_placement`, searched until ``deadline`` (a
    ``time.monotonic`` reading) at the latest: (units, words of the note, solve reports), or None when it
    finds none.  Non-isothermal utilities are tried as read, from a supply header (unless
    ``least_utility_flow``), then piped as streams of the region."""
    names = {x.name for x in (*hot, *cold)}
    mine = {p for p in required if p[0] in names and p[1] in names}

    def place(h, c, banned=frozenset()):
        return tick_off_placement(h, c, forbidden=set(forbidden) | banned, required=mine,
                                  time_limit=0.6 * part.remaining, tries=500, solver=solver,
                                  solve_time=0.6 * part.remaining, neighbourhood=0.6, deadline=deadline)

    result = place(hot, cold)
    piped, skipped, units = "", "", None
    if result is None:
        # cooling water and hot oil from a header: every unit takes the utility at its supply temperature
        hot2, cold2, parallel = parallel_sides(hot, cold, utilities)
        if parallel and least_utility_flow:
            skipped = (f"; {', '.join(sorted(parallel))} kept at the least flow of the energy target and "
                       "returned at the design temperature (a supply-header reading, which may use more flow, "
                       "not tried as asked)")
        elif parallel:
            result = place(hot2, cold2)
            if result is not None:
                units = with_returns(result.placement.units, hot2, cold2, parallel)
                piped = "; " + "; ".join(header_words(units, parallel))
    for hot_only in _pipings(hot, cold):
        if result is not None:
            break
        # the conservative reading counts hot oil's heat at its return temperature only; piped as a
        # stream of the region (its target flow, the problem table's reading) the targets hold
        hot2, cold2, banned, words = _utilities_as_streams(
            hot, cold, "the tick-off method's conservative reading, the utility's heat counted at its return "
            "temperature, left no search", hot_only=hot_only)
        piped = f"{skipped}; {words}"
        result = place(hot2, cold2, banned)
    if result is None:
        return None
    units = list(result.placement.units if units is None else units)
    return units, f"{_tick_off_words(result)}{piped}", [part.record(r) for r in result.reports]


def _tick_off_design(streams, utilities, duties, regions, t, dt_min, forbidden, required, budget, solver,
                     solves, least_utility_flow=False):
    """Units of every region by :func:`tick_off_placement`; (None, reasons) when a region has none or a
    required pair is left out.  With ``least_utility_flow`` the supply-header reading is not tried.

    A region that holds utility pinches (``regions`` from :func:`_design_regions`) is placed part by part
    first (each part one steam level's share: reliable, Euler's N − 1 units per part at best) and then, with
    what is left of its share of the budget, as a whole (fewer units where a match spans two parts, but the
    search may find nothing); the one with fewer units is kept."""
    def sides(region):
        return _region_sides(streams, utilities, duties, region, dt_min, t.table.duty_scale)

    groups = [(region, parts, got, [(r.label, *g) for r in parts if (g := sides(r)) is not None]
               if len(parts) > 1 else None) for region, parts in regions if (got := sides(region)) is not None]
    weights = [len(h) + len(c) for _, _, (h, c), _ in groups]
    placed, notes = [], []

    def fail(label):
        return None, [f"subnetwork '{label}': its cascade does not hold in the tick-off method's "
                      "conservative reading of the utilities, or the match rules leave no placement"]

    def by_parts(pieces, share, end):
        """Units of the pieces one after the other, each with its share of ``share`` by size: (units, notes,
        label of the first piece without a placement or None)."""
        units, words, sizes = [], [], [len(h) + len(c) for _, h, c in pieces]
        for m, (label, h, c) in enumerate(pieces):
            got = _tick_off_region(label, h, c, utilities, forbidden, required,
                                   share.part(sizes[m] / max(sum(sizes[m:]), 1)), end, solver, least_utility_flow)
            if got is None:
                return units, words, label
            solves.extend(got[2])
            words.append(f"subnetwork '{label}': {got[1]}")
            units += [(label, p) for p in got[0]]
        return units, words, None

    for k, (region, parts, (hot, cold), pieces) in enumerate(groups):
        part = budget.part(weights[k] / max(sum(weights[k:]), 1))
        end = time.monotonic() + budget.root.remaining
        if pieces is None:
            cut, cut_notes, failed = by_parts([(region.label, hot, cold)], part, end)
            if failed is not None:
                return fail(failed)
            notes += cut_notes
            placed += cut
            continue
        cut, cut_notes, failed = by_parts(pieces, part.part(0.5), end)
        whole = None
        if part.remaining > part.floor:
            whole = _tick_off_region(region.label, hot, cold, utilities, forbidden, required, part,
                                     time.monotonic() + part.remaining, solver, least_utility_flow)
        if failed is not None and whole is None:
            return fail(failed)
        cuts = " and ".join(f"{r.bottom:g}" for r in parts[:-1])
        words = f"{region.description}, with utility pinches at {cuts} °C shifted inside: " + (
            f"placed part by part between them ({len(cut)} units, the parts' subnetworks below)" if failed is None
            else f"no placement of part '{failed}' on its own")
        words += f" and as one subnetwork ({len(whole[0])} units)" if whole is not None else ""
        if whole is not None and (failed is not None or len(whole[0]) < len(cut)):
            solves += whole[2]
            notes.append(f"{words}: kept as one, subnetwork '{region.label}': {whole[1]}")
            placed += [(region.label, p) for p in whole[0]]
        else:
            notes += [f"{words}: kept part by part"
                      + ("" if whole is not None else " (no placement as one subnetwork within its share of "
                         "the budget)"), *cut_notes]
            placed += cut
    missing = sorted(required - {(p.hot, p.cold) for _, p in placed})
    if missing:
        return None, ["required match" + ("es " if len(missing) > 1 else " ")
                      + ", ".join(f"{h}→{c}" for h, c in missing) + " not placed"]
    return placed, notes


def _utilities_as_streams(hot: list[Side], cold: list[Side], why: str, hot_only: bool = False):
    """The region's non-isothermal utilities (with ``hot_only``, its hot ones) as streams of fixed flow (the
    flow of their target duty over their range), so their units may take them over part of their range, in
    series and on parallel branches; with the pairs that would match two utilities (now forbidden) and the
    words of the note."""
    names = {x.name for x in (*hot, *cold) if x.utility and not x.isothermal and (x.hot or not hot_only)}

    def conv(x: Side) -> Side:
        return replace(x, utility=False) if x.name in names else x

    hot2, cold2 = [conv(x) for x in hot], [conv(x) for x in cold]
    banned = {(h.name, c.name) for h in hot for c in cold if h.utility and c.utility}
    words = "; ".join(
        f"'{x.name}' piped through its units as a stream of {x.duty / abs(x.temperatures[0] - x.temperatures[-1]):.6g} "
        f"kW/K ({x.temperatures[0]:g} → {x.temperatures[-1]:g} °C overall): its units take it over parts of that "
        f"range, in series and on parallel branches, as the energy target assumes ({why}); the units' "
        f"utility temperatures say where each takes it (columns {'hot' if x.hot else 'cold'} in/out of the units "
        "table, which evaluate reads back). "
        "Caution: check the utility's film-temperature, pressure and flow limits in every unit against its "
        "supplier's data and local codes (qualified, licensed engineers)"
        for x in (*hot, *cold) if x.name in names)
    return hot2, cold2, banned, words


def _pipings(hot: list[Side], cold: list[Side]) -> list[bool]:
    """The ways to pipe a region's non-isothermal utilities as streams, in the order to try them (the
    ``hot_only`` of :func:`_utilities_as_streams`): the hot ones alone, then all of them (cooling water
    piped in series through coolers is a last resort); empty when the region has none."""
    kinds = {x.hot for x in (*hot, *cold) if x.utility and not x.isothermal}
    return [hot_only for hot_only, needs in ((True, True in kinds), (False, False in kinds)) if needs]


def _must_pipe(hot: list[Side], cold: list[Side], forbidden) -> bool:
    """Whether a region's non-isothermal utilities must be piped as streams (:func:`_utilities_as_streams`):
    with every unit of a utility over its whole range, some piece has no side that can serve it."""
    if all(x.isothermal for x in (*hot, *cold) if x.utility):
        return False
    try:
        interval_placement(hot, cold, forbidden=forbidden, cut_utilities=False)
    except ValueError:
        return True
    return False


def _chain_design(streams, utilities, plan, regions, t, dt_min, forbidden, required, solver, budget, notes,
                  solves):
    """Units of every part of every region (``regions`` from :func:`_design_regions`: the plan's
    subnetworks, cut at the process and utility pinches alike) placed for the planned matches
    (:func:`_place`); adds notes and solves."""
    notes.append(f"minimum matches {plan.number_of_matches} "
                 f"({'proven minimal' if plan.proven_minimum else 'best found within the time limit'}); "
                 f"minimum-units target {plan.unit_target} (N − 1 per pinch subnetwork)")
    notes += plan.notes
    groups = []   # (label, hot sides, cold sides, planned pairs, (subnetwork, its matches in the group) or None)
    for region in (r for _, parts in regions for r in parts):
        got = _region_sides(streams, utilities, plan.utility_duties, region, dt_min, t.table.duty_scale)
        if got is None:
            continue
        hot_sides, cold_sides = got
        banned: set = set()
        if _must_pipe(hot_sides, cold_sides, forbidden):
            for hot_only in _pipings(hot_sides, cold_sides):
                hot2, cold2, banned, piped = _utilities_as_streams(
                    hot_sides, cold_sides, "one unit over the whole range each could not serve every piece",
                    hot_only=hot_only)
                if not _must_pipe(hot2, cold2, set(forbidden) | banned):
                    break
            hot_sides, cold_sides = hot2, cold2
            notes.append(f"subnetwork '{region.label}': {piped}")
        matches = plan.matches_within(region.top, region.bottom)
        subs = [s.subnetwork for s in plan.subnetworks if s.matches and s.matches[0] in matches]
        parts = stream_groups(hot_sides, cold_sides, matches)
        for k, (hs, cs, pairs) in enumerate(parts):
            label = region.label if len(parts) == 1 else f"{region.label}, stream group {k + 1} of {len(parts)}"
            mine = [m for m in matches if (m.hot, m.cold) in pairs] if len(subs) == 1 else None
            groups.append((label, hs, cs, pairs, (subs[0], mine) if mine else None, set(forbidden) | banned))
    weights = [len(g[3]) * max(len(g[1]), len(g[2])) for g in groups]
    placed = []  # (region label, PlacedUnit)
    for g, (label, hot_sides, cold_sides, allowed, source, banned) in enumerate(groups):
        part = budget.part(weights[g] / max(sum(weights[g:]), 1))
        result, reports, note = _place(hot_sides, cold_sides, allowed, label, plan.proven_minimum, solver, part,
                                       source, forbidden=banned, required=required)
        solves += reports
        if note:
            notes.append(note)
        placed += [(label.split(", stream group")[0], p) for p in result.units]
    if len(placed) > plan.number_of_matches:
        notes.append(f"keeping ΔTmin at both ends of every unit took {len(placed)} units for the "
                     f"{plan.number_of_matches} matches of the plan (a match in two places, or a match added)")
    return placed


def design_mer(streams: StreamTable, dt_min: float, utilities: Sequence[Utility] | None = None, *,
               costs: CostSettings | None = None, solver: str | None = None, time_limit: float = 60.0,
               default_film_coefficient: float | None = None, exchanger_type: ExchangerType | None = None,
               tube_diameter: float | None = None, hairpin_length: float | None = None,
               forbidden: Iterable[tuple[str, str]] = (), required: Iterable[tuple[str, str]] = (),
               least_utility_flow: bool = False) -> Network:
    """A maximum-energy-recovery network with the fewest units, sized and costed.

    Parameters
    ----------
    streams : StreamTable
    dt_min : float
        Minimum approach temperature every unit keeps [K].
    utilities : sequence of Utility, optional
        Utility levels with prices [money/(kW·year)]; when omitted, :func:`ideal_utilities`.
    costs : CostSettings, optional
        Cost laws and annualisation; the defaults of :mod:`heatloom.defaults` when omitted.
    solver : str, optional
        "highs" or "cbc"; HiGHS when installed (see :mod:`heatloom.network.solvers`).
    time_limit : float
        Wall-clock budget of the whole run [s]: the match plan takes up to 60 % of it, each stream
        group's placement a part of what is left in proportion to its size, and every solve its share
        of its part (:class:`heatloom.network.solvers.Budget`); the notes name the solves that stopped at
        their share.  A solve that stops without a solution falls back to the next method (fewest
        matches → LP relaxation → greedy heat-load distribution; placement of each planned match once →
        planned matches → any match → units interval by interval), and the notes say so.
    default_film_coefficient : float, optional
        Film coefficient assumed where a stream or utility has none [kW/(m²·K)]; without it a missing
        coefficient is an error (areas cannot be computed).
    exchanger_type : ExchangerType, optional
        Report every unit's geometry as this kind, one whose :attr:`~ExchangerType.has_geometry` is True:
        ``SHELL_AND_TUBE_1_2`` (shells in series and F, area raised by 1/F, cost law per shell) or
        ``DOUBLE_PIPE`` (hairpins; needs ``tube_diameter`` [m] and ``hairpin_length`` [m]).  None or
        ``COUNTER_CURRENT``: counter-current area only.
    forbidden : iterable of (str, str)
        (hot, cold) name pairs never matched; a name may be a utility's (forbid steam on a stream).
        Every method honours them (fewest matches, its relaxation, the greedy distribution, every
        placement, the tick-off method).
    required : iterable of (str, str)
        (hot, cold) name pairs that must appear in the network with a positive duty.
    least_utility_flow : bool
        Keep every non-isothermal utility (hot oil, cooling water) at the least flow of its energy target,
        returned at its design temperature.  By default, above :data:`TICK_OFF_ABOVE` process streams, a
        pinch region that the tick-off method cannot place as read is searched again with such a utility
        fed from a supply header (:mod:`heatloom.network.parallel_supply`): each unit then returns it at its
        own temperature, which may take more flow (a hotter oil return to a fired heater, more cooling
        water), and the notes give the flow and the returns.  Set this when the plant cannot take that.

    Above :data:`TICK_OFF_ABOVE` process streams the units of each pinch region come from the tick-off
    method (:func:`heatloom.network.tickoff.tick_off_placement`) and the fewest-matches MILP is not run;
    when that method gives no network the MILP chain runs instead.  The notes name the method that
    produced each region's units.

    Returns
    -------
    Network
        Passes :func:`check_network`; ``notes`` state every default and assumption used.

    Raises
    ------
    InputError
        Film coefficients missing and no default given; an exchanger type without a geometry other
        than counter-current; a double pipe without its tube diameter or hairpin length; a forbidden or
        required pair naming an unknown stream or utility, two utilities, or a pair both forbidden and
        required; a required pair that can exchange heat nowhere at the energy targets.
    InfeasibleError
        No utility can serve the process, no placement keeps ΔTmin, or the forbidden and required
        matches leave no network at the energy targets (the message names them).
    """
    from .milp import plan_matches

    notes: list[str] = []
    geometry_options = {"tube_diameter": tube_diameter, "hairpin_length": hairpin_length}
    exchanger_type = geometry_kind(exchanger_type)
    if exchanger_type is ExchangerType.DOUBLE_PIPE and (tube_diameter is None or hairpin_length is None):
        raise InputError("double-pipe units need a tube diameter [m] and a hairpin leg length [m] "
                         "(--tube-diameter, --hairpin-length)")
    if utilities is None:
        utilities = ideal_utilities(streams, dt_min)
        hu, cu = utilities
        notes.append(f"no utilities given: assumed an isothermal hot utility at {hu.supply_temperature:g} °C "
                     f"(h {hu.film_coefficient:g} kW/(m²·K), {hu.cost:g} money/(kW·year)) and an isothermal "
                     f"cold utility at {cu.supply_temperature:g} °C (h {cu.film_coefficient:g} kW/(m²·K), "
                     f"{cu.cost:g} money/(kW·year)); defaults, give --utilities FILE")
    costs = costs or CostSettings()
    if default_film_coefficient is not None and not default_film_coefficient > 0:
        raise InputError(f"default film coefficient must be > 0 kW/(m²·K), got {default_film_coefficient!r}")
    missing = missing_film_coefficients(streams, utilities)
    if missing and default_film_coefficient is None:
        raise InputError(f"film coefficient h missing for {', '.join(missing)}: areas and costs need one for "
                         "every stream and utility (add an h column in kW/(m²·K), or assume one with "
                         "--default-h)")
    if missing:
        notes.append(f"film coefficient {default_film_coefficient:g} kW/(m²·K) assumed for {', '.join(missing)}")
    forbidden, required = match_rules(streams, utilities, forbidden, required)
    if forbidden or required:
        notes.append("match rules: " + "; ".join(
            [f"forbidden {', '.join(f'{h}→{c}' for h, c in sorted(forbidden))}"] * bool(forbidden)
            + [f"required {', '.join(f'{h}→{c}' for h, c in sorted(required))}"] * bool(required)))
    budget = Budget(time_limit)
    t = target(streams, dt_min, utilities)
    by_utility = {u.name: u for u in utilities}
    placed, plan, solves = None, None, []
    if len(streams) > TICK_OFF_ABOVE:
        plan = plan_matches(streams, dt_min, utilities, solver=solver, budget=budget.part(0.1), fewest=False,
                            forbidden=forbidden, required=required)
        solves = list(plan.reports)
        regions = _design_regions(t, plan)
        placed, why = _tick_off_design(streams, utilities, plan.utility_duties, regions, t, dt_min, forbidden,
                                       required, budget, solver, solves, least_utility_flow)
        if placed is not None:
            notes.append(f"heat-load distribution and placement by the tick-off method for {len(streams)} "
                         f"process streams (the fewest-matches MILP is not run above {TICK_OFF_ABOVE}); "
                         f"minimum-units target {plan.unit_target} (N − 1 per pinch subnetwork)")
            notes += why
        else:
            notes.append(f"the tick-off method gave no network ({'; '.join(why)}); fewest matches and "
                         "stagewise placement instead")
    if placed is None:
        plan = plan_matches(streams, dt_min, utilities, solver=solver, budget=budget.part(0.6),
                            forbidden=forbidden, required=required)
        solves += list(plan.reports)
        regions = _design_regions(t, plan)
        placed = _chain_design(streams, utilities, plan, regions, t, dt_min, forbidden, required, solver,
                               budget, notes, solves)
    if budget.hits:
        notes.append(budget.hits_note())
    have = {(p.hot, p.cold) for _, p in placed if p.duty > 0}
    missing = sorted(required - have)
    if missing:
        raise InfeasibleError("no network at the energy targets found with the required match"
                              + ("es " if len(missing) > 1 else " ") + ", ".join(f"{h}→{c}" for h, c in missing)
                              + (f" (and without the forbidden ones {', '.join(f'{h}→{c}' for h, c in sorted(forbidden))})"
                                 if forbidden else ""))
    exchangers, heaters, coolers = [], [], []
    for label, p in placed:
        place = {"duty": p.duty, "region": label, "stage": p.stage}
        if p.hot in by_utility:
            heaters.append(Heater(cold=p.cold, utility=p.hot, cold_in=p.cold_in, cold_out=p.cold_out,
                                  utility_in=p.hot_in, utility_out=p.hot_out, cold_fraction=p.cold_fraction, **place))
        elif p.cold in by_utility:
            coolers.append(Cooler(hot=p.hot, utility=p.cold, hot_in=p.hot_in, hot_out=p.hot_out,
                                  utility_in=p.cold_in, utility_out=p.cold_out, hot_fraction=p.hot_fraction, **place))
        else:
            exchangers.append(Exchanger(hot=p.hot, cold=p.cold, hot_in=p.hot_in, hot_out=p.hot_out,
                                        cold_in=p.cold_in, cold_out=p.cold_out, hot_fraction=p.hot_fraction,
                                        cold_fraction=p.cold_fraction, **place))
    sized = size_network(Network(tuple(exchangers), tuple(heaters), tuple(coolers), float(dt_min)), streams,
                         utilities, costs=costs, default_film_coefficient=default_film_coefficient,
                         exchanger_type=exchanger_type, geometry_options=geometry_options)
    notes.append(costs.describe())
    notes.append("Areas: counter-current LMTD, U from 1/U = 1/h_hot + 1/h_cold (clean surfaces, no fouling "
                 "allowance); streams of several segments sized interval by interval.")
    if exchanger_type is ExchangerType.SHELL_AND_TUBE_1_2:
        notes.append(f"Units are 1-2 shell-and-tube: shells in series by the X_P = {defaults.X_P:g} criterion "
                     f"(Ahmad, Linnhoff & Smith), minimum F {defaults.MIN_F_FACTOR:g}; area = counter-current "
                     "area / F (F from the terminal temperatures), cost law applied per shell.")
    elif exchanger_type is ExchangerType.DOUBLE_PIPE:
        notes.append(f"Units are counter-current double-pipe hairpins of tube diameter "
                     f"{geometry_options['tube_diameter']:g} m and leg length {geometry_options['hairpin_length']:g} m"
                     " (area per hairpin π·d·2L, bends not counted); costed on the area needed.")
    net = replace(sized, notes=tuple(notes), solves=tuple(solves), unit_target=plan.unit_target)
    check_network(net, streams, utilities)
    return net
