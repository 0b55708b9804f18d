"""heatloom: pinch analysis, heat-exchanger network synthesis, sizing, costing and retrofit.

The public API.  Everything here takes and returns plain numbers in canonical units
(°C, K, kW, kW/K, kW/(m²·K), m², money per year); :mod:`heatloom.io` converts at the edges.
"""

from .errors import (
    HeatloomError,
    InfeasibleError,
    InputError,
    SolverError,
    SolverUnavailableError,
    TemperatureCrossError,
)
from .model import Segment, Stream, StreamTable, Utility, UtilityKind

__version__ = "0.1.0"

__all__ = [
    "__version__",
    "HeatloomError",
    "InfeasibleError",
    "InputError",
    "SolverError",
    "SolverUnavailableError",
    "TemperatureCrossError",
    "Segment",
    "Stream",
    "StreamTable",
    "Utility",
    "UtilityKind",
]
