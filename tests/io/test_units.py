"""Unit spellings against hand-computed conversion factors.

Expected values are computed here from the exact definitions listed in
NIST Special Publication 811 (2008), *Guide for the Use of the International System of Units*,
Appendix B.8 (and its footnotes), independently of pint:

* international foot = 0.3048 m; avoirdupois pound = 0.453 592 37 kg (exact);
* IT calorie = 4.1868 J (exact); the IT Btu is the heat raising 1 lb of water by 1 °F at the IT
  calorie's specific heat of 1 cal_IT/(g·°C): Btu_IT = 4.1868 J × 453.592 37 × 5/9
  = 1055.055 852 62 J (exact), printed as 1.055 056 E+03 J;
* t/°C = (t/°F − 32)/1.8; t/°C = T/K − 273.15; T/K = (T/°R)/1.8;
* ton of refrigeration = 12 000 Btu_IT/h.

Values "printed in NIST SP 811 B.8" below are quoted from memory (unverified); each is checked only at
the precision printed, and the exact-definition value is the main check.
"""

from __future__ import annotations

import numpy as np
import pint
import pytest

from heatloom.errors import InputError
from heatloom.io.units import UNIT_REGISTRY, QuantityKind, from_canonical, parse_unit, to_canonical

K = QuantityKind
FT = 0.3048  # m, exact
BTU_IT = 4.1868 * 453.59237 * 5 / 9  # J, exact (NIST SP 811 B.8 footnote)
HOUR = 3600.0  # s
DEGF = 5 / 9  # K per °F difference


def test_btu_it_definition_matches_nist_printed_value():
    # NIST SP 811 (2008) B.8: British thermal unit_IT to joule 1.055 056 E+03 (printed value, from memory)
    assert round(BTU_IT, 2) == 1055.06
    assert BTU_IT == pytest.approx(1055.05585262, rel=1e-12)


@pytest.mark.parametrize("text, value, expected", [
    ("degF", 212.0, 100.0), ("F", 212.0, 100.0), ("°F", 32.0, 0.0), ("℉", -40.0, -40.0), ("deg F", 50.0, 10.0),
    ("degrees Fahrenheit", 98.6, 37.0),
    ("C", 25.0, 25.0), ("°C", 25.0, 25.0), ("degC", -5.5, -5.5), ("oC", 100.0, 100.0), ("℃", 1.0, 1.0),
    ("[°C]", 1.0, 1.0), ("deg C", 7.0, 7.0), ("degrees Celsius", 7.0, 7.0),
    ("K", 373.15, 100.0), ("K", 0.0, -273.15), ("kelvin", 273.15, 0.0),
    ("°R", 671.67, 100.0), ("degR", 0.0, -273.15),
])
def test_temperature_spellings(text, value, expected):
    # NIST SP 811 (2008) B.8: t/°C = (t/°F - 32)/1.8, t/°C = T/K - 273.15, T/K = (T/°R)/1.8
    got = to_canonical([value], text, K.TEMPERATURE)[0]
    assert got == pytest.approx(expected, abs=1e-12)


def test_fahrenheit_conversion_is_exact_at_fixed_points():
    assert to_canonical([32.0, 212.0], "°F", K.TEMPERATURE).tolist() == [0.0, 100.0]


@pytest.mark.parametrize("text, value, expected", [
    ("K", 10.0, 10.0), ("°C", 10.0, 10.0), ("C", 10.0, 10.0), ("degC", 10.0, 10.0), ("Δ°C", 3.0, 3.0),
    ("°F", 9.0, 5.0), ("F", 18.0, 10.0), ("delta_degF", 1.8, 1.0), ("°R", 9.0, 5.0),
])
def test_temperature_difference_spellings(text, value, expected):
    # a difference of 1 °F is 5/9 K (NIST SP 811 B.8 footnote on temperature intervals)
    assert to_canonical([value], text, K.TEMPERATURE_DIFFERENCE)[0] == pytest.approx(expected, rel=1e-14)


@pytest.mark.parametrize("text, factor_to_kw", [
    ("kW", 1.0), ("kJ/s", 1.0), ("MW", 1000.0), ("W", 1e-3), ("J/s", 1e-3), ("GW", 1e6), ("KW", 1.0),
    ("Btu/h", BTU_IT / HOUR / 1000), ("Btu/hr", BTU_IT / HOUR / 1000), ("BTU/h", BTU_IT / HOUR / 1000),
    ("MMBtu/h", 1e6 * BTU_IT / HOUR / 1000), ("kBtu/h", BTU_IT / HOUR),
    ("kcal/h", 4186.8 / HOUR / 1000), ("Gcal/h", 4.1868e9 / HOUR / 1000),
    ("TR", 12000 * BTU_IT / HOUR / 1000),
])
def test_duty_spellings(text, factor_to_kw):
    assert to_canonical([2.0], text, K.DUTY)[0] == pytest.approx(2.0 * factor_to_kw, rel=1e-12)


def test_btu_per_hour_nist_printed_factor():
    # NIST SP 811 (2008) B.8: Btu_IT/h to W 2.930 711 E-01 (printed value, from memory)
    watts = to_canonical([1.0], "Btu/h", K.DUTY)[0] * 1000
    assert watts == pytest.approx(0.29307107017222, rel=1e-12)
    assert round(watts, 7) == 0.2930711


def test_ton_of_refrigeration_nist_printed_factor():
    # NIST SP 811 (2008) B.8: ton of refrigeration (12 000 Btu_IT/h) to W 3.516 853 E+03 (printed, from memory)
    assert round(to_canonical([1.0], "TR", K.DUTY)[0] * 1000, 3) == 3516.853


@pytest.mark.parametrize("text, factor_to_kw_per_k", [
    ("kW/K", 1.0), ("MW/K", 1000.0), ("MW/°C", 1000.0), ("kW/C", 1.0), ("kW/°C", 1.0), ("W/K", 1e-3),
    ("kW/degC", 1.0), ("MW/C", 1000.0), ("kJ/s/K", 1.0), ("kJ/(s K)", 1.0),
    ("Btu/h/F", BTU_IT / HOUR / DEGF / 1000), ("Btu/(h·°F)", BTU_IT / HOUR / DEGF / 1000),
    ("Btu/hr-°F", BTU_IT / HOUR / DEGF / 1000), ("Btu/h°F", BTU_IT / HOUR / DEGF / 1000),
    ("MMBtu/h/F", 1e6 * BTU_IT / HOUR / DEGF / 1000),
])
def test_heat_capacity_flow_spellings(text, factor_to_kw_per_k):
    # °C and °F in a denominator are temperature differences
    assert to_canonical([1.0], text, K.HEAT_CAPACITY_FLOW)[0] == pytest.approx(factor_to_kw_per_k, rel=1e-12)


BTU_FILM = BTU_IT / HOUR / FT**2 / DEGF  # W/(m²·K) per Btu_IT/(h·ft²·°F)


@pytest.mark.parametrize("text, factor", [
    ("kW/m2K", 1.0), ("W/m²K", 1e-3), ("kW/m2/K", 1.0), ("W/m2.K", 1e-3), ("W/(m2 K)", 1e-3),
    ("kW/m²°C", 1.0), ("W/m2*K", 1e-3), ("W/m^2/K", 1e-3), ("W/(m**2*K)", 1e-3), ("W m-2 K-1", 1e-3),
    ("W·m⁻²·K⁻¹", 1e-3), ("W/m²·K", 1e-3), ("W/m2 °C", 1e-3), ("kW/(m²·K)", 1.0), ("[W/m2K]", 1e-3),
    ("W/m2C", 1e-3), ("kcal/h/m2/C", 4186.8 / HOUR / 1000),
    ("Btu/h/ft2/F", BTU_FILM / 1000), ("Btu/(h·ft²·°F)", BTU_FILM / 1000), ("Btu/hr-ft²-°F", BTU_FILM / 1000),
    ("Btu/h.ft2.F", BTU_FILM / 1000),
])
def test_film_coefficient_spellings(text, factor):
    # 1 W/(m²·K) = 0.001 kW/(m²·K) by the SI prefix kilo (NIST SP 811 Table 5)
    assert to_canonical([1.0], text, K.FILM_COEFFICIENT)[0] == pytest.approx(factor, rel=1e-12)


def test_film_coefficient_btu_nist_printed_factor():
    # NIST SP 811 (2008) B.8: Btu_IT/(h·ft²·°F) to W/(m²·K) 5.678 263 E+00 (printed value, from memory)
    w = to_canonical([1.0], "Btu/(h ft2 °F)", K.FILM_COEFFICIENT)[0] * 1000
    assert round(w, 6) == 5.678263


def test_naive_pint_reading_is_why_we_parse_ourselves():
    # pint alone reads W/m**2*K left to right (kelvin in the numerator) and does not know m2
    naive = UNIT_REGISTRY.parse_units("W/m**2*K")
    assert naive.dimensionality != K.FILM_COEFFICIENT.dimensionality
    with pytest.raises(pint.UndefinedUnitError):
        UNIT_REGISTRY.Unit("m2")
    # and bare C / F are coulomb / farad to pint, degrees to heatloom
    assert UNIT_REGISTRY.Unit("C").dimensionality != K.TEMPERATURE.dimensionality
    assert parse_unit("C", K.TEMPERATURE).unit.dimensionality == K.TEMPERATURE.dimensionality


@pytest.mark.parametrize("text, value, expected", [
    ("m2", 1.0, 1.0), ("m²", 2.0, 2.0), ("ft2", 1.0, FT**2), ("ft²", 10.0, 10 * FT**2), ("cm2", 1.0, 1e-4),
])
def test_area_spellings(text, value, expected):
    # NIST SP 811 B.8: square foot to m² 9.290 304 E-02 (exact)
    assert to_canonical([value], text, K.AREA)[0] == pytest.approx(expected, rel=1e-14)


@pytest.mark.parametrize("text, factor", [
    ("€/kW/yr", 1.0), ("$/(kW·a)", 1.0), ("USD/MW/y", 1e-3), ("k€/kW/year", 1e3), ("EUR per kW per year", 1.0),
    ("/kW/yr", 1.0), ("money/(kW·year)", 1.0), ("£/kW/a", 1.0), ("$/MW·yr", 1e-3),
])
def test_cost_rate_spellings(text, factor):
    assert to_canonical([1.0], text, K.COST_RATE)[0] == pytest.approx(factor, rel=1e-14)


@pytest.mark.parametrize("unit", [None, "", "-", "[-]"])
def test_no_unit_means_canonical(unit):
    assert to_canonical([1.5, -2.0], unit, K.HEAT_CAPACITY_FLOW).tolist() == [1.5, -2.0]


@pytest.mark.parametrize("text, kind, match", [
    ("xyz/K", K.HEAT_CAPACITY_FLOW, r"unknown unit 'xyz' in 'xyz/K' \(expected a heat capacity flow rate"),
    ("degX", K.TEMPERATURE, r"unknown unit 'degX' \(expected a temperature unit"),
    ("kW", K.HEAT_CAPACITY_FLOW, r"unit 'kW' measures a duty \(expected a heat capacity flow rate"),
    ("kW/K", K.DUTY, r"unit 'kW/K' measures a heat capacity flow rate \(expected a duty"),
    ("W/m K", K.FILM_COEFFICIENT, "measures a thermal conductivity"),
    ("kg/s", K.HEAT_CAPACITY_FLOW, "measures a mass flow rate"),
    ("Δ°C", K.TEMPERATURE, "is a temperature difference, not a temperature"),
    ("kW/K", K.TEMPERATURE, "expected a temperature unit"),
    ("C", K.DUTY, "measures a temperature"),
    ("$/MWh", K.COST_RATE, "price per energy needs the operating hours per year"),
    ("MBtu/h", K.DUTY, "'MBtu' in 'MBtu/h' is ambiguous"),
    ("R", K.TEMPERATURE, "ambiguous"),
    ("kW/(m2", K.FILM_COEFFICIENT, "unbalanced brackets"),
    ("kW/", K.DUTY, "nothing after '/'"),
    ("1000 kW", K.DUTY, "cannot read unit '1000 kW'"),
])
def test_bad_units(text, kind, match):
    with pytest.raises(InputError, match=match):
        parse_unit(text, kind)


@pytest.mark.parametrize("text, kind", [("°F", K.TEMPERATURE), ("K", K.TEMPERATURE), ("°R", K.TEMPERATURE),
                                        ("°F", K.TEMPERATURE_DIFFERENCE), ("Btu/h/F", K.HEAT_CAPACITY_FLOW),
                                        ("W/m2K", K.FILM_COEFFICIENT), ("MMBtu/h", K.DUTY),
                                        ("USD/MW/y", K.COST_RATE)])
def test_from_canonical_inverts_to_canonical(text, kind):
    x = np.array([-40.0, 0.0, 1.0, 123.456, 1e5])
    np.testing.assert_allclose(from_canonical(to_canonical(x, text, kind), text, kind), x, rtol=1e-13, atol=1e-12)


def test_conversion_is_vectorised_and_returns_a_new_array():
    x = np.linspace(0.0, 1000.0, 100_000)
    y = to_canonical(x, "degF", K.TEMPERATURE)
    assert y.shape == x.shape and y is not x
    np.testing.assert_allclose(y, (x - 32.0) / 1.8, rtol=0, atol=1e-12)
    assert x[0] == 0.0  # input untouched


def test_quantity_kind_canonical_units():
    assert [k.canonical for k in K] == ["°C", "K", "kW", "kW/K", "kW/(m²·K)", "m²", "money/(kW·year)", "kg/s",
                                        "kJ/(kg·K)"]
