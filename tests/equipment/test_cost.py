"""Tests of heatloom.equipment.cost: cost laws, capital recovery factor, settings, total annual cost.

Cost figures in these tests are invented unless a source is named beside them.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom import defaults
from heatloom.equipment.cost import cost_breakdown, total_annual_cost
from heatloom.errors import InputError
from heatloom.model.costs import CostLaw, CostSettings, UnitKind, capital_recovery_factor, price_per_kw_year

# --------------------------------------------------------------------------------------------------
# capital recovery factor


@pytest.mark.parametrize("i, n", [(0.05, 20), (0.1, 10), (0.08, 15), (0.15, 5), (0.2, 1), (0.07, 7.5)])
def test_crf_hand_formula(i, n):
    # CRF = i(1+i)^n / ((1+i)^n − 1), written out by hand
    expected = i * (1 + i) ** n / ((1 + i) ** n - 1)
    assert capital_recovery_factor(i, n) == pytest.approx(expected, rel=1e-13)


@pytest.mark.parametrize("i, n, printed", [(0.10, 10, 0.16275), (0.05, 20, 0.08024), (0.08, 15, 0.11683),
                                           (0.12, 5, 0.27741)])
def test_crf_against_annuity_table(i, n, printed):
    # capital recovery (A/P) factors as printed, to 5 decimals, in the compound-interest tables of
    # Newnan, Eschenbach & Lavelle, Engineering Economic Analysis (Oxford University Press), interest
    # tables appendix (from memory, unverified)
    assert round(capital_recovery_factor(i, n), 5) == printed


def test_crf_zero_interest_limit():
    assert capital_recovery_factor(0.0, 8) == 1 / 8
    for i in (1e-15, 1e-12, 1e-9):
        assert capital_recovery_factor(i, 8) == pytest.approx(1 / 8, rel=10 * i)
    # CRF = 1/n + i(n + 1)/(2n) + O(i²) for small i (first-order expansion of the annuity formula)
    assert capital_recovery_factor(1e-6, 10) == pytest.approx(0.1 + 0.55e-6, rel=1e-10)


@settings(derandomize=True, max_examples=100, deadline=None)
@given(st.floats(0.0, 1.0), st.floats(0.5, 60.0))
def test_crf_bounds(i, n):
    # an annuity repays at least the straight-line share 1/n and at least the interest i
    crf = capital_recovery_factor(i, n)
    assert crf >= max(1 / n, i) * (1 - 1e-12)


@pytest.mark.parametrize("args, match", [
    ((-0.01, 10), r"interest rate must be in \[0, 1\] per year as a fraction \(0.1 for 10 %\), got -0.01"),
    ((10, 10), r"interest rate .* got 10"),
    ((0.1, 0), "years must be > 0, got 0"),
    ((0.1, float("nan")), "years must be a finite number"),
    ((True, 10), "interest rate must be a number, got True"),
])
def test_crf_rejects(args, match):
    with pytest.raises(InputError, match=match):
        capital_recovery_factor(*args)


# --------------------------------------------------------------------------------------------------
# cost laws


def test_cost_law_values():
    law = CostLaw(8000.0, 500.0, 0.75)
    assert law.cost(100.0) == pytest.approx(8000 + 500 * 100 ** 0.75, rel=1e-15)
    # per shell, area split equally: 2·(8000 + 500·50^0.75)
    assert law.cost(100.0, shells=2) == pytest.approx(2 * (8000 + 500 * 50 ** 0.75), rel=1e-15)
    out = law.cost(np.array([0.0, 10.0, 100.0]), np.array([1, 1, 2]))
    assert out == pytest.approx([8000.0, 8000 + 500 * 10 ** 0.75, 2 * (8000 + 500 * 50 ** 0.75)])
    assert law.text("EUR") == "8000 + 500·A^0.75 EUR"
    assert CostLaw(0, 1000, 0.6).text() == "1000·A^0.6"


@pytest.mark.parametrize("args, column, match", [
    ((-1.0, 500.0, 0.75), "fixed", "fixed cost must be >= 0, got -1"),
    ((0.0, float("nan"), 0.75), "per_area", "cost per area must be a finite number"),
    ((0.0, 500.0, 0.0), "exponent", r"exponent must be in \(0, 1.5\], got 0"),
    ((0.0, 500.0, 1.6), "exponent", r"exponent must be in \(0, 1.5\], got 1.6"),
    ((0.0, "x", 0.75), "per_area", "cost per area must be a number, got 'x'"),
])
def test_cost_law_rejects(args, column, match):
    with pytest.raises(InputError, match=match) as err:
        CostLaw(*args)
    assert err.value.column == column


def test_cost_law_rejects_bad_area_and_shells():
    law = CostLaw(1.0, 1.0, 1.0)
    with pytest.raises(InputError, match="area must be >= 0 m² and finite, got -2"):
        law.cost(-2.0)
    with pytest.raises(InputError, match="shells must be whole numbers >= 1, got 0"):
        law.cost(10.0, 0)
    with pytest.raises(InputError, match="shells must be whole numbers >= 1, got 1.5"):
        law.cost(10.0, 1.5)


def test_price_per_kw_year():
    assert price_per_kw_year(0.02, 8000) == 160.0
    assert price_per_kw_year(np.array([0.01, 0.03])) == pytest.approx([80.0, 240.0])
    with pytest.raises(InputError, match=r"hours per year must be in \(0, 8784\], got 9000"):
        price_per_kw_year(0.02, 9000)


# --------------------------------------------------------------------------------------------------
# settings


def test_default_settings_come_from_data_module():
    s = CostSettings()
    assert s.currency == defaults.CURRENCY and s.annualised is defaults.ANNUALISED
    assert s.exchanger.to_dict() == dict(defaults.EXCHANGER_COST_LAW)
    assert s.heater == s.exchanger == s.cooler
    assert (s.interest_rate, s.years, s.hours_per_year) == (defaults.INTEREST_RATE, defaults.YEARS, defaults.HOURS_PER_YEAR)
    assert s.annualisation_factor == pytest.approx(capital_recovery_factor(0.1, 10))
    # installed 10000 + 800·100^0.8 annualised by the CRF (hand formula)
    assert s.annual_capital_cost(100.0) == pytest.approx((10000 + 800 * 100 ** 0.8) * 0.1627453949, rel=1e-9)


def test_describe_states_defaults_and_caution():
    text = CostSettings().describe()
    assert "10000 + 800·A^0.8 USD" in text and "(default)" in text
    assert "illustrative defaults (common practice), not a quotation" in text
    assert "10 % interest over 10 years" in text and "0.1627" in text
    assert "qualified, licensed engineers" in text
    custom = CostSettings(currency="EUR", annualised=True, exchanger=CostLaw(8000, 500, 0.75),
                          heater=CostLaw(0, 1200, 0.6), interest_rate=None, years=None)
    text = custom.describe()
    assert "Exchanger capital cost per unit or shell: 8000 + 500·A^0.75 EUR per year, A in m²." in text
    assert "Heaters: 1200·A^0.6 EUR per year." in text and "Coolers: the exchanger law." in text
    assert "already give money per year" in text and "not a quotation" not in text


def test_settings_laws_by_kind():
    s = CostSettings(annualised=True, exchanger=CostLaw(0, 1000, 0.6), heater=CostLaw(0, 1200, 0.6))
    assert s.law("heater").per_area == 1200 and s.law(UnitKind.COOLER).per_area == 1000
    assert s.annualisation_factor == 1.0
    assert s.annual_capital_cost(10.0, "heater") == pytest.approx(1200 * 10 ** 0.6)
    with pytest.raises(InputError, match="unknown unit kind 'pump'; allowed: exchanger, heater, cooler"):
        s.law("pump")
    d = s.to_dict()
    assert d["heater"] == {"fixed": 0.0, "per_area": 1200.0, "exponent": 0.6} and d["annualised"] is True


@pytest.mark.parametrize("kwargs, column, match", [
    ({"interest_rate": None}, "interest_rate", "interest_rate is required when the cost laws are not annualised"),
    ({"years": None}, "years", "years is required"),
    ({"interest_rate": 10.0}, "interest_rate", r"as a fraction \(0.1 for 10 %\), got 10"),
    ({"years": -5}, "years", "years must be > 0, got -5"),
    ({"hours_per_year": 0}, "hours_per_year", r"hours per year must be in \(0, 8784\], got 0"),
    ({"currency": " "}, "currency", "currency must be a non-empty text label"),
    ({"annualised": "yes"}, "annualised", "annualised must be true or false, got 'yes'"),
    ({"heater": {"fixed": 1}}, "heater", "heater must be a CostLaw, got dict"),
])
def test_settings_reject(kwargs, column, match):
    with pytest.raises(InputError, match=match) as err:
        CostSettings(**kwargs)
    assert err.value.column == column


# --------------------------------------------------------------------------------------------------
# total annual cost


def test_total_annual_cost_hand_values():
    assert total_annual_cost(10000.0, [100.0, 50.0], [80.0, 20.0]) == 19000.0
    assert total_annual_cost([1.0, 2.0]) == 3.0
    with pytest.raises(InputError, match="2 utility duties but 1 utility prices"):
        total_annual_cost(0.0, [1.0, 2.0], [3.0])
    with pytest.raises(InputError, match="utility duties must be >= 0 kW, got -1"):
        total_annual_cost(0.0, [-1.0], [3.0])


def test_cost_breakdown_installed_capital():
    s = CostSettings(currency="EUR", exchanger=CostLaw(5000, 400, 0.8), cooler=CostLaw(2000, 300, 0.8),
                     interest_rate=0.08, years=15)
    b = cost_breakdown(s, [120.0, 30.0], [UnitKind.EXCHANGER, UnitKind.COOLER], shells=[2, 1],
                       utility_duties=[500.0], utility_prices=[25.0])
    capital = 2 * (5000 + 400 * 60 ** 0.8) + (2000 + 300 * 30 ** 0.8)
    crf = 0.08 * 1.08 ** 15 / (1.08 ** 15 - 1)
    assert b.capital == pytest.approx(capital, rel=1e-13)
    assert b.annual_capital == pytest.approx(capital * crf, rel=1e-12)
    assert b.operating == pytest.approx(12500.0)
    assert b.total_annual_cost == pytest.approx(capital * crf + 12500.0, rel=1e-12)
    assert sum(b.unit_costs) == pytest.approx(b.annual_capital)
    d = b.to_dict()
    assert d["currency"] == "EUR" and d["total_annual_cost"] == b.total_annual_cost


def test_cost_breakdown_rejects():
    with pytest.raises(InputError, match="2 areas but 1 kinds and 2 shell counts"):
        cost_breakdown(CostSettings(), [1.0, 2.0], ["exchanger"])
    with pytest.raises(InputError, match="settings must be CostSettings, got dict"):
        cost_breakdown({}, [1.0])


def test_exponent_limit_is_the_data_value():
    assert defaults.MAX_EXPONENT == 1.5
    CostLaw(0, 1, 1.5)
    with pytest.raises(InputError, match="exponent"):
        CostLaw(0, 1, math.nextafter(1.5, 2.0))
