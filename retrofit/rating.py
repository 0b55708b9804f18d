"""Rating of one unit of an existing network at its present inlet temperatures, for the simulation.

:func:`heatloom.retrofit.simulate.simulate` solves the whole network as one linear system in which every
unit is linear in its inlet temperatures, with fixed heat capacity flows.  For streams of several segments
(phase change, varying CP) it iterates: :func:`rate_unit` rates each unit at the inlet temperatures of the
last pass and returns what makes the linear system reproduce that rating,

* the **secant CPs** of its process sides over the ranges they cover (the mean CP of each stream's
  enthalpy curve between inlet and outlet), with which the linear energy balances are exact, and
* for a unit rated *exactly*, the **linear coefficient** a = Q/(T_h,in − T_c,in) (for a heater or
  cooler, Q over the driving force against the utility), which replaces ε·C_min in the system.

Exact rating (the duty is the root in Q of *segment-wise area(Q) = A*, the area summed interval by interval
between the segment breaks with the exact log mean and the unit's one U, brentq between 0 and the duty
at which the driving force closes):

* counter-current exchangers (``ExchangerType.flow_pattern`` counter-current: counter-current and
  double pipe) where either stream has several segments: :func:`~heatloom.retrofit.profiles.exchanger_area`,
  the sizing of a new design (:func:`heatloom.equipment.segments.size_segments`), bracketed by
  :func:`~heatloom.retrofit.profiles.largest_duty`;
* heaters and coolers rated against a utility at one temperature (the mean of its supply and target)
  whose process stream has several segments: ε-NTU on the secant CP is not exact there (the area of each
  piece is (C_k/U)·ln of its end differences, whose sum is not the secant CP times the ln over the unit),
  so the same area root is taken with :func:`~heatloom.retrofit.profiles.isothermal_utility_area`.

Co-current and 1-2 shell units on streams of several segments keep ε-NTU (their own relations) with the
secant CPs: Q = ε(NTU, C_r)·C_min·ΔT_in solved for Q (brentq), approximate where a segment break falls
inside the unit.  Units whose streams have one segment each need no rating here: ε-NTU with the
streams' CPs is exact and the simulation uses it directly.

References
----------
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S. (2007) Fundamentals of Heat and Mass Transfer,
6th ed., Wiley, Table 11.3 (ε-NTU relations, via :mod:`heatloom.equipment.rating`); Section 11.3 (the log
mean temperature difference of a counter-current interval).

Results are screening estimates: check them against plant measurements, and any change against local codes
with qualified, licensed engineers.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

from scipy.optimize import brentq

from ..equipment.rating import effectiveness_from_ntu
from ..errors import TemperatureCrossError
from ..model import Stream
from ..model.exchangers import ExchangerType
from ..model.existing import ExistingUnit, OperatingMode, UnitRole
from .branches import branch_stream
from .existing import ExistingNetwork
from .profiles import (
    exchanger_area,
    heat_between,
    isothermal_utility_area,
    largest_duty,
    mean_cp_between,
    temperature_after,
)

__all__ = ["UnitRating", "utility_temperature", "duty_root", "area_root", "rate_unit"]

_HAIRS = (1e-10, 1e-8, 1e-6)
"""Shares of the largest duty kept off it when the area is evaluated there [-] (the area is infinite at it;
a larger hair is tried when rounding still closes the driving force)."""


@dataclass(frozen=True)
class UnitRating:
    """A unit rated at its present inlet temperatures (see :func:`rate_unit`).

    Attributes
    ----------
    cps : dict
        Side (``"hot"``/``"cold"``) → secant CP of the process stream over the range it covers in the unit,
        per whole stream flow [kW/K]; empty when the unit needs none (streams of one segment, trim units).
    coefficient : float or None
        The linear coefficient a = Q/ΔT [kW/K] of an exactly rated unit (ΔT: hot minus cold inlet, or the
        driving force against the utility), None when the unit keeps ε-NTU on the secant CPs.
    duty : float or None
        The duty of an exactly rated unit [kW].
    """

    cps: dict[str, float] = field(default_factory=dict)
    coefficient: float | None = None
    duty: float | None = None


def utility_temperature(unit: ExistingUnit, network: ExistingNetwork) -> float:
    """Temperature [°C] at which a rated heater or cooler sees its utility: the mean of the utility's supply
    and target temperatures.

    Parameters
    ----------
    unit : ExistingUnit
        A heater or cooler.
    network : ExistingNetwork
        The network that holds its utility.

    Returns
    -------
    float
        [°C]

    Examples
    --------
    >>> from heatloom.model import StreamTable, Utility
    >>> net = ExistingNetwork(StreamTable([Stream.simple("C", 20, 90, 1.0)]), [ExistingUnit("S", "steam", "C")],
    ...                       [Utility("steam", 180, 179, 1.0)])
    >>> utility_temperature(net.unit("S"), net)
    179.5
    """
    util = network.unit_side(unit, unit.hot if unit.role is UnitRole.HEATER else unit.cold)
    return 0.5 * (util.supply_temperature + util.target_temperature)


def duty_root(residual: Callable[[float], float], edge: float) -> float:
    """Root of a unit's duty residual between 0 and the duty that closes its driving force (``edge``) [kW].

    The residual changes sign there whenever ε < 1; when rounding makes ε = 1 (huge NTU) the edge itself is
    the answer.

    Parameters
    ----------
    residual : callable
        Q [kW] → Q − ε·C_min·ΔT_in [kW].
    edge : float
        The duty at which the driving force closes [kW] (negative for a unit whose inlets are reversed).

    Returns
    -------
    float
        [kW]

    Examples
    --------
    >>> round(duty_root(lambda q: q - 0.5 * (10 - q), 10.0), 9)
    3.333333333
    """
    r0, r1 = residual(0.0), residual(edge)
    if r0 == 0 or edge == 0:
        return 0.0
    if r0 * r1 > 0:
        return edge if abs(r1) <= abs(r0) else 0.0
    return brentq(residual, 0.0, edge, xtol=1e-12 * max(1.0, abs(edge)), rtol=1e-13)


def area_root(area_of: Callable[[float], float], area: float, largest: float) -> float:
    """Duty [kW] at which a unit's segment-wise area ``area_of(Q)`` [m²] equals its area ``area`` [m²].

    ``area_of`` grows from 0 at Q = 0 without bound towards ``largest``, where the driving force closes; it
    is evaluated a hair below that (a share of 1e-10 of it, more when rounding still closes the driving force
    there).  A unit whose area exceeds even the area there does that edge duty (ε = 1 to rounding).

    Parameters
    ----------
    area_of : callable
        Q [kW] → segment-wise area [m²], increasing.
    area : float
        The unit's area [m²].
    largest : float
        The duty at which the driving force closes [kW].

    Returns
    -------
    float
        [kW]

    Examples
    --------
    An area law with a pole at 10 kW, A(Q) = Q/(10 − Q): 1 m² at 5 kW.

    >>> round(area_root(lambda q: q / (10 - q), 1.0, 10.0), 9)
    5.0
    """
    if not largest > 0 or not area > 0:
        return 0.0
    for hair in _HAIRS:
        edge = largest * (1.0 - hair)
        try:
            top = area_of(edge)
        except TemperatureCrossError:   # rounding closed the driving force that close to the edge
            continue
        if top <= area:
            return edge
        return brentq(lambda q: (area_of(q) if q > 0 else 0.0) - area, 0.0, edge,
                      xtol=1e-13 * largest, rtol=1e-14)
    return largest * (1.0 - _HAIRS[-1])


def _secants(hot: Stream, cold: Stream, th: float, tc: float, q: float, fh: float, fc: float):
    return (mean_cp_between(hot, th, temperature_after(hot, th, q / fh)),
            mean_cp_between(cold, tc, temperature_after(cold, tc, q / fc)))


def rate_unit(network: ExistingNetwork, u: ExistingUnit, streams: Mapping[str, Stream],
              inlets: Mapping[str, float]) -> UnitRating:
    """Rate one unit at these inlet temperatures: the secant CPs of its process sides and, when it is rated
    exactly, its linear coefficient (see the module notes for which units).

    Parameters
    ----------
    network : ExistingNetwork
    u : ExistingUnit
    streams : mapping
        Process stream name → Stream.
    inlets : mapping
        ``"hot"``/``"cold"`` → inlet temperature of the unit's process sides [°C].

    Returns
    -------
    UnitRating
        Secant CPs per whole stream flow (a branch of fraction f carries f times them) [kW/K].

    Examples
    --------
    A vapour condensing at 110 → 109 °C (invented numbers) heats water from 20 °C in a counter-current unit
    of 2 m² at U = 0.5 kW/(m²·K): the duty makes the segment-wise area 2 m² exactly.

    >>> from heatloom.model import Segment, StreamTable, Utility
    >>> from heatloom.model.existing import ExistingUnit
    >>> from heatloom.retrofit.existing import ExistingNetwork
    >>> from heatloom.retrofit.profiles import exchanger_area
    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> w = Stream.simple("water", 20, 90, 1.0)
    >>> net = ExistingNetwork(StreamTable([s, w]), [ExistingUnit("E", "vapour", "water", area=2.0, u=0.5)],
    ...                       [Utility("steam", 180, 179, 1.0), Utility("cw", 10, 15, 1.0)])
    >>> r = rate_unit(net, net.unit("E"), {"vapour": s, "water": w}, {"hot": 120.0, "cold": 20.0})
    >>> round(exchanger_area(s, w, 120, 20, r.duty, 0.5), 9), round(r.coefficient * 100 - r.duty, 9)
    (2.0, 0.0)
    """
    if u.role is UnitRole.EXCHANGER:
        hot, cold = streams[u.hot], streams[u.cold]
        fh, fc = u.hot_fraction, u.cold_fraction
        th, tc = inlets["hot"], inlets["cold"]
        if len(hot.segments) == 1 and len(cold.segments) == 1:
            return UnitRating()
        dt = th - tc
        if dt > 0 and u.arrangement.flow_pattern is ExchangerType.COUNTER_CURRENT:
            q = area_root(lambda x: exchanger_area(hot, cold, th, tc, x, u.u, hot_fraction=fh, cold_fraction=fc),
                          u.area, largest_duty(hot, cold, th, tc, hot_fraction=fh, cold_fraction=fc))
            ch, cc = _secants(hot, cold, th, tc, q, fh, fc)
            return UnitRating({"hot": ch, "cold": cc}, q / dt, q)

        def residual(q):
            ch, cc = _secants(hot, cold, th, tc, q, fh, fc)
            ch, cc = fh * ch, fc * cc
            cmin, cmax = min(ch, cc), max(ch, cc)
            eps = float(effectiveness_from_ntu(u.u * u.area / cmin, cmin / cmax, u.arrangement, shells=u.shells))
            return q - eps * cmin * dt

        if dt == 0:
            ch, cc = _secants(hot, cold, th, tc, 0.0, fh, fc)
        else:
            bounds = (fh * heat_between(hot, th, tc), fc * heat_between(cold, tc, th))
            edge = min(bounds) if dt > 0 else max(bounds)
            ch, cc = _secants(hot, cold, th, tc, duty_root(residual, edge), fh, fc)
        return UnitRating({"hot": ch, "cold": cc})
    side = "cold" if u.role is UnitRole.HEATER else "hot"
    stream = streams[getattr(u, side)]
    if len(stream.segments) == 1 or u.mode is OperatingMode.TRIM:
        return UnitRating()
    t_in = inlets[side]
    if u.mode is OperatingMode.FIXED_DUTY:
        share = u.fraction(stream.name)
        return UnitRating({side: mean_cp_between(stream, t_in, temperature_after(stream, t_in, u.duty / share))})
    share = u.fraction(stream.name)
    t_u = utility_temperature(u, network)
    drive = (t_u - t_in) if side == "cold" else (t_in - t_u)   # heat flows into the stream's direction
    if drive > 0:   # exact: the segment-wise area against the utility at one temperature
        q = area_root(lambda x: isothermal_utility_area(stream, t_in, x, t_u, u.u, share), u.area,
                      share * heat_between(stream, t_in, t_u))
        return UnitRating({side: mean_cp_between(stream, t_in, temperature_after(stream, t_in, q / share))},
                          q / drive, q)
    stream = branch_stream(stream, share)   # no driving force: the secant of the branch's own flow

    def residual_u(q):
        c = mean_cp_between(stream, t_in, temperature_after(stream, t_in, q))
        return q - float(effectiveness_from_ntu(u.u * u.area / c, 0.0)) * c * drive

    if drive == 0:
        return UnitRating({side: mean_cp_between(stream, t_in, t_in) / share})
    q = duty_root(residual_u, heat_between(stream, t_in, t_u))
    return UnitRating({side: mean_cp_between(stream, t_in, temperature_after(stream, t_in, q)) / share})
