"""One wall-clock budget for a whole lowest-TAC run, shared by every solve inside it.

``--time-limit`` (``design_tac(time_limit=...)``) bounds the whole run.  Each time-limited solve of the
run (the starting MER design, the stagewise MILPs) asks the :class:`Budget` for its share of what is
left: a fraction of the remaining time, capped, never more than what remains.  A solve whose share is too
short to be worth starting is skipped; a solve that stops at its share, or without any solution, or whose
solver fails, never aborts the run: the caller falls back to its next start and the budget keeps a note
of what happened, which the result states.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field

from ...errors import SolverError
from ..solvers import SolveReport, SolveStatus, solve

__all__ = ["Budget", "MIN_SHARE"]

MIN_SHARE = 0.2
"""Shortest share worth giving a solve [s]; below it the solve is skipped (said in the notes)."""


@dataclass
class Budget:
    """The time left of one run, and what its solves did with their shares.

    Parameters
    ----------
    seconds : float
        Wall-clock limit of the whole run [s], > 0.
    clock : callable
        Monotonic clock [s] (``time.monotonic``; shared by the run's worker processes on one machine).

    Examples
    --------
    >>> b = Budget(100.0)
    >>> 0 < b.share(0.1, cap=5.0) <= 5.0
    True
    >>> b.notes
    []
    """

    seconds: float
    clock: Callable[[], float] = time.monotonic
    start: float = field(init=False)
    notes: list = field(default_factory=list)
    reports: list = field(default_factory=list)
    hit: list = field(default_factory=list)

    def __post_init__(self):
        self.start = self.clock()

    @property
    def deadline(self) -> float:
        """Clock reading at which the run must stop [s]."""
        return self.start + self.seconds

    def remaining(self) -> float:
        """Time left of the run [s], never negative."""
        return max(0.0, self.deadline - self.clock())

    def elapsed(self) -> float:
        """Time used so far [s]."""
        return self.clock() - self.start

    def share(self, fraction: float, cap: float | None = None) -> float | None:
        """``fraction`` of the time left, at most ``cap`` [s]; None when that is under :data:`MIN_SHARE`.

        Parameters
        ----------
        fraction : float
            Part of the remaining time this solve may use [-], in (0, 1].
        cap : float, optional
            Longest share whatever remains [s].
        """
        limit = fraction * self.remaining()
        if cap is not None:
            limit = min(limit, cap)
        return limit if limit >= MIN_SHARE else None

    def record(self, report: SolveReport) -> None:
        """Keep a solve's report and note it when it stopped at its share or without a solution."""
        self.reports.append(report)
        if report.status is SolveStatus.TIME_LIMIT:
            self.hit.append(f"'{report.problem}' hit its share of {report.time_limit:.3g} s (best solution kept)")
        elif report.status is SolveStatus.ERROR:
            self.hit.append(f"'{report.problem}' stopped without a solution at its share of {report.time_limit:.3g} s "
                            f"({report.detail})")

    def solve(self, problem, solver, *, fraction: float, cap: float | None, name: str) -> SolveReport | None:
        """Solve a PuLP problem within its share; None (with a note) when skipped or when the solver fails.

        A report without a solution is returned for the caller to fall back on; it never raises for a
        solve that stops without one.
        """
        limit = self.share(fraction, cap)
        if limit is None:
            self.notes.append(f"'{name}' skipped: the time limit of {self.seconds:g} s was all but spent")
            return None
        try:
            report = solve(problem, solver, time_limit=limit, name=name, check=False)
        except SolverError as exc:
            self.notes.append(f"'{name}' failed ({exc}); the search went on without it")
            return None
        self.record(report)
        return report

    def summary(self) -> list[str]:
        """Notes for the result: skipped or failed solves, and those that hit their share."""
        out = list(self.notes)
        if self.hit:
            out.append(f"time limit {self.seconds:g} s for the whole run, shared by its solves; "
                       + "; ".join(self.hit))
        return out
