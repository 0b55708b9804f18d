"""``heatloom report``: the whole study of a stream table or a case folder, as an HTML report and a workbook.

One command runs every step that applies (:func:`heatloom.studies.study.compute_study`): energy targets,
area/units/shells/cost targets, the ΔTmin sweep, the maximum-energy-recovery design, the
lowest-total-annual-cost design (with ``--tac``) and, when an existing network is given, its retrofit
diagnosis and options; then it writes ``report.html`` (:func:`heatloom.io.report.render_report`;
self-contained: inline SVG figures, no script) and ``study.xlsx`` (:func:`heatloom.io.workbook.study_sheets`,
one sheet per result).  A step that cannot run (a missing film coefficient, a part of heatloom not
installed, a solver failure) does not stop the report: its section says what was not computed and why.
A site folder gives the site report instead (:func:`run_site`).  This module only reads the options and
the input files, calls the study and hands the results to the writers.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from .. import defaults
from ..errors import InputError
from .common import (
    CASE_ROLES,
    EXIT_INFEASIBLE,
    EXIT_INPUT,
    EXIT_OK,
    EXIT_UNEXPECTED,
    ProgressBars,
    add_shared,
    add_table_options,
    case_candidates,
    check_cost_target_inputs,
    dt_min_of,
    find_case_files,
    match_rules,
    note,
    positive,
    positive_or_zero,
    price_hours,
    print_json,
    read_cost_settings,
    read_scenario_inputs,
    settle_currency,
)

__all__ = ["register", "run", "run_site", "is_site_folder", "find_case_files", "site_scenarios", "OUTPUT_FILES",
           "default_out_folder"]

OUTPUT_FILES = ("report.html", "study.xlsx")
"""Files written into the output folder."""

ROLES = CASE_ROLES
"""Keyword in a case folder's file name → the role of that file (the finder shared with ``retrofit``)."""

EPILOG_REPORT = """\
examples:
  heatloom report case_studies/solvent_recovery             # a case folder; writes ./solvent_recovery_report/
  heatloom report streams.csv --dtmin 15 --utilities utilities.csv --costs costs.json --out study
  heatloom report plant_case/ --default-h 0.5 --tac --force  # assume h where missing, add the TAC design

A case folder holds the stream table (a file with 'streams' in its name, CSV or .xlsx) and optionally
the utilities ('utilities'), the costs ('costs': JSON, YAML or .xlsx) and an existing network ('network')
for the retrofit diagnosis and options; options given on the command line take precedence. Without --out
the report goes into a folder '<case name>_report' in the current directory (the case folder's name, or
the stream table's name without its extension), never into the case folder itself; the command says so
on stderr. --force lets it replace an earlier report there.

A site folder (several files with 'streams' in their names, one per zone, e.g. 'evaporation_streams.csv',
and/or a mains table with 'mains' in its name) gives a site report: the targets of each zone, the site
profiles, the balance of every main and the saving against zone-by-zone targeting (--dtmin, --site-dt).
With a prices table ('prices', see heatloom scenarios --help) it adds the price scenarios: each zone's
optimum ΔTmin under every scenario (with the folder's 'utilities' and 'costs', --default-h, --hours-per-year
and --sweep for the ΔTmin range).
"""


def _range(text: str) -> tuple[float, float]:
    parts = str(text).split(":")
    try:
        lo, hi = (float(p) for p in parts)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected LO:HI in kelvin, e.g. 5:40, got {text!r}") from None
    if not (0 < lo < hi < float("inf")):
        raise argparse.ArgumentTypeError(f"need 0 < LO < HI (finite, kelvin), got {text!r}")
    return lo, hi


def register(sub) -> None:
    p = sub.add_parser("report", help="the whole study as an HTML report and a workbook",
                       description="Targets, ΔTmin sweep, network design and (with an existing network) retrofit "
                                   "diagnosis of a stream table or a case folder, written as one self-contained "
                                   "HTML report (report.html) and an Excel workbook (study.xlsx).",
                       epilog=EPILOG_REPORT, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("path", metavar="PATH", help="stream table (CSV or .xlsx) or a case folder")
    add_shared(p)
    add_table_options(p)
    p.add_argument("--costs", metavar="FILE", help="cost laws and annualisation (JSON, YAML or .xlsx)")
    p.add_argument("--network", metavar="FILE", help="existing network (CSV or .xlsx) for the retrofit section")
    p.add_argument("--default-h", type=positive, metavar="H",
                   help="film coefficient [kW/(m²·K)] assumed for streams and utilities without one")
    p.add_argument("--sweep", type=_range, default=None, metavar="LO:HI",
                   help=f"ΔTmin range of the sweep [K] (default {defaults.SWEEP_RANGE[0]:g}:{defaults.SWEEP_RANGE[1]:g}, widened to "
                        "hold --dtmin)")
    p.add_argument("--solver", choices=["highs", "cbc"], default=None,
                   help="MILP solver (default: HiGHS when installed, else CBC)")
    p.add_argument("--time-limit", type=positive, default=60.0, metavar="S",
                   help="wall-clock budget of the maximum-energy-recovery design, shared by its solves [s] "
                        "(default 60 s)")
    p.add_argument("--least-utility-flow", action="store_true",
                   help="keep hot oil and cooling water of the maximum-energy-recovery design at their least flow "
                        "and design return (as `design --least-utility-flow`)")
    p.add_argument("--tac", action="store_true",
                   help="also search for the network of lowest total annual cost (takes up to --tac-time-limit)")
    p.add_argument("--emat", type=positive, default=None, metavar="K",
                   help="exchanger minimum approach of the --tac design [K] (default 1 K)")
    p.add_argument("--tac-time-limit", type=positive, default=defaults.TAC_TIME_LIMIT, metavar="S",
                   help=f"wall-clock limit of the --tac design [s] (default {defaults.TAC_TIME_LIMIT:g} s)")
    p.add_argument("--site-dt", type=positive_or_zero, default=0.0, metavar="K",
                   help="site folders: extra temperature difference for raising and using steam [K] (default 0 K)")
    p.set_defaults(handler=run)


# --------------------------------------------------------------------------------------------------
# inputs


def is_site_folder(path: str | Path) -> bool:
    """Whether a folder is a site: a ``mains`` table, or several zone tables ``<zone>_streams``.

    A folder that holds a plain ``streams`` table is a process case even when other files have
    ``streams`` in their names (a ``streams_backup.csv`` left beside it): the process finder then refuses
    the ambiguity and names the files, instead of the report silently becoming a site report.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> _ = (d / "streams.csv").write_text("x")
    >>> is_site_folder(d)
    False
    >>> _ = (d / "streams_backup.csv").write_text("x")
    >>> is_site_folder(d)
    False
    >>> _ = (d / "mains.csv").write_text("x")
    >>> is_site_folder(d)
    True
    """
    path = Path(path)
    if not path.is_dir():
        return False
    found = case_candidates(path, ("streams", "mains"))
    if "mains" in found:
        return True
    tables = found.get("streams", ())
    return len(tables) > 1 and not any(f.stem.lower() == "streams" for f in tables)


def _inputs(args) -> tuple[dict[str, Path], list[str]]:
    """Files of the run by role, and notes on how they were found."""
    path = Path(args.path)
    notes: list[str] = []
    if path.is_dir():
        files = find_case_files(path)
        notes.append(f"case folder {path}: " + "; ".join(f"{role} {f.name}" for role, f in files.items()))
    elif path.is_file():
        files = {"stream table": path}
    else:
        raise InputError("file or folder not found", file=str(path))
    for role, option in (("utilities", args.utilities), ("costs", args.costs), ("existing network", args.network)):
        if option:
            if role in files and Path(option).resolve() != files[role].resolve():
                notes.append(f"{role} {option} given on the command line (instead of {files[role].name})")
            files[role] = Path(option)
    return files, notes


def default_out_folder(path: str | Path) -> Path:
    """The report folder when no --out is given: ``<case name>_report`` in the current directory.

    The case name is the folder's name for a case or site folder, the stream table's name without its
    extension for a file.  The folder is outside the case, so a report never writes into the case's
    own (perhaps version-controlled) files.

    Parameters
    ----------
    path : str or Path
        The PATH argument of ``report``.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp()) / "plant_a"
    >>> d.mkdir()
    >>> default_out_folder(d), default_out_folder(d / "streams.csv")
    (PosixPath('plant_a_report'), PosixPath('streams_report'))
    """
    path = Path(path)
    name = path.resolve().name if path.is_dir() else path.stem
    return Path(f"{name or 'heatloom'}_report")


def _out_folder(args) -> Path:
    """The --out folder, or the default one (said on stderr unless --quiet)."""
    if args.out:
        return Path(args.out)
    folder = default_out_folder(args.path)
    if not args.quiet:
        print(f"heatloom: writing the report into {folder}{os.sep} in the current directory (default; set with "
              "--out DIR)", file=sys.stderr)
    return folder


# --------------------------------------------------------------------------------------------------
# the study (heatloom.studies.study) and its writers


SCENARIO_STEP = 5.0
"""ΔTmin step of a site report's price-scenario cases [K] (each zone's optimum is still located to 0.01 K)."""


def site_scenarios(args, zones, found: dict, assumed: list | None = None):
    """The price-scenario study of a site folder that holds a prices table, or NotComputed with the reason.

    Uses the folder's (or the command line's) utilities and costs, ``--default-h`` where film coefficients are
    missing, ``--hours-per-year`` for prices per energy and ``--sweep`` for the ΔTmin range.  When a film
    coefficient is assumed, a row (assumption, value, basis) saying where is appended to ``assumed``.
    """
    from ..studies.scenarios import scenario_study
    from ..studies.study import NotComputed, run_step

    for role, files in found.items():
        if len(files) > 1:
            return NotComputed(f"the folder holds {len(files)} {role} files ({', '.join(f.name for f in files)}); "
                               "keep one", "InputError")

    def first(role: str):
        return found[role][0] if role in found else None

    def run_study():
        utilities, plans, costs, missing = read_scenario_inputs(
            zones, utilities=args.utilities or first("utilities"), prices=first("prices"),
            costs=args.costs or first("costs"), hours_per_year=args.hours_per_year)
        check_cost_target_inputs(missing, args.default_h, None)
        if missing and assumed is not None:
            assumed.append(("film coefficient (price scenarios)", f"{args.default_h:g} kW/(m²·K) assumed for "
                            f"{', '.join(missing)}", "given (--default-h): the tables give no h there"))
        return scenario_study(zones, args.sweep or defaults.SWEEP_RANGE, utilities, plans, costs, step=SCENARIO_STEP,
                              default_film_coefficient=args.default_h, workers=1)

    return run_step(run_study, "the price-scenario study (heatloom.studies.scenarios)")


def run_site(args) -> int:
    """The site report of a site folder: site.targets of every zone and the mains, as HTML and workbook."""
    import datetime

    from .. import __version__
    from ..io.export import OutputDirectory
    from ..io.site import read_site
    from ..io.site_report import SiteStudy, render_site_report, site_sheets
    from ..pinch.site import site_targets

    path = Path(args.path)
    site_in = read_site(path, columns=args.columns, fit_tolerance=args.fit_tolerance)
    out = OutputDirectory(_out_folder(args), list(site_in.files), force=args.force)
    if out.redirect_note:
        note(args, f"note: {out.redirect_note}")
    out.check(OUTPUT_FILES)   # refuse before computing anything, so nothing is half written
    found = case_candidates(path, ("utilities", "prices", "costs"))
    notes = [f"site folder {path}: zones " + "; ".join(f"{z} ({Path(f).name})" for z, f in
                                                        site_in.zone_sources.items())
             + (f"; mains {Path(site_in.mains_source).name}" if site_in.mains_source else "; no mains table")]
    if "prices" in found:
        notes[0] += "; prices " + ", ".join(p.name for p in found["prices"])
    scenario_options = ("utilities", "costs", "default_h", "sweep") if "prices" in found else ()
    unused = [o for o in ("utilities", "costs", "network", "default_h", "sweep", "emat", "sheet") if
              getattr(args, o, None) and o not in scenario_options] + (["tac"] if args.tac else [])
    if unused:
        notes.append("not used for a site: " + ", ".join("--" + o.replace("_", "-") for o in unused))
    dt_min, dt_note = dt_min_of(args)
    site = site_targets(list(site_in.zones), site_in.mains, dt_min, dt_site=args.site_dt)
    sources = {f"zone {z}": f for z, f in site_in.zone_sources.items()}
    if site_in.mains_source:
        sources["mains"] = site_in.mains_source
    scenarios = None
    assumed: list = []
    if "prices" in found:
        scenarios = site_scenarios(args, site_in.zones, found, assumed)
        sources.update({role: str(files[0]) for role, files in found.items() if len(files) == 1})
    study = SiteStudy(title=f"Site study: {path.name}", site=site, frames=site.frames(), dt_min_note=dt_note,
                      zone_sources=dict(site_in.zone_sources), mains_source=site_in.mains_source, sources=sources,
                      notes=tuple(notes), safety_note=defaults.SAFETY_NOTE, version=__version__,
                      created=datetime.datetime.now().astimezone().isoformat(timespec="seconds"),
                      command=_command_line(args), scenarios=scenarios, assumed=tuple(assumed))
    rendered = render_site_report(study)
    sheets = site_sheets(study)              # everything is built before anything is written
    out.text("report.html", rendered.html)
    out.workbook("study.xlsx", sheets)
    report_path = out.path / "report.html"
    if args.json:
        print_json({"report": str(report_path), "workbook": str(out.path / "study.xlsx"),
                    "sections": [k for k, _ in rendered.sections], "figures": rendered.figures,
                    "not_computed": [{"where": w, "why": r} for w, r in rendered.not_computed],
                    "targets": None, "site": site.to_dict()})
    else:
        if not args.quiet:
            for n in notes[1:]:
                print(f"heatloom: note: {n}", file=sys.stderr)
            for where, why in rendered.not_computed:
                print(f"heatloom: not computed ({where}): {why}", file=sys.stderr)
        print(f"site report: {len(rendered.sections)} sections, {rendered.figures} figures → {report_path}")
    return EXIT_OK


def run(args) -> int:
    import datetime

    from .. import __version__
    from ..io import read_streams, read_utilities
    from ..io.export import OutputDirectory
    from ..io.report import render_report
    from ..io.tables import parse_column_mapping
    from ..io.workbook import study_sheets
    from ..studies.study import NotComputed, RunSettings, compute_study

    if is_site_folder(args.path):
        return run_site(args)
    files, notes = _inputs(args)
    out = OutputDirectory(_out_folder(args), [str(p) for p in files.values()], force=args.force)
    if out.redirect_note:
        note(args, f"note: {out.redirect_note}")
    out.check(OUTPUT_FILES)   # refuse before computing anything, so nothing is half written
    columns = parse_column_mapping(args.columns) if args.columns else None
    streams = read_streams(files["stream table"], sheet=args.sheet, columns=columns, fit_tolerance=args.fit_tolerance)
    costs = read_cost_settings(files.get("costs"), args.hours_per_year)
    utilities = None
    if "utilities" in files:
        utilities = read_utilities(files["utilities"], sheet=args.utilities_sheet, process=streams,
                                   hours_per_year=price_hours(costs))
        costs = settle_currency(costs, utilities)
    retrofit_costs = None
    if "costs" in files and "existing network" in files:
        from ..io.costs import read_retrofit_costs

        retrofit_costs = read_retrofit_costs(files["costs"])
    existing = None
    if "existing network" in files:
        from ..io.network_table import read_network
        from ..retrofit.existing import ExistingNetwork

        existing = ExistingNetwork.from_table(streams, read_network(files["existing network"]), utilities)
    dt_min, dt_note = dt_min_of(args)
    rules = match_rules(args, streams, utilities, dt_min, files["stream table"])   # both designs keep them
    sweep_range = args.sweep or (min(defaults.SWEEP_RANGE[0], dt_min) if dt_min > 0 else defaults.SWEEP_RANGE[0],
                                 max(defaults.SWEEP_RANGE[1], dt_min))
    emat = args.emat
    if args.tac and emat is None:
        emat = defaults.EMAT
    sweep_note = "given (--sweep)" if args.sweep else \
        "default range (that of the sweep command), widened to hold the ΔTmin of the study; set with --sweep"
    settings = RunSettings(sweep_range=sweep_range, sweep_step=defaults.SWEEP_STEP, sweep_note=sweep_note, solver=args.solver,
                           time_limit=args.time_limit, least_utility_flow=args.least_utility_flow, tac=args.tac,
                           emat=emat, tac_time_limit=args.tac_time_limit, command=_command_line(args))
    steps = 5 + 2 * (existing is not None) + 2
    bar = ProgressBars("heatloom report", enabled=not (args.quiet or args.json), unit="step", steps=steps)
    path = Path(args.path)
    title = f"Heat-integration study: {path.name if path.is_dir() else path.stem}"
    sources = {role: str(p) for role, p in files.items()}
    try:
        study = compute_study(streams, dt_min, utilities, costs, existing=existing, retrofit_costs=retrofit_costs,
                              default_film_coefficient=args.default_h, settings=settings, progress=bar.step, rules=rules,
                              title=title, dt_min_note=dt_note, costs_source=sources.get("costs"), sources=sources,
                              notes=tuple(notes), version=__version__,
                              created=datetime.datetime.now().astimezone().isoformat(timespec="seconds"))
        bar.step("HTML report")
        rendered = render_report(study)
        bar.step("workbook")
        sheets = study_sheets(study)          # everything is built before anything is written
        out.text("report.html", rendered.html)
        out.workbook("study.xlsx", sheets)
    finally:
        bar.close()
    report_path = out.path / "report.html"
    if args.json:
        print_json({"report": str(report_path), "workbook": str(out.path / "study.xlsx"),
                    "sections": [k for k, _ in rendered.sections], "figures": rendered.figures,
                    "not_computed": [{"where": w, "why": r} for w, r in rendered.not_computed],
                    "targets": None if isinstance(study.targets, NotComputed) else study.targets.to_dict(
                        problem_table=False)})
    else:
        if not args.quiet:
            for where, why in rendered.not_computed:
                print(f"heatloom: not computed ({where}): {why}", file=sys.stderr)
        print(f"report: {len(rendered.sections)} sections, {rendered.figures} figures → {report_path}")
    if isinstance(study.targets, NotComputed):
        # the report says why; the exit code says that its main result is missing
        print(f"heatloom: error: energy targets not computed: {study.targets.reason}", file=sys.stderr)
        return {"InfeasibleError": EXIT_INFEASIBLE, "InputError": EXIT_INPUT,
                "TemperatureCrossError": EXIT_INPUT}.get(study.targets.error, EXIT_UNEXPECTED)
    return EXIT_OK


def _command_line(args) -> str:
    """The command that made the report, rebuilt from the options (for the record)."""
    import shlex

    parts = ["heatloom", "report", args.path]
    for option in ("dtmin", "utilities", "costs", "network", "default_h", "solver", "emat", "sheet",
                   "utilities_sheet", "columns", "hours_per_year", "out"):
        value = getattr(args, option, None)
        if value is not None:
            parts += ["--" + option.replace("_", "-"), f"{value:g}" if isinstance(value, float) else str(value)]
    if getattr(args, "site_dt", 0.0):
        parts += ["--site-dt", f"{args.site_dt:g}"]
    if args.sweep:
        parts += ["--sweep", f"{args.sweep[0]:g}:{args.sweep[1]:g}"]
    if args.time_limit != 60.0:
        parts += ["--time-limit", f"{args.time_limit:g}"]
    if args.tac:
        parts += ["--tac", "--tac-time-limit", f"{args.tac_time_limit:g}"]
    parts += [flag for flag, on in (("--force", args.force), ("--quiet", args.quiet), ("--json", args.json)) if on]
    return " ".join(shlex.quote(str(p)) for p in parts)
