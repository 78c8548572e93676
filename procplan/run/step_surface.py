"""Resolve a plan step's surface description into medium temperature and effective h over time.

A step gives either ``h_W_m2K`` with ``medium_C`` (or a ``medium_profile``), or a machine from the
equipment library with its settings (constant, or a ``settings_profile``). Packaging layers of the
product add their resistance in series (:func:`procplan.surface.layers.h_effective`). The
correlations themselves live in :mod:`procplan.surface`; this module only wires a step to them.

Radiation to walls at another temperature than the air (``surroundings_C``): the surface balance
h_c (T_air − T_s) + h_r (T_sur − T_s) is carried as h = h_c + h_r towards the sink temperature
(h_c T_air + h_r T_sur)/(h_c + h_r) (Incropera 7th ed., eq. 1.10 and §1.2.3), packaging in series; so every
solver (series, lumped, finite volume) runs with ``medium_C`` = the sink temperature, and the air temperature is
kept in ``fluid_C`` for display.
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
    fluid_C : air temperature the product convects to [°C], set only with radiation to walls at another
        temperature (then the three temperatures below differ)
    surroundings_C : temperature of the walls the product radiates to [°C] (None: the air's)
    sink_C : temperature the product exchanges heat with through h_conv + h_rad [°C] (None: the air's)
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
    fluid_C: float | None = None
    surroundings_C: float | None = None
    sink_C: float | None = None

    @property
    def sink_note(self) -> str | None:
        """One line saying which temperature is which when the walls are at another temperature than the air."""
        if self.sink_C is None:
            return None
        return (
            f"convection h {self.h_conv_W_m2K:.1f} W/m²K to air at {self.fluid_C:g} °C and radiation "
            f"h {self.h_rad_W_m2K:.1f} W/m²K to walls at {self.surroundings_C:g} °C: the product exchanges "
            f"heat with the sink temperature {self.sink_C:.1f} °C"
        )

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
        if self.sink_C is not None:
            out.update(fluid_C=self.fluid_C, surroundings_C=self.surroundings_C, sink_C=self.sink_C)
            out["sink"] = self.sink_note
        return out


@dataclass(frozen=True)
class StepSurface:
    """What a step's surface condition resolved to.

    ``medium_C`` is the temperature the product exchanges heat with through ``h_W_m2K``: the air (water, brine,
    steam) temperature, or the sink temperature when the product also radiates to walls at another temperature.
    ``fluid_C`` keeps the air (fluid) temperature at the same times for display (empty: the same as medium_C).
    """

    medium_time_s: tuple[float, ...]
    medium_C: tuple[float, ...]
    h_time_s: tuple[float, ...]
    h_W_m2K: tuple[float, ...]
    breakdown: SurfaceBreakdown
    warnings: tuple[str, ...] = ()
    evaporation: Any = None  # callable q(t, T_s) [W/m²] and mass-flux function, for unwrapped products in air
    fluid_C: tuple[float, ...] = ()
    #: hot dry air and the product's moisture properties (run.dry_oven.DryOvenModel): heat and moisture coupled
    drying_air: Any = None

    @property
    def radiates_to_other_walls(self) -> bool:
        """True when the product exchanges heat with a sink temperature other than the fluid's."""
        return bool(self.fluid_C) and self.fluid_C != self.medium_C

    @property
    def fluid_temperature_C(self) -> tuple[float, ...]:
        """Air (fluid) temperature at ``medium_time_s`` [°C], for display."""
        return self.fluid_C or self.medium_C

    @property
    def constant(self) -> bool:
        return (
            len(set(self.medium_C)) == 1
            and len(set(self.h_W_m2K)) == 1
            and self.evaporation is None
            and self.drying_air is None
        )

    def boundary(self) -> SurfaceBoundary:
        q = self.evaporation.heat_flux_W_m2 if self.evaporation is not None else None
        med = (
            self.medium_C[0]
            if len(self.medium_C) == 1
            else (np.array(self.medium_time_s), np.array(self.medium_C))
        )
        h = self.h_W_m2K[0] if len(self.h_W_m2K) == 1 else (np.array(self.h_time_s), np.array(self.h_W_m2K))
        return SurfaceBoundary(med, h, q)


def _at_surface(evaluate, surface_C: float | None, start_mean_C: float, fluid_C: float):
    """``evaluate(T_s)`` at the given surface temperature, or at the first guess: halfway between the product's
    mean temperature at the start of the step and the temperature it exchanges heat with (the sink, when the
    walls are at another temperature than the fluid)."""
    if surface_C is not None:
        return evaluate(surface_C)
    res = evaluate(0.5 * (start_mean_C + fluid_C))
    if res.radiates_to_other_walls:
        res = evaluate(0.5 * (start_mean_C + res.sink_C))
    return res


def _sinks(fluid_C, res) -> tuple[float, ...]:
    """The temperatures the product exchanges heat with, for fluid temperatures ``fluid_C`` and the radiation of
    ``res`` (unchanged without walls at another temperature)."""
    from procplan.surface.layers import sink_temperature_C

    if not res.radiates_to_other_walls:
        return tuple(fluid_C)
    return tuple(
        sink_temperature_C(t, res.surroundings_C, res.h_conv_W_m2K, res.h_rad_W_m2K) for t in fluid_C
    )


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

    def evaluate(t_s: float):
        return surface_coefficient(
            None,
            product.geometry,
            medium_C=float(np.mean(temps)),
            surface_C=t_s,
            h_W_m2K=step.h_W_m2K,
            packaging=product.packaging,
            emissivity=step.emissivity,
            surroundings_C=step.surroundings_C,
        )

    res = _at_surface(evaluate, surface_C, start_mean_C, float(np.mean(temps)))
    breakdown = _breakdown(res, "h given in the plan")
    return StepSurface(
        times, _sinks(temps, res), (0.0,), (res.h_eff_W_m2K,), breakdown, tuple(res.warnings), fluid_C=temps
    )


def _breakdown(res, source: str, **more: Any) -> SurfaceBreakdown:
    walls = res.radiates_to_other_walls
    return SurfaceBreakdown(
        source=source,
        correlation=res.correlation,
        h_conv_W_m2K=res.h_conv_W_m2K,
        h_rad_W_m2K=res.h_rad_W_m2K,
        packaging_resistance_m2K_W=res.packaging_resistance_m2K_W,
        h_eff_W_m2K=res.h_eff_W_m2K,
        fluid_C=res.medium_C if walls else None,
        surroundings_C=res.surroundings_C if walls else None,
        sink_C=res.sink_C if walls else None,
        **more,
    )


def product_emissivity(step, product, eq) -> float | None:
    """The product's (or its packaging's) emissivity where it applies in this step, None where the machine's
    setting does. Which wins: a step that sets the machine's ``emissivity`` setting (in ``settings`` or its
    ``settings_profile``) > the product's ``emissivity`` > the machine's default setting. Only air machines
    radiate; in water, brine and steam the product's emissivity plays no part. Plans and machines written
    before products carried an emissivity run as before (the machine's setting)."""
    if product.emissivity is None or eq.medium != "air":
        return None
    if "emissivity" in step.settings_dict or any("emissivity" in dict(s) for _, s in step.settings_profile):
        return None
    return product.emissivity


def _setting_rows(step, index: int, eq) -> list[tuple[float, dict]]:
    """The machine's settings at the start of the step and at each change of the settings profile."""
    from procplan.surface.machines import resolve_settings

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
    return rows


def _evaporation(product, eq, settings: dict, h_conv_W_m2K: float, warnings: list):
    """The surface evaporation of an unwrapped product in an air machine: hot dry air with a dew point (heat
    and moisture coupled, the second value), a humidity setting (a surface flux, the first), or neither."""
    evaporation = drying = None
    if product.unwrapped and eq.medium == "air" and "dew_point_C" in settings:
        from procplan.run.dry_oven import DryOvenModel
        from procplan.surface.oven_air import DryingAir

        t_air = float(settings[eq.temperature_key])
        air = DryingAir(t_air, min(float(settings["dew_point_C"]), t_air), h_conv_W_m2K)
        drying = DryOvenModel.for_product(product, product.property_table(), air)
    elif product.unwrapped and eq.medium == "air" and "relative_humidity" in eq.settings:
        from procplan.surface.moisture import SurfaceEvaporation

        evaporation = SurfaceEvaporation.for_step(eq, settings, h_conv_W_m2K, product)
    elif product.unwrapped and eq.medium == "air":
        warnings.append(
            f"{eq.name} has no humidity setting, so surface evaporation of the unwrapped product is not modelled: "
            "a wet surface runs cooler than predicted and the core heats more slowly; confirm cook times by probing"
        )
    return evaporation, drying


def _equipment(
    step, index: int, product, surface_C: float | None, start_mean_C: float, library
) -> StepSurface:
    from procplan.surface.machines import equipment_h, medium_temperature_C

    if library is None or step.equipment not in library.equipment:
        names = ", ".join(sorted(library.equipment)) if library is not None else "(no library loaded)"
        raise InvalidInputError(f"steps[{index}].equipment", step.equipment, f"one of {names}")
    eq = library.equipment[step.equipment]
    rows = _setting_rows(step, index, eq)
    eps = product_emissivity(step, product, eq)
    times, fluids, temps, hs, warnings = [], [], [], [], []
    measured_used: list[MeasuredH] = []
    first = None
    for t, s in rows:
        medium = medium_temperature_C(eq, s)

        def evaluate(t_s: float, s=s):
            return equipment_h(
                eq,
                s,
                product.geometry,
                surface_C=t_s,
                packaging=product.packaging,
                surroundings_C=step.surroundings_C,
                emissivity=eps,
            )

        res = _at_surface(evaluate, surface_C, start_mean_C, medium)
        first = first or res
        times.append(t)
        fluids.append(medium)
        measured = library.measured_h(product.name, eq.id, s)
        if measured is None:
            hs.append(res.h_eff_W_m2K)
            temps.append(_sinks((medium,), res)[0])
        else:
            # a measured effective h, fitted to logger data of this product in this machine against the air
            # temperature, wins (it already carries the radiation the machine's walls gave in the trial)
            m = MeasuredH.of(measured)
            hs.append(m.h_W_m2K)
            temps.append(medium)
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
        if step.surroundings_C is not None:
            warnings.append(
                f"surroundings_C of {step.surroundings_C:g} °C is not applied on top of the measured h, "
                "which already carries the radiation of the trial"
            )
    evaporation, drying = _evaporation(product, eq, rows[0][1], first.h_conv_W_m2K, warnings)
    shown = rows[0][1] if eps is None else {**rows[0][1], "emissivity": eps}  # the emissivity used
    if len(times) > 1 and times[-1] < step.duration_s:  # the last setting holds to the end of the step
        times.append(step.duration_s)
        fluids.append(fluids[-1])
        temps.append(temps[-1])
        hs.append(hs[-1])
    breakdown = replace(
        _breakdown(first, source, machine=MachineUsed.of(eq, shown), measured=tuple(measured_used)),
        h_eff_W_m2K=h_eff,
        evaporation=drying.describe()
        if drying is not None
        else None
        if evaporation is None
        else evaporation.describe(),
    )
    if temps[0] == fluids[0]:  # a measured h at the first point: no sink to report
        breakdown = replace(breakdown, fluid_C=None, surroundings_C=None, sink_C=None)
    return StepSurface(
        tuple(times),
        tuple(temps),
        tuple(times),
        tuple(hs),
        breakdown,
        tuple(warnings),
        evaporation,
        tuple(fluids),
        drying,
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
