"""Assess a run: targets, safety margin, cooling rule, lethality, freezing, energy and refrigeration.

This module only wires the engine's history to the pure outcome functions of :mod:`procplan.outcomes`;
every model lives there.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from procplan import outcomes as oc
from procplan.errors import InvalidInputError
from procplan.model import LethalityCheck, Plan
from procplan.properties.table import PropertyTable

#: Evaporating temperature below the medium and condensing temperature assumed when a step names no
#: machine (common practice for air coolers: 6–10 K approach; air-cooled condensers about 35 °C).
DEFAULT_EVAPORATOR_APPROACH_K = 8.0
DEFAULT_CONDENSING_C = 35.0
#: A step without a machine whose medium is at or above this temperature [°C] cools to the room, not to a refrigeration plant.
AMBIENT_MIN_C = 15.0


@dataclass(frozen=True)
class StepTarget:
    """Time to one stop condition or declared target of a step.

    Attributes
    ----------
    step : the step's name
    point : the point watched: "core", "surface" or "mean"
    target : when the point reached the temperature (times [s] from the start of the plan)
    margin : the safety-margin check of the cycle (None when the target is not reached)
    kind : "stop" for a stop condition, "target" for a declared target
    """

    step: str
    point: str
    target: oc.TargetResult
    margin: oc.MarginCheck | None = None
    kind: str = "target"


@dataclass(frozen=True)
class LethalityOutcome:
    """Lethality (F-value) accumulated at one point over the whole run.

    Attributes
    ----------
    name, target, source : the preset's name, the organism or quality it targets and its source
        ("custom", "user input" without a preset)
    point : the point integrated: "core", "surface" or "mean"
    reference_C : reference temperature [°C]
    z_C : z-value [K] (None for a tabulated preset)
    total_F_min : F accumulated over the run [min]
    required_F_min : the required F [min] (None when none is set)
    reached : when the required F was reached (None without a requirement)
    log_reduction : decimal reductions F/D [-] (None without a D-value)
    time_s, f_cumulative_min : the cumulative F [min] at every history time [s]
    confirmed : False when the preset is indicative (confirm with your process authority)
    process_fraction : tabulated presets: ∫ dt / t_req(T) [-]; the check passes at ≥ 1
    max_log_reduction : the largest log reduction the preset's source supports [-]
    log_reduction_capped : the log reduction exceeds ``max_log_reduction`` (shown as "> N")
    passed : whether the total reaches the required F, or the tabulated process is complete (None without a
        requirement)
    """

    name: str
    target: str
    source: str
    point: str
    reference_C: float
    z_C: float | None
    total_F_min: float
    required_F_min: float | None
    reached: oc.LethalityTarget | None
    log_reduction: float | None
    time_s: np.ndarray = field(repr=False, default=None)
    f_cumulative_min: np.ndarray = field(repr=False, default=None)
    confirmed: bool = True
    process_fraction: float | None = None
    max_log_reduction: float | None = None
    log_reduction_capped: bool = False

    @property
    def passed(self) -> bool | None:
        if self.process_fraction is not None:
            return bool(self.process_fraction >= 1.0 - 1e-12)
        return None if self.required_F_min is None else bool(self.total_F_min >= self.required_F_min)


@dataclass(frozen=True)
class FreezingOutcome:
    """Freezing times, from the history and from the Plank and Pham estimates.

    Attributes
    ----------
    initial_freezing_C : the product's initial freezing point [°C]
    from_history : onset, end of the latent plateau and time to the storage temperature from the core history
    plank_s : Plank's freezing time [s] (None when not applicable)
    pham : Pham's freezing time with its parts (None when not applicable)
    basis : the shape and dimension the estimates use, and their limits, in words
    """

    initial_freezing_C: float
    from_history: oc.FreezingFromHistory
    plank_s: float | None
    pham: oc.PhamFreezingTime | None
    basis: str


@dataclass(frozen=True)
class StepEnergy:
    """Heat exchanged in one step for the whole batch (negative removed = heat added).

    Attributes
    ----------
    step : the step's name
    heat_removed_J_per_batch : heat removed from the batch in the step [J] (negative: heat added)
    refrigeration : compressor energy and cost (None when no refrigeration plant takes the heat)
    basis : the evaporating and condensing temperatures used, or why there is no refrigeration, in words
    peak_duty_kW : largest 1-minute mean duty of the step for the batch [kW]
    mean_duty_kW : mean duty over the step for the batch [kW]
    """

    step: str
    heat_removed_J_per_batch: float
    refrigeration: oc.RefrigerationEnergy | None
    basis: str
    peak_duty_kW: float = 0.0
    mean_duty_kW: float = 0.0


@dataclass(frozen=True)
class Outcomes:
    """Everything assessed from a run.

    Attributes
    ----------
    targets : time to every stop condition and declared target, with its safety margin
    rule_check : the cooling rule's verdict stage by stage (None when the plan names no rule)
    rule_applied_from_s : the time the rule's clock starts [s] (None without a rule)
    lethality : the plan's lethality check (None when the plan has none)
    quality : the surface cook value, when the surface passes 60 °C (None otherwise)
    freezing : freezing times (None when the product does not freeze)
    energy : heat exchanged per piece and per batch over the run
    refrigeration : heat, duty and refrigeration energy of every step
    energy_balance : |surface heat − enthalpy change| as a fraction of the heat exchanged [-]
    weight_loss_percent : (step, moisture loss [% of the piece's mass]) for unwrapped products
    warnings : what the assessment found worth a warning
    """

    targets: tuple[StepTarget, ...]
    rule_check: oc.RuleCheck | None
    rule_applied_from_s: float | None
    lethality: LethalityOutcome | None
    quality: LethalityOutcome | None
    freezing: FreezingOutcome | None
    energy: oc.EnergySummary
    refrigeration: tuple[StepEnergy, ...]
    energy_balance: float = 0.0
    weight_loss_percent: tuple[tuple[str, float], ...] = ()
    warnings: tuple[str, ...] = ()


#: Window over which the peak duty is averaged [s]: the instantaneous flux at the moment a hot product meets
#: the medium is unbounded in the model and never reaches a refrigeration plant, which sees minute averages.
PEAK_WINDOW_S = 60.0


def peak_duty_W(time_s: np.ndarray, heat_flow_W: np.ndarray, window_s: float = PEAK_WINDOW_S) -> float:
    """Largest mean |heat flow| over any window of ``window_s`` (the whole history if shorter) [W].

    >>> peak_duty_W(np.array([0.0, 60.0, 120.0]), np.array([-100.0, -100.0, -40.0]))
    100.0
    """
    t = np.asarray(time_s, dtype=float)
    q = np.abs(np.asarray(heat_flow_W, dtype=float))
    if t.size < 2:
        return float(q.max()) if q.size else 0.0
    cum = np.concatenate([[0.0], np.cumsum(0.5 * (q[1:] + q[:-1]) * np.diff(t))])
    span = t[-1] - t[0]
    w = min(window_s, span)
    starts = t[t <= t[-1] - w]
    return float(np.max((np.interp(starts + w, t, cum) - np.interp(starts, t, cum)) / w))


def _direction(start_C: float, medium_C: float) -> str:
    return "down" if medium_C < start_C else "up"


def _table_reached(t: np.ndarray, cum: np.ndarray, req: float, fraction: float) -> oc.LethalityTarget:
    """When a tabulated process completes: linear in time inside the sample interval where it does."""
    total = float(cum[-1])
    if fraction < 1.0 - 1e-12:
        return oc.LethalityTarget(False, None, req, total, f"{fraction:.3g} of the required process")
    i = max(int(np.argmax(cum >= req * (1.0 - 1e-12))), 1)
    span = cum[i] - cum[i - 1]
    when = float(t[i - 1] + (t[i] - t[i - 1]) * (0.0 if span <= 0 else min(1.0, (req - cum[i - 1]) / span)))
    return oc.LethalityTarget(True, when, req, total, f"required process completed at {when / 60:.2f} min")


def _lethality(chk: LethalityCheck, hist) -> LethalityOutcome:
    """Lethality along the check's point; the check's own values override its preset's (z-value presets)."""
    point = chk.point
    t = hist["time_s"].to_numpy()
    temp = hist[f"{point}_C"].to_numpy()
    basis = oc.lethality_basis(chk.preset, chk.reference_C, chk.z_C, chk.required_F_min)
    preset, ref, z, req = basis.preset, basis.reference_C, basis.z_C, basis.required_F_min
    cum = basis.cumulative_F_min(t, temp)
    total = float(cum[-1])
    fraction = total / req if (basis.tabulated and req) else None
    if basis.tabulated:
        reached = _table_reached(t, cum, req, fraction)
        logred = fraction * preset.log_reductions if fraction is not None else None
    else:
        reached = oc.time_to_lethality(t, temp, ref, z, req) if req else None
        d = chk.d_value_min
        if d is None and preset is not None and preset.log_reductions and preset.required_F_min:
            d = preset.required_F_min / preset.log_reductions
        logred = float(oc.log_reduction(total, d)) if d else None
    cap = (preset.max_log_reduction if preset is not None else None) or oc.DEFAULT_MAX_LOG_REDUCTION
    return LethalityOutcome(
        name=preset.name if preset else "custom",
        target=preset.target if preset else "user-defined lethality",
        source=preset.source_text if preset else "user input",
        point=point,
        reference_C=ref,
        z_C=z,
        total_F_min=total,
        required_F_min=req,
        reached=reached,
        log_reduction=logred,
        time_s=t,
        f_cumulative_min=cum,
        confirmed=preset.confirmed if preset else True,
        process_fraction=fraction,
        max_log_reduction=cap,
        log_reduction_capped=bool(logred is not None and cap is not None and logred > cap),
    )


@dataclass(frozen=True)
class _Run:
    """What the outcomes are computed from: the parts of a run (see :class:`procplan.run.engine.PlanResult`)."""

    plan: Plan
    history: pd.DataFrame
    steps: tuple  # of procplan.run.engine.StepResult
    properties: PropertyTable
    piece_mass_kg: float


def _step_segment(hist: pd.DataFrame, index: int) -> pd.DataFrame:
    """A step's rows, with the previous step's last row in front (its starting state)."""
    seg = hist[hist["step_index"] == index]
    if index > 0:
        prev = hist[hist["step_index"] == index - 1].iloc[-1:]
        seg = pd.concat([prev, seg])
    return seg


def _targets(run: _Run, warnings: list[str]) -> tuple[StepTarget, ...]:
    """Time to every stop condition and declared target, with the safety margin of the cycle."""
    ch = run.plan.checks
    targets: list[StepTarget] = []
    for sr, step in zip(run.steps, run.plan.steps, strict=True):
        seg = _step_segment(run.history, sr.index)
        t = seg["time_s"].to_numpy()
        direction = _direction(float(seg["core_C"].iloc[0]), float(np.mean(sr.surface.medium_C)))
        wanted = []
        if step.stop_when_core_C is not None:
            wanted.append(("core", step.stop_when_core_C, "stop"))
        wanted.extend((tg.point, tg.temperature_C, "target") for tg in step.targets)
        for point, temp, kind in wanted:
            tr = oc.time_to_temperature(
                t, seg[f"{point}_C"].to_numpy(), temp, direction=direction, start_s=sr.start_s
            )
            margin = None
            if tr.reached:
                predicted_min = (tr.time_s - sr.start_s) / 60.0
                cycle = step.duration_s / 60.0 if step.duration_given else predicted_min
                margin = oc.check_cycle(max(predicted_min, 1e-9), cycle, ch.margin_percent, ch.margin_min)
                if step.duration_given and margin.cycle_too_short:
                    warnings.append(f"{step.name}: {margin.message}")
            targets.append(StepTarget(step.name, point, tr, margin, kind))
    return tuple(targets)


def _rule_check(run: _Run, library) -> tuple[oc.RuleCheck | None, float | None]:
    """The cooling rule, applied from the start of the first step that cools (or of the history)."""
    name = run.plan.checks.cooling_rule
    if not name:
        return None, None
    if library is None or name not in library.rules:
        raise InvalidInputError("checks.cooling_rule", name, "a rule of the loaded library")
    rule = library.rules[name]
    hist = run.history
    first_cool = next(
        (
            sr
            for sr in run.steps
            if np.mean(sr.surface.medium_C) < hist.loc[hist["step_index"] == sr.index, "core_C"].iloc[0]
        ),
        None,
    )
    rule_from = (
        first_cool.start_s if (first_cool is not None and rule.stages) else float(hist["time_s"].iloc[0])
    )
    seg = hist[hist["time_s"] >= rule_from]
    check = oc.check_rule(rule, seg["time_s"].to_numpy() - rule_from, seg[f"{rule.point}_C"].to_numpy())
    return check, rule_from


def _lethalities(run: _Run) -> tuple[LethalityOutcome | None, LethalityOutcome | None]:
    """The plan's lethality check, and the surface cook value when the surface passes 60 °C."""
    hist = run.history
    chk = run.plan.checks.lethality
    lethality = _lethality(chk, hist) if chk is not None else None
    quality = None
    if hist["surface_C"].max() > 60.0:
        quality = _lethality(LethalityCheck(preset="cook-value-c100", point="surface"), hist)
    return lethality, quality


def _freezing_times(run: _Run) -> FreezingOutcome | None:
    """Freezing outcomes when the core freezes or a medium is below the frozen-storage temperature."""
    tf = run.properties.initial_freezing_C
    storage = run.plan.checks.frozen_storage_C
    if tf is not None and (
        run.history["core_C"].min() < tf - 0.05 or any(min(sr.surface.medium_C) < storage for sr in run.steps)
    ):
        return _freezing(run, tf, storage)
    return None


def _energy(run: _Run, warnings: list[str]) -> tuple[oc.EnergySummary, float]:
    """Energy summary of the batch and the energy-balance error (surface heat against enthalpy change)."""
    hist, props, ch = run.history, run.properties, run.plan.checks
    t = hist["time_s"].to_numpy()
    dh = float(props.enthalpy(float(hist["mean_C"].iloc[-1])) - props.enthalpy(run.plan.start_temperature_C))
    q_all = hist["heat_flow_W"].to_numpy()
    energy = oc.energy_summary(
        t, q_all, piece_mass_kg=run.piece_mass_kg, pieces=ch.pieces_per_batch, enthalpy_change_J_kg=dh
    )
    gross_J = float(np.sum(0.5 * (np.abs(q_all[1:]) + np.abs(q_all[:-1])) * np.diff(t)))
    net_J = float(oc.heat_transferred_J(t, q_all)[-1])
    balance = abs(net_J - run.piece_mass_kg * dh) / max(abs(run.piece_mass_kg * dh), gross_J, 1e-12)
    if balance > 0.01:
        warnings.append(
            f"energy: heat through the surface and enthalpy change differ by {balance:.1%} of the heat exchanged"
        )
    return energy, balance


def _refrigeration_basis(sr) -> tuple[float, float, str] | str:
    """Evaporating and condensing temperatures [°C] with their basis, or why the step has no refrigeration."""
    eq = sr.surface.breakdown.machine
    medium = float(np.min(sr.surface.medium_C))
    if eq is not None and eq.evaporating_C is not None:
        evap, cond, basis = (
            eq.evaporating_C,
            eq.condensing_C,
            f"{eq.name}: evaporating {eq.evaporating_C:g} °C, condensing {eq.condensing_C:g} °C",
        )
    elif medium >= AMBIENT_MIN_C:
        return f"medium {medium:g} °C: heat goes to the room, no refrigeration"
    else:
        evap, cond = medium - DEFAULT_EVAPORATOR_APPROACH_K, DEFAULT_CONDENSING_C
        basis = f"no machine named: evaporating {evap:g} °C ({DEFAULT_EVAPORATOR_APPROACH_K:g} K below the medium), condensing {cond:g} °C (common practice)"
    if evap >= cond:
        return "medium above condensing temperature: no refrigeration duty"
    return evap, cond, basis


def _step_energy(run: _Run, sr) -> StepEnergy:
    """Heat removed in one step for the batch, its duty and the refrigeration it takes."""
    hist, ch = run.history, run.plan.checks
    seg = hist[hist["step_index"] == sr.index]
    if sr.index > 0:
        seg = hist[(hist["time_s"] >= sr.start_s) & (hist["time_s"] <= sr.end_s)]
    q = seg["heat_flow_W"].to_numpy()
    ts = seg["time_s"].to_numpy()
    removed = -float(oc.heat_transferred_J(ts, q)[-1]) * ch.pieces_per_batch
    peak_kW = peak_duty_W(ts, q) * ch.pieces_per_batch / 1000.0
    mean_kW = abs(removed) / max(ts[-1] - ts[0], 1e-9) / 1000.0 if q.size > 1 else 0.0
    if removed <= 0:
        return StepEnergy(
            sr.name, removed, None, "heating step: heat added, no refrigeration", peak_kW, mean_kW
        )
    basis = _refrigeration_basis(sr)
    if isinstance(basis, str):
        return StepEnergy(sr.name, removed, None, basis, peak_kW, mean_kW)
    evap, cond, why = basis
    ref = oc.refrigeration_energy(
        removed, evap, cond, carnot_fraction=ch.cop_fraction, price_per_kWh=ch.energy_price_per_kWh
    )
    return StepEnergy(sr.name, removed, ref, why, peak_kW, mean_kW)


def _weight_loss(run: _Run) -> tuple[tuple[str, float], ...]:
    """Moisture loss of unwrapped products per step [% of the piece's mass]."""
    hist = run.history
    area = run.plan.product.geometry.area_m2
    out = []
    for sr in run.steps:
        ev = sr.surface.evaporation
        if ev is None:
            continue
        seg = hist[(hist["time_s"] >= sr.start_s) & (hist["time_s"] <= sr.end_s)]
        pct = ev.weight_loss_percent(
            seg["time_s"].to_numpy(), seg["surface_C"].to_numpy(), area, run.piece_mass_kg
        )
        out.append((sr.name, pct))
    return tuple(out)


def assess_plan(
    plan: Plan,
    history: pd.DataFrame,
    steps: tuple,
    properties: PropertyTable,
    piece_mass_kg: float,
    library,
) -> Outcomes:
    """Compute every outcome of a run (see :class:`Outcomes`).

    Parameters
    ----------
    plan : the plan that ran
    history : the run's history (``time_s``, ``core_C``, ``surface_C``, ``mean_C``, ``heat_flow_W``,
        ``step_index``)
    steps : the per-step results (:class:`procplan.run.engine.StepResult`)
    properties : the product's property table
    piece_mass_kg : mass of one piece [kg]
    library : resolves the cooling rule
    """
    run = _Run(plan, history, tuple(steps), properties, piece_mass_kg)
    warnings: list[str] = []
    targets = _targets(run, warnings)
    rule_check, rule_from = _rule_check(run, library)
    lethality, quality = _lethalities(run)
    freezing = _freezing_times(run)
    energy, balance = _energy(run, warnings)
    return Outcomes(
        weight_loss_percent=_weight_loss(run),
        targets=targets,
        rule_check=rule_check,
        rule_applied_from_s=rule_from,
        lethality=lethality,
        quality=quality,
        freezing=freezing,
        energy=energy,
        refrigeration=tuple(_step_energy(run, sr) for sr in run.steps),
        energy_balance=balance,
        warnings=tuple(warnings),
    )


def _freezing(result: _Run, tf: float, storage_C: float) -> FreezingOutcome:
    hist = result.history
    props = result.properties
    fh = oc.freezing_from_history(hist["time_s"].to_numpy(), hist["core_C"].to_numpy(), tf, storage_C)
    sr = next((s for s in result.steps if min(s.surface.medium_C) < tf), result.steps[0])
    g = result.plan.product.geometry
    axis = min(g.axes, key=lambda a: a.length_m)
    shape = axis.kind
    length = 2 * axis.length_m if not (g.shape == "slab" and g.faces == 1) else 2 * g.thickness_m
    if g.shape in ("finite-cylinder", "brick"):
        basis = f"Plank and Pham for the {shape} of the shortest dimension ({length * 1000:.0f} mm): the finite shape freezes faster, so these are upper estimates"
    else:
        basis = f"Plank and Pham for the {shape}, characteristic dimension {length * 1000:.0f} mm"
    seg = hist[hist["step_index"] == sr.index]
    t_init = float(seg["mean_C"].iloc[0]) if sr.index else result.plan.start_temperature_C
    medium = float(np.mean(sr.surface.medium_C))
    h = float(np.mean(sr.surface.h_W_m2K))
    end_C = storage_C
    rho = props.mass_density_kg_m3
    cp_f = float(props.apparent_cp(-39.0))
    cp_u = float(props.apparent_cp(tf + 1.0))
    latent = float(props.enthalpy(tf) - props.enthalpy(end_C)) - cp_f * (tf - end_C)
    k_f = float(props.conductivity(0.5 * (end_C + medium)))
    plank = pham = None
    if medium < end_C and latent > 0:
        try:
            plank = oc.freezing_time_plank(shape, length, rho, latent, tf, medium, h, k_f)
            pham = oc.freezing_time_pham(
                shape, length, rho, cp_u, cp_f, latent, max(t_init, tf + 0.1), end_C, medium, h, k_f
            )
        except InvalidInputError as exc:
            basis += f"; estimates not available: {exc}"
    return FreezingOutcome(tf, fh, plank, pham, basis)
