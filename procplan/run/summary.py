"""A run's provenance and outcomes as plain data (JSON-ready): the one sanitiser and the summary.

It sits in :mod:`procplan.run` so that :meth:`procplan.run.engine.PlanResult.summary` needs nothing from the
output layer; :mod:`procplan.output.report` builds its text and history on it.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np

from procplan._version import __version__
from procplan.caution import CAUTION


def _details_dict(details: Any) -> dict[str, Any]:
    """A step's solver details as a dict of the fields that apply (None fields left out)."""
    return {k: v for k, v in dataclasses.asdict(details).items() if v is not None}


def plain(obj: Any) -> Any:
    """JSON-ready copy: dataclasses to dicts, numpy to Python, NaN/inf to None; arrays and callables dropped."""
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        out = {}
        for f in dataclasses.fields(obj):
            v = getattr(obj, f.name)
            if isinstance(v, np.ndarray) and v.size > 8:
                continue
            if callable(v) and not dataclasses.is_dataclass(v):
                continue
            out[f.name] = plain(v)
        return out
    if isinstance(obj, dict):
        return {
            str(k): plain(v)
            for k, v in obj.items()
            if not (callable(v) and not dataclasses.is_dataclass(v)) and not k.endswith("_record")
        }
    if isinstance(obj, (list, tuple)):
        return [plain(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return [plain(v) for v in obj.tolist()]
    if isinstance(obj, (np.floating, float)):
        x = float(obj)
        return x if math.isfinite(x) else None
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (np.bool_,)):
        return bool(obj)
    if isinstance(obj, (str, int, bool)) or obj is None:
        return obj
    return str(obj)


def minutes(t_s: float | None) -> float | None:
    return None if t_s is None else round(t_s / 60.0, 2)


def summary_dict(result) -> dict[str, Any]:
    """Provenance and outcomes of a run as plain data."""
    plan = result.plan
    hist = result.history
    out: dict[str, Any] = {
        "title": plan.title,
        "product": plan.product.name,
        "geometry": plan.product.geometry.describe(),
        "piece_mass_kg": result.piece_mass_kg,
        "start_temperature_C": plan.start_temperature_C,
        "end": {k: float(hist[k].iloc[-1]) for k in ("time_s", "core_C", "surface_C", "mean_C")},
        "properties_source": result.properties.source,
        "initial_freezing_C": result.properties.initial_freezing_C,
        "steps": [],
        "warnings": list(result.warnings),
        "procplan_version": __version__,
        "caution": CAUTION,
    }
    for sr in result.steps:
        out["steps"].append(
            {
                "name": sr.name,
                "start_min": minutes(sr.start_s),
                "end_min": minutes(sr.end_s),
                "solver": sr.solver,
                "reason": sr.reason,
                "regime": plain(sr.regime),
                "medium_C": list(sr.surface.medium_C),
                "h_W_m2K": list(sr.surface.h_W_m2K),
                "surface": plain(sr.surface.breakdown),
                "stopped": sr.stopped,
                "stop_time_min": minutes(sr.stop_time_s),
                "energy_balance_error": sr.energy_balance_error,
                "details": plain(_details_dict(sr.details)),
                "warnings": list(sr.warnings),
            }
        )
    if result.outcomes is not None:
        out["outcomes"] = plain(result.outcomes)
    return out
