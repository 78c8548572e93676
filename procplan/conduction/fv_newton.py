"""One implicit step of the enthalpy form: Newton's method on H with dT/dH from the enthalpy table.

The Jacobian uses dT/dH = 1/c_app from the table (zero on an isothermal plateau), switched to per-cell secant
slopes when the iteration is slow, and an update is stopped on a strong kink of T(H) (the ends of a freezing
range) so that the next iteration uses the slope beyond it: the enthalpy-Newton family of Voller &
Swaminathan (1991), Numerical Heat Transfer B 19:175–189.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from procplan.conduction.fv_linear import _gtsv, linear_solve

if TYPE_CHECKING:
    from procplan.conduction.fv_model import FVModel

__all__ = ["linear_on", "solve_step", "solve_step_1d"]

_MAX_NEWTON = 40
#: Newton tolerance of a free medium temperature [K].
_TOL_MEDIUM_K = 1e-7
_SECANT_AFTER = 8


def solve_step(
    model: FVModel,
    t1: float,
    dt: float,
    a: float,
    hist: np.ndarray,
    Hn: np.ndarray,
    H0: np.ndarray,
    coupling=None,
):
    """Solve m (a H − hist)/dt = F(T(H)) at t1. Returns (H, iterations) or (None, iterations).

    2-D and 3-D: each Newton system is solved with a kept factorisation as preconditioner where it serves
    (:func:`procplan.conduction.fv_linear.linear_solve`), to a linear residual well below the Newton tolerance.
    After a direct solve that kept every cell on its table segment, with k constant there, no surface flux
    beyond h and a given medium, the discrete problem was linear over the update and the step ends without the
    residual that would confirm it (as in 1-D).
    ``coupling`` (a :class:`procplan.conduction.fv_medium.MediumCoupling`) gives the medium temperature; when
    it is free, the medium balance is solved with the pieces by the bordered Newton system (Schur complement:
    a second solve with the same matrix for the column of the medium).
    """
    if model.dim == 1:
        return solve_step_1d(model, t1, dt, a, hist, Hn, H0, coupling)
    M = model.mass
    md = a * M / dt
    tol = 1e-6 * model.cp_min  # J/kg, about a micro-kelvin of sensible heat
    H = H0.copy()
    Hold = Told = None
    free = coupling is not None and coupling.free
    history = (M / dt) * hist
    fi, fj = model.fi, model.fj
    for it in range(1, _MAX_NEWTON + 1):
        T = model.temperature(H)
        parts = model.conductance_parts(T)
        G, dTf = parts[0], T[fj] - T[fi]
        F, qs, dqs = model.net_flow(t1, T, G, None if coupling is None else coupling.E, dTf)
        R = md * H - history - F
        err = float(np.max(np.abs(R) / md))
        if free:
            h = float(model.boundary.h(t1))
            RE, dRE = coupling.residual(float(qs.sum()), h * float(model.sa.sum()))
        if err < tol and (not free or abs(RE) < _TOL_MEDIUM_K * coupling.a_C_dt):
            return H, it - 1
        if model.single_slope is not None:  # one table segment: every cell on it
            idx, D = 0, model.single_slope
        else:
            idx = model.segment(H, lambda H=H, R=R: _direction(H, Hn, R))
            D = model.slope[idx]
        if it > _SECANT_AFTER and Hold is not None:
            dH = H - Hold
            ok = np.abs(dH) > 1e-9 * (1.0 + np.abs(H))
            D = np.where(ok, (T - Told) / np.where(ok, dH, 1.0), D)
        Hold, Told = H, T
        # the linear residual left by the solve: about 1 % of the Newton tolerance in the next residual
        rtol = min(1e-3, max(1e-12, 0.01 * tol / err))
        dGi, dGj = model.conductance_slopes(T, parts)
        if dGi is None:  # one conductivity: no derivative
            af, bf = model.minus_G, G
        else:
            af, bf = -G + dTf * dGi, G + dTf * dGj
        delta = linear_solve(model, md, af, bf, dqs, D, -R, a / dt, rtol)
        if free:
            u = np.zeros(model.n)
            u[model.sc] = -model.sa * h  # ∂R/∂E
            x2 = linear_solve(model, md, af, bf, dqs, D, u, a / dt, rtol)
            c = coupling.weight * dqs * D[model.sc]  # ∂R_E/∂H on the surface cells
            dE = (-RE - float(c @ delta[model.sc])) / (dRE - float(c @ x2[model.sc]))
            delta = delta - x2 * dE
            coupling.E += dE
        if not math.isfinite(float(np.add.reduce(delta))):  # a NaN or an infinity in the update
            return None, it
        cut = False
        moved = H + delta
        if model.kinks.size and it <= _SECANT_AFTER:
            near = _kinks_within(model.kinks, H, moved)
            if near.size:
                delta, cells = _stop_on_kinks(near, H, delta)
                cut = bool(cells.any())
                moved = H + delta if cut else moved
        H = moved
        exact = model.factors.exact and not free and not cut and it <= _SECANT_AFTER
        if exact and linear_on(model, idx, H, model.has_q):  # the residual would vanish: the step is done
            return H, it
    return None, _MAX_NEWTON


def _direction(H: np.ndarray, Hn: np.ndarray, R: np.ndarray) -> np.ndarray:
    """The sign of each cell's move from the last step's field (of −R where it has not moved)."""
    direction = np.sign(H - Hn)
    return np.where(direction == 0, -np.sign(R), direction)


def _kinks_within(kinks: np.ndarray, H: np.ndarray, moved: np.ndarray) -> np.ndarray:
    """The kinks an update from H to ``moved`` may cross: those within the span of both fields (widened by
    1e-9 of its scale, far beyond rounding, so that a kink left out could not be cut on)."""
    lo, hi = min(H.min(), moved.min()), max(H.max(), moved.max())
    margin = 1e-9 * (abs(lo) + abs(hi) + 1.0)
    return kinks[(kinks >= lo - margin) & (kinks <= hi + margin)]


def _stop_on_kinks(kinks: np.ndarray, H: np.ndarray, delta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The update cut where it would cross a strong kink of T(H), and which cells were cut."""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        frac = None
        for kink in kinks:  # a few kinks: one pass over the cells each
            f = (kink - H) / delta
            f = np.where(f > 1e-12, f, np.inf)
            frac = f if frac is None else np.minimum(frac, f)
        cut = frac < 1.0
        return np.where(cut, frac * delta, delta), cut


def solve_step_1d(model: FVModel, t1, dt, a, hist, Hn, H0, coupling=None):
    """The same Newton iteration as :func:`solve_step`, written with slices for the 1-D tridiagonal case
    (a free medium: the two right-hand sides of the bordered system in one ``gtsv`` call)."""
    M = model.mass
    md = a * M / dt
    rhs0 = (M / dt) * hist
    tol = 1e-6 * model.cp_min
    hx, tx, tk, kk, ksl = model._hx, model._tx, model._tk, model._kk, model._kslope
    hg, slope, nseg, nks = model.h_grid, model.slope, model.nseg, ksl.size
    fg, area, kinks = model.fg, model.sa[0], model.kinks
    h = float(model.boundary.h(t1))
    tm = float(model.boundary.medium(t1)) if coupling is None else coupling.E
    free = coupling is not None and coupling.free
    has_q = model.has_q
    n = model.n
    H = H0.copy()
    dd = np.empty(n)
    for it in range(1, _MAX_NEWTON + 1):
        if free:
            tm = coupling.E
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
            q0 = float(model.boundary.q_extra(t1, T[-1:])[0])
            q1 = float(model.boundary.q_extra(t1, T[-1:] + 1e-3)[0])
            qs += q0
            dqs += (q1 - q0) / 1e-3
        F[-1] += area * qs
        R = md * H - rhs0 - F
        RE, dRE = coupling.residual(area * qs, h * area) if free else (0.0, 1.0)
        if np.max(np.abs(R) / md) < tol and (not free or abs(RE) < _TOL_MEDIUM_K * coupling.a_C_dt):
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
        border = (coupling, RE, dRE, area * h, area * dqs * D[-1]) if free else None
        delta, info = _tridiagonal_update(af * D[:-1], md - dd * D, -bf * D[1:], R, border)
        if info != 0 or not np.all(np.isfinite(delta)):
            return None, it
        if kinks.size:
            delta, cut = _stop_on_kinks(kinks, H, delta)
        else:
            cut = np.zeros(1, dtype=bool)
        H = H + delta
        if not free and not cut.any() and linear_on(model, idx, H, has_q):
            return H, it
    return None, _MAX_NEWTON


def _tridiagonal_update(lower, diag, upper, R, border):
    """The Newton update of the 1-D system; with ``border`` = (coupling, R_E, dR_E/dE, h A, ∂q_s/∂H A), the
    bordered system of the free medium, by the Schur complement with both right-hand sides in one ``gtsv``."""
    if border is None:
        _, _, _, delta, info = _gtsv(lower, diag, upper, -R, 1, 1, 1, 1)
        return delta, info
    coupling, RE, dRE, hA, dqA = border
    B = np.zeros((R.size, 2), order="F")
    B[:, 0] = -R
    B[-1, 1] = -hA  # ∂R/∂E: the medium enters the surface node's balance only
    _, _, _, X, info = _gtsv(lower, diag, upper, B, 1, 1, 1, 1)
    c = coupling.weight * dqA  # ∂R_E/∂H of the surface node
    dE = (-RE - c * X[-1, 0]) / (dRE - c * X[-1, 1])
    coupling.E += dE
    return X[:, 0] - X[:, 1] * dE, info


def linear_on(model: FVModel, idx: np.ndarray, H: np.ndarray, has_q: bool) -> bool:
    """True when every cell stayed on its table segment and k is constant there: the discrete problem
    is then linear over the update, so the Newton step was exact and no further residual is needed."""
    if has_q or (model.k_constant is None and model._kslope[idx].any()):
        return False
    if model.nseg == 1:
        return True
    new = np.searchsorted(model.h_grid, H, side="right") - 1
    np.clip(new, 0, model.nseg - 1, out=new)
    return bool(np.array_equal(new, idx))
