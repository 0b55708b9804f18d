"""Loading the published reference problems of tests/data/references/ (importable by tests: the
`pythonpath` setting of pytest puts tests/ on the path)."""

import json
from pathlib import Path

from heatloom.model import Stream, StreamTable, Utility, UtilityKind

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
