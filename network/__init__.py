"""Network synthesis, sizing, costing and retrofit (installed as heatloom.network)."""

from .cost import (
    CostBreakdown,
    CostLaw,
    CostSettings,
    UnitKind,
    capital_recovery_factor,
    cost_breakdown,
    price_per_kw_year,
    total_annual_cost,
)
from .geometry import (
    DoublePipeSizing,
    ExchangerType,
    ShellAndTubeSizing,
    size_double_pipe,
    size_exchanger,
    size_shell_and_tube,
)
from .rating import Rating, effectiveness_from_ntu, max_effectiveness, ntu_from_effectiveness, rate_exchanger
from .segments import SegmentedSizing, SizingInterval, cut_profile, size_segments
from .sizing import (
    FlowArrangement,
    ShellDesign,
    area_from_duty,
    duty_from_area,
    f_factor,
    f_factor_from_temperatures,
    lmtd,
    log_mean,
    overall_coefficient,
    p_max,
    shell_design,
)
from .structure import Cooler, Exchanger, Heater, Network, approach_violations, check_network

__all__ = [
    "CostBreakdown", "CostLaw", "CostSettings", "UnitKind", "capital_recovery_factor", "cost_breakdown",
    "price_per_kw_year", "total_annual_cost",
    "DoublePipeSizing", "ExchangerType", "FlowArrangement", "Rating", "SegmentedSizing", "ShellAndTubeSizing",
    "ShellDesign", "SizingInterval", "area_from_duty", "cut_profile", "duty_from_area", "effectiveness_from_ntu",
    "f_factor", "f_factor_from_temperatures", "lmtd", "log_mean", "max_effectiveness", "ntu_from_effectiveness",
    "overall_coefficient", "p_max", "rate_exchanger", "shell_design", "size_double_pipe", "size_exchanger",
    "size_segments", "size_shell_and_tube",
    "Cooler", "Exchanger", "Heater", "Network", "approach_violations", "check_network",
]
