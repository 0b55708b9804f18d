"""The units of an existing network as the plant gives them (one row per unit of a network table).

:class:`ExistingUnit` is the model type the network-table reader produces; resolving a set of units
against the streams (roles, positions, U from film coefficients, areas from stated duties) is the job of
:class:`heatloom.retrofit.ExistingNetwork`.
"""

from __future__ import annotations

import enum
import math
from dataclasses import dataclass, field, replace

import numpy as np

from ..errors import InputError
from ..validation import as_written
from .exchangers import ExchangerType
from .streams import Utility

__all__ = ["UnitRole", "OperatingMode", "ExistingUnit", "UnitTable"]


class UnitRole(enum.Enum):
    """What a unit joins: two process streams, a hot utility and a cold stream, or a hot stream and a
    cold utility."""

    EXCHANGER = "exchanger"
    HEATER = "heater"
    COOLER = "cooler"


class OperatingMode(enum.Enum):
    """How a unit works in the simulation (see the module notes)."""

    RATED = "rated"
    """ε-NTU at its area and U."""
    TRIM = "trim"
    """Last heater or cooler of a stream: brings the stream to its target."""
    FIXED_DUTY = "fixed duty"
    """Heater or cooler inside a stream: keeps its stated duty."""


def _arrangement_of(value) -> ExchangerType:
    if isinstance(value, ExchangerType):
        return value
    try:
        return ExchangerType(value)
    except ValueError:
        allowed = ", ".join(a.value for a in ExchangerType)
        raise InputError(f"unknown exchanger type {value!r}; allowed: {allowed}", column="type") from None


@dataclass(frozen=True)
class ExistingUnit:
    """One unit of an existing network, as given and as completed by :class:`ExistingNetwork`.

    Parameters
    ----------
    name : str
        Unique tag of the unit (e.g. ``E-101``).
    hot, cold : str
        The hot side (hot stream or hot utility) and the cold side (cold stream or cold utility), by name.
    area : float, optional
        Heat-transfer area [m²] (for 1-2 shells in series, of all shells).  Filled in from ``duty`` when
        the temperatures at the unit are known (``area_from_duty`` is then True).
    duty : float, optional
        Stated duty [kW] (design or measured).  Used when there is no area, kept for a fixed-duty heater
        or cooler, and otherwise only checked and reported beside the simulated duty.
    u : float, optional
        Overall heat transfer coefficient [kW/(m²·K)]; filled in from the film coefficients of the two
        sides, 1/U = 1/h_hot + 1/h_cold (``u_from_films`` is then True).
    arrangement : ExchangerType, optional
        Counter-current (default), co-current, 1-2 shell-and-tube or double pipe (rated as
        counter-current, see :attr:`ExchangerType.flow_pattern`).
    shells : int, optional
        1-2 shells in series [-] (shell-and-tube only).
    hot_position, cold_position : int, optional
        Position along the hot and the cold process stream from its supply end, 1-based [-]; default the
        order of the units in the network.  None on a utility side.
    row : int, optional
        Row of the source table (for messages).
    stated_role : UnitRole, optional
        The role the table states (its ``role`` column), checked against the one the hot and cold sides
        give when the network is resolved.
    hot_fraction, cold_fraction : float, optional
        Share of the hot and the cold process stream's flow through the unit, in (0, 1] [-]; 1 (default)
        when the stream is not split there.  A unit below 1 sits on one branch of a stream split: the
        units of one split share one position along the stream, and the fractions of its branches add up to 1
        (checked by :class:`ExistingNetwork`).
    hot_branch, cold_branch : str, optional
        Label of the split branch the unit sits on, along its hot and its cold process stream; needed only
        when a branch carries several units in series: the units of one split (one position) with the same
        label form one branch, all with the branch's fraction.  Without a label every unit of a split is a
        branch of its own.  A split inside a branch is written as a path of labels, outer first, separated
        by "/" (``"b/a"``: branch a of the split on branch b).
    hot_branch_order, cold_branch_order : int, str or tuple of int, optional
        Place of the unit on its labelled branch from the split, 1-based [-]; for a path of labels one place
        per label (``"2/1"``: the split on branch b is its second item, the unit is the first on branch a);
        default the order of the units (one level only).  Kept as a tuple of int.
    hot_temperatures, cold_temperatures : tuple of (float or None), optional
        (inlet, outlet) of the hot and the cold side as stated [°C] (a network table's ``hot in``/``hot out``,
        ``cold in``/``cold out``).  On the side of a non-isothermal utility (hot oil, cooling water) they
        give the part of its range the unit takes, as a design that pipes hot oil through its heaters in
        series writes them (:meth:`utility_taken`; checked against the utility's range by
        :class:`ExistingNetwork`); without them the unit takes the utility over its whole range.  On a
        process side, and for an isothermal utility, they are informative: the simulation finds them.

    A heater or cooler that is the last unit on its stream (a *trim* unit) may have neither area nor duty:
    it takes the rest of its stream's duty, bringing the stream to its target.  Every other unit needs an
    area or a duty (checked by :class:`ExistingNetwork`, which knows the streams).

    Attributes filled in by :class:`ExistingNetwork`: ``role`` (:class:`UnitRole`), ``mode``
    (:class:`OperatingMode`), ``area_from_duty``, ``u_from_films``.
    """

    name: str
    hot: str
    cold: str
    area: float | None = None
    duty: float | None = None
    u: float | None = None
    arrangement: ExchangerType = ExchangerType.COUNTER_CURRENT
    shells: int = 1
    hot_position: int | None = None
    cold_position: int | None = None
    row: int | None = field(default=None, compare=False)
    stated_role: UnitRole | None = None
    role: UnitRole | None = None
    mode: OperatingMode | None = None
    area_from_duty: bool = False
    u_from_films: bool = False
    hot_fraction: float = 1.0
    cold_fraction: float = 1.0
    hot_branch: str | None = None
    cold_branch: str | None = None
    hot_branch_order: tuple[int, ...] | None = None
    cold_branch_order: tuple[int, ...] | None = None
    hot_temperatures: tuple[float | None, float | None] | None = None
    cold_temperatures: tuple[float | None, float | None] | None = None

    def __post_init__(self) -> None:
        where = {"row": self.row}
        name = str(self.name).strip()
        if not name:
            raise InputError("unit name is empty", column="unit", **where)
        object.__setattr__(self, "name", name)
        for side in ("hot", "cold"):
            v = str(getattr(self, side)).strip()
            if not v:
                raise InputError(f"unit '{name}': the {side} side is empty; name a {side} stream or a "
                                 f"{side} utility", column=side, **where)
            object.__setattr__(self, side, v)
        for attr, column, unit in (("area", "area", "m²"), ("duty", "duty", "kW"), ("u", "U", "kW/(m²·K)")):
            v = getattr(self, attr)
            if v is None:
                continue
            try:
                x = float(v)
            except (TypeError, ValueError):
                raise InputError(f"unit '{name}': {column} must be a number [{unit}], got {v!r}",
                                 column=column, **where) from None
            if not (x > 0) or not math.isfinite(x):
                raise InputError(f"unit '{name}': {column} must be a finite number > 0 {unit}, got {v!r}",
                                 column=column, **where)
            object.__setattr__(self, attr, x)
        if self.stated_role is not None and not isinstance(self.stated_role, UnitRole):
            try:
                object.__setattr__(self, "stated_role", UnitRole(str(self.stated_role).strip().lower()))
            except ValueError:
                raise InputError(f"unit '{name}': unknown role {self.stated_role!r}; allowed: exchanger, heater, "
                                 "cooler", column="role", **where) from None
        try:
            object.__setattr__(self, "arrangement", _arrangement_of(self.arrangement))
        except InputError as e:
            raise InputError(f"unit '{name}': {e.message}", row=self.row, column="type") from None
        shells = self.shells
        if isinstance(shells, float) and shells.is_integer():
            shells = int(shells)
        if isinstance(shells, bool) or not isinstance(shells, (int, np.integer)) or shells < 1:
            raise InputError(f"unit '{name}': shells must be a whole number >= 1, got {self.shells!r}",
                             column="shells", **where)
        if shells > 1 and self.arrangement is not ExchangerType.SHELL_AND_TUBE_1_2:
            raise InputError(f"unit '{name}': {shells} shells given for a {self.arrangement.value} unit; shells "
                             "in series apply to type shell_and_tube_1_2 only", column="shells", **where)
        object.__setattr__(self, "shells", int(shells))
        for attr, column in (("hot_position", "hot_order"), ("cold_position", "cold_order")):
            v = getattr(self, attr)
            if v is None:
                continue
            if isinstance(v, float) and v.is_integer():
                v = int(v)
            if isinstance(v, bool) or not isinstance(v, (int, np.integer)) or v < 1:
                raise InputError(f"unit '{name}': {column} must be a whole number >= 1 (position from the "
                                 f"stream's supply end), got {getattr(self, attr)!r}", column=column, **where)
            object.__setattr__(self, attr, int(v))
        for attr, column in (("hot_fraction", "hot_fraction"), ("cold_fraction", "cold_fraction")):
            v = getattr(self, attr)
            try:
                x = float(v)
            except (TypeError, ValueError):
                x = float("nan")
            if not 0 < x <= 1 + 1e-9:
                raise InputError(f"unit '{name}': {column.replace('_', ' ')} must be in (0, 1] (the share of the "
                                 f"stream's flow through this unit on a split branch), got {v!r}", column=column,
                                 **where)
            object.__setattr__(self, attr, min(1.0, x))
        for side in ("hot", "cold"):
            pair = getattr(self, f"{side}_temperatures")
            if pair is None:
                continue
            if isinstance(pair, (str, bytes)) or len(pair) != 2:
                raise InputError(f"unit '{name}': {side}_temperatures must be (inlet, outlet) [°C], got {pair!r}",
                                 column=f"{side}_in", **where)
            ends = []
            for v, column in zip(pair, (f"{side}_in", f"{side}_out")):
                try:
                    x = None if v is None or v != v else float(v)
                except (TypeError, ValueError):
                    x = float("nan")
                if x is not None and not math.isfinite(x):
                    raise InputError(f"unit '{name}': {column.replace('_', ' ')} must be a temperature [°C], got "
                                     f"{v!r}", column=column, **where)
                ends.append(x)
            object.__setattr__(self, f"{side}_temperatures", None if ends == [None, None] else tuple(ends))
        for side in ("hot", "cold"):
            label, order = getattr(self, f"{side}_branch"), getattr(self, f"{side}_branch_order")
            if label is not None:
                parts = [x.strip() for x in as_written(label).split("/")]
                if any(not x for x in parts) and any(parts):
                    raise InputError(f"unit '{name}': {side}_branch {label!r} has an empty label in its path (labels "
                                     "separated by '/', outer branch first)", column=f"{side}_branch", **where)
                label = "/".join(parts) if any(parts) else None
                object.__setattr__(self, f"{side}_branch", label)
            if order is not None:
                places = _places(order)
                if places is None:
                    raise InputError(f"unit '{name}': {side}_branch_order must be whole numbers >= 1 (places on the "
                                     f"branch from the split; '2/1' for a path of labels), got {order!r}",
                                     column=f"{side}_branch_order", **where)
                if label is not None and len(places) != label.count("/") + 1:
                    raise InputError(f"unit '{name}': {side}_branch_order {'/'.join(map(str, places))} gives "
                                     f"{len(places)} place(s) for the {label.count('/') + 1} label(s) of {side}_branch "
                                     f"{label!r}: one place per label", column=f"{side}_branch_order", **where)
                object.__setattr__(self, f"{side}_branch_order", places)

    def fraction(self, stream: str) -> float:
        """Share of process stream ``stream``'s flow through this unit [-] (1 when not split there)."""
        if stream == self.hot:
            return self.hot_fraction
        if stream == self.cold:
            return self.cold_fraction
        raise KeyError(stream)

    def branch(self, stream: str) -> str | None:
        """Label of the split branch of process stream ``stream`` the unit sits on, if one is given."""
        if stream == self.hot:
            return self.hot_branch
        if stream == self.cold:
            return self.cold_branch
        raise KeyError(stream)

    def utility_taken(self, utility: Utility) -> Utility:
        """``utility`` (one of this unit's sides) as the unit takes it: over the part of its range the unit's
        stated temperatures on that side give, when the utility is non-isothermal and both are stated;
        otherwise the utility itself.

        >>> from heatloom.model import Utility, UtilityKind
        >>> oil = Utility("oil", 330, 250, 60.0, UtilityKind.HOT)
        >>> u = ExistingUnit("HU-2", "oil", "C1", hot_temperatures=(293.0, 250.0))
        >>> part = u.utility_taken(oil)
        >>> part.supply_temperature, part.target_temperature, part.cost
        (293.0, 250.0, 60.0)
        >>> ExistingUnit("HU-3", "oil", "C1").utility_taken(oil) is oil
        True
        """
        if utility.name not in (self.hot, self.cold):
            raise KeyError(utility.name)
        pair = self.hot_temperatures if utility.name == self.hot else self.cold_temperatures
        if utility.isothermal or pair is None or None in pair:
            return utility
        return replace(utility, supply_temperature=pair[0], target_temperature=pair[1])

    @property
    def on_branch(self) -> bool:
        """True when the unit sits on a split branch of either of its streams."""
        return self.hot_fraction < 1.0 or self.cold_fraction < 1.0

    @property
    def is_utility_unit(self) -> bool:
        """True for a heater or a cooler."""
        return self.role in (UnitRole.HEATER, UnitRole.COOLER)

    @property
    def process_streams(self) -> tuple[str, ...]:
        """The process streams the unit sits on (two for an exchanger, one for a heater or cooler)."""
        if self.role is UnitRole.HEATER:
            return (self.cold,)
        if self.role is UnitRole.COOLER:
            return (self.hot,)
        return (self.hot, self.cold)

    def to_dict(self) -> dict:
        return {"unit": self.name, "hot": self.hot, "cold": self.cold, "role": _value(self.role),
                "mode": _value(self.mode), "area": self.area, "duty": self.duty, "U": self.u,
                "type": self.arrangement.value, "shells": self.shells, "hot_order": self.hot_position,
                "cold_order": self.cold_position, "hot_fraction": self.hot_fraction,
                "cold_fraction": self.cold_fraction, "hot_branch": self.hot_branch,
                "hot_branch_order": _listed(self.hot_branch_order), "cold_branch": self.cold_branch,
                "cold_branch_order": _listed(self.cold_branch_order),
                "hot_temperatures": _listed(self.hot_temperatures), "cold_temperatures": _listed(self.cold_temperatures),
                "area_from_duty": self.area_from_duty,
                "U_from_films": self.u_from_films}


def _value(e):
    return None if e is None else e.value


def _listed(places):
    return None if places is None else list(places)


def _places(value) -> tuple[int, ...] | None:
    """Places on a branch path from an int, a float that is whole, a text like ``"2/1"`` or a sequence of
    them; None when any is not a whole number >= 1."""
    if isinstance(value, (tuple, list)):
        parts = list(value)
    elif isinstance(value, str):
        parts = value.split("/")
    else:
        parts = [value]
    out = []
    for x in parts:
        if isinstance(x, str):
            x = x.strip()
            try:
                x = float(x)
            except ValueError:
                return None
        if isinstance(x, bool) or not isinstance(x, (int, float, np.integer, np.floating)):
            return None
        if not (float(x).is_integer() and x >= 1):
            return None
        out.append(int(x))
    return tuple(out) or None


@dataclass(frozen=True)
class UnitTable:
    """The units of an existing network as read from one table, before they are resolved.

    Parameters
    ----------
    units : tuple of ExistingUnit
        In the table's row order; each carries its row.
    source : str, optional
        Where the table came from (file name), for messages.
    headers : tuple of (str, str), optional
        Canonical column name → the header as the user wrote it, for messages.
    notes : tuple of str, optional
        Assumptions the reader made (e.g. shells without a type taken as 1-2 shells).

    Examples
    --------
    >>> t = UnitTable((ExistingUnit("E1", "H1", "C1", area=5.0, row=2),), "net.csv", (("area", "Surface"),))
    >>> str(t.locate(InputError("area must be > 0", row=2, column="area")))
    "net.csv, row 2, column 'Surface': area must be > 0"
    """

    units: tuple[ExistingUnit, ...]
    source: str | None = None
    headers: tuple[tuple[str, str], ...] = ()
    notes: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "units", tuple(self.units))
        object.__setattr__(self, "headers", tuple(self.headers))
        object.__setattr__(self, "notes", tuple(self.notes))

    def locate(self, err: InputError) -> InputError:
        """The error with this table's file and the user's header for its column."""
        column = dict(self.headers).get(err.column, err.column) if err.column else None
        return type(err)(err.message, file=err.file or self.source, row=err.row, column=column)
