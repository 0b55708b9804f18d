"""The study and its workbook: one sheet per result of a study, units in the headers, number formats set.

:class:`Study` gathers what one study run computed, each result or a :class:`NotComputed` saying why it
is missing, with the assumptions and cautions of the run; the HTML report
(:func:`heatloom.io.report.render_report`) and the workbook are both made from it.

:func:`study_sheets` turns a :class:`Study` into pandas frames, one per sheet: the
report's facts and assumptions (``about``), the streams as read, the utilities, the problem table, the
targets, the units and costs of the designed networks, the ΔTmin sweep and, when an existing network was
given, its retrofit diagnosis.  A result that was not computed keeps its sheet, holding one ``status``
line that says why.  :func:`write_workbook` writes the frames through
:class:`heatloom.io.export.OutputDirectory` (never over an existing file without ``force``, never over an
input) with a bold frozen header, sized columns and a number format chosen from each column's unit.

Wide sheets carry the unit of every column in its header (``duty [kW]``); the long sheets (``about``,
``targets``, ``costs``, ``retrofit``) hold one quantity per row with a ``unit`` column, and the format of
each value follows its row's unit.  :func:`number_formats` gives the Python and Excel formats of a unit;
the HTML report uses the same ones, so the workbook and the report show the same digits.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from .. import defaults
from ..model import StreamTable, Utility

__all__ = [
    "NotComputed",
    "RunSettings",
    "Study",
    "SHEETS",
    "unit_of",
    "column_units",
    "number_formats",
    "format_number",
    "network_frame",
    "retrofit_option_frame",
    "study_sheets",
    "write_workbook",
]

SHEETS = ("about", "streams", "utilities", "problem table", "targets", "network units", "costs", "sweep",
          "sweep breakpoints", "tac network units")
"""Sheets of every study workbook, in order; ``retrofit``, ``retrofit units``, ``retrofit cross-pinch`` and
``retrofit curve`` and ``retrofit options`` follow when an existing network was given."""

RETROFIT_SHEETS = ("retrofit", "retrofit units", "retrofit cross-pinch", "retrofit curve", "retrofit options")
"""Sheets added when an existing network was given."""

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
        Limit of each solve of the maximum-energy-recovery design [s].
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
    costs : heatloom.network.CostSettings
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
        """The utilities given, else the two assumed by design (:func:`heatloom.network.design.ideal_utilities`)."""
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
            f"{u.cost:g} {cur}/(kW·yr)"
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
                     f"solver {s.solver or 'preferred installed (HiGHS, else CBC)'}, {s.time_limit:g} s per solve",
                     "default" if s.solver is None else "given"))
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
# units and formats


_UNIT = re.compile(r"\[([^\[\]]*)\]\s*$")


def unit_of(header: str) -> str | None:
    """The unit written in brackets at the end of a column header, or None.

    Examples
    --------
    >>> unit_of("duty [kW]"), unit_of("name")
    ('kW', None)
    """
    m = _UNIT.search(str(header))
    return m.group(1).strip() if m else None


def column_units(frame) -> list[str | None]:
    """The unit of each column of a frame, ``count`` for a dimensionless column of whole numbers.

    Examples
    --------
    >>> import pandas as pd
    >>> column_units(pd.DataFrame({"units [-]": [3.0, None], "share [-]": [0.5, 1.0], "name": ["a", "b"]}))
    ['count', '-', None]
    """
    out = []
    for c in frame.columns:
        u = unit_of(c)
        if u == "-":
            vals = [v for v in frame[c].tolist() if isinstance(v, (int, float, np.integer, np.floating))
                    and not isinstance(v, (bool, np.bool_)) and math.isfinite(float(v))]
            if vals and all(float(v).is_integer() for v in vals) and "fraction" not in str(c):
                u = "count"
        out.append(u)
    return out


def number_formats(unit: str | None, value=None) -> tuple[str, str]:
    """Python format and Excel number format of a value of this unit.

    Temperatures to 0.1 °C, temperature differences to 0.01 K, duties and areas to 0.1, heat capacity
    flow rates to 0.01 kW/K, film coefficients and dimensionless ratios to 0.001, annual money and money
    once (a currency code such as ``USD``) to whole units, prices per kW·year and years to 0.01; whole
    numbers (counts) as integers.

    Parameters
    ----------
    unit : str or None
        As written in a header (``°C``, ``kW``, ``USD/yr``...).
    value : optional
        The value, to tell counts (integers) from ratios.

    Examples
    --------
    >>> number_formats("kW"), number_formats("-", 3)
    (('{:,.1f}', '#,##0.0'), ('{:d}', '0'))
    """
    u = (unit or "").strip()
    if isinstance(value, (bool, np.bool_)):
        return "{}", "General"
    if isinstance(value, (int, np.integer)):
        return "{:d}", "0"
    if u == "count":
        return "{:,.0f}", "0"
    if u == "°C":
        return "{:,.1f}", "#,##0.0"
    if u == "K":
        return "{:,.2f}", "0.00"
    if u in ("kW", "m²", "m2", "kW·yr"):
        return "{:,.1f}", "#,##0.0"
    if u == "kW/K":
        return "{:,.2f}", "#,##0.00"
    if u.startswith("kW/m") or u.startswith("kW/(m"):
        return "{:.3f}", "0.000"
    if u in ("m²K", "m²·K"):
        return "{:,.2f}", "#,##0.00"
    if ("yr" in u or "year" in u) and "kW" in u:
        return "{:,.2f}", "#,##0.00"                      # a price per kW·year
    if u in ("1/yr", "1/year"):
        return "{:.4f}", "0.0000"
    if "/yr" in u or "/year" in u or "per year" in u:
        return "{:,.0f}", "#,##0"                          # annual money
    if u in ("h/yr", "h/year", "years"):
        return "{:,.0f}", "#,##0"
    if u in ("yr", "year"):
        return "{:,.2f}", "#,##0.00"                       # a payback
    if u == "money" or re.fullmatch(r"[A-Z]{3}", u):
        return "{:,.0f}", "#,##0"                          # money once (an investment, a net present value)
    if u == "%":
        return "{:.2f}", "0.00"
    if u == "s":
        return "{:.2f}", "0.00"
    if u in ("-", ""):
        return "{:.3f}", "0.000"
    return "{:.4g}", "General"


def format_number(value, unit: str | None = None) -> str:
    """A value as the report and workbook show it (en dash for a missing one).

    Examples
    --------
    >>> format_number(772.50000001, "kW"), format_number(None, "kW"), format_number(12, "-")
    ('772.5', '–', '12')
    """
    if value is None:
        return "–"
    if isinstance(value, (float, np.floating)) and not math.isfinite(float(value)):
        return "–"
    if isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, (bool, np.bool_)):
        fmt, _ = number_formats(unit, value)
        text = fmt.format(value.item() if hasattr(value, "item") else value)
        return "0" + text[2:] if text.startswith("-0") and float(text.replace(",", "")) == 0 else text
    return str(value)


# --------------------------------------------------------------------------------------------------
# frames


def _status(reason: str):
    import pandas as pd

    return pd.DataFrame({"status": [f"not computed: {reason}"]})


def _skipped(value) -> bool:
    return isinstance(value, NotComputed)


def network_frame(network, currency: str):
    """One row per unit of a designed network (E1.., H1.., C1..), canonical units in the headers.

    Parameters
    ----------
    network : heatloom.network.Network
    currency : str
    """
    import pandas as pd

    cur = currency or "money"
    rows = []

    def row(tag, kind, hot, cold, u, hot_in, hot_out, cold_in, cold_out, hot_fraction, cold_fraction):
        rows.append({"unit": tag, "type": kind, "hot side": hot, "cold side": cold, "duty [kW]": u.duty,
                     "hot in [°C]": hot_in, "hot out [°C]": hot_out, "cold in [°C]": cold_in,
                     "cold out [°C]": cold_out, "hot fraction [-]": hot_fraction,
                     "cold fraction [-]": cold_fraction, "U [kW/m²K]": u.u, "LMTD [K]": u.lmtd,
                     "area [m²]": u.area, f"capital cost [{cur}/yr]": u.cost, "region": u.region})

    for k, e in enumerate(network.exchangers, 1):
        row(f"E{k}", "exchanger", e.hot, e.cold, e, e.hot_in, e.hot_out, e.cold_in, e.cold_out, e.hot_fraction,
            e.cold_fraction)
    for k, h in enumerate(network.heaters, 1):
        row(f"H{k}", "heater", h.utility, h.cold, h, h.utility_in, h.utility_out, h.cold_in, h.cold_out, 1.0,
            h.cold_fraction)
    for k, c in enumerate(network.coolers, 1):
        row(f"C{k}", "cooler", c.hot, c.utility, c, c.hot_in, c.hot_out, c.utility_in, c.utility_out,
            c.hot_fraction, 1.0)
    columns = ["unit", "type", "hot side", "cold side", "duty [kW]", "hot in [°C]", "hot out [°C]", "cold in [°C]",
               "cold out [°C]", "hot fraction [-]", "cold fraction [-]", "U [kW/m²K]", "LMTD [K]", "area [m²]",
               f"capital cost [{cur}/yr]", "region"]
    return pd.DataFrame(rows, columns=columns)


def _long(rows):
    import pandas as pd

    return pd.DataFrame(rows, columns=["quantity", "value", "unit"])


def target_rows(study) -> list[tuple]:
    """(quantity, value, unit) rows of the energy targets and, when computed, the capital targets."""
    t = study.targets
    rows = [("ΔTmin", t.dt_min, "K"),
            ("minimum hot utility", t.hot_utility, "kW"),
            ("minimum cold utility", t.cold_utility, "kW"),
            ("maximum heat recovery", t.heat_recovery, "kW"),
            ("hot process duty", t.hot_process_duty, "kW"),
            ("cold process duty", t.cold_process_duty, "kW")]
    if t.pinch is not None:
        rows += [("pinch, hot side", t.pinch.hot, "°C"), ("pinch, cold side", t.pinch.cold, "°C"),
                 ("pinch, shifted", t.pinch.shifted, "°C")]
        for k, p in enumerate(t.pinches[1:], 2):
            rows += [(f"pinch {k}, hot side", p.hot, "°C"), (f"pinch {k}, cold side", p.cold, "°C")]
    else:
        rows.append(("pinch", "none", ""))
    rows.append(("threshold problem", t.threshold.value if t.threshold is not None else "no", ""))
    if t.placement is not None:
        cur = study.currency
        rows.append(("utility cost at the targets", t.placement.annual_cost, f"{cur}/yr"))
        for u in t.placement.utility_pinches:
            rows.append(("utility pinch, shifted", u, "°C"))
    a = study.area
    if not _skipped(a):
        cur = a.currency
        rows += [("minimum area (Townsend–Linnhoff)", a.area, "m²"),
                 ("minimum units, overall (N − 1)", a.units, "-"),
                 ("minimum units for maximum energy recovery", a.units_mer, "-"),
                 ("minimum 1-2 shells", a.shells, "-"),
                 ("capital cost target (annualised)", a.capital_cost, f"{cur}/yr"),
                 ("energy cost target", a.energy_cost, f"{cur}/yr"),
                 ("total annual cost target", a.total_annual_cost, f"{cur}/yr")]
    return rows


def utility_frame(study):
    """The utilities in force (given, or assumed when none were given) with their duties at the targets."""
    import pandas as pd

    cur = study.currency
    t = study.targets
    duties = {}
    if not _skipped(t):
        duties = {d.utility.name: d.duty for d in t.placement.duties} if t.placement is not None else None
    rows = []
    for u in study.utilities_in_force:
        if duties is None:   # ideal utilities: the targets' two duties
            duty = t.hot_utility if u.is_hot else t.cold_utility
        else:
            duty = duties.get(u.name)
        rows.append({"name": u.name, "kind": u.kind.value, "T_supply [°C]": u.supply_temperature,
                     "T_target [°C]": u.target_temperature, f"price [{cur}/(kW·yr)]": u.cost,
                     "h [kW/m²K]": u.film_coefficient, "duty at targets [kW]": duty,
                     f"annual cost at targets [{cur}/yr]": None if duty is None else duty * u.cost,
                     "source": "given" if study.utilities is not None else "assumed (none given)"})
    return pd.DataFrame(rows)


def cost_rows(study) -> list[tuple]:
    """(quantity, value, unit) rows: the cost basis, then the costs of targets and designs."""
    c = study.costs
    cur = c.currency
    rows = [("cost basis", "given" if study.costs_source else "package defaults", ""),
            ("currency", cur, ""),
            ("exchanger cost law", c.exchanger.text(cur), "A in m²"),
            ("heater cost law", c.heater.text(cur), "A in m²"),
            ("cooler cost law", c.cooler.text(cur), "A in m²"),
            ("laws give money per year", "yes" if c.annualised else "no", "")]
    if not c.annualised:
        rows += [("interest rate", 100 * c.interest_rate, "%"), ("plant life", c.years, "years")]
    rows += [("annualisation factor", c.annualisation_factor, "1/yr"),
             ("operating hours", c.hours_per_year, "h/yr")]
    if not _skipped(study.area):
        a = study.area
        rows += [("target: capital (annualised)", a.capital_cost, f"{cur}/yr"),
                 ("target: energy", a.energy_cost, f"{cur}/yr"),
                 ("target: total annual cost", a.total_annual_cost, f"{cur}/yr")]
    for label, net in (("MER network", study.design), ("lowest-TAC network", study.tac)):
        if _skipped(net) or net.total_annual_cost is None:
            continue
        rows += [(f"{label}: capital (annualised)", net.capital_cost, f"{cur}/yr"),
                 (f"{label}: utilities", net.operating_cost, f"{cur}/yr"),
                 (f"{label}: total annual cost", net.total_annual_cost, f"{cur}/yr")]
    if not _skipped(study.sweep):
        o = study.sweep.optimum
        rows += [("sweep optimum: ΔTmin", o.dt_min, "K"),
                 ("sweep optimum: total annual cost target", o.total_annual_cost, f"{cur}/yr")]
    return rows


def retrofit_rows(study) -> list[tuple]:
    """(quantity, value, unit) rows summing up the diagnosis of the existing network."""
    d = study.diagnosis
    sim = d.simulation
    rows = [("ΔTmin of the comparison", d.cross_pinch.dt_min, "K"),
            ("hot utility used", sim.hot_utility, "kW"),
            ("cold utility used", sim.cold_utility, "kW"),
            ("heat recovery", sim.heat_recovery, "kW"),
            ("hot utility target", d.cross_pinch.hot_utility_target, "kW"),
            ("hot utility beyond the target", d.cross_pinch.excess, "kW")]
    for k, p in enumerate(d.cross_pinch.pinches):
        rows.append((f"net heat across the pinch at {p.hot:g}/{p.cold:g} °C", d.cross_pinch.total(k), "kW"))
    if d.efficiency is not None:
        e = d.efficiency
        rows += [("installed area", e.area_existing, "m²"),
                 ("area target at the network's energy use", e.area_target, "m²"),
                 ("ΔTmin whose target equals the network's hot utility", e.dt_min_existing, "K"),
                 ("area efficiency α", e.alpha, "-")]
    rows += [("recovery by shifting loads along utility paths", d.pinch.recovery, "kW"),
             ("network pinch (limiting exchanger)", d.pinch.network_pinch or "none", "")]
    rows += [("problem", p, "") for p in sim.problems]
    rows += [("note", n, "") for n in (*d.notes, *sim.notes, *d.pinch.notes)]
    return rows


def retrofit_option_frame(retrofit):
    """One row per ranked retrofit option: rank, savings, investment, payback, NPV and its changes."""
    import pandas as pd

    cur = retrofit.costs.currency
    columns = ["rank", "saving [kW]", "cold saving [kW]", f"saving [{cur}/yr]", f"investment [{cur}]",
               "payback [yr]", f"NPV [{cur}]", "hot utility after [kW]", "changes"]
    return pd.DataFrame([{"rank": o.rank, "saving [kW]": o.saving, "cold saving [kW]": o.cold_saving,
                          f"saving [{cur}/yr]": o.saving_per_year, f"investment [{cur}]": o.investment,
                          "payback [yr]": o.payback_years, f"NPV [{cur}]": o.npv,
                          "hot utility after [kW]": o.hot_utility, "changes": "; ".join(o.steps)}
                         for o in retrofit.options], columns=columns)


def study_sheets(study) -> dict:
    """The study's results as frames, one per workbook sheet (see :data:`SHEETS`).

    Parameters
    ----------
    study : heatloom.io.report.Study

    Returns
    -------
    dict
        Sheet name → pandas DataFrame, in the order of :data:`SHEETS` (then the retrofit sheets).

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [60, 120], [2.0, 2.5])
    >>> sheets = study_sheets(Study("demo", s, 10.0, "given", target(s, 10.0)))
    >>> list(sheets) == list(SHEETS), sheets["targets"].iloc[1].tolist()
    (True, ['minimum hot utility', 45.0, 'kW'])
    >>> sheets["sweep"]["status"][0]
    'not computed: the ΔTmin sweep was not run'
    """
    import pandas as pd

    cur = study.currency
    about = [("title", study.title, ""), ("made by", f"heatloom {study.version}", ""),
             ("made on", study.created, "")]
    about += [(f"input: {role}", path, "") for role, path in study.sources.items()]
    about += [(f"assumption: {k}", v, b) for k, v, b in study.assumption_rows()]
    about += [("caution", text, "") for text in study.cautions()]
    sheets: dict = {"about": pd.DataFrame(about, columns=["item", "value", "note"])}
    sheets["streams"] = study.streams.to_frame()
    t = study.targets
    if _skipped(t):
        sheets["utilities"] = utility_frame(study) if study.utilities is not None else _status(t.reason)
        sheets["problem table"] = _status(t.reason)
        sheets["targets"] = _status(t.reason)
    else:
        sheets["utilities"] = utility_frame(study)
        sheets["problem table"] = t.table.to_frame()
        sheets["targets"] = _long(target_rows(study))
    sheets["network units"] = _status(study.design.reason) if _skipped(study.design) else \
        network_frame(study.design, cur)
    sheets["costs"] = _long(cost_rows(study))
    if _skipped(study.sweep):
        sheets["sweep"] = _status(study.sweep.reason)
        sheets["sweep breakpoints"] = _status(study.sweep.reason)
    else:
        sheets["sweep"] = study.sweep.to_frame()
        sheets["sweep breakpoints"] = pd.DataFrame(
            [{"ΔTmin low [K]": b.low, "ΔTmin high [K]": b.high, "change": b.change} for b in study.sweep.breakpoints],
            columns=["ΔTmin low [K]", "ΔTmin high [K]", "change"])
    sheets["tac network units"] = _status(study.tac.reason) if _skipped(study.tac) else \
        network_frame(study.tac, cur)
    if study.diagnosis is not None:
        d = study.diagnosis
        if _skipped(d):
            for name in RETROFIT_SHEETS:
                sheets[name] = _status(d.reason)
        else:
            sheets["retrofit"] = _long(retrofit_rows(study))
            sheets["retrofit units"] = d.simulation.to_frame()
            sheets["retrofit cross-pinch"] = pd.DataFrame(
                [{"unit": u.unit, "role": u.role.value, "what": u.kind, "pinch, shifted [°C]": u.pinch,
                  "downward [kW]": u.downward, "upward [kW]": u.upward, "net [kW]": u.net}
                 for u in d.cross_pinch.units],
                columns=["unit", "role", "what", "pinch, shifted [°C]", "downward [kW]", "upward [kW]", "net [kW]"])
            sheets["retrofit curve"] = (d.curve.to_frame() if d.curve is not None else
                                        _status("; ".join(d.notes) or "the retrofit curve was not computed"))
        r = study.retrofit
        if r is None:
            sheets["retrofit options"] = _status("the retrofit options were not run")
        elif _skipped(r):
            sheets["retrofit options"] = _status(r.reason)
        elif not r.options:
            sheets["retrofit options"] = _status("no retrofit option saves energy within the limits given")
        else:
            sheets["retrofit options"] = retrofit_option_frame(r)
    return sheets


# --------------------------------------------------------------------------------------------------
# writing


def _cell_value(v):
    """A value openpyxl can store: numpy scalars as Python ones, NaN and None as empty cells."""
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not math.isfinite(v):
        return None
    return v


def write_workbook(out, name: str, sheets: Mapping[str, object]):
    """Write frames as an .xlsx through an OutputDirectory, with units and number formats.

    Header row bold and frozen, columns sized to their content (at most 60 characters), each numeric
    cell formatted by the unit of its column (wide sheets) or of its row (sheets with ``value`` and
    ``unit`` columns), see :func:`number_formats`.

    Parameters
    ----------
    out : heatloom.io.export.OutputDirectory
    name : str
        File name, e.g. ``study.xlsx``.
    sheets : mapping
        Sheet name → pandas DataFrame; names are cut to Excel's 31 characters.

    Returns
    -------
    pathlib.Path

    Examples
    --------
    >>> import tempfile, pandas as pd
    >>> from heatloom.io.export import OutputDirectory
    >>> out = OutputDirectory(tempfile.mkdtemp())
    >>> p = write_workbook(out, "t.xlsx", {"duties": pd.DataFrame({"unit": ["E1"], "duty [kW]": [120.25]})})
    >>> import openpyxl; openpyxl.load_workbook(p)["duties"]["B2"].number_format
    '#,##0.0'
    """
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font
    from openpyxl.utils import get_column_letter

    path = out.target(name)
    wb = Workbook()
    wb.remove(wb.active)
    for sheet, frame in sheets.items():
        ws = wb.create_sheet(str(sheet)[:31])
        columns = [str(c) for c in frame.columns]
        ws.append(columns)
        for cell in ws[1]:
            cell.font = Font(bold=True)
            cell.alignment = Alignment(wrap_text=False)
        units = column_units(frame)
        long_value = columns.index("value") if "value" in columns and "unit" in columns else None
        long_unit = columns.index("unit") if long_value is not None else None
        for values in frame.itertuples(index=False, name=None):
            ws.append([_cell_value(v) for v in values])
            r = ws.max_row
            for j, v in enumerate(values):
                v = _cell_value(v)
                if not isinstance(v, (int, float)) or isinstance(v, bool):
                    continue
                unit = values[long_unit] if j == long_value else units[j]
                ws.cell(row=r, column=j + 1).number_format = number_formats(unit, v)[1]
        ws.freeze_panes = "A2"
        for j, c in enumerate(columns, 1):
            width = max([len(c)] + [len(str(x)) for x in frame.iloc[:, j - 1].head(500)])
            ws.column_dimensions[get_column_letter(j)].width = min(max(10, width + 2), 60)
    wb.save(path)
    out.written.append(path)
    return path
