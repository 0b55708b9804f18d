"""Fewer units by re-placing a neighbourhood: take out the units of a few sides, tick the holes off again.

A large-neighbourhood search over a tick-off placement (:mod:`heatloom.network.tickoff`) whose units are
rectangles on their sides (:mod:`heatloom.network.merge`).  Each move picks a unit at random, its two
sides and, through units, up to six sides around them; every unit touching one of these sides is taken
out.  What those units covered is left as pieces — on each process side the stretches and shares they
held, joined into as few pieces as the cover allows; on a utility its load — and the pieces are ticked
off again by one search of :func:`heatloom.network.tickoff.tick_off_search` with a measure, look-ahead
and noise drawn at random.  The pieces' own cascade holds (the units taken out placed them), and every
step of the search keeps ΔTmin and the leftover cascade, so a move that places all of the pieces keeps
the energy targets.  The units are merged again (:func:`heatloom.network.merge.merge_units`) and the move is
kept when it leaves no more units than before, counted as they will be built, after the utility units at
the end of each split stream are joined (:func:`heatloom.network.utility_tails.join_utility_tails`; moves
between placements of as many units let the search walk along them), when no required pair is lost,
until the time is up.  The units returned are not joined: they still cover their sides, as the moves
need.
"""

from __future__ import annotations

import time
from collections.abc import Sequence

import numpy as np

from .merge import Rect, merge_units
from .placement import Side
from .utility_tails import join_utility_tails

__all__ = ["MOST_SIDES", "MOVE_SHARE", "holes", "improve_units"]

MOST_SIDES = 6
"""Most sides whose units one move takes out [-] (our choice: larger neighbourhoods were rarely placed
again with fewer units on the benchmark problems of benchmarks/bench_design.py)."""


MOVE_SHARE = 0.05
"""Most of the time one move may take [-], plus 0.5 s (a move that places its pieces in many small partial
units is given up instead of taking the time of the others)."""


def holes(sides: Sequence[Side], removed: Sequence[tuple[int, int, Rect, float]], tol: float
          ) -> list[tuple[int, float, float, float]]:
    """Pieces (side index, stretch start, stretch end, share) covering what the removed units covered.

    On a process side the cover of the removed units (the sum of their shares at each point) is cut into
    rectangles, the longest stretch at the smallest share first; a utility gets one piece of their load.

    Parameters
    ----------
    sides : sequence of Side
    removed : sequence of (int, int, Rect, float)
        Units (hot index, cold index, rectangles, duty [kW]).
    tol : float
        Stretch ends closer than this are one point [kW].

    Returns
    -------
    list of (int, float, float, float)
        Side index, stretch [kW] from its inlet at full flow, share [-] (a utility: (0, load, 1)).

    Examples
    --------
    Invented: two units of H, 0–50 kW at its whole flow and 50–100 kW at half of it, and one on the
    same half flow of C: one piece of H per share.

    >>> h = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
    >>> c = Side("C", False, (20.0, 120.0), (0.0, 200.0), 5.0)
    >>> holes([h, c], [(0, 1, (0.0, 50.0, 1.0, 0.0, 50.0, 1.0), 50.0),
    ...               (0, 1, (50.0, 100.0, 0.5, 50.0, 75.0, 1.0), 25.0)], 1e-9)
    [(0, 0.0, 100.0, 0.5), (0, 0.0, 50.0, 0.5), (1, 0.0, 75.0, 1.0)]
    """
    per: dict[int, list] = {}
    for i, j, r, q in removed:
        for k, (a, b, f) in ((i, r[:3]), (j, r[3:])):
            per.setdefault(k, []).append((a, b, f, q))
    out = []
    for k, rects in per.items():
        if sides[k].utility:
            out.append((k, 0.0, float(sum(q for *_, q in rects)), 1.0))
            continue
        points: list[float] = []
        for x in sorted({x for a, b, _, _ in rects for x in (a, b)}):
            if not points or x - points[-1] > tol:
                points.append(x)
        depth = np.zeros(len(points) - 1)
        for a, b, f, _ in rects:
            for m in range(len(points) - 1):
                if points[m] >= a - tol and points[m + 1] <= b + tol:
                    depth[m] += f
        while (depth > 1e-12).any():
            m0 = int(np.argmax(depth > 1e-12))
            m1 = m0
            while m1 + 1 < depth.size and depth[m1 + 1] > 1e-12:
                m1 += 1
            f = float(depth[m0:m1 + 1].min())
            out.append((k, points[m0], points[m1 + 1], f))
            depth[m0:m1 + 1] -= f
            depth[np.abs(depth) <= 1e-12] = 0.0
    return out


def improve_units(sides: Sequence[Side], units: Sequence[tuple[int, int, Rect, float]], allowed,
                  required, tol: float, rng: np.random.Generator, seconds: float
                  ) -> tuple[list[tuple[int, int, Rect, float]], int]:
    """The units after moves that re-place a neighbourhood while time is left (no more units than given,
    counted after :func:`heatloom.network.utility_tails.join_utility_tails`).

    Parameters
    ----------
    sides : sequence of Side
    units : sequence of (int, int, Rect, float)
        A placement of all of the sides: (hot index, cold index, rectangles, duty [kW]).
    allowed : set of (str, str)
        Pairs that may be matched (forbidden ones left out).
    required : set of (str, str)
        Pairs the placement has and must keep.
    tol : float
        Heat below which a piece is placed [kW].
    rng : numpy.random.Generator
        Source of the moves (a fixed seed gives the same moves).
    seconds : float
        Wall-clock time for the moves [s].

    Returns
    -------
    (list of (int, int, Rect, float), int)
        The units and the number of moves tried [-].
    """
    from .pieces import Pieces
    from .tickoff import tick_off_search

    best = list(units)
    best_count = len(join_utility_tails(sides, best, tol))
    start = time.monotonic()
    moves = 0
    while time.monotonic() - start < seconds and len(best) > 1:
        moves += 1
        first = best[int(rng.integers(len(best)))]
        chosen = {first[0], first[1]}
        size = int(rng.integers(2, MOST_SIDES + 1))
        while len(chosen) < size:
            border = [u for u in best if (u[0] in chosen) != (u[1] in chosen)]
            if not border:
                break
            u = border[int(rng.integers(len(border)))]
            chosen |= {u[0], u[1]}
        removed = [u for u in best if u[0] in chosen or u[1] in chosen]
        kept = [u for u in best if not (u[0] in chosen or u[1] in chosen)]
        pieces = Pieces.from_pieces(sides, holes(sides, removed, tol))
        steps, state = tick_off_search(sides, allowed, set(), tol, rng, 0.3 * rng.random(), int(rng.integers(8)),
                                       int(rng.choice([1, 4])), int(rng.integers(4)), start=pieces,
                                       deadline=min(start + seconds, time.monotonic() + MOVE_SHARE * seconds + 0.5))
        if any(state.left(k) > tol for k in range(len(state.side))):
            continue
        new = merge_units(sides, kept + [(i, j, unit, q) for i, j, unit, q, _ in steps])
        names = {(sides[i].name, sides[j].name) for i, j, _, _ in new}
        count = len(join_utility_tails(sides, new, tol))
        if count <= best_count and required <= names:
            best, best_count = new, count
    return best, moves
