"""Transient conduction with freezing and thawing: an implicit finite-volume enthalpy solver.

Shapes: slab (1-D; both faces exposed = symmetry at the midplane, ``faces=1`` = insulated back),
infinite cylinder and sphere (1-D radial), finite cylinder (2-D axisymmetric r, z over a quarter of the
meridian section) and brick (3-D over one octant). See :mod:`procplan.conduction.fv_grid`.

Discrete equations (per cell i of mass m_i = rho_m V_i, rho_m = ``props.mass_density_kg_m3``)::

    m_i dH_i/dt = Σ_faces G_f (T_j − T_i) + A_s,i [h(t) (T_∞(t) − T_i) + q_extra(t, T_i)],   T_i = T(H_i)

with the face conductance G_f = k_f A_f / Δx and k_f the *harmonic* mean of the two cell conductivities
(the series resistance of the two half-distances; it keeps the flux right across a frozen/unfrozen jump).
The unknown is the specific enthalpy, so latent heat is conserved and can never be stepped over.

Time integration: BDF2 with variable steps (first step, and the step after each step change of the
surface condition, by backward Euler), or backward Euler throughout (``scheme="euler"``).
Each step is solved by Newton's method on H with the Jacobian dT/dH = 1/c_app taken from the same
enthalpy table (zero on an isothermal plateau), then switched to per-cell secant slopes if the iteration
is slow; this is the enthalpy-Newton family of Voller & Swaminathan (1991). Linear algebra:
LAPACK ``gtsv`` (tridiagonal; ``scipy.linalg.solve_banded`` as fallback) in 1-D, ``scipy.sparse.linalg.splu``
(minimum-degree ordering) in 2-D, Jacobi-preconditioned BiCGSTAB in 3-D (LU fill-in is too costly there).

The surface node lies on the surface (vertex-centred grid, half cells at the ends), so the reported
surface temperature is that node's temperature, whose half-cell balance includes the convective flux.

References
----------
Voller, V.R. & Swaminathan, C.R. (1991), General source-based method for solidification phase change,
Numerical Heat Transfer B 19:175–189.
Patankar, S.V. (1980), Numerical Heat Transfer and Fluid Flow, Hemisphere, ch. 4 (harmonic-mean
interface conductivity, practice B grids).
Hairer, E. & Wanner, G., Solving Ordinary Differential Equations II, 2nd ed., §III.5 (variable-step BDF2).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import scipy.linalg
import scipy.linalg.lapack
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from procplan import validate
from procplan.conduction.fv_boundary import SurfaceBoundary, TimeProfile
from procplan.conduction.fv_grid import FVGrid, build_grid
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

__all__ = [
    "SCHEMES",
    "ConductionResult",
    "ConductionSolverError",
    "SurfaceBoundary",
    "TimeProfile",
    "solve_conduction",
]

#: Time-integration schemes.
SCHEMES: dict[str, str] = {
    "bdf2": "variable-step BDF2 (second order; backward-Euler start and restart after step changes)",
    "euler": "backward Euler (first order, monotone)",
}

#: Directions of the core-temperature stop condition.
STOP_DIRECTIONS: dict[str, str] = {
    "falling": "core drops to the target",
    "rising": "core rises to the target",
}

_MAX_NEWTON = 40
#: Largest relative change of the surface heat flow per adaptive step (trapezoidal heat integration).
FLUX_CHANGE_PER_STEP = 0.1
_DIRECT_MAX_CELLS = 2000
_gtsv = scipy.linalg.lapack.dgtsv
_SECANT_AFTER = 8


class ConductionSolverError(RuntimeError):
    """The nonlinear iteration failed even at the smallest time step (a property table or input far outside sense)."""


@dataclass(frozen=True, eq=False)
class ConductionResult:
    """History and provenance of one finite-volume run (one piece of product).

    Attributes
    ----------
    time_s : times of the history [s]
    core_C : thermal-centre temperature [°C]
    surface_C : surface temperature at the fastest point [°C] (1-D: the surface; 2-D: the rim edge;
        3-D: the corner), the temperature of the node on the surface
    face_surface_C : surface temperature at the centre of the face on the shortest axis [°C]
    mean_C : mass-weighted mean temperature [°C], the temperature at the mean specific enthalpy
        T(Σ m_i H_i / Σ m_i) (this is the one to use for energy and "average product temperature")
    volume_mean_C : plain volume mean of the cell temperatures [°C] (differs from mean_C in a freezing range)
    heat_flow_W : heat flow into the piece through its surface [W] (per m² of face for an unbounded slab,
        per m of length for an unbounded cylinder, as ``Geometry.volume_m3`` and ``area_m2`` define)
    heat_J : cumulative heat into the piece since t = 0 [J] (trapezoidal rule over every accepted step)
    final_field : temperature field at the last time [°C], shaped like ``grid.shape``
    final_enthalpy_J_kg : specific-enthalpy field at the last time [J/kg]
    grid : the grid (axes, node positions, cell volumes)
    n_steps, n_rejected, n_iterations : accepted steps, rejected steps, Newton iterations
    dt_min_s, dt_max_s : smallest and largest accepted step [s]
    energy_balance_error : |∫Q dt − Δ(Σ m H)| / |Δ(Σ m H)| (0 when nothing changed)
    stopped_at_s : time the core crossed ``stop_when_core_C`` [s], or None
    method : description of the discretisation
    """

    time_s: np.ndarray
    core_C: np.ndarray
    surface_C: np.ndarray
    face_surface_C: np.ndarray
    mean_C: np.ndarray
    volume_mean_C: np.ndarray
    heat_flow_W: np.ndarray
    heat_J: np.ndarray
    final_field: np.ndarray
    final_enthalpy_J_kg: np.ndarray
    grid: FVGrid
    n_steps: int
    n_rejected: int
    n_iterations: int
    dt_min_s: float
    dt_max_s: float
    energy_balance_error: float
    stopped_at_s: float | None
    method: str

    def to_frame(self) -> pd.DataFrame:
        """The history as a DataFrame with unit-suffixed columns."""
        return pd.DataFrame(
            {
                "time_s": self.time_s,
                "core_C": self.core_C,
                "surface_C": self.surface_C,
                "face_surface_C": self.face_surface_C,
                "mean_C": self.mean_C,
                "volume_mean_C": self.volume_mean_C,
                "heat_flow_W": self.heat_flow_W,
                "heat_J": self.heat_J,
            }
        )


class _Model:
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
        # "Strong" kinks of T(H), where the slope changes by more than a factor 2 (the ends of a freezing
        # range): a Newton update is stopped on such a kink so that the next iteration uses the slope beyond it.
        sl = self.slope
        ratio = np.maximum(sl[1:], 1e-300) / np.maximum(sl[:-1], 1e-300)
        strong = (ratio > 2.0) | (ratio < 0.5)
        kinks = hg[1:-1][strong]
        self.kinks = kinks if kinks.size <= 16 else kinks[:0]
        if self.dim > 1:
            n = self.n
            diag = np.arange(n)
            self._rows = np.concatenate([self.fi, self.fj, diag])
            self._cols = np.concatenate([self.fj, self.fi, diag])
            pos = sp.coo_matrix(
                (np.arange(1, self._rows.size + 1, dtype=float), (self._rows, self._cols)), shape=(n, n)
            ).tocsc()
            self._perm = pos.data.astype(np.int64) - 1
            self._indices, self._indptr = pos.indices.copy(), pos.indptr.copy()
        self.has_q = boundary.q_extra_W_m2 is not None

    # -- pieces --------------------------------------------------------------------------
    def temperature(self, H):
        """T(H) [°C], the table's piecewise-linear inverse (same values as ``props.temperature``)."""
        return np.interp(H, self._hx, self._tx)

    def dT_dH(self, H: np.ndarray, direction: np.ndarray) -> np.ndarray:
        """Slope of T(H) on the table segment H lies in; at a table point, the segment H moves into."""
        hg = self.h_grid
        i = np.searchsorted(hg, H, side="right") - 1
        at_point = hg[np.minimum(np.maximum(i, 0), hg.size - 1)] == H
        i = i - (at_point & (direction < 0))
        return self.slope[np.minimum(np.maximum(i, 0), self.nseg - 1)]

    def conductance(self, T: np.ndarray, derivatives: bool = False):
        """Face conductances G = k_f A/Δx [W/K] with the harmonic mean k_f = 2 k_i k_j/(k_i + k_j);
        with ``derivatives``, also dG/dT_i and dG/dT_j."""
        k = np.interp(T, self._tk, self._kk)
        ki, kj = k[self.fi], k[self.fj]
        s = ki + kj
        G = self.fg * (2.0 * ki * kj / s)
        if not derivatives:
            return G
        seg = np.searchsorted(self._tk, T, side="right") - 1
        inside = (seg >= 0) & (seg < self._kslope.size)
        dk = np.where(inside, self._kslope[np.minimum(np.maximum(seg, 0), self._kslope.size - 1)], 0.0)
        w = 2.0 * self.fg / (s * s)
        return G, w * kj * kj * dk[self.fi], w * ki * ki * dk[self.fj]

    def surface_flux(self, t: float, Ts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Heat into each surface cell [W] and its derivative with respect to the cell temperature [W/K]."""
        h = self.boundary.h(t)
        q = h * (self.boundary.medium(t) - Ts)
        dq = np.full(Ts.shape, -h)
        if self.has_q:
            eps = 1e-3
            q0 = self.boundary.q_extra(t, Ts)
            q1 = self.boundary.q_extra(t, Ts + eps)
            q = q + q0
            dq = dq + (q1 - q0) / eps
        return self.sa * q, self.sa * dq

    def net_flow(self, t: float, T: np.ndarray, G: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        flux = G * (T[self.fj] - T[self.fi])
        if self.dim == 1:
            F = np.zeros(self.n)
            F[:-1] += flux
            F[1:] -= flux
        else:
            F = np.bincount(self.fi, flux, self.n) - np.bincount(self.fj, flux, self.n)
        qs, dqs = self.surface_flux(t, T[self.sc])
        F[self.sc] += qs
        return F, qs, dqs

    def heat_flow_W(self, t: float, H: np.ndarray) -> float:
        qs, _ = self.surface_flux(t, self.temperature(H[self.sc]))
        return float(qs.sum()) * self.grid.piece_factor

    # -- one implicit step ---------------------------------------------------------------
    def solve_step(self, t1: float, dt: float, a: float, hist: np.ndarray, Hn: np.ndarray, H0: np.ndarray):
        """Solve m (a H − hist)/dt = F(T(H)) at t1. Returns (H, iterations) or (None, iterations)."""
        if self.dim == 1:
            return self._solve_step_1d(t1, dt, a, hist, Hn, H0)
        M = self.mass
        md = a * M / dt
        tol = 1e-6 * self.cp_min  # J/kg, about a micro-kelvin of sensible heat
        H = H0.copy()
        Hold = Told = None
        for it in range(1, _MAX_NEWTON + 1):
            T = self.temperature(H)
            G, dGi, dGj = self.conductance(T, derivatives=True)
            F, _, dqs = self.net_flow(t1, T, G)
            R = md * H - (M / dt) * hist - F
            if np.max(np.abs(R) / md) < tol:
                return H, it - 1
            direction = np.sign(H - Hn)
            direction = np.where(direction == 0, -np.sign(R), direction)
            D = self.dT_dH(H, direction)
            if it > _SECANT_AFTER and Hold is not None:
                dH = H - Hold
                ok = np.abs(dH) > 1e-9 * (1.0 + np.abs(H))
                D = np.where(ok, (T - Told) / np.where(ok, dH, 1.0), D)
            Hold, Told = H, T
            dTf = T[self.fj] - T[self.fi]
            delta = self._linear_solve(md, -G + dTf * dGi, G + dTf * dGj, dqs, D, -R)
            if not np.all(np.isfinite(delta)):
                return None, it
            if self.kinks.size and it <= _SECANT_AFTER:
                with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
                    frac = (self.kinks[None, :] - H[:, None]) / delta[:, None]
                    frac = np.where(frac > 1e-12, frac, np.inf).min(axis=1)
                    delta = np.where(frac < 1.0, frac * delta, delta)
            H = H + delta
        return None, _MAX_NEWTON

    def _solve_step_1d(self, t1, dt, a, hist, Hn, H0):
        """The same Newton iteration as :meth:`solve_step`, written with slices for the 1-D tridiagonal case."""
        M = self.mass
        md = a * M / dt
        rhs0 = (M / dt) * hist
        tol = 1e-6 * self.cp_min
        hx, tx, tk, kk, ksl = self._hx, self._tx, self._tk, self._kk, self._kslope
        hg, slope, nseg, nks = self.h_grid, self.slope, self.nseg, ksl.size
        fg, area, kinks = self.fg, self.sa[0], self.kinks
        h = float(self.boundary.h(t1))
        tm = float(self.boundary.medium(t1))
        has_q = self.has_q
        n = self.n
        H = H0.copy()
        dd = np.empty(n)
        for it in range(1, _MAX_NEWTON + 1):
            T = np.interp(H, hx, tx)
            k = np.interp(T, tk, kk)
            ki, kj = k[:-1], k[1:]
            ssum = ki + kj
            G = fg * (2.0 * ki * kj / ssum)
            dT = T[1:] - T[:-1]
            flux = G * dT
            F = np.empty(n)
            F[0] = 0.0
            F[1:] = -flux
            F[:-1] += flux
            ts = T[-1]
            qs = h * (tm - ts)
            dqs = -h
            if has_q:
                q0 = float(self.boundary.q_extra(t1, T[-1:])[0])
                q1 = float(self.boundary.q_extra(t1, T[-1:] + 1e-3)[0])
                qs += q0
                dqs += (q1 - q0) / 1e-3
            F[-1] += area * qs
            R = md * H - rhs0 - F
            if np.max(np.abs(R) / md) < tol:
                return H, it - 1
            # dT/dH on the segment H moves into
            idx = np.searchsorted(hg, H, side="right") - 1
            np.clip(idx, 0, nseg - 1, out=idx)
            at_point = hg[idx] == H
            if at_point.any():
                moving_down = np.where(H != Hn, H < Hn, R > 0)
                idx = np.clip(idx - (at_point & moving_down), 0, nseg - 1)
            D = slope[idx]
            if nks:
                seg = np.searchsorted(tk, T, side="right") - 1
                dk = np.where((seg >= 0) & (seg < nks), ksl[np.clip(seg, 0, nks - 1)], 0.0)
                w = 2.0 * fg / (ssum * ssum)
                af = -G + dT * (w * kj * kj * dk[:-1])
                bf = G + dT * (w * ki * ki * dk[1:])
            else:
                af, bf = -G, G
            dd[:-1] = af
            dd[-1] = area * dqs
            dd[1:] -= bf
            _, _, _, delta, info = _gtsv(af * D[:-1], md - dd * D, -bf * D[1:], -R, 1, 1, 1, 1)
            if info != 0 or not np.all(np.isfinite(delta)):
                return None, it
            if kinks.size:
                with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
                    frac = (kinks[None, :] - H[:, None]) / delta[:, None]
                    frac = np.where(frac > 1e-12, frac, np.inf).min(axis=1)
                    cut = frac < 1.0
                    delta = np.where(cut, frac * delta, delta)
            else:
                cut = np.zeros(1, dtype=bool)
            H = H + delta
            if not cut.any() and self._linear_on(idx, H, has_q):
                return H, it
        return None, _MAX_NEWTON

    def _linear_on(self, idx: np.ndarray, H: np.ndarray, has_q: bool) -> bool:
        """True when every cell stayed on its table segment and k is constant there: the discrete problem
        is then linear over the update, so the Newton step was exact and no further residual is needed."""
        if has_q or self._kslope[idx].any():
            return False
        new = np.searchsorted(self.h_grid, H, side="right") - 1
        np.clip(new, 0, self.nseg - 1, out=new)
        return bool(np.array_equal(new, idx))

    def _linear_solve(self, md, af, bf, dqs, D, rhs):
        """Solve the Newton system J x = rhs, J = diag(md) − (∂F/∂T) diag(D).

        ``af``, ``bf`` are the derivatives of each face flux (from cell i to cell j, positive into i) with
        respect to T_i and T_j; ``dqs`` the derivative of each surface cell's inflow with respect to its T.
        """
        n = self.n
        if self.dim == 1:
            dd = np.zeros(n)
            dd[:-1] += af
            dd[1:] -= bf
            dd[self.sc] += dqs
            # tridiagonal: LAPACK gtsv (the banded solver specialised to one band either side)
            lower, diag, upper = af * D[:-1], md - dd * D, -bf * D[1:]
            _, _, _, x, info = _gtsv(lower, diag, upper, rhs, 1, 1, 1, 1)
            if info != 0:
                return scipy.linalg.solve_banded(
                    (1, 1), np.vstack([np.r_[0.0, upper], diag, np.r_[lower, 0.0]]), rhs
                )
            return x
        dd = np.bincount(self.fi, af, n) - np.bincount(self.fj, bf, n)
        dd[self.sc] += dqs
        data = np.concatenate([-bf * D[self.fj], af * D[self.fi], md - dd * D])
        A = sp.csc_matrix((data[self._perm], self._indices, self._indptr), shape=(n, n))
        if n > _DIRECT_MAX_CELLS:
            # 3-D grids: direct LU fills in badly, so BiCGSTAB with a Jacobi preconditioner (the Newton matrix
            # is diagonally dominant: m/dt on the diagonal plus an M-matrix-like conduction part)
            diag = md - dd * D
            pre = spla.LinearOperator((n, n), matvec=lambda v: v / diag, dtype=float)
            x, info = spla.bicgstab(A, rhs, x0=rhs / diag, rtol=1e-12, atol=0.0, maxiter=500, M=pre)
            if info == 0:
                return x
        return spla.splu(A, permc_spec="MMD_AT_PLUS_A").solve(rhs)


def _initial_enthalpy(
    initial_C, props: PropertyTable, geometry: Geometry, n_nodes, refine: float
) -> tuple[np.ndarray, FVGrid]:
    if isinstance(initial_C, ConductionResult):
        field_H = np.asarray(initial_C.final_enthalpy_J_kg, dtype=float)
        grid = build_grid(
            geometry, field_H.shape if n_nodes is None else n_nodes, initial_C.grid.surface_refinement
        )
        if field_H.shape != grid.shape:
            raise InvalidInputError(
                "initial_C",
                field_H.shape,
                f"a field of shape {grid.shape}",
                "the previous run used another grid",
            )
        props.check_in_range("initial_C", props.temperature(field_H))
        return field_H.ravel().copy(), grid
    if np.ndim(initial_C) == 0:
        t0 = validate.number("initial_C", initial_C, unit="°C")
        props.check_in_range("initial_C", t0)
        grid = build_grid(geometry, n_nodes, refine)
        return np.full(grid.n_cells, float(props.enthalpy(t0))), grid
    field_T = validate.array("initial_C", initial_C, unit="°C")
    grid = build_grid(
        geometry, field_T.shape if n_nodes is None and field_T.ndim == len(geometry.axes) else n_nodes, refine
    )
    if field_T.shape != grid.shape:
        raise InvalidInputError("initial_C", field_T.shape, f"a scalar or a field of shape {grid.shape}")
    props.check_in_range("initial_C", field_T)
    return props.enthalpy(field_T.ravel()), grid


def solve_conduction(
    geometry: Geometry,
    props: PropertyTable,
    initial_C,
    boundary: SurfaceBoundary,
    end_time_s: float,
    *,
    output_time_s=None,
    n_nodes: int | tuple[int, ...] | None = None,
    dt_s: float | None = None,
    stop_when_core_C: float | None = None,
    stop_direction: str | None = None,
    scheme: str = "bdf2",
    max_step_change_K: float = 0.5,
    max_dt_s: float | None = None,
    surface_refinement: float = 0.5,
) -> ConductionResult:
    """Transient conduction with phase change in one piece of product, by implicit finite volumes on enthalpy.

    Solves ρ_m ∂H/∂t = ∇·(k(T) ∇T), T = T(H), with h(t) (T_∞(t) − T_s) + q_extra(t, T_s) into the surface.

    Parameters
    ----------
    geometry : shape and size (1-D slab/cylinder/sphere, 2-D finite cylinder, 3-D brick)
    props : property table (enthalpy, conductivity); the mass per cell uses ``props.mass_density_kg_m3``
    initial_C : uniform initial temperature [°C], a temperature field shaped like the grid, or a previous
        ConductionResult (its exact enthalpy field is carried over, which matters on an isothermal plateau)
    boundary : SurfaceBoundary (medium temperature, h, optional extra flux)
    end_time_s : duration [s], > 0
    output_time_s : times of the history [s] (steps land on them); None = every accepted step
    n_nodes : nodes per axis, an int or one per axis (default 41 in 1-D, 25 in 2-D, 15 in 3-D)
    dt_s : fixed time step [s]; None = adaptive, aiming at ``max_step_change_K`` per step
    stop_when_core_C : end the run when the core crosses this temperature [°C] (the crossing time is
        found by re-solving the last step, so the final state is at the crossing)
    stop_direction : ``"falling"`` or ``"rising"``; None = inferred from the initial core temperature
    scheme : ``"bdf2"`` (default) or ``"euler"`` (see ``SCHEMES``)
    max_step_change_K : target largest temperature change of any node per adaptive step [K] (also capped at
        2 % of the run's temperature span)
    max_dt_s : largest adaptive step [s] (default end_time_s / 20)
    surface_refinement : node packing toward the surface, 0 (uniform) to 0.9; the default 0.5 makes the
        surface spacing about 0.4 of the centre spacing (see ``fv_grid.AxisGrid.graded``)

    Returns
    -------
    ConductionResult

    Notes
    -----
    Valid for conduction in a solid of fixed shape (no shrinkage, no internal convection or moisture
    transport); the latent heat enters only through the enthalpy table.

    >>> g = Geometry("slab", thickness_m=0.04)
    >>> p = PropertyTable.constant(0.5, 1000.0, 4000.0)
    >>> r = solve_conduction(g, p, 20.0, SurfaceBoundary.constant(0.0, 1e3), 3600.0, n_nodes=21)
    >>> bool(r.core_C[-1] < r.core_C[0]) and r.energy_balance_error < 5e-3
    True
    """
    if not isinstance(geometry, Geometry):
        raise InvalidInputError("geometry", type(geometry).__name__, "a procplan.geometry.Geometry")
    if not isinstance(props, PropertyTable):
        raise InvalidInputError("props", type(props).__name__, "a procplan.properties.table.PropertyTable")
    if not isinstance(boundary, SurfaceBoundary):
        raise InvalidInputError("boundary", type(boundary).__name__, "a SurfaceBoundary")
    end = validate.positive("end_time_s", end_time_s, "s")
    validate.choice("scheme", scheme, SCHEMES)
    target = validate.positive("max_step_change_K", max_step_change_K, "K")
    if dt_s is not None:
        dt_s = validate.number("dt_s", dt_s, minimum=0.0, min_inclusive=False, maximum=end, unit="s")
    dt_cap = (
        end / 20.0
        if max_dt_s is None
        else validate.number("max_dt_s", max_dt_s, minimum=0.0, min_inclusive=False, unit="s")
    )
    boundary.check_covers(end)
    H, grid = _initial_enthalpy(initial_C, props, geometry, n_nodes, surface_refinement)
    model = _Model(grid, props, boundary)

    if output_time_s is not None:
        outs = validate.increasing("output_time_s", output_time_s, "s")
        if outs[0] < 0 or outs[-1] > end * (1 + 1e-12):
            raise InvalidInputError(
                "output_time_s", [float(outs[0]), float(outs[-1])], f"times within [0, {end:g}] s"
            )
        outs = np.minimum(outs, end)
    else:
        outs = None
    stop = None
    core0 = float(model.temperature(H[grid.core_index]))
    # the step target is also capped at 2 % of the temperature span of the run, so that a small change is
    # followed as closely, relatively, as a large one
    tms = boundary.medium(np.r_[0.0, boundary.breakpoints_s[boundary.breakpoints_s < end], end])
    t_all = model.temperature(H)
    span = max(float(np.max(tms)), float(t_all.max())) - min(float(np.min(tms)), float(t_all.min()))
    if span > 0:
        target = min(target, 0.02 * span)
    if stop_when_core_C is not None:
        stop = validate.number("stop_when_core_C", stop_when_core_C, unit="°C")
        if stop_direction is None:
            stop_direction = "falling" if core0 > stop else "rising"
        validate.choice("stop_direction", stop_direction, STOP_DIRECTIONS)
    elif stop_direction is not None:
        validate.choice("stop_direction", stop_direction, STOP_DIRECTIONS)

    landings = np.union1d(boundary.breakpoints_s, [end] if outs is None else np.r_[outs, end])
    landings = landings[(landings > 0) & (landings <= end)]
    jumps = boundary.jumps_s
    eps_t = 1e-9 * end

    rec: dict[str, list] = {k: [] for k in ("t", "core", "surf", "face", "mean", "vmean", "q", "e")}
    V = grid.volume_m3
    Vsum = V.sum()

    def record(t: float, Hv: np.ndarray, T: np.ndarray, q: float, e: float) -> None:
        rec["t"].append(t)
        rec["core"].append(T[grid.core_index])
        rec["surf"].append(T[grid.corner_index])
        rec["face"].append(T[grid.face_centre_index])
        rec["mean"].append(float(model.temperature(np.dot(V, Hv) / Vsum)))
        rec["vmean"].append(np.dot(V, T) / Vsum)
        rec["q"].append(q)
        rec["e"].append(e)

    def start_dt(t: float, Hv: np.ndarray) -> float:
        if dt_s is not None:
            return dt_s
        qs, _ = model.surface_flux(t, model.temperature(Hv[grid.surface_cells]))
        rate = np.abs(qs) / (model.mass[grid.surface_cells] * model.cp_min)  # K/s
        r = float(rate.max())
        dt0 = 0.25 * target / r if r > 0 else dt_cap / 100.0
        return float(np.clip(dt0, 1e-7 * end, dt_cap))

    t = 0.0
    q_now = model.heat_flow_W(0.0, H)
    heat = 0.0
    H0_total = float(np.dot(model.mass, H))
    T_cur = model.temperature(H)
    if outs is None or outs[0] == 0.0:
        record(0.0, H, T_cur, q_now, 0.0)
    H_prev = None
    dt_prev = None
    dt = start_dt(0.0, H)
    dt_min_floor = 1e-10 * end
    n_steps = n_rej = n_it = 0
    dts: list[float] = []
    stopped_at = None
    use_bdf2 = scheme == "bdf2"

    def coefficients(dtn: float):
        if use_bdf2 and H_prev is not None:
            w = dtn / dt_prev
            a = (1 + 2 * w) / (1 + w)
            return a, (1 + w) * H - (w * w / (1 + w)) * H_prev, H + w * (H - H_prev)
        return 1.0, H, H if H_prev is None else H + (dtn / dt_prev) * (H - H_prev)

    def attempt(dtn: float):
        a, hist, guess = coefficients(dtn)
        H1, it = model.solve_step(t + dtn, dtn, a, hist, H, guess)
        if H1 is None:  # the extrapolated guess may sit past a kink; retry from the old state
            H1, it2 = model.solve_step(t + dtn, dtn, a, hist, H, H)
            it += it2
        if a != 1.0 and H1 is not None and not model.has_q:
            # BDF2 is not monotone: where a step overshoots the range spanned by the old field and the medium
            # (typically a large step across the end of a freezing plateau) it is redone by backward Euler.
            # (With an extra surface flux there is no such simple bound, and no check.)
            tm = float(boundary.medium(t + dtn))
            lo, hi = min(T_cur.min(), tm), max(T_cur.max(), tm)
            T1 = model.temperature(H1)
            slack = 1e-6 * (hi - lo) + 1e-9
            if T1.min() < lo - slack or T1.max() > hi + slack:
                H1, it2 = model.solve_step(t + dtn, dtn, 1.0, H, H, H)
                it += it2
        return H1, it

    core_T = core0
    while t < end - eps_t and stopped_at is None:
        nxt = float(landings[np.searchsorted(landings, t + eps_t, side="right")])
        step = min(dt, dt_cap) if dt_s is None else min(dt, dt_s)
        if use_bdf2 and dt_prev is not None:
            step = min(step, 2.0 * dt_prev)
        if t + step >= nxt - eps_t:
            step = nxt - t
        elif t + 2 * step > nxt:
            step = 0.5 * (nxt - t)
        H1, it = attempt(step)
        n_it += it
        if H1 is None:
            n_rej += 1
            dt = 0.25 * step
            if dt < dt_min_floor:
                raise ConductionSolverError(f"no convergence at t = {t:g} s even with dt = {step:g} s")
            continue
        T1 = model.temperature(H1)
        change = float(np.max(np.abs(T1 - T_cur)))
        if dt_s is None and change > 1.5 * target and step > 1e-7 * end:
            n_rej += 1
            dt = step * max(0.2, 0.9 * target / change)
            continue
        core1 = float(T1[grid.core_index])
        if stop is not None and (
            (stop_direction == "falling" and core1 <= stop < core_T)
            or (stop_direction == "rising" and core1 >= stop > core_T)
        ):
            lo, flo, hi, fhi = 0.0, core_T - stop, step, core1 - stop
            best = (step, H1)
            for _ in range(12):
                s = lo + (hi - lo) * flo / (flo - fhi)
                s = min(max(s, lo + 1e-3 * (hi - lo)), hi - 1e-3 * (hi - lo))
                Hs, its = attempt(s)
                n_it += its
                if Hs is None:
                    break
                fs = float(model.temperature(Hs[grid.core_index])) - stop
                best = (s, Hs)
                if abs(fs) < 1e-5:
                    break
                if (fs > 0) == (flo > 0):
                    lo, flo = s, fs
                else:
                    hi, fhi = s, fs
            step, H1 = best
            T1 = model.temperature(H1)
            core1 = float(T1[grid.core_index])
            stopped_at = t + step
        q_new = float(model.surface_flux(t + step, T1[grid.surface_cells])[0].sum()) * grid.piece_factor
        heat += 0.5 * (q_now + q_new) * step
        # the heat through the surface is integrated by the trapezoidal rule: keep the relative change of the
        # surface flux per step moderate, which matters on a phase-change plateau where temperatures barely move
        q_change = abs(q_new - q_now) / max(abs(q_new), abs(q_now), 1e-300)
        q_now = q_new
        H_prev, H, dt_prev, T_cur = H, H1, step, T1
        t = t + step if stopped_at is None else stopped_at
        core_T = core1
        n_steps += 1
        dts.append(step)
        if stopped_at is not None or outs is None or np.any(np.abs(outs - t) <= eps_t):
            record(t, H, T_cur, q_now, heat)
        if jumps.size and np.any(np.abs(jumps - t) <= eps_t):
            H_prev = dt_prev = None
            dt = start_dt(t, H)
        elif dt_s is None:
            grow = min(
                2.0, 0.9 * target / max(change, 1e-12), 0.9 * FLUX_CHANGE_PER_STEP / max(q_change, 1e-12)
            )
            dt = step * max(0.5, grow)
        else:
            dt = min(dt_s, 2.0 * step)  # back to the user's step after sub-steps

    dE = (float(np.dot(model.mass, H)) - H0_total) * grid.piece_factor
    balance = abs(heat - dE) / abs(dE) if abs(dE) > 0 else 0.0
    Tfin = model.temperature(H).reshape(grid.shape)
    Hfin = H.reshape(grid.shape).copy()
    Tfin.setflags(write=False)
    Hfin.setflags(write=False)
    step_text = (
        f"fixed dt {dt_s:g} s"
        if dt_s is not None
        else f"adaptive dt (target {target:g} K per step, at most {dt_cap:g} s)"
    )
    method = (
        f"finite volume, {grid.describe()}; enthalpy unknown, harmonic-mean face conductivity; "
        f"{SCHEMES[scheme]}, {step_text}; Newton on H with dT/dH from the table (secant fallback); "
        f"surface temperature = surface node"
    )
    arr = {k: np.asarray(v, dtype=float) for k, v in rec.items()}
    return ConductionResult(
        time_s=arr["t"],
        core_C=arr["core"],
        surface_C=arr["surf"],
        face_surface_C=arr["face"],
        mean_C=arr["mean"],
        volume_mean_C=arr["vmean"],
        heat_flow_W=arr["q"],
        heat_J=arr["e"],
        final_field=Tfin,
        final_enthalpy_J_kg=Hfin,
        grid=grid,
        n_steps=n_steps,
        n_rejected=n_rej,
        n_iterations=n_it,
        dt_min_s=float(min(dts)) if dts else 0.0,
        dt_max_s=float(max(dts)) if dts else 0.0,
        energy_balance_error=float(balance),
        stopped_at_s=stopped_at,
        method=method,
    )
