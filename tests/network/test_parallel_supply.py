"""Non-isothermal utilities fed to their units in parallel from a header (heatloom.network.parallel_supply) in
the tick-off design (more than TICK_OFF_ABOVE streams).

Invented data (no plant, no source): fourteen streams of our own, hot oil 330 → 250 °C and cooling water
10 → 15 °C; C7 starts at 250 °C, at the oil's design return, so the tick-off method's conservative reading
(the oil's heat counted at its return temperature) cannot serve it, and H1 ends at 21 °C, so the cooling
water counted at 15 °C cannot cool it either. Every check is recomputed here from the units' terminal
temperatures and duties: approaches, the oil's return temperatures (ΔTmin arithmetic), the energy targets
(heatloom's problem table, itself checked against published tables elsewhere), the utility flows, and one
heater's area with the ht library's LMTD (Caleb Bell, ht, PyPI).
"""

import re

import ht
import pytest

import heatloom.network.design as design_module
from heatloom.model import StreamTable, Utility, UtilityKind
from heatloom.network.design import design_mer
from heatloom.network.parallel_supply import with_returns
from heatloom.network.placement import PlacedUnit, Side
from heatloom.pinch.targets import target

DT = 10.0
NAMES = ["H1", "H2", "H3", "H4", "H5", "H6", "H7", "C1", "C2", "C3", "C4", "C5", "C6", "C7"]
SUPPLY = [250, 180, 150, 120, 200, 90, 160, 30, 50, 80, 20, 100, 60, 250]
TARGET = [21, 60, 30, 40, 90, 24, 100, 318, 170, 140, 100, 260, 120, 310]
CP = [10, 20, 15, 25, 8, 30, 12, 12, 18, 25, 15, 10, 20, 6]
OIL = Utility("oil", 330.0, 250.0, 60.0, UtilityKind.HOT, 1.0)
CW = Utility("CW", 10.0, 15.0, 6.0, UtilityKind.COLD, 1.5)


def case():
    return StreamTable.from_arrays(NAMES, SUPPLY, TARGET, CP, film_coefficient=[0.5] * len(NAMES)), [OIL, CW]


def note_numbers(net, name):
    """(flow, least flow, mixed return) of the utility's header note."""
    text = next(n for n in net.notes if f"'{name}' fed to its" in n)
    m = re.search(r"flow ([\d.]+) kW/K against the least ([\d.]+) kW/K.*mixed return ([\d.]+) °C", text)
    return tuple(float(x) for x in m.groups())


@pytest.fixture(scope="module")
def designed():
    streams, utilities = case()
    return streams, utilities, design_mer(streams, DT, utilities=utilities, time_limit=30)


def test_the_utilities_come_from_a_header_and_keep_the_targets(designed):
    streams, utilities, net = designed
    assert len(streams) > design_module.TICK_OFF_ABOVE
    duties = {d.utility.name: d.duty for d in target(streams, DT, utilities).placement.duties}
    assert sum(h.duty for h in net.heaters) == pytest.approx(duties["oil"], rel=1e-7)
    assert sum(c.duty for c in net.coolers) == pytest.approx(duties["CW"], rel=1e-7)
    for h in net.heaters:   # oil in at 330 °C, back between its design return and its supply
        assert h.utility_in == 330.0 and 250.0 - 1e-9 <= h.utility_out < 330.0
        assert h.utility_in - h.cold_out >= DT - 1e-9 and h.utility_out - h.cold_in >= DT - 1e-9
    for c in net.coolers:   # water in at 10 °C, back at no more than 15 °C
        assert c.utility_in == 10.0 and 10.0 < c.utility_out <= 15.0 + 1e-9
        assert c.hot_out - c.utility_in >= DT - 1e-9 and c.hot_in - c.utility_out >= DT - 1e-9
    # C7 (250 → 310 °C) has only the oil: its heater returns the oil at 250 + ΔTmin = 260 °C, short of 250
    c7 = [h for h in net.heaters if h.cold == "C7"]
    assert len(c7) == 1 and (c7[0].cold_in, c7[0].cold_out) == (pytest.approx(250.0), pytest.approx(310.0))
    assert c7[0].utility_out == pytest.approx(260.0, abs=1e-9)
    # the notes' flows and mixed returns, recomputed from the units: flow = Σ q / |return − supply|
    for name, units, ts, tr in (("oil", net.heaters, 330.0, 250.0), ("CW", net.coolers, 10.0, 15.0)):
        flow = sum(u.duty / abs(u.utility_out - ts) for u in units)
        duty = sum(u.duty for u in units)
        got = note_numbers(net, name)
        assert got[0] == pytest.approx(flow, rel=1e-5) and got[1] == pytest.approx(duty / abs(tr - ts), rel=1e-5)
        assert got[2] == pytest.approx(ts + (duty / flow if ts < tr else -duty / flow), abs=0.051)   # to 0.1 K
        assert flow >= duty / abs(tr - ts) * (1 - 1e-9)   # never less than the least flow
    assert net.units <= round(1.1 * net.unit_target)
    assert any("qualified, licensed engineers" in n for n in net.notes if "fed to its" in n)


def test_a_heater_is_sized_on_its_own_return(designed):
    streams, utilities, net = designed
    h = next(h for h in net.heaters if h.cold == "C7")
    u = 1.0 / (1.0 / 0.5 + 1.0 / 1.0)   # 1/U = 1/h_stream + 1/h_oil
    lmtd = ht.LMTD(h.utility_in, h.utility_out, h.cold_in, h.cold_out)   # counter-current (ht's default)
    assert h.area == pytest.approx(h.duty / (u * lmtd), rel=1e-6)


def test_least_utility_flow_pipes_the_utilities_and_places_no_fewer_units(designed):
    """Asked to keep the utilities at their least flow, the design pipes both through their units as streams
    (the fallback it keeps for a utility cut by a pinch) and says so: on this case not fewer units."""
    streams, utilities, net = designed
    piped = design_mer(streams, DT, utilities=utilities, time_limit=30, least_utility_flow=True)
    assert any("piped through its units" in n for n in piped.notes)
    assert any("kept at the least flow" in n and "not tried as asked" in n for n in piped.notes)
    assert not any("fed to its" in n for n in piped.notes)
    assert net.units <= piped.units
    duties = {d.utility.name: d.duty for d in target(streams, DT, utilities).placement.duties}
    for name, units, lo, hi in (("oil", piped.heaters, 250.0, 330.0), ("CW", piped.coolers, 10.0, 15.0)):
        assert sum(u.duty for u in units) == pytest.approx(duties[name], rel=1e-7)
        for u in units:   # every unit takes the utility inside its design range
            assert lo - 1e-9 <= min(u.utility_in, u.utility_out) and max(u.utility_in, u.utility_out) <= hi + 1e-9
    for h in piped.heaters:
        assert h.utility_in - h.cold_out >= DT - 1e-9 and h.utility_out - h.cold_in >= DT - 1e-9
    for c in piped.coolers:
        assert c.hot_out - c.utility_in >= DT - 1e-9 and c.hot_in - c.utility_out >= DT - 1e-9


def test_an_inner_breakpoint_sets_the_return():
    """A cold side of two segments, 100 → 150 °C at 1 kW/K and 150 → 200 °C at 4 kW/K, heated from 100 to 200
    °C by oil supplied at 220 °C (design return 120 °C), 10 K needed: at the cold end the oil may return at
    110 °C (so 120 °C), but at the 150 °C break, 200 of the 250 kW from the oil's inlet, the oil at
    220 − (220 − r)·0.8 must be 160 °C or more: r ≥ 145 °C (hand arithmetic)."""
    oil = Utility("oil", 220.0, 120.0, 60.0, UtilityKind.HOT, 1.0)
    hot = [Side("oil", True, (220.0, 220.0), (0.0, 250.0), 5.0, utility=True)]
    cold = [Side("C", False, (100.0, 150.0, 200.0), (0.0, 50.0, 250.0), 5.0)]
    unit = PlacedUnit("oil", "C", 0, 250.0, 220.0, 220.0, 100.0, 200.0, 1.0, 1.0)
    (out,) = with_returns([unit], hot, cold, {"oil": oil})
    assert (out.hot_in, out.hot_out) == (220.0, pytest.approx(145.0, abs=1e-9))
    assert out.hot_in - 0.8 * (out.hot_in - out.hot_out) - 150.0 == pytest.approx(DT, abs=1e-9)


def test_a_study_passes_least_utility_flow_to_its_design_and_states_it():
    """`heatloom report --least-utility-flow`: the study's MER design pipes the utilities (its notes say the
    header reading was not tried as asked) and the assumptions table says so."""
    from heatloom.studies.study import RunSettings, compute_study

    streams, utilities = case()
    study = compute_study(streams, DT, utilities, settings=RunSettings(time_limit=20.0, least_utility_flow=True),
                          version="test")
    assert any("not tried as asked" in n for n in study.design.notes)
    assert not any("fed to its" in n for n in study.design.notes)
    rows = {a: (v, b) for a, v, b in study.assumption_rows()}
    value, basis = rows["maximum-energy-recovery design"]
    assert "least flow and design return" in value and basis == "given"


def test_a_sweep_passes_least_utility_flow_to_its_designs(monkeypatch):
    """`heatloom sweep --designs 10 --least-utility-flow`: each design is asked for the least flow (the option
    reaches design_mer) and the sweep's notes say so; without the option the designs may use a header."""
    from heatloom.studies.sweep import sweep

    streams, utilities = case()
    asked = []

    def spy(*args, **kwargs):
        asked.append(kwargs["least_utility_flow"])
        return design_mer(*args, **{**kwargs, "time_limit": 5.0})

    monkeypatch.setattr(design_module, "design_mer", spy)
    for flag in (True, False):
        result = sweep(streams, (9.0, 11.0), utilities, step=1.0, designs=[10.0], workers=1,
                       least_utility_flow=flag)
        assert not result.designs[0].error and result.designs[0].units > 0
        assert any("kept at the least flow" in n for n in result.notes) is flag
    assert asked == [True, False]
