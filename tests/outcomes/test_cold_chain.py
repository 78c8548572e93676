"""Mean kinetic temperature and stability budget.

No worked example of the pharmacopoeia chapter could be confirmed in the sources at hand, so the mean
kinetic temperature is checked against a direct, independent evaluation of Haynes' formula (plain sums in
kelvin, no log-sum-exp) and against its invariants. The budget is checked on piecewise-linear histories
whose crossing times are known by hand, and on invariants with hypothesis.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.outcomes import StabilityBudget, check_stability_budget, mean_kinetic_temperature_C


def _haynes_direct(weights, temperature_C, dh=83144.0, r=8.3144):
    # Source: Haynes, J. Pharm. Sci. 60:927 (1971); USP <1079.2>: T_MK = (ΔH/R)/(−ln(Σ w e^(−ΔH/RT)/Σ w)).
    tk = [c + 273.15 for c in temperature_C]
    s = sum(w * math.exp(-dh / (r * t)) for w, t in zip(weights, tk, strict=True))
    return dh / r / (-math.log(s / sum(weights))) - 273.15


def test_samples_mode_equals_direct_formula():
    # Source: Haynes (1971) formula evaluated directly; readings are an example built for the test.
    readings = [22.0, 25.0, 31.5, 40.0, 18.0, 27.3]
    assert_allclose(
        mean_kinetic_temperature_C(None, readings, mode="samples"),
        _haynes_direct([1] * 6, readings),
        rtol=1e-12,
    )


def test_trapezoid_mode_equals_direct_formula_with_unequal_intervals():
    # Source: Haynes (1971) with trapezoid weights w_i = (t_{i+1} − t_{i−1})/2 computed by hand:
    # times 0, 1, 3, 7 h → weights 0.5, 1.5, 3, 2 h.
    t = np.array([0.0, 1.0, 3.0, 7.0]) * 3600.0
    temp = [5.0, 12.0, 30.0, 8.0]
    assert_allclose(
        mean_kinetic_temperature_C(t, temp), _haynes_direct([0.5, 1.5, 3.0, 2.0], temp), rtol=1e-12
    )


def test_delta_h_over_r_is_ten_thousand_kelvin_by_default():
    # Source: USP <1079.2> uses ΔH = 83.144 kJ/mol with R = 8.3144 J/(mol K) (from memory), so ΔH/R = 10 000 K;
    # an explicit ΔH/R of 10 000 K through other values must give the same result.
    temp = [2.0, 9.0, 25.0]
    a = mean_kinetic_temperature_C(None, temp, mode="samples")
    b = mean_kinetic_temperature_C(
        None, temp, mode="samples", delta_h_J_mol=100000.0, gas_constant_J_molK=10.0
    )
    assert_allclose(a, b, rtol=1e-13)


def test_loggers_as_columns_match_one_by_one():
    # Source: construction (vectorised form = each column alone).
    t = np.array([0.0, 600.0, 1500.0, 3600.0])
    table = np.array([[4.0, 20.0], [6.0, 22.0], [11.0, 35.0], [5.0, 21.0]])
    got = mean_kinetic_temperature_C(t, table)
    assert got.shape == (2,)
    for k in range(2):
        assert_allclose(got[k], mean_kinetic_temperature_C(t, table[:, k]), rtol=1e-13)


def test_log_sum_exp_keeps_cold_readings():
    # Source: construction; at −80 °C exp(−ΔH/RT) is about 3e-23, still representable, but a cold history with
    # a large ΔH underflows a plain sum: the result must stay the constant temperature.
    got = mean_kinetic_temperature_C(None, [-80.0, -80.0], mode="samples", delta_h_J_mol=2e6)
    assert_allclose(got, -80.0, rtol=1e-12)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.floats(-30.0, 60.0), min_size=2, max_size=30),
    st.lists(st.floats(1.0, 5000.0), min_size=29, max_size=29),
)
def test_invariants(temps, steps):
    # Source: Jensen's inequality (exp(−ΔH/RT) is convex below ΔH/2R = 5000 K) and the mean-value property.
    t = np.concatenate(([0.0], np.cumsum(steps[: len(temps) - 1])))
    temp = np.array(temps)
    mkt = mean_kinetic_temperature_C(t, temp)
    dt = np.diff(t)
    w = np.zeros(temp.size)
    w[:-1] += dt / 2
    w[1:] += dt / 2
    mean = float(np.sum(w * temp) / np.sum(w))
    assert temp.min() - 1e-9 <= mkt <= temp.max() + 1e-9
    assert mkt >= mean - 1e-9
    assert_allclose(mean_kinetic_temperature_C(t, np.full(temp.size, temps[0])), temps[0], atol=1e-9)


def test_mkt_rejects_bad_input():
    with pytest.raises(InvalidInputError, match="mode"):
        mean_kinetic_temperature_C([0, 1], [2.0, 3.0], mode="hourly")
    with pytest.raises(InvalidInputError, match="time_s"):
        mean_kinetic_temperature_C([0, 1, 5], [2.0, 3.0, 4.0], mode="samples")  # unequal spacing
    with pytest.raises(InvalidInputError, match="time_s"):
        mean_kinetic_temperature_C([0, 0], [2.0, 3.0])
    with pytest.raises(InvalidInputError, match="temperature_C"):
        mean_kinetic_temperature_C([0, 1], [2.0, float("nan")])
    with pytest.raises(InvalidInputError, match="temperature_C"):
        mean_kinetic_temperature_C([0, 1], [2.0, 3.0, 4.0])


# --- stability budget ---------------------------------------------------------------------------------------
BUDGET = StabilityBudget(
    2.0, 8.0, allowance_above_h=3.0, allowance_below_h=0.5, name="vaccine", source="test"
)


def test_hand_calculated_crossings_and_peaks():
    # Source: hand calculation on a piecewise-linear history (h): 5 °C at 0 → 11 °C at 2 (crosses 8 at 1.0)
    # → 5 °C at 4 (crosses 8 at 3.0) → −1 °C at 5 (crosses 2 at 4.5) → 5 °C at 7 (crosses 2 at 5 + 2·3/6 = 6.0).
    t = np.array([0.0, 2.0, 4.0, 5.0, 7.0]) * 3600.0
    temp = [5.0, 11.0, 5.0, -1.0, 5.0]
    r = check_stability_budget(BUDGET, [(t, temp)])
    assert_allclose(r.above_s, 2.0 * 3600.0, rtol=1e-12)
    assert_allclose(r.below_s, 1.5 * 3600.0, rtol=1e-12)
    assert_allclose(r.inside_s, 3.5 * 3600.0, rtol=1e-12)
    up, down = r.excursions
    assert (up.side, down.side) == ("above", "below")
    assert_allclose([up.start_s, up.end_s, up.peak_C], [3600.0, 3 * 3600.0, 11.0], rtol=1e-12)
    assert_allclose([down.start_s, down.end_s, down.peak_C], [4.5 * 3600.0, 6.0 * 3600.0, -1.0], rtol=1e-12)
    assert_allclose([up.remaining_above_h, up.remaining_below_h], [1.0, 0.5], rtol=1e-12)
    assert_allclose([down.remaining_above_h, down.remaining_below_h], [1.0, -1.0], rtol=1e-12)
    assert not r.passed
    # below allowance of 0.5 h is used up half an hour into the excursion that starts at 4.5 h
    assert r.exhausted[0] == "below" and r.exhausted[1] == 0
    assert_allclose(r.exhausted[2], 5.0 * 3600.0, rtol=1e-12)


def test_sample_counting_would_differ():
    # Source: hand calculation: one reading of 10 °C between readings of 6 °C, 1 h apart: above 8 °C from
    # 0.5 h to 1.5 h (1 h), although one sample in three (or one interval of two) is above.
    r = check_stability_budget(BUDGET, [([0.0, 3600.0, 7200.0], [6.0, 10.0, 6.0])])
    assert_allclose(r.above_s, 3600.0, rtol=1e-12)
    assert len(r.excursions) == 1 and not r.excursions[0].ongoing


def test_touching_the_limit_is_inside_and_splits_excursions():
    # Source: definition (a reading exactly on a limit is inside): 9, 8, 9 °C gives two excursions of 1 h.
    r = check_stability_budget(BUDGET, [([0.0, 3600.0, 7200.0], [9.0, 8.0, 9.0])])
    assert [e.duration_s for e in r.excursions] == [3600.0, 3600.0]
    assert r.excursions[0].start_s == 0.0 and r.excursions[1].ongoing
    flat = check_stability_budget(BUDGET, [([0.0, 3600.0], [8.0, 8.0])])
    assert flat.above_s == 0.0 and flat.excursions == ()


def test_consecutive_histories_add_up():
    # Source: hand calculation: 2 h above in storage, then 1.5 h above in transport = 3.5 h > 3 h allowed;
    # the allowance runs out 1 h into the transport excursion (which starts at 0.5 h of its clock).
    storage = ([0.0, 7200.0], [9.0, 9.0])
    transport = ([0.0, 1800.0, 7200.0], [5.0, 9.0, 9.0])
    # 5 → 9 °C over 0.5 h crosses 8 °C at 0.375 h; above from 0.375 h to 2 h = 1.625 h
    r = check_stability_budget(BUDGET, [storage, transport])
    assert_allclose(r.above_s, (2.0 + 1.625) * 3600.0, rtol=1e-12)
    assert_allclose(r.remaining_above_h, 3.0 - 3.625, rtol=1e-12)
    assert [e.history for e in r.excursions] == [0, 1]
    assert r.exhausted == ("above", 1, pytest.approx((0.375 + 1.0) * 3600.0, rel=1e-12))
    assert "above allowance used up in history 2" in r.reason
    assert_allclose(r.total_s, 4 * 3600.0, rtol=0)


def test_exactly_the_allowance_passes():
    # Source: definition (using exactly the allowance passes): 3 h above with 3 h allowed.
    r = check_stability_budget(BUDGET, [([0.0, 3 * 3600.0], [8.5, 8.5])])
    assert r.passed and r.remaining_above_h == 0.0


history_strategy = st.integers(2, 25).flatmap(
    lambda n: st.tuples(
        st.lists(st.floats(1.0, 7200.0), min_size=n - 1, max_size=n - 1),
        st.lists(st.floats(-10.0, 20.0), min_size=n, max_size=n),
    )
)


@settings(max_examples=80, deadline=None)
@given(st.lists(history_strategy, min_size=1, max_size=3))
def test_budget_invariants(raw):
    # Source: invariants: above + inside + below = total; remaining allowances never increase; excursions
    # do not overlap; their durations sum to the totals; pass ⇔ nothing overspent.
    histories = [(np.concatenate(([0.0], np.cumsum(steps))), temps) for steps, temps in raw]
    budget = StabilityBudget(2.0, 8.0, allowance_above_h=1.0, allowance_below_h=2.0)
    r = check_stability_budget(budget, histories)
    assert_allclose(r.above_s + r.inside_s + r.below_s, r.total_s, rtol=1e-12, atol=1e-6)
    assert r.above_s >= 0 and r.below_s >= 0 and r.inside_s >= -1e-6
    above = [e.remaining_above_h for e in r.excursions]
    below = [e.remaining_below_h for e in r.excursions]
    assert all(b <= a for a, b in zip([1.0, *above], above, strict=False))
    assert all(b <= a for a, b in zip([2.0, *below], below, strict=False))
    for side, total in (("above", r.above_s), ("below", r.below_s)):
        assert_allclose(
            sum(e.duration_s for e in r.excursions if e.side == side), total, rtol=1e-12, atol=1e-9
        )
    for k in range(len(histories)):
        mine = [e for e in r.excursions if e.history == k]
        assert all(a.end_s <= b.start_s for a, b in zip(mine, mine[1:], strict=False))
        for e in mine:
            assert (e.peak_C > 8.0) if e.side == "above" else (e.peak_C < 2.0)
    assert r.passed == (r.remaining_above_h >= 0 and r.remaining_below_h >= 0)


def test_budget_rejects_bad_input():
    with pytest.raises(InvalidInputError, match="high_C"):
        StabilityBudget(8.0, 2.0, 1.0, 1.0)
    with pytest.raises(InvalidInputError, match="allowance_above_h"):
        StabilityBudget(2.0, 8.0, -1.0, 1.0)
    assert StabilityBudget(2.0, 8.0, math.inf, 0.0).allowance_above_h == math.inf
    with pytest.raises(InvalidInputError, match="histories"):
        check_stability_budget(BUDGET, [])
    with pytest.raises(InvalidInputError, match=r"histories\[0\]"):
        check_stability_budget(BUDGET, [([0.0], [5.0])])
    with pytest.raises(InvalidInputError, match="budget"):
        check_stability_budget({"low_C": 2}, [([0.0, 1.0], [5.0, 5.0])])
