"""Ball's formula-method factors f and j, checked on curves generated in this test from the exact series
solution of a slab, an infinite cylinder and a sphere, whose eigenvalues are found here independently with
scipy.optimize.brentq from the transcendental equations (Incropera et al., 7th ed., eqs. 5.39c, 5.50c,
5.51c). The expected values are f = ln(10) L²/(α ζ₁²) and j = C₁ at the centre (Incropera §5.5; Ball & Olson
1957; ASHRAE Refrigeration Handbook, chapter "Cooling and freezing times of foods")."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import optimize, special

from procplan.errors import InvalidInputError
from procplan.studies.formula_method import cooling_factors, curve_factors, heating_factors, series_factors

L_M = 0.04  # half-thickness or radius [m]
ALPHA = 1.4e-7  # thermal diffusivity [m²/s], a typical food (Incropera/ASHRAE order of magnitude)
N_TERMS = 80


def _condition(kind, bi):
    # Source: Incropera 7th ed. eqs. 5.39c, 5.50c, 5.51c, multiplied through to remove the poles.
    if kind == "slab":
        return lambda z: z * np.sin(z) - bi * np.cos(z)
    if kind == "cylinder":
        return lambda z: z * special.j1(z) - bi * special.j0(z)
    return lambda z: z * np.cos(z) + (bi - 1.0) * np.sin(z)


def _roots(kind, bi):
    if math.isinf(bi):
        if kind == "slab":
            return (np.arange(N_TERMS) + 0.5) * np.pi
        if kind == "sphere":
            return (np.arange(N_TERMS) + 1.0) * np.pi
        return special.jn_zeros(0, N_TERMS)
    g = _condition(kind, bi)
    grid = np.linspace(1e-9, (N_TERMS + 1) * np.pi, 400000)
    v = g(grid)
    idx = np.flatnonzero(np.sign(v[:-1]) * np.sign(v[1:]) < 0)
    return np.array([optimize.brentq(g, grid[i], grid[i + 1], xtol=1e-14) for i in idx[:N_TERMS]])


def _centre_coefficients(kind, z):
    # Source: Incropera 7th ed. eqs. 5.39b, 5.50b, 5.51b; the mode shape is 1 at the centre.
    if kind == "slab":
        return 4 * np.sin(z) / (2 * z + np.sin(2 * z))
    if kind == "cylinder":
        return 2 / z * special.j1(z) / (special.j0(z) ** 2 + special.j1(z) ** 2)
    return 4 * (np.sin(z) - z * np.cos(z)) / (2 * z - np.sin(2 * z))


def _centre_curve(kind, bi, theta_end=0.004, dfo=0.004):
    z = _roots(kind, bi)
    c = _centre_coefficients(kind, z)
    fo_end = math.log(abs(c[0]) / theta_end) / z[0] ** 2
    fo = np.arange(0.0, fo_end, dfo)
    theta = np.exp(-np.outer(fo, z**2)) @ c
    theta[0] = 1.0  # the initial condition (the truncated series oscillates at Fo = 0)
    return fo * L_M**2 / ALPHA, theta, z[0], c[0]


CASES = [(k, bi) for k in ("slab", "cylinder", "sphere") for bi in (0.5, 5.0, 50.0, math.inf)]


@pytest.mark.parametrize("kind,bi", CASES)
def test_heating_factors_of_the_exact_series(kind, bi):
    # Source: Incropera 7th ed. §5.5 (first term) and Ball & Olson (1957): f = ln10 L²/(α ζ₁²), j = C₁.
    # Tolerance 1 %: the straight part is fitted to readings that still carry a trace of the second term.
    t, theta, z1, c1 = _centre_curve(kind, bi)
    medium, initial = 121.0, 21.0
    r = heating_factors(t, medium - (medium - initial) * theta, medium)
    f_expected = math.log(10.0) * L_M**2 / (ALPHA * z1**2)
    assert_allclose(r.f_s, f_expected, rtol=0.01)
    assert_allclose(r.j, c1, rtol=0.01)
    assert r.chosen == "automatic" and r.window_s[0] > 0.0  # the curved start is left out
    # the pseudo-initial temperature follows from j: within 1 % of j (T_m − T_i) in kelvin
    assert_allclose(r.pseudo_initial_C, medium - c1 * (medium - initial), atol=0.01 * c1 * (medium - initial))
    # the library's own series gives the same factors (independent eigenvalue search)
    f_lib, j_lib = series_factors(kind, bi, L_M, ALPHA)
    assert_allclose([f_lib, j_lib], [f_expected, c1], rtol=1e-8)


@pytest.mark.parametrize("kind,bi", [("slab", 2.0), ("cylinder", 2.0), ("sphere", 2.0)])
def test_cooling_factors_of_the_exact_series(kind, bi):
    # Source: as above; a cooling curve has the same f and j (ASHRAE Refrigeration Handbook, cooling and
    # freezing times of foods: f and j of the centre).
    t, theta, z1, c1 = _centre_curve(kind, bi)
    coolant, initial = 1.0, 71.0
    r = cooling_factors(t, coolant + (initial - coolant) * theta, coolant)
    assert_allclose(r.f_s, math.log(10.0) * L_M**2 / (ALPHA * z1**2), rtol=0.01)
    assert_allclose(r.j, c1, rtol=0.01)
    assert r.kind == "cooling" and r.pseudo_initial_C > initial  # j > 1 at the centre


def test_come_up_correction_by_hand():
    # Source: Ball (1923); Ball & Olson (1957): corrected zero at 0.58 × come-up time after steam on.
    # A curve straight from its start, T_m − T = 80 × 10^(−t/f) with f = 15 min, initial 30 °C, medium 121 °C,
    # come-up 12 min: zero at 6.96 min, j = 80 × 10^(−6.96/15)/(121 − 30).
    f = 900.0
    t = np.arange(0.0, 3600.0, 60.0)
    temp = 121.0 - 80.0 * 10 ** (-t / f)
    r = heating_factors(t, temp, 121.0, initial_C=30.0, come_up_s=720.0)
    assert_allclose(r.zero_s, 0.58 * 720.0, rtol=1e-12)
    assert_allclose(r.f_s, f, rtol=1e-9)
    assert_allclose(r.j, 80.0 * 10 ** (-0.58 * 720.0 / f) / 91.0, rtol=1e-9)
    assert_allclose(r.pseudo_initial_C, 121.0 - 80.0 * 10 ** (-0.58 * 720.0 / f), rtol=1e-9)


def test_window_override_and_noise_floor():
    # Source: construction on the slab series (Bi = 5): a window inside the straight part gives the same f;
    # readings closer than min_difference_C to the medium are not used.
    t, theta, z1, c1 = _centre_curve("slab", 5.0)
    temp = 100.0 - 80.0 * theta
    lo, hi = 0.5 * L_M**2 / ALPHA, 1.5 * L_M**2 / ALPHA
    r = heating_factors(t, temp, 100.0, window_s=(lo, hi))
    assert r.chosen == "window" and lo <= r.window_s[0] and r.window_s[1] <= hi
    assert_allclose(r.f_s, math.log(10.0) * L_M**2 / (ALPHA * z1**2), rtol=0.01)
    r2 = heating_factors(t, temp, 100.0, min_difference_C=5.0)
    assert 100.0 - np.interp(r2.window_s[1], t, temp) >= 5.0


def test_noisy_tail_needs_a_window_or_a_wider_tolerance():
    # Source: construction: readings rounded to 0.5 K scatter far more than 0.002 log cycles near the end.
    t, theta, _, _ = _centre_curve("sphere", 5.0, theta_end=0.05)
    temp = np.round(121.0 - 100.0 * theta * 1.0 + 0.4 * np.sin(np.arange(theta.size)), 0)
    with pytest.raises(InvalidInputError, match="tolerance_log10"):
        heating_factors(t, temp, 121.0)
    assert heating_factors(t, temp, 121.0, tolerance_log10=0.2).f_s > 0


def test_rejects_bad_input():
    t = [0.0, 60.0, 120.0, 180.0, 240.0, 300.0]
    with pytest.raises(InvalidInputError, match="initial_C"):
        heating_factors(t, [130.0] * 6, 121.0)  # starts above the medium
    with pytest.raises(InvalidInputError, match="kind"):
        curve_factors(t, [20.0] * 6, 121.0, kind="freezing")
    with pytest.raises(InvalidInputError, match="come_up_s"):
        cooling_factors(t, [60.0, 50, 40, 30, 20, 15], 1.0, come_up_s=60.0)
    with pytest.raises(InvalidInputError, match="window_s"):
        heating_factors(t, [20.0, 40, 60, 80, 90, 95], 121.0, window_s=(100.0, 50.0))
    with pytest.raises(InvalidInputError, match="temperature_C"):
        heating_factors(t, [20.0, 40, 60, 80, 90, 95], 121.0, min_points=7)
