"""The study (heatloom.studies.study), its report (heatloom.io.report, heatloom.io.html) and workbook
(heatloom.io.workbook, heatloom.io.formats).

Published numbers: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, problem table
example (Table 3.6): 50 kW hot and 30 kW cold utility, pinch at 90 °C hot side / 80 °C cold side at
ΔTmin 10 K (tests/data/references/targeting_sinnott_four_stream.json). The film coefficient 0.5
kW/(m²·K) given to its streams is an assumption of these tests (the source gives none): it only feeds the
area, sweep and design sections, never the checked targets. The solvent-recovery case data are invented.
"""

import re
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

from heatloom.defaults import SAFETY_NOTE
from heatloom.errors import InputError
from heatloom.io import read_streams, read_utilities
from heatloom.io.export import OutputDirectory
from heatloom.io.formats import format_number, number_formats, unit_of
from heatloom.io.html import figure_svg
from heatloom.io.report import methods_used, render_report
from heatloom.io.workbook import SHEETS, study_sheets
from heatloom.model import Stream, StreamTable
from heatloom.pinch import target
from heatloom.studies.study import NotComputed, RunSettings, Study, compute_study

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "case_studies" / "solvent_recovery"
SVG = "{http://www.w3.org/2000/svg}"
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}
SECTIONS = ["summary", "inputs", "assumptions", "targets", "sweep", "design", "tac", "safety", "methods", "about"]
SETTINGS = RunSettings(sweep_range=(5.0, 30.0), sweep_step=1.0)


def sinnott(reference, h=0.5):
    data, table = reference("targeting_sinnott_four_stream")
    if h is not None:
        table = StreamTable(tuple(Stream.simple(s.name, s.supply_temperature, s.target_temperature,
                                                s.segments[0].heat_capacity_flow, film_coefficient=h)
                                  for s in table), source=table.source)
    return data, table


@pytest.fixture(scope="module")
def full():
    """A complete study of Sinnott's four streams (with the assumed h) and its rendered report."""
    from refdata import load_reference

    data, streams = sinnott(load_reference)
    study = compute_study(streams, 10.0, settings=SETTINGS, title="Sinnott four streams", dt_min_note="given",
                          sources={"stream table": "sinnott.json"}, version="test", created="2024-01-01T00:00:00")
    return data, study, render_report(study)


def parse(doc: str) -> ET.Element:
    """The whole page as XML (it must be well-formed)."""
    assert doc.startswith("<!DOCTYPE html>\n")
    return ET.fromstring(doc.split("\n", 1)[1])


class Balance(HTMLParser):
    """Checks that every non-void element is closed in order (html.parser's view of the page)."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack, self.errors = [], []

    def handle_starttag(self, tag, attrs):
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        pass

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1] if self.stack else 'nothing'}")
        else:
            self.stack.pop()


def table_rows(root, table_id):
    table = root.find(f".//table[@id='{table_id}']")
    assert table is not None, table_id
    return table.find("tbody").findall("tr")


# --------------------------------------------------------------------------------------------------
# the page


def test_page_is_well_formed_html_and_xml(full):
    _, _, rendered = full
    root = parse(rendered.html)                      # raises on any XML error
    assert root.tag == "html"
    p = Balance()
    p.feed(rendered.html)
    p.close()
    assert p.errors == [] and p.stack == []
    svgs = re.findall(r"<svg\b.*?</svg>", rendered.html, flags=re.S)
    assert len(svgs) == rendered.figures
    for s in svgs:
        assert ET.fromstring(s).tag == f"{SVG}svg"


def test_every_section_in_order(full):
    _, _, rendered = full
    root = parse(rendered.html)
    ids = [s.get("id") for s in root.iter("section")]
    assert ids == SECTIONS
    assert [k for k, _ in rendered.sections] == SECTIONS
    nav = [a.get("href") for a in root.find(".//nav").iter("a")]
    assert nav == [f"#{k}" for k in SECTIONS]
    assert root.find(".//span[@id='section-count']").text == str(len(SECTIONS))


def test_targets_table_equals_pinch_target_and_the_published_values(full):
    data, study, rendered = full
    root = parse(rendered.html)
    shown = {}
    for tr in table_rows(root, "targets-table"):
        quantity = tr.find("th").text
        cell = tr.findall("td")[0]
        shown[quantity] = (cell.get("data-value"), cell.text, tr.findall("td")[1].text)
    t = target(study.streams, 10.0)
    expected = {"ΔTmin": t.dt_min, "minimum hot utility": t.hot_utility, "minimum cold utility": t.cold_utility,
                "maximum heat recovery": t.heat_recovery, "hot process duty": t.hot_process_duty,
                "cold process duty": t.cold_process_duty, "pinch, hot side": t.pinch.hot,
                "pinch, cold side": t.pinch.cold, "pinch, shifted": t.pinch.shifted}
    for quantity, value in expected.items():
        full_value, text, unit = shown[quantity]
        assert float(full_value) == value, quantity                  # every digit of pinch.target's number
        assert text == format_number(value, unit)                     # shown as the workbook shows it
    # every number in the table is one of pinch.target's or of the area targets (nothing else is shown)
    a = study.area
    known = set(expected.values()) | {a.area, a.units, a.units_mer, a.shells, a.capital_cost, a.energy_cost,
                                      a.total_annual_cost}
    numbers = [float(v) for v, _, _ in shown.values() if v is not None]
    assert all(x in known for x in numbers)
    # Sinnott, Coulson & Richardson Vol. 6, ch. 3, Table 3.6: 50 kW hot, 30 kW cold, pinch 90/80 °C
    pub = data["published"]
    assert float(shown["minimum hot utility"][1]) == pub["hot_utility_kW"]
    assert float(shown["minimum cold utility"][1]) == pub["cold_utility_kW"]
    assert float(shown["pinch, hot side"][1]) == pub["pinch_hot_C"]
    assert float(shown["pinch, cold side"][1]) == pub["pinch_cold_C"]


def test_summary_and_design_numbers_are_those_of_the_results(full):
    _, study, rendered = full
    root = parse(rendered.html)
    summary = {tr.find("th").text: tr.find("td").get("data-value") for tr in table_rows(root, "summary-table")}
    assert float(summary["minimum hot utility"]) == study.targets.hot_utility
    net = study.design
    design = {tr.find("th").text: tr.find("td").get("data-value") for tr in table_rows(root, "design-summary-table")}
    assert int(design["units"]) == net.units
    assert float(design["total annual cost"]) == net.total_annual_cost
    units = table_rows(root, "design-units-table")
    assert len(units) == net.units
    duty = [float(tr.findall("td")[4].get("data-value")) for tr in units]
    assert sorted(duty) == sorted(u.duty for u in (*net.exchangers, *net.heaters, *net.coolers))


def test_no_script_and_nothing_external(full):
    _, _, rendered = full
    doc = rendered.html
    assert not re.search(r"<script\b", doc, flags=re.I)
    assert not re.search(r"\son[a-z]+\s*=", doc, flags=re.I)       # no event handlers
    assert "javascript:" not in doc.lower()
    assert not re.search(r"\ssrc\s*=", doc, flags=re.I)
    assert "@import" not in doc and "<link" not in doc and "<iframe" not in doc and "<img" not in doc
    assert set(re.findall(r'href="([^#][^"]*)"', doc)) == set()     # only links inside the page
    assert set(re.findall(r"url\(([^#][^)]*)\)", doc)) == set()
    # the only absolute URIs are XML namespace names
    uris = re.findall(r'(\S+)="https?://[^"]*"', doc)
    assert set(uris) <= {"xmlns", "xmlns:xlink"}


def test_figures_are_counted_unique_and_not_empty(full):
    _, _, rendered = full
    root = parse(rendered.html)
    figures = list(root.iter("figure"))
    # composite, grand composite, balanced composite, driving force, 2 sweep, grid diagram
    assert rendered.figures == len(figures) == 7
    assert root.find(".//meta[@name='heatloom-figures']").get("content") == "7"
    assert root.find(".//span[@id='figure-count']").text == "7"
    for f in figures:
        svg = f.find(f"{SVG}svg")
        assert svg is not None
        assert len(list(svg.iter(f"{SVG}path"))) > 20
        w, h = (float(x) for x in svg.get("viewBox").split()[2:])
        assert w > 100 and h > 100
    ids = re.findall(r'\bid="([^"]+)"', rendered.html)
    assert len(ids) == len(set(ids))
    assert all(re.fullmatch(r"[^\"]+", x) for x in ids)


def test_assumptions_cautions_and_methods(full):
    _, study, rendered = full
    root = parse(rendered.html)
    text = "".join(root.find(".//section[@id='assumptions']").itertext())
    assert "10 K" in text and "ΔTmin" in text
    assert study.costs.describe() in text                            # the cost basis, verbatim
    assert "ideal utilities" in text                                  # no utility table: assumed, and said so
    safety = "".join(root.find(".//section[@id='safety']").itertext())
    assert SAFETY_NOTE in safety and "qualified, licensed engineers" in safety
    methods = "".join(root.find(".//section[@id='methods']").itertext())
    for name in ("Linnhoff, B., Flower, J. R. (1978)", "Papoulias, S. A., Grossmann, I. E. (1983)",
                 "Yee, T. F., Grossmann, I. E. (1990)", "Townsend, D. W., Linnhoff, B. (1984)"):
        assert name in methods
    assert "Incropera" not in methods          # no existing network: the ε-NTU rating was not used


def test_missing_film_coefficients_say_what_was_not_computed(reference):
    # Sinnott's streams as published, without h and without a default: targets only
    _, streams = sinnott(reference, h=None)
    study = compute_study(streams, 10.0, settings=SETTINGS, title="no h", dt_min_note="given", version="test")
    assert not isinstance(study.targets, NotComputed)
    for part in (study.area, study.sweep, study.design):
        assert isinstance(part, NotComputed) and "film coefficient" in part.reason
    rendered = render_report(study)
    root = parse(rendered.html)
    assert [s.get("id") for s in root.iter("section")] == SECTIONS
    for key in ("sweep", "design", "tac"):
        box = root.find(f".//section[@id='{key}']/div[@class='not-computed']")
        assert box is not None and "Not computed" in "".join(box.itertext())
    assert "film coefficient" in "".join(root.find(".//section[@id='design']").itertext())
    quantities = [tr.find("th").text for tr in table_rows(root, "targets-table")]
    assert "minimum area (Townsend–Linnhoff)" not in quantities      # never a number that was not computed
    assert rendered.figures == 4                          # the composite, grand, balanced composite, driving force
    assert {w for w, _ in rendered.not_computed} >= {"Cost targets against ΔTmin",
                                                      "Network for maximum energy recovery"}
    names = [m for m, _, _ in methods_used(study)]
    assert not any("Yee" in m or "Townsend" in m for m in names)


def test_failed_targets_keep_every_section():
    s = StreamTable((Stream.simple("H", 150, 60, 2.0), Stream.simple("C", 30, 120, 2.5)))
    study = Study(title="failed", streams=s, dt_min=10.0, dt_min_note="given",
                  targets=NotComputed("the utilities given cannot serve the process", "InfeasibleError"))
    rendered = render_report(study)
    root = parse(rendered.html)
    assert [x.get("id") for x in root.iter("section")] == SECTIONS
    assert rendered.figures == 0
    assert "cannot serve" in "".join(root.find(".//section[@id='targets']").itertext())


def test_figure_svg_prefixes_ids_and_drops_metadata():
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots()
    ax.plot([0, 1], [0, 1])
    ax.set_xlabel("x [K]")
    svg = figure_svg(fig, "k1", "a <line> & more")
    root = ET.fromstring(svg)
    ids = [e.get("id") for e in root.iter() if e.get("id")]
    assert ids and all(i.startswith("k1-") for i in ids)
    refs = re.findall(r'href="#([^"]+)"', svg) + re.findall(r"url\(#([^)]+)\)", svg)
    assert refs and set(refs) <= set(ids)
    assert root.get("aria-label") == "a <line> & more"
    assert "<metadata" not in svg and "<?xml" not in svg
    with pytest.raises(ValueError, match="figure key"):
        figure_svg(plt.figure(), "bad key", "x")


# --------------------------------------------------------------------------------------------------
# the workbook


def test_number_formats_follow_units():
    assert unit_of("duty [kW]") == "kW" and unit_of("T_supply [°C]") == "°C" and unit_of("name") is None
    assert number_formats("kW") == ("{:,.1f}", "#,##0.0")
    assert number_formats("USD/yr")[1] == "#,##0"
    assert number_formats("USD/(kW·yr)")[1] == "#,##0.00"
    assert number_formats("-", 4) == ("{:d}", "0")
    assert format_number(float("nan"), "kW") == "–"
    assert format_number(-0.00001, "kW") == "0.0"


@pytest.fixture(scope="module")
def solvent_study():
    streams = read_streams(DEMO / "streams.csv")
    utilities = read_utilities(DEMO / "utilities.csv", process=streams)
    return compute_study(streams, 10.0, utilities, settings=RunSettings(sweep_range=(5.0, 20.0), sweep_step=1.0),
                         title="solvent recovery (invented)", dt_min_note="given", version="test",
                         sources={"stream table": str(DEMO / "streams.csv"), "utilities": str(DEMO / "utilities.csv")})


def test_workbook_opens_with_every_sheet_units_and_formats(tmp_path, solvent_study):
    out = OutputDirectory(tmp_path)
    path = out.workbook("study.xlsx", study_sheets(solvent_study))
    frames = pd.read_excel(path, sheet_name=None)
    assert list(frames) == list(SHEETS)
    assert frames["streams"].shape[0] == sum(len(s.segments) for s in solvent_study.streams)
    assert frames["targets"].set_index("quantity").loc["minimum hot utility", "value"] == \
        pytest.approx(solvent_study.targets.hot_utility)
    assert frames["utilities"]["duty at targets [kW]"].tolist() == \
        pytest.approx([d.duty for d in solvent_study.targets.placement.duties])
    for name, frame in frames.items():
        long_form = {"value", "unit"} <= set(frame.columns)
        for c in frame.columns:
            numeric = pd.api.types.is_numeric_dtype(frame[c]) and not pd.api.types.is_bool_dtype(frame[c])
            counts = c in ("shells", "hairpins", "hot_order", "cold_order", "hot_branch", "hot_branch_order",
                           "cold_branch", "cold_branch_order")   # whole numbers and labels of the network-table format
            if numeric and not frame[c].isna().all() and not long_form and not counts:
                assert unit_of(c) is not None, f"sheet {name!r}, column {c!r} has no unit"
    wb = openpyxl.load_workbook(path)
    assert wb.sheetnames == list(SHEETS)
    ws = wb["network units"]
    header = [c.value for c in ws[1]]
    assert all(c.font.bold for c in ws[1]) and ws.freeze_panes == "A2"
    duty = ws.cell(row=2, column=header.index("duty [kW]") + 1)
    assert isinstance(duty.value, (int, float)) and duty.number_format == "#,##0.0"
    t_in = ws.cell(row=2, column=header.index("hot in [°C]") + 1)
    assert t_in.number_format == "#,##0.0"
    targets = wb["targets"]
    rows = {r[0].value: r for r in targets.iter_rows(min_row=2)}
    assert rows["minimum hot utility"][1].number_format == "#,##0.0"
    assert rows["minimum units, overall (N − 1)"][1].number_format == "0"


def test_workbook_refuses_to_overwrite(tmp_path, solvent_study):
    sheets = study_sheets(solvent_study)
    OutputDirectory(tmp_path).workbook("study.xlsx", sheets)
    before = (tmp_path / "study.xlsx").read_bytes()
    with pytest.raises(InputError, match="already exists"):
        OutputDirectory(tmp_path).workbook("study.xlsx", sheets)
    assert (tmp_path / "study.xlsx").read_bytes() == before
    OutputDirectory(tmp_path, force=True).workbook("study.xlsx", sheets)


def test_not_computed_results_keep_their_sheet(reference):
    _, streams = sinnott(reference, h=None)
    study = compute_study(streams, 10.0, settings=SETTINGS, title="no h", dt_min_note="given", version="test")
    sheets = study_sheets(study)
    assert list(sheets) == list(SHEETS)
    for name in ("network units", "sweep", "tac network units"):
        assert list(sheets[name].columns) == ["status"]
        assert sheets[name]["status"][0].startswith("not computed: ")


def test_assumed_film_coefficient_is_stated_where_it_is_used(reference):
    # Sinnott's streams as published (no h) with an assumed 0.5 kW/(m²·K): areas and the design are computed,
    # and the assumption is stated beside them
    _, streams = sinnott(reference, h=None)
    study = compute_study(streams, 10.0, default_film_coefficient=0.5, settings=RunSettings(), version="test")
    assert isinstance(study.sweep, NotComputed) and "no ΔTmin range" in study.sweep.reason
    assert not isinstance(study.area, NotComputed) and not isinstance(study.design, NotComputed)
    rows = {a: (v, b) for a, v, b in study.assumption_rows()}
    value, basis = rows["film coefficients"]
    assert value.startswith("0.5 kW/(m²·K) assumed for stream '1', stream '2'") and basis == "assumed (--default-h)"
    assert any("0.5 kW/(m²·K) was assumed" in c for c in study.cautions())
    root = parse(render_report(study).html)
    assert "0.5 kW/(m²·K) assumed" in "".join(root.find(".//section[@id='assumptions']").itertext())
    assert "0.5 kW/(m²·K) was assumed" in "".join(root.find(".//section[@id='safety']").itertext())
