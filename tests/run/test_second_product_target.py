"""The second product's own h and core target (plan [load.second_product] target_core_C), and a second product
beside a packed load ([packing])."""

from __future__ import annotations

import dataclasses
import functools
import json
import math

import numpy as np
import pytest

from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.files.library import load_library
from procplan.files.plan import plan_from_dict
from procplan.files.tomlfile import read_toml
from procplan.output.report import summary_dict, summary_text
from procplan.run.engine import run_plan
from procplan.run.packing import time_to_reach_s

LIB = load_library()
DEMO = read_toml(LIB.root / "plans" / "roulade-sauce-blast-chill.toml")
TUB = LIB.products["tomato-sauce-tub"]
DT_S = 60.0


def _plan(pieces: int = 100, target_C: float | None = 5.0, library=LIB, **more):
    sp = {**DEMO["load"]["second_product"], "target_core_C": target_C}
    if target_C is None:
        sp.pop("target_core_C")
    d = {
        **DEMO,
        "checks": {**DEMO["checks"], "pieces_per_batch": pieces},
        "load": {"pieces": pieces, "model": "loaded", "second_product": sp},
        **more,
    }
    return plan_from_dict(d, library=library)


@functools.cache
def _coupled(pieces: int = 100):
    return run_plan(_plan(pieces), library=LIB, dt_s=DT_S, assess=False)


def _alone(second, medium):
    """The tub alone in a medium given in advance, with the coupled run's h for it and its fixed time step, up to
    the last whole step of the coupled run (its last step ends at the main product's stop)."""
    end = DT_S * math.floor(second.time_s[-1] / DT_S)
    res = solve_conduction(
        TUB.geometry, TUB.property_table(), 82.0, SurfaceBoundary(medium, second.h_W_m2K), end, dt_s=DT_S
    )
    return res, end


def _core_equals_the_tub_alone(second, medium) -> float | None:
    """Assert the coupled run's tub core equals the tub alone in ``medium`` (≤ 1e-6 K over the whole steps both
    cover); return the tub alone's time to its 5 °C target [s]."""
    alone, end = _alone(second, medium)
    t = np.asarray(second.time_s)
    keep = t <= end
    assert (
        np.max(np.abs(np.interp(t[keep], alone.time_s, alone.core_C) - np.asarray(second.core_C)[keep]))
        <= 1e-6
    )
    return time_to_reach_s(alone.time_s, alone.core_C, 5.0, 82.0)


def _air_table_A4(T_K: float) -> tuple[float, float, float, float]:
    """Dry air at 1 atm, linear between the 250 K and 300 K rows: ν [m²/s], k [W/mK], α [m²/s], Pr.
    Source: Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Table A.4
    (from memory)."""
    r250, r300 = (11.44e-6, 22.3e-3, 15.9e-6, 0.720), (15.89e-6, 26.3e-3, 22.5e-6, 0.707)
    f = (T_K - 250.0) / 50.0
    return tuple(a + (b - a) * f for a, b in zip(r250, r300, strict=True))


def _h_by_hand(D_m: float, T_s_C: float, T_air_C: float, speed_m_s: float, emissivity: float, R_m2K_W: float):
    """Effective h of a cylinder in cross-flow of air: Churchill–Bernstein (Incropera eq. 7.54) and Churchill–Chu
    free convection (eq. 9.34) combined as Nu³ = Nu_F³ + Nu_N³ (eq. 9.64), film properties, linearised radiation
    (eq. 1.9) in parallel, the packaging's resistance in series."""
    T_f = 0.5 * (T_s_C + T_air_C) + 273.15
    nu, k, alpha, pr = _air_table_A4(T_f)
    re = speed_m_s * D_m / nu
    nu_f = 0.3 + 0.62 * re**0.5 * pr ** (1 / 3) / (1 + (0.4 / pr) ** (2 / 3)) ** 0.25 * (
        1 + (re / 282000.0) ** (5 / 8)
    ) ** (4 / 5)
    ra = 9.81 / T_f * (T_s_C - T_air_C) * D_m**3 / (nu * alpha)
    nu_n = (0.60 + 0.387 * ra ** (1 / 6) / (1 + (0.559 / pr) ** (9 / 16)) ** (8 / 27)) ** 2
    h_c = (nu_f**3 + nu_n**3) ** (1 / 3) * k / D_m
    t1, t2 = T_s_C + 273.15, T_air_C + 273.15
    h_r = emissivity * 5.670374e-8 * (t1 + t2) * (t1**2 + t2**2)
    return 1.0 / (1.0 / (h_c + h_r) + R_m2K_W)


def test_the_second_products_h_is_the_machines_correlation_at_its_own_diameter():
    # Source: Incropera 7th ed., eqs. 7.54, 9.34, 9.64, 1.9 evaluated by hand (above) for the tub (110 mm) in
    # the blast chiller's air (-6 °C, 4 m/s, walls at the air, ε 0.9 the machine's default), at the surface
    # temperature the run takes for it, halfway between its loading temperature and the air (38 °C); its
    # PP wall 0.6 mm, k 0.22 W/mK in series. Tolerance 2 %: dry-air table values (from memory) against the
    # run's humid-air properties. At the roulade's 85 mm the same hand value is 8 % higher, so a second
    # product that took the main product's h would fail here.
    second = _coupled().steps[0].machine_load.second
    R = 0.0006 / 0.22
    hand = _h_by_hand(0.110, 0.5 * (82.0 + -6.0), -6.0, 4.0, 0.9, R)
    assert abs(second.h_W_m2K / hand - 1) < 0.02
    assert abs(_h_by_hand(0.085, 38.0, -6.0, 4.0, 0.9, R) / hand - 1) > 0.05
    assert second.h_source.startswith("machine Blast chiller B2")


def test_the_core_target_time_equals_the_tub_alone_in_the_held_medium_of_a_huge_plant():
    # Method: a plant of 1 GW holds the set point throughout, so the coupled run's tub is the tub alone at
    # -6 °C with the same h, grid and fixed time step (the same discrete equations): ≤ 1e-6 K, and the same
    # time to its 5 °C target.
    eq = LIB.equipment["chiller-b2"]
    big = dataclasses.replace(
        LIB, equipment={**LIB.equipment, "chiller-b2": dataclasses.replace(eq, capacity_kW=1e6)}
    )
    res = run_plan(_plan(library=big), library=big, dt_s=DT_S, assess=False)
    ml = res.steps[0].machine_load
    assert ml.held and np.max(np.abs(res.history["medium_C"] + 6.0)) <= 1e-9
    second = ml.second
    t_alone = _core_equals_the_tub_alone(second, -6.0)
    assert second.target_time_s is not None and abs(second.target_time_s - t_alone) <= 1e-3


def test_the_core_target_time_equals_the_tub_alone_in_the_coupled_runs_medium_history():
    # Method: 200 roulades take the chiller to its limit (the medium rises); the tub alone in a medium given in
    # advance as the coupled run's medium history (linear between the accepted steps, where the implicit
    # scheme evaluates it) with the same h and time step repeats the coupled run: ≤ 1e-6 K, and the same time
    # to its target. Loading the plant lengthens the tub's time (the unsafe direction is to leave the batch out).
    res = _coupled(200)
    ml = res.steps[0].machine_load
    assert ml.time_at_limit_s > 0 and ml.energy_balance_error < 0.005
    second = ml.second
    medium = (res.history["time_s"].to_numpy(), res.history["medium_C"].to_numpy())
    t_alone = _core_equals_the_tub_alone(second, medium)
    assert abs(second.target_time_s - t_alone) <= 1e-3
    assert second.target_time_s > _coupled(100).steps[0].machine_load.second.target_time_s


def test_the_target_is_reported_per_step_and_overall_and_a_missed_target_warns():
    res = run_plan(_plan(), library=LIB)
    d = summary_dict(res)["load"]["second_product"]
    second = res.steps[0].machine_load.second
    assert d["target_core_C"] == 5.0 and d["target"]["reached"] and d["target"]["step"] == "blast chill"
    assert d["target"]["time_min"] == pytest.approx(second.target_time_s / 60, abs=0.01)
    assert d["steps"][0]["time_to_target_min"] == d["target"]["time_min"]
    assert d["steps"][0]["h_W_m2K"] == pytest.approx(second.h_W_m2K)
    json.dumps(d, allow_nan=False)
    text = summary_text(res)
    assert "core target 5 °C: reached after" in text and "for its own shape and size" in text
    assert not any("does not reach its target" in w for w in res.warnings)
    # the tubs' core is 3.3 °C when the roulades stop at 3 °C: a 2 °C target is missed, and said so
    missed = run_plan(_plan(target_C=2.0), library=LIB)
    tg = summary_dict(missed)["load"]["second_product"]["target"]
    assert not tg["reached"] and tg["time_min"] is None and tg["end_core_C"] > 2.0
    assert any("tomato-sauce-tub" in w and "does not reach its target 2 °C" in w for w in missed.warnings)
    assert "core target 2 °C: NOT reached" in summary_text(missed)


def test_a_second_product_beside_a_packed_load_closes_the_balance_and_keeps_the_machines_air_speed():
    # Invariant: 600 roulades packed two to a corrugated case (300 cases) with the 60 tubs take the chiller to
    # its limit; heat into the cases, the tubs, the medium and structure = plant + fixed loads within 0.5 %,
    # and the tubs' heat equals their pieces × mass × mean enthalpy change within 0.5 %. Physics: the tubs are
    # not in the packed load, so the load's air-flow factor (air bypassing a dense load) does not reach them:
    # their h is the one at the machine's own 4 m/s, as in the free-piece run beside it.
    d = {
        **DEMO,
        "checks": {**DEMO["checks"], "pieces_per_batch": 600},
        "load": {**DEMO["load"], "pieces": 600},
        "steps": [{**DEMO["steps"][0], "duration_min": 240}],
        "packing": {
            "arrangement": "case",
            "case_length_mm": 250,
            "case_width_mm": 180,
            "case_height_mm": 90,
            "piece_layout": [1, 2, 1],
            "wall": "corrugated-board",
            "wall_thickness_mm": 4,
            "air_flow_factor": 0.5,
        },
    }
    res = run_plan(plan_from_dict(d, library=LIB), library=LIB, assess=False)
    ml = res.steps[0].machine_load
    assert ml.pieces == 300 and ml.time_at_limit_s > 0
    assert ml.energy_balance_error < 0.005 and res.steps[0].energy_balance_error < 0.005
    second = ml.second
    props = TUB.property_table()
    mass = props.mass_density_kg_m3 * TUB.geometry.volume_m3
    dH = float(props.enthalpy(second.mean_C[-1]) - props.enthalpy(82.0))
    assert abs(second.heat_kJ * 1e3 - 60 * mass * dH) < 0.005 * abs(60 * mass * dH)
    free = res.packing.single.steps[0].machine_load.second
    assert abs(second.h_W_m2K - free.h_W_m2K) <= 1e-9 * free.h_W_m2K
    assert summary_dict(res)["load"]["second_product"]["target"]["reached"]


@pytest.mark.parametrize("model", ["loaded", "set-point"])
def test_the_second_products_h_gets_a_second_pass_at_its_own_mean_surface_temperature(model):
    # Independent of the first pass: after the run, the h reported for the second product equals the machine's
    # correlation evaluated at the time-averaged surface temperature of its own reported history (within 1 %;
    # the 3 % tolerance of the main product's second pass applies), while its first-pass h (halfway between
    # 95 °C at loading and the -18 °C air) is more than 3 % higher: radiation and the film properties at a
    # warmer surface than it keeps in a chill, so without the pass its own time to target would come out short.
    import importlib

    sp = importlib.import_module("procplan.run.second_product")
    d = {
        **DEMO,
        "steps": [{**DEMO["steps"][0], "settings": {"air_C": -18, "air_speed_m_s": 2}}],
        "load": {**DEMO["load"], "model": model, "second_product": {**DEMO["load"]["second_product"]}},
    }
    d["load"]["second_product"]["initial_temperature_C"] = 95
    plan = plan_from_dict(d, library=LIB)
    sr = run_plan(plan, library=LIB, assess=False).steps[0]
    second = sr.machine_load.second if model == "loaded" else sr.second_alone
    own_mean_C = sp.time_mean(second.time_s, second.surface_C)
    state = sp.initial_state(plan)
    at_own = sp.second_load(state, plan.steps[0], 0, LIB, surface_C=own_mean_C).h_W_m2K
    first = sp.second_load(state, plan.steps[0], 0, LIB).h_W_m2K
    assert abs(second.h_W_m2K / at_own - 1) < 0.01, (second.h_W_m2K, at_own)
    assert first / at_own - 1 > 0.03, (first, at_own)
