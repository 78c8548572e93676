"""Composition: validation of mass fractions and of component names."""

import dataclasses

import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError, ValidationErrors
from procplan.properties import Composition
from procplan.properties.composition import COMPONENT_NAMES

# Source: ASHRAE Handbook—Refrigeration (2006) ch. 9 table 3, carrots (carbohydrate total 10.14 % includes
# 3.00 % fiber, so 7.14 % non-fiber carbohydrate here).
CARROT = dict(water=0.8779, protein=0.0103, fat=0.0019, carbohydrate=0.0714, fiber=0.0300, ash=0.0087)


def test_valid_composition_round_trips_through_a_mapping():
    c = Composition.from_mapping(CARROT)
    assert c.to_dict() == pytest.approx(CARROT)
    assert Composition(**c.to_dict()) == c
    assert_allclose(sum(c.normalized().values()), 1.0, rtol=1e-12)
    assert_allclose(c.solids, 0.0103 + 0.0019 + 0.0714 + 0.0300 + 0.0087, rtol=1e-9)


def test_fiber_and_ash_default_to_zero_and_the_dataclass_is_frozen():
    c = Composition(water=0.8, protein=0.2, fat=0.0, carbohydrate=0.0)
    assert c.fiber == 0.0 and c.ash == 0.0
    with pytest.raises(dataclasses.FrozenInstanceError):
        c.water = 0.5  # type: ignore[misc]


@pytest.mark.parametrize(
    ("water", "total", "off", "side"), [(0.70, 0.95, 0.05, "below"), (0.78, 1.03, 0.03, "above")]
)
def test_fractions_not_summing_to_one_say_by_how_much(water, total, off, side):
    with pytest.raises(InvalidInputError) as err:
        Composition(water=water, protein=0.20, fat=0.05, carbohydrate=0.0)
    msg = str(err.value)
    assert err.value.field == "product.composition"
    assert f"{total:.4f}" in msg and f"{off:.4f} {side} 1" in msg


def test_sum_within_tolerance_is_accepted():
    Composition(water=0.704, protein=0.20, fat=0.05, carbohydrate=0.05)  # sum 1.004


def test_negative_and_too_large_fractions_are_all_named():
    with pytest.raises(ValidationErrors) as err:
        Composition(water=1.2, protein=0.1, fat=-0.3, carbohydrate=0.0)
    fields = {p.field for p in err.value.problems}
    assert fields == {"product.composition.water", "product.composition.fat"}


def test_single_negative_fraction_names_the_field():
    with pytest.raises(InvalidInputError) as err:
        Composition(water=0.8, protein=0.25, fat=-0.05, carbohydrate=0.0)
    assert err.value.field == "product.composition.fat"
    assert "[0, 1]" in str(err.value)


def test_zero_water_is_rejected():
    with pytest.raises(InvalidInputError) as err:
        Composition(water=0.0, protein=0.0, fat=1.0, carbohydrate=0.0)
    assert err.value.field == "product.composition.water"


def test_non_numeric_fraction_is_rejected():
    with pytest.raises(InvalidInputError) as err:
        Composition.from_mapping({"water": "lots", "protein": 0.2, "fat": 0.0, "carbohydrate": 0.0})
    assert err.value.field == "product.composition.water"


def test_unknown_component_is_named_and_allowed_names_listed():
    with pytest.raises(InvalidInputError) as err:
        Composition.from_mapping({**CARROT, "sugar": 0.0})
    assert err.value.field == "product.composition.sugar"
    for name in COMPONENT_NAMES:
        assert name in str(err.value)


def test_missing_required_component_is_named():
    with pytest.raises(InvalidInputError) as err:
        Composition.from_mapping({"water": 0.8, "protein": 0.2, "fat": 0.0})
    assert err.value.field == "product.composition.carbohydrate"


def test_field_prefix_is_used_in_messages():
    with pytest.raises(InvalidInputError) as err:
        Composition.from_mapping({**CARROT, "fat": -0.1}, field_prefix="library.carrot.composition")
    assert err.value.field == "library.carrot.composition.fat"


def test_mapping_must_be_a_mapping():
    with pytest.raises(InvalidInputError):
        Composition.from_mapping([0.8, 0.2])  # type: ignore[arg-type]
