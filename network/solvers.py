"""Choosing and running the mathematical-programming solver, in one place.

Every PuLP model of :mod:`heatloom.network` is solved through :func:`solve`.  The solver is chosen here
and nowhere else: ``solver=None`` picks HiGHS (through PuLP's ``HiGHS`` interface to the ``highspy``
package) when it is installed, else the CBC executable bundled with PuLP; a name (``"highs"``, ``"cbc"``
or a :class:`SolverName`) forces that solver.  Every solve has a time limit and returns a
:class:`SolveReport` with the solver's name, a :class:`SolveStatus`, the objective, the relative MIP gap
when the solver tells it, and the wall time.

How the status is read
----------------------
PuLP folds "stopped at the time limit with a feasible solution" into its ``Optimal`` status and tells the
two apart only through ``sol_status`` (``LpSolutionIntegerFeasible`` instead of ``LpSolutionOptimal``).
This module does not trust that folding:

* **HiGHS**: the model status and the primal solution status are read from the ``highspy`` object PuLP
  keeps on ``problem.solverModel``.  ``kOptimal`` is optimal; a time, iteration, solution or interrupt
  limit is :attr:`SolveStatus.TIME_LIMIT` only when HiGHS says the primal solution is feasible, else
  :attr:`SolveStatus.ERROR` (no solution at all); ``kUnboundedOrInfeasible`` (presolve cannot tell which)
  is reported as such.  The gap and best bound come from HiGHS's ``mip_gap`` / ``mip_dual_bound``.
* **CBC**: the first word of CBC's solution file, as decoded by PuLP: ``Optimal`` → optimal;
  ``Stopped ... objective value`` → time limit with a solution; ``Stopped`` without a solution → error;
  ``Infeasible`` / ``Integer infeasible`` → infeasible; ``Unbounded`` → unbounded.  CBC's log is sent to a
  temporary file (nothing reaches the console) and its ``Lower bound:`` line gives the best bound of a MIP
  stopped early, from which the gap is computed.

The gap is always reported with HiGHS's definition, :math:`|z - z_{bound}| / |z|`, whatever the solver
(CBC's own log uses another one).  Solver output is silenced (``msg=False``; the one-off banner HiGHS
writes to the process's standard output when its first instance is created is swallowed too).
"""

from __future__ import annotations

import contextlib
import enum
import math
import os
import re
import sys
import tempfile
import time
import warnings
from dataclasses import dataclass

import pulp

from ..errors import InputError, SolverError, SolverUnavailableError

__all__ = [
    "SolverName",
    "SolveStatus",
    "SolveReport",
    "available_solvers",
    "resolve_solver",
    "solve",
    "new_variable",
    "Budget",
    "MIN_SHARE",
]


class SolverName(enum.Enum):
    """The solvers heatloom can drive through PuLP."""

    HIGHS = "highs"
    CBC = "cbc"


class SolveStatus(enum.Enum):
    """Outcome of one solve.

    ``TIME_LIMIT`` means the solver stopped at its time limit (or another work limit, named in
    :attr:`SolveReport.detail`) holding a feasible solution that is not proven optimal.  ``ERROR`` means
    there is no solution to read: the solver stopped before finding one, or failed.
    """

    OPTIMAL = "optimal"
    TIME_LIMIT = "time limit, feasible solution"
    INFEASIBLE = "infeasible"
    UNBOUNDED = "unbounded"
    INFEASIBLE_OR_UNBOUNDED = "infeasible or unbounded"
    ERROR = "error, no solution"

    @property
    def has_solution(self) -> bool:
        """True when variable values can be read (optimal or stopped with a feasible solution)."""
        return self in (SolveStatus.OPTIMAL, SolveStatus.TIME_LIMIT)


@dataclass(frozen=True)
class SolveReport:
    """What one solve did.

    Attributes
    ----------
    solver : str
        ``"highs"`` or ``"cbc"``.
    status : SolveStatus
    objective : float or None
        Objective of the solution found [model units]; None without a solution.
    gap : float or None
        Relative MIP gap :math:`|z - z_{bound}| / |z|` [-]; 0 for a proven optimum, None when the solver
        did not report a bound (for example an LP stopped early).
    bound : float or None
        Best bound on the objective proven by the solver [model units], when known.
    wall_time : float
        Wall-clock time of the solve call [s].
    time_limit : float
        The limit the solver was given [s].
    problem : str
        What was solved: the ``name`` given to :func:`solve`, else the PuLP problem's name.
    detail : str
        The solver's own words for the outcome (for messages and logs).
    """

    solver: str
    status: SolveStatus
    objective: float | None
    gap: float | None
    bound: float | None
    wall_time: float
    time_limit: float
    problem: str = ""
    detail: str = ""

    @property
    def optimal(self) -> bool:
        return self.status is SolveStatus.OPTIMAL

    @property
    def has_solution(self) -> bool:
        """True when variable values can be read (optimal, or stopped with a feasible solution)."""
        return self.status.has_solution

    @property
    def outcome(self) -> str:
        """The status in words: a solve with no solution says when its limit stopped it (a time limit, not
        a failure).

        Examples
        --------
        >>> SolveReport("highs", SolveStatus.ERROR, None, None, None, 1.0, 1.0, "p", "Time limit reached").outcome
        'stopped at its limit, no solution'
        """
        if self.status is SolveStatus.ERROR and "limit" in self.detail.lower():
            return "stopped at its limit, no solution"
        return self.status.value

    def to_dict(self) -> dict:
        return {"solver": self.solver, "status": self.status.value, "objective": self.objective,
                "gap": self.gap, "bound": self.bound, "wall_time": self.wall_time,
                "time_limit": self.time_limit, "problem": self.problem, "detail": self.detail}


# --------------------------------------------------------------------------------------------- choice

def _highs_available() -> bool:
    try:
        return bool(pulp.HiGHS(msg=False).available())
    except Exception:  # noqa: BLE001 - any failure to load the interface means "not available"
        return False


def _cbc_command(**options):
    """PuLP's bundled CBC; PuLP 3.x deprecates the class (removed in 4.0), so fall back to COIN_CMD."""
    cls = getattr(pulp, "PULP_CBC_CMD", None)
    if cls is not None:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", DeprecationWarning)
            cmd = cls(**options)
        if cmd.available():
            return cmd
    cmd = pulp.COIN_CMD(**options)
    return cmd if cmd.available() else None


def _cbc_available() -> bool:
    try:
        return _cbc_command(msg=False) is not None
    except Exception:  # noqa: BLE001
        return False


_AVAILABLE = {SolverName.HIGHS: _highs_available, SolverName.CBC: _cbc_available}
_PREFERENCE = (SolverName.HIGHS, SolverName.CBC)


def available_solvers() -> tuple[SolverName, ...]:
    """The installed solvers, preferred first.

    Examples
    --------
    >>> SolverName.CBC in available_solvers()
    True
    """
    return tuple(s for s in _PREFERENCE if _AVAILABLE[s]())


def resolve_solver(solver: SolverName | str | None = None) -> SolverName:
    """The solver to use: the one named, or the preferred installed one when ``None``.

    Parameters
    ----------
    solver : SolverName, str or None
        ``"highs"``, ``"cbc"`` (any case), a :class:`SolverName`, or None for HiGHS when installed, else
        CBC.

    Raises
    ------
    InputError
        For an unknown name (the message lists the valid ones).
    SolverUnavailableError
        When the named solver, or with ``None`` every solver, is not installed.

    Examples
    --------
    >>> resolve_solver("CBC")
    <SolverName.CBC: 'cbc'>
    >>> resolve_solver("glpk")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: unknown solver 'glpk'; valid solvers: 'highs', 'cbc'
    """
    valid = ", ".join(repr(s.value) for s in SolverName)
    if solver is None:
        for s in _PREFERENCE:
            if _AVAILABLE[s]():
                return s
        raise SolverUnavailableError(f"no solver is installed; heatloom needs one of {valid} "
                                     "(install 'highspy', or a PuLP with its bundled CBC)")
    if isinstance(solver, SolverName):
        name = solver
    else:
        try:
            name = SolverName(str(solver).strip().lower())
        except ValueError:
            raise InputError(f"unknown solver {solver!r}; valid solvers: {valid}") from None
    if not _AVAILABLE[name]():
        hint = "install the 'highspy' package" if name is SolverName.HIGHS else \
            "install a PuLP that bundles CBC, or CBC itself"
        raise SolverUnavailableError(f"solver {name.value!r} is not installed ({hint}); "
                                     f"installed: {[s.value for s in available_solvers()]}")
    return name


# ---------------------------------------------------------------------------------------------- solve

_HIGHS_BANNER_SILENCED = False


def _silence_highs_banner() -> None:
    """Create the first HiGHS instance with the process's stdout closed.

    HiGHS writes a copyright banner to file descriptor 1 when its first instance is created, before
    any option can turn output off; it never writes it again in the same process.
    """
    global _HIGHS_BANNER_SILENCED
    if _HIGHS_BANNER_SILENCED:
        return
    _HIGHS_BANNER_SILENCED = True
    try:
        import highspy
    except ImportError:
        return
    try:
        sys.stdout.flush()
        saved = os.dup(1)
    except (OSError, ValueError, AttributeError):
        highspy.Highs()
        return
    devnull = os.open(os.devnull, os.O_WRONLY)
    try:
        os.dup2(devnull, 1)
        highspy.Highs()
    finally:
        os.dup2(saved, 1)
        os.close(saved)
        os.close(devnull)


def _gap(objective: float | None, bound: float | None) -> float | None:
    if objective is None or bound is None or not math.isfinite(bound):
        return None
    diff = abs(objective - bound)
    if diff <= 1e-12 * max(1.0, abs(objective)):
        return 0.0
    return diff / abs(objective) if objective != 0 else math.inf


def _objective(problem: pulp.LpProblem) -> float | None:
    """Objective of the current variable values; terms with a zero coefficient never block it."""
    obj = problem.objective
    if obj is None:
        return 0.0
    total = float(obj.constant)
    for var, coef in obj.items():
        if coef == 0:
            continue
        if var.varValue is None:
            return None
        total += coef * var.varValue
    return total


def _is_mip(problem: pulp.LpProblem) -> bool:
    return any(v.cat == pulp.LpInteger for v in problem.variables())


def _solve_highs(problem: pulp.LpProblem, time_limit: float, threads: int | None,
                 absolute_gap: float | None) -> tuple[SolveStatus, float | None, float | None, str]:
    import highspy

    _silence_highs_banner()
    cmd = pulp.HiGHS(msg=False, timeLimit=time_limit, threads=threads, gapAbs=absolute_gap)
    try:
        problem.solve(cmd)
    except KeyError:
        pass  # PuLP's table lacks some newer HiGHS statuses; they are read directly below
    except pulp.PulpSolverError as exc:
        raise SolverError(f"HiGHS failed on problem '{problem.name}': {exc}") from exc
    h = getattr(problem, "solverModel", None)
    if h is None:
        return SolveStatus.ERROR, None, None, "HiGHS did not run"
    ms = h.getModelStatus()
    info = h.getInfo()
    detail = h.modelStatusToString(ms)
    status_type = highspy.HighsModelStatus
    has_primal = info.primal_solution_status == highspy.SolutionStatus.kSolutionStatusFeasible
    mip = _is_mip(problem)
    if ms == status_type.kOptimal:
        status = SolveStatus.OPTIMAL
    elif ms == status_type.kInfeasible:
        status = SolveStatus.INFEASIBLE
    elif ms == status_type.kUnbounded:
        status = SolveStatus.UNBOUNDED
    elif ms == status_type.kUnboundedOrInfeasible:
        status = SolveStatus.INFEASIBLE_OR_UNBOUNDED
    elif ms == status_type.kModelEmpty:
        status = SolveStatus.OPTIMAL  # nothing to decide: every variable fixed by its bounds
    elif has_primal and ms in (status_type.kTimeLimit, status_type.kIterationLimit,
                               status_type.kSolutionLimit, status_type.kInterrupt,
                               status_type.kObjectiveBound, status_type.kObjectiveTarget,
                               getattr(status_type, "kHighsInterrupt", status_type.kInterrupt),
                               getattr(status_type, "kMemoryLimit", status_type.kInterrupt)):
        status = SolveStatus.TIME_LIMIT
    else:
        status = SolveStatus.ERROR
    bound = float(info.mip_dual_bound) if mip and status.has_solution else None
    return status, bound, None if not mip else float(info.mip_gap), detail


_CBC_BOUND = re.compile(r"^(?:Lower|Upper) bound:\s*(\S+)", re.MULTILINE)
_CBC_RESULT = re.compile(r"^Result - (.+)$", re.MULTILINE)


def _solve_cbc(problem: pulp.LpProblem, time_limit: float, threads: int | None,
               absolute_gap: float | None) -> tuple[SolveStatus, float | None, float | None, str]:
    fd, log_path = tempfile.mkstemp(prefix="heatloom_cbc_", suffix=".log")
    os.close(fd)
    log = ""
    try:
        cmd = _cbc_command(msg=False, timeLimit=time_limit, threads=threads, gapAbs=absolute_gap,
                           logPath=log_path)
        if cmd is None:
            raise SolverUnavailableError("solver 'cbc' is not installed")
        try:
            problem.solve(cmd)
        except pulp.PulpSolverError as exc:
            raise SolverError(f"CBC failed on problem '{problem.name}': {exc}") from exc
        with contextlib.suppress(OSError):
            with open(log_path, encoding="utf-8", errors="replace") as f:
                log = f.read()
    finally:
        with contextlib.suppress(OSError):
            os.remove(log_path)
    result = _CBC_RESULT.search(log)
    detail = result.group(1).strip() if result else pulp.LpStatus.get(problem.status, "?")
    st, sol = problem.status, problem.sol_status
    if st == pulp.LpStatusOptimal and sol == pulp.LpSolutionOptimal:
        status = SolveStatus.OPTIMAL
    elif st == pulp.LpStatusOptimal and sol == pulp.LpSolutionIntegerFeasible:
        status = SolveStatus.TIME_LIMIT
    elif st == pulp.LpStatusInfeasible:
        status = SolveStatus.INFEASIBLE
    elif st == pulp.LpStatusUnbounded:
        status = SolveStatus.UNBOUNDED
    else:
        status = SolveStatus.ERROR
    bound = None
    if status is SolveStatus.TIME_LIMIT:
        m = _CBC_BOUND.search(log)
        if m:
            with contextlib.suppress(ValueError):
                bound = float(m.group(1))
    return status, bound, None, detail


def solve(problem: pulp.LpProblem, solver: SolverName | str | None = None, *, time_limit: float = 60.0,
          threads: int | None = None, absolute_gap: float | None = None, check: bool = True,
          name: str | None = None) -> SolveReport:
    """Solve a PuLP problem with a time limit and report what happened.

    Parameters
    ----------
    problem : pulp.LpProblem
        The model; its variables hold the solution afterwards (when there is one).
    solver : SolverName, str or None
        See :func:`resolve_solver`.
    time_limit : float
        Wall-clock limit of the solve [s], > 0.
    threads : int, optional
        Threads the solver may use [-]; solver default when None.
    absolute_gap : float, optional
        Stop a MIP once the incumbent is within this of the best bound [model units] and call it optimal;
        solver default when None.  With an integer-valued objective any value below 1 still proves the
        optimum.
    check : bool
        When True (default) a solve that ends with no solution at all (:attr:`SolveStatus.ERROR`) raises
        :class:`SolverError`; infeasible and unbounded outcomes are returned for the caller to judge.
    name : str, optional
        Label of the solve in the report and messages; the problem's name when None.

    Returns
    -------
    SolveReport

    Raises
    ------
    InputError
        For an unknown solver name or a time limit that is not a positive number.
    SolverUnavailableError
        When the solver asked for is not installed.
    SolverError
        When the solver fails, or (with ``check``) stops without any solution.

    Examples
    --------
    >>> p = pulp.LpProblem("example", pulp.LpMinimize)
    >>> x = p.add_variable("x", lowBound=0)
    >>> p += 2 * x
    >>> p += x >= 3
    >>> r = solve(p, "cbc", time_limit=10)
    >>> r.status, r.objective, r.gap
    (<SolveStatus.OPTIMAL: 'optimal'>, 6.0, 0.0)
    """
    try:
        limit = float(time_limit)
    except (TypeError, ValueError):
        raise InputError(f"time limit must be a number of seconds > 0, got {time_limit!r}") from None
    if not (limit > 0) or not math.isfinite(limit):
        raise InputError(f"time limit must be a finite number of seconds > 0, got {time_limit!r}")
    chosen = resolve_solver(solver)
    label = problem.name if name is None else str(name)
    start = time.perf_counter()
    if chosen is SolverName.HIGHS:
        status, bound, highs_gap, detail = _solve_highs(problem, limit, threads, absolute_gap)
    else:
        status, bound, highs_gap, detail = _solve_cbc(problem, limit, threads, absolute_gap)
    wall = time.perf_counter() - start
    objective = _objective(problem) if status.has_solution else None
    if status is SolveStatus.OPTIMAL and bound is None:   # an LP, or a MIP whose solver tells no bound
        bound = objective
    if status is SolveStatus.OPTIMAL:
        gap = 0.0 if not _is_mip(problem) else (_gap(objective, bound) or 0.0)
        if highs_gap is not None and math.isfinite(highs_gap):
            gap = highs_gap
    else:
        gap = _gap(objective, bound) if status is SolveStatus.TIME_LIMIT else None
    report = SolveReport(chosen.value, status, objective, gap, bound, wall, limit, label, detail)
    if check and status is SolveStatus.ERROR:
        raise SolverError(f"{chosen.value} stopped without any solution of '{label}' "
                          f"({detail}; time limit {limit:g} s): raise the time limit or simplify the problem")
    return report


def new_variable(problem: pulp.LpProblem, name: str, low=None, up=None, cat=pulp.LpContinuous) -> pulp.LpVariable:
    """A variable attached to ``problem``, the way the installed PuLP prefers.

    PuLP 3.x deprecates building ``LpVariable`` objects on their own (PuLP 4 attaches variables to their
    model); older versions have no ``add_variable``.
    """
    if hasattr(problem, "add_variable"):
        return problem.add_variable(name, low, up, cat)
    return pulp.LpVariable(name, low, up, cat)  # pragma: no cover - older PuLP


MIN_SHARE = 0.2
"""Shortest share worth starting an optional solve with [s] (:meth:`Budget.share_or_none`); below it the solve
is skipped, and the notes say so."""


class Budget:
    """One wall-clock budget shared by the solves of a run (MER design, TAC search).

    Every solve asks for its share of what is left (:meth:`share`, or :meth:`share_or_none` for a solve the
    run can do without); a part of the run that holds several solves takes a sub-budget (:meth:`part`) that
    draws on the same clock.  Every solve's report is kept in :attr:`reports`; those that stop at their share
    are collected in :attr:`hits` and the skipped or failed ones in :attr:`notes` (all shared with every part),
    so the run can say which ones did (:meth:`summary`).

    Parameters
    ----------
    total : float
        Wall-clock time of the whole run [s], > 0.
    parent : Budget, optional
        The budget this one is a part of (internal; use :meth:`part`).
    clock : callable, optional
        Monotonic clock [s]; ``time.monotonic`` by default (a test can give a fake one).

    Examples
    --------
    >>> b = Budget(60.0)
    >>> 0 < b.share(0.5) <= 30.0
    True
    >>> p = b.part(0.25)
    >>> p.total <= 15.0, p.hits is b.hits
    (True, True)
    >>> now = [0.0]
    >>> b = Budget(100.0, clock=lambda: now[0]); now[0] = 99.9
    >>> b.share_or_none(1.0) is None, round(b.remaining, 6)     # 0.1 s left: not worth a solve
    (True, 0.1)
    """

    clock = staticmethod(time.monotonic)
    """The clock every budget reads [s] (a class attribute, so a test can replace it)."""

    def __init__(self, total: float, parent: Budget | None = None, *, clock=None) -> None:
        try:
            total = float(total)
        except (TypeError, ValueError):
            raise InputError(f"time limit must be a number of seconds > 0, got {total!r}") from None
        if not (total > 0) or not math.isfinite(total):
            raise InputError(f"time limit must be a finite number of seconds > 0, got {total!r}")
        if clock is not None:
            self.clock = clock
        elif parent is not None:
            self.clock = parent.clock
        self.total = total
        self.start = self.clock()
        self.root = parent.root if parent is not None else self
        self.hits: list[SolveReport] = parent.hits if parent is not None else []
        self.reports: list[SolveReport] = parent.reports if parent is not None else []
        self.notes: list[str] = parent.notes if parent is not None else []

    @property
    def remaining(self) -> float:
        """Time left of this budget [s], never below 0."""
        return max(0.0, self.total - (self.clock() - self.start))

    @property
    def elapsed(self) -> float:
        """Time used so far [s]."""
        return self.clock() - self.start

    @property
    def deadline(self) -> float:
        """Clock reading at which this budget is spent [s]."""
        return self.start + self.total

    @property
    def floor(self) -> float:
        """Shortest limit worth giving a solve [s]: 1 % of the whole run, at least 0.05 s, at most 1 s."""
        return min(1.0, max(0.05, 0.01 * self.root.total))

    @property
    def exhausted(self) -> bool:
        """True when less than :attr:`floor` is left: the caller should use a method without a solver."""
        return self.remaining < self.floor

    def share(self, fraction: float = 1.0) -> float:
        """Time limit of the next solve: ``fraction`` of what is left [s], at least :attr:`floor`.

        Parameters
        ----------
        fraction : float
            Share of the remaining time [-], in (0, 1].
        """
        return max(self.floor, min(1.0, max(fraction, 0.0)) * self.remaining)

    def share_or_none(self, fraction: float, cap: float | None = None) -> float | None:
        """``fraction`` of the time left, at most ``cap`` [s]; None when that is under :data:`MIN_SHARE`
        (a solve the run can do without is then skipped).

        Parameters
        ----------
        fraction : float
            Part of the remaining time this solve may use [-], in (0, 1].
        cap : float, optional
            Longest share whatever remains [s].
        """
        limit = fraction * self.remaining
        if cap is not None:
            limit = min(limit, cap)
        return limit if limit >= MIN_SHARE else None

    def part(self, fraction: float) -> Budget:
        """A sub-budget of ``fraction`` of what is left [-] (at least twice :attr:`floor` while that is
        left), on the same clock and lists of reports, hits and notes."""
        left = self.remaining
        return Budget(max(min(1.0, fraction) * left, min(2 * self.floor, left), 1e-9), parent=self)

    def record(self, report: SolveReport) -> SolveReport:
        """Keep a solve's report, and note it when it stopped at its limit (with or without a solution)."""
        self.reports.append(report)
        if report.status in (SolveStatus.TIME_LIMIT, SolveStatus.ERROR):
            self.hits.append(report)
        return report

    def solve(self, problem, solver, *, fraction: float, cap: float | None, name: str) -> SolveReport | None:
        """Solve a PuLP problem within its share (:meth:`share_or_none`); None, with a note, when skipped or
        when the solver fails.  A report without a solution is returned for the caller to fall back on: it
        never raises for a solve that stops without one."""
        limit = self.share_or_none(fraction, cap)
        if limit is None:
            self.notes.append(f"'{name}' skipped: the time limit of {self.root.total:g} s was all but spent")
            return None
        try:
            report = solve(problem, solver, time_limit=limit, name=name, check=False)
        except SolverError as exc:
            self.notes.append(f"'{name}' failed ({exc}); the run went on without it")
            return None
        return self.record(report)

    def hits_note(self) -> str:
        """One sentence naming the solves that stopped at their share ("" when none did)."""
        if not self.hits:
            return ""
        parts = [f"'{r.problem}' ({r.time_limit:.3g} s, "
                 + ("best solution kept" if r.status is SolveStatus.TIME_LIMIT else f"no solution: {r.detail}")
                 + ")" for r in self.hits]
        return (f"time budget {self.root.total:g} s for the whole run; solves that stopped at their share: "
                + ", ".join(parts))

    def summary(self) -> list[str]:
        """Notes for the result: skipped or failed solves, then those that stopped at their share."""
        return list(self.notes) + ([self.hits_note()] if self.hits else [])
