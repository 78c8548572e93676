"""Required setting: closed-form lumped answers (Incropera eq. 5.5), verdict boundaries and edge cases."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.studies.inverse import GOALS, PARAMETERS, required_setting

from .conftest import cylinder_plan, lumped_sphere_plan

RHO, CP, D = 8500.0, 400.0, 0.02
V_OVER_A = D / 6.0  # sphere: V/A = D/6


def test_h_for_target_time_matches_incropera_eq_5_5_with_margin():
    # Source: Incropera et al., 7th ed., eq. 5.5, t = (rho V c/(h A)) ln(theta_i/theta), solved for h.
    # The site's margin of 20 % leaves a predicted time of X/1.2. Tolerance: the engine solves the sphere's
    # eigen-series, which departs from the lumped model by O(Bi) = 1e-5 relative at Bi = h R/k ≈ 3e-5; the
    # root is found to xtol 1e-7 W/m²K.
    plan = lumped_sphere_plan(margin_percent=20.0)
    x_min = 12.0
    t_pred = 60.0 * x_min / 1.2
    h_exact = RHO * V_OVER_A * CP * math.log((80.0 - 20.0) / (30.0 - 20.0)) / t_pred
    r = required_setting(
        plan, step_index=0, parameter="h_W_m2K", goal="time", target_min=x_min, bounds=(5.0, 200.0), xtol=1e-7
    )
    assert r.achievable and r.confirmed and r.passes == "above"
    assert_allclose(r.value, h_exact, rtol=2e-5)
    # the stored confirming run is the plan with the answer, and its plan time is X to within the tolerance
    assert r.plan.steps[0].h_W_m2K == r.value
    from procplan.studies.metrics import result_metrics

    assert_allclose(result_metrics(r.result)["plan_time_min"], x_min, rtol=2e-5)


def test_medium_temperature_for_target_time_matches_closed_form():
    # Source: Incropera et al., 7th ed., eq. 5.6 solved for T_inf: with e = exp(-t/tau),
    # T_inf = (T - T_i e)/(1 - e). Tolerance: the series departs from the lumped model by O(Bi) = 4e-5
    # relative in time, which moves T_inf by about Bi (T - T_inf) ≈ 5e-4 K; 1e-3 K allowed.
    h = 40.0
    plan = lumped_sphere_plan(h)
    x_min = 8.0
    tau = RHO * V_OVER_A * CP / h
    e = math.exp(-60.0 * x_min / tau)
    t_inf = (30.0 - 80.0 * e) / (1.0 - e)
    r = required_setting(
        plan,
        step_index=0,
        parameter="medium_C",
        goal="time",
        target_min=x_min,
        bounds=(-30.0, 25.0),
        xtol=1e-7,
    )
    assert r.achievable and r.confirmed and r.passes == "below"
    assert_allclose(r.value, t_inf, atol=1e-3)


def test_not_achievable_reports_best_value_and_everywhere_reports_least_demanding_end():
    plan = lumped_sphere_plan()
    r = required_setting(
        plan, step_index=0, parameter="h_W_m2K", goal="time", target_min=5.0, bounds=(1.0, 5.0)
    )
    assert not r.achievable and r.value is None and r.passes == "nowhere"
    assert r.best_value == 5.0 and r.best_measure < 0 and not r.confirmed
    assert "not achievable" in r.message
    r2 = required_setting(
        plan, step_index=0, parameter="h_W_m2K", goal="time", target_min=60.0, bounds=(100.0, 200.0)
    )
    assert r2.achievable and r2.passes == "everywhere" and r2.value == 100.0 and r2.confirmed


def test_rule_goal_boundary_flips_the_verdict(rules_library):
    # Invariant: just on the passing side of the answer the rule passes; a little beyond, it fails.
    plan = cylinder_plan("us-food-code-two-stage").with_step(0, stop_when_core_C=4.0)
    r = required_setting(
        plan,
        step_index=0,
        parameter="h_W_m2K",
        goal="rule",
        library=rules_library,
        bounds=(3.0, 60.0),
        xtol=1e-4,
    )
    assert r.achievable and r.confirmed and r.passes == "above"
    assert r.result.outcomes.rule_check.passed
    from procplan.run.engine import run_plan

    below = run_plan(plan.with_step(0, h_W_m2K=r.value - 5e-3), library=rules_library)
    assert not below.outcomes.rule_check.passed
    assert_allclose(r.result.outcomes.rule_check.margin_min, 0.0, atol=0.05)


def test_lethality_goal_on_hold_time_meets_required_f():
    from procplan.model import Checks, LethalityCheck

    # A thin slab heated in water at 75 °C: the hold that just gives Listeria 6-log (F70 = 2 min).
    base = lumped_sphere_plan(200.0)
    plan = base.with_step(0, medium_C=75.0, stop_when_core_C=None, duration_s=600.0)
    plan = type(plan)(
        plan.title,
        plan.product,
        20.0,
        plan.steps,
        checks=Checks(lethality=LethalityCheck(preset="listeria-6log")),
    )
    r = required_setting(
        plan, step_index=0, parameter="hold_min", goal="lethality", bounds=(1.0, 30.0), xtol=1e-6
    )
    assert r.achievable and r.confirmed and r.passes == "above"
    # Source: Mackey & Bratchell (1989) via the preset: 2 min at 70 °C; the confirming run's F equals it.
    assert_allclose(r.result.outcomes.lethality.total_F_min, 2.0, rtol=1e-4)


@pytest.mark.parametrize("parameter", sorted(PARAMETERS))
def test_every_parameter_applies(parameter):
    plan = lumped_sphere_plan()
    spec = PARAMETERS[parameter]
    if parameter in ("speed_m_s", "loading_medium_C"):  # machine-only parameters
        with pytest.raises(InvalidInputError):
            spec.default_bounds(plan, 0, None)
        return
    lo, hi = spec.default_bounds(plan, 0, None)
    assert lo < hi
    p2 = spec.apply(plan, 0, 0.5 * (lo + hi) if parameter != "medium_C" else 10.0, None)
    assert p2 != plan


def test_invalid_inputs_raise_named_errors():
    plan = lumped_sphere_plan()
    with pytest.raises(InvalidInputError, match="parameter"):
        required_setting(plan, step_index=0, parameter="fan", goal="time", target_min=5)
    with pytest.raises(InvalidInputError, match="target_min"):
        required_setting(plan, step_index=0, parameter="h_W_m2K", goal="time")
    with pytest.raises(InvalidInputError, match="step_index"):
        required_setting(plan, step_index=3, parameter="h_W_m2K", goal="time", target_min=5)
    with pytest.raises(InvalidInputError, match="bounds"):
        required_setting(plan, step_index=0, parameter="h_W_m2K", goal="time", target_min=5, bounds=(5, 1))
    with pytest.raises(InvalidInputError, match="rule"):
        required_setting(plan, step_index=0, parameter="h_W_m2K", goal="rule", bounds=(5, 10))
    assert set(GOALS) == {"time", "rule", "lethality"}
    assert np.isfinite(PARAMETERS["h_W_m2K"].default_bounds(plan, 0, None)[1])
