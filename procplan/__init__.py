"""procplan: thermal-process planning for food and pharma plants.

The public API is re-exported here; nothing under ``procplan`` except ``procplan.ui`` imports streamlit.
"""

from procplan._version import __version__
from procplan.caution import CAUTION
from procplan.errors import InvalidInputError, ValidationErrors
from procplan.files.library import Library, load_library, save_product  # noqa: E402
from procplan.files.plan import load_plan, plan_from_dict, plan_to_dict, save_plan  # noqa: E402
from procplan.geometry import Geometry, geometry_from_mm
from procplan.model import Plan  # noqa: E402
from procplan.properties import Composition, food_properties, property_table  # noqa: E402
from procplan.properties.table import PropertyTable
from procplan.run.engine import PlanResult, run_plan  # noqa: E402

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
