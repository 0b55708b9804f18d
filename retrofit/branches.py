"""Positions along the streams of an existing network, stream splits included.

Along every process stream the units of an :class:`~heatloom.retrofit.existing.ExistingNetwork` have
positions 1, 2, ... from the stream's supply end.  A *stream split* is one position held by the units of
its parallel branches: each gives its branch's share of the stream's flow (``hot_fraction`` or
``cold_fraction`` below 1), and the shares of one split add up to 1.  A branch is one unit, or several units
in series that carry the same branch label (``hot_branch``/``cold_branch``) and the same fraction, in the
order of their places on it (``hot_branch_order``/``cold_branch_order``, default the order of the units); a
branch may itself split and mix again (a path of labels, :mod:`heatloom.retrofit.flowtree`).  The branches
take the stream at the temperature it has before the split and mix again after it (an adiabatic mixer: the
stream's enthalpy after the split is the sum of the branches').

A heater or cooler may sit on a branch.  When no unit comes after it in the last split of a stream it is
the stream's *trim* unit: it takes the duty that brings the mixed stream to its target (at most one such
heater or cooler in that split); elsewhere it keeps its stated duty or is rated against an isothermal
utility, as inside a stream.

Limits, refused with a located message: a bypass (a branch without a unit: the fractions of a split must
add up to 1); a position repeated without fractions below 1; the units of one branch with different
fractions; places on a branch that skip or repeat; a branch label on a unit that takes the whole stream;
two trim heaters or coolers in the last split of a stream.

:func:`resolve_positions` checks the positions, fractions and branch labels of a set of units and completes
them; :func:`stages` groups the units of one stream by position.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace

from ..errors import InputError
from ..model import Stream
from ..model.existing import ExistingUnit, UnitRole
from .flowtree import FRACTION_SUM_TOLERANCE, ends_stream, flow_steps, group_inlets, split_tree, walk_steps
from .profiles import temperature_after

__all__ = ["FRACTION_SUM_TOLERANCE", "resolve_positions", "stages", "split_inlets", "ends_stream", "branch_outlets",
           "branch_stream", "design_share", "stated_temperatures"]


def _side_of(unit: ExistingUnit, stream: str) -> str:
    return "hot" if unit.hot == stream else "cold"


def _names(units: Sequence[ExistingUnit]) -> str:
    return ", ".join(f"'{u.name}'" for u in units)


def resolve_positions(units: Sequence[ExistingUnit], streams: Mapping[str, Stream],
                      notes: list[str]) -> list[ExistingUnit]:
    """The units with their positions along every process stream checked and completed.

    Positions default to the order of the units (for a stream where none is given); given ones run 1 to
    n without gaps, and repeat only for the parallel branches of one split (see the module notes).

    Parameters
    ----------
    units : sequence of ExistingUnit
        With their roles set.
    streams : mapping
        Process stream name → :class:`~heatloom.model.Stream`.
    notes : list of str
        Receives a note when the fractions of a split are scaled to add up to 1.

    Returns
    -------
    list of ExistingUnit
        Same order; positions filled in, fractions of each split scaled to a sum of exactly 1.

    Raises
    ------
    InputError
        Located at the unit's row and the column concerned (``hot_order``/``cold_order`` or
        ``hot_fraction``/``cold_fraction``).

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> s = {x.name: x for x in StreamTable.from_arrays(["H1", "C1", "C2"], [150, 30, 40], [60, 120, 90],
    ...                                                  [2.0, 1.0, 1.0])}
    >>> units = [ExistingUnit("A", "H1", "C1", area=1.0, hot_position=1, cold_position=1, hot_fraction=0.6,
    ...                       role=UnitRole.EXCHANGER),
    ...          ExistingUnit("B", "H1", "C2", area=1.0, hot_position=1, cold_position=1, hot_fraction=0.4,
    ...                       role=UnitRole.EXCHANGER)]
    >>> [(u.name, u.hot_position, u.hot_fraction) for u in resolve_positions(units, s, [])]
    [('A', 1, 0.6), ('B', 1, 0.4)]
    """
    by_stream: dict[str, list[tuple[int, str]]] = {s: [] for s in streams}
    for i, u in enumerate(units):
        for side in ("hot", "cold"):
            attr, column = f"{side}_position", f"{side}_order"
            name = getattr(u, side)
            if name in streams:
                by_stream[name].append((i, side))
                continue
            if getattr(u, attr) is not None:
                raise InputError(f"unit '{u.name}': {column} {getattr(u, attr)} is given for utility "
                                 f"'{name}'; positions apply to process streams only (leave it empty)",
                                 row=u.row, column=column)
            if getattr(u, f"{side}_fraction") < 1.0:
                raise InputError(f"unit '{u.name}': {side} fraction {getattr(u, f'{side}_fraction'):.4g} is given "
                                 f"for utility '{name}'; fractions apply to split process streams only (leave it "
                                 "empty or 1)", row=u.row, column=f"{side}_fraction")
    units = list(units)
    for stream, members in by_stream.items():
        if not members:
            continue
        given = [(i, side, getattr(units[i], f"{side}_position")) for i, side in members]
        missing = [(i, side) for i, side, p in given if p is None]
        if missing and len(missing) < len(given):
            i, side = missing[0]
            raise InputError(f"unit '{units[i].name}' has no {side}_order on stream '{stream}' while other "
                             f"units of that stream have one; give positions for every unit of a stream "
                             "or for none", row=units[i].row, column=f"{side}_order")
        if missing:
            for i, side in members:
                f = getattr(units[i], f"{side}_fraction")
                if f < 1.0:
                    raise InputError(f"unit '{units[i].name}' takes {f:.4g} of stream '{stream}' (a split branch) "
                                     f"but no {side}_order is given on that stream; the units on the parallel "
                                     f"branches of one split share one position number: give {side}_order for "
                                     "every unit of the stream", row=units[i].row, column=f"{side}_fraction")
            for k, (i, side) in enumerate(members, start=1):
                units[i] = replace(units[i], **{f"{side}_position": k})
            continue
        groups: dict[int, list[tuple[int, str]]] = {}
        for i, side, p in given:
            groups.setdefault(p, []).append((i, side))
        for p, group in sorted(groups.items()):
            shares = _check_group(units, stream, p, group, notes)
            if shares is not None:   # a split: every unit takes its branch's share, scaled to agree exactly
                for i, side in group:
                    units[i] = replace(units[i], **{f"{side}_fraction": shares[units[i].name]})
        n = len(groups)
        what = "position(s)" if n < len(given) else "unit(s)"
        for i, side, p in given:
            if p > n:
                gaps = sorted(set(range(1, n + 1)) - set(groups))
                raise InputError(f"unit '{units[i].name}': position {p} on stream '{stream}', which has {n} {what}; "
                                 f"positions must run 1 to {n} without gaps (missing: {', '.join(map(str, gaps))})",
                                 row=units[i].row, column=f"{side}_order")
        last = [units[i] for i, _ in groups[n]]
        steps = flow_steps(last, stream, n)
        trims = [u for u in last if u.role is not UnitRole.EXCHANGER and ends_stream(u, steps)]
        if len(last) > 1 and len(trims) > 1:
            u = trims[-1]
            side = "hot" if u.hot == stream else "cold"
            raise InputError(f"the last split of stream '{stream}' has {len(trims)} heaters/coolers ({_names(trims)}) "
                             "at the ends of its branches; only one heater or cooler may take the rest of the "
                             "stream's duty there: give the others a position of their own", row=u.row,
                             column=f"{side}_order")
    return units


def _check_group(units: list[ExistingUnit], stream: str, p: int, group: list[tuple[int, str]],
                 notes: list[str]) -> dict[str, float] | None:
    """The units at one position of one stream: one unit, or the branches of one split
    (:func:`heatloom.retrofit.flowtree.split_tree`).

    Returns unit name → its fraction made consistent for a split, None for a single unit.
    """
    fractions = [getattr(units[i], f"{side}_fraction") for i, side in group]
    whole = [(i, side) for (i, side), f in zip(group, fractions) if not f < 1.0]
    if len(group) > 1 and whole:
        i, side = whole[-1] if whole[-1] != group[0] else group[1]
        first = units[group[0][0]] if (i, side) != group[0] else units[whole[0][0]]
        raise InputError(f"units '{first.name}' and '{units[i].name}' both take position {p} on stream '{stream}'; "
                         "positions along a stream must differ, except for the units on the parallel branches of "
                         f"one stream split, which give each its share of the stream ({side}_fraction below 1)",
                         row=units[i].row, column=f"{side}_order")
    for i, side in group:
        if getattr(units[i], f"{side}_branch_order") is not None and units[i].branch(stream) is None:
            places = "/".join(map(str, getattr(units[i], f"{side}_branch_order")))
            raise InputError(f"unit '{units[i].name}' gives {side}_branch_order {places} on stream '{stream}' but no "
                             f"{side}_branch: a place on a branch needs the branch's label", row=units[i].row,
                             column=f"{side}_branch_order")
    if len(group) == 1 and not fractions[0] < 1.0:
        i, side = group[0]
        if units[i].branch(stream) is not None:
            raise InputError(f"unit '{units[i].name}' gives {side}_branch {units[i].branch(stream)!r} on stream "
                             f"'{stream}' but takes the whole stream ({side} fraction 1): a branch label names a "
                             f"branch of a split; give the branch's {side}_fraction or leave the label empty",
                             row=units[i].row, column=f"{side}_branch")
        return None
    members = [units[i] for i, _ in group]
    tree, shares = split_tree(members, stream, p)
    if abs(tree.fraction - 1.0) > 1e-5:   # beyond the rounding of a table written to 6 decimals
        notes.append(f"the fractions of the split of stream '{stream}' at position {p} ({_names(members)}) "
                     f"add up to {tree.fraction:.6g}; scaled to add up to 1")
    return shares


def stages(units: Sequence[ExistingUnit], stream: str) -> tuple[tuple[ExistingUnit, ...], ...]:
    """The units along one process stream grouped by position, from its supply end [-].

    One tuple per position: a single unit, or the parallel branches of a split (in the given order).

    Examples
    --------
    >>> a = ExistingUnit("A", "H1", "C1", hot_position=1, hot_fraction=0.5)
    >>> b = ExistingUnit("B", "H1", "C2", hot_position=1, hot_fraction=0.5)
    >>> c = ExistingUnit("C", "H1", "water", hot_position=2)
    >>> [[u.name for u in g] for g in stages([c, a, b], "H1")]
    [['A', 'B'], ['C']]
    """
    out: dict[int, list[ExistingUnit]] = {}
    for u in units:
        if stream in (u.hot, u.cold):
            out.setdefault(getattr(u, f"{_side_of(u, stream)}_position"), []).append(u)
    return tuple(tuple(out[k]) for k in sorted(out))


def split_inlets(units: Sequence[ExistingUnit], streams: Sequence[str]) -> dict[tuple[str, str], tuple]:
    """(stream, unit name) → the key of the unit's inlet temperature, for the units inside splits
    (:func:`heatloom.retrofit.flowtree.flow_steps`).

    Examples
    --------
    >>> b = ExistingUnit("B", "H1", "C2", hot_position=1, hot_fraction=0.5, hot_branch="b", hot_branch_order=1)
    >>> c = ExistingUnit("C", "H1", "C3", hot_position=1, hot_fraction=0.5, hot_branch="b", hot_branch_order=2)
    >>> d = ExistingUnit("D", "H1", "C1", hot_position=1, hot_fraction=0.5)
    >>> split_inlets([b, c, d], ["H1"])[("H1", "C")]
    ('H1', 1, 'B')
    """
    out: dict[tuple[str, str], tuple] = {}
    for name in streams:
        for k, group in enumerate(stages(units, name), start=1):
            if len(group) > 1:
                out.update({(name, unit): key for unit, key in group_inlets(flow_steps(group, name, k)).items()})
    return out


def branch_outlets(known: dict, stream: Stream, k: int, t_in: float, group: Sequence[ExistingUnit]) -> None:
    """Put the outlets of the units of the split at position ``k`` into ``known`` (and of its inner mixers).

    Every unit has a stated duty; the split takes the stream at ``t_in`` [°C] (:func:`flowtree.walk_steps`).
    Keys ``(stream name, k, unit name)`` and ``(stream name, k, "mix", path)`` [°C]; nothing for a single
    unit, whose outlet is the position's.

    Examples
    --------
    >>> s = Stream.simple("H1", 150, 50, 2.0)
    >>> known = {}
    >>> branch_outlets(known, s, 1, 150.0, [ExistingUnit("A", "H1", "C1", duty=40.0, hot_fraction=0.5),
    ...                                     ExistingUnit("B", "H1", "C2", duty=10.0, hot_fraction=0.5)])
    >>> known
    {('H1', 1, 'A'): 110.0, ('H1', 1, 'B'): 140.0}
    """
    if len(group) == 1 and group[0].fraction(stream.name) >= 1.0:
        return
    temps = walk_steps(stream, flow_steps(group, stream.name, k), t_in, lambda u: u.duty)
    known.update({key: t for key, t in temps.items() if len(key) > 2})


def design_share(fraction: float) -> float:
    """A designed unit's flow fraction, taken as 1 within rounding (1e-6) [-].

    Examples
    --------
    >>> design_share(0.9999999), design_share(0.4)
    (1.0, 0.4)
    """
    return 1.0 if fraction > 1 - 1e-6 else float(fraction)


def branch_stream(stream: Stream, fraction: float) -> Stream:
    """The part of a stream that flows through a branch of this fraction: every segment's CP times it.

    Examples
    --------
    >>> branch_stream(Stream.simple("H1", 150, 50, 2.0), 0.25).duty
    50.0
    """
    if fraction >= 1.0:
        return stream
    return replace(stream, segments=tuple(replace(g, heat_capacity_flow=fraction * g.heat_capacity_flow)
                                          for g in stream.segments))


def stated_temperatures(u: ExistingUnit, known: Mapping[tuple, float], streams: Mapping[str, Stream],
                        utilities: Mapping, inlets: Mapping[tuple[str, str], tuple] | None = None
                        ) -> tuple[float, float, float, float] | None:
    """(hot in, hot out, cold in, cold out) of a unit at its stated duty [°C], or None when unknown.

    ``known`` holds the temperatures the stated duties give along the streams: ``(stream, k)`` after
    position k (mixed after a split), ``(stream, k, unit)`` a branch unit's outlet (:func:`branch_outlets`).
    ``inlets`` maps (stream, unit name) → the key of the unit's inlet inside a split (:func:`split_inlets`);
    by default a unit enters at the temperature before its position.
    A utility side runs from its supply to its target temperature.

    Examples
    --------
    >>> s = Stream.simple("H1", 150, 50, 2.0)
    >>> u = ExistingUnit("A", "H1", "C1", duty=40.0, hot_position=1, cold_position=1, hot_fraction=0.5)
    >>> stated_temperatures(u, {("H1", 0): 150.0, ("C1", 0): 30.0}, {"H1": s, "C1": Stream.simple("C1", 30, 90, 1.0)}, {})
    (150.0, 110.0, 30.0, 70.0)
    """
    if u.duty is None:
        return None
    out = []
    for side in ("hot", "cold"):
        name = getattr(u, side)
        if name in utilities:
            util = u.utility_taken(utilities[name])
            out += [util.supply_temperature, util.target_temperature]
            continue
        s, k, share = streams[name], getattr(u, f"{side}_position"), u.fraction(name)
        t_in = known.get((inlets or {}).get((name, u.name), (name, k - 1)))
        t_out = known.get((name, k) if share >= 1 else (name, k, u.name))
        if t_in is None and t_out is None:
            return None
        if t_in is None:
            t_in = temperature_after(s, t_out, -u.duty / share)
        if t_out is None:
            t_out = temperature_after(s, t_in, u.duty / share)
        out += [t_in, t_out]
    return tuple(out)
