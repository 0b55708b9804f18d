"""TAC design on the published benchmark problems: our total annual cost against the best published one.

For every tests/data/references/synthesis_*.json (streams with CP and h, utilities with prices and h, a cost
law, published TACs best first, and their source), runs `heatloom.network.tac.search.design_tac` with the file's
cost law (annualised) at EMAT 1 K and prints: our TAC, the best published TAC and who published it, their
ratio, units, stream splits, wall time on this machine, and the seed.  Targets: ratio <= 1.00 on problems of
up to 10 streams, <= 1.01 on 15-40 streams, each run under 5 minutes.

Then generated problems of 20 and 40 streams (--generated; invented data, fixed seed, made by a copy of the
generator of benchmarks/bench_design.py, with invented utilities and cost law, see :func:`generated_case`)
get a row each with their TAC, units, splits and wall time (there is no published TAC to compare with);
--steam-levels gives them three steam levels, steam raising and cooling water instead (utility units at
the streams' supply ends come into play: compare with an older checkout for what they are worth);
--hot-oil gives them hot oil 330 -> 250 °C and cooling water, --segments two segments on every other stream.
Asserts nothing; run:

    python benchmarks/bench_tac.py [--time-limit 290] [--seed 0] [--starts 2] [--rounds N] [--only NAME]
                                   [--generated 20 40] [--no-published] [--restructure] [--steam-levels]
                                   [--hot-oil] [--segments] [--branch-overshoot]

Without --rounds the search runs until the time limit (results then depend on the machine's speed).
"""

from __future__ import annotations

import argparse
import json
import re
import sys
import time
from pathlib import Path

from heatloom.model import Segment, Stream, StreamTable, Utility, UtilityKind
from heatloom.model.costs import CostLaw, CostSettings
from heatloom.network.streamorder import stream_positions
from heatloom.network.tac.search import design_tac

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_design import HOT_OIL, STEAM_LEVELS, generated  # noqa: E402  (the invented problems of the MER benchmark, same seed)

REFERENCES = Path(__file__).resolve().parents[1] / "tests" / "data" / "references"
LAW = re.compile(r"\s*(?:(?P<fixed>[\d.]+)\s*\+\s*)?(?P<per_area>[\d.]+)\s*\*\s*A(?:\s*\*\*\s*(?P<exp>[\d.]+))?"
                 r"\s*per year\s*")


def cost_law(text: str) -> CostLaw:
    """'8600 + 670*A**0.83 per year' → CostLaw(8600, 670, 0.83)."""
    m = LAW.fullmatch(text)
    if not m:
        raise ValueError(f"cannot read the cost law {text!r}")
    return CostLaw(float(m["fixed"] or 0.0), float(m["per_area"]), float(m["exp"] or 1.0))


def problem(path: Path):
    """Streams, utilities (°C) and cost settings of a reference file."""
    data = json.loads(path.read_text(encoding="utf-8"))
    off = -273.15 if data.get("temperature_unit", "degC") in ("K", "kelvin") else 0.0
    streams = StreamTable(tuple(Stream.simple(s["name"], s["T_supply"] + off, s["T_target"] + off, s["CP"],
                                              film_coefficient=s.get("h")) for s in data["streams"]))
    utilities = [Utility(u["name"], u["T_supply"] + off, u["T_target"] + off, u["cost_per_kW_year"],
                         UtilityKind.HOT if u["name"] == "HU" else UtilityKind.COLD, u.get("h"))
                 for u in data["utilities"]]
    laws = data["cost_law"]
    if "all_units" in laws:
        costs = CostSettings(annualised=True, exchanger=cost_law(laws["all_units"]))
    else:
        costs = CostSettings(annualised=True, exchanger=cost_law(laws["exchangers_and_coolers"]),
                             heater=cost_law(laws["heaters"]), cooler=cost_law(laws["exchangers_and_coolers"]))
    return data, streams, utilities, costs


def two_segments(streams: StreamTable) -> StreamTable:
    """Every other stream (the first, third, ...) cut at its middle temperature into two segments, the second
    with 1.5 times the CP of the first (invented: a stream whose heat capacity changes along it)."""
    out = []
    for k, st in enumerate(streams):
        g = st.segments[0]
        if k % 2:
            out.append(st)
            continue
        mid = 0.5 * (g.supply_temperature + g.target_temperature)
        out.append(Stream(st.name, (Segment(g.supply_temperature, mid, g.heat_capacity_flow, g.film_coefficient),
                                    Segment(mid, g.target_temperature, 1.5 * g.heat_capacity_flow,
                                            g.film_coefficient))))
    return StreamTable(tuple(out))


def generated_case(n: int, steam_levels: bool = False, hot_oil: bool = False, segments: bool = False):
    """Invented TAC case of n streams: the generated streams, steam at 320 °C (80 per kW·year, h 3), cooling
    water 10 → 15 °C (10 per kW·year, h 1.5), every unit 8000 + 500·A^0.75 per year (annualised).

    With ``steam_levels`` (also invented): a site's utilities instead, HP steam at 320 °C (80), MP steam
    at 210 °C (60), LP steam at 150 °C (40), all h 3; steam raised at 140 °C from boiler feed water as a
    cold utility (2 per kW·year, h 3) and the same cooling water.

    With ``hot_oil`` (invented): hot oil 330 -> 250 °C and cooling water instead (``HOT_OIL`` of
    benchmarks/bench_design.py).  With ``segments``: every other stream in two segments (:func:`two_segments`)."""
    streams = two_segments(generated(n)) if segments else generated(n)
    if steam_levels:
        utilities = list(STEAM_LEVELS)
    elif hot_oil:
        utilities = list(HOT_OIL)
    else:
        utilities = [Utility("HU", 320, 320, 80.0, UtilityKind.HOT, 3.0),
                     Utility("CU", 10, 15, 10.0, UtilityKind.COLD, 1.5)]
    return streams, utilities, CostSettings(annualised=True, exchanger=CostLaw(8000.0, 500.0, 0.75))


def splits(net) -> int:
    """Stream splits: (stream, position along it) held by units on parallel branches (a branch carrying
    units in series counts once; positions from the units' temperatures, as the units table writes them)."""
    pos = stream_positions(net)
    seen = set()
    for x in (*net.exchangers, *net.heaters, *net.coolers):
        hot_pos, cold_pos = pos[x.name]
        if getattr(x, "hot_fraction", 1.0) < 1 - 1e-9:
            seen.add(("hot", x.hot, hot_pos))
        if getattr(x, "cold_fraction", 1.0) < 1 - 1e-9:
            seen.add(("cold", x.cold, cold_pos))
    return len(seen)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--time-limit", type=float, default=290.0)
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--starts", type=int, default=2)
    ap.add_argument("--rounds", type=int, default=None)
    ap.add_argument("--only", default=None, help="run only the reference files whose name contains this")
    ap.add_argument("--generated", type=int, nargs="*", default=[20, 40],
                    help="sizes of the generated (invented) problems to run after the published ones")
    ap.add_argument("--no-published", action="store_true", help="run only the generated problems")
    ap.add_argument("--steam-levels", action="store_true",
                    help="give the generated problems a site's utilities (three steam levels, steam raising and "
                         "cooling water, invented) instead of one steam level and cooling water")
    ap.add_argument("--hot-oil", action="store_true",
                    help="give the generated problems hot oil 330 -> 250 °C and cooling water (invented) instead")
    ap.add_argument("--segments", action="store_true",
                    help="cut every other generated stream into two segments of different CP (invented)")
    ap.add_argument("--branch-overshoot", action="store_true",
                    help="let split branches pass their stream's target before they mix back "
                         "(design_tac(branch_overshoot=True)); the table says so in its title line")
    ap.add_argument("--restructure", action="store_true",
                    help="give the last part of the time limit to the search beyond the stagewise form "
                         "(design_tac(restructure=True): units moved along their streams, utility units on "
                         "split branches beside exchangers)")
    args = ap.parse_args()
    rows = []
    header = (f"{'problem':<34} {'streams':>7} {'our TAC':>12} {'best published':>14} {'ratio':>7} {'target':>6} "
              f"{'units':>5} {'splits':>6} {'wall [s]':>8} {'seed':>4}  best published by")
    if args.branch_overshoot:
        print("branch overshoot allowed: split branches may pass their stream's target before they mix back")
    print(header)
    for path in sorted(REFERENCES.glob("synthesis_*.json")):
        if args.no_published or (args.only and args.only not in path.stem):
            continue
        data, streams, utilities, costs = problem(path)
        who, best = data["published_tac"][0]
        t0 = time.perf_counter()
        net = design_tac(streams, utilities, costs=costs, emat=1.0, time_limit=args.time_limit, seed=args.seed,
                         starts=args.starts, rounds=args.rounds if args.rounds is not None else 10 ** 6,
                         restructure=args.restructure, branch_overshoot=args.branch_overshoot)
        wall = time.perf_counter() - t0
        n = len(streams)
        goal = 1.00 if n <= 10 else 1.01
        ratio = net.total_annual_cost / best
        row = (f"{path.stem.removeprefix('synthesis_'):<34} {n:>7} {net.total_annual_cost:>12,.0f} {best:>14,.0f} "
               f"{ratio:>7.4f} {goal:>6.2f} {net.units:>5} {splits(net):>6} {wall:>8.1f} {args.seed:>4}  {who}")
        print(row, flush=True)
        rows.append(row)
        for note in net.notes:
            if note.startswith(("TAC search", "the time limit", "search beyond", "the stagewise search",
                                "split branch of")):
                print(f"    {note}", file=sys.stderr)
    for n in args.generated or ():
        streams, utilities, costs = generated_case(n, args.steam_levels, args.hot_oil, args.segments)
        t0 = time.perf_counter()
        net = design_tac(streams, utilities, costs=costs, emat=1.0, time_limit=args.time_limit, seed=args.seed,
                         starts=args.starts, rounds=args.rounds if args.rounds is not None else 10 ** 6,
                         restructure=args.restructure, branch_overshoot=args.branch_overshoot)
        wall = time.perf_counter() - t0
        hot = sum(s.is_hot for s in streams)
        label = (f"generated {n} ({hot}h{n - hot}c{', steam levels' * args.steam_levels}{', oil' * args.hot_oil}"
                 f"{', segments' * args.segments})")
        row = (f"{label:<34} {n:>7} {net.total_annual_cost:>12,.0f} "
               f"{'-':>14} {'-':>7} {'-':>6} {net.units:>5} {splits(net):>6} {wall:>8.1f} {args.seed:>4}  "
               "(no published value: invented data)")
        print(row, flush=True)
        for note in net.notes:
            if note.startswith(("TAC search", "the time limit", "time limit")) or "skipped" in note:
                print(f"    {note}", file=sys.stderr)


if __name__ == "__main__":
    main()
