"""Independent method: the fast-diagonalisation solve of a separable Newton matrix against a sparse LU of the
same matrix assembled cell by cell (``fv_linear.newton_matrix``), and the separability test on matrices that
are not separable (a temperature-dependent conductivity, a varying dT/dH).

Source: Lynch, R. E., Rice, J. R. & Thomas, D. H. (1964), Direct solution of partial difference equations by
tensor product methods, Numer. Math. 6:185–199 (J⁻¹ = (⊗V) diag(1/(α + β Σλ)) (⊗V)ᵀ for separable J).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse.linalg as spla

from procplan.conduction.finite_volume import SurfaceBoundary
from procplan.conduction.fv_grid import build_grid
from procplan.conduction.fv_linear import newton_matrix
from procplan.conduction.fv_model import FVModel
from procplan.conduction.fv_tensor import SeparableSolver, separable_parameters
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

# Invented round numbers, not a product's data.
PROPS = PropertyTable.constant(0.5, 1050.0, 3600.0)
GEOMETRIES = {
    "brick": (Geometry("brick", length_m=0.04, width_m=0.05, height_m=0.06), (7, 8, 9)),
    "finite cylinder": (Geometry("finite-cylinder", diameter_m=0.06, length_m=0.1), (9, 6)),
}


def _model(name: str) -> FVModel:
    geometry, shape = GEOMETRIES[name]
    return FVModel(build_grid(geometry, shape, 0.5), PROPS, SurfaceBoundary.constant(2.0, 25.0))


def _arrays(model: FVModel, a_over_dt: float, beta: float):
    T = np.linspace(60.0, 2.0, model.n)
    G, _, _ = model.conductance(T, derivatives=True)
    _, _, dqs = model.net_flow(0.0, T, G)
    return a_over_dt * model.mass, -G, G.copy(), dqs, np.full(model.n, beta)


@pytest.mark.parametrize("name", sorted(GEOMETRIES))
@pytest.mark.parametrize(
    ("a_over_dt", "beta"), [(1.0 / 30.0, 1 / 3600.0), (1.5 / 2.0, 1 / 3600.0), (1e-4, 1e-3)]
)
def test_separable_solve_matches_a_sparse_lu(name, a_over_dt, beta):
    model = _model(name)
    key = _arrays(model, a_over_dt, beta)
    params = separable_parameters(model, *key)
    assert params is not None
    alpha, b, k, h = params
    assert k == pytest.approx(0.5, rel=1e-12) and h == pytest.approx(25.0, rel=1e-12) and b == beta
    rhs = np.random.default_rng(3).standard_normal(model.n)
    A, _ = newton_matrix(model, *key)
    expected = spla.splu(A.tocsc()).solve(rhs)
    got = SeparableSolver(model.grid, k, h).solve(alpha, b, rhs)
    assert np.max(np.abs(got - expected)) <= 1e-10 * np.max(np.abs(expected))


@pytest.mark.parametrize("name", sorted(GEOMETRIES))
def test_not_separable_matrices_are_refused(name):
    model = _model(name)
    md, af, bf, dqs, D = _arrays(model, 0.1, 1 / 3600.0)
    D_varying = D * np.linspace(1.0, 2.0, model.n)
    assert separable_parameters(model, md, af, bf, dqs, D_varying) is None
    bf_varying = bf * np.linspace(1.0, 1.1, bf.size)  # a conductivity that varies over the grid
    assert separable_parameters(model, md, -bf_varying, bf_varying, dqs, D) is None
    af_derivative = af + 1e-3 * np.abs(af)  # dG/dT ≠ 0: af ≠ −bf
    assert separable_parameters(model, md, af_derivative, bf, dqs, D) is None
    # with an extra surface flux (radiation), its derivative need not be the same over the surface
    model.has_q = True
    assert separable_parameters(model, md, af, bf, dqs, D) is not None
    dqs_varying = dqs * np.linspace(1.0, 1.2, dqs.size)
    assert separable_parameters(model, md, af, bf, dqs_varying, D) is None


def _varying_table() -> PropertyTable:
    """Invented round numbers (not a product's data): k from 0.45 to 0.60 W/(m K) and c_p from 3500 to
    3800 J/(kg K) linear over −40…150 °C, no phase change."""
    T = np.linspace(-40.0, 150.0, 20)
    cp = 3500.0 + 300.0 * (T + 40.0) / 190.0
    H = np.concatenate([[0.0], np.cumsum(0.5 * (cp[1:] + cp[:-1]) * np.diff(T))])
    k = 0.45 + 0.15 * (T + 40.0) / 190.0
    return PropertyTable(T, H, k, np.full(T.size, 1050.0), None, -40.0, "invented test table")


def test_nearby_separable_preconditioner_same_history_as_a_new_lu(monkeypatch):
    # Independent method (as in test_fv_factor_reuse): a 3-D chill with temperature-dependent k and c_p, whose
    # Newton systems are not separable, solved by GMRES with a nearby separable matrix's fast-diagonalisation
    # solve as preconditioner, against a new sparse LU at every Newton iteration. Both end every step on the
    # same Newton test (1e-6 c_p,min J/kg), so the histories agree to that tolerance carried through the steps:
    # checked to 1e-4 K, as there.
    import procplan.conduction.fv_linear as fv_linear
    from procplan.conduction.finite_volume import solve_conduction

    geometry = Geometry("brick", length_m=0.04, width_m=0.05, height_m=0.06)
    times = np.linspace(0.0, 3600.0, 41)

    def run():
        return solve_conduction(
            geometry,
            _varying_table(),
            60.0,
            SurfaceBoundary.constant(2.0, 25.0),
            3600.0,
            n_nodes=9,
            output_time_s=times,
        )

    present = run()
    monkeypatch.setattr(fv_linear, "EXACT_SOLVES", False)
    monkeypatch.setitem(fv_linear.REUSE_SCALE_CHANGE, 3, -1.0)
    fresh = run()
    assert fresh.n_factorisations == fresh.n_iterations
    assert present.n_factorisations == 0 and present.n_separable_solves == present.n_iterations
    assert "fast diagonalisation" in present.method
    for column in ("core_C", "surface_C", "mean_C"):
        np.testing.assert_allclose(getattr(present, column), getattr(fresh, column), rtol=0, atol=1e-4)
