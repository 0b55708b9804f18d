"""Loading the published reference problems of tests/data/references/, and the independent recomputation of
a network's total annual cost with ht (importable by tests: the `pythonpath` setting of pytest puts tests/ on
the path)."""

import json
import re
from pathlib import Path

import ht

from heatloom.model import Stream, StreamTable, Utility, UtilityKind
from heatloom.model.costs import CostLaw, CostSettings

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
