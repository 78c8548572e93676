"""GAB isotherm: the BET limit and its monolayer point, the inverse, monotonicity and bounds, bad input."""

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from procplan.errors import InvalidInputError
from procplan.properties.sorption import ISOTHERMS, GABIsotherm, dry_basis, isotherm, wet_basis


def test_k_one_is_the_bet_isotherm_with_its_monolayer_point():
    # Source: Brunauer, Emmett & Teller (1938), J. Am. Chem. Soc. 60, 309: X = Xm C a / ((1 − a)(1 − a + C a));
    # the monolayer X = Xm is reached at a = 1/(1 + √C) (Timmermann, Chirife & Iglesias 2001, J. Food Eng. 48, 19).
    c = 16.0
    bet = GABIsotherm("bet", 0.08, c, 1.0, (25.0, 25.0), "test")
    a = np.linspace(0.05, 0.9, 18)
    assert np.allclose(bet.moisture_kg_kg(a), 0.08 * c * a / ((1 - a) * (1 - a + c * a)), rtol=1e-12)
    assert bet.moisture_kg_kg(1.0 / (1.0 + math.sqrt(c))) == pytest.approx(0.08, rel=1e-12)


@pytest.mark.parametrize("name", sorted(ISOTHERMS))
def test_each_registered_isotherm_round_trips_and_is_monotone(name):
    iso = ISOTHERMS[name]
    a = np.linspace(0.0, 0.99, 100)
    x = iso.moisture_kg_kg(a)
    assert np.all(np.diff(x) > 0)  # invariant: more water at a higher water activity
    assert np.allclose(iso.water_activity(x), a, atol=1e-9)
    assert iso.water_activity(iso.saturated_moisture_kg_kg * 1.01) == 1.0  # free water above saturation
    assert iso.water_activity(0.0) == 0.0
    assert not iso.confirmed  # from memory: shown as indicative


def test_the_monolayer_lies_at_low_water_activity_for_every_food():
    # Common practice (van den Berg 1984): the GAB monolayer of foods lies at a_w 0.1–0.4.
    for iso in ISOTHERMS.values():
        a_mono = float(iso.water_activity(iso.x_m_kg_kg))
        assert 0.05 < a_mono < 0.45, iso.name


def test_fresh_meat_holds_free_water():
    # Fresh lean beef, 75 % water (X = 3 kg/kg), has a_w about 0.99 (common practice; a surface "wet")
    assert isotherm("beef").water_activity(dry_basis(0.75)) == 1.0
    assert wet_basis(dry_basis(0.71)) == pytest.approx(0.71)


@given(st.floats(min_value=0.0, max_value=50.0))
def test_water_activity_is_bounded(x):
    aw = ISOTHERMS["apple"].water_activity(x)
    assert 0.0 <= aw <= 1.0


def test_bad_input_names_the_field():
    with pytest.raises(InvalidInputError, match="isotherm"):
        isotherm("cheese")
    with pytest.raises(InvalidInputError, match="k"):
        GABIsotherm("x", 0.1, 10.0, 1.2, (20.0, 20.0), "test")
    with pytest.raises(InvalidInputError, match="water_activity"):
        ISOTHERMS["beef"].moisture_kg_kg(1.5)


def test_the_one_point_water_activity_is_the_array_one():
    # Invariant: the float path of the drying solver's inner loop gives the array path's root
    import numpy as np

    from procplan.properties.sorption import ISOTHERMS

    for iso in ISOTHERMS.values():
        xs = np.concatenate(
            [[0.0, 1e-9], np.linspace(0.001, 4.0, 400), [iso.saturated_moisture_kg_kg * 1.01]]
        )
        xs = xs[np.isfinite(xs)]
        arr = iso._water_activity(xs)
        one = np.array([iso.water_activity_one(float(x)) for x in xs])
        assert np.allclose(one, arr, rtol=1e-12, atol=1e-14)
