"""The `heatloom target` command: output, exit codes, error messages, files written and never overwritten.

Published numbers: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (50 kW hot,
30 kW cold utility, pinch 90/80 °C at ΔTmin 10 K). The solvent-recovery demo data are invented.
"""

import json
import subprocess
import sys
from pathlib import Path

import pytest

from heatloom.cli import main

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "case_studies" / "solvent_recovery"

SINNOTT_CSV = """name,T_supply,T_target,CP
1,180,60,3.0
2,150,30,1.0
3,20,135,2.0
4,80,140,4.5
"""


@pytest.fixture
def sinnott_csv(tmp_path):
    p = tmp_path / "sinnott.csv"
    p.write_text(SINNOTT_CSV, encoding="utf-8")
    return p


def run(capsys, *args):
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_json_has_the_published_targets(capsys, sinnott_csv):
    code, out, err = run(capsys, "target", sinnott_csv, "--dtmin", "10", "--json")
    assert code == 0
    data = json.loads(out)  # exactly one JSON object on stdout
    # Sinnott, C&R Vol. 6, ch. 3, Table 3.6: 50 kW / 30 kW, pinch 90 / 80 °C
    assert data["hot_utility"] == pytest.approx(50.0)
    assert data["cold_utility"] == pytest.approx(30.0)
    assert data["pinch"]["hot"] == 90 and data["pinch"]["cold"] == 80
    assert data["dtmin"] == 10
    assert data["utilities"] == {"hot utility": pytest.approx(50.0), "cold utility": pytest.approx(30.0)}


def test_human_output_states_defaults(capsys, sinnott_csv):
    code, out, _ = run(capsys, "target", sinnott_csv)
    assert code == 0
    assert "10 K (default; set with --dtmin)" in out
    assert "ideal utilities assumed" in out
    assert "licensed engineers" in out
    assert "50.0 kW" in out and "30.0 kW" in out


def test_utility_levels_in_json(capsys):
    code, out, _ = run(capsys, "target", DEMO / "streams.csv", "--dtmin", "10", "--utilities",
                       DEMO / "utilities.csv", "--json")
    assert code == 0
    data = json.loads(out)
    assert set(data["utilities"]) == {"HP steam", "MP steam", "cooling water"}
    assert sum(v for k, v in data["utilities"].items() if "steam" in k) == pytest.approx(data["hot_utility"])
    assert data["utilities"]["cooling water"] == pytest.approx(data["cold_utility"])


def test_out_writes_files_and_never_overwrites(capsys, sinnott_csv, tmp_path):
    out_dir = tmp_path / "results"
    code, _, _ = run(capsys, "target", sinnott_csv, "--out", out_dir, "--plot")
    assert code == 0
    names = {p.name for p in out_dir.iterdir()}
    for n in ("targets.json", "stream_table.csv", "problem_table.csv", "targets.xlsx", "composite_curves.png",
              "composite_curves.svg", "grand_composite_curve.png", "grand_composite_curve.svg"):
        assert n in names
    before = (out_dir / "targets.json").read_bytes()
    code, _, err = run(capsys, "target", sinnott_csv, "--dtmin", "20", "--out", out_dir)
    assert code == 2 and "already exists" in err and "--force" in err
    assert (out_dir / "targets.json").read_bytes() == before
    code, _, _ = run(capsys, "target", sinnott_csv, "--dtmin", "20", "--out", out_dir, "--force")
    assert code == 0
    assert json.loads((out_dir / "targets.json").read_text())["dtmin"] == 20


def test_input_file_is_never_written_over(capsys, tmp_path):
    src = tmp_path / "stream_table.csv"          # named like one of target's outputs, in the --out folder
    src.write_text(SINNOTT_CSV, encoding="utf-8")
    code, _, err = run(capsys, "target", src, "--out", tmp_path, "--force")
    # the folder holds an input of the run, so the results go to its results/ subfolder, said on stderr
    assert code == 0 and "results" in err
    assert src.read_text(encoding="utf-8") == SINNOTT_CSV
    assert (tmp_path / "results" / "stream_table.csv").is_file()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["results", "stream_table.csv"]


def test_workbook_has_every_sheet(capsys, sinnott_csv, tmp_path):
    import pandas as pd

    run(capsys, "target", sinnott_csv, "--out", tmp_path / "o")
    sheets = pd.read_excel(tmp_path / "o" / "targets.xlsx", sheet_name=None)
    assert {"targets", "streams", "problem table", "curves"} <= set(sheets)
    assert "T_supply [°C]" in sheets["streams"].columns


def test_plot_writes_the_balanced_composites_and_the_driving_force(capsys, sinnott_csv, tmp_path):
    import re

    from heatloom.commands.target import PLOT_FILES

    out_dir = tmp_path / "plots"
    code, _, _ = run(capsys, "target", sinnott_csv, "--dtmin", "10", "--out", out_dir, "--plot")
    assert code == 0
    names = {p.name for p in out_dir.iterdir()}
    assert {f"{n}.{e}" for n in PLOT_FILES for e in ("png", "svg")} <= names
    assert {"balanced_composite_curves", "driving_force"} <= set(PLOT_FILES)
    texts = re.findall(r"<!-- (.*?) -->", (out_dir / "driving_force.svg").read_text(encoding="utf-8"))
    # Sinnott, C&R Vol. 6, ch. 3, Table 3.6: the composites come closest, ΔTmin 10 K, at the pinch (90 / 80 °C),
    # 150 kW along the hot composite (hand calculation: 30 kW of stream 2 below 60 °C, then 4 kW/K from 60 to 90 °C)
    assert "smallest ΔT 10 K at 150 kW (pinch)" in texts
    texts = re.findall(r"<!-- (.*?) -->", (out_dir / "balanced_composite_curves.svg").read_text(encoding="utf-8"))
    assert "hot utility (assumed): 50 kW" in texts and "cold utility (assumed): 30 kW" in texts
    texts = re.findall(r"<!-- (.*?) -->", (out_dir / "shifted_composite_curves.svg").read_text(encoding="utf-8"))
    assert "pinch 85 °C shifted" in texts


def test_plot_needs_out(capsys, sinnott_csv):
    code, _, err = run(capsys, "target", sinnott_csv, "--plot")
    assert code == 2 and "--out" in err


@pytest.mark.parametrize(("content", "expect"), [
    ("name,T_supply,T_target,CP\nA,100,50,abc\n", r"row 2, column 'CP'"),
    ("name,T_supply,T_target,CP\nA,100,50,-1\n", r"row 2, column 'CP'.*> 0"),
    ("name,T_supply,T_target,CP\nA,100,100,1\n", r"row 2"),
    ("name,T_supply,T_target\nA,100,50\n", r"CP"),
    ("", r"empty"),
    ("name,T_supply,T_target,CP\n", r"no data|header only|no stream"),
    ("name,T_supply [K],T_target,CP\nA,-5,50,1\n", r"absolute zero"),
    ("name,T_supply [furlongs],T_target,CP\nA,100,50,1\n", r"unit"),
    ("name,T_supply,T_target,CP\nA,100,50,nan\n", r"row 2, column 'CP'"),
    ("name,T_supply,T_target,CP\nA,100,50,1\nA,60,30,1\n", r"row 3"),
])
def test_bad_input_one_line_exit_2(capsys, tmp_path, content, expect):
    import re

    p = tmp_path / "bad.csv"
    p.write_text(content, encoding="utf-8")
    code, out, err = run(capsys, "target", p)
    assert code == 2
    assert out == ""
    assert err.count("\n") == 1 and err.startswith("heatloom: error: ")
    assert "bad.csv" in err
    assert re.search(expect, err, re.IGNORECASE), err
    assert "Traceback" not in err


def test_missing_and_binary_files(capsys, tmp_path):
    code, _, err = run(capsys, "target", tmp_path / "nope.csv")
    assert code == 2 and "nope.csv" in err
    b = tmp_path / "blob.csv"
    b.write_bytes(bytes(range(256)) * 4)
    code, _, err = run(capsys, "target", b)
    assert code == 2 and "blob.csv" in err


def test_infeasible_utilities_exit_3(capsys, sinnott_csv, tmp_path):
    u = tmp_path / "u.csv"
    u.write_text("name,T_supply,T_target,cost\nwarm oil,100,90,50\ncooling water,20,30,5\n", encoding="utf-8")
    code, out, err = run(capsys, "target", sinnott_csv, "--utilities", u)
    assert code == 3 and "infeasible" in err and out == ""


@pytest.mark.slow
def test_console_script_and_module_entry_point(sinnott_csv):
    # the installed console command and `python -m heatloom` run the same code
    for cmd in ([sys.executable, "-m", "heatloom"], [str(Path(sys.executable).parent / "heatloom")]):
        res = subprocess.run([*cmd, "target", str(sinnott_csv), "--json"], capture_output=True, text=True,
                             timeout=120)
        assert res.returncode == 0, res.stderr
        assert json.loads(res.stdout)["hot_utility"] == pytest.approx(50.0)


def test_bad_option_value_exits_2(capsys, sinnott_csv):
    with pytest.raises(SystemExit) as e:
        main(["target", str(sinnott_csv), "--dtmin", "-3"])
    assert e.value.code == 2


@pytest.mark.parametrize("row, column, words", [
    ("H1,180,60,1e308", "CP", "above 1e+09 kW/K"),          # overflowed to 'heat recovery inf kW' before
    ("H1,1e300,60,3", "T_supply", "above 5000 °C"),
])
def test_absurd_magnitudes_are_refused_with_their_location(capsys, tmp_path, row, column, words):
    p = tmp_path / "s.csv"
    p.write_text(f"name,T_supply,T_target,CP\n{row}\nC1,20,135,2\n", encoding="utf-8")
    code, out, err = run(capsys, "target", p, "--json")
    assert code == 2 and out == ""
    assert f"row 2, column '{column}'" in err and words in err and "inf" not in err


def test_a_misspelt_optional_column_is_named_and_strict_refuses_it(capsys, tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("name,T_supply,T_target,CP,dT_min_contib\nH1,180,60,3,2\nC1,20,135,2,2\n", encoding="utf-8")
    code, out, err = run(capsys, "target", p, "--json")
    assert code == 0 and json.loads(out)["hot_utility"] >= 0
    assert "'dT_min_contib' (did you mean 'dT_min_contrib'?)" in err and "ignored" in err
    code, out, err = run(capsys, "target", p, "--strict")
    assert code == 2 and out == ""
    assert "row 1, column 'dT_min_contib': unknown column(s)" in err and "Traceback" not in err


def test_a_negative_utility_price_is_bad_input_with_its_row(capsys, tmp_path):
    # once a solver error "LP unbounded" with exit 1 and no location
    u = tmp_path / "u.csv"
    u.write_text("name,T_supply,T_target,cost\nsteam,250,249,-5\nCW,20,30,10\n", encoding="utf-8")
    code, _, err = run(capsys, "target", DEMO / "streams.csv", "--utilities", u)
    assert code == 2 and "u.csv, row 2, column 'cost'" in err and "price must be >= 0" in err


def test_workbook_targets_sheet_carries_what_json_carries_and_the_currency(capsys, tmp_path):
    # issue 15: the XLSX targets sheet left out area, units and shells; cost headers said [money] although
    # the utility prices name EUR. Sinnott Table 3.6 streams (50 kW hot, 30 kW cold at ΔTmin 10 K) with an
    # invented h of 0.5 kW/(m²·K) on every stream and invented utilities.
    import pandas as pd

    with_h = "\n".join(line + (",h" if k == 0 else ",0.5") for k, line in enumerate(SINNOTT_CSV.splitlines()))
    (tmp_path / "s.csv").write_text(with_h + "\n", encoding="utf-8")
    (tmp_path / "u.csv").write_text("name,T_supply,T_target,cost [EUR/kW/yr],h\nsteam,250,249,120,4\n"
                                    "water,10,15,10,1.5\n", encoding="utf-8")
    argv = ("target", tmp_path / "s.csv", "--utilities", tmp_path / "u.csv")
    code, out, _ = run(capsys, *argv, "--json")
    assert code == 0
    data = json.loads(out)
    assert (data["hot_utility"], data["cold_utility"]) == pytest.approx((50.0, 30.0))      # Sinnott Table 3.6
    code, out, _ = run(capsys, *argv, "--out", tmp_path / "o")
    assert "[EUR/year]" in out and "[money]" not in out
    sheets = pd.read_excel(tmp_path / "o" / "targets.xlsx", sheet_name=None)
    rows = sheets["targets"].set_index("quantity")["value"]
    assert float(rows["minimum area (Townsend–Linnhoff)"]) == pytest.approx(data["area"], abs=1e-3)
    assert int(rows["minimum units (Euler, N − 1)"]) == data["units"]
    assert int(rows["minimum units for maximum energy recovery"]) == data["units_mer"]
    assert int(rows["minimum 1-2 shells"]) == data["shells"]
    assert {"price [EUR/(kW·year)]", "annual cost [EUR/year]"} <= set(sheets["utilities"].columns)
