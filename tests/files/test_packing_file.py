"""The plan file's [packing] table: every field checked and named, every problem at once, a lossless round trip."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from procplan.errors import InvalidInputError, ValidationErrors
from procplan.files.library import load_library
from procplan.files.packing import PACKING_KEYS, packing_from_dict, packing_to_dict
from procplan.files.plan import load_plan, plan_from_dict, plan_to_dict

LIB = load_library()
GOOD = {
    "arrangement": "pallet",
    "case_length_mm": 310,
    "case_width_mm": 210,
    "case_height_mm": 80,
    "piece_layout": [2, 2, 2],
    "wall": "corrugated-board",
    "wall_thickness_mm": 4,
    "cases_layout": [3, 5, 10],
    "air_flow_factor": 0.5,
}


def test_good_table_reads_in_si_and_writes_back_unchanged():
    pk = packing_from_dict(GOOD)
    assert pk.pieces_per_case == 8
    assert pk.case_length_m == pytest.approx(0.31)
    assert pk.wall_thickness_m == pytest.approx(0.004)
    assert pk.cases_layout == (3, 5, 10)
    assert packing_from_dict(packing_to_dict(pk)) == pk
    assert packing_to_dict(pk) == GOOD


def test_demo_plans_with_packing_round_trip():
    for name in ("vial-cartons-cool-down", "lasagne-pallet-cold-room"):
        plan = load_plan(LIB.root / "plans" / f"{name}.toml", library=LIB)
        assert plan.packing is not None
        again = plan_from_dict(plan_to_dict(plan), library=LIB)
        assert again.packing == plan.packing


@pytest.mark.parametrize(
    ("change", "field", "allowed"),
    [
        ({"arrangement": "crate"}, "packing.arrangement", "'pallet'"),
        ({"case_length_mm": 0}, "packing.case_length_mm", "mm"),
        ({"case_height_mm": 4000}, "packing.case_height_mm", "3000"),
        ({"piece_layout": [2, 2]}, "packing.piece_layout", "three whole numbers"),
        ({"pieces_per_case": 9}, "packing.pieces_per_case", "8, the product of piece_layout"),
        ({"wall": "tin"}, "packing.wall", "corrugated-board"),
        ({"wall_thickness_mm": 50}, "packing.wall_thickness_mm", "20"),
        ({"cases_layout": [3, 5, 40]}, "packing.cases_layout", "3000 mm"),
        ({"void_fraction": 0.95}, "packing.void_fraction", "0.9"),
        ({"air_flow_factor": 0.0}, "packing.air_flow_factor", "0.05"),
        ({"conductivity_model": "krischer"}, "packing.conductivity_model", "'emt'"),
        ({"colour": "brown"}, "packing.colour", "keys"),
    ],
)
def test_each_bad_field_is_named_with_its_range(change, field, allowed):
    with pytest.raises(InvalidInputError) as e:
        packing_from_dict({**GOOD, **change})
    assert e.value.field == field
    assert allowed in str(e.value)


def test_every_problem_is_reported_at_once():
    bad = {**GOOD, "arrangement": "crate", "void_fraction": 2, "air_flow_factor": -1}
    with pytest.raises(ValidationErrors) as e:
        packing_from_dict(bad)
    fields = {p.field for p in e.value.problems}
    assert {"packing.arrangement", "packing.void_fraction", "packing.air_flow_factor"} <= fields


def test_a_case_cannot_have_a_cases_layout_and_a_wall_needs_its_thickness():
    with pytest.raises(ValidationErrors) as e:
        packing_from_dict(
            {k: v for k, v in GOOD.items() if k != "wall_thickness_mm"} | {"arrangement": "case"}
        )
    fields = {p.field for p in e.value.problems}
    assert fields == {"packing.cases_layout", "packing.wall_thickness_mm"}


def test_a_count_or_a_layout_is_required():
    with pytest.raises(InvalidInputError, match="packing.pieces_per_case"):
        packing_from_dict({k: v for k, v in GOOD.items() if k != "piece_layout"})


def test_packing_in_a_plan_is_checked_with_the_plan():
    plan = plan_to_dict(load_plan(LIB.root / "plans" / "lasagne-pallet-cold-room.toml", library=LIB))
    plan["packing"]["arrangement"] = "crate"
    plan["start"]["temperature_C"] = 900
    with pytest.raises(ValidationErrors) as e:
        plan_from_dict(plan, library=LIB)
    assert {"packing.arrangement", "start.temperature_C"} <= {p.field for p in e.value.problems}


_junk = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-(10**9), 10**9),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=8),
    st.lists(st.integers(-5, 2000), max_size=4),
    st.dictionaries(st.text(max_size=3), st.integers(), max_size=2),
)


@settings(max_examples=300, deadline=None)
@given(st.sampled_from(PACKING_KEYS), _junk)
def test_junk_in_any_field_loads_or_names_a_packing_field(key, value):
    data = {**GOOD, key: value}
    if value is None:
        data.pop(key)
    try:
        packing_from_dict(data)
    except ValidationErrors as e:
        assert all(p.field.startswith("packing.") for p in e.problems)
    except InvalidInputError as e:
        assert e.field.startswith("packing.")
