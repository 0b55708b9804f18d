"""Exchanger types with geometry: double-pipe hairpins and 1-2 shell-and-tube shells in series.

Canonical units: °C, K for differences, kW, kW/(m²·K), m², m for lengths.  The area is Q/(U·F·LMTD)
with the LMTD, F-factor and shell count of :mod:`heatloom.equipment.sizing`; the limits X_P and the
minimum F are defined once in :mod:`heatloom.defaults`.

References
----------
Ahmad, S., Linnhoff, B., Smith, R. (1988) Design of multipass heat exchangers: an alternative
approach, J. Heat Transfer 110(2), 304-309 (shell count by X_P, through
:func:`heatloom.equipment.sizing.shell_design`).

Sizing results are screening estimates: fouling, design margins, pressure and temperature limits
and any temperature cross must be checked, and designs checked against local codes and standards by
qualified, licensed engineers.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import ClassVar

from .. import defaults
from ..errors import InputError
from ..model.exchangers import ExchangerType
from ..validation import positive_float, round_up_count
from .sizing import ShellDesign, area_from_duty, lmtd, shell_design

__all__ = [
    "DoublePipeSizing",
    "ShellAndTubeSizing",
    "size_double_pipe",
    "size_shell_and_tube",
    "size_exchanger",
    "hairpins_for_area",
]


# --------------------------------------------------------------------------------------------------
# exchanger types with geometry


class _TypedSizing:
    """What the sizings of every exchanger type share: their type and their dictionary form."""

    exchanger_type: ClassVar[ExchangerType]

    def to_dict(self) -> dict:
        """The fields (nested results as dictionaries too), with the type's value under ``type``."""
        return {"type": self.exchanger_type.value, **asdict(self)}


@dataclass(frozen=True)
class DoublePipeSizing(_TypedSizing):
    """A counter-current double-pipe exchanger made of hairpins (see :func:`size_double_pipe`).

    Convention: a hairpin has two straight legs of length L; its area is π·d·2L on the diameter d that U
    refers to; return bends are not counted as area.

    Attributes
    ----------
    duty [kW], u [kW/(m²·K)], lmtd [K]
    area : float
        Area required [m²].
    tube_diameter, hairpin_length : float
        d and L [m].
    tube_length : float
        Straight tube length required, A/(π·d) [m].
    hairpins : int
        Hairpins needed, tube_length/(2L) rounded up [-].
    area_per_hairpin, installed_area : float
        π·d·2L and hairpins × that [m²].
    """

    duty: float
    u: float
    lmtd: float
    area: float
    tube_diameter: float
    hairpin_length: float
    tube_length: float
    hairpins: int
    area_per_hairpin: float
    installed_area: float

    exchanger_type: ClassVar[ExchangerType] = ExchangerType.DOUBLE_PIPE

    @property
    def shells(self) -> int:
        """Units to cost: one double-pipe unit (however many hairpins) [-]."""
        return 1


@dataclass(frozen=True)
class ShellAndTubeSizing(_TypedSizing):
    """1-2 shell-and-tube shells in series (see :func:`size_shell_and_tube`).

    Attributes: ``duty`` [kW], ``u`` [kW/(m²·K)], ``lmtd`` (counter-current) [K], ``f`` [-], ``area``
    (all shells) [m²], ``shells`` [-], ``area_per_shell`` [m²], ``design`` (the :class:`ShellDesign`).
    """

    duty: float
    u: float
    lmtd: float
    f: float
    area: float
    shells: int
    area_per_shell: float
    design: ShellDesign

    exchanger_type: ClassVar[ExchangerType] = ExchangerType.SHELL_AND_TUBE_1_2


def size_double_pipe(duty, u, hot_in, hot_out, cold_in, cold_out, *, tube_diameter,
                     hairpin_length) -> DoublePipeSizing:
    """Size a counter-current double-pipe exchanger: area, tube length and hairpins.

    Parameters
    ----------
    duty : float
        Q [kW], > 0.
    u : float
        U referred to the surface of diameter ``tube_diameter`` [kW/(m²·K)].
    hot_in, hot_out, cold_in, cold_out : float
        [°C]
    tube_diameter : float
        Diameter of the inner tube that the area is measured on (usually its outside) [m].
    hairpin_length : float
        Length L of one leg of a hairpin [m].

    Returns
    -------
    DoublePipeSizing

    Examples
    --------
    >>> d = size_double_pipe(100.0, 0.5, 150, 100, 30, 80, tube_diameter=0.05, hairpin_length=4.0)
    >>> round(d.area, 3), d.hairpins, round(d.installed_area, 3)
    (2.857, 3, 3.77)
    """
    q = positive_float(duty, "duty", "kW")
    uu = positive_float(u, "overall coefficient U", "kW/(m²·K)")
    d = positive_float(tube_diameter, "tube diameter", "m")
    length = positive_float(hairpin_length, "hairpin length", "m")
    dt = float(lmtd(hot_in, hot_out, cold_in, cold_out))
    a = q / (uu * dt)
    tube_length, n, per = hairpins_for_area(a, d, length)
    return DoublePipeSizing(q, uu, dt, a, d, length, tube_length, n, per, n * per)


def hairpins_for_area(area, tube_diameter, hairpin_length) -> tuple[float, int, float]:
    """Tube length [m], hairpins [-] and area per hairpin [m²] that provide ``area`` [m²].

    A hairpin has two legs of length L on tube diameter d: π·d·2L of area (return bends not counted).

    Examples
    --------
    >>> length, n, per = hairpins_for_area(2.857, 0.05, 4.0)
    >>> round(length, 2), n, round(per, 4)
    (18.19, 3, 1.2566)
    """
    a = positive_float(area, "area", "m²")
    d = positive_float(tube_diameter, "tube diameter", "m")
    length = positive_float(hairpin_length, "hairpin length", "m")
    per = math.pi * d * 2 * length
    return a / (math.pi * d), max(1, round_up_count(a / per)), per


def size_shell_and_tube(duty, u, hot_in, hot_out, cold_in, cold_out, *, x_p=defaults.X_P,
                        min_f=defaults.MIN_F_FACTOR) -> ShellAndTubeSizing:
    """Size 1-2 shell-and-tube shells in series: shells by :func:`shell_design`, A = Q/(U·F·LMTD).

    Parameters
    ----------
    duty : float
        Q [kW], > 0.
    u : float
        [kW/(m²·K)]
    hot_in, hot_out, cold_in, cold_out : float
        [°C]
    x_p, min_f : float, optional
        Criteria of :func:`shell_design` [-].

    Returns
    -------
    ShellAndTubeSizing

    Examples
    --------
    >>> s = size_shell_and_tube(1000.0, 0.5, 100, 50, 20, 70)
    >>> s.shells, round(s.f, 3), round(s.area, 2), round(s.area_per_shell, 2)
    (2, 0.871, 76.54, 38.27)
    """
    q = positive_float(duty, "duty", "kW")
    uu = positive_float(u, "overall coefficient U", "kW/(m²·K)")
    design = shell_design(hot_in, hot_out, cold_in, cold_out, x_p=x_p, min_f=min_f)
    dt = float(lmtd(hot_in, hot_out, cold_in, cold_out))
    a = float(area_from_duty(q, uu, dt, design.f))
    return ShellAndTubeSizing(q, uu, dt, design.f, a, design.shells, a / design.shells, design)


def size_exchanger(exchanger_type, duty, u, hot_in, hot_out, cold_in, cold_out, **options):
    """Size an exchanger of a kind that has a geometry; ``options`` go to the kind's function.

    The kinds with a geometry are those whose :attr:`ExchangerType.has_geometry` is True:
    ``DOUBLE_PIPE`` (:func:`size_double_pipe`, options ``tube_diameter`` and ``hairpin_length`` [m],
    both required) and ``SHELL_AND_TUBE_1_2`` (:func:`size_shell_and_tube`, options ``x_p`` and
    ``min_f`` [-]).

    Raises
    ------
    InputError
        For a kind without a geometry (counter-current, co-current: size their area with
        :func:`~heatloom.equipment.sizing.area_from_duty`), an unknown option or a missing double-pipe option.

    Examples
    --------
    >>> size_exchanger(ExchangerType.SHELL_AND_TUBE_1_2, 1000.0, 0.5, 100, 50, 20, 70).shells
    2
    """
    allowed_kinds = ", ".join(k.value for k in _SIZERS)
    try:
        kind = ExchangerType(exchanger_type)
    except ValueError:
        raise InputError(f"unknown exchanger type {exchanger_type!r}; allowed: {allowed_kinds}") from None
    if not kind.has_geometry:
        raise InputError(f"exchanger type {kind.value} has no geometry to size (size its area alone, "
                         f"e.g. with area_from_duty); allowed: {allowed_kinds}")
    fn, allowed = _SIZERS[kind]
    unknown = sorted(set(options) - set(allowed))
    if unknown:
        raise InputError(f"{kind.value}: unknown option(s) {', '.join(unknown)}; allowed: {', '.join(allowed)}")
    if kind is ExchangerType.DOUBLE_PIPE and len(options) < 2:
        raise InputError("double_pipe: tube_diameter [m] and hairpin_length [m] are required")
    return fn(duty, u, hot_in, hot_out, cold_in, cold_out, **options)


_SIZERS = {ExchangerType.DOUBLE_PIPE: (size_double_pipe, ("tube_diameter", "hairpin_length")),
           ExchangerType.SHELL_AND_TUBE_1_2: (size_shell_and_tube, ("x_p", "min_f"))}
"""The geometry of each kind that has one: its sizing function and its options (the kinds whose
:attr:`ExchangerType.has_geometry` is True, checked by the tests)."""
