"""procplan: thermal-process planning for food and pharma plants.

The public API is re-exported here; nothing under ``procplan`` except ``procplan.ui`` imports streamlit.
"""

from procplan.caution import CAUTION
from procplan.errors import InvalidInputError, ValidationErrors
from procplan.geometry import Geometry, geometry_from_mm
from procplan.properties.table import PropertyTable

__version__ = "0.1.0"

__all__ = ["CAUTION", "Geometry", "InvalidInputError", "PropertyTable", "ValidationErrors", "geometry_from_mm", "__version__"]
