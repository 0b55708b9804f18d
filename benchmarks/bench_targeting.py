"""Time energy targeting on generated stream sets of growing size.

Prints, for 100 ... 100,000 streams: the time to build the stream table (Python objects and the segment
arrays), the time of `heatloom.pinch.target` on the built table, the time per stream, and the ratio of the
targeting time to a plain numpy sort of the same 2N shifted temperatures (the floor for any method that
orders temperature intervals). Streams are invented: random supply/target temperatures in 20-400 °C and
heat capacity flow rates in 1-100 kW/K, fixed seed. Asserts nothing; run:

    python benchmarks/bench_targeting.py [--sizes 100 1000 10000 100000] [--repeat 5]
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from heatloom.model import StreamTable
from heatloom.pinch import target


def generated(n: int, seed: int = 7) -> StreamTable:
    rng = np.random.default_rng(seed)
    a = np.round(rng.uniform(20, 400, n), 1)
    b = np.round(rng.uniform(20, 400, n), 1)
    b = np.where(a == b, b + 1.0, b)
    cp = np.round(rng.uniform(1, 100, n), 2)
    return StreamTable.from_arrays([f"S{i}" for i in range(n)], a, b, cp)


def best_of(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[100, 1_000, 10_000, 100_000])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--dtmin", type=float, default=10.0)
    args = ap.parse_args()
    print(f"{'streams':>9} {'build [s]':>10} {'target [s]':>11} {'per stream [µs]':>16} "
          f"{'np.sort [s]':>12} {'target/sort':>12} {'hot utility [kW]':>17}")
    for n in args.sizes:
        t0 = time.perf_counter()
        table = generated(n)
        _ = table.arrays
        build = time.perf_counter() - t0
        result = target(table, args.dtmin)
        t_target = best_of(lambda table=table: target(table, args.dtmin), args.repeat)
        a = table.arrays
        temps = np.concatenate([a.supply_temperature, a.target_temperature])
        t_sort = best_of(lambda temps=temps: np.sort(temps), args.repeat)
        print(f"{n:>9} {build:>10.4f} {t_target:>11.5f} {1e6 * t_target / n:>16.2f} {t_sort:>12.6f} "
              f"{t_target / t_sort:>12.1f} {result.hot_utility:>17.1f}")


if __name__ == "__main__":
    main()
