"""Convection of a product in air or in a liquid (water, brine): free, forced and mixed.

Forced convection (flat plate eqs. 7.30/7.38 for slabs and bricks, Churchill–Bernstein eq. 7.54 for
cylinders, Whitaker eq. 7.56 for spheres) is combined with free convection (horizontal plates eqs.
9.30–9.32, Churchill–Chu eqs. 9.26/9.34, Churchill 1983 for spheres) as Nu³ = Nu_F³ + Nu_N³ (eq. 9.64); with
zero speed, free convection alone. Properties at the film temperature (T_s + T∞)/2, except Whitaker's (free
stream, with μ_s). In air, linearised radiation is added in parallel.

References
----------
Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Wiley, 2011, chapters
7 and 9.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import replace

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.surface.conditions import ConvectionTerms, SurfaceConditions
from procplan.surface.correlations import (
    CORRELATIONS,
    DEFAULT_CORRELATION,
    Correlation,
    nusselt_by_name,
    nusselt_mixed_convection,
)
from procplan.surface.layers import h_radiation_linearised
from procplan.surface.media import (
    GRAVITY_M_S2,
    WATER_RANGE_C,
    FluidProperties,
    HAPropsSI,
    air_properties,
    brine_freezing_C,
    medium_properties,
)
from procplan.surface.ranges import typical_range_warning

#: Smallest temperature difference [K] used in buoyancy groups (their h vanish at 0).
MIN_DELTA_T_K = 0.1

#: Free-stream properties and the viscosity at the surface [Pa s], for Whitaker's sphere correlation.
FreeStream = Callable[[], tuple[FluidProperties, float]]


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


def check_groups(entry: Correlation, name: str, warnings: list[str], **groups: float | None) -> None:
    """Warn when a dimensionless group lies outside the correlation's validity range."""
    bad = entry.out_of_range(**{k: v for k, v in groups.items() if v is not None})
    if bad:
        warnings.append(
            f"the {name.replace('-', ' ')} correlation is used outside its validity: {', '.join(bad)} "
            f"({entry.validity}); its h is extrapolated"
        )


def _natural_terms(
    geometry: Geometry,
    hot_product: bool,
    ra_of: Callable[[float], float],
    props: FluidProperties,
    override: str | None,
    warnings: list[str],
) -> tuple[float, float, float, str]:
    """Area-weighted free-convection h [W/m²K] of the exposed faces; returns (h, Ra, L, names)."""
    shape = geometry.shape
    k = props.k_W_mK
    pr = props.pr
    if shape in ("cylinder", "finite-cylinder", "sphere"):
        name = override or DEFAULT_CORRELATION[("natural", shape)]
        L = geometry.diameter_m
        ra = ra_of(L)
        check_groups(CORRELATIONS[name], name, warnings, ra=ra, pr=pr)
        return float(nusselt_by_name(name, ra=ra, pr=pr)) * k / L, ra, L, name
    if override is not None:
        L = (
            _plate_A_over_P_m(geometry)
            if override.startswith("horizontal")
            else (geometry.height_m or geometry.thickness_m)
        )
        ra = ra_of(L)
        check_groups(CORRELATIONS[override], override, warnings, ra=ra, pr=pr)
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
    check_groups(CORRELATIONS[up], up, warnings, ra=ra)
    if shape == "slab":
        if geometry.faces == 1:
            return h_top, ra, L, up
        return 0.5 * (h_top + h_bottom), ra, L, f"{up} + {down}"
    # brick: top, bottom and four vertical sides of height H
    check_groups(CORRELATIONS[down], down, warnings, ra=ra)
    lw = geometry.length_m * geometry.width_m
    H = geometry.height_m
    sides = 2.0 * (geometry.length_m + geometry.width_m) * H
    h_side = float(nusselt_by_name("vertical-plate-churchill-chu", ra=ra_of(H), pr=pr)) * k / H
    h = (lw * (h_top + h_bottom) + sides * h_side) / (2.0 * lw + sides)
    return h, ra, L, f"{up} + {down} + vertical-plate-churchill-chu"


def _forced(
    c: SurfaceConditions,
    props: FluidProperties,
    speed_m_s: float,
    free_stream: FreeStream,
    warnings: list[str],
) -> tuple[float, str, Correlation, float, float, float, float]:
    """Forced-convection h [W/m²K]; returns (h, name, entry, Re, Pr, k of the fluid used, length)."""
    fname = c.forced_correlation or DEFAULT_CORRELATION[("forced", c.geometry.shape)]
    entry = CORRELATIONS[fname]
    if entry.mode != "forced":
        raise InvalidInputError(
            "forced_correlation", fname, f"a forced-convection entry for a {c.medium} medium"
        )
    length = c.geometry.flow_length_m
    if "mu_ratio" in entry.inputs:  # Whitaker: free-stream properties and μ_s
        p_inf, mu_s = free_stream()
        re = speed_m_s * length / p_inf.nu_m2_s
        pr = p_inf.pr
        mu_ratio = p_inf.mu_Pa_s / mu_s
        check_groups(entry, fname, warnings, re=re, pr=pr, mu_ratio=mu_ratio)
        nu_f = float(nusselt_by_name(fname, re=re, pr=pr, mu_ratio=mu_ratio))
        k_f = p_inf.k_W_mK
    else:
        re = speed_m_s * length / props.nu_m2_s
        pr = props.pr
        check_groups(entry, fname, warnings, re=re, pr=pr, repr=re * pr)
        nu_f = float(nusselt_by_name(fname, re=re, pr=pr))
        k_f = props.k_W_mK
    if not (math.isfinite(nu_f) and nu_f >= 0):
        raise InvalidInputError(
            "forced_correlation",
            fname,
            f"a correlation valid at Re = {re:.3g} ({entry.validity})",
            "it gives no positive Nusselt number here",
        )
    return nu_f * k_f / length, fname, entry, re, pr, k_f, length


def _free_and_forced(
    c: SurfaceConditions,
    props: FluidProperties,
    drho_over_rho: float,
    speed_m_s: float | None,
    free_stream: FreeStream,
    warnings: list[str],
) -> ConvectionTerms:
    """Free convection, combined with forced convection when the fluid moves (eq. 9.64, n = 3)."""

    def ra_of(L: float) -> float:
        return GRAVITY_M_S2 * drho_over_rho * L**3 / (props.nu_m2_s * props.alpha_m2_s)

    film_C = 0.5 * (c.surface_C + c.medium_C)
    hot_product = c.surface_C > c.medium_C
    h_nat, ra, L_nat, nat_name = _natural_terms(
        c.geometry, hot_product, ra_of, props, c.natural_correlation, warnings
    )
    free_validity = "; ".join(CORRELATIONS[n].validity for n in nat_name.split(" + "))
    if speed_m_s:
        h_forced, fname, entry, re, pr, k_f, length = _forced(c, props, speed_m_s, free_stream, warnings)
        # Incropera eq. 9.64 on h (the same as on Nu for a common length), n = 3.
        h_conv = float(nusselt_mixed_convection(h_forced, h_nat))
        terms = ConvectionTerms(
            h_conv_W_m2K=h_conv,
            h_rad_W_m2K=0.0,
            correlation=f"{fname} + {nat_name} (combined, n = 3)",
            validity=f"{entry.validity}; free: {free_validity}",
            film_C=film_C,
            re=re,
            pr=pr,
            ra=ra,
            nu=h_conv * length / k_f,
            length_m=length,
        )
    else:
        terms = ConvectionTerms(
            h_conv_W_m2K=h_nat,
            h_rad_W_m2K=0.0,
            correlation=nat_name,
            validity=free_validity,
            film_C=film_C,
            pr=props.pr,
            ra=ra,
            nu=h_nat * L_nat / props.k_W_mK,
            length_m=L_nat,
        )
    msg = typical_range_warning(terms.h_conv_W_m2K, c.kind, "computed h_conv")
    if msg:
        warnings.append(msg)
    return terms


def convection_in_air(c: SurfaceConditions, warnings: list[str]) -> ConvectionTerms:
    """Air: humid-air film properties, buoyancy from β ΔT, forced and free convection, radiation in parallel."""
    t_inf, t_s, p = c.medium_C, c.surface_C, c.pressure_Pa
    film_C = 0.5 * (t_s + t_inf)
    rh = c.relative_humidity
    try:
        rh_f = None if rh is None else _humid_rh_at(film_C, t_inf, rh, p)
    except ValueError as exc:
        raise InvalidInputError(
            "relative_humidity",
            rh,
            f"a humid-air state HAPropsSI accepts at {t_inf:g} °C",
            str(exc)[:120],
        ) from None
    props = air_properties(film_C, p, rh_f)
    drho_over_rho = props.beta_1_K * max(abs(t_s - t_inf), MIN_DELTA_T_K)

    def free_stream() -> tuple[FluidProperties, float]:
        return air_properties(t_inf, p, rh), air_properties(t_s, p).mu_Pa_s

    terms = _free_and_forced(c, props, drho_over_rho, c.air_speed_m_s, free_stream, warnings)
    h_rad = float(h_radiation_linearised(c.emissivity, t_s, c.surroundings_C))
    return replace(terms, h_rad_W_m2K=h_rad)


def convection_in_liquid(c: SurfaceConditions, warnings: list[str]) -> ConvectionTerms:
    """Water or brine immersion: buoyancy from the density difference, forced and free convection, no radiation."""
    medium, x, t_inf, t_s = c.medium, c.nacl_mass_fraction, c.medium_C, c.surface_C
    validate.number(
        "medium_C",
        t_inf,
        minimum=WATER_RANGE_C[0] if medium == "water" else brine_freezing_C(x),
        maximum=WATER_RANGE_C[1] if medium == "water" else 40.0,
        unit="°C",
    )
    props = _liquid(medium, 0.5 * (t_s + t_inf), x, "film temperature", warnings)
    rho_inf = _liquid(medium, t_inf, x, "medium", warnings).rho_kg_m3
    rho_s = _liquid(medium, t_s, x, "surface", warnings).rho_kg_m3
    drho_over_rho = max(abs(rho_inf - rho_s), 1e-9) / props.rho_kg_m3
    if (rho_inf - rho_s) * (t_s - t_inf) < 0:
        warnings.append(
            "the density difference has the opposite sign of the temperature difference (water near 4 °C): free-convection correlations are uncertain"
        )

    def free_stream() -> tuple[FluidProperties, float]:
        return _liquid(medium, t_inf, x, "medium", []), _liquid(medium, t_s, x, "surface", []).mu_Pa_s

    return _free_and_forced(c, props, drho_over_rho, c.liquid_speed_m_s, free_stream, warnings)
