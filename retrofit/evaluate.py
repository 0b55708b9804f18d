"""Evaluation of a network the engineer drew: the checks, sizing and costing a new design gets.

The network comes as a network table (:func:`heatloom.io.read_network`, resolved into an
:class:`~heatloom.retrofit.existing.ExistingNetwork`: units, their order along every stream, areas and/or
duties).  It is simulated at its areas (:func:`heatloom.retrofit.simulate.simulate`: a unit given by its
duty was sized for that duty, so it does that duty; the heater or cooler at the end of a stream takes what
brings the stream to its target) and then:

* checked as every designed network is (:func:`heatloom.network.structure.check_network`: each unit's and
  each stream's energy balance, and ΔTmin at both ends and at every inner segment break of every unit,
  :func:`~heatloom.network.structure.approach_violations`); the simulation's own problems (streams missing
  their targets, units working backwards) count too;
* temperature crosses are named per unit (the hot side below the cold side somewhere in the unit);
* its utilities are compared with the energy targets of the problem table at the same ΔTmin;
* every unit is sized (segment-wise counter-current LMTD, U from the film coefficients; a unit the table
  states as 1-2 shells at its own shell count, area / F, and a co-current one with the co-current LMTD,
  :func:`heatloom.network.sizing.stated_geometry`) and costed with the cost laws of a new design
  (:func:`heatloom.network.sizing.size_network`).

Results are screening estimates: a network must be checked against the plant's data and local codes by
qualified, licensed engineers.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace

from .. import defaults
from ..errors import InfeasibleError, InputError, TemperatureCrossError
from ..model import Stream, StreamTable, Utility
from ..model.costs import CostSettings
from ..network.sizing import size_network
from ..network.structure import Network, approach_violations, check_network, process_sides
from ..validation import check_dt_min
from .existing import ExistingNetwork
from .simulate import Simulation, simulate

__all__ = ["Evaluation", "evaluate_network", "with_default_film_coefficient"]


def with_default_film_coefficient(streams: StreamTable, utilities: Sequence[Utility], h: float | None
                                  ) -> tuple[StreamTable, tuple[Utility, ...], list[str]]:
    """Streams and utilities with ``h`` [kW/(m²·K)] where they have no film coefficient, and what got it.

    Examples
    --------
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5], film_coefficient=[None, 1.0])
    >>> t, _, given = with_default_film_coefficient(s, [], 0.5)
    >>> t["H1"].segments[0].film_coefficient, given
    (0.5, ["stream 'H1'"])
    """
    if h is None:
        return streams, tuple(utilities), []
    given: list[str] = []
    out = []
    for s in streams:
        if any(g.film_coefficient is None for g in s.segments):
            given.append(f"stream '{s.name}'")
            s = Stream(s.name, tuple(replace(g, film_coefficient=h) if g.film_coefficient is None else g
                                     for g in s.segments))
        out.append(s)
    utils = []
    for u in utilities:
        if u.film_coefficient is None:
            given.append(f"utility '{u.name}'")
            u = replace(u, film_coefficient=h)
        utils.append(u)
    return replace(streams, streams=tuple(out)), tuple(utils), given


@dataclass(frozen=True, eq=False)
class Evaluation:
    """A drawn network evaluated (see :func:`evaluate_network`).

    Attributes
    ----------
    network : Network
        The units at their simulated duties and temperatures, sized and costed when sizing was possible.
    simulation : Simulation
    dt_min : float
        [K]
    failures : tuple of str
        Every check the network fails, in words: simulation problems, balance or approach failures.
    crosses : tuple of str
        Units whose hot side falls below their cold side somewhere (a temperature cross), one line each.
    hot_utility_target, cold_utility_target : float
        Energy targets at ``dt_min`` [kW].
    sized : bool
        Whether every unit could be sized (not across a temperature cross).
    notes : tuple of str
    """

    network: Network
    simulation: Simulation
    dt_min: float
    failures: tuple[str, ...]
    crosses: tuple[str, ...]
    hot_utility_target: float
    cold_utility_target: float
    sized: bool
    notes: tuple[str, ...] = ()

    @property
    def ok(self) -> bool:
        """True when the network passes every check."""
        return not self.failures and not self.crosses

    @property
    def hot_utility_excess(self) -> float:
        """Hot utility above its target [kW]."""
        return self.network.hot_utility - self.hot_utility_target

    @property
    def cold_utility_excess(self) -> float:
        """Cold utility above its target [kW]."""
        return self.network.cold_utility - self.cold_utility_target

    @property
    def targets_met(self) -> bool:
        """Whether both utilities are at their targets (within 1e-6 of the larger stream duty)."""
        tol = 1e-6 * max((s.duty for s in self.simulation.network.streams), default=1.0)
        return abs(self.hot_utility_excess) <= tol and abs(self.cold_utility_excess) <= tol

    def units_frame(self):
        """The units table of the evaluated network (:meth:`Network.to_frame`: simulated duties and
        temperatures, areas, costs), in the engineer's row order and with every unit's position, branch
        and place on it as drawn, not as recovered from the temperatures (which cannot always tell the
        order of split units, :func:`heatloom.network.streamorder.unordered_streams`): the table reads back
        into the same network.
        """
        drawn = self.simulation.network.to_frame().set_index("unit")   # the network table as drawn
        frame = self.network.to_frame().set_index("unit").loc[drawn.index]
        for column in ("hot_order", "cold_order", "hot_branch", "hot_branch_order", "cold_branch",
                       "cold_branch_order"):
            frame[column] = drawn[column] if column in drawn else None
        return frame.reset_index().astype({"hot_order": "Int64", "cold_order": "Int64"})

    def to_dict(self) -> dict:
        return {"ok": self.ok, "failures": list(self.failures), "temperature_crosses": list(self.crosses),
                "dtmin": self.dt_min, "hot_utility_target": self.hot_utility_target,
                "cold_utility_target": self.cold_utility_target, "hot_utility_excess": self.hot_utility_excess,
                "cold_utility_excess": self.cold_utility_excess, "targets_met": self.targets_met,
                "sized": self.sized, "network": self.network.to_dict(), "notes": list(self.notes)}


def evaluate_network(network: ExistingNetwork, dt_min: float, *, costs: CostSettings | None = None,
                     default_film_coefficient: float | None = None) -> Evaluation:
    """Check, size and cost a network the engineer drew, as a new design is checked, sized and costed.

    Parameters
    ----------
    network : ExistingNetwork
        The network (units, their order along each stream, areas and/or duties), with its streams and
        utilities (utilities priced in [money/(kW·year)]).
    dt_min : float
        Minimum approach every unit must keep, and ΔTmin of the energy targets [K].
    costs : CostSettings, optional
        Cost laws; the defaults when omitted.
    default_film_coefficient : float, optional
        h assumed for sizing where a stream or utility has none [kW/(m²·K)].

    Returns
    -------
    Evaluation

    Examples
    --------
    One exchanger of 100 kW between H1 (150 → 60 °C, 2 kW/K) and C1 (30 → 120 °C, 2.5 kW/K), a heater and a
    cooler at the ends: ΔTmin 10 K is kept; the targets at 10 K (45 kW hot) are missed by 80 kW.

    >>> from heatloom.model import ExistingUnit, StreamTable, Utility, UtilityKind
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5], film_coefficient=[1.0, 1.0])
    >>> u = [Utility("steam", 180, 179, 100.0, UtilityKind.HOT, 5.0), Utility("water", 20, 30, 10.0, UtilityKind.COLD, 2.0)]
    >>> net = ExistingNetwork(s, [ExistingUnit("E1", "H1", "C1", duty=100.0), ExistingUnit("H1", "steam", "C1"),
    ...                           ExistingUnit("C1", "H1", "water")], u)
    >>> ev = evaluate_network(net, 10.0)
    >>> ev.ok, round(ev.network.hot_utility, 6), ev.hot_utility_target, ev.targets_met
    (True, 125.0, 45.0, False)
    """
    dt = check_dt_min(dt_min)
    sim = simulate(network, dt)   # targets with the utilities given (their least duties)
    streams = network.streams
    utilities = list(network.utilities)
    net = replace(sim.to_network(), dt_min=float(dt))
    failures = list(sim.problems)
    crosses = []
    for u in sim.units:
        if abs(u.duty) > 0 and u.min_approach < 0:
            crosses.append(f"{u.role.value} '{u.name}' ({u.hot} → {u.cold}): temperature cross, the hot side is "
                           f"{-u.min_approach:.4g} K below the cold side (hot {u.hot_in:.4g} → {u.hot_out:.4g} °C, "
                           f"cold {u.cold_in:.4g} → {u.cold_out:.4g} °C)")
    failures += [f"unit {v}" for v in approach_violations(net, streams, utilities, dt_min=dt,
                                                         tol=defaults.TABLE_APPROACH_TOLERANCE)]
    hair = [v.split(":")[0] for v in approach_violations(net, streams, utilities, dt_min=dt)
            if f"unit {v}" not in failures]
    try:   # balances to the tolerance of measured data the simulation states (areas written to 0.001 m²)
        check_network(net, streams, utilities, dt_min=dt, rtol=defaults.MEASURED_BALANCE_TOLERANCE)
    except InfeasibleError as e:
        balances = [p for p in str(e).removeprefix("network check failed: ").split("; ")
                    if "smallest approach" not in p]
        failures += balances
    notes = list(sim.notes)
    if hair:
        notes.append(f"within {defaults.TABLE_APPROACH_TOLERANCE:g} K below ΔTmin {dt:g} K, taken as at it (the "
                     f"rounding of areas in a table): {', '.join(hair)}")
    sized = True
    try:
        net = size_network(net, _covering(streams, net), utilities, costs=costs,
                           default_film_coefficient=default_film_coefficient, own_arrangements=True)
    except (TemperatureCrossError, InputError, ValueError) as e:
        sized = False   # the checks still stand; the notes say why there are no areas and costs
        notes.append(f"not sized and not costed as a new design: {e}")
    return Evaluation(net, sim, float(dt), tuple(dict.fromkeys(failures)), tuple(crosses),
                      float(sim.hot_utility_target), float(sim.cold_utility_target), sized, tuple(notes))


def _covering(streams: StreamTable, net: Network) -> StreamTable:
    """The streams, each with its end segments continued (at their CP) over the unit temperatures that lie
    beyond its range by less than the tolerance of measured data
    (:data:`heatloom.defaults.MEASURED_BALANCE_TOLERANCE` of the range: the rounding of a table's areas
    leaves a rated outlet a few mK past its target), and over the temperatures of split branches that pass
    the stream's target by any amount before they mix back (a lowest-TAC design with branch overshoot), so
    that sizing can cut each unit's part of the profile; other overshoots are left for sizing to refuse (the
    checks report them)."""
    seen: dict[str, list[tuple[float, bool]]] = {}   # stream -> (temperature, on a split branch of it)
    for _, name, _, fraction, t_in, t_out in process_sides(net):
        seen.setdefault(name, []).extend(((t_in, fraction < 1.0), (t_out, fraction < 1.0)))
    out = []
    for st in streams:
        lo, hi = sorted((st.supply_temperature, st.target_temperature))
        tol = defaults.MEASURED_BALANCE_TOLERANCE * (hi - lo)
        temps = seen.get(st.name, [])
        # a branch may pass the target end: below lo for a hot stream, above hi for a cold one
        low = min((t for t, branch in temps if lo - tol <= t < lo or (branch and st.is_hot and t < lo)), default=lo)
        high = max((t for t, branch in temps if hi < t <= hi + tol or (branch and not st.is_hot and t > hi)),
                   default=hi)
        if low == lo and high == hi:
            out.append(st)
            continue
        segs = list(st.segments)
        first, last = (high, low) if st.is_hot else (low, high)
        segs[0] = replace(segs[0], supply_temperature=first)
        segs[-1] = replace(segs[-1], target_temperature=last)
        out.append(replace(st, segments=tuple(segs)))
    return replace(streams, streams=tuple(out))
