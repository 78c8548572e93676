"""Brining, curing and equalisation steps in words and as plain data (the numbers are the run's own, from
:class:`procplan.run.mass_step.MassStepResult`; nothing is computed again here)."""

from __future__ import annotations

from typing import Any

import numpy as np

SOLUTE_WORDS = {"salt": "salt", "sugar": "sugar"}


def _pct(fraction: float | None) -> float | None:
    return None if fraction is None else round(100.0 * float(fraction), 4)


def _min(t_s: float | None) -> float | None:
    return None if t_s is None else round(float(t_s) / 60.0, 2)


def brine_dict(mass) -> dict[str, Any]:
    """The JSON section of one step's solute record (percent of the product's mass, minutes)."""
    return {
        "solute": mass.solute,
        "mode": mass.mode,
        "brine_percent": _pct(mass.brine_fraction),
        "equilibrium_percent": _pct(mass.equilibrium_fraction),
        "temperature_C": mass.temperature_C,
        "D_m2_s": mass.D_m2_s,
        "diffusivity_source": mass.diffusivity_source,
        "k_m_m_s": None if mass.k_m_m_s is None or not np.isfinite(mass.k_m_m_s) else mass.k_m_m_s,
        "surface_coefficient": mass.k_m_source,
        "mass_biot": None if mass.mass_biot is None or not np.isfinite(mass.mass_biot) else mass.mass_biot,
        "start": {"core_percent": _pct(mass.core_fraction[0]), "mean_percent": _pct(mass.mean_fraction[0])},
        "end": {
            "core_percent": _pct(mass.core_fraction[-1]),
            "surface_percent": _pct(mass.surface_fraction[-1]),
            "mean_percent": _pct(mass.mean_fraction[-1]),
            "uptake_kg_per_piece": float(mass.uptake_kg[-1]),
        },
        "stopped_on": mass.stopped_on,
        "stop_time_min": _min(mass.stopped_at_s),
        "target_core_percent": _pct(mass.target_core_fraction),
        "target_core_reached_min": _min(mass.target_core_reached_s),
        "target_mean_percent": _pct(mass.target_mean_fraction),
        "target_mean_reached_min": _min(mass.target_mean_reached_s),
        "profile": {
            "position_from_centre_mm": [round(1000.0 * float(x), 4) for x in mass.positions_m[0]]
            if len(mass.positions_m) == 1
            else None,
            "percent": [round(100.0 * float(c), 4) for c in np.ravel(mass.profile_fraction)]
            if len(mass.positions_m) == 1
            else None,
        },
        "solute_balance_error": mass.mass_balance_error,
        "freezing_note": mass.freezing_note,
        "method": mass.method,
    }


def _target_text(what: str, fraction: float | None, reached_s: float | None) -> str | None:
    if fraction is None:
        return None
    if reached_s is None:
        return f"{what} target {100 * fraction:.2f} % NOT reached"
    return f"{what} target {100 * fraction:.2f} % reached after {reached_s / 3600:.1f} h"


def brine_lines(mass) -> list[str]:
    """Readable lines for one step's solute record."""
    s = SOLUTE_WORDS.get(mass.solute, mass.solute)
    head = {
        "brine": f"{mass.brine_fraction * 100:g} % {s} brine" if mass.brine_fraction is not None else "brine",
        "dry cure": "dry cure (surface at a saturated solution)",
        "equalisation": "equalisation (no exchange at the surface)",
    }[mass.mode]
    lines = [
        f"    {s}: {head} at {mass.temperature_C:.1f} °C; D {mass.D_m2_s:.3g} m²/s ({mass.diffusivity_source})",
        f"      surface coefficient: {mass.k_m_source}"
        + (
            f"; mass Biot {mass.mass_biot:.0f}"
            if mass.mass_biot is not None and np.isfinite(mass.mass_biot)
            else ""
        ),
        f"      end: core {100 * mass.core_fraction[-1]:.2f} %, mean {100 * mass.mean_fraction[-1]:.2f} %, surface "
        f"{100 * mass.surface_fraction[-1]:.2f} % {s} (equilibrium "
        + (f"{100 * mass.equilibrium_fraction:.2f} %)" if mass.equilibrium_fraction is not None else "none)"),
    ]
    if mass.stopped_on is not None:
        where = {"centre": "core"}.get(mass.stopped_on, mass.stopped_on)
        lines.append(
            f"      stopped when the {where} reached its {s} target after {mass.stopped_at_s / 3600:.1f} h"
        )
    for what, frac, t in (
        ("core", mass.target_core_fraction, mass.target_core_reached_s),
        ("mean", mass.target_mean_fraction, mass.target_mean_reached_s),
    ):
        text = _target_text(what, frac, t)
        if text:
            lines.append(f"      {text}")
    if mass.freezing_note:
        lines.append(f"      {mass.freezing_note}")
    return lines
