"""A heat-exchanger network with temperatures: exchangers, heaters, coolers, and the checks every one passes.

The result objects of design (:class:`Network`, :class:`Exchanger`, :class:`Heater`, :class:`Cooler`) are
frozen dataclasses whose ``to_dict`` gives the stable JSON shape of ``heatloom design --json`` (see
DEVELOPERS.md).  :func:`check_network` verifies the energy balance of every stream and of every unit and
the minimum approach at both ends of every unit; a network that fails it is never returned by design.
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
        Capital cost [money per year when annualised, else money].
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
        [money per year]; None when areas could not be computed (no film coefficients).
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
                         "area [m²]": e.area, "cost [money/yr]": e.cost})
        for h in self.heaters:
            rows.append({"unit": f"H{sum(r['type'] == 'heater' for r in rows) + 1}", "type": "heater",
                         "hot": h.utility, "cold": h.cold, "duty [kW]": h.duty, "hot in [°C]": h.utility_in,
                         "hot out [°C]": h.utility_out, "cold in [°C]": h.cold_in, "cold out [°C]": h.cold_out,
                         "hot fraction [-]": 1.0, "cold fraction [-]": h.cold_fraction,
                         "area [m²]": h.area, "cost [money/yr]": h.cost})
        for c in self.coolers:
            rows.append({"unit": f"C{sum(r['type'] == 'cooler' for r in rows) + 1}", "type": "cooler",
                         "hot": c.hot, "cold": c.utility, "duty [kW]": c.duty, "hot in [°C]": c.hot_in,
                         "hot out [°C]": c.hot_out, "cold in [°C]": c.utility_in,
                         "cold out [°C]": c.utility_out, "hot fraction [-]": c.hot_fraction,
                         "cold fraction [-]": 1.0, "area [m²]": c.area, "cost [money/yr]": c.cost})
        return pd.DataFrame(rows)


def _side_duty(stream: Stream, t_in: float, t_out: float, fraction: float) -> float:
    return fraction * abs(stream_enthalpy(stream, t_out) - stream_enthalpy(stream, t_in))


def _min_approach_inside(hot: Stream | None, cold: Stream | None, e, hot_frac: float, cold_frac: float,
                         hot_temps: tuple[float, float], cold_temps: tuple[float, float]) -> float:
    """Smallest hot − cold temperature difference along a counter-current unit [K].

    Both sides are piecewise linear in duty; the minimum lies at a breakpoint of either side.
    """
    (h_in, h_out), (c_in, c_out) = hot_temps, cold_temps
    q = e.duty
    pts = {0.0, q}

    def hot_t(x):  # temperature of the hot side after giving x kW from its inlet
        if hot is None:
            return h_in + (h_out - h_in) * (x / q if q > 0 else 0.0)
        return stream_temperature(hot, stream_enthalpy(hot, h_in) + x / hot_frac)

    def cold_t(x):  # cold side temperature at the same cross-section (it leaves at the hot inlet end)
        if cold is None:
            return c_out - (c_out - c_in) * (x / q if q > 0 else 0.0)
        return stream_temperature(cold, stream_enthalpy(cold, c_out) - x / cold_frac)

    if hot is not None:
        base = stream_enthalpy(hot, h_in)
        for g_t in (g.target_temperature for g in hot.segments):
            x = (stream_enthalpy(hot, g_t) - base) * hot_frac
            if 0 < x < q:
                pts.add(x)
    if cold is not None:
        base = stream_enthalpy(cold, c_out)
        for g_t in (g.target_temperature for g in cold.segments):
            x = (base - stream_enthalpy(cold, g_t)) * cold_frac
            if 0 < x < q:
                pts.add(x)
    return min(hot_t(x) - cold_t(x) for x in sorted(pts))


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

    problems = []
    for e in network.exchangers:
        hot, cold = by_name[e.hot], by_name[e.cold]
        d = _min_approach_inside(hot, cold, e, e.hot_fraction, e.cold_fraction, (e.hot_in, e.hot_out),
                                 (e.cold_in, e.cold_out))
        if d < need(hot, cold) - tol:
            problems.append(f"exchanger {e.hot}→{e.cold}: smallest approach {d:.4g} K < {need(hot, cold):g} K "
                            f"(ΔTmin {dt:g} K)")
    for h in network.heaters:
        cold = by_name[h.cold]
        d = _min_approach_inside(None, cold, h, 1.0, h.cold_fraction, (h.utility_in, h.utility_out),
                                 (h.cold_in, h.cold_out))
        if d < need(None, cold) - tol:
            problems.append(f"heater {h.utility}→{h.cold}: smallest approach {d:.4g} K < {need(None, cold):g} K "
                            f"(ΔTmin {dt:g} K)")
    for c in network.coolers:
        hot = by_name[c.hot]
        d = _min_approach_inside(hot, None, c, c.hot_fraction, 1.0, (c.hot_in, c.hot_out),
                                 (c.utility_in, c.utility_out))
        if d < need(hot, None) - tol:
            problems.append(f"cooler {c.hot}→{c.utility}: smallest approach {d:.4g} K < {need(hot, None):g} K "
                            f"(ΔTmin {dt:g} K)")
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
