"""Run a plan: step by step, the solver the physics calls for, the temperature field carried between steps.

For each step the engine turns the surface description (a given h, or a machine and its settings) into a
medium temperature and an effective h over time, chooses the solver and says why, runs it, and appends
the step's history. The result is a :class:`PlanResult`: a history DataFrame (``time_s``, ``core_C``,
``surface_C``, ``mean_C``, ``heat_flow_W``, ``step``) with the provenance of every step, and the
outcomes (targets, rule check, lethality, freezing, energy, margin) from :mod:`procplan.run.assess`.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd
from scipy.optimize import brentq

from procplan import validate
from procplan.conduction.finite_volume import solve_conduction
from procplan.conduction.regime import Regime, classify_regime
from procplan.errors import InvalidInputError
from procplan.model import SOLVERS, Plan, Step
from procplan.properties.table import PropertyTable
from procplan.run.step_surface import StepSurface, resolve_step_surface

#: Largest relative spread of k and of the apparent cp over a step's temperature range for which the
#: exact (constant-property) solution is used in automatic mode.
PROPERTY_SPREAD_LIMIT = 0.10
#: Relative change of h, re-evaluated at the step's mean surface temperature, above which the step runs again.
H_SURFACE_TOLERANCE = 0.03
#: Points in an exact-solution history.
EXACT_POINTS = 601


@dataclass(frozen=True)
class StepResult:
    """Provenance and key numbers of one step."""

    index: int
    name: str
    start_s: float
    end_s: float
    solver: str
    reason: str
    regime: Regime
    surface: StepSurface
    stopped: bool
    stop_time_s: float | None
    energy_balance_error: float
    details: dict[str, Any] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()

    @property
    def duration_s(self) -> float:
        return self.end_s - self.start_s


@dataclass(frozen=True, eq=False)
class PlanResult:
    """The outcome of running a plan: history, per-step provenance and assessed outcomes."""

    plan: Plan
    history: pd.DataFrame
    steps: tuple[StepResult, ...]
    properties: PropertyTable
    piece_mass_kg: float
    outcomes: Any = None
    warnings: tuple[str, ...] = ()

    def summary(self) -> dict[str, Any]:
        """A JSON-ready summary (provenance and outcomes)."""
        from procplan.output.report import summary_dict

        return summary_dict(self)


def _spread(values: np.ndarray) -> float:
    m = float(np.mean(values))
    return float((np.max(values) - np.min(values)) / m) if m > 0 else np.inf


def choose_solver(
    requested: str,
    *,
    props: PropertyTable,
    uniform_start: bool,
    start_C: float,
    surface: StepSurface,
    step_label: str,
    field_carried_on: bool = False,
) -> tuple[str, str]:
    """The solver for one step and the reason, in words a technologist can read.

    Exact (series / product) solutions need a uniform start, a constant medium and h, no phase change
    and nearly constant properties; otherwise the finite-volume enthalpy solver runs. In automatic mode a
    step whose field is carried into a following step (``field_carried_on``) also runs finite volumes, since
    an exact solution cannot start from a non-uniform field.
    """
    validate.choice("solver", requested, SOLVERS)
    lo, hi = min(start_C, *surface.medium_C), max(start_C, *surface.medium_C)
    grid = np.linspace(lo, hi, 41) if hi > lo else np.array([lo])
    tf = props.initial_freezing_C
    freezes = tf is not None and lo < tf
    k_spread = _spread(props.conductivity(grid))
    cp_spread = _spread(props.apparent_cp(grid))
    blockers = []
    if not uniform_start:
        blockers.append("the temperature field carried from the previous step is not uniform")
    elif field_carried_on and requested == "auto":
        blockers.append("the temperature field is carried into the following steps")
    if not surface.constant:
        blockers.append("the medium temperature, h or surface evaporation changes during the step")
    if freezes:
        blockers.append(f"the product passes its initial freezing point {tf:.1f} °C (latent heat)")
    if k_spread > PROPERTY_SPREAD_LIMIT or cp_spread > PROPERTY_SPREAD_LIMIT:
        blockers.append(f"k varies {k_spread:.0%} and cp {cp_spread:.0%} over {lo:.0f}…{hi:.0f} °C")
    if requested == "exact":
        if not uniform_start or not surface.constant or freezes:
            raise InvalidInputError(
                "solver",
                "exact",
                "auto or finite-volume for this plan",
                f"{step_label}: " + "; ".join(blockers),
            )
        return "exact", "exact solution as requested" + (f" (note: {blockers[0]})" if blockers else "")
    if requested == "finite-volume":
        return "finite-volume", "finite-volume solver as requested"
    if blockers:
        return "finite-volume", "finite-volume enthalpy solver: " + "; ".join(blockers)
    return (
        "exact",
        f"exact series solution: uniform start, constant medium and h, no phase change, k and cp vary ≤ {PROPERTY_SPREAD_LIMIT:.0%} over {lo:.0f}…{hi:.0f} °C",
    )


def _exact_step(geometry, props: PropertyTable, start_C: float, surface: StepSurface, step: Step):
    """Run the product (series) solution for one step with effective constant properties."""
    from procplan.conduction.product import exact_history

    medium = surface.medium_C[0]
    h = surface.h_W_m2K[0]
    t_mid = 0.5 * (start_C + medium)
    k = float(props.conductivity(t_mid))
    rho = props.mass_density_kg_m3
    if abs(medium - start_C) > 1e-9:
        cp = float(
            (props.enthalpy(medium) - props.enthalpy(start_C)) / (medium - start_C)
        )  # secant cp: exact energy
    else:
        cp = float(props.apparent_cp(start_C))

    def run(times):
        return exact_history(geometry, k, rho, cp, h, start_C, medium, times)

    times = np.linspace(0.0, step.duration_s, EXACT_POINTS)
    hist = run(times)
    stop_time = None
    if step.stop_when_core_C is not None:
        target = step.stop_when_core_C
        core = np.asarray(hist.core_C)
        sign = np.sign(core - target)
        crossed = np.nonzero(sign != sign[0])[0] if sign[0] != 0 else np.array([0])
        if crossed.size:
            j = int(crossed[0])
            if j == 0:
                stop_time = 0.0
            else:
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
            hist = run(times)
    details = {
        "k_W_mK": k,
        "rho_kg_m3": rho,
        "cp_J_kgK": cp,
        "properties_at": f"k at {t_mid:.1f} °C; cp = ΔH/ΔT over the step",
    }
    prov = getattr(hist, "provenance", None)
    if prov is not None:
        details["series"] = dataclasses.asdict(prov) if dataclasses.is_dataclass(prov) else dict(prov)
    frame = pd.DataFrame(
        {
            "time_s": np.asarray(hist.time_s if hasattr(hist, "time_s") else times, dtype=float),
            "core_C": np.asarray(hist.core_C, dtype=float),
            "surface_C": np.asarray(hist.surface_C, dtype=float),
            "mean_C": np.asarray(hist.mean_C, dtype=float),
            # the product solution reports heat leaving the piece; the history's convention is heat into it
            "heat_flow_W": -np.asarray(hist.heat_flow_W, dtype=float),
        }
    )
    return frame, stop_time, 0.0, details, None


def _fv_step(geometry, props, initial, surface: StepSurface, step: Step, n_nodes, dt_s):
    res = solve_conduction(
        geometry,
        props,
        initial,
        surface.boundary(),
        step.duration_s,
        n_nodes=n_nodes,
        dt_s=dt_s,
        stop_when_core_C=step.stop_when_core_C,
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
    details = {
        "grid": res.grid.describe() if hasattr(res.grid, "describe") else str(res.grid.shape),
        "time_steps": res.n_steps,
        "rejected_steps": res.n_rejected,
        "dt_min_s": res.dt_min_s,
        "dt_max_s": res.dt_max_s,
        "method": res.method,
    }
    return frame, res.stopped_at_s, res.energy_balance_error, details, res


def _run_step(chosen, geometry, props, start_C, field_state, step, n_nodes, dt_s, surface):
    if chosen == "exact":
        return _exact_step(geometry, props, start_C, surface, step)
    return _fv_step(geometry, props, field_state, surface, step, n_nodes, dt_s)


def run_plan(
    plan: Plan,
    *,
    library=None,
    solver: str | None = None,
    n_nodes=None,
    dt_s: float | None = None,
    assess: bool = True,
) -> PlanResult:
    """Run every step of ``plan`` in order and return the PlanResult.

    Parameters
    ----------
    plan : the plan (see :mod:`procplan.files.plan`)
    library : the library that resolves equipment names and rules (default: the demo library when needed)
    solver : "auto" (default: the plan's choice), "exact" or "finite-volume"
    n_nodes, dt_s : finite-volume grid (per axis) and fixed time step [s] (adaptive when None)
    assess : compute outcomes (targets, rules, lethality, freezing, energy, margin)
    """

    requested = solver or plan.solver
    validate.choice("solver", requested, SOLVERS)
    if library is None and (any(s.equipment for s in plan.steps) or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    product = plan.product
    geometry = product.geometry
    props = product.property_table()
    props.check_in_range("start.temperature_C", plan.start_temperature_C)
    piece_mass_kg = props.mass_density_kg_m3 * geometry.volume_m3
    frames = []
    steps: list[StepResult] = []
    field_state: Any = plan.start_temperature_C
    uniform = True
    t_offset = 0.0
    start_C = plan.start_temperature_C
    mean_C = start_C
    warnings: list[str] = []
    for i, step in enumerate(plan.steps):
        label = f"steps[{i}] ({step.name})"
        surface = resolve_step_surface(step, i, product, mean_C, library)
        regime = classify_regime(
            float(np.mean(surface.h_W_m2K)),
            geometry,
            float(props.conductivity(0.5 * (mean_C + np.mean(surface.medium_C)))),
        )
        chosen, reason = choose_solver(
            requested,
            props=props,
            uniform_start=uniform,
            start_C=start_C,
            surface=surface,
            step_label=label,
            field_carried_on=i < len(plan.steps) - 1,
        )

        args = (chosen, geometry, props, start_C, field_state, step, n_nodes, dt_s)
        frame, stop_time, ebal, details, fv = _run_step(*args, surface)
        # h depends on the surface temperature (film properties, free convection, radiation): evaluate it again
        # at the step's time-averaged surface temperature and run once more when it moved by more than
        # H_SURFACE_TOLERANCE
        ts = frame["time_s"].to_numpy()
        if ts[-1] > ts[0]:
            ts_avg = float(np.trapezoid(frame["surface_C"].to_numpy(), ts) / (ts[-1] - ts[0]))
            again = resolve_step_surface(step, i, product, mean_C, library, surface_C=ts_avg)
            change = float(np.max(np.abs(np.array(again.h_W_m2K) / np.array(surface.h_W_m2K) - 1.0)))
            details["h_surface_C"] = ts_avg
            details["h_change_on_second_pass"] = change
            if change > H_SURFACE_TOLERANCE:
                surface = again
                frame, stop_time, ebal, details2, fv = _run_step(*args, surface)
                details2.update(h_surface_C=ts_avg, h_change_on_second_pass=change)
                details = details2
        details["regime"] = regime.regime
        frame["time_s"] = frame["time_s"] + t_offset
        if stop_time is not None and step.stop_when_core_C is not None and len(frame):
            # both solvers stop within 1e-5 K of the stop temperature; record the crossing as the target itself
            last = frame.index[-1]
            if abs(frame.at[last, "core_C"] - step.stop_when_core_C) < 1e-4:
                frame.at[last, "core_C"] = step.stop_when_core_C
        frame["step"] = step.name
        frame["step_index"] = i
        if frames:
            frame = frame.iloc[1:]  # the first row repeats the previous step's last state
        frames.append(frame)
        end_s = float(frame["time_s"].iloc[-1]) if len(frame) else t_offset
        step_warnings = list(surface.warnings)
        if step.stop_when_core_C is not None and stop_time is None:
            step_warnings.append(
                f"{step.name}: the core did not reach {step.stop_when_core_C:g} °C within {step.duration_s / 60:g} min"
            )
        if ebal > 0.005:
            step_warnings.append(
                f"{step.name}: energy-balance error {ebal:.2%} exceeds 0.5 %; refine the grid or time step"
            )
        steps.append(
            StepResult(
                index=i,
                name=step.name,
                start_s=t_offset,
                end_s=end_s,
                solver=chosen,
                reason=reason,
                regime=regime,
                surface=surface,
                stopped=stop_time is not None,
                stop_time_s=None if stop_time is None else t_offset + stop_time,
                energy_balance_error=float(ebal),
                details=details,
                warnings=tuple(step_warnings),
            )
        )
        warnings.extend(step_warnings)
        last = frame.iloc[-1] if len(frame) else frames[-2].iloc[-1]
        start_C = float(last["core_C"])
        mean_C = float(last["mean_C"])
        if fv is not None:
            field_state = fv.final_field
            uniform = False
        else:
            field_state = None  # only reached for single-step plans or a forced exact solver
            uniform = False
        t_offset = end_s
    history = pd.concat(frames, ignore_index=True)
    lo, hi = float(props.temperature_C[0]), float(props.temperature_C[-1])
    t_min = float(history[["core_C", "surface_C"]].min().min())
    t_max = float(history[["core_C", "surface_C"]].max().max())
    if t_max > 100.5:
        warnings.append(
            f"product temperatures reach {t_max:.0f} °C: above 100 °C the water in an unsealed product boils and the "
            "surface dries, which a conduction model does not carry; treat temperatures above 100 °C as indicative only"
        )
    if t_min < lo - 0.05 or t_max > hi + 0.05:
        warnings.append(
            f"product temperatures reach {t_min:.1f}…{t_max:.1f} °C, outside the property model's {lo:g}…{hi:g} °C: "
            "properties are extrapolated there"
        )
    result = PlanResult(
        plan=plan,
        history=history,
        steps=tuple(steps),
        properties=props,
        piece_mass_kg=piece_mass_kg,
        warnings=tuple(warnings),
    )
    if assess:
        from procplan.run.assess import assess_plan

        outcomes = assess_plan(result, library)
        result = PlanResult(
            plan=plan,
            history=history,
            steps=tuple(steps),
            properties=props,
            piece_mass_kg=piece_mass_kg,
            outcomes=outcomes,
            warnings=tuple(warnings) + tuple(outcomes.warnings),
        )
    return result
