"""Studies built on every layer below: ΔTmin sweeps with designs and price scenarios (installed as heatloom.studies)."""

from .scenarios import ScenarioCase, ScenarioOptimum, ScenarioStudy, ScenarioTotal, scenario_study
from .study import NotComputed, RunSettings, Study, compute_study, run_step
from .sweep import Breakpoint, DesignPoint, Sweep, SweepPoint, describe_executor, sweep, sweep_point

__all__ = [
    "ScenarioCase",
    "ScenarioOptimum",
    "ScenarioStudy",
    "ScenarioTotal",
    "scenario_study",
    "Breakpoint",
    "DesignPoint",
    "Sweep",
    "SweepPoint",
    "describe_executor",
    "sweep",
    "sweep_point",
    "NotComputed",
    "RunSettings",
    "Study",
    "compute_study",
    "run_step",
]
