"""The vectorised centre series (many samples at once) against the scalar series and product solutions."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.optimize import brentq

from procplan.conduction import series
from procplan.conduction.product import centre_series, eigen_vectorised, exact_history
from procplan.geometry import Geometry

# A chilled meat-like product (common practice order of magnitude, not a check value).
K, RHO, CP = 0.48, 1070.0, 3500.0

SHAPES = [
    Geometry("slab", thickness_m=0.05),
    Geometry("cylinder", diameter_m=0.06),
    Geometry("sphere", diameter_m=0.07),
    Geometry("finite-cylinder", diameter_m=0.08, length_m=0.12),
    Geometry("brick", length_m=0.1, width_m=0.08, height_m=0.05),
]


@pytest.mark.parametrize("kind", ["slab", "cylinder", "sphere"])
def test_eigen_vectorised_matches_scalar_eigenvalues_and_coefficients(kind):
    # Independent method: procplan.conduction.series.eigenvalues (checked there against Incropera Table 5.1),
    # one Biot number at a time with 80 bisection steps, against bisection + Newton over all at once.
    bi = np.array([1e-6, 1e-2, 0.5, 1.0, 7.0, 100.0, 1e5, 1e9])
    z, c = eigen_vectorised(kind, bi, 20)
    assert z.shape == c.shape == (bi.size, 20)
    for j, b in enumerate(bi):
        b_scalar = b if b <= series.BI_RANGE[1] else np.inf
        assert_allclose(z[j], series.eigenvalues(kind, b_scalar, 20), rtol=1e-12, atol=1e-13)
        assert_allclose(c[j], series.coefficients(kind, b_scalar, 20), rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("geometry", SHAPES, ids=lambda g: g.shape)
def test_centre_series_core_matches_exact_history(geometry):
    # Independent method: exact_history (adaptive series terms per time) for each sample separately.
    h = np.array([8.0, 25.0, 150.0])
    start = np.array([70.0, 60.0, 5.0])
    size = np.array([1.0, 0.9, 1.2])
    medium = 2.0
    cs = centre_series(geometry, K, RHO, CP, h, start, medium, size)
    times = np.array([0.0, 60.0, 600.0, 3600.0, 4 * 3600.0])
    core = cs.core_C(np.broadcast_to(times, (3, times.size)))
    for j in range(3):
        dims = {
            k: getattr(geometry, k) * size[j]
            for k in ("thickness_m", "diameter_m", "length_m", "width_m", "height_m")
            if getattr(geometry, k) is not None
        }
        g = Geometry(geometry.shape, **dims)
        ref = exact_history(g, K, RHO, CP, h[j], start[j], medium, times)
        assert_allclose(core[j], ref.core_C, atol=1e-6 * abs(start[j] - medium))


@pytest.mark.parametrize("geometry", SHAPES[:3], ids=lambda g: g.shape)
def test_centre_series_time_to_matches_root_of_exact_history(geometry):
    # Independent method: Brent's root of the scalar exact history's core temperature.
    h = np.array([10.0, 40.0])
    start = np.array([74.0, 65.0])
    cs = centre_series(geometry, K, RHO, CP, h, start, 0.0)
    t = cs.time_to(5.0, 48 * 3600.0)
    for j in range(2):

        def f(tt, j=j):
            return exact_history(geometry, K, RHO, CP, h[j], start[j], 0.0, [0.0, tt]).core_C[-1] - 5.0

        assert_allclose(t[j], brentq(f, 1.0, 48 * 3600.0, xtol=1e-6), rtol=1e-6)


def test_centre_series_time_to_is_nan_when_not_reached_and_zero_when_already_there():
    g = Geometry("sphere", diameter_m=0.05)
    cs = centre_series(g, K, RHO, CP, 20.0, np.array([70.0, 4.0]), 0.0)
    t = cs.time_to(5.0, 60.0)  # one minute is far too short for the first sample
    assert np.isnan(t[0])
    assert t[1] == 0.0
