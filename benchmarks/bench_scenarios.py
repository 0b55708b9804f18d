"""Time a scenario study serially and on a local process pool.

An invented site (no real plant: data generated for this benchmark) of 3 zones × 20 streams each (10 hot,
10 cold; the generator of ``bench_sweep.py``, with a different seed per zone: supply and target
temperatures in 20-300 °C, heat capacity flow rates 1-50 kW/K, film coefficients 0.2-2 kW/(m²·K)), with
the assumed utilities and default cost laws, under 4 price-factor scenarios (×0.5, ×1, ×1.5, ×2), ΔTmin
5 to 40 K by 1 K: 3 × 4 × 36 = 432 cases, plus the optimum ΔTmin of each of the 12 (zone, scenario)
pairs. The same study runs first serially (``workers=1``), then on a process pool (``--workers``, default
2). Prints the wall time of each, the ratio, the machine's load average (other work on a shared machine
slows the pool) and whether both runs gave identical results; asserts nothing.

``--designs`` adds a second study with a MILP design (maximum energy recovery, fewest units) for every
case of a coarser grid (``--design-step``, default 5 K), each solve limited to ``--time-limit`` seconds;
with the assumed utilities a price factor cannot change a network, so each (zone, ΔTmin) is designed
once. A solve stopped by its time limit may return another network on another run, so the two runs of
the design study need not be identical. Each design makes several MILP solves, so with the defaults the
design study takes minutes (about 7.5 min serially on a 2-core machine). Run:

    python benchmarks/bench_scenarios.py [--workers 2] [--designs [--design-step 5] [--time-limit 10]]
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_sweep import generated  # noqa: E402  (the invented stream generator of the sweep benchmark)

from heatloom.io.export import to_jsonable
from heatloom.model.prices import price_factor_scenarios
from heatloom.studies.scenarios import scenario_study

ZONE_SEEDS = {"zone A": 101, "zone B": 202, "zone C": 303}   # invented site, one seed per zone
FACTORS = (0.5, 1.0, 1.5, 2.0)
STREAMS_PER_ZONE = 20


def load() -> str:
    return ", ".join(f"{x:.2f}" for x in os.getloadavg()) if hasattr(os, "getloadavg") else "n/a"


def canonical(study) -> str:
    d = study.to_dict()
    d.pop("executor")   # what ran the tasks: differs by construction
    return json.dumps(to_jsonable(d), sort_keys=True)


def timed(zones, rng, step, workers, **kwargs):
    t0 = time.perf_counter()
    result = scenario_study(zones, rng, scenarios=price_factor_scenarios(FACTORS), step=step, workers=workers,
                            **kwargs)
    return time.perf_counter() - t0, result


def compare(title: str, zones, rng, step, workers, **kwargs) -> tuple:
    print(f"\n{title}")
    print(f"  load average before: {load()}")
    serial_time, serial = timed(zones, rng, step, 1, **kwargs)
    print(f"  load average between: {load()}")
    pool_time, pool = timed(zones, rng, step, workers, **kwargs)
    print(f"  load average after: {load()}")
    print(f"  cases {len(serial.cases)}, optima {len(serial.optima)}")
    print(f"  {'executor':<28} {'wall time [s]':>14}")
    print(f"  {'serial':<28} {serial_time:>14.2f}")
    print(f"  {pool.executor:<28} {pool_time:>14.2f}")
    print(f"  speed-up serial/pool: {serial_time / pool_time:.2f}  "
          f"(identical results: {canonical(serial) == canonical(pool)})")
    return serial, pool


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--designs", action="store_true", help="also time a study with MILP designs")
    ap.add_argument("--design-step", type=float, default=5.0, help="ΔTmin step of the design study [K]")
    ap.add_argument("--time-limit", type=float, default=10.0, help="time limit of each design solve [s]")
    args = ap.parse_args()
    zones = {name: generated(STREAMS_PER_ZONE, seed) for name, seed in ZONE_SEEDS.items()}
    rng = (5.0, 40.0)
    print(f"invented site: {len(zones)} zones × {STREAMS_PER_ZONE} streams, {len(FACTORS)} price-factor scenarios "
          f"{FACTORS}, ΔTmin {rng[0]:g} to {rng[1]:g} K")
    print(f"machine: {os.cpu_count()} cores (other work on a shared machine slows the pool)")
    serial, _ = compare("targets (ΔTmin step 1 K)", zones, rng, 1.0, args.workers)
    print("  site totals at each zone's optimum:")
    for t in serial.totals:
        print(f"    {t.scenario:<14} total annual cost {t.total_annual_cost:>14,.0f} {serial.currency}/yr, "
              f"hot {t.hot_utility:>9,.0f} kW, cold {t.cold_utility:>9,.0f} kW")
    if args.designs:
        serial, pool = compare(f"targets and designs (ΔTmin step {args.design_step:g} K, each solve ≤ "
                            f"{args.time_limit:g} s)", zones, rng, args.design_step, args.workers, designs=True,
                            design_time_limit=args.time_limit)
        ok = sum(1 for c in serial.cases if c.design is not None and not c.design.error)
        print(f"  cases with a design: {ok} of {len(serial.cases)} (serial run)")
        targets = sum(1 for a, b in zip(serial.cases, pool.cases) if a.targets != b.targets)
        designs = sum(1 for a, b in zip(serial.cases, pool.cases) if a.design != b.design)
        print(f"  cases whose targets differ between the two runs: {targets}; whose design differs: {designs} "
              "(a solve stopped by its time limit may end on another network)")
        failed = {(c.zone, c.dt_min): c.design.error for c in serial.cases
                  if c.design is not None and c.design.error and c.targets.feasible}
        for (zone, x), error in failed.items():
            print(f"  no design for {zone} at {x:g} K: {error[:150]}")
        for n in serial.notes:
            if n.startswith("designs"):
                print(f"  {n}")


if __name__ == "__main__":
    main()
