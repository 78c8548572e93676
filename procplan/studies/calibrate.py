"""Calibrate a plan against a measured temperature curve: fit the effective h (and optionally a diffusivity
factor and a probe-position offset) by nonlinear least squares, with confidence intervals.

Model. For a single step with a uniform start, a constant medium and h and the engine's exact solver, the
probe temperature is the exact product solution at the probe position (Incropera §5.5–5.8,
:func:`procplan.conduction.product.exact_temperature_at_C`) with the engine's effective properties
(k at the mean of start and medium temperatures, secant c_p); the diffusivity factor f_α divides ρc_p (so
α·f_α with k, and so Bi, unchanged); the probe offset moves the probe from the thermal centre along the
shortest conduction axis. Otherwise the model is :func:`procplan.run.engine.run_plan` with the step's h replaced,
read at the core, and only h is fitted.

Which h. Every path fits the effective h, the coefficient the solvers apply at the product surface: convection
and radiation from the medium with the packaging resistance in series (:func:`procplan.surface.layers.h_effective`).
It is the plan's h it is compared with and the h a saved measurement replaces, so the packaging counts once:
the general model runs the trial h on the product without its packaging layers.

Fit. scipy.optimize.least_squares on the residuals T_model − T_measured with parameters (ln h, ln f_α,
offset fraction); the covariance is s² (JᵀJ)⁻¹ from the Jacobian at the solution, s² = RSS/(n − p), and the
95 % intervals use Student's t with n − p degrees of freedom (h and f_α intervals are exp of the intervals
of their logarithms, so they stay positive).

References
----------
Bates, D.M. & Watts, D.G., Nonlinear Regression Analysis and its Applications, Wiley, 1988, §2.3
(linear-approximation inference regions).
Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §5.5–5.8.
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats
from scipy.optimize import least_squares

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.model import Load, Plan
from procplan.output.json_safe import json_safe
from procplan.studies.logger import LoggerData

#: Parameters that can be fitted.
FIT_PARAMETERS: dict[str, str] = {
    "h": "effective surface coefficient h, packaging included [W/m²K]",
    "alpha_factor": "factor on the thermal diffusivity (ρc_p divided by it; k and Bi unchanged) [-]",
    "offset_mm": "probe distance from the thermal centre along the shortest axis [mm]",
}


#: Fewest samples and smallest temperature change [K] of a curve that can determine h.
MIN_SAMPLES = 5
MIN_CHANGE_K = 0.5

#: What the fitted and saved h is.
H_BASIS = "effective"
H_BASIS_TEXT = (
    "effective h: convection and radiation from the medium with the product's packaging resistance in "
    "series (the coefficient the solvers apply at the product surface; a saved measurement replaces it)"
)


@dataclass(frozen=True, eq=False)
class Calibration:
    """The fitted parameters with 95 % confidence intervals, residuals and the measured-curve checks.

    h_W_m2K, h_ci95 : fitted effective h (:data:`H_BASIS_TEXT`) and its interval; packaging_resistance_m2K_W :
    the packaging resistance inside it; alpha_factor, alpha_ci95; offset_mm, offset_ci95 (None when
    not fitted); rmse_K : root-mean-square residual; residuals : DataFrame time_s, measured_C, fitted_C,
    predicted_C (the plan as written), residual_K; prediction : the plan's own run (for the overlay);
    measured : outcomes from the measured curve itself (rule check, F)
    """

    channel: str
    method: str
    fitted: tuple[str, ...]
    h_W_m2K: float
    h_ci95: tuple[float, float]
    alpha_factor: float | None
    alpha_ci95: tuple[float, float] | None
    offset_mm: float | None
    offset_ci95: tuple[float, float] | None
    rmse_K: float
    n_points: int
    residuals: pd.DataFrame
    prediction: Any
    measured: dict[str, Any]
    plan_h_W_m2K: float
    source: str
    notes: tuple[str, ...] = field(default=())
    packaging_resistance_m2K_W: float = 0.0
    h_basis: str = H_BASIS

    @property
    def h_outside_W_m2K(self) -> float | None:
        """The medium-side h (convection and radiation) that the fitted effective h implies through this
        packaging, 1/(1/h − R); None without packaging or when h ≥ 1/R (the packaging alone would conduct less)."""
        r = self.packaging_resistance_m2K_W
        if r <= 0.0 or self.h_W_m2K * r >= 1.0:
            return None
        return 1.0 / (1.0 / self.h_W_m2K - r)

    def to_dict(self) -> dict[str, Any]:
        return {
            "channel": self.channel,
            "method": self.method,
            "fitted": list(self.fitted),
            "h_W_m2K": self.h_W_m2K,
            "h_basis": self.h_basis,
            "h_basis_text": H_BASIS_TEXT,
            "packaging_resistance_m2K_W": self.packaging_resistance_m2K_W,
            "h_outside_W_m2K": self.h_outside_W_m2K,
            "h_ci95": list(self.h_ci95),
            "alpha_factor": self.alpha_factor,
            "alpha_ci95": list(self.alpha_ci95) if self.alpha_ci95 else None,
            "offset_mm": self.offset_mm,
            "offset_ci95": list(self.offset_ci95) if self.offset_ci95 else None,
            "rmse_K": self.rmse_K,
            "n_points": self.n_points,
            "plan_h_W_m2K": self.plan_h_W_m2K,
            "measured": json_safe(self.measured),
            "source": self.source,
            "notes": list(self.notes),
        }


def measured_outcomes(time_s, temperature_C, plan: Plan, library=None) -> dict[str, Any]:
    """Rule check and lethality computed directly from a measured curve (procplan.outcomes), per the plan's
    checks: ``{"rule": RuleCheck | None, "rule_passed", "rule_margin_min", "F_min", "lethality_passed"}``."""
    from procplan import outcomes as oc

    t, temp = oc.history_arrays(time_s, temperature_C)
    out: dict[str, Any] = {
        "rule": None,
        "rule_passed": None,
        "rule_margin_min": None,
        "F_min": None,
        "lethality_passed": None,
    }
    ch = plan.checks
    if ch.cooling_rule and library is not None and ch.cooling_rule in library.rules:
        rc = oc.check_rule(library.rules[ch.cooling_rule], t - t[0], temp)
        out.update(rule=rc, rule_passed=rc.passed, rule_margin_min=rc.margin_min)
    le = ch.lethality
    if le is not None:
        basis = oc.lethality_basis(le.preset, le.reference_C, le.z_C, le.required_F_min)
        req = basis.required_F_min
        f = float(basis.cumulative_F_min(t, temp)[-1])
        out.update(F_min=f, lethality_passed=None if not req else f >= req)
    return out


def _exact_model(plan: Plan, nominal, start_C: float):
    from procplan.conduction.product import exact_temperature_at_C

    sr = nominal.steps[0]
    medium = float(sr.surface.medium_C[0])
    props = nominal.properties
    k = float(props.conductivity(0.5 * (start_C + medium)))
    rho = props.mass_density_kg_m3
    cp = (
        float((props.enthalpy(medium) - props.enthalpy(start_C)) / (medium - start_C))
        if abs(medium - start_C) > 1e-9
        else float(props.apparent_cp(start_C))
    )
    g = plan.product.geometry
    axes = g.axes
    j = int(np.argmin([a.length_m for a in axes]))
    length = axes[j].length_m

    def model(t, h, f_alpha, offset_m):
        pos = [0.0] * len(axes)
        pos[j] = min(max(offset_m / length, 0.0), 1.0)
        return exact_temperature_at_C(g, k, rho / f_alpha, cp, h, start_C, medium, t, tuple(pos))

    return model, length


def _measured_curve(log: LoggerData, channel: str | None, time_offset_s: float, n_params: int):
    """(channel, t_all, temp_all, t, temp): the whole channel and the part after the step started."""
    channel = channel or log.channels[0]
    t_all, temp_all = log.series(channel)
    off = validate.number("time_offset_s", time_offset_s, minimum=0.0, unit="s")
    keep = t_all >= off
    t, temp = t_all[keep] - off, temp_all[keep]
    need = max(MIN_SAMPLES, n_params + 2)
    if t.size < need:
        raise InvalidInputError(
            f"log.{channel}", f"{t.size} samples", f"at least {need} samples after time_offset_s"
        )
    change = float(np.max(temp) - np.min(temp))
    if change < MIN_CHANGE_K:
        raise InvalidInputError(
            f"log.{channel}",
            f"a change of {change:.3g} K",
            f"a curve that changes by at least {MIN_CHANGE_K} K (a flat curve cannot determine h)",
        )
    return channel, t_all, temp_all, t, temp


_SET_POINT_NOTE = (
    "fitted with the machine's medium held at its set point: where the logged batch warmed or cooled the "
    "medium, that drift is taken into the fitted h (lower for a chiller or heater that could not hold), "
    "which errs toward longer predicted times"
)


def _general_model(plan_s: Plan, sr, library, solver, n_nodes):
    """The engine at the core with the step's effective h replaced by a trial value.

    The trial h is applied as is at the product surface: the product runs without its packaging layers
    (their resistance is already inside an effective h) and without a step emissivity, so the fitted h
    means what the plan's effective h means.
    """
    from dataclasses import replace

    from procplan.run.engine import run_plan

    step = plan_s.steps[0]
    bare = replace(plan_s, product=replace(plan_s.product, packaging=()))
    change: dict[str, Any] = {"emissivity": None, "surroundings_C": None, "stop_when_core_C": None}
    if step.equipment is not None:
        change.update(
            medium_C=float(np.mean(sr.surface.medium_C)), equipment=None, settings=(), settings_profile=()
        )
    base = bare.with_step(0, **change)

    def model(tt, h, f_alpha, offset_m):
        p = base.with_step(0, h_W_m2K=float(h), duration_s=max(float(tt[-1]) + 1.0, 1.0))
        r = run_plan(p, library=library, solver=solver, n_nodes=n_nodes)
        return np.interp(tt, r.history["time_s"].to_numpy(), r.history["core_C"].to_numpy())

    notes = []
    if step.equipment is not None:
        notes.append(
            "the machine step is modelled as a given effective h at the machine's medium temperature"
        )
    return model, plan_s.product.geometry.conduction_length_m, notes


def _nominal(plan: Plan, start_C: float, library, solver, n_nodes):
    from dataclasses import replace

    from procplan.run.engine import run_plan

    # The h is fitted with the medium at its set point (an empty machine): the fitted h is a property of the
    # surface, and a run that loads the machine then adds the medium's drift once, from the plant model.
    plan_s = replace(plan, start_temperature_C=start_C, load=Load(model="set-point"))
    if library is None and (plan.steps[0].equipment or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    return plan_s, library, run_plan(plan_s, library=library, solver=solver, n_nodes=n_nodes)


@dataclass(frozen=True)
class _Fit:
    names: tuple[str, ...]
    x: np.ndarray
    sd: np.ndarray
    tq: float
    residuals: np.ndarray
    notes: tuple[str, ...]


def _fit(model, t, temp, names, h0, length, exact, field_name) -> _Fit:
    def unpack(p):
        d = dict(zip(names, p, strict=True))
        return math.exp(d["h"]), math.exp(d.get("alpha_factor", 0.0)), d.get("offset_mm", 0.0) * length

    def resid(p):
        return model(t, *unpack(p)) - temp

    x0 = [math.log(h0)] + [0.0 if n == "alpha_factor" else 0.2 for n in names[1:]]
    lo = [math.log(0.1)] + [math.log(0.2) if n == "alpha_factor" else 0.0 for n in names[1:]]
    hi = [math.log(1e5)] + [math.log(5.0) if n == "alpha_factor" else 0.95 for n in names[1:]]
    x0[0] = min(max(x0[0], lo[0]), hi[0])
    sol = least_squares(resid, x0, bounds=(lo, hi), x_scale="jac", diff_step=1e-6 if exact else 1e-4)
    r = sol.fun
    dof = max(r.size - len(names), 1)
    notes = []
    try:
        cov = float(r @ r) / dof * np.linalg.inv(sol.jac.T @ sol.jac)
        sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    except np.linalg.LinAlgError:
        sd = np.full(len(names), np.inf)
        notes.append("the Jacobian is singular: the parameters cannot be told apart from this curve")
    tq = float(stats.t.ppf(0.975, dof))
    if not np.isfinite(sd[0]) or tq * sd[0] > 20.0:  # an interval of h beyond a factor e^20: not determined
        raise InvalidInputError(
            field_name, "a curve insensitive to h", "a curve that determines h (longer, or further from flat)"
        )
    return _Fit(tuple(names), sol.x, sd, tq, r, tuple(notes))


def _interval(f: _Fit, name: str, log_scale: bool, scale: float = 1.0):
    i = f.names.index(name)
    lo, hi = f.x[i] - f.tq * f.sd[i], f.x[i] + f.tq * f.sd[i]
    if log_scale:
        return (math.exp(min(lo, 700.0)), math.exp(min(hi, 700.0)))
    return (max(lo, 0.0) * scale, hi * scale)


def calibrate(
    plan: Plan,
    log: LoggerData,
    *,
    channel: str | None = None,
    fit: tuple[str, ...] = ("h",),
    library=None,
    start_C: float | None = None,
    time_offset_s: float = 0.0,
    h0_W_m2K: float | None = None,
    solver: str | None = None,
    n_nodes=None,
) -> Calibration:
    """Fit the plan's first step to a measured curve.

    The fitted h is the effective h (:data:`H_BASIS_TEXT`): the same quantity as the plan's
    ``plan_h_W_m2K`` and as a measurement saved with :func:`fitted_h_record`, so calibrating on the plan's own
    prediction returns the plan's h.

    Parameters
    ----------
    plan : a one-step plan (the process the logger recorded)
    log : the logger data (read and preferably cleaned, see :mod:`procplan.studies.logger`)
    channel : the probe column (default: the first)
    fit : parameters to fit, keys of FIT_PARAMETERS ("h" always)
    library : resolves the step's machine and the plan's rule
    start_C : uniform start temperature [°C] (default: the first measured reading)
    time_offset_s : logger time at which the step started [s]; earlier samples are ignored
    h0_W_m2K : starting guess (default: the plan's effective h)
    solver, n_nodes : passed to run_plan for the prediction (and the general model)

    Returns
    -------
    Calibration
    """
    if not isinstance(log, LoggerData):
        raise InvalidInputError(
            "log", type(log).__name__, "LoggerData from procplan.studies.logger.read_logger"
        )
    if len(plan.steps) != 1:
        raise InvalidInputError("plan.steps", len(plan.steps), "one step (the recorded process)")
    fit = tuple(dict.fromkeys(("h", *fit)))
    for name in fit:
        validate.choice("fit", name, FIT_PARAMETERS)
    channel, t_all, temp_all, t, temp = _measured_curve(log, channel, time_offset_s, len(fit))
    t0 = float(temp[0]) if start_C is None else validate.number("start_C", start_C, unit="°C")
    plan_s, library, nominal = _nominal(plan, t0, library, solver, n_nodes)
    sr = nominal.steps[0]
    plan_h = float(np.mean(sr.surface.h_W_m2K))
    h0 = validate.positive("h0_W_m2K", h0_W_m2K, "W/m²K") if h0_W_m2K is not None else plan_h
    exact = sr.solver == "exact" and sr.surface.constant
    if exact:
        model, length = _exact_model(plan_s, nominal, t0)
        method, notes = "exact solution at the probe position", []
    elif set(fit) - {"h"}:
        raise InvalidInputError(
            "fit",
            fit,
            "('h',) for this plan",
            "diffusivity and probe offset need the exact solution (one step, constant properties)",
        )
    else:
        model, length, notes = _general_model(plan_s, sr, library, solver, n_nodes)
        method = "run_plan (core) with the step's effective h replaced"
    if plan.load.model == "loaded" and plan.steps[0].equipment is not None:
        notes = [*notes, _SET_POINT_NOTE]
    f = _fit(model, t, temp, list(fit), h0, length, exact, f"log.{channel}")
    return _result(
        f,
        model,
        t,
        temp,
        length,
        nominal,
        plan_h,
        channel,
        method,
        notes,
        log.source,
        t_all,
        temp_all,
        plan,
        library,
    )


def _result(
    f, model, t, temp, length, nominal, plan_h, channel, method, notes, source, t_all, temp_all, plan, library
) -> Calibration:
    est = dict(zip(f.names, f.x, strict=True))
    h = math.exp(est["h"])
    fa = math.exp(est.get("alpha_factor", 0.0))
    fitted_curve = model(t, h, fa, est.get("offset_mm", 0.0) * length)
    hist = nominal.history
    pred = np.interp(t, hist["time_s"].to_numpy(), hist["core_C"].to_numpy(), right=np.nan)
    res_frame = pd.DataFrame(
        {
            "time_s": t,
            "measured_C": temp,
            "fitted_C": fitted_curve,
            "predicted_C": pred,
            "residual_K": temp - fitted_curve,
        }
    )
    offset = est.get("offset_mm")
    breakdown = nominal.steps[0].surface.breakdown
    return Calibration(
        channel=channel,
        method=method,
        fitted=f.names,
        h_W_m2K=h,
        h_ci95=_interval(f, "h", True),
        alpha_factor=fa if "alpha_factor" in est else None,
        alpha_ci95=_interval(f, "alpha_factor", True) if "alpha_factor" in est else None,
        offset_mm=offset * length * 1000.0 if offset is not None else None,
        offset_ci95=_interval(f, "offset_mm", False, length * 1000.0) if offset is not None else None,
        rmse_K=math.sqrt(float(f.residuals @ f.residuals) / f.residuals.size),
        n_points=int(f.residuals.size),
        residuals=res_frame,
        prediction=nominal,
        measured=measured_outcomes(t_all, temp_all, plan, library),
        plan_h_W_m2K=plan_h,
        source=source,
        notes=tuple(notes) + f.notes,
        packaging_resistance_m2K_W=float(breakdown.packaging_resistance_m2K_W or 0.0),
    )


def fitted_h_record(
    calibration: Calibration,
    *,
    product: str,
    equipment: str | None = None,
    settings: dict[str, Any] | None = None,
    data_source: str | None = None,
    date: str | None = None,
) -> dict[str, Any]:
    """A measured-value record of the fitted h the app can save (plain data, TOML/JSON ready).

    >>> import pandas as pd
    >>> cal = Calibration("core", "exact", ("h",), 21.5, (20.9, 22.1), None, None, None, None, 0.2, 40,
    ...     pd.DataFrame(), None, {}, 25.0, "trial.csv")
    >>> rec = fitted_h_record(cal, product="chicken-roulade", equipment="chiller-b2", date="2026-01-15")
    >>> rec["quantity"], rec["value"], rec["ci95"], rec["date"]
    ('h_W_m2K', 21.5, [20.9, 22.1], '2026-01-15')
    """
    if not isinstance(calibration, Calibration):
        raise InvalidInputError("calibration", type(calibration).__name__, "a Calibration")
    d = date or _dt.date.today().isoformat()
    try:
        _dt.date.fromisoformat(d)
    except (TypeError, ValueError):
        raise InvalidInputError("date", d, "an ISO date YYYY-MM-DD") from None
    return {
        "quantity": "h_W_m2K",
        "value": calibration.h_W_m2K,
        "ci95": [calibration.h_ci95[0], calibration.h_ci95[1]],
        "unit": "W/m²K",
        "h_basis": calibration.h_basis,
        "basis": f"measured: {H_BASIS_TEXT}, fitted to a logged temperature curve",
        "packaging_resistance_m2K_W": calibration.packaging_resistance_m2K_W,
        "method": f"least squares ({calibration.method}); fitted {', '.join(calibration.fitted)}",
        "rmse_K": calibration.rmse_K,
        "n_points": calibration.n_points,
        "channel": calibration.channel,
        "product": product,
        "equipment": equipment,
        "settings": dict(settings or {}),
        "alpha_factor": calibration.alpha_factor,
        "offset_mm": calibration.offset_mm,
        "data_source": data_source or calibration.source,
        "date": d,
    }
