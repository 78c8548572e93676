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
from procplan.model import LethalityCheck

#: Evaporating temperature below the medium and condensing temperature assumed when a step names no
#: machine (common practice for air coolers: 6–10 K approach; air-cooled condensers about 35 °C).
DEFAULT_EVAPORATOR_APPROACH_K = 8.0
DEFAULT_CONDENSING_C = 35.0
#: A step without a machine whose medium is at or above this temperature [°C] cools to the room, not to a refrigeration plant.
AMBIENT_MIN_C = 15.0


@dataclass(frozen=True)
class StepTarget:
    step: str
    point: str
    target: oc.TargetResult
    margin: oc.MarginCheck | None = None
    kind: str = "target"  # "stop" for a stop condition, "target" for a declared target


@dataclass(frozen=True)
class LethalityOutcome:
    name: str
    target: str
    source: str
    point: str
    reference_C: float
    z_C: float | None  # None for a tabulated preset
    total_F_min: float
    required_F_min: float | None
    reached: oc.LethalityTarget | None
    log_reduction: float | None
    time_s: np.ndarray = field(repr=False, default=None)
    f_cumulative_min: np.ndarray = field(repr=False, default=None)
    confirmed: bool = True  # False: the preset is indicative (confirm with your process authority)
    process_fraction: float | None = None  # tabulated presets: ∫ dt / t_req(T); passes at ≥ 1
    max_log_reduction: float | None = None  # the largest log reduction the preset's source supports
    log_reduction_capped: bool = False  # log_reduction exceeds max_log_reduction: shown as "> N"

    @property
    def passed(self) -> bool | None:
        if self.process_fraction is not None:
            return bool(self.process_fraction >= 1.0 - 1e-12)
        return None if self.required_F_min is None else bool(self.total_F_min >= self.required_F_min)


@dataclass(frozen=True)
class FreezingOutcome:
    initial_freezing_C: float
    from_history: oc.FreezingFromHistory
    plank_s: float | None
    pham: oc.PhamFreezingTime | None
    basis: str


@dataclass(frozen=True)
class StepEnergy:
    """Heat exchanged in one step for the whole batch (negative removed = heat added)."""

    step: str
    heat_removed_J_per_batch: float
    refrigeration: oc.RefrigerationEnergy | None
    basis: str
    peak_duty_kW: float = 0.0  # largest 1-minute mean duty of the step for the batch
    mean_duty_kW: float = 0.0


@dataclass(frozen=True)
class Outcomes:
    targets: tuple[StepTarget, ...]
    rule_check: oc.RuleCheck | None
    rule_applied_from_s: float | None
    lethality: LethalityOutcome | None
    quality: LethalityOutcome | None
    freezing: FreezingOutcome | None
    energy: oc.EnergySummary
    refrigeration: tuple[StepEnergy, ...]
    energy_balance: float = 0.0
    weight_loss_percent: tuple[
        tuple[str, float], ...
    ] = ()  # (step, % of the piece's mass) for unwrapped products
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


def assess_plan(result, library) -> Outcomes:
    """Compute every outcome of a PlanResult (see :class:`Outcomes`)."""
    plan = result.plan
    hist = result.history
    props = result.properties
    warnings: list[str] = []
    ch = plan.checks
    # --- targets and stop conditions, with the safety margin ---------------------------------
    targets: list[StepTarget] = []
    for sr, step in zip(result.steps, plan.steps, strict=True):
        seg = hist[hist["step_index"] == sr.index]
        if sr.index > 0:
            prev = hist[hist["step_index"] == sr.index - 1].iloc[-1:]
            seg = pd.concat([prev, seg])
        t = seg["time_s"].to_numpy()
        start_core = float(seg["core_C"].iloc[0])
        medium = float(np.mean(sr.surface.medium_C))
        wanted = []
        if step.stop_when_core_C is not None:
            wanted.append(("core", step.stop_when_core_C, "stop"))
        wanted.extend((tg.point, tg.temperature_C, "target") for tg in step.targets)
        for point, temp, kind in wanted:
            tr = oc.time_to_temperature(
                t,
                seg[f"{point}_C"].to_numpy(),
                temp,
                direction=_direction(start_core, medium),
                start_s=sr.start_s,
            )
            margin = None
            if tr.reached:
                predicted_min = (tr.time_s - sr.start_s) / 60.0
                cycle = step.duration_s / 60.0 if step.duration_given else predicted_min
                margin = oc.check_cycle(max(predicted_min, 1e-9), cycle, ch.margin_percent, ch.margin_min)
                if step.duration_given and margin.cycle_too_short:
                    warnings.append(f"{step.name}: {margin.message}")
            targets.append(StepTarget(step.name, point, tr, margin, kind))
    # --- cooling rule -------------------------------------------------------------------------
    rule_check = None
    rule_from = None
    if ch.cooling_rule:
        if library is None or ch.cooling_rule not in library.rules:
            raise InvalidInputError("checks.cooling_rule", ch.cooling_rule, "a rule of the loaded library")
        rule = library.rules[ch.cooling_rule]
        first_cool = next(
            (
                sr
                for sr in result.steps
                if np.mean(sr.surface.medium_C) < hist.loc[hist["step_index"] == sr.index, "core_C"].iloc[0]
            ),
            None,
        )
        rule_from = (
            first_cool.start_s if (first_cool is not None and rule.stages) else float(hist["time_s"].iloc[0])
        )
        seg = hist[hist["time_s"] >= rule_from]
        rule_check = oc.check_rule(
            rule, seg["time_s"].to_numpy() - rule_from, seg[f"{rule.point}_C"].to_numpy()
        )
    # --- lethality ----------------------------------------------------------------------------
    lethality = _lethality(ch.lethality, hist) if ch.lethality is not None else None
    quality = None
    if hist["surface_C"].max() > 60.0:
        quality = _lethality(LethalityCheck(preset="cook-value-c100", point="surface"), hist)
    # --- freezing -----------------------------------------------------------------------------
    freezing = None
    tf = props.initial_freezing_C
    if tf is not None and (
        hist["core_C"].min() < tf - 0.05
        or any(min(sr.surface.medium_C) < ch.frozen_storage_C for sr in result.steps)
    ):
        freezing = _freezing(result, tf, ch.frozen_storage_C)
    # --- energy -------------------------------------------------------------------------------
    t = hist["time_s"].to_numpy()
    t0 = plan.start_temperature_C
    t_end = float(hist["mean_C"].iloc[-1])
    dh = float(props.enthalpy(t_end) - props.enthalpy(t0))
    energy = oc.energy_summary(
        t,
        hist["heat_flow_W"].to_numpy(),
        piece_mass_kg=result.piece_mass_kg,
        pieces=ch.pieces_per_batch,
        enthalpy_change_J_kg=dh,
    )
    q_all = hist["heat_flow_W"].to_numpy()
    gross_J = float(np.sum(0.5 * (np.abs(q_all[1:]) + np.abs(q_all[:-1])) * np.diff(t)))
    net_J = float(oc.heat_transferred_J(t, q_all)[-1])
    balance = abs(net_J - result.piece_mass_kg * dh) / max(abs(result.piece_mass_kg * dh), gross_J, 1e-12)
    if balance > 0.01:
        warnings.append(
            f"energy: heat through the surface and enthalpy change differ by {balance:.1%} of the heat exchanged"
        )
    refrigeration = []
    for sr in result.steps:
        seg = hist[hist["step_index"] == sr.index]
        if sr.index > 0:
            seg = hist[(hist["time_s"] >= sr.start_s) & (hist["time_s"] <= sr.end_s)]
        q = seg["heat_flow_W"].to_numpy()
        ts = seg["time_s"].to_numpy()
        removed = -float(oc.heat_transferred_J(ts, q)[-1]) * ch.pieces_per_batch
        peak_kW = peak_duty_W(ts, q) * ch.pieces_per_batch / 1000.0
        mean_kW = abs(removed) / max(ts[-1] - ts[0], 1e-9) / 1000.0 if q.size > 1 else 0.0
        if removed <= 0:
            refrigeration.append(
                StepEnergy(
                    sr.name, removed, None, "heating step: heat added, no refrigeration", peak_kW, mean_kW
                )
            )
            continue
        eq = sr.surface.breakdown.machine
        medium = float(np.min(sr.surface.medium_C))
        if eq is not None and eq.evaporating_C is not None:
            evap, cond, basis = (
                eq.evaporating_C,
                eq.condensing_C,
                f"{eq.name}: evaporating {eq.evaporating_C:g} °C, condensing {eq.condensing_C:g} °C",
            )
        elif medium >= AMBIENT_MIN_C:
            refrigeration.append(
                StepEnergy(
                    sr.name,
                    removed,
                    None,
                    f"medium {medium:g} °C: heat goes to the room, no refrigeration",
                    peak_kW,
                    mean_kW,
                )
            )
            continue
        else:
            evap, cond = medium - DEFAULT_EVAPORATOR_APPROACH_K, DEFAULT_CONDENSING_C
            basis = f"no machine named: evaporating {evap:g} °C ({DEFAULT_EVAPORATOR_APPROACH_K:g} K below the medium), condensing {cond:g} °C (common practice)"
        if evap >= cond:
            refrigeration.append(
                StepEnergy(
                    sr.name,
                    removed,
                    None,
                    "medium above condensing temperature: no refrigeration duty",
                    peak_kW,
                    mean_kW,
                )
            )
            continue
        ref = oc.refrigeration_energy(
            removed, evap, cond, carnot_fraction=ch.cop_fraction, price_per_kWh=ch.energy_price_per_kWh
        )
        refrigeration.append(StepEnergy(sr.name, removed, ref, basis, peak_kW, mean_kW))
    # --- moisture loss of unwrapped products --------------------------------------------------
    weight_loss = []
    g = plan.product.geometry
    for sr in result.steps:
        ev = sr.surface.evaporation
        if ev is None:
            continue
        seg = hist[(hist["time_s"] >= sr.start_s) & (hist["time_s"] <= sr.end_s)]
        pct = ev.weight_loss_percent(
            seg["time_s"].to_numpy(), seg["surface_C"].to_numpy(), g.area_m2, result.piece_mass_kg
        )
        weight_loss.append((sr.name, pct))
    return Outcomes(
        weight_loss_percent=tuple(weight_loss),
        targets=tuple(targets),
        rule_check=rule_check,
        rule_applied_from_s=rule_from,
        lethality=lethality,
        quality=quality,
        freezing=freezing,
        energy=energy,
        refrigeration=tuple(refrigeration),
        energy_balance=balance,
        warnings=tuple(warnings),
    )


def _freezing(result, tf: float, storage_C: float) -> FreezingOutcome:
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
