"""Evaporation from a product surface in hot, dry air (ovens, dryers), on humidity ratios.

The air's water content is its humidity ratio W [kg water / kg dry air], from the dew point:

    W = 0.621945 p_v / (P − p_v),  p_v = p_sat(T_dew)                  (ASHRAE Fundamentals, Psychrometrics)

A surface at T_s with water activity a_w is in equilibrium with W_s = 0.621945 a_w p_sat(T_s)/(P − a_w p_sat(T_s)).
The evaporated mass flux and the latent heat it carries off are

    n″ = h_c (W_s − W) / (c_p,a + W c_p,v) / Le_f,    q″ = −n″ h_fg(T_s)

the heat and mass transfer analogy written on humidity ratios (Threlkeld, Thermal Environmental Engineering,
2nd ed., ch. 10; Lewis relation). Le_f = h_c / (h_m,W ρ_a c_p,humid) is the Lewis factor; for air–water vapour it
is close to 1 (the "Lewis relation"), which :data:`LEWIS_FACTOR` takes. With that, a wet surface heated by
convection alone settles where h_c (T − T_s) = n″ h_fg, the psychrometric wet-bulb temperature, which for
air–water equals the adiabatic-saturation (thermodynamic wet-bulb) temperature that CoolProp's humid-air
functions give (within 0.1 K from 30 to 200 °C; tests/surface/test_oven_air.py).

Compared with :mod:`procplan.surface.moisture` (Chilton–Colburn on vapour densities, h_m = h/(ρ c_p Le^⅔),
written for chill rooms): on humidity ratios, the driving force stays exact for the large vapour contents of an
evaporating surface in a hot oven, and the Lewis factor 1 places the wet surface on the wet-bulb temperature;
Chilton–Colburn's Le^⅔ ≈ 0.90 with the dilute-vapour density difference puts it 0.9 K lower at 180 °C air.
That lower surface would slow the predicted heating (the safe direction for a cook time) by a small amount.

References
----------
ASHRAE Handbook—Fundamentals (2017), ch. 1 Psychrometrics, eqs. 20–22 (humidity ratio) and 35 (wet bulb).
Threlkeld, J.L., Thermal Environmental Engineering, 2nd ed., Prentice-Hall, 1970, ch. 10 (Lewis relation).
Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §6.7.2 (analogy).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property, lru_cache

import numpy as np

from procplan import validate
from procplan.surface.media import air_properties, latent_heat_J_kg, saturation_pressure_Pa

#: Ratio of the molar masses of water and dry air (ASHRAE Fundamentals 2017, ch. 1, eq. 20).
MOLAR_MASS_RATIO = 0.621945
#: Specific heat of water vapour [J/kgK] at low pressure (ASHRAE Fundamentals 2017, ch. 1, eq. 30: 1.86 kJ/kgK).
CP_VAPOUR_J_KGK = 1860.0
#: Lewis factor h_c/(h_m,W ρ_a c_p,humid) of air–water vapour (Lewis relation; Threlkeld 1970, ch. 10).
LEWIS_FACTOR = 1.0
#: Air temperatures accepted [°C] and dew points [°C].
AIR_RANGE_C = (0.0, 300.0)
DEW_POINT_RANGE_C = (-40.0, 99.0)
#: Largest partial pressure of vapour at the surface, as a fraction of the total (a wet surface boils at P).
_MAX_VAPOUR_FRACTION = 0.995


@lru_cache(maxsize=1)
def _tables() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """p_sat and h_fg on a 0.25 K grid from −40 to 200 °C (interpolated: ln p_sat and h_fg are smooth)."""
    grid = np.arange(-40.0, 200.0 + 1e-9, 0.25)
    lnp = np.log([saturation_pressure_Pa(float(t)) for t in grid])
    hfg = np.array([latent_heat_J_kg(float(t)) for t in grid])
    return grid, lnp, hfg


def _psat_hfg(surface_C):
    grid, lnp, hfg = _tables()
    t = np.clip(np.asarray(surface_C, dtype=float), grid[0], grid[-1])
    return np.exp(np.interp(t, grid, lnp)), np.interp(t, grid, hfg)


def _psat_hfg_one(surface_C: float) -> tuple[float, float]:
    """:func:`_psat_hfg` of one temperature (a float: the same table and interpolation, without arrays)."""
    grid, lnp, hfg = _tables()
    lo, step, last = float(grid[0]), 0.25, grid.size - 1
    u = (min(max(surface_C, lo), float(grid[-1])) - lo) / step
    i = min(int(u), last - 1)
    f = u - i
    return math.exp(lnp[i] + f * (lnp[i + 1] - lnp[i])), float(hfg[i] + f * (hfg[i + 1] - hfg[i]))


def latent_heat(surface_C):
    """h_fg [J/kg] at surface temperatures (vectorised; the tabulated values of :func:`media.latent_heat_J_kg`)."""
    return _psat_hfg(surface_C)[1]


def humidity_ratio(dew_point_C: float, pressure_Pa: float = 101325.0) -> float:
    """Humidity ratio W [kg water / kg dry air] of air with the given dew point.

    Ideal-gas mixture without the enhancement factor (about 0.4 % below ASHRAE's tabulated value):

    >>> round(humidity_ratio(20.0), 4)  # ASHRAE Fundamentals 2017, ch. 1, Table 2: Ws(20 °C) = 0.014758
    0.0147
    """
    td = validate.number(
        "dew_point_C", dew_point_C, minimum=DEW_POINT_RANGE_C[0], maximum=DEW_POINT_RANGE_C[1], unit="°C"
    )
    pv = saturation_pressure_Pa(td)
    return MOLAR_MASS_RATIO * pv / (pressure_Pa - pv)


@dataclass(frozen=True)
class DryingAir:
    """Hot air of a given temperature and dew point, and the evaporation it drives from a product surface.

    Attributes
    ----------
    air_C : dry-bulb temperature [°C]
    dew_point_C : dew point [°C] (the air's water content)
    h_conv_W_m2K : convection coefficient at the surface [W/m²K] (convection only: radiation moves no vapour)
    pressure_Pa : total pressure [Pa]
    """

    air_C: float
    dew_point_C: float
    h_conv_W_m2K: float
    pressure_Pa: float = 101325.0

    def __post_init__(self) -> None:
        validate.number("air_C", self.air_C, minimum=AIR_RANGE_C[0], maximum=AIR_RANGE_C[1], unit="°C")
        validate.number(
            "dew_point_C",
            self.dew_point_C,
            minimum=DEW_POINT_RANGE_C[0],
            maximum=min(self.air_C, DEW_POINT_RANGE_C[1]),
            unit="°C (at most the air temperature)",
        )
        validate.number(
            "h_conv_W_m2K", self.h_conv_W_m2K, minimum=0.0, min_inclusive=False, maximum=1e4, unit="W/m²K"
        )

    @cached_property
    def humidity_ratio(self) -> float:
        """W of the air [kg water / kg dry air]."""
        return humidity_ratio(self.dew_point_C, self.pressure_Pa)

    @cached_property
    def relative_humidity(self) -> float:
        """p_sat(T_dew)/p_sat(T_air) [-]: the water activity of a product in equilibrium with the air at its
        temperature (relative humidity, ASHRAE Fundamentals 2017, ch. 1).

        >>> round(DryingAir(20.0, 20.0, 10.0).relative_humidity, 6)
        1.0
        """
        return float(_psat_hfg(self.dew_point_C)[0] / _psat_hfg(self.air_C)[0])

    @cached_property
    def humid_cp_J_kgK(self) -> float:
        """c_p,a + W c_p,v [J/(kg dry air · K)], dry air at the air temperature."""
        return air_properties(self.air_C).cp_J_kgK + self.humidity_ratio * CP_VAPOUR_J_KGK

    def surface_humidity_ratio(self, surface_C, water_activity=1.0):
        """W in equilibrium with the surface [kg/kg dry air] (vapour pressure capped just below P)."""
        psat, _ = _psat_hfg(surface_C)
        pv = np.minimum(
            np.asarray(water_activity, dtype=float) * psat, _MAX_VAPOUR_FRACTION * self.pressure_Pa
        )
        return MOLAR_MASS_RATIO * pv / (self.pressure_Pa - pv)

    def mass_flux_kg_m2s(self, surface_C, water_activity=1.0):
        """Evaporated mass flux n″ [kg/m²s] (negative: condensation on a surface below the dew point)."""
        ws = self.surface_humidity_ratio(surface_C, water_activity)
        return self.h_conv_W_m2K * (ws - self.humidity_ratio) / (self.humid_cp_J_kgK * LEWIS_FACTOR)

    def wet_flux_and_latent(self, surface_C):
        """(n″ of a wet surface [kg/m²s], h_fg [J/kg]) at surface temperatures, from one table look-up (the
        heat problem's surface flux on every Newton iteration).

        >>> air = DryingAir(180.0, 45.0, 30.0)
        >>> n, hfg = air.wet_flux_and_latent(60.0)
        >>> bool(n == air.mass_flux_kg_m2s(60.0) and hfg == latent_heat(60.0))
        True
        """
        psat, hfg = _psat_hfg(surface_C)
        pv = np.minimum(psat, _MAX_VAPOUR_FRACTION * self.pressure_Pa)
        ws = MOLAR_MASS_RATIO * pv / (self.pressure_Pa - pv)
        return self.h_conv_W_m2K * (ws - self.humidity_ratio) / (self.humid_cp_J_kgK * LEWIS_FACTOR), hfg

    def mass_flux_one(self, surface_C: float, water_activity: float = 1.0) -> float:
        """:meth:`mass_flux_kg_m2s` at one surface temperature and water activity (floats, for the solvers'
        inner loop on a 1-D surface).

        >>> air = DryingAir(70.0, 20.0, 16.0)
        >>> abs(air.mass_flux_one(41.3, 0.93) - float(air.mass_flux_kg_m2s(41.3, 0.93))) < 1e-15
        True
        """
        psat, _ = _psat_hfg_one(surface_C)
        pv = min(water_activity * psat, _MAX_VAPOUR_FRACTION * self.pressure_Pa)
        ws = MOLAR_MASS_RATIO * pv / (self.pressure_Pa - pv)
        return self.h_conv_W_m2K * (ws - self.humidity_ratio) / (self.humid_cp_J_kgK * LEWIS_FACTOR)

    def heat_flux_into_W_m2(self, surface_C, water_activity=1.0):
        """Heat flux into the product [W/m²] by the evaporation: −n″ h_fg(T_s)."""
        _, hfg = _psat_hfg(surface_C)
        return -self.mass_flux_kg_m2s(surface_C, water_activity) * hfg

    def wet_bulb_C(self) -> float:
        """Temperature [°C] of a wet surface heated by convection alone: h_c (T − T_s) = n″ h_fg.

        >>> round(DryingAir(30.0, 15.0, 20.0).wet_bulb_C(), 1)  # CoolProp HAPropsSI('B'): 20.09 °C
        20.1
        """

        from scipy.optimize import brentq

        def balance(ts: float) -> float:
            return self.h_conv_W_m2K * (self.air_C - ts) + float(self.heat_flux_into_W_m2(ts))

        return float(brentq(balance, self.dew_point_C - 1e-9, min(self.air_C, 99.99), xtol=1e-6))

    def describe(self) -> str:
        return (
            f"air {self.air_C:g} °C with dew point {self.dew_point_C:g} °C (wet bulb {self.wet_bulb_C():.1f} °C), "
            f"convection {self.h_conv_W_m2K:.1f} W/m²K"
        )
