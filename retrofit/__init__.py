"""Existing networks: resolution, ε-NTU simulation, diagnosis, network pinch, changes and ranked retrofit options (installed as heatloom.retrofit)."""

from .diagnose import (
    AreaEfficiency,
    CrossPinch,
    CrossPinchUnit,
    Diagnosis,
    RetrofitCurve,
    area_efficiency,
    cross_pinch,
    diagnose,
    existing_dt_min,
    retrofit_curve,
)
from .evaluate import Evaluation, evaluate_network
from .existing import ExistingNetwork
from .network_pinch import NetworkPinch, PathShift, network_pinch
from .options import (
    Change,
    ChangeKind,
    Retrofit,
    RetrofitCosts,
    RetrofitOption,
    annuity_factor,
    apply_changes,
    retrofit_options,
)
from .profiles import heat_between, temperature_after
from .simulate import Simulation, UnitState, simulate

__all__ = [
    "Evaluation",
    "evaluate_network",
    "AreaEfficiency",
    "CrossPinch",
    "CrossPinchUnit",
    "Diagnosis",
    "RetrofitCurve",
    "area_efficiency",
    "cross_pinch",
    "diagnose",
    "existing_dt_min",
    "retrofit_curve",
    "ExistingNetwork",
    "NetworkPinch",
    "PathShift",
    "network_pinch",
    "heat_between",
    "temperature_after",
    "Change",
    "ChangeKind",
    "Retrofit",
    "RetrofitCosts",
    "RetrofitOption",
    "annuity_factor",
    "apply_changes",
    "retrofit_options",
    "Simulation",
    "UnitState",
    "simulate",
]
