"""Area, units, shells and cost targets (heatloom.pinch.area).

Sources of the checks, named beside each use:

* published stream data of tests/data/references/ (Sinnott, Coulson & Richardson's Chemical Engineering
  Vol. 6, ch. 3, Table 3.6; Ray & Das, Process Equipment and Plant Design, ch. 5, Problems 5.1, 5.2,
  5.4; Klemeš, Friedler, Bulatov & Varbanov 2011, Table 4.2), to which film coefficients are added:
  the sources print no area targets for them;
* the Townsend–Linnhoff formula itself, checked against an independent integral of dH/(U·ΔT(H)) along
  composite curves built with heatloom.pinch.curves (scipy.integrate.quad), and against hand
  calculations whose log-mean differences come from the reference library `ht` (ht.LMTD);
* vertical heat transfer is the least area when every film coefficient is equal (Townsend & Linnhoff
  1984; Linnhoff & Ahmad 1990): the area target never exceeds the area of a designed network;
* Euler's network theorem, N − 1 units per pinch subnetwork (Linnhoff & Hindmarsh 1983), cross-checked
  against the unit target of the minimum-matches model of heatloom.network.milp;
* the real-valued shell count of Ahmad, Linnhoff & Smith 1988 (X_P = 0.9), written out by hand.

No published area-target value is used: none could be recalled with confidence (see the report).
"""

import dataclasses
import math

import ht
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from heatloom import defaults as network_data
from heatloom.equipment import shell_design
from heatloom.errors import InfeasibleError, InputError, TemperatureCrossError
from heatloom.model import (
    CostLaw,
    CostSettings,
    ExchangerType,
    Segment,
    Stream,
    StreamTable,
    Utility,
    UtilityKind,
)
from heatloom.network import design_mer
from heatloom.pinch import cold_composite, hot_composite, ideal_utilities, target
from heatloom.pinch.area import (
    AreaTargets,
    CapitalBasis,
    area_targets,
    balanced_composites,
    bath_area,
    missing_film_coefficients,
    shell_target,
    target_utilities,
    unit_targets,
)

TARGETING = [  # published stream data (no h in the sources) and the ΔTmin the source uses [K]
    "targeting_sinnott_four_stream",           # Sinnott, C&R Vol. 6, ch. 3, Table 3.6
    "targeting_ray_das_problem_5_1",           # Ray & Das, ch. 5, Problem 5.1
    "targeting_ray_das_problem_5_4",           # Ray & Das, ch. 5, Problem 5.4 (CP erratum, see file)
    "targeting_klemes_table_4_2",              # Klemeš et al. 2011, Table 4.2
    "targeting_ray_das_problem_5_2_threshold",  # Ray & Das, ch. 5, Problem 5.2 (threshold)
]


def with_h(streams: StreamTable, h: float) -> StreamTable:
    return StreamTable(tuple(Stream(s.name, tuple(dataclasses.replace(g, film_coefficient=h) for g in s.segments))
                             for s in streams))


def uniform_utilities(streams: StreamTable, dt_min: float, h: float) -> list[Utility]:
    """The ideal utilities design assumes, with the streams' film coefficient."""
    return [dataclasses.replace(u, film_coefficient=h) for u in ideal_utilities(streams, dt_min)]


def two_stream_case(h_hot=1.0, h_cold=1.0, h_water=1.0):
    """Invented: one hot stream 150 → 40 °C and one cold 30 → 120 °C (CP 2 kW/K), water at 20 °C."""
    s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[h_hot, h_cold])
    water = Utility("water", 20, 20, 10.0, UtilityKind.COLD, h_water)
    return s, water


# --------------------------------------------------------------------------------------------------
# the area formula


def test_hand_calculation_two_intervals():
    # Threshold at ΔTmin 10 K: 40 kW to the water. Balanced composites: [0, 40] kW hot 40 → 60 °C against
    # water at 20 °C; [40, 220] kW hot 60 → 150 °C against cold 30 → 120 °C (ΔT 30 K throughout).
    # U = 1/(1/1 + 1/1) = 0.5 kW/(m²·K). Log mean from the reference library ht (ht.LMTD).
    s, water = two_stream_case()
    t = target(s, 10, [water])
    assert (t.hot_utility, t.cold_utility) == (0.0, 40.0)
    expected = 40 / (0.5 * ht.LMTD(60, 40, 20, 20)) + 180 / (0.5 * 30)
    assert bath_area(balanced_composites(t)) == pytest.approx(expected, rel=1e-12)
    assert expected == pytest.approx(14.7726, abs=1e-4)


def test_individual_film_coefficients_hand_calculation():
    # A = Σ_k (1/ΔT_LM,k) Σ_i q_i,k/h_i: hot h 2, cold h 0.5, water h 1 (invented numbers).
    s, water = two_stream_case(h_hot=2.0, h_cold=0.5, h_water=1.0)
    expected = (40 / 2.0 + 40 / 1.0) / ht.LMTD(60, 40, 20, 20) + (180 / 2.0 + 180 / 0.5) / 30
    assert area_targets(target(s, 10, [water])).area == pytest.approx(expected, rel=1e-12)


def test_segments_use_their_own_film_coefficient():
    # Hot stream of two segments with CP 2: 150 → 100 °C at h 1, 100 → 40 °C at h 0.25. Intervals of the
    # balanced composites: [0, 40] hot 40 → 60 against water 20 °C; [40, 120] hot 60 → 100 (h 0.25) and
    # [120, 220] hot 100 → 150 (h 1) against cold 30 → 120 (ΔT 30 K).
    hot = Stream("H", (Segment(150, 100, 2.0, 1.0), Segment(100, 40, 2.0, 0.25)))
    s = StreamTable((hot, Stream.simple("C", 30, 120, 2.0, film_coefficient=1.0)))
    water = Utility("water", 20, 20, 10.0, UtilityKind.COLD, 1.0)
    expected = ((40 / 0.25 + 40 / 1.0) / ht.LMTD(60, 40, 20, 20) + (80 / 0.25 + 80 / 1.0) / 30
                + (100 / 1.0 + 100 / 1.0) / 30)
    assert area_targets(target(s, 10, [water])).area == pytest.approx(expected, rel=1e-12)


def _integrated_area(streams: StreamTable, dt_min: float, utilities: list[Utility], h: float) -> float:
    """Vertical-transfer area ∫ dH / (U ΔT(H)), U = h/2, by adaptive quadrature along balanced composite
    curves built independently with heatloom.pinch.curves: each utility joins the table as a stream of
    its placed duty (an isothermal one with a 1e-7 K glide, which moves the area by ~1e-9 relative)."""
    t = target(streams, dt_min, utilities)
    extra = []
    for d in t.placement.duties:
        u, q = d.utility, d.duty
        if q <= 0:
            continue
        lo, hi = u.coldest, max(u.hottest, u.coldest + 1e-7)
        ends = (hi, lo) if u.is_hot else (lo, hi)
        extra.append(Stream.simple(u.name, *ends, q / (hi - lo)))
    balanced = StreamTable(streams.streams + tuple(extra))
    hot = hot_composite(balanced)
    cold = cold_composite(balanced, 0.0)
    total = hot.enthalpy[-1]
    assert cold.enthalpy[-1] == pytest.approx(total, rel=1e-9)

    def integrand(x):
        return (2.0 / h) / (np.interp(x, hot.enthalpy, hot.temperature) - np.interp(x, cold.enthalpy, cold.temperature))

    breaks = sorted({float(x) for x in np.concatenate([hot.enthalpy, cold.enthalpy]) if 0 < x < total})
    value, _ = quad(integrand, 0.0, total, points=breaks or None, limit=1000, epsabs=0, epsrel=1e-11)
    return value


@pytest.mark.parametrize("name", TARGETING)
def test_equals_integral_of_vertical_transfer_with_one_film_coefficient(reference, name):
    data, streams = reference(name)
    h = 0.8
    streams = with_h(streams, h)
    dt = data["dtmin"]
    utilities = uniform_utilities(streams, dt, h)
    a = area_targets(target(streams, dt, utilities)).area
    assert a == pytest.approx(_integrated_area(streams, dt, utilities, h), rel=1e-8)


def test_equals_integral_with_non_isothermal_utilities(reference):
    # Sinnott's streams (C&R Vol. 6, Table 3.6) with two steam levels and cooling water 20 → 30 °C.
    _, streams = reference("targeting_sinnott_four_stream")
    h = 0.6
    streams = with_h(streams, h)
    utilities = [Utility("HP steam", 250, 240, 150.0, film_coefficient=h),
                 Utility("LP steam", 100, 99, 80.0, film_coefficient=h),
                 Utility("cooling water", 20, 30, 10.0, film_coefficient=h)]
    t = target(streams, 10, utilities)
    assert {d.utility.name: round(d.duty, 6) for d in t.placement.duties} == \
        {"HP steam": 25.0, "LP steam": 25.0, "cooling water": 30.0}
    assert area_targets(t).area == pytest.approx(_integrated_area(streams, 10, utilities, h), rel=1e-8)


def test_touching_curves_are_refused():
    # Two mirror streams pinch over their whole length at ΔTmin 0: the area would be infinite.
    s = StreamTable.from_arrays(["H", "C"], [100, 50], [50, 100], [1.0, 1.0], film_coefficient=[1.0, 1.0])
    with pytest.raises(TemperatureCrossError, match="area target would be infinite"):
        area_targets(target(s, 0))
    with pytest.raises(TemperatureCrossError, match="touch or cross"):     # no finite shell count either
        shell_target(balanced_composites(target(s, 0)))


def test_missing_film_coefficients_are_named():
    s = StreamTable.from_arrays(["H1", "H2", "C1"], [150, 120, 20], [40, 50, 130], [1.0, 1.0, 2.5],
                                film_coefficient=[0.5, None, None])
    with pytest.raises(InputError, match="stream 'H2', stream 'C1'"):
        area_targets(target(s, 10))
    steam = Utility("steam", 200, 199, 100.0)
    water = Utility("water", 10, 20, 10.0, film_coefficient=1.0)
    with pytest.raises(InputError, match="utility 'steam'"):   # in use: the process needs heat
        area_targets(target(with_h(s, 0.5), 10, [steam, water]))
    # a default fills every gap, and the basis says so
    a = area_targets(target(s, 10), default_film_coefficient=0.5)
    assert "assumed for stream 'H2', stream 'C1'" in a.basis
    assert missing_film_coefficients(s, [steam]) == ["stream 'H2'", "stream 'C1'", "utility 'steam'"]
    with pytest.raises(InputError, match="default film coefficient must be"):
        area_targets(target(s, 10), default_film_coefficient=-1.0)


def test_ideal_utilities_are_the_design_defaults():
    s, _ = two_stream_case()
    t = target(s, 10)
    used = target_utilities(t)
    assert [u.name for u, _ in used] == ["cold utility (assumed)"]
    u, q = used[0]
    assert q == pytest.approx(40.0)
    # IDEAL_UTILITY_MARGIN plus ΔTmin below the coldest hot-stream temperature, default h and price
    assert u.supply_temperature == 40 - 10 - network_data.IDEAL_UTILITY_MARGIN
    assert u.film_coefficient == network_data.DEFAULT_COLD_UTILITY_FILM_COEFFICIENT
    a = area_targets(t)
    assert a.energy_cost == pytest.approx(40.0 * network_data.DEFAULT_COLD_UTILITY_PRICE)
    assert "ideal utilities assumed" in a.basis and "licensed engineers" in a.basis


# --------------------------------------------------------------------------------------------------
# area target against designed networks (uniform film coefficients)


@pytest.mark.parametrize("name", TARGETING)
def test_never_exceeds_a_designed_network(reference, name):
    data, streams = reference(name)
    streams = with_h(streams, 1.0)
    dt = data["dtmin"]
    utilities = uniform_utilities(streams, dt, 1.0)
    net = design_mer(streams, dt, utilities, time_limit=20)
    designed = sum(u.area for u in (*net.exchangers, *net.heaters, *net.coolers))
    a = area_targets(target(streams, dt, utilities))
    assert a.area <= designed * (1 + 1e-9)
    assert a.area > 0.5 * designed          # a real lower bound, not a trivial one


@st.composite
def small_tables(draw):
    n_hot = draw(st.integers(1, 3))
    n_cold = draw(st.integers(1, 3))
    streams = []
    for i in range(n_hot + n_cold):
        hot = i < n_hot
        a = draw(st.integers(60, 250))
        b = draw(st.integers(20, a - 10))
        ts, tt = (a, b) if hot else (b, a)
        streams.append(Stream.simple(f"{'H' if hot else 'C'}{i}", ts, tt, draw(st.integers(5, 40)) / 10,
                                     film_coefficient=0.5))
    return StreamTable(streams)


@settings(max_examples=6, derandomize=True, deadline=None)
@given(small_tables(), st.sampled_from([5.0, 10.0, 20.0]))
def test_never_exceeds_a_designed_network_invented_cases(streams, dt):
    utilities = uniform_utilities(streams, dt, 0.5)
    try:
        net = design_mer(streams, dt, utilities, time_limit=10)
    except InfeasibleError:
        assume(False)
    designed = sum(u.area for u in (*net.exchangers, *net.heaters, *net.coolers))
    assert area_targets(target(streams, dt, utilities)).area <= designed * (1 + 1e-9)


@settings(max_examples=25, derandomize=True, deadline=None)
@given(small_tables(), st.sampled_from([5.0, 12.5]), st.integers(-50, 200))
def test_invariant_under_order_and_temperature_shift(streams, dt, shift):
    utilities = uniform_utilities(streams, dt, 0.5)
    base = area_targets(target(streams, dt, utilities))
    reordered = StreamTable(tuple(reversed(streams.streams)))
    moved = StreamTable(tuple(Stream.simple(s.name, s.supply_temperature + shift, s.target_temperature + shift,
                                            s.segments[0].heat_capacity_flow, film_coefficient=0.5)
                              for s in streams))
    moved_utilities = [dataclasses.replace(u, supply_temperature=u.supply_temperature + shift,
                                           target_temperature=u.target_temperature + shift) for u in utilities]
    for other in (area_targets(target(reordered, dt, utilities)),
                  area_targets(target(moved, dt, moved_utilities))):
        assert other.area == pytest.approx(base.area, rel=1e-9)
        assert (other.units, other.units_mer, other.shells) == (base.units, base.units_mer, base.shells)


# --------------------------------------------------------------------------------------------------
# units


def test_units_sinnott_by_hand(reference):
    # Sinnott, C&R Vol. 6, ch. 3, Table 3.6 data at ΔTmin 10 K (pinch 90/80 °C). Euler, N − 1 per side
    # (Linnhoff & Hindmarsh 1983): above, streams 1, 2, 3, 4 and the hot utility → 4; below, streams
    # 1, 2, 3 (stream 4 starts at the pinch) and the cold utility → 3; overall 6 − 1 = 5.
    _, streams = reference("targeting_sinnott_four_stream")
    assert unit_targets(target(streams, 10)) == (5, 7)


@pytest.mark.parametrize("name", TARGETING)
def test_mer_units_match_the_minimum_matches_model(reference, name):
    data, streams = reference(name)
    net = design_mer(streams, data["dtmin"], default_film_coefficient=1.0, time_limit=20)
    assert unit_targets(target(streams, data["dtmin"]))[1] == net.unit_target


def test_threshold_has_one_subnetwork(reference):
    # Ray & Das, Problem 5.2: a threshold problem needing hot utility only; no pinch, so MER = overall.
    data, streams = reference("targeting_ray_das_problem_5_2_threshold")
    t = target(streams, data["dtmin"])
    assert t.cold_utility == 0 and t.pinch is None
    units, mer = unit_targets(t)
    assert units == mer == len(streams) + 1 - 1


# --------------------------------------------------------------------------------------------------
# shells


def test_shells_by_hand():
    # Interval 1: hot 60 → 40 °C against water at 20 °C: R = 0, P = 20/40, N = ln(1 − P)/ln(1 − X_P).
    # Interval 2: hot 150 → 60 against cold 30 → 120: R = 1, P = 0.75, N = [P/(1−P)]/[P₁/(1−P₁)] with
    # P₁ = X_P·P_max = 0.9·(2 − √2) (Ahmad, Linnhoff & Smith 1988, with X_P = 0.9).
    s, water = two_stream_case()
    p1 = 0.9 * (2 - math.sqrt(2))
    expected = math.log(0.5) / math.log(0.1) + 3.0 / (p1 / (1 - p1))
    shells, real = shell_target(balanced_composites(target(s, 10, [water])))
    assert real == pytest.approx(expected, rel=1e-9)
    assert shells == 3


def test_shells_add_up_along_one_match():
    # One hot stream cut in two segments of the same CP (so R stays 1) against one cold stream, no
    # utilities: the interval counts add up to the count of the whole match.
    hot = Stream("H", (Segment(150, 100, 2.0, 1.0), Segment(100, 60, 2.0, 0.5)))
    s = StreamTable((hot, Stream.simple("C", 30, 120, 2.0, film_coefficient=1.0)))
    t = target(s, 10)
    assert t.hot_utility == 0 and t.cold_utility == 0
    _, real = shell_target(balanced_composites(t))
    assert real == pytest.approx(shell_design(150, 60, 30, 120).shells_real, rel=1e-9)
    with pytest.raises(InputError, match="X_P must be in"):
        shell_target(balanced_composites(t), x_p=1.2)


def _steam_heater_case(segments):
    """Invented: one cold stream (the given segments) heated by condensing steam at 150 °C alone."""
    s = StreamTable((Stream("C", tuple(segments)),))
    steam = Utility("steam", 150, 150, 100.0, UtilityKind.HOT, 5.0)
    return s, steam


@pytest.mark.parametrize("segments", [
    (Segment(20, 140, 2.0, 1.0),),                               # one linear cold stream, P = 120/130
    (Segment(20, 80, 2.0, 1.0), Segment(80, 140, 1.0, 1.0)),     # two segments: two composite intervals
])
def test_isothermal_side_needs_one_shell(segments):
    # A side that does not change temperature (condensing steam) gives F = 1 for any P, whatever the
    # arrangement (common practice; Incropera, DeWitt, Bergman & Lavine 2007, Fundamentals of Heat and
    # Mass Transfer, 6th ed., Table 11.3: at C_r = 0 every arrangement has ε = 1 − exp(−NTU); the same
    # statement in the docstring of ht.hx.effectiveness_from_NTU, checked here with ht): one 1-2 shell
    # does the whole duty, so the shell target of a steam heater is 1, as the design's heater has.
    for ntu in (0.5, 2.6, 8.0):
        assert ht.effectiveness_from_NTU(ntu, 0.0, "S&T") == pytest.approx(
            ht.effectiveness_from_NTU(ntu, 0.0, "counterflow"), rel=1e-12)
    s, steam = _steam_heater_case(segments)
    t = target(s, 10, [steam])
    assert t.hot_utility == pytest.approx(sum(g.duty for g in segments)) and t.cold_utility == 0
    shells, real = shell_target(balanced_composites(t))
    assert shells == 1 and real == pytest.approx(1.0, rel=1e-12)
    net = design_mer(s, 10, [steam], exchanger_type=ExchangerType.SHELL_AND_TUBE_1_2, time_limit=20)
    assert [h.shells for h in net.heaters] == [1] and not net.exchangers and not net.coolers
    assert area_targets(t, capital_basis="shells").shells == 1


def test_isothermal_cold_side_needs_one_shell():
    # The mirror case: a hot stream 200 → 35 °C (two segments) cooled by an isothermal cold utility at
    # 20 °C, P = 165/180 > X_P; F = 1 for any P with one side isothermal (as above), so 1 shell.
    hot = Stream("H", (Segment(200, 100, 1.0, 1.0), Segment(100, 35, 2.0, 1.0)))
    s = StreamTable((hot,))
    water = Utility("boiling water", 20, 20, 10.0, UtilityKind.COLD, 5.0)
    t = target(s, 10, [water])
    assert t.cold_utility == pytest.approx(230.0) and t.hot_utility == 0
    assert shell_target(balanced_composites(t)) == (1, pytest.approx(1.0, rel=1e-12))
    net = design_mer(s, 10, [water], exchanger_type=ExchangerType.SHELL_AND_TUBE_1_2, time_limit=20)
    assert [c.shells for c in net.coolers] == [1]


def test_isothermal_side_below_x_p_keeps_its_fraction():
    # With P below X_P = 0.9 the real count of an isothermal side stays the Ahmad, Linnhoff & Smith
    # (1988) value at R = 0, ln(1 − P)/ln(1 − X_P) (P_max = 1 there), written out by hand: steam at
    # 150 °C heating 20 → 80 °C, P = 60/130.
    s, steam = _steam_heater_case((Segment(20, 80, 2.0, 1.0),))
    shells, real = shell_target(balanced_composites(target(s, 10, [steam])))
    assert real == pytest.approx(math.log(1 - 60 / 130) / math.log(1 - 0.9), rel=1e-12)
    assert shells == 1


# --------------------------------------------------------------------------------------------------
# costs


def test_capital_energy_and_total_by_hand():
    s, water = two_stream_case()
    law = CostLaw(1000.0, 100.0, 1.0)
    costs = CostSettings(annualised=True, exchanger=law)
    a = area_targets(target(s, 10, [water]), costs)
    assert isinstance(a, AreaTargets)
    # 2 target units share the area equally: 2·(1000 + 100·A/2); water 40 kW at 10 per kW·year
    assert a.units_mer == 2
    assert a.capital_cost == pytest.approx(2000 + 100 * a.area)
    assert a.energy_cost == pytest.approx(400.0)
    assert a.total_annual_cost == pytest.approx(a.capital_cost + 400.0)
    # sharing among the shells instead
    b = area_targets(target(s, 10, [water]), costs, capital_basis="shells")
    assert b.capital_cost == pytest.approx(3 * 1000 + 100 * a.area)
    # annualisation of an installed-cost law: capital recovery factor of 10 % over 10 years (0.16275)
    c = area_targets(target(s, 10, [water]), CostSettings(exchanger=law, interest_rate=0.1, years=10))
    assert c.capital_cost == pytest.approx(0.16274539 * (2000 + 100 * a.area), rel=1e-7)
    with pytest.raises(InputError, match="unknown capital basis"):
        area_targets(target(s, 10, [water]), costs, capital_basis="rooms")


def test_to_dict_keys():
    s, water = two_stream_case()
    d = area_targets(target(s, 10, [water])).to_dict()
    for key in ("area", "units", "units_mer", "shells", "capital_cost", "energy_cost", "total_annual_cost",
                "basis"):
        assert key in d
    assert d["capital_basis"] == CapitalBasis.UNITS_MER.value
    assert d["units_of_measure"]["area"] == "m²"


def test_shell_target_interval_by_interval(reference):
    # Sinnott's streams (C&R Vol. 6, Table 3.6) with ideal (isothermal) utilities: every interval's count
    # is shell_design's real-valued count (Ahmad, Linnhoff & Smith 1988), or ln(1 − P)/ln(1 − X_P) where a
    # side is isothermal (R → 0), times the interval's units S_k − 1.
    _, streams = reference("targeting_sinnott_four_stream")
    b = balanced_composites(target(with_h(streams, 0.5), 10))
    expected = 0.0
    for k in range(b.enthalpy.size - 1):
        hi, ho, ci, co = b.hot_high[k], b.hot_low[k], b.cold_low[k], b.cold_high[k]
        if hi - ho < 1e-9 or co - ci < 1e-9:
            n = math.log(1 - max(hi - ho, co - ci) / (hi - ci)) / math.log(1 - 0.9)
        else:
            n = shell_design(hi, ho, ci, co).shells_real
        expected += n * (b.hot_count[k] + b.cold_count[k] - 1)
    shells, real = shell_target(b)
    assert real == pytest.approx(expected, rel=1e-12)
    assert shells == math.ceil(expected)
