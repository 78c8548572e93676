"""Equipment files, settings and typical ranges against Incropera Table 1.1 and the common-practice ranges."""

import tomllib
from pathlib import Path

import pytest

from procplan.errors import InvalidInputError, ValidationErrors
from procplan.files.machines import equipment_from_dict, equipment_to_dict
from procplan.geometry import Geometry
from procplan.surface.machines import EQUIPMENT_KINDS, equipment_h, resolve_settings
from procplan.surface.ranges import BROAD_CLASSES, TYPICAL_H_RANGES_W_M2K

LIBRARY = Path(__file__).resolve().parents[2] / "product_library" / "equipment"
FILES = sorted(LIBRARY.glob("*.toml"))
MACHINES = {f.stem: equipment_from_dict(tomllib.loads(f.read_text()), str(f)) for f in FILES}

#: Typical products (design.md sizes): an 80 mm cylinder and a 40 mm slab tray portion 200 × 150 mm.
PRODUCTS = {
    "cylinder-80mm": Geometry("cylinder", diameter_m=0.08),
    "slab-40mm": Geometry("slab", thickness_m=0.04, length_m=0.2, width_m=0.15),
}


def test_table_1_1_broad_classes():
    # Source: Incropera et al., 7th ed., Table 1.1 (typical values of h, W/m²K; from memory): free convection,
    # gases 2–25, liquids 50–1000; forced convection, gases 25–250, liquids 100–20 000; convection with phase
    # change (boiling or condensation) 2500–100 000. Exact transcription.
    expected = {
        "free-convection-gas": (2, 25),
        "free-convection-liquid": (50, 1000),
        "forced-convection-gas": (25, 250),
        "forced-convection-liquid": (100, 20000),
        "boiling-condensation": (2500, 100000),
    }
    for key, (lo, hi) in expected.items():
        r = BROAD_CLASSES[key]
        assert (r.low_W_m2K, r.high_W_m2K) == (lo, hi) and "Table 1.1" in r.source


@pytest.mark.parametrize("kind", sorted(EQUIPMENT_KINDS))
def test_kind_ranges_lie_within_table_1_1_for_their_phase(kind):
    # Source: Incropera et al., 7th ed., Table 1.1: each food-process range (common practice, references.md) must
    # lie within the span Table 1.1 gives for its medium's phase (gases free + forced 2–250; liquids 50–20 000;
    # condensation 2500–100 000).
    span = {"air": (2, 250), "water": (50, 20000), "brine": (50, 20000), "steam": (2500, 100000)}[
        EQUIPMENT_KINDS[kind].medium
    ]
    r = TYPICAL_H_RANGES_W_M2K[kind]
    assert span[0] <= r.low_W_m2K < r.high_W_m2K <= span[1]
    assert r.source


def test_demo_plant_has_the_required_machines():
    kinds = [m.kind for m in MACHINES.values()]
    for kind in (
        "chill-tunnel",
        "spiral-freezer",
        "cold-room",
        "ice-water-tank",
        "water-bath",
        "steam-oven",
        "convection-oven",
        "controlled-rate-freezer",
        "pharma-cold-room",
    ):
        assert kind in kinds
    assert kinds.count("blast-chiller") >= 2
    assert all(m.plant == "Harrowgate Fields" for m in MACHINES.values())
    assert all(m.id == stem for stem, m in MACHINES.items())
    pharma = next(m for m in MACHINES.values() if m.kind == "pharma-cold-room")
    assert (pharma.settings["air_C"].minimum, pharma.settings["air_C"].maximum) == (2.0, 8.0)


def _typical_surface_C(machine, medium_C):
    # Mid-process product surface: 20 K from the air (chilling, freezing, baking); 5 K from a liquid (the surface
    # follows a liquid closely since Bi ≫ 1); 10 K below the steam.
    if machine.medium == "air":
        return medium_C - 20.0 if machine.kind == "convection-oven" else medium_C + 20.0
    if machine.medium == "steam":
        return medium_C - 10.0
    return medium_C - 5.0 if machine.kind == "water-bath" else medium_C + 5.0


@pytest.mark.parametrize("product", sorted(PRODUCTS))
@pytest.mark.parametrize("machine_id", sorted(MACHINES))
def test_default_settings_give_h_in_the_typical_range(machine_id, product):
    # Source: TYPICAL_H_RANGES_W_M2K (Incropera Table 1.1 classes; food-process ranges common practice).
    m = MACHINES[machine_id]
    s = resolve_settings(m, {})
    r = equipment_h(m, s, PRODUCTS[product], _typical_surface_C(m, s[m.temperature_key]))
    lo, hi = r.typical_range.low_W_m2K, r.typical_range.high_W_m2K
    assert lo <= r.h_conv_W_m2K <= hi, f"{machine_id}: {r.h_conv_W_m2K:.1f} not in {lo}–{hi}"


@pytest.mark.parametrize("machine_id", sorted(MACHINES))
def test_round_trip(machine_id):
    m = MACHINES[machine_id]
    assert equipment_from_dict(equipment_to_dict(m), "round trip") == m


def test_settings_outside_the_machine_range():
    m = MACHINES["chiller-b2"]
    with pytest.raises(InvalidInputError) as exc:
        resolve_settings(m, {"air_C": -25.0})
    assert exc.value.field == "settings.air_C"
    assert "[-18, 2] °C" in str(exc.value) and "chiller-b2" in str(exc.value)
    with pytest.raises(InvalidInputError) as exc:
        resolve_settings(m, {"water_C": 3.0})
    assert exc.value.field == "settings.water_C" and "air_speed_m_s" in str(exc.value)
    with pytest.raises(ValidationErrors) as exc:
        resolve_settings(m, {"air_C": -25.0, "air_speed_m_s": 9.0})
    assert {p.field for p in exc.value.problems} == {"settings.air_C", "settings.air_speed_m_s"}
    assert resolve_settings(m, {"air_speed_m_s": 5})["air_C"] == m.settings["air_C"].default


def test_every_problem_in_a_file_is_reported():
    bad = {
        "id": "Bad Id",
        "name": "x",
        "kind": "pizza-oven",
        "medium": "air",
        "capacity_kW": -3,
        "colour": "red",
        "settings": {
            "air_C": {"min": 5, "max": 1, "default": 3},
            "air_speed_m_s": {"min": 1, "max": 3, "default": 7},
        },
    }
    with pytest.raises(ValidationErrors) as exc:
        equipment_from_dict(bad, "bad.toml")
    fields = {p.field for p in exc.value.problems}
    assert {
        "id",
        "kind",
        "capacity_kW",
        "colour",
        "settings.air_C.min",
        "settings.air_speed_m_s.default",
    } <= fields
    assert "bad.toml" in str(exc.value)


def test_kind_and_medium_must_agree_and_refrigeration_data_required():
    data = tomllib.loads((LIBRARY / "icetank-w1.toml").read_text())
    with pytest.raises(InvalidInputError) as exc:
        equipment_from_dict({**data, "medium": "air"})
    assert "medium" in str(exc.value)
    no_evap = {k: v for k, v in data.items() if k != "evaporating_C"}
    with pytest.raises(InvalidInputError) as exc:
        equipment_from_dict(no_evap)
    assert exc.value.field == "evaporating_C"
    warm = {**data, "evaporating_C": 2.0}
    with pytest.raises(InvalidInputError) as exc:
        equipment_from_dict(warm)
    assert exc.value.field == "evaporating_C" and "water_C" in str(exc.value)
