"""Evaporative cooling of an unwrapped product in air, as an extra surface heat flux for the solver.

The flux model is :func:`procplan.surface_moisture.evaporation_flux_kg_m2s` (Chilton–Colburn analogy,
Incropera et al., 7th ed., §6.7). Here it is tabulated once per step against surface temperature at the
step's air state, so the solver can call it for every surface node at every time step.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from procplan.surface_moisture import evaporation_flux_kg_m2s

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
