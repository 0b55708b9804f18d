"""Stream profiles along one unit: heat between temperatures, temperature after a duty, mean CP, approach, area.

The temperature–enthalpy profile of a stream is piecewise linear over its segments
(:func:`heatloom.network.structure.stream_enthalpy`); here it is also extrapolated beyond the supply and
target temperatures with the end segments' heat capacity flow, because a unit of an existing network can
take a stream past its target (the simulation reports it).  On these profiles:

* :func:`heat_between` and :func:`temperature_after` — the heat a stream exchanges between two
  temperatures, and its inverse;
* :func:`mean_cp_between` — the mean heat capacity flow over a temperature range (the secant of the
  enthalpy curve), with which a unit is rated by ε-NTU when a stream has several segments;
* :func:`utility_match_area` — the area of a heater or cooler for a given duty, segment by segment;
* :func:`profile_between` — a stream's profile between two temperatures as segments (split at its breaks);
* :func:`exchanger_area` and :func:`largest_duty` — the segment-wise area of a counter-current exchanger
  for a duty at given inlet temperatures, and the duty at which its driving force closes (at an end or
  at a segment break inside it);
* :func:`isothermal_utility_area` — the segment-wise area of a heater or cooler against a utility at one
  temperature.

The smallest approach along a unit on these profiles is
:func:`heatloom.network.structure.smallest_approach`, shared with the checks of a new design.

Used by :mod:`heatloom.retrofit.existing`, :mod:`heatloom.retrofit.simulate`,
:mod:`heatloom.retrofit.network_pinch` and :mod:`heatloom.retrofit.changes`.
"""

from __future__ import annotations

from dataclasses import replace

from ..equipment.segments import cut_profile, size_segments, utility_segment
from ..equipment.sizing import log_mean
from ..model import Segment, Stream, Utility
from ..network.structure import stream_enthalpy, stream_temperature

__all__ = [
    "heat_between",
    "temperature_after",
    "mean_cp_between",
    "utility_match_area",
    "profile_between",
    "exchanger_area",
    "largest_duty",
    "isothermal_utility_area",
]


def heat_between(stream: Stream, t_from: float, t_to: float) -> float:
    """Heat a stream exchanges going from ``t_from`` to ``t_to`` [kW], positive in its own direction.

    Positive when a hot stream cools or a cold stream warms.  Piecewise linear over the segments and
    extrapolated beyond the supply and target temperatures with the end segments' heat capacity flow.

    Parameters
    ----------
    stream : Stream
    t_from, t_to : float
        [°C]

    Returns
    -------
    float
        [kW]

    Examples
    --------
    A vapour cooled from 120 to 110 °C (2 kW/K) that condenses over 110 → 109 °C (100 kW/K): 20 kW of
    cooling and half the 100 kW of condensation down to 109.5 °C; 1 K below the target, the last
    segment's CP extrapolates.

    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> heat_between(s, 120, 109.5), heat_between(s, 109, 108)
    (70.0, 100.0)
    """
    return stream_enthalpy(stream, t_to, extrapolate=True) - stream_enthalpy(stream, t_from, extrapolate=True)


def temperature_after(stream: Stream, t_in: float, heat: float) -> float:
    """Temperature of a stream after exchanging ``heat`` [kW] in its own direction from ``t_in`` [°C].

    The inverse of :func:`heat_between`: ``heat_between(s, t, temperature_after(s, t, q)) == q``.

    Parameters
    ----------
    stream : Stream
    t_in : float
        [°C]
    heat : float
        [kW], positive in the stream's own direction (a hot stream cools).

    Returns
    -------
    float
        [°C]

    Examples
    --------
    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> temperature_after(s, 120, 70.0)
    109.5
    """
    return stream_temperature(stream, stream_enthalpy(stream, t_in, extrapolate=True) + heat, extrapolate=True)


def mean_cp_between(stream: Stream, t_a: float, t_b: float) -> float:
    """Mean heat capacity flow of a stream between two temperatures [kW/K]: |Q(t_a → t_b)| / |t_b − t_a|.

    The secant of the stream's enthalpy curve; where the two temperatures meet, the local CP (a central
    difference over a millionth of a kelvin).

    Parameters
    ----------
    stream : Stream
    t_a, t_b : float
        [°C], in either order.

    Returns
    -------
    float
        [kW/K]

    Examples
    --------
    The vapour of :func:`heat_between` over its whole range, (20 + 100) kW / 11 K, and inside its
    condensation:

    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> round(mean_cp_between(s, 120, 109), 6), round(mean_cp_between(s, 109.5, 109.5), 6)
    (10.909091, 100.0)
    """
    dt = abs(t_b - t_a)
    if dt > 1e-9 * max(1.0, abs(t_a)):
        return abs(heat_between(stream, t_a, t_b)) / dt
    eps = 1e-6 * max(1.0, abs(t_a))
    return abs(heat_between(stream, t_a - eps, t_a + eps)) / (2 * eps)


def utility_match_area(utility: Utility, stream: Stream, t_in: float, t_out: float, duty: float,
                       u: float) -> float:
    """Area of a heater or cooler that moves ``duty`` between a utility and a stream, counter-current [m²].

    The utility runs between its supply and target temperatures (an isothermal one gets a glide of
    :data:`heatloom.equipment.segments.ISOTHERMAL_GLIDE`, see
    :func:`~heatloom.equipment.segments.utility_segment`); the stream from ``t_in`` to ``t_out``, along its own segments where that range
    lies inside its supply–target range, else linearly.  Sized segment by segment
    (:func:`heatloom.equipment.segments.size_segments`, LMTD of each interval).

    Parameters
    ----------
    utility : Utility
        Hot for a heater, cold for a cooler.
    stream : Stream
        The process side.
    t_in, t_out : float
        The stream's inlet and outlet [°C]; they must differ.
    duty : float
        [kW], > 0.
    u : float
        Overall heat transfer coefficient [kW/(m²·K)].

    Returns
    -------
    float
        [m²]

    Raises
    ------
    TemperatureCrossError
        The utility has no driving force against the stream somewhere along the unit.

    Examples
    --------
    Condensing steam at 200 °C heats 1 kW/K from 40 to 140 °C (100 kW) with U = 1 kW/(m²·K): the LMTD is
    (160 − 60)/ln(160/60) K, so A = ln(8/3) = 0.980829 m² (to the tiny glide).

    >>> from heatloom.model import UtilityKind
    >>> steam = Utility("steam", 200, 200, 100.0, UtilityKind.HOT)
    >>> round(utility_match_area(steam, Stream.simple("C", 40, 140, 1.0), 40, 140, 100.0, 1.0), 5)
    0.98083
    """
    u_seg = [utility_segment(utility, utility.supply_temperature, utility.target_temperature, duty)]
    lo, hi = sorted((stream.supply_temperature, stream.target_temperature))
    inside = lo - 1e-9 <= min(t_in, t_out) and max(t_in, t_out) <= hi + 1e-9
    s_seg = list(cut_profile(stream.segments, t_in, t_out)) if inside else [Segment(t_in, t_out,
                                                                                    duty / abs(t_out - t_in))]
    hot, cold = (u_seg, s_seg) if utility.is_hot else (s_seg, u_seg)
    return float(size_segments(hot, cold, u=u, rel_tol=1e-6).area)


def profile_between(stream: Stream, t_from: float, t_to: float, fraction: float = 1.0) -> tuple[Segment, ...]:
    """A stream's profile from ``t_from`` to ``t_to`` as segments, one per piece between its segment breaks.

    Follows the stream's enthalpy curve (:func:`heat_between`), extrapolated beyond its supply and target
    temperatures with the end segments' CP; each piece carries the secant CP of its range (the segment's own
    CP inside the stream's range), times ``fraction`` for a branch of a split.  The segments have no film
    coefficients: size them with a fixed U (``size_segments(..., u=...)``).

    Parameters
    ----------
    stream : Stream
    t_from, t_to : float
        Where the unit's side starts and ends [°C], in the stream's own direction; equal gives no segments.
    fraction : float, optional
        Share of the stream's flow [-].

    Returns
    -------
    tuple of Segment

    Examples
    --------
    The vapour of :func:`heat_between` from 115 °C (cooling) to 108 °C, 1 K past its target: the
    condensation is one piece of its own.

    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> [(g.supply_temperature, g.target_temperature, g.heat_capacity_flow) for g in profile_between(s, 115, 108)]
    [(115.0, 110.0, 2.0), (110.0, 108.0, 100.0)]
    """
    t_from, t_to = float(t_from), float(t_to)
    if t_from == t_to:
        return ()
    lo, hi = min(t_from, t_to), max(t_from, t_to)
    inner = sorted((g.target_temperature for g in stream.segments[:-1] if lo < g.target_temperature < hi),
                   reverse=t_from > t_to)
    points = [t_from, *inner, t_to]
    return tuple(Segment(a, b, fraction * abs(heat_between(stream, a, b)) / abs(b - a))
                 for a, b in zip(points, points[1:], strict=False))


def exchanger_area(hot: Stream, cold: Stream, hot_in: float, cold_in: float, duty: float, u: float, *,
                   hot_fraction: float = 1.0, cold_fraction: float = 1.0) -> float:
    """Area of a counter-current exchanger that moves ``duty`` at these inlet temperatures, segment by segment [m²].

    Both sides follow their streams' profiles (:func:`profile_between`) from the inlet over the range the duty
    covers; the match is split at every segment break of either side and sized interval by interval with
    the exact log mean and one U (:func:`heatloom.equipment.segments.size_segments`).  The area grows with
    the duty without bound as the driving force closes (:func:`largest_duty`).

    Parameters
    ----------
    hot, cold : Stream
        The two process streams.
    hot_in, cold_in : float
        Inlet temperatures [°C].
    duty : float
        [kW], >= 0.
    u : float
        Overall heat transfer coefficient, the same in every interval [kW/(m²·K)].
    hot_fraction, cold_fraction : float, optional
        Share of each stream's flow through the unit (a branch of a split) [-].

    Returns
    -------
    float
        [m²]

    Raises
    ------
    TemperatureCrossError
        The duty is beyond :func:`largest_duty` (no driving force somewhere along the unit).

    Examples
    --------
    The vapour of :func:`heat_between` (120 → 110 °C at 2 kW/K, condensing 110 → 109 °C at 100 kW/K) gives
    60 kW to water at 1 kW/K from 20 °C (to 80 °C), U = 0.5 kW/(m²·K): 20 kW of cooling with ΔT 40 K at
    the hot end and 50 K at the start of the condensation, then 40 kW of condensation down to 109.6 °C,
    where ΔT is 89.6 K.

    >>> import math
    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> w = Stream.simple("water", 20, 90, 1.0)
    >>> by_hand = 20 * math.log(50 / 40) / (0.5 * 10) + 40 * math.log(89.6 / 50) / (0.5 * 39.6)
    >>> round(exchanger_area(s, w, 120, 20, 60.0, 0.5), 9) == round(by_hand, 9)
    True
    """
    if duty == 0:
        return 0.0
    sides = (profile_between(hot, hot_in, temperature_after(hot, hot_in, duty / hot_fraction), hot_fraction),
             profile_between(cold, cold_in, temperature_after(cold, cold_in, duty / cold_fraction), cold_fraction))
    if not all(sides):   # a duty too small to move a temperature: the inlet difference throughout
        return duty / (u * (hot_in - cold_in))
    # each side carries exactly the duty (the inverse of the enthalpy curve rounds, most for tiny duties)
    hot_side, cold_side = (tuple(replace(g, heat_capacity_flow=g.heat_capacity_flow * duty / sum(x.duty for x in side))
                                 for g in side) for side in sides)
    return float(size_segments(hot_side, cold_side, u=u).area)


def largest_duty(hot: Stream, cold: Stream, hot_in: float, cold_in: float, *, hot_fraction: float = 1.0,
                 cold_fraction: float = 1.0) -> float:
    """Duty at which a counter-current exchanger's driving force closes, at these inlet temperatures [kW].

    The smallest of: the heat either side exchanges between the two inlet temperatures (ΔT closing at an
    end), and for every segment break T_b of either stream between the inlets, the heat the hot side gives
    from its inlet down to T_b plus the heat the cold side takes from its inlet up to T_b (ΔT closing at
    that break inside the unit).  Beyond it the unit would need a temperature cross; below it the
    segment-wise area (:func:`exchanger_area`) is finite and grows with the duty.

    Parameters
    ----------
    hot, cold : Stream
    hot_in, cold_in : float
        Inlet temperatures [°C], ``hot_in`` above ``cold_in``.
    hot_fraction, cold_fraction : float, optional
        Share of each stream's flow through the unit [-].

    Returns
    -------
    float
        [kW]

    Examples
    --------
    The vapour of :func:`exchanger_area` against water at 3 kW/K from 20 °C: water could take 300 kW up
    to 120 °C, but at the start of the condensation (110 °C) the vapour has given 20 kW, and the water
    reaches 110 °C after 270 kW: the driving force closes there, inside the unit, at 20 + 270 = 290 kW.

    >>> s = Stream("vapour", (Segment(120, 110, 2.0), Segment(110, 109, 100.0)))
    >>> largest_duty(s, Stream.simple("water", 20, 90, 3.0), 120, 20)
    290.0
    """
    bounds = [hot_fraction * heat_between(hot, hot_in, cold_in), cold_fraction * heat_between(cold, cold_in, hot_in)]
    for stream in (hot, cold):
        for g in stream.segments[:-1]:
            t = g.target_temperature
            if cold_in < t < hot_in:
                bounds.append(hot_fraction * heat_between(hot, hot_in, t)
                              + cold_fraction * heat_between(cold, cold_in, t))
    return float(min(bounds))


def isothermal_utility_area(stream: Stream, t_in: float, duty: float, t_utility: float, u: float,
                            fraction: float = 1.0) -> float:
    """Area of a heater or cooler against a utility at one temperature, segment by segment [m²].

    The stream goes from ``t_in`` over the range ``duty`` covers (:func:`profile_between`); against a
    utility at one temperature each piece of CP C_k from T_a to T_b needs Q_k/(U·ΔT_lm,k), with the exact log
    mean of T_u − T_a and T_u − T_b (:func:`heatloom.equipment.sizing.log_mean`); the area is their sum.

    Parameters
    ----------
    stream : Stream
        The process side (a cold one for a heater, a hot one for a cooler).
    t_in : float
        Its inlet [°C].
    duty : float
        [kW], >= 0, below the heat that would bring the stream to ``t_utility``.
    t_utility : float
        The utility's temperature [°C].
    u : float
        Overall heat transfer coefficient [kW/(m²·K)].
    fraction : float, optional
        Share of the stream's flow through the unit [-].

    Returns
    -------
    float
        [m²]

    Raises
    ------
    TemperatureCrossError
        The stream would reach the utility's temperature.

    Examples
    --------
    Steam at 150 °C heats a liquid (1 kW/K) from 20 °C to its boiling point at 60 °C, then boils 10 kW of
    it (60 → 61 °C at 10 kW/K), U = 1 kW/(m²·K): A = 1·ln(130/90) + 10·ln(90/89).

    >>> import math
    >>> c = Stream("liquid", (Segment(20, 60, 1.0), Segment(60, 61, 10.0), Segment(61, 100, 1.0)))
    >>> a = isothermal_utility_area(c, 20, 50.0, 150, 1.0)
    >>> round(a, 9) == round(math.log(130 / 90) + 10 * math.log(90 / 89), 9)
    True
    """
    if duty == 0:
        return 0.0
    t_out = temperature_after(stream, t_in, duty / fraction)
    sign = 1.0 if stream.is_hot else -1.0   # ΔT = T − T_u for a cooler, T_u − T for a heater
    return float(sum(g.duty / (u * float(log_mean(sign * (g.supply_temperature - t_utility),
                                                   sign * (g.target_temperature - t_utility))))
                     for g in profile_between(stream, t_in, t_out, fraction)))
