"""A network written by ``design`` is a network table (issue 14, item 16): written, read back, resolved.

The units frame of a design (:meth:`heatloom.network.Network.to_frame`, the agreed columns ``unit, role, hot,
cold, duty, area, U, LMTD, F, shells, area per shell, type, hot_order, cold_order, hot in/out, cold in/out,
hot/cold fraction, cost``) is written with the project's writer (CSV and XLSX, :class:`OutputDirectory`),
read with :func:`read_network` and resolved into an :class:`ExistingNetwork`.

Problem: the two-hot / two-cold-stream problem of Yee & Grossmann (1990), data from Linnhoff et al. (1982), as
given by Roetzel, Luo & Chen (2020), *Design and Operation of Heat Exchangers and their Networks*, ch. 6,
Table 6.16 (tests/data/references/synthesis_yee_grossmann_2h2c.json).  Its minimum utilities at ΔTmin 10 K,
computed by hand with the problem table algorithm (Linnhoff & Flower 1978) on those data (shifted interval
surpluses +600, +25, −825, +750, −150 kW; cascade 600, 625, −200, 550, 400 kW): hot 200 kW, cold 600 kW.
"""

from __future__ import annotations

import pytest
from refdata import load_reference, reference_utilities

from heatloom.errors import InputError
from heatloom.io.export import OutputDirectory
from heatloom.io.network_table import read_network
from heatloom.model.existing import OperatingMode, UnitRole
from heatloom.network import design_mer
from heatloom.retrofit.existing import ExistingNetwork
from heatloom.retrofit.simulate import simulate

AGREED = ["unit", "role", "hot", "cold", "duty [kW]", "area [m²]", "U [kW/(m²·K)]", "LMTD [K]", "F [-]", "shells",
          "area per shell [m²]", "type", "hairpins", "hot_order", "cold_order", "hot in [°C]", "hot out [°C]", "cold in [°C]",
          "cold out [°C]", "hot fraction [-]", "cold fraction [-]", "hot_branch", "hot_branch_order", "cold_branch",
          "cold_branch_order"]


@pytest.fixture(scope="module")
def problem():
    data, streams = load_reference("synthesis_yee_grossmann_2h2c")
    utilities = reference_utilities(data)
    return streams, utilities, design_mer(streams, 10.0, utilities)


def written(tmp_path, frame):
    out = OutputDirectory(tmp_path / "design")
    return out.csv("design_units.csv", frame), out.workbook("design.xlsx", {"units": frame})


def test_design_frame_has_the_agreed_columns(problem):
    frame = problem[2].to_frame()
    assert list(frame.columns[:len(AGREED)]) == AGREED
    assert frame.columns[len(AGREED)].startswith("cost [")


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
def test_design_units_read_back_as_an_existing_network(tmp_path, problem, kind):
    streams, utilities, design = problem
    frame = design.to_frame()
    assert (frame["hot fraction [-]"] == 1).all() and (frame["cold fraction [-]"] == 1).all()   # no split
    csv_path, xlsx_path = written(tmp_path, frame)
    notes: list[str] = []
    table = read_network(csv_path, notes=notes) if kind == "csv" else read_network(xlsx_path, sheet="units",
                                                                                    notes=notes)
    assert notes == []                      # every column of the design table is known
    net = ExistingNetwork.from_table(streams, table, utilities)
    assert [u.name for u in net.units] == frame["unit"].tolist()
    for row, unit in zip(frame.itertuples(index=False), net.units):
        assert unit.role is UnitRole(row.role) and unit.stated_role is unit.role
        assert unit.duty == pytest.approx(row[4], abs=1e-3)        # written to 0.001 kW
        assert unit.area == pytest.approx(row[5], abs=1e-3)        # written to 0.001 m²
        assert unit.u == pytest.approx(row[6], rel=1e-12)
    # the designed network at its written areas does what the design says: the hand-computed targets
    sim = simulate(net)
    assert sim.hot_utility == pytest.approx(200.0, rel=1e-4)
    assert sim.cold_utility == pytest.approx(600.0, rel=1e-4)
    for row in frame.itertuples(index=False):
        assert sim.unit(row.unit).duty == pytest.approx(row[4], rel=1e-4)
    assert {u.mode for u in net.units if u.role is not UnitRole.EXCHANGER} == {OperatingMode.TRIM}


def test_a_role_the_sides_contradict_is_refused(tmp_path, problem):
    streams, utilities, design = problem
    frame = design.to_frame()
    frame.loc[0, "role"] = "heater"
    csv_path, _ = written(tmp_path, frame)
    with pytest.raises(InputError, match=r"design_units\.csv, row 2, column 'role': unit 'X1' is stated as a "
                                         r"heater but joins 'H1' and 'C2', which makes it an exchanger"):
        ExistingNetwork.from_table(streams, read_network(csv_path), utilities)
    frame.loc[0, "role"] = "boiler"
    csv_path, _ = written(tmp_path / "b", frame)
    with pytest.raises(InputError, match=r"row 2, column 'role': unknown role 'boiler'; allowed: exchanger, heater, "
                                         r"cooler"):
        read_network(csv_path)
