"""Figures of a ΔTmin sweep, in the project's one visual style (:data:`heatloom.io.figures.STYLE`).

* :func:`cost_figure`: energy, capital and total annual cost targets against ΔTmin, the optimum marked
  and labelled in free space (:func:`heatloom.io.figures.place_label`, clear of every curve), steps of the unit target as
  dotted lines, designed networks as open circles, and a caution under the axes when the optimum ΔTmin is
  under 3 K (:func:`heatloom.defaults.small_dt_min_caution`);
* :func:`targets_figure`: hot and cold utility targets (left axis) and the area target (right axis)
  against ΔTmin.

Hot quantities (energy, hot utility) take the hot style, cold/capital quantities the cold style (long
dashes), totals and area the neutral style.  Money, duty and area axes carry thousands separators.  Functions return matplotlib figures; writing them is
:class:`heatloom.io.export.OutputDirectory`'s job.
"""

from __future__ import annotations

import numpy as np
from matplotlib.ticker import StrMethodFormatter

from ..defaults import small_dt_min_caution
from .figures import STYLE, new_axes, place_label

__all__ = ["cost_figure", "targets_figure", "THOUSANDS"]

THOUSANDS = "{x:,.0f}"
"""Tick format of money, duty and area axes: whole numbers with thousands separators."""

def _series(sweep, name: str) -> tuple[np.ndarray, np.ndarray]:
    x = np.array([p.dt_min for p in sweep.points], dtype=float)
    y = np.array([getattr(p, name) if p.feasible else np.nan for p in sweep.points], dtype=float)
    return x, y


def _unit_steps(sweep) -> list[float]:
    steps = {"units", "units_mer", "shells", "feasibility"}
    return [0.5 * (b.low + b.high) for b in sweep.breakpoints if steps & set(b.changes)]


def cost_figure(sweep, *, title: str | None = None):
    """Energy, capital and total annual cost targets against ΔTmin.

    Parameters
    ----------
    sweep : heatloom.studies.sweep.Sweep
    title : str, optional
    """
    cur = sweep.currency
    fig, ax = new_axes(title or "Cost targets against ΔTmin", "ΔTmin [K]", f"Annual cost [{cur}/year]")
    x, energy = _series(sweep, "energy_cost")
    _, capital = _series(sweep, "capital_cost")
    _, total = _series(sweep, "total_annual_cost")
    ax.plot(x, energy, label="energy (utilities)", **STYLE["hot"])
    ax.plot(x, capital, label="capital (annualised)", **STYLE["cold"])
    ax.plot(x, total, label="total annual cost", **STYLE["net"])
    for xs in _unit_steps(sweep):
        ax.axvline(xs, **STYLE["pinch"])
    o = sweep.optimum
    ax.plot([o.dt_min], [o.total_annual_cost], marker="o", markersize=7, color=STYLE["net"]["color"],
            linestyle="none")
    done = [d for d in sweep.designs if not d.error]
    if done:
        ax.plot([d.dt_min for d in done], [d.total_annual_cost for d in done], marker="o", markersize=8,
                markerfacecolor="white", markeredgecolor=STYLE["net"]["color"], linestyle="none",
                label="designed network (total)")
    ax.set_ylim(bottom=0, top=ax.get_ylim()[1] * 1.12)   # headroom for the optimum's label
    ax.yaxis.set_major_formatter(StrMethodFormatter(THOUSANDS))
    # legends go under the axes, where no curve can sit
    ax.legend(frameon=False, fontsize=STYLE["font_size"] - 1, loc="upper center", bbox_to_anchor=(0.5, -0.14),
              ncol=4)
    caution = small_dt_min_caution(o.dt_min)
    if caution:
        fig.text(0.01, 0.01, "Caution: optimum ΔTmin under 3 K (common practice): practical only with close-approach "
                 "exchangers;\nfouling soon eats so small a driving force and control has little margin (see the "
                 "notes).", fontsize=STYLE["font_size"] - 2, color="#8c2d19", ha="left", va="bottom")
    fig.tight_layout(rect=(0, 0.08 if caution else 0, 1, 1))
    # placed last, once the layout is fixed: in free space, clear of every curve
    place_label(ax, f"optimum {o.dt_min:.2f} K\n{o.total_annual_cost:,.0f} {cur}/year", (o.dt_min, o.total_annual_cost),
                fontsize=STYLE["font_size"] - 1, color="#303030")
    return fig


def targets_figure(sweep, *, title: str | None = None):
    """Utility targets [kW] and the area target [m²] against ΔTmin.

    Parameters
    ----------
    sweep : heatloom.studies.sweep.Sweep
    title : str, optional
    """
    fig, ax = new_axes(title or "Energy and area targets against ΔTmin", "ΔTmin [K]", "Utility duty [kW]")
    x, hot = _series(sweep, "hot_utility")
    _, cold = _series(sweep, "cold_utility")
    _, area = _series(sweep, "area")
    lines = ax.plot(x, hot, label="hot utility", **STYLE["hot"])
    lines += ax.plot(x, cold, label="cold utility", **STYLE["cold"])
    ax.set_ylim(bottom=0)
    ax.yaxis.set_major_formatter(StrMethodFormatter(THOUSANDS))
    right = ax.twinx()
    right.spines[["top"]].set_visible(False)
    right.set_ylabel("Area [m²]", fontsize=STYLE["font_size"])
    right.tick_params(labelsize=STYLE["font_size"] - 1)
    lines += right.plot(x, area, label="area (right axis)", **STYLE["net"])
    right.set_ylim(bottom=0)
    right.yaxis.set_major_formatter(StrMethodFormatter(THOUSANDS))
    for xs in _unit_steps(sweep):
        ax.axvline(xs, **STYLE["pinch"])
    ax.legend(lines, [ln.get_label() for ln in lines], frameon=False, fontsize=STYLE["font_size"] - 1,
              loc="upper center", bbox_to_anchor=(0.5, -0.14), ncol=3)
    fig.tight_layout()
    return fig
