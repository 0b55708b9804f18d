"""Reading a site: the stream tables of its zones and the table of its steam mains.

A site is given as

* **a folder**: every CSV/XLSX file in it whose name contains ``streams`` is one zone, named after the
  file with ``streams`` taken out (``crude_unit_streams.csv`` → zone ``crude_unit``); a file whose name
  contains ``mains`` is the mains table when none is given;
* **a workbook** (``.xlsx``) with one sheet per zone, the sheet name being the zone's; a sheet whose name
  contains ``mains`` is the mains table when none is given (with ``sheet_per_zone=False`` the workbook's
  first sheet is one zone);
* **one stream table**: a site of one zone.

Each zone is read by :func:`heatloom.io.read_streams`, so its layouts, units, aliases and located error
messages all apply.  The mains table::

    name,T,cost,kind
    HP steam,250,95,steam
    LP steam,135,60,steam
    cooling water,30,8,cooling

``T`` (also ``temperature``) is the saturation temperature in °C (for a cooling main, the highest
temperature it reaches); optional ``cost`` (also ``price``) is money/(kW·year) of steam from boilers or
of cooling duty (empty: not priced); optional ``kind`` is ``steam`` (default) or ``cooling``.
"""

from __future__ import annotations

import io as _io
import math
import os
import re
import zipfile
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import InputError
from ..model import StreamTable
from ..model.site import MainKind, SteamMain, Zone, check_mains
from .cells import read_input_bytes
from .points import DEFAULT_FIT_TOLERANCE
from .streams import read_match_rules, read_streams
from .tables import read_table

__all__ = ["MAINS_COLUMNS", "Site", "read_site", "read_mains", "zone_name"]

MAINS_COLUMNS = ("name", "T", "cost", "kind")
"""Canonical columns of a mains table."""

_TABLE_SUFFIXES = (".csv", ".txt", ".tsv", ".xlsx", ".xlsm")
_WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")
_KINDS = {
    **dict.fromkeys(("steam", "steam main", "hot", "heating"), MainKind.STEAM),
    **dict.fromkeys(("cooling", "cooling main", "cold", "cooling water", "cw"), MainKind.COOLING),
}


@dataclass(frozen=True, eq=False)
class Site:
    """The zones and mains of a site as read from files.

    Attributes
    ----------
    path : str
        The folder, workbook or table given.
    zones : tuple of Zone
        In file (or sheet) order.
    mains : tuple of SteamMain
        In table order; empty when no mains table was given or found.
    mains_source : str or None
        Where the mains came from.
    zone_sources : dict
        Zone name → file (and sheet) it was read from.
    files : tuple of str
        Every file read (zones and mains), so that writers can refuse to write over them.
    zone_rules : dict
        Zone name → the forbidden and required matches of its table's ``forbid``/``require`` columns
        (:func:`heatloom.io.streams.read_match_rules`), for the zones whose table has any.
    """

    path: str
    zones: tuple[Zone, ...]
    mains: tuple[SteamMain, ...]
    mains_source: str | None
    zone_sources: dict[str, str]
    files: tuple[str, ...] = ()
    zone_rules: dict = field(default_factory=dict)


def zone_name(stem: str) -> str:
    """A zone's name from a file name without its suffix: ``streams`` and the separators around it go.

    Examples
    --------
    >>> zone_name("crude_unit_streams"), zone_name("Streams - utilities block"), zone_name("streams")
    ('crude_unit', 'utilities block', 'streams')
    """
    name = re.sub(r"streams", "", stem, flags=re.IGNORECASE)
    name = re.sub(r"([\s_\-.])[\s_\-.]+", r"\1", name).strip(" _-.")
    return name or stem.strip()


def _workbook_sheets(path: Path) -> list[tuple[str, bool]]:
    """Worksheet names of a workbook and whether each holds any cell."""
    import openpyxl
    from openpyxl.utils.exceptions import InvalidFileException

    data = read_input_bytes(path, what="workbook")
    try:
        wb = openpyxl.load_workbook(_io.BytesIO(data), read_only=True, data_only=True)
    except (zipfile.BadZipFile, InvalidFileException, KeyError, ValueError, EOFError, TypeError) as e:
        why = "it is not a zip archive" if isinstance(e, zipfile.BadZipFile) else str(e) or type(e).__name__
        raise InputError(f"cannot read the file as an .xlsx workbook ({why}); save it again as .xlsx or CSV",
                         file=str(path)) from None
    try:
        out = []
        for ws in wb.worksheets:
            if not hasattr(ws, "iter_rows"):
                continue
            filled = any(v not in (None, "") for row in ws.iter_rows(values_only=True) for v in row)
            out.append((ws.title, filled))
        return out
    finally:
        wb.close()


def _is_workbook(path: Path) -> bool:
    if path.suffix.lower() in _WORKBOOK_SUFFIXES:
        return True
    try:
        with path.open("rb") as f:
            return f.read(4) == b"PK\x03\x04"
    except OSError:
        return False


def _table_files(folder: Path) -> list[Path]:
    return sorted((p for p in folder.iterdir()
                   if p.is_file() and p.suffix.lower() in _TABLE_SUFFIXES and not p.name.startswith(("~$", "."))),
                  key=lambda p: (p.name.casefold(), p.name))


def read_mains(path: str | os.PathLike, *, sheet: str | None = None,
               columns: Mapping[str, str] | str | None = None,
               site: Iterable[StreamTable] | None = None) -> tuple[SteamMain, ...]:
    """Read a steam-mains table from a CSV file or a workbook.

    Parameters
    ----------
    path : str or path-like
        ``.csv`` or ``.xlsx`` file; never modified.
    sheet : str, optional
        Worksheet; default a sheet whose name contains ``mains``, else the first.
    columns : mapping or str, optional
        Foreign header → canonical column name (see :func:`heatloom.io.parse_column_mapping`).
    site : iterable of StreamTable, optional
        The zones' streams: when given, each main is checked against the site's process temperature
        range (see :func:`heatloom.pinch.site.check_mains`).

    Returns
    -------
    tuple of SteamMain
        In table order; temperatures in °C, prices in money/(kW·year) (``None`` where empty).

    Raises
    ------
    InputError
        Located (file, row, column): as for every table (missing file, columns, text in a number cell,
        units), plus an empty name, a repeated name, an unknown kind, a negative price, two steam mains
        at one temperature, a cooling main above a steam main, and (with ``site``) a main outside the
        site's temperature range.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> f = pathlib.Path(tempfile.mkdtemp()) / "mains.csv"
    >>> _ = f.write_text("name,T [°C],price [€/MW/yr],kind\\nHP,250,95000,steam\\nLP,135,,\\nCW,30,8000,cooling\\n")
    >>> [(m.name, m.temperature, m.price, m.kind.value) for m in read_mains(f)]
    [('HP', 250.0, 95.0, 'steam'), ('LP', 135.0, None, 'steam'), ('CW', 30.0, 8.0, 'cooling')]
    """
    p = Path(os.fspath(path))
    if sheet is None and p.is_file() and _is_workbook(p):
        named = [n for n, filled in _workbook_sheets(p) if "mains" in n.casefold()]
        sheet = named[0] if len(named) == 1 else None
    table = read_table(p, MAINS_COLUMNS, required=("name", "T"), sheet=sheet, columns=columns,
                       hint=" (a mains table needs name and T, the saturation temperature; optional cost "
                            "[money/(kW·year)] and kind: steam or cooling)")
    n = len(table)
    names = table.text("name")
    temps = table.numbers("T", what="main temperature")
    prices = table.numbers("cost", required=False, what="price") if "cost" in table else [math.nan] * n
    kinds = table.text("kind") if "kind" in table else [""] * n
    out = []
    for i in range(n):
        if not names[i]:
            raise table.error("main name is empty", index=i, column="name")
        kind = MainKind.STEAM
        if kinds[i]:
            kind = _KINDS.get(kinds[i].casefold())
            if kind is None:
                raise table.error(f"kind must be 'steam' or 'cooling', got {kinds[i]!r}", index=i, column="kind")
        price = None if prices[i] != prices[i] else float(prices[i])
        try:
            out.append(SteamMain(names[i], float(temps[i]), price, kind, row=int(table.rows[i])))
        except InputError as e:
            raise table.locate(e, i) from None
    try:
        check_mains(out, None if site is None else list(site))
    except InputError as e:
        raise table.locate(e) from None
    return tuple(out)


def read_site(path: str | os.PathLike, *, mains: str | os.PathLike | None = None, sheet_per_zone: bool = True,
              columns: Mapping[str, str] | str | None = None,
              fit_tolerance: float = DEFAULT_FIT_TOLERANCE) -> Site:
    """Read the zones of a site and its mains.

    Parameters
    ----------
    path : str or path-like
        A folder of zone stream tables (names containing ``streams``), a workbook with one sheet per zone,
        or one stream table (a one-zone site).
    mains : str or path-like, optional
        The mains table; default a file (folder) or sheet (workbook) whose name contains ``mains``, if
        there is exactly one; else the site has no mains.
    sheet_per_zone : bool, optional
        For a workbook: each sheet is a zone (default), or the first sheet is the only zone.
    columns : mapping or str, optional
        Column mapping applied to every zone's stream table.
    fit_tolerance : float, optional
        Temperature–duty tables only [K]; see :func:`heatloom.io.read_streams`.

    Returns
    -------
    Site

    Raises
    ------
    InputError
        A missing path; a folder with no zone files (the message lists what it holds); two zones with one
        name (case ignored); several mains candidates; anything :func:`heatloom.io.read_streams` or
        :func:`read_mains` rejects, located in its file.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> _ = (d / "east_streams.csv").write_text("name,T_supply,T_target,CP\\nH1,200,80,2\\nC1,60,150,1\\n")
    >>> _ = (d / "west_streams.csv").write_text("name,T_supply,T_target,CP\\nC2,90,140,3\\n")
    >>> _ = (d / "mains.csv").write_text("name,T\\nLP,130\\n")
    >>> s = read_site(d)
    >>> [z.name for z in s.zones], [m.name for m in s.mains]
    (['east', 'west'], ['LP'])
    """
    p = Path(os.fspath(path))
    if not p.exists():
        raise InputError("site not found: give a folder of zone stream tables, a workbook with one sheet per "
                         "zone, or one stream table", file=str(p))
    found: list[tuple[str, StreamTable, str]] = []
    rules: dict = {}   # zone → its table's forbid/require columns
    mains_path: Path | None = None if mains is None else Path(os.fspath(mains))
    mains_sheet = None
    if p.is_dir():
        files = _table_files(p)
        zone_files = [f for f in files if "streams" in f.name.casefold()]
        if not zone_files:
            held = ", ".join(f.name for f in sorted(p.iterdir()) if not f.name.startswith(".")) or "nothing"
            raise InputError(f"no zone files in the folder: name each zone's stream table '<zone>_streams.csv' "
                             f"(or .xlsx); the folder holds: {held}", file=str(p))
        for f in zone_files:
            streams = read_streams(f, columns=columns, fit_tolerance=fit_tolerance)
            found.append((zone_name(f.stem), streams, str(f)))
            rules[found[-1][0]] = read_match_rules(f, streams, columns=columns)
        if mains_path is None:
            candidates = [f for f in files if "mains" in f.name.casefold() and f not in zone_files]
            if len(candidates) > 1:
                raise InputError(f"several mains tables in the folder ({', '.join(f.name for f in candidates)});"
                                 " choose one with --mains", file=str(p))
            mains_path = candidates[0] if candidates else None
    elif _is_workbook(p) and sheet_per_zone:
        sheets = _workbook_sheets(p)
        zone_sheets = [n for n, filled in sheets if filled and "mains" not in n.casefold()]
        if not zone_sheets:
            raise InputError("the workbook has no zone sheet (every sheet is empty or a mains table)", file=str(p))
        for n in zone_sheets:
            streams = read_streams(p, sheet=n, columns=columns, fit_tolerance=fit_tolerance)
            found.append((n.strip(), streams, f"{p}, sheet '{n}'"))
            rules[found[-1][0]] = read_match_rules(p, streams, sheet=n, columns=columns)
        if mains_path is None:
            named = [n for n, filled in sheets if filled and "mains" in n.casefold()]
            if len(named) > 1:
                raise InputError(f"several mains sheets ({', '.join(repr(n) for n in named)}); choose one with "
                                 "--mains", file=str(p))
            if named:
                mains_path, mains_sheet = p, named[0]
    else:
        streams = read_streams(p, columns=columns, fit_tolerance=fit_tolerance)
        found.append((zone_name(p.stem), streams, str(p)))
        rules[found[-1][0]] = read_match_rules(p, streams, columns=columns)

    seen: dict[str, str] = {}
    for name, _, where in found:
        key = name.casefold()
        if key in seen:
            raise InputError(f"zone name '{name}' comes from both {seen[key]} and {where}; rename one (zone "
                             "names ignore case)", file=str(p))
        seen[key] = where
    zones = tuple(Zone(name, streams) for name, streams, _ in found)
    site_mains: tuple[SteamMain, ...] = ()
    if mains_path is not None:
        site_mains = read_mains(mains_path, sheet=mains_sheet, site=[z.streams for z in zones])
    source = None if mains_path is None else (str(mains_path) if mains_sheet is None
                                              else f"{mains_path}, sheet '{mains_sheet}'")
    files = [str(f) for f in zone_files] if p.is_dir() else [str(p)]
    if mains_path is not None and str(mains_path) not in files:
        files.append(str(mains_path))
    return Site(str(p), zones, site_mains, source, {name: where for name, _, where in found}, tuple(files),
                {name: r for name, r in rules.items() if r})
