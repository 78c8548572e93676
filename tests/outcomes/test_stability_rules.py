"""Stability-budget rules and the mean kinetic temperature of a plan.

Hand calculations on piecewise-linear histories (crossing times known exactly), Haynes' formula evaluated
directly, the pharmacopoeia's constants as read, and hypothesis for bad rule files.
"""

from __future__ import annotations

import copy
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.plan import load_plan, plan_from_dict, plan_from_toml, plan_to_toml
from procplan.files.rules import rule_from_dict, rule_to_dict
from procplan.outcomes import check_rule
from procplan.outcomes.cold_chain import MKT_DELTA_H_J_MOL, MKT_GAS_CONSTANT_J_MOLK
from procplan.run.engine import run_plan

BUDGET_RULE = {
    "name": "vial-budget",
    "source": "stability file of the test product",
    "kind": "stability-budget",
    "point": "surface",
    "budget": {"low_C": 2.0, "high_C": 8.0, "allowance_above_h": 24.0, "allowance_below_h": 1.0},
    "bands": [{"name": "never above 25 °C", "high_C": 25.0, "max_outside_min": 0.0}],
}


def test_budget_rule_round_trips():
    r = rule_from_dict(BUDGET_RULE)
    assert r.budget.allowance_above_h == 24.0 and r.budget.low_C == 2.0
    assert rule_from_dict(rule_to_dict(r)) == r


def test_budget_after_each_excursion_matches_a_hand_calculation():
    # Source: hand calculation on a piecewise-linear history (5 → 14 → 5 °C over 2 h, then 5 → −1 → 5 °C over
    # 2 h): above 8 °C while 5 + 9 t/3600 > 8, i.e. from 1200 s to 6000 s = 4800 s = 1.333 h; below 2 °C while
    # 5 − 6 (t − 7200)/3600 < 2, from 9000 s to 12 600 s = 1 h. With 6.5 h above spent before the plan:
    # 24 − 6.5 − 1.333 = 16.167 h left above; 1 − 1 = 0 h left below (exactly used: passes).
    rule = rule_from_dict(BUDGET_RULE)
    t = [0.0, 3600.0, 7200.0, 10800.0, 14400.0]
    temp = [5.0, 14.0, 5.0, -1.0, 5.0]
    chk = check_rule(rule, t, temp, budget_used_h=(6.5, 0.0))
    b = chk.budget
    assert_allclose([b.above_s, b.below_s], [4800.0, 3600.0], rtol=1e-12)
    ex_above, ex_below = b.excursions
    assert_allclose([ex_above.start_s, ex_above.end_s, ex_above.peak_C], [1200.0, 6000.0, 14.0], rtol=1e-12)
    assert_allclose(ex_above.remaining_above_h, 24.0 - 6.5 - 4800.0 / 3600.0, rtol=1e-12)
    assert_allclose(
        [ex_below.start_s, ex_below.end_s, ex_below.remaining_below_h], [9000.0, 12600.0, 0.0], atol=1e-9
    )
    assert chk.passed and b.passed


def test_budget_already_spent_fails_and_says_when():
    # Source: hand calculation: 23.5 h used before, 1.333 h in this history: the last 0.5 h of the allowance
    # runs out 1800 s into the excursion that starts at 1200 s, i.e. at 3000 s.
    rule = rule_from_dict(BUDGET_RULE)
    chk = check_rule(rule, [0.0, 3600.0, 7200.0], [5.0, 14.0, 5.0], budget_used_h=(23.5, 0.0))
    assert not chk.passed
    assert chk.budget.exhausted[0] == "above"
    assert_allclose(chk.budget.exhausted[2], 3000.0, rtol=1e-12)
    assert any("stability budget" in r for r in chk.reasons)
    over = check_rule(rule, [0.0, 3600.0], [5.0, 5.0], budget_used_h=(30.0, 0.0))
    assert not over.passed and "already used up" in over.budget.reason


def test_budget_rule_errors_name_their_fields():
    bad = copy.deepcopy(BUDGET_RULE)
    del bad["budget"]
    with pytest.raises(InvalidInputError, match="budget"):
        rule_from_dict(bad)
    other = copy.deepcopy(BUDGET_RULE)
    other["kind"] = "storage"
    with pytest.raises(InvalidInputError, match="budget"):
        rule_from_dict(other)
    swapped = copy.deepcopy(BUDGET_RULE)
    swapped["budget"].update(low_C=9.0)
    with pytest.raises(InvalidInputError, match="budget.high_C"):
        rule_from_dict(swapped)


@settings(max_examples=50, deadline=None)
@given(
    key=st.sampled_from(["low_C", "high_C", "allowance_above_h", "allowance_below_h", "colour"]),
    value=st.one_of(st.none(), st.text(max_size=4), st.floats(allow_nan=True), st.booleans(), st.integers()),
)
def test_bad_budget_values_are_refused_by_name(key, value):
    raw = copy.deepcopy(BUDGET_RULE)
    raw["budget"][key] = value
    try:
        r = rule_from_dict(raw)
    except InvalidInputError as exc:
        assert "budget." in str(exc)
        return
    b = r.budget
    assert b.low_C < b.high_C and b.allowance_above_h >= 0 and b.allowance_below_h >= 0


# --- mean kinetic temperature in plan checks -------------------------------------------------------------
def test_pharmacopoeia_constants_as_read():
    # Source: United States Pharmacopeia 29, <1160> (uspbpep.com/usp29/v29240/usp29nf24s0_c1160.html, read):
    # "ΔH is the heat of activation, which equals 83.144 kJ per mol ... R ... equals 8.3144 × 10⁻³ kJ per degree
    # per mol".
    assert MKT_DELTA_H_J_MOL == 83144.0 and MKT_GAS_CONSTANT_J_MOLK == 8.3144


PLAN = {
    "title": "vial on a bench",
    "product": {
        "name": "vial",
        "shape": "finite-cylinder",
        "diameter_mm": 22,
        "length_mm": 21,
        "category": "other",
        "fixed_properties": {"k_W_mK": 0.59, "rho_kg_m3": 1010, "cp_J_kgK": 4120},
    },
    "start": {"temperature_C": 5},
    "steps": [
        {"name": "bench", "h_W_m2K": 8, "medium_C": 21, "duration_min": 25},
        {"name": "cold room", "h_W_m2K": 10, "medium_C": 5, "duration_min": 120},
    ],
    "checks": {"mean_kinetic_point": "surface", "mean_kinetic_max_C": 8, "budget_used_above_h": 2},
}


def test_plan_checks_round_trip_and_refuse_bad_values():
    plan = plan_from_dict(PLAN)
    assert plan.checks.mean_kinetic_point == "surface" and plan.checks.budget_used_above_h == 2.0
    assert plan_from_toml(plan_to_toml(plan)) == plan
    for key, value in (
        ("mean_kinetic_point", "wall"),
        ("budget_used_above_h", -1),
        ("mean_kinetic_max_C", "x"),
    ):
        bad = copy.deepcopy(PLAN)
        bad["checks"][key] = value
        with pytest.raises(InvalidInputError, match=f"checks.{key}"):
            plan_from_dict(bad)


def test_plan_mean_kinetic_temperature_is_haynes_formula_on_the_history():
    # Source: Haynes (1971) / USP <1160>: T_MK = (ΔH/R)/(−ln(Σ w e^(−ΔH/RT)/Σ w)), evaluated directly in
    # kelvin with trapezoid weights of the run's own history times (independent plain sums).
    r = run_plan(plan_from_dict(PLAN))
    h = r.history
    t, temp = h["time_s"].to_numpy(), h["surface_C"].to_numpy() + 273.15
    w = np.zeros(t.size)
    w[:-1] += np.diff(t) / 2
    w[1:] += np.diff(t) / 2
    direct = 10000.0 / (-math.log(float(np.sum(w * np.exp(-10000.0 / temp)) / w.sum()))) - 273.15
    mk = r.outcomes.mean_kinetic
    assert_allclose(mk.mean_kinetic_C, direct, rtol=1e-10)
    # Invariants: between the mean and the maximum of the history (Jensen), judged against the limit.
    assert float(np.sum(w * temp) / w.sum()) - 273.15 <= mk.mean_kinetic_C <= h["surface_C"].max()
    assert mk.passed == (mk.mean_kinetic_C <= 8.0)


def test_demo_vial_excursion_uses_the_products_budget():
    lib = load_library()
    plan = load_plan(lib.root / "plans" / "vial-excursion.toml", library=lib)
    r = run_plan(plan, library=lib)
    rc = r.outcomes.rule_check
    b = rc.budget
    assert rc.rule_name == "vaccine-vial-10ml-stability" and b is not None
    # Invariants: what the excursions used plus what is left is the allowance; the plan carries 6.5 h.
    assert_allclose(b.remaining_above_h + 6.5 + b.above_s / 3600.0, 24.0, rtol=1e-12)
    assert b.above_s > 0 and len(b.excursions) >= 1
    assert r.outcomes.mean_kinetic is not None
    text = __import__("procplan.output.report", fromlist=["summary_text"]).summary_text(r)
    assert "stability budget" in text and "mean kinetic temperature" in text
