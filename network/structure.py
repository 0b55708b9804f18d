"""A heat-exchanger network with temperatures: exchangers, heaters, coolers, and the checks every one passes.

The result objects of design (:class:`Network`, :class:`Exchanger`, :class:`Heater`, :class:`Cooler`) are
frozen dataclasses whose ``to_dict`` gives the stable JSON shape of ``heatloom design --json`` (see
DEVELOPERS.md).  :func:`check_network` verifies the energy balance of every stream and of every unit and
the minimum approach at both ends of every unit (and at the segment breaks inside it, by
:func:`smallest_approach`, which the rating of existing networks uses too); a network that fails it is
never returned by design.
"""

from __future__ import annotations

import functools
from collections.abc import Sequence
from dataclasses import dataclass, field, fields, replace
from typing import ClassVar

import numpy as np

from ..errors import InfeasibleError
from ..model import Stream, StreamTable, Utility

__all__ = [
    "Exchanger",
    "Heater",
    "Cooler",
    "Network",
    "stream_enthalpy",
    "stream_temperature",
    "smallest_approach",
    "check_network",
    "approach_violations",
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

    def to_dict(self) -> dict:
        """The stable JSON shape: the unit's own attributes in their order, then ``_JSON_TAIL``."""
        tail = self._JSON_TAIL
        return {**{f.name: getattr(self, f.name) for f in fields(self) if f.name not in tail},
                **{k: getattr(self, k) for k in tail}}


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

    The size, cost and stage are keyword-only (see ``area``, ``cost``, ``u``, ``lmtd``, ``stage``,
    ``shells``, ``f_factor``, ``geometry`` of the heater and cooler alike).
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
        import pandas as pd

        rows = []
        for e in self.exchangers:
            rows.append({"unit": f"E{len(rows) + 1}", "type": "exchanger", "hot": e.hot, "cold": e.cold,
                         "duty [kW]": e.duty, "hot in [°C]": e.hot_in, "hot out [°C]": e.hot_out,
                         "cold in [°C]": e.cold_in, "cold out [°C]": e.cold_out,
                         "hot fraction [-]": e.hot_fraction, "cold fraction [-]": e.cold_fraction,
                         "area [m²]": e.area, "cost [money/year]": e.cost})
        for h in self.heaters:
            rows.append({"unit": f"H{sum(r['type'] == 'heater' for r in rows) + 1}", "type": "heater",
                         "hot": h.utility, "cold": h.cold, "duty [kW]": h.duty, "hot in [°C]": h.utility_in,
                         "hot out [°C]": h.utility_out, "cold in [°C]": h.cold_in, "cold out [°C]": h.cold_out,
                         "hot fraction [-]": 1.0, "cold fraction [-]": h.cold_fraction,
                         "area [m²]": h.area, "cost [money/year]": h.cost})
        for c in self.coolers:
            rows.append({"unit": f"C{sum(r['type'] == 'cooler' for r in rows) + 1}", "type": "cooler",
                         "hot": c.hot, "cold": c.utility, "duty [kW]": c.duty, "hot in [°C]": c.hot_in,
                         "hot out [°C]": c.hot_out, "cold in [°C]": c.utility_in,
                         "cold out [°C]": c.utility_out, "hot fraction [-]": c.hot_fraction,
                         "cold fraction [-]": 1.0, "area [m²]": c.area, "cost [money/year]": c.cost})
        return pd.DataFrame(rows)


def _side_duty(stream: Stream, t_in: float, t_out: float, fraction: float) -> float:
    return fraction * abs(stream_enthalpy(stream, t_out) - stream_enthalpy(stream, t_in))


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
