"""Air in a food: overrun, density and Maxwell–Eucken conductivity, and how the product table carries them."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.properties import Composition, food_properties, property_table
from procplan.properties.mixing import (
    conductivity_maxwell_eucken,
    conductivity_parallel,
    conductivity_series,
)
from procplan.properties.porosity import (
    POROSITY_RANGE,
    conductivity_air,
    conductivity_maxwell_eucken_porous,
    density_porous,
    overrun_from_porosity,
    porosity_from_overrun,
)

ICE_CREAM_MIX = Composition(water=0.61, protein=0.04, fat=0.12, carbohydrate=0.22, ash=0.01)


# --- invariants ------------------------------------------------------------------------------------


def test_maxwell_eucken_equals_the_matrix_without_air_and_lies_between_series_and_parallel():
    eps = np.linspace(0.0, POROSITY_RANGE[1], 31)[:, None, None]
    k_m = np.array([0.1, 0.3, 0.5, 2.2])[None, :, None]  # bread crumb … frozen food
    k_a = np.array([0.018, 0.026, 0.035])[None, None, :]
    k = conductivity_maxwell_eucken_porous(k_m, eps, k_a)
    series = conductivity_series({"m": 1 - eps, "a": eps}, {"m": k_m, "a": k_a})
    parallel = conductivity_parallel({"m": 1 - eps, "a": eps}, {"m": k_m, "a": k_a})
    assert np.all(series <= k + 1e-15) and np.all(k <= parallel + 1e-15)
    assert_allclose(k[0], np.broadcast_to(k_m[0], k[0].shape), rtol=1e-15)
    # more air, less conduction
    assert np.all(np.diff(k, axis=0) < 0)


def test_porous_form_agrees_with_the_multiphase_maxwell_eucken_with_the_matrix_continuous():
    # Independent method: the mixing module's Eucken (1940) multi-phase form, the matrix taking the place
    # of the continuous phase ("water") and air the one dispersed phase.
    eps = np.linspace(0.0, 0.9, 19)
    k_m, k_a = 0.47, 0.025
    multi = conductivity_maxwell_eucken({"water": 1 - eps, "air": eps}, {"water": k_m, "air": k_a})
    assert_allclose(conductivity_maxwell_eucken_porous(k_m, eps, k_a), multi, rtol=1e-12)


def test_overrun_and_porosity_convert_both_ways():
    # Definition: overrun is the volume added to the mix, so 100 % overrun is half the volume air.
    assert porosity_from_overrun(100.0) == pytest.approx(0.5)
    overrun = np.array([0.0, 25.0, 100.0, 300.0])
    assert_allclose(overrun_from_porosity(porosity_from_overrun(overrun)), overrun, rtol=1e-12)
    with pytest.raises(InvalidInputError, match="overrun_percent"):
        porosity_from_overrun(-5.0)


# --- published values --------------------------------------------------------------------------------


def test_crumb_density_falls_linearly_to_zero_at_full_porosity_as_measured():
    # Source: Zanoni et al. (1995), "Determination of the thermal diffusivity of bread as a function of
    # porosity", J. Food Eng. 26(4), 497–510, abstract: measured crumb apparent density
    # rho = 979 − 9.90 ε [kg/m³], ε in %. The model rho = (1 − ε) rho_matrix is a line through zero at
    # ε = 100 %: the fit's slope × 100 must equal its intercept (the air-free crumb). The abstract states no
    # scatter; its coefficients carry three figures, so the tolerance is 1.5 % of the intercept.
    intercept, slope = 979.0, 9.90
    eps_percent = np.array([0.0, 60.0, 70.0, 80.0, 90.0])
    measured_fit = intercept - slope * eps_percent
    model = density_porous(intercept, eps_percent / 100.0)
    assert_allclose(model, measured_fit, atol=0.015 * intercept)


def test_air_conductivity_table_matches_coolprop():
    # Independent method: CoolProp's air (Lemmon et al. 2004 transport) at 1 atm; Table A.4 of Incropera
    # et al. agrees with it within 2 % over −40…150 °C, far finer than the air's weight in Maxwell–Eucken.
    cp = pytest.importorskip("CoolProp.CoolProp")
    t = np.array([-40.0, -18.0, 0.0, 20.0, 75.0, 150.0])
    ref = np.array([cp.PropsSI("L", "T", x + 273.15, "P", 101325.0, "Air") for x in t])
    assert_allclose(conductivity_air(t), ref, rtol=0.02)


# --- the product table ----------------------------------------------------------------------------


def test_air_lowers_density_and_conductivity_and_leaves_heat_per_kg_unchanged():
    t = np.array([-30.0, -18.0, -5.0, 5.0, 20.0])
    mix = food_properties(ICE_CREAM_MIX, t, freezing_C=-2.7)
    aerated = food_properties(ICE_CREAM_MIX, t, freezing_C=-2.7, porosity=0.5)
    assert_allclose(aerated.rho_kg_m3, 0.5 * mix.rho_kg_m3, rtol=1e-12)
    expected_k = conductivity_maxwell_eucken_porous(mix.k_W_mK, 0.5, conductivity_air(t))
    assert_allclose(aerated.k_W_mK, expected_k, rtol=1e-12)
    assert_allclose(aerated.enthalpy_J_kg, mix.enthalpy_J_kg, rtol=1e-12)
    assert_allclose(aerated.cp_J_kgK, mix.cp_J_kgK, rtol=1e-12)
    assert_allclose(aerated.ice_fraction, mix.ice_fraction, rtol=1e-12)
    # the solver's table carries the same air
    table = property_table(ICE_CREAM_MIX, freezing_C=-2.7, porosity=0.5)
    assert_allclose(table.density(t), aerated.rho_kg_m3, rtol=1e-3)
    assert_allclose(table.conductivity(t), aerated.k_W_mK, rtol=1e-2)
    assert table.extra["porosity"] == 0.5 and "porosity 0.5" in table.source


@pytest.mark.parametrize("bad", [-0.1, 0.95, float("nan"), "lots"])
def test_porosity_outside_its_range_names_the_field_and_the_range(bad):
    with pytest.raises(InvalidInputError) as err:
        property_table(ICE_CREAM_MIX, freezing_C=-2.7, porosity=bad)
    assert "porosity" in str(err.value) and "[0, 0.9]" in str(err.value)
