"""Streams of several segments in the lowest-TAC design: enthalpy coordinates, exact approaches and areas.

A stream of several segments (a condensing overhead: desuperheating, condensing, subcooling) has a
temperature that is a monotone piecewise-linear function of its enthalpy.  The stagewise model of
:mod:`heatloom.network.tac.nlp` is kept *in enthalpy coordinates*: each stream gets the linear coordinate

.. math:: \\tau = T_{supply} \\mp E / CP_e, \\qquad CP_e = Q_{stream} / |T_{supply} - T_{target}|

(E the heat the stream has exchanged since its supply end), equal to the temperature at both stream ends
and linear in the loads, so stage balances, stream targets and utility duties stay affine in the loads.
The true temperature is :math:`T = \\varphi(\\tau)`, piecewise linear with a knot at every segment
boundary (:class:`Profile`).  For a fixed topology (:func:`solve_segmented`):

* along a unit, both sides are linear in the heat transferred between the knots of either side (a split
  branch under isothermal mixing carries a fixed share of its stream, so its coordinate is still linear in
  the heat it exchanges); the approach must hold at both ends **and at every knot inside the unit**
  (:meth:`SegmentedModel.approaches`, a knot outside the unit is clamped to the nearer end, which keeps
  the constraint continuous);
* the area is the sum over the pieces between knots of :math:`Q_k/(U_k\\,\\Delta T_{lm,k})`, each piece
  with its own segments' film coefficients (as :func:`heatloom.equipment.segments.size_segments`);
* SLSQP minimises the exact TAC over the loads from the least-utility-cost vertex of the balances (and any
  guesses), and a solution is kept only if it keeps every approach exactly; none is returned otherwise.
  The gradient of the cost and the Jacobian of the approaches are each unit's central differences in its
  own five end values (duty, four end coordinates), chained through the affine maps
  (:meth:`SegmentedModel.cost_and_gradient`); until 2026-12-05 SLSQP differenced the whole cost in every
  load, which on 40 generated streams took 0.54 s per gradient against 4 ms now.

The network is built and sized by :func:`heatloom.network.tac.build.network_from_solution` with
:func:`heatloom.equipment.segments.size_segments` and checked by :func:`heatloom.network.structure.
check_network`, which checks the approach at every segment break too.
"""

from __future__ import annotations

import math
import warnings
from bisect import bisect_right
from dataclasses import dataclass

import numpy as np
from scipy.optimize import linprog, minimize

from ...model.costs import UnitKind
from .nlp import Topology, TopologyModel, TopologySolution, stop_at
from .problem import TacProblem

__all__ = ["Profile", "stream_profile", "SegmentedModel", "solve_segmented", "APPROACH_KEPT"]

APPROACH_KEPT = 1e-7
"""Margin the refinement keeps above each unit's least approach [K], so that the network check (tolerance
1e-6 K) passes whatever the rounding."""


@dataclass(frozen=True)
class Profile:
    """Temperature of a stream against its linear enthalpy coordinate τ: knots ascending in τ.

    ``tau`` and ``temp`` [°C] have one entry per segment boundary; ``h`` [kW/(m²·K)] one per piece.
    """

    tau: np.ndarray
    temp: np.ndarray
    h: np.ndarray

    @property
    def inner(self) -> np.ndarray:
        """The knots between the stream's ends [°C on the τ scale]."""
        return self.tau[1:-1]

    def temperature(self, tau) -> np.ndarray:
        """φ(τ) [°C], continued beyond the ends with the end pieces' slopes."""
        t = np.asarray(tau, dtype=float)
        out = np.interp(t, self.tau, self.temp)
        lo = (self.temp[1] - self.temp[0]) / (self.tau[1] - self.tau[0])
        hi = (self.temp[-1] - self.temp[-2]) / (self.tau[-1] - self.tau[-2])
        out = np.where(t < self.tau[0], self.temp[0] + lo * (t - self.tau[0]), out)
        return np.where(t > self.tau[-1], self.temp[-1] + hi * (t - self.tau[-1]), out)

    def piece_h(self, tau) -> np.ndarray:
        """Film coefficient of the piece at τ [kW/(m²·K)]."""
        k = np.clip(np.searchsorted(self.tau, tau, side="right") - 1, 0, len(self.h) - 1)
        return self.h[k]


def stream_profile(stream, h_of) -> Profile:
    """The :class:`Profile` of a stream; ``h_of(value, what)`` gives a segment's film coefficient.

    Examples
    --------
    Invented data: a vapour cooled 200 → 150 °C (2 kW/K, 100 kW), condensed 150 → 149 °C (300 kW/K,
    300 kW): effective CP 400/51 kW/K, the break at τ = 200 − 100/(400/51) = 187.25.

    >>> from heatloom.model import Segment, Stream
    >>> s = Stream("vapour", (Segment(200, 150, 2.0, 1.0), Segment(150, 149, 300.0, 2.0)))
    >>> p = stream_profile(s, lambda h, what: h)
    >>> [round(float(t), 3) for t in p.tau], [float(t) for t in p.temp]
    ([149.0, 187.25, 200.0], [149.0, 150.0, 200.0])
    """
    segs = stream.segments
    duties = np.array([g.duty for g in segs])
    total = float(duties.sum())
    span = abs(stream.supply_temperature - stream.target_temperature)
    cp = total / span
    e = np.concatenate([[0.0], np.cumsum(duties)])
    sign = -1.0 if stream.is_hot else 1.0
    tau = stream.supply_temperature + sign * e / cp
    temp = np.array([segs[0].supply_temperature] + [g.target_temperature for g in segs], dtype=float)
    h = np.array([h_of(g.film_coefficient, f"stream '{stream.name}'") for g in segs], dtype=float)
    tau[-1] = stream.target_temperature
    if stream.is_hot:
        tau, temp, h = tau[::-1], temp[::-1], h[::-1]
    return Profile(np.ascontiguousarray(tau), np.ascontiguousarray(temp), np.ascontiguousarray(h))


def _log_mean(a: float, b: float) -> float:
    """Log mean of two temperature differences [K] (each floored at 1e-9 K; the mean when they are equal)."""
    a, b = max(a, 1e-9), max(b, 1e-9)
    if abs(a - b) < 1e-6 * max(a, b):
        return 0.5 * (a + b)
    return (a - b) / math.log(a / b)


class _Side:
    """One side of a unit as plain floats: its profile's knots (or none: a utility, or a stream of one
    segment, whose coordinate is its temperature) and film coefficients."""

    __slots__ = ("tau", "temp", "slope", "h", "inner")

    def __init__(self, prof: Profile | None, h_util: float | None):
        if prof is None or len(prof.tau) == 2 and prof.temp[0] == prof.tau[0] and prof.temp[1] == prof.tau[1]:
            self.tau, self.temp, self.slope = None, None, None
            self.h = [float(h_util if prof is None else prof.h[0])]
            self.inner = []
        else:
            self.tau, self.temp = [float(v) for v in prof.tau], [float(v) for v in prof.temp]
            self.slope = [(self.temp[k + 1] - self.temp[k]) / (self.tau[k + 1] - self.tau[k])
                          for k in range(len(self.tau) - 1)]
            self.h = [float(v) for v in prof.h]
            self.inner = self.tau[1:-1]

    def temperature(self, t: float) -> float:
        """φ(τ) [°C] (:meth:`Profile.temperature` on one value)."""
        if self.tau is None:
            return t
        k = min(max(bisect_right(self.tau, t) - 1, 0), len(self.slope) - 1)
        return self.temp[k] + self.slope[k] * (t - self.tau[k])

    def film(self, t: float) -> float:
        """Film coefficient of the piece at τ [kW/(m²·K)] (:meth:`Profile.piece_h` on one value)."""
        if len(self.h) == 1:
            return self.h[0]
        return self.h[min(max(bisect_right(self.tau, t) - 1, 0), len(self.h) - 1)]


FD_STEP = 6e-6
"""Relative step of the central differences of a unit's area and approaches in its own end values [-]
(about the cube root of the double-precision epsilon, the usual choice for central differences)."""


class SegmentedModel:
    """A topology in enthalpy coordinates with its exact approaches and segment-wise areas.

    Each unit's area and approaches depend on five values only (its duty and the coordinates of its four
    ends), all affine in the loads; they are computed unit by unit in plain floats, and the gradient of the
    cost and the Jacobian of the approaches come from central differences of each unit in those values
    (exact in the duty, on which the area depends linearly), chained through the affine maps: some ten
    evaluations of each unit per gradient instead of one evaluation of every unit per load.
    """

    def __init__(self, p: TacProblem, top: Topology):
        self.p, self.m = p, TopologyModel(p, top)
        self.sides = []   # per unit: (hot side, cold side) as _Side
        for kind, key in zip(self.m.kinds, self.m.keys):
            if kind is UnitKind.EXCHANGER:
                self.sides.append((_Side(p.hot_profiles[key[0]], None), _Side(p.cold_profiles[key[1]], None)))
            elif kind is UnitKind.HEATER:
                self.sides.append((_Side(None, p.utility_h[0][key[2]]), _Side(p.cold_profiles[key[1]], None)))
            else:
                self.sides.append((_Side(p.hot_profiles[key[1]], None), _Side(None, p.utility_h[1][key[2]])))
        util_rows = [r for r, kind in enumerate(self.m.kinds) if kind is not UnitKind.EXCHANGER]
        self.G = np.vstack([self.m.duty.m[util_rows], self.m.required_rows[0]])
        self.g = np.concatenate([self.m.duty.c[util_rows] - self.m.qmin, self.m.required_rows[1]])
        m = self.m
        self._maps = (m.duty, m.hot_in, m.hot_out, m.cold_in, m.cold_out)
        # per unit, the end values (1 hot in, 2 hot out, 3 cold in, 4 cold out) that depend on the loads
        self._live = [[e for e in range(1, 5) if np.any(self._maps[e].m[r] != 0.0)] for r in range(len(self.sides))]
        sizes = [2 + len(hot.inner) + len(cold.inner) for hot, cold in self.sides]
        self._rows = np.concatenate([[0], np.cumsum(sizes)]).astype(int)

    def _ends(self, x):
        return tuple(a.c + a.m @ x for a in self._maps)

    def _points(self, r, hi, ho, ci, co):
        """Positions s (0 at the hot end, 1 at the cold end) of the ends and knots of unit r, clamped to
        [0, 1] [-]."""
        hot, cold = self.sides[r]
        s = [0.0, 1.0]
        dh, dc = hi - ho, co - ci
        s += [min(max((hi - k) / dh, 0.0), 1.0) if dh > 1e-12 else 0.0 for k in hot.inner]
        s += [min(max((co - k) / dc, 0.0), 1.0) if dc > 1e-12 else 0.0 for k in cold.inner]
        return s

    def _approach(self, r, hi, ho, ci, co) -> list[float]:
        """Approach minus the least approach at the ends and knots of unit r [K]."""
        hot, cold = self.sides[r]
        need = float(self.m.need[r])
        dh, dc = hi - ho, co - ci
        return [hot.temperature(hi - s * dh) - cold.temperature(co - s * dc) - need
                for s in self._points(r, hi, ho, ci, co)]

    def _area(self, r, q, hi, ho, ci, co) -> float:
        """Area of unit r [m²]: Σ Q_k / (U_k ΔT_lm,k) over the pieces between its knots."""
        hot, cold = self.sides[r]
        s = sorted(set(self._points(r, hi, ho, ci, co)))
        dh, dc = hi - ho, co - ci
        dt = [hot.temperature(hi - v * dh) - cold.temperature(co - v * dc) for v in s]
        total = 0.0
        for k in range(len(s) - 1):
            mid = 0.5 * (s[k] + s[k + 1])
            u = 1.0 / (1.0 / hot.film(hi - mid * dh) + 1.0 / cold.film(co - mid * dc))
            total += (s[k + 1] - s[k]) / (u * _log_mean(dt[k], dt[k + 1]))
        return max(q, 1e-12) * total

    def approaches(self, x: np.ndarray) -> np.ndarray:
        """Approach minus the unit's least approach at the ends and every knot of every unit [K] (>= 0)."""
        _, hi, ho, ci, co = self._ends(x)
        out = [a for r in range(len(self.sides)) for a in self._approach(r, hi[r], ho[r], ci[r], co[r])]
        return np.array(out, dtype=float)

    def approaches_jacobian(self, x: np.ndarray) -> np.ndarray:
        """d approaches / d x [K/kW]: central differences of each unit in its end values, chained."""
        ends = np.column_stack(self._ends(x))
        jac = np.zeros((int(self._rows[-1]), self.m.n))
        for r in range(len(self.sides)):
            block = slice(self._rows[r], self._rows[r + 1])
            for e in self._live[r]:
                v = ends[r].copy()
                h = FD_STEP * max(1.0, abs(v[e]))
                v[e] += h
                up = self._approach(r, *v[1:])
                v[e] -= 2.0 * h
                down = self._approach(r, *v[1:])
                jac[block] += np.outer((np.array(up) - np.array(down)) / (2.0 * h), self._maps[e].m[r])
        return jac

    def areas(self, x: np.ndarray) -> np.ndarray:
        """Segment-wise area of every unit [m²]: Σ Q_k / (U_k ΔT_lm,k) over the pieces between knots."""
        ends = self._ends(x)
        return np.array([self._area(r, *(float(a[r]) for a in ends)) for r in range(len(self.sides))])

    def cost_and_gradient(self, x: np.ndarray) -> tuple[float, np.ndarray]:
        """Exact total annual cost [money/year] and its gradient in the loads [money/(year·kW)]."""
        m = self.m
        ends = np.column_stack(self._ends(x))
        area = np.array([self._area(r, *ends[r]) for r in range(len(self.sides))])
        a = np.maximum(area, 0.0)
        cost = float((m.fixed + m.per_area * a ** m.exponent).sum() + (m.price * ends[:, 0]).sum())
        # d cost / d area (none at zero area, where the power law has no finite slope)
        slope = np.where(a > 0.0, m.per_area * m.exponent * np.where(a > 0.0, a, 1.0) ** (m.exponent - 1.0), 0.0)
        local = np.zeros_like(ends)
        local[:, 0] = np.where(ends[:, 0] > 1e-12, area / np.maximum(ends[:, 0], 1e-12), 0.0)   # linear in q
        for r in range(len(self.sides)):
            if slope[r] == 0.0:
                continue
            for e in self._live[r]:
                v = ends[r].copy()
                h = FD_STEP * max(1.0, abs(v[e]))
                v[e] += h
                up = self._area(r, *v)
                v[e] -= 2.0 * h
                local[r, e] = (up - self._area(r, *v)) / (2.0 * h)
        weights = slope[:, None] * local
        grad = m.duty.m.T @ m.price
        for e, aff in enumerate(self._maps):
            grad = grad + aff.m.T @ weights[:, e]
        return cost, grad

    def cost(self, x: np.ndarray) -> float:
        """Exact total annual cost of the loads x [money/year]."""
        m = self.m
        q = m.duty.c + m.duty.m @ x
        area = self.areas(x)
        return float((m.fixed + m.per_area * np.maximum(area, 0.0) ** m.exponent).sum() + (m.price * q).sum())

    def balance_violation(self, x: np.ndarray) -> float:
        """Largest miss of a stream target, or of a utility unit's least duty [K or kW]."""
        m = self.m
        v = float(np.max(np.abs(m.eq_all.m @ x + m.eq_all.c), initial=0.0)) if len(m.eq_all.c) else 0.0
        if len(self.g):
            v = max(v, float(np.max(-(self.G @ x + self.g), initial=0.0)))
        return v

    def feasible(self, x: np.ndarray) -> bool:
        """Balances closed and every approach kept (to within 1e-8 K)."""
        return self.balance_violation(x) <= 1e-7 and float(np.min(self.approaches(x), initial=0.0)) >= -1e-8

    def vertex(self) -> np.ndarray | None:
        """Loads of least utility cost that close the balances (approaches ignored), or None."""
        m = self.m
        c = m.duty.m.T @ m.price
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = linprog(c, A_ub=-self.G if len(self.g) else None, b_ub=self.g if len(self.g) else None,
                          A_eq=m.eq_all.m if len(m.eq_all.c) else None,
                          b_eq=-m.eq_all.c if len(m.eq_all.c) else None, bounds=m.bounds, method="highs")
        return None if res.status != 0 else np.clip(res.x, [b[0] for b in m.bounds], [b[1] for b in m.bounds])


def solve_segmented(p: TacProblem, top: Topology, starts=(), *, max_iter: int = 200,
                    extra_vertex: bool = False, deadline: float | None = None) -> TopologySolution | None:
    """Minimise the exact TAC of one topology with streams of several segments; None if no loads keep every
    approach (see :func:`heatloom.network.tac.nlp.solve_topology` for the arguments)."""
    sm = SegmentedModel(p, top)
    m = sm.m
    if m.n == 0:
        x = np.zeros(0)
        return _solution(sm, x) if sm.feasible(x) else None
    names = list(m.matches) + [None] * (m.n - len(m.matches))
    lo = np.array([b[0] for b in m.bounds])
    hi = np.array([b[1] for b in m.bounds])
    vertex = sm.vertex()
    if vertex is None:
        return None
    candidates = []
    for guess in starts:
        x0 = vertex.copy()
        for k, key in enumerate(names):
            if key is not None and key in guess:
                x0[k] = guess[key]
        candidates.append(np.clip(x0, lo, hi))
    if not candidates or extra_vertex:
        candidates.append(vertex)
    s = p.scale
    f0 = max(abs(sm.cost(vertex)), 1.0)
    E, e = m.eq.m * s, m.eq.c
    cons = [{"type": "ineq", "fun": lambda y: sm.approaches(y * s) - APPROACH_KEPT,
             "jac": lambda y: sm.approaches_jacobian(y * s) * s}]
    if len(sm.g):
        cons.append({"type": "ineq", "fun": lambda y: sm.G @ (y * s) + sm.g, "jac": lambda y: sm.G * s})
    if len(e):
        cons.append({"type": "eq", "fun": lambda y: E @ y + e, "jac": lambda y: E})

    def objective(y):
        f, g = sm.cost_and_gradient(y * s)
        return f / f0, g * (s / f0)

    best = None
    for x0 in candidates:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = minimize(objective, x0 / s, jac=True, method="SLSQP", bounds=list(zip(lo / s, hi / s)),
                           constraints=cons, options={"maxiter": max_iter, "ftol": 1e-10}, callback=stop_at(deadline))
        for x in (np.clip(res.x * s, lo, hi), x0):
            if sm.feasible(x):
                sol = _solution(sm, x)
                if best is None or sol.tac < best.tac:
                    best = sol
                break
    return best


def _solution(sm: SegmentedModel, x: np.ndarray) -> TopologySolution:
    duties = sm.m.duty.c + sm.m.duty.m @ x
    return TopologySolution(sm.m.top, x, sm.cost(x), tuple(float(d) for d in duties), tuple(sm.m.keys))
