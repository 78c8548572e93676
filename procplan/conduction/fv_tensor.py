"""Direct solve of a separable Newton matrix on a tensor-product grid by fast diagonalisation.

On the grids of :mod:`procplan.conduction.fv_grid` the cell volume is the product of per-axis cell measures and
the conductance geometry of a face on axis a is its 1-D geometry times the other axes' cell measures. When the
conductivity is the same in every cell (so every face conductance is k times its geometry, with no derivative),
dT/dH is the same in every cell and the surface takes h A with one h, the Newton matrix is

    J = α ⊗ₐ Mₐ + β Σₐ Bₐ ⊗_{b≠a} M_b,   Bₐ = k Kₐ + h Sₐ,

with Mₐ the diagonal of cell measures, Kₐ the 1-D conduction stencil, Sₐ the surface measure on the last node,
α = a ρ/Δt and β = dT/dH. Each pair (Bₐ, Mₐ) is diagonalised once (Bₐ Vₐ = Mₐ Vₐ Λₐ, Vₐᵀ Mₐ Vₐ = I), and

    J⁻¹ = (⊗ Vₐ) diag(1 / (α + β Σₐ λₐ)) (⊗ Vₐ)ᵀ,

so a solve costs a few small dense products per axis, for any α and β (time step, BDF coefficient, slope):
Lynch, R. E., Rice, J. R. & Thomas, D. H. (1964), Direct solution of partial difference equations by tensor
product methods, Numer. Math. 6:185–199. Whether a Newton matrix has this form is tested on its arrays (to
1e-12 of each array's scale, the test the kept LU's reuse uses); when it has not, the caller solves otherwise.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg

from procplan.conduction.fv_grid import FVGrid

__all__ = ["SeparableSolver", "separable_parameters"]

#: Relative spread [-] of k, dT/dH and h over the grid below which the Newton matrix is taken as separable.
SEPARABLE_RTOL = 1e-12


class SeparableSolver:
    """The per-axis eigen-decompositions of a tensor-product grid for one (k, h); solves for any α, β."""

    def __init__(self, grid: FVGrid, k_W_mK: float, h_W_m2K: float) -> None:
        self.k, self.h, self.shape = k_W_mK, h_W_m2K, grid.shape
        self.vectors: list[np.ndarray] = []
        lam = np.zeros(())
        for ax in grid.axes:
            n = ax.x_m.size
            geo = ax.face_measure / ax.node_distance_m
            B = np.zeros((n, n))
            i = np.arange(n - 1)
            B[i, i] += k_W_mK * geo
            B[i + 1, i + 1] += k_W_mK * geo
            B[i, i + 1] -= k_W_mK * geo
            B[i + 1, i] -= k_W_mK * geo
            B[-1, -1] += h_W_m2K * ax.surface_measure
            w, V = scipy.linalg.eigh(B, np.diag(ax.cell_measure))
            self.vectors.append(V)
            lam = np.add.outer(lam, w)
        self.eigenvalues = lam.ravel()  # Σₐ λₐ per mode, C order
        self.transposed = [np.ascontiguousarray(V.T) for V in self.vectors]

    def solve(self, alpha: float, beta: float, rhs: np.ndarray) -> np.ndarray:
        """x with (α ⊗M + β Σ Bₐ ⊗ M_others) x = rhs: α = a ρ/Δt [kg/(m³ s)], β = dT/dH [K kg/J]."""
        y = _along_axes(self.transposed, rhs.reshape(self.shape))
        y = y.reshape(-1) / (alpha + beta * self.eigenvalues)
        y = _along_axes(self.vectors, y.reshape(self.shape))
        return y.reshape(-1)


def _along_axes(mats: list[np.ndarray], y: np.ndarray) -> np.ndarray:
    """y with mats[a] applied along each axis a. In 3-D as stacks of small products, one per node of another
    axis (a single large product would be spread over threads, which costs more than it saves when the
    cores are busy: 31³ took 20 ms that way, 0.1 ms as a stack, measured on 2 shared cores)."""
    if y.ndim == 3:
        y = np.matmul(mats[0], y.transpose(1, 0, 2)).transpose(1, 0, 2)
        y = np.matmul(mats[1], y)
        return np.matmul(mats[2], y.transpose(0, 2, 1)).transpose(0, 2, 1)
    return mats[0] @ y @ mats[1].T


def _uniform(values: np.ndarray) -> float | None:
    """The common value of an array whose entries agree to ``SEPARABLE_RTOL`` of its largest, else None."""
    lo, hi = float(values.min()), float(values.max())
    return hi if hi - lo <= SEPARABLE_RTOL * max(abs(lo), abs(hi)) else None


def separable_parameters(model, md, af, bf, dqs, D) -> tuple[float, float, float, float] | None:
    """(α, β, k, h) of the Newton matrix diag(md) − (∂F/∂T) diag(D) when it has the separable form of the
    module docstring (α per unit volume), else None. (md = a m/Δt with m = ρ V is uniform per volume by
    construction; the face derivatives of a one-value conductivity are the model's own G and −G.)"""
    if bf is model._G_const and af is model.minus_G:
        k = model.k_constant
    elif af.size and af[0] != -bf[0]:  # (the first face settles most cases)
        return None
    elif np.array_equal(af, -bf):  # else a conductance depending on temperature
        k = _uniform(bf / model.fg)
    else:
        return None
    beta = float(D[0]) if D is model.single_slope else _uniform(D)
    if k is None or k <= 0.0 or beta is None or beta <= 0.0:
        return None
    h = -float(dqs[0] / model.sa[0]) if not model.has_q else _uniform(-dqs / model.sa)
    if h is None:
        return None
    return float(md[0] / model.grid.volume_m3[0]), beta, k, h
