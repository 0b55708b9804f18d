"""Networks beyond the stagewise form: splits that keep utility units on their branches, utilities anywhere.

A :class:`Layout` gives every stream as a sequence of *blocks* from its supply end: a block is a single
unit, or a split whose branches each carry a sequence of units (possibly none: a bypass) before they mix
again.  A utility unit may sit in any block, on a branch too (e.g. a cooler in parallel with an exchanger on
a split hot stream).  This contains every stagewise topology (:class:`heatloom.network.tac.nlp.Topology`)
with isothermal or non-isothermal mixing, and networks that form cannot express: a utility unit that is
not at a stream end, a branch that keeps several units in series, a bypass.  The fixed-structure NLP
(:func:`solve_layout`) handles all of them; the search (:func:`heatloom.network.tac.layout_search.restructure`)
keeps to the layouts a
:class:`~heatloom.network.structure.Network` and its units table can carry (:func:`representable`: at
least one unit on every branch of a split, no bypass; one order of the units along every stream,
:func:`layout_stages`, with a split's branches starting at one stage where the orders allow it).

With the unit duties and the flow fractions of the branches as variables every temperature follows along
its stream: a unit on a branch of fraction f changes it by q/(f·CP), and the mixed outlet of a block is the
block's inlet changed by the block's total duty over CP.  :func:`solve_layout` minimises the exact total
annual cost (exact LMTD, counter-current, 1/U = 1/h_hot + 1/h_cold, the problem's cost laws) by SLSQP with
exact gradients, subject to the least approach (:meth:`TacProblem.need`) at both ends of every unit, every
branch temperature inside its stream's range, each stream's duty and each split's fractions adding up to
one; a start that breaks the constraints is first moved to a feasible point (least squares of the
violations).  Every temperature is c + M1·q + M2·(q/f) with matrices built once per layout (the walk
along the streams), so the temperatures and their derivatives are a few matrix products.
The search over layouts (moves, kicks, random restarts) is :mod:`heatloom.network.tac.layout_search`.

Streams of several segments are not handled (their stage "temperatures" are enthalpy coordinates).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize

from ...equipment.sizing import log_mean
from ...errors import InfeasibleError
from ...model.costs import CostSettings, UnitKind
from ..streamorder import unordered_streams
from ..structure import Cooler, Exchanger, Heater, Network, check_network
from .nlp import TopologySolution, log_mean_and_gradient, unit_costs
from .problem import TacProblem
from .starts import contracted_levels

__all__ = ["Layout", "LayoutSolution", "layout_from_solution", "solve_layout", "layout_units", "representable",
           "layout_stages", "network_from_layout"]

_KIND = {"x": UnitKind.EXCHANGER, "cool": UnitKind.COOLER, "heat": UnitKind.HEATER}


@dataclass(frozen=True)
class Layout:
    """Units and their places along the streams.

    ``units`` are ("x", i, j) for an exchanger between hot stream i and cold stream j, ("cool", i, level)
    and ("heat", j, level) for utility units (levels as in :class:`TacProblem`); a unit is named by its
    index in ``units``.  ``hot[i]`` / ``cold[j]`` is the stream's path from its supply end: a tuple of
    blocks, a block a tuple of branches, a branch a tuple of unit indices (a block of one branch holds one
    unit; a split has two or more branches, at most one of them empty: a bypass).
    """

    units: tuple
    hot: tuple
    cold: tuple

    def key(self) -> tuple:
        """A hashable form in which the order of the branches of a split does not count."""
        def canon(paths):
            return tuple(tuple(tuple(sorted(tuple(self.units[u] + (u,) for u in br) for br in block))
                               for block in path) for path in paths)
        return canon(self.hot), canon(self.cold)

    def splits(self) -> list[tuple[str, int, int]]:
        """(side, stream, block) of every split, in the order of the fraction variables."""
        return [(side, s, b) for side, paths in (("hot", self.hot), ("cold", self.cold))
                for s, path in enumerate(paths) for b, block in enumerate(path) if len(block) > 1]


@dataclass(frozen=True)
class LayoutSolution:
    """Optimised duties [kW] and branch fractions [-] of a layout and its exact TAC [money/year]."""

    layout: Layout
    duties: np.ndarray
    fractions: np.ndarray
    tac: float


class _Model:
    """Temperatures, cost and constraints of a layout as functions of z = (duties / scale, fractions)."""

    def __init__(self, p: TacProblem, lay: Layout):
        self.p, self.lay = p, lay
        self.n = len(lay.units)
        self.splits = lay.splits()
        self.nf = sum(len((lay.hot if sd == "hot" else lay.cold)[s][b]) for sd, s, b in self.splits)
        u, fixed, per_area, expo, price, need = [], [], [], [], [], []
        for key in lay.units:
            kind = _KIND[key[0]]
            if key[0] == "x":
                u.append(1.0 / (1.0 / p.hot_h[key[1]] + 1.0 / p.cold_h[key[2]]))
                price.append(0.0)
                need.append(p.need(key[1], key[2]))
            else:
                util = (p.cool_levels if key[0] == "cool" else p.heat_levels)[key[2]]
                h = p.hot_h[key[1]] if key[0] == "cool" else p.cold_h[key[1]]
                u.append(1.0 / (1.0 / h + 1.0 / util.film_coefficient))
                price.append(util.cost)
                need.append(p.need(key[1], None) if key[0] == "cool" else p.need(None, key[1]))
            law = p.laws[kind]
            fixed.append(law[0])
            per_area.append(law[1])
            expo.append(law[2])
        self.u, self.fixed, self.per_area, self.expo = (np.array(v, dtype=float) for v in (u, fixed, per_area, expo))
        self.price, self.need = np.array(price, dtype=float), np.array(need, dtype=float)
        self.scale = p.scale
        # utility sides are constant
        self.const = np.full((self.n, 4), np.nan)
        for k, key in enumerate(lay.units):
            if key[0] == "cool":
                util = p.cool_levels[key[2]]
                self.const[k, 2:] = util.supply_temperature, util.target_temperature
            elif key[0] == "heat":
                util = p.heat_levels[key[2]]
                self.const[k, :2] = util.supply_temperature, util.target_temperature
        self.members = []   # per stream: unit indices (for the duty balances)
        for paths in (lay.hot, lay.cold):
            for path in paths:
                self.members.append([x for block in path for br in block for x in br])
        self._last: dict = {}   # the last point of _forward and its result
        self._walk()
        self.eq_matrix, self.eq_rhs = self._balances()
        # every required unit kind's total duty >= its least load: R·z >= r
        required = sorted(p.required & set(lay.units), key=str)
        self.req_matrix = np.zeros((len(required), self.n + self.nf))
        for row, kind in enumerate(required):
            self.req_matrix[row, [k for k, key in enumerate(lay.units) if key == kind]] = 1.0
        self.req_rhs = np.array([p.least_load(kind) / self.scale for kind in required])

    def _walk(self) -> None:
        """Every temperature as c + M1·q + M2·(q / f_unit), once per layout: the walk along each stream
        (a unit on a branch of fraction f changes the branch by q/(f·CP); after the mixer the stream has
        changed by the block's total duty over CP).  Rows 0..4n−1 are the terminal temperatures (unit k's
        hot in, hot out, cold in, cold out at rows 4k..4k+3; utility sides constant), then one row per
        branch outlet.  ``on[side][x]`` is the fraction variable of the branch unit x sits on along its hot
        (0) or cold (1) stream (−1: the whole stream); M2 is kept per side (a unit may sit on a branch of
        both its streams)."""
        p, n = self.p, self.n
        rows_c, rows_1, rows_2, branch = [], [], [], []
        slot: dict[tuple[int, int], tuple] = {}
        self.on = np.full((2, n), -1)
        fi = 0
        for side, paths in (("hot", self.lay.hot), ("cold", self.lay.cold)):
            sign, col = (-1.0, 0) if side == "hot" else (1.0, 2)
            at = 0 if side == "hot" else 1
            for s, path in enumerate(paths):
                cp = (p.hot_cp if side == "hot" else p.cold_cp)[s]
                c, m1 = float((p.hot_in if side == "hot" else p.cold_in)[s]), np.zeros(n)
                for block in path:
                    split = len(block) > 1
                    for br in block:
                        l1, l2 = m1.copy(), np.zeros(n)   # along the branch
                        for x in br:
                            if split:
                                self.on[at, x] = self.n + fi
                            inlet = (c, l1.copy(), l2.copy())
                            (l2 if split else l1)[x] += sign / cp
                            slot[(x, col)], slot[(x, col + 1)] = inlet, (c, l1.copy(), l2.copy())
                            if split:   # a single unit's outlet is a mixed stream temperature
                                branch.append(((side, s), (c, l1.copy(), l2.copy())))
                        fi += split
                    for x in (x for br in block for x in br):
                        m1[x] += sign / cp
        for k in range(n):
            for col in range(4):
                c, m1, m2 = slot.get((k, col), (self.const[k, col], np.zeros(n), np.zeros(n)))
                rows_c.append(c)
                rows_1.append(m1)
                rows_2.append(m2)
        self.branch_of = [b[0] for b in branch]
        for _, (c, m1, m2) in branch:
            rows_c.append(c)
            rows_1.append(m1)
            rows_2.append(m2)
        self.c0 = np.array(rows_c)
        self.m1 = np.array(rows_1).reshape(len(rows_c), n)
        m2 = np.array(rows_2).reshape(len(rows_c), n)
        hot_row = np.array([col < 2 for _ in range(n) for col in range(4)] + [side == "hot" for side, _ in self.branch_of])
        self.m2 = (m2 * hot_row[:, None], m2 * ~hot_row[:, None])
        # range rows: a hot branch outlet stays above its floor, a cold one below its ceiling (the stream's
        # target, or with branch overshoot the problem's limits: TacProblem.branch_limits)
        sign = np.array([1.0 if side == "hot" else -1.0 for side, _ in self.branch_of])
        floor, ceiling = p.branch_limits()
        bound = np.array([floor[s] if side == "hot" else ceiling[s] for side, s in self.branch_of])
        self.range_sign, self.range_bound = sign, bound

    def temperatures(self, z):
        """(n, 4) terminal temperatures (hot in, hot out, cold in, cold out) and the branch temperatures
        with their stream's (side, index), for the range constraints."""
        t, _, tb, _ = self._forward(z, False)
        return t, [(side, s, float(v)) for (side, s), v in zip(self.branch_of, tb)]

    def _forward(self, z, grad: bool):
        """The temperatures and, with ``grad``, their derivatives with respect to z: (t (n, 4), dt (n, 4,
        len(z)), branch outlet temperatures, their derivatives).  The last point's result is kept: the
        optimisers ask for the cost, the constraints and their derivatives at one point in turn."""
        key = np.asarray(z, dtype=float).tobytes()
        hit = self._last.get(key)
        if hit is not None and (hit[1] is not None or not grad):
            return hit
        out = self._compute(z, grad)
        self._last = {key: out}
        return out

    def _compute(self, z, grad: bool):
        """:meth:`_forward` without the kept point."""
        n = self.n
        q = z[:n] * self.scale
        fs = []
        for on in self.on:
            f = np.ones(n)
            split = on >= 0
            f[split] = np.maximum(z[on[split]], 1e-9)
            fs.append(f)
        flat = self.c0 + self.m1 @ q + sum(m2 @ (q / f) for m2, f in zip(self.m2, fs))
        t, tb = flat[:4 * n].reshape(n, 4), flat[4 * n:]
        if not grad:
            return t, None, tb, None
        d = np.zeros((flat.size, z.size))
        d[:, :n] = (self.m1 + sum(m2 / f for m2, f in zip(self.m2, fs))) * self.scale
        for on, m2, f in zip(self.on, self.m2, fs):
            for x in np.flatnonzero(on >= 0):
                if z[on[x]] > 1e-9:
                    d[:, on[x]] -= m2[:, x] * q[x] / f[x] ** 2
        return t, d[:4 * n].reshape(n, 4, z.size), tb, d[4 * n:]

    def _areas(self, z, grad: bool):
        """Unit loads [kW], areas [m²] and, with ``grad``, the areas' derivatives with respect to z."""
        q = np.maximum(z[:self.n] * self.scale, 1e-12)
        t, dt, _, _ = self._forward(z, grad)
        a = np.maximum(t[:, 0] - t[:, 3], 1e-9)
        b = np.maximum(t[:, 1] - t[:, 2], 1e-9)
        lm, ga, gb = log_mean_and_gradient(a, b)
        area = q / (self.u * lm)
        if not grad:
            return q, area, None
        da = np.where((t[:, 0] - t[:, 3] > 1e-9)[:, None], dt[:, 0] - dt[:, 3], 0.0)
        db = np.where((t[:, 1] - t[:, 2] > 1e-9)[:, None], dt[:, 1] - dt[:, 2], 0.0)
        dlm = ga[:, None] * da + gb[:, None] * db
        dq = np.zeros((self.n, z.size))
        dq[np.arange(self.n), np.arange(self.n)] = np.where(z[:self.n] * self.scale > 1e-12, self.scale, 0.0)
        darea = area[:, None] * (dq / q[:, None] - dlm / lm[:, None])
        return q, area, (dq, darea)

    def cost(self, z) -> float:
        q, area, _ = self._areas(z, False)
        return float((self.fixed + self.per_area * area ** self.expo).sum() + (self.price * q).sum())

    def cost_gradient(self, z) -> np.ndarray:
        """∂cost/∂z, exact (the derivative of :meth:`cost`)."""
        q, area, (dq, darea) = self._areas(z, True)
        slope = self.per_area * self.expo * np.maximum(area, 1e-300) ** (self.expo - 1.0)
        return slope @ darea + self.price @ dq

    def ineq(self, z) -> np.ndarray:
        t, _, tb, _ = self._forward(z, False)
        return np.concatenate([t[:, 0] - t[:, 3] - self.need, t[:, 1] - t[:, 2] - self.need,
                               self.range_sign * (tb - self.range_bound), self.req_matrix @ z - self.req_rhs])

    def ineq_jacobian(self, z) -> np.ndarray:
        """∂ineq/∂z, exact (rows as :meth:`ineq`)."""
        _, dt, _, db = self._forward(z, True)
        return np.vstack([dt[:, 0] - dt[:, 3], dt[:, 1] - dt[:, 2], self.range_sign[:, None] * db,
                          self.req_matrix])

    def _balances(self) -> tuple[np.ndarray, np.ndarray]:
        """(E, e) of the linear equalities E·z = e: each stream's duty (scaled), each split's fractions
        adding up to 1."""
        p, size = self.p, self.n + self.nf
        rows, rhs = [], []
        for m, d in zip(self.members, np.concatenate([p.hot_duty, p.cold_duty])):
            r = np.zeros(size)
            r[m] = 1.0
            rows.append(r)
            rhs.append(d / self.scale)
        fi = 0
        for sd, s, b in self.splits:
            k = len((self.lay.hot if sd == "hot" else self.lay.cold)[s][b])
            r = np.zeros(size)
            r[self.n + fi:self.n + fi + k] = 1.0
            rows.append(r)
            rhs.append(1.0)
            fi += k
        return np.array(rows).reshape(len(rows), size), np.array(rhs)

    def eq(self, z) -> np.ndarray:
        return self.eq_matrix @ z - self.eq_rhs

    def eq_jacobian(self, z) -> np.ndarray:
        """∂eq/∂z (constant: the balances and the fraction sums are linear)."""
        return self.eq_matrix


def solve_layout(p: TacProblem, lay: Layout, starts, *, max_iter: int = 200) -> LayoutSolution | None:
    """The duties and fractions of lowest exact TAC of a layout from the given starts; None if none is feasible.

    Parameters
    ----------
    p : TacProblem
    lay : Layout
    starts : sequence of (duties, fractions)
        Starting guesses: a duty per unit [kW] and a fraction per branch of every split, in
        :meth:`Layout.splits` order [-].
    max_iter : int
        SLSQP iterations per start [-].

    Examples
    --------
    Invented data: one hot stream split between an exchanger and a cooler in parallel.

    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> from heatloom.model.costs import CostSettings
    >>> from heatloom.network.tac.problem import make_problem
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 100], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> u = [Utility("steam", 180, 179, 120.0, UtilityKind.HOT, 3.0), Utility("water", 15, 25, 10.0, None, 2.0)]
    >>> p = make_problem(s, u, CostSettings(), 5.0)
    >>> lay = Layout((("x", 0, 0), ("cool", 0, 0)), ((((0,), (1,)),),), ((((0,),),),))
    >>> sol = solve_layout(p, lay, [((140.0, 80.0), (0.6, 0.4))])
    >>> [round(float(q), 6) for q in sol.duties], bool(abs(sum(sol.fractions) - 1) < 1e-8)
    ([140.0, 80.0], True)
    """
    if p.segmented:
        return None
    m = _Model(p, lay)
    n, s = m.n, m.scale
    bounds = [(1e-5, 4.0)] * n + [(1e-3, 1.0)] * m.nf
    lo, hi = np.array([b[0] for b in bounds]), np.array([b[1] for b in bounds])
    cons = [{"type": "ineq", "fun": m.ineq, "jac": m.ineq_jacobian}, {"type": "eq", "fun": m.eq, "jac": m.eq_jacobian}]

    def violation(z):
        g = np.minimum(m.ineq(z), 0.0)
        e = m.eq(z)
        return float(g @ g / 100.0 + 100.0 * e @ e)

    def violation_gradient(z):
        g = np.minimum(m.ineq(z), 0.0)
        return g @ m.ineq_jacobian(z) / 50.0 + 200.0 * m.eq(z) @ m.eq_jacobian(z)

    def feasible(z):
        return np.min(m.ineq(z), initial=0.0) >= -1e-7 and np.max(np.abs(m.eq(z)), initial=0.0) <= 1e-8

    best = None
    for duties, fractions in starts:
        z = np.clip(np.concatenate([np.asarray(duties, dtype=float) / s, np.asarray(fractions, dtype=float)]), lo, hi)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            if violation(z) > 1e-12:
                z = minimize(violation, z, jac=violation_gradient, method="L-BFGS-B", bounds=bounds,
                             options={"maxiter": 500}).x
            f0 = max(m.cost(z), 1.0)
            res = minimize(lambda v, f0=f0: m.cost(v) / f0, z, jac=lambda v, f0=f0: m.cost_gradient(v) / f0,
                           method="SLSQP", bounds=bounds, constraints=cons, options={"maxiter": max_iter, "ftol": 1e-12})
        y = np.clip(res.x, lo, hi)
        for v in (y, z):   # the optimum, else the (feasible) start
            if v is None or not feasible(v):
                continue
            tac = m.cost(v)
            if best is None or tac < best.tac:
                best = LayoutSolution(lay, v[:n] * s, v[n:].copy(), tac)
    return best


def layout_from_solution(p: TacProblem, sol: TopologySolution) -> tuple[Layout, np.ndarray, np.ndarray]:
    """The layout of a stagewise solution, with its duties [kW] and branch fractions [-] (those of
    isothermal mixing where the solution has none): stages in order along each stream, utility units at the
    stream ends in the order of their levels (preheaters and precoolers at the supply ends)."""
    rows = unit_costs(p, sol.topology, sol.x, sol.fractions)
    units = []
    index = {}
    for r in rows:
        key = r["key"]
        index[key] = len(units)
        units.append(("x", key[0], key[1]) if len(key) == 3 and not isinstance(key[0], str) else
                     ("cool" if key[0] in ("cool", "precool") else "heat", key[1], key[2]))
    duties = np.array([r["duty"] for r in rows])
    frac_of = {("hot", index[r["key"]]): r["hot_fraction"] for r in rows}
    frac_of.update({("cold", index[r["key"]]): r["cold_fraction"] for r in rows})
    K = sol.topology.stages
    hot, cold = [], []
    for i in range(len(p.hot_names)):
        path = [((index["precool", i, lv],),) for (ii, lv) in sorted(sol.topology.precoolers) if ii == i]
        path += [tuple((index[m],) for m in sorted(sol.topology.matches) if m[0] == i and m[2] == k) for k in range(K)]
        path += [((index["cool", i, lv],),) for (ii, lv) in sorted(sol.topology.coolers) if ii == i]
        hot.append(tuple(b for b in path if b))
    for j in range(len(p.cold_names)):
        path = [((index["preheat", j, lv],),) for (jj, lv) in sorted(sol.topology.preheaters) if jj == j]
        path += [tuple((index[m],) for m in sorted(sol.topology.matches) if m[1] == j and m[2] == k)
                 for k in range(K - 1, -1, -1)]
        path += [((index["heat", j, lv],),) for (jj, lv) in sorted(sol.topology.heaters) if jj == j]
        cold.append(tuple(b for b in path if b))
    lay = Layout(tuple(units), tuple(hot), tuple(cold))
    fr = []
    for sd, s, b in lay.splits():
        block = (lay.hot if sd == "hot" else lay.cold)[s][b]
        share = np.array([frac_of[sd, br[0]] for br in block])
        fr += list(share / share.sum())
    return lay, duties, np.array(fr)


def layout_units(p: TacProblem, sol: LayoutSolution) -> list[dict]:
    """Every unit of a solved layout: kind, key, duty [kW], terminal temperatures [°C], U [kW/(m²·K)],
    branch fractions [-], utility price [money/(kW·year)] and stage (:func:`layout_stages`)."""
    m = _Model(p, sol.layout)
    z = np.concatenate([sol.duties / m.scale, sol.fractions])
    t, _ = m.temperatures(z)
    frac = {}
    fi = 0
    for sd, s, b in m.splits:
        block = (sol.layout.hot if sd == "hot" else sol.layout.cold)[s][b]
        for br in block:
            for x in br:
                frac[sd, x] = float(sol.fractions[fi])
            fi += 1
    stages = layout_stages(sol.layout)
    if stages is None:
        stages = layout_stages(sol.layout, heads_together=False)
    return [{"kind": _KIND[key[0]], "key": key, "duty": float(sol.duties[k]), "hot_in": float(t[k, 0]),
             "hot_out": float(t[k, 1]), "cold_in": float(t[k, 2]), "cold_out": float(t[k, 3]), "u": float(m.u[k]),
             "hot_fraction": frac.get(("hot", k), 1.0), "cold_fraction": frac.get(("cold", k), 1.0),
             "price": float(m.price[k]), "stage": None if stages is None else stages[k]}
            for k, key in enumerate(sol.layout.units)]


def representable(lay: Layout) -> bool:
    """Whether a :class:`heatloom.network.structure.Network` and its units table can carry the layout: every
    branch of a split carries at least one unit (no bypass: the network table cannot write one).  Units in
    series on a branch are written with a branch label (the ``hot_branch``/``cold_branch`` columns), and
    the order along the streams is recovered from the temperatures
    (:func:`heatloom.network.streamorder.stream_order`)."""
    return all(len(br) >= 1 for paths in (lay.hot, lay.cold) for path in paths for block in path
               if len(block) > 1 for br in block)


def layout_stages(lay: Layout, *, heads_together: bool = True) -> list[int] | None:
    """A stage per unit such that along every stream a unit met earlier from the hot end has a lower
    stage, and (with ``heads_together``) the first units from the hot end of the branches of one split
    share a stage (the further units of a branch with units in series follow it) [-]; None when the
    streams' orders conflict (or a split's branches cannot start at one stage).

    Without ``heads_together`` only the orders along the streams count: a split's branches may start at
    different stages when another stream puts one branch's first unit after a unit of the other branch
    (the network's order along the streams then comes from its temperatures alone,
    :func:`heatloom.network.streamorder.stream_order`; :func:`network_from_layout` checks that it does).

    Examples
    --------
    C split between A (from H1) and B (from H2); H2 meets D before B, and D also lies on A's branch, after
    A from C's hot end: the heads A and B cannot share a stage, the order along every stream still holds.

    >>> units = (("x", 0, 0), ("x", 1, 0), ("x", 1, 0))        # A, B, D
    >>> lay = Layout(units, ((((0,),),), (((2,),), ((1,),))), ((((2, 0), (1,)),),))
    >>> layout_stages(lay) is None, layout_stages(lay, heads_together=False)
    (True, [0, 2, 1])
    """
    together, before = [], []
    for paths, reverse in ((lay.hot, False), (lay.cold, True)):
        for path in paths:
            seq = list(reversed(path)) if reverse else list(path)
            for block in path:
                if len(block) > 1 and heads_together:   # the first unit from the hot end of each branch
                    together.append([br[-1] if reverse else br[0] for br in block if br])
                for br in block:
                    br = list(reversed(br)) if reverse else list(br)
                    before += zip(br, br[1:])
            for b1, b2 in zip(seq, seq[1:]):
                before += [(x, y) for br in b1 for x in br for br2 in b2 for y in br2]
    return contracted_levels(len(lay.units), together, before)


def network_from_layout(p: TacProblem, sol: LayoutSolution, streams, utilities, costs: CostSettings, *,
                        notes=(), solves=()) -> Network:
    """The network of a solved layout, sized with the exact LMTD and costed from its own temperatures.

    Units get the stages of :func:`layout_stages` (the branches of one split start at one stage where the
    orders along the streams allow it) and their branch's flow fraction.

    Raises
    ------
    InfeasibleError
        If the streams' orders conflict (no stages), a split's branches start at different stages and the
        temperatures do not give the order along its stream (:func:`heatloom.network.streamorder.unordered_streams`:
        the units table could not be read back), or the network fails :func:`check_network` with ΔTmin = EMAT
        (and with the streams' ΔTmin contributions where some are given).
    """
    if not representable(sol.layout):
        raise InfeasibleError("the layout has a split with a bypass, which a network's units table cannot carry")
    rows = layout_units(p, sol)
    if any(r["stage"] is None for r in rows):
        raise InfeasibleError("the layout's units cannot be put in one order along every stream")
    exchangers, heaters, coolers = [], [], []
    capital = operating = 0.0
    for d in rows:
        kind, key = d["kind"], d["key"]
        lm = float(log_mean(d["hot_in"] - d["cold_out"], d["hot_out"] - d["cold_in"]))
        area = d["duty"] / (d["u"] * lm)
        cost = float(costs.annual_capital_cost(area, kind))
        capital += cost
        common = {"duty": d["duty"], "area": area, "cost": cost, "u": d["u"], "lmtd": lm, "region": "whole",
                  "stage": d["stage"]}
        if kind is UnitKind.EXCHANGER:
            exchangers.append(Exchanger(p.hot_names[key[1]], p.cold_names[key[2]], hot_in=d["hot_in"],
                                        hot_out=d["hot_out"], cold_in=d["cold_in"], cold_out=d["cold_out"],
                                        hot_fraction=d["hot_fraction"], cold_fraction=d["cold_fraction"], **common))
        elif kind is UnitKind.HEATER:
            util = p.heat_levels[key[2]]
            operating += d["duty"] * util.cost
            heaters.append(Heater(p.cold_names[key[1]], util.name, cold_in=d["cold_in"], cold_out=d["cold_out"],
                                  utility_in=util.supply_temperature, utility_out=util.target_temperature,
                                  cold_fraction=d["cold_fraction"], **common))
        else:
            util = p.cool_levels[key[2]]
            operating += d["duty"] * util.cost
            coolers.append(Cooler(p.hot_names[key[1]], util.name, hot_in=d["hot_in"], hot_out=d["hot_out"],
                                  utility_in=util.supply_temperature, utility_out=util.target_temperature,
                                  hot_fraction=d["hot_fraction"], **common))
    exchangers.sort(key=lambda e: (e.stage, e.hot, e.cold))
    net = Network(tuple(exchangers), tuple(heaters), tuple(coolers), p.emat, capital_cost=capital,
                  operating_cost=operating, total_annual_cost=capital + operating, currency=costs.currency,
                  notes=tuple(notes), solves=tuple(solves))
    lost = unordered_streams(net) if layout_stages(sol.layout) is None else []
    if lost:
        raise InfeasibleError("the order of the units along stream(s) " + ", ".join(lost) + " follows neither from "
                              "the temperatures nor from the stages (a split's branches start at different stages)")
    check_network(net, streams, utilities, dt_min=p.emat, contributions=False)
    if p.has_contributions:
        check_network(net, streams, utilities, dt_min=p.emat, contributions=True)
    return net
