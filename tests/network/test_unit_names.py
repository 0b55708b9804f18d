"""Unit names of a network (X1…, HU-1…, CU-1…) and its units table (the network-table columns).

Published problems: Sinnott, Coulson & Richardson's Chemical Engineering Vol. 6, ch. 3, Table 3.6 (the
four-stream example) and the two-hot / two-cold problem of Yee & Grossmann (1990) as given by Roetzel, Luo &
Chen (2020), ch. 6, Table 6.16 (tests/data/references/).  The film coefficient 0.5 kW/(m²·K) is invented.
"""

from __future__ import annotations

import json
from dataclasses import replace

import pandas as pd
import pytest
from refdata import load_reference, reference_utilities

from heatloom.model import StreamTable
from heatloom.network import check_network, design_mer
from heatloom.network.structure import FRAME_COLUMNS, Cooler, Exchanger, Heater, Network, name_units

AGREED = ["unit", "role", "hot", "cold", "duty [kW]", "area [m²]", "U [kW/(m²·K)]", "LMTD [K]", "F [-]", "shells",
          "area per shell [m²]", "type", "hairpins", "hot_order", "cold_order", "hot in [°C]", "hot out [°C]", "cold in [°C]",
          "cold out [°C]", "hot fraction [-]", "cold fraction [-]", "hot_branch", "hot_branch_order", "cold_branch",
          "cold_branch_order"]


def units_of(net):
    return [*net.exchangers, *net.heaters, *net.coolers]


@pytest.fixture(scope="module")
def sinnott():
    return load_reference("targeting_sinnott_four_stream")[1]


@pytest.fixture(scope="module")
def design(sinnott):
    return design_mer(sinnott, 10, default_film_coefficient=0.5)


def test_every_unit_of_a_design_has_a_name_of_our_scheme(design):
    names = [u.name for u in units_of(design)]
    assert len(set(names)) == len(names) == design.units
    assert sorted(u.name for u in design.exchangers) == sorted(f"X{k}" for k in range(1, len(design.exchangers) + 1))
    assert sorted(u.name for u in design.heaters) == sorted(f"HU-{k}" for k in range(1, len(design.heaters) + 1))
    assert sorted(u.name for u in design.coolers) == sorted(f"CU-{k}" for k in range(1, len(design.coolers) + 1))
    data = json.loads(json.dumps(design.to_dict()))
    assert [e["name"] for e in data["exchangers"]] == [u.name for u in design.exchangers]
    assert [h["name"] for h in data["heaters"]] == [u.name for u in design.heaters]
    assert sorted(design.to_frame()["unit"]) == sorted(names)


def test_names_never_meet_stream_or_utility_names(sinnott):
    # the published streams renamed like our units: X1, X2, HU-1, CU-1
    renamed = dict(zip([s.name for s in sinnott], ["X1", "X2", "HU-1", "CU-1"]))
    streams = StreamTable(tuple(replace(s, name=renamed[s.name]) for s in sinnott))
    net = design_mer(streams, 10, default_film_coefficient=0.5)
    check_network(net, streams)
    taken = {s.name for s in streams} | {getattr(u, "utility", None) for u in units_of(net)}
    names = [u.name for u in units_of(net)]
    assert len(set(names)) == len(names) and not set(names) & taken
    # deterministic: the same network gets the same names
    again = design_mer(streams, 10, default_film_coefficient=0.5)
    assert [u.name for u in units_of(again)] == names
    assert "X1a" in names and "X2a" in names


def test_name_units_suffixes_clashes_and_keeps_given_names():
    e1 = Exchanger("X1", "C", 10.0, 150, 140, 40, 50)             # stream named X1
    e2 = Exchanger("H", "C", 10.0, 140, 130, 50, 60, stage=1, name="X2")
    e3 = Exchanger("H", "C", 10.0, 130, 120, 60, 70, stage=2)
    h = Heater("C", "HU-1", 10.0, 70, 80, 180, 179)                # a utility named HU-1
    c1 = Cooler("H", "CU", 10.0, 120, 110, 20, 30, name="E-7")
    c2 = Cooler("H", "CU", 10.0, 110, 100, 20, 30, stage=1, name="E-7")   # the same tag twice
    ex, he, co = name_units([e1, e2, e3], [h], [c1, c2])
    assert [u.name for u in ex] == ["X1a", "X2", "X3"]             # X2 kept, the clash with stream X1 lettered
    assert he[0].name == "HU-1a"
    assert [u.name for u in co] == ["E-7", "E-7a"]
    # units compare equal whatever their names (names are labels, not part of the physics)
    assert ex[2] == e3 and ex[2].name != e3.name


def test_units_are_numbered_left_to_right_on_the_grid():
    a = Exchanger("H", "C", 10.0, 150, 140, 40, 50, stage=2)
    b = Exchanger("H", "C", 10.0, 160, 150, 50, 60, stage=0)
    below = Exchanger("H", "C", 10.0, 80, 70, 20, 30, stage=0, region="below")
    net = Network((a, below, b), (), (), 10.0)
    assert [u.name for u in net.exchangers] == ["X2", "X3", "X1"]
    assert list(net.to_frame()["unit"]) == ["X1", "X2", "X3"]


def test_units_table_has_the_agreed_columns(design):
    frame = design.to_frame()
    assert list(frame.columns) == AGREED + [f"cost [{design.currency}/year]"]
    assert tuple(AGREED) == FRAME_COLUMNS[:-1]
    assert design.currency and "money" not in frame.columns[-1]
    nameless = Network(design.exchangers, design.heaters, design.coolers, design.dt_min)
    assert nameless.to_frame().columns[-1] == "cost [money/year]"
    rows = {r["unit"]: r for r in frame.to_dict("records")}
    for u in units_of(design):
        r = rows[u.name]
        assert r["duty [kW]"] == u.duty and r["area [m²]"] == u.area and r["U [kW/(m²·K)]"] == u.u
        assert r["LMTD [K]"] == u.lmtd
        assert r["type"] == "counter-current" and r["shells"] == 1 and r["area per shell [m²]"] == u.area
        # Q = U·A·LMTD, the definition of the effective LMTD (common practice)
        assert u.duty == pytest.approx(u.u * u.area * u.lmtd, rel=1e-9)
    roles = frame["role"].tolist()
    assert roles == ["exchanger"] * len(design.exchangers) + ["heater"] * len(design.heaters) + \
        ["cooler"] * len(design.coolers)


def test_shell_and_tube_units_report_shells_f_and_area_per_shell(sinnott):
    net = design_mer(sinnott, 10, default_film_coefficient=0.5, exchanger_type="shell_and_tube_1_2")
    frame = net.to_frame()
    assert set(frame["type"]) == {"1-2"}
    for r in frame.to_dict("records"):
        assert r["area per shell [m²]"] == pytest.approx(r["area [m²]"] / r["shells"], rel=1e-12)
        assert 0.75 <= r["F [-]"] <= 1.0          # F ≥ 0.75 is the usual design floor (common practice)


def test_positions_along_the_streams_follow_the_temperatures():
    # Yee & Grossmann 2h2c (Roetzel, Luo & Chen 2020, Table 6.16) designed for maximum energy recovery
    data, streams = load_reference("synthesis_yee_grossmann_2h2c")
    net = design_mer(streams, 10.0, reference_utilities(data))
    frame = net.to_frame()
    for s in streams:
        side = "hot" if s.is_hot else "cold"
        on = frame[frame[side] == s.name].sort_values(f"{side}_order")
        assert on[f"{side}_order"].tolist() == list(range(1, len(on) + 1))
        inlets = on[f"{side} in [°C]"].tolist()
        # from the supply end: a hot stream cools, a cold stream warms, unit after unit
        assert inlets == sorted(inlets, reverse=s.is_hot)
        assert inlets[0] == pytest.approx(s.supply_temperature)
    # the utility side has no position
    assert frame.loc[frame["role"] == "heater", "hot_order"].isna().all()
    assert frame.loc[frame["role"] == "cooler", "cold_order"].isna().all()
    assert frame["hot_order"].dtype == pd.Int64Dtype()

