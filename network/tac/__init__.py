"""Lowest total-annual-cost design: stagewise superstructure MILP, NLP refinement, search (heatloom.network.tac)."""

from .nlp import TacProblem, Topology, TopologySolution, make_problem, polish_splits, solve_topology
from .search import design_tac, network_from_solution
from .starts import stagewise_milp, topology_from_network

__all__ = [
    "design_tac", "network_from_solution", "stagewise_milp", "topology_from_network",
    "TacProblem", "Topology", "TopologySolution", "make_problem", "polish_splits", "solve_topology",
]
