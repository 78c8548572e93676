"""Lumped-capacitance model against textbook worked examples, an energy balance and invariants."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import integrate

from procplan.conduction import lumped
from procplan.errors import InvalidInputError


def _sphere(d_m):
    return math.pi * d_m**3 / 6.0, math.pi * d_m**2


def test_incropera_example_5_1_thermocouple():
    # Source: Incropera et al., Fundamentals of Heat and Mass Transfer, 7th ed., Example 5.1 (inputs from
    # memory): junction sphere with k = 20 W/mK, c = 400 J/kgK, rho = 8500 kg/m³, h = 400 W/m²K; the
    # diameter for a 1 s time constant is D = 6 h τ/(ρ c) = 0.706 mm; from 25 °C in gas at 200 °C it takes
    # about 5.2 s to reach 199 °C. Tolerance ±0.05 s: the book quotes 2 significant figures.
    d = 6.0 * 400.0 * 1.0 / (8500.0 * 400.0)
    assert_allclose(d, 0.706e-3, atol=0.5e-6)
    v, a = _sphere(d)
    assert_allclose(lumped.lumped_time_constant_s(400.0, v, a, 8500.0, 400.0), 1.0, rtol=1e-12)
    t = lumped.lumped_time_to_temperature_s(199.0, 25.0, 200.0, 400.0, v, a, 8500.0, 400.0)
    assert_allclose(t, 5.2, atol=0.05)
    # The Biot number of the example, h (r_o/3)/k = 2.35e-3, is far inside the lumped range.
    assert 400.0 * (d / 6.0) / 20.0 < 0.1


def test_cengel_example_4_1_thermocouple_reaches_99_percent():
    # Source: Çengel & Ghajar, Heat and Mass Transfer, ch. 4, Example 4-1 (inputs from memory; answer
    # "about 10 s" also in the project's reference notes): junction sphere D = 1 mm, k = 35 W/mK,
    # rho = 8500 kg/m³, cp = 320 J/kgK, h = 210 W/m²K, to 99 % of the initial difference. Tolerance ±0.5 s:
    # the book rounds to 10 s.
    v, a = _sphere(1e-3)
    t = lumped.lumped_time_to_temperature_s(99.0, 0.0, 100.0, 210.0, v, a, 8500.0, 320.0)
    assert_allclose(t, 10.0, atol=0.5)


def test_heat_equals_integral_of_surface_convection():
    # Independent method: Q(t) = ∫ h A (T − T∞) dt by scipy.integrate.quad against Incropera eq. 5.8.
    args = dict(
        initial_C=75.0,
        medium_C=-2.0,
        h_W_m2K=18.0,
        volume_m3=2e-4,
        area_m2=0.02,
        rho_kg_m3=1050.0,
        cp_J_kgK=3600.0,
    )
    for t_end in (60.0, 1800.0, 20000.0):
        q, _ = integrate.quad(
            lambda t: 18.0 * 0.02 * (lumped.lumped_temperature_C(t, **args) - -2.0), 0.0, t_end, epsrel=1e-12
        )
        assert_allclose(lumped.lumped_heat_J(t_end, **args), q, rtol=1e-9)
    # and it approaches the whole stored heat ρ V c (Ti − T∞) (Incropera eq. 5.8 as t → ∞)
    assert_allclose(lumped.lumped_heat_J(1e9, **args), 1050.0 * 2e-4 * 3600.0 * 77.0, rtol=1e-12)


def test_arrays_broadcast_and_round_trip():
    args = dict(
        medium_C=4.0,
        h_W_m2K=np.array([10.0, 25.0, 50.0])[:, None],
        volume_m3=1e-3,
        area_m2=0.06,
        rho_kg_m3=1000.0,
        cp_J_kgK=3800.0,
    )
    t = np.array([0.0, 600.0, 3600.0])
    temp = lumped.lumped_temperature_C(t, 60.0, **args)
    assert temp.shape == (3, 3)
    assert_allclose(temp[:, 0], 60.0)
    back = lumped.lumped_time_to_temperature_s(temp, 60.0, **args)
    assert_allclose(back, np.broadcast_to(t, (3, 3)), rtol=1e-9, atol=1e-9)
    assert isinstance(lumped.lumped_temperature_C(10.0, 60.0, 4.0, 10.0, 1e-3, 0.06, 1000.0, 3800.0), float)


@settings(max_examples=50, deadline=None)
@given(
    ti=st.floats(-30, 120),
    tm=st.floats(-30, 120),
    h=st.floats(1, 2000),
    times=st.lists(st.floats(0, 1e5), min_size=2, max_size=10),
    scale=st.sampled_from([1.0, 60.0, 3600.0]),
)
def test_invariants_bounded_monotone_unit_free(ti, tm, h, times, scale):
    t = np.sort(np.array(times))
    args = (ti, tm, h, 1e-3, 0.06, 1000.0, 3800.0)
    temp = lumped.lumped_temperature_C(t, *args)
    lo, hi = min(ti, tm), max(ti, tm)
    assert np.all((temp >= lo - 1e-9) & (temp <= hi + 1e-9))
    assert np.all(np.diff(np.abs(temp - tm)) <= 1e-12)  # never overshoots, never turns back
    # times given in another unit (min or h) and converted to s give the same result
    assert_allclose(lumped.lumped_temperature_C((t / scale) * scale, *args), temp, rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize(
    "kwargs,field",
    [
        (dict(h_W_m2K=0.0), "h_W_m2K"),
        (dict(h_W_m2K=-5.0), "h_W_m2K"),
        (dict(volume_m3=-1e-3), "volume_m3"),
        (dict(area_m2=0.0), "area_m2"),
        (dict(rho_kg_m3=float("nan")), "rho_kg_m3"),
        (dict(cp_J_kgK=0.0), "cp_J_kgK"),
        (dict(time_s=-1.0), "time_s"),
        (dict(time_s=[0.0, float("nan")]), "time_s"),
        (dict(initial_C=float("nan")), "initial_C"),
    ],
)
def test_bad_input_names_the_field(kwargs, field):
    base = dict(
        time_s=10.0,
        initial_C=60.0,
        medium_C=4.0,
        h_W_m2K=10.0,
        volume_m3=1e-3,
        area_m2=0.06,
        rho_kg_m3=1000.0,
        cp_J_kgK=3800.0,
    )
    base.update(kwargs)
    with pytest.raises(InvalidInputError) as e:
        lumped.lumped_temperature_C(**base)
    assert e.value.field == field


@pytest.mark.parametrize("target", [4.0, 2.0, 61.0])
def test_unreachable_target_is_refused(target):
    # A lumped body approaches T∞ = 4 °C from 60 °C and never reaches or passes it.
    with pytest.raises(InvalidInputError) as e:
        lumped.lumped_time_to_temperature_s(target, 60.0, 4.0, 10.0, 1e-3, 0.06, 1000.0, 3800.0)
    assert e.value.field == "target_C"


def test_equal_initial_and_medium_is_refused():
    with pytest.raises(InvalidInputError) as e:
        lumped.lumped_time_to_temperature_s(5.0, 5.0, 5.0, 10.0, 1e-3, 0.06, 1000.0, 3800.0)
    assert e.value.field == "medium_C"
