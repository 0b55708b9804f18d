"""Transshipment LP and its temperature intervals (heatloom.network.transshipment).

Published checks use the reference problems in tests/data/references/ (each file names its source; the
source is repeated beside every assertion).  The targets those books print are asserted directly; the
synthesis problems print no targets, so there the LP is cross-checked against the problem table and the
utility-placement LP of heatloom.pinch (which are themselves tested against published values in
tests/pinch).  Invented data (hypothesis, derandomised) are used only for property checks.
"""

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from refdata import reference_utilities
from synthesis_problems import SYNTHESIS, TARGETING, problems

from heatloom.errors import InfeasibleError, InputError
from heatloom.model import Utility
from heatloom.network.transshipment import (
    FREE_UTILITY_MARGIN,
    free_target_utilities,
    temperature_intervals,
    transshipment,
)
from heatloom.pinch import place_utilities, problem_table, target

SETTINGS = settings(max_examples=60, derandomize=True, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])


# ---------------------------------------------------------------------------- transshipment LP (a)

# (reference file, hot utility, cold utility) as printed [kW]; sources as in the files.
PUBLISHED_TARGETS = [
    # Ray & Das, Process Equipment and Plant Design: Principles and Practices, Elsevier, ch. 5,
    # Problem 5.1, Tables P5.1B and P5.1C: 90 kW hot, 255 kW cold at ΔTmin 20 K.
    ("targeting_ray_das_problem_5_1", 90, 255),
    # Ray & Das, ch. 5, Problem 5.4: 62.5 kW hot, 45 kW cold at ΔTmin 10 K (CP of stream 2 per the
    # book's own cascade, see the erratum in the file's note).
    ("targeting_ray_das_problem_5_4", 62.5, 45),
    # Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6: 50 kW hot, 30 kW cold.
    ("targeting_sinnott_four_stream", 50, 30),
]


@pytest.mark.parametrize(("name", "hot", "cold"), PUBLISHED_TARGETS)
def test_lp_reproduces_published_targets(reference, name, hot, cold):
    data, streams = reference(name)
    t = transshipment(streams, data["dtmin"])
    assert t.hot_utility == pytest.approx(hot, abs=1e-6)
    assert t.cold_utility == pytest.approx(cold, abs=1e-6)
    assert t.free_utilities
    # pinch printed as hot / cold temperatures: shifted = their mean
    p = data["published"]
    assert t.pinches == pytest.approx([(p["pinch_hot_C"] + p["pinch_cold_C"]) / 2], abs=1e-9)


def test_lp_threshold_problem(reference):
    # Ray & Das, ch. 5, Problem 5.2: a threshold problem that needs hot utility only (the book's statement).
    data, streams = reference("targeting_ray_das_problem_5_2_threshold")
    t = transshipment(streams, data["dtmin"])
    assert t.hot_utility > 0
    assert t.cold_utility == 0.0
    assert t.pinches == ()


@pytest.mark.parametrize("name", TARGETING)
def test_lp_agrees_with_problem_table(reference, name):
    data, streams = reference(name)
    t = transshipment(streams, data["dtmin"])
    pt = target(streams, data["dtmin"])
    assert t.hot_utility == pytest.approx(pt.hot_utility, abs=1e-6)
    assert t.cold_utility == pytest.approx(pt.cold_utility, abs=1e-6)
    assert t.pinches == pytest.approx([p.shifted for p in pt.pinches], abs=1e-9)


def test_intervals_reproduce_published_balances(reference):
    # Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (the file's note):
    # +90, -2.5, -137.5, +60, -30 kW between shifted 175, 145, 140, 85, 55, 25 °C.
    data, streams = reference("targeting_sinnott_four_stream")
    iv = temperature_intervals(streams, data["dtmin"])
    assert iv.temperatures.tolist() == [175, 145, 140, 85, 55, 25]
    np.testing.assert_allclose(iv.surplus, [90, -2.5, -137.5, 60, -30], atol=1e-12)
    # Klemeš, Friedler, Bulatov & Varbanov, Sustainability in the Process Industry, McGraw-Hill 2011,
    # Table 4.2: the interval balances as printed (top, bottom shifted °C, balance kW).
    data, streams = reference("targeting_klemes_table_4_2")
    iv = temperature_intervals(streams, data["dtmin"])
    for k, (top, bottom, q) in enumerate(data["published"]["interval_balances_kW"]):
        assert (iv.temperatures[k], iv.temperatures[k + 1]) == (top, bottom)
        assert iv.surplus[k] == pytest.approx(q, abs=1e-9)


@pytest.mark.parametrize("name", SYNTHESIS)
@pytest.mark.parametrize("dt_min", [5.0, 10.0])
def test_lp_agrees_with_utility_placement_on_synthesis_problems(reference, name, dt_min):
    # Stream and utility data: Roetzel, Luo & Chen 2020, ch. 6 (source in each file).  The files print no
    # ΔTmin or targets; ΔTmin 5 and 10 K are our choice, and the check is against heatloom.pinch.
    data, streams = reference(name)
    utilities = reference_utilities(data)
    t = transshipment(streams, dt_min, utilities)
    placement = place_utilities(problem_table(streams, dt_min), utilities)
    for d in placement.duties:
        assert t.utility_duties[d.utility.name] == pytest.approx(d.duty, abs=1e-6 * streams_scale(streams))
    assert t.utility_cost == pytest.approx(placement.annual_cost, rel=1e-9)
    pt = target(streams, dt_min)
    assert t.hot_utility == pytest.approx(pt.hot_utility, abs=1e-6 * streams_scale(streams))


def test_lp_and_placement_agree_on_infeasibility(reference):
    # Yee & Grossmann data (Roetzel, Luo & Chen 2020, Table 6.16): cooling water enters at 293 K and H2
    # leaves at 303 K, so above ΔTmin 10 K no cold utility can finish H2; both models must say so.
    data, streams = reference("synthesis_yee_grossmann_2h2c")
    utilities = reference_utilities(data)
    with pytest.raises(InfeasibleError):
        place_utilities(problem_table(streams, 20.0), utilities)
    with pytest.raises(InfeasibleError, match="no feasible utility placement"):
        transshipment(streams, 20.0, utilities)


def streams_scale(streams):
    return max(sum(s.duty for s in streams), 1.0)


@pytest.mark.parametrize(("levels", "expected"), [
    # Split checked by hand from Sinnott's Table 3.6 (see tests/pinch/test_utilities.py): the cascade at
    # 95 °C shifted is 87.5 − 137.5·45/55 = −25 kW, so 25 kW must come from above 95 °C shifted.
    ([("HP steam", 250, 249, 150.0), ("LP steam", 100, 99, 80.0), ("cooling water", 20, 30, 10.0)],
     {"HP steam": 25.0, "LP steam": 25.0, "cooling water": 30.0}),
    # 2 kW/K × 5 K = 10 kW flows past 80 °C shifted: a warm cooling level takes only that.
    ([("steam", 250, 249, 150.0), ("tempered water", 75, 80, 2.0), ("chilled water", 5, 10, 60.0)],
     {"steam": 50.0, "tempered water": 10.0, "chilled water": 20.0}),
])
def test_lp_several_levels(reference, levels, expected):
    data, streams = reference("targeting_sinnott_four_stream")
    utilities = [Utility(*x) for x in levels]
    t = transshipment(streams, data["dtmin"], utilities)
    assert {k: round(v, 6) for k, v in t.utility_duties.items()} == expected
    placement = place_utilities(problem_table(streams, data["dtmin"]), utilities)
    assert placement.utility_pinches == pytest.approx([p for p in t.pinches if p != 85.0])


def test_lp_errors(reference):
    data, streams = reference("targeting_sinnott_four_stream")
    with pytest.raises(InfeasibleError, match="hotter than any hot utility"):
        transshipment(streams, 10, [Utility("LP steam", 80, 79, 80.0), Utility("water", 20, 30, 10.0)])
    with pytest.raises(InputError, match="utility name '1'"):
        transshipment(streams, 10, [Utility("1", 250, 249, 80.0), Utility("water", 20, 30, 10.0)])
    with pytest.raises(InputError, match="ΔTmin must be a finite number >= 0 K"):
        transshipment(streams, float("nan"))
    with pytest.raises(InputError, match=r"utility 'generation': price must be >= 0"):
        # a level that pays would make the LP unbounded (running heat through both earns money): the model
        # refuses the negative price before any LP is built
        transshipment(streams, 10, [Utility("steam", 250, 249, 10.0), Utility("generation", 20, 30, -50.0)])


def test_free_utilities_lie_beyond_the_process(reference):
    data, streams = reference("targeting_klemes_table_4_2")
    hot, cold = free_target_utilities(streams, data["dtmin"])
    assert hot.supply_temperature == max(max(s.supply_temperature, s.target_temperature) for s in streams) \
        + FREE_UTILITY_MARGIN
    assert cold.supply_temperature < min(min(s.supply_temperature, s.target_temperature) for s in streams)


@SETTINGS
@given(problems())
def test_lp_agrees_with_targeting_on_random_problems(problem):
    streams, dt_min, levels = problem
    scale = streams_scale(streams)
    pt = target(streams, dt_min)
    free = transshipment(streams, dt_min)
    assert free.hot_utility == pytest.approx(pt.hot_utility, abs=1e-7 * scale)
    assert free.cold_utility == pytest.approx(pt.cold_utility, abs=1e-7 * scale)
    assert free.pinches == pytest.approx([p.shifted for p in pt.pinches], abs=1e-9)
    t = transshipment(streams, dt_min, levels)
    placement = place_utilities(problem_table(streams, dt_min), levels)
    for d in placement.duties:
        assert t.utility_duties[d.utility.name] == pytest.approx(d.duty, abs=1e-6 * scale)
    assert np.all(t.residuals >= -1e-7 * scale)
