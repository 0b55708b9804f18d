"""Transshipment LP of heat-exchanger network synthesis: temperature intervals and minimum utility cost.

Papoulias & Grossmann (1983) see heat as a commodity shipped from hot streams (sources) to cold streams
(sinks) through temperature intervals (warehouses): hot heat may only go down the temperature scale, and
on the shifted scale (hot streams shifted down, cold streams up, by their ΔTmin contribution) every
transfer within an interval or downwards respects the minimum approach.  This module holds:

* :func:`temperature_intervals`, the shifted intervals and the heat each stream and utility brings to
  them, and :func:`free_target_utilities`, two free utilities for targeting when none are given;
* :func:`transshipment_model`, the LP of the cheapest utility duties (several levels, hot and cold,
  isothermal or not), built by a function that returns the PuLP problem and a reader of its solution,
  and :func:`transshipment`, which solves it and finds the cascade and its pinches.  It reproduces the
  problem table and the utility placement of :mod:`heatloom.pinch`;
* :func:`pinch_regions`, the stretches of the shifted scale between pinches (:class:`Region`), which both
  the fewest-matches MILP and the design step work in.

The fewest-matches MILP built on these intervals is in :mod:`heatloom.network.milp`.

References
----------
.. [1] Papoulias, S. A., Grossmann, I. E. (1983). A structural optimization approach in process synthesis
   II: Heat recovery networks. Computers & Chemical Engineering 7(6), 707-721.
   doi:10.1016/0098-1354(83)85023-6
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
import pulp

from ..errors import InfeasibleError, InputError
from ..model import StreamTable, Utility, UtilityKind
from ..pinch.problem_table import problem_table, shifted_ranges
from ..pinch.targets import IDEAL_COLD, IDEAL_HOT
from ..pinch.utilities import place_utilities, utility_shifted_range
from ..validation import check_dt_min
from .solvers import SolveReport, SolverName, SolveStatus, new_variable, solve

__all__ = [
    "HEAT_TOLERANCE",
    "PINCH_TOLERANCE",
    "Intervals",
    "temperature_intervals",
    "FREE_UTILITY_MARGIN",
    "free_target_utilities",
    "Transshipment",
    "transshipment_model",
    "transshipment",
    "Region",
    "pinch_regions",
]

HEAT_TOLERANCE = 1e-9
"""Heat below this share of the problem's duty scale counts as zero [-] (*common practice* round-off margin)."""

PINCH_TOLERANCE = 1e-7
"""Heat cascaded past a boundary below this share of the duty scale makes the boundary a pinch [-] (a margin
for the LP's round-off); a subnetwork's heat balance may be off by ten times this share."""


# ------------------------------------------------------------------------------------------ intervals

def _snap_index(asc: np.ndarray, values: np.ndarray) -> np.ndarray:
    """Index in the ascending boundaries of the nearest boundary to each value."""
    if asc.size == 1:
        return np.zeros(values.size, int)
    i = np.clip(np.searchsorted(asc, values), 1, asc.size - 1)
    return np.where(np.abs(asc[i - 1] - values) <= np.abs(asc[i] - values), i - 1, i)


@dataclass(frozen=True, eq=False)
class Intervals:
    """Shifted temperature intervals and the heat each stream and utility brings to them.

    Attributes
    ----------
    dt_min : float
        [K]
    temperatures : ndarray
        Interval boundaries on the shifted scale, hottest first [°C], length K + 1.
    stream_names : tuple of str
    stream_is_hot : ndarray of bool
    stream_heat : ndarray
        Heat released (hot stream) or taken (cold stream) in each interval [kW], shape (streams, K),
        never negative.
    utilities : tuple of Utility
    utility_fraction : ndarray
        Share of each utility's duty released (hot) or taken (cold) in each interval [-], shape
        (utilities, K); a row of zeros for a utility that cannot act at any interval (an isothermal hot
        utility at the bottom boundary, a cold one at the top).
    duty_scale : float
        Sum of the process stream duties [kW].
    """

    dt_min: float
    temperatures: np.ndarray
    stream_names: tuple[str, ...]
    stream_is_hot: np.ndarray
    stream_heat: np.ndarray
    utilities: tuple[Utility, ...]
    utility_fraction: np.ndarray
    duty_scale: float

    @property
    def size(self) -> int:
        """Number of intervals K."""
        return self.temperatures.size - 1

    @property
    def surplus(self) -> np.ndarray:
        """Process heat surplus of each interval, hot minus cold [kW], length K."""
        sign = np.where(self.stream_is_hot, 1.0, -1.0)
        return sign @ self.stream_heat

    def to_dict(self) -> dict:
        t = self.temperatures
        return {"dtmin": self.dt_min, "shifted_temperatures": t.tolist(),
                "streams": {n: self.stream_heat[i].tolist() for i, n in enumerate(self.stream_names)},
                "utility_fractions": {u.name: self.utility_fraction[i].tolist()
                                      for i, u in enumerate(self.utilities)}}


def temperature_intervals(streams: StreamTable, dt_min: float, utilities: Sequence[Utility] = ()
                          ) -> Intervals:
    """Cut the shifted temperature scale at every stream-segment and utility end.

    Hot segments are shifted down and cold segments up by their own ``dt_min_contribution`` when given,
    else by ΔTmin/2 (exactly as :func:`heatloom.pinch.problem_table.shifted_ranges`); utilities by ΔTmin/2
    (:func:`heatloom.pinch.utilities.utility_shifted_range`).  A non-isothermal utility spreads its duty in
    proportion to the overlap of each interval with its shifted range; an isothermal hot utility releases
    its heat into the interval just below its temperature, an isothermal cold one takes it from the
    interval just above.

    Parameters
    ----------
    streams : StreamTable
        Process streams (several segments per stream allowed).
    dt_min : float
        Global minimum approach temperature [K].
    utilities : sequence of Utility
        Utility levels; names must differ from each other and from the stream names.

    Returns
    -------
    Intervals

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> iv = temperature_intervals(s, 10)
    >>> iv.temperatures.tolist(), iv.surplus.tolist()
    ([175.0, 145.0, 140.0, 85.0, 55.0, 25.0], [90.0, -2.5, -137.5, 60.0, -30.0])
    """
    dt = check_dt_min(dt_min)
    utilities = tuple(utilities)
    names = [s.name for s in streams]
    seen = set(names)
    for u in utilities:
        if u.name in seen:
            raise InputError(f"utility name '{u.name}' is also used by a stream or another utility; "
                             "names must be unique", column="name")
        seen.add(u.name)
    arrays = streams.arrays
    upper, lower = shifted_ranges(arrays, dt)
    u_ranges = np.array([utility_shifted_range(u, dt) for u in utilities], float).reshape(-1, 2)
    points = np.unique(np.concatenate((upper, lower, u_ranges.ravel())))
    tol_t = 1e-9 * max(1.0, float(np.max(np.abs(points))))
    keep = np.concatenate(([True], np.diff(points) > tol_t))
    asc = points[keep]
    temps = asc[::-1].copy()
    k = temps.size - 1
    n_top = asc.size - 1

    def top_bottom(hi, lo):  # descending indices of the boundaries at hi and lo
        return n_top - _snap_index(asc, np.atleast_1d(hi)), n_top - _snap_index(asc, np.atleast_1d(lo))

    width = temps[:-1] - temps[1:]
    heat = np.zeros((len(names), k))
    a, b = top_bottom(upper, lower)
    for seg in range(upper.size):
        heat[arrays.stream_index[seg], a[seg]:b[seg]] += arrays.heat_capacity_flow[seg] * width[a[seg]:b[seg]]
    frac = np.zeros((len(utilities), k))
    for i, u in enumerate(utilities):
        ua, ub = (int(x[0]) for x in top_bottom(u_ranges[i, 0], u_ranges[i, 1]))
        if ub > ua:
            frac[i, ua:ub] = width[ua:ub] / width[ua:ub].sum()
        elif u.is_hot and ua < k:
            frac[i, ua] = 1.0
        elif not u.is_hot and ua > 0:
            frac[i, ua - 1] = 1.0
    is_hot = np.array([s.is_hot for s in streams], bool)
    scale = float(sum(s.duty for s in streams))
    return Intervals(dt, temps, tuple(names), is_hot, heat, utilities, frac, scale)


FREE_UTILITY_MARGIN = 10.0
"""How far the free utilities of :func:`free_target_utilities` lie beyond the process [K]."""


def free_target_utilities(streams: StreamTable, dt_min: float) -> tuple[Utility, Utility]:
    """Two free utilities for targeting: isothermal, beyond every process temperature, at no cost.

    Not the priced utilities a design assumes (:func:`heatloom.pinch.utilities.ideal_utilities`): these
    only reproduce the problem-table targets.  The hot one is :data:`FREE_UTILITY_MARGIN` above both the hottest process temperature and the hottest
    shifted temperature plus ΔTmin/2, the cold one as far below the coldest ones, so each can serve every
    process stream.  At zero price the transshipment LP with them gives the problem-table targets.  They
    carry the names :mod:`heatloom.pinch` gives the utilities of targets without utility levels.

    Parameters
    ----------
    streams : StreamTable
    dt_min : float
        [K]

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["H1", "C1"], [180, 20], [60, 135], [3.0, 2.0])
    >>> [(u.name, u.supply_temperature) for u in free_target_utilities(s, 10)]
    [('hot utility', 190.0), ('cold utility', 10.0)]
    """
    dt = check_dt_min(dt_min)
    a = streams.arrays
    upper, lower = shifted_ranges(a, dt)
    temps = np.concatenate((a.supply_temperature, a.target_temperature))
    top = max(float(temps.max()), float(upper.max()) + 0.5 * dt) + FREE_UTILITY_MARGIN
    bottom = min(float(temps.min()), float(lower.min()) - 0.5 * dt) - FREE_UTILITY_MARGIN
    return (Utility(IDEAL_HOT, top, top, 0.0, UtilityKind.HOT),
            Utility(IDEAL_COLD, bottom, bottom, 0.0, UtilityKind.COLD))


# ------------------------------------------------------------------------------ transshipment LP (a)

def _level_weights(utilities: Sequence[Utility]) -> np.ndarray:
    """Tie-break weights preferring the coolest hot and the warmest cold utility (as pinch.utilities)."""
    temps = np.array([(-u.coldest if u.is_hot else u.hottest) for u in utilities])
    order = np.empty(len(utilities))
    order[np.argsort(-temps, kind="stable")] = np.arange(len(utilities))
    return 1.0 + 1e-3 * order / max(len(utilities), 1)


def transshipment_model(intervals: Intervals, *, cost_budget: float | None = None
                        ) -> tuple[pulp.LpProblem, Callable[[], np.ndarray]]:
    """The transshipment LP of the cheapest utility duties (Papoulias & Grossmann 1983).

    .. math::

        \\min \\sum_u c_u Q_u \\quad \\text{s.t.} \\quad
        R_k - R_{k-1} = \\sum_{i \\in H} Q^H_{ik} - \\sum_{j \\in C} Q^C_{jk}
        + \\sum_{u \\in HU} f_{uk} Q_u - \\sum_{u \\in CU} f_{uk} Q_u, \\qquad
        R_0 = R_K = 0, \\; R_k \\ge 0, \\; Q_u \\ge 0

    with :math:`R_k` the heat cascaded from interval *k* to *k* + 1 and :math:`f_{uk}` the share of
    utility *u* in interval *k*.

    Parameters
    ----------
    intervals : Intervals
        From :func:`temperature_intervals`, with the utilities on offer.
    cost_budget : float, optional
        Second stage [money/year]: keep :math:`\\sum_u c_u Q_u` at or below this and minimise
        :math:`\\sum_u w_u Q_u` instead, with weights slightly above 1 that prefer the coolest hot and the
        warmest cold level (so ties in price and zero prices give the least energy at the mildest
        levels, as :func:`heatloom.pinch.place_utilities` does).

    Returns
    -------
    problem : pulp.LpProblem
    read : callable
        ``read()`` returns the utility duties [kW], in the order of ``intervals.utilities``.

    Examples
    --------
    >>> from heatloom.model import StreamTable, Utility
    >>> s = StreamTable.from_arrays(["H1", "C1"], [180, 20], [60, 135], [3.0, 2.0])
    >>> iv = temperature_intervals(s, 10, [Utility("steam", 200, 199, 100.0), Utility("water", 10, 20, 5.0)])
    >>> problem, read = transshipment_model(iv)
    >>> solve(problem, "cbc").status
    <SolveStatus.OPTIMAL: 'optimal'>
    >>> read().round(6).tolist()
    [0.0, 130.0]
    """
    k = intervals.size
    problem = pulp.LpProblem("utility_cost_transshipment", pulp.LpMinimize)
    frac = intervals.utility_fraction
    q = [new_variable(problem, f"Q_{u}", 0, None if frac[u].sum() > 0 else 0)
         for u in range(len(intervals.utilities))]
    r = [None] + [new_variable(problem, f"R_{b}", 0) for b in range(1, k)] + [None]
    surplus = intervals.surplus
    sign = [1.0 if u.is_hot else -1.0 for u in intervals.utilities]
    for kk in range(k):
        terms = [(q[u], sign[u] * frac[u, kk]) for u in range(len(q)) if frac[u, kk] > 0]
        out = pulp.LpAffineExpression(([(r[kk + 1], 1.0)] if r[kk + 1] is not None else [])
                                      + ([(r[kk], -1.0)] if r[kk] is not None else [])
                                      + [(v, -c) for v, c in terms])
        problem += out == float(surplus[kk]), f"interval_{kk}"
    price = [u.cost for u in intervals.utilities]
    if cost_budget is None:
        problem += pulp.lpSum(c * v for c, v in zip(price, q))
    else:
        problem += pulp.lpSum(c * v for c, v in zip(price, q)) <= float(cost_budget), "cost_budget"
        problem += pulp.lpSum(w * v for w, v in zip(_level_weights(intervals.utilities), q))

    def read() -> np.ndarray:
        return np.array([v.varValue or 0.0 for v in q], float)

    return problem, read


@dataclass(frozen=True, eq=False)
class Transshipment:
    """Cheapest utility duties from the transshipment LP.

    Attributes
    ----------
    intervals : Intervals
    duties : tuple of float
        Duty of each utility, in the order of ``intervals.utilities`` [kW].
    residuals : ndarray
        Heat cascaded past each boundary with the utilities in place [kW], length K + 1 (0 at both ends).
    pinches : tuple of float
        Interior boundaries where the cascade carries no heat, hottest first [°C, shifted]: process
        pinches and utility pinches.
    free_utilities : bool
        True when no utilities were given and the two free utilities of :func:`free_target_utilities`
        were assumed.
    reports : tuple of SolveReport
        The cost stage and the tie-break stage.
    """

    intervals: Intervals
    duties: tuple[float, ...]
    residuals: np.ndarray
    pinches: tuple[float, ...]
    free_utilities: bool
    reports: tuple[SolveReport, ...]

    @property
    def utility_duties(self) -> dict[str, float]:
        """Duty of each utility by name [kW]."""
        return {u.name: d for u, d in zip(self.intervals.utilities, self.duties)}

    @property
    def hot_utility(self) -> float:
        """[kW]"""
        return float(sum(d for u, d in zip(self.intervals.utilities, self.duties) if u.is_hot))

    @property
    def cold_utility(self) -> float:
        """[kW]"""
        return float(sum(d for u, d in zip(self.intervals.utilities, self.duties) if not u.is_hot))

    @property
    def utility_cost(self) -> float:
        """[money/year]"""
        return float(sum(d * u.cost for u, d in zip(self.intervals.utilities, self.duties)))

    def to_dict(self) -> dict:
        return {"utilities": self.utility_duties, "hot_utility": self.hot_utility,
                "cold_utility": self.cold_utility, "utility_cost": self.utility_cost,
                "free_utilities": self.free_utilities, "pinches_shifted": list(self.pinches),
                "shifted_temperatures": self.intervals.temperatures.tolist(),
                "residuals": self.residuals.tolist(), "solves": [r.to_dict() for r in self.reports]}


def _infeasible_utilities(streams: StreamTable, dt_min: float, utilities: Sequence[Utility]) -> str:
    """Why no duties of the given utilities can serve the process, in the targeting module's words."""
    try:
        place_utilities(problem_table(streams, dt_min), utilities)
    except InfeasibleError as exc:
        return str(exc)
    return "no feasible utility duties (the transshipment LP is infeasible)"


def transshipment(streams: StreamTable, dt_min: float, utilities: Sequence[Utility] | None = None, *,
                  solver: SolverName | str | None = None, time_limit: float = 60.0) -> Transshipment:
    """Cheapest utility duties by the transshipment LP, with the cascade and its pinches.

    Solves :func:`transshipment_model` twice: first for the least utility cost, then, with the cost held,
    for the least (slightly weighted) energy, which settles ties between levels of equal price.

    Parameters
    ----------
    streams : StreamTable
    dt_min : float
        [K]
    utilities : sequence of Utility, optional
        Levels with prices [money/(kW·year)]; the two free utilities of :func:`free_target_utilities`
        when omitted.
    solver : SolverName, str or None
        See :func:`heatloom.network.solvers.resolve_solver`.
    time_limit : float
        Limit of each of the two LP solves [s].

    Returns
    -------
    Transshipment

    Raises
    ------
    InfeasibleError
        When no duties of the given utilities can serve the process.
    InputError
        When prices make the LP unbounded (a cold utility paying more than a hot one costs, so that
        running heat from one to the other earns money without limit).

    Examples
    --------
    Sinnott's four-stream problem (Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3): 50 kW hot
    and 30 kW cold utility, pinch at 85 °C shifted.

    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> t = transshipment(s, 10)
    >>> t.hot_utility, t.cold_utility, t.pinches
    (50.0, 30.0, (85.0,))
    """
    free = utilities is None
    utilities = free_target_utilities(streams, dt_min) if free else tuple(utilities)
    if not utilities:
        raise InputError("no utilities given for the transshipment model")
    iv = temperature_intervals(streams, dt_min, utilities)
    reports = []
    problem, read = transshipment_model(iv)
    rep = solve(problem, solver, time_limit=time_limit, name="utility cost LP")
    reports.append(rep)
    if rep.status in (SolveStatus.INFEASIBLE, SolveStatus.INFEASIBLE_OR_UNBOUNDED):
        if rep.status is SolveStatus.INFEASIBLE_OR_UNBOUNDED and any(u.cost < 0 for u in utilities):
            raise InputError("the utility-cost LP is infeasible or unbounded; check the negative prices of "
                             + ", ".join(f"'{u.name}'" for u in utilities if u.cost < 0))
        raise InfeasibleError(_infeasible_utilities(streams, iv.dt_min, utilities))
    if rep.status is SolveStatus.UNBOUNDED:
        raise InputError("the utility prices make the cost unbounded below (a cold utility earns more per "
                         "kW than some hot utility costs): check the prices of "
                         + ", ".join(f"'{u.name}' ({u.cost:g})" for u in utilities))
    cost = rep.objective or 0.0
    budget = cost + 1e-9 * max(abs(cost), 1.0)
    problem2, read2 = transshipment_model(iv, cost_budget=budget)
    rep2 = solve(problem2, solver, time_limit=time_limit, name="utility levels tie-break LP")
    reports.append(rep2)
    if rep2.status.has_solution:
        q = read2()
    else:  # keep the first stage; should not happen, as its solution is feasible here
        q = read()
    scale = max(iv.duty_scale, 1.0)
    q = np.where(q <= HEAT_TOLERANCE * scale, 0.0, q)
    sign = np.array([1.0 if u.is_hot else -1.0 for u in utilities])
    flows = iv.surplus + (sign * q) @ iv.utility_fraction
    residuals = np.concatenate(([0.0], np.cumsum(flows)))
    residuals = np.where(np.abs(residuals) <= PINCH_TOLERANCE * scale, 0.0, residuals)
    # a zero flow is a pinch only with heat exchanged both above and below it (not past unused levels)
    activity = iv.stream_heat.sum(axis=0) + q @ iv.utility_fraction
    above = np.concatenate(([0.0], np.cumsum(activity)))
    below = above[-1] - above
    active = HEAT_TOLERANCE * scale
    pinches = tuple(float(iv.temperatures[b]) for b in range(1, iv.size)
                    if residuals[b] == 0.0 and above[b] > active and below[b] > active)
    return Transshipment(iv, tuple(float(x) for x in q), residuals, pinches, free, tuple(reports))


# ------------------------------------------------------------------------------------- pinch regions

@dataclass(frozen=True)
class Region:
    """A stretch of the shifted temperature scale between two pinches, or between a pinch and an end.

    Attributes
    ----------
    label : str
        ``"whole"`` (no pinch), ``"above"``, ``"between pinches k"`` (k from 1, hottest first) or
        ``"below"``: the ``region`` of the units a design places in it.
    top, bottom : float or None
        Its ends on the shifted scale [°C]; None where it runs to the end of the scale.
    """

    label: str
    top: float | None
    bottom: float | None

    @property
    def description(self) -> str:
        """The region in words, with its pinch temperatures (shifted, [°C])."""
        if self.top is None and self.bottom is None:
            return "whole problem"
        if self.top is None:
            return f"above the pinch at {self.bottom:g} °C shifted"
        if self.bottom is None:
            return f"below the pinch at {self.top:g} °C shifted"
        return f"between the pinches at {self.top:g} and {self.bottom:g} °C shifted"


def pinch_regions(pinches: Sequence[float]) -> tuple[Region, ...]:
    """Cut the shifted temperature scale at every pinch: the regions between them, hottest first.

    Heat never crosses a pinch in a network that meets the targets, so each region can be matched and
    designed on its own (Linnhoff & Hindmarsh 1983).  The fewest-matches MILP cuts at the pinches of
    :attr:`Transshipment.pinches` (process and utility pinches,
    :func:`heatloom.network.milp.subnetworks`); the design step at the same cuts, its regions at the
    process pinches among them and each region's parts at the utility pinches inside it
    (:func:`heatloom.network.design.design_mer`).

    Parameters
    ----------
    pinches : sequence of float
        Shifted pinch temperatures, hottest first [°C]; none gives one ``whole`` region.

    Examples
    --------
    >>> [(r.label, r.top, r.bottom) for r in pinch_regions([120.0, 85.0])]
    [('above', None, 120.0), ('between pinches 1', 120.0, 85.0), ('below', 85.0, None)]
    >>> [r.description for r in pinch_regions([85.0])]
    ['above the pinch at 85 °C shifted', 'below the pinch at 85 °C shifted']
    >>> pinch_regions(())
    (Region(label='whole', top=None, bottom=None),)

    References
    ----------
    Linnhoff, B., Hindmarsh, E. (1983). The pinch design method for heat exchanger networks. Chemical
    Engineering Science 38(5), 745-763. doi:10.1016/0009-2509(83)80185-7
    """
    cuts = [float(t) for t in pinches]
    if not cuts:
        return (Region("whole", None, None),)
    between = [Region(f"between pinches {k}", a, b) for k, (a, b) in enumerate(zip(cuts, cuts[1:]), start=1)]
    return (Region("above", None, cuts[0]), *between, Region("below", cuts[-1], None))
