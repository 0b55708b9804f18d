"""Exchanger sizing: overall coefficient, LMTD, area, F-factor and 1-2 shells.

Pure functions on floats (and numpy arrays where natural) in canonical units: °C, K for differences,
kW, kW/K, kW/(m²·K), m²·K/kW for fouling resistances, m².  Conventions used throughout:

* *counter-current* means the hot inlet meets the cold outlet; the two end differences are
  ΔT₁ = T_hot,in − T_cold,out and ΔT₂ = T_hot,out − T_cold,in;
* for the 1-2 shell-and-tube F-factor, R = (T_hot,in − T_hot,out)/(T_cold,out − T_cold,in) and
  P = (T_cold,out − T_cold,in)/(T_hot,in − T_cold,in); the result does not depend on which fluid is in
  the shell.

Where the two ends of a log mean are nearly equal, the log mean is written
(ΔT₁ + ΔT₂)/2 · r/artanh(r) with r = (ΔT₁ − ΔT₂)/(ΔT₁ + ΔT₂) and a series for small r, so it is exact
(to rounding) at and across ΔT₁ = ΔT₂.  The F-factor and the shell count are built on the
effectiveness–NTU kernels of :mod:`heatloom.equipment.kernels`, exact at R = 1; their sources are cited
there and in :func:`f_factor` and :func:`shell_design`.

The limits X_P and the minimum F are defined once in :mod:`heatloom.defaults`.

ε-NTU rating is in :mod:`heatloom.equipment.rating`, segment-wise area in
:mod:`heatloom.equipment.segments` and exchanger geometry in :mod:`heatloom.equipment.geometry`.

Sizing results are screening estimates: fouling, design margins, pressure and temperature limits
and any temperature cross must be checked, and designs checked against local codes and standards by
qualified, licensed engineers.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from .. import defaults
from ..errors import InputError, TemperatureCrossError
from ..model.exchangers import ExchangerType
from ..validation import (
    as_float_array,
    enum_member,
    finite_float,
    require,
    round_up_count,
    scalar_or_array,
    whole_number,
)
from .kernels import (
    counter_current_ntu,
    ntu_1_2_shell,
    p_max_1_2_shell,
    real_shell_count,
    series_effectiveness,
    unit_effectiveness_in_series,
)

__all__ = [
    "overall_coefficient",
    "log_mean",
    "lmtd",
    "area_from_duty",
    "duty_from_area",
    "f_factor",
    "f_factor_from_temperatures",
    "p_max",
    "ShellDesign",
    "shell_design",
]


# --------------------------------------------------------------------------------------------------
# U, LMTD, area


def overall_coefficient(hot_film_coefficient, cold_film_coefficient, *, hot_fouling=0.0, cold_fouling=0.0):
    """Overall heat transfer coefficient from the two film coefficients and fouling resistances.

    .. math:: 1/U = 1/h_{hot} + 1/h_{cold} + R_{f,hot} + R_{f,cold}

    Wall resistance is neglected (thin metal wall) and all terms refer to one area.

    Parameters
    ----------
    hot_film_coefficient, cold_film_coefficient : float or array
        Film coefficients h [kW/(m²·K)], > 0.
    hot_fouling, cold_fouling : float or array, optional
        Fouling resistances R_f [m²·K/kW], >= 0 (0 by default: clean surface; real designs need the
        fouling allowances of the applicable standard).

    Returns
    -------
    float or ndarray
        U [kW/(m²·K)].

    Examples
    --------
    >>> overall_coefficient(1.0, 1.0)
    0.5
    >>> overall_coefficient(1.0, 1.0, hot_fouling=0.5)
    0.4
    """
    hh = as_float_array(hot_film_coefficient, "hot film coefficient")
    hc = as_float_array(cold_film_coefficient, "cold film coefficient")
    fh = as_float_array(hot_fouling, "hot fouling resistance")
    fc = as_float_array(cold_fouling, "cold fouling resistance")
    require(hh > 0, hh, "hot film coefficient must be > 0 kW/(m²·K), got {}")
    require(hc > 0, hc, "cold film coefficient must be > 0 kW/(m²·K), got {}")
    require((fh >= 0) & np.isfinite(fh), fh, "hot fouling resistance must be >= 0 m²·K/kW and finite, got {}")
    require((fc >= 0) & np.isfinite(fc), fc, "cold fouling resistance must be >= 0 m²·K/kW and finite, got {}")
    return scalar_or_array(1.0 / (1.0 / hh + 1.0 / hc + fh + fc))


def log_mean(dt1, dt2):
    """Logarithmic mean of two positive temperature differences, exact as ΔT₁/ΔT₂ → 1.

    .. math:: \\Delta T_{lm} = \\frac{\\Delta T_1 - \\Delta T_2}{\\ln(\\Delta T_1/\\Delta T_2)}
              = \\frac{\\Delta T_1 + \\Delta T_2}{2}\\,\\frac{r}{\\operatorname{artanh} r},\\quad
              r = \\frac{\\Delta T_1 - \\Delta T_2}{\\Delta T_1 + \\Delta T_2}

    with r/artanh r = 1 − r²/3 − 4r⁴/45 + O(r⁶) for |r| < 1e-4 (the two forms are identical since
    ln x = 2 artanh[(x − 1)/(x + 1)]); for |r| > 0.5 (a ratio beyond 3) the plain form is used with the
    logarithms taken separately.

    Parameters
    ----------
    dt1, dt2 : float or array
        End temperature differences [K], both > 0.

    Returns
    -------
    float or ndarray
        [K]

    Raises
    ------
    TemperatureCrossError
        If either difference is <= 0 or NaN (no driving force at that end).

    Examples
    --------
    >>> log_mean(20.0, 20.0)
    20.0
    >>> round(log_mean(40.0, 10.0), 4)
    21.6404
    """
    a = as_float_array(dt1, "ΔT₁")
    b = as_float_array(dt2, "ΔT₂")
    for x, name in ((a, "ΔT₁"), (b, "ΔT₂")):
        ok = x > 0
        if not np.all(ok):
            bad = np.broadcast_to(x, ok.shape)[~ok].flat[0]
            raise TemperatureCrossError(f"end temperature difference {name} = {bad:g} K: a log mean needs "
                                        "both differences > 0 K (temperature cross or pinch at that end)")
    require(np.isfinite(a) & np.isfinite(b), np.where(np.isfinite(a), b, a),
             "end temperature differences must be finite, got {}")
    mean = 0.5 * (a + b)
    r = (a - b) / (a + b)
    small = np.abs(r) < 1e-4
    far = np.abs(r) > 0.5                  # ratio beyond 3: the plain form, logs taken apart (no overflow)
    rs = np.where(small | far, 0.25, r)
    ratio = np.where(small, 1.0 - r * r / 3 - 4 * r ** 4 / 45, rs / np.arctanh(rs))
    a_far, b_far = np.where(far, a, 2.0), np.where(far, b, 1.0)
    plain = (a_far - b_far) / (np.log(a_far) - np.log(b_far))
    return scalar_or_array(np.where(far, plain, mean * ratio))


def _end_differences(hot_in, hot_out, cold_in, cold_out, arrangement):
    th1, th2 = as_float_array(hot_in, "hot inlet temperature"), as_float_array(hot_out, "hot outlet temperature")
    tc1, tc2 = as_float_array(cold_in, "cold inlet temperature"), as_float_array(cold_out, "cold outlet temperature")
    for x, name in ((th1, "hot inlet"), (th2, "hot outlet"), (tc1, "cold inlet"), (tc2, "cold outlet")):
        require(np.isfinite(x), x, f"{name} temperature must be a finite number [°C], got {{}}")
    require(th1 >= th2, th1 - th2, "hot inlet is below hot outlet (hot side would be heated by {} K); "
             "give the hot side as inlet, outlet with inlet >= outlet")
    require(tc2 >= tc1, tc1 - tc2, "cold outlet is below cold inlet (cold side would be cooled by {} K); "
             "give the cold side as inlet, outlet with outlet >= inlet")
    if arrangement.flow_pattern is ExchangerType.CO_CURRENT:
        ends = ((th1 - tc1, "inlet end (hot inlet − cold inlet)"),
                (th2 - tc2, "outlet end (hot outlet − cold outlet)"))
    else:
        ends = ((th1 - tc2, "hot end (hot inlet − cold outlet)"),
                (th2 - tc1, "cold end (hot outlet − cold inlet)"))
    for dt, where in ends:
        ok = dt > 0
        if not np.all(ok):
            v = [np.broadcast_to(x, ok.shape)[~ok].flat[0] for x in (th1, th2, tc1, tc2, dt)]
            raise TemperatureCrossError(
                f"temperature cross in a {arrangement.value.replace('_', '-')} exchanger: hot "
                f"{v[0]:g} → {v[1]:g} °C, cold {v[2]:g} → {v[3]:g} °C; ΔT at the {where} = {v[4]:g} K, "
                "must be > 0 K")
    return ends[0][0], ends[1][0]


def lmtd(hot_in, hot_out, cold_in, cold_out, arrangement=ExchangerType.COUNTER_CURRENT):
    """Log-mean temperature difference of an exchanger from its four terminal temperatures.

    Counter-current: ΔT₁ = T_h,in − T_c,out, ΔT₂ = T_h,out − T_c,in.  Co-current:
    ΔT₁ = T_h,in − T_c,in, ΔT₂ = T_h,out − T_c,out.  For ``SHELL_AND_TUBE_1_2`` the counter-current
    value is returned, to be multiplied by the F-factor (the usual convention); a ``DOUBLE_PIPE`` is
    counter-current (its :attr:`~heatloom.model.exchangers.ExchangerType.flow_pattern`).  See
    :func:`log_mean`.

    Parameters
    ----------
    hot_in, hot_out, cold_in, cold_out : float or array
        Terminal temperatures [°C]; hot_in >= hot_out and cold_out >= cold_in.
    arrangement : ExchangerType, optional
        Kind of exchanger; counter-current by default [-].

    Returns
    -------
    float or ndarray
        LMTD [K].

    Raises
    ------
    TemperatureCrossError
        If ΔT <= 0 at either end; the message names the four temperatures.  Never returns a number
        for a cross: a design near one is sensitive to fouling and flow changes and needs review by a
        qualified engineer.

    Examples
    --------
    >>> round(lmtd(150, 60, 30, 100), 3)
    39.152
    >>> lmtd(100, 60, 20, 60)
    40.0
    """
    arrangement = enum_member(ExchangerType, arrangement, "flow arrangement")
    dt1, dt2 = _end_differences(hot_in, hot_out, cold_in, cold_out, arrangement)
    return log_mean(dt1, dt2)


def area_from_duty(duty, u, lmtd, f=1.0):
    """Heat transfer area needed for a duty.

    .. math:: A = \\frac{Q}{U\\,F\\,\\Delta T_{lm}}

    Parameters
    ----------
    duty : float or array
        Q [kW], >= 0.
    u : float or array
        Overall coefficient U [kW/(m²·K)], > 0.
    lmtd : float or array
        Log-mean temperature difference [K], > 0.
    f : float or array, optional
        LMTD correction factor F [-], 0 < F <= 1 (1 for counter-current).

    Returns
    -------
    float or ndarray
        A [m²].

    Examples
    --------
    >>> area_from_duty(1000.0, 0.5, 40.0)
    50.0
    >>> area_from_duty(1000.0, 0.5, 40.0, f=0.8)
    62.5
    """
    q, uu, dt, ff = _check_qudf(duty, u, lmtd, f, "duty", "Q", "kW")
    return scalar_or_array(q / (uu * ff * dt))


def duty_from_area(area, u, lmtd, f=1.0):
    """Duty of an exchanger of given area at a given LMTD: Q = U·A·F·ΔT_lm, the inverse of
    :func:`area_from_duty`.

    Parameters
    ----------
    area : float or array
        A [m²], >= 0.
    u, lmtd, f
        As in :func:`area_from_duty` [kW/(m²·K)], [K], [-].

    Returns
    -------
    float or ndarray
        Q [kW].

    Examples
    --------
    >>> duty_from_area(50.0, 0.5, 40.0)
    1000.0
    """
    a, uu, dt, ff = _check_qudf(area, u, lmtd, f, "area", "A", "m²")
    return scalar_or_array(uu * a * ff * dt)


def _check_qudf(x, u, dt, f, what, symbol, unit):
    x = as_float_array(x, what)
    uu, dt, ff = as_float_array(u, "U"), as_float_array(dt, "LMTD"), as_float_array(f, "F")
    require((x >= 0) & np.isfinite(x), x, f"{what} {symbol} must be >= 0 {unit} and finite, got {{}}")
    require((uu > 0) & np.isfinite(uu), uu, "overall coefficient U must be > 0 kW/(m²·K) and finite, got {}")
    require((dt > 0) & np.isfinite(dt), dt, "LMTD must be > 0 K and finite, got {}")
    require((ff > 0) & (ff <= 1), ff, "F-factor must be in (0, 1], got {}")
    return x, uu, dt, ff


# --------------------------------------------------------------------------------------------------
# F-factor and shells


def p_max(r, shells=1):
    """Largest P reachable by ``shells`` 1-2 shells in series at capacity ratio R (F → 0 there).

    One shell: P_max,1 = 2/(1 + R + √(1 + R²)) (where the denominator of the Bowman–Mueller–Nagle
    expression vanishes); N shells: the counter-current series of N shells each at P_max,1.

    Parameters
    ----------
    r : float or array
        R = (T_h,in − T_h,out)/(T_c,out − T_c,in) [-], >= 0.
    shells : int, optional
        Number of shells in series [-].

    Returns
    -------
    float or ndarray
        [-]

    Examples
    --------
    >>> round(p_max(1.0), 4)
    0.5858
    >>> round(p_max(1.0, shells=2), 4)
    0.7388
    """
    n = whole_number(shells, "number of shells")
    rr = as_float_array(r, "R")
    require((rr >= 0) & np.isfinite(rr), rr, "capacity ratio R must be >= 0 and finite, got {}")
    return scalar_or_array(series_effectiveness(p_max_1_2_shell(rr), rr, n))


def f_factor(r, p, shells=1):
    """LMTD correction factor F of 1-2 shell-and-tube exchangers (N shells in series).

    One shell (Underwood 1934; Bowman, Mueller & Nagle 1940, eq. for one shell pass and an even
    number of tube passes):

    .. math:: F = \\frac{\\sqrt{R^2+1}}{R-1}\\,\\ln\\frac{1-P}{1-RP}\\;\\Big/\\;
              \\ln\\frac{2-P\\,(R+1-\\sqrt{R^2+1})}{2-P\\,(R+1+\\sqrt{R^2+1})}

    evaluated as √(R²+1)·P/(1−P)·[log1p(u)/u] / ln{…}, u = P(1−R)/(1−P), which equals the usual R = 1
    limit √2·P/(1−P)/ln{…} exactly.  N shells: each shell has the same R and the per-shell P₁ of a
    counter-current series, P₁ = (W − 1)/(W − R), W = [(1 − RP)/(1 − P)]^{1/N}, and F_N(R, P) = F₁(R, P₁)
    (the same relation as Fakheri 2003).

    Parameters
    ----------
    r : float or array
        R [-], >= 0.
    p : float or array
        P [-], 0 <= P < :func:`p_max` (R, shells).
    shells : int, optional
        Number of shells in series [-].

    Returns
    -------
    float or ndarray
        F [-], in (0, 1].

    Raises
    ------
    TemperatureCrossError
        If P >= P_max: that many shells cannot reach these temperatures.

    References
    ----------
    Underwood, A.J.V. (1934) The calculation of the mean temperature difference in multi-pass heat
    exchangers, J. Inst. Petroleum Technologists 20, 145-158.
    Bowman, R.A., Mueller, A.C., Nagle, W.M. (1940) Mean temperature difference in design,
    Trans. ASME 62, 283-294.
    Fakheri, A. (2003) A general expression for the determination of the log mean temperature
    correction factor for shell and tube heat exchangers, J. Heat Transfer 125(3), 527-530.

    Examples
    --------
    >>> round(f_factor(1.0, 0.5), 4)
    0.8023
    >>> round(f_factor(1.0, 0.5, shells=2), 4)
    0.9568
    """
    n = whole_number(shells, "number of shells")
    rr, pp = as_float_array(r, "R"), as_float_array(p, "P")
    require((rr >= 0) & np.isfinite(rr), rr, "capacity ratio R must be >= 0 and finite, got {}")
    require(pp >= 0, pp, "P must be >= 0, got {}")
    pm = series_effectiveness(p_max_1_2_shell(rr), rr, n)
    ok = pp < pm
    if not np.all(ok):
        i = np.flatnonzero(~np.broadcast_to(ok, np.broadcast(rr, pp).shape).ravel())[0]
        rb, pb, mb = (np.broadcast_to(x, ok.shape).ravel()[i] for x in np.broadcast_arrays(rr, pp, pm))
        raise TemperatureCrossError(f"P = {pb:g} cannot be reached by {n} 1-2 shell(s) in series at R = {rb:g} "
                                    f"(largest reachable P = {mb:.6g}); more shells are needed")
    p1 = pp if n == 1 else unit_effectiveness_in_series(pp, rr, n)
    pos = p1 > 0
    p1s = np.where(pos, p1, 0.5 * p_max_1_2_shell(rr))
    f = counter_current_ntu(p1s, rr) / ntu_1_2_shell(p1s, rr)
    return scalar_or_array(np.where(pos, np.minimum(f, 1.0), 1.0))


def _r_and_p(hot_in, hot_out, cold_in, cold_out):
    th1, th2, tc1, tc2 = (finite_float(x, f"{name} temperature", "°C") for x, name in
                          ((hot_in, "hot inlet"), (hot_out, "hot outlet"), (cold_in, "cold inlet"),
                           (cold_out, "cold outlet")))
    _end_differences(th1, th2, tc1, tc2, ExchangerType.COUNTER_CURRENT)
    dh, dc = th1 - th2, tc2 - tc1
    if dh == 0 or dc == 0:
        return None, None           # one side isothermal: F = 1 whatever the arrangement
    return dh / dc, dc / (th1 - tc1)


def f_factor_from_temperatures(hot_in, hot_out, cold_in, cold_out, shells=1):
    """F-factor of 1-2 shells in series from the four terminal temperatures.

    R and P as in :func:`f_factor`; a side that does not change temperature (condensing or boiling)
    gives F = 1.

    Parameters
    ----------
    hot_in, hot_out, cold_in, cold_out : float
        [°C]
    shells : int, optional
        [-]

    Returns
    -------
    float
        F [-].

    Raises
    ------
    TemperatureCrossError
        For a counter-current cross, or when the shells cannot reach the temperatures.

    Examples
    --------
    >>> round(f_factor_from_temperatures(100, 60, 20, 60), 4)
    0.8023
    """
    r, p = _r_and_p(hot_in, hot_out, cold_in, cold_out)
    if r is None:
        whole_number(shells, "number of shells")
        return 1.0
    try:
        return float(f_factor(r, p, shells))
    except TemperatureCrossError as e:
        raise TemperatureCrossError(f"hot {hot_in:g} → {hot_out:g} °C, cold {cold_in:g} → {cold_out:g} °C: "
                                    f"{e.message}") from None


@dataclass(frozen=True)
class ShellDesign:
    """Number of 1-2 shells in series and the F that results (see :func:`shell_design`).

    Attributes
    ----------
    shells : int
        Shells in series [-].
    f : float
        F-factor of each shell, equal to the F of the whole series [-].
    r, p : float or None
        Overall R and P [-] (None when one side is isothermal).
    p_per_shell, p_max_per_shell : float or None
        P₁ of each shell and the largest P₁ one shell can reach [-].
    shells_real : float
        The real-valued count N = ln[(1−RP)/(1−P)]/ln W of Ahmad, Linnhoff & Smith [-].
    x_p, min_f : float
        The criteria used [-].
    set_by : str
        "X_P", "minimum F" or "isothermal side": which rule fixed the count.
    """

    shells: int
    f: float
    r: float | None
    p: float | None
    p_per_shell: float | None
    p_max_per_shell: float | None
    shells_real: float
    x_p: float
    min_f: float
    set_by: str

    def to_dict(self) -> dict:
        return asdict(self)

    def describe(self) -> str:
        """The result and the criteria in force, in plain words."""
        if self.set_by == "isothermal side":
            head = "1 shell: one side does not change temperature, so F = 1 in any arrangement."
        else:
            head = (f"{self.shells} 1-2 shell(s) in series, F = {self.f:.3f} per shell (R = {self.r:.3g}, "
                    f"P = {self.p:.3g}); count set by {self.set_by}.")
        return (f"{head} Criteria: P of each shell at most X_P = {self.x_p:g} of its maximum "
                f"(Ahmad, Linnhoff & Smith 1988), and F at least {self.min_f:g} (common practice). "
                f"{defaults.SAFETY_NOTE}")


def shell_design(hot_in, hot_out, cold_in, cold_out, *, x_p=defaults.X_P, min_f=defaults.MIN_F_FACTOR) -> ShellDesign:
    """Number of 1-2 shells in series by the X_P criterion, and F per shell.

    Ahmad, Linnhoff & Smith fix the P of each shell at X_P times the largest P a 1-2 shell can reach,
    P₁ = X_P·2/(R + 1 + √(R² + 1)); the real-valued number of shells in series N that this gives is
    :func:`heatloom.equipment.kernels.real_shell_count` (exact at R = 1).  The count is N rounded up;
    if F with that count is still below ``min_f`` (possible near R = 1), shells are added until it is
    not, and ``set_by`` says so.  A side that does not change temperature (condensing or boiling) needs
    one shell whatever P: F = 1 in any arrangement (common practice; at C_r = 0 every arrangement has
    ε = 1 − e^{−NTU}, Incropera, DeWitt, Bergman & Lavine 2007, Table 11.3).

    Parameters
    ----------
    hot_in, hot_out, cold_in, cold_out : float
        Terminal temperatures [°C]; must be feasible counter-currently.
    x_p : float, optional
        0 < X_P < 1 [-]; default :data:`heatloom.defaults.X_P`.
    min_f : float, optional
        0 < F_min < 1 [-]; default :data:`heatloom.defaults.MIN_F_FACTOR`.

    Returns
    -------
    ShellDesign

    References
    ----------
    Ahmad, S., Linnhoff, B., Smith, R. (1988) Design of multipass heat exchangers: an alternative
    approach, J. Heat Transfer 110(2), 304-309.
    Ahmad, S., Linnhoff, B., Smith, R. (1990) Cost optimum heat exchanger networks - 2. Targets and
    design for detailed capital cost models, Computers & Chemical Engineering 14(7), 751-767.

    Examples
    --------
    >>> d = shell_design(100, 60, 20, 60)
    >>> d.shells, round(d.f, 3), d.set_by
    (1, 0.802, 'X_P')
    >>> d = shell_design(100, 50, 20, 70)
    >>> d.shells, round(d.f, 3), round(d.shells_real, 3)
    (2, 0.871, 1.495)
    >>> shell_design(150, 150, 20, 60).shells
    1
    """
    x_p, min_f = float(x_p), float(min_f)
    if not (0 < x_p < 1):
        raise InputError(f"X_P must be in (0, 1), got {x_p:g}")
    if not (0 < min_f < 1):
        raise InputError(f"minimum F must be in (0, 1), got {min_f:g}")
    r, p = _r_and_p(hot_in, hot_out, cold_in, cold_out)
    if r is None:
        return ShellDesign(1, 1.0, None, None, None, None, 1.0, x_p, min_f, "isothermal side")
    n_real = float(real_shell_count(p, r, x_p))
    n = max(1, round_up_count(n_real))
    set_by = "X_P"
    f = float(f_factor(r, p, n))
    while f < min_f:
        n += 1
        set_by = "minimum F"
        f = float(f_factor(r, p, n))
    return ShellDesign(n, f, r, p, float(unit_effectiveness_in_series(p, r, n)), float(p_max_1_2_shell(r)), n_real,
                       x_p, min_f, set_by)
