"""Lethality: F-values by the general method, log reductions, time to a required F, presets."""

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.integrate import quad

from procplan.errors import InvalidInputError
from procplan.outcomes import (
    F_INTEGRATION_METHODS,
    LETHALITY_PRESETS,
    Z_VALUE_PRESETS,
    f_value,
    log_reduction,
    time_to_lethality,
    volume_average_log_reduction,
)

DATA = Path(__file__).resolve().parents[1] / "data"


def test_f0_constant_at_reference():
    # Source: definition of F0 (European Pharmacopoeia 5.1.5): 10 min at 121.1 °C is F0 = 10 min.
    # Tolerance: round-off only.
    assert_allclose(f_value([0, 600], [121.1, 121.1], 121.1, 10.0)[-1], 10.0, rtol=1e-12)


def test_f0_fifteen_minutes_at_111_1():
    # Source: /work/shared/references.md from EP 5.1.5 / general method: 15 min at 111.1 °C gives F0 = 1.5 min
    # (one z below the reference: lethal rate 0.1). Tolerance: round-off only.
    for method in F_INTEGRATION_METHODS:
        assert_allclose(
            f_value(np.linspace(0, 900, 16), np.full(16, 111.1), 121.1, 10.0, method=method)[-1],
            1.5,
            rtol=1e-12,
        )


def test_exact_linear_against_scipy_quad_on_a_ramp_and_hold():
    # Independent method: scipy.integrate.quad of 10^((T(t)-Tref)/z) on the same piecewise-linear T(t).
    t = np.array([0.0, 900.0, 1500.0, 2400.0])
    T = np.array([20.0, 118.0, 121.5, 60.0])
    ref = (
        quad(
            lambda x: 10 ** ((np.interp(x, t, T) - 121.1) / 10.0),
            0,
            t[-1],
            points=t[1:-1],
            epsabs=1e-12,
            limit=200,
        )[0]
        / 60.0
    )
    # Tolerance 1e-9: both exact up to quadrature error.
    assert_allclose(f_value(t, T, 121.1, 10.0)[-1], ref, rtol=1e-9)
    # The trapezoid rule on coarse samples overestimates (the lethal rate is convex in time on a ramp) and
    # converges to the exact value when the history is resampled finely (error ~ dt²).
    coarse = f_value(t, T, 121.1, 10.0, method="trapezoid")[-1]
    tf = np.linspace(0, t[-1], 4801)
    fine = f_value(tf, np.interp(tf, t, T), 121.1, 10.0, method="trapezoid")[-1]
    assert coarse > ref
    assert_allclose(fine, ref, rtol=1e-5)


def test_uk_listeria_equivalent_times():
    # Source: Mackey & Bratchell (1989), Lett. Appl. Microbiol. 9:89 (70 °C for 2 min, 6-log); the UK table of
    # equivalents in tests/data/outcomes_uk_listeria_equivalents.csv (from memory, see the file's header).
    p = LETHALITY_PRESETS["listeria-6log"]
    d = pd.read_csv(DATA / "outcomes_uk_listeria_equivalents.csv", comment="#")
    computed_s = np.array([p.equivalent_time_min(T) * 60.0 for T in d.temperature_C])
    # With z 7.5 °C: 65 °C → 9.28 min, 75 °C → 0.431 min (the values the guidance rounds). Round-off only.
    assert_allclose(p.equivalent_time_min(65.0), 2.0 * 10 ** (5 / 7.5), rtol=1e-12)
    assert_allclose(computed_s[d.temperature_C == 65][0] / 60, 9.28, atol=0.005)
    assert_allclose(computed_s[d.temperature_C == 75][0] / 60, 0.431, atol=0.0005)
    # The published times are rounded up to convenient values: never below the z-7.5 time, and within 17 %
    # of it (75 °C: 30 s published for 25.9 s computed, +16.0 %, is the largest rounding).
    assert np.all(d.time_s.to_numpy() >= computed_s - 1e-9)
    assert_allclose(d.time_s, computed_s, rtol=0.17)
    # z implied by the table's end rows (60 °C / 45 min and 80 °C / 6 s): 20/log10(450) = 7.54 °C.
    z_table = 20.0 / math.log10(d.time_s.iloc[0] / d.time_s.iloc[-1])
    assert_allclose(z_table, p.z_C, atol=0.1)
    # Holding each tabulated time at its temperature gives at least the required F (F ≥ 2 min at 70 °C).
    for T, ts in zip(d.temperature_C, d.time_s, strict=True):
        F = f_value([0.0, ts], [T, T], p.reference_C, p.z_C)[-1]
        assert F >= p.required_F_min - 1e-9
        assert log_reduction(F, p.d_value_min) >= 6.0 - 1e-9


@pytest.mark.parametrize("column,logs", [("time_7log_s", 7.0), ("time_6_5log_s", 6.5)])
def test_fsis_appendix_a_rows_consistent_with_the_preset(column, logs):
    # Source: USDA FSIS (1999) Appendix A, cooked beef / roast beef table (rows from memory: see the CSV header).
    d = pd.read_csv(DATA / "outcomes_fsis_appendix_a_beef.csv", comment="#")
    T_C = (d.temperature_F.to_numpy() - 32.0) * 5.0 / 9.0
    times = d[column].to_numpy(dtype=float)
    # z implied by the table: least-squares slope of log10(time) against temperature.
    slope, _ = np.polyfit(T_C, np.log10(times), 1)
    z_table = -1.0 / slope
    key = "salmonella-beef-7log-fsis" if logs == 7.0 else "salmonella-beef-6.5log-fsis"
    p = LETHALITY_PRESETS[key]
    # The table follows z = 10 °F = 5.56 °C to within 1 %.
    assert_allclose(z_table, p.z_C, rtol=0.01)
    # Each row, held at constant temperature, gives the preset's F at 140 °F within the table's rounding:
    # whole minutes at and below 145 °F (4 min ± 0.5 min allows up to 12.5 %), whole seconds above (≤ 3 %).
    # The rows deviate by at most 7.1 % (6.5-log, 150 °F): the 6.5-log rows in seconds follow F = 12 × 6.5/7
    # = 11.1 min rather than the 12 min of its 140 °F row, which the preset keeps (conservative). Bound 8 %.
    F = np.array(
        [f_value([0.0, ts], [T, T], p.reference_C, p.z_C)[-1] for T, ts in zip(T_C, times, strict=True)]
    )
    assert_allclose(F, p.required_F_min, rtol=0.08)


def test_fsis_seconds_rows_scale_with_log_reduction():
    # Source: same table. With one D-value, the 7-log and 6.5-log times differ by 7/6.5 = 1.077; the rows given
    # in seconds (146-155 °F) agree within their 1-s rounding (≤ 1/22 = 4.5 %).
    d = pd.read_csv(DATA / "outcomes_fsis_appendix_a_beef.csv", comment="#")
    s = d[d.temperature_F >= 146]
    assert_allclose(s.time_7log_s / s.time_6_5log_s, 7.0 / 6.5, rtol=0.04)


def test_time_to_lethality_inverts_f_value():
    # Independent method: the time found must give F = required when integrated by f_value.
    t = np.array([0.0, 1200.0, 2400.0])
    T = np.array([20.0, 95.0, 95.0])
    r = time_to_lethality(t, T, 90.0, 10.0, 10.0)
    assert r.reached
    tt = np.array([0.0, 1200.0, r.time_s]) if r.time_s > 1200 else np.array([0.0, r.time_s])
    TT = np.interp(tt, t, T)
    assert_allclose(f_value(tt, TT, 90.0, 10.0)[-1], 10.0, rtol=1e-9)
    # Not reached: a result, with the F achieved.
    r = time_to_lethality([0, 60], [70.0, 70.0], 70.0, 7.5, 2.0)
    assert not r.reached and r.time_s is None
    assert_allclose(r.total_F_min, 1.0, rtol=1e-12)


def test_volume_average_log_reduction():
    # Invariants: a uniform field gives the single-point value; the integrated (survivor-averaged) log
    # reduction never exceeds the volume-mean one (Jensen's inequality) nor is below the least-treated cell.
    t = np.array([0.0, 60.0, 120.0])
    one = np.array([70.0, 70.0, 70.0])
    r = volume_average_log_reduction(t, np.column_stack([one, one]), [2.0, 1.0], 70.0, 7.5, 2.0 / 6.0)
    assert_allclose([r.mean_log_reduction, r.integrated_log_reduction], [6.0, 6.0], rtol=1e-12)
    field = np.column_stack([one, one - 5.0, one - 10.0])
    r = volume_average_log_reduction(t, field, [1.0, 1.0, 2.0], 70.0, 7.5, 2.0 / 6.0)
    assert r.minimum_log_reduction <= r.integrated_log_reduction <= r.mean_log_reduction
    # Volume weights: the mean equals the hand-weighted mean of the cell values.
    assert_allclose(r.mean_log_reduction, np.average(r.cell_log_reduction, weights=[1, 1, 2]), rtol=1e-12)


def test_bad_input_names_the_field():
    with pytest.raises(InvalidInputError, match="z_C"):
        f_value([0, 60], [70.0, 70.0], 70.0, 0.0)
    with pytest.raises(InvalidInputError, match="z_C"):
        f_value([0, 60], [70.0, 70.0], 70.0, -7.5)
    with pytest.raises(InvalidInputError, match="d_value_min"):
        log_reduction(2.0, 0.0)
    with pytest.raises(InvalidInputError, match="d_value_min"):
        log_reduction(2.0, -1.0)
    with pytest.raises(InvalidInputError, match="time_s"):
        f_value([0, 60, 30], [70.0, 70.0, 70.0], 70.0, 7.5)
    with pytest.raises(InvalidInputError, match="method"):
        f_value([0, 60], [70.0, 70.0], 70.0, 7.5, method="simpson")
    with pytest.raises(InvalidInputError, match="required_F_min"):
        time_to_lethality([0, 60], [70.0, 70.0], 70.0, 7.5, 0.0)
    with pytest.raises(InvalidInputError, match="cell_volume_m3"):
        volume_average_log_reduction([0, 60], [[70.0], [70.0]], [0.0], 70.0, 7.5, 1.0)


def test_every_preset_is_sound():
    # One registry: every z-value preset has a positive z, a source, and a D-value consistent with F / logs
    # (tabulated presets are checked row by row in test_lethality_tables.py).
    for name, p in Z_VALUE_PRESETS.items():
        assert p.name == name and p.z_C > 0 and p.source
        assert p.kind in ("safety", "quality")
        if p.required_F_min is not None and p.log_reductions:
            assert_allclose(log_reduction(p.required_F_min, p.d_value_min), p.log_reductions, rtol=1e-12)


temps = st.lists(st.floats(40, 130, allow_nan=False), min_size=2, max_size=10)


@settings(max_examples=50, deadline=None)
@given(temps, st.floats(1.0, 30.0))
def test_f_non_decreasing_in_time(T, z):
    t = np.arange(len(T), dtype=float) * 30.0
    for method in F_INTEGRATION_METHODS:
        F = f_value(t, T, 100.0, z, method=method)
        assert F[0] == 0.0
        assert np.all(np.diff(F) >= 0)


@settings(max_examples=50, deadline=None)
@given(temps, st.floats(0.0, 10.0), st.floats(1.0, 30.0))
def test_f_monotone_in_temperature(T, dT, z):
    t = np.arange(len(T), dtype=float) * 30.0
    low = f_value(t, T, 100.0, z)[-1]
    high = f_value(t, np.asarray(T) + dT, 100.0, z)[-1]
    assert high >= low * (1 - 1e-12)
    # Raising every temperature by dT multiplies F by exactly 10^(dT/z).
    assert_allclose(high, low * 10 ** (dT / z), rtol=1e-9)
    # Trapezoid ≥ exact (the lethal rate is convex in T, T linear in time).
    assert f_value(t, T, 100.0, z, method="trapezoid")[-1] >= low * (1 - 1e-12)
