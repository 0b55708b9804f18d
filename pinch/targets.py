"""Energy targets of a stream table: minimum utilities, pinch, threshold, heat recovery, utility levels.

:func:`target` is the entry point of targeting: it runs the problem table algorithm
(:mod:`heatloom.pinch.problem_table`), reads the pinch and threshold off the feasible cascade, and, when
utility levels are given, places them against the grand composite curve
(:mod:`heatloom.pinch.utilities`).  Curves are computed on demand from the result.
"""

from __future__ import annotations

import enum
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..model import StreamTable, Utility
from .curves import Curve, cold_composite, grand_composite, hot_composite
from .problem_table import ProblemTable, problem_table
from .utilities import UtilityPlacement, place_utilities

__all__ = ["Pinch", "Threshold", "Targets", "target"]

IDEAL_HOT = "hot utility"
IDEAL_COLD = "cold utility"


@dataclass(frozen=True)
class Pinch:
    """A pinch point.

    Attributes
    ----------
    shifted : float
        Pinch on the shifted temperature scale [°C].
    hot, cold : float
        Hot-side and cold-side pinch temperatures, shifted ± ΔTmin/2 [°C] (with per-stream ΔTmin
        contributions each stream sees the pinch at its own shift; these are the global-ΔTmin values).
    """

    shifted: float
    hot: float
    cold: float

    def to_dict(self) -> dict:
        return {"hot": self.hot, "cold": self.cold, "shifted": self.shifted}


class Threshold(enum.Enum):
    """Which utility a threshold problem needs."""

    HOT_ONLY = "hot utility only"
    COLD_ONLY = "cold utility only"
    NONE = "no utility at all"


@dataclass(frozen=True, eq=False)
class Targets:
    """Energy targets of one stream table at one ΔTmin.

    Attributes
    ----------
    streams : StreamTable
    dt_min : float
        [K]
    table : ProblemTable
    pinches : tuple of Pinch
        Every boundary of the feasible cascade that carries no heat, hottest first (a threshold problem's
        end where one utility is zero is not a pinch).
    threshold : Threshold or None
        Set when only one utility (or none) is needed.
    placement : UtilityPlacement or None
        Duties of the given utility levels; None when targeting against ideal utilities.
    """

    streams: StreamTable
    dt_min: float
    table: ProblemTable
    pinches: tuple[Pinch, ...]
    threshold: Threshold | None
    placement: UtilityPlacement | None = None

    @property
    def hot_utility(self) -> float:
        """Minimum hot utility [kW]."""
        return self.table.hot_utility

    @property
    def cold_utility(self) -> float:
        """Minimum cold utility [kW]."""
        return self.table.cold_utility

    @property
    def hot_utility_supplied(self) -> float:
        """Hot utility the levels given must supply at least [kW]: the sum of their least duties, more than
        :attr:`hot_utility` when a non-isothermal utility must reach the hottest demand (its heat spread
        evenly over its range, the surplus leaving through the cold utilities); :attr:`hot_utility` when
        no levels were given."""
        if self.placement is None:
            return self.hot_utility
        return float(sum(d.duty for d in self.placement.duties if d.utility.is_hot))

    @property
    def cold_utility_supplied(self) -> float:
        """Cold utility the levels given must take at least [kW] (see :attr:`hot_utility_supplied`)."""
        if self.placement is None:
            return self.cold_utility
        return float(sum(d.duty for d in self.placement.duties if not d.utility.is_hot))

    @property
    def pinch(self) -> Pinch | None:
        """The (hottest) pinch, or None for a threshold problem without one."""
        return self.pinches[0] if self.pinches else None

    @property
    def hot_process_duty(self) -> float:
        """Total duty of the hot streams [kW]."""
        return float(sum(s.duty for s in self.streams.hot))

    @property
    def cold_process_duty(self) -> float:
        """Total duty of the cold streams [kW]."""
        return float(sum(s.duty for s in self.streams.cold))

    @property
    def heat_recovery(self) -> float:
        """Maximum process-to-process heat recovery [kW]: hot duty minus minimum cold utility."""
        return max(0.0, self.hot_process_duty - self.cold_utility)

    @property
    def utility_duties(self) -> dict[str, float]:
        """Duty of each utility by name [kW]; the two ideal utilities when none were given."""
        if self.placement is None:
            return {IDEAL_HOT: self.hot_utility, IDEAL_COLD: self.cold_utility}
        return {d.utility.name: d.duty for d in self.placement.duties}

    def hot_composite(self) -> Curve:
        return hot_composite(self.streams)

    def cold_composite(self) -> Curve:
        """Cold composite placed at the minimum cold utility (the curves then touch at ΔTmin)."""
        return cold_composite(self.streams, self.cold_utility)

    def shifted_hot_composite(self) -> Curve:
        return hot_composite(self.streams, self.dt_min)

    def shifted_cold_composite(self) -> Curve:
        return cold_composite(self.streams, self.cold_utility, self.dt_min)

    def grand_composite(self) -> Curve:
        return grand_composite(self.table)

    def to_dict(self, *, problem_table: bool = True) -> dict:
        """The stable JSON shape (see DEVELOPERS.md, "JSON results")."""
        out = {
            "hot_utility": self.hot_utility,
            "cold_utility": self.cold_utility,
            "pinch": None if self.pinch is None else self.pinch.to_dict(),
            "pinches": [p.to_dict() for p in self.pinches],
            "threshold": None if self.threshold is None else self.threshold.value,
            "dtmin": self.dt_min,
            "heat_recovery": self.heat_recovery,
            "hot_process_duty": self.hot_process_duty,
            "cold_process_duty": self.cold_process_duty,
            "utilities": self.utility_duties,
            "units_of_measure": {"temperature": "°C", "duty": "kW", "dtmin": "K", "area": "m²",
                      "utility_cost": "money/year"},
        }
        if self.placement is not None:
            out["utility_levels"] = [d.to_dict() for d in self.placement.duties]
            out["utility_cost"] = self.placement.annual_cost
            out["utility_pinches"] = list(self.placement.utility_pinches)
        if problem_table:
            out["problem_table"] = self.table.to_dict()["intervals"]
        return out


def target(streams: StreamTable, dt_min: float, utilities: Sequence[Utility] | None = None) -> Targets:
    """Energy targets: minimum utilities, pinch, threshold and (optionally) utility-level duties.

    Parameters
    ----------
    streams : StreamTable
        Process streams.
    dt_min : float
        Global minimum approach temperature [K].
    utilities : sequence of Utility, optional
        Utility levels with prices [money/(kW·year)].  When omitted, the targets assume ideal utilities
        (hotter and colder than every process temperature), and the output says so.

    Returns
    -------
    Targets

    Raises
    ------
    InfeasibleError
        When the given utilities cannot serve the process.

    Examples
    --------
    Ray & Das, Process Equipment and Plant Design (Elsevier), ch. 5, Problem 5.1: 90 kW hot and 255 kW
    cold utility, pinch at 150 / 130 °C at ΔTmin 20 K.

    >>> from heatloom.model import StreamTable
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 60, 30], [40, 40, 180, 105],
    ...                             [2.0, 4.0, 3.0, 2.6])
    >>> t = target(s, 20)
    >>> t.hot_utility, t.cold_utility, t.pinch.hot, t.pinch.cold
    (90.0, 255.0, 150.0, 130.0)
    """
    table = problem_table(streams, dt_min)
    tol = table.tolerance
    flow = table.heat_flow
    zero = flow <= tol
    # Interior boundaries with no heat flow are pinches; the two ends are utilities, not pinches.
    idx = np.flatnonzero(zero[1:-1]) + 1
    half = 0.5 * float(dt_min)
    pinches = tuple(Pinch(float(table.shifted_temperatures[k]), float(table.shifted_temperatures[k] + half),
                          float(table.shifted_temperatures[k] - half)) for k in idx)
    no_hot, no_cold = table.hot_utility <= tol, table.cold_utility <= tol
    threshold = (Threshold.NONE if no_hot and no_cold else Threshold.COLD_ONLY if no_hot
                 else Threshold.HOT_ONLY if no_cold else None)
    placement = None if utilities is None else place_utilities(table, utilities)
    return Targets(streams, float(dt_min), table, pinches, threshold, placement)
