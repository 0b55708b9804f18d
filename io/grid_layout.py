"""Where a grid diagram puts a network's units: left-to-right columns and branch lanes from the order of the
units along every process stream.

:func:`heatloom.network.streamorder.stream_order` gives, for every stream, the units from its supply end:
positions, each a list of branches, each a list of items in series (a unit name, or a split inside the
branch).  On a grid diagram hot streams run left to right and cold streams right to left, so along every
stream the unit met first from the supply end is further left (hot) or further right (cold).
:func:`grid_layout` turns those precedences into one left-to-right order of the units:

* the precedences form a directed graph (a unit → the units after it on a hot stream, the units before it
  on a cold stream); hot precedences are added first, then cold ones, and a cold precedence that would close
  a cycle is dropped (a feasible network may meet two streams in crossing orders: no single order exists);
* the units entering a split together (its branches' first units) become one node where that closes no
  cycle, so a split's branches start side by side;
* the pinch region stays the primary key ("above" and "whole" left of "below", as
  :func:`~heatloom.network.streamorder.grid_key`), so the pinch line keeps its meaning; a precedence from
  below the pinch to above it cannot be kept and is dropped;
* among the orders left, the placement's order (:func:`~heatloom.network.streamorder.grid_key`, then the
  network's order) decides: a design whose stages agree with its temperatures keeps its stage order.

Every exchanger has a column of its own (its connector spans the rows between its two streams); heaters
and coolers next to each other in the order, on different streams and in one region, share one column.

A stream's lanes: its main line is lane 0; a split's branches take lanes side by side (below a hot stream,
above a cold one), the units in series on a branch stay on its lane, and a split inside a branch takes
sub-lanes from the branch's lane on (its first sub-branch on the branch's own lane).  The branches of fewer
units come first (nearer the stream's line): every connector leaves its unit towards the other half of the
diagram and crosses the lanes beyond its own, so the long branches go on the outer lanes.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import networkx as nx

from ..network.streamorder import grid_key, stream_order

__all__ = ["GridLayout", "grid_layout", "entering", "leaving", "units_in", "lane_span"]


def entering(item) -> list[str]:
    """The units where an item of a stream order starts: a unit name itself, or every first unit of a
    split's branches (a list of branches) [-].

    Examples
    --------
    >>> entering([[[["A"], ["B"]], "E"], ["C"]])
    ['A', 'B', 'C']
    """
    if isinstance(item, str):
        return [item]
    return [n for branch in item for n in entering(branch[0])]


def leaving(item) -> list[str]:
    """The units where an item of a stream order ends: a unit name itself, or every last unit of a split's
    branches [-].

    Examples
    --------
    >>> leaving([[[["A"], ["B"]], "E"], ["C", "D"]])
    ['E', 'D']
    """
    if isinstance(item, str):
        return [item]
    return [n for branch in item for n in leaving(branch[-1])]


def units_in(item) -> list[str]:
    """Every unit of an item of a stream order (a unit name, a branch or a split), in order [-].

    Examples
    --------
    >>> units_in([[[["A"], ["B"]], "E"], ["C"]])
    ['A', 'B', 'E', 'C']
    """
    if isinstance(item, str):
        return [item]
    return [n for sub in item for n in units_in(sub)]


def lane_span(item, branch: bool = False) -> int:
    """Number of lanes an item of a stream order needs: 1 for a unit, the widest item of a branch
    (``branch=True``), the sum of the branches of a split [-].

    Examples
    --------
    >>> lane_span([[[["A"], ["B"]], "E"], ["C"]])
    3
    """
    if isinstance(item, str):
        return 1
    if branch:
        return max(lane_span(i) for i in item)
    return sum(lane_span(b, branch=True) for b in item)


@dataclass(frozen=True)
class GridLayout:
    """Columns and lanes of a grid diagram.

    Attributes
    ----------
    order : tuple
        The units, left to right [-].
    column : dict
        Unit name → column, 1, 2, ... from the left; heaters and coolers may share one [-].
    columns : int
        Number of columns [-].
    along : dict
        Stream name → its :func:`~heatloom.network.streamorder.stream_order` (positions from the supply
        end, branches, items), each split's branches in lane order [-].
    lane : dict
        (stream name, unit name) → the unit's lane on the stream, 0 on the main line [-].
    lanes : dict
        Stream name → number of lanes the stream needs (1 when it never splits) [-].
    dropped : tuple
        Precedences (unit before, unit after, stream) that the columns could not keep: cold precedences
        that closed a cycle, and precedences from below the pinch to above it [-].
    """

    order: tuple
    column: dict
    columns: int
    along: dict
    lane: dict
    lanes: dict
    dropped: tuple


def _lane_order(split: list) -> list:
    """A split with its branches in lane order, inner splits too: the branches of fewer units first (a
    stable sort), so that fewer connectors cross the stream's own branch lines."""
    out = [[item if isinstance(item, str) else _lane_order(item) for item in branch] for branch in split]
    return sorted(out, key=lambda branch: len(units_in(branch)))


def _precedences(positions: list) -> tuple[list[tuple[str, str]], list[list[str]]]:
    """(unit before, unit after) along one stream from its supply end, and the groups of units entering
    a split together."""
    pairs: list[tuple[str, str]] = []
    heads: list[list[str]] = []

    def inside(split: list) -> None:
        if len(split) > 1:
            heads.append(entering(split))
        for branch in split:
            for a, b in zip(branch, branch[1:]):
                pairs.extend(itertools.product(leaving(a), entering(b)))
            for item in branch:
                if not isinstance(item, str):
                    inside(item)

    for a, b in zip(positions, positions[1:]):
        pairs.extend(itertools.product(leaving(a), entering(b)))
    for split in positions:
        inside(split)
    return pairs, heads


def grid_layout(network) -> GridLayout:
    """Left-to-right columns and branch lanes of a network's units on a grid diagram (see the module).

    Parameters
    ----------
    network : heatloom.network.Network
        A designed network with named units (every unit's name is unique) [-].

    Returns
    -------
    GridLayout

    Examples
    --------
    Invented data.  H1 splits between A (0.25 of its flow) and a branch through B then C (0.75), then it is
    cooled in D; B's stage (3) is after C's (2), against the temperatures along H1 and C2/C3:

    >>> from heatloom.network.structure import Cooler, Exchanger, Network
    >>> a = Exchanger("H1", "C1", 25.0, 150, 100, 40, 60, hot_fraction=0.25, stage=0, name="A")
    >>> b = Exchanger("H1", "C2", 45.0, 150, 130, 50, 95, hot_fraction=0.75, stage=3, name="B")
    >>> c = Exchanger("H1", "C3", 67.5, 130, 100, 30, 97.5, hot_fraction=0.75, stage=2, name="C")
    >>> d = Cooler("H1", "CW", 50.0, 100, 75, 20, 30, stage=4, region="whole", name="D")
    >>> g = grid_layout(Network((a, b, c), (), (d,), 10.0))
    >>> [u.name for u in g.order], g.column["B"] < g.column["C"]
    (['A', 'B', 'C', 'D'], True)
    >>> g.lane[("H1", "A")], g.lane[("H1", "B")], g.lane[("H1", "C")], g.lanes["H1"]
    (0, 1, 1, 2)
    """
    units = [*network.exchangers, *network.heaters, *network.coolers]
    by_name = {u.name: u for u in units}
    index = {u.name: i for i, u in enumerate(units)}
    along: dict[str, list] = {}
    hot_pairs: list[tuple[str, str, str]] = []
    cold_pairs: list[tuple[str, str, str]] = []
    groups: list[list[str]] = []
    for (side, stream), positions in stream_order(network).items():
        positions = [_lane_order(split) for split in positions]
        along[stream] = positions
        pairs, heads = _precedences(positions)
        if side == "hot":
            hot_pairs += [(a, b, stream) for a, b in pairs]
        else:
            cold_pairs += [(b, a, stream) for a, b in pairs]
        groups += heads

    rank = {n: grid_key(u)[0] for n, u in by_name.items()}
    g = nx.DiGraph()
    g.add_nodes_from(by_name)
    dropped: list[tuple[str, str, str]] = []
    for cold, pairs in ((False, hot_pairs), (True, cold_pairs)):   # (left unit, right unit, stream)
        for a, b, stream in pairs:
            if rank[a] > rank[b] or nx.has_path(g, b, a):
                dropped.append((b, a, stream) if cold else (a, b, stream))   # in the stream's order
                continue
            g.add_edge(a, b)

    members = {n: [n] for n in by_name}   # node → its units (a split's first units share a node)
    node_of = {n: n for n in by_name}
    for group in groups:
        nodes = sorted({node_of[n] for n in group}, key=lambda m: min(index[n] for n in members[m]))
        for m in nodes[1:]:
            keep = nodes[0]
            if any(rank[n] != rank[members[keep][0]] for n in members[m]) or \
                    nx.has_path(g, keep, m) or nx.has_path(g, m, keep):
                continue
            for p in list(g.predecessors(m)):
                g.add_edge(p, keep)
            for s in list(g.successors(m)):
                g.add_edge(keep, s)
            g.remove_node(m)
            for n in members.pop(m):
                members[keep].append(n)
                node_of[n] = keep

    def unit_key(n: str) -> tuple:
        return (*grid_key(by_name[n]), index[n])

    order = []
    for node in nx.lexicographical_topological_sort(g, key=lambda m: min(unit_key(n) for n in members[m])):
        order += sorted(members[node], key=unit_key)

    column: dict[str, int] = {}
    k, shared = 0, None   # shared: (region, streams) of the heaters and coolers in the current column
    for n in order:
        u = by_name[n]
        process = [getattr(u, side) for side in ("hot", "cold") if hasattr(u, side)]
        if len(process) == 1 and shared is not None and shared[0] == rank[n] and process[0] not in shared[1]:
            shared[1].add(process[0])
        else:
            k += 1
            shared = (rank[n], {process[0]}) if len(process) == 1 else None
        column[n] = k

    lane: dict[tuple[str, str], int] = {}

    def place(stream: str, split: list, base: int) -> None:
        at = base
        for branch in split:
            for item in branch:
                if isinstance(item, str):
                    lane[(stream, item)] = at
                else:
                    place(stream, item, at)
            at += lane_span(branch, branch=True)

    lanes: dict[str, int] = {}
    for stream, positions in along.items():
        for split in positions:
            place(stream, split, 0)
        lanes[stream] = max(lane_span(split) for split in positions)
    return GridLayout(tuple(by_name[n] for n in order), column, k, along, lane, lanes, tuple(dropped))
