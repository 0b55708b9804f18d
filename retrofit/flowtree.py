"""The flow inside one stream split of an existing network: branches of units in series and splits inside
branches, and the order in which their temperatures follow from each other.

At one position along a stream (:mod:`heatloom.retrofit.branches`) a split sends the stream into parallel
branches that mix again after it.  A branch is a series of *items*: units, or a split inside the branch
(whose own branches mix before the branch goes on).  Units give where they sit by a path of branch labels,
outer first (``hot_branch``/``cold_branch``, ``"b"`` or ``"b/a"``) and their places along those branches
(``hot_branch_order``/``cold_branch_order``, ``(1,)`` or ``(1, 2)``): a place is an item's rank on its
branch from the split, a split inside a branch taking one place.  A unit of a split without a label is a
branch of its own.

:func:`split_tree` builds and checks the tree of one position (:class:`Split`, every problem located at a
unit's row), :func:`flow_steps` lays it out as steps in flow order — a unit from an inlet to its outlet, a
mixer from a split's inlet and its branches' outlets — which the stated-duty walks (:func:`walk_steps`),
the simulation of the network and the grid columns follow.

Keys of the temperatures (as :mod:`heatloom.retrofit.simulate` uses them): ``(stream, k)`` the stream after
position k (mixed after a split; k = 0 its supply), ``(stream, k, unit)`` the outlet of a unit inside the
split at position k, ``(stream, k, "mix", path)`` the outlet of the mixer of a split inside a branch.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass

from ..errors import InputError
from ..model import Stream
from ..model.existing import ExistingUnit
from .profiles import heat_between, temperature_after

__all__ = ["FRACTION_SUM_TOLERANCE", "Split", "Step", "split_tree", "flow_steps", "walk_steps", "group_inlets",
           "ends_stream"]

FRACTION_SUM_TOLERANCE = 1e-3
"""Largest difference from 1 allowed for the sum of the fractions of one split (and between the fractions
of the units of one branch, and between an inner split's fractions and its branch's) [-] (rounded table
values); the fractions are then scaled to agree exactly."""


@dataclass(frozen=True)
class Split:
    """A stream split: its branches, each a tuple of items in series (an :class:`ExistingUnit` or an inner
    :class:`Split`), the fraction of the stream through each branch [-], and the split's path (the
    (label, place) pairs of the branches it sits on, outer first; empty at the top)."""

    branches: tuple[tuple, ...]
    fractions: tuple[float, ...]
    path: tuple[tuple[str, int], ...] = ()

    @property
    def fraction(self) -> float:
        """Share of the stream through the split [-]."""
        return float(sum(self.fractions))

    def units(self) -> list[ExistingUnit]:
        """Every unit inside the split, in flow order."""
        out = []
        for branch in self.branches:
            for item in branch:
                out += item.units() if isinstance(item, Split) else [item]
        return out


@dataclass(frozen=True)
class Step:
    """One step of the flow at a position: a unit (``unit`` set) from ``inlet`` to ``key``, or a mixer to
    ``key`` from its split's ``inlet`` and ``parts`` — (branch fraction [-], branch outlet key, key of the
    heat capacity flow of the branch's last item) — with ``share`` of the stream through it [-]."""

    key: tuple
    inlet: tuple
    unit: ExistingUnit | None = None
    parts: tuple = ()
    share: float = 1.0


def _side(unit: ExistingUnit, stream: str) -> str:
    return "hot" if unit.hot == stream else "cold"


def _labels(unit: ExistingUnit, stream: str) -> tuple[str, ...]:
    label = unit.branch(stream)
    return tuple(label.split("/")) if label else ()


def _places(unit: ExistingUnit, stream: str) -> tuple[int, ...] | None:
    return getattr(unit, f"{_side(unit, stream)}_branch_order")


def _fail(unit: ExistingUnit, stream: str, column: str, message: str) -> InputError:
    return InputError(message, row=unit.row, column=f"{_side(unit, stream)}_{column}")


def _names(units: Sequence[ExistingUnit]) -> str:
    return ", ".join(f"'{u.name}'" for u in units)


def split_tree(group: Sequence[ExistingUnit], stream: str, position: int) -> tuple[Split, dict[str, float]]:
    """The tree of the split at one position of a stream, and every unit's fraction made consistent.

    Parameters
    ----------
    group : sequence of ExistingUnit
        The units at this position (fractions below 1 of ``stream``), in the order of the table.
    stream : str
    position : int
        [-], for messages.

    Returns
    -------
    (Split, dict)
        The tree, and unit name → fraction [-]: scaled so that the split's branches add up to exactly 1 and
        every inner split's to its branch's fraction; the units of one branch share its fraction.

    Raises
    ------
    InputError
        At a unit's row: branches whose fractions do not add up to 1 (a bypass), units of one branch with
        different fractions, places on a branch that are missing, repeated or skip.

    Examples
    --------
    H1 split into A (0.4) and a branch b (0.6) that splits into B1 and B2 (0.3 each), mixes, then runs through C:

    >>> a = ExistingUnit("A", "H1", "C1", hot_fraction=0.4)
    >>> b1 = ExistingUnit("B1", "H1", "C2", hot_fraction=0.3, hot_branch="b/1", hot_branch_order="1/1")
    >>> b2 = ExistingUnit("B2", "H1", "C3", hot_fraction=0.3, hot_branch="b/2", hot_branch_order="1/1")
    >>> c = ExistingUnit("C", "H1", "C4", hot_fraction=0.6, hot_branch="b", hot_branch_order=2)
    >>> tree, shares = split_tree([a, b1, b2, c], "H1", 1)
    >>> [[x.name if isinstance(x, ExistingUnit) else "split" for x in branch] for branch in tree.branches]
    [['A'], ['split', 'C']]
    >>> tree.fractions
    (0.4, 0.6)
    """
    tree = _build(list(group), stream, position, 0, ())
    total = tree.fraction
    if abs(total - 1.0) > FRACTION_SUM_TOLERANCE:
        u = group[-1]
        listed = ", ".join(f"{_names(_direct(b) or _all(b))} {f:.4g}" for b, f in zip(tree.branches, tree.fractions))
        if len(tree.branches) == 1:
            alone = "is the only unit" if len(group) == 1 else "its branch is the only one"
            raise _fail(u, stream, "fraction", f"unit '{u.name}' takes {u.fraction(stream):.4g} of stream '{stream}' "
                        f"(a split branch) but {alone} at position {position}: the fractions of one split must add "
                        "up to 1. The other branches need their units at the same position (several units in series "
                        f"on one branch share a {_side(u, stream)}_branch label); a bypass, a branch without a unit, "
                        "cannot be represented")
        raise _fail(u, stream, "fraction", f"the split of stream '{stream}' at position {position} ({listed}) has "
                    f"fractions adding up to {total:.6g}, not 1: the branches of one split share the whole stream "
                    f"(units in series on one branch share a {_side(u, stream)}_branch label and give the branch's "
                    "fraction; a bypass cannot be represented)")
    shares: dict[str, float] = {}
    _scale(tree, 1.0, shares)
    return tree, shares


def _direct(branch: tuple) -> list[ExistingUnit]:
    return [x for x in branch if isinstance(x, ExistingUnit)]


def _all(branch: tuple) -> list[ExistingUnit]:
    out = []
    for x in branch:
        out += x.units() if isinstance(x, Split) else [x]
    return out


def _build(units: list[ExistingUnit], stream: str, position: int, depth: int,
           path: tuple[tuple[str, int], ...]) -> Split:
    """The split of these units at this depth (0: the position's split)."""
    members: dict[str, list[ExistingUnit]] = {}
    for u in units:
        labels = _labels(u, stream)
        key = labels[depth] if len(labels) > depth else "\0" + u.name   # no label: a branch of its own
        members.setdefault(key, []).append(u)
    branches, fractions = [], []
    for key, group in members.items():
        label = key.lstrip("\0")
        direct = [u for u in group if len(_labels(u, stream)) <= depth + 1]
        deeper = [u for u in group if len(_labels(u, stream)) > depth + 1]
        places = [(_places(u, stream) or (None,) * (depth + 1))[depth] for u in direct]
        items: list[tuple[int | None, int, object]] = [(p, i, u) for i, (p, u) in enumerate(zip(places, direct))]
        inner: dict[int, list[ExistingUnit]] = {}
        for u in deeper:
            p = _places(u, stream)
            if p is None:
                raise _fail(u, stream, "branch_order", f"unit '{u.name}' sits on a split inside branch '{label}' of "
                            f"stream '{stream}' ({_side(u, stream)}_branch {u.branch(stream)!r}) but gives no "
                            f"{_side(u, stream)}_branch_order: give one place per label (e.g. '1/2')")
            inner.setdefault(p[depth], []).append(u)
        for p, sub in inner.items():
            items.append((p, len(items), _build(sub, stream, position, depth + 1, path + ((label, p),))))
        given = [p for p, _, _ in items if p is not None]
        where = f"branch '{label}' of the split of stream '{stream}' at position {position}"
        if given and (len(given) < len(items) or sorted(given) != list(range(1, len(items) + 1))):
            u = next((x for p, _, x in items if p is None and isinstance(x, ExistingUnit)), None) or group[-1]
            shown = ", ".join("-" if p is None else str(p) for p, _, _ in items)
            raise _fail(u, stream, "branch_order", f"the units {_names(group)} of {where} give places {shown} on it: "
                        f"give every item of the branch (a unit, or a split inside it) its place 1 to {len(items)} from "
                        "the split, or none (then the row order holds)")
        items.sort(key=lambda t: (t[0] or 0, t[1]))
        branch = tuple(x for _, _, x in items)
        own = [u.fraction(stream) for u in direct]
        f = own[0] if own else branch[0].fraction
        for u, g in zip(direct, own):
            if abs(g - f) > FRACTION_SUM_TOLERANCE:
                raise _fail(u, stream, "fraction", f"units {_names([direct[0]])} and '{u.name}' are on {where} but "
                            f"give {_side(u, stream)} fractions {f:.4g} and {g:.4g}: the units of one branch carry the "
                            "same flow")
        for x in branch:
            if isinstance(x, Split) and abs(x.fraction - f) > FRACTION_SUM_TOLERANCE:
                u = x.units()[-1]
                raise _fail(u, stream, "fraction", f"the split inside {where} ({_names(x.units())}) has fractions "
                            f"adding up to {x.fraction:.6g}, but its branch carries {f:.4g} of the stream")
        branches.append(branch)
        fractions.append(float(f))
    return Split(tuple(branches), tuple(fractions), path)


def _scale(split: Split, share: float, out: dict[str, float]) -> None:
    """Unit name → fraction with the split's branches scaled to add up to ``share``."""
    factor = share / split.fraction
    for branch, f in zip(split.branches, split.fractions):
        for x in branch:
            if isinstance(x, Split):
                _scale(x, f * factor, out)
            else:
                out[x.name] = f * factor


def flow_steps(group: Sequence[ExistingUnit], stream: str, k: int) -> tuple[Step, ...]:
    """The steps of the flow at position ``k`` of a stream, in an order where every inlet is known before it
    is used: a single unit from ``(stream, k − 1)`` to ``(stream, k)``, or the units and mixers of a split,
    its last step the mixer to ``(stream, k)``.

    Examples
    --------
    >>> a = ExistingUnit("A", "H1", "C1", hot_fraction=0.4)
    >>> b = ExistingUnit("B", "H1", "C2", hot_fraction=0.6, hot_branch="b", hot_branch_order=1)
    >>> c = ExistingUnit("C", "H1", "C3", hot_fraction=0.6, hot_branch="b", hot_branch_order=2)
    >>> [(s.unit.name if s.unit else "mix", s.inlet, s.key) for s in flow_steps([a, b, c], "H1", 1)]
    ... # doctest: +NORMALIZE_WHITESPACE
    [('A', ('H1', 0), ('H1', 1, 'A')), ('B', ('H1', 0), ('H1', 1, 'B')), ('C', ('H1', 1, 'B'), ('H1', 1, 'C')),
     ('mix', ('H1', 0), ('H1', 1))]
    """
    if len(group) == 1 and group[0].fraction(stream) >= 1.0:
        return (Step((stream, k), (stream, k - 1), group[0]),)
    tree, _ = split_tree(group, stream, k)
    steps: list[Step] = []

    def emit(split: Split, inlet: tuple, key: tuple) -> None:
        parts = []
        for branch, f in zip(split.branches, split.fractions):
            at, cp_key = inlet, None
            for x in branch:
                if isinstance(x, Split):
                    mix = (stream, k, "mix", "/".join(f"{label}@{p}" for label, p in x.path))
                    emit(x, at, mix)
                    at = cp_key = mix
                else:
                    out = (stream, k, x.name)
                    steps.append(Step(out, at, x))
                    at, cp_key = out, (x.name, _side(x, stream))
            parts.append((f, at, cp_key))
        steps.append(Step(key, inlet, None, tuple(parts), split.fraction))

    emit(tree, (stream, k - 1), (stream, k))
    return tuple(steps)


def walk_steps(stream: Stream, steps: Sequence[Step], t_in: float, duty: Callable[[ExistingUnit], float]
               ) -> dict[tuple, float]:
    """Temperatures along the steps of one position from its inlet ``t_in`` [°C] for the units' duties
    [kW] (``duty(unit)``): key → temperature, the position's outlet ``(stream, k)`` included.

    A unit of fraction f doing Q changes the stream's enthalpy per unit of its flow by Q/f; a mixer's
    outlet is the enthalpy balance of its branches (an adiabatic mixer).

    Examples
    --------
    >>> s = Stream.simple("H1", 150, 50, 2.0)
    >>> a = ExistingUnit("A", "H1", "C1", hot_fraction=0.5)
    >>> b = ExistingUnit("B", "H1", "C2", hot_fraction=0.5)
    >>> t = walk_steps(s, flow_steps([a, b], "H1", 1), 150.0, lambda u: {"A": 40.0, "B": 20.0}[u.name])
    >>> t[("H1", 1, "A")], t[("H1", 1, "B")], t[("H1", 1)]
    (110.0, 130.0, 120.0)
    """
    temps: dict[tuple, float] = {steps[0].inlet: t_in} if steps else {}
    for step in steps:
        t0 = temps[step.inlet]
        if step.unit is not None:
            temps[step.key] = temperature_after(stream, t0, duty(step.unit) / step.unit.fraction(stream.name))
        else:
            heat = sum(f * heat_between(stream, t0, temps[out]) for f, out, _ in step.parts)
            temps[step.key] = temperature_after(stream, t0, heat / step.share)
    return temps


def group_inlets(steps: Sequence[Step]) -> dict[str, tuple]:
    """Unit name → the key of its inlet temperature, for the units of one position."""
    return {s.unit.name: s.inlet for s in steps if s.unit is not None}


def ends_stream(unit: ExistingUnit, steps: Sequence[Step]) -> bool:
    """True when no unit of these steps (the last position of a stream) comes after ``unit``: its outlet
    reaches the stream's end through mixers only [-].

    Examples
    --------
    >>> a = ExistingUnit("A", "H1", "C1", hot_fraction=0.5, hot_branch="a", hot_branch_order=1)
    >>> c = ExistingUnit("C", "H1", "water", hot_fraction=0.5, hot_branch="a", hot_branch_order=2)
    >>> b = ExistingUnit("B", "H1", "C2", hot_fraction=0.5)
    >>> steps = flow_steps([a, c, b], "H1", 2)
    >>> ends_stream(c, steps), ends_stream(a, steps)
    (True, False)
    """
    consumed = {s.inlet for s in steps if s.unit is not None}
    into: Mapping[tuple, tuple] = {out: s.key for s in steps if s.unit is None for _, out, _ in s.parts}
    key = next((s.key for s in steps if s.unit is not None and s.unit.name == unit.name), None)
    while key is not None:
        if key in consumed:
            return False
        key = into.get(key)
    return True
