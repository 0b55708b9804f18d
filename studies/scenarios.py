"""Scenario studies: targets (and optionally designs) over ΔTmin × utility prices × zones.

A site engineer asks "which ΔTmin, for which plant, if steam costs 30 % more?": the same targets as a
sweep (:mod:`heatloom.studies.sweep`), for every zone of a site and every price scenario.  A study is the
full grid of *cases* (zone, price scenario, ΔTmin), each with the energy, area, unit and cost targets of
:func:`heatloom.studies.sweep.sweep_point` and, on request, a network designed for maximum energy recovery
(:func:`heatloom.network.design.design_mer`) and costed beside the targets.  For every (zone, scenario)
pair the optimum ΔTmin is then located exactly as :func:`heatloom.studies.sweep.sweep` locates it
(breakpoints found, not sampled; optimum to 0.01 K), and the scenario's site total is the sum of its
zones' optima.

Price scenarios (:class:`PriceScenario`) set the price of named utilities and/or multiply every other
utility price by a factor; without a utility table the factor applies to the assumed (ideal) utilities.
Zones share the utility table (one site, one set of prices).

Every case, design and optimum is an independent task, run by :class:`heatloom.tasks.TaskRunner` on a
local process pool (default), serially, or on a Dask distributed cluster; results come back in order and
do not depend on what ran them.  A design is computed once for all scenarios that cannot change it
(the assumed utilities scaled by a factor: the network is the same, only its energy bill changes).

Targets and designs are screening estimates: designs must be checked against local codes and standards
by qualified, licensed engineers.

References
----------
.. [1] Linnhoff, B., Ahmad, S. (1990). Cost optimum heat exchanger networks - 1. Minimum energy and
   capital using simple models for capital cost. Computers & Chemical Engineering 14(7), 729-750.
   doi:10.1016/0098-1354(90)87083-2 (total annual cost targets against ΔTmin).
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace

import numpy as np

from ..errors import InfeasibleError, InputError, SolverError
from ..model import StreamTable, Utility
from ..model.prices import BASE_NAME, PriceScenario
from ..pinch.area import CapitalBasis, area_targets
from ..pinch.targets import target
from ..tasks import Progress, TaskRunner, describe_executor
from ..validation import check_dt_min
from .sweep import DesignPoint, SweepPoint, design_point, dt_min_grid, evaluate_points, sweep, target_case

__all__ = [
    "ScenarioCase",
    "ScenarioOptimum",
    "ScenarioTotal",
    "ScenarioStudy",
    "scenario_study",
    "MAX_CASES",
]

MAX_CASES = 200_000
"""Largest number of cases (zones × scenarios × ΔTmin values) a study accepts [-]."""


@dataclass(frozen=True)
class ScenarioCase:
    """One case of a study: the targets of a zone at one ΔTmin under one price scenario.

    ``targets`` holds the energy [kW], area [m²], units and costs [money/year];  ``design`` the designed
    network's cost when designs were asked for (else None).
    """

    zone: str
    scenario: str
    targets: SweepPoint
    design: DesignPoint | None = None

    @property
    def dt_min(self) -> float:
        return self.targets.dt_min

    def to_dict(self) -> dict:
        t = self.targets.to_dict()
        t.pop("kind")
        out = {"zone": self.zone, "scenario": self.scenario, **t}
        if self.design is not None:
            d = self.design.to_dict()
            d.pop("dtmin")
            out.update({f"design_{k}": v for k, v in d.items()})
        return out


@dataclass(frozen=True)
class ScenarioOptimum:
    """The ΔTmin of lowest total annual cost target of one zone under one price scenario.

    ``optimum`` is the located optimum (None with ``error`` set when no ΔTmin of the range is feasible);
    ``breakpoints`` the number of structural changes found in the range; ``best_design`` the cheapest
    designed network among the study's cases, when designs were asked for; ``notes`` the sweep's remarks
    (an optimum at an end of the range, or where the utilities stop serving the process).
    """

    zone: str
    scenario: str
    optimum: SweepPoint | None
    breakpoints: int = 0
    best_design: DesignPoint | None = None
    error: str = ""
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        o = self.optimum
        out = {"zone": self.zone, "scenario": self.scenario, "error": self.error, "breakpoints": self.breakpoints,
               "notes": "; ".join(self.notes)}
        for key in ("dtmin", "hot_utility", "cold_utility", "area", "units_mer", "capital_cost", "energy_cost",
                    "total_annual_cost"):
            out[key] = None if o is None else o.to_dict()[key]
        b = self.best_design
        out["best_design_dtmin"] = None if b is None else b.dt_min
        out["best_design_total_annual_cost"] = None if b is None else b.total_annual_cost
        return out


@dataclass(frozen=True)
class ScenarioTotal:
    """A price scenario's site total: the sum over zones of each zone's optimum [kW, money/year]."""

    scenario: str
    hot_utility: float
    cold_utility: float
    capital_cost: float
    energy_cost: float
    total_annual_cost: float
    zones: int
    missing: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"scenario": self.scenario, "hot_utility": self.hot_utility, "cold_utility": self.cold_utility,
                "capital_cost": self.capital_cost, "energy_cost": self.energy_cost,
                "total_annual_cost": self.total_annual_cost, "zones": self.zones, "missing": list(self.missing)}


@dataclass(frozen=True, eq=False)
class ScenarioStudy:
    """The result of :func:`scenario_study`.

    Attributes
    ----------
    zones : tuple of str
    scenarios : tuple of PriceScenario
    dt_mins : tuple of float
        The ΔTmin grid [K].
    cases : tuple of ScenarioCase
        Zone-major, then scenario, then ΔTmin.
    optima : tuple of ScenarioOptimum
        One per (zone, scenario) when optima were asked for.
    totals : tuple of ScenarioTotal
        One per scenario when optima were asked for.
    currency : str
    basis : str
        The cost basis in words.
    notes : tuple of str
    executor : str
        What ran the tasks.
    """

    zones: tuple[str, ...]
    scenarios: tuple[PriceScenario, ...]
    dt_mins: tuple[float, ...]
    cases: tuple[ScenarioCase, ...]
    optima: tuple[ScenarioOptimum, ...]
    totals: tuple[ScenarioTotal, ...]
    currency: str
    basis: str
    notes: tuple[str, ...]
    executor: str

    def to_dict(self) -> dict:
        return {"zones": list(self.zones), "scenarios": [s.to_dict() for s in self.scenarios],
                "dtmin": list(self.dt_mins), "cases": [c.to_dict() for c in self.cases],
                "optima": [o.to_dict() for o in self.optima], "totals": [t.to_dict() for t in self.totals],
                "currency": self.currency, "basis": self.basis, "notes": list(self.notes),
                "executor": self.executor}

    def frames(self) -> dict:
        """pandas DataFrames ``cases``, ``optima``, ``totals``, ``scenarios``, units in the headers."""
        import pandas as pd

        def frame(rows):
            f = pd.DataFrame(rows)
            return f.rename(columns={c: _label(c, self.currency) for c in f.columns})

        scenarios = [{**s.to_dict(), "prices": "; ".join(f"{k}={v:g}" for k, v in s.prices)} for s in self.scenarios]
        return {"cases": frame([c.to_dict() for c in self.cases]), "optima": frame([o.to_dict() for o in self.optima]),
                "totals": frame([{**t.to_dict(), "missing": "; ".join(t.missing)} for t in self.totals]), "scenarios": frame(scenarios)}


_UNITS = {"dtmin": "K", "hot_utility": "kW", "cold_utility": "kW", "area": "m²", "units": "-", "units_mer": "-",
          "shells": "-", "pinch_hot": "°C", "pinch_cold": "°C", "breakpoints": "-", "factor": "-", "zones": "-",
          "prices": "per kW·year"}


def _label(key: str, currency: str) -> str:
    """``design_total_annual_cost`` → ``design total annual cost [USD/year]``."""
    prefix = ""
    for p in ("best_design_", "design_"):
        if key.startswith(p):
            prefix, key = p.replace("_", " "), key[len(p):]
            break
    unit = f"{currency}/year" if key.endswith("_cost") else _UNITS.get(key)
    name = {"dtmin": "ΔTmin", "units_mer": "units MER"}.get(key, key.replace("_", " "))
    return f"{prefix}{name}" + (f" [{unit}]" if unit else "")


# --------------------------------------------------------------------------------------------------
# tasks (module-level: they run in other processes)


def _task_optimum(streams: StreamTable, low: float, high: float, step: float, utilities, costs, default_h,
                  basis: CapitalBasis, x_p, factor: float) -> tuple[SweepPoint | None, int, str, tuple[str, ...]]:
    try:
        r = sweep(streams, (low, high), utilities, costs, step=step, workers=1, default_film_coefficient=default_h,
                  capital_basis=basis, x_p=x_p, price_factor=factor)
    except InfeasibleError as e:
        return None, 0, str(e), ()
    return r.optimum, len(r.breakpoints), "", tuple(n for n in r.notes if not n.startswith("breakpoints located"))


def _task_design_safe(case, x: float, solver, time_limit: float) -> DesignPoint:
    try:
        return design_point(case, x, solver, time_limit)
    except (InfeasibleError, SolverError, InputError) as e:
        return DesignPoint(float(x), error=f"{type(e).__name__}: {e}")


# --------------------------------------------------------------------------------------------------
# the study


def _zones(zones) -> dict[str, StreamTable]:
    if isinstance(zones, StreamTable):
        return {"process": zones}
    if isinstance(zones, Mapping):
        items = list(zones.items())
    else:   # a sequence of heatloom.model.Zone, or of stream tables (named zone 1, zone 2, ...)
        items = [(f"zone {i}", z) if isinstance(z, StreamTable) else (getattr(z, "name", f"zone {i}"), getattr(z, "streams", z))
                 for i, z in enumerate(zones, start=1)]
    if not items:
        raise InputError("a scenario study needs at least one zone (stream table)")
    out: dict[str, StreamTable] = {}
    for name, table in items:
        if not isinstance(table, StreamTable):
            raise InputError(f"zone '{name}': expected a StreamTable, got {type(table).__name__}")
        if str(name).casefold() in {k.casefold() for k in out}:
            raise InputError(f"zone name '{name}' is used twice; names must be unique")
        out[str(name)] = table
    return out


def _scenarios(scenarios, utilities) -> tuple[PriceScenario, ...]:
    scenarios = tuple(scenarios) or (PriceScenario(BASE_NAME),)
    seen: set[str] = set()
    names = None if utilities is None else {u.name for u in utilities}
    for s in scenarios:
        if not isinstance(s, PriceScenario):
            raise InputError(f"expected PriceScenario objects, got {type(s).__name__}")
        if s.name.casefold() in seen:
            raise InputError(f"price scenario '{s.name}' is given twice; names must be unique", column="scenario")
        seen.add(s.name.casefold())
        for utility, _ in s.prices:
            if names is None:
                raise InputError(f"scenario '{s.name}' sets the price of '{utility}', but no utility table was "
                                 "given: name prices only for the utilities of a utility table (a factor alone "
                                 "scales the assumed utilities)", column="utility")
            if utility not in names:
                raise InputError(f"scenario '{s.name}' sets the price of '{utility}', which is not in the utility "
                                 f"table (utilities: {', '.join(sorted(names))})", column="utility")
    return scenarios


def scenario_study(zones, dt_min_range: tuple[float, float], utilities: Sequence[Utility] | None = None,
                   scenarios: Sequence[PriceScenario] = (), costs=None, *, step: float = 5.0,
                   designs: bool = False, optimum: bool = True, workers: int | None = None, cluster=None,
                   default_film_coefficient: float | None = None,
                   capital_basis: CapitalBasis | str = CapitalBasis.UNITS_MER, x_p: float | None = None,
                   optimum_step: float = 0.5, progress: Progress | None = None, solver: str | None = None,
                   design_time_limit: float = 30.0, max_cases: int = MAX_CASES, rules=None) -> ScenarioStudy:
    """Targets, optional designs and optimum ΔTmin for every zone × price scenario × ΔTmin.

    Parameters
    ----------
    zones : StreamTable, mapping of str to StreamTable, or sequence of Zone or of StreamTable
        The processes; one stream table is one zone named ``process``, a sequence of tables gives zones
        named ``zone 1``, ``zone 2``...
    dt_min_range : (float, float)
        Lowest and highest ΔTmin [K], 0 < low <= high.
    utilities : sequence of Utility, optional
        Utility levels and base prices [money/(kW·year)], shared by every zone; the assumed (ideal)
        utilities of each zone when omitted.
    scenarios : sequence of PriceScenario, optional
        Default: one scenario with the prices as given.
    costs : heatloom.model.CostSettings, optional
        Cost laws; the defaults of :mod:`heatloom.defaults` when omitted.
    step : float, optional
        ΔTmin grid step of the cases [K] (default 5).
    designs : bool, optional
        Also design and cost a network for every feasible case (one MILP design each; slow).
    optimum : bool, optional
        Locate the optimum ΔTmin of every (zone, scenario) pair by a sweep over the range (default).
    workers, cluster, progress
        As for :func:`heatloom.studies.sweep.sweep` (default: a local process pool, one worker per core).
    default_film_coefficient : float, optional
        [kW/(m²·K)] where a stream or utility has none.
    capital_basis, x_p
        As for :func:`heatloom.pinch.area.area_targets`.
    optimum_step : float, optional
        Grid step of the sweeps that locate the optima [K] (breakpoints are then located to 1e-3 K).
    solver, design_time_limit
        MILP solver name and time limit of each design solve [s].
    max_cases : int, optional
        Guard against a mistyped range or step.
    rules : mapping, optional
        Zone name → :class:`heatloom.model.MatchRules`, the forbidden and required matches its designs keep
        (the zone table's ``forbid``/``require`` columns, :attr:`heatloom.io.site.Site.zone_rules`).

    Returns
    -------
    ScenarioStudy

    Raises
    ------
    InputError
        Bad range, step, zones or scenarios (a price for a utility not in the table, repeated names),
        film coefficients missing with no default, more than ``max_cases`` cases.

    Examples
    --------
    >>> from heatloom.model import StreamTable, price_factor_scenarios
    >>> s = StreamTable.from_arrays(["H1", "H2", "C1", "C2"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5], film_coefficient=[0.5] * 4)
    >>> r = scenario_study({"unit A": s}, (5, 25), scenarios=price_factor_scenarios([0.2, 3]), workers=1)
    >>> len(r.cases), [round(o.optimum.dt_min) > 0 for o in r.optima]
    (10, [True, True])
    >>> r.optima[1].optimum.dt_min < r.optima[0].optimum.dt_min   # dearer energy: closer approach
    True
    """
    if not isinstance(dt_min_range, (tuple, list)) or len(dt_min_range) != 2:
        raise InputError(f"the ΔTmin range must be two numbers (low, high) [K], got {dt_min_range!r}")
    low = check_dt_min(dt_min_range[0], "lowest ΔTmin", positive=True)
    high = check_dt_min(dt_min_range[1], "highest ΔTmin", positive=True)
    if high < low:
        raise InputError(f"the highest ΔTmin ({high:g} K) must not be below the lowest ({low:g} K)", column="dtmin")
    for what, v in (("ΔTmin step", step), ("optimum step", optimum_step)):
        try:
            ok = float(v) > 0 and math.isfinite(float(v))
        except (TypeError, ValueError):
            ok = False
        if not ok:
            raise InputError(f"the {what} must be a finite number > 0 K, got {v!r}")
    if optimum and high > low:
        try:
            dt_min_grid(low, high, min(float(optimum_step), high - low))
        except InputError as e:
            raise InputError(f"optimum step: {e.message}") from None
    zone_tables = _zones(zones)
    utilities = None if utilities is None else tuple(utilities)
    plans = _scenarios(scenarios, utilities)
    xs = tuple(float(x) for x in (dt_min_grid(low, high, float(step)) if high > low else [low]))
    n_cases = len(zone_tables) * len(plans) * len(xs)
    if n_cases > max_cases:
        raise InputError(f"{len(zone_tables)} zones × {len(plans)} scenarios × {len(xs)} ΔTmin values = {n_cases:,} "
                         f"cases; at most {max_cases:,} are allowed (use a larger step or fewer scenarios)")
    # one task description per (zone, scenario): the utilities with the scenario's prices
    pairs = []
    for zone, table in zone_tables.items():
        for plan in plans:
            mine = (rules or {}).get(zone)   # the zone's forbidden and required matches, kept by its designs
            if utilities is None:
                case = target_case(table, None, costs, default_film_coefficient, capital_basis, x_p, plan.factor,
                                   rules=mine)
            else:
                case = target_case(table, plan.apply(utilities), costs, default_film_coefficient, capital_basis, x_p,
                                   rules=mine)
            pairs.append((zone, plan, case))
    runner = TaskRunner(workers, cluster, progress)
    try:
        # a few tasks per worker: split each pair's ΔTmin grid when there are fewer pairs than that
        parts = 1 if runner.name == "serial" else max(1, min(len(xs), -(-4 * (workers or os.cpu_count() or 1)
                                                                          // len(pairs))))
        chunks = [tuple(float(x) for x in c) for c in np.array_split(np.asarray(xs), parts) if c.size]
        done = runner.map(evaluate_points, [(case, c) for _, _, case in pairs for c in chunks], "cases")
        grids = [[p for part in done[k * len(chunks):(k + 1) * len(chunks)] for p in part] for k in range(len(pairs))]
        design_of: dict[tuple, DesignPoint] = {}
        if designs:
            # the assumed utilities scaled by a factor give the same network: design once, re-price per case
            keys, jobs = [], []
            for (zone, _, case), points in zip(pairs, grids):
                for p in points:
                    if not p.feasible:
                        continue
                    key = (zone, p.dt_min, case.utilities)
                    if key not in design_of:
                        design_of[key] = None
                        keys.append(key)
                        jobs.append((replace(case, price_factor=1.0), p.dt_min, solver, design_time_limit))
            for key, d in zip(keys, runner.map(_task_design_safe, jobs, "designs")):
                design_of[key] = d
        found = []
        if optimum and high > low:
            found = runner.map(_task_optimum, [(case.streams, low, high, min(float(optimum_step), high - low),
                                                case.utilities, case.costs, case.default_h, case.basis, case.x_p,
                                                case.price_factor) for _, _, case in pairs], "optima")
    finally:
        runner.close()
    cases, optima = [], []
    for i, ((zone, plan, case), points) in enumerate(zip(pairs, grids)):
        mine = []
        for p in points:
            d = None
            if designs:
                d = design_of.get((zone, p.dt_min, case.utilities))
                d = DesignPoint(p.dt_min, error=p.note or "not feasible") if d is None else _priced(d, case)
            mine.append(ScenarioCase(zone, plan.name, p, d))
        cases += mine
        if found:
            best, n_break, error, remarks = found[i]
            designed = [c.design for c in mine if c.design is not None and not c.design.error]
            optima.append(ScenarioOptimum(zone, plan.name, best, n_break,
                                          min(designed, key=lambda d: d.total_annual_cost) if designed else None,
                                          error, remarks))
    totals = []
    for plan in plans:
        mine = [o for o in optima if o.scenario == plan.name]
        ok = [o.optimum for o in mine if o.optimum is not None]
        if not mine:
            continue
        totals.append(ScenarioTotal(plan.name, sum(p.hot_utility for p in ok), sum(p.cold_utility for p in ok),
                                    sum(p.capital_cost for p in ok), sum(p.energy_cost for p in ok),
                                    sum(p.total_annual_cost for p in ok), len(ok),
                                    tuple(o.zone for o in mine if o.optimum is None)))
    first = pairs[0][2]
    basis = first.costs.describe()
    for (zone, _, case), points in zip(pairs, grids):
        good = [p for p in points if p.feasible]
        if good:
            basis = area_targets(target(case.streams, good[0].dt_min, case.utilities), case.costs,
                                 default_film_coefficient=case.default_h, capital_basis=case.basis,
                                 x_p=case.x_p).basis
            if len(zone_tables) > 1:
                basis = f"Basis as stated for zone '{zone}' at ΔTmin {good[0].dt_min:g} K (alike for every zone and " \
                        f"ΔTmin{'' if utilities is not None else ' but for the assumed utility temperatures'}): {basis}"
            break
    notes = []
    if utilities is None:
        notes.append("no utility table: each zone uses the assumed isothermal utilities (20 K plus ΔTmin beyond "
                     "the process, illustrative default prices); price factors scale those prices")
    bad = sum(1 for c in cases if not c.targets.feasible)
    if bad:
        notes.append(f"{bad} of {len(cases)} cases cannot be served by the utilities given (marked not feasible)")
    if designs:
        failed = sum(1 for c in cases if c.design is not None and c.design.error and c.targets.feasible)
        notes.append("designs: maximum energy recovery with fewest units (heatloom.network.design.design_mer), "
                     f"each design within a time budget of {design_time_limit:g} s"
                     + (f"; {failed} feasible cases have no design (see design_error)" if failed else ""))
    at_end = sum(1 for o in optima if any("end of the range" in n for n in o.notes))
    if at_end:
        notes.append(f"{at_end} of {len(optima)} optima lie at an end of the ΔTmin range ({low:g} to {high:g} K): "
                     "widen the range to see whether the cost falls further beyond it")
    if optimum and high == low:
        notes.append("one ΔTmin only: no optimum is located")
    return ScenarioStudy(tuple(zone_tables), plans, xs, tuple(cases), tuple(optima), tuple(totals),
                         first.costs.currency, basis, tuple(notes),
                         describe_executor(workers, cluster))


def _priced(d: DesignPoint, case) -> DesignPoint:
    """A design made at factor 1 with the operating cost of ``case``'s price factor."""
    if d.error or case.price_factor == 1.0:
        return d
    operating = d.operating_cost * case.price_factor
    return replace(d, operating_cost=operating, total_annual_cost=d.capital_cost + operating)
