"""The order of a designed network's units along every process stream: positions, splits and branches.

A designed :class:`~heatloom.network.structure.Network` knows each unit's terminal temperatures and flow
fractions, not the order of the units along the streams; the network table (:meth:`Network.to_frame`, read
back by a retrofit study) needs that order.  :func:`stream_order` recovers it from the temperatures, one
stream at a time, from the supply end:

* the units not on a split follow their inlet temperatures;
* the units of a split are its *heads*, units of fractions below 1 entering at one temperature whose
  fractions add up to 1, and the units that continue each head in series: a unit of the same fraction whose
  inlet is the outlet of the branch so far (a tick-off design's branch may carry several units in series);
  units entering together with fractions adding up to 1 start a new split, never continue a branch;
* branches that go on together through a unit carrying the sum of their fractions, entering at their
  mixed temperature (the flow-weighted mean of their outlets where the heat capacity flow rate is
  constant; between their outlets on a stream of several segments), form a split inside a branch, as do
  units entering together at the end of a branch with fractions adding up to the branch's;
* the next position starts at the lowest inlet left (after the branches mix).

When the temperatures leave a stream ambiguous (the walk cannot place every unit), the order falls back to
the grid order of the placement (:func:`grid_key`: stage, then temperature), where the units of one stage
with a fraction below 1 are the branches of one split, one unit each.

:func:`stream_positions` gives each unit its position along its hot and cold stream, :func:`stream_branches`
its branch labels and places on the branches (the ``hot_branch``/``hot_branch_order`` and
``cold_branch``/``cold_branch_order`` columns of the units table).
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

__all__ = ["grid_key", "stream_order", "stream_positions", "stream_branches", "unordered_streams"]

TEMPERATURE_MATCH = 1e-5
"""Largest difference between one unit's outlet and the next unit's inlet that still links them [K]."""

FRACTION_MATCH = 1e-6
"""Largest difference between the fractions of two units of one branch, and of the sum of a split's
fractions from 1 [-]."""

MAX_MIXING_SEARCH = 12
"""Most flows of one split searched for a group that mixes before a unit (all subsets: 2^n) [-]; beyond it
only the flows ending at the unit's inlet are grouped."""

MAX_MIXING_GROUPS = 200_000
"""Most groups of flows one search for a mixing group tries [-]: with many branches ending at one
temperature the groups grow as C(n, 12) (a split of 36 equal branches took 12 s); beyond it the search
gives up and the stream falls back to the grid order (:func:`unordered_streams` names it; ``design`` says so
in its notes)."""


def _region_rank(label: str) -> int:
    """Place of a pinch region from the hot end [-]: above or whole 0, between pinches k (hottest first,
    :func:`heatloom.network.transshipment.pinch_regions`) k, below after every one of them; any other
    label (a network read from a table) between above and below."""
    if label in ("above", "whole"):
        return 0
    if label == "below":
        return 1_000_000
    tail = label.rsplit(" ", 1)[-1]
    return int(tail) if label.startswith("between pinches ") and tail.isdigit() else 1


def grid_key(unit) -> tuple[int, int]:
    """Left-to-right place of a unit on the grid diagram [-]: pinch region (above or whole, the regions
    between pinches hottest first, then below) and stage of the placement, hot end first; a lower key
    comes first from every hot stream's supply end and last from every cold stream's supply end.

    Examples
    --------
    >>> from heatloom.network.structure import Cooler, Heater
    >>> grid_key(Heater("C", "steam", 100.0, 50, 90, 180, 179, stage=1)) < grid_key(
    ...     Cooler("H", "water", 80.0, 60, 40, 20, 30, stage=0, region="below"))
    True
    """
    return (_region_rank(unit.region), unit.stage)


def _sides(unit) -> tuple[str, ...]:
    """The process-stream sides of a unit: ("hot", "cold") for an exchanger, one for a heater or cooler."""
    return tuple(side for side in ("hot", "cold") if hasattr(unit, side))


def _fraction(unit, side: str) -> float:
    return float(getattr(unit, f"{side}_fraction", 1.0))


def _split(unit, side: str) -> bool:
    return _fraction(unit, side) < 1 - FRACTION_MATCH


def _progress(unit, side: str) -> tuple[float, float]:
    """(inlet, outlet) of a unit's side in a coordinate that rises from the stream's supply end [K]."""
    if side == "hot":
        return -unit.hot_in, -unit.hot_out
    return unit.cold_in, unit.cold_out


@dataclass
class _Flow:
    """A part of a split stream being followed: its fraction [-], where it ends (progress coordinate [K]),
    its items so far (unit names and inner splits) and, when it splits again, its open inner flows."""

    fraction: float
    end: float
    items: list
    inner: list | None = None


def _as_branches(flows: list[_Flow]) -> list[list]:
    """Flows → branches, each a list of unit names and inner splits (lists of branches)."""
    out = []
    for f in flows:
        out.append(f.items + ([_as_branches(f.inner)] if f.inner else []))
    return out


def _frames(flows: list[_Flow]):
    """Every list of sibling flows: the split's, and each open inner split's, outer first."""
    yield flows
    for f in flows:
        if f.inner:
            yield from _frames(f.inner)


def _near(a: float, b: float) -> bool:
    return abs(a - b) <= TEMPERATURE_MATCH


def _same(a: float, b: float) -> bool:
    return abs(a - b) <= FRACTION_MATCH


def _grow(top: list[_Flow], rest: list, side: str) -> list:
    """Follow a split from its first units: take the units that continue, split or merge its flows, and
    return the units left after its mixer.

    The units are tried from the lowest inlet on, and after each one taken the search starts again: with
    non-isothermal mixing a unit after the mixer (e.g. a cooler at the mixed temperature) can enter at a
    temperature above that of a unit still on a branch, so the first unit left is not always the next."""
    while True:
        for k, p in enumerate(rest):
            if _split(p[1], side) and _attach(top, rest, k, side):
                rest = [q for q in rest if q[1].name not in _taken(top)]
                break
        else:
            return rest


def _taken(top: list[_Flow]) -> set[str]:
    return set(_names_in(_as_branches(top)))


def _end(flow: _Flow) -> float:
    """Where a flow ends [K, progress]: its last unit's outlet, or the flow-weighted mean of its open inner
    flows' ends (their mixed temperature at a constant heat capacity flow rate)."""
    if not flow.inner:
        return flow.end
    return sum(g.fraction * _end(g) for g in flow.inner) / sum(g.fraction for g in flow.inner)


def _close(flow: _Flow) -> _Flow:
    """The flow with its open inner split mixed (appended to its items as a split)."""
    if flow.inner:
        flow.end = _end(flow)
        for g in flow.inner:
            _close(g)
        flow.items.append(_as_branches(flow.inner))
        flow.inner = None
    return flow


def _mixing(top: list[_Flow], f: float, t: float):
    """(frame, group) of flows of one frame that carry ``f`` of the stream together and mix to ``t``: the
    largest group first; None when there is none, or none among the first :data:`MAX_MIXING_GROUPS` tried."""
    tried = 0
    for frame in _frames(top):
        pool = frame
        if len(frame) > MAX_MIXING_SEARCH:   # many branches: only those ending at t (isothermal mixing)
            pool = [g for g in frame if _near(_end(g), t)]
        for size in range(min(len(pool), MAX_MIXING_SEARCH), 0, -1):
            for group in itertools.combinations(pool, size):
                tried += 1
                if tried > MAX_MIXING_GROUPS:
                    return None
                if _same(sum(g.fraction for g in group), f) and _mixes_to(group, f, t):
                    return frame, list(group)
    return None


def _replace(frame: list[_Flow], group: list[_Flow], fraction: float, t: float) -> _Flow:
    """Put in ``frame``, where ``group`` was, one flow of ``fraction`` that starts at ``t`` from those flows
    mixed (a split of them, or the one flow's items, each closed) and return it."""
    at = frame.index(group[0])
    items = [_as_branches([_close(g) for g in group])] if len(group) > 1 else _close(group[0]).items
    merged = _Flow(fraction, t, items)
    frame[:] = [g for g in frame if all(g is not h for h in group)]
    frame.insert(at, merged)
    return merged


def _attach(top: list[_Flow], rest: list, k: int, side: str) -> bool:
    """Take unit ``rest[k]`` (and the units entering with it) into the split: continuing a flow, splitting
    a flow (or flows that mix first) again, or after flows that mix; False when it fits nowhere or starts a
    new split of the whole stream."""
    x = rest[k][1]
    t, f = _progress(x, side)[0], _fraction(x, side)
    together = [p for p in rest if _split(p[1], side) and _near(_progress(p[1], side)[0], t)]
    share = sum(_fraction(p[1], side) for p in together)
    if len(together) > 1 and _same(share, 1.0):
        return False   # a new split of the whole stream, after this one has mixed
    leaves = [g for frame in _frames(top) for g in frame if g.inner is None and _near(g.end, t)]
    going = next((g for g in leaves if _same(g.fraction, f)), None)
    starts = [_Flow(_fraction(p[1], side), _progress(p[1], side)[1], [p[1].name]) for p in together]
    found = _mixing(top, share, t) if len(together) > 1 and going is None else None
    if going is not None:   # the unit continues a flow
        going.items.append(x.name)
        going.end = _progress(x, side)[1]
        return True
    if found is not None:   # units entering together split a flow, or flows that mix there, again
        frame, group = found
        if len(group) == 1 and group[0].inner is None:
            group[0].inner = starts
        else:
            _replace(frame, group, share, t).inner = starts
        return True
    found = _mixing(top, f, t)
    if found is None or (len(found[1]) == 1 and found[1][0].inner is None):
        return False
    frame, group = found   # flows that mix and go on together through the unit
    owner = next((g for g in _all_flows(top) if g.inner is frame), None)
    if owner is not None and len(group) == len(frame):   # an inner split mixes, its branch goes on
        _close(owner).items.append(x.name)
    else:
        owner = _replace(frame, group, f, t)
        owner.items.append(x.name)
    owner.end = _progress(x, side)[1]
    return True


def _mixes_to(group, f: float, t: float) -> bool:
    """Whether flows mixing can give the inlet ``t`` [K, progress]: the flow-weighted mean of their ends
    (exact for a constant heat capacity flow rate), or, on streams of several segments, any temperature
    between their ends (the enthalpy balance's mixed temperature lies there)."""
    ends = [_end(g) for g in group]
    if _near(sum(g.fraction * e for g, e in zip(group, ends)) / f, t):
        return True
    return min(ends) + TEMPERATURE_MATCH < t < max(ends) - TEMPERATURE_MATCH


def _all_flows(flows: list[_Flow]):
    for f in flows:
        yield f
        if f.inner:
            yield from _all_flows(f.inner)


def _walk(units: list[tuple[int, object]], side: str) -> list[list[list]] | None:
    """Positions → branches → items (unit names, inner splits) along one stream by its temperatures; None
    when ambiguous."""
    left = sorted(units, key=lambda p: (_progress(p[1], side)[0], grid_key(p[1]), p[0]))
    out: list[list[list]] = []
    while left:
        first = left[0]
        if not _split(first[1], side):
            out.append([[first[1].name]])
            left.pop(0)
            continue
        t = _progress(first[1], side)[0]
        heads = [p for p in left if _split(p[1], side) and _near(_progress(p[1], side)[0], t)]
        if len(heads) < 2 or not _same(sum(_fraction(p[1], side) for p in heads), 1.0):
            return None
        top = [_Flow(_fraction(p[1], side), _progress(p[1], side)[1], [p[1].name]) for p in heads]
        rest = _grow(top, [p for p in left if all(p is not q for q in heads)], side)
        out.append(_as_branches(top))
        left = rest
    return out


def _by_grid(units: list[tuple[int, object]], side: str) -> list[list[list[str]]]:
    """Positions → branches by the grid order: a split is the units of one key below a fraction of 1."""
    inlet: dict[tuple, float] = {}   # a split's inlet: its branches sort together
    for _, u in units:
        if _split(u, side):
            inlet[grid_key(u)] = min(_progress(u, side)[0], inlet.get(grid_key(u), _progress(u, side)[0]))
    if side == "hot":
        def key(p):
            return (grid_key(p[1]), inlet[grid_key(p[1])] if _split(p[1], side) else _progress(p[1], side)[0],
                    0 if _split(p[1], side) else 1, p[0])
    else:
        def key(p):
            return (tuple(-k for k in grid_key(p[1])),
                    inlet[grid_key(p[1])] if _split(p[1], side) else _progress(p[1], side)[0],
                    0 if _split(p[1], side) else 1, p[0])
    out: list[list[list[str]]] = []
    previous = None
    for _, u in sorted(units, key=key):
        group = ("split", grid_key(u)) if _split(u, side) else None
        if group is None or group != previous:
            out.append([])
        previous = group
        out[-1].append([u.name])
    return out


def _on_streams(network) -> dict[tuple[str, str], list[tuple[int, object]]]:
    """(side, stream) → (index in the network, unit) of the units on it."""
    on: dict[tuple[str, str], list[tuple[int, object]]] = {}
    for i, u in enumerate((*network.exchangers, *network.heaters, *network.coolers)):
        for side in _sides(u):
            on.setdefault((side, getattr(u, side)), []).append((i, u))
    return on


def stream_order(network) -> dict[tuple[str, str], list[list[list]]]:
    """(side, stream) → the stream's units from its supply end: a list of positions, each a list of
    branches, each a list of items in series — a unit name, or a split inside the branch (a list of
    branches again).  A position where the stream is not split is one branch of one unit.

    Parameters
    ----------
    network : Network
        A designed network with named units (``side`` is "hot" or "cold").

    Examples
    --------
    H1 split between C1 (0.25 of its flow) and a branch through C2 then C3 (0.75), then cooled:

    >>> from heatloom.network.structure import Cooler, Exchanger, Network
    >>> a = Exchanger("H1", "C1", 25.0, 150, 100, 40, 60, hot_fraction=0.25, stage=0, name="A")
    >>> b = Exchanger("H1", "C2", 45.0, 150, 130, 50, 95, hot_fraction=0.75, stage=1, name="B")
    >>> c = Exchanger("H1", "C3", 67.5, 130, 100, 30, 97.5, hot_fraction=0.75, stage=2, name="C")
    >>> d = Cooler("H1", "CW", 50.0, 100, 75, 20, 30, stage=3, region="whole", name="D")
    >>> stream_order(Network((a, b, c), (), (d,), 10.0))[("hot", "H1")]
    [[['A'], ['B', 'C']], [['D']]]

    A split inside a branch: A and B (0.3 each) mix at 100 °C and go on through E, beside C (0.4):

    >>> a = Exchanger("H1", "C1", 60.0, 150, 100, 30, 90, hot_fraction=0.3, name="A")
    >>> b = Exchanger("H1", "C2", 60.0, 150, 100, 40, 100, hot_fraction=0.3, name="B")
    >>> c = Exchanger("H1", "C3", 112.0, 150, 80, 20, 76, hot_fraction=0.4, name="C")
    >>> e = Exchanger("H1", "C3", 48.0, 100, 80, 76, 100, hot_fraction=0.6, name="E")
    >>> stream_order(Network((a, b, c, e), (), (), 10.0))[("hot", "H1")]
    [[[[['A'], ['B']], 'E'], ['C']]]
    """
    return {key: _walk(units, key[0]) or _by_grid(units, key[0]) for key, units in _on_streams(network).items()}


def unordered_streams(network) -> list[str]:
    """The streams with split units whose order the temperatures do not give (:func:`stream_order` fell back
    to the grid order for them): their units table may not read back into a retrofit study.

    Examples
    --------
    A split whose fractions add up to 0.9 (a bypass of 0.1):

    >>> from heatloom.network.structure import Exchanger, Network
    >>> a = Exchanger("H1", "C1", 25.0, 150, 100, 40, 60, hot_fraction=0.25, name="A")
    >>> b = Exchanger("H1", "C2", 45.0, 150, 130, 50, 95, hot_fraction=0.65, name="B")
    >>> unordered_streams(Network((a, b), (), (), 10.0))
    ['H1']
    """
    return [name for (side, name), units in _on_streams(network).items()
            if any(_split(u, side) for _, u in units) and _walk(units, side) is None]


def _names_in(branches: list) -> list[str]:
    out = []
    for branch in branches:
        for item in branch:
            out += _names_in(item) if isinstance(item, list) else [item]
    return out


def stream_positions(network, order: dict | None = None) -> dict[str, tuple[int | None, int | None]]:
    """Unit name → (position along its hot process stream, along its cold process stream) from the
    stream's supply end, 1, 2, ... [-]; None on a utility side (:func:`stream_order`, or ``order`` when it
    was computed already).

    The units of one split share one position: that is how the network table
    (:mod:`heatloom.io.network_table`) writes a split.

    Examples
    --------
    H1 split in stage 0 between C1 and C2 (0.6 and 0.4 of its flow), then cooled:

    >>> from heatloom.network.structure import Cooler, Exchanger, Network
    >>> a = Exchanger("H1", "C1", 60.0, 150, 100, 40, 100, hot_fraction=0.6, stage=0, name="A")
    >>> b = Exchanger("H1", "C2", 40.0, 150, 100, 50, 90, hot_fraction=0.4, stage=0, name="B")
    >>> c = Cooler("H1", "CW", 50.0, 100, 75, 20, 30, stage=1, region="whole", name="C")
    >>> stream_positions(Network((a, b), (), (c,), 10.0))
    {'A': (1, 1), 'B': (1, 1), 'C': (2, None)}
    """
    out = {u.name: [None, None] for u in (*network.exchangers, *network.heaters, *network.coolers)}
    for (side, _), positions in (order or stream_order(network)).items():
        for k, branches in enumerate(positions, start=1):
            for name in _names_in(branches):
                out[name][0 if side == "hot" else 1] = k
    return {name: (a, b) for name, (a, b) in out.items()}


def stream_branches(network, order: dict | None = None) -> dict[str, tuple[tuple | None, tuple | None]]:
    """Unit name → (its branch on its hot stream, on its cold stream): (branch numbers, places on them),
    outer split first, 1-based [-] — ``((2,), (1,))`` is the first unit on branch 2, ``((2, 1), (1, 3))`` the
    third unit on branch 1 of the split that is the first item of branch 2; None where the unit is not
    inside a split.  ``order``: :func:`stream_order` of the network when it was computed already.

    Examples
    --------
    >>> from heatloom.network.structure import Exchanger, Network
    >>> a = Exchanger("H1", "C1", 25.0, 150, 100, 40, 60, hot_fraction=0.25, stage=0, name="A")
    >>> b = Exchanger("H1", "C2", 45.0, 150, 130, 50, 95, hot_fraction=0.75, stage=1, name="B")
    >>> c = Exchanger("H1", "C3", 67.5, 130, 100, 30, 97.5, hot_fraction=0.75, stage=2, name="C")
    >>> stream_branches(Network((a, b, c), (), (), 10.0))
    {'A': (((1,), (1,)), None), 'B': (((2,), (1,)), None), 'C': (((2,), (2,)), None)}
    """
    out = {u.name: [None, None] for u in (*network.exchangers, *network.heaters, *network.coolers)}

    def mark(branches: list, side: int, labels: tuple, places: tuple) -> None:
        for b, branch in enumerate(branches, start=1):
            for k, item in enumerate(branch, start=1):
                if isinstance(item, list):
                    mark(item, side, labels + (b,), places + (k,))
                else:
                    out[item][side] = (labels + (b,), places + (k,))

    for (side, _), positions in (order or stream_order(network)).items():
        for branches in positions:
            if len(branches) > 1:
                mark(branches, 0 if side == "hot" else 1, (), ())
    return {name: (a, b) for name, (a, b) in out.items()}
