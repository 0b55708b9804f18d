"""Reading price scenario tables (heatloom.io.scenarios.read_price_scenarios).

All utilities, prices and scenario names here are invented for these tests; the unit conversions are
checked by hand arithmetic (1 USD/MWh at 8000 h/yr = 8 USD/(kW·yr)).
"""

import pandas as pd
import pytest

from heatloom.errors import InputError
from heatloom.io.scenarios import read_price_scenarios
from heatloom.model import Utility

BASE = (Utility("HP steam", 250, 249, 120.0), Utility("LP steam", 140, 139, 80.0),
        Utility("cooling water", 20, 30, 10.0))


def write(tmp_path, text, name="prices.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_prices_factors_and_order(tmp_path):
    p = write(tmp_path, "scenario,utility,cost [USD/MWh],factor\n"
                        "high gas,HP steam,25,\n"
                        "high gas,LP steam,,1.5\n"
                        "today,,,1\n"
                        "High Gas,,,1.1\n")           # same scenario, case ignored
    got = read_price_scenarios(p, BASE, hours_per_year=8000)
    assert [s.name for s in got] == ["high gas", "today"]
    high = got[0]
    assert dict(high.prices) == pytest.approx({"HP steam": 200.0, "LP steam": 120.0})   # 25 × 8; 80 × 1.5
    assert high.factor == pytest.approx(1.1)
    prices = {u.name: u.cost for u in high.apply(BASE)}
    assert prices == pytest.approx({"HP steam": 200.0, "LP steam": 120.0, "cooling water": 11.0})
    assert got[1].prices == () and got[1].factor == 1.0


def test_workbook_and_aliases(tmp_path):
    p = tmp_path / "prices.xlsx"
    pd.DataFrame({"Case": ["a", "a"], "Utility name": ["HP steam", "cooling water"],
                  "Price [USD/kW/yr]": [150, 12]}).to_excel(p, index=False)
    (s,) = read_price_scenarios(p, BASE)
    assert dict(s.prices) == {"HP steam": 150.0, "cooling water": 12.0}


@pytest.mark.parametrize("text, match", [
    ("scenario,utility,cost\nx,HP steam,10\nx,HP steam,12\n", r"row 3, column 'utility'.*prices utility 'HP steam' twice"),
    ("scenario,utility,cost\nx,nowhere,10\n", r"row 2, column 'utility'.*not in the utility table"),
    ("scenario,utility,cost,factor\nx,HP steam,10,2\n", r"row 2, column 'cost'.*not both"),
    ("scenario,utility,cost,factor\nx,HP steam,,\n", r"row 2, column 'cost'.*got neither"),
    ("scenario,utility,cost\nx,HP steam,-3\n", r"row 2, column 'cost'.*price must be >= 0"),
    ("scenario,utility,factor\nx,,-1\n", r"row 2, column 'factor'.*factor must be >= 0"),
    ("scenario,utility,factor\nx,,1\nx,,2\n", r"row 3, column 'factor'.*two factors"),
    ("scenario,utility,cost\n,HP steam,10\n", r"row 2, column 'scenario'.*scenario name is empty"),
    ("scenario,utility,cost\nx,,10\n", r"row 2, column 'utility'.*a price needs a utility name"),
    ("scenario,utility,cost\nx,HP steam,abc\n", r"row 2, column 'cost'.*must be a number"),
    ("scenario,utility\nx,HP steam\n", r"cost|factor"),
])
def test_bad_tables_are_located(tmp_path, text, match):
    p = write(tmp_path, text)
    with pytest.raises(InputError, match=match) as e:
        read_price_scenarios(p, BASE)
    assert "prices.csv" in str(e.value)


def test_named_utility_needs_a_utility_table(tmp_path):
    p = write(tmp_path, "scenario,utility,cost\nx,HP steam,10\n")
    with pytest.raises(InputError, match=r"row 2, column 'utility'.*no utility table was given"):
        read_price_scenarios(p)
    q = write(tmp_path, "scenario,factor\nx,1.3\n", "factors.csv")
    (s,) = read_price_scenarios(q)                   # a factor alone needs no utility table
    assert s.factor == pytest.approx(1.3)


def test_per_energy_price_needs_hours(tmp_path):
    p = write(tmp_path, "scenario,utility,cost [USD/MWh]\nx,HP steam,25\n")
    with pytest.raises(InputError, match="hours"):
        read_price_scenarios(p, BASE)


def test_file_is_never_modified(tmp_path):
    text = "scenario,utility,cost\nx,HP steam,10\n"
    p = write(tmp_path, text)
    read_price_scenarios(p, BASE)
    assert p.read_text(encoding="utf-8") == text


def test_the_currency_of_the_prices_is_kept_and_must_match_the_utility_table(tmp_path):
    p = write(tmp_path, "scenario,utility,cost [EUR/MWh],factor\nx,HP steam,25,\n")
    (s,) = read_price_scenarios(p, BASE, hours_per_year=8000)
    assert s.currency == "EUR"
    assert dict(s.prices) == pytest.approx({"HP steam": 200.0})          # 25 EUR/MWh × 8000 h / 1000
    usd = tuple(Utility(u.name, u.supply_temperature, u.target_temperature, u.cost, currency="USD") for u in BASE)
    with pytest.raises(InputError, match=r"prices.csv, column 'cost \[EUR/MWh\]'.*in EUR but the utility table's prices are "
                                         r"in USD") as e:
        read_price_scenarios(p, usd, hours_per_year=8000)
    assert "converts no currency" in str(e.value)
    (plain,) = read_price_scenarios(write(tmp_path, "scenario,factor\nx,1.3\n", "f.csv"), usd)
    assert plain.currency is None
