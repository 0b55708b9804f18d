"""Segment-wise exchanger area: counter-current matches whose sides are piecewise linear.

A match between streams of several segments (``heatloom.model.Segment``) is split at every breakpoint
of either side; in each interval both sides are linear and have their own film coefficients, and the
interval areas Q_k/(U_k·ΔT_lm,k) are added.  Canonical units: °C, K for differences, kW, kW/K,
kW/(m²·K), m²·K/kW for fouling resistances, m².  U and the log mean are those of
:mod:`heatloom.equipment.sizing`.

Sizing results are screening estimates: fouling, design margins, pressure and temperature limits
and any temperature cross must be checked, and designs checked against local codes and standards by
qualified, licensed engineers.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import asdict, dataclass, field

import numpy as np

from ..errors import InputError, TemperatureCrossError
from ..model import Segment, Utility
from ..validation import positive_float
from .sizing import log_mean, overall_coefficient

__all__ = [
    "SizingInterval",
    "SegmentedSizing",
    "cut_profile",
    "ISOTHERMAL_GLIDE",
    "utility_segment",
    "size_segments",
]


# --------------------------------------------------------------------------------------------------
# streams of several segments


@dataclass(frozen=True)
class SizingInterval:
    """One interval of a segment-wise sizing: both sides linear, one U.

    Temperatures [°C] are those at the interval's hot end (``hot_in``, ``cold_out``) and cold end
    (``hot_out``, ``cold_in``); ``duty`` [kW], ``lmtd`` [K], ``u`` [kW/(m²·K)], ``area`` [m²].
    """

    duty: float
    hot_in: float
    hot_out: float
    cold_in: float
    cold_out: float
    lmtd: float
    u: float
    area: float

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class SegmentedSizing:
    """Area of a counter-current match between piecewise-linear sides (see :func:`size_segments`)."""

    area: float
    duty: float
    intervals: tuple[SizingInterval, ...] = field(default=())

    def to_dict(self) -> dict:
        return {"area": self.area, "duty": self.duty, "intervals": [i.to_dict() for i in self.intervals]}

    def to_frame(self):
        import pandas as pd

        return pd.DataFrame([i.to_dict() for i in self.intervals])


def _check_side(segments: Sequence[Segment], hot: bool) -> tuple[Segment, ...]:
    side = "hot" if hot else "cold"
    segs = tuple(segments)
    if not segs:
        raise InputError(f"the {side} side has no segments")
    for i, s in enumerate(segs):
        if not isinstance(s, Segment):
            raise InputError(f"{side} side item {i} must be a heatloom.model.Segment, got {type(s).__name__}")
        if s.is_hot != hot:
            raise InputError(f"{side} side segment {s.supply_temperature:g} → {s.target_temperature:g} °C "
                             f"runs the wrong way: a {side} side must {'cool down' if hot else 'heat up'}")
    for a, b in zip(segs, segs[1:], strict=False):
        if not math.isclose(b.supply_temperature, a.target_temperature, rel_tol=0, abs_tol=1e-9):
            raise InputError(f"{side} side segments do not chain: one ends at {a.target_temperature:g} °C, "
                             f"the next starts at {b.supply_temperature:g} °C")
    return segs


def cut_profile(segments: Sequence[Segment], start: float, end: float) -> tuple[Segment, ...]:
    """The part of a chained profile between two temperatures, as segments.

    Parameters
    ----------
    segments : sequence of Segment
        A chained hot (cooling) or cold (heating) profile, e.g. ``Stream.segments``.
    start, end : float
        Where the exchanger's side starts and ends [°C], inside the profile and in its direction.

    Returns
    -------
    tuple of Segment

    Examples
    --------
    >>> segs = (Segment(200, 150, 1.0), Segment(150, 149, 300.0), Segment(149, 100, 2.0))
    >>> [(s.supply_temperature, s.target_temperature) for s in cut_profile(segs, 180, 120)]
    [(180.0, 150.0), (150.0, 149.0), (149.0, 120.0)]
    """
    segs = tuple(segments)
    hot = bool(segs) and segs[0].is_hot
    segs = _check_side(segs, hot)
    t0, t1 = float(start), float(end)
    lo, hi = min(segs[0].supply_temperature, segs[-1].target_temperature), \
        max(segs[0].supply_temperature, segs[-1].target_temperature)
    if not (t0 > t1 if hot else t0 < t1):
        raise InputError(f"cut from {t0:g} to {t1:g} °C runs against the profile "
                         f"({segs[0].supply_temperature:g} → {segs[-1].target_temperature:g} °C)")
    for t in (t0, t1):
        if not (lo - 1e-9 <= t <= hi + 1e-9):
            raise InputError(f"cut temperature {t:g} °C is outside the profile ({lo:g} to {hi:g} °C)")
    out = []
    for s in segs:
        a, b = s.supply_temperature, s.target_temperature
        if hot:
            a2, b2 = min(a, t0), max(b, t1)
            keep = a2 > b2
        else:
            a2, b2 = max(a, t0), min(b, t1)
            keep = a2 < b2
        if keep:
            out.append(Segment(a2, b2, s.heat_capacity_flow, s.film_coefficient, s.dt_min_contribution, s.row))
    return tuple(out)


ISOTHERMAL_GLIDE = 1e-6
"""Temperature glide given to an isothermal utility when it is sized as a segment [K]; changes an LMTD by
less than one part in a million."""


def utility_segment(utility: Utility, t_in: float, t_out: float, duty: float,
                    film_coefficient: float | None = None) -> Segment:
    """A utility side of a heater or cooler as one segment, for :func:`size_segments`.

    The utility runs linearly from ``t_in`` to ``t_out`` carrying ``duty``; an isothermal one (``t_in``
    equal to ``t_out``: condensing steam, boiling water) is given a glide of :data:`ISOTHERMAL_GLIDE` in
    its direction, so that it has a finite heat capacity flow.

    Parameters
    ----------
    utility : Utility
        The utility (hot for a heater, cold for a cooler).
    t_in, t_out : float
        Its inlet and outlet temperatures in the unit [°C].
    duty : float
        Heat the unit transfers [kW], > 0.
    film_coefficient : float, optional
        h of the utility side [kW/(m²·K)]; None when U is given to :func:`size_segments`.

    Returns
    -------
    Segment

    Examples
    --------
    >>> from heatloom.model import UtilityKind
    >>> g = utility_segment(Utility("steam", 200, 200, 100.0, UtilityKind.HOT), 200, 200, 50.0)
    >>> g.target_temperature == 200 - ISOTHERMAL_GLIDE, round(g.heat_capacity_flow * ISOTHERMAL_GLIDE, 6)
    (True, 50.0)
    """
    if t_in == t_out:
        t_out = t_in - ISOTHERMAL_GLIDE if utility.is_hot else t_in + ISOTHERMAL_GLIDE
    return Segment(t_in, t_out, duty / abs(t_in - t_out), film_coefficient)


def size_segments(hot_segments: Sequence[Segment], cold_segments: Sequence[Segment], *, u=None,
                  hot_fouling=0.0, cold_fouling=0.0, rel_tol=1e-6) -> SegmentedSizing:
    """Area of a counter-current match whose sides are piecewise linear, interval by interval.

    The duty is split at every breakpoint of either side; in each interval both sides are linear, so

    .. math:: A = \\sum_k \\frac{Q_k}{U_k\\,\\Delta T_{lm,k}},\\qquad
              1/U_k = 1/h_{hot,k} + 1/h_{cold,k} + R_{f,hot} + R_{f,cold}

    with each interval's own film coefficients (from ``Segment.film_coefficient``).

    Parameters
    ----------
    hot_segments : sequence of Segment
        The hot side, from the hot inlet down to the hot outlet (use :func:`cut_profile` to take part
        of a stream).
    cold_segments : sequence of Segment
        The cold side, from the cold inlet up to the cold outlet.
    u : float, optional
        One clean overall coefficient [kW/(m²·K)] for every interval instead of the film
        coefficients; the fouling resistances are still added to it.
    hot_fouling, cold_fouling : float, optional
        [m²·K/kW]
    rel_tol : float, optional
        Allowed relative mismatch of the two sides' duties [-].

    Returns
    -------
    SegmentedSizing

    Raises
    ------
    TemperatureCrossError
        If ΔT <= 0 at either end or at any breakpoint.
    InputError
        If the duties differ, a segment lacks a film coefficient, or the sides are malformed.

    Examples
    --------
    >>> hot = [Segment(200, 150, 2.0, 1.0), Segment(150, 100, 4.0, 0.5)]
    >>> cold = [Segment(40, 140, 3.0, 1.0)]
    >>> res = size_segments(hot, cold)
    >>> len(res.intervals), round(res.area, 3)
    (2, 15.62)
    """
    hot = _check_side(hot_segments, True)
    cold = _check_side(cold_segments, False)
    q_hot = sum(s.duty for s in hot)
    q_cold = sum(s.duty for s in cold)
    if not math.isclose(q_hot, q_cold, rel_tol=rel_tol, abs_tol=0.0):
        raise InputError(f"the hot side gives {q_hot:g} kW but the cold side takes {q_cold:g} kW; "
                         f"a match needs equal duties (tolerance {rel_tol:g} relative)")
    u_fixed = None
    if u is not None:
        u_fixed = positive_float(u, "overall coefficient U", "kW/(m²·K)")
        # fouling adds to the given clean U exactly as to the film resistances
        u_fixed = float(overall_coefficient(2 * u_fixed, 2 * u_fixed, hot_fouling=hot_fouling,
                                            cold_fouling=cold_fouling))
    else:
        for side, segs in (("hot", hot), ("cold", cold)):
            for s in segs:
                if s.film_coefficient is None:
                    raise InputError(f"{side} side segment {s.supply_temperature:g} → {s.target_temperature:g} °C "
                                     "has no film coefficient h; give h or a fixed U", row=s.row, column="h")
    # heat coordinate x from the cold end (hot outlet, cold inlet) to the hot end
    hot_up = hot[::-1]
    xh = np.concatenate(([0.0], np.cumsum([s.duty for s in hot_up])))
    th = np.array([hot_up[0].target_temperature] + [s.supply_temperature for s in hot_up])
    xc = np.concatenate(([0.0], np.cumsum([s.duty for s in cold])))
    tc = np.array([cold[0].supply_temperature] + [s.target_temperature for s in cold])
    q = 0.5 * (q_hot + q_cold)
    xh *= q / xh[-1]
    xc *= q / xc[-1]
    xs = np.unique(np.concatenate((xh, xc)))
    keep = np.concatenate(([True], np.diff(xs) > 1e-9 * q))
    xs = xs[keep]
    xs[-1] = q
    t_hot, t_cold = np.interp(xs, xh, th), np.interp(xs, xc, tc)
    dts = t_hot - t_cold
    bad = np.flatnonzero(~(dts > 0))
    if bad.size:
        i = bad[0]
        raise TemperatureCrossError(
            f"temperature cross in the match: at {xs[i]:g} kW from the cold end the hot side is at "
            f"{t_hot[i]:g} °C and the cold side at {t_cold[i]:g} °C (ΔT = {dts[i]:g} K, must be > 0 K); "
            f"hot {hot[0].supply_temperature:g} → {hot[-1].target_temperature:g} °C, cold "
            f"{cold[0].supply_temperature:g} → {cold[-1].target_temperature:g} °C")
    intervals = []
    for k in range(len(xs) - 1):
        mid = 0.5 * (xs[k] + xs[k + 1])
        sh = hot_up[min(int(np.searchsorted(xh, mid)) - 1, len(hot_up) - 1)]
        sc = cold[min(int(np.searchsorted(xc, mid)) - 1, len(cold) - 1)]
        if u_fixed is None:
            uk = float(overall_coefficient(sh.film_coefficient, sc.film_coefficient, hot_fouling=hot_fouling,
                                           cold_fouling=cold_fouling))
        else:
            uk = u_fixed
        dq = xs[k + 1] - xs[k]
        dlm = float(log_mean(dts[k + 1], dts[k]))
        intervals.append(SizingInterval(float(dq), float(t_hot[k + 1]), float(t_hot[k]), float(t_cold[k]),
                                        float(t_cold[k + 1]), dlm, uk, float(dq / (uk * dlm))))
    return SegmentedSizing(float(sum(i.area for i in intervals)), float(q), tuple(intervals))
