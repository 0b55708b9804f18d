"""Time a ΔTmin sweep serially and on a local process pool.

A generated case of 40 streams (20 hot, 20 cold; invented data, fixed seed: supply and target temperatures
in 20-300 °C, heat capacity flow rates 1-50 kW/K, film coefficients 0.2-2 kW/(m²·K)) is swept over 200
ΔTmin points (1 to 40.8 K by 0.2 K) with the default cost laws and ideal utilities, first serially
(``workers=1``), then on a process pool of 2 workers. Prints the wall time of each, the speed-up ratio,
the number of breakpoints found and the optimum; asserts nothing. Pool workers start from a fork server
(about half a second here), so the pool pays off only when the sweep itself takes longer than that per
worker; the machine's load average is printed because other work on a shared machine slows the pool. Run:

    python benchmarks/bench_sweep.py [--workers 2] [--points 200] [--streams 40]
"""

from __future__ import annotations

import argparse
import os
import time

import numpy as np

from heatloom.model import Stream, StreamTable
from heatloom.studies.sweep import sweep


def generated(n: int, seed: int = 11) -> StreamTable:
    """Invented streams: half hot, half cold, with film coefficients."""
    rng = np.random.default_rng(seed)
    streams = []
    for i in range(n):
        lo, hi = sorted(np.round(rng.uniform(20, 300, 2), 1))
        hi = max(hi, lo + 5.0)
        cp = float(np.round(rng.uniform(1, 50), 2))
        h = float(np.round(rng.uniform(0.2, 2.0), 2))
        hot = i < n // 2
        ts, tt = (hi, lo) if hot else (lo, hi)
        streams.append(Stream.simple(f"{'H' if hot else 'C'}{i}", float(ts), float(tt), cp, film_coefficient=h))
    return StreamTable(streams)


def timed(streams, rng, step, workers):
    t0 = time.perf_counter()
    result = sweep(streams, rng, step=step, workers=workers)
    return time.perf_counter() - t0, result


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--points", type=int, default=200)
    ap.add_argument("--streams", type=int, default=40)
    args = ap.parse_args()
    streams = generated(args.streams)
    step = 0.2
    rng = (1.0, 1.0 + step * (args.points - 1))
    serial_time, serial = timed(streams, rng, step, 1)
    pool_time, pool = timed(streams, rng, step, args.workers)
    same = serial.to_dict() == pool.to_dict() if all(p.feasible for p in serial.points) else "n/a"
    grid = sum(1 for p in serial.points if p.kind == "grid")
    print(f"case: {args.streams} invented streams, {grid} grid points from {rng[0]:g} to {rng[1]:g} K "
          f"(+{len(serial.points) - grid} breakpoint sides), {len(serial.breakpoints)} breakpoints")
    load = ", ".join(f"{x:.1f}" for x in os.getloadavg()) if hasattr(os, "getloadavg") else "n/a"
    print(f"machine: {os.cpu_count()} cores, load average {load} (other work on the machine slows the pool)")
    print(f"{'executor':<28} {'wall time [s]':>14}")
    print(f"{'serial':<28} {serial_time:>14.2f}")
    print(f"{f'process pool ({args.workers} workers)':<28} {pool_time:>14.2f}")
    print(f"speed-up serial/pool: {serial_time / pool_time:.2f}  (identical results: {same})")
    o = serial.optimum
    print(f"optimum ΔTmin {o.dt_min:.3f} K, total annual cost {o.total_annual_cost:,.0f} {serial.currency}/yr")


if __name__ == "__main__":
    main()
