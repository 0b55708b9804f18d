"""The `heatloom scenarios` command: zones × price scenarios × ΔTmin from the command line.

Published numbers: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (50 kW hot,
30 kW cold utility at ΔTmin 10 K) and Ray & Das, Process Equipment and Plant Design, ch. 5, Problem 5.1,
Tables P5.1B/C (90 kW hot, 255 kW cold at ΔTmin 20 K).  Their stream data are used as two zones of a
site; the film coefficients, utility table and price scenarios added to them are invented for these tests.
"""

import json
import sys

import pandas as pd
import pytest

import heatloom.cli as cli
from heatloom.commands import scenarios as scenarios_command

SINNOTT = """name,T_supply,T_target,CP,h
1,180,60,3.0,0.5
2,150,30,1.0,0.5
3,20,135,2.0,0.5
4,80,140,4.5,0.5
"""

RAY_DAS_5_1 = """name,T_supply,T_target,CP,h
1,180,40,2.0,0.5
2,150,40,4.0,0.5
3,60,180,3.0,0.5
4,30,105,2.6,0.5
"""

UTILITIES = """name,T_supply,T_target,cost,h
steam,250,249,120,4.0
cooling water,10,15,10,1.5
"""

PRICES = """scenario,utility,cost [USD/MWh],factor
contract,,,1
dear steam,steam,30,
dear steam,cooling water,,2
"""


@pytest.fixture
def site(tmp_path):
    folder = tmp_path / "site"
    folder.mkdir()
    (folder / "north_streams.csv").write_text(SINNOTT, encoding="utf-8")
    (folder / "south_streams.csv").write_text(RAY_DAS_5_1, encoding="utf-8")
    (tmp_path / "utilities.csv").write_text(UTILITIES, encoding="utf-8")
    (tmp_path / "prices.csv").write_text(PRICES, encoding="utf-8")
    return tmp_path


@pytest.fixture
def run(capsys):
    def go(*args):
        code = cli.main([str(a) for a in args])
        out = capsys.readouterr()
        return code, out.out, out.err

    return go


def _case(data, zone, scenario, dtmin):
    return next(c for c in data["cases"] if c["zone"] == zone and c["scenario"] == scenario and c["dtmin"] == dtmin)


def test_json_cases_optima_and_totals(run, site):
    code, out, err = run("scenarios", site / "site", "--utilities", site / "utilities.csv", "--prices",
                         site / "prices.csv", "--hours-per-year", "8000", "--dtmin", "10:20", "--step", "10",
                         "--workers", "1", "--json")
    assert code == 0 and err == ""
    data = json.loads(out)
    assert data["zones"] == ["north", "south"]
    assert [s["name"] for s in data["scenarios"]] == ["contract", "dear steam"]
    assert len(data["cases"]) == 2 * 2 * 2
    for scenario in ("contract", "dear steam"):
        north = _case(data, "north", scenario, 10.0)
        assert (north["hot_utility"], north["cold_utility"]) == pytest.approx((50.0, 30.0))  # Sinnott Table 3.6
        south = _case(data, "south", scenario, 20.0)
        assert (south["hot_utility"], south["cold_utility"]) == pytest.approx((90.0, 255.0))  # Ray & Das P5.1
    # prices by hand: 30 USD/MWh × 8000 h/yr = 240 USD/(kW·yr) for steam; cooling water 10 × 2 = 20
    c, d = _case(data, "north", "contract", 10.0), _case(data, "north", "dear steam", 10.0)
    assert c["energy_cost"] == pytest.approx(50 * 120 + 30 * 10)
    assert d["energy_cost"] == pytest.approx(50 * 240 + 30 * 20)
    assert d["capital_cost"] == pytest.approx(c["capital_cost"])
    assert len(data["optima"]) == 4 and len(data["totals"]) == 2
    for t in data["totals"]:
        mine = [o for o in data["optima"] if o["scenario"] == t["scenario"]]
        assert t["total_annual_cost"] == pytest.approx(sum(o["total_annual_cost"] for o in mine))
        assert all(10 <= o["dtmin"] <= 20 for o in mine)


def test_out_files_never_overwritten_and_inputs_untouched(run, site):
    out_dir = site / "study"
    args = ("scenarios", site / "site", "--price-factors", "1,2", "--dtmin", "5:15", "--step", "5", "--workers", "1",
            "--quiet", "--out", out_dir)
    code, out, _ = run(*args)
    assert code == 0 and f"wrote {len(scenarios_command.OUTPUT_FILES)} files" in out
    for name in scenarios_command.OUTPUT_FILES:
        assert (out_dir / name).stat().st_size > 0, name
    assert set(pd.ExcelFile(out_dir / "scenarios.xlsx").sheet_names) >= {"cases", "optima", "totals", "scenarios",
                                                                          "basis"}
    cases = pd.read_csv(out_dir / "scenario_cases.csv")
    assert len(cases) == 2 * 2 * 3
    code, _, err = run(*args)
    assert code == 2 and "already exists" in err
    assert (site / "site" / "north_streams.csv").read_text(encoding="utf-8") == SINNOTT


def test_designs_are_listed_beside_the_targets(run, site):
    code, out, _ = run("scenarios", site / "site" / "north_streams.csv", "--price-factors", "1,3", "--dtmin", "10:10",
                       "--designs", "--workers", "1", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["zones"] == ["north"]
    one, three = (c for c in data["cases"])
    assert one["design_units"] == three["design_units"] and one["design_area"] == pytest.approx(three["design_area"])
    assert three["design_operating_cost"] == pytest.approx(3 * one["design_operating_cost"])
    assert one["design_area"] >= one["area"] - 1e-6   # Townsend–Linnhoff: one h everywhere makes it a minimum
    assert any("one ΔTmin only" in n for n in data["notes"])


def test_human_summary_and_progress(run, site):
    code, out, err = run("scenarios", site / "site", "--price-factors", "1,2", "--dtmin", "5:15", "--step", "5",
                         "--workers", "1")
    assert code == 0
    assert "heatloom scenarios: cases" in err                    # progress bars on stderr
    assert "site total at each zone's optimum" in out and "licensed engineers" in out
    assert "prices ×2" in out and "run on serial" in out


@pytest.mark.parametrize("extra, message", [
    (("--prices", "PRICES_BAD"), "row 2, column 'utility'"),
    (("--price-factors", "1,x"), None),
    (("--dtmin", "20:5"), None),
])
def test_bad_input_is_a_clear_error(run, site, extra, message):
    (site / "bad_prices.csv").write_text("scenario,utility,cost\nx,unknown,10\n", encoding="utf-8")
    extra = tuple(str(site / "bad_prices.csv") if a == "PRICES_BAD" else a for a in extra)
    args = ("scenarios", site / "site", "--utilities", site / "utilities.csv", "--workers", "1", *extra)
    if message is None:
        with pytest.raises(SystemExit) as e:
            run(*args)
        assert e.value.code == 2
        return
    code, out, err = run(*args)
    assert code == 2 and out == ""
    assert message in err and "bad_prices.csv" in err and "Traceback" not in err


def test_named_price_without_utility_table(run, site):
    code, _, err = run("scenarios", site / "site", "--prices", site / "prices.csv", "--hours-per-year", "8000",
                       "--workers", "1")
    assert code == 2 and "no utility table was given" in err and "prices.csv, row 3" in err


def test_missing_film_coefficients(run, site):
    (site / "plain.csv").write_text("name,T_supply,T_target,CP\nH,150,40,2\nC,30,120,2\n", encoding="utf-8")
    code, _, err = run("scenarios", site / "plain.csv", "--workers", "1")
    assert code == 2 and "--default-h" in err


def test_cluster_without_dask_exit_2(run, site, monkeypatch):
    monkeypatch.setitem(sys.modules, "dask.distributed", None)
    code, _, err = run("scenarios", site / "site", "--cluster", "tcp://127.0.0.1:1")
    assert code == 2 and "heatloom[dask]" in err


def test_cluster_address_from_the_command_line(run, site):
    """--cluster with a scheduler address: a local Dask cluster in this process stands in for a real one."""
    distributed = pytest.importorskip("dask.distributed")
    args = ("scenarios", site / "site", "--price-factors", "1,2", "--dtmin", "5:15", "--step", "5", "--json")
    _, serial, _ = run(*args, "--workers", "1")
    with distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=2,
                                  dashboard_address=None) as cluster:
        code, on_dask, _ = run(*args, "--cluster", cluster.scheduler_address)
        address = cluster.scheduler_address
    assert code == 0
    a, b = json.loads(serial), json.loads(on_dask)
    assert a["executor"] == "serial" and b["executor"] == f"Dask cluster {address}"
    a.pop("executor"), b.pop("executor")
    assert a == b


@pytest.mark.parametrize("address, words", [
    ("http://127.0.0.1:8787", "web address (the Dask dashboard, not the scheduler)"),
    ("tcp://", "is not a scheduler address"),
    ("scheduler at port eighty", "is not a scheduler address"),
])
def test_cluster_addresses_that_cannot_be_a_scheduler_are_bad_input(run, tmp_path, address, words):
    p = tmp_path / "streams.csv"
    p.write_text("name,T_supply,T_target,CP,h\nH1,180,60,3,1\nC1,20,135,2,1\n", encoding="utf-8")
    code, _, err = run("scenarios", p, "--cluster", address)
    assert code == 2 and words in err and "tcp://HOST:8786" in err and "bug" not in err


def test_a_server_that_is_not_a_scheduler_is_bad_input(run, tmp_path):
    import socket
    import threading

    server = socket.socket()
    server.bind(("127.0.0.1", 0))
    server.listen()
    port = server.getsockname()[1]

    def answer_like_a_web_server():
        for _ in range(3):
            try:
                c, _ = server.accept()
            except OSError:
                return
            c.sendall(b"HTTP/1.1 200 OK\r\n\r\nhello")
            c.close()

    threading.Thread(target=answer_like_a_web_server, daemon=True).start()
    p = tmp_path / "streams.csv"
    p.write_text("name,T_supply,T_target,CP,h\nH1,180,60,3,1\nC1,20,135,2,1\n", encoding="utf-8")
    try:
        code, _, err = run("scenarios", p, "--cluster", f"tcp://127.0.0.1:{port}")
    finally:
        server.close()
    assert code == 2 and "is a Dask scheduler running there?" in err and "bug" not in err


def test_every_case_infeasible_is_exit_3_as_for_sweep(run, tmp_path):
    # C1 (CP 4) needs heat up to 170 °C beyond what H1 (CP 3) gives there: steam at 100 °C cannot supply it
    # (invented data)
    p = tmp_path / "streams.csv"
    p.write_text("name,T_supply,T_target,CP,h\nH1,180,60,3,1\nC1,20,170,4,1\n", encoding="utf-8")
    u = tmp_path / "utilities.csv"
    u.write_text("name,T_supply,T_target,cost\nsteam,100,99,100\nCW,10,20,10\n", encoding="utf-8")
    code, out, err = run("scenarios", p, "--utilities", u, "--default-h", "1", "--workers", "1",
                         "--dtmin", "5:15")
    assert code == 3 and "none of the" in err and "can be served" in err


def test_a_folder_s_utilities_and_prices_are_used_and_named(run, site):
    # the same folder rule as report: the folder's tables play their roles, listed on stderr
    folder = site / "site"
    for name in ("utilities.csv", "prices.csv"):
        (folder / name).write_text((site / name).read_text(encoding="utf-8"), encoding="utf-8")
    code, out, err = run("scenarios", folder, "--hours-per-year", "8000", "--default-h", "0.8", "--workers", "1",
                         "--dtmin", "10:20", "--step", "5", "--json", "--no-optimum")
    assert code == 0, err
    assert "from the folder, prices prices.csv; utilities utilities.csv" in err
    assert [s["name"] for s in json.loads(out)["scenarios"]] == ["contract", "dear steam"]   # the prices table


def test_the_prices_table_names_the_currency_and_a_costs_file_in_another_is_refused(run, site):
    # issue 14 item 13: the currency comes from the prices (here the scenario table's EUR/MWh) when nothing
    # else names one; a costs file in USD beside EUR prices is an input error (no currency is converted).
    (site / "prices.csv").write_text(PRICES.replace("USD/MWh", "EUR/MWh"), encoding="utf-8")
    argv = ("scenarios", site / "site", "--utilities", site / "utilities.csv", "--prices", site / "prices.csv",
            "--hours-per-year", "8000", "--dtmin", "10:20", "--step", "10", "--workers", "1")
    code, out, _ = run(*argv, "--json")
    assert code == 0 and json.loads(out)["currency"] == "EUR"
    (site / "costs.json").write_text(json.dumps({"currency": "USD", "annualised": False, "interest_rate": 0.1,
                                                 "years": 10, "exchanger": {"fixed": 10000, "per_area": 800,
                                                                            "exponent": 0.8}}), encoding="utf-8")
    before = (site / "prices.csv").read_bytes()
    code, out, err = run(*argv, "--costs", site / "costs.json")
    assert code == 2 and "USD" in err and "EUR" in err and "converts no currency" in err
    assert (site / "prices.csv").read_bytes() == before


def test_console_names_long_zones_and_scenarios_whole_and_the_safety_note_once(run, site):
    # issue 15: names were cut at 18 characters; the cost basis repeated the safety note
    from heatloom.defaults import SAFETY_NOTE

    (site / "site" / "north_streams.csv").rename(site / "site" / "north_bank_evaporator_train_streams.csv")
    (site / "prices.csv").write_text(PRICES.replace("dear steam", "dear steam after the 2027 contract"),
                                     encoding="utf-8")
    code, out, _ = run("scenarios", site / "site", "--utilities", site / "utilities.csv", "--prices",
                       site / "prices.csv", "--hours-per-year", "8000", "--dtmin", "10:20", "--step", "10",
                       "--workers", "1")
    assert code == 0
    rows = [line for line in out.splitlines() if line.startswith("  north_bank_evaporator_train ")]
    assert any("dear steam after the 2027 contract" in line for line in rows)
    assert out.count(SAFETY_NOTE) == 1


def test_designs_keep_each_zone_tables_forbidden_matches(run, site, tmp_path):
    # Sinnott's streams as zone 'north' with a 'forbid' column keeping stream 2 off stream 3: its design at
    # ΔTmin 10 K uses that match (below the pinch, as designed without the column), so the design either does
    # without it or says it cannot; the other zone designs as before.  A name the zone lacks is refused.
    folder = site / "site"
    (folder / "north_streams.csv").write_text(
        SINNOTT.replace("name,T_supply,T_target,CP,h\n", "name,T_supply,T_target,CP,h,forbid\n")
        .replace("2,150,30,1.0,0.5\n", "2,150,30,1.0,0.5,3\n").replace("0.5\n", "0.5,\n"), encoding="utf-8")
    code, out, _ = run("scenarios", folder, "--dtmin", "10:10", "--designs", "--workers", "1", "--json")
    assert code == 0
    cases = {c["zone"]: c for c in json.loads(out)["cases"]}
    assert "forbidden matches 2→3" in cases["north"]["design_error"]
    assert cases["south"]["design_error"] == "" and cases["south"]["design_units"] > 0
    (folder / "north_streams.csv").write_text(SINNOTT.replace("name,T_supply,T_target,CP,h\n",
                                                              "name,T_supply,T_target,CP,h,forbid\n")
                                              .replace("2,150,30,1.0,0.5\n", "2,150,30,1.0,0.5,9\n")
                                              .replace("0.5\n", "0.5,\n"), encoding="utf-8")
    code, _, err = run("scenarios", folder, "--dtmin", "10:10", "--designs", "--workers", "1")
    assert code == 2 and "zone 'north'" in err and "'9'" in err
