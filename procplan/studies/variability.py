"""Variability: Monte Carlo over uncertain inputs, percentiles of time to target and lethality.

Inputs (:data:`VARIABLES`; on a brining plan also the salt diffusivity and brine strength of
:mod:`procplan.studies.variability_brine`) are drawn from distributions (:mod:`procplan.studies.distributions`: normal,
uniform, triangular, lognormal, each optionally truncated to bounds) with a seeded
``numpy.random.Generator``, so the same seed gives the same numbers. Two paths:

* ``"exact"`` (fast): one step for which the engine chooses the exact solver
  (:func:`procplan.run.solver.choose_solver`); the core history of every sample at once from
  :func:`procplan.conduction.product.centre_series` (Incropera §5.5–5.8), with properties taken as the
  engine takes them (:func:`procplan.run.solver.exact_properties`), and the cooling rule checked by
  :func:`procplan.outcomes.rules.check_rule` on each sample's core history;
* ``"batch"``: one step on a 1-D product that the engine solves by finite volumes (temperature-dependent
  properties) in a constant medium: all samples stacked in one batched finite-volume run
  (:mod:`procplan.studies.variability_batch`);
* ``"run"`` (general): :func:`procplan.run.engine.run_plan` for every sample, optionally through any
  ``concurrent.futures.Executor``.

The worst-case corner run evaluates every combination of the distributions' ends (their bounds, or P1 and
P99 when unbounded) with run_plan and keeps the one with the longest time to target (or, with a lethality
requirement and no target, the smallest F).

References
----------
Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §5.5–5.8.
Bigelow et al. (1920), general method for F (procplan.outcomes.lethality).
"""

from __future__ import annotations

import itertools
import math
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import pandas as pd

from procplan import validate
from procplan.conduction.product import CentreSeries, centre_series
from procplan.errors import InvalidInputError
from procplan.files.product import check_proportions
from procplan.model import Plan
from procplan.outcomes.rules import RULE_KINDS, check_rule
from procplan.output.json_safe import json_safe
from procplan.run.solver import SolverChoice, choose_solver, exact_properties
from procplan.studies.distributions import DISTRIBUTIONS, Distribution, distribution, parse_distribution
from procplan.studies.variability_brine import BRINE_VARIABLES, SALT_SUMMARY

__all__ = [
    "DISTRIBUTIONS",
    "VARIABLES",
    "Distribution",
    "VariabilityResult",
    "distribution",
    "monte_carlo",
    "parse_distribution",
]

PERCENTILES = (50.0, 95.0, 99.0)


# --- inputs that vary --------------------------------------------------------------------------------------
def _apply_start(plan: Plan, v: float, i: int, ctx) -> Plan:
    return replace(plan, start_temperature_C=float(v))


def _apply_size(plan: Plan, v: float, i: int, ctx) -> Plan:
    g = plan.product.geometry
    dims = {
        k: getattr(g, k) * float(v)
        for k in ("thickness_m", "diameter_m", "length_m", "width_m", "height_m")
        if getattr(g, k) is not None
    }
    geometry = replace(g, **dims)
    check_proportions(geometry, prefix=f"sample {i}: size_factor {float(v):g} gives product.")
    return replace(plan, product=replace(plan.product, geometry=geometry))


def _given_h(plan: Plan, i: int, h: float, ctx) -> Plan:
    step = plan.steps[i]
    if step.equipment is None:
        return plan.with_step(i, h_W_m2K=float(h))
    return plan.with_step(
        i, h_W_m2K=float(h), medium_C=ctx["medium_C"], equipment=None, settings=(), settings_profile=()
    )


def _apply_h(plan: Plan, v: float, i: int, ctx) -> Plan:
    return _given_h(plan, i, v, ctx)


def _apply_h_factor(plan: Plan, v: float, i: int, ctx) -> Plan:
    step = plan.steps[i]
    if step.equipment is None:
        return plan.with_step(i, h_W_m2K=float(step.h_W_m2K) * float(v))
    return _given_h(plan, i, ctx["h_W_m2K"] * float(v), ctx)


def _apply_water(plan: Plan, v: float, i: int, ctx) -> Plan:
    p = plan.product
    if not p.composition:
        raise InvalidInputError(
            "water_fraction", v, "a product described by its composition", f"{p.name} has fixed properties"
        )
    comp = dict(p.composition)
    w = float(v)
    if not 0.0 < w < 1.0:
        raise InvalidInputError("water_fraction", w, "(0, 1)")
    rest = 1.0 - comp.get("water", 0.0)
    scale = (1.0 - w) / rest if rest > 0 else 0.0
    new = {k: (w if k == "water" else x * scale) for k, x in comp.items()}
    new.setdefault("water", w)
    return replace(plan, product=replace(p, composition=tuple(sorted(new.items()))))


#: name → (description with unit, apply(plan, value, step_index, context) → plan).
VARIABLES: dict[str, tuple[str, Callable[..., Plan]]] = {
    "start_C": ("initial (uniform) product temperature [°C]", _apply_start),
    "size_factor": ("factor on every dimension of the product [-]", _apply_size),
    "h_W_m2K": ("surface coefficient of the step [W/m²K] (a machine step becomes a given-h step)", _apply_h),
    "h_factor": ("factor on the step's nominal surface coefficient [-]", _apply_h_factor),
    "water_fraction": (
        "water mass fraction, the other components scaled to keep the sum 1 [-]",
        _apply_water,
    ),
    **BRINE_VARIABLES,
}


@dataclass(frozen=True, eq=False)
class VariabilityResult:
    """The outcome of a Monte Carlo study.

    samples : one row per sample: the inputs, time_to_target_min (NaN when not reached), lethality_F_min,
        rule_passed
    percentiles : {"time_to_target_min": {"P50", "P95", "P99"}, "lethality_F_min": {...}} (inf when more
        than the complement of the percentile is not reached)
    p_rule_fail, p_not_reached, p_lethality_fail : probabilities (None where not applicable)
    worst : the worst corner {"inputs", "metrics"} and its PlanResult in ``worst_result``
    corners : the corner runs' inputs and key figures
    """

    method: str
    n_samples: int
    seed: int
    samples: pd.DataFrame
    percentiles: dict[str, dict[str, float]]
    p_rule_fail: float | None
    p_not_reached: float | None
    p_lethality_fail: float | None
    worst: dict[str, Any] | None
    worst_result: Any
    corners: pd.DataFrame | None
    seconds: float
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        return json_safe(
            {
                "method": self.method,
                "n_samples": self.n_samples,
                "seed": self.seed,
                "percentiles": self.percentiles,
                "p_rule_fail": self.p_rule_fail,
                "p_not_reached": self.p_not_reached,
                "p_lethality_fail": self.p_lethality_fail,
                "worst_corner": self.worst,
                "seconds": self.seconds,
                "notes": list(self.notes),
            }
        )


# --- the exact fast path -----------------------------------------------------------------------------------
def _fast_h(plan: Plan, samples: dict[str, np.ndarray], ctx, n: int) -> np.ndarray:
    """Every sample's h [W/m²K]: sampled, a factor on the nominal, or the nominal."""
    step = plan.steps[0]
    h = np.full(n, ctx["h_W_m2K"])
    if "h_W_m2K" in samples:
        h = samples["h_W_m2K"].astype(float)
    if "h_factor" in samples:
        base = step.h_W_m2K if step.equipment is None else ctx["h_W_m2K"]
        h = base * samples["h_factor"] * (h / ctx["h_W_m2K"] if "h_W_m2K" in samples else 1.0)
    return h


def _fast_model(plan: Plan, nominal, samples: dict[str, np.ndarray], ctx) -> CentreSeries:
    """The centre series of every sample, with properties taken as the engine's exact solver takes them."""
    n = len(next(iter(samples.values())))
    start = np.broadcast_to(samples.get("start_C", plan.start_temperature_C), (n,)).astype(float)
    medium = ctx["medium_C"]
    k, rho, cp, _ = exact_properties(nominal.properties, start, medium)
    size = samples.get("size_factor", np.ones(n)).astype(float)
    return centre_series(
        plan.product.geometry, k, rho, cp, _fast_h(plan, samples, ctx, n), start, medium, size
    )


def _fast_path_blockers(plan: Plan, nominal, names: set[str], solver: str | None) -> list[str]:
    why = []
    if len(plan.steps) != 1:
        why.append("more than one step")
    elif _engine_choice(plan, nominal, solver).solver != "exact":
        why.append("the engine uses finite volumes for this plan")
    ml = getattr(nominal.steps[0], "machine_load", None) if nominal.steps else None
    if ml is not None and not ml.held:
        why.append("the machine cannot hold its set point with this batch (the medium is solved with it)")
    if "water_fraction" in names:
        why.append("the composition varies")
    if any(s.brine is not None for s in plan.steps) or names & set(BRINE_VARIABLES):
        why.append("salt uptake in a brining step")
    step = plan.steps[0]
    tgt = step.stop_when_core_C is not None or any(t.point == "core" for t in step.targets)
    if not tgt and plan.checks.lethality is None:
        why.append("no core target or lethality check to evaluate")
    if step.targets and step.stop_when_core_C is None and step.targets[0].point != "core":
        why.append("the reported target is not at the core")
    le = plan.checks.lethality
    if le is not None and le.point != "core":
        why.append("lethality is checked off the core")
    return why


def _engine_choice(plan: Plan, nominal, solver: str | None) -> SolverChoice:
    """The engine's solver choice for the single step of ``plan``, by the engine's own rules."""
    return choose_solver(
        solver or plan.solver,
        props=nominal.properties,
        uniform_start=True,
        start_C=plan.start_temperature_C,
        surface=nominal.steps[0].surface,
        step_label="steps[0]",
    )


def _rule_fast(rule, fast: CentreSeries, t_end: np.ndarray) -> np.ndarray:
    """Each sample's verdict by :func:`procplan.outcomes.rules.check_rule` on its core history, sampled at
    the exact times the core crosses every stage's temperatures (the core of a uniform start in a constant
    medium moves monotonically, so the piecewise-linear history crosses them exactly there)."""
    if rule.bands or rule.point != "core" or RULE_KINDS[rule.kind] not in ("down", "up"):
        raise InvalidInputError("rule", rule.name, "stages only, at the core, for the fast path")
    levels = sorted({s.to_C for s in rule.stages} | {s.from_C for s in rule.stages if s.from_C is not None})
    t_cap = float(np.nanmax(t_end))
    crossings = np.stack([fast.time_to(level, t_cap) for level in levels], axis=1)
    t_end = np.asarray(t_end, dtype=float)[:, None]
    crossings = np.where(np.isnan(crossings) | (crossings > t_end), t_end, crossings)
    times = np.sort(np.concatenate([np.linspace(0.0, 1.0, 9)[None, :] * t_end, crossings], axis=1), axis=1)
    core = fast.core_C(times)
    passed = np.empty(times.shape[0], dtype=bool)
    for j in range(times.shape[0]):
        t_j, first = np.unique(times[j], return_index=True)
        passed[j] = check_rule(rule, t_j, core[j, first]).passed
    return passed


def monte_carlo(
    plan: Plan,
    distributions: Mapping[str, Distribution],
    *,
    n_samples: int = 1000,
    seed: int = 0,
    library=None,
    step_index: int = 0,
    method: str = "auto",
    executor="auto",
    corners: bool = True,
    solver: str | None = None,
    n_nodes=None,
    dt_s: float | None = None,
    progress: Callable[[int, int], None] | None = None,
    stop=None,
) -> VariabilityResult:
    """Monte Carlo over the inputs of ``distributions`` (keys of :data:`VARIABLES`).

    Parameters
    ----------
    plan : the plan
    distributions : variable name → :class:`Distribution` (see :func:`distribution`)
    n_samples : number of samples (1 … 1e6)
    seed : seed of ``numpy.random.default_rng``; the same seed gives the same samples and results
    library : resolves machines and rules
    step_index : the step whose h the h variables change
    method : "auto" (the exact fast path when it applies, else the batched finite-volume path when it
        applies, else run_plan per sample), "exact" (fast path; refused when it does not apply), "batch"
        (batched finite volumes; refused when they do not apply) or "run" (run_plan per sample)
    executor : for the "run" path: "auto" (default: a process pool on the machine's cores when it pays,
        see :func:`procplan.studies.runner.run_jobs`), None (in this process) or any concurrent.futures.Executor
    corners : also run the worst-case corners (2^k runs for k variables)
    solver, n_nodes, dt_s : passed to run_plan
    progress : progress(done, total) for the "run" path (after each run) and the "batch" path (after each batch)
    stop : a ``threading.Event`` (or see :func:`procplan.studies.runner.stop_requested`); when set, the "run"
        path ends between runs with :class:`procplan.studies.runner.StudyStopped`; the "batch" path ends
        after the batches then finished, with the samples done (and a note saying so), without corner runs

    Returns
    -------
    VariabilityResult

    Notes
    -----
    On the fast path with a machine step the machine's h at the nominal plan is held for every sample
    unless h is itself sampled; the automatic choice therefore takes the fast path for a machine step only
    when ``h_W_m2K`` is sampled or only ``h_factor`` varies (the correlation's weak dependence on size and
    start temperature would otherwise be lost).
    """
    from procplan.run.engine import run_plan

    t0 = time.perf_counter()
    n = _check_inputs(plan, distributions, n_samples, seed, method, step_index)
    if library is None and (any(s.equipment for s in plan.steps) or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    nominal = run_plan(plan, library=library, solver=solver, n_nodes=n_nodes, dt_s=dt_s)
    sr = nominal.steps[step_index]
    ctx = {"medium_C": float(np.mean(sr.surface.medium_C)), "h_W_m2K": float(np.mean(sr.surface.h_W_m2K))}
    rng = np.random.default_rng(seed)
    names = list(distributions)
    samples = {k: distributions[k].sample(rng, n) for k in names}
    fast, notes = _choose_path(plan, nominal, names, step_index, ctx, method, solver)
    frame = pd.DataFrame(samples)
    path = "exact" if fast else _batch_or_run(plan, nominal, names, step_index, method, solver, notes)
    if fast:
        _fast_run(plan, nominal, samples, ctx, library, frame)
    elif path == "batch":
        from procplan.studies.runner import default_workers
        from procplan.studies.variability_batch import batch_run

        h = _fast_h(plan, samples, ctx, n)
        opts = (n_nodes, dt_s, default_workers())
        notes, kept = batch_run(plan, nominal, samples, ctx, h, library, frame, opts, (progress, stop))
        if kept is not None:  # stopped: the samples done, no corner runs
            frame, n, corners = frame[kept].reset_index(drop=True), int(kept.sum()), False
    else:
        run_opts = {"solver": solver, "n_nodes": n_nodes, "dt_s": dt_s}
        notes += _run_path(
            plan, samples, step_index, ctx, library, run_opts, (executor, progress, stop), frame
        )
    worst = worst_res = corner_frame = None
    if corners:
        worst, worst_res, corner_frame = _corners(
            plan, distributions, step_index, ctx, library, solver, n_nodes, dt_s
        )
    pct, p_not, p_leth, p_rule = _summarise(plan, frame)
    return VariabilityResult(
        method=path,
        n_samples=n,
        seed=int(seed),
        samples=frame,
        percentiles=pct,
        p_rule_fail=p_rule,
        p_not_reached=p_not,
        p_lethality_fail=p_leth,
        worst=worst,
        worst_result=worst_res,
        corners=corner_frame,
        seconds=time.perf_counter() - t0,
        notes=tuple(notes),
    )


def _check_inputs(plan: Plan, distributions, n_samples, seed, method: str, step_index: int) -> int:
    """Validate the study's inputs; return the number of samples."""
    validate.choice("method", method, ("auto", "exact", "batch", "run"))
    n = int(validate.number("n_samples", n_samples, minimum=1, maximum=1e6))
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer):
        raise InvalidInputError("seed", seed, "an integer")
    if not distributions:
        raise InvalidInputError("distributions", {}, "at least one variable: " + ", ".join(VARIABLES))
    for name, d in distributions.items():
        validate.choice("variable", name, VARIABLES)
        if not isinstance(d, Distribution):
            raise InvalidInputError(f"distributions[{name}]", d, "a Distribution (see distribution())")
    if "h_W_m2K" in distributions and "h_factor" in distributions:
        raise InvalidInputError("distributions", sorted(distributions), "h_W_m2K or h_factor, not both")
    if not 0 <= step_index < len(plan.steps):
        raise InvalidInputError("step_index", step_index, f"0 … {len(plan.steps) - 1}")
    return n


def _choose_path(plan: Plan, nominal, names, step_index, ctx, method: str, solver) -> tuple[bool, list[str]]:
    """Whether the exact fast path runs, and the notes that say why (not)."""
    blockers = _fast_path_blockers(plan, nominal, set(names), solver)
    machine_block = _machine_block(plan, names, step_index)
    notes: list[str] = []
    if method == "exact" and blockers:
        raise InvalidInputError("method", "exact", "auto or run for this plan", "; ".join(blockers))
    fast = method == "exact" or (method == "auto" and not blockers and machine_block is None)
    if method == "exact" and machine_block:
        notes.append(f"machine h held at its nominal {ctx['h_W_m2K']:.3g} W/m²K for every sample")
    if not fast and method == "auto" and (blockers or machine_block):
        notes.append(
            "the full model runs per sample: "
            + "; ".join(blockers + ([machine_block] if machine_block else []))
        )
    return fast, notes


def _machine_block(plan: Plan, names, step_index: int) -> str | None:
    machine = plan.steps[step_index].equipment is not None
    if machine and not ("h_W_m2K" in names or set(names) <= {"h_factor"}):
        return "the machine's h depends on the sampled size or start temperature"
    return None


def _batch_or_run(plan, nominal, names, step_index, method: str, solver, notes: list[str]) -> str:
    """ "batch" when the batched finite-volume path runs the samples, else "run" (with the reason in the notes)."""
    from procplan.studies.variability_batch import batch_blockers

    if method not in ("auto", "batch"):
        return "run"
    block = _machine_block(plan, names, step_index)
    fast = _fast_path_blockers(plan, nominal, set(names), solver) + ([block] if block else [])
    why = batch_blockers(plan, nominal, fast)
    if method == "batch" and why:
        raise InvalidInputError("method", "batch", "auto or run for this plan", "; ".join(why))
    if why:
        notes.append("not batched: " + "; ".join(why))
        return "run"
    notes.clear()
    return "batch"


def _run_path(plan, samples, step_index, ctx, library, run_opts, running, frame) -> list[str]:
    """run_plan for every sample; fills the frame's metrics and returns notes."""
    from procplan.studies.runner import make_job, run_jobs

    names = list(samples)
    jobs = []
    for j in range(len(frame)):
        p = plan
        for k in names:
            p = VARIABLES[k][1](p, float(samples[k][j]), step_index, ctx)
        jobs.append(make_job(j, p, library, **run_opts))
    executor, progress, stop = running
    outs = run_jobs(jobs, executor=executor, progress=progress, stop=stop)
    errors = [o["error"] for o in outs if o["error"]]
    rows = [o["metrics"] or {} for o in outs]
    frame["time_to_target_min"] = [r.get("time_to_target_min", math.nan) for r in rows]
    frame["lethality_F_min"] = [r.get("lethality_F_min", math.nan) for r in rows]
    frame["lethality_passed"] = [r.get("lethality_passed") for r in rows]
    frame["rule_passed"] = [r.get("rule_passed") for r in rows]
    for col, _ in SALT_SUMMARY:
        if any(col in r for r in rows):
            frame[col] = [r.get(col, math.nan) for r in rows]
    return [f"{len(errors)} sample(s) invalid, e.g. {errors[0]}"] if errors else []


def _summarise(plan: Plan, frame: pd.DataFrame):
    """Percentiles and the probabilities of not reaching the target, failing lethality and failing the rule."""
    pct = {}
    tt = frame["time_to_target_min"].to_numpy(dtype=float)
    has_target = not all(np.isnan(tt)) or _fast_target(plan) is not None
    if has_target:
        pct["time_to_target_min"] = _percentiles(np.where(np.isnan(tt), np.inf, tt))
    p_not = float(np.mean(np.isnan(tt))) if has_target else None
    fl = frame["lethality_F_min"].to_numpy(dtype=float)
    if plan.checks.lethality is not None:
        pct["lethality_F_min"] = _percentiles(fl, low=True)
    lp = frame["lethality_passed"].dropna()
    p_leth = float(1.0 - lp.astype(bool).mean()) if len(lp) else None
    for col, low in SALT_SUMMARY:  # brining plans: contents by their low tail, the time by its high tail
        if col in frame:
            x = frame[col].to_numpy(dtype=float)
            pct[col] = _percentiles(x if low else np.where(np.isnan(x), np.inf, x), low=low)
    rp = frame["rule_passed"].dropna()
    p_rule = float(1.0 - rp.astype(bool).mean()) if len(rp) else None
    return pct, p_not, p_leth, p_rule


def _percentiles(x: np.ndarray, low: bool = False) -> dict[str, float]:
    """P50, P95, P99 (linear interpolation between order statistics; an infinite neighbour gives inf).

    For lethality the low tail matters: its P95 is the F exceeded by 95 % of samples (the 5th percentile).
    """
    x = np.sort(np.asarray(x, dtype=float)[~np.isnan(np.asarray(x, dtype=float))])
    out = {}
    for p in PERCENTILES:
        q = (100.0 - p) if low else p
        if x.size == 0:
            out[f"P{p:g}"] = math.nan
            continue
        pos = q / 100.0 * (x.size - 1)
        i, j = int(math.floor(pos)), int(math.ceil(pos))
        if not (math.isfinite(x[i]) and math.isfinite(x[j])):
            out[f"P{p:g}"] = math.inf
        else:
            out[f"P{p:g}"] = float(x[i] + (pos - i) * (x[j] - x[i]))
    return out


def _fast_target(plan: Plan) -> float | None:
    step = plan.steps[0]
    if step.stop_when_core_C is not None:
        return step.stop_when_core_C
    core = [t for t in step.targets if t.point == "core"]
    return core[0].temperature_C if core else None


def _fast_run(plan, nominal, samples, ctx, library, frame) -> None:
    fast = _fast_model(plan, nominal, samples, ctx)
    step = plan.steps[0]
    n = fast.start_C.shape[0]
    dur = step.duration_s
    target = _fast_target(plan)
    tt = fast.time_to(target, dur) if target is not None else np.full(n, np.nan)
    frame["time_to_target_min"] = tt / 60.0
    t_end = np.where(np.isnan(tt) | (step.stop_when_core_C is None), dur, tt)
    le = plan.checks.lethality
    if le is not None:
        from procplan.outcomes import lethality_basis

        basis = lethality_basis(le.preset, le.reference_C, le.z_C, le.required_F_min)
        req = basis.required_F_min
        grid = np.linspace(0.0, 1.0, 241)[None, :] * t_end[:, None]
        temp = fast.core_C(grid)
        seg = basis.segments(np.diff(grid, axis=1), temp[:, :-1], temp[:, 1:])
        f = seg.sum(axis=1)
        frame["lethality_F_min"] = f
        frame["lethality_passed"] = (f >= req) if req else None
    else:
        frame["lethality_F_min"] = np.nan
        frame["lethality_passed"] = None
    rule_name = plan.checks.cooling_rule
    if rule_name:
        rule = library.rules[rule_name]
        frame["rule_passed"] = _rule_fast(rule, fast, t_end)
    else:
        frame["rule_passed"] = None


def _corners(plan, distributions, step_index, ctx, library, solver, n_nodes, dt_s):
    from procplan.run.engine import run_plan
    from procplan.studies.metrics import result_metrics

    names = list(distributions)
    ends = [distributions[k].ends() for k in names]
    rows, results = [], []
    for combo in itertools.product(*ends):
        p = plan
        for k, v in zip(names, combo, strict=True):
            p = VARIABLES[k][1](p, v, step_index, ctx)
        try:
            res = run_plan(p, library=library, solver=solver, n_nodes=n_nodes, dt_s=dt_s)
        except InvalidInputError as exc:
            rows.append({**dict(zip(names, combo, strict=True)), "error": str(exc)})
            results.append(None)
            continue
        m = result_metrics(res)
        rows.append({**dict(zip(names, combo, strict=True)), **m, "error": None})
        results.append(res)

    def badness(r):
        if r.get("error"):
            return -math.inf
        t, salt = r.get("time_to_target_min"), r.get("salt_time_min")
        if not r.get("target_step") and salt is not None:  # a brining plan: the longest time to the salt
            return math.inf if not math.isfinite(salt) else salt
        if r.get("target_step"):
            return math.inf if t is None or not math.isfinite(t) else t
        f = r.get("lethality_F_min")
        return -f if f is not None and math.isfinite(f) else -math.inf

    j = max(range(len(rows)), key=lambda i: badness(rows[i]))
    worst = {
        "inputs": {k: rows[j][k] for k in names},
        "metrics": {k: v for k, v in rows[j].items() if k not in names},
    }
    return worst, results[j], pd.DataFrame(rows)
