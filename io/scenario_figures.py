"""Figure of a scenario study, in the project's one visual style (:data:`heatloom.io.figures.STYLE`).

:func:`scenario_cost_figure`: one panel per zone (at most :data:`MAX_PANELS`), total annual cost target
against ΔTmin with one line per price scenario (shades of grey and dash patterns, so that the figure
reads in black and white), each scenario's optimum marked, designed networks as open circles.  Returns a
matplotlib figure; writing it is :class:`heatloom.io.export.OutputDirectory`'s job.
"""

from __future__ import annotations

import math

from .figures import STYLE, new_figure

__all__ = ["scenario_cost_figure", "MAX_PANELS"]

MAX_PANELS = 12
"""Zones drawn at most (the figure says how many were left out)."""

_DASHES = ["-", (0, (7, 3)), (0, (2, 2)), (0, (7, 2, 2, 2)), (0, (1, 3)), (0, (10, 3, 2, 3, 2, 3))]


def _line_style(k: int, n: int) -> dict:
    grey = 0.15 + 0.55 * (k / max(1, n - 1)) if n > 1 else 0.2
    return {"color": (grey, grey, grey), "linestyle": _DASHES[k % len(_DASHES)], "linewidth": 1.8}


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
    fig = new_figure((w if cols == 1 else 4.2 * cols, 0.75 * h * rows + 0.9))
    axes = fig.subplots(rows, cols, squeeze=False)
    cur = study.currency
    names = [s.name for s in study.scenarios]
    optimum = {(o.zone, o.scenario): o for o in study.optima}
    for ax, zone in zip(axes.flat, zones):
        for k, scen in enumerate(names):
            mine = [c for c in study.cases if c.zone == zone and c.scenario == scen]
            style = _line_style(k, len(names))
            xs = [c.dt_min for c in mine]
            ys = [c.targets.total_annual_cost if c.targets.feasible else math.nan for c in mine]
            ax.plot(xs, ys, label=scen, **style)
            o = optimum.get((zone, scen))
            if o is not None and o.optimum is not None:
                ax.plot([o.optimum.dt_min], [o.optimum.total_annual_cost], marker="o", markersize=5,
                        color=style["color"], linestyle="none")
            done = [c.design for c in mine if c.design is not None and not c.design.error]
            if done:
                ax.plot([d.dt_min for d in done], [d.total_annual_cost for d in done], marker="o", markersize=6,
                        markerfacecolor="white", markeredgecolor=style["color"], linestyle="none")
        ax.set_title(zone, fontsize=STYLE["font_size"])
        ax.set_xlabel("ΔTmin [K]", fontsize=STYLE["font_size"] - 1)
        ax.set_ylabel(f"TAC target [{cur}/year]", fontsize=STYLE["font_size"] - 1)
        ax.tick_params(labelsize=STYLE["font_size"] - 2)
        ax.grid(True, color="#e0e0e0", linewidth=0.6)
        ax.set_ylim(bottom=0)
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
    fig.tight_layout(rect=(0, (0.35 + 0.3 * legend_rows) / fig.get_size_inches()[1], 1, 1))
    return fig
