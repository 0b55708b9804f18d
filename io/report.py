"""The study report: one self-contained HTML page with every result, figure, assumption and caution.

A :class:`Study` (defined in :mod:`heatloom.io.workbook`, which writes the same study as a workbook, and
re-exported here) gathers what a study run computed (targets, area and cost targets, the ΔTmin sweep, the
designed networks, the diagnosis of an existing network), each result or a :class:`NotComputed` that says
why it is missing.  :func:`render_report` turns it into HTML:

* one file, no script, no external file, font or style sheet: figures are matplotlib figures rendered to
  SVG (text as paths) and written inline, tables are HTML tables with the unit of every column in its
  header, and the style sheet sits in the page;
* well-formed XML throughout (void elements closed, everything escaped), so the page and every figure
  parse with an XML parser as well as in a browser;
* sections in a fixed order: summary, input data, assumptions and defaults, energy targets, cost targets
  against ΔTmin, the maximum-energy-recovery network, the network of lowest total annual cost, the existing
  network (when one was given), safety and limits, methods and references, about this report.  A result
  that was not computed keeps its section, which says plainly what is missing and why: no number is shown
  that was not computed.

Numbers are shown with the digits of :func:`heatloom.io.workbook.number_formats` (the workbook uses the
same), and every number cell carries its full value in a ``data-value`` attribute.

The report is a screening study: its designs must be checked against local codes and standards by
qualified, licensed engineers (the safety section says so).
"""

from __future__ import annotations

import html
import io as _io
import math
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from .. import defaults
from .workbook import NotComputed, RunSettings, Study

__all__ = [
    "NotComputed",
    "RunSettings",
    "Study",
    "RenderedReport",
    "figure_svg",
    "retrofit_curve_figure",
    "methods_used",
    "render_report",
    "build_page",
]

# --------------------------------------------------------------------------------------------------
# figures


def figure_svg(fig, key: str, label: str) -> str:
    """A matplotlib figure as an inline SVG element (text as paths, ids made unique), then closed.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    key : str
        Prefix of every id inside the SVG (letters, digits and hyphens), unique within the page.
    label : str
        Accessible name of the figure.

    Returns
    -------
    str
        ``<svg ...>...</svg>``, well-formed XML, with no XML declaration, doctype or metadata.

    Examples
    --------
    >>> import matplotlib.pyplot as plt
    >>> fig, ax = plt.subplots(); _ = ax.plot([0, 1], [0, 1])
    >>> svg = figure_svg(fig, "f1", "a line")
    >>> svg.startswith("<svg") and 'id="f1-' in svg and "<metadata" not in svg
    True
    """
    import matplotlib
    import matplotlib.pyplot as plt

    if not re.fullmatch(r"[A-Za-z][A-Za-z0-9-]*", key):
        raise ValueError(f"figure key must be letters, digits and hyphens, got {key!r}")
    buf = _io.StringIO()
    try:
        with matplotlib.rc_context({"svg.fonttype": "path", "svg.hashsalt": f"heatloom-{key}"}):
            fig.savefig(buf, format="svg", bbox_inches="tight", metadata={"Date": None})
    finally:
        plt.close(fig)
    text = buf.getvalue()
    text = text[text.index("<svg"):]
    text = re.sub(r"\s*<metadata>.*?</metadata>", "", text, flags=re.S)
    text = re.sub(r'\bid="([^"]+)"', lambda m: f'id="{key}-{m.group(1)}"', text)
    text = re.sub(r'\b((?:xlink:)?href)="#([^"]+)"', lambda m: f'{m.group(1)}="#{key}-{m.group(2)}"', text)
    text = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{key}-{m.group(1)})", text)
    return text.replace("<svg ", f'<svg class="chart" role="img" aria-label="{_esc(label)}" ', 1).strip()


def retrofit_curve_figure(curve, *, title: str | None = None):
    """Hot utility saving against the extra area of a retrofit, at constant α and with new area at α = 1.

    Parameters
    ----------
    curve : heatloom.retrofit.diagnose.RetrofitCurve

    Returns
    -------
    matplotlib.figure.Figure
    """
    from .figures import STYLE, _axes

    fig, ax = _axes(title or "Retrofit targets: energy saving against extra area", "Extra area [m²]",
                    "Hot utility saving [kW]")
    ax.plot(curve.investment_constant_alpha, curve.saving, label=f"at constant α = {curve.efficiency.alpha:.2f}",
            **STYLE["hot"])
    ax.plot(curve.investment_incremental, curve.saving, label="new area at α = 1", **STYLE["cold"])
    ax.axvline(0.0, **STYLE["pinch"])
    ax.set_ylim(bottom=0)
    ax.legend(frameon=False, fontsize=STYLE["font_size"] - 1, loc="lower right")
    fig.tight_layout()
    return fig


# --------------------------------------------------------------------------------------------------
# methods


_REFERENCES = {
    "pta": ("Problem table algorithm", "minimum utilities and pinch",
            "Linnhoff, B., Flower, J. R. (1978). Synthesis of heat exchanger networks: I. Systematic generation of "
            "energy optimal networks. AIChE Journal 24(4), 633-642. doi:10.1002/aic.690240411"),
    "curves": ("Composite and grand composite curves", "the figures of the energy targets",
               "Hohmann (1971); Linnhoff, B. et al. (1982). User Guide on Process Integration for the Efficient "
               "Use of Energy, IChemE, ch. 2 (as cited in heatloom.pinch.curves)"),
    "placement": ("Utility placement by the transshipment model of Papoulias–Grossmann",
                  "duties of the utility levels against the grand composite curve (linear programme)",
                  "Papoulias, S. A., Grossmann, I. E. (1983). A structural optimization approach in process "
                  "synthesis II: Heat recovery networks. Computers & Chemical Engineering 7(6), 707-721. "
                  "doi:10.1016/0098-1354(83)85023-6"),
    "area": ("Townsend–Linnhoff area target (Bath formula)",
             "minimum area of vertical heat transfer between the balanced composite curves",
             "Townsend, D. W., Linnhoff, B. (1984). Surface area targets for heat exchanger networks. IChemE 11th "
             "Annual Research Meeting, Bath"),
    "units": ("Minimum units (Euler's network theorem, N − 1)", "units target, overall and per pinch side",
              "Linnhoff, B., Mason, D. R., Wardle, I. (1979). Understanding heat exchanger networks. Computers & "
              "Chemical Engineering 3, 295-302"),
    "shells": ("Minimum 1-2 shells (Ahmad & Smith, X_P criterion of Ahmad, Linnhoff & Smith)", "shells target",
               "Ahmad, S., Smith, R. (1989). Chemical Engineering Research and Design 67, 481-494; Ahmad, S., "
               "Linnhoff, B., Smith, R. (1988). Journal of Heat Transfer 110(2), 304-309"),
    "capital": ("Capital and total annual cost targets before design",
                "cost targets and their optimum against ΔTmin",
                "Linnhoff, B., Ahmad, S. (1990). Cost optimum heat exchanger networks - 1. Computers & Chemical "
                "Engineering 14(7), 729-750. doi:10.1016/0098-1354(90)87083-2"),
    "brent": ("Bounded scalar minimisation", "the ΔTmin of lowest total annual cost target between breakpoints",
              "Brent, R. P. (1973). Algorithms for Minimization without Derivatives, ch. 5"),
    "transshipment": ("Papoulias–Grossmann transshipment LP and minimum-matches MILP",
                      "the fewest matches and their heat loads, per pinch subnetwork",
                      "Papoulias, S. A., Grossmann, I. E. (1983), as above; heat-load distribution after Floudas, "
                      "C. A., Ciric, A. R., Grossmann, I. E. (1986). AIChE Journal 32(2), 276-290"),
    "pdm": ("Pinch decomposition (no heat across the pinch)", "the design split into subnetworks at the pinch",
            "Linnhoff, B., Hindmarsh, E. (1983). The pinch design method for heat exchanger networks. Chemical "
            "Engineering Science 38(5), 745-763"),
    "stagewise": ("Yee–Grossmann stagewise superstructure",
                  "placing the matches with temperatures and stream splits (restricted to the planned matches)",
                  "Yee, T. F., Grossmann, I. E. (1990). Simultaneous optimization models for heat integration—II. "
                  "Heat exchanger network synthesis. Computers & Chemical Engineering 14(10), 1165-1184. "
                  "doi:10.1016/0098-1354(90)85010-8"),
    "tac": ("Yee–Grossmann stagewise MILP with exact-cost refinement",
            "topologies of low total annual cost, loads and temperatures refined against the exact cost (SLSQP), "
            "iterated local search over topologies",
            "Yee, T. F., Grossmann, I. E. (1990), as above"),
    "lmtd": ("Counter-current LMTD sizing, segment by segment", "areas of the designed units",
             "the log-mean temperature difference of heat-transfer texts; U from 1/U = 1/h_hot + 1/h_cold"),
    "crf": ("Capital recovery factor", "annualised capital",
            "the annuity (A/P) factor of engineering economics, i(1 + i)ⁿ/[(1 + i)ⁿ − 1]"),
    "entu": ("ε-NTU rating", "simulation of the existing network at its areas",
             "Incropera, F. P., DeWitt, D. P., Bergman, T. L., Lavine, A. S. (2007). Fundamentals of Heat and "
             "Mass Transfer, 6th ed., Wiley, Table 11.3"),
    "retrofit": ("Cross-pinch analysis, area efficiency α and retrofit targets at constant α",
                 "diagnosis of the existing network",
                 "Tjoe, T. N., Linnhoff, B. (1986). Using pinch technology for process retrofit. Chemical "
                 "Engineering Progress 82(4), 47-60 (citation from memory, unverified)"),
    "retrofit_options": ("Retrofit options: candidate changes rated by ε-NTU simulation, sets of them chosen by "
                         "a MILP, ranked by net present value",
                         "ranked, costed retrofit options for the existing network",
                         "heatloom's own formulation (heatloom.retrofit.options); net present value with the "
                         "annuity present-worth factor of engineering economics, [1 − (1 + i)⁻ⁿ]/i"),
    "network_pinch": ("Network pinch", "what limits more recovery in the existing network",
                      "Asante, N. D. K., Zhu, X. X. (1997). Transactions of the IChemE 75(A), 349-360 (citation "
                      "from memory, unverified)"),
}


def methods_used(study: Study) -> list[tuple[str, str, str]]:
    """(method, what it did in this run, reference) of every published method the run used, in order."""
    done = lambda x: x is not None and not isinstance(x, NotComputed)  # noqa: E731
    keys = []
    if done(study.targets):
        keys += ["pta", "curves"]
        if study.targets.placement is not None:
            keys.append("placement")
    if done(study.area):
        keys += ["area", "units", "shells", "capital"]
    if done(study.sweep):
        keys += [k for k in ("area", "units", "capital") if k not in keys] + ["brent"]
    if done(study.design):
        keys += ["transshipment", "pdm", "stagewise", "lmtd"]
    if done(study.tac):
        keys += ["tac"] + (["lmtd"] if "lmtd" not in keys else [])
    if (done(study.design) or done(study.tac) or done(study.area)) and not study.costs.annualised:
        keys.append("crf")
    if done(study.diagnosis):
        keys += ["entu", "retrofit"]
        if "area" not in keys and study.diagnosis.efficiency is not None:
            keys.append("area")
        keys.append("network_pinch")
    if done(study.retrofit):
        keys += ["entu", "retrofit_options"] + (["crf"] if not study.costs.annualised else [])
    return [_REFERENCES[k] for k in dict.fromkeys(keys)]


# --------------------------------------------------------------------------------------------------
# HTML pieces


def _esc(text) -> str:
    return html.escape(str(text), quote=True)


def _is_number(v) -> bool:
    return isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, (bool, np.bool_))


def _cell(v, unit: str | None, text_class: str = "") -> str:
    from .workbook import format_number

    if _is_number(v):
        x = v.item() if hasattr(v, "item") else v
        if isinstance(x, float) and not math.isfinite(x):
            return '<td class="num na">–</td>'
        return f'<td class="num" data-value="{_esc(repr(x))}">{_esc(format_number(x, unit))}</td>'
    if v is None:
        return '<td class="na">–</td>'
    return f'<td class="{text_class}">{_esc(v)}</td>' if text_class else f"<td>{_esc(v)}</td>"


def _frame_table(frame, caption: str, table_id: str | None = None, *, max_rows: int | None = None) -> str:
    """A pandas frame as an HTML table, numbers formatted by the unit in their column header."""
    from .workbook import column_units

    units = column_units(frame)
    ident = f' id="{_esc(table_id)}"' if table_id else ""
    head = "".join(f'<th scope="col">{_esc(c)}</th>' for c in frame.columns)
    rows = []
    data = list(frame.itertuples(index=False, name=None))
    shown = data if max_rows is None or len(data) <= max_rows else data[:max_rows]
    for values in shown:
        rows.append("<tr>" + "".join(_cell(v, u) for v, u in zip(values, units)) + "</tr>")
    more = ""
    if len(shown) < len(data):
        more = f'<p class="more">{len(data) - len(shown)} more rows in the workbook.</p>'
    return (f'<div class="table-wrap"><table{ident}><caption>{_esc(caption)}</caption><thead><tr>{head}</tr>'
            f"</thead><tbody>{''.join(rows)}</tbody></table></div>{more}")


def _long_table(rows, caption: str, table_id: str | None = None) -> str:
    """(quantity, value, unit) rows as a three-column table, each value formatted by its unit."""
    ident = f' id="{_esc(table_id)}"' if table_id else ""
    body = "".join(f"<tr><th scope=\"row\">{_esc(q)}</th>{_cell(v, u, 'val')}<td>{_esc(u)}</td></tr>"
                   for q, v, u in rows)
    return (f'<div class="table-wrap"><table class="facts"{ident}><caption>{_esc(caption)}</caption>'
            '<thead><tr><th scope="col">quantity</th><th scope="col">value</th><th scope="col">unit</th></tr>'
            f"</thead><tbody>{body}</tbody></table></div>")


def _missing(what: str, reason: str) -> str:
    return f'<div class="not-computed"><strong>Not computed: {_esc(what)}.</strong> {_esc(reason)}</div>'


def _notes(items: Sequence[str], title: str = "Notes") -> str:
    if not items:
        return ""
    return f"<h3>{_esc(title)}</h3><ul class=\"notes\">" + "".join(f"<li>{_esc(n)}</li>" for n in items) + "</ul>"


def _p(text: str) -> str:
    return f"<p>{_esc(text)}</p>"


class _Page:
    """Collects sections and figures while the report is built."""

    def __init__(self) -> None:
        self.figures = 0
        self.sections: list[tuple[str, str, str]] = []    # (id, title, body)
        self.skipped: list[tuple[str, str]] = []

    def figure(self, key: str, make: Callable[[], object], caption: str, *, wide: bool = False) -> str:
        try:
            svg = figure_svg(make(), key, caption)
            if wide:   # grid diagrams grow with the number of units: keep their own size, up to the page width
                svg = svg.replace('class="chart"', 'class="chart wide"', 1)
        except Exception as e:  # noqa: BLE001 - a figure that fails must not cost the whole report
            self.skipped.append((f"figure: {caption}", f"{type(e).__name__}: {e}"))
            return _missing(f"figure “{caption}”", f"drawing it failed ({type(e).__name__}: {e})")
        self.figures += 1
        return (f'<figure id="{_esc(key)}" class="figure">{svg}<figcaption><strong>Figure {self.figures}.</strong> '
                f"{_esc(caption)}</figcaption></figure>")

    def missing(self, section: str, what: str, reason: str) -> str:
        self.skipped.append((section, f"{what}: {reason}"))
        return _missing(what, reason)


def _done(x) -> bool:
    return x is not None and not isinstance(x, NotComputed)


def _solves_table(solves) -> str:
    import pandas as pd

    if not solves:
        return ""
    frame = pd.DataFrame([{"problem": r.problem, "solver": r.solver, "status": r.status.value,
                           "gap [-]": r.gap, "time [s]": r.wall_time, "time limit [s]": r.time_limit}
                          for r in solves])
    return _frame_table(frame, "Solves behind the network (status, relative gap, wall time)")


# --------------------------------------------------------------------------------------------------
# sections


def _summary(study: Study, page: _Page) -> str:
    cur = study.currency
    rows = []
    t = study.targets
    if _done(t):
        rows += [("minimum hot utility", t.hot_utility, "kW"), ("minimum cold utility", t.cold_utility, "kW"),
                 ("maximum heat recovery", t.heat_recovery, "kW")]
        if t.pinch is not None:
            rows += [("pinch, hot side", t.pinch.hot, "°C"), ("pinch, cold side", t.pinch.cold, "°C")]
    if _done(study.area):
        rows += [("area target", study.area.area, "m²"),
                 ("total annual cost target", study.area.total_annual_cost, f"{cur}/yr")]
    if _done(study.sweep):
        o = study.sweep.optimum
        lo, hi = study.sweep.dt_min_range
        at_end = " (at an end of the swept range: see section 5)" if min(o.dt_min - lo, hi - o.dt_min) <= 0.011 else ""
        rows += [(f"ΔTmin of lowest total annual cost target{at_end}", o.dt_min, "K"),
                 ("total annual cost target there", o.total_annual_cost, f"{cur}/yr")]
    for label, net in (("maximum-energy-recovery network", study.design), ("lowest-cost network", study.tac)):
        if _done(net):
            rows.append((f"{label}: units", net.units, "-"))
            if net.total_annual_cost is not None:
                rows.append((f"{label}: total annual cost", net.total_annual_cost, f"{cur}/yr"))
    if _done(study.diagnosis):
        d = study.diagnosis
        rows += [("existing network: hot utility used", d.simulation.hot_utility, "kW"),
                 ("existing network: hot utility beyond the target", d.cross_pinch.excess, "kW")]
        if d.efficiency is not None:
            rows.append(("existing network: area efficiency α", d.efficiency.alpha, "-"))
    if _done(study.retrofit) and study.retrofit.best is not None:
        b = study.retrofit.best
        rcur = study.retrofit.costs.currency
        rows += [("retrofit option 1 (largest NPV): hot utility saved", b.saving, "kW"),
                 ("retrofit option 1: investment", b.investment, rcur),
                 ("retrofit option 1: simple payback", b.payback_years, "yr"),
                 ("retrofit option 1: net present value", b.npv, rcur)]
    intro = _p(f"Study of {len(study.streams.hot)} hot and {len(study.streams.cold)} cold streams at ΔTmin "
               f"{study.dt_min:g} K ({study.dt_min_note}). Every number below is a screening estimate; see "
               "“Safety and limits”.")
    return intro + _long_table(rows, "Key results", "summary-table")


def _inputs(study: Study, page: _Page) -> str:
    from .workbook import utility_frame

    parts = [_p(f"Stream table: {study.sources.get('stream table', study.streams.source or 'given in code')}, "
                "converted to canonical units (°C, kW/K, kW/(m²·K)); consecutive rows of one name are segments "
                "of one stream."),
             _frame_table(study.streams.to_frame(), "Process streams as read", "streams-table")]
    if study.utilities is None:
        parts.append(_p("No utility table was given. The energy targets assume ideal utilities, hotter and colder "
                        "than every process temperature; designs and costs use the two assumed utilities below."))
    parts.append(_frame_table(utility_frame(study), "Utilities " + ("given" if study.utilities is not None else
                                                                   "assumed") + " and their duties at the targets",
                              "utilities-table"))
    return "".join(parts)


def _assumptions(study, page: _Page) -> str:
    """The assumptions table and notes of any study with ``assumption_rows()`` and ``notes`` (process or site)."""
    body = "".join(f"<tr><th scope=\"row\">{_esc(a)}</th><td>{_esc(v)}</td><td>{_esc(b)}</td></tr>"
                   for a, v, b in study.assumption_rows())
    table = ('<div class="table-wrap"><table id="assumptions-table"><caption>Assumptions and defaults in force'
             '</caption><thead><tr><th scope="col">assumption</th><th scope="col">value</th><th scope="col">basis'
             f"</th></tr></thead><tbody>{body}</tbody></table></div>")
    return table + _notes(study.notes, "Notes on the inputs")


def _targets(study: Study, page: _Page) -> str:
    from .figures import composite_figure, grand_composite_figure
    from .workbook import target_rows

    t = study.targets
    if not _done(t):
        return page.missing("Energy targets", "energy targets", t.reason)
    parts = [_long_table(target_rows(study), f"Energy targets at ΔTmin {t.dt_min:g} K", "targets-table")]
    if not _done(study.area):
        parts.append(page.missing("Energy targets", "area, units, shells and cost targets", study.area.reason))
    else:
        parts.append(f'<p class="basis">Basis of the area, units, shells and cost targets: {_esc(study.area.basis)}</p>')
    if t.placement is not None:
        cur = study.currency
        import pandas as pd

        frame = pd.DataFrame([{"utility": d.utility.name, "kind": d.utility.kind.value,
                               "T_supply [°C]": d.utility.supply_temperature,
                               "T_target [°C]": d.utility.target_temperature,
                               f"price [{cur}/(kW·yr)]": d.utility.cost, "duty [kW]": d.duty,
                               f"annual cost [{cur}/yr]": d.annual_cost} for d in t.placement.duties])
        parts.append(_frame_table(frame, "Utility levels: cheapest placement against the grand composite curve",
                                  "utility-levels-table"))
    else:
        parts.append(_p("No utility levels were given: the hot and cold utility targets are the minimum duties of "
                        "ideal utilities."))
    parts.append(page.figure("fig-composite", lambda: composite_figure(t),
                             f"Hot and cold composite curves at ΔTmin {t.dt_min:g} K, with the utility targets "
                             "and the pinch."))
    parts.append(page.figure("fig-grand-composite", lambda: grand_composite_figure(t),
                             "Grand composite curve (net heat flow against shifted temperature)"
                             + (", with the utility levels placed." if t.placement is not None else ".")))
    parts.append(_frame_table(t.table.to_frame(), "Problem table: shifted temperature intervals and the feasible "
                              "heat cascade", "problem-table"))
    return "".join(parts)


def _sweep(study: Study, page: _Page) -> str:
    import pandas as pd

    w = study.sweep
    if not _done(w):
        return page.missing("Cost targets against ΔTmin", "the ΔTmin sweep", w.reason)
    cur = w.currency
    o = w.optimum
    rows = [("ΔTmin of lowest total annual cost target", o.dt_min, "K"),
            ("total annual cost target", o.total_annual_cost, f"{cur}/yr"),
            ("capital cost target (annualised)", o.capital_cost, f"{cur}/yr"),
            ("energy cost target", o.energy_cost, f"{cur}/yr"),
            ("hot utility", o.hot_utility, "kW"), ("cold utility", o.cold_utility, "kW"),
            ("area target", o.area, "m²"), ("units target (MER)", o.units_mer, "-"), ("shells target", o.shells, "-")]
    lo, hi = w.dt_min_range
    parts = [_p(f"Targets evaluated from {lo:g} to {hi:g} K by {w.step:g} K ({len(w.points)} points, with both "
                f"sides of every breakpoint), then the optimum refined between breakpoints."),
             _long_table(rows, "Optimum of the total annual cost target", "sweep-optimum-table")]
    try:
        from .sweep_figures import cost_figure, targets_figure
    except ImportError as e:
        parts.append(page.missing("Cost targets against ΔTmin", "the sweep figures",
                                  f"heatloom.io.sweep_figures is not available ({e})"))
    else:
        parts.append(page.figure("fig-sweep-cost", lambda: cost_figure(w),
                                 "Energy, capital and total annual cost targets against ΔTmin; dotted lines "
                                 "mark steps of the unit targets."))
        parts.append(page.figure("fig-sweep-targets", lambda: targets_figure(w),
                                 "Utility targets (left axis) and area target (right axis) against ΔTmin."))
    if w.breakpoints:
        frame = pd.DataFrame([{"ΔTmin low [K]": b.low, "ΔTmin high [K]": b.high, "change": b.change}
                              for b in w.breakpoints])
        parts.append(_frame_table(frame, "Breakpoints: where the pinch, the unit targets or feasibility change",
                                  "sweep-breakpoints-table"))
    grid = [p for p in w.points if p.kind == "grid"]
    every = max(1, -(-len(grid) // 15))
    shown = grid[::every] + ([grid[-1]] if grid and grid[::every][-1] is not grid[-1] else [])
    frame = pd.DataFrame([{"ΔTmin [K]": p.dt_min, "feasible": "yes" if p.feasible else "no",
                           "hot utility [kW]": p.hot_utility, "cold utility [kW]": p.cold_utility,
                           "area [m²]": p.area, "units MER [-]": p.units_mer,
                           f"capital [{cur}/yr]": p.capital_cost, f"energy [{cur}/yr]": p.energy_cost,
                           f"total [{cur}/yr]": p.total_annual_cost} for p in shown])
    parts.append(_frame_table(frame, "Targets at selected ΔTmin (every point is in the workbook)", "sweep-table"))
    parts.append(_notes(list(w.notes)))
    return "".join(parts)


def _network_section(study: Study, page: _Page, net, section: str, what: str, key: str, intro: str) -> str:
    from .figures import grid_diagram
    from .workbook import network_frame

    if not _done(net):
        return page.missing(section, what, net.reason)
    cur = net.currency or study.currency
    rows = [("units", net.units, "-")]
    if net.unit_target is not None:
        rows.append(("minimum-units target", net.unit_target, "-"))
    rows += [("hot utility", net.hot_utility, "kW"), ("cold utility", net.cold_utility, "kW"),
             ("heat recovery", net.heat_recovery, "kW")]
    if net.total_annual_cost is not None:
        rows += [("capital cost (annualised)", net.capital_cost, f"{cur}/yr"),
                 ("utility cost", net.operating_cost, f"{cur}/yr"),
                 ("total annual cost", net.total_annual_cost, f"{cur}/yr")]
    return "".join([
        _p(intro), _long_table(rows, f"The {what}", f"{key}-summary-table"),
        _frame_table(network_frame(net, cur), "Units: E exchangers, H heaters, C coolers", f"{key}-units-table"),
        page.figure(f"fig-{key}-grid", lambda: grid_diagram(net, study.streams,
                                                             approach="EMAT" if key == "tac" else "ΔTmin"),
                    f"Grid diagram of the {what}: hot streams above, cold streams below; diamonds joined by a "
                    "line are exchangers, triangles up heaters, triangles down coolers.", wide=True),
        _notes(list(net.notes)), _solves_table(net.solves)])


def _retrofit(study: Study, page: _Page) -> str:
    import pandas as pd

    from .retrofit_figures import grid_figures
    from .workbook import retrofit_rows

    d = study.diagnosis
    if not _done(d):
        return page.missing("Existing network", "the retrofit diagnosis", d.reason)
    sim = d.simulation
    facts = [r for r in retrofit_rows(study) if r[0] not in ("note", "problem")]
    parts = [_p(f"The existing network ({study.sources.get('existing network', 'given')}) simulated at its areas, "
                f"then compared with the targets at ΔTmin {d.cross_pinch.dt_min:g} K."),
             _long_table(facts, "Existing network against the targets", "retrofit-table"),
             _frame_table(sim.to_frame(), "Units as simulated at their areas", "retrofit-units-table"),
             page.figure("fig-existing-grid", lambda: grid_figures(sim, None, study.streams)[0],
                         "Grid diagram of the existing network with its simulated duties and unit names.",
                         wide=True)]
    if d.cross_pinch.units:
        frame = pd.DataFrame([{"unit": u.unit, "what": u.kind, "pinch, shifted [°C]": u.pinch,
                               "downward [kW]": u.downward, "upward [kW]": u.upward, "net [kW]": u.net}
                              for u in d.cross_pinch.units])
        parts.append(_frame_table(frame, "Heat moved across the pinch, unit by unit", "cross-pinch-table"))
    else:
        parts.append(_p("No unit moves heat across the pinch."))
    if d.curve is not None:
        parts.append(page.figure("fig-retrofit-curve", lambda: retrofit_curve_figure(d.curve),
                                 "Retrofit targets: hot utility saving against extra area, keeping the existing "
                                 "area efficiency α, and with new area working at α = 1."))
        parts.append(_frame_table(d.curve.to_frame(), "Retrofit targets against ΔTmin", "retrofit-curve-table"))
    else:
        parts.append(page.missing("Existing network", "area efficiency and retrofit curve",
                                  "; ".join(d.notes) or "not computed"))
    if d.pinch.paths:
        frame = pd.DataFrame([{"heater": p.heater, "cooler": p.cooler, "exchangers": ", ".join(p.exchangers),
                               "load shift [kW]": p.shift, "stopped by": p.limit, "why": p.reason}
                              for p in d.pinch.paths])
        parts.append(_frame_table(frame, "Utility paths: load that each could shift on its own", "paths-table"))
    parts.append(_notes(list(sim.problems), "Problems of the network as simulated"))
    parts.append(_notes([*d.notes, *sim.notes, *d.pinch.notes]))
    return "".join(parts)


def _retrofit_options(study: Study, page: _Page) -> str:
    from .retrofit_figures import grid_figures, savings_investment_figure
    from .workbook import retrofit_option_frame

    r = study.retrofit
    if not _done(r):
        return page.missing("Existing network: retrofit options", "ranked, costed retrofit options", r.reason)
    cur = r.costs.currency
    kept = ", ".join(f"{k} {b} of {a}" for k, (a, b) in r.candidates.items())
    parts = [_p(f"Changes to the existing network (added area, new exchangers, resequencing, repiping) were each "
                f"simulated at fixed areas by ε-NTU and kept only if every unit keeps at least {r.min_approach:g} K; "
                f"a MILP chose sets of them, and every set it chose was simulated again "
                f"({r.evaluations} simulations). Options are ranked by net present value at "
                f"{100 * r.costs.interest_rate:g} % over {r.costs.years:g} years; savings, investment, payback and "
                "NPV are the simulated ones."),
             f'<p class="basis">Candidates that work alone and save energy, of those tried: {_esc(kept)}. '
             f"Cost basis: {_esc(r.costs.describe())} {_esc(r.retrofit_costs.describe(cur))}</p>"]
    if not r.options:
        parts.append(_p("No retrofit option saves energy within the limits given."))
    else:
        parts.append(_frame_table(retrofit_option_frame(r), f"Retrofit options ranked by net present value "
                                  f"(money in {cur})", "retrofit-options-table"))
    parts.append(page.figure("fig-retrofit-savings", lambda: savings_investment_figure(r),
                             "Hot utility saved against investment: every working set of changes simulated (grey), "
                             "the largest saving found for each investment (steps) and the ranked options "
                             "(diamonds, numbered by rank)."))
    best = r.best
    if best is not None:
        changed = {c.unit for c in best.changes}

        def proposed():
            first, second = grid_figures(r.simulation, best.simulation, study.streams, changed=changed,
                                         label="Option 1 (largest NPV)")
            import matplotlib.pyplot as plt

            plt.close(first)
            return second

        parts.append(page.figure("fig-proposed-grid", proposed,
                                 "Grid diagram of option 1 (largest NPV) as simulated after its changes, new and "
                                 "changed units framed; compare with the existing network in the diagnosis above.",
                                 wide=True))
    parts.append(_notes(list(r.notes)))
    parts.append(_solves_table(r.solves))
    return "".join(parts)


def _safety(study: Study, page: _Page) -> str:
    items = study.cautions()
    return (f'<div class="caution"><p><strong>{_esc(items[0])}</strong></p></div>'
            + "<ul class=\"cautions\">" + "".join(f"<li>{_esc(c)}</li>" for c in items[1:]) + "</ul>")


def _methods(study: Study, page: _Page) -> str:
    used = methods_used(study)
    if not used:
        return _p("No published method was used: nothing was computed.")
    return _methods_table(used, "Published methods used")


def _methods_table(used, caption: str) -> str:
    """The (method, used for, reference) rows of a run as the report's methods table."""
    body = "".join(f"<tr><th scope=\"row\">{_esc(m)}</th><td>{_esc(w)}</td><td>{_esc(r)}</td></tr>"
                   for m, w, r in used)
    return ("<p>Only the methods this run used are listed.</p>"
            f'<div class="table-wrap"><table id="methods-table"><caption>{_esc(caption)}</caption><thead><tr>'
            '<th scope="col">method</th><th scope="col">used for</th><th scope="col">reference</th></tr></thead>'
            f"<tbody>{body}</tbody></table></div>")


def _about(study: Study, page: _Page) -> str:
    rows = [("made by", f"heatloom {study.version}"), ("made on", study.created)]
    rows += [(f"input: {k}", v) for k, v in study.sources.items()]
    rows.append(("workbook", "study.xlsx beside this page: every table, one sheet per result"))
    return _about_table(rows, study.settings.command)


def _about_table(rows, command: str) -> str:
    """The report's "about" table: (item, value) rows, then the command line when there is one."""
    rows = [*rows, ("command", command)] if command else rows
    body = "".join(f"<tr><th scope=\"row\">{_esc(a)}</th><td>{_esc(b)}</td></tr>" for a, b in rows)
    return f'<div class="table-wrap"><table id="about-table"><tbody>{body}</tbody></table></div>'


# --------------------------------------------------------------------------------------------------
# the page


_CSS = """
:root { color-scheme: light; }
body { margin: 0; background: #ffffff; color: #1d1d1d; line-height: 1.45; font-size: 15px;
  font-family: "DejaVu Sans", "Segoe UI", "Helvetica Neue", Arial, sans-serif; }
header, nav, main, footer { max-width: 1120px; margin: 0 auto; padding: 0 28px; }
header { padding-top: 26px; padding-bottom: 12px; border-bottom: 3px solid #8c2d19; }
h1 { font-size: 1.75em; margin: 0 0 4px 0; }
.lede { color: #444444; margin: 0; }
nav ol { columns: 2; margin: 10px 0 0 0; padding-left: 22px; }
nav a, main a { color: #2f4b7c; }
h2 { font-size: 1.3em; margin: 2.1em 0 0.6em 0; padding-bottom: 3px; border-bottom: 1px solid #b5b5b5; }
h3 { font-size: 1.05em; margin: 1.4em 0 0.4em 0; }
.table-wrap { overflow-x: auto; }
table { border-collapse: collapse; margin: 0.5em 0 1.1em 0; font-size: 0.86em; }
caption { text-align: left; font-weight: bold; padding: 4px 0 5px 0; }
th, td { padding: 3px 9px; border-bottom: 1px solid #dddddd; vertical-align: top; text-align: left; }
thead th { background: #f1f1f1; border-bottom: 2px solid #555555; }
tbody th { font-weight: normal; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
td.na { color: #777777; text-align: center; }
table.facts td.num { min-width: 7em; }
.not-computed { border-left: 5px solid #7a7a7a; background: #f3f3f3; padding: 7px 12px; margin: 0.8em 0; }
.caution { border-left: 5px solid #8c2d19; background: #f8efec; padding: 2px 14px; margin: 0.8em 0; }
figure { margin: 1.2em 0 1.8em 0; }
figure svg.chart { display: block; width: 100%; max-width: 820px; height: auto; }
figure svg.chart.wide { width: auto; max-width: 100%; }
#assumptions-table tbody th { min-width: 10em; }
td.val { text-align: right; }
p.basis { font-size: 0.9em; color: #333333; }
figcaption { font-size: 0.88em; color: #3a3a3a; margin-top: 4px; }
.more { font-size: 0.85em; color: #555555; margin-top: -0.6em; }
footer { margin-top: 3em; padding-top: 10px; padding-bottom: 30px; border-top: 1px solid #b5b5b5;
  font-size: 0.85em; color: #555555; }
@media print { nav { display: none; } figure, table { break-inside: avoid; } body { font-size: 11pt; } }
"""


@dataclass(frozen=True)
class RenderedReport:
    """The HTML of a study report and what it holds.

    Attributes
    ----------
    html : str
    sections : tuple of (str, str)
        (id, title) of each section, in order.
    figures : int
        Figures in the page (each an inline ``<svg>``).
    not_computed : tuple of (str, str)
        (where, why) of every result or figure the report had to leave out.
    """

    html: str
    sections: tuple[tuple[str, str], ...]
    figures: int
    not_computed: tuple[tuple[str, str], ...]


def render_report(study: Study) -> RenderedReport:
    """The study as one self-contained HTML page (see the module notes).

    Parameters
    ----------
    study : Study

    Returns
    -------
    RenderedReport

    Examples
    --------
    Energy targets only (invented streams): every section is there, those not computed say so.

    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [60, 120], [2.0, 2.5])
    >>> r = render_report(Study("demo", s, 10.0, "given", target(s, 10.0)))
    >>> r.figures, [k for k, _ in r.sections][:4], r.html.count("<svg")
    (2, ['summary', 'inputs', 'assumptions', 'targets'], 2)
    >>> [w for w, _ in r.not_computed]
    ['Energy targets', 'Cost targets against ΔTmin', 'Network for maximum energy recovery', 'Network of lowest total annual cost']
    """
    page = _Page()
    plan = [("summary", "Summary", _summary), ("inputs", "Input data", _inputs),
            ("assumptions", "Assumptions and defaults", _assumptions), ("targets", "Energy targets", _targets),
            ("sweep", "Cost targets against ΔTmin", _sweep),
            ("design", "Network for maximum energy recovery",
             lambda s, p: _network_section(s, p, s.design, "Network for maximum energy recovery",
                                           "maximum-energy-recovery network", "design",
                                           f"Maximum energy recovery at ΔTmin {s.dt_min:g} K with the fewest units, "
                                           "every unit sized and costed and checked for its energy balance and "
                                           "ΔTmin at both ends.")),
            ("tac", "Network of lowest total annual cost",
             lambda s, p: _network_section(s, p, s.tac, "Network of lowest total annual cost",
                                           "lowest-total-annual-cost network", "tac",
                                           "The network of lowest total annual cost found by the search (no "
                                           "ΔTmin, only the exchanger minimum approach EMAT; a heuristic, not a "
                                           "proven optimum)."))]
    if study.diagnosis is not None:
        plan.append(("retrofit", "Existing network: retrofit diagnosis", _retrofit))
    if study.retrofit is not None:
        plan.append(("retrofit_options", "Existing network: retrofit options", _retrofit_options))
    plan += [("safety", "Safety and limits", _safety), ("methods", "Methods and references", _methods),
             ("about", "About this report", _about)]
    return build_page(study, plan, page, lede="Heat-integration study")


def build_page(study, plan, page: _Page, *, lede: str, workbook: str = "study.xlsx") -> RenderedReport:
    """Build every section of a plan into one page (shared by the study and the site reports).

    Parameters
    ----------
    study : object
        With ``title``, ``version``, ``created`` and ``safety_note``; passed to each section builder.
    plan : sequence of (str, str, callable)
        (id, title, build) of each section, in order; ``build(study, page)`` returns the section's HTML.
    page : _Page
    lede : str
        What the page is ("Heat-integration study", "Site study").
    workbook : str
        Name of the workbook written beside the page.
    """
    body = []
    for number, (key, title, build) in enumerate(plan, 1):
        body.append(f'<section id="{key}"><h2>{number}. {_esc(title)}</h2>{build(study, page)}</section>')
        page.sections.append((key, title, ""))
    sections = tuple((k, t) for k, t, _ in page.sections)
    nav = "".join(f'<li><a href="#{k}">{_esc(t)}</a></li>' for k, t in sections)
    skipped = ""
    if page.skipped:
        skipped = ('<p class="lede">Not computed in this run: ' + "; ".join(_esc(w) for w, _ in page.skipped)
                   + " (each section says why).</p>")
    doc = (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8" />\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1" />\n'
        f'<meta name="generator" content="heatloom {_esc(study.version)}" />\n'
        f'<meta name="heatloom-figures" content="{page.figures}" />\n'
        f'<meta name="heatloom-sections" content="{len(sections)}" />\n'
        f"<title>{_esc(study.title)}</title>\n<style>{_CSS}</style>\n</head>\n<body>\n"
        f"<header><h1>{_esc(study.title)}</h1>"
        f'<p class="lede">{_esc(lede)} made with heatloom {_esc(study.version)} on {_esc(study.created)}. '
        f'This report has <span id="section-count">{len(sections)}</span> sections and '
        f'<span id="figure-count">{page.figures}</span> figures; every table is also in the workbook '
        f"{_esc(workbook)}.</p>{skipped}</header>\n"
        f'<nav aria-label="Contents"><ol>{nav}</ol></nav>\n<main>\n' + "\n".join(body) + "\n</main>\n"
        f"<footer>{_esc(study.safety_note or defaults.SAFETY_TEXT)}</footer>\n</body>\n</html>\n")
    return RenderedReport(doc, sections, page.figures, tuple(page.skipped))
