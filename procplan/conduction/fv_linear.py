"""The linear systems of the Newton iteration: tridiagonal (1-D), a new banded LU at every Newton iteration
(2-D grids whose shorter side is at most ``BANDED_MAX_BANDWIDTH`` cells), sparse LU kept across iterations and
steps (other 2-D and 3-D grids up to ``DIRECT_MAX_CELLS`` cells), BiCGSTAB (larger 3-D grids).

A sparse LU of the Newton matrix is kept in a :class:`Factorisation` and reused across Newton iterations and
time steps as the preconditioner of GMRES on the current Newton matrix (an inexact Newton method with a
frozen-factorisation preconditioner: Kelley, C. T., Solving Nonlinear Equations with Newton's Method, SIAM
2003, §3.2 and §5.3; GMRES: Saad, Y. & Schultz, M. H. (1986), SIAM J. Sci. Stat. Comput. 7:856–869) while
the time-step coefficient a/Δt has changed little; when GMRES does not converge within a few iterations the
matrix is factorised anew; when the Newton matrix is the very one factorised (a linear problem at an unchanged
time step), the kept LU solves it directly. The Newton convergence test is on the residual in every case, so a
reused factorisation changes the cost of a step, not the tolerance its answer meets. A banded LU (LAPACK
gbsv: Anderson, E. et al., LAPACK Users' Guide, 3rd ed., SIAM 1999, §2.4.2) of a narrow 2-D grid costs less
than the GMRES iterations it would save, so those grids solve every Newton system exactly.

Before all of these, a Newton matrix of the separable form (one conductivity, one dT/dH and one h over the
grid: a linear problem) is solved directly by fast diagonalisation (:mod:`procplan.conduction.fv_tensor`), for
any time step; on 3-D and wide 2-D grids, a matrix that is not separable is solved by GMRES with the fast
diagonalisation of a nearby separable one (mean conductivity, dT/dH and h) as preconditioner, the kept LU and
BiCGSTAB remaining for the systems where that does not converge in a few iterations (across a freezing front).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np
import scipy.linalg
import scipy.linalg.lapack
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from procplan.conduction.fv_tensor import SeparableSolver, separable_parameters

if TYPE_CHECKING:
    from procplan.conduction.fv_model import FVModel

__all__ = [
    "BANDED_MAX_BANDWIDTH",
    "DIRECT_MAX_CELLS",
    "REUSE_SCALE_CHANGE",
    "Factorisation",
    "band_pattern",
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
#: Widest band [cells] (the shorter side of a 2-D grid in the solver's numbering) solved by a new banded LU at
#: every Newton iteration instead of the kept sparse LU with GMRES: at 25 × 25 cells a banded LU took a fifth
#: of a sparse one, about the Python cost of one GMRES iteration (measured; ``python -m procplan.bench``
#: compares the two on the roulade plan). 0 turns the banded path off.
BANDED_MAX_BANDWIDTH = 40
#: True: a Newton matrix of the separable form (one k, one dT/dH, one h over the grid; a linear problem such as
#: chilling with constant properties) is solved directly by fast diagonalisation
#: (:mod:`procplan.conduction.fv_tensor`), whatever the time step; False: by the paths below (kept so that
#: ``python -m procplan.bench`` can time both in the same run).
SEPARABLE_SOLVES = True
#: False: the solver as it was before exact solves were added (every 2-D grid on the kept sparse LU with
#: GMRES, a kept LU never used directly, every Newton step confirmed by a further residual); kept so that
#: ``python -m procplan.bench`` can time both in the same run.
EXACT_SOLVES = True
_gtsv = scipy.linalg.lapack.dgtsv
_gbsv = scipy.linalg.lapack.dgbsv
_gbtrs = scipy.linalg.lapack.dgbtrs


def sparse_pattern(fi: np.ndarray, fj: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The CSC pattern of the Newton matrix of n cells with faces (fi, fj): the permutation that puts the
    entries [face (i, j) ..., face (j, i) ..., diagonal ...] in CSC order, the row indices and the column
    pointers."""
    diag = np.arange(n)
    rows = np.concatenate([fi, fj, diag])
    cols = np.concatenate([fj, fi, diag])
    pos = sp.coo_matrix((np.arange(1, rows.size + 1, dtype=float), (rows, cols)), shape=(n, n)).tocsc()
    return pos.data.astype(np.int64) - 1, pos.indices.copy(), pos.indptr.copy()


def band_pattern(fi: np.ndarray, fj: np.ndarray, n: int, dim: int):
    """The LAPACK band storage of the Newton matrix of a 2-D grid: (flat Fortran-order positions of the entries
    [face (i, j) ..., face (j, i) ..., diagonal ...] in the (3 kl + 1) × n array, kl = ku, rows); None in 3-D
    and when the band is wider than ``BANDED_MAX_BANDWIDTH``."""
    kl = int(np.max(np.abs(fi - fj))) if fi.size else 0
    if dim != 2 or kl > BANDED_MAX_BANDWIDTH:
        return None
    rows = 3 * kl + 1
    diag = np.arange(n)
    r, c = np.concatenate([fi, fj, diag]), np.concatenate([fj, fi, diag])
    return (2 * kl + r - c) + c * rows, kl, rows


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
        self.exact = False  # the last solve was direct (an LU of the very Newton matrix)
        self.key: tuple = ()  # the (md, af, bf, dqs, D) of the kept LU's matrix
        self.previous: tuple = ()  # those of the last system solved
        self.band = None  # the last banded LU: (its key, LU, pivots)
        self.band_buffer = None  # the storage the banded LU is built and factorised in
        self.separable = None  # the fast-diagonalisation solver of the last separable matrix (fv_tensor)
        self.nearby = (
            None  # that of a separable matrix near the last one not separable (GMRES preconditioner)
        )
        self.n_separable = 0  # solves by fast diagonalisation, directly or as GMRES preconditioner

    def usable(self, scale: float) -> bool:
        """True when a kept LU exists and a/Δt has changed little since it was built."""
        return self.lu is not None and abs(scale / self.scale - 1.0) <= self.reuse_change

    def factor(self, A: sp.csc_matrix, scale: float, key: tuple = ()) -> None:
        """Factorise A (built for a/Δt = scale from the arrays ``key``) and keep the LU."""
        self.lu = spla.splu(A, permc_spec="MMD_AT_PLUS_A")
        self.scale = scale
        self.key = key
        self.n_factorisations += 1

    def same_matrix(self, key: tuple, kept: tuple | None = None) -> bool:
        """True when the Newton matrix of ``key`` = (md, af, bf, dqs, D) is that of ``kept`` (default: the kept
        LU's) to within 1e-12 of each array's largest entry (time steps meant equal may differ in the last
        digits; an LU that close solves the system to the same rounding level)."""
        kept = self.key if kept is None else kept
        # md first: it differs whenever the time step does
        return len(kept) == len(key) and all(_close(a, b) for a, b in zip(key, kept, strict=True))

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


def _close(a: np.ndarray, b: np.ndarray) -> bool:
    if a is b:
        return True
    if a.shape != b.shape:
        return False
    return a.size == 0 or float(np.max(np.abs(a - b))) <= 1e-12 * float(np.max(np.abs(b)))


def gmres_right(matvec, precondition, rhs: np.ndarray, rtol: float, max_it: int):
    """Right-preconditioned GMRES from x = 0 (Arnoldi by classical Gram–Schmidt applied twice, Givens
    rotations for the small least-squares problem, no restart): returns (x, iterations), x None when
    ||rhs − A x||₂ ≤ rtol ||rhs||₂ is not reached in max_it iterations. (The products with the basis by
    einsum, not BLAS: on a large grid BLAS spreads them over threads, whose wake-up on busy cores costs
    milliseconds each.)"""
    beta = _norm(rhs)
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
            h = np.einsum("ij,j->i", V[: k + 1], w)
            w = w - np.einsum("i,ij->j", h, V[: k + 1])
            Hm[: k + 1, k] += h
        Hm[k + 1, k] = _norm(w)
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
            return precondition(np.einsum("i,ij->j", y, V[: k + 1])), k + 1
        V[k + 1] = w / _norm(w)
    return None, max_it


def _norm(v: np.ndarray) -> float:
    """The 2-norm by einsum (np.linalg.norm calls BLAS dot, threaded on a large grid)."""
    return math.sqrt(float(np.einsum("i,i->", v, v)))


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
    ``scale`` the a/Δt [1/s] of md. Narrow 2-D grids: by a new banded LU. Other 2-D and 3-D grids: directly
    by the LU kept in ``model.factors`` when it is of this very matrix; by GMRES with it as preconditioner to
    a relative (md-scaled) residual ``rtol`` when it is usable; else (or if that fails, or when the matrix is
    that of the previous solve) by a new LU, which is kept. ``model.factors.exact`` tells whether the solve
    was direct.
    """
    if model.dim == 1:
        return _tridiagonal_solve(model, md, af, bf, dqs, D, rhs)
    factors = model.factors
    key = (md, af, bf, dqs, D)
    if not EXACT_SOLVES:
        return _kept_lu_solve(model, key, rhs, scale, rtol)
    if SEPARABLE_SOLVES:
        x = _separable_solve(model, key, rhs)
        if x is not None:
            return x
    if model.band is not None:
        x = _banded_solve(model, key, rhs)
        if x is not None:
            return x
    factors.exact = False
    if SEPARABLE_SOLVES and model.band is None:
        x = _nearby_separable_solve(model, key, rhs, rtol)
        if x is not None:
            return x
    # the matrix of the previous solve again (a linear problem at a settled time step): factorise it, so that
    # the steps that follow solve directly
    previous, factors.previous = factors.previous, key
    if factors.usable(scale):
        if factors.same_matrix(key):
            factors.exact = True
            factors.n_reused += 1
            return factors.lu.solve(rhs)
        if not factors.same_matrix(key, previous):
            x = factors.preconditioned_solve(newton_product(model, md, af, bf, dqs, D), rhs, md, rtol)
            if x is not None:
                return x
    return _new_lu_solve(model, key, rhs, scale)


def _separable_solve(model: FVModel, key: tuple, rhs: np.ndarray) -> np.ndarray | None:
    """The Newton system by fast diagonalisation when its matrix is separable (None when it is not); the
    per-axis eigenvectors are kept while k and h stay the same."""
    params = separable_parameters(model, *key)
    if params is None:
        return None
    alpha, beta, k, h = params
    factors = model.factors
    kept = factors.separable
    if kept is None or abs(kept.k - k) > 1e-12 * k or abs(kept.h - h) > 1e-12 * max(h, 1e-300):
        kept = factors.separable = SeparableSolver(model.grid, k, h)
    factors.n_separable += 1
    factors.exact = True
    return kept.solve(alpha, beta, rhs)


def _nearby_separable_solve(model: FVModel, key: tuple, rhs: np.ndarray, rtol: float) -> np.ndarray | None:
    """GMRES on the Newton system with the fast-diagonalisation solve of a separable matrix nearby (the mean
    conductivity, dT/dH and h of this one) as right preconditioner, to the md-scaled relative residual
    ``rtol`` in at most ``GMRES_MAX_ITERATIONS`` iterations; None when it does not get there (a
    temperature-dependent conductivity or c_p varies little over the grid in a chill, so two or three
    iterations usually do; across a freezing front dT/dH varies by orders of magnitude and it fails)."""
    md, af, bf, dqs, D = key
    k = float(np.mean((bf - af) / (2.0 * model.fg)))
    h = float(np.mean(-dqs / model.sa))
    beta = float(np.mean(D))
    if not (k > 0.0 and h >= 0.0 and beta > 0.0):
        return None
    factors = model.factors
    kept = factors.nearby
    if kept is None or abs(kept.k - k) > 1e-2 * k or abs(kept.h - h) > 1e-2 * max(h, 1e-300):
        kept = factors.nearby = SeparableSolver(model.grid, k, h)
    alpha = float(md[0] / model.grid.volume_m3[0])
    matvec = newton_product(model, *key)
    x, its = gmres_right(
        lambda v: matvec(v) / md,
        lambda v: kept.solve(alpha, beta, md * v),
        rhs / md,
        rtol,
        GMRES_MAX_ITERATIONS,
    )
    factors.n_gmres_iterations += its
    if x is not None:
        factors.n_separable += 1
    return x


def _kept_lu_solve(model: FVModel, key: tuple, rhs: np.ndarray, scale: float, rtol: float) -> np.ndarray:
    """The Newton system with the kept LU as GMRES preconditioner when it is usable, else by a new LU."""
    factors = model.factors
    factors.exact = False
    if factors.usable(scale):
        x = factors.preconditioned_solve(newton_product(model, *key), rhs, key[0], rtol)
        if x is not None:
            return x
    return _new_lu_solve(model, key, rhs, scale)


def _new_lu_solve(model: FVModel, key: tuple, rhs: np.ndarray, scale: float) -> np.ndarray:
    """The Newton system by a new sparse LU, which is kept (BiCGSTAB first above ``DIRECT_MAX_CELLS``)."""
    n, factors = model.n, model.factors
    A, diag = newton_matrix(model, *key)
    if n > DIRECT_MAX_CELLS:
        # large 3-D grids: direct LU fills in badly, so BiCGSTAB with a Jacobi preconditioner (the Newton
        # matrix is diagonally dominant: m/dt on the diagonal plus an M-matrix-like conduction part)
        pre = spla.LinearOperator((n, n), matvec=lambda v: v / diag, dtype=float)
        factors.n_iterative += 1
        x, info = spla.bicgstab(A, rhs, x0=rhs / diag, rtol=1e-12, atol=0.0, maxiter=500, M=pre)
        if info == 0:
            return x
    factors.factor(A, scale, key)
    factors.exact = EXACT_SOLVES
    return factors.lu.solve(rhs)


def _banded_solve(model: FVModel, key: tuple, rhs: np.ndarray) -> np.ndarray | None:
    """The Newton system of a narrow 2-D grid by a banded LU of its matrix (kept for a second right-hand side
    of the same matrix, the free medium's column); None when LAPACK reports a zero pivot."""
    factors = model.factors
    flat, kl, rows = model.band
    kept = factors.band
    if kept is not None and all(a is b for a, b in zip(kept[0], key, strict=True)):
        x, info = _gbtrs(kept[1], kl, kl, rhs, kept[2])
    else:
        md, af, bf, dqs, D = key
        dd = np.bincount(model.fi, af, model.n) - np.bincount(model.fj, bf, model.n)
        dd[model.sc] += dqs
        # one buffer per model, cleared each time (a new 3 kl + 1 by n array costs fresh pages every call)
        buf = factors.band_buffer
        if buf is None:
            buf = factors.band_buffer = np.zeros(rows * model.n)
        else:
            buf.fill(0.0)
        buf[flat] = np.concatenate([-bf * D[model.fj], af * D[model.fi], md - dd * D])
        lub, piv, x, info = _gbsv(kl, kl, buf.reshape(model.n, rows).T, rhs, overwrite_ab=1)
        factors.band = (key, lub, piv) if info == 0 else None
        factors.n_factorisations += info == 0
    factors.exact = info == 0
    return x if info == 0 else None


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
