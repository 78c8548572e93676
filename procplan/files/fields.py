"""Helpers every file parser shares: unknown keys, optional fields, temperatures, and lossless file numbers.

Files speak the user's units (mm, min, °C); the records hold SI. The writers here find the file value that
converts back to the exact SI value, so a saved file never changes what it holds.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.model import MEDIUM_RANGE_C
from procplan.properties.table import MODEL_RANGE_C

T_LO, T_HI = MODEL_RANGE_C
#: Widest range [°C] a product's fixed properties may state they cover (valid_min_C…valid_max_C).
STATED_RANGE_LIMITS_C = (-200.0, 1000.0)


def check_keys(c: Collector, data: Mapping[str, Any], allowed: Iterable[str], prefix: str = "") -> None:
    """Add one problem to ``c`` for every key of ``data`` not in ``allowed``, named ``prefix + key``.

    >>> c = Collector("x")
    >>> check_keys(c, {"name": "a", "colour": "red"}, ("name",), "product.")
    >>> str(c.problems[0])
    "product.colour = 'red': allowed one of the keys name (unknown key)"
    """
    allowed = tuple(allowed)
    for k in data:
        if k not in allowed:
            c.add(
                InvalidInputError(
                    f"{prefix}{k}", data[k], "one of the keys " + ", ".join(allowed), "unknown key"
                )
            )


def optional(
    c: Collector, data: Mapping[str, Any], key: str, prefix: str, fn: Callable, *args, default=None, **kw
):
    """``fn(prefix + key, data[key], *args, **kw)``, or ``default`` when the key is missing, None or invalid
    (an invalid value is added to ``c``)."""
    if key not in data or data[key] is None:
        return default
    with c.catch():
        return fn(f"{prefix}{key}", data[key], *args, **kw)
    return default


def product_temperature(field_name: str, v: Any) -> float:
    """A product temperature [°C] inside the property model's range."""
    return validate.number(field_name, v, minimum=T_LO, maximum=T_HI, unit="°C")


def stated_temperature(field_name: str, v: Any) -> float:
    """A temperature [°C] a product may take with properties stated for it (``STATED_RANGE_LIMITS_C``); the
    plan then checks it against the product's own range (see :func:`product_range_C`)."""
    lo, hi = STATED_RANGE_LIMITS_C
    return validate.number(field_name, v, minimum=lo, maximum=hi, unit="°C")


def product_range_C(product) -> tuple[float, float, str | None]:
    """(low, high, why) of the temperatures ``product`` accepts [°C]: its fixed properties' stated range,
    else the composition model's (why None)."""
    fp = product.fixed_properties
    if fp is None or (fp.valid_min_C is None and fp.valid_max_C is None):
        return T_LO, T_HI, None
    lo, hi = fp.temperature_range_C
    return lo, hi, "the range product.fixed_properties states (valid_min_C…valid_max_C)"


def check_product_temperature(product, field_name: str, v: float) -> float:
    """``v`` [°C] inside the temperatures ``product`` accepts, else InvalidInputError naming the range.

    >>> from procplan.geometry import Geometry
    >>> from procplan.model import FixedProperties, Product
    >>> glass = Product("vial", Geometry("slab", thickness_m=0.001), fixed_properties=FixedProperties(
    ...     1.1, 2230.0, 750.0, valid_max_C=400.0))
    >>> check_product_temperature(glass, "start.temperature_C", 320.0)
    320.0
    >>> check_product_temperature(glass, "start.temperature_C", 450.0)
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: start.temperature_C = 450.0: allowed [-40, 400] °C (the range product.fixed_properties states (valid_min_C…valid_max_C))
    """
    lo, hi, why = product_range_C(product)
    if lo <= v <= hi:
        return v
    try:
        return validate.number(field_name, v, minimum=lo, maximum=hi, unit="°C")
    except InvalidInputError as exc:
        raise InvalidInputError(field_name, v, exc.allowed, why) from None


def medium_temperature(field_name: str, v: Any) -> float:
    """A medium temperature [°C] inside ``MEDIUM_RANGE_C``."""
    return validate.number(field_name, v, minimum=MEDIUM_RANGE_C[0], maximum=MEDIUM_RANGE_C[1], unit="°C")


def freeze(d: Mapping[str, Any] | None) -> tuple[tuple[str, Any], ...]:
    """A mapping as a sorted tuple of pairs (hashable, for frozen records)."""
    return tuple(sorted((d or {}).items()))


def file_number(x: float) -> float | int:
    """Round-trip-safe number for TOML: integers stay integers, floats keep their full repr."""
    return int(x) if float(x).is_integer() and abs(x) < 2**53 else float(x)


def _inverse(value_si: float, to_si) -> float | int:
    """The file value x with ``to_si(x) == value_si`` exactly (searching the neighbouring floats), so that
    unit conversion at the edge never changes a saved value."""
    x = file_number(value_si / to_si(1.0)) if to_si(1.0) != 0 else value_si
    if to_si(x) == value_si:
        return x
    x = float(x)
    for direction in (math.inf, -math.inf):
        y = x
        for _ in range(8):
            y = math.nextafter(y, direction)
            if to_si(y) == value_si:
                return y
    return x


def file_mm(value_m: float) -> float | int:
    """A length [m] as the file's millimetres, converting back exactly."""
    return _inverse(value_m, lambda x: x / 1000.0)


def file_minutes(value_s: float) -> float | int:
    """A time [s] as the file's minutes, converting back exactly."""
    return _inverse(value_s, lambda x: x * 60.0)
