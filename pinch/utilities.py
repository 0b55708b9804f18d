"""Placing several utility levels against the grand composite curve.

Each utility is a stream of unknown duty on the shifted temperature scale (hot utilities shifted down,
cold utilities up, by ΔTmin/2).  The cheapest placement that keeps the cascade feasible everywhere is a
small linear programme: the heat flowing down past every breakpoint must stay non-negative and the
cascade must close at the bottom.  This is the utility-selection form of the transshipment model of
Papoulias & Grossmann (1983); with prices that rise with temperature (hot) or fall with it (cold) it
reproduces the graphical "cheapest level first against the grand composite curve" procedure (Linnhoff et
al. 1982, User Guide on Process Integration, ch. 5).

References
----------
.. [1] Papoulias, S. A., Grossmann, I. E. (1983). A structural optimization approach in process synthesis
   II: Heat recovery networks. Computers & Chemical Engineering 7(6), 707-721.
   doi:10.1016/0098-1354(83)85023-6
.. [2] Kemp, I. C. (2007). Pinch Analysis and Process Integration, 2nd ed., section 4.2 (multiple utilities).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy.optimize import linprog

from .. import defaults
from ..errors import InfeasibleError, InputError, SolverError
from ..model import StreamTable, Utility, UtilityKind
from .problem_table import ProblemTable

__all__ = ["UtilityDuty", "UtilityPlacement", "place_utilities", "utility_shifted_range"]


@dataclass(frozen=True)
class UtilityDuty:
    """Duty and annual cost of one utility in a placement.

    Attributes
    ----------
    utility : Utility
    duty : float
        [kW]
    annual_cost : float
        duty × price [money/year].
    """

    utility: Utility
    duty: float

    @property
    def annual_cost(self) -> float:
        return self.duty * self.utility.cost

    def to_dict(self) -> dict:
        u = self.utility
        return {"name": u.name, "kind": u.kind.value, "T_supply": u.supply_temperature,
                "T_target": u.target_temperature, "duty": self.duty, "price": u.cost,
                "annual_cost": self.annual_cost}


@dataclass(frozen=True, eq=False)
class UtilityPlacement:
    """Cheapest feasible duties of the given utilities.

    Attributes
    ----------
    duties : tuple of UtilityDuty
        In the order the utilities were given.
    utility_pinches : tuple of float
        Shifted temperatures [°C] where the cascade with utilities carries no heat, other than the
        process pinch (new pinches created by the utility levels).
    """

    duties: tuple[UtilityDuty, ...]
    utility_pinches: tuple[float, ...]

    @property
    def hot_utility(self) -> float:
        """[kW]"""
        return float(sum(d.duty for d in self.duties if d.utility.is_hot))

    @property
    def cold_utility(self) -> float:
        """[kW]"""
        return float(sum(d.duty for d in self.duties if not d.utility.is_hot))

    @property
    def annual_cost(self) -> float:
        """[money/year]"""
        return float(sum(d.annual_cost for d in self.duties))


def utility_shifted_range(utility: Utility, dt_min: float) -> tuple[float, float]:
    """Shifted (upper, lower) temperature of a utility [°C]: hot down, cold up by ΔTmin/2.

    Examples
    --------
    >>> utility_shifted_range(Utility("steam", 180, 179, 100.0), 10)
    (175.0, 174.0)
    """
    s = -0.5 * dt_min if utility.is_hot else 0.5 * dt_min
    return utility.hottest + s, utility.coldest + s


def _fraction_above(upper: float, lower: float, t: np.ndarray, inclusive: bool) -> np.ndarray:
    """Share of a utility's duty released (hot) or taken (cold) at or above each temperature [-]."""
    if upper == lower:
        return (upper >= t if inclusive else upper > t).astype(float)
    return np.clip((upper - t) / (upper - lower), 0.0, 1.0)


def _diagnose(table: ProblemTable, utilities: Sequence[Utility], dt_min: float) -> str:
    t = table.shifted_temperatures
    cascade = table.infeasible_cascade
    tol = table.tolerance
    hot = [u for u in utilities if u.is_hot]
    cold = [u for u in utilities if not u.is_hot]
    if table.hot_utility > tol:
        if not hot:
            return (f"the process needs {table.hot_utility:.6g} kW of heating but no hot utility was given")
        top = max(utility_shifted_range(u, dt_min)[0] for u in hot)
        # the demand above a temperature is minus the cascade there; a piecewise-linear function reaches
        # its extreme over [top, ∞) at a boundary or at top itself
        temps = np.concatenate(([top], t[t > top]))
        need = -np.concatenate(([np.interp(top, t[::-1], cascade[::-1])], cascade[t > top]))
        k = int(np.argmax(need))
        if need[k] > tol:
            return (f"the process needs {need[k]:.6g} kW of heat above {temps[k] + 0.5 * dt_min:g} °C "
                    f"(shifted {temps[k]:g} °C), hotter than any hot utility given can supply at ΔTmin "
                    f"{dt_min:g} K")
    if table.cold_utility > tol:
        if not cold:
            return (f"the process needs {table.cold_utility:.6g} kW of cooling but no cold utility was given")
        bottom = min(utility_shifted_range(u, dt_min)[1] for u in cold)
        # heat released below a temperature, net of what process cold streams there absorb, has nowhere
        # to go when every cold utility is hotter than that temperature
        flow = table.heat_flow
        temps = np.concatenate(([bottom], t[t < bottom]))
        released = table.cold_utility - np.concatenate(([np.interp(bottom, t[::-1], flow[::-1])],
                                                        flow[t < bottom]))
        k = int(np.argmax(released))
        if released[k] > tol:
            return (f"the process releases {released[k]:.6g} kW of heat below {temps[k] - 0.5 * dt_min:g} °C "
                    f"(shifted {temps[k]:g} °C), colder than any cold utility given can take at ΔTmin "
                    f"{dt_min:g} K")
    return "the utilities given cannot balance the heat cascade at any duties"


def place_utilities(table: ProblemTable, utilities: Sequence[Utility]) -> UtilityPlacement:
    """Cheapest duties of several utility levels that keep the heat cascade feasible.

    .. math::

        \\min \\sum_u c_u Q_u \\quad \\text{s.t.} \\quad
        R(T) = R_0(T) + \\sum_{u \\in hot} f_u(T) Q_u - \\sum_{u \\in cold} f_u(T) Q_u \\ge 0 \\;\\forall T,
        \\qquad R(T_{min}) = 0

    where :math:`R_0` is the process cascade without utilities and :math:`f_u(T)` the share of utility
    *u*'s duty at or above shifted temperature *T*.  Ties in price are broken in favour of the hot utility
    of lowest temperature and the cold utility of highest temperature (the usual cheapest-level-first
    preference).

    Parameters
    ----------
    table : ProblemTable
        Problem table of the process streams.
    utilities : sequence of Utility
        The utility levels on offer, prices in [money/(kW·year)].

    Returns
    -------
    UtilityPlacement

    Raises
    ------
    InfeasibleError
        When no duties of the given utilities can meet the process (for example no hot utility hot
        enough), with the temperature and duty that cannot be served.

    Examples
    --------
    Sinnott's four-stream example needs 50 kW of heat above the 85 °C shifted pinch, 25 kW of it above
    95 °C shifted: steam condensing at 100 °C cannot supply that part, so the dearer high-pressure level
    takes it.

    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch.problem_table import problem_table
    >>> t = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> pt = problem_table(t, 10)
    >>> p = place_utilities(pt, [Utility("HP steam", 250, 249, 150.0), Utility("LP steam", 100, 99, 80.0),
    ...                          Utility("cooling water", 20, 30, 10.0)])
    >>> [(d.utility.name, round(d.duty, 6)) for d in p.duties]
    [('HP steam', 25.0), ('LP steam', 25.0), ('cooling water', 30.0)]
    """
    utilities = tuple(utilities)
    if not utilities:
        raise InputError("no utilities given to place")
    dt = table.dt_min
    ranges = [utility_shifted_range(u, dt) for u in utilities]
    t_proc = table.shifted_temperatures[::-1]          # ascending
    r0_proc = table.infeasible_cascade[::-1]
    points = np.unique(np.concatenate([t_proc, np.array([r for pair in ranges for r in pair])]))
    r0 = np.interp(points, t_proc, r0_proc)             # flat outside the process range
    sign = np.array([1.0 if u.is_hot else -1.0 for u in utilities])
    # Strongest form at every point: a hot utility counts only strictly above, a cold one at or above.
    frac = np.column_stack([_fraction_above(hi, lo, points, inclusive=not u.is_hot)
                            for u, (hi, lo) in zip(utilities, ranges)])
    a_ub = -(frac * sign)                                # -Σ sign f Q <= R0
    b_ub = r0
    a_eq = sign[None, :]                                 # bottom closes: R0(bottom) + Σ sign Q = 0
    b_eq = np.array([-r0_proc[0]])
    price = np.array([u.cost for u in utilities], float)
    scale = max(table.duty_scale, 1.0)

    def solve(c, extra_ub=None, extra_b=None):
        aub, bub = a_ub, b_ub
        if extra_ub is not None:
            aub, bub = np.vstack([a_ub, extra_ub]), np.concatenate([b_ub, extra_b])
        res = linprog(c, A_ub=aub, b_ub=bub, A_eq=a_eq, b_eq=b_eq, bounds=[(0, None)] * len(utilities),
                      method="highs")
        if res.status == 2:
            raise InfeasibleError("no feasible utility placement: " + _diagnose(table, utilities, dt))
        if res.status != 0:
            raise SolverError(f"utility placement LP stopped with status {res.status}: {res.message}")
        return res

    first = solve(price)
    # Second stage: keep the cost, prefer the mildest levels, and use no more energy than needed.
    order = np.empty(len(utilities))
    temps = np.array([(-u.coldest if u.is_hot else u.hottest) for u in utilities])
    order[np.argsort(-temps, kind="stable")] = np.arange(len(utilities))
    weights = 1.0 + 1e-3 * order / len(utilities)
    budget = first.fun + 1e-9 * max(abs(first.fun), 1.0)
    second = solve(weights, price[None, :], np.array([budget]))
    q = np.where(second.x < 1e-9 * scale, 0.0, second.x)
    residual = r0 + (frac * sign) @ q
    tol = table.tolerance
    process_pinches = set(table.shifted_temperatures[table.heat_flow <= tol].tolist())
    inner = (points > t_proc[0]) & (points < t_proc[-1])   # inside the process range only
    utility_pinches = tuple(float(x) for x, r in zip(points[inner], residual[inner])
                            if abs(r) <= tol * 10 and x not in process_pinches)
    return UtilityPlacement(tuple(UtilityDuty(u, float(v)) for u, v in zip(utilities, q)), utility_pinches)


def ideal_utilities(streams: StreamTable, dt_min: float) -> tuple[Utility, Utility]:
    """The two utilities assumed when none are given, stated in every output.

    An isothermal hot utility 20 K plus ΔTmin above the hottest cold-stream temperature and an isothermal
    cold utility 20 K plus ΔTmin below the coldest hot-stream temperature, with the prices and film
    coefficients of :mod:`heatloom.defaults` (illustrative, common practice).

    Examples
    --------
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 20], [40, 120], [1.0, 1.0])
    >>> [(u.name, u.supply_temperature, u.cost) for u in ideal_utilities(s, 10)]
    [('hot utility (assumed)', 150.0, 200.0), ('cold utility (assumed)', 10.0, 20.0)]
    """
    cold_max = max((s.supply_temperature if s.supply_temperature > s.target_temperature else s.target_temperature)
                   for s in streams.cold) if streams.cold else max(s.supply_temperature for s in streams)
    hot_min = min(s.target_temperature for s in streams.hot) if streams.hot else \
        min(s.supply_temperature for s in streams)
    th = cold_max + dt_min + defaults.IDEAL_UTILITY_MARGIN
    tc = hot_min - dt_min - defaults.IDEAL_UTILITY_MARGIN
    return (Utility("hot utility (assumed)", th, th, defaults.DEFAULT_HOT_UTILITY_PRICE, UtilityKind.HOT,
                    defaults.DEFAULT_HOT_UTILITY_FILM_COEFFICIENT),
            Utility("cold utility (assumed)", tc, tc, defaults.DEFAULT_COLD_UTILITY_PRICE, UtilityKind.COLD,
                    defaults.DEFAULT_COLD_UTILITY_FILM_COEFFICIENT))
