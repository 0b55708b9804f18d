"""Existing networks with stream splits: simulation, stated-duty walks, cross-pinch heat, retrofit options.

Sources: every branch exchanger is checked against the reference library ``ht`` (Caleb Bell, PyPI,
``ht.hx.effectiveness_from_NTU``, the counter-current ε-NTU relation of Incropera, DeWitt, Bergman & Lavine
(2007), *Fundamentals of Heat and Mass Transfer*, 6th ed., Table 11.3) on the branch's own heat capacity
flow f·CP; the mixed outlet by the energy balance of an adiabatic mixer (common practice: enthalpy in =
enthalpy out), computed here by hand.  The split design is the MER network heatloom designs for the
two-hot / two-cold problem of Yee & Grossmann (1990) as given by Roetzel, Luo & Chen (2020), *Design and
Operation of Heat Exchangers and their Networks*, ch. 6, Table 6.16 (tests/data/references/
synthesis_yee_grossmann_2h2c.json) at ΔTmin 5 K, which splits streams; its simulation must give back the
duties and temperatures the design sized by LMTD (two independent computations).  The small networks
written here are invented for the tests.
"""

from __future__ import annotations

from dataclasses import replace

import ht
import pytest
from refdata import load_reference, reference_utilities

from heatloom.errors import InputError
from heatloom.model import Segment, Stream, StreamTable, Utility, UtilityKind
from heatloom.model.existing import ExistingUnit, OperatingMode
from heatloom.network import design_mer
from heatloom.network.structure import stream_positions
from heatloom.retrofit import retrofit_options
from heatloom.retrofit.diagnose import cross_pinch
from heatloom.retrofit.existing import ExistingNetwork
from heatloom.retrofit.options import ChangeKind, apply_changes
from heatloom.retrofit.profiles import heat_between
from heatloom.retrofit.simulate import simulate

STEAM = Utility("steam", 200, 199, 100.0, UtilityKind.HOT)
WATER = Utility("water", 20, 30, 10.0, UtilityKind.COLD)


def two_branches(fa=0.6, hot=None):
    """H1 (150 → 60 °C, 4 kW/K) split: branch A (fa) heats C1 (30 → 140 °C, 2 kW/K), branch B (1 − fa) heats
    C2 (50 → 120 °C, 1.5 kW/K); a trim cooler after the mixer, trim heaters on C1 and C2."""
    streams = StreamTable([hot or Stream.simple("H1", 150, 60, 4.0), Stream.simple("C1", 30, 140, 2.0),
                           Stream.simple("C2", 50, 120, 1.5)])
    units = [ExistingUnit("A", "H1", "C1", area=10.0, u=0.5, hot_position=1, cold_position=1, hot_fraction=fa),
             ExistingUnit("B", "H1", "C2", area=6.0, u=0.4, hot_position=1, cold_position=1, hot_fraction=1 - fa),
             ExistingUnit("CW", "H1", "water", hot_position=2),
             ExistingUnit("S1", "steam", "C1", cold_position=2),
             ExistingUnit("S2", "steam", "C2", cold_position=2)]
    return ExistingNetwork(streams, units, [STEAM, WATER])


def rated(ua, c_hot, c_cold, t_hot, t_cold):
    """Duty of a counter-current exchanger by ht's ε-NTU (Incropera et al. 2007, Table 11.3) [kW]."""
    cmin, cmax = min(c_hot, c_cold), max(c_hot, c_cold)
    eps = ht.effectiveness_from_NTU(ua / cmin, cmin / cmax, "counterflow")
    return eps * cmin * (t_hot - t_cold)


def test_two_branches_by_hand_with_ht():
    sim = simulate(two_branches())
    # branch A: C_h = 0.6·4 = 2.4 kW/K against C1 2 kW/K; branch B: C_h = 0.4·4 = 1.6 kW/K against 1.5 kW/K
    qa = rated(0.5 * 10.0, 2.4, 2.0, 150, 30)
    qb = rated(0.4 * 6.0, 1.6, 1.5, 150, 50)
    a, b = sim.unit("A"), sim.unit("B")
    assert a.duty == pytest.approx(qa, rel=1e-12)
    assert b.duty == pytest.approx(qb, rel=1e-12)
    # each unit reports its own branch: both take H1 at 150 °C and leave at their own temperature
    assert (a.hot_in, b.hot_in) == (150.0, 150.0)
    assert a.hot_out == pytest.approx(150 - qa / 2.4, rel=1e-12)
    assert b.hot_out == pytest.approx(150 - qb / 1.6, rel=1e-12)
    assert a.cold_out == pytest.approx(30 + qa / 2.0, rel=1e-12)
    assert (a.hot_fraction, b.hot_fraction) == (0.6, pytest.approx(0.4))
    # adiabatic mixer, constant CP: T_mix = Σ f_k T_k; the cooler takes the mixed stream to 60 °C
    t_mix = 0.6 * (150 - qa / 2.4) + 0.4 * (150 - qb / 1.6)
    assert sim.temperatures["H1"] == pytest.approx((150.0, t_mix, 60.0), rel=1e-12)
    assert sim.unit("CW").hot_in == pytest.approx(t_mix, rel=1e-12)
    assert sim.unit("CW").duty == pytest.approx(4.0 * (t_mix - 60), rel=1e-10)
    assert sim.hot_utility == pytest.approx(2.0 * 110 + 1.5 * 70 - qa - qb, rel=1e-10)
    assert sim.ok and sim.shortfalls["H1"] == 0.0
    assert any("1 stream split(s)" in n for n in sim.notes)
    # approach on the branch's own temperatures: hot out against cold in
    assert a.min_approach == pytest.approx(min(150 - a.cold_out, a.hot_out - 30), rel=1e-12)


def test_unequal_split_moves_the_duties_as_ht_says():
    for fa in (0.3, 0.5, 0.8):
        sim = simulate(two_branches(fa))
        assert sim.unit("A").duty == pytest.approx(rated(5.0, 4 * fa, 2.0, 150, 30), rel=1e-12)
        assert sim.unit("B").duty == pytest.approx(rated(2.4, 4 * (1 - fa), 1.5, 150, 50), rel=1e-12)


def test_segmented_stream_mixes_by_enthalpy():
    # H1 condenses 100 → 99 °C (40 kW/K) after cooling 150 → 100 °C (2 kW/K): the branches end in different
    # segments, so the mixed temperature is not Σ f·T; energy balances checked on the stream's own profile
    hot = Stream("H1", (Segment(150, 100, 2.0), Segment(100, 99, 40.0), Segment(99, 60, 2.0)))
    net = two_branches(0.5, hot)
    sim = simulate(net)
    a, b = sim.unit("A"), sim.unit("B")
    assert sim.iterations > 1
    # each branch: its duty is half the stream's enthalpy change over its own range
    assert a.duty == pytest.approx(0.5 * heat_between(hot, a.hot_in, a.hot_out), rel=1e-8)
    assert b.duty == pytest.approx(0.5 * heat_between(hot, b.hot_in, b.hot_out), rel=1e-8)
    # the mixer: the stream gives up, from 150 °C to the mixed temperature, what the two branches gave
    t_mix = sim.temperatures["H1"][1]
    assert heat_between(hot, 150.0, t_mix) == pytest.approx(a.duty + b.duty, rel=1e-8)
    assert sim.unit("CW").duty == pytest.approx(heat_between(hot, t_mix, 60.0), rel=1e-8)


def test_stated_duties_walk_through_a_split_only_with_every_branch():
    s = StreamTable([Stream.simple("H1", 150, 60, 4.0, film_coefficient=1.0),
                     Stream.simple("C1", 30, 140, 2.0, film_coefficient=1.0),
                     Stream.simple("C2", 50, 120, 1.5, film_coefficient=1.0)])
    units = [ExistingUnit("A", "H1", "C1", duty=120.0, hot_position=1, cold_position=1, hot_fraction=0.5),
             ExistingUnit("B", "H1", "C2", duty=60.0, hot_position=1, cold_position=1, hot_fraction=0.5),
             ExistingUnit("CW", "H1", "water", hot_position=2),
             ExistingUnit("S1", "steam", "C1", cold_position=2), ExistingUnit("S2", "steam", "C2", cold_position=2)]
    net = ExistingNetwork(s, units, [STEAM, WATER])
    # branch A: 2 kW/K gives 120 kW from 150 °C → 90 °C against C1 30 → 90 °C; its area by ε-NTU from those
    a = net.unit("A")
    assert a.area_from_duty
    eps = 120.0 / (2.0 * (150 - 30))
    ntu = ht.NTU_from_effectiveness(eps, 1.0, "counterflow")
    assert a.area == pytest.approx(ntu * 2.0 / 0.5, rel=1e-9)
    sim = simulate(net)
    assert sim.unit("A").duty == pytest.approx(120.0, rel=1e-9)
    assert sim.unit("B").duty == pytest.approx(60.0, rel=1e-9)
    assert sim.temperatures["H1"][1] == pytest.approx(150 - 180 / 4.0, rel=1e-12)
    # a branch without a stated duty stops the walk: after the split the temperatures are unknown
    units[1] = ExistingUnit("B", "H1", "C2", area=2.0, u=0.5, hot_position=1, cold_position=1, hot_fraction=0.5)
    assert ExistingNetwork(s, units, [STEAM, WATER]).unit("A").area_from_duty   # its inlets are the supplies
    units[2] = ExistingUnit("E3", "H1", "C2", duty=30.0, hot_position=2, cold_position=2)
    units[4] = ExistingUnit("S2", "steam", "C2", cold_position=3)
    with pytest.raises(InputError, match=r"unit 'E3' gives a duty but no area, and its temperatures are not known "
                                         r"without simulating the network \(a unit without a stated duty, or a split "
                                         r"with such a branch"):
        ExistingNetwork(s, units, [STEAM, WATER])
    # a branch may state more than its share of the stream (it may pass the stream's target, 60 °C, before it
    # mixes back: 150 - 200 / (0.5 * 4) = 50 °C), never more than the whole stream gives (4 * 90 = 360 kW)
    units = [ExistingUnit("A", "H1", "C1", duty=200.0, hot_position=1, cold_position=1, hot_fraction=0.5),
             ExistingUnit("B", "H1", "C2", area=2.0, hot_position=1, cold_position=1, hot_fraction=0.5)]
    ExistingNetwork(s, units, [STEAM, WATER])
    units[0] = replace(units[0], duty=400.0)
    with pytest.raises(InputError, match=r"stated duty 400 kW is more than stream 'H1' gives between its supply and "
                                         r"target temperatures \(360 kW\)"):
        ExistingNetwork(s, units, [STEAM, WATER])


def test_cooler_on_a_branch_of_the_last_split_brings_the_mixed_stream_to_target():
    s = StreamTable([Stream.simple("H1", 150, 60, 4.0), Stream.simple("C1", 30, 140, 2.0)])
    units = [ExistingUnit("A", "H1", "C1", area=10.0, u=0.5, hot_position=1, hot_fraction=0.6),
             ExistingUnit("CW", "H1", "water", hot_position=1, hot_fraction=0.4),
             ExistingUnit("S1", "steam", "C1")]
    net = ExistingNetwork(s, units, [STEAM, WATER])
    assert net.unit("CW").mode is OperatingMode.TRIM
    sim = simulate(net)
    qa = rated(5.0, 2.4, 2.0, 150, 30)
    t_a = 150 - qa / 2.4
    # mixer: 0.6·t_a + 0.4·t_cw = 60 °C, so the cooler's branch leaves at (60 − 0.6·t_a)/0.4
    t_cw = (60 - 0.6 * t_a) / 0.4
    cw = sim.unit("CW")
    assert cw.hot_out == pytest.approx(t_cw, rel=1e-12)
    assert cw.duty == pytest.approx(1.6 * (150 - t_cw), rel=1e-10)
    assert sim.temperatures["H1"][-1] == pytest.approx(60.0, rel=1e-12)
    assert sim.unit("A").duty + cw.duty == pytest.approx(360.0, rel=1e-12)
    # the grid and the design's checks see the split too
    drawn = sim.to_network()
    assert {e.name: e.hot_fraction for e in drawn.exchangers} == {"A": 0.6}
    assert drawn.coolers[0].hot_fraction == pytest.approx(0.4)
    assert stream_positions(drawn)["A"][0] == stream_positions(drawn)["CW"][0] == 1


def test_cross_pinch_heat_of_a_branch_is_its_share():
    # H1 to 40 °C and C1 at 3 kW/K make a pinch at ΔTmin 10 K; Q_H − Q_H,min equals the heat the units move across it when
    # every stream reaches its target (Tjoe & Linnhoff 1986), each branch counted with its share of H1
    streams = StreamTable([Stream.simple("H1", 150, 40, 4.0), Stream.simple("C1", 30, 140, 3.0),
                           Stream.simple("C2", 50, 120, 1.5)])
    net = two_branches()
    sim = simulate(ExistingNetwork(streams, net.units, net.utilities), 10.0)
    x = cross_pinch(sim)
    assert x.pinches and sim.ok
    assert x.total() == pytest.approx(x.excess, rel=1e-9, abs=1e-9)


# --------------------------------------------------------------------------------------------------
# the split design of a published problem


@pytest.fixture(scope="module")
def split_design():
    data, streams = load_reference("synthesis_yee_grossmann_2h2c")
    utilities = reference_utilities(data)
    design = design_mer(streams, 5.0, utilities)
    assert any(e.hot_fraction < 1 or e.cold_fraction < 1 for e in design.exchangers)
    return streams, utilities, design


def test_design_with_splits_simulates_to_its_own_duties_and_temperatures(split_design):
    streams, utilities, design = split_design
    net = ExistingNetwork.from_network(design, streams, utilities)
    assert net.has_splits
    sim = simulate(net, 5.0)
    assert sim.ok, sim.problems
    designed = [*design.exchangers, *design.heaters, *design.coolers]
    assert len(designed) == len(sim.units)
    for x, st in zip(designed, sim.units):
        # the design sized by LMTD, the simulation rates by ε-NTU: the same duties and terminal temperatures
        assert st.duty == pytest.approx(x.duty, rel=1e-6)
        hot_in, hot_out, cold_in, cold_out = x.terminals
        for got, want in ((st.hot_in, hot_in), (st.hot_out, hot_out), (st.cold_in, cold_in), (st.cold_out, cold_out)):
            assert got == pytest.approx(want, rel=1e-6, abs=1e-6)
        assert st.hot_fraction == pytest.approx(getattr(x, "hot_fraction", 1.0), rel=1e-9)
        assert st.cold_fraction == pytest.approx(getattr(x, "cold_fraction", 1.0), rel=1e-9)
    # the targets of the problem at 5 K with the design's utilities
    assert sim.hot_utility == pytest.approx(design.hot_utility, rel=1e-6)
    assert sim.cold_utility == pytest.approx(design.cold_utility, rel=1e-6)


def test_option_search_on_a_network_with_splits():
    net = two_branches()
    r = retrofit_options(net, 10.0, sizes=(0.5, 1.0), max_groups=4, default_film_coefficient=1.0)
    assert any("never inside it (between its branches)" in n for n in r.notes)
    assert r.options
    base = {"A": rated(5.0, 2.4, 2.0, 150, 30), "B": rated(2.4, 1.6, 1.5, 150, 50)}
    checked = 0
    for o in r.options:
        after = apply_changes(net, o.changes)
        sim = simulate(after, 10.0)
        assert sim.ok, sim.problems                       # every option works as simulated
        assert sim.hot_utility == pytest.approx(r.simulation.hot_utility - o.saving, rel=1e-9, abs=1e-9)
        # the split is kept: A and B still share the stream at one position; new units go before or after it
        assert [sorted(u.name for u in g) for g in after.stages("H1") if len(g) > 1] == [["A", "B"]]
        if all(c.kind is ChangeKind.ADDED_AREA and c.unit in base for c in o.changes):
            # more area on branch units only: each branch rated again by ht on its own f·CP (its inlets stay
            # the supplies); the trim heaters of C1 and C2 save exactly the extra duty
            added = {c.unit: c.area for c in o.changes}
            qa = rated(0.5 * (10.0 + added.get("A", 0.0)), 2.4, 2.0, 150, 30)
            qb = rated(0.4 * (6.0 + added.get("B", 0.0)), 1.6, 1.5, 150, 50)
            assert o.saving == pytest.approx(qa + qb - base["A"] - base["B"], rel=1e-9)
            checked += 1
    assert checked
    kinds = {c.kind for o in r.options for c in o.changes}
    assert ChangeKind.ADDED_AREA in kinds


def test_option_search_on_the_split_design_runs(split_design):
    # the MER design at 5 K sits on its targets: the search runs on its splits and finds nothing to save
    streams, utilities, design = split_design
    net = ExistingNetwork.from_network(design, streams, utilities)
    r = retrofit_options(net, 5.0, sizes=(0.5, 1.0), max_groups=4)
    assert r.simulation.ok and r.simulation.hot_utility == pytest.approx(design.hot_utility, rel=1e-6)
    assert any("never inside it (between its branches)" in n for n in r.notes)
    for o in r.options:
        assert simulate(apply_changes(net, o.changes), 5.0).ok


def test_moves_inside_a_split_are_refused_by_apply_changes():
    from heatloom.retrofit.options import Change

    net = two_branches()
    with pytest.raises(InputError, match=r"unit 'A' sits on a branch of a split of stream 'H1' and cannot be moved"):
        apply_changes(net, [Change(ChangeKind.RESEQUENCE, "A", stream="H1", before="CW")])
    # a new exchanger named before a branch goes before the whole split
    new = apply_changes(net, [Change(ChangeKind.NEW_EXCHANGER, "N-1", 1.0, hot="H1", cold="C1", hot_before="B",
                                     cold_before="S1", u=0.5)])
    assert [[u.name for u in g] for g in new.stages("H1")] == [["N-1"], ["A", "B"], ["CW"]]
    assert simulate(new).ok
