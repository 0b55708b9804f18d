"""Pieces of the sides of a pinch region and their problem-table cascade (the state of the tick-off method).

What the tick-off method (:mod:`heatloom.network.tickoff`) has still to place is a list of pieces: each a
stretch [a, b] of a side's enthalpy (counted from its inlet at full flow) carried by a share f of its
flow, a utility one piece of its load.  Their cascade — the heat the hot pieces release above each
shifted temperature less the heat the cold pieces take there — must stay non-negative for the pieces to
be placed at the energy targets (the problem table of Linnhoff & Flower 1978, on pieces).

References
----------
.. [1] Linnhoff, B., Flower, J. R. (1978). Synthesis of heat exchanger networks: I. Systematic generation
   of energy optimal networks. AIChE Journal 24(4), 633-642. doi:10.1002/aic.690240411
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .placement import Side

__all__ = ["Pieces", "cascade_feasible", "cascade_points", "cascade_residual", "heat_above", "shifted_offset"]


class Pieces:
    """What is left: pieces of the sides, each a stretch [a, b] of a side's enthalpy (from its inlet, at
    full flow) carried by a share f of its flow; a utility is one piece of its duty.

    Attributes
    ----------
    sides : list of Side
    side : list of int
        Each piece's side (index into ``sides``).
    a, b : list of float
        Each piece's stretch [kW]; for a utility (0, its load).
    f : list of float
        Each piece's share of its side's flow [-].

    Examples
    --------
    >>> p = Pieces([Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)])
    >>> p.left(0), Pieces.from_pieces(p.sides, [(0, 50.0, 150.0, 0.5)]).left(0)
    (200.0, 50.0)
    """

    def __init__(self, sides: Sequence[Side]):
        self.sides = list(sides)
        self.side = list(range(len(sides)))
        self.a = [0.0] * len(sides)
        self.b = [float(s.duty) for s in sides]
        self.f = [1.0] * len(sides)

    @classmethod
    def from_pieces(cls, sides: Sequence[Side], pieces: Sequence[tuple[int, float, float, float]]) -> Pieces:
        """Pieces given as (side index, stretch start [kW], stretch end [kW], share [-])."""
        out = cls.__new__(cls)
        out.sides = list(sides)
        out.side = [int(p[0]) for p in pieces]
        out.a = [float(p[1]) for p in pieces]
        out.b = [float(p[2]) for p in pieces]
        out.f = [float(p[3]) for p in pieces]
        return out

    def copy(self) -> Pieces:
        out = Pieces.__new__(Pieces)
        out.sides = self.sides
        out.side, out.a, out.b, out.f = list(self.side), list(self.a), list(self.b), list(self.f)
        return out

    def left(self, k: int) -> float:
        return self.f[k] * (self.b[k] - self.a[k])

    def of(self, k: int) -> Side:
        return self.sides[self.side[k]]


def shifted_offset(side: Side) -> float:
    return -side.shift if side.hot else side.shift


def heat_above(side: Side, a: float, b: float, f: float, points: np.ndarray) -> np.ndarray:
    """Heat of a piece (stretch [a, b], flow share f) released (hot) or taken (cold) above each shifted
    point [kW]."""
    if side.utility:
        if side.hot:   # counted from its coldest shifted temperature down
            return np.where(points < min(side.temperatures) - side.shift, b - a, 0.0)
        return np.where(points <= max(side.temperatures) + side.shift, b - a, 0.0)
    t = np.asarray(side.temperatures, float)
    e = np.asarray(side.enthalpies, float)
    if t[0] > t[-1]:
        t, e = t[::-1], e[::-1]
    h = np.interp(points - shifted_offset(side), t, e)   # heat from the inlet to that temperature, clipped
    if side.hot:
        return f * (np.clip(h, a, b) - a)
    return f * (b - np.clip(h, a, b))


def cascade_points(state: Pieces, tol: float) -> np.ndarray:
    pts = []
    for k in range(len(state.side)):
        if state.left(k) <= tol:
            continue
        s, a, b = state.of(k), state.a[k], state.b[k]
        if s.utility:
            pts.append(min(s.temperatures) - s.shift if s.hot else max(s.temperatures) + s.shift)
            continue
        sh = shifted_offset(s)
        pts += [s.temperature(a) + sh, s.temperature(b) + sh]
        pts += [t + sh for t, e in zip(s.temperatures, s.enthalpies) if a < e < b]
    return np.unique(np.asarray(pts, float))


def cascade_residual(state: Pieces, points: np.ndarray, tol: float) -> np.ndarray:
    r = np.zeros(points.size)
    for k in range(len(state.side)):
        if state.left(k) > tol:
            s = state.of(k)
            r += (1.0 if s.hot else -1.0) * heat_above(s, state.a[k], state.b[k], state.f[k], points)
    return r


def cascade_feasible(sides: Sequence[Side], tol: float | None = None) -> bool:
    """True when the sides' cascade carries no negative heat past any shifted temperature.

    Hot utilities count from their coldest shifted temperature down and cold utilities from their hottest
    up (the conservative reading: any unit the cascade promises keeps ΔTmin over the utility's range).

    Parameters
    ----------
    sides : sequence of Side
    tol : float, optional
        Heat allowed below zero [kW]; 1e-7 of the largest duty when None.

    Examples
    --------
    >>> h = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
    >>> cascade_feasible([h, Side("C", False, (40.0, 120.0), (0.0, 200.0), 5.0)])
    True
    >>> cascade_feasible([h, Side("C", False, (140.0, 150.0), (0.0, 200.0), 5.0)])
    False
    """
    state = Pieces(sides)
    scale = max(max((s.duty for s in sides), default=1.0), 1.0)
    tol = 1e-7 * scale if tol is None else tol
    return bool((cascade_residual(state, cascade_points(state, 0.0), 0.0) >= -tol).all())
