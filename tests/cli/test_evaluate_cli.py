"""The `heatloom evaluate` command: verdict, exit codes, JSON shape, clear refusals.

Published source: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (four streams;
50 kW hot and 30 kW cold utility at ΔTmin 10 K).  The network is that problem's maximum-energy-recovery
network (duties from the stream data on each side of the 90/80 °C pinch); film coefficients and utility
temperatures are assumptions of the test.
"""

import json

import pytest

from heatloom.cli import main

STREAMS = "name,T_supply,T_target,CP,h\n1,180,60,3.0,0.5\n2,150,30,1.0,0.5\n3,20,135,2.0,0.5\n4,80,140,4.5,0.5\n"
UTILITIES = "name,T_supply,T_target,cost,h\nsteam,180,179,100,0.5\nwater,20,30,10,0.5\n"
NETWORK = """unit,hot,cold,duty,hot_order,cold_order
E1,1,4,270,1,1
E2,2,3,60,1,3
E3,1,3,90,2,2
E4,2,3,30,3,1
H1,steam,3,,,4
C1,2,water,30,2,
"""


@pytest.fixture
def files(tmp_path):
    paths = {}
    for name, text in (("streams", STREAMS), ("utilities", UTILITIES), ("network", NETWORK)):
        paths[name] = tmp_path / f"{name}.csv"
        paths[name].write_text(text, encoding="utf-8")
    return paths


def run(capsys, *args):
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_mer_network_passes_and_meets_the_published_targets(capsys, files):
    code, out, _ = run(capsys, "evaluate", files["streams"], files["network"], "--utilities", files["utilities"],
                       "--dtmin", "10", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["ok"] and data["targets_met"]
    assert data["hot_utility_target"] == pytest.approx(50) and data["cold_utility_target"] == pytest.approx(30)
    assert data["network"]["hot_utility"] == pytest.approx(50, abs=1e-6)
    assert all(u["area"] > 0 for u in data["network"]["exchangers"])
    assert "safety_note" in data
    code, out, _ = run(capsys, "evaluate", files["streams"], files["network"], "--utilities", files["utilities"],
                       "--dtmin", "10")
    assert code == 0 and "passes every check" in out and "targets met" in out and "screening estimates" in out


def test_failed_checks_exit_3_and_say_which(capsys, files, tmp_path):
    # at ΔTmin 20 K, 2→3 above the pinch leaves only 90 − 80 = 10 K
    code, out, err = run(capsys, "evaluate", files["streams"], files["network"], "--utilities", files["utilities"],
                         "--dtmin", "20", "--out", tmp_path / "results")
    assert code == 3
    assert "FAILS" in out and "2→3" in err and "< 20 K" in err
    assert (tmp_path / "results" / "evaluation.json").exists()


def test_unknown_stream_in_the_network_is_an_input_error(capsys, files):
    files["network"].write_text(NETWORK.replace("E4,2,3", "E4,2,C9"), encoding="utf-8")
    code, _, err = run(capsys, "evaluate", files["streams"], files["network"], "--utilities", files["utilities"])
    assert code == 2 and "C9" in err


def test_a_designs_own_units_table_passes_evaluate(capsys, tmp_path):
    # invented (shrunk from a generated robustness case): a hot stream, a cold stream boiling over 0.5 K and a
    # second cold stream; the table rounds areas to 0.001 m², so the rated duties differ from the design's by a
    # few watts: within the 0.1 % balance tolerance evaluate states, never a failed check
    (tmp_path / "s.csv").write_text("name,T_supply,T_target,CP,h\nH1,153.6,60,10.0,1.0\nC1,73.3,73.8,202.5,4.0\n"
                                    "C2,40,120,8.0,1.0\n", encoding="utf-8")
    (tmp_path / "u.csv").write_text("name,T_supply,T_target,cost,h\nsteam,200,199,150,4.0\n"
                                    "cooling water,20,30,12,1.5\n", encoding="utf-8")
    code, _, _ = run(capsys, "design", tmp_path / "s.csv", "--utilities", tmp_path / "u.csv", "--out", tmp_path / "d",
                     "--quiet")
    assert code == 0
    code, out, err = run(capsys, "evaluate", tmp_path / "s.csv", tmp_path / "d" / "design_units.csv", "--utilities",
                         tmp_path / "u.csv", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["ok"] and data["failures"] == [] and data["targets_met"]


def test_a_design_with_hot_oil_piped_through_its_heaters_reads_back(capsys, tmp_path):
    """Invented 13-stream table (THIRTEEN of tests/synthesis_problems.py) with invented hot oil 330 → 250 °C:
    the design pipes the oil through its heaters in series (one above its 293 °C pinch temperature, one
    below), each taking it over part of its range, and writes those temperatures in the units table's hot
    in/out columns.  Evaluate must read them back: with the oil over its whole range in every heater, the heater
    of C2 (283 → 284 °C) would have no driving force at its cold end (250 °C oil against 283 °C), which is how
    the read-back failed before.  The least oil duty is 1.9 × 80/37 kW (hand calculation: C2 needs 1.9 kW
    above the 288 °C shifted pinch, where 37 of the oil's 80 K shifted range lies)."""
    from synthesis_problems import OIL_AND_WATER_CSV, THIRTEEN, write_streams_csv

    write_streams_csv(tmp_path / "s.csv", THIRTEEN)
    (tmp_path / "u.csv").write_text(OIL_AND_WATER_CSV, encoding="utf-8")
    code, out, err = run(capsys, "design", tmp_path / "s.csv", "--dtmin", "10", "--utilities", tmp_path / "u.csv",
                         "--time-limit", "20", "--out", tmp_path / "d", "--json")
    assert code == 0, err
    design = json.loads(out)
    heaters = [h for h in design["heaters"] if h["utility"] == "oil"]
    assert any((h["utility_in"], h["utility_out"]) != (330.0, 250.0) for h in heaters)   # piped: parts of the range
    code, out, err = run(capsys, "evaluate", tmp_path / "s.csv", tmp_path / "d" / "design_units.csv", "--dtmin", "10",
                         "--utilities", tmp_path / "u.csv", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["ok"] and data["failures"] == [] and data["temperature_crosses"] == [], data["failures"]
    assert data["sized"]
    assert data["hot_utility_target"] == pytest.approx(1.9 * 80.0 / 37.0, rel=1e-6)
    assert data["targets_met"]
    back = {h["name"]: h for h in data["network"]["heaters"]}
    for h in heaters:   # each heater takes the oil over the part of its range the design gave it
        assert back[h["name"]]["utility_in"] == pytest.approx(h["utility_in"], abs=1e-3)
        assert back[h["name"]]["utility_out"] == pytest.approx(h["utility_out"], abs=1e-3)
        assert back[h["name"]]["cold_in"] - h["utility_out"] <= -10.0 + 1e-2   # ΔTmin 10 K at the cold end
