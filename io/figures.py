"""Figures in heatloom's own visual style.

One style for every plot: white background, a thin frame on two sides, labelled axes with units, hot
quantities in a dark brick red with solid lines, cold quantities in a slate blue with long dashes (so the
curves stay apart when printed in greyscale), the pinch as a dotted grey line with its temperatures written
beside it, and the utility targets as hatched bands.  Functions return matplotlib figures; writing them is
:class:`heatloom.io.export.OutputDirectory`'s job.

Figures are :class:`matplotlib.figure.Figure` objects on the Agg canvas, made without pyplot
(:func:`new_figure`): importing this module chooses no backend and changes no global setting of
matplotlib.
"""

from __future__ import annotations

import sys

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

__all__ = ["STYLE", "new_figure", "new_axes", "style_axes", "close_figure", "composite_figure",
           "grand_composite_figure"]

STYLE = {
    "hot": {"color": "#8c2d19", "linestyle": "-", "linewidth": 2.2},
    "cold": {"color": "#2f4b7c", "linestyle": (0, (7, 3)), "linewidth": 2.2},
    "net": {"color": "#303030", "linestyle": "-", "linewidth": 2.0},
    "pinch": {"color": "#7a7a7a", "linestyle": ":", "linewidth": 1.4},
    "font_size": 10,
    "figure_size": (7.0, 4.6),
}
"""The one visual style: line styles of hot, cold and net quantities and of the pinch, font size [pt] and
figure size [in]."""


def new_figure(figsize: tuple[float, float] | None = None) -> Figure:
    """An empty figure drawn by matplotlib's Agg canvas, outside pyplot.

    No backend is chosen and nothing global changes: the figure is not registered with pyplot, so no
    window can open and nothing is left to close (see :func:`close_figure`); ``fig.savefig`` writes it
    in any format.

    Parameters
    ----------
    figsize : (float, float), optional
        Width and height [in]; default ``STYLE["figure_size"]``.

    Examples
    --------
    >>> fig = new_figure()
    >>> fig.get_size_inches().tolist(), type(fig.canvas).__name__
    ([7.0, 4.6], 'FigureCanvasAgg')
    """
    fig = Figure(figsize=STYLE["figure_size"] if figsize is None else figsize)
    FigureCanvasAgg(fig)
    return fig


def style_axes(ax, *, tick_size: float | None = None) -> None:
    """Give an axes the frame of the house style: two sides only, light grid behind the data.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
    tick_size : float, optional
        Font size of the tick labels [pt]; default one point under ``STYLE["font_size"]``.
    """
    ax.spines[["top", "right"]].set_visible(False)
    ax.tick_params(labelsize=STYLE["font_size"] - 1 if tick_size is None else tick_size)
    ax.grid(True, color="#e4e4e4", linewidth=0.6)
    ax.set_axisbelow(True)


def new_axes(title: str, xlabel: str, ylabel: str) -> tuple[Figure, object]:
    """A figure of the standard size with one axes in the house style, titled and labelled.

    Parameters
    ----------
    title : str
        Written at the top left.
    xlabel, ylabel : str
        Axis labels, each with its unit in brackets (``"Heat flow [kW]"``).

    Returns
    -------
    (matplotlib.figure.Figure, matplotlib.axes.Axes)

    Examples
    --------
    >>> fig, ax = new_axes("Demo", "Heat flow [kW]", "Temperature [°C]")
    >>> ax.get_title(loc="left"), ax.get_xlabel(), ax.spines["top"].get_visible()
    ('Demo', 'Heat flow [kW]', False)
    """
    fig = new_figure()
    ax = fig.subplots()
    ax.set_title(title, fontsize=STYLE["font_size"] + 1, loc="left")
    ax.set_xlabel(xlabel, fontsize=STYLE["font_size"])
    ax.set_ylabel(ylabel, fontsize=STYLE["font_size"])
    style_axes(ax)
    return fig, ax


def close_figure(fig) -> None:
    """Let go of a figure once it is written: closed in pyplot when pyplot holds it.

    The figures of this package (:func:`new_figure`) are not held by pyplot and need nothing; a figure a
    caller made with pyplot is closed there, so that pyplot does not keep it.  pyplot is not imported here.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    """
    pyplot = sys.modules.get("matplotlib.pyplot")
    if pyplot is not None:
        pyplot.close(fig)


def composite_figure(targets, *, shifted: bool = False, title: str | None = None):
    """Hot and cold composite curves with the utility targets and the pinch.

    Parameters
    ----------
    targets : heatloom.pinch.Targets
    shifted : bool
        Plot the shifted composites instead of the real ones.
    """
    hot = targets.shifted_hot_composite() if shifted else targets.hot_composite()
    cold = targets.shifted_cold_composite() if shifted else targets.cold_composite()
    what = "Shifted composite curves" if shifted else "Composite curves"
    fig, ax = new_axes(title or f"{what}, ΔTmin = {targets.dt_min:g} K", "Heat flow [kW]",
                    "Shifted temperature [°C]" if shifted else "Temperature [°C]")
    if hot.enthalpy.size:
        ax.plot(hot.enthalpy, hot.temperature, label="hot composite", **STYLE["hot"])
    if cold.enthalpy.size:
        ax.plot(cold.enthalpy, cold.temperature, label="cold composite", **STYLE["cold"])
    ys = np.concatenate([hot.temperature, cold.temperature])
    y0, y1 = float(ys.min()), float(ys.max())
    qc, qh = targets.cold_utility, targets.hot_utility
    h_top = max(hot.enthalpy[-1] if hot.enthalpy.size else 0.0, cold.enthalpy[-1] if cold.enthalpy.size else 0.0)
    if qc > 0:
        ax.axvspan(0, qc, color=STYLE["cold"]["color"], alpha=0.10, hatch="\\\\", linewidth=0)
        ax.text(qc / 2, y0, f"cold utility\n{qc:,.0f} kW", ha="center", va="bottom",
                fontsize=STYLE["font_size"] - 1)
    if qh > 0:
        ax.axvspan(h_top - qh, h_top, color=STYLE["hot"]["color"], alpha=0.10, hatch="//", linewidth=0)
        ax.text(h_top - qh / 2, y1, f"hot utility\n{qh:,.0f} kW", ha="center", va="top",
                fontsize=STYLE["font_size"] - 1)
    for p in targets.pinches[:1]:
        x = float(np.interp(p.hot, hot.temperature, hot.enthalpy)) if hot.temperature.size else 0.0
        if shifted:
            x = float(np.interp(p.shifted, hot.temperature, hot.enthalpy))
        ax.axvline(x, **STYLE["pinch"])
        ax.annotate(f"pinch {p.hot:g} / {p.cold:g} °C", (x, p.shifted), xytext=(6, -14),
                    textcoords="offset points", fontsize=STYLE["font_size"] - 1, color="#505050")
    ax.legend(frameon=False, fontsize=STYLE["font_size"] - 1, loc="center right")
    fig.tight_layout()
    return fig


def grand_composite_figure(targets, *, title: str | None = None):
    """Grand composite curve, with the duties of the utility levels when they were placed.

    Parameters
    ----------
    targets : heatloom.pinch.Targets
    """
    g = targets.grand_composite()
    fig, ax = new_axes(title or f"Grand composite curve, ΔTmin = {targets.dt_min:g} K", "Net heat flow [kW]",
                    "Shifted temperature [°C]")
    ax.plot(g.enthalpy, g.temperature, label="grand composite", **STYLE["net"])
    for p in targets.pinches:
        ax.axhline(p.shifted, **STYLE["pinch"])
        ax.annotate(f"pinch {p.shifted:g} °C shifted", (0, p.shifted), xytext=(6, 4),
                    textcoords="offset points", fontsize=STYLE["font_size"] - 1, color="#505050")
    if targets.placement is not None:
        from ..pinch.utilities import utility_shifted_range

        # Levels stacked from the axis outwards, the mildest first: each is a line from (start, lower
        # shifted temperature) to (start + duty, upper shifted temperature), flat when isothermal.
        for hot in (True, False):
            placed = [d for d in targets.placement.duties if d.utility.is_hot == hot and d.duty > 0]
            placed.sort(key=lambda d: d.utility.coldest if hot else -d.utility.hottest)
            if not hot:
                placed.reverse()   # cold levels: the coldest sits at the axis, at the bottom of the curve
            start = 0.0
            for d in placed:
                hi, lo = utility_shifted_range(d.utility, targets.dt_min)
                style = STYLE["hot"] if hot else STYLE["cold"]
                ax.plot([start, start + d.duty], [lo, hi], color=style["color"], linewidth=1.6,
                        linestyle=style["linestyle"])
                ax.annotate(f"{d.utility.name}: {d.duty:,.0f} kW", (start + d.duty, hi), xytext=(4, 3),
                            textcoords="offset points", fontsize=STYLE["font_size"] - 1, color=style["color"])
                start += d.duty
    ax.set_xlim(left=0)
    ax.legend(frameon=False, fontsize=STYLE["font_size"] - 1, loc="best")
    fig.tight_layout()
    return fig


