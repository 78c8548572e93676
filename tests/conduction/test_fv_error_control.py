"""Error-controlled time stepping of the finite-volume solver: the measured time-integration error of the core
stays below the tolerance and falls as it tightens, against a fine fixed-step reference on the same grid (the
spatial error cancels) and against the exact series; the energy balance holds; the estimate is reported."""

from __future__ import annotations

import numpy as np
import pytest

from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.conduction.fv_error import ERROR_SHARE, bdf2_error_factor, euler_error_factor
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

TOLERANCES_K = (0.5, 0.1, 0.05, 0.01)

# Lean-meat-like test material with 250 kJ/kg latent heat over 0.5 K (invented round numbers, as in
# procplan.bench; the checks are convergence and invariants, not these values).
FOOD = PropertyTable.constant(
    0.5, 1050.0, 3600.0, latent_J_kg=250e3, freezing_C=-1.0, frozen_k_W_mK=1.6, frozen_cp_J_kgK=1900.0
)
SLAB = Geometry("slab", thickness_m=0.05)
FREEZE = SurfaceBoundary.constant(-30.0, 20.0)
END_S = 7 * 3600.0  # through the end of the core's freezing plateau (about 4.3 h) and the fast drop after it
TIMES = np.linspace(0.0, END_S, 57)


@pytest.fixture(scope="module")
def freezing_reference():
    # BDF2 converges at second order: the reference's own time error at dt = 3 s is about 1e-3 K (halving dt
    # changed the core by 4.6e-4 K over 24 h with 100 nodes), far below the smallest tolerance checked
    return solve_conduction(SLAB, FOOD, 10.0, FREEZE, END_S, n_nodes=50, dt_s=3.0, output_time_s=TIMES)


@pytest.fixture(scope="module")
def freezing_runs():
    return {
        tol: solve_conduction(
            SLAB, FOOD, 10.0, FREEZE, END_S, n_nodes=50, tolerance_K=tol, output_time_s=TIMES
        )
        for tol in TOLERANCES_K
    }


def test_freezing_core_error_below_tolerance_and_monotone(freezing_reference, freezing_runs):
    errors = [
        float(np.max(np.abs(freezing_runs[t].core_C - freezing_reference.core_C))) for t in TOLERANCES_K
    ]
    for tol, err in zip(TOLERANCES_K, errors, strict=True):
        assert err < tol, (tol, err)
    # falls as the tolerance tightens (a 5 % allowance for round-off between near-equal values)
    assert all(b <= 1.05 * a for a, b in zip(errors, errors[1:], strict=False)), errors
    assert errors[-1] < 0.5 * errors[0]
    # and costs more steps as it tightens
    steps = [freezing_runs[t].n_steps for t in TOLERANCES_K]
    assert steps == sorted(steps)


def test_energy_balance_kept_with_tolerance(freezing_runs):
    for res in freezing_runs.values():
        assert res.energy_balance_error < 2e-3


def test_estimate_in_provenance(freezing_runs):
    for tol, res in freezing_runs.items():
        assert res.time_tolerance_K == tol
        assert 0.0 < res.local_error_estimate_K <= ERROR_SHARE * tol * (1 + 1e-9)
        assert res.core_error_sum_K >= 0.0
        assert f"time-integration tolerance {tol:g} K" in res.method


def test_without_tolerance_no_estimate():
    res = solve_conduction(SLAB, FOOD, 10.0, FREEZE, 3600.0, n_nodes=21)
    assert res.time_tolerance_K is None and res.local_error_estimate_K is None
    assert "error-controlled" not in res.method


def test_constant_properties_against_series():
    """Slab, constant properties: total core error (grid + time) against the exact series falls with the
    tolerance until the grid's own error; the time part alone is below the tolerance."""
    # Source: Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 5.39
    # (plane wall, eigenvalues from ζ tan ζ = Bi; equation number from memory)
    from scipy.optimize import brentq

    k, rho, cp, h, half = 0.5, 1050.0, 3600.0, 200.0, 0.02
    props = PropertyTable.constant(k, rho, cp)
    bi, alpha = h * half / k, k / (rho * cp)
    z = np.array(
        [
            brentq(lambda x: x * np.tan(x) - bi, i * np.pi + 1e-12, i * np.pi + np.pi / 2 - 1e-12)
            for i in range(80)
        ]
    )
    c = 4 * np.sin(z) / (2 * z + np.sin(2 * z))
    times = np.linspace(0.0, 3 * 3600.0, 37)
    fo = alpha * times / half**2
    exact = 2.0 + 58.0 * (np.exp(-np.outer(fo, z**2)) @ c)
    bc = SurfaceBoundary.constant(2.0, h)
    geo = Geometry("slab", thickness_m=2 * half)
    ref = solve_conduction(geo, props, 60.0, bc, times[-1], n_nodes=81, dt_s=1.0, output_time_s=times)
    grid_error = float(np.max(np.abs(ref.core_C - exact)))
    time_errors, total = [], []
    for tol in TOLERANCES_K:
        r = solve_conduction(
            geo, props, 60.0, bc, times[-1], n_nodes=81, tolerance_K=tol, output_time_s=times
        )
        time_errors.append(float(np.max(np.abs(r.core_C - ref.core_C))))
        total.append(float(np.max(np.abs(r.core_C - exact))))
    for tol, err in zip(TOLERANCES_K, time_errors, strict=True):
        assert err < tol
    assert all(b <= 1.05 * a + 1e-6 for a, b in zip(time_errors, time_errors[1:], strict=False))
    assert total[-1] <= grid_error + TOLERANCES_K[-1]


def test_error_factors_reduce_to_the_constant_step_values():
    # Source: Hairer, Nørsett & Wanner, Solving ODEs I, 2nd ed., §III.2 (BDF2 error constant −2/9; the
    # quadratic predictor's error constant 1 at constant steps, so Milne's device gives 2/11)
    assert bdf2_error_factor(3.0, 3.0, 3.0) == pytest.approx(2.0 / 11.0)
    # backward Euler: error h²y″/2 against the linear predictor's h(h+h₁)y″/2 → 1/3 at constant steps
    assert euler_error_factor(5.0, 5.0) == pytest.approx(1.0 / 3.0)


def test_error_factor_against_a_measured_local_error():
    """y′ = −y from the exact history: one variable-step BDF2 step's true local error against the estimate."""
    lam, h2, h1, h = 1.0, 0.04, 0.05, 0.07
    t = np.array([-(h1 + h2), -h1, 0.0])
    y = np.exp(-lam * t)
    w = h / h1
    a = (1 + 2 * w) / (1 + w)
    hist = (1 + w) * y[2] - (w * w / (1 + w)) * y[1]
    y_c = hist / (a + h * lam)  # a y − hist = h f(y) = −h y
    true = y_c - np.exp(-lam * h)
    lag = [
        (h - t[1]) * (h - t[2]) / ((t[0] - t[1]) * (t[0] - t[2])),
        (h - t[0]) * (h - t[2]) / ((t[1] - t[0]) * (t[1] - t[2])),
        (h - t[0]) * (h - t[1]) / ((t[2] - t[0]) * (t[2] - t[1])),
    ]
    est = bdf2_error_factor(h, h1, h2) * (y_c - np.dot(lag, y))
    assert est == pytest.approx(true, rel=0.1)


@pytest.mark.parametrize("bad", [0.0, -0.1, float("nan"), "fine"])
def test_bad_tolerance_names_the_field(bad):
    with pytest.raises(InvalidInputError, match="tolerance_K"):
        solve_conduction(SLAB, FOOD, 10.0, FREEZE, 3600.0, tolerance_K=bad)


def test_run_plan_carries_the_tolerance_into_each_step():
    from procplan.files.library import load_library
    from procplan.run.engine import run_plan

    lib = load_library()
    plan = lib.plan("vial-cool-down")
    res = run_plan(plan, library=lib, solver="finite-volume", time_tolerance_K=0.05)
    for step in res.steps:
        assert step.details.time_tolerance_K == 0.05
        assert step.details.local_error_estimate_K <= ERROR_SHARE * 0.05 * (1 + 1e-9)
    with pytest.raises(InvalidInputError, match="time_tolerance_K"):
        run_plan(plan, library=lib, time_tolerance_K=-1.0)
