"""Tick-off placement and match rules (forbidden / required) of the MER design.

Published sources, cited beside each use: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6,
ch. 3, Table 3.6 (four streams, ΔTmin 10 K: 50 kW hot, 30 kW cold utility, pinch 90/80 °C); Ray & Das,
Process Equipment and Plant Design, ch. 5, Problems 5.1 (90 / 255 kW) and 5.4 (62.5 / 45 kW); Björk &
Pettersson 2003 fifteen-stream data via Roetzel, Luo & Chen 2020, Table 6.31 (no published MER targets:
compared with the problem table computed here).  The tick-off rule and Euler's N − 1 units target are
from Linnhoff & Hindmarsh 1983 (Chem. Eng. Sci. 38(5), 745-763).  The problem-table cascade below is
written out in this file (Linnhoff & Flower 1978), independent of heatloom.pinch.
"""

import pytest
from refdata import reference_utilities

import heatloom.network.design as design_module
from heatloom.errors import InfeasibleError, InputError
from heatloom.model import StreamTable
from heatloom.network import check_network, design_mer
from heatloom.network.pieces import Pieces
from heatloom.network.placement import Side
from heatloom.network.tickoff import cascade_feasible, tick_off_placement

TARGETING = [
    # (reference file, published hot utility, published cold utility) [kW]
    ("targeting_sinnott_four_stream", 50, 30),       # Sinnott, C&R Vol. 6, Table 3.6
    ("targeting_ray_das_problem_5_1", 90, 255),      # Ray & Das, Problem 5.1, Tables P5.1B/C
    ("targeting_ray_das_problem_5_4", 62.5, 45),     # Ray & Das, Problem 5.4 (CP erratum, see file)
]


def problem_table(streams, dt_min):
    """Minimum hot and cold utility by the problem table (Linnhoff & Flower 1978), single-segment streams,
    every stream shifted by ΔTmin/2; written here independently of heatloom.pinch."""
    shifted = []
    for s in streams:
        d = -dt_min / 2 if s.is_hot else dt_min / 2
        shifted.append((s.supply_temperature + d, s.target_temperature + d, s.segments[0].heat_capacity_flow,
                        s.is_hot))
    bounds = sorted({t for a, b, _, _ in shifted for t in (a, b)}, reverse=True)
    cascade, running = [0.0], 0.0
    for top, bottom in zip(bounds, bounds[1:]):
        net = 0.0
        for a, b, cp, hot in shifted:
            lo, hi = min(a, b), max(a, b)
            overlap = max(0.0, min(hi, top) - max(lo, bottom))
            net += cp * overlap if hot else -cp * overlap
        running += net
        cascade.append(running)
    hot_utility = max(0.0, -min(cascade))
    return hot_utility, hot_utility + cascade[-1]


def pairs_of(net):
    return [(e.hot, e.cold, e.duty) for e in net.exchangers] + \
        [(h.utility, h.cold, h.duty) for h in net.heaters] + [(c.hot, c.utility, c.duty) for c in net.coolers]


@pytest.fixture
def tick_off_always(monkeypatch):
    """The tick-off method at every size (it is the primary method above TICK_OFF_ABOVE streams only)."""
    monkeypatch.setattr(design_module, "TICK_OFF_ABOVE", 0)


# ------------------------------------------------------------------------------------- tick-off method

def test_cascade_check_by_hand():
    # Invented: H 150→50 °C, 200 kW against C 40→120 °C, 200 kW, shifts 5 K: the cascade holds; a cold
    # side at 140→150 °C cannot take heat from H (by hand).
    h = Side("H", True, (150.0, 50.0), (0.0, 200.0), 5.0)
    assert cascade_feasible([h, Side("C", False, (40.0, 120.0), (0.0, 200.0), 5.0)])
    assert not cascade_feasible([h, Side("C", False, (140.0, 150.0), (0.0, 200.0), 5.0)])


def test_tick_off_above_the_sinnott_pinch():
    # Sinnott Table 3.6 above the pinch (90 °C hot / 80 °C cold): 1 gives 270 kW, 2 gives 60 kW, 3 takes
    # 110 kW, 4 takes 270 kW, hot utility 50 kW. Tick-off: 1→4 (both off), 2→3 60 kW, heater 50 kW on 3.
    hot = [Side("1", True, (180.0, 90.0), (0.0, 270.0), 5.0), Side("2", True, (150.0, 90.0), (0.0, 60.0), 5.0),
           Side("hu", True, (250.0, 250.0), (0.0, 50.0), 5.0, utility=True)]
    cold = [Side("3", False, (80.0, 135.0), (0.0, 110.0), 5.0), Side("4", False, (80.0, 140.0), (0.0, 270.0), 5.0)]
    result = tick_off_placement(hot, cold)
    units = {(u.hot, u.cold): u for u in result.placement.units}
    assert set(units) == {("1", "4"), ("2", "3"), ("hu", "3")}
    assert units["1", "4"].duty == pytest.approx(270)
    assert units["hu", "3"].duty == pytest.approx(50)
    for u in result.placement.units:   # ΔTmin 10 K at both ends
        assert u.hot_in - u.cold_out >= 10 - 1e-9 and u.hot_out - u.cold_in >= 10 - 1e-9
    # the heater required on 4 instead: 2→3 60 kW, 1→3 50 kW at the top of 3, 1→4 220 kW, heater 50 kW on
    # 4 keep 10 K everywhere (by hand), four units; the tick-off finds a placement with the heater on 4
    result = tick_off_placement(hot, cold, required={("hu", "4")})
    units = {(u.hot, u.cold): u for u in result.placement.units}
    assert units["hu", "4"].duty == pytest.approx(50)
    assert len(units) <= 4
    assert sum(u.duty for u in result.placement.units if u.cold == "3") == pytest.approx(110)
    assert sum(u.duty for u in result.placement.units if u.cold == "4") == pytest.approx(270)
    for u in result.placement.units:
        assert u.hot_in - u.cold_out >= 10 - 1e-9 and u.hot_out - u.cold_in >= 10 - 1e-9
    # without 1→4, stream 4 (270 kW) could get at most 60 + 50 kW: no placement at these duties (by hand)
    assert tick_off_placement(hot, cold, forbidden={("1", "4")}) is None


def _pinch_steps(hot, cold, pinch_side, branches=False):
    """The steps the tick-off search places at the region's pinch first: (hot side, cold side (indices into
    hot + cold), kind, load, unit)."""
    import heatloom.network.tickoff as tickoff

    sides = [*hot, *cold]
    allowed = {(h.name, c.name) for h in hot for c in cold}
    return [(st.side[c[0]], st.side[c[1]], c[2], c[3], unit) for c, unit, st in
            tickoff._pinch_steps(Pieces(sides), allowed, 1e-7, pinch_side, lambda c: (not c[5], c[4][0]),
                                 branches)]


def test_pinch_matches_of_the_sinnott_problem():
    # Sinnott Table 3.6 (CP 3.0, 1.0 hot; 2.0, 4.5 cold; pinch 90/80 °C). The pinch design method
    # (Linnhoff & Hindmarsh 1983): above the pinch each hot stream at the pinch needs a cold partner with
    # CP_cold >= CP_hot: 1 (3.0) → 4 (4.5) and 2 (1.0) → 3 (2.0); below it each cold stream (or branch)
    # at the pinch needs CP_hot >= CP_cold, every unit starting at the pinch (by hand).
    hot = [Side("1", True, (180.0, 90.0), (0.0, 270.0), 5.0), Side("2", True, (150.0, 90.0), (0.0, 60.0), 5.0),
           Side("hu", True, (250.0, 250.0), (0.0, 50.0), 5.0, utility=True)]
    cold = [Side("3", False, (80.0, 135.0), (0.0, 110.0), 5.0), Side("4", False, (80.0, 140.0), (0.0, 270.0), 5.0)]
    steps = _pinch_steps(hot, cold, (1, 0))
    got = {(hot[i].name, cold[j - 3].name): q for i, j, _, q, _ in steps}
    assert got == pytest.approx({("1", "4"): 270.0, ("2", "3"): 60.0})
    hot = [Side("1", True, (90.0, 60.0), (0.0, 90.0), 5.0), Side("2", True, (90.0, 30.0), (0.0, 60.0), 5.0)]
    cold = [Side("3", False, (20.0, 80.0), (0.0, 120.0), 5.0),
            Side("cu", False, (10.0, 10.0), (0.0, 30.0), 5.0, utility=True)]
    steps = _pinch_steps(hot, cold, (0, 1))
    cp = {"1": 3.0, "2": 1.0}
    assert steps and sum(q for *_, q, _ in steps) <= 120 + 1e-9
    for i, j, _, _, (h0, h1, fh, c0, c1, fc) in steps:
        assert cp[hot[i].name] * fh >= 2.0 * fc - 1e-9             # CP rule below the pinch (branches)
        assert (hot[i].temperature(h0), cold[j - 2].temperature(c1)) == pytest.approx((90.0, 80.0))
        assert hot[i].temperature(h1) - cold[j - 2].temperature(c0) >= 10 - 1e-9


def test_pinch_split_when_no_partner_has_the_larger_cp():
    # Invented, above a pinch at 90/80 °C (ΔTmin 10 K): H 140→90 °C, CP 4 (200 kW); C1 80→130 °C, CP 2
    # (100 kW); C2 80→130 °C, CP 2.5 (125 kW); hot utility 25 kW. No cold stream has CP >= 4, so the pinch
    # design method (Linnhoff & Hindmarsh 1983) splits H: a branch of CP <= the partner's ticks it off, the
    # rest of H goes to the other cold stream, the heater closes it: 3 units = N − 1 (by hand).
    hot = [Side("H", True, (140.0, 90.0), (0.0, 200.0), 5.0),
           Side("hu", True, (250.0, 250.0), (0.0, 25.0), 5.0, utility=True)]
    cold = [Side("C1", False, (80.0, 130.0), (0.0, 100.0), 5.0), Side("C2", False, (80.0, 130.0), (0.0, 125.0), 5.0)]
    cp = {"C1": 2.0, "C2": 2.5}
    steps = _pinch_steps(hot, cold, (1, 0))
    assert steps and steps[0][2] == "split hot"
    assert sum(q for *_, q, _ in steps) == pytest.approx(200)   # all of H placed from the pinch
    for _, j, _, _, (h0, h1, fh, _, c1, fc) in steps:
        name = cold[j - 2].name
        assert 4.0 * fh <= cp[name] * fc + 1e-9                 # CP rule above the pinch
        assert hot[0].temperature(h1) == pytest.approx(90.0)      # from the pinch out
        assert hot[0].temperature(h0) - cold[j - 2].temperature(c1) >= 10 - 1e-9
    result = tick_off_placement(hot, cold)
    assert len(result.placement.units) == 3 and result.remainder == 0
    got = {n: 0.0 for n in ("H", "hu", "C1", "C2")}
    for u in result.placement.units:
        got[u.hot] += u.duty
        got[u.cold] += u.duty
        assert u.hot_in - u.cold_out >= 10 - 1e-9 and u.hot_out - u.cold_in >= 10 - 1e-9
    assert got == pytest.approx({"H": 200, "hu": 25, "C1": 100, "C2": 125})


def test_pinch_branch_with_the_partners_cp():
    # Invented, above a pinch at 90/80 °C (ΔTmin 10 K): H1 114→90 °C CP 1 (24 kW), H2 159→90 °C CP 5
    # (345 kW), C1 80→106 °C CP 4 (104 kW), C2 80→168 °C CP 4 (352 kW), hot utility 87 kW. At the pinch the
    # cold CPs exceed the hot ones by 8 − 6 = 2 kW/K (by hand), so H1 against a whole cold stream (CP 4)
    # would take 3 kW/K of it, and a branch over a whole cold stretch would have CP < 1 and lose ΔTmin at
    # the top: no unit from the pinch ticks H1 off but a branch of a cold stream with CP 1, exactly H1's,
    # from 80 to 104 °C (the CP rule of Linnhoff & Hindmarsh 1983 kept with equality; by hand).
    # Without the branches at the pinch no step is placed there.
    hot = [Side("H1", True, (114.0, 90.0), (0.0, 24.0), 5.0), Side("H2", True, (159.0, 90.0), (0.0, 345.0), 5.0),
           Side("hu", True, (250.0, 250.0), (0.0, 87.0), 5.0, utility=True)]
    cold = [Side("C1", False, (80.0, 106.0), (0.0, 104.0), 5.0), Side("C2", False, (80.0, 168.0), (0.0, 352.0), 5.0)]
    assert _pinch_steps(hot, cold, (1, 0)) == []
    steps = _pinch_steps(hot, cold, (1, 0), branches=True)
    i, j, kind, q, (h0, h1, fh, c0, c1, fc) = steps[0]
    side = cold[j - 3]
    assert (hot[i].name, kind[0], q) == ("H1", "branch cold", pytest.approx(24.0))
    assert (side.temperature(c0), side.temperature(c1)) == pytest.approx((80.0, 104.0))
    assert 4.0 * fc == pytest.approx(1.0)   # the branch's CP [kW/K]
    # then H2 (CP 5) fits the cold CPs left at the pinch, 4 + 3 kW/K (by hand): all of it from the pinch
    cp = {"H1": 1.0, "H2": 5.0}
    assert sum(q for *_, q, _ in steps) == pytest.approx(24 + 345)
    for i, j, _, _, (h0, h1, fh, c0, c1, fc) in steps:
        assert cp[hot[i].name] * fh <= 4.0 * fc + 1e-9            # CP rule above the pinch
        assert (hot[i].temperature(h1), cold[j - 3].temperature(c0)) == pytest.approx((90.0, 80.0))
        assert hot[i].temperature(h0) - cold[j - 3].temperature(c1) >= 10 - 1e-9
    result = tick_off_placement(hot, cold)
    got = {n: 0.0 for n in ("H1", "H2", "hu", "C1", "C2")}
    for u in result.placement.units:
        got[u.hot] += u.duty
        got[u.cold] += u.duty
        assert u.hot_in - u.cold_out >= 10 - 1e-9 and u.hot_out - u.cold_in >= 10 - 1e-9
    assert got == pytest.approx({"H1": 24, "H2": 345, "hu": 87, "C1": 104, "C2": 352})


@pytest.mark.parametrize(("name", "hot", "cold"), TARGETING)
def test_tick_off_design_of_published_problems(reference, tick_off_always, name, hot, cold):
    data, streams = reference(name)
    net = design_mer(streams, data["dtmin"], default_film_coefficient=1.0)
    assert net.hot_utility == pytest.approx(hot, abs=1e-6)
    assert net.cold_utility == pytest.approx(cold, abs=1e-6)
    check_network(net, streams)
    assert any("tick-off method" in n for n in net.notes)
    # every tick-off step removes a side: Euler's N − 1 per region at most on these small problems
    assert net.units <= net.unit_target


@pytest.mark.slow
def test_tick_off_design_of_the_fifteen_stream_problem(reference, tick_off_always):
    # Björk & Pettersson 2003 data via Roetzel, Luo & Chen 2020, Table 6.31 (streams, utilities HU
    # 325 °C and CU 25→40 °C); ΔTmin 10 K is our choice. Targets from the problem table in this file.
    data, streams = reference("synthesis_fifteen_stream_8h7c")
    utilities = reference_utilities(data)
    net = design_mer(streams, 10, utilities, time_limit=30)
    check_network(net, streams, utilities)
    hot, cold = problem_table(streams, 10)
    assert net.hot_utility == pytest.approx(hot, rel=1e-7)
    assert net.cold_utility == pytest.approx(cold, rel=1e-7)
    assert any("tick-off method" in n for n in net.notes)


def test_tick_off_without_a_network_falls_back_to_the_matches_chain(reference, tick_off_always, monkeypatch):
    # Forced: the tick-off method finds nothing; the fewest-matches chain designs the network and says so.
    monkeypatch.setattr(design_module, "tick_off_placement", lambda *a, **k: None)
    data, streams = reference("targeting_sinnott_four_stream")
    net = design_mer(streams, 10, default_film_coefficient=1.0)
    assert (net.hot_utility, net.cold_utility) == pytest.approx((50, 30))   # Sinnott, Table 3.6
    check_network(net, streams)
    assert any("tick-off method gave no network" in n for n in net.notes)
    assert any(n.startswith("minimum matches") for n in net.notes)


def test_remainder_milp_without_a_solution_falls_back(monkeypatch):
    # Forced: the searches place nothing (every side is left over) and the stagewise MILP for what they
    # left stops without a solution (a forced timeout); the remainder is placed interval by interval and
    # every side is still served within ΔTmin. Invented threshold case of
    # test_design.test_forced_stream_split (H1 must serve C1 up to 190 °C and C2 up to 150 °C, by hand).
    import heatloom.network.remainder as remainder
    import heatloom.network.tickoff as tickoff
    from heatloom.network.solvers import SolveReport, SolveStatus

    calls = []

    def stalled(problem, *args, **kwargs):
        calls.append(kwargs.get("name"))
        return SolveReport("highs", SolveStatus.ERROR, None, None, None, 1.0, 1.0, kwargs.get("name", ""),
                           "Time limit reached")

    monkeypatch.setattr(remainder, "solve", stalled)
    monkeypatch.setattr(tickoff, "tick_off_search", lambda sides, *a, **k: ([], Pieces(sides)))
    hot = [Side("H1", True, (200.0, 60.0), (0.0, 980.0), 5.0), Side("H2", True, (150.0, 50.0), (0.0, 300.0), 5.0)]
    cold = [Side("C1", False, (90.0, 190.0), (0.0, 400.0), 5.0), Side("C2", False, (80.0, 150.0), (0.0, 350.0), 5.0),
            Side("cu", False, (10.0, 10.0), (0.0, 530.0), 5.0, utility=True)]
    result = tick_off_placement(hot, cold, solve_time=1.0, tries=1)
    assert calls == ["placement (what the tick-off steps left)"]
    assert [r.status for r in result.reports] == [SolveStatus.ERROR]
    assert result.ticked == 0 and result.remainder == len(result.placement.units)
    got = {n: 0.0 for n in ("H1", "H2", "C1", "C2", "cu")}
    for u in result.placement.units:
        got[u.hot] += u.duty
        got[u.cold] += u.duty
        assert u.hot_in - u.cold_out >= 10 - 1e-6 and u.hot_out - u.cold_in >= 10 - 1e-6
    assert got == pytest.approx({"H1": 980, "H2": 300, "C1": 400, "C2": 350, "cu": 530})
    # without the forced stop the MILP places the same sides in fewer units than interval by interval
    monkeypatch.undo()
    monkeypatch.setattr(tickoff, "tick_off_search", lambda sides, *a, **k: ([], Pieces(sides)))
    solved = tick_off_placement(hot, cold, solve_time=20.0, tries=1)
    assert solved.reports[0].has_solution
    assert len(solved.placement.units) <= len(result.placement.units)


# ---------------------------------------------------------------------------------------- match rules

@pytest.mark.parametrize("method", ["chain", "tick-off"])
def test_forbidden_and_required_matches(reference, monkeypatch, method):
    # Sinnott Table 3.6 data. Forbid hot utility on stream 4, require 2→4 and 1→3: no unit of a
    # forbidden pair, units of the required pairs with positive duties, still the MER targets (50 / 30 kW,
    # Sinnott; and the problem table written in this file).
    if method == "tick-off":
        monkeypatch.setattr(design_module, "TICK_OFF_ABOVE", 0)
    data, streams = reference("targeting_sinnott_four_stream")
    forbidden = [("hot utility (assumed)", "4")]
    net = design_mer(streams, 10, default_film_coefficient=1.0, forbidden=forbidden,
                     required=[("2", "4"), ("1", "3")])
    check_network(net, streams)
    units = pairs_of(net)
    assert not [u for u in units if (u[0], u[1]) in set(forbidden)]
    assert any((h, c) == ("2", "4") and q > 0 for h, c, q in units)
    assert any((h, c) == ("1", "3") and q > 0 for h, c, q in units)
    hot, cold = problem_table(streams, 10)
    assert (hot, cold) == pytest.approx((50, 30))
    assert net.hot_utility == pytest.approx(hot, abs=1e-6)
    assert net.cold_utility == pytest.approx(cold, abs=1e-6)
    assert any("match rules" in n and "hot utility (assumed)→4" in n for n in net.notes)
    # forbidding 1→4 as well leaves stream 4 short above the pinch (60 kW from 2 at most): no network
    with pytest.raises(InfeasibleError, match="1→4"):
        design_mer(streams, 10, default_film_coefficient=1.0, forbidden=[*forbidden, ("1", "4")])


def test_unknown_names_and_conflicting_rules(reference):
    data, streams = reference("targeting_sinnott_four_stream")
    with pytest.raises(InputError, match=r"forbidden match 9:3: unknown hot side '9'; the hot streams and utilities are '1', '2'"):
        design_mer(streams, 10, default_film_coefficient=1.0, forbidden=[("9", "3")])
    with pytest.raises(InputError, match=r"required match 1:2: '2' is a hot stream, not a cold side \(write HOT:COLD\)"):
        design_mer(streams, 10, default_film_coefficient=1.0, required=[("1", "2")])
    with pytest.raises(InputError, match=r"match 1:4 is both forbidden and required"):
        design_mer(streams, 10, default_film_coefficient=1.0, forbidden=[("1", "4")], required=[("1", "4")])
    with pytest.raises(InputError, match=r"pair of names"):
        design_mer(streams, 10, default_film_coefficient=1.0, forbidden=["145"])


@pytest.mark.parametrize("method", ["chain", "tick-off"])
def test_rules_that_make_mer_impossible(monkeypatch, method):
    # Invented: C1 (20→100 °C) can be heated by H1 (150→60 °C) and the hot utility only. Forbidding both
    # leaves its demand unserved; H2 (70→40 °C) can never heat C2 (90→130 °C) within ΔTmin 10 K (by hand).
    if method == "tick-off":
        monkeypatch.setattr(design_module, "TICK_OFF_ABOVE", 0)
    s = StreamTable.from_arrays(["H1", "H2", "C1", "C2"], [150, 70, 20, 90], [60, 40, 100, 130],
                                [2.0, 1.0, 1.0, 1.0])
    with pytest.raises(InputError, match=r"required match H2→C2 cannot exchange heat"):
        design_mer(s, 10, default_film_coefficient=1.0, required=[("H2", "C2")])
    with pytest.raises((InfeasibleError, InputError), match=r"H1→C1.*hot utility \(assumed\)→C1|forbidden"):
        design_mer(s, 10, default_film_coefficient=1.0,
                   forbidden=[("H1", "C1"), ("hot utility (assumed)", "C1"), ("H2", "C1")])


def test_a_spent_deadline_stops_even_the_first_search_and_the_rest_is_still_placed():
    """Above the pinch of Sinnott's four-stream problem (Coulson & Richardson's Chemical Engineering Vol. 6,
    ch. 3, Table 3.6; pinch 90/80 °C, 50 kW hot utility).  With the design's budget already spent, the
    first search stops after its first step (it used to run to its end whatever the time: minutes on 20
    streams with three steam levels) and what it left is placed interval by interval: every side's duty
    is still met and ΔTmin kept."""
    import time

    hot = [Side("1", True, (180.0, 90.0), (0.0, 270.0), 5.0), Side("2", True, (150.0, 90.0), (0.0, 60.0), 5.0),
           Side("hu", True, (250.0, 250.0), (0.0, 50.0), 5.0, utility=True)]
    cold = [Side("3", False, (80.0, 135.0), (0.0, 110.0), 5.0), Side("4", False, (80.0, 140.0), (0.0, 270.0), 5.0)]
    free = tick_off_placement(hot, cold)
    assert free.remainder == 0
    cut = tick_off_placement(hot, cold, deadline=time.monotonic() - 1.0)
    assert cut.tries == 1 and cut.remainder >= 1 and cut.ticked <= 1
    for side in (*hot, *cold):
        carried = sum(u.duty for u in cut.placement.units if side.name in (u.hot, u.cold))
        assert carried == pytest.approx(side.duty, rel=1e-9)
    for u in cut.placement.units:
        assert u.hot_in - u.cold_out >= 10.0 - 1e-9 and u.hot_out - u.cold_in >= 10.0 - 1e-9


def test_candidate_steps_checked_in_chunks_give_the_same_placement(monkeypatch):
    """The candidate steps are checked in chunks of bounded memory (a search whose pieces multiply had millions
    of pairs and ran out of 24 GB on 60 generated streams with three steam levels).  Chunks of one pair give
    the same placement as one chunk, above the pinch of Sinnott's four-stream problem (Coulson & Richardson's
    Chemical Engineering Vol. 6, ch. 3, Table 3.6)."""
    import heatloom.network.tickoff as tickoff

    hot = [Side("1", True, (180.0, 90.0), (0.0, 270.0), 5.0), Side("2", True, (150.0, 90.0), (0.0, 60.0), 5.0),
           Side("hu", True, (250.0, 250.0), (0.0, 50.0), 5.0, utility=True)]
    cold = [Side("3", False, (80.0, 135.0), (0.0, 110.0), 5.0), Side("4", False, (80.0, 140.0), (0.0, 270.0), 5.0)]
    whole = tick_off_placement(hot, cold, tries=3, neighbourhood=0.0)
    monkeypatch.setattr(tickoff, "_CHUNK_CELLS", 1)
    chunked = tick_off_placement(hot, cold, tries=3, neighbourhood=0.0)
    assert chunked.placement.units == whole.placement.units
    # Euler's N − s by hand: 5 sides in two balanced sets (1 with 4, 270 kW; 2 and the utility with 3, 110 kW)
    assert len(whole.placement.units) == 3
