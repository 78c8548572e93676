"""Surface heat-transfer coefficient of a product in a machine: convection, radiation, packaging.

:func:`surface_coefficient` picks the published correlation for the medium, the mode and the shape (from the
one registry :data:`procplan.surface.correlations.CORRELATIONS`), evaluates the fluid at the film temperature,
combines forced and free convection (Incropera eq. 9.64, n = 3), adds linearised radiation in parallel (air
only) and packaging layers in series:

    1/h_eff = 1/(h_conv + h_rad) + Σ t_i/k_i

The correlations live in :mod:`procplan.surface.correlations`, radiation and packaging in
:mod:`procplan.surface.layers`, typical ranges and machine kinds in :mod:`procplan.surface.ranges`, moisture
loss in :mod:`procplan.surface.moisture`; this module re-exports them.

References
----------
Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Wiley, 2011, chapters
1, 3, 7, 9 and 10.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import asdict, dataclass, field
from typing import Any

from CoolProp.CoolProp import HAPropsSI

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.surface.correlations import (
    CORRELATIONS,
    DEFAULT_CORRELATION,
    Correlation,
    nusselt_by_name,
    nusselt_mixed_convection,
)
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
)
from procplan.surface.media import (
    AIR_RANGE_C,
    GRAVITY_M_S2,
    WATER_RANGE_C,
    FluidProperties,
    air_properties,
    brine_freezing_C,
    latent_heat_J_kg,
    medium_properties,
    saturated_liquid_water_properties,
    saturated_vapour_density_kg_m3,
)
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

#: Upper bounds accepted for speeds [m/s] (beyond them the input is surely a unit mistake).
MAX_AIR_SPEED_M_S = 40.0
MAX_LIQUID_SPEED_M_S = 5.0
#: Smallest temperature difference [K] used in buoyancy and condensation groups (their h diverge or vanish at 0).
MIN_DELTA_T_K = 0.1
MIN_CONDENSATION_DELTA_T_K = 0.5
#: Emissivity used when none is given with the correlations (moist food surfaces, about 0.9; common practice).
DEFAULT_EMISSIVITY = 0.9
#: Reynolds number of a condensate film above which the wave-free laminar Nusselt model no longer holds.
RE_FILM_LAMINAR_LIMIT = 30.0


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

    def to_dict(self) -> dict[str, Any]:
        """Plain data for JSON output."""
        d = asdict(self)
        d["warnings"] = list(self.warnings)
        return d


# --- helpers ------------------------------------------------------------------------------------------------
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


def _humid_rh_at(film_C: float, medium_C: float, relative_humidity: float, pressure_Pa: float) -> float:
    """Relative humidity at the film temperature for the humidity ratio of the free stream (capped at 1)."""
    w = HAPropsSI("W", "T", medium_C + 273.15, "P", pressure_Pa, "R", relative_humidity)
    w_sat = HAPropsSI("W", "T", film_C + 273.15, "P", pressure_Pa, "R", 1.0)
    if w >= w_sat:
        return 1.0
    return float(min(1.0, HAPropsSI("R", "T", film_C + 273.15, "P", pressure_Pa, "W", w)))


def _liquid(
    medium: str, temperature_C: float, nacl_mass_fraction: float, what: str, warnings: list[str]
) -> FluidProperties:
    """Liquid properties, with a temperature outside the medium's model range moved to its nearest end (warned)."""
    if medium == "water":
        lo, hi = WATER_RANGE_C
    else:
        lo, hi = math.ceil(brine_freezing_C(nacl_mass_fraction) * 10 + 1e-9) / 10, 40.0
    t = min(max(temperature_C, lo), hi)
    if t != temperature_C:
        warnings.append(
            f"{what} {temperature_C:.3g} °C is outside the {medium} property range {lo:g}–{hi:g} °C; evaluated at {t:g} °C"
        )
    return medium_properties(medium, t, nacl_mass_fraction=nacl_mass_fraction)


def _plate_A_over_P_m(geometry: Geometry) -> float:
    """Characteristic length of a horizontal face, L = A_s/P (Incropera eq. 9.29)."""
    if geometry.shape == "brick":
        a, b = geometry.length_m, geometry.width_m
    else:
        a = geometry.length_m or geometry.flow_length_m
        b = geometry.width_m or geometry.flow_length_m
    return a * b / (2.0 * (a + b))


def _check_groups(entry: Correlation, name: str, warnings: list[str], **groups: float | None) -> None:
    bad = entry.out_of_range(**{k: v for k, v in groups.items() if v is not None})
    if bad:
        warnings.append(f"{name}: {', '.join(bad)} (validity: {entry.validity}); result extrapolated")


def _natural_terms(
    shape: str,
    geometry: Geometry,
    hot_product: bool,
    ra_of,
    props: FluidProperties,
    override: str | None,
    warnings: list[str],
) -> tuple[float, float, float, str]:
    """Area-weighted free-convection h [W/m²K] of the exposed faces; returns (h, Ra, L, names)."""
    k = props.k_W_mK
    pr = props.pr
    if shape in ("cylinder", "finite-cylinder", "sphere"):
        name = override or DEFAULT_CORRELATION[("natural", shape)]
        L = geometry.diameter_m
        ra = ra_of(L)
        _check_groups(CORRELATIONS[name], name, warnings, ra=ra, pr=pr)
        return float(nusselt_by_name(name, ra=ra, pr=pr)) * k / L, ra, L, name
    if override is not None:
        L = (
            _plate_A_over_P_m(geometry)
            if override.startswith("horizontal")
            else (geometry.height_m or geometry.thickness_m)
        )
        ra = ra_of(L)
        _check_groups(CORRELATIONS[override], override, warnings, ra=ra, pr=pr)
        return float(nusselt_by_name(override, ra=ra, pr=pr)) * k / L, ra, L, override
    # Horizontal faces: the upper face of a hot product (lower face of a cold one) is the unstable case.
    L = _plate_A_over_P_m(geometry)
    ra = ra_of(L)
    up, down = (
        ("horizontal-plate-unstable", "horizontal-plate-stable")
        if hot_product
        else ("horizontal-plate-stable", "horizontal-plate-unstable")
    )
    h_top = float(nusselt_by_name(up, ra=ra)) * k / L
    h_bottom = float(nusselt_by_name(down, ra=ra)) * k / L
    _check_groups(CORRELATIONS[up], up, warnings, ra=ra)
    names = [up]
    if shape == "slab":
        if geometry.faces == 1:
            return h_top, ra, L, up
        names.append(down)
        return 0.5 * (h_top + h_bottom), ra, L, " + ".join(names)
    # brick: top, bottom and four vertical sides of height H
    _check_groups(CORRELATIONS[down], down, warnings, ra=ra)
    lw = geometry.length_m * geometry.width_m
    H = geometry.height_m
    sides = 2.0 * (geometry.length_m + geometry.width_m) * H
    h_side = float(nusselt_by_name("vertical-plate-churchill-chu", ra=ra_of(H), pr=pr)) * k / H
    h = (lw * (h_top + h_bottom) + sides * h_side) / (2.0 * lw + sides)
    return h, ra, L, f"{up} + {down} + vertical-plate-churchill-chu"


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
    (free stream, with μ_s).

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
    surroundings_C : wall temperature for radiation [°C]; default the air temperature
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
    """
    kind, medium = _kind_and_medium(equipment_type_or_model)
    if not isinstance(geometry, Geometry):
        raise InvalidInputError("geometry", geometry, "a procplan.geometry.Geometry")
    t_inf = validate.number("medium_C", medium_C, minimum=-100.0, maximum=300.0, unit="°C")
    t_s = validate.number("surface_C", surface_C, minimum=-100.0, maximum=300.0, unit="°C")
    warnings: list[str] = []
    if air_speed_m_s is not None:
        air_speed_m_s = validate.number(
            "air_speed_m_s", air_speed_m_s, minimum=0.0, maximum=MAX_AIR_SPEED_M_S, unit="m/s"
        )
    if liquid_speed_m_s is not None:
        liquid_speed_m_s = validate.number(
            "liquid_speed_m_s", liquid_speed_m_s, minimum=0.0, maximum=MAX_LIQUID_SPEED_M_S, unit="m/s"
        )
    if emissivity is None:
        eps = 0.0 if h_W_m2K is not None else DEFAULT_EMISSIVITY
    else:
        eps = validate.number("emissivity", emissivity, minimum=0.0, maximum=1.0)
    if kind is None and h_W_m2K is None:
        raise InvalidInputError(
            "equipment",
            None,
            "a kind (" + ", ".join(EQUIPMENT_KINDS) + ") or an Equipment",
            "needed unless h_W_m2K is given",
        )
    t_sur = (
        t_inf
        if surroundings_C is None
        else validate.number("surroundings_C", surroundings_C, minimum=-100.0, maximum=500.0, unit="°C")
    )
    rh = None if relative_humidity is None else validate.fraction("relative_humidity", relative_humidity)
    layers = as_layers(packaging)
    for name in (forced_correlation, natural_correlation):
        if name is not None:
            validate.choice("correlation", name, CORRELATIONS)
    if forced_correlation is not None and CORRELATIONS[forced_correlation].mode not in (
        "forced",
        "condensation",
    ):
        raise InvalidInputError(
            "forced_correlation",
            forced_correlation,
            "a forced-convection or condensation entry of CORRELATIONS",
        )
    if natural_correlation is not None and CORRELATIONS[natural_correlation].mode != "natural":
        raise InvalidInputError(
            "natural_correlation", natural_correlation, "a natural-convection entry of CORRELATIONS"
        )
    if medium == "air" and liquid_speed_m_s:
        warnings.append("liquid_speed_m_s is ignored in an air medium")
    if medium in ("water", "brine") and air_speed_m_s:
        warnings.append("air_speed_m_s is ignored in a liquid medium")

    film_C = 0.5 * (t_s + t_inf)
    air_film_C = min(max(film_C, AIR_RANGE_C[0]), AIR_RANGE_C[1])
    typical = None if kind is None else TYPICAL_H_RANGES_W_M2K[kind]
    re = pr = ra = nu = length = None

    if h_W_m2K is not None:
        h_conv = validate.number(
            "h_W_m2K", h_W_m2K, minimum=0.0, min_inclusive=False, maximum=1e5, unit="W/m²K"
        )
        h_rad = float(h_radiation_linearised(eps, t_s, t_sur))
        correlation, validity = "user-entered", "as entered"
        msg = None if kind is None else typical_range_warning(h_conv, kind, "user-entered h")
        if msg:
            warnings.append(msg)
    elif medium == "steam":
        h_conv, correlation, validity, nu, length, film_C = _condensation(
            geometry, t_inf, t_s, forced_correlation, warnings
        )
        air_film_C = min(max(film_C, AIR_RANGE_C[0]), AIR_RANGE_C[1])
        h_rad = 0.0
    else:
        speed = air_speed_m_s if medium == "air" else liquid_speed_m_s
        if medium == "air":
            try:
                rh_f = None if rh is None else _humid_rh_at(film_C, t_inf, rh, pressure_Pa)
            except ValueError as exc:
                raise InvalidInputError(
                    "relative_humidity",
                    rh,
                    f"a humid-air state HAPropsSI accepts at {t_inf:g} °C",
                    str(exc)[:120],
                ) from None
            props = air_properties(film_C, pressure_Pa, rh_f)
        else:
            validate.number(
                "medium_C",
                t_inf,
                minimum=WATER_RANGE_C[0] if medium == "water" else brine_freezing_C(nacl_mass_fraction),
                maximum=WATER_RANGE_C[1] if medium == "water" else 40.0,
                unit="°C",
            )
            props = _liquid(medium, film_C, nacl_mass_fraction, "film temperature", warnings)
        pr = props.pr
        hot_product = t_s > t_inf
        dT = max(abs(t_s - t_inf), MIN_DELTA_T_K)
        if medium == "air":
            drho_over_rho = props.beta_1_K * dT
        else:
            rho_inf = _liquid(medium, t_inf, nacl_mass_fraction, "medium", warnings).rho_kg_m3
            rho_s = _liquid(medium, t_s, nacl_mass_fraction, "surface", warnings).rho_kg_m3
            drho_over_rho = max(abs(rho_inf - rho_s), 1e-9) / props.rho_kg_m3
            if (rho_inf - rho_s) * (t_s - t_inf) < 0:
                warnings.append(
                    "the density difference has the opposite sign of the temperature difference (water near 4 °C): free-convection correlations are uncertain"
                )

        def ra_of(L: float) -> float:
            return GRAVITY_M_S2 * drho_over_rho * L**3 / (props.nu_m2_s * props.alpha_m2_s)

        h_nat, ra, L_nat, nat_name = _natural_terms(
            geometry.shape, geometry, hot_product, ra_of, props, natural_correlation, warnings
        )
        if speed:
            fname = forced_correlation or DEFAULT_CORRELATION[("forced", geometry.shape)]
            entry = CORRELATIONS[fname]
            if entry.mode != "forced":
                raise InvalidInputError(
                    "forced_correlation", fname, f"a forced-convection entry for a {medium} medium"
                )
            length = geometry.flow_length_m
            if "mu_ratio" in entry.inputs:  # Whitaker: free-stream properties and μ_s
                p_inf = (
                    air_properties(t_inf, pressure_Pa, rh)
                    if medium == "air"
                    else _liquid(medium, t_inf, nacl_mass_fraction, "medium", [])
                )
                mu_s = (
                    air_properties(t_s, pressure_Pa)
                    if medium == "air"
                    else _liquid(medium, t_s, nacl_mass_fraction, "surface", [])
                ).mu_Pa_s
                re = speed * length / p_inf.nu_m2_s
                pr = p_inf.pr
                mu_ratio = p_inf.mu_Pa_s / mu_s
                _check_groups(entry, fname, warnings, re=re, pr=pr, mu_ratio=mu_ratio)
                nu_f = float(nusselt_by_name(fname, re=re, pr=pr, mu_ratio=mu_ratio))
                k_f = p_inf.k_W_mK
            else:
                re = speed * length / props.nu_m2_s
                _check_groups(entry, fname, warnings, re=re, pr=pr, repr=re * pr)
                nu_f = float(nusselt_by_name(fname, re=re, pr=pr))
                k_f = props.k_W_mK
            if not (math.isfinite(nu_f) and nu_f >= 0):
                raise InvalidInputError(
                    "forced_correlation",
                    fname,
                    f"a correlation valid at Re = {re:.3g} ({entry.validity})",
                    "it gives no positive Nusselt number here",
                )
            h_forced = nu_f * k_f / length
            # Incropera eq. 9.64 on h (the same as on Nu for a common length), n = 3.
            h_conv = float(nusselt_mixed_convection(h_forced, h_nat))
            nu = h_conv * length / k_f
            correlation = f"{fname} + {nat_name} (combined, n = 3)"
            validity = f"{entry.validity}; free: " + "; ".join(
                CORRELATIONS[n].validity for n in nat_name.split(" + ")
            )
        else:
            h_conv = h_nat
            length = L_nat
            nu = h_conv * L_nat / props.k_W_mK
            correlation = nat_name
            validity = "; ".join(CORRELATIONS[n].validity for n in nat_name.split(" + "))
            re = None
        h_rad = float(h_radiation_linearised(eps, t_s, t_sur)) if medium == "air" else 0.0
        msg = typical_range_warning(h_conv, kind, "computed h_conv")
        if msg:
            warnings.append(msg)

    k_air = air_properties(air_film_C).k_W_mK
    for layer in layers:
        if layer.is_air_gap and layer.thickness_m > AIR_GAP_CONDUCTION_LIMIT_M:
            warnings.append(
                f"air gap '{layer.name}' of {layer.thickness_m * 1000:g} mm may carry convection; the still-air model underestimates transfer through it"
            )
    r_pack = packaging_resistance_m2K_W(layers, k_air)
    h_eff = float(h_effective(h_conv, h_rad, r_pack))
    if not (math.isfinite(h_eff) and h_eff > 0):
        raise InvalidInputError("surface", h_eff, "a finite positive h", "the inputs give no heat transfer")
    return SurfaceResult(
        h_conv_W_m2K=float(h_conv),
        h_rad_W_m2K=float(h_rad),
        packaging_resistance_m2K_W=r_pack,
        h_eff_W_m2K=h_eff,
        correlation=correlation,
        kind=kind,
        medium=medium,
        film_C=film_C,
        re=None if re is None else float(re),
        pr=None if pr is None else float(pr),
        ra=None if ra is None else float(ra),
        nu=None if nu is None else float(nu),
        length_m=length,
        validity=validity,
        typical_range=typical,
        warnings=tuple(warnings),
    )


def condensation_h_W_m2K(
    steam_C: float,
    surface_C: float,
    length_m: float,
    correlation: str = "condensation-vertical-plate-nusselt",
) -> tuple[float, float]:
    """Nusselt film-condensation coefficient [W/m²K] of pure saturated steam, and the film Reynolds number.

    h̄ = (k_l / L) C X^¼, X = g ρ_l (ρ_l − ρ_v) h'_fg L³/(μ_l k_l ΔT), h'_fg = h_fg (1 + 0.68 Ja),
    Re_δ = 4 h̄ L ΔT/(μ_l h'_fg) (Incropera 7th ed., eqs. 10.26, 10.9 and 10.33–10.35); liquid properties at the
    film temperature, ρ_v and h_fg at T_sat. ΔT below 0.5 K is raised to 0.5 K.

    >>> h, re_film = condensation_h_W_m2K(100.0, 95.0, 0.1)
    >>> 5000 < h < 20000, 30 < re_film < 1800
    (True, True)
    """
    t_sat = validate.number("steam_C", steam_C, minimum=1.0, maximum=200.0, unit="°C")
    dT = max(
        t_sat - validate.number("surface_C", surface_C, minimum=-50.0, maximum=200.0, unit="°C"),
        MIN_CONDENSATION_DELTA_T_K,
    )
    L = validate.positive("length_m", length_m, unit="m")
    liq = saturated_liquid_water_properties(max(t_sat - 0.5 * dT, 0.01))
    rho_v = saturated_vapour_density_kg_m3(t_sat)
    hfg = latent_heat_J_kg(t_sat)
    ja = liq.cp_J_kgK * dT / hfg
    hfg_mod = hfg * (1.0 + 0.68 * ja)
    x = (
        GRAVITY_M_S2
        * liq.rho_kg_m3
        * (liq.rho_kg_m3 - rho_v)
        * hfg_mod
        * L**3
        / (liq.mu_Pa_s * liq.k_W_mK * dT)
    )
    h = float(nusselt_by_name(correlation, condensation_group=x)) * liq.k_W_mK / L
    re_film = 4.0 * h * L * dT / (liq.mu_Pa_s * hfg_mod)
    return h, re_film


def _condensation(
    geometry: Geometry, t_sat: float, t_s: float, override: str | None, warnings: list[str]
) -> tuple[float, str, str, float, float, float]:
    name = override or DEFAULT_CORRELATION[("condensation", geometry.shape)]
    entry = CORRELATIONS[name]
    if entry.mode != "condensation":
        raise InvalidInputError(
            "forced_correlation", name, "a condensation entry of CORRELATIONS for a steam medium"
        )
    if t_s >= t_sat - MIN_CONDENSATION_DELTA_T_K:
        warnings.append(
            f"surface {t_s:g} °C is within {MIN_CONDENSATION_DELTA_T_K} K of the steam temperature {t_sat:g} °C: condensation coefficient evaluated at ΔT = {MIN_CONDENSATION_DELTA_T_K} K"
        )
    L = (
        geometry.diameter_m
        if geometry.shape in ("cylinder", "finite-cylinder", "sphere")
        else geometry.flow_length_m
    )
    h, re_film = condensation_h_W_m2K(t_sat, t_s, L, name)
    if re_film > RE_FILM_LAMINAR_LIMIT:
        warnings.append(
            f"{name}: film Re_δ = {re_film:.3g} > {RE_FILM_LAMINAR_LIMIT:g}, a wavy laminar film that transfers more than the Nusselt value (conservatively low)"
        )
    warnings_msg = typical_range_warning(h, "steam-oven", "computed condensation h")
    if warnings_msg:
        warnings.append(warnings_msg)
    warnings.append(
        "pure saturated steam assumed: air mixed into the steam lowers the condensation coefficient strongly"
    )
    film_C = t_sat - 0.5 * max(t_sat - t_s, MIN_CONDENSATION_DELTA_T_K)
    liq = saturated_liquid_water_properties(max(film_C, 0.01))
    return h, name, entry.validity, h * L / liq.k_W_mK, L, film_C
