"""Correlations against the ``ht`` reference library, textbook worked examples and independent limits."""

import math

import numpy as np
import pytest
from ht import conv_external as ce
from ht import conv_free_immersed as cf
from numpy.testing import assert_allclose

from procplan.surface import correlations as sc
from procplan.surface.correlations import CORRELATIONS, nusselt_by_name

RE_GRID = [10.0, 300.0, 6071.0, 4e4, 2e5, 1e6]
PR_GRID = [0.7, 1.0, 7.0, 40.0]
RA_GRID = [1e2, 1e4, 1e6, 1e8, 1e10, 1e12]


# --- forced convection ------------------------------------------------------------------------------------
@pytest.mark.parametrize("re", RE_GRID)
@pytest.mark.parametrize("pr", PR_GRID)
def test_churchill_bernstein_matches_ht(re, pr):
    # Source: ht 1.2.0, ht.conv_external.Nu_cylinder_Churchill_Bernstein (same published equation,
    # Churchill & Bernstein 1977); tolerance 1e-10 relative: the same formula, only rounding differs.
    assert_allclose(
        sc.nusselt_cylinder_churchill_bernstein(re, pr),
        ce.Nu_cylinder_Churchill_Bernstein(re, pr),
        rtol=1e-10,
    )


def test_churchill_bernstein_incropera_example_7_3():
    # Source: Bergman, Lavine, Incropera & DeWitt, Introduction to Heat Transfer, 6th ed. (2011), Example 7.3,
    # Nu_D = 40.6 at Re_D = 6071, Pr = 0.7, as quoted in the ht package documentation (40.637; the book itself
    # not seen). Tolerance: the book's 3 digits, 0.1 %.
    assert_allclose(sc.nusselt_cylinder_churchill_bernstein(6071.0, 0.7), 40.6, rtol=1e-3)


@pytest.mark.parametrize("re", [1e2, 1e3, 1e4, 1e5, 4.9e5])
@pytest.mark.parametrize("pr", [0.7, 1.0, 5.0, 9.0])
def test_flat_plate_laminar_matches_ht(re, pr):
    # Source: ht 1.2.0, Nu_horizontal_plate_laminar_Baehr, which for 0.05 < Pr < 10 is 0.664 Re^½ Pr^⅓,
    # the same as Incropera eq. 7.30. Tolerance: same formula, 1e-10.
    assert_allclose(
        sc.nusselt_flat_plate_laminar(re, pr), ce.Nu_horizontal_plate_laminar_Baehr(re, pr), rtol=1e-10
    )
    assert_allclose(
        sc.nusselt_flat_plate(re, pr), ce.Nu_external_horizontal_plate(re, pr, Method="Baehr"), rtol=1e-10
    )


@pytest.mark.parametrize("re", [1e6, 1e7, 1e8])
@pytest.mark.parametrize("pr", [0.7, 5.0])
def test_flat_plate_turbulent_against_kreith(re, pr):
    # Source: ht 1.2.0, Nu_horizontal_plate_turbulent_Kreith (0.036 Re^0.8 Pr^⅓, Kreith's rounding of the
    # same power law). Tolerance 3 %: the coefficients differ, 0.037 vs 0.036 (2.8 %).
    assert_allclose(
        sc.nusselt_flat_plate_turbulent(re, pr), ce.Nu_horizontal_plate_turbulent_Kreith(re, pr), rtol=0.03
    )


def test_flat_plate_mixed_hand_evaluation_and_limits():
    # Source: Incropera et al., 7th ed., eq. 7.38 evaluated by hand at Re_L = 1e6, Pr = 0.7:
    # (0.037 · 1e6^0.8 − 871) · 0.7^⅓ = (0.037 · 63095.73 − 871) · 0.887904 = 1299.6; tolerance 0.05 % (rounding).
    assert_allclose(sc.nusselt_flat_plate_mixed(1e6, 0.7), 1299.6, rtol=5e-4)
    # Independent: eq. 7.38 was built so that at the transition Re = 5e5 it meets the laminar eq. 7.30 (the
    # 871 is A = 0.037 Re_c^0.8 − 0.664 Re_c^0.5, rounded); they agree within 0.1 % (0.07 % measured).
    assert_allclose(sc.nusselt_flat_plate_mixed(5e5, 1.0), sc.nusselt_flat_plate_laminar(5e5, 1.0), rtol=1e-3)
    # Far above transition the laminar part is negligible: mixed → fully turbulent within 5 % at Re = 1e8.
    assert_allclose(
        sc.nusselt_flat_plate_mixed(1e8, 1.0), sc.nusselt_flat_plate_turbulent(1e8, 1.0), rtol=0.05
    )


def test_flat_plate_incropera_example_7_1():
    # Source: Incropera et al., 7th ed., Example 7.1 (from memory): air at 300 °C and 6 kPa over a 0.5 m
    # plate at 10 m/s; film properties k = 0.0364 W/mK, Pr = 0.687, Re_L = 9597 give h̄ = 4.18 W/m²K.
    # Tolerance 0.5 %: the book rounds h̄ to three digits.
    h = sc.nusselt_flat_plate(9597.0, 0.687) * 0.0364 / 0.5
    assert_allclose(h, 4.18, rtol=5e-3)


@pytest.mark.parametrize("re", [3.5, 100.0, 1e3, 1e4, 7.6e4])
@pytest.mark.parametrize("pr", [0.71, 7.0, 100.0])
def test_whitaker_hand_evaluation(re, pr):
    # Source: Whitaker (1972) / Incropera et al., 7th ed., eq. 7.56, written out independently here with
    # math.pow and μ/μ_s = 1.5. Tolerance 1e-12: exact arithmetic of the published equation.
    expected = 2.0 + (0.4 * math.sqrt(re) + 0.06 * math.pow(re, 2.0 / 3.0)) * math.pow(pr, 0.4) * math.pow(
        1.5, 0.25
    )
    assert_allclose(sc.nusselt_sphere_whitaker(re, pr, 1.5), expected, rtol=1e-12)


@pytest.mark.parametrize("re", [100.0, 1e3, 1e4])
def test_whitaker_against_ranz_marshall(re):
    # Source: Ranz & Marshall (1952), Chem. Eng. Prog. 48:141, Nu = 2 + 0.6 Re^½ Pr^⅓ (Incropera 7th ed., eq. 7.57),
    # an independent sphere correlation. Tolerance 25 %: the two fits to different data scatter that much.
    pr = 0.71
    assert_allclose(sc.nusselt_sphere_whitaker(re, pr), 2.0 + 0.6 * math.sqrt(re) * pr ** (1 / 3), rtol=0.25)
    # Conduction limit of a sphere in a stagnant infinite medium: Nu = 2 exactly (Incropera §7.6).
    assert sc.nusselt_sphere_whitaker(0.0, pr) == 2.0


# --- free convection ----------------------------------------------------------------------------------------
@pytest.mark.parametrize("ra", RA_GRID)
@pytest.mark.parametrize("pr", PR_GRID)
def test_free_convection_matches_ht(ra, pr):
    # Source: ht 1.2.0 named functions (Nu_vertical_plate_Churchill, Nu_horizontal_cylinder_Churchill_Chu,
    # Nu_sphere_Churchill), taking Gr = Ra/Pr. Tolerance 1e-10: the same published equations.
    gr = ra / pr
    assert_allclose(
        sc.nusselt_vertical_plate_churchill_chu(ra, pr), cf.Nu_vertical_plate_Churchill(pr, gr), rtol=1e-10
    )
    assert_allclose(
        sc.nusselt_horizontal_cylinder_churchill_chu(ra, pr),
        cf.Nu_horizontal_cylinder_Churchill_Chu(pr, gr),
        rtol=1e-10,
    )
    assert_allclose(sc.nusselt_sphere_churchill(ra, pr), cf.Nu_sphere_Churchill(pr, gr), rtol=1e-10)


@pytest.mark.parametrize("ra", [1e4, 1e6, 1e7, 1e8, 1e10])
def test_horizontal_plate_unstable_matches_ht_mcadams(ra):
    # Source: ht 1.2.0, Nu_horizontal_plate_McAdams(buoyancy=True): 0.54 Ra^¼ (Ra ≤ 1e7), 0.15 Ra^⅓ above,
    # the same pair as Incropera 7th ed., eqs. 9.30–9.31. Tolerance 1e-10.
    assert_allclose(
        sc.nusselt_horizontal_plate_unstable(ra),
        cf.Nu_horizontal_plate_McAdams(0.7, ra / 0.7, buoyancy=True),
        rtol=1e-10,
    )


def test_horizontal_plate_stable_hand_evaluation():
    # Source: Incropera et al., 7th ed., eq. 9.32 (from memory): 0.52 Ra^⅕; at Ra = 1e6, 0.52 · 15.8489 = 8.2414.
    # Tolerance 1e-4 (hand rounding). Independent bound: the stable face transfers less than the unstable one.
    assert_allclose(sc.nusselt_horizontal_plate_stable(1e6), 8.2414, rtol=1e-4)
    ra = np.logspace(4, 9, 20)
    assert np.all(sc.nusselt_horizontal_plate_stable(ra) < sc.nusselt_horizontal_plate_unstable(ra))


def test_vertical_plate_incropera_example_9_2():
    # Source: Incropera et al., 7th ed., Example 9.2 (glass fire screen, from memory): Ra_L = 1.813e9,
    # Pr = 0.690 give Nu_L = 147 (h̄ = 7.0 W/m²K with k = 0.0338 W/mK, L = 0.71 m). Tolerance 0.5 % (3 digits).
    nu = sc.nusselt_vertical_plate_churchill_chu(1.813e9, 0.690)
    assert_allclose(nu, 147.0, rtol=5e-3)
    assert_allclose(nu * 0.0338 / 0.71, 7.0, rtol=0.01)


def test_sphere_churchill_reduces_to_incropera_9_35_at_low_ra():
    # Source: Incropera et al., 7th ed., eq. 9.35, Nu = 2 + 0.589 Ra^¼/[1 + (0.469/Pr)^(9/16)]^(4/9), which
    # Churchill (1983) extends with a factor → 1 at low Ra. Tolerance 0.2 % at Ra ≤ 1e5 (factor ≤ 1.0007).
    for ra in (1e2, 1e4, 1e5):
        eq935 = 2 + 0.589 * ra**0.25 / (1 + (0.469 / 0.71) ** (9 / 16)) ** (4 / 9)
        assert_allclose(sc.nusselt_sphere_churchill(ra, 0.71), eq935, rtol=2e-3)


def test_mixed_convection_limits():
    # Source: Incropera et al., 7th ed., eq. 9.64 with n = 3: each mode alone is recovered when the other is 0,
    # and the sum lies between the larger part and the arithmetic sum.
    assert_allclose(sc.nusselt_mixed_convection(10.0, 0.0), 10.0, rtol=1e-12)
    both = sc.nusselt_mixed_convection(10.0, 8.0)
    assert 10.0 < both < 18.0
    assert_allclose(both, (1000 + 512) ** (1 / 3), rtol=1e-12)


def test_condensation_scaling_and_coefficients():
    # Source: Nusselt (1916) / Incropera 7th ed., eqs. 10.26 and 10.41: the coefficients 0.943 (vertical plate),
    # 0.729 (horizontal tube) and 0.826 (sphere) multiply the same X^¼. Tolerance 1e-12 (exact arithmetic).
    x = 3.7e12
    assert_allclose(sc.nusselt_condensation_vertical_plate(x), 0.943 * x**0.25, rtol=1e-12)
    assert_allclose(
        sc.nusselt_condensation_horizontal_cylinder(x) / sc.nusselt_condensation_vertical_plate(x),
        0.729 / 0.943,
        rtol=1e-12,
    )
    assert_allclose(
        sc.nusselt_condensation_sphere(x) / sc.nusselt_condensation_vertical_plate(x),
        0.826 / 0.943,
        rtol=1e-12,
    )


# --- registry and dispatcher -------------------------------------------------------------------------------
GROUPS = {"re": 2.0e4, "pr": 0.72, "ra": 3.0e6, "mu_ratio": 1.2, "condensation_group": 5e11}


@pytest.mark.parametrize("name", sorted(CORRELATIONS))
def test_dispatcher_calls_the_registered_function(name):
    # Independent check of the wiring (the fault ht 1.2.0's Nu_external_cylinder has): every key sent through
    # the dispatcher returns exactly what the registered function returns when called directly.
    entry = CORRELATIONS[name]
    direct = entry.function(**{k: GROUPS[k] for k in entry.inputs})
    assert_allclose(nusselt_by_name(name, **GROUPS), direct, rtol=0, atol=0)
    assert entry.reference and entry.validity and entry.mode in ("forced", "natural", "condensation")


def test_dispatcher_reaches_the_published_cylinder_value():
    # Source: Incropera 7th ed., Example 7.3, Nu = 40.6 at Re 6071, Pr 0.7, through the dispatcher (0.1 %).
    assert_allclose(nusselt_by_name("cylinder-churchill-bernstein", re=6071.0, pr=0.7), 40.6, rtol=1e-3)


def test_vectorised_over_arrays():
    re = np.array([1e3, 1e4, 1e5])
    out = sc.nusselt_cylinder_churchill_bernstein(re, 0.7)
    assert out.shape == (3,)
    assert_allclose(out, [ce.Nu_cylinder_Churchill_Bernstein(r, 0.7) for r in re], rtol=1e-10)
