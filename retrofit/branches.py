"""Positions along the streams of an existing network, stream splits included.

Along every process stream the units of an :class:`~heatloom.retrofit.existing.ExistingNetwork` have
positions 1, 2, ... from the stream's supply end.  A *stream split* is one position held by the units of
its parallel branches: each gives its branch's share of the stream's flow (``hot_fraction`` or
``cold_fraction`` below 1), and the shares of one split add up to 1.  A branch is one unit, or several units
in series that carry the same branch label (``hot_branch``/``cold_branch``) and the same fraction, in the
order of the units.  The branches take the stream at the temperature it has before the split and mix again
after it (an adiabatic mixer: the stream's enthalpy after the split is the sum of the branches').

A heater or cooler may sit on a branch.  When it is the last unit of its branch in the last split of a
stream it is the stream's *trim* unit: it takes the duty that brings the mixed stream to its target (at most
one such heater or cooler in that split); elsewhere it keeps its stated duty or is rated against an
isothermal utility, as inside a stream.

Limits, refused with a located message: a bypass (a branch without a unit: the fractions of a split must
add up to 1); a position repeated without fractions below 1; the units of one branch with different
fractions; a branch label on a unit that takes the whole stream; two trim heaters or coolers in the last
split of a stream.

:func:`resolve_positions` checks the positions, fractions and branch labels of a set of units and completes
them; :func:`stages` groups the units of one stream by position and :func:`chains` a split's units by branch.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace

from ..errors import InputError
from ..model import Stream
from ..model.existing import ExistingUnit, UnitRole
from .profiles import temperature_after

__all__ = ["FRACTION_SUM_TOLERANCE", "resolve_positions", "stages", "chains", "is_trim", "branch_outlets",
           "branch_stream", "design_share", "stated_temperatures", "predecessors"]

FRACTION_SUM_TOLERANCE = 1e-3
"""Largest difference from 1 allowed for the sum of the fractions of one split [-] (rounded table values);
the fractions are then scaled to add up to exactly 1 (the notes say so)."""


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
            if shares is not None:   # a split: every unit takes its branch's share, scaled to a sum of 1
                total = sum(shares.values())
                for i, side in group:
                    branch = _branch_key(units[i], stream)
                    units[i] = replace(units[i], **{f"{side}_fraction": shares[branch] / total})
        n = len(groups)
        what = "position(s)" if n < len(given) else "unit(s)"
        for i, side, p in given:
            if p > n:
                gaps = sorted(set(range(1, n + 1)) - set(groups))
                raise InputError(f"unit '{units[i].name}': position {p} on stream '{stream}', which has {n} {what}; "
                                 f"positions must run 1 to {n} without gaps (missing: {', '.join(map(str, gaps))})",
                                 row=units[i].row, column=f"{side}_order")
        last = [units[i] for i, _ in groups[n]]
        trims = [u for u in last if u.role is not UnitRole.EXCHANGER and is_trim(u, stream, (tuple(last),))]
        if len(last) > 1 and len(trims) > 1:
            u = trims[-1]
            side = "hot" if u.hot == stream else "cold"
            raise InputError(f"the last split of stream '{stream}' has {len(trims)} heaters/coolers ({_names(trims)}) "
                             "at the ends of its branches; only one heater or cooler may take the rest of the "
                             "stream's duty there: give the others a position of their own", row=u.row,
                             column=f"{side}_order")
    return units


def _branch_key(unit: ExistingUnit, stream: str) -> tuple[str, str]:
    """The branch a unit of a split belongs to: its label, or the unit itself when it has none."""
    label = unit.branch(stream)
    return ("label", label) if label is not None else ("unit", unit.name)


def _check_group(units: list[ExistingUnit], stream: str, p: int, group: list[tuple[int, str]],
                 notes: list[str]) -> dict[tuple[str, str], float] | None:
    """The units at one position of one stream: one unit, or the branches of one split.

    Returns the fraction of every branch of a split (key :func:`_branch_key`), None for a single unit.
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
            raise InputError(f"unit '{units[i].name}' gives {side}_branch_order "
                             f"{getattr(units[i], f'{side}_branch_order')} on stream '{stream}' but no {side}_branch: "
                             "a place on a branch needs the branch's label", row=units[i].row,
                             column=f"{side}_branch_order")
    if len(group) == 1 and not fractions[0] < 1.0:
        i, side = group[0]
        if units[i].branch(stream) is not None:
            raise InputError(f"unit '{units[i].name}' gives {side}_branch {units[i].branch(stream)!r} on stream "
                             f"'{stream}' but takes the whole stream ({side} fraction 1): a branch label names a "
                             f"branch of a split; give the branch's {side}_fraction or leave the label empty",
                             row=units[i].row, column=f"{side}_branch")
        return None
    shares: dict[tuple[str, str], float] = {}
    members: dict[tuple[str, str], list[ExistingUnit]] = {}
    for (i, side), f in zip(group, fractions):
        key = _branch_key(units[i], stream)
        if key in shares and abs(shares[key] - f) > FRACTION_SUM_TOLERANCE:
            raise InputError(f"units {_names(members[key])} and '{units[i].name}' are on branch '{key[1]}' of the "
                             f"split of stream '{stream}' at position {p} but give {side} fractions "
                             f"{shares[key]:.4g} and {f:.4g}: the units of one branch carry the same flow",
                             row=units[i].row, column=f"{side}_fraction")
        shares.setdefault(key, f)
        members.setdefault(key, []).append(units[i])
    side = group[0][1]
    for key, branch in members.items():
        steps = [getattr(u, f"{side}_branch_order") for u in branch]
        given = [k for k in steps if k is not None]
        if given and (len(given) < len(steps) or sorted(given) != list(range(1, len(steps) + 1))):
            u = branch[steps.index(None)] if None in steps else branch[-1]
            raise InputError(f"the units {_names(branch)} of branch '{key[1]}' of the split of stream '{stream}' at "
                             f"position {p} give {side}_branch_order {', '.join('-' if k is None else str(k) for k in steps)}: "
                             f"give every unit of the branch its place 1 to {len(steps)} from the split, or none "
                             "(then the row order holds)", row=u.row, column=f"{side}_branch_order")
    total = sum(shares.values())
    if abs(total - 1.0) > FRACTION_SUM_TOLERANCE:
        i, side = group[-1]
        listed = ", ".join(f"{_names(m)} {shares[k]:.4g}" for k, m in members.items())
        if len(shares) == 1:
            alone = "is the only unit" if len(group) == 1 else "its branch is the only one"
            raise InputError(f"unit '{units[i].name}' takes {fractions[-1]:.4g} of stream '{stream}' (a split branch) "
                             f"but {alone} at position {p}: the fractions of one split must add "
                             "up to 1. The other branches need their units at the same position (several units in "
                             f"series on one branch share a {side}_branch label); a bypass, a branch without a "
                             "unit, cannot be represented", row=units[i].row, column=f"{side}_fraction")
        raise InputError(f"the split of stream '{stream}' at position {p} ({listed}) has fractions adding up to "
                         f"{total:.6g}, not 1: the branches of one split share the whole stream (units in series on "
                         f"one branch share a {side}_branch label and give the branch's fraction; a bypass cannot be "
                         "represented)", row=units[i].row, column=f"{side}_fraction")
    if abs(total - 1.0) > 1e-5:   # beyond the rounding of a table written to 6 decimals
        notes.append(f"the fractions of the split of stream '{stream}' at position {p} ({_names([units[i] for i, _ in group])}) "
                     f"add up to {total:.6g}; scaled to add up to 1")
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


def chains(group: Sequence[ExistingUnit], stream: str) -> tuple[tuple[ExistingUnit, ...], ...]:
    """The branches of the units at one position of a stream, each a tuple of units in series.

    A single unit is one branch; the units of a split with one branch label form one branch, in the order
    of their ``hot_branch_order``/``cold_branch_order`` when given, else in their order; a unit of a split
    without a label is a branch of its own.

    Examples
    --------
    >>> a = ExistingUnit("A", "H1", "C1", hot_position=1, hot_fraction=0.3)
    >>> b = ExistingUnit("B", "H1", "C2", hot_position=1, hot_fraction=0.7, hot_branch="b")
    >>> c = ExistingUnit("C", "H1", "C3", hot_position=1, hot_fraction=0.7, hot_branch="b")
    >>> [[u.name for u in chain] for chain in chains([a, b, c], "H1")]
    [['A'], ['B', 'C']]
    """
    out: dict[tuple[str, str], list[ExistingUnit]] = {}
    for u in group:
        out.setdefault(_branch_key(u, stream), []).append(u)
    side = _side_of(group[0], stream) if group else "hot"
    return tuple(tuple(sorted(v, key=lambda u: getattr(u, f"{side}_branch_order") or 0)) for v in out.values())


def is_trim(unit: ExistingUnit, stream: str, seq: Sequence[Sequence[ExistingUnit]]) -> bool:
    """True when ``unit`` ends stream ``stream`` whose units by position are ``seq``: it is the last unit,
    or the last unit of its branch in the last split [-].

    Examples
    --------
    >>> a = ExistingUnit("A", "H1", "C1", hot_position=1, hot_fraction=0.5, hot_branch="a")
    >>> c = ExistingUnit("C", "H1", "water", hot_position=1, hot_fraction=0.5, hot_branch="a")
    >>> b = ExistingUnit("B", "H1", "C2", hot_position=1, hot_fraction=0.5)
    >>> is_trim(c, "H1", [(a, c, b)]), is_trim(a, "H1", [(a, c, b)])
    (True, False)
    """
    if not seq:
        return False
    return any(chain[-1].name == unit.name for chain in chains(seq[-1], stream))


def predecessors(units: Sequence[ExistingUnit], streams: Sequence[str]) -> dict[tuple[str, str], str]:
    """(stream, unit name) → the unit before it on its split branch, for the units in series on a branch.

    Examples
    --------
    >>> b = ExistingUnit("B", "H1", "C2", hot_position=1, hot_fraction=0.5, hot_branch="b")
    >>> c = ExistingUnit("C", "H1", "C3", hot_position=1, hot_fraction=0.5, hot_branch="b")
    >>> d = ExistingUnit("D", "H1", "C1", hot_position=1, hot_fraction=0.5)
    >>> predecessors([b, c, d], ["H1"])
    {('H1', 'C'): 'B'}
    """
    out: dict[tuple[str, str], str] = {}
    for name in streams:
        for group in stages(units, name):
            for chain in chains(group, name):
                for before, u in zip(chain, chain[1:]):
                    out[(name, u.name)] = before.name
    return out


def branch_outlets(known: dict, stream: Stream, k: int, t_in: float, group: Sequence[ExistingUnit]) -> None:
    """Put the outlets of the branches of a split at position ``k`` into ``known``.

    Every unit has a stated duty; a branch enters at ``t_in`` [°C] and its units follow in series.  A unit of
    fraction f doing Q [kW] changes the stream's enthalpy per unit of its flow by Q/f, so its outlet is the
    stream's temperature after Q/f from its inlet.  Keys ``(stream name, k, unit name)`` [°C]; units that are
    not on a branch are skipped.

    Examples
    --------
    >>> s = Stream.simple("H1", 150, 50, 2.0)
    >>> known = {}
    >>> branch_outlets(known, s, 1, 150.0, [ExistingUnit("A", "H1", "C1", duty=40.0, hot_fraction=0.5)])
    >>> known
    {('H1', 1, 'A'): 110.0}
    """
    for chain in chains(group, stream.name):
        t = t_in
        for u in chain:
            share = u.fraction(stream.name)
            if share < 1:
                t = temperature_after(stream, t, u.duty / share)
                known[(stream.name, k, u.name)] = t


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
                        utilities: Mapping, before: Mapping[tuple[str, str], str] | None = None
                        ) -> tuple[float, float, float, float] | None:
    """(hot in, hot out, cold in, cold out) of a unit at its stated duty [°C], or None when unknown.

    ``known`` holds the temperatures the stated duties give along the streams: ``(stream, k)`` after
    position k (mixed after a split), ``(stream, k, unit)`` a branch unit's outlet (:func:`branch_outlets`).
    ``before`` (:func:`predecessors`) names the unit before ``u`` on its branch, whose outlet is its inlet.
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
            util = utilities[name]
            out += [util.supply_temperature, util.target_temperature]
            continue
        s, k, share = streams[name], getattr(u, f"{side}_position"), u.fraction(name)
        previous = (before or {}).get((name, u.name))
        t_in = known.get((name, k - 1) if previous is None else (name, k, previous))
        t_out = known.get((name, k) if share >= 1 else (name, k, u.name))
        if t_in is None and t_out is None:
            return None
        if t_in is None:
            t_in = temperature_after(s, t_out, -u.duty / share)
        if t_out is None:
            t_out = temperature_after(s, t_in, u.duty / share)
        out += [t_in, t_out]
    return tuple(out)
