"""Number formats by unit: the digits every table of the report and the workbook shows.

A column header carries its unit in brackets (``duty [kW]``); :func:`unit_of` reads it and
:func:`column_units` reads those of a whole frame (telling counts from ratios among dimensionless
columns).  :func:`number_formats` gives the Python and Excel formats of a unit, :func:`format_number`
formats one value with them.  The HTML report (:mod:`heatloom.io.html`) and the workbook
(:mod:`heatloom.io.workbook`) both use these, so they show the same digits.
"""

from __future__ import annotations

import math
import re

import numpy as np

__all__ = ["unit_of", "column_units", "number_formats", "format_number", "is_number"]

_UNIT = re.compile(r"\[([^\[\]]*)\]\s*$")


def is_number(value) -> bool:
    """Whether a value is a number to format (an int or float, numpy's too; not a bool).

    Examples
    --------
    >>> is_number(2.5), is_number(np.int64(3)), is_number(True), is_number("2")
    (True, True, False, False)
    """
    return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, (bool, np.bool_))


def unit_of(header: str) -> str | None:
    """The unit written in brackets at the end of a column header, or None.

    Examples
    --------
    >>> unit_of("duty [kW]"), unit_of("name")
    ('kW', None)
    """
    m = _UNIT.search(str(header))
    return m.group(1).strip() if m else None


def column_units(frame) -> list[str | None]:
    """The unit of each column of a frame, ``count`` for a dimensionless column of whole numbers.

    Examples
    --------
    >>> import pandas as pd
    >>> column_units(pd.DataFrame({"units [-]": [3.0, None], "share [-]": [0.5, 1.0], "name": ["a", "b"]}))
    ['count', '-', None]
    """
    out = []
    for c in frame.columns:
        u = unit_of(c)
        if u == "-":
            vals = [v for v in frame[c].tolist() if is_number(v) and math.isfinite(float(v))]
            if vals and all(float(v).is_integer() for v in vals) and "fraction" not in str(c):
                u = "count"
        out.append(u)
    return out


def number_formats(unit: str | None, value=None) -> tuple[str, str]:
    """Python format and Excel number format of a value of this unit.

    Temperatures to 0.1 °C, temperature differences to 0.01 K, duties and areas to 0.1, heat capacity
    flow rates to 0.01 kW/K, film coefficients and dimensionless ratios to 0.001, annual money and money
    once (a currency code such as ``USD``) to whole units, prices per kW·year and years to 0.01; whole
    numbers (counts) as integers.

    Parameters
    ----------
    unit : str or None
        As written in a header (``°C``, ``kW``, ``USD/yr``...).
    value : optional
        The value, to tell counts (integers) from ratios.

    Examples
    --------
    >>> number_formats("kW"), number_formats("-", 3)
    (('{:,.1f}', '#,##0.0'), ('{:d}', '0'))
    """
    u = (unit or "").strip()
    if isinstance(value, (bool, np.bool_)):
        return "{}", "General"
    if isinstance(value, (int, np.integer)):
        return "{:d}", "0"
    if u == "count":
        return "{:,.0f}", "0"
    if u == "°C":
        return "{:,.1f}", "#,##0.0"
    if u == "K":
        return "{:,.2f}", "0.00"
    if u in ("kW", "m²", "m2", "kW·yr"):
        return "{:,.1f}", "#,##0.0"
    if u == "kW/K":
        return "{:,.2f}", "#,##0.00"
    if u.startswith("kW/m") or u.startswith("kW/(m"):
        return "{:.3f}", "0.000"
    if u in ("m²K", "m²·K"):
        return "{:,.2f}", "#,##0.00"
    if ("yr" in u or "year" in u) and "kW" in u:
        return "{:,.2f}", "#,##0.00"                      # a price per kW·year
    if u == "1/year":
        return "{:.4f}", "0.0000"
    if "/yr" in u or "/year" in u or "per year" in u:
        return "{:,.0f}", "#,##0"                          # annual money
    if u in ("h/year", "years"):
        return "{:,.0f}", "#,##0"
    if u in ("yr", "year"):
        return "{:,.2f}", "#,##0.00"                       # a payback
    if u == "money" or re.fullmatch(r"[A-Z]{3}", u):
        return "{:,.0f}", "#,##0"                          # money once (an investment, a net present value)
    if u == "%":
        return "{:.2f}", "0.00"
    if u == "s":
        return "{:.2f}", "0.00"
    if u in ("-", ""):
        return "{:.3f}", "0.000"
    return "{:.4g}", "General"


def format_number(value, unit: str | None = None) -> str:
    """A value as the report and workbook show it (en dash for a missing one).

    Examples
    --------
    >>> format_number(772.50000001, "kW"), format_number(None, "kW"), format_number(12, "-")
    ('772.5', '–', '12')
    """
    if value is None:
        return "–"
    if isinstance(value, (float, np.floating)) and not math.isfinite(float(value)):
        return "–"
    if is_number(value):
        fmt, _ = number_formats(unit, value)
        text = fmt.format(value.item() if hasattr(value, "item") else value)
        return "0" + text[2:] if text.startswith("-0") and float(text.replace(",", "")) == 0 else text
    return str(value)
