"""The `heatloom report` command: case folders, files written, refusals, bad input, sections not computed.

Published numbers: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, problem table
example (Table 3.6): 50 kW hot and 30 kW cold utility, pinch at 90/80 °C at ΔTmin 10 K
(tests/data/references/targeting_sinnott_four_stream.json). The film coefficients (0.5 kW/(m²·K)), the
costs file and the utilities of the infeasible case below are invented for these tests; so are the
solvent-recovery, existing-network and three-zone-site case studies. The site and retrofit-options checks
compare the report with heatloom.pinch.site.site_targets and heatloom.retrofit.options.retrofit_options
run directly on the same files (their own tests check them against published values).
"""

import json
import re
from pathlib import Path

import pandas as pd
import pytest

from heatloom import cli
from heatloom.commands import common, report, retrofit
from heatloom.commands.report import find_case_files, is_site_folder
from heatloom.errors import InputError

ROOT = Path(__file__).resolve().parents[2]
EXISTING = ROOT / "case_studies" / "existing_network"
SITE = ROOT / "case_studies" / "three_zone_site"
COSTS = {"currency": "EUR", "annualised": False, "interest_rate": 0.08, "years": 15,
         "exchanger": {"fixed": 9000, "per_area": 700, "exponent": 0.8}}   # invented


@pytest.fixture(autouse=True)
def report_command(monkeypatch):
    """The command as cli.main will list it (COMMANDS gets "report" from the lead; added here until then)."""
    monkeypatch.setattr(cli, "COMMANDS", tuple(dict.fromkeys((*cli.COMMANDS, "report"))))


@pytest.fixture(autouse=True)
def work_dir(tmp_path, monkeypatch):
    """Every test runs in a folder of its own: without --out a report goes into the current directory."""
    folder = tmp_path / "cwd"
    folder.mkdir()
    monkeypatch.chdir(folder)
    return folder


def run(capsys, *args):
    code = cli.main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


def sinnott_csv(reference, h: bool = True) -> str:
    data, _ = reference("targeting_sinnott_four_stream")
    lines = ["name,T_supply,T_target,CP" + (",h" if h else "")]
    lines += [f"{s['name']},{s['T_supply']},{s['T_target']},{s['CP']}" + (",0.5" if h else "") for s in data["streams"]]
    return "\n".join(lines) + "\n"


@pytest.fixture
def case(tmp_path, reference):
    folder = tmp_path / "sinnott case"
    folder.mkdir()
    (folder / "streams.csv").write_text(sinnott_csv(reference), encoding="utf-8")
    (folder / "costs.json").write_text(json.dumps(COSTS), encoding="utf-8")
    (folder / "notes.txt").write_text("not an input", encoding="utf-8")
    return folder


# --------------------------------------------------------------------------------------------------
# case folders


def test_case_folder_files_by_role(tmp_path):
    for name in ("Plant_Streams.csv", "utilities.xlsx", "costs.yaml", "existing network.csv", "readme.md"):
        (tmp_path / name).write_text("x", encoding="utf-8")
    (tmp_path / "report").mkdir()
    (tmp_path / "report" / "streams.csv").write_text("x", encoding="utf-8")   # subfolders are not looked at
    (tmp_path / "costs.csv").write_text("x", encoding="utf-8")              # not a costs format
    files = find_case_files(tmp_path)
    assert {k: v.name for k, v in files.items()} == {
        "stream table": "Plant_Streams.csv", "utilities": "utilities.xlsx", "costs": "costs.yaml",
        "existing network": "existing network.csv"}


@pytest.mark.parametrize("names, message", [
    ((), "no stream table"),
    (("streams.csv", "streams_2023.xlsx"), "several files could be the stream table"),
    (("streams.csv", "network_streams.csv"), "fits several roles"),
])
def test_case_folder_errors(tmp_path, names, message):
    for name in names:
        (tmp_path / name).write_text("x", encoding="utf-8")
    with pytest.raises(InputError, match=message):
        find_case_files(tmp_path)


def test_report_and_retrofit_share_one_case_finder(tmp_path):
    assert report.find_case_files is common.find_case_files and retrofit.find_case_files is common.find_case_files
    for name in ("streams.csv", "network.csv", "costs.json"):
        (tmp_path / name).write_text("x", encoding="utf-8")
    assert set(find_case_files(tmp_path)) == {"stream table", "existing network", "costs"}
    files = find_case_files(tmp_path, retrofit.ROLES, required=())
    assert {k: v.name for k, v in files.items()} == {"costs": "costs.json", "network": "network.csv",
                                                    "streams": "streams.csv"}


@pytest.mark.parametrize("names, site", [
    (("streams.csv", "utilities.csv"), False),
    (("east_streams.csv", "west_streams.csv"), True),      # several zones
    (("streams.csv", "steam mains.csv"), True),            # one zone and a mains table
    (("east_streams.csv", "mains.txt"), False),            # not a table format
])
def test_site_folder_is_recognised(tmp_path, names, site):
    for name in names:
        (tmp_path / name).write_text("x", encoding="utf-8")
    assert is_site_folder(tmp_path) is site
    assert is_site_folder(tmp_path / names[0]) is False     # a file is never a site folder


def test_missing_folder_is_an_input_error(tmp_path):
    with pytest.raises(InputError, match="not found"):
        find_case_files(tmp_path / "nowhere")


# --------------------------------------------------------------------------------------------------
# a whole run


@pytest.fixture
def done(case, capsys):
    code, out, err = run(capsys, "report", case, "--dtmin", "10", "--sweep", "5:30", "--tac", "--tac-time-limit", "3",
                         "--json")
    return case, code, json.loads(out), err


@pytest.mark.slow
def test_case_folder_report_and_workbook(done, work_dir):
    case, code, data, err = done
    assert code == 0
    out = Path("sinnott case_report")                      # default: <case name>_report in the current directory
    assert data["report"] == str(out / "report.html") and data["workbook"] == str(out / "study.xlsx")
    assert sorted(p.name for p in (work_dir / out).iterdir()) == ["report.html", "study.xlsx"]
    assert sorted(p.name for p in case.iterdir()) == ["costs.json", "notes.txt", "streams.csv"]   # case untouched
    assert "writing the report into sinnott case_report/ in the current directory (default; set with --out" in err
    assert data["sections"] == ["summary", "inputs", "assumptions", "targets", "sweep", "design", "tac", "safety",
                                "methods", "about"]
    assert data["not_computed"] == []
    # composite, grand composite, balanced composite, driving force, 2 sweep, 2 grid diagrams
    assert data["figures"] == 8
    # Sinnott, Coulson & Richardson Vol. 6, ch. 3, Table 3.6: 50 kW hot, 30 kW cold, pinch 90/80 °C
    t = data["targets"]
    assert (t["hot_utility"], t["cold_utility"], t["pinch"]["hot"], t["pinch"]["cold"]) == (50, 30, 90, 80)
    html = (out / "report.html").read_text(encoding="utf-8")
    assert html.count("<svg") == data["figures"]
    assert "costs.json" in html and "EUR" in html            # the costs file was found and used
    sheets = pd.read_excel(out / "study.xlsx", sheet_name=None)
    costs = sheets["costs"].set_index("quantity")
    assert costs.loc["currency", "value"] == "EUR"
    assert float(costs.loc["interest rate", "value"]) == pytest.approx(8.0)
    assert len(sheets["tac network units"]) >= 1 and "status" not in sheets["tac network units"]


@pytest.mark.slow
def test_summary_line_progress_and_quiet(case, capsys):
    code, out, err = run(capsys, "report", case / "streams.csv", "--out", case / "a", "--sweep", "5:20")
    assert code == 0
    assert re.fullmatch(r"report: 10 sections, 7 figures → .*report\.html\n", out)
    assert "heatloom report" in err                        # the progress bar, on stderr
    assert "not computed" in err and "--tac" in err         # the TAC design was not asked for, and it says so
    code, out, err = run(capsys, "report", case / "streams.csv", "--out", case / "b", "--sweep", "5:20", "--quiet")
    assert code == 0 and err == ""
    assert out.startswith("report: 10 sections, 7 figures → ")


def test_one_progress_class_serves_steps_phases_and_searches(capsys):
    # the bars of report (steps), sweep and scenarios (phases) and design --mode tac (best so far)
    bars = common.ProgressBars("heatloom report", enabled=True, unit="step", steps=3)
    bars.step("energy targets")
    bars.step("ΔTmin sweep")
    bars.close()
    err = capsys.readouterr().err
    assert "heatloom report: energy targets" in err and "heatloom report: ΔTmin sweep" in err
    bars = common.ProgressBars("heatloom sweep", enabled=True)
    bars("grid", 2, 5)
    bars("designs", 1, 2)
    bars.close()
    err = capsys.readouterr().err
    assert "heatloom sweep: grid" in err and "heatloom sweep: designs" in err
    bars = common.ProgressBars("heatloom design --mode tac", enabled=True, unit="epoch",
                               describe_best=lambda best: f"best TAC {best:,.0f} EUR/yr")
    bars.best(123456.4, 3, 10)
    bars.close()
    assert "best TAC 123,456 EUR/yr" in capsys.readouterr().err
    quiet = common.ProgressBars("heatloom report", enabled=False, unit="step", steps=3)
    quiet.step("energy targets")
    quiet("grid", 1, 2)
    quiet.best(1.0, 1, 2)
    quiet.close()
    assert capsys.readouterr().err == ""


@pytest.mark.slow
def test_refuses_to_overwrite_without_force(case, capsys):
    code, _, _ = run(capsys, "report", case, "--quiet", "--sweep", "5:10")
    assert code == 0
    report = Path("sinnott case_report") / "report.html"
    before = report.read_bytes()
    code, out, err = run(capsys, "report", case, "--quiet")
    assert code == 2 and "already exists" in err and "--force" in err and out == ""
    assert report.read_bytes() == before
    code, out, _ = run(capsys, "report", case, "--quiet", "--force", "--sweep", "5:10", "--dtmin", "12")
    assert code == 0 and report.read_bytes() != before and "ΔTmin 12 K" in report.read_text(encoding="utf-8")


def test_refusal_comes_before_any_computing(tmp_path, case, capsys):
    out = tmp_path / "out"
    out.mkdir()
    (out / "study.xlsx").write_text("earlier results", encoding="utf-8")
    code, _, err = run(capsys, "report", case, "--out", out)
    assert code == 2 and "study.xlsx already exists" in err
    assert sorted(p.name for p in out.iterdir()) == ["study.xlsx"]     # report.html was not written either


# --------------------------------------------------------------------------------------------------
# bad input and missing pieces


@pytest.mark.parametrize("content, message", [
    ("name,T_supply,T_target,CP\nH1,180,60,abc\n", "CP"),
    ("name,T_supply,T_target\nH1,180,60\n", "CP"),
])
def test_bad_stream_table_is_exit_2_and_writes_nothing(tmp_path, capsys, content, message):
    f = tmp_path / "streams.csv"
    f.write_text(content, encoding="utf-8")
    code, out, err = run(capsys, "report", f, "--out", tmp_path / "out")
    assert code == 2 and message in err and out == ""
    assert not (tmp_path / "out" / "report.html").exists()


def test_bad_path_costs_and_options(tmp_path, case, capsys):
    code, _, err = run(capsys, "report", tmp_path / "nothing here")
    assert code == 2 and "not found" in err
    (case / "costs.json").write_text(json.dumps({"currency": "EUR", "discount": 3}), encoding="utf-8")
    code, _, err = run(capsys, "report", case)
    assert code == 2 and "discount" in err
    with pytest.raises(SystemExit) as e:
        cli.main(["report", str(case), "--sweep", "40:5"])
    assert e.value.code == 2
    assert "LO < HI" in capsys.readouterr().err


def test_missing_film_coefficients_still_give_a_report(tmp_path, reference, capsys):
    f = tmp_path / "sinnott.csv"
    f.write_text(sinnott_csv(reference, h=False), encoding="utf-8")
    code, out, err = run(capsys, "report", f, "--out", tmp_path / "r", "--json")
    assert code == 0
    data = json.loads(out)
    where = {n["where"] for n in data["not_computed"]}
    assert {"Cost targets against ΔTmin", "Network for maximum energy recovery"} <= where
    assert all("film coefficient" in n["why"] for n in data["not_computed"] if n["where"] != "Network of lowest "
               "total annual cost")
    html = (tmp_path / "r" / "report.html").read_text(encoding="utf-8")
    assert "--default-h" in html and html.count("<svg") == data["figures"] == 4   # the four curve figures


def test_infeasible_utilities_give_a_report_and_exit_3(tmp_path, reference, capsys):
    (tmp_path / "streams.csv").write_text(sinnott_csv(reference), encoding="utf-8")
    # invented: steam at 100 °C cannot heat stream 4 to 140 °C
    (tmp_path / "utilities.csv").write_text("name,T_supply,T_target,cost\nLP steam,100,99,50\n"
                                            "cooling water,20,30,5\n", encoding="utf-8")
    code, out, err = run(capsys, "report", tmp_path, "--quiet")
    assert code == 3 and "energy targets not computed" in err
    html = (Path(f"{tmp_path.name}_report") / "report.html").read_text(encoding="utf-8")
    assert "Not computed: energy targets." in html


def _pairs(sheet: pd.DataFrame) -> set:
    return set(zip(sheet["hot"], sheet["cold"])) if "hot" in sheet else set()


@pytest.mark.slow
def test_the_stream_tables_match_rules_reach_both_designs(tmp_path, reference, capsys):
    # Sinnott's streams; the MER design without rules uses match 2→3 on both sides of the pinch
    names = [s["name"] for s in reference("targeting_sinnott_four_stream")[0]["streams"]]
    plain = tmp_path / "plain"
    plain.mkdir()
    (plain / "streams.csv").write_text(sinnott_csv(reference), encoding="utf-8")
    assert run(capsys, "report", plain, "--out", tmp_path / "r0", "--quiet")[0] == 0
    before = pd.read_excel(tmp_path / "r0" / "study.xlsx", sheet_name="network units")
    assert (names[1], names[2]) in {(str(h), str(c)) for h, c in _pairs(before)}
    ruled = tmp_path / "ruled"
    ruled.mkdir()
    lines = sinnott_csv(reference).splitlines()
    table = [lines[0] + ",forbid"] + [row + ("," + names[2] if row.split(",")[0] == names[1] else ",")
                                      for row in lines[1:]]
    (ruled / "streams.csv").write_text("\n".join(table) + "\n", encoding="utf-8")
    code, _, _ = run(capsys, "report", ruled, "--out", tmp_path / "r1", "--quiet", "--tac", "--tac-time-limit", "10")
    assert code == 0
    sheets = pd.read_excel(tmp_path / "r1" / "study.xlsx", sheet_name=None)
    for name in ("network units", "tac network units"):
        pairs = {(str(h), str(c)) for h, c in _pairs(sheets[name])}
        assert (names[1], names[2]) not in pairs
    assert len(sheets["tac network units"]) > 0 and "hot" in sheets["tac network units"]
    html = (tmp_path / "r1" / "report.html").read_text(encoding="utf-8")
    assert f"forbidden {names[1]}→{names[2]}" in html


@pytest.mark.slow
def test_existing_network_gives_the_retrofit_diagnosis_and_options(tmp_path, capsys):
    from heatloom.io import read_costs, read_streams, read_utilities
    from heatloom.io.costs import read_retrofit_costs
    from heatloom.io.network_table import read_network
    from heatloom.retrofit.diagnose import diagnose
    from heatloom.retrofit.existing import ExistingNetwork
    from heatloom.retrofit.options import retrofit_options

    code, out, _ = run(capsys, "report", EXISTING, "--out", tmp_path, "--sweep", "5:20", "--tac",
                       "--tac-time-limit", "5", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["sections"][-5:] == ["retrofit", "retrofit_options", "safety", "methods", "about"]
    # composite, grand composite, balanced composite, driving force, 2 sweep, MER grid, TAC grid, existing
    # grid, retrofit curve, savings, proposed grid: the TAC design now takes the overhead's three segments too
    assert data["figures"] == 12
    assert data["not_computed"] == []
    streams = read_streams(EXISTING / "streams.csv")
    utilities = read_utilities(EXISTING / "utilities.csv", process=streams)
    network = ExistingNetwork.from_table(streams, read_network(EXISTING / "network.csv"), utilities)
    d = diagnose(network, 10.0)
    sheets = pd.read_excel(tmp_path / "study.xlsx", sheet_name=None)
    assert {"retrofit", "retrofit units", "retrofit cross-pinch", "retrofit curve", "retrofit options"} <= set(sheets)
    cross = sheets["retrofit cross-pinch"]
    # written to 0.001 kW (heatloom.defaults.OUTPUT_PRECISION)
    assert cross["net [kW]"].tolist() == pytest.approx([u.net for u in d.cross_pinch.units], abs=1e-3)
    html = (tmp_path / "report.html").read_text(encoding="utf-8")
    for u in d.cross_pinch.units:
        assert f'data-value="{u.net!r}"' in html
    # the options: those of retrofit_options run on the same files with the case's costs.json
    r = retrofit_options(network, 10.0, costs=read_costs(EXISTING / "costs.json"),
                         retrofit_costs=read_retrofit_costs(EXISTING / "costs.json"))
    assert r.options
    options = sheets["retrofit options"]
    assert options["rank"].tolist() == [o.rank for o in r.options]
    assert options["saving [kW]"].tolist() == pytest.approx([o.saving for o in r.options], abs=1e-3)
    assert options["investment [USD]"].tolist() == pytest.approx([o.investment for o in r.options], abs=1e-2)
    assert options["NPV [USD]"].tolist() == pytest.approx([o.npv for o in r.options], abs=1e-2)
    assert options["payback [year]"].tolist() == pytest.approx([o.payback_years for o in r.options])
    assert options["changes"].tolist() == ["; ".join(o.steps) for o in r.options]
    section = html[html.index('<section id="retrofit_options">'):html.index('<section id="safety">')]
    assert section.count("<svg") == 2                        # savings against investment, proposed grid
    for o in r.options:
        for value in (o.saving, o.investment, o.npv, o.saving_per_year):
            assert f'data-value="{value!r}"' in section
    assert "8 % over 8 years" in section                    # interest and plant life of costs.json
    assert "pressure drops" in html                          # the retrofit caution


# --------------------------------------------------------------------------------------------------
# a site folder


def test_site_folder_gives_a_site_report(tmp_path, capsys):
    from heatloom.io.site import read_site
    from heatloom.io.site_report import SITE_SHEETS
    from heatloom.pinch.site import site_targets

    site_folder = tmp_path / "site"          # the case's zones and mains, without its prices table
    site_folder.mkdir()
    for f in SITE.glob("*.csv"):
        if "prices" not in f.name:
            (site_folder / f.name).write_bytes(f.read_bytes())
    code, out, _ = run(capsys, "report", site_folder, "--out", tmp_path, "--dtmin", "10", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["sections"] == ["summary", "inputs", "assumptions", "zones", "mains", "safety", "methods", "about"]
    assert data["figures"] == 3 and data["not_computed"] == []    # zone grand composites, zone and site profiles
    site = site_targets(list(read_site(SITE).zones), read_site(SITE).mains, 10.0)
    assert data["site"]["saving"]["duty"] == pytest.approx(site.saving)
    html = (tmp_path / "report.html").read_text(encoding="utf-8")
    assert html.count("<svg") == 3
    for z in site.zones:
        assert f'data-value="{z.hot_utility!r}"' in html and f'data-value="{z.cold_utility!r}"' in html
    for value in (site.saving, site.site_hot_utility, site.zone_by_zone_hot_utility, site.saving_money):
        assert f'data-value="{value!r}"' in html
    for b in site.mains:
        assert f'data-value="{b.site_duty!r}"' in html
    for words in ("Dhole, V. R., Linnhoff, B. (1993)", "Klemeš, J.", "site ΔT for steam", "main: HP steam",
                  "115 money/(kW·year)", "licensed engineers", "Steam mains also need pressure ratings"):
        assert words in html
    sheets = pd.read_excel(tmp_path / "study.xlsx", sheet_name=None)
    assert list(sheets) == list(SITE_SHEETS)
    zones = sheets["zones"]
    assert zones["zone"].tolist() == [z.name for z in site.zones]
    assert zones["hot utility [kW]"].tolist() == pytest.approx([z.hot_utility for z in site.zones], abs=1e-3)
    mains = sheets["mains"].set_index("main")
    for b in site.mains:
        assert mains.loc[b.main.name, "site duty [kW]"] == pytest.approx(b.site_duty)
    steam = sheets["zone steam"]
    hp = steam[(steam["zone"] == site.zones[0].name) & (steam["main"] == "HP steam")]
    assert hp["raised [kW]"].iloc[0] == pytest.approx(site.zones[0].raised["HP steam"])
    # refuses to overwrite, and writes over nothing of the inputs
    code, _, err = run(capsys, "report", site_folder, "--out", tmp_path, "--quiet")
    assert code == 2 and "already exists" in err


@pytest.mark.slow
def test_site_folder_with_a_prices_table_adds_the_price_scenarios(tmp_path, capsys):
    """The three-zone case (invented) holds utilities.csv and prices.csv: the report adds each zone's optimum
    ΔTmin under every price scenario; its numbers are those of heatloom.studies.scenarios.scenario_study."""
    from heatloom.io import read_price_scenarios, read_utilities
    from heatloom.io.site import read_site
    from heatloom.studies.scenarios import scenario_study

    code, out, _ = run(capsys, "report", SITE, "--out", tmp_path / "a", "--json")
    assert code == 0
    data = json.loads(out)                   # prices per MWh without --hours-per-year: said, not fatal
    assert "scenarios" in data["sections"] and data["figures"] == 3
    assert any(n["where"] == "Price scenarios" and "--hours-per-year" in n["why"] for n in data["not_computed"])
    code, out, _ = run(capsys, "report", SITE, "--out", tmp_path / "b", "--json", "--hours-per-year", "8000",
                       "--default-h", "0.8", "--sweep", "5:25")
    assert code == 0
    data = json.loads(out)
    assert data["figures"] == 4 and data["not_computed"] == []
    zones = read_site(SITE).zones
    utilities = read_utilities(SITE / "utilities.csv", process=common.zone_streams(zones))
    plans = read_price_scenarios(SITE / "prices.csv", utilities, hours_per_year=8000)
    study = scenario_study(zones, (5, 25), utilities, plans, step=report.SCENARIO_STEP, default_film_coefficient=0.8,
                           workers=1)
    sheets = pd.read_excel(tmp_path / "b" / "study.xlsx", sheet_name=None)
    optima = sheets["scenario optima"]
    assert len(optima) == len(study.optima) == 3 * 4
    assert optima["ΔTmin [K]"].tolist() == pytest.approx([o.optimum.dt_min for o in study.optima], abs=1e-3)
    html = (tmp_path / "b" / "report.html").read_text(encoding="utf-8")
    assert "Price scenarios" in html and "gas +40 %" in html and "Linnhoff, B., Ahmad, S. (1990)" in html


def test_a_stray_stream_table_is_refused_not_taken_for_a_site(tmp_path, capsys):
    # a streams_backup.csv beside streams.csv once turned the report into a two-zone site report
    folder = tmp_path / "case"
    folder.mkdir()
    table = "name,T_supply,T_target,CP\nH1,180,60,3\nC1,20,135,2\n"
    (folder / "streams.csv").write_text(table, encoding="utf-8")
    (folder / "streams_backup.csv").write_text(table, encoding="utf-8")
    assert not is_site_folder(folder)
    code = cli.main(["report", str(folder), "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert code == 2 and "several files could be the stream table: streams.csv, streams_backup.csv" in err
    assert not (tmp_path / "out").exists()


# --------------------------------------------------------------------------------------------------
# where the report goes by default (issue 15: never into the case folder)


def test_default_folder_is_outside_the_case_and_said(case, work_dir, capsys):
    code, out, err = run(capsys, "report", case / "streams.csv", "--sweep", "5:10")
    assert code == 0
    folder = work_dir / "streams_report"                   # the stream table's name, in the current directory
    assert sorted(p.name for p in folder.iterdir()) == ["report.html", "study.xlsx"]
    assert "writing the report into streams_report/ in the current directory (default; set with --out DIR)" in err
    assert sorted(p.name for p in case.iterdir()) == ["costs.json", "notes.txt", "streams.csv"]
    code, _, err = run(capsys, "report", case / "streams.csv", "--sweep", "5:10", "--quiet")
    assert code == 2 and "already exists" in err and "writing the report into" not in err   # --quiet: said nothing
    assert report.default_out_folder(case) == Path("sinnott case_report")


def test_help_states_the_default_folder(capsys):
    with pytest.raises(SystemExit):
        cli.main(["report", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    assert "'<case name>_report' in the current directory" in text and "never into the case folder itself" in text


@pytest.mark.slow
def test_shipped_site_case_runs_every_section(work_dir, capsys):
    """The shipped three-zone case (invented) with the command of its README: every section computed, the film
    coefficient assumed for the price scenarios stated, each zone's grand composite curve against the mains."""
    import xml.etree.ElementTree as ET

    code, out, err = run(capsys, "report", SITE, "--hours-per-year", "8000", "--default-h", "0.8", "--sweep", "2:30",
                         "--json")
    assert code == 0
    data = json.loads(out)
    assert data["not_computed"] == []
    assert data["sections"] == ["summary", "inputs", "assumptions", "zones", "mains", "scenarios", "safety",
                                "methods", "about"]
    assert data["report"] == str(Path("three_zone_site_report") / "report.html")
    html = (work_dir / data["report"]).read_text(encoding="utf-8")
    assert "Not computed" not in html
    assert "film coefficient (price scenarios)" in html and "0.8 kW/(m²·K) assumed for" in html
    root = ET.fromstring(html.replace("<!DOCTYPE html>", ""))
    figures = {f.get("id"): f for f in root.iter("figure")}
    assert list(figures) == ["fig-zone-grand-composite", "fig-zone-profiles", "fig-site-profiles",
                             "fig-scenario-costs"] and data["figures"] == 4
    # the figures by their SVG text (matplotlib keeps each text as a comment beside its glyphs)
    svgs = re.findall(r"<figure id=\"([^\"]+)\".*?</figure>", html, flags=re.S)
    assert svgs == list(figures)
    blocks = dict(zip(svgs, re.findall(r"<figure id=\"[^\"]+\".*?</figure>", html, flags=re.S)))
    gcc = re.findall(r"<!-- (.*?) -->", blocks["fig-zone-grand-composite"])
    assert {"evaporation (ΔTmin 10 K)", "polymer_finishing (ΔTmin 10 K)", "synthesis_loop (ΔTmin 10 K)"} <= set(gcc)
    assert any(t.startswith("HP steam raise") for t in gcc) and any(t.startswith("LP steam use") for t in gcc)
    scen = re.findall(r"<!-- (.*?) -->", blocks["fig-scenario-costs"])
    for name in ("2026 contract", "gas +40 %", "carbon levy on steam", "cheap gas"):
        assert scen.count(name) == 4                         # a label at the line's end in 3 panels, the legend
