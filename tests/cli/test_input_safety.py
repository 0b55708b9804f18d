"""Issue 14, one command-line case per item: the exit code, the located message, and that no input or unrelated
file changed (every file under the test folder keeps its content hash and modification time; new files appear
only in the output folder of a run that succeeds).  Also the progress bars of issue 15 (none into a file), the
``--columns`` example of the help and the ``--max-input-mb`` limit.

Tables written here are invented for the tests (checks of reading, refusing and writing, not of results); the
results of the published problems used (items 8, 16) are checked where said.  The escaping rule of item 6 is
the OWASP guidance on CSV (formula) injection (OWASP Foundation, *CSV Injection*, community page).
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import shutil
from contextlib import contextmanager
from pathlib import Path

import openpyxl
import pytest

import heatloom.cli as cli
import heatloom.commands.common as common
from heatloom import defaults
from heatloom.io import export

ROOT = Path(__file__).resolve().parents[2]
CASE = ROOT / "case_studies" / "existing_network"
SOLVENT = ROOT / "case_studies" / "solvent_recovery"
REAL_STDERR_IS_TERMINAL = common.stderr_is_terminal
FAST = ("--sizes", "1", "--max-candidates", "3")
STREAMS = "name,T_supply,T_target,CP\nH1,180,60,3\nC1,20,135,2\n"


# --------------------------------------------------------------------------------------------------
# the snapshot of a folder


def snapshot(root: Path) -> dict[str, tuple]:
    """Every file and link under ``root``: (sha256, mtime in ns, size) of a file, the target of a link."""
    out: dict[str, tuple] = {}
    for p in sorted(root.rglob("*")):
        rel = str(p.relative_to(root))
        if p.is_symlink():
            out[rel] = ("link", os.readlink(p))
        elif p.is_file():
            st = p.stat()
            out[rel] = (hashlib.sha256(p.read_bytes()).hexdigest(), st.st_mtime_ns, st.st_size)
    return out


@contextmanager
def untouched(root: Path, *, new_only_in: Path | None = None, replaced: tuple[Path, ...] = ()):
    """Assert that the block changes no file under ``root`` (same hash and mtime, none removed) and adds files
    only under ``new_only_in`` (None: adds none).  ``replaced`` are output files the run may replace."""
    before = snapshot(root)
    yield
    after = snapshot(root)
    allowed = {str(p.relative_to(root)) for p in replaced}
    changed = sorted(k for k, v in before.items() if k not in allowed and after.get(k) != v)
    assert not changed, f"changed or removed: {changed}"
    inside = None if new_only_in is None else str(new_only_in.relative_to(root))
    added = sorted(k for k in after if k not in before and (inside is None or not (k + "/").startswith(inside + "/")))
    assert not added, f"files added outside the output folder: {added}"


@pytest.fixture
def case(tmp_path):
    """A copy of the existing-network case folder, and an unrelated file beside it."""
    folder = tmp_path / "case"
    shutil.copytree(CASE, folder, ignore=shutil.ignore_patterns("outputs", "report", "README.md"))
    (tmp_path / "unrelated.txt").write_text("the user's own notes\n", encoding="utf-8")
    return folder


def run(capsys, *args):
    code = cli.main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


def refused(capsys, root, *args, match: str):
    """Run a command that must fail with exit 2 and a located message, changing nothing under ``root``."""
    with untouched(root):
        code, out, err = run(capsys, *args)
    assert code == 2, err
    assert re.search(match, err), err
    assert "Traceback" not in err
    return err


# --------------------------------------------------------------------------------------------------
# silent wrong answers (items 1-5)


def test_1_ambiguous_thousands_separator_is_refused(capsys, tmp_path, case):
    (case / "plant.csv").write_text("name;T_supply;T_target;CP\nH1;180;60;1.500\nC1;20;135;2\n", encoding="utf-8")
    refused(capsys, tmp_path, "target", case / "plant.csv",
            match=r"plant\.csv, row 2, column 'CP': .*'1\.500' could be 1500 or 1\.500")


def test_2_row_with_more_fields_than_the_header_is_refused(capsys, tmp_path, case):
    (case / "plant.csv").write_text("name,T_supply,T_target,CP\nreactor effluent,210,80,5,5,0.8\nC1,20,135,2\n",
                                    encoding="utf-8")
    refused(capsys, tmp_path, "target", case / "plant.csv",
            match=r"plant\.csv, row 2: this row has 6 or more filled fields but the header has 4")


def test_3_misspelt_column_is_named_and_strict_refuses_it(capsys, tmp_path, case):
    (case / "plant.csv").write_text("name,T_supply,T_target,CP,dT_min_contib\nH1,180,60,3,5\nC1,20,135,2,5\n",
                                    encoding="utf-8")
    with untouched(tmp_path):
        code, _, err = run(capsys, "target", case / "plant.csv")
    assert code == 0 and "'dT_min_contib' (did you mean 'dT_min_contrib'?)" in err
    refused(capsys, tmp_path, "target", case / "plant.csv", "--strict",
            match=r"plant\.csv, row 1, column 'dT_min_contib': unknown column")


def test_4_absurd_magnitudes_are_refused(capsys, tmp_path, case):
    (case / "plant.csv").write_text("name,T_supply,T_target,CP\nH1,180,60,1e308\nC1,20,135,2\n", encoding="utf-8")
    refused(capsys, tmp_path, "target", case / "plant.csv",
            match=r"plant\.csv, row 2, column 'CP': heat capacity flow rate CP 1e\+308 kW/K is above")


def test_5_formula_without_a_saved_value_says_so(capsys, tmp_path, case):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "streams"
    for row in (["name", "T_supply", "T_target", "CP"], ["H1", 180, 60, "=1+2"], ["C1", 20, 135, 2]):
        ws.append(row)
    wb.save(case / "plant.xlsx")
    refused(capsys, tmp_path, "target", case / "plant.xlsx",
            match=r"plant\.xlsx, sheet 'streams', row 2, column 'CP': .*formula '=1\+2', whose value was never saved")


# --------------------------------------------------------------------------------------------------
# security (items 6-9)


def test_6_formula_like_names_are_written_inert(capsys, tmp_path, case):
    hostile = "=cmd|' /C calc'!A0"
    (case / "plant.csv").write_text(f'name,T_supply,T_target,CP\n"{hostile}",180,60,3\nC1,20,135,2\n',
                                    encoding="utf-8")
    out_dir = tmp_path / "out"
    with untouched(tmp_path, new_only_in=out_dir):
        code, _, err = run(capsys, "target", case / "plant.csv", "--out", out_dir)
    assert code == 0, err
    assert f"'{hostile}" in (out_dir / "stream_table.csv").read_text(encoding="utf-8")
    ws = openpyxl.load_workbook(out_dir / "targets.xlsx")["streams"]
    cells = [c for row in ws.iter_rows() for c in row if c.value == hostile]
    assert cells and all(c.data_type == "s" for c in cells)


def test_7_force_replaces_links_instead_of_writing_through_them(capsys, tmp_path, case):
    (case / "plant.csv").write_text(STREAMS, encoding="utf-8")
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    os.link(case / "plant.csv", out_dir / "targets.json")       # a hard link to the input, named as an output
    refused(capsys, tmp_path, "target", case / "plant.csv", "--out", out_dir, "--force",
            match=r"refusing to write .*out/targets\.json: it is one of the input files of this run")
    os.unlink(out_dir / "targets.json")
    os.link(tmp_path / "unrelated.txt", out_dir / "targets.json")   # a hard link to a file that is no input
    with untouched(tmp_path, new_only_in=out_dir, replaced=(out_dir / "targets.json",)):
        code, _, err = run(capsys, "target", case / "plant.csv", "--out", out_dir, "--force")
    assert code == 0, err
    assert (tmp_path / "unrelated.txt").read_text(encoding="utf-8") == "the user's own notes\n"
    assert json.loads((out_dir / "targets.json").read_text(encoding="utf-8"))["hot_utility"] is not None
    second = tmp_path / "out2"
    second.mkdir()
    os.symlink(tmp_path / "unrelated.txt", second / "targets.json")   # a link out of the output folder
    refused(capsys, tmp_path, "target", case / "plant.csv", "--out", second, "--force",
            match=r"refusing to write .*targets\.json: it is a symbolic link to .*unrelated\.txt, outside the "
                  r"output folder")


def test_8_design_into_a_case_folder_writes_into_its_results_subfolder(capsys, tmp_path, case):
    with untouched(tmp_path, new_only_in=case / export.RESULTS_FOLDER):
        code, out, err = run(capsys, "design", case / "streams.csv", "--utilities", case / "utilities.csv",
                             "--out", case, "--force")
    assert code == 0, err
    assert f"results go to {case / export.RESULTS_FOLDER}/" in err
    assert (case / export.RESULTS_FOLDER / "design_units.csv").is_file()


def test_9_devices_pipes_and_oversized_files_are_refused(capsys, tmp_path, case):
    refused(capsys, tmp_path, "target", "/dev/zero", match=r"/dev/zero: not a regular file")
    os.mkfifo(tmp_path / "pipe.csv")
    refused(capsys, tmp_path, "target", tmp_path / "pipe.csv", match=r"pipe\.csv: not a regular file")


# --------------------------------------------------------------------------------------------------
# partial results (item 10)


def test_10_an_interrupted_write_leaves_no_partial_file(capsys, tmp_path, case, monkeypatch):
    (case / "plant.csv").write_text(STREAMS, encoding="utf-8")
    out_dir = tmp_path / "out"

    def interrupted(path, sheets):
        Path(path).write_bytes(b"PK\x03\x04 half a workbook")
        raise KeyboardInterrupt

    monkeypatch.setattr(export, "_write_xlsx", interrupted)
    with untouched(tmp_path, new_only_in=out_dir):
        code, _, err = run(capsys, "target", case / "plant.csv", "--out", out_dir)
    assert code == 130 and "interrupted" in err
    names = sorted(p.name for p in out_dir.iterdir())
    assert "targets.xlsx" not in names and not [n for n in names if "partial" in n]


# --------------------------------------------------------------------------------------------------
# exit codes and messages (item 11), units and money (items 12-14)


def test_11_negative_utility_price_is_an_input_error_naming_file_and_row(capsys, tmp_path, case):
    (case / "plant.csv").write_text(STREAMS, encoding="utf-8")
    (case / "prices.csv").write_text("name,T_supply,T_target,cost\nsteam,250,249,-5\nwater,20,30,10\n",
                                     encoding="utf-8")
    refused(capsys, tmp_path, "target", case / "plant.csv", "--utilities", case / "prices.csv",
            match=r"prices\.csv, row 2, column 'cost': utility 'steam': price must be >= 0")


def test_12_hours_of_the_costs_file_turn_energy_prices_into_yearly_ones(capsys, tmp_path, case):
    (case / "plant.csv").write_text(STREAMS + "H2,150,40,1\n", encoding="utf-8")
    (case / "energy_prices.csv").write_text("name,T_supply,T_target,cost [USD/MWh]\nsteam,250,249,30\n"
                                            "water,20,30,2\n", encoding="utf-8")
    costs = json.loads((case / "costs.json").read_text(encoding="utf-8"))
    assert costs["hours_per_year"] == 8200
    with untouched(tmp_path):
        code, out, err = run(capsys, "target", case / "plant.csv", "--utilities", case / "energy_prices.csv",
                             "--json")
    assert code == 2 and "needs the operating hours per year" in err        # no hours: refused, not assumed
    with untouched(tmp_path):
        code, out, err = run(capsys, "design", case / "plant.csv", "--utilities", case / "energy_prices.csv",
                             "--costs", case / "costs.json", "--default-h", "1", "--json")
    assert code == 0, err
    data = json.loads(out)
    # 30 USD/MWh over the costs file's 8200 h/year: 30 × 8.2 = 246 USD/(kW·year), by hand
    assert "8200 h/year" in json.dumps(data, ensure_ascii=False)
    assert data["operating_cost"] == pytest.approx(246.0 * data["hot_utility"] + 2 * 8.2 * data["cold_utility"],
                                                   rel=1e-4)


def test_13_currencies_of_prices_and_costs_file_must_agree(capsys, tmp_path, case):
    (case / "plant.csv").write_text(STREAMS, encoding="utf-8")
    (case / "euro_prices.csv").write_text("name,T_supply,T_target,cost [EUR/(kW·year)]\nsteam,250,249,200\n"
                                          "water,20,30,20\n", encoding="utf-8")
    refused(capsys, tmp_path, "design", case / "plant.csv", "--utilities", case / "euro_prices.csv", "--costs",
            case / "costs.json", "--default-h", "1",
            match=r"the costs file is in USD but the utility prices are in EUR")


def test_14_mass_flow_and_specific_heat_form_cp(capsys, tmp_path, case):
    (case / "plant.csv").write_text("name,T_supply,T_target,mass flow [kg/s],cp [kJ/kg.K]\nH1,180,60,1.5,2\n"
                                    "C1,20,135,1,2\n", encoding="utf-8")
    with untouched(tmp_path):
        code, out, err = run(capsys, "target", case / "plant.csv", "--json")
    assert code == 0, err
    # CP = ṁ·cp: 3 and 2 kW/K; H1 gives 3·120 = 360 kW, C1 takes 2·115 = 230 kW, all of it from H1 (hand)
    data = json.loads(out)
    assert data["hot_process_duty"] == pytest.approx(360.0) and data["cold_process_duty"] == pytest.approx(230.0)
    assert data["hot_utility"] == pytest.approx(0.0, abs=1e-9)


# --------------------------------------------------------------------------------------------------
# retrofit input as plant data arrive (items 15, 16) and case folders (item 17)


def test_15_trim_units_without_duty_or_area(capsys, tmp_path, case):
    table = (case / "network.csv").read_text(encoding="utf-8")
    assert "H-103,LP steam,wash water,1.4,120," in table   # last on wash water: a trim heater
    (case / "network.csv").write_text(table.replace("H-103,LP steam,wash water,1.4,120,",
                                                    "H-103,LP steam,wash water,,,"), encoding="utf-8")
    with untouched(tmp_path):
        code, out, err = run(capsys, "retrofit", case, "--json", *FAST)
    assert code == 0, err
    data = json.loads(out)
    # the trim heater takes the rest, as with its stated duty: the current hot utility is still the 995.16 kW
    # recomputed with ht's ε-NTU relations in tests/retrofit/test_retrofit.py::test_case_hot_utility_by_hand_with_ht
    assert data["current"]["hot_utility"] == pytest.approx(995.163, abs=1e-3)
    assert "'H-103' given without duty or area" in out
    (case / "network.csv").write_text(table.replace("E-104,column bottoms,wash water,4.3,",
                                                    "E-104,column bottoms,wash water,,"), encoding="utf-8")
    refused(capsys, tmp_path, "retrofit", case, *FAST,
            match=r"network\.csv, row 5, column 'area \[m2\]': unit 'E-104' has neither area nor duty; give one of "
                  r"them \(only a heater or cooler that is the last unit on its stream may leave both empty")


def test_16_a_design_with_stream_splits_reads_back_into_retrofit(capsys, tmp_path):
    # the solvent-recovery case (invented data, case_studies/solvent_recovery) designed at ΔTmin 10 K splits the
    # reboiler between two exchangers; retrofit reads the design's own units table back, splits included, and
    # the network at its designed areas does what the design says (its hot utility: the design's console)
    designed = tmp_path / "designed"
    code, out, err = run(capsys, "design", SOLVENT / "streams.csv", "--utilities", SOLVENT / "utilities.csv",
                         "--out", designed, "--json")
    assert code == 0, err
    hot_utility = json.loads(out)["hot_utility"]
    units = (designed / "design_units.csv").read_text(encoding="utf-8")
    header = units.splitlines()[0].split(",")
    rows = [line.split(",") for line in units.splitlines()[1:]]
    cold_fraction = header.index("cold fraction [-]")
    assert sum(float(r[cold_fraction]) < 1 for r in rows) >= 2              # a split
    inputs = ("--streams", SOLVENT / "streams.csv", "--utilities", SOLVENT / "utilities.csv")
    with untouched(tmp_path, new_only_in=tmp_path / "retrofit"):
        code, out, err = run(capsys, "retrofit", designed / "design_units.csv", *inputs, "--json", *FAST,
                             "--out", tmp_path / "retrofit")
    assert code == 0, err
    result = json.loads(out)
    assert result["current"]["hot_utility"] == pytest.approx(hot_utility, rel=1e-4)
    assert any("never inside it (between its branches)" in n for n in result["notes"])


def _design_table(capsys, tmp_path) -> tuple[Path, list[str], list[list[str]]]:
    designed = tmp_path / "designed"
    code, _, err = run(capsys, "design", SOLVENT / "streams.csv", "--utilities", SOLVENT / "utilities.csv",
                       "--out", designed, "--quiet")
    assert code == 0, err
    lines = (designed / "design_units.csv").read_text(encoding="utf-8").splitlines()
    return designed / "design_units.csv", lines[0].split(","), [line.split(",") for line in lines[1:]]


@pytest.mark.parametrize("fault", ["sum", "no fractions", "two trims"])
def test_16_bad_splits_in_a_units_table_are_refused_located(capsys, tmp_path, fault):
    path, header, rows = _design_table(capsys, tmp_path)
    unit, hot_order, cold_order = header.index("unit"), header.index("hot_order"), header.index("cold_order")
    hot_f, cold_f = header.index("hot fraction [-]"), header.index("cold fraction [-]")
    branches = [k for k, r in enumerate(rows) if float(r[cold_f]) < 1]
    first, second = branches[0], branches[1]
    if fault == "sum":             # fractions of one split adding up to 0.9
        rows[first][cold_f] = f"{float(rows[first][cold_f]) - 0.1:.6f}"
        match = (rf"design_units\.csv, row {second + 2}, column 'cold fraction \[-\]': the split of stream "
                 rf"'{rows[first][header.index('cold')]}' at position \d+ \(.*\) has fractions adding up to 0\.9, not 1")
    elif fault == "no fractions":  # the split's position repeated without fractions
        rows[first][cold_f] = rows[second][cold_f] = "1"
        match = (rf"design_units\.csv, row {second + 2}, column 'cold_order': units '{rows[first][unit]}' and "
                 rf"'{rows[second][unit]}' both take position \d+ on stream")
    else:                          # two coolers sharing the end of a stream as a split
        coolers = [k for k, r in enumerate(rows) if r[header.index("role")] == "cooler"]
        a = coolers[0]
        stream = rows[a][header.index("hot")]
        on = [k for k, r in enumerate(rows) if stream in (r[header.index("hot")], r[header.index("cold")])]
        last = str(max(int(float(rows[k][hot_order])) for k in on if rows[k][header.index("hot")] == stream))
        extra = list(rows[a])
        extra[unit] = "CU-9"
        rows[a][hot_f] = extra[hot_f] = "0.5"
        rows[a][hot_order] = extra[hot_order] = last
        rows.append(extra)
        match = (rf"design_units\.csv, row {len(rows) + 1}, column 'hot_order': the last split of stream '{stream}' "
                 r"has 2 heaters/coolers")
    del cold_order
    path.write_text("\n".join([",".join(header)] + [",".join(r) for r in rows]) + "\n", encoding="utf-8")
    refused(capsys, tmp_path, "retrofit", path, "--streams", SOLVENT / "streams.csv", "--utilities",
            SOLVENT / "utilities.csv", *FAST, match=match)


def test_17_two_files_for_one_role_are_refused(capsys, tmp_path, case):
    shutil.copy(case / "streams.csv", case / "streams_backup.csv")
    refused(capsys, tmp_path, "retrofit", case, *FAST,
            match=r"case: several files could be the streams: streams\.csv, streams_backup\.csv")


# --------------------------------------------------------------------------------------------------
# issue 15: no progress bars into a file; the --columns example needs its mapping


def test_no_progress_bars_when_stderr_is_not_a_terminal(capsys, monkeypatch, tmp_path):
    monkeypatch.setattr(common, "stderr_is_terminal", REAL_STDERR_IS_TERMINAL)
    assert not common.stderr_is_terminal()                   # pytest's capture is no terminal
    bars = common.ProgressBars("heatloom sweep", enabled=True)
    assert not bars.enabled
    bars("grid", 1, 2)
    bars.close()
    assert capsys.readouterr().err == ""
    (tmp_path / "plant.csv").write_text("name,T_supply,T_target,CP,h\nH1,180,60,3,1\nC1,20,135,2,1\n",
                                        encoding="utf-8")
    code, _, err = run(capsys, "sweep", tmp_path / "plant.csv", "--dtmin", "5:15", "--step", "5", "--workers", "1")
    assert code == 0, err
    assert "heatloom sweep:" not in err and "\r" not in err
    monkeypatch.setattr(common, "stderr_is_terminal", lambda: True)
    assert common.ProgressBars("heatloom sweep", enabled=True).enabled


@pytest.mark.parametrize("command", ["target", "design", "sweep", "retrofit", "report", "site", "scenarios"])
def test_columns_example_maps_headers_that_need_mapping(capsys, tmp_path, command):
    with pytest.raises(SystemExit):
        cli.main([command, "--help"])
    text = " ".join(capsys.readouterr().out.split())
    example = re.search(r'--columns MAP .*?e\.g\. "([^"]+)"', text).group(1)
    mapping = dict(part.split("=") for part in example.split(","))
    assert set(mapping.values()) >= {"name", "T_supply", "T_target", "CP"}
    header = ",".join(mapping)
    (tmp_path / "plant.csv").write_text(f"{header}\nH1,180,60,3\nC1,20,135,2\n", encoding="utf-8")
    # without the mapping none of the example's headers is recognised
    refused(capsys, tmp_path, "target", tmp_path / "plant.csv",
            match=r"missing required column\(s\) name, T_supply, T_target")
    with untouched(tmp_path):
        code, _, err = run(capsys, "target", tmp_path / "plant.csv", "--columns", example)
    assert code == 0, err


# --------------------------------------------------------------------------------------------------
# issue 14 item 9: the input size limit, overridable


@pytest.mark.parametrize("command", ["target", "design", "sweep", "retrofit", "report", "site", "scenarios"])
def test_every_command_states_the_input_size_limit(capsys, command):
    with pytest.raises(SystemExit):
        cli.main([command, "--help"])
    text = " ".join(capsys.readouterr().out.split())
    assert f"--max-input-mb MB largest input file read [MiB] (default {defaults.MAX_INPUT_BYTES / 2**20:g} MiB" in text


def test_input_size_limit_holds_in_its_block_only():
    assert defaults.max_input_bytes() == defaults.MAX_INPUT_BYTES
    with defaults.input_size_limit(2048):
        assert defaults.max_input_bytes() == 2048
    assert defaults.max_input_bytes() == defaults.MAX_INPUT_BYTES
    with pytest.raises(ValueError):
        with defaults.input_size_limit(0):
            pass
    import argparse

    assert common.megabytes("0.5") == 2**19
    with pytest.raises(argparse.ArgumentTypeError):
        common.megabytes("-1")


def test_max_input_mb_lowers_and_raises_the_limit(capsys, tmp_path):
    plant = tmp_path / "plant.csv"
    plant.write_text(STREAMS + "".join(f"H{k},180,60,3\n" for k in range(2, 800)), encoding="utf-8")
    size_mib = plant.stat().st_size / 2**20
    refused(capsys, tmp_path, "target", plant, "--max-input-mb", f"{size_mib / 2:.6f}",
            match=r"plant\.csv: the table file is .* MiB, over the .* MiB heatloom reads")
    code, _, err = run(capsys, "target", plant, "--max-input-mb", f"{size_mib * 2:.6f}")
    assert code == 0, err
