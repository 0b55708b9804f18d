"""Tabulated defaults for exchanger sizing and costing, stated once.

Everything here is an *illustrative default, common practice, not a quotation*: the cost laws,
interest rate, plant life and operating hours are round numbers of the usual order of magnitude for
carbon-steel shell-and-tube exchangers, chosen so that a study runs without a costs file.  They are
not a price from any vendor or index.  Give your own in a costs file (see :func:`heatloom.io.read_costs`)
for any decision that matters.

The sizing limits (:data:`MIN_F_FACTOR`, :data:`X_P`) are the usual design-practice values; where they
come from is said beside each one.  Sizing and costing results are screening estimates: designs must be
checked against local codes and standards by qualified, licensed engineers.

Examples
--------
>>> X_P, MIN_F_FACTOR
(0.9, 0.75)
>>> dict(EXCHANGER_COST_LAW)
{'fixed': 10000.0, 'per_area': 800.0, 'exponent': 0.8}
"""

from __future__ import annotations

from contextlib import contextmanager
from contextvars import ContextVar
from types import MappingProxyType

__all__ = [
    "X_P",
    "MIN_F_FACTOR",
    "CURRENCY",
    "ANNUALISED",
    "EXCHANGER_COST_LAW",
    "HEATER_COST_LAW",
    "COOLER_COST_LAW",
    "INTEREST_RATE",
    "YEARS",
    "HOURS_PER_YEAR",
    "MAX_HOURS_PER_YEAR",
    "MAX_EXPONENT",
    "MAX_INTEREST_RATE",
    "SAFETY_NOTE",
    "SAFETY_TEXT",
    "DT_MIN",
    "SWEEP_RANGE",
    "SWEEP_STEP",
    "EMAT",
    "TAC_TIME_LIMIT",
    "TICK_OFF_ABOVE",
    "RESTRUCTURE_STREAMS",
    "RESTRUCTURE_SHARE",
    "MAX_INPUT_BYTES",
    "max_input_bytes",
    "input_size_limit",
    "MEASURED_BALANCE_TOLERANCE",
    "TABLE_APPROACH_TOLERANCE",
    "OUTPUT_PRECISION",
    "MAX_TEMPERATURE",
    "MAX_HEAT_CAPACITY_FLOW",
    "IDEAL_UTILITY_MARGIN",
    "DEFAULT_HOT_UTILITY_PRICE",
    "DEFAULT_COLD_UTILITY_PRICE",
    "DEFAULT_HOT_UTILITY_FILM_COEFFICIENT",
    "DEFAULT_COLD_UTILITY_FILM_COEFFICIENT",
]

X_P = 0.9
"""Fraction of the largest reachable thermal effectiveness P_max allowed in each 1-2 shell [-].

Ahmad, Linnhoff & Smith (1988), *Design of multipass heat exchangers: an alternative approach*,
J. Heat Transfer 110(2), 304-309, propose fixing P = X_P·P_max per shell; 0.9 is the value they and
later practice use (common practice).  It keeps each shell off the steep part of the F curve."""

MIN_F_FACTOR = 0.75
"""Smallest acceptable LMTD correction factor F of a 1-2 shell [-] (common practice).

Designers commonly reject shells with F below 0.75 (some use 0.8) because F falls steeply to zero just
above, so small errors in temperatures or fouling make the shell fail.  0.75 is chosen because it is the
floor that X_P = 0.9 already nearly guarantees (F at P = 0.9·P_max lies between 0.74 and 1 over all R),
so the two rules rarely disagree; where they do, the shell count is raised and the result says so."""

CURRENCY = "USD"
"""Currency label of the default cost laws (a label only: nothing is converted)."""

ANNUALISED = False
"""Whether the default cost laws already give money per year (False: installed capital cost)."""

EXCHANGER_COST_LAW = MappingProxyType({"fixed": 10_000.0, "per_area": 800.0, "exponent": 0.8})
"""Installed capital cost of one process-process exchanger, fixed + per_area·A^exponent [money],
A in m² (illustrative default, common practice, not a quotation)."""

HEATER_COST_LAW = EXCHANGER_COST_LAW
"""Capital cost law of a heater (utility-process unit); the exchanger law by default."""

COOLER_COST_LAW = EXCHANGER_COST_LAW
"""Capital cost law of a cooler (utility-process unit); the exchanger law by default."""

INTEREST_RATE = 0.10
"""Interest rate used to annualise capital [1/year] (illustrative default)."""

YEARS = 10.0
"""Plant life over which capital is annualised [year] (illustrative default)."""

HOURS_PER_YEAR = 8000.0
"""Operating hours per year [h/year], for prices given per kWh (common practice: about 8000 of 8760)."""

MAX_HOURS_PER_YEAR = 8784.0
"""Hours in a leap year [h/year]; no plant runs more."""

MAX_EXPONENT = 1.5
"""Largest exponent c accepted in a cost law a + b·A^c [-]; the usual range is 0.6-1."""

MAX_INTEREST_RATE = 1.0
"""Largest interest rate accepted [1/year]: rates are fractions (0.1 for 10 %)."""

SAFETY_NOTE = ("Targets and designs from heatloom are screening estimates. Check every design against "
               "local codes and have it reviewed by qualified, licensed engineers.")
"""The one-line caution every human output, costing statement and JSON result carries."""

SAFETY_TEXT = (
    "Pinch targets and the networks built on them are screening estimates from the data given. They do not "
    "check pressure and temperature ratings, materials, fouling, thermal-oil or steam-system hazards, control, "
    "start-up or upset cases, and a too-small ΔTmin or a temperature cross hidden by averaged data can make a "
    "real exchanger fail to perform. Keep design margins, and have every design checked against local codes "
    "and standards and reviewed by qualified, licensed engineers before anything is built or changed.")
"""The general caution of every report (the Safety section of the README)."""

IDEAL_UTILITY_MARGIN = 20.0
"""When no utilities are given, design assumes an isothermal hot utility this much plus ΔTmin above the
hottest cold-stream temperature, and a cold utility as far below the coldest hot-stream temperature [K]
(illustrative default: it only sets the driving force of heaters and coolers)."""

DEFAULT_HOT_UTILITY_PRICE = 200.0
"""Price of the assumed hot utility [money/(kW·year)] (illustrative default, of the order of fired
heat or steam at 8000 h/year; not a quotation)."""

DEFAULT_COLD_UTILITY_PRICE = 20.0
"""Price of the assumed cold utility [money/(kW·year)] (illustrative default, of the order of cooling
water; not a quotation)."""

DEFAULT_HOT_UTILITY_FILM_COEFFICIENT = 4.0
"""Film coefficient of the assumed hot utility [kW/(m²·K)] (common practice order of magnitude for
condensing steam; illustrative)."""

DEFAULT_COLD_UTILITY_FILM_COEFFICIENT = 2.0
"""Film coefficient of the assumed cold utility [kW/(m²·K)] (common practice order of magnitude for
cooling water in tubes; illustrative)."""

# --------------------------------------------------------------------------------------------------
# commands and studies: the defaults every command states in its output

DT_MIN = 10.0
"""Default minimum approach temperature [K] (*common practice* for a first look at liquid–liquid
duties; gas streams and refrigeration usually need other values). Stated in every output."""

SWEEP_RANGE = (5.0, 40.0)
"""ΔTmin range swept when none is given [K] (*common practice*: spans the usual values for
process-to-process duties, from close approaches with good exchangers to generous ones). Stated in
every output; a report widens it to hold the ΔTmin of its study."""

SWEEP_STEP = 0.5
"""Grid step of a ΔTmin sweep [K]."""

EMAT = 1.0
"""Exchanger minimum approach temperature of the lowest-TAC design when none is given [K] (the value used
by most published TAC benchmarks; stated in every output)."""

TAC_TIME_LIMIT = 120.0
"""Wall-clock limit of a lowest-total-annual-cost design when none is given [s]."""

TICK_OFF_ABOVE = 12
"""Process streams above which the MER design places units by the tick-off method without the
fewest-matches MILP [-] (why: :data:`heatloom.network.design.TICK_OFF_ABOVE`; here so that the command
line's help states the same number without importing the solvers)."""

RESTRUCTURE_STREAMS = 12
"""Largest problem (process streams) given the search beyond the stagewise form [-]
(:data:`heatloom.network.tac.layout_search.RESTRUCTURE_STREAMS`)."""

RESTRUCTURE_SHARE = 0.2
"""Share of the time limit given to the search beyond the stagewise form [-]
(:data:`heatloom.network.tac.layout_search.RESTRUCTURE_SHARE`)."""

MAX_TEMPERATURE = 5000.0
"""Hottest temperature a stream table may give [°C] (a sanity bound, *common practice*: fired
heaters and flue gases stay well below 2000 °C; a larger value is a unit or typing error)."""

MAX_HEAT_CAPACITY_FLOW = 1.0e9
"""Largest heat capacity flow rate a stream table may give [kW/K] (a sanity bound, *common practice*: the largest process
streams are of the order of 1e4–1e5 kW/K, a condensing duty written with a 0.01 K glide about 1e7; above
1e9 sums of duties lose their precision and a value is almost surely a unit error)."""

MAX_INPUT_BYTES = 200 * 1024 * 1024
"""Largest input file heatloom reads [bytes] (200 MiB): plant stream tables and workbooks are far smaller,
and a larger file is almost always the wrong file; :func:`heatloom.io.cells.read_input_bytes` takes
another limit where one is needed, and a run sets another with :func:`input_size_limit` (the commands'
``--max-input-mb``); :func:`max_input_bytes` gives the limit in force."""

_INPUT_LIMIT: ContextVar[int] = ContextVar("heatloom_max_input_bytes", default=MAX_INPUT_BYTES)


def max_input_bytes() -> int:
    """The largest input file read now [bytes]: :data:`MAX_INPUT_BYTES`, or the limit of the enclosing
    :func:`input_size_limit`.

    Examples
    --------
    >>> max_input_bytes() == MAX_INPUT_BYTES
    True
    >>> with input_size_limit(1024):
    ...     max_input_bytes()
    1024
    """
    return _INPUT_LIMIT.get()


@contextmanager
def input_size_limit(max_bytes: int | None):
    """Within the block, input files up to ``max_bytes`` [bytes] are read (None: the default limit).

    The limit holds for the current thread or task only (a context variable) and is restored on leaving.
    """
    if max_bytes is None:
        yield
        return
    if not max_bytes > 0:
        raise ValueError(f"the input size limit must be > 0 bytes, got {max_bytes!r}")
    token = _INPUT_LIMIT.set(int(max_bytes))
    try:
        yield
    finally:
        _INPUT_LIMIT.reset(token)

MEASURED_BALANCE_TOLERANCE = 1e-3
"""Share of a stream's duty by which an existing network, simulated from measured or design data, may miss
the stream's target (or pass it) before that is reported as a problem [-] (0.1 %, *common practice* for the
closure of plant heat balances, which are seldom better than 1-2 %); smaller misses are stated in the notes."""

TABLE_APPROACH_TOLERANCE = 0.01
"""Shortfall from ΔTmin [K] by which a unit of a network read from a table (``evaluate``, ``retrofit``) may
come below it without being reported as a violation: a design's units at exactly ΔTmin come back a few mK
under it from the areas its units table rounds to 0.001 m² (:data:`OUTPUT_PRECISION`); such units are
named in the notes instead."""

OUTPUT_PRECISION = MappingProxyType({"duty": 3, "temperature": 3, "area": 3, "money": 2})
"""Decimal places of the numbers written to JSON, CSV and XLSX, by kind of quantity [-]: duties to 0.001 kW,
temperatures and temperature differences to 0.001 °C / 0.001 K, areas to 0.001 m², money (costs, investments,
savings, per year or once) to 0.01 of the currency (a value that is not zero is never written as zero: below
half a unit of the last place it keeps three significant digits).  Values are rounded only when written
(:mod:`heatloom.io.export`), never inside a computation, so that float noise such as 772.5000000000009 kW is
written as 772.5; quantities of any other kind (CP, film coefficients, prices, ratios) are written unrounded,
and so are tables of inputs (stream and utility tables as read), which must read back exactly.
The precision is far below what plant data or any of the models resolve (*common practice*)."""

# --------------------------------------------------------------------------------------------------
# retrofit (heatloom.retrofit.options): illustrative defaults, common practice, not a quotation

RETROFIT_NEW_EXCHANGER_COST_LAW = MappingProxyType({"fixed": 15_000.0, "per_area": 1_000.0, "exponent": 0.8})
"""Installed capital of a new exchanger added to an existing plant, fixed + per_area·A^exponent [money],
A in m² (illustrative default: the new-build law of :data:`EXCHANGER_COST_LAW` with a premium for
working in a running plant, tie-ins, foundations and piping; not a quotation)."""

RETROFIT_ADDED_AREA_COST_LAW = MappingProxyType({"fixed": 5_000.0, "per_area": 1_000.0, "exponent": 0.8})
"""Installed capital of area added to an existing unit (an extra shell or a bigger bundle),
fixed + per_area·ΔA^exponent [money], ΔA in m²; ``fixed`` is the installation cost paid whatever the
area (illustrative default, not a quotation)."""

RETROFIT_REPIPE_COST = 8_000.0
"""Installed capital of repiping one side of an existing unit to another stream [money] (illustrative
default, not a quotation)."""

RETROFIT_RESEQUENCE_COST = 8_000.0
"""Installed capital of moving an existing unit to another position along one of its streams [money]
(illustrative default, not a quotation)."""

__all__ += [
    "RETROFIT_NEW_EXCHANGER_COST_LAW",
    "RETROFIT_ADDED_AREA_COST_LAW",
    "RETROFIT_REPIPE_COST",
    "RETROFIT_RESEQUENCE_COST",
]


SMALL_DT_MIN = 3.0
"""ΔTmin under which an optimum gets a caution [K] (*common practice*: approaches under about 3 K are
close-approach duty, not a value from a standard)."""


def small_dt_min_caution(dt_min: float) -> str | None:
    """The caution for an optimum ΔTmin under :data:`SMALL_DT_MIN`, or None.

    Parameters
    ----------
    dt_min : float
        Optimum ΔTmin [K].

    Examples
    --------
    >>> small_dt_min_caution(5.0) is None, small_dt_min_caution(2.4).startswith("the optimum ΔTmin 2.40 K")
    (True, True)
    """
    if not dt_min < SMALL_DT_MIN:
        return None
    return (f"the optimum ΔTmin {dt_min:.2f} K is under {SMALL_DT_MIN:g} K (a common-practice limit, not a "
            "standard): approaches this close are only practical with plate or other close-approach exchangers; "
            "fouling eats a small driving force quickly (the targets assume clean surfaces), and control has "
            "little margin for upsets and load changes. Check practicality before choosing a ΔTmin this small")

__all__ += ["SMALL_DT_MIN", "small_dt_min_caution"]
