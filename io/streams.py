"""Reading process stream tables (CSV, XLSX) into a :class:`heatloom.model.StreamTable`.

Two layouts are read, told apart by their columns:

**Segment table** (the usual one), one row per linear segment::

    name,T_supply,T_target,CP
    H1,180,60,3.0
    C1,20,135,2.0

``T_supply``, ``T_target`` in °C and ``CP`` in kW/K unless a unit is written in the header
(``T_supply [degF]``, ``CP (MW/K)``) or in a units row under it.  Optional columns: ``duty`` [kW]
instead of CP (CP = duty/|T_supply − T_target|; when both are given they must agree within a relative
1e-6), ``h`` [kW/(m²·K)], ``dT_min_contrib`` [K], ``kind`` (``hot``/``cold``, checked against the
temperatures), and ``forbid`` and ``require``: the names of the streams or utilities this stream may not
be matched with, or must be, separated by ``;`` (read by :func:`read_match_rules`; a network design then
keeps to them).  Consecutive rows with one name are the segments of one stream; they must chain.

**Temperature–duty table** (as simulators export heating and cooling curves), one row per point, from
the supply state to the target state::

    name,T [°C],Q_cumulative [kW]
    condenser feed,120,0
    condenser feed,95,800
    ...

detected when there are ``T`` and cumulative-duty columns (``Q_cumulative``, ``Q``, ``duty``,
``heat flow``, ``enthalpy``...) but no ``T_supply``/``T_target``.  Each stream is fitted with the
fewest linear segments that stay within ``fit_tolerance`` kelvin of the data on the safe side (see
:mod:`heatloom.io.points`).  Optional ``h`` and ``dT_min_contrib`` columns hold one value per stream,
``forbid`` and ``require`` as in a segment table.

Column names, title lines, units rows and file formats are handled by :mod:`heatloom.io.tables`.
Every problem raises :class:`~heatloom.errors.InputError` naming the file, row and column.
"""

from __future__ import annotations

import os
from collections.abc import Mapping

import numpy as np

from .. import defaults
from ..errors import InputError
from ..model import MatchRules, Segment, Stream, StreamTable
from .cells import Cells, cell_text, load_cells
from .points import DEFAULT_FIT_TOLERANCE, check_fit_tolerance, fit_vertices, point_problem
from .tables import ALIASES, COLUMN_KINDS, IGNORE, Table, find_header, parse_column_mapping, read_table

__all__ = ["SEGMENT_COLUMNS", "POINT_COLUMNS", "MATCH_SEPARATOR", "STREAM_ALIASES", "read_streams",
           "read_match_rules"]

SEGMENT_COLUMNS = ("name", "T_supply", "T_target", "CP", "duty", "mass_flow", "specific_heat", "h", "dT_min_contrib", "kind",
                   "forbid", "require")
"""Canonical columns of a segment table."""
POINT_COLUMNS = ("name", "T", "Q_cumulative", "h", "dT_min_contrib", "forbid", "require")
"""Canonical columns of a temperature–duty table."""
MATCH_SEPARATOR = ";"
"""Separator of the names in a ``forbid`` or ``require`` cell."""
STREAM_ALIASES = {**ALIASES,
                  "forbid": ("forbid", "forbidden", "forbidden matches", "forbid matches", "never match"),
                  "require": ("require", "required", "required matches", "require matches", "must match")}
"""Accepted names of the columns of a stream table: those of :data:`heatloom.io.tables.ALIASES` and the two
match columns."""
_KINDS = {**COLUMN_KINDS, "forbid": None, "require": None}

_CP_DUTY_RTOL = 1e-6
_HOT = {"hot", "h", "hot stream"}
_COLD = {"cold", "c", "cold stream"}


def read_streams(path: str | os.PathLike, *, sheet: str | None = None,
                 columns: Mapping[str, str] | str | None = None,
                 fit_tolerance: float = DEFAULT_FIT_TOLERANCE, notes: list[str] | None = None,
                 strict: bool = False) -> StreamTable:
    """Read a stream table from a CSV file or an Excel workbook.

    Parameters
    ----------
    path : str or path-like
        ``.csv`` (comma, semicolon or tab separated) or ``.xlsx`` file; never modified.
    sheet : str, optional
        Worksheet name; default the first sheet.
    columns : mapping or str, optional
        Foreign header → canonical column name, e.g. ``{"Stream": "name", "Tin": "T_supply"}`` or
        ``"Stream=name,Tin=T_supply"``; ``"-"`` ignores a column.
    fit_tolerance : float, optional
        Temperature–duty tables only: largest deviation of the fitted segments from the data [K];
        default 0.5 K.  The fit is always on the safe side.
    notes : list of str, optional
        Receives a note naming each header that is not a known column (with the nearest known name).
    strict : bool, optional
        Refuse unknown headers instead of noting them.

    Returns
    -------
    StreamTable
        Canonical units (°C, kW/K, kW/(m²·K), K); ``source`` is the file (and sheet).

    Raises
    ------
    InputError
        One line naming file, row and column: missing/unreadable/empty file, missing columns, text
        or NaN/inf in a number cell, CP or duty <= 0, supply = target, CP and duty that disagree,
        segments that do not chain, repeated names that are not consecutive, temperatures below
        absolute zero, unknown units, unknown sheet.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> f = pathlib.Path(tempfile.mkdtemp()) / "streams.csv"
    >>> _ = f.write_text("name,T_supply [degF],T_target [degF],CP [kW/K]\\nH1,212,32,2\\n")
    >>> s = read_streams(f)["H1"]
    >>> s.supply_temperature, s.target_temperature, s.duty
    (100.0, 0.0, 200.0)
    """
    tolerance = check_fit_tolerance(fit_tolerance)
    mapping = parse_column_mapping(columns)
    cells = load_cells(path, sheet=sheet)
    if _is_point_layout(cells, mapping):
        table = read_table(cells, POINT_COLUMNS, required=("name", "T", "Q_cumulative"), columns=mapping,
                           notes=notes, strict=strict, aliases=STREAM_ALIASES, kinds=_KINDS)
        streams = _point_streams(table, tolerance)
    else:
        table = read_table(cells, SEGMENT_COLUMNS, required=("name", "T_supply", "T_target", ("CP", "duty", "mass_flow")),
                           columns=mapping, notes=notes, strict=strict, aliases=STREAM_ALIASES, kinds=_KINDS,
                           hint=" (a temperature–duty table needs columns name, T and Q_cumulative instead)")
        streams = _segment_streams(table)
    try:
        return StreamTable(tuple(streams), source=table.label)
    except InputError as e:
        raise table.locate(e) from None


def _is_point_layout(cells: Cells, mapping: Mapping[str, str]) -> bool:
    targets = set(mapping.values()) - {IGNORE}
    if targets & {"T", "Q_cumulative"}:
        return True
    if targets & {"T_supply", "T_target", "CP"}:
        return False
    pt_index, pts = find_header(cells, POINT_COLUMNS, mapping, aliases=STREAM_ALIASES)
    if pt_index is None or not {"T", "Q_cumulative"} <= {m[0] for m in pts.values()}:
        return False
    seg_index, seg = find_header(cells, SEGMENT_COLUMNS, mapping, aliases=STREAM_ALIASES)
    if seg_index is None or seg_index > pt_index:
        return True
    return seg_index == pt_index and not ({"T_supply", "T_target"} & {m[0] for m in seg.values()})


def _as_written(table: Table, name: str, i: int) -> str:
    col = table.columns[name]
    unit = col.unit or (col.conversion.kind.canonical if col.conversion is not None else "")
    return f"{cell_text(col.cells[i])} {unit}".strip()


def _first(mask: np.ndarray) -> int | None:
    return int(np.argmax(mask)) if mask.any() else None


def _check_film_and_contribution(table: Table, h: np.ndarray, dtc: np.ndarray) -> None:
    """Film coefficients h [kW/(m²·K)] must be > 0 and ΔTmin contributions [K] >= 0 where given (not NaN)."""
    if (i := _first(~np.isnan(h) & ~(h > 0))) is not None:
        raise table.error(f"film coefficient h must be > 0, got {_as_written(table, 'h', i)}", index=i, column="h")
    if (i := _first(~np.isnan(dtc) & ~(dtc >= 0))) is not None:
        raise table.error(f"ΔTmin contribution must be >= 0, got {_as_written(table, 'dT_min_contrib', i)}",
                          index=i, column="dT_min_contrib")


def _groups(table: Table, names: list[str]) -> list[tuple[int, int]]:
    """Runs of consecutive equal names as (start, stop); a name may not come back later."""
    for i, nm in enumerate(names):
        if not nm:
            raise table.error("stream name is empty", index=i, column="name")
    runs: list[tuple[int, int]] = []
    start = 0
    for i in range(1, len(names) + 1):
        if i == len(names) or names[i] != names[start]:
            runs.append((start, i))
            start = i
    seen: dict[str, int] = {}
    for a, _ in runs:
        nm = names[a]
        if nm in seen:
            first_row = int(table.rows[seen[nm]])
            raise table.error(f"stream name '{nm}' was used before, in row {first_row}, with other streams "
                              f"in between; the rows of one stream must be consecutive (or use another name)",
                              index=a, column="name")
        seen[nm] = a
    return runs


def _segment_streams(table: Table) -> list[Stream]:
    n = len(table)
    names = table.text("name")
    ts = table.numbers("T_supply", what="supply temperature")
    tt = table.numbers("T_target", what="target temperature")
    cp = table.optional_numbers("CP", what="heat capacity flow rate CP")
    duty = table.optional_numbers("duty", what="duty")
    h = table.optional_numbers("h", what="film coefficient h")
    dtc = table.optional_numbers("dT_min_contrib", what="ΔTmin contribution")
    runs = _groups(table, names)

    if (i := _first(ts == tt)) is not None:
        raise table.error(f"supply and target temperatures are equal ({_as_written(table, 'T_target', i)}): a "
                          "stream must change temperature (give a phase change a small glide, e.g. 0.1 K)",
                          index=i, column="T_target")
    mass = table.optional_numbers("mass_flow", what="mass flow rate")
    specific = table.optional_numbers("specific_heat", what="specific heat")
    for given, other, words in ((mass, specific, ("mass_flow", "specific_heat", "specific heat")),
                                (specific, mass, ("specific_heat", "mass_flow", "mass flow rate"))):
        if (i := _first(~np.isnan(given) & np.isnan(other))) is not None:
            raise table.error(f"a {words[0]} is given without a {words[2]}: CP = mass flow × specific heat needs "
                              "both", index=i, column=words[0] if words[1] not in table else words[1])
        if (i := _first(~np.isnan(given) & ~(given > 0))) is not None:
            raise table.error(f"{words[0]} must be > 0, got {_as_written(table, words[0], i)}", index=i,
                              column=words[0])
    from_mass = mass * specific
    if (i := _first(~np.isnan(from_mass) & ~np.isnan(cp) & (np.abs(cp - from_mass) > _CP_DUTY_RTOL * cp))) is not None:
        raise table.error(f"CP {cp[i]:.6g} kW/K disagrees with mass flow × specific heat = {from_mass[i]:.6g} kW/K; give one "
                          "of them or make them agree", index=i, column="CP")
    given_cp = cp
    cp = np.where(np.isnan(cp), from_mass, cp)
    if (i := _first(np.isnan(cp) & np.isnan(duty))) is not None:
        raise table.error("empty cell: give CP or duty (or a mass flow and a specific heat)", index=i,
                          column="CP" if "CP" in table else "duty" if "duty" in table else "mass_flow")
    if (i := _first(~np.isnan(cp) & ~(cp > 0))) is not None:
        raise table.error(f"heat capacity flow rate CP must be > 0, got {_as_written(table, 'CP', i)}",
                          index=i, column="CP")
    if (i := _first(~np.isnan(duty) & ~(duty > 0))) is not None:
        raise table.error(f"duty must be > 0 (the heat removed from a hot stream or added to a cold one, "
                          f"without sign), got {_as_written(table, 'duty', i)}", index=i, column="duty")
    span = np.abs(ts - tt)
    cp_from_duty = duty / span
    both = ~np.isnan(cp) & ~np.isnan(duty)
    disagree = both & (np.abs(cp - cp_from_duty) > _CP_DUTY_RTOL * np.maximum(np.abs(cp), np.abs(cp_from_duty)))
    if (i := _first(disagree)) is not None:
        raise table.error(f"duty {duty[i]:.6g} kW disagrees with CP × |T_supply − T_target| = "
                          f"{cp[i] * span[i]:.6g} kW (more than {_CP_DUTY_RTOL:g} relative); give one of "
                          "them or make them agree", index=i, column="duty")
    cp = np.where(np.isnan(cp), cp_from_duty, cp)
    for column, values in (("T_supply", ts), ("T_target", tt)):
        if (i := _first(values > defaults.MAX_TEMPERATURE)) is not None:
            raise table.error(f"{_as_written(table, column, i)} is above {defaults.MAX_TEMPERATURE:g} °C, more than "
                              "any process reaches: check the unit of the column", index=i, column=column)
    if (i := _first(cp > defaults.MAX_HEAT_CAPACITY_FLOW)) is not None:
        column = "CP" if not np.isnan(given_cp[i]) else "duty"
        raise table.error(f"heat capacity flow rate CP {cp[i]:g} kW/K is above {defaults.MAX_HEAT_CAPACITY_FLOW:g} "
                          "kW/K, beyond any process stream: check the unit of the column", index=i, column=column)
    _check_film_and_contribution(table, h, dtc)
    if "kind" in table:
        for i, k in enumerate(table.text("kind")):
            if not k:
                continue
            key = k.casefold()
            if key not in _HOT and key not in _COLD:
                raise table.error(f"kind must be 'hot' or 'cold', got {k!r}", index=i, column="kind")
            if (key in _HOT) != bool(ts[i] > tt[i]):
                raise table.error(f"stream '{names[i]}' is declared {k} but runs from {ts[i]:g} to {tt[i]:g} °C",
                                  index=i, column="kind")

    rows = table.rows
    hs = [None if x != x else float(x) for x in h.tolist()]
    ds = [None if x != x else float(x) for x in dtc.tolist()]
    tsl, ttl, cpl, rl = ts.tolist(), tt.tolist(), cp.tolist(), rows.tolist()
    segments = []
    for i in range(n):
        try:
            segments.append(Segment(tsl[i], ttl[i], cpl[i], hs[i], ds[i], row=rl[i]))
        except InputError as e:
            raise table.locate(e, i) from None
    streams = []
    for a, b in runs:
        try:
            streams.append(Stream(names[a], tuple(segments[a:b])))
        except InputError as e:
            raise table.locate(e, a) from None
    return streams


def _per_stream(table: Table, values: np.ndarray, name: str, what: str, a: int, b: int) -> float | None:
    given = [(i, v) for i, v in enumerate(values[a:b].tolist(), a) if v == v]
    if not given:
        return None
    if any(v != given[0][1] for _, v in given):
        i = next(i for i, v in given if v != given[0][1])
        raise table.error(f"{what} must be the same on every row of a temperature–duty stream (got "
                          f"{given[0][1]:g} in row {int(table.rows[given[0][0]])})", index=i, column=name)
    return float(given[0][1])


def _point_streams(table: Table, tolerance: float) -> list[Stream]:
    names = table.text("name")
    t = table.numbers("T", what="temperature")
    q = table.numbers("Q_cumulative", what="cumulative duty")
    h = table.optional_numbers("h", what="film coefficient h")
    dtc = table.optional_numbers("dT_min_contrib", what="ΔTmin contribution")
    _check_film_and_contribution(table, h, dtc)
    streams = []
    for a, b in _groups(table, names):
        tg, qg = t[a:b], q[a:b]
        problem = point_problem(tg, qg)
        if problem is not None:
            k, column, message = problem
            raise table.error(f"stream '{names[a]}': {message}", index=a + k, column=column)
        hh = _per_stream(table, h, "h", "film coefficient h", a, b)
        dd = _per_stream(table, dtc, "dT_min_contrib", "ΔTmin contribution", a, b)
        vertices = fit_vertices(tg, qg, tolerance=tolerance).tolist()
        segments = []
        for u, v in zip(vertices[:-1], vertices[1:]):
            try:
                segments.append(Segment(float(tg[u]), float(tg[v]), float(abs(qg[v] - qg[u]) / abs(tg[v] - tg[u])),
                                        hh, dd, row=int(table.rows[a + u])))
            except InputError as e:
                raise table.locate(e, a + u) from None
        try:
            streams.append(Stream(names[a], tuple(segments)))
        except InputError as e:
            raise table.locate(e, a) from None
    return streams


def read_match_rules(path: str | os.PathLike, streams: StreamTable, *, sheet: str | None = None,
                     columns: Mapping[str, str] | str | None = None) -> MatchRules:
    """The forbidden and required matches of a stream table's optional ``forbid`` and ``require`` columns.

    A cell lists the streams or utilities, by name and separated by ``;``, that the row's stream may not
    be matched with (``forbid``) or must be (``require``); the cells of all the rows of one stream count
    together.  Each pair is written hot side first (:class:`heatloom.model.MatchRules`); whether the names
    exist is checked against the streams and utilities by :meth:`~heatloom.model.MatchRules.check`.

    Parameters
    ----------
    path : str or path-like
        The stream table (as :func:`read_streams` read it).
    streams : StreamTable
        Its streams, which say which side of each pair the row's stream is.
    sheet, columns
        As for :func:`read_streams`.

    Returns
    -------
    MatchRules
        Empty when the table has neither column.

    Raises
    ------
    InputError
        A stream named in its own cell, or an empty name between separators, naming the file, row and
        column.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> f = pathlib.Path(tempfile.mkdtemp()) / "streams.csv"
    >>> _ = f.write_text("name,T_supply,T_target,CP,forbid,require\\nH1,180,60,3,C2,\\nC1,20,135,2,,H1\\n"
    ...                  "C2,80,140,4,,\\n")
    >>> r = read_match_rules(f, read_streams(f))
    >>> r.forbidden, r.required
    ((('H1', 'C2'),), (('H1', 'C1'),))
    """
    mapping = parse_column_mapping(columns)
    cells = load_cells(path, sheet=sheet)
    point = _is_point_layout(cells, mapping)
    table = read_table(cells, POINT_COLUMNS if point else SEGMENT_COLUMNS, required=("name",), columns=mapping,
                       aliases=STREAM_ALIASES, kinds=_KINDS)
    pairs: dict[str, list[tuple[str, str]]] = {"forbid": [], "require": []}
    names = table.text("name")
    by_name = {s.name: s for s in streams}
    for column, found in pairs.items():
        if column not in table:
            continue
        for i, cell in enumerate(table.text(column)):
            if not cell:
                continue
            own = names[i]
            if own not in by_name:
                continue
            for other in (x.strip() for x in cell.split(MATCH_SEPARATOR)):
                if not other:
                    raise table.error(f"empty name in {cell!r}: list names separated by '{MATCH_SEPARATOR}'",
                                      index=i, column=column)
                if other == own:
                    raise table.error(f"stream '{own}' names itself in its {column} cell", index=i, column=column)
                found.append((own, other) if by_name[own].is_hot else (other, own))
    if not pairs["forbid"] and not pairs["require"]:
        return MatchRules()
    try:
        return MatchRules(tuple(pairs["forbid"]), tuple(pairs["require"]), (table.label,))
    except InputError as e:
        raise table.locate(e) from None
