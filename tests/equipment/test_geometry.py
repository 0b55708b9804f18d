"""Tests of heatloom.equipment.geometry: double-pipe and 1-2 shell-and-tube exchangers.

Reference library: ``ht`` from PyPI (Caleb Bell, ht.hx module); each check names the ht function.
Hand calculations say so.
"""

from __future__ import annotations

import math

import ht
import pytest

from heatloom.equipment.geometry import size_double_pipe, size_exchanger, size_shell_and_tube
from heatloom.errors import InputError, TemperatureCrossError
from heatloom.model.exchangers import ExchangerType

# --------------------------------------------------------------------------------------------------
# exchanger types


def test_double_pipe_geometry():
    # Q = 100 kW, U = 0.5, LMTD of (150→100, 30→80) = 70 K → A = 100/(0.5·70) = 2.857 m²;
    # d = 0.05 m, L = 4 m: area per hairpin π·0.05·8 = 1.2566 m² → 3 hairpins (hand calculation)
    d = size_double_pipe(100.0, 0.5, 150, 100, 30, 80, tube_diameter=0.05, hairpin_length=4.0)
    assert d.area == pytest.approx(100 / 35)
    assert d.area_per_hairpin == pytest.approx(math.pi * 0.05 * 8)
    assert d.hairpins == 3 and d.installed_area >= d.area
    assert d.tube_length == pytest.approx(d.area / (math.pi * 0.05))
    assert d.to_dict()["type"] == "double_pipe" and d.shells == 1
    assert size_exchanger("double_pipe", 100.0, 0.5, 150, 100, 30, 80, tube_diameter=0.05,
                          hairpin_length=4.0) == d


def test_shell_and_tube_geometry():
    s = size_shell_and_tube(1000.0, 0.5, 100, 50, 20, 70)
    assert s.shells == 2
    assert s.area == pytest.approx(1000.0 / (0.5 * s.f * 30.0), rel=1e-12)
    assert s.area_per_shell * s.shells == pytest.approx(s.area)
    assert s.f == pytest.approx(ht.F_LMTD_Fakheri(100, 50, 20, 70, shells=2), rel=1e-9)   # ht.F_LMTD_Fakheri
    assert s.to_dict()["design"]["shells"] == 2 and s.exchanger_type is ExchangerType.SHELL_AND_TUBE_1_2


def test_exchanger_type_registry():
    # one enum names every kind; the values are those of JSON/CSV files and must not change
    assert [k.value for k in ExchangerType] == ["counter_current", "co_current", "shell_and_tube_1_2", "double_pipe"]
    # a double pipe flows counter-current (common practice); the other kinds are their own flow pattern
    assert {k: k.flow_pattern for k in ExchangerType} == {
        ExchangerType.COUNTER_CURRENT: ExchangerType.COUNTER_CURRENT, ExchangerType.CO_CURRENT: ExchangerType.CO_CURRENT,
        ExchangerType.SHELL_AND_TUBE_1_2: ExchangerType.SHELL_AND_TUBE_1_2,
        ExchangerType.DOUBLE_PIPE: ExchangerType.COUNTER_CURRENT}
    assert {k for k in ExchangerType if k.has_geometry} == {ExchangerType.SHELL_AND_TUBE_1_2, ExchangerType.DOUBLE_PIPE}


@pytest.mark.parametrize("kind", list(ExchangerType))
def test_size_exchanger_sizes_exactly_the_kinds_with_a_geometry(kind):
    options = {"tube_diameter": 0.05, "hairpin_length": 4.0} if kind is ExchangerType.DOUBLE_PIPE else {}
    if kind.has_geometry:
        sized = size_exchanger(kind, 100.0, 0.5, 150, 100, 30, 80, **options)
        assert sized.exchanger_type is kind and sized.to_dict()["type"] == kind.value
    else:
        with pytest.raises(InputError, match=f"exchanger type {kind.value} has no geometry to size.*allowed: "
                                             "double_pipe, shell_and_tube_1_2"):
            size_exchanger(kind.value, 100.0, 0.5, 150, 100, 30, 80)


def test_size_exchanger_rejects():
    with pytest.raises(InputError, match="unknown exchanger type 'plate'; allowed: double_pipe, shell_and_tube_1_2"):
        size_exchanger("plate", 100.0, 0.5, 150, 100, 30, 80)
    with pytest.raises(InputError, match="unknown option.*tube_diameter; allowed: x_p, min_f"):
        size_exchanger(ExchangerType.SHELL_AND_TUBE_1_2, 100.0, 0.5, 150, 100, 30, 80, tube_diameter=0.05)
    with pytest.raises(InputError, match="tube_diameter .m. and hairpin_length .m. are required"):
        size_exchanger(ExchangerType.DOUBLE_PIPE, 100.0, 0.5, 150, 100, 30, 80)
    with pytest.raises(InputError, match="duty must be > 0 kW, got 0"):
        size_double_pipe(0.0, 0.5, 150, 100, 30, 80, tube_diameter=0.05, hairpin_length=4.0)
    with pytest.raises(TemperatureCrossError, match="temperature cross"):
        size_shell_and_tube(100.0, 0.5, 150, 100, 120, 160)
