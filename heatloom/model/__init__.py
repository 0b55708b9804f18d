"""The data model every layer shares: plain numbers in canonical units, no solver and no file.

streams and utilities (:mod:`.streams`), cost settings (:mod:`.costs`), exchanger kinds
(:mod:`.exchangers`), the units of an existing network (:mod:`.existing`), site zones and mains
(:mod:`.site`), forbidden and required matches (:mod:`.matches`) and price scenarios (:mod:`.prices`).
The readers of :mod:`heatloom.io` produce these types; the computing layers take them.
"""

from .costs import CostLaw, CostSettings, RetrofitCosts, UnitKind, capital_recovery_factor, price_per_kw_year
from .exchangers import ExchangerType
from .existing import ExistingUnit, OperatingMode, UnitRole, UnitTable
from .matches import MatchRules, parse_match
from .prices import BASE_NAME, PriceScenario, price_factor_scenarios
from .site import WATER_CRITICAL_TEMPERATURE, WATER_TRIPLE_POINT, MainKind, SteamMain, Zone, check_mains
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
    "ABSOLUTE_ZERO", "finite_number", "Segment", "Stream", "StreamTable", "StreamArrays", "UtilityKind", "Utility",
    "CostLaw", "CostSettings", "RetrofitCosts", "UnitKind", "capital_recovery_factor", "price_per_kw_year",
    "ExchangerType",
    "ExistingUnit", "OperatingMode", "UnitRole", "UnitTable",
    "MatchRules", "parse_match",
    "BASE_NAME", "PriceScenario", "price_factor_scenarios",
    "WATER_CRITICAL_TEMPERATURE", "WATER_TRIPLE_POINT", "MainKind", "SteamMain", "Zone", "check_mains",
]
