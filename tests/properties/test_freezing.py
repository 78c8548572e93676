"""Initial freezing point, bound water and the ice-fraction registry."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.properties import Composition
from procplan.properties.freezing import (
    FREEZING_POINT_MODELS,
    ICE_MODELS,
    LATENT_HEAT_WATER_J_KG,
    _tchigeov_cap_C,
    bound_water_schwartzberg,
    ice_fraction,
    ice_fraction_chen,
    ice_fraction_tchigeov,
    initial_freezing_point_C,
    unfrozen_water_fraction,
)


def test_latent_heat_of_water():
    # Source: ASHRAE Handbook—Refrigeration (2006) ch. 9, L0 = 333.6 kJ/kg.
    assert LATENT_HEAT_WATER_J_KG == 333_600.0


@pytest.mark.parametrize("water", [0.55, 0.74, 0.85])
def test_chang_tao_fits_match_the_published_equations(water):
    # Source: Chang & Tao (1981), J. Food Sci. 46:1493, as given in ASHRAE (2006) ch. 9 eqs. (2)–(4), in kelvin:
    # meats 271.18 + 1.47 x; fruits/vegetables 287.56 − 49.19 x + 37.07 x²; juices 120.47 + 327.35 x − 176.49 x².
    assert_allclose(FREEZING_POINT_MODELS["meat"](water), 271.18 + 1.47 * water - 273.15, rtol=1e-12)
    assert_allclose(
        FREEZING_POINT_MODELS["fruit-vegetable"](water),
        np.polyval([37.07, -49.19, 287.56], water) - 273.15,
        rtol=1e-12,
    )
    assert_allclose(
        FREEZING_POINT_MODELS["juice"](water),
        np.polyval([-176.49, 327.35, 120.47], water) - 273.15,
        rtol=1e-12,
    )


BEEF = Composition(water=0.74, protein=0.22, fat=0.03, carbohydrate=0.0, ash=0.01)


def test_default_estimate_is_the_meat_fit_and_a_user_value_wins():
    assert_allclose(initial_freezing_point_C(BEEF), 271.18 + 1.47 * 0.74 - 273.15, rtol=1e-12)
    # Source: ASHRAE (2006) ch. 9 table 3 gives about −1.7 °C for lean beef (from memory); a given value is used as is.
    assert initial_freezing_point_C(BEEF, "juice", freezing_C=-1.7) == -1.7


def test_fit_outside_its_useful_range_asks_for_a_freezing_point():
    # The fruit/vegetable fit gives +0.9 °C at 94 % water (above 0 °C): no estimate is made.
    lettuce = Composition(water=0.94, protein=0.01, fat=0.0, carbohydrate=0.04, fiber=0.01)
    with pytest.raises(InvalidInputError) as err:
        initial_freezing_point_C(lettuce, "fruit-vegetable")
    assert err.value.field == "freezing_C"


@pytest.mark.parametrize("bad", [0.0, 1.5, -50.0, float("nan"), "cold"])
def test_bad_user_freezing_point(bad):
    with pytest.raises(InvalidInputError) as err:
        initial_freezing_point_C(BEEF, freezing_C=bad)
    assert err.value.field == "freezing_C"


def test_unknown_category():
    with pytest.raises(InvalidInputError) as err:
        initial_freezing_point_C(BEEF, "fish")
    assert err.value.field == "category" and "fruit-vegetable" in str(err.value)


def test_bound_water_schwartzberg():
    # Source: Schwartzberg (1976), J. Food Sci. 41:152 (ASHRAE 2006 ch. 9): x_b ≈ 0.4 x_protein.
    assert_allclose(bound_water_schwartzberg(0.15), 0.06, rtol=1e-12)
    assert bound_water_schwartzberg(0.9, water=0.1) == 0.1


def test_ice_fraction_of_the_handbook_beef_carcass_example():
    # Source: ASHRAE Handbook—Refrigeration (2006) ch. 9, example 1 (from memory): 150 kg beef carcass,
    # 49 % water, 15 % protein, initial freezing point −2.2 °C, frozen to −20 °C: x_b = 0.4·0.15 = 0.06,
    # ice 57.4 kg and unfrozen water 16.1 kg. Tolerance 0.3 %: the example rounds to 0.1 kg.
    xb = bound_water_schwartzberg(0.15)
    x_ice = float(ice_fraction("chen", -20.0, -2.2, 0.49, xb))
    assert_allclose(150 * x_ice, 57.4, rtol=0.003)
    assert_allclose(150 * float(unfrozen_water_fraction(0.49, x_ice)), 16.1, rtol=0.003)


def test_tchigeov_matches_the_published_equation_where_not_capped():
    # Source: Tchigeov (1979), ASHRAE (2006) ch. 9: x_ice = 1.105 x_w / (1 + 0.7138/ln(t_f − t + 1)).
    t = np.array([-1.5, -3.0, -10.0, -25.0])
    expected = 1.105 * 0.8 / (1 + 0.7138 / np.log(-1.0 - t + 1))
    assert_allclose(ice_fraction_tchigeov(t, -1.0, 0.8, 0.0), expected, rtol=1e-12)


def test_chen_and_tchigeov_agree_for_lean_beef():
    # Source: Fricke & Becker (2001), HVAC&R Research 7(4): both models fit measured ice fractions and rank
    # first and second. Independent-method check: for lean beef (t_f −1.7 °C) the two published models
    # differ by 0.119, 0.078, 0.055, 0.037 kg/kg at −5, −10, −20, −30 °C (Tchigeov higher); the bound
    # 0.125 kg/kg (17 % of the water) is that measured spread, and the spread must shrink with depth.
    t = np.array([-5.0, -10.0, -20.0, -30.0])
    xb = bound_water_schwartzberg(0.22)
    chen = ice_fraction_chen(t, -1.7, 0.74, xb)
    tch = ice_fraction_tchigeov(t, -1.7, 0.74, xb)
    assert_allclose(chen, tch, atol=0.125)
    assert np.all(np.diff(np.abs(tch - chen)) < 0)


@pytest.mark.parametrize("name", list(ICE_MODELS))
def test_ice_registry_through_the_dispatcher(name):
    t = np.linspace(-40, 10, 51)
    direct = {"chen": ice_fraction_chen, "tchigeov": ice_fraction_tchigeov}[name]
    assert_allclose(ice_fraction(name, t, -1.2, 0.8, 0.05), direct(t, -1.2, 0.8, 0.05), rtol=0)


@pytest.mark.parametrize("name", list(ICE_MODELS))
def test_ice_slope_is_the_derivative_of_the_fraction(name):
    # Independent method: central finite differences of the fraction (away from the kinks).
    model = ICE_MODELS[name]
    t = np.array([-35.0, -12.0, -4.0, -1.6, -1.3])
    h = 1e-6
    fd = (model.fraction(t + h, -1.2, 0.8, 0.05) - model.fraction(t - h, -1.2, 0.8, 0.05)) / (2 * h)
    assert_allclose(model.slope(t, -1.2, 0.8, 0.05), fd, rtol=1e-5, atol=1e-9)


@pytest.mark.parametrize("name", list(ICE_MODELS))
def test_ice_fraction_bounds(name):
    t = np.linspace(-40, 150, 2001)
    x = ice_fraction(name, t, -2.0, 0.7, 0.09)
    assert np.all(x[t >= -2.0] == 0.0)
    assert np.all((x >= 0) & (x <= 0.7 - 0.09 + 1e-15))
    assert np.all(np.diff(x) <= 1e-15)  # never more ice when warmer


def test_tchigeov_cap_temperature():
    t_cap = _tchigeov_cap_C(-1.7, 0.74, 0.088)
    assert_allclose(ice_fraction_tchigeov(t_cap, -1.7, 0.74, 0.088), 0.74 - 0.088, rtol=1e-12)
    assert_allclose(
        1.105 * 0.74 / (1 + 0.7138 / np.log(-1.7 - (t_cap + 1e-3) + 1)), 0.652, rtol=1e-3
    )  # just above the cap the uncapped equation is just below it


def test_unknown_ice_model():
    with pytest.raises(InvalidInputError) as err:
        ice_fraction("pham", -10.0, -1.0, 0.8, 0.0)
    assert err.value.field == "ice_model"
