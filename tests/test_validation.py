"""Tests of heatloom.validation: the generic numeric checks.

These are checks of input handling, not of engineering results: the expected values follow from the
definitions (NaN is not a number in range; a whole count rounds up), no outside source is needed.
"""

from __future__ import annotations

import enum
import math

import numpy as np
import pytest

from heatloom.errors import InputError
from heatloom.validation import (
    as_float_array,
    enum_member,
    finite_float,
    positive_float,
    require,
    round_up_count,
    scalar_or_array,
    whole_number,
)


class Colour(enum.Enum):
    RED = "red"
    BLUE = "blue"


def test_arrays_and_scalars():
    a = as_float_array([1, 2.5], "duty")
    assert a.dtype == float and a.tolist() == [1.0, 2.5]
    assert isinstance(scalar_or_array(as_float_array(3, "duty")), float)
    assert isinstance(scalar_or_array(a), np.ndarray)
    with pytest.raises(InputError, match=r"duty must be a number or an array of numbers, got \['a'\]"):
        as_float_array(["a"], "duty")


def test_require_names_the_first_bad_value_and_rejects_nan():
    x = np.array([3.0, np.nan, -1.0])
    with pytest.raises(InputError, match="got nan"):
        require(x > 0, x, "CP must be > 0 kW/K, got {}")
    require(np.array([1.0, 2.0]) > 0, 0.0, "never {}")     # holds everywhere: no error


@pytest.mark.parametrize("value, match", [
    ("abc", r"T must be a number \[°C\], got 'abc'"),
    (None, r"T must be a number \[°C\], got None"),
    (math.inf, r"T must be a finite number \[°C\], got inf"),
    (math.nan, r"T must be a finite number \[°C\], got nan"),
])
def test_finite_float_rejects(value, match):
    with pytest.raises(InputError, match=match):
        finite_float(value, "T", "°C")


def test_positive_float():
    assert positive_float("2", "U", "kW/(m²·K)") == 2.0
    for bad in (0.0, -1.0):
        with pytest.raises(InputError, match=r"U must be > 0 kW/\(m²·K\), got"):
            positive_float(bad, "U", "kW/(m²·K)")
    with pytest.raises(InputError, match="finite"):
        positive_float(math.nan, "U", "kW/(m²·K)")


@pytest.mark.parametrize("value", [0, -2, 1.0, 2.5, True, "3", None])
def test_whole_number_rejects(value):
    with pytest.raises(InputError, match="number of shells must be a whole number >= 1"):
        whole_number(value, "number of shells")


def test_whole_number_accepts():
    assert whole_number(np.int64(4), "n") == 4 and isinstance(whole_number(np.int64(4), "n"), int)
    assert whole_number(0, "n", minimum=0) == 0


def test_enum_member():
    assert enum_member(Colour, "red", "colour") is Colour.RED
    assert enum_member(Colour, Colour.BLUE, "colour") is Colour.BLUE
    with pytest.raises(InputError, match="unknown colour 'green'; allowed: red, blue"):
        enum_member(Colour, "green", "colour")


@pytest.mark.parametrize("value, expected", [(0.2, 1), (1.0, 1), (1 + 1e-12, 1), (1.0001, 2), (2.999999, 3),
                                             (3.0 + 2e-9, 3), (3.0 + 4e-8, 4), (1e6 + 1e-4, 1_000_000), (0.0, 0)])
def test_round_up_count(value, expected):
    assert round_up_count(value) == expected
