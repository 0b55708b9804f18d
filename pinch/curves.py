"""Composite curves, shifted composite curves and the grand composite curve.

Each curve is a :class:`Curve`: breakpoints of a piecewise-linear temperature–enthalpy profile, enthalpy
ascending.  Composite curves follow Hohmann (1971) and Linnhoff et al. (1982); the grand composite curve
is the feasible heat cascade plotted against shifted temperature (Itoh, Shiroko & Umeda 1982; Linnhoff et
al. 1982, User Guide on Process Integration, ch. 2).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..model import StreamArrays, StreamTable
from .problem_table import ProblemTable, net_heat_capacity_flow, shifted_ranges

__all__ = [
    "Curve",
    "hot_composite",
    "cold_composite",
    "grand_composite",
]


@dataclass(frozen=True, eq=False)
class Curve:
    """A piecewise-linear temperature–enthalpy curve.

    Attributes
    ----------
    temperature : ndarray
        Breakpoint temperatures [°C] (shifted temperatures for shifted curves and the grand composite).
    enthalpy : ndarray
        Cumulative duty at each breakpoint [kW].
    label : str
        What the curve is, for legends and tables.
    """

    temperature: np.ndarray
    enthalpy: np.ndarray
    label: str

    def to_dict(self) -> dict:
        return {"label": self.label, "T": self.temperature.tolist(), "H": self.enthalpy.tolist()}

    def to_frame(self):
        import pandas as pd

        return pd.DataFrame({f"{self.label} T [°C]": self.temperature,
                             f"{self.label} H [kW]": self.enthalpy})


def _arrays(streams: StreamTable | StreamArrays) -> StreamArrays:
    return streams.arrays if isinstance(streams, StreamTable) else streams


def _composite(upper: np.ndarray, lower: np.ndarray, cp: np.ndarray, start: float, label: str) -> Curve:
    if upper.size == 0:
        return Curve(np.array([]), np.array([]), label)
    t, net = net_heat_capacity_flow(upper, lower, cp)
    h = np.concatenate(([0.0], np.cumsum(net * np.diff(t)))) + start
    return Curve(t, h, label)


def hot_composite(streams: StreamTable | StreamArrays, dt_min: float | None = None) -> Curve:
    """Hot composite curve: all hot segments added interval by interval, enthalpy from 0 at its cold end.

    Parameters
    ----------
    streams : StreamTable or StreamArrays
    dt_min : float, optional
        When given, the *shifted* hot composite (temperatures lowered by each segment's ΔTmin share) [K].

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> t = StreamTable.from_arrays(["H1", "H2", "C1"], [180, 150, 20], [60, 30, 135], [3.0, 1.0, 2.0])
    >>> c = hot_composite(t)
    >>> c.temperature.tolist(), c.enthalpy.tolist()
    ([30.0, 60.0, 150.0, 180.0], [0.0, 30.0, 390.0, 480.0])
    """
    return _side_composite(streams, True, 0.0, dt_min)


def cold_composite(streams: StreamTable | StreamArrays, cold_utility: float = 0.0,
                   dt_min: float | None = None) -> Curve:
    """Cold composite curve, starting at the minimum cold utility so that it sits under the hot composite.

    Parameters
    ----------
    streams : StreamTable or StreamArrays
    cold_utility : float
        Enthalpy where the curve starts [kW]: the minimum cold utility places the curves at ΔTmin.
    dt_min : float, optional
        When given, the *shifted* cold composite [K].

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> t = StreamTable.from_arrays(["H1", "C1", "C2"], [180, 20, 80], [60, 135, 140], [3.0, 2.0, 4.5])
    >>> cold_composite(t, 10.0).enthalpy.tolist()
    [10.0, 130.0, 487.5, 510.0]
    """
    return _side_composite(streams, False, float(cold_utility), dt_min)


def _side_composite(streams: StreamTable | StreamArrays, hot: bool, start: float, dt_min: float | None) -> Curve:
    """The hot (``hot``) or cold composite, real or shifted by ΔTmin, starting at enthalpy ``start`` [kW]."""
    a = _arrays(streams)
    side = a.is_hot if hot else ~a.is_hot
    if dt_min is None:
        up = np.maximum(a.supply_temperature, a.target_temperature)
        lo = np.minimum(a.supply_temperature, a.target_temperature)
    else:
        up, lo = shifted_ranges(a, dt_min)
    label = f"{'shifted ' if dt_min is not None else ''}{'hot' if hot else 'cold'} composite"
    return _composite(up[side], lo[side], a.heat_capacity_flow[side], start, label)


def grand_composite(table: ProblemTable) -> Curve:
    """Grand composite curve: net heat flow of the feasible cascade against shifted temperature.

    Returned with temperature ascending; the curve touches zero enthalpy at the pinch.

    Examples
    --------
    >>> from heatloom.model import StreamTable
    >>> from heatloom.pinch.problem_table import problem_table
    >>> t = StreamTable.from_arrays(["1", "2", "3", "4"], [180, 150, 20, 80], [60, 30, 135, 140],
    ...                             [3.0, 1.0, 2.0, 4.5])
    >>> g = grand_composite(problem_table(t, 10))
    >>> g.temperature.tolist(), g.enthalpy.tolist()
    ([25.0, 55.0, 85.0, 140.0, 145.0, 175.0], [30.0, 60.0, 0.0, 137.5, 140.0, 50.0])
    """
    return Curve(table.shifted_temperatures[::-1].copy(), table.heat_flow[::-1].copy(), "grand composite")
