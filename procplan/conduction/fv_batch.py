"""Many 1-D finite-volume problems at once: the discrete operator and the Newton iteration over a sample axis.

Every sample is a 1-D piece (slab, infinite cylinder or sphere) on a grid of the same node count; its size,
surface coefficient h, medium temperature, initial temperature and property scale factors may differ. The
fields are stacked as arrays of shape (samples, nodes) and one implicit step of all of them is one Newton
iteration over the stack: the same discrete equations, the same enthalpy-table look-ups and the same update
rules as :func:`procplan.conduction.fv_newton.solve_step_1d` (the table arrays come from one
:class:`procplan.conduction.fv_model.FVModel`; the kink cut is :func:`procplan.conduction.fv_newton._stop_on_kinks`),
with each sample's iteration stopped on its own convergence test, so a sample follows exactly the iterates it
would follow alone. The tridiagonal systems of all samples are solved by one LAPACK ``gtsv`` call on the
block-stacked band (zero couplings between blocks, so no pivot crosses a block: each block is solved as if
alone).

Property scale factors on the product's table: conductivity k_s(T) = f_k k(T), enthalpy H_s(T) = f_c H(T)
(specific and latent heat together) and density ρ_s = f_ρ ρ.

References
----------
Voller, V.R. & Swaminathan, C.R. (1991), General source-based method for solidification phase change,
Numerical Heat Transfer B 19:175–189 (the enthalpy-Newton iteration).
Patankar, S.V. (1980), Numerical Heat Transfer and Fluid Flow, Hemisphere, ch. 4 (vertex-centred grid,
harmonic-mean face conductivity).
Anderson, E. et al. (1999), LAPACK Users' Guide, 3rd ed., SIAM (``dgtsv``: Gaussian elimination with partial
pivoting of a tridiagonal matrix).
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from procplan.conduction.fv_boundary import SurfaceBoundary
from procplan.conduction.fv_grid import build_grid
from procplan.conduction.fv_linear import _gtsv
from procplan.conduction.fv_model import FVModel
from procplan.conduction.fv_newton import _MAX_NEWTON, _stop_on_kinks
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

__all__ = ["BatchModel", "scaled_geometry", "solve_rows", "stacked_tridiagonal"]

_DIMENSIONS = ("thickness_m", "diameter_m", "length_m", "width_m", "height_m")


def scaled_geometry(geometry: Geometry, factor: float) -> Geometry:
    """The geometry with every dimension times ``factor``."""
    dims = {k: getattr(geometry, k) * factor for k in _DIMENSIONS if getattr(geometry, k) is not None}
    return replace(geometry, **dims)


class BatchModel:
    """The discrete operator of S samples of one 1-D shape on grids of ``n_nodes`` nodes.

    Per-sample arrays (length S): ``size_factor`` on every dimension of ``geometry``, ``medium_C``, ``h_W_m2K``,
    ``k_factor``, ``enthalpy_factor`` and ``density_factor``.
    """

    def __init__(
        self,
        geometry: Geometry,
        props: PropertyTable,
        n_nodes: int,
        surface_refinement: float,
        size_factor: np.ndarray,
        medium_C: np.ndarray,
        h_W_m2K: np.ndarray,
        factors: tuple[np.ndarray, np.ndarray, np.ndarray],
    ) -> None:
        if len(geometry.axes) != 1:
            raise InvalidInputError(
                "geometry", geometry.shape, "a 1-D shape (slab, cylinder or sphere) for the batched solver"
            )
        self.S = size_factor.size
        self.medium_C, self.h = medium_C, h_W_m2K
        self.fk, self.fc, self.fr = factors
        self.unit_c = bool(np.all(self.fc == 1.0))  # no enthalpy factor: H is the table's own
        # one grid, scaled to each size: cell measures go as f^p, face measures over node distances as
        # f^(p-2) and the surface as f^(p-1), p = 1, 2, 3 for slab, cylinder, sphere (fv_grid's measures)
        grid = build_grid(geometry, n_nodes, surface_refinement)
        p = {"slab": 1, "cylinder": 2, "sphere": 3}[grid.axes[0].kind]
        f = size_factor[:, None]
        self.grid = grid
        self.n = grid.n_cells
        self.volume = grid.volume_m3[None, :] * f**p
        self.fg = grid.face_geometry_m[None, :] * f ** (p - 2)
        self.area = grid.surface_area_m2[0] * size_factor ** (p - 1)
        q = round(math.log2(scaled_geometry(geometry, 2.0).volume_m3 / geometry.volume_m3))
        self.piece_factor = geometry.volume_m3 * size_factor**q / self.volume.sum(axis=1)
        # the table's arrays, as the single-sample solver builds them
        base = FVModel(grid, props, SurfaceBoundary.constant(0.0, 1.0))
        self.base = base
        self.mass = (props.mass_density_kg_m3 * self.fr)[:, None] * self.volume
        self.cp_min = base.cp_min * self.fc  # smallest sensible specific heat of each sample [J/kgK]

    def temperature(self, H: np.ndarray, rows=slice(None)) -> np.ndarray:
        """T(H) [°C] of the rows' fields (shape (rows, nodes) or (rows,))."""
        if self.unit_c:
            return np.interp(H, self.base._hx, self.base._tx)
        fc = self.fc[rows]
        return np.interp(H / (fc[:, None] if H.ndim == 2 else fc), self.base._hx, self.base._tx)

    def surface_heat_W(self, T_surface: np.ndarray, rows=slice(None)) -> np.ndarray:
        """Heat into each piece [W] at the rows' surface temperatures (the single solver's order of operations)."""
        q = self.h[rows] * (self.medium_C[rows] - T_surface)
        return self.area[rows] * q * self.piece_factor[rows]

    def mean_C(self, H: np.ndarray) -> np.ndarray:
        """Each sample's mass-weighted mean temperature [°C]: T at the volume-mean enthalpy."""
        V = self.volume
        return self.temperature(np.einsum("ij,ij->i", V, H) / V.sum(axis=1))


def stacked_tridiagonal(lower: np.ndarray, diag: np.ndarray, upper: np.ndarray, rhs: np.ndarray):
    """Solve r independent tridiagonal systems (rows of ``diag``, shape (r, n)) by one ``gtsv`` on the stacked
    band. Returns (solutions (r, n), failed (r,) bool)."""
    r, n = diag.shape
    dl = np.zeros((r, n))
    du = np.zeros((r, n))
    dl[:, :-1] = lower
    du[:, :-1] = upper
    _, _, _, x, info = _gtsv(dl.ravel()[:-1], diag.ravel(), du.ravel()[:-1], rhs.ravel(), 1, 1, 1, 1)
    x = x.reshape(r, n)
    failed = np.zeros(r, dtype=bool)
    if info != 0:  # a zero pivot in some block: solve each alone to find which
        for i in range(r):
            _, _, _, xi, inf_i = _gtsv(lower[i], diag[i], upper[i], rhs[i], 1, 1, 1, 1)
            x[i], failed[i] = xi, inf_i != 0
    return x, failed | ~np.all(np.isfinite(x), axis=1)


def solve_rows(
    bm: BatchModel,
    rows: np.ndarray,
    dt: float,
    a: np.ndarray,
    hist: np.ndarray,
    Hn: np.ndarray,
    H0: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Solve m (a H − hist)/dt = F(T(H)) for the samples ``rows`` (a of shape (r,), fields (r, n)) by the
    Newton iteration of :func:`procplan.conduction.fv_newton.solve_step_1d`, each sample stopped on its own test.

    Returns (H (r, n), Newton iterations (r,), converged (r,) bool); a sample that did not converge keeps
    its last iterate."""
    M = bm.mass[rows]
    md = a[:, None] * M / dt
    rhs0 = (M / dt) * hist
    out = H0.copy()
    iters = np.full(rows.size, _MAX_NEWTON)
    ok = np.zeros(rows.size, dtype=bool)
    act = np.arange(rows.size)  # positions (in rows) still iterating
    state = _Rows(bm, rows, md, rhs0, Hn)
    H = H0.copy()
    for it in range(1, _MAX_NEWTON + 1):
        done, failed, linear_done, H_new = _newton_update(state, H)
        out[act[done]] = H[done]
        iters[act[done]] = it - 1
        ok[act[done]] = True
        rest = act[~done]
        iters[rest[failed]] = it
        out[rest[linear_done]] = H_new[linear_done]
        iters[rest[linear_done]] = it
        ok[rest[linear_done]] = True
        going = ~(failed | linear_done)
        act, H = rest[going], H_new[going]
        if not act.size:
            break
        keep = np.nonzero(~done)[0][going]
        state = state.take(keep)
    out[act] = H
    return out, iters, ok


class _Rows:
    """The per-sample arrays of the samples still iterating (taken once per shrink of the set)."""

    def __init__(self, bm: BatchModel, rows, md, rhs0, Hn) -> None:
        self.bm, self.rows, self.md, self.rhs0, self.Hn = bm, rows, md, rhs0, Hn
        self.fc, self.fk = bm.fc[rows][:, None], bm.fk[rows][:, None]
        self.fg, self.area, self.h, self.tm = bm.fg[rows], bm.area[rows], bm.h[rows], bm.medium_C[rows]
        self.tol = 1e-6 * bm.cp_min[rows]
        self.unit_k = bool(np.all(self.fk == 1.0))
        self.unit_c = bm.unit_c

    def take(self, keep: np.ndarray) -> _Rows:
        return _Rows(self.bm, self.rows[keep], self.md[keep], self.rhs0[keep], self.Hn[keep])


def _newton_update(st: _Rows, H: np.ndarray):
    """One Newton iteration of the rows at H. Returns (converged at H (all rows), and for the others: failed,
    converged after the update (the linear shortcut), H after the update)."""
    base = st.bm.base
    hg, slope, nseg, ksl = base.h_grid, base.slope, base.nseg, base._kslope
    u = H if st.unit_c else H / st.fc
    T = np.interp(u, base._hx, base._tx)
    k = np.interp(T, base._tk, base._kk)
    if not st.unit_k:
        k = k * st.fk
    ki, kj = k[:, :-1], k[:, 1:]
    ssum = ki + kj
    G = st.fg * (2.0 * ki * kj / ssum)
    dT = T[:, 1:] - T[:, :-1]
    flux = G * dT
    F = np.empty_like(H)
    F[:, 0] = 0.0
    F[:, 1:] = -flux
    F[:, :-1] += flux
    F[:, -1] += st.area * (st.h * (st.tm - T[:, -1]))
    R = st.md * H - st.rhs0 - F
    done = np.max(np.abs(R) / st.md, axis=1) < st.tol
    if done.all():
        nothing = np.zeros(0, dtype=bool)
        return done, nothing, nothing, H[:0]
    if done.any():  # the rest of the iteration for the others only
        st, sel = st.take(np.nonzero(~done)[0]), ~done
        H, T, k, G, dT, R = H[sel], T[sel], k[sel], G[sel], dT[sel], R[sel]
        u = H if st.unit_c else u[sel]
        ki, kj, ssum = k[:, :-1], k[:, 1:], k[:, :-1] + k[:, 1:]
    # dT/dH on the segment H moves into
    idx = np.searchsorted(hg, u, side="right") - 1
    np.clip(idx, 0, nseg - 1, out=idx)
    at_point = hg[idx] == u
    if at_point.any():
        moving_down = np.where(H != st.Hn, H < st.Hn, R > 0)
        idx = np.clip(idx - (at_point & moving_down), 0, nseg - 1)
    D = slope[idx] if st.unit_c else slope[idx] / st.fc
    if ksl.size:
        seg = np.searchsorted(base._tk, T, side="right") - 1
        dk = np.where((seg >= 0) & (seg < ksl.size), ksl[np.clip(seg, 0, ksl.size - 1)], 0.0)
        if not st.unit_k:
            dk = dk * st.fk
        w = 2.0 * st.fg / (ssum * ssum)
        af = -G + dT * (w * kj * kj * dk[:, :-1])
        bf = G + dT * (w * ki * ki * dk[:, 1:])
    else:
        af, bf = -G, G
    dd = np.empty_like(H)
    dd[:, :-1] = af
    dd[:, -1] = st.area * -st.h
    dd[:, 1:] -= bf
    delta, failed = stacked_tridiagonal(af * D[:, :-1], st.md - dd * D, -bf * D[:, 1:], -R)
    cut = np.zeros(H.shape, dtype=bool)
    if base.kinks.size:
        if st.unit_c:
            d_u, cut = _stop_on_kinks(base.kinks, u.ravel(), delta.ravel())
            delta = d_u.reshape(H.shape)  # (a failed row is not updated)
        else:
            d_u, cut = _stop_on_kinks(base.kinks, u.ravel(), (delta / st.fc).ravel())
            delta = d_u.reshape(H.shape) * st.fc
        cut = cut.reshape(H.shape)
    H_new = H + delta
    # the linear shortcut: every cell stayed on its table segment, where k is constant
    linear_done = ~failed & ~cut.any(axis=1) & ~ksl[idx].any(axis=1)
    if linear_done.any():
        c = np.nonzero(linear_done)[0]
        u_new = H_new[c] if st.unit_c else H_new[c] / st.fc[c]
        new_idx = np.clip(np.searchsorted(hg, u_new, side="right") - 1, 0, nseg - 1)
        linear_done[c] = np.all(new_idx == idx[c], axis=1)
    return done, failed, linear_done, H_new
