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
  All units are evaluated at once on padded arrays; the gradient of the cost and the Jacobian of the
  approaches are every unit's central differences in its own four end coordinates (exact in its duty),
  chained through the affine maps (:meth:`SegmentedModel.cost_gradient`); until 2026-12-05 SLSQP
  differenced the whole cost in every load, which on 40 generated streams took 0.51 s per gradient
  against 0.8 ms now.

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


def _log_means(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Log means of temperature differences [K], each floored at 1e-9 K; the mean where they are equal."""
    a, b = np.maximum(a, 1e-9), np.maximum(b, 1e-9)
    close = np.abs(a - b) < 1e-6 * np.maximum(a, b)
    return np.where(close, 0.5 * (a + b), (a - b) / np.log(np.where(close, 2.0, a / np.where(close, 1.0, b))))


FD_STEP = 6e-6
"""Relative step of the central differences of the units' areas and approaches in their own end values
[-] (about the cube root of the double-precision epsilon, the usual choice for central differences)."""


class _Sides:
    """One side (hot or cold) of every unit as padded arrays, for evaluating all units at once.

    Row r holds the knots of unit r's stream on that side (τ ascending, padded with +inf), their
    temperatures, the slopes and film coefficients of the pieces, and the number of pieces; a utility side
    is the identity φ(τ) = τ with its film coefficient (one piece).
    """

    def __init__(self, profiles: list[Profile | None], h_util: list[float | None]):
        width = max(len(pr.tau) if pr is not None else 2 for pr in profiles)
        n = len(profiles)
        self.tau = np.full((n, width), np.inf)
        self.temp = np.zeros((n, width))
        self.slope = np.zeros((n, width - 1))
        self.h = np.ones((n, width - 1))
        self.pieces = np.ones(n, dtype=int)
        self.inner: list[np.ndarray] = []
        for r, (pr, hu) in enumerate(zip(profiles, h_util)):
            tau, temp, h = (np.array([0.0, 1.0]), np.array([0.0, 1.0]), np.array([hu])) if pr is None else \
                (pr.tau, pr.temp, pr.h)
            k = len(tau)
            self.tau[r, :k], self.temp[r, :k], self.h[r, :k - 1] = tau, temp, h
            self.slope[r, :k - 1] = np.diff(temp) / np.diff(tau)
            self.pieces[r] = k - 1
            self.inner.append(np.asarray(tau[1:-1], dtype=float))

    def _piece(self, t: np.ndarray) -> np.ndarray:
        """Index of the piece of each row's profile at τ = t[..., r, :] [-] (the end pieces beyond the ends)."""
        k = np.sum(self.tau[:, None, :] <= t[..., None], axis=-1) - 1
        return np.clip(k, 0, self.pieces[:, None] - 1)

    def temperature(self, t: np.ndarray) -> np.ndarray:
        """φ(τ) of every row at t (... × rows × points) [°C] (as :meth:`Profile.temperature`)."""
        k = self._piece(t)
        rows = np.arange(self.tau.shape[0])[:, None]
        return self.temp[rows, k] + self.slope[rows, k] * (t - self.tau[rows, k])

    def film(self, t: np.ndarray) -> np.ndarray:
        """Film coefficient of the piece at τ = t (... × rows × points) [kW/(m²·K)] (as
        :meth:`Profile.piece_h`)."""
        return self.h[np.arange(self.tau.shape[0])[:, None], self._piece(t)]


class SegmentedModel:
    """A topology in enthalpy coordinates with its exact approaches and segment-wise areas.

    Each unit's area and approaches depend on five values only (its duty and the coordinates of its four
    ends), all affine in the loads.  All units are evaluated at once on padded arrays; the gradient of the
    cost and the Jacobian of the approaches come from central differences of every unit in each of its end
    values (all units perturbed together: a unit's area depends on its own end values only), exact in the
    duty (on which the area depends linearly), chained through the affine maps: nine evaluations of the
    units per gradient instead of one evaluation of the whole cost per load.
    """

    def __init__(self, p: TacProblem, top: Topology):
        self.p, self.m = p, TopologyModel(p, top)
        m = self.m
        hot, cold, hot_h, cold_h = [], [], [], []
        for kind, key in zip(m.kinds, m.keys):
            if kind is UnitKind.EXCHANGER:
                hot.append(p.hot_profiles[key[0]]), cold.append(p.cold_profiles[key[1]])
                hot_h.append(None), cold_h.append(None)
            elif kind is UnitKind.HEATER:
                hot.append(None), cold.append(p.cold_profiles[key[1]])
                hot_h.append(p.utility_h[0][key[2]]), cold_h.append(None)
            else:
                hot.append(p.hot_profiles[key[1]]), cold.append(None)
                hot_h.append(None), cold_h.append(p.utility_h[1][key[2]])
        self.hot, self.cold = _Sides(hot, hot_h), _Sides(cold, cold_h)
        util_rows = [r for r, kind in enumerate(m.kinds) if kind is not UnitKind.EXCHANGER]
        self.G = np.vstack([m.duty.m[util_rows], m.required_rows[0]])
        self.g = np.concatenate([m.duty.c[util_rows] - m.qmin, m.required_rows[1]])
        self._maps = (m.duty, m.hot_in, m.hot_out, m.cold_in, m.cold_out)
        # points of unit r: columns 0 and 1 its ends, then its hot knots, then its cold knots, then padding
        # (the cold end again: no width in the area, left out of the approaches)
        n_units = len(m.kinds)
        nh = np.array([len(k) for k in self.hot.inner], dtype=int)
        nc = np.array([len(k) for k in self.cold.inner], dtype=int)
        width = 2 + int(np.max(nh + nc, initial=0))
        self._hot_knots = np.full((n_units, width), np.nan)
        self._cold_knots = np.full((n_units, width), np.nan)
        for r in range(n_units):
            self._hot_knots[r, 2:2 + nh[r]] = self.hot.inner[r]
            self._cold_knots[r, 2 + nh[r]:2 + nh[r] + nc[r]] = self.cold.inner[r]
        self._valid = np.arange(width)[None, :] < (2 + nh + nc)[:, None]
        self._unit_of_row = np.nonzero(self._valid)[0]      # the unit of each approach row, in row order
        self.knotted = [r for r in range(n_units) if nh[r] + nc[r]]

    def _ends(self, x) -> np.ndarray:
        """Duty and end coordinates of every unit (units × 5: q, hot in, hot out, cold in, cold out)."""
        return np.column_stack([a.c + a.m @ x for a in self._maps])

    def _points(self, ends: np.ndarray) -> np.ndarray:
        """Positions s (0 at the hot end, 1 at the cold end) of the ends and knots of every unit, clamped to
        [0, 1] (units × points) [-]."""
        hi, ho, ci, co = (ends[..., k:k + 1] for k in range(1, 5))
        dh, dc = hi - ho, co - ci
        with np.errstate(divide="ignore", invalid="ignore"):
            sh = np.where(dh > 1e-12, (hi - self._hot_knots) / np.where(dh > 1e-12, dh, 1.0), 0.0)
            sc = np.where(dc > 1e-12, (co - self._cold_knots) / np.where(dc > 1e-12, dc, 1.0), 0.0)
        s = np.where(np.isnan(self._hot_knots), np.where(np.isnan(self._cold_knots), 1.0, sc), sh)
        s[..., 0] = 0.0
        return np.clip(s, 0.0, 1.0)

    def _differences(self, ends: np.ndarray, s: np.ndarray) -> np.ndarray:
        """Hot minus cold temperature at positions s of every unit [K]."""
        hi, ho, ci, co = (ends[..., k:k + 1] for k in range(1, 5))
        return self.hot.temperature(hi - s * (hi - ho)) - self.cold.temperature(co - s * (co - ci))

    def _approaches(self, ends: np.ndarray) -> np.ndarray:
        """Approach minus least approach at every point (units × points; padding included) [K]."""
        return self._differences(ends, self._points(ends)) - self.m.need[:, None]

    def _areas(self, ends: np.ndarray) -> np.ndarray:
        """Area of every unit [m²]: Σ Q_k / (U_k ΔT_lm,k) over the pieces between its knots (ends: ... ×
        units × 5)."""
        hi, ho, ci, co = (ends[..., k:k + 1] for k in range(1, 5))
        s = np.sort(self._points(ends), axis=-1)
        dt = self._differences(ends, s)
        mid = 0.5 * (s[..., 1:] + s[..., :-1])
        u = 1.0 / (1.0 / self.hot.film(hi - mid * (hi - ho)) + 1.0 / self.cold.film(co - mid * (co - ci)))
        return np.maximum(ends[..., 0], 1e-12) * np.sum(
            np.diff(s, axis=-1) / (u * _log_means(dt[..., :-1], dt[..., 1:])), axis=-1)

    @staticmethod
    def _steps(ends: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The end values with each end coordinate e = 1..4 raised and lowered by each unit's step, stacked
        (8 × units × 5: e = 1 up, e = 1 down, e = 2 up, ...), and the steps (units × 5) [K]."""
        h = FD_STEP * np.maximum(1.0, np.abs(ends))
        out = np.repeat(ends[None], 8, axis=0)
        for e in range(1, 5):
            out[2 * e - 2, :, e] += h[:, e]
            out[2 * e - 1, :, e] -= h[:, e]
        return out, h

    def approaches(self, x: np.ndarray) -> np.ndarray:
        """Approach minus the unit's least approach at the ends and every knot of every unit [K] (>= 0)."""
        return self._approaches(self._ends(x))[self._valid]

    def approaches_jacobian(self, x: np.ndarray) -> np.ndarray:
        """d approaches / d x [K/kW]: central differences of every unit in its end values, chained."""
        moved, h = self._steps(self._ends(x))
        app = self._approaches(moved)
        jac = np.zeros((len(self._unit_of_row), self.m.n))
        for e in range(1, 5):
            d = ((app[2 * e - 2] - app[2 * e - 1]) / (2.0 * h[:, e:e + 1]))[self._valid]
            jac += d[:, None] * self._maps[e].m[self._unit_of_row]
        return jac

    def areas(self, x: np.ndarray) -> np.ndarray:
        """Segment-wise area of every unit [m²]: Σ Q_k / (U_k ΔT_lm,k) over the pieces between knots."""
        return self._areas(self._ends(x))

    def cost_gradient(self, x: np.ndarray) -> np.ndarray:
        """Gradient of the exact total annual cost in the loads [money/(year·kW)]: central differences of
        every unit in its end coordinates, exact in its duty, chained through the affine maps."""
        m = self.m
        ends = self._ends(x)
        area = self._areas(ends)
        a = np.maximum(area, 0.0)
        # d cost / d area (none at zero area, where the power law has no finite slope)
        slope = np.where(a > 0.0, m.per_area * m.exponent * np.where(a > 0.0, a, 1.0) ** (m.exponent - 1.0), 0.0)
        q = ends[:, 0]
        grad = m.duty.m.T @ (m.price + slope * np.where(q > 1e-12, area / np.maximum(q, 1e-12), 0.0))
        moved, h = self._steps(ends)
        moved_areas = self._areas(moved)
        for e in range(1, 5):
            grad += self._maps[e].m.T @ (slope * (moved_areas[2 * e - 2] - moved_areas[2 * e - 1]) / (2.0 * h[:, e]))
        return grad

    def cost(self, x: np.ndarray) -> float:
        """Exact total annual cost of the loads x [money/year]."""
        m = self.m
        ends = self._ends(x)
        area = self._areas(ends)
        return float((m.fixed + m.per_area * np.maximum(area, 0.0) ** m.exponent).sum() + (m.price * ends[:, 0]).sum())

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
        return sm.cost(y * s) / f0

    def gradient(y):
        return sm.cost_gradient(y * s) * (s / f0)

    best = None
    for x0 in candidates:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = minimize(objective, x0 / s, jac=gradient, method="SLSQP", bounds=list(zip(lo / s, hi / s)),
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
