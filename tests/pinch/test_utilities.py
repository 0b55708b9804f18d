"""Utility-level placement against the grand composite curve.

The four-stream data are Sinnott's problem table example (Coulson & Richardson's Chemical Engineering
Vol. 6, ch. 3, Table 3.6: 50 kW hot, 30 kW cold utility, pinch 90/80 °C at ΔTmin 10 K). The split between
levels is checked against the grand composite computed by hand from that table: the cascade at 95 °C
shifted is 87.5 − 137.5·45/55 = −25 kW, so 25 kW must come from above 95 °C shifted.
"""

import pytest
from refdata import reference_utilities

from heatloom.errors import InfeasibleError, InputError
from heatloom.model import Utility
from heatloom.pinch import place_utilities, problem_table, target


@pytest.fixture
def sinnott(reference):
    data, streams = reference("targeting_sinnott_four_stream")
    return streams


def duties(t):
    return {k: round(v, 9) for k, v in t.utility_duties.items()}


def test_ideal_levels_reproduce_the_problem_table(sinnott):
    t = target(sinnott, 10, [Utility("fired heater", 400, 300, 200.0), Utility("cooling water", 10, 15, 5.0)])
    assert duties(t) == {"fired heater": 50.0, "cooling water": 30.0}


def test_cheaper_lower_level_takes_what_it_can(sinnott):
    levels = [Utility("HP steam", 250, 249, 150.0), Utility("LP steam", 100, 99, 80.0),
              Utility("cooling water", 20, 30, 10.0)]
    t = target(sinnott, 10, levels)
    assert duties(t) == {"HP steam": 25.0, "LP steam": 25.0, "cooling water": 30.0}
    assert t.placement.annual_cost == pytest.approx(25 * 150 + 25 * 80 + 30 * 10)
    # the LP steam level pinches the cascade where it enters (95 °C shifted)
    assert t.placement.utility_pinches == (95.0,)


def test_lp_steam_low_enough_takes_everything(sinnott):
    levels = [Utility("HP steam", 250, 249, 150.0), Utility("LP steam", 120, 119, 80.0),
              Utility("cooling water", 20, 30, 10.0)]
    assert duties(target(sinnott, 10, levels)) == {"HP steam": 0.0, "LP steam": 50.0, "cooling water": 30.0}


def test_equal_prices_prefer_the_milder_level(sinnott):
    levels = [Utility("HP steam", 250, 249, 100.0), Utility("LP steam", 120, 119, 100.0),
              Utility("cooling water", 20, 30, 0.0)]
    assert duties(target(sinnott, 10, levels))["LP steam"] == 50.0


def test_two_cold_levels(sinnott):
    # Below the pinch the cascade carries 60 kW at 55 °C shifted and 30 kW at 25 °C. Cooling water at
    # 40-45 °C (shifted 45-50 °C) sees 40 kW flowing past 45 °C shifted, more than the 30 kW to remove,
    # so the cheap level takes it all.
    levels = [Utility("steam", 250, 249, 150.0), Utility("river water", 40, 45, 2.0),
              Utility("chilled water", 5, 10, 60.0)]
    assert duties(target(sinnott, 10, levels)) == {"steam": 50.0, "river water": 30.0, "chilled water": 0.0}


def test_warm_cooling_level_takes_only_what_flows_past_it(sinnott):
    # Cooling water at 75-80 °C (shifted 80-85 °C, just under the pinch): the cascade carries only
    # 2 kW/K × 5 K = 10 kW past 80 °C shifted, so it takes 10 kW and chilled water the other 20 kW.
    levels = [Utility("steam", 250, 249, 150.0), Utility("tempered water", 75, 80, 2.0),
              Utility("chilled water", 5, 10, 60.0)]
    assert duties(target(sinnott, 10, levels)) == {"steam": 50.0, "tempered water": 10.0,
                                                   "chilled water": 20.0}


def test_no_hot_utility_hot_enough(sinnott):
    with pytest.raises(InfeasibleError, match=r"hotter than any hot utility"):
        target(sinnott, 10, [Utility("LP steam", 80, 79, 80.0), Utility("cooling water", 20, 30, 10.0)])


def test_missing_cold_utility(sinnott):
    with pytest.raises(InfeasibleError, match=r"no cold utility was given"):
        target(sinnott, 10, [Utility("HP steam", 250, 249, 150.0)])


def test_no_cold_utility_cold_enough(sinnott):
    with pytest.raises(InfeasibleError, match=r"colder than any cold utility"):
        target(sinnott, 10, [Utility("HP steam", 250, 249, 150.0), Utility("warm water", 90, 95, 1.0)])


def test_empty_utility_list_is_an_input_error(sinnott):
    with pytest.raises(InputError, match="no utilities"):
        place_utilities(problem_table(sinnott, 10), [])


def test_cooling_water_too_warm_for_a_cold_target(reference):
    # Yee & Grossmann two-hot/two-cold problem (shared reference file; source: Roetzel, Luo & Chen 2020,
    # Table 6.16): H2 must reach 303 K (29.85 °C) but the cooling water enters at 293 K (19.85 °C), so at
    # ΔTmin 20 K it would have to be 10 K colder. By hand: H2 (CP 15 kW/K) releases 15 × 10 = 150 kW
    # below the water's shifted inlet, 29.85 °C shifted (19.85 °C + 10 K).
    data, streams = reference("synthesis_yee_grossmann_2h2c")
    with pytest.raises(InfeasibleError, match=r"releases 150 kW of heat below 19.85 °C"):
        target(streams, 20, reference_utilities(data))
