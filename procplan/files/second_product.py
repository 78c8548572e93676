"""The plan's ``[load.second_product]`` table: a library product loaded with the batch, to and from SI.

Fields: ``product`` (a library product name), ``pieces`` (0 to 10 000 000), ``initial_temperature_C`` (its
temperature at loading, inside the product's range) and the optional ``target_core_C`` (the core temperature
it should reach; the run reports when it does and warns when it does not), inside the same range.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from procplan.errors import Collector, InvalidInputError
from procplan.files.fields import (
    T_HI,
    T_LO,
    check_keys,
    file_number,
    optional,
    product_range_C,
    stated_temperature,
)
from procplan.model import SecondProduct

SECOND_PRODUCT_KEYS = ("product", "pieces", "initial_temperature_C", "target_core_C")
PREFIX = "load.second_product."


def _in_range(c: Collector, product, ref: str, key: str, value: float | None) -> bool:
    """True when ``value`` (None: not given) lies in the temperatures ``product`` accepts; else adds the error."""
    if product is None or value is None:
        return True
    lo, hi, _ = product_range_C(product)
    if lo <= value <= hi:
        return True
    c.add(InvalidInputError(PREFIX + key, value, f"[{lo:g}, {hi:g}] °C for {ref}"))
    return False


def second_product_from_dict(c: Collector, raw: Any, library) -> SecondProduct | None:
    """``[load.second_product]``: a library product, its piece count, its temperature at loading and an
    optional core target (None without the table or with an error, which ``c`` collects)."""
    if raw is None:
        return None
    p = PREFIX
    if not isinstance(raw, Mapping):
        c.add(InvalidInputError("load.second_product", raw, 'a table such as { product = "x", pieces = 20 }'))
        return None
    check_keys(c, raw, SECOND_PRODUCT_KEYS, p)
    ref, pieces = raw.get("product"), raw.get("pieces")
    product = None
    if library is None:
        c.add(InvalidInputError(p + "product", ref, "a library product name, with a library loaded"))
    elif not isinstance(ref, str) or ref not in library.products:
        c.add(InvalidInputError(p + "product", ref, "one of " + ", ".join(sorted(library.products))))
    else:
        product = library.products[ref]
    if isinstance(pieces, bool) or not isinstance(pieces, int) or not (0 <= pieces <= 10_000_000):
        c.add(InvalidInputError(p + "pieces", pieces, "a whole number from 0 to 10 000 000"))
        pieces = None
    if "initial_temperature_C" not in raw:
        c.add(InvalidInputError(p + "initial_temperature_C", None, f"[{T_LO:g}, {T_HI:g}] °C"))
    t0 = optional(c, raw, "initial_temperature_C", p, stated_temperature)
    target = optional(c, raw, "target_core_C", p, stated_temperature)
    ok = _in_range(c, product, ref, "initial_temperature_C", t0)
    ok = _in_range(c, product, ref, "target_core_C", target) and ok
    if not ok or product is None or pieces is None or t0 is None:
        return None
    if "target_core_C" in raw and raw["target_core_C"] is not None and target is None:
        return None
    return SecondProduct(product, pieces, t0, ref, target)


def second_product_to_dict(sp: SecondProduct) -> dict[str, Any]:
    """The table in file units (the inverse of :func:`second_product_from_dict`)."""
    d: dict[str, Any] = {
        "product": sp.library_name,
        "pieces": sp.pieces,
        "initial_temperature_C": file_number(sp.initial_temperature_C),
    }
    if sp.target_core_C is not None:
        d["target_core_C"] = file_number(sp.target_core_C)
    return d
