"""Pinch subnetworks and the fewest-matches model of one subnetwork, with the ways to a match set without it.

Papoulias & Grossmann (1983) see heat as a commodity shipped from hot streams (sources) to cold streams
(sinks) through shifted temperature intervals (warehouses); those intervals and the LP of the cheapest
utility duties are in :mod:`heatloom.network.transshipment`.  This module holds the data of one pinch
subnetwork and the model of its fewest matches:

* :func:`subnetworks`, which splits the problem at every interval boundary where the cascade carries no
  heat (process pinches and utility pinches), into the regions of
  :func:`heatloom.network.transshipment.pinch_regions`;
* :func:`min_matches_model`, the expanded transshipment MILP of the fewest process/utility matches with
  the utility duties fixed, built by a function that returns the PuLP problem and a reader of its
  solution (:func:`heatloom.network.milp.min_matches` solves it);
* :func:`heuristic_matches`, a greedy heat-load distribution with no solver (the last fallback when the
  MILP and its relaxation find nothing in their time), and :func:`alternative_matches`, another set of as
  few matches for one stream group (the placement tries them when a set cannot be placed).

References
----------
.. [1] Papoulias, S. A., Grossmann, I. E. (1983). A structural optimization approach in process synthesis
   II: Heat recovery networks. Computers & Chemical Engineering 7(6), 707-721.
   doi:10.1016/0098-1354(83)85023-6
.. [2] Floudas, C. A., Ciric, A. R., Grossmann, I. E. (1986). Automatic synthesis of optimum heat
   exchanger network configurations. AIChE Journal 32(2), 276-290. doi:10.1002/aic.690320215
"""

from __future__ import annotations

import enum
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import pulp

from ..errors import InfeasibleError, InputError, SolverError
from .solvers import SolveReport, SolverName, new_variable, solve
from .transshipment import HEAT_TOLERANCE, PINCH_TOLERANCE, Transshipment, pinch_regions

__all__ = [
    "TieBreak",
    "MatchKind",
    "Subnetwork",
    "subnetworks",
    "Match",
    "SubnetworkMatches",
    "REQUIRED_SHARE",
    "pair_set",
    "min_matches_model",
    "fix_integers",
    "heuristic_matches",
    "alternative_matches",
]


class TieBreak(enum.Enum):
    """Secondary objective among the solutions with the fewest matches.

    ``NONE``: the first minimum-match solution the solver proves (fast).  ``COMPACT``: a second MILP keeps
    the number of matches at that minimum and minimises the number of (match, interval) cells that carry
    heat, so each match exchanges its load over as few shifted intervals as possible (a match confined to
    a narrow temperature range is easier to place without splits).  Both objectives are ours to choose:
    the total heat passed down each boundary is the same in every solution (it is fixed by the data and
    the utility duties), so a "least cascaded heat" criterion would break no ties.
    """

    NONE = "none"
    COMPACT = "compact"


class MatchKind(enum.Enum):
    """What a match becomes in the network."""

    EXCHANGER = "exchanger"   # process hot stream → process cold stream
    HEATER = "heater"         # hot utility → process cold stream
    COOLER = "cooler"         # process hot stream → cold utility


@dataclass(frozen=True, eq=False)
class Subnetwork:
    """One part of the problem between pinches, with the heat each participant brings to its intervals.

    Attributes
    ----------
    index : int
        Position, hottest first.
    label : str
        ``"whole problem"``, ``"above the pinch at 85 °C shifted"``, ``"between the pinches at ..."``,
        ``"below the pinch at ..."`` (:attr:`heatloom.network.transshipment.Region.description`).
    first : int
        Index of its hottest interval in the problem's :class:`Intervals`.
    temperatures : ndarray
        Its interval boundaries, shifted, hottest first [°C], length m + 1.
    hot, cold : tuple of str
        Names of the hot participants (hot process streams, then hot utilities) and the cold ones.
    hot_is_utility, cold_is_utility : tuple of bool
    hot_heat, cold_heat : ndarray
        Heat released / taken by each participant in each of its intervals [kW], shape (participants, m).
    """

    index: int
    label: str
    first: int
    temperatures: np.ndarray
    hot: tuple[str, ...]
    hot_is_utility: tuple[bool, ...]
    hot_heat: np.ndarray
    cold: tuple[str, ...]
    cold_is_utility: tuple[bool, ...]
    cold_heat: np.ndarray

    @property
    def size(self) -> int:
        """Number of intervals m."""
        return self.temperatures.size - 1

    @property
    def hot_duties(self) -> dict[str, float]:
        """Heat of each hot participant in this subnetwork [kW]."""
        return {n: float(h.sum()) for n, h in zip(self.hot, self.hot_heat)}

    @property
    def cold_duties(self) -> dict[str, float]:
        """Heat taken by each cold participant in this subnetwork [kW]."""
        return {n: float(c.sum()) for n, c in zip(self.cold, self.cold_heat)}

    @property
    def unit_target(self) -> int:
        """Euler's minimum-units target N − 1 [-], N the streams and utilities taking part.

        The fewest matches equal N − 1 unless the subnetwork splits into independent balanced parts
        (Linnhoff & Hindmarsh 1983).
        """
        return max(len(self.hot) + len(self.cold) - 1, 0)

    def to_dict(self) -> dict:
        return {"index": self.index, "label": self.label, "shifted_top": float(self.temperatures[0]),
                "shifted_bottom": float(self.temperatures[-1]), "first_interval": self.first,
                "hot": self.hot_duties, "cold": self.cold_duties, "unit_target": self.unit_target}


def subnetworks(plan: Transshipment) -> tuple[Subnetwork, ...]:
    """Split the problem at its pinches into subnetworks that exchange no heat with each other.

    Every interior boundary where the cascade with the LP's utility duties carries no heat (process and
    utility pinches, :attr:`Transshipment.pinches`) is a cut (:func:`pinch_regions`); heat never crosses
    it in a network that meets the duties, so each part can be matched on its own (Linnhoff & Hindmarsh
    1983; Papoulias & Grossmann 1983).  Parts with no heat at all are dropped.

    Parameters
    ----------
    plan : Transshipment

    Returns
    -------
    tuple of Subnetwork
        Hottest first.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.network.transshipment import transshipment
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> for n in subnetworks(transshipment(s, 10)):
    ...     print(n.label, n.hot, n.cold)
    above the pinch at 85 °C shifted ('1', '2', 'hot utility') ('3', '4')
    below the pinch at 85 °C shifted ('1', '2') ('3', 'cold utility')
    """
    iv = plan.intervals
    temps = iv.temperatures

    def boundary(t: float | None, end: int) -> int:   # index of a pinch among the interval boundaries
        return end if t is None else int(np.flatnonzero(temps == t)[0])

    scale = max(iv.duty_scale, 1.0)
    tol = HEAT_TOLERANCE * scale
    util_heat = np.asarray(plan.duties)[:, None] * iv.utility_fraction
    out = []
    for region in pinch_regions(plan.pinches):
        a, b = boundary(region.top, 0), boundary(region.bottom, iv.size)
        parts = {True: ([], [], []), False: ([], [], [])}
        for i, name in enumerate(iv.stream_names):
            h = iv.stream_heat[i, a:b]
            if h.sum() > tol:
                bucket = parts[bool(iv.stream_is_hot[i])]
                bucket[0].append(name), bucket[1].append(False), bucket[2].append(h)
        for u, util in enumerate(iv.utilities):
            h = util_heat[u, a:b]
            if h.sum() > tol:
                bucket = parts[util.is_hot]
                bucket[0].append(util.name), bucket[1].append(True), bucket[2].append(h)
        (hn, hu, hh), (cn, cu, ch) = parts[True], parts[False]
        if not hn and not cn:
            continue
        if not hn or not cn:
            raise SolverError(f"the part of the cascade between {temps[a]:g} and {temps[b]:g} °C shifted "
                              "has heat on one side only; the utility duties do not balance it")
        hot_heat, cold_heat = np.array(hh), np.array(ch)
        imbalance = hot_heat.sum() - cold_heat.sum()
        if abs(imbalance) > PINCH_TOLERANCE * scale * 10:
            raise SolverError(f"heat balance of the part between {temps[a]:g} and {temps[b]:g} °C shifted "
                              f"is off by {imbalance:.6g} kW; the utility duties do not close it")
        if imbalance < 0:   # LP round-off: let the largest hot entry carry it, so the part balances
            r, c = np.unravel_index(np.argmax(hot_heat), hot_heat.shape)
            hot_heat[r, c] -= imbalance
        out.append(Subnetwork(len(out), region.description, a, temps[a:b + 1].copy(), tuple(hn),
                              tuple(hu), hot_heat, tuple(cn), tuple(cu), cold_heat))
    return tuple(out)


@dataclass(frozen=True)
class Match:
    """One match of the heat-load distribution: a hot participant giving heat to a cold one.

    Attributes
    ----------
    hot, cold : str
        Stream or utility names.
    load : float
        Heat exchanged [kW].
    kind : MatchKind
    subnetwork : int
        Index of its subnetwork.
    label : str
        Label of its subnetwork.
    interval_loads : tuple of (int, float)
        Heat taken by the cold side in each interval of the problem's :class:`Intervals`
        (global index, [kW]); the hot side released it in the same interval or a hotter one.
    """

    hot: str
    cold: str
    load: float
    kind: MatchKind
    subnetwork: int
    label: str
    interval_loads: tuple[tuple[int, float], ...]

    def to_dict(self) -> dict:
        return {"hot": self.hot, "cold": self.cold, "load": self.load, "kind": self.kind.value,
                "subnetwork": self.subnetwork, "label": self.label,
                "interval_loads": [{"interval": k, "load": q} for k, q in self.interval_loads]}


@dataclass(frozen=True, eq=False)
class SubnetworkMatches:
    """The fewest matches of one subnetwork and their heat-load distribution.

    Attributes
    ----------
    subnetwork : Subnetwork
    matches : tuple of Match
    residuals : dict of str to tuple of float
        Heat of each hot participant passed down past each boundary of the subnetwork [kW], length
        m + 1 (0 at the top; at the bottom only round-off).
    reports : tuple of SolveReport
        The fewest-matches solve, then the tie-break solve (if any), then the LP that recomputes the
        loads with the matches fixed (exact balances free of integrality round-off); empty when the time
        budget was spent before any solve.
    note : str
        How the matches were found when it was not the fewest-matches MILP ("" otherwise).
    """

    subnetwork: Subnetwork
    matches: tuple[Match, ...]
    residuals: dict[str, tuple[float, ...]]
    reports: tuple[SolveReport, ...]
    note: str = ""

    @property
    def report(self) -> SolveReport | None:
        """The fewest-matches solve (None when there was none)."""
        return self.reports[0] if self.reports else None

    @property
    def number_of_matches(self) -> int:
        return len(self.matches)

    @property
    def optimal(self) -> bool:
        """True when the number of matches is proven minimal."""
        return bool(self.reports) and self.reports[0].optimal and not self.note

    def to_dict(self) -> dict:
        return {**self.subnetwork.to_dict(), "number_of_matches": self.number_of_matches,
                "optimal": self.optimal, "matches": [m.to_dict() for m in self.matches],
                "residuals": {k: list(v) for k, v in self.residuals.items()}, "note": self.note,
                "solves": [r.to_dict() for r in self.reports]}


REQUIRED_SHARE = 1e-3
"""Least load of a required match in the fewest-matches model, as a share of its largest possible load
[-]: "required" means a unit with a real duty, not a match of round-off size (our choice)."""


def pair_set(names: Iterable[tuple[str, str]], what: str = "forbidden") -> set[tuple[str, str]]:
    """The (hot, cold) name pairs of an iterable, as a set of str pairs.

    Parameters
    ----------
    names : iterable of (str, str)
    what : str
        "forbidden" or "required", for the message.

    Raises
    ------
    InputError
        When an item is not a pair.

    Examples
    --------
    >>> sorted(pair_set([("H1", "C1"), ["H2", "steam"]]))
    [('H1', 'C1'), ('H2', 'steam')]
    """
    out = set()
    for pair in names:
        try:
            h, c = pair
        except (TypeError, ValueError):
            raise InputError(f"a {what} match must be a (hot, cold) pair of names, got {pair!r}") from None
        out.add((str(h), str(c)))
    return out


def min_matches_model(sub: Subnetwork, *, forbidden: Iterable[tuple[str, str]] = (),
                      max_matches: int | None = None, required: Iterable[tuple[str, str]] = ()
                      ) -> tuple[pulp.LpProblem, Callable[[], tuple[tuple[Match, ...], dict]]]:
    """The expanded transshipment MILP of the fewest matches in one subnetwork.

    .. math::

        \\min \\sum_{i,j} y_{ij} \\quad \\text{s.t.} \\quad
        R_{ik} - R_{i,k-1} + \\sum_j q_{ijk} = Q^H_{ik}, \\qquad
        \\sum_i q_{ijk} = Q^C_{jk}, \\qquad
        \\sum_k q_{ijk} \\le U_{ij} y_{ij}, \\qquad q_{ijk} \\le \\min(Q^C_{jk}, \\textstyle\\sum_{l \\le k}
        Q^H_{il})\\, y_{ij}

    (the expanded transshipment model of Papoulias & Grossmann 1983, with a residual per hot stream;
    Floudas, Ciric & Grossmann 1986).
    Heat :math:`q_{ijk}` goes from hot *i* to cold *j* in interval *k*; hot heat not used in its interval
    cascades down through :math:`R_{ik} \\ge 0`.  The big-M is
    :math:`U_{ij} = \\min(\\text{heat of } i \\text{ at or above } j\\text{'s coldest interval},
    \\text{demand of } j \\text{ at or below } i\\text{'s hottest interval})`, which is never above
    :math:`\\min(Q_i, Q_j)`; the second, per-interval bound tightens the relaxation.  Heat is scaled by
    the subnetwork's total duty inside the model.  Utility-to-utility matches are not allowed.

    Parameters
    ----------
    sub : Subnetwork
    forbidden : iterable of (str, str)
        (hot, cold) name pairs that must not be matched.
    required : iterable of (str, str)
        (hot, cold) name pairs that must be matched, with at least :data:`REQUIRED_SHARE` of the smaller of
        their largest possible load and the subnetwork's duty scale.
    max_matches : int, optional
        Tie-break stage (:attr:`TieBreak.COMPACT`): allow at most this many matches and minimise instead
        the number of (match, interval) cells carrying heat, with binaries :math:`z_{ijk} \\le y_{ij}`,
        :math:`q_{ijk} \\le \\min(Q^C_{jk}, \\sum_{l \\le k} Q^H_{il})\\, z_{ijk}`.

    Returns
    -------
    problem : pulp.LpProblem
    read : callable
        ``read()`` returns ``(matches, residuals)``: the :class:`Match` objects (in the order of the hot
        participants) and the heat of each hot participant passed down past each boundary [kW].

    Raises
    ------
    InfeasibleError
        When some cold demand cannot be reached by any allowed hot participant, or a required pair cannot
        exchange heat in the subnetwork.

    Examples
    --------
    Below the pinch of Sinnott's four-stream problem streams 1 and 2 give 150 kW to stream 3 and the
    cold utility in three matches (two choices of them exist).

    >>> from heatloom.model import StreamTable
    >>> from heatloom.network.transshipment import transshipment
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> below = subnetworks(transshipment(s, 10))[1]
    >>> problem, read = min_matches_model(below)
    >>> solve(problem, "cbc", time_limit=10).objective
    3.0
    >>> matches, residuals = read()
    >>> len(matches), sum(m.load for m in matches)
    (3, 150.0)
    """
    forbidden = pair_set(forbidden)
    required = pair_set(required, "required")
    m = sub.size
    scale = max(float(sub.hot_heat.sum()), float(sub.cold_heat.sum()), 1e-300)
    h = sub.hot_heat / scale
    c = sub.cold_heat / scale
    tol = HEAT_TOLERANCE
    h = np.where(h > tol, h, 0.0)
    c = np.where(c > tol, c, 0.0)
    cum_h = np.cumsum(h, axis=1)
    first = [int(np.argmax(row > 0)) for row in h]
    last_c = [int(m - 1 - np.argmax(row[::-1] > 0)) for row in c]
    problem = pulp.LpProblem(f"min_matches_{sub.index}", pulp.LpMinimize)
    y, q = {}, {}
    for i, hn in enumerate(sub.hot):
        for j, cn in enumerate(sub.cold):
            if (sub.hot_is_utility[i] and sub.cold_is_utility[j]) or (hn, cn) in forbidden:
                continue
            u_ij = min(cum_h[i, last_c[j]], float(c[j, first[i]:].sum()))
            if u_ij <= tol:
                continue
            y[i, j] = new_variable(problem, f"y_{i}_{j}", cat=pulp.LpBinary)
            ks = [k for k in range(first[i], m) if c[j, k] > 0]
            for k in ks:
                q[i, j, k] = new_variable(problem, f"q_{i}_{j}_{k}", 0, min(c[j, k], cum_h[i, k]))
            problem += pulp.lpSum(q[i, j, k] for k in ks) - u_ij * y[i, j] <= 0, f"load_{i}_{j}"
            if (hn, cn) in required:
                problem += y[i, j] == 1, f"required_{i}_{j}"
                problem += pulp.lpSum(q[i, j, k] for k in ks) >= REQUIRED_SHARE * u_ij, f"required_load_{i}_{j}"
            for k in ks:
                problem += q[i, j, k] - min(c[j, k], cum_h[i, k]) * y[i, j] <= 0, f"cut_{i}_{j}_{k}"
    missing = sorted(p for p in required if (sub.hot.index(p[0]) if p[0] in sub.hot else -1,
                                              sub.cold.index(p[1]) if p[1] in sub.cold else -1) not in y)
    if missing:
        raise InfeasibleError(f"{sub.label}: the required match{'es' if len(missing) > 1 else ''} "
                              + ", ".join(f"{a}→{b}" for a, b in missing)
                              + " cannot exchange heat here without breaking ΔTmin or the energy targets")
    r = {}
    for i in range(len(sub.hot)):
        if not h[i].any():
            continue
        for k in range(first[i], m):
            r[i, k] = new_variable(problem, f"R_{i}_{k}", 0, cum_h[i, k])
        for k in range(first[i], m):
            give = [q[i, j, k] for j in range(len(sub.cold)) if (i, j, k) in q]
            problem += (r[i, k] - (r[i, k - 1] if k > first[i] else 0) + pulp.lpSum(give)
                        == float(h[i, k])), f"hot_{i}_{k}"
    for j, cn in enumerate(sub.cold):
        for k in range(m):
            if c[j, k] <= 0:
                continue
            take = [q[i, j, k] for i in range(len(sub.hot)) if (i, j, k) in q]
            if not take:
                raise InfeasibleError(
                    f"{sub.label}: the demand of '{cn}' between {sub.temperatures[k]:g} and "
                    f"{sub.temperatures[k + 1]:g} °C shifted ({c[j, k] * scale:.6g} kW) cannot be met: no "
                    "allowed hot stream or utility is hot enough (check the forbidden matches)")
            problem += pulp.lpSum(take) == float(c[j, k]), f"cold_{j}_{k}"
    if max_matches is None:
        objective = pulp.lpSum(y.values())
    else:   # tie-break stage: as few (match, interval) cells carrying heat as possible
        problem += pulp.lpSum(y.values()) <= int(max_matches), "max_matches"
        z = {}
        for (i, j, k), var in q.items():
            z[i, j, k] = new_variable(problem, f"z_{i}_{j}_{k}", cat=pulp.LpBinary)
            problem += var - min(c[j, k], cum_h[i, k]) * z[i, j, k] <= 0, f"cell_{i}_{j}_{k}"
            problem += z[i, j, k] - y[i, j] <= 0, f"cell_match_{i}_{j}_{k}"
        objective = pulp.lpSum(z.values())
    problem += objective

    def read() -> tuple[tuple[Match, ...], dict]:
        matches = []
        for (i, j), var in y.items():
            loads = [(sub.first + k, (q[i, j, k].varValue or 0.0) * scale) for k in range(m)
                     if (i, j, k) in q]
            loads = [(k, v) for k, v in loads if v > tol * scale]
            if (var.varValue or 0.0) < 0.5 or not loads:
                continue
            kind = (MatchKind.HEATER if sub.hot_is_utility[i] else MatchKind.COOLER if sub.cold_is_utility[j]
                    else MatchKind.EXCHANGER)
            matches.append(Match(sub.hot[i], sub.cold[j], float(sum(v for _, v in loads)), kind, sub.index,
                                 sub.label, tuple(loads)))
        residuals = {}
        for i, name in enumerate(sub.hot):
            vals = [0.0] + [((r[i, k].varValue or 0.0) * scale if (i, k) in r else 0.0) for k in range(m)]
            residuals[name] = tuple(0.0 if abs(v) <= tol * scale else float(v) for v in vals)
        return tuple(matches), residuals

    return problem, read


def fix_integers(problem: pulp.LpProblem) -> None:
    for v in problem.variables():
        if v.cat == pulp.LpInteger:
            v.lowBound = v.upBound = round(v.varValue or 0.0)


def heuristic_matches(sub: Subnetwork, forbidden: Iterable[tuple[str, str]] = (),
                      required: Iterable[tuple[str, str]] = ()
                      ) -> tuple[tuple[Match, ...], dict[str, tuple[float, ...]]]:
    """A feasible heat-load distribution of one subnetwork without a solver (not the fewest matches).

    Goes down the intervals; the heat each hot participant has released at or above an interval and not
    yet given away may serve the cold demand of that interval (heat only flows down the cascade, so the
    distribution keeps ΔTmin).  Each demand takes first from hot participants it is already matched with,
    then from the one with the most heat left: few matches, no proof.  Pairs in ``required`` come before
    every other.  Used when the fewest-matches MILP and its relaxation stop without a solution.

    Returns
    -------
    matches, residuals
        As ``read()`` of :func:`min_matches_model`.

    Raises
    ------
    InfeasibleError
        When some demand cannot be served (only possible with forbidden matches), or a required pair of
        this subnetwork is not matched.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.network.transshipment import transshipment
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> below = subnetworks(transshipment(s, 10))[1]
    >>> matches, _ = heuristic_matches(below)
    >>> round(sum(m.load for m in matches), 6) == round(sum(below.cold_duties.values()), 6)
    True
    """
    forbidden = pair_set(forbidden)
    required = pair_set(required, "required")
    h, c = sub.hot_heat, sub.cold_heat
    tol = HEAT_TOLERANCE * max(float(c.sum()), 1.0)
    avail = np.zeros(len(sub.hot))
    loads: dict[tuple[int, int], list[tuple[int, float]]] = {}
    residuals = np.zeros((len(sub.hot), sub.size + 1))
    for k in range(sub.size):
        avail += h[:, k]
        for j in sorted(range(len(sub.cold)), key=lambda j: -c[j, k]):
            need = float(c[j, k])
            while need > tol:
                cands = [i for i in range(len(sub.hot)) if avail[i] > tol
                         and (sub.hot[i], sub.cold[j]) not in forbidden
                         and not (sub.hot_is_utility[i] and sub.cold_is_utility[j])]
                if not cands:
                    raise InfeasibleError(f"{sub.label}: the demand of '{sub.cold[j]}' between "
                                          f"{sub.temperatures[k]:g} and {sub.temperatures[k + 1]:g} °C shifted "
                                          "cannot be served by any allowed hot participant")
                i = max(cands, key=lambda i: ((sub.hot[i], sub.cold[j]) in required, (i, j) in loads, avail[i]))
                x = min(need, float(avail[i]))
                loads.setdefault((i, j), []).append((sub.first + k, x))
                avail[i] -= x
                need -= x
        residuals[:, k + 1] = np.where(avail > tol, avail, 0.0)
    matches = []
    for (i, j), cells in sorted(loads.items()):
        kind = (MatchKind.HEATER if sub.hot_is_utility[i] else MatchKind.COOLER if sub.cold_is_utility[j]
                else MatchKind.EXCHANGER)
        matches.append(Match(sub.hot[i], sub.cold[j], float(sum(v for _, v in cells)), kind, sub.index,
                             sub.label, tuple(cells)))
    missing = sorted(required - {(m.hot, m.cold) for m in matches})
    if missing:
        raise InfeasibleError(f"{sub.label}: the greedy heat-load distribution could not place the required "
                              "match" + ("es " if len(missing) > 1 else " ") + ", ".join(f"{a}→{b}" for a, b in missing))
    return tuple(matches), {n: tuple(float(v) for v in residuals[i]) for i, n in enumerate(sub.hot)}


def alternative_matches(sub: Subnetwork, group: Sequence[Match], tried: Sequence[set[tuple[str, str]]], *,
                        solver: SolverName | str | None = None, time_limit: float = 60.0,
                        forbidden: Iterable[tuple[str, str]] = (), required: Iterable[tuple[str, str]] = ()
                        ) -> tuple[set[tuple[str, str]] | None, SolveReport]:
    """Another set of no more matches for one stream group of a subnetwork, unlike every set tried.

    The group is the participants of ``group`` (a connected part of the plan's matches); its process
    streams keep their heat, a utility the load of its matches in the group.  The fewest-matches model
    of the group gets a no-good cut per tried set, :math:`\\sum_{E} y - \\sum_{\\notin E} y \\le |E| - 1`,
    and at most as many matches as the group has.  Used when the plan's matches cannot be placed one
    unit each (the alternatives differ in how they can be placed).  ``forbidden`` pairs stay out and the
    ``required`` pairs of the group stay in.

    Returns
    -------
    pairs, report
        The new (hot, cold) pairs, or None when the solve has no solution (no other set, or no time).
    """
    names = {m.hot for m in group} | {m.cold for m in group}
    hot = [(i, n) for i, n in enumerate(sub.hot) if n in names]
    cold = [(j, n) for j, n in enumerate(sub.cold) if n in names]
    hot_heat, cold_heat = [], []
    for i, n in hot:
        row = sub.hot_heat[i]
        if sub.hot_is_utility[i]:
            row = row * (sum(m.load for m in group if m.hot == n) / max(float(row.sum()), 1e-300))
        hot_heat.append(row)
    for j, n in cold:
        row = sub.cold_heat[j]
        if sub.cold_is_utility[j]:
            row = np.zeros(sub.size)
            for m in group:
                if m.cold == n:
                    for k, q in m.interval_loads:
                        row[k - sub.first] += q
        cold_heat.append(row)
    part = Subnetwork(sub.index, sub.label, sub.first, sub.temperatures, tuple(n for _, n in hot),
                      tuple(sub.hot_is_utility[i] for i, _ in hot), np.array(hot_heat), tuple(n for _, n in cold),
                      tuple(sub.cold_is_utility[j] for j, _ in cold), np.array(cold_heat))
    required = {p for p in pair_set(required, "required") if p[0] in part.hot and p[1] in part.cold}
    problem, read = min_matches_model(part, forbidden=forbidden, required=required)
    y = {}
    for v in problem.variables():
        if v.name.startswith("y_") and v.name.count("_") == 2:
            _, a, b = v.name.split("_")
            y[part.hot[int(a)], part.cold[int(b)]] = v
    problem += pulp.lpSum(y.values()) <= len({(m.hot, m.cold) for m in group}), "no_more_matches"
    for t, done in enumerate(tried):
        problem += (pulp.lpSum(v for p, v in y.items() if p in done)
                    - pulp.lpSum(v for p, v in y.items() if p not in done) <= len(done) - 1), f"nogood_{t}"
    report = solve(problem, solver, time_limit=time_limit, absolute_gap=0.999, check=False,
                   name=f"another set of matches, {sub.label}")
    if not report.has_solution:
        return None, report
    return {(m.hot, m.cold) for m in read()[0]}, report
