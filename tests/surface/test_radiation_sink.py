"""Radiation to surroundings at another temperature than the air: the product exchanges heat with both.

The surface balance is h_c (T_air − T_s) + h_r (T_surr − T_s); the step runs with h = h_c + h_r towards the
sink temperature (h_c T_air + h_r T_surr)/(h_c + h_r), then packaging in series.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

from procplan.files.library import load_library
from procplan.files.plan import plan_from_dict
from procplan.run.engine import run_plan
from procplan.surface.layers import STEFAN_BOLTZMANN_W_M2K4, ZERO_CELSIUS_K

FIXED = {"k_W_mK": 0.5, "rho_kg_m3": 1050.0, "cp_J_kgK": 3600.0}
H_C, EPS, T_AIR, T_SURR = 5.0, 0.9, 20.0, 200.0


def slab_plan(hours: float, **step_extra) -> dict:
    step = {"name": "radiant", "h_W_m2K": H_C, "medium_C": T_AIR, "duration_min": hours * 60.0, **step_extra}
    return {
        "title": "slab facing hot walls",
        "product": {"name": "slab", "shape": "slab", "thickness_mm": 10, "fixed_properties": FIXED},
        "start": {"temperature_C": 19.0},
        "steps": [step],
    }


def steady_surface_C(h_c: float, eps: float, t_air_C: float, t_surr_C: float) -> float:
    """Root of the quartic surface balance h_c (T_air − T_s) + ε σ (T_surr⁴ − T_s⁴) = 0, no linearisation."""
    k = ZERO_CELSIUS_K
    ta, tsur = t_air_C + k, t_surr_C + k

    def balance(ts: float) -> float:
        return h_c * (ta - ts) + eps * STEFAN_BOLTZMANN_W_M2K4 * (tsur**4 - ts**4)

    return brentq(balance, min(ta, tsur), max(ta, tsur), xtol=1e-12) - k


@pytest.mark.parametrize("solver", ["exact", "finite-volume"])
def test_slab_in_cool_air_facing_hot_walls_settles_at_the_surface_balance(solver):
    # Source: Incropera et al., 7th ed., eq. 1.10 and §1.2.3 (surface energy balance with convection to the air
    # and radiation exchange with large surroundings at another temperature), solved here as the quartic.
    expected = steady_surface_C(H_C, EPS, T_AIR, T_SURR)
    assert 150.0 < expected < 180.0  # far from the air temperature: the walls dominate
    plan = plan_from_dict(slab_plan(72.0, emissivity=EPS, surroundings_C=T_SURR))
    res = run_plan(plan, solver=solver)
    last = res.history.iloc[-1]
    assert last["surface_C"] == pytest.approx(expected, abs=0.1)
    assert last["core_C"] == pytest.approx(expected, abs=0.1)
    sink = res.steps[0].surface
    assert sink.fluid_C == (T_AIR,)
    assert T_AIR < sink.medium_C[0] < T_SURR


def test_heat_into_the_product_is_convection_plus_radiation():
    # Independent method: the product's enthalpy change against h_c (T_air − T_s) + h_r (T_surr − T_s)
    # integrated over the surface-temperature history with the step's own h_r.
    plan = plan_from_dict(slab_plan(1.0, emissivity=EPS, surroundings_C=T_SURR))
    res = run_plan(plan, solver="finite-volume")
    step = res.steps[0]
    assert step.energy_balance_error < 0.005
    bd = step.surface.breakdown
    assert bd.h_conv_W_m2K == H_C and bd.h_rad_W_m2K > 0.0
    assert bd.fluid_C == T_AIR and bd.surroundings_C == T_SURR
    h = res.history
    t, ts = h["time_s"].to_numpy(), h["surface_C"].to_numpy()
    geometry = plan.product.geometry
    flux = H_C * (T_AIR - ts) + bd.h_rad_W_m2K * (T_SURR - ts)
    q_surface_J = geometry.area_m2 * np.trapezoid(flux, t)
    mean = h["mean_C"].to_numpy()
    stored_J = geometry.volume_m3 * FIXED["rho_kg_m3"] * FIXED["cp_J_kgK"] * (mean[-1] - mean[0])
    assert q_surface_J == pytest.approx(stored_J, rel=0.005)
    assert np.trapezoid(h["heat_flow_W"].to_numpy(), t) == pytest.approx(stored_J, rel=0.005)


@pytest.mark.parametrize("solver", ["exact", "finite-volume"])
def test_surroundings_at_the_air_temperature_change_nothing(solver):
    plain = run_plan(plan_from_dict(slab_plan(2.0, emissivity=EPS)), solver=solver)
    same = run_plan(plan_from_dict(slab_plan(2.0, emissivity=EPS, surroundings_C=T_AIR)), solver=solver)
    assert same.steps[0].surface.medium_C == (T_AIR,) == plain.steps[0].surface.medium_C
    for col in ("core_C", "surface_C", "mean_C", "heat_flow_W"):
        a, b = plain.history[col].to_numpy(), same.history[col].to_numpy()
        assert a.shape == b.shape
        assert np.max(np.abs(a - b)) <= 1e-9
    assert same.steps[0].surface.breakdown.to_dict() == plain.steps[0].surface.breakdown.to_dict()


def test_a_machine_step_radiates_to_the_given_surroundings():
    lib = load_library()
    oven = next(e for e in lib.equipment.values() if e.medium == "air" and "emissivity" in e.settings)
    air_C = oven.settings[oven.temperature_key].default
    base = {
        "title": "machine with hot walls",
        "product": {"name": "slab", "shape": "slab", "thickness_mm": 10, "fixed_properties": FIXED},
        "start": {"temperature_C": 19.0},
        "steps": [{"name": "in", "equipment": oven.id, "duration_min": 30.0}],
    }
    plain = run_plan(plan_from_dict(base), library=lib, assess=False)
    base["steps"][0]["surroundings_C"] = air_C + 60.0
    hot = run_plan(plan_from_dict(base), library=lib, assess=False)
    s = hot.steps[0].surface
    assert s.fluid_C == (air_C,)
    assert air_C < s.medium_C[0] < air_C + 60.0
    assert hot.history["mean_C"].iloc[-1] > plain.history["mean_C"].iloc[-1]


def test_the_summary_shows_the_air_and_says_where_the_radiation_goes():
    # What a technologist sets is the air temperature: the step line shows it, and a second line says that
    # the product also radiates to walls at another temperature (the sink the solver uses).
    from procplan.output.report import summary_text

    res = run_plan(plan_from_dict(slab_plan(1.0, emissivity=EPS, surroundings_C=T_SURR)), solver="exact")
    text = summary_text(res)
    assert f"medium {T_AIR:g} °C" in text
    assert res.steps[0].surface.breakdown.sink_note in text
