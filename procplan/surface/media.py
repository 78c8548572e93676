"""Properties of the heat-transfer media: dry and humid air, liquid water, sodium-chloride brine.

Every function takes temperatures in °C and returns SI values in a frozen dataclass. Values come from
CoolProp (``PropsSI`` for dry air and water, ``HAPropsSI`` for humid air, the incompressible mixture
``INCOMP::MNA[x]`` for aqueous sodium chloride). Calls are cached on temperatures rounded to 0.01 K and
pressures rounded to 1 Pa, so the repeated calls of a time-stepping solver are cheap.

References
----------
Bell, I.H., Wronski, J., Quoilin, S., Lemort, V. (2014), "Pure and pseudo-pure fluid thermophysical property
evaluation and the open-source thermophysical property library CoolProp", Ind. Eng. Chem. Res. 53(6), 2498–2508.
Lemmon, E.W., Jacobsen, R.T. (2004), "Viscosity and thermal conductivity equations for nitrogen, oxygen,
argon, and air", Int. J. Thermophys. 25(1), 21–69 (the air transport properties CoolProp uses).
Wagner, W., Riethmann, T., Feistel, R., Harvey, A.H. (2011), "New equations for the sublimation pressure and
melting pressure of H2O ice Ih", J. Phys. Chem. Ref. Data 40, 043103 (sublimation pressure).
Marrero, T.R., Mason, E.A. (1972), "Gaseous diffusion coefficients", J. Phys. Chem. Ref. Data 1, 3–118, as
quoted by Çengel & Ghajar, Heat and Mass Transfer, eq. 14-15 (diffusivity of water vapour in air).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

from procplan import validate
from procplan.errors import InvalidInputError


def PropsSI(*args):  # noqa: N802 - CoolProp's name
    """CoolProp's ``PropsSI``, loaded on first use (its import takes a second or more; ``procplan --help`` and
    the library commands do not need it)."""
    from CoolProp.CoolProp import PropsSI as props

    return props(*args)


def HAPropsSI(*args):  # noqa: N802 - CoolProp's name
    """CoolProp's ``HAPropsSI``, loaded on first use."""
    from CoolProp.CoolProp import HAPropsSI as props

    return props(*args)


ZERO_CELSIUS_K = 273.15
#: Molar mass of water [kg/mol] and the molar gas constant [J/molK] (CODATA 2018).
MOLAR_MASS_WATER_KG_MOL = 0.018015268
GAS_CONSTANT_J_MOLK = 8.314462618
#: Standard gravity [m/s²].
GRAVITY_M_S2 = 9.80665

#: Temperature range [°C] accepted for air (CoolProp's air model is valid far beyond; this is the process range).
AIR_RANGE_C = (-100.0, 400.0)
#: Range [°C] for humid air through HAPropsSI.
HUMID_AIR_RANGE_C = (-100.0, 200.0)
#: Range [°C] of liquid water at about 1 atm; 0 °C is evaluated at 0.01 °C (the triple point).
WATER_RANGE_C = (0.0, 99.0)
#: Sodium chloride mass fractions allowed for the brine model (CoolProp ``MNA``: 0 to 0.23).
BRINE_FRACTION_RANGE = (0.0, 0.23)

_TRIPLE_K = 273.16
_TRIPLE_PA = 611.657


@dataclass(frozen=True)
class FluidProperties:
    """Transport and thermodynamic properties of a fluid at one state.

    Attributes
    ----------
    temperature_C : temperature [°C] at which the properties are evaluated
    pressure_Pa : pressure [Pa]
    k_W_mK : thermal conductivity [W/mK]
    mu_Pa_s : dynamic viscosity [Pa s]
    rho_kg_m3 : density [kg/m³]
    cp_J_kgK : isobaric specific heat [J/kgK]
    beta_1_K : volumetric thermal expansion coefficient [1/K] (1/T for an ideal gas)
    medium : "air", "humid-air", "water" or "brine"
    """

    temperature_C: float
    pressure_Pa: float
    k_W_mK: float
    mu_Pa_s: float
    rho_kg_m3: float
    cp_J_kgK: float
    beta_1_K: float
    medium: str

    @property
    def nu_m2_s(self) -> float:
        """Kinematic viscosity ν = μ/ρ [m²/s]."""
        return self.mu_Pa_s / self.rho_kg_m3

    @property
    def alpha_m2_s(self) -> float:
        """Thermal diffusivity α = k/(ρ c_p) [m²/s]."""
        return self.k_W_mK / (self.rho_kg_m3 * self.cp_J_kgK)

    @property
    def pr(self) -> float:
        """Prandtl number Pr = c_p μ / k."""
        return self.cp_J_kgK * self.mu_Pa_s / self.k_W_mK


def _round_T(temperature_C: float) -> float:
    return round(float(temperature_C) + ZERO_CELSIUS_K, 2)


def _pressure(pressure_Pa: float) -> float:
    return round(validate.number("pressure_Pa", pressure_Pa, minimum=5e4, maximum=5e5, unit="Pa"))


@lru_cache(maxsize=4096)
def _dry_air(T_K: float, p_Pa: float) -> tuple[float, float, float, float]:
    return (
        PropsSI("L", "T", T_K, "P", p_Pa, "Air"),
        PropsSI("V", "T", T_K, "P", p_Pa, "Air"),
        PropsSI("D", "T", T_K, "P", p_Pa, "Air"),
        PropsSI("C", "T", T_K, "P", p_Pa, "Air"),
    )


@lru_cache(maxsize=4096)
def _humid_air(T_K: float, p_Pa: float, rh: float) -> tuple[float, float, float, float]:
    # Vha is the volume per kg of dry air; the mixture density is (1 + W) / Vha. cp_ha is per kg humid air.
    w = HAPropsSI("W", "T", T_K, "P", p_Pa, "R", rh)
    vda = HAPropsSI("Vda", "T", T_K, "P", p_Pa, "R", rh)
    return (
        HAPropsSI("K", "T", T_K, "P", p_Pa, "R", rh),
        HAPropsSI("M", "T", T_K, "P", p_Pa, "R", rh),
        (1.0 + w) / vda,
        HAPropsSI("cp_ha", "T", T_K, "P", p_Pa, "R", rh),
    )


def air_properties(
    temperature_C: float, pressure_Pa: float = 101325.0, relative_humidity: float | None = None
) -> FluidProperties:
    """Properties of dry air (``relative_humidity=None``) or humid air at one temperature.

    Dry air: CoolProp ``PropsSI(..., 'Air')`` (Lemmon et al. pseudo-pure air; transport by Lemmon & Jacobsen
    2004). Humid air: CoolProp ``HAPropsSI`` (ASHRAE RP-1485 real-gas mixture). β = 1/T [1/K] (ideal gas).

    Parameters
    ----------
    temperature_C : air temperature [°C], −100 to 400 (humid: to 200)
    pressure_Pa : total pressure [Pa]
    relative_humidity : relative humidity as a fraction 0–1, or None for dry air

    Examples
    --------
    >>> p = air_properties(20.0)
    >>> round(p.k_W_mK, 5)  # CoolProp air, 20 °C, 1 atm: 0.02587 W/mK (references.md)
    0.02587
    """
    p = _pressure(pressure_Pa)
    if relative_humidity is None:
        t = validate.number("air_C", temperature_C, minimum=AIR_RANGE_C[0], maximum=AIR_RANGE_C[1], unit="°C")
        T = _round_T(t)
        k, mu, rho, cp = _dry_air(T, p)
        medium = "air"
    else:
        t = validate.number(
            "air_C", temperature_C, minimum=HUMID_AIR_RANGE_C[0], maximum=HUMID_AIR_RANGE_C[1], unit="°C"
        )
        rh = round(validate.fraction("relative_humidity", relative_humidity), 4)
        T = _round_T(t)
        if rh * saturation_pressure_Pa(t) >= 0.9 * p:
            raise InvalidInputError(
                "relative_humidity",
                relative_humidity,
                f"< {0.9 * p / saturation_pressure_Pa(t):.3g} at {t:g} °C",
                "vapour pressure would approach the total pressure",
            )
        try:
            k, mu, rho, cp = _humid_air(T, p, rh)
        except ValueError as exc:
            raise InvalidInputError(
                "relative_humidity", relative_humidity, "a state CoolProp HAPropsSI accepts", str(exc)[:120]
            ) from None
        medium = "humid-air"
    return FluidProperties(t, float(p), k, mu, rho, cp, 1.0 / T, medium)


@lru_cache(maxsize=4096)
def _water(T_K: float, p_Pa: float) -> tuple[float, float, float, float, float]:
    return (
        PropsSI("L", "T", T_K, "P", p_Pa, "Water"),
        PropsSI("V", "T", T_K, "P", p_Pa, "Water"),
        PropsSI("D", "T", T_K, "P", p_Pa, "Water"),
        PropsSI("C", "T", T_K, "P", p_Pa, "Water"),
        PropsSI("isobaric_expansion_coefficient", "T", T_K, "P", p_Pa, "Water"),
    )


def water_properties(temperature_C: float, pressure_Pa: float = 101325.0) -> FluidProperties:
    """Properties of liquid water (CoolProp ``'Water'``, IAPWS-95) as an immersion medium.

    Temperatures from 0 to 0.01 °C are evaluated at 0.01 °C (the triple point; an ice-water bath). β may be
    negative below 4 °C (density maximum); free-convection models use the density difference instead.

    Parameters
    ----------
    temperature_C : water temperature [°C], 0 to 99 at 1 atm
    pressure_Pa : pressure [Pa]

    Examples
    --------
    >>> round(water_properties(20.0).k_W_mK, 3)  # IAPWS water at 20 °C, 1 atm: 0.598 W/mK (references.md)
    0.598
    """
    p = _pressure(pressure_Pa)
    t = validate.number(
        "water_C", temperature_C, minimum=WATER_RANGE_C[0], maximum=WATER_RANGE_C[1], unit="°C"
    )
    T = max(_round_T(t), _TRIPLE_K)
    k, mu, rho, cp, beta = _water(T, p)
    return FluidProperties(t, float(p), k, mu, rho, cp, beta, "water")


@lru_cache(maxsize=4096)
def _brine(T_K: float, x: float) -> tuple[float, float, float, float, float]:
    fluid = f"INCOMP::MNA[{x}]"
    rho = PropsSI("D", "T", T_K, "P", 101325.0, fluid)
    t_hi = min(T_K + 0.5, PropsSI("Tmax", "T", T_K, "P", 101325.0, fluid))
    t_lo = max(t_hi - 1.0, PropsSI("T_freeze", "T", T_K, "P", 101325.0, fluid) + 1e-3)
    rho_hi = PropsSI("D", "T", t_hi, "P", 101325.0, fluid)
    rho_lo = PropsSI("D", "T", t_lo, "P", 101325.0, fluid)
    return (
        PropsSI("L", "T", T_K, "P", 101325.0, fluid),
        PropsSI("V", "T", T_K, "P", 101325.0, fluid),
        rho,
        PropsSI("C", "T", T_K, "P", 101325.0, fluid),
        -(rho_hi - rho_lo) / (rho * (t_hi - t_lo)),
    )


def brine_freezing_C(nacl_mass_fraction: float = 0.2) -> float:
    """Freezing point [°C] of aqueous sodium chloride of the given mass fraction (CoolProp ``MNA`` fit).

    >>> round(brine_freezing_C(0.2), 1)
    -16.5

    References
    ----------
    Melinder, Å. (2007), Thermophysical properties of aqueous solutions used as secondary working fluids,
    doctoral thesis, KTH Stockholm, as implemented in CoolProp's incompressible mixture ``INCOMP::MNA``.
    """
    x = round(
        validate.number(
            "brine_nacl_fraction", nacl_mass_fraction, minimum=0.01, maximum=BRINE_FRACTION_RANGE[1]
        ),
        4,
    )
    return PropsSI("T_freeze", "T", 293.15, "P", 101325.0, f"INCOMP::MNA[{x}]") - ZERO_CELSIUS_K


def brine_properties(temperature_C: float, nacl_mass_fraction: float = 0.2) -> FluidProperties:
    """Properties of aqueous sodium chloride brine (CoolProp incompressible mixture ``INCOMP::MNA[x]``).

    The ``MNA`` fit (Melinder, *Thermophysical properties of aqueous solutions used as secondary working
    fluids*, KTH Stockholm, 2007) covers mass fractions 0–0.23 from the solution's freezing point to 40 °C.
    β is the finite difference of the density over 1 K around T (one-sided at the range ends).

    Parameters
    ----------
    temperature_C : brine temperature [°C], above the freezing point of the solution and ≤ 40 °C
    nacl_mass_fraction : mass fraction of NaCl, 0.01–0.23

    Examples
    --------
    >>> b = brine_properties(-5.0, 0.2)
    >>> 1100 < b.rho_kg_m3 < 1200 and 3000 < b.cp_J_kgK < 3600
    True
    """
    x = round(
        validate.number(
            "brine_nacl_fraction", nacl_mass_fraction, minimum=0.01, maximum=BRINE_FRACTION_RANGE[1]
        ),
        4,
    )
    t_freeze = brine_freezing_C(x)
    t = validate.number(
        "brine_C", temperature_C, minimum=math.ceil(t_freeze * 10 + 1e-9) / 10, maximum=40.0, unit="°C"
    )
    k, mu, rho, cp, beta = _brine(_round_T(t), x)
    return FluidProperties(t, 101325.0, k, mu, rho, cp, beta, "brine")


def saturation_pressure_Pa(temperature_C: float) -> float:
    """Saturation vapour pressure of pure water [Pa]: over liquid at ≥ 0.01 °C, over ice Ih below.

    Liquid: CoolProp ``PropsSI('P', 'T', T, 'Q', 0, 'Water')`` (IAPWS-95). Ice: Wagner et al. (2011),
    ln(p/p_t) = θ⁻¹ Σ aᵢ θ^bᵢ with θ = T/T_t, T_t = 273.16 K, p_t = 611.657 Pa, valid 50–273.16 K.

    >>> round(saturation_pressure_Pa(20.0), 0)  # 2339 Pa (IAPWS-95)
    2339.0
    """
    t = validate.number("temperature_C", temperature_C, minimum=-100.0, maximum=200.0, unit="°C")
    return _psat(_round_T(t))


@lru_cache(maxsize=4096)
def _psat(T_K: float) -> float:
    if T_K >= _TRIPLE_K:
        return PropsSI("P", "T", T_K, "Q", 0, "Water")
    theta = T_K / _TRIPLE_K
    a = (-0.212144006e2, 0.273203819e2, -0.610598130e1)
    b = (0.333333333e-2, 0.120666667e1, 0.170333333e1)
    return _TRIPLE_PA * math.exp(sum(ai * theta**bi for ai, bi in zip(a, b, strict=True)) / theta)


def latent_heat_J_kg(temperature_C: float) -> float:
    """Latent heat of phase change from the wet surface to vapour [J/kg] at the surface temperature.

    At ≥ 0.01 °C the enthalpy of vaporisation h_g − h_f from CoolProp (IAPWS-95). Below, the surface water is
    taken as ice and the enthalpy of sublimation follows from Clausius–Clapeyron on the Wagner et al. (2011)
    sublimation curve, L = R T² (d ln p/dT) / M (ideal vapour), about 2834 kJ/kg at 0 °C.

    >>> round(latent_heat_J_kg(100.0) / 1e3)  # 2256.5 kJ/kg at 100 °C (IAPWS-95)
    2256
    """
    t = validate.number("surface_C", temperature_C, minimum=-100.0, maximum=200.0, unit="°C")
    T = max(_round_T(t), -100 + ZERO_CELSIUS_K)
    return _latent(T)


@lru_cache(maxsize=4096)
def _latent(T_K: float) -> float:
    if T_K >= _TRIPLE_K:
        return PropsSI("H", "T", T_K, "Q", 1, "Water") - PropsSI("H", "T", T_K, "Q", 0, "Water")
    dT = 0.01
    dlnp = (math.log(_psat(T_K + dT)) - math.log(_psat(T_K - dT))) / (2 * dT)
    return GAS_CONSTANT_J_MOLK * T_K**2 * dlnp / MOLAR_MASS_WATER_KG_MOL


def vapour_density_kg_m3(partial_pressure_Pa: float, temperature_C: float) -> float:
    """Mass concentration of water vapour, ideal gas: ρ_v = p_v M / (R T) [kg/m³]."""
    return (
        partial_pressure_Pa
        * MOLAR_MASS_WATER_KG_MOL
        / (GAS_CONSTANT_J_MOLK * (temperature_C + ZERO_CELSIUS_K))
    )


def water_vapour_diffusivity_m2_s(temperature_C: float, pressure_Pa: float = 101325.0) -> float:
    """Binary diffusion coefficient of water vapour in air [m²/s], Marrero & Mason (1972).

    D = 1.87e-10 T^2.072 / P, T in K, P in atm; fitted for 280 K < T < 450 K; below 280 K it is an
    extrapolation of the smooth power law (the kinetic-theory T^1.5–T^2 dependence holds there too).

    >>> round(water_vapour_diffusivity_m2_s(25.0) * 1e4, 3)  # Incropera Table A.8 gives 0.26e-4 m²/s at 298 K
    0.25
    """
    t = validate.number("temperature_C", temperature_C, minimum=-100.0, maximum=300.0, unit="°C")
    p = _pressure(pressure_Pa)
    return 1.87e-10 * (t + ZERO_CELSIUS_K) ** 2.072 / (p / 101325.0)


def medium_properties(
    medium: str,
    temperature_C: float,
    *,
    pressure_Pa: float = 101325.0,
    relative_humidity: float | None = None,
    nacl_mass_fraction: float = 0.2,
) -> FluidProperties:
    """Properties of the named medium ("air", "water", "brine") at one temperature."""
    medium = validate.choice("medium", medium, ("air", "water", "brine"))
    if medium == "air":
        return air_properties(temperature_C, pressure_Pa, relative_humidity)
    if medium == "water":
        return water_properties(temperature_C, pressure_Pa)
    return brine_properties(temperature_C, nacl_mass_fraction)


@lru_cache(maxsize=4096)
def _sat_liquid(T_K: float) -> tuple[float, float, float, float, float, float]:
    return (
        PropsSI("L", "T", T_K, "Q", 0, "Water"),
        PropsSI("V", "T", T_K, "Q", 0, "Water"),
        PropsSI("D", "T", T_K, "Q", 0, "Water"),
        PropsSI("C", "T", T_K, "Q", 0, "Water"),
        PropsSI("P", "T", T_K, "Q", 0, "Water"),
        PropsSI("isobaric_expansion_coefficient", "T", T_K, "Q", 0, "Water"),
    )


def saturated_liquid_water_properties(temperature_C: float) -> FluidProperties:
    """Saturated liquid water at one temperature (CoolProp ``'Water'``, Q = 0), for condensate films.

    >>> round(saturated_liquid_water_properties(100.0).rho_kg_m3, 1)  # 958.35 kg/m³ (IAPWS-95)
    958.3
    """
    t = validate.number("temperature_C", temperature_C, minimum=0.01, maximum=200.0, unit="°C")
    T = max(_round_T(t), _TRIPLE_K)
    k, mu, rho, cp, p, beta = _sat_liquid(T)
    return FluidProperties(t, p, k, mu, rho, cp, beta, "water")


def saturated_vapour_density_kg_m3(temperature_C: float) -> float:
    """Density of saturated steam [kg/m³] (CoolProp ``'Water'``, Q = 1).

    >>> round(saturated_vapour_density_kg_m3(100.0), 3)
    0.598
    """
    t = validate.number("steam_C", temperature_C, minimum=0.01, maximum=200.0, unit="°C")
    return _sat_vapour_density(max(_round_T(t), _TRIPLE_K))


@lru_cache(maxsize=1024)
def _sat_vapour_density(T_K: float) -> float:
    return PropsSI("D", "T", T_K, "Q", 1, "Water")
