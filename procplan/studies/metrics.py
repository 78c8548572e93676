"""Key figures of one run, shared by every study: time to target, plan time, rule, lethality, energy; the salt
of a brining run and the weight loss of a drying run.

A study runs the engine many times and compares runs by a few numbers. :func:`result_metrics` reads them
from a :class:`procplan.run.engine.PlanResult` (its assessed outcomes) into a flat dict with unit-suffixed keys,
so that tables of scenarios, sweeps and samples all share one set of columns (:data:`METRIC_COLUMNS`).
"""

from __future__ import annotations

import math
from typing import Any

from procplan.errors import InvalidInputError
from procplan.outcomes import plan_time_min
from procplan.run.drip import run_bracket

#: Columns of a metrics row, in table order, with what each means.
METRIC_COLUMNS: dict[str, str] = {
    "target_step": "step whose stop condition (or first target) is reported",
    "target_C": "the core temperature of that stop condition [°C]",
    "target_reached": "True when the core reached it within the step",
    "time_to_target_min": "time from the start of that step to the target [min] (NaN when not reached)",
    "plan_time_min": "predicted time with the site's margin [min]",
    "total_time_min": "duration of the whole run [min]",
    "end_core_C": "core temperature at the end of the run [°C]",
    "rule": "cooling/holding rule applied (empty when none)",
    "rule_passed": "rule verdict (None when no rule)",
    "rule_margin_min": "smallest stage or band margin of the rule [min] (NaN when none)",
    "lethality": "lethality requirement (empty when none)",
    "lethality_F_min": "accumulated F at the checked point [min at T_ref] (NaN when none)",
    "lethality_passed": "F ≥ required F (None when no requirement)",
    "energy_removed_kWh": "heat removed per batch over the cooling steps [kWh]",
    "energy_added_kWh": "heat added per batch over the heating steps [kWh]",
    "peak_duty_kW": "peak duty (largest 1-min mean) of the batch over the run [kW]",
    "electricity_kWh": "refrigeration electricity per batch [kWh] (0 when no refrigerated step)",
    "energy_cost": "electricity cost per batch (NaN without a price)",
    "pieces": "pieces per batch",
    "capacity_shortfall_kW": "largest peak load beyond a loaded machine's plant capacity [kW] (0 when every "
    "plant held its set point; NaN when no step ran as a loaded machine)",
    "plant_limit_min": "time the loaded machines' plants ran at their limit [min]",
    "solvers": "solver of each step",
    "warnings": "number of warnings of the run",
}


#: Columns added to a metrics row when the plan has a brining (or curing) step, from its last such step.
SALT_METRIC_COLUMNS: dict[str, str] = {
    "salt_core_percent": "solute content at the core at the end of the last brining step [%]",
    "salt_mean_percent": "mean solute content of the piece at the end of the last brining step [%]",
    "salt_time_min": "time from the start of that step to its solute stop, or else to its core target [min] "
    "(NaN when not reached; the step's duration without a stop or core target)",
}


def salt_metrics(result) -> dict[str, float]:
    """The solute figures of the last brining step (:data:`SALT_METRIC_COLUMNS`); empty without one."""
    ms = [
        s.mass for s in result.steps if getattr(s, "mass", None) is not None and s.mass.mode != "equalisation"
    ]
    if not ms:
        return {}
    sr = [s for s in result.steps if getattr(s, "mass", None) is not None and s.mass.mode != "equalisation"][
        -1
    ]
    m, b = sr.mass, result.plan.steps[sr.index].brine
    if m.stopped_on is not None:
        t = m.stopped_at_s
    elif b.stop_when_core_fraction is not None or b.stop_when_mean_fraction is not None:
        t = None  # the solute stop was not reached in the step
    elif m.target_core_fraction is not None:
        t = m.target_core_reached_s
    else:
        t = float(m.time_s[-1])
    return {
        "salt_core_percent": 100.0 * float(m.core_fraction[-1]),
        "salt_mean_percent": 100.0 * float(m.mean_fraction[-1]),
        "salt_time_min": math.nan if t is None else float(t) / 60.0,
    }


#: Columns added to a metrics row when the run dried an unwrapped product (a dry-air step, or surface
#: evaporation in an air machine with a humidity setting): the figures of the run's outcomes and of the last
#: step with a weight-loss stop, as the summary and the sheet show them.
DRYING_METRIC_COLUMNS: dict[str, str] = {
    "weight_loss_percent": "mass lost by evaporation over the run, share of the starting mass [%] "
    "(100 − yield; for unwrapped meat the lower bound of the cook loss)",
    "yield_percent": "mass at the end over the mass at the start [%] (evaporation only; for unwrapped meat the "
    "upper bound of the yield)",
    "cook_loss_upper_percent": "unwrapped meat: upper bound of the cook loss over the run [%], evaporation and all "
    "the juice the heated meat can no longer hold draining out (NaN without a drip model)",
    "yield_lower_percent": "unwrapped meat: 100 − the upper cook loss [%] (NaN without a drip model)",
    "weight_stop_min": "time from the start of the last step with a weight-loss stop to that stop [min] (NaN "
    "when not reached or without such a stop)",
}


def drying_metrics(result) -> dict[str, float]:
    """The weight-loss figures of a run (:data:`DRYING_METRIC_COLUMNS`); empty when nothing evaporated or dripped.
    The yield is the assessed outcome (:attr:`procplan.run.assess.Outcomes.yield_percent`, every step's loss
    compounded), the bracket of unwrapped meat :func:`procplan.run.drip.run_bracket`; the stop time is the last
    weight-stop step's (``DryingSummary.weight_stop_s``)."""
    oc = result.outcomes
    bracket = run_bracket(oc)
    if oc is None or (oc.yield_percent is None and bracket is None):
        return {}
    stops = [
        s.drying
        for s in result.steps
        if getattr(s, "drying", None) is not None and s.drying.stop_weight_loss_percent is not None
    ]
    stop_s = stops[-1].weight_stop_s if stops else None
    lo, hi, y_lo, y_hi = bracket or (
        100.0 - float(oc.yield_percent),
        math.nan,
        math.nan,
        float(oc.yield_percent),
    )
    return {
        "weight_loss_percent": lo,
        "yield_percent": y_hi,
        "cook_loss_upper_percent": hi,
        "yield_lower_percent": y_lo,
        "weight_stop_min": math.nan if stop_s is None else float(stop_s) / 60.0,
    }


def _nan(x: float | None) -> float:
    return math.nan if x is None else float(x)


def reported_target(result) -> Any:
    """The stop condition (or, without one, the first declared target) a study reports: the last one in
    the plan, since a plan's later steps usually finish the process. None when the plan has neither."""
    oc = result.outcomes
    if oc is None:
        raise InvalidInputError("result", "not assessed", "a PlanResult run with assess=True")
    stops = [t for t in oc.targets if t.kind == "stop"]
    if stops:
        return stops[-1]
    return oc.targets[0] if oc.targets else None


def stopped_elapsed_s(result, target) -> float | None:
    """Time from the start of the target's step to the target [s], or None when not reached.

    A stop condition whose step the engine stopped on counts as reached at the engine's stop time even
    when the last sample lies a root-finding tolerance short of the stop temperature.
    """
    tr = target.target
    if tr.reached:
        return tr.time_s - tr.start_s
    if target.kind == "stop":
        sr = next((s for s in result.steps if s.name == target.step), None)
        if sr is not None and sr.stopped and sr.stop_time_s is not None:
            return sr.stop_time_s - sr.start_s
    return None


def result_metrics(result) -> dict[str, Any]:
    """The key figures of a run as a flat dict (keys of :data:`METRIC_COLUMNS`).

    Parameters
    ----------
    result : a :class:`procplan.run.engine.PlanResult` with outcomes

    Returns
    -------
    dict, JSON-ready apart from NaN for absent numbers
    """
    oc = result.outcomes
    tg = reported_target(result)
    row: dict[str, Any] = {k: None for k in METRIC_COLUMNS}
    hist = result.history
    row["total_time_min"] = float(hist["time_s"].iloc[-1] - hist["time_s"].iloc[0]) / 60.0
    row["end_core_C"] = float(hist["core_C"].iloc[-1])
    if tg is not None:
        tr = tg.target
        row["target_step"] = tg.step
        row["target_C"] = tr.target_C
        row["target_reached"] = bool(tr.reached)
        elapsed = stopped_elapsed_s(result, tg)
        row["target_reached"] = elapsed is not None
        row["time_to_target_min"] = elapsed / 60.0 if elapsed is not None else math.nan
        if tg.margin is not None:
            row["plan_time_min"] = tg.margin.plan_min
        elif elapsed is not None:
            ch = result.plan.checks
            row["plan_time_min"] = plan_time_min(elapsed / 60.0, ch.margin_percent, ch.margin_min)
        else:
            row["plan_time_min"] = math.nan
    else:
        row["target_step"], row["target_C"], row["target_reached"] = "", math.nan, None
        row["time_to_target_min"] = row["plan_time_min"] = math.nan
    rc = oc.rule_check
    row["rule"] = rc.rule_name if rc is not None else ""
    row["rule_passed"] = None if rc is None else bool(rc.passed)
    row["rule_margin_min"] = _nan(rc.margin_min) if rc is not None else math.nan
    le = oc.lethality
    row["lethality"] = le.name if le is not None else ""
    row["lethality_F_min"] = le.total_F_min if le is not None else math.nan
    row["lethality_passed"] = None if le is None else le.passed
    removed = oc.energy.heat_removed_J_per_batch / 3.6e6
    added = oc.energy.heat_added_J_per_batch / 3.6e6
    row["energy_removed_kWh"] = removed
    row["energy_added_kWh"] = added
    row["peak_duty_kW"] = oc.energy.peak_duty_kW_per_batch
    refr = [s.refrigeration for s in oc.refrigeration if s.refrigeration is not None]
    row["electricity_kWh"] = sum(r.electricity_kWh for r in refr)
    row["energy_cost"] = oc.cost_per_batch if oc.cost_per_batch is not None else math.nan
    row["pieces"] = result.plan.pieces
    loaded = [s.machine_load for s in result.steps if getattr(s, "machine_load", None) is not None]
    row["capacity_shortfall_kW"] = (
        max(0.0 if m.held else max(m.peak_load_kW - m.capacity_kW, 0.0) for m in loaded)
        if loaded
        else math.nan
    )
    row["plant_limit_min"] = sum(m.time_at_limit_s for m in loaded) / 60.0
    row["solvers"] = ", ".join(s.solver for s in result.steps)
    row["warnings"] = len(result.warnings)
    row.update(salt_metrics(result))
    row.update(drying_metrics(result))
    return row


def _energy_score(row: dict[str, Any]) -> float:
    # Purchased energy per batch: refrigeration electricity plus the heat put into heating steps (a heating
    # step's fuel or electricity is at least the heat added).
    return float(row["electricity_kWh"]) + float(row["energy_added_kWh"])


def _time_score(row: dict[str, Any]) -> float:
    t = row["time_to_target_min"]
    return math.inf if t is None or not math.isfinite(t) else float(t)


def _margin_score(row: dict[str, Any]) -> float:
    m = row["rule_margin_min"]
    return math.inf if m is None or not math.isfinite(m) else -float(m)


#: Ranking criteria: name → (score function, lower is better; description). One registry for the API,
#: the CLI option and the app's drop-down.
CRITERIA: dict[str, tuple[Any, str]] = {
    "time": (_time_score, "shortest time to the reported target (not reached ranks last)"),
    "energy": (_energy_score, "least purchased energy per batch: refrigeration electricity + heat added"),
    "margin": (_margin_score, "largest smallest rule margin (no rule ranks last)"),
}
