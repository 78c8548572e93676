"""Mixture rules and the conductivity-model registry."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.properties.mixing import (
    CONDUCTIVITY_MODELS,
    conductivity_maxwell_eucken,
    conductivity_mixture,
    conductivity_parallel,
    conductivity_series,
    density_mixture,
    specific_heat_mixture,
    volume_fractions,
)

K = {"water": 0.60, "ice": 2.22, "protein": 0.20, "fat": 0.18, "ash": 0.35}
V = {"water": 0.55, "ice": 0.25, "protein": 0.12, "fat": 0.06, "ash": 0.02}


@pytest.mark.parametrize("name", list(CONDUCTIVITY_MODELS))
def test_dispatcher_calls_the_registered_model(name):
    # Independent method: every registry key through the dispatcher equals the direct call of its function.
    direct = {
        "parallel": conductivity_parallel,
        "series": conductivity_series,
        "maxwell-eucken": conductivity_maxwell_eucken,
    }
    assert_allclose(conductivity_mixture(name, V, K), direct[name](V, K), rtol=0)


def test_registry_keys_are_the_documented_three():
    assert list(CONDUCTIVITY_MODELS) == ["parallel", "series", "maxwell-eucken"]


def test_unknown_model_names_the_field():
    with pytest.raises(InvalidInputError) as err:
        conductivity_mixture("levy", V, K)
    assert err.value.field == "conductivity_model" and "maxwell-eucken" in str(err.value)


def test_density_from_mass_and_volume_bookkeeping():
    # Independent method: 1 kg made of 0.7 kg water (1000 kg/m³) and 0.3 kg protein (1300 kg/m³) fills
    # 0.7/1000 + 0.3/1300 m³; density = mass/volume, and the volume fractions are the parts of that volume.
    x = {"water": 0.7, "protein": 0.3}
    rho = {"water": 1000.0, "protein": 1300.0}
    volume = 0.7 / 1000 + 0.3 / 1300
    assert_allclose(density_mixture(x, rho), 1 / volume, rtol=1e-12)
    v = volume_fractions(x, rho)
    assert_allclose([v["water"], v["protein"]], [0.7 / 1000 / volume, 0.3 / 1300 / volume], rtol=1e-12)


def test_specific_heat_is_mass_weighted():
    # Independent method: heat to warm 0.6 kg water + 0.4 kg fat by 1 K.
    assert_allclose(
        specific_heat_mixture({"w": 0.6, "f": 0.4}, {"w": 4180.0, "f": 1980.0}), 0.6 * 4180 + 0.4 * 1980
    )


def test_maxwell_eucken_two_phase_form_of_the_handbook():
    # Source: ASHRAE Handbook—Refrigeration (2006) ch. 9, Maxwell–Eucken two-phase equation
    # k = kc (2kc + kd − 2 vd (kc − kd)) / (2kc + kd + vd (kc − kd)), evaluated directly here.
    kc, kd = 0.58, 0.19
    for vd in (0.05, 0.2, 0.45):
        expected = kc * (2 * kc + kd - 2 * vd * (kc - kd)) / (2 * kc + kd + vd * (kc - kd))
        got = conductivity_maxwell_eucken({"water": 1 - vd, "protein": vd}, {"water": kc, "protein": kd})
        assert_allclose(got, expected, rtol=1e-12)


def test_maxwell_eucken_dilute_limit():
    # Source: Maxwell (1904), dilute spheres: k/kc = 1 + 3 v (kd − kc)/(kd + 2 kc) + O(v²).
    kc, kd, v = 0.6, 0.2, 1e-4
    got = conductivity_maxwell_eucken({"water": 1 - v, "fat": v}, {"water": kc, "fat": kd})
    assert_allclose(got / kc - 1, 3 * v * (kd - kc) / (kd + 2 * kc), rtol=1e-3)


def test_maxwell_eucken_with_no_ice_equals_the_unfrozen_value():
    # Invariant: the ice stage is continuous at the initial freezing point (no ice yet).
    v_frozen = {**V, "ice": 0.0}
    v_unfrozen = {c: f for c, f in V.items() if c != "ice"}
    total = sum(v_unfrozen.values())
    v_unfrozen = {c: f / total for c, f in v_unfrozen.items()}
    v_frozen = {**v_unfrozen, "ice": 0.0}
    assert_allclose(
        conductivity_maxwell_eucken(v_frozen, K), conductivity_maxwell_eucken(v_unfrozen, K), rtol=1e-12
    )


def test_maxwell_eucken_needs_water():
    with pytest.raises(InvalidInputError):
        conductivity_maxwell_eucken({"protein": 1.0}, {"protein": 0.2})


fractions = st.lists(st.floats(0.0, 1.0), min_size=5, max_size=5).filter(
    lambda f: f[0] > 0.05 and sum(f) > 0.1
)


@settings(max_examples=60, deadline=None)
@given(fractions)
def test_series_below_maxwell_eucken_below_parallel(f):
    # Invariant (Wiener bounds): series ≤ any structural model ≤ parallel.
    total = sum(f)
    v = {c: x / total for c, x in zip(K, f, strict=True)}
    ks, kme, kp = (float(CONDUCTIVITY_MODELS[m](v, K)) for m in ("series", "maxwell-eucken", "parallel"))
    assert ks <= kme * (1 + 1e-12) and kme <= kp * (1 + 1e-12)
    assert np.isfinite(kme) and kme > 0
