"""read_network: the existing-network table, its units and orders, and every kind of bad input.

Tables written inline are invented for the tests (checks of reading and validation, not of results). Unit
conversions are checked against exact definitions (1 ft = 0.3048 m, NIST SP 811 (2008), App. B.8).
"""

from __future__ import annotations

from pathlib import Path

import openpyxl
import pytest

from heatloom.equipment.sizing import overall_coefficient
from heatloom.errors import InputError
from heatloom.io import read_streams, read_utilities
from heatloom.io.network_table import read_network
from heatloom.model import Stream, StreamTable, Utility
from heatloom.model.exchangers import ExchangerType
from heatloom.model.existing import ExistingUnit, OperatingMode, UnitRole
from heatloom.retrofit.existing import ExistingNetwork

CASE = Path(__file__).resolve().parents[2] / "case_studies" / "existing_network"

STREAMS = StreamTable([
    Stream.simple("H1", 150, 60, 2.0, film_coefficient=1.0),
    Stream.simple("H2", 170, 70, 1.5),
    Stream.simple("H3", 100, 40, 2.0, film_coefficient=1.0),
    Stream.simple("C1", 30, 120, 2.5, film_coefficient=1.0),
    Stream.simple("C2", 60, 140, 1.0),
])
UTILITIES = [Utility("steam", 180, 179, 100.0, film_coefficient=4.0),
             Utility("water", 20, 30, 10.0, film_coefficient=1.5), Utility("LP", 130, 129, 80.0)]
HEADER = "unit,hot,cold,area [m2],duty [kW],U [kW/m2K],hot_order,cold_order,type,shells\n"


def write(tmp_path, body: str, header: str = HEADER, name: str = "network.csv") -> Path:
    p = tmp_path / name
    p.write_text(header + body, encoding="utf-8")
    return p


def read(tmp_path, body: str, header: str = HEADER, **kw) -> ExistingNetwork:
    return ExistingNetwork.from_table(STREAMS, read_network(write(tmp_path, body, header), **kw), UTILITIES)


GOOD = ("E1,H1,C1,4.0,,,1,1,,\n"
        "E2,H2,C2,3.0,,0.4,1,1,,\n"
        "CW1,H1,water,2.0,,,2,,,\n"
        "ST1,steam,C1,,100,,,2,,\n")


# --------------------------------------------------------------------------------------------------
# reading


def test_reads_units_roles_orders_and_coefficients(tmp_path):
    net = read(tmp_path, GOOD)
    assert [u.name for u in net.units] == ["E1", "E2", "CW1", "ST1"]
    assert [u.role for u in net.units] == [UnitRole.EXCHANGER, UnitRole.EXCHANGER, UnitRole.COOLER, UnitRole.HEATER]
    assert [u.name for u in net.on_stream("H1")] == ["E1", "CW1"]
    assert net.unit("ST1").mode is OperatingMode.TRIM and net.unit("E1").mode is OperatingMode.RATED
    # U from film coefficients, 1/U = 1/h_hot + 1/h_cold (ht-independent: 1/(1/1 + 1/1) = 0.5)
    assert net.unit("E1").u == pytest.approx(0.5) and net.unit("E1").u_from_films
    assert net.unit("E2").u == 0.4 and not net.unit("E2").u_from_films
    assert net.unit("CW1").u == pytest.approx(float(overall_coefficient(1.0, 1.5)))
    assert net.source.endswith("network.csv")
    # the steam heater's stated duty brings C1 back from its target: 120 − 100/2.5 = 80 °C → area by LMTD
    st1 = net.unit("ST1")
    assert st1.area_from_duty and st1.area > 0


def test_default_order_is_row_order(tmp_path):
    body = "E1,H1,C1,4.0,,,,,,\nE3,H1,C2,1.0,,0.5,,,,\nCW1,H1,water,2.0,,,,,,\n"
    net = read(tmp_path, body)
    assert [u.name for u in net.on_stream("H1")] == ["E1", "E3", "CW1"]
    assert net.unit("E3").hot_position == 2 and net.unit("E3").cold_position == 1


def test_units_in_headers_and_units_row(tmp_path):
    # 1 ft² = 0.09290304 m² exactly; 1 MW = 1000 kW; 1 W/(m²·K) = 0.001 kW/(m²·K)
    header = "unit,hot,cold,area [ft2],duty (MW),U [W/m2K]\n"
    net = read(tmp_path, "E1,H1,C1,100,,500\nCW1,H1,water,,0.04,\n", header)
    assert net.unit("E1").area == pytest.approx(9.290304, rel=1e-12)
    assert net.unit("E1").u == pytest.approx(0.5)
    assert net.unit("CW1").duty == pytest.approx(40.0)
    header2 = "Heat exchanger list (invented)\nunit,hot,cold,area,duty,U\n-,-,-,m2,kW,kW/m2K\n"
    net2 = read(tmp_path, "E1,H1,C1,9.290304,,0.5\nCW1,H1,water,,40,\n", header2)
    assert net2.unit("E1").area == pytest.approx(9.290304)


def test_foreign_headers_mapped(tmp_path):
    header = "Tag,Hot side,Cold side,Surface [m2],Remarks\n"
    net = read(tmp_path, "E1,H1,C1,4,old\nCW1,H1,water,2,\n", header, columns="Tag=unit,Surface=area,Remarks=-")
    assert net.unit("E1").area == 4.0


def test_types_and_shells(tmp_path):
    body = ("E1,H1,C1,4.0,,,,,1-2,2\n"
            "E2,H2,C2,3.0,,0.4,,,co-current,\n"
            "E3,H3,C1,3.0,,,,,,3\n")
    net = read(tmp_path, body)
    assert net.unit("E1").arrangement is ExchangerType.SHELL_AND_TUBE_1_2 and net.unit("E1").shells == 2
    assert net.unit("E2").arrangement is ExchangerType.CO_CURRENT
    assert net.unit("E3").arrangement is ExchangerType.SHELL_AND_TUBE_1_2 and net.unit("E3").shells == 3


@pytest.mark.parametrize("written", ["double pipe", "Double-Pipe", "double_pipe", "hairpin", "hairpins"])
def test_double_pipe_type(tmp_path, written):
    net = read(tmp_path, f"E1,H1,C1,4.0,,,1,1,{written},\nCW1,H1,water,2.0,,,2,,,\nST1,steam,C1,,100,,,2,,\n")
    assert net.unit("E1").arrangement is ExchangerType.DOUBLE_PIPE and net.unit("E1").shells == 1
    with pytest.raises(InputError, match="2 shells given for a double_pipe unit"):
        read(tmp_path, f"E1,H1,C1,4.0,,,1,1,{written},2\nCW1,H1,water,2.0,,,2,,,\nST1,steam,C1,,100,,,2,,\n")


def test_workbook_sheet(tmp_path):
    wb = openpyxl.Workbook()
    wb.active.title = "notes"
    ws = wb.create_sheet("units")
    ws.append(["unit", "hot", "cold", "area [m2]", "U"])
    ws.append(["E1", "H1", "C1", 4.0, None])
    ws.append(["CW1", "H1", "water", 2.0, None])
    p = tmp_path / "network.xlsx"
    wb.save(p)
    net = ExistingNetwork.from_table(STREAMS, read_network(p, sheet="units"), UTILITIES)
    assert net.unit("E1").area == 4.0 and net.source.endswith("sheet 'units'")
    with pytest.raises(InputError, match=r"network\.xlsx, sheet 'units', row 3, column 'hot'"):
        ws.cell(3, 2, "H9")
        wb.save(p)
        ExistingNetwork.from_table(STREAMS, read_network(p, sheet="units"), UTILITIES)


def test_case_study_reads(tmp_path):
    streams = read_streams(CASE / "streams.csv")
    utilities = read_utilities(CASE / "utilities.csv")
    net = ExistingNetwork.from_table(streams, read_network(CASE / "network.csv"), utilities)
    assert len(net.units) == 9 and len(net.exchangers) == 3
    assert net.unit("E-102").arrangement is ExchangerType.SHELL_AND_TUBE_1_2 and net.unit("E-102").u == 0.30
    assert all(u.mode is OperatingMode.TRIM for u in net.heaters + net.coolers)
    assert net.total_area == pytest.approx(96.4)


# --------------------------------------------------------------------------------------------------
# located errors


@pytest.mark.parametrize(("body", "pattern"), [
    # unknown stream or utility
    (GOOD + "E9,H9,C1,1,,,,,,\n", r"row 6, column 'hot': unit 'E9': unknown hot side 'H9'; known streams and "
                                  r"utilities: 'H1', 'H2'"),
    (GOOD.replace("CW1,H1,water", "CW1,H1,brine"), r"row 4, column 'cold': unit 'CW1': unknown cold side 'brine'"),
    # a stream of the wrong kind on a side
    ("E1,C1,H1,4.0,,,,,,\n", r"row 2, column 'hot': unit 'E1': 'C1' is a cold stream but is named as the hot side"),
    ("E1,H1,H2,4.0,,,,,,\n", r"row 2, column 'cold': unit 'E1': 'H2' is a hot stream but is named as the cold side"),
    ("X1,water,C1,4.0,,,,,,\n", r"row 2, column 'hot': unit 'X1': 'water' is a cold utility"),
    ("X1,steam,water,4.0,,,,,,\n", r"row 2, column 'cold': unit 'X1' joins two utilities"),
    # duplicate names, empty names
    (GOOD + "E1,H3,C1,1,,,,,,\n", r"row 6, column 'unit': unit name 'E1' is used twice \(first in row 2\)"),
    (",H1,C1,4.0,,,,,,\n", r"row 2, column 'unit': empty cell: the unit name is required"),
    ("E1,H1,,4.0,,,,,,\n", r"row 2, column 'cold': empty cell: the cold side"),
    # missing data
    ("E1,H1,C1,,,,,,,\n", r"row 2, column 'area \[m2\]': unit 'E1' has neither area nor duty"),
    ("E2,H2,C2,3.0,,,,,,\n", r"row 2, column 'U \[kW/m2K\]': unit 'E2' is rated by its area but has no U and no "
                             r"film coefficient h for stream 'H2' and stream 'C2'"),
    ("E1,H1,C1,4.0,,,1,1,,\nE3,H1,C2,,20,0.5,2,1,,\n",
     r"row 3, column 'area \[m2\]': unit 'E3' gives a duty but no area, and its temperatures are not known"),
    ("CW1,H1,water,2.0,,,1,,,\nE1,H1,C1,4.0,,,2,1,,\n",
     r"row 2, column 'duty \[kW\]': cooler 'CW1' is not the last unit of stream 'H1' and has no duty; give its "
     r"duty \(its load in operation\): utility 'water' changes temperature by 10 K"),
    # numbers
    ("E1,H1,C1,big,,,,,,\n", r"row 2, column 'area \[m2\]': area must be a number, got 'big'"),
    ("E1,H1,C1,-3,,,,,,\n", r"row 2, column 'area \[m2\]': area must be > 0 m², got -3"),
    ("E1,H1,C1,4,,0,,,,\n", r"row 2, column 'U \[kW/m2K\]': U must be > 0 kW/\(m²·K\), got 0"),
    ("E1,H1,C1,4,,,,,plate,\n", r"row 2, column 'type': unknown type 'plate'; allowed: counter-current"),
    ("E1,H1,C1,4,,,,,1-2,1.5\n", r"row 2, column 'shells': shells must be a whole number >= 1, got 1.5"),
    ("E1,H1,C1,4,,,,,counter-current,2\n",
     r"row 2, column 'shells': unit 'E1': 2 shells given for a counter_current unit"),
    ("E1,H1,C1,4,,,0,,,\n", r"row 2, column 'hot_order': hot_order \(position along the hot stream from its supply "
                            r"end\) must be a whole number >= 1, got 0"),
    # positions that repeat, skip, are partly given or sit on a utility
    ("E1,H1,C1,4,,,1,1,,\nE3,H1,C2,1,,0.5,1,1,,\n",
     r"row 3, column 'hot_order': units 'E1' and 'E3' both take position 1 on stream 'H1'"),
    ("E1,H1,C1,4,,,1,1,,\nE3,H1,C2,1,,0.5,3,1,,\n",
     r"row 3, column 'hot_order': unit 'E3': position 3 on stream 'H1', which has 2 unit\(s\); positions must run "
     r"1 to 2 without gaps \(missing: 2\)"),
    ("E1,H1,C1,4,,,1,1,,\nE3,H1,C2,1,,0.5,,1,,\n",
     r"row 3, column 'hot_order': unit 'E3' has no hot_order on stream 'H1' while other units"),
    ("E1,H1,C1,4,,,1,1,,\nST1,steam,C1,2,,,1,2,,\n",
     r"row 3, column 'hot_order': unit 'ST1': hot_order 1 is given for utility 'steam'"),
    # stated duties that a stream or the driving force cannot deliver
    ("E1,H1,C1,,200,,,,,\n", r"row 2, column 'duty \[kW\]': unit 'E1': stated duty 200 kW is more than stream 'H1' "
                             r"gives between its supply and target temperatures \(180 kW\)"),
    ("E5,H3,C2,,50,0.5,,,,\n", r"row 2, column 'duty \[kW\]': unit 'E5' cannot do its stated duty 50 kW: the "
                               r"driving force allows less"),
    # co-current: ε at most 1/(1 + C_r) = 1/1.8 = 0.5556 (Incropera et al. 2007, Table 11.3); 140 kW needs
    # ε = 140/(2·120) = 0.583
    ("E1,H1,C1,,140,,,,co-current,\n",
     r"row 2, column 'duty \[kW\]': unit 'E1' cannot do its stated duty 140 kW: .*co_current limit is 0\.5556"),
    ("ST1,LP,C2,,80,,,,,\n", r"row 2, column 'duty \[kW\]': heater 'ST1' cannot do its stated duty 80 kW: utility "
                             r"'LP' \(130 → 129 °C\) has no driving force against stream 'C2'"),
    ("E1,H1,C1,,100,,1,1,,\nCW1,H1,water,,50,,2,,,\n",
     r"row 3, column 'duty \[kW\]': unit 'CW1': the stated duties of the units of stream 'H1' add up to 150 kW but "
     r"the stream gives 180 kW"),
    ("E1,H1,C1,,170,,1,1,,\nE3,H1,C2,,30,0.5,2,1,,\nCW1,H1,water,2,,,3,,,\n",
     r"row 3, column 'duty \[kW\]': unit 'E3': the stated duties of the units of stream 'H1' up to this one add up "
     r"to 200 kW, more than the 180 kW"),
])
def test_located_errors(tmp_path, body, pattern):
    with pytest.raises(InputError, match=r"network\.csv, " + pattern):
        read(tmp_path, body)


def test_missing_file_and_columns(tmp_path):
    with pytest.raises(InputError, match=r"nothing\.csv: file not found"):
        read_network(tmp_path / "nothing.csv")
    with pytest.raises(InputError, match=r"row 1: missing required column\(s\) cold; columns found: unit, hot, area"):
        read(tmp_path, "E1,H1,4\n", "unit,hot,area\n")
    with pytest.raises(InputError, match=r"missing required column\(s\) area or duty"):
        read(tmp_path, "E1,H1,C1,0.5\n", "unit,hot,cold,U\n")
    with pytest.raises(InputError, match=r"row 1: missing required column\(s\) unit, hot, cold, area or duty; "
                                         r"columns found: x, y, z"):
        read(tmp_path, "1,2,3\n", "x,y,z\n")
    with pytest.raises(InputError, match=r"row 1, column 'area \[m3\]': unit 'm3' measures a quantity of dimension \[length\] \*\* 3"):
        read(tmp_path, "E1,H1,C1,4\n", "unit,hot,cold,area [m3]\n")


def test_mapping_errors_and_located_foreign_header(tmp_path):
    header = "Tag,Hot side,Cold side,Surface [m2]\n"
    with pytest.raises(InputError, match="column mapping: unknown column name 'areaa' for 'Surface'"):
        read(tmp_path, "E1,H1,C1,4\n", header, columns="Surface=areaa")
    with pytest.raises(InputError, match="column mapping: there is no column 'Skin'"):
        read(tmp_path, "E1,H1,C1,4\n", header, columns="Skin=area")
    with pytest.raises(InputError, match=r"row 2, column 'Surface \[m2\]': area must be > 0"):
        read(tmp_path, "E1,H1,C1,-4\n", header, columns="Tag=unit,Surface=area")


def test_crossing_orders_are_loops_not_errors(tmp_path):
    # E1 first on H1 and first on C1, E2 second on both: a feasible network whose units meet the two streams
    # in crossing orders (a loop); no single left-to-right grid order exists and the cycle is named
    net = read(tmp_path, "E1,H1,C1,1.0,,,1,1,,\nE2,H1,C1,1.0,,,2,2,,\nCW1,H1,water,1,,,3,,,\nST1,steam,C1,1,,,,3,,\n")
    column, cycles = net.grid_positions()
    assert sorted(cycles[0]) == ["E1", "E2"]
    assert column["E1"] < column["E2"]   # hot-stream order kept
    assert sorted(net.loops()[0]) == ["E1", "E2"]


def test_programmatic_units_are_checked_too():
    with pytest.raises(InputError, match=r"unit 'E1': unknown exchanger type 'spiral'"):
        ExistingUnit("E1", "H1", "C1", area=1.0, arrangement="spiral")
    with pytest.raises(InputError, match="the network has no units"):
        ExistingNetwork(STREAMS, [], UTILITIES)
    with pytest.raises(InputError, match="'H1' is both a process stream and a utility"):
        ExistingNetwork(STREAMS, [ExistingUnit("E1", "H1", "C1", area=1.0)], [Utility("H1", 300, 299, 1.0)])


def test_changes_for_retrofit(tmp_path):
    net = read(tmp_path, GOOD)
    bigger = net.with_changes("E1", area=8.0)
    assert bigger.unit("E1").area == 8.0 and net.unit("E1").area == 4.0
    added = net.with_unit(ExistingUnit("E9", "H1", "C2", area=1.0, u=0.5, hot_position=2, cold_position=1))
    assert [u.name for u in added.on_stream("H1")] == ["E1", "E9", "CW1"]
    assert [u.name for u in added.on_stream("C2")] == ["E9", "E2"]
    with pytest.raises(KeyError):
        net.with_changes("nope", area=1.0)


# -- the utility's temperatures in a heater or cooler (hot in/out, cold in/out on a utility side) -----------

OIL_STREAMS = StreamTable([Stream.simple("C", 100, 150, 2.0, film_coefficient=1.0),
                           Stream.simple("H", 120, 40, 1.0, film_coefficient=1.0)])
OIL = [Utility("oil", 330, 250, 60.0, film_coefficient=1.0), Utility("CW", 10, 30, 6.0, film_coefficient=1.0)]
OIL_HEADER = "unit,hot,cold,duty [kW],hot in [°C],hot out [°C],cold in [°C],cold out [°C]\n"


def oil_network(tmp_path, body: str) -> ExistingNetwork:
    return ExistingNetwork.from_table(OIL_STREAMS, read_network(write(tmp_path, body, OIL_HEADER)), OIL)


def test_utility_temperatures_of_a_heater_are_read_and_other_sides_stay_informative(tmp_path):
    net = oil_network(tmp_path, "HU,oil,C,100,300,250,100,150\nCU,H,CW,80,120,40,12,28\n")
    heater, cooler = net.unit("HU"), net.unit("CU")
    oil = heater.utility_taken(net.utility("oil"))
    assert (oil.supply_temperature, oil.target_temperature) == (300.0, 250.0)
    water = cooler.utility_taken(net.utility("CW"))
    assert (water.supply_temperature, water.target_temperature) == (12.0, 28.0)
    # without them a unit takes the utility over its whole range
    whole = oil_network(tmp_path, "HU,oil,C,100,,,,\n").unit("HU").utility_taken(net.utility("oil"))
    assert (whole.supply_temperature, whole.target_temperature) == (330.0, 250.0)


@pytest.mark.parametrize("row, column, words", [
    ("HU,oil,C,100,300,,100,150\n", "hot out [°C]", "given without hot out"),
    ("HU,oil,C,100,340,250,,\n", "hot in [°C]", "outside the range of utility 'oil'"),
    ("HU,oil,C,100,260,290,,\n", "hot out [°C]", "a hot utility cools along its flow"),
    ("HU,oil,C,100,330,250,,\nCU,H,CW,80,,,31,12\n", "cold in [°C]", "outside the range of utility 'CW'"),
])
def test_bad_utility_temperatures_name_the_row_and_column(tmp_path, row, column, words):
    with pytest.raises(InputError) as e:
        oil_network(tmp_path, row)
    msg = str(e.value)
    assert f"column '{column}'" in msg and words in msg and "row " in msg


def test_utility_temperatures_a_design_rounded_are_clipped_into_the_range(tmp_path):
    # a design's units table writes temperatures to 0.001 K: 330.0004 is the oil's supply temperature
    net = oil_network(tmp_path, "HU,oil,C,100,330.0004,249.9996,100,150\n")
    assert net.unit("HU").hot_temperatures == (330.0, 250.0)


@pytest.mark.parametrize("duty, ok", [(60.0004, True), (60.01, True), (180.01, False)])
def test_a_branch_unit_reads_back_up_to_its_whole_stream_s_duty(duty, ok):
    """A design's unit that takes all of its branch (1/3 of H1's 180 kW = 60 kW) is written with its duty
    rounded to 0.001 kW, so it may come back a little above the branch's share: accepted.  A branch may also
    carry more than its share (it passes the stream's target before it mixes back, as a lowest-TAC design
    with branch overshoot does; the simulation and checks take it from there), but no unit more than its
    whole stream gives: 180.01 kW is refused.  (Invented network.)"""
    units = [ExistingUnit("E1", "H1", "C1", duty=duty, u=0.5, hot_position=1, cold_position=1, hot_fraction=1 / 3),
             ExistingUnit("E3", "H1", "C2", duty=80.0, u=0.5, hot_position=1, cold_position=1, hot_fraction=2 / 3),
             ExistingUnit("CW1", "H1", "water", hot_position=2), ExistingUnit("ST", "steam", "C1", cold_position=2)]
    if ok:
        net = ExistingNetwork(STREAMS, units, UTILITIES)
        assert net.unit("E1").duty == duty
    else:
        with pytest.raises(InputError, match=r"stated duty 180.01 kW is more than stream 'H1' gives between its "
                                             r"supply and target temperatures \(180 kW\)"):
            ExistingNetwork(STREAMS, units, UTILITIES)


def test_the_network_as_given_writes_the_utility_parts_and_reads_them_back(tmp_path):
    net = oil_network(tmp_path, "HU,oil,C,100,300,250,100,150\nCU,H,CW,80,,,,\n")
    frame = net.to_frame()
    heater = frame.set_index("unit").loc["HU"]
    assert (heater["hot in [°C]"], heater["hot out [°C]"]) == (300.0, 250.0)
    assert frame.set_index("unit").loc["CU"][["cold in [°C]", "cold out [°C]"]].isna().all()   # its whole range
    path = tmp_path / "again.csv"
    frame.to_csv(path, index=False)
    again = ExistingNetwork.from_table(OIL_STREAMS, read_network(path), OIL)
    assert again.unit("HU").hot_temperatures == (300.0, 250.0) and again.unit("CU").cold_temperatures is None
