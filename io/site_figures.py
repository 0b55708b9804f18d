"""Figures of a site run, in the project's one visual style (:data:`heatloom.io.figures.STYLE`).

* :func:`site_profiles_figure`: the site source profile (heat the zones can give to the mains, drawn to
  the left of zero, solid brick red) and the site sink profile (heat they need from the mains, to the right,
  long-dashed slate blue) against the utility temperature, with every main as a horizontal line labelled
  with its name, temperature and the steam raised and used there.
* :func:`zone_profiles_figure`: the same for each zone on its own, one panel per zone.
* :func:`zone_grand_composite_figure`: each zone's grand composite curve (shifted temperature) against
  the mains, one panel per zone: every main the zone uses or raises steam into drawn as a level at its
  shifted temperature, stacked from the axis like the utility levels of a single process (steam used:
  coldest main first, the main's saturation temperature − ΔTmin/2 − site ΔT; steam raised and heat
  rejected: hottest main first, + ΔTmin/2 + site ΔT), each labelled with its duty.

Both read in greyscale: the two profiles differ by line style as well as colour, steam mains are dash-dot
grey lines and cooling mains dotted ones.  Functions return matplotlib figures; writing them is
:class:`heatloom.io.export.OutputDirectory`'s job.
"""

from __future__ import annotations

import math

import numpy as np

from .figures import STYLE, new_axes, new_figure, style_axes

__all__ = ["site_profiles_figure", "zone_profiles_figure", "zone_grand_composite_figure", "zone_main_levels"]

_STEAM_MAIN = {"color": "#505050", "linestyle": "-.", "linewidth": 1.1}
_COOLING_MAIN = {"color": "#505050", "linestyle": ":", "linewidth": 1.3}
_YLABEL = "Utility temperature [°C]"
_XLABEL = "Heat flow [kW]   (← source: heat the zones give | sink: heat they need →)"


def _draw_profiles(ax, source, sink, *, labels: bool = True) -> None:
    if source.temperature.size and np.any(source.enthalpy > 0):
        ax.plot(-source.enthalpy, source.temperature, label="source profile" if labels else None, **STYLE["hot"])
    if sink.temperature.size and np.any(sink.enthalpy > 0):
        ax.plot(sink.enthalpy, sink.temperature, label="sink profile" if labels else None, **STYLE["cold"])
    ax.axvline(0.0, color="#303030", linewidth=0.8)


def _y_limits(curves, mains) -> tuple[float, float]:
    ys = [float(t) for c in curves if c.temperature.size > 1 for t in c.temperature]
    ys += [m.temperature for m in mains]
    if not ys:
        return 0.0, 1.0
    lo, hi = min(ys), max(ys)
    pad = max(5.0, 0.06 * (hi - lo))
    return lo - pad, hi + pad


def site_profiles_figure(site, *, title: str | None = None):
    """Site source and sink profiles with the mains.

    Parameters
    ----------
    site : heatloom.pinch.site.SiteTargets
    title : str, optional
        Default: the number of zones, ΔTmin (and site ΔT) and the heat recovered through the mains.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    Two invented zones and one steam main; the main is drawn as a labelled line:

    >>> from heatloom.model import StreamTable
    >>> from heatloom.model.site import SteamMain
    >>> from heatloom.pinch.site import site_targets
    >>> a = StreamTable.from_arrays(["H1", "C1"], [200, 40], [120, 100], [2.0, 1.0])
    >>> b = StreamTable.from_arrays(["H2", "C2"], [90, 130], [40, 170], [1.0, 2.0])
    >>> fig = site_profiles_figure(site_targets({"A": a, "B": b}, [SteamMain("LP", 140.0, 50.0)], 10.0))
    >>> [t.get_text().split(":")[0] for t in fig.axes[0].texts]
    ['LP 140 °C']
    """
    dt = f"ΔTmin {site.dt_min:g} K" + (f", site ΔT {site.dt_site:g} K" if site.dt_site else "")
    summary = (f"recovered through the mains {site.recovered:,.0f} kW; site hot utility "
               f"{site.site_hot_utility:,.0f} kW (zone by zone {site.zone_by_zone_hot_utility:,.0f} kW)")
    fig, ax = new_axes(title or f"Site source and sink profiles ({len(site.zones)} zones, {dt})\n{summary}",
                    _XLABEL, _YLABEL)
    _draw_profiles(ax, site.source_profile, site.sink_profile)
    y0, y1 = _y_limits([site.source_profile, site.sink_profile], [b.main for b in site.mains])
    ax.set_ylim(y0, y1)
    left = -max(float(site.source_profile.enthalpy.max(initial=0.0)), 1.0)
    right = max(float(site.sink_profile.enthalpy.max(initial=0.0)), 1.0)
    span = right - left
    ax.set_xlim(left - 0.05 * span, right + 0.05 * span)
    for b in site.mains:
        m = b.main
        style = _STEAM_MAIN if m.is_steam else _COOLING_MAIN
        ax.axhline(m.temperature, **style)
        if m.is_steam:
            text = f"{m.name} {m.temperature:g} °C: raise {b.raised:,.0f}, use {b.used:,.0f} kW"
        else:
            text = f"{m.name} {m.temperature:g} °C (cooling): {b.site_duty:,.0f} kW"
        ax.annotate(text, (1.0, m.temperature), xycoords=("axes fraction", "data"), xytext=(-4, 3),
                    textcoords="offset points", ha="right", va="bottom", fontsize=STYLE["font_size"] - 2,
                    color="#303030", bbox={"facecolor": "white", "edgecolor": "none", "alpha": 0.85, "pad": 1.0},
                    zorder=5)
    ax.legend(frameon=True, facecolor="white", edgecolor="none", framealpha=0.9, fontsize=STYLE["font_size"] - 1,
              loc="best")
    fig.tight_layout()
    return fig


def zone_profiles_figure(site, *, title: str | None = None):
    """Each zone's source and sink profiles with the mains, one panel per zone (three to a row).

    Parameters
    ----------
    site : heatloom.pinch.site.SiteTargets
    title : str, optional
        Default: what the line styles stand for.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch.site import site_targets
    >>> a = StreamTable.from_arrays(["H1", "C1"], [200, 40], [120, 100], [2.0, 1.0])
    >>> fig = zone_profiles_figure(site_targets({"A": a, "B": a, "C": a, "D": a}, [], 10.0))
    >>> [ax.get_title(loc="left") for ax in fig.axes if ax.axison]
    ['A (ΔTmin 10 K)', 'B (ΔTmin 10 K)', 'C (ΔTmin 10 K)', 'D (ΔTmin 10 K)']
    """
    n = len(site.zones)
    cols = min(3, n)
    rows = math.ceil(n / cols)
    w, h = STYLE["figure_size"]
    fig = new_figure((max(w, 3.4 * cols), 0.75 * h * rows + 0.6))
    axes = fig.subplots(rows, cols, sharey=True, squeeze=False)
    curves = [c for z in site.zones for c in (z.source, z.sink)]
    y0, y1 = _y_limits(curves, [b.main for b in site.mains])
    for k, ax in enumerate(axes.flat):
        if k >= n:
            ax.axis("off")
            continue
        z = site.zones[k]
        style_axes(ax, tick_size=STYLE["font_size"] - 2)
        ax.set_title(f"{z.name} (ΔTmin {z.dt_min:g} K)", fontsize=STYLE["font_size"], loc="left")
        _draw_profiles(ax, z.source, z.sink, labels=False)
        for b in site.mains:
            ax.axhline(b.main.temperature, **(_STEAM_MAIN if b.main.is_steam else _COOLING_MAIN))
        ax.set_ylim(y0, y1)
        ax.set_xlabel("Heat flow [kW]", fontsize=STYLE["font_size"] - 1)
        if k % cols == 0:
            ax.set_ylabel(_YLABEL, fontsize=STYLE["font_size"] - 1)
    fig.suptitle(title or "Zone source (left, solid) and sink (right, dashed) profiles; mains dash-dot",
                 fontsize=STYLE["font_size"] + 1, x=0.01, ha="left")
    fig.tight_layout()
    return fig


def zone_main_levels(zone, mains, dt_site: float = 0.0) -> list[tuple[str, str, float, float, float]]:
    """The mains of one zone as levels on its grand composite curve.

    Parameters
    ----------
    zone : heatloom.pinch.site.ZoneTargets
    mains : sequence of heatloom.pinch.site.MainBalance
    dt_site : float, optional
        Site ΔT for steam raising and use [K].

    Returns
    -------
    list of (main, "use" / "raise" / "reject", shifted temperature [°C], start [kW], end [kW])
        Steam used, coldest main first, at T − ΔTmin/2 − site ΔT; then steam raised and heat rejected,
        hottest main first, at T + ΔTmin/2 + site ΔT; each stacked from the axis, duties of 0 left out.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.model.site import SteamMain
    >>> from heatloom.pinch.site import site_targets
    >>> a = StreamTable.from_arrays(["H1", "C1"], [200, 40], [120, 100], [2.0, 1.0])
    >>> b = StreamTable.from_arrays(["H2", "C2"], [90, 130], [40, 170], [1.0, 2.0])
    >>> site = site_targets({"A": a, "B": b}, [SteamMain("MP", 185.0, 60.0), SteamMain("LP", 140.0, 50.0)], 10.0)
    >>> zone_main_levels(site.zones[0], site.mains)
    [('MP', 'raise', 190.0, 0.0, 10.0), ('LP', 'raise', 145.0, 10.0, 100.0)]
    >>> zone_main_levels(site.zones[1], site.mains)
    [('MP', 'use', 180.0, 0.0, 80.0)]
    """
    half = 0.5 * zone.dt_min + dt_site
    by_name = {b.main.name: b.main for b in mains}
    out = []
    start = 0.0
    for m in sorted((by_name[n] for n, q in zone.used.items() if q > 0), key=lambda m: m.temperature):
        q = zone.used[m.name]
        out.append((m.name, "use", m.temperature - half, start, start + q))
        start += q
    start = 0.0
    given = [(by_name[n], "raise", q) for n, q in zone.raised.items() if q > 0]
    given += [(by_name[n], "reject", q) for n, q in zone.rejected.items() if q > 0]
    for m, what, q in sorted(given, key=lambda g: -g[0].temperature):
        out.append((m.name, what, m.temperature + half, start, start + q))
        start += q
    return out


def zone_grand_composite_figure(site, *, title: str | None = None):
    """Each zone's grand composite curve against the mains, one panel per zone (three to a row).

    The curve is the zone's own (shifted temperature, :meth:`heatloom.pinch.Targets.grand_composite`);
    the mains are the levels of :func:`zone_main_levels`: steam used (hot style), steam raised and heat
    rejected (cold style), each labelled with the main's name and duty.

    Parameters
    ----------
    site : heatloom.pinch.site.SiteTargets
    title : str, optional

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.model.site import SteamMain
    >>> from heatloom.pinch.site import site_targets
    >>> a = StreamTable.from_arrays(["H1", "C1"], [200, 40], [120, 100], [2.0, 1.0])
    >>> b = StreamTable.from_arrays(["H2", "C2"], [90, 130], [40, 170], [1.0, 2.0])
    >>> mains = [SteamMain("MP", 185.0, 60.0), SteamMain("LP", 140.0, 50.0)]
    >>> fig = zone_grand_composite_figure(site_targets({"A": a, "B": b}, mains, 10.0))
    >>> [t.get_text() for ax in fig.axes for t in ax.texts]
    ['MP raise 10 kW', 'LP raise 90 kW', 'MP use 80 kW']
    """
    n = len(site.zones)
    cols = min(3, n)
    rows = math.ceil(n / cols)
    w, h = STYLE["figure_size"]
    fig = new_figure((max(w, 3.6 * cols), 0.8 * h * rows + 0.7))
    axes = fig.subplots(rows, cols, squeeze=False)
    for k, ax in enumerate(axes.flat):
        if k >= n:
            ax.axis("off")
            continue
        z = site.zones[k]
        g = z.targets.grand_composite()
        style_axes(ax, tick_size=STYLE["font_size"] - 2)
        ax.set_title(f"{z.name} (ΔTmin {z.dt_min:g} K)", fontsize=STYLE["font_size"], loc="left")
        ax.plot(g.enthalpy, g.temperature, **STYLE["net"])
        for p in z.targets.pinches[:1]:
            ax.axhline(p.shifted, **STYLE["pinch"])
        levels = zone_main_levels(z, site.mains, site.dt_site)
        for name, what, t, q0, q1 in levels:
            style = STYLE["hot"] if what == "use" else STYLE["cold"]
            ax.plot([q0, q1], [t, t], color=style["color"], linestyle=style["linestyle"], linewidth=1.8)
            ax.annotate(f"{name} {what} {q1 - q0:,.0f} kW", (q1, t), xytext=(3, 2), textcoords="offset points",
                        fontsize=STYLE["font_size"] - 3, color=style["color"], annotation_clip=False)
        widest = max([1.0, float(g.enthalpy.max(initial=0.0)), *(q1 for *_, q1 in levels)])
        ax.set_xlim(left=0, right=widest * 1.6)   # room for the labels right of the levels
        ax.set_xlabel("Net heat flow [kW]", fontsize=STYLE["font_size"] - 1)
        if k % cols == 0:
            ax.set_ylabel("Shifted temperature [°C]", fontsize=STYLE["font_size"] - 1)
    fig.suptitle(title or "Grand composite curve of each zone against the mains (solid: steam used, dashed: steam "
                 "raised or heat rejected)", fontsize=STYLE["font_size"], x=0.01, ha="left")
    fig.tight_layout()
    return fig
