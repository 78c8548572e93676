"""Equipment files (``product_library/equipment/*.toml``) to and from :class:`procplan.surface.machines.Equipment`.

:func:`equipment_from_dict` validates a machine description and reports every problem at once;
:func:`equipment_to_dict` writes it back. The file format is sketched in :mod:`procplan.surface.machines`.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from types import MappingProxyType
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.fields import check_keys
from procplan.surface.machines import (
    MEDIA,
    REFRIGERATED_KINDS,
    SETTINGS,
    Equipment,
    SettingRange,
)
from procplan.surface.plant import THERMAL_FIELDS, MachineThermal
from procplan.surface.ranges import EQUIPMENT_KINDS

_ID = re.compile(r"^[a-z0-9][a-z0-9-]{0,63}$")
EQUIPMENT_KEYS = (
    "id",
    "name",
    "kind",
    "medium",
    "plant",
    "description",
    "capacity_kW",
    "evaporating_C",
    "condensing_C",
    "brine_nacl_fraction",
    "settings",
    "thermal",
)


def _text(collector: Collector, data: Mapping[str, Any], key: str, required: bool) -> str:
    v = data.get(key)
    if v is None:
        if required:
            collector.add(InvalidInputError(key, None, "a text value", "required"))
        return ""
    if not isinstance(v, str):
        collector.add(InvalidInputError(key, v, "a text value"))
        return ""
    return v


def _check_kind_and_medium(c: Collector, kind: str, medium: str) -> None:
    """The machine's kind and medium are known and belong together."""
    if kind:
        with c.catch():
            validate.choice("kind", kind, EQUIPMENT_KINDS)
    if medium:
        with c.catch():
            validate.choice("medium", medium, MEDIA)
    if kind in EQUIPMENT_KINDS and medium in MEDIA and EQUIPMENT_KINDS[kind].medium != medium:
        c.add(InvalidInputError("medium", medium, f"'{EQUIPMENT_KINDS[kind].medium}' for a {kind}"))


def _refrigerant(c: Collector, data: Mapping[str, Any], kind: str) -> tuple[float | None, float | None]:
    """Evaporating and condensing temperatures [°C] (required for refrigerating kinds)."""
    evap = cond = None
    refrigerated = kind in REFRIGERATED_KINDS
    for key in ("evaporating_C", "condensing_C"):
        v = data.get(key)
        if v is None:
            if refrigerated:
                c.add(InvalidInputError(key, None, "a temperature in °C", f"required for a {kind}"))
            continue
        with c.catch():
            x = validate.number(key, v, minimum=-100.0, maximum=100.0, unit="°C")
            if key == "evaporating_C":
                evap = x
            else:
                cond = x
    if evap is not None and cond is not None and evap >= cond:
        c.add(InvalidInputError("evaporating_C", evap, f"below condensing_C = {cond:g} °C"))
    return evap, cond


def _brine_fraction(c: Collector, data: Mapping[str, Any], medium: str) -> float | None:
    """NaCl mass fraction of a brine medium (0.2 when a brine machine does not give one)."""
    nacl = None
    if data.get("brine_nacl_fraction") is not None or medium == "brine":
        with c.catch():
            nacl = validate.number(
                "brine_nacl_fraction",
                data.get("brine_nacl_fraction", 0.2 if medium == "brine" else None),
                minimum=0.01,
                maximum=0.23,
            )
            if medium != "brine":
                raise InvalidInputError("brine_nacl_fraction", nacl, "only for a brine medium")
    return nacl


def equipment_from_dict(data: Mapping[str, Any], source: str = "equipment") -> Equipment:
    """Validate a machine description (as read from TOML) and build an Equipment; every problem is reported.

    Parameters
    ----------
    data : the parsed table
    source : where it came from (a file name), used in the error message

    Raises
    ------
    InvalidInputError (ValidationErrors when there are several problems)

    Examples
    --------
    >>> e = equipment_from_dict({"id": "c1", "name": "C1", "kind": "cold-room", "medium": "air", "capacity_kW": 5,
    ...     "evaporating_C": -8, "condensing_C": 35,
    ...     "settings": {"air_C": {"min": 0, "max": 6, "default": 2}, "air_speed_m_s": {"min": 0.1, "max": 1, "default": 0.3}}})
    >>> e.settings["air_C"].default
    2.0
    """
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError(source, type(data).__name__, "a table of equipment keys")
    check_keys(c, data, EQUIPMENT_KEYS)
    eid = _text(c, data, "id", True)
    if eid and not _ID.match(eid):
        c.add(
            InvalidInputError(
                "id",
                eid,
                "lower-case letters, digits and hyphens, starting with a letter or digit, ≤ 64 characters",
            )
        )
    name = _text(c, data, "name", True)
    kind = _text(c, data, "kind", True)
    medium = _text(c, data, "medium", True)
    description = _text(c, data, "description", False)
    plant = _text(c, data, "plant", False)
    _check_kind_and_medium(c, kind, medium)
    capacity = 0.0
    with c.catch():
        capacity = validate.number(
            "capacity_kW", data.get("capacity_kW"), minimum=0.0, min_inclusive=False, maximum=1e5, unit="kW"
        )
    evap, cond = _refrigerant(c, data, kind)
    nacl = _brine_fraction(c, data, medium)
    settings = _settings_from_dict(c, data.get("settings"), medium)
    if (
        kind in EQUIPMENT_KINDS
        and medium in MEDIA
        and evap is not None
        and medium in ("air", "water", "brine")
    ):
        tkey = MEDIA[medium]["required"][0]
        if tkey in settings and evap > settings[tkey].minimum:
            c.add(
                InvalidInputError(
                    "evaporating_C",
                    evap,
                    f"below the lowest {tkey} = {settings[tkey].minimum:g} °C (heat flows from the medium to the refrigerant)",
                )
            )
    thermal = _thermal_from_dict(c, data.get("thermal"), evap)
    c.raise_if_any()
    return Equipment(
        eid,
        name,
        kind,
        medium,
        MappingProxyType(settings),
        capacity,
        evap,
        cond,
        description,
        plant,
        nacl,
        thermal=thermal,
    )


def _thermal_from_dict(c: Collector, raw: Any, evaporating_C: float | None) -> MachineThermal | None:
    """The optional ``[thermal]`` table (file units: kW for the fixed loads); None when absent."""
    if raw is None:
        return None
    if not isinstance(raw, Mapping):
        c.add(
            InvalidInputError(
                "thermal", raw, "a table such as { medium_volume_m3 = 12, structure_mass_kg = 900 }"
            )
        )
        return None
    by_key = {key: (name, unit, lo, hi) for name, (key, unit, lo, hi) in THERMAL_FIELDS.items()}
    check_keys(c, raw, tuple(by_key), "thermal.")
    values: dict[str, float] = {}
    for key, (name, unit, lo, hi) in by_key.items():
        if key not in raw:
            continue
        with c.catch():
            x = validate.number(f"thermal.{key}", raw[key], minimum=lo, maximum=hi, unit=unit)
            values[name] = x * 1e3 if unit == "kW" else x
    if "medium_volume_m3" not in raw:
        c.add(InvalidInputError("thermal.medium_volume_m3", None, "a volume in m³", "required in [thermal]"))
        return None
    rated = values.get("rated_medium_C")
    evap_ok = not any(getattr(e, "field", "") == "evaporating_C" for e in c.problems)
    if rated is not None and evaporating_C is not None and evap_ok and rated <= evaporating_C:
        c.add(
            InvalidInputError("thermal.rated_medium_C", rated, f"above evaporating_C = {evaporating_C:g} °C")
        )
    if len(values) < len([k for k in raw if k in by_key]):
        return None
    return MachineThermal(**values)


def _setting_range(c: Collector, field_name: str, key: str, spec: Any) -> SettingRange | None:
    """One ``{ min, max, default }`` setting inside the setting's physical bounds; None when invalid."""
    s = SETTINGS[key]
    if (
        not isinstance(spec, Mapping)
        or set(spec) - {"min", "max", "default"}
        or not {"min", "max", "default"} <= set(spec)
    ):
        c.add(InvalidInputError(field_name, spec, "{ min = ..., max = ..., default = ... }"))
        return None
    vals = {}
    for part in ("min", "max", "default"):
        with c.catch():
            vals[part] = validate.number(
                f"{field_name}.{part}", spec[part], minimum=s.minimum, maximum=s.maximum, unit=s.unit
            )
    if len(vals) < 3:
        return None
    if vals["min"] > vals["max"]:
        c.add(
            InvalidInputError(f"{field_name}.min", vals["min"], f"≤ max = {vals['max']:g} {s.unit}".rstrip())
        )
        return None
    if not vals["min"] <= vals["default"] <= vals["max"]:
        c.add(
            InvalidInputError(
                f"{field_name}.default",
                vals["default"],
                f"[{vals['min']:g}, {vals['max']:g}] {s.unit}".rstrip(),
            )
        )
        return None
    return SettingRange(vals["min"], vals["max"], vals["default"], s.unit)


def _settings_from_dict(c: Collector, raw: Any, medium: str) -> dict[str, SettingRange]:
    out: dict[str, SettingRange] = {}
    if not isinstance(raw, Mapping):
        c.add(
            InvalidInputError(
                "settings", raw, "a table of settings, e.g. air_C = { min = -10, max = 3, default = -4 }"
            )
        )
        return out
    allowed = MEDIA.get(medium, {"required": (), "optional": ()})
    keys_ok = allowed["required"] + allowed["optional"]
    for key, spec in raw.items():
        field_name = f"settings.{key}"
        if medium in MEDIA and key not in keys_ok:
            c.add(
                InvalidInputError(field_name, spec, f"a setting of a {medium} machine: " + ", ".join(keys_ok))
            )
            continue
        if key not in SETTINGS:
            continue
        r = _setting_range(c, field_name, key, spec)
        if r is not None:
            out[key] = r
    for key in allowed["required"]:
        if key not in raw:
            c.add(
                InvalidInputError(
                    f"settings.{key}", None, "{ min, max, default }", f"required for a {medium} machine"
                )
            )
    return out


def equipment_to_dict(equipment: Equipment) -> dict[str, Any]:
    """The inverse of :func:`equipment_from_dict`: plain data ready for TOML."""
    d: dict[str, Any] = {
        "id": equipment.id,
        "name": equipment.name,
        "kind": equipment.kind,
        "medium": equipment.medium,
    }
    if equipment.plant:
        d["plant"] = equipment.plant
    if equipment.description:
        d["description"] = equipment.description
    d["capacity_kW"] = equipment.capacity_kW
    if equipment.evaporating_C is not None:
        d["evaporating_C"] = equipment.evaporating_C
    if equipment.condensing_C is not None:
        d["condensing_C"] = equipment.condensing_C
    if equipment.brine_nacl_fraction is not None:
        d["brine_nacl_fraction"] = equipment.brine_nacl_fraction
    d["settings"] = {
        k: {"min": r.minimum, "max": r.maximum, "default": r.default} for k, r in equipment.settings.items()
    }
    th = equipment.thermal
    if th is not None:
        d["thermal"] = {
            key: (getattr(th, name) / 1e3 if unit == "kW" else getattr(th, name))
            for name, (key, unit, _, _) in THERMAL_FIELDS.items()
            if getattr(th, name) is not None
        }
    return d
