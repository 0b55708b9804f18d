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
* the next position starts at the lowest inlet left (after the branches mix).

When the temperatures leave a stream ambiguous (the walk cannot place every unit), the order falls back to
the grid order of the placement (:func:`grid_key`: stage, then temperature), where the units of one stage
with a fraction below 1 are the branches of one split, one unit each.

:func:`stream_positions` gives each unit its position along its hot and cold stream, :func:`stream_branches`
its branch label and place on the branch (the ``hot_branch``/``cold_branch`` columns of the units table).
"""

from __future__ import annotations

__all__ = ["grid_key", "stream_order", "stream_positions", "stream_branches"]

TEMPERATURE_MATCH = 1e-5
"""Largest difference between one unit's outlet and the next unit's inlet that still links them [K]."""

FRACTION_MATCH = 1e-6
"""Largest difference between the fractions of two units of one branch, and of the sum of a split's
fractions from 1 [-]."""

_REGION_RANK = {"above": 0, "whole": 0, "below": 2}


def grid_key(unit) -> tuple[int, int]:
    """Left-to-right place of a unit on the grid diagram [-]: pinch region (above or whole, then below)
    and stage of the placement, hot end first; a lower key comes first from every hot stream's supply end
    and last from every cold stream's supply end.

    Examples
    --------
    >>> from heatloom.network.structure import Cooler, Heater
    >>> grid_key(Heater("C", "steam", 100.0, 50, 90, 180, 179, stage=1)) < grid_key(
    ...     Cooler("H", "water", 80.0, 60, 40, 20, 30, stage=0, region="below"))
    True
    """
    return (_REGION_RANK.get(unit.region, 1), unit.stage)


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


def _walk(units: list[tuple[int, object]], side: str) -> list[list[list[str]]] | None:
    """Positions → branches → unit names along one stream by its temperatures; None when ambiguous."""
    left = sorted(units, key=lambda p: (_progress(p[1], side)[0], grid_key(p[1]), p[0]))
    out: list[list[list[str]]] = []

    def heads_at(t: float, pool) -> list:
        return [p for p in pool if _split(p[1], side) and abs(_progress(p[1], side)[0] - t) <= TEMPERATURE_MATCH]

    while left:
        first = left[0]
        if not _split(first[1], side):
            out.append([[first[1].name]])
            left.pop(0)
            continue
        t = _progress(first[1], side)[0]
        heads = heads_at(t, left)
        if abs(sum(_fraction(p[1], side) for p in heads) - 1.0) > FRACTION_MATCH or len(heads) < 2:
            return None
        taken = {id(p) for p in heads}
        rest = [p for p in left if id(p) not in taken]
        branches = []
        for head in heads:
            chain, f = [head], _fraction(head[1], side)
            while True:
                end = _progress(chain[-1][1], side)[1]
                if len(heads_at(end, rest)) > 1 and abs(sum(_fraction(p[1], side) for p in heads_at(end, rest))
                                                        - 1.0) <= FRACTION_MATCH:
                    break   # a new split starts where this branch ends
                nxt = [p for p in rest if _split(p[1], side) and abs(_fraction(p[1], side) - f) <= FRACTION_MATCH
                       and abs(_progress(p[1], side)[0] - end) <= TEMPERATURE_MATCH]
                if not nxt:
                    break
                step = min(nxt, key=lambda p: (abs(_progress(p[1], side)[0] - end), grid_key(p[1]), p[0]))
                chain.append(step)
                rest = [p for p in rest if p is not step]
            branches.append([p[1].name for p in chain])
        out.append(branches)
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


def stream_order(network) -> dict[tuple[str, str], list[list[list[str]]]]:
    """(side, stream) → the stream's units from its supply end: a list of positions, each a list of
    branches, each a list of unit names in series (one branch of one unit where the stream is not split).

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
    """
    on: dict[tuple[str, str], list[tuple[int, object]]] = {}
    for i, u in enumerate((*network.exchangers, *network.heaters, *network.coolers)):
        for side in _sides(u):
            on.setdefault((side, getattr(u, side)), []).append((i, u))
    return {key: _walk(units, key[0]) or _by_grid(units, key[0]) for key, units in on.items()}


def stream_positions(network) -> dict[str, tuple[int | None, int | None]]:
    """Unit name → (position along its hot process stream, along its cold process stream) from the
    stream's supply end, 1, 2, ... [-]; None on a utility side (:func:`stream_order`).

    The parallel branches of one split share one position: that is how the network table
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
    for (side, _), positions in stream_order(network).items():
        for k, branches in enumerate(positions, start=1):
            for chain in branches:
                for name in chain:
                    out[name][0 if side == "hot" else 1] = k
    return {name: (a, b) for name, (a, b) in out.items()}


def stream_branches(network) -> dict[str, tuple[tuple[int, int] | None, tuple[int, int] | None]]:
    """Unit name → (branch on its hot stream, branch on its cold stream), each (branch number in its split,
    place on the branch from the split) [-], 1-based; None where the unit is not on a split branch.

    Examples
    --------
    >>> from heatloom.network.structure import Exchanger, Network
    >>> a = Exchanger("H1", "C1", 25.0, 150, 100, 40, 60, hot_fraction=0.25, stage=0, name="A")
    >>> b = Exchanger("H1", "C2", 45.0, 150, 130, 50, 95, hot_fraction=0.75, stage=1, name="B")
    >>> c = Exchanger("H1", "C3", 67.5, 130, 100, 30, 97.5, hot_fraction=0.75, stage=2, name="C")
    >>> stream_branches(Network((a, b, c), (), (), 10.0))
    {'A': ((1, 1), None), 'B': ((2, 1), None), 'C': ((2, 2), None)}
    """
    out = {u.name: [None, None] for u in (*network.exchangers, *network.heaters, *network.coolers)}
    for (side, _), positions in stream_order(network).items():
        for branches in positions:
            if len(branches) < 2:
                continue
            for b, chain in enumerate(branches, start=1):
                for k, name in enumerate(chain, start=1):
                    out[name][0 if side == "hot" else 1] = (b, k)
    return {name: (a, b) for name, (a, b) in out.items()}
