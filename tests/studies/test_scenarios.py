"""Scenario studies (heatloom.studies.scenarios): zones × utility price scenarios × ΔTmin.

Sources named beside each use: the published stream data and targets of tests/data/references/
(Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6; Ray & Das, Process
Equipment and Plant Design, Elsevier, ch. 5, Problem 5.1, Tables P5.1B/P5.1C; Klemeš, Friedler, Bulatov &
Varbanov 2011, Sustainability in the Process Industry, Table 4.2 stream data; the three hot / four cold
problem of Colberg & Morari 1990 with its utilities and cost law, as printed by Roetzel, Luo & Chen 2020,
ch. 6, Table 6.23). Film coefficients where the sources give none, the utility levels marked invented and
every price scenario are invented for the tests.

Independent paths: each case is compared with :func:`heatloom.studies.sweep.sweep_point` given the
scenario's priced utilities explicitly, and each optimum with :func:`heatloom.studies.sweep.sweep` run
directly; energy costs are checked by hand (price × duty). The Townsend–Linnhoff area target is a lower
bound on any network's area only when every stream and utility has the same film coefficient (Townsend &
Linnhoff 1984, the "Bath formula"; Linnhoff & Ahmad 1990), so the design-versus-target area check uses one
h everywhere.
"""

import dataclasses
import json
import math

import pytest
from refdata import load_reference, reference_utilities

from heatloom import defaults as network_data
from heatloom.errors import InputError
from heatloom.io.export import to_jsonable
from heatloom.model import CostLaw, CostSettings, StreamTable, Utility, UtilityKind
from heatloom.model.prices import PriceScenario, price_factor_scenarios
from heatloom.model.site import Zone
from heatloom.network.design import design_mer
from heatloom.pinch.utilities import ideal_utilities
from heatloom.studies.scenarios import ScenarioStudy, scenario_study
from heatloom.studies.sweep import sweep, sweep_point

H = 0.5   # kW/(m²·K), invented: one film coefficient for streams whose source prints none
REL = 1e-9

HOT_PRICE = network_data.DEFAULT_HOT_UTILITY_PRICE     # the assumed utilities' prices [money/(kW·year)]
COLD_PRICE = network_data.DEFAULT_COLD_UTILITY_PRICE


def streams_of(name: str) -> StreamTable:
    return load_reference(name)[1]


@pytest.fixture(scope="module")
def sinnott():
    # Sinnott, C&R Vol. 6, ch. 3, Table 3.6 stream data (no film coefficients in the source)
    return streams_of("targeting_sinnott_four_stream")


@pytest.fixture(scope="module")
def ray_das():
    # Ray & Das, Process Equipment and Plant Design, ch. 5, Problem 5.1 stream data (no h in the source)
    return streams_of("targeting_ray_das_problem_5_1")


@pytest.fixture(scope="module")
def klemes():
    # Klemeš, Friedler, Bulatov & Varbanov 2011, Table 4.2 stream data (no h in the source)
    return streams_of("targeting_klemes_table_4_2")


@pytest.fixture(scope="module")
def colberg_morari():
    # Colberg & Morari 1990 streams, utilities (HU 130, CU 20 per kW·year) and film coefficients, and the
    # cost law 8600 + 670·A^0.83 per year (Roetzel, Luo & Chen 2020, ch. 6, Table 6.23)
    data, streams = load_reference("synthesis_colberg_morari_3h4c")
    return streams, reference_utilities(data), CostSettings(annualised=True, exchanger=CostLaw(8600, 670, 0.83))


def invented_utilities() -> list[Utility]:
    # Invented levels, one hot and one cold, beyond both published problems at every ΔTmin used here
    # (Sinnott: cold streams up to 140 °C, hot streams down to 30 °C; Ray & Das: 180 °C and 40 °C).
    return [Utility("steam", 250.0, 250.0, 180.0, UtilityKind.HOT),
            Utility("brine", 0.0, 0.0, 30.0, UtilityKind.COLD)]


def canonical(study: ScenarioStudy) -> str:
    d = study.to_dict()
    d.pop("executor")     # says what ran the tasks: the only field that may differ
    return json.dumps(to_jsonable(d), sort_keys=True)


def case_of(study, zone, scenario, dt_min):
    (c,) = [c for c in study.cases if (c.zone, c.scenario, c.dt_min) == (zone, scenario, dt_min)]
    return c


# --------------------------------------------------------------------------------------------------
# 1. published energy targets, whatever the prices


PUBLISHED = [
    # Sinnott, C&R Vol. 6, ch. 3, Table 3.6: at ΔTmin 10 K, 50 kW hot and 30 kW cold utility
    pytest.param("targeting_sinnott_four_stream", (5.0, 25.0), 10.0, 50.0, 30.0, id="sinnott-table-3.6"),
    # Ray & Das, Process Equipment and Plant Design, ch. 5, Problem 5.1 (Tables P5.1B/C): at 20 K,
    # 90 kW hot and 255 kW cold utility
    pytest.param("targeting_ray_das_problem_5_1", (10.0, 30.0), 20.0, 90.0, 255.0, id="ray-das-5.1"),
]


@pytest.mark.parametrize(("name", "rng", "dt_pub", "hot_pub", "cold_pub"), PUBLISHED)
def test_published_targets_whatever_the_prices(name, rng, dt_pub, hot_pub, cold_pub):
    streams = streams_of(name)
    studies = [
        # the assumed utilities, scaled by factors
        scenario_study(streams, rng, scenarios=price_factor_scenarios([0.3, 1, 3]), step=5.0, workers=1,
                       default_film_coefficient=H),
        # an (invented) utility table, one hot and one cold level, with named prices and factors
        scenario_study(streams, rng, invented_utilities(),
                       [PriceScenario("as given"), PriceScenario("dear steam", (("steam", 400.0),)),
                        PriceScenario("cheap", (), 0.2), PriceScenario("mixed", (("brine", 5.0),), 2.5)],
                       step=5.0, workers=1, default_film_coefficient=H),
    ]
    for study in studies:
        assert dt_pub in study.dt_mins
        at_pub = [c for c in study.cases if c.dt_min == dt_pub]
        assert len(at_pub) == len(study.scenarios)
        for c in at_pub:
            assert c.targets.feasible
            assert c.targets.hot_utility == pytest.approx(hot_pub, abs=1e-6)     # source named above
            assert c.targets.cold_utility == pytest.approx(cold_pub, abs=1e-6)
        # one hot and one cold utility: prices move no energy target at any ΔTmin
        first = study.scenarios[0].name
        for c in study.cases:
            ref = case_of(study, c.zone, first, c.dt_min).targets
            assert c.targets.hot_utility == pytest.approx(ref.hot_utility, rel=1e-12, abs=1e-9)
            assert c.targets.cold_utility == pytest.approx(ref.cold_utility, rel=1e-12, abs=1e-9)
            assert (c.targets.area, c.targets.units_mer) == (ref.area, ref.units_mer)


# --------------------------------------------------------------------------------------------------
# 2. every case is sweep_point with the scenario's prices; energy cost by hand


def test_cases_equal_sweep_point_with_the_assumed_utilities_priced(sinnott, ray_das):
    factors = [0.5, 1.0, 2.5]
    study = scenario_study({"S": sinnott, "R": ray_das}, (5, 30), scenarios=price_factor_scenarios(factors),
                           step=5.0, workers=1, default_film_coefficient=H)
    assert len(study.cases) == 2 * 3 * 6
    for zone, streams in (("S", sinnott), ("R", ray_das)):
        for x in study.dt_mins:
            base = sweep_point(streams, x, default_film_coefficient=H)
            for f, plan in zip(factors, study.scenarios):
                c = case_of(study, zone, plan.name, x).targets
                # independent path: the assumed utilities given explicitly with the scenario's prices
                priced = [dataclasses.replace(u, cost=u.cost * f) for u in ideal_utilities(streams, x)]
                ref = sweep_point(streams, x, priced, default_film_coefficient=H)
                assert (c.units, c.units_mer) == (ref.units, ref.units_mer)
                for key in ("hot_utility", "cold_utility", "area", "capital_cost", "energy_cost",
                            "total_annual_cost"):
                    assert getattr(c, key) == pytest.approx(getattr(ref, key), rel=REL, abs=1e-9), key
                # capital does not depend on prices; energy = F × base energy
                assert c.capital_cost == base.capital_cost
                assert c.energy_cost == pytest.approx(f * base.energy_cost, rel=1e-12)
                # by hand: price × duty with the default prices of heatloom.defaults
                hand = f * (HOT_PRICE * c.hot_utility + COLD_PRICE * c.cold_utility)
                assert c.energy_cost == pytest.approx(hand, rel=1e-12)
                assert c.total_annual_cost == pytest.approx(c.capital_cost + c.energy_cost, rel=1e-12)


def test_cases_equal_sweep_point_with_a_utility_table(colberg_morari):
    streams, utilities, costs = colberg_morari
    plans = price_factor_scenarios([0.5, 2.0])
    study = scenario_study(streams, (5, 25), utilities, plans, costs, step=5.0, optimum=False, workers=1)
    assert study.optima == () and study.totals == ()
    for c in study.cases:
        plan = next(p for p in plans if p.name == c.scenario)
        ref = sweep_point(streams, c.dt_min, plan.apply(utilities), costs)
        assert c.targets == ref     # the same numbers, field by field
        # by hand: HU 130 and CU 20 per kW·year (Roetzel, Luo & Chen 2020, Table 6.23) × factor
        hand = plan.factor * (130.0 * c.targets.hot_utility + 20.0 * c.targets.cold_utility)
        assert c.targets.energy_cost == pytest.approx(hand, rel=1e-9)


# --------------------------------------------------------------------------------------------------
# 3. optima


@pytest.mark.slow
def test_optima_equal_sweep_and_beat_every_case(sinnott, ray_das, colberg_morari):
    factors = [0.3, 1.0, 3.0]
    zones = {"S": sinnott, "R": ray_das}
    study = scenario_study(zones, (5, 30), scenarios=price_factor_scenarios(factors), step=2.5, workers=1,
                           default_film_coefficient=H)
    assert len(study.optima) == 6
    for o in study.optima:
        f = next(p.factor for p in study.scenarios if p.name == o.scenario)
        direct = sweep(zones[o.zone], (5, 30), workers=1, default_film_coefficient=H, price_factor=f)
        assert o.optimum == direct.optimum and o.breakpoints == len(direct.breakpoints)
        grid = [c.targets for c in study.cases if (c.zone, c.scenario) == (o.zone, o.scenario)]
        assert len(grid) == 11
        assert all(o.optimum.total_annual_cost <= p.total_annual_cost * (1 + REL) for p in grid)

    streams, utilities, costs = colberg_morari
    plans = [PriceScenario("base"), PriceScenario("dear HU", (("HU", 260.0),)),
             PriceScenario("HU 260, rest ×1.5", (("HU", 260.0),), 1.5)]
    study = scenario_study(streams, (5, 30), utilities, plans, costs, step=5.0, workers=1)
    for o, plan in zip(study.optima, plans):
        assert o.scenario == plan.name
        direct = sweep(streams, (5, 30), plan.apply(utilities), costs, workers=1)
        assert o.optimum == direct.optimum
        grid = [c.targets for c in study.cases if c.scenario == plan.name]
        assert all(o.optimum.total_annual_cost <= p.total_annual_cost * (1 + REL) for p in grid)
    # property check: dearer hot utility, same capital: the optimum ΔTmin does not grow
    assert study.optima[1].optimum.dt_min <= study.optima[0].optimum.dt_min


@pytest.mark.parametrize("name", ["targeting_sinnott_four_stream", "targeting_klemes_table_4_2"])
def test_dearer_energy_never_moves_the_optimum_up(name):
    # Property check (not a published value): TAC = capital(ΔTmin) + F·energy(ΔTmin) with energy
    # non-decreasing in ΔTmin, so a larger F cannot give a larger minimiser (common practice: dearer
    # energy, closer approach). Stream data: Sinnott Table 3.6 / Klemeš et al. 2011 Table 4.2; h invented.
    study = scenario_study(streams_of(name), (5, 40), scenarios=price_factor_scenarios([0.1, 0.3, 1, 3]),
                           step=5.0, workers=1, default_film_coefficient=H)
    opt = [o.optimum.dt_min for o in study.optima]
    assert all(a >= b for a, b in zip(opt, opt[1:])), opt
    assert opt[1] > opt[3], "factor 0.3 against 3 must tell the optima apart on this data"


# --------------------------------------------------------------------------------------------------
# 4. named prices with a utility table; refusals


def test_named_price_changes_energy_cost_by_hand(colberg_morari):
    streams, utilities, costs = colberg_morari
    plans = [PriceScenario("base"), PriceScenario("HU 260", (("HU", 260.0),)),
             PriceScenario("HU 260, rest ×1.5", {"HU": 260.0}, 1.5)]
    study = scenario_study(streams, (5, 20), utilities, plans, costs, step=5.0, workers=1, optimum=False)
    for x in study.dt_mins:
        base, dear, both = (case_of(study, "process", p.name, x).targets for p in plans)
        q_h, q_c = base.hot_utility, base.cold_utility
        # utility prices HU 130, CU 20 per kW·year (Roetzel, Luo & Chen 2020, Table 6.23); the scenario's by hand
        assert base.energy_cost == pytest.approx(130.0 * q_h + 20.0 * q_c, rel=1e-9)
        assert dear.energy_cost == pytest.approx(260.0 * q_h + 20.0 * q_c, rel=1e-9)
        assert both.energy_cost == pytest.approx(260.0 * q_h + 1.5 * 20.0 * q_c, rel=1e-9)
        assert base.capital_cost == dear.capital_cost == both.capital_cost
        assert (dear.hot_utility, dear.cold_utility) == pytest.approx((q_h, q_c), rel=1e-12)
    rows = study.to_dict()["scenarios"]
    assert rows[2]["prices"] == {"HU": 260.0} and rows[2]["factor"] == 1.5


def test_refusals(sinnott, colberg_morari):
    streams, utilities, costs = colberg_morari
    with pytest.raises(InputError, match="sets the price of 'steam', which is not in the utility table"):
        scenario_study(streams, (5, 10), utilities, [PriceScenario("x", (("steam", 100.0),))], costs, workers=1)
    with pytest.raises(InputError, match="sets the price of 'HU', but no utility table was given"):
        scenario_study(sinnott, (5, 10), None, [PriceScenario("x", (("HU", 100.0),))], workers=1,
                       default_film_coefficient=H)
    with pytest.raises(InputError, match="price scenario 'High' is given twice"):
        scenario_study(streams, (5, 10), utilities, [PriceScenario("high", (), 2), PriceScenario(" High ", (), 3)],
                       costs, workers=1)
    with pytest.raises(InputError, match="price scenario 'prices ×1' is given twice"):
        scenario_study(streams, (5, 10), utilities, price_factor_scenarios([1, 1.0]), costs, workers=1)
    for bad in (-1.0, math.nan, math.inf):
        with pytest.raises(InputError, match="the price of 'HU' must be a finite number >= 0"):
            PriceScenario("x", (("HU", bad),))
        with pytest.raises(InputError, match="the price factor must be a finite number >= 0"):
            PriceScenario("x", (), bad)
    with pytest.raises(InputError, match="price factor must be a number, got 'dear'"):
        PriceScenario("x", (), "dear")
    with pytest.raises(InputError, match="a price scenario needs a name"):
        PriceScenario("  ")
    with pytest.raises(InputError, match="at least one zone"):
        scenario_study({}, (5, 10), workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="at least one zone"):
        scenario_study([], (5, 10), workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="zone name 'unit a' is used twice"):
        scenario_study({"Unit A": sinnott, "unit a": sinnott}, (5, 10), workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="zone name 'A' is used twice"):
        scenario_study([Zone("A", sinnott), Zone("A", sinnott)], (5, 10), workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="zone 'Z': expected a StreamTable, got list"):
        scenario_study({"Z": []}, (5, 10), workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match=r"highest ΔTmin \(10 K\) must not be below the lowest \(20 K\)"):
        scenario_study(sinnott, (20, 10), workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="lowest ΔTmin must be a finite number > 0"):
        scenario_study(sinnott, (0, 10), workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="the ΔTmin range must be two numbers"):
        scenario_study(sinnott, (5, 10, 15), workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="the ΔTmin step must be a finite number > 0 K"):
        scenario_study(sinnott, (5, 10), step=0, workers=1, default_film_coefficient=H)
    # 2 zones × 2 scenarios × 3 ΔTmin values (5, 7.5, 10 K) = 12 cases
    with pytest.raises(InputError, match="= 12 cases; at most 11 are allowed"):
        scenario_study({"a": sinnott, "b": sinnott}, (5, 10), scenarios=price_factor_scenarios([1, 2]), step=2.5,
                       workers=1, default_film_coefficient=H, max_cases=11)
    with pytest.raises(InputError, match="film coefficient h missing for stream '1'"):
        scenario_study(sinnott, (5, 10), workers=1)
    with pytest.raises(InputError, match="expected PriceScenario objects, got float"):
        scenario_study(sinnott, (5, 10), scenarios=[1.5], workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="workers must be a whole number"):
        scenario_study(sinnott, (5, 10), workers=0, default_film_coefficient=H)


def test_price_that_is_not_a_number_is_an_input_error():
    with pytest.raises(InputError, match="price of 'HU' must be a finite number"):
        PriceScenario("x", (("HU", "dear"),))
    with pytest.raises(InputError, match="prices utility 'HU' twice"):
        PriceScenario("x", (("HU", 100.0), ("HU", 200.0)))


def test_step_that_is_not_a_number_is_an_input_error(sinnott):
    with pytest.raises(InputError, match="the ΔTmin step must be a finite number"):
        scenario_study(sinnott, (5, 10), step="five", workers=1, default_film_coefficient=H)
    with pytest.raises(InputError, match="the optimum step must be a finite number"):
        scenario_study(sinnott, (5, 10), optimum_step=None, workers=1, default_film_coefficient=H)


def test_too_fine_optimum_step_is_refused_before_any_case(sinnott):
    calls = []
    with pytest.raises(InputError, match="optimum step: .* at most"):
        scenario_study(sinnott, (1, 100), optimum_step=1e-3, workers=1, default_film_coefficient=H,
                       progress=lambda *a: calls.append(a))
    assert calls == []


def test_list_of_stream_tables_are_numbered_zones(sinnott, ray_das):
    study = scenario_study([sinnott, ray_das], (10, 20), step=10, workers=1, default_film_coefficient=H)
    assert study.zones == ("zone 1", "zone 2")
    with pytest.raises(InputError, match="zone 'zone 2': expected a StreamTable, got float"):
        scenario_study([sinnott, 3.5], (5, 10), workers=1, default_film_coefficient=H)


# --------------------------------------------------------------------------------------------------
# 5. zones and totals


def test_zones_and_totals(sinnott, ray_das):
    plans = price_factor_scenarios([0.5, 2.0])
    study = scenario_study({"Sinnott 3.6": sinnott, "Ray & Das 5.1": ray_das}, (10, 20), scenarios=plans,
                           step=5.0, workers=1, default_film_coefficient=H)
    assert study.zones == ("Sinnott 3.6", "Ray & Das 5.1") and study.dt_mins == (10.0, 15.0, 20.0)
    # zone-major, then scenario, then ΔTmin
    assert [(c.zone, c.scenario, c.dt_min) for c in study.cases] == [
        (z, p.name, x) for z in study.zones for p in plans for x in (10.0, 15.0, 20.0)]
    # each zone's cases are those of the zone studied alone
    for zone, streams in (("Sinnott 3.6", sinnott), ("Ray & Das 5.1", ray_das)):
        alone = scenario_study(streams, (10, 20), scenarios=plans, step=5.0, workers=1, default_film_coefficient=H)
        assert alone.zones == ("process",)
        assert {c.zone for c in alone.cases} == {"process"}
        assert [c.targets for c in study.cases if c.zone == zone] == [c.targets for c in alone.cases]
        assert [o.optimum for o in study.optima if o.zone == zone] == [o.optimum for o in alone.optima]
    # published targets of each zone at its printed ΔTmin (Sinnott Table 3.6; Ray & Das Problem 5.1)
    s10 = case_of(study, "Sinnott 3.6", plans[0].name, 10.0).targets
    r20 = case_of(study, "Ray & Das 5.1", plans[1].name, 20.0).targets
    assert (s10.hot_utility, s10.cold_utility) == pytest.approx((50.0, 30.0), abs=1e-6)
    assert (r20.hot_utility, r20.cold_utility) == pytest.approx((90.0, 255.0), abs=1e-6)
    # a scenario's site total is the sum of its zones' optima
    assert [t.scenario for t in study.totals] == [p.name for p in plans]
    for t in study.totals:
        mine = [o.optimum for o in study.optima if o.scenario == t.scenario]
        assert len(mine) == 2 and t.zones == 2 and t.missing == ()
        for key in ("hot_utility", "cold_utility", "capital_cost", "energy_cost", "total_annual_cost"):
            assert getattr(t, key) == pytest.approx(sum(getattr(p, key) for p in mine), rel=1e-12)
    # a sequence of site zones is accepted too, with their names
    zoned = scenario_study([Zone("north", sinnott), Zone("south", ray_das)], (10, 20), scenarios=plans, step=5.0,
                           workers=1, default_film_coefficient=H)
    assert zoned.zones == ("north", "south")
    assert [c.targets for c in zoned.cases] == [c.targets for c in study.cases]


def test_zone_that_no_dtmin_serves_is_missing_from_the_total():
    # Yee & Grossmann 1990 data with their utilities (Roetzel, Luo & Chen 2020, Table 6.16): cooling water
    # from 20 °C cannot take the heat of H2 below about 30 °C once ΔTmin exceeds 10 K
    data, yg = load_reference("synthesis_yee_grossmann_2h2c")
    study = scenario_study({"YG": yg}, (15, 20), reference_utilities(data), step=5.0, workers=1)
    assert all(not c.targets.feasible and "cold utility" in c.targets.note for c in study.cases)
    (o,) = study.optima
    assert o.optimum is None and o.error.startswith("no ΔTmin from 15 to 20 K")
    (t,) = study.totals
    assert (t.zones, t.missing, t.total_annual_cost) == (0, ("YG",), 0)
    assert any("2 of 2 cases cannot be served" in n for n in study.notes)


def test_single_dtmin_has_no_optimum(sinnott):
    study = scenario_study(sinnott, (10, 10), workers=1, default_film_coefficient=H)
    assert study.dt_mins == (10.0,) and len(study.cases) == 1 and study.optima == ()
    assert study.scenarios[0].name == "base prices"
    assert any("one ΔTmin only" in n for n in study.notes)
    # Sinnott, C&R Vol. 6, Table 3.6 at 10 K: 50 kW hot, 30 kW cold
    assert (study.cases[0].targets.hot_utility, study.cases[0].targets.cold_utility) == (50.0, 30.0)


# --------------------------------------------------------------------------------------------------
# 6. designs


def test_designs_once_per_network_and_area_above_the_target(sinnott):
    # The assumed utilities carry their own film coefficients (heatloom.defaults), not the streams' h:
    hot, cold = ideal_utilities(sinnott, 20.0)
    assert (hot.film_coefficient, cold.film_coefficient) == (network_data.DEFAULT_HOT_UTILITY_FILM_COEFFICIENT,
                                                             network_data.DEFAULT_COLD_UTILITY_FILM_COEFFICIENT)
    assert H not in (hot.film_coefficient, cold.film_coefficient)
    factors = [1.0, 2.5]
    plans = price_factor_scenarios(factors)

    # (a) assumed utilities: a factor cannot change the network, so it is designed once per ΔTmin
    calls = []
    study = scenario_study(sinnott, (10, 20), scenarios=plans, step=5.0, designs=True, workers=1,
                           default_film_coefficient=H, progress=lambda *a: calls.append(a))
    assert max(done for phase, done, total in calls if phase == "designs") == 3     # not 2 × 3
    for x in study.dt_mins:
        one, two = (case_of(study, "process", p.name, x).design for p in plans)
        assert one.error == two.error == ""
        assert (one.units, one.area, one.capital_cost) == (two.units, two.area, two.capital_cost)
        assert two.operating_cost == pytest.approx(2.5 * one.operating_cost, rel=1e-12)
        assert two.total_annual_cost == pytest.approx(two.capital_cost + two.operating_cost, rel=1e-12)
        net = design_mer(sinnott, x, default_film_coefficient=H)     # independent: design directly
        assert (one.units, one.total_annual_cost) == (net.units, pytest.approx(net.total_annual_cost, rel=REL))
    for o in study.optima:
        designed = [c.design for c in study.cases if c.scenario == o.scenario]
        assert o.best_design.total_annual_cost == min(d.total_annual_cost for d in designed)

    # (b) one h everywhere: the assumed utilities at the largest ΔTmin of the range (180 °C and -10 °C,
    # feasible over the whole range) given as a table with the streams' h. Then the Townsend–Linnhoff
    # (Bath) area is a minimum for any network (Townsend & Linnhoff 1984; Linnhoff & Ahmad 1990).
    table = [dataclasses.replace(u, film_coefficient=H) for u in (hot, cold)]
    study = scenario_study(sinnott, (10, 20), table, plans, step=5.0, designs=True, workers=1,
                           default_film_coefficient=H)
    assert len(study.cases) == 6
    for x in study.dt_mins:
        pair = [case_of(study, "process", p.name, x) for p in plans]
        one, two = (c.design for c in pair)
        assert one.error == two.error == ""
        assert one.units == two.units and one.area == pytest.approx(two.area, rel=REL)
        assert two.operating_cost == pytest.approx(2.5 * one.operating_cost, rel=1e-9)
        for f, c in zip(factors, pair):
            # maximum energy recovery: the design's utilities are the targets; price × duty by hand
            hand = f * (HOT_PRICE * c.targets.hot_utility + COLD_PRICE * c.targets.cold_utility)
            assert c.design.operating_cost == pytest.approx(hand, rel=1e-6)
            assert c.design.area >= c.targets.area * (1 - REL)


# --------------------------------------------------------------------------------------------------
# 7. executors and progress


def tiny(sinnott, **kwargs):
    return scenario_study(sinnott, (5, 15), scenarios=price_factor_scenarios([0.5, 2.0]), step=5.0, designs=True,
                          default_film_coefficient=H, **kwargs)


def test_serial_and_process_pool_agree(sinnott):
    calls = []
    serial = tiny(sinnott, workers=1, progress=lambda *a: calls.append(a))
    pool_calls = []
    pool = tiny(sinnott, workers=2, progress=lambda *a: pool_calls.append(a))
    assert canonical(serial) == canonical(pool)
    assert (serial.executor, pool.executor) == ("serial", "process pool (2 workers)")
    for log in (calls, pool_calls):
        phases = list(dict.fromkeys(c[0] for c in log))
        assert phases == ["cases", "designs", "optima"]
        for phase in phases:
            last = [c for c in log if c[0] == phase][-1]
            assert last[1] == last[2] > 0
    # without designs there is no design phase
    calls.clear()
    scenario_study(sinnott, (5, 15), step=5.0, workers=1, default_film_coefficient=H,
                   progress=lambda *a: calls.append(a))
    assert list(dict.fromkeys(c[0] for c in calls)) == ["cases", "optima"]


def test_local_dask_cluster_agrees(sinnott):
    distributed = pytest.importorskip("dask.distributed")
    serial = tiny(sinnott, workers=1)
    calls = []
    with distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=2,
                                  dashboard_address=None) as cluster, distributed.Client(cluster) as client:
        dask = tiny(sinnott, cluster=client, progress=lambda *a: calls.append(a))
    assert canonical(serial) == canonical(dask)
    assert dask.executor == "Dask cluster"
    assert list(dict.fromkeys(c[0] for c in calls)) == ["cases", "designs", "optima"]


# --------------------------------------------------------------------------------------------------
# 8. shapes


def test_result_shapes(sinnott, ray_das):
    plans = [PriceScenario("low", (), 0.5), PriceScenario("high", (), 2.0), PriceScenario("same")]
    study = scenario_study({"a": sinnott, "b": ray_das}, (10, 20), scenarios=plans, step=5.0, workers=1,
                           default_film_coefficient=H)
    d = study.to_dict()
    assert len(d["cases"]) == 2 * 3 * 3 and len(d["optima"]) == 2 * 3 and len(d["totals"]) == 3
    for key in ("zone", "scenario", "dtmin", "hot_utility", "cold_utility", "area", "units", "capital_cost",
                "energy_cost", "total_annual_cost"):
        assert key in d["cases"][0], key
    assert "design_area" not in d["cases"][0]
    for key in ("zone", "scenario", "dtmin", "total_annual_cost", "error", "breakpoints"):
        assert key in d["optima"][0], key
    assert d["currency"] == "USD" and d["dtmin"] == [10.0, 15.0, 20.0]
    assert [s["name"] for s in d["scenarios"]] == ["low", "high", "same"]
    assert d["scenarios"][0]["description"] == "prices × 0.5"
    json.dumps(to_jsonable(d))     # serialisable
    frames = study.frames()
    assert set(frames) == {"cases", "optima", "totals", "scenarios"}
    assert len(frames["cases"]) == len(study.cases) == 18
    assert len(frames["optima"]) == len(study.optima) == 6
    assert len(frames["totals"]) == len(study.totals) == 3
    assert len(frames["scenarios"]) == len(study.scenarios) == 3
    # one column per to_dict() key, labelled with its unit
    for name in ("cases", "optima", "totals"):
        assert len(frames[name].columns) == len(d[name][0]), name
    assert {"zone", "scenario", "ΔTmin [K]", "hot utility [kW]", "cold utility [kW]", "area [m²]",
            "capital cost [USD/year]", "energy cost [USD/year]", "total annual cost [USD/year]"} <= set(frames["cases"].columns)
    assert list(frames["cases"]["total annual cost [USD/year]"]) == [c["total_annual_cost"] for c in d["cases"]]
    assert list(frames["optima"]["ΔTmin [K]"]) == [o["dtmin"] for o in d["optima"]]
    assert list(frames["totals"]["scenario"]) == ["low", "high", "same"]
