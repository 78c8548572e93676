"""Calibrate a plan against a measured temperature curve: fit the effective h (and optionally a diffusivity
factor and a probe-position offset) by nonlinear least squares, with confidence intervals.

Model. For a single step with a uniform start, a constant medium and h and the engine's exact solver, the
probe temperature is the exact product solution at the probe position (Incropera §5.5–5.8,
:func:`procplan.conduction.product.exact_temperature_at_C`) with the engine's effective properties
(k at the mean of start and medium temperatures, secant c_p); the diffusivity factor f_α divides ρc_p (so
α·f_α with k, and so Bi, unchanged); the probe offset moves the probe from the thermal centre along the
shortest conduction axis. Otherwise the model is :func:`procplan.run.engine.run_plan` with the step's h replaced,
read at the core, and only h is fitted.

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
from procplan.model import Plan
from procplan.studies.logger import LoggerData

#: Parameters that can be fitted.
FIT_PARAMETERS: dict[str, str] = {
    "h": "effective surface coefficient h [W/m²K]",
    "alpha_factor": "factor on the thermal diffusivity (ρc_p divided by it; k and Bi unchanged) [-]",
    "offset_mm": "probe distance from the thermal centre along the shortest axis [mm]",
}


@dataclass(frozen=True, eq=False)
class Calibration:
    """The fitted parameters with 95 % confidence intervals, residuals and the measured-curve checks.

    h_W_m2K, h_ci95 : fitted h and its interval; alpha_factor, alpha_ci95; offset_mm, offset_ci95 (None when
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

    def to_dict(self) -> dict[str, Any]:
        return {
            "channel": self.channel,
            "method": self.method,
            "fitted": list(self.fitted),
            "h_W_m2K": self.h_W_m2K,
            "h_ci95": list(self.h_ci95),
            "alpha_factor": self.alpha_factor,
            "alpha_ci95": list(self.alpha_ci95) if self.alpha_ci95 else None,
            "offset_mm": self.offset_mm,
            "offset_ci95": list(self.offset_ci95) if self.offset_ci95 else None,
            "rmse_K": self.rmse_K,
            "n_points": self.n_points,
            "plan_h_W_m2K": self.plan_h_W_m2K,
            "measured": _plain(self.measured),
            "source": self.source,
            "notes": list(self.notes),
        }


def _plain(x):
    if isinstance(x, dict):
        return {k: _plain(v) for k, v in x.items()}
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, np.floating):
        return float(x)
    return x


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

    Parameters
    ----------
    plan : a one-step plan (the process the logger recorded)
    log : the logger data (read and preferably cleaned, see :mod:`procplan.studies.logger`)
    channel : the probe column (default: the first)
    fit : parameters to fit, keys of FIT_PARAMETERS ("h" always)
    library : resolves the step's machine and the plan's rule
    start_C : uniform start temperature [°C] (default: the first measured reading)
    time_offset_s : logger time at which the step started [s]; earlier samples are ignored
    h0_W_m2K : starting guess (default: the plan's h)
    solver, n_nodes : passed to run_plan for the prediction (and the general model)

    Returns
    -------
    Calibration
    """
    from procplan.run.engine import run_plan

    if not isinstance(log, LoggerData):
        raise InvalidInputError(
            "log", type(log).__name__, "LoggerData from procplan.studies.logger.read_logger"
        )
    if len(plan.steps) != 1:
        raise InvalidInputError("plan.steps", len(plan.steps), "one step (the recorded process)")
    fit = tuple(dict.fromkeys(("h", *fit)))
    for name in fit:
        validate.choice("fit", name, FIT_PARAMETERS)
    channel = channel or log.channels[0]
    t_all, temp_all = log.series(channel)
    off = validate.number("time_offset_s", time_offset_s, minimum=0.0, unit="s")
    keep = t_all >= off
    t, temp = t_all[keep] - off, temp_all[keep]
    if t.size < len(fit) + 2:
        raise InvalidInputError(
            "log", f"{t.size} samples", f"at least {len(fit) + 2} samples after time_offset_s"
        )
    t0 = float(temp[0]) if start_C is None else validate.number("start_C", start_C, unit="°C")
    from dataclasses import replace

    plan_s = replace(plan, start_temperature_C=t0)
    if library is None and (plan.steps[0].equipment or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    nominal = run_plan(plan_s, library=library, solver=solver, n_nodes=n_nodes)
    sr = nominal.steps[0]
    plan_h = float(np.mean(sr.surface.h_W_m2K))
    h0 = validate.positive("h0_W_m2K", h0_W_m2K, "W/m²K") if h0_W_m2K is not None else plan_h
    exact = sr.solver == "exact" and sr.surface.constant
    notes = []
    if exact:
        model, length = _exact_model(plan_s, nominal, t0)
        method = "exact solution at the probe position"
    else:
        if set(fit) - {"h"}:
            raise InvalidInputError(
                "fit",
                fit,
                "('h',) for this plan",
                "diffusivity and probe offset need the exact solution (one step, constant properties)",
            )
        from procplan.studies.inverse import PARAMETERS

        length = plan.product.geometry.conduction_length_m
        medium = float(np.mean(sr.surface.medium_C))

        def model(tt, h, f_alpha, offset_m):
            p = PARAMETERS["h_W_m2K"].apply(plan_s, 0, h, library)
            p = p.with_step(
                0, duration_s=max(float(tt[-1]) + 1.0, 1.0), stop_when_core_C=None, medium_C=medium
            )
            r = run_plan(p, library=library, solver=solver, n_nodes=n_nodes)
            return np.interp(tt, r.history["time_s"].to_numpy(), r.history["core_C"].to_numpy())

        method = "run_plan (core) with the step's h replaced"
        notes.append("the machine step is modelled as a given h at the machine's medium temperature")

    names = list(fit)

    def unpack(p):
        d = dict(zip(names, p, strict=True))
        return (
            math.exp(d["h"]),
            math.exp(d.get("alpha_factor", 0.0)),
            d.get("offset_mm", 0.0) * length,
        )

    def resid(p):
        h, fa, om = unpack(p)
        return model(t, h, fa, om) - temp

    x0 = [math.log(h0)] + [0.0 if n == "alpha_factor" else 0.2 for n in names[1:]]
    lo = [math.log(0.1)] + [math.log(0.2) if n == "alpha_factor" else 0.0 for n in names[1:]]
    hi = [math.log(1e5)] + [math.log(5.0) if n == "alpha_factor" else 0.95 for n in names[1:]]
    sol = least_squares(resid, x0, bounds=(lo, hi), x_scale="jac", diff_step=1e-6 if exact else 1e-4)
    r = sol.fun
    n, p = r.size, len(names)
    dof = max(n - p, 1)
    s2 = float(r @ r) / dof
    jac = sol.jac
    try:
        cov = s2 * np.linalg.inv(jac.T @ jac)
        sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    except np.linalg.LinAlgError:
        sd = np.full(p, np.inf)
        notes.append("the Jacobian is singular: the parameters cannot be told apart from this curve")
    tq = float(stats.t.ppf(0.975, dof))
    est = dict(zip(names, sol.x, strict=True))
    err = dict(zip(names, sd, strict=True))

    def ci_log(k):
        return (math.exp(est[k] - tq * err[k]), math.exp(est[k] + tq * err[k]))

    h, fa, om = unpack(sol.x)
    fitted_curve = model(t, h, fa, om)
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
    return Calibration(
        channel=channel,
        method=method,
        fitted=tuple(names),
        h_W_m2K=h,
        h_ci95=ci_log("h"),
        alpha_factor=fa if "alpha_factor" in est else None,
        alpha_ci95=ci_log("alpha_factor") if "alpha_factor" in est else None,
        offset_mm=offset * length * 1000.0 if offset is not None else None,
        offset_ci95=(
            (
                max(offset - tq * err["offset_mm"], 0.0) * length * 1000.0,
                (offset + tq * err["offset_mm"]) * length * 1000.0,
            )
            if offset is not None
            else None
        ),
        rmse_K=math.sqrt(float(r @ r) / n),
        n_points=int(n),
        residuals=res_frame,
        prediction=nominal,
        measured=measured_outcomes(t_all, temp_all, plan, library),
        plan_h_W_m2K=plan_h,
        source=log.source,
        notes=tuple(notes),
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
        "basis": "measured: fitted to a logged temperature curve",
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
