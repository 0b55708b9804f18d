"""Site-wide targets: several zones (processes) exchanging heat through shared steam mains.

Each zone is targeted on its own (:func:`heatloom.pinch.target` at the zone's ΔTmin).  Its grand composite
curve, with the *pockets* removed (the parts of the curve the zone recovers itself), splits into a net heat
**source** below the pinch and a net heat **sink** above it.  Moved to the utility temperature scale and
added up over the zones, they make the site source profile and the site sink profile (the "total site
profiles" of the trade).  Steam mains at given saturation temperatures collect heat from the sources and
deliver it to the sinks; steam can be let down from a hotter main to a colder one, never the other way.

Conventions
-----------
* **Pockets.**  With :math:`H(T^*)` the grand composite curve (heat flowing down past shifted temperature
  :math:`T^*`), the sink profile is :math:`S(T^*) = \\min_{T' \\ge T^*} H(T')`, the heat a utility at
  :math:`T^*` can supply (everything the zone needs below :math:`T^*`, pockets closed by a vertical line);
  the source profile is :math:`R(T^*) = \\min_{T' \\le T^*} H(T')`, the heat available at or above
  :math:`T^*` for a utility to take.  Both are exact piecewise-linear envelopes; :math:`S` is zero below
  the hottest pinch and :math:`R` zero above the coldest one.
* **Utility scale.**  The grand composite lives on the shifted scale (hot streams ΔTmin/2 down, cold
  ones ΔTmin/2 up).  Sources move a further ΔTmin/2 + ΔT_site down and sinks ΔTmin/2 + ΔT_site up, so
  the process stream behind a source point at utility temperature *T* is ΔTmin + ΔT_site hotter than
  the steam raised from it, and the one behind a sink point ΔTmin + ΔT_site colder than the steam that
  heats it.  ΔTmin is the zone's own; ΔT_site (``dt_site``, default 0 K) is an extra margin for steam
  raising and use.  (A zone with per-stream ΔTmin contributions is moved by its global ΔTmin/2.)
* **Mains.**  Steam raised, hottest main first: main *m* takes :math:`R(T_m)` less what the hotter mains
  took.  Steam used, coldest main first: main *m* gives :math:`S(T_m)` less what the colder mains gave;
  the rest of the zone's hot utility is needed above the hottest main (fuel: a furnace, hot oil, ...).
  Across the site the mains cascade from the top: steam left over at a main is let down to the next
  colder main; a shortfall at a main comes from the boilers; steam left over below the coldest main has
  no user and is not raised (that heat goes to cooling).  A zone never uses its own steam: its sources
  lie below its sinks on the utility scale.
* **Cooling mains** (``kind`` cooling, e.g. cooling water at its return temperature) take the zones' heat
  that no steam main takes, hottest cooling main first; they must lie below every steam main.  All heat
  recovered through the steam mains would otherwise have gone to the hottest cooling main, so its duty
  falls by the recovery.
* **Money.**  A main's price is money/(kW·year) of steam from boilers (steam mains) or of cooling duty
  (cooling mains).  The money saving is Σ price × (zone-by-zone duty − site duty) over the priced mains;
  fuel above the hottest main has no price here and is the same in both cases.

References
----------
.. [1] Dhole, V. R., Linnhoff, B. (1993). Total site targets for fuel, co-generation, emissions, and
   cooling. Computers & Chemical Engineering 17(5/6), S101-S109.  Used here: the site source and sink
   profiles built from the zones' grand composite curves with the pockets removed.
.. [2] Klemeš, J., Dhole, V. R., Raissi, K., Perry, S. J., Puigjaner, L. (1997). Targeting and design
   methodology for reduction of fuel, power and CO2 on total sites. Applied Thermal Engineering
   17(8-10), 993-1003.  Used here: steam raised and used at the mains from those profiles, and the site's
   fuel and cooling targets.
The greedy cascade of the mains (top down, letdown only) and the treatment of cooling mains and prices
are this module's own formulation of those steps.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..model import StreamTable
from ..model.site import SteamMain, Zone, check_mains
from ..validation import check_dt_min
from .curves import Curve
from .targets import Targets, target

__all__ = [
    "ZoneTargets",
    "MainBalance",
    "SiteTargets",
    "remove_pockets",
    "zone_profiles",
    "composite_profile",
    "site_targets",
]


def _min_from_above(t: np.ndarray, h: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Exact piecewise-linear e(T) = min over T' >= T of h(T'); t ascending."""
    m = np.minimum.accumulate(h[::-1])[::-1]
    cap = m[1:]
    cross = (h[:-1] < cap) & (h[1:] > cap)   # inside segment k the line rises through the cap
    k = np.flatnonzero(cross)
    tx = t[k] + (cap[k] - h[k]) * (t[k + 1] - t[k]) / (h[k + 1] - h[k])
    return _merge(t, m, tx, cap[k])


def _min_from_below(t: np.ndarray, h: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Exact piecewise-linear e(T) = min over T' <= T of h(T'); t ascending."""
    m = np.minimum.accumulate(h)
    cap = m[:-1]
    cross = (h[:-1] > cap) & (h[1:] < cap)   # inside segment k the line falls through the cap
    k = np.flatnonzero(cross)
    tx = t[k] + (cap[k] - h[k]) * (t[k + 1] - t[k]) / (h[k + 1] - h[k])
    return _merge(t, m, tx, cap[k])


def _merge(t, v, tx, vx):
    tt = np.concatenate((t, tx))
    vv = np.concatenate((v, vx))
    order = np.argsort(tt, kind="stable")
    return tt[order], vv[order]


def remove_pockets(grand_composite: Curve) -> tuple[Curve, Curve]:
    """Split a grand composite curve into its net sink and net source, pockets removed.

    .. math::

        S(T^*) = \\min_{T' \\ge T^*} H(T'), \\qquad R(T^*) = \\min_{T' \\le T^*} H(T')

    :math:`S` is the heat a utility at shifted temperature :math:`T^*` can supply (zero below the pinch,
    the hot utility at the top); :math:`R` is the heat available at or above :math:`T^*` for a utility
    to take (zero above the pinch, the cold utility at the bottom).  Where the curve turns back (a
    pocket), the envelope runs at constant heat flow: the zone recovers that heat itself (Dhole &
    Linnhoff 1993; Klemeš et al. 1997; see the module notes).

    Parameters
    ----------
    grand_composite : Curve
        Grand composite curve, temperature ascending [°C, shifted] and heat flow [kW].

    Returns
    -------
    sink, source : Curve
        On the shifted scale, temperature ascending [°C]; enthalpy [kW] as defined above.

    Examples
    --------
    A pocket above the pinch: the curve rises to 100 kW, falls back to 40 kW and rises again to 150 kW at
    the top; 60 kW of the pocket are recovered inside the zone, so no utility is needed between 150 and
    190 °C shifted (where the envelope stays at 40 kW).

    >>> g = Curve(np.array([100.0, 150.0, 180.0, 200.0, 220.0]), np.array([0.0, 100.0, 40.0, 80.0, 150.0]),
    ...           "grand composite")
    >>> sink, source = remove_pockets(g)
    >>> sink.temperature.tolist(), sink.enthalpy.tolist()
    ([100.0, 120.0, 150.0, 180.0, 200.0, 220.0], [0.0, 40.0, 40.0, 40.0, 80.0, 150.0])
    >>> float(source.enthalpy.max())
    0.0
    """
    t = np.asarray(grand_composite.temperature, float)
    h = np.asarray(grand_composite.enthalpy, float)
    if t.size == 0:
        empty = np.array([])
        return Curve(empty, empty, "sink (pockets removed)"), Curve(empty, empty, "source (pockets removed)")
    if np.any(np.diff(t) <= 0):
        raise InputError("grand composite curve temperatures must be strictly ascending")
    ts, s = _min_from_above(t, h)
    tr, r = _min_from_below(t, h)
    return Curve(ts, s, "sink (pockets removed)"), Curve(tr, r, "source (pockets removed)")


def zone_profiles(targets: Targets, *, dt_site: float = 0.0) -> tuple[Curve, Curve]:
    """A zone's net source and sink profiles on the utility temperature scale.

    Parameters
    ----------
    targets : Targets
        The zone's own targets.
    dt_site : float, optional
        Extra temperature difference for steam raising and use [K], ≥ 0.

    Returns
    -------
    source, sink : Curve
        Temperature ascending [°C, utility scale].  ``source.enthalpy`` is the heat the zone can give to
        a main at that temperature or colder (all its heat available above it) [kW], falling from the
        cold utility to 0; ``sink.enthalpy`` the heat a main at that temperature can give the zone [kW],
        rising from 0 to the hot utility.

    Examples
    --------
    One hot stream cooling from 150 to 140 °C (CP 10 kW/K) at ΔTmin 10 K: 100 kW that steam mains up to
    140 - 10 = 130 °C can take.

    >>> from heatloom.model import StreamTable
    >>> t = target(StreamTable.from_arrays(["H"], [150.0], [140.0], [10.0]), 10)
    >>> source, sink = zone_profiles(t)
    >>> source.temperature.tolist(), source.enthalpy.tolist()
    ([130.0, 140.0], [100.0, 0.0])
    """
    if not (math.isfinite(dt_site) and dt_site >= 0):
        raise InputError(f"site ΔT for steam raising and use must be a finite number >= 0 K, got {dt_site!r}",
                         column="dt_site")
    sink, source = remove_pockets(targets.grand_composite())
    shift = 0.5 * targets.dt_min + dt_site
    return (_trim(Curve(source.temperature - shift, source.enthalpy, "source profile")),
            _trim(Curve(sink.temperature + shift, sink.enthalpy, "sink profile")))


def _trim(curve: Curve) -> Curve:
    """Drop the flat runs at both ends of a profile, keeping the points where it starts and stops changing."""
    h = curve.enthalpy
    if h.size <= 2:
        return curve
    tol = 1e-9 * max(1.0, float(np.max(np.abs(h))))
    changing = np.flatnonzero(np.abs(np.diff(h)) > tol)
    if changing.size == 0:
        return Curve(curve.temperature[:1], h[:1], curve.label)
    lo, hi = int(changing[0]), int(changing[-1]) + 1
    return Curve(curve.temperature[lo:hi + 1], h[lo:hi + 1], curve.label)


def composite_profile(profiles: Sequence[Curve], label: str) -> Curve:
    """Sum profiles over zones on a common temperature scale (outside its range each keeps its end value).

    Parameters
    ----------
    profiles : sequence of Curve
        Zone source profiles or zone sink profiles, temperature ascending [°C] and heat [kW].
    label : str

    Returns
    -------
    Curve
        Temperature ascending at every breakpoint of any zone [°C]; the summed heat [kW].  Flat runs at
        both ends are dropped (outside its range a profile keeps its end values).

    Examples
    --------
    >>> a = Curve(np.array([100.0, 120.0]), np.array([0.0, 50.0]), "a")
    >>> b = Curve(np.array([110.0, 130.0]), np.array([0.0, 20.0]), "b")
    >>> c = composite_profile([a, b], "site sink profile")
    >>> c.temperature.tolist(), c.enthalpy.tolist()
    ([100.0, 110.0, 120.0, 130.0], [0.0, 25.0, 60.0, 70.0])
    """
    profiles = [p for p in profiles if p.temperature.size]
    if not profiles:
        return Curve(np.array([]), np.array([]), label)
    t = np.unique(np.concatenate([p.temperature for p in profiles]))
    h = np.zeros_like(t)
    for p in profiles:
        h += np.interp(t, p.temperature, p.enthalpy)
    return _trim(Curve(t, h, label))


def _at(curve: Curve, t: float) -> float:
    if curve.temperature.size == 0:
        return 0.0
    return float(np.interp(t, curve.temperature, curve.enthalpy))


@dataclass(frozen=True, eq=False)
class ZoneTargets:
    """A zone's own targets and its exchange with the mains.

    Attributes
    ----------
    name : str
    targets : Targets
        The zone targeted alone at its ΔTmin.
    source, sink : Curve
        Net source and sink profiles on the utility scale (see :func:`zone_profiles`).
    raised, used : dict
        Steam the zone could raise into, and must take from, each steam main [kW].
    rejected : dict
        Heat the zone rejects into each cooling main when targeted alone [kW].
    above_mains : float
        Hot utility the zone needs above the hottest steam main (or all of it without steam mains) [kW].
    below_mains : float
        Cold utility the zone needs that no steam main takes [kW].
    """

    name: str
    targets: Targets
    source: Curve
    sink: Curve
    raised: dict[str, float]
    used: dict[str, float]
    rejected: dict[str, float]
    above_mains: float
    below_mains: float

    @property
    def dt_min(self) -> float:
        return self.targets.dt_min

    @property
    def hot_utility(self) -> float:
        return self.targets.hot_utility

    @property
    def cold_utility(self) -> float:
        return self.targets.cold_utility

    def to_dict(self) -> dict:
        t = self.targets
        return {"name": self.name, "dtmin": t.dt_min, "hot_utility": t.hot_utility,
                "cold_utility": t.cold_utility, "pinch": None if t.pinch is None else t.pinch.to_dict(),
                "threshold": None if t.threshold is None else t.threshold.value,
                "heat_above_mains": self.above_mains, "heat_below_mains": self.below_mains,
                "mains": {**{m: {"raised": self.raised[m], "used": self.used[m],
                                 "net_export": self.raised[m] - self.used[m]} for m in self.raised},
                          **{m: {"rejected": q} for m, q in self.rejected.items()}}}


@dataclass(frozen=True, eq=False)
class MainBalance:
    """The heat balance of one main over the site.

    Attributes
    ----------
    main : SteamMain
    raised : float
        Steam the zones could raise into it [kW] (cooling main: heat the zones reject into it when each is
        targeted alone).
    used : float
        Steam the zones must take from it [kW] (0 for a cooling main).
    recovered : float
        Use met by steam raised at this main or let down from hotter ones [kW].
    letdown_in, letdown_out : float
        Steam let down from the next hotter steam main, and to the next colder one [kW].
    from_boilers : float
        Use met by steam from boilers [kW].
    surplus : float
        Steam that could be raised but has no user (coldest steam main only; not raised, it goes to
        cooling) [kW].
    zone_by_zone_duty, site_duty : float
        Duty bought at this main when each zone is targeted alone (steam: ``used``; cooling: ``raised``)
        and on the site (steam: ``from_boilers``; cooling: after the recovery) [kW].
    zones : dict
        ``{zone: (raised, used)}`` [kW]; for a cooling main ``(rejected when alone, 0)``.
    """

    main: SteamMain
    raised: float
    used: float
    recovered: float
    letdown_in: float
    letdown_out: float
    from_boilers: float
    surplus: float
    zone_by_zone_duty: float
    site_duty: float
    zones: dict[str, tuple[float, float]]

    @property
    def zone_by_zone_cost(self) -> float | None:
        """[money/year]; None when the main has no price."""
        p = self.main.price
        return None if p is None else p * self.zone_by_zone_duty

    @property
    def site_cost(self) -> float | None:
        """[money/year]; None when the main has no price."""
        p = self.main.price
        return None if p is None else p * self.site_duty

    def to_dict(self) -> dict:
        return {**self.main.to_dict(), "raised": self.raised, "used": self.used, "recovered": self.recovered,
                "letdown_in": self.letdown_in, "letdown_out": self.letdown_out,
                "from_boilers": self.from_boilers, "surplus": self.surplus,
                "zone_by_zone_duty": self.zone_by_zone_duty, "site_duty": self.site_duty,
                "zone_by_zone_cost": self.zone_by_zone_cost, "site_cost": self.site_cost,
                "zones": ({z: {"raised": r, "used": u, "net_export": r - u} for z, (r, u) in self.zones.items()}
                          if self.main.is_steam else {z: {"rejected": r} for z, (r, _) in self.zones.items()})}


@dataclass(frozen=True, eq=False)
class SiteTargets:
    """Site-wide targets over several zones and the steam mains.

    Attributes
    ----------
    zones : tuple of ZoneTargets
        In the order given.
    mains : tuple of MainBalance
        Hottest first.
    dt_min : float
        The site's ΔTmin [K] (zones may have their own).
    dt_site : float
        Extra ΔT for steam raising and use [K].
    source_profile, sink_profile : Curve
        Site source and sink profiles: the zones' profiles summed on the utility scale [°C, kW].
    """

    zones: tuple[ZoneTargets, ...]
    mains: tuple[MainBalance, ...]
    dt_min: float
    dt_site: float
    source_profile: Curve
    sink_profile: Curve

    @property
    def zone_by_zone_hot_utility(self) -> float:
        """Sum of the zones' own minimum hot utilities [kW]."""
        return float(sum(z.hot_utility for z in self.zones))

    @property
    def zone_by_zone_cold_utility(self) -> float:
        """Sum of the zones' own minimum cold utilities [kW]."""
        return float(sum(z.cold_utility for z in self.zones))

    @property
    def recovered(self) -> float:
        """Heat recovered between zones through the steam mains [kW]."""
        return float(sum(m.recovered for m in self.mains if m.main.is_steam))

    @property
    def fuel_above_mains(self) -> float:
        """Hot utility needed above the hottest steam main [kW]."""
        return float(sum(z.above_mains for z in self.zones))

    @property
    def boiler_steam(self) -> float:
        """Steam from boilers into the mains [kW]."""
        return float(sum(m.from_boilers for m in self.mains if m.main.is_steam))

    @property
    def site_hot_utility(self) -> float:
        """Fuel above the mains plus steam from boilers [kW]."""
        return self.zone_by_zone_hot_utility - self.recovered

    @property
    def site_cold_utility(self) -> float:
        """Heat the site rejects to cooling [kW]."""
        return self.zone_by_zone_cold_utility - self.recovered

    @property
    def saving(self) -> float:
        """Zone-by-zone hot utility minus the site's [kW] (the cooling falls by the same amount)."""
        return self.recovered

    @property
    def priced(self) -> bool:
        return any(m.main.price is not None for m in self.mains)

    @property
    def zone_by_zone_cost(self) -> float | None:
        """Cost of the priced mains when each zone is targeted alone [money/year]."""
        if not self.priced:
            return None
        return float(sum(m.zone_by_zone_cost for m in self.mains if m.main.price is not None))

    @property
    def site_cost(self) -> float | None:
        """Cost of the priced mains on the site [money/year]."""
        if not self.priced:
            return None
        return float(sum(m.site_cost for m in self.mains if m.main.price is not None))

    @property
    def saving_money(self) -> float | None:
        """[money/year]; None when no main has a price."""
        if not self.priced:
            return None
        return self.zone_by_zone_cost - self.site_cost

    @property
    def unpriced_mains(self) -> list[str]:
        """Mains with a duty but no price (left out of the money figures)."""
        return [m.main.name for m in self.mains if m.main.price is None
                and max(m.zone_by_zone_duty, m.site_duty) > 0]

    def to_frame(self):
        """One row per main (hottest first), without the per-zone split; units as in :meth:`to_dict`."""
        import pandas as pd

        return pd.DataFrame([{k: v for k, v in b.to_dict().items() if k != "zones"} for b in self.mains])

    def to_dict(self) -> dict:
        """The JSON shape of a site run."""
        return {
            "zones": [z.to_dict() for z in self.zones],
            "mains": [m.to_dict() for m in self.mains],
            "dtmin": self.dt_min,
            "dt_site": self.dt_site,
            "site_hot_utility": self.site_hot_utility,
            "site_cold_utility": self.site_cold_utility,
            "zone_by_zone_hot_utility": self.zone_by_zone_hot_utility,
            "zone_by_zone_cold_utility": self.zone_by_zone_cold_utility,
            "recovered": self.recovered,
            "fuel_above_mains": self.fuel_above_mains,
            "boiler_steam": self.boiler_steam,
            "surplus_steam": float(sum(m.surplus for m in self.mains)),
            "saving": {"duty": self.saving, "money_per_year": self.saving_money,
                       "zone_by_zone_cost": self.zone_by_zone_cost, "site_cost": self.site_cost,
                       "unpriced_mains": self.unpriced_mains},
            "source_profile": self.source_profile.to_dict(),
            "sink_profile": self.sink_profile.to_dict(),
            "units": {"temperature": "°C", "duty": "kW", "dtmin": "K", "price": "money/(kW·year)",
                      "cost": "money/year"},
        }

    def frames(self) -> dict:
        """pandas DataFrames of the run, one per CSV file or workbook sheet (units in every header):
        ``summary``, ``zones``, ``mains``, ``zone mains``, ``profiles``."""
        import pandas as pd

        zones = pd.DataFrame([{
            "zone": z.name, "ΔTmin [K]": z.dt_min, "hot utility [kW]": z.hot_utility,
            "cold utility [kW]": z.cold_utility,
            "pinch hot [°C]": z.targets.pinch.hot if z.targets.pinch else None,
            "pinch cold [°C]": z.targets.pinch.cold if z.targets.pinch else None,
            "heat above mains [kW]": z.above_mains, "heat below mains [kW]": z.below_mains} for z in self.zones])
        mains = pd.DataFrame([{
            "main": b.main.name, "kind": b.main.kind.value, "T [°C]": b.main.temperature,
            "price [money/(kW·year)]": b.main.price, "raised [kW]": b.raised, "used [kW]": b.used,
            "recovered [kW]": b.recovered, "letdown in [kW]": b.letdown_in, "letdown out [kW]": b.letdown_out,
            "from boilers [kW]": b.from_boilers, "surplus [kW]": b.surplus,
            "zone by zone duty [kW]": b.zone_by_zone_duty, "site duty [kW]": b.site_duty,
            "zone by zone cost [money/year]": b.zone_by_zone_cost, "site cost [money/year]": b.site_cost}
            for b in self.mains], columns=["main", "kind", "T [°C]", "price [money/(kW·year)]", "raised [kW]",
                                           "used [kW]", "recovered [kW]", "letdown in [kW]", "letdown out [kW]",
                                           "from boilers [kW]", "surplus [kW]", "zone by zone duty [kW]",
                                           "site duty [kW]", "zone by zone cost [money/year]", "site cost [money/year]"])
        flows = pd.DataFrame([{"zone": z.name, "main": name, "raised [kW]": z.raised[name], "used [kW]": z.used[name],
                               "net export [kW]": z.raised[name] - z.used[name], "rejected alone [kW]": None}
                              for z in self.zones for name in z.raised]
                             + [{"zone": z.name, "main": name, "rejected alone [kW]": q}
                                for z in self.zones for name, q in z.rejected.items()],
                             columns=["zone", "main", "raised [kW]", "used [kW]", "net export [kW]",
                                      "rejected alone [kW]"])
        rows = []
        for z in [None, *self.zones]:
            src, snk = (self.source_profile, self.sink_profile) if z is None else (z.source, z.sink)
            who = "site" if z is None else z.name
            rows += [{"profile": f"{who} source", "T [°C]": t, "heat [kW]": h}
                     for t, h in zip(src.temperature, src.enthalpy)]
            rows += [{"profile": f"{who} sink", "T [°C]": t, "heat [kW]": h}
                     for t, h in zip(snk.temperature, snk.enthalpy)]
        profiles = pd.DataFrame(rows, columns=["profile", "T [°C]", "heat [kW]"])
        summary = pd.DataFrame([
            ("ΔTmin", self.dt_min, "K"), ("site ΔT for steam", self.dt_site, "K"),
            ("site hot utility", self.site_hot_utility, "kW"), ("site cold utility", self.site_cold_utility, "kW"),
            ("fuel above the mains", self.fuel_above_mains, "kW"), ("steam from boilers", self.boiler_steam, "kW"),
            ("zone-by-zone hot utility", self.zone_by_zone_hot_utility, "kW"),
            ("zone-by-zone cold utility", self.zone_by_zone_cold_utility, "kW"),
            ("recovered through the mains", self.recovered, "kW"), ("saving", self.saving, "kW"),
            ("saving per year", self.saving_money, "money/year"),
        ], columns=["quantity", "value", "unit"])
        return {"summary": summary, "zones": zones, "mains": mains, "zone mains": flows, "profiles": profiles}


def _as_zones(zones) -> tuple[Zone, ...]:
    items = [Zone(str(k), v) for k, v in zones.items()] if isinstance(zones, Mapping) else zones
    out = tuple(z if isinstance(z, Zone) else Zone(*z) for z in items)
    if not out:
        raise InputError("a site needs at least one zone")
    names = [z.name for z in out]
    for name in names:
        if names.count(name) > 1:
            raise InputError(f"zone name '{name}' is used twice; names must be unique")
    return out


def site_targets(zones: Sequence[Zone] | Mapping[str, StreamTable], mains: Sequence[SteamMain] = (),
                 dt_min: float = 10.0, *, dt_site: float = 0.0) -> SiteTargets:
    """Site-wide targets: each zone alone, the site profiles, and heat recovery through the mains.

    .. math::

        r_{z,m} = R_z(T_m) - R_z(T_{m-1}) \\;\\text{(hottest first)}, \\qquad
        u_{z,m} = S_z(T_m) - S_z(T_{m+1}) \\;\\text{(coldest first)}

        c_m = c_{m-1} + \\sum_z r_{z,m} - \\min\\left(c_{m-1} + \\sum_z r_{z,m}, \\sum_z u_{z,m}\\right)

    with :math:`R_z, S_z` the zone's source and sink profiles on the utility scale, :math:`T_1 > T_2 >
    \\dots` the steam mains and :math:`c_m` the steam let down below main *m* (:math:`c_0 = 0`); the
    recovery at main *m* is the min term (Dhole & Linnhoff 1993; Klemeš et al. 1997; conventions in the
    module notes).

    Parameters
    ----------
    zones : sequence of Zone, or mapping of name to StreamTable
        The site's processes.
    mains : sequence of SteamMain, optional
        Steam (and cooling) mains; without steam mains the site is the sum of its zones.
    dt_min : float, optional
        Site ΔTmin [K] for zones without their own; default 10 K.
    dt_site : float, optional
        Extra temperature difference for steam raising and use [K], ≥ 0; default 0 K.

    Returns
    -------
    SiteTargets

    Raises
    ------
    InputError
        No zones, repeated zone or main names, bad ΔTmin, steam outside water's saturation range, mains
        outside the site's range (see :func:`check_mains`).

    Examples
    --------
    Zone A must cool a condensing stream at 150 °C (1000 kW), zone B must heat a boiling one at 120 °C
    (800 kW); at ΔTmin 10 K steam at 135 °C can be raised in A (150 - 10 ≥ 135) and used in B
    (120 + 10 ≤ 135): the site saves 800 kW of hot utility and A still rejects 200 kW.

    >>> from heatloom.model import StreamTable
    >>> a = StreamTable.from_arrays(["condenser"], [150.5], [149.5], [1000.0])
    >>> b = StreamTable.from_arrays(["reboiler"], [119.5], [120.5], [800.0])
    >>> s = site_targets({"A": a, "B": b}, [SteamMain("LP", 135.0)], 10)
    >>> s.zone_by_zone_hot_utility, s.site_hot_utility, s.site_cold_utility, s.saving
    (800.0, 0.0, 200.0, 800.0)
    """
    zones = _as_zones(zones)
    dt_min = check_dt_min(dt_min)
    mains = check_mains(mains, [z.streams for z in zones])
    steam = [m for m in mains if m.is_steam]                      # hottest first
    cooling = [m for m in mains if not m.is_steam]                # hottest first

    zone_results = []
    for z in zones:
        t = target(z.streams, float(dt_min if z.dt_min is None else z.dt_min))
        source, sink = zone_profiles(t, dt_site=dt_site)
        raised: dict[str, float] = {}
        used: dict[str, float] = {}
        taken = 0.0
        for m in steam:                                            # hottest first
            avail = _at(source, m.temperature)
            raised[m.name] = max(0.0, avail - taken)
            taken = max(taken, avail)
        given = 0.0
        for m in reversed(steam):                                  # coldest first
            can = _at(sink, m.temperature)
            used[m.name] = max(0.0, can - given)
            given = max(given, can)
        rejected: dict[str, float] = {}
        cooled = 0.0
        for m in cooling:                                          # alone: no steam raised
            avail = _at(source, m.temperature)
            rejected[m.name] = max(0.0, avail - cooled)
            cooled = max(cooled, avail)
        above = max(0.0, t.hot_utility - given)
        below = max(0.0, t.cold_utility - taken)
        zone_results.append(ZoneTargets(z.name, t, source, sink, raised, used, rejected, above, below))

    balances = []
    carry = 0.0
    recovered_total = 0.0
    for i, m in enumerate(steam):
        r = sum(z.raised[m.name] for z in zone_results)
        u = sum(z.used[m.name] for z in zone_results)
        avail = carry + r
        served = min(avail, u)
        letdown_in = carry
        carry = avail - served
        last = i == len(steam) - 1
        balances.append(MainBalance(m, r, u, served, letdown_in, 0.0 if last else carry, u - served,
                                    carry if last else 0.0, u, u - served,
                                    {z.name: (z.raised[m.name], z.used[m.name]) for z in zone_results}))
        recovered_total += served
    for k, m in enumerate(cooling):
        r = sum(z.rejected[m.name] for z in zone_results)
        site = r - recovered_total if k == 0 else r   # recovered heat all lay above the hottest cooling main
        balances.append(MainBalance(m, r, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, r, max(0.0, site),
                                    {z.name: (z.rejected[m.name], 0.0) for z in zone_results}))
    balances.sort(key=lambda b: -b.main.temperature)
    source_profile = composite_profile([z.source for z in zone_results], "site source profile")
    sink_profile = composite_profile([z.sink for z in zone_results], "site sink profile")
    return SiteTargets(tuple(zone_results), tuple(balances), float(dt_min), float(dt_site), source_profile,
                       sink_profile)
