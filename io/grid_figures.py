"""Grid diagrams of heat-exchanger networks (design, TAC and retrofit), in heatloom's figure style."""

from __future__ import annotations

from .figures import STYLE, new_figure

__all__ = ["grid_diagram"]


def grid_diagram(network, streams, *, title: str | None = None, approach: str = "ΔTmin"):
    """Grid diagram of a network: hot streams above (flowing right), cold streams below (flowing left).

    Process-to-process exchangers are pairs of diamonds joined by a thin line, heaters are triangles
    pointing up on a cold stream, coolers triangles pointing down on a hot stream; each mark carries its
    duty. Units are laid out left to right from the hot end, subnetwork by subnetwork and stage by stage of
    the placement (so their order along every stream is the real one); the pinch is a dotted vertical line
    between the subnetworks above and below it. A unit on a split branch shows the branch's share of the
    flow.

    Parameters
    ----------
    network : heatloom.network.Network
    streams : heatloom.model.StreamTable
    title : str, optional
    approach : str, optional
        Name of the network's minimum approach in the default title: ``"ΔTmin"`` for maximum energy
        recovery, ``"EMAT"`` for a lowest-total-annual-cost network.
    """
    hot = [s for s in streams if s.is_hot]
    cold = [s for s in streams if not s.is_hot]
    rows = {s.name: i for i, s in enumerate(hot)}
    rows.update({s.name: len(hot) + 0.6 + i for i, s in enumerate(cold)})
    order = {"above": 0, "whole": 0, "below": 2}
    units = ([("x", e) for e in network.exchangers] + [("h", h) for h in network.heaters]
             + [("c", c) for c in network.coolers])

    def key(item):
        # subnetworks from the hot end; inside one, the placement's stages are in order along every stream
        kind, u = item
        return (order.get(u.region, 1), u.stage)

    units.sort(key=key)
    n = len(units)
    height = 0.55 * (len(hot) + len(cold)) + 1.6
    fig = new_figure((max(7.0, 1.0 + 0.75 * n), height))
    ax = fig.subplots()
    ax.set_title(title or f"Grid diagram, {approach} = {network.dt_min:g} K, {network.units} units", loc="left",
                 fontsize=STYLE["font_size"] + 1)
    x_end = n + 1.0
    for s in hot + cold:
        y = -rows[s.name]
        st = STYLE["hot"] if s.is_hot else STYLE["cold"]
        ax.annotate("", xy=(x_end if s.is_hot else 0, y), xytext=(0 if s.is_hot else x_end, y),
                    arrowprops={"arrowstyle": "-|>", "color": st["color"], "linewidth": 1.6,
                                "linestyle": "-" if s.is_hot else "--"})
        left, right = (s.supply_temperature, s.target_temperature) if s.is_hot else \
            (s.target_temperature, s.supply_temperature)
        ax.text(-0.1, y, f"{s.name}  {left:g} °C", ha="right", va="center", fontsize=STYLE["font_size"] - 1)
        ax.text(x_end + 0.1, y, f"{right:g} °C", ha="left", va="center", fontsize=STYLE["font_size"] - 1)
    prev_region = None
    for k, (kind, u) in enumerate(units, start=1):
        region = order.get(u.region, 1)
        if prev_region is not None and region != prev_region:
            ax.axvline(k - 0.5, **STYLE["pinch"])
            ax.text(k - 0.5, 0.45, "pinch", ha="center", fontsize=STYLE["font_size"] - 1, color="#505050")
        prev_region = region
        if kind == "x":
            y1, y2 = -rows[u.hot], -rows[u.cold]
            ax.plot([k, k], [y1, y2], color="#303030", linewidth=1.0)
            ax.plot([k, k], [y1, y2], linestyle="none", marker="D", markersize=9, markerfacecolor="white",
                    markeredgecolor="#303030")
            split = ""
            if u.hot_fraction < 0.999:
                split += f"\n{u.hot} branch {u.hot_fraction:.2f}"
            if u.cold_fraction < 0.999:
                split += f"\n{u.cold} branch {u.cold_fraction:.2f}"
            where = 0.3 if k % 2 else 0.7   # alternate label heights so neighbours do not overlap
            ax.text(k + 0.12, y1 + where * (y2 - y1), f"{u.duty:,.0f} kW{split}",
                    fontsize=STYLE["font_size"] - 2, va="center")
        elif kind == "h":
            y = -rows[u.cold]
            ax.plot([k], [y], marker="^", markersize=10, color=STYLE["hot"]["color"])
            ax.text(k, y - 0.32, f"{u.utility}\n{u.duty:,.0f} kW", ha="center", va="top",
                    fontsize=STYLE["font_size"] - 2)
        else:
            y = -rows[u.hot]
            ax.plot([k], [y], marker="v", markersize=10, color=STYLE["cold"]["color"])
            ax.text(k, y - 0.25, f"{u.utility}\n{u.duty:,.0f} kW", ha="center", va="top",
                    fontsize=STYLE["font_size"] - 2)
    ax.set_xlim(-0.2, x_end + 0.2)
    ax.set_ylim(-(len(hot) + len(cold)) - 0.3, 0.8)
    ax.axis("off")
    fig.tight_layout()
    return fig
