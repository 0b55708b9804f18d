"""Reading a site (heatloom.io.site): zone files in a folder, a workbook with one sheet per zone, the mains
table, and the located error messages.

All tables here are invented for the tests (small made-up zones); the readers' numeric results are checked
against the same data written by hand in canonical units, and unit conversion against exact definitions
(°F → °C: (F − 32)/1.8; 1 MW = 1000 kW).
"""

import openpyxl
import pytest

from heatloom.errors import InputError
from heatloom.io.site import read_mains, read_site, zone_name
from heatloom.model.site import MainKind

EAST = "name,T_supply,T_target,CP\nH1,200,80,2\nC1,60,150,1\n"
WEST = "name,T_supply,T_target,CP\nC2,90,140,3\nH2,160,100,1.5\n"
MAINS = "name,T,cost,kind\nHP,190,100,steam\nLP,130,70,\nCW,30,8,cooling\n"


@pytest.fixture
def folder(tmp_path):
    (tmp_path / "east_streams.csv").write_text(EAST, encoding="utf-8")
    (tmp_path / "West-Streams.csv").write_text(WEST, encoding="utf-8")
    (tmp_path / "mains.csv").write_text(MAINS, encoding="utf-8")
    (tmp_path / "notes.txt").write_text("not a table", encoding="utf-8")   # ignored: no 'streams' in the name
    return tmp_path


def test_folder_of_zone_files(folder):
    site = read_site(folder)
    assert [z.name for z in site.zones] == ["east", "West"]      # file order (names sorted, case ignored)
    east = {z.name: z for z in site.zones}["east"]
    assert east.streams["H1"].duty == pytest.approx(240.0) and east.streams["C1"].duty == pytest.approx(90.0)
    assert [(m.name, m.temperature, m.price, m.kind) for m in site.mains] == [
        ("HP", 190.0, 100.0, MainKind.STEAM), ("LP", 130.0, 70.0, MainKind.STEAM),
        ("CW", 30.0, 8.0, MainKind.COOLING)]
    assert site.mains_source == str(folder / "mains.csv")
    assert site.zone_sources["east"] == str(folder / "east_streams.csv")
    assert set(site.files) == {str(folder / n) for n in ("east_streams.csv", "West-Streams.csv", "mains.csv")}


def test_explicit_mains_file_and_xlsx_zone(folder, tmp_path_factory):
    other = tmp_path_factory.mktemp("elsewhere") / "site levels.csv"
    other.write_text("name,temperature [degF],price [money/MW/yr]\nMP,302,90000\n", encoding="utf-8")
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "data"
    for row in (["name", "T_supply", "T_target", "CP"], ["H9", 250, 200, 4.0]):
        ws.append(row)
    wb.save(folder / "north_streams.xlsx")
    site = read_site(folder, mains=other)
    assert [z.name for z in site.zones] == ["east", "north", "West"]
    (mp,) = site.mains
    # 302 °F = (302 - 32)/1.8 = 150 °C; 90000 money per MW·yr = 90 per kW·yr
    assert mp.temperature == pytest.approx(150.0) and mp.price == pytest.approx(90.0)


def test_workbook_with_one_sheet_per_zone(tmp_path):
    wb = openpyxl.Workbook()
    first = wb.active
    first.title = "reactor area"
    for row in (["name", "T_supply", "T_target", "CP"], ["H1", 200, 80, 2], ["C1", 60, 150, 1]):
        first.append(row)
    wb.create_sheet("empty")                                   # an empty sheet is skipped
    finishing = wb.create_sheet("finishing")
    for row in (["Site data, finishing area"], ["name", "T_supply", "T_target", "CP"], ["C2", 90, 140, 3]):
        finishing.append(row)
    mains = wb.create_sheet("Steam mains")
    for row in (["name", "T"], ["LP", 130]):
        mains.append(row)
    path = tmp_path / "plant.xlsx"
    wb.save(path)
    site = read_site(path)
    assert [z.name for z in site.zones] == ["reactor area", "finishing"]
    assert [m.name for m in site.mains] == ["LP"]
    assert site.mains_source == f"{path}, sheet 'Steam mains'"
    one = read_site(path, sheet_per_zone=False)
    assert [z.name for z in one.zones] == ["plant"] and one.zones[0].streams.names == ["H1", "C1"]
    assert one.mains == ()


def test_single_table_is_a_one_zone_site(tmp_path):
    p = tmp_path / "boiler_house_streams.csv"
    p.write_text(EAST, encoding="utf-8")
    site = read_site(p)
    assert [z.name for z in site.zones] == ["boiler_house"] and site.mains == ()


@pytest.mark.parametrize("stem, name", [("crude_unit_streams", "crude_unit"), ("STREAMS-tank farm", "tank farm"),
                                        ("a_streams_b", "a_b"), ("streams", "streams")])
def test_zone_names(stem, name):
    assert zone_name(stem) == name


# ---------------------------------------------------------------------------------------------------------
# errors


def test_missing_path(tmp_path):
    with pytest.raises(InputError, match=r"nowhere: site not found"):
        read_site(tmp_path / "nowhere")


def test_empty_folder_lists_what_it_holds(tmp_path):
    (tmp_path / "mains.csv").write_text(MAINS, encoding="utf-8")
    with pytest.raises(InputError, match=r"no zone files in the folder: name each zone's stream table "
                                         r"'<zone>_streams.csv' .* the folder holds: mains.csv"):
        read_site(tmp_path)


def test_duplicate_zone_names(tmp_path):
    (tmp_path / "east_streams.csv").write_text(EAST, encoding="utf-8")
    (tmp_path / "EAST streams.csv").write_text(WEST, encoding="utf-8")
    with pytest.raises(InputError, match=r"zone name 'east' comes from both .*EAST streams.csv and "
                                         r".*east_streams.csv; rename one"):
        read_site(tmp_path)


def test_several_mains_tables(folder):
    (folder / "old_mains.csv").write_text(MAINS, encoding="utf-8")
    with pytest.raises(InputError, match=r"several mains tables in the folder \(mains.csv, old_mains.csv\); "
                                         r"choose one with --mains"):
        read_site(folder)


def test_zone_file_errors_keep_their_location(folder):
    (folder / "bad_streams.csv").write_text("name,T_supply,T_target,CP\nH1,200,80,-2\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"bad_streams.csv, row 2, column 'CP': .*CP must be > 0"):
        read_site(folder)


@pytest.mark.parametrize("text, message", [
    ("name,T [°C]\nHP,190\nLP,abc\n", r"mains.csv, row 3, column 'T \[°C\]': main temperature must be a number"),
    ("name,T,kind\nHP,190,steam\nLP,130,vapour\n",
     r"mains.csv, row 3, column 'kind': kind must be 'steam' or 'cooling', got 'vapour'"),
    ("name,T,price\nHP,190,-4\n", r"mains.csv, row 2, column 'price': main 'HP': price must be a finite number >= 0"),
    ("name,T\nHP,190\nHP,130\n", r"mains.csv, row 3, column 'name': main name 'HP' is used twice"),
    ("name,T\nHP,190\n,130\n", r"mains.csv, row 3, column 'name': main name is empty"),
    ("name,saturation\nHP,190\n", r"mains.csv, row 1: missing required column\(s\) T"),
    ("name,Temperature [degF]\nSH,800\n", r"mains.csv, row 2, column 'Temperature \[degF\]': steam main 'SH' at "
                                          r"426.667 °C: saturated steam exists only between"),
    ("name,T,kind\nLP,130,steam\nCW,140,cooling\n",
     r"mains.csv, row 3, column 'T': cooling main 'CW' at 140 °C is not below every steam main"),
])
def test_mains_errors_are_located(tmp_path, text, message):
    p = tmp_path / "mains.csv"
    p.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=message):
        read_mains(p)


def test_main_outside_the_site_range_is_located(tmp_path):
    # every cold stream starts at 150 °C or above and every hot stream ends its range at 100 °C or below
    (tmp_path / "a_streams.csv").write_text("name,T_supply,T_target,CP\nH,100,90,1\n", encoding="utf-8")
    (tmp_path / "b_streams.csv").write_text("name,T_supply,T_target,CP\nC,150,160,1\n", encoding="utf-8")
    (tmp_path / "mains.csv").write_text("name,Temp\nHP,200\nMID,120\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"mains.csv, row 3, column 'Temp': steam main 'MID' at 120 °C is "
                                         r"outside the site's range"):
        read_site(tmp_path)
