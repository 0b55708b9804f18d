"""Split branches that carry several units in series: reading, simulation, the design's units table.

Sources: every exchanger is checked against the reference library ``ht`` (Caleb Bell, PyPI,
``ht.hx.effectiveness_from_NTU``, the counter-current ε-NTU relation of Incropera, DeWitt, Bergman & Lavine
(2007), *Fundamentals of Heat and Mass Transfer*, 6th ed., Table 11.3) on the branch's own heat capacity flow
f·CP, unit after unit along the branch; the mixed outlet by the energy balance of an adiabatic mixer (common
practice: enthalpy in = enthalpy out), computed here by hand.  The networks are invented for the tests.
"""

from __future__ import annotations

import ht
import pytest

from heatloom.errors import InputError
from heatloom.io.export import OutputDirectory
from heatloom.io.network_table import read_network
from heatloom.model import Stream, StreamTable, Utility, UtilityKind
from heatloom.model.existing import ExistingUnit
from heatloom.network.streamorder import stream_branches, stream_order
from heatloom.retrofit.existing import ExistingNetwork
from heatloom.retrofit.simulate import simulate

STEAM = Utility("steam", 200, 199, 100.0, UtilityKind.HOT)
WATER = Utility("water", 20, 30, 10.0, UtilityKind.COLD)
STREAMS = StreamTable([Stream.simple("H1", 180, 60, 4.0), Stream.simple("C1", 30, 150, 2.0),
                       Stream.simple("C2", 50, 160, 1.5), Stream.simple("C3", 20, 100, 1.0)])


def rated(ua, c_hot, c_cold, t_hot, t_cold):
    """Duty of a counter-current exchanger by ht's ε-NTU (Incropera et al. 2007, Table 11.3) [kW]."""
    cmin, cmax = min(c_hot, c_cold), max(c_hot, c_cold)
    eps = ht.effectiveness_from_NTU(ua / cmin, cmin / cmax, "counterflow")
    return eps * cmin * (t_hot - t_cold)


def chain_units(order_b=(None, None), label_b=("b", "b"), rows=("A", "B1", "B2")):
    """H1 split at its supply end: branch a (0.45) through A to C1; branch b (0.55) through B1 to C2, then
    B2 to C3, in series; a trim cooler after the mixer; trim heaters on C1 and C2 (C3 reaches its target
    only through B2 if B2 is large enough, so it gets a trim heater too)."""
    units = {"A": ExistingUnit("A", "H1", "C1", area=8.0, u=0.5, hot_position=1, cold_position=1, hot_fraction=0.45),
             "B1": ExistingUnit("B1", "H1", "C2", area=5.0, u=0.4, hot_position=1, cold_position=1,
                                hot_fraction=0.55, hot_branch=label_b[0], hot_branch_order=order_b[0]),
             "B2": ExistingUnit("B2", "H1", "C3", area=3.0, u=0.4, hot_position=1, cold_position=1,
                                hot_fraction=0.55, hot_branch=label_b[1], hot_branch_order=order_b[1])}
    return [units[r] for r in rows] + [
        ExistingUnit("CW", "H1", "water", hot_position=2), ExistingUnit("S1", "steam", "C1", cold_position=2),
        ExistingUnit("S2", "steam", "C2", cold_position=2), ExistingUnit("S3", "steam", "C3", cold_position=2)]


def test_a_branch_with_two_units_in_series_by_hand_with_ht():
    sim = simulate(ExistingNetwork(STREAMS, chain_units(), [STEAM, WATER]))
    # branch a: C_h = 0.45·4 = 1.8 kW/K against C1 (2 kW/K), both entering at their supply temperatures
    qa = rated(0.5 * 8.0, 1.8, 2.0, 180, 30)
    # branch b: C_h = 0.55·4 = 2.2 kW/K; B1 against C2 from 180 °C, B2 against C3 from B1's hot outlet
    qb1 = rated(0.4 * 5.0, 2.2, 1.5, 180, 50)
    t_b1 = 180 - qb1 / 2.2
    qb2 = rated(0.4 * 3.0, 2.2, 1.0, t_b1, 20)
    t_b2 = t_b1 - qb2 / 2.2
    assert sim.unit("A").duty == pytest.approx(qa, rel=1e-9)
    assert sim.unit("B1").duty == pytest.approx(qb1, rel=1e-9)
    assert sim.unit("B2").duty == pytest.approx(qb2, rel=1e-9)
    assert sim.unit("B2").hot_in == pytest.approx(t_b1, rel=1e-9)
    # adiabatic mixer, constant CP: the mixed temperature is the flow-weighted mean of the branch outlets
    t_mix = 0.45 * (180 - qa / 1.8) + 0.55 * t_b2
    assert sim.temperatures["H1"][1] == pytest.approx(t_mix, rel=1e-9)
    assert sim.unit("CW").duty == pytest.approx(4.0 * (t_mix - 60), rel=1e-9)
    assert sim.ok


def test_branch_order_given_overrides_the_row_order():
    listed = simulate(ExistingNetwork(STREAMS, chain_units(), [STEAM, WATER]))
    reversed_rows = chain_units(order_b=(1, 2), rows=("B2", "A", "B1"))
    sim = simulate(ExistingNetwork(STREAMS, reversed_rows, [STEAM, WATER]))
    for name in ("A", "B1", "B2", "CW"):
        assert sim.unit(name).duty == pytest.approx(listed.unit(name).duty, rel=1e-12)
    # without the order the rows decide: B2 first on the branch now
    other = simulate(ExistingNetwork(STREAMS, chain_units(rows=("B2", "A", "B1")), [STEAM, WATER]))
    assert other.unit("B2").hot_in == pytest.approx(180.0)


def _write(tmp_path, text):
    f = tmp_path / "network.csv"
    f.write_text(text)
    return f


HEADER = "unit,hot,cold,area,U,hot_order,cold_order,hot fraction,hot_branch,hot_branch_order\n"
TRIMS = "CW,H1,water,,,2,,,,\nS1,steam,C1,,,,2,,,\nS2,steam,C2,,,,2,,,\nS3,steam,C3,,,,2,,,\n"


def _from_csv(path):
    return ExistingNetwork.from_table(STREAMS, read_network(path), [STEAM, WATER])


def test_branch_columns_read_from_a_table(tmp_path):
    f = _write(tmp_path, HEADER + "B2,H1,C3,3,0.4,1,1,0.55,b,2\nA,H1,C1,8,0.5,1,1,0.45,,\n"
               "B1,H1,C2,5,0.4,1,1,0.55,b,1\n" + TRIMS)
    net = _from_csv(f)
    assert net.unit("B2").hot_branch == "b" and net.unit("B2").hot_branch_order == (2,)
    listed = simulate(ExistingNetwork(STREAMS, chain_units(), [STEAM, WATER]))
    sim = simulate(net)
    for name in ("A", "B1", "B2", "CW"):
        assert sim.unit(name).duty == pytest.approx(listed.unit(name).duty, rel=1e-9)


@pytest.mark.parametrize("rows, row, column, message", [
    # the two units of branch b carry different flows
    ("A,H1,C1,8,0.5,1,1,0.45,,\nB1,H1,C2,5,0.4,1,1,0.55,b,1\nB2,H1,C3,3,0.4,1,1,0.5,b,2\n", 4, "hot fraction",
     r"are on branch 'b' .* give hot fractions 0\.55 and 0\.5"),
    # places on the branch given for one unit only
    ("A,H1,C1,8,0.5,1,1,0.45,,\nB1,H1,C2,5,0.4,1,1,0.55,b,1\nB2,H1,C3,3,0.4,1,1,0.55,b,\n", 4,
     "hot_branch_order", r"give every item of the branch \(a unit, or a split inside it\) its place 1 to 2"),
    # a place without a label
    ("A,H1,C1,8,0.5,1,1,0.45,,1\nB1,H1,C2,5,0.4,1,1,0.55,b,1\nB2,H1,C3,3,0.4,1,1,0.55,b,2\n", 2,
     "hot_branch_order", r"gives hot_branch_order 1 .* but no hot_branch"),
    # a label on a unit that takes the whole stream
    ("A,H1,C1,8,0.5,1,1,,a,\nB1,H1,C2,5,0.4,2,1,,,\nB2,H1,C3,3,0.4,3,1,,,\n", 2, "hot_branch",
     r"gives hot_branch 'a' .* takes the whole stream"),
    # one labelled branch alone: the rest of the stream would bypass it
    ("A,H1,C1,8,0.5,2,1,,,\nB1,H1,C2,5,0.4,1,1,0.55,b,1\nB2,H1,C3,3,0.4,1,1,0.55,b,2\n", 4, "hot fraction",
     r"its branch is the only one at position 1.*bypass"),
])
def test_branch_problems_are_located(tmp_path, rows, row, column, message):
    trims = TRIMS.replace("CW,H1,water,,,2", "CW,H1,water,,,3") if "A,H1,C1,8,0.5,2" in rows else TRIMS
    f = _write(tmp_path, HEADER + rows + trims)
    before = f.read_bytes()
    with pytest.raises(InputError, match=message) as e:
        _from_csv(f)
    assert e.value.row == row and e.value.column == column and str(f) in str(e.value)
    assert f.read_bytes() == before


def test_design_table_writes_chains_that_read_back(tmp_path):
    # the simulated network as a design (Simulation.to_network), written as a units table and read back:
    # the writer finds the branch of B1 → B2 from the temperatures alone
    sim = simulate(ExistingNetwork(STREAMS, chain_units(), [STEAM, WATER]))
    design = sim.to_network()
    assert stream_order(design)[("hot", "H1")] == [[["A"], ["B1", "B2"]], [["CW"]]]
    assert stream_branches(design)["B2"] == (((2,), (2,)), None)
    frame = design.to_frame()
    path = OutputDirectory(tmp_path / "out").csv("design_units.csv", frame)
    again = simulate(ExistingNetwork.from_table(STREAMS, read_network(path), [STEAM, WATER]))
    for u in sim.units:   # areas are written to 0.001 m²
        assert again.unit(u.name).duty == pytest.approx(u.duty, rel=1e-4)


NESTED = StreamTable([Stream.simple("H1", 180, 60, 4.0), Stream.simple("C1", 30, 150, 2.0),
                      Stream.simple("C2", 50, 160, 1.5), Stream.simple("C3", 20, 100, 1.0),
                      Stream.simple("C4", 40, 170, 1.2)])


def nested_units():
    """H1 split at its supply end into C (0.4, to C4) and a branch b (0.6) that splits again into A (0.3, to
    C1) and B (0.3, to C2); A and B mix and the branch goes on through E (to C3); then a trim cooler; trim
    heaters on every cold stream."""
    return [ExistingUnit("C", "H1", "C4", area=6.0, u=0.4, hot_position=1, cold_position=1, hot_fraction=0.4),
            ExistingUnit("A", "H1", "C1", area=4.0, u=0.5, hot_position=1, cold_position=1, hot_fraction=0.3,
                         hot_branch="b/1", hot_branch_order="1/1"),
            ExistingUnit("B", "H1", "C2", area=3.0, u=0.4, hot_position=1, cold_position=1, hot_fraction=0.3,
                         hot_branch="b/2", hot_branch_order="1/1"),
            ExistingUnit("E", "H1", "C3", area=3.0, u=0.4, hot_position=1, cold_position=1, hot_fraction=0.6,
                         hot_branch="b", hot_branch_order=2),
            ExistingUnit("CW", "H1", "water", hot_position=2)] + [
            ExistingUnit(f"S{i}", "steam", f"C{i}", cold_position=2) for i in range(1, 5)]


def test_a_split_inside_a_branch_by_hand_with_ht():
    sim = simulate(ExistingNetwork(NESTED, nested_units(), [STEAM, WATER]))
    qc = rated(0.4 * 6.0, 1.6, 1.2, 180, 40)          # branch C: 0.4·4 = 1.6 kW/K
    qa = rated(0.5 * 4.0, 1.2, 2.0, 180, 30)          # inner branches: 0.3·4 = 1.2 kW/K each
    qb = rated(0.4 * 3.0, 1.2, 1.5, 180, 50)
    t_ab = 0.5 * (180 - qa / 1.2) + 0.5 * (180 - qb / 1.2)   # inner mixer (constant CP: flow-weighted mean)
    qe = rated(0.4 * 3.0, 2.4, 1.0, t_ab, 20)          # E on the mixed 0.6·4 = 2.4 kW/K
    t_b = t_ab - qe / 2.4
    t_mix = 0.4 * (180 - qc / 1.6) + 0.6 * t_b
    for name, q in (("C", qc), ("A", qa), ("B", qb), ("E", qe)):
        assert sim.unit(name).duty == pytest.approx(q, rel=1e-9), name
    assert sim.unit("E").hot_in == pytest.approx(t_ab, rel=1e-9)
    assert sim.temperatures["H1"][1] == pytest.approx(t_mix, rel=1e-9)
    assert sim.unit("CW").duty == pytest.approx(4.0 * (t_mix - 60), rel=1e-9)
    assert sim.ok


def test_a_split_inside_a_branch_reads_back_from_the_design_table(tmp_path):
    sim = simulate(ExistingNetwork(NESTED, nested_units(), [STEAM, WATER]))
    design = sim.to_network()
    assert stream_order(design)[("hot", "H1")][0] == [["C"], [[["A"], ["B"]], "E"]]
    assert stream_branches(design)["B"] == (((2, 2), (1, 1)), None)
    frame = design.to_frame()
    assert frame.set_index("unit").loc["B", "hot_branch"] == "2/2"
    path = OutputDirectory(tmp_path / "out").csv("design_units.csv", frame)
    again = simulate(ExistingNetwork.from_table(NESTED, read_network(path), [STEAM, WATER]))
    for u in sim.units:   # areas are written to 0.001 m²
        assert again.unit(u.name).duty == pytest.approx(u.duty, rel=1e-4)


@pytest.mark.parametrize("cap", [None, 0])
def test_evaluate_writes_the_drawn_order_even_where_temperatures_cannot_tell_it(tmp_path, capsys, monkeypatch, cap):
    # `heatloom evaluate --out` writes the units table with the positions, branches and places the engineer
    # gave, in the engineer's row order.  With the mixing search cut off (cap 0) the temperatures no longer
    # give the order of H1's nested split (the design's table would write three branches and E after them,
    # which does not read back); the evaluation's table must still read back into the same network.
    import heatloom.network.streamorder as streamorder
    from heatloom.cli import main

    if cap is not None:
        monkeypatch.setattr(streamorder, "MAX_MIXING_GROUPS", cap)
    rows = ("C,H1,C4,6,0.4,1,1,0.4,,\nA,H1,C1,4,0.5,1,1,0.3,b/1,1/1\nB,H1,C2,3,0.4,1,1,0.3,b/2,1/1\n"
            "E,H1,C3,3,0.4,1,1,0.6,b,2\n")
    table = _write(tmp_path, HEADER + rows + TRIMS + "S4,steam,C4,,,,2,,,\n")
    streams = tmp_path / "streams.csv"
    streams.write_text("name,T_supply,T_target,CP,h\nH1,180,60,4,0.8\nC1,30,150,2,0.8\nC2,50,160,1.5,0.8\n"
                       "C3,20,100,1,0.8\nC4,40,170,1.2,0.8\n")   # NESTED, with film coefficients for sizing
    utilities = tmp_path / "utilities.csv"
    utilities.write_text("name,T_supply,T_target,cost,h\nsteam,200,199,100,0.8\nwater,20,30,10,0.8\n")
    code = main(["evaluate", str(streams), str(table), "--utilities", str(utilities), "--dtmin", "5",
                 "--out", str(tmp_path / "out"), "--quiet"])
    assert code == 0, capsys.readouterr().out
    written = read_network(tmp_path / "out" / "evaluation_units.csv")
    given = read_network(table)
    assert [u.name for u in written.units] == [u.name for u in given.units]   # the engineer's row order
    for a, b in zip(written.units, given.units):
        for field in ("hot_position", "cold_position", "hot_fraction", "hot_branch", "hot_branch_order"):
            assert getattr(a, field) == getattr(b, field), (a.name, field)
    # read back at the written areas: the duties of the drawn network (checked against ht above)
    drawn = simulate(ExistingNetwork(NESTED, nested_units(), [STEAM, WATER]))
    again = simulate(ExistingNetwork.from_table(NESTED, read_network(tmp_path / "out" / "evaluation_units.csv"),
                                                [STEAM, WATER]))
    for name in ("C", "A", "B", "E", "CW"):
        assert again.unit(name).duty == pytest.approx(drawn.unit(name).duty, rel=1e-4), name


def test_an_inner_split_that_does_not_carry_its_branch_is_refused(tmp_path):
    rows = ("C,H1,C4,6,0.4,1,1,0.4,,\nA,H1,C1,4,0.5,1,1,0.3,b/1,1/1\nB,H1,C2,3,0.4,1,1,0.2,b/2,1/1\n"
            "E,H1,C3,3,0.4,1,1,0.6,b,2\n")
    f = _write(tmp_path, HEADER + rows + TRIMS)
    with pytest.raises(InputError, match=r"the split inside branch 'b' .* has fractions adding up to 0\.5, but its "
                                         r"branch carries 0\.6") as e:
        ExistingNetwork.from_table(NESTED, read_network(f), [STEAM, WATER])
    assert e.value.row == 4 and e.value.column == "hot fraction"


def invented_plant(n: int, seed: int) -> StreamTable:
    """An invented problem of n streams (the recipe of benchmarks/bench_design.py: random supply and target
    temperatures between 20 and 300 °C, CP 1 to 50 kW/K, h 0.3 to 2 kW/(m²·K))."""
    import numpy as np

    rng = np.random.default_rng(seed + n)
    streams = []
    for i in range(n):
        hot = i % 2 == 0
        a, b = sorted(np.round(rng.uniform(20, 300, 2), 0))
        b = max(b, a + 10)
        ts, tt = (b, a) if hot else (a, b)
        streams.append(Stream.simple(f"{'H' if hot else 'C'}{i // 2 + 1}", float(ts), float(tt),
                                     float(np.round(rng.uniform(1, 50), 1)),
                                     film_coefficient=float(np.round(rng.uniform(0.3, 2.0), 2))))
    return StreamTable(streams)


@pytest.mark.slow
def test_a_tick_off_design_with_branches_in_series_reads_back(tmp_path):
    # an MER design of more than 12 streams (the tick-off method) whose splits carry units in series: its
    # units table, read back and rated at the design's areas, gives the design's duties (two independent
    # computations: the design sizes by LMTD, the simulation rates by ε-NTU)
    from heatloom.network.design import TICK_OFF_ABOVE, design_mer
    from heatloom.pinch.utilities import ideal_utilities

    streams = invented_plant(20, 11)
    assert len(streams) > TICK_OFF_ABOVE
    utilities = list(ideal_utilities(streams, 10.0))
    design = design_mer(streams, 10.0, utilities, time_limit=30)
    branches = [b for pair in stream_branches(design).values() for b in pair if b is not None]
    assert any(places[-1] > 1 for _, places in branches)   # some branch carries units in series
    path = OutputDirectory(tmp_path / "out").csv("design_units.csv", design.to_frame())
    sim = simulate(ExistingNetwork.from_table(streams, read_network(path), utilities), 10.0)
    assert sim.ok
    for u in (*design.exchangers, *design.heaters, *design.coolers):   # areas are written to 0.001 m²
        assert sim.unit(u.name).duty == pytest.approx(u.duty, rel=1e-4, abs=1e-2)


def test_retrofit_options_on_a_split_inside_a_branch_simulate_as_confirmed():
    # the option search on the nested split above: added area on branch units is sized on their own flow,
    # and every option, applied, simulates without problems to the saving it states
    from heatloom.retrofit import retrofit_options
    from heatloom.retrofit.options import apply_changes

    net = ExistingNetwork(NESTED, nested_units(), [STEAM, WATER])
    r = retrofit_options(net, 10.0, sizes=(0.5, 1.0), max_groups=4)
    assert r.options
    for o in r.options:
        after = simulate(apply_changes(net, o.changes), 10.0)
        assert after.ok
        assert r.simulation.hot_utility - after.hot_utility == pytest.approx(o.saving, rel=1e-6, abs=1e-6)
