"""Simulation of an existing network at fixed areas: every unit's duty and temperatures, the utilities used.

:func:`simulate` rates an :class:`~heatloom.retrofit.existing.ExistingNetwork` as it stands.  Every process
stream passes its units in order from its supply end; an exchanger of fixed area and U transfers, by
ε-NTU,

.. math:: Q = \\varepsilon(NTU, C_r)\\,C_{min}\\,(T_{h,in} - T_{c,in}),\\quad
          T_{h,out} = T_{h,in} - Q/C_h,\\quad T_{c,out} = T_{c,in} + Q/C_c,

which is *linear in the inlet temperatures* for fixed heat capacity flows.  So is every other unit: a
trim heater or cooler fixes its outlet at the stream's target, a fixed-duty one shifts its outlet by
Q/C, an ε-NTU-rated one against an isothermal utility gives T_out = T_in + ε(T_u − T_in).  Units join the
streams both ways (loops included), so the whole network is one linear system A·T = b in the unknown
temperatures between units; it is built and solved exactly with numpy.  Heaters and coolers at the end of
their streams then take what is left (their duty may come out negative: reported, not hidden).

Stream splits (:mod:`heatloom.retrofit.branches`): the branches of a split take the stream at its
temperature before the split; branch k carries f_k of the flow, so its unit is rated with C = f_k·CP, and
reports its own branch's inlet and outlet.  The branches mix adiabatically after the split: with constant
CP, T_mix = Σ f_k·T_k; in general C_mix·(T_in − T_mix) = Σ f_k·C_k·(T_in − T_k) with the secant CPs below.
For fixed CPs the mixer is linear in the branch outlets, so the network stays one linear system (one more
unknown per branch, one more equation per mixer).  A heater or cooler on a branch of a stream's last split
brings the mixed stream to its target.

Streams of several segments (phase change, varying CP): each unit enters the linear system with the
stream's mean CP over the temperature range the stream actually covers in that unit (the secant of its
enthalpy curve).  These CPs come from a fixed-point iteration with one linear solve per pass: the first pass
takes each stream's mean CP over its whole range; each later pass rates every unit at its present inlet
temperatures (:func:`heatloom.retrofit.rating.rate_unit`, a one-dimensional root, brentq), gives it the
secant CPs that agree with that rating, and every mixer the secant of the stream between the split and the
temperature its branches' outlets give by the enthalpy balance, then solves the network again, until no
temperature moves (under-relaxed after 50 passes).  The energy balances are then exact.

The rating itself is exact for counter-current units (counter-current and double pipe) and for heaters and
coolers rated against a utility at one temperature: their duty is the one whose segment-wise area (interval
by interval between the segment breaks, exact log mean, the unit's U) equals their area, the area a new
design is sized with (:func:`heatloom.equipment.segments.size_segments`), and such a unit enters the linear
system with the coefficient a = Q/(T_h,in − T_c,in) (Q over the driving force against the utility) in place
of ε·C_min, so that the system reproduces that duty at the fixed point.  Co-current and 1-2 shell units keep
their ε-NTU relations on the secant CPs, approximate where a segment break falls inside them (the result's
notes say so).

References
----------
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S. (2007) Fundamentals of Heat and Mass Transfer,
6th ed., Wiley, Table 11.3 (ε-NTU relations, via :mod:`heatloom.equipment.rating`); Section 11.3 (log mean
temperature difference of a counter-current interval).

Results are screening estimates: check them against plant measurements, and any change against local codes
with qualified, licensed engineers.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import asdict, dataclass

import numpy as np

from .. import defaults
from ..equipment.rating import effectiveness_from_ntu
from ..errors import InfeasibleError, InputError, SolverError
from ..model import StreamTable, Utility
from ..model.exchangers import ExchangerType
from ..model.existing import OperatingMode, UnitRole
from ..network.structure import smallest_approach
from ..pinch import target
from ..validation import check_dt_min
from .existing import ExistingNetwork
from .flowtree import flow_steps
from .profiles import heat_between, mean_cp_between, temperature_after
from .rating import UnitRating, rate_unit, utility_temperature

__all__ = ["UnitState", "Simulation", "simulate", "utility_targets"]


@dataclass(frozen=True)
class UnitState:
    """One unit as it runs in the simulated network.

    Attributes
    ----------
    name : str
    role : UnitRole
    mode : OperatingMode
        Rated by ε-NTU, trim (brings its stream to target) or fixed duty.
    hot, cold : str
        Hot and cold side (stream or utility names).
    duty : float
        [kW]; negative for an exchanger that moves heat from the cold to the hot side, or a trim unit that
        would have to work backwards (both listed in :attr:`Simulation.problems`).
    hot_in, hot_out, cold_in, cold_out : float
        [°C]; on a utility side the utility's supply and target temperatures.
    area : float or None
        [m²]
    u : float or None
        [kW/(m²·K)]
    effectiveness, ntu : float or None
        ε and NTU [-] of a rated unit (NTU on C_min).
    min_approach : float
        Smallest hot − cold difference along the unit, counter-current pairing, ends and inner segment
        breaks [K].
    stated_duty : float or None
        The duty the network table states [kW], for comparison.
    hot_fraction, cold_fraction : float
        Share of the hot and the cold stream's flow through the unit [-]; below 1 on a split branch, whose
        temperatures are then the branch's own (before it mixes with the other branches).
    """

    name: str
    role: UnitRole
    mode: OperatingMode
    hot: str
    cold: str
    duty: float
    hot_in: float
    hot_out: float
    cold_in: float
    cold_out: float
    area: float | None
    u: float | None
    effectiveness: float | None
    ntu: float | None
    min_approach: float
    stated_duty: float | None
    hot_fraction: float = 1.0
    cold_fraction: float = 1.0

    def to_dict(self) -> dict:
        d = asdict(self)
        d["role"], d["mode"] = self.role.value, self.mode.value
        return d


@dataclass(frozen=True, eq=False)
class Simulation:
    """The simulated state of an existing network (see :func:`simulate`).

    Attributes
    ----------
    network : ExistingNetwork
    units : tuple of UnitState
        In the network's unit order.
    temperatures : dict
        Process stream name → temperatures from its supply end, after each of its positions in order [°C]
        (after a split: the temperature of the mixed stream).
    shortfalls : dict
        Process stream name → heat still to remove (hot) or add (cold) to reach its target after its last
        unit [kW]; zero for a stream ending with a heater or cooler, negative when it overshoots.
    utility_duties : dict
        Utility name → duty [kW] (sum over its units).
    dt_min : float or None
        ΔTmin of the targets compared with [K].
    hot_utility_target, cold_utility_target : float or None
        Minimum utilities at ``dt_min`` by the problem table algorithm [kW].
    problems : tuple of str
        What does not work in this network, in words (overshoots, reversed units, negative trim duties,
        streams missing their targets, utilities without driving force).
    notes : tuple of str
        Assumptions and approximations in force.
    iterations : int
        Linear solves done (1 when every stream has one segment).
    """

    network: ExistingNetwork
    units: tuple[UnitState, ...]
    temperatures: dict[str, tuple[float, ...]]
    shortfalls: dict[str, float]
    utility_duties: dict[str, float]
    dt_min: float | None
    hot_utility_target: float | None
    cold_utility_target: float | None
    problems: tuple[str, ...]
    notes: tuple[str, ...]
    iterations: int

    def unit(self, name: str) -> UnitState:
        """The state of the unit of that name (KeyError if none)."""
        for u in self.units:
            if u.name == name:
                return u
        raise KeyError(name)

    @property
    def hot_utility(self) -> float:
        """Total duty of the heaters [kW]."""
        return float(sum(u.duty for u in self.units if u.role is UnitRole.HEATER))

    @property
    def cold_utility(self) -> float:
        """Total duty of the coolers [kW]."""
        return float(sum(u.duty for u in self.units if u.role is UnitRole.COOLER))

    @property
    def heat_recovery(self) -> float:
        """Total duty of the process-to-process exchangers [kW]."""
        return float(sum(u.duty for u in self.units if u.role is UnitRole.EXCHANGER))

    @property
    def hot_utility_excess(self) -> float | None:
        """Hot utility above the target at ``dt_min`` [kW]."""
        return None if self.hot_utility_target is None else self.hot_utility - self.hot_utility_target

    @property
    def cold_utility_excess(self) -> float | None:
        """Cold utility above the target at ``dt_min`` [kW]."""
        return None if self.cold_utility_target is None else self.cold_utility - self.cold_utility_target

    @property
    def ok(self) -> bool:
        """True when no problem was found."""
        return not self.problems

    def outlet_temperature(self, stream: str) -> float:
        """Temperature at which a process stream leaves the network [°C]."""
        return self.temperatures[stream][-1]

    def to_dict(self) -> dict:
        return {
            "units": [u.to_dict() for u in self.units],
            "hot_utility": self.hot_utility,
            "cold_utility": self.cold_utility,
            "heat_recovery": self.heat_recovery,
            "utilities": dict(self.utility_duties),
            "dtmin": self.dt_min,
            "hot_utility_target": self.hot_utility_target,
            "cold_utility_target": self.cold_utility_target,
            "hot_utility_excess": self.hot_utility_excess,
            "cold_utility_excess": self.cold_utility_excess,
            "streams": {name: {"temperatures": list(t), "shortfall": self.shortfalls[name]}
                        for name, t in self.temperatures.items()},
            "problems": list(self.problems),
            "notes": list(self.notes),
            "units_of_measure": {"temperature": "°C", "duty": "kW", "area": "m²", "U": "kW/(m²·K)"},
        }

    def to_frame(self):
        """One row per unit, canonical units in the headers (with the flow fractions when a stream is split)."""
        import pandas as pd

        split = {"hot fraction [-]": "hot_fraction", "cold fraction [-]": "cold_fraction"} \
            if self.network.has_splits else {}
        return pd.DataFrame([{"unit": u.name, "role": u.role.value, "mode": u.mode.value, "hot": u.hot,
                              "cold": u.cold, **{k: getattr(u, a) for k, a in split.items()},
                              "duty [kW]": u.duty, "stated duty [kW]": u.stated_duty,
                              "hot in [°C]": u.hot_in, "hot out [°C]": u.hot_out, "cold in [°C]": u.cold_in,
                              "cold out [°C]": u.cold_out, "area [m²]": u.area, "U [kW/(m²·K)]": u.u,
                              "effectiveness [-]": u.effectiveness, "NTU [-]": u.ntu,
                              "min approach [K]": u.min_approach} for u in self.units])

    def to_network(self):
        """The simulated state as a :class:`heatloom.network.Network` (for grid diagrams and checks).

        Units keep their names, their arrangement (the ``type`` of the units table) and their grid column as
        ``stage``; ``dt_min`` is the simulation's (0 when none was given).
        """
        from ..network.structure import Cooler, Exchanger, Heater, Network

        column, _ = self.network.grid_positions()
        ex, he, co = [], [], []
        for u in self.units:
            arrangement = self.network.unit(u.name).arrangement
            common = {"duty": u.duty, "area": u.area, "u": u.u, "stage": column[u.name], "region": "whole",
                      "name": u.name, "geometry": None if arrangement is ExchangerType.COUNTER_CURRENT
                      else {"type": arrangement.value}}
            if u.role is UnitRole.EXCHANGER:
                shells = self.network.unit(u.name).shells
                ex.append(Exchanger(u.hot, u.cold, hot_in=u.hot_in, hot_out=u.hot_out, cold_in=u.cold_in,
                                    cold_out=u.cold_out, hot_fraction=u.hot_fraction, cold_fraction=u.cold_fraction,
                                    shells=shells, **common))
            elif u.role is UnitRole.HEATER:
                he.append(Heater(u.cold, u.hot, cold_in=u.cold_in, cold_out=u.cold_out, utility_in=u.hot_in,
                                 utility_out=u.hot_out, cold_fraction=u.cold_fraction, **common))
            else:
                co.append(Cooler(u.hot, u.cold, hot_in=u.hot_in, hot_out=u.hot_out, utility_in=u.cold_in,
                                 utility_out=u.cold_out, hot_fraction=u.hot_fraction, **common))
        return Network(tuple(ex), tuple(he), tuple(co), 0.0 if self.dt_min is None else self.dt_min,
                       notes=self.notes + self.problems)


# --------------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Layout:
    """The unknown temperatures and where every unit side takes and leaves its stream.

    Keys (:mod:`heatloom.retrofit.flowtree`): ``(stream, k)`` the stream after position k (k = 0: its supply,
    known; after a split: mixed); ``(stream, k, unit)`` the outlet of a unit inside a split (the inlet of the
    next unit on its branch); ``(stream, k, "mix", path)`` the outlet of a split inside a branch.
    ``inlet``/``outlet``/``position``: (unit, side) → key, position k; ``splits``: mixer key → its
    :class:`~heatloom.retrofit.flowtree.Step` (the split's inlet, its branches' outlets and fractions)."""

    index: dict
    inlet: dict
    outlet: dict
    position: dict
    splits: dict
    stages: dict


def _layout(network: ExistingNetwork, streams: dict) -> _Layout:
    index: dict[tuple, int] = {}
    inlet, outlet, position, splits, stages = {}, {}, {}, {}, {}
    for name in streams:
        stages[name] = network.stages(name)
        for k, group in enumerate(stages[name], start=1):
            index[(name, k)] = len(index)
            for step in flow_steps(group, name, k):
                if step.unit is None:
                    splits[step.key] = step
                else:
                    u = step.unit
                    side = "hot" if u.hot == name else "cold"
                    inlet[(u.name, side)], outlet[(u.name, side)], position[(u.name, side)] = step.inlet, step.key, k
                if step.key not in index:
                    index[step.key] = len(index)
    return _Layout(index, inlet, outlet, position, splits, stages)


def _system(network: ExistingNetwork, streams: dict, lay: _Layout, cp: dict, coefficient: dict,
            exact: dict) -> tuple[np.ndarray, np.ndarray]:
    """The linear equations A·T = b of the temperatures between units: one per unit outlet on a stream and
    one per mixer after a split.

    ``cp`` holds the (secant) heat capacity flow of each unit side per whole stream flow, key (unit, side),
    and of each mixed stream after a split, key (stream, k); a branch of fraction f has f times it.
    ``coefficient`` receives (ε, NTU, ε·C_min) of every rated unit.  ``exact`` holds the linear coefficient
    a = Q/ΔT of the units rated exactly (:mod:`heatloom.retrofit.rating`), which replaces ε·C_min for them
    (their ε is then a/C_min).
    """
    n = len(lay.index)
    a_mat = np.zeros((n, n))
    b = np.zeros(n)

    def term(row: int, key: tuple, c: float) -> None:
        """Add c·T(key) to the left side of equation `row` (a stream's supply, position 0, is known)."""
        if len(key) == 2 and key[1] == 0:
            b[row] -= c * streams[key[0]].supply_temperature
        else:
            a_mat[row, lay.index[key]] += c

    for u in network.units:
        if u.role is UnitRole.EXCHANGER:
            hi, ho = lay.inlet[(u.name, "hot")], lay.outlet[(u.name, "hot")]
            ci, co = lay.inlet[(u.name, "cold")], lay.outlet[(u.name, "cold")]
            ch, cc = u.hot_fraction * cp[(u.name, "hot")], u.cold_fraction * cp[(u.name, "cold")]
            cmin, cmax = min(ch, cc), max(ch, cc)
            ntu = u.u * u.area / cmin
            if u.name in exact:
                a = exact[u.name]
                eps = a / cmin
            else:
                eps = float(effectiveness_from_ntu(ntu, cmin / cmax, u.arrangement, shells=u.shells))
                a = eps * cmin
            coefficient[u.name] = (eps, ntu, a)
            rh, rc = lay.index[ho], lay.index[co]
            # T_h,out = T_h,in − (a/C_h)(T_h,in − T_c,in);  T_c,out = T_c,in + (a/C_c)(T_h,in − T_c,in)
            term(rh, ho, 1.0)
            term(rh, hi, -(1.0 - a / ch))
            term(rh, ci, -a / ch)
            term(rc, co, 1.0)
            term(rc, ci, -(1.0 - a / cc))
            term(rc, hi, -a / cc)
            continue
        side = "cold" if u.role is UnitRole.HEATER else "hot"
        stream = getattr(u, side)
        t_in, t_out = lay.inlet[(u.name, side)], lay.outlet[(u.name, side)]
        row = lay.index[t_out]
        if u.mode is OperatingMode.TRIM:   # the stream leaves at its target (mixed, on a branch of a last split)
            term(row, (stream, lay.position[(u.name, side)]), 1.0)
            b[row] += streams[stream].target_temperature
            continue
        term(row, t_out, 1.0)
        if u.mode is OperatingMode.FIXED_DUTY:
            c = u.fraction(stream) * cp[(u.name, side)]
            term(row, t_in, -1.0)
            b[row] += u.duty / c if side == "cold" else -u.duty / c
        else:   # rated against an isothermal utility: C_r = 0, ε = 1 − exp(−NTU)
            c = u.fraction(stream) * cp[(u.name, side)]
            ntu = u.u * u.area / c
            eps = exact[u.name] / c if u.name in exact else \
                float(effectiveness_from_ntu(ntu, 0.0, ExchangerType.COUNTER_CURRENT))
            coefficient[u.name] = (eps, ntu, eps * c)
            term(row, t_in, -(1.0 - eps))
            b[row] += eps * utility_temperature(u, network)
    # mixers: s C_mix (T_in − T_mix) = Σ f_k C_k (T_in − T_k) for a split carrying s of the stream, so
    # T_mix = (1 − Σ w_k) T_in + Σ w_k T_k with w_k = f_k C_k / (s C_mix) (= f_k / s for a constant CP); C_k
    # is the CP of the branch's last item (a unit, or the mixer of a split inside the branch)
    for key, step in lay.splits.items():
        row = lay.index[key]
        term(row, key, 1.0)
        total = 0.0
        for f, out, cp_key in step.parts:
            w = f * cp[cp_key] / (step.share * cp[key])
            term(row, out, -w)
            total += w
        term(row, step.inlet, -(1.0 - total))
    return a_mat, b


def utility_targets(streams: StreamTable, dt_min: float, utilities: Sequence[Utility], notes: list[str]
                    ) -> tuple[float, float]:
    """The hot and cold utility a network is compared with at ΔTmin [kW]: the least duties of the utility
    levels given (:attr:`heatloom.pinch.Targets.hot_utility_supplied`: more than the process minimum when hot
    oil must reach the hottest demand), or the minimum utilities (ideal utilities) when none are given or
    they cannot serve; appends a note saying which.

    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> s = StreamTable.from_arrays(["C1", "H1", "C2"], [260, 200, 40], [290, 100, 140], [1.0, 1.0, 1.0])
    >>> u = [Utility("oil", 330, 250, 60.0, UtilityKind.HOT), Utility("CW", 10, 20, 6.0, UtilityKind.COLD)]
    >>> notes = []
    >>> [round(x, 9) for x in utility_targets(s, 10.0, u, notes)]   # 30 kW above 265 °C: 30 × 80/60 of oil
    [40.0, 10.0]
    >>> [round(x, 9) for x in utility_targets(s, 10.0, [], [])]
    [30.0, 0.0]
    """
    try:
        t = target(streams, dt_min, list(utilities)) if utilities else target(streams, dt_min)
    except InfeasibleError as e:
        t = target(streams, dt_min)
        notes.append(f"targets with ideal utilities: the utilities given cannot meet them at ΔTmin {dt_min:g} K ({e})")
    notes.append(f"targets at ΔTmin {dt_min:g} K by the problem table algorithm, "
                 + ("with the utilities given (their least duties)" if t.placement is not None else "ideal utilities"))
    hot, cold = t.hot_utility_supplied, t.cold_utility_supplied
    if hot > t.hot_utility + 1e-9 * max(t.hot_process_duty, 1.0):
        notes.append(f"targets with the utilities given: {hot:.6g} kW hot and {cold:.6g} kW cold, above the "
                     f"process's least {t.hot_utility:.6g} kW hot at ΔTmin {dt_min:g} K: a non-isothermal utility's "
                     "heat spreads over its range, so more of it is needed to reach the hottest demand, and the "
                     "surplus leaves through the cold utilities")
    return hot, cold


def simulate(network: ExistingNetwork, dt_min: float | None = None, *, tolerance: float = 1e-9,
             max_iterations: int = 200,
             balance_tolerance: float = defaults.MEASURED_BALANCE_TOLERANCE) -> Simulation:
    """Rate an existing network at its areas: duties, temperatures, utilities, distance from the targets.

    Parameters
    ----------
    network : ExistingNetwork
    dt_min : float, optional
        ΔTmin [K] of the energy targets to compare with (:func:`utility_targets`: the least duties of the
        network's utilities, ideal utilities when it has none or they cannot serve); no comparison when omitted.
    tolerance : float, optional
        Convergence of the fixed-point iteration on the mean CPs, largest temperature change between passes
        [K]; also the tolerance of the problem checks (scaled by 10⁶ there).
    max_iterations : int, optional
        Linear solves allowed for streams of several segments [-].
    balance_tolerance : float, optional
        Share of a stream's duty by which it may miss its target, or be taken past it, without being a
        problem [-] (measured duties and temperatures are never exact); such a miss is stated in the notes.
        Default :data:`heatloom.defaults.MEASURED_BALANCE_TOLERANCE`.

    Returns
    -------
    Simulation

    Raises
    ------
    SolverError
        The linear system is singular, or the iteration on the mean CPs of segmented streams does not
        settle within ``max_iterations``.
    InputError
        ``dt_min`` negative or not a number.

    Notes
    -----
    Modes of the units are set by :class:`~heatloom.retrofit.existing.ExistingNetwork`: exchangers are rated
    at their area and U; the last heater or cooler of a stream is a trim unit that brings the stream to its
    target; a heater or cooler inside a stream keeps its stated duty, or is rated against an isothermal
    utility.  A stream that ends with a process exchanger leaves wherever that exchanger puts it (its
    shortfall is reported).  Co-current and 1-2 shell units are rated by their own ε-NTU relations; their
    ``min_approach`` is still the counter-current pairing of their end temperatures (for 1-2 shells a
    negative value is a temperature cross, which those shells can hold within the F-factor limits).  On
    streams of several segments, counter-current units and rated heaters and coolers are rated exactly
    (segment-wise area equal to their area, :mod:`heatloom.retrofit.rating`); co-current and 1-2 shell units
    by ε-NTU on the secant CPs, approximate where a segment break falls inside them.

    Examples
    --------
    One exchanger of 2.671 m² (U 0.5 kW/(m²·K)) between H1 (150 → 60 °C, 2 kW/K) and C1 (30 → 120 °C,
    2.5 kW/K), a trim heater and a trim cooler; the exchanger transfers the 100 kW it was sized for.

    >>> from heatloom.model import StreamTable, Utility
    >>> from heatloom.retrofit.existing import ExistingNetwork
    >>> from heatloom.model.existing import ExistingUnit
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5])
    >>> u = [Utility("steam", 180, 179, 100.0), Utility("water", 20, 30, 10.0)]
    >>> net = ExistingNetwork(s, [ExistingUnit("E1", "H1", "C1", area=2.67054, u=0.5),
    ...                           ExistingUnit("H1", "steam", "C1", duty=125.0),
    ...                           ExistingUnit("C1", "H1", "water", duty=80.0)], u)
    >>> sim = simulate(net, 10)
    >>> round(sim.unit("E1").duty, 1), round(sim.hot_utility, 1), round(sim.cold_utility, 1)
    (100.0, 125.0, 80.0)
    >>> sim.hot_utility_target, sim.hot_utility_excess > 0
    (45.0, True)
    """
    dt_min = None if dt_min is None else check_dt_min(dt_min)
    streams = {s.name: s for s in network.streams}
    lay = _layout(network, streams)
    n = len(lay.index)
    units = network.units
    segmented = any(len(s.segments) > 1 for s in network.streams)

    def mean_cp(name: str) -> float:
        s = streams[name]
        return s.duty / abs(s.supply_temperature - s.target_temperature)

    cp = {key: mean_cp(network.unit(key[0]).hot if key[1] == "hot" else network.unit(key[0]).cold)
          for key in lay.inlet}
    cp.update({key: mean_cp(key[0]) for key in lay.splits})

    def temperature_of(temps: np.ndarray, key: tuple) -> float:
        if len(key) == 2 and key[1] == 0:
            return streams[key[0]].supply_temperature
        return float(temps[lay.index[key]])

    temps = np.zeros(n)
    iterations = 0
    coefficient: dict[str, tuple[float, float, float]] = {}   # unit -> (eps, ntu, eps·C_min)
    exact: dict[str, float] = {}   # unit -> a = Q/ΔT of the units rated exactly
    ratings: dict[tuple, UnitRating] = {}   # (unit, inlet temperatures) -> its rating (inlets often repeat: supplies)
    for iterations in range(1, max_iterations + 1):
        a_mat, b = _system(network, streams, lay, cp, coefficient, exact)
        try:
            new = np.linalg.solve(a_mat, b) if n else np.zeros(0)
        except np.linalg.LinAlgError:
            raise SolverError("the network's temperature equations are singular; check for units of zero "
                              "heat capacity flow or a loop of units that transfer no heat") from None
        if not np.all(np.isfinite(new)):
            raise SolverError("the network's temperature equations gave non-finite temperatures")
        change = float(np.max(np.abs(new - temps))) if n else 0.0
        temps = new
        if not segmented:
            break
        # mean CP of each stream over the range it covers in each unit (secant of its enthalpy curve), made
        # consistent with the unit's own rating at its present inlet temperatures; after a split, the mixed
        # stream's over the range from the split to the mixer
        relax = 1.0 if iterations < 50 else 0.5
        for u in units:
            inlets = {side: temperature_of(temps, lay.inlet[(u.name, side)])
                      for side in ("hot", "cold") if (u.name, side) in lay.inlet}
            key = (u.name, tuple(sorted(inlets.items())))
            rating = ratings[key] if key in ratings else ratings.setdefault(key, rate_unit(network, u, streams, inlets))
            values = rating.cps
            if rating.coefficient is None:
                exact.pop(u.name, None)
            else:   # relaxed from the coefficient of the last solve
                exact[u.name] = (1 - relax) * coefficient[u.name][2] + relax * rating.coefficient
            if u.mode is OperatingMode.TRIM and u.on_branch:   # its branch's range, as the mixer sees it
                side = "cold" if u.role is UnitRole.HEATER else "hot"
                values = {side: mean_cp_between(streams[getattr(u, side)], inlets[side],
                                                temperature_of(temps, lay.outlet[(u.name, side)]))}
            for side, value in values.items():
                cp[(u.name, side)] = (1 - relax) * cp[(u.name, side)] + relax * value
        for key, step in lay.splits.items():
            # the mixed temperature the branch outlets of this pass give by the enthalpy balance (not the one
            # the last secant gave: a secant across a phase change would oscillate from pass to pass)
            s, t_split = streams[key[0]], temperature_of(temps, step.inlet)
            heat = sum(f * heat_between(s, t_split, temperature_of(temps, out)) for f, out, _ in step.parts)
            value = mean_cp_between(s, t_split, temperature_after(s, t_split, heat / step.share))
            cp[key] = (1 - relax) * cp[key] + relax * value
        if iterations > 1 and change <= tolerance:
            break
    else:
        raise SolverError(f"the mean heat capacity flows of the segmented streams did not settle in "
                          f"{max_iterations} passes (last temperature change {change:.3g} K)")

    check = 1e6 * tolerance
    if not (0 <= balance_tolerance < 0.1):
        raise InputError(f"balance tolerance must be a share of the stream duty from 0 to 0.1, got "
                         f"{balance_tolerance!r}")
    problems: list[str] = []
    within: list[str] = []
    states = []
    duties: dict[str, float] = {}
    for u in units:
        side_temps = {}
        for side in ("hot", "cold"):
            name = getattr(u, side)
            if name in streams:
                side_temps[side] = (temperature_of(temps, lay.inlet[(u.name, side)]),
                                    temperature_of(temps, lay.outlet[(u.name, side)]))
            else:
                util = network.unit_side(u, name)
                side_temps[side] = (util.supply_temperature, util.target_temperature)
        (hi, ho), (ci, co) = side_temps["hot"], side_temps["cold"]
        eps = ntu = None
        if u.role is UnitRole.EXCHANGER:
            eps, ntu, a = coefficient[u.name]
            q = a * (hi - ci)
            if q < -check:
                problems.append(f"exchanger '{u.name}' moves {-q:.4g} kW from the cold side to the hot side: "
                                f"'{u.hot}' enters at {hi:.4g} °C, below '{u.cold}' at {ci:.4g} °C")
        else:
            side = "cold" if u.role is UnitRole.HEATER else "hot"
            stream = streams[getattr(u, side)]
            t_in, t_out = side_temps[side]
            if u.mode is OperatingMode.FIXED_DUTY:
                q = u.duty
            else:
                q = u.fraction(stream.name) * heat_between(stream, t_in, t_out)
                if u.mode is OperatingMode.RATED:
                    eps, ntu, _ = coefficient[u.name]
            if u.mode is OperatingMode.TRIM and q < -check:
                direction = "above" if u.role is UnitRole.HEATER else "below"
                problems.append(f"{u.role.value} '{u.name}' would need {q:.4g} kW: stream '{stream.name}' "
                                f"reaches it at {t_in:.4g} °C, already {direction} its target "
                                f"{stream.target_temperature:.4g} °C")
            duties[getattr(u, "hot" if u.role is UnitRole.HEATER else "cold")] = \
                duties.get(getattr(u, "hot" if u.role is UnitRole.HEATER else "cold"), 0.0) + q
        approach = smallest_approach(network.side(u.hot), network.side(u.cold), hi, ho, ci, co) \
            if abs(q) > check else min(hi - co, ho - ci)
        if u.role is not UnitRole.EXCHANGER and abs(q) > check and not approach > 0:
            util, proc = (u.hot, u.cold) if u.role is UnitRole.HEATER else (u.cold, u.hot)
            problems.append(f"{u.role.value} '{u.name}': utility '{util}' has no driving force against stream "
                            f"'{proc}' (smallest difference {approach:.4g} K); it cannot do its "
                            f"{q:.4g} kW")
        states.append(UnitState(u.name, u.role, u.mode, u.hot, u.cold, float(q), hi, ho, ci, co, u.area, u.u,
                                eps, ntu, float(approach), u.duty, u.hot_fraction, u.cold_fraction))

    temperatures: dict[str, tuple[float, ...]] = {}
    shortfalls: dict[str, float] = {}
    for name, seq in lay.stages.items():
        s = streams[name]
        path = tuple(temperature_of(temps, (name, k)) for k in range(len(seq) + 1))
        temperatures[name] = path
        trim = bool(seq) and any(x.mode is OperatingMode.TRIM for x in seq[-1])
        for k, group in enumerate(seq, start=1):
            u = group[0]
            if any(x.mode is OperatingMode.TRIM for x in group):
                continue
            what = f"unit '{u.name}'" if len(group) == 1 else \
                f"the split of {', '.join(repr(x.name) for x in group)} (mixed)"
            past = heat_between(s, s.target_temperature, path[k])
            if past > max(check, balance_tolerance * s.duty):
                duty = next((x.duty for x in states if x.name == u.name), 0.0)
                fix = (f"; a bypass of about {100 * past / duty:.3g} % of the {'hot' if s.is_hot else 'cold'} "
                       "duty around it (or less area) would reconcile it"
                       if len(group) == 1 and u.role is UnitRole.EXCHANGER and duty > past else "")
                problems.append(f"{what} takes stream '{name}' past its target: it leaves at "
                                f"{path[k]:.6g} °C, target {s.target_temperature:.6g} °C ({past:.4g} kW too much"
                                f"{fix})")
            elif past > check:
                within.append(f"{what} takes stream '{name}' {past:.3g} kW past its target, within the "
                              f"{100 * balance_tolerance:g} % tolerance of measured data")
        short = heat_between(s, path[-1], s.target_temperature)
        shortfalls[name] = 0.0 if trim else short
        if abs(shortfalls[name]) > check:
            more = "more cooling" if s.is_hot else "more heating"
            if not seq:
                why = "it has no units"
            elif len(seq[-1]) == 1:
                why = f"it ends with exchanger '{seq[-1][0].name}', not a {'cooler' if s.is_hot else 'heater'}"
            else:
                why = (f"it ends with a split ({', '.join(repr(x.name) for x in seq[-1])}), not a "
                       f"{'cooler' if s.is_hot else 'heater'}")
            if short > balance_tolerance * s.duty:
                problems.append(f"stream '{name}' leaves the network at {path[-1]:.6g} °C instead of its "
                                f"target {s.target_temperature:.6g} °C: {short:.4g} kW {more} needed ({why}; a "
                                f"trim {'cooler' if s.is_hot else 'heater'} at its end would take it)")
            elif short > 0:
                within.append(f"stream '{name}' ends {short:.3g} kW short of its target, within the "
                              f"{100 * balance_tolerance:g} % tolerance of measured data")

    notes = within + [f"{sum(u.mode is OperatingMode.RATED for u in units)} unit(s) rated by ε-NTU at their area and U; "
             f"{sum(u.mode is OperatingMode.TRIM for u in units)} heater(s)/cooler(s) at the end of their streams take "
             f"the duty that brings them to target; {sum(u.mode is OperatingMode.FIXED_DUTY for u in units)} keep their "
             "stated duty"]
    if segmented:
        approximate = [u.name for u in units if u.role is UnitRole.EXCHANGER
                       and u.arrangement.flow_pattern is not ExchangerType.COUNTER_CURRENT
                       and max(len(streams[u.hot].segments), len(streams[u.cold].segments)) > 1]
        notes.append("streams of several segments: each unit enters the network's equations with the stream's "
                     f"mean CP over the range it covers in that unit (fixed-point iteration, {iterations} linear "
                     "solves); energy balances exact; counter-current units, and heaters and coolers rated against "
                     "their utility, rated exactly segment by segment (the duty whose area summed interval by "
                     "interval between the segment breaks is the unit's area)"
                     + (f"; {', '.join(repr(x) for x in approximate)} (co-current or 1-2 shell) by ε-NTU on the "
                        "mean CPs, approximate where a segment break falls inside the unit" if approximate else ""))
    if lay.splits:
        notes.append(f"{len(lay.splits)} stream split(s): the branches take the stream at its temperature before "
                     "the split, each with its share of the flow, and mix adiabatically after it")
    if any(u.arrangement.flow_pattern is not ExchangerType.COUNTER_CURRENT for u in units):
        notes.append("min approach of co-current and 1-2 shell units is the counter-current pairing of their "
                     "end temperatures")
    hot_target = cold_target = None
    if dt_min is not None:
        hot_target, cold_target = utility_targets(network.streams, dt_min, network.utilities, notes)
    return Simulation(network, tuple(states), temperatures, shortfalls, duties, dt_min, hot_target, cold_target,
                      tuple(problems), tuple(notes + list(network.notes)), iterations)
