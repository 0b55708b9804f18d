"""A heat-exchanger network with temperatures: exchangers, heaters, coolers, and the checks every one passes.

The result objects of design (:class:`Network`, :class:`Exchanger`, :class:`Heater`, :class:`Cooler`) are
frozen dataclasses whose ``to_dict`` gives the stable JSON shape of ``heatloom design --json`` (see
DEVELOPERS.md).  Every unit of a network has a name (``X1``, ``HU-1``, ``CU-1``, ... by :func:`name_units`,
never a stream's or utility's name), the same in the JSON, the units table (:meth:`Network.to_frame`, which
is also the network table a retrofit study reads) and the grid diagram.  :func:`check_network` verifies the energy balance of every stream and of every unit and
the minimum approach at both ends of every unit (and at the segment breaks inside it, by
:func:`smallest_approach`, which the rating of existing networks uses too); a network that fails it is
never returned by design.
"""

from __future__ import annotations

import functools
import string
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field, fields, replace
from typing import ClassVar

import numpy as np

from ..errors import InfeasibleError
from ..model import Stream, StreamTable, Utility
from .streamorder import grid_key, stream_branches, stream_order, stream_positions

__all__ = [
    "Exchanger",
    "Heater",
    "Cooler",
    "Network",
    "UNIT_PREFIXES",
    "EXCHANGER_TYPE_LABELS",
    "FRAME_COLUMNS",
    "grid_key",
    "name_units",
    "unit_names",
    "stream_positions",
    "stream_branches",
    "stream_enthalpy",
    "stream_temperature",
    "smallest_approach",
    "check_network",
    "approach_violations",
    "process_sides",
]


@functools.lru_cache(maxsize=4096)
def _profile(stream: Stream) -> tuple[np.ndarray, np.ndarray, float, float]:
    """Progress coordinate p (−T for hot streams, T for cold, so it always rises from the supply end),
    cumulative heat from the supply end [kW], and the first and last segments' CP [kW/K]."""
    sign = -1.0 if stream.is_hot else 1.0
    p = sign * np.array([stream.supply_temperature] + [g.target_temperature for g in stream.segments])
    h = np.concatenate(([0.0], np.cumsum([g.duty for g in stream.segments])))
    return p, h, stream.segments[0].heat_capacity_flow, stream.segments[-1].heat_capacity_flow


def stream_enthalpy(stream: Stream, temperature: float, *, extrapolate: bool = False) -> float:
    """Heat exchanged by a stream between its supply temperature and ``temperature`` [kW].

    Piecewise linear over the stream's segments.  Beyond the supply and target temperatures the value is
    clamped, or with ``extrapolate`` continued with the end segments' heat capacity flow (negative before
    the supply temperature), as the simulation of existing networks needs.

    Examples
    --------
    >>> from heatloom.model import Segment
    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> stream_enthalpy(s, 109.5), stream_enthalpy(s, 108), stream_enthalpy(s, 108, extrapolate=True)
    (70.0, 120.0, 220.0)
    """
    p, h, cp0, cp1 = _profile(stream)
    x = -temperature if stream.is_hot else temperature
    if x <= p[0]:
        return float(cp0 * (x - p[0])) if extrapolate else 0.0
    if x >= p[-1]:
        return float(h[-1] + cp1 * (x - p[-1])) if extrapolate else float(h[-1])
    return float(np.interp(x, p, h))


def stream_temperature(stream: Stream, enthalpy: float, *, extrapolate: bool = False) -> float:
    """Temperature of a stream after exchanging ``enthalpy`` [kW] from its supply end [°C].

    The inverse of :func:`stream_enthalpy`; beyond the stream's duty the temperature is clamped at the
    supply or target temperature, or with ``extrapolate`` continued with the end segments' CP.

    Examples
    --------
    >>> from heatloom.model import Segment
    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> stream_temperature(s, 70.0), stream_temperature(s, 220.0, extrapolate=True)
    (109.5, 108.0)
    """
    p, h, cp0, cp1 = _profile(stream)
    if enthalpy <= 0.0:
        x = p[0] + enthalpy / cp0 if extrapolate else p[0]
    elif enthalpy >= h[-1]:
        x = p[-1] + (enthalpy - h[-1]) / cp1 if extrapolate else p[-1]
    else:
        x = float(np.interp(enthalpy, h, p))
    return float(-x if stream.is_hot else x)


@dataclass(frozen=True, kw_only=True)
class _Unit:
    """Size, cost and place of a unit: the keyword-only attributes every unit has, and its JSON shape.

    Attributes
    ----------
    area : float or None
        Heat-transfer area [m²]; None when film coefficients are not known.
    cost : float or None
        Capital cost [money/year when annualised, else money].
    u : float or None
        Overall heat-transfer coefficient [kW/(m²·K)].
    lmtd : float or None
        Effective log-mean temperature difference [K].
    stage : int
        Stage of the placement, hot end first [-]: along every stream, units of a lower stage come first
        from its hot end (used to draw the grid diagram).
    shells : int or None
        Shells in series [-] (1-2 shell-and-tube units).
    f_factor : float or None
        LMTD correction factor F [-].
    geometry : dict or None
        The geometry report of the exchanger type, when one was asked for.
    name : str or None
        The unit's name (tag) in tables and figures.  Left None by the builders: :class:`Network` names
        its unnamed units (:func:`name_units`); names given (e.g. an existing network's tags) are kept.
    """

    _JSON_TAIL: ClassVar[tuple[str, ...]] = ("area", "cost", "u", "lmtd", "region", "stage", "shells", "f_factor",
                                             "geometry")

    area: float | None = None
    cost: float | None = None
    u: float | None = None
    lmtd: float | None = None
    stage: int = 0
    shells: int | None = None
    f_factor: float | None = None
    geometry: dict | None = field(default=None, compare=False)
    name: str | None = field(default=None, compare=False)

    def to_dict(self) -> dict:
        """The stable JSON shape: ``name``, the unit's own attributes in their order, then ``_JSON_TAIL``."""
        tail = self._JSON_TAIL + ("name",)
        return {"name": self.name, **{f.name: getattr(self, f.name) for f in fields(self) if f.name not in tail},
                **{k: getattr(self, k) for k in self._JSON_TAIL}}


@dataclass(frozen=True)
class Exchanger(_Unit):
    """A process-to-process exchanger (counter-current unless sized otherwise).

    Attributes
    ----------
    hot, cold : str
        Stream names.
    duty : float
        [kW]
    hot_in, hot_out, cold_in, cold_out : float
        Terminal temperatures [°C].
    hot_fraction, cold_fraction : float
        Share of the stream's flow through this unit [-]; 1 when the stream is not split here.
    region : str
        Pinch subnetwork the unit belongs to ("above", "below" or "whole").

    The size, cost, stage and name are keyword-only (see ``area``, ``cost``, ``u``, ``lmtd``, ``stage``,
    ``shells``, ``f_factor``, ``geometry``, ``name`` of the heater and cooler alike).
    """

    _JSON_TAIL: ClassVar[tuple[str, ...]] = ("area", "cost", "u", "lmtd", "shells", "f_factor", "region", "stage",
                                             "geometry")

    hot: str
    cold: str
    duty: float
    hot_in: float
    hot_out: float
    cold_in: float
    cold_out: float
    hot_fraction: float = 1.0
    cold_fraction: float = 1.0
    region: str = "whole"

    @property
    def sides(self) -> tuple[str, str]:
        """(hot side, cold side) names."""
        return self.hot, self.cold

    @property
    def terminals(self) -> tuple[float, float, float, float]:
        """(hot in, hot out, cold in, cold out) [°C]."""
        return self.hot_in, self.hot_out, self.cold_in, self.cold_out


@dataclass(frozen=True)
class Heater(_Unit):
    """A utility heater on a cold stream (utility temperatures in [°C], duty in [kW])."""

    cold: str
    utility: str
    duty: float
    cold_in: float
    cold_out: float
    utility_in: float
    utility_out: float
    cold_fraction: float = 1.0
    region: str = "above"

    @property
    def sides(self) -> tuple[str, str]:
        """(hot side, cold side) names: the utility, then the stream."""
        return self.utility, self.cold

    @property
    def terminals(self) -> tuple[float, float, float, float]:
        """(hot in, hot out, cold in, cold out) [°C], the utility on the hot side."""
        return self.utility_in, self.utility_out, self.cold_in, self.cold_out


@dataclass(frozen=True)
class Cooler(_Unit):
    """A utility cooler on a hot stream (utility temperatures in [°C], duty in [kW])."""

    hot: str
    utility: str
    duty: float
    hot_in: float
    hot_out: float
    utility_in: float
    utility_out: float
    hot_fraction: float = 1.0
    region: str = "below"

    @property
    def sides(self) -> tuple[str, str]:
        """(hot side, cold side) names: the stream, then the utility."""
        return self.hot, self.utility

    @property
    def terminals(self) -> tuple[float, float, float, float]:
        """(hot in, hot out, cold in, cold out) [°C], the utility on the cold side."""
        return self.hot_in, self.hot_out, self.utility_in, self.utility_out


UNIT_PREFIXES: dict[str, str] = {"exchanger": "X", "heater": "HU-", "cooler": "CU-"}
"""Prefix of the names :func:`name_units` gives (then 1, 2, ... in grid order): exchangers ``X1``, heaters
``HU-1``, coolers ``CU-1``.  Chosen so that the common stream names (H1, C1) and utility names (HU, CU)
are never a unit's name; a name that still meets a stream, utility or other unit name gets a letter
(``X1a``, ``X1b``, ...)."""

EXCHANGER_TYPE_LABELS: dict[str, str] = {"counter_current": "counter-current", "co_current": "co-current",
                                         "shell_and_tube_1_2": "1-2", "double_pipe": "double pipe"}
"""Exchanger type (:class:`heatloom.model.ExchangerType` value) → its word in the units table."""

def _free(name: str, taken: set[str]) -> str:
    """``name``, or the first of ``name`` + a, b, ..., z, aa, ... that is not taken."""
    if name not in taken:
        return name
    k = 0
    while True:
        k += 1
        suffix, n = "", k
        while n:
            n, r = divmod(n - 1, 26)
            suffix = string.ascii_lowercase[r] + suffix
        if name + suffix not in taken:
            return name + suffix


def name_units(exchangers: Sequence, heaters: Sequence, coolers: Sequence) -> tuple[tuple, tuple, tuple]:
    """The units with a name each: names given are kept, the others named ``X1``..., ``HU-1``...,
    ``CU-1``... (:data:`UNIT_PREFIXES`).

    Each kind is numbered in grid order (:func:`grid_key`, then the given order), so on the grid diagram
    the numbers rise from left to right.  No name meets a stream or utility name of the units, nor
    another unit's name: a clash gets a letter (``X1a``), deterministically; a name given twice keeps its
    first use and gets a letter after.

    Parameters
    ----------
    exchangers, heaters, coolers : sequence of Exchanger, Heater, Cooler

    Returns
    -------
    tuple
        (exchangers, heaters, coolers) as tuples, in the given order, every unit named.

    Examples
    --------
    Streams named like units: the exchanger on stream "X1" is "X1a".

    >>> e = Exchanger("X1", "C1", 100.0, 150, 100, 40, 90)
    >>> h = Heater("C1", "HU", 50.0, 90, 100, 180, 179)
    >>> ex, he, co = name_units([e], [h], [])
    >>> ex[0].name, he[0].name
    ('X1a', 'HU-1')
    """
    groups = [tuple(exchangers), tuple(heaters), tuple(coolers)]
    taken: set[str] = set()
    for group in groups:
        for u in group:
            taken.update(u.sides)
    named: list[list] = [list(g) for g in groups]
    seen: set[str] = set()
    for g in named:
        for i, u in enumerate(g):
            if u.name:
                if u.name in seen:
                    g[i] = replace(u, name=_free(u.name, taken | seen))
                seen.add(g[i].name)
    taken |= seen
    for g, prefix in zip(named, UNIT_PREFIXES.values()):
        order = sorted(range(len(g)), key=lambda i: grid_key(g[i]))
        for k, i in enumerate(order, start=1):
            if not g[i].name:
                name = _free(f"{prefix}{k}", taken)
                taken.add(name)
                g[i] = replace(g[i], name=name)
    return tuple(named[0]), tuple(named[1]), tuple(named[2])


def unit_names(network: Network) -> dict[str, object]:
    """Name → unit of every unit of a network, exchangers, heaters, coolers in the network's order."""
    return {u.name: u for u in (*network.exchangers, *network.heaters, *network.coolers)}


@dataclass(frozen=True, eq=False)
class Network:
    """A designed network.

    Attributes
    ----------
    exchangers, heaters, coolers : tuple
    dt_min : float
        Minimum approach every unit keeps [K].
    capital_cost, operating_cost, total_annual_cost : float or None
        [money/year]; None when areas could not be computed (no film coefficients).
    currency : str
    notes : tuple of str
        Assumptions and defaults in force, in plain words.
    solves : tuple
        Solver reports of the models solved to build the network.

    Every unit has a name once the network is built: unnamed units are named by :func:`name_units`
    (``X1``, ``HU-1``, ``CU-1``, ...), so no builder has to.
    """

    exchangers: tuple[Exchanger, ...]
    heaters: tuple[Heater, ...]
    coolers: tuple[Cooler, ...]
    dt_min: float
    capital_cost: float | None = None
    operating_cost: float | None = None
    total_annual_cost: float | None = None
    currency: str = ""
    notes: tuple[str, ...] = ()
    solves: tuple = field(default=(), compare=False)
    unit_target: int | None = None

    def __post_init__(self) -> None:
        units = (*self.exchangers, *self.heaters, *self.coolers)
        names = [u.name for u in units]
        if all(names) and len(set(names)) == len(names):
            return
        ex, he, co = name_units(self.exchangers, self.heaters, self.coolers)
        object.__setattr__(self, "exchangers", ex)
        object.__setattr__(self, "heaters", he)
        object.__setattr__(self, "coolers", co)

    @property
    def units(self) -> int:
        """Number of units: exchangers + heaters + coolers [-]."""
        return len(self.exchangers) + len(self.heaters) + len(self.coolers)

    @property
    def hot_utility(self) -> float:
        """[kW]"""
        return float(sum(h.duty for h in self.heaters))

    @property
    def cold_utility(self) -> float:
        """[kW]"""
        return float(sum(c.duty for c in self.coolers))

    @property
    def heat_recovery(self) -> float:
        """[kW]"""
        return float(sum(e.duty for e in self.exchangers))

    def with_costs(self, **changes) -> Network:
        return replace(self, **changes)

    def to_dict(self) -> dict:
        return {
            "exchangers": [e.to_dict() for e in self.exchangers],
            "heaters": [h.to_dict() for h in self.heaters],
            "coolers": [c.to_dict() for c in self.coolers],
            "capital_cost": self.capital_cost,
            "operating_cost": self.operating_cost,
            "total_annual_cost": self.total_annual_cost,
            "units": self.units,
            "unit_target": self.unit_target,
            "hot_utility": self.hot_utility,
            "cold_utility": self.cold_utility,
            "heat_recovery": self.heat_recovery,
            "dtmin": self.dt_min,
            "currency": self.currency,
            "notes": list(self.notes),
            "solves": [s.to_dict() if hasattr(s, "to_dict") else s for s in self.solves],
        }

    def to_frame(self):
        """The units table, one row per unit: exchangers, heaters, coolers, each in grid order.

        Columns (:data:`FRAME_COLUMNS`, the cost header with the network's currency): name, role, the two
        sides, duty, area, U, LMTD, F, shells, area per shell, type, double-pipe hairpins, the position along the hot and the
        cold process stream from its supply end (empty on a utility side, :func:`stream_positions`), the
        terminal temperatures, the flow fractions, the branch of a split and the place on it of a unit on a
        split branch (empty elsewhere, :func:`stream_branches`) and the cost.  It is the network table that a
        retrofit study reads back.
        """
        import pandas as pd

        order = stream_order(self)
        positions, branches = stream_positions(self, order), stream_branches(self, order)
        cost = f"cost [{self.currency or 'money'}/year]"
        rows = []
        for role, group in (("exchanger", self.exchangers), ("heater", self.heaters), ("cooler", self.coolers)):
            for u in sorted(group, key=grid_key):
                hot, cold = u.sides
                kind = (u.geometry or {}).get("type") or ("shell_and_tube_1_2" if (u.shells or 1) > 1
                                                          else "counter_current")
                per_shell = None if u.area is None else u.area / (u.shells or 1)
                hot_order, cold_order = positions[u.name]
                on = [("/".join(map(str, b[0])), "/".join(map(str, b[1]))) if b else (None, None)
                      for b in branches[u.name]]
                rows.append(dict(zip(FRAME_COLUMNS[:-1] + (cost,), (
                    u.name, role, hot, cold, u.duty, u.area, u.u, u.lmtd, u.f_factor, u.shells or 1, per_shell,
                    EXCHANGER_TYPE_LABELS.get(kind, kind), (u.geometry or {}).get("hairpins"), hot_order,
                    cold_order, *u.terminals,
                    getattr(u, "hot_fraction", 1.0), getattr(u, "cold_fraction", 1.0), *on[0], *on[1], u.cost))))
        frame = pd.DataFrame(rows, columns=list(FRAME_COLUMNS[:-1] + (cost,)))
        return frame.astype({"hot_order": "Int64", "cold_order": "Int64", "shells": "Int64", "hairpins": "Int64"})


FRAME_COLUMNS = ("unit", "role", "hot", "cold", "duty [kW]", "area [m²]", "U [kW/(m²·K)]", "LMTD [K]", "F [-]",
                 "shells", "area per shell [m²]", "type", "hairpins", "hot_order", "cold_order", "hot in [°C]", "hot out [°C]",
                 "cold in [°C]", "cold out [°C]", "hot fraction [-]", "cold fraction [-]", "hot_branch",
                 "hot_branch_order", "cold_branch", "cold_branch_order", "cost [money/year]")
"""Columns of :meth:`Network.to_frame`, in order (the cost header carries the network's currency)."""


def process_sides(network: Network) -> Iterator[tuple[object, str, bool, float, float, float]]:
    """Every process-stream side of every unit: (unit, stream name, hot side?, flow fraction of the stream
    the side carries [-], inlet and outlet temperatures of that side [°C]); utility sides are left out.

    Examples
    --------
    >>> a = Exchanger("H1", "C1", 60.0, 150, 100, 40, 100, hot_fraction=0.6, name="A")
    >>> c = Cooler("H1", "CW", 50.0, 100, 75, 20, 30, name="C")
    >>> [(u.name, s, hot, f) for u, s, hot, f, _, _ in process_sides(Network((a,), (), (c,), 10.0))]
    [('A', 'H1', True, 0.6), ('A', 'C1', False, 1.0), ('C', 'H1', True, 1.0)]
    """
    for e in network.exchangers:
        yield e, e.hot, True, e.hot_fraction, e.hot_in, e.hot_out
        yield e, e.cold, False, e.cold_fraction, e.cold_in, e.cold_out
    for h in network.heaters:
        yield h, h.cold, False, h.cold_fraction, h.cold_in, h.cold_out
    for c in network.coolers:
        yield c, c.hot, True, c.hot_fraction, c.hot_in, c.hot_out


def _side_duty(stream: Stream, t_in: float, t_out: float, fraction: float) -> float:
    # a split branch (fraction < 1) may pass its stream's target before it mixes back
    # (design_tac(branch_overshoot=True)): its enthalpy is continued beyond the range; a whole stream's is not
    beyond = fraction < 1.0
    return fraction * abs(stream_enthalpy(stream, t_out, extrapolate=beyond) -
                          stream_enthalpy(stream, t_in, extrapolate=beyond))


def smallest_approach(hot: Stream | Utility | None, cold: Stream | Utility | None, hot_in: float, hot_out: float,
                      cold_in: float, cold_out: float, *, duty: float | None = None,
                      hot_fraction: float | None = None, cold_fraction: float | None = None) -> float:
    """Smallest hot − cold temperature difference along a counter-current unit [K].

    Checked at both ends (hot inlet against cold outlet, hot outlet against cold inlet) and at every
    segment break of a process stream inside the unit: both sides are piecewise linear in the heat
    transferred, so the minimum lies at one of these points.  The two profiles are paired by the heat
    transferred from the hot end.  A process side follows its stream's enthalpy profile
    (:func:`stream_enthalpy`, continued beyond the supply and target temperatures with the end segments'
    CP); a utility side (or None) runs linearly between the two temperatures given.

    Parameters
    ----------
    hot, cold : Stream, Utility or None
        The unit's two sides; a Utility or None is a linear side.
    hot_in, hot_out, cold_in, cold_out : float
        Terminal temperatures [°C].
    duty : float, optional
        Heat the unit transfers [kW]; by default the heat the hot stream's share exchanges between its
        terminal temperatures (the cold stream's when the hot side is a utility).
    hot_fraction, cold_fraction : float, optional
        Share of each stream's flow that passes the unit (a split branch) [-]; by default the share whose
        heat between the side's terminal temperatures is ``duty``.

    Returns
    -------
    float
        [K]; negative where the profiles cross.  Only the ends count when neither side is a stream or
        the duty is not > 0.

    Examples
    --------
    A hot stream cooled 150 → 100 °C (1 kW/K) then condensing 100 → 90 °C (10 kW/K), 150 kW, heats a cold
    stream of 1.5 kW/K from 20 to 120 °C.  The ends give 30 K and 70 K; at the break the hot side has given
    50 kW, so the cold side is at 120 − 50/1.5 = 86.667 °C: 13.333 K, the smallest.  Against condensing
    steam only the ends count.

    >>> from heatloom.model import Segment
    >>> h = Stream("H", (Segment(150, 100, 1.0), Segment(100, 90, 10.0)))
    >>> c = Stream.simple("C", 20, 120, 1.5)
    >>> round(smallest_approach(h, c, 150, 90, 20, 120), 3)
    13.333
    >>> smallest_approach(Utility("steam", 180, 179, 100.0), c, 180, 179, 20, 120)
    60
    """
    ends = [hot_in - cold_out, hot_out - cold_in]
    hot_s = hot if isinstance(hot, Stream) else None
    cold_s = cold if isinstance(cold, Stream) else None
    # heat each stream exchanges between its terminal temperatures, whole flow [kW]
    base_h = stream_enthalpy(hot_s, hot_in, extrapolate=True) if hot_s is not None else 0.0
    base_c = stream_enthalpy(cold_s, cold_out, extrapolate=True) if cold_s is not None else 0.0
    q_h = stream_enthalpy(hot_s, hot_out, extrapolate=True) - base_h if hot_s is not None else None
    q_c = base_c - stream_enthalpy(cold_s, cold_in, extrapolate=True) if cold_s is not None else None
    q = duty
    if q is None:
        q = q_h * (1.0 if hot_fraction is None else hot_fraction) if q_h is not None else \
            q_c * (1.0 if cold_fraction is None else cold_fraction) if q_c is not None else None
    if q is None or not q > 0:
        return min(ends)

    def stream_heat(x: float, fraction: float | None, q_side: float) -> float:
        """Heat of the whole stream [kW] while the unit transfers x kW."""
        return x / fraction if fraction is not None else x * q_side / q

    def unit_heat(y: float, fraction: float | None, q_side: float) -> float:
        """Heat the unit transfers [kW] while the whole stream exchanges y kW (inverse of stream_heat)."""
        return y * fraction if fraction is not None else y * q / q_side

    xs = []  # heat from the hot end (hot inlet, cold outlet)
    if hot_s is not None:
        for g in hot_s.segments:
            x = unit_heat(stream_enthalpy(hot_s, g.target_temperature, extrapolate=True) - base_h, hot_fraction, q_h)
            if 0 < x < q:
                xs.append(x)
    if cold_s is not None:
        for g in cold_s.segments:
            x = unit_heat(base_c - stream_enthalpy(cold_s, g.target_temperature, extrapolate=True), cold_fraction,
                          q_c)
            if 0 < x < q:
                xs.append(x)

    def t_hot(x):
        if hot_s is not None:
            return stream_temperature(hot_s, base_h + stream_heat(x, hot_fraction, q_h), extrapolate=True)
        return hot_in + (hot_out - hot_in) * x / q

    def t_cold(x):
        if cold_s is not None:
            return stream_temperature(cold_s, base_c - stream_heat(x, cold_fraction, q_c), extrapolate=True)
        return cold_out + (cold_in - cold_out) * x / q

    return min(ends + [t_hot(x) - t_cold(x) for x in xs])


def approach_violations(network: Network, streams: StreamTable, utilities: Sequence[Utility] = (), *,
                        dt_min: float | None = None, contributions: bool = True, tol: float = 1e-6) -> list[str]:
    """Every unit whose smallest approach (ends and inner breakpoints) is below what it needs, in words.

    A unit needs the sum of its two sides' shifts (:meth:`heatloom.model.Stream.shift`: a stream's own ΔTmin
    contribution where given, else ΔTmin/2; a utility ΔTmin/2), which is ΔTmin where no contribution is
    given; with ``contributions=False`` every unit needs ΔTmin (the lowest-TAC design, whose EMAT replaces
    the contributions).
    """
    dt = network.dt_min if dt_min is None else dt_min
    by_name = {s.name: s for s in streams}

    def need(*sides) -> float:
        if not contributions:
            return dt
        return sum(0.5 * dt if x is None else x.shift(dt) for x in sides)

    sides = [(f"exchanger {e.hot}→{e.cold}", by_name[e.hot], by_name[e.cold], e,
              (e.hot_in, e.hot_out, e.cold_in, e.cold_out), e.hot_fraction, e.cold_fraction)
             for e in network.exchangers]
    sides += [(f"heater {h.utility}→{h.cold}", None, by_name[h.cold], h,
               (h.utility_in, h.utility_out, h.cold_in, h.cold_out), None, h.cold_fraction) for h in network.heaters]
    sides += [(f"cooler {c.hot}→{c.utility}", by_name[c.hot], None, c,
               (c.hot_in, c.hot_out, c.utility_in, c.utility_out), c.hot_fraction, None) for c in network.coolers]
    problems = []
    for label, hot, cold, unit, temperatures, hot_fraction, cold_fraction in sides:
        d = smallest_approach(hot, cold, *temperatures, duty=unit.duty, hot_fraction=hot_fraction,
                              cold_fraction=cold_fraction)
        if d < need(hot, cold) - tol:
            problems.append(f"{label}: smallest approach {d:.4g} K < {need(hot, cold):g} K (ΔTmin {dt:g} K)")
    return problems


def check_network(network: Network, streams: StreamTable, utilities: Sequence[Utility] = (), *,
                  dt_min: float | None = None, contributions: bool = True, rtol: float = 1e-6) -> None:
    """Raise :class:`InfeasibleError` unless every balance and approach of the network holds.

    Checks (tolerances relative to the stream's duty, ``rtol``):

    * each unit's duty equals the heat its hot side gives and its cold side takes at its temperatures and
      flow fractions;
    * each stream's units add up to its duty (hot: exchangers + coolers; cold: exchangers + heaters);
    * every unit keeps at least ΔTmin (the sum of its sides' shifts where streams carry their own ΔTmin
      contributions; see :func:`approach_violations`) at both ends and at every inner breakpoint of a
      segmented stream.
    """
    by_name = {s.name: s for s in streams}
    problems: list[str] = []
    scale = max((s.duty for s in streams), default=1.0)
    tol = rtol * max(scale, 1.0)
    for e in network.exchangers:
        qh = _side_duty(by_name[e.hot], e.hot_in, e.hot_out, e.hot_fraction)
        qc = _side_duty(by_name[e.cold], e.cold_in, e.cold_out, e.cold_fraction)
        if abs(qh - e.duty) > tol or abs(qc - e.duty) > tol:
            problems.append(f"exchanger {e.hot}→{e.cold}: duty {e.duty:.6g} kW but hot side gives {qh:.6g} "
                            f"and cold side takes {qc:.6g} kW")
    for h in network.heaters:
        qc = _side_duty(by_name[h.cold], h.cold_in, h.cold_out, h.cold_fraction)
        if abs(qc - h.duty) > tol:
            problems.append(f"heater on {h.cold}: duty {h.duty:.6g} kW but the stream takes {qc:.6g} kW")
    for c in network.coolers:
        qh = _side_duty(by_name[c.hot], c.hot_in, c.hot_out, c.hot_fraction)
        if abs(qh - c.duty) > tol:
            problems.append(f"cooler on {c.hot}: duty {c.duty:.6g} kW but the stream gives {qh:.6g} kW")
    for s in streams:
        if s.is_hot:
            total = sum(e.duty for e in network.exchangers if e.hot == s.name) + \
                sum(c.duty for c in network.coolers if c.hot == s.name)
        else:
            total = sum(e.duty for e in network.exchangers if e.cold == s.name) + \
                sum(h.duty for h in network.heaters if h.cold == s.name)
        if abs(total - s.duty) > tol:
            problems.append(f"stream {s.name}: units exchange {total:.6g} kW but its duty is {s.duty:.6g} kW")
    problems += approach_violations(network, streams, utilities, dt_min=dt_min, contributions=contributions)
    if problems:
        raise InfeasibleError("network check failed: " + "; ".join(problems))
