"""The validated inputs of one surface-coefficient evaluation and the convection terms a medium model returns.

:func:`procplan.surface.coefficient.surface_coefficient` checks its arguments once into a
:class:`SurfaceConditions`, hands it to the model of the medium (air, liquid immersion, condensing steam or a
user-entered h) and gets back :class:`ConvectionTerms`, to which it adds packaging in series.
"""

from __future__ import annotations

from dataclasses import dataclass

from procplan.geometry import Geometry


@dataclass(frozen=True)
class SurfaceConditions:
    """Validated inputs of one surface-coefficient evaluation.

    Attributes
    ----------
    kind : equipment kind (None for a user-entered h without a machine)
    medium : "air", "water", "brine" or "steam"
    geometry : the product's Geometry
    medium_C : air, water or brine temperature, or the saturated-steam temperature [°C]
    surface_C : product (outer) surface temperature [°C]
    surroundings_C : wall temperature for radiation [°C]
    emissivity : emissivity of the radiative exchange, 0–1 (0: no radiation)
    air_speed_m_s, liquid_speed_m_s : speed of the air or the liquid past the product [m/s] (None: still)
    relative_humidity : of the air, 0–1 (None: dry-air properties)
    pressure_Pa : total pressure of the air [Pa]
    nacl_mass_fraction : NaCl mass fraction of a brine medium
    forced_correlation, natural_correlation : names in CORRELATIONS replacing the shape's default (or None)
    h_W_m2K : a user-entered convection coefficient [W/m²K], not yet checked (None: use the correlations)
    """

    kind: str | None
    medium: str
    geometry: Geometry
    medium_C: float
    surface_C: float
    surroundings_C: float
    emissivity: float
    air_speed_m_s: float | None
    liquid_speed_m_s: float | None
    relative_humidity: float | None
    pressure_Pa: float
    nacl_mass_fraction: float
    forced_correlation: str | None
    natural_correlation: str | None
    h_W_m2K: float | None


@dataclass(frozen=True)
class ConvectionTerms:
    """The coefficient a medium model found, before packaging.

    Attributes
    ----------
    h_conv_W_m2K : convection (or condensation, or user-entered) coefficient [W/m²K]
    h_rad_W_m2K : linearised radiation coefficient [W/m²K], 0 in liquids and steam
    correlation : name(s) of the correlation(s) used (or "user-entered")
    validity : validity range(s) of the correlation(s)
    film_C : temperature at which fluid properties were evaluated [°C]
    re, pr, ra, nu : dimensionless groups used (None where not used); nu refers to ``length_m``
    length_m : characteristic length of ``nu`` [m]
    """

    h_conv_W_m2K: float
    h_rad_W_m2K: float
    correlation: str
    validity: str
    film_C: float
    re: float | None = None
    pr: float | None = None
    ra: float | None = None
    nu: float | None = None
    length_m: float | None = None
