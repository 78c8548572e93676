"""Machines of a plant: kind, medium, adjustable settings with their ranges, refrigeration data.

Settings checks for plan files (``resolve_settings``) and the surface coefficient of a product in a machine
(``equipment_h``). Equipment files are read and written by :mod:`procplan.files.machines`; nothing here does I/O.

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
    [thermal]                       # optional: the machine as a thermal system (procplan.surface.plant)
    medium_volume_m3 = 12.0
    structure_mass_kg = 900.0
    rated_medium_C = -6.0
    fan_kW = 2.2
    wall_UA_W_K = 25.0
"""

from __future__ import annotations

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
    "equipment_h",
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
    "air_C": SettingSpec("°C", -100.0, 400.0, "air temperature"),
    "air_speed_m_s": SettingSpec("m/s", 0.0, 40.0, "air speed approaching the product"),
    "relative_humidity": SettingSpec("", 0.0, 1.0, "relative humidity of the air, fraction"),
    "dew_point_C": SettingSpec("°C", -40.0, 99.0, "dew point of hot, dry air (its water content)"),
    "emissivity": SettingSpec("", 0.0, 1.0, "emissivity of the radiative exchange with the walls"),
    "water_C": SettingSpec("°C", 0.0, 99.0, "water temperature"),
    "water_speed_m_s": SettingSpec("m/s", 0.0, 5.0, "water speed past the product"),
    "brine_C": SettingSpec("°C", -20.0, 40.0, "brine temperature"),
    "brine_speed_m_s": SettingSpec("m/s", 0.0, 5.0, "brine speed past the product"),
    "steam_C": SettingSpec("°C", 100.0, 130.0, "saturated-steam temperature"),
}

#: Media and the settings each needs (required) or accepts (optional); the first required one is the medium temperature.
MEDIA: dict[str, dict[str, tuple[str, ...]]] = {
    "air": {
        "required": ("air_C", "air_speed_m_s"),
        "optional": ("relative_humidity", "dew_point_C", "emissivity"),
    },
    "water": {"required": ("water_C", "water_speed_m_s"), "optional": ()},
    "brine": {"required": ("brine_C", "brine_speed_m_s"), "optional": ()},
    "steam": {"required": ("steam_C",), "optional": ()},
}

#: Kinds that refrigerate, for which evaporating and condensing temperatures are required.
REFRIGERATED_KINDS = frozenset(
    k
    for k, v in EQUIPMENT_KINDS.items()
    if k not in ("convection-oven", "dry-heat-tunnel", "water-bath", "steam-oven")
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
    thermal : the machine as a thermal system (:class:`procplan.surface.plant.MachineThermal`); None when not
        given, and a loaded run then keeps the medium at its set point (with a note)
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
    thermal: Any = None

    @property
    def temperature_key(self) -> str:
        """The setting that holds the medium temperature (air_C, water_C, brine_C or steam_C)."""
        return MEDIA[self.medium]["required"][0]

    def defaults(self) -> dict[str, float]:
        """Every setting at its default."""
        return {k: r.default for k, r in self.settings.items()}


def medium_temperature_C(equipment: Equipment, settings: Mapping[str, Any]) -> float:
    """The medium temperature [°C] of resolved settings (air_C, water_C, brine_C or steam_C)."""
    return float(settings[equipment.temperature_key])


def resolve_settings(
    equipment: Equipment, settings: Mapping[str, Any] | None = None, *, field_prefix: str = "settings."
) -> dict[str, float]:
    """Fill the machine's defaults into ``settings`` and check every value against the machine's range.

    Raises InvalidInputError naming the setting and the machine's allowed range (all problems together).

    >>> e = Equipment("c1", "C1", "cold-room", "air", {"air_C": SettingRange(0.0, 6.0, 2.0, "°C"),
    ...     "air_speed_m_s": SettingRange(0.1, 1.0, 0.3, "m/s")}, 5.0, -8.0, 35.0)
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
    surroundings_C: float | None = None,
    emissivity: float | None = None,
) -> SurfaceResult:
    """Surface coefficient of a product in this machine at the given (or default) settings.

    ``emissivity`` (0–1) is the product's (or its packaging's) own, which replaces the machine's emissivity
    setting in an air machine (None: the setting).

    ``surroundings_C`` is the temperature of the walls the product radiates to in an air machine (default the
    air temperature); the result's ``sink_C`` is then the temperature the product exchanges heat with.

    >>> from procplan.geometry import Geometry
    >>> e = Equipment("c1", "C1", "cold-room", "air", {"air_C": SettingRange(0.0, 6.0, 2.0, "°C"),
    ...     "air_speed_m_s": SettingRange(0.1, 1.0, 0.3, "m/s")}, 5.0, -8.0, 35.0)
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
        kw["emissivity"] = s.get("emissivity") if emissivity is None else emissivity
        kw["surroundings_C"] = surroundings_C
    elif equipment.medium in ("water", "brine"):
        kw["liquid_speed_m_s"] = s[f"{equipment.medium}_speed_m_s"]
        if equipment.brine_nacl_fraction is not None:
            kw["nacl_mass_fraction"] = equipment.brine_nacl_fraction
    return surface_coefficient(equipment, geometry, **kw)
