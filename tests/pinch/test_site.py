"""Site targets over several zones and steam mains (heatloom.pinch.site).

Checks against published data: the targets of the zones and of the combined problems are the published
ones (Ray & Das, Process Equipment and Plant Design, Elsevier, ch. 5, Problems 5.1 and 5.4; Sinnott,
Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6), and a site built from two halves of
a published problem never recovers more than direct integration of the whole problem. No published
total-site example with printed mains duties was available to us, so none is asserted. Hand-computed cases
say their arithmetic in the comments; the invented random sites of the property tests check invariants only.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from refdata import load_reference

from heatloom.errors import InputError
from heatloom.model import Stream, StreamTable
from heatloom.model.site import MainKind, SteamMain, Zone, check_mains
from heatloom.pinch import target
from heatloom.pinch.curves import Curve
from heatloom.pinch.site import composite_profile, remove_pockets, site_targets, zone_profiles

SETTINGS = settings(max_examples=40, derandomize=True, deadline=None)


def table(*rows, prefix=""):
    return StreamTable([Stream.simple(f"{prefix}{n}", a, b, cp) for n, a, b, cp in rows])


# ---------------------------------------------------------------------------------------------------------
# hand-computed cases


def hand_zones():
    # Zone A: a vapour condensing at 150 °C (150.5 -> 149.5 °C, CP 1000 kW/K: 1000 kW), nothing to heat.
    # Zone B: a liquid boiling at 120 °C (119.5 -> 120.5 °C, CP 800 kW/K: 800 kW), nothing to cool.
    a = table(("condenser", 150.5, 149.5, 1000.0))
    b = table(("reboiler", 119.5, 120.5, 800.0))
    return {"A": a, "B": b}


def test_hand_two_zones_one_main():
    # ΔTmin 10 K, one main at 135 °C.  Alone: A needs 0 hot / 1000 cold, B 800 hot / 0 cold.
    # A's heat sits at 149.5..150.5 °C; steam raised from it must be ΔTmin colder: up to 139.5 °C >= 135,
    # so all 1000 kW can go into the main.  B needs heat at 119.5..120.5 °C; steam ΔTmin hotter, from
    # 130.5 °C <= 135, serves all 800 kW.  Recovery = min(1000, 800) = 800 kW; 200 kW of A's heat has no
    # user (surplus) and goes to cooling.  Site: hot 800 - 800 = 0, cold 1000 - 800 = 200, saving 800 kW.
    # Price 60 per kW·yr of LP steam and 5 per kW·yr of cooling water (main at 25 °C, below everything):
    # zone by zone 800*60 + 1000*5 = 53,000; site 0*60 + 200*5 = 1,000; saving 52,000 per year.
    mains = [SteamMain("LP", 135.0, 60.0), SteamMain("CW", 25.0, 5.0, MainKind.COOLING)]
    s = site_targets(hand_zones(), mains, 10)
    lp, cw = s.mains
    assert lp.main.name == "LP" and cw.main.name == "CW"          # hottest first
    assert lp.raised == pytest.approx(1000.0) and lp.used == pytest.approx(800.0)
    assert lp.recovered == pytest.approx(800.0) and lp.from_boilers == pytest.approx(0.0)
    assert lp.surplus == pytest.approx(200.0)
    assert lp.zones == {"A": pytest.approx((1000.0, 0.0)), "B": pytest.approx((0.0, 800.0))}
    assert cw.zone_by_zone_duty == pytest.approx(1000.0) and cw.site_duty == pytest.approx(200.0)
    assert s.zone_by_zone_hot_utility == pytest.approx(800.0)
    assert s.site_hot_utility == pytest.approx(0.0)
    assert s.site_cold_utility == pytest.approx(200.0)
    assert s.saving == pytest.approx(800.0)
    assert s.zone_by_zone_cost == pytest.approx(53_000.0)
    assert s.site_cost == pytest.approx(1_000.0)
    assert s.saving_money == pytest.approx(52_000.0)
    frame = s.to_frame()
    assert frame["name"].tolist() == ["LP", "CW"] and frame["recovered"].tolist() == pytest.approx([800.0, 0.0])
    d = s.to_dict()
    assert d["saving"]["duty"] == pytest.approx(800.0) and d["saving"]["money_per_year"] == pytest.approx(52_000.0)
    assert d["zones"][0]["mains"]["LP"] == {"raised": 1000.0, "used": 0.0, "net_export": 1000.0}
    assert d["zones"][1]["mains"]["LP"]["net_export"] == pytest.approx(-800.0)


@pytest.mark.parametrize("dt_site, saving", [
    # with an extra 4 K: A's steam up to 150.5-1-10-4 = 135.5 °C >= 135 still; B's from 119.5+1+10+4 =
    # 134.5 °C <= 135 still: saving 800 kW.  With 6 K: A can raise steam only up to 133.5 °C < 135 and B
    # needs it from 136.5 °C > 135: nothing is exchanged.
    (4.0, 800.0),
    (6.0, 0.0),
])
def test_hand_site_dt(dt_site, saving):
    s = site_targets(hand_zones(), [SteamMain("LP", 135.0)], 10, dt_site=dt_site)
    assert s.saving == pytest.approx(saving, abs=1e-9)
    assert s.site_hot_utility == pytest.approx(800.0 - saving, abs=1e-9)


def test_hand_letdown_goes_down_only():
    # Zone A condenses at 215 °C (1000 kW), zone B boils at 110 °C (800 kW); mains HP 200 °C, LP 130 °C.
    # A can raise HP steam (215 - 0.5 - 10 = 204.5 >= 200): 1000 kW into HP, none left for LP.
    # B needs steam from 110.5 + 10 = 120.5 °C: LP (coldest first) serves all 800 kW.
    # Cascade: HP has 1000 kW, no user: 1000 kW let down to LP; LP recovers 800, surplus 200.
    a = table(("condenser", 215.5, 214.5, 1000.0))
    b = table(("reboiler", 109.5, 110.5, 800.0))
    s = site_targets({"A": a, "B": b}, [SteamMain("HP", 200.0), SteamMain("LP", 130.0)], 10)
    hp, lp = s.mains
    assert (hp.raised, hp.used, hp.letdown_out) == pytest.approx((1000.0, 0.0, 1000.0))
    assert (lp.raised, lp.used, lp.letdown_in, lp.recovered, lp.surplus) == pytest.approx(
        (0.0, 800.0, 1000.0, 800.0, 200.0))
    assert s.saving == pytest.approx(800.0)
    # Reversed: A condenses at 140 °C, so its steam is at most 139.5 - 10 = 129.5 °C: LP (125 °C) only,
    # 1000 kW.  B boils at 180 °C and needs steam from 180.5 + 10 = 190.5 °C: HP (200 °C) only, 800 kW.
    # Steam cannot flow up: nothing recovered, HP comes from the boilers, LP's 1000 kW has no user.
    a = table(("condenser", 140.5, 139.5, 1000.0))
    b = table(("reboiler", 179.5, 180.5, 800.0))
    s = site_targets({"A": a, "B": b}, [SteamMain("HP", 200.0), SteamMain("LP", 125.0)], 10)
    hp, lp = s.mains
    assert lp.raised == pytest.approx(1000.0) and hp.used == pytest.approx(800.0)
    assert hp.from_boilers == pytest.approx(800.0) and s.saving == pytest.approx(0.0)
    assert lp.surplus == pytest.approx(1000.0)


def test_pocket_is_recovered_inside_the_zone():
    # One zone, ΔTmin 10 K: cold C1 100 -> 200 °C (CP 1), hot H1 190 -> 150 °C (CP 2).
    # Shifted: C1 105..205, H1 185..145.  Intervals 205-185: -20 kW; 185-145: +40; 145-105: -40.
    # Cascade from 0: -20, +20, -20 -> hot utility 20 kW; heat flow 20 (205), 0 (185), 40 (145), 0 (105).
    # The GCC below 185 shifted is a pocket: 40 kW released by H1 heat C1 below it.  Sink profile (pockets
    # removed): 0 up to 185 shifted, 20 kW at 205 -> on the utility scale (+5 K) 0 up to 190 °C, 20 at 210.
    z = table(("C1", 100, 200, 1.0), ("H1", 190, 150, 2.0))
    t = target(z, 10)
    assert t.hot_utility == pytest.approx(20.0) and t.cold_utility == pytest.approx(0.0)
    source, sink = zone_profiles(t)
    assert sink.temperature.tolist() == pytest.approx([190.0, 210.0])
    assert sink.enthalpy.tolist() == pytest.approx([0.0, 20.0])
    assert np.all(source.enthalpy == 0.0)
    # A main inside the pocket (150 °C) serves nothing; one above it (215 °C) serves the 20 kW.
    other = table(("condenser", 240.5, 239.5, 500.0), prefix="x")
    s = site_targets({"Z": z, "other": other}, [SteamMain("M", 150.0), SteamMain("H", 215.0)], 10)
    m = {b.main.name: b for b in s.mains}
    assert m["M"].used == pytest.approx(0.0)
    assert m["H"].used == pytest.approx(20.0) and m["H"].recovered == pytest.approx(20.0)


def test_remove_pockets_on_both_sides():
    # GCC by hand (shifted T ascending, heat flow): a pocket below the pinch at 100 (60 -> 30 -> 50 -> 0) and
    # one above it (0 -> 150 -> 100 -> 180).
    # Source R(T) = min of the curve at or below T: 100, 60, 30 at 20, 40, 60 °C; stays 30 across the pocket
    # until the line 50 -> 0 (80..100) falls through 30 at 80 + 20*(20/50) = 88; 0 from 100 up.
    # Sink S(T) = min at or above T: 0 up to 100; the line 0 -> 150 (100..130) rises through 100 (the
    # minimum above 130) at 100 + 30*(100/150) = 120; 100 across the pocket up to 150; 180 at 170.
    t = np.array([20.0, 40.0, 60.0, 80.0, 100.0, 130.0, 150.0, 170.0])
    h = np.array([100.0, 60.0, 30.0, 50.0, 0.0, 150.0, 100.0, 180.0])
    sink, source = remove_pockets(Curve(t, h, "gcc"))
    assert source.temperature.tolist() == pytest.approx([20, 40, 60, 80, 88, 100, 130, 150, 170])
    assert source.enthalpy.tolist() == pytest.approx([100, 60, 30, 30, 30, 0, 0, 0, 0])
    assert sink.temperature.tolist() == pytest.approx([20, 40, 60, 80, 100, 120, 130, 150, 170])
    assert sink.enthalpy.tolist() == pytest.approx([0, 0, 0, 0, 0, 100, 100, 100, 180])


def test_composite_profile_sums_zones():
    a = Curve(np.array([100.0, 120.0]), np.array([0.0, 50.0]), "a")
    b = Curve(np.array([110.0, 130.0]), np.array([0.0, 20.0]), "b")
    c = composite_profile([a, b], "sum")
    # at 115 °C: a = 37.5, b = 5 -> 42.5 (linear interpolation of each, by hand)
    assert np.interp(115.0, c.temperature, c.enthalpy) == pytest.approx(42.5)
    assert c.enthalpy[-1] == pytest.approx(70.0)


# ---------------------------------------------------------------------------------------------------------
# published problems


@pytest.mark.parametrize("name, published_hot, published_cold", [
    # Ray & Das, ch. 5, Problem 5.1 (ΔTmin 20 K): 90 kW hot, 255 kW cold
    ("targeting_ray_das_problem_5_1", 90.0, 255.0),
    # Ray & Das, ch. 5, Problem 5.4 (ΔTmin 10 K): 62.5 kW hot, 45 kW cold
    ("targeting_ray_das_problem_5_4", 62.5, 45.0),
    # Sinnott, C&R Vol. 6, ch. 3, Table 3.6 (ΔTmin 10 K): 50 kW hot, 30 kW cold
    ("targeting_sinnott_four_stream", 50.0, 30.0),
])
def test_single_zone_site_is_the_zone(name, published_hot, published_cold):
    data, streams = load_reference(name)
    lo = min(min(s.supply_temperature, s.target_temperature) for s in streams)
    hi = max(max(s.supply_temperature, s.target_temperature) for s in streams)
    for temps in ([], [0.5 * (lo + hi)], list(np.linspace(lo, hi, 7)[1:-1])):
        mains = [SteamMain(f"M{k}", float(t)) for k, t in enumerate(temps)]
        s = site_targets({"only": streams}, mains, data["dtmin"])
        assert s.site_hot_utility == pytest.approx(published_hot)
        assert s.site_cold_utility == pytest.approx(published_cold)
        assert s.saving == pytest.approx(0.0, abs=1e-9)
        assert s.zones[0].hot_utility == pytest.approx(published_hot)


@pytest.mark.parametrize("name, split", [
    ("targeting_ray_das_problem_5_1", ({"1", "3"}, {"2", "4"})),
    ("targeting_ray_das_problem_5_1", ({"1", "4"}, {"2", "3"})),
    ("targeting_ray_das_problem_5_4", ({"1", "3"}, {"2", "4"})),
    ("targeting_ray_das_problem_5_4", ({"1", "2"}, {"3", "4"})),
    ("targeting_sinnott_four_stream", ({"1", "4"}, {"2", "3"})),
])
def test_halves_never_beat_direct_integration(name, split):
    # Any exchange through steam mains is a network of the whole problem with two approaches of at least
    # ΔTmin in series, so the site's hot utility can never fall below the whole problem's target (the
    # published value, Ray & Das ch. 5 / Sinnott Table 3.6), nor rise above the sum of the halves alone.
    data, streams = load_reference(name)
    dt = data["dtmin"]
    whole = target(streams, dt)
    assert whole.hot_utility == pytest.approx(data["published"]["hot_utility_kW"])
    zones = [Zone(f"half {k}", StreamTable([streams[n] for n in names])) for k, names in enumerate(split)]
    lo = min(min(s.supply_temperature, s.target_temperature) for s in streams)
    hi = max(max(s.supply_temperature, s.target_temperature) for s in streams)
    for n in (1, 3, 12, 40):
        mains = [SteamMain(f"M{k}", float(t)) for k, t in enumerate(np.linspace(lo, hi, n + 2)[1:-1])]
        for dt_site in (0.0, 5.0):
            s = site_targets(zones, mains, dt, dt_site=dt_site)
            assert s.site_hot_utility >= whole.hot_utility - 1e-9
            assert s.site_hot_utility <= s.zone_by_zone_hot_utility + 1e-9
            assert s.site_cold_utility >= whole.cold_utility - 1e-9


def test_zones_keep_their_own_dt_min():
    data, streams = load_reference("targeting_ray_das_problem_5_1")
    other = table(("H", 200, 100, 1.0), prefix="x")
    s = site_targets([Zone("book", streams, 20.0), Zone("other", other)], [SteamMain("M", 120.0)], 10)
    assert s.zones[0].dt_min == 20.0 and s.zones[1].dt_min == 10.0
    assert s.zones[0].hot_utility == pytest.approx(90.0)  # Ray & Das Problem 5.1 at 20 K


# ---------------------------------------------------------------------------------------------------------
# properties on invented random sites


@st.composite
def sites(draw):
    n_zones = draw(st.integers(1, 3))
    zones = []
    for z in range(n_zones):
        rows = []
        for i in range(draw(st.integers(1, 5))):
            a = draw(st.integers(20, 300))
            b = draw(st.integers(20, 300).filter(lambda x, a=a: x != a))
            rows.append((f"S{i}", a, b, draw(st.integers(1, 100)) / 10))
        zones.append(Zone(f"Z{z}", table(*rows, prefix=f"z{z}."), draw(st.sampled_from([None, 5.0, 20.0]))))
    streams = [s for z in zones for s in z.streams]
    hot_max = max((max(s.supply_temperature, s.target_temperature) for s in streams if s.is_hot), default=-1e9)
    cold_min = min((min(s.supply_temperature, s.target_temperature) for s in streams if not s.is_hot),
                   default=1e9)
    # levels from 15 to 305 °C that some stream could use (hotter than a cold stream's start or colder than
    # a hot stream's top)
    levels = sorted({t for t in draw(st.lists(st.integers(15, 305), max_size=4)) if t < hot_max or t > cold_min},
                    reverse=True)
    mains = [SteamMain(f"M{k}", float(t), draw(st.sampled_from([None, 50.0]))) for k, t in enumerate(levels)]
    if levels and min(levels) - 1 < hot_max and draw(st.booleans()):
        mains.append(SteamMain("CW", float(min(levels) - 1), 5.0, MainKind.COOLING))
    return zones, mains, draw(st.sampled_from([10.0, 0.0])), draw(st.sampled_from([0.0, 3.0]))


@SETTINGS
@given(sites())
def test_site_invariants(case):
    zones, mains, dt, dt_site = case
    s = site_targets(zones, mains, dt, dt_site=dt_site)
    tol = 1e-7 * (1 + sum(st.duty for z in zones for st in z.streams))
    # never worse than zone by zone
    assert s.site_hot_utility <= s.zone_by_zone_hot_utility + tol
    assert s.site_hot_utility >= -tol and s.site_cold_utility >= -tol
    # the site's hot utility is the fuel needed above the mains plus the steam from boilers
    assert s.site_hot_utility == pytest.approx(s.fuel_above_mains + s.boiler_steam, abs=tol)
    # energy balance: hot - cold utility = cold process duty - hot process duty, summed over zones
    net = sum(sum(x.duty for x in z.streams.cold) - sum(x.duty for x in z.streams.hot) for z in zones)
    assert s.site_hot_utility - s.site_cold_utility == pytest.approx(net, abs=tol)
    # each zone: what it raises and what it uses never exceed its own utilities; the rest is reported
    for z in s.zones:
        assert sum(z.raised.values()) + z.below_mains == pytest.approx(z.cold_utility, abs=tol)
        assert sum(z.used.values()) + z.above_mains == pytest.approx(z.hot_utility, abs=tol)
        assert min([*z.raised.values(), *z.used.values(), 0.0]) >= -tol
    # the cascade of mains: steam only goes down, recovery never exceeds use, nothing negative
    for b in s.mains:
        assert b.recovered <= b.used + tol and b.from_boilers >= -tol and b.letdown_out >= -tol
        assert b.recovered + b.from_boilers == pytest.approx(b.used, abs=tol)
    steam = [b for b in s.mains if b.main.is_steam]
    for upper, lower in zip(steam, steam[1:]):
        assert upper.letdown_out == pytest.approx(lower.letdown_in, abs=tol)
    # the site profiles end at the summed utilities
    if s.sink_profile.enthalpy.size:
        assert s.sink_profile.enthalpy.max() == pytest.approx(s.zone_by_zone_hot_utility, abs=tol)
    if s.source_profile.enthalpy.size:
        assert s.source_profile.enthalpy.max() == pytest.approx(s.zone_by_zone_cold_utility, abs=tol)
    # the zones' order does not matter
    again = site_targets(list(reversed(zones)), mains, dt, dt_site=dt_site)
    assert again.site_hot_utility == pytest.approx(s.site_hot_utility, abs=tol)


@SETTINGS
@given(sites())
def test_site_never_beats_direct_integration(case):
    zones, mains, dt, dt_site = case
    zones = [Zone(z.name, z.streams) for z in zones]      # one ΔTmin for the comparison
    s = site_targets(zones, mains, dt, dt_site=dt_site)
    whole = target(StreamTable([x for z in zones for x in z.streams]), dt)
    assert s.site_hot_utility >= whole.hot_utility - 1e-7 * (1 + whole.table.duty_scale)


@SETTINGS
@given(sites())
def test_one_zone_is_its_own_target(case):
    zones, mains, dt, dt_site = case
    z = zones[0]
    hot_max = max((max(x.supply_temperature, x.target_temperature) for x in z.streams if x.is_hot), default=-1e9)
    cold_min = min((min(x.supply_temperature, x.target_temperature) for x in z.streams if not x.is_hot),
                   default=1e9)
    mains = [m for m in mains if m.is_steam and (m.temperature < hot_max or m.temperature > cold_min)]
    s = site_targets([z], mains, dt, dt_site=dt_site)
    t = target(z.streams, z.dt_min if z.dt_min is not None else dt)
    assert s.site_hot_utility == pytest.approx(t.hot_utility, abs=1e-9 * (1 + t.table.duty_scale))
    assert s.site_cold_utility == pytest.approx(t.cold_utility, abs=1e-9 * (1 + t.table.duty_scale))


@SETTINGS
@given(sites())
def test_pocket_free_profiles_bound_the_grand_composite(case):
    zones, _, dt, _ = case
    t = target(zones[0].streams, dt)
    g = t.grand_composite()
    sink, source = remove_pockets(g)
    tol = 1e-9 * (1 + t.table.duty_scale)
    for c in (sink, source):
        assert np.all(np.interp(g.temperature, c.temperature, c.enthalpy) <= g.enthalpy + tol)
    assert np.all(np.diff(sink.enthalpy) >= -tol) and np.all(np.diff(source.enthalpy) <= tol)
    assert sink.enthalpy[-1] == pytest.approx(t.hot_utility, abs=tol)
    assert source.enthalpy[0] == pytest.approx(t.cold_utility, abs=tol)


# ---------------------------------------------------------------------------------------------------------
# errors


def test_main_errors():
    with pytest.raises(InputError, match=r"row 4, column 'T': main 'LP': temperature must be a finite"):
        SteamMain("LP", math.nan, row=4)
    with pytest.raises(InputError, match=r"price must be a finite number >= 0 .* got -3"):
        SteamMain("LP", 130.0, -3.0)
    with pytest.raises(InputError, match="kind must be 'steam' or 'cooling', got 'vapour'"):
        SteamMain("LP", 130.0, kind="vapour")
    with pytest.raises(InputError, match="a main needs a name"):
        SteamMain(" ", 130.0)
    assert SteamMain("CW", 25.0, kind="Cooling").kind is MainKind.COOLING


def test_check_mains_errors():
    with pytest.raises(InputError, match=r"row 3, column 'name': main name 'LP' is used twice"):
        check_mains([SteamMain("LP", 130.0), SteamMain("LP", 140.0, row=3)])
    with pytest.raises(InputError, match=r"steam mains 'A' and 'B' are both at 130 °C"):
        check_mains([SteamMain("A", 130.0), SteamMain("B", 130.0)])
    with pytest.raises(InputError, match=r"cooling main 'CW' at 150 °C is not below every steam main \(coldest "
                                         r"steam main at 130 °C\)"):
        check_mains([SteamMain("LP", 130.0), SteamMain("CW", 150.0, kind=MainKind.COOLING)])
    # every cold stream (150 -> 160 °C) lies above every hot one (100 -> 90 °C): a main at 120 °C can
    # neither receive nor give heat
    site = [table(("H", 100, 90, 1.0)), table(("C", 150, 160, 1.0))]
    with pytest.raises(InputError, match=r"row 2, column 'T': steam main 'M' at 120 °C is outside the site's "
                                         r"range: the hottest hot stream reaches 100 °C and the coldest cold "
                                         r"stream starts at 150 °C"):
        check_mains([SteamMain("M", 120.0, row=2)], site)
    with pytest.raises(InputError, match=r"cooling main 'CW' at 100 °C is outside the site's range: the site's "
                                         r"hottest hot stream reaches 100 °C"):
        check_mains([SteamMain("CW", 100.0, kind=MainKind.COOLING)], site)
    # a main above every process temperature still serves the cold streams, one below them takes heat
    assert len(check_mains([SteamMain("HP", 250.0), SteamMain("LP", 60.0)], site)) == 2


def test_steam_only_between_triple_and_critical_point():
    # IAPWS R6-95(2018): critical temperature 647.096 K = 373.946 °C, triple point 273.16 K = 0.01 °C
    with pytest.raises(InputError, match=r"steam main 'SH' at 400 °C: saturated steam exists only between "
                                         r"water's triple point \(0.01 °C\) and critical point \(373.946 °C\)"):
        SteamMain("SH", 400.0)
    assert SteamMain("VHP", 373.0).temperature == 373.0
    assert SteamMain("chilled", -5.0, kind=MainKind.COOLING).temperature == -5.0


def test_site_errors():
    z = hand_zones()
    with pytest.raises(InputError, match="a site needs at least one zone"):
        site_targets({}, [], 10)
    with pytest.raises(InputError, match="zone name 'A' is used twice"):
        site_targets([Zone("A", z["A"]), Zone("A", z["B"])], [], 10)
    with pytest.raises(InputError, match=r"ΔTmin must be a finite number >= 0 K, got -1"):
        site_targets(z, [], -1)
    with pytest.raises(InputError, match=r"site ΔT for steam raising and use must be .* got nan"):
        site_targets(z, [], 10, dt_site=math.nan)
    with pytest.raises(InputError, match=r"zone 'A': ΔTmin must be a finite number >= 0 K, got -5"):
        Zone("A", z["A"], -5.0)
    far = {"H": table(("H", 100, 90, 1.0)), "C": table(("C", 150, 160, 1.0))}
    with pytest.raises(InputError, match=r"steam main 'M' at 120 °C is outside the site's range"):
        site_targets(far, [SteamMain("M", 120.0)], 10)
