"""The network pinch of an existing network: the exchanger that stops more heat recovery along utility paths.

After Asante & Zhu (1996, 1997), simplified: heat is shifted along *utility paths* — a heater, a chain of
exchangers joined by process streams, a cooler (Linnhoff & Hindmarsh 1983) — with the areas free, so the
temperatures follow from energy balances alone; a shift stops when an exchanger's approach reaches the
minimum allowed or a duty reaches zero.  The exchanger that then blocks the most paths is the network
pinch (:func:`network_pinch`); it is part of :func:`heatloom.retrofit.diagnose.diagnose`.

References
----------
Asante, N.D.K., Zhu, X.X. (1996) An automated approach for heat exchanger network retrofit featuring
minimal topology modifications. Computers & Chemical Engineering 20 (Suppl.), S7-S12 — from memory,
unverified.
Asante, N.D.K., Zhu, X.X. (1997) An automated and interactive approach for heat exchanger network
retrofit. Transactions of the IChemE 75(A), 349-360 (the network pinch) — citation from memory, unverified.
Linnhoff, B., Hindmarsh, E. (1983) The pinch design method for heat exchanger networks. Chemical
Engineering Science 38(5), 745-763 (utility paths and loops).

Results are screening estimates; retrofit changes must be checked against the plant's data and local
codes by qualified, licensed engineers.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import asdict, dataclass

import numpy as np
from scipy.optimize import brentq

from ..errors import InputError
from ..model.existing import UnitRole
from ..network.structure import smallest_approach
from ..validation import non_negative
from .existing import ExistingNetwork
from .flowtree import flow_steps, walk_steps
from .profiles import temperature_after
from .simulate import Simulation

__all__ = ["PathShift", "NetworkPinch", "network_pinch"]


@dataclass(frozen=True)
class PathShift:
    """Load shifted along one utility path until something stops it (see :func:`network_pinch`).

    Attributes
    ----------
    heater, cooler : str
        The path's ends.
    exchangers : tuple of str
        Exchangers along the path from the heater's stream to the cooler's.
    signs : tuple of int
        +1 where the exchanger's duty grows, −1 where it falls.
    shift : float
        Heat that can be shifted (hot and cold utility both fall by as much) [kW].
    limit : str
        The unit that stops the shift.
    reason : str
        ``"approach"`` (its minimum approach reaches the allowed one) or ``"duty"`` (its duty reaches 0:
        it could be removed).
    """

    heater: str
    cooler: str
    exchangers: tuple[str, ...]
    signs: tuple[int, ...]
    shift: float
    limit: str
    reason: str

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True, eq=False)
class NetworkPinch:
    """Approaches of the exchangers and what limits more recovery (see :func:`network_pinch`).

    Attributes
    ----------
    min_approach : float
        Smallest approach allowed [K] (exchanger minimum approach temperature).
    approaches : dict
        Exchanger name → its smallest approach in the simulated network [K].
    paths : tuple of PathShift
        Every utility path of the simulated network, each shifted on its own, largest shift first.
    moves : tuple of PathShift
        The shifts made one after the other, each time along the path that allowed the most.
    recovery : float
        Extra heat recovery of those moves [kW] (hot and cold utility both fall by as much).
    pinching : tuple of str
        Exchangers whose approach blocks a utility path after the moves.
    network_pinch : str or None
        The exchanger that blocks the most utility paths after the moves; None when no path is left
        blocked by an approach (every path ended because a heater, cooler or exchanger duty reached zero:
        more recovery needs a new match, not a bigger exchanger).
    notes : tuple of str
    """

    min_approach: float
    approaches: dict[str, float]
    paths: tuple[PathShift, ...]
    moves: tuple[PathShift, ...]
    recovery: float
    pinching: tuple[str, ...]
    network_pinch: str | None
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"min_approach": self.min_approach, "approaches": dict(self.approaches),
                "paths": [p.to_dict() for p in self.paths], "moves": [p.to_dict() for p in self.moves],
                "recovery": self.recovery, "pinching": list(self.pinching), "network_pinch": self.network_pinch,
                "notes": list(self.notes)}


def _walk(net: ExistingNetwork, duties: dict[str, float]) -> dict[str, tuple[float, float, float, float]]:
    """Terminal temperatures of every unit for given duties, areas free (energy balances only)."""
    ends: dict[tuple[str, str], tuple[float, float]] = {}
    for s in net.streams:
        t = s.supply_temperature
        for k, group in enumerate(net.stages(s.name), start=1):   # a split's branches, each with its share
            steps = flow_steps(group, s.name, k)
            temps = walk_steps(s, steps, t, lambda u: duties[u.name])
            for step in steps:
                if step.unit is not None:
                    side = "hot" if step.unit.hot == s.name else "cold"
                    ends[(step.unit.name, side)] = (temps[step.inlet], temps[step.key])
            t = temperature_after(s, t, sum(duties[u.name] for u in group))
    out = {}
    for u in net.units:
        h = ends.get((u.name, "hot"))
        c = ends.get((u.name, "cold"))
        if h is None:
            util = net.unit_side(u, u.hot)
            h = (util.supply_temperature, util.target_temperature)
        if c is None:
            util = net.unit_side(u, u.cold)
            c = (util.supply_temperature, util.target_temperature)
        out[u.name] = (h[0], h[1], c[0], c[1])
    return out


def _approaches(net: ExistingNetwork, duties: dict[str, float], names: Sequence[str]) -> dict[str, float]:
    temps = _walk(net, duties)
    return {n: smallest_approach(net.side(net.unit(n).hot), net.side(net.unit(n).cold), *temps[n]) for n in names}


def _paths(net: ExistingNetwork, duties: dict[str, float], tol: float, max_paths: int):
    """Utility paths (heater, cooler, exchangers) through the stream graph; and whether any were cut off."""
    import networkx as nx

    g = nx.MultiGraph()
    g.add_nodes_from(s.name for s in net.streams)
    for u in net.exchangers:
        g.add_edge(u.hot, u.cold, key=u.name)
    out = []
    for heater in net.heaters:
        for cooler in net.coolers:
            if duties[heater.name] <= tol or duties[cooler.name] <= tol:
                continue
            for path in nx.all_simple_edge_paths(g, heater.cold, cooler.hot):
                if len(out) >= max_paths:
                    return out, True
                out.append((heater.name, cooler.name, tuple(k for _, _, k in path)))
    return out, False


def network_pinch(simulation: Simulation, min_approach: float, *, max_paths: int = 200,
                  tolerance: float = 1e-6, max_moves: int = 100) -> NetworkPinch:
    """Exchanger approaches and the exchanger that limits further heat recovery (after Asante & Zhu 1997).

    The network pinch of Asante & Zhu is the exchanger whose approach reaches the minimum allowed when the
    existing topology is pushed to its largest heat recovery.  **Simplified here**: heat is shifted along
    utility paths — a heater, a chain of exchangers joined by streams, a cooler, found with networkx —
    raising and lowering the exchangers' duties in turn (+x, −x, ..., +x) so that the heater and the cooler
    both lose x while every other duty stays; areas are free (temperatures follow from energy balances
    alone, exact for segmented streams).  A shift stops when a unit's approach reaches ``min_approach``
    (a unit already closer may not get closer than it is; a heater or cooler must keep a positive
    difference) or a duty reaches zero.  Paths are taken greedily, the one allowing the largest shift
    first, until no path can move heat; the exchanger that then blocks the most paths is the network pinch.
    Loops (which shift heat without changing utilities) and simultaneous moves along several paths are not
    used, so the recovery found is a lower bound of what the topology allows with unlimited area.

    Parameters
    ----------
    simulation : Simulation
    min_approach : float
        Smallest approach allowed in an exchanger [K] (EMAT), > 0.
    max_paths : int, optional
        Paths examined at most in each round (the notes say when there were more).
    tolerance : float, optional
        Precision of the shifts, relative to the largest duty [-].
    max_moves : int, optional
        Greedy moves at most.

    Returns
    -------
    NetworkPinch

    Examples
    --------
    H1 170 → 50 °C (2 kW/K) and C1 50 → 130 °C (2.5 kW/K); E1 carries 100 kW (H1 170 → 120 °C, C1 50 → 90 °C),
    a heater and a cooler the rest.  Shifting x kW along heater → E1 → cooler lowers the cold-end approach
    of E1, (120 − x/2) − 50 = 70 − x/2 K, faster than its hot end, 170 − (90 + x/2.5) = 80 − 0.4·x K.  With
    30 K allowed the cold end stops the shift at x = 80 kW, before the heater's 100 kW runs out: E1 is the
    network pinch.  With 10 K allowed the heater runs out first (x = 100 kW, E1 then at 20 K): no exchanger
    limits recovery, a new match is needed for more.

    >>> from heatloom.model import StreamTable, Utility
    >>> from heatloom.model.existing import ExistingUnit
    >>> from heatloom.retrofit.simulate import simulate
    >>> s = StreamTable.from_arrays(["H1", "C1"], [170, 50], [50, 130], [2.0, 2.5])
    >>> u = [Utility("steam", 180, 179, 100.0), Utility("water", 20, 30, 10.0)]
    >>> sim = simulate(ExistingNetwork(s, [ExistingUnit("E1", "H1", "C1", duty=100.0, u=0.5),
    ...                                    ExistingUnit("heater", "steam", "C1", duty=100.0),
    ...                                    ExistingUnit("cooler", "H1", "water", duty=140.0)], u))
    >>> p = network_pinch(sim, 30)
    >>> p.network_pinch, round(p.recovery, 3), p.paths[0].reason
    ('E1', 80.0, 'approach')
    >>> q = network_pinch(sim, 10)
    >>> q.network_pinch, round(q.recovery, 3), q.paths[0].reason, q.paths[0].limit
    (None, 100.0, 'duty', 'heater')
    """
    emat = non_negative(min_approach, "minimum approach", "K")
    if not emat > 0:
        raise InputError(f"minimum approach must be > 0 K, got {min_approach!r}")
    net = simulation.network
    duties = {u.name: u.duty for u in simulation.units}
    exchangers = [u.name for u in simulation.units if u.role is UnitRole.EXCHANGER]
    current = {u.name: u.min_approach for u in simulation.units}
    floors = {n: (min(emat, a) if n in exchangers else min(0.0, a)) for n, a in current.items()}
    tol = tolerance * max([abs(q) for q in duties.values()] + [1.0])
    notes: list[str] = []
    cut = False

    def round_of(state):
        nonlocal cut
        found, more = _paths(net, state, tol, max_paths)
        cut = cut or more
        return [_shift_path(net, state, h, c, names, floors, tol) for h, c, names in found]

    first = sorted(round_of(duties), key=lambda p: -p.shift)
    state, moves, last = dict(duties), [], first
    for _ in range(max_moves):
        best = max(last, key=lambda p: p.shift, default=None)
        if best is None or best.shift <= tol:
            break
        moves.append(best)
        state[best.heater] -= best.shift
        state[best.cooler] -= best.shift
        for n, sgn in zip(best.exchangers, best.signs):
            state[n] += sgn * best.shift
        last = round_of(state)
    else:
        notes.append(f"stopped after {max_moves} moves")
    if cut:
        notes.append(f"more than {max_paths} utility paths: only the first {max_paths} were examined")
    if not first:
        notes.append("no utility path (heater → exchangers → cooler): heat recovery cannot grow without a new "
                     "match")
    blocked = [p.limit for p in last if p.reason == "approach" and p.shift <= tol and p.limit in exchangers]
    pinching = tuple(dict.fromkeys(blocked))
    pinch = max(pinching, key=blocked.count) if pinching else None
    if moves and not last:
        notes.append("after the moves no utility path is left (a heater or cooler on every path reached zero): "
                     "more recovery needs a new match")
    below = [n for n in exchangers if current[n] < emat - 1e-9]
    if below:
        notes.append(f"exchangers already below the minimum approach {emat:g} K: {', '.join(below)} (they may "
                     "not get closer)")
    return NetworkPinch(emat, {n: current[n] for n in exchangers}, tuple(first), tuple(moves),
                        float(sum(m.shift for m in moves)), pinching, pinch, tuple(notes))


def _shift_path(net, duties, heater, cooler, names, floors, tol) -> PathShift:
    """How far heat can be shifted along one path from the given duties."""
    signs = tuple(1 if i % 2 == 0 else -1 for i in range(len(names)))
    moved = {heater: -1, cooler: -1}
    for n, sgn in zip(names, signs):
        moved[n] = moved.get(n, 0) + sgn
    touched = {s for n in moved for s in net.unit(n).process_streams}   # only their temperatures move
    checked = [u.name for u in net.units if u.name in moved
               or (u.role is UnitRole.EXCHANGER and touched & set(u.process_streams))]

    def state(x):
        d = dict(duties)
        for n, sgn in moved.items():
            d[n] = duties[n] + sgn * x
        return d

    def margin(x):
        a = _approaches(net, state(x), checked)
        return min(a[n] - floors[n] for n in checked) + 1e-9, a

    falling = [n for n, sgn in moved.items() if sgn < 0]
    x_max = max(0.0, min(duties[n] / -moved[n] for n in falling))
    if margin(0.0)[0] < 0:   # the present state already sits on a floor that the shift tightens
        _, a = margin(min(x_max, tol))
        limit = min(checked, key=lambda n: a[n] - floors[n])
        return PathShift(heater, cooler, names, signs, 0.0, limit, "approach")
    prev = 0.0
    for x in np.linspace(0.0, x_max, 17)[1:]:
        m, _ = margin(x)
        if m < 0:
            root = brentq(lambda y: margin(y)[0], prev, x, xtol=tol)
            _, a = margin(min(x, root + max(tol, 1e-9 * x_max)))
            limit = min(checked, key=lambda n: a[n] - floors[n])
            return PathShift(heater, cooler, names, signs, float(root), limit, "approach")
        prev = x
    limit = min(falling, key=lambda n: duties[n] / -moved[n])
    return PathShift(heater, cooler, names, signs, float(x_max), limit, "duty")


