"""Reading the units of an existing heat-exchanger network (CSV, XLSX) into a :class:`heatloom.model.UnitTable`.

One row per unit::

    unit,hot,cold,area [m2],duty [kW],U [kW/m2K],hot_order,cold_order,type,shells
    E-101,reactor effluent,feed,42.0,,0.45,1,2,counter-current,
    E-102,bottoms,feed,,850,0.40,1,1,1-2,2
    H-101,MP steam,feed,15.0,,,,3,,
    C-101,reactor effluent,cooling water,30.0,,,2,,,

Columns:

* ``unit`` — a unique name (tag);
* ``hot`` — a hot process stream or a hot utility, by name; ``cold`` — a cold process stream or a cold
  utility.  A unit between two process streams is an exchanger, one with a hot utility a heater, one with
  a cold utility a cooler;
* ``area`` [m²] and/or ``duty`` [kW] — at least one.  A duty without an area is turned into an area at
  the temperatures it implies, which must be known without simulating the network (see
  :class:`heatloom.retrofit.existing.ExistingNetwork`); otherwise give the area;
* ``U`` [kW/(m²·K)] — optional when the stream and utility tables give film coefficients ``h``
  (1/U = 1/h_hot + 1/h_cold);
* ``hot_order``, ``cold_order`` — position of the unit along its hot and its cold process stream from the
  stream's supply end, 1, 2, ...; default the row order.  Give them for every unit of a stream or for
  none; leave them empty on a utility side;
* ``type`` — ``counter-current`` (default), ``co-current``, ``1-2`` (shell-and-tube, one shell pass and
  an even number of tube passes), with ``shells`` in series (1 by default; ``shells`` > 1 without a type
  means 1-2 shells), or ``double pipe`` (``hairpin``; rated as counter-current);
* ``role`` (optional) — ``exchanger``, ``heater`` or ``cooler``; checked against the hot and cold names
  (a unit between two process streams is an exchanger, one with a hot utility a heater, one with a cold
  utility a cooler);
* ``hot_fraction``, ``cold_fraction`` (optional, ``hot fraction [-]`` in a design's table) — the share of the
  hot and the cold process stream's flow through the unit, in (0, 1]; empty or 1 where the stream is not
  split.  A **stream split** is written as one position held by several units, one per parallel branch:
  they give the same ``hot_order`` (``cold_order``) on the split stream and each its fraction below 1,
  and the fractions of one split add up to 1 (within 0.001).  The branches take the stream at its
  temperature before the split and mix after it.  Positions may repeat only inside such a split;
* ``hot_branch``, ``cold_branch`` (optional, text) — a label naming the branch of a split a unit sits on, for
  a branch with **several units in series**: the units of one split with the same label form one branch,
  and each gives the branch's fraction; ``hot_branch_order``, ``cold_branch_order`` (optional, 1, 2, ...)
  give their places on the branch from the split (default the row order).  Without a label, each unit of
  a split is a branch of its own.  A **split inside a branch** is a path of labels, outer first, with one
  place per label: ``hot_branch`` ``b/a`` and ``hot_branch_order`` ``1/2`` is the second unit on branch a
  of the split that is the first item of branch b.  A bypass (a branch without a unit) cannot be written
  and is refused (:mod:`heatloom.retrofit.branches`);
* ``hot_in``, ``hot_out``, ``cold_in``, ``cold_out`` (optional, ``hot in [°C]`` ... in a design's table) — on
  the side of a **non-isothermal utility** (hot oil, cooling water) of a heater or cooler, the utility's
  inlet and outlet temperature in that unit: the part of the utility's range the unit takes, as a design
  writes it when it pipes hot oil through its heaters in series.  Both or neither; they must lie within the
  utility's range (supply → target, within 0.001 K, the rounding of a design's table).  Without them the
  unit takes the utility over its whole range.  On a process side, and for an isothermal utility, they are
  informative: the simulation finds the temperatures.

A heater or cooler that is the last unit on its stream (a *trim* unit) may leave both area and duty empty:
it takes the rest of its stream's duty (a heater brings its cold stream to target, a cooler its hot
stream).  Every other unit needs an area or a duty; that is checked when the table is resolved against the
streams (:class:`heatloom.retrofit.ExistingNetwork`), which knows which unit is last on its stream.

The units table that ``heatloom design`` writes (``design_units.csv``, sheet ``units`` of ``design.xlsx``,
from :meth:`heatloom.network.Network.to_frame`) is a network table: besides the columns above it carries
``LMTD [K]``, ``F [-]``, ``area per shell [m²]``, ``hairpins``, ``hot in``/``hot out``/``cold in``/``cold out [°C]``
(read on utility sides, see above), ``hot fraction``/``cold fraction [-]`` (read, see above) and
``cost [<currency>/year]``.  The others are *informative* (:data:`INFORMATIVE_COLUMNS`): accepted and not
used, since they follow from the streams, the areas and the costs file.  The units of one split of a design share a position, and a
design's branch with units in series carries a branch label, so a design with stream splits reads back as it
was designed.

Units may be written in the headers (``area [ft2]``, ``duty (MW)``, ``U [W/m2K]``) or in a units row under
the header, converted with :mod:`heatloom.io.units`; title lines are skipped and foreign headers can be
mapped (``columns={"Tag": "unit"}``), as for stream tables (:mod:`heatloom.io.tables`).  Every problem is
an :class:`~heatloom.errors.InputError` naming the file, the row and the column as written.
"""

from __future__ import annotations

import os
from collections.abc import Mapping

import numpy as np

from ..errors import InputError
from ..model.exchangers import ExchangerType
from ..model.existing import ExistingUnit, UnitRole, UnitTable
from .cells import cell_text
from .tables import Table, normalise_name, parse_column_mapping, read_table
from .units import QuantityKind

__all__ = ["NETWORK_COLUMNS", "INFORMATIVE_COLUMNS", "NETWORK_ALIASES", "read_network"]

NETWORK_COLUMNS = ("unit", "role", "hot", "cold", "area", "duty", "U", "hot_order", "cold_order", "type", "shells",
                   "hot_fraction", "cold_fraction", "hot_branch", "hot_branch_order", "cold_branch",
                   "cold_branch_order", "hot_in", "hot_out", "cold_in", "cold_out")
"""Canonical columns of a network table that are read."""

INFORMATIVE_COLUMNS = ("LMTD", "F", "area_per_shell", "hairpins", "cost")
"""Columns of a designed network's units table that are accepted and not used."""

NETWORK_ALIASES: dict[str, tuple[str, ...]] = {
    "unit": ("unit", "name", "tag", "unit name", "exchanger", "equipment", "item"),
    "hot": ("hot", "hot side", "hot stream", "hot fluid", "hot utility or stream"),
    "cold": ("cold", "cold side", "cold stream", "cold fluid", "cold utility or stream"),
    "area": ("area", "A", "surface", "surface area", "heat transfer area", "installed area"),
    "duty": ("duty", "Q", "heat duty", "heat load", "load"),
    "U": ("U", "overall coefficient", "overall heat transfer coefficient", "U value", "OHTC"),
    "hot_order": ("hot_order", "hot position", "position on hot", "hot sequence", "hot seq"),
    "cold_order": ("cold_order", "cold position", "position on cold", "cold sequence", "cold seq"),
    "type": ("type", "arrangement", "flow arrangement", "exchanger type", "configuration"),
    "shells": ("shells", "number of shells", "shells in series", "shell count", "n shells"),
    "role": ("role", "unit role", "service"),
    "LMTD": ("LMTD", "log mean temperature difference"),
    "F": ("F", "F factor", "LMTD correction factor"),
    "area_per_shell": ("area per shell", "area_per_shell", "shell area"),
    "hairpins": ("hairpins", "number of hairpins"),
    "hot_in": ("hot in", "hot inlet", "hot_in"),
    "hot_out": ("hot out", "hot outlet", "hot_out"),
    "cold_in": ("cold in", "cold inlet", "cold_in"),
    "cold_out": ("cold out", "cold outlet", "cold_out"),
    "hot_fraction": ("hot fraction", "hot_fraction", "hot split fraction"),
    "cold_fraction": ("cold fraction", "cold_fraction", "cold split fraction"),
    "hot_branch": ("hot branch", "hot_branch", "hot split branch"),
    "cold_branch": ("cold branch", "cold_branch", "cold split branch"),
    "hot_branch_order": ("hot branch order", "hot_branch_order", "position on hot branch"),
    "cold_branch_order": ("cold branch order", "cold_branch_order", "position on cold branch"),
    "cost": ("cost", "annual cost", "cost per year"),
}
"""Accepted names of each column (compared ignoring case, spaces, underscores, hyphens and dots)."""

_KINDS = {"area": QuantityKind.AREA, "duty": QuantityKind.DUTY, "U": QuantityKind.FILM_COEFFICIENT,
          "LMTD": QuantityKind.TEMPERATURE_DIFFERENCE, "area_per_shell": QuantityKind.AREA,
          **dict.fromkeys(("hot_in", "hot_out", "cold_in", "cold_out"), QuantityKind.TEMPERATURE)}
_VOCABULARY = NETWORK_COLUMNS + INFORMATIVE_COLUMNS
_ROLES = {"exchanger": UnitRole.EXCHANGER, "processexchanger": UnitRole.EXCHANGER, "heater": UnitRole.HEATER,
          "cooler": UnitRole.COOLER}
_TYPES = {
    **dict.fromkeys(("countercurrent", "counter", "counterflow", "cc", "countercurrentflow"),
                    ExchangerType.COUNTER_CURRENT),
    **dict.fromkeys(("cocurrent", "co", "parallel", "parallelflow", "cocurrentflow"), ExchangerType.CO_CURRENT),
    **dict.fromkeys(("12", "12shell", "shellandtube", "shellandtube12", "s&t", "st", "stx", "12shellandtube",
                     "shellandtube1shell2tubepasses", "shellandtube12shells"), ExchangerType.SHELL_AND_TUBE_1_2),
    **dict.fromkeys(("doublepipe", "hairpin", "hairpins", "doublepipehairpin", "doublepipehairpins"),
                    ExchangerType.DOUBLE_PIPE),
}


def read_network(path: str | os.PathLike, *, sheet: str | None = None,
                 columns: Mapping[str, str] | str | None = None, notes: list[str] | None = None,
                 strict: bool = False) -> UnitTable:
    """Read the units of an existing network (one row per unit) from a CSV file or an Excel workbook.

    The table is checked row by row here; :meth:`heatloom.retrofit.ExistingNetwork.from_table` resolves
    it against the streams and utilities (roles, positions, U, areas from stated duties) and names the
    file, row and column of any problem it finds.

    Parameters
    ----------
    path : str or path-like
        ``.csv`` or ``.xlsx`` file; never modified.
    sheet : str, optional
        Worksheet name; default the first sheet.
    columns : mapping or str, optional
        Foreign header → canonical column name, e.g. ``{"Tag": "unit", "Surface": "area"}`` or
        ``"Tag=unit,Surface=area"``; ``"-"`` ignores a column.
    notes : list of str, optional
        Receives a note naming every column that is not used (with the nearest known name).
    strict : bool, optional
        Refuse unknown columns instead.

    Returns
    -------
    UnitTable
        The units in row order, the file name, the headers as written and the reader's notes.

    Raises
    ------
    InputError
        One line naming file, row and column: missing/unreadable file, missing columns, text in a number
        cell, unknown units, an empty name, an unknown type or role, shells or positions that are not whole
        numbers, a fraction outside (0, 1].  What needs the streams (unknown streams or utilities, a side of
        the wrong kind, a role that the sides contradict, positions that repeat outside a split or skip,
        fractions of a split that do not add up to 1, branch labels or places that do not fit, no area and no duty
        on a unit other than a trim heater or cooler, no U and no film coefficients, stated duties a stream
        cannot give or take) is found by :meth:`~heatloom.retrofit.ExistingNetwork.from_table`, located the same
        way.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> f = pathlib.Path(tempfile.mkdtemp()) / "network.csv"
    >>> _ = f.write_text("unit,hot,cold,area [ft2],U [kW/m2K],duty [kW]\\n"
    ...                  "E1,H1,C1,28.75,0.5,\\nH1,steam,C1,,,125\\nC1,H1,water,,,80\\n")
    >>> table = read_network(f)
    >>> [(x.name, round(x.area, 3) if x.area else x.duty) for x in table.units]
    [('E1', 2.671), ('H1', 125.0), ('C1', 80.0)]
    """
    mapping = parse_column_mapping(columns, _VOCABULARY)
    table = read_table(path, _VOCABULARY, required=("unit", "hot", "cold", ("area", "duty")), sheet=sheet,
                       columns=mapping, aliases=NETWORK_ALIASES, kinds={c: _KINDS.get(c) for c in _VOCABULARY},
                       notes=notes, strict=strict)
    units = _units(table)
    assumed = []
    if any(u.shells > 1 for u in units) and "type" not in table:
        assumed.append("units with more than one shell and no type are taken as 1-2 shell-and-tube")
    headers = tuple((c, table.header(c)) for c in _VOCABULARY if c in table)
    return UnitTable(tuple(units), source=table.label, headers=headers, notes=tuple(assumed))


# --------------------------------------------------------------------------------------------------
# rows → units


def _whole(table: Table, values: np.ndarray, name: str, what: str) -> list[int | None]:
    out: list[int | None] = []
    for i, v in enumerate(values.tolist()):
        if v != v:
            out.append(None)
            continue
        if not (v >= 1 and float(v).is_integer()):
            written = cell_text(table.columns[name].cells[i])
            raise table.error(f"{what} must be a whole number >= 1, got {written}", index=i, column=name)
        out.append(int(v))
    return out


def _units(table: Table) -> list[ExistingUnit]:
    names = table.text("unit")
    hot = table.text("hot")
    cold = table.text("cold")
    area = table.optional_numbers("area", what="area")
    duty = table.optional_numbers("duty", what="duty")
    u = table.optional_numbers("U", what="overall coefficient U")
    hot_order = _whole(table, table.optional_numbers("hot_order", what="hot_order"), "hot_order",
                       "hot_order (position along the hot stream from its supply end)")
    cold_order = _whole(table, table.optional_numbers("cold_order", what="cold_order"), "cold_order",
                        "cold_order (position along the cold stream from its supply end)")
    shells = _whole(table, table.optional_numbers("shells", what="shells"), "shells", "shells")
    steps = {side: table.text(f"{side}_branch_order") if f"{side}_branch_order" in table else [""] * len(table)
             for side in ("hot", "cold")}
    fractions = {side: _fractions(table, side) for side in ("hot", "cold")}
    types = table.text("type") if "type" in table else [""] * len(table)
    roles = table.text("role") if "role" in table else [""] * len(table)
    branches = {side: table.text(f"{side}_branch") if f"{side}_branch" in table else [""] * len(table)
                for side in ("hot", "cold")}
    ends = {c: table.optional_numbers(c, what=c.replace("_", " ")) for c in ("hot_in", "hot_out", "cold_in", "cold_out")}
    out = []
    for i in range(len(table)):
        for column, values, what in (("unit", names, "unit name"), ("hot", hot, "hot side (a hot stream or "
                                     "hot utility)"), ("cold", cold, "cold side (a cold stream or cold utility)")):
            if not values[i]:
                raise table.error(f"empty cell: the {what} is required", index=i, column=column)
        for column, values, unit in (("area", area, "m²"), ("duty", duty, "kW"), ("U", u, "kW/(m²·K)")):
            if values[i] == values[i] and not values[i] > 0:
                written = cell_text(table.columns[column].cells[i])
                raise table.error(f"{column} must be > 0 {unit}, got {written}", index=i, column=column)
        if types[i]:
            arrangement = _TYPES.get(normalise_name(types[i]))
            if arrangement is None:
                raise table.error(f"unknown type {types[i]!r}; allowed: counter-current, co-current, 1-2 "
                                  "(shell-and-tube), double pipe (hairpin)", index=i, column="type")
        elif shells[i] is not None and shells[i] > 1:
            arrangement = ExchangerType.SHELL_AND_TUBE_1_2
        else:
            arrangement = ExchangerType.COUNTER_CURRENT
        role = None
        if roles[i]:
            role = _ROLES.get(normalise_name(roles[i]))
            if role is None:
                raise table.error(f"unknown role {roles[i]!r}; allowed: exchanger, heater, cooler", index=i,
                                  column="role")
        try:
            out.append(ExistingUnit(names[i], hot[i], cold[i], area=_or_none(area[i]), duty=_or_none(duty[i]),
                                    stated_role=role,
                                    u=_or_none(u[i]), arrangement=arrangement,
                                    shells=1 if shells[i] is None else shells[i], hot_position=hot_order[i],
                                    cold_position=cold_order[i], hot_fraction=fractions["hot"][i],
                                    cold_fraction=fractions["cold"][i], hot_branch=branches["hot"][i] or None,
                                    cold_branch=branches["cold"][i] or None,
                                    hot_branch_order=steps["hot"][i] or None,
                                    cold_branch_order=steps["cold"][i] or None,
                                    hot_temperatures=(_or_none(ends["hot_in"][i]), _or_none(ends["hot_out"][i])),
                                    cold_temperatures=(_or_none(ends["cold_in"][i]), _or_none(ends["cold_out"][i])),
                                    row=int(table.rows[i])))
        except InputError as e:
            raise table.locate(e, i) from None
    return out


def _fractions(table: Table, side: str) -> list[float]:
    """The hot or cold fraction of every row, in (0, 1] [-]: 1 where empty or within 1e-6 of 1."""
    column = f"{side}_fraction"
    out = []
    for i, f in enumerate(table.optional_numbers(column, what=f"{side} fraction").tolist()):
        if f != f:
            out.append(1.0)
            continue
        if not 0 < f <= 1 + 1e-6:
            written = cell_text(table.columns[column].cells[i])
            raise table.error(f"{side} fraction must be in (0, 1] (the share of the stream's flow through this unit "
                              f"on a split branch), got {written}", index=i, column=column)
        out.append(1.0 if f > 1 - 1e-6 else float(f))
    return out


def _or_none(x: float) -> float | None:
    return None if x != x else float(x)
