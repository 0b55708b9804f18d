"""Loading the published reference problems of tests/data/references/, and the independent recomputation of
a network's total annual cost with ht (importable by tests: the `pythonpath` setting of pytest puts tests/ on
the path)."""

import json
import re
from pathlib import Path

import ht
import pytest

from heatloom.model import Stream, StreamTable, Utility, UtilityKind
from heatloom.model.costs import CostLaw, CostSettings
from heatloom.network.structure import check_network

DATA = Path(__file__).parent / "data"
REFERENCES = DATA / "references"


def _offset(data: dict) -> float:
    return -273.15 if data.get("temperature_unit", "degC") in ("K", "kelvin") else 0.0


def load_reference(name: str) -> tuple[dict, StreamTable]:
    """A published problem (tests/data/references/NAME.json) and its streams in °C, with h when given."""
    data = json.loads((REFERENCES / f"{name}.json").read_text(encoding="utf-8"))
    off = _offset(data)
    table = StreamTable(tuple(Stream.simple(x["name"], x["T_supply"] + off, x["T_target"] + off, x["CP"],
                                            film_coefficient=x.get("h")) for x in data["streams"]),
                        source=data["source"])
    return data, table


def reference_utilities(data: dict) -> list[Utility]:
    """The utilities of a synthesis reference file in °C (the files name them HU and CU)."""
    off = _offset(data)
    return [Utility(u["name"], u["T_supply"] + off, u["T_target"] + off, u["cost_per_kW_year"],
                    UtilityKind.HOT if u["name"] == "HU" else UtilityKind.COLD, u.get("h"))
            for u in data["utilities"]]


# the published cost laws of the synthesis files, parsed from their text independently of the code under test

LAW = re.compile(r"\s*(?:(?P<fixed>[\d.]+)\s*\+\s*)?(?P<per_area>[\d.]+)\s*\*\s*A(?:\s*\*\*\s*(?P<exp>[\d.]+))?"
                 r"\s*per year\s*")


def parse_law(text: str) -> tuple[float, float, float]:
    """'8600 + 670*A**0.83 per year' → (8600, 670, 0.83)."""
    m = LAW.fullmatch(text)
    assert m, text
    return float(m["fixed"] or 0.0), float(m["per_area"]), float(m["exp"] or 1.0)


def published_laws(cost_law: dict) -> dict:
    """Unit kind → (fixed, per_area, exponent) from a reference file's cost law text."""
    if "all_units" in cost_law:
        law = parse_law(cost_law["all_units"])
        return {"exchanger": law, "heater": law, "cooler": law}
    return {"exchanger": parse_law(cost_law["exchangers_and_coolers"]), "heater": parse_law(cost_law["heaters"]),
            "cooler": parse_law(cost_law["exchangers_and_coolers"])}


def cost_settings(cost_law: dict) -> CostSettings:
    laws = {k: CostLaw(*v) for k, v in published_laws(cost_law).items()}
    return CostSettings(annualised=True, **laws)


def recomputed_tac(net, h: dict, price: dict, laws: dict) -> float:
    """TAC of a network from its own temperatures, independently of heatloom's sizing: each area Q/(U·LMTD)
    with ht.LMTD (Caleb Bell's ht library, counter-current), U = 1/(1/h_hot + 1/h_cold) from ``h`` (name →
    film coefficient [kW/(m²·K)]), capital a + b·A^c from ``laws`` (kind → (a, b, c)), and each utility's
    duty times ``price`` (name → [money/(kW·year)])."""
    total = 0.0

    def capital(kind, duty, hot, cold, thi, tho, tci, tco):
        u = 1.0 / (1.0 / h[hot] + 1.0 / h[cold])
        area = duty / (u * ht.LMTD(thi, tho, tci, tco))
        a, b, c = laws[kind]
        return a + b * area ** c

    for e in net.exchangers:
        total += capital("exchanger", e.duty, e.hot, e.cold, e.hot_in, e.hot_out, e.cold_in, e.cold_out)
    for x in net.heaters:
        total += capital("heater", x.duty, x.utility, x.cold, x.utility_in, x.utility_out, x.cold_in, x.cold_out)
        total += price[x.utility] * x.duty
    for x in net.coolers:
        total += capital("cooler", x.duty, x.hot, x.utility, x.hot_in, x.hot_out, x.utility_in, x.utility_out)
        total += price[x.utility] * x.duty
    return total


def tac_by_published_law(net, data, streams) -> float:
    """TAC from the network's own temperatures (refdata.recomputed_tac: ht.LMTD, U from the film
    coefficients) with the published law and prices of a reference file."""
    h = {s.name: s.segments[0].film_coefficient for s in streams}
    h.update({u["name"]: u["h"] for u in data["utilities"]})
    price = {u["name"]: u["cost_per_kW_year"] for u in data["utilities"]}
    return recomputed_tac(net, h, price, published_laws(data["cost_law"]))


def end_approaches(net):
    """(hot-end, cold-end) approach of every unit [K]."""
    for e in net.exchangers:
        yield e.hot_in - e.cold_out, e.hot_out - e.cold_in
    for x in net.heaters:
        yield x.utility_in - x.cold_out, x.utility_out - x.cold_in
    for x in net.coolers:
        yield x.hot_in - x.utility_out, x.hot_out - x.utility_in


def assert_sound(net, data, streams, utilities, emat=1.0):
    """A TAC network of a reference file passes check_network, keeps EMAT at every end, and costs what its own
    temperatures cost by the published law (:func:`tac_by_published_law`)."""
    check_network(net, streams, utilities, dt_min=emat)
    assert min(min(pair) for pair in end_approaches(net)) >= emat - 1e-6
    assert net.total_annual_cost == pytest.approx(tac_by_published_law(net, data, streams), rel=1e-9)
    assert net.total_annual_cost == pytest.approx(net.capital_cost + net.operating_cost, rel=1e-12)
