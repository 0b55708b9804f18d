"""Shared test helpers: loading the published reference problems."""

import json
from pathlib import Path

import pytest

from heatloom.model import StreamTable

DATA = Path(__file__).parent / "data"
REFERENCES = DATA / "references"


def load_reference(name: str) -> tuple[dict, StreamTable]:
    """A published problem (tests/data/references/NAME.json) and its streams in °C."""
    data = json.loads((REFERENCES / f"{name}.json").read_text(encoding="utf-8"))
    offset = -273.15 if data.get("temperature_unit", "degC") in ("K", "kelvin") else 0.0
    s = data["streams"]
    table = StreamTable.from_arrays([x["name"] for x in s], [x["T_supply"] + offset for x in s],
                                    [x["T_target"] + offset for x in s], [x["CP"] for x in s],
                                    source=data["source"])
    return data, table


@pytest.fixture
def reference():
    return load_reference
