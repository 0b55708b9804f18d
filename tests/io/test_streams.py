"""read_streams: layouts, units, segments, temperature–duty tables and every kind of bad input.

Tables written inline are invented for the tests; the published check uses the four-stream data of
Sinnott (tests/data/io/README.md).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import openpyxl
import pytest

from heatloom.errors import InputError
from heatloom.io import read_streams
from heatloom.model import Stream, StreamTable

DATA = Path(__file__).parents[1] / "data" / "io"


def csv(tmp_path, text: str, name: str = "s.csv") -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_minimal_table(tmp_path):
    t = read_streams(csv(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,3\nC1,20,135,2\n"))
    assert isinstance(t, StreamTable) and t.names == ["H1", "C1"]
    assert [s.name for s in t.hot] == ["H1"] and [s.name for s in t.cold] == ["C1"]
    assert t["H1"].duty == 360.0 and t["C1"].duty == 230.0
    assert t.source.endswith("s.csv")
    assert t["H1"].segments[0].row == 2


def test_sinnott_four_streams_in_us_units_match_published_data():
    # Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, problem table example
    # (Table 3.6); published data in °C and kW/K, file rewritten in °F and Btu/(h·°F) (see README)
    published = {"1": (180, 60, 3.0), "2": (150, 30, 1.0), "3": (20, 135, 2.0), "4": (80, 140, 4.5)}
    t = read_streams(DATA / "sinnott_four_stream_us_units.csv", columns="Stream number=name")
    assert t.names == list(published)
    for name, (ts, tt, cp) in published.items():
        s = t[name]
        assert s.supply_temperature == pytest.approx(ts, abs=1e-12)
        assert s.target_temperature == pytest.approx(tt, abs=1e-12)
        assert s.segments[0].heat_capacity_flow == pytest.approx(cp, rel=1e-9)
    assert [s.name for s in t.hot] == ["1", "2"]


def test_optional_columns_and_units(tmp_path):
    text = ("name,T_supply,T_target,CP [MW/K],h [W/m²K],dT_min_contrib [°F],kind\n"
            "H1,180,60,0.003,500,9,hot\n"
            "C1,20,135,0.002,,,\n")
    t = read_streams(csv(tmp_path, text))
    h1, c1 = t["H1"].segments[0], t["C1"].segments[0]
    assert h1.heat_capacity_flow == 3.0 and h1.film_coefficient == 0.5
    assert h1.dt_min_contribution == pytest.approx(5.0)
    assert c1.film_coefficient is None and c1.dt_min_contribution is None


def test_duty_instead_of_cp(tmp_path):
    t = read_streams(csv(tmp_path, "name,T_supply,T_target,duty [MW]\nH1,180,60,0.36\nC1,20,135,0.23\n"))
    assert t["H1"].segments[0].heat_capacity_flow == pytest.approx(3.0)
    assert t["C1"].segments[0].heat_capacity_flow == pytest.approx(2.0)


def test_cp_and_duty_mixed_and_agreeing(tmp_path):
    t = read_streams(csv(tmp_path, "name,T_supply,T_target,CP,duty\nH1,180,60,3,360\nC1,20,135,,230\n"
                                   "C2,80,140,4.5,\n"))
    assert [s.segments[0].heat_capacity_flow for s in t] == pytest.approx([3.0, 2.0, 4.5])


def test_cp_and_duty_that_disagree(tmp_path):
    p = csv(tmp_path, "name,T_supply,T_target,CP,duty\nH1,180,60,3,360\nH2,150,30,1,120.001\n")
    with pytest.raises(InputError, match=r"s\.csv, row 3, column 'duty': duty 120\.001 kW disagrees with CP × "
                                         r"\|T_supply − T_target\| = 120 kW"):
        read_streams(p)


def test_cp_and_duty_within_relative_tolerance(tmp_path):
    t = read_streams(csv(tmp_path, "name,T_supply,T_target,CP,duty\nH1,180,60,3,360.0001\n"))
    assert t["H1"].segments[0].heat_capacity_flow == 3.0


def test_consecutive_rows_form_segments(tmp_path):
    text = ("name,T_supply,T_target,CP\n"
            "reactor effluent,200,150,1\n"
            "reactor effluent,150,149,300\n"
            "reactor effluent,149,100,2\n"
            "feed,30,80,4\n"
            "feed,80,81,500\n")
    t = read_streams(csv(tmp_path, text))
    eff = t["reactor effluent"]
    assert len(eff.segments) == 3 and eff.duty == 50 + 300 + 98
    assert [g.row for g in eff.segments] == [2, 3, 4]
    assert t["feed"].duty == 700.0 and not t["feed"].is_hot


def test_round_trip_through_to_frame(tmp_path):
    original = StreamTable([
        Stream("H1", (Stream.simple("x", 200, 150, 1.0, film_coefficient=0.8).segments[0],
                      Stream.simple("x", 150, 149, 300.0, film_coefficient=2.5).segments[0])),
        Stream.simple("C1", 20, 135, 2.0, dt_min_contribution=5.0),
    ])
    p = tmp_path / "frame.csv"
    original.to_frame().to_csv(p, index=False)
    back = read_streams(p)
    assert back.names == original.names
    for a, b in zip(original, back):
        assert a.segments == b.segments


@pytest.mark.parametrize("text, match", [
    ("name,T_supply,T_target,CP\nH1,180,60,abc\n",
     r"s\.csv, row 2, column 'CP': heat capacity flow rate CP must be a number, got 'abc'"),
    ("name,T_supply,T_target,CP\nH1,180,60,2\nH2,nan,60,2\n",
     r"s\.csv, row 3, column 'T_supply': supply temperature must be a finite number, got 'nan'"),
    ("name,T_supply,T_target,CP\nH1,180,60,inf\n", r"row 2, column 'CP': .* must be a finite number, got 'inf'"),
    ("title\nname,T_supply,T_target,CP (MW/K)\nH1,180,60,-2\n",
     r"row 3, column 'CP \(MW/K\)': heat capacity flow rate CP must be > 0, got -2 MW/K"),
    ("name,T_supply,T_target,CP\nH1,180,60,0\n", r"row 2, column 'CP': .*must be > 0, got 0 kW/K"),
    ("name,T_supply,T_target,duty\nH1,180,60,-360\n", r"row 2, column 'duty': duty must be > 0 .* got -360 kW"),
    ("name,T_supply,T_target,CP\nH1,180,180,2\n",
     r"row 2, column 'T_target': supply and target temperatures are equal \(180 °C\)"),
    ("name,T_supply,T_target,CP\nH1,180,120,2\nC1,20,100,1\nH1,120,60,2\n",
     r"row 4, column 'name': stream name 'H1' was used before, in row 2, with other streams in between"),
    ("name,T_supply,T_target,CP\nH1,180,120,2\nH1,110,60,2\n",
     r"row 3, column 'T_supply': stream 'H1': segment starts at 110 °C but the segment before it ended at 120"),
    ("name,Ts,Tt,CP\nH1,180,120,2\nH1,120,160,2\n",
     r"row 3, column 'Tt': stream 'H1': segment from 120 to 160 °C runs the other way"),
    ("name,T_supply [degF],T_target [degF],CP\nH1,180,-500,2\n",
     r"row 2, column 'T_target \[degF\]': target temperature -500 degF is below absolute zero"),
    ("name,T_supply,T_target [K],CP\nH1,180,-1,2\n", r"row 2, column 'T_target \[K\]': .*-1 K is below absolute"),
    ("name,T_supply [degX],T_target,CP\nH1,180,60,2\n",
     r"row 1, column 'T_supply \[degX\]': unknown unit 'degX' \(expected a temperature unit"),
    ("name,T_supply,T_target,CP [kW]\nH1,180,60,2\n",
     r"row 1, column 'CP \[kW\]': unit 'kW' measures a duty \(expected a heat capacity flow rate"),
    # a mass flow is now read (CP = mass flow × specific heat), so alone it lacks its specific heat
    ("name,T_supply,T_target,mass flow\nH1,180,60,2\n",
     r"row 2, column 'mass flow': a mass_flow is given without a specific heat"),
    ("name,T_supply,T_target,flux\nH1,180,60,2\n",
     r"row 1: missing required column\(s\) CP or duty or mass_flow; columns found: name, T_supply, T_target, flux"),
    ("Stream list\nT_supply,T_target,CP\n180,60,2\n",
     r"row 2: missing required column\(s\) name; columns found: T_supply, T_target, CP"),
    ("name,T_supply,T_target,CP\n", r"s\.csv, row 1: no data rows under the header"),
    ("name,T_supply,T_target,CP,duty\nH1,180,60,,\n", r"row 2, column 'CP': empty cell: give CP or duty"),
    ("name,T_supply,T_target,CP\n,180,60,2\n", r"row 2, column 'name': stream name is empty"),
    ("name,T_supply,T_target,CP\nH1,,60,2\n", r"row 2, column 'T_supply': empty cell: supply temperature"),
    ("name,T_supply,T_target,CP,type\nH1,180,60,2,cold\n",
     r"row 2, column 'type': stream 'H1' is declared cold but runs from 180 to 60 °C"),
    ("name,T_supply,T_target,CP,kind\nH1,180,60,2,warm\n", r"row 2, column 'kind': kind must be 'hot' or 'cold'"),
    ("name,T_supply,T_target,CP,htc\nH1,180,60,2,-1\n", r"row 2, column 'htc': film coefficient h must be > 0"),
    ("name,T_supply,T_target,CP,dT_min_contrib\nH1,180,60,2,-5\n",
     r"row 2, column 'dT_min_contrib': ΔTmin contribution must be >= 0, got -5 K"),
])
def test_bad_stream_tables(tmp_path, text, match):
    with pytest.raises(InputError, match=match):
        read_streams(csv(tmp_path, text))


def test_bad_files(tmp_path):
    with pytest.raises(InputError, match=r"missing\.csv: file not found"):
        read_streams(tmp_path / "missing.csv")
    with pytest.raises(InputError, match="is a directory"):
        read_streams(tmp_path)
    empty = csv(tmp_path, "", "empty.csv")
    with pytest.raises(InputError, match=r"empty\.csv: the file is empty"):
        read_streams(empty)
    binary = tmp_path / "b.csv"
    binary.write_bytes(np.random.default_rng(3).integers(0, 256, 3000, dtype=np.uint8).tobytes())
    with pytest.raises(InputError, match=r"b\.csv: this is not a text table"):
        read_streams(binary)
    fake = csv(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,2\n", "fake.xlsx")
    with pytest.raises(InputError, match=r"fake\.xlsx: cannot read the file as an \.xlsx workbook"):
        read_streams(fake)


def test_bad_fit_tolerance(tmp_path):
    p = csv(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,3\n")
    with pytest.raises(InputError, match="fit tolerance must be >= 0 K"):
        read_streams(p, fit_tolerance=-1)
    with pytest.raises(InputError, match="fit tolerance must be >= 0 K"):
        read_streams(p, fit_tolerance=float("nan"))


def test_rows_of_a_large_table_are_read_vectorised(tmp_path):
    rng = np.random.default_rng(11)
    n = 5000
    ts = rng.uniform(50, 500, n).round(3)
    tt = ts + rng.choice([-1, 1], n) * rng.uniform(5, 100, n).round(3)
    cp = rng.uniform(0.1, 5, n).round(4)
    lines = ["name,T_supply [degF],T_target [degF],CP [MW/K]"]
    lines += [f"S{i},{a},{b},{c}" for i, (a, b, c) in enumerate(zip(ts, tt, cp))]
    t = read_streams(csv(tmp_path, "\n".join(lines) + "\n"))
    arrays = t.arrays
    np.testing.assert_allclose(arrays.supply_temperature, (ts - 32) / 1.8, atol=1e-12)
    np.testing.assert_allclose(arrays.heat_capacity_flow, cp * 1000, rtol=1e-15)
    assert t.streams[-1].segments[0].row == n + 1


# --- workbooks ----------------------------------------------------------------------------------------

def test_workbook_with_title_units_row_and_named_sheet(tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Notes"
    ws["A1"] = "Invented test workbook"
    ws = wb.create_sheet("Stream data")
    for row in (["Heat and material balance, unit 300 (invented)"], [],
                ["Stream", "T in", "T out", "FCp", "film HTC", "remarks"],
                [None, "°F", "°F", "Btu/h/°F", "W/(m2 K)", None],
                ["H1", 356, 140, 5686.902722, 800, "reactor effluent"],
                ["H1", 140, 122, 20000, 1500, "condensing"],
                [None] * 6,
                ["C1", 68, 275, 3791.268481, None, None]):
        ws.append(row)
    p = tmp_path / "plant.xlsx"
    wb.save(p)
    t = read_streams(p, sheet="Stream data")
    assert t.names == ["H1", "C1"] and t.source.endswith("plant.xlsx, sheet 'Stream data'")
    h1 = t["H1"]
    assert [g.row for g in h1.segments] == [5, 6]
    assert h1.segments[0].supply_temperature == pytest.approx(180.0)
    assert h1.segments[1].target_temperature == pytest.approx(50.0)
    assert h1.segments[0].heat_capacity_flow == pytest.approx(3.0, rel=1e-9)
    assert h1.segments[1].film_coefficient == pytest.approx(1.5)
    assert t["C1"].segments[0].row == 8


def test_workbook_bad_cell_names_sheet_row_column(tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "S"
    for row in (["name", "T_supply", "T_target", "CP"], ["H1", 180, 60, 3], ["H2", "hot", 60, 3]):
        ws.append(row)
    p = tmp_path / "w.xlsx"
    wb.save(p)
    with pytest.raises(InputError, match=r"w\.xlsx, sheet 'S', row 3, column 'T_supply': supply temperature must "
                                         r"be a number, got 'hot'"):
        read_streams(p)
    with pytest.raises(InputError, match=r"no sheet named 'Streams'; sheets: 'S'"):
        read_streams(p, sheet="Streams")


# --- temperature–duty tables --------------------------------------------------------------------------

def test_point_table_is_detected_and_fitted():
    # invented curve (tests/data/io/README.md)
    t = read_streams(DATA / "invented_condenser_curve.csv", fit_tolerance=0.5)
    vap, feed = t["overhead vapour"], t["feed"]
    assert vap.is_hot and not feed.is_hot
    assert vap.supply_temperature == 132.0 and vap.target_temperature == 100.0
    assert vap.duty == pytest.approx(1100.0) and feed.duty == pytest.approx(280.0)
    assert len(feed.segments) == 1  # collinear points merge
    assert 1 < len(vap.segments) < 7
    assert vap.segments[0].row == 3


def test_point_table_tolerance_controls_segment_count():
    loose = read_streams(DATA / "invented_condenser_curve.csv", fit_tolerance=20)["overhead vapour"]
    exact = read_streams(DATA / "invented_condenser_curve.csv", fit_tolerance=0)["overhead vapour"]
    assert len(loose.segments) < len(exact.segments) == 7


def test_point_table_with_mapping_and_per_stream_h(tmp_path):
    p = csv(tmp_path, "Stream,Temp [°F],Heat flow [MW],alpha [W/m2K]\n"
                      "A,212,0,500\nA,122,0.09,500\nB,50,5,\nB,104,5.06,\n")
    t = read_streams(p, columns="Stream=name,alpha=h")
    a = t["A"]
    assert a.supply_temperature == pytest.approx(100.0) and a.target_temperature == pytest.approx(50.0)
    assert a.duty == pytest.approx(90.0) and a.segments[0].film_coefficient == 0.5
    assert t["B"].duty == pytest.approx(60.0) and t["B"].segments[0].film_coefficient is None


@pytest.mark.parametrize("text, match", [
    ("name,T,Q\nA,120,0\nA,110,100\nA,115,200\n", r"row 4, column 'T': stream 'A': temperature turns back at 115"),
    ("name,T,Q\nA,120,0\nB,20,0\nB,30,10\n",
     r"row 2, column 'T': stream 'A': a temperature–duty curve needs at least two points, got 1"),
    ("name,T,Q\nA,120,0\nA,110,100\nA,100,100\n",
     r"row 4, column 'Q': stream 'A': cumulative duty does not change from the point before"),
    ("name,T,Q\nA,120,0\nA,120,100\n", r"row 3, column 'T': .*temperature does not change .*small glide"),
    ("name,T,Q\nA,120,0\nA,110,100\nA,100,50\n", r"row 4, column 'Q': .*cumulative duty turns back"),
    ("name,T,Q\nA,120,0\nA,110,x\n", r"row 3, column 'Q': cumulative duty must be a number, got 'x'"),
    ("name,T,Q,h\nA,120,0,1\nA,110,100,2\n", r"row 3, column 'h': film coefficient h must be the same on every row"),
    ("name,T,Q\nA,120,0\nA,110,100\nB,20,0\nB,30,10\nA,100,200\n", r"row 6, column 'name': stream name 'A' was used"),
])
def test_bad_point_tables(tmp_path, text, match):
    with pytest.raises(InputError, match=match):
        read_streams(csv(tmp_path, text))


def test_segment_table_wins_when_both_layouts_could_match(tmp_path):
    t = read_streams(csv(tmp_path, "name,T_supply,T_target,Q,T\nH1,180,60,360,1\n"))
    assert t["H1"].segments[0].heat_capacity_flow == 3.0


@pytest.mark.parametrize("header, flows, cps", [
    # CP = mass flow × specific heat; 1 kcal/(kg·°C) = 4.1868 kJ/(kg·K) and 1 Btu/(lb·°F) = 4.1868 kJ/(kg·K)
    # (International Table definitions, NIST SP 811, 2008 edition, Appendix B); 3.6 t/h = 1 kg/s
    ("mass flow [kg/s],Cp [kJ/kg.K]", (1.5, 0.5), (2.0, 4.0)),
    ("mass flow [t/h],specific heat [kcal/(kg °C)]", (5.4, 1.8), (2.0 / 4.1868, 4.0 / 4.1868)),
])
def test_mass_flow_and_specific_heat_form_cp(tmp_path, header, flows, cps):
    p = tmp_path / "s.csv"
    p.write_text(f"name,T_supply,T_target,{header}\nH1,180,60,{flows[0]},{cps[0]}\nC1,20,135,{flows[1]},{cps[1]}\n",
                 encoding="utf-8")
    s = read_streams(p)
    assert s["H1"].segments[0].heat_capacity_flow == pytest.approx(3.0, rel=1e-12)    # 1.5 kg/s × 2 kJ/(kg·K)
    assert s["C1"].segments[0].heat_capacity_flow == pytest.approx(2.0, rel=1e-12)    # 0.5 kg/s × 4 kJ/(kg·K)


def test_cp_and_mass_flow_that_disagree_are_refused(tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("name,T_supply,T_target,CP,mass flow [kg/s],specific heat [kJ/kg.K]\nH1,180,60,3,1.5,3\n",
                 encoding="utf-8")
    with pytest.raises(InputError, match=r"row 2, column 'CP': CP 3 kW/K disagrees with mass flow × specific heat"):
        read_streams(p)


# --- forbidden and required matches (columns 'forbid' and 'require') ---------------------------------


def test_match_columns_give_hot_cold_pairs_and_are_not_unknown_columns(tmp_path):
    from heatloom.io.streams import read_match_rules

    p = tmp_path / "s.csv"
    p.write_text("name,T_supply,T_target,CP,forbid,require\n"
                 "H1,180,120,3,C2 ; steam,\nH1,120,60,2,,C1\nC1,20,135,2,H2,\nC2,80,140,4,,\nH2,150,30,1,,\n",
                 encoding="utf-8")
    notes: list[str] = []
    streams = read_streams(p, notes=notes, strict=True)
    assert notes == [] and len(streams["H1"].segments) == 2
    rules = read_match_rules(p, streams)
    # a cell of a hot stream names cold sides (the row's stream first); a cold stream's names hot sides
    assert rules.forbidden == (("H1", "C2"), ("H1", "steam"), ("H2", "C1"))
    assert rules.required == (("H1", "C1"),)
    assert len(rules.sources) == 1 and rules.sources[0].endswith("s.csv")


def test_match_columns_absent_give_no_rules(tmp_path):
    from heatloom.io.streams import read_match_rules

    p = csv(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,3\nC1,20,135,2\n")
    assert not read_match_rules(p, read_streams(p))


@pytest.mark.parametrize(("cell", "match"), [
    ("H1", r"row 2, column 'forbid': stream 'H1' names itself"),
    ("C1;;C2", r"row 2, column 'forbid': empty name"),
])
def test_bad_match_cells_are_located(tmp_path, cell, match):
    from heatloom.io.streams import read_match_rules

    p = csv(tmp_path, f"name,T_supply,T_target,CP,forbid\nH1,180,60,3,{cell}\nC1,20,135,2,\nC2,80,140,4,\n")
    with pytest.raises(InputError, match=match):
        read_match_rules(p, read_streams(p))


def test_a_pair_both_forbidden_and_required_is_refused(tmp_path):
    from heatloom.io.streams import read_match_rules

    p = csv(tmp_path, "name,T_supply,T_target,CP,forbid,require\nH1,180,60,3,C1,C1\nC1,20,135,2,,\n")
    with pytest.raises(InputError, match="H1:C1 is both forbidden and required"):
        read_match_rules(p, read_streams(p))
