"""Evaporation by the Chilton–Colburn analogy: wet-bulb balance, equilibrium, and carcass chilling weight loss."""

import numpy as np
import pytest
from CoolProp.CoolProp import HAPropsSI
from numpy.testing import assert_allclose
from scipy.optimize import brentq

from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.surface import surface_coefficient
from procplan.surface.moisture import (
    evaporation_flux_kg_m2s,
    mass_transfer_coefficient_chilton_colburn,
    weight_loss_percent,
)


@pytest.mark.parametrize("air_C, rh", [(5.0, 0.8), (20.0, 0.6), (30.0, 0.5)])
def test_wet_surface_balance_is_the_wet_bulb_temperature(air_C, rh):
    # Source: CoolProp HAPropsSI('B', ...) (thermodynamic wet-bulb, ASHRAE RP-1485). A wet surface with no other
    # heat input settles where h (T∞ − T_s) = n″ h_fg (Incropera 7th ed., §6.7.2, the psychrometric balance).
    # Tolerance 0.6 K: the analogy's psychrometric ratio Le^⅔ ≈ 0.91 differs from the adiabatic-saturation
    # assumption (ratio 1) behind the thermodynamic wet bulb; measured differences 0.08–0.44 K here.
    h = 20.0

    def balance(ts):
        return h * (air_C - ts) - evaporation_flux_kg_m2s(h, ts, air_C, rh).heat_flux_W_m2

    ts = brentq(balance, air_C - 30.0, air_C)
    wet_bulb = HAPropsSI("B", "T", air_C + 273.15, "P", 101325.0, "R", rh) - 273.15
    assert_allclose(ts, wet_bulb, atol=0.6)


def test_lewis_number_of_water_vapour_in_air():
    # Source: Incropera 7th ed., §6.7 (from memory): for water vapour in air Le ≈ 0.85–0.9 near room temperature
    # (α = 22.5e-6 and D_AB = 0.26e-4 m²/s at 300 K, Tables A.4 and A.8, give 0.87). Tolerance 3 %.
    _, le = mass_transfer_coefficient_chilton_colburn(10.0, 26.85)
    assert_allclose(le, 22.5e-6 / 0.26e-4, rtol=0.03)


def test_equilibrium_and_condensation_sign():
    # Independent: saturated air at the surface temperature gives no flux; a surface below the dew point
    # gains water (negative flux); a_w lowers the loss.
    assert abs(evaporation_flux_kg_m2s(15.0, 10.0, 10.0, 1.0).mass_flux_kg_m2s) < 1e-12
    assert evaporation_flux_kg_m2s(15.0, 2.0, 10.0, 0.9).mass_flux_kg_m2s < 0
    wet = evaporation_flux_kg_m2s(15.0, 20.0, 2.0, 0.85)
    dry = evaporation_flux_kg_m2s(15.0, 20.0, 2.0, 0.85, water_activity=0.95)
    assert 0 < dry.mass_flux_kg_m2s < wet.mass_flux_kg_m2s
    assert_allclose(wet.heat_flux_W_m2, wet.mass_flux_kg_m2s * wet.latent_heat_J_kg, rtol=1e-12)


def _slab_surface_history(h_W_m2K, half_thickness_m, k, rho, cp, t0, t_inf, time_s, terms=60):
    """Surface temperature of a plane wall with convection: exact series (Incropera 7th ed., eq. 5.39a, x* = 1)."""
    bi = h_W_m2K * half_thickness_m / k
    z = np.array(
        [
            brentq(lambda x: x * np.tan(x) - bi, n * np.pi + 1e-9, n * np.pi + np.pi / 2 - 1e-9)
            for n in range(terms)
        ]
    )
    c = 4 * np.sin(z) / (2 * z + np.sin(2 * z))
    fo = np.maximum(k / (rho * cp) * np.asarray(time_s) / half_thickness_m**2, 1e-4)
    theta = (c[None, :] * np.exp(-(z[None, :] ** 2) * fo[:, None]) * np.cos(z)[None, :]).sum(axis=1)
    return t_inf + (t0 - t_inf) * theta


def test_beef_carcass_chilling_weight_loss_against_ashrae_range():
    # Source: ASHRAE Handbook—Refrigeration, meat-products chapter (from memory): chilling losses of beef sides
    # about 1–2.5 % of the warm weight in the first 24 h of conventional spray-free chilling.
    # Model: a beef side as a 200 mm slab (k 0.45 W/mK, ρ 1060 kg/m³, c_p 3500 J/kgK, 38 °C at the start; assumed
    # typical values), air 1 °C, 90 % RH, 1 m/s, 1 m flow length; surface temperature from the exact series
    # solution with h_conv + h_rad; unwrapped surface a_w = 0.99. Tolerance: accept 0.5–3.5 %. Geometry, a_w
    # and air data of real chill rooms vary that much, and the model ignores surface drying (lowers loss) and
    # evaporative cooling of the surface (lowers loss); a unit error (per hour vs per second, g vs kg) or a
    # wrong analogy factor (ρ c_p omitted) misses this band by orders of magnitude.
    g = Geometry("slab", thickness_m=0.2, length_m=1.0, width_m=0.6)
    r = surface_coefficient(
        "cold-room", g, medium_C=1.0, surface_C=15.0, air_speed_m_s=1.0, relative_humidity=0.9
    )
    t = np.linspace(0.0, 24 * 3600.0, 400)
    ts = _slab_surface_history(r.h_conv_W_m2K + r.h_rad_W_m2K, 0.1, 0.45, 1060.0, 3500.0, 38.0, 1.0, t)
    loss = weight_loss_percent(
        t,
        ts,
        air_C=1.0,
        relative_humidity=0.9,
        h_conv_W_m2K=r.h_conv_W_m2K,
        area_m2=2.0,
        mass_kg=1060.0 * 0.2,
        water_activity=0.99,
    )
    assert 0.5 <= loss <= 3.5


def test_weight_loss_integration_against_constant_flux():
    # Independent: with a constant surface temperature the trapezoidal integral is exact, loss = A n″ t / m.
    n = evaporation_flux_kg_m2s(12.0, 15.0, 2.0, 0.8).mass_flux_kg_m2s
    loss = weight_loss_percent(
        [0.0, 1800.0, 7200.0],
        [15.0, 15.0, 15.0],
        air_C=2.0,
        relative_humidity=0.8,
        h_conv_W_m2K=12.0,
        area_m2=0.05,
        mass_kg=1.2,
    )
    assert_allclose(loss, 100 * 0.05 * n * 7200.0 / 1.2, rtol=1e-12)


def test_bad_input():
    with pytest.raises(InvalidInputError) as exc:
        evaporation_flux_kg_m2s(10.0, 20.0, 2.0, 1.3)
    assert exc.value.field == "relative_humidity" and "[0, 1]" in str(exc.value)
    with pytest.raises(InvalidInputError) as exc:
        weight_loss_percent(
            [0.0, 10.0], [5.0], air_C=2.0, relative_humidity=0.8, h_conv_W_m2K=10.0, area_m2=1.0, mass_kg=1.0
        )
    assert exc.value.field == "surface_C"
    with pytest.raises(InvalidInputError) as exc:
        weight_loss_percent(
            [10.0, 0.0],
            [5.0, 5.0],
            air_C=2.0,
            relative_humidity=0.8,
            h_conv_W_m2K=10.0,
            area_m2=1.0,
            mass_kg=1.0,
        )
    assert exc.value.field == "time_s"
