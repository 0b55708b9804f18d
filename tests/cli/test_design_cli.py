"""The `heatloom design` command: the stable JSON shape, files written, clear refusals.

Published numbers: Ray & Das, Process Equipment and Plant Design, ch. 5, Problem 5.4 (62.5 kW hot,
45 kW cold utility at ΔTmin 10 K). The solvent-recovery demo data are invented.
"""

import json
from pathlib import Path

import pandas as pd
import pytest

from heatloom.cli import main

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "case_studies" / "solvent_recovery"

RAY_DAS_5_4 = """name,T_supply,T_target,CP
1,170,60,2.5
2,150,30,1.0
3,20,135,1.5
4,80,140,4.0
"""

EXCHANGER_KEYS = {"hot", "cold", "duty", "hot_in", "hot_out", "cold_in", "cold_out", "hot_fraction",
                  "cold_fraction", "area", "cost"}
HEATER_KEYS = {"cold", "utility", "duty", "cold_in", "cold_out", "area", "cost"}
COOLER_KEYS = {"hot", "utility", "duty", "hot_in", "hot_out", "area", "cost"}


def run(capsys, *args):
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


@pytest.fixture
def ray_das(tmp_path):
    p = tmp_path / "ray_das_5_4.csv"
    p.write_text(RAY_DAS_5_4, encoding="utf-8")
    return p


def test_json_shape_and_published_utilities(capsys, ray_das):
    code, out, _ = run(capsys, "design", ray_das, "--dtmin", "10", "--default-h", "0.5", "--json")
    assert code == 0
    data = json.loads(out)
    for e in data["exchangers"]:
        assert EXCHANGER_KEYS <= set(e)
    for h in data["heaters"]:
        assert HEATER_KEYS <= set(h)
    for c in data["coolers"]:
        assert COOLER_KEYS <= set(c)
    for key in ("capital_cost", "operating_cost", "total_annual_cost", "units"):
        assert key in data
    # Ray & Das Problem 5.4: 62.5 kW hot, 45 kW cold utility
    assert sum(h["duty"] for h in data["heaters"]) == pytest.approx(62.5)
    assert sum(c["duty"] for c in data["coolers"]) == pytest.approx(45.0)
    assert data["units"] == len(data["exchangers"]) + len(data["heaters"]) + len(data["coolers"])
    assert data["total_annual_cost"] == pytest.approx(data["capital_cost"] + data["operating_cost"])


def test_demo_case_with_utilities_and_out(capsys, tmp_path):
    out_dir = tmp_path / "net"
    code, out, _ = run(capsys, "design", DEMO / "streams.csv", "--dtmin", "10", "--utilities",
                       DEMO / "utilities.csv", "--out", out_dir)
    assert code == 0
    assert "total annual cost" in out and "licensed engineers" in out
    # no output takes a name a case folder reads as an input (once network.csv replaced a case's network table)
    for n in ("design.json", "design_units.csv", "design.xlsx", "grid_diagram.png", "grid_diagram.svg"):
        assert (out_dir / n).stat().st_size > 0
    units = pd.read_excel(out_dir / "design.xlsx", sheet_name="units")
    assert {"duty [kW]", "area [m²]"} <= set(units.columns)
    # the second run refuses to overwrite
    code, _, err = run(capsys, "design", DEMO / "streams.csv", "--out", out_dir)
    assert code == 2 and "already exists" in err


def test_missing_film_coefficients_exit_2(capsys, ray_das):
    code, out, err = run(capsys, "design", ray_das, "--dtmin", "10")
    assert code == 2 and out == ""
    assert "film coefficient h missing" in err and "--default-h" in err


def test_infeasible_exit_3(capsys, ray_das, tmp_path):
    u = tmp_path / "u.csv"
    u.write_text("name,T_supply,T_target,cost,h\nwarm oil,120,110,50,1\ncw,10,20,5,1\n", encoding="utf-8")
    code, out, err = run(capsys, "design", ray_das, "--utilities", u, "--default-h", "1")
    assert code == 3 and "infeasible" in err and out == ""


def test_cbc_solver_option(capsys, ray_das):
    code, out, _ = run(capsys, "design", ray_das, "--default-h", "1", "--solver", "cbc", "--json")
    assert code == 0
    assert all(s["solver"] == "cbc" for s in json.loads(out)["solves"])


def test_exchanger_type_reports_geometry(capsys, ray_das):
    code, out, _ = run(capsys, "design", ray_das, "--default-h", "1", "--exchanger-type", "shell-and-tube",
                       "--json")
    assert code == 0
    units = json.loads(out)["exchangers"]
    assert all(e["geometry"]["type"] == "shell_and_tube_1_2" and e["shells"] >= 1 for e in units)
    code, _, err = run(capsys, "design", ray_das, "--default-h", "1", "--exchanger-type", "double-pipe")
    assert code == 2 and "tube diameter" in err
    code, out, _ = run(capsys, "design", ray_das, "--default-h", "1", "--exchanger-type", "double-pipe",
                       "--tube-diameter", "0.05", "--hairpin-length", "6", "--json")
    assert code == 0
    assert all(e["geometry"]["hairpins"] >= 1 for e in json.loads(out)["exchangers"])


def test_exchanger_type_refuses_kinds_without_geometry(capsys, ray_das):
    # the command line offers the three kinds it can report; any other (e.g. co-current, which has no
    # geometry) is refused with a one-line message, exit 2, no traceback
    with pytest.raises(SystemExit) as exc:
        run(capsys, "design", ray_das, "--default-h", "1", "--exchanger-type", "co-current")
    err = capsys.readouterr().err
    assert exc.value.code == 2 and "invalid choice: 'co-current'" in err and "Traceback" not in err
    assert "counter-current" in err and "shell-and-tube" in err and "double-pipe" in err


def test_operating_hours_come_from_the_costs_file_and_the_flag_overrides_them(tmp_path):
    # prices per kWh need operating hours: 0.01 USD/kWh × 7000 h/year = 70 USD/(kW·year) (arithmetic)
    import argparse

    from heatloom.commands.common import read_inputs
    from heatloom.errors import InputError

    s = tmp_path / "s.csv"
    s.write_text("name,T_supply,T_target,CP,h\nH1,180,60,3,1\nC1,20,135,2,1\n", encoding="utf-8")
    u = tmp_path / "u.csv"
    u.write_text("name,T_supply,T_target,cost [USD/kWh],h\nsteam,250,249,0.01,4\nCW,20,30,0.001,2\n",
                 encoding="utf-8")
    c = tmp_path / "costs.json"
    c.write_text('{"currency": "USD", "annualised": true, "hours_per_year": 7000,'
                 ' "exchanger": {"fixed": 0, "per_area": 1000, "exponent": 0.6}}', encoding="utf-8")

    def args(**kw):
        base = dict(file=str(s), sheet=None, columns=None, fit_tolerance=0.5, utilities=str(u), utilities_sheet=None,
                    costs=None, hours_per_year=None, quiet=True, strict=False)
        return argparse.Namespace(**{**base, **kw})

    with pytest.raises(InputError, match="operating hours per year"):
        read_inputs(args())                                          # neither the file nor the flag: refused
    _, utilities, costs = read_inputs(args(costs=str(c)))
    assert [x.cost for x in utilities] == pytest.approx([70.0, 7.0])
    assert "Operating hours: 7000 h/year (from the costs file)" in costs.describe()
    _, utilities, costs = read_inputs(args(costs=str(c), hours_per_year=8000.0))
    assert [x.cost for x in utilities] == pytest.approx([80.0, 8.0])
    assert "Operating hours: 8000 h/year (given with --hours-per-year)" in costs.describe()


def test_design_into_a_case_folder_leaves_its_network_table_alone(capsys, tmp_path):
    # once: design --out CASE --force replaced the case's existing-network table and called it earlier results
    case = tmp_path / "case"
    case.mkdir()
    for name in ("streams.csv", "utilities.csv"):
        (case / name).write_text((DEMO / name).read_text(encoding="utf-8"), encoding="utf-8")
    table = "unit,hot,cold,area\nE-1,reactor effluent,reactor feed,10\n"
    (case / "network.csv").write_text(table, encoding="utf-8")
    code, _, err = run(capsys, "design", case / "streams.csv", "--utilities", case / "utilities.csv",
                       "--out", case, "--force")
    assert code == 0, err
    assert (case / "network.csv").read_text(encoding="utf-8") == table
    from heatloom.io.cases import case_role

    assert not [p.name for p in case.iterdir() if case_role(p.name) and p.name not in
                ("streams.csv", "utilities.csv", "network.csv")]


def test_the_currency_comes_from_the_prices_or_the_costs_file_and_they_must_agree(tmp_path):
    # once: prices in EUR/MWh and no costs file gave results labelled USD, "Costs in USD (default)"
    import argparse

    from heatloom.commands.common import read_inputs
    from heatloom.errors import InputError

    s = tmp_path / "s.csv"
    s.write_text("name,T_supply,T_target,CP,h\nH1,180,60,3,1\nC1,20,135,2,1\n", encoding="utf-8")
    u = tmp_path / "u.csv"
    u.write_text("name,T_supply,T_target,cost [EUR/MWh],h\nsteam,250,249,30,4\nCW,20,30,2,2\n", encoding="utf-8")
    usd = tmp_path / "costs.json"
    usd.write_text('{"currency": "USD", "annualised": true, "exchanger": {"fixed": 0, "per_area": 1000, '
                   '"exponent": 0.6}}', encoding="utf-8")

    def args(**kw):
        base = dict(file=str(s), sheet=None, columns=None, fit_tolerance=0.5, utilities=str(u), utilities_sheet=None,
                    costs=None, hours_per_year=8000.0, quiet=True, strict=False)
        return argparse.Namespace(**{**base, **kw})

    _, utilities, costs = read_inputs(args())
    assert {x.currency for x in utilities} == {"EUR"} and costs.currency == "EUR"
    assert costs.describe().startswith("Costs in EUR (from the utility prices).")
    with pytest.raises(InputError, match="the costs file is in USD but the utility prices are in EUR"):
        read_inputs(args(costs=str(usd)))


# --- evolution and forbidden/required matches -------------------------------------------------------
# Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6: four streams, 50 kW hot and
# 30 kW cold utility at ΔTmin 10 K (h 0.5 kW/(m²·K) is an assumption of this test).
SINNOTT = """name,T_supply,T_target,CP,h
1,180,60,3.0,0.5
2,150,30,1.0,0.5
3,20,135,2.0,0.5
4,80,140,4.5,0.5
"""


@pytest.fixture
def sinnott(tmp_path):
    p = tmp_path / "sinnott.csv"
    p.write_text(SINNOTT, encoding="utf-8")
    return p


def test_min_duty_evolves_the_design_and_reports_the_penalty(capsys, sinnott):
    code, out, _ = run(capsys, "design", sinnott, "--dtmin", "10", "--min-duty", "40", "--json")
    assert code == 0
    data = json.loads(out)
    evo = data["evolution"]
    assert evo["units_before"] == data["units"] + 1
    # the first law: every kW of heat no longer recovered comes back in both utilities
    assert data["hot_utility"] == pytest.approx(50 + evo["hot_penalty"], abs=1e-6)
    assert data["cold_utility"] == pytest.approx(30 + evo["cold_penalty"], abs=1e-6)
    assert evo["steps"][0]["via"] == "loop" and evo["steps"][0]["hot_penalty"] > 0
    code, out, _ = run(capsys, "design", sinnott, "--dtmin", "10", "--min-duty", "40")
    assert code == 0 and "evolution: 6 → 5 units" in out and "energy penalty" in out


def test_forbid_and_require_reach_the_design(capsys, sinnott, tmp_path):
    # needs design_mer(forbidden=..., required=...) (network/design.py)
    code, out, _ = run(capsys, "design", sinnott, "--dtmin", "10", "--forbid", "2:4", "--json")
    assert code == 0
    data = json.loads(out)
    assert ("2", "4") not in {(e["hot"], e["cold"]) for e in data["exchangers"]}
    assert data["matches"]["forbidden"] == [["2", "4"]]
    # above the pinch only stream 1 can give stream 4 its 4.5 × 60 = 270 kW (stream 2 has 1 × 60 = 60 kW
    # there): without match 1→4 the targets cannot be met
    code, _, err = run(capsys, "design", sinnott, "--dtmin", "10", "--forbid", "1:4")
    assert code == 3 and "1→4" in err
    table = tmp_path / "with_rules.csv"
    table.write_text("name,T_supply,T_target,CP,h,require\n1,180,60,3.0,0.5,3\n2,150,30,1.0,0.5,\n"
                     "3,20,135,2.0,0.5,\n4,80,140,4.5,0.5,\n", encoding="utf-8")
    code, out, _ = run(capsys, "design", table, "--dtmin", "10", "--require", "2:3", "--json")
    assert code == 0
    data = json.loads(out)
    assert sorted(map(tuple, data["matches"]["required"])) == [("1", "3"), ("2", "3")]
    assert {("1", "3"), ("2", "3")} <= {(e["hot"], e["cold"]) for e in data["exchangers"]}


@pytest.mark.parametrize(("option", "value", "message"), [
    ("--forbid", "1:9", "unknown cold side '9'"),
    ("--require", "3:1", "'3' is a cold stream, not a hot side"),
    ("--forbid", "1-4", "HOT:COLD"),
])
def test_unknown_or_misplaced_match_names_are_input_errors(capsys, sinnott, option, value, message):
    code, _, err = run(capsys, "design", sinnott, "--dtmin", "10", option, value)
    assert code == 2 and message in err


def test_match_rules_of_the_table_and_the_command_line_reach_the_tac_design(capsys, tmp_path):
    # Sinnott's streams (above) with a 'forbid' column; assumed utilities and default costs
    table = tmp_path / "with_rules.csv"
    table.write_text("name,T_supply,T_target,CP,h,forbid\n1,180,60,3.0,0.5,4\n2,150,30,1.0,0.5,\n"
                     "3,20,135,2.0,0.5,\n4,80,140,4.5,0.5,\n", encoding="utf-8")
    code, out, _ = run(capsys, "design", table, "--mode", "tac", "--require", "2:3", "--starts", "1", "--rounds", "1",
                       "--time-limit", "60", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["matches"]["forbidden"] == [["1", "4"]] and data["matches"]["required"] == [["2", "3"]]
    duty: dict = {}
    for e in data["exchangers"]:
        duty[e["hot"], e["cold"]] = duty.get((e["hot"], e["cold"]), 0.0) + e["duty"]
    assert ("1", "4") not in duty
    # at EMAT 1 K the match 2→3 could carry at most min(1·120, 2·115, 1·(150 − 20 − 1), 2·(150 − 20 − 1))
    # = 120 kW alone; a required match carries at least a tenth of that
    assert duty["2", "3"] >= 12.0 - 1e-9
    code, _, err = run(capsys, "design", table, "--mode", "tac", "--require", "3:1", "--time-limit", "10")
    assert code == 2 and "'3' is a cold stream, not a hot side" in err


def test_min_area_aims_at_small_areas(capsys, sinnott):
    code, out, _ = run(capsys, "design", sinnott, "--dtmin", "10", "--min-area", "8", "--json")
    assert code == 0
    data = json.loads(out)
    steps = data["evolution"]["steps"]
    assert steps and all("area" in s["reason"] and "m²" in s["reason"] for s in steps)
    # every unit left keeps ΔTmin 10 K at both ends (single-segment streams)
    for e in data["exchangers"]:
        assert e["hot_in"] - e["cold_out"] >= 10 - 1e-6 and e["hot_out"] - e["cold_in"] >= 10 - 1e-6


def test_console_table_names_every_unit_as_the_json_does_with_u_lmtd_f_and_shells(capsys, tmp_path):
    # Ray & Das Problem 5.4 streams with long names: the console table must not cut them, must name each
    # unit as the JSON does, and must carry U, LMTD, F and shells (issue 15). The LMTD of each unit is
    # recomputed here from its terminal temperatures (counter-current log mean, independent of heatloom).
    import math

    long = RAY_DAS_5_4.replace("\n1,", "\nreactor effluent to the north flare header,", 1)
    p = tmp_path / "named.csv"
    p.write_text(long, encoding="utf-8")
    argv = ("design", p, "--dtmin", "10", "--default-h", "0.5", "--exchanger-type", "shell-and-tube")
    code, out, _ = run(capsys, *argv)
    assert code == 0
    assert "reactor effluent to the north flare header" in out
    for head in ("U", "LMTD", "F", "shells", "[kW/(m²·K)]"):
        assert head in out.split()
    code, js, _ = run(capsys, *argv, "--json")
    data = json.loads(js)
    rows = {line.split()[0]: line for line in out.splitlines() if line.startswith("  ") and line.split()}
    for e in data["exchangers"]:
        assert e["name"] in rows
        dt1, dt2 = e["hot_in"] - e["cold_out"], e["hot_out"] - e["cold_in"]
        lmtd = dt1 if abs(dt1 - dt2) < 1e-9 else (dt1 - dt2) / math.log(dt1 / dt2)
        assert f"{lmtd:.1f}" in rows[e["name"]].split()
        assert str(e["shells"]) in rows[e["name"]].split()
    names = [u["name"] for kind in ("exchangers", "heaters", "coolers") for u in data[kind]]
    assert len(set(names)) == len(names) and not set(names) & {"1", "2", "3", "4"}


def test_break_loops_removes_a_loop_unit_and_keeps_the_exchanger_type(capsys, sinnott):
    # Sinnott Table 3.6 at ΔTmin 10 K: the MER network has one more unit than the loop-free minimum, so
    # --break-loops removes one; the first law gives the penalty (every kW not recovered returns in both
    # utilities), and the evolved units keep the 1-2 shell sizing asked for (F and shells on every unit).
    code, out, _ = run(capsys, "design", sinnott, "--dtmin", "10", "--break-loops", "--exchanger-type",
                       "shell-and-tube", "--json")
    assert code == 0
    data = json.loads(out)
    evo = data["evolution"]
    assert evo["units_after"] == evo["units_before"] - 1 == data["units"]
    assert data["hot_utility"] == pytest.approx(50 + evo["hot_penalty"], abs=2e-3)
    assert data["cold_utility"] == pytest.approx(30 + evo["cold_penalty"], abs=2e-3)
    for e in data["exchangers"]:
        assert e["shells"] >= 1 and 0.75 <= e["f_factor"] <= 1.0


def test_double_pipe_geometry_reaches_the_console_and_the_units_table(capsys, ray_das, tmp_path):
    # issue 15: geometry belonged in the console and CSV/XLSX too, not only in the JSON. Hairpins are
    # recomputed here: each holds π·d·2L of area (inner tube of diameter d, two legs of length L; bends not
    # counted, common practice), so a unit needs ceil(area / (π·d·2L)) of them.
    import math

    argv = ("design", ray_das, "--dtmin", "10", "--default-h", "0.5", "--exchanger-type", "double-pipe",
            "--tube-diameter", "0.05", "--hairpin-length", "6")
    code, out, _ = run(capsys, *argv, "--out", tmp_path / "o")
    assert code == 0
    head = next(line for line in out.splitlines() if line.lstrip().startswith("unit "))
    assert "hairpins" in head.split() and "F" not in head.split()          # no 1-2 shell columns for hairpins
    units = pd.read_csv(tmp_path / "o" / "design_units.csv").set_index("unit")
    for name, row in units.iterrows():
        assert row["type"] == "double pipe"
        assert int(row["hairpins"]) == math.ceil(row["area [m²]"] / (math.pi * 0.05 * 2 * 6) - 1e-9), name


def test_hot_oil_above_its_return_temperature_is_designed(capsys, tmp_path):
    """Invented 13-stream table (generated(13, 2) of benchmarks/bench_design.py) with invented hot oil
    330 → 250 °C: C2 must be heated from 283 to 284 °C (1.9 kW), above the 288 °C shifted pinch; the oil's
    heat is spread evenly over 325 → 245 °C shifted, so 37/80 of it lies above the pinch and the oil duty is
    1.9 × 80 / 37 kW (hand calculation). Before, the design failed: no unit over the oil's whole range can
    heat C2."""
    from synthesis_problems import OIL_AND_WATER_CSV, THIRTEEN, write_streams_csv

    write_streams_csv(tmp_path / "streams.csv", THIRTEEN)
    (tmp_path / "utilities.csv").write_text(OIL_AND_WATER_CSV, encoding="utf-8")
    code, out, _ = run(capsys, "design", tmp_path / "streams.csv", "--dtmin", "10", "--utilities",
                       tmp_path / "utilities.csv", "--time-limit", "20", "--json")
    assert code == 0
    data = json.loads(out)
    assert sum(h["duty"] for h in data["heaters"]) == pytest.approx(1.9 * 80.0 / 37.0, abs=2e-3)   # JSON rounds
    assert any("'oil' piped" in n for n in data["notes"])
