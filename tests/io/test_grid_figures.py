"""Grid diagrams: what they show (unit names, duties, temperatures at every unit boundary, split branches with
their fractions, removed units) read from the SVG text and the artists, and that no label meets another label,
a line or a mark, measured on the rendered figure.

Published data: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (the four-stream
example, tests/data/references/targeting_sinnott_four_stream.json); the film coefficient 0.5 kW/(m²·K) is
invented.  The dense networks (40 streams, 60 units, splits) are invented for the layout checks: their
temperatures follow each stream's CP through its units but they are not designs of any published problem.
"""

import io
import re

import matplotlib

matplotlib.use("Agg")

import numpy as np  # noqa: E402
import pytest  # noqa: E402
from matplotlib.patches import Rectangle  # noqa: E402
from refdata import load_reference  # noqa: E402

from heatloom.io.grid_figures import FRAME, GRID_FONT_FLOOR, grid_diagram  # noqa: E402
from heatloom.model import StreamTable  # noqa: E402
from heatloom.network.design import design_mer  # noqa: E402
from heatloom.network.structure import Cooler, Exchanger, Heater, Network  # noqa: E402


@pytest.fixture(scope="module")
def sinnott():
    return load_reference("targeting_sinnott_four_stream")[1]


@pytest.fixture(scope="module")
def sinnott_design(sinnott):
    return design_mer(sinnott, 10, default_film_coefficient=0.5)


def svg_texts(fig) -> list[str]:
    """The texts of the figure as written in its SVG (matplotlib writes each text as a comment beside its
    glyphs)."""
    buf = io.StringIO()
    fig.savefig(buf, format="svg")
    return re.findall(r"<!-- (.*?) -->", buf.getvalue())


def labels(fig, prefix: str = "") -> dict[str, list]:
    """gid → texts of the diagram's axes whose gid starts with ``prefix``."""
    out: dict[str, list] = {}
    for t in fig.axes[0].texts:
        if (t.get_gid() or "").startswith(prefix):
            out.setdefault(t.get_gid(), []).append(t)
    return out


def gids(fig, prefix: str) -> list[str]:
    return [a.get_gid() for a in fig.axes[0].get_children() if (a.get_gid() or "").startswith(prefix)]


def collisions(fig) -> list[str]:
    """Every pair of texts whose boxes overlap, and every text crossed by a line or covering a mark, on the
    figure drawn by the Agg renderer at its dpi.  The diagram's lines are axis-parallel, so a segment meets a
    text when its (flat) bounding box meets the text's box; a slanted segment is taken by its whole bounding
    box (stricter)."""
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    ax = fig.axes[0]
    texts = [t for t in ax.texts if t.get_text()]
    names = [t.get_text() for t in texts]
    boxes = np.array([t.get_window_extent(renderer).extents for t in texts])     # x0, y0, x1, y1 [px]
    found = []
    ox = np.minimum(boxes[:, None, 2], boxes[None, :, 2]) - np.maximum(boxes[:, None, 0], boxes[None, :, 0])
    oy = np.minimum(boxes[:, None, 3], boxes[None, :, 3]) - np.maximum(boxes[:, None, 1], boxes[None, :, 1])
    for i, j in zip(*np.nonzero(np.triu((ox > 0.5) & (oy > 0.5), 1))):
        found.append(f"text {names[i]!r} meets text {names[j]!r}")
    inner = boxes + np.array([0.5, 0.5, -0.5, -0.5])
    for line in ax.get_lines():
        xy = line.get_transform().transform(line.get_xydata())
        if line.get_linestyle() not in ("None", "none", "", " ") and len(xy) > 1:
            a, b = xy[:-1], xy[1:]
            seg = np.column_stack([np.minimum(a[:, 0], b[:, 0]), np.minimum(a[:, 1], b[:, 1]),
                                   np.maximum(a[:, 0], b[:, 0]), np.maximum(a[:, 1], b[:, 1])])
            hit = ((np.minimum(inner[:, None, 2], seg[None, :, 2]) >= np.maximum(inner[:, None, 0], seg[None, :, 0]))
                   & (np.minimum(inner[:, None, 3], seg[None, :, 3]) >= np.maximum(inner[:, None, 1], seg[None, :, 1])))
            found += [f"text {names[i]!r} crossed by line {line.get_gid()}" for i in np.nonzero(hit.any(axis=1))[0]]
        if line.get_marker() not in (None, "None", "none", ""):
            r = 0.5 * line.get_markersize() * fig.dpi / 72.0
            hit = ((inner[:, None, 0] - r < xy[None, :, 0]) & (xy[None, :, 0] < inner[:, None, 2] + r)
                   & (inner[:, None, 1] - r < xy[None, :, 1]) & (xy[None, :, 1] < inner[:, None, 3] + r))
            found += [f"text {names[i]!r} covers a mark of {line.get_gid()}" for i in np.nonzero(hit.any(axis=1))[0]]
    return found


# --------------------------------------------------------------------------------------------------
# an invented dense network


def dense_network(n_hot=20, n_cold=20, n_exchangers=44, n_heaters=8, n_coolers=8, seed=7):
    """An invented network of 40 streams and 60 units (44 exchangers, of which two pairs sit on split branches
    — a hot stream split 0.4 / 0.6 and a cold stream split 0.3 / 0.7 — 8 heaters, 8 coolers) whose
    temperatures follow each stream's CP through its units, stage by stage."""
    rng = np.random.default_rng(seed)
    hot = [f"H{i + 1}" for i in range(n_hot)]
    cold = [f"C{i + 1}" for i in range(n_cold)]
    plan = [["x", hot[k % n_hot], cold[(7 * k) % n_cold], float(rng.integers(50, 20000)), k, 1.0, 1.0]
            for k in range(n_exchangers - 2)]
    plan[3][1], plan[3][5] = hot[0], 0.6                  # hot split on H1 at stage 3
    plan.append(["x", hot[0], cold[-1], 300.0, 3, 0.4, 1.0])
    plan[-3][2], plan[-3][6] = cold[2], 0.7               # cold split on C3 two stages before the last
    plan.append(["x", hot[-1], cold[2], 450.0, plan[-3][4], 1.0, 0.3])
    plan += [["h", None, cold[k], float(rng.integers(50, 5000)), -1, 1.0, 1.0] for k in range(n_heaters)]
    plan += [["c", hot[k], None, float(rng.integers(50, 5000)), 10_000, 1.0, 1.0] for k in range(n_coolers)]
    duty = dict.fromkeys(hot + cold, 0.0)
    for _, h, c, q, *_ in plan:
        for s in (h, c):
            if s:
                duty[s] += q
    cp = {s: duty[s] / float(rng.integers(60, 180)) for s in hot + cold}
    supply = {**{s: float(rng.integers(250, 400)) for s in hot}, **{s: float(rng.integers(20, 60)) for s in cold}}
    target, temps = {}, {}
    for s in hot + cold:
        is_hot = s in hot
        stages: dict[int, list] = {}
        for i, p in enumerate(plan):
            if s in (p[1], p[2]):
                stages.setdefault(p[4], []).append((i, p))
        t = supply[s]
        for stage in sorted(stages, reverse=not is_hot):
            sign = -1.0 if is_hot else 1.0
            for i, p in stages[stage]:
                fraction = p[5] if is_hot else p[6]
                temps[(i, s)] = (t, t + sign * p[3] / (fraction * cp[s]))
            t += sign * sum(p[3] for _, p in stages[stage]) / cp[s]
        target[s] = t
    ex, he, co = [], [], []
    for i, (kind, h, c, q, stage, hf, cf) in enumerate(plan):
        if kind == "x":
            ex.append(Exchanger(h, c, q, *temps[(i, h)], *temps[(i, c)], hot_fraction=hf, cold_fraction=cf,
                                stage=stage))
        elif kind == "h":
            he.append(Heater(c, "steam", q, *temps[(i, c)], 400.0, 399.0, stage=stage))
        else:
            co.append(Cooler(h, "cooling water", q, *temps[(i, h)], 20.0, 30.0, stage=stage))
    names = hot + cold
    streams = StreamTable.from_arrays(names, [supply[s] for s in names], [target[s] for s in names],
                                      [cp[s] for s in names])
    return Network(tuple(ex), tuple(he), tuple(co), 10.0), streams


@pytest.fixture(scope="module")
def dense():
    return dense_network()


@pytest.fixture(scope="module")
def medium():
    """12 streams, 20 units, the same two splits."""
    return dense_network(6, 6, 14, 3, 3)


# --------------------------------------------------------------------------------------------------


def test_grid_diagram_title_names_the_approach(sinnott, sinnott_design):
    net = sinnott_design
    for approach in ("ΔTmin", "EMAT"):
        fig = grid_diagram(net, sinnott, approach=approach)
        assert fig.axes[0].get_title(loc="left") == f"Grid diagram, {approach} = 10 K, {net.units} units"


def test_every_unit_is_drawn_with_its_name_and_duty(sinnott, sinnott_design):
    net = sinnott_design
    fig = grid_diagram(net, sinnott)
    text = svg_texts(fig)
    units = [*net.exchangers, *net.heaters, *net.coolers]
    names = net.to_frame()["unit"].tolist()
    assert sorted(names) == sorted(u.name for u in units)
    for u in units:
        assert text.count(u.name) == 1, u.name                  # the same names as the units table
        assert f"{u.duty:,.0f} kW" in text
    assert sorted(gids(fig, "unit:")) == sorted(f"unit:{n}" for n in names)
    assert sorted(gids(fig, "stream:")) == sorted(f"stream:{s.name}" for s in sinnott)
    assert gids(fig, "branch:") == []                             # this design splits no stream


def test_temperatures_at_every_unit_boundary(sinnott, sinnott_design):
    net = sinnott_design
    text = svg_texts(grid_diagram(net, sinnott))
    for s in sinnott:
        on = [u for u in (*net.exchangers, *net.heaters, *net.coolers)
              if (getattr(u, "hot", None) if s.is_hot else getattr(u, "cold", None)) == s.name]
        inlets = sorted({round(u.hot_in if s.is_hot else u.cold_in, 1) for u in on})
        for t in inlets:
            if abs(t - s.supply_temperature) > 0.05:
                assert f"{t:g} °C" in text, (s.name, t)           # between two units
        assert f"{s.name}  {max(s.supply_temperature, s.target_temperature):g} °C" in text
        assert f"{min(s.supply_temperature, s.target_temperature):g} °C" in text


def test_split_streams_are_drawn_as_branches_with_their_fractions(medium):
    net, streams = medium
    fig = grid_diagram(net, streams)
    assert collisions(fig) == []
    # one extra branch line per split: H1 (two branches) and C3 (two branches)
    assert sorted(gids(fig, "branch:")) == ["branch:C3", "branch:H1"]
    fractions = {gid: [t.get_text() for t in ts] for gid, ts in labels(fig, "fraction:").items()}
    split = {u.name: (u.hot_fraction if u.hot_fraction < 1 else u.cold_fraction) for u in net.exchangers
             if min(u.hot_fraction, u.cold_fraction) < 1}
    assert fractions == {f"fraction:{name}": [f"{f:.2f}"] for name, f in split.items()}
    assert sorted(sum(fractions.values(), [])) == ["0.30", "0.40", "0.60", "0.70"]
    text = svg_texts(fig)
    for u in net.exchangers:
        if u.hot_fraction < 1:
            assert f"{round(u.hot_out, 1):g} °C" in text          # each branch's outlet temperature
        if u.cold_fraction < 1:
            assert f"{round(u.cold_out, 1):g} °C" in text
    assert "branch" not in " ".join(text)                          # fractions are drawn, not written out


@pytest.mark.slow
def test_dense_network_labels_meet_no_label_line_or_mark(dense):
    net, streams = dense
    assert len(streams) == 40 and net.units == 60
    changed = [net.exchangers[5].name, net.heaters[0].name]
    removed = [net.exchangers[8].name, net.coolers[1].name]
    fig = grid_diagram(net, streams, changed=changed, removed=removed)
    assert collisions(fig) == []
    fig.set_dpi(150)                                               # the layout holds at another resolution
    assert collisions(fig) == []
    assert all(t.get_fontsize() >= GRID_FONT_FLOOR for t in fig.axes[0].texts)
    small = grid_diagram(*dense_network(3, 3, 6, 1, 1))   # 6 streams, 8 units
    assert fig.get_size_inches()[0] > 2 * small.get_size_inches()[0]
    assert fig.get_size_inches()[1] > 2 * small.get_size_inches()[1]


@pytest.mark.slow
def test_dense_network_writes_svg_and_png_with_all_its_labels(dense, tmp_path):
    net, streams = dense
    fig = grid_diagram(net, streams)
    text = svg_texts(fig)
    for u in (*net.exchangers, *net.heaters, *net.coolers):
        assert u.name in text
    assert len(gids(fig, "unit:")) == 60
    fig.savefig(tmp_path / "grid.png", dpi=100)
    from PIL import Image

    with Image.open(tmp_path / "grid.png") as im:
        width, height = im.size
    assert abs(width - 100 * fig.get_size_inches()[0]) <= 1 and abs(height - 100 * fig.get_size_inches()[1]) <= 1


def test_no_label_overlap_on_a_published_design(sinnott, sinnott_design):
    assert collisions(grid_diagram(sinnott_design, sinnott)) == []


def test_removed_units_are_hollow_grey_and_say_so(sinnott, sinnott_design):
    net = sinnott_design
    gone_x, gone_c = net.exchangers[0].name, net.coolers[0].name
    fig = grid_diagram(net, sinnott, removed={gone_x: "removed", gone_c: "idle"})
    ax = fig.axes[0]
    duty = {gid: ts[0].get_text() for gid, ts in labels(fig, "duty:").items()}
    assert duty[f"duty:{gone_x}"] == "removed" and duty[f"duty:{gone_c}"] == "idle"
    kept = net.exchangers[1].name
    assert duty[f"duty:{kept}"] == f"{net.exchangers[1].duty:,.0f} kW"
    lines = {line.get_gid(): line for line in ax.get_lines() if line.get_gid()}
    grey = matplotlib.colors.to_rgba("#a0a0a0")
    assert matplotlib.colors.to_rgba(lines[f"unit:{gone_x}"].get_color()) == grey
    assert lines[f"unit:{gone_x}"].get_linestyle() != "-"         # broken connector
    assert lines[f"unit:{kept}"].get_linestyle() == "-"
    assert lines[f"unit:{gone_c}"].get_fillstyle() == "none"       # hollow triangle
    assert lines[f"unit:{net.heaters[0].name}"].get_fillstyle() == "full"
    # the exchanger's diamonds: the marker-only line at the same x as its connector
    x = lines[f"unit:{gone_x}"].get_xdata()[0]
    marks = [m for m in ax.get_lines() if m.get_linestyle() == "None" and m.get_marker() == "D"
             and m.get_xdata()[0] == x]
    assert marks and matplotlib.colors.to_rgba(marks[0].get_markeredgecolor()) == grey
    assert "removed" in svg_texts(fig)


def test_changed_units_are_framed(sinnott, sinnott_design):
    net = sinnott_design
    framed = [net.exchangers[0].name, net.heaters[0].name]
    fig = grid_diagram(net, sinnott, changed=framed)
    frames = [p for p in fig.axes[0].patches if isinstance(p, Rectangle)]
    assert len(frames) == 2
    lines = {line.get_gid(): line for line in fig.axes[0].get_lines() if line.get_gid()}
    for name in framed:   # each frame surrounds its unit's marks
        xs, ys = lines[f"unit:{name}"].get_xdata(), lines[f"unit:{name}"].get_ydata()
        assert any(p.get_x() < xs[0] < p.get_x() + p.get_width() and p.get_y() < min(ys)
                   and max(ys) < p.get_y() + p.get_height() for p in frames), name
    assert all(matplotlib.colors.to_hex(p.get_edgecolor()) == FRAME["edgecolor"] for p in frames)
    assert collisions(fig) == []


def test_one_connector_per_exchanger_and_one_mark_per_heater_and_cooler(medium):
    net, streams = medium
    fig = grid_diagram(net, streams)
    lines = {line.get_gid(): line for line in fig.axes[0].get_lines() if (line.get_gid() or "").startswith("unit:")}
    assert len(lines) == net.units == 20
    for u in net.exchangers:
        assert len(lines[f"unit:{u.name}"].get_xdata()) == 2          # hot end to cold end
    for u in (*net.heaters, *net.coolers):
        assert lines[f"unit:{u.name}"].get_marker() == ("^" if isinstance(u, Heater) else "v")
