"""Fick's second law through the series core: Crank's series, short-time forms, mass balance, bounds, inverses."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import integrate, optimize, special

from procplan.conduction import diffusion
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry

D = 2e-10  # m²/s, the order of salt in meat and cheese
HALF = 0.01  # m, half-thickness or radius
FO = np.geomspace(0.01, 1.0, 25)  # mass Fourier numbers D t / L² on the half-thickness or radius
TIMES = FO * HALF**2 / D

SHAPES = {
    "slab": Geometry("slab", thickness_m=2 * HALF),
    "cylinder": Geometry("cylinder", diameter_m=2 * HALF),
    "sphere": Geometry("sphere", diameter_m=2 * HALF),
}


# --- Crank's series with a constant surface concentration -----------------------------------------------------
def crank_sheet_4_18(fo_half: np.ndarray) -> np.ndarray:
    # Source: Crank, The Mathematics of Diffusion, 2nd ed., 1975, eq. 4.18 (p. 48), written for a sheet of
    # thickness l: M_t/M_∞ = 1 − Σ 8/((2n+1)²π²) exp(−D(2n+1)²π² t/l²). Convention checked against the PMC
    # reproduction of eq. 4.18 (doi:10.3390/polym16152158, code comment "L: Sheet thickness" with /L²) and
    # polykin's uptake_sheet (half-thickness a, exponent /(4a²), citing Crank p. 48): l is the FULL thickness,
    # so with the half-thickness L = l/2, D t/l² = Fo/4.
    n = np.arange(0, 400)[:, None]
    k = (2 * n + 1) ** 2
    return 1.0 - np.sum(8.0 / (k * np.pi**2) * np.exp(-k * np.pi**2 * fo_half / 4.0), axis=0)


def crank_cylinder_5_23(fo: np.ndarray) -> np.ndarray:
    # Crank 1975, eq. 5.23 (from memory): M_t/M_∞ = 1 − Σ 4/(a²α_n²) exp(−D α_n² t), J0(a α_n) = 0; the roots
    # a α_n are taken from scipy's Bessel zeros, not from the project's eigen-solver.
    aa = special.jn_zeros(0, 400)[:, None]
    return 1.0 - np.sum(4.0 / aa**2 * np.exp(-(aa**2) * fo), axis=0)


def crank_sphere_6_20(fo: np.ndarray) -> np.ndarray:
    # Source: Crank 1975, eq. 6.20 (p. 91), as reproduced in doi:10.3390/polym16152158 (code, "a: Radius"):
    # M_t/M_∞ = 1 − (6/π²) Σ (1/n²) exp(−D n²π² t/a²).
    n = np.arange(1, 400)[:, None]
    return 1.0 - 6.0 / np.pi**2 * np.sum(np.exp(-(n**2) * np.pi**2 * fo) / n**2, axis=0)


CRANK = {"slab": crank_sheet_4_18, "cylinder": crank_cylinder_5_23, "sphere": crank_sphere_6_20}


@pytest.mark.parametrize("kind", list(SHAPES))
def test_uptake_with_constant_surface_matches_crank_series(kind):
    # Tolerance: the brief's 0.5 % over Fo 0.01…1; the two are the same exact series, so the measured deviation
    # is at the series truncation (1e-8), and the test also holds at 1e-6 relative.
    got = diffusion.uptake_fraction(SHAPES[kind], D, TIMES)
    want = CRANK[kind](FO)
    assert_allclose(got, want, rtol=5e-3)
    assert_allclose(got, want, rtol=1e-6)


def test_sheet_centre_matches_crank_4_17():
    # Crank 1975, eq. 4.17 (profile, from memory; also polykin's profile_sheet citing Crank p. 47):
    # (C − C_0)/(C_s − C_0) = 1 − (4/π) Σ (−1)^n/(2n+1) exp(−D(2n+1)²π² t/(4a²)) cos((2n+1)π x/(2a)), at x = 0.
    n = np.arange(0, 400)[:, None]
    want = 1.0 - 4.0 / np.pi * np.sum(
        (-1.0) ** n / (2 * n + 1) * np.exp(-((2 * n + 1) ** 2) * np.pi**2 * FO / 4.0), axis=0
    )
    got = diffusion.centre_concentration(SHAPES["slab"], D, 10.0, 110.0, TIMES)
    assert_allclose((got - 10.0) / 100.0, want, atol=1e-7)


# --- short-time forms (an independent method: the semi-infinite solid, no eigenvalues) ------------------------
@pytest.mark.parametrize(
    ("kind", "short", "fo_max", "rtol"),
    [
        # Source: Crank 1975, eq. 4.24's leading term, M_t/M_∞ = 4 (D t/l²)^½/√π for full thickness l
        # = 2 (Fo/π)^½ on the half-thickness; the neglected ierfc terms are < 1e-10 for Fo <= 0.05.
        ("slab", lambda f: 2.0 * np.sqrt(f / np.pi), 0.05, 1e-8),
        # Crank 1975, eq. 6.21's leading terms (from memory): 6 (Fo/π)^½ − 3 Fo; neglected terms < 1e-10 at Fo<=0.05.
        ("sphere", lambda f: 6.0 * np.sqrt(f / np.pi) - 3.0 * f, 0.05, 1e-8),
        # Cylinder (Crank 1975, eq. 5.24's expansion, from memory): 4 (Fo/π)^½ − Fo − (Fo^{3/2})/(3√π); the
        # next term is O(Fo²), about 1e-4 relative at Fo = 0.01, so the tolerance is 5e-4.
        ("cylinder", lambda f: 4.0 * np.sqrt(f / np.pi) - f - f**1.5 / (3.0 * np.sqrt(np.pi)), 0.01, 5e-4),
    ],
)
def test_uptake_matches_short_time_forms(kind, short, fo_max, rtol):
    fo = np.geomspace(1e-4, fo_max, 9)
    got = diffusion.uptake_fraction(SHAPES[kind], D, fo * HALF**2 / D)
    assert_allclose(got, short(fo), rtol=rtol)


# --- with a surface mass-transfer coefficient -----------------------------------------------------------------
def _roots(func, brackets) -> np.ndarray:
    return np.array([optimize.brentq(func, a, b, xtol=1e-14) for a, b in brackets])


def crank_sheet_4_55(fo: np.ndarray, big_l: float, n: int = 200) -> np.ndarray:
    # Crank 1975, eq. 4.55 (from memory): M_t/M_∞ = 1 − Σ 2L² exp(−β_n² T)/(β_n²(β_n² + L² + L)), β tan β = L,
    # L = l α/D with l the HALF-thickness (sheet −l < x < l), T = D t/l². The roots (Crank's Table 4.1 could not
    # be read; they are computed here by brentq on (k−1)π … (k−½)π, independent of the project's bisection).
    beta = _roots(
        lambda b: b * np.sin(b) - big_l * np.cos(b),
        [((k - 1) * np.pi, (k - 0.5) * np.pi) for k in range(1, n + 1)],
    )
    b = beta[:, None]
    return 1.0 - np.sum(2 * big_l**2 * np.exp(-(b**2) * fo) / (b**2 * (b**2 + big_l**2 + big_l)), axis=0)


def crank_cylinder_5_52(fo: np.ndarray, big_l: float, n: int = 200) -> np.ndarray:
    # Crank 1975, eq. 5.52 (from memory): 1 − Σ 4L² exp(−β_n² T)/(β_n²(β_n² + L²)), β J1(β) = L J0(β).
    edges = np.concatenate(([1e-12], special.jn_zeros(1, n - 1)))
    beta = _roots(
        lambda b: b * special.j1(b) - big_l * special.j0(b),
        list(zip(edges, special.jn_zeros(0, n), strict=True)),
    )
    b = beta[:, None]
    return 1.0 - np.sum(4 * big_l**2 * np.exp(-(b**2) * fo) / (b**2 * (b**2 + big_l**2)), axis=0)


def crank_sphere_6_43(fo: np.ndarray, big_l: float, n: int = 200) -> np.ndarray:
    # Crank 1975, eqs. 6.41 and 6.43 (form as quoted from the book in a public question on implementing them):
    # β cot β + L − 1 = 0, M_t/M_∞ = 1 − Σ 6L² exp(−β_n² T)/(β_n²(β_n² + L(L − 1))).
    beta = _roots(
        lambda b: b * np.cos(b) + (big_l - 1.0) * np.sin(b),
        [((k - 1) * np.pi + 1e-12, k * np.pi - 1e-12) for k in range(1, n + 1)],
    )
    b = beta[:, None]
    return 1.0 - np.sum(6 * big_l**2 * np.exp(-(b**2) * fo) / (b**2 * (b**2 + big_l * (big_l - 1))), axis=0)


CRANK_SURFACE = {"slab": crank_sheet_4_55, "cylinder": crank_cylinder_5_52, "sphere": crank_sphere_6_43}


@pytest.mark.parametrize("kind", list(SHAPES))
@pytest.mark.parametrize("bi_m", [0.1, 1.0, 10.0, 100.0])
def test_uptake_with_surface_coefficient_matches_crank(kind, bi_m):
    # Tolerance: the brief's 0.5 % over Fo 0.01…1; measured agreement is about 1e-8 (same exact series, 200 terms
    # of the reference against the project's truncation bound).
    k_m = bi_m * D / HALF
    got = diffusion.uptake_fraction(SHAPES[kind], D, TIMES, k_m_m_s=k_m)
    want = CRANK_SURFACE[kind](FO, bi_m)
    assert_allclose(got, want, rtol=5e-3)
    assert_allclose(got, want, rtol=1e-6, atol=1e-9)


def test_first_sheet_roots_agree_with_the_published_first_eigenvalue():
    # Source: Incropera et al., 7th ed., Table 5.1 (tests/data/conduction_incropera_table_5_1.csv): ζ1 = 0.8603
    # at Bi = 1 and 1.4289 at Bi = 10 for the plane wall, the same condition as Crank's β tan β = L.
    for big_l, want in ((1.0, 0.8603), (10.0, 1.4289)):
        beta = optimize.brentq(lambda b, lv=big_l: b * np.sin(b) - lv * np.cos(b), 0.0, np.pi / 2)
        assert abs(beta - want) <= 5e-5


# --- invariants ---------------------------------------------------------------------------------------------------
ALL_SHAPES = {
    **SHAPES,
    "finite-cylinder": Geometry("finite-cylinder", diameter_m=0.02, length_m=0.03),
    "brick": Geometry("brick", length_m=0.04, width_m=0.03, height_m=0.02),
}


@pytest.mark.parametrize("shape", list(ALL_SHAPES))
@pytest.mark.parametrize("bi_m", [0.5, 20.0])
def test_uptake_equals_integral_of_surface_flux(shape, bi_m):
    # Mass balance: V (C̄ − C_0) = ∫ k_m Σ A (C_eq − C̄_face) dt; tolerance 0.5 % (the brief), integrated by
    # Simpson's rule on a fine grid that starts at t = 0 where the rate is finite (k_m A (C_eq − C_0)).
    g = ALL_SHAPES[shape]
    k_m = bi_m * D / g.conduction_length_m
    t = np.linspace(0.0, 1.0 * g.conduction_length_m**2 / D, 4001)
    h = diffusion.diffusion_history(g, D, 2.0, 50.0, t, k_m_m_s=k_m)
    amount = integrate.simpson(h.uptake_rate, x=t)
    assert_allclose(amount, g.volume_m3 * (h.mean[-1] - 2.0), rtol=5e-3)
    assert h.uptake_rate[0] == pytest.approx(k_m * g.area_m2 * 48.0, rel=1e-9)


@pytest.mark.parametrize("shape", list(ALL_SHAPES))
@pytest.mark.parametrize("k_m", [1e-9, 1e-7, math.inf])
@pytest.mark.parametrize(("c0", "ceq"), [(0.0, 40.0), (60.0, 5.0)])
def test_concentrations_stay_between_initial_and_equilibrium(shape, k_m, c0, ceq):
    g = ALL_SHAPES[shape]
    t = np.concatenate(([0.0], np.geomspace(1.0, 1e8, 60)))
    h = diffusion.diffusion_history(g, D, c0, ceq, t, k_m_m_s=k_m)
    lo, hi = min(c0, ceq), max(c0, ceq)
    for arr in (h.centre, h.surface, h.mean):
        assert np.all((arr >= lo - 1e-9) & (arr <= hi + 1e-9))
    # uptake rises monotonically from 0 towards 1, and the centre lags the mean
    assert h.uptake_fraction[0] == 0.0
    assert np.all(np.diff(h.uptake_fraction) >= -1e-12)
    assert np.all(np.abs(h.centre - c0) <= np.abs(h.mean - c0) + 1e-9)


def test_finite_cylinder_is_the_product_of_crank_cylinder_and_sheet():
    # Independent: Newman's product of the two Crank series (eqs. 5.23 and 4.18) for the unaccomplished fraction.
    g = Geometry("finite-cylinder", diameter_m=0.02, length_m=0.03)
    t = FO * 0.01**2 / D
    want = 1.0 - (1.0 - crank_cylinder_5_23(FO)) * (1.0 - crank_sheet_4_18(FO * (0.01 / 0.015) ** 2))
    assert_allclose(diffusion.uptake_fraction(g, D, t), want, rtol=1e-6)


def test_uptake_tends_to_the_lumped_limit_at_small_mass_biot():
    # Independent: for Bi_m → 0 the product is uniform and M_t/M_∞ = 1 − exp(−k_m A t/V).
    g = SHAPES["sphere"]
    k_m = 1e-4 * D / HALF
    t = np.linspace(0.0, 3.0 * g.volume_m3 / (k_m * g.area_m2), 7)
    want = 1.0 - np.exp(-k_m * g.area_m2 * t / g.volume_m3)
    assert_allclose(diffusion.uptake_fraction(g, D, t, k_m_m_s=k_m), want, atol=1e-4)


# --- inverses -----------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("shape", list(ALL_SHAPES))
@pytest.mark.parametrize("k_m", [1e-8, math.inf])
def test_time_to_uptake_and_centre_concentration_invert_the_series(shape, k_m):
    g = ALL_SHAPES[shape]
    t = diffusion.time_to_uptake(g, D, 0.6, k_m_m_s=k_m)
    assert diffusion.uptake_fraction(g, D, [t], k_m_m_s=k_m)[0] == pytest.approx(0.6, abs=1e-9)
    tc = diffusion.time_to_centre_concentration(g, D, 80.0, 20.0, 50.0, k_m_m_s=k_m)
    assert diffusion.centre_concentration(g, D, 80.0, 20.0, [tc], k_m_m_s=k_m)[0] == pytest.approx(
        50.0, abs=1e-7
    )
    assert tc > t * 0.0  # positive
    # the centre (slowest point) reaches half the change later than the mean reaches half
    assert tc > diffusion.time_to_uptake(g, D, 0.5, k_m_m_s=k_m)


def test_half_uptake_time_of_a_sheet_is_near_the_short_time_estimate():
    # Crank 1975, eq. 4.24's leading term: M_t/M_∞ = 1/2 at Fo = π/16 on the half-thickness; the exact series
    # differs by the first neglected term (~0.2 %).
    t = diffusion.time_to_uptake(SHAPES["slab"], D, 0.5)
    assert D * t / HALF**2 == pytest.approx(math.pi / 16.0, rel=3e-3)


# --- groups and input checks ---------------------------------------------------------------------------------
def test_mass_biot_and_fourier_numbers():
    assert diffusion.mass_biot_number(1e-7, 0.01, 2e-10) == pytest.approx(5.0)
    assert diffusion.mass_biot_number(math.inf, 0.01, 2e-10) == math.inf
    assert_allclose(diffusion.mass_fourier_number(2e-10, [0.0, 5e5], 0.01), [0.0, 1.0])
    h = diffusion.diffusion_history(SHAPES["slab"], D, 0.0, 1.0, [0.0, 1.0], k_m_m_s=1e-8)
    assert h.bi_m == (pytest.approx(1e-8 * HALF / D),)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"D_m2_s": -1e-10}, "D_m2_s"),
        ({"D_m2_s": 1.0}, "D_m2_s"),
        ({"k_m_m_s": 0.0}, "k_m_m_s"),
        ({"k_m_m_s": 1e-30}, "k_m_m_s"),
        ({"initial": -1.0}, "initial"),
        ({"geometry": "slab"}, "geometry"),
    ],
)
def test_bad_input_names_the_field(kwargs, field):
    args = {"geometry": SHAPES["slab"], "D_m2_s": D, "initial": 0.0, "equilibrium": 1.0, "time_s": [0.0, 1.0]}
    args.update(kwargs)
    with pytest.raises(InvalidInputError) as err:
        diffusion.diffusion_history(**args)
    assert err.value.field == field


def test_targets_out_of_range_are_refused():
    with pytest.raises(InvalidInputError, match="target"):
        diffusion.time_to_centre_concentration(SHAPES["slab"], D, 0.0, 10.0, 10.0)
    with pytest.raises(InvalidInputError, match="target"):
        diffusion.time_to_centre_concentration(SHAPES["slab"], D, 5.0, 5.0, 5.0)
    with pytest.raises(InvalidInputError, match="fraction"):
        diffusion.time_to_uptake(SHAPES["slab"], D, 1.0)
