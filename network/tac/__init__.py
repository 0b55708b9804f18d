"""Lowest total-annual-cost design: stagewise superstructure MILP, NLP refinement, search (heatloom.network.tac)."""

from .branches import (
    Layout,
    LayoutSolution,
    layout_from_solution,
    network_from_layout,
    solve_layout,
)
from .build import network_from_solution
from .layout_search import restructure
from .nlp import Topology, TopologySolution, solve_topology
from .polish import polish_cheapest, polish_splits
from .problem import TacProblem, make_problem
from .profiles import solve_segmented
from .search import design_tac
from .starts import mer_network, stagewise_milp, topology_from_network

__all__ = [
    "design_tac", "Layout", "LayoutSolution", "layout_from_solution", "network_from_layout", "restructure",
    "solve_layout", "mer_network", "network_from_solution", "stagewise_milp", "topology_from_network",
    "TacProblem", "Topology", "TopologySolution", "make_problem", "polish_cheapest", "polish_splits",
    "solve_segmented",
    "solve_topology",
]
