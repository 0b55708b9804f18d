"""Pinch targeting: problem table, composite curves, utility placement, area and cost targets, total site (installed as heatloom.pinch)."""

from .area import (
    AreaTargets,
    BalancedComposites,
    CapitalBasis,
    area_targets,
    balanced_composites,
    bath_area,
    missing_film_coefficients,
    shell_target,
    target_utilities,
    unit_targets,
)
from .curves import Curve, cold_composite, grand_composite, hot_composite
from .problem_table import ProblemTable, net_heat_capacity_flow, problem_table, shifted_ranges, zero_tolerance
from .site import (
    MainBalance,
    SiteTargets,
    ZoneTargets,
    composite_profile,
    remove_pockets,
    site_targets,
    zone_profiles,
)
from .targets import Pinch, Targets, Threshold, target
from .utilities import UtilityDuty, UtilityPlacement, ideal_utilities, place_utilities, utility_shifted_range

__all__ = [
    "AreaTargets",
    "BalancedComposites",
    "CapitalBasis",
    "area_targets",
    "balanced_composites",
    "bath_area",
    "missing_film_coefficients",
    "shell_target",
    "target_utilities",
    "unit_targets",
    "Curve",
    "cold_composite",
    "grand_composite",
    "hot_composite",
    "ProblemTable",
    "net_heat_capacity_flow",
    "problem_table",
    "shifted_ranges",
    "zero_tolerance",
    "MainBalance",
    "SiteTargets",
    "ZoneTargets",
    "composite_profile",
    "remove_pockets",
    "site_targets",
    "zone_profiles",
    "Pinch",
    "Targets",
    "Threshold",
    "target",
    "UtilityDuty",
    "UtilityPlacement",
    "ideal_utilities",
    "place_utilities",
    "utility_shifted_range",
]
