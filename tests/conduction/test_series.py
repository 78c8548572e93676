"""Exact eigen-series of the slab, cylinder and sphere: published table, independent methods, invariants."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import integrate, optimize, special

from procplan.conduction import series
from procplan.errors import InvalidInputError

KINDS = ("slab", "cylinder", "sphere")
TABLE = pd.read_csv(Path(__file__).parents[1] / "data" / "conduction_incropera_table_5_1.csv", comment="#")


# --- published table ------------------------------------------------------------------------------------------
@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("row", range(len(TABLE)))
def test_first_eigenvalue_and_coefficient_match_table_5_1(kind, row):
    # Source: Incropera et al., Fundamentals of Heat and Mass Transfer, 7th ed., Table 5.1 (values in
    # tests/data/conduction_incropera_table_5_1.csv, as reproduced in the project's reference notes).
    # Tolerance: the table prints 4 decimals, so a correct value lies within half a unit of the last digit.
    r = TABLE.iloc[row]
    bi = float(r["bi"])  # "inf" parses to math.inf
    assert_allclose(series.eigenvalues(kind, bi, 1)[0], r[f"{kind}_zeta1"], rtol=0, atol=5e-5 + 1e-12)
    assert_allclose(series.coefficients(kind, bi, 1)[0], r[f"{kind}_c1"], rtol=0, atol=5e-5 + 1e-12)


def test_table_covers_six_biot_numbers_and_the_limit():
    assert len(TABLE) >= 6 and np.isinf(TABLE["bi"].astype(float)).any()


# --- eigenvalues by an independent root finder --------------------------------------------------------------------
EQUATION = {
    # Source: Incropera et al., 7th ed., eqs. 5.39c, 5.50c, 5.51c (the eigen-conditions as printed)
    "slab": lambda z, bi: z * math.tan(z) - bi,
    "cylinder": lambda z, bi: z * special.j1(z) / special.j0(z) - bi,
    "sphere": lambda z, bi: 1.0 - z / math.tan(z) - bi,
}


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("bi", [1e-4, 0.03, 1.0, 7.5, 300.0, 1e4])
def test_eigenvalues_agree_with_brentq_on_the_printed_equation(kind, bi):
    # Independent method: scipy.optimize.brentq on the equation in its printed (singular) form, bracketed
    # away from the poles of tan, cot and 1/J0; tolerance 1e-10 absolute (both methods converge to ~1e-15).
    z = series.eigenvalues(kind, bi, 12)
    assert np.all(np.diff(z) > 0)
    f = EQUATION[kind]
    for zn in z:
        # a bracket of ±1e-6 around our root, inside the same branch of the function
        lo, hi = zn - 1e-6 * max(zn, 1e-2), zn + 1e-6 * max(zn, 1e-2)
        if np.sign(f(lo, bi)) == np.sign(f(hi, bi)):
            pytest.fail(f"{kind} Bi={bi}: no sign change of the printed equation around {zn}")
        ref = optimize.brentq(f, lo, hi, args=(bi,), xtol=1e-15, rtol=4 * np.finfo(float).eps)
        assert_allclose(zn, ref, rtol=0, atol=1e-10)


@pytest.mark.parametrize(
    "kind,limit",
    [
        ("slab", lambda n: (n - 0.5) * np.pi),
        ("cylinder", lambda n: special.jn_zeros(0, n.size)),
        ("sphere", lambda n: n * np.pi),
    ],
)
def test_infinite_biot_limit_and_continuity(kind, limit):
    # Source: Incropera et al., 7th ed., Table 5.1, last row (Bi → ∞): ζ_n = (n−½)π, zeros of J0, nπ.
    n = np.arange(1, 31, dtype=float)
    assert_allclose(series.eigenvalues(kind, math.inf, 30), limit(n), rtol=1e-14)
    # Continuity: at Bi = 1e8 the roots lie within ζ/Bi of the limit (slab: ζ_n ≈ (n−½)π (1 − 1/Bi)).
    assert_allclose(series.eigenvalues(kind, 1e8, 30), limit(n), rtol=2e-8)


def test_eigenvalues_are_cached_and_read_only():
    a = series.eigenvalues("cylinder", 2.5, 10)
    b = series.eigenvalues("cylinder", 2.5, 5)
    assert np.shares_memory(a, b)
    with pytest.raises(ValueError):
        a[0] = 1.0


# --- one-term approximation ------------------------------------------------------------------------------------------
def _one_term(kind, zeta1, c1, x, fo):
    # Source: Incropera et al., 7th ed., eqs. 5.40 (plane wall), 5.52a (cylinder), 5.53a (sphere) (from memory
    # of the equation numbers): θ* = C1 exp(−ζ1² Fo) f(ζ1 x*).
    shape = {
        "slab": np.cos(zeta1 * x),
        "cylinder": special.j0(zeta1 * x),
        "sphere": np.sinc(zeta1 * x / np.pi),
    }[kind]
    return c1 * np.exp(-(zeta1**2) * fo) * shape


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("row", range(len(TABLE)))
def test_series_agrees_with_one_term_form_beyond_fo_0_2(kind, row):
    # Source: Incropera et al., 7th ed., §5.5.2 (from memory): for Fo > 0.2 the one-term approximation differs
    # from the series by less than 2 %; with Table 5.1's ζ1, C1. At Fo = 1 the second term is below 1e-5 of
    # the first, so the difference is only the table's 4-digit rounding (<= 2e-4 relative at Fo = 1).
    r = TABLE.iloc[row]
    bi = float(r["bi"])
    z1, c1 = r[f"{kind}_zeta1"], r[f"{kind}_c1"]
    for x in (0.0, 0.5, 1.0):
        fo = np.array([0.2, 0.3, 0.5, 1.0, 2.0])
        exact = series.theta(kind, bi, x, fo)
        approx = _one_term(kind, z1, c1, x, fo)
        scale = _one_term(
            kind, z1, c1, 0.0, fo
        )  # relative to the centre value (the surface θ is 0 at Bi = ∞)
        assert np.all(np.abs(exact - approx) <= 0.02 * scale)
        assert abs(exact[3] - approx[3]) <= 4e-4 * scale[3]


# --- Bi → 0: lumped ----------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("kind,ratio", [("slab", 1.0), ("cylinder", 2.0), ("sphere", 3.0)])
def test_small_biot_tends_to_lumped(kind, ratio):
    # Source: Incropera et al., 7th ed., eq. 5.6 (lumped capacitance): θ = exp(−Bi_c Fo_c) with L_c = V/A,
    # which is L, r_o/2, r_o/3, so Bi_c Fo_c = (A L/V) Bi Fo = ratio · Bi Fo on the series' own L.
    # Tolerance: the lumped model errs by O(Bi) in the decay rate (ζ1² = ratio·Bi (1 − O(Bi))), so by about
    # ratio·Bi²·Fo in θ: rtol 2e-4 at Bi = 1e-4 and Bi·Fo <= 1.
    bi = 1e-4
    fo = np.array([0.0, 10.0, 1e3, 5e3, 1e4])
    lumped = np.exp(-ratio * bi * fo)
    assert_allclose(series.mean_theta(kind, bi, fo), lumped, rtol=2e-4)
    assert_allclose(series.theta(kind, bi, 0.0, fo), lumped, rtol=2e-4)
    assert_allclose(series.theta(kind, bi, 1.0, fo), lumped, rtol=2e-4)


# --- small Fo: semi-infinite solid with convection -------------------------------------------------------------------
@pytest.mark.parametrize("bi", [0.3, 2.0, 25.0, 400.0])
@pytest.mark.parametrize("fo", [1e-4, 1e-3, 1e-2, 0.02])
def test_slab_at_small_fo_matches_semi_infinite_solid(bi, fo):
    # Source: Incropera et al., 7th ed., eq. 5.60 (semi-infinite solid, convection surface condition):
    # (T − Ti)/(T∞ − Ti) = erfc(η) − exp(hx/k + h²αt/k²) erfc(η + h√(αt)/k), η = x/(2√(αt)).
    # In slab variables, depth x = (1 − x*) L: hx/k = Bi (1 − x*), h√(αt)/k = Bi √Fo, η = (1 − x*)/(2√Fo).
    # The slab's far face is felt only as erfc(1/√Fo) <= erfc(7) ~ 1e-23, so the two agree to the series'
    # truncation bound (1e-8): tolerance 5e-8 absolute.
    x_star = np.array([1.0, 0.99, 0.95, 0.9])
    depth = 1.0 - x_star
    eta = depth / (2.0 * math.sqrt(fo))
    beta = bi * math.sqrt(fo)
    # exp(a) erfc(b) written as exp(a − b²) erfcx(b) to avoid overflow at large Bi
    b = eta + beta
    semi = special.erfc(eta) - np.exp(bi * depth + beta**2 - b**2) * special.erfcx(b)
    theta_semi = 1.0 - semi
    assert_allclose(series.theta("slab", bi, x_star, fo), theta_semi, rtol=0, atol=5e-8)


# --- mean by quadrature --------------------------------------------------------------------------------------------------
WEIGHT = {"slab": lambda r: 1.0, "cylinder": lambda r: 2.0 * r, "sphere": lambda r: 3.0 * r * r}


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("bi,fo", [(0.1, 0.05), (1.0, 0.01), (8.0, 0.3), (math.inf, 0.02), (60.0, 1.5)])
def test_mean_equals_volume_integral_of_theta(kind, bi, fo):
    # Independent method: scipy.integrate.quad of θ(x*) over the volume (dV ∝ 1, 2r, 3r² on [0, 1])
    # against the closed-form mean series; tolerance 2e-8, twice the truncation bound.
    w = WEIGHT[kind]
    val, err = integrate.quad(
        lambda r: float(series.theta(kind, bi, r, fo)) * w(r), 0.0, 1.0, epsabs=1e-11, limit=200
    )
    assert err < 5e-9
    assert_allclose(series.mean_theta(kind, bi, fo), val, rtol=0, atol=2e-8)
    assert_allclose(series.heat_fraction(kind, bi, fo), 1.0 - val, rtol=0, atol=2e-8)


# --- truncation --------------------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("bi", [0.05, 3.0, math.inf])
@pytest.mark.parametrize("fo", [1e-5, 1e-3, 0.05])
def test_truncation_bound_is_honest(kind, bi, fo):
    # Independent check of the stated bound: the chosen number of terms against 4× as many terms; the
    # difference (the actual truncation error) must not exceed the reported bound.
    info = series.plan_terms(kind, bi, fo)
    assert info.truncation_bound <= series.DEFAULT_TOL
    x = np.linspace(0.0, 1.0, 11)
    ref = series.theta(kind, bi, x, fo, n_terms=4 * info.n_terms)
    got = series.theta(kind, bi, x, fo)
    assert np.max(np.abs(got - ref)) <= info.truncation_bound
    m_ref = series.mean_theta(kind, bi, fo, n_terms=4 * info.n_terms)
    assert abs(series.mean_theta(kind, bi, fo) - m_ref) <= info.truncation_bound


def test_terms_grow_like_inverse_square_root_of_fo():
    # Source: the tail bound exp(−π² N² Fo) (module notes): N ∝ 1/√Fo, so 100× smaller Fo needs about 10×
    # the terms (within a few terms from the logarithmic factor).
    n1, _ = series.terms_for("slab", 1e-3)
    n2, _ = series.terms_for("slab", 1e-5)
    assert 9.0 <= n2 / n1 <= 11.5


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("bi", [0.5, 20.0])
def test_short_time_branch_joins_the_series(kind, bi):
    # Independent method: just below FO_SHORT the semi-infinite form (Incropera eq. 5.60) against the series
    # forced to 6000 terms (bound ~1e-8 there). Tolerance: the series bound plus the stated short-time error
    # estimate (curvature, zero for the slab).
    fo = 0.9 * series.FO_SHORT
    x = np.array([1.0, 0.9995, 0.998, 0.5])
    info = series.plan_terms(kind, bi, fo)
    assert info.short_time_points == 1
    est = info.short_time_error + series.truncation_bound(kind, 6000, fo)
    assert_allclose(
        series.theta(kind, bi, x, fo), series.theta(kind, bi, x, fo, n_terms=6000), rtol=0, atol=est + 1e-9
    )
    assert_allclose(
        series.mean_theta(kind, bi, fo),
        series.mean_theta(kind, bi, fo, n_terms=6000),
        rtol=0,
        atol=est + 1e-9,
    )


def test_initial_instant_is_exactly_one():
    for kind in KINDS:
        th = series.theta(kind, 2.0, np.linspace(0, 1, 5), 0.0)
        assert np.all(th == 1.0)
        assert series.mean_theta(kind, 2.0, 0.0) == 1.0


def test_infinite_biot_surface_is_at_medium_temperature():
    # Source: Incropera et al., 7th ed., §5.5 (Bi → ∞: surface at T∞ for t > 0). Tolerance: truncation bound.
    for kind in KINDS:
        assert_allclose(series.theta(kind, math.inf, 1.0, [1e-3, 0.1, 1.0]), 0.0, atol=1e-8)


def test_history_matches_pointwise_functions():
    fo = np.array([0.0, 1e-3, 0.05, 0.4])
    h = series.series_history("cylinder", 4.0, fo)
    assert_allclose(h.theta_center, series.theta("cylinder", 4.0, 0.0, fo), rtol=0, atol=1e-14)
    assert_allclose(h.theta_surface, series.theta("cylinder", 4.0, 1.0, fo), rtol=0, atol=1e-14)
    assert_allclose(h.theta_mean, series.mean_theta("cylinder", 4.0, fo), rtol=0, atol=1e-14)
    assert h.info.n_terms >= 2 and h.info.fo_min == 1e-3


# --- invariants -------------------------------------------------------------------------------------------------------------
@settings(max_examples=40, deadline=None)
@given(
    kind=st.sampled_from(KINDS),
    log_bi=st.floats(-4, 4),
    fo=st.lists(st.floats(0.0, 3.0), min_size=2, max_size=8),
    x=st.floats(0.0, 1.0),
)
def test_theta_bounded_decreasing_and_ordered(kind, log_bi, fo, x):
    bi = 10.0**log_bi
    f = np.sort(np.array(fo))
    info = series.plan_terms(kind, bi, f)
    slack = 2.0 * info.truncation_bound + 1e-13
    th = series.theta(kind, bi, x, f)
    assert np.all((th >= 0.0) & (th <= 1.0))
    assert np.all(np.diff(th) <= slack)  # cooling from a uniform start: θ never rises at any point
    center = series.theta(kind, bi, 0.0, f)
    surface = series.theta(kind, bi, 1.0, f)
    mean = series.mean_theta(kind, bi, f)
    assert np.all(center >= mean - slack) and np.all(mean >= surface - slack)
    assert np.all(center >= th - slack) and np.all(th >= surface - slack)


# --- bad input --------------------------------------------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "call,field",
    [
        (lambda: series.eigenvalues("cube", 1.0), "kind"),
        (lambda: series.eigenvalues("slab", 0.0), "bi"),
        (lambda: series.eigenvalues("slab", -2.0), "bi"),
        (lambda: series.eigenvalues("slab", float("nan")), "bi"),
        (lambda: series.eigenvalues("slab", -math.inf), "bi"),
        (lambda: series.eigenvalues("slab", 1.0, 0), "n_terms"),
        (lambda: series.theta("slab", 1.0, 1.2, 0.1), "x_star"),
        (lambda: series.theta("slab", 1.0, 0.5, -0.1), "fo"),
        (lambda: series.theta("sphere", 1.0, 0.5, [0.1, float("nan")]), "fo"),
        (lambda: series.mean_theta("cylinder", 1.0, -1.0), "fo"),
        (lambda: series.terms_for("slab", 0.1, tol=0.0), "tol"),
    ],
)
def test_bad_input_names_the_field(call, field):
    with pytest.raises(InvalidInputError) as e:
        call()
    assert e.value.field == field
    assert field in str(e.value)
