"""Networks beyond the stagewise form on the Yee & Grossmann (1990) two hot / two cold problem.

Starts from the best published network without stream splits (Wang et al. 2017, 79,233 per year as listed by
Roetzel, Luo & Chen 2020, ch. 6; tests/data/references/synthesis_yee_grossmann_2h2c.json), written as a
stagewise topology, turns it into a layout (:mod:`heatloom.network.tac.branches`) and runs the local search
over layouts (units moved anywhere along their streams, onto split branches in series or beside a utility
unit, or removed), then prints every unit of the best network found and its TAC against the best published
one.  Asserts nothing; run (about a minute on one core):

    python benchmarks/explore_layouts.py [--time-limit 300] [--seed 0]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

from heatloom.network.tac.branches import layout_from_solution, network_from_layout, solve_layout
from heatloom.network.tac.layout_search import restructure
from heatloom.network.tac.nlp import Topology, make_problem, solve_topology

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_tac import REFERENCES, problem  # noqa: E402  (the reference reader of the TAC benchmark)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--time-limit", type=float, default=300.0)
    ap.add_argument("--seed", type=int, default=0)
    args = ap.parse_args()
    data, streams, utilities, costs = problem(REFERENCES / "synthesis_yee_grossmann_2h2c.json")
    p = make_problem(streams, utilities, costs, 1.0)
    # the no-split network: H1 meets C1, C2, C1 from its hot end; H2 meets C1 twice, then its cooler
    top = Topology(4, frozenset({(0, 0, 0), (0, 1, 1), (1, 0, 1), (0, 0, 2), (1, 0, 3)}), frozenset(),
                   frozenset({(1, 0)}))
    sol = solve_topology(p, top, [{(0, 0, 0): 165.0, (0, 1, 1): 2400.0, (1, 0, 1): 1120.0, (0, 0, 2): 735.0,
                                   (1, 0, 3): 280.0}])
    print(f"stagewise network: {sol.tac:,.1f} per year")
    lay, duties, fractions = layout_from_solution(p, sol)
    start = solve_layout(p, lay, [(duties, fractions)])
    stats: dict = {}
    t0 = time.perf_counter()
    best = restructure(p, start, time.monotonic() + args.time_limit, seed=args.seed, stats=stats)
    net = network_from_layout(p, best, streams, utilities, costs)
    who, published = data["published_tac"][0]
    print(f"best layout: {net.total_annual_cost:,.1f} per year ({stats['layouts']} layouts refined in "
          f"{time.perf_counter() - t0:.0f} s); best published {published:,.0f} ({who}), ratio "
          f"{net.total_annual_cost / published:.4f}")
    print(f"hot paths {best.layout.hot}\ncold paths {best.layout.cold}\nunits {best.layout.units}")
    for unit in (*net.exchangers, *net.heaters, *net.coolers):
        hot, cold = unit.sides
        fr = (getattr(unit, "hot_fraction", 1.0), getattr(unit, "cold_fraction", 1.0))
        print(f"  {unit.name:<5} {hot}→{cold:<3} stage {unit.stage} duty {unit.duty:8.2f} kW  area {unit.area:7.2f} m²"
              f"  terminals {tuple(round(t, 2) for t in unit.terminals)}  fractions {tuple(round(f, 4) for f in fr)}")


if __name__ == "__main__":
    main()
