"""Capital and cost targets before design: minimum area, units and shells, capital and total annual cost.

Given the energy targets of a stream table at one ΔTmin (:func:`heatloom.pinch.target`), this module
builds the *balanced* composite curves (process streams plus the utilities at their target duties, so
that both curves span the same enthalpy) and reads off, before any network exists:

* the minimum heat-transfer area by the Townsend–Linnhoff ("Bath") formula, vertical heat transfer
  between the balanced composites with individual film coefficients (:func:`bath_area`);
* the minimum number of units, N − 1 overall and per pinch subnetwork for maximum energy recovery
  (:func:`unit_targets`), from Euler's network theorem;
* the minimum number of 1-2 shells by the interval method of Ahmad & Smith with the X_P criterion of
  Ahmad, Linnhoff & Smith (:func:`shell_target`);
* capital, energy and total annual cost targets (:func:`area_targets`).

Utilities enter the balanced composites as streams: those of the targets' utility placement when
utility levels were given, else the two ideal utilities of :func:`heatloom.pinch.utilities.ideal_utilities`
(isothermal, :data:`heatloom.defaults.IDEAL_UTILITY_MARGIN` plus ΔTmin beyond the process, with the
stated default prices and film coefficients), so targets and designs see the same utilities.

The log mean and the shell count are the public kernels of :mod:`heatloom.equipment`, the layer above
this one; the cost settings come from :mod:`heatloom.model` and the defaults from :mod:`heatloom.defaults`.

Targets are screening estimates (clean surfaces, counter-current, no fouling allowance): designs must be
checked against local codes and standards by qualified, licensed engineers.

References
----------
.. [1] Townsend, D. W., Linnhoff, B. (1984). Surface area targets for heat exchanger networks. IChemE
   11th Annual Research Meeting, Bath (the "Bath formula").
.. [2] Linnhoff, B., Ahmad, S. (1990). Cost optimum heat exchanger networks - 1. Minimum energy and
   capital using simple models for capital cost. Computers & Chemical Engineering 14(7), 729-750.
   doi:10.1016/0098-1354(90)87083-2
.. [3] Linnhoff, B., Mason, D. R., Wardle, I. (1979). Understanding heat exchanger networks. Computers &
   Chemical Engineering 3, 295-302 (Euler's theorem, N − 1 units).
.. [4] Ahmad, S., Smith, R. (1989). Targets and design for minimum number of shells in heat exchanger
   networks. Chemical Engineering Research and Design 67, 481-494.
.. [5] Ahmad, S., Linnhoff, B., Smith, R. (1988). Design of multipass heat exchangers: an alternative
   approach. Journal of Heat Transfer 110(2), 304-309.
"""

from __future__ import annotations

import enum
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .. import defaults
from ..equipment.kernels import real_shell_count
from ..equipment.sizing import log_mean
from ..errors import InputError, TemperatureCrossError
from ..model import StreamTable, Utility
from ..validation import enum_member, round_up_count
from .problem_table import shifted_ranges, zero_tolerance
from .targets import Targets

__all__ = [
    "CapitalBasis",
    "BalancedComposites",
    "AreaTargets",
    "missing_film_coefficients",
    "target_utilities",
    "balanced_composites",
    "bath_area",
    "unit_targets",
    "shell_target",
    "area_targets",
]


class CapitalBasis(enum.Enum):
    """How many pieces of equipment the target area is shared among for the capital cost target.

    ``UNITS_MER``: the minimum units of a maximum-energy-recovery network (N − 1 per pinch subnetwork),
    the usual choice (Linnhoff & Ahmad 1990); ``UNITS``: the overall N − 1; ``SHELLS``: the 1-2 shell
    target, the cost law then applying per shell.
    """

    UNITS_MER = "units_mer"
    UNITS = "units"
    SHELLS = "shells"


@dataclass(frozen=True, eq=False)
class BalancedComposites:
    """The balanced composite curves cut into enthalpy intervals where both are linear.

    Interval *k* runs from ``enthalpy[k]`` to ``enthalpy[k + 1]``; at its high-enthalpy end the hot
    composite is at ``hot_high[k]`` and the cold one at ``cold_high[k]``, at its low end at
    ``hot_low[k]`` and ``cold_low[k]`` (so the hot side enters at ``hot_high`` and the cold side at
    ``cold_low``: counter-current).

    Attributes
    ----------
    dt_min : float
        [K]
    enthalpy : ndarray
        Interval boundaries, ascending from 0 [kW], length K + 1.
    hot_high, hot_low, cold_high, cold_low : ndarray
        Composite temperatures at the interval ends [°C], length K.
    hot_resistance, cold_resistance : ndarray
        Σ q_i/h_i over the hot (cold) streams and utilities in each interval [m²·K].
    hot_count, cold_count : ndarray
        Hot (cold) streams and utilities present in each interval [-].
    utilities : tuple of (Utility, float)
        The utilities included and their duties [kW].
    """

    dt_min: float
    enthalpy: np.ndarray
    hot_high: np.ndarray
    hot_low: np.ndarray
    cold_high: np.ndarray
    cold_low: np.ndarray
    hot_resistance: np.ndarray
    cold_resistance: np.ndarray
    hot_count: np.ndarray
    cold_count: np.ndarray
    utilities: tuple

    @property
    def duty(self) -> np.ndarray:
        """Enthalpy change of each interval [kW]."""
        return np.diff(self.enthalpy)

    def lmtd(self) -> np.ndarray:
        """Counter-current log-mean temperature difference of each interval [K].

        Raises
        ------
        TemperatureCrossError
            Where the curves touch (ΔT = 0: the area would be infinite).
        """
        dt1, dt2 = self._check_approach()
        return np.asarray(log_mean(dt1, dt2), dtype=float)

    def _check_approach(self) -> tuple[np.ndarray, np.ndarray]:
        """ΔT at the high- and low-enthalpy end of each interval [K], all > 0, or TemperatureCrossError."""
        dt1 = self.hot_high - self.cold_high
        dt2 = self.hot_low - self.cold_low
        bad = ~((dt1 > 0) & (dt2 > 0))
        if np.any(bad):
            k = int(np.flatnonzero(bad)[0])
            h = self.enthalpy[k + 1] if not dt1[k] > 0 else self.enthalpy[k]
            dt = dt1[k] if not dt1[k] > 0 else dt2[k]
            raise TemperatureCrossError(
                f"the balanced composite curves touch or cross at {h:.6g} kW (ΔT = {dt:.3g} K) at ΔTmin "
                f"{self.dt_min:g} K: the area target would be infinite; ΔTmin (and every ΔTmin "
                "contribution) must leave a positive approach")
        return dt1, dt2

    def to_frame(self):
        """One row per enthalpy interval, units in the headers."""
        import pandas as pd

        return pd.DataFrame({
            "H_low [kW]": self.enthalpy[:-1], "H_high [kW]": self.enthalpy[1:],
            "hot_high [°C]": self.hot_high, "hot_low [°C]": self.hot_low,
            "cold_high [°C]": self.cold_high, "cold_low [°C]": self.cold_low,
            "sum q/h hot [m²K]": self.hot_resistance, "sum q/h cold [m²K]": self.cold_resistance,
            "hot streams [-]": self.hot_count, "cold streams [-]": self.cold_count,
        })


@dataclass(frozen=True)
class AreaTargets:
    """Area, units, shells and cost targets of one stream table at one ΔTmin (see :func:`area_targets`).

    Attributes
    ----------
    dt_min : float
        [K]
    area : float
        Minimum area, Townsend–Linnhoff formula [m²].
    units : int
        Overall minimum units N − 1 [-].
    units_mer : int
        Minimum units of a maximum-energy-recovery network, N − 1 per pinch subnetwork [-].
    shells : int
        Minimum number of 1-2 shells [-].
    shells_real : float
        The real-valued shell count before rounding up [-].
    capital_cost : float
        Annualised capital cost target [money/year].
    energy_cost : float
        Utility duties × prices [money/year].
    total_annual_cost : float
        capital_cost + energy_cost [money/year].
    hot_utility, cold_utility : float
        [kW]
    currency : str
    capital_basis : CapitalBasis
    basis : str
        How every number was obtained, in plain words (methods, defaults, caution).
    """

    dt_min: float
    area: float
    units: int
    units_mer: int
    shells: int
    shells_real: float
    capital_cost: float
    energy_cost: float
    total_annual_cost: float
    hot_utility: float
    cold_utility: float
    currency: str
    capital_basis: CapitalBasis
    basis: str

    def to_dict(self) -> dict:
        return {"dtmin": self.dt_min, "area": self.area, "units": self.units, "units_mer": self.units_mer,
                "shells": self.shells, "shells_real": self.shells_real, "capital_cost": self.capital_cost,
                "energy_cost": self.energy_cost, "total_annual_cost": self.total_annual_cost,
                "hot_utility": self.hot_utility, "cold_utility": self.cold_utility,
                "currency": self.currency, "capital_basis": self.capital_basis.value, "basis": self.basis,
                "units_of_measure": {"area": "m²", "dtmin": "K", "duty": "kW",
                                     "costs": f"{self.currency} per year"}}


# --------------------------------------------------------------------------------------------------
# utilities and film coefficients


def target_utilities(targets: Targets) -> tuple[tuple[Utility, float], ...]:
    """The utilities of a targeting run and their duties [kW], zero duties left out.

    The placed levels when the targets were computed with utilities; else the ideal utilities of
    :func:`heatloom.pinch.utilities.ideal_utilities` at the minimum duties.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 20], [40, 120], [1.0, 1.5])
    >>> [(u.name, u.supply_temperature, d) for u, d in target_utilities(target(s, 10))]
    [('hot utility (assumed)', 150.0, 40.0)]
    """
    tol = targets.table.tolerance
    if targets.placement is not None:
        return tuple((d.utility, float(d.duty)) for d in targets.placement.duties if d.duty > tol)
    from .utilities import ideal_utilities

    hot, cold = ideal_utilities(targets.streams, targets.dt_min)
    return tuple((u, float(q)) for u, q in ((hot, targets.hot_utility), (cold, targets.cold_utility)) if q > tol)


def missing_film_coefficients(streams: StreamTable, utilities: Sequence[Utility] = ()) -> list[str]:
    """Streams (any segment) and utilities without a film coefficient, in table order.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> missing_film_coefficients(StreamTable.from_arrays(["H", "C"], [150, 20], [40, 120], [1.0, 1.5],
    ...                                                   film_coefficient=[0.5, None]))
    ["stream 'C'"]
    """
    out = [f"stream '{s.name}'" for s in streams if any(g.film_coefficient is None for g in s.segments)]
    return out + [f"utility '{u.name}'" for u in utilities if u.film_coefficient is None]


def _default_h(default_film_coefficient: float | None) -> float | None:
    if default_film_coefficient is None:
        return None
    h = float(default_film_coefficient)
    if not (h > 0) or not math.isfinite(h):
        raise InputError(f"default film coefficient must be a finite number > 0 kW/(m²·K), got "
                         f"{default_film_coefficient!r}")
    return h


# --------------------------------------------------------------------------------------------------
# balanced composite curves


def _curve(lo, hi, cp, inv_h, iso_t, iso_q, iso_inv_h):
    """One composite, ascending in temperature, as a chain of linear pieces.

    Sloped pieces come from segments (range lo..hi, CP, 1/h); isothermal pieces from utilities with
    equal supply and target temperatures (temperature, duty, 1/h).  Returns the piece ends in
    enthalpy and temperature and, per piece, its duty, Σ q/h and the number of streams in it.
    """
    temps = np.unique(np.concatenate([lo, hi, iso_t]))
    m = temps.size
    il = np.searchsorted(temps, lo)
    iu = np.searchsorted(temps, hi)

    def between(w):  # sum of w over the segments active in each interval temps[j]..temps[j+1]
        d = np.bincount(il, weights=w, minlength=m) - np.bincount(iu, weights=w, minlength=m)
        return np.cumsum(d)[:-1]

    cp_sum = between(cp)
    g_sum = between(cp * inv_h)
    n_sum = np.rint(between(np.ones_like(cp))).astype(int)
    ii = np.searchsorted(temps, iso_t)
    q_iso = np.bincount(ii, weights=iso_q, minlength=m)
    r_iso = np.bincount(ii, weights=iso_q * iso_inv_h, minlength=m)
    n_iso = np.bincount(ii, minlength=m).astype(int)
    # pieces: isothermal at temps[0], sloped temps[0]..temps[1], isothermal at temps[1], ...
    widths = np.diff(temps)
    duty = np.empty(2 * m - 1)
    resist = np.empty(2 * m - 1)
    count = np.empty(2 * m - 1, dtype=int)
    t_start = np.empty(2 * m - 1)
    t_end = np.empty(2 * m - 1)
    duty[0::2], resist[0::2], count[0::2] = q_iso, r_iso, n_iso
    t_start[0::2] = temps
    t_end[0::2] = temps
    duty[1::2] = cp_sum * widths
    resist[1::2] = g_sum * widths
    count[1::2] = n_sum
    t_start[1::2] = temps[:-1]
    t_end[1::2] = temps[1:]
    duty = np.maximum(duty, 0.0)            # rounding of the running sums can leave -1e-16
    ends = np.cumsum(duty)
    return ends, duty, resist, count, t_start, t_end


def _pieces_of(ends, duty, resist, count, t_start, t_end, mid, lo_h, hi_h):
    """Temperatures at lo_h/hi_h, Σ q/h and stream count of the intervals whose midpoints are ``mid``."""
    k = np.searchsorted(ends, mid, side="left")           # first piece ending beyond the midpoint
    k = np.minimum(k, ends.size - 1)
    start = ends[k] - duty[k]
    span = np.where(duty[k] > 0, duty[k], 1.0)
    slope = (t_end[k] - t_start[k]) / span
    t_lo = t_start[k] + slope * (lo_h - start)
    t_hi = t_start[k] + slope * (hi_h - start)
    share = np.where(duty[k] > 0, (hi_h - lo_h) / span, 0.0)
    return t_lo, t_hi, resist[k] * share, count[k]


def balanced_composites(targets: Targets, *, default_film_coefficient: float | None = None
                        ) -> BalancedComposites:
    """Balanced composite curves (utilities included) cut where either curve has a breakpoint.

    Each composite is built from the segments of its streams (and utilities) in temperature order; in
    an enthalpy interval where both curves are linear, a sloped part of a curve holds the streams active
    over its temperature range, each with q_i = CP_i·ΔT, and an isothermal utility holds its share of
    the duty.  Hot composite and cold composite both start at H = 0 at their cold ends.

    Parameters
    ----------
    targets : Targets
        Energy targets (:func:`heatloom.pinch.target`), with or without utility levels.
    default_film_coefficient : float, optional
        Film coefficient assumed where a stream or utility in use has none [kW/(m²·K)].

    Returns
    -------
    BalancedComposites

    Raises
    ------
    InputError
        Film coefficients missing (the message names the streams and utilities) and no default.

    Examples
    --------
    One hot stream against one cold stream and a cold utility at 20 °C (invented numbers):

    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> cw = Utility("cold water", 20, 20, 10.0, UtilityKind.COLD, 1.0)
    >>> b = balanced_composites(target(s, 10, [cw]))
    >>> b.enthalpy.tolist(), b.hot_high.tolist(), b.cold_low.tolist()
    ([0.0, 40.0, 220.0], [60.0, 150.0], [20.0, 30.0])
    """
    default_h = _default_h(default_film_coefficient)
    streams = targets.streams
    used = target_utilities(targets)
    missing = missing_film_coefficients(streams, [u for u, _ in used])
    if missing and default_h is None:
        raise InputError(f"film coefficient h missing for {', '.join(missing)}: the area target needs one for "
                         "every stream and every utility in use (add an h column in kW/(m²·K), or assume one "
                         "with a default film coefficient)")
    a = streams.arrays
    h = np.where(np.isnan(a.film_coefficient), np.nan if default_h is None else default_h, a.film_coefficient)
    lo = np.minimum(a.supply_temperature, a.target_temperature)
    hi = np.maximum(a.supply_temperature, a.target_temperature)
    sides = []
    for hot in (True, False):
        sel = a.is_hot == hot
        seg_lo, seg_hi, seg_cp, seg_inv = [lo[sel]], [hi[sel]], [a.heat_capacity_flow[sel]], [1.0 / h[sel]]
        iso_t, iso_q, iso_inv = [], [], []
        for u, q in used:
            if u.is_hot != hot:
                continue
            uh = u.film_coefficient if u.film_coefficient is not None else default_h
            if u.hottest > u.coldest:
                seg_lo.append([u.coldest])
                seg_hi.append([u.hottest])
                seg_cp.append([q / (u.hottest - u.coldest)])
                seg_inv.append([1.0 / uh])
            else:
                iso_t.append(u.hottest)
                iso_q.append(q)
                iso_inv.append(1.0 / uh)
        sides.append(_curve(np.concatenate(seg_lo), np.concatenate(seg_hi), np.concatenate(seg_cp),
                            np.concatenate(seg_inv), np.array(iso_t, float), np.array(iso_q, float),
                            np.array(iso_inv, float)))
    hot_curve, cold_curve = sides
    total = min(hot_curve[0][-1], cold_curve[0][-1])
    tol = zero_tolerance(targets.table.duty_scale + total)
    points = np.unique(np.concatenate([[0.0], hot_curve[0], cold_curve[0]]))
    points = points[points < total - tol]
    points = np.append(points, total)
    keep = np.concatenate([[True], np.diff(points) > tol])   # merge points closer than the tolerance
    keep[-1] = True
    points = points[keep]
    if points.size > 2 and points[-1] - points[-2] <= tol:
        points = np.delete(points, -2)
    lo_h, hi_h = points[:-1], points[1:]
    mid = 0.5 * (lo_h + hi_h)
    h_lo, h_hi, h_r, h_n = _pieces_of(*hot_curve, mid, lo_h, hi_h)
    c_lo, c_hi, c_r, c_n = _pieces_of(*cold_curve, mid, lo_h, hi_h)
    return BalancedComposites(float(targets.dt_min), points, h_hi, h_lo, c_hi, c_lo, h_r, c_r, h_n, c_n, used)


# --------------------------------------------------------------------------------------------------
# area, units, shells


def bath_area(composites: BalancedComposites) -> float:
    """Minimum area of vertical heat transfer between the balanced composites (Townsend–Linnhoff).

    .. math::

        A_{min} = \\sum_{k} \\frac{1}{\\Delta T_{LM,k}} \\sum_{i} \\frac{q_{i,k}}{h_i}

    over the enthalpy intervals *k* where both balanced composites are linear, *i* running over every
    hot and cold stream and utility present in *k*, q_{i,k} its heat in the interval [kW] and h_i its
    film coefficient [kW/(m²·K)] (Townsend & Linnhoff 1984; Linnhoff & Ahmad 1990, eq. 1).  With one
    film coefficient h everywhere this is Σ Q_k/(U ΔT_LM,k) with U = h/2.  Counter-current, clean
    surfaces; exact minimum when all film coefficients are equal, a close estimate otherwise.

    Parameters
    ----------
    composites : BalancedComposites
        From :func:`balanced_composites`.

    Returns
    -------
    float
        [m²]

    Examples
    --------
    The example of :func:`balanced_composites`: 40 kW at an LMTD of 20/ln 2 K and 180 kW at 30 K, with
    U = 0.5 kW/(m²·K): 40/(0.5·28.854) + 180/(0.5·30) = 14.773 m².

    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> cw = Utility("cold water", 20, 20, 10.0, UtilityKind.COLD, 1.0)
    >>> round(bath_area(balanced_composites(target(s, 10, [cw]))), 3)
    14.773
    """
    if composites.enthalpy.size < 2:
        return 0.0
    return float(np.sum((composites.hot_resistance + composites.cold_resistance) / composites.lmtd()))


def _regions(targets: Targets) -> list[tuple[float, float]]:
    """Shifted (top, bottom) of each pinch subnetwork, hottest first."""
    cuts = [p.shifted for p in targets.pinches]
    bounds = [math.inf, *cuts, -math.inf]
    return list(zip(bounds[:-1], bounds[1:]))


def unit_targets(targets: Targets) -> tuple[int, int]:
    """Minimum number of units: overall, and for maximum energy recovery.

    Euler's network theorem U = N + L − S (units, streams and utilities N, loops L, independent
    subnetworks S) gives, with no loops and one subnetwork, U_min = N − 1 (Linnhoff, Mason & Wardle
    1979).  For maximum energy recovery no heat crosses a pinch, so the rule holds on each side of every
    pinch: U_min,MER = Σ_regions (N_r − 1), N_r counting the streams present in the region and the hot
    utilities above the hottest pinch and cold utilities below the coldest (as design places them).
    Where a subset of streams balances exactly (S > 1) a network can use fewer units, N − S; such
    subsets are not searched for here, so both figures are the usual targets, not strict lower bounds.

    Parameters
    ----------
    targets : Targets

    Returns
    -------
    units, units_mer : int
        [-]

    Examples
    --------
    Sinnott's four streams (Coulson & Richardson Vol. 6, ch. 3) at ΔTmin 10 K: with both utilities
    N = 6, so 5 units overall; above the 90/80 °C pinch four streams and the hot utility (4 units), below
    it three streams (stream 4 starts at the pinch) and the cold utility (3 units).

    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch import target
    >>> t = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> unit_targets(target(t, 10))
    (5, 7)
    """
    streams = targets.streams
    hot_u = sum(1 for u, _ in target_utilities(targets) if u.is_hot)
    cold_u = sum(1 for u, _ in target_utilities(targets) if not u.is_hot)
    n = len(streams) + hot_u + cold_u
    units = max(n - 1, 0)
    a = streams.arrays
    upper, lower = shifted_ranges(a, targets.dt_min)
    regions = _regions(targets)
    mer = 0
    t_tol = 1e-9 * max(1.0, float(np.max(np.abs(upper))))
    for r, (top, bottom) in enumerate(regions):
        overlap = np.minimum(upper, top) - np.maximum(lower, bottom)
        present = len(set(a.stream_index[overlap > t_tol].tolist()))
        present += (hot_u if r == 0 else 0) + (cold_u if r == len(regions) - 1 else 0)
        mer += max(present - 1, 0)
    return units, mer


def _real_shells(hot_in, hot_out, cold_in, cold_out, x_p: float) -> np.ndarray:
    """Real-valued 1-2 shells in series of each interval (see :func:`shell_target`).

    A side that does not change temperature gives R = 0 after swapping sides (F is unchanged), P being
    the other side's change over the inlet difference: N = ln(1 − P)/ln(1 − X_P); both isothermal: 0.
    Along each run of intervals where one side stays at one temperature (one isothermal piece of a
    composite) the counts, which add up along the run as NTU does, are scaled to sum to one at most.
    """
    hot_in, hot_out, cold_in, cold_out = (np.asarray(x, dtype=float) for x in (hot_in, hot_out, cold_in, cold_out))
    span = hot_in - cold_in
    dh, dc = hot_in - hot_out, cold_out - cold_in
    small = 1e-9 * np.maximum(span, 1.0)
    iso_h, iso_c = dh <= small, dc <= small
    general = ~(iso_h | iso_c)
    r = np.where(general, dh / np.where(iso_c, 1.0, dc), 0.0)
    change = np.where(general, dc, np.where(iso_h & iso_c, 0.0, np.maximum(dh, dc)))
    n = np.asarray(real_shell_count(change / span, r, x_p), dtype=float)
    for iso, level in ((iso_h & ~iso_c, hot_in), (iso_c & ~iso_h, cold_in)):
        n = _one_shell_per_isothermal_run(n, iso, level, small)
    return n


def _one_shell_per_isothermal_run(n, iso, level, small) -> np.ndarray:
    """``n`` scaled so that each run of consecutive ``iso`` intervals at one ``level`` sums to one at most."""
    if not iso.any():
        return n
    same_as_before = np.zeros_like(iso)
    same_as_before[1:] = iso[1:] & iso[:-1] & (np.abs(level[1:] - level[:-1]) <= small[1:])
    run = np.cumsum(iso & ~same_as_before) - 1
    total = np.bincount(run[iso], weights=n[iso])
    scale = np.ones_like(n)
    scale[iso] = 1.0 / np.maximum(total[run[iso]], 1.0)
    return n * scale


def shell_target(composites: BalancedComposites, *, x_p: float | None = None) -> tuple[int, float]:
    """Minimum number of 1-2 shells (Ahmad & Smith 1989), with the X_P criterion.

    In every enthalpy interval *k* of the balanced composites the real-valued number of 1-2 shells in
    series N_k that takes the composites from their interval inlet to outlet temperatures, each shell at
    P = X_P·P_max (Ahmad, Linnhoff & Smith 1988; :func:`heatloom.equipment.real_shell_count`, the count
    of :func:`heatloom.equipment.shell_design`), is multiplied by the number of units the interval needs,
    S_k − 1 (S_k streams and utilities present):

    .. math:: N_{shells} = \\Big\\lceil \\sum_k N_k\\,(S_k - 1) \\Big\\rceil

    (the interval method as recalled from Ahmad & Smith 1989, from memory, unverified in its details).
    Real counts add up along a match of constant capacity ratio, since each is an NTU ratio.  A side that
    does not change temperature (an isothermal utility such as condensing steam) needs one shell whatever
    P, F being 1 in any arrangement (common practice; Incropera, DeWitt, Bergman & Lavine 2007,
    Fundamentals of Heat and Mass Transfer, 6th ed., Table 11.3: at C_r = 0 every arrangement has
    ε = 1 − e^{−NTU}), as :func:`heatloom.equipment.shell_design` counts it: along each isothermal piece
    of a composite the N_k add up to one at most (they are scaled down where they add up to more).

    Parameters
    ----------
    composites : BalancedComposites
    x_p : float, optional
        X_P [-], 0 < X_P < 1; :data:`heatloom.defaults.X_P` (0.9) by default.

    Returns
    -------
    shells : int
        [-]
    shells_real : float
        The sum before rounding up [-].

    Examples
    --------
    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> cw = Utility("cold water", 20, 20, 10.0, UtilityKind.COLD, 1.0)
    >>> shell_target(balanced_composites(target(s, 10, [cw])))
    (3, 2.99...)
    """
    x_p = defaults.X_P if x_p is None else float(x_p)
    if not (0 < x_p < 1):
        raise InputError(f"X_P must be in (0, 1), got {x_p:g}")
    c = composites
    c._check_approach()           # touching curves: no finite shell count either
    units = np.maximum(c.hot_count + c.cold_count - 1, 0)
    total = float(np.sum(units * _real_shells(c.hot_high, c.hot_low, c.cold_low, c.cold_high, x_p)))
    shells = round_up_count(total) if total > 0 else 0
    return shells, float(total)


# --------------------------------------------------------------------------------------------------
# costs


def area_targets(targets: Targets, costs=None, *, default_film_coefficient: float | None = None,
                 capital_basis: CapitalBasis | str = CapitalBasis.UNITS_MER, x_p: float | None = None
                 ) -> AreaTargets:
    """Area, units, shells, capital, energy and total annual cost targets at the targets' ΔTmin.

    Capital cost target, sharing the target area equally among the target units (common practice;
    Linnhoff & Ahmad 1990):

    .. math:: C_{cap} = \\phi\\, N\\,[a + b\\,(A_{min}/N)^c]

    with N the units of ``capital_basis`` (minimum MER units by default), the exchanger law a + b·A^c of
    ``costs`` for every unit, and φ its annualisation factor (capital recovery factor, or 1 for laws
    that already give money per year).  Energy cost = Σ utility duty × price; total annual cost =
    C_cap + energy cost.

    Parameters
    ----------
    targets : Targets
        Energy targets at one ΔTmin; its utility placement when utilities were given, else the ideal
        utilities (:func:`target_utilities`).
    costs : heatloom.model.CostSettings, optional
        Cost laws and annualisation; the defaults of :mod:`heatloom.defaults` when omitted.
    default_film_coefficient : float, optional
        Film coefficient assumed where a stream or utility has none [kW/(m²·K)].
    capital_basis : CapitalBasis or str, optional
        What the area is shared among: "units_mer" (default), "units" or "shells".
    x_p : float, optional
        X_P of the shell target [-].

    Returns
    -------
    AreaTargets

    Raises
    ------
    InputError
        Film coefficients missing with no default (names the streams), unknown capital basis.
    TemperatureCrossError
        When the balanced composites touch (ΔTmin 0): infinite area.

    Examples
    --------
    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> from heatloom.model import CostLaw, CostSettings
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H", "C"], [150, 30], [40, 120], [2.0, 2.0], film_coefficient=[1.0, 1.0])
    >>> cw = Utility("cold water", 20, 20, 10.0, UtilityKind.COLD, 1.0)
    >>> costs = CostSettings(annualised=True, exchanger=CostLaw(1000.0, 100.0, 1.0))
    >>> a = area_targets(target(s, 10, [cw]), costs)
    >>> round(a.area, 3), a.units, a.units_mer, round(a.capital_cost, 1), a.energy_cost
    (14.773, 2, 2, 3477.3, 400.0)
    """
    from ..model.costs import CostSettings, UnitKind

    basis_kind = enum_member(CapitalBasis, capital_basis, "capital basis")
    costs = CostSettings() if costs is None else costs
    if not isinstance(costs, CostSettings):
        raise InputError(f"costs must be CostSettings, got {type(costs).__name__}")
    composites = balanced_composites(targets, default_film_coefficient=default_film_coefficient)
    area = bath_area(composites)
    units, units_mer = unit_targets(targets)
    x_p = defaults.X_P if x_p is None else float(x_p)
    shells, shells_real = shell_target(composites, x_p=x_p)
    count = {CapitalBasis.UNITS_MER: units_mer, CapitalBasis.UNITS: units, CapitalBasis.SHELLS: shells}[basis_kind]
    capital = count * float(costs.annual_capital_cost(area / count, UnitKind.EXCHANGER)) if count > 0 else 0.0
    used = composites.utilities
    energy = float(sum(q * u.cost for u, q in used))
    what = {CapitalBasis.UNITS_MER: "minimum units for maximum energy recovery",
            CapitalBasis.UNITS: "overall minimum units", CapitalBasis.SHELLS: "minimum 1-2 shells"}[basis_kind]
    if targets.placement is None:
        util_text = ("ideal utilities assumed (no utility levels given): " + "; ".join(
            f"{u.name} at {u.supply_temperature:g} °C, h {u.film_coefficient:g} kW/(m²·K), "
            f"{u.cost:g} money/(kW·year)" for u, _ in used) + " (illustrative defaults, common practice)")
    else:
        util_text = "utilities of the placement: " + "; ".join(
            f"{u.name} {q:,.1f} kW at {u.cost:g} per kW·year" for u, q in used)
    assumed = missing_film_coefficients(targets.streams, [u for u, _ in used])
    h_text = (f" Film coefficient {default_film_coefficient:g} kW/(m²·K) assumed for {', '.join(assumed)}."
              if assumed else "")
    basis = (f"Area: Townsend–Linnhoff (Bath) formula, vertical heat transfer between the balanced composite "
             f"curves with individual film coefficients (counter-current, clean surfaces); {util_text}."
             f"{h_text} Units: Euler's N − 1 with no loops and one subnetwork, overall and per pinch "
             "subnetwork for maximum energy recovery (streams that balance exactly can need fewer). "
             f"Shells: Ahmad & Smith interval method, X_P = {x_p:g} per 1-2 shell. "
             f"Capital: the target area shared equally among the {count} target units ({what}; common "
             f"practice), exchanger law {costs.exchanger.text(costs.currency)} for every unit, annualised "
             f"(factor {costs.annualisation_factor:.4f} per year). Energy: utility duties × prices. "
             f"{defaults.SAFETY_NOTE}")
    return AreaTargets(float(targets.dt_min), area, units, units_mer, shells, shells_real, capital, energy,
                       capital + energy, targets.hot_utility, targets.cold_utility, costs.currency, basis_kind,
                       basis)
