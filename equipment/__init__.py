"""Exchanger equipment: heat-transfer kernels, sizing, rating, geometry, segment-wise sizing and cost laws (installed as heatloom.equipment)."""

from .cost import CostBreakdown, cost_breakdown, total_annual_cost
from .geometry import (
    DoublePipeSizing,
    ShellAndTubeSizing,
    hairpins_for_area,
    size_double_pipe,
    size_exchanger,
    size_shell_and_tube,
)
from .kernels import (
    counter_current_effectiveness,
    counter_current_ntu,
    effectiveness_1_2_shell,
    ntu_1_2_shell,
    p_max_1_2_shell,
    real_shell_count,
    series_effectiveness,
    unit_effectiveness_in_series,
)
from .rating import Rating, effectiveness_from_ntu, max_effectiveness, ntu_from_effectiveness, rate_exchanger
from .segments import SegmentedSizing, SizingInterval, cut_profile, size_segments
from .sizing import (
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

__all__ = [
    "CostBreakdown",
    "cost_breakdown",
    "total_annual_cost",
    "DoublePipeSizing",
    "ShellAndTubeSizing",
    "hairpins_for_area",
    "size_double_pipe",
    "size_exchanger",
    "size_shell_and_tube",
    "counter_current_effectiveness",
    "counter_current_ntu",
    "effectiveness_1_2_shell",
    "ntu_1_2_shell",
    "p_max_1_2_shell",
    "real_shell_count",
    "series_effectiveness",
    "unit_effectiveness_in_series",
    "Rating",
    "effectiveness_from_ntu",
    "max_effectiveness",
    "ntu_from_effectiveness",
    "rate_exchanger",
    "SegmentedSizing",
    "SizingInterval",
    "cut_profile",
    "size_segments",
    "ShellDesign",
    "area_from_duty",
    "duty_from_area",
    "f_factor",
    "f_factor_from_temperatures",
    "lmtd",
    "log_mean",
    "overall_coefficient",
    "p_max",
    "shell_design",
]
