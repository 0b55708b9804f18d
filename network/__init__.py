"""Network synthesis: solvers, transshipment, matches, MER design and lowest-TAC design (installed as heatloom.network).

The public API only.  The building blocks of the designs (placement model, pinch regions, the TAC problem,
topologies and their refinement) are imported from their modules: :mod:`heatloom.network.placement`,
:mod:`heatloom.network.transshipment`, :mod:`heatloom.network.tac`.
"""

from .design import design_mer
from .evolution import Evolution, EvolutionStep, evolve
from .matches import Match, MatchKind, Subnetwork, SubnetworkMatches, TieBreak, subnetworks
from .milp import MatchPlan, min_matches, plan_matches
from .sizing import size_network
from .solvers import SolveReport, SolverName, SolveStatus, available_solvers, resolve_solver, solve
from .structure import Cooler, Exchanger, Heater, Network, approach_violations, check_network
from .tac.search import design_tac
from .transshipment import Transshipment, transshipment

__all__ = [
    "design_mer",
    "Evolution",
    "EvolutionStep",
    "evolve",
    "size_network",
    "Match",
    "MatchKind",
    "MatchPlan",
    "Subnetwork",
    "SubnetworkMatches",
    "TieBreak",
    "min_matches",
    "plan_matches",
    "subnetworks",
    "SolveReport",
    "SolveStatus",
    "SolverName",
    "available_solvers",
    "resolve_solver",
    "solve",
    "Cooler",
    "Exchanger",
    "Heater",
    "Network",
    "approach_violations",
    "check_network",
    "design_tac",
    "Transshipment",
    "transshipment",
]
