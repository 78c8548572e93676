"""The linear systems of the Newton iteration: tridiagonal (1-D), sparse direct (2-D), BiCGSTAB (3-D)."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import scipy.linalg
import scipy.linalg.lapack
import scipy.sparse as sp
import scipy.sparse.linalg as spla

if TYPE_CHECKING:
    from procplan.conduction.fv_model import FVModel

__all__ = ["linear_solve", "sparse_pattern"]

_DIRECT_MAX_CELLS = 2000
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


def linear_solve(model: FVModel, md, af, bf, dqs, D, rhs):
    """Solve the Newton system J x = rhs, J = diag(md) − (∂F/∂T) diag(D).

    ``af``, ``bf`` are the derivatives of each face flux (from cell i to cell j, positive into i) with
    respect to T_i and T_j; ``dqs`` the derivative of each surface cell's inflow with respect to its T.
    """
    n = model.n
    if model.dim == 1:
        dd = np.zeros(n)
        dd[:-1] += af
        dd[1:] -= bf
        dd[model.sc] += dqs
        # tridiagonal: LAPACK gtsv (the banded solver specialised to one band either side)
        lower, diag, upper = af * D[:-1], md - dd * D, -bf * D[1:]
        _, _, _, x, info = _gtsv(lower, diag, upper, rhs, 1, 1, 1, 1)
        if info != 0:
            return scipy.linalg.solve_banded(
                (1, 1), np.vstack([np.r_[0.0, upper], diag, np.r_[lower, 0.0]]), rhs
            )
        return x
    dd = np.bincount(model.fi, af, n) - np.bincount(model.fj, bf, n)
    dd[model.sc] += dqs
    data = np.concatenate([-bf * D[model.fj], af * D[model.fi], md - dd * D])
    A = sp.csc_matrix((data[model._perm], model._indices, model._indptr), shape=(n, n))
    if n > _DIRECT_MAX_CELLS:
        # 3-D grids: direct LU fills in badly, so BiCGSTAB with a Jacobi preconditioner (the Newton matrix
        # is diagonally dominant: m/dt on the diagonal plus an M-matrix-like conduction part)
        diag = md - dd * D
        pre = spla.LinearOperator((n, n), matvec=lambda v: v / diag, dtype=float)
        x, info = spla.bicgstab(A, rhs, x0=rhs / diag, rtol=1e-12, atol=0.0, maxiter=500, M=pre)
        if info == 0:
            return x
    return spla.splu(A, permc_spec="MMD_AT_PLUS_A").solve(rhs)
