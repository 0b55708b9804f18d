"""The `heatloom sweep` command (JSON shape, files, refusals, progress) and the area keys of `heatloom target`.

Published numbers: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (50 kW hot,
30 kW cold utility at ΔTmin 10 K); the film coefficients added to its streams are invented.
"""

import argparse
import json
import sys

import pandas as pd
import pytest

import heatloom.cli as cli
from heatloom.commands import sweep as sweep_command

SINNOTT_H_CSV = """name,T_supply,T_target,CP,h
1,180,60,3.0,0.5
2,150,30,1.0,0.5
3,20,135,2.0,0.5
4,80,140,4.5,0.5
"""

SINNOTT_CSV = """name,T_supply,T_target,CP
1,180,60,3.0
2,150,30,1.0
3,20,135,2.0
4,80,140,4.5
"""

POINT_KEYS = {"dtmin", "hot_utility", "cold_utility", "area", "units", "capital_cost", "energy_cost",
              "total_annual_cost"}


@pytest.fixture
def with_h(tmp_path):
    p = tmp_path / "sinnott_h.csv"
    p.write_text(SINNOTT_H_CSV, encoding="utf-8")
    return p


@pytest.fixture
def without_h(tmp_path):
    p = tmp_path / "sinnott.csv"
    p.write_text(SINNOTT_CSV, encoding="utf-8")
    return p


@pytest.fixture
def run(monkeypatch, capsys):
    """Run the command line with 'sweep' among its commands (until cli.COMMANDS lists it)."""
    if "sweep" not in cli.COMMANDS:
        monkeypatch.setattr(cli, "COMMANDS", (*cli.COMMANDS, "sweep"))

    def go(*args):
        code = cli.main([str(a) for a in args])
        out = capsys.readouterr()
        return code, out.out, out.err

    return go


def test_json_shape(run, with_h):
    code, out, err = run("sweep", with_h, "--dtmin", "5:20", "--step", "1", "--workers", "1", "--json")
    assert code == 0
    data = json.loads(out)                       # exactly one JSON object on stdout
    assert err == ""                             # no progress bar with --json
    assert len([p for p in data["points"] if p["kind"] == "grid"]) == 16
    for p in data["points"]:
        assert POINT_KEYS <= set(p)
    assert {"dtmin", "total_annual_cost"} <= set(data["optimum"])
    assert 5 <= data["optimum"]["dtmin"] <= 20
    ten = next(p for p in data["points"] if p["dtmin"] == 10)
    assert (ten["hot_utility"], ten["cold_utility"]) == (50.0, 30.0)   # Sinnott, Table 3.6
    assert data["dtmin_source"] == "given"


def test_parser_built_here_with_register(with_h, capsys):
    parser = argparse.ArgumentParser(prog="heatloom")
    sweep_command.register(parser.add_subparsers(dest="command"))
    args = parser.parse_args(["sweep", str(with_h), "--dtmin", "8:12", "--workers", "1", "--quiet",
                              "--designs", "10"])
    assert args.dtmin == (8.0, 12.0) and args.designs == (10.0,)
    assert sweep_command.run(args) == 0
    out = capsys.readouterr().out
    assert "optimum" in out and "designed networks" in out and "licensed engineers" in out
    assert "run on serial" in out


def test_missing_film_coefficients_exit_2_and_default_h(run, without_h):
    code, out, err = run("sweep", without_h, "--dtmin", "5:10", "--workers", "1")
    assert code == 2 and out == ""
    assert "film coefficient h missing for stream '1'" in err and "--default-h" in err
    code, out, _ = run("sweep", without_h, "--dtmin", "5:10", "--workers", "1", "--default-h", "0.5", "--json")
    assert code == 0
    assert any("assumed for stream '1'" in n for n in json.loads(out)["notes"])


def test_least_utility_flow_without_designs_is_refused(run, with_h):
    code, out, err = run("sweep", with_h, "--dtmin", "5:10", "--workers", "1", "--least-utility-flow")
    assert code == 2 and out == ""
    assert "--least-utility-flow applies to the designs of --designs only" in err


def test_bad_range_is_refused(run, with_h):
    for bad in ("40:5", "0:10", "5-40", "a:b"):
        with pytest.raises(SystemExit) as e:
            run("sweep", with_h, "--dtmin", bad)
        assert e.value.code == 2


def test_out_writes_tables_and_figures_and_never_overwrites(run, with_h, tmp_path):
    out_dir = tmp_path / "results"
    code, out, _ = run("sweep", with_h, "--dtmin", "5:15", "--step", "1", "--workers", "1", "--quiet",
                       "--out", out_dir)
    assert code == 0 and "wrote 7 files" in out
    for name in sweep_command.OUTPUT_FILES:
        assert (out_dir / name).stat().st_size > 0, name
    frame = pd.read_csv(out_dir / "sweep_points.csv")
    assert "ΔTmin [K]" in frame.columns and "area [m²]" in frame.columns
    assert set(pd.ExcelFile(out_dir / "sweep.xlsx").sheet_names) >= {"points", "optimum", "breakpoints", "basis"}
    assert json.loads((out_dir / "sweep.json").read_text(encoding="utf-8"))["optimum"]["dtmin"] >= 5
    code, _, err = run("sweep", with_h, "--dtmin", "5:15", "--workers", "1", "--quiet", "--out", out_dir)
    assert code == 2 and "already exists" in err
    before = (out_dir / "sweep.json").stat().st_mtime_ns
    code, _, _ = run("sweep", with_h, "--dtmin", "5:15", "--workers", "1", "--quiet", "--out", out_dir, "--force")
    assert code == 0 and (out_dir / "sweep.json").stat().st_mtime_ns >= before
    assert with_h.read_text(encoding="utf-8") == SINNOTT_H_CSV


def test_progress_on_stderr_unless_quiet(run, with_h):
    code, out, err = run("sweep", with_h, "--dtmin", "5:8", "--workers", "1")
    assert code == 0 and "heatloom sweep: targets" in err and "heatloom sweep:" in out
    code, _, err = run("sweep", with_h, "--dtmin", "5:8", "--workers", "1", "--quiet")
    assert code == 0 and err == ""


def test_pool_and_serial_agree_through_the_command_line(run, with_h):
    _, serial, _ = run("sweep", with_h, "--dtmin", "5:12", "--workers", "1", "--json")
    _, pool, _ = run("sweep", with_h, "--dtmin", "5:12", "--workers", "2", "--json")
    assert json.loads(serial) == json.loads(pool)


def test_cluster_without_dask_exit_2(run, with_h, monkeypatch):
    monkeypatch.setitem(sys.modules, "dask.distributed", None)
    code, _, err = run("sweep", with_h, "--dtmin", "5:8", "--cluster", "tcp://127.0.0.1:1")
    assert code == 2 and "heatloom[dask]" in err


# --------------------------------------------------------------------------------------------------
# heatloom target: area, units and shells when every film coefficient is known


def test_target_json_has_area_units_shells_with_h(run, with_h):
    code, out, _ = run("target", with_h, "--dtmin", "10", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["hot_utility"] == 50.0 and data["cold_utility"] == 30.0   # Sinnott, Table 3.6
    assert data["area"] > 0 and data["shells"] >= data["units"]
    # Euler N − 1 (Linnhoff & Hindmarsh 1983): 4 streams + 2 utilities → 5; 4 above + 3 below the pinch → 7
    assert (data["units"], data["units_mer"]) == (5, 7)
    assert data["units_of_measure"]["area"] == "m²"


def test_target_without_h_omits_them_and_says_so(run, without_h):
    code, out, _ = run("target", without_h, "--dtmin", "10", "--json")
    assert code == 0
    data = json.loads(out)
    assert not {"area", "units", "shells"} & set(data)
    code, out, _ = run("target", without_h, "--dtmin", "10")
    assert code == 0 and "area, units and shells targets omitted: film coefficient h missing" in out


def test_designs_keep_the_stream_tables_forbidden_matches(tmp_path, capsys, with_h):
    # Sinnott's streams: the MER design at ΔTmin 10 K uses match 2→3; forbidden in the table's 'forbid'
    # column, the same design either does without it or says it cannot
    code = cli.main(["sweep", str(with_h), "--dtmin", "5:30", "--designs", "10", "--json", "--quiet"])
    plain = json.loads(capsys.readouterr().out)["designs"][0]
    assert code == 0 and plain["error"] == "" and plain["units"] > 0
    ruled = tmp_path / "ruled.csv"
    ruled.write_text(SINNOTT_H_CSV.replace("name,T_supply,T_target,CP,h\n", "name,T_supply,T_target,CP,h,forbid\n")
                     .replace("2,150,30,1.0,0.5\n", "2,150,30,1.0,0.5,3\n").replace("0.5\n", "0.5,\n"),
                     encoding="utf-8")
    code = cli.main(["sweep", str(ruled), "--dtmin", "5:30", "--designs", "10", "--json", "--quiet"])
    design = json.loads(capsys.readouterr().out)["designs"][0]
    assert code == 0 and "forbidden matches 2→3" in design["error"]
