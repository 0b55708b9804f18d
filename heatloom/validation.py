"""Generic checks of numeric inputs, shared by every calculation module.

Each check either returns the value in its normal form (a float, a float array, a whole number, an enum
member) or raises :class:`heatloom.errors.InputError` with a message that names the quantity, the value
given and the allowed range or set.  Every check rejects NaN (comparisons are written so that NaN fails
them, ``not (x > 0)``).  The checks know nothing of heat transfer: the quantity's name and unit come
from the caller, e.g. ``finite_float(x, "hot inlet temperature", "°C")``.

This module belongs to the core layer: it imports only :mod:`heatloom.errors` (and numpy).
"""

from __future__ import annotations

import enum
import math

import numpy as np

from .errors import InputError

__all__ = [
    "as_written",
    "as_float_array",
    "scalar_or_array",
    "require",
    "finite_float",
    "positive_float",
    "whole_number",
    "enum_member",
    "round_up_count",
    "non_negative",
    "check_dt_min",
]


# --------------------------------------------------------------------------------------------------
# numbers and arrays of numbers


def as_written(value) -> str:
    """A cell or label as the user wrote it: text stripped, whole numbers without a decimal point (a table
    reader gives ``2.0`` for a cell holding 2).

    Examples
    --------
    >>> as_written(" H1 "), as_written(120.0), as_written(0.25), as_written(1e20)
    ('H1', '120', '0.25', '1e+20')
    """
    if isinstance(value, float):
        return str(int(value)) if value.is_integer() and abs(value) < 1e15 else repr(value)
    return str(value).strip()


def as_float_array(value, what: str) -> np.ndarray:
    """A number or an array of numbers as a float array (0-d for a number).

    Parameters
    ----------
    value : float or array-like
        The input [any unit].
    what : str
        Its name, for the message.

    Returns
    -------
    ndarray

    Raises
    ------
    InputError
        If ``value`` is not numeric.

    Examples
    --------
    >>> as_float_array([1, 2], "duty").tolist()
    [1.0, 2.0]
    >>> as_float_array("abc", "duty")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: duty must be a number or an array of numbers, got 'abc'
    """
    try:
        return np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number or an array of numbers, got {value!r}") from None


def scalar_or_array(value):
    """A result as a float when it is one number, else as a float array (the inverse of
    :func:`as_float_array` for results).

    Parameters
    ----------
    value : float or array-like
        [any unit]

    Returns
    -------
    float or ndarray

    Examples
    --------
    >>> scalar_or_array(np.asarray(2.5))
    2.5
    >>> scalar_or_array([1, 2]).tolist()
    [1.0, 2.0]
    """
    a = np.asarray(value, dtype=float)
    return float(a) if a.ndim == 0 else a


def require(ok, values, message: str) -> None:
    """Raise unless ``ok`` holds everywhere; the message names the first value where it does not.

    Parameters
    ----------
    ok : bool or array of bool
        The condition, element by element (write it so that NaN fails it).
    values : float or array
        The values the condition is about, broadcastable to ``ok`` [any unit].
    message : str
        Text with one ``{}``, filled with the first bad value (format ``g``).

    Raises
    ------
    InputError
        ``message`` with the first value where ``ok`` is false.

    Examples
    --------
    >>> x = np.array([1.0, -2.0, np.nan])
    >>> require(x > 0, x, "CP must be > 0 kW/K, got {}")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: CP must be > 0 kW/K, got -2
    """
    ok = np.asarray(ok)
    if not ok.all():
        bad = np.broadcast_to(np.asarray(values, dtype=float), ok.shape)[~ok].flat[0]
        raise InputError(message.format(f"{bad:g}"))


def finite_float(value, what: str, unit: str) -> float:
    """One finite number as a float.

    Parameters
    ----------
    value : float
        The input [``unit``].
    what : str
        Its name, for the message.
    unit : str
        Its unit, for the message, e.g. "°C".

    Returns
    -------
    float

    Raises
    ------
    InputError
        If ``value`` is not a number, or is NaN or infinite.

    Examples
    --------
    >>> finite_float("20.5", "hot inlet temperature", "°C")
    20.5
    >>> finite_float(float("nan"), "hot inlet temperature", "°C")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: hot inlet temperature must be a finite number [°C], got nan
    """
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number [{unit}], got {value!r}") from None
    if not math.isfinite(v):
        raise InputError(f"{what} must be a finite number [{unit}], got {v!r}")
    return v


def positive_float(value, what: str, unit: str) -> float:
    """One finite number > 0 as a float (see :func:`finite_float`).

    Parameters
    ----------
    value : float
        The input [``unit``].
    what, unit : str
        Name and unit, for the message.

    Returns
    -------
    float

    Raises
    ------
    InputError
        If ``value`` is not a finite number > 0.

    Examples
    --------
    >>> positive_float(0.5, "overall coefficient U", "kW/(m²·K)")
    0.5
    >>> positive_float(0, "duty", "kW")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: duty must be > 0 kW, got 0
    """
    v = finite_float(value, what, unit)
    if not v > 0:
        raise InputError(f"{what} must be > 0 {unit}, got {v:g}")
    return v


# --------------------------------------------------------------------------------------------------
# counts and choices


def whole_number(value, what: str, minimum: int = 1) -> int:
    """A whole number (an ``int``, not a ``bool`` or a float) of at least ``minimum``.

    Parameters
    ----------
    value : int
        The input [-].
    what : str
        Its name, for the message.
    minimum : int, optional
        Smallest allowed value [-].

    Returns
    -------
    int

    Raises
    ------
    InputError
        If ``value`` is not an integer or is below ``minimum``.

    Examples
    --------
    >>> whole_number(3, "number of shells")
    3
    >>> whole_number(1.5, "number of shells")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: number of shells must be a whole number >= 1, got 1.5
    """
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < minimum:
        raise InputError(f"{what} must be a whole number >= {minimum}, got {value!r}")
    return int(value)


def enum_member(enum_type: type[enum.Enum], value, what: str):
    """The member of an :class:`enum.Enum` given as itself or as its value.

    Parameters
    ----------
    enum_type : type of Enum
        The allowed set.
    value : Enum or its value
        The input.
    what : str
        Its name, for the message.

    Returns
    -------
    enum_type member

    Raises
    ------
    InputError
        If ``value`` is not in the set; the message lists the allowed values.

    Examples
    --------
    >>> class Side(enum.Enum):
    ...     HOT = "hot"
    ...     COLD = "cold"
    >>> enum_member(Side, "hot", "side")
    <Side.HOT: 'hot'>
    >>> enum_member(Side, "warm", "side")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: unknown side 'warm'; allowed: hot, cold
    """
    try:
        return enum_type(value)
    except ValueError:
        allowed = ", ".join(str(m.value) for m in enum_type)
        raise InputError(f"unknown {what} {value!r}; allowed: {allowed}") from None


def round_up_count(value: float) -> int:
    """Whole pieces needed for a real-valued count: ⌈x⌉, forgiving rounding noise.

    .. math:: n = \\lceil x - 10^{-9}\\max(1, |x|) \\rceil

    so that a count computed as 2.0000000000001 (rounding of a whole 2) gives 2, not 3.

    Parameters
    ----------
    value : float
        The real-valued count [-].

    Returns
    -------
    int

    Examples
    --------
    >>> round_up_count(1.2), round_up_count(2 + 1e-12), round_up_count(2.001)
    (2, 2, 3)
    """
    return int(math.ceil(value - 1e-9 * max(1.0, abs(value))))


def non_negative(value, what: str, unit: str, *, optional: bool = False) -> float | None:
    """``value`` as a finite float >= 0, or an InputError naming ``what`` and its unit.

    Parameters
    ----------
    value : object
        The number as given (a float, an int, a numeric string...) [unit].
    what : str
        Its name in the message, e.g. ``"ΔTmin"``.
    unit : str
        Its unit in the message, e.g. ``"K"``, ``"kW"``, ``"money"``.
    optional : bool, optional
        When true, None is allowed and returned as None (a limit that is not set).

    Returns
    -------
    float or None
        [unit]

    Raises
    ------
    InputError
        Not a number, not finite or negative (None too, unless ``optional``).

    Examples
    --------
    >>> non_negative("12.5", "ΔTmin", "K"), non_negative(None, "budget", "money", optional=True)
    (12.5, None)
    >>> non_negative(-1, "budget", "money")
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: budget must be a finite number >= 0 money, got -1
    """
    if value is None and optional:
        return None
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number [{unit}], got {value!r}") from None
    if not (x >= 0) or not math.isfinite(x):
        raise InputError(f"{what} must be a finite number >= 0 {unit}, got {value!r}")
    return x


def check_dt_min(value, what: str = "ΔTmin", *, positive: bool = False) -> float:
    """A minimum approach temperature as a float [K]: the one check of every ΔTmin heatloom takes.

    Parameters
    ----------
    value : object
        The ΔTmin as given [K].
    what : str, optional
        Its name in the message (``"ΔTmin"``, ``"lowest ΔTmin"``, ``"zone 'A': ΔTmin"``).
    positive : bool, optional
        Refuse 0 as well (area and cost targets, which are infinite at 0 K).

    Returns
    -------
    float
        [K]

    Raises
    ------
    InputError
        Not a number, not finite, negative (or 0 with ``positive``); the column is ``dtmin``.

    Examples
    --------
    >>> check_dt_min("7.5"), check_dt_min(0)
    (7.5, 0.0)
    >>> check_dt_min(0, "lowest ΔTmin", positive=True)
    Traceback (most recent call last):
    ...
    heatloom.errors.InputError: column 'dtmin': lowest ΔTmin must be a finite number > 0 K (area and cost targets are infinite at 0 K), got 0
    """
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number [K], got {value!r}", column="dtmin") from None
    if positive and not (x > 0 and math.isfinite(x)):
        raise InputError(f"{what} must be a finite number > 0 K (area and cost targets are infinite at 0 K), got "
                         f"{value!r}", column="dtmin")
    if not (x >= 0) or not math.isfinite(x):
        raise InputError(f"{what} must be a finite number >= 0 K, got {value!r}", column="dtmin")
    return x
