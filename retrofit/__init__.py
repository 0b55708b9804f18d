"""Existing networks: resolution, ε-NTU simulation, diagnosis, network pinch, changes and ranked retrofit options (installed as heatloom.retrofit)."""

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
from .existing import ExistingNetwork, heat_between, temperature_after
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
from .simulate import Simulation, UnitState, simulate

__all__ = [
    "AreaEfficiency",
    "CrossPinch",
    "CrossPinchUnit",
    "Diagnosis",
    "NetworkPinch",
    "PathShift",
    "RetrofitCurve",
    "area_efficiency",
    "cross_pinch",
    "diagnose",
    "existing_dt_min",
    "network_pinch",
    "retrofit_curve",
    "ExistingNetwork",
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
