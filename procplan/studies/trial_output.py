"""Plain data of a heat-penetration study: the probe table and the JSON document (through
:func:`procplan.output.json_safe.json_safe`); the CLI, the app and the sheet read these, nothing is computed."""

from __future__ import annotations

from typing import Any

import pandas as pd

from procplan.output.json_safe import json_safe


def probe_table(study) -> pd.DataFrame:
    """One row per probe (the figures every front end shows)."""
    rows = []
    for r in study.runs:
        for p in r.probes:
            h, c, fm = p.heating, p.cooling, p.formula
            rows.append(
                {
                    "run": r.name,
                    "channel": p.channel,
                    "piece": p.piece,
                    "position": p.position,
                    "slowest_in_run": p.channel == r.slowest,
                    "F_min": p.F_min,
                    "passed": p.passed,
                    "lag_K_min": p.lag_K_min,
                    "f_h_min": h.f_min if h else None,
                    "j_h": h.j if h else None,
                    "f_c_min": c.f_min if c else None,
                    "j_c": c.j if c else None,
                    "formula_time_min": fm.from_start_min if fm else None,
                    "general_time_min": fm.general_min if fm else None,
                    "rmse_K": p.rmse_K,
                    "bias_K": p.bias_K,
                }
            )
    return pd.DataFrame(rows)


def study_dict(study) -> dict[str, Any]:
    """The study as JSON-ready data: verdict, slowest unit, runs with every probe's curve and figures."""
    b = study.bound
    return json_safe(
        {
            "plan": study.plan.title,
            "criterion": study.criterion,
            "required_F_min": study.required_F_min,
            "slowest": {"run": study.slowest_run, "channel": study.slowest_channel},
            "slowest_unit": None
            if b is None
            else {
                "n_runs": b.n,
                "mean_F_min": b.mean,
                "sd_F_min": b.sd,
                "k_factor": b.k,
                "proportion": b.proportion,
                "confidence": b.confidence,
                "model": b.model,
                "lower_bound_F_min": b.lower,
            },
            "verdict": study.verdict,
            "passed": study.passed,
            "runs": [_run_dict(r) for r in study.runs],
            "probes": study.table().to_dict("records"),
            "notes": list(study.notes),
            "calibration": None if study.calibration is None else study.calibration.to_dict(),
        }
    )


def _run_dict(r) -> dict[str, Any]:
    return {
        "name": r.name,
        "step_start_s": r.step_start_s,
        "step_start_from": r.step_start_from,
        "come_up_s": r.come_up_s,
        "start_C": r.start_C,
        "slowest": r.slowest,
        "probes": [_probe_dict(p) for p in r.probes],
    }


def _factors_dict(cf) -> dict[str, Any] | None:
    if cf is None:
        return None
    return {
        "f_min": cf.f_min,
        "j": cf.j,
        "medium_C": cf.medium_C,
        "initial_C": cf.initial_C,
        "pseudo_initial_C": cf.pseudo_initial_C,
        "corrected_zero_s": cf.zero_s,
        "come_up_s": cf.come_up_s,
        "window_s": list(cf.window_s),
    }


def _probe_dict(p) -> dict[str, Any]:
    fm = p.formula
    return {
        "channel": p.channel,
        "piece": p.piece,
        "position": p.position,
        "F_min": p.F_min,
        "F_by_step_min": list(p.F_by_step_min),
        "passed": p.passed,
        "lag_K_min": p.lag_K_min,
        "heating": _factors_dict(p.heating),
        "cooling": _factors_dict(p.cooling),
        "formula_method": None
        if fm is None
        else {
            "u_min": fm.u_min,
            "g_K": fm.g_K,
            "b_min": fm.b_min,
            "formula_time_from_start_min": fm.from_start_min,
            "general_time_from_start_min": fm.general_min,
            "difference_percent": fm.difference_percent,
            "method": fm.method,
        },
        "rmse_K": p.rmse_K,
        "bias_K": p.bias_K,
        "max_abs_residual_K": p.max_abs_residual_K,
        "curve": {k: p.curve[k].tolist() for k in p.curve.columns},
        "notes": list(p.notes),
    }
