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
    # so 0.128 W/mK at 10 % (from memory). Bed porosity from "Moisture-dependent physical properties of wheat",
    # Int. Agrophysics 17(4) (2003) 207–211, abstract: bulk density 740 and true density 1240 kg/m³ for dry
    # wheat, ε = 1 − 740/1240 = 0.40. Tolerance 15 %: the spread between published bulk-grain measurements
    # (from memory); the source's own stated scatter could not be read.
    # Kernel: Choi–Okos from a wheat composition at 10 % water (typical values, from memory).
    kernel = Composition.from_mapping(
        {"water": 0.10, "protein": 0.13, "fat": 0.02, "carbohydrate": 0.68, "fiber": 0.055, "ash": 0.015}
    )
    table = property_table(kernel, freezing_C=-30.0, conductivity_model="parallel", category="meat")
    k_kernel = float(table.conductivity(20.0))
    measured = 0.1170 + 0.00113 * 10.0
    eps = 1 - 740.0 / 1240.0
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


# Source: Yu, D.U., Shrestha, B.L., Baik, O.D. (2015), Thermal conductivity, specific heat, thermal diffusivity,
# and emissivity of stored canola seeds with their temperature and moisture content, J. Food Engineering 165,
# 156–165, abstract (read): MC 5–11 % w.b., 40–90 °C; bulk density 654.0–664.8 and particle density 1047–1131
# kg/m³; k of the seeds at bulk density (the bed) 0.06–0.13 and at particle density (the seed itself) 0.15–0.25
# W/m°C, both increasing with temperature and MC, so the low ends pair at 5 % / 40 °C and the high ends at
# 11 % / 90 °C. Porosity ε = 1 − ρ_b/ρ_p over the stated densities: 0.365 to 0.422. The abstract states no
# scatter; its values are given to 0.01 W/m°C, so ±0.005 W/m°C is the resolution used. Air: the project's
# conductivity_air at the temperature.
CANOLA_VOIDS = np.array([1 - 664.8 / 1047.0, 1 - 654.0 / 1131.0])


@pytest.mark.parametrize(
    "k_seed, T_C, k_bed", [(0.15, 40.0, 0.06), (0.25, 90.0, 0.13)], ids=["5 %, 40 °C", "11 %, 90 °C"]
)
def test_bulk_canola_lies_between_the_series_and_parallel_bounds(k_seed, T_C, k_bed):
    # The dry bed at 40 °C lies only just above the series bound (0.057 W/mK at ε 0.365): within the abstract's
    # resolution of it.
    ka = float(conductivity_air(T_C))
    assert np.all(conductivity_series_bound(k_seed, CANOLA_VOIDS, ka) < k_bed)
    assert np.all(k_bed < conductivity_parallel_bound(k_seed, CANOLA_VOIDS, ka))


def test_bulk_canola_at_11_percent_and_90_C_lies_within_the_default_models_band():
    # The measured bed (0.13 ± 0.005 W/m°C) lies within the effective-medium values over the stated porosity
    # range (0.127 to 0.142 W/mK), and above the safe lower value (Maxwell–Eucken, air continuous).
    ka = float(conductivity_air(90.0))
    emt = conductivity_emt(0.25, CANOLA_VOIDS, ka)
    assert emt.min() - 0.005 <= 0.13 <= emt.max() + 0.005
    assert np.all(conductivity_me_air_continuous(0.25, CANOLA_VOIDS, ka) < 0.13)


def test_bulk_canola_at_5_percent_and_40_C_lies_below_every_two_phase_model_the_code_offers():
    # A limit of the models, kept visible: the dry bed at 40 °C (0.06 ± 0.005 W/m°C) lies below even the lower
    # Hashin–Shtrikman bound of its seeds and air (0.071 to 0.078 W/mK), so both the default and the safe lower
    # value overpredict it (EMT by 40 to 50 %): contact resistance between dry, hard seeds, which no model here
    # carries. The unsafe direction: a too high k shortens the centre's time; the packing module says so.
    ka = float(conductivity_air(40.0))
    for name, model in PACKED_CONDUCTIVITY_MODELS.items():
        if name != "series":  # the absolute lower bound, which the bed respects (see the test above)
            assert np.all(model(0.15, CANOLA_VOIDS, ka) > 0.06 + 0.005), name
    assert np.all(conductivity_emt(0.15, CANOLA_VOIDS, ka) / 0.06 - 1 > 0.35)


@settings(max_examples=50, deadline=None)
@given(
    st.floats(0.05, 0.5),
    st.integers(1, 200),
    st.floats(0.021, 0.89),
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


def _unit_cell_conductivity(n: int, m: int, k_inside: float, k_outside: float) -> float:
    """Effective conductivity of a simple cubic array of cubes (side m/n of the cell) by finite volumes.

    One periodic cell, heat flowing along z between faces at 1 and 0, the side faces adiabatic (symmetry of the
    array); harmonic means at the faces, which are exact for the cube aligned with the grid.
    """
    import scipy.sparse as sp
    import scipy.sparse.linalg as spl

    k = np.full((n, n, n), k_outside)
    o = (n - m) // 2
    k[o : o + m, o : o + m, o : o + m] = k_inside
    h = 1.0 / n
    idx = np.arange(n**3).reshape(n, n, n)
    rows, cols, vals = [], [], []
    diag = np.zeros(n**3)
    for ax in range(3):
        lo = [slice(None)] * 3
        hi = [slice(None)] * 3
        lo[ax], hi[ax] = slice(0, n - 1), slice(1, n)
        k1, k2 = k[tuple(lo)], k[tuple(hi)]
        g = (2 * k1 * k2 / (k1 + k2) / h**2).ravel()
        i1, i2 = idx[tuple(lo)].ravel(), idx[tuple(hi)].ravel()
        rows += [i1, i2]
        cols += [i2, i1]
        vals += [-g, -g]
        np.add.at(diag, i1, g)
        np.add.at(diag, i2, g)
    b = np.zeros(n**3)
    g0, g1 = 2 * k[:, :, 0].ravel() / h**2, 2 * k[:, :, -1].ravel() / h**2
    np.add.at(diag, idx[:, :, 0].ravel(), g0)
    np.add.at(diag, idx[:, :, -1].ravel(), g1)
    b[idx[:, :, 0].ravel()] += g0
    all_i = np.arange(n**3)
    a = sp.csc_matrix(
        (np.concatenate([*vals, diag]), (np.concatenate([*rows, all_i]), np.concatenate([*cols, all_i])))
    )
    t = spl.spsolve(a, b).reshape(n, n, n)
    return float((2 * k[:, :, 0] / h * (1 - t[:, :, 0])).sum() * h * h)


def test_a_numerically_solved_array_lies_at_the_bound_its_structure_belongs_to():
    # Independent method: a cubic array is isotropic, so its conductivity lies between the Hashin–Shtrikman
    # bounds (Carson et al. 2005); pieces that do not touch (air continuous) lie just above the lower bound,
    # far below EMT; air pockets in a continuous product lie just below the upper bound. This is why the run
    # reports the lower value beside EMT: a case whose pieces stand apart cools like the lower bound.
    kp, ka, n, m = 0.5, 0.025, 20, 16
    eps = 1 - (m / n) ** 3  # 0.488
    apart = _unit_cell_conductivity(n, m, kp, ka)
    lo = float(conductivity_me_air_continuous(kp, eps, ka))
    assert lo < apart < 1.1 * lo < float(conductivity_emt(kp, eps, ka))
    pockets = _unit_cell_conductivity(n, m, ka, kp)  # air cubes (fraction 0.512) in product
    hi = float(conductivity_me_product_continuous(kp, 1 - eps, ka))
    assert float(conductivity_emt(kp, 1 - eps, ka)) < 0.9 * hi < pockets < hi
