"""Moisture loss of unwrapped products in air, by the heat and mass transfer analogy.

h_m = h / (ρ c_p Le^⅔), Le = α / D_AB  (Chilton–Colburn; Incropera 7th ed., eq. 6.92)
n″ = h_m (ρ_v,s − ρ_v,∞), ρ_v,s = a_w p_sat(T_s) M/(R T_s), ρ_v,∞ = φ p_sat(T∞) M/(R T∞)  (eq. 6.8)
q″_evap = n″ h_fg(T_s)

:class:`SurfaceEvaporation` tabulates the flux once per step against the surface temperature at the step's air
state, so the solver can call it for every surface node at every time step.

References
----------
Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §6.7 (heat and mass
transfer analogy, eq. 6.92) and eq. 6.8 (species transfer); Chilton, T.H., Colburn, A.P. (1934), Ind. Eng.
Chem. 26, 1183–1187.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.surface.media import (
    air_properties,
    latent_heat_J_kg,
    saturation_pressure_Pa,
    vapour_density_kg_m3,
    water_vapour_diffusivity_m2_s,
)


@dataclass(frozen=True)
class Evaporation:
    """Evaporation from a wet surface at one instant (positive: the product loses water).

    Attributes
    ----------
    mass_flux_kg_m2s : water mass flux leaving the surface [kg/m²s] (negative: condensation on it)
    heat_flux_W_m2 : latent heat carried away, n″ h_fg [W/m²]
    h_m_m_s : mass-transfer coefficient [m/s]
    latent_heat_J_kg : latent heat at the surface temperature [J/kg]
    lewis : Lewis number α/D_AB of air at the film temperature
    """

    mass_flux_kg_m2s: float
    heat_flux_W_m2: float
    h_m_m_s: float
    latent_heat_J_kg: float
    lewis: float


def mass_transfer_coefficient_chilton_colburn(
    h_conv_W_m2K: float, film_C: float, pressure_Pa: float = 101325.0
) -> tuple[float, float]:
    """Mass-transfer coefficient h_m = h/(ρ c_p Le^⅔) [m/s] of water vapour in air, and the Lewis number.

    Incropera 7th ed., eq. 6.92 (Chilton–Colburn analogy); 0.6 < Pr < 60, 0.6 < Sc < 3000.

    >>> hm, le = mass_transfer_coefficient_chilton_colburn(20.0, 20.0)
    >>> round(hm * 1000, 2), round(le, 2)
    (17.94, 0.88)
    """
    h = validate.number("h_conv_W_m2K", h_conv_W_m2K, minimum=0.0, maximum=1e4, unit="W/m²K")
    air = air_properties(film_C, pressure_Pa)
    le = air.alpha_m2_s / water_vapour_diffusivity_m2_s(film_C, pressure_Pa)
    return h / (air.rho_kg_m3 * air.cp_J_kgK * le ** (2.0 / 3.0)), le


def evaporation_flux_kg_m2s(
    h_conv_W_m2K: float,
    surface_C: float,
    air_C: float,
    relative_humidity: float,
    pressure_Pa: float = 101325.0,
    water_activity: float = 1.0,
) -> Evaporation:
    """Evaporation from an unwrapped product surface in air (Chilton–Colburn analogy).

    Parameters
    ----------
    h_conv_W_m2K : convection coefficient at the surface [W/m²K] (convection only, not radiation)
    surface_C : product surface temperature [°C]; below 0 °C the surface water is taken as ice (sublimation)
    air_C : air temperature [°C]
    relative_humidity : of the air, 0–1
    pressure_Pa : total pressure [Pa]
    water_activity : a_w of the surface, 0–1 (1 for free water; about 0.99 for fresh meat)

    Returns
    -------
    Evaporation (mass flux [kg/m²s], latent heat flux [W/m²], h_m [m/s], h_fg [J/kg], Le)

    Notes
    -----
    Dilute vapour (mass fraction ≪ 1), so the mass flux is h_m Δρ_v without the Stefan-flow correction; below
    about 60 °C that correction is under 5 %.

    Examples
    --------
    A wet surface at the psychrometric wet-bulb temperature is in balance, h ΔT = n″ h_fg (air 30 °C, 50 % RH,
    wet bulb about 22 °C):

    >>> e = evaporation_flux_kg_m2s(20.0, 22.0, 30.0, 0.5)
    >>> 0.7 < e.heat_flux_W_m2 / (20.0 * 8.0) < 1.3
    True
    """
    ts = validate.number("surface_C", surface_C, minimum=-60.0, maximum=150.0, unit="°C")
    ta = validate.number("air_C", air_C, minimum=-60.0, maximum=150.0, unit="°C")
    rh = validate.fraction("relative_humidity", relative_humidity)
    aw = validate.fraction("water_activity", water_activity)
    hm, le = mass_transfer_coefficient_chilton_colburn(h_conv_W_m2K, 0.5 * (ts + ta), pressure_Pa)
    rho_s = vapour_density_kg_m3(aw * saturation_pressure_Pa(ts), ts)
    rho_inf = vapour_density_kg_m3(rh * saturation_pressure_Pa(ta), ta)
    flux = hm * (rho_s - rho_inf)
    hfg = latent_heat_J_kg(ts)
    return Evaporation(float(flux), float(flux * hfg), float(hm), float(hfg), float(le))


def weight_loss_percent(
    time_s: Any,
    surface_C: Any,
    *,
    air_C: Any,
    relative_humidity: Any,
    h_conv_W_m2K: Any,
    area_m2: float,
    mass_kg: float,
    pressure_Pa: float = 101325.0,
    water_activity: float = 1.0,
) -> float:
    """Weight loss [% of the initial mass] of an unwrapped product over a surface-temperature history.

    Δm/m₀ = (A/m₀) ∫ n″(t) dt, trapezoidal rule over the given times; air temperature, humidity and h may be
    constants or arrays on the same times.

    Parameters
    ----------
    time_s : increasing times [s]
    surface_C : surface temperature at those times [°C]
    air_C, relative_humidity, h_conv_W_m2K : air state and convection coefficient (scalars or arrays)
    area_m2 : exposed area [m²]
    mass_kg : initial product mass [kg]

    Examples
    --------
    >>> round(weight_loss_percent([0, 3600], [20.0, 20.0], air_C=20.0, relative_humidity=1.0, h_conv_W_m2K=10.0, area_m2=1.0, mass_kg=10.0), 6)
    0.0
    """
    t = validate.increasing("time_s", time_s, unit="s")
    ts = validate.array("surface_C", surface_C, minimum=-60.0, maximum=150.0, unit="°C")
    if ts.shape != t.shape:
        raise InvalidInputError("surface_C", f"{ts.size} values", f"{t.size} values, one per time")
    area = validate.positive("area_m2", area_m2, unit="m²")
    mass = validate.positive("mass_kg", mass_kg, unit="kg")
    ta = np.broadcast_to(np.asarray(air_C, dtype=float), t.shape)
    rh = np.broadcast_to(np.asarray(relative_humidity, dtype=float), t.shape)
    h = np.broadcast_to(np.asarray(h_conv_W_m2K, dtype=float), t.shape)
    flux = np.array(
        [
            evaporation_flux_kg_m2s(h[i], ts[i], ta[i], rh[i], pressure_Pa, water_activity).mass_flux_kg_m2s
            for i in range(t.size)
        ]
    )
    lost_kg = area * float(np.sum(0.5 * (flux[1:] + flux[:-1]) * np.diff(t)))
    return 100.0 * lost_kg / mass


#: Water activity of the surface of fresh and cooked foods taken when none is given (common practice: 0.98-0.99).
DEFAULT_WATER_ACTIVITY = 0.98


@dataclass(frozen=True, eq=False)
class SurfaceEvaporation:
    """Evaporation at a fixed air state: mass flux and heat flux as functions of the surface temperature."""

    air_C: float
    relative_humidity: float
    h_conv_W_m2K: float
    water_activity: float
    surface_grid_C: np.ndarray
    mass_flux_kg_m2s: np.ndarray
    heat_flux_into_W_m2: np.ndarray

    @classmethod
    def at(
        cls,
        air_C: float,
        relative_humidity: float,
        h_conv_W_m2K: float,
        water_activity: float = DEFAULT_WATER_ACTIVITY,
    ) -> SurfaceEvaporation:
        grid = np.linspace(-40.0, 150.0, 191)
        ev = [
            evaporation_flux_kg_m2s(
                h_conv_W_m2K, float(t), air_C, relative_humidity, water_activity=water_activity
            )
            for t in grid
        ]
        mass = np.array([e.mass_flux_kg_m2s for e in ev])
        heat = -np.array([e.heat_flux_W_m2 for e in ev])
        return cls(air_C, relative_humidity, h_conv_W_m2K, water_activity, grid, mass, heat)

    @classmethod
    def for_step(cls, equipment, settings: dict, h_conv_W_m2K: float, product) -> SurfaceEvaporation:
        rh = settings.get("relative_humidity", 0.85)
        return cls.at(float(settings[equipment.temperature_key]), float(rh), float(h_conv_W_m2K))

    def heat_flux_W_m2(self, time_s: float, surface_C):
        """Heat flux into the product [W/m²] (negative while water evaporates)."""
        return np.interp(surface_C, self.surface_grid_C, self.heat_flux_into_W_m2)

    def mass_flux(self, surface_C):
        """Evaporated mass flux [kg/m²s] at a surface temperature."""
        return np.interp(surface_C, self.surface_grid_C, self.mass_flux_kg_m2s)

    def weight_loss_percent(self, time_s, surface_C, area_m2: float, mass_kg: float) -> float:
        """Weight loss over a surface-temperature history [% of the initial mass], trapezoidal rule."""
        t = np.asarray(time_s, dtype=float)
        f = self.mass_flux(np.asarray(surface_C, dtype=float))
        return 100.0 * area_m2 * float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(t))) / mass_kg

    def describe(self) -> str:
        return (
            f"surface evaporation (Chilton–Colburn) at air {self.air_C:g} °C, RH {self.relative_humidity:.0%}, "
            f"h {self.h_conv_W_m2K:.1f} W/m²K, water activity {self.water_activity:g}"
        )
