"""What every command shares: option parsers, reading the inputs, number formats, notes on stderr."""

from __future__ import annotations

import argparse
import sys
from collections import Counter
from collections.abc import Collection, Mapping
from pathlib import Path

from .. import defaults
from ..io.cases import CASE_SUFFIXES, case_candidates

EXIT_OK, EXIT_UNEXPECTED, EXIT_INPUT, EXIT_INFEASIBLE = 0, 1, 2, 3
"""Exit codes of every command."""

__all__ = ["settle_currency", "price_hours", "read_cost_settings", "folder_tables", "note_lines", "EXIT_OK", "EXIT_UNEXPECTED", "EXIT_INPUT", "EXIT_INFEASIBLE", "positive", "positive_or_zero", "add_shared", "add_table_options",
           "note", "read_inputs", "whole_number", "add_output_options", "dt_min_of", "fmt", "solves_summary", "print_json", "finish", "CASE_SUFFIXES",
           "CASE_ROLES", "case_candidates", "find_case_files", "ProgressBars", "stderr_is_terminal",
           "megabytes", "add_input_limit_option", "input_limit", "add_cost_target_options",
           "add_site_table_options", "check_cost_target_inputs", "number_list", "zone_streams",
           "read_scenario_inputs"]



def positive_or_zero(text: str) -> float:
    try:
        x = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number of kelvin, got {text!r}") from None
    if not (x >= 0) or x == float("inf"):
        raise argparse.ArgumentTypeError(f"must be a finite number >= 0, got {text!r}")
    return x


def positive(text: str) -> float:
    x = positive_or_zero(text)
    if not x > 0:
        raise argparse.ArgumentTypeError(f"must be > 0, got {text!r}")
    return x


def whole_number(low: int):
    """An argparse type: a whole number of at least ``low``."""
    def parse(text: str) -> int:
        try:
            n = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"expected a whole number >= {low}, got {text!r}") from None
        if n < low:
            raise argparse.ArgumentTypeError(f"expected a whole number >= {low}, got {text!r}")
        return n
    return parse


def number_list(text: str, *, what: str, example: str, zero_allowed: bool, unique: bool = False
                ) -> tuple[float, ...]:
    """``"0.5, 1,2"`` → (0.5, 1.0, 2.0): finite numbers > 0 (or >= 0), for options that take a list.

    Examples
    --------
    >>> number_list("10, 20.5", what="ΔTmin values", example="10,20", zero_allowed=False)
    (10.0, 20.5)
    """
    out = []
    for part in str(text).split(","):
        try:
            x = float(part)
        except ValueError:
            raise argparse.ArgumentTypeError(f"expected {what} separated by commas, e.g. {example}, got "
                                             f"{text!r}") from None
        if not (x > 0 or (zero_allowed and x == 0)) or x == float("inf"):
            raise argparse.ArgumentTypeError(f"each of the {what} must be a finite number "
                                             f"{'>=' if zero_allowed else '>'} 0, got {part.strip()!r}")
        out.append(x)
    if unique and len(set(out)) != len(out):
        raise argparse.ArgumentTypeError(f"a value is given twice in {text!r}")
    return tuple(out)


def add_output_options(p: argparse.ArgumentParser) -> None:
    """--json, --out, --force, --quiet, --debug: how every command reports."""
    p.add_argument("--json", action="store_true", help="print one JSON object on stdout and nothing else")
    p.add_argument("--out", metavar="DIR", help="folder for result files (CSV, XLSX, JSON, figures)")
    p.add_argument("--force", action="store_true",
                   help="replace result files already in --out (input files are never replaced)")
    p.add_argument("--quiet", action="store_true", help="no progress or notes on stderr")
    p.add_argument("--debug", action="store_true", help="show the full traceback on errors")


def add_shared(p: argparse.ArgumentParser) -> None:
    p.add_argument("--dtmin", type=positive_or_zero, default=None, metavar="K",
                   help=f"minimum approach temperature [K] (default {defaults.DT_MIN:g} K)")
    p.add_argument("--utilities", metavar="FILE",
                   help="utility table (CSV or .xlsx): name,T_supply,T_target,cost [money/(kW·year)]")
    p.add_argument("--hours-per-year", type=positive, default=None, metavar="H",
                   help="operating hours per year [h/year], to read utility prices given per kWh or MWh "
                        "(e.g. 'cost [USD/kWh]'); prices are otherwise per kW·year")
    add_output_options(p)


def megabytes(text: str) -> int:
    """An argparse type: a size in MiB (``"500"``, ``"0.5"``) → bytes.

    Examples
    --------
    >>> megabytes("1"), megabytes("0.5")
    (1048576, 524288)
    """
    try:
        x = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a size in MiB, e.g. 500, got {text!r}") from None
    if not (x > 0) or x == float("inf") or x * 2**20 < 1:
        raise argparse.ArgumentTypeError(f"must be a finite size > 0 MiB, got {text!r}")
    return int(x * 2**20)


def add_input_limit_option(p: argparse.ArgumentParser) -> None:
    """--max-input-mb: the largest input file read (every command that reads files)."""
    p.add_argument("--max-input-mb", dest="max_input_bytes", type=megabytes, default=None, metavar="MB",
                   help=f"largest input file read [MiB] (default {defaults.MAX_INPUT_BYTES / 2**20:g} MiB; a larger "
                        "file is refused as almost surely the wrong one; devices and pipes are always refused)")


def input_limit(args):
    """The input size limit of a run (``--max-input-mb``) in force for the block, as a context manager:
    ``with input_limit(args): ...`` (:func:`heatloom.defaults.input_size_limit`)."""
    return defaults.input_size_limit(getattr(args, "max_input_bytes", None))


def add_table_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--sheet", metavar="NAME", help="worksheet of the stream table (default: the first)")
    p.add_argument("--utilities-sheet", metavar="NAME", help="worksheet of the utility table")
    p.add_argument("--columns", metavar="MAP",
                   help='map column headers heatloom does not know to its columns, e.g. '
                        '"Line=name,Inlet=T_supply,Outlet=T_target,Wcp=CP"')
    p.add_argument("--fit-tolerance", type=positive, default=0.5, metavar="K",
                   help="largest temperature error when fitting temperature–duty points into linear "
                        "segments [K] (default 0.5 K; the fit is always on the safe side)")
    p.add_argument("--strict", action="store_true",
                   help="refuse columns the tables do not use (by default they are named on stderr and ignored)")
    add_input_limit_option(p)


def add_cost_target_options(p: argparse.ArgumentParser) -> None:
    """--default-h, --capital-basis, --workers, --cluster: cost targets over many cases (sweep, scenarios)."""
    p.add_argument("--default-h", type=positive, metavar="H",
                   help="film coefficient [kW/(m²·K)] assumed for streams and utilities without one")
    p.add_argument("--capital-basis", choices=["units_mer", "units", "shells"], default="units_mer",
                   help="what the target area is shared among for the capital cost (default units_mer: the "
                        "minimum units of a maximum-energy-recovery network)")
    p.add_argument("--workers", type=whole_number(1), default=None, metavar="N",
                   help="processes of the local pool (default: one per core; 1 runs in this process)")
    p.add_argument("--cluster", metavar="ADDRESS",
                   help="run on a Dask distributed cluster at this scheduler address instead")


def add_site_table_options(p: argparse.ArgumentParser) -> None:
    """--one-zone-workbook, --columns, --fit-tolerance: how the zone stream tables of a site are read."""
    p.add_argument("--one-zone-workbook", action="store_true",
                   help="read a workbook's first sheet as one zone instead of one zone per sheet")
    p.add_argument("--columns", metavar="MAP",
                   help='map column headers of the stream tables that heatloom does not know, e.g. '
                        '"Line=name,Inlet=T_supply,Outlet=T_target,Wcp=CP"')
    p.add_argument("--fit-tolerance", type=positive, default=0.5, metavar="K",
                   help="largest temperature error when fitting temperature–duty points [K] (default 0.5 K)")
    add_input_limit_option(p)


def check_cost_target_inputs(missing: list[str], default_h: float | None, cluster: str | None) -> None:
    """Refuse before computing: film coefficients missing with no --default-h; --cluster without Dask."""
    from ..errors import InputError

    if missing and default_h is None:
        shown = ", ".join(missing[:10]) + (" ..." if len(missing) > 10 else "")
        raise InputError(f"film coefficient h missing for {shown}: area and cost targets need one for every stream "
                         "and utility (add an h column in kW/(m²·K), or assume one with --default-h)")
    if cluster is not None:
        try:
            import dask.distributed  # noqa: F401
        except ImportError:
            raise InputError("--cluster needs the optional Dask support: pip install 'heatloom[dask]'") from None


def zone_streams(zones):
    """All zones' streams in one table (names prefixed by zone), to classify isothermal utilities."""
    from ..model import Stream, StreamTable

    return StreamTable(tuple(Stream(f"{z.name}/{s.name}", s.segments) for z in zones for s in z.streams))


def read_scenario_inputs(zones, *, utilities=None, utilities_sheet=None, prices=None, costs=None,
                         hours_per_year=None):
    """The inputs of a price-scenario study over ``zones`` (heatloom.model.Zone objects).

    Returns (utilities or None, price scenarios from the prices table, cost settings or None, names of the
    streams and utilities without a film coefficient).
    """
    from ..io import read_utilities
    from ..io.scenarios import read_price_scenarios
    from ..pinch.area import missing_film_coefficients

    settings = read_cost_settings(costs, hours_per_year)
    hours = price_hours(settings)
    table = None if utilities is None else read_utilities(utilities, sheet=utilities_sheet,
                                                          process=zone_streams(zones), hours_per_year=hours)
    plans = () if prices is None else read_price_scenarios(prices, table, hours_per_year=hours)
    settings = settle_currency(settings, [*(table or ()), *plans])   # the prices table names a currency too
    missing = sorted({m for z in zones for m in missing_film_coefficients(z.streams, table or ())})
    return table, plans, settings, missing


def note(args, text: str) -> None:
    if not args.quiet:
        print(text, file=sys.stderr)


def read_inputs(args):
    from ..io import parse_column_mapping, read_streams, read_utilities

    columns = parse_column_mapping(args.columns) if args.columns else None
    costs = read_cost_settings(getattr(args, "costs", None), getattr(args, "hours_per_year", None))
    notes: list[str] = []
    strict = getattr(args, "strict", False)
    streams = read_streams(args.file, sheet=args.sheet, columns=columns, fit_tolerance=args.fit_tolerance,
                           notes=notes, strict=strict)
    utilities = None
    if args.utilities:
        utilities = read_utilities(args.utilities, sheet=args.utilities_sheet, process=streams,
                                   hours_per_year=price_hours(costs), notes=notes, strict=strict)
    if not getattr(args, "quiet", False):
        for n in notes:
            print(f"note: {n} (ignored; --strict refuses unknown columns)", file=sys.stderr)
    return streams, utilities, settle_currency(costs, utilities)


def assumed_utilities(table, streams, dt_min: float) -> tuple[tuple, str | None]:
    """The utilities a heatloom design assumed (:func:`heatloom.pinch.utilities.ideal_utilities`) when a
    network table names them and no utilities table is given, and a note saying so; else ``((), None)``.

    A design run without utilities writes units against "hot utility (assumed)" and "cold utility
    (assumed)"; reading that table back at the design's ΔTmin gives the same utilities.
    """
    from ..pinch.utilities import ideal_utilities

    ideal = ideal_utilities(streams, dt_min)
    names = {u.name for u in ideal}
    if not any(side in names for unit in table.units for side in (unit.hot, unit.cold)):
        return (), None
    hot, cold = ideal
    return ideal, (f"no utilities given and the network names the utilities a heatloom design assumes: used "
                   f"them at ΔTmin {dt_min:g} K, an isothermal hot utility at {hot.supply_temperature:g} °C and "
                   f"an isothermal cold utility at {cold.supply_temperature:g} °C (defaults; they match the "
                   "design's when it was run at the same ΔTmin; give --utilities FILE for real ones)")


def match_rules(args, streams, utilities, dt_min: float, path=None):
    """The forbidden and required matches of the stream table's ``forbid``/``require`` columns and of the
    command line's ``--forbid``/``--require`` (where the command has them), merged and checked against the
    streams and utilities (the assumed ones when none are given: their names do not depend on ΔTmin).

    ``path`` is the stream table (default ``args.file``); ``args.sheet`` and ``args.columns`` as read.
    """
    from ..io import parse_column_mapping
    from ..io.streams import read_match_rules
    from ..model import MatchRules

    columns = parse_column_mapping(args.columns) if getattr(args, "columns", None) else None
    rules = read_match_rules(path if path is not None else args.file, streams, sheet=getattr(args, "sheet", None),
                             columns=columns).merged(MatchRules.from_text(getattr(args, "forbid", ()) or (),
                                                                          getattr(args, "require", ()) or ()))
    check_rules(rules, streams, utilities, dt_min)
    return rules


def check_rules(rules, streams, utilities, dt_min: float) -> None:
    """Check match rules against the streams and the utilities, the assumed ones (at ``dt_min`` [K]: their
    names do not depend on it) when none are given (:meth:`heatloom.model.MatchRules.check`)."""
    if rules:
        if utilities is None:
            from ..pinch.utilities import ideal_utilities

            utilities = ideal_utilities(streams, dt_min)
        rules.check(streams, utilities)


def read_cost_settings(path, hours_per_year=None):
    """The cost settings of a run: the costs file's (when given), with ``--hours-per-year`` overriding its
    operating hours; None when neither is given (the defaults apply).  The result says where its hours come
    from (:attr:`heatloom.model.CostSettings.hours_source`)."""
    from dataclasses import replace

    from ..io import read_costs
    from ..model import CostSettings

    costs = read_costs(path) if path else None
    if hours_per_year is not None:
        costs = replace(costs or CostSettings(), hours_per_year=hours_per_year, hours_source="--hours-per-year")
    return costs


def settle_currency(costs, utilities):
    """The cost settings with the currency the utility prices name, when the costs file names none; a
    costs file and prices in two currencies are refused (nothing is converted between currencies).

    Examples
    --------
    >>> from heatloom.model import CostSettings, Utility
    >>> u = [Utility("steam", 180, 179, 50.0, currency="EUR")]
    >>> c = settle_currency(None, u)
    >>> c.currency, c.currency_source
    ('EUR', 'utility prices')
    >>> settle_currency(CostSettings(currency="USD", currency_source="costs file"), u)
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: the costs file is in USD but the utility prices are in EUR; give both in one currency (heatloom converts no currency)
    """
    from dataclasses import replace

    from ..errors import InputError
    from ..io.units import currency_of
    from ..model import CostSettings

    named = sorted({u.currency for u in utilities or () if u.currency})
    if len(named) > 1:
        raise InputError(f"utility prices are in several currencies ({', '.join(named)}); give them in one")
    if not named:
        return costs
    (price,) = named
    if costs is not None and costs.currency_source == "costs file":
        stated = currency_of(costs.currency) or costs.currency.strip().upper()
        if stated != price:
            raise InputError(f"the costs file is in {costs.currency} but the utility prices are in {price}; give "
                             "both in one currency (heatloom converts no currency)")
        return costs
    return replace(costs or CostSettings(), currency=price, currency_source="utility prices")


def price_hours(costs) -> float | None:
    """Operating hours [h/year] that turn prices per energy into prices per kW·year: those of
    ``--hours-per-year`` or of the costs file, never the package default (None: such prices are refused).

    Examples
    --------
    >>> from heatloom.model import CostSettings
    >>> price_hours(None), price_hours(CostSettings()), price_hours(CostSettings(hours_per_year=7000, hours_source="costs file"))
    (None, None, 7000.0)
    """
    return None if costs is None or costs.hours_source == "default" else costs.hours_per_year


def fmt(x: float, unit: str = "kW") -> str:
    return f"{x:,.1f} {unit}"


def solves_summary(reports) -> str:
    """One line on the solves behind a result: how many, their statuses, total time, solver."""
    if not reports:
        return "solves: none"
    statuses = Counter(r.outcome for r in reports)
    solvers = sorted({r.solver for r in reports})
    worst = [r for r in reports if not r.optimal]
    text = (f"solves: {len(reports)} ({', '.join(f'{n} {s}' for s, n in statuses.items())}), "
            f"{sum(r.wall_time for r in reports):.2f} s, solver {'/'.join(solvers)}")
    for r in worst:
        gap = f", gap {100 * r.gap:.2g} %" if r.gap is not None else ""
        text += f"; not proven optimal: {r.problem} ({r.outcome}{gap})"
    return text




def dt_min_of(args) -> tuple[float, str]:
    """The ΔTmin of a run [K] and how it was chosen (stated in every output)."""
    if args.dtmin is None:
        return defaults.DT_MIN, "default; set with --dtmin"
    return args.dtmin, "given"


def print_json(result) -> None:
    """Exactly one JSON object on stdout."""
    import json

    from ..io.export import to_jsonable

    print(json.dumps(to_jsonable(result), ensure_ascii=False))


def finish(args, result: dict, summary: str, out) -> int:
    """Print the run's outcome: the JSON object with --json, else the summary and the files written; on
    stderr, why the results went to a subfolder of --out (:attr:`heatloom.io.export.OutputDirectory.redirect_note`).
    """
    if out is not None and out.redirect_note and not args.quiet:
        print(f"note: {out.redirect_note}", file=sys.stderr)
    if args.json:
        print_json(result)
    else:
        print(summary)
        if out is not None:
            print(f"  wrote {len(out.written)} files to {out.path}/")
    return EXIT_OK


def stderr_is_terminal() -> bool:
    """Whether stderr is a terminal: progress bars are drawn only there, never into a log file or a pipe
    (where every redraw would leave a line of junk).

    Examples
    --------
    >>> import contextlib, io
    >>> with contextlib.redirect_stderr(io.StringIO()):
    ...     stderr_is_terminal()
    False
    """
    try:
        return bool(sys.stderr.isatty())
    except (AttributeError, ValueError):    # no stderr, or a closed one
        return False


class ProgressBars:
    """Progress of a long run as tqdm bars on stderr, and nothing at all when disabled (--quiet, --json) or
    when stderr is not a terminal (:func:`stderr_is_terminal`: a log file or a pipe gets no bars).

    One object serves the three shapes of progress the commands show, each through a callback of its own
    to hand to the API:

    * ``bars(phase, done, total)``: a bar per phase of a run of many tasks (``sweep``, ``scenarios``); a
      new phase closes the bar of the last one;
    * ``bars.step(name)``: one bar over ``steps`` named steps (``report``), the step under way in its
      description;
    * ``bars.best(value, done, total)``: one bar over the rounds of a search (``design --mode tac``), the
      best value so far after it, as ``describe_best(value)`` writes it.

    Call :meth:`close` when the run ends (also when it fails), e.g. in a ``finally``.

    Parameters
    ----------
    label : str
        What runs (``"heatloom sweep"``), at the head of every bar.
    enabled : bool
        False draws nothing and imports nothing; True draws only when stderr is a terminal.
    unit : str
        What one count of a bar is (``"task"``, ``"step"``, ``"epoch"``).
    steps : int, optional
        Number of steps, for :meth:`step`.
    describe_best : callable, optional
        The text after the bar of :meth:`best` (default: the value).

    Examples
    --------
    >>> bars = ProgressBars("heatloom report", enabled=False, unit="step", steps=2)
    >>> bars.step("energy targets"); bars("cases", 1, 4); bars.best(1.5, 1, 10); bars.close()
    """

    def __init__(self, label: str, enabled: bool, *, unit: str = "task", steps: int | None = None,
                 describe_best=None) -> None:
        self.label = label
        self.enabled = enabled and stderr_is_terminal()
        self.unit = unit
        self.steps = steps
        self.describe_best = describe_best or str
        self.bar = None
        self.phase = None
        self.stepping = False

    def _open(self, total: int | None, desc: str, **options):
        from tqdm import tqdm

        return tqdm(total=total, desc=desc, unit=self.unit, file=sys.stderr, leave=False, **options)

    def __call__(self, phase: str, done: int, total: int) -> None:
        """``done`` of ``total`` tasks of ``phase``: a bar per phase."""
        if not self.enabled:
            return
        if phase != self.phase:
            self.close()
            self.phase = phase
            self.bar = self._open(total, f"{self.label}: {phase}")
        self.bar.n = done
        self.bar.refresh()

    def step(self, name: str) -> None:
        """Step ``name`` begins (the one before it is done)."""
        if not self.enabled:
            return
        if self.bar is None:
            self.bar = self._open(self.steps, self.label, bar_format="{desc} {n_fmt}/{total_fmt} |{bar:20}| {elapsed}")
            self.stepping = True
        else:
            self.bar.update(1)
        self.bar.set_description_str(f"{self.label}: {name[:36]:<36}")

    def best(self, value: float, done: int, total: int) -> None:
        """``done`` of ``total`` rounds of a search, ``value`` the best found so far."""
        if not self.enabled:
            return
        if self.bar is None:
            self.bar = self._open(total, self.label)
        self.bar.n = done
        self.bar.set_postfix_str(self.describe_best(value))

    def close(self) -> None:
        """End the bar under way (a bar of steps is first filled: the run is over)."""
        if self.bar is not None:
            if self.stepping:
                self.bar.update(self.bar.total - self.bar.n)
            self.bar.close()
            self.bar = None
            self.stepping = False


# --------------------------------------------------------------------------------------------------
# case folders

CASE_ROLES = {"streams": "stream table", "utilities": "utilities", "costs": "costs", "network": "existing network"}
"""Keyword → the name of the role in messages and in the result of :func:`find_case_files` (the defaults)."""


def find_case_files(folder: str | Path, roles: Mapping[str, str] | None = None, *,
                    required: Collection[str] = ("streams",)) -> dict[str, Path]:
    """The files of a case folder by role, one file per role (the finder of ``report`` and ``retrofit``).

    A file's role follows from its name (case ignored): ``streams`` → stream table, ``utilities``,
    ``costs``, ``network`` → existing network (see :func:`case_candidates`).

    Parameters
    ----------
    folder : str or Path
    roles : mapping, optional
        Keyword → role name, which keys the result and names the role in messages (default
        :data:`CASE_ROLES`); only these keywords are looked for.
    required : collection of str
        Keywords that must have a file.

    Returns
    -------
    dict
        Role name → file.

    Raises
    ------
    InputError
        The folder is missing, lacks a required file, holds several files of one role, or a file whose name
        fits two roles.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> for n in ("streams.csv", "utilities.csv", "notes.txt"):
    ...     _ = (d / n).write_text("x")
    >>> sorted(find_case_files(d))
    ['stream table', 'utilities']
    >>> sorted(find_case_files(d, {"streams": "streams", "network": "network"}, required=()))
    ['streams']
    """
    from ..errors import InputError

    roles = dict(CASE_ROLES if roles is None else roles)
    found = case_candidates(folder, tuple(roles))
    for key, files in found.items():
        if len(files) > 1:
            raise InputError(f"several files could be the {roles[key]}: {', '.join(f.name for f in files)}; keep "
                             "one, or give the files one by one", file=str(folder))
    for key in required:
        if key not in found:
            raise InputError(f"no {roles[key]} in the folder: name it with '{key}' (e.g. {key}.csv), or give the "
                             "file itself", file=str(folder))
    return {roles[key]: files[0] for key, files in found.items()}


def note_lines(notes=(), *, caution: str = "") -> list[str]:
    """The closing lines of every command's summary: its notes, then the safety note (with a caution of the
    command's own, e.g. what a retrofit change also needs checked).

    Examples
    --------
    >>> note_lines(["costs in USD (default)"])[0]
    '  note: costs in USD (default)'
    >>> note_lines()[-1].startswith("  note: Targets and designs from heatloom are screening estimates")
    True

    A note that carries the safety note itself (a cost basis does) gives it up, so it is said once:

    >>> from heatloom.defaults import SAFETY_NOTE
    >>> sum(line.count(SAFETY_NOTE) for line in note_lines([f"Costs in USD. {SAFETY_NOTE}"]))
    1
    """
    said = [" ".join(str(n).replace(defaults.SAFETY_NOTE, "").split()) if defaults.SAFETY_NOTE in str(n) else n
            for n in notes]
    return [f"  note: {n}" for n in said if n] + [f"  note: {defaults.SAFETY_NOTE}" + (f" {caution}" if caution else "")]


def folder_tables(path: str | Path, given: Mapping[str, object]) -> dict[str, Path]:
    """The tables of a case folder for the roles in ``given`` that the command line left empty (the same
    finder as ``report`` and ``retrofit``): role → file.  A role with several candidate files is refused
    with their names; a path that is not a folder finds nothing.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> for n in ("east_streams.csv", "utilities.csv", "prices.csv"):
    ...     _ = (d / n).write_text("x")
    >>> sorted(folder_tables(d, {"utilities": None, "prices": "other.csv", "costs": None}))
    ['utilities']
    """
    if not Path(path).is_dir():
        return {}
    wanted = {role: role for role, value in given.items() if not value}
    return find_case_files(path, wanted, required=()) if wanted else {}
