"""Required setting: the value of one parameter at which a plan just meets a goal.

The answer is a root of a continuous measure m(v) of the forward run, positive when the goal is met:

* goal ``"time"``: m = X − t_plan [min], with t_plan the predicted time for the step's stop condition (or
  first target) with the site's margin (``procplan.outcomes.plan_time_min``); when the core does not reach
  it within the run, the predicted time is extrapolated as t_run (1 + gap), gap = distance to the target
  over the temperature span still to go, which keeps m continuous across the reached/not-reached edge;
* goal ``"rule"``: m = the smallest stage or band margin of the plan's rule [min] (a stage not reached
  counts as its whole allowance missed);
* goal ``"lethality"``: m = log10 F − log10 F_required.

The parameter range (the machine's setting range, or a default, or the user's bounds) is scanned at a few
points; a sign change is refined by Brent's method (scipy.optimize.brentq) and the answer taken on the
side that meets the goal. No sign change is a result, not an error: ``achievable`` is False with the best
value reached (or True with the range end that meets the goal with least effort when all of it does).
Every answer is confirmed by a forward run of the plan with the value, stored beside it.

References
----------
Brent, R.P., Algorithms for Minimization without Derivatives, Prentice-Hall, 1973, ch. 4 (the root finder
of scipy.optimize.brentq).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
from scipy.optimize import brentq

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.model import Plan, Target
from procplan.outcomes import plan_time_min
from procplan.output.json_safe import json_safe
from procplan.studies.inverse_parameters import PARAMETERS, current_value
from procplan.studies.runner import check_stop

#: Forward runs of the root search after the scan, for a time estimate before the study starts (Brent's method
#: to 1e-5 of the range; measured 0–14 after the 5-point scan on the roulade and vial demo plans, medium and h).
ESTIMATED_REFINEMENT_RUNS = 10


def estimated_runs(n_scan: int = 5) -> int:
    """Forward runs a :func:`required_setting` search is expected to take (scan, root search, confirmation)."""
    return int(n_scan) + ESTIMATED_REFINEMENT_RUNS + 1


# --- goals ---------------------------------------------------------------------------------------------
def _step_target(plan: Plan, i: int) -> Target:
    step = plan.steps[i]
    if step.stop_when_core_C is not None:
        return Target(step.stop_when_core_C)
    if step.targets:
        return step.targets[0]
    raise InvalidInputError(
        "goal", "time", "a step with a stop condition or a target", f"step {i} ({step.name}) has neither"
    )


def _measure_time(result, plan: Plan, i: int, target_min: float | None) -> float:
    want = _step_target(plan, i)
    temp = want.temperature_C
    tg = next(
        t
        for t in result.outcomes.targets
        if t.step == plan.steps[i].name and t.column == want.column and t.target.target_C == temp
    )
    ch = plan.checks
    tr = tg.target
    from procplan.studies.metrics import stopped_elapsed_s

    elapsed = stopped_elapsed_s(result, tg)
    if elapsed is not None:
        predicted = elapsed / 60.0
    else:
        sr = result.steps[i]
        hist = result.history
        seg = hist[hist["step_index"] == i]
        start = float(seg[want.column].iloc[0])
        span = max(abs(start - temp), 1e-9)
        gap = abs(tr.closest_C - temp) / span
        predicted = (sr.end_s - sr.start_s) / 60.0 * (1.0 + gap)
    return float(target_min) - plan_time_min(predicted, ch.margin_percent, ch.margin_min)


def _measure_rule(result, plan: Plan, i: int, target_min: float | None) -> float:
    rc = result.outcomes.rule_check
    if rc is None:
        raise InvalidInputError("goal", "rule", "a plan with checks.cooling_rule")
    margins = []
    for s in rc.stages:
        if s.margin_min is not None:
            margins.append(s.margin_min)
        elif not s.passed:
            margins.append(-s.allowed_min)
    margins += [b.margin_min for b in rc.bands if b.margin_min is not None]
    m = min(margins) if margins else (0.0 if rc.passed else -1.0)
    if rc.passed and m < 0:
        m = 0.0
    if not rc.passed and m >= 0:
        m = -1e-9
    return float(m)


def _measure_lethality(result, plan: Plan, i: int, target_min: float | None) -> float:
    le = result.outcomes.lethality
    if le is None or not le.required_F_min:
        raise InvalidInputError("goal", "lethality", "a plan with a lethality check that requires an F")
    return math.log10(max(le.total_F_min, 1e-300)) - math.log10(le.required_F_min)


@dataclass(frozen=True)
class GoalSpec:
    description: str
    measure: Callable[[Any, Plan, int, float | None], float]
    unit: str
    needs_target_min: bool = False


#: Goals (one registry: API, CLI and app).
GOALS: dict[str, GoalSpec] = {
    "time": GoalSpec(
        "the step's stop temperature (or first target) is reached within target_min, the site's margin included",
        _measure_time,
        "min",
        True,
    ),
    "rule": GoalSpec("the plan's cooling rule passes", _measure_rule, "min"),
    "lethality": GoalSpec("the lethality requirement is met", _measure_lethality, "log10"),
}


@dataclass(frozen=True, eq=False)
class RequiredSetting:
    """The answer of a required-setting study.

    value : the required value (the boundary, on the side that meets the goal) when achievable; else None
    achievable : whether some value in ``bounds`` meets the goal
    passes : "above" or "below" (values beyond ``value`` on that side meet the goal), "everywhere",
        or "nowhere"
    best_value, best_measure : the value with the largest measure found, and its measure
    measure_at_value : the goal measure at ``value`` (≥ 0 when met; its unit is the goal's)
    evaluations : every (value, measure) evaluated
    plan, result : the plan with the answer (or the best value) and its confirming forward run
    confirmed : the confirming run meets the goal
    """

    parameter: str
    unit: str
    goal: str
    target_min: float | None
    step_index: int
    bounds: tuple[float, float]
    value: float | None
    achievable: bool
    passes: str
    best_value: float
    best_measure: float
    measure_at_value: float | None
    evaluations: tuple[tuple[float, float], ...]
    plan: Plan
    result: Any
    confirmed: bool
    message: str
    xtol: float = 0.0
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready summary (the confirming run as its key figures)."""
        from procplan.studies.metrics import result_metrics

        return {
            "parameter": self.parameter,
            "unit": self.unit,
            "goal": self.goal,
            "target_min": self.target_min,
            "step_index": self.step_index,
            "bounds": list(self.bounds),
            "value": self.value,
            "achievable": self.achievable,
            "passes": self.passes,
            "best_value": self.best_value,
            "best_measure": self.best_measure,
            "measure_at_value": self.measure_at_value,
            "xtol": self.xtol,
            "evaluations": [list(e) for e in self.evaluations],
            "confirmed": self.confirmed,
            "message": self.message,
            "confirming_run": json_safe(result_metrics(self.result)),
        }


def required_setting(
    plan: Plan,
    *,
    step_index: int,
    parameter: str,
    goal: str,
    library=None,
    bounds: tuple[float, float] | None = None,
    target_min: float | None = None,
    n_scan: int = 5,
    xtol: float | None = None,
    solver: str | None = None,
    n_nodes=None,
    dt_s: float | None = None,
    progress: Callable[[int, float, float], None] | None = None,
    stop=None,
) -> RequiredSetting:
    """The value of ``parameter`` at which ``plan`` just meets ``goal``, confirmed by a forward run.

    Parameters
    ----------
    plan : the plan
    step_index : the step whose setting (and, for the goal "time", whose stop condition) is meant
    parameter : a key of :data:`PARAMETERS`
    goal : a key of :data:`GOALS`
    library : resolves machines and rules
    bounds : search range in the parameter's unit (default: the machine's setting range, else the
        parameter's default range)
    target_min : the allowed time X [min] for the goal "time"
    n_scan : points of the initial scan of the range (≥ 2)
    xtol : absolute tolerance of the answer in the parameter's unit (default 1e-5 of the range)
    solver, n_nodes, dt_s : passed to :func:`procplan.run.engine.run_plan`
    progress : called as progress(evaluations, value, measure) after each forward run
    stop : a ``threading.Event``; when set, the search ends before its next forward run with
        :class:`procplan.studies.runner.StudyStopped` (about ``n_scan`` + :data:`ESTIMATED_REFINEMENT_RUNS`
        + 1 runs in all: :func:`estimated_runs`)

    Returns
    -------
    RequiredSetting

    Examples
    --------
    A 20 mm sphere of fixed properties cooled from 80 °C in air at 20 °C; which h brings its core to 30 °C
    within 10 min? (Lumped body: h = ρ c V ln(θi/θ)/(A t) = 8500·400·(0.02/6)·ln 6/600 = 33.85 W/m²K.)

    >>> from procplan.geometry import Geometry
    >>> from procplan.model import Plan, Product, Step, FixedProperties
    >>> prod = Product("ball", Geometry("sphere", diameter_m=0.02), fixed_properties=FixedProperties(1e4, 8500, 400))
    >>> plan = Plan("ball", prod, 80.0, (Step("cool", 3600.0, 30.0, medium_C=20.0, h_W_m2K=10.0),))
    >>> r = required_setting(plan, step_index=0, parameter="h_W_m2K", goal="time", target_min=10.0, bounds=(5, 200))
    >>> r.achievable, r.passes, round(r.value, 2)
    (True, 'above', 33.85)
    """
    from procplan.run.engine import run_plan

    validate.choice("parameter", parameter, PARAMETERS)
    validate.choice("goal", goal, GOALS)
    if isinstance(step_index, bool) or not isinstance(step_index, int | np.integer):
        raise InvalidInputError("step_index", step_index, f"a step index 0 … {len(plan.steps) - 1}")
    i = int(step_index)
    if not 0 <= i < len(plan.steps):
        raise InvalidInputError("step_index", step_index, f"a step index 0 … {len(plan.steps) - 1}")
    spec, gspec = PARAMETERS[parameter], GOALS[goal]
    if gspec.needs_target_min:
        target_min = validate.positive("target_min", target_min, "min")
        _step_target(plan, i)
    if library is None and (any(s.equipment for s in plan.steps) or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    lo, hi = _search_bounds(plan, i, parameter, bounds, library)
    n_scan = int(validate.number("n_scan", n_scan, minimum=2, maximum=50))
    tol = (1e-5 * (hi - lo)) if xtol is None else validate.positive("xtol", xtol, spec.unit)

    # The plan evaluated: for the goal "time", only the steps up to the one meant, long enough to see X.
    def evaluated(v: float) -> Plan:
        p = spec.apply(plan, i, v, library)
        if goal == "time":
            p = replace(p, steps=p.steps[: i + 1])
            need = 1.25 * 60.0 * target_min
            if p.steps[i].duration_s < need and parameter != "hold_min":
                p = p.with_step(i, duration_s=need)
        return p

    evals: list[tuple[float, float]] = []

    def measure(v: float) -> float:
        check_stop(stop, len(evals), max(len(evals) + 1, n_scan + ESTIMATED_REFINEMENT_RUNS))
        p = evaluated(v)
        res = run_plan(p, library=library, solver=solver, n_nodes=n_nodes, dt_s=dt_s)
        m = float(gspec.measure(res, p, i, target_min))
        evals.append((float(v), m))
        if progress is not None:
            progress(len(evals), float(v), m)
        return m

    xs = np.linspace(lo, hi, n_scan)
    ms = [measure(float(x)) for x in xs]
    current = current_value(plan, i, parameter, library)
    value, m_value, passes, achievable, message, notes = _locate(
        xs, ms, evals, measure, current, tol, parameter, goal
    )
    best_value, best_measure = max(evals, key=lambda e: e[1])
    # The confirming forward run: the whole plan with the answer (or the best value).
    v_conf = value if value is not None else best_value
    conf_plan, conf, m_conf, note = _confirm(
        plan, i, v_conf, parameter, goal, target_min, library, dict(solver=solver, n_nodes=n_nodes, dt_s=dt_s)
    )
    notes.extend(note)
    notes.extend(_surface_freezing_notes(conf, i, v_conf, parameter))
    confirmed = m_conf >= 0
    if value is not None:
        m_value = m_conf
    return RequiredSetting(
        parameter=parameter,
        unit=spec.unit,
        goal=goal,
        target_min=target_min,
        step_index=i,
        bounds=(float(lo), float(hi)),
        value=value,
        achievable=achievable,
        passes=passes,
        best_value=float(best_value),
        best_measure=float(best_measure),
        measure_at_value=m_value,
        evaluations=tuple(evals),
        plan=conf_plan,
        result=conf,
        confirmed=bool(confirmed),
        message=message,
        xtol=float(tol),
        notes=tuple(notes),
    )


def _search_bounds(plan: Plan, i: int, parameter: str, bounds, library) -> tuple[float, float]:
    """The search range in the parameter's unit: given (within a machine's range), else the default."""
    spec = PARAMETERS[parameter]
    default = spec.default_bounds(plan, i, library)
    if bounds is None:
        lo, hi = default
    else:
        if len(bounds) != 2:
            raise InvalidInputError("bounds", bounds, "two numbers (low, high)")
        lo = validate.number("bounds[0]", bounds[0], unit=spec.unit)
        hi = validate.number("bounds[1]", bounds[1], unit=spec.unit)
        if parameter in ("medium_C", "speed_m_s") and plan.steps[i].equipment is not None:
            dlo, dhi = default
            if lo < dlo or hi > dhi:
                raise InvalidInputError(
                    "bounds", (lo, hi), f"within the machine's range [{dlo:g}, {dhi:g}] {spec.unit}"
                )
    if not hi > lo:
        raise InvalidInputError("bounds", (lo, hi), f"low < high [{spec.unit}]")
    if parameter in ("h_W_m2K", "dimension_mm", "hold_min") and lo <= 0:
        raise InvalidInputError("bounds[0]", lo, f"> 0 {spec.unit}")
    return lo, hi


def _locate(xs, ms, evals, measure, current, tol: float, parameter: str, goal: str):
    """The value where the goal changes verdict (by Brent's method in the scanned bracket nearest the current
    value), or the least demanding value when met everywhere, or None when met nowhere; with the message."""
    spec, gspec = PARAMETERS[parameter], GOALS[goal]
    lo, hi, n_scan = float(xs[0]), float(xs[-1]), len(xs)
    brackets = [(j, j + 1) for j in range(n_scan - 1) if (ms[j] >= 0) != (ms[j + 1] >= 0)]
    notes: list[str] = []
    if brackets:
        # The boundary nearest the plan's current value: the smallest change that decides the goal.
        ref = current if current is not None else 0.5 * (lo + hi)
        j0, j1 = min(brackets, key=lambda b: abs(0.5 * (xs[b[0]] + xs[b[1]]) - ref))
        if len(brackets) > 1:
            notes.append(
                f"the goal changes verdict {len(brackets)} times over the range; the boundary nearest {ref:g} is reported"
            )
        a, b = float(xs[j0]), float(xs[j1])
        root = brentq(measure, a, b, xtol=tol, rtol=4 * np.finfo(float).eps, maxiter=100)
        passing_end = a if ms[j0] >= 0 else b
        cands = [(x, m) for x, m in evals if m >= 0 and min(a, b) <= x <= max(a, b)]
        value, m_value = min(cands, key=lambda e: abs(e[0] - root))
        passes = "below" if passing_end < root else "above"
        achievable = True
        message = (
            f"{parameter} = {value:.6g} {spec.unit} meets the goal ({goal}); values {passes} it meet it too "
            f"(within [{lo:g}, {hi:g}] {spec.unit})"
        )
    elif all(m >= 0 for m in ms):
        # Met everywhere: the least demanding end is the one with the smallest (still positive) measure.
        j = int(np.argmin(ms))
        value, m_value, passes, achievable = float(xs[j]), ms[j], "everywhere", True
        message = f"every {parameter} in [{lo:g}, {hi:g}] {spec.unit} meets the goal ({goal}); the least demanding is {value:.6g} {spec.unit}"
    else:
        j = int(np.argmax(ms))
        value, m_value, passes, achievable = None, None, "nowhere", False
        message = (
            f"not achievable in this range: no {parameter} in [{lo:g}, {hi:g}] {spec.unit} meets the goal ({goal}); "
            f"best {xs[j]:.6g} {spec.unit} with measure {ms[j]:.4g} {gspec.unit}"
        )
    return value, m_value, passes, achievable, message, notes


def _confirm(plan: Plan, i: int, v_conf: float, parameter: str, goal: str, target_min, library, run_opts):
    """The confirming forward run of the whole plan with ``v_conf``: its plan, result, measure and notes."""
    from procplan.run.engine import run_plan

    spec, gspec = PARAMETERS[parameter], GOALS[goal]
    notes = []
    conf_plan = spec.apply(plan, i, v_conf, library)
    if goal == "time" and conf_plan.steps[i].duration_s < 60.0 * target_min and parameter != "hold_min":
        conf_plan = conf_plan.with_step(i, duration_s=60.0 * target_min)
        notes.append(
            f"step {i} lengthened to the allowed {target_min:g} min so that the run shows the target"
        )
    conf = run_plan(conf_plan, library=library, **run_opts)
    m_conf = float(gspec.measure(conf, conf_plan, i, target_min))
    return conf_plan, conf, m_conf, notes


def _surface_freezing_notes(conf, i: int, value: float, parameter: str) -> list[str]:
    """That the answer would freeze the surface of a chill step, from its confirming run."""
    from procplan.run.assess import surface_freezing_warnings

    found = surface_freezing_warnings(
        conf.history,
        conf.steps[i : i + 1],
        conf.properties.initial_freezing_C,
        conf.plan.checks.frozen_storage_C,
    )
    unit = PARAMETERS[parameter].unit
    return [f"{parameter} = {value:.6g} {unit} would freeze the surface: {w}" for w in found]
