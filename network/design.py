"""Maximum-energy-recovery network design with the fewest units, sized and costed.

The sequence (DEVELOPERS.md, "Method notes"):

1. energy targets and utility duties by the problem table and the utility-placement LP
   (:func:`heatloom.pinch.target`), checked against the Papoulias–Grossmann transshipment LP when the
   match plan is made;
2. the minimum number of matches with heat-load distribution for each pinch subnetwork (a MILP on PuLP,
   :func:`heatloom.network.milp.plan_matches`);
3. placement of those matches with temperatures, in series or in parallel with stream splits, by a
   stagewise model restricted to them (:func:`heatloom.network.placement.stage_model`); if the matches of
   the plan cannot be placed as single units, every match of the subnetwork is allowed and the fewest
   units are sought again (said in the notes);
4. sizing of every unit (segment-wise LMTD area, U from the film coefficients), costing, and the checks of
   :func:`heatloom.network.structure.check_network`: a network that breaks a balance or ΔTmin is never
   returned.
"""

from __future__ import annotations

from collections.abc import Sequence

from .. import defaults
from ..equipment.geometry import hairpins_for_area
from ..equipment.segments import cut_profile, size_segments, utility_segment
from ..equipment.sizing import shell_design
from ..errors import InfeasibleError, InputError
from ..model import Segment, Stream, StreamTable, Utility
from ..model.costs import CostSettings, UnitKind
from ..model.exchangers import ExchangerType
from ..pinch import target
from ..pinch.utilities import ideal_utilities
from ..validation import enum_member
from .placement import Side, stage_model
from .solvers import solve
from .structure import Cooler, Exchanger, Heater, Network, check_network, stream_enthalpy
from .transshipment import Region, pinch_regions

__all__ = ["design_mer"]


def _process_side(stream: Stream, region: Region, shift: float) -> Side | None:
    """The part of a process stream inside a region, as a Side (None when it has none there)."""
    s = -shift if stream.is_hot else shift
    hi = float("inf") if region.top is None else region.top - s
    lo = float("-inf") if region.bottom is None else region.bottom - s
    t_start, t_end = stream.supply_temperature, stream.target_temperature
    if stream.is_hot:
        a, b = min(t_start, hi), max(t_end, lo)
        if a <= b:
            return None
    else:
        a, b = max(t_start, lo), min(t_end, hi)
        if b <= a:
            return None
    base = stream_enthalpy(stream, a)
    temps = [a] + [g.target_temperature for g in stream.segments
                   if (b < g.target_temperature < a if stream.is_hot else a < g.target_temperature < b)] + [b]
    enth = [stream_enthalpy(stream, t) - base for t in temps]
    if enth[-1] <= 1e-12 * max(stream.duty, 1.0):
        return None
    return Side(stream.name, stream.is_hot, tuple(temps), tuple(enth), shift)


def _utility_side(u: Utility, duty: float, dt_min: float) -> Side:
    return Side(u.name, u.is_hot, (u.supply_temperature, u.target_temperature), (0.0, duty), 0.5 * dt_min,
                utility=True)


def _missing_film_coefficients(streams: StreamTable, utilities: Sequence[Utility]) -> list[str]:
    """Streams and utilities without a film coefficient, in table order."""
    out = [f"stream '{s.name}'" for s in streams if any(g.film_coefficient is None for g in s.segments)]
    return out + [f"utility '{u.name}'" for u in utilities if u.film_coefficient is None]


def _with_h(segments, default: float | None, scale: float = 1.0) -> list[Segment]:
    """Segments with their film coefficient (or the default) and the branch's share of the flow."""
    return [Segment(g.supply_temperature, g.target_temperature, g.heat_capacity_flow * scale,
                    g.film_coefficient if g.film_coefficient is not None else default) for g in segments]


def _geometry_kind(exchanger_type) -> ExchangerType | None:
    """The kind whose geometry the design reports (None: counter-current area only)."""
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


def _geometry(area: float, unit, exchanger_type: ExchangerType | None, options: dict):
    """Area to cost, shells, F and the geometry report of one unit of the given type."""
    if exchanger_type is ExchangerType.SHELL_AND_TUBE_1_2:
        d = shell_design(unit.hot_in, unit.hot_out, unit.cold_in, unit.cold_out)
        total = area / d.f
        return total, d.shells, d.f, {"type": exchanger_type.value, "shells": d.shells, "f_factor": d.f,
                                      "area_per_shell": total / d.shells, "set_by": d.set_by}
    if exchanger_type is ExchangerType.DOUBLE_PIPE:
        length, n, per = hairpins_for_area(area, options["tube_diameter"], options["hairpin_length"])
        return area, 1, None, {"type": exchanger_type.value, "tube_length": length, "hairpins": n,
                               "area_per_hairpin": per, "installed_area": n * per,
                               "tube_diameter": options["tube_diameter"],
                               "hairpin_length": options["hairpin_length"]}
    return area, None, None, None


def design_mer(streams: StreamTable, dt_min: float, utilities: Sequence[Utility] | None = None, *,
               costs: CostSettings | None = None, solver: str | None = None, time_limit: float = 60.0,
               default_film_coefficient: float | None = None, exchanger_type: ExchangerType | None = None,
               tube_diameter: float | None = None, hairpin_length: float | None = None) -> Network:
    """A maximum-energy-recovery network with the fewest units, sized and costed.

    Parameters
    ----------
    streams : StreamTable
    dt_min : float
        Minimum approach temperature every unit keeps [K].
    utilities : sequence of Utility, optional
        Utility levels with prices [money/(kW·year)]; when omitted, :func:`ideal_utilities`.
    costs : CostSettings, optional
        Cost laws and annualisation; the defaults of :mod:`heatloom.defaults` when omitted.
    solver : str, optional
        "highs" or "cbc"; HiGHS when installed (see :mod:`heatloom.network.solvers`).
    time_limit : float
        Limit of each MILP solve [s].
    default_film_coefficient : float, optional
        Film coefficient assumed where a stream or utility has none [kW/(m²·K)]; without it a missing
        coefficient is an error (areas cannot be computed).
    exchanger_type : ExchangerType, optional
        Report every unit's geometry as this kind, one whose :attr:`~ExchangerType.has_geometry` is True:
        ``SHELL_AND_TUBE_1_2`` (shells in series and F, area raised by 1/F, cost law per shell) or
        ``DOUBLE_PIPE`` (hairpins; needs ``tube_diameter`` [m] and ``hairpin_length`` [m]).  None or
        ``COUNTER_CURRENT``: counter-current area only.

    Returns
    -------
    Network
        Passes :func:`check_network`; ``notes`` state every default and assumption used.

    Raises
    ------
    InputError
        Film coefficients missing and no default given; an exchanger type without a geometry other
        than counter-current; a double pipe without its tube diameter or hairpin length.
    InfeasibleError
        No utility can serve the process, or no placement keeps ΔTmin.
    """
    from .milp import plan_matches

    notes: list[str] = []
    geometry_options = {"tube_diameter": tube_diameter, "hairpin_length": hairpin_length}
    exchanger_type = _geometry_kind(exchanger_type)
    if exchanger_type is ExchangerType.DOUBLE_PIPE and (tube_diameter is None or hairpin_length is None):
        raise InputError("double-pipe units need a tube diameter [m] and a hairpin leg length [m] "
                         "(--tube-diameter, --hairpin-length)")
    if utilities is None:
        utilities = ideal_utilities(streams, dt_min)
        hu, cu = utilities
        notes.append(f"no utilities given: assumed an isothermal hot utility at {hu.supply_temperature:g} °C "
                     f"(h {hu.film_coefficient:g} kW/(m²·K), {hu.cost:g} money/(kW·year)) and an isothermal "
                     f"cold utility at {cu.supply_temperature:g} °C (h {cu.film_coefficient:g} kW/(m²·K), "
                     f"{cu.cost:g} money/(kW·year)); defaults, give --utilities FILE")
    costs = costs or CostSettings()
    if default_film_coefficient is not None and not default_film_coefficient > 0:
        raise InputError(f"default film coefficient must be > 0 kW/(m²·K), got {default_film_coefficient!r}")
    missing = _missing_film_coefficients(streams, utilities)
    if missing and default_film_coefficient is None:
        raise InputError(f"film coefficient h missing for {', '.join(missing)}: areas and costs need one for "
                         "every stream and utility (add an h column in kW/(m²·K), or assume one with "
                         "--default-h)")
    if missing:
        notes.append(f"film coefficient {default_film_coefficient:g} kW/(m²·K) assumed for {', '.join(missing)}")
    t = target(streams, dt_min, utilities)
    plan = plan_matches(streams, dt_min, utilities, solver=solver, time_limit=time_limit)
    solves = list(plan.reports)
    duties = plan.utility_duties
    notes.append(f"minimum matches {plan.number_of_matches} "
                 f"({'proven minimal' if plan.proven_minimum else 'best found within the time limit'}); "
                 f"minimum-units target {plan.unit_target} (N − 1 per pinch subnetwork)")
    by_utility = {u.name: u for u in utilities}
    regions = pinch_regions([p.shifted for p in t.pinches])   # process pinches (utility pinches: in the plan)
    placed = []  # (region label, PlacedUnit)
    for r_index, region in enumerate(regions):
        hot_sides, cold_sides = [], []
        for s in streams:
            side = _process_side(s, region, s.shift(dt_min))
            if side is not None:
                (hot_sides if s.is_hot else cold_sides).append(side)
        for u in utilities:
            d = duties.get(u.name, 0.0)
            if d <= 1e-9 * max(t.table.duty_scale, 1.0):
                continue
            # hot utilities serve the top region, cold utilities the bottom one (nothing crosses a pinch)
            if (u.is_hot and r_index == 0) or (not u.is_hot and r_index == len(regions) - 1):
                (hot_sides if u.is_hot else cold_sides).append(_utility_side(u, d, dt_min))
        if not hot_sides and not cold_sides:
            continue
        if not hot_sides or not cold_sides:
            raise InfeasibleError(f"subnetwork '{region.label}' has only "
                                  f"{'hot' if hot_sides else 'cold'} sides; the targets cannot be met")
        allowed = plan.allowed(top=region.top, bottom=region.bottom)
        stages = max(len(hot_sides), len(cold_sides))
        result = None
        everything = {(i.name, j.name) for i in hot_sides for j in cold_sides if not (i.utility and j.utility)}
        # 1. each planned match exactly once; 2. planned matches, some possibly twice; 3. any pair, one more
        # stage.  The first that has a solution wins (notes say when it was not the first).
        attempts = [(allowed, stages, True), (allowed, stages, False), (everything, stages + 1, False)]
        for attempt, (pairs, k, once) in enumerate(attempts):
            required = pairs if attempt < 2 and plan.proven_minimum else frozenset()
            prob, read = stage_model(hot_sides, cold_sides, pairs, k, required=required, once=once,
                                     name=f"placement_{r_index}")
            report = solve(prob, solver=solver, time_limit=time_limit,
                           name=f"placement ({region.label}, {('one unit per match', 'planned matches', 'any match')[attempt]})")
            solves.append(report)
            if report.has_solution:
                result = read()
                if attempt == 2:
                    notes.append(f"subnetwork '{region.label}': the planned matches could not be placed "
                                 "keeping ΔTmin; every match was allowed and the fewest units found instead")
                break
        if result is None:
            raise InfeasibleError(f"no placement of the matches of subnetwork '{region.label}' keeps ΔTmin "
                                  f"{dt_min:g} K at both ends of every unit")
        placed += [(region.label, p) for p in result.units]

    if len(placed) > plan.number_of_matches:
        notes.append(f"keeping ΔTmin at both ends of every unit took {len(placed)} units for the "
                     f"{plan.number_of_matches} matches of the plan (a match in two places, or a match added)")
    by_name = {s.name: s for s in streams}
    default_h = default_film_coefficient
    exchangers, heaters, coolers = [], [], []
    capital = 0.0
    for label, p in placed:
        hot_u, cold_u = by_utility.get(p.hot), by_utility.get(p.cold)
        hot_s = None if hot_u is not None else by_name[p.hot]
        cold_s = None if cold_u is not None else by_name[p.cold]
        if hot_s is not None:
            hot_segs = _with_h(cut_profile(hot_s.segments, p.hot_in, p.hot_out), default_h, p.hot_fraction)
        else:
            h = hot_u.film_coefficient if hot_u.film_coefficient is not None else default_h
            hot_segs = [utility_segment(hot_u, p.hot_in, p.hot_out, p.duty, h)]
        if cold_s is not None:
            cold_segs = _with_h(cut_profile(cold_s.segments, p.cold_in, p.cold_out), default_h,
                                p.cold_fraction)
        else:
            h = cold_u.film_coefficient if cold_u.film_coefficient is not None else default_h
            cold_segs = [utility_segment(cold_u, p.cold_in, p.cold_out, p.duty, h)]
        sizing = size_segments(hot_segs, cold_segs, rel_tol=1e-5)
        # effective LMTD and mean U of the whole unit: Q = U·A·LMTD with LMTD = Q / Σ(Q_k / LMTD_k)
        lm = p.duty / sum(i.duty / i.lmtd for i in sizing.intervals)
        u_mean = p.duty / (sizing.area * lm)
        area, shells, f, geometry = _geometry(sizing.area, p, exchanger_type, geometry_options)
        kind = UnitKind.HEATER if hot_u is not None else UnitKind.COOLER if cold_u is not None \
            else UnitKind.EXCHANGER
        cost = float(costs.annual_capital_cost(area, kind, shells or 1))
        capital += cost
        common = {"duty": p.duty, "area": area, "cost": cost, "region": label, "u": u_mean, "lmtd": lm,
                  "stage": p.stage, "shells": shells, "f_factor": f, "geometry": geometry}
        if hot_u is not None:
            heaters.append(Heater(cold=p.cold, utility=p.hot, cold_in=p.cold_in, cold_out=p.cold_out,
                                  utility_in=p.hot_in, utility_out=p.hot_out, cold_fraction=p.cold_fraction,
                                  **common))
        elif cold_u is not None:
            coolers.append(Cooler(hot=p.hot, utility=p.cold, hot_in=p.hot_in, hot_out=p.hot_out,
                                  utility_in=p.cold_in, utility_out=p.cold_out, hot_fraction=p.hot_fraction,
                                  **common))
        else:
            exchangers.append(Exchanger(hot=p.hot, cold=p.cold, hot_in=p.hot_in, hot_out=p.hot_out,
                                        cold_in=p.cold_in, cold_out=p.cold_out, hot_fraction=p.hot_fraction,
                                        cold_fraction=p.cold_fraction, **common))
    operating = float(sum(duties.get(u.name, 0.0) * u.cost for u in utilities))
    notes.append(costs.describe())
    notes.append("Areas: counter-current LMTD, U from 1/U = 1/h_hot + 1/h_cold (clean surfaces, no fouling "
                 "allowance); streams of several segments sized interval by interval.")
    if exchanger_type is ExchangerType.SHELL_AND_TUBE_1_2:
        notes.append(f"Units are 1-2 shell-and-tube: shells in series by the X_P = {defaults.X_P:g} criterion "
                     f"(Ahmad, Linnhoff & Smith), minimum F {defaults.MIN_F_FACTOR:g}; area = counter-current "
                     "area / F (F from the terminal temperatures), cost law applied per shell.")
    elif exchanger_type is ExchangerType.DOUBLE_PIPE:
        notes.append(f"Units are counter-current double-pipe hairpins of tube diameter "
                     f"{geometry_options['tube_diameter']:g} m and leg length {geometry_options['hairpin_length']:g} m"
                     " (area per hairpin π·d·2L, bends not counted); costed on the area needed.")
    net = Network(tuple(exchangers), tuple(heaters), tuple(coolers), float(dt_min),
                  capital_cost=capital, operating_cost=operating, total_annual_cost=capital + operating,
                  currency=costs.currency, notes=tuple(notes), solves=tuple(solves),
                  unit_target=plan.unit_target)
    check_network(net, streams, utilities)
    return net
