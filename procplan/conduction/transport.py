"""Diffusion (Fick's second law) on the finite-volume solver: concentration-dependent diffusivity and
time-varying surface conditions.

The finite-volume solver (:func:`procplan.conduction.finite_volume.solve_conduction`) integrates

    ρ ∂H/∂t = ∇·(k ∇T),  H = H(T),  −k ∂T/∂n = h (T_s − T_∞) − q_extra  at the surface.

Fick's second law for a concentration c with a capacity κ (amount per volume per unit of c: 1 for c in
kg/m³, the dry-solid density for a dry-basis moisture content),

    κ ∂c/∂t = ∇·(κ D(c) ∇c),  κ D ∂c/∂n = κ k_m (c_eq(t) − c_s) + j(t, c_s)  into the surface,

is the same problem under the parametrisation (capacity, transport coefficient, surface coefficient):
T → c, H → c (unit specific capacity), ρ → κ, k → κ D(c), h → κ k_m, T_∞ → c_eq, q_extra → j (Crank 1975,
§1.2; the heat–mass analogy of Incropera et al. §14.1). No solver code is copied: :func:`transport_table`
builds the PropertyTable that says this, and :func:`solve_diffusion` calls the one solver with it.

Internally the concentration is mapped linearly onto u = 100 (c − c_lo)/(c_hi − c_lo) over the run's range
[c_lo, c_hi], so that the solver's absolute tolerances (set for temperatures) mean the same relative accuracy
whatever the unit of c; results are mapped back. A constant surface concentration (k_m = ∞) is a surface
coefficient 10³ times the conductance of the surface cell (the surface node then sits within 10⁻³ of a
cell's own difference of c_eq, like moving the surface by 10⁻³ of a cell).

Checks (tests/conduction/test_transport.py): Crank's plane sheet, cylinder and sphere with a constant surface
concentration and with a surface coefficient over Fo 0.01–1; the mass balance; bounds; convergence under
refinement; a concentration-dependent D against a fine-grid method-of-lines solution (scipy ``solve_ivp``).

References
----------
Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford University Press, 1975, ch. 1, 4–6, 9.
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat and Mass Transfer, 7th ed.,
Wiley, 2011, §14.1 (the heat and mass transfer analogy).
Patankar, S.V., Numerical Heat Transfer and Fluid Flow, Hemisphere, 1980, §4.2 (harmonic-mean interface
coefficient, which is used for D(c) as for k(T)).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.conduction.fv_boundary import SurfaceBoundary, TimeProfile
from procplan.conduction.fv_grid import FVGrid, build_grid
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

__all__ = ["DiffusionResult", "solve_diffusion", "transport_table"]

#: Range of effective diffusivities accepted [m²/s] (as in procplan.conduction.diffusion).
D_RANGE_M2_S: tuple[float, float] = (1e-16, 1e-6)
#: Internal span of the mapped concentration u (c_lo → 0, c_hi → 100) and the table's margin beyond it.
_U_SPAN, _U_MARGIN = 100.0, 10.0
#: Surface coefficient standing for k_m = ∞, as a multiple of the surface cell's conductance D/Δx.
_INFINITE_KM_FACTOR = 1e3
#: Points of the D(c) table when D depends on c.
TABLE_POINTS = 201


@dataclass(frozen=True, eq=False)
class DiffusionResult:
    """History, final profile and provenance of one finite-volume diffusion run (one piece of product).

    Concentrations are in the unit of the inputs; amounts are capacity × concentration × m³ (kg for c in
    kg/m³ with capacity 1; per m² of face for an unbounded slab, per m of an unbounded cylinder, like
    ``Geometry.volume_m3``).

    Attributes
    ----------
    time_s : times of the history [s]
    centre, surface, face_surface, mean : centre, surface (fastest point: surface, rim edge, corner), centre
        of the face on the shortest axis, and volume-mean concentration at those times
    uptake_rate : amount entering the piece per second through its surface (negative while it loses)
    uptake : amount taken up since t = 0 (the integral of the rate; negative for a loss)
    final_field : concentration field at the last time, shaped like ``grid.shape``
    profiles : concentration fields at ``profile_time_s`` (one per time, each shaped like ``grid.shape``)
    profile_time_s : times of ``profiles`` [s]
    grid : the grid (``grid.axes[i].x_m`` are the node positions from the centre to the surface)
    capacity : amount per m³ per unit of concentration
    mass_balance_error : |∫ rate dt − Δ(amount)| / |Δ(amount)| over the run (0 when nothing changed)
    stopped_at_s : time a stop condition was reached [s], or None; stopped_on : "centre", "mean" or None
    n_steps, n_rejected : accepted and rejected time steps
    method : description of the discretisation
    """

    time_s: np.ndarray
    centre: np.ndarray
    surface: np.ndarray
    face_surface: np.ndarray
    mean: np.ndarray
    uptake_rate: np.ndarray
    uptake: np.ndarray
    final_field: np.ndarray
    profiles: tuple[np.ndarray, ...]
    profile_time_s: np.ndarray
    grid: FVGrid
    capacity: float
    mass_balance_error: float
    stopped_at_s: float | None
    stopped_on: str | None
    n_steps: int
    n_rejected: int
    method: str

    @property
    def positions_m(self) -> tuple[np.ndarray, ...]:
        """Node positions of each axis from the centre (0) to the surface [m]."""
        return tuple(a.x_m for a in self.grid.axes)


# --- the parametrisation --------------------------------------------------------------------------------------
@dataclass(frozen=True)
class _Scale:
    """The linear map c = lo + span/100 · u between the user's concentration and the solver's field u."""

    lo: float
    span: float

    @property
    def per_u(self) -> float:
        return self.span / _U_SPAN

    def to_u(self, c):
        return (np.asarray(c, dtype=float) - self.lo) / self.per_u

    def to_c(self, u):
        return self.lo + np.asarray(u, dtype=float) * self.per_u


def transport_table(
    D_m2_s: float | Callable, capacity: float, concentration_range: tuple[float, float]
) -> PropertyTable:
    """The PropertyTable that makes the conduction solver solve Fick's law in the mapped field u.

    Over u = 100 (c − c_lo)/(c_hi − c_lo) (with a 10 % margin each side): "enthalpy" H = u (unit specific
    capacity), "density" κ = ``capacity``, "conductivity" κ D(c(u)). ``D_m2_s`` is a number or a vectorised
    callable D(c) [m²/s] of the concentration. Outside the table the solver holds D at its end values.

    >>> t = transport_table(2e-10, 1.0, (0.0, 50.0))
    >>> float(t.conductivity(50.0)), float(t.density(0.0)), float(t.enthalpy(80.0) - t.enthalpy(30.0))
    (2e-10, 1.0, 50.0)
    """
    cap = validate.positive("capacity", capacity)
    scale = _scale(concentration_range)
    u = np.linspace(-_U_MARGIN, _U_SPAN + _U_MARGIN, 2 if not callable(D_m2_s) else TABLE_POINTS)
    d = _diffusivity_values(D_m2_s, scale.to_c(u))
    return PropertyTable(
        temperature_C=u,
        enthalpy_J_kg=u - u[0],
        conductivity_W_mK=cap * d,
        density_kg_m3=np.full(u.size, cap),
        initial_freezing_C=None,
        reference_C=float(u[0]),
        source=(
            f"Fick's law as conduction: capacity {cap:g}, D "
            + ("D(c) tabulated" if callable(D_m2_s) else f"{float(d[0]):.4g} m²/s")
            + f", c = {scale.lo:g} + {scale.per_u:g} u"
        ),
    )


def _scale(concentration_range) -> _Scale:
    try:
        lo, hi = (float(v) for v in concentration_range)
    except (TypeError, ValueError):
        raise InvalidInputError("concentration_range", concentration_range, "a (low, high) pair") from None
    if not (math.isfinite(lo) and math.isfinite(hi) and hi > lo):
        raise InvalidInputError("concentration_range", concentration_range, "finite low < high")
    return _Scale(lo, hi - lo)


def _diffusivity_values(D_m2_s, c: np.ndarray) -> np.ndarray:
    if callable(D_m2_s):
        d = np.broadcast_to(np.asarray(D_m2_s(c), dtype=float), c.shape)
    else:
        d = np.full(c.shape, validate.number("D_m2_s", D_m2_s))
    bad = ~np.isfinite(d) | (d < D_RANGE_M2_S[0]) | (d > D_RANGE_M2_S[1])
    if np.any(bad):
        raise InvalidInputError(
            "D_m2_s",
            float(d[bad][0]),
            f"{D_RANGE_M2_S[0]:g} to {D_RANGE_M2_S[1]:g} m²/s",
            f"at c = {float(c[bad][0]):g}",
        )
    return d


def _profile(x, name: str, *, positive: bool = False) -> TimeProfile:
    """A number, a (time_s, values) pair (piecewise linear) or a TimeProfile, as a TimeProfile."""
    if isinstance(x, TimeProfile):
        p = x.renamed(name)
    elif np.ndim(x) == 0:
        p = TimeProfile.constant(validate.number(name, x), name)
    else:
        try:
            t, v = x
        except (TypeError, ValueError):
            raise InvalidInputError(name, x, "a number, a (time_s, values) pair or a TimeProfile") from None
        p = TimeProfile(np.asarray(t, dtype=float), np.asarray(v, dtype=float), "linear", False, name)
    if positive and np.any(p.value <= 0):
        raise InvalidInputError(name, float(p.value.min()), "> 0 m/s (or inf)")
    return p


def _shifted(p: TimeProfile, t0: float) -> TimeProfile:
    """The profile seen from t0 on (time 0 of the result is t0 of p)."""
    if t0 == 0.0 or p.time_s.size == 1:
        return p
    later = p.time_s > t0
    first = float(p(t0)) if p.interpolation == "linear" else float(p(t0 * (1 + 1e-12) + 1e-12))
    return TimeProfile(
        np.r_[0.0, p.time_s[later] - t0], np.r_[first, p.value[later]], p.interpolation, p.hold_last, p.name
    )


# --- the solve ------------------------------------------------------------------------------------------------
def solve_diffusion(
    geometry: Geometry,
    D_m2_s: float | Callable,
    initial,
    equilibrium,
    end_time_s: float,
    *,
    k_m_m_s=math.inf,
    capacity: float = 1.0,
    surface_flux: Callable | None = None,
    concentration_range: tuple[float, float] | None = None,
    output_time_s=None,
    profile_time_s=None,
    n_nodes: int | tuple[int, ...] | None = None,
    stop_when_centre: float | None = None,
    stop_when_mean: float | None = None,
    max_step_change: float = 0.005,
    max_dt_s: float | None = None,
    surface_refinement: float = 0.5,
    max_steps: int | None = None,
) -> DiffusionResult:
    """Transient diffusion in one piece of product by Fick's second law, on implicit finite volumes.

    κ ∂c/∂t = ∇·(κ D(c) ∇c) inside; κ k_m(t) (c_eq(t) − c_s) + j(t, c_s) into the surface.

    Parameters
    ----------
    geometry : shape and size (slab, cylinder, sphere 1-D; finite cylinder 2-D; brick 3-D)
    D_m2_s : effective diffusivity [m²/s]: a number, or a vectorised callable D(c) (concentration-dependent)
    initial : uniform initial concentration, a field shaped like the grid, or a previous DiffusionResult
        (its final field is carried on, on the same grid)
    equilibrium : product-side concentration in equilibrium with the medium, c_eq: a number, a
        ``(time_s, values)`` pair (piecewise linear) or a TimeProfile (e.g. ``TimeProfile.steps``)
    end_time_s : duration [s], > 0
    k_m_m_s : surface mass-transfer coefficient referred to the product-side concentration [m/s]: ``math.inf``
        (the default; constant surface concentration c_eq), a number, a pair or a TimeProfile; ``None`` or 0
        for no exchange with c_eq (only ``surface_flux``)
    capacity : κ, amount per m³ per unit of concentration (1 for kg/m³ or a mass fraction × volume)
    surface_flux : optional callable j(t_s, c_surface) → amount per m² per s into the product (vectorised over
        surface nodes), e.g. evaporation (negative)
    concentration_range : (c_lo, c_hi) the run spans, for the internal scaling and the D(c) table; default
        the range of the initial and equilibrium values (a drying run with ``surface_flux`` should give it)
    output_time_s : times of the history [s] (the steps land on them; 0 and the end are always included);
        None = every accepted step
    profile_time_s : times [s] at which to keep the whole field (the run is split there)
    n_nodes : nodes per axis (default 41 in 1-D, 25 in 2-D, 15 in 3-D)
    stop_when_centre, stop_when_mean : end the run when the centre (or mean) concentration reaches this value
        (direction from the initial value); the final state is at the crossing
    max_step_change : aimed largest change of any node per step as a fraction of the run's span (0.005)
    max_dt_s : largest step [s] (default end_time_s / 20)
    surface_refinement : node packing toward the surface, 0 … 0.9 (0.5)
    max_steps : most time steps per solve before it is refused (None: no limit)

    Returns
    -------
    DiffusionResult

    Examples
    --------
    20 mm slab, D = 2e-10 m²/s, surface held at 100 from 0; at D t/L² = 0.1 (50 000 s) Crank's eq. 4.18 gives
    an uptake fraction of 0.3568 (the series path, :func:`procplan.conduction.diffusion.diffusion_history`):

    >>> r = solve_diffusion(Geometry("slab", thickness_m=0.02), 2e-10, 0.0, 100.0, 5e4, n_nodes=61)
    >>> round(float(r.mean[-1]) / 100, 3), r.mass_balance_error < 1e-3
    (0.357, True)
    """
    g = _geometry(geometry)
    end = validate.positive("end_time_s", end_time_s, "s")
    cap = validate.positive("capacity", capacity)
    ceq = _profile(equilibrium, "equilibrium")
    km = None if k_m_m_s is None or (np.ndim(k_m_m_s) == 0 and k_m_m_s == 0) else k_m_m_s
    km_inf_given = km is not None and np.ndim(km) == 0 and isinstance(km, int | float) and km == math.inf
    km_p = None if km is None or km_inf_given else _profile(km, "k_m_m_s", positive=True)
    if surface_flux is not None and not callable(surface_flux):
        raise InvalidInputError("surface_flux", surface_flux, "a callable j(t_s, c_surface) or None")
    ceq.check_covers(end)
    if km_p is not None:
        km_p.check_covers(end)
    if km is None and surface_flux is None:
        raise InvalidInputError("k_m_m_s", k_m_m_s, "> 0 m/s or inf", "no surface exchange is given")
    c0 = initial.final_field if isinstance(initial, DiffusionResult) else initial
    c0 = validate.array("initial", c0)
    scale = _scale(concentration_range or _default_range(c0, ceq))
    step_frac = validate.number("max_step_change", max_step_change, minimum=1e-5, maximum=0.2)
    table = transport_table(D_m2_s, cap, (scale.lo, scale.lo + scale.span))
    grid = build_grid(g, _nodes(c0, g, n_nodes), surface_refinement)
    d_max = float(np.max(table.conductivity_W_mK)) / cap
    km_inf = _INFINITE_KM_FACTOR * d_max / min(float(a.node_distance_m[-1]) for a in grid.axes)
    stops = _stops(stop_when_centre, stop_when_mean)
    times = _segments(end, profile_time_s)
    solve = _Solver(
        g, table, scale, cap, ceq, TimeProfile.constant(km_inf) if km_inf_given else km_p, surface_flux, grid
    )
    solve.step_frac, solve.max_dt_s, solve.max_steps = step_frac, max_dt_s, max_steps
    u, instant = scale.to_u(c0), 0.0
    if km_inf_given:
        u, instant = _surface_at_equilibrium(u, grid, float(scale.to_u(ceq(0.0))), cap * scale.per_u)
    pieces, profiles = [], []
    for t0, t1 in zip(times[:-1], times[1:], strict=True):
        res, stopped = solve(u, t0, t1, _outputs(output_time_s, t0, t1), stops)
        pieces.append((t0, res, stopped))
        u = res.final_field
        if stopped is not None:
            break
        if profile_time_s is not None and np.any(np.abs(np.asarray(profile_time_s) - t1) <= 1e-9 * end):
            profiles.append((t1, scale.to_c(u)))
    return _assemble(pieces, profiles, scale, cap, grid, stops, c0, instant)


def _surface_at_equilibrium(u, grid: FVGrid, u_eq: float, amount_per_u: float) -> tuple[np.ndarray, float]:
    """The field with its surface nodes at c_eq, and the amount that puts into their cells.

    With k_m = ∞ the surface is at c_eq from t = 0⁺; starting the solver with the surface nodes already there
    keeps the (unbounded) initial surface flux out of the trapezoidal flux integral, and the amount filled into
    the surface half-cells at t = 0 is counted as uptake at t = 0."""
    field = np.array(np.broadcast_to(u, grid.shape), dtype=float).ravel()
    sc = grid.surface_cells
    instant = float(np.sum(grid.volume_m3[sc] * (u_eq - field[sc]))) * grid.piece_factor * amount_per_u
    field[sc] = u_eq
    return field.reshape(grid.shape), instant


def _geometry(geometry) -> Geometry:
    if not isinstance(geometry, Geometry):
        raise InvalidInputError("geometry", geometry, "a procplan.geometry.Geometry")
    return geometry


def _default_range(c0: np.ndarray, ceq: TimeProfile) -> tuple[float, float]:
    lo = min(float(c0.min()), float(ceq.value.min()))
    hi = max(float(c0.max()), float(ceq.value.max()))
    if hi - lo <= 1e-12 * max(1.0, abs(hi)):
        hi = lo + max(1.0, abs(lo))
    return lo, hi


def _nodes(c0: np.ndarray, g: Geometry, n_nodes):
    if c0.ndim == 0:
        return n_nodes
    if c0.ndim != len(g.axes) or (
        n_nodes is not None and np.ndim(n_nodes) == 0 and c0.shape != (n_nodes,) * c0.ndim
    ):
        raise InvalidInputError("initial", c0.shape, "a scalar or a field shaped like the grid")
    return c0.shape if n_nodes is None else n_nodes


def _stops(centre, mean) -> tuple[str, float] | None:
    if centre is not None and mean is not None:
        raise InvalidInputError("stop_when_mean", mean, "None when stop_when_centre is given (one stop)")
    if centre is not None:
        return ("centre", validate.number("stop_when_centre", centre))
    if mean is not None:
        return ("mean", validate.number("stop_when_mean", mean))
    return None


def _segments(end: float, profile_time_s) -> np.ndarray:
    if profile_time_s is None:
        return np.array([0.0, end])
    pt = validate.increasing("profile_time_s", profile_time_s, "s")
    if pt[0] <= 0 or pt[-1] > end * (1 + 1e-12):
        raise InvalidInputError("profile_time_s", [float(pt[0]), float(pt[-1])], f"times in (0, {end:g}] s")
    return np.unique(np.r_[0.0, np.minimum(pt, end), end])


def _outputs(output_time_s, t0: float, t1: float):
    if output_time_s is None:
        return None
    outs = validate.increasing("output_time_s", output_time_s, "s")
    inside = outs[(outs >= t0 - 1e-9 * t1) & (outs <= t1 * (1 + 1e-12))]
    return np.unique(np.clip(np.r_[t0, inside, t1], t0, t1)) - t0


class _Solver:
    """One call of the conduction solver for the interval [t0, t1] from the mapped field u."""

    step_frac: float = 0.005
    max_dt_s: float | None = None
    max_steps: int | None = None

    def __init__(self, g, table, scale, cap, ceq, km_p, flux, grid):
        self.g, self.table, self.scale, self.cap = g, table, scale, cap
        self.ceq, self.km, self.flux, self.grid = ceq, km_p, flux, grid

    def boundary(self, t0: float) -> SurfaceBoundary:
        scale, cap = self.scale, self.cap
        ceq = _shifted(self.ceq, t0)
        medium = TimeProfile(
            ceq.time_s, scale.to_u(ceq.value), ceq.interpolation, ceq.hold_last, "equilibrium"
        )
        if self.km is None:
            h = TimeProfile.constant(1e-300, "k_m_m_s")
        else:
            km = _shifted(self.km, t0)
            h = TimeProfile(km.time_s, km.value * cap, km.interpolation, km.hold_last, "k_m_m_s")
        q = None
        if self.flux is not None:
            flux = self.flux

            def q(t, us):
                return np.asarray(flux(t + t0, scale.to_c(us)), dtype=float) / scale.per_u

        return SurfaceBoundary(medium, h, q)

    def __call__(self, u0, t0: float, t1: float, outs, stops):
        from procplan.conduction.finite_volume import solve_conduction

        stop_u = None if stops is None or stops[0] != "centre" else float(self.scale.to_u(stops[1]))
        kwargs = dict(
            output_time_s=outs,
            n_nodes=self.grid.shape,
            max_step_change_K=self.step_frac * _U_SPAN,
            max_dt_s=self.max_dt_s if self.max_dt_s is not None else (t1 - t0) / 20.0,
            surface_refinement=self.grid.surface_refinement,
            max_steps=self.max_steps,
        )
        initial = u0 if np.ndim(u0) else float(u0)
        res = solve_conduction(
            self.g, self.table, initial, self.boundary(t0), t1 - t0, stop_when_core_C=stop_u, **kwargs
        )
        if stops is not None and stops[0] == "mean":
            hit = _first_crossing(res.time_s, res.mean_C, float(self.scale.to_u(stops[1])))
            if hit is not None and hit < t1 - t0:
                outs2 = None if outs is None else np.r_[outs[outs < hit], hit]
                kwargs["output_time_s"] = outs2
                res = solve_conduction(self.g, self.table, initial, self.boundary(t0), hit, **kwargs)
                return res, hit
        return res, res.stopped_at_s


def _first_crossing(t: np.ndarray, y: np.ndarray, target: float) -> float | None:
    """Linear interpolation of the first time y reaches target from its initial side, or None."""
    s = np.sign(y - target)
    if s[0] == 0:
        return float(t[0]) if t[0] > 0 else None
    idx = np.nonzero(s != s[0])[0]
    if idx.size == 0:
        return None
    i = int(idx[0])
    return float(t[i - 1] + (t[i] - t[i - 1]) * (target - y[i - 1]) / (y[i] - y[i - 1]))


def _assemble(
    pieces, profiles, scale: _Scale, cap: float, grid: FVGrid, stops, c0, instant: float
) -> DiffusionResult:
    """Join the segments' histories (mapped back to c) into one DiffusionResult."""
    cols = {k: [] for k in ("t", "centre", "surface", "face", "mean", "rate", "uptake")}
    taken, n_steps, n_rej = instant, 0, 0
    for k, (t0, r, _) in enumerate(pieces):
        sl = slice(0 if k == 0 else 1, None)
        cols["t"].append(r.time_s[sl] + t0)
        cols["centre"].append(scale.to_c(r.core_C[sl]))
        cols["surface"].append(scale.to_c(r.surface_C[sl]))
        cols["face"].append(scale.to_c(r.face_surface_C[sl]))
        cols["mean"].append(scale.to_c(r.mean_C[sl]))
        cols["rate"].append(r.heat_flow_W[sl] * scale.per_u)
        cols["uptake"].append(taken + r.heat_J[sl] * scale.per_u)
        taken += float(r.heat_J[-1]) * scale.per_u
        n_steps += r.n_steps
        n_rej += r.n_rejected
    last = pieces[-1][1]
    final = scale.to_c(last.final_field)
    volume = grid.volume_m3.reshape(grid.shape) * grid.piece_factor
    start = np.broadcast_to(np.asarray(c0, dtype=float), grid.shape)
    change = cap * float(np.sum(volume * (final - start)))
    err = abs(taken - change) / abs(change) if abs(change) > 0 else 0.0
    stopped = None if pieces[-1][2] is None else float(pieces[-1][2] + pieces[-1][0])
    arr = {k: np.concatenate(v) for k, v in cols.items()}
    return DiffusionResult(
        time_s=arr["t"],
        centre=arr["centre"],
        surface=arr["surface"],
        face_surface=arr["face"],
        mean=arr["mean"],
        uptake_rate=arr["rate"],
        uptake=arr["uptake"],
        final_field=final,
        profiles=tuple(p[1] for p in profiles),
        profile_time_s=np.array([p[0] for p in profiles], dtype=float),
        grid=grid,
        capacity=cap,
        mass_balance_error=err,
        stopped_at_s=stopped,
        stopped_on=None if stopped is None else stops[0],
        n_steps=n_steps,
        n_rejected=n_rej,
        method=(
            f"Fick's law on the conduction finite-volume solver (capacity {cap:g}, D → k, k_m → h); "
            f"{len(pieces)} solve(s); " + last.method.replace("K per step", "% of the span per step")
        ),
    )
