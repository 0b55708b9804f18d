"""Cost settings of a study: capital cost laws, annualisation, operating hours, retrofit change costs.

Capital cost of one unit (or of one shell, the unit's area being split equally over its shells):

.. math:: C = a + b\\,A^{c}

Capital is annualised with the capital recovery factor, CRF = i(1 + i)ⁿ/[(1 + i)ⁿ − 1] (limit 1/n at
i = 0), unless the laws already give money per year.  A price per kWh becomes one per kW·year with the
operating hours.  These are model types: the costs reader (:func:`heatloom.io.read_costs`) produces them,
and :mod:`heatloom.equipment.cost` applies them to a set of units.

The defaults in force are stated once in :mod:`heatloom.defaults` (illustrative defaults, common
practice, not a quotation) and in plain words by :meth:`CostSettings.describe`.  Costs are screening
estimates; designs must be checked against local codes by qualified, licensed engineers.
"""

from __future__ import annotations

import enum
import math
from dataclasses import dataclass, field, fields

import numpy as np

from .. import defaults
from ..errors import InputError
from .streams import finite_number

__all__ = [
    "UnitKind",
    "CostLaw",
    "CostSettings",
    "RetrofitCosts",
    "capital_recovery_factor",
    "price_per_kw_year",
]


class UnitKind(enum.Enum):
    """Which cost law a unit uses."""

    EXCHANGER = "exchanger"
    HEATER = "heater"
    COOLER = "cooler"


@dataclass(frozen=True)
class CostLaw:
    """Capital cost law a + b·A^c of one unit or shell [money, or money/year if annualised].

    Parameters
    ----------
    fixed : float
        a, cost of a unit of any size [money], >= 0.
    per_area : float
        b [money/m²^c], >= 0.
    exponent : float
        c [-], in (0, 1.5] (:data:`heatloom.defaults.MAX_EXPONENT`).

    Examples
    --------
    >>> law = CostLaw(8000.0, 500.0, 0.75)
    >>> round(law.cost(100.0), 2)
    23811.39
    >>> round(law.cost(100.0, shells=2), 2)
    34803.02
    """

    fixed: float
    per_area: float
    exponent: float

    def __post_init__(self) -> None:
        a = finite_number(self.fixed, "fixed cost", "fixed")
        b = finite_number(self.per_area, "cost per area", "per_area")
        c = finite_number(self.exponent, "exponent", "exponent")
        if not a >= 0:
            raise InputError(f"fixed cost must be >= 0, got {a:g}", column="fixed")
        if not b >= 0:
            raise InputError(f"cost per area must be >= 0, got {b:g}", column="per_area")
        if not (0 < c <= defaults.MAX_EXPONENT):
            raise InputError(f"exponent must be in (0, {defaults.MAX_EXPONENT:g}], got {c:g}", column="exponent")
        object.__setattr__(self, "fixed", a)
        object.__setattr__(self, "per_area", b)
        object.__setattr__(self, "exponent", c)

    @classmethod
    def from_mapping(cls, mapping) -> CostLaw:
        """Build from ``{"fixed", "per_area", "exponent"}`` (e.g. :data:`heatloom.defaults.EXCHANGER_COST_LAW`)."""
        return cls(mapping["fixed"], mapping["per_area"], mapping["exponent"])

    def cost(self, area, shells=1):
        """Cost of units of ``area`` [m²] made of ``shells`` equal shells: N·[a + b·(A/N)^c].

        Parameters
        ----------
        area : float or array
            Total area of each unit [m²], >= 0.
        shells : int or array of int, optional
            Shells (or separately costed sections) per unit [-], >= 1.

        Returns
        -------
        float or ndarray
            [money] (or money per year for an annualised law).
        """
        a = np.asarray(area, dtype=float)
        n = np.asarray(shells)
        if not np.all((a >= 0) & np.isfinite(a)):
            bad = np.broadcast_to(a, np.shape(a))[~((a >= 0) & np.isfinite(a))].flat[0]
            raise InputError(f"area must be >= 0 m² and finite, got {bad:g}")
        if n.dtype.kind not in "iu" or not np.all(n >= 1):
            raise InputError(f"shells must be whole numbers >= 1, got {shells!r}")
        c = n * (self.fixed + self.per_area * (a / n) ** self.exponent)
        return float(c) if np.ndim(c) == 0 else c

    def to_dict(self) -> dict:
        return {"fixed": self.fixed, "per_area": self.per_area, "exponent": self.exponent}

    def text(self, currency: str = "") -> str:
        """The law as a formula, e.g. ``'8000 + 500·A^0.75 USD'`` (A in m²)."""
        unit = f" {currency}" if currency else ""
        fixed = f"{self.fixed:g} + " if self.fixed else ""
        return f"{fixed}{self.per_area:g}·A^{self.exponent:g}{unit}"


def capital_recovery_factor(interest_rate: float, years: float) -> float:
    """Capital recovery factor: the equal yearly payment that repays one unit of capital.

    .. math:: CRF = \\frac{i(1+i)^n}{(1+i)^n - 1} = \\frac{i}{1 - (1+i)^{-n}},
              \\qquad \\lim_{i \\to 0} CRF = 1/n

    evaluated as i/(−expm1(−n·log1p(i))), and for n·i < 1e-6 as the series
    (1/n)·[1 + i(n + 1)/2 + i²(n² − 1)/12], so it is accurate down to i = 0 (the standard annuity formula
    of engineering economics: the A/P factor of compound-interest tables).

    Parameters
    ----------
    interest_rate : float
        i [1/year], 0 <= i <= 1 (a fraction: 0.1 for 10 %).
    years : float
        n [year], > 0.

    Returns
    -------
    float
        CRF [1/year].

    Examples
    --------
    >>> round(capital_recovery_factor(0.10, 10), 5)
    0.16275
    >>> capital_recovery_factor(0.0, 4)
    0.25
    """
    i = finite_number(interest_rate, "interest rate", "interest_rate")
    n = finite_number(years, "years", "years")
    if not (0 <= i <= defaults.MAX_INTEREST_RATE):
        raise InputError(f"interest rate must be in [0, {defaults.MAX_INTEREST_RATE:g}] per year as a fraction "
                         f"(0.1 for 10 %), got {i:g}", column="interest_rate")
    if not n > 0:
        raise InputError(f"years must be > 0, got {n:g}", column="years")
    if i * n < 1e-6:
        # series (1/n)·[1 + i(n + 1)/2 + i²(n² − 1)/12] + O((n·i)³): exact at i = 0, no underflow for tiny i
        return (1.0 + i * (n + 1) / 2 + i * i * (n * n - 1) / 12) / n
    return i / -math.expm1(-n * math.log1p(i))


def price_per_kw_year(price_per_kwh, hours_per_year=defaults.HOURS_PER_YEAR):
    """Turn a price per kWh into a price per kW·year: price × operating hours.

    Parameters
    ----------
    price_per_kwh : float or array
        [money/kWh]
    hours_per_year : float, optional
        [h/year], in (0, 8784].

    Returns
    -------
    float or ndarray
        [money/(kW·year)]

    Examples
    --------
    >>> price_per_kw_year(0.02, 8000)
    160.0
    """
    h = finite_number(hours_per_year, "hours per year", "hours_per_year")
    if not (0 < h <= defaults.MAX_HOURS_PER_YEAR):
        raise InputError(f"hours per year must be in (0, {defaults.MAX_HOURS_PER_YEAR:g}], got {h:g}",
                         column="hours_per_year")
    p = np.asarray(price_per_kwh, dtype=float)
    if not np.all(np.isfinite(p)):
        raise InputError(f"price per kWh must be finite, got {price_per_kwh!r}")
    out = p * h
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True)
class CostSettings:
    """How to cost a network: cost laws, currency, annualisation, operating hours.

    Parameters
    ----------
    currency : str
        Label of the money unit (nothing is converted).
    annualised : bool
        True: the laws already give money per year.  False: they give installed capital, annualised
        with ``interest_rate`` and ``years``.
    exchanger : CostLaw
        Law of process-process exchangers.
    heater, cooler : CostLaw, optional
        Laws of utility heaters and coolers; the exchanger law when not given.
    interest_rate : float or None
        [1/year] fraction; required when not annualised.
    years : float or None
        Plant life [year]; required when not annualised.
    hours_per_year : float
        Operating hours [h/year], for prices per kWh.
    currency_source : str, optional
        Where the currency label comes from, as the outputs state it: ``"default"``, ``"costs file"`` or
        ``"utility prices"``.
    hours_source : str, optional
        Where the operating hours come from, as the outputs state it: ``"default"``, ``"costs file"`` or
        ``"--hours-per-year"`` (the command-line flag overrides the costs file).

    Defaults are those of :mod:`heatloom.defaults` (illustrative, common practice, not a
    quotation).

    Examples
    --------
    >>> s = CostSettings()
    >>> round(s.annualisation_factor, 5)
    0.16275
    >>> round(s.annual_capital_cost(100.0), 1)
    6810.7
    >>> CostSettings(annualised=True, exchanger=CostLaw(0, 1000, 0.6)).annual_capital_cost(100.0)
    15848.93...
    """

    currency: str = defaults.CURRENCY
    annualised: bool = defaults.ANNUALISED
    exchanger: CostLaw = field(default_factory=lambda: CostLaw.from_mapping(defaults.EXCHANGER_COST_LAW))
    heater: CostLaw | None = None
    cooler: CostLaw | None = None
    interest_rate: float | None = defaults.INTEREST_RATE
    years: float | None = defaults.YEARS
    hours_per_year: float = defaults.HOURS_PER_YEAR
    hours_source: str = field(default="default", compare=False)
    currency_source: str = field(default="default", compare=False)

    def __post_init__(self) -> None:
        if not isinstance(self.currency, str) or not self.currency.strip():
            raise InputError(f"currency must be a non-empty text label, got {self.currency!r}", column="currency")
        object.__setattr__(self, "currency", self.currency.strip())
        if not isinstance(self.annualised, (bool, np.bool_)):
            raise InputError(f"annualised must be true or false, got {self.annualised!r}", column="annualised")
        object.__setattr__(self, "annualised", bool(self.annualised))
        for key in ("exchanger", "heater", "cooler"):
            law = getattr(self, key)
            if law is None and key != "exchanger":
                object.__setattr__(self, key, self.exchanger)
            elif not isinstance(law, CostLaw):
                raise InputError(f"{key} must be a CostLaw, got {type(law).__name__}", column=key)
        for key in ("interest_rate", "years"):
            v = getattr(self, key)
            if v is None:
                if not self.annualised:
                    raise InputError(f"{key} is required when the cost laws are not annualised "
                                     "(annualised false)", column=key)
            else:
                object.__setattr__(self, key, finite_number(v, key.replace("_", " "), key))
        if self.interest_rate is not None and self.years is not None:
            capital_recovery_factor(self.interest_rate, self.years)      # range checks
        elif self.interest_rate is not None:
            capital_recovery_factor(self.interest_rate, 1.0)
        elif self.years is not None:
            capital_recovery_factor(0.0, self.years)
        h = finite_number(self.hours_per_year, "hours per year", "hours_per_year")
        price_per_kw_year(0.0, h)                                         # range check
        object.__setattr__(self, "hours_per_year", h)

    @property
    def annualisation_factor(self) -> float:
        """Factor turning a law's result into money per year [1/year]: 1 if annualised, else the CRF."""
        if self.annualised:
            return 1.0
        return capital_recovery_factor(self.interest_rate, self.years)

    def law(self, kind: UnitKind | str = UnitKind.EXCHANGER) -> CostLaw:
        """The cost law of a kind of unit."""
        try:
            kind = UnitKind(kind)
        except ValueError:
            allowed = ", ".join(k.value for k in UnitKind)
            raise InputError(f"unknown unit kind {kind!r}; allowed: {allowed}") from None
        return getattr(self, kind.value)

    def capital_cost(self, area, kind: UnitKind | str = UnitKind.EXCHANGER, shells=1):
        """The law's result for units of ``area`` [m²]: installed capital [money], or money per year
        when the laws are annualised."""
        return self.law(kind).cost(area, shells)

    def annual_capital_cost(self, area, kind: UnitKind | str = UnitKind.EXCHANGER, shells=1):
        """Annualised capital of units of ``area`` [m²] [money/year]."""
        return self.capital_cost(area, kind, shells) * self.annualisation_factor

    def to_dict(self) -> dict:
        out = {f.name: getattr(self, f.name) for f in fields(self)}
        for key in ("exchanger", "heater", "cooler"):
            out[key] = out[key].to_dict()
        return out

    def describe(self) -> str:
        """The cost basis in force, in plain words, marking which values are the package defaults.

        Examples
        --------
        >>> print(CostSettings().describe())   # doctest: +ELLIPSIS
        Costs in USD (default). Exchanger capital cost per unit or shell: 10000 + 800·A^0.8 USD, A in m² (default)...
        """
        d = CostSettings()                               # the package defaults

        def tag(key: str) -> str:
            return " (default)" if getattr(self, key) == getattr(d, key) else ""

        per = " per year" if self.annualised else ""
        parts = [f"Costs in {self.currency}" + {"default": " (default)", "costs file": " (from the costs file)"}.get(
                     self.currency_source, f" (from the {self.currency_source})") + ".",
                 f"Exchanger capital cost per unit or shell: {self.exchanger.text(self.currency)}{per}, "
                 f"A in m²{tag('exchanger')}."]
        for key in ("heater", "cooler"):
            law = getattr(self, key)
            if law == self.exchanger:
                parts.append(f"{key.capitalize()}s: the exchanger law.")
            else:
                parts.append(f"{key.capitalize()}s: {law.text(self.currency)}{per}{tag(key)}.")
        if self.annualised:
            parts.append("The laws already give money per year (annualised)"
                         f"{tag('annualised')}.")
        else:
            parts.append(f"Capital is annualised at {100 * self.interest_rate:g} % interest over {self.years:g} "
                         f"years{' (default)' if tag('interest_rate') and tag('years') else ''}: capital recovery factor "
                         f"{self.annualisation_factor:.4f} per year.")
        source = {"default": " (default)", "costs file": " (from the costs file)"}.get(
            self.hours_source, f" (given with {self.hours_source})")
        parts.append(f"Operating hours: {self.hours_per_year:g} h/year{source}.")
        if any(tag(k) for k in ("exchanger", "heater", "cooler", "annualised", "interest_rate", "years")):
            parts.append("Values marked (default) are illustrative defaults (common practice), not a quotation.")
        parts.append(defaults.SAFETY_NOTE)
        return " ".join(parts)


@dataclass(frozen=True)
class RetrofitCosts:
    """Installed capital of retrofit changes [money] (the ``retrofit`` section of a costs file).

    Parameters
    ----------
    new_exchanger : CostLaw
        New exchanger: fixed + per_area·A^exponent, A in m².
    added_area : CostLaw
        Area added to a unit: fixed (installation) + per_area·ΔA^exponent, ΔA in m².
    repipe : float
        Moving one side of a unit to another stream [money].
    resequence : float
        Moving a unit to another place along its stream [money].

    These are installed capital whatever the ``annualised`` setting of the other laws.  Defaults:
    :mod:`heatloom.defaults` (illustrative, common practice, not a quotation).

    Examples
    --------
    >>> c = RetrofitCosts()
    >>> round(c.added_area_cost(20.0)), round(c.new_exchanger_cost(50.0)), c.repipe
    (15986, 37865, 8000.0)
    """

    new_exchanger: CostLaw = field(
        default_factory=lambda: CostLaw.from_mapping(defaults.RETROFIT_NEW_EXCHANGER_COST_LAW))
    added_area: CostLaw = field(default_factory=lambda: CostLaw.from_mapping(defaults.RETROFIT_ADDED_AREA_COST_LAW))
    repipe: float = defaults.RETROFIT_REPIPE_COST
    resequence: float = defaults.RETROFIT_RESEQUENCE_COST

    def __post_init__(self) -> None:
        for key in ("new_exchanger", "added_area"):
            if not isinstance(getattr(self, key), CostLaw):
                raise InputError(f"retrofit.{key} must be a CostLaw, got {type(getattr(self, key)).__name__}",
                                 column=f"retrofit.{key}")
        for key in ("repipe", "resequence"):
            v = getattr(self, key)
            try:
                x = float(v)
            except (TypeError, ValueError):
                raise InputError(f"retrofit.{key} must be a number [money], got {v!r}",
                                 column=f"retrofit.{key}") from None
            if not (x >= 0) or not math.isfinite(x):
                raise InputError(f"retrofit.{key} must be a finite number >= 0, got {v!r}", column=f"retrofit.{key}")
            object.__setattr__(self, key, x)

    def new_exchanger_cost(self, area: float) -> float:
        """[money] for a new exchanger of ``area`` [m²]."""
        return float(self.new_exchanger.cost(area))

    def added_area_cost(self, area: float) -> float:
        """[money] for ``area`` [m²] added to a unit."""
        return float(self.added_area.cost(area))

    def to_dict(self) -> dict:
        return {"new_exchanger": self.new_exchanger.to_dict(), "added_area": self.added_area.to_dict(),
                "repipe": self.repipe, "resequence": self.resequence}

    def describe(self, currency: str = "") -> str:
        """The retrofit cost laws in plain words, marking the package defaults."""
        d = RetrofitCosts()

        def tag(key):
            return " (default)" if getattr(self, key) == getattr(d, key) else ""

        cur = f" {currency}" if currency else ""
        text = (f"Retrofit: new exchanger {self.new_exchanger.text(currency)}{tag('new_exchanger')}; added area "
                f"{self.added_area.text(currency)} with A the added m²{tag('added_area')}; repiping "
                f"{self.repipe:g}{cur}{tag('repipe')}; resequencing {self.resequence:g}{cur}{tag('resequence')}.")
        if any(tag(k) for k in ("new_exchanger", "added_area", "repipe", "resequence")):
            text += " Values marked (default) are illustrative, not a quotation."
        return text
