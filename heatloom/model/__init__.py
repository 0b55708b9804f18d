"""The data model: streams and utilities (plain numbers in canonical units), as every layer sees them."""

from .streams import (
    ABSOLUTE_ZERO,
    Segment,
    Stream,
    StreamArrays,
    StreamTable,
    Utility,
    UtilityKind,
    finite_number,
)

__all__ = [
    "ABSOLUTE_ZERO",
    "finite_number",
    "Segment",
    "Stream",
    "StreamTable",
    "StreamArrays",
    "UtilityKind",
    "Utility",
]
