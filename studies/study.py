"""The whole study behind ``heatloom report``: every step that applies, each result or why it is missing.

:func:`compute_study` runs, in order, the energy targets, the area, units, shells and cost targets, the
ΔTmin sweep, the maximum-energy-recovery design, the lowest-total-annual-cost design (when asked for)
and, when an existing network is given, its retrofit diagnosis and ranked retrofit options.  A step that
cannot run (a missing film coefficient, a part of heatloom not installed, a solver failure) does not stop
the study: its result is a :class:`NotComputed` that says why, and the steps that need it are not run
either (:func:`run_step`).

:class:`Study` gathers the results with the assumptions and cautions of the run (:meth:`Study.assumption_rows`,
:meth:`Study.cautions`); :class:`RunSettings` holds the settings of the run.  The writers in
:mod:`heatloom.io` turn a Study into an HTML report (:func:`heatloom.io.report.render_report`) and a
workbook (:func:`heatloom.io.workbook.study_sheets`); nothing here reads or writes a file.

Every result is a screening estimate: designs must be checked against local codes and standards by
qualified, licensed engineers (:data:`heatloom.defaults.SAFETY_TEXT`).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

from .. import defaults
from ..errors import HeatloomError
from ..model import StreamTable, Utility

__all__ = ["NotComputed", "RunSettings", "Study", "run_step", "compute_study"]


# --------------------------------------------------------------------------------------------------
# the study


@dataclass(frozen=True)
class NotComputed:
    """A result that is missing from a study, and why.

    Attributes
    ----------
    reason : str
        In plain words, for the report.
    error : str
        Name of the exception that stopped the step (``InputError``, ``InfeasibleError``...), empty when
        the step was not run or could not start.

    Examples
    --------
    >>> NotComputed("no ΔTmin range was given").to_dict()
    {'not_computed': 'no ΔTmin range was given', 'error': None}
    """

    reason: str
    error: str = ""

    def to_dict(self) -> dict:
        return {"not_computed": self.reason, "error": self.error or None}


@dataclass(frozen=True)
class RunSettings:
    """Settings of a study run, stated in the report.

    Attributes
    ----------
    sweep_range : (float, float) or None
        ΔTmin range of the sweep [K]; None when no sweep was asked for.
    sweep_step : float or None
        [K]
    sweep_note : str
        How the range was chosen.
    capital_basis : str
        What the target area is shared among for the capital cost target.
    solver : str or None
        MILP solver of the designs ("highs", "cbc"; None: the preferred installed one).
    time_limit : float
        Wall-clock budget of the maximum-energy-recovery design, shared by its solves [s].
    least_utility_flow : bool
        Keep non-isothermal utilities of that design at their least flow and design return
        (:func:`heatloom.network.design_mer`'s ``least_utility_flow``).
    tac : bool
        Whether the lowest-total-annual-cost design was asked for.
    emat : float or None
        Exchanger minimum approach temperature of that design [K].
    tac_time_limit : float or None
        Wall-clock limit of that design [s].
    tac_seed : int
    command : str
        The command line that made the report (for the record).
    """

    sweep_range: tuple[float, float] | None = None
    sweep_step: float | None = None
    sweep_note: str = "given"
    capital_basis: str = "units_mer"
    solver: str | None = None
    time_limit: float = 60.0
    least_utility_flow: bool = False
    tac: bool = False
    emat: float | None = None
    tac_time_limit: float | None = None
    tac_seed: int = 0
    command: str = ""


def _not_run(what: str) -> NotComputed:
    return NotComputed(f"{what} was not run")


def _missing_h(streams: StreamTable, utilities: Sequence[Utility]) -> list[str]:
    out = [f"stream '{s.name}'" for s in streams if any(g.film_coefficient is None for g in s.segments)]
    return out + [f"utility '{u.name}'" for u in utilities if u.film_coefficient is None]


@dataclass(frozen=True, eq=False)
class Study:
    """Everything one study run computed, for the report and the workbook.

    Attributes
    ----------
    title : str
    streams : StreamTable
        As read, in canonical units.
    dt_min : float
        [K]
    dt_min_note : str
        How ΔTmin was chosen ("given", or the default and how to set it).
    targets : Targets or NotComputed
    utilities : tuple of Utility or None
        The utility table given; None when none was (ideal utilities are then assumed).
    costs : heatloom.model.CostSettings
        Cost laws in force (given or the package defaults).
    costs_source : str or None
        File the costs came from; None for the package defaults.
    default_film_coefficient : float or None
        [kW/(m²·K)] assumed where a stream or utility has none.
    area : AreaTargets or NotComputed
    sweep : Sweep or NotComputed
    design : Network or NotComputed
        Maximum energy recovery, fewest units.
    tac : Network or NotComputed
        Lowest total annual cost found.
    diagnosis : Diagnosis, NotComputed or None
        None when no existing network was given.
    retrofit : heatloom.retrofit.options.Retrofit, NotComputed or None
        Ranked, costed retrofit options of the existing network; None when no existing network was given.
    existing : ExistingNetwork or None
    sources : dict
        Role ("stream table", "utilities", "costs", "existing network") → file.
    settings : RunSettings
    safety_note : str
        The command line's one-line caution.
    notes : tuple of str
        Other facts of the run (how a case folder was read, ...).
    created : str
        Date and time of the run (ISO 8601).
    version : str
        heatloom version.

    Examples
    --------
    Energy targets only, of two invented streams:

    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [60, 120], [2.0, 2.5])
    >>> study = Study("demo", s, 10.0, "given", target(s, 10.0))
    >>> study.assumption_rows()[0][:2], study.design.reason
    (('ΔTmin', '10 K, the minimum approach of every match and of the targets'), 'the maximum-energy-recovery design was not run')
    """

    title: str
    streams: StreamTable
    dt_min: float
    dt_min_note: str
    targets: object
    utilities: tuple[Utility, ...] | None = None
    costs: object = None
    costs_source: str | None = None
    default_film_coefficient: float | None = None
    area: object = field(default_factory=lambda: _not_run("the area target"))
    sweep: object = field(default_factory=lambda: _not_run("the ΔTmin sweep"))
    design: object = field(default_factory=lambda: _not_run("the maximum-energy-recovery design"))
    tac: object = field(default_factory=lambda: _not_run("the lowest-total-annual-cost design"))
    diagnosis: object = None
    retrofit: object = None
    existing: object = None
    sources: dict = field(default_factory=dict)
    settings: RunSettings = field(default_factory=RunSettings)
    safety_note: str = ""
    notes: tuple[str, ...] = ()
    created: str = ""
    version: str = ""

    def __post_init__(self) -> None:
        if self.costs is None:
            from ..model.costs import CostSettings

            object.__setattr__(self, "costs", CostSettings())

    @property
    def currency(self) -> str:
        return self.costs.currency

    @property
    def utilities_in_force(self) -> tuple[Utility, ...]:
        """The utilities given, else the two assumed by design (:func:`heatloom.pinch.utilities.ideal_utilities`)."""
        if self.utilities is not None:
            return tuple(self.utilities)
        from ..pinch.utilities import ideal_utilities

        return tuple(ideal_utilities(self.streams, self.dt_min))

    def missing_film_coefficients(self) -> list[str]:
        """Streams and utilities in force without a film coefficient."""
        return _missing_h(self.streams, self.utilities_in_force)

    def assumption_rows(self) -> list[tuple[str, str, str]]:
        """(assumption, value with units, basis) of every assumption and default of the run."""
        cur = self.currency
        s = self.settings
        rows = [("ΔTmin", f"{self.dt_min:g} K, the minimum approach of every match and of the targets",
                 self.dt_min_note)]
        util = "; ".join(
            f"{u.name} ({u.kind.value}) {u.supply_temperature:g} → {u.target_temperature:g} °C, "
            f"{u.cost:g} {cur}/(kW·year)"
            + (f", h {u.film_coefficient:g} kW/(m²·K)" if u.film_coefficient is not None else ", no h")
            for u in self.utilities_in_force)
        if self.utilities is not None:
            rows.append(("utilities", util, f"given ({self.sources.get('utilities', 'utility table')})"))
        else:
            rows.append(("utilities", "energy targets against ideal utilities (hotter and colder than every "
                         f"process temperature); designs and costs against {util}",
                         "assumed: no utility table given (package defaults, common practice); give --utilities"))
        rows.append(("cost basis", self.costs.describe(),
                     f"given ({self.costs_source})" if self.costs_source else "package defaults (no costs file)"))
        missing = self.missing_film_coefficients()
        h = self.default_film_coefficient
        if not missing:
            rows.append(("film coefficients", "given for every stream and utility (column h, kW/(m²·K))", "given"))
        elif h is not None:
            rows.append(("film coefficients", f"{h:g} kW/(m²·K) assumed for {', '.join(missing)}",
                         "assumed (--default-h)"))
        else:
            rows.append(("film coefficients", f"missing for {', '.join(missing)}: no areas or costs",
                         "not given (add an h column, or --default-h)"))
        rows.append(("heat transfer", "counter-current, clean surfaces (no fouling allowance, no design margin), "
                     "U from 1/U = 1/h_hot + 1/h_cold", "common practice for targets and screening designs"))
        if s.sweep_range is not None:
            basis = {"units_mer": "the minimum units for maximum energy recovery", "units": "the overall minimum "
                     "units", "shells": "the minimum 1-2 shells"}.get(s.capital_basis, s.capital_basis)
            rows.append(("ΔTmin sweep", f"{s.sweep_range[0]:g} to {s.sweep_range[1]:g} K by {s.sweep_step:g} K; "
                         f"capital target: the target area shared among {basis}", s.sweep_note))
        rows.append(("maximum-energy-recovery design",
                     f"solver {s.solver or 'preferred installed (HiGHS, else CBC)'}, {s.time_limit:g} s per design (one budget for all its solves)"
                     + ("; hot oil and cooling water kept at their least flow and design return"
                        if s.least_utility_flow else ""),
                     "default" if s.solver is None and not s.least_utility_flow else "given"))
        if s.tac:
            rows.append(("lowest-total-annual-cost design",
                         f"EMAT {s.emat:g} K at both ends of every unit, {s.tac_time_limit:g} s for the whole "
                         f"search, seed {s.tac_seed}", "given (--tac)"))
        else:
            rows.append(("lowest-total-annual-cost design", "not run", "add --tac to run it"))
        rows.append(("existing network", self.sources.get("existing network", "none given"),
                     "given" if "existing network" in self.sources else "retrofit diagnosis not run"))
        r = self.retrofit
        if r is not None and not isinstance(r, NotComputed):
            rows.append(("retrofit options", f"every unit keeps at least {r.min_approach:g} K; NPV at "
                         f"{100 * r.costs.interest_rate:g} % over {r.costs.years:g} years; "
                         + r.retrofit_costs.describe(r.costs.currency),
                         f"given ({self.costs_source})" if self.costs_source else "package defaults (no costs file)"))
        return rows

    def cautions(self) -> list[str]:
        """The cautions of this run: the general one first, then those its inputs and results call for."""
        out = [defaults.SAFETY_TEXT]
        if self.safety_note:
            out.append(self.safety_note)
        out.append(f"ΔTmin {self.dt_min:g} K applies to every match: check that it suits the fluids and exchanger "
                   "types (gases, fouling services and refrigeration usually need other values).")
        if any(len(s.segments) > 1 for s in self.streams):
            out.append("Streams of several segments (phase change, varying heat capacity) are only as good as "
                       "their segmentation: a temperature cross hidden by averaged data can make a real exchanger "
                       "fail to perform.")
        if self.utilities is None:
            out.append("No utility table was given: the targets assume ideal utilities and the designs assumed "
                       "ones; the site's real steam levels and cooling water may be unable to serve them.")
        missing = self.missing_film_coefficients()
        if missing and self.default_film_coefficient is not None:
            out.append(f"A film coefficient of {self.default_film_coefficient:g} kW/(m²·K) was assumed for "
                       f"{', '.join(missing)}: every area and capital cost depends on it; replace it with values "
                       "for the real fluids.")
        out.append("Areas are for clean surfaces in pure counter-current flow: real exchangers need a fouling "
                   "allowance and a design margin.")
        if not isinstance(self.tac, NotComputed):
            out.append(f"The lowest-cost network keeps only {self.settings.emat:g} K at the ends of its units "
                       "(EMAT): such close approaches need exchanger types and controls that can hold them.")
        if self.diagnosis is not None and not isinstance(self.diagnosis, NotComputed):
            for p in self.diagnosis.simulation.problems:
                out.append(f"Existing network as simulated: {p}")
        if self.retrofit is not None and not isinstance(self.retrofit, NotComputed):
            out.append("Retrofit options are simulated at fixed areas with the film coefficients given: before "
                       "any change is made, check the plant's data sheets, pressure drops, pump and control "
                       "margins, materials and fouling, and the cost estimates against vendor quotes.")
        return out


# --------------------------------------------------------------------------------------------------
# the workflow


def _failed(what: str, e: BaseException) -> str:
    if isinstance(e, ImportError):
        return f"{what} is not available in this installation of heatloom ({e})"
    if isinstance(e, HeatloomError):
        return str(e)
    return f"{what} failed unexpectedly ({type(e).__name__}: {e}); please report it with the input files"


def run_step(fn: Callable[[], object], what: str, needs: Sequence[tuple[str, object]] = ()):
    """``fn()``, or a :class:`NotComputed` saying why not: what one step gives a study.

    The step is not run when one of the results it needs is a NotComputed; when it raises, the exception
    becomes the reason (a heatloom error as it reads, a part of heatloom that is not installed, or an
    unexpected failure with a request to report it).

    Parameters
    ----------
    fn : callable
        The step, without arguments.
    what : str
        What the step computes, for the reason.
    needs : sequence of (str, object)
        (name, result) of the earlier results the step needs.

    Examples
    --------
    >>> run_step(lambda: 1 / 0, "the division")
    NotComputed(reason='the division failed unexpectedly (ZeroDivisionError: division by zero); please report it with the input files', error='ZeroDivisionError')
    >>> run_step(lambda: 2, "the sum", [("energy targets", NotComputed("no streams"))]).reason
    'needs the energy targets, which were not computed (no streams)'
    """
    for name, value in needs:
        if isinstance(value, NotComputed):
            return NotComputed(f"needs the {name}, which were not computed ({value.reason})")
    try:
        return fn()
    except Exception as e:  # noqa: BLE001 - one step failing must not cost the whole study
        return NotComputed(_failed(what, e), type(e).__name__)


def compute_study(streams: StreamTable, dt_min: float, utilities: Sequence[Utility] | None = None, costs=None, *,
                  existing=None, retrofit_costs=None, default_film_coefficient: float | None = None,
                  settings: RunSettings | None = None, progress: Callable[[str], None] | None = None,
                  rules=None, **fields) -> Study:
    """Run every step of a study and gather the results (each a result or a NotComputed).

    Parameters
    ----------
    streams : heatloom.model.StreamTable
    dt_min : float
        Minimum approach temperature of the targets and the designs [K].
    utilities : sequence of Utility, optional
        Default: ideal utilities for the targets, the package's assumed ones for designs and costs.
    costs : heatloom.model.costs.CostSettings, optional
        Default: the package's illustrative cost laws.
    existing : heatloom.retrofit.existing.ExistingNetwork, optional
        An existing network to diagnose and to find ranked, costed retrofit options for.
    retrofit_costs : heatloom.model.RetrofitCosts, optional
        Cost laws of the retrofit changes (default: the package's illustrative ones).
    default_film_coefficient : float, optional
        Assumed where a stream or utility has no film coefficient [kW/(m²·K)].
    settings : RunSettings, optional
        Sweep range, solver, time limits, the lowest-total-annual-cost design (default :class:`RunSettings`).
    progress : callable, optional
        Called as ``progress(step_name)`` before each step.
    rules : heatloom.model.MatchRules, optional
        Forbidden and required matches both network designs keep (the stream table's ``forbid`` and
        ``require`` columns).
    **fields
        Passed to :class:`Study` (title, sources, notes, dt_min_note, ...).

    Returns
    -------
    Study

    Examples
    --------
    Two invented streams without film coefficients: energy targets, but no areas or costs.

    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [60, 120], [2.0, 2.5])
    >>> study = compute_study(s, 10.0, progress=print)
    energy targets
    area and cost targets
    ΔTmin sweep
    network for maximum energy recovery
    network of lowest total annual cost
    >>> study.targets.hot_utility, study.area.reason.endswith("or give --default-h")
    (45.0, True)
    """
    from ..model.costs import CostSettings

    settings = settings or RunSettings()
    fields.setdefault("title", "Heat-integration study")
    fields.setdefault("dt_min_note", "given")
    costs_in_force = costs or CostSettings()
    tell = progress or (lambda name: None)
    h = default_film_coefficient

    # each step imports what it runs: a part of heatloom that is missing costs only its own section
    tell("energy targets")

    def targets():
        from ..pinch import target

        return target(streams, dt_min, utilities)

    t = run_step(targets, "targeting")

    tell("area and cost targets")

    def area():
        from ..pinch.area import area_targets

        return area_targets(t, costs_in_force, default_film_coefficient=h, capital_basis=settings.capital_basis)

    a = run_step(area, "the area and cost targets (heatloom.pinch.area)", [("energy targets", t)])
    if isinstance(a, NotComputed) and "film coefficient" in a.reason and h is None:
        a = NotComputed(a.reason + "; or give --default-h")

    tell("ΔTmin sweep")

    def sweep():
        from .sweep import sweep as run_sweep

        return run_sweep(streams, settings.sweep_range, utilities, costs_in_force, step=settings.sweep_step,
                         workers=1, default_film_coefficient=h, capital_basis=settings.capital_basis)

    w = run_step(sweep, "the ΔTmin sweep (heatloom.studies.sweep)") if settings.sweep_range is not None else \
        NotComputed("no ΔTmin range was given")

    tell("network for maximum energy recovery")
    matches = {"forbidden": rules.forbidden, "required": rules.required} if rules else {}

    def mer():
        from ..network.design import design_mer

        return design_mer(streams, dt_min, utilities, costs=costs_in_force, solver=settings.solver,
                          time_limit=settings.time_limit, default_film_coefficient=h,
                          least_utility_flow=settings.least_utility_flow, **matches)

    design = run_step(mer, "the maximum-energy-recovery design", [("energy targets", t)])

    tell("network of lowest total annual cost")
    if settings.tac:
        def tac():
            from ..network.tac.search import design_tac

            return design_tac(streams, utilities, costs=costs_in_force, emat=settings.emat,
                              time_limit=settings.tac_time_limit, seed=settings.tac_seed, solver=settings.solver,
                              default_film_coefficient=h, **matches)

        tac_net = run_step(tac, "the lowest-total-annual-cost design (heatloom.network.tac.search)")
    else:
        tac_net = NotComputed("not asked for: add --tac to search for the network of lowest total annual cost "
                              "(a heuristic search of up to --tac-time-limit, "
                              f"{settings.tac_time_limit or defaults.TAC_TIME_LIMIT:g} s by default)")

    diagnosis = retrofit = None
    if existing is not None:
        tell("retrofit diagnosis")

        def diagnose():
            from ..retrofit.diagnose import diagnose as run

            return run(existing, dt_min, default_film_coefficient=h)

        diagnosis = run_step(diagnose, "the retrofit diagnosis (heatloom.retrofit.diagnose)")
        tell("retrofit options")

        def options():
            from ..retrofit.options import retrofit_options

            return retrofit_options(existing, dt_min, costs=costs_in_force, retrofit_costs=retrofit_costs,
                                    default_film_coefficient=h, solver=settings.solver)

        retrofit = run_step(options, "the retrofit options (heatloom.retrofit.options)")
    return Study(streams=streams, dt_min=dt_min, targets=t, utilities=None if utilities is None else tuple(utilities),
                 costs=costs_in_force, default_film_coefficient=h, area=a, sweep=w, design=design, tac=tac_net,
                 diagnosis=diagnosis, retrofit=retrofit, existing=existing, settings=settings,
                 safety_note=defaults.SAFETY_NOTE, **fields)
