"""Tests of heatloom.io.costs.read_costs: JSON, YAML and key/value workbooks, and every bad-input path.

The cost figures are invented for these tests (the 8000 + 500·A^0.75 law is the shape of the example
in the project's design notes, not a price).
"""

from __future__ import annotations

import json
import re

import openpyxl
import pytest

from heatloom.errors import InputError
from heatloom.io.costs import costs_from_mapping, read_costs
from heatloom.model.costs import CostLaw, CostSettings, capital_recovery_factor

EXAMPLE = {"currency": "USD", "annualised": True, "exchanger": {"fixed": 8000, "per_area": 500, "exponent": 0.75},
           "heater": {"fixed": 8000, "per_area": 600, "exponent": 0.75}, "interest_rate": 0.1, "years": 10,
           "hours_per_year": 8000}

EXAMPLE_YAML = """\
# invented example
currency: USD
annualised: true
exchanger: {fixed: 8000, per_area: 500, exponent: 0.75}
heater:
  fixed: 8000
  per_area: 600
  exponent: 0.75
interest_rate: 0.1
years: 10
hours_per_year: 8000
"""


def _write(tmp_path, name, content):
    p = tmp_path / name
    p.write_text(content if isinstance(content, str) else json.dumps(content), encoding="utf-8")
    return p



def test_read_json_example(tmp_path):
    s = read_costs(_write(tmp_path, "costs.json", EXAMPLE))
    assert isinstance(s, CostSettings)
    assert s.currency == "USD" and s.annualised is True
    assert s.exchanger == CostLaw(8000, 500, 0.75)
    assert s.heater == CostLaw(8000, 600, 0.75)
    assert s.cooler == s.exchanger                         # cooler defaults to the exchanger law
    assert s.annualisation_factor == 1.0                   # laws already per year
    assert s.annual_capital_cost(100.0, "heater") == pytest.approx(8000 + 600 * 100 ** 0.75)


def test_yaml_gives_the_same_settings(tmp_path):
    a = read_costs(_write(tmp_path, "costs.json", EXAMPLE))
    b = read_costs(_write(tmp_path, "costs.yaml", EXAMPLE_YAML))
    c = read_costs(_write(tmp_path, "costs.yml", EXAMPLE_YAML))
    assert a == b == c


def test_unknown_suffix_is_sniffed(tmp_path):
    assert read_costs(_write(tmp_path, "costs.txt", EXAMPLE)) == read_costs(_write(tmp_path, "c.cfg", EXAMPLE_YAML))


def test_installed_capital_is_annualised(tmp_path):
    data = {"annualised": False, "exchanger": {"fixed": 10000, "per_area": 800, "exponent": 0.8},
            "interest_rate": 0.08, "years": 15, "currency": "EUR"}
    s = read_costs(_write(tmp_path, "c.json", data))
    assert s.annualisation_factor == pytest.approx(capital_recovery_factor(0.08, 15))
    assert s.currency == "EUR" and s.hours_per_year == 8000.0


def test_fixed_defaults_to_zero(tmp_path):
    s = read_costs(_write(tmp_path, "c.json", {"annualised": True, "exchanger": {"per_area": 1000, "exponent": 0.6}}))
    assert s.exchanger == CostLaw(0.0, 1000.0, 0.6)
    assert s.interest_rate is None and s.years is None


def _error(tmp_path, content, name="c.json") -> InputError:
    p = _write(tmp_path, name, content)
    with pytest.raises(InputError) as err:
        read_costs(p)
    assert err.value.file == str(p)
    return err.value


def test_missing_file(tmp_path):
    with pytest.raises(InputError, match="costs file not found") as err:
        read_costs(tmp_path / "nope.json")
    assert err.value.file.endswith("nope.json")
    with pytest.raises(InputError, match="not a file"):
        read_costs(tmp_path)


@pytest.mark.parametrize("name, content, match", [
    ("c.json", "{\"annualised\": true,", "not valid JSON: .* at line 1"),
    ("c.yaml", "exchanger: {fixed: 1\n  per_area: [", "not valid YAML at line"),
    ("c.txt", "just some words", "neither JSON nor YAML"),
    ("c.txt", "{a: [", "neither JSON nor YAML"),
])
def test_not_json_or_yaml(tmp_path, name, content, match):
    with pytest.raises(InputError, match=match):
        read_costs(_write(tmp_path, name, content))


def test_binary_file_is_rejected(tmp_path):
    p = tmp_path / "c.json"
    p.write_bytes(b"\xff\xfe\x00\x81binary")
    with pytest.raises(InputError, match="not a text file in UTF-8"):
        read_costs(p)


def test_top_level_must_be_a_mapping(tmp_path):
    e = _error(tmp_path, [1, 2, 3])
    assert "must hold one mapping of keys (currency, annualised, exchanger" in e.message


def test_unknown_top_key_lists_allowed(tmp_path):
    e = _error(tmp_path, {**EXAMPLE, "discount": 0.1})
    assert e.column == "discount"
    assert ("unknown key 'discount'; allowed keys: currency, annualised, exchanger, heater, cooler, "
            "interest_rate, years, hours_per_year") in e.message


def test_unknown_law_key(tmp_path):
    e = _error(tmp_path, {**EXAMPLE, "cooler": {"per_area": 1, "exponent": 1, "slope": 2}})
    assert e.column == "cooler.slope"
    assert "unknown key 'slope' in 'cooler'; allowed keys: fixed, per_area, exponent" in e.message


@pytest.mark.parametrize("change, column, match", [
    ({"exchanger": {"fixed": 8000, "per_area": "500", "exponent": 0.75}}, "exchanger.per_area",
     "'exchanger.per_area' must be a number, got '500' .write numbers without quotes"),
    ({"exchanger": {"fixed": 8000, "per_area": True, "exponent": 0.75}}, "exchanger.per_area", "must be a number"),
    ({"exchanger": 500}, "exchanger", "'exchanger' must be a mapping with keys fixed, per_area, exponent"),
    ({"annualised": "true"}, "annualised", "'annualised' must be true or false, got 'true'"),
    ({"currency": 12}, "currency", "'currency' must be a non-empty text label, got 12"),
    ({"years": [10]}, "years", "'years' must be a number"),
])
def test_wrong_types(tmp_path, change, column, match):
    e = _error(tmp_path, {**EXAMPLE, **change})
    assert e.column == column
    assert re.search(match, e.message), e.message


@pytest.mark.parametrize("text, column, match", [
    ('"per_area": -500', "exchanger.per_area", "'exchanger.per_area' must be >= 0, got -500"),
    ('"per_area": NaN', "exchanger.per_area", "'exchanger.per_area' must be a finite number, got nan"),
    ('"per_area": Infinity', "exchanger.per_area", "must be a finite number"),
    ('"fixed": -1, "per_area": 500', "exchanger.fixed", "'exchanger.fixed' must be >= 0, got -1"),
])
def test_negative_or_nan_numbers(tmp_path, text, column, match):
    raw = '{"annualised": true, "exchanger": {' + text + ', "exponent": 0.75}}'
    e = _error(tmp_path, raw)
    assert e.column == column and match in e.message


@pytest.mark.parametrize("value", [0, 1.6, -0.5])
def test_exponent_out_of_range(tmp_path, value):
    e = _error(tmp_path, {**EXAMPLE, "heater": {"per_area": 600, "exponent": value}})
    assert e.column == "heater.exponent"
    assert "exponent must be in (0, 1.5]" in e.message or "must be >= 0" in e.message


@pytest.mark.parametrize("change, column, match", [
    ({"interest_rate": -0.05}, "interest_rate", "'interest_rate' must be >= 0, got -0.05"),
    ({"interest_rate": 8}, "interest_rate", "as a fraction (0.1 for 10 %), got 8"),
    ({"years": 0}, "years", "years must be > 0, got 0"),
    ({"hours_per_year": 9000}, "hours_per_year", "hours per year must be in (0, 8784], got 9000"),
])
def test_out_of_range_numbers(tmp_path, change, column, match):
    e = _error(tmp_path, {**EXAMPLE, "annualised": False, **change})
    assert e.column == column and match in e.message


@pytest.mark.parametrize("drop", ["interest_rate", "years"])
def test_not_annualised_needs_interest_and_years(tmp_path, drop):
    data = {k: v for k, v in EXAMPLE.items() if k != drop}
    data["annualised"] = False
    e = _error(tmp_path, data)
    assert e.column == drop
    assert f"'{drop}' is required when 'annualised' is false" in e.message


@pytest.mark.parametrize("drop, match", [("annualised", "'annualised' is required (true if the cost laws"),
                                         ("exchanger", "'exchanger' is required")])
def test_required_keys(tmp_path, drop, match):
    e = _error(tmp_path, {k: v for k, v in EXAMPLE.items() if k != drop})
    assert e.column == drop and match in e.message


def test_law_needs_per_area_and_exponent(tmp_path):
    e = _error(tmp_path, {**EXAMPLE, "exchanger": {"fixed": 8000, "per_area": 500}})
    assert e.column == "exchanger.exponent" and "'exchanger' needs 'exponent'" in e.message


def test_yaml_exponent_notation_hint(tmp_path):
    # PyYAML reads 1e4 (no dot) as text: the message says how to write it
    e = _error(tmp_path, "annualised: true\nexchanger: {fixed: 1e4, per_area: 500, exponent: 0.75}\n", "c.yaml")
    assert e.column == "exchanger.fixed" and "1.0e+4" in e.message


def test_error_string_names_file_and_key(tmp_path):
    e = _error(tmp_path, {**EXAMPLE, "exchanger": {"per_area": 500, "exponent": 2}})
    assert str(e).startswith(str(tmp_path / "c.json") + ", column 'exchanger.exponent': ")


def test_costs_from_mapping_without_file():
    with pytest.raises(InputError, match="unknown key 'x'") as err:
        costs_from_mapping({"x": 1})
    assert err.value.file is None


# --------------------------------------------------------------------------------------------------
# workbooks


def _workbook(tmp_path, rows, sheet="costs", name="c.xlsx"):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = sheet
    for r in rows:
        ws.append(list(r))
    p = tmp_path / name
    wb.save(p)
    return p


def test_read_workbook(tmp_path):
    p = _workbook(tmp_path, [("key", "value"), ("currency", "USD"), ("annualised", True), (None, None),
                             ("exchanger.fixed", 8000), ("exchanger.per_area", 500), ("exchanger.exponent", 0.75),
                             ("heater.fixed", "8000"), ("heater.per_area", 600), ("heater.exponent", 0.75),
                             ("interest_rate", 0.1), ("years", 10), ("hours_per_year", 8000)])
    assert read_costs(p) == read_costs(_write(tmp_path, "c.json", EXAMPLE))


def test_workbook_errors_name_the_row(tmp_path):
    p = _workbook(tmp_path, [("annualised", "no"), ("exchanger.per_area", 500), ("exchanger.exponent", 3)])
    with pytest.raises(InputError, match=r"row 3, column 'exchanger.exponent': exponent must be in \(0, 1.5\]"):
        read_costs(p)
    p = _workbook(tmp_path, [("annualised", True), ("exchanger.per_area", 500), ("exchanger.per_area", 400)])
    with pytest.raises(InputError, match="row 3, column 'exchanger.per_area': key 'exchanger.per_area' given twice"):
        read_costs(p)
    p = _workbook(tmp_path, [("annualised", True), ("exchanger.per_area", 500), ("exchanger.exponent", 0.7),
                             ("steam.price", 3)])
    with pytest.raises(InputError, match="row 4, column 'steam': unknown key 'steam'"):
        read_costs(p)


def test_not_a_workbook(tmp_path):
    p = tmp_path / "c.xlsx"
    p.write_text("not a zip", encoding="utf-8")
    with pytest.raises(InputError, match="not a readable Excel workbook"):
        read_costs(p)
