"""One-sided normal tolerance factors against published values, and the bound against a hand calculation."""

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as hs
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.studies.tolerance import lower_tolerance_bound, one_sided_k_factor


def test_k_factor_nist_handbook_example():
    # Source: NIST/SEMATECH e-Handbook of Statistical Methods, §7.2.6.3, worked example: n = 43, p = 0.90,
    # γ = 0.99, k1 = 1.8752 (the handbook computes it with its approximate formula; the approximation's
    # error for n ≈ 40 is about 0.1 %, see the next check), so the exact factor must lie within 0.2 %.
    assert_allclose(one_sided_k_factor(43, 0.90, 0.99), 1.8752, rtol=0.002)


def test_k_factor_noncentral_t_worked_example():
    # Source: Real Statistics Using Excel, "Tolerance interval example", Example 1: n = 40, p = 0.90,
    # 99 % confidence: k = 1.9017 by the noncentral t distribution (1.9034 by Natrella's approximation).
    # Four printed digits: tolerance half a unit in the last digit.
    assert_allclose(one_sided_k_factor(40, 0.90, 0.99), 1.9017, atol=5e-5)


@pytest.mark.parametrize("n,p,g,k", [(10, 0.99, 0.95, 3.981), (10, 0.90, 0.95, 2.355)])
def test_k_factor_classic_table(n, p, g, k):
    # Source: one-sided normal tolerance factors as tabulated in Natrella, NBS Handbook 91 (1963), table A-7
    # (from memory); three printed decimals.
    assert_allclose(one_sided_k_factor(n, p, g), k, atol=6e-4)


def test_k_factor_large_sample_approximation():
    # Independent method: for large n, k ≈ z_p + z_γ sqrt(1/n + z_p²/(2n)) (the large-sample normal
    # approximation of x̄ − k s; Natrella 1963, ch. 2, from memory); it tends to z_p = 2.3263 (p = 0.99).
    zp, zg = 2.3263479, 1.6448536
    for n in (5000, 200000):
        approx = zp + zg * math.sqrt(1.0 / n + zp**2 / (2.0 * n))
        assert_allclose(one_sided_k_factor(n, 0.99, 0.95), approx, rtol=1e-3)


def test_bound_by_hand():
    # Hand calculation: values 10, 12, 11, 13, 9: mean 11, s = sqrt(10/4) = 1.5811; bound = 11 − k s.
    v = [10.0, 12.0, 11.0, 13.0, 9.0]
    b = lower_tolerance_bound(v, proportion=0.9, confidence=0.95)
    k = one_sided_k_factor(5, 0.9, 0.95)
    assert_allclose([b.mean, b.sd, b.lower], [11.0, math.sqrt(2.5), 11.0 - k * math.sqrt(2.5)], rtol=1e-12)
    bl = lower_tolerance_bound(v, proportion=0.9, confidence=0.95, model="lognormal")
    lv = np.log10(v)
    assert_allclose(bl.lower, 10 ** (lv.mean() - k * lv.std(ddof=1)), rtol=1e-12)
    assert 0 < bl.lower < min(v)


@given(hs.integers(2, 60), hs.floats(0.5, 0.999), hs.floats(0.5, 0.999))
def test_k_grows_with_proportion_and_confidence(n, p, g):
    # Invariant: more coverage or more confidence never gives a smaller factor.
    k = one_sided_k_factor(n, p, g)
    assert one_sided_k_factor(n, min(p + 0.0005, 0.9995), g) >= k - 1e-9
    assert one_sided_k_factor(n, p, min(g + 0.0005, 0.9995)) >= k - 1e-9


def test_bad_input():
    with pytest.raises(InvalidInputError, match="values"):
        lower_tolerance_bound([3.0])
    with pytest.raises(InvalidInputError, match="proportion"):
        one_sided_k_factor(5, 1.0, 0.95)
    with pytest.raises(InvalidInputError, match="values"):
        lower_tolerance_bound([1.0, -1.0], model="lognormal")
    with pytest.raises(InvalidInputError, match="model"):
        lower_tolerance_bound([1.0, 2.0], model="weibull")
