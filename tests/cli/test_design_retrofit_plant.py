"""``design`` then ``retrofit`` (and ``evaluate``) on a plant-size problem whose MER design has splits with
units in series on a branch: the design's own units table reads back, with the utilities the design assumed.

The 20-stream problem is invented (the recipe of benchmarks/bench_design.py, written here as a stream
table).  What is checked comes from outside the code under test: the hot utility the design reports
(sized by LMTD) against the one the retrofit simulation gives (rated by ε-NTU at the written areas); the
assumed utilities against their definition (20 K plus ΔTmin beyond the streams: heatloom's stated default,
common practice for a screening assumption).
"""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest

import heatloom.cli as cli


def write_invented_plant(path, n: int = 20, seed: int = 11) -> None:
    rng = np.random.default_rng(seed + n)
    with open(path, "w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(["name", "T_supply [°C]", "T_target [°C]", "CP [kW/K]", "h [kW/m2K]"])
        for i in range(n):
            hot = i % 2 == 0
            a, b = sorted(np.round(rng.uniform(20, 300, 2), 0))
            b = max(b, a + 10)
            ts, tt = (b, a) if hot else (a, b)
            w.writerow([f"{'H' if hot else 'C'}{i // 2 + 1}", float(ts), float(tt),
                        float(np.round(rng.uniform(1, 50), 1)), float(np.round(rng.uniform(0.3, 2.0), 2))])


def run(capsys, *args):
    code = cli.main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


@pytest.mark.slow
def test_a_tick_off_design_reads_back_into_retrofit_and_evaluate(capsys, tmp_path):
    streams = tmp_path / "streams.csv"
    write_invented_plant(streams)
    designed = tmp_path / "designed"
    code, out, err = run(capsys, "design", streams, "--dtmin", 10, "--time-limit", 30, "--out", designed, "--json")
    assert code == 0, err
    design = json.loads(out)
    rows = list(csv.DictReader(open(designed / "design_units.csv", encoding="utf-8")))
    orders = [r["hot_branch_order"] for r in rows if r["hot_branch_order"]]
    assert any(int(o.split("/")[-1]) > 1 for o in orders)   # a branch with units in series
    # no utilities table: retrofit uses the utilities the design assumed, and says so
    code, out, err = run(capsys, "retrofit", designed / "design_units.csv", "--streams", streams, "--dtmin", 10,
                         "--json", "--sizes", "1", "--max-candidates", "3")
    assert code == 0, err
    assert "names the utilities a heatloom design assumes" in err
    result = json.loads(out)
    assert result["current"]["hot_utility"] == pytest.approx(design["hot_utility"], rel=1e-4)
    hottest_cold = max(float(r["T_target [°C]"]) for r in csv.DictReader(open(streams, encoding="utf-8"))
                       if r["name"].startswith("C"))
    assert f"hot utility at {hottest_cold + 10 + 20:g} °C" in err
    code, out, err = run(capsys, "evaluate", streams, designed / "design_units.csv", "--dtmin", 10, "--json")
    assert code == 0, err
    assert json.loads(out)["network"]["hot_utility"] == pytest.approx(design["hot_utility"], rel=1e-4)
