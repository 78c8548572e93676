"""Independent method: the finite-volume solver with its sparse LU kept across Newton iterations and time steps
(as GMRES preconditioner) against the same solver factorising anew at every Newton iteration.

Both end every step on the same Newton test, a scaled residual below 1e-6 c_p,min J/kg (about a micro-kelvin
of sensible heat), so their histories may differ only by that tolerance carried through the steps: checked to
1e-4 K, a hundred times the per-step tolerance, far below the step-control target (0.1 K or more). The same
check holds the present solver's exact solves (banded LU in 2-D, the kept LU used directly in 3-D, fast
diagonalisation of separable systems) to a new sparse LU at every Newton iteration.
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

import procplan.conduction.fv_linear as fv_linear
from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.conduction.fv_linear import Factorisation, gmres_right
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

HISTORY_TOL_K = 1e-4

# Invented round numbers (a food-like material freezing over 0.5 K), not a product's data.
FREEZING = PropertyTable.constant(
    0.5, 1050.0, 3600.0, latent_J_kg=250e3, freezing_C=-1.0, frozen_k_W_mK=1.6, frozen_cp_J_kgK=1900.0
)
CHILLING = PropertyTable.constant(0.48, 1070.0, 3500.0)

CASES = {
    "2-D cylinder freezing": (
        Geometry("finite-cylinder", diameter_m=0.06, length_m=0.1),
        FREEZING,
        10.0,
        SurfaceBoundary.constant(-30.0, 20.0),
        1.5 * 3600.0,
        11,
    ),
    "3-D brick chilling": (
        Geometry("brick", length_m=0.04, width_m=0.05, height_m=0.06),
        CHILLING,
        60.0,
        SurfaceBoundary.constant(2.0, 25.0),
        3600.0,
        9,
    ),
}


def _run(case):
    geometry, props, initial_C, boundary, end_s, n = case
    times = np.linspace(0.0, end_s, 41)
    return solve_conduction(geometry, props, initial_C, boundary, end_s, n_nodes=n, output_time_s=times)


@pytest.mark.parametrize("name", sorted(CASES))
def test_kept_factorisation_same_history_fewer_factorisations(name, monkeypatch):
    monkeypatch.setattr(fv_linear, "EXACT_SOLVES", False)  # the kept LU as GMRES preconditioner throughout
    kept = _run(CASES[name])
    monkeypatch.setitem(fv_linear.REUSE_SCALE_CHANGE, len(kept.grid.shape), -1.0)  # never reuse
    fresh = _run(CASES[name])
    assert fresh.n_reused_factorisations == 0
    assert kept.n_reused_factorisations > 0
    # without reuse: one LU per Newton iteration
    assert fresh.n_factorisations == fresh.n_iterations
    assert kept.n_factorisations < fresh.n_factorisations / 2
    assert_allclose(kept.time_s, fresh.time_s)
    for column in ("core_C", "surface_C", "mean_C"):
        assert_allclose(getattr(kept, column), getattr(fresh, column), rtol=0, atol=HISTORY_TOL_K)
    assert_allclose(kept.final_field, fresh.final_field, rtol=0, atol=HISTORY_TOL_K)


@pytest.mark.parametrize("name", sorted(CASES))
def test_exact_solves_same_history_as_a_new_lu_every_iteration(name, monkeypatch):
    # Independent method as above: the present solver (2-D: a new banded LU at every Newton iteration; 3-D: the
    # kept LU used directly when it is of the very matrix, and a step ended without the confirming residual
    # when the problem was linear over it) against a new sparse LU at every Newton iteration.
    present = _run(CASES[name])
    monkeypatch.setattr(fv_linear, "EXACT_SOLVES", False)
    monkeypatch.setitem(fv_linear.REUSE_SCALE_CHANGE, len(present.grid.shape), -1.0)
    fresh = _run(CASES[name])
    assert fresh.n_factorisations == fresh.n_iterations
    if len(present.grid.shape) == 2:
        # banded: one LU per Newton iteration, none kept, except while every cell is still unfrozen (one k, one
        # c_p): those systems are separable and solved by fast diagonalisation
        assert present.n_factorisations + present.n_separable_solves == present.n_iterations
        assert present.n_reused_factorisations == 0 and present.n_separable_solves > 0
    else:  # constant properties: a linear problem, every system separable, no LU at all
        assert present.n_factorisations == 0 and present.n_separable_solves == present.n_iterations
    assert present.n_iterations <= fresh.n_iterations
    assert_allclose(present.time_s, fresh.time_s)
    for column in ("core_C", "surface_C", "mean_C"):
        assert_allclose(getattr(present, column), getattr(fresh, column), rtol=0, atol=HISTORY_TOL_K)
    assert_allclose(present.final_field, fresh.final_field, rtol=0, atol=HISTORY_TOL_K)


def test_one_dimensional_runs_factorise_nothing():
    r = solve_conduction(
        Geometry("slab", thickness_m=0.04), CHILLING, 20.0, SurfaceBoundary.constant(0.0, 100.0), 600.0
    )
    assert r.n_factorisations == 0 and r.n_reused_factorisations == 0


def test_gmres_right_solves_a_perturbed_system_with_an_old_factorisation():
    rng = np.random.default_rng(1)
    n = 50
    K = np.diag(np.full(n, 2.0)) - np.diag(np.ones(n - 1), 1) - np.diag(np.ones(n - 1), -1)
    old, new = K + np.eye(n), K + 1.3 * np.eye(n)  # a/Δt changed by 30 %
    lu_solve = lambda v: np.linalg.solve(old, v)  # noqa: E731
    b = rng.standard_normal(n)
    x, its = gmres_right(lambda v: new @ v, lu_solve, b, 1e-10, 20)
    assert 1 < its < 20
    assert np.linalg.norm(new @ x - b) <= 1e-10 * np.linalg.norm(b) * 1.01
    x_none, its_none = gmres_right(lambda v: new @ v, lu_solve, b, 1e-14, 1)
    assert x_none is None and its_none == 1


def test_factorisation_reuse_window_by_dimension():
    f = Factorisation(3)
    assert not f.usable(1.0)  # nothing kept yet
    f.lu, f.scale = object(), 1.0
    assert f.usable(1.0 + 0.9 * fv_linear.REUSE_SCALE_CHANGE[3])
    assert not f.usable(1.0 + 1.1 * fv_linear.REUSE_SCALE_CHANGE[3])
