"""The raw grid of a plant table: a CSV file or a worksheet read into rows of cells, nothing interpreted.

What is handled here (headers, units and column names are :mod:`heatloom.io.tables`' job):

* **Text tables.** CSV or any delimited text with comma, semicolon, tab or ``|`` delimiters, sniffed
  from the file; UTF-8 with or without BOM, UTF-16 with BOM, else Windows-1252 / Latin-1.  A semicolon
  delimiter marks a file that may write decimal commas (``2,5``).  Binary content is refused.
* **Workbooks.** ``.xlsx``/``.xlsm`` (told by their content, a zip archive, as well as by the suffix): a
  named sheet, else the first; stored values are read, formulas are not evaluated.  Old ``.xls`` files
  are refused with a hint to save them again.

The file is only read, never written.  Every problem is an :class:`~heatloom.errors.InputError` naming
the file (and sheet).
"""

from __future__ import annotations

import codecs
import csv
import datetime as _dt
import io as _io
import os
import re
import stat
import zipfile
from collections import Counter
from dataclasses import dataclass
from pathlib import Path

from .. import defaults
from ..errors import InputError
from ..validation import as_written as cell_text  # a cell as written (the rule lives in the core)

__all__ = ["Cells", "load_cells", "cell_text", "UnsavedFormula", "read_input_bytes", "FORMULA_TRIGGERS", "looks_like_formula"]

FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")
"""First characters that make a spreadsheet program read a text cell as a formula (OWASP, *CSV Injection*
guidance): heatloom's writers put an apostrophe before them in CSV files, and the readers take that
apostrophe away again, so that a table written by heatloom reads back as it was."""



def looks_like_formula(text: str) -> bool:
    """Whether a CSV writer must put an apostrophe before ``text``: it begins with a formula trigger, or
    with apostrophes before one (so that the apostrophe the reader takes away is always the writer's).

    Examples
    --------
    >>> looks_like_formula("=1+1"), looks_like_formula("'=1"), looks_like_formula("'quoted"), looks_like_formula("H1")
    (True, True, False, False)
    """
    rest = text.lstrip("'")
    return bool(rest) and rest.startswith(FORMULA_TRIGGERS)


_XLSX_SUFFIXES = (".xlsx", ".xlsm", ".xltx", ".xltm")
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f]")
_OLE2 = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"


class UnsavedFormula(str):
    """A workbook cell that holds a formula whose value was never saved (a file written by a program that
    does not compute formulas): the text is the formula.  Readers refuse it with its location."""

    @property
    def advice(self) -> str:
        return (f"the cell holds the formula {str(self)!r}, whose value was never saved in the file; open the "
                "workbook in a spreadsheet program and save it (or paste the values) so that the value is stored")


@dataclass(frozen=True, eq=False)
class Cells:
    """The raw grid of a text table or worksheet: ``rows[i]`` is spreadsheet row ``i + 1``.

    Cells are strings (text files, text cells) or floats (numeric workbook cells); empty cells are ``""``.
    """

    source: str
    rows: list[list]
    sheet: str | None = None
    decimal_comma: bool = False

    @property
    def label(self) -> str:
        """File (and sheet) as named in messages."""
        return self.source if self.sheet is None else f"{self.source}, sheet '{self.sheet}'"


def _decode(data: bytes, source: str) -> str:
    if data.startswith(codecs.BOM_UTF8):
        data = data[len(codecs.BOM_UTF8):]
    elif data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        try:
            return data.decode("utf-16")
        except UnicodeDecodeError:
            raise InputError("cannot read the file: it starts like UTF-16 text but is not", file=source) from None
    if b"\x00" in data:
        raise InputError("this is not a text table (binary content); give a CSV file or an .xlsx workbook",
                         file=source)
    text = None
    for encoding in ("utf-8", "cp1252", "latin-1"):
        try:
            text = data.decode(encoding)
            break
        except UnicodeDecodeError:
            continue
    assert text is not None  # latin-1 decodes any bytes
    control = len(_CONTROL.findall(text))
    if control > max(2, len(text) // 100):
        raise InputError("this is not a text table (binary content); give a CSV file or an .xlsx workbook",
                         file=source)
    return text


def _sniff(text: str) -> str:
    lines = [line for line in text[:65536].splitlines() if line.strip()][:60]
    best, best_score = ",", (0, 0)
    for delimiter in (",", ";", "\t", "|"):
        counts = [len(r) for r in csv.reader(lines, delimiter=delimiter)]
        multi = [c for c in counts if c > 1]
        if not multi:
            continue
        mode, freq = Counter(multi).most_common(1)[0]
        if (freq, mode) > best_score:
            best, best_score = delimiter, (freq, mode)
    return best


def _load_text(data: bytes, source: str) -> Cells:
    text = _decode(data, source)
    if not text.strip():
        raise InputError("the file is empty", file=source)
    delimiter = _sniff(text)
    try:
        rows = list(csv.reader(_io.StringIO(text, newline=""), delimiter=delimiter))
    except csv.Error as e:
        raise InputError(f"cannot read the file as a delimited text table: {e}", file=source) from None
    rows = [[c[1:] if c.startswith("'") and looks_like_formula(c[1:]) else c for c in row]
            for row in rows]                    # undo the apostrophe heatloom's CSV writer puts before a formula
    return Cells(source, rows, None, decimal_comma=delimiter == ";")


def _excel_value(v):
    if v is None:
        return ""
    if isinstance(v, bool):
        return "TRUE" if v else "FALSE"
    if isinstance(v, (int, float)):
        return float(v)
    if isinstance(v, (_dt.datetime, _dt.date, _dt.time)):
        return v.isoformat()
    return str(v)


def _load_workbook(data: bytes, source: str, sheet: str | None) -> Cells:
    import openpyxl
    from openpyxl.utils.exceptions import InvalidFileException

    try:
        wb = openpyxl.load_workbook(_io.BytesIO(data), read_only=True, data_only=True)
    except (zipfile.BadZipFile, InvalidFileException, KeyError, ValueError, OSError, EOFError, TypeError) as e:
        why = "it is not a zip archive" if isinstance(e, zipfile.BadZipFile) else str(e) or type(e).__name__
        raise InputError(f"cannot read the file as an .xlsx workbook ({why}); save it again as .xlsx or CSV",
                         file=source) from None
    try:
        names = list(wb.sheetnames)
        if sheet is None:
            sheets = [ws for ws in wb.worksheets if hasattr(ws, "iter_rows")]
            if not sheets:
                raise InputError("the workbook has no worksheet", file=source)
            ws = sheets[0]
        else:
            wanted = str(sheet).strip()
            match = [n for n in names if n == wanted] or [n for n in names if n.strip().casefold() == wanted.casefold()]
            if not match:
                raise InputError(f"no sheet named '{sheet}'; sheets: {', '.join(repr(n) for n in names)}",
                                 file=source)
            ws = wb[match[0]]
            if not hasattr(ws, "iter_rows"):
                raise InputError(f"sheet '{match[0]}' is a chart, not a table", file=source)
        title = ws.title
        rows = [[_excel_value(v) for v in row] for row in ws.iter_rows(values_only=True)]
    finally:
        wb.close()
    if any(c == "" for row in rows for c in row):
        _mark_unsaved_formulas(data, title, rows)
    cells = Cells(source, rows, title)
    if not any(c != "" for row in rows for c in row):
        raise InputError("the sheet is empty", file=cells.label)
    return cells


def _mark_unsaved_formulas(data: bytes, title: str, rows: list[list]) -> None:
    """Replace empty cells that hold a formula without a stored value by :class:`UnsavedFormula`."""
    import openpyxl

    wb = openpyxl.load_workbook(_io.BytesIO(data), read_only=True, data_only=False)
    try:
        for i, row in enumerate(wb[title].iter_rows(values_only=True)):
            if i >= len(rows):
                break
            for j, v in enumerate(row):
                if j < len(rows[i]) and rows[i][j] == "" and isinstance(v, str) and v.startswith("="):
                    rows[i][j] = UnsavedFormula(v)
    finally:
        wb.close()


def read_input_bytes(path: str | os.PathLike, *, what: str = "file",
                     max_bytes: int | None = None) -> bytes:
    """The bytes of an input file, after checking that it is a regular file of a sensible size.

    A device (``/dev/zero``), a pipe or a socket is refused before anything is read (reading one never ends
    or never returns), and so is a file larger than ``max_bytes``.

    Parameters
    ----------
    path : str or path-like
    what : str, optional
        What the file is, for messages (``"costs file"``...).
    max_bytes : int, optional
        Largest size read [bytes]; by default :func:`heatloom.defaults.max_input_bytes` (the
        :data:`~heatloom.defaults.MAX_INPUT_BYTES` default, or the run's ``--max-input-mb``).

    Examples
    --------
    >>> read_input_bytes("/dev/zero")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: /dev/zero: not a regular file (a device, pipe or socket); give a CSV file or a workbook
    """
    source = os.fspath(path)
    try:
        st = os.stat(source)
    except FileNotFoundError:
        raise InputError(f"{'file' if what == 'table file' else what} not found", file=source) from None
    except OSError as e:
        raise InputError(f"cannot read the {what} ({e.strerror or e})", file=source) from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError(f"not a file: this is a directory, not a {what}", file=source)
    if not stat.S_ISREG(st.st_mode):
        raise InputError("not a regular file (a device, pipe or socket); give a CSV file or a workbook",
                         file=source)
    if max_bytes is None:
        max_bytes = defaults.max_input_bytes()
    if st.st_size > max_bytes:
        raise InputError(f"the {what} is {st.st_size / 2**20:,.1f} MiB, over the {max_bytes / 2**20:,.0f} MiB "
                         "heatloom reads; check that this is the right file", file=source)
    try:
        with open(source, "rb") as f:
            data = f.read(max_bytes + 1)
    except OSError as e:
        raise InputError(f"cannot read the {what} ({e.strerror or e})", file=source) from None
    if len(data) > max_bytes:
        raise InputError(f"the {what} grew over the {max_bytes / 2**20:,.0f} MiB heatloom reads while it was read",
                         file=source)
    return data


def load_cells(path: str | os.PathLike, *, sheet: str | None = None) -> Cells:
    """Read the raw grid of a CSV file or a worksheet (no interpretation of headers or units).

    Parameters
    ----------
    path : str or path-like
        A text table (``.csv``, ``.txt``, ``.tsv``...) or an ``.xlsx``/``.xlsm`` workbook; the type
        is taken from the content (a zip archive is a workbook), not only from the suffix.
    sheet : str, optional
        Worksheet name (workbooks only); default the first worksheet.

    Raises
    ------
    InputError
        Missing file, a directory, unreadable or binary content, an old ``.xls`` file, an empty file,
        an unknown sheet (the message lists the sheets), a sheet given for a text file.
    """
    source = os.fspath(path)
    p = Path(source)
    data = read_input_bytes(source, what="table file")
    if not data.strip():
        raise InputError("the file is empty", file=source)
    suffix = p.suffix.lower()
    if data.startswith(b"PK\x03\x04") or suffix in _XLSX_SUFFIXES:
        return _load_workbook(data, source, sheet)
    if data.startswith(_OLE2) or suffix == ".xls":
        raise InputError("old binary Excel files (.xls) are not read; save the sheet as .xlsx or CSV",
                         file=source)
    if sheet is not None:
        raise InputError(f"a sheet ('{sheet}') was given but this is a text table, which has no sheets",
                         file=source)
    return _load_text(data, source)
