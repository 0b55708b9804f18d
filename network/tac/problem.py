"""The data of a lowest-TAC design: streams, utilities and cost laws as plain arrays (:class:`TacProblem`).

:func:`make_problem` gathers them from a stream table, the utilities and the cost settings, and rejects
what the stagewise model cannot represent.  Streams of several segments carry an effective CP and their
true profile (:mod:`heatloom.network.tac.profiles`).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ...errors import InputError
from ...model import MatchRules, StreamTable, Utility
from ...model.costs import CostSettings, UnitKind

__all__ = ["TacProblem", "make_problem", "REQUIRED_SHARE"]

REQUIRED_SHARE = 0.1
"""A required match carries at least this share of the most heat it could carry alone [-]
(:meth:`TacProblem.least_load`), so that the lowest-cost network cannot keep it as a token unit."""


@dataclass(frozen=True)
class TacProblem:
    """Stream, utility and cost data of a TAC design, as plain arrays (picklable for worker processes).

    Hot streams i, cold streams j, stages k (boundary 0 is the hot end).  ``heat_levels`` are the hot
    utilities, coolest first (the order in which a cold stream meets them); ``cool_levels`` the cold
    utilities, warmest first.  Laws are (fixed, per_area, exponent) per unit kind, already multiplied by
    the annualisation factor.  Streams of several segments carry their effective CP (duty over temperature
    span) in ``hot_cp`` / ``cold_cp`` and their true profile in ``hot_profiles`` / ``cold_profiles``
    (:class:`heatloom.network.tac.profiles.Profile`); ``utility_h`` holds the film coefficients of the hot
    and of the cold utility levels [kW/(m²·K)].  ``hot_shift`` / ``cold_shift`` are the streams' shifts at EMAT
    (:meth:`heatloom.model.Stream.shift`: a stream's own ΔTmin contribution where given, else EMAT/2); a
    unit must keep :meth:`need` at both ends.  ``forbidden`` and ``required`` hold unit kinds that may not
    appear or must appear at least once, as ("x", i, j), ("heat", j, level) and ("cool", i, level) (the
    forbidden and required matches of :class:`heatloom.model.MatchRules`, by index).  With
    ``branch_overshoot`` a split branch may leave its last unit beyond its stream's target temperature (a
    cold branch hotter, a hot branch colder) as long as the branches mix back to the stream's own
    temperature (:meth:`branch_limits`); without it every branch stays inside its stream's range.
    """

    hot_names: tuple[str, ...]
    cold_names: tuple[str, ...]
    hot_in: np.ndarray
    hot_out: np.ndarray
    hot_cp: np.ndarray
    hot_h: np.ndarray
    cold_in: np.ndarray
    cold_out: np.ndarray
    cold_cp: np.ndarray
    cold_h: np.ndarray
    heat_levels: tuple[Utility, ...]
    cool_levels: tuple[Utility, ...]
    laws: dict
    emat: float
    hot_shift: np.ndarray | None = None
    cold_shift: np.ndarray | None = None
    hot_profiles: tuple | None = None
    cold_profiles: tuple | None = None
    utility_h: tuple | None = None
    forbidden: frozenset = frozenset()
    required: frozenset = frozenset()
    branch_overshoot: bool = False

    @property
    def segmented(self) -> bool:
        """True when some stream has several segments: its stage "temperatures" are then the linear
        enthalpy coordinates of :mod:`heatloom.network.tac.profiles`."""
        return any(len(pr.h) > 1 for pr in (*(self.hot_profiles or ()), *(self.cold_profiles or ())))

    def need(self, i: int | None = None, j: int | None = None) -> float:
        """Least approach of a unit between hot stream i and cold stream j [K] (None: a utility side).

        EMAT, or the sum of the two sides' shifts when larger: the streams' own ΔTmin contributions are
        lower bounds on the approach where given (a utility side, or a stream without one, counts EMAT/2,
        so that without contributions every unit needs EMAT).
        """
        half = 0.5 * self.emat
        a = half if i is None or self.hot_shift is None else float(self.hot_shift[i])
        b = half if j is None or self.cold_shift is None else float(self.cold_shift[j])
        return max(self.emat, a + b)

    def branch_limits(self) -> tuple[np.ndarray, np.ndarray]:
        """(floor per hot stream, ceiling per cold stream) [°C] of the temperature a split branch may reach.

        The stream's own target temperature; with ``branch_overshoot`` the coldest temperature any cold
        side of the problem starts at (cold streams' and cold utilities' supply) and the hottest any hot
        side starts at: bounds no unit could pass anyway, so that only the units' approaches limit a
        branch.
        """
        if not self.branch_overshoot:
            return self.hot_out.copy(), self.cold_out.copy()
        floor = min(float(self.cold_in.min()), *(u.supply_temperature for u in self.cool_levels))
        ceiling = max(float(self.hot_in.max()), *(u.supply_temperature for u in self.heat_levels))
        return np.full(self.hot_out.shape, floor), np.full(self.cold_out.shape, ceiling)

    @property
    def has_contributions(self) -> bool:
        """True when some stream's shift differs from EMAT/2 (a ΔTmin contribution of its own)."""
        return any(s is not None and bool(np.any(s != 0.5 * self.emat)) for s in (self.hot_shift, self.cold_shift))

    @property
    def hot_duty(self) -> np.ndarray:
        return self.hot_cp * (self.hot_in - self.hot_out)

    @property
    def cold_duty(self) -> np.ndarray:
        return self.cold_cp * (self.cold_out - self.cold_in)

    @property
    def scale(self) -> float:
        """Largest stream duty [kW]."""
        return float(max(self.hot_duty.max(initial=0.0), self.cold_duty.max(initial=0.0), 1.0))

    def can_match(self, i: int, j: int) -> bool:
        """Whether hot i may heat cold j: not forbidden, and possible at all with EMAT (counter-current, any
        load)."""
        return ("x", i, j) not in self.forbidden and self._can_exchange(i, j)

    def _can_exchange(self, i: int, j: int) -> bool:
        return self.hot_in[i] - self.cold_in[j] > self.need(i, j)

    def heat_level_possible(self, j: int, level: int) -> bool:
        """Whether hot utility ``level`` may heat cold j at its cold end (not forbidden, EMAT kept)."""
        return ("heat", j, level) not in self.forbidden and self._can_heat(j, level)

    def _can_heat(self, j: int, level: int) -> bool:
        u = self.heat_levels[level]
        return u.supply_temperature - self.need(None, j) > self.cold_in[j] and \
            u.target_temperature - self.need(None, j) > self.cold_in[j]

    def cool_level_possible(self, i: int, level: int) -> bool:
        """Whether cold utility ``level`` may cool hot i at its hot end (not forbidden, EMAT kept)."""
        return ("cool", i, level) not in self.forbidden and self._can_cool(i, level)

    def _can_cool(self, i: int, level: int) -> bool:
        u = self.cool_levels[level]
        return u.supply_temperature + self.need(i, None) < self.hot_in[i] and \
            u.target_temperature + self.need(i, None) < self.hot_in[i]

    def least_load(self, kind) -> float:
        """Least load of a required unit kind, over all its units [kW]: :data:`REQUIRED_SHARE` of the most
        it could carry alone, at the supply end of its streams (an upper bound for the effective CP of a
        stream of several segments).

        An exchanger could carry at most the smaller duty, and no more than either CP times the supply
        temperatures' difference less the approach it needs; a heater or cooler at most its stream's duty,
        less what lies beyond the utility's supply temperature and the approach.
        """
        d = self.need(*_sides(kind))
        if kind[0] == "x":
            i, j = kind[1], kind[2]
            gap = self.hot_in[i] - self.cold_in[j] - d
            most = min(self.hot_duty[i], self.cold_duty[j], self.hot_cp[i] * gap, self.cold_cp[j] * gap)
        elif kind[0] == "heat":
            j, u = kind[1], self.heat_levels[kind[2]]
            most = self.cold_cp[j] * (min(self.cold_out[j], u.supply_temperature - d) - self.cold_in[j])
        else:
            i, u = kind[1], self.cool_levels[kind[2]]
            most = self.hot_cp[i] * (self.hot_in[i] - max(self.hot_out[i], u.supply_temperature + d))
        return REQUIRED_SHARE * max(float(most), 0.0)

    def missing(self, kinds) -> list:
        """The required unit kinds (as in ``required``) not among ``kinds``, sorted."""
        return sorted(self.required - set(kinds), key=str)

    def unit_sides(self, kind) -> tuple[str, str]:
        """(hot side, cold side) of a unit kind, in the names of the stream table and the utilities."""
        if kind[0] == "x":
            return self.hot_names[kind[1]], self.cold_names[kind[2]]
        if kind[0] == "heat":
            return self.heat_levels[kind[2]].name, self.cold_names[kind[1]]
        return self.hot_names[kind[1]], self.cool_levels[kind[2]].name

    def unit_name(self, kind) -> str:
        """``HOT:COLD`` of a unit kind."""
        return ":".join(self.unit_sides(kind))


def make_problem(streams: StreamTable, utilities, costs: CostSettings, emat: float, *,
                 default_film_coefficient: float | None = None, rules: MatchRules | None = None,
                 branch_overshoot: bool = False) -> TacProblem:
    """Gather the data of a TAC design; reject what the stagewise model cannot represent.

    Parameters
    ----------
    streams : StreamTable
        Streams with film coefficients (a stream of several segments with one per segment).
    utilities : sequence of Utility
        At least one hot and one cold utility, with prices [money/(kW·year)] and film coefficients.
    costs : CostSettings
    emat : float
        Exchanger minimum approach temperature [K], > 0.
    default_film_coefficient : float, optional
        [kW/(m²·K)] where a stream or utility has none.
    rules : MatchRules, optional
        Forbidden and required matches, by the names of the streams and utilities.  A required match must
        be possible: an exchanger whose hot stream enters hotter than the cold one by more than its least
        approach, a heater or cooler whose utility can serve the stream keeping it.
    branch_overshoot : bool
        Let split branches pass their stream's target before they mix (:meth:`TacProblem.branch_limits`).

    Raises
    ------
    InputError
        Bad EMAT, a film coefficient missing, too few streams or utilities, a rule naming an unknown
        stream or utility, or a required match that cannot exchange heat.

    Examples
    --------
    >>> from heatloom.model import UtilityKind
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 20], [40, 120], [1.0, 1.0], film_coefficient=[1, 1])
    >>> u = [Utility("steam", 180, 180, 100, UtilityKind.HOT, 2), Utility("water", 10, 20, 10, None, 2)]
    >>> p = make_problem(s, u, CostSettings(), 5.0)
    >>> p.hot_names, p.cold_names, float(p.hot_duty[0])
    (('H',), ('C',), 110.0)
    """
    if not (emat > 0) or not np.isfinite(emat):
        raise InputError(f"EMAT must be a finite number of kelvin > 0, got {emat!r}")
    d = default_film_coefficient

    def h_of(value, what):
        h = value if value is not None else d
        if h is None:
            raise InputError(f"film coefficient h missing for {what}: the TAC design sizes every unit (add an h "
                             "column in kW/(m²·K), or assume one with --default-h)")
        return float(h)

    from .profiles import stream_profile

    hot, cold = [], []
    for s in streams:
        (hot if s.is_hot else cold).append(s)
    if not hot or not cold:
        raise InputError("the TAC design needs at least one hot and one cold process stream, got "
                         f"{len(hot)} hot and {len(cold)} cold")
    hot_u = sorted((u for u in utilities if u.is_hot), key=lambda u: (u.coldest, u.hottest))
    cold_u = sorted((u for u in utilities if not u.is_hot), key=lambda u: (-u.hottest, -u.coldest))
    if not hot_u or not cold_u:
        raise InputError("the TAC design needs at least one hot and one cold utility")
    for u in (*hot_u, *cold_u):
        h_of(u.film_coefficient, f"utility '{u.name}'")
    f = costs.annualisation_factor
    laws = {k: (costs.law(k).fixed * f, costs.law(k).per_area * f, costs.law(k).exponent) for k in UnitKind}

    def arr(items, fn):
        return np.array([float(fn(s)) for s in items])

    def cp(s):   # the CP of a single segment; the effective CP (duty over span) of several
        return s.segments[0].heat_capacity_flow if len(s.segments) == 1 else \
            s.duty / abs(s.supply_temperature - s.target_temperature)

    def h_mean(s):   # a single segment's h; for several, U-like duty-weighted harmonic mean (estimates only)
        hs = [h_of(g.film_coefficient, f"stream '{s.name}'") for g in s.segments]
        return hs[0] if len(hs) == 1 else s.duty / sum(g.duty / h for g, h in zip(s.segments, hs))

    p = TacProblem(
        tuple(s.name for s in hot), tuple(s.name for s in cold),
        arr(hot, lambda s: s.supply_temperature), arr(hot, lambda s: s.target_temperature), arr(hot, cp),
        arr(hot, h_mean), arr(cold, lambda s: s.supply_temperature), arr(cold, lambda s: s.target_temperature),
        arr(cold, cp), arr(cold, h_mean), tuple(hot_u), tuple(cold_u), laws, float(emat),
        arr(hot, lambda s: s.shift(emat)), arr(cold, lambda s: s.shift(emat)),
        tuple(stream_profile(s, h_of) for s in hot), tuple(stream_profile(s, h_of) for s in cold),
        (tuple(h_of(u.film_coefficient, u.name) for u in hot_u), tuple(h_of(u.film_coefficient, u.name)
                                                                        for u in cold_u)),
        branch_overshoot=bool(branch_overshoot))
    if not rules:
        return p
    return _with_rules(p, rules, streams, utilities)


def _with_rules(p: TacProblem, rules: MatchRules, streams: StreamTable, utilities) -> TacProblem:
    """The problem with the rules' pairs as unit kinds; a required one that cannot exchange heat refused."""
    rules.check(streams, utilities)
    hot = {n: k for k, n in enumerate(p.hot_names)}
    cold = {n: k for k, n in enumerate(p.cold_names)}
    heat = {u.name: k for k, u in enumerate(p.heat_levels)}
    cool = {u.name: k for k, u in enumerate(p.cool_levels)}

    def kind(h: str, c: str):
        if h in hot and c in cold:
            return ("x", hot[h], cold[c])
        if h in heat:
            return ("heat", cold[c], heat[h])
        return ("cool", hot[h], cool[c])

    forbidden = frozenset(kind(h, c) for h, c in rules.forbidden)
    required = frozenset(kind(h, c) for h, c in rules.required)
    for k in sorted(required, key=str):
        ok = p._can_exchange(k[1], k[2]) if k[0] == "x" else \
            p._can_heat(k[1], k[2]) if k[0] == "heat" else p._can_cool(k[1], k[2])
        if not ok:
            raise InputError(f"required match {p.unit_name(k)} cannot exchange heat keeping its least approach of "
                             f"{p.need(*_sides(k)):g} K (" + _why(p, k) + ")")
    return replace(p, forbidden=forbidden, required=required)


def _sides(kind) -> tuple:
    """(hot index or None, cold index or None) of a unit kind, for :meth:`TacProblem.need`."""
    return (kind[1], kind[2]) if kind[0] == "x" else (None, kind[1]) if kind[0] == "heat" else (kind[1], None)


def _why(p: TacProblem, k) -> str:
    if k[0] == "x":
        return f"{p.hot_names[k[1]]} enters at {p.hot_in[k[1]]:g} °C, {p.cold_names[k[2]]} at {p.cold_in[k[2]]:g} °C"
    if k[0] == "heat":
        u = p.heat_levels[k[2]]
        return (f"{u.name} runs {u.supply_temperature:g} → {u.target_temperature:g} °C, {p.cold_names[k[1]]} enters "
                f"at {p.cold_in[k[1]]:g} °C")
    u = p.cool_levels[k[2]]
    return (f"{u.name} runs {u.supply_temperature:g} → {u.target_temperature:g} °C, {p.hot_names[k[1]]} enters at "
            f"{p.hot_in[k[1]]:g} °C")
