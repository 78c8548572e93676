"""Film condensation of pure saturated steam on a product (steam ovens, retorts).

References
----------
Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Wiley, 2011, §10.7
(laminar film condensation on a vertical plate, eqs. 10.26, 10.9, 10.33–10.35) and §10.8 (radial systems,
eq. 10.41). Nusselt, W. (1916), Z. Ver. Dtsch. Ing. 60, 541–546 and 569–575.
"""

from __future__ import annotations

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.surface.conditions import ConvectionTerms, SurfaceConditions
from procplan.surface.correlations import CORRELATIONS, DEFAULT_CORRELATION, nusselt_by_name
from procplan.surface.media import (
    GRAVITY_M_S2,
    latent_heat_J_kg,
    saturated_liquid_water_properties,
    saturated_vapour_density_kg_m3,
)
from procplan.surface.ranges import typical_range_warning

#: Smallest temperature difference [K] used in the condensation group (its h diverges at 0).
MIN_CONDENSATION_DELTA_T_K = 0.5
#: Reynolds number of a condensate film above which the wave-free laminar Nusselt model no longer holds.
RE_FILM_LAMINAR_LIMIT = 30.0


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

    References
    ----------
    Nusselt, W. (1916), "Die Oberflächenkondensation des Wasserdampfes", Z. Ver. Dtsch. Ing. 60, 541–546 and
    569–575. Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Wiley, 2011,
    §10.7–10.8.
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


def _condensing_length_m(geometry: Geometry) -> float:
    if geometry.shape in ("cylinder", "finite-cylinder", "sphere"):
        return geometry.diameter_m
    return geometry.flow_length_m


def condensation_on_surface(c: SurfaceConditions, warnings: list[str]) -> ConvectionTerms:
    """Steam: Nusselt film condensation with the medium at its saturation temperature, no radiation."""
    t_sat, t_s = c.medium_C, c.surface_C
    name = c.forced_correlation or DEFAULT_CORRELATION[("condensation", c.geometry.shape)]
    entry = CORRELATIONS[name]
    if entry.mode != "condensation":
        raise InvalidInputError(
            "forced_correlation", name, "a condensation entry of CORRELATIONS for a steam medium"
        )
    if t_s >= t_sat - MIN_CONDENSATION_DELTA_T_K:
        warnings.append(
            f"surface {t_s:g} °C is within {MIN_CONDENSATION_DELTA_T_K} K of the steam temperature {t_sat:g} °C: condensation coefficient evaluated at ΔT = {MIN_CONDENSATION_DELTA_T_K} K"
        )
    L = _condensing_length_m(c.geometry)
    h, re_film = condensation_h_W_m2K(t_sat, t_s, L, name)
    if re_film > RE_FILM_LAMINAR_LIMIT:
        warnings.append(
            f"{name}: film Re_δ = {re_film:.3g} > {RE_FILM_LAMINAR_LIMIT:g}, a wavy laminar film that transfers more than the Nusselt value (conservatively low)"
        )
    msg = typical_range_warning(h, "steam-oven", "computed condensation h")
    if msg:
        warnings.append(msg)
    warnings.append(
        "pure saturated steam assumed: air mixed into the steam lowers the condensation coefficient strongly"
    )
    film_C = t_sat - 0.5 * max(t_sat - t_s, MIN_CONDENSATION_DELTA_T_K)
    liq = saturated_liquid_water_properties(max(film_C, 0.01))
    return ConvectionTerms(
        h_conv_W_m2K=h,
        h_rad_W_m2K=0.0,
        correlation=name,
        validity=entry.validity,
        film_C=film_C,
        nu=h * L / liq.k_W_mK,
        length_m=L,
    )
