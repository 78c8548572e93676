"""Assess a run: targets, safety margin, cooling rule, lethality, freezing, energy and refrigeration.

This module only wires the engine's history to the pure outcome functions of :mod:`procplan.outcomes`;
every model lives there.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from procplan import outcomes as oc
from procplan.errors import InvalidInputError
from procplan.model import LethalityCheck, Plan, Target, depth_column
from procplan.outcomes.energy import heat_by_direction_J, peak_duty_W
from procplan.properties.table import PropertyTable
from procplan.run.assess_phase import (
    FreezingOutcome,
    MeanKineticOutcome,
    ThawingOutcome,
    freezing_outcome,
    mean_kinetic_outcome,
    thawing_outcome,
)
from procplan.run.dry_oven import yield_percent
from procplan.run.dry_stop import boiled_latent_J

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
    point : the point watched: "core", "surface", "mean" or "depth"
    target : when the point reached the temperature (times [s] from the start of the plan)
    margin : the safety-margin check of the cycle (None when the target is not reached)
    kind : "stop" for a stop condition, "target" for a declared target
    depth_mm : for point "depth", the depth below the surface [mm] (None otherwise)
    label : the point in words ("core", "10 mm below the surface")
    """

    step: str
    point: str
    target: oc.TargetResult
    margin: oc.MarginCheck | None = None
    kind: str = "target"
    depth_mm: float | None = None
    label: str = ""

    @property
    def column(self) -> str:
        """The history column of the point."""
        return f"{self.point}_C" if self.depth_mm is None else depth_column(self.depth_mm / 1000.0)


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
class StepEnergy:
    """Heat exchanged in one step for the whole batch, gross in each direction (never netted).

    Attributes
    ----------
    step : the step's name
    heat_removed_J_per_batch : gross heat removed from the batch in the step [J], ≥ 0
    refrigeration : compressor energy and cost of the heat removed (None when no refrigeration plant takes it)
    basis : the evaporating and condensing temperatures used, or why there is no refrigeration, in words
    peak_duty_kW : peak duty (largest 1-min mean) of the step for the batch [kW]
    mean_duty_kW : mean duty over the step for the batch [kW]
    heat_added_J_per_batch : gross heat added to the batch in the step [J], ≥ 0
    """

    step: str
    heat_removed_J_per_batch: float
    refrigeration: oc.RefrigerationEnergy | None
    basis: str
    peak_duty_kW: float = 0.0
    mean_duty_kW: float = 0.0
    heat_added_J_per_batch: float = 0.0


@dataclass(frozen=True)
class EnergyPrice:
    """The electricity price the cost uses: from the plan's checks, else the site tariff.

    Attributes
    ----------
    price_per_kWh : price [currency/kWh]
    currency : the site's currency code ("" when unknown)
    source : "plan" or "site tariff"
    """

    price_per_kWh: float
    currency: str
    source: str


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
    weight_loss_percent : (step, water evaporated [% of the piece's mass at the step's start]) for unwrapped
        products
    yield_percent : mass at the end over the mass at the start [%], from the evaporation of every step (the
        upper bound of the yield of unwrapped meat: its juice kept in the piece)
    drainable_juice_percent : (step, juice the heated proteins expelled and that did not evaporate [% of the
        piece's mass at the step's start]) for unwrapped meat (run.drip)
    cook_loss_upper_percent : the upper bound of the cook loss over the run [% of the starting mass]: evaporation
        and all the drainable juice drained (None without a drip model); its lower bound is 100 − yield_percent
    yield_lower_percent : 100 − cook_loss_upper_percent [%] (None without a drip model)
    warnings : what the assessment found worth a warning
    price : the electricity price of the cost (None: no price in the plan or the site, no cost)
    cost_per_batch : electricity cost of the batch over all steps, in the price's currency (None without a price)
    mean_kinetic : the mean kinetic temperature the checks ask for (None when not asked)
    thawing : thawing time from the history beside a published estimate (None when the product does not thaw)
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
    #: mass at the end over the mass at the start [%], from the evaporation losses (None without any)
    yield_percent: float | None = None
    drainable_juice_percent: tuple[tuple[str, float], ...] = ()
    cook_loss_upper_percent: float | None = None
    yield_lower_percent: float | None = None
    warnings: tuple[str, ...] = ()
    price: EnergyPrice | None = None
    cost_per_batch: float | None = None
    mean_kinetic: MeanKineticOutcome | None = None
    thawing: ThawingOutcome | None = None


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
            wanted.append((Target(step.stop_when_core_C), "stop"))
        wanted.extend((tg, "target") for tg in step.targets)
        for tg, kind in wanted:
            tr = oc.time_to_temperature(
                t, seg[tg.column].to_numpy(), tg.temperature_C, direction=direction, start_s=sr.start_s
            )
            margin = None
            if tr.reached:
                predicted_min = (tr.time_s - sr.start_s) / 60.0
                # the step's cycle: its given duration, else how long it ran (to its stop condition), so a
                # target reached before the stop is measured against the step's real length, not itself
                cycle = (
                    step.duration_s / 60.0
                    if step.duration_given
                    else max(sr.duration_s / 60.0, predicted_min)
                )
                margin = oc.check_cycle(max(predicted_min, 1e-9), cycle, ch.margin_percent, ch.margin_min)
                if step.duration_given and margin.cycle_too_short:
                    warnings.append(f"{step.name}: {margin.message}")
            depth_mm = None if tg.depth_m is None else round(tg.depth_m * 1000.0, 6)
            targets.append(StepTarget(step.name, tg.point, tr, margin, kind, depth_mm, tg.label))
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
    used = (run.plan.checks.budget_used_above_h, run.plan.checks.budget_used_below_h)
    t_rule, temp_rule = seg["time_s"].to_numpy() - rule_from, seg[f"{rule.point}_C"].to_numpy()
    check = oc.check_rule(rule, t_rule, temp_rule, budget_used_h=used)
    return check, rule_from


def _lethalities(run: _Run) -> tuple[LethalityOutcome | None, LethalityOutcome | None]:
    """The plan's lethality check, and the surface cook value when the surface passes 60 °C."""
    hist = run.history
    chk = run.plan.checks.lethality
    lethality = _lethality(chk, hist) if chk is not None else None
    quality = None
    if hist["surface_C"].max() > 60.0 and run.properties.temperature_C[-1] <= 150.0:  # a food, not glass
        quality = _lethality(LethalityCheck(preset="cook-value-c100", point="surface"), hist)
    return lethality, quality


def _freezing_times(run: _Run) -> FreezingOutcome | None:
    """Freezing outcomes when the core freezes or a medium is below the frozen-storage temperature."""
    tf = run.properties.initial_freezing_C
    storage = run.plan.checks.frozen_storage_C
    thaws = tf is not None and run.plan.start_temperature_C < tf - 0.05  # a frozen start warmed above T_f
    thaws = thaws and any(float(np.mean(sr.surface.medium_C)) > tf for sr in run.steps)
    if tf is not None and (
        (run.history["core_C"].min() < tf - 0.05 and not thaws)
        or any(min(sr.surface.medium_C) < storage for sr in run.steps)
    ):
        return freezing_outcome(run, tf, storage)
    return None


def _energy(run: _Run, warnings: list[str]) -> tuple[oc.EnergySummary, float]:
    """Energy summary of the batch and the energy-balance error (surface heat against enthalpy change)."""
    hist, props, ch = run.history, run.properties, run.plan.checks
    t = hist["time_s"].to_numpy()
    dh = float(props.enthalpy(float(hist["mean_C"].iloc[-1])) - props.enthalpy(run.plan.start_temperature_C))
    dh += boiled_latent_J(run.steps) / run.piece_mass_kg  # the boiled-off water took its latent heat along
    energy = oc.energy_summary(
        t,
        hist["heat_flow_W"].to_numpy(),
        piece_mass_kg=run.piece_mass_kg,
        pieces=ch.pieces_per_batch,
        enthalpy_change_J_kg=dh,
    )
    balance = abs(energy.balance_error)
    if balance > 0.01:
        warnings.append(
            f"energy: heat through the surface and enthalpy change differ by {balance:.1%} of the heat exchanged"
        )
    return energy, balance


@functools.lru_cache(maxsize=8)
def _site_file(path: str, mtime_ns: int):
    from procplan.files.site import load_site

    return load_site(path)


def _price(run: _Run, site, library, warnings: list[str]) -> EnergyPrice | None:
    """The plan's electricity price, else the site tariff (the site given, else the library folder's)."""
    if site is None and library is not None and getattr(library, "root", None) is not None:
        path = Path(library.root) / "site.toml"
        if path.is_file():
            try:
                site = _site_file(str(path), path.stat().st_mtime_ns)
            except InvalidInputError as exc:
                warnings.append(f"site settings {path.name}: {exc}; no site tariff used for the cost")
    currency = (getattr(site, "currency", "") or "") if site is not None else ""
    if run.plan.checks.energy_price_per_kWh is not None:
        return EnergyPrice(run.plan.checks.energy_price_per_kWh, currency, "plan")
    if site is not None and site.energy_price_per_kWh is not None:
        return EnergyPrice(site.energy_price_per_kWh, currency, "site tariff")
    return None


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


def _step_energy(run: _Run, sr, price: EnergyPrice | None) -> StepEnergy:
    """Heat removed and heat added in one step for the batch, its duty and the refrigeration it takes."""
    hist, ch = run.history, run.plan.checks
    seg = hist[(hist["time_s"] >= sr.start_s) & (hist["time_s"] <= sr.end_s)]
    if sr.index == 0:
        seg = hist[hist["step_index"] == 0]
    q = seg["heat_flow_W"].to_numpy()
    ts = seg["time_s"].to_numpy()
    n = ch.pieces_per_batch
    removed, added = (x * n for x in heat_by_direction_J(ts, q))
    peak_kW = peak_duty_W(ts, q)[0] * n / 1000.0
    mean_kW = (removed + added) / max(ts[-1] - ts[0], 1e-9) / 1000.0 if q.size > 1 else 0.0
    parts = (peak_kW, mean_kW, added)
    if removed <= added:
        return StepEnergy(sr.name, removed, None, "heating step: heat added, no refrigeration", *parts)
    basis = _refrigeration_basis(sr)
    if isinstance(basis, str):
        return StepEnergy(sr.name, removed, None, basis, *parts)
    evap, cond, why = basis
    ref = oc.refrigeration_energy(
        removed,
        evap,
        cond,
        carnot_fraction=ch.cop_fraction,
        price_per_kWh=price.price_per_kWh if price is not None else None,
    )
    return StepEnergy(sr.name, removed, ref, why, *parts)


def _weight_loss(run: _Run) -> tuple[tuple[str, float], ...]:
    """Moisture loss of unwrapped products per step [% of the piece's mass]."""
    hist = run.history
    area = run.plan.product.geometry.area_m2
    out = []
    for sr in run.steps:
        if sr.drying is not None:  # hot dry air: the coupled moisture solution's loss
            out.append((sr.name, sr.drying.weight_loss_percent))
            continue
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
    site=None,
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
    library : resolves the cooling rule; its folder's ``site.toml`` gives the tariff when ``site`` is None
    site : site settings (:class:`procplan.files.site.SiteSettings`) whose tariff prices the energy when the
        plan gives no price
    """
    run = _Run(plan, history, tuple(steps), properties, piece_mass_kg)
    warnings: list[str] = []
    targets = _targets(run, warnings)
    rule_check, rule_from = _rule_check(run, library)
    lethality, quality = _lethalities(run)
    warnings += dry_air_lethality_warnings(run.steps, lethality)
    freezing = _freezing_times(run)
    energy, balance = _energy(run, warnings)
    warnings += surface_freezing_warnings(
        history, run.steps, properties.initial_freezing_C, plan.checks.frozen_storage_C
    )
    price = _price(run, site, library, warnings)
    refrigeration = tuple(_step_energy(run, sr, price) for sr in run.steps)
    losses = _weight_loss(run)
    drips = tuple((sr.name, sr.drip.drainable_juice_percent) for sr in run.steps if getattr(sr, "drip", None))
    # the upper bound, one loss per step as a share of the mass the step started with: evaporation and juice
    per_step = {name: 0.0 for name, _ in losses + drips}
    for name, pct in losses + drips:
        per_step[name] += pct
    yield_lower = yield_percent(list(per_step.items())) if drips else None
    costs = [se.refrigeration.cost for se in refrigeration if se.refrigeration is not None]
    return Outcomes(
        weight_loss_percent=losses,
        yield_percent=yield_percent(losses),
        drainable_juice_percent=drips,
        cook_loss_upper_percent=None if yield_lower is None else 100.0 - yield_lower,
        yield_lower_percent=yield_lower,
        targets=targets,
        rule_check=rule_check,
        rule_applied_from_s=rule_from,
        lethality=lethality,
        quality=quality,
        freezing=freezing,
        energy=energy,
        refrigeration=refrigeration,
        energy_balance=balance,
        warnings=tuple(warnings),
        price=price,
        cost_per_batch=None if price is None else float(sum(c for c in costs if c is not None)),
        mean_kinetic=mean_kinetic_outcome(plan, history),
        thawing=thawing_outcome(plan, history, tuple(steps), properties),
    )


DRY_AIR_LETHALITY = (
    "{step}: lethality credited in hot dry air. The preset's times and z-values come from moist heating; a "
    "drying surface raises the heat resistance of vegetative pathogens such as Salmonella, and humid cooking "
    "conditions are part of the published time–temperature guidance for meat, so the lethality of this step "
    "may be overstated (the unsafe side). Keep the air humid during the lethality step, or confirm the "
    "process with your process authority."
)


def dry_air_lethality_warnings(steps, lethality) -> list[str]:
    """A warning for each step in hot dry air (the drying model ran) that adds to a lethality requirement."""
    if lethality is None or lethality.time_s is None or lethality.f_cumulative_min is None:
        return []
    t = np.asarray(lethality.time_s, dtype=float)
    f = np.asarray(lethality.f_cumulative_min, dtype=float)
    out = []
    for sr in steps:
        if getattr(sr.surface, "drying_air", None) is None:
            continue
        gained = np.interp(sr.end_s, t, f) - np.interp(sr.start_s, t, f)
        need = lethality.required_F_min
        if gained > (0.01 * need if need else 0.0):  # the step counts toward the requirement
            out.append(DRY_AIR_LETHALITY.format(step=sr.name))
    return out


def surface_freezing_warnings(
    history: pd.DataFrame, steps, initial_freezing_C: float | None, frozen_storage_C: float
) -> list[str]:
    """A warning for every chill step whose surface falls below the product's initial freezing point.

    A step whose medium is at or below the frozen-storage temperature is a freezing step and is not warned.
    """
    if initial_freezing_C is None:
        return []
    out = []
    for sr in steps:
        medium = float(np.min(sr.surface.medium_C))
        seg = history[history["step_index"] == sr.index]
        if not len(seg) or medium <= frozen_storage_C or medium >= float(seg["core_C"].iloc[0]):
            continue
        low = float(seg["surface_C"].min())
        if low < initial_freezing_C - 0.05:
            out.append(
                f"{sr.name}: the surface falls to {low:.1f} °C, below the product's initial freezing point "
                f"{initial_freezing_C:.1f} °C: the surface freezes in this chill step"
            )
    return out
