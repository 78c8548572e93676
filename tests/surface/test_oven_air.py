"""Evaporation in hot air: the wet surface against CoolProp's psychrometric wet bulb, signs and bounds."""

import numpy as np
import pytest
from CoolProp.HumidAirProp import HAPropsSI

from procplan.errors import InvalidInputError
from procplan.surface.oven_air import DryingAir, humidity_ratio


@pytest.mark.parametrize(
    ("air_C", "dew_C"),
    [(30.0, 15.0), (60.0, 30.0), (100.0, 40.0), (140.0, 40.0), (180.0, 50.0), (180.0, 10.0), (250.0, 70.0)],
)
def test_wet_surface_sits_on_the_wet_bulb_temperature(air_C, dew_C):
    # Source: CoolProp 6.x HAPropsSI('B', ...) (humid-air wet-bulb, Hyland & Wexler real-gas mixture)
    wb = HAPropsSI("B", "T", air_C + 273.15, "D", dew_C + 273.15, "P", 101325.0) - 273.15
    assert DryingAir(air_C, dew_C, 25.0).wet_bulb_C() == pytest.approx(wb, abs=0.5)


def test_humidity_ratio_against_coolprop():
    # Source: CoolProp HAPropsSI('W', ...) at the dew point
    for td in (5.0, 20.0, 45.0, 70.0):
        w = HAPropsSI("W", "T", 150 + 273.15, "D", td + 273.15, "P", 101325.0)
        assert humidity_ratio(td) == pytest.approx(w, rel=0.01)


def test_flux_signs_and_water_activity():
    air = DryingAir(180.0, 45.0, 30.0)
    wb = air.wet_bulb_C()
    assert air.mass_flux_kg_m2s(wb) > 0 and air.heat_flux_into_W_m2(wb) < 0
    assert air.mass_flux_kg_m2s(30.0) < 0  # below the dew point water condenses on the product
    assert air.mass_flux_kg_m2s(45.0) == pytest.approx(0.0, abs=1e-7)  # at the dew point nothing moves
    f = air.mass_flux_kg_m2s(70.0, np.array([1.0, 0.5, 0.1]))
    assert np.all(np.diff(f) < 0)  # a drier surface evaporates less


def test_bad_air_state_names_the_field():
    with pytest.raises(InvalidInputError, match="dew_point_C"):
        DryingAir(60.0, 80.0, 20.0)
    with pytest.raises(InvalidInputError, match="h_conv_W_m2K"):
        DryingAir(180.0, 40.0, 0.0)


def test_the_one_point_flux_is_the_array_flux():
    # Invariant: the float path of the solvers' inner loop gives the array path's value (same table)
    import numpy as np

    from procplan.surface.oven_air import DryingAir

    air = DryingAir(70.0, 20.0, 16.0)
    for ts in np.linspace(-45.0, 210.0, 517):
        for aw in (0.0, 0.3, 0.93, 1.0):
            one, arr = air.mass_flux_one(float(ts), aw), float(air.mass_flux_kg_m2s(ts, aw))
            assert abs(one - arr) <= 1e-12 * max(abs(arr), 1e-9)
