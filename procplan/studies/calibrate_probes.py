"""Fit the effective h (and optionally a diffusivity factor) of a plan's first step to several probes at once.

Each probe is a measured curve from the step start at a known position (core or surface of its piece) with its
own start temperature (its first reading). One h (and one factor f_α on the diffusivity) is shared by all
probes; the residuals of all probes are fitted together by nonlinear least squares with the same parameters,
covariance and Student-t intervals as the single-probe fit (:mod:`procplan.studies.calibrate`; Bates & Watts
1988, §2.3).

Models. When the plan's first step runs on the exact solver with a constant surface, each probe is the exact
product solution at its position (Incropera §5.5–5.8) with the engine's effective properties at that probe's
start temperature; the surface position is the centre of the face nearest the thermal centre. Otherwise
each probe is :func:`procplan.run.engine.run_plan` of the first step with the trial h, from the probe's start
temperature (rounded to 0.5 K so that probes of nearly equal start share a run), read at its position, and
only h is fitted.

References
----------
Bates, D.M. & Watts, D.G., Nonlinear Regression Analysis and its Applications, Wiley, 1988, §2.3.
Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §5.5–5.8.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.model import Plan
from procplan.studies.calibrate import MIN_SAMPLES, _fit, _interval

#: Parameters a multi-probe fit can estimate.
PROBE_FIT_PARAMETERS = {
    "h": "effective surface coefficient h, packaging included [W/m²K]",
    "alpha_factor": "factor on the thermal diffusivity (exact solver only) [-]",
}
#: Positions a probe can have in the fit.
FIT_POSITIONS = ("core", "surface", "mean")
#: Start temperatures closer than this [K] share one engine run in the general model.
START_ROUNDING_K = 0.5


@dataclass(frozen=True)
class ProbeCurve:
    """A measured curve for the fit: label, times from the step start [s], readings [°C], position."""

    label: str
    time_s: Any
    temperature_C: Any
    position: str = "core"


@dataclass(frozen=True, eq=False)
class ProbeCalibration:
    """The shared h (and f_α) with 95 % intervals, and each probe's RMS residual.

    h_W_m2K, h_ci95 : fitted effective h and its interval; alpha_factor, alpha_ci95 : None unless fitted;
    rmse_K : over all probes; rmse_by_probe_K : label → RMS residual [K]; plan_h_W_m2K : the plan's
    effective h of the step; method : the model used
    """

    h_W_m2K: float
    h_ci95: tuple[float, float]
    alpha_factor: float | None
    alpha_ci95: tuple[float, float] | None
    rmse_K: float
    rmse_by_probe_K: dict[str, float]
    n_points: int
    plan_h_W_m2K: float
    method: str
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        return {
            "h_W_m2K": self.h_W_m2K,
            "h_ci95": list(self.h_ci95),
            "alpha_factor": self.alpha_factor,
            "alpha_ci95": list(self.alpha_ci95) if self.alpha_ci95 else None,
            "rmse_K": self.rmse_K,
            "rmse_by_probe_K": dict(self.rmse_by_probe_K),
            "n_points": self.n_points,
            "plan_h_W_m2K": self.plan_h_W_m2K,
            "method": self.method,
            "notes": list(self.notes),
        }


def _curves(curves, end_s: float) -> list[tuple[str, np.ndarray, np.ndarray, str]]:
    from procplan.outcomes.targets import history_arrays

    out = []
    for c in curves:
        validate.choice(f"{c.label}.position", c.position, FIT_POSITIONS)
        t, temp = history_arrays(c.time_s, c.temperature_C)
        keep = (t >= 0.0) & (t <= end_s + 1e-9)
        if np.count_nonzero(keep) < MIN_SAMPLES:
            raise InvalidInputError(
                c.label, f"{np.count_nonzero(keep)} readings", f"at least {MIN_SAMPLES} in the first step"
            )
        out.append((c.label, t[keep], temp[keep], c.position))
    if not out:
        raise InvalidInputError("curves", 0, "at least one probe curve")
    return out


def _exact_models(plan: Plan, nominal, data):
    from procplan.studies.calibrate import _exact_model

    models = []
    for _, _, temp, pos in data:
        model, length = _exact_model(plan, nominal, float(temp[0]))
        off = length if pos == "surface" else 0.0
        models.append(lambda t, h, fa, _m=model, _o=off: _m(t, h, fa, _o))
    return models


def _general_models(plan: Plan, nominal, library, solver, n_nodes, data):
    from procplan.run.engine import run_plan

    step = plan.steps[0]
    bare = replace(plan, product=replace(plan.product, packaging=()), steps=(plan.steps[0],))
    change: dict[str, Any] = {"emissivity": None, "surroundings_C": None, "stop_when_core_C": None}
    base = bare.with_step(0, **change)
    cache: dict[tuple[float, float], Any] = {}
    end = max(float(t[-1]) for _, t, _, _ in data)
    medium = float(np.mean(nominal.steps[0].surface.medium_C)) if step.equipment is not None else None

    def history(start, h):
        key = (round(start / START_ROUNDING_K) * START_ROUNDING_K, float(h))
        if key not in cache:
            kw = {"h_W_m2K": float(h), "duration_s": end + 1.0}
            if medium is not None:
                kw.update(medium_C=medium, equipment=None, settings=(), settings_profile=())
            p = replace(base.with_step(0, **kw), start_temperature_C=key[0])
            if len(cache) > 64:
                cache.clear()
            cache[key] = run_plan(p, library=library, solver=solver, n_nodes=n_nodes, assess=False).history
        return cache[key]

    models = []
    for _, _, temp, pos in data:
        start = float(temp[0])

        def model(t, h, fa, _s=start, _p=pos):
            hist = history(_s, h)
            return np.interp(t, hist["time_s"].to_numpy(), hist[f"{_p}_C"].to_numpy())

        models.append(model)
    return models


def calibrate_probes(
    plan: Plan,
    curves,
    *,
    fit: tuple[str, ...] = ("h",),
    library=None,
    solver: str | None = None,
    n_nodes=None,
) -> ProbeCalibration:
    """Fit one effective h (and optionally f_α) of the plan's first step to several probes together.

    Parameters
    ----------
    plan : the plan the probes recorded (its first step is fitted; the readings after it are not used)
    curves : ProbeCurve objects, times from the step start
    fit : keys of PROBE_FIT_PARAMETERS ("h" always; "alpha_factor" needs the exact solver)
    library, solver, n_nodes : passed to run_plan
    """
    from procplan.run.engine import run_plan

    fit = tuple(dict.fromkeys(("h", *fit)))
    for name in fit:
        validate.choice("fit", name, PROBE_FIT_PARAMETERS)
    one = replace(plan, steps=(plan.steps[0],))
    if library is None and (plan.steps[0].equipment or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    nominal = run_plan(one, library=library, solver=solver, n_nodes=n_nodes)
    sr = nominal.steps[0]
    data = _curves(curves, float(sr.end_s))
    plan_h = float(np.mean(sr.surface.h_W_m2K))
    exact = sr.solver == "exact" and sr.surface.constant and all(d[3] != "mean" for d in data)
    if exact:
        models, method = _exact_models(one, nominal, data), "exact solution at each probe's position"
    elif set(fit) - {"h"}:
        raise InvalidInputError(
            "fit", fit, "('h',) for this plan", "the diffusivity factor needs the exact solution"
        )
    else:
        models = _general_models(one, nominal, library, solver, n_nodes, data)
        method = "run_plan of the first step with the effective h replaced, at each probe's position"
    sizes = [t.size for _, t, _, _ in data]
    t_all = np.concatenate([t for _, t, _, _ in data])
    y_all = np.concatenate([y for _, _, y, _ in data])
    cuts = np.cumsum(sizes)[:-1]

    def model(_t, h, fa, _off):
        parts = np.split(t_all, cuts)
        return np.concatenate([m(tp, h, fa) for m, tp in zip(models, parts, strict=True)])

    f = _fit(model, t_all, y_all, list(fit), plan_h, 1.0, exact, "curves")
    est = dict(zip(f.names, f.x, strict=True))
    res = np.split(f.residuals, cuts)
    return ProbeCalibration(
        h_W_m2K=math.exp(est["h"]),
        h_ci95=_interval(f, "h", True),
        alpha_factor=math.exp(est["alpha_factor"]) if "alpha_factor" in est else None,
        alpha_ci95=_interval(f, "alpha_factor", True) if "alpha_factor" in est else None,
        rmse_K=math.sqrt(float(f.residuals @ f.residuals) / f.residuals.size),
        rmse_by_probe_K={d[0]: math.sqrt(float(r @ r) / r.size) for d, r in zip(data, res, strict=True)},
        n_points=int(f.residuals.size),
        plan_h_W_m2K=plan_h,
        method=method,
        notes=f.notes,
    )
