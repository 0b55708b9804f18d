"""Grid diagram layout: the units' columns follow the temperatures along every stream, a split's branches
are lanes, units in series on a branch share its lane, a split inside a branch takes sub-lanes.

The small networks here are invented (hand-written units; their temperatures follow each stream's CP through
its units), written so that the placement's stages contradict the temperatures.  The order every check
expects is computed in the test from the temperatures written here: along a hot stream a unit whose outlet
is the inlet of another (or hotter) comes first and sits further left; along a cold stream the unit met
first from the supply end (the colder one) sits further right.

Published data: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (the four-stream
example, tests/data/references/targeting_sinnott_four_stream.json) and Roetzel, Luo & Chen, Design and
Operation of Heat Exchangers and their Networks, 2020, ch. 6, Table 6.27 (the aromatics plant,
tests/data/references/synthesis_aromatics_plant_4h5c.json): stream data only; the designs are heatloom's
(film coefficient 0.5 kW/(m²·K) invented).
"""

import itertools

import matplotlib

matplotlib.use("Agg")

import numpy as np  # noqa: E402
import pytest  # noqa: E402
from refdata import load_reference  # noqa: E402

from heatloom.io.grid_figures import grid_diagram  # noqa: E402
from heatloom.io.grid_layout import grid_layout  # noqa: E402
from heatloom.model import StreamTable  # noqa: E402
from heatloom.network.design import design_mer  # noqa: E402
from heatloom.network.streamorder import grid_key  # noqa: E402
from heatloom.network.structure import Cooler, Exchanger, Heater, Network  # noqa: E402

EPS = 1e-6


def marks(fig) -> dict[str, list[tuple[float, float]]]:
    """Unit name → its marks (x, y) [in]: hot end then cold end of an exchanger, one for a heater or cooler."""
    out = {}
    for line in fig.axes[0].get_lines():
        gid = line.get_gid() or ""
        if gid.startswith("unit:"):
            out[gid[5:]] = list(zip(line.get_xdata(), line.get_ydata()))
    return out


def stream_y(fig, name: str) -> float:
    return next(line.get_ydata()[0] for line in fig.axes[0].get_lines() if line.get_gid() == f"stream:{name}")


def texts(fig, gid: str) -> list[str]:
    return [t.get_text() for t in fig.axes[0].texts if t.get_gid() == gid]


def gids(fig, prefix: str) -> list[str]:
    return [a.get_gid() for a in fig.axes[0].get_children() if (a.get_gid() or "").startswith(prefix)]


def followings(net) -> list[tuple[str, str, str, str]]:
    """(stream, side, unit before, unit after) for every two units of a stream where the first one's outlet
    is at or before the second one's inlet from the stream's supply end (from the temperatures)."""
    out = []
    units = [*net.exchangers, *net.heaters, *net.coolers]
    for side in ("hot", "cold"):
        on: dict[str, list] = {}
        for u in units:
            if hasattr(u, side):
                on.setdefault(getattr(u, side), []).append(u)
        for stream, group in on.items():
            for a, b in itertools.permutations(group, 2):
                a_in, a_out, b_in = (getattr(a, f"{side}_in"), getattr(a, f"{side}_out"), getattr(b, f"{side}_in"))
                if side == "hot" and a_out >= b_in - EPS and a_in > b_in + EPS:
                    out.append((stream, side, a.name, b.name))
                if side == "cold" and a_out <= b_in + EPS and a_in < b_in - EPS:
                    out.append((stream, side, a.name, b.name))
    return out


def assert_columns_follow_temperatures(net, fig) -> None:
    x = {name: m[0][0] for name, m in marks(fig).items()}
    pairs = followings(net)
    assert pairs, "no two units follow each other: the check would be empty"
    for stream, side, a, b in pairs:
        if side == "hot":
            assert x[a] < x[b], (stream, a, b)            # hot streams flow left to right
        else:
            assert x[a] > x[b], (stream, a, b)            # cold streams flow right to left


def overlaps(fig) -> list[str]:
    """Texts that meet another text or cover a unit's mark, on the figure drawn by the Agg renderer."""
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    ax = fig.axes[0]
    shown = [t for t in ax.texts if t.get_text()]
    boxes = np.array([t.get_window_extent(renderer).extents for t in shown]) + [0.5, 0.5, -0.5, -0.5]
    found = [f"{shown[i].get_text()!r} meets {shown[j].get_text()!r}"
             for i, j in itertools.combinations(range(len(shown)), 2)
             if min(boxes[i, 2], boxes[j, 2]) > max(boxes[i, 0], boxes[j, 0])
             and min(boxes[i, 3], boxes[j, 3]) > max(boxes[i, 1], boxes[j, 1])]
    for name, points in marks(fig).items():
        for px, py in ax.transData.transform(points):
            found += [f"{shown[i].get_text()!r} covers {name}" for i, b in enumerate(boxes)
                      if b[0] < px < b[2] and b[1] < py < b[3]]
    return found


# --------------------------------------------------------------------------------------------------
# invented: H1 (CP 2 kW/K) splits at 150 °C between A (0.25) and a branch through B then C (0.75); the
# branches mix at 100 °C and a cooler D takes H1 to 75 °C.  C3 (CP 1.5 kW/K) meets C (30 → 60 °C) then E
# from H2 (60 → 90 °C).  The stages contradict the temperatures: B (stage 3) after C (stage 2) on H1, E
# (stage 4) right of C on C3 although E is C3's later, hotter unit.


@pytest.fixture(scope="module")
def series_branch():
    a = Exchanger("H1", "C1", 25.0, 150, 100, 40, 60, hot_fraction=0.25, stage=0, name="A")
    b = Exchanger("H1", "C2", 30.0, 150, 130, 50, 80, hot_fraction=0.75, stage=3, name="B")
    c = Exchanger("H1", "C3", 45.0, 130, 100, 30, 60, hot_fraction=0.75, stage=2, name="C")
    e = Exchanger("H2", "C3", 45.0, 200, 155, 60, 90, stage=4, name="E")
    d = Cooler("H1", "CW", 50.0, 100, 75, 20, 30, stage=5, name="D")
    net = Network((a, b, c, e), (), (d,), 10.0)
    streams = StreamTable.from_arrays(["H1", "H2", "C1", "C2", "C3"], [150, 200, 40, 50, 30], [75, 155, 60, 80, 90],
                                      [2.0, 1.0, 1.25, 1.0, 1.5])
    return net, streams


def test_the_invented_stages_contradict_the_temperatures(series_branch):
    net, _ = series_branch
    stage = {u.name: grid_key(u) for u in (*net.exchangers, *net.coolers)}
    pairs = followings(net)
    assert ("H1", "hot", "B", "C") in pairs and stage["B"] > stage["C"]      # B first on H1, later stage
    assert ("C3", "cold", "C", "E") in pairs and stage["E"] > stage["C"]     # E left of C on C3, later stage


def test_columns_follow_the_temperatures_along_every_stream(series_branch):
    net, streams = series_branch
    fig = grid_diagram(net, streams)
    assert_columns_follow_temperatures(net, fig)
    x = {name: m[0][0] for name, m in marks(fig).items()}
    assert x["E"] < x["C"] and x["B"] < x["C"] < x["D"] and x["A"] < x["D"]
    # the split's branches start side by side: no unit between A and B
    lo, hi = sorted((x["A"], x["B"]))
    assert not any(lo < v < hi for v in x.values())
    assert grid_layout(net).dropped == ()


def test_units_in_series_share_their_branch_lane(series_branch):
    net, streams = series_branch
    fig = grid_diagram(net, streams)
    hot_end = {name: m[0][1] for name, m in marks(fig).items()}
    y = stream_y(fig, "H1")
    assert hot_end["B"] == pytest.approx(hot_end["C"])                     # one branch, one lane
    assert hot_end["A"] != pytest.approx(hot_end["B"])                     # the other branch, another lane
    # the branch of fewer units on the main line, the longer one on a lane below it (its connectors
    # then cross no line of H1's)
    assert hot_end["A"] == pytest.approx(y) and hot_end["B"] < y
    assert hot_end["D"] == pytest.approx(y)                                # after the mixer: the main line
    assert gids(fig, "branch:") == ["branch:H1"]                           # one branch line, H1's
    # one fraction per branch, at its first unit; 130 °C between B and C, both branch outlets at 100 °C
    assert texts(fig, "fraction:A") == ["0.25"] and texts(fig, "fraction:B") == ["0.75"]
    assert texts(fig, "fraction:C") == []
    assert "130 °C" in texts(fig, "temperature:H1")
    assert texts(fig, "temperature:H1").count("100 °C") >= 2
    assert overlaps(fig) == []


def test_a_precedence_that_closes_a_cycle_gives_way_on_the_cold_stream():
    # invented: X then Y along H1 (X left of Y), but X then Y from C1's supply end too (X right of Y): no
    # single order; the cold stream's precedence is dropped, the hot stream's kept
    x = Exchanger("H1", "C1", 50.0, 200, 150, 50, 80, name="X", stage=1)
    y = Exchanger("H1", "C1", 50.0, 150, 100, 80, 120, name="Y", stage=0)
    net = Network((x, y), (), (), 10.0)
    layout = grid_layout(net)
    assert layout.dropped == (("X", "Y", "C1"),)
    assert layout.column["X"] < layout.column["Y"]


# --------------------------------------------------------------------------------------------------
# invented: a split inside a branch.  H1 (CP 4 kW/K) splits at 150 °C: A and B (0.3 each) cool their share to
# 100 °C, mix and go on through E (0.6, to 80 °C) beside C (0.4, to 80 °C).


@pytest.fixture(scope="module")
def nested():
    a = Exchanger("H1", "C1", 60.0, 150, 100, 30, 90, hot_fraction=0.3, name="A")
    b = Exchanger("H1", "C2", 60.0, 150, 100, 40, 100, hot_fraction=0.3, name="B")
    c = Exchanger("H1", "C3", 112.0, 150, 80, 20, 76, hot_fraction=0.4, name="C")
    e = Exchanger("H1", "C4", 48.0, 100, 80, 30, 78, hot_fraction=0.6, name="E")
    h = Heater("C3", "steam", 48.0, 76, 100, 180, 179, name="HU")
    net = Network((a, b, c, e), (h,), (), 10.0)
    streams = StreamTable.from_arrays(["H1", "C1", "C2", "C3", "C4"], [150, 30, 40, 20, 30], [80, 90, 100, 100, 78],
                                      [4.0, 1.0, 1.0, 2.0, 1.0])
    return net, streams


def test_a_split_inside_a_branch_is_drawn_on_sub_lanes_without_overlap(nested):
    net, streams = nested
    fig = grid_diagram(net, streams)
    m = marks(fig)
    every = [p for points in m.values() for p in points]
    assert len({(round(px, 6), round(py, 6)) for px, py in every}) == len(every)   # no two marks on one spot
    hot_end = {name: points[0][1] for name, points in m.items() if name != "HU"}
    y = stream_y(fig, "H1")
    assert len({round(hot_end[n], 6) for n in "ABC"}) == 3                  # three parallel lanes
    assert hot_end["C"] == pytest.approx(y)                                 # the one-unit branch on the line,
    assert max(hot_end["A"], hot_end["B"]) < y                              # the split branch below it
    assert hot_end["E"] == pytest.approx(max(hot_end["A"], hot_end["B"]))   # E on the branch's own lane
    assert_columns_follow_temperatures(net, fig)
    assert sorted(gids(fig, "branch:")) == ["branch:H1", "branch:H1"]       # the inner and the outer split
    assert texts(fig, "fraction:E") == ["0.60"] and texts(fig, "fraction:C") == ["0.40"]
    assert texts(fig, "fraction:A") == ["0.30"] and texts(fig, "fraction:B") == ["0.30"]
    assert overlaps(fig) == []


# --------------------------------------------------------------------------------------------------
# published stream data: stagewise designs whose stages agree with their temperatures keep the stage order


def stage_order_agrees(net) -> bool:
    key = {u.name: grid_key(u) for u in (*net.exchangers, *net.heaters, *net.coolers)}
    pairs = followings(net)
    return all(key[a] <= key[b] if side == "hot" else key[a] >= key[b] for _, side, a, b in pairs)


@pytest.mark.parametrize("reference", [
    "targeting_sinnott_four_stream",
    pytest.param("synthesis_aromatics_plant_4h5c", marks=pytest.mark.slow),
])
def test_a_stagewise_design_keeps_its_stage_order(reference):
    streams = load_reference(reference)[1]
    net = design_mer(streams, 10, default_film_coefficient=0.5)
    assert stage_order_agrees(net)           # the premise: this design's stages agree with its temperatures
    fig = grid_diagram(net, streams)
    assert_columns_follow_temperatures(net, fig)
    x = {name: points[0][0] for name, points in marks(fig).items()}
    units = sorted((*net.exchangers, *net.heaters, *net.coolers), key=grid_key)
    assert all(x[a.name] <= x[b.name] for a, b in zip(units, units[1:]) if grid_key(a) < grid_key(b))


def test_units_drawn_against_their_stream_order_are_named_under_the_figure():
    # the network of the test above: C1's order (X before Y from its supply end, which puts X to the right)
    # cannot be kept, so the figure says which two units are drawn the other way round on C1
    x = Exchanger("H1", "C1", 50.0, 200, 150, 50, 80, name="X", stage=1)
    y = Exchanger("H1", "C1", 50.0, 150, 100, 80, 120, name="Y", stage=0)
    streams = StreamTable.from_arrays(["H1", "C1"], [200, 50], [100, 120], [1.0, 100.0 / 70.0])
    fig = grid_diagram(Network((x, y), (), (), 10.0), streams)
    foot = [t.get_text() for t in fig.texts if t.get_gid() == "out-of-order"]
    assert len(foot) == 1 and "on C1, X then Y" in foot[0].replace("\n", " ")
    # nothing written under a figure whose every stream order holds
    a = Exchanger("H1", "C1", 50.0, 200, 150, 70, 120, name="A")
    b = Exchanger("H1", "C1", 50.0, 150, 100, 50, 70, name="B")
    assert not [t for t in grid_diagram(Network((a, b), (), (), 10.0), streams).texts
                if t.get_gid() == "out-of-order"]
