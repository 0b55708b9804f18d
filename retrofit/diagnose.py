"""Diagnosis of an existing network: heat across the pinch, area efficiency, retrofit targets, network pinch.

Four looks at a simulated network (:func:`heatloom.retrofit.simulate.simulate`), after Tjoe & Linnhoff
(1986) and Asante & Zhu (1996, 1997):

* :func:`cross_pinch` — the heat each unit moves across the process pinch: exchangers that carry heat
  from above the pinch to below it, coolers above the pinch and heaters below it (misplaced utilities).
  Their sum is the hot utility used beyond the target (Linnhoff's three golden rules);
* :func:`area_efficiency` — α = A_target(E)/A_existing, the Townsend–Linnhoff (Bath) area target at the
  ΔTmin whose energy target equals the network's hot utility, over the installed area;
* :func:`retrofit_curve` — energy saving against extra area over a range of ΔTmin, at constant α (and,
  for comparison, with the new area used at target efficiency, "incremental α = 1");
* :func:`~heatloom.retrofit.network_pinch.network_pinch` (its own module,
  :mod:`heatloom.retrofit.network_pinch`) — the minimum approach of every exchanger, and the exchanger that
  stops more heat recovery when load is shifted along utility paths (heater → exchangers → cooler), areas
  free; :func:`diagnose` runs all four.

References
----------
Tjoe, T.N., Linnhoff, B. (1986) Using pinch technology for process retrofit. Chemical Engineering Progress
82(4), 47-60 (cross-pinch analysis of an existing network, area efficiency α, retrofit targeting at
constant α) — citation from memory, unverified.
Asante, N.D.K., Zhu, X.X. (1996) An automated approach for heat exchanger network retrofit featuring
minimal topology modifications. Computers & Chemical Engineering 20 (Suppl.), S7-S12 — from memory,
unverified.
Asante, N.D.K., Zhu, X.X. (1997) An automated and interactive approach for heat exchanger network
retrofit. Transactions of the IChemE 75(A), 349-360 (the network pinch) — citation from memory, unverified.
Townsend, D.W., Linnhoff, B. (1984); Linnhoff, B., Ahmad, S. (1990), Computers & Chemical Engineering
14(7), 729-750 (the area target, via :mod:`heatloom.pinch.area`).
Linnhoff, B., Hindmarsh, E. (1983) The pinch design method for heat exchanger networks. Chemical
Engineering Science 38(5), 745-763 (utility paths and loops).

Diagnosis results are screening estimates; retrofit changes must be checked against the plant's data and
local codes by qualified, licensed engineers.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import asdict, dataclass

import numpy as np

from ..errors import InfeasibleError, InputError
from ..model import Stream, StreamTable
from ..model.existing import UnitRole
from ..pinch import Pinch, problem_table, target, zero_tolerance
from ..validation import check_dt_min
from .existing import ExistingNetwork
from .network_pinch import NetworkPinch, network_pinch
from .profiles import heat_between
from .simulate import Simulation, simulate

__all__ = [
    "CrossPinchUnit",
    "CrossPinch",
    "cross_pinch",
    "existing_dt_min",
    "AreaEfficiency",
    "area_efficiency",
    "RetrofitCurve",
    "retrofit_curve",
    "Diagnosis",
    "diagnose",
]


# --------------------------------------------------------------------------------------------------
# heat across the pinch


@dataclass(frozen=True)
class CrossPinchUnit:
    """Heat one unit moves across one pinch.

    Attributes
    ----------
    unit : str
    role : UnitRole
    pinch : float
        Shifted pinch temperature [°C].
    downward : float
        Heat from above the pinch to below it [kW]: for an exchanger, what its hot side gives above the
        pinch beyond what its cold side takes above it; for a cooler, its duty above the pinch; for a
        heater, its duty below the pinch.
    upward : float
        Heat from below the pinch to above it [kW] (an exchanger working across the pinch with less than
        ΔTmin there); it lowers the utility use by as much.
    """

    unit: str
    role: UnitRole
    pinch: float
    downward: float
    upward: float

    @property
    def net(self) -> float:
        """downward − upward [kW]."""
        return self.downward - self.upward

    @property
    def kind(self) -> str:
        if self.role is UnitRole.HEATER:
            return "heater below the pinch"
        if self.role is UnitRole.COOLER:
            return "cooler above the pinch"
        return "exchanger across the pinch" if self.downward > 0 else "exchanger across the pinch, upwards"

    def to_dict(self) -> dict:
        d = asdict(self)
        d["role"], d["net"], d["kind"] = self.role.value, self.net, self.kind
        return d


@dataclass(frozen=True, eq=False)
class CrossPinch:
    """Heat moved across the pinch unit by unit (see :func:`cross_pinch`).

    Attributes
    ----------
    dt_min : float
        [K]
    pinches : tuple of Pinch
        The process pinches at ``dt_min``, hottest first (empty for a threshold problem).
    units : tuple of CrossPinchUnit
        Units that move heat across a pinch (above a small tolerance), per pinch.
    hot_utility, hot_utility_target : float
        The network's hot utility and the target at ``dt_min`` [kW].
    notes : tuple of str
    """

    dt_min: float
    pinches: tuple[Pinch, ...]
    units: tuple[CrossPinchUnit, ...]
    hot_utility: float
    hot_utility_target: float
    notes: tuple[str, ...] = ()

    def total(self, pinch: int = 0) -> float:
        """Net heat across pinch number ``pinch`` (0 = hottest) [kW]; Q_H − Q_H,min when every stream
        reaches its target."""
        if not self.pinches:
            return 0.0
        p = self.pinches[pinch].shifted
        return float(sum(u.net for u in self.units if u.pinch == p))

    @property
    def excess(self) -> float:
        """Hot utility beyond the target [kW]."""
        return self.hot_utility - self.hot_utility_target

    def of_role(self, role: UnitRole) -> tuple[CrossPinchUnit, ...]:
        return tuple(u for u in self.units if u.role is role)

    def to_dict(self) -> dict:
        return {"dtmin": self.dt_min, "pinches": [p.to_dict() for p in self.pinches],
                "units": [u.to_dict() for u in self.units],
                "totals": [self.total(k) for k in range(len(self.pinches))], "hot_utility": self.hot_utility,
                "hot_utility_target": self.hot_utility_target, "excess": self.excess, "notes": list(self.notes)}


def _above(stream: Stream, t_from: float, t_to: float, t_pinch: float) -> float:
    """Heat a stream exchanges (its own direction) while above t_pinch, going from t_from to t_to [kW]."""
    return heat_between(stream, max(t_from, t_pinch), max(t_to, t_pinch))


def _below(stream: Stream, t_from: float, t_to: float, t_pinch: float) -> float:
    return heat_between(stream, min(t_from, t_pinch), min(t_to, t_pinch))


def cross_pinch(simulation: Simulation, dt_min: float | None = None) -> CrossPinch:
    """Heat each unit moves across the process pinch (Tjoe & Linnhoff 1986).

    With the pinch at shifted temperature T*, a hot stream is above it at T > T* + ΔTmin/2 and a cold
    stream at T > T* − ΔTmin/2 (or the stream's own ΔTmin contribution).  The region above the pinch needs
    exactly Q_H,min from outside, so

    .. math:: Q_H - Q_{H,min} = \\sum_{exchangers}(q_{h,above} - q_{c,above})
              + \\sum_{coolers} q_{above} + \\sum_{heaters} q_{below}

    (every term the heat of that unit on the stated side of the pinch; exact when every stream reaches its
    target).  For an exchanger, q_h,above − q_c,above > 0 is heat carried downwards across the pinch; < 0
    is heat carried upwards, possible only with less than ΔTmin at the pinch.  Counter-current units split
    exactly so; for 1-2 shells only the net is meaningful.

    Parameters
    ----------
    simulation : Simulation
    dt_min : float, optional
        [K]; default the simulation's.

    Returns
    -------
    CrossPinch

    Raises
    ------
    InputError
        No ΔTmin given here nor in the simulation.

    Examples
    --------
    H1 150 → 40 °C (2 kW/K), C1 60 → 120 °C (3 kW/K); pinch at 70/60 °C at ΔTmin 10 K, hot utility target
    20 kW.  The exchanger sits above the pinch; the cooler takes 60 kW above it (100 → 70 °C), which is the
    60 kW of hot utility beyond the target.

    >>> from heatloom.model import StreamTable, Utility
    >>> from heatloom.retrofit.existing import ExistingNetwork
    >>> from heatloom.model.existing import ExistingUnit
    >>> from heatloom.retrofit.simulate import simulate
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 60], [40, 120], [2.0, 3.0])
    >>> u = [Utility("steam", 180, 179, 100.0), Utility("water", 20, 30, 10.0)]
    >>> net = ExistingNetwork(s, [ExistingUnit("E1", "H1", "C1", duty=100.0, u=0.5),
    ...                           ExistingUnit("H1", "steam", "C1", duty=80.0),
    ...                           ExistingUnit("C1", "H1", "water", duty=120.0)], u)
    >>> x = cross_pinch(simulate(net), 10)
    >>> [(c.unit, c.kind, round(c.net, 6)) for c in x.units], round(x.total(), 6), round(x.excess, 6)
    ([('C1', 'cooler above the pinch', 60.0)], 60.0, 60.0)
    """
    dt = simulation.dt_min if dt_min is None else check_dt_min(dt_min)
    if dt is None:
        raise InputError("cross-pinch analysis needs a ΔTmin (give dt_min here or to simulate)")
    net = simulation.network
    t = target(net.streams, dt)
    notes = []
    shifts = {}
    for s in net.streams:
        shifts[s.name], mixed = s.shift(dt), not s.shift_is_uniform(dt)
        if mixed:
            notes.append(f"stream '{s.name}': its segments have different ΔTmin contributions; the largest, "
                         f"{shifts[s.name]:g} K, places it against the pinch")
    if not t.pinches:
        notes.append("no process pinch at this ΔTmin (threshold problem): no heat crosses a pinch")
    tol = zero_tolerance(t.table.duty_scale)
    out = []
    for p in t.pinches:
        for u in simulation.units:
            down = up = 0.0
            if u.role is UnitRole.EXCHANGER:   # a split branch carries its share of the stream
                hot, cold = net.stream(u.hot), net.stream(u.cold)
                qh = u.hot_fraction * _above(hot, u.hot_in, u.hot_out, p.shifted + shifts[hot.name])
                qc = u.cold_fraction * _above(cold, u.cold_in, u.cold_out, p.shifted - shifts[cold.name])
                down, up = max(0.0, qh - qc), max(0.0, qc - qh)
            elif u.role is UnitRole.COOLER:
                hot = net.stream(u.hot)
                down = u.hot_fraction * _above(hot, u.hot_in, u.hot_out, p.shifted + shifts[hot.name])
            else:
                cold = net.stream(u.cold)
                down = u.cold_fraction * _below(cold, u.cold_in, u.cold_out, p.shifted - shifts[cold.name])
            if abs(down) > tol or up > tol:
                out.append(CrossPinchUnit(u.name, u.role, p.shifted, float(down), float(up)))
    if simulation.problems:
        notes.append("the simulated network has problems (see the simulation); the sum of cross-pinch heat "
                     "equals the excess hot utility only when every stream reaches its target")
    return CrossPinch(dt, t.pinches, tuple(out), simulation.hot_utility, t.hot_utility, tuple(notes))


# --------------------------------------------------------------------------------------------------
# area efficiency and the retrofit targeting curve


def existing_dt_min(streams: StreamTable, hot_utility: float) -> float:
    """The ΔTmin whose minimum hot utility equals a given hot utility [K].

    The minimum hot utility of the problem table grows with ΔTmin; where it is flat over a range (a
    threshold problem) the largest such ΔTmin is returned (the one of least target area).

    Parameters
    ----------
    streams : StreamTable
    hot_utility : float
        Hot utility of the existing network [kW].

    Returns
    -------
    float
        [K]

    Raises
    ------
    InfeasibleError
        If the hot utility is below the minimum at ΔTmin 0, or above the whole heating duty of the cold
        streams plus nothing recovered.

    Examples
    --------
    Ray & Das, Problem 5.1 streams: 90 kW hot utility at ΔTmin 20 K.

    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 60, 30], [40, 40, 180, 105],
    ...                             [2.0, 4.0, 3.0, 2.6])
    >>> round(existing_dt_min(s, 90.0), 6)
    20.0
    """
    q = float(hot_utility)
    temps = [t for s in streams for t in (s.supply_temperature, s.target_temperature)]
    hi = max(temps) - min(temps) + 1.0

    def qh(dt):
        return problem_table(streams, dt).hot_utility

    q0, q_hi = qh(0.0), qh(hi)
    tol = zero_tolerance(max(s.duty for s in streams))
    if q < q0 - tol:
        raise InfeasibleError(f"hot utility {q:.6g} kW is below the minimum at ΔTmin 0 ({q0:.6g} kW): no network "
                              "can use so little; check the simulation's problems")
    if q > q_hi + tol:
        raise InfeasibleError(f"hot utility {q:.6g} kW is more than the heating the process needs with no "
                              f"recovery at all ({q_hi:.6g} kW)")
    lo, up = 0.0, hi
    flat = 1e-12 * max(q_hi, 1.0)   # rounding only: the root is the ΔTmin, not a tolerance band around it
    for _ in range(100):
        mid = 0.5 * (lo + up)
        if qh(mid) <= q + flat:
            lo = mid
        else:
            up = mid
        if up - lo <= 1e-10 * hi:
            break
    return float(lo)


def _targets(streams: StreamTable, dt: float, utilities: Sequence, notes: list[str]):
    """Targets with the given utility levels (ideal utilities when none are given or they cannot serve)."""
    if not utilities:
        return target(streams, dt)
    try:
        return target(streams, dt, list(utilities))
    except InfeasibleError as e:
        notes.append(f"ΔTmin {dt:.4g} K: the network's utilities cannot serve the targets ({e}); ideal "
                     "utilities used for the area target at this ΔTmin")
        return target(streams, dt)


def _serve(streams: StreamTable, dt: float, utilities: Sequence) -> str | None:
    """Why the utilities cannot serve the targets at ΔTmin (None when they can)."""
    base = target(streams, dt)
    tol = base.table.tolerance
    if base.hot_utility > tol and not any(u.is_hot for u in utilities):
        return "no hot utility among them"
    if base.cold_utility > tol and not any(not u.is_hot for u in utilities):
        return "no cold utility among them"
    try:
        target(streams, dt, list(utilities))
    except InfeasibleError as e:
        return str(e)
    return None


def _area_target(streams: StreamTable, dt: float, utilities: Sequence, notes: list[str],
                 default_film_coefficient: float | None) -> tuple[float, float, float]:
    """(area target [m²], hot utility [kW], cold utility [kW]) at one ΔTmin."""
    from ..pinch.area import balanced_composites, bath_area

    t = _targets(streams, dt, utilities, notes)
    area = bath_area(balanced_composites(t, default_film_coefficient=default_film_coefficient))
    return float(area), float(t.hot_utility), float(t.cold_utility)


def _used_utilities(network: ExistingNetwork) -> list:
    names = {u.hot for u in network.heaters} | {u.cold for u in network.coolers}
    return [u for u in network.utilities if u.name in names]


@dataclass(frozen=True)
class AreaEfficiency:
    """Area efficiency of an existing network (see :func:`area_efficiency`).

    Attributes
    ----------
    alpha : float
        A_target(E)/A_existing [-].
    area_existing : float
        Installed area of every unit [m²].
    area_target : float
        Townsend–Linnhoff area target at ``dt_min_existing`` [m²].
    dt_min_existing : float
        ΔTmin whose hot utility target equals the network's [K].
    hot_utility, cold_utility : float
        The network's utilities [kW].
    utilities : tuple of Utility
        The utility levels of the area targets; empty when ideal utilities were used (the network's own
        cannot serve the targets at ``dt_min_existing``).
    notes : tuple of str
    """

    alpha: float
    area_existing: float
    area_target: float
    dt_min_existing: float
    hot_utility: float
    cold_utility: float
    utilities: tuple = ()
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"alpha": self.alpha, "area_existing": self.area_existing, "area_target": self.area_target,
                "dtmin_existing": self.dt_min_existing, "hot_utility": self.hot_utility,
                "cold_utility": self.cold_utility, "utilities": [u.name for u in self.utilities] or "ideal",
                "notes": list(self.notes)}


def area_efficiency(simulation: Simulation, *, default_film_coefficient: float | None = None) -> AreaEfficiency:
    """Area efficiency α of an existing network (Tjoe & Linnhoff 1986).

    .. math:: \\alpha = A_{target}(E_{existing}) / A_{existing}

    where A_target(E) is the Townsend–Linnhoff (Bath) area target (:func:`heatloom.pinch.area.bath_area`) at
    the ΔTmin whose hot utility target equals the network's simulated hot utility, with the utilities the
    network's heaters and coolers use (ideal utilities when those cannot serve), and A_existing the
    installed area of all units, heaters and coolers included.  α near 1: the area is used as well as
    vertical heat transfer allows; much below 1: area spent on criss-cross transfer.

    Parameters
    ----------
    simulation : Simulation
    default_film_coefficient : float, optional
        Film coefficient assumed where a stream or utility has none [kW/(m²·K)].

    Returns
    -------
    AreaEfficiency

    Raises
    ------
    InputError
        A unit's area is unknown, or film coefficients are missing with no default.
    InfeasibleError
        The network's hot utility matches no ΔTmin (see :func:`existing_dt_min`).
    """
    net = simulation.network
    unknown = [u.name for u in net.units if u.area is None]
    if unknown:
        raise InputError(f"area efficiency needs the area of every unit; unknown for {', '.join(unknown)} (give "
                         "their area, or a U so their stated duty can be turned into one; a trim heater or cooler given "
                         "with neither takes the rest of its stream's duty but has no known area: give its area)")
    notes: list[str] = []
    if simulation.problems:
        notes.append("the simulated network has problems (see the simulation): α describes it as simulated")
    dt_e = existing_dt_min(net.streams, simulation.hot_utility)
    levels = tuple(_used_utilities(net))
    why = _serve(net.streams, dt_e, levels) if levels else "the network uses no utility"
    if why is not None:
        notes.append(f"the network's utilities cannot serve the targets at ΔTmin {dt_e:.4g} K ({why}): the area "
                     "targets use ideal utilities (isothermal, beyond the process temperatures; see "
                     "heatloom.pinch.area)")
        levels = ()
    area_t, _, _ = _area_target(net.streams, dt_e, levels, notes, default_film_coefficient)
    a_ex = float(net.total_area)
    notes.append(f"area target by the Townsend–Linnhoff (Bath) formula at ΔTmin {dt_e:.4g} K, where the hot "
                 f"utility target equals the network's {simulation.hot_utility:.6g} kW")
    return AreaEfficiency(area_t / a_ex, a_ex, area_t, dt_e, simulation.hot_utility, simulation.cold_utility,
                          levels, tuple(dict.fromkeys(notes)))


@dataclass(frozen=True, eq=False)
class RetrofitCurve:
    """Retrofit targets against ΔTmin (see :func:`retrofit_curve`); arrays share one index.

    Attributes
    ----------
    dt_min : ndarray
        [K], descending from the existing network's ΔTmin.
    hot_utility, cold_utility : ndarray
        Energy targets [kW].
    saving : ndarray
        Hot utility saved against the existing network [kW] (the cold utility falls by as much).
    area_target : ndarray
        Townsend–Linnhoff area target [m²].
    area_constant_alpha : ndarray
        Network area if the retrofit keeps the existing α: A_target/α [m²].
    investment_constant_alpha : ndarray
        Extra area at constant α: A_target/α − A_existing [m²].
    investment_incremental : ndarray
        Extra area if the new area works at target efficiency ("incremental α = 1"):
        A_target(ΔTmin) − A_target(ΔTmin_existing) [m²].
    efficiency : AreaEfficiency
        The existing network's point.
    notes : tuple of str
    """

    dt_min: np.ndarray
    hot_utility: np.ndarray
    cold_utility: np.ndarray
    saving: np.ndarray
    area_target: np.ndarray
    area_constant_alpha: np.ndarray
    investment_constant_alpha: np.ndarray
    investment_incremental: np.ndarray
    efficiency: AreaEfficiency
    notes: tuple[str, ...] = ()

    _COLUMNS = (("dt_min", "dtmin [K]"), ("hot_utility", "hot utility [kW]"), ("cold_utility", "cold utility [kW]"),
                ("saving", "saving [kW]"), ("area_target", "area target [m²]"),
                ("area_constant_alpha", "area at constant α [m²]"),
                ("investment_constant_alpha", "extra area at constant α [m²]"),
                ("investment_incremental", "extra area, incremental α = 1 [m²]"))

    def to_dict(self) -> dict:
        d = {name: getattr(self, name).tolist() for name, _ in self._COLUMNS}
        d["existing"] = self.efficiency.to_dict()
        d["notes"] = list(self.notes)
        return d

    def to_frame(self):
        import pandas as pd

        return pd.DataFrame({label: getattr(self, name) for name, label in self._COLUMNS})


def retrofit_curve(simulation: Simulation, dt_mins: Sequence[float] | None = None, *, points: int = 20,
                   efficiency: AreaEfficiency | None = None,
                   default_film_coefficient: float | None = None) -> RetrofitCurve:
    """Energy saving against extra area, at constant area efficiency α (Tjoe & Linnhoff 1986).

    For each ΔTmin below the existing network's, the energy target Q_H(ΔTmin) and the area target
    A_target(ΔTmin) give a retrofit target: saving = Q_H,existing − Q_H(ΔTmin) for an extra area
    A_target(ΔTmin)/α − A_existing, assuming the retrofitted network uses its area as efficiently as the
    existing one.  The "incremental α = 1" column assumes instead that the added area works at target
    efficiency, A_target(ΔTmin) − A_target(ΔTmin_existing) (a common alternative, from memory, unverified).
    Where the saving is worth its area follows from the prices of energy and area (not done here).

    Parameters
    ----------
    simulation : Simulation
    dt_mins : sequence of float, optional
        ΔTmin values [K]; default ``points`` values from the existing ΔTmin down to a tenth of it.
    points : int, optional
    efficiency : AreaEfficiency, optional
        Reused if already computed.
    default_film_coefficient : float, optional
        [kW/(m²·K)]

    Returns
    -------
    RetrofitCurve
    """
    net = simulation.network
    eff = efficiency or area_efficiency(simulation, default_film_coefficient=default_film_coefficient)
    dt_e = eff.dt_min_existing
    if dt_mins is None:
        if not isinstance(points, int) or points < 2:
            raise InputError(f"points must be a whole number >= 2, got {points!r}")
        dts = np.linspace(dt_e, 0.1 * dt_e, points)
    else:
        dts = np.array([check_dt_min(x) for x in dt_mins], dtype=float)
        if dts.size == 0 or not np.all(dts > 0):
            raise InputError("dt_mins must hold ΔTmin values > 0 K (the area target is infinite at 0 K)")
    notes: list[str] = [] if eff.utilities else ["ideal utilities in the area targets, as for α"]
    rows = [_area_target(net.streams, float(dt), eff.utilities, notes, default_film_coefficient) for dt in dts]
    area, qh, qc = (np.array(c) for c in zip(*rows))
    area_e = eff.area_target
    with_alpha = area / eff.alpha
    notes.append("retrofit targets at constant α: the retrofitted network assumed to use its area as "
                 f"efficiently as the existing one (α = {eff.alpha:.4g})")
    return RetrofitCurve(dts, qh, qc, eff.hot_utility - qh, area, with_alpha, with_alpha - eff.area_existing,
                         area - area_e, eff, tuple(dict.fromkeys(notes)))


# --------------------------------------------------------------------------------------------------
# everything at once


@dataclass(frozen=True, eq=False)
class Diagnosis:
    """The diagnosis of an existing network (see :func:`diagnose`).

    Attributes
    ----------
    simulation : Simulation
    cross_pinch : CrossPinch
    efficiency : AreaEfficiency or None
        None when it cannot be computed (the notes say why).
    curve : RetrofitCurve or None
    pinch : NetworkPinch
    notes : tuple of str
    """

    simulation: Simulation
    cross_pinch: CrossPinch
    efficiency: AreaEfficiency | None
    curve: RetrofitCurve | None
    pinch: NetworkPinch
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"simulation": self.simulation.to_dict(), "cross_pinch": self.cross_pinch.to_dict(),
                "area_efficiency": None if self.efficiency is None else self.efficiency.to_dict(),
                "retrofit_curve": None if self.curve is None else self.curve.to_dict(),
                "network_pinch": self.pinch.to_dict(), "notes": list(self.notes)}


def diagnose(network: ExistingNetwork | Simulation, dt_min: float, *, min_approach: float | None = None,
             dt_mins: Sequence[float] | None = None, default_film_coefficient: float | None = None,
             max_paths: int = 200) -> Diagnosis:
    """Simulate (if needed) and diagnose an existing network: cross-pinch heat, α, retrofit curve, network pinch.

    Parameters
    ----------
    network : ExistingNetwork or Simulation
    dt_min : float
        ΔTmin of the targets and of the pinch [K].
    min_approach : float, optional
        Smallest approach allowed in an exchanger for the network pinch [K]; default ``dt_min``.
    dt_mins : sequence of float, optional
        ΔTmin values of the retrofit curve [K] (see :func:`retrofit_curve`).
    default_film_coefficient : float, optional
        [kW/(m²·K)], for the area target.
    max_paths : int, optional

    Returns
    -------
    Diagnosis
        α and the retrofit curve are None (with a note) when unit areas or film coefficients are missing
        or the network's utility matches no ΔTmin.
    """
    dt = check_dt_min(dt_min)
    sim = network if isinstance(network, Simulation) else simulate(network, dt)
    if sim.dt_min != dt:
        sim = simulate(sim.network, dt)
    notes: list[str] = []
    xp = cross_pinch(sim, dt)
    eff = curve = None
    try:
        eff = area_efficiency(sim, default_film_coefficient=default_film_coefficient)
        curve = retrofit_curve(sim, dt_mins, efficiency=eff, default_film_coefficient=default_film_coefficient)
    except (InputError, InfeasibleError) as e:
        notes.append(f"no area efficiency or retrofit curve: {e}")
    emat = dt if min_approach is None else min_approach
    if not emat > 0:
        notes.append("ΔTmin 0: the network pinch uses a minimum approach of 1 K")
        emat = 1.0
    pinch = network_pinch(sim, emat, max_paths=max_paths)
    return Diagnosis(sim, xp, eff, curve, pinch, tuple(notes))
