"""ΔTmin optimisation: energy, area, units and total annual cost targets against ΔTmin, and the optimum.

The energy targets are piecewise linear in ΔTmin, with breakpoints where the pinch moves to another
stream end; the area target is continuous and smooth between such events; the unit targets step.  So
the total annual cost target TAC(ΔTmin) is continuous between *breakpoints* and may jump at them
(Linnhoff & Ahmad 1990, cost targets before design).  :func:`sweep`:

1. evaluates the targets (:func:`heatloom.pinch.area.area_targets`) on a grid of ΔTmin values;
2. between neighbouring grid points whose *structure* differs (unit targets, the stream ends that define
   the pinch, threshold or not, feasibility of the given utilities) locates each change by bisection to
   ``resolution`` and evaluates both sides of it;
3. in every stretch between breakpoints whose best sample is near the best overall, minimises the TAC
   target with scipy's bounded scalar minimiser between the neighbours of the stretch's best sample,
   to ``xtol`` (0.01 K by default);
4. optionally designs networks at chosen ΔTmin values (:func:`heatloom.network.design.design_mer`) and
   reports their costs beside the targets.

The independent evaluations of each step run on a local process pool
(:class:`concurrent.futures.ProcessPoolExecutor`, ``workers``; workers start from a fork server, not by
plain fork, see :func:`heatloom.tasks.pool_context`), serially (``workers=1``), or on a Dask
distributed cluster (``cluster``: a scheduler address or a ``dask.distributed.Client``; the optional
extra ``heatloom[dask]``).  Every task is a pure function of its inputs and results are put back in
order, so the result is identical whatever runs it.

Targets are screening estimates: designs must be checked against local codes and standards by qualified,
licensed engineers.

References
----------
.. [1] Linnhoff, B., Ahmad, S. (1990). Cost optimum heat exchanger networks - 1. Minimum energy and
   capital using simple models for capital cost. Computers & Chemical Engineering 14(7), 729-750.
   doi:10.1016/0098-1354(90)87083-2
.. [2] Brent, R. P. (1973). Algorithms for Minimization without Derivatives, ch. 5 (the bounded
   minimiser of :func:`scipy.optimize.minimize_scalar`).
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from typing import NamedTuple

import numpy as np

from ..defaults import small_dt_min_caution
from ..errors import InfeasibleError, InputError, SolverError
from ..model import StreamTable, Utility
from ..pinch.area import CapitalBasis, area_targets, missing_film_coefficients, shell_target, unit_targets
from ..pinch.problem_table import shifted_ranges
from ..pinch.targets import Targets, target
from ..tasks import Progress, TaskRunner, describe_executor
from ..validation import check_dt_min

__all__ = [
    "SweepPoint",
    "Breakpoint",
    "DesignPoint",
    "Sweep",
    "sweep_point",
    "sweep",
    "describe_executor",
    "MAX_POINTS",
    "TargetCase",
    "target_case",
    "dt_min_grid",
    "evaluate_points",
    "design_point",
]

MAX_POINTS = 20_001
"""Largest number of grid points a sweep accepts [-] (a guard against a mistyped step)."""


class _Signature(NamedTuple):
    """What may change at a breakpoint: feasibility, unit targets, the pinch-defining stream ends."""

    feasible: bool
    units: int | None
    units_mer: int | None
    shells: int | None
    pinch: tuple
    threshold: str | None


@dataclass(frozen=True)
class SweepPoint:
    """Targets at one ΔTmin of a sweep.

    Attributes
    ----------
    dt_min : float
        [K]
    feasible : bool
        False where the given utilities cannot serve the process (``note`` says why); the numbers are
        then NaN.
    hot_utility, cold_utility : float
        [kW]
    area : float
        [m²]
    units, units_mer, shells : int or None
        [-]
    capital_cost, energy_cost, total_annual_cost : float
        [money/year]
    pinch_hot, pinch_cold : float or None
        Hottest pinch, hot and cold side [°C].
    kind : str
        "grid", "breakpoint" (one side of a structural change) or "optimum".
    note : str
    """

    dt_min: float
    feasible: bool
    hot_utility: float = math.nan
    cold_utility: float = math.nan
    area: float = math.nan
    units: int | None = None
    units_mer: int | None = None
    shells: int | None = None
    capital_cost: float = math.nan
    energy_cost: float = math.nan
    total_annual_cost: float = math.nan
    pinch_hot: float | None = None
    pinch_cold: float | None = None
    kind: str = "grid"
    note: str = ""
    signature: _Signature | None = field(default=None, compare=False, repr=False)

    def to_dict(self) -> dict:
        return {"dtmin": self.dt_min, "feasible": self.feasible, "hot_utility": self.hot_utility,
                "cold_utility": self.cold_utility, "area": self.area, "units": self.units,
                "units_mer": self.units_mer, "shells": self.shells, "capital_cost": self.capital_cost,
                "energy_cost": self.energy_cost, "total_annual_cost": self.total_annual_cost,
                "pinch_hot": self.pinch_hot, "pinch_cold": self.pinch_cold, "kind": self.kind,
                "note": self.note}


@dataclass(frozen=True)
class Breakpoint:
    """A structural change located between two ΔTmin values ``low`` < ``high`` [K].

    ``changes`` names what changed, among "feasibility", "units", "units_mer", "shells", "threshold"
    and "pinch" (the stream ends that define the pinch); ``change`` says it in words.
    """

    low: float
    high: float
    change: str
    changes: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"dtmin_low": self.low, "dtmin_high": self.high, "change": self.change,
                "changes": list(self.changes)}


@dataclass(frozen=True)
class DesignPoint:
    """Cost of a network designed for maximum energy recovery at one ΔTmin (beside the targets).

    ``area`` is the sum of the unit areas [m²], costs in [money/year]; ``error`` holds the reason when
    no network could be designed there (the numbers are then NaN).
    """

    dt_min: float
    units: int | None = None
    area: float = math.nan
    capital_cost: float = math.nan
    operating_cost: float = math.nan
    total_annual_cost: float = math.nan
    error: str = ""

    def to_dict(self) -> dict:
        return {"dtmin": self.dt_min, "units": self.units, "area": self.area, "capital_cost": self.capital_cost,
                "operating_cost": self.operating_cost, "total_annual_cost": self.total_annual_cost,
                "error": self.error}


@dataclass(frozen=True, eq=False)
class Sweep:
    """Targets against ΔTmin and the optimum (see :func:`sweep`).

    Attributes
    ----------
    points : tuple of SweepPoint
        Grid points and both sides of every breakpoint, ascending in ΔTmin.
    breakpoints : tuple of Breakpoint
    optimum : SweepPoint
        Lowest total annual cost target found.
    designs : tuple of DesignPoint
    dt_min_range : (float, float)
        [K]
    step : float
        Grid step [K].
    currency : str
    basis : str
        How the targets were computed, in plain words.
    notes : tuple of str
    """

    points: tuple[SweepPoint, ...]
    breakpoints: tuple[Breakpoint, ...]
    optimum: SweepPoint
    designs: tuple[DesignPoint, ...]
    dt_min_range: tuple[float, float]
    step: float
    currency: str
    basis: str
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"points": [p.to_dict() for p in self.points],
                "optimum": self.optimum.to_dict(),
                "breakpoints": [b.to_dict() for b in self.breakpoints],
                "designs": [d.to_dict() for d in self.designs],
                "dtmin_range": list(self.dt_min_range), "step": self.step, "currency": self.currency,
                "basis": self.basis, "notes": list(self.notes),
                "units_of_measure": {"dtmin": "K", "duty": "kW", "area": "m²",
                                     "costs": f"{self.currency} per year"}}

    def to_frame(self):
        """One row per point, units in the headers."""
        import pandas as pd

        cur = self.currency
        return pd.DataFrame([{
            "ΔTmin [K]": p.dt_min, "kind": p.kind, "feasible": p.feasible, "hot utility [kW]": p.hot_utility,
            "cold utility [kW]": p.cold_utility, "area [m²]": p.area, "units [-]": p.units,
            "units MER [-]": p.units_mer, "shells [-]": p.shells,
            f"capital cost [{cur}/year]": p.capital_cost, f"energy cost [{cur}/year]": p.energy_cost,
            f"total annual cost [{cur}/year]": p.total_annual_cost, "pinch hot [°C]": p.pinch_hot,
            "pinch cold [°C]": p.pinch_cold, "note": p.note} for p in self.points])


# --------------------------------------------------------------------------------------------------
# one point


@dataclass(frozen=True, eq=False)
class TargetCase:
    """Everything a task of a sweep or a scenario study needs (pickled once per task), from :func:`target_case`.

    The streams; the utilities with their prices [money/(kW·year)], any price factor applied (None for the
    ideal utilities); the cost settings; ``default_h``, the film coefficient where none is given [kW/(m²·K)];
    the capital basis; X_P [-]; ``price_factor`` [-], left on the ideal utilities' energy cost (else 1);
    ``rules``, the forbidden and required matches every design keeps (:class:`heatloom.model.MatchRules`).
    """

    streams: StreamTable
    utilities: tuple[Utility, ...] | None
    costs: object
    default_h: float | None
    basis: CapitalBasis
    x_p: float | None
    price_factor: float = 1.0   # on the assumed (ideal) utilities' prices; given utilities carry theirs
    rules: object = None        # heatloom.model.MatchRules the designs keep (the stream table's forbid/require)


def _pinch_ends(t: Targets) -> tuple:
    """The segment ends (index, 'upper'/'lower') that sit at each pinch, hottest pinch first."""
    if not t.pinches:
        return ()
    upper, lower = shifted_ranges(t.streams.arrays, t.dt_min)
    scale = 1e-9 * max(1.0, float(np.max(np.abs(upper))))
    out = []
    for p in t.pinches:
        ends = [(int(i), "upper") for i in np.flatnonzero(np.abs(upper - p.shifted) <= scale)]
        ends += [(int(i), "lower") for i in np.flatnonzero(np.abs(lower - p.shifted) <= scale)]
        out.append(tuple(sorted(ends)))
    return tuple(out)


def _targets(case: TargetCase, x: float) -> Targets | str:
    try:
        return target(case.streams, x, case.utilities)
    except InfeasibleError as e:
        return str(e)


def _signature(case: TargetCase, t: Targets | str, composites=None) -> _Signature:
    if isinstance(t, str):
        return _Signature(False, None, None, None, (), None)
    units, mer = unit_targets(t)
    shells = None
    if case.basis is CapitalBasis.SHELLS:
        from ..pinch.area import balanced_composites

        comp = composites or balanced_composites(t, default_film_coefficient=case.default_h)
        shells = shell_target(comp, x_p=case.x_p)[0]
    return _Signature(True, units, mer, shells, _pinch_ends(t), None if t.threshold is None else t.threshold.value)


def _evaluate(case: TargetCase, x: float, kind: str = "grid") -> SweepPoint:
    t = _targets(case, x)
    if isinstance(t, str):
        return SweepPoint(float(x), False, kind=kind, note=t, signature=_signature(case, t))
    a = area_targets(t, case.costs, default_film_coefficient=case.default_h, capital_basis=case.basis,
                     x_p=case.x_p)
    sig = _Signature(True, a.units, a.units_mer, a.shells if case.basis is CapitalBasis.SHELLS else None,
                     _pinch_ends(t), None if t.threshold is None else t.threshold.value)
    p = t.pinch
    energy = a.energy_cost * case.price_factor
    return SweepPoint(float(x), True, t.hot_utility, t.cold_utility, a.area, a.units, a.units_mer, a.shells,
                      a.capital_cost, energy, a.capital_cost + energy, None if p is None else p.hot,
                      None if p is None else p.cold, kind, "", sig)


def sweep_point(streams: StreamTable, dt_min: float, utilities: Sequence[Utility] | None = None, costs=None, *,
                default_film_coefficient: float | None = None,
                capital_basis: CapitalBasis | str = CapitalBasis.UNITS_MER, x_p: float | None = None
                ) -> SweepPoint:
    """Energy, area, units and cost targets at one ΔTmin, as one point of a sweep.

    Parameters
    ----------
    streams : StreamTable
    dt_min : float
        [K], > 0.
    utilities : sequence of Utility, optional
        Utility levels; the ideal utilities when omitted.
    costs : heatloom.model.CostSettings, optional
    default_film_coefficient : float, optional
        [kW/(m²·K)]
    capital_basis : CapitalBasis or str, optional
    x_p : float, optional
        [-]

    Returns
    -------
    SweepPoint
        Not feasible (with the reason in ``note``) when the utilities cannot serve the process.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> p = sweep_point(s, 10)
    >>> p.hot_utility, p.cold_utility, p.units, round(p.area, 2)
    (0.0, 40.0, 2, 13.53)
    """
    case = target_case(streams, utilities, costs, default_film_coefficient, capital_basis, x_p)
    check_dt_min(dt_min, "ΔTmin", positive=True)
    return _evaluate(case, float(dt_min))


def target_case(streams: StreamTable, utilities: Sequence[Utility] | None = None, costs=None,
                default_film_coefficient: float | None = None,
                capital_basis: CapitalBasis | str = CapitalBasis.UNITS_MER, x_p: float | None = None,
                price_factor: float = 1.0, *, rules=None) -> TargetCase:
    """Check the inputs of target tasks once and gather them in a :class:`TargetCase`.

    Parameters are those of :func:`sweep` (``price_factor`` [-] multiplies the given utilities' prices
    here, or is kept for the ideal utilities' energy cost).  Raises :class:`InputError` for an unknown
    capital basis, a bad default film coefficient or price factor, or film coefficients missing.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> case = target_case(s, price_factor=2.0)
    >>> case.basis.value, case.price_factor, case.costs.currency != ""
    ('units_mer', 2.0, True)
    """
    default_h, basis = default_film_coefficient, capital_basis
    try:
        basis = CapitalBasis(basis)
    except ValueError:
        allowed = ", ".join(b.value for b in CapitalBasis)
        raise InputError(f"unknown capital basis {basis!r}; allowed: {allowed}") from None
    if default_h is not None and not (float(default_h) > 0 and math.isfinite(float(default_h))):
        raise InputError(f"default film coefficient must be a finite number > 0 kW/(m²·K), got {default_h!r}")
    missing = missing_film_coefficients(streams, utilities or ())
    if missing and default_h is None:
        raise InputError(f"film coefficient h missing for {', '.join(missing)}: area and cost targets need one "
                         "for every stream and utility (add an h column in kW/(m²·K), or assume one with a "
                         "default film coefficient)")
    if costs is None:
        from ..model.costs import CostSettings

        costs = CostSettings()
    try:
        price_factor = float(price_factor)
    except (TypeError, ValueError):
        raise InputError(f"the price factor must be a number, got {price_factor!r}") from None
    if not (price_factor >= 0) or not math.isfinite(price_factor):
        raise InputError(f"the price factor must be a finite number >= 0, got {price_factor!r}")
    if utilities is not None:
        utilities = tuple(u if price_factor == 1.0 else replace(u, cost=u.cost * price_factor) for u in utilities)
        price_factor = 1.0
    return TargetCase(streams, utilities, costs, None if default_h is None else float(default_h), basis, x_p,
                      price_factor, rules or None)


# --------------------------------------------------------------------------------------------------
# tasks (module-level functions: they run in other processes)


def evaluate_points(case: TargetCase, xs: Sequence[float], kind: str = "grid") -> list[SweepPoint]:
    """The targets of a case at each ΔTmin of ``xs`` [K], as points of kind ``kind`` (a task of its own).

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> [(p.dt_min, p.cold_utility) for p in evaluate_points(target_case(s), (10.0, 20.0))]
    [(10.0, 40.0), (20.0, 40.0)]
    """
    return [_evaluate(case, x, kind) for x in xs]


def _task_locate(case: TargetCase, a: float, sig_a: _Signature, b: float, sig_b: _Signature,
                 resolution: float) -> list[tuple[SweepPoint, SweepPoint]]:
    """Bisect (a, b) down to ``resolution`` around every change of structure found; both sides evaluated.

    A change that reverts before the next point of the bracket (A → B → A) is not seen.
    """
    found = []
    stack = [(a, sig_a, b, sig_b)]
    while stack:
        lo, s_lo, hi, s_hi = stack.pop()
        if hi - lo <= resolution:
            found.append((lo, hi))
            continue
        mid = 0.5 * (lo + hi)
        s_mid = _signature(case, _targets(case, mid))
        if s_mid != s_lo:
            stack.append((lo, s_lo, mid, s_mid))
        if s_mid != s_hi:
            stack.append((mid, s_mid, hi, s_hi))
    found.sort()
    return [(_evaluate(case, lo, "breakpoint"), _evaluate(case, hi, "breakpoint")) for lo, hi in found]


def _task_refine(case: TargetCase, low: float, high: float, xtol: float) -> SweepPoint:
    """Bounded scalar minimisation of the TAC target between ``low`` and ``high``."""
    from scipy.optimize import minimize_scalar

    def tac(x):
        p = _evaluate(case, float(x))
        return p.total_annual_cost if p.feasible else math.inf

    res = minimize_scalar(tac, bounds=(low, high), method="bounded", options={"xatol": xtol})
    return _evaluate(case, float(res.x), "optimum")


def design_point(case: TargetCase, x: float, solver: str | None = None, time_limit: float = 60.0,
                 least_utility_flow: bool = False) -> DesignPoint:
    """Design a maximum-energy-recovery network of a case at ΔTmin ``x`` [K] and cost it (a task of its own).

    ``time_limit`` [s] is the wall-clock budget of the whole :func:`heatloom.network.design.design_mer` run and
    ``least_utility_flow`` its option of that name (non-isothermal utilities kept at the least flow of their
    targets); a design that is infeasible or whose solver fails gives a point with its ``error``.
    """
    from ..network.design import design_mer

    try:
        rules = case.rules
        net = design_mer(case.streams, x, case.utilities, costs=case.costs, solver=solver, time_limit=time_limit,
                         default_film_coefficient=case.default_h, least_utility_flow=least_utility_flow,
                         **({"forbidden": rules.forbidden, "required": rules.required} if rules else {}))
    except (InfeasibleError, SolverError) as e:
        return DesignPoint(float(x), error=f"{type(e).__name__}: {e}")
    area = float(sum(u.area for u in (*net.exchangers, *net.heaters, *net.coolers)))
    operating = net.operating_cost * case.price_factor
    return DesignPoint(float(x), net.units, area, net.capital_cost, operating, net.capital_cost + operating)


# --------------------------------------------------------------------------------------------------
# the sweep


def dt_min_grid(low: float, high: float, step: float) -> np.ndarray:
    """ΔTmin values ``low, low + step, ...`` up to ``high``, which is always the last [K].

    Raises
    ------
    InputError
        For more than :data:`MAX_POINTS` values.

    Examples
    --------
    >>> dt_min_grid(5.0, 12.0, 3.0).tolist()
    [5.0, 8.0, 11.0, 12.0]
    """
    n = int(math.floor((high - low) / step + 1e-9))
    if n + 1 > MAX_POINTS:
        raise InputError(f"{n + 1} ΔTmin points from {low:g} to {high:g} K by {step:g} K; at most {MAX_POINTS} "
                         "are allowed (use a larger step)")
    xs = low + step * np.arange(n + 1)
    xs = np.round(xs, 9)
    if xs[-1] < high - 1e-9:
        xs = np.append(xs, high)
    return xs


def _breakpoint(lo: SweepPoint, hi: SweepPoint, streams: StreamTable, inner: Sequence[SweepPoint] = ()
                ) -> Breakpoint:
    """The change from ``lo`` to ``hi``; ``inner``: points between them whose structure is seen there only."""
    a, b = lo.signature, hi.signature
    if a.feasible != b.feasible:
        text = ("the utilities given can serve the process" if b.feasible else
                "the utilities given can no longer serve the process")
        return Breakpoint(lo.dt_min, hi.dt_min, text, ("feasibility",))
    names = streams.names
    idx = streams.arrays.stream_index

    def who(p):
        return ", ".join(sorted({names[idx[i]] for pinch in p for i, _ in pinch})) or "none"

    parts, codes = [], []
    for code, what in (("units", "units target"), ("units_mer", "MER units target"), ("shells", "shells target"),
                       ("threshold", "threshold")):
        old, new = getattr(a, code), getattr(b, code)
        if old != new:
            if code == "threshold":
                old, new = old or "none", new or "none"
            parts.append(f"{what} {old} → {new}")
            codes.append(code)
    if a.pinch != b.pinch:
        before, after = who(a.pinch), who(b.pinch)
        parts.append(f"pinch set by {before} → {after}" if before != after else
                     f"pinch set by other ends of {after}")
        codes.append("pinch")
    for p in inner:
        if p.signature.feasible and a.feasible and p.signature.pinch not in (a.pinch, b.pinch):
            parts.append(f"pinch set by {who(p.signature.pinch)} at {p.dt_min:g} K only")
            if "pinch" not in codes:
                codes.append("pinch")
            break
    return Breakpoint(lo.dt_min, hi.dt_min, "; ".join(parts) or "structure changed", tuple(codes))


def _merge_touching(sides: list[tuple[SweepPoint, SweepPoint]], resolution: float
                    ) -> list[tuple[SweepPoint, SweepPoint, tuple[SweepPoint, ...]]]:
    """One breakpoint for changes that touch: brackets closer than ``resolution`` merged into one.

    A grid point that falls exactly on a change (a stream end passing through the pinch temperature, so
    that two stream ends set the pinch at that ΔTmin only) differs from both of its neighbours, so the
    bisections on either side of it find the same change twice, one ``resolution`` apart.  It is one
    change: returned as (point below, point above, the points in between).
    """
    merged: list[list] = []
    for lo, hi in sorted(sides, key=lambda pair: pair[0].dt_min):
        if merged and lo.dt_min - merged[-1][1].dt_min <= resolution:
            merged[-1][2] += [merged[-1][1], lo]
            merged[-1][1] = hi
        else:
            merged.append([lo, hi, []])
    return [(lo, hi, tuple(dict.fromkeys(inner))) for lo, hi, inner in merged]


def _segments(points: list[SweepPoint]) -> list[list[int]]:
    """Runs of consecutive points with one structure (where TAC is continuous)."""
    runs: list[list[int]] = []
    for i, p in enumerate(points):
        if runs and points[runs[-1][-1]].signature == p.signature:
            runs[-1].append(i)
        else:
            runs.append([i])
    return runs


def sweep(streams: StreamTable, dt_min_range: tuple[float, float], utilities: Sequence[Utility] | None = None,
          costs=None, *, step: float = 0.5, designs: Sequence[float] = (), workers: int | None = None,
          cluster=None, default_film_coefficient: float | None = None,
          capital_basis: CapitalBasis | str = CapitalBasis.UNITS_MER, x_p: float | None = None,
          resolution: float = 1e-3, xtol: float = 0.01, refine_margin: float = 0.01,
          progress: Progress | None = None, solver: str | None = None, design_time_limit: float = 60.0,
          price_factor: float = 1.0, rules=None, least_utility_flow: bool = False) -> Sweep:
    """Total annual cost target against ΔTmin, its breakpoints and its optimum.

    .. math:: TAC(\\Delta T_{min}) = \\phi\\,N\\,[a + b\\,(A_{min}/N)^c] + \\sum_u c_u Q_u

    (see :func:`heatloom.pinch.area.area_targets`), evaluated on the grid ``low, low + step, ..., high``
    plus both sides of every breakpoint; the optimum is refined with
    :func:`scipy.optimize.minimize_scalar` (bounded) between breakpoints.

    Parameters
    ----------
    streams : StreamTable
    dt_min_range : (float, float)
        Lowest and highest ΔTmin [K], 0 < low < high.
    utilities : sequence of Utility, optional
        Utility levels with prices; the ideal utilities when omitted.  Points where they cannot serve
        the process are kept, marked not feasible.
    costs : heatloom.model.CostSettings, optional
        Defaults of :mod:`heatloom.defaults` when omitted.
    step : float, optional
        Grid step [K], > 0.
    designs : sequence of float, optional
        ΔTmin values [K] where a network is also designed (:func:`heatloom.network.design.design_mer`).
    rules : heatloom.model.MatchRules, optional
        Forbidden and required matches those designs keep.
    workers : int, optional
        Processes of the local pool; None for one per core; 1 runs serially in this process.
    cluster : str or dask.distributed.Client, optional
        Run the tasks on this Dask cluster instead (its workers need heatloom installed).
    default_film_coefficient : float, optional
        [kW/(m²·K)], where a stream or utility has none.
    capital_basis : CapitalBasis or str, optional
    x_p : float, optional
        X_P of the shell target [-].
    resolution : float, optional
        Width to which breakpoints are located [K].
    xtol : float, optional
        Tolerance of the optimum's ΔTmin [K].
    refine_margin : float, optional
        Stretches whose best sample is within this fraction of the best overall are refined [-].
    progress : callable, optional
        Called as ``progress(phase, done, total)`` while tasks complete (for progress bars).
    solver, design_time_limit
        Passed to design (MILP solver name, wall-clock budget of each design [s]).
    price_factor : float, optional
        Multiplies every utility price [-] (the given utilities', else the assumed ones'), for price
        scenarios (:mod:`heatloom.studies.scenarios`); default 1.
    least_utility_flow : bool, optional
        The designs keep hot oil and cooling water at the least flow of their energy targets, returned at
        their design temperatures (``design_mer``'s option of that name; no supply-header reading).

    Returns
    -------
    Sweep

    Raises
    ------
    InputError
        Bad range or step, film coefficients missing with no default, dask missing for ``cluster``.
    InfeasibleError
        When the utilities cannot serve the process at any ΔTmin of the range.

    Notes
    -----
    Pool workers start from a fork server (or by spawning), so a script that calls :func:`sweep` with a
    pool needs the usual ``if __name__ == "__main__":`` guard around its top-level code (the ``heatloom``
    command has it).  Results do not depend on ``workers`` or ``cluster``.  A structural change that
    reverts between two neighbouring grid points (A → B → A) is not seen: use a finer ``step``.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["H1", "H2", "C1", "C2"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5], film_coefficient=[0.5] * 4)
    >>> r = sweep(s, (5, 30), step=1.0, workers=1)
    >>> 5 <= r.optimum.dt_min <= 30, len(r.points) >= 26
    (True, True)
    """
    if not isinstance(dt_min_range, (tuple, list)) or len(dt_min_range) != 2:
        raise InputError(f"the ΔTmin range must be two numbers (low, high) [K], got {dt_min_range!r}")
    low = check_dt_min(dt_min_range[0], "lowest ΔTmin", positive=True)
    high = check_dt_min(dt_min_range[1], "highest ΔTmin", positive=True)
    if not high > low:
        raise InputError(f"the highest ΔTmin ({high:g} K) must be above the lowest ({low:g} K)", column="dtmin")
    try:
        step = float(step)
    except (TypeError, ValueError):
        raise InputError(f"the ΔTmin step must be a number of kelvin, got {step!r}") from None
    if not (step > 0) or not math.isfinite(step):
        raise InputError(f"the ΔTmin step must be a finite number > 0 K, got {step!r}")
    for name, v in (("resolution", resolution), ("xtol", xtol)):
        if not (float(v) > 0):
            raise InputError(f"{name} must be > 0 K, got {v!r}")
    design_at = tuple(check_dt_min(x, "design ΔTmin", positive=True) for x in designs)
    case = target_case(streams, utilities, costs, default_film_coefficient, capital_basis, x_p, price_factor,
                       rules=rules)
    xs = dt_min_grid(low, high, step)
    runner = TaskRunner(workers, cluster, progress)
    try:
        n_tasks = 1 if runner.name == "serial" else min(len(xs), 4 * (workers or os.cpu_count() or 1))
        chunks = [tuple(float(x) for x in c) for c in np.array_split(xs, n_tasks) if c.size]
        grid = [p for part in runner.map(evaluate_points, [(case, c) for c in chunks], "targets") for p in part]
        pairs = [(grid[i], grid[i + 1]) for i in range(len(grid) - 1) if grid[i].signature != grid[i + 1].signature]
        located = runner.map(_task_locate, [(case, a.dt_min, a.signature, b.dt_min, b.signature, resolution)
                                            for a, b in pairs], "breakpoints")
        sides = [pair for part in located for pair in part]
        points = sorted(grid + [p for pair in sides for p in pair], key=lambda p: p.dt_min)
        # identical ΔTmin from two sources (a grid point within the resolution of a change): keep one
        points = [p for i, p in enumerate(points) if i == 0 or p.dt_min != points[i - 1].dt_min]
        breakpoints = tuple(_breakpoint(a, b, streams, inner) for a, b, inner in _merge_touching(sides, resolution))
        feasible = [p for p in points if p.feasible]
        if not feasible:
            raise InfeasibleError(f"no ΔTmin from {low:g} to {high:g} K can be served by the utilities given: "
                                  f"{points[0].note}")
        best = min(feasible, key=lambda p: p.total_annual_cost)
        margin = abs(best.total_annual_cost) * refine_margin
        windows = []
        for run in _segments(points):
            cand = [i for i in run if points[i].feasible]
            if not cand:
                continue
            i = min(cand, key=lambda j: points[j].total_annual_cost)
            if points[i].total_annual_cost > best.total_annual_cost + margin:
                continue
            lo_i = i - 1 if i - 1 >= run[0] else i
            hi_i = i + 1 if i + 1 <= run[-1] else i
            if points[hi_i].dt_min > points[lo_i].dt_min:
                windows.append((case, points[lo_i].dt_min, points[hi_i].dt_min, float(xtol)))
        refined = runner.map(_task_refine, windows, "optimum")
        optimum = min([*(p for p in refined if p.feasible), best], key=lambda p: (p.total_annual_cost, p.dt_min))
        if optimum is best:
            optimum = replace(best, kind="optimum")
        design_points = tuple(runner.map(design_point, [(case, x, solver, design_time_limit, least_utility_flow)
                                                        for x in design_at], "designs"))
    finally:
        runner.close()
    notes = []
    if design_at and least_utility_flow:
        notes.append("designs: non-isothermal utilities kept at the least flow of their energy targets, returned at "
                     "their design temperatures (no supply-header reading), as asked")
    n_bad = sum(1 for p in points if not p.feasible)
    if n_bad:
        notes.append(f"{n_bad} of {len(points)} points cannot be served by the utilities given (not feasible)")
    if optimum.dt_min - low <= xtol or high - optimum.dt_min <= xtol:
        notes.append(f"the optimum lies at an end of the range ({optimum.dt_min:g} K): widen the range to see "
                     "whether the cost falls further beyond it")
    for b in breakpoints:
        if "feasibility" in b.changes and min(abs(optimum.dt_min - b.low), abs(optimum.dt_min - b.high)) <= xtol:
            notes.append(f"the optimum lies where the utilities given stop serving the process ({b.low:g} to "
                         f"{b.high:g} K): other utility levels may move it")
    basis = area_targets(target(streams, optimum.dt_min, case.utilities), case.costs,
                         default_film_coefficient=case.default_h, capital_basis=case.basis, x_p=case.x_p).basis
    caution = small_dt_min_caution(optimum.dt_min)
    if caution:
        notes.append(caution)
    notes.append(f"breakpoints located by bisection to {resolution:g} K; optimum refined by bounded scalar "
                 f"minimisation to {xtol:g} K")
    return Sweep(tuple(points), breakpoints, optimum, design_points, (low, high), step, case.costs.currency, basis,
                 tuple(notes))
