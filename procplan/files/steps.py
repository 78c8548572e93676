"""``[[steps]]`` tables of plan files (min, °C) to and from :class:`procplan.model.Step` (SI)."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.brine import brine_from_dict, brine_to_dict
from procplan.files.fields import (
    _inverse,
    check_keys,
    file_minutes,
    file_number,
    freeze,
    medium_temperature,
    optional,
    stated_temperature,
)
from procplan.model import DEFAULT_STOP_CAP_MIN, MAX_STEP_MIN, MEDIUM_RANGE_C, TARGET_POINTS, Step, Target

STEP_KEYS = (
    "name",
    "duration_min",
    "stop_when_core_C",
    "medium_C",
    "medium_profile",
    "h_W_m2K",
    "equipment",
    "settings",
    "settings_profile",
    "emissivity",
    "surroundings_C",
    "targets",
    "brine",
    "loading_medium_C",
    "stop_when_weight_loss_percent",
)
#: Range of a weight-loss stop [%] before the product is known (the plan checks it against the product's water).
WEIGHT_LOSS_RANGE_PERCENT = (0.0, 100.0)


def _duration(c: Collector, data: Mapping[str, Any], p: str) -> tuple[float, float | None, bool]:
    """Duration [s], stop temperature [°C] and whether the duration was given (else the stop cap)."""
    duration_min = optional(
        c,
        data,
        "duration_min",
        p,
        validate.number,
        minimum=0.0,
        min_inclusive=False,
        maximum=MAX_STEP_MIN,
        unit="min",
    )
    stop = optional(c, data, "stop_when_core_C", p, stated_temperature)
    brine = data.get("brine")
    brine_stop = isinstance(brine, Mapping) and any(
        k in brine for k in ("stop_when_core_percent", "stop_when_mean_percent")
    )
    stops = ("duration_min", "stop_when_core_C", "stop_when_weight_loss_percent")
    if not any(k in data for k in stops) and not brine_stop:
        c.add(
            InvalidInputError(
                p + "duration_min",
                None,
                f"(0, {MAX_STEP_MIN:g}] min",
                "a step needs a duration_min, a stop_when_core_C, a stop_when_weight_loss_percent or a brine stop",
            )
        )
    duration_s = (duration_min if duration_min is not None else DEFAULT_STOP_CAP_MIN) * 60.0
    return duration_s, stop, "duration_min" in data


def _profile(c: Collector, raw: Any, field_name: str) -> tuple[tuple[float, float], ...]:
    """A [[time_min, temperature_C], ...] list that starts at 0, as (time_s, temperature_C) pairs."""
    if not isinstance(raw, list) or len(raw) < 1:
        c.add(
            InvalidInputError(field_name, raw, "a list of [time_min, temperature_C] pairs starting at time 0")
        )
        return ()
    pts = []
    for i, pair in enumerate(raw):
        if not isinstance(pair, list) or len(pair) != 2:
            c.add(InvalidInputError(f"{field_name}[{i}]", pair, "a pair [time_min, temperature_C]"))
            return ()
        with c.catch():
            t = validate.number(
                f"{field_name}[{i}] time", pair[0], minimum=0.0, maximum=MAX_STEP_MIN, unit="min"
            )
            v = medium_temperature(f"{field_name}[{i}] temperature", pair[1])
            pts.append((t * 60.0, v))
    if len(pts) != len(raw):
        return ()
    with c.catch():
        validate.increasing(f"{field_name} times", [t for t, _ in pts], unit="s")
    if pts and pts[0][0] != 0.0:
        c.add(
            InvalidInputError(
                f"{field_name}[0] time",
                pts[0][0] / 60.0,
                "0 min",
                "the profile must start at the step's start",
            )
        )
    return tuple(pts)


def _settings(c: Collector, data: Mapping[str, Any], p: str) -> Mapping[str, Any]:
    """The step's machine settings table (each value a number)."""
    settings = data.get("settings", {})
    if not isinstance(settings, Mapping):
        c.add(
            InvalidInputError(p + "settings", settings, "a table such as { air_C = -4, air_speed_m_s = 3 }")
        )
        settings = {}
    for k, v in settings.items():
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            c.add(InvalidInputError(f"{p}settings.{k}", v, "a number"))
    return settings


def _settings_profile(
    c: Collector, data: Mapping[str, Any], p: str, duration_s: float
) -> list[tuple[float, tuple[tuple[str, Any], ...]]]:
    """``settings_profile`` rows as (time_s, settings) with increasing times inside the step."""
    out: list[tuple[float, tuple[tuple[str, Any], ...]]] = []
    if "settings_profile" not in data:
        return out
    raw = data["settings_profile"]
    if not isinstance(raw, list) or not raw:
        c.add(
            InvalidInputError(
                p + "settings_profile", raw, "a list of tables { time_min = ..., <setting> = ... }"
            )
        )
        return out
    last = -1.0
    for i, row in enumerate(raw):
        rp = f"{p}settings_profile[{i}]."
        if not isinstance(row, Mapping) or "time_min" not in row:
            c.add(InvalidInputError(rp.rstrip("."), row, "a table with time_min and settings"))
            continue
        t = optional(
            c, row, "time_min", rp, validate.number, minimum=0.0, maximum=duration_s / 60.0, unit="min"
        )
        if t is None:
            continue
        if t <= last:
            c.add(InvalidInputError(rp + "time_min", t, f"> {last:g} min", "profile times must increase"))
        last = t
        out.append((t * 60.0, freeze({k: v for k, v in row.items() if k != "time_min"})))
    return out


def _check_surface(
    c: Collector, data: Mapping[str, Any], p: str, equipment: Any, h: float | None, medium_C: float | None
) -> None:
    """A machine with settings, or h with a medium temperature: exactly one way of giving the surface."""
    if equipment is not None:
        if not isinstance(equipment, str) or not equipment:
            c.add(
                InvalidInputError(
                    p + "equipment", equipment, "the name of a machine in the equipment library"
                )
            )
        if h is not None or medium_C is not None:
            c.add(
                InvalidInputError(
                    p + "equipment",
                    equipment,
                    "either equipment with settings, or h_W_m2K with medium_C / medium_profile",
                    "not both",
                )
            )
        return
    if h is None and "h_W_m2K" not in data:
        c.add(
            InvalidInputError(
                p + "h_W_m2K",
                None,
                "> 0 W/m²K",
                "a step needs h_W_m2K with a medium temperature, or equipment",
            )
        )


def _check_medium(
    c: Collector, data: Mapping[str, Any], p: str, medium_C: float | None, profile: tuple
) -> None:
    """Without a machine: a medium temperature, constant or a profile, not both."""
    if medium_C is None and not profile and "medium_C" not in data:
        c.add(
            InvalidInputError(
                p + "medium_C",
                None,
                f"[{MEDIUM_RANGE_C[0]:g}, {MEDIUM_RANGE_C[1]:g}] °C",
                "a step needs medium_C or medium_profile",
            )
        )
    if medium_C is not None and profile:
        c.add(
            InvalidInputError(
                p + "medium_profile", "given with medium_C", "medium_C or medium_profile, not both"
            )
        )


def _targets(c: Collector, data: Mapping[str, Any], p: str) -> tuple[Target, ...]:
    """Temperatures to reach at monitored points during the step; point "depth" states ``depth_mm`` below the
    surface (checked against the product's size by the plan: ``files.plan``)."""
    targets = []
    raw_targets = data.get("targets", [])
    if not isinstance(raw_targets, list):
        c.add(
            InvalidInputError(p + "targets", raw_targets, "a list of { point = 'core', temperature_C = ... }")
        )
        raw_targets = []
    for i, t in enumerate(raw_targets):
        tp = f"{p}targets[{i}]."
        if not isinstance(t, Mapping) or "temperature_C" not in t:
            c.add(InvalidInputError(tp.rstrip("."), t, "a table with temperature_C and optional point"))
            continue
        check_keys(c, t, ("point", "temperature_C", "depth_mm"), tp)
        temp = optional(c, t, "temperature_C", tp, stated_temperature)
        point = t.get("point", "core")
        depth_mm = optional(c, t, "depth_mm", tp, validate.number, minimum=0.0, maximum=3000.0, unit="mm")
        with c.catch():
            validate.choice(tp + "point", point, TARGET_POINTS)
            if point == "depth" and "depth_mm" not in t:
                raise InvalidInputError(
                    tp + "depth_mm", None, "a depth below the surface in mm for point 'depth'"
                )
            if point != "depth" and "depth_mm" in t:
                raise InvalidInputError(tp + "depth_mm", t["depth_mm"], "only with point = 'depth'")
            if temp is not None and (point != "depth" or depth_mm is not None):
                depth_m = None if depth_mm is None else depth_mm / 1000.0
                targets.append(Target(temp, point, depth_m))
    return tuple(targets)


def step_from_dict(data: Mapping[str, Any], index: int, source: str = "plan") -> Step:
    """Build one Step from a ``[[steps]]`` table (minutes, °C), collecting every problem."""
    p = f"steps[{index}]."
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError(p.rstrip("."), data, "a table of step keys")
    check_keys(c, data, STEP_KEYS, p)
    name = data.get("name")
    if not isinstance(name, str) or not name.strip():
        c.add(InvalidInputError(p + "name", name, "a non-empty text"))
        name = f"step {index + 1}"
    duration_s, stop, duration_given = _duration(c, data, p)
    medium_C = optional(c, data, "medium_C", p, medium_temperature)
    profile: tuple[tuple[float, float], ...] = ()
    if "medium_profile" in data:
        profile = _profile(c, data["medium_profile"], p + "medium_profile")
    h = optional(
        c, data, "h_W_m2K", p, validate.number, minimum=0.0, min_inclusive=False, maximum=1e5, unit="W/m²K"
    )
    equipment = data.get("equipment")
    settings = _settings(c, data, p)
    settings_profile = _settings_profile(c, data, p, duration_s)
    if equipment is None and (settings or settings_profile):
        c.add(InvalidInputError(p + "settings", dict(settings), "settings only with an equipment name"))
    _check_surface(c, data, p, equipment, h, medium_C)
    if equipment is None:
        _check_medium(c, data, p, medium_C, profile)
    emissivity = optional(c, data, "emissivity", p, validate.fraction)
    surroundings = optional(c, data, "surroundings_C", p, medium_temperature)
    targets = _targets(c, data, p)
    brine = brine_from_dict(c, data["brine"], p + "brine.") if "brine" in data else None
    loading = optional(c, data, "loading_medium_C", p, medium_temperature)
    lo, hi = WEIGHT_LOSS_RANGE_PERCENT
    loss = optional(
        c,
        data,
        "stop_when_weight_loss_percent",
        p,
        validate.number,
        minimum=lo,
        min_inclusive=False,
        maximum=hi,
        max_inclusive=False,
        unit="%",
    )
    if loading is not None and equipment is None:
        c.add(InvalidInputError(p + "loading_medium_C", loading, "only with an equipment name"))
    c.raise_if_any()
    return Step(
        name=name,
        duration_s=duration_s,
        stop_when_core_C=stop,
        medium_C=medium_C,
        medium_profile=profile,
        h_W_m2K=h,
        equipment=equipment,
        settings=freeze(settings),
        settings_profile=tuple(settings_profile),
        emissivity=emissivity,
        surroundings_C=surroundings,
        targets=targets,
        duration_given=duration_given,
        brine=brine,
        loading_medium_C=loading,
        stop_when_weight_loss_fraction=None if loss is None else loss / 100.0,
    )


def _target_to_dict(t: Target) -> dict[str, Any]:
    d: dict[str, Any] = {"point": t.point, "temperature_C": file_number(t.temperature_C)}
    if t.depth_m is not None:
        d["depth_mm"] = file_number(t.depth_m * 1000.0)
    return d


def step_to_dict(s: Step) -> dict[str, Any]:
    """The step as a TOML-ready table in file units (the inverse of :func:`step_from_dict`)."""
    d: dict[str, Any] = {"name": s.name}
    if s.duration_given:
        d["duration_min"] = file_minutes(s.duration_s)
    if s.stop_when_core_C is not None:
        d["stop_when_core_C"] = file_number(s.stop_when_core_C)
    if s.stop_when_weight_loss_fraction is not None:
        d["stop_when_weight_loss_percent"] = _inverse(s.stop_when_weight_loss_fraction, lambda x: x / 100.0)
    if s.equipment is not None:
        d["equipment"] = s.equipment
        if s.settings:
            d["settings"] = {k: file_number(v) for k, v in s.settings}
        if s.loading_medium_C is not None:
            d["loading_medium_C"] = file_number(s.loading_medium_C)
        if s.settings_profile:
            d["settings_profile"] = [
                {"time_min": file_number(t / 60.0), **{k: file_number(v) for k, v in row}}
                for t, row in s.settings_profile
            ]
    else:
        if s.h_W_m2K is not None:
            d["h_W_m2K"] = file_number(s.h_W_m2K)
        if s.medium_C is not None:
            d["medium_C"] = file_number(s.medium_C)
        if s.medium_profile:
            d["medium_profile"] = [[file_minutes(t), file_number(v)] for t, v in s.medium_profile]
    if s.emissivity is not None:
        d["emissivity"] = file_number(s.emissivity)
    if s.surroundings_C is not None:
        d["surroundings_C"] = file_number(s.surroundings_C)
    if s.targets:
        d["targets"] = [_target_to_dict(t) for t in s.targets]
    if s.brine is not None:
        d["brine"] = brine_to_dict(s.brine)
    return d
