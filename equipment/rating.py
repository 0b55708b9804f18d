"""Exchanger rating by ε-NTU: effectiveness, NTU, and the duty of an exchanger of known area.

Pure functions on floats (and numpy arrays where natural) in canonical units: °C, K for differences,
kW, kW/K, kW/(m²·K), m².  In ε-NTU, NTU = UA/C_min and C_r = C_min/C_max ∈ [0, 1]; several 1-2 shells
in series share the total area equally.  The kinds are those of
:class:`heatloom.model.exchangers.ExchangerType`, each rated by its flow pattern
(:attr:`~heatloom.model.exchangers.ExchangerType.flow_pattern`: a double pipe is counter-current); the
counter-current relations, the 1-2 shell and the series of shells are the kernels of
:mod:`heatloom.equipment.kernels`, exact at C_r = 1.

References
----------
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S. (2007) Fundamentals of Heat and Mass
Transfer, 6th ed., Wiley, Table 11.3 (the ε-NTU closed forms).
Underwood, A.J.V. (1934); Bowman, R.A., Mueller, A.C., Nagle, W.M. (1940): the 1-2 shell relation, as
cited in :mod:`heatloom.equipment.kernels`.

Sizing results are screening estimates: fouling, design margins, pressure and temperature limits
and any temperature cross must be checked, and designs checked against local codes and standards by
qualified, licensed engineers.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from ..errors import InputError, TemperatureCrossError
from ..model.exchangers import ExchangerType
from ..validation import (
    as_float_array,
    enum_member,
    finite_float,
    positive_float,
    require,
    scalar_or_array,
    whole_number,
)
from .kernels import (
    counter_current_effectiveness,
    counter_current_ntu,
    effectiveness_1_2_shell,
    ntu_1_2_shell,
    p_max_1_2_shell,
    series_effectiveness,
    unit_effectiveness_in_series,
)

__all__ = [
    "effectiveness_from_ntu",
    "ntu_from_effectiveness",
    "max_effectiveness",
    "Rating",
    "rate_exchanger",
]


# --------------------------------------------------------------------------------------------------
# ε-NTU


def _check_cr(cr):
    cr = as_float_array(cr, "capacity ratio C_r")
    require((cr >= 0) & (cr <= 1), cr, "capacity ratio C_r = C_min/C_max must be in [0, 1], got {}")
    return cr


def effectiveness_from_ntu(ntu, capacity_ratio, arrangement=ExchangerType.COUNTER_CURRENT, *, shells=1):
    """Thermal effectiveness ε = Q/[C_min(T_h,in − T_c,in)] from NTU = UA/C_min and C_r = C_min/C_max.

    Counter-current: ε = [1 − e^{−NTU(1−C_r)}]/[1 − C_r e^{−NTU(1−C_r)}] (NTU/(1 + NTU) at C_r = 1,
    reached continuously).  Co-current: ε = [1 − e^{−NTU(1+C_r)}]/(1 + C_r).  One 1-2 shell:
    ε₁ = 2/[1 + C_r + S·coth(NTU₁·S/2)], S = √(1 + C_r²); N shells in series, each with NTU₁ = NTU/N:
    ε = (Wᴺ − 1)/(Wᴺ − C_r), W = (1 − ε₁C_r)/(1 − ε₁) (Nε₁/[1 + (N−1)ε₁] at C_r = 1).  These are the
    standard closed forms, e.g. Incropera, DeWitt, Bergman & Lavine (2007), Fundamentals of Heat and
    Mass Transfer, 6th ed., Wiley, Table 11.3.

    Parameters
    ----------
    ntu : float or array
        NTU [-], >= 0.
    capacity_ratio : float or array
        C_r [-], in [0, 1].
    arrangement : ExchangerType, optional
        Kind of exchanger, rated by its flow pattern; counter-current by default [-].
    shells : int, optional
        Shells in series, for ``SHELL_AND_TUBE_1_2`` only [-].

    Returns
    -------
    float or ndarray
        ε [-].

    Examples
    --------
    >>> round(effectiveness_from_ntu(1.0, 1.0), 6)
    0.5
    >>> round(effectiveness_from_ntu(1.0, 0.5, ExchangerType.CO_CURRENT), 4)
    0.5179
    """
    pattern = enum_member(ExchangerType, arrangement, "flow arrangement").flow_pattern
    n = whole_number(shells, "number of shells")
    ntu = as_float_array(ntu, "NTU")
    require((ntu >= 0) & np.isfinite(ntu), ntu, "NTU must be >= 0 and finite, got {}")
    cr = _check_cr(capacity_ratio)
    if pattern is ExchangerType.COUNTER_CURRENT:
        return scalar_or_array(counter_current_effectiveness(ntu, cr))
    if pattern is ExchangerType.CO_CURRENT:
        return scalar_or_array(-np.expm1(-ntu * (1.0 + cr)) / (1.0 + cr))
    e1 = effectiveness_1_2_shell(ntu / n, cr)
    return scalar_or_array(e1 if n == 1 else series_effectiveness(e1, cr, n))


def max_effectiveness(capacity_ratio, arrangement=ExchangerType.COUNTER_CURRENT, *, shells=1):
    """Effectiveness reached with infinite area [-] (the supremum; never reached).

    Counter-current 1; co-current 1/(1 + C_r); 1-2 shells: :func:`p_max`.

    Examples
    --------
    >>> max_effectiveness(1.0, ExchangerType.CO_CURRENT)
    0.5
    """
    pattern = enum_member(ExchangerType, arrangement, "flow arrangement").flow_pattern
    n = whole_number(shells, "number of shells")
    cr = _check_cr(capacity_ratio)
    if pattern is ExchangerType.COUNTER_CURRENT:
        return scalar_or_array(np.ones_like(cr))
    if pattern is ExchangerType.CO_CURRENT:
        return scalar_or_array(1.0 / (1.0 + cr))
    return scalar_or_array(series_effectiveness(p_max_1_2_shell(cr), cr, n))


def ntu_from_effectiveness(effectiveness, capacity_ratio, arrangement=ExchangerType.COUNTER_CURRENT, *,
                           shells=1):
    """NTU needed for an effectiveness: the inverse of :func:`effectiveness_from_ntu`.

    Counter-current: NTU = ln[(1 − εC_r)/(1 − ε)]/(1 − C_r) (ε/(1 − ε) at C_r = 1, reached continuously).
    Co-current: NTU = −ln[1 − ε(1 + C_r)]/(1 + C_r).  1-2 shells: ε₁ of each shell from the series
    relation, then NTU₁ = ln{[2 − ε₁(1 + C_r − S)]/[2 − ε₁(1 + C_r + S)]}/S and NTU = N·NTU₁.

    Parameters
    ----------
    effectiveness : float or array
        ε [-], 0 <= ε < :func:`max_effectiveness`.
    capacity_ratio : float or array
        C_r [-], in [0, 1].
    arrangement : ExchangerType, optional
        Kind of exchanger, rated by its flow pattern; counter-current by default [-].
    shells : int, optional

    Returns
    -------
    float or ndarray
        NTU [-].

    Raises
    ------
    InputError
        If ε is not reachable by the arrangement (the message gives the maximum).

    Examples
    --------
    >>> round(ntu_from_effectiveness(0.5, 1.0), 6)
    1.0
    """
    arrangement = enum_member(ExchangerType, arrangement, "flow arrangement")
    pattern = arrangement.flow_pattern
    n = whole_number(shells, "number of shells")
    eps = as_float_array(effectiveness, "effectiveness")
    cr = _check_cr(capacity_ratio)
    require(eps >= 0, eps, "effectiveness must be >= 0, got {}")
    top = as_float_array(max_effectiveness(cr, pattern, shells=n), "maximum effectiveness")
    ok = eps < top
    if not np.all(ok):
        e, c, m = (np.broadcast_to(x, ok.shape)[~ok].flat[0] for x in np.broadcast_arrays(eps, cr, top))
        extra = f" with {n} shell(s)" if pattern is ExchangerType.SHELL_AND_TUBE_1_2 else ""
        raise InputError(f"effectiveness {e:g} is not reachable by a {arrangement.value.replace('_', '-')} "
                         f"exchanger{extra} at C_r = {c:g}: it must be below {m:.6g}")
    if pattern is ExchangerType.COUNTER_CURRENT:
        return scalar_or_array(counter_current_ntu(eps, cr))
    if pattern is ExchangerType.CO_CURRENT:
        return scalar_or_array(-np.log1p(-eps * (1.0 + cr)) / (1.0 + cr))
    e1 = eps if n == 1 else unit_effectiveness_in_series(eps, cr, n)
    return scalar_or_array(n * ntu_1_2_shell(e1, cr))


@dataclass(frozen=True)
class Rating:
    """Performance of an exchanger of known area (see :func:`rate_exchanger`).

    Attributes: ``duty`` [kW], ``hot_out``, ``cold_out`` [°C], ``effectiveness`` [-], ``ntu`` [-]
    (on C_min), ``capacity_ratio`` [-], ``arrangement``, ``shells``.
    """

    duty: float
    hot_out: float
    cold_out: float
    effectiveness: float
    ntu: float
    capacity_ratio: float
    arrangement: ExchangerType
    shells: int

    def to_dict(self) -> dict:
        d = asdict(self)
        d["arrangement"] = self.arrangement.value
        return d


def rate_exchanger(hot_in, cold_in, hot_heat_capacity_flow, cold_heat_capacity_flow, u, area,
                   arrangement=ExchangerType.COUNTER_CURRENT, *, shells=1) -> Rating:
    """Duty and outlet temperatures of an exchanger of known area (ε-NTU rating).

    .. math:: NTU = UA/C_{min},\\quad Q = \\varepsilon\\,C_{min}\\,(T_{h,in} - T_{c,in}),\\quad
              T_{h,out} = T_{h,in} - Q/C_h,\\quad T_{c,out} = T_{c,in} + Q/C_c

    Parameters
    ----------
    hot_in, cold_in : float
        Inlet temperatures [°C]; hot_in >= cold_in.
    hot_heat_capacity_flow, cold_heat_capacity_flow : float
        CP of each side [kW/K], > 0.
    u : float
        [kW/(m²·K)], > 0.
    area : float
        [m²], >= 0 (for ``shells`` > 1, the total area of all shells).
    arrangement : ExchangerType, optional
        Kind of exchanger, rated by its flow pattern; counter-current by default [-].
    shells : int, optional

    Returns
    -------
    Rating

    Raises
    ------
    TemperatureCrossError
        If the hot inlet is colder than the cold inlet.

    Examples
    --------
    >>> r = rate_exchanger(150.0, 30.0, 2.0, 2.0, 0.5, 8.0)
    >>> round(r.duty, 3), round(r.hot_out, 3), round(r.cold_out, 3)
    (160.0, 70.0, 110.0)
    """
    arrangement = enum_member(ExchangerType, arrangement, "flow arrangement")
    n = whole_number(shells, "number of shells")
    th = finite_float(hot_in, "hot inlet temperature", "°C")
    tc = finite_float(cold_in, "cold inlet temperature", "°C")
    ch = positive_float(hot_heat_capacity_flow, "hot heat capacity flow rate", "kW/K")
    cc = positive_float(cold_heat_capacity_flow, "cold heat capacity flow rate", "kW/K")
    uu = positive_float(u, "overall coefficient U", "kW/(m²·K)")
    a = finite_float(area, "area", "m²")
    if not a >= 0:
        raise InputError(f"area must be >= 0 m², got {a:g}")
    if th < tc:
        raise TemperatureCrossError(f"hot inlet {th:g} °C is below cold inlet {tc:g} °C: the exchanger "
                                    "would heat the hot side; swap the sides or drop the match")
    cmin, cmax = min(ch, cc), max(ch, cc)
    cr, ntu = cmin / cmax, uu * a / cmin
    eps = float(effectiveness_from_ntu(ntu, cr, arrangement, shells=n))
    q = eps * cmin * (th - tc)
    return Rating(q, th - q / ch, tc + q / cc, eps, ntu, cr, arrangement, n)
