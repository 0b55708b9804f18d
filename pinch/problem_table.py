"""The problem table algorithm: temperature intervals, interval heat balances and the heat cascade.

Linnhoff & Flower's problem table (1978): shift every hot segment down and every cold segment up by its
share of the minimum approach, cut the shifted temperature scale at every segment end, balance each
interval, and cascade the surpluses from the top.  The most negative cumulative balance is the minimum hot
utility; what leaves the bottom is the minimum cold utility; where the feasible cascade carries no heat is
the pinch.

The implementation is vectorised: each segment adds its heat capacity flow at the bottom of its shifted
range and removes it at the top (a difference array), so the net heat capacity flow of every interval comes
from one sort and one cumulative sum, O(N log N) in the number of segments with no N × M matrix.

References
----------
.. [1] Linnhoff, B., Flower, J. R. (1978). Synthesis of heat exchanger networks: I. Systematic generation
   of energy optimal networks. AIChE Journal 24(4), 633-642. doi:10.1002/aic.690240411
.. [2] Kemp, I. C. (2007). Pinch Analysis and Process Integration, 2nd ed., Butterworth-Heinemann,
   section 2.5 (the problem table algorithm).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..model import StreamArrays, StreamTable
from ..validation import check_dt_min

__all__ = [
    "ProblemTable",
    "shifted_ranges",
    "net_heat_capacity_flow",
    "problem_table",
    "zero_tolerance",
]


def zero_tolerance(duty_scale: float) -> float:
    """Heat flows below this are treated as zero when locating pinches [kW].

    Floating-point rounding of sums of N terms grows like N·eps; 1e-9 of the duty scale leaves room for
    that on 10⁵ streams while staying far below anything an engineer would read (*common practice* in
    numerical codes: a relative tolerance a few orders above machine precision).

    Parameters
    ----------
    duty_scale : float
        Sum of all stream duties [kW].

    Examples
    --------
    >>> zero_tolerance(1000.0)
    1e-06
    """
    return 1e-9 * max(float(duty_scale), 1.0)


def shifted_ranges(arrays: StreamArrays, dt_min: float) -> tuple[np.ndarray, np.ndarray]:
    """Shifted upper and lower temperatures of every segment [°C].

    Hot segments are shifted down and cold segments up by their ΔTmin contribution (the segment's own
    ``dt_min_contribution`` when given, else ΔTmin/2), so that any two shifted temperatures can exchange heat
    downwards with at least the required approach.

    Parameters
    ----------
    arrays : StreamArrays
        Segment arrays of a stream table.
    dt_min : float
        Global minimum approach temperature [K].

    Returns
    -------
    upper, lower : ndarray
        Shifted temperature range of each segment [°C].
    """
    shift = arrays.shifts(dt_min)
    sign = np.where(arrays.is_hot, -1.0, 1.0)
    a = arrays.supply_temperature + sign * shift
    b = arrays.target_temperature + sign * shift
    return np.maximum(a, b), np.minimum(a, b)


def net_heat_capacity_flow(upper: np.ndarray, lower: np.ndarray, heat_capacity_flow: np.ndarray
                           ) -> tuple[np.ndarray, np.ndarray]:
    """Net heat capacity flow between consecutive breakpoints of piecewise-constant ranges.

    Parameters
    ----------
    upper, lower : ndarray
        Range of each segment [°C].
    heat_capacity_flow : ndarray
        Signed heat capacity flow of each segment [kW/K] (positive for heat sources).

    Returns
    -------
    temperatures : ndarray
        Sorted breakpoints, ascending [°C], length M + 1.
    net : ndarray
        Sum of the heat capacity flows active in each interval ``temperatures[j] .. temperatures[j+1]``
        [kW/K], length M.

    Examples
    --------
    >>> t, n = net_heat_capacity_flow(np.array([150.0, 120.0]), np.array([50.0, 100.0]), np.array([2.0, -3.0]))
    >>> t.tolist(), n.tolist()
    ([50.0, 100.0, 120.0, 150.0], [2.0, -1.0, 2.0])
    """
    # one sort gives the breakpoints and where every segment end sits among them
    temperatures, where = np.unique(np.concatenate((upper, lower)), return_inverse=True)
    m = temperatures.size
    i_up, i_low = where[:upper.size], where[upper.size:]
    delta = (np.bincount(i_low, weights=heat_capacity_flow, minlength=m)
             - np.bincount(i_up, weights=heat_capacity_flow, minlength=m))
    return temperatures, np.cumsum(delta)[:-1]


@dataclass(frozen=True, eq=False)
class ProblemTable:
    """The problem table of a stream set at one ΔTmin, hottest interval first.

    Attributes
    ----------
    dt_min : float
        Minimum approach temperature [K].
    shifted_temperatures : ndarray
        Interval boundaries on the shifted scale, descending [°C], length M + 1.
    net_heat_capacity_flow : ndarray
        Σ CP(hot) − Σ CP(cold) in each interval [kW/K], length M.
    surplus : ndarray
        Heat surplus (+) or deficit (−) of each interval [kW], length M.
    heat_flow : ndarray
        Feasible cascade: heat flowing down past each boundary with the minimum hot utility added at the
        top [kW], length M + 1; never negative.
    hot_utility, cold_utility : float
        Minimum utilities [kW].
    duty_scale : float
        Sum of all stream duties [kW], the scale of the zero tolerance.
    """

    dt_min: float
    shifted_temperatures: np.ndarray
    net_heat_capacity_flow: np.ndarray
    surplus: np.ndarray
    heat_flow: np.ndarray
    hot_utility: float
    cold_utility: float
    duty_scale: float

    @property
    def infeasible_cascade(self) -> np.ndarray:
        """The cascade before any hot utility is added [kW] (its minimum is −hot utility)."""
        return self.heat_flow - self.hot_utility

    @property
    def tolerance(self) -> float:
        """Zero tolerance on heat flows [kW]; see :func:`zero_tolerance`."""
        return zero_tolerance(self.duty_scale)

    def to_frame(self):
        """One row per interval, with units in the headers."""
        import pandas as pd

        t = self.shifted_temperatures
        return pd.DataFrame({
            "T_shifted_top [°C]": t[:-1],
            "T_shifted_bottom [°C]": t[1:],
            "net CP [kW/K]": self.net_heat_capacity_flow,
            "surplus [kW]": self.surplus,
            "heat in from above [kW]": self.heat_flow[:-1],
            "heat out below [kW]": self.heat_flow[1:],
        })

    def to_dict(self) -> dict:
        t = self.shifted_temperatures
        return {"intervals": [
            {"T_top": float(t[k]), "T_bottom": float(t[k + 1]),
             "net_CP": float(self.net_heat_capacity_flow[k]), "surplus": float(self.surplus[k]),
             "heat_in": float(self.heat_flow[k]), "heat_out": float(self.heat_flow[k + 1])}
            for k in range(self.surplus.size)]}


def problem_table(streams: StreamTable | StreamArrays, dt_min: float) -> ProblemTable:
    """Run the problem table algorithm.

    .. math::

        Q_k = \\left(\\sum_{hot} CP - \\sum_{cold} CP\\right)_k (T^*_k - T^*_{k+1}), \\qquad
        Q_{H,min} = \\max\\left(0, -\\min_k \\sum_{j<k} Q_j\\right), \\qquad
        Q_{C,min} = Q_{H,min} + \\sum_k Q_k

    (Linnhoff & Flower 1978, the cascade of section 2.5 of Kemp 2007).

    Parameters
    ----------
    streams : StreamTable or StreamArrays
        The process streams.
    dt_min : float
        Global minimum approach temperature [K], ≥ 0; segments with their own contribution use it instead
        of ΔTmin/2.

    Returns
    -------
    ProblemTable

    Examples
    --------
    Four streams of Sinnott's problem table example (Coulson & Richardson's Chemical Engineering Vol. 6,
    ch. 3): 50 kW hot and 30 kW cold utility.

    >>> from heatloom.model import StreamTable
    >>> t = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> pt = problem_table(t, 10)
    >>> pt.hot_utility, pt.cold_utility
    (50.0, 30.0)
    >>> pt.surplus.tolist()
    [90.0, -2.5, -137.5, 60.0, -30.0]
    """
    dt_min = check_dt_min(dt_min)
    arrays = streams.arrays if isinstance(streams, StreamTable) else streams
    upper, lower = shifted_ranges(arrays, dt_min)
    signed = np.where(arrays.is_hot, arrays.heat_capacity_flow, -arrays.heat_capacity_flow)
    t_asc, net_asc = net_heat_capacity_flow(upper, lower, signed)
    t = t_asc[::-1]
    net = net_asc[::-1]
    surplus = net * (t[:-1] - t[1:])
    cascade = np.concatenate(([0.0], np.cumsum(surplus)))
    hot = max(0.0, -float(cascade.min()))
    heat_flow = cascade + hot
    scale = float(np.sum(arrays.heat_capacity_flow
                         * np.abs(arrays.supply_temperature - arrays.target_temperature)))
    # Rounding can leave -1e-13 where the exact flow is zero: clip within tolerance only.
    tol = zero_tolerance(scale)
    heat_flow = np.where(np.abs(heat_flow) <= tol, 0.0, heat_flow)
    return ProblemTable(dt_min=float(dt_min), shifted_temperatures=t, net_heat_capacity_flow=net,
                        surplus=surplus, heat_flow=heat_flow, hot_utility=float(heat_flow[0]),
                        cold_utility=float(heat_flow[-1]), duty_scale=scale)
