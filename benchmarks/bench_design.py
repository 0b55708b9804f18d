"""MER design of generated problems: units found against the minimum-units target, wall time, statuses.

For each size (10, 20, 40, 60, 100 streams by default) a problem is generated (invented data, fixed
seed: supply/target temperatures in 20-300 °C, CP 1-50 kW/K, film coefficients 0.3-2 kW/(m²·K)),
designed with `heatloom.network.design_mer` at ΔTmin 10 K within a wall-clock budget for the whole run
(--time-limit; by default 60 s up to 40 streams and 300 s above, the goals of issue 13), and the table
below is printed: units in the network, the minimum-units target (Euler, N − 1 per pinch subnetwork)
and the excess over it, the number of planned matches, wall time, whether `check_network` passed
(design_mer never returns a network that fails it; "yes" is re-checked here), the status of every
solve, the number of fallbacks the notes report and the method that produced the network ("tick-off": the
tick-off method of heatloom.network.tickoff, used above design.TICK_OFF_ABOVE process streams; "matches":
the fewest-matches MILP and the stagewise placement). Asserts nothing; run:

    python benchmarks/bench_design.py [--sizes 10 20 40 60 100] [--time-limit S] [--solver highs]
    python benchmarks/bench_design.py --quick          # 10 and 20 streams only
    python benchmarks/bench_design.py --sizes 100 --notes   # and where the units come from, region by region
    python benchmarks/bench_design.py --seed 12             # another set of generated problems
    python benchmarks/bench_design.py --hot-oil             # with hot oil 330 -> 250 °C (invented utilities)
    python benchmarks/bench_design.py --hot-oil --least-utility-flow   # utilities piped, no supply header
    python benchmarks/bench_design.py --steam-levels        # a site's steam levels (invented utilities)

The tick-off units are merged (a stream's staircase of partial units becomes one branch per partner,
heatloom.network.merge) and improved by neighbourhood moves (heatloom.network.neighbourhood); --notes
gives the number of searches and moves of each region.
"""

from __future__ import annotations

import argparse
import time
from collections import Counter

import numpy as np

from heatloom.errors import HeatloomError
from heatloom.model import Stream, StreamTable, Utility, UtilityKind
from heatloom.network.design import design_mer
from heatloom.network.structure import check_network

HOT_OIL = (Utility("oil", 330.0, 250.0, 60.0, UtilityKind.HOT, 1.0),
           Utility("CW", 10.0, 15.0, 6.0, UtilityKind.COLD, 1.5))
"""Invented utilities of ``--hot-oil``: a hot oil whose range reaches above the cold streams' starts."""

STEAM_LEVELS = (Utility("HP steam", 320, 320, 80.0, UtilityKind.HOT, 3.0),
                Utility("MP steam", 210, 210, 60.0, UtilityKind.HOT, 3.0),
                Utility("LP steam", 150, 150, 40.0, UtilityKind.HOT, 3.0),
                Utility("steam raising", 140, 140, 2.0, UtilityKind.COLD, 3.0),
                Utility("CU", 10, 15, 10.0, UtilityKind.COLD, 1.5))
"""Invented utilities of ``--steam-levels`` (and of benchmarks/bench_tac.py): a site's HP, MP and LP steam
(isothermal, 80, 60 and 40 per kW·year), steam raised at 140 °C from boiler feed water (2 per kW·year) and
cooling water 10 -> 15 °C (10 per kW·year): with utility pinches inside the pinch regions."""


def generated(n: int, seed: int = 11) -> StreamTable:
    rng = np.random.default_rng(seed + n)
    streams = []
    for i in range(n):
        hot = i % 2 == 0
        a, b = sorted(np.round(rng.uniform(20, 300, 2), 0))
        if b - a < 10:
            b = a + 10
        ts, tt = (b, a) if hot else (a, b)
        cp = float(np.round(rng.uniform(1, 50), 1))
        h = float(np.round(rng.uniform(0.3, 2.0), 2))
        streams.append(Stream.simple(f"{'H' if hot else 'C'}{i // 2 + 1}", float(ts), float(tt), cp,
                                     film_coefficient=h))
    return StreamTable(streams)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[10, 20, 40, 60, 100])
    ap.add_argument("--quick", action="store_true", help="only 10 and 20 streams")
    ap.add_argument("--time-limit", type=float, default=None,
                    help="budget of each whole design [s] (default 60 s up to 40 streams, else 300 s)")
    ap.add_argument("--solver", default=None)
    ap.add_argument("--dtmin", type=float, default=10.0)
    ap.add_argument("--seed", type=int, default=11, help="seed of the generated problems (default 11)")
    ap.add_argument("--hot-oil", action="store_true",
                    help="design with hot oil 330 -> 250 °C (60 per kW·year, h 1) and cooling water 10 -> 15 °C "
                         "(6 per kW·year, h 1.5), both invented, instead of the assumed isothermal utilities")
    ap.add_argument("--steam-levels", action="store_true",
                    help="design with three steam levels, steam raising and cooling water (STEAM_LEVELS, "
                         "invented) instead of the assumed isothermal utilities")
    ap.add_argument("--least-utility-flow", action="store_true",
                    help="keep non-isothermal utilities at their least flow (design_mer's least_utility_flow)")
    ap.add_argument("--notes", action="store_true",
                    help="print each region's note: units, those for what the tick-off steps left, searches")
    args = ap.parse_args()
    if args.hot_oil and args.steam_levels:
        ap.error("--hot-oil and --steam-levels are two different sets of utilities: give one")
    utilities = HOT_OIL if args.hot_oil else STEAM_LEVELS if args.steam_levels else None
    sizes = [10, 20] if args.quick else args.sizes
    print(f"{'streams':>8} {'units':>6} {'target':>7} {'excess':>7} {'matches':>8} {'budget':>7} "
          f"{'time [s]':>9} {'check':>6} {'fallbacks':>9} {'method':>9}  statuses")
    for n in sizes:
        table = generated(n, args.seed)
        limit = args.time_limit if args.time_limit is not None else (60.0 if n <= 40 else 300.0)
        t0 = time.perf_counter()
        try:
            net = design_mer(table, args.dtmin, utilities=utilities, solver=args.solver,
                             time_limit=limit, default_film_coefficient=1.0,
                             least_utility_flow=args.least_utility_flow)
        except HeatloomError as e:
            print(f"{n:>8} {'-':>6} {'-':>7} {'-':>7} {'-':>8} {limit:>7g} {time.perf_counter() - t0:>9.2f} "
                  f"{'-':>6} {'-':>9} {'-':>9}  failed: {e}")
            continue
        wall = time.perf_counter() - t0
        try:
            check_network(net, table, utilities or ())
            checked = "yes"
        except HeatloomError:
            checked = "NO"
        statuses = Counter(s.status.value for s in net.solves)
        matches = next((s for s in net.notes if s.startswith("minimum matches")), "")
        fallbacks = sum(1 for s in net.notes if "instead" in s or "greedy" in s)
        method = "tick-off" if any(s.startswith("heat-load distribution and placement by the tick-off")
                                   for s in net.notes) else "matches"
        excess = f"{100 * (net.units / net.unit_target - 1):+.0f}%" if net.unit_target else "-"
        print(f"{n:>8} {net.units:>6} {net.unit_target!s:>7} {excess:>7} "
              f"{matches[16:].split()[0] if matches else '-':>8} {limit:>7g} {wall:>9.2f} {checked:>6} "
              f"{fallbacks:>9} {method:>9}  {dict(statuses)}", flush=True)
        if args.notes:
            for note in net.notes:
                if note.startswith("subnetwork"):
                    print(f"{'':>8}   {note}")


if __name__ == "__main__":
    main()
