"""The data model: process streams, stream tables and utilities, as plain numbers in canonical units.

Canonical units (see DEVELOPERS.md, glossary): temperatures in °C, temperature differences in K,
duties in kW, heat capacity flow rates in kW/K, film coefficients in kW/(m²·K), utility prices in
money/(kW·year).  Nothing here reads files or converts units; :mod:`heatloom.io` does that.

A *stream* is one or more linear *segments* that chain: each segment starts at the temperature where
the one before it ended and runs in the same direction (all cooling for a hot stream, all heating for a
cold one).  Segments model phase change or a heat capacity that varies with temperature.
"""

from __future__ import annotations

import enum
import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from ..errors import InputError

__all__ = [
    "ABSOLUTE_ZERO",
    "finite_number",
    "Segment",
    "Stream",
    "StreamTable",
    "StreamArrays",
    "UtilityKind",
    "Utility",
]

ABSOLUTE_ZERO = -273.15
"""Absolute zero [°C]."""


def finite_number(value, what: str, column: str | None = None) -> float:
    """``value`` as a finite float, else an InputError naming ``what`` (booleans are not numbers).

    Examples
    --------
    >>> finite_number("2.5", "CP")
    2.5
    """
    if isinstance(value, bool):
        raise InputError(f"{what} must be a number, got {value!r}", column=column)
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, got {value!r}", column=column) from None
    if not math.isfinite(x):
        raise InputError(f"{what} must be a finite number, got {value!r}", column=column)
    return x


_finite = finite_number


def _temperature(value: float, what: str, column: str) -> float:
    t = _finite(value, what, column)
    if t < ABSOLUTE_ZERO:
        raise InputError(f"{what} {t:g} °C is below absolute zero ({ABSOLUTE_ZERO} °C)", column=column)
    return t


@dataclass(frozen=True)
class Segment:
    """One linear piece of a stream.

    Parameters
    ----------
    supply_temperature : float
        Temperature where the segment starts [°C].
    target_temperature : float
        Temperature where the segment ends [°C].
    heat_capacity_flow : float
        Heat capacity flow rate, mass flow times specific heat [kW/K]; strictly positive.
    film_coefficient : float, optional
        Film heat transfer coefficient [kW/(m²·K)], for area targets and sizing.
    dt_min_contribution : float, optional
        The segment's own share of the minimum approach [K]; when absent the global ΔTmin/2 applies.
    row : int, optional
        Row of the source table (for messages only).

    Examples
    --------
    >>> Segment(150.0, 60.0, 2.0).duty
    180.0
    """

    supply_temperature: float
    target_temperature: float
    heat_capacity_flow: float
    film_coefficient: float | None = None
    dt_min_contribution: float | None = None
    row: int | None = field(default=None, compare=False)

    def __post_init__(self) -> None:
        ts = _temperature(self.supply_temperature, "supply temperature", "T_supply")
        tt = _temperature(self.target_temperature, "target temperature", "T_target")
        if ts == tt:
            raise InputError(f"supply and target temperatures are equal ({ts:g} °C): a stream must change "
                             "temperature (give a phase change a small glide, e.g. 0.1 K)", column="T_target")
        cp = _finite(self.heat_capacity_flow, "heat capacity flow rate", "CP")
        if not cp > 0:
            raise InputError(f"heat capacity flow rate CP must be > 0 kW/K, got {cp:g}", column="CP")
        object.__setattr__(self, "supply_temperature", ts)
        object.__setattr__(self, "target_temperature", tt)
        object.__setattr__(self, "heat_capacity_flow", cp)
        if self.film_coefficient is not None:
            h = _finite(self.film_coefficient, "film coefficient", "h")
            if not h > 0:
                raise InputError(f"film coefficient h must be > 0 kW/(m²·K), got {h:g}", column="h")
            object.__setattr__(self, "film_coefficient", h)
        if self.dt_min_contribution is not None:
            d = _finite(self.dt_min_contribution, "ΔTmin contribution", "dT_min_contrib")
            if not d >= 0:
                raise InputError(f"ΔTmin contribution must be >= 0 K, got {d:g}", column="dT_min_contrib")
            object.__setattr__(self, "dt_min_contribution", d)

    @property
    def is_hot(self) -> bool:
        """True when the segment gives heat (cools down)."""
        return self.supply_temperature > self.target_temperature

    @property
    def duty(self) -> float:
        """Heat given or taken over the segment [kW], always positive."""
        return self.heat_capacity_flow * abs(self.supply_temperature - self.target_temperature)

    def shift(self, dt_min: float) -> float:
        """How far the segment moves on the shifted temperature scale [K]: its own ΔTmin contribution
        when given, else ΔTmin/2 (hot segments move down, cold ones up).

        This is the one definition of the shift: the problem table, network placement, approach checks
        and the diagnosis of existing networks all use it.

        Examples
        --------
        >>> Segment(150.0, 60.0, 2.0).shift(10.0), Segment(150.0, 60.0, 2.0, dt_min_contribution=2.5).shift(10.0)
        (5.0, 2.5)
        """
        return 0.5 * dt_min if self.dt_min_contribution is None else self.dt_min_contribution


@dataclass(frozen=True)
class Stream:
    """A process stream: a name and one or more chained linear segments.

    Examples
    --------
    >>> s = Stream("reactor effluent", (Segment(200, 150, 1.0), Segment(150, 149, 300.0)))
    >>> s.is_hot, s.duty, s.supply_temperature, s.target_temperature
    (True, 350.0, 200.0, 149.0)
    """

    name: str
    segments: tuple[Segment, ...]

    def __post_init__(self) -> None:
        if not str(self.name).strip():
            raise InputError("a stream needs a name", column="name")
        segs = tuple(self.segments)
        if not segs:
            raise InputError(f"stream '{self.name}' has no segments")
        object.__setattr__(self, "segments", segs)
        hot = segs[0].is_hot
        for before, seg in zip(segs, segs[1:]):
            if seg.is_hot != hot:
                raise InputError(
                    f"stream '{self.name}': segment from {seg.supply_temperature:g} to "
                    f"{seg.target_temperature:g} °C runs the other way from the segment before it; "
                    "repeated names must continue one stream in one direction (rename it if it is "
                    "another stream)", row=seg.row, column="T_target")
            if not math.isclose(seg.supply_temperature, before.target_temperature, rel_tol=0, abs_tol=1e-9):
                raise InputError(
                    f"stream '{self.name}': segment starts at {seg.supply_temperature:g} °C but the "
                    f"segment before it ended at {before.target_temperature:g} °C; repeated names must "
                    "chain (rename it if it is another stream)", row=seg.row, column="T_supply")

    @classmethod
    def simple(cls, name: str, supply_temperature: float, target_temperature: float,
               heat_capacity_flow: float, *, film_coefficient: float | None = None,
               dt_min_contribution: float | None = None) -> Stream:
        """A stream of one segment.

        Examples
        --------
        >>> Stream.simple("H1", 180, 60, 3.0).duty
        360.0
        """
        return cls(name, (Segment(supply_temperature, target_temperature, heat_capacity_flow,
                                  film_coefficient, dt_min_contribution),))

    @property
    def is_hot(self) -> bool:
        """True for a stream that must be cooled."""
        return self.segments[0].is_hot

    @property
    def supply_temperature(self) -> float:
        """[°C]"""
        return self.segments[0].supply_temperature

    @property
    def target_temperature(self) -> float:
        """[°C]"""
        return self.segments[-1].target_temperature

    @property
    def duty(self) -> float:
        """Total heat to remove (hot) or add (cold) [kW]."""
        return float(sum(s.duty for s in self.segments))

    def shift(self, dt_min: float) -> float:
        """The stream's shift on the shifted scale [K] where one value is needed for the whole stream: the
        segments' common :meth:`Segment.shift`, else the largest of them (the conservative choice; see
        :meth:`shift_is_uniform`).

        Examples
        --------
        >>> Stream("H", (Segment(200, 150, 1.0, dt_min_contribution=2.0), Segment(150, 100, 2.0))).shift(10)
        5.0
        """
        return max(g.shift(dt_min) for g in self.segments)

    def shift_is_uniform(self, dt_min: float) -> bool:
        """True when every segment has the same shift [K] at this ΔTmin."""
        return len({g.shift(dt_min) for g in self.segments}) == 1


@dataclass(frozen=True, eq=False)
class StreamArrays:
    """The segments of a stream table as flat numpy arrays (one entry per segment).

    ``film_coefficient`` and ``dt_min_contribution`` hold NaN where not given.
    """

    supply_temperature: np.ndarray
    target_temperature: np.ndarray
    heat_capacity_flow: np.ndarray
    is_hot: np.ndarray
    film_coefficient: np.ndarray
    dt_min_contribution: np.ndarray
    stream_index: np.ndarray

    def shifts(self, dt_min: float) -> np.ndarray:
        """Per-segment temperature shift [K]: the own contribution, else ΔTmin/2.

        Hot segments are shifted down and cold ones up by this amount in the problem table.
        """
        return np.where(np.isnan(self.dt_min_contribution), 0.5 * dt_min, self.dt_min_contribution)  # Segment.shift


@dataclass(frozen=True, eq=False)
class StreamTable:
    """The process streams of one problem.

    Parameters
    ----------
    streams : sequence of Stream
        Unique names; order is kept for reports only (targets do not depend on it).
    source : str, optional
        Where the table came from (file name), for messages and reports.

    Examples
    --------
    >>> t = StreamTable([Stream.simple("H1", 180, 60, 3.0), Stream.simple("C1", 20, 135, 2.0)])
    >>> [s.name for s in t.hot], [s.name for s in t.cold]
    (['H1'], ['C1'])
    """

    streams: tuple[Stream, ...]
    source: str | None = None

    def __post_init__(self) -> None:
        streams = tuple(self.streams)
        object.__setattr__(self, "streams", streams)
        if not streams:
            raise InputError("the stream table holds no streams", file=self.source)
        seen: set[str] = set()
        for s in streams:
            if s.name in seen:
                raise InputError(f"stream name '{s.name}' is used twice; names must be unique",
                                 file=self.source, row=s.segments[0].row, column="name")
            seen.add(s.name)

    def __len__(self) -> int:
        return len(self.streams)

    def __iter__(self):
        return iter(self.streams)

    def __getitem__(self, name: str) -> Stream:
        for s in self.streams:
            if s.name == name:
                return s
        raise KeyError(name)

    @property
    def hot(self) -> list[Stream]:
        """Streams that must be cooled."""
        return [s for s in self.streams if s.is_hot]

    @property
    def cold(self) -> list[Stream]:
        """Streams that must be heated."""
        return [s for s in self.streams if not s.is_hot]

    @property
    def names(self) -> list[str]:
        return [s.name for s in self.streams]

    @cached_property
    def arrays(self) -> StreamArrays:
        """All segments as flat arrays, built once."""
        segs = [(i, g) for i, s in enumerate(self.streams) for g in s.segments]
        n = len(segs)
        ts = np.fromiter((g.supply_temperature for _, g in segs), float, n)
        tt = np.fromiter((g.target_temperature for _, g in segs), float, n)
        cp = np.fromiter((g.heat_capacity_flow for _, g in segs), float, n)
        h = np.fromiter((np.nan if g.film_coefficient is None else g.film_coefficient for _, g in segs),
                        float, n)
        d = np.fromiter((np.nan if g.dt_min_contribution is None else g.dt_min_contribution
                         for _, g in segs), float, n)
        idx = np.fromiter((i for i, _ in segs), np.int64, n)
        return StreamArrays(ts, tt, cp, ts > tt, h, d, idx)

    @classmethod
    def from_arrays(cls, names: Sequence[str], supply_temperature: Iterable[float],
                    target_temperature: Iterable[float], heat_capacity_flow: Iterable[float], *,
                    film_coefficient: Iterable[float] | None = None, source: str | None = None
                    ) -> StreamTable:
        """Build a table of single-segment streams from columns.

        Examples
        --------
        >>> StreamTable.from_arrays(["H1", "C1"], [180, 20], [60, 135], [3.0, 2.0]).names
        ['H1', 'C1']
        """
        hs = [None] * len(names) if film_coefficient is None else list(film_coefficient)
        return cls(tuple(Stream.simple(n, a, b, c, film_coefficient=h)
                         for n, a, b, c, h in zip(names, supply_temperature, target_temperature,
                                                  heat_capacity_flow, hs, strict=True)), source)

    def to_frame(self):
        """The normalised table, one row per segment, canonical units in the headers."""
        import pandas as pd

        rows = []
        for s in self.streams:
            for g in s.segments:
                rows.append({"name": s.name, "kind": "hot" if s.is_hot else "cold",
                             "T_supply [°C]": g.supply_temperature, "T_target [°C]": g.target_temperature,
                             "CP [kW/K]": g.heat_capacity_flow, "duty [kW]": g.duty,
                             "h [kW/(m²·K)]": g.film_coefficient, "dT_min_contrib [K]": g.dt_min_contribution})
        return pd.DataFrame(rows)


class UtilityKind(enum.Enum):
    """Whether a utility supplies heat (``HOT``) or removes it (``COLD``)."""

    HOT = "hot"
    COLD = "cold"


@dataclass(frozen=True)
class Utility:
    """A hot or cold utility: steam, hot oil, flue gas, cooling water, refrigerant...

    Parameters
    ----------
    name : str
    supply_temperature, target_temperature : float
        [°C]; equal for a condensing or evaporating utility.
    cost : float
        Price [money/(kW·year)] of the duty supplied or removed.
    kind : UtilityKind
        Hot or cold; required when the two temperatures are equal.
    film_coefficient : float, optional
        [kW/(m²·K)]
    currency : str, optional
        The money the price is in, when the table names it (``"EUR"`` for ``cost [€/MWh]``); a label only.

    Examples
    --------
    >>> Utility("LP steam", 150, 149, 120.0).kind
    <UtilityKind.HOT: 'hot'>
    """

    name: str
    supply_temperature: float
    target_temperature: float
    cost: float = 0.0
    kind: UtilityKind | None = None
    film_coefficient: float | None = None
    row: int | None = field(default=None, compare=False)
    currency: str | None = field(default=None, compare=False)

    def __post_init__(self) -> None:
        ts = _temperature(self.supply_temperature, "supply temperature", "T_supply")
        tt = _temperature(self.target_temperature, "target temperature", "T_target")
        cost = _finite(self.cost, "cost", "cost")
        if not cost >= 0:
            raise InputError(f"utility '{self.name}': price must be >= 0 money/(kW·year), got {cost:g} (a utility "
                             "that earns money, such as steam raised for export, is not a utility price)",
                             row=self.row, column="cost")
        object.__setattr__(self, "supply_temperature", ts)
        object.__setattr__(self, "target_temperature", tt)
        object.__setattr__(self, "cost", cost)
        kind = self.kind
        if kind is not None and not isinstance(kind, UtilityKind):
            try:
                kind = UtilityKind(str(kind).strip().lower())
            except ValueError:
                raise InputError(f"utility kind must be 'hot' or 'cold', got {self.kind!r}",
                                 row=self.row, column="kind") from None
        implied = None if ts == tt else (UtilityKind.HOT if ts > tt else UtilityKind.COLD)
        if kind is None:
            if implied is None:
                raise InputError(f"utility '{self.name}' has equal supply and target temperatures "
                                 f"({ts:g} °C): say whether it is hot or cold (column 'kind')",
                                 row=self.row, column="kind")
            kind = implied
        elif implied is not None and implied != kind:
            raise InputError(f"utility '{self.name}' is declared {kind.value} but its temperatures "
                             f"({ts:g} → {tt:g} °C) make it {implied.value}", row=self.row, column="kind")
        object.__setattr__(self, "kind", kind)
        if self.film_coefficient is not None:
            h = _finite(self.film_coefficient, "film coefficient", "h")
            if not h > 0:
                raise InputError(f"film coefficient h must be > 0 kW/(m²·K), got {h:g}", row=self.row,
                                 column="h")
            object.__setattr__(self, "film_coefficient", h)

    @property
    def is_hot(self) -> bool:
        return self.kind is UtilityKind.HOT

    @property
    def isothermal(self) -> bool:
        """Whether it condenses or evaporates at one temperature (supply = target)."""
        return self.supply_temperature == self.target_temperature

    @property
    def hottest(self) -> float:
        """[°C]"""
        return max(self.supply_temperature, self.target_temperature)

    @property
    def coldest(self) -> float:
        """[°C]"""
        return min(self.supply_temperature, self.target_temperature)
