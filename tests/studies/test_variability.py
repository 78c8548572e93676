"""Monte Carlo: closed-form lognormal times of a lumped body, the fast path against independent solutions,
reproducibility and the worst corner."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats
from scipy.optimize import brentq

from procplan.conduction import series
from procplan.conduction.product import eigen_vectorised, exact_history
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.studies.variability import (
    DISTRIBUTIONS,
    VARIABLES,
    distribution,
    monte_carlo,
    parse_distribution,
)
from procplan.studies.variability_bench import bench_variability

from .conftest import cylinder_plan, lumped_sphere_plan


def test_lognormal_h_gives_lognormal_lumped_time_percentiles():
    # Source: Incropera et al., 7th ed., eq. 5.5: t = (rho V c/(h A)) ln(theta_i/theta) = K/h, so with
    # ln h ~ N(ln h50, s²) the time is lognormal with median K/h50 and the same s; t_p = t50 exp(s z_p).
    # Tolerance: 4 standard errors of a sample quantile, sqrt(p(1-p)/n)/f(t_p) (Kendall & Stuart), plus the
    # series-vs-lumped O(Bi) ≈ 1e-5 relative.
    n, h50, s = 20000, 30.0, 0.25
    plan = lumped_sphere_plan(h50)
    res = monte_carlo(
        plan, {"h_W_m2K": distribution("lognormal", h50, s)}, n_samples=n, seed=7, corners=False
    )
    assert res.method == "exact"
    k = 8500.0 * (0.02 / 6.0) * 400.0 * math.log(60.0 / 10.0) / 60.0  # [W/m²K · min]
    t50 = k / h50
    dist = stats.lognorm(s=s, scale=t50)
    for p in (50, 95, 99):
        tp = float(dist.ppf(p / 100))
        se = math.sqrt(p / 100 * (1 - p / 100) / n) / float(dist.pdf(tp))
        assert abs(res.percentiles["time_to_target_min"][f"P{p}"] - tp) < 4 * se + 1e-4 * tp
    assert res.p_not_reached == 0.0


def test_same_seed_same_numbers_other_seed_other_numbers():
    plan = cylinder_plan()
    d = {
        "start_C": distribution("normal", 70, 2, low=65, high=75),
        "h_factor": distribution("uniform", 0.8, 1.2),
    }
    a = monte_carlo(plan, d, n_samples=200, seed=3, corners=False)
    b = monte_carlo(plan, d, n_samples=200, seed=3, corners=False)
    c = monte_carlo(plan, d, n_samples=200, seed=4, corners=False)
    assert a.samples.equals(b.samples) and a.percentiles == b.percentiles
    assert not np.allclose(a.samples["start_C"], c.samples["start_C"])
    assert a.samples["start_C"].between(65, 75).all()


@pytest.mark.parametrize(
    "geometry",
    [
        Geometry("cylinder", diameter_m=0.06),
        Geometry("brick", length_m=0.1, width_m=0.08, height_m=0.04),
        Geometry("sphere", diameter_m=0.05),
        Geometry("finite-cylinder", diameter_m=0.05, length_m=0.1),
    ],
)
def test_fast_path_times_match_root_of_exact_history(geometry):
    # Independent method: brentq on procplan.conduction.product.exact_history (Newman product of the
    # eigen-series, Incropera §5.8) for each sample; both solve the same series, so agreement to 1e-7.
    from dataclasses import replace

    base = cylinder_plan()
    plan = replace(base, product=replace(base.product, geometry=geometry))
    d = {
        "start_C": distribution("normal", 70, 3),
        "size_factor": distribution("triangular", 0.8, 1.0, 1.3),
        "h_W_m2K": distribution("lognormal", 25, 0.5),
    }
    res = monte_carlo(plan, d, n_samples=5, seed=11, corners=False)
    assert res.method == "exact"
    for _, row in res.samples.iterrows():
        g = replace(
            geometry,
            **{
                k: getattr(geometry, k) * row.size_factor
                for k in ("diameter_m", "length_m", "width_m", "height_m")
                if getattr(geometry, k) is not None
            },
        )

        def f(t, g=g, row=row):
            return (
                float(exact_history(g, 0.5, 1050.0, 3600.0, row.h_W_m2K, row.start_C, 0.0, [t]).core_C[0])
                - 5.0
            )

        t_ref = brentq(f, 1.0, 6 * 3600.0, xtol=1e-8)
        assert_allclose(row.time_to_target_min, t_ref / 60.0, rtol=1e-7)


def test_fast_path_agrees_with_run_path_including_rule(rules_library):
    # Independent method: run_plan per sample (engine, assess, check_rule) against the vectorised path.
    plan = cylinder_plan("us-food-code-two-stage").with_step(0, stop_when_core_C=4.0)
    d = {"h_W_m2K": distribution("lognormal", 12.0, 0.6), "start_C": distribution("uniform", 62, 78)}
    a = monte_carlo(plan, d, n_samples=12, seed=5, library=rules_library, corners=False)
    b = monte_carlo(plan, d, n_samples=12, seed=5, library=rules_library, corners=False, method="run")
    assert a.method == "exact" and b.method == "run"
    ta, tb = a.samples.time_to_target_min.to_numpy(), b.samples.time_to_target_min.to_numpy()
    both = np.isfinite(ta) & np.isfinite(tb)
    assert both.sum() >= 6
    # tolerance: the engine's stop-time root is found to 1e-6 of the step's duration
    assert_allclose(ta[both], tb[both], rtol=2e-6)
    assert list(a.samples.rule_passed) == list(b.samples.rule_passed)
    assert 0.0 < a.p_rule_fail < 1.0


def test_eigen_vectorised_matches_series_module():
    # Independent: procplan.conduction.series.eigenvalues (checked there against Incropera Table 5.1).
    bi = np.array([1e-6, 1e-2, 0.5, 1.0, 7.0, 100.0, 1e5])
    for kind in ("slab", "cylinder", "sphere"):
        z, c = eigen_vectorised(kind, bi, 20)
        for j, b in enumerate(bi):
            assert_allclose(z[j], series.eigenvalues(kind, b, 20), rtol=1e-12, atol=1e-13)
            assert_allclose(c[j], series.coefficients(kind, b, 20), rtol=1e-9, atol=1e-12)


def test_worst_corner_is_slowest_combination():
    plan = cylinder_plan()
    d = {"start_C": distribution("uniform", 65, 75), "size_factor": distribution("uniform", 0.9, 1.1)}
    res = monte_carlo(plan, d, n_samples=50, seed=1)
    assert len(res.corners) == 4
    assert res.worst["inputs"] == pytest.approx({"start_C": 75.0, "size_factor": 1.1})
    assert res.worst["metrics"]["time_to_target_min"] == pytest.approx(res.corners.time_to_target_min.max())
    assert res.worst["metrics"]["time_to_target_min"] >= res.percentiles["time_to_target_min"]["P99"]


def test_distributions_and_errors():
    assert set(DISTRIBUTIONS) == {"normal", "uniform", "triangular", "lognormal"}
    rng = np.random.default_rng(0)
    for text in ("normal:10,2@8,11", "uniform:1,2", "triangular:0,1,3@0.5,", "lognormal:20,0.3@,25"):
        d = parse_distribution(text)
        x = d.sample(rng, 2000)
        lo, hi = d.low if d.low is not None else -np.inf, d.high if d.high is not None else np.inf
        assert np.all((x >= lo) & (x <= hi))
    for bad in ("normal:1", "gamma:1,2", "normal:1,-1", "uniform:2,1", "normal:a,b", "x"):
        with pytest.raises(InvalidInputError):
            parse_distribution(bad)
    with pytest.raises(InvalidInputError):
        monte_carlo(cylinder_plan(), {"fan": distribution("uniform", 0, 1)}, n_samples=3)
    with pytest.raises(InvalidInputError):
        monte_carlo(cylinder_plan(), {"water_fraction": distribution("uniform", 0.6, 0.7)}, n_samples=3)
    assert "start_C" in VARIABLES


def test_bench_reports_timings():
    b = bench_variability(n_samples=2000)
    assert b["fast_s"] > 0 and b["run_per_sample_s"] > 0 and math.isfinite(b["p50_min"])
