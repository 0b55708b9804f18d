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
    assert net.unit("B2").hot_branch == "b" and net.unit("B2").hot_branch_order == 2
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
     "hot_branch_order", r"give every unit of the branch its place 1 to 2"),
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
    assert stream_branches(design)["B2"] == ((2, 2), None)
    frame = design.to_frame()
    path = OutputDirectory(tmp_path / "out").csv("design_units.csv", frame)
    again = simulate(ExistingNetwork.from_table(STREAMS, read_network(path), [STEAM, WATER]))
    for u in sim.units:   # areas are written to 0.001 m²
        assert again.unit(u.name).duty == pytest.approx(u.duty, rel=1e-4)


def test_a_nested_split_of_a_design_is_refused_naming_the_design_unit():
    from heatloom.network.structure import Cooler, Exchanger, Network

    # invented design: H1 (150 → 60 °C, 4 kW/K) splits three ways at 150 °C; two branches (0.3 each) end at
    # 100 °C and mix, then X4 cools their 0.6 of the flow to 80 °C, where the third branch (0.4) joins: a split
    # inside a split, which the units table cannot write
    s = StreamTable([Stream.simple("H1", 150, 60, 4.0), Stream.simple("C1", 30, 90, 1.0),
                     Stream.simple("C2", 40, 100, 1.0), Stream.simple("C3", 20, 110, 2.0)])
    x1 = Exchanger("H1", "C1", 60.0, 150, 100, 30, 90, hot_fraction=0.3, stage=0, area=2.0, u=0.5, name="X1")
    x2 = Exchanger("H1", "C2", 60.0, 150, 100, 40, 100, hot_fraction=0.3, stage=1, area=2.0, u=0.5, name="X2")
    x3 = Exchanger("H1", "C3", 112.0, 150, 80, 20, 76, hot_fraction=0.4, stage=2, area=2.0, u=0.5, name="X3")
    x4 = Exchanger("H1", "C3", 48.0, 100, 80, 76, 100, hot_fraction=0.6, stage=3, area=2.0, u=0.5, name="X4")
    design = Network((x1, x2, x3, x4), (), (Cooler("H1", "water", 80.0, 80, 60, 20, 30, area=1.0, u=1.0),),
                     10.0)
    with pytest.raises(InputError, match=r"takes 0\.3 of stream 'H1' \(a split branch\).*bypass.*is the design's X1"):
        ExistingNetwork.from_network(design, s, [STEAM, WATER])
