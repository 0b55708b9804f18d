"""Fewer units for the same heat-load distribution: a stretch of a stream re-split one branch per partner.

The units of a pinch region placed by the tick-off method (:mod:`heatloom.network.tickoff`) are
rectangles on their sides: each takes a stretch [a, b] of a side's enthalpy (counted from its inlet at
full flow) at a share f of its flow, so its duty is f·(b − a) and its terminal temperatures are those of
the stretch's ends.  Every point of a side's enthalpy is covered by units whose shares add up to one: the
stream splits and remixes where needed (isothermally: the branches meeting at an enthalpy point are at
the stream's temperature there).  Any set of units that keeps that cover on every side keeps every
stream's balance and every utility duty, so the energy targets hold.

When no tick-off step is accepted the method places partial units, and a stream often ends up matched
alternately, in small pieces, against two to five partners — a staircase that approximates parallel
branches with many units.  :func:`merge_units` looks on each process side for a *block*: a stretch
[A, B] covered at a constant share F by the units lying inside it.  A partner whose units in the block
form one rectangle on the partner's side (the same stretch, shares added; or one share, stretches end to
end; any units of a utility) gets one unit; the units of another partner stay units of their own.  When
that leaves fewer units, they are laid out again along [A, B]: in the order in which they need to end
(the partner of the hottest inlet first along a hot stream, of the coldest along a cold one), cut into
consecutive groups that follow one another at share F, the members of a group in parallel branches over
the group's stretch with shares in proportion to their loads — all in parallel first, all in series
next, then the other groupings (up to seven units) — and the first layout whose every unit keeps the
sum of its sides' shifts at both ends and at every inner breakpoint replaces the block.  Two units of
one pair that touch on both sides are the smallest block.  Blocks removing most units go first, until
none is left.  This is the rule of the pinch design method that a stream split lets one stream serve several
partners with one unit each (Linnhoff & Hindmarsh 1983, section 4, stream splitting).

References
----------
.. [1] Linnhoff, B., Hindmarsh, E. (1983). The pinch design method for heat exchanger networks. Chemical
   Engineering Science 38(5), 745-763. doi:10.1016/0009-2509(83)80185-7
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .placement import Side

__all__ = ["Rect", "merge_units", "unit_approach", "approach_shortfalls"]

Rect = tuple[float, float, float, float, float, float]
"""A unit on its two sides: (hot stretch start, hot stretch end, hot share, cold stretch start, cold stretch
end, cold share) — stretches in kW of the side's enthalpy from its inlet at full flow, shares in [-]; a
utility side's stretch is (0, duty) at share 1."""


def unit_approach(hs: Side, h0: float, h1: float, fh: float, cs: Side, c0: float, c1: float, fc: float
                  ) -> float:
    """Smallest hot-minus-cold temperature over a counter-current unit, less the approach it needs [K].

    The hot side runs over its enthalpy stretch [h0, h1] at flow share fh, the cold side over [c0, c1] at
    share fc (the same heat); the hot inlet end meets the cold outlet end.  The profiles are piecewise
    linear, so the ends and the sides' inner breakpoints are checked.

    Parameters
    ----------
    hs, cs : Side
        Hot and cold side.
    h0, h1, c0, c1 : float
        Stretches of the sides' enthalpy from their inlets at full flow [kW].
    fh, fc : float
        Shares of the sides' flows [-].

    Returns
    -------
    float
        [K]; negative where ΔTmin (the sum of the sides' shifts) is broken; −inf for two utilities.

    Examples
    --------
    Invented: H 150→50 °C (2 kW/K), C 20→120 °C (2 kW/K), shifts 5 K each: counter-current over the
    whole streams the approach is 30 K everywhere, 20 K above ΔTmin.

    >>> h = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
    >>> c = Side("C", False, (20.0, 120.0), (0.0, 200.0), 5.0)
    >>> unit_approach(h, 0.0, 200.0, 1.0, c, 0.0, 200.0, 1.0)
    20.0
    """
    q = fh * (h1 - h0)
    need = hs.shift + cs.shift
    if hs.utility and cs.utility or q <= 0:
        return -np.inf if hs.utility and cs.utility else 0.0
    xs = {0.0, q}
    if not hs.utility:
        xs |= {fh * (e - h0) for e in hs.enthalpies if h0 < e < h1}
    if not cs.utility:
        xs |= {fc * (c1 - e) for e in cs.enthalpies if c0 < e < c1}
    worst = np.inf
    for x in xs:   # x: heat from the unit's hot end
        if hs.utility:   # a utility's own flow runs linearly over its whole range
            th = max(hs.temperatures) - (max(hs.temperatures) - min(hs.temperatures)) * x / q
        else:
            th = hs.temperature(h0 + x / fh)
        if cs.utility:
            tc = max(cs.temperatures) - (max(cs.temperatures) - min(cs.temperatures)) * x / q
        else:
            tc = cs.temperature(c1 - x / fc)
        worst = min(worst, th - tc - need)
    return float(worst)


def approach_shortfalls(units, hot: Sequence[Side], cold: Sequence[Side]) -> list:
    """The placed units (:class:`heatloom.network.placement.PlacedUnit`) whose smallest approach, at the ends
    and at every inner breakpoint of a segmented side (:func:`unit_approach`), is below what they need.

    The stagewise placement model keeps the approach at the stage boundaries only, so a unit spanning a
    segment break of a stream whose profile bends towards its partner can pass below it there.
    """
    by_name = {(s.name, s.hot): s for s in (*hot, *cold)}
    out = []
    for u in units:
        hs, cs = by_name[u.hot, True], by_name[u.cold, False]
        # stretches of each side's enthalpy at full flow; a utility's own flow spans the unit's duty
        h0, h1 = (0.0, u.duty) if hs.utility else (hs.enthalpy(u.hot_in), hs.enthalpy(u.hot_out))
        c0, c1 = (0.0, u.duty) if cs.utility else (cs.enthalpy(u.cold_in), cs.enthalpy(u.cold_out))
        fh = 1.0 if hs.utility else u.duty / max(h1 - h0, 1e-300)
        fc = 1.0 if cs.utility else u.duty / max(c1 - c0, 1e-300)
        if unit_approach(hs, h0, h1, fh, cs, c0, c1, fc) < -1e-6:   # K, the tolerance of check_network
            out.append(u)
    return out


def _union(parts: list[tuple[float, float, float]], etol: float) -> tuple[float, float, float] | None:
    """One rectangle (start, end, share) for a partner's pieces, or None: the same stretch (shares add), or
    one share with the stretches end to end."""
    s0, s1, _ = parts[0]
    if all(abs(a - s0) <= etol and abs(b - s1) <= etol for a, b, _ in parts):
        return s0, s1, sum(f for _, _, f in parts)
    f0 = parts[0][2]
    if any(abs(f - f0) > 1e-9 * f0 for _, _, f in parts):
        return None
    chain = sorted(parts)
    if any(abs(chain[k][1] - chain[k + 1][0]) > etol for k in range(len(chain) - 1)):
        return None
    return chain[0][0], chain[-1][1], f0


def _blocks(sides: Sequence[Side], units: list[tuple[int, int, Rect, float]], s: int, etol: float):
    """Yield (gain, members, new units) for the blocks of side ``s`` whose re-split keeps ΔTmin, largest
    possible gain first."""
    mine = []   # (unit index, start, end, share, partner, partner's (start, end, share))
    for k, (i, j, r, _) in enumerate(units):
        if i == s:
            mine.append((k, r[0], r[1], r[2], j, (r[3], r[4], r[5])))
        elif j == s:
            mine.append((k, r[3], r[4], r[5], i, (r[0], r[1], r[2])))
    if len(mine) < 2:
        return
    points: list[float] = []
    for e in sorted(p for m in mine for p in (m[1], m[2])):
        if not points or e - points[-1] > etol:
            points.append(e)
    found = []
    for a in range(len(points) - 1):
        for b in range(a + 1, len(points)):
            A, B = points[a], points[b]
            block = [m for m in mine if m[1] >= A - etol and m[2] <= B + etol]
            if len(block) < 2:
                continue
            cover = [sum(m[3] for m in block if m[1] <= lo + etol and m[2] >= hi - etol)
                     for lo, hi in zip(points[a:b], points[a + 1:b + 1])]
            F = cover[0]
            if not F > 0 or any(abs(c - F) > 1e-9 * F for c in cover):
                continue
            partners: dict[int, list] = {}
            for m in block:
                partners.setdefault(m[4], []).append(m)
            jobs = []   # (partner, its rectangle, load): one per partner whose pieces join into one
            for p, ms in partners.items():
                load = sum(units[m[0]][3] for m in ms)
                rect = (0.0, load, 1.0) if sides[p].utility else _union([m[5] for m in ms], etol)
                if rect is not None:
                    jobs.append((p, rect, load))
                else:
                    jobs += [(p, m[5], units[m[0]][3]) for m in ms]
            if len(jobs) < len(block):
                found.append((len(block) - len(jobs), A, B, F, [m[0] for m in block], jobs))
    for gain, A, B, F, members, jobs in sorted(found, key=lambda x: -x[0]):
        new = _resplit(sides, s, A, B, F, jobs)
        if new is not None:
            yield gain, members, new


_ARRANGED = 7
"""Most units of a block for which every grouping in series of parallel branches is tried [-] (2^(n−1)
groupings; above it only all parallel, all in series, and the utility in series after the rest)."""


def _resplit(sides, s, A, B, F, jobs):
    """The block's new units, or None when no arrangement keeps ΔTmin.

    The jobs are ordered by how early along the stretch they need to end (a hot stretch: the partner of
    the hottest inlet first; a cold one: the partner of the coldest inlet first), then cut into
    consecutive groups: the groups follow one another along [A, B] at share F, the members of a group
    run in parallel over the group's stretch with shares in proportion to their loads.  The first
    grouping (all parallel first, all in series next) whose units all keep ΔTmin is taken.
    """
    side = sides[s]

    def oriented(p, s0, s1, share, rect, load):
        if side.hot:
            return (s, p, (s0, s1, share, *rect), load)
        return (p, s, (*rect, s0, s1, share), load)

    def inlet(job):
        p, rect, _ = job
        other = sides[p]
        if other.utility:
            return max(other.temperatures) if other.hot else min(other.temperatures)
        return other.temperature(rect[0])

    order = sorted(jobs, key=inlet, reverse=side.hot)
    n = len(order)
    if n <= _ARRANGED:
        cuts = sorted(range(2 ** (n - 1)), key=lambda c: (bin(c).count("1") not in (0, n - 1), c))
    else:
        util = sum(1 for p, _, _ in order if sides[p].utility)
        cuts = [0, 2 ** (n - 1) - 1] + ([(1 << util) - 1] if 0 < util < n else [])   # utilities last
    for cut in cuts:
        groups, current = [], [order[0]]
        for k in range(1, n):
            if cut >> (n - 1 - k) & 1:
                groups.append(current)
                current = []
            current.append(order[k])
        groups.append(current)
        new, x = [], A
        for g, group in enumerate(groups):
            total = sum(load for _, _, load in group)
            end = B if g == len(groups) - 1 else x + total / F
            new += [oriented(p, x, end, F * load / total, rect, load) for p, rect, load in group]
            x = end
        if all(unit_approach(sides[i], *r[:3], sides[j], *r[3:]) >= -1e-9 for i, j, r, _ in new):
            return new
    return None


def merge_units(sides: Sequence[Side], units: Sequence[tuple[int, int, Rect, float]]
                ) -> list[tuple[int, int, Rect, float]]:
    """The units with every block of a process side re-split, one unit per partner, while ΔTmin holds.

    Parameters
    ----------
    sides : sequence of Side
        The sides of the region.
    units : sequence of (int, int, Rect, float)
        (hot side index, cold side index, the unit on its sides, duty [kW]).

    Returns
    -------
    list of (int, int, Rect, float)
        The same cover of every side, as many units or fewer; every pair matched before is matched
        after (a block joins the units of each pair into one), so required matches stay.

    Examples
    --------
    Invented: H (150→50 °C, 2 kW/K) cooled alternately by C1 and C2 in four pieces of 50 kW; as two
    parallel branches of half its flow it serves each partner with one unit.

    >>> h = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
    >>> c1 = Side("C1", False, (20.0, 70.0), (0.0, 100.0), 5.0)
    >>> c2 = Side("C2", False, (30.0, 80.0), (0.0, 100.0), 5.0)
    >>> staircase = [(0, 1, (0.0, 50.0, 1.0, 50.0, 100.0, 1.0), 50.0), (0, 2, (50.0, 100.0, 1.0, 50.0, 100.0, 1.0), 50.0),
    ...              (0, 1, (100.0, 150.0, 1.0, 0.0, 50.0, 1.0), 50.0), (0, 2, (150.0, 200.0, 1.0, 0.0, 50.0, 1.0), 50.0)]
    >>> sorted(merge_units([h, c1, c2], staircase))
    [(0, 1, (0.0, 200.0, 0.5, 0.0, 100.0, 1.0), 100.0), (0, 2, (0.0, 200.0, 0.5, 0.0, 100.0, 1.0), 100.0)]
    """
    units = list(units)
    scale = max(max((s.duty for s in sides), default=1.0), 1.0)
    etol = 1e-9 * scale
    while True:
        best = None
        for s, side in enumerate(sides):
            if side.utility:
                continue
            for gain, members, new in _blocks(sides, units, s, etol):
                if gain > 0 and (best is None or gain > best[0]):
                    best = (gain, members, new)
        if best is None:
            return units
        _, members, new = best
        gone = set(members)
        units = [u for k, u in enumerate(units) if k not in gone] + new
