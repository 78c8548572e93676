"""Resolve a plan step's surface description into medium temperature and effective h over time.

A step gives either ``h_W_m2K`` with ``medium_C`` (or a ``medium_profile``), or a machine from the
equipment library with its settings (constant, or a ``settings_profile``). Packaging layers of the
product add their resistance in series (:func:`procplan.surface.layers.h_effective`). The
correlations themselves live in :mod:`procplan.surface`; this module only wires a step to them.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from procplan.conduction.fv_boundary import SurfaceBoundary
from procplan.errors import InvalidInputError


@dataclass(frozen=True)
class StepSurface:
    """What a step's surface condition resolved to."""

    medium_time_s: tuple[float, ...]
    medium_C: tuple[float, ...]
    h_time_s: tuple[float, ...]
    h_W_m2K: tuple[float, ...]
    breakdown: dict[str, Any]
    warnings: tuple[str, ...] = ()
    evaporation: Any = None  # callable q(t, T_s) [W/m²] and mass-flux function, for unwrapped products in air

    @property
    def constant(self) -> bool:
        return len(set(self.medium_C)) == 1 and len(set(self.h_W_m2K)) == 1 and self.evaporation is None

    def boundary(self) -> SurfaceBoundary:
        q = self.evaporation.heat_flux_W_m2 if self.evaporation is not None else None
        med = (
            self.medium_C[0]
            if len(self.medium_C) == 1
            else (np.array(self.medium_time_s), np.array(self.medium_C))
        )
        h = self.h_W_m2K[0] if len(self.h_W_m2K) == 1 else (np.array(self.h_time_s), np.array(self.h_W_m2K))
        return SurfaceBoundary(med, h, q)


def _given_h(step, product, surface_C: float | None, start_mean_C: float) -> StepSurface:
    from procplan.surface.coefficient import surface_coefficient

    if step.medium_profile:
        pts = list(step.medium_profile)
        if len(pts) > 1 and pts[-1][0] < step.duration_s:  # the last temperature holds to the end of the step
            pts.append((step.duration_s, pts[-1][1]))
        times = tuple(t for t, _ in pts)
        temps = tuple(v for _, v in pts)
    else:
        times, temps = (0.0,), (step.medium_C,)
    res = surface_coefficient(
        None,
        product.geometry,
        medium_C=float(np.mean(temps)),
        surface_C=0.5 * (start_mean_C + float(np.mean(temps))) if surface_C is None else surface_C,
        h_W_m2K=step.h_W_m2K,
        packaging=product.packaging,
        emissivity=step.emissivity,
        surroundings_C=step.surroundings_C,
    )
    breakdown = {"source": "h given in the plan", **_breakdown(res)}
    return StepSurface(times, temps, (0.0,), (res.h_eff_W_m2K,), breakdown, tuple(res.warnings))


def _breakdown(res) -> dict:
    return {
        "correlation": res.correlation,
        "h_conv_W_m2K": res.h_conv_W_m2K,
        "h_rad_W_m2K": res.h_rad_W_m2K,
        "packaging_resistance_m2K_W": res.packaging_resistance_m2K_W,
        "h_eff_W_m2K": res.h_eff_W_m2K,
    }


def _equipment(
    step, index: int, product, surface_C: float | None, start_mean_C: float, library
) -> StepSurface:
    from procplan.surface.machines import equipment_h, medium_temperature_C, resolve_settings

    if library is None or step.equipment not in library.equipment:
        names = ", ".join(sorted(library.equipment)) if library is not None else "(no library loaded)"
        raise InvalidInputError(f"steps[{index}].equipment", step.equipment, f"one of {names}")
    eq = library.equipment[step.equipment]
    base = resolve_settings(eq, step.settings_dict, field_prefix=f"steps[{index}].settings.")
    rows = [(0.0, base)]
    for j, (t, s) in enumerate(step.settings_profile):
        merged = resolve_settings(
            eq, {**rows[-1][1], **dict(s)}, field_prefix=f"steps[{index}].settings_profile[{j}]."
        )
        if t == 0.0:
            rows[0] = (0.0, merged)
        else:
            rows.append((t, merged))
    times, temps, hs, warnings = [], [], [], []
    measured_notes: list[str] = []
    first = None
    for t, s in rows:
        medium = medium_temperature_C(eq, s)
        res = equipment_h(
            eq,
            s,
            product.geometry,
            surface_C=0.5 * (start_mean_C + medium) if surface_C is None else surface_C,
            packaging=product.packaging,
        )
        first = first or res
        times.append(t)
        temps.append(medium)
        measured = library.measured_h(product.name, eq.id, s)
        if measured is None:
            hs.append(res.h_eff_W_m2K)
        else:
            # a measured effective h, fitted to logger data of this product in this machine, wins
            hs.append(float(measured["value"]))
            note = f"measured h {measured['value']:.1f} W/m²K ({measured['date']}, {measured.get('data_source', 'logger data')})"
            if note not in measured_notes:
                measured_notes.append(note)
        warnings.extend(w for w in res.warnings if w not in warnings)
    breakdown = {
        "source": f"machine {eq.name}",
        "settings": dict(rows[0][1]),
        **_breakdown(first),
        "equipment_record": eq,
    }
    if measured_notes:
        breakdown["source"] = (
            "; ".join(measured_notes)
            + f" in machine {eq.name} (the correlation gives {first.h_eff_W_m2K:.1f} W/m²K)"
        )
        breakdown["h_eff_W_m2K"] = hs[0]
    evaporation = None
    if product.unwrapped and eq.medium == "air" and "relative_humidity" in eq.settings:
        from procplan.surface.moisture import SurfaceEvaporation

        evaporation = SurfaceEvaporation.for_step(eq, rows[0][1], first.h_conv_W_m2K, product)
        breakdown["evaporation"] = evaporation.describe()
    elif product.unwrapped and eq.medium == "air":
        warnings.append(
            f"{eq.name} has no humidity setting, so surface evaporation of the unwrapped product is not modelled: "
            "a wet surface runs cooler than predicted and the core heats more slowly; confirm cook times by probing"
        )
    if len(times) > 1 and times[-1] < step.duration_s:  # the last setting holds to the end of the step
        times.append(step.duration_s)
        temps.append(temps[-1])
        hs.append(hs[-1])
    return StepSurface(
        tuple(times), tuple(temps), tuple(times), tuple(hs), breakdown, tuple(warnings), evaporation
    )


def resolve_step_surface(
    step, index: int, product, start_mean_C: float, library, surface_C: float | None = None
) -> StepSurface:
    """Medium temperature and effective h for a step, with the breakdown and any warnings.

    h is evaluated at the representative surface temperature ``surface_C`` (the engine passes the step's
    time-averaged surface temperature on its second pass); without it, at the temperature halfway between
    the product's mean temperature at the start of the step (``start_mean_C``) and the medium.
    """
    if step.equipment is not None:
        return _equipment(step, index, product, surface_C, start_mean_C, library)
    return _given_h(step, product, surface_C, start_mean_C)
