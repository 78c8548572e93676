"""A machine as a thermal system: the heat capacity of its medium and structure, its plant and its fixed loads.

A loaded machine's medium (the air of a chiller, the water of a bath) is one well-mixed node of heat capacity
C = ρ c_p V (medium, at the set point) + m c_p (structure: trolleys, coils, tank walls), through which the
load's heat passes to the plant::

    C dT_m/dt = − Σ_pieces Q_piece + P(T_m) + L(T_m)

with the plant duty P [W into the medium] and the fixed loads L = fans + lights + defrost + doors
+ UA_wall (T_room − T_m) [W into the medium].

**Plant.** A refrigerating plant removes heat through its evaporator in proportion to the medium-to-evaporating
temperature difference, capped by its compressor:  removal = min(Q_cap, UA (T_m − T_evap)) with
UA = Q_cap / (T_rated − T_evap), the simple evaporator model of unit-cooler ratings (capacity proportional to
the entering-air-to-evaporating temperature difference): Stoecker, W.F. & Jones, J.W., Refrigeration and Air
Conditioning, 2nd ed., McGraw-Hill 1982, ch. 12 (evaporators) (from memory); ASHRAE Handbook—Refrigeration,
chapter on forced-circulation air coolers (capacity per kelvin of TD) (from memory). Heating kinds (ovens,
water baths, steam) supply at most their heating capacity (heater power or steam supply), a constant.

**Control.** The plant holds the set point while the duty that takes is within its capacity at the set point;
otherwise it runs at its limit and the medium drifts (a chiller's medium warms, a bath's cools); a chiller
whose medium would fall below its set point with the plant off stays off (and a heater above it).

Defaults a user may not know (every value may be given in the equipment file's ``[thermal]`` table):

* ``structure_cp_J_kgK`` = 477 J/kgK, stainless steel AISI 304 at 300 K (Incropera, Fundamentals of Heat and
  Mass Transfer, 7th ed., Table A.1).
* ``rated_medium_C``: the medium temperature at which ``capacity_kW`` is rated; default the machine's default
  medium setting (which is how a demo machine's duty is stated).
* ``room_C`` = 20 °C: the room around the machine.
* fans, lights, defrost, doors and wall UA default to 0 (no fixed load).

An ice bank's latent store (which lets an ice-water tank deliver more than its compressor for a while) and the
humidity of the air (latent coil load) are not modelled: both err to the safe side (longer predicted times).
"""

from __future__ import annotations

from dataclasses import dataclass

from procplan import validate
from procplan.errors import InvalidInputError

__all__ = ["STAINLESS_CP_J_KGK", "THERMAL_FIELDS", "MachineThermal", "Plant", "medium_heat_capacity_J_K"]

#: Specific heat of AISI 304 stainless steel at 300 K [J/kgK] (Incropera 7th ed., Table A.1).
STAINLESS_CP_J_KGK = 477.0
#: Specific heat of water vapour near 100 °C [J/kgK] (from memory; the steam's own capacity is negligible
#: beside the structure's).
_STEAM_CP_J_KGK = 2080.0

#: Fields of MachineThermal with (file key, unit, minimum, maximum) as an equipment file gives them.
THERMAL_FIELDS: dict[str, tuple[str, str, float, float]] = {
    "medium_volume_m3": ("medium_volume_m3", "m³", 1e-4, 1e4),
    "structure_mass_kg": ("structure_mass_kg", "kg", 0.0, 1e6),
    "structure_cp_J_kgK": ("structure_cp_J_kgK", "J/kgK", 100.0, 5000.0),
    "rated_medium_C": ("rated_medium_C", "°C", -100.0, 300.0),
    "fan_W": ("fan_kW", "kW", 0.0, 1e3),
    "lights_W": ("lights_kW", "kW", 0.0, 1e3),
    "defrost_W": ("defrost_kW", "kW", 0.0, 1e3),
    "door_W": ("door_kW", "kW", 0.0, 1e3),
    "wall_UA_W_K": ("wall_UA_W_K", "W/K", 0.0, 1e5),
    "room_C": ("room_C", "°C", -40.0, 60.0),
}


@dataclass(frozen=True)
class MachineThermal:
    """What links a machine's medium to its load (SI).

    Attributes
    ----------
    medium_volume_m3 : volume of the medium (air in the cabinet, water in the tank) [m³]
    structure_mass_kg : mass of the structure the medium exchanges heat with (trolleys, coils, tank) [kg]
    structure_cp_J_kgK : its specific heat [J/kgK] (stainless steel by default)
    rated_medium_C : medium temperature at which the capacity is rated [°C] (None: the default setting)
    fan_W, lights_W, defrost_W, door_W : fixed loads into the medium [W] (defrost and doors as cycle averages)
    wall_UA_W_K : conductance of the walls to the room [W/K]
    room_C : room temperature around the machine [°C]
    """

    medium_volume_m3: float
    structure_mass_kg: float = 0.0
    structure_cp_J_kgK: float = STAINLESS_CP_J_KGK
    rated_medium_C: float | None = None
    fan_W: float = 0.0
    lights_W: float = 0.0
    defrost_W: float = 0.0
    door_W: float = 0.0
    wall_UA_W_K: float = 0.0
    room_C: float = 20.0

    def __post_init__(self) -> None:
        for name, (key, unit, lo, hi) in THERMAL_FIELDS.items():
            value = getattr(self, name)
            if value is None:
                continue
            scale = 1e3 if unit == "kW" else 1.0
            validate.number(f"thermal.{key}", value / scale, minimum=lo, maximum=hi, unit=unit)

    @property
    def fixed_W(self) -> float:
        """The constant fixed loads (fans, lights, defrost, doors) [W into the medium]."""
        return self.fan_W + self.lights_W + self.defrost_W + self.door_W


def medium_heat_capacity_J_K(
    medium: str, volume_m3: float, temperature_C: float, nacl: float | None
) -> float:
    """ρ c_p V of the medium at ``temperature_C`` [J/K] from :mod:`procplan.surface.media`.

    >>> round(medium_heat_capacity_J_K("water", 1.0, 20.0, None) / 1e6, 2)  # 998 kg/m³ × 4182 J/kgK
    4.17
    """
    from procplan.surface import media

    if medium == "steam":
        return (
            media.saturated_vapour_density_kg_m3(min(max(temperature_C, 1.0), 200.0))
            * _STEAM_CP_J_KGK
            * volume_m3
        )
    props = media.medium_properties(
        medium, temperature_C, nacl_mass_fraction=nacl if nacl is not None else 0.2
    )
    return props.rho_kg_m3 * props.cp_J_kgK * volume_m3


@dataclass(frozen=True)
class Plant:
    """The plant of one machine at one set point, in solver terms.

    Attributes
    ----------
    capacity_W : compressor (or heater, steam) capacity [W]
    refrigerating : True for a plant that removes heat (a chiller), False for one that supplies it
    ua_W_K : evaporator conductance UA = Q_cap / (T_rated − T_evap) [W/K] (refrigerating only)
    evaporating_C : evaporating temperature [°C] (refrigerating only)
    heat_capacity_J_K : medium + structure [J/K]
    fixed_W : fans, lights, defrost and doors [W into the medium]
    wall_UA_W_K, room_C : wall losses to the room [W/K], [°C]

    >>> p = Plant(10e3, True, 500.0, -20.0, 1e5)
    >>> p.available_W(-4.0), p.available_W(10.0)   # 500 × 16 K; capped at 10 kW
    (8000.0, 10000.0)
    """

    capacity_W: float
    refrigerating: bool
    ua_W_K: float = 0.0
    evaporating_C: float = 0.0
    heat_capacity_J_K: float = 1.0
    fixed_W: float = 0.0
    wall_UA_W_K: float = 0.0
    room_C: float = 20.0

    @classmethod
    def of(cls, equipment, set_point_C: float) -> Plant:
        """The plant of ``equipment`` (with its ``thermal`` record) at ``set_point_C``."""
        th: MachineThermal = equipment.thermal
        cap = equipment.capacity_kW * 1e3
        C = medium_heat_capacity_J_K(
            equipment.medium, th.medium_volume_m3, set_point_C, equipment.brine_nacl_fraction
        )
        C += th.structure_mass_kg * th.structure_cp_J_kgK
        common = dict(heat_capacity_J_K=C, fixed_W=th.fixed_W, wall_UA_W_K=th.wall_UA_W_K, room_C=th.room_C)
        if equipment.evaporating_C is None:
            return cls(cap, False, **common)
        rated = (
            th.rated_medium_C
            if th.rated_medium_C is not None
            else equipment.defaults()[equipment.temperature_key]
        )
        if rated <= equipment.evaporating_C:
            raise InvalidInputError(
                "thermal.rated_medium_C", rated, f"above evaporating_C = {equipment.evaporating_C:g} °C"
            )
        ua = cap / (rated - equipment.evaporating_C)
        return cls(cap, True, ua, equipment.evaporating_C, **common)

    def available_W(self, medium_C: float) -> float:
        """What the plant can remove (chiller) or supply (heater) at ``medium_C`` [W, ≥ 0]."""
        if not self.refrigerating:
            return self.capacity_W
        return min(self.capacity_W, self.ua_W_K * max(medium_C - self.evaporating_C, 0.0))

    def at_limit(self, medium_C: float) -> tuple[float, float]:
        """Duty at the plant's limit [W into the medium] and its derivative with respect to T_m [W/K]."""
        if not self.refrigerating:
            return self.capacity_W, 0.0
        removal = self.ua_W_K * (medium_C - self.evaporating_C)
        if removal >= self.capacity_W:
            return -self.capacity_W, 0.0
        if removal <= 0.0:
            return 0.0, 0.0
        return -removal, -self.ua_W_K

    def fixed(self, medium_C: float) -> tuple[float, float]:
        """Fixed loads [W into the medium] and their derivative with respect to T_m [W/K]."""
        return self.fixed_W + self.wall_UA_W_K * (self.room_C - medium_C), -self.wall_UA_W_K

    def mode(self, required_W: float, set_point_C: float) -> str:
        """What the plant does when holding the set point takes ``required_W`` [W into the medium]:
        "hold", "limit" (the set point is out of reach) or "off" (the medium drifts past it without the plant)."""
        if self.refrigerating:
            if required_W > 0.0:
                return "off"
            return "hold" if -required_W <= self.available_W(set_point_C) else "limit"
        if required_W < 0.0:
            return "off"
        return "hold" if required_W <= self.capacity_W else "limit"
