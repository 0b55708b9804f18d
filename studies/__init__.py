"""Studies built on every layer below: ΔTmin sweeps with designs and price scenarios (installed as heatloom.studies)."""

from .scenarios import (
    PriceScenario,
    ScenarioCase,
    ScenarioOptimum,
    ScenarioStudy,
    ScenarioTotal,
    price_factor_scenarios,
    scenario_study,
)
from .sweep import (
    Breakpoint,
    DesignPoint,
    Sweep,
    SweepPoint,
    describe_executor,
    sweep,
    sweep_point,
)

__all__ = [
    "PriceScenario",
    "ScenarioCase",
    "ScenarioOptimum",
    "ScenarioStudy",
    "ScenarioTotal",
    "price_factor_scenarios",
    "scenario_study",
    "Breakpoint",
    "DesignPoint",
    "Sweep",
    "SweepPoint",
    "describe_executor",
    "sweep",
    "sweep_point",
]
