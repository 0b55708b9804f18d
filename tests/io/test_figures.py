"""Figures: what their titles and panels say (the drawing itself is checked by eye and in the report's
browser test). Stream data: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6
(the four-stream example); the film coefficient 0.5 kW/(m²·K) is invented."""

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import pytest  # noqa: E402
from refdata import load_reference  # noqa: E402

from heatloom.io.scenario_figures import MAX_PANELS, scenario_cost_figure
from heatloom.model.prices import price_factor_scenarios
from heatloom.studies.scenarios import scenario_study


@pytest.fixture(scope="module")
def sinnott():
    return load_reference("targeting_sinnott_four_stream")[1]


@pytest.mark.slow
def test_scenario_figure_has_one_panel_per_zone_and_one_line_per_scenario(sinnott):
    zones = {f"unit {i}": sinnott for i in range(MAX_PANELS + 2)}
    study = scenario_study(zones, (5, 15), scenarios=price_factor_scenarios([1, 2, 3]), step=5, workers=1,
                           default_film_coefficient=0.5)
    fig = scenario_cost_figure(study)
    shown = [ax for ax in fig.axes if ax.get_visible()]
    assert len(shown) == MAX_PANELS
    assert [ax.get_title() for ax in shown] == [f"unit {i}" for i in range(MAX_PANELS)]
    labelled = [line for line in shown[0].get_lines() if not line.get_label().startswith("_")]
    assert [line.get_label() for line in labelled] == ["prices ×1", "prices ×2", "prices ×3"]
    assert f"first {MAX_PANELS} of {MAX_PANELS + 2} zones" in fig._suptitle.get_text()
    plt.close(fig)


@pytest.mark.slow
def test_io_changes_no_global_matplotlib_state():
    # a library must not choose a backend or touch pyplot when imported or when it draws: import every
    # heatloom.io module and draw and write a figure in a fresh interpreter, then look
    import subprocess
    import sys

    code = "\n".join([
        "import importlib, io, pkgutil, sys",
        "import matplotlib",
        "settings = dict(dict.items(matplotlib.rcParams))   # dict.items: reading does not resolve the backend",
        "import heatloom.io",
        "for m in pkgutil.walk_packages(heatloom.io.__path__, 'heatloom.io.'):",
        "    importlib.import_module(m.name)",
        "from heatloom.io.figures import composite_figure",
        "from heatloom.model import StreamTable",
        "from heatloom.pinch import target",
        "s = StreamTable.from_arrays(['H', 'C'], [150, 30], [60, 120], [2.0, 2.5])",
        "fig = composite_figure(target(s, 10.0))",
        "fig.savefig(io.BytesIO(), format='png'); fig.savefig(io.BytesIO(), format='svg')",
        "assert 'matplotlib.pyplot' not in sys.modules, 'pyplot was imported'",
        "changed = [k for k, v in dict.items(matplotlib.rcParams) if settings[k] is not v and settings[k] != v]",
        "assert not changed, f'matplotlib settings changed: {changed}'",
    ])
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr


def test_no_io_module_calls_matplotlib_use():
    import ast
    import pathlib

    folder = pathlib.Path(__file__).resolve().parents[2] / "io"
    calls = [f"{path.name}:{node.lineno}" for path in sorted(folder.glob("*.py"))
             for node in ast.walk(ast.parse(path.read_text(encoding="utf-8")))
             if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute) and node.func.attr == "use"
             and isinstance(node.func.value, ast.Name) and node.func.value.id == "matplotlib"]
    assert calls == []
