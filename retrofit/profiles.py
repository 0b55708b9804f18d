"""Stream profiles along one unit: heat between temperatures, temperature after a duty, mean CP, approach, area.

The temperature–enthalpy profile of a stream is piecewise linear over its segments
(:func:`heatloom.network.structure.stream_enthalpy`); here it is also extrapolated beyond the supply and
target temperatures with the end segments' heat capacity flow, because a unit of an existing network can
take a stream past its target (the simulation reports it).  On these profiles:

* :func:`heat_between` and :func:`temperature_after` — the heat a stream exchanges between two
  temperatures, and its inverse;
* :func:`mean_cp_between` — the mean heat capacity flow over a temperature range (the secant of the
  enthalpy curve), with which a unit is rated by ε-NTU when a stream has several segments;
* :func:`smallest_approach` — the smallest hot − cold difference along a counter-current unit, at its ends
  and at the segment breaks inside it;
* :func:`utility_match_area` — the area of a heater or cooler for a given duty, segment by segment.

Used by :mod:`heatloom.retrofit.existing`, :mod:`heatloom.retrofit.simulate`,
:mod:`heatloom.retrofit.network_pinch` and :mod:`heatloom.retrofit.changes`.
"""

from __future__ import annotations

from ..equipment.segments import cut_profile, size_segments
from ..model import Segment, Stream, Utility
from ..network.structure import stream_enthalpy, stream_temperature

__all__ = [
    "ISOTHERMAL_GLIDE",
    "heat_between",
    "temperature_after",
    "mean_cp_between",
    "smallest_approach",
    "utility_match_area",
]

ISOTHERMAL_GLIDE = 1e-6
"""Glide given to an isothermal utility when it is sized as a segment [K] (changes an LMTD by less than
one part in a million)."""


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


def smallest_approach(hot: Stream | Utility, cold: Stream | Utility, hot_in: float, hot_out: float,
                      cold_in: float, cold_out: float) -> float:
    """Smallest hot − cold temperature difference along a counter-current unit [K].

    Checked at both ends (hot inlet against cold outlet, hot outlet against cold inlet) and at every
    segment break of a process stream inside the unit, where the two profiles are paired by the heat
    transferred from the hot end.  A utility side runs linearly between the two temperatures given.

    Parameters
    ----------
    hot, cold : Stream or Utility
        The unit's two sides.
    hot_in, hot_out, cold_in, cold_out : float
        Terminal temperatures [°C].

    Returns
    -------
    float
        [K]; negative where the profiles cross.

    Examples
    --------
    A hot stream cooled 150 → 100 °C (1 kW/K) then condensing 100 → 90 °C (10 kW/K), 150 kW, heats a cold
    stream of 1.5 kW/K from 20 to 120 °C.  The ends give 30 K and 70 K; at the break the hot side has given
    50 kW, so the cold side is at 120 − 50/1.5 = 86.667 °C: 13.333 K, the smallest.  Against condensing
    steam only the ends count.

    >>> h = Stream("H", (Segment(150, 100, 1.0), Segment(100, 90, 10.0)))
    >>> c = Stream.simple("C", 20, 120, 1.5)
    >>> round(smallest_approach(h, c, 150, 90, 20, 120), 3)
    13.333
    >>> smallest_approach(Utility("steam", 180, 179, 100.0), c, 180, 179, 20, 120)
    60
    """
    ends = [hot_in - cold_out, hot_out - cold_in]
    q_h = heat_between(hot, hot_in, hot_out) if isinstance(hot, Stream) else None
    q_c = heat_between(cold, cold_in, cold_out) if isinstance(cold, Stream) else None
    q = q_h if q_h is not None else q_c
    if q is None or not q > 0:
        return min(ends)
    xs = []  # heat from the hot end (hot inlet, cold outlet)
    if isinstance(hot, Stream):
        for g in hot.segments:
            x = heat_between(hot, hot_in, g.target_temperature) * q / q_h
            if 0 < x < q:
                xs.append(x)
    if isinstance(cold, Stream):
        for g in cold.segments:
            x = heat_between(cold, g.target_temperature, cold_out) * q / q_c
            if 0 < x < q:
                xs.append(x)

    def t_hot(x):
        if isinstance(hot, Stream):
            return temperature_after(hot, hot_in, x * q_h / q)
        return hot_in + (hot_out - hot_in) * x / q

    def t_cold(x):
        if isinstance(cold, Stream):
            return temperature_after(cold, cold_out, -x * q_c / q)
        return cold_out + (cold_in - cold_out) * x / q

    return min(ends + [t_hot(x) - t_cold(x) for x in xs])


def utility_match_area(utility: Utility, stream: Stream, t_in: float, t_out: float, duty: float,
                       u: float) -> float:
    """Area of a heater or cooler that moves ``duty`` between a utility and a stream, counter-current [m²].

    The utility runs between its supply and target temperatures (an isothermal one gets a glide of
    :data:`ISOTHERMAL_GLIDE`); the stream from ``t_in`` to ``t_out``, along its own segments where that range
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
    side = [utility.supply_temperature, utility.target_temperature]
    if side[0] == side[1]:
        side[1] += -ISOTHERMAL_GLIDE if utility.is_hot else ISOTHERMAL_GLIDE
    u_seg = [Segment(side[0], side[1], duty / abs(side[0] - side[1]))]
    lo, hi = sorted((stream.supply_temperature, stream.target_temperature))
    inside = lo - 1e-9 <= min(t_in, t_out) and max(t_in, t_out) <= hi + 1e-9
    s_seg = list(cut_profile(stream.segments, t_in, t_out)) if inside else [Segment(t_in, t_out,
                                                                                    duty / abs(t_out - t_in))]
    hot, cold = (u_seg, s_seg) if utility.is_hot else (s_seg, u_seg)
    return float(size_segments(hot, cold, u=u, rel_tol=1e-6).area)
