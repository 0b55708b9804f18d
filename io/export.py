"""Writing results: JSON, CSV and XLSX, never over anything the user gave.

Every writer goes through :class:`OutputDirectory`, which refuses to overwrite an existing file unless
asked to (``force``) and refuses, even then, to write over any of the input files of the run.  Files are
written whole under a temporary name and renamed when complete (never written through a link), and text
cells are written so that no spreadsheet program runs them as formulas.
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from collections.abc import Iterable, Mapping
from pathlib import Path

import numpy as np

from ..errors import InputError
from .cases import case_role
from .cells import looks_like_formula

__all__ = ["OutputDirectory", "to_jsonable", "targets_workbook_sheets", "FIGURE_FORMATS", "neutralise"]

FIGURE_FORMATS = ("png", "svg")
"""Every figure is written in these formats."""


def to_jsonable(value):
    """Turn numpy scalars and arrays, enums and non-finite floats into plain JSON values.

    NaN and infinities become ``null`` (JSON has no such numbers).

    Examples
    --------
    >>> to_jsonable({"a": np.float64(1.5), "b": [np.int64(2), float("nan")]})
    {'a': 1.5, 'b': [2, None]}
    """
    if isinstance(value, Mapping):
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [to_jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return to_jsonable(value.tolist())
    if isinstance(value, np.generic):
        return to_jsonable(value.item())
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if hasattr(value, "value") and type(value).__module__.startswith("heatloom"):  # enums
        return value.value
    return value


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
    """A value openpyxl can store: numpy scalars as Python ones, NaN and None as empty cells."""
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not math.isfinite(v):
        return None
    return v


class OutputDirectory:
    """A folder to write results into, with the overwrite rules of the project.

    Every file is written under a temporary name in the folder and renamed over its final name only when
    complete, so an interrupted run leaves no partial file and an existing file is *replaced*, never written
    through: a hard link to an input elsewhere keeps the input's content, and a symbolic link is replaced by
    the new file, not followed.  A symbolic link that points outside the folder is refused.

    Parameters
    ----------
    path : str or Path
        The folder; created when missing.
    protected : iterable of path
        Input files of the run: never written over, even with ``force`` (also when reached through a link).
    force : bool
        Allow replacing files that already exist (other than protected ones).
    """

    def __init__(self, path, protected: Iterable = (), *, force: bool = False) -> None:
        self.path = Path(path)
        if self.path.exists() and not self.path.is_dir():
            raise InputError(f"--out {self.path} exists and is not a folder")
        self.protected = [Path(p) for p in protected]
        self.force = force
        self.written: list[Path] = []

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
        """Write a frame as CSV (UTF-8), text cells and headers neutralised (:func:`neutralise`)."""
        from pandas.api.types import is_numeric_dtype

        safe = frame.rename(columns=lambda c: neutralise(str(c)))
        for c in safe.columns:
            if not is_numeric_dtype(safe[c]):
                safe[c] = safe[c].map(neutralise)
        return self.write(name, lambda t: safe.to_csv(t, index=False, encoding="utf-8"))

    def workbook(self, name: str, sheets: Mapping[str, object]) -> Path:
        """Write an .xlsx with one sheet per frame: header bold and frozen, columns sized, numbers formatted
        by the unit in their header (:func:`heatloom.io.formats.number_formats`), and every text cell stored
        as text, never as a formula.

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
                    cell.number_format = number_formats(unit, v)[1]
        ws.freeze_panes = "A2"
        for j, c in enumerate(columns, 1):
            width = max([len(c)] + [len(str(x)) for x in frame.iloc[:, j - 1].head(500)])
            ws.column_dimensions[get_column_letter(j)].width = min(max(10, width + 2), 60)
    wb.save(path)


def targets_workbook_sheets(targets) -> dict:
    """Frames of a targeting run, one per workbook sheet (units in every header)."""
    import pandas as pd

    summary = pd.DataFrame([
        ("ΔTmin", targets.dt_min, "K"),
        ("minimum hot utility", targets.hot_utility, "kW"),
        ("minimum cold utility", targets.cold_utility, "kW"),
        ("heat recovery", targets.heat_recovery, "kW"),
        ("hot pinch temperature", targets.pinch.hot if targets.pinch else None, "°C"),
        ("cold pinch temperature", targets.pinch.cold if targets.pinch else None, "°C"),
        ("threshold", targets.threshold.value if targets.threshold else "no", ""),
    ], columns=["quantity", "value", "unit"])
    sheets = {"targets": summary, "streams": targets.streams.to_frame(),
              "problem table": targets.table.to_frame()}
    if targets.placement is not None:
        sheets["utilities"] = pd.DataFrame([{
            "name": d.utility.name, "kind": d.utility.kind.value,
            "T_supply [°C]": d.utility.supply_temperature, "T_target [°C]": d.utility.target_temperature,
            "price [money/(kW·year)]": d.utility.cost, "duty [kW]": d.duty,
            "annual cost [money/year]": d.annual_cost} for d in targets.placement.duties])
    curves = [targets.hot_composite(), targets.cold_composite(), targets.grand_composite()]
    sheets["curves"] = pd.concat([c.to_frame() for c in curves], axis=1)
    return sheets
