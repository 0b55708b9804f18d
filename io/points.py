"""Temperature–duty curves (as process simulators export them) fitted with the fewest linear segments.

A simulator describes a stream whose heat capacity varies (a condensing mixture, a boiling feed) as
points of temperature and cumulative duty, from the supply state to the target state.  Pinch
analysis wants linear segments.  :func:`fit_points` picks the fewest data points to keep as segment
ends such that the fitted curve stays within ``tolerance`` kelvin of the data and always on the safe
side: a fitted hot stream is never hotter than the data and a fitted cold stream never colder, so the
temperature driving forces computed from the fit never exceed the real ones.

Method
------
Between data points the data are taken as linear.  A chord from point *i* to point *j* is admissible
when, at every data point *k* between them, the chord temperature lies in ``[T_k - tolerance, T_k]``
(hot) or ``[T_k, T_k + tolerance]`` (cold); both curves being linear between data points, checking
at the data points checks everywhere.  For each *i* the admissible chord slopes form an interval that
shrinks as *j* grows, so all admissible chords are found in O(n²) and the walk from *i* stops as soon
as the interval is empty.  The fewest segments is then a shortest path from the first to the last
point in this directed acyclic graph (ties broken by the smaller largest deviation).  Meant for
curves of up to a few hundred points per stream, as simulators export them.  End
temperatures and the total duty are those of the data.  Shortest-path segmentation of a curve is
common practice (e.g. polygonal approximation by dynamic programming).
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import InputError
from ..model import Segment

__all__ = ["DEFAULT_FIT_TOLERANCE", "check_fit_tolerance", "fit_points", "fit_vertices", "point_problem"]

DEFAULT_FIT_TOLERANCE = 0.5
"""Default largest temperature deviation of a fitted curve from the data [K]."""


def point_problem(temperatures: np.ndarray, cumulative_duties: np.ndarray
                  ) -> tuple[int, str, str] | None:
    """First problem of a temperature–duty curve, or None.

    Returns
    -------
    (int, str, str) or None
        Index of the offending point, the column it concerns (``"T"`` or ``"Q_cumulative"``) and a
        message.
    """
    t = np.asarray(temperatures, dtype=float)
    q = np.asarray(cumulative_duties, dtype=float)
    if t.shape != q.shape or t.ndim != 1:
        return 0, "T", (f"temperatures and cumulative duties must be two lists of equal length, got "
                        f"{t.size} and {q.size} values")
    if t.size < 2:
        return 0, "T", f"a temperature–duty curve needs at least two points, got {t.size}"
    for arr, col, what in ((t, "T", "temperature"), (q, "Q_cumulative", "cumulative duty")):
        bad = ~np.isfinite(arr)
        if bad.any():
            k = int(np.argmax(bad))
            return k, col, f"{what} must be a finite number, got {arr[k]!r}"
    dt = np.diff(t)
    dq = np.diff(q)
    for d, arr, col, what, unit in ((dt, t, "T", "temperature", "°C"), (dq, q, "Q_cumulative",
                                                                          "cumulative duty", "kW")):
        zero = d == 0
        if zero.any():
            k = int(np.argmax(zero)) + 1
            hint = (" (give a phase change a small glide, e.g. 0.1 K)" if col == "T" else
                    " (the duty must grow or fall from point to point)")
            return k, col, f"{what} does not change from the point before ({arr[k]:g} {unit}){hint}"
        turn = np.sign(d) != np.sign(d[0])
        if turn.any():
            k = int(np.argmax(turn)) + 1
            rule = ("all fall (hot stream) or all rise (cold stream) from the supply row to the target row"
                    if col == "T" else "change in one direction from the supply row to the target row")
            return k, col, (f"{what} turns back at {arr[k]:g} {unit} (after {arr[k - 1]:g}, {arr[k - 2]:g}); "
                            f"it must {rule}" if k >= 2 else f"{what} must {rule}")
    return None


def check_fit_tolerance(tolerance: float) -> float:
    """The fit tolerance as a float [K], checked: a finite number >= 0.

    Parameters
    ----------
    tolerance : float
        Largest deviation of a fitted curve from the data [K].

    Raises
    ------
    InputError
        Not a number, negative, NaN or infinite.

    Examples
    --------
    >>> check_fit_tolerance("0.5")
    0.5
    """
    try:
        tol = float(tolerance)
    except (TypeError, ValueError):
        raise InputError(f"fit tolerance must be a number of kelvin, got {tolerance!r}") from None
    if not (tol >= 0 and math.isfinite(tol)):
        raise InputError(f"fit tolerance must be >= 0 K and finite, got {tolerance!r}")
    return tol


def fit_vertices(temperatures, cumulative_duties, *, tolerance: float = DEFAULT_FIT_TOLERANCE) -> np.ndarray:
    """Indices of the data points kept as segment ends by :func:`fit_points` (first and last included).

    Examples
    --------
    >>> fit_vertices([200, 150, 100, 90], [0, 50, 100, 200], tolerance=0.5).tolist()
    [0, 2, 3]
    """
    t = np.asarray(temperatures, dtype=float)
    q = np.asarray(cumulative_duties, dtype=float)
    problem = point_problem(t, q)
    if problem is not None:
        k, _, message = problem
        raise InputError(f"point {k + 1}: {message}")
    tol = check_fit_tolerance(tolerance)
    x = np.abs(q - q[0])
    hot = t[-1] < t[0]
    n = t.size
    eps = 1e-11 * (1.0 + float(np.max(np.abs(t))))  # rounding slack only: far below any test or use
    count = [math.inf] * n
    worst = [math.inf] * n
    before = [-1] * n
    count[0], worst[0] = 0, 0.0
    for i in range(n - 1):
        if count[i] + 1 > count[n - 1]:
            continue  # every path through i is already longer than the best one found
        lo, hi = -math.inf, math.inf
        ti, xi = t[i], x[i]
        for j in range(i + 1, n):
            dx = x[j] - xi
            slope = (t[j] - ti) / dx
            if lo <= slope <= hi:
                c = count[i] + 1
                if c <= count[j]:
                    dev = 0.0
                    if j > i + 1:
                        ks = slice(i + 1, j)
                        dev = float(np.max(np.abs(t[ks] - (ti + slope * (x[ks] - xi)))))
                    w = max(worst[i], dev)
                    if c < count[j] or w < worst[j]:
                        count[j], worst[j], before[j] = c, w, i
            # the point j constrains longer chords from i
            if hot:
                low, high = t[j] - tol - ti, t[j] - ti
            else:
                low, high = t[j] - ti, t[j] + tol - ti
            lo = max(lo, (low - eps) / dx)
            hi = min(hi, (high + eps) / dx)
            if lo > hi:
                break
    path = [n - 1]
    while path[-1] != 0:
        path.append(before[path[-1]])
    return np.asarray(path[::-1], dtype=np.int64)


def fit_points(temperatures, cumulative_duties, *, tolerance: float = DEFAULT_FIT_TOLERANCE
               ) -> tuple[Segment, ...]:
    """Fit a temperature–duty curve with the fewest linear segments, on the safe side.

    Parameters
    ----------
    temperatures : array_like
        Stream temperatures from the supply state to the target state [°C]; strictly falling (hot
        stream) or strictly rising (cold stream).
    cumulative_duties : array_like
        Cumulative duty at each point [kW], strictly monotonic in either direction (only differences
        count, so any reference and sign convention will do).
    tolerance : float, optional
        Largest temperature deviation of the fit from the data at equal duty [K]; default 0.5 K.

    Returns
    -------
    tuple of Segment
        Chained segments with ends on data points.  Heat capacity flow of a segment from point *a*
        to *b*: :math:`CP = |Q_b - Q_a| / |T_b - T_a|`.  The first supply temperature, the last
        target temperature and the total duty :math:`|Q_n - Q_0|` equal those of the data.

    Raises
    ------
    InputError
        Fewer than two points, a non-finite value, a temperature or duty that stalls or turns back,
        or a negative tolerance.

    Notes
    -----
    The fit never overstates driving forces: hot segments lie at or below the data, cold ones at or
    above, by at most `tolerance`.  Designs built on any stream model must still be checked against
    the real fluid and local codes by qualified, licensed engineers.

    Examples
    --------
    >>> segs = fit_points([200, 150, 100, 90], [0, 50, 100, 200], tolerance=0.5)
    >>> [(s.supply_temperature, s.target_temperature, s.heat_capacity_flow) for s in segs]
    [(200.0, 100.0, 1.0), (100.0, 90.0, 10.0)]
    """
    t = np.asarray(temperatures, dtype=float)
    q = np.asarray(cumulative_duties, dtype=float)
    vertices = fit_vertices(t, q, tolerance=tolerance)
    return tuple(Segment(float(t[a]), float(t[b]), float(abs(q[b] - q[a]) / abs(t[b] - t[a])))
                 for a, b in zip(vertices[:-1], vertices[1:]))
