"""The `heatloom retrofit` command: JSON shape, the case study end to end, files, refusals.

Run through a parser built with heatloom.commands.retrofit.register (added to the command list here when
heatloom.cli does not list it yet). The case study data are invented (case_studies/existing_network); the
published facts behind the numbers are checked in tests/retrofit/test_retrofit.py.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

import heatloom.cli as cli

ROOT = Path(__file__).resolve().parents[2]
CASE = ROOT / "case_studies" / "existing_network"
FAST = ("--sizes", "0.5,1", "--max-candidates", "5")


@pytest.fixture(autouse=True)
def with_retrofit(monkeypatch):
    if "retrofit" not in cli.COMMANDS:
        monkeypatch.setattr(cli, "COMMANDS", cli.COMMANDS + ("retrofit",))


def run(capsys, *args):
    code = cli.main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


@pytest.fixture
def workbook_case(tmp_path):
    """The case study as a plant workbook: streams, utilities and network on sheets of .xlsx files."""
    folder = tmp_path / "plant"
    folder.mkdir()
    for name in ("streams", "utilities", "network"):
        frame = pd.read_csv(CASE / f"{name}.csv")
        with pd.ExcelWriter(folder / f"{name}.xlsx", engine="openpyxl") as xw:
            frame.to_excel(xw, sheet_name=name, index=False)
    shutil.copy(CASE / "costs.json", folder / "costs.json")
    return folder


def test_json_shape_on_the_case_folder(capsys):
    code, out, err = run(capsys, "retrofit", CASE, "--json", *FAST)
    assert code == 0
    data = json.loads(out)
    assert {"current", "targets", "area_efficiency", "cross_pinch", "options"} <= set(data)
    assert set(data["current"]) >= {"hot_utility", "cold_utility"}
    assert set(data["targets"]) >= {"hot_utility", "cold_utility"}
    # 150 kW: the problem table by hand at ΔTmin 10 K (tests/retrofit/test_retrofit.py, _problem_table_hot_utility)
    assert data["targets"]["hot_utility"] == pytest.approx(150.0)
    # 995.16 kW: recomputed with ht's ε-NTU relations in
    # tests/retrofit/test_retrofit.py::test_case_hot_utility_by_hand_with_ht
    assert data["current"]["hot_utility"] == pytest.approx(995.16, abs=0.01)
    # regression value (heatloom's own result, not a source): E-101 moves 350 kW across the pinch
    assert data["cross_pinch"]["E-101"] == pytest.approx(350.0, abs=0.5)
    assert 0 < data["area_efficiency"]["alpha"] < 1
    assert data["options"]
    npv = [o["npv"] for o in data["options"]]
    assert npv == sorted(npv, reverse=True)
    for o in data["options"]:
        assert {"changes", "saving", "saving_per_year", "investment", "payback_years", "npv", "network"} <= set(o)
        assert all(isinstance(c, str) and c for c in o["changes"])
        assert o["payback_years"] == pytest.approx(o["investment"] / o["saving_per_year"])
        net = o["network"]
        assert {"exchangers", "heaters", "coolers", "hot_utility", "cold_utility", "units"} <= set(net)
        # three values each written to 0.001 kW (heatloom.defaults.OUTPUT_PRECISION)
        assert net["hot_utility"] == pytest.approx(data["current"]["hot_utility"] - o["saving"], abs=1.5e-3)
    assert data["interest_rate"] == 0.08 and data["years"] == 8                 # from the case's costs.json


def test_budget_and_payback_in_json(capsys):
    code, out, _ = run(capsys, "retrofit", CASE, "--json", "--budget", "30000", "--max-payback", "0.5", *FAST)
    assert code == 0
    for o in json.loads(out)["options"]:
        assert o["investment"] <= 30000 * 1.001
        assert o["payback_years"] <= 0.5 * 1.001


@pytest.mark.slow
def test_spreadsheet_to_ranked_costed_options_with_figures(capsys, workbook_case, tmp_path):
    out_dir = tmp_path / "results"
    code, out, err = run(capsys, "retrofit", workbook_case, "--out", out_dir, *FAST)
    assert code == 0
    assert "options ranked by net present value" in out and "rank" in out
    for name in ("retrofit.json", "retrofit_options.csv", "retrofit_changes.csv", "retrofit.xlsx",
                 "retrofit_grid_existing.png", "retrofit_grid_existing.svg", "retrofit_grid_proposed.png",
                 "retrofit_grid_proposed.svg", "retrofit_savings.png", "retrofit_savings.svg"):
        assert (out_dir / name).stat().st_size > 0, name
    options = pd.read_csv(out_dir / "retrofit_options.csv")
    data = json.loads((out_dir / "retrofit.json").read_text(encoding="utf-8"))
    assert len(options) == len(data["options"]) > 0
    assert options["rank"].tolist() == list(range(1, len(options) + 1))
    wb = openpyxl.load_workbook(out_dir / "retrofit.xlsx", read_only=True)
    assert {"options", "changes", "existing units"} <= set(wb.sheetnames)
    wb.close()
    # a second run does not overwrite without --force, and does with it
    code, _, err = run(capsys, "retrofit", workbook_case, "--out", out_dir, *FAST)
    assert code == 2 and "already exists" in err
    code, _, _ = run(capsys, "retrofit", workbook_case, "--out", out_dir, "--force", "--quiet", *FAST)
    assert code == 0


def test_files_given_one_by_one(capsys):
    code, out, _ = run(capsys, "retrofit", CASE / "network.csv", "--streams", CASE / "streams.csv",
                       "--utilities", CASE / "utilities.csv", "--dtmin", "10", "--json", *FAST)
    assert code == 0
    data = json.loads(out)
    assert data["interest_rate"] == 0.1            # no costs file: the package defaults
    assert data["options"]


def test_missing_stream_table_is_an_input_error(capsys, tmp_path):
    code, out, err = run(capsys, "retrofit", CASE / "network.csv")
    assert code == 2
    assert "no streams table: give --streams FILE" in err
    assert out == ""


def test_earlier_result_in_the_out_folder_is_kept(capsys, tmp_path):
    # --out names the case folder, which holds the inputs: the results go to its subfolder 'results'
    folder = tmp_path / "case"
    shutil.copytree(CASE, folder, ignore=shutil.ignore_patterns("outputs"))
    (folder / "results").mkdir()
    (folder / "results" / "retrofit.json").write_text("{}", encoding="utf-8")
    code, _, err = run(capsys, "retrofit", folder, "--out", folder, *FAST)
    assert code == 2 and "already exists" in err
    assert (folder / "results" / "retrofit.json").read_text(encoding="utf-8") == "{}"


def test_out_into_the_case_folder_writes_into_its_results_subfolder(capsys, tmp_path):
    folder = tmp_path / "case"
    shutil.copytree(CASE, folder, ignore=shutil.ignore_patterns("outputs", "report"))
    before = sorted(p.name for p in folder.iterdir())
    code, out, err = run(capsys, "retrofit", folder, "--out", folder, *FAST)
    assert code == 0, err
    assert sorted(p.name for p in folder.iterdir()) == sorted(before + ["results"])   # nothing beside the inputs
    assert (folder / "results" / "retrofit.json").is_file()
    assert f"note: --out {folder} holds input files of this run (" in err
    assert f"results go to {folder / 'results'}/, never beside the inputs" in err
    assert f"files to {folder / 'results'}/" in out


def test_design_units_table_is_read_by_retrofit(capsys, tmp_path):
    # issue 14 item 16: the network design writes is an existing network for retrofit.  Streams, film
    # coefficients and utilities of Yee & Grossmann (1990) as given by Roetzel, Luo & Chen (2020), ch. 6,
    # Table 6.16 (tests/data/references/synthesis_yee_grossmann_2h2c.json); at ΔTmin 10 K the design has no
    # stream split.  Minimum hot utility 200 kW by the problem table by hand (tests/io/test_design_table_roundtrip.py).
    data = json.loads((ROOT / "tests" / "data" / "references" / "synthesis_yee_grossmann_2h2c.json").read_text())
    k = 273.15
    (tmp_path / "streams.csv").write_text("name,T_supply [K],T_target [K],CP [kW/K],h [kW/m2K]\n" + "".join(
        f"{x['name']},{x['T_supply']},{x['T_target']},{x['CP']},{x['h']}\n" for x in data["streams"]))
    (tmp_path / "utilities.csv").write_text("name,T_supply [°C],T_target [°C],cost [USD/(kW·year)],h [kW/m2K]\n" + "".join(
        f"{x['name']},{x['T_supply'] - k:.2f},{x['T_target'] - k:.2f},{x['cost_per_kW_year']},{x['h']}\n"
        for x in data["utilities"]))
    inputs = ("--utilities", tmp_path / "utilities.csv")
    code, _, err = run(capsys, "design", tmp_path / "streams.csv", *inputs, "--dtmin", "10",
                       "--out", tmp_path / "designed", "--quiet")
    assert code == 0, err
    units = pd.read_csv(tmp_path / "designed" / "design_units.csv")
    assert (units["hot fraction [-]"] == 1).all() and (units["cold fraction [-]"] == 1).all()
    for source, extra in ((tmp_path / "designed" / "design_units.csv", ()),
                          (tmp_path / "designed" / "design.xlsx", ("--network-sheet", "units"))):
        code, out, err = run(capsys, "retrofit", source, "--streams", tmp_path / "streams.csv", *inputs,
                             "--dtmin", "10", "--json", "--strict", *extra, *FAST)
        assert code == 0, err
        result = json.loads(out)
        assert result["targets"]["hot_utility"] == pytest.approx(200.0, rel=1e-9)
        # a maximum-energy-recovery design sits on its targets at its own areas
        assert result["current"]["hot_utility"] == pytest.approx(200.0, rel=1e-3)


def test_console_summary_gives_the_safety_note_once(capsys):
    # the cost basis used to carry the safety note as well, so the summary printed it twice (issue 15)
    from heatloom.defaults import SAFETY_NOTE

    code, out, _ = run(capsys, "retrofit", CASE)
    assert code == 0
    assert out.count(SAFETY_NOTE) == 1
    assert "Costs in USD (from the costs file)" in out        # the cost basis itself is still there
