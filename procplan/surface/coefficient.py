"""Surface heat-transfer coefficient of a product in a machine: convection, radiation, packaging.

:func:`surface_coefficient` picks the published correlation for the medium, the mode and the shape (from the
one registry :data:`procplan.surface.correlations.CORRELATIONS`), evaluates the fluid at the film temperature,
combines forced and free convection (Incropera eq. 9.64, n = 3), adds linearised radiation in parallel (air
only) and packaging layers in series:

    1/h_eff = 1/(h_conv + h_rad) + Σ t_i/k_i

When the walls are at another temperature than the air, the product exchanges heat through h_conv + h_rad with
the sink temperature (h_conv T_air + h_rad T_sur)/(h_conv + h_rad), reported as ``SurfaceResult.sink_C``.

One model per medium, in the registry :data:`SURFACE_MODELS`: air (forced, free and mixed convection with
radiation, :mod:`procplan.surface.convection`), liquid immersion in water or brine (the same module), condensing
steam (:mod:`procplan.surface.condensation`) and a user-entered h. The correlations live in
:mod:`procplan.surface.correlations`, radiation and packaging in :mod:`procplan.surface.layers`, typical ranges
and machine kinds in :mod:`procplan.surface.ranges`, moisture loss in :mod:`procplan.surface.moisture`; this
module re-exports the names most code needs.

References
----------
Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Wiley, 2011, chapters
1, 3, 7, 9 and 10.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from typing import Any

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.surface.condensation import condensation_h_W_m2K, condensation_on_surface
from procplan.surface.conditions import ConvectionTerms, SurfaceConditions
from procplan.surface.convection import convection_in_air, convection_in_liquid
from procplan.surface.correlations import CORRELATIONS, nusselt_by_name
from procplan.surface.layers import (
    AIR_GAP_CONDUCTION_LIMIT_M,
    PackagingLayer,
    air_gap,
    as_layers,
    h_effective,
    h_radiation_linearised,
    packaging_from_dicts,
    packaging_resistance_m2K_W,
    packaging_to_dicts,
    sink_temperature_C,
)
from procplan.surface.media import AIR_RANGE_C, air_properties
from procplan.surface.moisture import Evaporation, evaporation_flux_kg_m2s, weight_loss_percent
from procplan.surface.ranges import (
    EQUIPMENT_KINDS,
    TYPICAL_H_RANGES_W_M2K,
    TypicalRange,
    equipment_kind,
    typical_range_warning,
)

__all__ = [
    "CORRELATIONS",
    "EQUIPMENT_KINDS",
    "SURFACE_MODELS",
    "TYPICAL_H_RANGES_W_M2K",
    "Evaporation",
    "PackagingLayer",
    "SurfaceResult",
    "TypicalRange",
    "air_gap",
    "condensation_h_W_m2K",
    "evaporation_flux_kg_m2s",
    "h_effective",
    "h_radiation_linearised",
    "sink_temperature_C",
    "nusselt_by_name",
    "packaging_from_dicts",
    "packaging_to_dicts",
    "surface_coefficient",
    "typical_range_warning",
    "weight_loss_percent",
]

#: Upper bounds accepted for speeds [m/s] (beyond them the input is surely a unit mistake).
MAX_AIR_SPEED_M_S = 40.0
MAX_LIQUID_SPEED_M_S = 5.0
#: Emissivity used when none is given with the correlations (moist food surfaces, about 0.9; common practice).
DEFAULT_EMISSIVITY = 0.9


@dataclass(frozen=True)
class SurfaceResult:
    """A surface heat-transfer coefficient and how it was obtained.

    Attributes
    ----------
    h_conv_W_m2K : convection (or condensation, or user-entered) coefficient [W/m²K]
    h_rad_W_m2K : linearised radiation coefficient [W/m²K], 0 in liquids and steam
    packaging_resistance_m2K_W : series resistance of packaging layers and air gaps [m²K/W]
    h_eff_W_m2K : overall coefficient, 1/h_eff = 1/(h_conv + h_rad) + R_pack [W/m²K]
    correlation : name(s) of the correlation(s) used, keys of CORRELATIONS (or "user-entered")
    kind : equipment kind (None for a user-entered h without a machine)
    medium : "air", "water", "brine" or "steam"
    film_C : temperature at which fluid properties were evaluated [°C]
    re, pr, ra, nu : dimensionless groups used (None where not used); nu refers to ``length_m``
    length_m : characteristic length of ``nu`` [m]
    validity : validity range(s) of the correlation(s)
    typical_range : typical convection coefficient of this kind and its source (None without a kind)
    warnings : every caveat found (outside a validity range, outside the typical range, ...)
    medium_C : the fluid temperature the coefficient was evaluated with [°C]
    surroundings_C : the wall temperature of the radiative exchange [°C] (the fluid's when not given)
    sink_C : temperature the surface exchanges heat with through h_conv + h_rad [°C], the fluid's unless the
        walls are at another temperature (:func:`procplan.surface.layers.sink_temperature_C`)
    """

    h_conv_W_m2K: float
    h_rad_W_m2K: float
    packaging_resistance_m2K_W: float
    h_eff_W_m2K: float
    correlation: str
    kind: str | None
    medium: str
    film_C: float
    re: float | None
    pr: float | None
    ra: float | None
    nu: float | None
    length_m: float | None
    validity: str
    typical_range: TypicalRange | None
    warnings: tuple[str, ...] = field(default_factory=tuple)
    medium_C: float | None = None
    surroundings_C: float | None = None
    sink_C: float | None = None

    @property
    def radiates_to_other_walls(self) -> bool:
        """True when the walls are at another temperature than the fluid and radiation is modelled."""
        return self.sink_C is not None and self.medium_C is not None and self.sink_C != self.medium_C


# --- the models, one per medium ------------------------------------------------------------------------------
def user_entered_h(c: SurfaceConditions, warnings: list[str]) -> ConvectionTerms:
    """A convection coefficient entered by the user; radiation only when an emissivity was given."""
    h_conv = validate.number(
        "h_W_m2K", c.h_W_m2K, minimum=0.0, min_inclusive=False, maximum=1e5, unit="W/m²K"
    )
    h_rad = float(h_radiation_linearised(c.emissivity, c.surface_C, c.surroundings_C))
    msg = None if c.kind is None else typical_range_warning(h_conv, c.kind, "user-entered h")
    if msg:
        warnings.append(msg)
    return ConvectionTerms(h_conv, h_rad, "user-entered", "as entered", 0.5 * (c.surface_C + c.medium_C))


#: The one registry of surface models: a medium (or "user-entered" when h is given) → its model.
SURFACE_MODELS: dict[str, Callable[[SurfaceConditions, list[str]], ConvectionTerms]] = {
    "air": convection_in_air,
    "water": convection_in_liquid,
    "brine": convection_in_liquid,
    "steam": condensation_on_surface,
    "user-entered": user_entered_h,
}


# --- inputs and packaging ------------------------------------------------------------------------------------
def _kind_and_medium(equipment_type_or_model: Any) -> tuple[str | None, str]:
    if equipment_type_or_model is None:
        return None, "air"
    if isinstance(equipment_type_or_model, str):
        return equipment_type_or_model, equipment_kind(equipment_type_or_model).medium
    kind = getattr(equipment_type_or_model, "kind", None)
    medium = getattr(equipment_type_or_model, "medium", None)
    if not isinstance(kind, str):
        raise InvalidInputError(
            "equipment",
            equipment_type_or_model,
            "an equipment kind (" + ", ".join(EQUIPMENT_KINDS) + ") or an Equipment",
        )
    equipment_kind(kind)
    return kind, medium or EQUIPMENT_KINDS[kind].medium


def _check_correlation_overrides(forced: str | None, natural: str | None) -> None:
    for name in (forced, natural):
        if name is not None:
            validate.choice("correlation", name, CORRELATIONS)
    if forced is not None and CORRELATIONS[forced].mode not in ("forced", "condensation"):
        raise InvalidInputError(
            "forced_correlation", forced, "a forced-convection or condensation entry of CORRELATIONS"
        )
    if natural is not None and CORRELATIONS[natural].mode != "natural":
        raise InvalidInputError("natural_correlation", natural, "a natural-convection entry of CORRELATIONS")


def _conditions(equipment_type_or_model: Any, geometry: Geometry, **args: Any) -> SurfaceConditions:
    """Check every argument of :func:`surface_coefficient` (in its order) into a SurfaceConditions."""
    kind, medium = _kind_and_medium(equipment_type_or_model)
    if not isinstance(geometry, Geometry):
        raise InvalidInputError("geometry", geometry, "a procplan.geometry.Geometry")
    t_inf = validate.number("medium_C", args["medium_C"], minimum=-100.0, maximum=400.0, unit="°C")
    t_s = validate.number("surface_C", args["surface_C"], minimum=-100.0, maximum=400.0, unit="°C")
    air, liquid, eps, h = (args[k] for k in ("air_speed_m_s", "liquid_speed_m_s", "emissivity", "h_W_m2K"))
    if air is not None:
        air = validate.number("air_speed_m_s", air, minimum=0.0, maximum=MAX_AIR_SPEED_M_S, unit="m/s")
    if liquid is not None:
        liquid = validate.number(
            "liquid_speed_m_s", liquid, minimum=0.0, maximum=MAX_LIQUID_SPEED_M_S, unit="m/s"
        )
    if eps is None:
        eps = 0.0 if h is not None else DEFAULT_EMISSIVITY
    else:
        eps = validate.number("emissivity", eps, minimum=0.0, maximum=1.0)
    if kind is None and h is None:
        raise InvalidInputError(
            "equipment",
            None,
            "a kind (" + ", ".join(EQUIPMENT_KINDS) + ") or an Equipment",
            "needed unless h_W_m2K is given",
        )
    t_sur = args["surroundings_C"]
    t_sur = (
        t_inf
        if t_sur is None
        else validate.number("surroundings_C", t_sur, minimum=-100.0, maximum=500.0, unit="°C")
    )
    rh = args["relative_humidity"]
    rh = None if rh is None else validate.fraction("relative_humidity", rh)
    return SurfaceConditions(
        kind=kind,
        medium=medium,
        geometry=geometry,
        medium_C=t_inf,
        surface_C=t_s,
        surroundings_C=t_sur,
        emissivity=eps,
        air_speed_m_s=air,
        liquid_speed_m_s=liquid,
        relative_humidity=rh,
        pressure_Pa=args["pressure_Pa"],
        nacl_mass_fraction=args["nacl_mass_fraction"],
        forced_correlation=args["forced_correlation"],
        natural_correlation=args["natural_correlation"],
        h_W_m2K=h,
    )


def _packaging_resistance(layers: tuple[PackagingLayer, ...], film_C: float, warnings: list[str]) -> float:
    """Series resistance of the layers [m²K/W], air gaps at the (clipped) film temperature."""
    k_air = air_properties(min(max(film_C, AIR_RANGE_C[0]), AIR_RANGE_C[1])).k_W_mK
    for layer in layers:
        if layer.is_air_gap and layer.thickness_m > AIR_GAP_CONDUCTION_LIMIT_M:
            warnings.append(
                f"air gap '{layer.name}' of {layer.thickness_m * 1000:g} mm may carry convection; the still-air model underestimates transfer through it"
            )
    return packaging_resistance_m2K_W(layers, k_air)


def _float_or_none(x: float | None) -> float | None:
    return None if x is None else float(x)


# --- entry point --------------------------------------------------------------------------------------------
def surface_coefficient(
    equipment_type_or_model: Any,
    geometry: Geometry,
    *,
    medium_C: float,
    surface_C: float,
    air_speed_m_s: float | None = None,
    liquid_speed_m_s: float | None = None,
    emissivity: float | None = None,
    surroundings_C: float | None = None,
    packaging: Iterable[Any] = (),
    h_W_m2K: float | None = None,
    relative_humidity: float | None = None,
    pressure_Pa: float = 101325.0,
    nacl_mass_fraction: float = 0.2,
    forced_correlation: str | None = None,
    natural_correlation: str | None = None,
) -> SurfaceResult:
    """Surface heat-transfer coefficient of a product in a machine of a given kind (or an Equipment).

    Air, water and brine: forced convection (flat plate eqs. 7.30/7.38 for slabs and bricks, Churchill–Bernstein
    eq. 7.54 for cylinders, Whitaker eq. 7.56 for spheres) combined with free convection (horizontal plates eqs.
    9.30–9.32, Churchill–Chu eqs. 9.26/9.34, Churchill 1983 for spheres) as Nu³ = Nu_F³ + Nu_N³ (eq. 9.64);
    with zero speed, free convection alone. Steam: Nusselt laminar film condensation (eqs. 10.26, 10.41) with
    the medium at its saturation temperature. Radiation, h_r = ε σ (T_s + T_sur)(T_s² + T_sur²), in parallel in air
    only. Packaging layers in series. Properties at the film temperature (T_s + T∞)/2, except Whitaker's
    (free stream, with μ_s). The model is chosen from :data:`SURFACE_MODELS` by the medium ("user-entered"
    when ``h_W_m2K`` is given).

    Parameters
    ----------
    equipment_type_or_model : a key of EQUIPMENT_KINDS, or an object with ``kind`` and ``medium`` (Equipment), or
        None together with ``h_W_m2K`` (no machine: no typical-range check)
    geometry : the product's Geometry
    medium_C : air, water or brine temperature, or the saturated-steam temperature [°C]
    surface_C : product (outer) surface temperature [°C]
    air_speed_m_s : air speed approaching the product [m/s], 0–40 (air media); None or 0: still air
    liquid_speed_m_s : liquid speed past the product [m/s], 0–5 (water, brine)
    emissivity : emissivity of the radiative exchange, 0–1 (air media); None: 0.9 with correlations (moist food
        surfaces, common practice), no radiation with a user-entered h
    surroundings_C : wall temperature for radiation [°C]; default the air temperature. The result's ``sink_C``
        is the temperature the product then exchanges heat with (h_conv T_air + h_rad T_sur)/(h_conv + h_rad)
    packaging : PackagingLayer objects or (name, thickness_m, k_W_mK) tuples, k None for a still-air gap
    h_W_m2K : a user-entered convection coefficient [W/m²K] that replaces the correlations; radiation is added
        only when ``emissivity`` is given; checked against the kind's typical range
    relative_humidity : of the air, 0–1; None for dry-air properties
    pressure_Pa : total pressure [Pa] (air media)
    nacl_mass_fraction : NaCl mass fraction of a brine medium
    forced_correlation, natural_correlation : names in CORRELATIONS replacing the shape's default

    Returns
    -------
    SurfaceResult

    Examples
    --------
    >>> from procplan.geometry import Geometry
    >>> r = surface_coefficient("blast-chiller", Geometry("cylinder", diameter_m=0.08), medium_C=-2.0, surface_C=20.0, air_speed_m_s=3.0)
    >>> 15 < r.h_conv_W_m2K < 40, r.correlation.split(" ")[0]
    (True, 'cylinder-churchill-bernstein')

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Wiley, 2011: eqs.
    7.30, 7.38, 7.54, 7.56 (forced), 9.26–9.34 (free), 9.64 (combined), 10.26 and 10.41 (condensation), 1.9
    (radiation), 3.19 (series resistances). Each correlation's own reference is in
    :data:`procplan.surface.correlations.CORRELATIONS`.
    """
    warnings: list[str] = []
    c = _conditions(
        equipment_type_or_model,
        geometry,
        medium_C=medium_C,
        surface_C=surface_C,
        air_speed_m_s=air_speed_m_s,
        liquid_speed_m_s=liquid_speed_m_s,
        emissivity=emissivity,
        surroundings_C=surroundings_C,
        h_W_m2K=h_W_m2K,
        relative_humidity=relative_humidity,
        pressure_Pa=pressure_Pa,
        nacl_mass_fraction=nacl_mass_fraction,
        forced_correlation=forced_correlation,
        natural_correlation=natural_correlation,
    )
    layers = as_layers(packaging)
    _check_correlation_overrides(forced_correlation, natural_correlation)
    if c.medium == "air" and c.liquid_speed_m_s:
        warnings.append("liquid_speed_m_s is ignored in an air medium")
    if c.medium in ("water", "brine") and c.air_speed_m_s:
        warnings.append("air_speed_m_s is ignored in a liquid medium")
    terms = SURFACE_MODELS["user-entered" if c.h_W_m2K is not None else c.medium](c, warnings)
    r_pack = _packaging_resistance(layers, terms.film_C, warnings)
    h_eff = float(h_effective(terms.h_conv_W_m2K, terms.h_rad_W_m2K, r_pack))
    if not (math.isfinite(h_eff) and h_eff > 0):
        raise InvalidInputError("surface", h_eff, "a finite positive h", "the inputs give no heat transfer")
    return SurfaceResult(
        h_conv_W_m2K=float(terms.h_conv_W_m2K),
        h_rad_W_m2K=float(terms.h_rad_W_m2K),
        packaging_resistance_m2K_W=r_pack,
        h_eff_W_m2K=h_eff,
        correlation=terms.correlation,
        kind=c.kind,
        medium=c.medium,
        film_C=terms.film_C,
        re=_float_or_none(terms.re),
        pr=_float_or_none(terms.pr),
        ra=_float_or_none(terms.ra),
        nu=_float_or_none(terms.nu),
        length_m=terms.length_m,
        validity=terms.validity,
        typical_range=None if c.kind is None else TYPICAL_H_RANGES_W_M2K[c.kind],
        warnings=tuple(warnings),
        medium_C=c.medium_C,
        surroundings_C=c.surroundings_C,
        sink_C=sink_temperature_C(c.medium_C, c.surroundings_C, terms.h_conv_W_m2K, terms.h_rad_W_m2K),
    )
