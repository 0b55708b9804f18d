"""Placing matches with temperatures: a stagewise model restricted to a chosen set of matches.

Given the sides of one pinch subnetwork (the part of each process stream in it, and each utility with its
duty there) and the matches allowed between them, find exchanger loads, stage temperatures and stream
splits such that every unit keeps the minimum approach at both ends, with the fewest units.  The model is
the stagewise superstructure of Yee & Grossmann (1990) with isothermal mixing, without its area cost: with
duties fixed by the targets and the heat capacity flow rates known, every constraint is linear, so it is a
MILP in the units' binaries (one per match and stage), the loads and the stage-boundary enthalpies.
Streams of several linear segments are handled exactly by an incremental piecewise-linear formulation of
temperature against enthalpy (one binary per inner breakpoint and stage boundary).

Several matches of one stream in the same stage are a stream split into parallel branches, each branch
leaving at the stage's outlet temperature (isothermal mixing); the branch's share of the flow equals its
share of the stage's duty.  A small penalty per extra branch makes the model prefer series placements.

References
----------
.. [1] Yee, T. F., Grossmann, I. E. (1990). Simultaneous optimization models for heat integration—II.
   Heat exchanger network synthesis. Computers & Chemical Engineering 14(10), 1165-1184.
   doi:10.1016/0098-1354(90)85010-8
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
import pulp

from .solvers import new_variable

__all__ = ["Side", "PlacedUnit", "Placement", "stage_model", "interval_placement"]


@dataclass(frozen=True)
class Side:
    """One side of the subnetwork: a process stream's part in it, or a utility with its duty there.

    Attributes
    ----------
    name : str
    hot : bool
    temperatures : tuple of float
        Breakpoint temperatures from the side's inlet to its outlet [°C]; a single repeated value for an
        isothermal utility.
    enthalpies : tuple of float
        Cumulative duty from the inlet at each breakpoint [kW], from 0 to the side's duty.
    shift : float
        The side's share of the minimum approach [K]; a match needs shift(hot) + shift(cold).
    utility : bool
    """

    name: str
    hot: bool
    temperatures: tuple[float, ...]
    enthalpies: tuple[float, ...]
    shift: float
    utility: bool = False

    @property
    def duty(self) -> float:
        """[kW]"""
        return self.enthalpies[-1]

    @property
    def isothermal(self) -> bool:
        return self.temperatures[0] == self.temperatures[-1]

    def temperature(self, enthalpy: float) -> float:
        """Temperature after exchanging ``enthalpy`` from the inlet [°C]."""
        if self.isothermal:
            return self.temperatures[0]
        return float(np.interp(enthalpy, self.enthalpies, self.temperatures))

    def enthalpy(self, temperature: float) -> float:
        """Heat exchanged from the inlet down (hot) or up (cold) to ``temperature`` [kW], clipped to the side."""
        t, e = np.asarray(self.temperatures), np.asarray(self.enthalpies)
        if t[0] > t[-1]:
            t, e = t[::-1], e[::-1]
        return float(np.interp(temperature, t, e))


@dataclass(frozen=True)
class PlacedUnit:
    """A unit of the placement: a match in a stage with its load and terminal temperatures."""

    hot: str
    cold: str
    stage: int
    duty: float
    hot_in: float
    hot_out: float
    cold_in: float
    cold_out: float
    hot_fraction: float
    cold_fraction: float


@dataclass(frozen=True)
class Placement:
    """Solution of :func:`stage_model`: units, hot end (stage 0) first."""

    units: tuple[PlacedUnit, ...]
    stages: int


def _temperature_expr(prob, side: Side, e_var, tag: str):
    """Linear expression of a side's temperature at cumulative enthalpy ``e_var``.

    Single-segment sides and isothermal utilities need no binaries; segmented sides use the incremental
    formulation: e = Σ δ_s with δ_s filled in order (binary w_s says segment s is full).
    """
    t, e = side.temperatures, side.enthalpies
    if side.isothermal:
        return t[0]
    n = len(t) - 1
    if n == 1:
        slope = (t[1] - t[0]) / (e[1] - e[0])
        return t[0] + slope * e_var
    deltas = [new_variable(prob, f"d_{tag}_{s}", 0, e[s + 1] - e[s]) for s in range(n)]
    w = [new_variable(prob, f"w_{tag}_{s}", cat=pulp.LpBinary) for s in range(n - 1)]
    prob += pulp.lpSum(deltas) == e_var
    for s in range(n - 1):
        prob += deltas[s] >= (e[s + 1] - e[s]) * w[s]
        prob += deltas[s + 1] <= (e[s + 2] - e[s + 1]) * w[s]
    return t[0] + pulp.lpSum(deltas[s] * (t[s + 1] - t[s]) / (e[s + 1] - e[s]) for s in range(n))


def stage_model(hot: Sequence[Side], cold: Sequence[Side], allowed: set[tuple[str, str]], stages: int, *,
                required: set[tuple[str, str]] = frozenset(), once: bool = False, name: str = "placement"
                ) -> tuple[pulp.LpProblem, Callable[[], Placement]]:
    """Build the restricted stagewise MILP; return the problem and a reader of its solution.

    .. math::

        \\min \\sum_{ijk} z_{ijk} + \\epsilon \\sum_{sk} b_{sk} \\quad\\text{s.t.}\\quad
        e_{i,k+1} - e_{ik} = \\sum_j q_{ijk}, \\quad c_{jk} - c_{j,k+1} = \\sum_i q_{ijk},

        T_i(e_{ik}) - t_j(c_{jk}) \\ge \\Delta_{ij} - \\Gamma (1 - z_{ijk}), \\quad
        T_i(e_{i,k+1}) - t_j(c_{j,k+1}) \\ge \\Delta_{ij} - \\Gamma (1 - z_{ijk}), \\quad
        q_{ijk} \\le \\min(Q_i, Q_j) z_{ijk}

    (Yee & Grossmann 1990, constraints (1)-(12) without the area terms); :math:`e_{ik}` is the heat hot
    side *i* has given by stage boundary *k* (boundary 0 is the hot end), :math:`c_{jk}` the heat cold side
    *j* has taken by boundary *k* counted from its inlet at boundary K, and :math:`b_{sk}` the extra
    branches of side *s* in stage *k*.

    Parameters
    ----------
    hot, cold : sequence of Side
    allowed : set of (hot name, cold name)
        Matches the model may use.
    stages : int
        Number of stages K [-].
    required : set of (hot name, cold name), optional
        Matches that must appear in at least one stage.  When ``allowed`` is a proven minimum set of
        matches, every one of them is needed (a network using fewer would be a heat-load distribution
        with fewer matches), so passing it here is a valid cut that tightens the relaxation; the total
        number of units is then also bounded below by its size.
    once : bool
        Every allowed match in exactly one stage (one unit per match): a much smaller search, the first
        thing to try with a proven minimum set of matches.
    """
    prob = pulp.LpProblem(name, pulp.LpMinimize)
    K = stages
    pairs = [(i, j) for i in hot for j in cold if (i.name, j.name) in allowed]
    span = max(max(s.temperatures) for s in (*hot, *cold)) - min(min(s.temperatures) for s in (*hot, *cold))
    gamma = span + max(i.shift + j.shift for i, j in pairs) if pairs else 0.0

    def vname(s: Side) -> str:
        return "".join(ch if ch.isalnum() else "_" for ch in s.name)[:20] + f"_{id(s) % 10007}"

    e = {}
    temp = {}
    # Process sides: enthalpy by stage boundary, temperature from it.  Utility sides: every unit gets its
    # own share of the utility flow running over the utility's whole range (utilities are supplied in
    # parallel), so a utility unit sees the utility's hot end at its hot end and its cold end at its cold
    # end, whatever the stage; only the total duty ties the utility's units together.
    for side in (*hot, *cold):
        if side.utility:
            continue
        for k in range(K + 1):
            # hot sides count heat given from the hot end (k = 0); cold sides heat taken from the cold
            # end (k = K)
            start, end = (0, K) if side.hot else (K, 0)
            if k == start:
                e[side.name, k] = 0.0
            elif k == end:
                e[side.name, k] = side.duty
            else:
                e[side.name, k] = new_variable(prob, f"{'e' if side.hot else 'c'}_{vname(side)}_{k}", 0,
                                               side.duty)
            if k in (0, K):
                temp[side.name, k] = side.temperature(e[side.name, k])
            else:
                temp[side.name, k] = _temperature_expr(prob, side, e[side.name, k],
                                                       f"{'h' if side.hot else 'c'}{vname(side)}_{k}")
    q, z = {}, {}
    for i, j in pairs:
        bound = min(i.duty, j.duty)
        for k in range(K):
            q[i.name, j.name, k] = new_variable(prob, f"q_{vname(i)}_{vname(j)}_{k}", 0, bound)
            z[i.name, j.name, k] = new_variable(prob, f"z_{vname(i)}_{vname(j)}_{k}", cat=pulp.LpBinary)
            prob += q[i.name, j.name, k] <= bound * z[i.name, j.name, k]
            need = i.shift + j.shift
            # the unit's hot end is stage boundary k, its cold end k + 1; a utility side always spans its
            # whole range (see above)
            h_hot_end = max(i.temperatures) if i.utility else temp[i.name, k]
            h_cold_end = min(i.temperatures) if i.utility else temp[i.name, k + 1]
            c_hot_end = max(j.temperatures) if j.utility else temp[j.name, k]
            c_cold_end = min(j.temperatures) if j.utility else temp[j.name, k + 1]
            prob += h_hot_end - c_hot_end >= need - gamma * (1 - z[i.name, j.name, k])
            prob += h_cold_end - c_cold_end >= need - gamma * (1 - z[i.name, j.name, k])
    by_side: dict[tuple[str, bool], list] = {}
    for key, v in q.items():
        by_side.setdefault((key[0], True), []).append((key[2], v))
        by_side.setdefault((key[1], False), []).append((key[2], v))
    for side in (*hot, *cold):
        mine = by_side.get((side.name, side.hot), [])
        if side.utility:
            prob += pulp.lpSum(v for _, v in mine) == side.duty
            continue
        for k in range(K):
            stage = pulp.lpSum(v for kk, v in mine if kk == k)
            if side.hot:
                prob += e[side.name, k + 1] - e[side.name, k] == stage
            else:
                prob += e[side.name, k] - e[side.name, k + 1] == stage
    for i, j in pairs:
        if once:
            prob += pulp.lpSum(z[i.name, j.name, k] for k in range(K)) == 1
        elif (i.name, j.name) in required:
            prob += pulp.lpSum(z[i.name, j.name, k] for k in range(K)) >= 1
    if required:
        prob += pulp.lpSum(z.values()) >= len(required & {(i.name, j.name) for i, j in pairs})
    # Extra branches (stream splits) cost a little, so series placements win ties.
    branches = []
    for s, partners in [(i, list(cold)) for i in hot if not i.utility] + [(j, list(hot)) for j in cold if not j.utility]:
        for k in range(K):
            zs = [z[(s.name, p.name, k) if s.hot else (p.name, s.name, k)] for p in partners
                  if ((s.name, p.name, k) if s.hot else (p.name, s.name, k)) in z]
            if len(zs) > 1:
                b = new_variable(prob, f"b_{vname(s)}_{k}", 0)
                prob += b >= pulp.lpSum(zs) - 1
                branches.append(b)
    eps = 1.0 / (len(branches) + 2)
    prob += pulp.lpSum(z.values()) + eps * pulp.lpSum(branches)

    def value(x) -> float:
        v = pulp.value(x)
        return float(x if v is None and isinstance(x, (int, float)) else v)

    def read() -> Placement:
        units = []
        tol = 1e-7 * max(max(s.duty for s in (*hot, *cold)), 1.0)
        for (hn, cn, k), var in q.items():
            load = value(var)
            if load <= tol:
                continue
            hs = next(s for s in hot if s.name == hn)
            cs = next(s for s in cold if s.name == cn)
            if hs.utility:
                h_in, h_out, h_frac = max(hs.temperatures), min(hs.temperatures), 1.0
            else:
                h_stage = value(e[hn, k + 1]) - value(e[hn, k])
                h_in, h_out = hs.temperature(value(e[hn, k])), hs.temperature(value(e[hn, k + 1]))
                h_frac = min(1.0, load / h_stage) if h_stage > tol else 1.0
            if cs.utility:
                c_in, c_out, c_frac = min(cs.temperatures), max(cs.temperatures), 1.0
            else:
                c_stage = value(e[cn, k]) - value(e[cn, k + 1])
                c_in, c_out = cs.temperature(value(e[cn, k + 1])), cs.temperature(value(e[cn, k]))
                c_frac = min(1.0, load / c_stage) if c_stage > tol else 1.0
            units.append(PlacedUnit(hot=hn, cold=cn, stage=k, duty=load, hot_in=h_in, hot_out=h_out,
                                    cold_in=c_in, cold_out=c_out, hot_fraction=h_frac, cold_fraction=c_frac))
        return Placement(tuple(sorted(units, key=lambda u: (u.stage, u.hot, u.cold))), K)

    return prob, read


@dataclass(eq=False)
class _Piece:
    side: Side
    k: int              # position from the hot end (shifted interval; -1 hot utility, large cold utility)
    t_in: float
    t_out: float
    heat: float
    left: float


def _pieces(side: Side, grid: np.ndarray, tol: float, cut_utilities: bool = False) -> list[_Piece]:
    """A side cut at the shifted grid (hottest first); a utility is one piece over its whole range, unless
    ``cut_utilities`` and it is non-isothermal: then it is cut like a stream, by the linear profile the
    problem table gives it (its heat spread evenly over its range)."""
    if side.utility and not (cut_utilities and not side.isothermal):
        return [_Piece(side, -1 if side.hot else len(grid), max(side.temperatures) if side.hot else
                       min(side.temperatures), min(side.temperatures) if side.hot else max(side.temperatures),
                       side.duty, side.duty)]
    s = -side.shift if side.hot else side.shift
    hi, lo = max(side.temperatures), min(side.temperatures)
    out = []
    for k in range(grid.size - 1):
        top, bottom = float(min(grid[k] - s, hi)), float(max(grid[k + 1] - s, lo))
        if top - bottom <= 1e-12 * max(abs(top), 1.0):
            continue
        heat = abs(side.enthalpy(top) - side.enthalpy(bottom))
        if heat > tol:
            out.append(_Piece(side, k, top if side.hot else bottom, bottom if side.hot else top, heat, heat))
    return out


def interval_placement(hot: Sequence[Side], cold: Sequence[Side], preferred: set[tuple[str, str]] = frozenset(),
                       *, forbidden: set[tuple[str, str]] = frozenset(), cut_utilities: bool | None = None
                       ) -> Placement:
    """A placement without a solver: units interval by interval, every stream split where it must be.

    The sides are cut at every shifted breakpoint (the temperature intervals of the problem table, and the
    utilities' shifted temperatures).  Going down the intervals, each piece of a cold side takes heat from
    pieces of hot sides at or above it (pieces of the same interval or hotter ones), each pairing a unit on
    parallel branches of both pieces; the shifted grid makes every such unit keep the sum of its sides'
    shifts at both ends.  Pairs in ``preferred`` (the planned matches) and pairs already used come first;
    afterwards units that follow each other on unsplit pieces of the same pair are merged.  Many more units
    than the fewest, but there always is one when the sides balance at the energy targets: the last resort
    of the design.

    Parameters
    ----------
    hot, cold : sequence of Side
    preferred : set of (hot name, cold name)
    forbidden : set of (hot name, cold name), optional
        Pairs never matched.
    cut_utilities : bool, optional
        False: every unit of a utility runs over its whole range; True: non-isothermal utilities are cut
        at the grid (below); None (default): whole ranges where that serves every piece, else cut.

    Returns
    -------
    Placement

    Raises
    ------
    ValueError
        When some cold piece cannot be served (the sides do not balance at the targets, or the forbidden
        pairs leave a piece without a hot side that may serve it).

    Examples
    --------
    >>> h = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
    >>> c = Side("C", False, (40.0, 120.0), (0.0, 200.0), 5.0)
    >>> [(u.hot, u.cold, u.duty) for u in interval_placement([h], [c]).units]
    [('H', 'C', 200.0)]

    A non-isothermal utility runs over its whole range in each of its units where that serves every
    piece; where it does not (hot oil 330 → 250 °C cannot heat a piece from 251 to 288 °C in one unit
    that returns the oil at 250 °C), it is cut at the grid like a stream, by the linear profile of the
    problem table that set its duty, so its units take it over part of its range: the utility passes
    them in series, band after band (cascaded, as the energy target assumes), each band's heat shared by
    the units of that band.

    >>> oil = Side("oil", True, (330.0, 250.0), (0.0, 800.0), 5.0, utility=True)
    >>> c1 = Side("C1", False, (100.0, 240.0), (0.0, 400.0), 5.0)
    >>> c2 = Side("C2", False, (251.0, 288.0), (0.0, 400.0), 5.0)
    >>> sorted((u.cold, u.hot_in, u.hot_out) for u in interval_placement([oil], [c1, c2]).units)
    [('C1', 261.0, 250.0), ('C1', 330.0, 298.0), ('C2', 298.0, 261.0), ('C2', 330.0, 298.0)]
    """
    if cut_utilities is not None:
        return _interval_placement(hot, cold, preferred, forbidden, cut_utilities=cut_utilities)
    try:
        return _interval_placement(hot, cold, preferred, forbidden, cut_utilities=False)
    except ValueError:
        if all(s.isothermal for s in (*hot, *cold) if s.utility):
            raise
    return _interval_placement(hot, cold, preferred, forbidden, cut_utilities=True)


def _interval_placement(hot, cold, preferred, forbidden, *, cut_utilities: bool) -> Placement:
    sides = (*hot, *cold)
    scale = max(max(s.duty for s in sides), 1.0)
    tol = 1e-9 * scale
    # the utilities' temperatures too: a cold piece is cut where one utility level stops being able to serve
    # it and the next must take over (steam at 300 °C serves up to 290 °C, hot oil beyond)
    grid = sorted({round(t - s.shift if s.hot else t + s.shift, 9) for s in sides for t in s.temperatures},
                  reverse=True)
    grid_a = np.asarray(grid, dtype=float)
    hp = [p for s in hot for p in _pieces(s, grid_a, tol, cut_utilities)]
    cp = sorted((p for s in cold for p in _pieces(s, grid_a, tol, cut_utilities)), key=lambda p: (p.k, -p.heat))
    used: set[tuple[str, str]] = set()
    last: dict[tuple[str, str], int] = {}   # hot piece a pair used last: the next one that continues it wins
    raw = []
    for c in cp:
        need = c.heat
        while need > tol:
            cands = [h for h in hp if h.left > tol and not (h.side.utility and c.side.utility)
                     and (h.side.name, c.side.name) not in forbidden
                     and h.k <= c.k and h.t_in - c.t_out >= h.side.shift + c.side.shift - 1e-9
                     and h.t_out - c.t_in >= h.side.shift + c.side.shift - 1e-9]
            if not cands:
                raise ValueError(f"no hot side can serve '{c.side.name}' between {c.t_in:g} and {c.t_out:g} °C")
            pair = {h: (h.side.name, c.side.name) for h in cands}
            h = max(cands, key=lambda h: (pair[h] in preferred, pair[h] in used,
                                          h.k - last.get(pair[h], -9) in (0, 1), h.left))
            x = min(need, h.left)
            h.left -= x
            need -= x
            used.add(pair[h])
            last[pair[h]] = h.k
            raw.append([h, c, x])
    units = []
    for h, c, x in raw:
        hf = 1.0 if h.side.utility and h.heat == h.side.duty else min(1.0, x / h.heat)
        cf = 1.0 if c.side.utility and c.heat == c.side.duty else min(1.0, x / c.heat)
        units.append(PlacedUnit(h.side.name, c.side.name, max(h.k, 0), x, h.t_in, h.t_out, c.t_in, c.t_out, hf, cf))
    return Placement(tuple(_merged(units, {x.name: x for x in sides})), max(grid_a.size - 1, 1))


def _merged(units: list[PlacedUnit], sides: dict[str, Side]) -> list[PlacedUnit]:
    """Join units of one pair that follow each other along the streams.

    Units *a* (hotter) and *b* of one pair join when, on each process side, either *b* continues *a*
    (*a*'s outlet is *b*'s inlet) on branches of equal share, or both use the same piece (their shares
    add up); at least one side must continue.  The pieces come from the shifted grid, so the joined unit
    keeps the approach at its ends and at the joint.  An isothermal utility side joins as it is; units
    on a non-isothermal utility are left alone (the approach inside could break).
    """
    units = list(units)

    def side_join(hs: Side, a_in, a_out, a_f, b_in, b_out, b_f):
        """(inlet, outlet, share, continued) of the joined side, or None; a_* hotter for a hot side."""
        if hs.utility and hs.isothermal:
            return a_in, a_out, 1.0, False
        if hs.utility and (a_in, a_out) == (max(hs.temperatures), min(hs.temperatures))[::1 if hs.hot else -1]:
            return None   # a whole-range unit of a non-isothermal utility: the approach inside could break
        if abs(a_out - b_in) <= 1e-9 and abs(a_f - b_f) <= 1e-9:
            return a_in, b_out, a_f, True
        if abs(a_in - b_in) <= 1e-9 and abs(a_out - b_out) <= 1e-9:
            return a_in, a_out, min(1.0, a_f + b_f), False
        return None

    def join(a: PlacedUnit, b: PlacedUnit) -> PlacedUnit | None:
        if (a.hot, a.cold) != (b.hot, b.cold):
            return None
        h = side_join(sides[a.hot], a.hot_in, a.hot_out, a.hot_fraction, b.hot_in, b.hot_out, b.hot_fraction)
        c = side_join(sides[a.cold], b.cold_in, b.cold_out, b.cold_fraction, a.cold_in, a.cold_out,
                      a.cold_fraction)   # a cold side runs from b's inlet up to a's outlet
        if h is None or c is None:
            return None
        return PlacedUnit(a.hot, a.cold, min(a.stage, b.stage), a.duty + b.duty, h[0], h[1], c[0], c[1],
                          h[2], c[2])

    by_pair: dict[tuple[str, str], list[PlacedUnit]] = {}
    for u in units:
        by_pair.setdefault((u.hot, u.cold), []).append(u)
    units = []
    for group in by_pair.values():
        changed = True
        while changed:
            changed = False
            for a in group:
                for b in group:
                    m = None if a is b else join(a, b)
                    if m is not None:
                        group = [u for u in group if u is not a and u is not b] + [m]
                        changed = True
                        break
                if changed:
                    break
        units += group
    return sorted(units, key=lambda u: (u.stage, u.hot, u.cold))
