"""Placing what the tick-off steps left: units interval by interval, or by the stagewise MILP when small.

The tick-off method (:mod:`heatloom.network.tickoff`) stops when no step keeps ΔTmin and the leftover
targets; what is left is a set of stream pieces (a stretch of a stream at a share of its flow) and
utility loads whose cascade still meets the targets.  They are placed interval by interval
(:func:`heatloom.network.placement.interval_placement`), which always succeeds on such a remainder without
forbidden pairs, and, when a solver time is given and there are few pieces, by the stagewise MILP of
:func:`heatloom.network.placement.stage_model`; the placement with fewer units is kept.

:func:`as_rectangles` writes such units, with the tick-off units, as rectangles on their sides
(:data:`heatloom.network.merge.Rect`) when together they cover every side exactly, so that the
neighbourhood moves of :mod:`heatloom.network.neighbourhood` can work on the whole placement.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from .merge import Rect, approach_shortfalls, unit_approach
from .placement import PlacedUnit, Side, interval_placement, stage_model
from .solvers import SolveReport, solve

__all__ = ["REMAINDER_MILP_SIDES", "as_rectangles", "place_remainder"]

REMAINDER_MILP_SIDES = 24
"""Most sides (pieces) left over for which the stagewise MILP is tried on the remainder [-] (our choice:
larger models do not solve in a share of the budget)."""


def place_remainder(pieces: Sequence[Side], origin: Mapping[str, tuple[str, float]], forbidden=frozenset(),
                    solver=None, solve_time: float = 0.0) -> tuple[list[PlacedUnit] | None, list[SolveReport]]:
    """Units for the pieces the tick-off steps left, under the names and flow shares of their streams.

    Parameters
    ----------
    pieces : sequence of Side
        What is left, each piece under a name of its own; a piece's enthalpies are at its share of the
        stream's flow [kW].
    origin : mapping of str to (str, float)
        Piece name → (stream or utility name, share of its flow [-]).
    forbidden : set of (hot name, cold name), optional
        Pairs of stream or utility names never matched.
    solver : str, optional
        Solver of the stagewise MILP (see :func:`heatloom.network.solvers.resolve_solver`).
    solve_time : float
        Time limit of that MILP [s]; 0 places the pieces interval by interval only.  The MILP is tried on
        at most :data:`REMAINDER_MILP_SIDES` pieces.

    Returns
    -------
    (list of PlacedUnit or None, list of SolveReport)
        The units, with the streams' names and flow fractions (None when neither method placed the
        pieces, which forbidden pairs can cause), and the report of the MILP when it ran.

    Examples
    --------
    Invented: a piece of H (150→100 °C, 100 kW, half its flow) and of C (40→90 °C, 100 kW), ΔTmin 10 K.

    >>> units, _ = place_remainder([Side("h", True, (150.0, 100.0), (0.0, 100.0), 5.0),
    ...                             Side("c", False, (40.0, 90.0), (0.0, 100.0), 5.0)],
    ...                            {"h": ("H", 0.5), "c": ("C", 1.0)})
    >>> [(u.hot, u.cold, round(u.duty, 6), u.hot_fraction) for u in units]
    [('H', 'C', 100.0, 0.5)]
    """
    if not pieces:
        return [], []
    rh = [s for s in pieces if s.hot]
    rc = [s for s in pieces if not s.hot]
    if not rh or not rc:
        return None, []
    banned = {(h.name, c.name) for h in rh for c in rc if (origin[h.name][0], origin[c.name][0]) in forbidden}
    reports = []
    placed = None
    try:
        placed = interval_placement(rh, rc, forbidden=banned).units
    except ValueError:
        pass
    if solve_time > 0 and len(pieces) <= REMAINDER_MILP_SIDES:
        pairs = {(h.name, c.name) for h in rh for c in rc if not (h.utility and c.utility)} - banned
        prob, read = stage_model(rh, rc, pairs, max(len(rh), len(rc)), name="placement")
        report = solve(prob, solver, time_limit=solve_time, check=False,
                       name="placement (what the tick-off steps left)")
        reports.append(report)
        if report.has_solution:
            milp = read().units
            if approach_shortfalls(milp, rh, rc):   # a unit below ΔTmin at a segment break inside it
                milp = None
            if milp is not None and (placed is None or len(milp) < len(placed)):
                placed = milp
    if placed is None:
        return None, reports
    out = []
    for u in placed:
        (hn, fh), (cn, fc) = origin[u.hot], origin[u.cold]
        out.append(PlacedUnit(hn, cn, 0, u.duty, u.hot_in, u.hot_out, u.cold_in, u.cold_out,
                              u.hot_fraction * fh, u.cold_fraction * fc))
    return out, reports


def as_rectangles(sides: Sequence[Side], units: Sequence[tuple[int, int, Rect, float]],
                  placed: Sequence[PlacedUnit], tol: float) -> list[tuple[int, int, Rect, float]] | None:
    """The units as rectangles on their sides, or None where they do not cover each side exactly.

    A placed unit's stretch on a process side is the side's enthalpy at its terminal temperatures at its
    flow fraction; a utility's is its load.  The rectangles are kept only when, with ``units``, every
    point of every process side is covered at its whole flow (shares adding up to one), every utility's
    load adds up to its duty, each rectangle carries its unit's duty and keeps the sum of its sides'
    shifts (:func:`heatloom.network.merge.unit_approach`): a side with an isothermal segment, where a
    temperature does not tell the enthalpy, fails the check rather than being read wrongly.

    Parameters
    ----------
    sides : sequence of Side
        The sides of the region.
    units : sequence of (int, int, Rect, float)
        Units already as rectangles (hot index, cold index, rectangles, duty [kW]).
    placed : sequence of PlacedUnit
        Units by stream names, terminal temperatures [°C], duty [kW] and flow fractions [-].
    tol : float
        Heat tolerance [kW].

    Returns
    -------
    list of (int, int, Rect, float) or None
        ``units`` followed by the placed units as (hot index, cold index, rectangles, duty [kW]) in their
        order, or None when the check fails.

    Examples
    --------
    Invented: H 150→50 °C (2 kW/K) against C 20→120 °C (2 kW/K) in two units of 100 kW.

    >>> h = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
    >>> c = Side("C", False, (20.0, 120.0), (0.0, 200.0), 5.0)
    >>> u = PlacedUnit("H", "C", 0, 100.0, 100.0, 50.0, 20.0, 70.0, 1.0, 1.0)
    >>> as_rectangles([h, c], [(0, 1, (0.0, 100.0, 1.0, 100.0, 200.0, 1.0), 100.0)], [u], 1e-9)
    [(0, 1, (0.0, 100.0, 1.0, 100.0, 200.0, 1.0), 100.0), (0, 1, (100.0, 200.0, 1.0, 0.0, 100.0, 1.0), 100.0)]
    >>> as_rectangles([h, c], [], [u], 1e-9) is None   # half of each side uncovered
    True
    """
    index = {s.name: k for k, s in enumerate(sides)}
    out = list(units)
    load = {}
    for u in placed:
        i, j = index[u.hot], index[u.cold]
        hs, cs = sides[i], sides[j]
        if hs.utility:
            h = (load.get(i, 0.0), load.get(i, 0.0) + u.duty, 1.0)
        else:
            h = (hs.enthalpy(u.hot_in), hs.enthalpy(u.hot_out), u.hot_fraction)
        if cs.utility:
            c = (load.get(j, 0.0), load.get(j, 0.0) + u.duty, 1.0)
        else:
            c = (cs.enthalpy(u.cold_in), cs.enthalpy(u.cold_out), u.cold_fraction)
        for k, (a, b, f) in ((i, h), (j, c)):
            if sides[k].utility:
                load[k] = b
            elif abs(f * (b - a) - u.duty) > tol * 10:
                return None
        out.append((i, j, (*h, *c), float(u.duty)))
    cover: dict[int, list] = {}
    for i, j, r, q in out:
        for k, (a, b, f) in ((i, r[:3]), (j, r[3:])):
            cover.setdefault(k, []).append((a, b, f, q))
    for k, s in enumerate(sides):
        rects = cover.get(k, [])
        if s.utility:
            if abs(sum(q for *_, q in rects) - s.duty) > tol * 10:
                return None
            continue
        points = np.unique([0.0, s.duty, *(x for a, b, _, _ in rects for x in (a, b))])
        mid = 0.5 * (points[1:] + points[:-1])
        share = np.zeros(mid.size)
        for a, b, f, _ in rects:
            share += f * ((mid > a) & (mid < b))
        long = np.diff(points) > tol
        if np.abs(share[long] - 1.0).max(initial=0.0) > 1e-6:
            return None
    if any(unit_approach(sides[i], *r[:3], sides[j], *r[3:]) < -1e-6 for i, j, r, _ in out[len(units):]):
        return None
    return out
