"""Media properties against published tables and the iapws reference package (checks the CoolProp calls)."""

import pytest
from iapws import IAPWS95
from iapws._iapws import _Sublimation_Pressure
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.surface import media as air

# Source: Incropera et al., 7th ed., Table A.4, air at 1 atm (from memory): T [K], k [W/mK], ν [m²/s], Pr.
INCROPERA_A4 = [
    (250.0, 22.3e-3, 11.44e-6, 0.720),
    (300.0, 26.3e-3, 15.89e-6, 0.707),
    (350.0, 30.0e-3, 20.92e-6, 0.700),
    (400.0, 33.8e-3, 26.41e-6, 0.690),
    (450.0, 37.3e-3, 32.39e-6, 0.686),
]


@pytest.mark.parametrize("T_K, k, nu, pr", INCROPERA_A4)
def test_dry_air_against_incropera_table_a4(T_K, k, nu, pr):
    # Source: Incropera et al., 7th ed., Table A.4 (from memory), 250–450 K (−23 to 177 °C).
    # Tolerance 2 %: Table A.4 rests on older data (NBS compilations) than CoolProp's Lemmon & Jacobsen (2004)
    # air; measured differences are ν −0.8…−1.1 %, k −1.4…+1.2 %, Pr up to +1.7 % (at 450 K). A wrong unit
    # (°C passed as K, or a per-mole property) would miss by far more.
    p = air.air_properties(T_K - 273.15)
    assert_allclose(p.k_W_mK, k, rtol=0.02)
    assert_allclose(p.nu_m2_s, nu, rtol=0.02)
    assert_allclose(p.pr, pr, rtol=0.02)


def test_dry_air_range_ends():
    # Source: Incropera et al., 7th ed., Table A.4 (from memory): at 200 K k = 18.1e-3 W/mK; at 500 K
    # k = 40.7e-3 W/mK. The process range −40…200 °C lies between; interpolate linearly in T (Table A.4's own
    # practice) at −40 °C and 200 °C. Tolerance 3 %: interpolation over 50 K steps plus the 2 % data difference.
    k_m40 = 18.1e-3 + (22.3e-3 - 18.1e-3) * (233.15 - 200.0) / 50.0
    k_200 = 37.3e-3 + (40.7e-3 - 37.3e-3) * (473.15 - 450.0) / 50.0
    assert_allclose(air.air_properties(-40.0).k_W_mK, k_m40, rtol=0.03)
    assert_allclose(air.air_properties(200.0).k_W_mK, k_200, rtol=0.03)


def test_air_at_20C_against_reference_note():
    # Source: /work/shared/references.md: CoolProp air k(20 °C, 1 atm) = 0.02587 W/mK. Tolerance 0.05 %.
    assert_allclose(air.air_properties(20.0).k_W_mK, 0.02587, rtol=5e-4)


def test_humid_air_close_to_dry_and_lighter():
    # Independent: moist air at 20 °C, 50 % RH holds 7.3 g/kg water; its density is lower than dry air's by
    # about 0.4 % (water vapour is lighter), its k within 0.5 % (ASHRAE RP-1485 model behind HAPropsSI).
    dry = air.air_properties(20.0)
    wet = air.air_properties(20.0, relative_humidity=0.5)
    assert wet.rho_kg_m3 < dry.rho_kg_m3
    assert_allclose(wet.rho_kg_m3, dry.rho_kg_m3, rtol=0.01)
    assert_allclose(wet.k_W_mK, dry.k_W_mK, rtol=0.005)
    assert air.air_properties(20.0, relative_humidity=0.0).medium == "humid-air"


@pytest.mark.parametrize("t_C", [1.0, 20.0, 60.0, 90.0])
def test_water_against_iapws(t_C):
    # Source: the iapws package (IAPWS-95 with the IAPWS 2008/2011 transport formulations), 0.101325 MPa.
    # Tolerance 0.5 %: both implement the same IAPWS formulations.
    w = IAPWS95(T=t_C + 273.15, P=0.101325)
    p = air.water_properties(t_C)
    assert_allclose(p.rho_kg_m3, w.rho, rtol=5e-3)
    assert_allclose(p.cp_J_kgK, w.cp * 1000.0, rtol=5e-3)
    assert_allclose(p.k_W_mK, w.k, rtol=5e-3)
    assert_allclose(p.mu_Pa_s, w.mu, rtol=5e-3)


def test_water_20C_conductivity_reference_note():
    # Source: /work/shared/references.md (iapws): k(20 °C, 1 atm) = 0.598 W/mK; tolerance 0.2 %.
    assert_allclose(air.water_properties(20.0).k_W_mK, 0.598, rtol=2e-3)


@pytest.mark.parametrize("t_C", [-40.0, -20.0, -5.0])
def test_sublimation_pressure_against_iapws(t_C):
    # Source: iapws._iapws._Sublimation_Pressure (IAPWS 2011 release, Wagner et al. 2011). Tolerance 1e-6.
    assert_allclose(air.saturation_pressure_Pa(t_C), _Sublimation_Pressure(t_C + 273.15) * 1e6, rtol=1e-6)


@pytest.mark.parametrize("t_C", [0.5, 20.0, 60.0, 100.0])
def test_saturation_pressure_and_latent_heat_against_iapws(t_C):
    # Source: iapws IAPWS95 saturated states (x = 0 and x = 1). Tolerance 0.1 %: same formulation.
    liq = IAPWS95(T=t_C + 273.15, x=0.0)
    vap = IAPWS95(T=t_C + 273.15, x=1.0)
    assert_allclose(air.saturation_pressure_Pa(t_C), liq.P * 1e6, rtol=1e-3)
    assert_allclose(air.latent_heat_J_kg(t_C), (vap.h - liq.h) * 1e3, rtol=1e-3)


def test_sublimation_enthalpy_at_triple_point():
    # Source: Feistel & Wagner (2007), J. Phys. Chem. Ref. Data 36:1, sublimation enthalpy at the triple point
    # 2834.4 kJ/kg (from memory). The library derives it by Clausius–Clapeyron on the sublimation curve with an
    # ideal vapour; tolerance 0.3 % covers the ideal-gas step (non-ideality of vapour at 611 Pa ≈ 0.05 %).
    assert_allclose(air.latent_heat_J_kg(-0.01), 2834.4e3, rtol=3e-3)


def test_water_vapour_diffusivity_against_incropera_a8():
    # Source: Incropera et al., 7th ed., Table A.8: H2O–air at 298 K, D_AB = 0.26e-4 m²/s (from memory).
    # Tolerance 5 %: the table gives two digits (±2 %) and the Marrero–Mason fit scatters ~2 %.
    assert_allclose(air.water_vapour_diffusivity_m2_s(24.85), 0.26e-4, rtol=0.05)


def test_brine_against_handbook():
    # Source: CRC Handbook of Chemistry and Physics, "Concentrative properties of aqueous solutions", NaCl
    # 20 % by mass at 20 °C: density 1.1478 g/cm³, freezing-point depression 16.46 K (from memory).
    # Tolerance 0.5 % on density, 0.3 K on freezing point (fit and table rounding).
    assert_allclose(air.brine_properties(20.0, 0.2).rho_kg_m3, 1147.8, rtol=5e-3)
    assert_allclose(air.brine_freezing_C(0.2), -16.46, atol=0.3)


def test_cache_makes_repeats_cheap():
    air._dry_air.cache_clear()
    air.air_properties(12.341)
    air.air_properties(12.3439)  # rounds to the same 0.01 K
    info = air._dry_air.cache_info()
    assert info.hits >= 1 and info.misses == 1


@pytest.mark.parametrize(
    "call, field",
    [
        (lambda: air.air_properties(-150.0), "air_C"),
        (lambda: air.water_properties(-2.0), "water_C"),
        (lambda: air.brine_properties(-20.0, 0.2), "brine_C"),
        (lambda: air.air_properties(20.0, relative_humidity=1.5), "relative_humidity"),
        (lambda: air.air_properties(150.0, relative_humidity=0.9), "relative_humidity"),
    ],
)
def test_bad_states_name_the_field(call, field):
    with pytest.raises(InvalidInputError) as exc:
        call()
    assert exc.value.field == field
    assert "allowed" in str(exc.value)
