"""Reading the costs file into :class:`heatloom.model.CostSettings`.

Accepted forms (chosen by the file suffix; an unknown suffix is tried as JSON, then YAML):

* JSON (``.json``) or YAML (``.yaml``, ``.yml``), one mapping::

      {"currency": "USD", "annualised": false,
       "exchanger": {"fixed": 8000, "per_area": 500, "exponent": 0.75},
       "heater": {"fixed": 8000, "per_area": 600, "exponent": 0.75},
       "interest_rate": 0.1, "years": 10, "hours_per_year": 8000}

* an Excel workbook (``.xlsx``, ``.xlsm``): a sheet named ``costs`` (else the first) holding
  ``key | value`` rows, nested keys written with a dot (``exchanger.per_area``); an optional header
  row ``key | value`` and empty rows are skipped.

Rules: ``exchanger`` (with ``per_area`` and ``exponent``; ``fixed`` is 0 when left out) and
``annualised`` are required, because guessing either could misprice a design several-fold.
``heater`` and ``cooler`` default to the exchanger law.  ``annualised: true`` means the laws already
give money per year; ``false`` means they give installed capital, annualised with ``interest_rate``
(a fraction, 0.1 for 10 %) and ``years``, which are then required.  ``currency`` (a label, nothing is
converted) and ``hours_per_year`` default to :mod:`heatloom.defaults`.  Every problem is an
:class:`~heatloom.errors.InputError` naming the file and the key (in its ``column`` field, e.g.
``exchanger.per_area``), and for workbooks the row.

The optional ``retrofit`` section prices the changes of ``heatloom retrofit``
(:class:`heatloom.model.RetrofitCosts`), as installed capital [money] whatever ``annualised``
says; every key is optional (defaults in :mod:`heatloom.defaults`, illustrative)::

      "retrofit": {"new_exchanger": {"fixed": 15000, "per_area": 1000, "exponent": 0.8},
                   "added_area": {"fixed": 5000, "per_area": 1000, "exponent": 0.8},
                   "repipe": 8000, "resequence": 8000}

In a workbook its keys are written ``retrofit.repipe`` and ``retrofit.added_area.per_area``.  The section
is checked by :func:`costs_from_mapping` and read by :func:`retrofit_costs_from_mapping`.

Cost figures are screening estimates; designs must be checked by qualified, licensed engineers.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Mapping
from pathlib import Path

from .. import defaults
from ..errors import InputError
from ..model.costs import CostLaw, CostSettings
from .cells import read_input_bytes

__all__ = ["TOP_KEYS", "LAW_KEYS", "RETROFIT_KEYS", "read_costs", "costs_from_mapping", "read_retrofit_costs",
           "retrofit_costs_from_mapping"]

TOP_KEYS = ("currency", "annualised", "exchanger", "heater", "cooler", "interest_rate", "years",
            "hours_per_year", "retrofit")
"""Keys allowed at the top of a costs file."""

RETROFIT_KEYS = ("new_exchanger", "added_area", "repipe", "resequence")
"""Keys allowed in the optional ``retrofit`` section: two cost laws and two fixed costs [money]."""

LAW_KEYS = ("fixed", "per_area", "exponent")
"""Keys allowed in a cost law (``exchanger``, ``heater``, ``cooler``)."""

_LAWS = ("exchanger", "heater", "cooler")
_NUMBERS = ("interest_rate", "years", "hours_per_year")


def _error(message: str, source, key: str | None, rows: Mapping[str, int] | None) -> InputError:
    row = None if rows is None or key is None else rows.get(key)
    return InputError(message, file=None if source is None else str(source), row=row, column=key)


def _number(value, key: str, source, rows) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        hint = ""
        if isinstance(value, str):
            hint = " (write numbers without quotes; in YAML write exponents with a dot, e.g. 1.0e+4)"
        raise _error(f"'{key}' must be a number, got {value!r}{hint}", source, key, rows)
    x = float(value)
    if math.isnan(x) or math.isinf(x):
        raise _error(f"'{key}' must be a finite number, got {value!r}", source, key, rows)
    if x < 0:
        raise _error(f"'{key}' must be >= 0, got {x:g}", source, key, rows)
    return x


def _unknown(keys, allowed, where: str, source, rows) -> None:
    extra = [k for k in keys if k not in allowed]
    if extra:
        key = f"{where}.{extra[0]}" if where else str(extra[0])
        place = f" in '{where}'" if where else ""
        raise _error(f"unknown key '{extra[0]}'{place}; allowed keys: {', '.join(allowed)}", source, key, rows)


def _law(value, key: str, source, rows) -> CostLaw:
    if not isinstance(value, Mapping):
        raise _error(f"'{key}' must be a mapping with keys {', '.join(LAW_KEYS)}, got {value!r}",
                     source, key, rows)
    _unknown(value, LAW_KEYS, key, source, rows)
    for k in ("per_area", "exponent"):
        if k not in value or value[k] is None:
            raise _error(f"'{key}' needs '{k}' (the law is fixed + per_area·A^exponent, A in m²)",
                         source, f"{key}.{k}", rows)
    nums = {k: _number(value[k], f"{key}.{k}", source, rows) for k in LAW_KEYS
            if k in value and not (k == "fixed" and value[k] is None)}
    try:
        return CostLaw(nums.get("fixed", 0.0), nums["per_area"], nums["exponent"])
    except InputError as e:
        sub = f"{key}.{e.column}" if e.column else key
        raise _error(e.message, source, sub, rows) from None


def costs_from_mapping(mapping, *, source: str | os.PathLike | None = None,
                       rows: Mapping[str, int] | None = None) -> CostSettings:
    """Check a parsed costs mapping and build :class:`~heatloom.model.CostSettings`.

    Parameters
    ----------
    mapping : Mapping
        The parsed file (see the module docstring for the keys).
    source : str or path, optional
        The file name, for messages.
    rows : mapping of str to int, optional
        Spreadsheet row of each dotted key, for messages.

    Returns
    -------
    CostSettings

    Examples
    --------
    >>> s = costs_from_mapping({"annualised": True, "exchanger": {"per_area": 1000, "exponent": 0.6}})
    >>> s.exchanger, s.heater == s.exchanger
    (CostLaw(fixed=0.0, per_area=1000.0, exponent=0.6), True)
    """
    if not isinstance(mapping, Mapping):
        raise _error(f"the costs file must hold one mapping of keys ({', '.join(TOP_KEYS)}), "
                     f"got {type(mapping).__name__}", source, None, rows)
    _unknown(mapping, TOP_KEYS, "", source, rows)
    for key in ("exchanger", "annualised"):
        if key not in mapping or mapping[key] is None:
            raise _error(f"'{key}' is required" + (
                " (true if the cost laws already give money per year, false if they give installed capital)"
                if key == "annualised" else " (the cost law fixed + per_area·A^exponent, A in m²)"),
                source, key, rows)
    if mapping.get("retrofit") is not None:
        retrofit_costs_from_mapping(mapping, source=source, rows=rows)      # checked here, read when needed
    kwargs: dict = {}
    annualised = mapping["annualised"]
    if not isinstance(annualised, bool):
        raise _error(f"'annualised' must be true or false, got {annualised!r}", source, "annualised", rows)
    kwargs["annualised"] = annualised
    if mapping.get("currency") is not None:
        cur = mapping["currency"]
        if not isinstance(cur, str) or not cur.strip():
            raise _error(f"'currency' must be a non-empty text label, got {cur!r}", source, "currency", rows)
        kwargs["currency"] = cur
    for key in _LAWS:
        if mapping.get(key) is not None:
            kwargs[key] = _law(mapping[key], key, source, rows)
    for key in _NUMBERS:
        if mapping.get(key) is not None:
            kwargs[key] = _number(mapping[key], key, source, rows)
    if not annualised:
        for key in ("interest_rate", "years"):
            if key not in kwargs:
                raise _error(f"'{key}' is required when 'annualised' is false (the laws give installed "
                             "capital, annualised with interest_rate and years)", source, key, rows)
    else:
        kwargs.setdefault("interest_rate", None)
        kwargs.setdefault("years", None)
    if "hours_per_year" in kwargs:
        kwargs["hours_source"] = "costs file"
    if "currency" in kwargs:
        kwargs["currency_source"] = "costs file"
    kwargs.setdefault("hours_per_year", defaults.HOURS_PER_YEAR)
    try:
        return CostSettings(**kwargs)
    except InputError as e:
        raise _error(e.message, source, e.column, rows) from None


def _parse_json(text: str, source):
    try:
        return json.loads(text)
    except json.JSONDecodeError as e:
        raise InputError(f"not valid JSON: {e.msg} at line {e.lineno}, column {e.colno}", file=str(source)) from None


def _parse_yaml(text: str, source):
    import yaml

    try:
        return yaml.safe_load(text)
    except yaml.YAMLError as e:
        where = ""
        mark = getattr(e, "problem_mark", None)
        if mark is not None:
            where = f" at line {mark.line + 1}, column {mark.column + 1}"
        raise InputError(f"not valid YAML{where}: {getattr(e, 'problem', None) or e}", file=str(source)) from None


def _xlsx_value(v):
    if isinstance(v, str):
        t = v.strip()
        low = t.lower()
        if low in ("true", "yes"):
            return True
        if low in ("false", "no"):
            return False
        if t == "":
            return None
        try:
            return float(t)
        except ValueError:
            return t
    return v


def _parse_xlsx(path: Path):
    try:
        import openpyxl
    except ImportError:                          # pragma: no cover - openpyxl is a dependency
        raise InputError("reading .xlsx files needs openpyxl", file=str(path)) from None
    try:
        wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
    except Exception as e:                       # openpyxl raises several unrelated types
        raise InputError(f"not a readable Excel workbook: {e}", file=str(path)) from None
    try:
        names = {n.lower(): n for n in wb.sheetnames}
        ws = wb[names["costs"]] if "costs" in names else wb.worksheets[0]
        out: dict = {}
        rows: dict[str, int] = {}
        for i, row in enumerate(ws.iter_rows(values_only=True), start=1):
            cells = list(row[:2]) + [None] * (2 - len(row[:2]))
            key, value = cells
            if key is None or (isinstance(key, str) and not key.strip()):
                if value is not None:
                    raise InputError(f"a value ({value!r}) with no key", file=str(path), row=i, column="key")
                continue
            key = str(key).strip()
            if not rows and not out and key.lower() == "key":      # optional header row
                continue
            if key in rows:
                raise InputError(f"key '{key}' given twice (first in row {rows[key]})", file=str(path), row=i,
                                 column=key)
            rows[key] = i
            parts = key.split(".")
            if len(parts) == 3 and parts[0] == "retrofit" and all(parts):
                section = out.setdefault("retrofit", {})
                if not isinstance(section, dict) or not isinstance(section.setdefault(parts[1], {}), dict):
                    raise InputError(f"'{parts[0]}.{parts[1]}' is given both as a value and as a law",
                                     file=str(path), row=i, column=key)
                section[parts[1]][parts[2]] = _xlsx_value(value)
                rows.setdefault("retrofit", i)
                rows.setdefault(f"retrofit.{parts[1]}", i)
                continue
            if len(parts) > 2 or not all(parts):
                raise InputError(f"key '{key}' is not of the form name or law.name", file=str(path), row=i,
                                 column=key)
            val = _xlsx_value(value)
            if len(parts) == 1:
                if isinstance(out.get(key), dict):
                    raise InputError(f"'{key}' is given both as a law and as a value", file=str(path), row=i,
                                     column=key)
                out[key] = val
            else:
                law = out.setdefault(parts[0], {})
                if not isinstance(law, dict):
                    raise InputError(f"'{parts[0]}' is given both as a value and as a law", file=str(path),
                                     row=i, column=key)
                law[parts[1]] = val
                rows.setdefault(parts[0], i)
        return out, rows
    finally:
        wb.close()


def read_costs(path: str | os.PathLike) -> CostSettings:
    """Read a costs file (JSON, YAML or a key/value workbook) into CostSettings.

    Parameters
    ----------
    path : str or path-like
        The file; the suffix picks the format (``.json``, ``.yaml``/``.yml``, ``.xlsx``/``.xlsm``).

    Returns
    -------
    CostSettings

    Raises
    ------
    InputError
        For a missing or unreadable file, a file that is not JSON/YAML, unknown keys (the message lists
        the allowed ones), wrong types, negative, infinite or NaN numbers, an exponent outside
        (0, 1.5], or ``annualised: false`` without ``interest_rate`` and ``years``.
    """
    p = Path(path)
    parsed, rows = _parse_file(p)
    return costs_from_mapping(parsed, source=p, rows=rows)


def _parse_file(p: Path):
    """The parsed mapping of a costs file and, for workbooks, the row of each key."""
    raw = read_input_bytes(p, what="costs file")
    suffix = p.suffix.lower()
    rows = None
    if suffix in (".xlsx", ".xlsm"):
        parsed, rows = _parse_xlsx(p)
    else:
        try:
            text = raw.decode("utf-8-sig")
        except UnicodeDecodeError:
            raise InputError("not a text file in UTF-8: a costs file must be JSON or YAML", file=str(p)) from None
        if suffix == ".json":
            parsed = _parse_json(text, p)
        elif suffix in (".yaml", ".yml"):
            parsed = _parse_yaml(text, p)
        else:
            try:
                parsed = _parse_json(text, p)
            except InputError:
                try:
                    parsed = _parse_yaml(text, p)
                except InputError:
                    raise InputError("neither JSON nor YAML (use .json, .yaml or .xlsx)", file=str(p)) from None
                if not isinstance(parsed, Mapping):
                    raise InputError("neither JSON nor YAML holding a mapping of cost keys", file=str(p)) from None
    return parsed, rows


def retrofit_costs_from_mapping(mapping, *, source: str | os.PathLike | None = None,
                                rows: Mapping[str, int] | None = None):
    """The retrofit cost laws of a parsed costs mapping (its ``retrofit`` section; defaults when absent).

    Parameters
    ----------
    mapping : Mapping
        The whole parsed costs file (see the module docstring).
    source : str or path, optional
    rows : mapping of str to int, optional

    Returns
    -------
    heatloom.model.RetrofitCosts

    Examples
    --------
    >>> c = retrofit_costs_from_mapping({"retrofit": {"repipe": 12000,
    ...                                  "added_area": {"fixed": 3000, "per_area": 900, "exponent": 0.7}}})
    >>> c.repipe, c.added_area.per_area, c.resequence
    (12000.0, 900.0, 8000.0)
    """
    from ..model.costs import RetrofitCosts

    section = mapping.get("retrofit") if isinstance(mapping, Mapping) else None
    if section is None:
        return RetrofitCosts()
    if not isinstance(section, Mapping):
        raise _error(f"'retrofit' must be a mapping with keys {', '.join(RETROFIT_KEYS)}, got {section!r}",
                     source, "retrofit", rows)
    _unknown(section, RETROFIT_KEYS, "retrofit", source, rows)
    kwargs = {}
    for key in ("new_exchanger", "added_area"):
        if section.get(key) is not None:
            kwargs[key] = _law(section[key], f"retrofit.{key}", source, rows)
    for key in ("repipe", "resequence"):
        if section.get(key) is not None:
            kwargs[key] = _number(section[key], f"retrofit.{key}", source, rows)
    return RetrofitCosts(**kwargs)


def read_retrofit_costs(path: str | os.PathLike):
    """Read the ``retrofit`` section of a costs file (defaults when it has none); the rest is checked too.

    Returns
    -------
    heatloom.model.RetrofitCosts

    Raises
    ------
    InputError
        As :func:`read_costs`, and for unknown keys or bad values in the ``retrofit`` section.
    """
    p = Path(path)
    parsed, rows = _parse_file(p)
    costs_from_mapping(parsed, source=p, rows=rows)
    return retrofit_costs_from_mapping(parsed, source=p, rows=rows)
