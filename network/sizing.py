"""Sizing and costing of a network's units: the one path used by MER design, evolution and evaluation.

Each unit's area is the segment-wise counter-current LMTD area of its two sides
(:func:`heatloom.equipment.segments.size_segments`; U from 1/U = 1/h_hot + 1/h_cold, clean surfaces; a split
branch with its share of the flow); with an exchanger type that has a geometry, the area and cost are those
of 1-2 shells in series (X_P criterion, area / F, cost per shell) or of double-pipe hairpins.  A drawn network
(``own_arrangements``, used by evaluation) sizes each unit as the arrangement its units table states instead:
1-2 shells at the table's shell count (area / F), co-current with the co-current LMTD (exact for sides of
one segment; for segmented sides the counter-current area scaled by the ratio of the end-point LMTDs, an
approximation), double pipe as counter-current.  The cost is the annualised cost law of the unit's kind, and
the operating cost each utility's duty times its price.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace

from ..equipment.geometry import hairpins_for_area
from ..equipment.segments import cut_profile, size_segments, utility_segment
from ..equipment.sizing import f_factor_from_temperatures, lmtd, shell_design
from ..errors import InputError
from ..model import Segment, StreamTable, Utility
from ..model.costs import CostSettings, UnitKind
from ..model.exchangers import ExchangerType
from ..pinch.area import missing_film_coefficients
from ..validation import enum_member
from .structure import Cooler, Heater, Network

__all__ = ["with_film_coefficient", "geometry_kind", "unit_geometry", "stated_geometry", "size_network"]


def with_film_coefficient(segments, default: float | None, scale: float = 1.0) -> list[Segment]:
    """Segments with their film coefficient (or ``default`` [kW/(m²·K)]) and a branch's share ``scale`` [-] of
    the flow.

    Examples
    --------
    >>> [(g.heat_capacity_flow, g.film_coefficient) for g in with_film_coefficient([Segment(150, 60, 2.0)], 0.5, 0.25)]
    [(0.5, 0.5)]
    """
    return [Segment(g.supply_temperature, g.target_temperature, g.heat_capacity_flow * scale,
                    g.film_coefficient if g.film_coefficient is not None else default) for g in segments]


def geometry_kind(exchanger_type) -> ExchangerType | None:
    """The kind whose geometry a design reports (None: counter-current area only).

    Raises
    ------
    InputError
        A kind without a geometry other than counter-current (co-current).
    """
    if exchanger_type is None:
        return None
    kind = enum_member(ExchangerType, exchanger_type, "exchanger type")
    if kind is ExchangerType.COUNTER_CURRENT:
        return None
    if not kind.has_geometry:
        allowed = ", ".join(k.value for k in ExchangerType if k.has_geometry)
        raise InputError(f"exchanger type {kind.value} has no geometry to report: the design sizes "
                         f"counter-current areas, or the geometry of one of {allowed}")
    return kind


def unit_geometry(area: float, hot_in: float, hot_out: float, cold_in: float, cold_out: float,
                  exchanger_type: ExchangerType | None, options: Mapping | None = None):
    """Area to cost [m²], shells [-], F [-] and the geometry report of one unit of the given type.

    Parameters
    ----------
    area : float
        Counter-current area [m²].
    hot_in, hot_out, cold_in, cold_out : float
        Terminal temperatures [°C].
    exchanger_type : ExchangerType or None
        None: counter-current (no shells, no F, no geometry).
    options : mapping, optional
        ``tube_diameter`` [m] and ``hairpin_length`` [m] of double-pipe hairpins.
    """
    if exchanger_type is ExchangerType.SHELL_AND_TUBE_1_2:
        d = shell_design(hot_in, hot_out, cold_in, cold_out)
        total = area / d.f
        return total, d.shells, d.f, {"type": exchanger_type.value, "shells": d.shells, "f_factor": d.f,
                                      "area_per_shell": total / d.shells, "set_by": d.set_by}
    if exchanger_type is ExchangerType.DOUBLE_PIPE:
        options = options or {}
        length, n, per = hairpins_for_area(area, options["tube_diameter"], options["hairpin_length"])
        return area, 1, None, {"type": exchanger_type.value, "tube_length": length, "hairpins": n,
                               "area_per_hairpin": per, "installed_area": n * per,
                               "tube_diameter": options["tube_diameter"],
                               "hairpin_length": options["hairpin_length"]}
    return area, None, None, None


def stated_geometry(area: float, hot_in: float, hot_out: float, cold_in: float, cold_out: float,
                    arrangement: ExchangerType, shells: int | None):
    """Area to cost [m²], shells [-], F [-] and the geometry report of a unit of a stated arrangement.

    Parameters
    ----------
    area : float
        Counter-current area of the unit's duty [m²].
    hot_in, hot_out, cold_in, cold_out : float
        Terminal temperatures [°C].
    arrangement : ExchangerType
        The arrangement the units table states.
    shells : int or None
        1-2 shells in series the table states [-] (1 when None).

    Raises
    ------
    TemperatureCrossError
        The stated shells or a co-current unit cannot reach these temperatures.

    Examples
    --------
    A co-current unit needs more area than a counter-current one for the same temperatures (here by the
    ratio of the log means, 64.87 K counter-current against 44.27 K co-current):

    >>> round(stated_geometry(10.0, 150, 90, 30, 80, ExchangerType.CO_CURRENT, None)[0], 4)
    14.6545
    """
    if arrangement is ExchangerType.SHELL_AND_TUBE_1_2:
        n = int(shells or 1)
        f = float(f_factor_from_temperatures(hot_in, hot_out, cold_in, cold_out, shells=n))
        total = area / f
        return total, n, f, {"type": arrangement.value, "shells": n, "f_factor": f, "area_per_shell": total / n,
                             "set_by": "units table"}
    if arrangement is ExchangerType.CO_CURRENT:
        ratio = float(lmtd(hot_in, hot_out, cold_in, cold_out) / lmtd(hot_in, hot_out, cold_in, cold_out,
                                                                       ExchangerType.CO_CURRENT))
        return area * ratio, None, None, {"type": arrangement.value}
    if arrangement is ExchangerType.DOUBLE_PIPE:
        return area, None, None, {"type": arrangement.value}
    return area, None, None, None


def size_network(network: Network, streams: StreamTable, utilities: Sequence[Utility], *,
                 costs: CostSettings | None = None, default_film_coefficient: float | None = None,
                 exchanger_type: ExchangerType | None = None, geometry_options: Mapping | None = None,
                 own_arrangements: bool = False) -> Network:
    """The network with every unit sized and costed, and its capital, operating and total cost.

    Parameters
    ----------
    network : Network
        Temperatures and duties of every unit (sizes are replaced; names, regions and stages kept).
    streams : StreamTable
    utilities : sequence of Utility
        Every utility a heater or cooler names, with its price [money/(kW·year)].
    costs : CostSettings, optional
        Cost laws; the defaults when omitted.
    default_film_coefficient : float, optional
        h assumed where a stream or utility has none [kW/(m²·K)].
    exchanger_type : ExchangerType, optional
        Size every unit as this kind (see :func:`geometry_kind`); counter-current when omitted.
    geometry_options : mapping, optional
        Double-pipe ``tube_diameter`` [m] and ``hairpin_length`` [m].
    own_arrangements : bool
        Size every unit as the arrangement its ``geometry['type']`` states, with its own ``shells``
        (:func:`stated_geometry`; a simulated drawn network, see :func:`heatloom.retrofit.evaluate.evaluate_network`);
        ``exchanger_type`` must then be None.

    Returns
    -------
    Network

    Raises
    ------
    InputError
        A unit names an unknown utility, or a film coefficient is missing and no default is given.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.network.structure import Exchanger
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> e = Exchanger(hot="H1", cold="C1", duty=180.0, hot_in=150.0, hot_out=60.0, cold_in=30.0, cold_out=120.0)
    >>> net = size_network(Network((e,), (), (), 10.0), s, [])
    >>> round(net.exchangers[0].area, 3)   # Q / (U·ΔT) = 180 / (0.5 · 30)
    12.0
    """
    if own_arrangements and exchanger_type is not None:
        raise ValueError("size_network: give exchanger_type or own_arrangements, not both")
    costs = costs or CostSettings()
    by_name = {s.name: s for s in streams}
    by_utility = {u.name: u for u in utilities}
    missing = missing_film_coefficients(streams, utilities)
    if missing and default_film_coefficient is None:
        raise InputError(f"film coefficient h missing for {', '.join(missing)}: areas and costs need one for every "
                         "stream and utility (add an h column in kW/(m²·K), or assume one with --default-h)")
    h0 = default_film_coefficient

    def utility_side(name: str, t_in: float, t_out: float, duty: float, on: str, kind: UnitKind):
        if name not in by_utility:
            raise InputError(f"{kind.value} on '{on}' uses utility '{name}', which is not among the utilities given")
        u = by_utility[name]
        return [utility_segment(u, t_in, t_out, duty, u.film_coefficient if u.film_coefficient is not None else h0)]

    out: dict[str, list] = {"exchangers": [], "heaters": [], "coolers": []}
    capital = 0.0
    duties: dict[str, float] = {}
    for group, kind in (("exchangers", UnitKind.EXCHANGER), ("heaters", UnitKind.HEATER),
                        ("coolers", UnitKind.COOLER)):
        for x in getattr(network, group):
            if isinstance(x, Heater):
                duties[x.utility] = duties.get(x.utility, 0.0) + x.duty
                hot_in, hot_out, cold_in, cold_out = x.utility_in, x.utility_out, x.cold_in, x.cold_out
                hot_segs = utility_side(x.utility, hot_in, hot_out, x.duty, x.cold, kind)
                cold_segs = with_film_coefficient(cut_profile(by_name[x.cold].segments, cold_in, cold_out), h0,
                                                  x.cold_fraction)
            elif isinstance(x, Cooler):
                duties[x.utility] = duties.get(x.utility, 0.0) + x.duty
                hot_in, hot_out, cold_in, cold_out = x.hot_in, x.hot_out, x.utility_in, x.utility_out
                hot_segs = with_film_coefficient(cut_profile(by_name[x.hot].segments, hot_in, hot_out), h0,
                                                 x.hot_fraction)
                cold_segs = utility_side(x.utility, cold_in, cold_out, x.duty, x.hot, kind)
            else:
                hot_in, hot_out, cold_in, cold_out = x.hot_in, x.hot_out, x.cold_in, x.cold_out
                hot_segs = with_film_coefficient(cut_profile(by_name[x.hot].segments, hot_in, hot_out), h0,
                                                 x.hot_fraction)
                cold_segs = with_film_coefficient(cut_profile(by_name[x.cold].segments, cold_in, cold_out), h0,
                                                  x.cold_fraction)
            sizing = size_segments(hot_segs, cold_segs, rel_tol=1e-5)
            # effective LMTD and mean U of the whole unit: Q = U·A·LMTD with LMTD = Q / Σ(Q_k / LMTD_k)
            lm = x.duty / sum(i.duty / i.lmtd for i in sizing.intervals)
            u_mean = x.duty / (sizing.area * lm)
            if own_arrangements:
                stated = ExchangerType((x.geometry or {}).get("type", ExchangerType.COUNTER_CURRENT.value))
                area, shells, f, geometry = stated_geometry(sizing.area, hot_in, hot_out, cold_in, cold_out, stated,
                                                            x.shells)
            else:
                area, shells, f, geometry = unit_geometry(sizing.area, hot_in, hot_out, cold_in, cold_out,
                                                          exchanger_type, geometry_options)
            cost = float(costs.annual_capital_cost(area, kind, shells or 1))
            capital += cost
            out[group].append(replace(x, area=float(area), cost=cost, u=u_mean, lmtd=lm, shells=shells, f_factor=f,
                                      geometry=geometry))
    operating = float(sum(d * by_utility[n].cost for n, d in duties.items()))
    return replace(network, exchangers=tuple(out["exchangers"]), heaters=tuple(out["heaters"]),
                   coolers=tuple(out["coolers"]), capital_cost=capital, operating_cost=operating,
                   total_annual_cost=capital + operating, currency=costs.currency)
