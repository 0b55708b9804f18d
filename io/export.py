"""Writing results: JSON, CSV and XLSX, never over anything the user gave.

Every writer goes through :class:`OutputDirectory`, which refuses to overwrite an existing file unless
asked to (``force``) and refuses, even then, to write over any of the input files of the run.  Files are
written whole under a temporary name and renamed when complete (never written through a link), and text
cells are written so that no spreadsheet program runs them as formulas.

Numbers are rounded when written, never inside a computation: duties, temperatures, temperature differences
and areas to 0.001, money to 0.01 (:data:`heatloom.defaults.OUTPUT_PRECISION`), keyed on the unit in a column
header (CSV, XLSX) or on the key (JSON, :func:`key_precision`); other quantities (CP, film coefficients,
prices, ratios) are written as computed.  Tables of inputs (stream and utility tables as read) are written
exactly, so that they read back as the same table.
"""

from __future__ import annotations

import json
import math
import os
import re
import tempfile
from collections.abc import Iterable, Mapping
from pathlib import Path

import numpy as np

from .. import defaults
from ..errors import InputError
from .cases import case_role
from .cells import looks_like_formula
from .formats import unit_of

__all__ = ["OutputDirectory", "RESULTS_FOLDER", "to_jsonable", "targets_workbook_sheets", "placement_currency", "FIGURE_FORMATS", "neutralise", "rounded",
           "rounded_frame", "is_input_table", "unit_precision", "key_precision"]

FIGURE_FORMATS = ("png", "svg")
"""Every figure is written in these formats."""

RESULTS_FOLDER = "results"
"""Subfolder that takes the results when ``--out`` names a folder holding input files of the run."""


_UNIT_KINDS = {"kW": "duty", "MW": None, "°C": "temperature", "K": "temperature", "m²": "area", "m2": "area",
               "money": "money", "money/year": "money", "money/yr": "money"}
_JSON_KINDS = {
    **dict.fromkeys(("duty", "hot_utility", "cold_utility", "hot utility", "cold utility", "heat_recovery",
                     "heat_in", "heat_out", "surplus", "saving", "cold_saving", "recovered", "raised", "used",
                     "net_export", "rejected", "heat_above_mains", "heat_below_mains"), "duty"),
    **dict.fromkeys(("hot", "cold", "shifted", "T_top", "T_bottom", "hot_in", "hot_out", "cold_in", "cold_out",
                     "utility_in", "utility_out", "T_supply", "T_target", "supply_temperature", "temperature",
                     "target_temperature", "pinch_hot", "pinch_cold", "dtmin", "dt_min", "dtmin_low",
                     "dtmin_high", "dtmin_range", "dtmin_existing", "min_approach", "approach", "lmtd", "emat",
                     "dt_site", "shifted_top", "shifted_bottom"), "temperature"),
    **dict.fromkeys(("area", "area_existing", "area_target", "total_area", "area_per_shell"), "area"),
    **dict.fromkeys(("cost", "tac", "investment", "npv", "saving_per_year", "money_per_year", "repipe",
                     "resequence", "fixed"), "money"),
}
_JSON_SUFFIX_KINDS = (("_duty", "duty"), ("_utility", "duty"), ("_cost", "money"))
_INPUT_COLUMNS = ("T_supply", "T_target")
_DUTY_MAPS = ("utilities", "cross_pinch", "duties")
"""JSON keys whose value maps names (of utilities, of units) to duties [kW]."""


def unit_precision(unit: str | None) -> int | None:
    """Decimal places a value of this unit is written with (:data:`heatloom.defaults.OUTPUT_PRECISION`), None
    for a unit that is written unrounded (CP, film coefficients, prices, ratios, counts).

    Examples
    --------
    >>> unit_precision("kW"), unit_precision("°C"), unit_precision("m²"), unit_precision("EUR/year")
    (3, 3, 3, 2)
    >>> unit_precision("kW/K"), unit_precision("USD/(kW·year)"), unit_precision(None)
    (None, None, None)
    """
    if unit is None:
        return None
    u = unit.strip()
    kind = _UNIT_KINDS.get(u)
    if kind is None and re.fullmatch(r"(?:[A-Z]{3}|money)(?:\s*/\s*(?:year|yr|a))?", u):
        kind = "money"
    return None if kind is None else defaults.OUTPUT_PRECISION[kind]


def key_precision(key) -> int | None:
    """Decimal places of a JSON value under this key: from the unit in brackets when the key carries one
    (``"duty [kW]"``), else from the key's name (``hot_utility`` a duty, ``hot_in`` a temperature,
    ``capital_cost`` money...); None for keys of other quantities.

    Examples
    --------
    >>> key_precision("hot_utility"), key_precision("lmtd"), key_precision("npv"), key_precision("u")
    (3, 3, 2, None)
    """
    key = str(key)
    unit = unit_of(key)
    if unit is not None:
        return unit_precision(unit)
    kind = _JSON_KINDS.get(key)
    if kind is None:
        kind = next((k for suffix, k in _JSON_SUFFIX_KINDS if key.endswith(suffix)), None)
    return None if kind is None else defaults.OUTPUT_PRECISION[kind]


def rounded(value, places: int | None):
    """A finite float rounded to ``places`` decimals (None: unchanged); anything else as it is.  A value
    that is not zero is never written as zero: below half a unit of the last place it keeps three
    significant digits (a unit of 0.0004 m² stays a unit when its table is read back).

    Rounding only removes float noise: the result differs from the value by at most half a unit of the
    last place kept.

    Examples
    --------
    >>> rounded(772.5000000000009, 3), rounded(0.12345, None), rounded(7, 3), rounded(0.000412345, 3)
    (772.5, 0.12345, 7, 0.000412)
    """
    if places is None or isinstance(value, bool) or not isinstance(value, float) or not math.isfinite(value):
        return value
    out = round(value, places)
    return float(f"{value:.3g}") if out == 0 and value != 0 else out


def to_jsonable(value, *, key=None):
    """Turn numpy scalars and arrays, enums and non-finite floats into plain JSON values, and round each
    number to the output precision of its key (:func:`key_precision`,
    :data:`heatloom.defaults.OUTPUT_PRECISION`).

    NaN and infinities become ``null`` (JSON has no such numbers).  Under a key naming duties by name
    (``utilities``, ``cross_pinch``, ``duties``) a number under an unknown key is a duty.

    Parameters
    ----------
    value
        Mappings, sequences, numbers, text, enums.
    key : str, optional
        The key ``value`` is stored under (its precision applies to a number or a list of numbers).

    Examples
    --------
    >>> to_jsonable({"a": np.float64(1.5), "b": [np.int64(2), float("nan")]})
    {'a': 1.5, 'b': [2, None]}
    >>> to_jsonable({"hot_utility": 772.5000000000009, "utilities": {"steam": 100.00000000000003}, "u": 0.1234567})
    {'hot_utility': 772.5, 'utilities': {'steam': 100.0}, 'u': 0.1234567}
    """
    if isinstance(value, Mapping):
        inherited = defaults.OUTPUT_PRECISION["duty"] if key in _DUTY_MAPS else None
        out = {}
        for k, v in value.items():
            own = key_precision(k)
            out[str(k)] = to_jsonable(v, key=k if own is not None or inherited is None or isinstance(v, Mapping)
                                      else "duty")
        return out
    if isinstance(value, (list, tuple)):
        return [to_jsonable(v, key=key) for v in value]
    if isinstance(value, np.ndarray):
        return to_jsonable(value.tolist(), key=key)
    if isinstance(value, np.generic):
        return to_jsonable(value.item(), key=key)
    if isinstance(value, float):
        if not math.isfinite(value):
            return None
        return rounded(value, None if key is None else key_precision(key))
    if hasattr(value, "value") and type(value).__module__.startswith("heatloom"):  # enums
        return value.value
    return value


def is_input_table(frame) -> bool:
    """Whether a frame is a table of inputs (a stream or utility table as read: it has a ``T_supply`` or
    ``T_target`` column, the input names of those tables).  Such a table is written exactly, never rounded, so
    that it reads back as the same table (issue 14).

    Examples
    --------
    >>> import pandas as pd
    >>> is_input_table(pd.DataFrame({"name": ["H1"], "T_supply [°C]": [150.0]})), is_input_table(pd.DataFrame({"duty [kW]": [1.0]}))
    (True, False)
    """
    return any(re.sub(r"\s*\[[^\]]*\]\s*$", "", str(c)).strip() in _INPUT_COLUMNS for c in frame.columns)


def rounded_frame(frame):
    """A copy of a frame with every number rounded to the output precision of its column's unit
    (:func:`unit_precision` of the unit in the header); columns of other units are left as they are, and so is
    a table of inputs (:func:`is_input_table`).

    Examples
    --------
    >>> import pandas as pd
    >>> rounded_frame(pd.DataFrame({"duty [kW]": [772.5000000000009], "CP [kW/K]": [1.23456789]})).iloc[0].tolist()
    [772.5, 1.23456789]
    """
    from .formats import column_units

    if is_input_table(frame):
        return frame
    out = frame.copy()
    for j, unit in enumerate(column_units(frame)):
        places = unit_precision(unit)
        if places is None:
            continue
        column = out.iloc[:, j]
        out.isetitem(j, column.map(lambda v, p=places: rounded(v.item() if isinstance(v, np.generic) else v, p)))
    return out


def neutralise(text):
    """A text cell made inert for spreadsheet programs: a leading apostrophe before ``=``, ``+``, ``-``,
    ``@``, a tab or a carriage return (OWASP CSV-injection guidance), and before apostrophes that precede
    one, so that the reader (:mod:`heatloom.io.cells`) gives the text back exactly.  Anything that is not
    text is returned as it is (numbers are never changed).

    Examples
    --------
    >>> neutralise("=cmd|' /C calc'!A0"), neutralise("reactor feed"), neutralise(-5.0)
    ("'=cmd|' /C calc'!A0", 'reactor feed', -5.0)
    """
    if isinstance(text, str) and looks_like_formula(text):
        return "'" + text
    return text


def _cell_value(v):
    """A value openpyxl can store: numpy scalars as Python ones, NaN, None and pandas' missing values (``NA``
    of a nullable integer column, ``NaT``) as empty cells."""
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not math.isfinite(v):
        return None
    if type(v).__name__ in ("NAType", "NaTType"):       # pandas.NA, pandas.NaT
        return None
    return v


class OutputDirectory:
    """A folder to write results into, with the overwrite rules of the project.

    Every file is written under a temporary name in the folder and renamed over its final name only when
    complete, so an interrupted run leaves no partial file and an existing file is *replaced*, never written
    through: a hard link to an input elsewhere keeps the input's content, and a symbolic link is replaced by
    the new file, not followed.  A symbolic link that points outside the folder is refused.

    Results are never written beside inputs: when the folder holds input files of the run (a case folder
    given as ``--out``), they go to its subfolder :data:`RESULTS_FOLDER` instead, and :attr:`redirect_note`
    says so (the commands print it on stderr).

    Parameters
    ----------
    path : str or Path
        The folder; created when missing.
    protected : iterable of path
        Input files of the run: never written over, even with ``force`` (also when reached through a link).
    force : bool
        Allow replacing files that already exist (other than protected ones).

    Attributes
    ----------
    path : Path
        Where the results go: ``path``, or its subfolder :data:`RESULTS_FOLDER` when ``path`` holds inputs.
    redirect_note : str or None
        Why the results go to the subfolder, in one line; None when they go to ``path`` itself.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> case = pathlib.Path(tempfile.mkdtemp())
    >>> _ = (case / "streams.csv").write_text("name,T_supply,T_target,CP\\n")
    >>> out = OutputDirectory(case, [case / "streams.csv"])
    >>> out.path == case / RESULTS_FOLDER, out.redirect_note.startswith("--out ")
    (True, True)
    """

    def __init__(self, path, protected: Iterable = (), *, force: bool = False) -> None:
        requested = Path(path)
        if requested.exists() and not requested.is_dir():
            raise InputError(f"--out {requested} exists and is not a folder")
        self.protected = [Path(p) for p in protected]
        self.force = force
        self.written: list[Path] = []
        self.path = requested
        self.redirect_note: str | None = None
        beside = self._inputs_in(requested)
        if beside:
            self.path = requested / RESULTS_FOLDER
            if self.path.exists() and not self.path.is_dir():
                raise InputError(f"--out {requested} holds input files of this run and {self.path} is not a "
                                 "folder; choose another --out folder")
            shown = ", ".join(beside[:4]) + (" ..." if len(beside) > 4 else "")
            self.redirect_note = (f"--out {requested} holds input files of this run ({shown}): results go to "
                                  f"{self.path}/, never beside the inputs")

    def _inputs_in(self, folder: Path) -> list[str]:
        """Names of the run's input files that lie directly in ``folder``, as named or where a link leads."""
        if not folder.is_dir():
            return []
        out = []
        for q in self.protected:
            try:
                if q.is_file() and any(os.path.samefile(d, folder) for d in (q.absolute().parent, q.resolve().parent)):
                    out.append(q.name)
            except OSError:
                continue
        return out

    def _is_input(self, p: Path) -> bool:
        """Whether ``p`` is one of the run's input files, under this name, another link or a hard link."""
        def same(q: Path) -> bool:
            try:
                return q.exists() and os.path.samefile(p, q)
            except OSError:
                return False

        return p.exists() and any(same(q) for q in self.protected)

    def _refuse(self, p: Path) -> None:
        if self._is_input(p):
            raise InputError(f"refusing to write {p}: it is one of the input files of this run")
        if p.is_symlink():
            folder = self.path.resolve()
            if folder not in p.resolve().parents:
                raise InputError(f"refusing to write {p}: it is a symbolic link to {p.resolve()}, outside the "
                                 "output folder; remove the link or choose another --out folder")
        if (p.exists() or p.is_symlink()) and not self.force:
            raise InputError(f"{p} already exists; choose another --out folder or pass --force to replace "
                             "heatloom's earlier results")

    def target(self, name: str) -> Path:
        """Check that ``name`` may be written and return its full path (creating the folder).

        No output takes a name that a case folder reads as an input (:func:`heatloom.io.cases.case_role`), so
        that results written into a case folder can never replace, or be mistaken for, one of its tables.
        """
        role = case_role(name)
        if role is not None:
            raise ValueError(f"output name {name!r} would be read as the {role} of a case folder; name it otherwise")
        p = self.path / name
        self._refuse(p)
        try:
            self.path.mkdir(parents=True, exist_ok=True)
        except OSError as e:
            raise InputError(f"cannot create the output folder {self.path}: {e.strerror or e}") from None
        return p

    def check(self, names: Iterable[str]) -> None:
        """Check every name before anything is written, so a refused run leaves no partial output."""
        for n in names:
            self._refuse(self.path / n)

    def write(self, name: str, produce) -> Path:
        """Write file ``name`` atomically: ``produce(path)`` writes a temporary file in the folder, which is
        renamed over ``name`` only when it is complete; on any error or interrupt it is removed.

        Examples
        --------
        >>> import tempfile
        >>> out = OutputDirectory(tempfile.mkdtemp())
        >>> p = out.write("a.txt", lambda t: t.write_text("done"))
        >>> p.read_text(), sorted(x.name for x in out.path.iterdir())
        ('done', ['a.txt'])
        """
        p = self.target(name)
        fd, tmp = tempfile.mkstemp(prefix=f".{p.stem}.", suffix=f".partial{p.suffix}", dir=self.path)
        os.close(fd)
        tmp = Path(tmp)
        try:
            produce(tmp)
            os.replace(tmp, p)
        except OSError as e:
            tmp.unlink(missing_ok=True)
            raise InputError(f"cannot write {p}: {e.strerror or e}") from None
        except BaseException:
            tmp.unlink(missing_ok=True)
            raise
        self.written.append(p)
        return p

    def text(self, name: str, text: str) -> Path:
        """Write a text file (UTF-8) atomically."""
        return self.write(name, lambda t: t.write_text(text, encoding="utf-8"))

    def json(self, name: str, data) -> Path:
        return self.text(name, json.dumps(to_jsonable(data), indent=2, ensure_ascii=False) + "\n")

    def csv(self, name: str, frame) -> Path:
        """Write a frame as CSV (UTF-8): numbers rounded to the output precision of their column's unit
        (:func:`rounded_frame`), text cells and headers neutralised (:func:`neutralise`)."""
        from pandas.api.types import is_numeric_dtype

        safe = rounded_frame(frame).rename(columns=lambda c: neutralise(str(c)))
        for c in safe.columns:
            if not is_numeric_dtype(safe[c]):
                safe[c] = safe[c].map(neutralise)
        return self.write(name, lambda t: safe.to_csv(t, index=False, encoding="utf-8"))

    def workbook(self, name: str, sheets: Mapping[str, object]) -> Path:
        """Write an .xlsx with one sheet per frame: header bold and frozen, columns sized, numbers rounded to
        the output precision of their unit (:func:`unit_precision`) and formatted by it
        (:func:`heatloom.io.formats.number_formats`), and every text cell stored as text, never as a formula.
        In a long table (columns ``value`` and ``unit``) each value takes the unit of its row.

        Examples
        --------
        >>> import tempfile, pandas as pd, openpyxl
        >>> out = OutputDirectory(tempfile.mkdtemp())
        >>> p = out.workbook("t.xlsx", {"duties": pd.DataFrame({"unit": ["=1+1"], "duty [kW]": [120.25]})})
        >>> ws = openpyxl.load_workbook(p)["duties"]
        >>> ws["A2"].value, ws["A2"].data_type, ws["B2"].number_format
        ('=1+1', 's', '#,##0.0')
        """
        return self.write(name, lambda t: _write_xlsx(t, sheets))

    def figure(self, name: str, fig) -> Path:
        suffix = Path(name).suffix
        return self.write(name, lambda t: fig.savefig(t, bbox_inches="tight", format=suffix[1:],
                                                      dpi=150 if suffix == ".png" else None))

    def figures(self, stem: str, fig) -> list[Path]:
        """Write ``fig`` as STEM.png and STEM.svg, then let go of it (:func:`heatloom.io.figures.close_figure`)."""
        from .figures import close_figure

        try:
            return [self.figure(f"{stem}.{ext}", fig) for ext in FIGURE_FORMATS]
        finally:
            close_figure(fig)


def _write_xlsx(path: Path, sheets: Mapping[str, object]) -> None:
    from openpyxl import Workbook
    from openpyxl.styles import Font
    from openpyxl.utils import get_column_letter

    from .formats import column_units, number_formats

    wb = Workbook()
    wb.remove(wb.active)
    for sheet, frame in sheets.items():
        ws = wb.create_sheet(str(sheet)[:31])
        columns = [str(c) for c in frame.columns]
        for j, c in enumerate(columns, 1):
            cell = ws.cell(row=1, column=j, value=c)
            cell.data_type = "s"
            cell.font = Font(bold=True)
        units = column_units(frame)
        exact = is_input_table(frame)
        long_value = columns.index("value") if "value" in columns and "unit" in columns else None
        long_unit = columns.index("unit") if long_value is not None else None
        for r, values in enumerate(frame.itertuples(index=False, name=None), 2):
            for j, v in enumerate(values):
                v = _cell_value(v)
                if v is not None and not isinstance(v, (bool, int, float, str)):
                    v = str(v)
                cell = ws.cell(row=r, column=j + 1, value=v)
                if isinstance(v, str):
                    cell.data_type = "s"                 # text, never a formula (OWASP CSV injection)
                elif isinstance(v, (int, float)) and not isinstance(v, bool):
                    unit = values[long_unit] if j == long_value else units[j]
                    if not exact:
                        cell.value = rounded(v, unit_precision(unit if isinstance(unit, str) else None))
                    cell.number_format = number_formats(unit, v)[1]
        ws.freeze_panes = "A2"
        for j, c in enumerate(columns, 1):
            width = max([len(c)] + [len(str(x)) for x in frame.iloc[:, j - 1].head(500)])
            ws.column_dimensions[get_column_letter(j)].width = min(max(10, width + 2), 60)
    wb.save(path)


def placement_currency(targets) -> str:
    """The currency the placed utilities' prices name, when they all name one; else ``"money"``.

    Examples
    --------
    >>> from heatloom.model import StreamTable, Utility, UtilityKind
    >>> from heatloom.pinch import target
    >>> s = StreamTable.from_arrays(["H1", "C1"], [150, 30], [60, 120], [2.0, 2.5])
    >>> u = [Utility("steam", 180, 179, 100.0, UtilityKind.HOT, currency="EUR"),
    ...      Utility("water", 20, 30, 10.0, UtilityKind.COLD, currency="EUR")]
    >>> placement_currency(target(s, 10, u)), placement_currency(target(s, 10))
    ('EUR', 'money')
    """
    currencies = {d.utility.currency for d in (targets.placement.duties if targets.placement else ())}
    return currencies.pop() if len(currencies) == 1 and None not in currencies else "money"


def targets_workbook_sheets(targets, area=None, area_note: str | None = None) -> dict:
    """Frames of a targeting run, one per workbook sheet (units in every header).

    Parameters
    ----------
    targets : heatloom.pinch.Targets
    area : heatloom.pinch.area.AreaTargets, optional
        The area, units and shells targets, written beside the energy targets as ``--json`` carries them.
    area_note : str, optional
        Why they were not computed, written in their place when ``area`` is None.
    """
    import pandas as pd

    rows = [
        ("ΔTmin", targets.dt_min, "K"),
        ("minimum hot utility", targets.hot_utility, "kW"),
        ("minimum cold utility", targets.cold_utility, "kW"),
        ("heat recovery", targets.heat_recovery, "kW"),
        ("hot pinch temperature", targets.pinch.hot if targets.pinch else None, "°C"),
        ("cold pinch temperature", targets.pinch.cold if targets.pinch else None, "°C"),
        ("threshold", targets.threshold.value if targets.threshold else "no", ""),
    ]
    if area is not None:
        rows += [("minimum area (Townsend–Linnhoff)", area.area, "m²"),
                 ("minimum units (Euler, N − 1)", area.units, "-"),
                 ("minimum units for maximum energy recovery", area.units_mer, "-"),
                 ("minimum 1-2 shells", area.shells, "-")]
    elif area_note:
        rows.append(("area, units and shells targets", f"not computed: {area_note}", ""))
    summary = pd.DataFrame(rows, columns=["quantity", "value", "unit"])
    cur = placement_currency(targets)
    sheets = {"targets": summary, "streams": targets.streams.to_frame(),
              "problem table": targets.table.to_frame()}
    if targets.placement is not None:
        sheets["utilities"] = pd.DataFrame([{
            "name": d.utility.name, "kind": d.utility.kind.value,
            "T_supply [°C]": d.utility.supply_temperature, "T_target [°C]": d.utility.target_temperature,
            f"price [{cur}/(kW·year)]": d.utility.cost, "duty [kW]": d.duty,
            f"annual cost [{cur}/year]": d.annual_cost} for d in targets.placement.duties])
    curves = [targets.hot_composite(), targets.cold_composite(), targets.grand_composite()]
    sheets["curves"] = pd.concat([c.to_frame() for c in curves], axis=1)
    return sheets
