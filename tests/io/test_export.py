"""Writing results safely: no spreadsheet formula runs, nothing is written through a link, an interrupted
write leaves nothing behind.

The escaping rule is the OWASP guidance on CSV (formula) injection (OWASP Foundation, *CSV Injection*,
community page, retrieved 2026): text cells beginning with =, +, -, @, tab or carriage return are
prefixed with an apostrophe in CSV; in XLSX they are stored as text cells (cell type ``s``), never as formulas.
"""

import csv
import os

import openpyxl
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom.cli import main
from heatloom.io.cells import FORMULA_TRIGGERS
from heatloom.io.export import OutputDirectory, neutralise, rounded, to_jsonable, unit_precision

HOSTILE = "=cmd|' /C calc'!A0"

# stream names chosen to look like formulas (invented data)
TABLE = f"""name,T_supply,T_target,CP
"{HOSTILE}",180,60,3.0
+SUM(A1),150,30,1.0
@lookup,20,135,2.0
-3 feed,80,140,4.5
"""


def run(capsys, *args):
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


@pytest.mark.parametrize("first", FORMULA_TRIGGERS)
def test_every_trigger_is_neutralised_and_numbers_are_not(first):
    assert neutralise(first + "x") == "'" + first + "x"
    assert neutralise("reactor" + first) == "reactor" + first
    assert neutralise(-5.0) == -5.0 and neutralise(3) == 3


def test_target_outputs_carry_no_live_formula(capsys, tmp_path):
    src = tmp_path / "streams.csv"
    src.write_text(TABLE, encoding="utf-8")
    out_dir = tmp_path / "o"
    code, _, err = run(capsys, "target", src, "--dtmin", "10", "--out", out_dir)
    assert code == 0, err
    with open(out_dir / "stream_table.csv", encoding="utf-8", newline="") as f:
        names = [row[0] for row in csv.reader(f)][1:]
    assert "'" + HOSTILE in names and "'+SUM(A1)" in names and "'@lookup" in names and "'-3 feed" in names
    assert not any(n.startswith(FORMULA_TRIGGERS) for n in names)
    wb = openpyxl.load_workbook(out_dir / "targets.xlsx")
    cells = [c for ws in wb.worksheets for row in ws.iter_rows() for c in row if c.value is not None]
    assert not [c.coordinate for c in cells if c.data_type == "f"]          # no formula anywhere
    hostile = [c for c in cells if c.value == HOSTILE]
    assert hostile and all(c.data_type == "s" for c in hostile)
    # the numbers stay numbers
    assert pd.read_excel(out_dir / "targets.xlsx", sheet_name="targets")["value"].iloc[1] == pytest.approx(
        pd.read_json(out_dir / "targets.json", typ="series")["hot_utility"])


def test_force_replaces_a_hard_link_without_touching_the_input(capsys, tmp_path):
    src = tmp_path / "in" / "streams.csv"
    src.parent.mkdir()
    src.write_text(TABLE, encoding="utf-8")
    out_dir = tmp_path / "o"
    out_dir.mkdir()
    os.link(src, out_dir / "stream_table.csv")             # an output's name, hard-linked to the input
    code, _, err = run(capsys, "target", src, "--out", out_dir, "--force")
    assert code == 2 and "input files" in err             # the same file as an input: refused
    assert src.read_text(encoding="utf-8") == TABLE


def test_force_replaces_a_hard_link_to_another_file_instead_of_writing_through_it(tmp_path):
    other = tmp_path / "keep.csv"
    other.write_text("precious\n", encoding="utf-8")
    out = OutputDirectory(tmp_path / "o", force=True)
    out.path.mkdir()
    os.link(other, out.path / "a.csv")
    out.csv("a.csv", pd.DataFrame({"x": [1]}))
    assert other.read_text(encoding="utf-8") == "precious\n"       # the other name keeps its content
    assert (out.path / "a.csv").read_text(encoding="utf-8") == "x\n1\n"


def test_a_symlink_out_of_the_folder_is_refused(capsys, tmp_path):
    src = tmp_path / "streams.csv"
    src.write_text(TABLE, encoding="utf-8")
    outside = tmp_path / "outside.json"
    outside.write_text("{}", encoding="utf-8")
    out_dir = tmp_path / "o"
    out_dir.mkdir()
    (out_dir / "targets.json").symlink_to(outside)
    code, _, err = run(capsys, "target", src, "--out", out_dir, "--force")
    assert code == 2 and "symbolic link" in err and "targets.json" in err
    assert "Traceback" not in err
    assert outside.read_text(encoding="utf-8") == "{}"


def test_an_interrupted_write_leaves_nothing(tmp_path):
    out = OutputDirectory(tmp_path / "o")

    def half(path):
        path.write_text("half a workbook", encoding="utf-8")
        raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        out.write("study.xlsx", half)
    assert list(out.path.iterdir()) == []                  # no partial file, no temporary file
    assert out.written == []


def test_an_output_folder_that_cannot_be_made_is_an_input_error(capsys, tmp_path):
    # a folder under a regular file can never be created, whoever runs the test (root included)
    src = tmp_path / "streams.csv"
    src.write_text(TABLE, encoding="utf-8")
    blocker = tmp_path / "file"
    blocker.write_text("x", encoding="utf-8")
    code, _, err = run(capsys, "target", src, "--out", blocker / "results")
    assert code == 2 and "cannot create the output folder" in err and str(blocker) in err
    assert "Traceback" not in err and "bug" not in err


# --------------------------------------------------------------------------------------------------
# output precision (issue 15: float noise), heatloom.defaults.OUTPUT_PRECISION


def test_float_noise_is_rounded_away_in_json_csv_and_xlsx(tmp_path):
    import json

    from heatloom import defaults

    assert dict(defaults.OUTPUT_PRECISION) == {"duty": 3, "temperature": 3, "area": 3, "money": 2}
    out = OutputDirectory(tmp_path)
    frame = pd.DataFrame({"unit": ["E1"], "duty [kW]": [772.5000000000009], "hot in [°C]": [149.85000000000002],
                          "LMTD [K]": [27.659887023], "area [m²]": [14.310735723567204],
                          "cost [EUR/year]": [2721.733452441149], "CP [kW/K]": [4.800000000000011]})
    out.csv("units.csv", frame)
    row = next(csv.DictReader((tmp_path / "units.csv").open(encoding="utf-8")))
    assert row["duty [kW]"] == "772.5" and row["hot in [°C]"] == "149.85" and row["LMTD [K]"] == "27.66"
    assert row["area [m²]"] == "14.311" and row["cost [EUR/year]"] == "2721.73"
    assert row["CP [kW/K]"] == "4.800000000000011"      # a heat capacity flow rate is not a rounded kind
    out.workbook("units.xlsx", {"units": frame})
    ws = openpyxl.load_workbook(tmp_path / "units.xlsx")["units"]
    assert [c.value for c in ws[2]][1:6] == [772.5, 149.85, 27.66, 14.311, 2721.73]
    out.json("result.json", {"hot_utility": 772.5000000000009, "exchangers": [{"duty": 1659.5000000000011,
                             "hot_in": 149.85000000000002, "area": 144.42154023057333, "u": 0.631578947368421,
                             "cost": 2721.733452441149}], "utilities": {"steam": 100.00000000000003}})
    data = json.loads((tmp_path / "result.json").read_text(encoding="utf-8"))
    assert data == {"hot_utility": 772.5, "exchangers": [{"duty": 1659.5, "hot_in": 149.85, "area": 144.422,
                    "u": 0.631578947368421, "cost": 2721.73}], "utilities": {"steam": 100.0}}
    # a long table: each value takes the unit of its row
    out.workbook("targets.xlsx", {"t": pd.DataFrame({"quantity": ["hot utility", "net CP"],
                                                     "value": [772.5000000000009, 4.800000000000011],
                                                     "unit": ["kW", "kW/K"]})})
    ws = openpyxl.load_workbook(tmp_path / "targets.xlsx")["t"]
    assert ws["B2"].value == 772.5 and ws["B3"].value == 4.800000000000011


@settings(max_examples=200, deadline=None)
@given(st.floats(min_value=-1e9, max_value=1e9, allow_nan=False),
       st.sampled_from(["kW", "°C", "K", "m²", "USD", "EUR/year", "money/year"]))
def test_rounding_changes_a_value_by_at_most_half_its_last_place(x, unit):
    places = unit_precision(unit)
    y = rounded(x, places)
    assert abs(y - x) <= 0.5 * 10.0 ** -places * (1 + 1e-9) + abs(x) * 1e-15
    assert rounded(y, places) == y                        # idempotent: writing twice changes nothing
    assert to_jsonable({"duty": x})["duty"] == rounded(x, 3)


def test_only_the_stated_kinds_are_rounded():
    for unit in ("kW/K", "kW/(m²·K)", "USD/(kW·year)", "-", "%", "1/year", "h/year", None):
        assert unit_precision(unit) is None
        assert rounded(0.123456789, unit_precision(unit)) == 0.123456789
    assert to_jsonable({"wall_time": 0.123456789, "gap": 1e-7, "interest_rate": 0.0812345}) == \
        {"wall_time": 0.123456789, "gap": 1e-7, "interest_rate": 0.0812345}


# --------------------------------------------------------------------------------------------------
# --out naming a folder of inputs: results go to its subfolder (issue 14, item 8)


def test_results_go_to_a_subfolder_of_a_folder_holding_inputs(tmp_path):
    from heatloom.io.export import RESULTS_FOLDER

    case = tmp_path / "case"
    case.mkdir()
    (case / "streams.csv").write_text(TABLE, encoding="utf-8")
    (case / "notes.txt").write_text("mine", encoding="utf-8")
    out = OutputDirectory(case, [case / "streams.csv"])
    assert out.path == case / RESULTS_FOLDER
    assert out.redirect_note == (f"--out {case} holds input files of this run (streams.csv): results go to "
                                 f"{case / RESULTS_FOLDER}/, never beside the inputs")
    out.text("a.txt", "x")
    assert sorted(p.name for p in case.iterdir()) == ["notes.txt", RESULTS_FOLDER, "streams.csv"]
    # a folder without inputs is used as it is
    other = OutputDirectory(tmp_path / "elsewhere", [case / "streams.csv"])
    assert other.path == tmp_path / "elsewhere" and other.redirect_note is None
    # an input named through a link in --out counts, and so does --out where a linked input lives
    linked = tmp_path / "linked"
    linked.mkdir()
    os.symlink(case / "streams.csv", linked / "feed.csv")
    assert OutputDirectory(linked, [linked / "feed.csv"]).path == linked / RESULTS_FOLDER
    assert OutputDirectory(case, [linked / "feed.csv"]).path == case / RESULTS_FOLDER


def test_target_out_into_the_case_folder_says_where_results_went(capsys, tmp_path):
    case = tmp_path / "case"
    case.mkdir()
    (case / "streams.csv").write_text("name,T_supply,T_target,CP\nH1,180,60,3\nC1,20,135,2\n", encoding="utf-8")
    code, out, err = run(capsys, "target", case / "streams.csv", "--out", case)
    assert code == 0, err
    assert sorted(p.name for p in case.iterdir()) == ["results", "streams.csv"]
    assert "results go to" in err and f"{case / 'results'}/" in out
    code, out, err = run(capsys, "target", case / "streams.csv", "--out", case, "--force", "--quiet")
    assert code == 0 and err == ""


def test_tables_of_inputs_are_written_exactly(tmp_path):
    # a stream table as read must read back exactly (issue 14): its numbers are never rounded
    from heatloom.io import read_streams
    from heatloom.model import Stream, StreamTable

    table = StreamTable([Stream.simple("H1", 150.123456, 60.0000001, 0.0625), Stream.simple("C1", 30, 120, 2.5)])
    out = OutputDirectory(tmp_path)
    back = read_streams(out.csv("stream_table.csv", table.to_frame()))
    assert [(s.supply_temperature, s.target_temperature, s.duty) for s in back] == \
        [(s.supply_temperature, s.target_temperature, s.duty) for s in table]
