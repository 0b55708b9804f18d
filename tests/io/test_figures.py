"""Figures: what their titles and panels say (the drawing itself is checked by eye and in the report's
browser test). Stream data: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6
(the four-stream example); the film coefficient 0.5 kW/(m²·K) is invented."""

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import pytest  # noqa: E402
from refdata import load_reference  # noqa: E402

from heatloom.io.figures import grid_diagram
from heatloom.io.scenario_figures import MAX_PANELS, scenario_cost_figure
from heatloom.model.prices import price_factor_scenarios
from heatloom.network.design import design_mer
from heatloom.studies.scenarios import scenario_study


@pytest.fixture(scope="module")
def sinnott():
    return load_reference("targeting_sinnott_four_stream")[1]


def test_grid_diagram_title_names_the_approach(sinnott):
    net = design_mer(sinnott, 10, default_film_coefficient=0.5)
    for approach in ("ΔTmin", "EMAT"):
        fig = grid_diagram(net, sinnott, approach=approach)
        assert fig.axes[0].get_title(loc="left") == f"Grid diagram, {approach} = 10 K, {net.units} units"
        plt.close(fig)


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
