"""Effective properties of packed cases: bounds, the effective-medium root, the registry, a measured bed."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.optimize import brentq

from procplan.errors import InvalidInputError
from procplan.properties import Composition, property_table
from procplan.properties.packing import (
    PACKED_CONDUCTIVITY_MODELS,
    conductivity_emt,
    conductivity_me_air_continuous,
    conductivity_me_product_continuous,
    conductivity_parallel_bound,
    conductivity_series_bound,
    packed_conductivity,
    packed_property_table,
    void_fraction_from_count,
)
from procplan.properties.porosity import conductivity_air
from procplan.properties.table import PropertyTable

k_product = st.floats(0.05, 3.0)
k_air = st.floats(0.01, 0.05)
void = st.floats(0.02, 0.9)


@settings(max_examples=200, deadline=None)
@given(k_product, void, k_air)
def test_models_lie_between_series_and_parallel_in_hashin_shtrikman_order(kp, eps, ka):
    # Invariant (Carson et al. 2005, Int. J. Heat Mass Transfer 48, 2150): series ≤ ME air continuous (lower
    # Hashin–Shtrikman bound) ≤ EMT ≤ ME product continuous (upper HS bound) ≤ parallel, for k_p ≥ k_a.
    s = float(conductivity_series_bound(kp, eps, ka))
    lo = float(conductivity_me_air_continuous(kp, eps, ka))
    emt = float(conductivity_emt(kp, eps, ka))
    hi = float(conductivity_me_product_continuous(kp, eps, ka))
    p = float(conductivity_parallel_bound(kp, eps, ka))
    tol = 1e-12
    assert s <= lo + tol <= emt + 2 * tol <= hi + 3 * tol <= p + 4 * tol


@settings(max_examples=100, deadline=None)
@given(k_product, void, k_air)
def test_emt_is_the_root_of_landauers_equation(kp, eps, ka):
    # Independent method: the root of Σ v_i (k_i − k)/(k_i + 2k) = 0 found numerically (Landauer 1952).
    def f(k):
        return (1 - eps) * (kp - k) / (kp + 2 * k) + eps * (ka - k) / (ka + 2 * k)

    assert_allclose(float(conductivity_emt(kp, eps, ka)), brentq(f, ka, kp, xtol=1e-14), rtol=1e-9)


def test_maxwell_forms_match_maxwells_dilute_limit():
    # Maxwell (1904): a dilute suspension of spheres (volume fraction v) of k_d in k_c gives
    # k/k_c = 1 + 3 v (k_d − k_c)/(k_d + 2 k_c) + O(v²); both Maxwell–Eucken forms reproduce it.
    v = 1e-4
    assert_allclose(
        float(conductivity_me_product_continuous(0.5, v, 0.025)) / 0.5,
        1 + 3 * v * (0.025 - 0.5) / (0.025 + 1.0),
        atol=1e-7,
    )
    assert_allclose(
        float(conductivity_me_air_continuous(0.5, 1 - v, 0.025)) / 0.025,
        1 + 3 * v * (0.5 - 0.025) / (0.5 + 0.05),
        atol=1e-7,
    )


@pytest.mark.parametrize("name", sorted(PACKED_CONDUCTIVITY_MODELS))
def test_registry_dispatches_to_each_model(name):
    kp, eps, ka = np.array([0.5, 2.0]), 0.35, 0.024
    assert_allclose(packed_conductivity(name, kp, eps, ka), PACKED_CONDUCTIVITY_MODELS[name](kp, eps, ka))


def test_unknown_model_names_the_field():
    with pytest.raises(InvalidInputError, match="packing.conductivity_model"):
        packed_conductivity("krischer", 0.5, 0.4, 0.025)


def test_bulk_wheat_matches_the_measured_bed_conductivity():
    # Source: Kazarian, E.A. & Hall, C.W. (1965), Thermal properties of grain, Trans. ASAE 8(1), 33–37
    # (also ASAE D243): soft white wheat in bulk, k = 0.1170 + 0.00113 M W/mK, M the moisture in % wet basis,
    # so 0.128 W/mK at 10 % (from memory). Bulk porosity of wheat about 0.41 (Mohsenin, Physical Properties
    # of Plant and Animal Materials, from memory). Tolerance 15 %: the spread between published bulk-grain
    # measurements (from memory); the source's own stated scatter could not be read.
    # Kernel: Choi–Okos from a wheat composition at 10 % water (typical values, from memory).
    kernel = Composition.from_mapping(
        {"water": 0.10, "protein": 0.13, "fat": 0.02, "carbohydrate": 0.68, "fiber": 0.055, "ash": 0.015}
    )
    table = property_table(kernel, freezing_C=-30.0, conductivity_model="parallel", category="meat")
    k_kernel = float(table.conductivity(20.0))
    measured = 0.1170 + 0.00113 * 10.0
    eps = 0.41
    ka = float(conductivity_air(20.0))
    emt = float(conductivity_emt(k_kernel, eps, ka))
    assert abs(emt / measured - 1) < 0.15
    # the measured bed lies between the Hashin–Shtrikman bounds of its kernels and air
    assert (
        conductivity_me_air_continuous(k_kernel, eps, ka)
        < measured
        < conductivity_me_product_continuous(k_kernel, eps, ka)
    )
    # and the default model's table gives the same value
    packed = packed_property_table(table, eps)
    assert_allclose(float(packed.conductivity(20.0)), emt, rtol=1e-9)


@settings(max_examples=50, deadline=None)
@given(
    st.floats(0.05, 0.5),
    st.integers(1, 200),
    st.floats(0.02, 0.9),
    st.floats(800.0, 1200.0),
    st.floats(0.2, 2.0),
)
def test_case_mass_and_heat_are_the_pieces(piece_l_m, n, eps, rho, k):
    # Balance: the case's density × volume is the pieces' mass, and its enthalpy per kg that of the product.
    piece_v = (piece_l_m / 10) ** 3
    case_v = n * piece_v / (1 - eps)
    got_eps = void_fraction_from_count(piece_v, n, case_v)
    assert_allclose(got_eps, eps, rtol=1e-9, atol=1e-12)
    piece = PropertyTable.constant(k, rho, 3600.0)
    case = packed_property_table(piece, got_eps)
    assert_allclose(case.mass_density_kg_m3 * case_v, n * piece_v * rho, rtol=1e-9)
    assert_allclose(case.enthalpy(7.0) - case.enthalpy(2.0), piece.enthalpy(7.0) - piece.enthalpy(2.0))
    assert float(case.conductivity(5.0)) < k


def test_pieces_that_do_not_fit_name_the_count():
    with pytest.raises(InvalidInputError, match="packing.pieces_per_case") as e:
        void_fraction_from_count(1e-3, 12, 1e-2)
    assert "void fraction" in str(e.value)


@settings(max_examples=50, deadline=None)
@given(st.one_of(st.floats(-1.0, 0.0199), st.floats(0.9001, 5.0), st.just(float("nan"))))
def test_bad_void_fraction_is_refused(eps):
    piece = PropertyTable.constant(0.5, 1000.0, 3600.0)
    with pytest.raises(InvalidInputError, match="packing.void_fraction"):
        packed_property_table(piece, eps)
