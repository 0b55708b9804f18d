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

__all__ = ["STYLE", "new_figure", "new_axes", "style_axes", "close_figure", "segments_hit", "place_label",
           "composite_figure", "grand_composite_figure", "driving_force", "driving_force_figure",
           "balanced_composite_figure"]

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


# where a point's label may go (place_label), tried in turn: offsets from the point [pt] (next to it, then further
# up or down), then anywhere on a grid over the axes, nearest to the point first (with a line to the point)
_NEAR = [((10, 12), "left", "bottom"), ((-10, 12), "right", "bottom"), ((10, -12), "left", "top"),
         ((-10, -12), "right", "top"), ((10, 36), "left", "bottom"), ((-10, 36), "right", "bottom"),
         ((10, -36), "left", "top"), ((-10, -36), "right", "top"), ((10, 64), "left", "bottom"),
         ((-10, 64), "right", "bottom")]
_GRID = [(fx, fy) for fx in np.linspace(0.05, 0.95, 10) for fy in np.linspace(0.06, 0.94, 9)]


def segments_hit(box, ax, samples: int = 40) -> bool:
    """Whether a display-space box meets any line drawn in an axes (sampled along every segment).

    Parameters
    ----------
    box : matplotlib.transforms.Bbox
        In display coordinates [px].
    ax : matplotlib.axes.Axes
    samples : int, optional
        Points tested on each segment [-].
    """
    for line in ax.get_lines():
        xy = np.asarray(line.get_xydata(), dtype=float)
        if len(xy) == 0:
            continue
        pts = line.get_transform().transform(xy)
        if len(pts) == 1:
            pts = np.vstack([pts, pts])
        w = np.linspace(0.0, 1.0, samples)[:, None, None]
        dense = (pts[:-1][None] * (1 - w) + pts[1:][None] * w).reshape(-1, 2)
        dense = dense[np.all(np.isfinite(dense), axis=1)]
        if dense.size and np.any((dense[:, 0] >= box.x0) & (dense[:, 0] <= box.x1) & (dense[:, 1] >= box.y0)
                                 & (dense[:, 1] <= box.y1)):
            return True
    return False


def place_label(ax, text: str, point: tuple[float, float], **kw):
    """Write a label for a point where it meets no line of the axes and stays inside them.

    Tries places next to the point, then further up and down, then every node of a grid over the axes,
    nearest to the point first, with a thin line to the point; keeps the first whose box (measured by
    drawing) lies inside the axes and meets no line.  When none is free, the free-most place is the first
    grid node: the label then sits at the top left.  Returns the annotation.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
    text : str
    point : (float, float)
        The point, in data coordinates.
    **kw
        Passed to :meth:`matplotlib.axes.Axes.annotate` (font size, colour).
    """
    fig = ax.figure
    renderer = fig.canvas.get_renderer()
    frame = ax.get_window_extent(renderer)
    px, py = ax.transAxes.inverted().transform(ax.transData.transform(point))
    grid = sorted(_GRID, key=lambda g: (g[0] - px) ** 2 + (g[1] - py) ** 2)
    tries = [dict(xytext=o, textcoords="offset points", ha=ha, va=va) for o, ha, va in _NEAR]
    tries += [dict(xytext=g, textcoords="axes fraction", ha="center", va="center") for g in grid]
    tries.append(dict(xytext=(0.02, 0.97), textcoords="axes fraction", ha="left", va="top"))
    for k, where in enumerate(tries):
        label = ax.annotate(text, point, bbox={"facecolor": "white", "edgecolor": "none", "pad": 1.0}, **where,
                            **kw)
        box = label.get_window_extent(renderer)
        inside = (box.x0 >= frame.x0 and box.x1 <= frame.x1 and box.y0 >= frame.y0 and box.y1 <= frame.y1)
        if (inside and not segments_hit(box, ax)) or k == len(tries) - 1:
            break
        label.remove()
    if where["textcoords"] == "axes fraction":
        # a thin line from the nearest edge of the label to the point (a separate artist, so that the
        # label's own box stays the text's)
        dx, dy = ax.transData.transform(point)
        edge = (min(max(dx, box.x0), box.x1), min(max(dy, box.y0), box.y1))
        ax.annotate("", point, xytext=tuple(ax.transAxes.inverted().transform(edge)), textcoords="axes fraction",
                    arrowprops={"arrowstyle": "-", "color": "#909090", "linewidth": 0.8, "shrinkA": 0,
                                "shrinkB": 4})
    return label


def composite_figure(targets, *, shifted: bool = False, title: str | None = None):
    """Hot and cold composite curves with the utility targets and the pinch.

    Parameters
    ----------
    targets : heatloom.pinch.Targets
    shifted : bool
        Plot the shifted composites instead of the real ones; the pinch is then labelled with its shifted
        temperature (the scale of the plot), otherwise with its hot- and cold-side temperatures.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> [t.get_text() for t in composite_figure(target(s, 10), shifted=True).axes[0].texts][-1]
    'pinch 85 °C shifted'
    >>> [t.get_text() for t in composite_figure(target(s, 10)).axes[0].texts][-1]
    'pinch 90 / 80 °C'
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
        text = f"pinch {p.shifted:g} °C shifted" if shifted else f"pinch {p.hot:g} / {p.cold:g} °C"
        ax.annotate(text, (x, p.shifted), xytext=(6, -14),
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




def _side_values(curve, h: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Temperatures of a composite at heat flows ``h`` [°C], approached from below and from above in H.

    A composite is a function of temperature; where no stream runs over a temperature range its
    temperature jumps at one heat flow, and the two limits differ.
    """
    e, t = curve.enthalpy, curve.temperature
    i = np.clip(np.searchsorted(e, h, side="left"), 1, e.size - 1)
    j = np.clip(np.searchsorted(e, h, side="right") - 1, 0, e.size - 2)

    def on(a, b):
        span = e[b] - e[a]
        w = np.where(span > 0, (h - e[a]) / np.where(span > 0, span, 1.0), 0.0)
        return t[a] + np.clip(w, 0.0, 1.0) * (t[b] - t[a])

    below = np.where(e[i] == h, t[i], on(i - 1, i))
    above = np.where(e[j] == h, t[j], on(j, j + 1))
    return below, above


def driving_force(targets) -> tuple[np.ndarray, np.ndarray]:
    """Temperature difference between the hot and the cold composite curve against heat flow.

    Over the heat-recovery range of the composites (where both curves exist: from the cold utility target
    to the end of the hot composite or of the cold one), at every breakpoint of either curve; where a
    curve's temperature jumps at one heat flow both values are kept, so the points draw the plot exactly
    (it is piecewise linear between them).  With one ΔTmin for every stream the smallest value is ΔTmin,
    at the pinch.

    Parameters
    ----------
    targets : heatloom.pinch.Targets

    Returns
    -------
    (ndarray, ndarray)
        Heat flow on the composite curves' axis [kW] (ascending) and ΔT = T_hot − T_cold there [K]; empty
        when the curves do not overlap.

    Examples
    --------
    Sinnott's four streams (Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3), ΔTmin 10 K:

    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> h, dt = driving_force(target(s, 10))
    >>> h.tolist(), dt.round(2).tolist()
    ([30.0, 150.0, 390.0, 480.0], [40.0, 10.0, 33.08, 49.23])
    """
    hot, cold = targets.hot_composite(), targets.cold_composite()
    if hot.enthalpy.size < 2 or cold.enthalpy.size < 2:
        return np.array([]), np.array([])
    start = max(float(hot.enthalpy[0]), float(cold.enthalpy[0]))
    end = min(float(hot.enthalpy[-1]), float(cold.enthalpy[-1]))
    if not end > start:
        return np.array([]), np.array([])
    h = np.unique(np.concatenate([[start, end], hot.enthalpy, cold.enthalpy]))
    h = h[(h >= start) & (h <= end)]
    hot_below, hot_above = _side_values(hot, h)
    cold_below, cold_above = _side_values(cold, h)
    below, above = hot_below - cold_below, hot_above - cold_above
    xs, ys = [], []
    for k in range(h.size):
        vals = [below[k]] if k > 0 else []
        if k < h.size - 1 or not vals:
            vals.append(above[k])
        for v in dict.fromkeys(float(x) for x in vals):
            xs.append(float(h[k]))
            ys.append(v)
    return np.array(xs), np.array(ys)


def driving_force_figure(targets, *, title: str | None = None):
    """The driving-force plot: ΔT between the hot and cold composite curves against heat flow.

    Shows where the composites run close (small ΔT: much area per kW) and where they leave driving force
    unused; the smallest ΔT, ΔTmin at the pinch, is marked.  The plotted points are those of
    :func:`driving_force`.

    Parameters
    ----------
    targets : heatloom.pinch.Targets
    title : str, optional

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> fig = driving_force_figure(target(s, 10))
    >>> fig.axes[0].get_ylabel(), float(fig.axes[0].lines[0].get_ydata().min())
    ('ΔT between the composites [K]', 10.0)
    """
    h, dt = driving_force(targets)
    fig, ax = new_axes(title or f"Driving-force plot, ΔTmin = {targets.dt_min:g} K", "Heat flow [kW]",
                       "ΔT between the composites [K]")
    if h.size:
        ax.plot(h, dt, label="ΔT = T hot composite − T cold composite", **STYLE["net"])
        k = int(np.argmin(dt))
        ax.axhline(targets.dt_min, **STYLE["pinch"])
        ax.set_ylim(bottom=0, top=float(dt.max()) * 1.1)
        ax.legend(frameon=False, fontsize=STYLE["font_size"] - 1, loc="upper center", bbox_to_anchor=(0.5, -0.14))
        fig.tight_layout()
        place_label(ax, f"smallest ΔT {dt[k]:.3g} K at {h[k]:,.0f} kW" + (" (pinch)" if targets.pinches else ""),
                    (float(h[k]), float(dt[k])), fontsize=STYLE["font_size"] - 1, color="#505050")
        return fig
    else:
        ax.text(0.5, 0.5, "the composite curves do not overlap: no heat recovery", transform=ax.transAxes,
                ha="center", va="center", fontsize=STYLE["font_size"], color="#505050")
    fig.tight_layout()
    return fig


def balanced_composite_figure(targets, *, title: str | None = None):
    """Balanced composite curves: the composites with the utilities added, so that both carry equal heat.

    The utilities are the levels placed against the grand composite curve when the targets were computed
    with utilities, else the two ideal utilities at the minimum duties
    (:func:`heatloom.pinch.area.target_utilities`); each is labelled with its name and duty.  The curves
    come from :func:`heatloom.pinch.area.balanced_composites` (their temperatures do not depend on the
    film coefficients, which only that function's area terms use).

    Parameters
    ----------
    targets : heatloom.pinch.Targets
    title : str, optional

    Examples
    --------
    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0])
    >>> cw = Utility("cooling water", 20, 25, 10.0, UtilityKind.COLD)
    >>> fig = balanced_composite_figure(target(s, 10, [cw]))
    >>> [t.get_text() for t in fig.axes[0].texts if t.get_text()]
    ['cooling water: 40 kW']
    """
    from ..pinch.area import balanced_composites

    # h only enters the area terms of balanced_composites; any positive value gives the same curves
    bc = balanced_composites(targets, default_film_coefficient=1.0)
    e = bc.enthalpy
    hx = np.repeat(e, 2)[1:-1]
    fig, ax = new_axes(title or f"Balanced composite curves (utilities included), ΔTmin = {targets.dt_min:g} K",
                       "Heat flow [kW]", "Temperature [°C]")
    hot_t = np.column_stack([bc.hot_low, bc.hot_high]).ravel()
    cold_t = np.column_stack([bc.cold_low, bc.cold_high]).ravel()
    ax.plot(hx, hot_t, label="balanced hot composite", **STYLE["hot"])
    ax.plot(hx, cold_t, label="balanced cold composite", **STYLE["cold"])
    marks = []
    for u, q in bc.utilities:
        t_mid = 0.5 * (u.hottest + u.coldest)
        temps = hot_t if u.is_hot else cold_t
        at = np.flatnonzero(np.isclose(temps, t_mid))
        x = float(hx[at].mean()) if at.size else float(np.interp(t_mid, temps, hx))
        style = STYLE["hot"] if u.is_hot else STYLE["cold"]
        ax.plot([x], [t_mid], marker="o", markersize=4, color=style["color"], linestyle="none")
        marks.append((f"{u.name}: {q:,.0f} kW", (x, t_mid), style["color"]))
    ax.legend(frameon=False, fontsize=STYLE["font_size"] - 1, loc="upper center", bbox_to_anchor=(0.5, -0.14),
              ncol=2)
    fig.tight_layout()
    for text, point, colour in marks:     # once the layout is fixed: each label where it meets no curve
        place_label(ax, text, point, fontsize=STYLE["font_size"] - 1, color=colour)
    return fig
