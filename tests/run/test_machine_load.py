"""The batch in the machine: the medium node solved with the pieces, against independent solutions and balances."""

from __future__ import annotations

import dataclasses
import functools

import numpy as np
import pytest
import scipy.linalg
from hypothesis import given, settings
from hypothesis import strategies as st

from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.conduction.fv_medium import MediumNode
from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.machines import equipment_from_dict, equipment_to_dict
from procplan.files.plan import plan_from_dict, plan_to_dict
from procplan.geometry import Geometry
from procplan.model import Load
from procplan.properties.table import PropertyTable
from procplan.run.engine import run_plan
from procplan.surface.plant import Plant

LIB = load_library()

# A small, highly conductive sphere: Bi = h R / k = 20 × 0.01 / 200 = 1e-3, so each piece is lumped.
SPHERE = Geometry("sphere", diameter_m=0.02)
K, RHO, CP, H = 200.0, 1000.0, 4000.0, 20.0
PROPS = PropertyTable.constant(K, RHO, CP)


def _two_node(N, C, UA_plant, T_sink, wall_UA, room_C, Q_fixed, Tp0, E0, times):
    """Pieces (lumped) and medium as a linear system x' = A x + b, solved by the matrix exponential of the
    augmented system [[A, b], [0, 0]]."""
    m_c = RHO * SPHERE.volume_m3 * CP
    hA = H * SPHERE.area_m2
    A = np.array(
        [
            [-hA / m_c, hA / m_c],
            [N * hA / C, -(N * hA + UA_plant + wall_UA) / C],
        ]
    )
    b = np.array([0.0, (UA_plant * T_sink + wall_UA * room_C + Q_fixed) / C])
    M = np.zeros((3, 3))
    M[:2, :2], M[:2, 2] = A, b
    x0 = np.array([Tp0, E0, 1.0])
    return np.array([scipy.linalg.expm(M * t) @ x0 for t in times])


def _coupled(plant, N, E0, T0, end_s, set_point_C):
    node = MediumNode(plant, N, E0)
    res = solve_conduction(
        SPHERE, PROPS, T0, SurfaceBoundary(set_point_C, H, medium_node=node), end_s, n_nodes=11
    )
    node.finish(res.final_enthalpy_J_kg)
    E = np.r_[E0, [r.medium_C for r in node.records]]
    return res, E, node


@pytest.mark.parametrize(
    "kind", ["chiller", "heater"], ids=["chiller: linear evaporator", "heater: constant supply"]
)
def test_lumped_pieces_and_a_linear_plant_match_the_matrix_exponential(kind):
    # Source: the two-node linear system (pieces + medium) solved exactly by scipy.linalg.expm (method);
    # the set point is never reached, so the plant stays on its linear branch throughout.
    N, C = 50, 2.0e4
    if kind == "chiller":
        # UA (E − T_evap) far below the capacity; the set point lies below T_evap, out of reach
        plant = Plant(1e7, True, 30.0, -20.0, C, fixed_W=50.0, wall_UA_W_K=2.0, room_C=20.0)
        T0, E0, sp = 60.0, 10.0, -30.0
        exact_args = (30.0, -20.0, 2.0, 20.0, 50.0)
    else:
        plant = Plant(120.0, False, heat_capacity_J_K=C, fixed_W=20.0, wall_UA_W_K=3.0, room_C=20.0)
        T0, E0, sp = 5.0, 60.0, 95.0
        exact_args = (0.0, 0.0, 3.0, 20.0, 140.0)
    res, E, node = _coupled(plant, N, E0, T0, 3 * 3600.0, sp)
    assert all(r.mode == "limit" for r in node.records)
    exact = _two_node(N, C, *exact_args, T0, E0, res.time_s)
    assert np.max(np.abs(res.mean_C - exact[:, 0])) < 0.05
    assert np.max(np.abs(E - exact[:, 1])) < 0.05
    assert np.ptp(E) > 2.0  # the medium really moved


def test_infinite_capacity_reproduces_the_constant_medium_history():
    # Method: with the set point always within reach the plant holds it, and the coupled run is the
    # constant-medium run (≤ 1e-6 K).
    plant = Plant(1e9, True, 1e9, -40.0, 1e5)
    res, E, node = _coupled(plant, 1000, -5.0, 60.0, 3600.0, -5.0)
    ref = solve_conduction(SPHERE, PROPS, 60.0, SurfaceBoundary(-5.0, H), 3600.0, n_nodes=11)
    assert res.time_s.shape == ref.time_s.shape
    assert np.max(np.abs(res.core_C - ref.core_C)) <= 1e-6
    assert np.max(np.abs(E + 5.0)) <= 1e-12 and all(r.mode == "hold" for r in node.records)


def test_a_vanishing_load_reproduces_the_constant_medium_history_in_a_demo_machine():
    # Method: one roulade in the roll-in chiller is far within its plant: loaded and empty-machine runs agree.
    plan = plan_from_dict(
        {**_demo_dict("roulade-blast-chill"), "checks": {"pieces_per_batch": 1}}, library=LIB
    )
    loaded = run_plan(plan, library=LIB, solver="finite-volume")
    empty = run_plan(dataclasses.replace(plan, load=Load("set-point")), library=LIB, solver="finite-volume")
    assert len(loaded.history) == len(empty.history)
    assert np.max(np.abs(loaded.history["core_C"] - empty.history["core_C"])) <= 1e-6
    assert loaded.steps[0].machine_load is not None and loaded.steps[0].machine_load.held
    assert empty.steps[0].machine_load is None and "empty-machine" in empty.steps[0].load_note


def test_the_sure_hold_shortcut_equals_the_coupled_solve(monkeypatch):
    # Method: a load within the plant's bound at the set point runs as the set-point step; forcing the
    # coupled solve instead gives the same history (the plant holds the set point on every step) and duty.
    from procplan.run import machine_load

    plan = plan_from_dict(
        {**_demo_dict("roulade-blast-chill"), "checks": {"pieces_per_batch": 10}}, library=LIB
    )
    short = run_plan(plan, library=LIB, solver="finite-volume", assess=False)
    monkeypatch.setattr(machine_load, "holds_throughout", lambda *a: False)
    coupled = run_plan(plan, library=LIB, solver="finite-volume", assess=False)
    assert "solved with the 10 pieces" in coupled.steps[0].reason
    assert np.max(np.abs(short.history["core_C"] - coupled.history["core_C"])) <= 1e-6
    a, b = short.steps[0].machine_load, coupled.steps[0].machine_load
    assert a.held and b.held
    assert abs(a.plant_kJ - b.plant_kJ) <= 1e-3 * abs(b.plant_kJ)


def test_a_plant_at_its_cap_lets_the_medium_rise_at_load_minus_capacity_over_C():
    # Source: hand energy balance of the medium, C dT/dt = load − capacity (plant capped by its compressor).
    C, cap = 2.0e5, 500.0
    plant = Plant(cap, True, 1e6, -40.0, C, fixed_W=100.0)
    res, E, node = _coupled(plant, 2000, 0.0, 80.0, 600.0, 0.0)
    assert all(r.mode == "limit" for r in node.records)
    t = res.time_s
    load_W = -2000 * res.heat_flow_W + 100.0  # what the batch and the fixed load give the medium
    rate = np.diff(E) / np.diff(t)
    hand = (0.5 * (load_W[1:] + load_W[:-1]) - cap) / C
    assert np.max(np.abs(rate - hand)) < 0.01 * np.max(np.abs(hand))
    assert E[-1] > 1.0


def _demo_dict(name):
    from procplan.files.tomlfile import read_toml

    return read_toml(LIB.root / "plans" / f"{name}.toml")


DEMOS = sorted(p.stem for p in (LIB.root / "plans").glob("*.toml"))


@functools.cache
def _demo_run(name: str, model: str = "loaded"):
    plan = plan_from_dict(_demo_dict(name), library=LIB)
    return run_plan(dataclasses.replace(plan, load=Load(model)), library=LIB)


@pytest.mark.parametrize("name", DEMOS)
def test_energy_balance_over_pieces_medium_plant_and_fixed_loads_on_every_demo_plan(name):
    # Invariant: heat into the pieces + into medium and structure = plant + fixed loads, within 0.5 %.
    res = _demo_run(name)
    for sr in res.steps:
        assert sr.energy_balance_error < 0.005, sr.name
        if sr.machine_load is not None:
            assert sr.machine_load.energy_balance_error < 0.005, sr.name
    assert "medium_C" in res.history and np.isfinite(res.history["medium_C"]).all()


@pytest.mark.parametrize(
    "name, step",
    [("beef-joint-roast-chill", "blast chill"), ("soup-pouch-pasteurise", "ice-water cool")],
)
def test_demo_loads_beyond_their_machines_take_longer_and_warn(name, step):
    # Method: the loaded run against the empty-machine run of the same plan (the 34 kW against
    # 8.5 kW, and 520 kW against 40 kW).
    loaded, empty = _demo_run(name), _demo_run(name, "set-point")
    (ls,) = [s for s in loaded.steps if s.name == step]
    (es,) = [s for s in empty.steps if s.name == step]
    assert ls.duration_s > es.duration_s
    ml = ls.machine_load
    assert ml.peak_load_kW > ml.capacity_kW and ml.time_at_limit_s > 0
    assert any("cannot hold" in w for w in ls.warnings)


def test_load_keys_round_trip_and_agree_with_pieces_per_batch():
    d = _demo_dict("roulade-blast-chill")
    d = {**d, "load": {"pieces": 120, "model": "set-point"}}
    d["steps"] = [{**d["steps"][0], "loading_medium_C": 10.0}]
    plan = plan_from_dict(d, library=LIB)
    assert plan.pieces == 120 and plan.load.model == "set-point" and plan.steps[0].loading_medium_C == 10.0
    assert plan_from_dict(plan_to_dict(plan), library=LIB) == plan
    with pytest.raises(InvalidInputError) as exc:
        plan_from_dict({**d, "load": {"pieces": 7}}, library=LIB)
    assert "load.pieces" in str(exc.value)
    with pytest.raises(InvalidInputError) as exc:
        plan_from_dict({**d, "load": {"model": "full"}}, library=LIB)
    assert "load.model" in str(exc.value)


def test_loading_the_machine_warm_shows_a_pull_down():
    # Method: a machine loaded at 10 °C above its set point pulls down, then holds.
    d = _demo_dict("roulade-blast-chill")
    d["steps"] = [{**d["steps"][0], "loading_medium_C": 10.0}]
    res = run_plan(plan_from_dict({**d, "checks": {"pieces_per_batch": 2}}, library=LIB), library=LIB)
    ml = res.steps[0].machine_load
    assert ml.loading_C == 10.0 and ml.pull_down_s is not None and 0 < ml.pull_down_s < 3600
    assert res.history["medium_C"].iloc[0] == 10.0


THERMAL_OK = {"medium_volume_m3": 7.0, "structure_mass_kg": 470.0, "rated_medium_C": -6.0, "fan_kW": 3.0}
BOUNDS = {
    "medium_volume_m3": (1e-4, 1e4),
    "structure_mass_kg": (0.0, 1e6),
    "structure_cp_J_kgK": (100.0, 5000.0),
    "rated_medium_C": (-100.0, 300.0),
    "fan_kW": (0.0, 1e3),
    "door_kW": (0.0, 1e3),
    "wall_UA_W_K": (0.0, 1e5),
    "room_C": (-40.0, 60.0),
}


@settings(max_examples=60, deadline=None)
@given(
    key=st.sampled_from(sorted(BOUNDS)),
    value=st.one_of(
        st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=3), st.just(-1e9), st.just(1e12)
    ),
)
def test_bad_thermal_inputs_name_the_field_and_the_range(key, value):
    lo, hi = BOUNDS[key]
    try:  # a number, or text that reads as one (files may quote numbers), inside the range is valid
        x = float(value)
    except ValueError:
        x = float("nan")
    if np.isfinite(x) and lo <= x <= hi:
        return
    data = equipment_to_dict(LIB.equipment["chiller-b2"])
    data["thermal"] = {**THERMAL_OK, key: value}
    with pytest.raises(InvalidInputError) as exc:
        equipment_from_dict(data)
    assert f"thermal.{key}" in str(exc.value)


def test_the_thermal_table_round_trips_and_a_rating_below_evaporation_is_refused():
    eq = LIB.equipment["chiller-b2"]
    assert equipment_from_dict(equipment_to_dict(eq)) == eq
    data = equipment_to_dict(eq)
    data["thermal"] = {**THERMAL_OK, "rated_medium_C": -30.0}
    with pytest.raises(InvalidInputError) as exc:
        equipment_from_dict(data)
    assert "thermal.rated_medium_C" in str(exc.value)
