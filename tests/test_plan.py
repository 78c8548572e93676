"""Plan files: validation that names every problem, and a lossless round trip."""

from __future__ import annotations

import copy

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from procplan.errors import InvalidInputError, ValidationErrors
from procplan.files.library import load_library
from procplan.files.plan import (
    load_plan,
    plan_from_dict,
    plan_from_toml,
    plan_to_dict,
    plan_to_toml,
    save_plan,
)

BASE = {
    "title": "test plan",
    "product": {
        "name": "test slab",
        "shape": "slab",
        "thickness_mm": 40,
        "composition": {"water": 0.75, "protein": 0.2, "fat": 0.04, "carbohydrate": 0.0, "ash": 0.01},
    },
    "start": {"temperature_C": 70},
    "steps": [{"name": "chill", "h_W_m2K": 20, "medium_C": 0, "duration_min": 120, "stop_when_core_C": 5}],
    "checks": {"margin_percent": 20},
}


def test_round_trip_is_lossless():
    plan = plan_from_dict(BASE)
    again = plan_from_toml(plan_to_toml(plan))
    assert again == plan
    assert plan.steps[0].duration_s == 7200.0
    assert plan.product.geometry.thickness_m == pytest.approx(0.040)


def test_every_problem_is_reported_at_once():
    bad = copy.deepcopy(BASE)
    bad["product"]["thickness_mm"] = -5
    bad["start"]["temperature_C"] = 400
    bad["steps"][0]["h_W_m2K"] = 0
    with pytest.raises(ValidationErrors) as info:
        plan_from_dict(bad, source="bad.toml")
    fields = {p.field for p in info.value.problems}
    assert {"product.thickness_mm", "start.temperature_C", "steps[0].h_W_m2K"} <= fields
    text = str(info.value)
    assert "bad.toml" in text and "[-40, 150] °C" in text


def test_composition_sum_error_says_by_how_much():
    bad = copy.deepcopy(BASE)
    bad["product"]["composition"]["water"] = 0.70  # sums to 0.95
    with pytest.raises(InvalidInputError) as info:
        plan_from_dict(bad)
    assert "0.95" in str(info.value) or "0.05" in str(info.value)


@pytest.mark.parametrize(
    ("path", "value", "field"),
    [
        (("product", "shape"), "torus", "product.shape"),
        (("product", "colour"), "red", "product.colour"),
        (("steps", 0, "duration_min"), float("nan"), "steps[0].duration_min"),
        (("steps", 0, "medium_profile"), [[0, 5], [0, 6]], "steps[0].medium_profile times"),
        (("checks", "margin_percent"), -1, "checks.margin_percent"),
        (("solver",), "magic", "solver"),
    ],
)
def test_bad_fields_are_named(path, value, field):
    bad = copy.deepcopy(BASE)
    target = bad
    for key in path[:-1]:
        target = target[key]
    target[path[-1]] = value
    if path[-1] == "medium_profile":
        del target["medium_C"]
    with pytest.raises(InvalidInputError) as info:
        plan_from_dict(bad)
    err = info.value
    fields = {p.field for p in err.problems} if isinstance(err, ValidationErrors) else {err.field}
    assert field in fields, str(err)


def test_malformed_toml_names_the_source():
    with pytest.raises(InvalidInputError) as info:
        plan_from_toml("title = 'x\n[product", source="upload.toml")
    assert "upload.toml" in str(info.value) and "TOML" in str(info.value)


def test_save_plan_refuses_to_overwrite(tmp_path):
    plan = plan_from_dict(BASE)
    path = save_plan(plan, tmp_path / "p.toml")
    before = path.read_text()
    with pytest.raises(InvalidInputError):
        save_plan(plan_from_dict({**BASE, "title": "other"}), path)
    assert path.read_text() == before
    assert load_plan(path) == plan


def test_every_demo_plan_is_valid_and_round_trips():
    lib = load_library()
    assert not lib.problems, lib.problems
    assert len(lib.plans) >= 5
    for name in lib.plans:
        plan = lib.plan(name)
        assert plan_from_dict(plan_to_dict(plan), library=lib) == plan


@settings(max_examples=40, deadline=None)
@given(
    thickness=st.floats(1, 500),
    t0=st.floats(-40, 150),
    h=st.floats(0.5, 5000),
    medium=st.floats(-40, 150),
    minutes=st.floats(0.5, 5000),
)
def test_round_trip_any_valid_numbers(thickness, t0, h, medium, minutes):
    d = copy.deepcopy(BASE)
    d["product"]["thickness_mm"] = thickness
    d["start"]["temperature_C"] = t0
    d["steps"][0].update(h_W_m2K=h, medium_C=medium, duration_min=minutes)
    plan = plan_from_dict(d)
    assert plan_from_toml(plan_to_toml(plan)) == plan
