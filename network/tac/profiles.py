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

The network is built and sized by :func:`heatloom.network.tac.build.network_from_solution` with
:func:`heatloom.equipment.segments.size_segments` and checked by :func:`heatloom.network.structure.
check_network`, which checks the approach at every segment break too.
"""

from __future__ import annotations

import warnings
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


def _log_mean(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    a, b = np.maximum(a, 1e-9), np.maximum(b, 1e-9)
    close = np.abs(a - b) < 1e-6 * np.maximum(a, b)
    return np.where(close, 0.5 * (a + b), (a - b) / np.log(np.where(close, 2.0, a / np.where(close, 1.0, b))))


class SegmentedModel:
    """A topology in enthalpy coordinates with its exact approaches and segment-wise areas."""

    def __init__(self, p: TacProblem, top: Topology):
        self.p, self.m = p, TopologyModel(p, top)
        self.sides = []   # per unit: (hot profile or None, cold profile or None, h of a utility side)
        for kind, key in zip(self.m.kinds, self.m.keys):
            if kind is UnitKind.EXCHANGER:
                self.sides.append((p.hot_profiles[key[0]], p.cold_profiles[key[1]], None))
            elif kind is UnitKind.HEATER:
                self.sides.append((None, p.cold_profiles[key[1]], p.utility_h[0][key[2]]))
            else:
                self.sides.append((p.hot_profiles[key[1]], None, p.utility_h[1][key[2]]))
        util_rows = [r for r, kind in enumerate(self.m.kinds) if kind is not UnitKind.EXCHANGER]
        self.G = np.vstack([self.m.duty.m[util_rows], self.m.required_rows[0]])
        self.g = np.concatenate([self.m.duty.c[util_rows] - self.m.qmin, self.m.required_rows[1]])

    def _ends(self, x):
        m = self.m
        return (m.duty.c + m.duty.m @ x, m.hot_in.c + m.hot_in.m @ x, m.hot_out.c + m.hot_out.m @ x,
                m.cold_in.c + m.cold_in.m @ x, m.cold_out.c + m.cold_out.m @ x)

    def _points(self, r, hi, ho, ci, co, clamp=True):
        """Positions s (0 at the hot end, 1 at the cold end) of the ends and knots of unit r [-]."""
        hot, cold, _ = self.sides[r]
        s = [0.0, 1.0]
        if hot is not None:
            s += list((hi - hot.inner) / (hi - ho) if hi - ho > 1e-12 else np.zeros(len(hot.inner)))
        if cold is not None:
            s += list((co - cold.inner) / (co - ci) if co - ci > 1e-12 else np.zeros(len(cold.inner)))
        s = np.array(s)
        return np.clip(s, 0.0, 1.0) if clamp else s

    def _profiles_at(self, r, s, hi, ho, ci, co):
        hot, cold, _ = self.sides[r]
        th, tc = hi - s * (hi - ho), co - s * (co - ci)
        return (hot.temperature(th) if hot is not None else th), (cold.temperature(tc) if cold is not None else tc), \
            th, tc

    def approaches(self, x: np.ndarray) -> np.ndarray:
        """Approach minus the unit's least approach at the ends and every knot of every unit [K] (>= 0)."""
        _, hi, ho, ci, co = self._ends(x)
        out = []
        for r in range(len(self.sides)):
            s = self._points(r, hi[r], ho[r], ci[r], co[r])
            t_hot, t_cold, _, _ = self._profiles_at(r, s, hi[r], ho[r], ci[r], co[r])
            out.append(t_hot - t_cold - self.m.need[r])
        return np.concatenate(out) if out else np.zeros(0)

    def areas(self, x: np.ndarray) -> np.ndarray:
        """Segment-wise area of every unit [m²]: Σ Q_k / (U_k ΔT_lm,k) over the pieces between knots."""
        q, hi, ho, ci, co = self._ends(x)
        out = np.zeros(len(self.sides))
        for r, (hot, cold, h_util) in enumerate(self.sides):
            s = np.unique(self._points(r, hi[r], ho[r], ci[r], co[r]))
            t_hot, t_cold, th, tc = self._profiles_at(r, s, hi[r], ho[r], ci[r], co[r])
            dt = t_hot - t_cold
            mid = 0.5 * (s[1:] + s[:-1])
            _, _, th_mid, tc_mid = self._profiles_at(r, mid, hi[r], ho[r], ci[r], co[r])
            h_hot = hot.piece_h(th_mid) if hot is not None else h_util
            h_cold = cold.piece_h(tc_mid) if cold is not None else h_util
            u = 1.0 / (1.0 / h_hot + 1.0 / h_cold)
            out[r] = float(np.sum(max(q[r], 1e-12) * np.diff(s) / (u * _log_mean(dt[:-1], dt[1:]))))
        return out

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
    cons = [{"type": "ineq", "fun": lambda y: sm.approaches(y * s) - APPROACH_KEPT}]
    if len(sm.g):
        cons.append({"type": "ineq", "fun": lambda y: sm.G @ (y * s) + sm.g, "jac": lambda y: sm.G * s})
    if len(e):
        cons.append({"type": "eq", "fun": lambda y: E @ y + e, "jac": lambda y: E})
    best = None
    for x0 in candidates:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = minimize(lambda y: sm.cost(y * s) / f0, x0 / s, method="SLSQP", bounds=list(zip(lo / s, hi / s)),
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
