"""Tests of heatloom.retrofit.diagnose and .network_pinch: cross-pinch heat, area efficiency, retrofit curve,
network pinch.

Sources: the published targeting problems of tests/data/references/ (Sinnott, Coulson & Richardson Vol. 6,
ch. 3, Table 3.6: 50 kW hot utility at ΔTmin 10 K; Ray & Das, Process Equipment and Plant Design, ch. 5,
Problem 5.1: 90 kW at 20 K, Problem 5.4: 62.5 kW at 10 K) and facts of pinch analysis with their authors:
the heat that crosses the pinch equals the hot utility beyond the target (Linnhoff & Hindmarsh 1983, Chem.
Eng. Sci. 38(5), 745-763; Tjoe & Linnhoff 1986, Chem. Eng. Prog. 82(4), 47-60, from memory, unverified),
so a network that meets its targets moves nothing across the pinch and no network keeping ΔTmin in every
exchanger can recover more than the target (the network pinch of an MER design allows no shift); the
Townsend–Linnhoff (Bath) area is the least area of any network when all film coefficients are equal
(Townsend & Linnhoff 1984; Linnhoff & Ahmad 1990, Comput. Chem. Eng. 14(7), 729-750), so α <= 1 then.
No published retrofit diagnosis (numbers of an existing network with its α and cross-pinch table) could be
checked from a source at hand, so none is asserted. The invented case study and hypothesis networks are
used for property checks only.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom.errors import InfeasibleError, InputError
from heatloom.io import read_streams, read_utilities
from heatloom.io.network_table import read_network
from heatloom.model import Segment, Stream, StreamTable, Utility, UtilityKind
from heatloom.model.existing import ExistingUnit, UnitRole
from heatloom.network import design_mer
from heatloom.pinch import target
from heatloom.retrofit.diagnose import area_efficiency, cross_pinch, diagnose, existing_dt_min, retrofit_curve
from heatloom.retrofit.existing import ExistingNetwork
from heatloom.retrofit.network_pinch import network_pinch
from heatloom.retrofit.simulate import simulate

CASE = Path(__file__).resolve().parents[2] / "case_studies" / "existing_network"

PUBLISHED = [
    # (reference file, ΔTmin [K], published hot utility [kW])
    ("targeting_sinnott_four_stream", 10, 50),    # Sinnott, C&R Vol. 6, Table 3.6
    ("targeting_ray_das_problem_5_1", 20, 90),    # Ray & Das, Problem 5.1
    ("targeting_ray_das_problem_5_4", 10, 62.5),  # Ray & Das, Problem 5.4 (CP erratum, see file)
]


def uniform_utilities(streams, dt, h=1.0):
    """Isothermal utilities beyond the process, every film coefficient h (for the α <= 1 check)."""
    top = max(max(s.supply_temperature, s.target_temperature) for s in streams) + dt + 20
    bottom = min(min(s.supply_temperature, s.target_temperature) for s in streams) - dt - 20
    return [Utility("HU", top, top, 100.0, UtilityKind.HOT, h), Utility("CU", bottom, bottom, 10.0, UtilityKind.COLD, h)]


def mer_network(reference, name, dt):
    data, streams = reference(name)
    streams = StreamTable(tuple(Stream.simple(s.name, s.supply_temperature, s.target_temperature,
                                              s.segments[0].heat_capacity_flow, film_coefficient=1.0)
                                for s in streams))
    utilities = uniform_utilities(streams, dt)
    design = design_mer(streams, dt, utilities)
    return streams, ExistingNetwork.from_network(design, streams, utilities)


@pytest.fixture(scope="module")
def case():
    streams = read_streams(CASE / "streams.csv")
    utilities = read_utilities(CASE / "utilities.csv")
    return ExistingNetwork.from_table(streams, read_network(CASE / "network.csv"), utilities)


# --------------------------------------------------------------------------------------------------
# cross-pinch


@pytest.mark.parametrize(("name", "dt", "hot"), PUBLISHED)
def test_network_at_its_targets_moves_nothing_across_the_pinch(reference, name, dt, hot):
    streams, net = mer_network(reference, name, dt)
    sim = simulate(net, dt)
    assert sim.hot_utility == pytest.approx(hot, abs=1e-6)
    x = cross_pinch(sim)
    assert x.pinches, "the published problem has a pinch"
    assert x.units == ()
    assert x.total() == 0.0 and x.excess == pytest.approx(0, abs=1e-6)


def test_case_study_cross_pinch_explains_the_excess(case):
    sim = simulate(case, 10)
    x = cross_pinch(sim)
    # heat across the pinch = hot utility beyond the target (Linnhoff & Hindmarsh 1983)
    assert x.total() == pytest.approx(x.excess, rel=1e-9)
    assert x.excess > 500
    kinds = {c.unit: c.kind for c in x.units}
    assert kinds["C-101"] == "cooler above the pinch"       # the misplaced cooler of the scenario
    assert kinds["H-103"] == "heater below the pinch"       # the misplaced heater
    assert kinds["E-101"] == "exchanger across the pinch"
    # by hand: H-103 heats the wash water (all below the 100 °C cold pinch) to 80 °C: its whole duty
    assert next(c for c in x.units if c.unit == "H-103").downward == pytest.approx(sim.unit("H-103").duty, rel=1e-12)
    # C-103 cools the overhead from 125 °C; above the 110 °C hot pinch: 3 kW/K × 15 K = 45 kW
    assert next(c for c in x.units if c.unit == "C-103").downward == pytest.approx(45.0, rel=1e-9)


@st.composite
def trimmed_networks(draw):
    """Invented networks in which every stream ends with a heater or cooler (so it reaches its target)."""
    def stream(name, hot):
        a = draw(st.integers(80, 250)) if hot else draw(st.integers(10, 150))
        span = draw(st.integers(20, 120))
        b = a - span if hot else a + span
        if draw(st.booleans()):
            mid = (a + b) / 2
            return Stream(name, (Segment(a, mid, draw(st.integers(5, 50)) / 10),
                                 Segment(mid, b, draw(st.integers(5, 50)) / 10)))
        return Stream.simple(name, a, b, draw(st.integers(5, 50)) / 10)

    hot = [stream(f"H{i}", True) for i in range(draw(st.integers(1, 3)))]
    cold = [stream(f"C{i}", False) for i in range(draw(st.integers(1, 3)))]
    units = [ExistingUnit(f"E{k}", draw(st.sampled_from(hot)).name, draw(st.sampled_from(cold)).name,
                          area=draw(st.integers(1, 40)) / 4, u=0.5) for k in range(draw(st.integers(0, 5)))]
    units += [ExistingUnit(f"T-{s.name}", s.name, "CU", area=1.0, u=1.0) for s in hot]
    units += [ExistingUnit(f"T-{s.name}", "HU", s.name, area=1.0, u=1.0) for s in cold]
    return ExistingNetwork(StreamTable(hot + cold), units, [Utility("HU", 500, 499, 1.0), Utility("CU", -50, -40, 1.0)]), \
        draw(st.integers(1, 30))


@settings(max_examples=40, deadline=None, derandomize=True)
@given(trimmed_networks())
def test_cross_pinch_heat_equals_excess_utility_at_every_pinch(case_):
    net, dt = case_
    sim = simulate(net, dt)
    x = cross_pinch(sim)
    scale = max(s.duty for s in net.streams)
    for k in range(len(x.pinches)):
        assert x.total(k) == pytest.approx(sim.hot_utility - target(net.streams, dt).hot_utility, abs=1e-7 * scale)


def test_cross_pinch_needs_a_dt_min(case):
    with pytest.raises(InputError, match="needs a ΔTmin"):
        cross_pinch(simulate(case))


# --------------------------------------------------------------------------------------------------
# ΔTmin of the existing network, area efficiency, retrofit curve


@pytest.mark.parametrize(("name", "dt", "hot"), PUBLISHED)
def test_existing_dt_min_reproduces_published_pairs(reference, name, dt, hot):
    _, streams = reference(name)
    assert existing_dt_min(streams, hot) == pytest.approx(dt, abs=1e-6)


def test_existing_dt_min_rejects_impossible_utilities(reference):
    _, streams = reference("targeting_ray_das_problem_5_1")
    with pytest.raises(InfeasibleError, match="below the minimum at ΔTmin 0"):
        existing_dt_min(streams, 0.0)
    with pytest.raises(InfeasibleError, match="no recovery at all"):
        existing_dt_min(streams, 1e6)


@pytest.mark.parametrize(("name", "dt", "hot"), PUBLISHED)
def test_area_efficiency_of_an_mer_design_is_at_most_one(reference, name, dt, hot):
    # every film coefficient 1 kW/(m²·K): the Bath area is the least area of any network at that energy
    streams, net = mer_network(reference, name, dt)
    eff = area_efficiency(simulate(net, dt))
    assert eff.dt_min_existing == pytest.approx(dt, abs=1e-6)
    assert eff.area_existing == pytest.approx(net.total_area)
    assert 0.5 < eff.alpha <= 1 + 1e-9
    assert [u.name for u in eff.utilities] == ["HU", "CU"]


def test_case_study_area_efficiency_and_curve(case):
    sim = simulate(case, 10)
    eff = area_efficiency(sim)
    assert eff.area_existing == pytest.approx(96.4)
    assert 0 < eff.alpha < 1
    # the network's hot utility is the target at its own ΔTmin
    assert target(case.streams, eff.dt_min_existing).hot_utility == pytest.approx(sim.hot_utility, rel=1e-8)
    curve = retrofit_curve(sim, efficiency=eff, points=8)
    assert curve.dt_min[0] == pytest.approx(eff.dt_min_existing)
    assert curve.investment_constant_alpha[0] == pytest.approx(0, abs=1e-9)
    assert curve.investment_incremental[0] == pytest.approx(0, abs=1e-9)
    assert curve.saving[0] == pytest.approx(0, abs=1e-6)
    assert np.all(np.diff(curve.saving) > 0) and np.all(np.diff(curve.area_target) > 0)
    assert np.allclose(curve.area_constant_alpha, curve.area_target / eff.alpha)
    assert list(curve.to_frame().columns)[0] == "dtmin [K]"


def test_area_efficiency_needs_every_area():
    streams = StreamTable([Stream.simple("H", 150, 60, 2.0, film_coefficient=1.0),
                           Stream.simple("C", 30, 120, 2.0, film_coefficient=1.0)])
    net = ExistingNetwork(streams, [ExistingUnit("E", "H", "C", area=5.0),
                                    ExistingUnit("CW", "H", "water", area=3.0),
                                    ExistingUnit("ST", "steam", "C", duty=50.0)],
                          [Utility("steam", 200, 199, 1.0), Utility("water", 20, 30, 1.0)])
    assert net.unit("ST").area is None and net.total_area is None
    with pytest.raises(InputError, match="unknown for ST"):
        area_efficiency(simulate(net, 10))


def test_retrofit_curve_checks_its_dt_mins(case):
    sim = simulate(case, 10)
    with pytest.raises(InputError, match="ΔTmin values > 0 K"):
        retrofit_curve(sim, [10, 0])


# --------------------------------------------------------------------------------------------------
# network pinch


@pytest.mark.parametrize(("name", "dt", "hot"), PUBLISHED)
def test_mer_design_cannot_recover_more_at_its_dt_min(reference, name, dt, hot):
    # no network keeping ΔTmin in every exchanger beats the energy target, so no path can shift heat
    streams, net = mer_network(reference, name, dt)
    p = network_pinch(simulate(net, dt), dt)
    assert p.recovery == pytest.approx(0, abs=1e-5 * hot)
    assert all(a >= dt - 1e-9 for a in p.approaches.values())


@pytest.mark.parametrize(("name", "dt", "hot"), PUBLISHED)
def test_mer_design_recovers_down_to_a_smaller_approach(reference, name, dt, hot):
    # with a smaller minimum approach the same topology can recover heat, never beyond the target at that
    # smaller ΔTmin (problem table bound)
    streams, net = mer_network(reference, name, dt)
    p = network_pinch(simulate(net, dt), dt / 2)
    assert hot - p.recovery >= target(streams, dt / 2).hot_utility - 1e-6


def test_hand_computed_path_shift():
    # H1 150 → 40 °C (2 kW/K), C1 60 → 120 °C (3 kW/K); E1 carries 100 kW: H1 150 → 100, C1 60 → 93.33 °C.
    # Shifting x along steam → E1 → water: ends 150 − (93.33 + x/3) and (100 − x/2) − 60; with an allowed
    # approach of 25 K the cold end stops it at x = 30 kW; heater (80 kW) and cooler (120 kW) allow more.
    streams = StreamTable([Stream.simple("H1", 150, 40, 2.0), Stream.simple("C1", 60, 120, 3.0)])
    net = ExistingNetwork(streams, [ExistingUnit("E1", "H1", "C1", duty=100.0, u=0.5),
                                    ExistingUnit("HS", "steam", "C1", duty=80.0),
                                    ExistingUnit("CW", "H1", "water", duty=120.0)],
                          [Utility("steam", 180, 179, 1.0), Utility("water", 20, 30, 1.0)])
    p = network_pinch(simulate(net), 25)
    assert p.approaches["E1"] == pytest.approx(40)
    assert p.paths[0].shift == pytest.approx(30, abs=1e-4) and p.paths[0].reason == "approach"
    assert p.network_pinch == "E1" and p.pinching == ("E1",)
    # with 60 K allowed the exchanger is already closer (40 K): it may not get closer, no shift at all
    q = network_pinch(simulate(net), 60)
    assert q.recovery == 0 and q.network_pinch == "E1"
    assert any("already below the minimum approach" in n for n in q.notes)


def test_duty_limited_path_and_longer_path():
    # two hot and two cold streams in a chain: steam → C1 —E1— H1 —E2— C2 —E3— H2 → water.
    # Shifting along it (+E1, −E2, +E3) stops when E2 (20 kW) reaches zero: a duty limit (invented numbers).
    streams = StreamTable([Stream.simple("H1", 200, 100, 1.0), Stream.simple("H2", 150, 40, 1.0),
                           Stream.simple("C1", 50, 180, 1.0), Stream.simple("C2", 30, 120, 1.0)])
    net = ExistingNetwork(streams, [ExistingUnit("E1", "H1", "C1", duty=40.0, u=0.5),
                                    ExistingUnit("E2", "H1", "C2", duty=20.0, u=0.5),
                                    ExistingUnit("E3", "H2", "C2", duty=30.0, u=0.5),
                                    ExistingUnit("HS", "steam", "C1", area=1.0, u=1.0),
                                    ExistingUnit("CW1", "H1", "water", area=1.0, u=1.0),
                                    ExistingUnit("CW2", "H2", "water", area=1.0, u=1.0),
                                    ExistingUnit("HS2", "steam", "C2", area=1.0, u=1.0)],
                          [Utility("steam", 250, 249, 1.0), Utility("water", 10, 20, 1.0)])
    p = network_pinch(simulate(net), 5)
    long = next(x for x in p.paths if x.exchangers == ("E1", "E2", "E3"))
    assert long.signs == (1, -1, 1)
    assert long.reason == "duty" and long.limit == "E2" and long.shift == pytest.approx(20.0, rel=1e-9)
    with pytest.raises(InputError, match="minimum approach must be > 0 K"):
        network_pinch(simulate(net), 0)


def test_diagnose_bundles_everything(case):
    d = diagnose(case, 10)
    assert d.simulation.dt_min == 10
    assert d.cross_pinch.total() == pytest.approx(d.simulation.hot_utility_excess, rel=1e-9)
    assert d.efficiency is not None and d.curve is not None
    # the scenario's coolers C-101 and C-102 sit on utility paths and can be emptied before any exchanger
    # reaches 10 K
    assert {m.limit for m in d.pinch.moves} >= {"C-101"}
    out = d.to_dict()
    assert set(out) == {"simulation", "cross_pinch", "area_efficiency", "retrofit_curve", "network_pinch", "notes"}


def test_diagnose_without_film_coefficients_says_why():
    streams = StreamTable([Stream.simple("H", 150, 40, 2.0), Stream.simple("C", 60, 120, 3.0)])
    net = ExistingNetwork(streams, [ExistingUnit("E", "H", "C", area=5.0, u=0.5),
                                    ExistingUnit("CW", "H", "water", area=3.0),
                                    ExistingUnit("ST", "steam", "C", area=2.0)],
                          [Utility("steam", 200, 199, 1.0), Utility("water", 20, 30, 1.0)])
    d = diagnose(net, 10)
    assert d.efficiency is None and d.curve is None
    assert any("film coefficient h missing" in n for n in d.notes)
    assert d.pinch.approaches["E"] > 0
    assert d.cross_pinch.pinches and d.cross_pinch.total() == pytest.approx(d.simulation.hot_utility_excess,
                                                                            rel=1e-9)
    assert [c.unit for c in d.cross_pinch.of_role(UnitRole.COOLER)] == [
        c.unit for c in d.cross_pinch.units if c.kind == "cooler above the pinch"]
