"""Free split fractions: the stage temperatures of a stagewise topology at non-isothermal mixing.

:func:`heatloom.network.tac.nlp.solve_topology` solves a topology with isothermal mixing (every branch of a
split leaves its stage at the stream's stage temperature), which keeps the model affine.  Here the flow
fractions of the branches are freed afterwards: the branches may leave a stage at different temperatures,
the mixed outlet stays where the loads put it, and SLSQP with exact gradients re-optimises loads and
fractions together (:func:`polish_splits`); the search does it for every topology it refines, and once more,
from random fractions too, for the cheapest networks at its end (:func:`polish_cheapest`).

References
----------
.. [1] Yee, T. F., Grossmann, I. E. (1990). Simultaneous optimization models for heat integration—II.
   Heat exchanger network synthesis. Computers & Chemical Engineering 14(10), 1165-1184.
   doi:10.1016/0098-1354(90)85010-8 (the superstructure; non-isothermal mixing is its general form).
"""

from __future__ import annotations

import time
import warnings
import zlib

import numpy as np
from scipy.optimize import minimize

from .nlp import (
    APPROACH_MARGIN,
    TopologyModel,
    TopologySolution,
    branch_temperatures,
    log_mean_and_gradient,
    stop_at,
)
from .problem import TacProblem

__all__ = ["FINAL_POLISH", "FINAL_POLISH_STARTS", "FINAL_POLISH_STREAMS", "polish_cheapest", "polish_splits"]


FINAL_POLISH = 5
"""The cheapest distinct networks with stream splits whose split fractions are polished once more at the end of
the search, from random fractions as well (:data:`FINAL_POLISH_STARTS`) [-]."""

FINAL_POLISH_STARTS = 4
"""Extra starts of that last polish: the same loads, flow fractions moved at random [-]."""

FINAL_POLISH_STREAMS = 20
"""Largest problem (process streams) given that last polish: its dense NLP grows with the number of units
and branches [-]."""


def polish_cheapest(p: TacProblem, ranked: list, deadline: float) -> list:
    """The solutions, cheapest first, after one more polish of the split fractions of the cheapest ones with
    stream splits (at most :data:`FINAL_POLISH`, problems of at most :data:`FINAL_POLISH_STREAMS` streams),
    from random fractions too (:func:`polish_splits` with :data:`FINAL_POLISH_STARTS` starts, seeded by the
    topology: the same result in any process), while ``deadline`` (a ``time.monotonic`` reading [s]) is
    not passed.

    Parameters
    ----------
    p : TacProblem
    ranked : list of TopologySolution
        Solutions, cheapest first.
    deadline : float
        [s], ``time.monotonic`` clock.
    """
    out, done = list(ranked), 0
    if len(p.hot_names) + len(p.cold_names) > FINAL_POLISH_STREAMS:
        return out
    for n, sol in enumerate(ranked):
        if done >= FINAL_POLISH or time.monotonic() > deadline:
            break
        if len({(i, k) for (i, _, k) in sol.topology.matches}) == len(sol.topology.matches) and \
                len({(j, k) for (_, j, k) in sol.topology.matches}) == len(sol.topology.matches):
            continue   # no stream split
        done += 1
        out[n] = polish_splits(p, sol, starts=FINAL_POLISH_STARTS,
                               seed=zlib.crc32(repr(sol.topology.key()).encode()), deadline=deadline)
    return sorted(out, key=lambda c: c.tac)


def polish_splits(p: TacProblem, sol: TopologySolution, *, max_iter: int = 100, starts: int = 0,
                  seed=None, deadline: float | None = None) -> TopologySolution:
    """Free the flow fractions of the stream splits (non-isothermal mixing) and re-optimise; keep the better.

    The optimisation starts from the solution's loads and fractions (those of isothermal mixing when it has
    none) and, with ``starts`` > 0, also from that many random feasible moves of the fractions (``seed``);
    no further start begins after ``deadline`` (a ``time.monotonic`` reading [s]), and a start running then
    stops at its current iterate (kept only if feasible and cheaper).

    The branches of a split stream may then leave a stage at different temperatures; the mixed stage
    outlet is unchanged (:math:`\\sum_b f_b(t_{in} - q_b/(f_b CP)) = t_{in} - \\sum_b q_b/CP`), so only the
    branch outlet temperatures, and with them the branch units' approaches and areas, depend on the
    fractions.  SLSQP with exact gradients over loads and fractions, the least approach (EMAT, or
    the sum of the sides' ΔTmin contributions) at both ends of every
    unit.  Returns ``sol`` itself when it has no split or nothing cheaper is found, and for streams of
    several segments (isothermal mixing only there).
    """
    if p.segmented:   # branch outlets in enthalpy coordinates: not handled here
        return sol
    model = TopologyModel(p, sol.topology)
    groups: dict = {}
    for key in model.matches:
        i, j, k = key
        groups.setdefault(("hot", i, k), []).append(key)
        groups.setdefault(("cold", j, k), []).append(key)
    groups = {g: keys for g, keys in groups.items() if len(keys) > 1}
    if not groups or model.n == 0:
        return sol
    branches = [(g[0], key) for g, keys in groups.items() for key in keys]
    n, s = model.n, p.scale
    col = {key: c for c, key in enumerate(model.matches)}
    f0 = []
    for g, keys in groups.items():   # the solution's own fractions, else those of isothermal mixing
        if sol.fractions and all((g[0], key) in sol.fractions for key in keys):
            f0 += [sol.fractions[g[0], key] for key in keys]
        else:
            total = sum(sol.x[col[key]] for key in keys)
            f0 += [sol.x[col[key]] / total for key in keys]
    z0 = np.concatenate([sol.x / s, f0])
    need = model.need + APPROACH_MARGIN
    tac0 = max(abs(sol.tac), 1.0)

    def unpack(z):
        return z[:n] * s, dict(zip(branches, z[n:]))

    def state(z):
        x, fr = unpack(z)
        duty, hi, ho, ci, co = branch_temperatures(p, model, x, fr)
        return x, duty, hi - co, ho - ci

    def fun(z):
        _, q, a, b = state(z)
        a, b = np.maximum(a, 1e-9), np.maximum(b, 1e-9)
        lm = log_mean_and_gradient(a, b)[0]
        area = np.maximum(q, 1e-12) / (model.u * lm)
        return float((model.fixed + model.per_area * area ** model.exponent).sum() + (model.price * q).sum()) / tac0

    rows = {key: r for r, key in enumerate(model.keys)}
    hot_rows = np.array([rows[key] for side, key in branches if side == "hot"], dtype=int)
    cold_rows = np.array([rows[key] for side, key in branches if side == "cold"], dtype=int)
    floor, ceiling = p.branch_limits()   # the targets, or with branch overshoot the problem's limits
    hot_floor = np.array([floor[key[0]] for side, key in branches if side == "hot"])
    cold_ceiling = np.array([ceiling[key[1]] for side, key in branches if side == "cold"])

    def ineq(z):
        # approaches, the linear constraints, and every branch outlet inside its limits
        x, fr = unpack(z)
        q, hi, ho, ci, co = branch_temperatures(p, model, x, fr)
        return np.concatenate([hi - co - need, ho - ci - need, model.G @ x + model.g, ho[hot_rows] - hot_floor,
                               cold_ceiling - co[cold_rows]])

    members = [[branches.index((g[0], key)) for key in keys] for g, keys in groups.items()]

    def eq(z):
        x = z[:n] * s
        sums = [z[n + np.array(m)].sum() - 1.0 for m in members]
        return np.concatenate([model.eq.m @ x + model.eq.c, sums])

    nb = len(branches)
    wide = {name: np.hstack([getattr(model, name).m * s, np.zeros((len(model.keys), nb))])
            for name in ("duty", "hot_in", "hot_out", "cold_in", "cold_out")}
    branch_rows = [(b, rows[key], side, p.hot_cp[key[0]] if side == "hot" else p.cold_cp[key[1]])
                   for b, (side, key) in enumerate(branches)]

    def derivatives(z):
        """The duties and temperatures and their derivatives with respect to z (exact: the branch outlets
        t_in ∓ q/(f·CP) are the only nonlinear terms)."""
        x, fr = unpack(z)
        q, hi, ho, ci, co = branch_temperatures(p, model, x, fr)
        dq, dhi, dci = wide["duty"], wide["hot_in"], wide["cold_in"]
        dho, dco = wide["hot_out"].copy(), wide["cold_out"].copy()
        for b, r, side, cp in branch_rows:
            f = z[n + b]
            if side == "hot":
                dho[r] = dhi[r] - dq[r] / (f * cp)
                dho[r, n + b] += q[r] / (f * f * cp)
            else:
                dco[r] = dci[r] + dq[r] / (f * cp)
                dco[r, n + b] -= q[r] / (f * f * cp)
        return (q, hi, ho, ci, co), (dq, dhi, dho, dci, dco)

    def fun_gradient(z):
        (q, hi, ho, ci, co), (dq, dhi, dho, dci, dco) = derivatives(z)
        a, b = hi - co, ho - ci
        lm, ga, gb = log_mean_and_gradient(np.maximum(a, 1e-9), np.maximum(b, 1e-9))
        qq = np.maximum(q, 1e-12)
        area = qq / (model.u * lm)
        dqq = np.where((q > 1e-12)[:, None], dq, 0.0)
        dlm = ga[:, None] * np.where((a > 1e-9)[:, None], dhi - dco, 0.0) + \
            gb[:, None] * np.where((b > 1e-9)[:, None], dho - dci, 0.0)
        darea = area[:, None] * (dqq / qq[:, None] - dlm / lm[:, None])
        slope = model.per_area * model.exponent * np.maximum(area, 1e-300) ** (model.exponent - 1.0)
        return (slope @ darea + model.price @ dqq) / tac0

    def ineq_jacobian(z):
        _, (dq, dhi, dho, dci, dco) = derivatives(z)
        lin = np.hstack([model.G * s, np.zeros((model.G.shape[0], nb))])
        return np.vstack([dhi - dco, dho - dci, lin, dho[hot_rows], -dco[cold_rows]])

    eq_jac = np.vstack([np.hstack([model.eq.m * s, np.zeros((model.eq.m.shape[0], nb))]),
                        *[np.array([np.r_[np.zeros(n), np.isin(np.arange(nb), m).astype(float)]]) for m in members]])

    bounds = [(lo / s, hi / s) for lo, hi in model.bounds] + [(1e-3, 1.0)] * len(branches)
    lo_b, hi_b = [b[0] for b in bounds], [b[1] for b in bounds]
    guesses = [z0]
    rng = np.random.default_rng(seed)
    for _ in range(20 * starts):   # the same loads, flow fractions moved at random (each group's sum is 1)
        if len(guesses) > starts:
            break
        z = z0.copy()
        w = rng.uniform(0.1, 0.6)
        for m in members:
            idx = n + np.array(m)
            z[idx] = (1 - w) * z0[idx] + w * rng.dirichlet(np.ones(len(m)))
        z = np.clip(z, lo_b, hi_b)
        if np.min(ineq(z), initial=0.0) >= 0.0:   # feasible starts only
            guesses.append(z)

    best_z, best_f = None, np.inf
    for n_start, z_start in enumerate(guesses):
        if n_start and deadline is not None and time.monotonic() > deadline:
            break
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = minimize(fun, z_start, jac=fun_gradient, method="SLSQP", bounds=bounds,
                           constraints=[{"type": "ineq", "fun": ineq, "jac": ineq_jacobian},
                                        {"type": "eq", "fun": eq, "jac": lambda _z: eq_jac}],
                           options={"maxiter": max_iter, "ftol": 1e-12}, callback=stop_at(deadline))
        z = np.clip(res.x, lo_b, hi_b)
        if np.min(ineq(z), initial=0.0) < -1e-8 or np.max(np.abs(eq(z)), initial=0.0) > 1e-8:
            continue
        if fun(z) < best_f:
            best_z, best_f = z, fun(z)
    if best_z is None:
        return sol
    z = best_z
    x, fr = unpack(z)
    tac = fun(z) * tac0
    if not tac < sol.tac:
        return sol
    duties = branch_temperatures(p, model, x, fr)[0]
    return TopologySolution(sol.topology, x, tac, tuple(float(d) for d in duties), tuple(model.keys),
                            {k: float(v) for k, v in fr.items()})
