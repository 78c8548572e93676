"""The plan's [load.second_product] table: fields, ranges and the round trip."""

from __future__ import annotations

import pytest

from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.plan import plan_from_dict, plan_to_dict
from procplan.files.tomlfile import read_toml

LIB = load_library()
BASE = read_toml(LIB.root / "plans" / "roulade-blast-chill.toml")


def _with(second, library=LIB):
    return plan_from_dict({**BASE, "load": {"second_product": second}}, library=library)


def test_a_second_product_reads_its_library_record_and_round_trips():
    plan = _with({"product": "tomato-sauce-tub", "pieces": 40, "initial_temperature_C": 80})
    sp = plan.load.second_product
    assert (
        sp.product == LIB.products["tomato-sauce-tub"]
        and sp.pieces == 40
        and sp.initial_temperature_C == 80.0
    )
    assert plan_from_dict(plan_to_dict(plan), library=LIB) == plan


@pytest.mark.parametrize(
    "second, field, allowed",
    [
        (
            {"product": "tomato-sauce-tub", "pieces": -1, "initial_temperature_C": 80},
            "pieces",
            "0 to 10 000 000",
        ),
        (
            {"product": "tomato-sauce-tub", "pieces": 2.5, "initial_temperature_C": 80},
            "pieces",
            "whole number",
        ),
        ({"product": "no-such-thing", "pieces": 4, "initial_temperature_C": 80}, "product", "one of"),
        ({"product": "tomato-sauce-tub", "pieces": 4}, "initial_temperature_C", "°C"),
        (
            {"product": "tomato-sauce-tub", "pieces": 4, "initial_temperature_C": 900},
            "initial_temperature_C",
            "°C",
        ),
        ({"product": "tomato-sauce-tub", "pieces": 4, "initial_temperature_C": 8, "size": 3}, "size", ""),
        (
            {"product": "tomato-sauce-tub", "pieces": 4, "initial_temperature_C": 80, "target_core_C": 900},
            "target_core_C",
            "°C",
        ),
        (
            {
                "product": "tomato-sauce-tub",
                "pieces": 4,
                "initial_temperature_C": 80,
                "target_core_C": "cold",
            },
            "target_core_C",
            "°C",
        ),
    ],
)
def test_bad_second_product_fields_are_named_with_their_range(second, field, allowed):
    with pytest.raises(InvalidInputError) as exc:
        _with(second)
    assert f"load.second_product.{field}" in str(exc.value)
    assert allowed in str(exc.value)


def test_a_second_product_needs_a_library():
    with pytest.raises(InvalidInputError) as exc:
        _with({"product": "tomato-sauce-tub", "pieces": 1, "initial_temperature_C": 5}, library=None)
    assert "load.second_product.product" in str(exc.value) and "with a library loaded" in str(exc.value)


def test_a_core_target_is_read_and_round_trips():
    plan = _with(
        {"product": "tomato-sauce-tub", "pieces": 40, "initial_temperature_C": 80, "target_core_C": 5}
    )
    assert plan.load.second_product.target_core_C == 5.0
    d = plan_to_dict(plan)
    assert d["load"]["second_product"]["target_core_C"] == 5
    assert plan_from_dict(d, library=LIB) == plan
    # without a target the file carries none
    plain = _with({"product": "tomato-sauce-tub", "pieces": 40, "initial_temperature_C": 80})
    assert plain.load.second_product.target_core_C is None
    assert "target_core_C" not in plan_to_dict(plain)["load"]["second_product"]
