"""Tests of heatloom.equipment.kernels: the counter-current, 1-2 shell and series ε-NTU relations.

Reference library: ``ht`` 1.2 from PyPI (Caleb Bell, ht.hx module); each check names the ht function and
the published relation it implements:

* ε-NTU on the C_min side: Incropera, DeWitt, Bergman & Lavine (2007), Fundamentals of Heat and Mass
  Transfer, 6th ed., Wiley, Table 11.3 (ε from NTU) and Table 11.4 (NTU from ε), through
  ht.effectiveness_from_NTU / ht.NTU_from_effectiveness ('counterflow'; 'S&T', the one-shell-pass
  TEMA E exchanger, with n_shell_tube shells in series);
* P-NTU on either side (R may exceed 1), through ht.hx.temperature_effectiveness_basic /
  ht.hx.NTU_from_P_basic ('counterflow') and ht.hx.temperature_effectiveness_TEMA_E /
  ht.hx.NTU_from_P_E (1-2 TEMA E, Ntp=2);
* the F-factor of N shells (Bowman, Mueller & Nagle 1940; Fakheri 2003), through ht.F_LMTD_Fakheri;
* the real-valued shell count of Ahmad, Linnhoff & Smith (1988), J. Heat Transfer 110(2), 304-309,
  written out by hand in its closed form.

ht divides by zero at C_r = 1 (R = 1) in several of these; there the closed C_r = 1 forms of Incropera
et al. Table 11.3/11.4 are used instead (ε = NTU/(1 + NTU) counter-current, from memory, unverified).
"""

from __future__ import annotations

import itertools
import math

import ht
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom.equipment import (
    counter_current_effectiveness,
    counter_current_ntu,
    effectiveness_1_2_shell,
    ntu_1_2_shell,
    p_max_1_2_shell,
    real_shell_count,
    series_effectiveness,
    unit_effectiveness_in_series,
)
from heatloom.errors import InputError

NTUS = [0.02, 0.3, 1.0, 2.5, 7.0]
CRS = [0.0, 0.2, 0.55, 0.9]                 # C_r <= 1 (ε-NTU on the C_min side)
RS = [0.3, 1.7, 2.5, 6.0]                   # R on either side (P-NTU), also above 1


# --------------------------------------------------------------------------------------------------
# counter-current


@pytest.mark.parametrize("ntu, cr", list(itertools.product(NTUS, CRS)))
def test_counter_current_matches_ht_epsilon_ntu(ntu, cr):
    # Incropera et al. 2007, Table 11.3 / 11.4, counterflow; reference:
    # ht.effectiveness_from_NTU(NTU, Cr, subtype='counterflow'), ht.NTU_from_effectiveness(eps, Cr, 'counterflow')
    eps = ht.effectiveness_from_NTU(ntu, cr, subtype="counterflow")
    assert counter_current_effectiveness(ntu, cr) == pytest.approx(eps, rel=1e-12)
    assert counter_current_ntu(eps, cr) == pytest.approx(
        ht.NTU_from_effectiveness(eps, cr, subtype="counterflow"), rel=1e-9)


@pytest.mark.parametrize("ntu, r", list(itertools.product(NTUS, RS)))
def test_counter_current_matches_ht_on_either_side(ntu, r):
    # P-NTU with R = C1/C2 > 1 allowed; reference: ht.hx.temperature_effectiveness_basic(R1, NTU1,
    # subtype='counterflow') and ht.hx.NTU_from_P_basic(P1, R1, subtype='counterflow')
    p = ht.hx.temperature_effectiveness_basic(r, ntu, subtype="counterflow")
    assert counter_current_effectiveness(ntu, r) == pytest.approx(p, rel=1e-12)
    if p < min(1.0, 1.0 / r) * (1 - 1e-9):     # not saturated: NTU still recoverable in floating point
        assert counter_current_ntu(p, r) == pytest.approx(ht.hx.NTU_from_P_basic(p, r, subtype="counterflow"),
                                                         rel=1e-9)


def test_counter_current_exact_at_capacity_ratio_one():
    # Incropera et al. 2007, Table 11.3/11.4 at C_r = 1: ε = NTU/(1 + NTU), NTU = ε/(1 − ε) (from memory,
    # unverified); ht divides by zero in NTU_from_P_basic there, so the closed form is the reference,
    # and the values on either side of R = 1 must approach it continuously
    for ntu in (0.01, 1.0, 3.0, 40.0):
        assert counter_current_effectiveness(ntu, 1.0) == pytest.approx(ntu / (1 + ntu), rel=1e-15)
        for dr in (1e-13, 1e-9, -1e-9):
            assert counter_current_effectiveness(ntu, 1.0 + dr) == pytest.approx(ntu / (1 + ntu),
                                                                               rel=10 * abs(dr) * ntu + 1e-14)
    for p in (0.1, 0.5, 0.95):
        assert counter_current_ntu(p, 1.0) == pytest.approx(p / (1 - p), rel=1e-15)


def test_counter_current_large_ntu_does_not_overflow():
    # the limits of the counterflow relation of Incropera et al. Table 11.3 as NTU → ∞ (hand limits:
    # P → 1 for R < 1, P → 1/R for R > 1); ht.hx.temperature_effectiveness_basic overflows here
    assert counter_current_effectiveness(5e3, 0.5) == pytest.approx(1.0, rel=1e-15)
    assert counter_current_effectiveness(5e3, 2.0) == pytest.approx(0.5, rel=1e-15)


# --------------------------------------------------------------------------------------------------
# one 1-2 shell


@pytest.mark.parametrize("ntu, cr", list(itertools.product(NTUS, CRS)))
def test_1_2_shell_matches_ht_epsilon_ntu(ntu, cr):
    # Incropera et al. 2007, Table 11.3 / 11.4, shell-and-tube with one shell pass; reference:
    # ht.effectiveness_from_NTU(NTU, Cr, subtype='S&T'), ht.NTU_from_effectiveness(eps, Cr, subtype='S&T')
    eps = ht.effectiveness_from_NTU(ntu, cr, subtype="S&T")
    assert effectiveness_1_2_shell(ntu, cr) == pytest.approx(eps, rel=1e-12)
    assert ntu_1_2_shell(eps, cr) == pytest.approx(ht.NTU_from_effectiveness(eps, cr, subtype="S&T"), rel=1e-8)


@pytest.mark.parametrize("ntu, r", list(itertools.product(NTUS, [*RS, 1.0])))
def test_1_2_shell_matches_ht_tema_e_on_either_side(ntu, r):
    # P-NTU of a 1-2 TEMA E shell (symmetric in the sides); reference:
    # ht.hx.temperature_effectiveness_TEMA_E(R1, NTU1, Ntp=2) and ht.hx.NTU_from_P_E(P1, R1, Ntp=2)
    p = ht.hx.temperature_effectiveness_TEMA_E(r, ntu, Ntp=2)
    assert effectiveness_1_2_shell(ntu, r) == pytest.approx(p, rel=1e-12)
    if p < p_max_1_2_shell(r) * (1 - 1e-9):     # not saturated: NTU still recoverable in floating point
        assert ntu_1_2_shell(p, r) == pytest.approx(ht.hx.NTU_from_P_E(p, r, Ntp=2), rel=1e-8)


@pytest.mark.parametrize("r", [0.0, 0.4, 1.0, 2.5, 6.0])
def test_p_max_1_2_shell(r):
    # Ahmad, Linnhoff & Smith 1988: P_max = 2/(1 + R + √(1 + R²)), where 2 − P(1 + R + S) = 0 (hand formula);
    # it is the limit of the 1-2 TEMA E effectiveness at infinite area (reference:
    # ht.hx.temperature_effectiveness_TEMA_E(R1, NTU1=60, Ntp=2), exp(−60·S) being below rounding)
    pm = p_max_1_2_shell(r)
    assert pm == pytest.approx(2 / (1 + r + math.sqrt(1 + r * r)), rel=1e-15)
    assert pm == pytest.approx(ht.hx.temperature_effectiveness_TEMA_E(r, 60.0, Ntp=2), rel=1e-13)
    # one rounding step below P_max still gives a finite NTU, larger than further below
    assert ntu_1_2_shell(pm * (1 - 1e-6), r) < ntu_1_2_shell(pm * (1 - 1e-15), r) < math.inf


@settings(derandomize=True, max_examples=150, deadline=None)
@given(st.floats(0.0, 30.0), st.floats(0.0, 8.0))
def test_1_2_shell_round_trip(ntu, r):
    p = effectiveness_1_2_shell(ntu, r)
    assert 0 <= p < p_max_1_2_shell(r) or math.isclose(p, p_max_1_2_shell(r), rel_tol=1e-12)
    if p < p_max_1_2_shell(r) * (1 - 1e-9):
        assert ntu_1_2_shell(p, r) == pytest.approx(ntu, rel=1e-6, abs=1e-12)


# --------------------------------------------------------------------------------------------------
# shells in series, F-factor and the shell count


@pytest.mark.parametrize("shells", [1, 2, 3, 5])
@pytest.mark.parametrize("ntu, cr", list(itertools.product([0.3, 1.0, 4.0], [0.0, 0.4, 0.9])))
def test_series_matches_ht(ntu, cr, shells):
    # Incropera et al. 2007, Table 11.3, shell-and-tube with n shell passes (equal NTU per shell); reference:
    # ht.effectiveness_from_NTU(NTU, Cr, subtype='S&T', n_shell_tube=N)
    per_shell = effectiveness_1_2_shell(ntu / shells, cr)
    expected = ht.effectiveness_from_NTU(ntu, cr, subtype="S&T", n_shell_tube=shells)
    assert series_effectiveness(per_shell, cr, shells) == pytest.approx(expected, rel=1e-10)
    assert unit_effectiveness_in_series(expected, cr, shells) == pytest.approx(per_shell, rel=1e-9)


def test_series_exact_at_capacity_ratio_one():
    # Incropera et al. 2007, Table 11.3 at C_r = 1 (from memory, unverified): P = N·P1/[1 + (N − 1)·P1]
    for n, p1 in itertools.product((1, 2, 4), (0.1, 0.5, 0.58)):
        assert series_effectiveness(p1, 1.0, n) == pytest.approx(n * p1 / (1 + (n - 1) * p1), rel=1e-14)
    assert series_effectiveness(1.0, 0.5, 3) == 1.0


@pytest.mark.parametrize("shells", [1, 2, 3])
@pytest.mark.parametrize("th1, th2, tc1, tc2", [(130, 110, 15, 85), (200, 90, 40, 78), (300, 150, 100, 200),
                                                 (150, 40, 30, 140), (120, 60, 20, 80)])
def test_f_factor_from_kernels_matches_ht_fakheri(th1, th2, tc1, tc2, shells):
    # Bowman, Mueller & Nagle 1940: F = NTU_counter-current(P1, R)/NTU_1-2(P1, R) for each of N shells at
    # the per-shell P1 of the series (Fakheri 2003); reference: ht.F_LMTD_Fakheri(Thi, Tho, Tci, Tco, shells)
    r, p = (th1 - th2) / (tc2 - tc1), (tc2 - tc1) / (th1 - tc1)
    try:
        expected = ht.F_LMTD_Fakheri(th1, th2, tc1, tc2, shells=shells)
    except (ValueError, ZeroDivisionError):
        expected = math.nan
    reachable = p < series_effectiveness(p_max_1_2_shell(r), r, shells)
    assert reachable == (not math.isnan(expected))
    if reachable:
        p1 = unit_effectiveness_in_series(p, r, shells)
        assert counter_current_ntu(p1, r) / ntu_1_2_shell(p1, r) == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("r, p", [(0.3, 0.7), (0.8, 0.6), (1.0, 0.75), (1.0 + 1e-7, 0.75), (2.5, 0.3),
                                  (0.0, 0.95), (4.0, 0.2)])
def test_real_shell_count_closed_form(r, p):
    # Ahmad, Linnhoff & Smith 1988: N = ln[(1 − RP)/(1 − P)]/ln W,
    # W = (R + 1 + √(R²+1) − 2R·X_P)/(R + 1 + √(R²+1) − 2X_P), written out by hand (at R = 1 the limit
    # N = [P/(1 − P)]/[P1/(1 − P1)], P1 = X_P·P_max)
    x_p = 0.9
    s = math.sqrt(r * r + 1)
    if r == 1.0:
        p1 = x_p * 2 / (2 + math.sqrt(2))
        expected = (p / (1 - p)) / (p1 / (1 - p1))
    else:
        w = (r + 1 + s - 2 * r * x_p) / (r + 1 + s - 2 * x_p)
        expected = math.log((1 - r * p) / (1 - p)) / math.log(w)
    assert real_shell_count(p, r, x_p) == pytest.approx(expected, rel=1e-6 if r != 1.0 and abs(r - 1) < 1e-3
                                                        else 1e-12)
    # at that real count every shell sits at exactly X_P·P_max (the definition)
    n = real_shell_count(p, r, x_p)
    assert unit_effectiveness_in_series(p, r, n) == pytest.approx(x_p * p_max_1_2_shell(r), rel=1e-10)


# --------------------------------------------------------------------------------------------------
# forms and domains


def test_float_in_float_out_and_vectorised():
    assert isinstance(counter_current_ntu(0.5, 0.5), float)
    assert isinstance(p_max_1_2_shell(1.0), float)
    ntu = np.array([0.5, 1.0, 2.0])
    out = effectiveness_1_2_shell(ntu, 0.5)
    assert isinstance(out, np.ndarray)
    assert out == pytest.approx([effectiveness_1_2_shell(x, 0.5) for x in ntu], rel=1e-15)
    assert ntu_1_2_shell(out, 0.5) == pytest.approx(ntu, rel=1e-12)
    assert real_shell_count(np.array([0.2, 0.4]), np.array([0.5, 2.0]), 0.9).shape == (2,)


@pytest.mark.parametrize("call, match", [
    (lambda: counter_current_ntu(1.0, 0.5), r"effectiveness P = 1 is out of reach of a counter-current"),
    (lambda: counter_current_ntu(0.6, 2.0), r"P = 0.6 is out of reach.*R·P < 1"),
    (lambda: counter_current_ntu(-0.1, 0.5), "effectiveness P must be >= 0 and finite, got -0.1"),
    (lambda: counter_current_effectiveness(float("nan"), 0.5), "NTU must be >= 0 and finite, got nan"),
    (lambda: counter_current_effectiveness(1.0, -1.0), "capacity ratio must be >= 0 and finite, got -1"),
    (lambda: ntu_1_2_shell(0.6, 1.0), "P = 0.6 is beyond the largest P one 1-2 shell reaches"),
    (lambda: series_effectiveness(0.5, 1.0, 0), "number of units in series must be > 0"),
    (lambda: real_shell_count(0.5, 1.0, 1.0), r"X_P must be in \(0, 1\), got 1"),
    (lambda: p_max_1_2_shell("abc"), "capacity ratio must be a number or an array of numbers"),
])
def test_domain_errors(call, match):
    with pytest.raises(InputError, match=match):
        call()
