"""ΔTmin sweeps (heatloom.studies.sweep): targets at every point, breakpoints, the optimum, executors.

Sources named beside each use: published stream data of tests/data/references/ (Sinnott, Coulson &
Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6; the three hot / four cold problem of Colberg &
Morari 1990 as printed by Roetzel, Luo & Chen 2020, ch. 6, Table 6.23, with its utilities; the two hot /
two cold problem of Yee & Grossmann 1990, Roetzel, Luo & Chen 2020, Table 6.16). Film coefficients
where the sources give none, and every cost law, are invented for the tests. Energy targets are
piecewise linear in ΔTmin with breakpoints where the pinch changes (Linnhoff & Ahmad 1990); a hand
calculation gives one breakpoint exactly; the optimum is compared with a brute-force 0.01 K grid.
"""

import dataclasses
import json
import sys

import numpy as np
import pytest

from heatloom.errors import InfeasibleError, InputError
from heatloom.io.export import to_jsonable
from heatloom.model import CostLaw, CostSettings, Stream, StreamTable
from heatloom.network import design_mer
from heatloom.pinch import target
from heatloom.pinch.area import area_targets
from heatloom.studies.sweep import MAX_POINTS, Sweep, sweep, sweep_point

SINNOTT_COSTS = CostSettings(annualised=True, exchanger=CostLaw(1000.0, 300.0, 0.8))   # invented


def with_h(streams: StreamTable, h: float) -> StreamTable:
    return StreamTable(tuple(Stream(s.name, tuple(dataclasses.replace(g, film_coefficient=h) for g in s.segments))
                             for s in streams))


@pytest.fixture
def sinnott(reference):
    # Sinnott, C&R Vol. 6, ch. 3, Table 3.6 stream data; h = 0.1 kW/(m²·K) invented (gas-like, so that
    # capital matters and the optimum lies inside the range)
    return with_h(reference("targeting_sinnott_four_stream")[1], 0.1)


@pytest.fixture
def colberg_morari(reference):
    # Colberg & Morari 1990 data with their utilities and film coefficients (Roetzel, Luo & Chen 2020,
    # ch. 6, Table 6.23); temperatures in K in the file, °C here
    from refdata import reference_utilities

    data, streams = reference("synthesis_colberg_morari_3h4c")
    return streams, reference_utilities(data), CostSettings(annualised=True, exchanger=CostLaw(8600, 670, 0.83))


def canonical(result: Sweep) -> str:
    return json.dumps(to_jsonable(result.to_dict()), sort_keys=True)


# --------------------------------------------------------------------------------------------------
# every point is the targets at its ΔTmin


def test_points_equal_the_targets_at_their_dtmin(sinnott):
    r = sweep(sinnott, (2, 30), costs=SINNOTT_COSTS, step=1.0, workers=1)
    assert len([p for p in r.points if p.kind == "grid"]) == 29
    for p in r.points:
        t = target(sinnott, p.dt_min)
        assert (p.hot_utility, p.cold_utility) == (t.hot_utility, t.cold_utility)
        a = area_targets(t, SINNOTT_COSTS)
        assert (p.area, p.units, p.units_mer, p.total_annual_cost) == (a.area, a.units, a.units_mer,
                                                                        a.total_annual_cost)
    # Sinnott's published targets at 10 K: 50 kW hot, 30 kW cold (C&R Vol. 6, Table 3.6)
    ten = next(p for p in r.points if p.dt_min == 10)
    assert (ten.hot_utility, ten.cold_utility, ten.pinch_hot, ten.pinch_cold) == (50.0, 30.0, 90.0, 80.0)


def test_points_with_utilities_and_an_infeasible_stretch(colberg_morari):
    streams, utilities, costs = colberg_morari
    r = sweep(streams, (5, 45), utilities, costs, step=1.0, workers=1)
    feasible = [p for p in r.points if p.feasible]
    infeasible = [p for p in r.points if not p.feasible]
    assert feasible and infeasible
    for p in feasible:
        t = target(streams, p.dt_min, utilities)
        assert (p.hot_utility, p.cold_utility) == (t.hot_utility, t.cold_utility)
        assert p.energy_cost == pytest.approx(t.placement.annual_cost, rel=1e-12)
    for p in infeasible[:3] + infeasible[-2:]:
        with pytest.raises(InfeasibleError):
            target(streams, p.dt_min, utilities)
        assert "cold utility" in p.note or "hot utility" in p.note
    # the feasibility limit is one of the breakpoints, located to the resolution
    limit = [b for b in r.breakpoints if "feasibility" in b.changes]
    assert len(limit) == 1 and 0 < limit[0].high - limit[0].low <= 1e-3
    assert max(p.dt_min for p in feasible) == limit[0].low
    assert r.optimum.feasible and r.optimum.dt_min <= limit[0].low
    assert any("not feasible" in n for n in r.notes)


def test_breakpoint_located_by_hand():
    # Invented: hot 150 → 50 °C (CP 1), cold 40 → 140 °C (CP 2). The curves are closest at the cold end,
    # 50 − 40 = 10 K apart, so up to ΔTmin 10 K the problem needs hot utility only (100 kW); beyond, the
    # cold end pinches and Q_C = ΔTmin − 10, Q_H = 90 + ΔTmin (hand calculation); the cold utility adds
    # a unit.
    s = StreamTable.from_arrays(["H", "C"], [150, 40], [50, 140], [1.0, 2.0], film_coefficient=[0.5, 0.5])
    r = sweep(s, (2, 20), step=0.5, workers=1, resolution=1e-4)
    assert len(r.breakpoints) == 1
    b = r.breakpoints[0]
    assert b.low <= 10 <= b.high and b.high - b.low <= 1e-4
    assert {"units", "threshold"} <= set(b.changes)
    for p in r.points:
        expected = 100.0 if p.dt_min <= 10 else 90.0 + p.dt_min
        assert p.hot_utility == pytest.approx(expected, abs=1e-9)
        assert p.units == (2 if p.dt_min <= 10 else 3)


def test_energy_targets_are_linear_between_breakpoints(colberg_morari):
    # Piecewise linear with breakpoints where the pinch changes (Linnhoff & Ahmad 1990): inside each
    # stretch between the located breakpoints the hot utility lies on one straight line.
    streams, utilities, costs = colberg_morari
    r = sweep(streams, (2, 36), utilities, costs, step=0.5, workers=1)
    assert any("pinch" in b.changes for b in r.breakpoints)
    cuts = [b.high for b in r.breakpoints]
    edges = [-np.inf, *cuts, np.inf]
    for lo, hi in zip(edges, edges[1:]):
        run = [p for p in r.points if lo <= p.dt_min < hi and p.feasible]
        if len(run) < 3:
            continue
        x = np.array([p.dt_min for p in run])
        q = np.array([p.hot_utility for p in run])
        line = q[0] + (q[-1] - q[0]) * (x - x[0]) / (x[-1] - x[0])
        assert np.allclose(q, line, rtol=0, atol=1e-7 * max(1.0, np.abs(q).max()))


# --------------------------------------------------------------------------------------------------
# the optimum


def test_optimum_within_a_tenth_of_a_kelvin_of_brute_force(sinnott):
    lo, hi = 15.0, 30.0
    r = sweep(sinnott, (lo, hi), costs=SINNOTT_COSTS, step=0.5, workers=1)
    grid = np.round(np.arange(lo, hi + 1e-9, 0.01), 10)
    tac = np.array([sweep_point(sinnott, x, costs=SINNOTT_COSTS).total_annual_cost for x in grid])
    best = int(np.argmin(tac))
    assert lo + 1 < grid[best] < hi - 1, "the case must have an interior optimum"
    assert abs(r.optimum.dt_min - grid[best]) <= 0.1
    assert r.optimum.total_annual_cost <= tac[best] * (1 + 1e-9)
    assert r.optimum.kind == "optimum"
    assert r.optimum.total_annual_cost == sweep_point(sinnott, r.optimum.dt_min, costs=SINNOTT_COSTS).total_annual_cost


def test_optimum_at_the_end_of_the_range_is_said(sinnott):
    # default costs (energy dear, illustrative) push the optimum to the smallest ΔTmin swept
    r = sweep(with_h(sinnott, 0.5), (5, 12), step=1.0, workers=1)
    assert r.optimum.dt_min == 5.0
    assert any("end of the range" in n for n in r.notes)


# --------------------------------------------------------------------------------------------------
# designs beside the targets


def test_designs_beside_the_targets(reference):
    _, streams = reference("targeting_sinnott_four_stream")
    streams = with_h(streams, 0.5)
    r = sweep(streams, (5, 20), step=5.0, designs=[10.0], workers=1)
    (d,) = r.designs
    net = design_mer(streams, 10.0)
    assert d.error == ""
    assert (d.units, d.total_annual_cost) == (net.units, net.total_annual_cost)
    assert d.area == pytest.approx(sum(u.area for u in (*net.exchangers, *net.heaters, *net.coolers)))
    # the area target (uniform h streams; default utilities have other h) stays below the design here
    ten = next(p for p in r.points if p.dt_min == 10)
    assert ten.area < d.area


def test_failed_design_is_reported_not_raised(colberg_morari):
    streams, utilities, costs = colberg_morari
    r = sweep(streams, (5, 15), utilities, costs, step=5.0, designs=[50.0], workers=1)
    assert r.designs[0].error.startswith("InfeasibleError")
    assert np.isnan(r.designs[0].total_annual_cost)


# --------------------------------------------------------------------------------------------------
# executors


def test_serial_and_process_pool_agree(colberg_morari):
    streams, utilities, costs = colberg_morari
    kwargs = dict(step=1.0, designs=[10.0])
    serial = sweep(streams, (5, 40), utilities, costs, workers=1, **kwargs)
    pool = sweep(streams, (5, 40), utilities, costs, workers=2, **kwargs)
    assert canonical(serial) == canonical(pool)
    assert len(serial.breakpoints) >= 3


def test_local_dask_cluster_agrees(colberg_morari):
    distributed = pytest.importorskip("dask.distributed")
    streams, utilities, costs = colberg_morari
    kwargs = dict(step=1.0, designs=[10.0])
    serial = sweep(streams, (5, 40), utilities, costs, workers=1, **kwargs)
    with distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=2,
                                  dashboard_address=None) as cluster, distributed.Client(cluster) as client:
        dask = sweep(streams, (5, 40), utilities, costs, cluster=client, **kwargs)
    assert canonical(serial) == canonical(dask)


def test_cluster_without_dask_is_a_clear_error(monkeypatch, sinnott):
    monkeypatch.setitem(sys.modules, "dask.distributed", None)
    with pytest.raises(InputError, match=r"heatloom\[dask\]"):
        sweep(sinnott, (5, 10), costs=SINNOTT_COSTS, cluster="tcp://127.0.0.1:1")


def test_progress_is_reported(sinnott):
    calls = []
    sweep(sinnott, (5, 10), costs=SINNOTT_COSTS, step=1.0, workers=1, progress=lambda *a: calls.append(a))
    phases = [c[0] for c in calls]
    assert phases[0] == "targets" and "optimum" in phases
    last = [c for c in calls if c[0] == "targets"][-1]
    assert last[1] == last[2] == 1


# --------------------------------------------------------------------------------------------------
# refusals and shapes


def test_bad_arguments_are_refused(sinnott, reference):
    with pytest.raises(InputError, match="lowest ΔTmin must be a finite number > 0"):
        sweep(sinnott, (0, 10), workers=1)
    with pytest.raises(InputError, match="must be above the lowest"):
        sweep(sinnott, (10, 5), workers=1)
    with pytest.raises(InputError, match="step must be a finite number > 0"):
        sweep(sinnott, (5, 10), step=0, workers=1)
    with pytest.raises(InputError, match=f"at most {MAX_POINTS}"):
        sweep(sinnott, (1, 100), step=1e-3, workers=1)
    with pytest.raises(InputError, match="workers must be a whole number"):
        sweep(sinnott, (5, 10), workers=0)
    with pytest.raises(InputError, match="unknown capital basis"):
        sweep(sinnott, (5, 10), workers=1, capital_basis="rooms")
    with pytest.raises(InputError, match="design ΔTmin must be"):
        sweep(sinnott, (5, 10), workers=1, designs=[-3])
    _, bare = reference("targeting_sinnott_four_stream")
    with pytest.raises(InputError, match="film coefficient h missing for stream '1', stream '2'"):
        sweep(bare, (5, 10), workers=1)


def test_no_feasible_point_is_infeasible(reference):
    from refdata import reference_utilities

    # Yee & Grossmann 1990 data with their utilities (Roetzel, Luo & Chen 2020, Table 6.16): cooling water
    # from 20 °C cannot take the heat of H2 below about 30 °C once ΔTmin exceeds 10 K
    data, streams = reference("synthesis_yee_grossmann_2h2c")
    with pytest.raises(InfeasibleError, match="no ΔTmin from 15 to 20 K"):
        sweep(streams, (15, 20), reference_utilities(data), workers=1)


def test_result_shapes(sinnott):
    r = sweep(sinnott, (5, 10), costs=SINNOTT_COSTS, step=1.0, workers=1, capital_basis="shells")
    d = r.to_dict()
    for key in ("dtmin", "hot_utility", "cold_utility", "area", "units", "capital_cost", "energy_cost",
                "total_annual_cost"):
        assert key in d["points"][0]
    assert {"dtmin", "total_annual_cost"} <= set(d["optimum"])
    assert "shells" in r.basis and d["currency"] == "USD"
    frame = r.to_frame()
    assert len(frame) == len(r.points) and "area [m²]" in frame.columns
