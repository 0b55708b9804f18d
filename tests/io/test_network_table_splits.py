"""Stream splits in the network table: written by ``design``, read back, resolved and simulated; bad splits
refused with file, row and column (issue 14, item 16).

The design with splits is heatloom's MER network for the two-hot / two-cold problem of Yee & Grossmann
(1990) as given by Roetzel, Luo & Chen (2020), *Design and Operation of Heat Exchangers and their
Networks*, ch. 6, Table 6.16 (tests/data/references/synthesis_yee_grossmann_2h2c.json), at ΔTmin 5 K, where
it splits streams.  The design sizes its units by LMTD, the simulation rates them by ε-NTU: the duties and
temperatures must agree to what the table's written precision allows (areas to 0.001 m², fractions to 1e-6).
The small tables written inline are invented for the tests (checks of reading and refusing).
"""

from __future__ import annotations

import pytest
from refdata import load_reference, reference_utilities

from heatloom.errors import InputError
from heatloom.io.export import OutputDirectory
from heatloom.io.network_table import read_network
from heatloom.model import Stream, StreamTable, Utility
from heatloom.network import design_mer
from heatloom.network.structure import stream_positions
from heatloom.retrofit.existing import ExistingNetwork
from heatloom.retrofit.simulate import simulate

STREAMS = StreamTable([Stream.simple("H1", 150, 60, 4.0, film_coefficient=1.0),
                       Stream.simple("C1", 30, 140, 2.0, film_coefficient=1.0),
                       Stream.simple("C2", 50, 120, 1.5, film_coefficient=1.0)])
UTILITIES = [Utility("steam", 200, 199, 100.0, film_coefficient=4.0),
             Utility("water", 20, 30, 10.0, film_coefficient=1.5)]
HEADER = "unit,hot,cold,area [m2],duty [kW],hot_order,cold_order,hot fraction,cold fraction\n"
SPLIT = ("A,H1,C1,10,,1,1,0.6,\n"
         "B,H1,C2,6,,1,1,0.4,\n"
         "CW,H1,water,,,2,,,\n"
         "S1,steam,C1,,,,2,,\n"
         "S2,steam,C2,,,,2,,\n")


def read(tmp_path, body: str, header: str = HEADER) -> ExistingNetwork:
    p = tmp_path / "network.csv"
    p.write_text(header + body, encoding="utf-8")
    return ExistingNetwork.from_table(STREAMS, read_network(p), UTILITIES)


def test_a_split_is_one_position_shared_by_its_branches(tmp_path):
    net = read(tmp_path, SPLIT)
    assert [[u.name for u in g] for g in net.stages("H1")] == [["A", "B"], ["CW"]]
    assert (net.unit("A").hot_fraction, net.unit("B").hot_fraction) == (0.6, 0.4)
    assert net.unit("A").cold_fraction == 1.0 and net.has_splits
    frame = net.to_frame()
    assert frame["hot fraction [-]"].tolist() == [0.6, 0.4, 1.0, 1.0, 1.0]
    # rounded fractions (sum 0.9995, within 1e-3) are scaled to add up to 1, and the notes say so
    net = read(tmp_path, SPLIT.replace("0.4,", "0.3995,"))
    assert net.unit("A").hot_fraction + net.unit("B").hot_fraction == pytest.approx(1.0, abs=1e-15)
    assert any("add up to 0.9995; scaled to add up to 1" in n for n in net.notes)


@pytest.mark.parametrize(("body", "pattern"), [
    # fractions of one split that do not add up to 1
    (SPLIT.replace("0.4,", "0.3,"),
     r"row 3, column 'hot fraction': the split of stream 'H1' at position 1 \('A' 0\.6, 'B' 0\.3\) has fractions "
     r"adding up to 0\.9, not 1"),
    # a repeated position without fractions
    (SPLIT.replace("0.6,", ",").replace("0.4,", ","),
     r"row 3, column 'hot_order': units 'A' and 'B' both take position 1 on stream 'H1'; positions along a stream "
     r"must differ, except for the units on the parallel branches of one stream split"),
    # one branch with a fraction, the other without
    (SPLIT.replace("0.4,", ","),
     r"row 3, column 'hot_order': units 'A' and 'B' both take position 1 on stream 'H1'"),
    # a branch alone at its position: a bypass or units in series on a branch, not representable
    (SPLIT.replace("B,H1,C2,6,,1,1,0.4,", "B,H1,C2,6,,2,1,,").replace("CW,H1,water,,,2", "CW,H1,water,,,3"),
     r"row 2, column 'hot fraction': unit 'A' takes 0\.6 of stream 'H1' \(a split branch\) but is the only unit at "
     r"position 1"),
    # a fraction with no positions on that stream
    ("A,H1,C1,10,,,,0.6,\nCW,H1,water,,,,,,\n",
     r"row 2, column 'hot fraction': unit 'A' takes 0\.6 of stream 'H1' \(a split branch\) but no hot_order is "
     r"given"),
    # a fraction on a utility side
    (SPLIT.replace("S2,steam,C2,,,,2,,", "S2,steam,C2,,,,2,0.5,"),
     r"row 6, column 'hot fraction': unit 'S2': hot fraction 0\.5 is given for utility 'steam'"),
    # fractions outside (0, 1]
    (SPLIT.replace("0.4,", "1.4,"), r"row 3, column 'hot fraction': hot fraction must be in \(0, 1\]"),
    (SPLIT.replace("0.4,", "0,"), r"row 3, column 'hot fraction': hot fraction must be in \(0, 1\]"),
    # two heaters/coolers in the last split of a stream: which one takes the rest is not defined
    (SPLIT.replace("A,H1,C1,10,,1,1,0.6,", "A,H1,C1,10,,1,1,,").replace("B,H1,C2,6,,1,1,0.4,", "B,H1,C2,6,,2,1,,")
     .replace("CW,H1,water,,,2,,,", "CW,H1,water,,,3,,0.5,\nCW2,H1,water,,,3,,0.5,"),
     r"row 5, column 'hot_order': the last split of stream 'H1' has 2 heaters/coolers \('CW', 'CW2'\)"),
])
def test_bad_splits_are_refused_located(tmp_path, body, pattern):
    with pytest.raises(InputError, match=r"network\.csv, " + pattern):
        read(tmp_path, body)


@pytest.fixture(scope="module")
def split_design():
    data, streams = load_reference("synthesis_yee_grossmann_2h2c")
    utilities = reference_utilities(data)
    return streams, utilities, design_mer(streams, 5.0, utilities)


def test_stream_positions_give_a_split_one_position(split_design):
    design = split_design[2]
    positions = stream_positions(design)
    units = [*design.exchangers, *design.heaters, *design.coolers]
    split = [u for u in units if getattr(u, "hot_fraction", 1.0) < 1 or getattr(u, "cold_fraction", 1.0) < 1]
    assert split
    for side, k in (("hot", 0), ("cold", 1)):
        groups: dict[tuple, list] = {}
        for u in units:
            if getattr(u, f"{side}_fraction", 1.0) < 1:
                groups.setdefault((getattr(u, side), positions[u.name][k]), []).append(u)
        for branches in groups.values():   # each split: several branches whose fractions add up to 1
            assert len(branches) > 1
            assert sum(getattr(u, f"{side}_fraction") for u in branches) == pytest.approx(1.0, abs=1e-9)


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
def test_design_with_splits_reads_back_and_simulates_to_the_design(tmp_path, split_design, kind):
    streams, utilities, design = split_design
    frame = design.to_frame()
    assert ((frame["hot fraction [-]"] < 1) | (frame["cold fraction [-]"] < 1)).any()
    out = OutputDirectory(tmp_path / "design")
    path = out.csv("design_units.csv", frame) if kind == "csv" else out.workbook("design.xlsx", {"units": frame})
    notes: list[str] = []
    table = read_network(path, notes=notes, sheet=None if kind == "csv" else "units")
    assert notes == []
    net = ExistingNetwork.from_table(streams, table, utilities)
    assert net.has_splits
    sim = simulate(net, 5.0)
    assert sim.ok, sim.problems
    for row in frame.itertuples(index=False):
        st = sim.unit(row.unit)
        # design by LMTD, simulation by ε-NTU at the written areas (to 0.001 m²): same duties and temperatures
        assert st.duty == pytest.approx(row[4], rel=1e-4)
        assert (st.hot_in, st.hot_out, st.cold_in, st.cold_out) == pytest.approx(tuple(row[15:19]), abs=2e-3)
        assert (st.hot_fraction, st.cold_fraction) == pytest.approx(tuple(row[19:21]), abs=1e-6)
    assert sim.hot_utility == pytest.approx(design.hot_utility, rel=1e-4)
    assert sim.cold_utility == pytest.approx(design.cold_utility, rel=1e-4)
