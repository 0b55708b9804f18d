"""Checks of the numbers the retrofit functions take (ΔTmin, minimum approach, budget and other limits).

One place for the rule every such number follows in :mod:`heatloom.retrofit`: a finite number >= 0 in its
stated unit, refused with an :class:`~heatloom.errors.InputError` that names it otherwise.
"""

from __future__ import annotations

import math

from ..errors import InputError

__all__ = ["non_negative"]


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
