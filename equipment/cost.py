"""Exchanger capital cost laws, annualisation and total annual cost.

Capital cost of one unit (or of one shell, the unit's area being split equally over its shells):

.. math:: C = a + b\\,A^{c}

Capital is annualised with the capital recovery factor, CRF = i(1 + i)ⁿ/[(1 + i)ⁿ − 1] (limit 1/n at
i = 0), unless the laws already give money per year.  Utilities cost duty × price per kW·year (a
price per kWh is turned into one with the operating hours).  Total annual cost = annualised capital +
utilities.

The defaults in force are stated once in :mod:`heatloom.defaults` (illustrative defaults, common
practice, not a quotation) and in plain words by :meth:`CostSettings.describe`.  Costs are
screening estimates; designs must be checked against local codes by qualified, licensed engineers.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..model.costs import CostSettings, UnitKind

__all__ = [
    "CostBreakdown",
    "total_annual_cost",
    "cost_breakdown",
]


def total_annual_cost(annual_capital_cost, utility_duties=(), utility_prices=()) -> float:
    """Total annual cost = annualised capital + Σ duty × price.

    Parameters
    ----------
    annual_capital_cost : float or array
        Annualised capital of the units (summed) [money/year].
    utility_duties : sequence of float
        Duty of each utility [kW], >= 0.
    utility_prices : sequence of float
        Price of each [money/(kW·year)], same length.

    Returns
    -------
    float
        [money/year]

    Examples
    --------
    >>> total_annual_cost(10000.0, [100.0, 50.0], [80.0, 20.0])
    19000.0
    """
    cap = np.asarray(annual_capital_cost, dtype=float)
    q = np.asarray(utility_duties, dtype=float)
    p = np.asarray(utility_prices, dtype=float)
    if q.shape != p.shape:
        raise InputError(f"{q.size} utility duties but {p.size} utility prices: give one price per duty")
    if not (np.all(np.isfinite(cap)) and np.all(np.isfinite(p))):
        raise InputError("capital costs and utility prices must be finite numbers")
    if not np.all(q >= 0):
        raise InputError(f"utility duties must be >= 0 kW, got {q[~(q >= 0)].flat[0]:g}")
    return float(cap.sum() + (q * p).sum())


@dataclass(frozen=True)
class CostBreakdown:
    """Costs of a set of units and utilities (see :func:`cost_breakdown`).

    ``capital`` is the sum of the laws' results (installed capital [money], or money per year when the
    laws are annualised); ``annual_capital`` [money/year]; ``operating`` (utilities) [money/year];
    ``total_annual_cost`` [money/year]; ``unit_costs`` the annualised capital of each unit.
    """

    currency: str
    capital: float
    annual_capital: float
    operating: float
    total_annual_cost: float
    unit_costs: tuple[float, ...] = ()

    def to_dict(self) -> dict:
        return {"currency": self.currency, "capital_cost": self.capital, "annual_capital_cost": self.annual_capital,
                "operating_cost": self.operating, "total_annual_cost": self.total_annual_cost,
                "unit_costs": list(self.unit_costs)}


def cost_breakdown(settings: CostSettings, areas, kinds=None, shells=None, utility_duties=(),
                   utility_prices=()) -> CostBreakdown:
    """Capital, operating and total annual cost of units and utilities.

    Parameters
    ----------
    settings : CostSettings
    areas : sequence of float
        Area of each unit [m²].
    kinds : sequence of UnitKind or str, optional
        Law of each unit; all exchangers when not given.
    shells : sequence of int, optional
        Shells of each unit (the law applies per shell, area split equally); 1 when not given.
    utility_duties : sequence of float
        [kW]
    utility_prices : sequence of float
        [money/(kW·year)]

    Returns
    -------
    CostBreakdown

    Examples
    --------
    >>> from heatloom.model import CostLaw, CostSettings
    >>> s = CostSettings(annualised=True, exchanger=CostLaw(0, 1000, 0.6), heater=CostLaw(0, 1200, 0.6))
    >>> b = cost_breakdown(s, [100.0, 10.0], ["exchanger", "heater"], utility_duties=[50.0],
    ...                    utility_prices=[80.0])
    >>> round(b.annual_capital, 1), b.operating, round(b.total_annual_cost, 1)
    (20626.2, 4000.0, 24626.2)
    """
    if not isinstance(settings, CostSettings):
        raise InputError(f"settings must be CostSettings, got {type(settings).__name__}")
    a = np.atleast_1d(np.asarray(areas, dtype=float))
    k = [UnitKind.EXCHANGER] * a.size if kinds is None else list(kinds)
    n = [1] * a.size if shells is None else list(shells)
    if len(k) != a.size or len(n) != a.size:
        raise InputError(f"{a.size} areas but {len(k)} kinds and {len(n)} shell counts: give one of each per unit")
    raw = [settings.capital_cost(ai, ki, ni) for ai, ki, ni in zip(a, k, n, strict=True)]
    factor = settings.annualisation_factor
    annual = [c * factor for c in raw]
    cap = float(sum(annual))
    tac = total_annual_cost(cap, utility_duties, utility_prices)
    return CostBreakdown(settings.currency, float(sum(raw)), cap, tac - cap, tac, tuple(annual))
