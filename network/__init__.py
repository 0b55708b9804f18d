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
from .design import Region, design_mer, ideal_utilities, regions_of
from .diagnose import (
    AreaEfficiency,
    CrossPinch,
    CrossPinchUnit,
    Diagnosis,
    NetworkPinch,
    PathShift,
    RetrofitCurve,
    area_efficiency,
    cross_pinch,
    diagnose,
    existing_dt_min,
    network_pinch,
    retrofit_curve,
)
from .existing import ExistingNetwork, ExistingUnit, OperatingMode, UnitRole, heat_between, temperature_after
from .geometry import (
    DoublePipeSizing,
    ExchangerType,
    ShellAndTubeSizing,
    size_double_pipe,
    size_exchanger,
    size_shell_and_tube,
)
from .milp import (
    Match,
    MatchKind,
    MatchPlan,
    Subnetwork,
    SubnetworkMatches,
    TieBreak,
    min_matches,
    plan_matches,
    subnetworks,
)
from .placement import PlacedUnit, Placement, Side, stage_model
from .rating import Rating, effectiveness_from_ntu, max_effectiveness, ntu_from_effectiveness, rate_exchanger
from .retrofit import (
    Change,
    ChangeKind,
    Retrofit,
    RetrofitCosts,
    RetrofitOption,
    annuity_factor,
    apply_changes,
    retrofit_options,
)
from .segments import SegmentedSizing, SizingInterval, cut_profile, size_segments
from .simulate import Simulation, UnitState, simulate
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
from .solvers import SolveReport, SolverName, SolveStatus, available_solvers, resolve_solver, solve
from .structure import Cooler, Exchanger, Heater, Network, approach_violations, check_network
from .tac import DEFAULT_EMAT, design_tac, network_from_solution, stagewise_milp, topology_from_network
from .tac_nlp import TacProblem, Topology, TopologySolution, make_problem, polish_splits, solve_topology
from .transshipment import Transshipment, transshipment

__all__ = [
    "CostBreakdown", "CostLaw", "CostSettings", "UnitKind", "capital_recovery_factor", "cost_breakdown",
    "price_per_kw_year", "total_annual_cost",
    "DoublePipeSizing", "ExchangerType", "FlowArrangement", "Rating", "SegmentedSizing", "ShellAndTubeSizing",
    "ShellDesign", "SizingInterval", "area_from_duty", "cut_profile", "duty_from_area", "effectiveness_from_ntu",
    "f_factor", "f_factor_from_temperatures", "lmtd", "log_mean", "max_effectiveness", "ntu_from_effectiveness",
    "overall_coefficient", "p_max", "rate_exchanger", "shell_design", "size_double_pipe", "size_exchanger",
    "size_segments", "size_shell_and_tube",
    "Cooler", "Exchanger", "Heater", "Network", "approach_violations", "check_network",
    "Region", "design_mer", "ideal_utilities", "regions_of",
    "Match", "MatchKind", "MatchPlan", "Subnetwork", "SubnetworkMatches", "TieBreak", "Transshipment",
    "min_matches", "plan_matches", "subnetworks", "transshipment",
    "Placement", "PlacedUnit", "Side", "stage_model",
    "SolveReport", "SolverName", "SolveStatus", "available_solvers", "resolve_solver", "solve",
    "AreaEfficiency", "CrossPinch", "CrossPinchUnit", "Diagnosis", "NetworkPinch", "PathShift", "RetrofitCurve",
    "area_efficiency", "cross_pinch", "diagnose", "existing_dt_min", "network_pinch", "retrofit_curve",
    "ExistingNetwork", "ExistingUnit", "OperatingMode", "UnitRole", "heat_between", "temperature_after",
    "Simulation", "UnitState", "simulate",
    "Change", "ChangeKind", "Retrofit", "RetrofitCosts", "RetrofitOption", "annuity_factor", "apply_changes",
    "retrofit_options",
    "DEFAULT_EMAT", "design_tac", "network_from_solution", "stagewise_milp", "topology_from_network",
    "TacProblem", "Topology", "TopologySolution", "make_problem", "polish_splits", "solve_topology",
]
