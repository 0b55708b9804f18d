"""Generic table loading: encodings, delimiters, header detection, units rows, aliases, mappings.

All tables here are invented for the tests.
"""

from __future__ import annotations

import codecs
import os
import time

import numpy as np
import openpyxl
import pytest

from heatloom.errors import InputError
from heatloom.io.cells import load_cells
from heatloom.io.tables import (
    ALIASES,
    COLUMN_KINDS,
    normalise_name,
    parse_column_mapping,
    read_table,
    split_header,
)

STREAM_VOCAB = ("name", "T_supply", "T_target", "CP", "duty", "h", "dT_min_contrib", "kind")


def write(tmp_path, text: str, name: str = "t.csv", encoding: str = "utf-8"):
    p = tmp_path / name
    p.write_bytes(text.encode(encoding))
    return p


# --- encodings and delimiters -------------------------------------------------------------------

@pytest.mark.parametrize("delimiter", [",", ";", "\t", "|"])
def test_delimiter_is_sniffed(tmp_path, delimiter):
    rows = [["name", "T_supply", "T_target", "CP"], ["H1", "180", "60", "3"], ["C1", "20", "135", "2"]]
    p = write(tmp_path, "\n".join(delimiter.join(r) for r in rows) + "\n")
    t = read_table(p, STREAM_VOCAB)
    assert t.text("name") == ["H1", "C1"]
    assert t.numbers("CP").tolist() == [3.0, 2.0]


def test_semicolon_file_with_decimal_commas(tmp_path):
    p = write(tmp_path, "name;T_supply;T_target;CP\nH1;180,5;60;2,25\nH2;150;30;1,5\n")
    t = read_table(p, STREAM_VOCAB)
    assert t.numbers("T_supply").tolist() == [180.5, 150.0]
    assert t.numbers("CP").tolist() == [2.25, 1.5]


@pytest.mark.parametrize("encoding, bom", [("utf-8", b""), ("utf-8", codecs.BOM_UTF8), ("cp1252", b""),
                                           ("latin-1", b""), ("utf-16", b"")])
def test_encodings(tmp_path, encoding, bom):
    text = "name,T_supply [°C],T_target [°C],CP\nHeißöl,180,60,3\n"
    p = tmp_path / "t.csv"
    p.write_bytes(bom + text.encode(encoding))
    t = read_table(p, STREAM_VOCAB)
    assert t.text("name") == ["Heißöl"]
    assert t.columns["T_supply"].unit == "°C"


def test_tab_separated_utf16_as_spreadsheet_unicode_text_export(tmp_path):
    p = tmp_path / "t.txt"
    p.write_bytes("name\tT_supply\tT_target\tCP\r\nH1\t180\t60\t3\r\n".encode("utf-16"))
    assert read_table(p, STREAM_VOCAB).numbers("T_target").tolist() == [60.0]


# --- header, title lines, units ---------------------------------------------------------------------

def test_title_lines_units_row_and_row_numbers(tmp_path):
    text = ("Heat and material balance, unit 300\n"
            "revision B\n"
            "\n"
            "Stream,Tin,Tout,FCp,remarks\n"
            ",°F,°F,MW/K,\n"
            "H1,212,32,0.002,reactor effluent\n"
            ",,,,\n"
            "\n"
            "C1,50,122,0.001,\n"
            ",,,,only a note here\n")
    t = read_table(write(tmp_path, text), STREAM_VOCAB)
    assert t.header_row == 4 and t.units_row == 5
    assert t.rows.tolist() == [6, 9]
    assert t.numbers("T_supply").tolist() == [100.0, 10.0]
    assert t.numbers("CP").tolist() == [2.0, 1.0]
    assert t.header("T_supply") == "Tin"
    assert set(t.columns) == {"name", "T_supply", "T_target", "CP"}


@pytest.mark.parametrize("header, unit", [
    ("T_supply [degF]", "degF"), ("T_supply (degF)", "degF"), ("T_supply {degF}", "degF"),
    ('"T_supply, degF"', "degF"), ("Tin °F", "°F"), ("T in [°F]", "°F"),
])
def test_units_in_header(tmp_path, header, unit):
    p = write(tmp_path, f"name,{header},T_target,CP\nH1,212,60,3\n")
    t = read_table(p, STREAM_VOCAB)
    assert t.columns["T_supply"].unit == unit
    assert t.numbers("T_supply").tolist() == [100.0]


def test_nested_brackets_in_header_unit(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP,h [W/(m2 K)]\nH1,180,60,3,500\n")
    assert read_table(p, STREAM_VOCAB).numbers("h").tolist() == [0.5]


def test_header_unit_and_units_row_must_agree(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP [kW/K]\n-,C,C,MW/K\nH1,180,60,3\n")
    with pytest.raises(InputError, match=r"row 2, column 'CP \[kW/K\]': the header gives unit 'kW/K' but the "
                                         r"units row gives 'MW/K'"):
        read_table(p, STREAM_VOCAB)


def test_header_unit_and_units_row_may_repeat_each_other(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP [kW/K]\n[-],[°C],[°C],kW/°C\nH1,180,60,3\n")
    t = read_table(p, STREAM_VOCAB)
    assert t.units_row == 2 and t.numbers("CP").tolist() == [3.0]


def test_unknown_unit_in_units_row_names_row_and_column(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP\n,°C,°C,kW/Kx\nH1,180,60,2\n")
    with pytest.raises(InputError, match=r"t\.csv, row 2, column 'CP': unknown unit 'Kx' in 'kW/Kx'"):
        read_table(p, STREAM_VOCAB)


def test_unknown_unit_in_header_names_header_row(tmp_path):
    p = write(tmp_path, "title\nname,T_supply [degX],T_target,CP\nH1,180,60,2\n")
    with pytest.raises(InputError, match=r"row 2, column 'T_supply \[degX\]': unknown unit 'degX'"):
        read_table(p, STREAM_VOCAB)


def test_data_row_is_not_mistaken_for_units_row(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,2\n")
    t = read_table(p, STREAM_VOCAB)
    assert t.units_row is None and t.rows.tolist() == [2]


# --- aliases and mappings ---------------------------------------------------------------------------

@pytest.mark.parametrize("canonical, alias", [(c, a) for c in STREAM_VOCAB for a in ALIASES[c]])
def test_every_stream_alias_is_recognised_in_any_case(tmp_path, canonical, alias):
    others = [c for c in ("name", "T_supply", "T_target", "CP") if c != canonical][:2]
    header = ",".join([alias.upper()] + others)
    p = write(tmp_path, header + "\n" + ",".join(["1"] * 3) + "\n")
    assert canonical in read_table(p, STREAM_VOCAB).columns


def test_alias_matching_ignores_case_spaces_underscores():
    assert normalise_name("Supply_Temperature") == normalise_name("supply temperature")
    assert normalise_name("T-in") == normalise_name("Tin") == normalise_name("T in")
    assert set(COLUMN_KINDS) == set(ALIASES)


def test_split_header_readings():
    assert split_header("CP (MW/K)")[0] == ("CP", "MW/K")
    assert split_header("h [W/(m2 K)]")[0] == ("h", "W/(m2 K)")
    assert ("duty", "MW") in split_header("duty, MW")
    assert split_header("name")[0] == ("name", None)


def test_parse_column_mapping():
    assert parse_column_mapping("Stream=name,Tin=T_supply") == {"Stream": "name", "Tin": "T_supply"}
    assert parse_column_mapping("Stream No. = name; Heat load=DUTY; notes=-") == {
        "Stream No.": "name", "Heat load": "duty", "notes": "-"}
    assert parse_column_mapping({"A": "t_target"}) == {"A": "T_target"}
    assert parse_column_mapping(None) == {}


@pytest.mark.parametrize("text, match", [
    ("Stream", r"'Stream' is not of the form header=column"),
    ("Stream=nm", r"unknown column name 'nm' for 'Stream'; allowed: name, kind, T_supply"),
    ("a=name,b=name", "both 'a' and 'b' are mapped to 'name'"),
    ("a=name,A=T_supply", "header 'A' is mapped twice"),
    ("=name", "empty header"),
])
def test_parse_column_mapping_errors(text, match):
    with pytest.raises(InputError, match=match):
        parse_column_mapping(text)


def test_mapping_for_a_foreign_layout(tmp_path):
    p = write(tmp_path, "Strom,Eintritt [°C],Austritt [°C],Waermekapazitaetsstrom [kW/K],Q\n"
                        "H1,180,60,3,360\n")
    t = read_table(p, STREAM_VOCAB, columns="Strom=name,Eintritt=T_supply,Austritt=T_target,"
                                            "Waermekapazitaetsstrom=CP,Q=-")
    assert set(t.columns) == {"name", "T_supply", "T_target", "CP"}
    assert t.header("T_supply") == "Eintritt [°C]"


def test_mapping_names_a_missing_column(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,3\n")
    with pytest.raises(InputError, match=r"row 1: column mapping: there is no column 'Strom'; columns found: "
                                         r"name, T_supply, T_target, CP"):
        read_table(p, STREAM_VOCAB, columns={"Strom": "name"})


def test_mapping_to_a_column_this_table_does_not_use(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,3\n")
    with pytest.raises(InputError, match="'CP' is mapped to 'cost', which this table does not use"):
        read_table(p, STREAM_VOCAB, columns={"CP": "cost"})


def test_two_columns_for_one_name(tmp_path):
    p = write(tmp_path, "name,Ts,T_supply,T_target,CP\nH1,180,180,60,3\n")
    with pytest.raises(InputError, match=r"row 1, column 'T_supply': two columns give T_supply: 'Ts' and "
                                         r"'T_supply'"):
        read_table(p, STREAM_VOCAB)


# --- bad files ----------------------------------------------------------------------------------------

def test_missing_required_columns_lists_found_columns(tmp_path):
    p = write(tmp_path, "title line\nname,T_supply,T_target,mass flow\nH1,180,60,2\n")
    with pytest.raises(InputError, match=r"t\.csv, row 2: missing required column\(s\) CP or duty; columns "
                                         r"found: name, T_supply, T_target, mass flow"):
        read_table(p, STREAM_VOCAB, required=("name", ("CP", "duty")))


def test_no_recognisable_header(tmp_path):
    p = write(tmp_path, "a,b,c\n1,2,3\n")
    with pytest.raises(InputError, match=r"row 1: missing required column\(s\) name, T_supply; columns found: "
                                         "a, b, c"):
        read_table(p, STREAM_VOCAB, required=("name", "T_supply"))


@pytest.mark.parametrize("content, match", [
    (b"", "the file is empty"),
    (b"\n\n  \r\n", "the file is empty"),
    (b"name,T_supply,T_target,CP\n", r"row 1: no data rows under the header"),
    (b"name,T_supply,T_target,CP\n,C,C,kW/K\n\n", r"row 2: no data rows under the header"),
    (b"\x00\x01binary\x00stuff" * 50, r"not a text table \(binary content\)"),
    (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\x00" * 100, r"old binary Excel files \(\.xls\)"),
])
def test_bad_files(tmp_path, content, match):
    p = tmp_path / "bad.csv"
    p.write_bytes(content)
    with pytest.raises(InputError, match=match):
        read_table(p, STREAM_VOCAB)


def test_random_bytes(tmp_path):
    rng = np.random.default_rng(7)
    for k in range(5):
        p = tmp_path / f"random{k}.csv"
        p.write_bytes(rng.integers(0, 256, 4000, dtype=np.uint8).tobytes())
        with pytest.raises(InputError, match=rf"random{k}\.csv: this is not a text table"):
            read_table(p, STREAM_VOCAB)


def test_random_bytes_without_nul_bytes(tmp_path):
    rng = np.random.default_rng(8)
    p = tmp_path / "random.csv"
    p.write_bytes(rng.integers(1, 256, 4000, dtype=np.uint8).tobytes())
    with pytest.raises(InputError, match="not a text table"):
        read_table(p, STREAM_VOCAB)


def test_missing_file_and_directory(tmp_path):
    with pytest.raises(InputError, match=r"nope\.csv: file not found"):
        read_table(tmp_path / "nope.csv", STREAM_VOCAB)
    with pytest.raises(InputError, match="is a directory, not a table file"):
        read_table(tmp_path, STREAM_VOCAB)


def test_xlsx_that_is_not_a_zip(tmp_path):
    p = tmp_path / "fake.xlsx"
    p.write_text("name,T_supply,T_target,CP\nH1,1,2,3\n")
    with pytest.raises(InputError, match=r"fake\.xlsx: cannot read the file as an \.xlsx workbook \(it is not a "
                                         r"zip archive\)"):
        read_table(p, STREAM_VOCAB)


def test_sheet_given_for_a_csv(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,3\n")
    with pytest.raises(InputError, match="a sheet \\('Streams'\\) was given but this is a text table"):
        load_cells(p, sheet="Streams")


@pytest.mark.parametrize("cell, match", [
    ("abc", r"row 3, column 'CP': heat capacity flow rate must be a number, got 'abc'"),
    ("1,500.0", r"got '1,500.0' \(write numbers without thousands separators\)"),
    ("nan", r"row 3, column 'CP': heat capacity flow rate must be a finite number, got 'nan'"),
    ("-inf", r"must be a finite number, got '-inf'"),
    ("", r"row 3, column 'CP': empty cell: heat capacity flow rate is required"),
])
def test_bad_number_cells(tmp_path, cell, match):
    p = write(tmp_path, f'name,T_supply,T_target,CP\nH1,180,60,2\nH2,150,30,"{cell}"\n')
    with pytest.raises(InputError, match=match):
        read_table(p, STREAM_VOCAB).numbers("CP", what="heat capacity flow rate")


def test_below_absolute_zero_names_value_and_unit(tmp_path):
    p = write(tmp_path, "name,T_supply [K],T_target,CP\nH1,-3,60,2\n")
    with pytest.raises(InputError, match=r"row 2, column 'T_supply \[K\]': supply temperature -3 K is below "
                                         r"absolute zero"):
        read_table(p, STREAM_VOCAB).numbers("T_supply", what="supply temperature")


def test_absolute_zero_itself_is_accepted(tmp_path):
    p = write(tmp_path, "name,T_supply [degF],T_target [K],CP\nH1,-459.67,0,2\n")
    t = read_table(p, STREAM_VOCAB)
    assert t.numbers("T_supply")[0] == pytest.approx(-273.15)
    assert t.numbers("T_target")[0] == -273.15


def test_file_is_never_modified(tmp_path):
    p = write(tmp_path, "name,T_supply,T_target,CP\nH1,180,60,3\n")
    before, mtime = p.read_bytes(), os.stat(p).st_mtime_ns
    time.sleep(0.01)
    read_table(p, STREAM_VOCAB)
    assert p.read_bytes() == before and os.stat(p).st_mtime_ns == mtime


# --- workbooks --------------------------------------------------------------------------------------

def make_workbook(path, sheets: dict[str, list[list]]):
    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    for title, rows in sheets.items():
        ws = wb.create_sheet(title)
        for row in rows:
            ws.append(row)
    wb.save(path)
    return path


def test_workbook_named_and_first_sheet(tmp_path):
    p = make_workbook(tmp_path / "w.xlsx", {
        "Cover": [["Project 17"], ["name", "T_supply", "T_target", "CP"], ["X", 1, 2, 3]],
        "Streams": [["Plant heat balance export"], [], ["Stream", "Ts", "Tt", "mCp"], [None, "°C", "°C", "kW/K"],
                    ["H1", 180, 60, 3.0], [None, None, None, None], [101, 20, 135.5, 2]],
    })
    first = read_table(p, STREAM_VOCAB)
    assert first.sheet == "Cover" and first.text("name") == ["X"]
    t = read_table(p, STREAM_VOCAB, sheet="streams")
    assert t.sheet == "Streams" and t.header_row == 3 and t.units_row == 4
    assert t.rows.tolist() == [5, 7]
    assert t.text("name") == ["H1", "101"]
    assert t.numbers("T_target").tolist() == [60.0, 135.5]


def test_workbook_unknown_sheet_lists_sheets(tmp_path):
    p = make_workbook(tmp_path / "w.xlsx", {"A": [["x"]], "Stream data": [["y"]]})
    with pytest.raises(InputError, match=r"w\.xlsx: no sheet named 'Streams'; sheets: 'A', 'Stream data'"):
        read_table(p, STREAM_VOCAB, sheet="Streams")


def test_workbook_errors_name_sheet_row_and_column(tmp_path):
    p = make_workbook(tmp_path / "w.xlsx", {"S": [["name", "T_supply", "T_target", "CP (MW/K)"],
                                                  ["H1", 180, 60, "two"]]})
    with pytest.raises(InputError, match=r"w\.xlsx, sheet 'S', row 2, column 'CP \(MW/K\)': CP must be a number, "
                                         r"got 'two'"):
        read_table(p, STREAM_VOCAB).numbers("CP")


def test_workbook_formula_without_stored_value(tmp_path):
    p = make_workbook(tmp_path / "w.xlsx", {"S": [["name", "T_supply", "T_target", "CP"],
                                                  ["H1", 180, 60, "=1+2"]]})
    # issue: such a cell was reported as "empty"; it is a formula whose value the file never stored
    with pytest.raises(InputError, match=r"row 2, column 'CP': CP: the cell holds the formula '=1\+2', whose "
                                         r"value was never saved"):
        read_table(p, STREAM_VOCAB).numbers("CP")


def test_empty_sheet(tmp_path):
    p = make_workbook(tmp_path / "w.xlsx", {"Empty": []})
    with pytest.raises(InputError, match="the sheet is empty"):
        read_table(p, STREAM_VOCAB)


def test_multi_line_workbook_headers_and_units_label(tmp_path):
    p = make_workbook(tmp_path / "w.xlsx", {"S": [["Stream\nname", "Supply\ntemperature\n[°F]", "T_target", "CP"],
                                                  ["Units:", None, "°C", "kW/K"],
                                                  ["H1", "hot", 60, 3]]})
    t = read_table(p, STREAM_VOCAB)
    assert t.units_row == 2 and t.header("T_supply") == "Supply temperature [°F]"
    with pytest.raises(InputError, match=r"row 3, column 'Supply temperature \[°F\]': T_supply must be a number"):
        t.numbers("T_supply")


# --------------------------------------------------------------------------------------------------
# silent misreads refused (decimal separators decided per file; rows wider than the header)


def _streams(tmp_path, text, name="s.csv"):
    from heatloom.io import read_streams

    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return read_streams(p)


def test_semicolon_file_with_decimal_commas_reads_points_as_thousands(tmp_path):
    # the file writes decimals with commas (2,5), so 1.500 groups thousands: 1500 kW/K, not 1.5
    s = _streams(tmp_path, "name;T_supply;T_target;CP\nH1;180;60;2,5\nC1;20;135;1.500\n")
    assert [x.heat_capacity_flow for x in (s["H1"].segments[0], s["C1"].segments[0])] == [2.5, 1500.0]


def test_semicolon_file_whose_separator_nothing_tells_refuses_the_ambiguous_cell(tmp_path):
    with pytest.raises(InputError, match=r"row 3.*'1\.500' could be 1500 or 1\.500"):
        _streams(tmp_path, "name;T_supply;T_target;CP\nH1;180;60;3\nC1;20;135;1.500\n")


def test_two_decimal_separators_in_one_file_are_refused(tmp_path):
    with pytest.raises(InputError, match=r"row 3.*'12\.75' writes its decimals with a point"):
        _streams(tmp_path, "name;T_supply;T_target;CP\nH1;180;60;2,5\nC1;20;135;12.75\n")


def test_point_decimals_are_read_as_before(tmp_path):
    s = _streams(tmp_path, "name;T_supply;T_target;CP\nH1;180;60;2.5\nC1;20;135;1.25\n")
    assert s["C1"].segments[0].heat_capacity_flow == 1.25


def test_a_row_wider_than_the_header_is_refused(tmp_path):
    # an unquoted decimal comma shifts the columns: CP would read 5 and h 5 (invented data)
    with pytest.raises(InputError, match=r"s\.csv, row 2: this row has 6 or more filled fields but the header has 5"):
        _streams(tmp_path, "name,T_supply,T_target,CP,h\nreactor effluent,210,80,5,5,0.8\nfeed,60,190,4.8,0.8\n")


def test_a_formula_whose_value_was_never_saved_is_named_as_such(tmp_path):
    # openpyxl writes formulas without computing them: the file holds no value for D3 (invented data)
    import openpyxl

    from heatloom.io import read_streams

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["name", "T_supply", "T_target", "CP"])
    ws.append(["H1", 180, 60, 3.0])
    ws.append(["C1", 20, 135, "=D2*2"])
    p = tmp_path / "plant.xlsx"
    wb.save(p)
    with pytest.raises(InputError, match=r"row 3, column 'CP'.*formula '=D2\*2', whose value was never saved"):
        read_streams(p)


def test_devices_and_pipes_are_refused_before_reading(tmp_path):
    from heatloom.io.cells import read_input_bytes

    with pytest.raises(InputError, match=r"/dev/zero: not a regular file"):
        read_table("/dev/zero", STREAM_VOCAB)
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)                         # reading a pipe with no writer would hang: it must be refused first
    with pytest.raises(InputError, match=r"pipe\.csv: not a regular file"):
        read_input_bytes(fifo)


def test_a_file_over_the_size_limit_is_refused(tmp_path):
    from heatloom.io.cells import read_input_bytes

    p = tmp_path / "big.csv"
    p.write_bytes(b"name,T_supply,T_target,CP\n" + b"H1,180,60,3\n" * 1000)
    with pytest.raises(InputError, match=r"big\.csv: the table file is 0\.0 MiB, over the 0 MiB heatloom reads"):
        read_input_bytes(p, what="table file", max_bytes=1024)
    assert read_input_bytes(p).startswith(b"name,")
