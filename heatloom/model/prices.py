"""Price scenarios: named sets of utility prices (model types read from a prices table)."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace

from ..errors import InputError
from .streams import Utility

__all__ = ["BASE_NAME", "PriceScenario", "price_factor_scenarios"]


BASE_NAME = "base prices"
"""Name of the scenario that keeps the prices as given (used when no scenario is given)."""


@dataclass(frozen=True)
class PriceScenario:
    """A set of utility prices.

    Parameters
    ----------
    name : str
        Unique label, e.g. ``"gas +30 %"``.
    prices : tuple of (str, float), optional
        Utility name → price [money/(kW·year)] for the utilities whose price this scenario sets.
    factor : float, optional
        Multiplies the price of every utility not named in ``prices`` [-] (default 1).
    currency : str or None, optional
        Currency code the prices table names (``"EUR"`` for ``cost [EUR/MWh]``); None when it names none.

    Examples
    --------
    >>> from heatloom.model import Utility
    >>> s = PriceScenario("dear steam", (("steam", 300.0),), factor=1.1)
    >>> [(u.name, round(u.cost, 6)) for u in s.apply([Utility("steam", 180, 179, 200.0),
    ...                                                  Utility("CW", 20, 30, 10.0)])]
    [('steam', 300.0), ('CW', 11.0)]
    """

    name: str
    prices: tuple[tuple[str, float], ...] = ()
    factor: float = 1.0
    currency: str | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name.strip():
            raise InputError(f"a price scenario needs a name, got {self.name!r}", column="scenario")
        object.__setattr__(self, "name", self.name.strip())
        try:
            factor = float(self.factor)
        except (TypeError, ValueError):
            raise InputError(f"scenario '{self.name}': the price factor must be a number, got {self.factor!r}",
                             column="factor") from None
        if not (factor >= 0) or not math.isfinite(factor):
            raise InputError(f"scenario '{self.name}': the price factor must be a finite number >= 0, got "
                             f"{self.factor!r}", column="factor")
        object.__setattr__(self, "factor", factor)
        pairs = list(self.prices.items() if isinstance(self.prices, Mapping) else self.prices)
        prices: dict[str, float] = {}
        for utility, price in pairs:
            try:
                value = float(price)
            except (TypeError, ValueError):
                value = math.nan
            if not (value >= 0) or not math.isfinite(value):
                raise InputError(f"scenario '{self.name}': the price of '{utility}' must be a finite number >= 0 "
                                 f"[money/(kW·year)], got {price!r}", column="cost")
            if str(utility) in prices:
                raise InputError(f"scenario '{self.name}' prices utility '{utility}' twice", column="utility")
            prices[str(utility)] = value
        object.__setattr__(self, "prices", tuple(prices.items()))

    def apply(self, utilities: Sequence[Utility]) -> tuple[Utility, ...]:
        """The utilities with this scenario's prices [money/(kW·year)]."""
        named = dict(self.prices)
        return tuple(replace(u, cost=named[u.name]) if u.name in named else
                     (u if self.factor == 1.0 else replace(u, cost=u.cost * self.factor)) for u in utilities)

    def describe(self) -> str:
        """The scenario in words.

        Examples
        --------
        >>> PriceScenario("x", (("steam", 250.0),), 0.9).describe()
        'steam at 250 per kW·year; other prices × 0.9'
        """
        parts = [f"{k} at {v:g} per kW·year" for k, v in self.prices]
        if self.factor != 1.0 or not parts:
            parts.append(f"{'other ' if parts else ''}prices × {self.factor:g}")
        return "; ".join(parts)

    def to_dict(self) -> dict:
        return {"name": self.name, "prices": dict(self.prices), "factor": self.factor,
                "description": self.describe()}


def price_factor_scenarios(factors: Sequence[float]) -> tuple[PriceScenario, ...]:
    """One scenario per factor on every utility price, named ``"prices ×F"``.

    Examples
    --------
    >>> [s.name for s in price_factor_scenarios([0.8, 1, 1.5])]
    ['prices ×0.8', 'prices ×1', 'prices ×1.5']
    """
    return tuple(PriceScenario(f"prices ×{float(f):g}", (), float(f)) for f in factors)
