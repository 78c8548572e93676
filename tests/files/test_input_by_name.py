"""Each input found to crash or to validate without running now answers by name: the field, the value, the range."""

from __future__ import annotations

import copy
import shutil

import pytest

from procplan.errors import InvalidInputError
from procplan.files.library import DEMO_LIBRARY, load_library
from procplan.files.plan import plan_from_dict
from procplan.files.product import MAX_ASPECT_RATIO, MIN_PIECE_MM, product_from_dict
from procplan.files.tomlfile import read_toml

LIB = load_library()
PLAN = read_toml(DEMO_LIBRARY / "plans" / "roulade-blast-chill.toml")
PRODUCT = {**read_toml(DEMO_LIBRARY / "products" / "beef-joint.toml"), "name": "beef-joint"}


def _field_of(fn) -> str:
    with pytest.raises(InvalidInputError) as info:
        fn()
    return info.value.field


def _plan(**changes) -> dict:
    d = copy.deepcopy(PLAN)
    for path, value in changes.items():
        *parents, last = path.split("__")
        node = d
        for k in parents:
            node = node[int(k)] if k.isdigit() else node[k]
        if value is None:
            node.pop(last)
        else:
            node[last] = value
    return d


@pytest.mark.parametrize(
    ("changes", "field"),
    [
        ({"product__shape": ["slab"]}, "product.shape"),
        ({"product__library": ["chicken-roulade"]}, "product.library"),
        ({"title": {"a": 1}}, "title"),
        ({"steps__0__duration_min": "x"}, "steps[0].duration_min"),
        ({"steps__0__settings": 3}, "steps[0].settings"),
        ({"checks__cooling_rule": ["us-food-code-two-stage"]}, "checks.cooling_rule"),
    ],
)
def test_a_list_or_table_where_a_name_or_number_belongs_is_named(changes, field):
    assert _field_of(lambda: plan_from_dict(_plan(**changes), "plan.toml", library=LIB)) == field


def test_a_piece_below_the_smallest_size_is_refused_by_name():
    d = {**PRODUCT, "shape": "sphere", "diameter_mm": 0.01}
    d.pop("length_mm")
    with pytest.raises(InvalidInputError, match="droplet") as info:
        product_from_dict(d, "p.toml", prefix="product.")
    assert info.value.field == "product.diameter_mm"
    d["diameter_mm"] = MIN_PIECE_MM
    assert product_from_dict(d, "p.toml", prefix="product.").geometry.diameter_m == MIN_PIECE_MM / 1000


def test_a_needle_is_refused_by_name_and_pointed_to_the_infinite_shape():
    d = {**PRODUCT, "diameter_mm": 2, "length_mm": 2 * MAX_ASPECT_RATIO + 1}
    with pytest.raises(InvalidInputError, match="infinite cylinder") as info:
        product_from_dict(d, "p.toml", prefix="")
    assert info.value.field == "length_mm"
    d["length_mm"] = 2 * MAX_ASPECT_RATIO
    product_from_dict(d, "p.toml", prefix="")


def test_a_low_water_product_without_a_freezing_estimate_needs_a_freezing_point():
    # Chang & Tao's fruit-vegetable fit lies below 0 °C only for 0.44 < water < 0.89 (ASHRAE 2006, ch. 9)
    comp = {"water": 0.30, "protein": 0.2, "fat": 0.3, "carbohydrate": 0.19, "fiber": 0.0, "ash": 0.01}
    d = _plan(product__category="fruit-vegetable", product__composition=comp)
    assert _field_of(lambda: plan_from_dict(d, "plan.toml", library=LIB)) == "product.freezing_C"
    d["product"]["freezing_C"] = -2.5
    plan_from_dict(d, "plan.toml", library=LIB)


def test_a_frozen_storage_temperature_above_the_freezing_point_is_named():
    d = _plan(checks__frozen_storage_C=0)
    assert _field_of(lambda: plan_from_dict(d, "plan.toml", library=LIB)) == "checks.frozen_storage_C"
    d = _plan(product__freezing_C=-20)  # the default -18 °C is then above it
    with pytest.raises(InvalidInputError, match="default") as info:
        plan_from_dict(d, "plan.toml", library=LIB)
    assert info.value.field == "checks.frozen_storage_C"
    d["checks"]["frozen_storage_C"] = -25
    plan_from_dict(d, "plan.toml", library=LIB)


@pytest.mark.parametrize("stop_C", [74, 80])
def test_a_first_step_that_ends_at_once_is_named(stop_C):
    # the plan starts at 74 °C in -6 °C air: a stop at or above 74 °C is met at the start (cycle 0 min)
    d = _plan(steps__0__duration_min=None, steps__0__stop_when_core_C=stop_C)
    assert _field_of(lambda: plan_from_dict(d, "plan.toml", library=LIB)) == "steps[0].stop_when_core_C"
    d["steps"][0]["stop_when_core_C"] = 73
    plan_from_dict(d, "plan.toml", library=LIB)


def test_a_deeply_nested_library_file_is_listed_and_the_rest_loads(tmp_path):
    root = tmp_path / "lib"
    shutil.copytree(DEMO_LIBRARY, root)
    depth = 1000  # about 2 KB of brackets
    (root / "equipment" / "broken.toml").write_text("x = " + "[" * depth + "]" * depth + "\n")
    lib = load_library(root)
    assert [p.path for p in lib.problems] == [str(root / "equipment" / "broken.toml")]
    assert "nested too deeply" in lib.problems[0].reason
    assert set(lib.equipment) == set(LIB.equipment)
    assert set(lib.plans) == set(LIB.plans)


def test_a_measured_freezing_point_leaves_room_for_the_latent_band():
    # the latent heat is spread over a band below freezing_C that must lie inside the property model's range
    from procplan.files.fields import T_LO

    fixed = {"k_W_mK": 0.5, "rho_kg_m3": 1000, "cp_J_kgK": 3500, "latent_J_kg": 2e5, "freezing_C": T_LO}
    d = {k: v for k, v in PRODUCT.items() if k != "composition"} | {"fixed_properties": fixed}
    with pytest.raises(InvalidInputError) as info:
        product_from_dict(d, "p.toml", prefix="")  # refused when the file is read, not when the plan runs
    assert info.value.field == "fixed_properties.freezing_C"
    fixed["freezing_C"] = -2.0
    product_from_dict(d, "p.toml", prefix="").property_table()
