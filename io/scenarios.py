"""Reading price scenarios (utility prices to study) from CSV or XLSX.

Table layout, one row per utility price a scenario changes::

    scenario,utility,cost [USD/kWh],factor
    today,LP steam,0.030,
    today,cooling water,0.002,
    gas spike,LP steam,0.060,
    gas spike,cooling water,,1.2
    all dearer,,,1.5

* ``scenario`` names the scenario (rows of one scenario may be anywhere in the table);
* ``utility`` (or ``name``) names a utility of the utility table; ``cost`` sets its price (money per
  kW·year unless the header or a units row gives another unit; per-kWh prices need the operating
  hours), or ``factor`` multiplies its price in the utility table;
* a row with a ``factor`` and no utility multiplies every utility the scenario does not name (with no
  utility table, the assumed utilities' prices);
* utilities a scenario does not name and does not scale keep the utility table's price.

Every problem is an :class:`~heatloom.errors.InputError` naming the file, row and column.
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping, Sequence

import numpy as np

from ..errors import InputError
from ..model import Utility
from ..model.prices import PriceScenario
from .tables import read_table
from .units import currency_of

__all__ = ["SCENARIO_COLUMNS", "read_price_scenarios"]

SCENARIO_COLUMNS = ("scenario", "name", "cost", "factor")
"""Canonical columns of a price scenario table (``name`` is the utility; the header ``utility`` is read
as ``name``)."""


def read_price_scenarios(path: str | os.PathLike, utilities: Sequence[Utility] | None = None, *,
                         sheet: str | None = None, columns: Mapping[str, str] | str | None = None,
                         hours_per_year: float | None = None) -> tuple[PriceScenario, ...]:
    """Read price scenarios from a CSV file or an Excel workbook.

    Parameters
    ----------
    path : str or path-like
        ``.csv`` or ``.xlsx`` file; never modified.
    utilities : sequence of Utility, optional
        The utility table the scenarios price; needed for rows that name a utility.
    sheet : str, optional
        Worksheet; default the first.
    columns : mapping or str, optional
        Foreign header → canonical column name (see :func:`heatloom.io.parse_column_mapping`).
    hours_per_year : float, optional
        Operating hours per year [h/year]; needed only for prices per energy (``cost [USD/kWh]``).

    Returns
    -------
    tuple of PriceScenario
        In order of first appearance; prices in money/(kW·year).

    Raises
    ------
    InputError
        Missing columns; an empty scenario name; a utility not in the utility table (or any utility
        named without one); a row with neither a cost nor a factor, or with both; a negative price or
        factor; a utility priced twice in one scenario; two factor rows in one scenario.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> from heatloom.model import Utility
    >>> f = pathlib.Path(tempfile.mkdtemp()) / "prices.csv"
    >>> _ = f.write_text("scenario,utility,cost,factor\\ntoday,steam,200,\\ndear,steam,,1.5\\ndear,,,1.1\\n")
    >>> base = [Utility("steam", 180, 179, 200.0), Utility("CW", 20, 30, 10.0)]
    >>> [(s.name, s.prices, s.factor) for s in read_price_scenarios(f, base)]
    [('today', (('steam', 200.0),), 1.0), ('dear', (('steam', 300.0),), 1.1)]
    """
    table = read_table(path, SCENARIO_COLUMNS, required=("scenario", ("cost", "factor")), sheet=sheet,
                       columns=columns, hours_per_year=hours_per_year,
                       hint=" (columns: scenario, utility, cost and/or factor)")
    n = len(table)
    names = table.text("scenario")
    utility = table.text("name") if "name" in table else [""] * n
    cost = table.numbers("cost", required=False, what="price") if "cost" in table else np.full(n, np.nan)
    factor = table.numbers("factor", required=False, what="price factor") if "factor" in table else np.full(n, np.nan)
    base = None if utilities is None else {u.name: u for u in utilities}
    currency = currency_of(table.columns["cost"].unit) if "cost" in table else None
    if currency is not None and base is not None:
        named = sorted({u.currency for u in base.values() if u.currency} - {currency})
        if named:
            raise table.error(f"the scenario prices are in {currency} but the utility table's prices are in "
                              f"{', '.join(named)}; give both in one currency (heatloom converts no currency)",
                              column="cost")
    order: list[str] = []
    prices: dict[str, dict[str, float]] = {}
    factors: dict[str, float] = {}
    where_named: dict[str, str] = {}
    for i in range(n):
        name = names[i]
        if not name:
            raise table.error("scenario name is empty", index=i, column="scenario")
        key = name.casefold()
        if key not in where_named:
            where_named[key] = name
            order.append(name)
            prices[name] = {}
        name = where_named[key]
        has_cost, has_factor = not math.isnan(cost[i]), not math.isnan(factor[i])
        if has_cost == has_factor:
            column = "cost" if "cost" in table else "factor"
            raise table.error(f"scenario '{name}': give either a price (cost) or a factor in each row, "
                              f"{'not both' if has_cost else 'got neither'}", index=i, column=column)
        if has_cost and not (cost[i] >= 0):
            raise table.error(f"scenario '{name}': price must be >= 0, got {cost[i]:g} per kW·year", index=i,
                              column="cost")
        if has_factor and not (factor[i] >= 0):
            raise table.error(f"scenario '{name}': factor must be >= 0, got {factor[i]:g}", index=i,
                              column="factor")
        u = utility[i]
        if not u:
            if has_cost:
                raise table.error(f"scenario '{name}': a price needs a utility name", index=i,
                                  column="name" if "name" in table else "cost")
            if name in factors:
                raise table.error(f"scenario '{name}' has two factors for the other utilities", index=i,
                                  column="factor")
            factors[name] = float(factor[i])
            continue
        if base is None:
            raise table.error(f"scenario '{name}' names utility '{u}' but no utility table was given "
                              "(give one, e.g. --utilities utilities.csv)", index=i, column="name")
        if u not in base:
            raise table.error(f"scenario '{name}': utility '{u}' is not in the utility table (utilities: "
                              f"{', '.join(base)})", index=i, column="name")
        if u in prices[name]:
            raise table.error(f"scenario '{name}' prices utility '{u}' twice", index=i, column="name")
        prices[name][u] = float(cost[i]) if has_cost else base[u].cost * float(factor[i])
    try:
        return tuple(PriceScenario(s, tuple(prices[s].items()), factors.get(s, 1.0), currency) for s in order)
    except InputError as e:   # not expected after the checks above; keep the file in the message anyway
        raise InputError(e.message, file=table.label, column=e.column) from None
