"""The network of a refined topology: temperatures, exact sizing (segment by segment on streams of several
segments), costs, the final check, the match rules (:func:`network_from_solution`, :func:`keeping_rules`) and
the branches that pass their stream's target (:func:`overshoot_notes`).

Used by :func:`heatloom.network.tac.search.design_tac` on every network it returns.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

import numpy as np

from ...equipment.sizing import log_mean
from ...errors import InfeasibleError
from ...model import StreamTable, Utility
from ...model.costs import CostSettings, UnitKind
from ..structure import Cooler, Exchanger, Heater, Network, check_network, process_sides
from .nlp import TacProblem, TopologySolution, unit_costs
from .problem import REQUIRED_SHARE

__all__ = ["network_from_solution", "keeping_rules", "overshoot_notes"]


def network_from_solution(p: TacProblem, sol: TopologySolution, streams: StreamTable, utilities: Sequence[Utility],
                          costs: CostSettings, *, notes: Sequence[str] = (), solves: Sequence = ()) -> Network:
    """The network of a refined topology, sized with the exact LMTD and costed from its own temperatures.

    Raises
    ------
    InfeasibleError
        If the network fails :func:`check_network` with ΔTmin = EMAT, or with the streams' ΔTmin
        contributions where some are given (never expected).
    """
    exchangers, heaters, coolers = [], [], []
    capital = operating = 0.0
    sizer = _segment_sizer(p, streams) if p.segmented else None
    for d in unit_costs(p, sol.topology, sol.x, sol.fractions):
        kind, key = d["kind"], d["key"]
        if d["duty"] <= 0:
            continue
        if sizer is None:
            lm = float(log_mean(d["hot_in"] - d["cold_out"], d["hot_out"] - d["cold_in"]))
            area = d["duty"] / (d["u"] * lm)
        else:
            area, lm, d["u"] = sizer(d)
        cost = float(costs.annual_capital_cost(area, kind))
        capital += cost
        common = {"duty": d["duty"], "area": area, "cost": cost, "u": d["u"], "lmtd": lm, "region": "whole"}
        if kind is UnitKind.EXCHANGER:
            i, j, k = key
            exchangers.append(Exchanger(p.hot_names[i], p.cold_names[j], hot_in=d["hot_in"], hot_out=d["hot_out"],
                                        cold_in=d["cold_in"], cold_out=d["cold_out"], hot_fraction=d["hot_fraction"],
                                        cold_fraction=d["cold_fraction"], stage=k, **common))
        elif kind is UnitKind.HEATER:
            _, j, lv = key
            util = p.heat_levels[lv]
            operating += d["duty"] * util.cost
            heaters.append(Heater(p.cold_names[j], util.name, cold_in=d["cold_in"], cold_out=d["cold_out"],
                                  utility_in=util.supply_temperature, utility_out=util.target_temperature,
                                  stage=sol.topology.stages if key[0] == "preheat" else -1, **common))
        else:
            _, i, lv = key
            util = p.cool_levels[lv]
            operating += d["duty"] * util.cost
            coolers.append(Cooler(p.hot_names[i], util.name, hot_in=d["hot_in"], hot_out=d["hot_out"],
                                  utility_in=util.supply_temperature, utility_out=util.target_temperature,
                                  stage=-1 if key[0] == "precool" else sol.topology.stages, **common))
    exchangers.sort(key=lambda e: (e.stage, e.hot, e.cold))
    net = Network(tuple(exchangers), tuple(heaters), tuple(coolers), p.emat, capital_cost=capital,
                  operating_cost=operating, total_annual_cost=capital + operating, currency=costs.currency,
                  notes=tuple(notes), solves=tuple(solves))
    check_network(net, streams, utilities, dt_min=p.emat, contributions=False)
    if p.has_contributions:   # and every unit keeps the sum of its sides' ΔTmin contributions
        check_network(net, streams, utilities, dt_min=p.emat, contributions=True)
    return net


OVERSHOOT_CAUTION = (
    "a split branch beyond its stream's target must be acceptable to the process and the equipment: no thermal "
    "degradation, vaporisation, freezing, wax or hydrate formation, extra fouling or corrosion, and every part "
    "within its design temperature; check the design against local codes and have it reviewed by qualified, "
    "licensed engineers")
"""The caution given with every branch that passes its stream's target (:func:`overshoot_notes`)."""


def overshoot_notes(net: Network, streams: StreamTable, tol: float = 1e-6) -> list[str]:
    """Notes on every split branch whose temperature passes its stream's target before it mixes back (a hot
    branch colder than the target, a cold branch hotter), with :data:`OVERSHOOT_CAUTION`; none when no
    branch does.

    Examples
    --------
    Invented data: a cold stream 20 -> 100 °C split in two; one branch leaves its exchanger at 104 °C.

    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 20], [60, 100], [2.0, 2.0])
    >>> x = Exchanger("H", "C", 100.0, 150, 100, 20, 104, cold_fraction=0.5 * 100 / 84)
    >>> net = Network((x,), (), (), 5.0)
    >>> overshoot_notes(net, s)[0]
    "split branch of C through the exchanger X1 (H→C) leaves at 104 °C, 4 K above the stream's target 100 °C, before it mixes back"
    """
    targets = {st.name: st.target_temperature for st in streams}
    found = []
    for unit, name, hot, fraction, _, leaves in process_sides(net):
        if fraction >= 1.0 or name not in targets:
            continue
        beyond = (targets[name] - leaves) if hot else (leaves - targets[name])
        if beyond > tol:
            kind = "exchanger" if isinstance(unit, Exchanger) else "heater" if isinstance(unit, Heater) else "cooler"
            sides = f"{unit.hot}→{unit.cold}" if isinstance(unit, Exchanger) else f"{unit.utility} on {name}"
            what = f"the {kind} {unit.name} ({sides})" if unit.name else f"the {kind} {sides}"
            found.append(f"split branch of {name} through {what} leaves at {leaves:.4g} °C, {beyond:.3g} K "
                         f"{'below' if hot else 'above'} the stream's target {targets[name]:.4g} °C, before it "
                         "mixes back")
    return found + [OVERSHOOT_CAUTION] * bool(found)


def keeping_rules(net: Network, forbidden=(), required=(), least: dict | None = None) -> Network:
    """The network, with a note of the duty of every required match, after checking that it has no
    forbidden match and every required one (:class:`InfeasibleError` otherwise: never expected, the search
    keeps to the rules).  ``least`` maps required pairs to the least load the search gave them [kW]."""
    duties: dict = {}
    for unit in (*net.exchangers, *net.heaters, *net.coolers):
        duties[unit.sides] = duties.get(unit.sides, 0.0) + unit.duty
    broken = sorted(set(forbidden) & set(duties))
    missing = sorted(set(required) - set(duties))
    if broken or missing:
        raise InfeasibleError("the network breaks the match rules: " + "; ".join(
            [f"forbidden {', '.join(f'{h}:{c}' for h, c in broken)}"] * bool(broken)
            + [f"required {', '.join(f'{h}:{c}' for h, c in missing)} missing"] * bool(missing)))
    if not required:
        return net
    least = least or {}
    note = "required matches carry " + ", ".join(
        f"{h}:{c} {duties[h, c]:,.4g} kW" + (f" (at least {least[h, c]:,.4g} kW)" if (h, c) in least else "")
        for h, c in sorted(required))
    if least:
        note += (f"; a required match carries at least {REQUIRED_SHARE * 100:g} % of the most it could carry alone, so "
                 "that it is a real unit")
    return replace(net, notes=(*net.notes, note))


def _segment_sizer(p: TacProblem, streams: StreamTable):
    """Sizing of a unit between streams of several segments: (area [m²], effective LMTD [K], mean U
    [kW/(m²·K)]) by :func:`heatloom.equipment.segments.size_segments`, as for the MER design."""
    from ...equipment.segments import cut_profile, size_segments, utility_segment
    from ...model import Segment

    by_name = {s.name: s for s in streams}

    def side(profile_owner: str, t_in, t_out, fraction):
        stream = by_name[profile_owner]
        lo, hi = sorted((stream.supply_temperature, stream.target_temperature))
        # temperatures within rounding (1e-7 K) of a stream end are cut at that end
        segs = cut_profile(stream.segments, min(max(t_in, lo), hi), min(max(t_out, lo), hi))
        prof = (p.hot_profiles if by_name[profile_owner].is_hot else p.cold_profiles)[
            (p.hot_names if by_name[profile_owner].is_hot else p.cold_names).index(profile_owner)]
        # the film coefficients the design used (a default where the table has none)
        out = []
        for g in segs:
            mid = 0.5 * (g.supply_temperature + g.target_temperature)
            h = g.film_coefficient if g.film_coefficient is not None else \
                float(prof.h[np.clip(np.searchsorted(prof.temp, mid) - 1, 0, len(prof.h) - 1)])
            out.append(Segment(g.supply_temperature, g.target_temperature, g.heat_capacity_flow * fraction, h))
        return out

    def size(d):
        kind, key = d["kind"], d["key"]
        if kind is UnitKind.HEATER:
            util = p.heat_levels[key[2]]
            hot = [utility_segment(util, d["hot_in"], d["hot_out"], d["duty"], p.utility_h[0][key[2]])]
        else:
            hot = side(p.hot_names[key[0] if kind is UnitKind.EXCHANGER else key[1]], d["hot_in"], d["hot_out"],
                       d["hot_fraction"])
        if kind is UnitKind.COOLER:
            util = p.cool_levels[key[2]]
            cold = [utility_segment(util, d["cold_in"], d["cold_out"], d["duty"], p.utility_h[1][key[2]])]
        else:
            cold = side(p.cold_names[key[1]], d["cold_in"], d["cold_out"], d["cold_fraction"])
        sizing = size_segments(hot, cold, rel_tol=1e-5)
        lm = d["duty"] / sum(i.duty / i.lmtd for i in sizing.intervals)
        return sizing.area, lm, d["duty"] / (sizing.area * lm)

    return size
