"""Stream profiles along one unit: heat between temperatures, temperature after a duty, mean CP, approach, area.

The temperature–enthalpy profile of a stream is piecewise linear over its segments
(:func:`heatloom.network.structure.stream_enthalpy`); here it is also extrapolated beyond the supply and
target temperatures with the end segments' heat capacity flow, because a unit of an existing network can
take a stream past its target (the simulation reports it).  On these profiles:

* :func:`heat_between` and :func:`temperature_after` — the heat a stream exchanges between two
  temperatures, and its inverse;
* :func:`mean_cp_between` — the mean heat capacity flow over a temperature range (the secant of the
  enthalpy curve), with which a unit is rated by ε-NTU when a stream has several segments;
* :func:`utility_match_area` — the area of a heater or cooler for a given duty, segment by segment.

The smallest approach along a unit on these profiles is
:func:`heatloom.network.structure.smallest_approach`, shared with the checks of a new design.

Used by :mod:`heatloom.retrofit.existing`, :mod:`heatloom.retrofit.simulate`,
:mod:`heatloom.retrofit.network_pinch` and :mod:`heatloom.retrofit.changes`.
"""

from __future__ import annotations

from ..equipment.segments import cut_profile, size_segments, utility_segment
from ..model import Segment, Stream, Utility
from ..network.structure import stream_enthalpy, stream_temperature

__all__ = [
    "heat_between",
    "temperature_after",
    "mean_cp_between",
    "utility_match_area",
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
