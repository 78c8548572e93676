"""Small checks shared by every model: numbers, ranges, arrays. Each raises InvalidInputError naming the field."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from procplan.errors import InvalidInputError


def _describe(
    minimum: float | None, maximum: float | None, min_inclusive: bool, max_inclusive: bool, unit: str
) -> str:
    u = f" {unit}" if unit else ""
    if minimum is not None and maximum is not None:
        lo = "[" if min_inclusive else "("
        hi = "]" if max_inclusive else ")"
        return f"{lo}{minimum:g}, {maximum:g}{hi}{u}"
    if minimum is not None:
        return f"{'>=' if min_inclusive else '>'} {minimum:g}{u}"
    if maximum is not None:
        return f"{'<=' if max_inclusive else '<'} {maximum:g}{u}"
    return f"a finite number{u}"


def number(
    field: str,
    value: Any,
    *,
    minimum: float | None = None,
    maximum: float | None = None,
    min_inclusive: bool = True,
    max_inclusive: bool = True,
    unit: str = "",
) -> float:
    """Return ``value`` as a finite float inside the given bounds, or raise InvalidInputError.

    >>> number("h_W_m2K", 25, minimum=0, min_inclusive=False, unit="W/m²K")
    25.0
    >>> number("h_W_m2K", 0, minimum=0, min_inclusive=False, unit="W/m²K")
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: h_W_m2K = 0: allowed > 0 W/m²K
    """
    allowed = _describe(minimum, maximum, min_inclusive, max_inclusive, unit)
    if isinstance(value, bool) or value is None:
        raise InvalidInputError(field, value, allowed, "not a number")
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InvalidInputError(field, value, allowed, "not a number") from None
    if not math.isfinite(x):
        raise InvalidInputError(field, value, allowed, "not finite")
    if minimum is not None and (x < minimum or (x == minimum and not min_inclusive)):
        raise InvalidInputError(field, value, allowed)
    if maximum is not None and (x > maximum or (x == maximum and not max_inclusive)):
        raise InvalidInputError(field, value, allowed)
    return x


def positive(field: str, value: Any, unit: str = "") -> float:
    """A finite number > 0."""
    return number(field, value, minimum=0.0, min_inclusive=False, unit=unit)


def fraction(field: str, value: Any) -> float:
    """A number in [0, 1]."""
    return number(field, value, minimum=0.0, maximum=1.0)


def array(
    field: str,
    values: Any,
    *,
    minimum: float | None = None,
    maximum: float | None = None,
    unit: str = "",
) -> np.ndarray:
    """Return ``values`` as a finite float array with every element inside the bounds, or raise."""
    allowed = _describe(minimum, maximum, True, True, unit)
    try:
        a = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise InvalidInputError(field, values, allowed, "not numeric") from None
    if not np.all(np.isfinite(a)):
        raise InvalidInputError(field, values, allowed, "contains NaN or infinity")
    if minimum is not None and np.any(a < minimum):
        raise InvalidInputError(field, float(a.min()), allowed)
    if maximum is not None and np.any(a > maximum):
        raise InvalidInputError(field, float(a.max()), allowed)
    return a


def increasing(field: str, values: Any, unit: str = "") -> np.ndarray:
    """A finite 1-D array, strictly increasing."""
    a = array(field, values, unit=unit)
    if a.ndim != 1 or a.size < 1:
        raise InvalidInputError(field, values, "a non-empty list of numbers")
    if a.size > 1 and np.any(np.diff(a) <= 0):
        i = int(np.argmax(np.diff(a) <= 0))
        raise InvalidInputError(
            field, values, "strictly increasing values", f"entry {i + 1} is not below entry {i + 2}"
        )
    return a


def choice(field: str, value: Any, options: Any) -> str:
    """One of the keys of a registry (or the items of a list)."""
    opts = list(options)
    if value not in opts:
        raise InvalidInputError(field, value, "one of " + ", ".join(repr(o) for o in opts))
    return value
