"""Heat-transfer kernels: the effectiveness–NTU relations behind sizing, F-factors, shells and rating.

Vectorised closed forms on floats or numpy arrays (a float back for a float, an array for an array),
dimensionless throughout.  They are written on one side of the exchanger, *side 1*:

* P (``effectiveness``): temperature change of side 1 over the inlet temperature difference,
  P = |ΔT₁|/(T_h,in − T_c,in) [-];
* R (``capacity_ratio``): C₁/C₂, heat capacity flow of side 1 over that of side 2 [-]; the F-factor
  takes side 1 as the cold side (R = (T_h,in − T_h,out)/(T_c,out − T_c,in), which may exceed 1);
  ε-NTU takes side 1 as the C_min side (then R = C_r ≤ 1 and P = ε);
* NTU = UA/C₁ [-].

With side 1 the C_min side these are the ε-NTU relations of Incropera, DeWitt, Bergman & Lavine (2007),
Fundamentals of Heat and Mass Transfer, 6th ed., Wiley, Table 11.3 (ε from NTU) and Table 11.4 (NTU from
ε); for counter-current flow and for a 1-2 shell the same forms hold with any side as side 1 (the
relations are symmetric in the sides; common practice).  Near C_r = 1 and R = 1 they are written with
``log1p``/``expm1`` ratios, so they stay exact (to rounding) at and across that point.

Checks are kept to the domain of each formula (NaN and values outside it raise
:class:`heatloom.errors.InputError`); the entry points :func:`heatloom.equipment.f_factor`,
:func:`heatloom.equipment.effectiveness_from_ntu`, :func:`heatloom.equipment.ntu_from_effectiveness`
and :func:`heatloom.equipment.shell_design` check temperatures and arrangements and give the messages a
user needs.

References
----------
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S. (2007) Fundamentals of Heat and Mass
Transfer, 6th ed., Wiley, Tables 11.3 and 11.4.
Underwood, A.J.V. (1934) The calculation of the mean temperature difference in multi-pass heat
exchangers, J. Inst. Petroleum Technologists 20, 145-158.
Bowman, R.A., Mueller, A.C., Nagle, W.M. (1940) Mean temperature difference in design,
Trans. ASME 62, 283-294.
Ahmad, S., Linnhoff, B., Smith, R. (1988) Design of multipass heat exchangers: an alternative
approach, J. Heat Transfer 110(2), 304-309.
"""

from __future__ import annotations

import numpy as np

from ..validation import as_float_array, require, scalar_or_array

__all__ = [
    "counter_current_ntu",
    "counter_current_effectiveness",
    "p_max_1_2_shell",
    "ntu_1_2_shell",
    "effectiveness_1_2_shell",
    "series_effectiveness",
    "unit_effectiveness_in_series",
    "real_shell_count",
]


# --------------------------------------------------------------------------------------------------
# ratios exact at zero


def _log1p_ratio(u):
    """log(1 + u)/u, equal to 1 at u = 0 (series below |u| = 1e-5)."""
    u = np.asarray(u, dtype=float)
    small = np.abs(u) < 1e-5
    us = np.where(small, 1.0, u)
    return np.where(small, 1.0 - u / 2 + u * u / 3 - u ** 3 / 4, np.log1p(us) / us)


def _expm1_ratio(x):
    """(exp(x) − 1)/x, equal to 1 at x = 0 (series below |x| = 1e-5)."""
    x = np.asarray(x, dtype=float)
    small = np.abs(x) < 1e-5
    xs = np.where(small, 1.0, x)
    return np.where(small, 1.0 + x / 2 + x * x / 6 + x ** 3 / 24, np.expm1(xs) / xs)


def _ratio(capacity_ratio) -> np.ndarray:
    r = as_float_array(capacity_ratio, "capacity ratio")
    require((r >= 0) & np.isfinite(r), r, "capacity ratio must be >= 0 and finite, got {}")
    return r


def _effectiveness(effectiveness) -> np.ndarray:
    p = as_float_array(effectiveness, "effectiveness P")
    require((p >= 0) & np.isfinite(p), p, "effectiveness P must be >= 0 and finite, got {}")
    return p


def _ntu(ntu) -> np.ndarray:
    n = as_float_array(ntu, "NTU")
    require((n >= 0) & np.isfinite(n), n, "NTU must be >= 0 and finite, got {}")
    return n


def _units(units) -> np.ndarray:
    n = as_float_array(units, "number of units in series")
    require((n > 0) & np.isfinite(n), n, "number of units in series must be > 0 and finite, got {}")
    return n


# --------------------------------------------------------------------------------------------------
# counter-current


def counter_current_ntu(effectiveness, capacity_ratio):
    """NTU of a counter-current exchanger from its effectiveness and capacity ratio.

    .. math:: NTU = \\frac{1}{1 - R}\\,\\ln\\frac{1 - R P}{1 - P}
              = \\frac{P}{1 - P}\\,\\frac{\\ln(1 + u)}{u},\\qquad u = \\frac{P\\,(1 - R)}{1 - P}

    (Incropera, DeWitt, Bergman & Lavine 2007, Table 11.4, counterflow; the second form, with
    ln(1 + u)/u = 1 − u/2 + u²/3 − … for small u, is exact at R = 1 where NTU = P/(1 − P)).

    Parameters
    ----------
    effectiveness : float or array
        P of side 1 [-], 0 <= P < 1 and R·P < 1.
    capacity_ratio : float or array
        R = C₁/C₂ [-], >= 0 (any value: side 1 need not be the C_min side).

    Returns
    -------
    float or ndarray
        NTU = UA/C₁ [-].

    Raises
    ------
    InputError
        P or R outside the domain (no counter-current exchanger reaches that P).

    Examples
    --------
    >>> counter_current_ntu(0.5, 1.0)
    1.0
    >>> round(counter_current_ntu(0.6, 0.5), 6)
    1.119232
    """
    p = _effectiveness(effectiveness)
    r = _ratio(capacity_ratio)
    require((p < 1) & (r * p < 1), p, "effectiveness P = {} is out of reach of a counter-current exchanger: "
            "it needs P < 1 and R·P < 1")
    q = p / (1.0 - p)
    return scalar_or_array(q * _log1p_ratio(q * (1.0 - r)))


def counter_current_effectiveness(ntu, capacity_ratio):
    """Effectiveness of a counter-current exchanger; the inverse of :func:`counter_current_ntu`.

    .. math:: P = \\frac{1 - e^{-NTU(1-R)}}{1 - R\\,e^{-NTU(1-R)}}

    (Incropera, DeWitt, Bergman & Lavine 2007, Table 11.3, counterflow), evaluated as Q/(1 + Q) with
    Q = NTU·(e^a − 1)/a, a = NTU(1 − R), for |a| <= 1 (exact at R = 1, where P = NTU/(1 + NTU)) and with
    e^{−|a|} above (no overflow).

    Parameters
    ----------
    ntu : float or array
        NTU = UA/C₁ [-], >= 0 and finite.
    capacity_ratio : float or array
        R = C₁/C₂ [-], >= 0.

    Returns
    -------
    float or ndarray
        P of side 1 [-].

    Examples
    --------
    >>> counter_current_effectiveness(1.0, 1.0)
    0.5
    >>> round(counter_current_effectiveness(5.0, 0.7), 6)
    0.92067
    """
    ntu = _ntu(ntu)
    r = _ratio(capacity_ratio)
    a = ntu * (1.0 - r)
    small = np.abs(a) <= 1.0
    q = ntu * _expm1_ratio(np.where(small, a, 0.0))
    a_large = np.where(small, 1.0, a)
    e = np.exp(-np.abs(a_large))
    # a > 0 (R < 1): 1 − R·e > 0; a < 0 (R > 1): R − e > 0
    large = (1.0 - e) / np.where(a_large > 0, 1.0 - r * e, r - e)
    return scalar_or_array(np.where(small, q / (1.0 + q), large))


# --------------------------------------------------------------------------------------------------
# one 1-2 shell (one shell pass, an even number of tube passes)


def p_max_1_2_shell(capacity_ratio):
    """Largest P one 1-2 shell reaches, with infinite area.

    .. math:: P_{max} = \\frac{2}{1 + R + \\sqrt{1 + R^2}}

    where the denominator of the 1-2 shell NTU relation (:func:`ntu_1_2_shell`) vanishes, and F → 0
    (Ahmad, Linnhoff & Smith 1988, who fix each shell at X_P·P_max).

    Parameters
    ----------
    capacity_ratio : float or array
        R = C₁/C₂ [-], >= 0.

    Returns
    -------
    float or ndarray
        [-]

    Examples
    --------
    >>> round(p_max_1_2_shell(1.0), 6)
    0.585786
    >>> p_max_1_2_shell(0.0)
    1.0
    """
    r = _ratio(capacity_ratio)
    return scalar_or_array(2.0 / (1.0 + r + np.sqrt(1.0 + r * r)))


def ntu_1_2_shell(effectiveness, capacity_ratio):
    """NTU of one 1-2 shell from P and R.

    .. math:: NTU = \\frac{1}{S}\\,\\ln\\frac{2 - P\\,(1 + R - S)}{2 - P\\,(1 + R + S)},\\qquad
              S = \\sqrt{1 + R^2}

    (Underwood 1934; Bowman, Mueller & Nagle 1940; Incropera, DeWitt, Bergman & Lavine 2007, Table 11.4,
    shell-and-tube, one shell pass).  Near P_max the second logarithm is taken of
    (1 + R + S)(P_max − P)/2, the gap to :func:`p_max_1_2_shell` being formed first; a P at or within
    1e-9 (relative) beyond P_max, which a per-shell P rounded from a series can give, counts as one
    rounding step below P_max (a large, finite NTU).

    Parameters
    ----------
    effectiveness : float or array
        P of side 1 [-], 0 <= P < P_max(R).
    capacity_ratio : float or array
        R = C₁/C₂ [-], >= 0.

    Returns
    -------
    float or ndarray
        NTU = UA/C₁ [-].

    Raises
    ------
    InputError
        P beyond P_max: one shell cannot reach it.

    Examples
    --------
    >>> round(ntu_1_2_shell(0.5, 1.0), 6)
    1.246450
    """
    p = _effectiveness(effectiveness)
    r = _ratio(capacity_ratio)
    s = np.sqrt(1.0 + r * r)
    pm = 2.0 / (1.0 + r + s)
    require(p <= pm * (1 + 1e-9), p, "effectiveness P = {} is beyond the largest P one 1-2 shell reaches")
    # near P_max, 2 − P(1 + R + S) is written (1 + R + S)(P_max − P): the gap to P_max is taken first,
    # so P one rounding step below P_max still gives a finite NTU (a gap lost to rounding counts as one step)
    x = p * (1.0 + r + s) / 2
    near = x > 0.5
    gap = np.maximum(pm - p, np.spacing(pm))
    far_term = np.log1p(-np.where(near, 0.0, x))
    near_term = np.log((1.0 + r + s) * np.where(near, gap, 1.0) / 2)
    return scalar_or_array((np.log1p(-p * (1.0 + r - s) / 2) - np.where(near, near_term, far_term)) / s)


def effectiveness_1_2_shell(ntu, capacity_ratio):
    """Effectiveness of one 1-2 shell; the inverse of :func:`ntu_1_2_shell`.

    .. math:: P = \\frac{2}{1 + R + S\\,\\coth(NTU\\,S/2)},\\qquad S = \\sqrt{1 + R^2}

    (Incropera, DeWitt, Bergman & Lavine 2007, Table 11.3, shell-and-tube, one shell pass, written with
    coth), evaluated as 2t/[(1 + R)t + S] with t = tanh(NTU·S/2) (no overflow at large NTU).

    Parameters
    ----------
    ntu : float or array
        NTU = UA/C₁ [-], >= 0 and finite.
    capacity_ratio : float or array
        R = C₁/C₂ [-], >= 0.

    Returns
    -------
    float or ndarray
        P of side 1 [-], below :func:`p_max_1_2_shell`.

    Examples
    --------
    >>> round(effectiveness_1_2_shell(5.0, 0.7), 6)
    0.683498
    """
    ntu = _ntu(ntu)
    r = _ratio(capacity_ratio)
    s = np.sqrt(1.0 + r * r)
    t = np.tanh(ntu * s / 2)
    return scalar_or_array(2.0 * t / ((1.0 + r) * t + s))


# --------------------------------------------------------------------------------------------------
# identical units in counter-current series


def series_effectiveness(unit_effectiveness, capacity_ratio, units):
    """P of N identical units in counter-current series, each at the same P₁.

    .. math:: P = \\frac{W^N - 1}{W^N - R},\\qquad W = \\frac{1 - R P_1}{1 - P_1}

    (Incropera, DeWitt, Bergman & Lavine 2007, Table 11.3, shell-and-tube with n shell passes), evaluated
    through the counter-current NTU, P = P_cc(N·NTU_cc(P₁, R), R), which is the same relation and exact at
    R = 1 (P = N·P₁/[1 + (N − 1)P₁]).  A unit at P₁ >= 1 gives P = 1.

    Parameters
    ----------
    unit_effectiveness : float or array
        P₁ of each unit [-], >= 0 (and R·P₁ < 1 when P₁ < 1).
    capacity_ratio : float or array
        R = C₁/C₂ [-], >= 0.
    units : int, float or array
        N, units in series [-], > 0 (a real N is allowed: the count of Ahmad, Linnhoff & Smith).

    Returns
    -------
    float or ndarray
        P of the series [-].

    Examples
    --------
    >>> round(series_effectiveness(0.5, 1.0, 2), 6)
    0.666667
    >>> round(series_effectiveness(p_max_1_2_shell(1.0), 1.0, 2), 4)
    0.7388
    """
    p1 = _effectiveness(unit_effectiveness)
    r = _ratio(capacity_ratio)
    n = _units(units)
    safe = np.where(p1 >= 1.0, 0.0, p1)
    total = counter_current_effectiveness(n * counter_current_ntu(safe, r), r)
    return scalar_or_array(np.where(p1 >= 1.0, 1.0, total))


def unit_effectiveness_in_series(effectiveness, capacity_ratio, units):
    """P₁ of each of N identical units in counter-current series that together reach P.

    .. math:: P_1 = \\frac{W - 1}{W - R},\\qquad W = \\left(\\frac{1 - R P}{1 - P}\\right)^{1/N}

    the inverse of :func:`series_effectiveness` (Bowman, Mueller & Nagle 1940; the same relation as
    Fakheri 2003 for N shells), evaluated as P_cc(NTU_cc(P, R)/N, R), exact at R = 1.

    Parameters
    ----------
    effectiveness : float or array
        P of the series [-], 0 <= P < 1 and R·P < 1.
    capacity_ratio : float or array
        R = C₁/C₂ [-], >= 0.
    units : int, float or array
        N [-], > 0.

    Returns
    -------
    float or ndarray
        P₁ [-].

    References
    ----------
    Fakheri, A. (2003) A general expression for the determination of the log mean temperature
    correction factor for shell and tube heat exchangers, J. Heat Transfer 125(3), 527-530.

    Examples
    --------
    >>> round(unit_effectiveness_in_series(2 / 3, 1.0, 2), 6)
    0.5
    """
    n = _units(units)
    r = _ratio(capacity_ratio)
    return counter_current_effectiveness(counter_current_ntu(effectiveness, r) / n, r)


def real_shell_count(effectiveness, capacity_ratio, x_p):
    """Real-valued number of 1-2 shells in series that reach P with every shell at X_P·P_max.

    Ahmad, Linnhoff & Smith (1988) fix each shell's P₁ at X_P·P_max(R) (:func:`p_max_1_2_shell`):

    .. math:: N = \\frac{\\ln[(1-RP)/(1-P)]}{\\ln W},\\qquad
              W = \\frac{R + 1 + \\sqrt{R^2+1} - 2 R X_P}{R + 1 + \\sqrt{R^2+1} - 2 X_P}

    evaluated as NTU_cc(P, R)/NTU_cc(P₁, R) (:func:`counter_current_ntu`), the same ratio without a
    branch at R = 1 (there N = [P/(1 − P)]/[P₁/(1 − P₁)]).  At R = 0, N = ln(1 − P)/ln(1 − X_P).  The
    whole-number count is N rounded up; the X_P rule alone does not know that a side which does not
    change temperature needs one shell whatever P (see :func:`heatloom.equipment.shell_design`).

    Parameters
    ----------
    effectiveness : float or array
        Overall P of side 1 [-], 0 <= P < 1 and R·P < 1.
    capacity_ratio : float or array
        R = C₁/C₂ [-], >= 0.
    x_p : float
        X_P [-], 0 < X_P < 1.

    Returns
    -------
    float or ndarray
        N [-], >= 0.

    Examples
    --------
    >>> round(real_shell_count(0.625, 1.0, 0.9), 3)
    1.495
    """
    r = _ratio(capacity_ratio)
    x = as_float_array(x_p, "X_P")
    require((x > 0) & (x < 1), x, "X_P must be in (0, 1), got {}")
    return scalar_or_array(np.asarray(counter_current_ntu(effectiveness, r))
                           / np.asarray(counter_current_ntu(x * p_max_1_2_shell(r), r)))
