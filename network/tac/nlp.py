"""Loads and temperatures of one stagewise topology at the lowest exact total annual cost.

A topology of the stagewise superstructure of Yee & Grossmann (1990) says which hot/cold pairs exchange
heat in which stage and which utility units sit at the stream ends (one heater per cold stream and hot
utility level at its hot end, one cooler per hot stream and cold utility level at its cold end, levels in
series ordered by temperature; and, beyond Yee & Grossmann's form, preheaters and precoolers at the supply
ends, before the first stage).  With isothermal mixing every stream leaves each stage at one temperature,
so once the topology is fixed all stage temperatures, utility duties and end temperature differences are
*affine* functions of the exchanger loads (and of the duties of all but the last utility level of a
stream at its target end, and of every supply-end unit).  The feasible set is therefore a polytope:

.. math::

    t_{i,k+1} = t_{i,k} - \\sum_j q_{ijk}/CP_i, \\qquad t_{j,k} = t_{j,k+1} + \\sum_i q_{ijk}/CP_j,

    \\Delta T_1, \\Delta T_2 \\ge EMAT \\text{ at both ends of every unit}, \\qquad Q_u \\ge q_{min}

and the objective is the exact total annual cost

.. math::

    TAC = \\sum_u f\\,[a_u + b_u (Q_u / (U_u\\,\\Delta T_{lm,u}))^{c_u}] + \\sum_{u\\in util} p_u Q_u,
    \\qquad 1/U_u = 1/h_{hot} + 1/h_{cold}

(f the annualisation factor; the exact log mean, the formula of :func:`heatloom.equipment.sizing.log_mean`,
with its analytic gradient).  A linear programme (scipy's HiGHS) projects each starting guess onto the
polytope or proves it empty; SLSQP (scipy's trust-constr when SLSQP fails at once) then minimises the
cost.  Split fractions follow from isothermal mixing: a branch's share of a stream's flow in a stage is its
share of the stage's duty; :func:`heatloom.network.tac.polish.polish_splits` frees them afterwards
(non-isothermal mixing).

References
----------
.. [1] Yee, T. F., Grossmann, I. E. (1990). Simultaneous optimization models for heat integration—II.
   Heat exchanger network synthesis. Computers & Chemical Engineering 14(10), 1165-1184.
   doi:10.1016/0098-1354(90)85010-8
"""

from __future__ import annotations

import time
import warnings
from dataclasses import dataclass, field
from functools import cache

import numpy as np
from scipy.linalg import qr
from scipy.optimize import Bounds, LinearConstraint, linprog, minimize

from ...model.costs import UnitKind
from .problem import TacProblem, make_problem

__all__ = ["SUPPLY_END_LEVELS", "TacProblem", "Topology", "TopologyModel", "TopologySolution", "make_problem",
           "solve_topology", "unit_costs", "branch_temperatures", "log_mean_and_gradient", "stop_at"]

APPROACH_MARGIN = 0.0
"""Extra approach kept by the optimiser above EMAT [K]; none: solutions are projected back onto the
constraints to within 1e-7 K, well inside the 1e-6 K tolerance of the network check, and a margin would
make problems whose utility just meets EMAT at a fixed end infeasible."""


SUPPLY_END_LEVELS = 2
"""Utility levels on a side from which the topology search, and the start from a MER network, use utility
units at the streams' supply ends (:attr:`Topology.preheaters`, :attr:`Topology.precoolers`) [-].  With one
level a supply-end unit rarely pays (the same utility serves the target end, where the stagewise form
already has it) and would only widen every neighbourhood; problems of up to ``RESTRUCTURE_STREAMS`` streams
of one segment put utility units anywhere in the search beyond the stagewise form (``restructure=True``,
:mod:`heatloom.network.tac.layout_search`)."""


@dataclass(frozen=True)
class Topology:
    """Which units exist: matches (hot i, cold j, stage k), heaters (cold j, level) and coolers (hot i, level)
    at the target ends, and *preheaters* (cold j, level) and *precoolers* (hot i, level) at the supply ends,
    before the first stage a stream meets (levels in series ordered by temperature at either end: a cold
    stream meets its hot utilities coolest first, a hot stream its cold utilities warmest first).

    A utility unit at the supply end is what a site with several utility levels needs where the cheap level
    can only serve the cool part of a cold stream (low-pressure steam raising a feed before a process
    exchanger, dearer steam after it), or a hot stream gives its hottest part to a utility that values it
    (steam raised from a hot reactor effluent) before meeting the process.
    """

    stages: int
    matches: frozenset
    heaters: frozenset
    coolers: frozenset
    preheaters: frozenset = frozenset()
    precoolers: frozenset = frozenset()

    @property
    def units(self) -> int:
        return len(self.matches) + len(self.heaters) + len(self.coolers) + len(self.preheaters) + \
            len(self.precoolers)

    def key(self) -> tuple:
        return (self.stages, tuple(sorted(self.matches)), tuple(sorted(self.heaters)), tuple(sorted(self.coolers)),
                tuple(sorted(self.preheaters)), tuple(sorted(self.precoolers)))

    def replace(self, *, matches=None, heaters=None, coolers=None, stages=None, preheaters=None,
                precoolers=None) -> Topology:
        return Topology(self.stages if stages is None else stages,
                        frozenset(self.matches if matches is None else matches),
                        frozenset(self.heaters if heaters is None else heaters),
                        frozenset(self.coolers if coolers is None else coolers),
                        frozenset(self.preheaters if preheaters is None else preheaters),
                        frozenset(self.precoolers if precoolers is None else precoolers))


@dataclass
class _Affine:
    """Rows of affine maps v = c + M·x, one row per unit."""

    c: np.ndarray
    m: np.ndarray


class TopologyModel:
    """The affine maps of one topology: duties and terminal temperatures of every unit.

    For streams of several segments the "temperatures" are the linear enthalpy coordinates of
    :mod:`heatloom.network.tac.profiles` (equal to the temperatures at the stream ends).
    """

    def __init__(self, p: TacProblem, top: Topology):
        self.p, self.top = p, top
        K = top.stages
        self.matches = sorted(top.matches)
        heaters = sorted(top.heaters)
        coolers = sorted(top.coolers)
        n_h, n_c = len(p.hot_names), len(p.cold_names)
        # variables: exchanger loads, then every utility unit of a stream except its last level
        self.var_units = []
        cool_by = {i: sorted(lv for (ii, lv) in coolers if ii == i) for i in range(n_h)}
        heat_by = {j: sorted(lv for (jj, lv) in heaters if jj == j) for j in range(n_c)}
        n = len(self.matches)
        extra = []
        for i in range(n_h):
            for lv in cool_by[i][:-1]:
                extra.append(("cool", i, lv))
        for j in range(n_c):
            for lv in heat_by[j][:-1]:
                extra.append(("heat", j, lv))
        # every unit at a supply end is a variable (its duty): the stages begin where they leave the stream
        precool_by = {i: sorted(lv for (ii, lv) in top.precoolers if ii == i) for i in range(n_h)}
        preheat_by = {j: sorted(lv for (jj, lv) in top.preheaters if jj == j) for j in range(n_c)}
        extra += [("precool", i, lv) for i in range(n_h) for lv in precool_by[i]]
        extra += [("preheat", j, lv) for j in range(n_c) for lv in preheat_by[j]]
        n += len(extra)
        self.n = n
        var_of = {u: len(self.matches) + k for k, u in enumerate(extra)}

        def unit_vec(k):
            v = np.zeros(n)
            v[k] = 1.0
            return v

        rows = []  # (kind, key, duty(c, m), hot_in, hot_out, cold_in, cold_out, U, law, price, least approach)

        def utility_unit(side: str, s: int, lv: int, duty, start, cp: float, h: float):
            """The row of one utility unit of stream s (``side`` "cool"/"precool" on a hot stream,
            "heat"/"preheat" on a cold one) of (const, coeff) ``duty`` from ``start``; returns where the
            stream leaves it."""
            cooling = side in ("cool", "precool")
            kind = UnitKind.COOLER if cooling else UnitKind.HEATER
            util = (p.cool_levels if cooling else p.heat_levels)[lv]
            if cooling:
                stop = (start[0] - duty[0] / cp, start[1] - duty[1] / cp)
            else:
                stop = (start[0] + duty[0] / cp, start[1] + duty[1] / cp)
            u = 1.0 / (1.0 / h + 1.0 / util.film_coefficient)
            ends = ((util.supply_temperature, np.zeros(n)), (util.target_temperature, np.zeros(n)))
            sides = (start, stop, *ends) if cooling else (*ends, start, stop)
            need = p.need(s, None) if cooling else p.need(None, s)
            rows.append((kind, (side, s, lv), duty, *sides, u, p.laws[kind], util.cost, need))
            return stop

        def supply_chain(cooling: bool, s: int, start: float, cp: float, h: float):
            """Rows of a stream's utility units at its supply end, in series from ``start``; returns the
            (const, coeff) temperature at which the stream enters its first stage."""
            at = (start, np.zeros(n))
            side = "precool" if cooling else "preheat"
            for lv in (precool_by if cooling else preheat_by)[s]:
                at = utility_unit(side, s, lv, (0.0, unit_vec(var_of[side, s, lv])), at, cp, h)
            return at

        # stage temperatures as (const, coeff), built only where a unit needs them: hot stream i enters
        # stage k having given the loads of its matches of the stages before; cold stream j leaves stage k
        # (boundary k) having taken those of stages k to K - 1
        hot_start = {i: supply_chain(True, i, p.hot_in[i], p.hot_cp[i], p.hot_h[i]) for i in range(n_h)}
        cold_start = {j: supply_chain(False, j, p.cold_in[j], p.cold_cp[j], p.cold_h[j]) for j in range(n_c)}
        on_hot: dict[int, list[tuple[int, int]]] = {}   # hot stream → (stage, column) of its matches
        on_cold: dict[int, list[tuple[int, int]]] = {}
        for idx, (i, j, k) in enumerate(self.matches):
            on_hot.setdefault(i, []).append((k, idx))
            on_cold.setdefault(j, []).append((k, idx))

        @cache
        def th(i: int, k: int):
            c0, m0 = hot_start[i]
            m = m0.copy()
            for kk, idx in on_hot.get(i, ()):
                if kk < k:
                    m[idx] -= 1.0 / p.hot_cp[i]
            return c0, m

        @cache
        def tc(j: int, k: int):
            c0, m0 = cold_start[j]
            m = m0.copy()
            for kk, idx in on_cold.get(j, ()):
                if kk >= k:
                    m[idx] += 1.0 / p.cold_cp[j]
            return c0, m
        for idx, (i, j, k) in enumerate(self.matches):
            u = 1.0 / (1.0 / p.hot_h[i] + 1.0 / p.cold_h[j])
            rows.append((UnitKind.EXCHANGER, (i, j, k), (0.0, unit_vec(idx)), th(i, k), th(i, k + 1), tc(j, k + 1),
                         tc(j, k), u, p.laws[UnitKind.EXCHANGER], 0.0, p.need(i, j)))
        eq_c, eq_m = [], []

        def utility_chain(cooling: bool, s: int, end, target: float, cp: float, h: float) -> None:
            """Rows of a stream's utility units in series from its end ``end`` to its target, or, with none,
            the equality that the stream already reaches its target there."""
            t_c, t_m = end
            levels = (cool_by if cooling else heat_by)[s]
            gap = (t_c - target, t_m) if cooling else (target - t_c, -t_m)   # temperature still to change
            if not levels:
                eq_c.append(gap[0])
                eq_m.append(gap[1])
                return
            side = "cool" if cooling else "heat"
            start, remaining = end, (cp * gap[0], cp * gap[1])
            for pos, lv in enumerate(levels):
                if pos < len(levels) - 1:
                    duty = (0.0, unit_vec(var_of[side, s, lv]))
                    remaining = (remaining[0], remaining[1] - duty[1])
                else:
                    duty = remaining
                start = utility_unit(side, s, lv, duty, start, cp, h)

        for i in range(n_h):
            utility_chain(True, i, th(i, K), p.hot_out[i], p.hot_cp[i], p.hot_h[i])
        for j in range(n_c):
            utility_chain(False, j, tc(j, 0), p.cold_out[j], p.cold_cp[j], p.cold_h[j])
        self.rows = rows
        self.kinds = [r[0] for r in rows]
        self.keys = [r[1] for r in rows]

        def aff(col):
            return _Affine(np.array([r[col][0] for r in rows], dtype=float),
                           np.array([r[col][1] for r in rows], dtype=float).reshape(len(rows), n))

        self.duty, self.hot_in, self.hot_out, self.cold_in, self.cold_out = (aff(c) for c in range(2, 7))
        self.u = np.array([r[7] for r in rows])
        self.fixed = np.array([r[8][0] for r in rows])
        self.per_area = np.array([r[8][1] for r in rows])
        self.exponent = np.array([r[8][2] for r in rows])
        self.price = np.array([r[9] for r in rows])
        self.need = np.array([r[10] for r in rows], dtype=float).reshape(len(rows))
        self.d1 = _Affine(self.hot_in.c - self.cold_out.c, self.hot_in.m - self.cold_out.m)
        self.d2 = _Affine(self.hot_out.c - self.cold_in.c, self.hot_out.m - self.cold_in.m)
        eq = _Affine(np.array(eq_c, dtype=float), np.array(eq_m, dtype=float).reshape(len(eq_c), n))
        self.eq_all = eq
        # SLSQP needs independent equalities: keep a basis of the rows (pivoted QR); the others are implied
        # where the topology is feasible, which the LP checks against all of them
        if len(eq.c) and n:
            _, r, piv = qr(eq.m.T, mode="economic", pivoting=True)
            diag = np.abs(np.diag(r))
            rank = int(np.sum(diag > 1e-10 * max(diag.max(initial=0.0), 1.0)))
            keep = np.sort(piv[:rank])
            eq = _Affine(eq.c[keep], eq.m[keep])
        self.eq = eq
        self.qmin = 1e-5 * p.scale
        # inequalities G x + g >= 0: both ends >= the unit's least approach (EMAT, or the sum of its sides'
        # contributions; + margin), every utility unit's duty >= qmin, every required unit kind's total
        # load >= its least load
        need = self.need + APPROACH_MARGIN
        util_rows = [k for k, kind in enumerate(self.kinds) if kind is not UnitKind.EXCHANGER]
        supply_end = {"preheat": "heat", "precool": "cool"}   # the same unit kind for the match rules
        kinds = [("x", key[0], key[1]) if kind is UnitKind.EXCHANGER else (supply_end.get(key[0], key[0]), *key[1:])
                 for kind, key in zip(self.kinds, self.keys)]
        required = sorted(p.required & set(kinds), key=str)
        of = np.array([[float(k == r) for k in kinds] for r in required]).reshape(len(required), len(rows))
        self.required_rows = (of @ self.duty.m, of @ self.duty.c - np.array([p.least_load(r) for r in required]))
        G = np.vstack([self.d1.m, self.d2.m, self.duty.m[util_rows], self.required_rows[0]])
        g = np.concatenate([self.d1.c - need, self.d2.c - need, self.duty.c[util_rows] - self.qmin,
                            self.required_rows[1]])
        # rows without variables are constants: they hold, or the topology is infeasible
        const = ~np.any(G != 0.0, axis=1)
        self.constant_violation = float(np.max(-g[const], initial=0.0))
        G, g = G[~const], g[~const]
        # the same temperature difference appears at the end of one unit and the start of the next
        if len(g):
            _, first = np.unique(np.round(np.column_stack([G, g]), 12), axis=0, return_index=True)
            keep = np.sort(first)
            G, g = G[keep], g[keep]
        self.G, self.g = G, g
        upper = [min(p.hot_duty[i], p.cold_duty[j]) for (i, j, _) in self.matches] + \
            [p.hot_duty[key[1]] if key[0] in ("cool", "precool") else p.cold_duty[key[1]] for key in extra]
        # generous upper bounds: the balances bound every load already, and bounds that coincide with an
        # equality (a stream's only unit) make the refinement's subproblems degenerate
        self.bounds = [(self.qmin, 4.0 * max(ub, self.qmin)) for ub in upper]

    # ------------------------------------------------------------------------------------------
    def cost(self, x: np.ndarray, grad: bool = True):
        q = self.duty.c + self.duty.m @ x
        a = self.d1.c + self.d1.m @ x
        b = self.d2.c + self.d2.m @ x
        a = np.maximum(a, 1e-9)
        b = np.maximum(b, 1e-9)
        lm, ga, gb = log_mean_and_gradient(a, b)
        qp = np.maximum(q, 1e-12)
        area = qp / (self.u * lm)
        cap = self.fixed + self.per_area * area ** self.exponent
        total = float(cap.sum() + (self.price * q).sum())
        if not grad:
            return total
        dcap = self.per_area * self.exponent * np.maximum(area, 1e-12) ** (self.exponent - 1.0)
        # dA/dx = [dQ/dx - Q/lm (ga da/dx + gb db/dx)] / (U lm)
        coef_q = dcap / (self.u * lm) + self.price
        coef_a = -dcap * area / lm * ga
        coef_b = -dcap * area / lm * gb
        g = self.duty.m.T @ coef_q + self.d1.m.T @ coef_a + self.d2.m.T @ coef_b
        return total, g

    def feasible_point(self, objective: np.ndarray | None = None):
        """A vertex of the polytope (by default the one of least utility cost), or None if empty."""
        c = objective if objective is not None else self.duty.m.T @ self.price
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = linprog(c, A_ub=-self.G if len(self.G) else None, b_ub=self.g if len(self.g) else None,
                          A_eq=self.eq_all.m if len(self.eq_all.c) else None,
                          b_eq=-self.eq_all.c if len(self.eq_all.c) else None, bounds=self.bounds, method="highs")
        if res.status != 0:
            return None
        return np.clip(res.x, [b[0] for b in self.bounds], [b[1] for b in self.bounds])

    def violation(self, x: np.ndarray) -> float:
        v = 0.0
        if len(self.g):
            v = max(v, float(np.max(-(self.G @ x + self.g), initial=0.0)))
        if len(self.eq_all.c):
            v = max(v, float(np.max(np.abs(self.eq_all.m @ x + self.eq_all.c), initial=0.0)))
        return v


def log_mean_and_gradient(a: np.ndarray, b: np.ndarray):
    """Exact log mean of positive a, b and its partial derivatives (series where a ≈ b).

    .. math:: \\Delta T_{lm} = \\frac{a - b}{\\ln(a/b)}, \\qquad
              \\frac{\\partial \\Delta T_{lm}}{\\partial a} = \\frac{\\ln r - 1 + 1/r}{\\ln^2 r},\\ r = a/b

    and symmetrically in b; for |a/b − 1| < 1e-5 the series (a + b)/2·(1 − e²/12) with e = (a − b)/b and
    ∂/∂a = 1/2 − e/6 (the same formula as :func:`heatloom.equipment.sizing.log_mean`, written for speed).
    """
    r = a / b
    close = np.abs(r - 1.0) < 1e-5
    rs = np.where(close, 2.0, r)
    lnr = np.log(rs)
    e = r - 1.0
    lm = np.where(close, 0.5 * (a + b) * (1.0 - e * e / 12.0), (a - b) / np.where(close, 1.0, lnr))
    ga = np.where(close, 0.5 - e / 6.0, (lnr - 1.0 + 1.0 / rs) / lnr ** 2)
    # by symmetry with s = b/a: ln s = −ln r
    gb = np.where(close, 0.5 + e / 6.0, (-lnr - 1.0 + rs) / lnr ** 2)
    return lm, ga, gb


@dataclass(frozen=True)
class TopologySolution:
    """Optimised loads of one topology and its exact total annual cost [money/year].

    ``fractions`` is None under isothermal mixing; after :func:`polish_splits` it maps ("hot", match) or
    ("cold", match) to the branch's share of the stream's flow [-].
    """

    topology: Topology
    x: np.ndarray
    tac: float
    duties: tuple[float, ...]
    keys: tuple
    fractions: dict | None = field(default=None, compare=False)


def stop_at(deadline: float | None):
    """A ``scipy.optimize.minimize`` callback that ends the iterations once ``deadline`` (a
    ``time.monotonic`` reading [s]) has passed, or None without one: a refinement started just before the
    end of a run must not run on past it."""
    if deadline is None:
        return None

    def callback(*_args):
        if time.monotonic() > deadline:
            raise StopIteration
    return callback


def _refine(model: TopologyModel, x0: np.ndarray, max_iter: int, deadline: float | None = None) -> np.ndarray:
    """Minimise the exact cost over the polytope from ``x0``: SLSQP, and scipy's trust-constr if it fails;
    the iterations stop at ``deadline`` (see :func:`stop_at`).

    Loads are scaled by the largest stream duty, the cost by its starting value, and constraint rows to
    unit length (SLSQP's subproblem tolerances are absolute).
    """
    s = model.p.scale
    f0 = max(abs(model.cost(x0, grad=False)), 1.0)
    lo = np.array([b[0] for b in model.bounds]) / s
    hi = np.array([b[1] for b in model.bounds]) / s
    G, g = model.G * s, model.g
    E, e = model.eq.m * s, model.eq.c
    if len(g):
        norm = np.linalg.norm(G, axis=1)
        G, g = G / norm[:, None], g / norm
    if len(e):
        norm = np.linalg.norm(E, axis=1)
        E, e = E / norm[:, None], e / norm
    cons = []
    if len(g):
        cons.append({"type": "ineq", "fun": lambda y: G @ y + g, "jac": lambda y: G})
    if len(e):
        cons.append({"type": "eq", "fun": lambda y: E @ y + e, "jac": lambda y: E})

    def fun(y):
        f, gr = model.cost(y * s)
        return f / f0, gr * s / f0

    y0 = np.clip(x0 / s, lo, hi)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = minimize(fun, y0, jac=True, method="SLSQP", bounds=list(zip(lo, hi)), constraints=cons,
                       options={"maxiter": max_iter, "ftol": 1e-10}, callback=stop_at(deadline))
        if res.status not in (0, 9, 99) and res.nit <= 2:   # failed at once: a degenerate start
            lin = [LinearConstraint(G, -g, np.inf)] if len(g) else []
            lin += [LinearConstraint(E, -e, -e)] if len(e) else []
            res = minimize(fun, y0, jac=True, method="trust-constr", bounds=Bounds(lo, hi), constraints=lin,
                           options={"maxiter": max_iter, "gtol": 1e-8, "xtol": 1e-10}, callback=stop_at(deadline))
    return np.clip(res.x * s, lo * s, hi * s)


def _restore(model: TopologyModel, x: np.ndarray) -> np.ndarray | None:
    """Project a nearly feasible point onto the polytope (smallest L1 move, by LP), or None."""
    if model.violation(x) <= 1e-9:
        return x
    n = model.n
    # min Σ(u + v) s.t. constraints on x = x_k + u - v
    c = np.concatenate([np.zeros(n), np.ones(2 * n)])
    A_ub = np.hstack([-model.G, np.zeros((len(model.g), 2 * n))]) if len(model.g) else None
    A_eq = [np.hstack([np.eye(n), -np.eye(n), np.eye(n)])]
    b_eq = [x]
    if len(model.eq_all.c):
        A_eq.append(np.hstack([model.eq_all.m, np.zeros((len(model.eq_all.c), 2 * n))]))
        b_eq.append(-model.eq_all.c)
    bounds = list(model.bounds) + [(0, None)] * (2 * n)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = linprog(c, A_ub=A_ub, b_ub=model.g if A_ub is not None else None, A_eq=np.vstack(A_eq),
                      b_eq=np.concatenate(b_eq), bounds=bounds, method="highs")
    if res.status != 0:
        return None
    y = np.clip(res.x[:n], [b[0] for b in model.bounds], [b[1] for b in model.bounds])
    return y if model.violation(y) <= 1e-7 else None


def solve_topology(p: TacProblem, top: Topology, starts=(), *, max_iter: int = 200,
                   extra_vertex: bool = False, deadline: float | None = None) -> TopologySolution | None:
    """Minimise the exact TAC of one topology; None when no loads keep every unit's least approach.

    Parameters
    ----------
    p : TacProblem
    top : Topology
    starts : sequence of dict
        Starting guesses, each a mapping of unit key ((i, j, k) for a match, ("cool", i, level) or
        ("heat", j, level) for a utility variable) to a load [kW]; units not named start from the LP vertex.
    max_iter : int
        Iterations of the refinement per start [-].
    extra_vertex : bool
        Also start from the LP vertex of least utility cost.
    deadline : float, optional
        ``time.monotonic`` reading [s] past which the refinement stops where it is: the result is a
        feasible point (the refinement's, its projection or the start's), dearer than a full refinement
        would give, or None where none of them is feasible yet (streams of several segments, whose
        approaches are not linear).
    """
    if p.segmented:
        from .profiles import solve_segmented

        return solve_segmented(p, top, starts, max_iter=max_iter, extra_vertex=extra_vertex, deadline=deadline)
    model = TopologyModel(p, top)
    if model.constant_violation > 1e-9:
        return None
    if model.n == 0:
        if model.violation(np.zeros(0)) > 1e-7:
            return None
        x = np.zeros(0)
        return _solution(model, x)
    names = [m for m in model.matches] + [None] * (model.n - len(model.matches))
    lo = np.array([b[0] for b in model.bounds])
    hi = np.array([b[1] for b in model.bounds])
    vertex = None
    candidates = []
    for guess in starts:
        if all(key is not None and key in guess for key in names):
            candidates.append(np.clip(np.array([guess[key] for key in names], dtype=float), lo, hi))
            continue
        if vertex is None:
            vertex = model.feasible_point()
            if vertex is None:
                return None
        x0 = vertex.copy()
        for k, key in enumerate(names):
            if key is not None and key in guess:
                x0[k] = guess[key]
        candidates.append(x0)
    if not candidates or extra_vertex:
        if vertex is None:
            vertex = model.feasible_point()
            if vertex is None:
                return None
        candidates.append(vertex)
    best = None
    for x0 in candidates:
        # start on the polytope: project the guess (the LP also proves a topology infeasible)
        x0 = _restore(model, x0)
        if x0 is None:
            return None
        x = _refine(model, x0, max_iter, deadline)
        if model.violation(x) > 1e-9:
            x = _restore(model, x)
            if x is None:
                continue
        sol = _solution(model, x)
        if best is None or sol.tac < best.tac:
            best = sol
    return best


def _solution(model: TopologyModel, x: np.ndarray) -> TopologySolution:
    duties = model.duty.c + model.duty.m @ x
    return TopologySolution(model.top, x, model.cost(x, grad=False), tuple(float(d) for d in duties),
                            tuple(model.keys))


def branch_temperatures(p: TacProblem, model: TopologyModel, x: np.ndarray, fractions: dict | None):
    """Duties and terminal temperatures of every unit, with branch outlets set by the split fractions."""
    duty = model.duty.c + model.duty.m @ x
    hi, ho, ci, co = (getattr(model, name).c + getattr(model, name).m @ x
                      for name in ("hot_in", "hot_out", "cold_in", "cold_out"))
    if fractions:
        rows = {key: r for r, key in enumerate(model.keys)}
        for (side, key), f in fractions.items():
            r = rows[key]
            if side == "hot":
                ho[r] = hi[r] - duty[r] / (f * p.hot_cp[key[0]])
            else:
                co[r] = ci[r] + duty[r] / (f * p.cold_cp[key[1]])
    return duty, hi, ho, ci, co


def unit_costs(p: TacProblem, top: Topology, x: np.ndarray, fractions: dict | None = None) -> list[dict]:
    """Every unit of a solved topology with its kind, key, duty, terminal temperatures, U and split.

    Under isothermal mixing (``fractions`` None) a branch's share of the flow is its share of the stage's
    duty; otherwise the given fractions set the branch outlet temperatures.
    """
    model = TopologyModel(p, top)
    duty, hi, ho, ci, co = branch_temperatures(p, model, x, fractions)
    if p.segmented:   # enthalpy coordinates → temperatures on the process sides
        for r, (kind, key) in enumerate(zip(model.kinds, model.keys)):
            if kind is not UnitKind.HEATER:
                prof = p.hot_profiles[key[0] if kind is UnitKind.EXCHANGER else key[1]]
                hi[r], ho[r] = prof.temperature(hi[r]), prof.temperature(ho[r])
            if kind is not UnitKind.COOLER:
                prof = p.cold_profiles[key[1]]
                ci[r], co[r] = prof.temperature(ci[r]), prof.temperature(co[r])
    stage_hot, stage_cold = {}, {}
    for (i, j, k), q in zip(model.matches, x[:len(model.matches)]):
        stage_hot[i, k] = stage_hot.get((i, k), 0.0) + q
        stage_cold[j, k] = stage_cold.get((j, k), 0.0) + q
    out = []
    for r, (kind, key) in enumerate(zip(model.kinds, model.keys)):
        fh = fc = 1.0
        if kind is UnitKind.EXCHANGER:
            i, j, k = key
            fh = min(1.0, duty[r] / stage_hot[i, k])
            fc = min(1.0, duty[r] / stage_cold[j, k])
            if fractions:
                fh = fractions.get(("hot", key), fh)
                fc = fractions.get(("cold", key), fc)
        out.append({"kind": kind, "key": key, "duty": float(duty[r]), "hot_in": float(hi[r]),
                    "hot_out": float(ho[r]), "cold_in": float(ci[r]), "cold_out": float(co[r]),
                    "u": float(model.u[r]), "hot_fraction": float(fh), "cold_fraction": float(fc),
                    "price": float(model.price[r])})
    return out
