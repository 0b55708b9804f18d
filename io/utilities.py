"""Reading utility tables (steam, hot oil, cooling water, refrigerants...) from CSV or XLSX.

Table layout::

    name,T_supply,T_target,cost
    HP steam,250,249,160
    cooling water,20,30,12

``T_supply``/``T_target`` in °C and ``cost`` in money/(kW·year) unless a unit is written in the
header or a units row (``cost [€/MW/yr]``); optional ``h`` [kW/(m²·K)] and ``kind`` (``hot`` or
``cold``).  Hot or cold follows from the temperatures (falling: hot, rising: cold).  A utility with
equal temperatures (condensing steam, evaporating refrigerant) is hot when it lies above every process
temperature and cold when below every one (pass ``process`` to decide); otherwise the table must say,
in a ``kind`` column.  Which utilities to use when none are given is decided by the targeting code,
not here.
"""

from __future__ import annotations

import os
from collections.abc import Mapping

from ..errors import InputError
from ..model import StreamTable, Utility, UtilityKind
from .tables import read_table
from .units import currency_of

__all__ = ["UTILITY_COLUMNS", "read_utilities"]

UTILITY_COLUMNS = ("name", "T_supply", "T_target", "cost", "h", "kind")
"""Canonical columns of a utility table."""

_KINDS = {
    **dict.fromkeys(("hot", "heating", "heater", "hot utility", "h"), UtilityKind.HOT),
    **dict.fromkeys(("cold", "cooling", "cooler", "cold utility", "c"), UtilityKind.COLD),
}


def read_utilities(path: str | os.PathLike, *, sheet: str | None = None,
                   columns: Mapping[str, str] | str | None = None,
                   process: StreamTable | None = None, hours_per_year: float | None = None,
                   notes: list[str] | None = None, strict: bool = False) -> tuple[Utility, ...]:
    """Read hot and cold utilities from a CSV file or an Excel workbook.

    Parameters
    ----------
    path : str or path-like
        ``.csv`` or ``.xlsx`` file; never modified.
    sheet : str, optional
        Worksheet name; default the first sheet.
    columns : mapping or str, optional
        Foreign header → canonical column name (see :func:`heatloom.io.parse_column_mapping`).
    process : StreamTable, optional
        The process streams; used only to classify utilities with equal supply and target
        temperatures and no ``kind``.
    hours_per_year : float, optional
        Operating hours per year [h/year]; needed only when prices are per energy (``cost [$/kWh]``),
        which are then turned into money/(kW·year).
    notes : list of str, optional
        Receives a note naming each header that is not a known column (with the nearest known name).
    strict : bool, optional
        Refuse unknown headers instead of noting them.

    Returns
    -------
    tuple of Utility
        In table order, canonical units (°C, money/(kW·year), kW/(m²·K)).

    Raises
    ------
    InputError
        As for :func:`heatloom.io.read_streams`, plus: an unknown kind, a kind that contradicts the
        temperatures, a repeated name, and an isothermal utility inside the process temperature range
        without a kind (the message asks for a ``kind`` column).

    Examples
    --------
    >>> import pathlib, tempfile
    >>> f = pathlib.Path(tempfile.mkdtemp()) / "utilities.csv"
    >>> _ = f.write_text("name,T_supply,T_target,cost [€/MW/yr]\\nsteam,180,179,120000\\nCW,20,30,10000\\n")
    >>> [(u.name, u.kind.value, u.cost) for u in read_utilities(f)]
    [('steam', 'hot', 120.0), ('CW', 'cold', 10.0)]
    """
    table = read_table(path, UTILITY_COLUMNS, required=("name", "T_supply", "T_target", "cost"), sheet=sheet,
                       columns=columns, hours_per_year=hours_per_year, notes=notes, strict=strict)
    n = len(table)
    names = table.text("name")
    ts = table.numbers("T_supply", what="supply temperature")
    tt = table.numbers("T_target", what="target temperature")
    cost = table.numbers("cost", what="cost")
    currency = currency_of(table.columns["cost"].unit)
    h = table.optional_numbers("h", what="film coefficient h")
    kinds = table.text("kind") if "kind" in table else [""] * n
    if process is not None:
        temps = [t for s in process for g in s.segments for t in (g.supply_temperature, g.target_temperature)]
        lowest, highest = min(temps), max(temps)
    seen: dict[str, int] = {}
    out = []
    for i in range(n):
        name = names[i]
        if not name:
            raise table.error("utility name is empty", index=i, column="name")
        if name in seen:
            raise table.error(f"utility name '{name}' is used twice (first in row {int(table.rows[seen[name]])}); "
                              "names must be unique", index=i, column="name")
        seen[name] = i
        kind = None
        if kinds[i]:
            kind = _KINDS.get(kinds[i].casefold())
            if kind is None:
                raise table.error(f"kind must be 'hot' or 'cold', got {kinds[i]!r}", index=i, column="kind")
        elif ts[i] == tt[i]:
            where = "kind" if "kind" in table else "T_target"
            if process is None:
                raise table.error(f"utility '{name}' has equal supply and target temperatures ({ts[i]:g} °C): "
                                  "say whether it is hot or cold in a 'kind' column (or pass the process streams)",
                                  index=i, column=where)
            if ts[i] > highest:
                kind = UtilityKind.HOT
            elif ts[i] < lowest:
                kind = UtilityKind.COLD
            else:
                raise table.error(f"utility '{name}' has equal supply and target temperatures ({ts[i]:g} °C) "
                                  f"within the process temperature range ({lowest:g} to {highest:g} °C): say "
                                  "whether it is hot or cold in a 'kind' column", index=i, column=where)
        if not (h[i] > 0) and h[i] == h[i]:
            raise table.error(f"film coefficient h must be > 0, got {h[i]:g} kW/(m²·K)", index=i, column="h")
        try:
            out.append(Utility(name, float(ts[i]), float(tt[i]), float(cost[i]), kind,
                               None if h[i] != h[i] else float(h[i]), row=int(table.rows[i]), currency=currency))
        except InputError as e:
            raise table.locate(e, i) from None
    return tuple(out)
