"""Thermal properties of products: food properties from composition, and the tabulated interface for solvers.

Modules: ``composition`` (mass fractions), ``choi_okos`` (component properties against temperature),
``mixing`` (mixture rules and the conductivity-model registry), ``porosity`` (air in a food: density and
Maxwell–Eucken conductivity), ``freezing`` (initial freezing point,
bound water, ice-fraction registry), ``food`` (properties of a food, its property table), ``table``
(the PropertyTable every solver uses).
"""

from procplan.properties.choi_okos import (
    CHOI_OKOS,
    COMPONENTS,
    conductivity_choi_okos,
    density_choi_okos,
    specific_heat_choi_okos,
)
from procplan.properties.composition import COMPONENT_NAMES, Composition
from procplan.properties.food import (
    REFERENCE_C,
    FoodProperties,
    fixed_property_table,
    food_properties,
    property_table,
)
from procplan.properties.freezing import (
    FREEZING_POINT_MODELS,
    ICE_MODELS,
    LATENT_HEAT_WATER_J_KG,
    bound_water_schwartzberg,
    ice_fraction,
    initial_freezing_point_C,
)
from procplan.properties.mixing import CONDUCTIVITY_MODELS, conductivity_mixture
from procplan.properties.porosity import (
    OVERRUN_RANGE_PERCENT,
    POROSITY_RANGE,
    conductivity_maxwell_eucken_porous,
    density_porous,
    porosity_from_overrun,
)
from procplan.properties.table import MODEL_RANGE_C, PropertyTable

__all__ = [
    "CHOI_OKOS",
    "COMPONENTS",
    "COMPONENT_NAMES",
    "CONDUCTIVITY_MODELS",
    "FREEZING_POINT_MODELS",
    "ICE_MODELS",
    "LATENT_HEAT_WATER_J_KG",
    "MODEL_RANGE_C",
    "OVERRUN_RANGE_PERCENT",
    "POROSITY_RANGE",
    "REFERENCE_C",
    "Composition",
    "FoodProperties",
    "PropertyTable",
    "bound_water_schwartzberg",
    "conductivity_choi_okos",
    "conductivity_maxwell_eucken_porous",
    "conductivity_mixture",
    "density_choi_okos",
    "density_porous",
    "fixed_property_table",
    "food_properties",
    "ice_fraction",
    "initial_freezing_point_C",
    "porosity_from_overrun",
    "property_table",
    "specific_heat_choi_okos",
]
