"""Figures of a retrofit study: the existing and the proposed network on grid diagrams, savings against
investment, and the retrofit targets (energy saving against extra area).

Both follow the project's one visual style (:data:`heatloom.io.figures.STYLE`).  The grid diagrams are
:func:`heatloom.io.grid_figures.grid_diagram` of :meth:`heatloom.retrofit.simulate.Simulation.to_network`:
every unit carries its name from the network table (new units their new names), the new and changed units
are framed on the proposed network, and units whose duty fell to 0 kW are drawn hollow and grey as removed
(idle on the existing network).
"""

from __future__ import annotations

from collections.abc import Collection, Mapping

from .figures import STYLE, new_axes
from .grid_figures import FRAME, grid_diagram

__all__ = ["HIGHLIGHT", "IDLE_DUTY", "idle_units", "grid_figures", "savings_investment_figure",
           "retrofit_curve_figure"]

HIGHLIGHT = FRAME
"""Frame drawn around new and changed units on the proposed grid diagram."""

IDLE_DUTY = 0.5
"""A unit whose simulated duty is at most this, in magnitude, is out of service [kW] (the threshold below
which the retrofit options call a unit idle)."""


def idle_units(simulation) -> list[str]:
    """Names of the units of a simulated network whose duty is 0 kW (within :data:`IDLE_DUTY`)."""
    return [u.name for u in simulation.units if abs(u.duty) <= IDLE_DUTY]


def _grid(simulation, streams, title: str, changed: Collection[str] = (), removed: Mapping[str, str] | None = None):
    return grid_diagram(simulation.to_network(), streams, title=title, changed=changed, removed=removed or {})


def grid_figures(existing, proposed, streams, *, changed: Collection[str] = (), label: str = "proposed"):
    """Grid diagrams of the existing and the proposed network, unit names written, changes framed.

    Units whose duty is 0 kW (:func:`idle_units`) are drawn hollow and grey: "removed" on the proposed
    network when they were in service before, "idle" otherwise.

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
    idle_before = idle_units(existing)
    first = _grid(existing, streams, f"Existing network: hot utility {existing.hot_utility:,.0f} kW, "
                                     f"cold utility {existing.cold_utility:,.0f} kW",
                  removed=dict.fromkeys(idle_before, "idle"))
    if proposed is None:
        return first, None
    removed = {name: "idle" if name in idle_before else "removed" for name in idle_units(proposed)}
    title = f"{label}: hot utility {proposed.hot_utility:,.0f} kW, cold utility {proposed.cold_utility:,.0f} kW " \
            "(changed units framed" + (", removed units hollow)" if "removed" in removed.values() else ")")
    return first, _grid(proposed, streams, title, changed, removed)


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
    if not retrofit.points:
        ax.annotate("no set of changes saved energy", (0.5, 0.5), xycoords="axes fraction", ha="center",
                    fontsize=STYLE["font_size"], color="#505050")
    ax.set_xlim(left=0)
    ax.set_ylim(bottom=0)
    if ax.get_legend_handles_labels()[0]:   # nothing to label when no set of changes worked
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
