"""The discrete operator of one finite-volume problem: table look-ups, face conductances and surface fluxes.

The Newton iteration of one implicit step is in :mod:`procplan.conduction.fv_newton`, the linear systems it
solves in :mod:`procplan.conduction.fv_linear`.
"""

from __future__ import annotations

import numpy as np

from procplan.conduction.fv_boundary import SurfaceBoundary
from procplan.conduction.fv_grid import FVGrid
from procplan.conduction.fv_linear import Factorisation, band_pattern, sparse_pattern
from procplan.conduction.fv_newton import solve_step
from procplan.properties.table import PropertyTable

__all__ = ["FVModel"]


class FVModel:
    """Discrete operator of one problem: fluxes, residual and Newton solve."""

    def __init__(self, grid: FVGrid, props: PropertyTable, boundary: SurfaceBoundary) -> None:
        self.grid = grid
        self.props = props
        self.boundary = boundary
        self.n = grid.n_cells
        self.dim = len(grid.shape)
        self.mass = props.mass_density_kg_m3 * grid.volume_m3
        self.fi, self.fj, self.fg = grid.face_i, grid.face_j, grid.face_geometry_m
        self.sc, self.sa = grid.surface_cells, grid.surface_area_m2
        hg, tg = props.enthalpy_J_kg, props.temperature_C
        self.h_grid = hg
        self.slope = np.diff(tg) / np.diff(hg)  # dT/dH per table segment [K kg/J], 0 on an isothermal plateau
        self.nseg = self.slope.size
        sensible = np.diff(tg) > 0
        self.cp_min = float((np.diff(hg)[sensible] / np.diff(tg)[sensible]).min())
        # The table's own look-ups, with its linear extension past the ends built into the arrays so that a
        # bare np.interp reproduces PropertyTable.temperature / conductivity (checked in the tests).
        span = 1e3 * (hg[-1] - hg[0])
        self._hx = np.r_[hg[0] - span, hg, hg[-1] + span]
        self._tx = np.r_[tg[0] - span * self.slope[0], tg, tg[-1] + span * self.slope[-1]]
        self._tk, self._kk = tg, props.conductivity_W_mK
        dtg = np.diff(tg)
        self._kslope = np.where(dtg > 0, np.diff(self._kk) / np.where(dtg > 0, dtg, 1.0), 0.0)
        # one conductivity over the table: the face conductances, computed once (the same arithmetic as
        # :meth:`conductance`, so the same values), with no derivative
        k0 = float(self._kk[0])
        #: the conductivity [W/(m K)] when the table has one value, else None; then also the face conductances
        #: G and −G (the Newton matrix's off-diagonal derivatives)
        self.k_constant = k0 if np.all(self._kk == k0) and k0 > 0 else None
        self._G_const = self.minus_G = None
        if self.k_constant is not None:
            self._G_const = self.fg * (2.0 * k0 * k0 / (k0 + k0))
            self.minus_G = -self._G_const
            self._G_const.setflags(write=False)
            self.minus_G.setflags(write=False)
        #: dT/dH of every cell when the table has one segment (constant c_p, no latent heat), else None
        self.single_slope = np.full(self.n, self.slope[0]) if self.nseg == 1 else None
        # "Strong" kinks of T(H), where the slope changes by more than a factor 2 (the ends of a freezing
        # range): a Newton update is stopped on such a kink so that the next iteration uses the slope beyond it.
        sl = self.slope
        ratio = np.maximum(sl[1:], 1e-300) / np.maximum(sl[:-1], 1e-300)
        strong = (ratio > 2.0) | (ratio < 0.5)
        kinks = hg[1:-1][strong]
        self.kinks = kinks if kinks.size <= 16 else kinks[:0]
        if self.dim > 1:
            self._perm, self._indices, self._indptr = sparse_pattern(self.fi, self.fj, self.n)
        #: the banded storage of the Newton matrix of a narrow 2-D grid (fv_linear.band_pattern), else None
        self.band = band_pattern(self.fi, self.fj, self.n, self.dim)
        self.has_q = boundary.q_extra_W_m2 is not None
        #: the medium solved with the pieces (procplan.conduction.fv_medium.MediumNode), None: a given medium
        self.medium_node = boundary.medium_node
        self._at: tuple | None = None  # (t, h, medium, boundary) of the last time asked (_boundary_at)
        self.factors = Factorisation(
            self.dim
        )  # the Newton matrix's LU kept across iterations and steps (2-D, 3-D)

    # -- pieces --------------------------------------------------------------------------
    def temperature(self, H):
        """T(H) [°C], the table's piecewise-linear inverse (same values as ``props.temperature``)."""
        return np.interp(H, self._hx, self._tx)

    def dT_dH(self, H: np.ndarray, direction: np.ndarray) -> np.ndarray:
        """Slope of T(H) on the table segment H lies in; at a table point, the segment H moves into."""
        return self.slope[self.segment(H, direction)]

    def segment(self, H: np.ndarray, direction) -> np.ndarray:
        """The table segment of each cell: the one H lies in; at a table point, the one H moves into.
        ``direction``: the sign of each cell's move, or a function giving it (called only when a cell sits on a
        table point)."""
        hg = self.h_grid
        i = np.searchsorted(hg, H, side="right") - 1
        at_point = hg[np.minimum(np.maximum(i, 0), hg.size - 1)] == H
        if at_point.any():
            i = i - (at_point & ((direction() if callable(direction) else direction) < 0))
        return np.minimum(np.maximum(i, 0), self.nseg - 1)

    def conductance(self, T: np.ndarray, derivatives: bool = False):
        """Face conductances G = k_f A/Δx [W/K] with the harmonic mean k_f = 2 k_i k_j/(k_i + k_j);
        with ``derivatives``, also dG/dT_i and dG/dT_j (None, None when the conductivity is one value)."""
        parts = self.conductance_parts(T)
        if not derivatives:
            return parts[0]
        return (parts[0], *self.conductance_slopes(T, parts))

    def conductance_parts(self, T: np.ndarray) -> tuple:
        """(G, k_i, k_j, k_i + k_j) of each face; (G, None, None, None) when the conductivity is one value
        (G then computed once)."""
        if self._G_const is not None:
            return self._G_const, None, None, None
        k = np.interp(T, self._tk, self._kk)
        ki, kj = k[self.fi], k[self.fj]
        s = ki + kj
        return self.fg * (2.0 * ki * kj / s), ki, kj, s

    def conductance_slopes(self, T: np.ndarray, parts: tuple) -> tuple:
        """dG/dT_i and dG/dT_j of each face from the :meth:`conductance_parts` of T; None, None when the
        conductivity is one value."""
        _, ki, kj, s = parts
        if ki is None:
            return None, None
        seg = np.searchsorted(self._tk, T, side="right") - 1
        inside = (seg >= 0) & (seg < self._kslope.size)
        dk = np.where(inside, self._kslope[np.minimum(np.maximum(seg, 0), self._kslope.size - 1)], 0.0)
        w = 2.0 * self.fg / (s * s)
        return w * kj * kj * dk[self.fi], w * ki * ki * dk[self.fj]

    def medium_at(self, t: float) -> float:
        """The medium temperature [°C] at t: the boundary's, or the coupled medium's latest solution."""
        return self._boundary_at(t)[2] if self.medium_node is None else self.medium_node.latest_C

    def _boundary_at(self, t: float) -> tuple:
        """(t, h, medium temperature) of the boundary at t, kept for the Newton iterations of one step."""
        kept = self._at
        if kept is None or kept[0] != t or kept[3] is not self.boundary:
            b = self.boundary
            kept = self._at = (t, b.h(t), b.medium(t), b)
        return kept

    def surface_flux(
        self, t: float, Ts: np.ndarray, medium_C: float | None = None
    ) -> tuple[np.ndarray, np.ndarray]:
        """Heat into each surface cell [W] and its derivative with respect to the cell temperature [W/K]
        (with the medium at ``medium_C``, default :meth:`medium_at`)."""
        h = self._boundary_at(t)[1]
        q = h * ((self.medium_at(t) if medium_C is None else medium_C) - Ts)
        if not self.has_q:
            return self.sa * q, self.sa * -h
        dq = np.full(Ts.shape, -h)
        eps = 1e-3
        q0 = self.boundary.q_extra(t, Ts)
        q1 = self.boundary.q_extra(t, Ts + eps)
        q = q + q0
        dq = dq + (q1 - q0) / eps
        return self.sa * q, self.sa * dq

    def net_flow(
        self,
        t: float,
        T: np.ndarray,
        G: np.ndarray,
        medium_C: float | None = None,
        dT: np.ndarray | None = None,
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Heat into each cell [W], into each surface cell and its derivative; ``dT`` the face differences
        T_j − T_i when already computed."""
        flux = G * (T[self.fj] - T[self.fi] if dT is None else dT)
        if self.dim == 1:
            F = np.zeros(self.n)
            F[:-1] += flux
            F[1:] -= flux
        else:
            F = np.bincount(self.fi, flux, self.n) - np.bincount(self.fj, flux, self.n)
        qs, dqs = self.surface_flux(t, T[self.sc], medium_C)
        F[self.sc] += qs
        return F, qs, dqs

    def heat_flow_W(self, t: float, H: np.ndarray, medium_C: float | None = None) -> float:
        """Heat into the whole piece [W] (the grid's surface times the pieces it stands for)."""
        qs, _ = self.surface_flux(t, self.temperature(H[self.sc]), medium_C)
        return float(qs.sum()) * self.grid.piece_factor

    # -- one implicit step (procplan.conduction.fv_newton) ---------------------------------
    def solve_step(self, t1: float, dt: float, a: float, hist: np.ndarray, Hn: np.ndarray, H0: np.ndarray):
        """Solve m (a H − hist)/dt = F(T(H)) at t1. Returns (H, iterations) or (None, iterations).
        With a coupled medium, its node solves the step with the pieces (procplan.conduction.fv_medium)."""
        if self.medium_node is not None:
            return self.medium_node.solve_step(self, solve_step, t1, dt, a, hist, Hn, H0)
        return solve_step(self, t1, dt, a, hist, Hn, H0)
