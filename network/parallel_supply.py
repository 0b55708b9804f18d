"""Non-isothermal utilities fed to their units in parallel: each unit takes the utility at its supply
temperature and returns it at the temperature its approach allows, no further than the design return.

Cooling water and hot oil normally reach their units from a supply header and go back to a return
header (*common practice*): every cooler gets water at the supply temperature, every heater oil at the
supply temperature, and the flow of each unit sets its own return temperature.  For placing units the
utility then acts as an isothermal side at its supply temperature (:func:`parallel_sides`): any piece of a
process stream that keeps the approach to the supply temperature can be served.  Once the units are
placed, :func:`with_returns` gives each utility unit the return temperature closest to the design return
(the least flow) that keeps the approach at the unit's other end and at every inner breakpoint of a
segmented stream, the utility's temperature running linearly with the unit's duty, counter-current:

* hot utility (oil, supply Ts, design return Tr < Ts) on a cold side from t_in to t_out: at a point
  of the side at temperature T, a share w of the unit's duty away from t_out, the oil is at
  Ts − (Ts − r)·w, so r ≥ Ts − (Ts − T − need)/w at every point, and r ≥ Tr;
* cold utility (water, supply Ts, design return Tr > Ts): r ≤ Ts + (T − Ts − need)/w, and r ≤ Tr.

The energy targets are unchanged (the duties are the planned ones); where a unit returns the utility short of
its design return the utility's flow exceeds the least flow of the energy target, and
:func:`header_words` says by how much and at what temperature the mixed return comes back.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from ..model import Utility
from .placement import PlacedUnit, Side

__all__ = ["parallel_sides", "with_returns", "header_words"]


def parallel_sides(hot: Sequence[Side], cold: Sequence[Side], utilities: Sequence[Utility]
                   ) -> tuple[list[Side], list[Side], dict[str, Utility]]:
    """The region's sides with every non-isothermal utility whose whole range lies in the region read as
    isothermal at its supply temperature; with those utilities by name (empty when there is none).

    >>> from heatloom.model import UtilityKind
    >>> cw = Utility("CW", 10.0, 15.0, 6.0, UtilityKind.COLD, 1.5)
    >>> hot = [Side("H", True, (80.0, 30.0), (0.0, 100.0), 5.0)]
    >>> cold = [Side("CW", False, (10.0, 15.0), (0.0, 100.0), 5.0, utility=True)]
    >>> _, cold2, names = parallel_sides(hot, cold, [cw])
    >>> cold2[0].temperatures, cold2[0].duty, sorted(names)
    ((10.0, 10.0), 100.0, ['CW'])
    """
    by_name = {u.name: u for u in utilities if not u.isothermal}
    names: dict[str, Utility] = {}

    def conv(x: Side) -> Side:
        u = by_name.get(x.name) if x.utility else None
        if u is None or x.isothermal:
            return x
        whole = abs(x.temperatures[0] - u.supply_temperature) <= 1e-9 * max(abs(u.supply_temperature), 1.0) and \
            abs(x.temperatures[-1] - u.target_temperature) <= 1e-9 * max(abs(u.target_temperature), 1.0)
        if not whole:   # a utility cut by the region's pinch keeps its reading
            return x
        names[x.name] = u
        return Side(x.name, x.hot, (u.supply_temperature, u.supply_temperature), (0.0, x.duty), x.shift, utility=True)

    return [conv(x) for x in hot], [conv(x) for x in cold], names


def _return(u: Utility, side: Side, t_in: float, t_out: float, need: float) -> float:
    """Return temperature of a unit of utility ``u`` on the process ``side`` from ``t_in`` to ``t_out``
    [°C] (see the module's rules)."""
    ts, tr = u.supply_temperature, u.target_temperature
    h_in, h_out = side.enthalpy(t_in), side.enthalpy(t_out)
    span = abs(h_out - h_in)
    points = [t_in] + [t for t in side.temperatures if min(t_in, t_out) < t < max(t_in, t_out)]
    bound = tr
    for t in points:
        w = abs(h_out - side.enthalpy(t)) / span if span > 0 else 1.0
        if w <= 0:
            continue
        if u.is_hot:
            bound = max(bound, ts - (ts - t - need) / w)
        else:
            bound = min(bound, ts + (t - ts - need) / w)
    return bound


def with_returns(units: Sequence[PlacedUnit], hot: Sequence[Side], cold: Sequence[Side],
                 parallel: dict[str, Utility]) -> list[PlacedUnit]:
    """The placed units with each unit of a utility in ``parallel`` taking it at its supply temperature
    and returning it at the temperature of :func:`_return` (the approach a unit needs: the sum of its
    sides' shifts).

    >>> from heatloom.model import UtilityKind
    >>> cw = Utility("CW", 10.0, 15.0, 6.0, UtilityKind.COLD, 1.5)
    >>> hot = [Side("H", True, (80.0, 18.0), (0.0, 124.0), 5.0)]
    >>> cold = [Side("CW", False, (10.0, 10.0), (0.0, 124.0), 5.0, utility=True)]
    >>> u = PlacedUnit("H", "CW", 0, 120.0, 80.0, 20.0, 10.0, 10.0, 1.0, 1.0)
    >>> [(x.cold_in, x.cold_out) for x in with_returns([u], hot, cold, {"CW": cw})]   # design return kept
    [(10.0, 15.0)]
    >>> u = PlacedUnit("H", "CW", 0, 4.0, 22.0, 20.0, 10.0, 10.0, 1.0, 1.0)
    >>> [(x.cold_in, x.cold_out) for x in with_returns([u], hot, cold, {"CW": cw})]   # 22 − 10 K approach
    [(10.0, 12.0)]
    """
    sides = {x.name: x for x in (*hot, *cold)}
    out = []
    for p in units:
        if p.hot in parallel:
            u, side = parallel[p.hot], sides[p.cold]
            r = _return(u, side, p.cold_in, p.cold_out, sides[p.hot].shift + side.shift)
            p = replace(p, hot_in=u.supply_temperature, hot_out=r)
        elif p.cold in parallel:
            u, side = parallel[p.cold], sides[p.hot]
            r = _return(u, side, p.hot_in, p.hot_out, sides[p.cold].shift + side.shift)
            p = replace(p, cold_in=u.supply_temperature, cold_out=r)
        out.append(p)
    return out


def header_words(units: Sequence[PlacedUnit], parallel: dict[str, Utility]) -> list[str]:
    """One sentence per utility fed in parallel: its supply, the returns of its units, its flow against the
    least flow of the energy target, the mixed return, and the cautions.

    >>> from heatloom.model import UtilityKind
    >>> cw = Utility("CW", 10.0, 15.0, 6.0, UtilityKind.COLD, 1.5)
    >>> units = [PlacedUnit("H", "CW", 0, 100.0, 80.0, 30.0, 10.0, 15.0, 1.0, 1.0),
    ...          PlacedUnit("G", "CW", 0, 100.0, 40.0, 30.0, 10.0, 12.5, 1.0, 1.0)]
    >>> w = header_words(units, {"CW": cw})[0]   # 100/5 + 100/2.5 kW/K against 200/5; 10 + 200/60 °C
    >>> w[w.index("flow"):w.index(" Caution")]
    'flow 60 kW/K against the least 40 kW/K of the energy target (1.5×), mixed return 13.3 °C.'
    """
    words = []
    for name, u in parallel.items():
        mine = [(p.duty, p.hot_out if u.is_hot else p.cold_out) for p in units
                if (p.hot if u.is_hot else p.cold) == name and p.duty > 0]
        if not mine:
            continue
        ts, tr = u.supply_temperature, u.target_temperature
        duty = sum(q for q, _ in mine)
        flow = sum(q / abs(r - ts) for q, r in mine)   # [kW/K]
        least = duty / abs(tr - ts)
        mixed = ts - duty / flow if u.is_hot else ts + duty / flow
        lo, hi = min(r for _, r in mine), max(r for _, r in mine)
        caution = ("a hot-oil or other fired-heater return hotter than its design lowers the heater's efficiency "
                   "and raises its stack temperature; check film temperatures, pressures and the pumps"
                   if u.is_hot else
                   "more water than the least flow loads the pumps and the cooling tower; check each cooler's "
                   "outlet limits (scaling, discharge temperature)")
        words.append(
            f"'{name}' fed to its {len(mine)} unit(s) in parallel from a header at {ts:g} °C, each returning it at "
            + (f"{lo:.4g} °C" if f"{lo:.4g}" == f"{hi:.4g}" else f"{lo:.4g} to {hi:.4g} °C as its approach allows")
            + f" (design return {tr:g} °C; the tick-off method's "
            f"conservative reading left no search): flow {flow:.6g} kW/K against the least {least:.6g} kW/K of "
            f"the energy target ({flow / least:.3g}×), mixed return {mixed:.1f} °C. Caution: {caution}; the "
            "design must be checked against local codes by qualified, licensed engineers")
    return words
