"""Evolution of a designed network: small units removed by loop breaking and path relaxation.

A network designed for maximum energy recovery often keeps units too small to be worth building.  The
evolution of Linnhoff & Hindmarsh (1983) removes them one at a time:

1. **loop breaking** — a *heat-load loop* is a closed path of units through streams and utilities (on
   the multigraph whose nodes are the process streams and utilities and whose edges are the units).
   Adding and subtracting the same load alternately around it keeps every stream's balance and every
   utility duty; shifting the load of the unit to remove around a loop that holds it removes it at no
   energy cost;
2. **utility path** — a unit on no usable loop is removed along a path of units from a hot utility to a
   cold utility through it: its load goes to the heater and the cooler at the path's ends (an energy
   penalty of its whole duty in each utility);
3. **path relaxation** — the shift changes the temperatures along the streams it touches; where a unit
   no longer keeps ΔTmin, load is shifted back along a utility path (heater and cooler up by x, the
   units between them alternately down and up by x), with the smallest x that restores ΔTmin
   everywhere (bisection; the energy penalty is x in each utility).

Of every loop or path that removes a unit (with its relaxation) the one of the smallest energy penalty
is taken.  Every step is reported with the unit removed, the loop or path used and its penalty.  After
every shift the temperatures are recomputed along each stream from the order of its units (kept from
the design), the network is sized again and costed (:func:`heatloom.network.sizing.size_network`, the segment-wise
counter-current sizing of :func:`heatloom.network.design_mer`) and checked
(:func:`heatloom.network.structure.check_network`).

Streams split into parallel branches are walked block by block: the branches of a split start together
and keep their shares of the flow (shared among the branches left when one goes), each ending where its
own duty takes it (the mixing need not be isothermal after a shift).  A stream whose parallel branches do
not carry its whole flow is not evolved: a unit on it, or a loop or path through it, is refused and the
notes name the unit.

References
----------
Linnhoff, B., Hindmarsh, E. (1983) The pinch design method for heat exchanger networks. Chem. Eng. Sci.
38(5), 745–763.
Su, J.L., Motard, R.L. (1984) Evolutionary synthesis of heat-exchanger networks. Comput. Chem. Eng. 8(2),
67–80.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace

from ..errors import InputError
from ..model import Stream, StreamTable, Utility
from ..model.costs import CostSettings
from ..pinch.utilities import ideal_utilities
from ..validation import check_dt_min
from .sizing import size_network
from .structure import (
    Cooler,
    Exchanger,
    Heater,
    Network,
    approach_violations,
    check_network,
    stream_temperature,
)

__all__ = ["EvolutionStep", "Evolution", "evolve", "unit_labels"]

_ROUTE_CUTOFF = 12
"""Longest loop or utility path tried, in units [-]."""
_ROUTES_PER_UNIT = 400
"""Most loops and paths found for one unit, and relaxation paths for one shift [-]."""
_ROUTES_TRIED = 40
"""Most loops and paths tried for one unit, shortest first [-]."""
_ROUTES_RELAXED = 6
"""Most of them relaxed when they break ΔTmin [-]."""
_RELAXATION_PATHS = 8
"""Most utility paths tried to relax one shift, shortest first [-]."""


def unit_labels(network: Network) -> list[tuple[str, object]]:
    """The units of a network with their names (exchangers, heaters, coolers in the network's order); a
    :class:`~heatloom.network.structure.Network` names every unit when it is built."""
    return [(u.name, u) for u in (*network.exchangers, *network.heaters, *network.coolers)]


def _describe(label: str, unit, duty: float | None = None) -> str:
    hot, cold = unit.sides
    d = unit.duty if duty is None else duty
    return f"{label} ({hot}→{cold}, {d:.4g} kW)"


# --------------------------------------------------------------------------------------------------
# results


@dataclass(frozen=True)
class EvolutionStep:
    """One unit removed from the network.

    Attributes
    ----------
    removed : tuple of str
        The units that went (label, sides and duty before the step); the first is the one aimed at, more
        when a shift took another unit to zero.
    reason : str
        Why it was aimed at (its duty or area below the limit, or the smallest unit of a loop).
    via : str
        ``"loop"`` or ``"utility path"``.
    route : tuple of str
        The units of the loop or path, in order, with the load change of each (``+`` / ``−`` kW).
    relaxation : tuple of str
        The units of the relaxation path with their load change; empty when none was needed.
    relaxed : float
        Load shifted back along the relaxation path to restore ΔTmin [kW].
    hot_penalty, cold_penalty : float
        Extra hot and cold utility of the step [kW].
    units_after : int
        Units of the network after the step [-].
    """

    removed: tuple[str, ...]
    reason: str
    via: str
    route: tuple[str, ...]
    relaxation: tuple[str, ...]
    relaxed: float
    hot_penalty: float
    cold_penalty: float
    units_after: int

    def describe(self) -> str:
        """The step in one line of plain words."""
        text = (f"removed {', '.join(self.removed)} ({self.reason}) along a {self.via}: "
                f"{' · '.join(self.route)}")
        if self.relaxation:
            text += f"; ΔTmin restored by relaxing {self.relaxed:.4g} kW along {' · '.join(self.relaxation)}"
        return text + (f"; energy penalty +{self.hot_penalty:.4g} kW hot, +{self.cold_penalty:.4g} kW cold utility; "
                       f"{self.units_after} units")

    def to_dict(self) -> dict:
        return {"removed": list(self.removed), "reason": self.reason, "via": self.via, "route": list(self.route),
                "relaxation": list(self.relaxation), "relaxed": self.relaxed, "hot_penalty": self.hot_penalty,
                "cold_penalty": self.cold_penalty, "units_after": self.units_after}


@dataclass(frozen=True, eq=False)
class Evolution:
    """The evolved network and the steps that led to it (see :func:`evolve`).

    Attributes
    ----------
    network : Network
        Sized, costed and checked.
    original : Network
        The network evolved.
    steps : tuple of EvolutionStep
    notes : tuple of str
        Units aimed at but kept, and why.
    """

    network: Network
    original: Network
    steps: tuple[EvolutionStep, ...]
    notes: tuple[str, ...] = ()

    @property
    def hot_penalty(self) -> float:
        """Extra hot utility of all steps [kW]."""
        return self.network.hot_utility - self.original.hot_utility

    @property
    def cold_penalty(self) -> float:
        """Extra cold utility of all steps [kW]."""
        return self.network.cold_utility - self.original.cold_utility

    def to_dict(self) -> dict:
        return {"steps": [s.to_dict() for s in self.steps], "hot_penalty": self.hot_penalty,
                "cold_penalty": self.cold_penalty, "units_before": self.original.units,
                "units_after": self.network.units, "notes": list(self.notes)}


# --------------------------------------------------------------------------------------------------
# the state being evolved: duties of the original units, the order of the units along every stream


class _Overrun(Exception):
    """A split branch would take its stream past its supply or target temperature."""


@dataclass
class _State:
    """Labels → original units, current duties, the blocks along every stream, the streams refused."""

    units: dict[str, object]
    duties: dict[str, float]
    order: dict[str, list[list[str]]]     # process stream → blocks from its supply end (one unit, or parallel branches)
    fractions: dict[tuple[str, str], float]   # (label, process stream) → share of the stream's flow [-]
    split: dict[str, str]                 # process stream not evolved → why (its parallel branches)
    streams: dict[str, Stream]
    utilities: dict[str, Utility]
    eps: float

    @classmethod
    def of(cls, network: Network, streams: StreamTable, utilities: Sequence[Utility]) -> _State:
        units = dict(unit_labels(network))
        by_name = {s.name: s for s in streams}
        on: dict[str, list[tuple[str, float, float]]] = {s.name: [] for s in streams}   # label, inlet, fraction
        fractions: dict[tuple[str, str], float] = {}
        for label, x in units.items():
            hot, cold = x.sides
            if hot in on:
                fractions[(label, hot)] = float(getattr(x, "hot_fraction", 1.0))
                on[hot].append((label, x.hot_in, fractions[(label, hot)]))
            if cold in on:
                fractions[(label, cold)] = float(getattr(x, "cold_fraction", 1.0))
                on[cold].append((label, x.cold_in, fractions[(label, cold)]))
        order: dict[str, list[list[str]]] = {}
        split: dict[str, str] = {}
        for name, members in on.items():
            s = by_name[name]
            tol = 1e-6 * max(abs(s.supply_temperature), abs(s.target_temperature), 1.0)
            blocks: list[list[str]] = []
            branches: dict[float, list[str]] = {}
            for label, t_in, f in members:
                if f >= 1.0 - 1e-9:
                    blocks.append([label])
                    continue
                key = next((t for t in branches if abs(t - t_in) <= tol), t_in)
                branches.setdefault(key, []).append(label)
            for labels in branches.values():
                total = sum(fractions[(k, name)] for k in labels)
                if abs(total - 1.0) > 1e-6:
                    split.setdefault(name, f"its parallel branches from unit {labels[0]} carry {total:.4g} of its "
                                           "flow, not all of it")
                blocks.append(labels)
            first = {tuple(b): units[b[0]] for b in blocks}
            if s.is_hot:   # from the supply (hot) end: hottest inlet first, lower stage first
                blocks.sort(key=lambda b: (-first[tuple(b)].hot_in, first[tuple(b)].stage))
            else:          # from the supply (cold) end: coldest inlet first, higher stage first
                blocks.sort(key=lambda b: (first[tuple(b)].cold_in, -first[tuple(b)].stage))
            order[name] = blocks
        scale = max((s.duty for s in streams), default=1.0)
        return cls(units, {k: float(x.duty) for k, x in units.items()}, order, fractions, split, by_name,
                   {u.name: u for u in utilities}, 1e-7 * max(scale, 1.0))

    def live(self, duties: dict[str, float] | None = None) -> list[str]:
        d = self.duties if duties is None else duties
        return [k for k in self.units if d[k] > self.eps]

    def network(self, duties: dict[str, float], template: Network) -> Network:
        """The unsized network at these duties, temperatures walked along every stream evolved.

        Blocks follow one another from the stream's supply end; the branches of a split block start at the
        block's inlet and keep their shares of the flow (renormalised over the branches left), each ending
        where its own duty takes it; the mixed outlet follows the block's total duty.  Raises ``_Overrun``
        when a branch would go past the stream's supply or target temperature.
        """
        temps: dict[tuple[str, str], tuple[float, float]] = {}
        shares: dict[tuple[str, str], float] = {}
        for name, blocks in self.order.items():
            if name in self.split:
                continue
            s = self.streams[name]
            q = 0.0
            for block in blocks:
                live = [k for k in block if duties[k] > self.eps]
                if not live:
                    continue
                total = sum(self.fractions[(k, name)] for k in live)
                t_in = stream_temperature(s, q)
                for k in live:
                    f = 1.0 if len(live) == 1 else self.fractions[(k, name)] / total
                    end = q + duties[k] / f
                    if end > s.duty + self.eps:
                        raise _Overrun(name)
                    t_out = s.target_temperature if end >= s.duty - self.eps else stream_temperature(s, end)
                    temps[(k, name)] = (t_in, t_out)
                    shares[(k, name)] = f
                q += sum(duties[k] for k in live)
        groups: dict[str, list] = {"exchangers": [], "heaters": [], "coolers": []}
        for k in self.live(duties):
            x = self.units[k]
            hot, cold = x.sides
            change: dict[str, float] = {"duty": duties[k], "area": None, "cost": None, "u": None, "lmtd": None}
            if (k, hot) in temps:
                change["hot_in"], change["hot_out"] = temps[(k, hot)]
                change["hot_fraction"] = shares[(k, hot)]
            if (k, cold) in temps:
                change["cold_in"], change["cold_out"] = temps[(k, cold)]
                change["cold_fraction"] = shares[(k, cold)]
            group = "heaters" if isinstance(x, Heater) else "coolers" if isinstance(x, Cooler) else "exchangers"
            groups[group].append(replace(x, **change))
        return replace(template, exchangers=tuple(groups["exchangers"]), heaters=tuple(groups["heaters"]),
                       coolers=tuple(groups["coolers"]))

    def graph(self, duties: dict[str, float], *, virtual: bool):
        """The stream/utility multigraph of the live units (edge key = label); with ``virtual``, one edge
        ``~hot utility~cold utility`` between every hot and every cold utility (to turn a utility path into a
        loop)."""
        import networkx as nx

        g = nx.MultiGraph()
        for k in self.live(duties):
            g.add_edge(*self.units[k].sides, key=k)
        if virtual:
            hot = [u for u in self.utilities.values() if u.is_hot and u.name in g]
            cold = [u for u in self.utilities.values() if not u.is_hot and u.name in g]
            for h in hot:
                for c in cold:
                    g.add_edge(h.name, c.name, key=f"~{h.name}~{c.name}")
        return g


# --------------------------------------------------------------------------------------------------
# evolution


def evolve(network: Network, streams: StreamTable, utilities: Sequence[Utility] | None = None,
           dt_min: float | None = None, *, min_duty: float | None = None, min_area: float | None = None,
           break_loops: bool = False, costs: CostSettings | None = None,
           default_film_coefficient: float | None = None, contributions: bool = True,
           max_steps: int = 100, exchanger_type=None, geometry_options=None,
           required: Iterable[tuple[str, str]] = ()) -> Evolution:
    """Remove the units of a network below a duty or an area, breaking loops and relaxing paths.

    Units are taken smallest duty first.  For each, every heat-load loop and every utility path through it
    (up to 12 units long) is tried: its load is shifted around the loop or onto the path's heater and
    cooler, the temperatures are walked again along every stream in the design's order of its units and,
    where a unit then breaks ΔTmin, load is shifted back along the utility path that restores it with the
    smallest penalty (path relaxation, by bisection).  The loop or path of the smallest energy penalty is
    taken; a unit no loop or path can remove keeping ΔTmin is kept, and the notes say so.

    Parameters
    ----------
    network : Network
        A designed network (:func:`heatloom.network.design_mer` or :func:`heatloom.network.design_tac`).
    streams : StreamTable
    utilities : sequence of Utility, optional
        The utilities of the design; when omitted, :func:`heatloom.pinch.utilities.ideal_utilities` at
        ``dt_min`` (as the design assumes them).
    dt_min : float, optional
        Minimum approach every unit keeps [K] (the EMAT for a lowest-TAC design); default the network's.
    min_duty : float, optional
        Remove units of a smaller duty [kW].
    min_area : float, optional
        Remove units of a smaller area [m²].
    break_loops : bool, optional
        Also remove the smallest unit of every loop, as long as one can go (the fewest units) [-].
    costs : CostSettings, optional
        Cost laws to size and cost the evolved network with; the defaults when omitted.
    default_film_coefficient : float, optional
        h assumed where a stream or utility has none [kW/(m²·K)].
    contributions : bool, optional
        Streams' own ΔTmin contributions in the approach each unit needs (the sum of its sides', a side
        without one counting ``dt_min``/2), as both designs keep them (a lowest-TAC design: with ``dt_min``
        its EMAT); False: every unit needs ``dt_min`` alone [-].
    max_steps : int, optional
        Most units removed [-].
    exchanger_type, geometry_options : optional
        Size the evolved units as this kind, as the design did (:func:`heatloom.network.sizing.size_network`);
        counter-current when omitted.
    required : iterable of (str, str), optional
        (hot, cold) name pairs the design was required to match: a step that would leave one of them
        without a unit is not taken (the unit is kept, and the notes say why).

    Returns
    -------
    Evolution
        The network passes :func:`heatloom.network.structure.check_network` at ``dt_min``.

    Raises
    ------
    InputError
        ``min_duty`` or ``min_area`` not > 0, or a film coefficient missing with no default.

    Examples
    --------
    Sinnott's four-stream problem (C&R Vol. 6, Table 3.6) designed at ΔTmin 10 K has a loop: match 2→3 above
    and below the pinch.  Removing the 30 kW unit below the pinch costs 15 kW of each utility.

    >>> from heatloom.model import StreamTable
    >>> from heatloom.network import design_mer
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5], film_coefficient=[0.5] * 4)
    >>> ev = evolve(design_mer(s, 10.0), s, min_duty=40.0)
    >>> [round(x.hot_penalty, 6) for x in ev.steps], ev.original.units - ev.network.units
    ([15.0], 1)
    """
    for value, what in ((min_duty, "min_duty [kW]"), (min_area, "min_area [m²]")):
        if value is not None and not value > 0:
            raise InputError(f"{what} must be > 0, got {value!r}")
    dt = check_dt_min(network.dt_min if dt_min is None else dt_min)
    if utilities is None:
        utilities = ideal_utilities(streams, dt)
    utilities = list(utilities)
    state = _State.of(network, streams, utilities)

    def violations(duties: dict[str, float]) -> list[str]:
        try:
            trial = state.network(duties, network)
        except _Overrun as e:
            return [f"a split branch of stream '{e}' would pass its supply or target temperature"]
        return approach_violations(trial, streams, utilities, dt_min=dt, contributions=contributions)

    def violating(duties: dict[str, float]) -> set[str]:
        """Labels of the units below ΔTmin at these duties (every unit when a branch overruns)."""
        try:
            trial = state.network(duties, network)
        except _Overrun:
            return set(state.live(duties))
        units = (*trial.exchangers, *trial.heaters, *trial.coolers)
        return {k for k, u in zip(state.live(duties), units)
                if approach_violations(replace(trial, exchangers=(u,) if isinstance(u, Exchanger) else (),
                                               heaters=(u,) if isinstance(u, Heater) else (),
                                               coolers=(u,) if isinstance(u, Cooler) else ()),
                                       streams, utilities, dt_min=dt, contributions=contributions)}

    def sized(duties: dict[str, float]) -> Network:
        return size_network(state.network(duties, network), streams, utilities, costs=costs,
                            default_film_coefficient=default_film_coefficient, exchanger_type=exchanger_type,
                            geometry_options=geometry_options)

    def area_of(current: Network) -> dict[str, float | None]:
        live = state.live()
        return {k: x.area for k, (_, x) in zip(live, unit_labels(current))}

    required = {tuple(pair) for pair in required} & {state.units[k].sides for k in state.live()}

    def unmatched(duties: dict[str, float]) -> list[tuple[str, str]]:
        """Required pairs with no unit left at these duties."""
        return sorted(required - {state.units[k].sides for k in state.live(duties)})

    current = sized(state.duties)
    steps: list[EvolutionStep] = []
    notes: list[str] = []
    kept: set[str] = set()
    # every check to check_network's tolerance (1e-6 K): a unit at ΔTmin to within a solver's noise keeps it
    before = violations(state.duties)
    if before:
        notes.append("the network does not keep ΔTmin in every unit before evolution: not evolved (" +
                     "; ".join(before) + ")")
        max_steps = 0
    for _ in range(max_steps):
        areas = area_of(current)
        aims: list[tuple[float, str, str]] = []
        for k in state.live():
            d = state.duties[k]
            if min_duty is not None and d < min_duty:
                aims.append((d, k, f"duty {d:.4g} kW < {min_duty:g} kW"))
            elif min_area is not None and areas.get(k) is not None and areas[k] < min_area:
                aims.append((d, k, f"area {areas[k]:.4g} m² < {min_area:g} m²"))
        if break_loops and not aims:
            for loop in _loops(state):
                k = min(loop, key=lambda x: state.duties[x])
                aims.append((state.duties[k], k, "smallest unit of a loop"))
        aims = sorted((a for a in aims if a[1] not in kept), key=lambda a: (a[0], a[1]))
        if not aims:
            break
        _, label, reason = aims[0]
        best, why = _removal(state, label, violations, violating)
        if best is not None and unmatched(best[0]):
            best, why = None, "it would leave the required match " + ", ".join(
                f"{h}:{c}" for h, c in unmatched(best[0])) + " without a unit"
        if best is None:
            kept.add(label)
            notes.append(f"{_describe(label, state.units[label], state.duties[label])} kept ({reason}): {why}")
            continue
        duties, via, route, relaxation, relaxed = best
        before = (current.hot_utility, current.cold_utility)
        gone = tuple(_describe(k, state.units[k], state.duties[k]) for k in sorted(
            (k for k in state.live() if duties[k] <= state.eps), key=lambda k: k != label))
        state.duties = duties
        current = sized(duties)
        steps.append(EvolutionStep(gone, reason, via, route, relaxation, relaxed,
                                   current.hot_utility - before[0], current.cold_utility - before[1], current.units))
    final_notes = list(network.notes)
    if steps:
        final_notes.append(f"evolved: {len(steps)} step(s) removed {network.units - current.units} unit(s) "
                           f"(loop breaking and path relaxation, Linnhoff & Hindmarsh 1983); energy penalty "
                           f"+{current.hot_utility - network.hot_utility:.4g} kW hot, "
                           f"+{current.cold_utility - network.cold_utility:.4g} kW cold utility; units resized "
                           f"({'as ' + getattr(exchanger_type, 'value', str(exchanger_type)) if exchanger_type else 'counter-current'})"
                           " and recosted")
    final_notes += notes
    final = replace(current, notes=tuple(final_notes), dt_min=float(dt))
    check_network(final, streams, utilities, dt_min=dt, contributions=contributions)
    return Evolution(final, network, tuple(steps), tuple(notes))


def _loops(state: _State) -> list[list[str]]:
    """Independent loops of the live units (labels), utilities as nodes."""
    import networkx as nx

    g = nx.Graph()
    for k in state.live():
        hot, cold = state.units[k].sides
        g.add_edge(("side", hot), ("unit", k))
        g.add_edge(("unit", k), ("side", cold))
    return [[n[1] for n in cycle if n[0] == "unit"] for cycle in nx.cycle_basis(g)]


def _signed(route: Sequence[str], sign: Sequence[int], amount: float, state: _State) -> tuple[str, ...]:
    out = []
    for k, s in zip(route, sign):
        if k.startswith("~"):
            continue
        hot, cold = state.units[k].sides
        out.append(f"{k} ({hot}→{cold}) {'+' if s > 0 else '−'}{amount:.4g} kW")
    return tuple(out)


def _removal(state: _State, label: str, violations, violating):
    """The least-penalty way to remove unit ``label``: (duties, via, route, relaxation, relaxed), or
    (None, why not).

    Loops and utility paths through the unit are found first (at most :data:`_ROUTES_PER_UNIT`), then tried
    loops first and shortest first: at most :data:`_ROUTES_TRIED` of them, and path relaxation after the
    first :data:`_ROUTES_RELAXED` that break ΔTmin.  A loop that keeps ΔTmin everywhere costs no energy and
    ends the search.
    """
    import itertools

    import networkx as nx

    x = state.units[label]
    hot, cold = x.sides
    for side in (hot, cold):
        if side in state.split:
            return None, f"stream '{side}' is not evolved: {state.split[side]}"
    q = state.duties[label]
    g = state.graph(state.duties, virtual=True)
    g.remove_edge(hot, cold, key=label)
    routes = []
    for path in itertools.islice(nx.all_simple_edge_paths(g, cold, hot, cutoff=_ROUTE_CUTOFF - 1), _ROUTES_PER_UNIT):
        route = [label] + [e[2] for e in path]
        virtual = sum(k.startswith("~") for k in route)
        if virtual > 1:
            continue
        sign = [-1 if i % 2 == 0 else 1 for i in range(len(route))]
        duties = dict(state.duties)
        ok = True
        for k, s in zip(route, sign):
            if k.startswith("~"):
                continue
            if any(n in state.split for n in state.units[k].sides):
                ok = False
                break
            duties[k] += s * q
            if duties[k] < -state.eps:
                ok = False
                break
            duties[k] = max(duties[k], 0.0)
        if ok:
            routes.append((virtual, len(route), route, sign, duties))
    if not routes:
        return None, "it is on no loop and on no path between a hot and a cold utility that can take its load"
    routes.sort(key=lambda r: (r[0], r[1]))
    candidates = []
    relaxed_routes = 0
    for virtual, length, route, sign, duties in routes[:_ROUTES_TRIED]:
        via = "utility path" if virtual else "loop"
        shown = _signed(route, sign, q, state)
        if not violations(duties):
            candidates.append((_penalty(state, duties), length, duties, via, shown, (), 0.0))
            if not virtual:
                break   # a loop that keeps ΔTmin: no energy penalty, nothing can do better
            continue
        if relaxed_routes >= _ROUTES_RELAXED:
            continue
        relaxed_routes += 1
        relaxed = _relax(state, duties, violations, violating)
        if relaxed is not None:
            duties2, path2, sign2, amount = relaxed
            candidates.append((_penalty(state, duties2), length, duties2, via, shown,
                               _signed(path2, sign2, amount, state), amount))
    if not candidates:
        return None, "no loop or utility path through it can take its load and keep ΔTmin in every unit"
    best = min(candidates, key=lambda c: (c[0], c[1]))
    return best[2:], ""


def _penalty(state: _State, duties: dict[str, float]) -> float:
    """Total utility of these duties [kW] (hot + cold: the objective of the choice between routes)."""
    return sum(d for k, d in duties.items() if not isinstance(state.units[k], Exchanger))


def _relax(state: _State, duties: dict[str, float], violations, violating):
    """Path relaxation: the utility path and the smallest load x shifted along it (heater and cooler +x,
    the units between alternately −x and +x) that leaves no unit below ΔTmin; None when no path does.

    Only paths through a stream of a unit that breaks ΔTmin can restore it; the shortest
    :data:`_RELAXATION_PATHS` of them are tried, x by bisection.
    """
    import itertools

    import networkx as nx

    g = state.graph(duties, virtual=False)
    hot_u = [u.name for u in state.utilities.values() if u.is_hot and u.name in g]
    cold_u = [u.name for u in state.utilities.values() if not u.is_hot and u.name in g]
    bad = violating(duties)
    touched = {n for k in bad for n in state.units[k].sides if n in state.streams}
    paths = []
    for h in hot_u:
        for c in cold_u:
            for path in itertools.islice(nx.all_simple_edge_paths(g, h, c, cutoff=_ROUTE_CUTOFF), _ROUTES_PER_UNIT):
                route = [e[2] for e in path]
                sides = {n for k in route for n in state.units[k].sides if n in state.streams}
                if sides & set(state.split) or (touched and not sides & touched):
                    continue
                paths.append(route)
    paths.sort(key=len)
    best = None
    for route in paths[:_RELAXATION_PATHS]:
        sign = [1 if i % 2 == 0 else -1 for i in range(len(route))]
        down = [duties[k] for k, s in zip(route, sign) if s < 0]
        top = min(down) if down else sum(s.duty for s in state.streams.values())

        def shifted(amount: float, route=route, sign=sign) -> dict[str, float]:
            d = dict(duties)
            for k, s in zip(route, sign):
                d[k] = max(d[k] + s * amount, 0.0)
            return d

        if best is not None and top >= best[3] and violations(shifted(best[3])):
            continue   # cannot beat the best so far
        if violations(shifted(top)):
            continue
        lo, hi = 0.0, top
        for _ in range(50):
            if hi - lo <= 1e-9 * max(top, 1.0):
                break
            mid = 0.5 * (lo + hi)
            if violations(shifted(mid)):
                lo = mid
            else:
                hi = mid
        if down and top - hi <= 10 * state.eps + 1e-9 * top:
            hi = top   # the relaxation empties a unit: take it out exactly (no residue below the tolerance)
        if best is None or hi < best[3]:
            best = (shifted(hi), route, sign, hi)
    return best
