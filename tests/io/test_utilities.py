"""read_utilities: kinds from temperatures, isothermal utilities, costs and units, bad input.

All utility tables here are invented for the tests.
"""

from __future__ import annotations

import openpyxl
import pytest

from heatloom.errors import InputError
from heatloom.io import read_utilities
from heatloom.model import Stream, StreamTable, UtilityKind

PROCESS = StreamTable([Stream.simple("H1", 180, 60, 3.0), Stream.simple("C1", 20, 135, 2.0)])


def csv(tmp_path, text: str):
    p = tmp_path / "u.csv"
    p.write_text(text, encoding="utf-8")
    return p


def test_kinds_follow_temperatures(tmp_path):
    u = read_utilities(csv(tmp_path, "name,T_supply,T_target,cost\nhot oil,300,250,90\ncooling water,15,25,8\n"))
    assert [(x.name, x.kind, x.cost) for x in u] == [("hot oil", UtilityKind.HOT, 90.0),
                                                     ("cooling water", UtilityKind.COLD, 8.0)]
    assert u[0].row == 2 and u[1].row == 3


def test_isothermal_utilities_classified_by_the_process(tmp_path):
    p = csv(tmp_path, "Utility,T_supply,T_target,cost\nHP steam,250,250,160\nbrine,-20,-20,300\n")
    u = read_utilities(p, process=PROCESS)
    assert [x.kind for x in u] == [UtilityKind.HOT, UtilityKind.COLD]


def test_isothermal_utility_inside_process_range_needs_kind(tmp_path):
    p = csv(tmp_path, "name,T_supply,T_target,cost\nLP steam,150,150,100\n")
    with pytest.raises(InputError, match=r"u\.csv, row 2, column 'T_target': utility 'LP steam' has equal supply "
                                         r"and target temperatures \(150 °C\) within the process temperature range "
                                         r"\(20 to 180 °C\): say whether it is hot or cold in a 'kind' column"):
        read_utilities(p, process=PROCESS)


def test_isothermal_utility_without_process_needs_kind(tmp_path):
    p = csv(tmp_path, "name,T_supply,T_target,cost,kind\nHP steam,250,250,160,\n")
    with pytest.raises(InputError, match=r"row 2, column 'kind': utility 'HP steam' has equal supply and target "
                                         r"temperatures \(250 °C\): say whether it is hot or cold"):
        read_utilities(p)


def test_kind_column_decides_isothermal_utilities(tmp_path):
    p = csv(tmp_path, "name,T_supply,T_target,cost,type,htc [W/m2K]\nLP steam,150,150,100,Hot,6000\n"
                      "refrigerant,0,0,250,cooling,\n")
    u = read_utilities(p, process=PROCESS)
    assert [x.kind for x in u] == [UtilityKind.HOT, UtilityKind.COLD]
    assert u[0].film_coefficient == 6.0 and u[1].film_coefficient is None


def test_cost_and_temperature_units(tmp_path):
    p = csv(tmp_path, "name,T_supply [°F],T_target [°F],cost [k€/MW/yr]\nsteam,392,390.2,160\n")
    (u,) = read_utilities(p)
    assert u.supply_temperature == pytest.approx(200.0) and u.target_temperature == pytest.approx(199.0)
    assert u.cost == pytest.approx(160.0)


@pytest.mark.parametrize("text, match", [
    ("name,T_supply,T_target,cost,kind\nsteam,150,149,100,warm\n",
     r"row 2, column 'kind': kind must be 'hot' or 'cold', got 'warm'"),
    ("name,T_supply,T_target,cost,kind\nCW,20,30,10,hot\n",
     r"row 2, column 'kind': utility 'CW' is declared hot but its temperatures"),
    ("name,T_supply,T_target,cost\nCW,20,30,10\nCW,25,35,10\n",
     r"row 3, column 'name': utility name 'CW' is used twice \(first in row 2\)"),
    ("name,T_supply,T_target,cost\nCW,20,30,cheap\n", r"row 2, column 'cost': cost must be a number, got 'cheap'"),
    ("name,T_supply,T_target,cost\nCW,20,30,\n", r"row 2, column 'cost': empty cell: cost is required"),
    ("name,T_supply,T_target\nCW,20,30\n", r"row 1: missing required column\(s\) cost; columns found: name"),
    ("name,T_supply,T_target,cost [$/MWh]\nCW,20,30,5\n",
     r"row 1, column 'cost \[\$/MWh\]': price unit '\$/MWh' is not per year"),
    ("name,T_supply,T_target,cost,h\nCW,20,30,5,0\n", r"row 2, column 'h': film coefficient h must be > 0"),
    ("name,T_supply [K],T_target,cost\nCW,-5,30,5\n", r"row 2, column 'T_supply \[K\]': .*below absolute zero"),
    ("name,T_supply,T_target,cost\n,20,30,5\n", r"row 2, column 'name': utility name is empty"),
])
def test_bad_utility_tables(tmp_path, text, match):
    with pytest.raises(InputError, match=match):
        read_utilities(csv(tmp_path, text), process=PROCESS)


def test_workbook_named_sheet(tmp_path):
    wb = openpyxl.Workbook()
    wb.active.title = "Streams"
    ws = wb.create_sheet("Utilities")
    for row in (["Site utilities (invented)"], ["name", "Tin", "Tout", "price"], [None, "°C", "°C", "€/kW/yr"],
                ["MP steam", 200, 199, 140], ["cooling water", 20, 30, 10]):
        ws.append(row)
    p = tmp_path / "site.xlsx"
    wb.save(p)
    u = read_utilities(p, sheet="Utilities")
    assert [x.name for x in u] == ["MP steam", "cooling water"] and u[0].row == 4
    with pytest.raises(InputError, match=r"no sheet named 'utility'; sheets: 'Streams', 'Utilities'"):
        read_utilities(p, sheet="utility")


def test_prices_per_energy_need_operating_hours(tmp_path):
    # A price per kWh times the operating hours per year is a price per kW·year (definition of the
    # kilowatt-hour: 1 kWh = 1 kW × 1 h).
    f = tmp_path / "u.csv"
    f.write_text("name,T_supply,T_target,cost [USD/kWh]\nsteam,200,199,0.02\ncw,20,30,0.001\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"row 1, column 'cost \[USD/kWh\]'.*--hours-per-year"):
        read_utilities(f)
    steam, cw = read_utilities(f, hours_per_year=8000)
    assert steam.cost == pytest.approx(160.0) and cw.cost == pytest.approx(8.0)
    g = tmp_path / "v.csv"
    g.write_text("name,T_supply,T_target,cost [EUR/MWh]\nsteam,200,199,30\n", encoding="utf-8")
    assert read_utilities(g, hours_per_year=8000)[0].cost == pytest.approx(240.0)
