"""time_to_temperature: crossings of piecewise-linear histories built in the test, where the exact crossing
is known by construction (independent method: the closed-form line), plus invariants."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.outcomes import time_to_temperature


def test_crossing_interpolated_linearly():
    # Source: construction (a line from 74 °C to 2 °C over 3 h crosses 21 °C at (74-21)/72 × 3 h).
    t = np.linspace(0.0, 10800.0, 7)  # coarse samples: the crossing falls between them
    temp = 74.0 - 72.0 * t / 10800.0
    r = time_to_temperature(t, temp, 21.0)
    assert r.reached and not r.at_start
    assert_allclose(r.time_s, (74.0 - 21.0) / 72.0 * 10800.0, rtol=1e-12)  # exact for a line: round-off only


def test_not_reached_is_a_result_with_the_closest_temperature():
    # Source: construction (cooling stops at 7.5 °C).
    r = time_to_temperature([0, 3600, 7200], [60.0, 20.0, 7.5], 5.0)
    assert not r.reached and r.time_s is None
    assert_allclose(r.closest_C, 7.5, rtol=0, atol=0)
    assert r.closest_time_s == 7200.0
    assert "not cooled to 5" in r.reason


def test_up_either_and_start_s():
    # Source: construction: heating 10 → 90 °C over 800 s, then cooling back to 10 °C at 1600 s.
    t = [0.0, 800.0, 1600.0]
    T = [10.0, 90.0, 10.0]
    assert_allclose(time_to_temperature(t, T, 70.0, direction="up").time_s, 600.0, rtol=1e-12)
    # "either" starting below the target resolves to "up"
    r = time_to_temperature(t, T, 70.0, direction="either")
    assert r.direction == "up"
    assert_allclose(r.time_s, 600.0, rtol=1e-12)
    # searching from 900 s (mid-interval) finds the cooling crossing of 50 °C at 1200 s
    r = time_to_temperature(t, T, 50.0, direction="down", start_s=900.0)
    assert_allclose(r.time_s, 1200.0, rtol=1e-12)
    # already below the target at the start: reached at start
    r = time_to_temperature(t, T, 20.0, direction="down")
    assert r.reached and r.at_start and r.time_s == 0.0


def test_bad_input_names_the_field():
    with pytest.raises(InvalidInputError, match="time_s"):
        time_to_temperature([0, 10, 10], [5.0, 4.0, 3.0], 4.5)
    with pytest.raises(InvalidInputError, match="temperature_C"):
        time_to_temperature([0, 10], [5.0, float("nan")], 4.5)
    with pytest.raises(InvalidInputError, match="direction"):
        time_to_temperature([0, 10], [5.0, 4.0], 4.5, direction="sideways")
    with pytest.raises(InvalidInputError, match="start_s"):
        time_to_temperature([0, 10], [5.0, 4.0], 4.5, start_s=20.0)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.floats(-30, 90, allow_nan=False), min_size=2, max_size=12),
    st.floats(-30, 90, allow_nan=False),
)
def test_crossing_lies_on_the_history_and_is_the_first(temps, target):
    # Invariant: at the reported crossing the interpolated history equals the target, and before it the
    # history never went to or below the target.
    t = np.arange(len(temps), dtype=float) * 60.0
    T = np.array(temps)
    r = time_to_temperature(t, T, target)
    if r.reached and r.at_start:
        assert T[0] <= target and r.time_s == 0.0
    elif r.reached:
        assert_allclose(np.interp(r.time_s, t, T), target, atol=1e-9)
        before = T[t < r.time_s]
        assert np.all(before > target)
    else:
        assert np.all(T > target)
        assert_allclose(r.closest_C, T.min(), atol=0)
