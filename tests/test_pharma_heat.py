"""Pharma heat processes: products with a stated property range, hot air, dry-heat and depyrogenation presets.

Checks against sources outside the project: Incropera's air table and Sutherland's law at oven and tunnel
temperatures, Tsuji & Harrison's (1978) measured D-values of endotoxin, the USP F_H formula as worked in a
published example, and an energy balance of the demo tunnel plan.
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
from procplan.outcomes import LETHALITY_PRESETS, f_value
from procplan.run.engine import run_plan
from procplan.surface import media
from procplan.surface.layers import h_radiation_linearised

GLASS = {
    "name": "glass sheet",
    "shape": "slab",
    "thickness_mm": 1.0,
    "length_mm": 70,
    "width_mm": 50,
    "category": "other",
    # Source: Incropera et al., 7th ed., Table A.3, Pyrex glass at 300 K (from memory): k 1.4 W/mK,
    # rho 2225 kg/m³, cp 835 J/kgK.
    "fixed_properties": {"k_W_mK": 1.4, "rho_kg_m3": 2225, "cp_J_kgK": 835, "valid_max_C": 400},
}
OVEN_PLAN = {
    "title": "dry-heat oven",
    "product": GLASS,
    "start": {"temperature_C": 25},
    "steps": [{"name": "oven", "h_W_m2K": 40, "medium_C": 180, "duration_min": 60}],
}


# --- hot air ---------------------------------------------------------------------------------------------
# Source: Incropera et al., 7th ed., Table A.4, air at 1 atm (from memory): T [K], k [W/mK], ν [m²/s], Pr.
INCROPERA_A4_HOT = [(500.0, 40.7e-3, 38.79e-6, 0.684), (600.0, 46.9e-3, 52.69e-6, 0.685)]


@pytest.mark.parametrize("T_K, k, nu, pr", INCROPERA_A4_HOT)
def test_hot_air_against_incropera_table_a4(T_K, k, nu, pr):
    # Tolerance 3 %: the table rests on older compilations than CoolProp's Lemmon & Jacobsen (2004) air;
    # measured differences at 500 and 600 K are k −1.9 %, ν −1.0…−0.7 %, Pr +2.1…+2.6 %.
    p = media.air_properties(T_K - 273.15)
    assert_allclose(p.k_W_mK, k, rtol=0.03)
    assert_allclose(p.nu_m2_s, nu, rtol=0.03)
    assert_allclose(p.pr, pr, rtol=0.03)


@pytest.mark.parametrize("t_C", [160.0, 250.0, 350.0, 400.0])
def test_hot_air_viscosity_against_sutherland(t_C):
    # Source: Sutherland's law for air, μ = μ0 (T/T0)^1.5 (T0 + S)/(T + S), μ0 = 1.716e-5 Pa s at 273.15 K,
    # S = 110.4 K (White, Viscous Fluid Flow, 3rd ed., Table 1-2, from memory); White gives its error as
    # about ±2 % over 170–1900 K. An independent formula for the dry-heat and tunnel range. Tolerance 3 %:
    # Sutherland runs low at high temperature (at 600 K it gives 3.02e-5 Pa s where Table A.4 gives 3.058e-5);
    # measured differences to CoolProp grow from 1.1 % at 160 °C to 2.5 % at 400 °C.
    T = t_C + 273.15
    mu = 1.716e-5 * (T / 273.15) ** 1.5 * (273.15 + 110.4) / (T + 110.4)
    assert_allclose(media.air_properties(t_C).mu_Pa_s, mu, rtol=0.03)


def test_radiation_at_tunnel_temperatures_is_the_linearised_stefan_boltzmann_law():
    # Source: Incropera et al., 7th ed., eq. 1.9: q = ε σ (Ts⁴ − Tsur⁴) = h_r (Ts − Tsur). Direct evaluation
    # for a glass surface at 250 °C in a 320 °C hot zone, ε 0.92.
    ts, tsur = 250.0 + 273.15, 320.0 + 273.15
    q = 0.92 * 5.670374419e-8 * (ts**4 - tsur**4)
    assert_allclose(h_radiation_linearised(0.92, 250.0, 320.0) * (250.0 - 320.0), q, rtol=1e-9)


def test_air_beyond_the_process_range_names_the_range():
    with pytest.raises(InvalidInputError, match=r"air_C = 450.0: allowed \[-100, 400\]"):
        media.air_properties(450.0)


# --- products with a stated range -----------------------------------------------------------------------
def test_glass_plan_accepts_tunnel_temperatures_and_round_trips():
    raw = copy.deepcopy(OVEN_PLAN)
    raw["start"]["temperature_C"] = 300
    raw["steps"][0].update(medium_C=350, stop_when_core_C=340)
    plan = plan_from_dict(raw)
    assert plan.product.fixed_properties.temperature_range_C == (-40.0, 400.0)
    assert plan_from_toml(plan_to_toml(plan)) == plan


def test_composition_products_keep_the_food_model_range():
    raw = copy.deepcopy(OVEN_PLAN)
    raw["product"] = {
        "name": "food",
        "shape": "slab",
        "thickness_mm": 20,
        "composition": {
            "water": 0.75,
            "protein": 0.2,
            "fat": 0.04,
            "carbohydrate": 0.0,
            "fiber": 0.0,
            "ash": 0.01,
        },
    }
    raw["start"]["temperature_C"] = 160
    with pytest.raises(InvalidInputError) as exc:
        plan_from_dict(raw)
    assert "start.temperature_C" in str(exc.value) and "150" in str(exc.value)


def test_start_above_the_stated_range_names_field_and_range():
    raw = copy.deepcopy(OVEN_PLAN)
    raw["start"]["temperature_C"] = 420
    with pytest.raises(InvalidInputError) as exc:
        plan_from_dict(raw)
    text = str(exc.value)
    assert "start.temperature_C" in text and "400" in text and "valid_max_C" in text


def test_fixed_properties_without_a_range_keep_the_food_range():
    raw = copy.deepcopy(OVEN_PLAN)
    del raw["product"]["fixed_properties"]["valid_max_C"]
    raw["start"]["temperature_C"] = 200
    with pytest.raises(InvalidInputError, match="start.temperature_C"):
        plan_from_dict(raw)


@settings(max_examples=40, deadline=None)
@given(
    lo=st.one_of(st.none(), st.floats(-300.0, 1200.0), st.text(max_size=3)),
    hi=st.one_of(st.none(), st.floats(-300.0, 1200.0), st.booleans()),
)
def test_bad_stated_ranges_are_refused_by_name(lo, hi):
    raw = copy.deepcopy(OVEN_PLAN)
    fp = raw["product"]["fixed_properties"]
    fp.pop("valid_max_C")
    if lo is not None:
        fp["valid_min_C"] = lo
    if hi is not None:
        fp["valid_max_C"] = hi
    try:
        plan = plan_from_dict(raw)
    except InvalidInputError as exc:
        assert "valid_m" in str(exc) or "start.temperature_C" in str(exc) or "steps[0]" in str(exc)
        return
    low, high = plan.product.fixed_properties.temperature_range_C
    assert -200.0 <= low <= 25.0 <= high <= 1000.0 and high - low >= 10.0


def test_oven_run_balances_energy_and_ends_at_the_lumped_solution():
    # Source: Incropera et al., 7th ed., eq. 5.6 (lumped capacitance, Bi = 40 × 0.5 mm / 1.4 = 0.014 < 0.1):
    # T = T∞ + (Ti − T∞) exp(−h t / (rho cp L)), L = V/A = 0.5 mm. Tolerance 0.5 K: Bi 0.014 leaves a
    # surface-to-centre difference far below it.
    plan = plan_from_dict(OVEN_PLAN)
    r = run_plan(plan)
    t = 300.0
    expected = 180.0 + (25.0 - 180.0) * math.exp(-40.0 * t / (2225.0 * 835.0 * 0.0005))
    h = r.history
    got = float(np.interp(t, h["time_s"], h["core_C"]))
    assert abs(got - expected) < 0.5
    assert r.outcomes.energy_balance < 0.01
    assert not any("boils" in w for w in r.warnings)


# --- presets ----------------------------------------------------------------------------------------------
# Source: Tsuji, K. & Harrison, S.J. (1978), Appl. Environ. Microbiol. 36(5):710–714, abstract: D3 values of
# E. coli lipopolysaccharide at 170, 190, 210, 230, 250 °C = 251, 99.4, 33.3, 12.3, 4.99 min; z 46.4.
TSUJI_D = [(170.0, 251.0), (190.0, 99.4), (210.0, 33.3), (230.0, 12.3), (250.0, 4.99)]


@pytest.mark.parametrize("t_C, d_min", TSUJI_D)
def test_depyrogenation_preset_reproduces_the_measured_d_values(t_C, d_min):
    # D(T) = D250 · 10^((250 − T)/z) against each measured D. Tolerance 10 %: the published z is a fit to the
    # five D-values, which scatter about it by −5…+10 % (210 and 230 °C lie furthest).
    p = LETHALITY_PRESETS["depyrogenation-3log"]
    assert_allclose(p.d_value_min * 10.0 ** ((p.reference_C - t_C) / p.z_C), d_min, rtol=0.10)
    assert p.d_value_min == pytest.approx(4.99) and p.log_reductions == 3.0 and p.reference_C == 250.0


def test_depyrogenation_preset_time_at_the_reference():
    # Source: Tsuji & Harrison (1978): 3 log reductions at 250 °C take 3 × D250 = 14.97 min.
    assert_allclose(LETHALITY_PRESETS["depyrogenation-3log"].equivalent_time_min(250.0), 14.97, rtol=1e-12)


def test_dry_heat_preset_is_two_hours_at_160_c():
    # Source: USP <1229.8> (as quoted in a LearnGxP community thread): F_H = Δt Σ 10^((T − 170)/20);
    # the pharmacopoeias' reference dry-heat cycle 160 °C for 2 h (European Pharmacopoeia 5.1.1, from memory).
    p = LETHALITY_PRESETS["dry-heat-fh"]
    assert (p.reference_C, p.z_C) == (170.0, 20.0)
    assert_allclose(p.equivalent_time_min(160.0), 120.0, rtol=1e-12)
    assert not p.confirmed  # the requirement was not read in the pharmacopoeia


def test_dry_heat_f_h_matches_the_published_worked_example():
    # Source: LearnGxP community thread "Performance qualification of dry heat sterilization" applying
    # USP <1229.8>: three 10-min readings at 180 °C give F_H = 10 × 3 × 3.162 = 94.87 min.
    p = LETHALITY_PRESETS["dry-heat-fh"]
    f = f_value([0.0, 1800.0], [180.0, 180.0], p.reference_C, p.z_C)[-1]
    assert_allclose(f, 94.868, rtol=1e-4)


# --- the demo tunnel ------------------------------------------------------------------------------------
def test_demo_depyrogenation_plan_runs_and_reaches_three_logs():
    lib = load_library()
    plan = load_plan(lib.root / "plans" / "vial-depyrogenation.toml", library=lib)
    r = run_plan(plan, library=lib)
    oc = r.outcomes
    # Invariants: the glass never passes the hot-zone air, the energy balance closes, the preset is applied.
    assert r.history["core_C"].max() <= 320.0 + 1e-6
    assert oc.energy_balance < 0.01
    assert oc.lethality.name == "depyrogenation-3log" and oc.lethality.passed
    assert oc.quality is None  # no food cook value on glass
    # Declared "about 7.8 g": 70 × 50 × 1 mm of glass at 2225 kg/m³ = 7.79 g.
    assert r.piece_mass_kg == pytest.approx(0.070 * 0.050 * 0.001 * 2225.0, rel=1e-9)
