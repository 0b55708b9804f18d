"""Grid diagrams of heat-exchanger networks (design, TAC and retrofit), in heatloom's figure style.

Hot streams run left to right in the upper half, cold streams right to left in the lower half; units sit in
columns from the hot end, subnetwork by subnetwork, in an order that keeps the order of the units along
every stream as their temperatures give it (:mod:`heatloom.io.grid_layout`).  A stream split into parallel
branches is drawn as branches (lanes below a hot stream, above a cold one) from the split to the mixing
point, each branch with its share of the flow, the units in series on a branch on its lane and a split
inside a branch on sub-lanes of its own.  Every unit carries its name
(:func:`heatloom.network.structure.name_units`) and duty, every stream the temperature between each pair of
its units.

Labels never overlap each other, lines or marks: the figure is laid out in inches, every label's extent
is measured with the Agg renderer of the figure, and each label takes the first free slot of a list of
candidates around its anchor (then a widening search).  The figure grows with the network (columns as wide
as the widest label, rows as tall as the labels need) and the font never goes under
:data:`GRID_FONT_FLOOR`, so a network of 40 streams and 60 units stays legible in SVG and PNG.
"""

from __future__ import annotations

from collections.abc import Collection, Mapping

import numpy as np
from matplotlib.font_manager import FontProperties
from matplotlib.markers import MarkerStyle
from matplotlib.patches import Rectangle

from ..network.structure import Cooler, Heater, grid_key
from .figures import STYLE, new_figure
from .grid_layout import entering, grid_layout, lane_span, units_in

__all__ = ["GRID_FONT_FLOOR", "FRAME", "grid_diagram"]

GRID_FONT_FLOOR = 7.0
"""Smallest font of a grid diagram [pt]: labels never shrink below it, the figure grows instead."""

FRAME = {"edgecolor": "#303030", "facecolor": "none", "linestyle": (0, (3, 2)), "linewidth": 1.1}
"""Frame drawn around the units named in ``changed`` (new and changed units of a retrofit)."""

_REMOVED = "#a0a0a0"
_PAD = 0.025          # free space kept around every label [in]
_MARK = 8.0           # marker size [pt]
_LINE = 1.6           # stream line width [pt]
_GAP = 0.05           # distance of a label from its line [in]


def _label_size() -> float:
    return max(GRID_FONT_FLOOR, STYLE["font_size"] - 2.0)


class _Layout:
    """Free-slot placement of labels in a plane measured in inches.

    Occupied rectangles (lines, marks, placed labels) are kept as rows (x0, y0, x1, y1); a label takes the
    first of its candidate anchors whose box, grown by ``_PAD``, meets none of them.
    """

    def __init__(self, fig) -> None:
        self.fig = fig
        self.renderer = fig.canvas.get_renderer()
        self.boxes = np.empty((0, 4))
        self._sizes: dict[tuple[str, float], tuple[float, float]] = {}

    def size(self, text: str, fontsize: float) -> tuple[float, float]:
        """Width and height of a one-line text drawn at ``fontsize`` [in], measured by the renderer."""
        key = (text, fontsize)
        if key not in self._sizes:
            from matplotlib.text import Text

            t = Text(0, 0, text, fontproperties=FontProperties(size=fontsize), figure=self.fig)
            bb = t.get_window_extent(self.renderer)
            self._sizes[key] = (bb.width / self.fig.dpi, bb.height / self.fig.dpi)
        return self._sizes[key]

    def block(self, x0: float, y0: float, x1: float, y1: float) -> None:
        """Mark a rectangle as occupied [in]."""
        self.boxes = np.vstack([self.boxes, [min(x0, x1), min(y0, y1), max(x0, x1), max(y0, y1)]])

    def line(self, xs, ys, width: float = _LINE) -> None:
        """Mark the segments of an axis-parallel polyline as occupied (its width in [pt])."""
        half = 0.5 * width / 72.0
        for (xa, ya), (xb, yb) in zip(zip(xs, ys), zip(xs[1:], ys[1:])):
            self.block(min(xa, xb) - half, min(ya, yb) - half, max(xa, xb) + half, max(ya, yb) + half)

    @staticmethod
    def box(x: float, y: float, w: float, h: float, ha: str, va: str) -> tuple[float, float, float, float]:
        x0 = x - {"left": 0.0, "center": 0.5 * w, "right": w}[ha]
        y0 = y - {"bottom": 0.0, "center": 0.5 * h, "top": h}[va]
        return x0, y0, x0 + w, y0 + h

    def _overlap(self, b) -> float:
        if not len(self.boxes):
            return 0.0
        x0, y0, x1, y1 = b[0] - _PAD, b[1] - _PAD, b[2] + _PAD, b[3] + _PAD
        bx = self.boxes
        w = np.clip(np.minimum(x1, bx[:, 2]) - np.maximum(x0, bx[:, 0]), 0, None)
        h = np.clip(np.minimum(y1, bx[:, 3]) - np.maximum(y0, bx[:, 1]), 0, None)
        return float((w * h).sum())

    def place(self, text: str, fontsize: float, candidates, bounds) -> tuple[float, float, str, str]:
        """The first free anchor (x, y, ha, va) for ``text`` among ``candidates``, else in widening rings
        around the first; the least crowded one when nothing is free.  The label's box is then occupied."""
        w, h = self.size(text, fontsize)
        x_lo, y_lo, x_hi, y_hi = bounds

        def inside(b):
            return b[0] >= x_lo and b[2] <= x_hi and b[1] >= y_lo and b[3] <= y_hi

        best, best_overlap = None, np.inf
        x0, y0, ha0, va0 = candidates[0]
        rings = [(x0 + dx * (w + 2 * _PAD), y0 + dy * (h + 2 * _PAD), ha0, va0)
                 for r in range(1, 6) for dx in range(-r, r + 1) for dy in range(-r, r + 1)
                 if max(abs(dx), abs(dy)) == r]
        for x, y, ha, va in list(candidates) + rings:
            b = self.box(x, y, w, h, ha, va)
            if not inside(b):
                continue
            o = self._overlap(b)
            if o == 0.0:
                self.block(*b)
                return x, y, ha, va
            if o < best_overlap:
                best, best_overlap = (x, y, ha, va), o
        x, y, ha, va = best if best is not None else candidates[0]
        self.block(*self.box(x, y, w, h, ha, va))
        return x, y, ha, va


def _temperature(t: float) -> str:
    return f"{round(t, 1):g} °C"


def _sides(u):
    """(kind, hot stream or None, cold stream or None) of a unit."""
    if isinstance(u, Heater):
        return "h", None, u.cold
    if isinstance(u, Cooler):
        return "c", u.hot, None
    return "x", u.hot, u.cold


OUT_OF_ORDER_LISTED = 6
"""Most pairs of units drawn against their stream's order that a grid diagram's footnote names [-]."""


def _out_of_order_lines(dropped, lay, fs: float, width: float) -> list[str]:
    """The footnote of a grid diagram whose columns could not keep every stream's order: the pairs of
    units drawn the other way round (at most :data:`OUT_OF_ORDER_LISTED`, then how many more), wrapped to
    ``width`` [in]; no lines when every order is kept."""
    if not dropped:
        return []
    pairs = [f"on {stream}, {a} then {b}" for a, b, stream in dropped[:OUT_OF_ORDER_LISTED]]
    if len(dropped) > OUT_OF_ORDER_LISTED:
        pairs.append(f"and {len(dropped) - OUT_OF_ORDER_LISTED} more")
    words = ("Units drawn out of their stream's flow order (streams that meet in crossing orders, or a pair on "
             "either side of the pinch line the other way round); their flow order: " + "; ".join(pairs)
             + ".").split(" ")
    lines, line = [], ""
    for word in words:
        trial = f"{line} {word}" if line else word
        if line and lay.size(trial, fs)[0] > width:
            lines.append(line)
            line = word
        else:
            line = trial
    return lines + [line]


def grid_diagram(network, streams, *, title: str | None = None, approach: str = "ΔTmin",
                 changed: Collection[str] = (), removed: Mapping[str, str] | Collection[str] = (),
                 removed_label: str = "removed"):
    """Grid diagram of a network: hot streams above (flowing right), cold streams below (flowing left).

    Process-to-process exchangers are pairs of diamonds joined by a thin line, heaters are triangles
    pointing up on a cold stream, coolers triangles pointing down on a hot stream; each unit carries its
    name and duty.  Units are laid out left to right from the hot end, subnetwork by subnetwork, in the
    order their temperatures give along every stream (:func:`heatloom.io.grid_layout.grid_layout`; where
    streams meet in crossing orders a cold stream's order gives way, and a footnote names the units drawn
    against their stream's flow order); the pinch is a dotted vertical line
    between the subnetworks above and below it.  A split stream is drawn as branches, each with its share
    of the flow (labelled at its first unit), its units in series on its lane and a split inside it on
    sub-lanes; every stream shows its temperature between each pair of its units and at the outlet of each
    branch.  Labels are placed where they meet no other label, line or mark.

    Parameters
    ----------
    network : heatloom.network.Network
    streams : heatloom.model.StreamTable
    title : str, optional
    approach : str, optional
        Name of the network's minimum approach in the default title: ``"ΔTmin"`` for maximum energy
        recovery, ``"EMAT"`` for a lowest-total-annual-cost network.
    changed : collection of str, optional
        Names of units to frame (new and changed units of a retrofit).
    removed : mapping or collection of str, optional
        Units out of service (e.g. a retrofit unit whose duty became 0 kW), drawn hollow and grey: unit name
        → the word written instead of its duty, or names only (the word is ``removed_label``).
    removed_label : str, optional
        The word written on removed units given by name only.

    Returns
    -------
    matplotlib.figure.Figure
        One axes whose data coordinates are inches.  Artists carry gids: ``stream:<name>``,
        ``branch:<stream>``, ``unit:<name>``, and the labels ``name:<unit>``, ``duty:<unit>``,
        ``fraction:<unit>``, ``temperature:<stream>``, ``end:<stream>``, and the footnote ``out-of-order``.
        A branch's fraction carries the name of its first unit (of the first unit after a split inside it, or
        ``<unit>+<unit>`` of that split's first units when the branch holds nothing else).  The footnote
        (figure text, not on the axes) names the units drawn against their stream's flow order, if any.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.network.structure import Cooler, Exchanger, Heater, Network
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5])
    >>> net = Network((Exchanger("H1", "C1", 150.0, 150, 75, 30, 90),), (Heater("C1", "steam", 75.0, 90, 120,
    ...               180, 179),), (Cooler("H1", "water", 30.0, 75, 60, 20, 30),), 10.0)
    >>> fig = grid_diagram(net, s)
    >>> sorted(t.get_text() for t in fig.axes[0].texts if (t.get_gid() or "").startswith("name:"))
    ['CU-1', 'HU-1', 'X1']
    """
    fs = _label_size()
    fs_stream = fs + 1.0
    hot = [s for s in streams if s.is_hot]
    cold = [s for s in streams if not s.is_hot]
    by_name = {s.name: s for s in streams}
    grid = grid_layout(network)
    units = list(grid.order)
    column = {id(u): grid.column[u.name] for u in units}
    n = grid.columns
    removed = dict(removed) if isinstance(removed, Mapping) else dict.fromkeys(removed, removed_label)
    changed = set(changed)

    fig = new_figure((7.0, 4.0))
    lay = _Layout(fig)
    _, th = lay.size("0123456789 °CkW", fs)

    # -- lanes: a split's branches side by side, units in series on their branch's lane ------------------
    lanes = {s.name: grid.lanes.get(s.name, 1) for s in streams}
    named = {u.name: u for u in units}

    # -- geometry [in] ----------------------------------------------------------------------------------
    widest = max([lay.size(f"{u.duty:,.0f} kW", fs)[0] for u in units]
                 + [lay.size(w, fs)[0] for w in removed.values()] + [lay.size("-888.8 °C", fs)[0]]
                 + [lay.size(u.name or "", fs)[0] for u in units] + [0.3])
    col_w = max(0.75, widest + 0.4)    # a temperature fits between the framed marks of two columns
    lane_gap = th + 0.2
    pitch = max(0.62, 3.0 * th + 0.25)
    left_w = max([lay.size(f"{s.name}  {max(s.supply_temperature, s.target_temperature):g} °C", fs_stream)[0]
                  for s in streams] + [0.5]) + 0.25
    right_w = max([lay.size(f"{min(s.supply_temperature, s.target_temperature):g} °C", fs_stream)[0]
                   for s in streams] + [0.5]) + 0.25
    x_left = left_w
    x_right = x_left + (n + 1) * col_w
    width = x_right + right_w
    title = title or f"Grid diagram, {approach} = {network.dt_min:g} K, {network.units} units"
    title_w, title_h = lay.size(title, fs + 3)
    width = max(width, title_w + 0.4)
    top = 2 * th + 0.35                      # room for the "pinch" words under the title
    rows_h = 0.0
    y_of: dict[str, float] = {}
    for i, s in enumerate(hot + cold):
        extra = (lanes[s.name] - 1) * lane_gap
        gap = 0.35 if (i == len(hot) and hot) else 0.0
        if s.is_hot:
            y_of[s.name] = -(rows_h + gap + 0.5 * pitch)
        else:
            y_of[s.name] = -(rows_h + gap + 0.5 * pitch + extra)
        rows_h += gap + pitch + extra
    plot_h = top + rows_h + 0.3
    for s in y_of:
        y_of[s] += plot_h - top
    foot = _out_of_order_lines(grid.dropped, lay, fs, width - 0.45)
    foot_h = len(foot) * (th + 0.06) + (0.15 if foot else 0.0)
    height = plot_h + title_h + 0.3 + foot_h
    fig.set_size_inches(width, height)
    ax = fig.add_axes((0.0, foot_h / height, 1.0, plot_h / height))
    if foot:
        fig.text(0.15 / width, (foot_h - 0.08) / height, "\n".join(foot), ha="left", va="top", fontsize=fs,
                 color="#505050", gid="out-of-order", linespacing=1.3)
    ax.set_xlim(0.0, width)
    ax.set_ylim(0.0, plot_h)
    ax.axis("off")
    ax.set_title(title, loc="left", fontsize=fs + 3, x=0.15 / width)
    bounds = (0.02, 0.02, width - 0.02, plot_h - 0.02)

    def x_of(u) -> float:
        return x_left + column[id(u)] * col_w

    def lane_y(stream: str, u) -> float:
        j = grid.lane.get((stream, u.name), 0)
        return y_of[stream] + (-j if by_name[stream].is_hot else j) * lane_gap

    labels: list[tuple] = []   # (priority, text, candidates, style)

    def branches_and_temperatures(s, y: float, line_style: dict) -> None:
        """A stream's splits (branches on their lanes, fractions, outlets) and its temperatures between
        consecutive units (see :mod:`heatloom.io.grid_layout`)."""
        st = STYLE["hot"] if s.is_hot else STYLE["cold"]
        sign = -1.0 if s.is_hot else 1.0
        side = "hot" if s.is_hot else "cold"
        step = 0.06 if s.is_hot else -0.06

        def xs_of(names: list[str]) -> list[float]:
            return [x_of(named[m]) for m in names]

        def boundary(item_a, item_b, yl: float) -> None:
            """The temperature between two items in series on a line (the inlet of the second)."""
            end_a = max(xs_of(units_in(item_a))) if s.is_hot else min(xs_of(units_in(item_a)))
            start_b = min(xs_of(entering(item_b))) if s.is_hot else max(xs_of(entering(item_b)))
            first = named[entering(item_b)[0]]
            mid = 0.5 * (end_a + start_b)
            quarter = 0.25 * (start_b - end_a)
            cands = [(mid, yl + _GAP, "center", "bottom"), (mid, yl - _GAP, "center", "top"),
                     (mid - quarter, yl + _GAP, "center", "bottom"), (mid + quarter, yl + _GAP, "center", "bottom"),
                     (mid - quarter, yl - _GAP, "center", "top"), (mid + quarter, yl - _GAP, "center", "top")]
            labels.append((3, _temperature(first.hot_in if s.is_hot else first.cold_in), cands,
                           {"gid": f"temperature:{s.name}"}))

        def fraction_of(branch: list) -> tuple[float, str]:
            """A branch's share of the stream's flow [-] and the unit whose name its label's gid carries."""
            unit = next((i for i in branch if isinstance(i, str)), None)
            if unit is not None:
                return getattr(named[unit], f"{side}_fraction", 1.0), unit
            inner = [fraction_of(b) for b in branch[0]]
            return sum(f for f, _ in inner), "+".join(m for _, m in inner)

        def draw_split(split: list, base: int, depth: int) -> None:
            """A split's branches on their lanes from the split to the mixing point, each with its fraction,
            its units' temperatures in series and its outlet; splits inside a branch likewise, nested."""
            xs = xs_of(units_in(split))
            margin = max(0.18, 0.42 - 0.12 * depth) * col_w   # an inner split's ends inside its branch's
            lo, hi = min(xs) - margin, max(xs) + margin
            split_x, mix_x = (lo, hi) if s.is_hot else (hi, lo)
            y0 = y + sign * base * lane_gap
            at = base
            for j, branch in enumerate(split):
                yj = y + sign * at * lane_gap
                if at != base:
                    px, py = [lo, lo, hi, hi], [y0, yj, yj, y0]
                    ax.plot(px, py, gid=f"branch:{s.name}", **line_style)
                    lay.line(px, py)
                frac, gid = fraction_of(branch)
                x_head = min(xs_of(entering(branch[0]))) if s.is_hot else max(xs_of(entering(branch[0])))
                # on the branch's outer side first (away from the other branches), so each share reads
                # as its own branch's
                outer = (1.0 if s.is_hot else -1.0) * (1.0 if j == 0 else -1.0)
                ends = [(split_x + step, "left" if s.is_hot else "right"),
                        (x_head - step * 3, "right" if s.is_hot else "left")]
                if not isinstance(branch[0], str) and gid in named:   # begins with an inner split: the
                    ends.insert(0, (x_of(named[gid]) - step * 3, "right" if s.is_hot else "left"))   # unit after
                cands = [(x0, yj + side_sign * _GAP, ha, "bottom" if side_sign > 0 else "top")
                         for side_sign in (outer, -outer) for x0, ha in ends]
                cands += [(x_head + step * 3, yj + side_sign * _GAP, "left" if s.is_hot else "right",   # past
                           "bottom" if side_sign > 0 else "top") for side_sign in (-outer, outer)]   # its head
                labels.append((1, f"{frac:.2f}", cands, {"gid": f"fraction:{gid}", "color": st["color"],
                                                          "fontstyle": "italic"}))
                for item_a, item_b in zip(branch, branch[1:]):
                    boundary(item_a, item_b, yj)
                for item in branch:
                    if not isinstance(item, str):
                        draw_split(item, grid.lane[(s.name, units_in(item)[0])], depth + 1)
                if isinstance(branch[-1], str):   # the branch's outlet (an inner split writes its own)
                    u = named[branch[-1]]
                    mid = 0.5 * (x_of(u) + mix_x)
                    cands = [(mid, yj + _GAP, "center", "bottom"), (mid, yj - _GAP, "center", "top"),
                             (mix_x, yj + _GAP, "center", "bottom"), (mix_x, yj - _GAP, "center", "top")]
                    labels.append((3, _temperature(u.hot_out if s.is_hot else u.cold_out), cands,
                                   {"gid": f"temperature:{s.name}"}))
                at += lane_span(branch, branch=True)

        seq = grid.along.get(s.name, [])
        for split in seq:
            if len(split) > 1 or any(getattr(named[m], f"{side}_fraction", 1.0) < 0.999 for m in units_in(split)):
                draw_split(split, 0, 0)
        # temperatures between consecutive positions along the stream (flow order)
        for item_a, item_b in zip(seq, seq[1:]):
            boundary(item_a, item_b, y)

    # -- streams, branches ----------------------------------------------------------------------------
    for s in hot + cold:
        y = y_of[s.name]
        st = STYLE["hot"] if s.is_hot else STYLE["cold"]
        line_style = {"color": st["color"], "linewidth": _LINE, "linestyle": "-" if s.is_hot else (0, (6, 2.5))}
        ax.plot([x_left, x_right], [y, y], gid=f"stream:{s.name}", **line_style)
        lay.line([x_left, x_right], [y, y])
        head = (x_right, ">") if s.is_hot else (x_left, "<")
        ax.plot([head[0]], [y], marker=head[1], markersize=7, color=st["color"], linestyle="none")
        lay.block(head[0] - 0.06, y - 0.05, head[0] + 0.06, y + 0.05)
        left, right = (s.supply_temperature, s.target_temperature) if s.is_hot else \
            (s.target_temperature, s.supply_temperature)
        for x, text, ha in ((x_left - 0.1, f"{s.name}  {left:g} °C", "right"), (x_right + 0.1, f"{right:g} °C",
                                                                                 "left")):
            ax.text(x, y, text, ha=ha, va="center", fontsize=fs_stream, gid=f"end:{s.name}")
            w, h = lay.size(text, fs_stream)
            lay.block(*lay.box(x, y, w, h, ha, "center"))
        branches_and_temperatures(s, y, line_style)

    # -- pinch ------------------------------------------------------------------------------------------
    prev = None
    for u in units:
        region = grid_key(u)[0]
        if prev is not None and region != prev:
            xp = x_of(u) - 0.5 * col_w
            y_top = plot_h - top + 0.1
            ax.plot([xp, xp], [0.15, y_top], gid="pinch", **STYLE["pinch"])
            lay.line([xp, xp], [0.15, y_top], 1.4)
            ax.text(xp, y_top + 0.05, "pinch", ha="center", va="bottom", fontsize=fs, color="#505050")
            w, h = lay.size("pinch", fs)
            lay.block(*lay.box(xp, y_top + 0.05, w, h, "center", "bottom"))
        prev = region

    # -- units ------------------------------------------------------------------------------------------
    mark_r = 0.5 * _MARK / 72.0 + 0.01
    for u in units:
        kind, h_name, c_name = _sides(u)
        x = x_of(u)
        gone = u.name in removed
        edge = _REMOVED if gone else "#303030"
        if kind == "x":
            y1, y2 = lane_y(h_name, u), lane_y(c_name, u)
            ax.plot([x, x], [y1, y2], color=edge, linewidth=1.0, linestyle=(0, (2, 2)) if gone else "-",
                    gid=f"unit:{u.name}")
            lay.line([x, x], [y1, y2], 1.0)
            ax.plot([x, x], [y1, y2], linestyle="none", marker="D", markersize=_MARK, markerfacecolor="white",
                    markeredgecolor=edge)
            ends = (y1, y2)
        else:
            y1 = y2 = lane_y(c_name if kind == "h" else h_name, u)
            colour = STYLE["hot" if kind == "h" else "cold"]["color"]
            marker = MarkerStyle("^" if kind == "h" else "v", fillstyle="none" if gone else "full")
            ax.plot([x], [y1], marker=marker, markersize=_MARK + 2, color=_REMOVED if gone else colour,
                    linestyle="none", gid=f"unit:{u.name}")
            ends = (y1,)
        for ye in ends:
            lay.block(x - mark_r, ye - mark_r, x + mark_r, ye + mark_r)
        if u.name in changed:   # framed
            lo, hi = min(ends) - 0.14, max(ends) + 0.14
            ax.add_patch(Rectangle((x - 0.14, lo), 0.28, hi - lo, **FRAME))
            lay.line([x - 0.14, x + 0.14, x + 0.14, x - 0.14, x - 0.14], [lo, lo, hi, hi, lo], 1.1)
        # name: above the upper mark; duty: beside the connector between rows, or under the mark
        y_hi, y_lo = max(ends), min(ends)
        framed = u.name in changed
        r = 0.19 if framed else mark_r + 0.03      # labels outside the frame of a changed unit
        dx = 0.2 if framed else 0.06
        name_c = [(x, y_hi + r, "center", "bottom"), (x + r, y_hi + 0.02, "left", "bottom"),
                  (x - r, y_hi + 0.02, "right", "bottom"), (x, y_hi - r - (0.14 if kind != "x" else 0), "center",
                                                            "top"),
                  (x + r, y_hi - 0.02, "left", "top"), (x - r, y_hi - 0.02, "right", "top")]
        labels.append((0, u.name, name_c, {"gid": f"name:{u.name}", "fontweight": "bold",
                                           "color": _REMOVED if gone else "#202020"}))
        duty = removed[u.name] if gone else f"{u.duty:,.0f} kW"
        if kind == "x":
            levels = sorted(set(y_of.values()) | {y1, y2})
            between = [0.5 * (a + b) for a, b in zip(levels, levels[1:]) if y_lo - 1e-9 <= a and b <= y_hi + 1e-9]
            between.sort(key=lambda yy: abs(yy - 0.5 * (y_lo + y_hi)))
            duty_c = [(x + dx, yy, "left", "center") for yy in between] + \
                     [(x - dx, yy, "right", "center") for yy in between] + \
                     [(x, y_lo - r, "center", "top"), (x + r, y_lo - 0.02, "left", "top")]
        else:
            duty_c = [(x, y_lo - r, "center", "top"), (x + r, y_lo - 0.02, "left", "top"),
                      (x - r, y_lo - 0.02, "right", "top"), (x + r, y_lo + 0.02, "left", "bottom"),
                      (x - r, y_lo + 0.02, "right", "bottom")]
        labels.append((2, duty, duty_c, {"gid": f"duty:{u.name}", "color": _REMOVED if gone else "#202020",
                                         "fontstyle": "italic" if gone else "normal"}))

    # -- labels, most important first --------------------------------------------------------------------
    for _, text, cands, style in sorted(labels, key=lambda item: item[0]):
        x, y, ha, va = lay.place(text, fs, cands, bounds)
        ax.text(x, y, text, ha=ha, va=va, fontsize=fs, **style)
    return fig
