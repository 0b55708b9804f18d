"""Site inputs: the zones of a site and the utility mains between them (model types).

The mains and zones readers (:func:`heatloom.io.read_site`, :func:`heatloom.io.read_mains`) produce these;
:mod:`heatloom.pinch.site` computes the site targets from them.
"""

from __future__ import annotations

import enum
import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

from ..errors import InputError
from ..validation import check_dt_min
from .streams import StreamTable

__all__ = [
    "WATER_TRIPLE_POINT",
    "WATER_CRITICAL_TEMPERATURE",
    "MainKind",
    "SteamMain",
    "Zone",
    "check_mains",
]


WATER_TRIPLE_POINT = 0.01
"""Triple-point temperature of water [°C] (273.16 K; IAPWS R6-95(2018), the IAPWS formulation for the
thermodynamic properties of ordinary water substance)."""


WATER_CRITICAL_TEMPERATURE = 373.946
"""Critical temperature of water [°C] (647.096 K; IAPWS R6-95(2018)).  No saturated steam exists above it."""


class MainKind(enum.Enum):
    """What a main carries: steam (raised and used by the zones) or cooling (takes heat only)."""

    STEAM = "steam"
    COOLING = "cooling"


@dataclass(frozen=True)
class SteamMain:
    """A site utility main at one saturation temperature.

    Parameters
    ----------
    name : str
    temperature : float
        Saturation temperature [°C] (for a cooling main, the highest temperature it reaches).
    price : float, optional
        Price of steam from boilers, or of cooling duty [money/(kW·year)]; ``None`` when not priced.
    kind : MainKind
        Steam (default) or cooling.
    row : int, optional
        Row of the mains table (for messages only).

    Examples
    --------
    >>> SteamMain("LP", 135.0, 60.0).kind
    <MainKind.STEAM: 'steam'>
    """

    name: str
    temperature: float
    price: float | None = None
    kind: MainKind = MainKind.STEAM
    row: int | None = field(default=None, compare=False)

    def __post_init__(self) -> None:
        if not str(self.name).strip():
            raise InputError("a main needs a name", row=self.row, column="name")
        try:
            t = float(self.temperature)
        except (TypeError, ValueError):
            raise InputError(f"main '{self.name}': temperature must be a number, got {self.temperature!r}",
                             row=self.row, column="T") from None
        if not (math.isfinite(t) and t > -273.15):
            raise InputError(f"main '{self.name}': temperature must be a finite number above absolute zero "
                             f"(-273.15 °C), got {self.temperature!r}", row=self.row, column="T")
        object.__setattr__(self, "temperature", t)
        if self.price is not None:
            p = float(self.price)
            if not (math.isfinite(p) and p >= 0):
                raise InputError(f"main '{self.name}': price must be a finite number >= 0 money/(kW·year), "
                                 f"got {self.price!r}", row=self.row, column="cost")
            object.__setattr__(self, "price", p)
        kind = self.kind
        if not isinstance(kind, MainKind):
            try:
                kind = MainKind(str(kind).strip().lower())
            except ValueError:
                raise InputError(f"main '{self.name}': kind must be 'steam' or 'cooling', got {self.kind!r}",
                                 row=self.row, column="kind") from None
            object.__setattr__(self, "kind", kind)
        if kind is MainKind.STEAM and not (WATER_TRIPLE_POINT < t < WATER_CRITICAL_TEMPERATURE):
            raise InputError(f"steam main '{self.name}' at {t:g} °C: saturated steam exists only between water's "
                             f"triple point ({WATER_TRIPLE_POINT:g} °C) and critical point "
                             f"({WATER_CRITICAL_TEMPERATURE:g} °C)", row=self.row, column="T")

    @property
    def is_steam(self) -> bool:
        return self.kind is MainKind.STEAM

    def to_dict(self) -> dict:
        return {"name": self.name, "temperature": self.temperature, "kind": self.kind.value,
                "price": self.price}


@dataclass(frozen=True, eq=False)
class Zone:
    """One process (zone) of a site: its streams and, optionally, its own ΔTmin.

    Parameters
    ----------
    name : str
    streams : StreamTable
    dt_min : float, optional
        The zone's minimum approach temperature [K]; ``None`` takes the site's.
    """

    name: str
    streams: StreamTable
    dt_min: float | None = None

    def __post_init__(self) -> None:
        if not str(self.name).strip():
            raise InputError("a zone needs a name")
        if self.dt_min is not None:
            object.__setattr__(self, "dt_min", check_dt_min(self.dt_min, f"zone '{self.name}': ΔTmin"))


def _extremes(site: Iterable[StreamTable] | None) -> tuple[float, float]:
    """Hottest hot-stream and coldest cold-stream temperature of a site [°C] (-inf / +inf when none)."""
    hot_max, cold_min = -math.inf, math.inf
    for streams in site or ():
        for s in streams:
            for g in s.segments:
                if s.is_hot:
                    hot_max = max(hot_max, g.supply_temperature, g.target_temperature)
                else:
                    cold_min = min(cold_min, g.supply_temperature, g.target_temperature)
    return hot_max, cold_min


def check_mains(mains: Sequence[SteamMain], site: Iterable[StreamTable] | None = None) -> tuple[SteamMain, ...]:
    """Check a set of mains against each other and, when given, against the site's streams.

    A steam main is outside the site's range when no zone could raise steam into it (no hot stream is
    hotter than it) and none could use it (no cold stream is colder); a cooling main when no hot stream
    is hotter than it.  The check is on process temperatures, before any ΔTmin: it catches levels that
    cannot matter at all (typically a wrong unit or a typing error), not levels that a large ΔTmin makes
    useless (those simply carry no duty).

    Parameters
    ----------
    mains : sequence of SteamMain
    site : iterable of StreamTable, optional
        The zones' streams.

    Returns
    -------
    tuple of SteamMain
        Hottest first.

    Raises
    ------
    InputError
        Repeated names; two steam mains at one temperature; a main outside the site's range; a cooling main
        not below every steam main.  The message carries the main's row when it has one.

    Examples
    --------
    >>> [m.name for m in check_mains([SteamMain("LP", 135), SteamMain("HP", 250)])]
    ['HP', 'LP']
    """
    mains = tuple(mains)
    seen: dict[str, SteamMain] = {}
    for m in mains:
        if m.name in seen:
            raise InputError(f"main name '{m.name}' is used twice; names must be unique", row=m.row,
                             column="name")
        seen[m.name] = m
    hot_max, cold_min = _extremes(site)
    steam = [m for m in mains if m.is_steam]
    temps: dict[float, SteamMain] = {}
    for m in steam:
        if m.temperature in temps:
            raise InputError(f"steam mains '{temps[m.temperature].name}' and '{m.name}' are both at "
                             f"{m.temperature:g} °C; give each level once", row=m.row, column="T")
        temps[m.temperature] = m
        if site is not None and m.temperature >= hot_max and m.temperature <= cold_min:
            hot = "no hot stream" if hot_max == -math.inf else f"the hottest hot stream reaches {hot_max:g} °C"
            cold = "no cold stream" if cold_min == math.inf else f"the coldest cold stream starts at {cold_min:g} °C"
            raise InputError(f"steam main '{m.name}' at {m.temperature:g} °C is outside the site's range: {hot} "
                             f"and {cold}, so no zone could raise steam into it or use steam from it", row=m.row,
                             column="T")
    coldest_steam = min((m.temperature for m in steam), default=math.inf)
    for m in mains:
        if m.is_steam:
            continue
        if site is not None and not m.temperature < hot_max:
            hot = "the site has no hot stream" if hot_max == -math.inf else \
                f"the site's hottest hot stream reaches {hot_max:g} °C"
            raise InputError(f"cooling main '{m.name}' at {m.temperature:g} °C is outside the site's range: {hot}, "
                             "so it could take no heat", row=m.row, column="T")
        if not m.temperature < coldest_steam:
            raise InputError(f"cooling main '{m.name}' at {m.temperature:g} °C is not below every steam main "
                             f"(coldest steam main at {coldest_steam:g} °C); a cooling main must be the "
                             "coldest level", row=m.row, column="T")
    return tuple(sorted(mains, key=lambda m: (-m.temperature, m.kind.value)))
