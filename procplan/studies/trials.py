"""Heat-penetration studies: several logger files (runs) with several probes each, the slowest unit found,
measured lethality per probe, the process parameters of the measured curves and the plan's prediction
overlaid on every probe.

Per run: the step start (from the probe map, else where the medium probe starts to move, else the first
reading) aligns the run; the come-up time is when the medium probe first comes within
``come_up_tolerance_K`` of the first step's medium temperature. Per product probe: the measured lethality by
the general method over the whole record (every step, :meth:`procplan.outcomes.lethality.LethalityBasis.
cumulative_F_min`, the same integral the plan's own check uses) and per step; f_h, j_h on the first step
(corrected zero after 0.58 of the come-up time) and f_c, j_c on a cooling step that follows
(:mod:`procplan.studies.formula_method`); the plan's prediction at the probe's position, run from the run's
measured start temperature, and the residuals.

The slowest probe of a run is the one with the least lethality when the plan checks lethality, else the one
that lags the medium most over the first step (largest ∫|T_medium − T| dt). The slowest unit's statistics are
those of the runs' slowest probes: mean, standard deviation and a lower one-sided tolerance bound
(:mod:`procplan.studies.tolerance`). Verdict: the bound (or, with a single run, the slowest probe) against
the requirement.

References
----------
Bigelow, W.D. et al., Heat penetration in processing canned foods, NCA Bulletin 16-L, 1920 (general method).
Ball, C.O., Olson, F.C.W., Sterilization in Food Technology, McGraw-Hill, 1957 (f, j, come-up time).
NIST/SEMATECH e-Handbook of Statistical Methods, §7.2.6.3 (one-sided tolerance bounds).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import pandas as pd

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.model import LethalityCheck, Plan
from procplan.studies.logger import LoggerData
from procplan.studies.tolerance import (
    DEFAULT_CONFIDENCE,
    DEFAULT_PROPORTION,
    TOLERANCE_MODELS,
    ToleranceBound,
    lower_tolerance_bound,
)
from procplan.studies.trial_map import PRODUCT_POSITIONS, ProbeMap, ProbeSpec

#: Change of the medium probe [K] from its first reading that marks the step start when none is given.
START_CHANGE_K = 1.0
#: Default distance from the medium temperature [K] at which the medium has come up (common practice).
COME_UP_TOLERANCE_K = 1.0
#: Straight-part settings for logger curves (readings carry noise of about 0.1 K): a point may lie 0.02 log
#: cycles off the line, and readings closer than 5 K to the medium are left out (0.1 K of noise is then at
#: most 0.009 log cycles).
FACTOR_TOLERANCE_LOG10 = 0.02
FACTOR_MIN_DIFFERENCE_K = 5.0
#: A straight part shorter than this [log cycles] makes f and j uncertain: the study says so.
MIN_STRAIGHT_CYCLES = 0.3


@dataclass(frozen=True)
class TrialRun:
    """One logger file of a trial: its name, data and (optionally) the logger time of the step start [s]."""

    name: str
    log: LoggerData
    step_start_s: float | None = None


@dataclass(frozen=True, eq=False)
class ProbeResult:
    """One product probe of one run.

    F_min : measured lethality over the whole record [min at T_ref, or equivalent min of a table];
    F_by_step_min : per plan step; passed : F ≥ required (None without a requirement); lag_K_min :
    ∫|T_medium − T| dt over the first step [K·min]; heating, cooling : CurveFactors or None; curve : DataFrame
    time_s (from the step start), measured_C, predicted_C, residual_K; rmse_K, bias_K, max_abs_residual_K :
    residual statistics (None without a prediction); notes : why a figure is missing
    """

    run: str
    channel: str
    piece: str
    position: str
    F_min: float | None
    F_by_step_min: tuple[float, ...]
    passed: bool | None
    lag_K_min: float
    heating: Any
    cooling: Any
    curve: pd.DataFrame
    rmse_K: float | None
    bias_K: float | None
    max_abs_residual_K: float | None
    formula: Any = None
    notes: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False)
class RunResult:
    """One run: its alignment, come-up time, probes and slowest probe."""

    name: str
    step_start_s: float
    step_start_from: str
    come_up_s: float | None
    start_C: float
    probes: tuple[ProbeResult, ...]
    slowest: str
    medium: pd.DataFrame | None
    prediction: Any
    notes: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False)
class TrialStudy:
    """A heat-penetration study: runs, the slowest probe across runs, the slowest unit's statistics and the
    verdict."""

    plan: Plan
    runs: tuple[RunResult, ...]
    slowest_run: str
    slowest_channel: str
    criterion: str
    lethality: Any
    required_F_min: float | None
    bound: ToleranceBound | None
    verdict: str
    passed: bool | None
    notes: tuple[str, ...] = field(default=())
    calibration: Any = None

    @property
    def probes(self) -> tuple[ProbeResult, ...]:
        return tuple(p for r in self.runs for p in r.probes)

    def all_notes(self) -> list[str]:
        """The study's notes, then each probe's, named by run and probe (what every front end lists)."""
        return list(self.notes) + [f"{p.run}, {p.channel}: {n}" for p in self.probes for n in p.notes]

    def slowest_per_run(self) -> list[ProbeResult]:
        return [next(p for p in r.probes if p.channel == r.slowest) for r in self.runs]

    def table(self) -> pd.DataFrame:
        """One row per probe (the figures every front end shows)."""
        from procplan.studies.trial_output import probe_table

        return probe_table(self)

    def to_dict(self) -> dict[str, Any]:
        """Plain data for JSON (through procplan.output.json_safe)."""
        from procplan.studies.trial_output import study_dict

        return study_dict(self)


# --- alignment --------------------------------------------------------------------------------------------
def _aligned(t: np.ndarray, temp: np.ndarray, start_s: float) -> tuple[np.ndarray, np.ndarray]:
    """The record from the step start, times from it; a reading interpolated at the start when the record
    began before it."""
    keep = t > start_s + 1e-9
    ts, ys = t[keep] - start_s, temp[keep]
    if t[0] <= start_s:
        ts = np.concatenate(([0.0], ts))
        ys = np.concatenate(([float(np.interp(start_s, t, temp))], ys))
    return ts, ys


def _step_start(run: TrialRun, pmap: ProbeMap, medium_ch: str | None) -> tuple[float, str]:
    if run.step_start_s is not None:
        return validate.number(f"{run.name}: step start", run.step_start_s, minimum=0.0, unit="s"), "given"
    if run.name in pmap.step_start_s:
        return pmap.step_start_s[run.name], "probe map"
    if medium_ch is not None:
        t, m = run.log.series(medium_ch)
        moved = np.flatnonzero(np.abs(m - m[0]) > START_CHANGE_K)
        if moved.size:
            return float(t[moved[0]]), f"first reading of medium probe {medium_ch} that moved"
    return 0.0, "first reading (no step start given and no medium probe)"


def _come_up(t: np.ndarray, m: np.ndarray, medium_C: float, tol_K: float) -> float | None:
    near = np.flatnonzero(np.abs(m - medium_C) <= tol_K)
    return float(t[near[0]]) if near.size else None


# --- per probe ----------------------------------------------------------------------------------------------
def _with_boundaries(t: np.ndarray, temp: np.ndarray, bounds_s: list[float]):
    """The curve with a reading interpolated at each step boundary inside it (temperature linear between
    readings, as the integral assumes, so the per-step lethalities add up to the whole)."""
    extra = [b for b in bounds_s if t[0] < b < t[-1] and not np.any(np.isclose(t, b, rtol=0, atol=1e-9))]
    if not extra:
        return t, temp
    tt = np.concatenate((t, extra))
    order = np.argsort(tt, kind="mergesort")
    return tt[order], np.concatenate((temp, np.interp(extra, t, temp)))[order]


def _lethality(basis, t, temp, bounds_s):
    if basis is None:
        return None, ()
    tt, yy = _with_boundaries(t, temp, bounds_s)
    cum = basis.cumulative_F_min(tt, yy)
    at = [float(np.interp(min(b, tt[-1]), tt, cum)) for b in [0.0, *bounds_s]]
    if tt[-1] > bounds_s[-1] + 1e-9:
        at[-1] = float(cum[-1])  # the record beyond the plan's end counts in the last step
    return float(cum[-1]), tuple(float(b - a) for a, b in zip(at[:-1], at[1:], strict=True))


def _factors(t, temp, steps, come_up_s, notes, fit):
    from procplan.studies.formula_method import cooling_factors, heating_factors

    heating = cooling = None
    s0 = steps[0]
    sel = t <= s0.end_s + 1e-9
    if s0.medium_C > temp[0] + 1.0:
        try:
            heating = heating_factors(t[sel], temp[sel], s0.medium_C, come_up_s=come_up_s or 0.0, **fit)
        except InvalidInputError as exc:
            notes.append(f"f_h, j_h not found: {exc}")
    cool = next((s for s in steps if s.medium_C < float(np.interp(s.start_s, t, temp)) - 1.0), None)
    if cool is not None:
        sel = (t >= cool.start_s - 1e-9) & (t <= cool.end_s + 1e-9)
        try:
            cooling = cooling_factors(t[sel] - cool.start_s, temp[sel], cool.medium_C, **fit)
        except InvalidInputError as exc:
            notes.append(f"f_c, j_c not found: {exc}")
    for cf in (heating, cooling):
        if cf is not None and (cf.window_s[1] - cf.window_s[0]) / cf.f_s < MIN_STRAIGHT_CYCLES:
            cycles = (cf.window_s[1] - cf.window_s[0]) / cf.f_s
            notes.append(
                f"the straight part of the {cf.kind} curve spans only {cycles:.2f} log cycles: f and j are "
                "uncertain (noise or a short record)"
            )
    return heating, cooling


@dataclass(frozen=True)
class _Step:
    start_s: float
    end_s: float
    medium_C: float


def _probe(run_name, spec: ProbeSpec, t, temp, ctx, come_up_s, prediction) -> ProbeResult:
    notes: list[str] = []
    steps = ctx["steps"]
    bounds = [s.end_s for s in steps]
    F, by_step = _lethality(ctx["basis"], t, temp, bounds)
    req = ctx["required"]
    passed = None if (F is None or req is None) else bool(F >= req)
    s0 = steps[0]
    sel = t <= s0.end_s
    gap, ts = np.abs(s0.medium_C - temp[sel]), t[sel]
    lag = float(np.sum(0.5 * (gap[1:] + gap[:-1]) * np.diff(ts)) / 60.0)  # trapezoid rule [K·min]
    heating, cooling = _factors(t, temp, steps, come_up_s, notes, ctx["fit"])
    formula = _formula(heating, t, temp, ctx, notes)
    curve = pd.DataFrame({"time_s": t, "measured_C": temp})
    rmse = bias = worst = None
    if prediction is not None:
        h = prediction.history
        pred = np.interp(t, h["time_s"].to_numpy(), h[f"{spec.position}_C"].to_numpy(), right=np.nan)
        curve["predicted_C"] = pred
        curve["residual_K"] = temp - pred
        r = curve["residual_K"].dropna().to_numpy()
        if r.size:
            rmse, bias, worst = float(np.sqrt(np.mean(r * r))), float(np.mean(r)), float(np.max(np.abs(r)))
    return ProbeResult(
        run_name,
        spec.channel,
        spec.piece,
        spec.position,
        F,
        by_step,
        passed,
        lag,
        heating,
        cooling,
        curve,
        rmse,
        bias,
        worst,
        formula,
        tuple(notes),
    )


def _formula(heating, t, temp, ctx, notes):
    basis, req = ctx["basis"], ctx["required"]
    if heating is None or basis is None or req is None:
        return None
    if basis.tabulated:
        notes.append("formula-method time not computed: the requirement is a table, not one z-value")
        return None
    from procplan.outcomes.lethality import time_to_lethality
    from procplan.studies.trial_formula import formula_process_time

    s0 = ctx["steps"][0]
    sel = t <= s0.end_s + 1e-9
    general = time_to_lethality(t[sel], temp[sel], basis.reference_C, basis.z_C, req)
    if heating.j < 1.0:
        notes.append(
            f"j_h {heating.j:.2f} below 1 (not a slowest point): the straight line runs ahead of the measured "
            "curve at first, so the formula method's time can be shorter than the general method's"
        )
    try:
        return formula_process_time(
            heating,
            req,
            basis.reference_C,
            basis.z_C,
            general_time_s=general.time_s if general.reached else None,
        )
    except InvalidInputError as exc:
        notes.append(f"formula-method time not computed: {exc}")
        return None


# --- the study ------------------------------------------------------------------------------------------------
def _context(plan: Plan, library, solver, lethality=None):
    from procplan.outcomes.lethality import lethality_basis
    from procplan.run.engine import run_plan

    nominal = run_plan(plan, library=library, solver=solver)
    steps = [
        _Step(float(sr.start_s), float(sr.end_s), float(np.mean(sr.surface.medium_C))) for sr in nominal.steps
    ]
    le = lethality if lethality is not None else plan.checks.lethality
    basis = None if le is None else lethality_basis(le.preset, le.reference_C, le.z_C, le.required_F_min)
    return {
        "nominal": nominal,
        "steps": steps,
        "basis": basis,
        "required": None if basis is None else basis.required_F_min,
        "point": "core" if le is None else le.point,
    }


def _predict(plan: Plan, start_C: float, library, solver, cache: dict):
    from procplan.run.engine import run_plan

    key = round(start_C, 3)
    if key not in cache:
        cache[key] = run_plan(
            replace(plan, start_temperature_C=key), library=library, solver=solver, assess=False
        )
    return cache[key]


def _run(run: TrialRun, pmap: ProbeMap, ctx, opts, cache) -> RunResult:
    specs = pmap.for_channels(run.log.channels)
    absent = [p.channel for p in pmap.probes if p.channel not in run.log.channels]
    notes = (f"{run.name}: probe(s) of the map not in this file: {', '.join(absent)}",) if absent else ()
    medium = next((p.channel for p in specs if p.position == "medium"), None)
    product = [p for p in specs if p.position in PRODUCT_POSITIONS]
    if not product:
        raise InvalidInputError(
            f"{run.name}: probes",
            [p.channel for p in specs],
            "at least one probe in the product (core, surface or mean)",
        )
    start_s, start_from = _step_start(run, pmap, medium)
    curves = {}
    for p in product:
        t, temp = _aligned(*run.log.series(p.channel), start_s)
        if t.size < 3:
            raise InvalidInputError(
                f"{run.name}: {p.channel}", f"{t.size} readings", "at least 3 after the step start"
            )
        curves[p.channel] = (t, temp)
    come_up = medium_frame = None
    if medium is not None:
        tm, m = _aligned(*run.log.series(medium), start_s)
        come_up = _come_up(tm, m, ctx["steps"][0].medium_C, opts["come_up_tolerance_K"])
        medium_frame = pd.DataFrame({"time_s": tm, "medium_C": m})
    start_C = float(np.mean([c[1][0] for c in curves.values()]))
    prediction = (
        _predict(opts["plan"], start_C, opts["library"], opts["solver"], cache) if opts["predict"] else None
    )
    probes = tuple(_probe(run.name, p, *curves[p.channel], ctx, come_up, prediction) for p in product)
    return RunResult(
        run.name,
        start_s,
        start_from,
        come_up,
        start_C,
        probes,
        _slowest(probes, ctx),
        medium_frame,
        prediction,
        notes,
    )


def _slowest(probes, ctx) -> str:
    cands = [p for p in probes if p.position == ctx["point"]] or list(probes)
    if ctx["basis"] is not None:
        return min(cands, key=lambda p: p.F_min).channel
    return max(cands, key=lambda p: p.lag_K_min).channel


def _verdict(req, bound, slowest: ProbeResult | None) -> tuple[str, bool | None]:
    if req is None or slowest is None:
        return (
            "no lethality requirement in the plan: the slowest probe is the one that lags the medium most",
            None,
        )
    if bound is None:
        ok = slowest.F_min >= req
        return (
            f"{'PASS' if ok else 'FAIL'}: the slowest probe's lethality {slowest.F_min:.3g} min against the required "
            f"{req:g} min (one run: no spread between runs, so no tolerance bound)",
            ok,
        )
    ok = bound.lower >= req
    return (
        f"{'PASS' if ok else 'FAIL'}: lower tolerance bound of the slowest unit's lethality {bound.lower:.3g} min "
        f"({bound.confidence:.0%} confidence, {bound.proportion:.0%} of units) against the required {req:g} min",
        ok,
    )


def trial_study(
    plan: Plan,
    runs,
    probe_map: ProbeMap | None = None,
    *,
    library=None,
    solver: str | None = None,
    proportion: float = DEFAULT_PROPORTION,
    confidence: float = DEFAULT_CONFIDENCE,
    model: str = "normal",
    come_up_tolerance_K: float = COME_UP_TOLERANCE_K,
    tolerance_log10: float = FACTOR_TOLERANCE_LOG10,
    min_difference_K: float = FACTOR_MIN_DIFFERENCE_K,
    predict: bool = True,
    fit: tuple[str, ...] = (),
    lethality=None,
) -> TrialStudy:
    """Analyse a heat-penetration trial against its plan.

    Parameters
    ----------
    plan : the plan the trial ran (any number of steps; its lethality check, if any, judges the probes)
    runs : TrialRun objects (or LoggerData, named by their source), one per logger file
    probe_map : channels → pieces and positions, and step starts (default: every channel a core probe)
    library, solver : passed to run_plan for the prediction
    proportion, confidence, model : the lower tolerance bound of the slowest unit's lethality
    come_up_tolerance_K : the medium has come up when within this of the first step's medium [K]
    tolerance_log10, min_difference_K : the straight part of the semi-log curves (see
        :func:`procplan.studies.formula_method.curve_factors`)
    predict : overlay the plan's prediction on every probe (one run of the plan per distinct start)
    fit : parameters to fit to every product probe at once over the first step, e.g. ("h",) or
        ("h", "alpha_factor") (:func:`procplan.studies.calibrate_probes.calibrate_probes`); () fits nothing
    lethality : a LethalityCheck that judges the probes instead of the plan's own (e.g. a z-value
        requirement, which the formula method needs, where the plan checks a table)

    Returns
    -------
    TrialStudy
    """
    runs = [r if isinstance(r, TrialRun) else TrialRun(getattr(r, "source", "run"), r) for r in runs]
    if not runs:
        raise InvalidInputError("runs", 0, "at least one logger file")
    for r in runs:
        if not isinstance(r.log, LoggerData):
            raise InvalidInputError("runs", type(r.log).__name__, "logger data from procplan.studies.logger")
    names = [r.name for r in runs]
    if len(set(names)) != len(names):
        raise InvalidInputError("runs", names, "runs with different names")
    p = validate.number("proportion", proportion, minimum=0.5, maximum=0.9999)
    g = validate.number("confidence", confidence, minimum=0.5, maximum=0.9999)
    validate.choice("model", model, TOLERANCE_MODELS)
    tol = validate.positive("come_up_tolerance_K", come_up_tolerance_K, "K")
    pmap = probe_map or ProbeMap()
    if library is None and (any(s.equipment for s in plan.steps) or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    if lethality is not None and not isinstance(lethality, LethalityCheck):
        raise InvalidInputError("lethality", type(lethality).__name__, "a LethalityCheck (procplan.model)")
    ctx = _context(plan, library, solver, lethality)
    ctx["fit"] = {
        "tolerance_log10": validate.positive("tolerance_log10", tolerance_log10),
        "min_difference_C": validate.positive("min_difference_K", min_difference_K, "K"),
    }
    opts = {
        "plan": plan,
        "library": library,
        "solver": solver,
        "predict": predict,
        "come_up_tolerance_K": tol,
    }
    cache: dict = {}
    results = tuple(_run(r, pmap, ctx, opts, cache) for r in runs)
    study = _summarise(plan, results, ctx, p, g, model)
    if fit:
        from procplan.studies.calibrate_probes import ProbeCurve, calibrate_probes

        curves = [
            ProbeCurve(f"{r.name} {x.channel}", x.curve["time_s"], x.curve["measured_C"], x.position)
            for r in results
            for x in r.probes
        ]
        study = replace(
            study, calibration=calibrate_probes(plan, curves, fit=tuple(fit), library=library, solver=solver)
        )
    return study


def _summarise(plan, results, ctx, p, g, model) -> TrialStudy:
    notes = [n for r in results for n in r.notes]
    slow = [next(x for x in r.probes if x.channel == r.slowest) for r in results]
    req, basis = ctx["required"], ctx["basis"]
    if basis is not None:
        worst_i = int(np.argmin([x.F_min for x in slow]))
        criterion = "least measured lethality"
    else:
        worst_i = int(np.argmax([x.lag_K_min for x in slow]))
        criterion = "largest lag behind the medium over the first step"
    bound = None
    if basis is not None and len(results) >= 2:
        bound = lower_tolerance_bound([x.F_min for x in slow], proportion=p, confidence=g, model=model)
    elif basis is not None:
        notes.append("one run: the slowest unit's spread and tolerance bound need at least two runs")
    if not any(r.come_up_s is not None for r in results):
        notes.append(
            "no medium probe reached the medium temperature: come-up time taken as 0 (corrected zero at the step start)"
        )
    verdict, passed = _verdict(req, bound, slow[worst_i] if basis is not None else None)
    return TrialStudy(
        plan,
        results,
        results[worst_i].name,
        slow[worst_i].channel,
        criterion,
        basis,
        req,
        bound,
        verdict,
        passed,
        tuple(notes),
    )
