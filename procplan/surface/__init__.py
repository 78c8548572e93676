"""Surface heat transfer: media, correlations, the surface coefficient, radiation and packaging, moisture,
typical ranges, machines and their settings.

The names most code needs are re-exported here from :mod:`procplan.surface.coefficient`.
"""

from procplan.surface.coefficient import (
    CORRELATIONS,
    EQUIPMENT_KINDS,
    TYPICAL_H_RANGES_W_M2K,
    Evaporation,
    PackagingLayer,
    SurfaceResult,
    TypicalRange,
    air_gap,
    evaporation_flux_kg_m2s,
    h_effective,
    h_radiation_linearised,
    nusselt_by_name,
    packaging_from_dicts,
    packaging_to_dicts,
    surface_coefficient,
    typical_range_warning,
    weight_loss_percent,
)

__all__ = [
    "CORRELATIONS",
    "EQUIPMENT_KINDS",
    "TYPICAL_H_RANGES_W_M2K",
    "Evaporation",
    "PackagingLayer",
    "SurfaceResult",
    "TypicalRange",
    "air_gap",
    "evaporation_flux_kg_m2s",
    "h_effective",
    "h_radiation_linearised",
    "nusselt_by_name",
    "packaging_from_dicts",
    "packaging_to_dicts",
    "surface_coefficient",
    "typical_range_warning",
    "weight_loss_percent",
]
