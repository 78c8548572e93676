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
LAPACK ``gtsv`` (tridiagonal; ``scipy.linalg.solve_banded`` as fallback) in 1-D; in 2-D and 3-D fast
diagonalisation of separable systems (directly, or as GMRES preconditioner), banded or sparse LU and
Jacobi-preconditioned BiCGSTAB (see :mod:`~procplan.conduction.fv_linear`).

The surface node lies on the surface (vertex-centred grid, half cells at the ends), so the reported
surface temperature is that node's temperature, whose half-cell balance includes the convective flux.

The pieces: :mod:`~procplan.conduction.fv_model` (the discrete operator), :mod:`~procplan.conduction.fv_newton`
(one implicit step), :mod:`~procplan.conduction.fv_linear` (its linear systems),
:mod:`~procplan.conduction.fv_stepping` (time-step control) and :mod:`~procplan.conduction.fv_result` (the record).

References
----------
Voller, V.R. & Swaminathan, C.R. (1991), General source-based method for solidification phase change,
Numerical Heat Transfer B 19:175–189.
Patankar, S.V. (1980), Numerical Heat Transfer and Fluid Flow, Hemisphere, ch. 4 (harmonic-mean
interface conductivity, practice B grids).
Hairer, E. & Wanner, G., Solving Ordinary Differential Equations II, 2nd ed., §III.5 (variable-step BDF2).
"""

from __future__ import annotations

import numpy as np

from procplan import validate
from procplan.conduction.fv_boundary import SurfaceBoundary, TimeProfile
from procplan.conduction.fv_error import ERROR_SHARE
from procplan.conduction.fv_grid import FVGrid, build_grid
from procplan.conduction.fv_model import FVModel
from procplan.conduction.fv_result import ConductionResult, ConductionSolverError, HistoryRecorder
from procplan.conduction.fv_stepping import (
    FLUX_CHANGE_PER_STEP,
    FLUX_CHANGE_WITH_TOLERANCE,
    SCHEMES,
    STOP_DIRECTIONS,
    StepControl,
    TimeStepper,
)
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

__all__ = [
    "FLUX_CHANGE_PER_STEP",
    "SCHEMES",
    "STOP_DIRECTIONS",
    "ConductionResult",
    "ConductionSolverError",
    "SurfaceBoundary",
    "TimeProfile",
    "solve_conduction",
]

#: Largest node change per adaptive step [K] without a tolerance, and with one (then a guard for the Newton
#: iteration and for the cells next to a kink of T(H), which the error estimate leaves out).
STEP_CHANGE_K = 0.5
STEP_CHANGE_WITH_TOLERANCE_K = 2.0
#: The same limit as a share of the run's temperature span, without a tolerance and with one.
SPAN_SHARE = 0.02
SPAN_SHARE_WITH_TOLERANCE = 0.05

#: The discrete operator under its former name.
_Model = FVModel


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
    max_step_change_K: float | None = None,
    max_dt_s: float | None = None,
    surface_refinement: float = 0.5,
    max_steps: int | None = None,
    tolerance_K: float | None = None,
    probe_depths_m=(),
    peak_measure=None,
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
        2 % of the run's temperature span); default 0.5 K, or 2 K (5 % of the span) with ``tolerance_K``
    max_dt_s : largest adaptive step [s] (default end_time_s / 20)
    surface_refinement : node packing toward the surface, 0 (uniform) to 0.9; the default 0.5 makes the
        surface spacing about 0.4 of the centre spacing (see ``fv_grid.AxisGrid.graded``)
    max_steps : most time steps (accepted and rejected) before the run gives up with an InvalidInputError
        on ``max_steps`` (None: no limit)
    tolerance_K : time-integration tolerance [K]: adaptive steps are chosen by an estimate of each step's
        local error (BDF2 against its predictor, :mod:`~procplan.conduction.fv_error`) so that the
        time-integration error of the temperatures stays within about this; None (default) = steps by
        ``max_step_change_K`` alone. The estimates are reported in the result. (The spatial error of the grid
        is not included.)
    probe_depths_m : depths below the surface [m], each from 0 to the half-thickness or radius of the
        shortest axis, whose temperatures the result records (``probe_C``), read along that axis from the
        centre of its face (``fv_grid.probe_weights``)
    peak_measure : ``f(peak_C, volume_m3) -> float`` of the hottest temperature each cell has reached so far
        (flat, every accepted step counts) and the cells' volumes, recorded at each time of the history
        (``peak_measure``; the run's peak field is ``peak_field``); None: not kept

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
    end, target, dt_s, dt_cap, tol = _check_settings(
        geometry, props, boundary, end_time_s, scheme, max_step_change_K, dt_s, max_dt_s, tolerance_K
    )
    boundary.check_covers(end)
    H, grid = _initial_enthalpy(initial_C, props, geometry, n_nodes, surface_refinement)
    model = FVModel(grid, props, boundary)
    outs = _output_times(output_time_s, end)
    core0 = float(model.temperature(H[grid.core_index]))
    target = _span_target(
        model, boundary, H, end, target, SPAN_SHARE if tol is None else SPAN_SHARE_WITH_TOLERANCE
    )
    stop, stop_direction = _stop_condition(stop_when_core_C, stop_direction, core0)
    landings = np.union1d(boundary.breakpoints_s, [end] if outs is None else np.r_[outs, end])
    control = StepControl(
        end=end,
        target=target,
        dt_s=dt_s,
        dt_cap=dt_cap,
        use_bdf2=scheme == "bdf2",
        landings=landings[(landings > 0) & (landings <= end)],
        jumps=boundary.jumps_s,
        outs=outs,
        stop=stop,
        stop_direction=stop_direction,
        max_steps=max_steps,
        tolerance=tol,
        flux_change=FLUX_CHANGE_PER_STEP if tol is None else FLUX_CHANGE_WITH_TOLERANCE,
    )
    recorder = HistoryRecorder(grid, model.temperature, probe_depths_m, peak_measure)
    stepper = TimeStepper(model, control, H, recorder)
    stepper.run()
    return recorder.result(
        stepper.H,
        n_steps=stepper.n_steps,
        n_rejected=stepper.n_rej,
        n_iterations=stepper.n_it,
        dts=stepper.dts,
        energy_balance_error=stepper.energy_balance_error(),
        stopped_at_s=stepper.stopped_at,
        method=_method_text(grid, scheme, dt_s, target, dt_cap, tol, stepper),
        n_factorisations=model.factors.n_factorisations,
        n_reused_factorisations=model.factors.n_reused,
        n_separable_solves=model.factors.n_separable,
        error_estimates=(tol, stepper.err_max, stepper.err_core_sum)
        if tol is not None and dt_s is None
        else (None, None, None),
    )


def _check_settings(
    geometry, props, boundary, end_time_s, scheme, max_step_change_K, dt_s, max_dt_s, tolerance_K
):
    """Validated (end [s], step target [K], fixed step [s] or None, largest adaptive step [s], tolerance [K]
    or None)."""
    if not isinstance(geometry, Geometry):
        raise InvalidInputError("geometry", type(geometry).__name__, "a procplan.geometry.Geometry")
    if not isinstance(props, PropertyTable):
        raise InvalidInputError("props", type(props).__name__, "a procplan.properties.table.PropertyTable")
    if not isinstance(boundary, SurfaceBoundary):
        raise InvalidInputError("boundary", type(boundary).__name__, "a SurfaceBoundary")
    end = validate.positive("end_time_s", end_time_s, "s")
    validate.choice("scheme", scheme, SCHEMES)
    tol = None if tolerance_K is None else validate.positive("tolerance_K", tolerance_K, "K")
    if max_step_change_K is None:
        target = STEP_CHANGE_K if tol is None else STEP_CHANGE_WITH_TOLERANCE_K
    else:
        target = validate.positive("max_step_change_K", max_step_change_K, "K")
    if dt_s is not None:
        dt_s = validate.number("dt_s", dt_s, minimum=0.0, min_inclusive=False, maximum=end, unit="s")
    dt_cap = (
        end / 20.0
        if max_dt_s is None
        else validate.number("max_dt_s", max_dt_s, minimum=0.0, min_inclusive=False, unit="s")
    )
    return end, target, dt_s, dt_cap, tol


def _output_times(output_time_s, end: float) -> np.ndarray | None:
    """Validated output times [s] within [0, end], or None (every accepted step)."""
    if output_time_s is None:
        return None
    outs = validate.increasing("output_time_s", output_time_s, "s")
    if outs[0] < 0 or outs[-1] > end * (1 + 1e-12):
        raise InvalidInputError(
            "output_time_s", [float(outs[0]), float(outs[-1])], f"times within [0, {end:g}] s"
        )
    return np.minimum(outs, end)


def _span_target(
    model: FVModel, boundary: SurfaceBoundary, H: np.ndarray, end: float, target: float, share: float
) -> float:
    """The step target [K], also capped at ``share`` of the temperature span of the run, so that a small
    change is followed as closely, relatively, as a large one."""
    tms = boundary.medium(np.r_[0.0, boundary.breakpoints_s[boundary.breakpoints_s < end], end])
    t_all = model.temperature(H)
    span = max(float(np.max(tms)), float(t_all.max())) - min(float(np.min(tms)), float(t_all.min()))
    if span > 1e-6:  # a smaller span is round-off (a product already at the medium temperature): no cap
        target = min(target, share * span)
    return target


def _stop_condition(stop_when_core_C, stop_direction, core0: float) -> tuple[float | None, str | None]:
    """Validated (stop temperature [°C] or None, direction); the direction is inferred from the initial core."""
    stop = None
    if stop_when_core_C is not None:
        stop = validate.number("stop_when_core_C", stop_when_core_C, unit="°C")
        if stop_direction is None:
            stop_direction = "falling" if core0 > stop else "rising"
        validate.choice("stop_direction", stop_direction, STOP_DIRECTIONS)
    elif stop_direction is not None:
        validate.choice("stop_direction", stop_direction, STOP_DIRECTIONS)
    return stop, stop_direction


def _method_text(
    grid: FVGrid, scheme: str, dt_s: float | None, target: float, dt_cap: float, tol, stepper: TimeStepper
) -> str:
    """Description of the discretisation for the result's provenance."""
    if dt_s is not None:
        step_text = f"fixed dt {dt_s:g} s"
    elif tol is not None:
        step_text = (
            f"error-controlled dt (time-integration tolerance {tol:g} K: estimated local error at most "
            f"{ERROR_SHARE * tol:.3g} K per step, largest accepted {stepper.err_max:.2g} K, summed at the core "
            f"{stepper.err_core_sum:.2g} K; at most {target:g} K change per step and {dt_cap:g} s)"
        )
    else:
        step_text = f"adaptive dt (target {target:g} K per step, at most {dt_cap:g} s)"
    return (
        f"finite volume, {grid.describe()}; enthalpy unknown, harmonic-mean face conductivity; "
        f"{SCHEMES[scheme]}, {step_text}; Newton on H with dT/dH from the table (secant fallback)"
        f"{'' if len(grid.shape) == 1 else '; sparse LU kept across steps as GMRES preconditioner'}"
        f"{'; fast diagonalisation of separable systems (direct, or as GMRES preconditioner)' if stepper.model.factors.n_separable else ''}; "
        f"surface temperature = surface node"
    )
