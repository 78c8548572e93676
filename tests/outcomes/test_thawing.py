"""Thawing and tempering: Plank's equation adapted to thawing, the engine's thawing time beside it, the
energy balance through the thawing plateau, and the rule that limits the time the surface spends above a
temperature (US Food Code §3-501.13(B)) against hand calculations.
"""

from __future__ import annotations

import copy

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.plan import load_plan, plan_from_dict
from procplan.outcomes import check_rule, freezing_time_plank, thawing_time_plank
from procplan.run.engine import run_plan

# A slab of measured properties with a latent heat (a lean fish or meat, water-like): thawed k 0.5 W/mK and
# cp 3600 J/kgK, frozen k 1.5 W/mK and cp 1800 J/kgK, L 260 kJ/kg at T_f = -1 °C.
SLAB = {
    "name": "frozen slab",
    "shape": "slab",
    "thickness_mm": 40,
    "category": "other",
    "fixed_properties": {
        "k_W_mK": 0.5,
        "rho_kg_m3": 1050,
        "cp_J_kgK": 3600,
        "latent_J_kg": 260000,
        "freezing_C": -1.0,
        "frozen_k_W_mK": 1.5,
        "frozen_cp_J_kgK": 1800,
    },
}


def _thaw_plan(start_C: float, medium_C: float, h: float, stop_C: float) -> dict:
    return {
        "title": "slab thaw",
        "product": copy.deepcopy(SLAB),
        "start": {"temperature_C": start_C},
        "steps": [
            {
                "name": "thaw",
                "h_W_m2K": h,
                "medium_C": medium_C,
                "stop_when_core_C": stop_C,
                "duration_min": 2880,
            }
        ],
        "solver": "finite-volume",
    }


def test_plank_thawing_is_plank_freezing_with_the_flow_reversed():
    # Source: Plank (1913); the thawing form only exchanges T_f − T_a for T_a − T_f and k_f for k_u
    # (Góral et al. 2016, Food Technol. Biotechnol. 54(1):3–12, review of Plank-type thawing models, from
    # memory for the exact form). Independent evaluation through the freezing function.
    for shape in ("slab", "cylinder", "sphere"):
        thaw = thawing_time_plank(shape, 0.05, 1000.0, 250e3, -1.0, 9.0, 150.0, 0.5)
        freeze = freezing_time_plank(shape, 0.05, 1000.0, 250e3, -1.0, -11.0, 150.0, 0.5)
        assert_allclose(thaw, freeze, rtol=1e-14)


@pytest.mark.parametrize("medium_C, h", [(3.0, 200.0), (5.0, 500.0), (9.0, 200.0), (4.0, 50.0)])
def test_engine_thawing_time_against_plank(medium_C, h):
    # Source: Plank's equation is the quasi-steady limit of the thawing problem, exact as the Stefan number
    # Ste = c_u (T_a − T_f)/L → 0. Cleland, Cleland, Earle & Byrne (1986), Int. J. Refrig. 9:220 (abstract
    # read), report their Plank-based thawing formulae within ±10 % of 104 measured thawing times (95 %
    # confidence): the numerical time to a thawed centre (core at T_f) must lie within 10 % of Plank's.
    # Plank's model melts at one temperature; the measured properties here melt over the 0.5 K band below
    # T_f (PropertyTable.constant), so Plank at the band's centre (T_f − 0.25 K) is the like-for-like limit:
    # within 4 %, the rest being the thawed layer's sensible heat (Ste 0.06–0.14). The frozen k equals the
    # thawed one, as Plank's isothermal frozen core makes it irrelevant. Measured ratios 0.92–1.00 against
    # T_f, 0.98–1.03 against the band's centre.
    raw = _thaw_plan(-1.6, medium_C, h, -1.0)
    raw["product"]["fixed_properties"]["frozen_k_W_mK"] = 0.5
    r = run_plan(plan_from_dict(raw), n_nodes=41)
    t_engine = r.steps[0].stop_time_s
    assert t_engine is not None
    t_plank = thawing_time_plank("slab", 0.04, 1050.0, 260e3, -1.0, medium_C, h, 0.5)
    t_band = thawing_time_plank("slab", 0.04, 1050.0, 260e3, -1.25, medium_C, h, 0.5)
    assert abs(t_engine / t_plank - 1.0) <= 0.10, t_engine / t_plank
    assert abs(t_engine / t_band - 1.0) <= 0.04, t_engine / t_band
    th = r.outcomes.thawing
    assert th is not None and th.thawed and th.target_C == -1.0
    # the outcome takes the latent heat from the enthalpy table (start to T_f less the frozen sensible heat):
    # the band's extra sensible heat, 0.5 K × (3600 − 1800)/2 J/kgK = 450 J/kg, is 0.2 % of L
    assert_allclose(th.plank_s, t_plank, rtol=0.005)
    # the stop lands within 1e-4 K past T_f; the history's linear crossing lies a fraction of a second earlier
    assert_allclose(th.from_history.time_s, t_engine, rtol=1e-4)


def test_energy_balance_through_the_thawing_plateau():
    # Independent: heat through the surface = enthalpy change of the piece (first law); 1 % is the engine's
    # own rerun threshold. From −20 °C through the plateau to a thawed centre at +2 °C in 10 °C water.
    r = run_plan(plan_from_dict(_thaw_plan(-20.0, 10.0, 300.0, 2.0)), n_nodes=31)
    assert r.steps[0].stopped
    assert r.outcomes.energy_balance < 0.01
    assert r.steps[0].energy_balance_error < 0.01
    # the plateau: the centre lingers near T_f while the latent heat is absorbed
    h = r.history
    near = h[(h["core_C"] > -1.6) & (h["core_C"] < -0.9)]
    assert near["time_s"].iloc[-1] - near["time_s"].iloc[0] > 0.3 * r.steps[0].stop_time_s


def test_no_freezing_outcome_for_a_product_that_starts_frozen():
    r = run_plan(plan_from_dict(_thaw_plan(-20.0, 10.0, 300.0, 2.0)), n_nodes=21)
    assert r.outcomes.freezing is None and r.outcomes.thawing is not None


@settings(max_examples=60, deadline=None)
@given(
    medium=st.floats(-50.0, 50.0),
    h=st.one_of(st.floats(-10.0, 1000.0), st.just(float("nan"))),
    k=st.floats(-1.0, 5.0),
    length=st.floats(-0.1, 0.5),
)
def test_plank_thawing_refuses_bad_inputs_by_name(medium, h, k, length):
    try:
        t = thawing_time_plank("slab", length, 1000.0, 250e3, -1.0, medium, h, k)
    except InvalidInputError as exc:
        assert exc.field in ("medium_C", "h_W_m2K", "k_thawed_W_mK", "length_m")
        return
    assert medium > -1.0 and h > 0 and k > 0 and length > 0 and t > 0


# --- the surface-time rule ------------------------------------------------------------------------------
def _food_code_thawing():
    return load_library().rules["us-food-code-thawing"]


def test_food_code_thawing_rule_as_published():
    # Source: US FDA Food Code (2009) §3-501.13(B)(4), as adopted in WAC 246-215-03510 (read): thawed portions
    # of raw animal food "above 41°F (5°C) for more than four hours" are not allowed.
    rule = _food_code_thawing()
    assert rule.kind == "thawing" and rule.point == "surface" and rule.confirmed
    (band,) = rule.bands
    assert band.low_C == 5.0 and band.high_C is None and band.at_most_min == 240.0
    assert band.low_published.value_F == 41.0


def test_surface_time_above_five_against_a_hand_calculation():
    # Source: hand calculation on a piecewise-linear surface history: −20 → 10 °C over the first hour crosses
    # 5 °C at 3000 s; 10 °C held to 10 800 s; 10 → 2 °C over the next hour crosses 5 °C at 10 800 + 2250 s.
    # Time above 5 °C = 13 050 − 3000 = 10 050 s = 167.5 min: within 240 min, margin 72.5 min.
    rule = _food_code_thawing()
    t = [0.0, 3600.0, 10800.0, 14400.0]
    chk = check_rule(rule, t, [-20.0, 10.0, 10.0, 2.0])
    (b,) = chk.bands
    assert_allclose(b.inside_min, 167.5, rtol=1e-12)
    assert_allclose(b.margin_min, 72.5, rtol=1e-12)
    assert chk.passed
    # held two hours longer at 10 °C: 287.5 min above 5 °C, over the limit by 47.5 min
    late = check_rule(rule, [0.0, 3600.0, 18000.0, 21600.0], [-20.0, 10.0, 10.0, 2.0])
    assert not late.passed
    assert_allclose(late.bands[0].inside_min, 287.5, rtol=1e-12)
    assert "at most 240 min" in late.reasons[0]


def test_demo_cod_block_plan():
    lib = load_library()
    plan = load_plan(lib.root / "plans" / "cod-block-water-thaw.toml", library=lib)
    r = run_plan(plan, library=lib)
    oc = r.outcomes
    th = oc.thawing
    assert th is not None and th.step == "running-water thaw" and not th.thawed  # tempered to −1.5 °C
    assert th.from_history.reached and th.plank_s is not None
    assert oc.freezing is None
    assert oc.energy_balance < 0.01
    # Independent: the rule's time above 5 °C equals a direct sum over the surface history, each interval
    # cut at its crossing of 5 °C (linear between samples).
    h = r.history
    t, s = h["time_s"].to_numpy(), h["surface_C"].to_numpy()
    above = 0.0
    for i in range(t.size - 1):
        a, b = s[i] - 5.0, s[i + 1] - 5.0
        dt = t[i + 1] - t[i]
        if a >= 0 and b >= 0:
            above += dt
        elif a * b < 0:
            above += dt * (max(a, b) / abs(b - a))
    assert_allclose(oc.rule_check.bands[0].inside_min, above / 60.0, rtol=1e-9)
    assert np.isfinite(th.plank_s)
