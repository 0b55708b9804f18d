"""Placing what the tick-off steps left: units interval by interval, or by the stagewise MILP when small.

The tick-off method (:mod:`heatloom.network.tickoff`) stops when no step keeps ΔTmin and the leftover
targets; what is left is a set of stream pieces (a stretch of a stream at a share of its flow) and
utility loads whose cascade still meets the targets.  They are placed interval by interval
(:func:`heatloom.network.placement.interval_placement`), which always succeeds on such a remainder without
forbidden pairs, and, when a solver time is given and there are few pieces, by the stagewise MILP of
:func:`heatloom.network.placement.stage_model`; the placement with fewer units is kept.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from .placement import PlacedUnit, Side, interval_placement, stage_model
from .solvers import SolveReport, solve

__all__ = ["REMAINDER_MILP_SIDES", "place_remainder"]

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
            if placed is None or len(milp) < len(placed):
                placed = milp
    if placed is None:
        return None, reports
    out = []
    for u in placed:
        (hn, fh), (cn, fc) = origin[u.hot], origin[u.cold]
        out.append(PlacedUnit(hn, cn, 0, u.duty, u.hot_in, u.hot_out, u.cold_in, u.cold_out,
                              u.hot_fraction * fh, u.cold_fraction * fc))
    return out, reports
