"""procplan: thermal-process planning for food and pharma plants.

The public API is re-exported here. The names are loaded on first use (PEP 562), so ``import procplan`` and
the command line's start stay light: numpy, scipy and pandas load only when a computation needs them.
Nothing under ``procplan`` except ``procplan.ui`` imports streamlit.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

from procplan._version import __version__
from procplan.caution import CAUTION
from procplan.errors import InvalidInputError, ValidationErrors

#: Public name -> the module that defines it.
_LAZY: dict[str, str] = {
    "Library": "procplan.files.library",
    "load_library": "procplan.files.library",
    "save_product": "procplan.files.library",
    "Plan": "procplan.model",
    "load_plan": "procplan.files.plan",
    "plan_from_dict": "procplan.files.plan",
    "plan_to_dict": "procplan.files.plan",
    "save_plan": "procplan.files.plan",
    "Geometry": "procplan.geometry",
    "geometry_from_mm": "procplan.geometry",
    "Composition": "procplan.properties",
    "food_properties": "procplan.properties",
    "property_table": "procplan.properties",
    "PropertyTable": "procplan.properties.table",
    "PlanResult": "procplan.run.engine",
    "run_plan": "procplan.run.engine",
}

__all__ = [
    "CAUTION",
    "Composition",
    "Geometry",
    "InvalidInputError",
    "Library",
    "Plan",
    "PlanResult",
    "PropertyTable",
    "ValidationErrors",
    "__version__",
    "food_properties",
    "geometry_from_mm",
    "load_library",
    "load_plan",
    "plan_from_dict",
    "plan_to_dict",
    "property_table",
    "run_plan",
    "save_plan",
    "save_product",
]

if TYPE_CHECKING:  # pragma: no cover - for type checkers and editors only
    from procplan.files.library import Library, load_library, save_product
    from procplan.files.plan import load_plan, plan_from_dict, plan_to_dict, save_plan
    from procplan.geometry import Geometry, geometry_from_mm
    from procplan.model import Plan
    from procplan.properties import Composition, food_properties, property_table
    from procplan.properties.table import PropertyTable
    from procplan.run.engine import PlanResult, run_plan


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'procplan' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return __all__
