"""Evaluation of a drawn network: checks, targets, sizing and costing as for a new design.

Published source: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (four
streams; 50 kW hot and 30 kW cold utility at ΔTmin 10 K, pinch 90/80 °C).  The network evaluated is the
maximum-energy-recovery network of that problem: above the pinch 1→4 (270 kW), 2→3 (60 kW) and a heater on 3
(50 kW); below it 1→3 (90 kW), 2→3 (30 kW) and a cooler on 2 (30 kW) — each duty follows from the stream
data (CP × temperature range on each side of the pinch).  Film coefficients 0.5 kW/(m²·K) and the utility
temperatures are assumptions of the test.  Areas are checked against the reference library ``ht``
(ht.LMTD) with U = 1/(1/h_hot + 1/h_cold).
"""

import ht
import pytest

from heatloom.model import ExistingUnit, StreamTable, Utility, UtilityKind
from heatloom.model.costs import CostSettings
from heatloom.retrofit.evaluate import evaluate_network
from heatloom.retrofit.existing import ExistingNetwork

H = 0.5
STREAMS = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140], [3.0, 1.0, 2.0, 4.5],
                                  film_coefficient=[H] * 4)
UTILITIES = [Utility("steam", 180, 179, 100.0, UtilityKind.HOT, H), Utility("water", 20, 30, 10.0, UtilityKind.COLD, H)]

# (name, hot, cold, duty, hot_order, cold_order, hot in, hot out, cold in, cold out), temperatures from the duties
UNITS = [
    ("E1", "1", "4", 270.0, 1, 1, 180.0, 90.0, 80.0, 140.0),
    ("E2", "2", "3", 60.0, 1, 3, 150.0, 90.0, 80.0, 110.0),
    ("E3", "1", "3", 90.0, 2, 2, 90.0, 60.0, 35.0, 80.0),
    ("E4", "2", "3", 30.0, 3, 1, 60.0, 30.0, 20.0, 35.0),
]


def network() -> ExistingNetwork:
    units = [ExistingUnit(n, h, c, duty=q, hot_position=hp, cold_position=cp) for n, h, c, q, hp, cp, *_ in UNITS]
    units += [ExistingUnit("H1", "steam", "3", cold_position=4),
              ExistingUnit("C1", "2", "water", duty=30.0, hot_position=2)]
    return ExistingNetwork(STREAMS, units, UTILITIES)


def test_mer_network_passes_meets_its_targets_and_is_sized_like_ht():
    ev = evaluate_network(network(), 10.0)
    assert ev.ok, ev.failures
    # Sinnott Table 3.6: 50 kW hot, 30 kW cold utility at ΔTmin 10 K
    assert ev.hot_utility_target == pytest.approx(50) and ev.cold_utility_target == pytest.approx(30)
    assert ev.network.hot_utility == pytest.approx(50, abs=1e-6)
    assert ev.network.cold_utility == pytest.approx(30, abs=1e-6)
    assert ev.targets_met
    by_name = {u.name: u for u in ev.network.exchangers}
    u_overall = 1 / (1 / H + 1 / H)
    for name, _, _, q, _, _, thi, tho, tci, tco in UNITS:
        e = by_name[name]
        assert e.duty == pytest.approx(q, rel=1e-6)
        assert (e.hot_in, e.hot_out, e.cold_in, e.cold_out) == (pytest.approx(thi, abs=1e-6), pytest.approx(tho, abs=1e-6),
                                                                pytest.approx(tci, abs=1e-6), pytest.approx(tco, abs=1e-6))
        area = q / (u_overall * ht.LMTD(thi, tho, tci, tco))
        assert e.area == pytest.approx(area, rel=1e-5)
    # costed with the cost law of a new design: default law on every unit's area
    law = CostSettings()
    capital = sum(float(law.annual_capital_cost(x.area, kind))
                  for group, kind in ((ev.network.exchangers, "exchanger"), (ev.network.heaters, "heater"),
                                      (ev.network.coolers, "cooler")) for x in group)
    assert ev.network.capital_cost == pytest.approx(capital, rel=1e-9)
    assert ev.network.operating_cost == pytest.approx(50 * 100.0 + 30 * 10.0, rel=1e-9)


def test_a_larger_dtmin_fails_naming_the_units():
    # at 20 K, 2→3 above the pinch (hot 90 °C out against cold 80 °C in) keeps only 10 K; so does 1→4
    ev = evaluate_network(network(), 20.0)
    assert not ev.ok
    text = "; ".join(ev.failures)
    assert "2→3" in text and "1→4" in text and "smallest approach 10 K < 20 K" in text
    # the targets at 20 K are larger than at 10 K, the network's utilities are the same
    assert ev.hot_utility_target > 50


def test_a_stream_left_short_of_its_target_fails():
    # without E4 and the cooler, stream 2 leaves E2 at 90 °C: 1 × (90 − 30) = 60 kW short of its target
    units = [ExistingUnit("E1", "1", "4", duty=270.0, hot_position=1, cold_position=1),
             ExistingUnit("E3", "1", "3", duty=90.0, hot_position=2, cold_position=1),
             ExistingUnit("E2", "2", "3", duty=60.0, hot_position=1, cold_position=2),
             ExistingUnit("H1", "steam", "3", cold_position=3)]
    ev = evaluate_network(ExistingNetwork(STREAMS, units, UTILITIES), 10.0)
    assert not ev.ok
    assert any("stream '2'" in f and "60 kW" in f for f in ev.failures), ev.failures


def test_without_film_coefficients_the_checks_stand_and_the_notes_say_why_no_areas():
    plain = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140], [3.0, 1.0, 2.0, 4.5])
    units = [ExistingUnit(n, h, c, duty=q, hot_position=hp, cold_position=cp, u=0.25)
             for n, h, c, q, hp, cp, *_ in UNITS]
    units += [ExistingUnit("H1", "steam", "3", cold_position=4),
              ExistingUnit("C1", "2", "water", duty=30.0, hot_position=2)]
    utilities = [Utility("steam", 180, 179, 100.0, UtilityKind.HOT), Utility("water", 20, 30, 10.0, UtilityKind.COLD)]
    ev = evaluate_network(ExistingNetwork(plain, units, utilities), 10.0)
    assert ev.ok and not ev.sized
    assert any("film coefficient" in n for n in ev.notes)


# ---------------------------------------------------------------------------------------------------------
# units the table states as 1-2 shells or co-current are sized as such, not as counter-current


def test_a_1_2_shell_unit_of_given_area_is_sized_back_to_that_area_with_ht_F():
    # E4 of the network above (30 kW, 60 → 30 °C against 20 → 35 °C) drawn as two 1-2 shells in series of the
    # area that duty needs: A = Q / (U·F·LMTD), F by Fakheri's closed form in ht (Fakheri 2003, "An explicit
    # expression for the F-factor", ASME J. Heat Transfer 125), LMTD by ht.LMTD
    f = ht.F_LMTD_Fakheri(60.0, 30.0, 20.0, 35.0, shells=2)
    area = 30.0 / (0.25 * f * ht.LMTD(60.0, 30.0, 20.0, 35.0))
    units = [ExistingUnit(n, h, c, duty=q, hot_position=hp, cold_position=cp) for n, h, c, q, hp, cp, *_ in UNITS[:3]]
    units += [ExistingUnit("E4", "2", "3", area=area, duty=30.0, arrangement="shell_and_tube_1_2", shells=2, hot_position=3,
                           cold_position=1),
              ExistingUnit("H1", "steam", "3", cold_position=4),
              ExistingUnit("C1", "2", "water", duty=30.0, hot_position=2)]
    ev = evaluate_network(ExistingNetwork(STREAMS, units, UTILITIES), 10.0)
    assert ev.ok, ev.failures
    e4 = next(e for e in ev.network.exchangers if e.name == "E4")
    # rated (not fixed) by the ε-NTU relation of two 1-2 shells in series at that area: the duty it was drawn for
    assert e4.duty == pytest.approx(30.0, rel=1e-6)
    assert e4.shells == 2 and e4.f_factor == pytest.approx(f, rel=1e-6)
    assert e4.area == pytest.approx(area, rel=1e-6)   # counter-current it would be F times smaller
    assert e4.geometry["type"] == "shell_and_tube_1_2"


def test_a_co_current_unit_of_given_area_is_sized_back_to_that_area():
    # invented two-stream case: H (200 → 80 °C, 1 kW/K), C (20 → 90 °C, 2 kW/K); one co-current unit drawn for
    # 100 kW (H 200 → 100, C 20 → 70 °C), a cooler and a heater at the stream ends.  Its area by ht's
    # co-current LMTD: A = Q / (U·LMTD_co)
    streams = StreamTable.from_arrays(["H", "C"], [200, 20], [80, 90], [1.0, 2.0], film_coefficient=[H, H])
    area = 100.0 / (0.25 * ht.LMTD(200.0, 100.0, 20.0, 70.0, counterflow=False))
    units = [ExistingUnit("X", "H", "C", area=area, arrangement="co_current"),
             ExistingUnit("CU", "H", "water"), ExistingUnit("HU", "steam", "C")]
    ev = evaluate_network(ExistingNetwork(streams, units, UTILITIES), 10.0)
    x = ev.network.exchangers[0]
    assert x.duty == pytest.approx(100.0, rel=1e-6)
    assert x.area == pytest.approx(area, rel=1e-6)
    assert x.area > 100.0 / (0.25 * ht.LMTD(200.0, 100.0, 20.0, 70.0))   # more than counter-current
    assert ev.network.coolers[0].duty == pytest.approx(20.0, rel=1e-6)
    assert ev.network.heaters[0].duty == pytest.approx(40.0, rel=1e-6)


@pytest.mark.parametrize("duty, fails", [(180.01, False), (180.2, True)])
def test_an_approach_a_hair_below_dtmin_is_a_note_not_a_failure(duty, fails):
    # invented: H1 150 → 40 °C (2 kW/K) against C1 50 → 140 °C (2.5 kW/K) entering at 50 °C; the exchanger's
    # cold-end approach is (150 − Q/2) − 50 = 100 − Q/2 [K] by hand: 9.995 K at 180.01 kW (within the 0.01 K
    # a table's rounded areas give), 9.9 K at 180.2 kW (a real shortfall)
    s = StreamTable.from_arrays(["H1", "C1"], [150, 50], [40, 140], [2.0, 2.5], film_coefficient=[1.0, 1.0])
    u = [Utility("steam", 180, 179, 100.0, UtilityKind.HOT, 5.0), Utility("water", 20, 30, 10.0, UtilityKind.COLD, 2.0)]
    net = ExistingNetwork(s, [ExistingUnit("E1", "H1", "C1", duty=duty), ExistingUnit("S1", "steam", "C1"),
                              ExistingUnit("W1", "H1", "water")], u)
    ev = evaluate_network(net, 10.0)
    approach = 100 - duty / 2
    assert ev.simulation.unit("E1").min_approach == pytest.approx(approach, abs=1e-9)
    assert (not ev.ok) is fails
    assert any("smallest approach" in f for f in ev.failures) is fails
    assert any("within 0.01 K below ΔTmin 10 K" in n and "H1→C1" in n for n in ev.notes) is not fails


@pytest.mark.parametrize("oil_ends", [None, (300.0, 250.0)])
def test_a_heater_is_sized_over_the_part_of_the_oils_range_it_takes(oil_ends):
    """Invented: hot oil 330 → 250 °C heats C from 100 to 150 °C (2 kW/K, 100 kW); h 1 kW/(m²·K) on both sides,
    U = 0.5.  Taking the oil over its whole range the ends are 330 − 150 and 250 − 100 K; taking it from 300 to
    250 °C (as a design that pipes the oil through heaters in series writes it) both ends are 150 K.  Area =
    Q / (U · LMTD), LMTD from the reference library ``ht`` (ht.LMTD)."""
    s = StreamTable.from_arrays(["C"], [100], [150], [2.0], film_coefficient=[1.0])
    oil = Utility("oil", 330, 250, 60.0, UtilityKind.HOT, 1.0)
    net = ExistingNetwork(s, [ExistingUnit("HU", "oil", "C", duty=100.0, hot_temperatures=oil_ends)], [oil])
    ev = evaluate_network(net, 10.0)
    assert ev.ok, ev.failures
    (heater,) = ev.network.heaters
    t_in, t_out = oil_ends or (330.0, 250.0)
    assert (heater.utility_in, heater.utility_out) == (t_in, t_out)
    assert heater.area == pytest.approx(100.0 / (0.5 * ht.LMTD(t_in, t_out, 100.0, 150.0)), rel=1e-6)
    # targets with the oil given: C needs 100 kW, all of the oil's shifted range (325 → 245 °C) lies above C's
    # shifted range (105 → 155 °C): 100 kW of oil, no cold utility
    assert ev.hot_utility_target == pytest.approx(100.0) and ev.cold_utility_target == pytest.approx(0.0, abs=1e-9)


def test_the_utility_target_of_oil_that_must_reach_the_hottest_demand_is_its_least_duty():
    """Invented: C1 260 → 290 °C (1 kW/K, 30 kW) and H1 200 → 100 °C (1 kW/K, 100 kW) against C2 40 → 140 °C
    (1 kW/K); hot oil 330 → 250 °C, cooling water 10 → 20 °C, ΔTmin 10 K.  Hand calculation: C1 sits at 265 → 295 °C
    shifted, where the oil (325 → 245 °C shifted) holds (325 − 265)/80 of its heat, so the oil must carry
    30 × 80/60 = 40 kW; the 10 kW it brings below 265 °C shifted leave through the cooling water (H1 and C2
    balance, 100 kW each): 10 kW cold.  The process alone needs 30 kW hot."""
    s = StreamTable.from_arrays(["C1", "H1", "C2"], [260, 200, 40], [290, 100, 140], [1.0, 1.0, 1.0],
                                film_coefficient=[1.0] * 3)
    u = [Utility("oil", 330, 250, 60.0, UtilityKind.HOT, 1.0), Utility("CW", 10, 20, 6.0, UtilityKind.COLD, 1.0)]
    net = ExistingNetwork(s, [ExistingUnit("X", "H1", "C2", duty=100.0), ExistingUnit("HU", "oil", "C1")], u)
    ev = evaluate_network(net, 10.0)
    assert ev.hot_utility_target == pytest.approx(40.0) and ev.cold_utility_target == pytest.approx(10.0)
    assert any("non-isothermal utility's heat spreads over its range" in n for n in ev.notes)
