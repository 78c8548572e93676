"""Run a plan: step by step, the solver the physics calls for, the temperature field carried between steps.

For each step the engine turns the surface description (a given h, or a machine and its settings) into a
medium temperature and an effective h over time, chooses the solver and says why, runs it, and appends
the step's history. The result is a :class:`PlanResult`: a history DataFrame (``time_s``, ``core_C``,
``surface_C``, ``mean_C``, ``heat_flow_W``, ``step``) with the provenance of every step, and the
outcomes (targets, rule check, lethality, freezing, energy, margin) from :mod:`procplan.run.assess`.
The solver choice and its reasons live in :mod:`procplan.run.solver`.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import pandas as pd

from procplan import validate
from procplan.conduction.regime import classify_regime
from procplan.errors import InvalidInputError
from procplan.model import SOLVERS, TARGET_POINTS, Plan, Step, depth_column
from procplan.properties.table import PropertyTable
from procplan.run import machine_load as ml
from procplan.run.assess import assess_plan
from procplan.run.budget import (
    ENERGY_BALANCE_LIMIT,
    MAX_TIME_STEPS_PER_STEP,
    check_work_budget,
    refined_time_settings,
    step_limit_error,
    unreliable_reason,
)
from procplan.run.drip import drip_settings, start_state, step_drip
from procplan.run.dry_oven import carried_field, dry_oven_step, range_warnings
from procplan.run.dry_stop import check_weight_stop
from procplan.run.results import PlanResult, StepResult, StepSolverDetails
from procplan.run.second_product import (
    H_SURFACE_TOLERANCE,
    initial_state,
    second_product_pass,
    target_warnings,
)
from procplan.run.second_product import carried as carried_second
from procplan.run.solver import PROPERTY_SPREAD_LIMIT, choose_solver, exact_properties, exact_sample_times
from procplan.run.step_surface import StepSurface, resolve_step_surface

__all__ = [
    "EXACT_POINTS",
    "H_SURFACE_TOLERANCE",
    "SINK_TOLERANCE_K",
    "PROPERTY_SPREAD_LIMIT",
    "PlanResult",
    "StepResult",
    "StepSolverDetails",
    "choose_solver",
    "run_plan",
]

#: Move of the sink temperature [K] (radiation to walls at another temperature than the air) on the second
#: evaluation beyond which the step runs again; it cannot move without such walls.
SINK_TOLERANCE_K = 0.05
#: Further evaluations of h and the sink temperature at most, with radiation to walls at another temperature.
MAX_SINK_PASSES = 4
#: The warning of a step whose surface evaporation is left out because an earlier dry-air step dried a crust.
CRUST_NOTE = (
    "{}: the surface dried into a crust in the oven, whose water activity later steps do not carry, so its "
    "evaporation is left out here (less weight loss; the core cools or heats more slowly than with a wet surface)"
)
#: Points in an exact-solution history.
EXACT_POINTS = 601


@dataclass(frozen=True)
class _StepRun:
    """One solver pass over a step: its history (times from the step's start) and what the solver reported."""

    frame: pd.DataFrame
    stop_time_s: float | None
    energy_balance_error: float
    details: StepSolverDetails
    fv: Any  # the finite-volume result (its final field carries on), None for the exact solver
    machine: ml.MachineLoadResult | None = None  # a loaded step: how the machine carried the batch
    drying: Any = None  # run.dry_oven.DryingSummary of a step in hot dry air


def _exact_stop(run, times: np.ndarray, hist, step: Step):
    """Time [s] the core reaches the step's stop temperature (None when it does not) and the times to report."""
    target = step.stop_when_core_C
    core = np.asarray(hist.core_C)
    sign = np.sign(core - target)
    crossed = np.nonzero(sign != sign[0])[0] if sign[0] != 0 else np.array([0])
    if not crossed.size:
        return None, times
    j = int(crossed[0])
    if j == 0:
        stop_time = 0.0
    else:
        from scipy.optimize import brentq

        f = lambda t: float(run(np.array([t])).core_C[0]) - target  # noqa: E731
        lo_t, hi_t = times[j - 1], times[j]
        stop_time = brentq(f, lo_t, hi_t, xtol=1e-9 * step.duration_s + 1e-12)
        # land on the far side of the target, so the crossing is never missed by round-off
        while np.sign(f(stop_time)) == np.sign(f(lo_t)) and stop_time < hi_t:
            stop_time = min(hi_t, stop_time + 1e-9 * step.duration_s + 1e-12)
    times = np.r_[times[:j], stop_time] if stop_time > 0 else np.array([0.0])
    times = np.unique(times)
    if times.size == 1:
        times = np.array([0.0, max(stop_time, 1e-9)])
    return stop_time, times


def _exact_step(
    geometry, props: PropertyTable, start_C: float, surface: StepSurface, step: Step, depths=()
) -> _StepRun:
    """Run the product (series) solution for one step with effective constant properties; ``depths`` [m]
    below the surface get a column each, from the same series at that point."""
    from procplan.conduction.product import exact_history, exact_temperature_at_C

    medium = surface.medium_C[0]
    h = surface.h_W_m2K[0]
    k, rho, cp, t_mid = exact_properties(props, start_C, medium)  # secant cp: exact energy

    def run(times):
        return exact_history(geometry, k, rho, cp, h, start_C, medium, times)

    times = exact_sample_times(step.duration_s, EXACT_POINTS)
    hist = run(times)
    stop_time = None
    if step.stop_when_core_C is not None:
        stop_time, stop_times = _exact_stop(run, times, hist, step)
        if stop_time is not None:
            hist = run(stop_times)
    details = StepSolverDetails(
        k_W_mK=k,
        rho_kg_m3=rho,
        cp_J_kgK=cp,
        properties_at=f"k at {t_mid:.1f} °C; cp = ΔH/ΔT over the step",
        series=hist.provenance,
    )
    frame = pd.DataFrame(
        {
            "time_s": np.asarray(hist.time_s, dtype=float),
            "core_C": np.asarray(hist.core_C, dtype=float),
            "surface_C": np.asarray(hist.surface_C, dtype=float),
            "mean_C": np.asarray(hist.mean_C, dtype=float),
            # the product solution reports heat leaving the piece; the history's convention is heat into it
            "heat_flow_W": -np.asarray(hist.heat_flow_W, dtype=float),
        }
    )
    for d in depths:
        at = geometry.depth_position(d)
        frame[depth_column(d)] = exact_temperature_at_C(
            geometry, k, rho, cp, h, start_C, medium, hist.time_s, at
        )
    return _StepRun(frame, stop_time, 0.0, details, None)


def _fv_step(
    geometry, props, initial, surface, step: Step, n_nodes, time_settings, load=None, depths=(), guesses=None
) -> _StepRun:
    """Run the finite-volume solver for one step; ``time_settings`` holds dt_s (and, for a refined rerun,
    the adaptive step's aim and cap); ``load`` (a machine_load.StepLoad) solves the medium with the batch;
    ``depths`` [m] below the surface get a column each, read from the field as it is solved; ``guesses``
    keeps a dry-air step's coupled result for its reruns."""
    from procplan.conduction.finite_volume import solve_conduction

    boundary, node = ml.with_medium_node(surface.boundary(), load)
    time_settings = {**time_settings, "probe_depths_m": tuple(depths)}
    dried = (
        dry_oven_step(geometry, props, initial, surface, step, n_nodes, time_settings, guesses)
        if not load
        else None
    )
    res = (
        dried[0]
        if dried
        else solve_conduction(
            geometry,
            props,
            initial,
            boundary,
            step.duration_s,
            n_nodes=n_nodes,
            stop_when_core_C=step.stop_when_core_C,
            max_steps=MAX_TIME_STEPS_PER_STEP,
            **time_settings,
        )
    )
    frame = pd.DataFrame(
        {
            "time_s": res.time_s,
            "core_C": res.core_C,
            "surface_C": res.surface_C,
            "mean_C": res.mean_C,
            "heat_flow_W": res.heat_flow_W,
        }
    )
    for j, d in enumerate(res.probe_depths_m):
        frame[depth_column(d)] = res.probe_C[:, j]
    machine, balance = ml.coupled_frame(load, node, res, frame, boundary.medium)
    details = StepSolverDetails(
        grid=res.grid.describe() if hasattr(res.grid, "describe") else str(res.grid.shape),
        time_steps=res.n_steps,
        rejected_steps=res.n_rejected,
        dt_min_s=res.dt_min_s,
        dt_max_s=res.dt_max_s,
        method=res.method,
        time_tolerance_K=res.time_tolerance_K,
        local_error_estimate_K=res.local_error_estimate_K,
    )
    stop = dried[1].weight_stop_s if dried and dried[1].weight_stop_s is not None else res.stopped_at_s
    return _StepRun(frame, stop, balance, details, res, machine, dried and dried[1])


@dataclass(frozen=True)
class _Context:
    """What every step of one run shares."""

    plan: Plan
    library: Any
    props: PropertyTable
    requested: str
    n_nodes: Any
    dt_s: float | None
    refined: dict | None = None  # the finer time settings of an energy-balance rerun (None: as asked)
    load: Any = None  # the step's machine load (machine_load.StepLoad), None: the medium at its set point
    time_tolerance_K: float | None = None  # the finite volume's time-integration tolerance (None: by change)
    second: Any = None  # run.second_product.SecondState: a second product in the load (None: none)
    #: the last coupled heat-and-moisture result of each dry-air step (by the step's identity), so that a
    #: rerun of the step (h at the surface temperature, a finer time step) starts from its surface waveform
    dry_guesses: dict = field(default_factory=dict)


@dataclass
class _Carried:
    """The state carried from one step into the next."""

    start_C: float
    mean_C: float
    field: Any
    uniform: bool = True
    t_offset_s: float = 0.0
    salt: Any = None  # procplan.run.mass_step.SaltState after a brining step
    crust: bool = False  # a dry-air step dried the surface into a crust
    drip: Any = None  # run.drip.DripState of a meat product (None: no drip modelled)


def _surface(
    ctx: _Context, step: Step, i: int, carried: _Carried, surface_C: float | None = None
) -> StepSurface:
    """The step's surface; after a dry-air step dried a crust, without surface evaporation (and saying so)."""
    surface = resolve_step_surface(
        step, i, ctx.plan.product, carried.mean_C, ctx.library, surface_C=surface_C
    )
    if carried.crust and surface.evaporation is not None:
        surface = replace(
            surface, evaporation=None, warnings=(*surface.warnings, CRUST_NOTE.format(step.name))
        )
    return surface


def _solve(ctx: _Context, chosen: str, carried: _Carried, step: Step, surface: StepSurface) -> _StepRun:
    geometry = ctx.plan.product.geometry
    depths = ctx.plan.probe_depths_m
    if chosen == "exact":
        return _exact_step(geometry, ctx.props, carried.start_C, surface, step, depths)
    timing = (
        ctx.refined if ctx.refined is not None else {"dt_s": ctx.dt_s, "tolerance_K": ctx.time_tolerance_K}
    )
    timing = {**timing, **drip_settings(carried.drip)}  # a meat product: the peak field for its drip
    try:
        return _fv_step(
            geometry,
            ctx.props,
            carried.field,
            surface,
            step,
            ctx.n_nodes,
            timing,
            ctx.load,
            depths,
            ctx.dry_guesses,
        )
    except InvalidInputError as exc:
        if exc.field == "max_steps":
            raise step_limit_error(f"{step.name}", exc) from exc
        raise


def _mean_surface_C(run: _StepRun) -> float | None:
    """The step's time-averaged surface temperature [°C] (None for a step of no duration)."""
    ts = run.frame["time_s"].to_numpy()
    if not ts[-1] > ts[0]:
        return None
    return float(np.trapezoid(run.frame["surface_C"].to_numpy(), ts) / (ts[-1] - ts[0]))


def _solve_with_surface_pass(ctx: _Context, i: int, step: Step, chosen: str, carried: _Carried, surface):
    """Solve the step; h depends on the surface temperature (film properties, free convection, radiation), so
    evaluate it again at the step's time-averaged surface temperature and run once more when it moved by more
    than :data:`H_SURFACE_TOLERANCE`. With radiation to walls at another temperature than the air, the sink
    temperature follows h_rad: evaluate again after each run, up to :data:`MAX_SINK_PASSES` times, until it
    moves by less than :data:`SINK_TOLERANCE_K`. A second product in the load gets its own second pass
    (:func:`procplan.run.second_product.second_product_pass`). Returns the run, the surface it ran with and the context (its load)."""
    run = _solve(ctx, chosen, carried, step, surface)
    h_surface_C, first_change = None, None
    for n in range(1 + MAX_SINK_PASSES):
        ts_avg = _mean_surface_C(run)
        if ts_avg is None or (n > 0 and not surface.radiates_to_other_walls):
            break
        again = _surface(ctx, step, i, carried, surface_C=ts_avg)
        change = float(np.max(np.abs(np.array(again.h_W_m2K) / np.array(surface.h_W_m2K) - 1.0)))
        sink_moved_K = float(np.max(np.abs(np.array(again.medium_C) - np.array(surface.medium_C))))
        if n == 0:
            h_surface_C, first_change = ts_avg, change
        if not (sink_moved_K > SINK_TOLERANCE_K or (n == 0 and change > H_SURFACE_TOLERANCE)):
            break
        surface, h_surface_C = again, ts_avg
        run = _solve(ctx, chosen, carried, step, surface)
    run, ctx = second_product_pass(ctx, i, step, run, lambda c: _solve(c, chosen, carried, step, surface))
    if first_change is None:
        return run, surface, ctx
    details = replace(run.details, h_surface_C=h_surface_C, h_change_on_second_pass=first_change)
    return replace(run, details=details), surface, ctx


def _check_balance(ctx: _Context, step: Step, chosen: str, carried: _Carried, surface, run: _StepRun):
    """Run a step whose energy balance is off by more than :data:`ENERGY_BALANCE_LIMIT` once more with a
    finer time step (the grid stays, since the field carries on); return the run and why it cannot be
    relied on (None when it can)."""
    if chosen == "exact" or run.energy_balance_error <= ENERGY_BALANCE_LIMIT:
        return run, None
    finer = refined_time_settings(step.duration_s, ctx.dt_s, ctx.time_tolerance_K)
    if finer:
        again = _solve(replace(ctx, refined=finer), chosen, carried, step, surface)
        kept = {
            "h_surface_C": run.details.h_surface_C,
            "h_change_on_second_pass": run.details.h_change_on_second_pass,
        }
        run = replace(again, details=replace(again.details, **kept))
        if run.energy_balance_error <= ENERGY_BALANCE_LIMIT:
            return run, None
    return run, unreliable_reason(step.name, run.energy_balance_error, refined=bool(finer))


def _step_warnings(
    step: Step, surface: StepSurface, run: _StepRun, unreliable: str | None
) -> tuple[str, ...]:
    out = list(surface.warnings)
    if step.stop_when_core_C is not None and run.stop_time_s is None:
        out.append(
            f"{step.name}: the core did not reach {step.stop_when_core_C:g} °C within {step.duration_s / 60:g} min"
        )
    d = run.drying
    if d is not None and d.stop_weight_loss_percent is not None and d.weight_stop_s is None:
        out.append(
            f"{step.name}: the predicted weight loss reached {d.weight_loss_percent:.1f} %, not the "
            f"{d.stop_weight_loss_percent:g} % asked, by the end of the step"
        )
    out.extend(w for w in [run.machine and run.machine.warning(step.name)] if w)
    if unreliable is not None:
        out.append(unreliable)
    elif run.energy_balance_error > 0.005:
        out.append(
            f"{step.name}: energy-balance error {run.energy_balance_error:.2%} exceeds 0.5 %; refine the grid or time step"
        )
    return tuple(out)


def _place_frame(frame: pd.DataFrame, step: Step, i: int, run: _StepRun, t_offset_s: float, first: bool):
    """The step's history on the plan's clock, labelled with the step."""
    frame["time_s"] = frame["time_s"] + t_offset_s
    if run.stop_time_s is not None and step.stop_when_core_C is not None and len(frame):
        # both solvers stop within 1e-5 K of the stop temperature; record the crossing as the target itself
        last = frame.index[-1]
        if abs(frame.at[last, "core_C"] - step.stop_when_core_C) < 1e-4:
            frame.at[last, "core_C"] = step.stop_when_core_C
    frame["step"] = step.name
    frame["step_index"] = i
    return frame if first else frame.iloc[1:]  # the first row repeats the previous step's last state


def _run_step(
    ctx: _Context, i: int, step: Step, carried: _Carried
) -> tuple[pd.DataFrame, StepResult, _StepRun]:
    """Resolve the surface, choose the solver, solve one step; the history is on the plan's clock."""
    product = ctx.plan.product
    surface = resolve_step_surface(step, i, product, carried.mean_C, ctx.library)
    if carried.crust and surface.evaporation is not None:
        surface = replace(
            surface, evaporation=None, warnings=(*surface.warnings, CRUST_NOTE.format(step.name))
        )
    check_weight_stop(step, i, surface)
    mass = None
    if step.brine is not None:
        from procplan.run.mass_step import brine_first

        mass, step = brine_first(step, i, product, ctx.props, surface, carried.salt)
    ctx, held, load_note = ml.step_loads(ctx, step, i, surface, carried.field)
    ctx = ctx if surface.drying_air is None else replace(ctx, load=None)  # dry air: the set point held
    choice = choose_solver(
        ctx.requested,
        props=ctx.props,
        uniform_start=carried.uniform,
        start_C=carried.start_C,
        surface=surface,
        step_label=f"steps[{i}] ({step.name})",
        field_carried_on=i < len(ctx.plan.steps) - 1,
    )
    choice = ml.coupled_solver_choice(choice, ctx.load)
    run, surface, ctx = _solve_with_surface_pass(ctx, i, step, choice.solver, carried, surface)
    run, unreliable = _check_balance(ctx, step, choice.solver, carried, surface, run)
    run = ml.with_held(run, held, surface)
    # the regime and Biot number of the h the step ran with (after the surface pass)
    regime = classify_regime(
        float(np.mean(surface.h_W_m2K)),
        product.geometry,
        float(ctx.props.conductivity(0.5 * (carried.mean_C + np.mean(surface.medium_C)))),
    )
    details = replace(run.details, regime=regime.regime)
    frame = _place_frame(run.frame, step, i, run, carried.t_offset_s, first=i == 0)
    if mass is not None:
        from procplan.run.mass_step import brine_until

        end = float(run.frame["time_s"].iloc[-1]) - carried.t_offset_s
        mass = brine_until(mass, step, i, product, ctx.props, surface, carried.salt, end)
    stop = run.stop_time_s
    result = StepResult(
        index=i,
        name=step.name,
        start_s=carried.t_offset_s,
        end_s=float(frame["time_s"].iloc[-1]) if len(frame) else carried.t_offset_s,
        solver=choice.solver,
        reason=choice.reason,
        regime=regime,
        surface=surface,
        stopped=stop is not None,
        stop_time_s=None if stop is None else carried.t_offset_s + stop,
        energy_balance_error=float(run.energy_balance_error),
        details=details,
        warnings=_step_warnings(step, surface, run, unreliable) + (() if mass is None else mass.warnings),
        unreliable_reason=unreliable,
        mass=mass,
        machine_load=run.machine,
        load_note=load_note,
        drying=run.drying,
        drip=step_drip(carried.drip, run.fv, run.drying)[0],
    )
    return frame, result, run


def _run_steps(ctx: _Context) -> tuple[pd.DataFrame, list[StepResult], list[str], PropertyTable]:
    """Every step in order, the field (and the salt) carried from one into the next; after a step that took up
    salt, the later steps use the lowered freezing point. Returns the properties of the last step too."""
    start, base = ctx.plan.start_temperature_C, ctx.props
    carried = _Carried(start_C=start, mean_C=start, field=start, drip=start_state(ctx.plan.product, base))
    frames: list[pd.DataFrame] = []
    steps: list[StepResult] = []
    warnings: list[str] = []
    for i, step in enumerate(ctx.plan.steps):
        frame, result, run = _run_step(ctx, i, step, carried)
        salt = carried.salt
        if result.mass is not None:
            from procplan.run.mass_step import salted_properties

            salt = result.mass.state
            props, note = salted_properties(ctx.plan.product, base, salt)
            ctx = replace(ctx, props=props)
            result = replace(result, mass=replace(result.mass, freezing_note=note))
        second, note, alone = carried_second(ctx.second, result, step, ctx.library, ctx.dt_s)
        result = result if alone is None else replace(result, second_alone=alone)
        ctx = replace(ctx, second=second)
        frames.append(frame)
        steps.append(result)
        warnings.extend(result.warnings)
        warnings.extend([note] if note else [])
        last = frame.iloc[-1] if len(frame) else frames[-2].iloc[-1]
        carried = _Carried(
            start_C=float(last["core_C"]),
            mean_C=float(last["mean_C"]),
            # None only for single-step plans or a forced exact solver
            field=carried_field(run, ctx.props),
            uniform=False,
            t_offset_s=result.end_s,
            salt=salt,
            crust=carried.crust or (result.drying is not None and result.drying.wet_until_s is not None),
            # salt raises the water-holding capacity, which the curve does not carry: no drip after brining
            drip=None if salt is not None else step_drip(carried.drip, run.fv, run.drying)[1],
        )
    history = pd.concat(frames, ignore_index=True)
    brines = [s.brine for s in ctx.plan.steps if s.brine is not None]
    if brines:
        from procplan.run.mass_step import salt_columns

        for name, col in salt_columns(history, steps, brines[0].initial_fraction or 0.0).items():
            history[name] = col
    return history, steps, warnings, ctx.props


def _run_packed(plan: Plan, **kw) -> PlanResult:
    """The packed load as one brick (:mod:`procplan.run.packing`), with the single free piece run beside it."""
    from procplan.run.packing import packed_plan, packed_result

    load_plan, load = packed_plan(plan, kw["library"])
    single = run_plan(replace(plan, packing=None), **kw)
    result = run_plan(load_plan, **kw)
    packed = packed_result(plan, load, result, single)
    return replace(result, packing=packed, warnings=load.warnings + result.warnings)


def check_targets(plan: Plan) -> None:
    """Every step target watches a known point; a depth target states a depth from 0 to the half-thickness or
    radius of the product's shortest axis (InvalidInputError naming the target otherwise)."""
    for i, step in enumerate(plan.steps):
        for j, tg in enumerate(step.targets):
            where = f"steps[{i}].targets[{j}]."
            validate.choice(where + "point", tg.point, TARGET_POINTS)
            if tg.point == "depth":
                if tg.depth_m is None:
                    raise InvalidInputError(
                        where + "depth_m", None, "a depth below the surface [m] for a depth target"
                    )
                plan.product.geometry.depth_position(tg.depth_m, where + "depth_m")
            elif tg.depth_m is not None:
                raise InvalidInputError(where + "depth_m", tg.depth_m, 'only with point "depth"')


def run_plan(
    plan: Plan,
    *,
    library=None,
    solver: str | None = None,
    n_nodes=None,
    dt_s: float | None = None,
    assess: bool = True,
    site=None,
    time_tolerance_K: float | None = None,
) -> PlanResult:
    """Run every step of ``plan`` in order and return the PlanResult.

    Parameters
    ----------
    plan : the plan (see :mod:`procplan.model`)
    library : the library that resolves equipment names and rules (default: the demo library when needed)
    solver : "auto" (default: the plan's choice), "exact" or "finite-volume"
    n_nodes, dt_s : finite-volume grid (per axis) and fixed time step [s] (adaptive when None)
    assess : compute outcomes (targets, rules, lethality, freezing, energy, margin)
    site : site settings whose tariff prices the energy when the plan gives no price (default: the library
        folder's ``site.toml``, if any)
    time_tolerance_K : finite-volume steps by an estimate of the time-integration error, aiming at this [K]
        (``solve_conduction(tolerance_K=...)``); None (default): by the largest node change per step
    """
    requested = solver or plan.solver
    validate.choice("solver", requested, SOLVERS)
    check_targets(plan)
    if library is None and (any(s.equipment for s in plan.steps) or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    if plan.packing is not None:
        return _run_packed(
            plan, library=library, solver=solver, n_nodes=n_nodes, dt_s=dt_s, assess=assess, site=site
        )
    props = plan.product.property_table()
    props.check_in_range("start.temperature_C", plan.start_temperature_C)
    piece_mass_kg = props.mass_density_kg_m3 * plan.product.geometry.volume_m3
    check_work_budget(plan, requested, n_nodes, dt_s)
    tol = None if time_tolerance_K is None else validate.positive("time_tolerance_K", time_tolerance_K, "K")
    ctx = _Context(
        plan, library, props, requested, n_nodes, dt_s, time_tolerance_K=tol, second=initial_state(plan)
    )
    history, steps, warnings, props = _run_steps(ctx)
    warnings.extend(range_warnings(history, props, dried=any(s.drying is not None for s in steps)))
    warnings.extend(target_warnings(plan, steps))
    outcomes = (
        assess_plan(plan, history, tuple(steps), props, piece_mass_kg, library, site) if assess else None
    )
    return PlanResult(
        plan=plan,
        history=history,
        steps=tuple(steps),
        properties=props,
        piece_mass_kg=piece_mass_kg,
        outcomes=outcomes,
        warnings=tuple(warnings) + (tuple(outcomes.warnings) if outcomes is not None else ()),
        unreliable_reasons=tuple(sr.unreliable_reason for sr in steps if sr.unreliable_reason is not None),
    )
