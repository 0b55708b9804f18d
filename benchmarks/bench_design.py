"""MER design of generated problems: units found against the minimum-units target, solve time, status.

For each size (10, 20, 40, 80 streams by default) a problem is generated (invented data, fixed seed:
supply/target temperatures in 20-300 °C, CP 1-50 kW/K, film coefficients 0.3-2 kW/(m²·K)), designed with
`heatloom.network.design_mer` at ΔTmin 10 K with a time limit per solve, and the table below is printed:
units in the network, the minimum-units target (Euler, N − 1 per pinch subnetwork), the number of matches
of the minimum-matches MILP, wall time, and the status of every solve. Asserts nothing; run:

    python benchmarks/bench_design.py [--sizes 10 20 40 80] [--time-limit 60] [--solver highs]
"""

from __future__ import annotations

import argparse
import time
from collections import Counter

import numpy as np

from heatloom.errors import HeatloomError
from heatloom.model import Stream, StreamTable
from heatloom.network.design import design_mer


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
    ap.add_argument("--sizes", type=int, nargs="+", default=[10, 20, 40, 80])
    ap.add_argument("--time-limit", type=float, default=60.0)
    ap.add_argument("--solver", default=None)
    ap.add_argument("--dtmin", type=float, default=10.0)
    args = ap.parse_args()
    print(f"{'streams':>8} {'units':>6} {'target':>7} {'matches':>8} {'time [s]':>9}  statuses")
    for n in args.sizes:
        table = generated(n)
        t0 = time.perf_counter()
        try:
            net = design_mer(table, args.dtmin, solver=args.solver, time_limit=args.time_limit,
                             default_film_coefficient=1.0)
        except HeatloomError as e:
            print(f"{n:>8} {'-':>6} {'-':>7} {'-':>8} {time.perf_counter() - t0:>9.2f}  failed: {e}")
            continue
        wall = time.perf_counter() - t0
        statuses = Counter(s.status.value for s in net.solves)
        matches = next((s for s in net.notes if s.startswith("minimum matches")), "")
        print(f"{n:>8} {net.units:>6} {net.unit_target!s:>7} {matches[16:].split()[0] if matches else '-':>8} "
              f"{wall:>9.2f}  {dict(statuses)}")


if __name__ == "__main__":
    main()
