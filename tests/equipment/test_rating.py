"""Tests of heatloom.equipment.rating: ε-NTU and rating.

Reference library: ``ht`` from PyPI (Caleb Bell, ht.hx module); each check names the ht function.
Textbook values recalled from memory say so.  Data in property tests are invented (hypothesis).
"""

from __future__ import annotations

import itertools
import math

import ht
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from heatloom.equipment.geometry import size_shell_and_tube
from heatloom.equipment.rating import (
    effectiveness_from_ntu,
    max_effectiveness,
    ntu_from_effectiveness,
    rate_exchanger,
)
from heatloom.equipment.sizing import area_from_duty, lmtd, p_max
from heatloom.errors import InputError, TemperatureCrossError
from heatloom.model.exchangers import ExchangerType

CC, CO, ST = ExchangerType.COUNTER_CURRENT, ExchangerType.CO_CURRENT, ExchangerType.SHELL_AND_TUBE_1_2
DP = ExchangerType.DOUBLE_PIPE
HT_SUBTYPE = {CC: "counterflow", CO: "parallel", ST: "S&T"}


# --------------------------------------------------------------------------------------------------
# ε-NTU

NTUS = [0.05, 0.3, 1.0, 2.5, 6.0]
CRS = [0.0, 0.25, 0.6, 0.95, 1.0]


@pytest.mark.parametrize("ntu, cr", list(itertools.product(NTUS, CRS)))
@pytest.mark.parametrize("arrangement", [CC, CO])
def test_effectiveness_matches_ht(ntu, cr, arrangement):
    # reference: ht.effectiveness_from_NTU(NTU, Cr, subtype='counterflow' / 'parallel')
    expected = ht.effectiveness_from_NTU(ntu, cr, HT_SUBTYPE[arrangement])
    assert effectiveness_from_ntu(ntu, cr, arrangement) == pytest.approx(expected, rel=1e-12)
    # reference: ht.NTU_from_effectiveness(effectiveness, Cr, subtype=...)
    assert ntu_from_effectiveness(expected, cr, arrangement) == pytest.approx(
        ht.NTU_from_effectiveness(expected, cr, HT_SUBTYPE[arrangement]), rel=1e-9)


@pytest.mark.parametrize("ntu, cr", list(itertools.product(NTUS, CRS)))
@pytest.mark.parametrize("kind", [DP, "double_pipe"])
def test_double_pipe_rated_as_counter_current_matches_ht(ntu, cr, kind):
    # a double pipe is a counter-current exchanger (common practice), so it is rated by the counterflow
    # relation; reference: ht.effectiveness_from_NTU(NTU, Cr, subtype='counterflow') and
    # ht.NTU_from_effectiveness(effectiveness, Cr, subtype='counterflow') (Caleb Bell, ht.hx module)
    expected = ht.effectiveness_from_NTU(ntu, cr, "counterflow")
    assert effectiveness_from_ntu(ntu, cr, kind) == pytest.approx(expected, rel=1e-12)
    assert ntu_from_effectiveness(expected, cr, kind) == pytest.approx(
        ht.NTU_from_effectiveness(expected, cr, "counterflow"), rel=1e-9)
    assert max_effectiveness(cr, kind) == 1.0


@pytest.mark.parametrize("ch, cc, ua", [(2.0, 3.0, 4.0), (5.0, 1.5, 2.0), (2.0, 2.0, 4.0), (1.0, 8.0, 30.0)])
def test_double_pipe_rating_matches_ht_counterflow(ch, cc, ua):
    # reference: ht.effectiveness_NTU_method(mh, mc, Cph, Cpc, subtype='counterflow', Thi=..., Tci=..., UA=...)
    ref = ht.effectiveness_NTU_method(mh=ch, mc=cc, Cph=1.0, Cpc=1.0, subtype="counterflow", Thi=180.0, Tci=25.0,
                                      UA=ua)
    r = rate_exchanger(180.0, 25.0, ch, cc, 0.5, ua / 0.5, DP)
    assert (r.duty, r.hot_out, r.cold_out) == pytest.approx((ref["Q"], ref["Tho"], ref["Tco"]), rel=1e-10)
    assert r.arrangement is DP and r.to_dict()["arrangement"] == "double_pipe"


def test_double_pipe_lmtd_is_counter_current_and_names_its_kind():
    # reference: ht.LMTD(Thi, Tho, Tci, Tco, counterflow=True)
    assert lmtd(150.0, 60.0, 30.0, 100.0, DP) == pytest.approx(ht.LMTD(150.0, 60.0, 30.0, 100.0), rel=1e-12)
    with pytest.raises(TemperatureCrossError, match="temperature cross in a double-pipe exchanger"):
        lmtd(150.0, 60.0, 70.0, 160.0, DP)
    with pytest.raises(InputError, match="effectiveness 1 is not reachable by a double-pipe exchanger at"):
        ntu_from_effectiveness(1.0, 0.5, DP)


@pytest.mark.parametrize("shells", [1, 2, 3, 5])
@pytest.mark.parametrize("ntu, cr", list(itertools.product(NTUS, [0.0, 0.25, 0.6, 0.95])))
def test_effectiveness_shell_and_tube_matches_ht(ntu, cr, shells):
    # reference: ht.effectiveness_from_NTU(NTU, Cr, subtype='S&T', n_shell_tube=N) (total NTU shared equally)
    expected = ht.effectiveness_from_NTU(ntu, cr, "S&T", n_shell_tube=shells)
    assert effectiveness_from_ntu(ntu, cr, ST, shells=shells) == pytest.approx(expected, rel=1e-10)
    # reference: ht.NTU_from_effectiveness(effectiveness, Cr, subtype='S&T', n_shell_tube=N)
    assert ntu_from_effectiveness(expected, cr, ST, shells=shells) == pytest.approx(
        ht.NTU_from_effectiveness(expected, cr, "S&T", n_shell_tube=shells), rel=1e-7)


@pytest.mark.parametrize("shells", [1, 2, 4])
def test_shell_and_tube_at_cr_one(shells):
    # ht's series formula divides by zero at Cr = 1 with N > 1 (and loses digits just below): compare
    # with ht at Cr = 1 − 1e-5 (reference: ht.effectiveness_from_NTU(..., 'S&T', n_shell_tube=N)), then
    # check that our value is continuous up to Cr = 1
    for ntu in (0.5, 2.0):
        ref = ht.effectiveness_from_NTU(ntu, 1 - 1e-5, "S&T", n_shell_tube=shells)
        assert effectiveness_from_ntu(ntu, 1 - 1e-5, ST, shells=shells) == pytest.approx(ref, rel=1e-9)
        assert effectiveness_from_ntu(ntu, 1.0, ST, shells=shells) == pytest.approx(
            effectiveness_from_ntu(ntu, 1 - 1e-12, ST, shells=shells), rel=1e-10)
        # and the textbook Cr = 1 series limit N·ε1/[1 + (N−1)·ε1]
        e1 = effectiveness_from_ntu(ntu / shells, 1.0, ST)
        assert effectiveness_from_ntu(ntu, 1.0, ST, shells=shells) == pytest.approx(
            shells * e1 / (1 + (shells - 1) * e1), rel=1e-12)


def test_effectiveness_textbook_closed_forms():
    # Incropera, DeWitt, Bergman & Lavine (2007), Fundamentals of Heat and Mass Transfer, 6th ed.,
    # Table 11.3 (from memory, unverified): C_r = 0 gives ε = 1 − exp(−NTU) for every arrangement, and
    # the counter-current C_r = 1 form is ε = NTU/(1 + NTU).
    for arrangement in (CC, CO, ST):
        assert effectiveness_from_ntu(1.5, 0.0, arrangement) == pytest.approx(1 - math.exp(-1.5), rel=1e-14)
    assert effectiveness_from_ntu(3.0, 1.0) == pytest.approx(0.75, rel=1e-15)
    # ht docstring examples (ht.effectiveness_from_NTU, NTU=5, Cr=0.7)
    assert effectiveness_from_ntu(5, 0.7, CO) == pytest.approx(0.5881156068417585, rel=1e-12)
    assert effectiveness_from_ntu(5, 0.7, CC) == pytest.approx(0.920670368605, rel=1e-11)
    assert effectiveness_from_ntu(5, 0.7, ST) == pytest.approx(0.683497704431, rel=1e-11)
    assert effectiveness_from_ntu(5, 0.7, ST, shells=50) == pytest.approx(0.920505870278, rel=1e-11)


def test_counter_current_continuous_at_cr_one():
    for ntu in (0.01, 1.0, 10.0, 100.0):
        exact = ntu / (1 + ntu)
        for dc in (1e-14, 1e-10, 1e-7):
            assert effectiveness_from_ntu(ntu, 1 - dc) == pytest.approx(exact, rel=10 * dc * ntu + 1e-13)
    for eps in (0.1, 0.5, 0.99):
        assert ntu_from_effectiveness(eps, 1.0) == pytest.approx(eps / (1 - eps), rel=1e-14)
        assert ntu_from_effectiveness(eps, 1 - 1e-12) == pytest.approx(eps / (1 - eps), rel=1e-9)


def test_effectiveness_large_ntu_no_overflow():
    assert effectiveness_from_ntu(1e4, 0.5) == pytest.approx(1.0)
    assert effectiveness_from_ntu(1e4, 0.5, ST, shells=3) == pytest.approx(p_max(0.5, 3), rel=1e-12)


@settings(derandomize=True, max_examples=200, deadline=None)
@given(st.floats(0.0, 20.0), st.floats(0.0, 1.0), st.sampled_from([CC, CO, ST]), st.integers(1, 6))
def test_effectiveness_ntu_round_trip(ntu, cr, arrangement, shells):
    eps = effectiveness_from_ntu(ntu, cr, arrangement, shells=shells)
    assert 0 <= eps <= max_effectiveness(cr, arrangement, shells=shells)
    if eps >= max_effectiveness(cr, arrangement, shells=shells) * (1 - 1e-9):
        return                             # saturated in floating point: NTU no longer recoverable
    back = ntu_from_effectiveness(eps, cr, arrangement, shells=shells)
    assert back == pytest.approx(ntu, rel=1e-6, abs=1e-9)


def test_effectiveness_vectorised():
    ntu = np.array([0.5, 1.0, 2.0])
    out = effectiveness_from_ntu(ntu, 0.5, ST, shells=2)
    assert out == pytest.approx([effectiveness_from_ntu(x, 0.5, ST, shells=2) for x in ntu], rel=1e-15)
    assert ntu_from_effectiveness(out, 0.5, ST, shells=2) == pytest.approx(ntu, rel=1e-10)


@pytest.mark.parametrize("call, match", [
    (lambda: effectiveness_from_ntu(1.0, 1.2), r"capacity ratio C_r = C_min/C_max must be in \[0, 1\], got 1.2"),
    (lambda: effectiveness_from_ntu(-1.0, 0.5), "NTU must be >= 0 and finite, got -1"),
    (lambda: ntu_from_effectiveness(0.6, 1.0, CO), r"effectiveness 0.6 is not reachable by a co-current.*below 0.5"),
    (lambda: ntu_from_effectiveness(0.7, 1.0, ST), r"not reachable by a shell-and-tube-1-2 exchanger with 1 shell\(s\)"),
    (lambda: ntu_from_effectiveness(1.0, 0.5), "effectiveness 1 is not reachable by a counter-current"),
    (lambda: effectiveness_from_ntu(1.0, 0.5, ST, shells=0), "number of shells must be a whole number >= 1"),
])
def test_effectiveness_rejects(call, match):
    with pytest.raises(InputError, match=match):
        call()


# --------------------------------------------------------------------------------------------------
# rating


RATING_CASES = [(a, n, ch, cc, ua) for a, n in [(CC, 1), (CO, 1), (ST, 1), (ST, 2), (ST, 4)]
                for ch, cc, ua in [(2.0, 3.0, 4.0), (5.0, 1.5, 2.0), (2.0, 2.0, 4.0), (1.0, 8.0, 30.0)]
                if not (a is ST and n > 1 and ch == cc)]   # ht divides by zero there; see test_shell_and_tube_at_cr_one


@pytest.mark.parametrize("arrangement, shells, ch, cc, ua", RATING_CASES)
def test_rating_matches_ht(arrangement, shells, ch, cc, ua):
    # reference: ht.effectiveness_NTU_method(mh, mc, Cph, Cpc, subtype, Thi=..., Tci=..., UA=..., n_shell_tube)
    ref = ht.effectiveness_NTU_method(mh=ch, mc=cc, Cph=1.0, Cpc=1.0, subtype=HT_SUBTYPE[arrangement], Thi=180.0,
                                      Tci=25.0, UA=ua, n_shell_tube=shells if arrangement is ST else None)
    r = rate_exchanger(180.0, 25.0, ch, cc, 0.5, ua / 0.5, arrangement, shells=shells)
    assert r.duty == pytest.approx(ref["Q"], rel=1e-10)
    assert r.hot_out == pytest.approx(ref["Tho"], rel=1e-10)
    assert r.cold_out == pytest.approx(ref["Tco"], rel=1e-10)
    assert r.duty == pytest.approx(ch * (180.0 - r.hot_out), rel=1e-12)      # energy balance
    assert r.duty == pytest.approx(cc * (r.cold_out - 25.0), rel=1e-12)


def test_rating_consistent_with_lmtd_sizing():
    # rate an exchanger sized by LMTD: the duty comes back (counter-current and 1-2 shells with F)
    q = 400.0
    th1, th2, tc1, tc2 = 180.0, 100.0, 30.0, 110.0
    a = area_from_duty(q, 0.4, lmtd(th1, th2, tc1, tc2))
    r = rate_exchanger(th1, tc1, q / (th1 - th2), q / (tc2 - tc1), 0.4, a)
    assert (r.duty, r.hot_out, r.cold_out) == pytest.approx((q, th2, tc2), rel=1e-10)
    s = size_shell_and_tube(q, 0.4, th1, th2, tc1, tc2)
    r = rate_exchanger(th1, tc1, q / (th1 - th2), q / (tc2 - tc1), 0.4, s.area, ST, shells=s.shells)
    assert r.duty == pytest.approx(q, rel=1e-10)


def test_rating_rejects():
    with pytest.raises(TemperatureCrossError, match="hot inlet 20 °C is below cold inlet 30 °C"):
        rate_exchanger(20.0, 30.0, 1.0, 1.0, 0.5, 1.0)
    with pytest.raises(InputError, match="hot heat capacity flow rate must be > 0 kW/K, got 0"):
        rate_exchanger(120.0, 30.0, 0.0, 1.0, 0.5, 1.0)
    with pytest.raises(InputError, match="area must be >= 0 m², got -1"):
        rate_exchanger(120.0, 30.0, 1.0, 1.0, 0.5, -1.0)
    r = rate_exchanger(50.0, 50.0, 1.0, 2.0, 0.5, 10.0)
    assert r.duty == 0.0 and r.to_dict()["arrangement"] == "counter_current"
