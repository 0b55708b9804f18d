"""The changes a retrofit can make, their costs, and the candidates tried on an existing network.

Part of :mod:`heatloom.retrofit.options` (which re-exports the public names and describes the method):

* :class:`ChangeKind`, :class:`Change` and :func:`apply_changes` — a modification and the network after a
  set of them;
* :class:`RetrofitCosts` — what each kind of change costs (the ``retrofit`` section of a costs file);
* candidates linearised at the present operating point (added area, new exchangers, resequencing,
  repiping, and a move followed by added area) and the exact evaluation of any set of changes by
  simulation, with the minimum-approach rule and the area check of end heaters and coolers.

Results are screening estimates: every change must be checked against the plant's data sheets, hydraulics,
materials, fouling and local codes by qualified, licensed engineers.
"""

from __future__ import annotations

import enum
import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

from ..equipment.rating import max_effectiveness, ntu_from_effectiveness
from ..equipment.sizing import overall_coefficient
from ..errors import InputError, SolverError, TemperatureCrossError
from ..model import Utility
from ..model.costs import RetrofitCosts, capital_recovery_factor
from ..model.exchangers import ExchangerType
from ..model.existing import ExistingUnit, OperatingMode, UnitRole
from ..network.structure import smallest_approach
from .branches import branch_stream
from .existing import ExistingNetwork, film_coefficient_of
from .profiles import heat_between, mean_cp_between, temperature_after, utility_match_area
from .selection import SetValue
from .simulate import Simulation, simulate

__all__ = [
    "ChangeKind",
    "Change",
    "annuity_factor",
    "apply_changes",
    "Candidate",
    "Evaluation",
    "Evaluator",
    "added_area_candidates",
    "new_exchanger_candidates",
    "move_candidates",
    "touched_streams",
    "APPROACH_TOLERANCE",
    "MAX_1_2_EFFECTIVENESS",
]

APPROACH_TOLERANCE = 1e-6
"""Rounding allowed on a minimum approach check [K]."""
MAX_1_2_EFFECTIVENESS = 0.9
"""Largest fraction of the reachable effectiveness given to an enlarged 1-2 shell unit [-] (the X_P rule of
Ahmad, Linnhoff & Smith 1988, applied to the whole unit; see :data:`heatloom.defaults.X_P`)."""


class ChangeKind(enum.Enum):
    """The modifications a retrofit may make."""

    NEW_EXCHANGER = "new exchanger"
    ADDED_AREA = "added area"
    RESEQUENCE = "resequence"
    REPIPE = "repipe"


def annuity_factor(interest_rate: float, years: float) -> float:
    """Present value of one money unit a year for ``years`` at ``interest_rate`` [year].

    .. math:: (P/A, i, n) = \\frac{1 - (1 + i)^{-n}}{i} = 1/CRF,\\qquad n \\text{ at } i = 0

    (the present-worth factor of a uniform series of compound-interest tables).

    Examples
    --------
    >>> round(annuity_factor(0.10, 10), 4), annuity_factor(0.0, 5)
    (6.1446, 5.0)
    """
    return 1.0 / capital_recovery_factor(interest_rate, years)


@dataclass(frozen=True)
class Change:
    """One modification of an existing network.

    Attributes
    ----------
    kind : ChangeKind
    unit : str
        The unit changed, or the new unit's name.
    area : float
        Area added, or the new unit's area [m²].
    hot, cold : str or None
        New exchanger: its hot and cold stream.
    hot_before, cold_before : str or None
        New exchanger: it goes directly before this unit on its hot / cold stream (None: at the end).
    stream : str or None
        Resequencing: the stream along which the unit moves; repiping: the stream it is moved onto.
    side : str or None
        Repiping: ``"hot"`` or ``"cold"``.
    before : str or None
        Resequencing and repiping: the unit goes directly before this one on ``stream`` (None: at the end).
    u : float or None
        New exchanger, repiped unit: U [kW/(m²·K)].
    investment : float
        [money]
    """

    kind: ChangeKind
    unit: str
    area: float = 0.0
    hot: str | None = None
    cold: str | None = None
    hot_before: str | None = None
    cold_before: str | None = None
    stream: str | None = None
    side: str | None = None
    before: str | None = None
    u: float | None = None
    investment: float = 0.0

    def to_dict(self) -> dict:
        return {"kind": self.kind.value, "unit": self.unit, "area": self.area, "hot": self.hot, "cold": self.cold,
                "hot_before": self.hot_before, "cold_before": self.cold_before, "stream": self.stream,
                "side": self.side, "before": self.before, "U": self.u, "investment": self.investment}


# --------------------------------------------------------------------------------------------------
# applying changes


def _orders(network: ExistingNetwork) -> dict[str, list[list[str]]]:
    """Stream → its positions from the supply end, each the names of its unit or of a split's branches."""
    return {s.name: [[u.name for u in group] for group in network.stages(s.name)] for s in network.streams}


def _insert(order: list[list[str]], name: str, before: str | None) -> None:
    """Put ``name`` at a position of its own directly before the position of ``before`` (a split: before all
    of its branches, never inside it)."""
    if before is None:
        order.append([name])
        return
    for k, group in enumerate(order):
        if before in group:
            order.insert(k, [name])
            return
    raise InputError(f"cannot place '{name}' before '{before}': '{before}' is no longer on that stream")


def _remove(order: list[list[str]], name: str, stream: str) -> None:
    for k, group in enumerate(order):
        if name in group:
            if len(group) > 1:
                raise InputError(f"unit '{name}' sits on a branch of a split of stream '{stream}' and cannot be "
                                 "moved off it (the other branches would no longer share the whole stream)")
            del order[k]
            return


def _prepared(network: ExistingNetwork) -> list[ExistingUnit]:
    """The units with stated duties dropped where the area defines them (stale after any change)."""
    out = []
    for u in network.units:
        keep = u.mode is OperatingMode.FIXED_DUTY or u.area is None
        out.append(replace(u, duty=u.duty if keep else None))
    return out


def apply_changes(network: ExistingNetwork, changes: Sequence[Change]) -> ExistingNetwork:
    """The network after a set of changes (moves and repiping first, then new units, then added area).

    Stated duties of units whose area is known are dropped (they describe the old operating point);
    fixed-duty heaters and coolers keep theirs.

    Raises
    ------
    InputError
        A change names an unknown unit or a place that no longer exists, or the result is not a valid
        network.

    Examples
    --------
    >>> from heatloom.model import StreamTable, Utility
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5], film_coefficient=[1.0, 1.0])
    >>> u = [Utility("steam", 180, 179, 100.0, film_coefficient=1.0), Utility("water", 20, 30, 10.0,
    ...      film_coefficient=1.0)]
    >>> net = ExistingNetwork(s, [ExistingUnit("H1", "steam", "C1", area=5.0),
    ...                           ExistingUnit("C1", "H1", "water", area=4.0)], u)
    >>> new = apply_changes(net, [Change(ChangeKind.NEW_EXCHANGER, "N-1", 3.0, hot="H1", cold="C1",
    ...                                  hot_before="C1", cold_before="H1", u=0.5)])
    >>> [x.name for x in new.on_stream("C1")], [x.name for x in new.on_stream("H1")]
    (['N-1', 'H1'], ['N-1', 'C1'])
    """
    units = {u.name: u for u in _prepared(network)}
    orders = _orders(network)
    streams = set(orders)
    rank = {ChangeKind.RESEQUENCE: 0, ChangeKind.REPIPE: 0, ChangeKind.NEW_EXCHANGER: 1, ChangeKind.ADDED_AREA: 2}
    for c in sorted(changes, key=lambda c: rank[c.kind]):
        if c.kind is ChangeKind.NEW_EXCHANGER:
            if c.unit in units:
                raise InputError(f"new unit '{c.unit}': the name is taken")
            units[c.unit] = ExistingUnit(c.unit, c.hot, c.cold, area=c.area, u=c.u)
            _insert(orders[c.hot], c.unit, c.hot_before)
            _insert(orders[c.cold], c.unit, c.cold_before)
            continue
        if c.unit not in units:
            raise InputError(f"change {c.kind.value}: unknown unit '{c.unit}'")
        unit = units[c.unit]
        if c.kind is ChangeKind.ADDED_AREA:
            units[c.unit] = replace(unit, area=(unit.area or 0.0) + c.area)
        elif c.kind is ChangeKind.RESEQUENCE:
            order = orders[c.stream]
            _remove(order, c.unit, c.stream)
            _insert(order, c.unit, c.before)
        else:
            old = getattr(unit, c.side)
            if old in streams:
                _remove(orders[old], c.unit, old)
            units[c.unit] = replace(unit, **{c.side: c.stream}, u=c.u if c.u is not None else unit.u,
                                    u_from_films=False)
            _insert(orders[c.stream], c.unit, c.before)
    positions: dict[tuple[str, str], int] = {}
    for s, order in orders.items():
        for k, group in enumerate(order, start=1):
            for name in group:
                positions[(name, s)] = k
    out = [replace(u, hot_position=positions.get((u.name, u.hot)), cold_position=positions.get((u.name, u.cold)),
                   role=None, mode=None) for u in units.values()]
    return ExistingNetwork(network.streams, tuple(out), network.utilities, network.source, network.notes)


# --------------------------------------------------------------------------------------------------
# evaluation of a set of changes


@dataclass(frozen=True, eq=False)
class Evaluation:
    """The exact value of a set of changes (``value``), the changes with any area the end heaters and
    coolers need added (``changes``), and the simulated network (``simulation``; None when infeasible)."""

    value: SetValue
    changes: tuple[Change, ...] = ()
    simulation: Simulation | None = None


class Evaluator:
    """Applies and simulates sets of changes on one network, with the rules every option must meet.

    Parameters
    ----------
    network : ExistingNetwork
    dt_min : float
        ΔTmin of the targets [K].
    emat : float
        Minimum approach [K]: every new, moved or repiped unit keeps it; the other units keep it or, if they
        already ran closer, do not get closer.
    rcosts : RetrofitCosts

    :meth:`evaluate` (cached) returns an :class:`Evaluation`: infeasible when the network no longer works
    (a stream off target, a unit reversed, a heater or cooler asked to work backwards) or a unit falls below
    its floor approach; otherwise the hot and cold utility saved [kW], the money saved per year on the
    utility prices, the investment (the changes' own plus area added to any end heater or cooler whose larger
    duty its installed area cannot do), and the duty reductions of the end heaters and coolers.
    """

    def __init__(self, network: ExistingNetwork, dt_min: float, emat: float, rcosts: RetrofitCosts):
        self.original = network
        self.base = apply_changes(network, [])
        self.dt_min, self.emat, self.rcosts = dt_min, emat, rcosts
        self.sim = simulate(self.base, dt_min)
        self.floors = {u.name: min(emat, u.min_approach) for u in self.sim.units}
        self.prices = {u.name: u.cost for u in network.utilities}
        self.trim = {u.name: u.duty for u in self.sim.units if u.mode is OperatingMode.TRIM}
        self.count = 0
        self.cache: dict[tuple, Evaluation] = {}

    def evaluate(self, changes: Sequence[Change]) -> Evaluation:
        key = tuple(sorted(changes, key=repr))
        hit = self.cache.get(key)
        if hit is not None:
            return hit
        ev = self._evaluate(list(changes))
        self.cache[key] = ev
        return ev

    def _evaluate(self, changes: list[Change]) -> Evaluation:
        self.count += 1
        try:
            net = apply_changes(self.base, changes)
            sim = simulate(net, self.dt_min)
        except (InputError, SolverError, TemperatureCrossError) as e:
            return Evaluation(SetValue(False, reason=str(e)))
        if sim.problems:
            return Evaluation(SetValue(False, reason=sim.problems[0]))
        strict = {c.unit for c in changes if c.kind is not ChangeKind.ADDED_AREA}
        for st in sim.units:
            floor = self.emat if (st.name in strict or st.name not in self.floors) else self.floors[st.name]
            if abs(st.duty) > 1e-9 and st.min_approach < floor - APPROACH_TOLERANCE:
                return Evaluation(SetValue(False, reason=f"unit '{st.name}' would run at {st.min_approach:.4g} K, "
                                                          f"below its minimum approach {floor:.4g} K"))
        extra = []
        for st in sim.units:
            base = self.trim.get(st.name)
            if base is None or st.mode is not OperatingMode.TRIM or st.duty <= base * (1 + 1e-9) + 1e-9:
                continue
            unit = net.unit(st.name)
            need = _trim_area(net, st)
            if need is None or unit.area is None:
                continue
            if math.isinf(need):
                return Evaluation(SetValue(False, reason=f"{st.role.value} '{st.name}' has no driving force for its "
                                                          f"new duty {st.duty:.4g} kW"))
            had = max(unit.area, _trim_area(self.base, self.sim.unit(st.name)) or 0.0)
            if need > had * (1 + 1e-6):
                extra.append(Change(ChangeKind.ADDED_AREA, st.name, need - had,
                                    investment=self.rcosts.added_area_cost(need - had)))
        duties0, duties1 = self.sim.utility_duties, sim.utility_duties
        money = sum(self.prices.get(k, 0.0) * (duties0.get(k, 0.0) - duties1.get(k, 0.0))
                    for k in set(duties0) | set(duties1))
        reductions = {name: d - sim.unit(name).duty for name, d in self.trim.items()}
        investment = sum(c.investment for c in changes) + sum(c.investment for c in extra)
        value = SetValue(True, self.sim.hot_utility - sim.hot_utility, self.sim.cold_utility - sim.cold_utility,
                         float(money), float(investment), reductions)
        return Evaluation(value, tuple(changes) + tuple(extra), sim)


def _trim_area(net: ExistingNetwork, st) -> float | None:
    """Area a heater or cooler needs for its simulated duty [m²]; None without U; inf without driving force."""
    unit = net.unit(st.name)
    if unit.u is None or not st.duty > 0:
        return None if unit.u is None else 0.0
    heater = st.role is UnitRole.HEATER
    util = net.unit_side(unit, unit.hot if heater else unit.cold)
    stream = branch_stream(net.stream(unit.cold if heater else unit.hot),   # a branch: its share of the stream
                           unit.cold_fraction if heater else unit.hot_fraction)
    t_in, t_out = (st.cold_in, st.cold_out) if heater else (st.hot_in, st.hot_out)
    if abs(t_out - t_in) < 1e-9:
        return 0.0
    try:
        return utility_match_area(util, stream, t_in, t_out, st.duty, unit.u)
    except (TemperatureCrossError, InputError):
        return math.inf


# --------------------------------------------------------------------------------------------------
# candidates


@dataclass(frozen=True, eq=False)
class Candidate:
    """Changes tried together at one size: ``group`` names the candidate (its sizes exclude each other),
    ``resources`` what it occupies (a unit, a place on a stream), ``kind`` how it is counted."""

    group: str
    changes: tuple[Change, ...]
    resources: frozenset[str]
    kind: ChangeKind


def _film_u(a, b, default_h: float | None) -> float | None:
    ha, hb = film_coefficient_of(a), film_coefficient_of(b)
    ha = default_h if ha is None else ha
    hb = default_h if hb is None else hb
    if ha is None or hb is None:
        return None
    return float(overall_coefficient(ha, hb))


def _anchors(net: ExistingNetwork, sim: Simulation, stream: str) -> list[tuple[str | None, float]]:
    """Places on a stream where a unit can go: (the unit it goes before, or None at the end; temperature).

    Before a split means before all of its branches (named by its first); never inside a split."""
    seq = net.stages(stream)
    temps = sim.temperatures[stream]
    out = [(group[0].name, temps[k]) for k, group in enumerate(seq)]
    if not seq or all(u.mode is not OperatingMode.TRIM for u in seq[-1]):
        out.append((None, temps[-1]))
    return out


def _end_duty(sim: Simulation, net: ExistingNetwork, stream: str) -> float | None:
    """Duty of the heater or cooler that ends a stream [kW] (None when it ends otherwise)."""
    seq = net.stages(stream)
    if seq and len(seq[-1]) == 1 and seq[-1][0].mode is OperatingMode.TRIM:
        return max(0.0, sim.unit(seq[-1][0].name).duty)
    return None


def _largest_duty(hot, cold, th: float, tc: float, emat: float, cap: float, fh: float = 1.0,
                  fc: float = 1.0) -> float:
    """Largest duty of a counter-current match from these inlets keeping ``emat`` everywhere [kW]; ``fh``,
    ``fc`` the shares of the streams' flows through it (split branches) [-]."""
    top = min(fh * heat_between(hot, th, tc), fc * heat_between(cold, tc, th), cap)
    if not top > 0:
        return 0.0

    def ok(q):
        return smallest_approach(hot, cold, th, temperature_after(hot, th, q / fh), tc,
                                 temperature_after(cold, tc, q / fc)) >= emat   # shares follow from the ends

    if ok(top):
        return float(top)
    lo, hi = 0.0, top
    if not ok(1e-9 * top):
        return 0.0
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if ok(mid) else (lo, mid)
        if hi - lo <= 1e-9 * top:
            break
    return float(lo)


def _area_for(hot, cold, th: float, tc: float, q: float, u: float, arrangement=ExchangerType.COUNTER_CURRENT,
              shells: int = 1, limit: float = 1.0, fh: float = 1.0, fc: float = 1.0) -> float | None:
    """Area [m²] that transfers ``q`` [kW] from these inlets by ε-NTU (mean CPs over the ranges covered; a
    branch of fraction f has f times its stream's)."""
    ch = fh * mean_cp_between(hot, th, temperature_after(hot, th, q / fh)) if not isinstance(hot, Utility) \
        else math.inf
    cc = fc * mean_cp_between(cold, tc, temperature_after(cold, tc, q / fc)) if not isinstance(cold, Utility) \
        else math.inf
    cmin, cmax = min(ch, cc), max(ch, cc)
    eps = q / (cmin * (th - tc))
    cr = cmin / cmax
    if not eps < limit * float(max_effectiveness(cr, arrangement, shells=shells)):
        return None
    return float(ntu_from_effectiveness(eps, cr, arrangement, shells=shells)) * cmin / u


def added_area_candidates(ctx: Evaluator, net: ExistingNetwork, sim: Simulation, name: str, sizes, group: str,
                          prefix: tuple[Change, ...] = ()) -> list[Candidate]:
    """Added-area candidates on one exchanger, linearised at the state ``sim``.

    With the unit's inlet temperatures held, the largest duty keeps the unit's floor approach (``min_approach``
    after a move, else its present floor) and does not exceed what the heaters/coolers ending its two streams
    now do; each size f gives the duty Q₀ + f·(Q_max − Q₀) and its area by ε-NTU at those inlets (1-2 shells
    at most :data:`MAX_1_2_EFFECTIVENESS` of their reachable effectiveness).  ``prefix``: a move made first
    (the candidate is then the pair).
    """
    unit, st = net.unit(name), sim.unit(name)
    if unit.role is not UnitRole.EXCHANGER or unit.area is None or unit.u is None:
        return []
    hot, cold = net.stream(unit.hot), net.stream(unit.cold)
    th, tc = st.hot_in, st.cold_in
    caps = [d for d in (_end_duty(sim, net, unit.hot), _end_duty(sim, net, unit.cold)) if d is not None]
    cap = st.duty + (min(caps) if caps else math.inf)
    floor = ctx.emat if prefix else ctx.floors.get(name, ctx.emat)
    fh, fc = unit.hot_fraction, unit.cold_fraction
    q_top = _largest_duty(hot, cold, th, tc, floor, cap, fh, fc)
    gain = q_top - st.duty
    if not gain > max(0.5, 1e-3 * st.duty):
        return []
    limit = MAX_1_2_EFFECTIVENESS if unit.arrangement is ExchangerType.SHELL_AND_TUBE_1_2 else 1.0
    out = []
    for f in sizes:
        area = _area_for(hot, cold, th, tc, st.duty + f * gain, unit.u, unit.arrangement, unit.shells, limit,
                         fh, fc)
        if area is None or not area > unit.area * (1 + 1e-6):
            continue
        da = area - unit.area
        c = Change(ChangeKind.ADDED_AREA, name, da, investment=ctx.rcosts.added_area_cost(da))
        out.append(Candidate(group, prefix + (c,), frozenset({f"unit:{name}"}) | _resources(prefix),
                             prefix[0].kind if prefix else ChangeKind.ADDED_AREA))
    return out


def _resources(changes: Sequence[Change]) -> frozenset[str]:
    out = set()
    for c in changes:
        if c.kind is ChangeKind.NEW_EXCHANGER:
            out |= {f"slot:{c.hot}:{c.hot_before}", f"slot:{c.cold}:{c.cold_before}"}
        else:
            out.add(f"unit:{c.unit}")
        if c.kind in (ChangeKind.RESEQUENCE, ChangeKind.REPIPE):
            out.add(f"slot:{c.stream}:{c.before}")
    return frozenset(out)


def new_exchanger_candidates(ctx: Evaluator, sizes, default_h, notes: list[str]) -> list[Candidate]:
    """New counter-current exchangers between every hot and cold stream, directly before any unit of each.

    From the inlet temperatures of the present state at those places, the largest duty keeping
    ``min_approach`` at both ends and at inner segment breaks, capped by the heater/cooler ending either
    stream; each size a fraction of it, its area by ε-NTU, U from the film coefficients (``default_h`` where
    one is missing).
    """
    net, sim = ctx.base, ctx.sim
    out = []
    missing = False
    for h in (s for s in net.streams if s.is_hot):
        for c in (s for s in net.streams if not s.is_hot):
            u = _film_u(h, c, default_h)
            if u is None:
                missing = True
                continue
            cap_h, cap_c = _end_duty(sim, net, h.name), _end_duty(sim, net, c.name)
            cap = min(x for x in (cap_h, cap_c, math.inf) if x is not None)
            for hb, th in _anchors(net, sim, h.name):
                for cb, tc in _anchors(net, sim, c.name):
                    if not th - tc > ctx.emat:
                        continue
                    q_top = _largest_duty(h, c, th, tc, ctx.emat, cap)
                    if not q_top > 0.5:
                        continue
                    group = f"new:{h.name}:{hb}:{c.name}:{cb}"
                    for f in sizes:
                        area = _area_for(h, c, th, tc, f * q_top, u)
                        if area is None or not area > 0:
                            continue
                        ch = Change(ChangeKind.NEW_EXCHANGER, "", area, hot=h.name, cold=c.name, hot_before=hb,
                                    cold_before=cb, u=u, investment=ctx.rcosts.new_exchanger_cost(area))
                        out.append(Candidate(group, (ch,), _resources([ch]), ChangeKind.NEW_EXCHANGER))
    if missing:
        notes.append("new exchangers were not tried between streams without film coefficients (give h, or a "
                     "default film coefficient)")
    return out


def move_candidates(ctx: Evaluator, default_h, notes: list[str]) -> list[Candidate]:
    """Resequencing and repiping candidates of every exchanger.

    Resequencing: the exchanger directly before any other unit of either of its streams.  Repiping: one
    side moved to another stream of the same kind, directly before any of its units; U scaled by the ratio
    of the film-coefficient U of the new and the old pair (kept when film coefficients are missing).
    Places are between positions, never inside a split (:func:`_anchors`), and a unit is never moved or
    repiped off a split branch on that side (it may move along its other stream).
    """
    net, sim = ctx.base, ctx.sim
    out = []
    kept_u = False
    for unit in net.exchangers:
        for side in ("hot", "cold"):
            s = getattr(unit, side)
            if getattr(unit, f"{side}_fraction") < 1:
                continue
            seq = [group[0].name for group in net.stages(s)]
            i = seq.index(unit.name)
            here = {seq[i + 1] if i + 1 < len(seq) else None}
            for before, _ in _anchors(net, sim, s):
                if before == unit.name or before in here:
                    continue
                ch = Change(ChangeKind.RESEQUENCE, unit.name, stream=s, before=before,
                            investment=ctx.rcosts.resequence)
                out.append(Candidate(f"move:{unit.name}:{s}:{before}", (ch,), _resources([ch]), ChangeKind.RESEQUENCE))
            other_side = net.stream(getattr(unit, "cold" if side == "hot" else "hot"))
            old = _film_u(net.stream(s), other_side, default_h)
            for s2 in net.streams:
                if s2.is_hot != (side == "hot") or s2.name == s:
                    continue
                new = _film_u(s2, other_side, default_h)
                if old is not None and new is not None:
                    u = unit.u * new / old
                else:
                    u, kept_u = unit.u, True
                for before, _ in _anchors(net, sim, s2.name):
                    ch = Change(ChangeKind.REPIPE, unit.name, stream=s2.name, side=side, before=before, u=u,
                                investment=ctx.rcosts.repipe)
                    res = _resources([ch]) | {f"slot:{s}:{unit.name}"}
                    out.append(Candidate(f"repipe:{unit.name}:{side}:{s2.name}:{before}", (ch,), res,
                                         ChangeKind.REPIPE))
    if kept_u:
        notes.append("repiped units without film coefficients keep their U")
    return out


def touched_streams(before: Simulation, after: Simulation) -> set[str]:
    """Process streams whose temperatures differ between two simulations (or that gained a unit)."""
    out = set()
    for name, t in after.temperatures.items():
        t0 = before.temperatures[name]
        if len(t) != len(t0) or max(abs(a - b) for a, b in zip(t, t0)) > 1e-9:
            out.add(name)
    return out
