"""Figures of a retrofit study: the existing and the proposed network on grid diagrams, savings against
investment, and the retrofit targets (energy saving against extra area).

Both follow the project's one visual style (:data:`heatloom.io.figures.STYLE`).  The grid diagrams are
:func:`heatloom.io.grid_figures.grid_diagram` of :meth:`heatloom.retrofit.simulate.Simulation.to_network`, with
the unit names written beside each unit and, on the proposed network, the new and changed units framed.
"""

from __future__ import annotations

from collections.abc import Collection

from .figures import STYLE, new_axes
from .grid_figures import grid_diagram

__all__ = ["HIGHLIGHT", "grid_figures", "savings_investment_figure", "retrofit_curve_figure"]

HIGHLIGHT = {"edgecolor": "#303030", "facecolor": "none", "linestyle": (0, (3, 2)), "linewidth": 1.1}
"""Frame drawn around new and changed units on the proposed grid diagram."""


def _unit_columns(simulation) -> list[tuple[str, str, str | None]]:
    """(unit name, upper row's stream, lower row's stream or None) in the left-to-right order that
    grid_diagram draws them (exchangers, heaters, coolers, each sorted by grid column, stable)."""
    from ..model.existing import UnitRole

    column, _ = simulation.network.grid_positions()
    ordered = ([u for u in simulation.units if u.role is UnitRole.EXCHANGER]
               + [u for u in simulation.units if u.role is UnitRole.HEATER]
               + [u for u in simulation.units if u.role is UnitRole.COOLER])
    ordered.sort(key=lambda u: column[u.name])
    out = []
    for u in ordered:
        if u.role is UnitRole.EXCHANGER:
            out.append((u.name, u.hot, u.cold))
        elif u.role is UnitRole.HEATER:
            out.append((u.name, u.cold, None))
        else:
            out.append((u.name, u.hot, None))
    return out


def _grid(simulation, streams, title: str, changed: Collection[str] = ()):
    import matplotlib.patches as mpatches

    fig = grid_diagram(simulation.to_network(), streams, title=title)
    ax = fig.axes[0]
    hot = [s for s in streams if s.is_hot]
    cold = [s for s in streams if not s.is_hot]
    rows = {s.name: i for i, s in enumerate(hot)}
    rows.update({s.name: len(hot) + 0.6 + i for i, s in enumerate(cold)})
    for k, (name, top, bottom) in enumerate(_unit_columns(simulation), start=1):
        y_top = -rows[top]
        ax.text(k, y_top + 0.22, name, ha="center", va="bottom", fontsize=STYLE["font_size"] - 2, color="#505050")
        if name in changed:
            y_low = -rows[bottom] if bottom is not None else y_top
            ax.add_patch(mpatches.FancyBboxPatch((k - 0.3, y_low - 0.3), 0.6, (y_top - y_low) + 0.85,
                                                 boxstyle="round,pad=0.02", **HIGHLIGHT))
    return fig


def grid_figures(existing, proposed, streams, *, changed: Collection[str] = (), label: str = "proposed"):
    """Grid diagrams of the existing and the proposed network, unit names written, changes framed.

    Parameters
    ----------
    existing, proposed : heatloom.retrofit.simulate.Simulation
        The network as it is and after the changes (``proposed`` may be None).
    streams : heatloom.model.StreamTable
    changed : collection of str
        Names of the new and changed units (framed on the proposed diagram).
    label : str
        What the proposed network is (in its title).

    Returns
    -------
    tuple of matplotlib.figure.Figure
        (existing, proposed); proposed is None when no proposed network is given.
    """
    first = _grid(existing, streams, f"Existing network: hot utility {existing.hot_utility:,.0f} kW, "
                                     f"cold utility {existing.cold_utility:,.0f} kW")
    if proposed is None:
        return first, None
    second = _grid(proposed, streams, f"{label}: hot utility {proposed.hot_utility:,.0f} kW, cold utility "
                                      f"{proposed.cold_utility:,.0f} kW (changed units framed)", changed)
    return first, second


def savings_investment_figure(retrofit, *, title: str | None = None):
    """Hot-utility saving against investment: every working set of changes simulated, the largest saving
    found for each investment, the ranked options, and the saving the targets allow at the study's ΔTmin.

    Parameters
    ----------
    retrofit : heatloom.retrofit.options.Retrofit

    Returns
    -------
    matplotlib.figure.Figure
    """
    cur = retrofit.costs.currency
    fig, ax = new_axes(title or f"Savings against investment, ΔTmin = {retrofit.dt_min:g} K",
                    f"Investment [{cur}]", "Hot utility saved [kW]")
    if retrofit.points:
        xs, ys, _ = zip(*retrofit.points)
        ax.plot(xs, ys, linestyle="none", marker="o", markersize=3.5, color="#b0b0b0",
                label="sets of changes simulated")
    if retrofit.frontier:
        fx, fy = zip(*sorted(retrofit.frontier))
        ax.plot((0.0,) + fx, (0.0,) + fy, drawstyle="steps-post", label="largest saving found for an investment",
                **STYLE["net"])
    if retrofit.options:
        ox = [o.investment for o in retrofit.options]
        oy = [o.saving for o in retrofit.options]
        ax.plot(ox, oy, linestyle="none", marker="D", markersize=7, markerfacecolor="white",
                markeredgecolor=STYLE["hot"]["color"], markeredgewidth=1.6, label="ranked options (by NPV)")
        for o in retrofit.options:
            ax.annotate(str(o.rank), (o.investment, o.saving), xytext=(5, 4), textcoords="offset points",
                        fontsize=STYLE["font_size"] - 1, color=STYLE["hot"]["color"])
    excess = retrofit.simulation.hot_utility_excess
    if excess is not None and excess > 0:
        ax.axhline(excess, **STYLE["pinch"])
        ax.annotate(f"hot utility above the target at ΔTmin {retrofit.dt_min:g} K: {excess:,.0f} kW",
                    (0, excess), xytext=(4, -12), textcoords="offset points", fontsize=STYLE["font_size"] - 1,
                    color="#505050")
    ax.set_xlim(left=0)
    ax.set_ylim(bottom=0)
    ax.legend(frameon=False, fontsize=STYLE["font_size"] - 1, loc="lower right")
    fig.tight_layout()
    return fig


def retrofit_curve_figure(curve, *, title: str | None = None):
    """Hot utility saving against the extra area of a retrofit, at constant α and with new area at α = 1.

    Parameters
    ----------
    curve : heatloom.retrofit.diagnose.RetrofitCurve
        The retrofit targets of a diagnosis (:attr:`heatloom.retrofit.diagnose.Diagnosis.curve`).
    title : str, optional

    Returns
    -------
    matplotlib.figure.Figure
        One axes: a line at constant area efficiency α (hot style), one with new area at α = 1 (cold
        style), and a dotted line at no extra area.
    """
    fig, ax = new_axes(title or "Retrofit targets: energy saving against extra area", "Extra area [m²]",
                       "Hot utility saving [kW]")
    ax.plot(curve.investment_constant_alpha, curve.saving, label=f"at constant α = {curve.efficiency.alpha:.2f}",
            **STYLE["hot"])
    ax.plot(curve.investment_incremental, curve.saving, label="new area at α = 1", **STYLE["cold"])
    ax.axvline(0.0, **STYLE["pinch"])
    ax.set_ylim(bottom=0)
    ax.legend(frameon=False, fontsize=STYLE["font_size"] - 1, loc="lower right")
    fig.tight_layout()
    return fig
