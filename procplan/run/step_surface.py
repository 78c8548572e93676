"""Resolve a plan step's surface description into medium temperature and effective h over time.

A step gives either ``h_W_m2K`` with ``medium_C`` (or a ``medium_profile``), or a machine from the
equipment library with its settings (constant, or a ``settings_profile``). Packaging layers of the
product add their resistance in series (:func:`procplan.surface.layers.h_effective`). The
correlations themselves live in :mod:`procplan.surface`; this module only wires a step to them.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from procplan.conduction.fv_boundary import SurfaceBoundary
from procplan.errors import InvalidInputError


@dataclass(frozen=True)
class MachineUsed:
    """The machine a step ran in, as the step used it.

    Attributes
    ----------
    id, name : the machine's library id and display name
    kind : key of EQUIPMENT_KINDS
    medium : "air", "water", "brine" or "steam"
    settings : the settings the step started with, resolved against the machine's ranges (keys carry units)
    setting_units : unit of each setting the machine has ("" for a fraction)
    evaporating_C, condensing_C : refrigerant temperatures for energy estimates [°C] (None for heating kinds)
    """

    id: str
    name: str
    kind: str
    medium: str
    settings: Mapping[str, float]
    setting_units: Mapping[str, str]
    evaporating_C: float | None
    condensing_C: float | None

    @classmethod
    def of(cls, equipment, settings: Mapping[str, float]) -> MachineUsed:
        """The record of ``equipment`` (a procplan.surface.machines.Equipment) run at ``settings``."""
        return cls(
            id=equipment.id,
            name=equipment.name,
            kind=equipment.kind,
            medium=equipment.medium,
            settings=dict(settings),
            setting_units={k: r.unit for k, r in equipment.settings.items()},
            evaporating_C=equipment.evaporating_C,
            condensing_C=equipment.condensing_C,
        )


@dataclass(frozen=True)
class MeasuredH:
    """A measured effective h (fitted to logger data of this product in this machine) that replaced the correlation.

    Attributes
    ----------
    h_W_m2K : the measured effective coefficient [W/m²K]
    date : date of the trial (ISO)
    data_source : where the logger data came from
    """

    h_W_m2K: float
    date: str
    data_source: str

    @classmethod
    def of(cls, record: Mapping[str, Any]) -> MeasuredH:
        """From a measurement record of the library (``value``, ``date``, optional ``data_source``)."""
        return cls(float(record["value"]), str(record["date"]), str(record.get("data_source", "logger data")))

    @property
    def note(self) -> str:
        return f"measured h {self.h_W_m2K:.1f} W/m²K ({self.date}, {self.data_source})"


@dataclass(frozen=True)
class SurfaceBreakdown:
    """How a step's effective h was obtained, at the step's first setting point.

    Attributes
    ----------
    source : one line saying where h came from (the plan, a machine, a measurement in a machine)
    correlation : name(s) of the correlation(s) used, or "user-entered"
    h_conv_W_m2K : convection (or condensation, or user-entered) coefficient [W/m²K]
    h_rad_W_m2K : linearised radiation coefficient [W/m²K]
    packaging_resistance_m2K_W : series resistance of the packaging layers [m²K/W]
    h_eff_W_m2K : effective coefficient the step used [W/m²K] (the measured one when a measurement applied)
    machine : the machine and its settings (None when the plan gives h)
    measured : the measured coefficients that replaced the correlation, in the order of the setting points
    evaporation : description of the surface evaporation modelled (None without it)
    """

    source: str
    correlation: str
    h_conv_W_m2K: float
    h_rad_W_m2K: float
    packaging_resistance_m2K_W: float
    h_eff_W_m2K: float
    machine: MachineUsed | None = None
    measured: tuple[MeasuredH, ...] = ()
    evaporation: str | None = None

    def to_dict(self) -> dict[str, Any]:
        """Plain data for the JSON summary (the machine's settings under ``settings``, no machine record)."""
        out: dict[str, Any] = {"source": self.source}
        if self.machine is not None:
            out["settings"] = dict(self.machine.settings)
        out.update(
            correlation=self.correlation,
            h_conv_W_m2K=self.h_conv_W_m2K,
            h_rad_W_m2K=self.h_rad_W_m2K,
            packaging_resistance_m2K_W=self.packaging_resistance_m2K_W,
            h_eff_W_m2K=self.h_eff_W_m2K,
        )
        if self.evaporation is not None:
            out["evaporation"] = self.evaporation
        return out


@dataclass(frozen=True)
class StepSurface:
    """What a step's surface condition resolved to."""

    medium_time_s: tuple[float, ...]
    medium_C: tuple[float, ...]
    h_time_s: tuple[float, ...]
    h_W_m2K: tuple[float, ...]
    breakdown: SurfaceBreakdown
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
    breakdown = _breakdown(res, "h given in the plan")
    return StepSurface(times, temps, (0.0,), (res.h_eff_W_m2K,), breakdown, tuple(res.warnings))


def _breakdown(res, source: str, **more: Any) -> SurfaceBreakdown:
    return SurfaceBreakdown(
        source=source,
        correlation=res.correlation,
        h_conv_W_m2K=res.h_conv_W_m2K,
        h_rad_W_m2K=res.h_rad_W_m2K,
        packaging_resistance_m2K_W=res.packaging_resistance_m2K_W,
        h_eff_W_m2K=res.h_eff_W_m2K,
        **more,
    )


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
    measured_used: list[MeasuredH] = []
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
            m = MeasuredH.of(measured)
            hs.append(m.h_W_m2K)
            if m.note not in [u.note for u in measured_used]:
                measured_used.append(m)
        warnings.extend(w for w in res.warnings if w not in warnings)
    source, h_eff = f"machine {eq.name}", first.h_eff_W_m2K
    if measured_used:
        source = (
            "; ".join(m.note for m in measured_used)
            + f" in machine {eq.name} (the correlation gives {first.h_eff_W_m2K:.1f} W/m²K)"
        )
        h_eff = hs[0]
    evaporation = None
    if product.unwrapped and eq.medium == "air" and "relative_humidity" in eq.settings:
        from procplan.surface.moisture import SurfaceEvaporation

        evaporation = SurfaceEvaporation.for_step(eq, rows[0][1], first.h_conv_W_m2K, product)
    elif product.unwrapped and eq.medium == "air":
        warnings.append(
            f"{eq.name} has no humidity setting, so surface evaporation of the unwrapped product is not modelled: "
            "a wet surface runs cooler than predicted and the core heats more slowly; confirm cook times by probing"
        )
    if len(times) > 1 and times[-1] < step.duration_s:  # the last setting holds to the end of the step
        times.append(step.duration_s)
        temps.append(temps[-1])
        hs.append(hs[-1])
    breakdown = replace(
        _breakdown(first, source, machine=MachineUsed.of(eq, rows[0][1]), measured=tuple(measured_used)),
        h_eff_W_m2K=h_eff,
        evaporation=None if evaporation is None else evaporation.describe(),
    )
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
