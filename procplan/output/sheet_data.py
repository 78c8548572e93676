"""What the batch-plan sheet prints, computed from a PlanResult: checkpoints, rule deadlines, reference lines.

No layout here (see :mod:`procplan.output.sheet`); every number is read from the result's history and outcomes.

Checkpoint action limits
------------------------
The plan allows the real process to run up to the safety margin slower than predicted: plan time =
predicted × (1 + m/100) + fixed. A reading at elapsed step time *e* is therefore compared with the
temperature the prediction had at *e′ = (e − fixed)/(1 + m/100)*: a product that is further from its
target than that is slower than the margin allows. The tolerance is never smaller than the probe's
accuracy (site setting). At a rule's stage deadline the limit is the rule's own temperature, and missing
it means hold and refer, not extend.
"""

from __future__ import annotations

import hashlib
import math
from dataclasses import dataclass, replace

import numpy as np

from procplan.outcomes.rules import Band, Stage

#: Instruction printed with the checkpoint table.
ACTION_IF_MISSED = (
    "extend the step and re-probe; if the rule stage limit is missed, hold and refer to the QA manager"
)
ACTION_EXTEND = "extend the step, re-probe"
ACTION_HOLD = "HOLD, refer to QA manager"
ACTION_CHECK = "check the settings, re-probe; refer to QA manager"
#: Two checkpoints at the same point closer than this [min] are merged (the rule's one is kept).
MERGE_WITHIN_MIN = 3.0
#: Most checkpoints printed.
MAX_CHECKPOINTS = 10


@dataclass(frozen=True)
class Checkpoint:
    """One probe reading to take.

    time_min : elapsed time from the start of the plan [min]
    step : step name
    point : "core", "surface", "mean" or a depth in words ("10 mm below the surface")
    expected_C : the predicted temperature at that time [°C]
    low_C, high_C : action limits [°C] (None: open); a reading outside [low, high] calls for the action
    basis : why this checkpoint and limit
    action : what to do if missed
    rule : True when the limit is a rule's stage or band limit
    limit_label : the action limit as printed, when it is a rule's published figure ("≤ 70 °F"); "" to
        print ``low_C``/``high_C`` in the display unit
    medium_C : the predicted medium (air, water) temperature [°C] when the step's plant cannot hold its set
        point (a loaded machine), so that the reading of the machine's own display can be checked too
    """

    time_min: float
    step: str
    point: str
    expected_C: float
    low_C: float | None
    high_C: float | None
    basis: str
    action: str
    rule: bool = False
    limit_label: str = ""
    #: the predicted medium temperature at that time [°C], given when the step's plant runs at its limit
    medium_C: float | None = None


@dataclass(frozen=True)
class StageDeadline:
    """A rule stage's limit on the plan's clock: reach ``to_C`` by ``deadline_s`` (from the plan's start).
    ``stage`` is the rule's stage, for its published figures."""

    index: int
    to_C: float
    deadline_s: float
    kind: str
    stage: Stage | None = None


def plan_hash(plan) -> str:
    """SHA-256 (hex) of the plan's TOML text from :func:`procplan.files.plan.plan_to_toml`."""
    from procplan.files.plan import plan_to_toml

    return hashlib.sha256(plan_to_toml(plan).encode("utf-8")).hexdigest()


def document_number(prefix: str, plan_sha256: str) -> str:
    """Document number of a batch plan: the site's prefix and the first 8 hex digits of the plan hash.

    >>> document_number("HGF-BP", "3fa2c91b00ff")
    'HGF-BP-3FA2C91B'
    """
    return f"{prefix}-{plan_sha256[:8].upper()}"


def _interp(result, point: str, t_s: float) -> float:
    """The history of a point ("core") or of a column ("depth_10mm_C") at ``t_s``."""
    h = result.history
    col = point if point.endswith("_C") else f"{point}_C"
    return float(np.interp(t_s, h["time_s"].to_numpy(), h[col].to_numpy()))


def stage_deadlines(result) -> tuple[StageDeadline, ...]:
    """The cooling rule's stage limits on the plan's clock (stages that started)."""
    oc = result.outcomes
    if oc is None or oc.rule_check is None or oc.rule_applied_from_s is None:
        return ()
    rc = oc.rule_check
    first = next((s.start_s for s in rc.stages if s.start_s is not None), None)
    out = []
    for st in rc.stages:
        if st.start_s is None:
            continue
        clock0 = first if st.stage.clock == "rule" else st.start_s
        deadline = oc.rule_applied_from_s + clock0 + st.allowed_min * 60.0
        kind = "cooling" if st.stage.from_C is None or st.stage.from_C > st.stage.to_C else "heating"
        out.append(StageDeadline(st.index, st.stage.to_C, deadline, kind, st.stage))
    return tuple(out)


def _margin_limit(result, point: str, step_start_s: float, t_s: float, mode: str, tolerance_K: float):
    """Expected temperature and action limits at ``t_s``; ``mode`` "down" (cooling to a target: an upper
    limit), "up" (heating: a lower limit) or "band" (no target: both, symmetric)."""
    ch = result.plan.checks
    elapsed = t_s - step_start_s
    slow = max(0.0, (elapsed - 60.0 * ch.margin_min) / (1.0 + ch.margin_percent / 100.0))
    expected = _interp(result, point, t_s)
    lim = _interp(result, point, step_start_s + slow)
    if mode == "down":
        return expected, None, max(lim, expected + tolerance_K)
    if mode == "up":
        return expected, min(lim, expected - tolerance_K), None
    dev = max(abs(lim - expected), tolerance_K)
    return expected, expected - dev, expected + dev


def margin_note(result, tolerance_K: float, tolerance_text: str | None = None) -> str:
    """How the checkpoints' action limits follow from the plan's margin (printed under the table)."""
    ch = result.plan.checks
    tol = tolerance_text or f"{tolerance_K:g} K"
    e = f"(step time − {ch.margin_min:g} min)" if ch.margin_min else "the step time"
    return (
        f"Action limits: the predicted temperature at {e} / (1 + {ch.margin_percent:g} %), i.e. as late as the "
        f"plan's margin allows, and at least {tol} (probe tolerance) from the expected value; at a rule "
        "stage or band, the rule's own limit."
    )


def _celsius(t_C: float) -> str:
    return f"{t_C:g} °C"


def _minutes(t_min: float) -> str:
    return f"{t_min:.1f} min"


def checkpoints(result, tolerance_K: float = 1.0, site=None) -> tuple[Checkpoint, ...]:
    """The probe readings the sheet asks for, sorted by time (at most ``MAX_CHECKPOINTS``).

    Per step: half-way to and at the predicted time of its stop condition or first target (at the step's
    end when it has none); at each cooling-rule stage deadline (or at the end of the plan when the deadline
    falls later); at each step's end for band (storage) rules; when the lethality requirement is reached.
    ``site`` (SiteSettings, optional) sets the units of the texts.
    """
    fmt_T = site.format_temperature if site is not None else _celsius
    fmt_t = site.format_time_hm if site is not None else _minutes
    oc = result.outcomes
    t_end = float(result.history["time_s"].iloc[-1])
    cps = _step_checkpoints(result, oc, t_end, tolerance_K, fmt_T)
    unit = site.temperature_unit if site is not None else "C"
    cps += _rule_checkpoints(result, oc, t_end, unit, fmt_t)
    cps += _lethality_checkpoints(result, oc, t_end, tolerance_K)
    return tuple(_with_medium(result, c) for c in _merge(cps))


def _with_medium(result, c: Checkpoint) -> Checkpoint:
    """The checkpoint with the predicted medium temperature when its step's plant ran at its limit."""
    sr = result.steps[_step_index_at(result, c.time_min * 60.0)]
    ml = getattr(sr, "machine_load", None)
    if ml is None or ml.held or "medium_C" not in result.history:
        return c
    h = result.history
    medium = float(np.interp(c.time_min * 60.0, h["time_s"].to_numpy(), h["medium_C"].to_numpy()))
    return replace(c, medium_C=medium)


def _step_checkpoints(result, oc, t_end: float, tolerance_K: float, fmt_T) -> list[Checkpoint]:
    """Half-way to and at each step's binding target (or the step's end when it has none)."""
    cps: list[Checkpoint] = []
    for sr in result.steps:
        tgs = [t for t in (oc.targets if oc is not None else ()) if t.step == sr.name and t.target.reached]
        if tgs:
            tg = max(tgs, key=lambda x: x.target.time_s)  # the binding one: reached last
            t_hit = tg.target.time_s
            pred_min = (t_hit - sr.start_s) / 60.0
            times = []
            half = 5.0 * round(pred_min / 2.0 / 5.0)
            if half >= 5.0 and pred_min - half >= MERGE_WITHIN_MIN:
                times.append(
                    (
                        sr.start_s / 60.0 + half,
                        f"half-way to {tg.label or tg.point} {fmt_T(tg.target.target_C)}",
                    )
                )
            times.append(
                (
                    math.ceil(t_hit / 60.0 - 1e-9),
                    f"predicted time of {tg.label or tg.point} {fmt_T(tg.target.target_C)}",
                )
            )
            point, col, mode, action = tg.label or tg.point, tg.column, tg.target.direction, ACTION_EXTEND
        else:
            times = [(math.floor(sr.end_s / 60.0 + 1e-9), "end of step (no target): compare with the plan")]
            point, col, mode, action = "core", "core_C", "band", ACTION_CHECK
        for t_min, why in times:
            t_s = min(t_min * 60.0, t_end)
            exp, lo, hi = _margin_limit(result, col, sr.start_s, t_s, mode, tolerance_K)
            cps.append(Checkpoint(t_s / 60.0, sr.name, point, exp, lo, hi, why, action))
    return cps


def _rule_checkpoints(result, oc, t_end: float, unit: str, fmt_t) -> list[Checkpoint]:
    """At each cooling-rule stage deadline, and at each step's end for every band of the rule; limits as
    the rule's source publishes them in the display ``unit``."""
    cps: list[Checkpoint] = []
    rc = oc.rule_check if oc is not None else None
    if rc is not None:
        rule = rc
        for d in stage_deadlines(result):
            t_s = min(d.deadline_s, t_end)
            t_min = math.floor(t_s / 60.0 + 1e-9)
            later = d.deadline_s > t_end + 1.0
            step = _step_at(result, t_min * 60.0)
            exp = _interp(result, rule.point, t_min * 60.0)
            to = d.stage.to_text(unit) if d.stage is not None else f"{d.to_C:g} °C"
            why = f"rule stage {d.index + 1}: {to} by {fmt_t(d.deadline_s / 60.0)}"
            if later:
                why += " (after the plan ends: probe at the end)"
            lo, hi = (None, d.to_C) if d.kind == "cooling" else (d.to_C, None)
            label = f"≤ {to}" if d.kind == "cooling" else f"≥ {to}"
            cps.append(
                Checkpoint(
                    float(t_min),
                    step,
                    rule.point,
                    exp,
                    lo,
                    hi,
                    why,
                    ACTION_HOLD,
                    rule=True,
                    limit_label=label,
                )
            )
        bands = [
            (b.band.low_C, b.band.high_C, f"rule band {b.band.label(unit)}", b.band.range_text(unit))
            for b in rc.bands
        ]
        if rc.budget is not None:  # the storage band whose excursions spend the stability budget
            bb = Band(rc.budget.budget.low_C, rc.budget.budget.high_C)
            bands.append(
                (bb.low_C, bb.high_C, f"stability budget band {bb.range_text(unit)}", bb.range_text(unit))
            )
        for low, high, what, label in bands:
            for sr in result.steps:
                t_min = math.floor(sr.end_s / 60.0 + 1e-9)
                exp = _interp(result, rule.point, t_min * 60.0)
                cps.append(
                    Checkpoint(
                        float(t_min),
                        sr.name,
                        rule.point,
                        exp,
                        low,
                        high,
                        f"{what} at the end of the step",
                        ACTION_HOLD,
                        rule=True,
                        limit_label=label,
                    )
                )
    return cps


def _lethality_checkpoints(result, oc, t_end: float, tolerance_K: float) -> list[Checkpoint]:
    """When the lethality requirement is predicted to be reached."""
    cps: list[Checkpoint] = []
    leth = oc.lethality if oc is not None else None
    if leth is not None and leth.reached is not None and leth.reached.reached:
        t_min = math.ceil(leth.reached.time_s / 60.0 - 1e-9)
        sr = result.steps[_step_index_at(result, t_min * 60.0)]
        exp, lo, hi = _margin_limit(
            result, leth.point, sr.start_s, min(t_min * 60.0, t_end), "up", tolerance_K
        )
        cps.append(
            Checkpoint(
                float(t_min),
                sr.name,
                leth.point,
                exp,
                lo,
                None,
                f"lethality {leth.name}: F {leth.required_F_min:g} min reached",
                ACTION_EXTEND,
            )
        )
    return cps


def _step_index_at(result, t_s: float) -> int:
    for sr in result.steps:
        if t_s <= sr.end_s + 1e-6:
            return sr.index
    return result.steps[-1].index


def _step_at(result, t_s: float) -> str:
    return result.steps[_step_index_at(result, t_s)].name


def _merge(cps: list[Checkpoint]) -> tuple[Checkpoint, ...]:
    """Sort by time; of two checkpoints at the same point within ``MERGE_WITHIN_MIN``, keep the rule's."""
    cps = sorted(cps, key=lambda c: (c.time_min, not c.rule))
    kept: list[Checkpoint] = []
    for c in cps:
        clash = next(
            (k for k in kept if k.point == c.point and abs(k.time_min - c.time_min) < MERGE_WITHIN_MIN), None
        )
        if clash is None:
            kept.append(c)
        elif c.rule and not clash.rule:
            kept[kept.index(clash)] = c
    if len(kept) > MAX_CHECKPOINTS:
        rules = [k for k in kept if k.rule]
        others = [k for k in kept if not k.rule]
        kept = sorted(rules + others[: max(0, MAX_CHECKPOINTS - len(rules))], key=lambda c: c.time_min)
    return tuple(kept[:MAX_CHECKPOINTS])


@dataclass(frozen=True)
class SaltCheckpoint:
    """One salt (or sugar) sample to take in a brining step: the predicted core and mean content [%]."""

    time_min: float
    step: str
    solute: str
    core_percent: float
    mean_percent: float
    basis: str


def salt_checkpoints(result) -> tuple[SaltCheckpoint, ...]:
    """Samples to take in each step with a solute record: halfway and at the end (the step's solute stop when
    it has one); the values are the run's own history."""
    out: list[SaltCheckpoint] = []
    for sr in result.steps:
        m = getattr(sr, "mass", None)
        if m is None or m.mode == "equalisation":
            continue
        t_end = float(m.time_s[-1])
        end_basis = (
            f"the {'core' if m.stopped_on == 'centre' else m.stopped_on} {m.solute} target ends the step"
            if m.stopped_on is not None
            else "end of the step"
        )
        for t, basis in ((0.5 * t_end, "halfway: uptake on course"), (t_end, end_basis)):
            out.append(
                SaltCheckpoint(
                    time_min=(sr.start_s + t) / 60.0,
                    step=sr.name,
                    solute=m.solute,
                    core_percent=100.0 * float(np.interp(t, m.time_s, m.core_fraction)),
                    mean_percent=100.0 * float(np.interp(t, m.time_s, m.mean_fraction)),
                    basis=basis,
                )
            )
    return tuple(out)


@dataclass(frozen=True)
class WeightCheckpoint:
    """One weighing in a drying step: the predicted weight loss [% of the piece's mass at the step's start]
    and the expected weight of a piece of the plan's size [kg]."""

    time_min: float
    step: str
    weight_loss_percent: float
    piece_kg: float
    basis: str


def weight_checkpoints(result) -> tuple[WeightCheckpoint, ...]:
    """Pieces to weigh in each drying step, at a quarter, half, three quarters and the end of the step (the
    weight-loss stop when it ends it); the values are the run's own loss history."""
    out: list[WeightCheckpoint] = []
    for sr in result.steps:
        d = getattr(sr, "drying", None)
        if d is None or not d.weight_checkpoints:
            continue
        start_kg = d.weight_loss_kg / (d.weight_loss_percent / 100.0) if d.weight_loss_percent > 0 else None
        start_kg = result.piece_mass_kg if start_kg is None else start_kg
        last = len(d.weight_checkpoints) - 1
        for j, (t, pct) in enumerate(d.weight_checkpoints):
            basis = "loss on course"
            if j == last:
                basis = (
                    f"the {d.stop_weight_loss_percent:g} % weight-loss stop ends the step"
                    if d.weight_stop_s is not None
                    else "end of the step"
                )
            out.append(
                WeightCheckpoint(
                    time_min=(sr.start_s + t) / 60.0,
                    step=sr.name,
                    weight_loss_percent=pct,
                    piece_kg=start_kg * (1.0 - pct / 100.0),
                    basis=basis,
                )
            )
    return tuple(out)
