"""The parameters a required-setting study can vary: how each is applied to a plan and its default range
(one registry, PARAMETERS, for the API, the CLI and the app)."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from typing import Any

from procplan.errors import InvalidInputError
from procplan.model import MAX_STEP_MIN, Plan
from procplan.properties.table import MODEL_RANGE_C

#: Default range of a given surface coefficient [W/m²K]: still air to condensing steam (Incropera Table 1.1).
H_RANGE_W_M2K = (2.0, 20000.0)


@dataclass(frozen=True)
class ParameterSpec:
    """A parameter the required-setting study can vary."""

    unit: str
    description: str
    apply: Callable[[Plan, int, float, Any], Plan]
    default_bounds: Callable[[Plan, int, Any], tuple[float, float]]


def _machine(plan: Plan, i: int, library, name: str):
    step = plan.steps[i]
    if step.equipment is None:
        return None
    if library is None or step.equipment not in library.equipment:
        raise InvalidInputError(f"steps[{i}].equipment", step.equipment, "a machine of the loaded library")
    return library.equipment[step.equipment]


def _set_setting(plan: Plan, i: int, key: str, value: float) -> Plan:
    s = plan.steps[i].settings_dict
    s[key] = float(value)
    return plan.with_step(i, settings=tuple(sorted(s.items())))


def _apply_medium(plan: Plan, i: int, v: float, library) -> Plan:
    eq = _machine(plan, i, library, "medium_C")
    if eq is not None:
        return _set_setting(plan, i, eq.temperature_key, v)
    return plan.with_step(i, medium_C=float(v), medium_profile=())


def _bounds_medium(plan: Plan, i: int, library) -> tuple[float, float]:
    eq = _machine(plan, i, library, "medium_C")
    if eq is not None:
        r = eq.settings[eq.temperature_key]
        return r.minimum, r.maximum
    return MODEL_RANGE_C


def _speed_key(plan: Plan, i: int, library) -> tuple[Any, str]:
    eq = _machine(plan, i, library, "speed_m_s")
    if eq is None or f"{eq.medium}_speed_m_s" not in eq.settings:
        raise InvalidInputError(
            "parameter",
            "speed_m_s",
            "a step with an air, water or brine machine",
            f"step {i} has no adjustable speed",
        )
    return eq, f"{eq.medium}_speed_m_s"


def _apply_speed(plan: Plan, i: int, v: float, library) -> Plan:
    _, key = _speed_key(plan, i, library)
    return _set_setting(plan, i, key, v)


def _bounds_speed(plan: Plan, i: int, library) -> tuple[float, float]:
    eq, key = _speed_key(plan, i, library)
    return eq.settings[key].minimum, eq.settings[key].maximum


def _apply_h(plan: Plan, i: int, v: float, library) -> Plan:
    step = plan.steps[i]
    eq = _machine(plan, i, library, "h_W_m2K")
    if eq is not None:
        from procplan.surface.machines import resolve_settings

        medium = resolve_settings(eq, step.settings_dict)[eq.temperature_key]
        return plan.with_step(
            i, h_W_m2K=float(v), medium_C=float(medium), equipment=None, settings=(), settings_profile=()
        )
    return plan.with_step(i, h_W_m2K=float(v))


def _controlling(plan: Plan) -> str:
    g = plan.product.geometry
    if g.shape == "slab":
        return "thickness_m"
    if g.shape == "brick":
        return min(("length_m", "width_m", "height_m"), key=lambda k: getattr(g, k))
    return "diameter_m"


def _apply_dimension(plan: Plan, i: int, v: float, library) -> Plan:
    g = plan.product.geometry
    g2 = replace(g, **{_controlling(plan): float(v) / 1000.0})
    return replace(plan, product=replace(plan.product, geometry=g2))


def _bounds_dimension(plan: Plan, i: int, library) -> tuple[float, float]:
    d = getattr(plan.product.geometry, _controlling(plan)) * 1000.0
    return 0.25 * d, min(2.0 * d, 3000.0)


def _apply_hold(plan: Plan, i: int, v: float, library) -> Plan:
    return plan.with_step(i, duration_s=60.0 * float(v), duration_given=True)


def _bounds_hold(plan: Plan, i: int, library) -> tuple[float, float]:
    d = plan.steps[i].duration_s / 60.0
    return max(0.1 * d, 0.5), min(max(4.0 * d, 60.0), MAX_STEP_MIN)


def _apply_loading(plan: Plan, i: int, v: float, library) -> Plan:
    return plan.with_step(i, loading_medium_C=float(v))


def _bounds_loading(plan: Plan, i: int, library) -> tuple[float, float]:
    """From the machine's lowest to its highest setting, widened to room temperature (20 °C)."""
    eq = _machine(plan, i, library, "loading_medium_C")
    if eq is None:
        raise InvalidInputError("parameter", "loading_medium_C", "a step in a machine")
    r = eq.settings[eq.temperature_key]
    return min(r.minimum, 20.0), max(r.maximum, 20.0)


#: The parameters a required setting can be found for (one registry: API, CLI and app).
PARAMETERS: dict[str, ParameterSpec] = {
    "medium_C": ParameterSpec(
        "°C",
        "medium temperature: the machine's temperature setting, or the step's medium_C",
        _apply_medium,
        _bounds_medium,
    ),
    "speed_m_s": ParameterSpec(
        "m/s", "air (or water, brine) speed setting of the step's machine", _apply_speed, _bounds_speed
    ),
    "h_W_m2K": ParameterSpec(
        "W/m²K",
        "a given surface coefficient (a machine step becomes a given-h step at the machine's temperature)",
        _apply_h,
        lambda plan, i, lib: H_RANGE_W_M2K,
    ),
    "dimension_mm": ParameterSpec(
        "mm",
        "the product's controlling dimension: slab thickness, diameter, or a brick's smallest side",
        _apply_dimension,
        _bounds_dimension,
    ),
    "hold_min": ParameterSpec("min", "duration of the step", _apply_hold, _bounds_hold),
    "loading_medium_C": ParameterSpec(
        "°C",
        "the machine's medium temperature when the batch is loaded (a loaded plan)",
        _apply_loading,
        _bounds_loading,
    ),
}


def current_value(plan: Plan, i: int, parameter: str, library) -> float | None:
    step = plan.steps[i]
    try:
        if parameter == "medium_C":
            eq = _machine(plan, i, library, parameter)
            if eq is not None:
                return float(
                    step.settings_dict.get(eq.temperature_key, eq.settings[eq.temperature_key].default)
                )
            return step.medium_C
        if parameter == "speed_m_s":
            eq, key = _speed_key(plan, i, library)
            return float(step.settings_dict.get(key, eq.settings[key].default))
        if parameter == "h_W_m2K":
            return step.h_W_m2K
        if parameter == "loading_medium_C":
            return step.loading_medium_C
        if parameter == "dimension_mm":
            return getattr(plan.product.geometry, _controlling(plan)) * 1000.0
        return step.duration_s / 60.0
    except InvalidInputError:
        return None
