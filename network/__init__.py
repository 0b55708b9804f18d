"""Network synthesis: solvers, transshipment, matches, placement, MER design and lowest-TAC design (installed as heatloom.network)."""

from .design import Region, design_mer, regions_of
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
from .solvers import SolveReport, SolverName, SolveStatus, available_solvers, resolve_solver, solve
from .structure import Cooler, Exchanger, Heater, Network, approach_violations, check_network
from .tac.nlp import TacProblem, Topology, TopologySolution, make_problem, polish_splits, solve_topology
from .tac.search import design_tac, network_from_solution, stagewise_milp, topology_from_network
from .transshipment import Transshipment, transshipment

__all__ = [
    "Region",
    "design_mer",
    "regions_of",
    "Match",
    "MatchKind",
    "MatchPlan",
    "Subnetwork",
    "SubnetworkMatches",
    "TieBreak",
    "min_matches",
    "plan_matches",
    "subnetworks",
    "PlacedUnit",
    "Placement",
    "Side",
    "stage_model",
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
    "TacProblem",
    "Topology",
    "TopologySolution",
    "make_problem",
    "polish_splits",
    "solve_topology",
    "defaults.EMAT",
    "design_tac",
    "network_from_solution",
    "stagewise_milp",
    "topology_from_network",
    "Transshipment",
    "transshipment",
]
