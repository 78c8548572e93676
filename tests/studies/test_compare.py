"""Scenario comparison: table values against closed-form answers and direct runs, ranking, variants."""

from __future__ import annotations

import math
from dataclasses import replace

import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.run.engine import run_plan
from procplan.studies.compare import compare_plans, variants_of
from procplan.studies.metrics import CRITERIA, result_metrics

from .conftest import cylinder_plan, lumped_sphere_plan


def test_table_matches_closed_form_lumped_time_and_energy():
    # Source: Incropera et al., 7th ed., eq. 5.5 (time) and eq. 5.8 form Q = rho V c (T_i - T) (energy).
    # Tolerance: O(Bi) ≈ 1e-5 series-vs-lumped, and the engine's stop root at 1e-6 of the step.
    base = lumped_sphere_plan(20.0)
    plans = [base, *variants_of(base, [{"h_W_m2K": 40.0}, {"name": "big", "diameter_mm": 30}])]
    cmp_ = compare_plans(plans, criterion="time")
    tab = cmp_.table
    assert list(tab.index) == ["ball", "ball [h_W_m2K=40]", "ball [big]"]
    for name, h, d in (("ball", 20.0, 0.02), ("ball [h_W_m2K=40]", 40.0, 0.02), ("ball [big]", 20.0, 0.03)):
        t = 8500.0 * (d / 6.0) * 400.0 / h * math.log(60.0 / 10.0) / 60.0
        assert_allclose(tab.loc[name, "time_to_target_min"], t, rtol=5e-5)
        q = 8500.0 * math.pi * d**3 / 6.0 * 400.0 * (80.0 - 30.0) / 3.6e6  # cooled to a uniform 30 °C
        assert_allclose(tab.loc[name, "energy_removed_kWh"], q, rtol=1e-3)
    assert cmp_.ranking == ("ball [h_W_m2K=40]", "ball", "ball [big]") and cmp_.best == "ball [h_W_m2K=40]"
    assert tab.loc["ball [big]", "rank"] == 3
    assert set(cmp_.histories()["scenario"]) == set(tab.index)


def test_rows_equal_direct_runs_and_margin_ranking(rules_library):
    base = cylinder_plan("us-food-code-two-stage").with_step(0, stop_when_core_C=4.0)
    plans = variants_of(base, [{"h_W_m2K": 15.0}, {"h_W_m2K": 30.0}, {"h_W_m2K": 60.0}])
    cmp_ = compare_plans(plans, library=rules_library, criterion="margin")
    for p in plans:
        direct = result_metrics(run_plan(p, library=rules_library))
        row = cmp_.table.loc[p.title]
        assert row["time_to_target_min"] == pytest.approx(direct["time_to_target_min"])
        assert row["rule_margin_min"] == pytest.approx(direct["rule_margin_min"])
    assert cmp_.ranking[0].endswith("[h_W_m2K=60]")
    energy = compare_plans(plans, library=rules_library, criterion="energy")
    e = energy.table["electricity_kWh"] + energy.table["energy_added_kWh"]
    assert list(energy.ranking) == list(e.sort_values(kind="mergesort").index)


def test_variants_change_what_they_say():
    base = cylinder_plan()
    v = variants_of(
        base,
        [
            {"step": 0, "duration_min": 90, "stop_when_core_C": 8},
            {"start_C": 60, "margin_percent": 15},
            {"product": replace(base.product, name="other")},
        ],
    )
    assert v[0].steps[0].duration_s == 5400.0 and v[0].steps[0].stop_when_core_C == 8.0
    assert v[1].start_temperature_C == 60.0 and v[1].checks.margin_percent == 15.0
    assert v[2].product.name == "other"
    for bad in ({"fan": 1}, {"step": 4}, {"settings": {"air_C": 1}}, {"h_W_m2K": -2}, {"product": "nope"}):
        with pytest.raises(InvalidInputError):
            variants_of(base, [bad])
    with pytest.raises(InvalidInputError):
        compare_plans([base], criterion="cheapest")
    with pytest.raises(InvalidInputError):
        compare_plans([base, base], names=["a", "a"])
    assert set(CRITERIA) == {"time", "energy", "margin"}
