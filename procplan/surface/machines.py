"""Machines of a plant: kind, medium, adjustable settings with their ranges, refrigeration data.

Pure parse/validate functions for the library and plan files (``equipment_from_dict``, ``equipment_to_dict``,
``resolve_settings``) and the surface coefficient of a product in a machine (``equipment_h``). Files are read
and written elsewhere (procplan.files.library); nothing here does I/O.

An equipment file, sketched::

    id = "chiller-b2"
    name = "Blast chiller B2"
    kind = "blast-chiller"
    medium = "air"
    capacity_kW = 18.0
    evaporating_C = -12.0
    condensing_C = 38.0
    [settings]
    air_C = { min = -10.0, max = 3.0, default = -4.0 }
    air_speed_m_s = { min = 1.0, max = 5.0, default = 3.5 }
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.geometry import Geometry
from procplan.surface.coefficient import SurfaceResult, surface_coefficient
from procplan.surface.ranges import EQUIPMENT_KINDS

__all__ = [
    "EQUIPMENT_KINDS",
    "MEDIA",
    "SETTINGS",
    "Equipment",
    "SettingRange",
    "SettingSpec",
    "equipment_from_dict",
    "equipment_h",
    "equipment_to_dict",
    "medium_temperature_C",
    "resolve_settings",
]


@dataclass(frozen=True)
class SettingSpec:
    """An adjustable setting: its unit, the physical bounds any machine's range must lie in, what it means."""

    unit: str
    minimum: float
    maximum: float
    description: str


#: The one registry of adjustable settings (keys carry their units).
SETTINGS: dict[str, SettingSpec] = {
    "air_C": SettingSpec("°C", -100.0, 300.0, "air temperature"),
    "air_speed_m_s": SettingSpec("m/s", 0.0, 40.0, "air speed approaching the product"),
    "relative_humidity": SettingSpec("", 0.0, 1.0, "relative humidity of the air, fraction"),
    "emissivity": SettingSpec("", 0.0, 1.0, "emissivity of the radiative exchange with the walls"),
    "water_C": SettingSpec("°C", 0.0, 99.0, "water temperature"),
    "water_speed_m_s": SettingSpec("m/s", 0.0, 5.0, "water speed past the product"),
    "brine_C": SettingSpec("°C", -20.0, 40.0, "brine temperature"),
    "brine_speed_m_s": SettingSpec("m/s", 0.0, 5.0, "brine speed past the product"),
    "steam_C": SettingSpec("°C", 100.0, 130.0, "saturated-steam temperature"),
}

#: Media and the settings each needs (required) or accepts (optional); the first required one is the medium temperature.
MEDIA: dict[str, dict[str, tuple[str, ...]]] = {
    "air": {"required": ("air_C", "air_speed_m_s"), "optional": ("relative_humidity", "emissivity")},
    "water": {"required": ("water_C", "water_speed_m_s"), "optional": ()},
    "brine": {"required": ("brine_C", "brine_speed_m_s"), "optional": ()},
    "steam": {"required": ("steam_C",), "optional": ()},
}

#: Kinds that refrigerate, for which evaporating and condensing temperatures are required.
REFRIGERATED_KINDS = frozenset(
    k for k, v in EQUIPMENT_KINDS.items() if k not in ("convection-oven", "water-bath", "steam-oven")
)

_ID = re.compile(r"^[a-z0-9][a-z0-9-]{0,63}$")
_TOP_KEYS = (
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
)


@dataclass(frozen=True)
class SettingRange:
    """Allowed range and default of one setting on one machine."""

    minimum: float
    maximum: float
    default: float
    unit: str = ""

    def describe(self) -> str:
        u = f" {self.unit}" if self.unit else ""
        return f"[{self.minimum:g}, {self.maximum:g}]{u}"


@dataclass(frozen=True)
class Equipment:
    """One machine of a plant.

    Attributes
    ----------
    id : short name used by plan files (lower case, digits, hyphens)
    name : display name
    kind : key of EQUIPMENT_KINDS
    medium : "air", "water", "brine" or "steam" (must be the kind's)
    settings : setting key → SettingRange (read-only mapping)
    capacity_kW : refrigerating or heating capacity [kW]
    evaporating_C, condensing_C : refrigerant temperatures for energy estimates [°C] (None for heating kinds)
    description, plant : free text
    brine_nacl_fraction : NaCl mass fraction of a brine medium
    """

    id: str
    name: str
    kind: str
    medium: str
    settings: Mapping[str, SettingRange]
    capacity_kW: float
    evaporating_C: float | None = None
    condensing_C: float | None = None
    description: str = ""
    plant: str = ""
    brine_nacl_fraction: float | None = None
    extra: Mapping[str, Any] = field(default_factory=lambda: MappingProxyType({}))

    @property
    def temperature_key(self) -> str:
        """The setting that holds the medium temperature (air_C, water_C, brine_C or steam_C)."""
        return MEDIA[self.medium]["required"][0]

    def defaults(self) -> dict[str, float]:
        """Every setting at its default."""
        return {k: r.default for k, r in self.settings.items()}


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
    for key in data:
        if key not in _TOP_KEYS:
            c.add(InvalidInputError(str(key), data[key], "one of the keys " + ", ".join(_TOP_KEYS)))
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
    if kind:
        with c.catch():
            validate.choice("kind", kind, EQUIPMENT_KINDS)
    if medium:
        with c.catch():
            validate.choice("medium", medium, MEDIA)
    if kind in EQUIPMENT_KINDS and medium in MEDIA and EQUIPMENT_KINDS[kind].medium != medium:
        c.add(InvalidInputError("medium", medium, f"'{EQUIPMENT_KINDS[kind].medium}' for a {kind}"))
    capacity = 0.0
    with c.catch():
        capacity = validate.number(
            "capacity_kW", data.get("capacity_kW"), minimum=0.0, min_inclusive=False, maximum=1e5, unit="kW"
        )
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
    c.raise_if_any()
    return Equipment(
        eid, name, kind, medium, MappingProxyType(settings), capacity, evap, cond, description, plant, nacl
    )


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
        s = SETTINGS[key]
        if (
            not isinstance(spec, Mapping)
            or set(spec) - {"min", "max", "default"}
            or not {"min", "max", "default"} <= set(spec)
        ):
            c.add(InvalidInputError(field_name, spec, "{ min = ..., max = ..., default = ... }"))
            continue
        vals = {}
        for part in ("min", "max", "default"):
            with c.catch():
                vals[part] = validate.number(
                    f"{field_name}.{part}", spec[part], minimum=s.minimum, maximum=s.maximum, unit=s.unit
                )
        if len(vals) < 3:
            continue
        if vals["min"] > vals["max"]:
            c.add(
                InvalidInputError(
                    f"{field_name}.min", vals["min"], f"≤ max = {vals['max']:g} {s.unit}".rstrip()
                )
            )
            continue
        if not vals["min"] <= vals["default"] <= vals["max"]:
            c.add(
                InvalidInputError(
                    f"{field_name}.default",
                    vals["default"],
                    f"[{vals['min']:g}, {vals['max']:g}] {s.unit}".rstrip(),
                )
            )
            continue
        out[key] = SettingRange(vals["min"], vals["max"], vals["default"], s.unit)
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
    return d


def medium_temperature_C(equipment: Equipment, settings: Mapping[str, Any]) -> float:
    """The medium temperature [°C] of resolved settings (air_C, water_C, brine_C or steam_C)."""
    return float(settings[equipment.temperature_key])


def resolve_settings(
    equipment: Equipment, settings: Mapping[str, Any] | None = None, *, field_prefix: str = "settings."
) -> dict[str, float]:
    """Fill the machine's defaults into ``settings`` and check every value against the machine's range.

    Raises InvalidInputError naming the setting and the machine's allowed range (all problems together).

    >>> e = equipment_from_dict({"id": "c1", "name": "C1", "kind": "cold-room", "medium": "air", "capacity_kW": 5,
    ...     "evaporating_C": -8, "condensing_C": 35,
    ...     "settings": {"air_C": {"min": 0, "max": 6, "default": 2}, "air_speed_m_s": {"min": 0.1, "max": 1, "default": 0.3}}})
    >>> resolve_settings(e, {"air_C": 4})
    {'air_C': 4.0, 'air_speed_m_s': 0.3}
    >>> resolve_settings(e, {"air_C": 9})
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: settings.air_C = 9: allowed [0, 6] °C on C1 (c1)
    """
    settings = dict(settings or {})
    c = Collector(f"settings for {equipment.id}")
    out = equipment.defaults()
    for key, value in settings.items():
        if key not in equipment.settings:
            c.add(
                InvalidInputError(
                    f"{field_prefix}{key}",
                    value,
                    f"a setting of {equipment.name} ({equipment.id}): " + ", ".join(equipment.settings),
                )
            )
            continue
        r = equipment.settings[key]
        allowed = f"{r.describe()} on {equipment.name} ({equipment.id})"
        with c.catch():
            x = validate.number(f"{field_prefix}{key}", value, unit=r.unit)
            if not r.minimum <= x <= r.maximum:
                raise InvalidInputError(f"{field_prefix}{key}", value, allowed)
            out[key] = x
    c.raise_if_any()
    return out


def equipment_h(
    equipment: Equipment,
    settings: Mapping[str, Any] | None,
    geometry: Geometry,
    surface_C: float,
    packaging: Iterable[Any] = (),
) -> SurfaceResult:
    """Surface coefficient of a product in this machine at the given (or default) settings.

    >>> from procplan.geometry import Geometry
    >>> e = equipment_from_dict({"id": "c1", "name": "C1", "kind": "cold-room", "medium": "air", "capacity_kW": 5,
    ...     "evaporating_C": -8, "condensing_C": 35,
    ...     "settings": {"air_C": {"min": 0, "max": 6, "default": 2}, "air_speed_m_s": {"min": 0.1, "max": 1, "default": 0.3}}})
    >>> r = equipment_h(e, {}, Geometry("cylinder", diameter_m=0.08), surface_C=15.0)
    >>> 5 < r.h_conv_W_m2K < 10
    True
    """
    s = resolve_settings(equipment, settings)
    kw: dict[str, Any] = {
        "medium_C": s[equipment.temperature_key],
        "surface_C": surface_C,
        "packaging": packaging,
    }
    if equipment.medium == "air":
        kw["air_speed_m_s"] = s["air_speed_m_s"]
        kw["relative_humidity"] = s.get("relative_humidity")
        kw["emissivity"] = s.get("emissivity")
    elif equipment.medium in ("water", "brine"):
        kw["liquid_speed_m_s"] = s[f"{equipment.medium}_speed_m_s"]
        if equipment.brine_nacl_fraction is not None:
            kw["nacl_mass_fraction"] = equipment.brine_nacl_fraction
    return surface_coefficient(equipment, geometry, **kw)
