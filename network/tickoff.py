"""Tick-off placement: a heat-load distribution with few units, placed as it is made (no solver).

For one pinch region (the sides of :mod:`heatloom.network.placement`: each process stream's part in it and
each utility with its duty there), units are placed one at a time in the manner of the tick-off rule of
the pinch design method (Linnhoff & Hindmarsh 1983): every unit takes the whole remaining heat of one of
its two sides, so that side is "ticked off" and each unit removes a side from the problem — at most N − 1
units for N sides, Euler's minimum-units target, when every step is such a tick-off.

A unit is placed at an end of what is left of each of its sides (a hot stream from its inlet down or from
its outlet up, a cold stream from its inlet up or from its outlet down; a utility runs over its whole
range), so what is left of every stream stays one contiguous stretch and the units of a stream are in
series.  A step is accepted only when

* the unit keeps the sum of its sides' shifts (ΔTmin) at both ends and at every inner breakpoint, and
* the problem left over still meets the energy targets: its problem-table cascade, with the heat left to
  each utility, carries no negative heat past any shifted temperature (a hot utility's heat counted from
  its coldest shifted temperature down, a cold utility's demand from its hottest up, so every unit the
  cascade promises keeps ΔTmin over the utility's whole range).

Most searches start at the region's pinch, as the pinch design method does: while a stream touches the
pinch on its pinch side (above it a hot outlet, below it a cold outlet), a unit from the pinch out between
two streams touching it, or a branch of one of them over its whole stretch taking all of the other (the
splits the pinch design method makes when the heat capacity flow rate rule cannot be kept otherwise), and
when neither is accepted a branch from the pinch over the stretch that takes all of the other stream.
Among the accepted steps a required pair wins, then a step ticking off two sides at once, then the most
vertical one, which keeps driving force for the rest: the least temperature excess over ΔTmin at the
unit's two ends (summed, or the larger of the two), the least heat the cascade loses, or the least largest
share of the cascade's heat lost at one temperature (which spares the temperatures with little heat to
spare), optionally after the steps at the pinch ends of both sides (from the pinch out);
with a look-ahead, of the four best steps the first after which a tick-off step is still possible.  The search
runs with these measures, then with randomly perturbed ones while time is left, and keeps the placement
with the fewest units.  When no step is accepted, what is left is placed interval by interval
(:func:`heatloom.network.placement.interval_placement`), which always succeeds on a remainder that meets
the targets, or by the stagewise MILP of :func:`heatloom.network.placement.stage_model` when a solver
time is given and that gives fewer units.

Besides ticking a side off at its ends, a step may split a stream: a branch of one piece over the stretch
from one of its ends that keeps ΔTmin against the whole other piece takes all of that piece (the stream
splits of the pinch design method), or a branch over a piece's whole stretch.  When no such step is
accepted and the cascade of what is left carries no heat past some inner temperature (a pinch of the
remainder), the pieces crossing it are cut there and the search goes on; else a unit taking a part of the
smaller side (90 % down to 10 %) keeps the search going.  A branch
over part of a stretch and a partial unit leave as many pieces as before: each costs one unit above the
target.  With forbidden pairs a remainder whose cascade holds may still have no placement; the method
then returns no result and the caller uses another one.

The units of every search are merged before searches are compared (:func:`heatloom.network.merge.merge_units`:
a stream matched alternately with a few partners in small partial units becomes one branch per partner),
and with ``neighbourhood`` a share of the time goes to moves that take out the units of a few sides of
the best search and tick the holes off again (:func:`heatloom.network.neighbourhood.improve_units`); the
units placed for what the best search left join the moves when they can be written as rectangles on
their sides (:func:`heatloom.network.remainder.as_rectangles`), so that a search stuck early is repaired
move by move.
Searches and moves are compared by their units after the last step, which mixes the branches of a stream
that each end in the same utility (non-isothermally) into one utility unit where ΔTmin allows
(:func:`heatloom.network.utility_tails.join_utility_tails`): a hot stream split at a tight pinch below it
needs one cooler, not one per branch.  What is left to place, and its cascade, is
:class:`heatloom.network.pieces.Pieces`.

References
----------
.. [1] Linnhoff, B., Hindmarsh, E. (1983). The pinch design method for heat exchanger networks. Chemical
   Engineering Science 38(5), 745-763. doi:10.1016/0009-2509(83)80185-7
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .merge import merge_units, unit_approach
from .pieces import Pieces, cascade_feasible, cascade_points, cascade_residual, heat_above, shifted_offset
from .placement import PlacedUnit, Placement, Side
from .remainder import REMAINDER_MILP_SIDES, as_rectangles, place_remainder
from .solvers import SolveReport
from .utility_tails import join_utility_tails

__all__ = ["MAX_PIECE_PAIRS", "REMAINDER_MILP_SIDES", "TickOffResult", "cascade_feasible", "tick_off_placement",
           "tick_off_search"]


@dataclass(frozen=True)
class TickOffResult:
    """Outcome of :func:`tick_off_placement`.

    Attributes
    ----------
    placement : Placement
    ticked : int
        Units placed by ticking off a side [-].
    remainder : int
        Units placed interval by interval (or by the stagewise MILP) for what the tick-off steps left and
        that no neighbourhood move replaced [-] (0 when none was left).
    tries : int
        Searches run [-].
    reports : tuple of SolveReport
        The stagewise MILP of the remainder, when one ran.
    moves : int
        Neighbourhood moves tried on the best search (:func:`heatloom.network.neighbourhood.improve_units`) [-].
    """

    placement: Placement
    ticked: int
    remainder: int
    tries: int
    reports: tuple[SolveReport, ...] = ()
    moves: int = 0


MAX_PIECE_PAIRS = 1_000_000
"""Most (hot piece × cold piece) pairs a tick-off search steps over [-]; beyond it the search stops and
leaves the rest to the remainder placement.  Cuts at the inner pinches of what is left multiply the pieces:
on generated 40 and 60 streams with three steam levels, a pinch region searched as one subnetwork reached
thousands of pieces a side, one step took 44 s, and the design held 12.6 GB (the old code, without chunks,
ran out of 24 GB).  Searches that end in a placement stayed below 0.4 million pairs in those runs."""

_CHUNK_CELLS = 2_000_000
"""Largest (candidate pairs × cascade points) array :func:`_candidates` builds at once [-]: 16 MB of
floats; the pairs are checked in chunks of that size."""


# A step: (hot piece, cold piece, kind, load, excess, both off); kind (hot end, cold end) with end 0 the
# inlet and 1 the outlet, or "split hot" / "split cold" (a branch of that piece over its whole stretch
# ticks the other piece off).
def _candidates(state: Pieces, hot: list[int], cold: list[int], allowed, tol: float, points: np.ndarray,
                residual: np.ndarray, mode: str, deadline: float | None = None):
    """Every step of a mode ("ends", "split" or a partial share) that keeps ΔTmin at the unit's ends and
    the cascade at the current points.  The pairs are checked in chunks (:data:`_CHUNK_CELLS`); past
    ``deadline`` (a ``time.monotonic`` reading) the steps found so far are returned (a search whose pieces
    have multiplied can have millions of pairs: one call took 44 s on 40 streams)."""
    hot = [i for i in hot if state.left(i) > tol]
    cold = [j for j in cold if state.left(j) > tol]
    if not hot or not cold:
        return []
    sh = [state.of(i) for i in hot]
    sc = [state.of(j) for j in cold]
    H = np.array([heat_above(state.of(i), state.a[i], state.b[i], state.f[i], points) for i in hot])
    C = np.array([heat_above(state.of(j), state.a[j], state.b[j], state.f[j], points) for j in cold])
    lh = np.array([state.left(i) for i in hot])
    lc = np.array([state.left(j) for j in cold])
    fh = np.array([state.f[i] for i in hot])
    fc = np.array([state.f[j] for j in cold])
    uh = np.array([s.utility for s in sh])
    uc = np.array([s.utility for s in sc])
    ok_pair = np.array([[(x.name, y.name) in allowed and not (x.utility and y.utility) for y in sc] for x in sh])
    need = np.array([s.shift for s in sh])[:, None] + np.array([s.shift for s in sc])[None, :]
    heat = max(float(lh.sum()), tol)
    out = []

    def temps(pieces, sides, start, stop):
        t_in, t_out = np.empty(start.shape), np.empty(start.shape)
        for r, s in enumerate(sides):
            if s.utility:
                t_in[r], t_out[r] = (max(s.temperatures), min(s.temperatures)) if s.hot else \
                    (min(s.temperatures), max(s.temperatures))
                continue
            e, t = np.asarray(s.enthalpies), np.asarray(s.temperatures)
            t_in[r], t_out[r] = np.interp(start[r], e, t), np.interp(stop[r], e, t)
        return t_in, t_out

    def accept(kind, mask, hot_in, hot_out, cold_in, cold_out, take_h, take_c, Q, both):
        d1 = hot_in - cold_out - need
        d2 = hot_out - cold_in - need
        mask = mask & (d1 >= -1e-9) & (d2 >= -1e-9)
        if not mask.any():
            return
        all_rows, all_cols = np.nonzero(mask)
        step = max(1, _CHUNK_CELLS // max(points.size, 1))
        for start in range(0, all_rows.size, step):
            if start and deadline is not None and time.monotonic() >= deadline:
                return
            rows, cols = all_rows[start:start + step], all_cols[start:start + step]
            new = residual[None, :] - take_h(rows, cols) + take_c(rows, cols)
            good = new.min(axis=1) >= -tol
            loss = (residual.sum() - new.sum(axis=1)) / (points.size * heat)
            ratio = ((residual[None, :] - new) / (residual[None, :] + 1e-3 * heat)).max(axis=1)
            for k, r, c in zip(np.flatnonzero(good), rows[good], cols[good]):
                out.append((hot[r], cold[c], kind, float(Q[r, c]), (float(d1[r, c] + d2[r, c]),
                            float(max(d1[r, c], d2[r, c])), float(loss[k]), float(ratio[k])), bool(both[r, c])))

    a_h = np.array([state.a[i] for i in hot])
    b_h = np.array([state.b[i] for i in hot])
    a_c = np.array([state.a[j] for j in cold])
    b_c = np.array([state.b[j] for j in cold])
    if mode == "branch":
        return _branch_candidates(state, hot, cold, allowed, tol)
    if mode == "split":   # a branch of one piece over its whole stretch ticks off the other piece
        base = ok_pair & ~uh[:, None] & ~uc[None, :]
        hot_in, hot_out = temps(hot, sh, a_h, b_h)
        cold_in, cold_out = temps(cold, sc, a_c, b_c)
        HI, HO = hot_in[:, None] + 0 * need, hot_out[:, None] + 0 * need
        CI, CO = cold_in[None, :] + 0 * need, cold_out[None, :] + 0 * need
        share_c = lh[:, None] / lc[None, :]   # < 1: a branch of the cold piece takes all of the hot one
        m = base & (share_c < 1 - 1e-6)
        accept("split cold", m, HI, HO, CI, CO, lambda r, c: H[r], lambda r, c: share_c[r, c][:, None] * C[c],
               np.broadcast_to(lh[:, None], need.shape), np.zeros(need.shape, bool))
        share_h = lc[None, :] / lh[:, None]
        m = base & (share_h < 1 - 1e-6)
        accept("split hot", m, HI, HO, CI, CO, lambda r, c: share_h[r, c][:, None] * H[r], lambda r, c: C[c],
               np.broadcast_to(lc[None, :], need.shape), np.zeros(need.shape, bool))
        return out
    share = 1.0 if mode == "ends" else float(mode)
    Q = share * np.minimum(lh[:, None], lc[None, :])
    both = (share == 1.0) & (np.abs(lh[:, None] - lc[None, :]) <= tol)
    for eh in (0, 1):
        for ec in (0, 1):
            if deadline is not None and time.monotonic() >= deadline:
                return out
            mask = ok_pair & ~(uh[:, None] & (eh == 1)) & ~(uc[None, :] & (ec == 1))
            if not mask.any():
                continue
            dh = Q / fh[:, None]   # stretch of enthalpy at full flow the load takes
            dc = Q / fc[None, :]
            hs0 = a_h[:, None] + 0 * Q if eh == 0 else b_h[:, None] - dh
            hs1 = a_h[:, None] + dh if eh == 0 else b_h[:, None] + 0 * Q
            cs0 = a_c[None, :] + 0 * Q if ec == 0 else b_c[None, :] - dc
            cs1 = a_c[None, :] + dc if ec == 0 else b_c[None, :] + 0 * Q
            hot_in, hot_out = temps(hot, sh, hs0, hs1)
            ci, co = temps(cold, sc, cs0.T, cs1.T)
            cold_in, cold_out = ci.T, co.T

            def take_h(r, c, eh=eh):
                q = Q[r, c][:, None]
                return np.minimum(q, H[r]) if eh == 0 else np.maximum(0.0, H[r] - (lh[r][:, None] - q))

            def take_c(r, c, ec=ec):
                q = Q[r, c][:, None]
                return np.maximum(0.0, C[c] - (lc[c][:, None] - q)) if ec == 0 else np.minimum(q, C[c])

            accept((eh, ec), mask, hot_in, hot_out, cold_in, cold_out, take_h, take_c, Q, both)
    return out


def _branch_candidates(state: Pieces, hot: list[int], cold: list[int], allowed, tol: float):
    """Steps where a branch of one piece, over the stretch from one of its ends that keeps ΔTmin against
    the whole other piece, ticks that other piece off (the stream splits of the pinch design method)."""
    out = []
    for i in hot:
        hs = state.of(i)
        if hs.utility:
            continue
        a_i, b_i, f_i, l_i = state.a[i], state.b[i], state.f[i], state.left(i)
        hi_in, hi_out = hs.temperature(a_i), hs.temperature(b_i)
        for j in cold:
            cs = state.of(j)
            if cs.utility or (hs.name, cs.name) not in allowed:
                continue
            a_j, b_j, f_j, l_j = state.a[j], state.b[j], state.f[j], state.left(j)
            need = hs.shift + cs.shift
            cj_in, cj_out = cs.temperature(a_j), cs.temperature(b_j)
            if l_j < l_i - tol:   # a branch of the hot piece takes all of the cold one
                if hi_in - cj_out >= need - 1e-9:   # from the hot inlet down to cold inlet + ΔTmin
                    e = min(max(hs.enthalpy(cj_in + need), a_i), b_i)
                    if e - a_i > tol and l_j < f_i * (e - a_i) * (1 - 1e-9):
                        out.append((i, j, ("branch hot", a_i, e), l_j, (hi_in - cj_out,) * 4, False))
                if hi_out - cj_in >= need - 1e-9:   # from the hot outlet up to cold outlet + ΔTmin
                    e = min(max(hs.enthalpy(cj_out + need), a_i), b_i)
                    if b_i - e > tol and l_j < f_i * (b_i - e) * (1 - 1e-9):
                        out.append((i, j, ("branch hot", e, b_i), l_j, (hi_out - cj_in,) * 4, False))
            if l_i < l_j - tol:   # a branch of the cold piece takes all of the hot one
                if hi_out - cj_in >= need - 1e-9:   # from the cold inlet up to hot inlet − ΔTmin
                    e = min(max(cs.enthalpy(hi_in - need), a_j), b_j)
                    if e - a_j > tol and l_i < f_j * (e - a_j) * (1 - 1e-9):
                        out.append((i, j, ("branch cold", a_j, e), l_i, (hi_out - cj_in,) * 4, False))
                if hi_in - cj_out >= need - 1e-9:   # from the cold outlet down to hot outlet − ΔTmin
                    e = min(max(cs.enthalpy(hi_out - need), a_j), b_j)
                    if b_j - e > tol and l_i < f_j * (b_j - e) * (1 - 1e-9):
                        out.append((i, j, ("branch cold", e, b_j), l_i, (hi_in - cj_out,) * 4, False))
    return out


def _split_piece(state: Pieces, k: int, s0: float, s1: float, x: float) -> None:
    """Give share x of piece k's flow over its stretch [s0, s1] (one end of it) to a unit."""
    a, b, f = state.a[k], state.b[k], state.f[k]
    if s0 <= a and s1 >= b:
        state.f[k] = f * (1 - x)
        return
    state.a[k], state.b[k] = (s1, b) if s0 <= a else (a, s0)
    state.side.append(state.side[k])
    state.a.append(s0)
    state.b.append(s1)
    state.f.append(f * (1 - x))


def _apply(state: Pieces, step, tol: float):
    """The state after a step and the unit (hot stretch, share, cold stretch, share, load)."""
    i, j, kind, q = step[:4]
    new = state.copy()
    fi, fj = state.f[i], state.f[j]
    if isinstance(kind, tuple) and kind[0] == "branch hot":
        _, s0, s1 = kind
        x = q / (fi * (s1 - s0))
        unit = (s0, s1, fi * x, state.a[j], state.b[j], fj)
        new.a[j] = new.b[j]
        _split_piece(new, i, s0, s1, x)
        return new, unit
    if isinstance(kind, tuple) and kind[0] == "branch cold":
        _, s0, s1 = kind
        x = q / (fj * (s1 - s0))
        unit = (state.a[i], state.b[i], fi, s0, s1, fj * x)
        new.a[i] = new.b[i]
        _split_piece(new, j, s0, s1, x)
        return new, unit
    if kind == "split cold":   # all of hot piece i against a branch of cold piece j
        x = q / state.left(j)
        unit = (state.a[i], state.b[i], fi, state.a[j], state.b[j], fj * x)
        new.a[i] = new.b[i]
        new.f[j] = fj * (1 - x)
        return new, unit
    if kind == "split hot":
        x = q / state.left(i)
        unit = (state.a[i], state.b[i], fi * x, state.a[j], state.b[j], fj)
        new.a[j] = new.b[j]
        new.f[i] = fi * (1 - x)
        return new, unit
    eh, ec = kind[-2:]
    dh = q / fi if not state.of(i).utility else q
    dc = q / fj if not state.of(j).utility else q
    h0, h1 = (state.a[i], state.a[i] + dh) if eh == 0 else (state.b[i] - dh, state.b[i])
    c0, c1 = (state.a[j], state.a[j] + dc) if ec == 0 else (state.b[j] - dc, state.b[j])
    for k, e in ((i, eh), (j, ec)):
        d = dh if k == i else dc
        if e == 0:
            new.a[k] = min(new.a[k] + d, new.b[k])
        else:
            new.b[k] = max(new.b[k] - d, new.a[k])
        if new.left(k) <= tol:
            new.a[k] = new.b[k]
    return new, (h0, h1, fi, c0, c1, fj)


def _has_tick_off(state: Pieces, allowed, tol: float) -> bool:
    """True when nothing is left or some tick-off step at the ends is accepted at the current points."""
    hot = [k for k in range(len(state.side)) if state.of(k).hot and state.left(k) > tol]
    cold = [k for k in range(len(state.side)) if not state.of(k).hot and state.left(k) > tol]
    if not hot or not cold:
        return True
    points = cascade_points(state, tol)
    return bool(_candidates(state, hot, cold, allowed, tol, points, cascade_residual(state, points, tol), "ends"))


def _cut_at_pinches(state: Pieces, points: np.ndarray, residual: np.ndarray, tol: float) -> Pieces | None:
    """The state with every piece that crosses an inner zero of the cascade (a pinch of what is left) cut
    there, or None when no piece crosses one: no heat passes such a point, so the parts above and below it
    are problems of their own, each cut part ticked off from the new pinch out."""
    inner = points[1:-1][residual[1:-1] <= tol]
    out = None
    for k in range(len(state.side)):
        s = state.of(k)
        if s.utility or state.left(k) <= tol or not inner.size:
            continue
        a, b = state.a[k], state.b[k]
        for e in sorted({e for e in (s.enthalpy(p - shifted_offset(s)) for p in inner)
                         if a < e < b and state.f[k] * min(e - a, b - e) > tol}):
            out = out or state.copy()
            out.side.append(out.side[k])
            out.a.append(e)
            out.b.append(out.b[k])
            out.f.append(out.f[k])
            out.b[k] = e
    return out


def _pinch_steps(state: Pieces, allowed, tol: float, pinch_side, key, branches: bool = False):
    """Yield (step, unit, state after it) for the tick-off steps at the region's pinch, best first by
    ``key``, each checked as :func:`tick_off_search` checks its steps: a unit from the pinch out between pieces that touch the pinch, or a
    branch of one over its whole stretch that takes all of the other (the stream splits of the pinch design
    method when no partner has the larger heat capacity flow rate); with ``branches``, when none of those is
    accepted, a branch from the pinch end over the stretch that takes all of the other piece (its heat capacity
    flow rate then equals the other's: one piece more), until no step is accepted."""
    above = pinch_side == (1, 0)

    def pinch_ends(state):
        return [(k, (1 if state.of(k).hot else 0) if above else (0 if state.of(k).hot else 1))
                for k in range(len(state.side)) if not state.of(k).utility]

    at_end = [state.of(k).temperature(state.a[k] if e == 0 else state.b[k]) + shifted_offset(state.of(k))
              for k, e in pinch_ends(state)]
    if not at_end:
        return
    p = min(at_end) if above else max(at_end)
    while True:
        at = [k for k, e in pinch_ends(state) if state.left(k) > tol and
              abs(state.of(k).temperature(state.a[k] if e == 0 else state.b[k]) + shifted_offset(state.of(k)) - p)
              <= 1e-9 * max(abs(p), 1.0)]
        hot = [k for k in at if state.of(k).hot]
        cold = [k for k in at if not state.of(k).hot]
        if not (hot if above else cold):
            return
        points = cascade_points(state, tol)
        residual = cascade_residual(state, points, tol)
        cands = [c for c in _candidates(state, hot, cold, allowed, tol, points, residual, "ends")
                 if c[2] == pinch_side]
        cands += _candidates(state, hot, cold, allowed, tol, points, residual, "split")
        found = False
        for c in sorted(cands, key=key) + sorted([c for c in _branch_candidates(state, hot, cold, allowed, tol)
                                                   if _from_pinch(state, c, above)], key=key) * branches:
            trial, unit = _apply(state, c, tol)
            if unit_approach(state.of(c[0]), *unit[:3], state.of(c[1]), *unit[3:]) < -1e-9:
                continue
            if (cascade_residual(trial, cascade_points(trial, tol), tol) >= -tol).all():
                state, found = trial, True
                yield c, unit, state
                break
        if not found:
            return


def _from_pinch(state: Pieces, c, above: bool) -> bool:
    """True when a branch step runs from the pinch end of its piece."""
    kind, s0, s1 = c[2]
    k = c[0] if kind == "branch hot" else c[1]
    hot_end = kind == "branch hot"
    return (s1 >= state.b[k]) if hot_end == above else (s0 <= state.a[k])


def tick_off_search(sides: list[Side], allowed, required, tol: float, rng, noise: float, rule: int = 0,
                    lookahead: int = 1, pinch_first: int = 2, cuts: bool = True, start: Pieces | None = None,
                    deadline: float | None = None):
    """One tick-off search: steps placed until nothing is left or no step is accepted.

    Parameters
    ----------
    sides : list of Side
        The process and utility sides of one pinch region (their duties [kW] and shifted temperature
        profiles [°C]).
    allowed : set of (str, str)
        The (hot, cold) name pairs that may be matched (forbidden pairs left out).
    required : collection of (str, str)
        Pairs that must be placed; they go first, and the pinch-first phase is then skipped.
    tol : float
        Heat tolerance of the cascade and of "nothing left" [kW].
    rng : numpy.random.Generator
        Random stream of the noise and of the pinch-step order.
    noise : float
        Relative perturbation of the step measure [-] (0: deterministic).
    rule : int
        The measure of a step's verticality [-]: 0 the sum of the excess approaches at the unit's two ends,
        1 the larger of them, 2 the heat the cascade loses (the driving force the step spends); 3 to 5 the
        same, with the units at the pinch ends of both sides first (the pinch design method's order, from
        the pinch out); 6 the largest share of the cascade's heat the step takes at one temperature, 7 the
        same from the pinch ends out.
    lookahead : int
        Of that many accepted steps (best first) the first after which a tick-off step at the ends is
        still accepted is taken [-] (1: the best).
    pinch_first : int
        Steps at the region's pinch first (:func:`_pinch_steps`) [-]: 0 not; 1 whole stretches; 2 also with
        branches over part of a stretch; 3 as 2, taking the step of the largest load first.
    cuts : bool
        Let a stuck search cut the pieces at a pinch of what is left (:func:`_cut_at_pinches`).
    start : Pieces, optional
        The pieces to place, when not the whole sides.
    deadline : float, optional
        A :func:`time.monotonic` reading [s]: stop there, leaving what is not placed yet.

    Returns
    -------
    tuple
        (units, state): the placed units as (hot side index, cold side index, unit, duty [kW], kind) with
        the unit as (hot stretch start, end [kW], hot share [-], cold stretch start, end [kW], cold share
        [-]) (:data:`heatloom.network.merge.Rect`), and the :class:`~heatloom.network.pieces.Pieces` left
        to place.
    """
    state = Pieces(sides) if start is None else start.copy()
    units = []
    placed_pairs: set[tuple[str, str]] = set()
    # the ends at the pinch: above it (a hot utility, no cold one) the hot outlets and cold inlets, below
    # it the hot inlets and cold outlets
    hot_u = any(s.utility and s.hot for s in sides)
    cold_u = any(s.utility and not s.hot for s in sides)
    pinch_side = (1, 0) if hot_u and not cold_u else (0, 1) if cold_u and not hot_u else None
    span = max(max(s.temperatures) for s in sides) - min(min(s.temperatures) for s in sides) + 1.0
    if pinch_first and pinch_side is not None and not required:   # the pinch design method: pinch first
        def pinch_key(c):
            if pinch_first == 3:   # the largest load first
                return (not c[5], -c[3] * (1.0 + (rng.random() * noise if noise else 0.0)))
            measure = c[4][3] if rule >= 6 else c[4][rule % 3] / span if rule % 3 < 2 else c[4][2] * 10.0
            return (not c[5], measure + (rng.random() * noise if noise else 0.0))

        for c, unit, after in _pinch_steps(state, allowed, tol, pinch_side, pinch_key, pinch_first >= 2):
            state = after
            i, j, kind, q = c[:4]
            units.append((state.side[i], state.side[j], unit, q, kind if isinstance(kind, str) else "ends"))
            placed_pairs.add((sides[state.side[i]].name, sides[state.side[j]].name))
            if deadline is not None and time.monotonic() >= deadline:
                break
    while deadline is None or time.monotonic() < deadline:
        hot = [k for k in range(len(state.side)) if state.of(k).hot and state.left(k) > tol]
        cold = [k for k in range(len(state.side)) if not state.of(k).hot and state.left(k) > tol]
        if not hot or not cold or len(hot) * len(cold) > MAX_PIECE_PAIRS:
            break
        points = cascade_points(state, tol)
        residual = cascade_residual(state, points, tol)
        chosen = None
        pending = required - placed_pairs

        def key(c, state=state, pending=pending):
            i, j, kind, q, excess, both = c
            jitter = rng.random() * noise if noise else 0.0
            measure = excess[3] if rule >= 6 else excess[rule % 3] / span if rule % 3 < 2 else excess[2] * 10.0
            outward = rule in (3, 4, 5, 7) and kind != pinch_side   # from the pinch out first (pinch design method)
            return ((state.of(i).name, state.of(j).name) not in pending, not both, outward, measure + jitter)

        cut = None
        for mode in ("ends", "split", "cut", "branch", "0.9", "0.75", "0.5", "0.25", "0.1"):
            if deadline is not None and time.monotonic() >= deadline:
                break
            if mode == "cut":   # stuck at a pinch of what is left: cut the pieces there, then tick off again
                cut = _cut_at_pinches(state, points, residual, tol) if cuts else None
                if cut is not None:
                    break
                continue
            cands = _candidates(state, hot, cold, allowed, tol, points, residual, mode, deadline)
            if mode[0].isdigit():
                cands = [(*c[:2], ("part", *c[2]), *c[3:]) for c in cands]
            good = []
            for c in sorted(cands, key=key):
                if deadline is not None and time.monotonic() >= deadline:
                    break
                trial, unit = _apply(state, c, tol)
                h0, h1, fh, c0, c1, fc = unit
                if unit_approach(state.of(c[0]), h0, h1, fh, state.of(c[1]), c0, c1, fc) < -1e-9:
                    continue
                if (cascade_residual(trial, cascade_points(trial, tol), tol) >= -tol).all():
                    good.append((c, unit, trial))
                    if len(good) >= max(lookahead, 1):
                        break
            if len(good) > 1:   # the first whose next state still has a tick-off step at the ends
                for c, unit, trial in good:
                    if _has_tick_off(trial, allowed, tol):
                        good = [(c, unit, trial)]
                        break
            if good:
                c, unit, state = good[0]
                chosen = (c, unit)
                break
        if cut is not None:
            state = cut
            continue
        if chosen is None:
            break
        (i, j, kind, q, _, _), unit = chosen
        units.append((state.side[i], state.side[j], unit, q, kind if isinstance(kind, str) else
                      kind[0] if isinstance(kind[0], str) else "ends" if q >= 0 else ""))
        placed_pairs.add((sides[state.side[i]].name, sides[state.side[j]].name))
    return units, state


def _unit(hs: Side, cs: Side, unit, q) -> PlacedUnit:
    h0, h1, fh, c0, c1, fc = unit
    if hs.utility:
        h_in, h_out, fh = max(hs.temperatures), min(hs.temperatures), 1.0
    else:
        h_in, h_out = hs.temperature(h0), hs.temperature(h1)
    if cs.utility:
        c_in, c_out, fc = min(cs.temperatures), max(cs.temperatures), 1.0
    else:
        c_in, c_out = cs.temperature(c0), cs.temperature(c1)
    return PlacedUnit(hs.name, cs.name, 0, float(q), h_in, h_out, c_in, c_out, min(fh, 1.0), min(fc, 1.0))


def _remainder(state: Pieces, tol: float, forbidden, solver=None, solve_time: float = 0.0):
    """What the steps left, placed by :func:`heatloom.network.remainder.place_remainder` (the pieces under
    names of their own).  Returns (units or None, solve reports)."""
    pieces, names = [], {}
    for k in range(len(state.side)):
        if state.left(k) <= tol:
            continue
        s, a, b, f = state.of(k), state.a[k], state.b[k], state.f[k]
        name = f"{s.name}\x00{k}"
        names[name] = (s.name, f)
        if s.utility:
            pieces.append(Side(name, s.hot, s.temperatures, (0.0, float(b - a)), s.shift, utility=True))
            continue
        es = [a] + [e for e in s.enthalpies if a < e < b] + [b]
        pieces.append(Side(name, s.hot, tuple(s.temperature(e) for e in es), tuple(f * (e - a) for e in es),
                           s.shift))
    return place_remainder(pieces, names, forbidden, solver, solve_time)


_PLAIN = ((0, 1, 2), (7, 1, 1), (0, 1, 0), (5, 1, 0), (2, 1, 2), (4, 1, 2), (3, 1, 0), (1, 1, 0), (7, 1, 2),
          (6, 1, 1), (0, 4, 2), (5, 4, 0), (6, 1, 3), (0, 1, 3), (3, 1, 3))
"""(measure, lookahead, pinch first) of the first, unperturbed searches (see :func:`tick_off_search`)."""


def tick_off_placement(hot: Sequence[Side], cold: Sequence[Side], *, forbidden=frozenset(),
                       required=frozenset(), time_limit: float = 10.0, tries: int = 50, seed: int = 0,
                       solver=None, solve_time: float = 0.0, neighbourhood: float = 0.0,
                       deadline: float | None = None) -> TickOffResult | None:
    """Place the units of one pinch region by the tick-off rule, checking the leftover targets each step.

    Parameters
    ----------
    hot, cold : sequence of Side
        The sides of the region (process parts and utilities with their duties there); they must
        balance.
    forbidden : set of (hot name, cold name), optional
        Pairs never matched.
    required : set of (hot name, cold name), optional
        Pairs placed first where a step with them is accepted; a search leaving one out loses to one that
        has them all.
    time_limit : float
        Wall-clock time for the repeated searches and the neighbourhood moves [s]; the first search always
        runs to its end, and the moves get what the searches and the stagewise MILP (``solve_time``) left
        of it.
    tries : int
        Most searches [-]: the first fifteen unperturbed, the others with perturbed choices.  The searches
        stop early when one places N − 1 units or fewer without a remainder, or when none of the
        unperturbed ones ended in a placement.  Units are counted after the utility units at the end of
        a split stream are joined (:func:`heatloom.network.utility_tails.join_utility_tails`), the last
        step of the placement.
    seed : int
        Seed of the perturbations [-].
    solver : str, optional
        Solver of the stagewise MILP that may place what the best search left (see
        :func:`heatloom.network.solvers.resolve_solver`).
    solve_time : float
        Time limit of that MILP [s]; 0 places the remainder interval by interval only.
    neighbourhood : float
        Share of ``time_limit`` kept for moves that take out the units of a few sides of the best search
        and place them again (:func:`heatloom.network.neighbourhood.improve_units`) [-]; 0 none.  They run
        when the best search has more than N − 1 units, on its units and on those placed for what it left
        (after the stagewise MILP, when that ran) when these cover every side as rectangles.
    deadline : float, optional
        A :func:`time.monotonic` reading [s] (the end of the whole design's budget) at which every search
        stops, the first one too, leaving what it has not placed to the interval-by-interval placement of
        the remainder; no search starts and no move is made after it.  None: the first search runs to its
        end.

    Returns
    -------
    TickOffResult or None
        None when the sides' own cascade is not feasible in the conservative reading of
        :func:`cascade_feasible` (the caller uses another method).

    Examples
    --------
    Above the pinch of Sinnott's four-stream problem (Coulson & Richardson's Chemical Engineering Vol. 6,
    ch. 3, Table 3.6; pinch 90/80 °C): streams 1 and 2 above 90 and 80 °C, stream 3 and 4 above 80 °C,
    50 kW of hot utility.  Tick-off places 1→4 (270 kW, both off), 2→3 and the heater: 3 units.

    >>> hot = [Side("1", True, (180.0, 90.0), (0.0, 270.0), 5.0), Side("2", True, (150.0, 90.0), (0.0, 60.0), 5.0),
    ...        Side("hu", True, (250.0, 250.0), (0.0, 50.0), 5.0, utility=True)]
    >>> cold = [Side("3", False, (80.0, 135.0), (0.0, 110.0), 5.0),
    ...         Side("4", False, (80.0, 140.0), (0.0, 270.0), 5.0)]
    >>> r = tick_off_placement(hot, cold)
    >>> len(r.placement.units), r.remainder
    (3, 0)
    """
    sides = [*hot, *cold]
    scale = max(max((s.duty for s in sides), default=1.0), 1.0)
    tol = 1e-7 * scale
    if not cascade_feasible(sides, tol):
        return None
    forbidden = set(forbidden)
    required = set(required)
    allowed = {(i.name, j.name) for i in hot for j in cold if (i.name, j.name) not in forbidden}
    start = time.monotonic()
    rng = np.random.default_rng(seed)
    best = None
    n = 0
    searching = (1.0 - neighbourhood) * time_limit
    while n < max(tries, 1):
        rule, ahead, first = _PLAIN[n] if n < len(_PLAIN) else (int(rng.integers(8)), int(rng.choice([1, 4])),
                                                                 int(rng.integers(4)))
        noise = 0.0 if n < len(_PLAIN) else 0.5 * rng.random()
        steps, state = tick_off_search(sides, allowed, required, tol, rng, noise, rule, ahead, first,
                                       deadline=deadline)
        n += 1
        merged = merge_units(sides, [(i, j, unit, q) for i, j, unit, q, _ in steps])
        placed = [_unit(sides[i], sides[j], unit, q) for i, j, unit, q in merged]
        extra, _ = _remainder(state, tol, forbidden)
        if extra is not None:
            have = {(u.hot, u.cold) for u in (*placed, *extra)}
            score = (len(required - have), len(join_utility_tails(sides, merged, tol)) + len(extra))
            if best is None or score < best[0]:
                best = (score, placed, extra, state, merged)
        if time.monotonic() - start > searching or (best is not None and best[0][0] == 0 and not best[2]
                                                     and best[0][1] <= len(sides) - 1):
            break
        if deadline is not None and time.monotonic() >= deadline:
            break
        if best is None and n >= len(_PLAIN):   # no unperturbed search ended in a placement: none will
            break
    if best is None:
        return None
    (missing, count), placed, extra, state, merged = best
    moves = 0
    reports = []
    if deadline is not None:   # the remainder's MILP stops at the deadline too
        solve_time = min(solve_time, deadline - time.monotonic())
    if extra and solve_time > 0:
        milp, reports = _remainder(state, tol, forbidden, solver, solve_time)
        if milp is not None and len(milp) < len(extra) and \
                len(required - {(u.hot, u.cold) for u in (*placed, *milp)}) <= missing:
            extra = milp
    left = time_limit - (time.monotonic() - start)
    if deadline is not None:
        left = min(left, deadline - time.monotonic())
    rest: set = set()
    if neighbourhood > 0 and count > len(sides) - 1 and left > 0:
        if extra:   # the remainder's units as rectangles too, so that the moves can re-place them
            whole = as_rectangles(sides, merged, extra, tol)
            if whole is not None:
                rest = set(whole[len(merged):])
                merged, extra = whole, []
        if not extra:
            from .neighbourhood import improve_units

            have = {(sides[i].name, sides[j].name) for i, j, _, _ in merged}
            merged, moves = improve_units(sides, merged, allowed, required & have, tol, rng, left)
    # the last step: a stream's branches that each end in one utility mixed into one utility unit
    joined = join_utility_tails(sides, merged, tol)
    placed = [_unit(sides[i], sides[j], unit, q) for i, j, unit, q in joined if (i, j, unit, q) not in rest]
    # the remainder's units that no move replaced are still counted as the remainder's
    extra = [*(_unit(sides[i], sides[j], unit, q) for i, j, unit, q in joined if (i, j, unit, q) in rest), *extra]
    units = sorted([*placed, *extra], key=lambda u: (-u.hot_in, -u.cold_out))
    units = [PlacedUnit(u.hot, u.cold, k, u.duty, u.hot_in, u.hot_out, u.cold_in, u.cold_out, u.hot_fraction,
                        u.cold_fraction) for k, u in enumerate(units)]
    return TickOffResult(Placement(tuple(units), max(len(units), 1)), len(placed), len(extra), n, tuple(reports),
                         moves)

