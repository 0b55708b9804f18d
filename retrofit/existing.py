"""An existing heat-exchanger network as built: its units, their areas and their order along every stream.

The starting point of retrofit (:mod:`heatloom.retrofit.simulate`, :mod:`heatloom.retrofit.diagnose`).  An
:class:`ExistingNetwork` holds the process streams, the utilities and one :class:`ExistingUnit` per
unit.  Each unit joins a hot side (a hot stream or a hot utility) and a cold side (a cold stream or a
cold utility); its role follows: an *exchanger* joins two process streams, a *heater* a hot utility and
a cold stream, a *cooler* a hot stream and a cold utility.  Along every process stream the units have
positions 1, 2, ... from the stream's supply end.

How each unit works in the simulation (the *operating mode*, :class:`OperatingMode`):

* an exchanger is **rated** by ε-NTU at its area and U (:func:`heatloom.equipment.rating.effectiveness_from_ntu`);
* a heater or cooler that is the **last unit on its stream** (or on a branch of the stream's last split)
  is a **trim** unit: it takes whatever duty brings the (mixed) stream to its target (its utility flow is controlled), so its area does not enter the
  simulation, and it may be given without duty and without area (it takes the rest of the stream's duty;
  its area then counts as unknown);
* a heater or cooler elsewhere on its stream keeps its stated duty (**fixed duty**); without a duty it is
  **rated** by ε-NTU against its utility, which must then be (nearly) isothermal — condensing steam,
  boiling refrigerant, a glide of at most :data:`MAX_ISOTHERMAL_GLIDE` — taken at its mean temperature
  (C_r = 0).

Construction validates everything and fills in what follows from the data (roles, positions, U from film
coefficients, area from a stated duty); every problem is an :class:`~heatloom.errors.InputError` naming
the unit's row and the column.  A *stated duty* converts to an area only when the unit's temperatures are
known without simulating: on each process side the inlet or the outlet must follow from the supply end
(through units of stated duty before it) or from the target end (through units of stated duty after it,
when the stream ends with a heater or cooler, which brings it to its target).

A stream may be split: the units on the parallel branches of one split share one position along the
stream, each with its share of the stream's flow (``hot_fraction``/``cold_fraction``, adding up to 1 over
the split), one unit per branch and no heater or cooler on a branch (:mod:`heatloom.retrofit.branches`).
A stated duty walk passes a split only when every branch states its duty.

Results are screening estimates; a real retrofit must be checked against the plant's data sheets and
local codes by qualified, licensed engineers.
"""

from __future__ import annotations

import functools
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace

from .. import defaults
from ..equipment.rating import max_effectiveness, ntu_from_effectiveness
from ..equipment.sizing import overall_coefficient
from ..errors import InputError, TemperatureCrossError
from ..model import Stream, StreamTable, Utility
from ..model.exchangers import ExchangerType
from ..model.existing import ExistingUnit, OperatingMode, UnitRole, UnitTable
from ..network.structure import smallest_approach
from .branches import (
    branch_outlets,
    branch_stream,
    design_share,
    resolve_positions,
    split_inlets,
    stages,
    stated_temperatures,
)
from .flowtree import ends_stream, flow_steps
from .profiles import exchanger_area, heat_between, temperature_after, utility_match_area

__all__ = [
    "ExistingNetwork",
    "film_coefficient_of",
    "MAX_ISOTHERMAL_GLIDE",
    "DUTY_CONSISTENCY",
]

MAX_ISOTHERMAL_GLIDE = 1.0
"""A utility whose temperature changes by at most this much [K] (condensing steam written 250 → 249 °C) can
rate a heater or cooler inside a stream by its area, as a constant-temperature side at its mean
temperature."""
UTILITY_END_TOLERANCE = 1e-3
"""How far [K] a unit's stated utility temperatures may lie outside the utility's range (a design's units
table rounds temperatures to 0.001 K); they are clipped into it."""
_WRITTEN_DUTY = 0.5 * 10.0 ** -defaults.OUTPUT_PRECISION["duty"]
"""Half the last place a written table keeps of a duty [kW]: a design's unit that takes all of its branch
comes back that much above the branch's duty."""
DUTY_CONSISTENCY = 5e-3
"""Largest mismatch allowed between stated duties walked from the supply end and from the target end of
a stream, relative to the stream's duty [-] (rounded plant data)."""


# --------------------------------------------------------------------------------------------------
# film coefficients


def film_coefficient_of(side: Stream | Utility) -> float | None:
    """Film coefficient of a stream or utility [kW/(m²·K)], None when not given.

    A stream whose segments have different coefficients gets the duty-weighted resistance mean
    1/h = Σ(Q_k/h_k)/ΣQ_k over its whole range (one U per unit is used in rating).

    Examples
    --------
    >>> from heatloom.model import Segment
    >>> film_coefficient_of(Stream("S", (Segment(100, 90, 1.0, 1.0), Segment(90, 80, 1.0, 0.5))))
    0.6666666666666666
    """
    if isinstance(side, Utility):
        return side.film_coefficient
    if any(g.film_coefficient is None for g in side.segments):
        return None
    return side.duty / sum(g.duty / g.film_coefficient for g in side.segments)


# --------------------------------------------------------------------------------------------------
# the network


def _names(items: Iterable[str], limit: int = 12) -> str:
    items = list(items)
    text = ", ".join(f"'{x}'" for x in items[:limit])
    return text + (f" ... ({len(items)} in all)" if len(items) > limit else "")


@dataclass(frozen=True, eq=False)
class ExistingNetwork:
    """An existing network: process streams, utilities and units along every stream, in series or on the
    parallel branches of a stream split.

    Parameters
    ----------
    streams : StreamTable
        The process streams (supply and target temperatures, CP, film coefficients).
    units : sequence of ExistingUnit
        Unique names; their order is the default order along every stream.
    utilities : sequence of Utility, optional
        The utilities heaters and coolers use.
    source : str, optional
        Where the network came from (file name), for messages.

    Attributes
    ----------
    units : tuple of ExistingUnit
        Completed (role, mode, positions, U, area where a stated duty defines it).
    notes : tuple of str
        Assumptions made while completing the data, in plain words.

    Raises
    ------
    InputError
        Located at the unit's row and the column concerned: empty or repeated names, unknown streams or
        utilities, a side of the wrong kind, two utilities in one unit, positions that repeat (outside a
        split), skip or are given for only some units of a stream, a split whose fractions do not add up to
        1 (:mod:`heatloom.retrofit.branches`), no area and no duty, no U and no film coefficients, a
        stated duty larger than a stream's whole duty, stated duties that overrun a stream or disagree
        with its target, a stated duty the available driving force cannot deliver, a duty without an area
        where the temperatures are not known, a heater or cooler inside a stream with neither duty nor an
        isothermal utility.

    Examples
    --------
    >>> from heatloom.model import StreamTable, Utility
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5], film_coefficient=[1.0, 1.0])
    >>> u = [Utility("steam", 180, 179, 100.0), Utility("water", 20, 30, 10.0)]
    >>> net = ExistingNetwork(s, [ExistingUnit("E1", "H1", "C1", duty=100.0),
    ...                           ExistingUnit("H1", "steam", "C1", area=5.0, u=0.8),
    ...                           ExistingUnit("C1", "H1", "water", area=4.0, u=0.5)], u)
    >>> e = net.unit("E1")
    >>> e.role.value, e.mode.value, round(e.area, 3), e.area_from_duty
    ('exchanger', 'rated', 2.671, True)
    >>> [x.name for x in net.on_stream("C1")]
    ['E1', 'H1']
    """

    streams: StreamTable
    units: tuple[ExistingUnit, ...]
    utilities: tuple[Utility, ...] = ()
    source: str | None = None
    notes: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "units", tuple(self.units))
        object.__setattr__(self, "utilities", tuple(self.utilities))
        notes = list(self.notes)
        try:
            units = self._resolve(notes)
        except InputError as e:
            raise e.located(file=self.source) from None
        object.__setattr__(self, "units", tuple(units))
        object.__setattr__(self, "notes", tuple(dict.fromkeys(notes)))

    @classmethod
    def from_table(cls, streams: StreamTable, table: UnitTable, utilities: Sequence[Utility] = ()) -> ExistingNetwork:
        """The network of a unit table (:func:`heatloom.io.read_network`), checked and completed.

        Errors name the table's file, the unit's row and the column as the user wrote it.
        """
        try:
            return cls(streams, table.units, tuple(utilities or ()), source=table.source, notes=table.notes)
        except InputError as e:
            raise table.locate(e) from None

    # -- completion and checks ------------------------------------------------------------------

    def _resolve(self, notes: list[str]) -> list[ExistingUnit]:
        if not self.units:
            raise InputError("the network has no units")
        streams = {s.name: s for s in self.streams}
        utilities = {u.name: u for u in self.utilities}
        for name in set(streams) & set(utilities):
            raise InputError(f"'{name}' is both a process stream and a utility; rename one")
        seen: dict[str, ExistingUnit] = {}
        units = []
        for unit in self.units:
            if not isinstance(unit, ExistingUnit):
                raise InputError(f"units must be ExistingUnit objects, got {type(unit).__name__}")
            if unit.name in seen:
                first = seen[unit.name].row
                raise InputError(f"unit name '{unit.name}' is used twice"
                                 + (f" (first in row {first})" if first is not None else "")
                                 + "; unit names must be unique", row=unit.row, column="unit")
            seen[unit.name] = unit
            role = self._role(unit, streams, utilities)
            if unit.stated_role is not None and unit.stated_role is not role:
                raise InputError(f"unit '{unit.name}' is stated as {_article(unit.stated_role.value)} but joins "
                                 f"'{unit.hot}' and '{unit.cold}', which makes it {_article(role.value)} (a "
                                 f"{_ROLE_RULE}); correct the role or the hot/cold names", row=unit.row,
                                 column="role")
            units.append(self._utility_ends(replace(unit, role=role), utilities))
        units = resolve_positions(units, streams, notes)
        units = [self._coefficient(u, streams, utilities) for u in units]
        return self._duties(units, streams, utilities, notes)

    @staticmethod
    def _utility_ends(unit: ExistingUnit, utilities: dict) -> ExistingUnit:
        """Check the stated temperatures on the side of a non-isothermal utility: both or neither, in its
        flow direction, within its range (to :data:`UTILITY_END_TOLERANCE`, then clipped into it)."""
        if unit.role is UnitRole.EXCHANGER:
            return unit
        side = "hot" if unit.role is UnitRole.HEATER else "cold"
        util, pair = utilities[getattr(unit, side)], getattr(unit, f"{side}_temperatures")
        if util.isothermal or pair is None:
            return unit
        where = f"{unit.role.value} '{unit.name}'"
        if None in pair:
            given, missing = (f"{side}_in", f"{side}_out") if pair[1] is None else (f"{side}_out", f"{side}_in")
            raise InputError(f"{where}: {given.replace('_', ' ')} of utility '{util.name}' given without "
                             f"{missing.replace('_', ' ')}: give both (the part of its range the unit takes) or "
                             "neither (its whole range)", row=unit.row, column=missing)
        lo, hi = util.coldest, util.hottest
        for t, column in zip(pair, (f"{side}_in", f"{side}_out")):
            if not lo - UTILITY_END_TOLERANCE <= t <= hi + UTILITY_END_TOLERANCE:
                raise InputError(f"{where}: {column.replace('_', ' ')} {t:g} °C lies outside the range of utility "
                                 f"'{util.name}' ({util.supply_temperature:g} → {util.target_temperature:g} °C); on a "
                                 "utility's side the temperatures give the part of its range the unit takes",
                                 row=unit.row, column=column)
        t_in, t_out = (min(max(t, lo), hi) for t in pair)
        if not (t_in > t_out if util.is_hot else t_in < t_out):
            raise InputError(f"{where}: utility '{util.name}' ({util.supply_temperature:g} → "
                             f"{util.target_temperature:g} °C) would run from {t_in:g} to {t_out:g} °C in it; a "
                             f"{'hot' if util.is_hot else 'cold'} utility {'cools' if util.is_hot else 'warms'} "
                             f"along its flow", row=unit.row, column=f"{side}_out")
        return replace(unit, **{f"{side}_temperatures": (t_in, t_out)})

    def _role(self, unit: ExistingUnit, streams: dict, utilities: dict) -> UnitRole:
        kinds = {}
        for side in ("hot", "cold"):
            name = getattr(unit, side)
            if name in streams:
                is_hot, what = streams[name].is_hot, "stream"
            elif name in utilities:
                is_hot, what = utilities[name].is_hot, "utility"
            else:
                known = list(streams) + list(utilities)
                raise InputError(f"unit '{unit.name}': unknown {side} side '{name}'; known streams and "
                                 f"utilities: {_names(known)}", row=unit.row, column=side)
            if is_hot != (side == "hot"):
                kind = "hot" if is_hot else "cold"
                raise InputError(f"unit '{unit.name}': '{name}' is a {kind} {what} but is named as the {side} "
                                 f"side; the hot column takes hot streams or hot utilities, the cold column "
                                 f"cold streams or cold utilities", row=unit.row, column=side)
            kinds[side] = what
        if kinds["hot"] == "utility" and kinds["cold"] == "utility":
            raise InputError(f"unit '{unit.name}' joins two utilities ('{unit.hot}' and '{unit.cold}'); every "
                             "unit must serve at least one process stream", row=unit.row, column="cold")
        if kinds["hot"] == "utility":
            return UnitRole.HEATER
        if kinds["cold"] == "utility":
            return UnitRole.COOLER
        return UnitRole.EXCHANGER

    def _coefficient(self, unit: ExistingUnit, streams: dict, utilities: dict) -> ExistingUnit:
        if unit.u is not None:
            return unit
        sides = [streams.get(unit.hot) or utilities[unit.hot], streams.get(unit.cold) or utilities[unit.cold]]
        hs = [film_coefficient_of(x) for x in sides]
        if all(h is not None for h in hs):
            return replace(unit, u=float(overall_coefficient(hs[0], hs[1])), u_from_films=True)
        return unit   # checked where U is needed

    def _need_u(self, unit: ExistingUnit, why: str) -> float:
        if unit.u is not None:
            return unit.u
        missing = [f"{'stream' if n in self._stream_names else 'utility'} '{n}'" for n in (unit.hot, unit.cold)
                   if film_coefficient_of(self.side(n)) is None]
        raise InputError(f"unit '{unit.name}' {why} but has no U and no film coefficient h for "
                         f"{' and '.join(missing)}: give U [kW/(m²·K)] in the network table or h in the "
                         "stream/utility table", row=unit.row, column="U")

    @functools.cached_property
    def _stream_names(self) -> set[str]:
        return {s.name for s in self.streams}

    def _duties(self, units: list[ExistingUnit], streams: dict, utilities: dict,
                notes: list[str]) -> list[ExistingUnit]:
        order = {name: stages(units, name) for name in streams}
        # stream duty of every unit, one stream at a time: no unit carries more than its whole stream gives or
        # takes between its supply and target temperatures (a unit on a split branch may carry more than the
        # branch's share of it: the branch may pass the stream's target before it mixes back, as a lowest-TAC
        # design with branch overshoot does; the approaches are checked at the temperatures that follow)
        for name, seq in order.items():
            s = streams[name]
            for u in (u for group in seq for u in group):
                if u.duty is not None and u.duty > s.duty * (1 + 1e-9) + _WRITTEN_DUTY:
                    raise InputError(f"unit '{u.name}': stated duty {u.duty:.6g} kW is more than stream '{name}' "
                                     f"{'gives' if s.is_hot else 'takes'} between its supply and target "
                                     f"temperatures ({s.duty:.6g} kW)", row=u.row, column="duty")
        # temperatures at the stated operating point: (stream, position) -> temperature after that position
        # (mixed after a split); (stream, position, unit) -> a branch's outlet
        known: dict[tuple, float] = {}
        for name, seq in order.items():
            s = streams[name]
            trim = bool(seq) and len(seq[-1]) == 1 and seq[-1][0].role is not UnitRole.EXCHANGER
            t, walked = s.supply_temperature, 0.0
            known[(name, 0)] = t
            for k, group in enumerate(seq, start=1):   # from the supply end through stated duties
                if any(u.duty is None for u in group):
                    break
                u = group[-1]
                walked += sum(x.duty for x in group)
                if trim and k < len(seq) and walked > s.duty * (1 + DUTY_CONSISTENCY):
                    raise InputError(f"unit '{u.name}': the stated duties of the units of stream '{name}' up to "
                                     f"this one add up to {walked:.6g} kW, more than the {s.duty:.6g} kW the "
                                     f"stream {'gives' if s.is_hot else 'takes'} before the "
                                     f"{seq[-1][0].role.value} '{seq[-1][0].name}' at its end", row=u.row,
                                     column="duty")
                branch_outlets(known, s, k, t, group)
                t = temperature_after(s, t, sum(x.duty for x in group))
                known[(name, k)] = t
            if not trim:
                continue
            t, k = s.target_temperature, len(seq)   # from the target end, which the last heater/cooler reaches
            while True:
                prior = known.get((name, k))
                if prior is None:
                    known[(name, k)] = t
                elif abs(heat_between(s, prior, t)) > DUTY_CONSISTENCY * s.duty:
                    u = seq[-1][0]
                    raise InputError(
                        f"unit '{u.name}': the stated duties of the units of stream '{name}' add up to "
                        f"{walked:.6g} kW but the stream {'gives' if s.is_hot else 'takes'} {s.duty:.6g} kW "
                        f"between supply and target, which the {u.role.value} at its end reaches (leave the duty "
                        f"and area of the {u.role.value} '{u.name}' empty to let it take the rest)",
                        row=u.row, column="duty")
                if k == 0 or any(x.duty is None for x in seq[k - 1]):
                    break
                t = temperature_after(s, t, -sum(x.duty for x in seq[k - 1]))
                branch_outlets(known, s, k, t, seq[k - 1])
                k -= 1
        out = []
        inlets = split_inlets(units, list(streams))
        final = {n: flow_steps(seq[-1], n, len(seq)) for n, seq in order.items() if seq}   # each stream's end
        for u in units:
            if u.role is UnitRole.EXCHANGER:
                mode = OperatingMode.RATED
            elif u.name in {x.name for x in order[u.process_streams[0]][-1]} and \
                    ends_stream(u, final[u.process_streams[0]]):   # no unit after it, in a final split too
                mode = OperatingMode.TRIM
            elif u.duty is not None:
                mode = OperatingMode.FIXED_DUTY
            else:
                util = self.unit_side(u, u.hot if u.role is UnitRole.HEATER else u.cold)
                glide = util.hottest - util.coldest
                if glide > MAX_ISOTHERMAL_GLIDE:
                    raise InputError(f"{u.role.value} '{u.name}' is not the last unit of stream "
                                     f"'{u.process_streams[0]}' and has no duty; give its duty (its load in "
                                     f"operation): utility '{util.name}' changes temperature by {glide:g} K, so "
                                     "its area alone does not fix the load", row=u.row, column="duty")
                if glide > 0:
                    notes.append(f"{u.role.value} '{u.name}': utility '{util.name}' ({util.supply_temperature:g} → "
                                 f"{util.target_temperature:g} °C) rated as a constant temperature of "
                                 f"{(util.hottest + util.coldest) / 2:g} °C")
                mode = OperatingMode.RATED
            u = replace(u, mode=mode)
            temps = stated_temperatures(u, known, streams, utilities, inlets)
            if u.duty is not None and temps is not None:
                u = self._check_duty(u, temps, streams, utilities, notes)
            if u.area is None and mode is not OperatingMode.FIXED_DUTY and mode is not OperatingMode.TRIM:
                if u.duty is None:
                    raise InputError(f"unit '{u.name}' has neither area nor duty; {_NEITHER}",
                                     row=u.row, column="area")
                raise InputError(
                    f"unit '{u.name}' gives a duty but no area, and its temperatures are not known without "
                    f"simulating the network (a unit without a stated duty, or a split with such a branch, comes before it on "
                    f"{' and '.join(repr(n) for n in u.process_streams)} from the supply end, and after it from "
                    "the target end): give its area", row=u.row, column="area")
            if u.mode is OperatingMode.RATED:
                self._need_u(u, "is rated by its area")
            if u.area is None and u.duty is None:
                notes.append(f"{u.role.value} '{u.name}' given without duty or area: as the last unit on stream "
                             f"'{u.process_streams[0]}' it takes the rest of the stream's duty; its area is "
                             "unknown and does not count in the network's area")
            elif u.area is None:
                notes.append(f"{u.role.value} '{u.name}': area unknown (its temperatures or U are not known "
                             "from the table); it does not count in the network's area")
            out.append(u)
        return out

    def _check_duty(self, u: ExistingUnit, temps, streams: dict, utilities: dict, notes: list[str]) -> ExistingUnit:
        """Check a stated duty against the driving force; compute the area from it when needed."""
        hot_in, hot_out, cold_in, cold_out = temps
        hot, cold = self.unit_side(u, u.hot), self.unit_side(u, u.cold)
        where = {"row": u.row, "column": "duty"}
        sides = f"hot {hot_in:.4g} → {hot_out:.4g} °C, cold {cold_in:.4g} → {cold_out:.4g} °C"
        if u.role is UnitRole.EXCHANGER:
            ch, cc = u.duty / (hot_in - hot_out), u.duty / (cold_out - cold_in)
            cmin, cmax = min(ch, cc), max(ch, cc)
            if not hot_in > cold_in:
                raise InputError(f"unit '{u.name}' cannot do its stated duty {u.duty:.6g} kW: its hot inlet "
                                 f"({hot_in:.4g} °C) is not above its cold inlet ({cold_in:.4g} °C)", **where)
            eps = u.duty / (cmin * (hot_in - cold_in))
            top = float(max_effectiveness(cmin / cmax, u.arrangement, shells=u.shells))
            approach = smallest_approach(hot, cold, hot_in, hot_out, cold_in, cold_out)
            if not eps < top or (u.arrangement is not ExchangerType.SHELL_AND_TUBE_1_2 and not approach > 0):
                raise InputError(f"unit '{u.name}' cannot do its stated duty {u.duty:.6g} kW: the driving force "
                                 f"allows less ({sides}; effectiveness {eps:.4g}, the {u.arrangement.value} "
                                 f"limit is {top:.4g})", **where)
            if u.area is None:
                uu = self._need_u(u, "needs an area from its stated duty")
                segmented = any(len(x.segments) > 1 for x in (hot, cold))
                if segmented and u.arrangement.flow_pattern is ExchangerType.COUNTER_CURRENT:
                    # the area the simulation rates exactly (heatloom.retrofit.rating): segment by segment
                    area = exchanger_area(hot, cold, hot_in, cold_in, u.duty, uu, hot_fraction=u.hot_fraction,
                                          cold_fraction=u.cold_fraction)
                    how = "segment by segment (exact log mean between the segment breaks)"
                else:
                    area = float(ntu_from_effectiveness(eps, cmin / cmax, u.arrangement, shells=u.shells)) * cmin / uu
                    how = "by ε-NTU with each stream's mean CP over the unit"
                u = replace(u, area=area, area_from_duty=True)
                if segmented:
                    notes.append(f"exchanger '{u.name}': area from its stated duty {how} (streams of several "
                                 "segments)")
            return u
        # heater or cooler: a counter-current match with the utility running between its two temperatures
        util = hot if u.role is UnitRole.HEATER else cold
        stream = branch_stream(cold, u.cold_fraction) if u.role is UnitRole.HEATER else branch_stream(hot, u.hot_fraction)
        t_in, t_out = (cold_in, cold_out) if u.role is UnitRole.HEATER else (hot_in, hot_out)
        uu = u.u if u.u is not None else 1.0
        try:
            area = utility_match_area(util, stream, t_in, t_out, u.duty, uu)
        except TemperatureCrossError:
            raise InputError(f"{u.role.value} '{u.name}' cannot do its stated duty {u.duty:.6g} kW: utility "
                             f"'{util.name}' ({util.supply_temperature:g} → {util.target_temperature:g} °C) has no "
                             f"driving force against stream '{stream.name}' at {t_in:.4g} → {t_out:.4g} °C",
                             **where) from None
        if u.area is None and u.u is not None:
            u = replace(u, area=area, area_from_duty=True)
        return u

    # -- queries --------------------------------------------------------------------------------

    def unit(self, name: str) -> ExistingUnit:
        """The unit of that name (KeyError if none)."""
        for u in self.units:
            if u.name == name:
                return u
        raise KeyError(name)

    def stream(self, name: str) -> Stream:
        """The process stream of that name (KeyError if none)."""
        return self.streams[name]

    def utility(self, name: str) -> Utility:
        """The utility of that name (KeyError if none)."""
        for u in self.utilities:
            if u.name == name:
                return u
        raise KeyError(name)

    def unit_side(self, unit: ExistingUnit, name: str) -> Stream | Utility:
        """A unit's hot or cold side (``name``): the process stream, or the utility as the unit takes it
        (:meth:`ExistingUnit.utility_taken`: the part of a non-isothermal utility's range its stated
        temperatures give)."""
        side = self.side(name)
        return unit.utility_taken(side) if isinstance(side, Utility) else side

    def side(self, name: str) -> Stream | Utility:
        """The process stream or utility of that name, as a unit's hot or cold side names it (KeyError if
        none)."""
        for s in self.streams:
            if s.name == name:
                return s
        for u in self.utilities:
            if u.name == name:
                return u
        raise KeyError(name)

    def on_stream(self, name: str) -> tuple[ExistingUnit, ...]:
        """The units along a process stream, from its supply end (the branches of a split next to each other,
        in the network's order: see :meth:`stages` for the positions)."""
        seq = [u for u in self.units if name in u.process_streams]
        return tuple(sorted(seq, key=lambda u: u.hot_position if u.hot == name else u.cold_position))

    def stages(self, name: str) -> tuple[tuple[ExistingUnit, ...], ...]:
        """The units along a process stream by position, from its supply end: one tuple per position, a
        single unit or the parallel branches of a split."""
        return stages(self.units, name)

    @property
    def has_splits(self) -> bool:
        """True when a stream is split (some unit sits on a split branch)."""
        return any(u.on_branch for u in self.units)

    @property
    def exchangers(self) -> tuple[ExistingUnit, ...]:
        return tuple(u for u in self.units if u.role is UnitRole.EXCHANGER)

    @property
    def heaters(self) -> tuple[ExistingUnit, ...]:
        return tuple(u for u in self.units if u.role is UnitRole.HEATER)

    @property
    def coolers(self) -> tuple[ExistingUnit, ...]:
        return tuple(u for u in self.units if u.role is UnitRole.COOLER)

    @property
    def total_area(self) -> float | None:
        """Area of every unit [m²]; None when any unit's area is unknown."""
        if any(u.area is None for u in self.units):
            return None
        return float(sum(u.area for u in self.units))

    def graph(self):
        """The network as a :class:`networkx.MultiGraph`: one node per process stream and per utility used
        (attribute ``kind``: ``"hot"``/``"cold"`` stream or ``"hot utility"``/``"cold utility"``), one edge
        per unit (key = unit name)."""
        import networkx as nx

        g = nx.MultiGraph()
        for s in self.streams:
            g.add_node(s.name, kind="hot" if s.is_hot else "cold")
        for u in self.units:
            for side in ("hot", "cold"):
                name = getattr(u, side)
                if name not in g:
                    g.add_node(name, kind=f"{side} utility")
            g.add_edge(u.hot, u.cold, key=u.name, role=u.role.value)
        return g

    def loops(self) -> list[list[str]]:
        """Independent loops of the network (units around each), utilities counted as nodes.

        A loop is a closed path of units through streams (two units between the same pair already make
        one); heat can be shifted around it without changing any utility (Linnhoff & Hindmarsh 1983,
        Chem. Eng. Sci. 38(5), 745-763).  Their number is units − nodes + separate components.
        """
        import networkx as nx

        g = nx.Graph()
        for u in self.units:   # subdivide every unit edge so parallel units make a cycle of a simple graph
            g.add_edge(("side", u.hot), ("unit", u.name))
            g.add_edge(("unit", u.name), ("side", u.cold))
        return [[n[1] for n in cycle if n[0] == "unit"] for cycle in nx.cycle_basis(g)]

    def grid_positions(self) -> tuple[dict[str, int], list[list[str]]]:
        """Left-to-right column of every unit on a grid diagram, and the cycles that prevent a single order.

        On a grid diagram hot streams run left to right and cold streams right to left, so along every
        stream the unit met first from its supply end must be further left (hot) or further right (cold).
        Those precedences form a directed graph; when it has cycles (a perfectly feasible network whose
        units meet the streams in crossing orders) no single left-to-right order exists: the cycles are
        returned (unit names) and the precedences of cold streams that close them are dropped.  The first
        units of the branches of a split share a column (they are one node of the graph); units in series on
        a branch follow each other.
        """
        import networkx as nx

        rep = {u.name: u.name for u in self.units}   # the branches of a split: one node (union-find)

        def root(n: str) -> str:
            while rep[n] != n:
                n = rep[n]
            return n

        hot_edges, cold_edges = [], []
        for s in self.streams:   # every unit of a position precedes every unit of the next (splits: branches)
            seq = self.stages(s.name)
            pairs = [(a.name, b.name) for g1, g2 in zip(seq, seq[1:]) for a in g1 for b in g2]
            for k, group in enumerate(seq, start=1):   # inside a split: units in series follow each other
                if len(group) < 2:
                    continue
                steps = flow_steps(group, s.name, k)
                ends: dict[tuple, list[str]] = {}   # key → the units whose outlets make it
                entering: dict[tuple, list[str]] = {}   # units that enter together (a split's first units) meet
                for step in steps:
                    if step.unit is None:
                        ends[step.key] = [n for _, out, _ in step.parts for n in ends.get(out, [])]
                        continue
                    pairs += [(a, step.unit.name) for a in ends.get(step.inlet, [])]
                    ends[step.key] = [step.unit.name]
                    entering.setdefault(step.inlet, []).append(step.unit.name)
                for names in entering.values():
                    for n in names[1:]:
                        rep[root(n)] = root(names[0])
            if s.is_hot:
                hot_edges += pairs
            else:
                cold_edges += [(b, a) for a, b in pairs]
        merged = any(rep[n] != n for n in rep)
        g = nx.DiGraph()
        g.add_nodes_from({root(n) for n in rep})
        cycles: list[list[str]] = []
        for k, (a, b) in enumerate(hot_edges + cold_edges):
            a, b = root(a), root(b)
            if a == b:
                continue
            g.add_edge(a, b)
            if not nx.is_directed_acyclic_graph(g):
                if k < len(hot_edges) and not merged:   # hot precedences alone cannot cycle; kept as a guard
                    raise AssertionError("hot-stream precedences form a cycle")
                cycle = nx.find_cycle(g, source=a)
                cycles.append([e[0] for e in cycle])
                g.remove_edge(a, b)
        column: dict[str, int] = {}
        for n in nx.topological_sort(g):
            column[n] = max((column[p] + 1 for p in g.predecessors(n)), default=0)
        return {n: column[root(n)] for n in rep}, cycles

    # -- changes (for retrofit) -----------------------------------------------------------------

    def with_units(self, units: Sequence[ExistingUnit], *, note: str | None = None) -> ExistingNetwork:
        """A new network with these units (checked and completed again), same streams and utilities."""
        notes = tuple(n for n in self.notes) + ((note,) if note else ())
        return ExistingNetwork(self.streams, tuple(units), self.utilities, self.source, notes)

    def with_changes(self, name: str, **changes) -> ExistingNetwork:
        """A new network where unit ``name`` has other field values (e.g. ``area=...``).

        Examples
        --------
        >>> from heatloom.model import StreamTable, Utility
        >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5])
        >>> u = [Utility("steam", 180, 179, 100.0), Utility("water", 20, 30, 10.0)]
        >>> net = ExistingNetwork(s, [ExistingUnit("E1", "H1", "C1", area=2.0, u=0.5),
        ...                           ExistingUnit("H1", "steam", "C1", duty=100.0),
        ...                           ExistingUnit("C1", "H1", "water", duty=100.0)], u)
        >>> net.with_changes("E1", area=3.0).unit("E1").area
        3.0
        """
        self.unit(name)
        return self.with_units([replace(u, **changes) if u.name == name else u for u in self.units])

    def with_unit(self, unit: ExistingUnit) -> ExistingNetwork:
        """A new network with one more unit inserted at its given positions (later units move down one).

        ``unit.hot_position``/``cold_position`` say where it goes on its process streams (1 = first from the
        supply end); None puts it last.
        """
        units = list(self.units)
        for side in ("hot", "cold"):
            stream = getattr(unit, side)
            if stream not in self._stream_names:
                continue
            n = len(self.stages(stream))
            p = getattr(unit, f"{side}_position")
            if p is None or p > n:
                unit = replace(unit, **{f"{side}_position": n + 1})
                continue
            for i, u in enumerate(units):
                for s2 in ("hot", "cold"):
                    if getattr(u, s2) == stream and getattr(u, f"{s2}_position") >= p:
                        units[i] = replace(units[i], **{f"{s2}_position": getattr(units[i], f"{s2}_position") + 1})
        return self.with_units(units + [unit])

    @classmethod
    def from_network(cls, network, streams: StreamTable, utilities: Sequence[Utility] = (), *,
                     source: str | None = None) -> ExistingNetwork:
        """The existing-network form of a designed :class:`heatloom.network.Network`.

        Units are named ``E1``..., ``H1``..., ``C1``... in the design's order and carry its areas, U values,
        duties and flow fractions; their order along every stream, the splits and the branches of units in
        series follow the design's temperatures (:func:`heatloom.network.streamorder.stream_order`).

        Raises
        ------
        InputError
            If a unit has no area, or the design has a split the existing network cannot represent (a branch
            with a bypass: :mod:`heatloom.retrofit.branches`).
        """
        from ..network.streamorder import stream_branches, stream_order, stream_positions

        units = []
        for prefix, group in (("E", network.exchangers), ("H", network.heaters), ("C", network.coolers)):
            for k, x in enumerate(group, start=1):
                name = f"{prefix}{k}"
                if x.area is None:
                    raise InputError(f"unit {name} ({_pair(x)}) has no area")
                hot = getattr(x, "hot", None) or x.utility
                cold = getattr(x, "cold", None) or x.utility
                shares = {f"{side}_fraction": design_share(getattr(x, f"{side}_fraction", 1.0)) for side in ("hot", "cold")}
                if prefix != "E":   # the part of its utility's range the unit takes (hot oil piped in series)
                    shares[f"{'hot' if prefix == 'H' else 'cold'}_temperatures"] = (x.utility_in, x.utility_out)
                units.append((ExistingUnit(name, hot, cold, area=x.area, duty=x.duty, u=x.u, **shares), x))
        ours = {x.name: u.name for u, x in units}
        positions: dict[str, dict] = {}
        order = stream_order(network)
        for design_name, where in stream_positions(network, order).items():
            at = positions.setdefault(ours[design_name], {})
            at.update({f"{side}_position": k for side, k in zip(("hot", "cold"), where) if k is not None})
        for design_name, where in stream_branches(network, order).items():
            for side, on in zip(("hot", "cold"), where):
                if on is not None:
                    positions[ours[design_name]].update({f"{side}_branch": "/".join(map(str, on[0])),
                                                         f"{side}_branch_order": on[1]})
        done = [replace(u, **positions.get(u.name, {})) for u, _ in units]
        try:
            return cls(streams, tuple(done), tuple(utilities), source,
                       ("built from a heatloom design: areas, U and duties of the design",))
        except InputError as e:   # name the design's unit beside the name given here
            by_row = {u.name: x for u, x in units}
            named = [f"{n} is the design's {x.name or _pair(x)}" for n, x in by_row.items() if f"'{n}'" in e.message]
            raise InputError(e.message + (f" ({'; '.join(named)})" if named else "")) from None

    # -- output ---------------------------------------------------------------------------------

    def to_dict(self) -> dict:
        return {"source": self.source, "units": [u.to_dict() for u in self.units], "total_area": self.total_area,
                "notes": list(self.notes)}

    def to_frame(self):
        """One row per unit, canonical units in the headers (with the flow fractions when a stream is split)."""
        import pandas as pd

        split = {"hot fraction [-]": "hot_fraction", "cold fraction [-]": "cold_fraction"} if self.has_splits else {}
        if any(u.hot_branch or u.cold_branch for u in self.units):
            split.update({"hot_branch": "hot_branch", "hot_branch_order": "hot_branch_order",
                          "cold_branch": "cold_branch", "cold_branch_order": "cold_branch_order"})
        ends = {u.name: self._utility_ends_written(u) for u in self.units}
        keys = ("hot in [°C]", "hot out [°C]", "cold in [°C]", "cold out [°C]")
        return pd.DataFrame([{"unit": u.name, "role": u.role.value, "mode": u.mode.value, "hot": u.hot,
                              "cold": u.cold, "hot_order": u.hot_position, "cold_order": u.cold_position,
                              **{k: _written(getattr(u, a)) for k, a in split.items()},
                              "area [m²]": u.area, "duty [kW]": u.duty, "U [kW/(m²·K)]": u.u,
                              "type": u.arrangement.value, "shells": u.shells,
                              **(dict(zip(keys, ends[u.name])) if any(t is not None for e in ends.values() for t in e) else {})}
                             for u in self.units])

    def _utility_ends_written(self, u: ExistingUnit) -> tuple:
        """(hot in, hot out, cold in, cold out) [°C] of the units table: the part of a non-isothermal
        utility's range a heater or cooler takes, where it takes only a part; None elsewhere."""
        out: list = [None] * 4
        if u.role is not UnitRole.EXCHANGER:
            side = "hot" if u.role is UnitRole.HEATER else "cold"
            util, taken = self.utility(getattr(u, side)), self.unit_side(u, getattr(u, side))
            if (taken.supply_temperature, taken.target_temperature) != (util.supply_temperature,
                                                                          util.target_temperature):
                k = 0 if side == "hot" else 2
                out[k:k + 2] = taken.supply_temperature, taken.target_temperature
        return tuple(out)


_ROLE_RULE = ("unit between two process streams is an exchanger, one with a hot utility a heater, one with a cold "
              "utility a cooler")
_NEITHER = ("give one of them (only a heater or cooler that is the last unit on its stream may leave both empty: "
            "it takes the rest of the stream's duty)")


def _written(value):
    """A value as the units table writes it: places on a branch path as ``"1/2"``."""
    return "/".join(map(str, value)) if isinstance(value, tuple) else value


def _article(word: str) -> str:
    return f"{'an' if word[0] in 'aeiou' else 'a'} {word}"


def _pair(x) -> str:
    hot = getattr(x, "hot", None) or getattr(x, "utility", "?")
    cold = getattr(x, "cold", None) or getattr(x, "utility", "?")
    return f"{hot} → {cold}"

