"""The linear systems of the Newton iteration: tridiagonal (1-D), sparse LU kept across iterations and steps
(2-D and 3-D up to ``DIRECT_MAX_CELLS`` cells), BiCGSTAB (larger 3-D grids).

A sparse LU of the Newton matrix is kept in a :class:`Factorisation` and reused across Newton iterations and
time steps as the preconditioner of GMRES on the current Newton matrix (an inexact Newton method with a
frozen-factorisation preconditioner: Kelley, C. T., Solving Nonlinear Equations with Newton's Method, SIAM
2003, §3.2 and §5.3; GMRES: Saad, Y. & Schultz, M. H. (1986), SIAM J. Sci. Stat. Comput. 7:856–869) while
the time-step coefficient a/Δt has changed little; when GMRES does not converge within a few iterations the
matrix is factorised anew. The Newton convergence test is on the residual in every case, so a reused
factorisation changes the cost of a step, not the tolerance its answer meets.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import scipy.linalg
import scipy.linalg.lapack
import scipy.sparse as sp
import scipy.sparse.linalg as spla

if TYPE_CHECKING:
    from procplan.conduction.fv_model import FVModel

__all__ = [
    "DIRECT_MAX_CELLS",
    "REUSE_SCALE_CHANGE",
    "Factorisation",
    "gmres_right",
    "linear_solve",
    "newton_matrix",
    "newton_product",
    "sparse_pattern",
]

#: Largest grid [cells] solved by a sparse LU; above it, BiCGSTAB with a Jacobi preconditioner (LU fill-in
#: grows fast in 3-D). At 15³ = 3375 cells one LU costs about five BiCGSTAB solves and is reused for many.
DIRECT_MAX_CELLS = 8000
#: A kept factorisation is reused while a/Δt is within this relative change of the one it was built for, by
#: dimension: a 2-D LU costs about 20 of its solves, a 3-D one (15³) about 90, so 3-D keeps its LU longer
#: (chosen by measured run time and factorisation counts on a 2-D roulade plan and a 15³ brick).
REUSE_SCALE_CHANGE: dict[int, float] = {2: 0.1, 3: 0.5}
#: Most GMRES iterations with a kept factorisation before the matrix is factorised anew.
GMRES_MAX_ITERATIONS = 12
_gtsv = scipy.linalg.lapack.dgtsv


def sparse_pattern(fi: np.ndarray, fj: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The CSC pattern of the Newton matrix of n cells with faces (fi, fj): the permutation that puts the
    entries [face (i, j) ..., face (j, i) ..., diagonal ...] in CSC order, the row indices and the column
    pointers."""
    diag = np.arange(n)
    rows = np.concatenate([fi, fj, diag])
    cols = np.concatenate([fj, fi, diag])
    pos = sp.coo_matrix((np.arange(1, rows.size + 1, dtype=float), (rows, cols)), shape=(n, n)).tocsc()
    return pos.data.astype(np.int64) - 1, pos.indices.copy(), pos.indptr.copy()


class Factorisation:
    """The sparse LU of the Newton matrix kept for reuse, with counts for the run's provenance.

    ``scale`` is the a/Δt [1/s] the matrix was built for; ``n_factorisations`` counts LU factorisations,
    ``n_reused`` solves preconditioned by a kept one, ``n_gmres_iterations`` their GMRES iterations,
    ``n_iterative`` BiCGSTAB solves (grids above ``DIRECT_MAX_CELLS``).
    """

    def __init__(self, dim: int = 2) -> None:
        self.reuse_change = REUSE_SCALE_CHANGE.get(dim, 0.0)
        self.lu = None
        self.scale = 0.0
        self.n_factorisations = 0
        self.n_reused = 0
        self.n_gmres_iterations = 0
        self.n_iterative = 0

    def usable(self, scale: float) -> bool:
        """True when a kept LU exists and a/Δt has changed little since it was built."""
        return self.lu is not None and abs(scale / self.scale - 1.0) <= self.reuse_change

    def factor(self, A: sp.csc_matrix, scale: float) -> None:
        """Factorise A (built for a/Δt = scale) and keep the LU."""
        self.lu = spla.splu(A, permc_spec="MMD_AT_PLUS_A")
        self.scale = scale
        self.n_factorisations += 1

    def preconditioned_solve(self, matvec, rhs: np.ndarray, md: np.ndarray, rtol: float) -> np.ndarray | None:
        """GMRES on ``matvec`` x = rhs with the kept LU as right preconditioner, to ||diag(md)⁻¹ (rhs − J x)||₂
        ≤ rtol ||diag(md)⁻¹ rhs||₂ in at most ``GMRES_MAX_ITERATIONS`` iterations; None if it does not get
        there. (Rows scaled by md, the residual's own scale in the Newton test.)"""
        lu = self.lu
        x, its = gmres_right(
            lambda v: matvec(v) / md, lambda v: lu.solve(md * v), rhs / md, rtol, GMRES_MAX_ITERATIONS
        )
        self.n_gmres_iterations += its
        if x is not None:
            self.n_reused += 1
        return x


def gmres_right(matvec, precondition, rhs: np.ndarray, rtol: float, max_it: int):
    """Right-preconditioned GMRES from x = 0 (Arnoldi by classical Gram–Schmidt applied twice, Givens
    rotations for the small least-squares problem, no restart): returns (x, iterations), x None when
    ||rhs − A x||₂ ≤ rtol ||rhs||₂ is not reached in max_it iterations."""
    beta = float(np.linalg.norm(rhs))
    if beta == 0.0:
        return np.zeros_like(rhs), 0
    V = np.empty((max_it + 1, rhs.size))
    V[0] = rhs / beta
    Hm = np.zeros((max_it + 1, max_it))
    cs, sn = np.zeros(max_it), np.zeros(max_it)
    g = np.zeros(max_it + 1)
    g[0] = beta
    for k in range(max_it):
        w = matvec(precondition(V[k]))
        for _ in range(2):
            h = V[: k + 1] @ w
            w = w - h @ V[: k + 1]
            Hm[: k + 1, k] += h
        Hm[k + 1, k] = np.linalg.norm(w)
        for j in range(k):  # the earlier rotations on the new column
            Hm[j, k], Hm[j + 1, k] = (
                cs[j] * Hm[j, k] + sn[j] * Hm[j + 1, k],
                cs[j] * Hm[j + 1, k] - sn[j] * Hm[j, k],
            )
        r = np.hypot(Hm[k, k], Hm[k + 1, k])
        cs[k], sn[k] = Hm[k, k] / r, Hm[k + 1, k] / r
        small = Hm[k + 1, k] <= 1e-14 * beta
        Hm[k, k], Hm[k + 1, k] = r, 0.0
        g[k + 1], g[k] = -sn[k] * g[k], cs[k] * g[k]
        if abs(g[k + 1]) <= rtol * beta or small:
            y = scipy.linalg.solve_triangular(Hm[: k + 1, : k + 1], g[: k + 1])
            return precondition(y @ V[: k + 1]), k + 1
        V[k + 1] = w / np.linalg.norm(w)
    return None, max_it


def newton_matrix(model: FVModel, md, af, bf, dqs, D) -> tuple[sp.csc_matrix, np.ndarray]:
    """The sparse Newton matrix J = diag(md) − (∂F/∂T) diag(D) (2-D, 3-D) and its diagonal."""
    n = model.n
    dd = np.bincount(model.fi, af, n) - np.bincount(model.fj, bf, n)
    dd[model.sc] += dqs
    diag = md - dd * D
    data = np.concatenate([-bf * D[model.fj], af * D[model.fi], diag])
    A = sp.csc_matrix((data[model._perm], model._indices, model._indptr), shape=(n, n))
    return A, diag


def newton_product(model: FVModel, md, af, bf, dqs, D):
    """The product v ↦ J v with the Newton matrix of :func:`newton_matrix`, without assembling it."""
    n, fi, fj, sc = model.n, model.fi, model.fj, model.sc

    def matvec(v: np.ndarray) -> np.ndarray:
        u = D * v
        df = af * u[fi] + bf * u[fj]  # change of each face flux (into cell i, out of cell j)
        dF = np.bincount(fi, df, n) - np.bincount(fj, df, n)
        dF[sc] += dqs * u[sc]
        return md * v - dF

    return matvec


def linear_solve(model: FVModel, md, af, bf, dqs, D, rhs, scale: float = 0.0, rtol: float = 1e-10):
    """Solve the Newton system J x = rhs, J = diag(md) − (∂F/∂T) diag(D).

    ``af``, ``bf`` are the derivatives of each face flux (from cell i to cell j, positive into i) with
    respect to T_i and T_j; ``dqs`` the derivative of each surface cell's inflow with respect to its T;
    ``scale`` the a/Δt [1/s] of md. 2-D and 3-D: with the LU kept in ``model.factors`` as preconditioner
    to a relative (md-scaled) residual ``rtol`` when it is usable, else (or if that fails) by a new LU, which
    is kept.
    """
    n = model.n
    if model.dim == 1:
        return _tridiagonal_solve(model, md, af, bf, dqs, D, rhs)
    factors = model.factors
    if factors.usable(scale):
        x = factors.preconditioned_solve(newton_product(model, md, af, bf, dqs, D), rhs, md, rtol)
        if x is not None:
            return x
    A, diag = newton_matrix(model, md, af, bf, dqs, D)
    if n > DIRECT_MAX_CELLS:
        # large 3-D grids: direct LU fills in badly, so BiCGSTAB with a Jacobi preconditioner (the Newton
        # matrix is diagonally dominant: m/dt on the diagonal plus an M-matrix-like conduction part)
        pre = spla.LinearOperator((n, n), matvec=lambda v: v / diag, dtype=float)
        factors.n_iterative += 1
        x, info = spla.bicgstab(A, rhs, x0=rhs / diag, rtol=1e-12, atol=0.0, maxiter=500, M=pre)
        if info == 0:
            return x
    factors.factor(A, scale)
    return factors.lu.solve(rhs)


def _tridiagonal_solve(model: FVModel, md, af, bf, dqs, D, rhs):
    """1-D: the tridiagonal Newton system by LAPACK gtsv (banded solve if gtsv reports a zero pivot)."""
    n = model.n
    dd = np.zeros(n)
    dd[:-1] += af
    dd[1:] -= bf
    dd[model.sc] += dqs
    lower, diag, upper = af * D[:-1], md - dd * D, -bf * D[1:]
    _, _, _, x, info = _gtsv(lower, diag, upper, rhs, 1, 1, 1, 1)
    if info != 0:
        return scipy.linalg.solve_banded((1, 1), np.vstack([np.r_[0.0, upper], diag, np.r_[lower, 0.0]]), rhs)
    return x
