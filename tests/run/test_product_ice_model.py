"""The product's ice-fraction model (a key of procplan.properties.ICE_MODELS): product key, default unchanged,
the model reaching the property table the solvers read."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.product import product_from_dict, product_to_dict
from procplan.properties import food_properties, property_table

LIB = load_library()
RAW = {
    "name": "p",
    "shape": "slab",
    "thickness_mm": 20,
    "composition": {
        "water": 0.68,
        "protein": 0.21,
        "fat": 0.08,
        "carbohydrate": 0.01,
        "fiber": 0.0,
        "ash": 0.02,
    },
}


def test_the_product_key_round_trips_defaults_to_chen_and_is_validated():
    p = product_from_dict({**RAW, "ice_model": "tchigeov"})
    assert p.ice_model == "tchigeov" and product_to_dict(p)["ice_model"] == "tchigeov"
    chen = product_from_dict(RAW)
    assert chen.ice_model == "chen" and "ice_model" not in product_to_dict(chen)  # old files unchanged
    assert all(q.ice_model == "chen" for q in LIB.products.values())
    with pytest.raises(InvalidInputError) as e:
        product_from_dict({**RAW, "ice_model": "linear"})
    assert e.value.field == "product.ice_model" and "'tchigeov'" in e.value.allowed


def test_the_products_model_reaches_the_property_table():
    p = product_from_dict({**RAW, "ice_model": "tchigeov"})
    t = np.array([-25.0, -10.0, -3.0, 5.0])
    ref = property_table(p.composition_dict, category=p.category, ice_model="tchigeov")
    np.testing.assert_array_equal(p.property_table().enthalpy(t), ref.enthalpy(t))
    chen = replace(p, ice_model="chen").property_table()
    assert abs(float(chen.enthalpy(-3.0)) - float(p.property_table().enthalpy(-3.0))) > 1e3  # J/kg apart
    assert "tchigeov" in p.property_table().source


def test_tchigeov_ice_fraction_of_the_product_follows_the_published_equation():
    # Source: ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. (9) (Tchigeov 1979):
    # x_ice = 1.105 x_w / (1 + 0.7138 / ln(t_f − t + 1)), below the cap of the freezable water.
    p = product_from_dict({**RAW, "ice_model": "tchigeov"})
    fp = food_properties(p.composition_dict, [-10.0], category=p.category, ice_model=p.ice_model)
    tf = fp.initial_freezing_C
    ref = 1.105 * 0.68 / (1.0 + 0.7138 / math.log(tf + 10.0 + 1.0))
    assert float(fp.ice_fraction[0]) == pytest.approx(ref, rel=1e-9)
