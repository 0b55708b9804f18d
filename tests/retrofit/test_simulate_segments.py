"""Exact rating of units on streams of several segments in the simulation of an existing network.

A counter-current unit (and a heater or cooler against a utility at one temperature) on a stream with a
phase change must do the duty whose area, summed interval by interval between the segment breaks with the
log mean temperature difference of each interval, equals its installed area.  Sources: the log mean of a
counter-current interval of constant heat capacity flows (Incropera, DeWitt, Bergman & Lavine (2007),
*Fundamentals of Heat and Mass Transfer*, 6th ed., Wiley, Section 11.3, eq. 11.15), computed here with the
reference library ``ht`` (Caleb Bell, PyPI, ``ht.LMTD``); adding the areas of the intervals between the
breaks of piecewise-linear profiles is common practice for condensers with desuperheating and subcooling
zones.  The enthalpy curves and the area sums are computed by hand in this file, without heatloom code;
ε-NTU relations of co-current units come from ``ht.effectiveness_from_NTU`` (Incropera et al. 2007,
Table 11.3).  All stream data written here are invented for the tests; the round trips use the shipped
solvent-recovery case (invented demo data, case_studies/solvent_recovery), whose design is checked against
itself: a design must simulate back to its own duties (issue 14, item 16).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import ht
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

import heatloom.cli as cli
from heatloom.model import ExchangerType, Segment, Stream, StreamTable, Utility, UtilityKind
from heatloom.model.existing import ExistingUnit, OperatingMode
from heatloom.retrofit.existing import ExistingNetwork
from heatloom.retrofit.simulate import simulate

ROOT = Path(__file__).resolve().parents[2]
SOLVENT = ROOT / "case_studies" / "solvent_recovery"
STEAM = Utility("steam", 200, 199, 100.0, UtilityKind.HOT)
WATER = Utility("water", 20, 30, 10.0, UtilityKind.COLD)

# invented streams: a vapour cooled, condensed (121 → 119 °C, a small glide) and subcooled; a liquid heated,
# boiled (99 → 101 °C) and superheated
VAPOUR = ((150.0, 121.0, 2.0), (121.0, 119.0, 120.0), (119.0, 60.0, 3.0))
BOILING = ((40.0, 99.0, 2.0), (99.0, 101.0, 60.0), (101.0, 160.0, 1.5))


def stream(name, pieces):
    return Stream(name, tuple(Segment(a, b, cp) for a, b, cp in pieces))


class Curve:
    """A stream's enthalpy against temperature by hand: piecewise linear over its pieces, extrapolated with the
    end pieces' CP beyond them (the rule heatloom states for its simulation)."""

    def __init__(self, pieces, fraction=1.0):   # [(T_from, T_to, CP)] in stream order; a branch's share
        self.hot = pieces[0][0] > pieces[0][1]
        self.sorted = sorted((min(a, b), max(a, b), fraction * cp) for a, b, cp in pieces)
        self.breaks = [b for _, b, _ in self.sorted[:-1]]

    def enthalpy(self, t):
        (lo0, _, cp0), (_, hi1, cp1) = self.sorted[0], self.sorted[-1]
        return (cp0 * min(t - lo0, 0.0) + cp1 * max(t - hi1, 0.0)
                + sum(cp * (min(max(t, lo), hi) - lo) for lo, hi, cp in self.sorted))

    def heat(self, t_from, t_to):
        """Heat from t_from to t_to in the stream's own direction [kW]."""
        q = self.enthalpy(t_to) - self.enthalpy(t_from)
        return -q if self.hot else q

    def after(self, t_in, q):
        """Temperature after exchanging q [kW] in the stream's own direction."""
        goal = self.enthalpy(t_in) + (-q if self.hot else q)
        return brentq(lambda t: self.enthalpy(t) - goal, -1e3, 1e3, xtol=1e-13, rtol=1e-15)


def area_by_hand(hot: Curve, cold: Curve, hot_in, cold_in, duty, u):
    """Counter-current area [m²]: the duty cut at every break of either side (heat measured from the hot end),
    each interval Q_k / (U · LMTD_k) with ht.LMTD, summed."""
    cuts = {0.0, duty}
    cuts |= {hot.heat(hot_in, t) for t in hot.breaks if hot.after(hot_in, duty) < t < hot_in}
    cuts |= {duty - cold.heat(cold_in, t) for t in cold.breaks if cold_in < t < cold.after(cold_in, duty)}
    ys = sorted(cuts)
    area = 0.0
    for y0, y1 in zip(ys, ys[1:]):
        t_hot = [hot.after(hot_in, y) for y in (y0, y1)]
        t_cold = [cold.after(cold_in, duty - y) for y in (y0, y1)]
        d0, d1 = t_hot[0] - t_cold[0], t_hot[1] - t_cold[1]
        # ends of (nearly) equal ΔT: the log mean tends to the arithmetic mean (error below 1e-12 here);
        # ht.LMTD's plain formula loses its digits to cancellation there
        lm = 0.5 * (d0 + d1) if abs(d0 - d1) <= 1e-6 * max(d0, d1) else \
            ht.LMTD(t_hot[0], t_hot[1], t_cold[1], t_cold[0])
        area += (y1 - y0) / (u * lm)
    return area


def one_unit(hot_pieces, cold_pieces, area, u, arrangement=ExchangerType.COUNTER_CURRENT):
    """One exchanger E between a hot and a cold stream, a trim cooler and a trim heater after it."""
    streams = StreamTable([stream("H", hot_pieces), stream("C", cold_pieces)])
    return ExistingNetwork(streams, [ExistingUnit("E", "H", "C", area=area, u=u, arrangement=arrangement),
                                     ExistingUnit("CW", "H", "water"), ExistingUnit("HS", "steam", "C")],
                           [STEAM, WATER])


# --------------------------------------------------------------------------------------------------
# one unit, by hand


@pytest.mark.parametrize("hot, cold, area, breaks", [
    (VAPOUR, ((30.0, 140.0, 4.5),), 12.0, (121.0, 119.0)),              # condensing hot side
    (((200.0, 80.0, 3.0),), BOILING, 6.0, (99.0, 101.0)),              # boiling cold side
    (VAPOUR, BOILING, 20.0, (121.0, 119.0, 99.0, 101.0)),               # both
])
def test_counter_current_duty_makes_the_segment_wise_area_the_unit_area(hot, cold, area, breaks):
    net = one_unit(hot, cold, area, 0.6)
    sim = simulate(net)
    e = sim.unit("E")
    h, c = Curve(hot), Curve(cold)
    # the segment breaks fall inside the unit (else the test would not test the breaks)
    inside = [t for t in breaks if e.hot_out < t < e.hot_in or e.cold_in < t < e.cold_out]
    assert len(inside) >= 2
    assert area_by_hand(h, c, e.hot_in, e.cold_in, e.duty, 0.6) == pytest.approx(area, rel=1e-6)
    # outlets on the enthalpy curves, by hand
    assert e.hot_out == pytest.approx(h.after(e.hot_in, e.duty), rel=1e-9)
    assert e.cold_out == pytest.approx(c.after(e.cold_in, e.duty), rel=1e-9)
    assert sim.ok, sim.problems
    assert any("rated exactly segment by segment" in n for n in sim.notes)
    assert not any("approximate where a segment break" in n for n in sim.notes)


def test_the_segment_breaks_matter_here():
    # the same unit rated by ε-NTU on the whole-unit mean CPs (ht.effectiveness_from_NTU, counterflow, the
    # treatment before the exact rating) differs from the exact duty by more than a percent: the check above
    # would catch that treatment
    hot, cold, area, u = VAPOUR, ((30.0, 140.0, 4.5),), 12.0, 0.6
    e = simulate(one_unit(hot, cold, area, u)).unit("E")
    h, c = Curve(hot), Curve(cold)

    def by_secants(q):
        ch, cc = q / (e.hot_in - h.after(e.hot_in, q)), q / (c.after(e.cold_in, q) - e.cold_in)
        cmin, cmax = min(ch, cc), max(ch, cc)
        eps = ht.effectiveness_from_NTU(u * area / cmin, cmin / cmax, "counterflow")
        return q - eps * cmin * (e.hot_in - e.cold_in)

    q_secant = brentq(by_secants, 1e-6, min(h.heat(e.hot_in, e.cold_in), c.heat(e.cold_in, e.hot_in)) - 1e-6)
    assert abs(q_secant - e.duty) > 0.01 * e.duty


def test_a_split_branch_is_rated_exactly_on_its_share_of_the_flow():
    # the vapour split 0.6 / 0.4 between two liquids, each branch across the condensation; a branch of
    # fraction f has f times every segment's CP
    streams = StreamTable([stream("H", VAPOUR), Stream.simple("C1", 30, 140, 3.0), Stream.simple("C2", 50, 130, 2.0)])
    units = [ExistingUnit("A", "H", "C1", area=14.0, u=0.6, hot_position=1, cold_position=1, hot_fraction=0.6),
             ExistingUnit("B", "H", "C2", area=9.0, u=0.5, hot_position=1, cold_position=1, hot_fraction=0.4),
             ExistingUnit("CW", "H", "water", hot_position=2),
             ExistingUnit("S1", "steam", "C1", cold_position=2), ExistingUnit("S2", "steam", "C2", cold_position=2)]
    sim = simulate(ExistingNetwork(streams, units, [STEAM, WATER]))
    assert sim.ok, sim.problems
    # the mixer takes the temperature its branches give by the enthalpy balance in every pass: no slow
    # oscillation of its mean CP across the condensation (no under-relaxation needed, from pass 50)
    assert sim.iterations < 50
    for name, f, cold, area, u in (("A", 0.6, ((30.0, 140.0, 3.0),), 14.0, 0.6),
                                   ("B", 0.4, ((50.0, 130.0, 2.0),), 9.0, 0.5)):
        x = sim.unit(name)
        h, c = Curve(VAPOUR, f), Curve(cold)
        assert x.hot_out < 119 < 121 < x.hot_in
        assert area_by_hand(h, c, x.hot_in, x.cold_in, x.duty, u) == pytest.approx(area, rel=1e-6)
        assert x.hot_out == pytest.approx(h.after(x.hot_in, x.duty), rel=1e-9)
    # the mixer: the branches' heat adds up to the mixed stream's (adiabatic mixing, common practice)
    mixed = sim.temperatures["H"][1]
    assert Curve(VAPOUR).heat(150, mixed) == pytest.approx(sim.unit("A").duty + sim.unit("B").duty, rel=1e-9)


def test_a_rated_heater_on_a_boiling_stream_has_its_area_segment_by_segment():
    # steam at one temperature (mean 169.5 °C) heats the boiling liquid first, a hot oil then E, a trim heater
    # last: the rated heater's duty makes Σ C_k/U · ln(ΔT_a/ΔT_b) over the pieces it covers equal its area
    # (the log mean of an interval against a constant temperature, Incropera et al. 2007, Section 11.3)
    lp = Utility("LP steam", 170, 169, 50.0, UtilityKind.HOT)
    streams = StreamTable([Stream.simple("H", 220, 90, 2.5), stream("C", BOILING)])
    net = ExistingNetwork(streams, [ExistingUnit("HX", "LP steam", "C", area=5.0, u=0.8, cold_position=1),
                                    ExistingUnit("E", "H", "C", area=0.3, u=0.5, cold_position=2),
                                    ExistingUnit("HS", "steam", "C", cold_position=3),
                                    ExistingUnit("CW", "H", "water")], [lp, STEAM, WATER])
    assert net.unit("HX").mode is OperatingMode.RATED
    sim = simulate(net)
    x = sim.unit("HX")
    c, t_u = Curve(BOILING), 169.5
    assert x.cold_in == 40 and x.cold_out > 101          # the boiling lies inside the heater
    assert x.cold_out == pytest.approx(c.after(40, x.duty), rel=1e-9)
    assert x.cold_out < 160
    pieces = ((40.0, 99.0, 2.0), (99.0, 101.0, 60.0), (101.0, x.cold_out, 1.5))
    by_hand = sum(cp / 0.8 * math.log((t_u - a) / (t_u - b)) for a, b, cp in pieces)
    assert by_hand == pytest.approx(5.0, rel=1e-6)
    assert sim.ok, sim.problems


def test_co_current_units_keep_epsilon_ntu_on_the_mean_cps_and_say_so():
    # a co-current unit across the condensation keeps its own ε-NTU relation with the secant CPs of the range
    # each side covers (ht.effectiveness_from_NTU, subtype 'parallel'): checked by hand, and the notes say it
    # is approximate there
    hot, cold, area, u = VAPOUR, ((30.0, 140.0, 4.5),), 18.0, 0.6
    sim = simulate(one_unit(hot, cold, area, u, ExchangerType.CO_CURRENT))
    e = sim.unit("E")
    h = Curve(hot)
    ch, cc = e.duty / (e.hot_in - e.hot_out), e.duty / (e.cold_out - e.cold_in)
    cmin, cmax = min(ch, cc), max(ch, cc)
    eps = ht.effectiveness_from_NTU(u * area / cmin, cmin / cmax, "parallel")
    assert e.duty == pytest.approx(eps * cmin * (150 - 30), rel=1e-9)
    assert e.hot_out == pytest.approx(h.after(150, e.duty), rel=1e-9)
    assert e.hot_out < 119
    assert any("'E' (co-current or 1-2 shell) by ε-NTU on the mean CPs, approximate" in n for n in sim.notes)


@st.composite
def segmented_networks(draw):
    """Invented networks: 2 hot and 2 cold streams, each of one piece or with a phase change of large CP in
    the middle, 1-4 counter-current exchangers in random order, trim units at the ends."""
    def pieces(hot):
        a = draw(st.integers(80, 220)) if hot else draw(st.integers(10, 90))
        span = draw(st.integers(40, 120))
        b = a - span if hot else a + span
        cp = draw(st.integers(10, 60)) / 10
        if not draw(st.booleans()):
            return ((float(a), float(b), cp),)
        m = a - span / 3 if hot else a + span / 3
        m2 = m - 1.5 if hot else m + 1.5
        plateau = float(draw(st.integers(20, 200)))
        return ((float(a), m, cp), (m, m2, plateau), (m2, float(b), draw(st.integers(10, 60)) / 10))

    specs = {f"H{i}": pieces(True) for i in range(2)} | {f"C{i}": pieces(False) for i in range(2)}
    units = [ExistingUnit(f"E{k}", draw(st.sampled_from(["H0", "H1"])), draw(st.sampled_from(["C0", "C1"])),
                          area=draw(st.integers(2, 60)) / 4, u=draw(st.sampled_from([0.3, 0.5, 0.8])))
             for k in range(draw(st.integers(1, 4)))]
    draw(st.randoms()).shuffle(units)
    units += [ExistingUnit("CW0", "H0", "water"), ExistingUnit("CW1", "H1", "water"),
              ExistingUnit("HS0", "steam", "C0"), ExistingUnit("HS1", "steam", "C1")]
    hot_steam = Utility("steam", 400, 399, 1.0, UtilityKind.HOT)
    cold_water = Utility("water", -20, -10, 1.0, UtilityKind.COLD)
    return specs, ExistingNetwork(StreamTable([stream(n, p) for n, p in specs.items()]), units,
                                  [hot_steam, cold_water])


@settings(max_examples=30, deadline=None, derandomize=True)
@given(segmented_networks())
def test_every_counter_current_unit_is_exact_in_random_networks(case):
    specs, net = case
    sim = simulate(net)
    for x in sim.units:
        if x.name.startswith("E") and x.duty > 1e-6 and x.hot_in > x.cold_in:
            unit = net.unit(x.name)
            h, c = Curve(specs[x.hot]), Curve(specs[x.cold])
            assert area_by_hand(h, c, x.hot_in, x.cold_in, x.duty, unit.u) == pytest.approx(unit.area, rel=1e-6)
            assert x.hot_out == pytest.approx(h.after(x.hot_in, x.duty), rel=1e-9, abs=1e-9)
            assert x.cold_out == pytest.approx(c.after(x.cold_in, x.duty), rel=1e-9, abs=1e-9)


# --------------------------------------------------------------------------------------------------
# round trips: a design simulates back to its own duties


def _solvent_case():
    from heatloom.io import read_streams
    from heatloom.io.utilities import read_utilities

    return read_streams(SOLVENT / "streams.csv"), read_utilities(SOLVENT / "utilities.csv")


def _reads_back(design, streams, utilities) -> int:
    """Simulate ``design`` as an existing network; every unit's duty must come back (rel 1e-6).  Returns the
    number of exchangers that cross a segment break of one of their streams inside the unit."""
    existing = ExistingNetwork.from_network(design, streams, utilities)
    sim = simulate(existing)
    assert sim.ok, sim.problems
    by_name = {s.name: s for s in streams}
    spans = 0
    for prefix, group in (("E", design.exchangers), ("H", design.heaters), ("C", design.coolers)):
        for k, x in enumerate(group, start=1):
            assert sim.unit(f"{prefix}{k}").duty == pytest.approx(x.duty, rel=1e-6)
            if prefix == "E":
                breaks = [g.target_temperature for s in (by_name[x.hot], by_name[x.cold]) for g in s.segments[:-1]]
                spans += any(x.cold_in < t < x.hot_in and (x.hot_out < t < x.hot_in or x.cold_in < t < x.cold_out)
                             for t in breaks)
    return spans


def test_a_tac_network_across_the_condensing_overhead_simulates_back_to_its_duties():
    # a fixed topology (the column overhead against the crude solvent feed, every other duty by utilities),
    # its load set by the exact-cost refinement of the TAC design: no wall clock involved
    from heatloom import defaults
    from heatloom.model.costs import CostSettings
    from heatloom.network.tac.build import network_from_solution
    from heatloom.network.tac.nlp import Topology, make_problem, solve_topology

    streams, utilities = _solvent_case()
    costs = CostSettings()
    p = make_problem(streams, utilities, costs, defaults.EMAT)
    i, j = p.hot_names.index("column overhead"), p.cold_names.index("crude solvent feed")
    steam = [lv for lv, u in enumerate(p.heat_levels) if u.name == "HP steam"][0]
    top = Topology(1, frozenset({(i, j, 0)}),
                   frozenset((c, steam) for c in range(len(p.cold_names)) if p.heat_level_possible(c, steam)),
                   frozenset((h, 0) for h in range(len(p.hot_names))))
    sol = solve_topology(p, top, [], extra_vertex=True)
    assert sol is not None
    design = network_from_solution(p, sol, streams, utilities, costs)
    assert [(x.hot, x.cold) for x in design.exchangers] == [("column overhead", "crude solvent feed")]
    assert _reads_back(design, streams, utilities) == 1   # the exchanger crosses the overhead's segment breaks


@pytest.mark.slow
def test_a_tac_design_of_the_solvent_case_simulates_back_to_its_duties():
    from heatloom.network.tac.search import design_tac

    streams, utilities = _solvent_case()
    design = design_tac(streams, utilities, time_limit=8.0, seed=0, starts=1, rounds=2, milp_iterations=1)
    # whatever the wall-clock search found (it may or may not match the condensing overhead: the fixed
    # topology above covers that), its units table must read back
    _reads_back(design, streams, utilities)


@pytest.mark.slow
def test_cli_retrofit_of_a_tac_design_with_a_condensing_stream_exits_0(capsys, tmp_path):
    designed = tmp_path / "designed"
    code = cli.main([str(a) for a in ("design", SOLVENT / "streams.csv", "--utilities", SOLVENT / "utilities.csv",
                                      "--mode", "tac", "--time-limit", "20", "--out", designed, "--json")])
    out = capsys.readouterr()
    assert code == 0, out.err
    design = json.loads(out.out)
    # the wall-clock TAC search does not always match the condensing column overhead with a process stream
    # (under load it may stop at a network that cools it with utility only); the exchanger spanning its
    # segment breaks is checked in memory above, and here whatever the search found must read back
    code = cli.main([str(a) for a in ("retrofit", designed / "design_units.csv", "--streams", SOLVENT / "streams.csv",
                                      "--utilities", SOLVENT / "utilities.csv", "--json", "--sizes", "1",
                                      "--max-candidates", "3", "--out", tmp_path / "retrofit")])
    out = capsys.readouterr()
    assert code == 0, out.err
    result = json.loads(out.out)
    # the table rounds areas to 0.001 m²: the simulated hot utility is the design's to that precision
    assert result["current"]["hot_utility"] == pytest.approx(design["hot_utility"], rel=1e-4)
    assert result["current"]["cold_utility"] == pytest.approx(design["cold_utility"], rel=1e-4)
