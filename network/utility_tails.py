"""One utility unit for the branches of a stream that all end in that utility (non-isothermal mixing).

The tick-off method (:mod:`heatloom.network.tickoff`) places units as rectangles on their sides (a stretch
of a side's enthalpy at a share of its flow, :data:`heatloom.network.merge.Rect`) with isothermal mixing:
where a stream is split, each branch that is not ticked off by a process unit ends in a cooler (a hot
stream) or a heater (a cold stream) of its own, so a stream split into *k* branches below the pinch may
carry *k* coolers.  When the units of one utility on one process side form a *tail* — along the flow
(from the stream's inlet) the share of the side's flow passing through them never falls until they all
end at one point *b* — every branch that enters the tail stays in that utility until *b*.  The branches
may then be mixed as they leave the process units (at different temperatures: non-isothermal mixing, the
mixed enthalpy the flow-weighted sum) and cooled or heated to *b* in one unit:

* share F of the flow: the tail's share at *b* [-];
* duty: the sum of the joined units' duties [kW], so the stream's balance and the utility's duty stay;
* inlet: the stretch start ``b − duty / F`` [kW] (the mixed enthalpy), its temperature from the
  stream's profile, so a stream of several segments mixes on its enthalpy, not on its temperature.

A branch leaving its last process unit at a hotter (hot stream) or colder (cold stream) point than the
mix only loses driving force it did not need, and the joined unit is kept only when it keeps the sum of
its sides' shifts at both ends and at every inner breakpoint (:func:`heatloom.network.merge.unit_approach`,
with the utility over its whole range, as the tick-off method checks every utility unit).  Nothing else
changes, so the energy targets hold.  One utility unit per stream, at its end after its process
matches, is *common practice*; the stream splits at the pinch it follows are those of the pinch design
method (Linnhoff & Hindmarsh 1983).  The joined rectangles no longer cover their side as the isothermal
model does, so the join is the last step of a placement (the searches and moves only count with it).

References
----------
.. [1] Linnhoff, B., Hindmarsh, E. (1983). The pinch design method for heat exchanger networks. Chemical
   Engineering Science 38(5), 745-763. doi:10.1016/0009-2509(83)80185-7
"""

from __future__ import annotations

from collections.abc import Sequence

from .merge import Rect, unit_approach
from .placement import Side

__all__ = ["join_utility_tails"]


def join_utility_tails(sides: Sequence[Side], units: Sequence[tuple[int, int, Rect, float]], tol: float
                       ) -> list[tuple[int, int, Rect, float]]:
    """The units with the tail of every utility on every process side joined into one unit.

    Parameters
    ----------
    sides : sequence of Side
        The sides of a pinch region (process parts and utilities).
    units : sequence of (int, int, Rect, float)
        (hot side index, cold side index, rectangles, duty [kW]); a utility's rectangle is (start, end, 1)
        within its load.
    tol : float
        Stretch ends closer than this are one point [kW].

    Returns
    -------
    list of (int, int, Rect, float)
        The units, fewer where a tail was joined; the others unchanged and in their order, each joined
        unit in the place of the first of its units.

    Examples
    --------
    Invented: H 150→50 °C (2 kW/K, 200 kW) split in halves; one half is cooled against a process stream
    from 150 to 100 °C (50 kW), the other from 150 to 75 °C (75 kW); each half then goes to a cooler
    (cold utility at 20 °C), 100→50 °C (50 kW) and 75→50 °C (25 kW).  The halves leave at 100 and 75 °C,
    mix at 87.5 °C (CP 2 kW/K, 75 kW above 50 °C) and one cooler takes the 75 kW.

    >>> h = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
    >>> cu = Side("cw", False, (20.0, 20.0), (0.0, 75.0), 5.0, utility=True)
    >>> out = join_utility_tails([h, cu], [(0, 1, (100.0, 200.0, 0.5, 0.0, 50.0, 1.0), 50.0),
    ...                                    (0, 1, (150.0, 200.0, 0.5, 50.0, 75.0, 1.0), 25.0)], 1e-9)
    >>> [(i, j, r, q) for i, j, r, q in out]
    [(0, 1, (125.0, 200.0, 1.0, 0.0, 75.0, 1.0), 75.0)]
    >>> h.temperature(125.0)
    87.5
    """
    units = list(units)
    groups: dict[tuple[int, int], list[int]] = {}
    for k, (i, j, _, _) in enumerate(units):
        if sides[i].utility != sides[j].utility:
            s, u = (j, i) if sides[i].utility else (i, j)
            groups.setdefault((s, u), []).append(k)
    replace: dict[int, tuple[int, int, Rect, float] | None] = {}
    for (s, u), members in groups.items():
        if len(members) < 2:
            continue
        for tail in _tails(units, s, members, tol):
            joined = _joined(sides, units, s, u, tail, tol)
            if joined is not None:
                replace[tail[0]] = joined
                replace.update({k: None for k in tail[1:]})
    out = []
    for k, unit in enumerate(units):
        if k not in replace:
            out.append(unit)
        elif replace[k] is not None:
            out.append(replace[k])
    return out


def _stretch(unit: tuple[int, int, Rect, float], s: int) -> tuple[float, float, float]:
    i, _, r, _ = unit
    return (r[0], r[1], r[2]) if i == s else (r[3], r[4], r[5])


def _tails(units, s: int, members: list[int], tol: float) -> list[list[int]]:
    """The groups of ``members`` (units of one utility on process side ``s``) that are tails: connected
    stretches along which the share in the utility never falls, two units or more."""
    parts = sorted(members, key=lambda k: _stretch(units[k], s)[:2])
    groups: list[list[int]] = []
    reach = None
    for k in parts:   # connected groups: a unit starting past the furthest end so far starts a new one
        a, b, _ = _stretch(units[k], s)
        if reach is None or a > reach + tol:
            groups.append([])
            reach = b
        groups[-1].append(k)
        reach = max(reach, b)
    out = []
    for group in groups:
        if len(group) < 2:
            continue
        stretches = [_stretch(units[k], s) for k in group]
        points: list[float] = []
        for e in sorted(x for a, b, _ in stretches for x in (a, b)):
            if not points or e - points[-1] > tol:
                points.append(e)
        share = [sum(f for a, b, f in stretches if a <= lo + tol and b >= hi - tol)
                 for lo, hi in zip(points, points[1:])]
        if all(y >= x * (1 - 1e-9) for x, y in zip(share, share[1:])):
            out.append(group)
    return out


def _joined(sides, units, s: int, u: int, tail: list[int], tol: float) -> tuple[int, int, Rect, float] | None:
    """The tail's units as one, or None when it breaks ΔTmin."""
    stretches = [_stretch(units[k], s) for k in tail]
    end = max(b for _, b, _ in stretches)
    share = sum(f for _, b, f in stretches if b >= end - tol)
    duty = float(sum(units[k][3] for k in tail))
    if not share > 0:
        return None
    start = end - duty / share
    if sides[s].hot:
        i, j, rect = s, u, (start, end, share, 0.0, duty, 1.0)
    else:
        i, j, rect = u, s, (0.0, duty, 1.0, start, end, share)
    if unit_approach(sides[i], *rect[:3], sides[j], *rect[3:]) < -1e-9:
        return None
    return i, j, rect, duty
