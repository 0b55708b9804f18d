"""Figure of a scenario study, in the project's one visual style (:data:`heatloom.io.figures.STYLE`).

:func:`scenario_cost_figure`: one panel per zone (at most :data:`MAX_PANELS`), total annual cost target
against ΔTmin with one line per price scenario, each scenario's optimum marked, designed networks as open
circles.  The scenario lines differ three ways at once, so that they stay apart on screen, in print, in
greyscale and for colour-blind readers: colour (the Okabe–Ito palette), dash pattern and marker; each line
is labelled directly at its right end (labels pushed apart so that they never overlap), and a legend under
the panels repeats the key.  Returns a matplotlib figure; writing it is
:class:`heatloom.io.export.OutputDirectory`'s job.

The palette: Okabe, M., Ito, K. (2008). Color Universal Design (CUD): how to make figures and presentations
that are friendly to colorblind people (colour values from memory).
"""

from __future__ import annotations

import math

from matplotlib.ticker import StrMethodFormatter

from .figures import STYLE, new_figure

__all__ = ["scenario_cost_figure", "scenario_line_style", "MAX_PANELS"]

MAX_PANELS = 12
"""Zones drawn at most (the figure says how many were left out)."""

_COLOURS = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000"]
_DASHES = ["-", (0, (7, 3)), (0, (2, 2)), (0, (7, 2, 2, 2)), (0, (1, 3)), (0, (10, 3, 2, 3, 2, 3))]
_MARKERS = ["s", "^", "D", "v", "P", "X", "<", ">"]


def scenario_line_style(k: int) -> dict:
    """Colour, dash pattern and marker of the ``k``-th scenario's line (matplotlib keywords).

    Neighbouring scenarios differ in all three; the colours repeat after 7, the dashes after 6 and the
    markers after 8, so any two of the first 168 scenarios differ in at least one.

    Examples
    --------
    >>> a, b = scenario_line_style(0), scenario_line_style(1)
    >>> a["color"] != b["color"], a["linestyle"] != b["linestyle"], a["marker"] != b["marker"]
    (True, True, True)
    """
    return {"color": _COLOURS[k % len(_COLOURS)], "linestyle": _DASHES[k % len(_DASHES)],
            "marker": _MARKERS[k % len(_MARKERS)], "markersize": 4.5, "linewidth": 1.8}


def _spread(ys: list[float], gap: float) -> list[float]:
    """Positions as close to ``ys`` as possible with at least ``gap`` between neighbours (order kept)."""
    order = sorted(range(len(ys)), key=lambda i: ys[i])
    placed = [ys[i] for i in order]
    for _ in range(len(placed)):
        moved = False
        for j in range(1, len(placed)):
            if placed[j] - placed[j - 1] < gap - 1e-9:
                mid = 0.5 * (placed[j] + placed[j - 1])
                placed[j - 1], placed[j] = mid - gap / 2, mid + gap / 2
                moved = True
        if not moved:
            break
    out = [0.0] * len(ys)
    for i, y in zip(order, placed):
        out[i] = y
    return out


def _label_ends(ax, ends: list[tuple[str, float, float, str]]) -> None:
    """Write each scenario's name right of its line's last point, pushed apart vertically [pt]."""
    if not ends:
        return
    fig = ax.figure
    to_points = 72.0 / fig.dpi
    ys = [float(ax.transData.transform((x, y))[1]) * to_points for _, x, y, _ in ends]
    gap = STYLE["font_size"] + 1.0
    for (name, x, y, colour), y0, y1 in zip(ends, ys, _spread(ys, gap)):
        ax.annotate(name, (x, y), xytext=(6, y1 - y0), textcoords="offset points", ha="left", va="center",
                    fontsize=STYLE["font_size"] - 2, color=colour, annotation_clip=False)


def scenario_cost_figure(study, *, title: str | None = None):
    """Total annual cost target against ΔTmin, per zone, one line per price scenario.

    Parameters
    ----------
    study : heatloom.studies.scenarios.ScenarioStudy
    title : str, optional
    """
    zones = list(study.zones[:MAX_PANELS])
    n = len(zones)
    cols = 1 if n == 1 else 2 if n <= 4 else 3
    rows = math.ceil(n / cols)
    w, h = STYLE["figure_size"]
    fig = new_figure((w if cols == 1 else 4.6 * cols, 0.75 * h * rows + 0.9))
    axes = fig.subplots(rows, cols, squeeze=False)
    cur = study.currency
    names = [s.name for s in study.scenarios]
    optimum = {(o.zone, o.scenario): o for o in study.optima}
    panels = []
    for ax, zone in zip(axes.flat, zones):
        ends = []
        for k, scen in enumerate(names):
            mine = [c for c in study.cases if c.zone == zone and c.scenario == scen]
            style = scenario_line_style(k)
            xs = [c.dt_min for c in mine]
            ys = [c.targets.total_annual_cost if c.targets.feasible else math.nan for c in mine]
            ax.plot(xs, ys, label=scen, markevery=max(1, len(xs) // 6), **style)
            finite = [(x, y) for x, y in zip(xs, ys) if math.isfinite(y)]
            if finite:
                ends.append((scen, *finite[-1], style["color"]))
            o = optimum.get((zone, scen))
            if o is not None and o.optimum is not None:
                ax.plot([o.optimum.dt_min], [o.optimum.total_annual_cost], marker="o", markersize=6,
                        color=style["color"], markeredgecolor="#202020", linestyle="none")
            done = [c.design for c in mine if c.design is not None and not c.design.error]
            if done:
                ax.plot([d.dt_min for d in done], [d.total_annual_cost for d in done], marker="o", markersize=7,
                        markerfacecolor="white", markeredgecolor=style["color"], linestyle="none")
        ax.set_title(zone, fontsize=STYLE["font_size"])
        ax.set_xlabel("ΔTmin [K]", fontsize=STYLE["font_size"] - 1)
        ax.set_ylabel(f"TAC target [{cur}/year]", fontsize=STYLE["font_size"] - 1)
        ax.tick_params(labelsize=STYLE["font_size"] - 2)
        ax.grid(True, color="#e0e0e0", linewidth=0.6)
        ax.spines[["top", "right"]].set_visible(False)
        ax.set_ylim(bottom=0)
        ax.yaxis.set_major_formatter(StrMethodFormatter("{x:,.0f}"))
        panels.append((ax, ends))
    for ax in list(axes.flat)[n:]:
        ax.set_visible(False)
    handles, labels = axes.flat[0].get_legend_handles_labels()
    fig.legend(handles, labels, loc="lower center", ncol=min(4, len(labels)), frameon=False,
               fontsize=STYLE["font_size"] - 1)
    heading = title or "Total annual cost target against ΔTmin, by zone and price scenario"
    if len(study.zones) > MAX_PANELS:
        heading += f" (first {MAX_PANELS} of {len(study.zones)} zones)"
    fig.suptitle(heading + "\n(dots: optimum; open circles: designed networks)", fontsize=STYLE["font_size"])
    legend_rows = math.ceil(len(labels) / 4)
    rect = (0, (0.35 + 0.3 * legend_rows) / fig.get_size_inches()[1], 1, 1)
    fig.tight_layout(rect=rect)
    for ax, ends in panels:      # once the panels have their size: the labels' spacing is in points
        _label_ends(ax, ends)
    fig.tight_layout(rect=rect)   # again, making room for the labels right of the lines
    return fig
