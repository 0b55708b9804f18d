"""The study's workbook: one sheet per result of a study, units in the headers, number formats set.

:func:`study_sheets` turns a :class:`heatloom.studies.study.Study` into pandas frames, one per sheet: the
report's facts and assumptions (``about``), the streams as read, the utilities, the problem table, the
targets, the units and costs of the designed networks, the ΔTmin sweep and, when an existing network was
given, its retrofit diagnosis.  A result that was not computed keeps its sheet, holding one ``status``
line that says why.  :meth:`heatloom.io.export.OutputDirectory.workbook` writes the frames (never over an existing file without
``force``, never over an input, atomically) with a bold frozen header, sized columns and a number format
chosen from each column's unit.

Wide sheets carry the unit of every column in its header (``duty [kW]``); the long sheets (``about``,
``targets``, ``costs``, ``retrofit``) hold one quantity per row with a ``unit`` column, and the format of
each value follows its row's unit (:func:`heatloom.io.formats.number_formats`).  The HTML report
(:func:`heatloom.io.report.render_report`) shows the same tables with the same digits; the row builders
here (:func:`target_rows`, :func:`cost_rows`, :func:`retrofit_rows`, :func:`utility_frame`,
:func:`network_frame`, :func:`retrofit_option_frame`) serve both.
"""

from __future__ import annotations

from ..studies.study import NotComputed, Study

__all__ = [
    "SHEETS",
    "RETROFIT_SHEETS",
    "network_frame",
    "target_rows",
    "utility_frame",
    "cost_rows",
    "retrofit_rows",
    "retrofit_option_frame",
    "study_sheets",
]

SHEETS = ("about", "streams", "utilities", "problem table", "targets", "network units", "costs", "sweep",
          "sweep breakpoints", "tac network units")
"""Sheets of every study workbook, in order; ``retrofit``, ``retrofit units``, ``retrofit cross-pinch`` and
``retrofit curve`` and ``retrofit options`` follow when an existing network was given."""

RETROFIT_SHEETS = ("retrofit", "retrofit units", "retrofit cross-pinch", "retrofit curve", "retrofit options")
"""Sheets added when an existing network was given."""

# --------------------------------------------------------------------------------------------------
# frames


def _status(reason: str):
    import pandas as pd

    return pd.DataFrame({"status": [f"not computed: {reason}"]})


def _skipped(value) -> bool:
    return isinstance(value, NotComputed)


def network_frame(network, currency: str):
    """The units table of a designed network (:meth:`heatloom.network.Network.to_frame`: unit names, U,
    LMTD, F, shells, positions along the streams), its cost header in ``currency`` when the network names
    none; the same table ``design`` writes and ``retrofit`` reads.

    Parameters
    ----------
    network : heatloom.network.Network
    currency : str
    """
    from dataclasses import replace

    if currency and not network.currency:
        network = replace(network, currency=currency)
    return network.to_frame()


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
        rows.append(("utility cost at the targets", t.placement.annual_cost, f"{cur}/year"))
        for u in t.placement.utility_pinches:
            rows.append(("utility pinch, shifted", u, "°C"))
    a = study.area
    if not _skipped(a):
        cur = a.currency
        rows += [("minimum area (Townsend–Linnhoff)", a.area, "m²"),
                 ("minimum units, overall (N − 1)", a.units, "-"),
                 ("minimum units for maximum energy recovery", a.units_mer, "-"),
                 ("minimum 1-2 shells", a.shells, "-"),
                 ("capital cost target (annualised)", a.capital_cost, f"{cur}/year"),
                 ("energy cost target", a.energy_cost, f"{cur}/year"),
                 ("total annual cost target", a.total_annual_cost, f"{cur}/year")]
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
                     "T_target [°C]": u.target_temperature, f"price [{cur}/(kW·year)]": u.cost,
                     "h [kW/(m²·K)]": u.film_coefficient, "duty at targets [kW]": duty,
                     f"annual cost at targets [{cur}/year]": None if duty is None else duty * u.cost,
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
    rows += [("annualisation factor", c.annualisation_factor, "1/year"),
             ("operating hours", c.hours_per_year, "h/year")]
    if not _skipped(study.area):
        a = study.area
        rows += [("target: capital (annualised)", a.capital_cost, f"{cur}/year"),
                 ("target: energy", a.energy_cost, f"{cur}/year"),
                 ("target: total annual cost", a.total_annual_cost, f"{cur}/year")]
    for label, net in (("MER network", study.design), ("lowest-TAC network", study.tac)):
        if _skipped(net) or net.total_annual_cost is None:
            continue
        rows += [(f"{label}: capital (annualised)", net.capital_cost, f"{cur}/year"),
                 (f"{label}: utilities", net.operating_cost, f"{cur}/year"),
                 (f"{label}: total annual cost", net.total_annual_cost, f"{cur}/year")]
    if not _skipped(study.sweep):
        o = study.sweep.optimum
        rows += [("sweep optimum: ΔTmin", o.dt_min, "K"),
                 ("sweep optimum: total annual cost target", o.total_annual_cost, f"{cur}/year")]
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
    columns = ["rank", "saving [kW]", "cold saving [kW]", f"saving [{cur}/year]", f"investment [{cur}]",
               "payback [year]", f"NPV [{cur}]", "hot utility after [kW]", "changes"]
    return pd.DataFrame([{"rank": o.rank, "saving [kW]": o.saving, "cold saving [kW]": o.cold_saving,
                          f"saving [{cur}/year]": o.saving_per_year, f"investment [{cur}]": o.investment,
                          "payback [year]": o.payback_years, f"NPV [{cur}]": o.npv,
                          "hot utility after [kW]": o.hot_utility, "changes": "; ".join(o.steps)}
                         for o in retrofit.options], columns=columns)


def study_sheets(study: Study) -> dict:
    """The study's results as frames, one per workbook sheet (see :data:`SHEETS`).

    Parameters
    ----------
    study : heatloom.studies.study.Study

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
