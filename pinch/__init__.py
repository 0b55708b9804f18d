"""Pinch targeting: problem table, composite curves, utility placement (installed as heatloom.pinch)."""

from .curves import Curve, cold_composite, grand_composite, hot_composite
from .problem_table import ProblemTable, net_heat_capacity_flow, problem_table, shifted_ranges, zero_tolerance
from .site import (
    MainBalance,
    MainKind,
    SiteTargets,
    SteamMain,
    Zone,
    ZoneTargets,
    check_mains,
    composite_profile,
    remove_pockets,
    site_targets,
    zone_profiles,
)
from .targets import Pinch, Targets, Threshold, target
from .utilities import UtilityDuty, UtilityPlacement, place_utilities, utility_shifted_range

__all__ = [
    "Curve",
    "cold_composite",
    "grand_composite",
    "hot_composite",
    "ProblemTable",
    "net_heat_capacity_flow",
    "problem_table",
    "shifted_ranges",
    "zero_tolerance",
    "Pinch",
    "Targets",
    "Threshold",
    "target",
    "UtilityDuty",
    "UtilityPlacement",
    "place_utilities",
    "utility_shifted_range",
    "MainBalance",
    "MainKind",
    "SiteTargets",
    "SteamMain",
    "Zone",
    "ZoneTargets",
    "check_mains",
    "composite_profile",
    "remove_pockets",
    "site_targets",
    "zone_profiles",
]
