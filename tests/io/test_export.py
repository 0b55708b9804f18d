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

from heatloom.cli import main
from heatloom.io.cells import FORMULA_TRIGGERS
from heatloom.io.export import OutputDirectory, neutralise

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
