"""Loading the published reference problems of tests/data/references/ (importable by tests: the
`pythonpath` setting of pytest puts tests/ on the path)."""

import json
import re
from pathlib import Path

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
