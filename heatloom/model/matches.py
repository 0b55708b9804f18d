"""Matches the engineer forbids or requires in a network design (plain names, no solver).

A *match* is a pair (hot side, cold side): a hot process stream or hot utility, and a cold process stream or
cold utility, by name.  They come from the command line (``--forbid HOT:COLD``, ``--require HOT:COLD``) and
from the optional ``forbid`` and ``require`` columns of a stream table (:func:`heatloom.io.read_match_rules`)
and are merged here; :meth:`MatchRules.check` refuses names that are not streams or utilities of the problem.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from ..errors import InputError
from .streams import Stream, Utility

__all__ = ["MatchRules", "parse_match"]


def parse_match(text: str) -> tuple[str, str]:
    """``"HOT:COLD"`` → (hot, cold), names stripped of spaces.

    Examples
    --------
    >>> parse_match("H1: C2")
    ('H1', 'C2')
    >>> parse_match("H1")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: a match is written HOT:COLD (a hot and a cold stream or utility, e.g. H1:C2), got 'H1'
    """
    parts = str(text).split(":")
    if len(parts) != 2 or not parts[0].strip() or not parts[1].strip():
        raise InputError(f"a match is written HOT:COLD (a hot and a cold stream or utility, e.g. H1:C2), "
                         f"got {text!r}")
    return parts[0].strip(), parts[1].strip()


@dataclass(frozen=True)
class MatchRules:
    """Forbidden and required matches, as (hot side, cold side) name pairs.

    Attributes
    ----------
    forbidden : tuple of (str, str)
        Pairs that may not exchange heat.
    required : tuple of (str, str)
        Pairs that must exchange heat in at least one unit.
    sources : tuple of str
        Where the rules came from, for notes (e.g. "command line", the stream table's file).

    Examples
    --------
    >>> a = MatchRules(forbidden=(("H1", "C1"),), sources=("stream table",))
    >>> b = MatchRules(required=(("H2", "C1"),), forbidden=(("H1", "C1"),), sources=("command line",))
    >>> m = a.merged(b)
    >>> m.forbidden, m.required, bool(m)
    ((('H1', 'C1'),), (('H2', 'C1'),), True)
    """

    forbidden: tuple[tuple[str, str], ...] = ()
    required: tuple[tuple[str, str], ...] = ()
    sources: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "forbidden", tuple(dict.fromkeys(tuple(p) for p in self.forbidden)))
        object.__setattr__(self, "required", tuple(dict.fromkeys(tuple(p) for p in self.required)))
        both = set(self.forbidden) & set(self.required)
        if both:
            hot, cold = sorted(both)[0]
            raise InputError(f"match {hot}:{cold} is both forbidden and required")

    def __bool__(self) -> bool:
        return bool(self.forbidden or self.required)

    def merged(self, other: MatchRules) -> MatchRules:
        """These rules and another's together (each pair once)."""
        return MatchRules(self.forbidden + other.forbidden, self.required + other.required,
                          tuple(dict.fromkeys(self.sources + other.sources)))

    @classmethod
    def from_text(cls, forbid: Iterable[str] = (), require: Iterable[str] = (), *,
                  source: str = "command line") -> MatchRules:
        """Rules from ``HOT:COLD`` texts (:func:`parse_match`)."""
        f = tuple(parse_match(t) for t in forbid)
        r = tuple(parse_match(t) for t in require)
        return cls(f, r, (source,) if (f or r) else ())

    def check(self, streams: Sequence[Stream], utilities: Sequence[Utility] = ()) -> None:
        """Raise :class:`InputError` unless every pair names a hot then a cold stream or utility of the problem.

        Examples
        --------
        >>> from heatloom.model import StreamTable
        >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5])
        >>> MatchRules(forbidden=(("H1", "C9"),)).check(s)
        Traceback (most recent call last):
        ...
        heatloom.errors.InputError: forbidden match H1:C9: unknown cold side 'C9'; the cold streams and utilities are 'C1'
        """
        hot = {s.name: "stream" for s in streams if s.is_hot} | {u.name: "utility" for u in utilities if u.is_hot}
        cold = {s.name: "stream" for s in streams if not s.is_hot} | \
            {u.name: "utility" for u in utilities if not u.is_hot}
        for what, pairs in (("forbidden", self.forbidden), ("required", self.required)):
            for h, c in pairs:
                for name, side, known, other in ((h, "hot", hot, cold), (c, "cold", cold, hot)):
                    if name in known:
                        continue
                    listed = ", ".join(f"'{n}'" for n in known) or "none"
                    if name in other:
                        raise InputError(f"{what} match {h}:{c}: '{name}' is a {'cold' if side == 'hot' else 'hot'} "
                                         f"{other[name]}, not a {side} side (write HOT:COLD); the {side} streams "
                                         f"and utilities are {listed}")
                    raise InputError(f"{what} match {h}:{c}: unknown {side} side '{name}'; the {side} streams and "
                                     f"utilities are {listed}")
                if hot[h] == "utility" and cold[c] == "utility":
                    raise InputError(f"{what} match {h}:{c} joins two utilities; a match serves a process stream")

    def describe(self) -> str:
        """The rules in plain words, for the notes of a design."""
        parts = []
        if self.forbidden:
            parts.append("forbidden " + ", ".join(f"{h}→{c}" for h, c in self.forbidden))
        if self.required:
            parts.append("required " + ", ".join(f"{h}→{c}" for h, c in self.required))
        where = f" (from {', '.join(self.sources)})" if self.sources else ""
        return "matches " + "; ".join(parts) + where

    def to_dict(self) -> dict:
        return {"forbidden": [list(p) for p in self.forbidden], "required": [list(p) for p in self.required],
                "sources": list(self.sources)}
