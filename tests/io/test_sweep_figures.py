"""The ΔTmin sweep's figures, breakpoints and caution (issue 15): figures checked by their SVG text and element
counts and by the boxes of their labels.

Data: the solvent-recovery case (invented, case_studies/solvent_recovery) and Sinnott's four streams
(Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6) with invented film coefficients,
utilities and cost law.  That an optimum ΔTmin under 3 K deserves a caution is *common practice*
(close-approach exchangers, fouling, control), not a published threshold.
"""

import io
import json
import re
from pathlib import Path

import numpy as np
import pytest

from heatloom.cli import main
from heatloom.defaults import SMALL_DT_MIN
from heatloom.io.figures import new_axes, place_label
from heatloom.io.sweep_figures import cost_figure, targets_figure
from heatloom.model import StreamTable, Utility, UtilityKind
from heatloom.model.costs import CostLaw, CostSettings
from heatloom.studies.sweep import sweep

CASE = Path(__file__).resolve().parents[2] / "case_studies" / "solvent_recovery"


def svg_texts(fig) -> list[str]:
    """The texts of a figure as its SVG carries them (matplotlib writes each text as a comment)."""
    buf = io.StringIO()
    fig.savefig(buf, format="svg")
    return re.findall(r"<!-- (.*?) -->", buf.getvalue(), flags=re.S)


def svg_count(fig, kind: str, axes: int = 1) -> int:
    """Elements of one kind (``line2d``, ``text``, ``patch``) drawn directly in the ``axes``-th axes of the SVG
    (tick marks, tick labels and the legend sit in groups of their own and are not counted)."""
    import xml.etree.ElementTree as ET

    buf = io.StringIO()
    fig.savefig(buf, format="svg")
    ns = "{http://www.w3.org/2000/svg}"
    group = next(g for g in ET.fromstring(buf.getvalue()).iter(f"{ns}g") if g.get("id") == f"axes_{axes}")
    return sum(1 for g in group.findall(f"{ns}g") if re.fullmatch(rf"{kind}_\d+", g.get("id", "")))


def assert_clear(label, ax, lines):
    """The label's box lies inside the axes and holds no point of the lines, drawn densely (independent of
    heatloom.io.figures.segments_hit)."""
    renderer = ax.figure.canvas.get_renderer()
    box = label.get_window_extent(renderer)
    for line in lines:
        x, y = (np.asarray(v, dtype=float) for v in line.get_data())
        fine = np.linspace(x[0], x[-1], 4000)
        pts = ax.transData.transform(np.column_stack([fine, np.interp(fine, x, y)]))
        pts = pts[np.isfinite(pts).all(axis=1)]
        assert not np.any((pts[:, 0] >= box.x0) & (pts[:, 0] <= box.x1) & (pts[:, 1] >= box.y0)
                          & (pts[:, 1] <= box.y1)), line.get_label()
    frame = ax.get_window_extent(renderer)
    assert frame.x0 <= box.x0 and box.x1 <= frame.x1 and frame.y0 <= box.y0 and box.y1 <= frame.y1


def test_label_placed_away_from_crowding_lines():
    # lines through and just above the point, where a label beside the point would sit
    fig, ax = new_axes("t", "x [-]", "y [-]")
    lines = ax.plot([0, 10], [0, 10]) + ax.plot([0, 10], [5.4, 5.4]) + ax.plot([0, 10], [10, 0])
    ax.set_xlim(0, 10)
    ax.set_ylim(0, 10)
    fig.tight_layout()
    label = place_label(ax, "optimum 5.00 K\n1,000 EUR/year", (5.0, 5.0))
    assert_clear(label, ax, lines)
    assert "optimum 5.00 K" in svg_texts(fig)


@pytest.fixture(scope="module")
def solvent():
    from heatloom.io import read_streams, read_utilities
    from heatloom.io.costs import read_costs

    streams = read_streams(CASE / "streams.csv")
    costs = read_costs(CASE / "costs.json")
    return sweep(streams, (5, 40), read_utilities(CASE / "utilities.csv", process=streams), costs, step=0.5,
                 workers=1, default_film_coefficient=0.5)


@pytest.fixture(scope="module")
def close_approach():
    # Sinnott's streams with invented h, dear steam and cheap area: the optimum falls under 3 K
    s = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140], [3.0, 1.0, 2.0, 4.5],
                                film_coefficient=[1.0] * 4)
    u = [Utility("steam", 200, 199, 400.0, UtilityKind.HOT, 5.0), Utility("cw", 15, 20, 40.0, UtilityKind.COLD, 2.0)]
    return sweep(s, (1, 20), u, CostSettings(annualised=True, exchanger=CostLaw(1000, 300, 0.8)), step=0.5,
                 workers=1)


def test_a_grid_point_on_a_change_gives_one_breakpoint(solvent):
    # ΔTmin 15 K is a grid point where two stream ends set the pinch at once: one breakpoint, not two
    near = [b for b in solvent.breakpoints if abs(0.5 * (b.low + b.high) - 15.0) < 0.01]
    assert len(near) == 1
    b = near[0]
    assert b.low < 15.0 < b.high and b.high - b.low <= 2.1e-3
    assert "units_mer" in b.changes and "at 15 K only" in b.change
    mids = [round(0.5 * (b.low + b.high), 3) for b in solvent.breakpoints]
    assert len(mids) == len(set(mids))


def test_console_lists_each_breakpoint_once(tmp_path, capsys):
    code = main(["sweep", str(CASE / "streams.csv"), "--dtmin", "5:40", "--costs", str(CASE / "costs.json"),
                 "--utilities", str(CASE / "utilities.csv"), "--default-h", "0.5", "--quiet", "--workers", "1"])
    out = capsys.readouterr().out
    assert code == 0
    lines = re.findall(r"^\s+(\d+\.\d{3}) K  ", out, flags=re.M)
    assert lines and len(lines) == len(set(lines))
    assert re.search(r"breakpoints\s+2:", out)


def test_cost_figure_label_clear_of_every_curve_and_axis_thousands(solvent):
    fig = cost_figure(solvent)
    ax = fig.axes[0]
    label = [t for t in ax.texts if t.get_text().startswith("optimum")]
    assert len(label) == 1
    assert_clear(label[0], ax, ax.get_lines()[:3])
    texts = svg_texts(fig)
    o = solvent.optimum
    assert f"optimum {o.dt_min:.2f} K" in texts and f"{o.total_annual_cost:,.0f} EUR/year" in texts
    ticks = [t for t in texts if re.fullmatch(r"[\d,]+", t)]
    assert "200,000" in ticks and "100,000" in ticks and not any(re.fullmatch(r"\d{4,}", t) for t in ticks)
    # three curves, the optimum, the unit steps (dotted) and nothing else
    steps = sum(1 for b in solvent.breakpoints if {"units", "units_mer", "shells", "feasibility"} & set(b.changes))
    assert svg_count(fig, "line2d") == 3 + 1 + steps
    assert not any(t.startswith("Caution") for t in texts)


def test_targets_figure_axes_have_thousands(solvent):
    texts = svg_texts(targets_figure(solvent))
    assert "1,000" in texts or "1,200" in texts
    assert not any(re.fullmatch(r"\d{4,}", t) for t in texts)


def test_optimum_under_3_k_gets_a_caution(close_approach):
    assert close_approach.optimum.dt_min < SMALL_DT_MIN
    notes = [n for n in close_approach.notes if "under 3 K" in n]
    assert len(notes) == 1
    assert all(w in notes[0] for w in ("plate", "fouling", "control", "common-practice"))
    fig = cost_figure(close_approach)
    ax = fig.axes[0]
    assert_clear(next(t for t in ax.texts if t.get_text().startswith("optimum")), ax, ax.get_lines()[:3])
    texts = svg_texts(fig)
    assert any(t.startswith("Caution: optimum ΔTmin under 3 K") for t in texts)


def test_caution_in_console_and_json(tmp_path, capsys):
    streams = tmp_path / "streams.csv"
    streams.write_text("name,T_supply,T_target,CP,h\n1,180,60,3.0,1\n2,150,30,1.0,1\n3,20,135,2.0,1\n"
                       "4,80,140,4.5,1\n", encoding="utf-8")
    utilities = tmp_path / "utilities.csv"
    utilities.write_text("name,T_supply,T_target,cost,h\nsteam,200,199,400,5\ncw,15,20,40,2\n", encoding="utf-8")
    costs = tmp_path / "costs.json"
    costs.write_text(json.dumps({"annualised": True, "exchanger": {"fixed": 1000, "per_area": 300,
                                                                    "exponent": 0.8}}), encoding="utf-8")
    args = ["sweep", str(streams), "--dtmin", "1:20", "--utilities", str(utilities), "--costs", str(costs),
            "--workers", "1", "--quiet"]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "under 3 K" in out and "fouling" in out
    assert main([*args, "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["optimum"]["dtmin"] < 3
    assert any("under 3 K" in n and "control" in n for n in data["notes"])
