"""Safety margin on a predicted time and the equipment-cycle check."""

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.outcomes import check_cycle, plan_time_min


def test_plan_time_definition():
    # Source: the definition (plan = predicted × (1 + margin/100) + fixed); hand values.
    assert_allclose(plan_time_min(90.0, 20.0), 108.0, rtol=1e-12)
    assert_allclose(plan_time_min(90.0, 20.0, 10.0), 118.0, rtol=1e-12)
    assert_allclose(plan_time_min(90.0, 0.0), 90.0, rtol=0)


def test_cycle_shorter_than_plan_is_flagged():
    c = check_cycle(90.0, 110.0, 20.0, 5.0)  # plan 113 min
    assert c.cycle_too_short and "shorter" in c.message
    assert_allclose(c.spare_min, -3.0, rtol=1e-12)
    c = check_cycle(90.0, 113.0, 20.0, 5.0)  # exactly the plan: not short
    assert not c.cycle_too_short and c.spare_min == 0.0


def test_bad_input_names_the_field():
    with pytest.raises(InvalidInputError, match="margin_percent"):
        plan_time_min(90.0, -5.0)
    with pytest.raises(InvalidInputError, match="fixed_min"):
        plan_time_min(90.0, 10.0, -1.0)
    with pytest.raises(InvalidInputError, match="cycle_min"):
        check_cycle(90.0, 0.0, 10.0)
    with pytest.raises(InvalidInputError, match="predicted_min"):
        check_cycle(float("nan"), 100.0, 10.0)


@settings(max_examples=50, deadline=None)
@given(st.floats(0, 1e4), st.floats(0, 200), st.floats(0, 120), st.floats(1, 2e4))
def test_flag_agrees_with_spare_time(pred, margin, fixed, cycle):
    c = check_cycle(pred, cycle, margin, fixed)
    assert c.plan_min >= pred
    assert c.cycle_too_short == (c.spare_min < 0)
