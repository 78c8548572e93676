"""Equipment kinds (which medium, which heat-transfer mode) and typical surface coefficients for each.

``EQUIPMENT_KINDS`` is the one registry of machine kinds; ``TYPICAL_H_RANGES_W_M2K`` gives, for every kind and
for the broad classes of Incropera Table 1.1, the range of convection coefficient usually met, with its source.
A user-entered or computed h outside its kind's range earns a warning, never an error.

References
----------
Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Table 1.1 (typical
values of the convection heat transfer coefficient). Food-process ranges are common practice, as collected in
the project's reference notes (/work/shared/references.md); Becker & Fricke (2004), Int. J. Refrigeration 27,
540–551, review measured values for foods.
"""

from __future__ import annotations

from dataclasses import dataclass

from procplan import validate

TABLE_1_1 = "Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Table 1.1"
COMMON_PRACTICE = "common practice (food-process range; see Becker & Fricke 2004 for measured values)"


@dataclass(frozen=True)
class TypicalRange:
    """A typical range of the convection coefficient [W/m²K] and where it comes from."""

    low_W_m2K: float
    high_W_m2K: float
    source: str
    note: str = ""

    def contains(self, h_W_m2K: float) -> bool:
        return self.low_W_m2K <= h_W_m2K <= self.high_W_m2K


@dataclass(frozen=True)
class EquipmentKind:
    """One kind of machine: its medium, the heat-transfer mode at the product surface, and a description."""

    medium: str  # "air" | "water" | "brine" | "steam"
    mode: str  # "convection" (forced with natural, combined) | "condensation"
    description: str
    table_1_1_class: str  # broad class of Incropera Table 1.1 that bounds it


#: Broad classes of Incropera Table 1.1 [W/m²K].
BROAD_CLASSES: dict[str, TypicalRange] = {
    "free-convection-gas": TypicalRange(2.0, 25.0, TABLE_1_1),
    "free-convection-liquid": TypicalRange(50.0, 1000.0, TABLE_1_1),
    "forced-convection-gas": TypicalRange(25.0, 250.0, TABLE_1_1),
    "forced-convection-liquid": TypicalRange(100.0, 20000.0, TABLE_1_1),
    "boiling-condensation": TypicalRange(2500.0, 100000.0, TABLE_1_1),
}

#: The one registry of equipment kinds.
EQUIPMENT_KINDS: dict[str, EquipmentKind] = {
    "blast-chiller": EquipmentKind(
        "air",
        "convection",
        "cabinet or walk-in chiller with fans blowing cold air over trolleys",
        "forced-convection-gas",
    ),
    "chill-tunnel": EquipmentKind(
        "air",
        "convection",
        "conveyor tunnel with cold air blown across or along the belt",
        "forced-convection-gas",
    ),
    "spiral-freezer": EquipmentKind(
        "air", "convection", "spiral belt freezer with forced air", "forced-convection-gas"
    ),
    "cold-room": EquipmentKind(
        "air", "convection", "storage room, low air speed from unit coolers", "free-convection-gas"
    ),
    "pharma-cold-room": EquipmentKind(
        "air",
        "convection",
        "2–8 °C storage room for medicinal products, low air speed",
        "free-convection-gas",
    ),
    "controlled-rate-freezer": EquipmentKind(
        "air",
        "convection",
        "chamber freezer following a programmed air-temperature ramp",
        "forced-convection-gas",
    ),
    "convection-oven": EquipmentKind(
        "air",
        "convection",
        "oven with fan-forced hot air (and radiation from the walls)",
        "forced-convection-gas",
    ),
    "dry-heat-tunnel": EquipmentKind(
        "air",
        "convection",
        "dry-heat sterilising or depyrogenation tunnel: laminar hot air down through a bed of glassware",
        "forced-convection-gas",
    ),
    "ice-water-tank": EquipmentKind(
        "water", "convection", "agitated ice-water tank (water near 0 °C)", "forced-convection-liquid"
    ),
    "water-bath": EquipmentKind(
        "water", "convection", "circulated water bath for cooking or pasteurising", "forced-convection-liquid"
    ),
    "brine-chiller": EquipmentKind(
        "brine", "convection", "agitated sodium-chloride brine tank below 0 °C", "forced-convection-liquid"
    ),
    "steam-oven": EquipmentKind(
        "steam", "condensation", "cooking chamber filled with saturated steam", "boiling-condensation"
    ),
}

_STILL = TypicalRange(5.0, 10.0, COMMON_PRACTICE, "still or gently moving air (< 0.5 m/s)")
_BLAST = TypicalRange(10.0, 60.0, COMMON_PRACTICE, "blast air, 1–5 m/s")

#: Typical convection coefficient [W/m²K] by equipment kind, and the broad classes of Incropera Table 1.1.
TYPICAL_H_RANGES_W_M2K: dict[str, TypicalRange] = {
    "blast-chiller": _BLAST,
    "chill-tunnel": _BLAST,
    "spiral-freezer": _BLAST,
    "controlled-rate-freezer": _BLAST,
    "cold-room": _STILL,
    "pharma-cold-room": _STILL,
    "convection-oven": TypicalRange(15.0, 50.0, COMMON_PRACTICE, "fan-forced hot air"),
    "dry-heat-tunnel": TypicalRange(5.0, 25.0, COMMON_PRACTICE, "laminar hot air, 0.3–1.5 m/s"),
    "impingement": TypicalRange(50.0, 200.0, COMMON_PRACTICE, "air jets on the product"),
    "water-bath": TypicalRange(200.0, 1000.0, COMMON_PRACTICE, "water immersion"),
    "ice-water-tank": TypicalRange(500.0, 2000.0, COMMON_PRACTICE, "agitated ice water or ice slurry"),
    "brine-chiller": TypicalRange(500.0, 2000.0, COMMON_PRACTICE, "agitated brine"),
    "steam-oven": TypicalRange(5000.0, 20000.0, COMMON_PRACTICE, "condensing saturated steam"),
    **BROAD_CLASSES,
}


def equipment_kind(kind: str) -> EquipmentKind:
    """The registered kind, or InvalidInputError naming the allowed kinds."""
    return EQUIPMENT_KINDS[validate.choice("equipment.kind", kind, EQUIPMENT_KINDS)]


def typical_range_warning(h_W_m2K: float, kind: str, what: str = "h") -> str | None:
    """A warning text when ``h_W_m2K`` lies outside the typical range of ``kind``, else None.

    >>> typical_range_warning(25.0, "blast-chiller") is None
    True
    >>> typical_range_warning(400.0, "blast-chiller")[:40]
    'h = 400 W/m²K is outside the typical ran'
    """
    r = TYPICAL_H_RANGES_W_M2K[validate.choice("equipment.kind", kind, TYPICAL_H_RANGES_W_M2K)]
    if r.contains(h_W_m2K):
        return None
    return f"{what} = {h_W_m2K:.3g} W/m²K is outside the typical range {r.low_W_m2K:g}–{r.high_W_m2K:g} W/m²K for {kind} ({r.source}); check the value"
