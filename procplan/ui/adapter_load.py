"""The load editor's door to the library: a machine's thermal description as the planner reads it (what limits
the batch), from procplan.surface.plant; nothing is computed here that the engine does not compute the same way.
"""

from __future__ import annotations

from dataclasses import dataclass

from procplan.errors import InvalidInputError
from procplan.ui.adapter import Outcome, library, problems_of


@dataclass(frozen=True)
class MachineThermalView:
    """One machine with a ``[thermal]`` table at a step's set point (SI, °C).

    capacity_kW : what the plant removes (chiller) or supplies (heater) at most
    evaporating_C, rated_C : a chiller's evaporating temperature and the medium temperature its capacity is
        rated at (None for a heater)
    available_kW : what the plant can remove or supply with the medium at the set point
    medium_kJ_K, structure_kJ_K : heat capacity of the medium (ρ c_p V at the set point) and of the structure
    fixed_kW : fans, lights, defrost and doors (cycle averages) into the medium
    walls_kW : wall gain (positive into the medium) with the medium at the set point
    """

    machine: str
    medium: str
    set_point_C: float
    refrigerating: bool
    capacity_kW: float
    evaporating_C: float | None
    rated_C: float | None
    available_kW: float
    medium_volume_m3: float
    medium_kJ_K: float
    structure_mass_kg: float
    structure_kJ_K: float
    fans_kW: float
    lights_kW: float
    defrost_kW: float
    doors_kW: float
    wall_UA_W_K: float
    room_C: float
    walls_kW: float

    @property
    def fixed_kW(self) -> float:
        return self.fans_kW + self.lights_kW + self.defrost_kW + self.doors_kW

    @property
    def heat_capacity_kJ_K(self) -> float:
        return self.medium_kJ_K + self.structure_kJ_K


def machine_thermal(equipment_id: str, settings: dict, generation: int = 0) -> Outcome:
    """The thermal view of a library machine at the set point of ``settings`` (its defaults for the rest):
    Outcome(None) for a machine without a ``[thermal]`` table, the problems for settings out of range."""
    from procplan.surface.machines import resolve_settings
    from procplan.surface.plant import Plant, medium_heat_capacity_J_K

    lib = library(generation)
    eq = lib.equipment.get(equipment_id)
    if eq is None or eq.thermal is None:
        return Outcome(None)
    try:
        sp = float(resolve_settings(eq, dict(settings or {}))[eq.temperature_key])
        plant = Plant.of(eq, sp)
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))
    th = eq.thermal
    medium_J_K = medium_heat_capacity_J_K(eq.medium, th.medium_volume_m3, sp, eq.brine_nacl_fraction)
    return Outcome(
        MachineThermalView(
            machine=eq.name,
            medium=eq.medium,
            set_point_C=sp,
            refrigerating=plant.refrigerating,
            capacity_kW=plant.capacity_W / 1e3,
            evaporating_C=eq.evaporating_C,
            rated_C=(plant.evaporating_C + plant.capacity_W / plant.ua_W_K) if plant.refrigerating else None,
            available_kW=plant.available_W(sp) / 1e3,
            medium_volume_m3=th.medium_volume_m3,
            medium_kJ_K=medium_J_K / 1e3,
            structure_mass_kg=th.structure_mass_kg,
            structure_kJ_K=th.structure_mass_kg * th.structure_cp_J_kgK / 1e3,
            fans_kW=th.fan_W / 1e3,
            lights_kW=th.lights_W / 1e3,
            defrost_kW=th.defrost_W / 1e3,
            doors_kW=th.door_W / 1e3,
            wall_UA_W_K=th.wall_UA_W_K,
            room_C=th.room_C,
            walls_kW=plant.fixed(sp)[0] / 1e3 - th.fixed_W / 1e3,
        )
    )
