"""Plant tables in: CSV and XLSX files read into named columns in canonical units.

The readers of stream, utility and temperature–duty tables all go through here.  What is handled:

* **Files.** CSV (or any text table) and Excel workbooks, loaded as a raw grid of cells by
  :func:`heatloom.io.cells.load_cells` (delimiters, encodings, sheets).  With a semicolon delimiter a
  decimal comma (``2,5``) is accepted.  The file is only read, never written.
* **Header.** Title lines above the header are skipped: the header is the first row (among the first
  100) with at least two recognisable column names.  A *units row* right under the header (cells
  such as ``°C``, ``[kW/K]``, ``-``) is recognised and used.  Units may also be written in the header
  itself: ``T_supply [degF]``, ``CP (MW/K)``, ``duty, MW``.
* **Column names.** :data:`ALIASES` lists the accepted names of each canonical column; matching
  ignores case, spaces, underscores, hyphens and dots.  A user mapping ``{foreign header: canonical
  name}`` (or ``"-"`` to ignore a column) handles foreign layouts; :func:`parse_column_mapping` reads
  the command-line form ``"Line=name,Inlet=T_supply"``.  Other columns are ignored.
* **Rows.** Rows whose recognised cells are all empty are skipped.  Every problem is an
  :class:`~heatloom.errors.InputError` naming the file (and sheet), the row as a spreadsheet shows it
  (1-based, title lines and header counted) and the column header as the user wrote it.
"""

from __future__ import annotations

import difflib
import functools
import os
import re
import unicodedata
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError
from ..model import ABSOLUTE_ZERO
from .cells import Cells, UnsavedFormula, cell_text, load_cells
from .units import QuantityKind, UnitConversion, parse_unit

__all__ = [
    "ALIASES",
    "COLUMN_KINDS",
    "IGNORE",
    "TableColumn",
    "Table",
    "read_table",
    "find_header",
    "parse_column_mapping",
    "split_header",
    "normalise_name",
]

IGNORE = "-"
"""Mapping target that tells the readers to ignore a column."""

COLUMN_KINDS: dict[str, QuantityKind | None] = {
    "name": None,
    "kind": None,
    "T_supply": QuantityKind.TEMPERATURE,
    "T_target": QuantityKind.TEMPERATURE,
    "CP": QuantityKind.HEAT_CAPACITY_FLOW,
    "duty": QuantityKind.DUTY,
    "h": QuantityKind.FILM_COEFFICIENT,
    "dT_min_contrib": QuantityKind.TEMPERATURE_DIFFERENCE,
    "cost": QuantityKind.COST_RATE,
    "T": QuantityKind.TEMPERATURE,
    "Q_cumulative": QuantityKind.DUTY,
    "scenario": None,
    "factor": None,
    "mass_flow": QuantityKind.MASS_FLOW,
    "specific_heat": QuantityKind.SPECIFIC_HEAT,
}
"""Canonical column names and the quantity each holds (``None``: text)."""

ALIASES: dict[str, tuple[str, ...]] = {
    "name": ("name", "stream", "stream name", "tag", "stream tag", "utility", "utility name"),
    "kind": ("kind", "type", "hot/cold", "hot or cold"),
    "T_supply": ("T_supply", "Ts", "T in", "Tin", "T_in", "T inlet", "supply temperature", "inlet temperature",
                 "supply T", "T supply", "T start", "start temperature"),
    "T_target": ("T_target", "Tt", "T out", "Tout", "T_out", "T outlet", "target temperature",
                 "outlet temperature", "target T", "T target", "T end", "end temperature"),
    "CP": ("CP", "mCp", "FCp", "MCp", "heat capacity flow rate", "heat capacity flowrate", "heat capacity flow",
           "heat capacity rate"),
    "duty": ("duty", "Q", "heat load", "heat duty", "load"),
    "h": ("h", "film coefficient", "htc", "heat transfer coefficient", "film heat transfer coefficient",
          "film htc"),
    "dT_min_contrib": ("dT_min_contrib", "dT contribution", "delta T contribution", "ΔT contribution",
                       "dTmin contribution", "ΔTmin contribution", "dT_contrib", "dT_min contribution"),
    "cost": ("cost", "price", "unit cost", "utility cost", "specific cost"),
    "T": ("T", "temperature", "temp"),
    "Q_cumulative": ("Q_cumulative", "Q cumulative", "cumulative Q", "Q cum", "Qcum", "cumulative duty",
                     "cumulative heat", "cumulative heat load", "heat flow", "enthalpy flow", "enthalpy",
                     "Q", "duty"),
    "scenario": ("scenario", "scenario name", "case", "case name", "price scenario"),
    "factor": ("factor", "price factor", "multiplier", "price multiplier"),
    "mass_flow": ("mass_flow", "mass flow", "mass flow rate", "mass flowrate", "mass rate", "mdot", "m_dot",
                  "flow rate", "flowrate"),
    "specific_heat": ("specific heat", "specific heat capacity", "cp mass", "mean cp", "mean specific heat"),
}
"""Accepted names of each canonical column (compared after :func:`normalise_name`).

Each reader uses its own set of columns, so ``Q`` is a duty in a stream table and a cumulative duty in
a temperature–duty table."""

_HEADER_SCAN_ROWS = 100
_UNIT_LABEL = re.compile(r"^[\[(]?\s*(?:-|–|—|units?|uom|dim\.?|)\s*:?\s*[\])]?$", re.IGNORECASE)
_SEPARATORS = re.compile(r"[\s_\-.]+")


def normalise_name(text: str) -> str:
    """Key used to compare column names: case, spaces, underscores, hyphens and dots ignored.

    Examples
    --------
    >>> normalise_name(" T_Supply "), normalise_name("T in") == normalise_name("Tin")
    ('tsupply', True)
    """
    return _SEPARATORS.sub("", unicodedata.normalize("NFKC", str(text)).casefold())


def _lookup(vocabulary: Iterable[str], aliases: Mapping[str, Sequence[str]] | None = None) -> dict[str, str]:
    names = ALIASES if aliases is None else aliases
    out: dict[str, str] = {}
    for canonical in vocabulary:
        for alias in (canonical, *names[canonical]):
            key = normalise_name(alias)
            if out.get(key, canonical) != canonical:
                raise AssertionError(f"alias {alias!r} used by {out[key]} and {canonical}")
            out[key] = canonical
    return out


def split_header(text: str) -> list[tuple[str, str | None]]:
    """Ways of reading a header cell as *name* plus *unit*, most specific first.

    A trailing bracket group is the unit (``CP (MW/K)``, ``h [W/(m2 K)]``); otherwise the part after
    the last comma (``duty, MW``) or the last space (``Tin °C``) may be.

    Examples
    --------
    >>> split_header("T_supply [degF]")[0]
    ('T_supply', 'degF')
    """
    s = str(text).strip()
    out: list[tuple[str, str | None]] = []
    if s and s[-1] in ")]}":
        depth = 0
        for i in range(len(s) - 1, -1, -1):
            if s[i] in ")]}":
                depth += 1
            elif s[i] in "([{":
                depth -= 1
                if depth == 0:
                    name, unit = s[:i].strip().rstrip(",").strip(), s[i + 1:-1].strip()
                    if name:
                        out.append((name, unit))
                    break
    out.append((s, None))
    if "," in s:
        name, unit = s.rsplit(",", 1)
        out.append((name.strip(), unit.strip()))
    if " " in s:
        name, unit = s.rsplit(" ", 1)
        out.append((name.strip(), unit.strip()))
    return out


def parse_column_mapping(text: str | Mapping[str, str] | None, columns: Sequence[str] | None = None
                         ) -> dict[str, str]:
    """Read a column mapping ``"Line=name,Inlet=T_supply"`` (foreign header = canonical name).

    Pairs are separated by commas or semicolons; a target of ``-`` ignores that column.  Canonical
    names are checked against ``columns`` (by default those of :data:`ALIASES`; case and underscores do
    not matter).

    Parameters
    ----------
    text : str, mapping or None
        The command-line form, or a mapping already (validated the same way).
    columns : sequence of str, optional
        The canonical column names of the table being read (another table's vocabulary, e.g. the
        network table's).

    Returns
    -------
    dict
        Foreign header → canonical column name (or ``"-"``).

    Examples
    --------
    >>> parse_column_mapping("Stream=name, Tin=t_supply")
    {'Stream': 'name', 'Tin': 'T_supply'}
    """
    if text is None:
        return {}
    vocabulary = list(ALIASES) if columns is None else list(columns)
    if isinstance(text, Mapping):
        pairs = [(str(k), "" if v is None else str(v)) for k, v in text.items()]
    else:
        pairs = []
        for part in re.split(r"[,;]", str(text)):
            if not part.strip():
                continue
            if "=" not in part:
                raise InputError(f"column mapping: '{part.strip()}' is not of the form header=column "
                                 f"(e.g. 'Tag={vocabulary[0]}')")
            k, v = part.rsplit("=", 1)
            pairs.append((k, v))
    canon = {normalise_name(c): c for c in vocabulary}
    out: dict[str, str] = {}
    targets: dict[str, str] = {}
    for k, v in pairs:
        k, v = k.strip(), v.strip()
        if not k:
            raise InputError(f"column mapping: empty header before '={v}'")
        if v in ("", IGNORE):
            target = IGNORE
        else:
            target = canon.get(normalise_name(v))
            if target is None:
                raise InputError(f"column mapping: unknown column name '{v}' for '{k}'; allowed: "
                                 f"{', '.join(vocabulary)} (or '-' to ignore the column)")
        if normalise_name(k) in {normalise_name(x) for x in out}:
            raise InputError(f"column mapping: header '{k}' is mapped twice")
        if target != IGNORE and target in targets:
            raise InputError(f"column mapping: both '{targets[target]}' and '{k}' are mapped to '{target}'")
        targets[target] = k
        out[k] = target
    return out


@dataclass(frozen=True, eq=False)
class TableColumn:
    """One recognised column: canonical name, header as written, unit and raw cells."""

    name: str
    header: str
    position: int
    unit: str | None
    conversion: UnitConversion | None
    cells: list = field(repr=False)


def _filled(value) -> bool:
    return bool(value.strip()) if isinstance(value, str) else True


_COMMA_DECIMAL = re.compile(r"^[+-]?(\d+,\d+|\d{1,3}(\.\d{3})+,\d+)$")
_POINT_DECIMAL = re.compile(r"^[+-]?(\d+\.\d+|\d{1,3}(,\d{3})+\.\d+)$")
_DOT_GROUPS = re.compile(r"^[+-]?\d{1,3}(\.\d{3})+$")
_COMMA_GROUPS = re.compile(r"^[+-]?\d{1,3}(,\d{3})+$")


def _is_specific_heat(unit: str | None) -> bool:
    """Whether a unit written for a CP column measures a specific heat (``kJ/kg.K``)."""
    if not unit:
        return False
    try:
        parse_unit(unit, QuantityKind.SPECIFIC_HEAT)
    except InputError:
        return False
    return True


def number_style(cells) -> tuple[str | None, int | None]:
    """The decimal separator a file writes its numbers with, decided from all of its numeric cells.

    ``"comma"`` when some cell writes a decimal comma (``2,5``, ``1.500,25``), ``"point"`` when some cell
    writes a decimal point (``12.75``, ``1,500.25``), ``None`` when no cell tells (whole numbers, or only
    cells such as ``1.500`` or ``1,500`` that read either way).  Returns the style and, when the cells
    disagree, the index of the first cell that contradicts the style of the cells before it.

    Examples
    --------
    >>> number_style(["2,5", "1.500", "7"]), number_style(["12.75", "3"]), number_style(["1.500", "3"])
    (('comma', None), ('point', None), (None, None))
    >>> number_style(["2,5", "12.75"])
    ('comma', 1)
    """
    style, first = None, None
    for k, c in enumerate(cells):
        if not isinstance(c, str):
            continue
        t = c.strip().replace(" ", "")
        found = "comma" if _COMMA_DECIMAL.match(t) and not _COMMA_GROUPS.match(t) else \
            "point" if _POINT_DECIMAL.match(t) and not _DOT_GROUPS.match(t) else None
        if found is None:
            continue
        if style is None:
            style = found
        elif found != style and first is None:
            first = k
    return style, first


def _looks_number(text: str) -> bool:
    try:
        float(text.replace(",", "."))
    except ValueError:
        return False
    return True


@dataclass(frozen=True, eq=False)
class Table:
    """A table read from a file: recognised columns, data rows and where each came from.

    ``rows[i]`` is the spreadsheet row of data row ``i`` (1-based, title lines and header counted).
    """

    source: str
    sheet: str | None
    header_row: int
    units_row: int | None
    columns: dict[str, TableColumn]
    rows: np.ndarray
    headers: tuple[str, ...]
    decimal_comma: bool = False

    def __len__(self) -> int:
        return len(self.rows)

    def __contains__(self, name: str) -> bool:
        return name in self.columns

    @property
    def label(self) -> str:
        """File (and sheet) as named in messages."""
        return self.source if self.sheet is None else f"{self.source}, sheet '{self.sheet}'"

    def header(self, name: str | None) -> str | None:
        """The header as the user wrote it for canonical column `name` (else `name` itself)."""
        if name in self.columns:
            return self.columns[name].header
        return name

    def error(self, message: str, *, index: int | None = None, column: str | None = None,
              row: int | None = None) -> InputError:
        """An InputError located at data row `index` (or spreadsheet `row`) and canonical `column`."""
        if index is not None:
            row = int(self.rows[index])
        return InputError(message, file=self.label, row=row, column=self.header(column))

    def locate(self, err: InputError, index: int | None = None) -> InputError:
        """Re-home an error raised by the data model: file, row and the user's header for its column."""
        row = err.row if err.row is not None else (int(self.rows[index]) if index is not None else None)
        return type(err)(err.message, file=err.file or self.label, row=row, column=self.header(err.column))

    @functools.cached_property
    def decimal_style(self) -> str | None:
        """``"comma"`` or ``"point"``: the decimal separator of the file, decided once from every numeric
        column (:func:`number_style`); ``None`` when no cell tells.  Raises when two cells disagree."""
        numeric = [c for c in self.columns.values() if c.conversion is not None or c.unit is not None]
        numeric = numeric or list(self.columns.values())
        cells = [(c, k) for c in numeric for k in range(len(c.cells))]
        style, first = number_style([c.cells[k] for c, k in cells])
        if first is not None:
            c, k = cells[first]
            raise self.error(f"{c.cells[k].strip()!r} writes its decimals with a "
                             f"{'point' if style == 'comma' else 'comma'}, but other numbers of the file use a "
                             f"decimal {style}; use one decimal separator in the whole file", index=k,
                             column=c.name)
        return style

    def text(self, name: str) -> list[str]:
        """Cells of a text column, stripped (``""`` where empty); a formula without a saved value is refused."""
        for i, c in enumerate(self.columns[name].cells):
            if isinstance(c, UnsavedFormula):
                raise self.error(c.advice, index=i, column=name)
        return [cell_text(c) for c in self.columns[name].cells]

    def optional_numbers(self, name: str, *, what: str | None = None) -> np.ndarray:
        """Cells of an optional numeric column as :meth:`numbers` reads them, all NaN when the table lacks it."""
        if name not in self.columns:
            return np.full(len(self), np.nan)
        return self.numbers(name, required=False, what=what)

    def numbers(self, name: str, *, required: bool = True, what: str | None = None) -> np.ndarray:
        """Cells of a numeric column, converted to the canonical unit of the column.

        Empty cells are NaN when not `required`; text, NaN and infinite values are errors, and so
        are temperatures below absolute zero (the message quotes the value and unit as written).
        """
        col = self.columns[name]
        n = len(col.cells)
        what = what or name
        values = np.empty(n)
        empty = np.zeros(n, dtype=bool)
        style = self.decimal_style
        for i, c in enumerate(col.cells):
            if isinstance(c, float):
                values[i] = c
                continue
            if isinstance(c, UnsavedFormula):
                raise self.error(f"{what}: {c.advice}", index=i, column=name)
            s = c.strip()
            if not s:
                empty[i] = True
                values[i] = np.nan
                continue
            t = s.replace(" ", "")
            if style == "comma":
                if _DOT_GROUPS.match(t.split(",")[0]) and t.count(",") <= 1:
                    t = t.replace(".", "")                       # 1.500,25: points group thousands
                t = t.replace(",", ".")
            elif style is None and (_COMMA_GROUPS.match(t) or (self.decimal_comma and _DOT_GROUPS.match(t))):
                raise self.error(f"{what} {s!r} could be {t.replace('.', '').replace(',', '')} or "
                                 f"{t.replace(',', '.')}: no other number of the file shows which separator it "
                                 "uses for decimals; write it without a thousands separator", index=i,
                                 column=name)
            try:
                values[i] = float(t)
            except ValueError:
                hint = " (write numbers without thousands separators)" if "," in s else ""
                raise self.error(f"{what} must be a number, got {c.strip()!r}{hint}", index=i,
                                 column=name) from None
        bad = ~empty & ~np.isfinite(values)
        if bad.any():
            i = int(np.argmax(bad))
            raise self.error(f"{what} must be a finite number, got {cell_text(col.cells[i])!r}", index=i,
                             column=name)
        if required and empty.any():
            i = int(np.argmax(empty))
            raise self.error(f"empty cell: {what} is required", index=i, column=name)
        conv = col.conversion
        out = values if conv is None or conv.is_identity else conv.to_canonical(values)
        if conv is not None and conv.kind is QuantityKind.TEMPERATURE:
            below = out < ABSOLUTE_ZERO - 1e-9
            if below.any():
                i = int(np.argmax(below))
                unit = col.unit or "°C"
                raise self.error(f"{what} {cell_text(col.cells[i])} {unit} is below absolute zero "
                                 f"({ABSOLUTE_ZERO} °C = 0 K = -459.67 °F)", index=i, column=name)
        return out


def _match(cell: str, lookup: Mapping[str, str], mapping: Mapping[str, str]) -> tuple[str | None, str | None]:
    """(canonical name or IGNORE or None, unit text) for a header cell."""
    readings = split_header(cell)
    keys = {normalise_name(k): v for k, v in mapping.items()}
    for name, unit in readings:
        target = keys.get(normalise_name(name))
        if target is not None:
            return target, unit
    for name, unit in readings:
        target = lookup.get(normalise_name(name))
        if target is not None:
            return target, unit
    return None, None


def _affine(c: UnitConversion) -> tuple[float, float, float, float]:
    return c.subtract, c.multiply, c.divide, c.add


def _row_texts(row: list) -> list[str]:
    return [cell_text(c) for c in row]


def find_header(cells: Cells, vocabulary: Sequence[str], columns: Mapping[str, str] | str | None = None, *,
                aliases: Mapping[str, Sequence[str]] | None = None) -> tuple[int | None, dict[int, tuple[str, str | None]]]:
    """Locate the header row: the first of the first 100 rows with two or more recognised column names.

    Parameters
    ----------
    cells : Cells
    vocabulary : sequence of str
        Canonical column names to recognise.
    columns : mapping or str, optional
        User mapping foreign header → canonical name (see :func:`parse_column_mapping`).
    aliases : mapping, optional
        Accepted names of each canonical column, for a table with a vocabulary of its own; default
        :data:`ALIASES`.

    Returns
    -------
    (int or None, dict)
        0-based index of the header row (``None`` if none found) and ``{position: (canonical name,
        unit written in the header or None)}`` for the recognised cells (``"-"`` for ignored ones).
    """
    mapping = parse_column_mapping(columns, None if aliases is None else vocabulary)
    lookup = _lookup(vocabulary, aliases)
    for i, row in enumerate(cells.rows[:_HEADER_SCAN_ROWS]):
        found = {j: _match(t, lookup, mapping) for j, t in enumerate(_row_texts(row)) if t}
        found = {j: m for j, m in found.items() if m[0] is not None}
        if sum(1 for m in found.values() if m[0] != IGNORE) >= 2:
            return i, found
    return None, {}


def read_table(source: str | os.PathLike | Cells, vocabulary: Sequence[str], *,
               required: Sequence[str | tuple[str, ...]] = (), sheet: str | None = None,
               columns: Mapping[str, str] | str | None = None, hint: str = "",
               hours_per_year: float | None = None, aliases: Mapping[str, Sequence[str]] | None = None,
               kinds: Mapping[str, QuantityKind | None] | None = None, notes: list[str] | None = None,
               strict: bool = False) -> Table:
    """Find the header, units and data rows of a table and bind its columns to canonical names.

    Parameters
    ----------
    source : str, path-like or Cells
        The file (see :func:`load_cells`) or a grid already loaded.
    vocabulary : sequence of str
        Canonical column names this table may hold (keys of :data:`COLUMN_KINDS`).
    required : sequence
        Canonical names that must be present; a tuple means "one of these".
    sheet : str, optional
        Worksheet of a workbook.
    columns : mapping or str, optional
        User mapping foreign header → canonical name (``"-"`` ignores a column); see
        :func:`parse_column_mapping`.
    hint : str, optional
        Appended to the missing-column message.
    hours_per_year : float, optional
        Operating hours per year [h/year], for prices per energy.
    aliases, kinds : mapping, optional
        For a table with a vocabulary of its own (the network table): accepted names and quantity of
        each canonical column; default :data:`ALIASES` and :data:`COLUMN_KINDS`.
    notes : list of str, optional
        Receives a note for every header that is not a known column (with the nearest known name):
        such a column is ignored, and a misspelt optional column would otherwise be lost silently.
    strict : bool, optional
        Refuse unknown headers instead (an :class:`InputError` naming them).

    Returns
    -------
    Table
    """
    cells = source if isinstance(source, Cells) else load_cells(source, sheet=sheet)
    label = cells.label
    mapping = parse_column_mapping(columns, None if aliases is None else list(vocabulary))
    vocabulary = list(vocabulary)
    for foreign, target in mapping.items():
        if target != IGNORE and target not in vocabulary:
            raise InputError(f"column mapping: '{foreign}' is mapped to '{target}', which this table does not "
                             f"use; allowed: {', '.join(vocabulary)} (or '-' to ignore it)", file=label)
    lookup = _lookup(vocabulary, aliases)
    kind_of = COLUMN_KINDS if kinds is None else kinds
    rows = cells.rows

    header_index, matches = find_header(cells, vocabulary, mapping, aliases=aliases)
    if header_index is None:
        first = next((i for i, r in enumerate(rows) if any(cell_text(c) for c in r)), None)
        if first is None:
            raise InputError("the file holds no table", file=label)
        header_index = first
        found = {j: _match(t, lookup, mapping) for j, t in enumerate(_row_texts(rows[first])) if t}
        matches = {j: m for j, m in found.items() if m[0] is not None}
    header_cells = [" ".join(t.split()) for t in _row_texts(rows[header_index])]  # one line each
    header_row = header_index + 1
    headers = tuple(t for t in header_cells if t)

    # the user's mapping must name columns that exist
    for foreign in mapping:
        key = normalise_name(foreign)
        if not any(key == normalise_name(name) for t in headers for name, _ in split_header(t)):
            raise InputError(f"column mapping: there is no column '{foreign}'; columns found: "
                             f"{', '.join(headers)}", file=label, row=header_row)

    unknown = [header_cells[j] for j, t in enumerate(header_cells) if t and j not in matches]
    if unknown:
        names = ALIASES if aliases is None else aliases
        known = {normalise_name(a): c for c in vocabulary for a in (c, *names.get(c, ()))}

        def nearest(header: str) -> str:
            close = difflib.get_close_matches(normalise_name(split_header(header)[0][0]), list(known), n=1,
                                              cutoff=0.75)
            return f" (did you mean '{known[close[0]]}'?)" if close else ""

        text = "; ".join(f"'{h}'{nearest(h)}" for h in unknown)
        if strict:
            raise InputError(f"unknown column(s) {text}; rename them, map them with --columns, or map them to "
                             "'-' to ignore them", file=label, row=header_row, column=unknown[0])
        if notes is not None:
            notes.append(f"{label}: column(s) not used: {text}")

    bound: dict[str, tuple[int, str, str | None]] = {}
    for j, (target, unit) in sorted(matches.items()):
        if target == IGNORE:
            continue
        if target in bound:
            other = header_cells[bound[target][0]]
            raise InputError(f"two columns give {target}: '{other}' and '{header_cells[j]}'; keep one (or "
                             f"map one to '-' to ignore it)", file=label, row=header_row, column=header_cells[j])
        bound[target] = (j, header_cells[j], unit)

    missing = []
    for need in required:
        alternatives = (need,) if isinstance(need, str) else tuple(need)
        if not any(a in bound for a in alternatives):
            missing.append(" or ".join(alternatives))
    if missing:
        raise InputError(f"missing required column(s) {', '.join(missing)}; columns found: "
                         f"{', '.join(headers) or 'none'}{hint}", file=label, row=header_row)

    # units row right under the header
    data_start = header_index + 1
    units_row = None
    units: dict[str, str | None] = {}
    if data_start < len(rows):
        cand = _row_texts(rows[data_start])
        is_units, any_unit = True, False
        for target, (j, _, _) in bound.items():
            t = cand[j] if j < len(cand) else ""
            if not t:
                continue
            if kind_of[target] is None:
                if not _UNIT_LABEL.match(t):
                    is_units = False
                    break
            elif _looks_number(t):
                is_units = False
                break
            else:
                any_unit = True
        if is_units and any_unit:
            units_row = data_start + 1
            units = {target: (cand[j] if j < len(cand) else "") or None for target, (j, _, _) in bound.items()}
            data_start += 1

    columns_out: dict[str, TableColumn] = {}
    data_rows = rows[data_start:]
    positions = [j for j, _, _ in bound.values()]
    keep = [k for k, row in enumerate(data_rows)
            if any(_filled(row[j]) for j in positions if j < len(row))]
    if not keep:
        raise InputError("no data rows under the header", file=label,
                         row=units_row or header_row)
    kept = [data_rows[k] for k in keep] if len(keep) != len(data_rows) else data_rows
    width = max((j + 1 for j, t in enumerate(header_cells) if t), default=0)
    for k in keep if cells.sheet is None else ():          # text files: a shifted row is a misread
        extra = [c for c in data_rows[k][width:] if _filled(c)]
        if extra:
            raise InputError(f"this row has {width + len(extra)} or more filled fields but the header has {width}: "
                             f"a stray delimiter or an unquoted decimal comma shifts the values (first extra "
                             f"field {cell_text(extra[0])!r}); quote the value or remove the field",
                             file=label, row=k + data_start + 1)
    for target, (j, header, head_unit) in bound.items():
        kind = kind_of[target]
        unit = head_unit
        conversion = None
        row_unit = units.get(target)
        if target == "CP" and "specific_heat" in vocabulary and "specific_heat" not in bound and \
                _is_specific_heat(unit or row_unit):
            target, kind = "specific_heat", kind_of["specific_heat"]     # "Cp [kJ/kg.K]": a specific heat
        if kind is not None:
            try:
                conversion = parse_unit(unit, kind, hours_per_year=hours_per_year)
            except InputError as e:
                raise e.located(file=label, row=header_row, column=header) from None
            if row_unit is not None:
                try:
                    row_conv = parse_unit(row_unit, kind, hours_per_year=hours_per_year)
                except InputError as e:
                    raise e.located(file=label, row=units_row, column=header) from None
                if unit is None:
                    unit, conversion = row_unit, row_conv
                elif _affine(row_conv) != _affine(conversion):
                    raise InputError(f"the header gives unit '{unit}' but the units row gives '{row_unit}'",
                                     file=label, row=units_row, column=header)
        cells_j = [row[j] if j < len(row) else "" for row in kept]
        columns_out[target] = TableColumn(target, header, j, unit, conversion, cells_j)
    row_numbers = np.asarray(keep, dtype=np.int64) + (data_start + 1)
    return Table(cells.source, cells.sheet, header_row, units_row, columns_out, row_numbers, headers,
                 cells.decimal_comma)
