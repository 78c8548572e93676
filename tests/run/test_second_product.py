"""A second product in the same load (plan [load.second_product]) through run_plan and the report."""

from __future__ import annotations

import functools
import json

import numpy as np
import pytest

from procplan.files.library import load_library
from procplan.files.plan import plan_from_dict
from procplan.files.tomlfile import read_toml
from procplan.output.report import summary_dict, summary_text
from procplan.run.engine import run_plan

LIB = load_library()
BASE = read_toml(LIB.root / "plans" / "roulade-blast-chill.toml")


def _plan(n: int, second: tuple[str, int, float] | None):
    d = {**BASE, "checks": {**BASE["checks"], "pieces_per_batch": n}}
    if second is not None:
        name, m, t0 = second
        d["load"] = {"second_product": {"product": name, "pieces": m, "initial_temperature_C": t0}}
    return plan_from_dict(d, library=LIB)


@functools.cache
def _run(n: int, second: tuple[str, int, float] | None = None, assess: bool = False):
    return run_plan(_plan(n, second), library=LIB, solver="finite-volume", assess=assess)


def test_no_pieces_of_the_second_product_give_todays_history():
    # Method: a second product with 0 pieces adds nothing to the medium balance (within 1e-9 K); 200 roulades
    # take the blast chiller to its limit, so the medium is really coupled.
    alone, with_none = _run(200), _run(200, ("tomato-sauce-tub", 0, 80.0))
    assert alone.steps[0].machine_load.time_at_limit_s > 0
    assert len(alone.history) == len(with_none.history)
    for col in ("core_C", "surface_C", "mean_C", "medium_C"):
        assert np.max(np.abs(alone.history[col] - with_none.history[col])) <= 1e-9
    assert with_none.steps[0].machine_load.second is None


def test_an_identical_second_product_equals_more_pieces_of_the_main_product():
    # Method: M roulades as the second product load the medium like M more roulades of the batch (N + M),
    # within 1e-6 K (compared at the same times: the time steps follow the larger change of the two fields,
    # equal here within the Newton tolerance); the second product's core reaches the stop temperature when the
    # main one does.
    more, split = _run(200), _run(120, ("chicken-roulade", 80, 74.0))
    t_more, t_split = more.history["time_s"], split.history["time_s"]
    assert abs(t_more.iloc[-1] - t_split.iloc[-1]) < 1e-3
    for col in ("core_C", "mean_C", "medium_C"):
        assert np.max(np.abs(np.interp(t_more, t_split, split.history[col]) - more.history[col])) <= 1e-6
    second = split.steps[0].machine_load.second
    t = np.asarray(second.time_s)
    main = split.history
    assert np.max(np.abs(np.interp(main["time_s"], t, second.core_C) - main["core_C"])) <= 1e-6
    assert abs(second.stop_time_s - split.steps[0].stop_time_s) < 1.0


def test_a_second_product_slows_the_main_product_and_the_balance_closes_over_both():
    # Invariant: heat into both products + medium and structure = plant + fixed loads within 0.5 %; the second
    # product's heat equals its pieces × mass × mean enthalpy change (within 0.5 %). A warm second product
    # loads the plant, so the main product's cooling takes longer (the unsafe direction is to leave it out).
    alone, mixed = _run(120), _run(120, ("tomato-sauce-tub", 300, 80.0))
    ml = mixed.steps[0].machine_load
    assert ml.energy_balance_error < 0.005
    assert mixed.steps[0].energy_balance_error < 0.005
    second = ml.second
    tub = LIB.products["tomato-sauce-tub"]
    props = tub.property_table()
    mass = props.mass_density_kg_m3 * tub.geometry.volume_m3
    dH = float(props.enthalpy(second.mean_C[-1]) - props.enthalpy(80.0))
    assert abs(second.heat_kJ * 1e3 - 300 * mass * dH) < 0.005 * abs(300 * mass * dH)
    assert mixed.steps[0].stop_time_s > alone.steps[0].stop_time_s
    assert ml.time_at_limit_s > alone.steps[0].machine_load.time_at_limit_s
    assert second.core_C[-1] < second.core_C[0]


def test_the_report_gives_the_second_product_beside_the_main_one():
    res = _run(120, ("tomato-sauce-tub", 80, 80.0), assess=True)
    text = summary_text(res)
    assert "second product in the load: 80 × tomato-sauce-tub" in text
    assert "apply to the main product only" in text
    d = summary_dict(res)
    sp = d["load"]["second_product"]
    hist = sp["history"]
    assert len(hist["time_s"]) == len(hist["core_C"]) > 10
    assert sp["steps"][0]["end"]["core_C"] == hist["core_C"][-1]
    assert d["steps"][0]["machine_load"]["second_product"]["pieces"] == 80
    json.dumps(d, allow_nan=False)
    # the plan's targets and rule check stay on the main product's history
    assert res.outcomes is not None and len(res.history) > 10


def test_the_demo_plan_chills_roulades_with_sauce_tubs_and_closes_its_balance():
    # Invariant: the demo's loaded step balances over both products, medium, structure, plant and fixed loads
    # (< 0.5 %); the tubs (82 °C, in the same air) cool.
    plan = LIB.plan("roulade-sauce-blast-chill")
    assert plan.load.second_product.pieces == 60
    res = run_plan(plan, library=LIB)
    ml = res.steps[0].machine_load
    assert ml.energy_balance_error < 0.005 and ml.second is not None
    assert ml.second.core_C[-1] < 10.0 < ml.second.core_C[0]
    # the result document, second product included, follows its published schema (jsonschema validates it)
    from procplan.output.result_schema import RESULT_SCHEMA, result_document

    jsonschema = pytest.importorskip("jsonschema")
    doc = json.loads(json.dumps(result_document(res), allow_nan=False))
    jsonschema.validate(doc, RESULT_SCHEMA)
    assert doc["summary"]["load"]["second_product"]["pieces"] == 60


def test_the_second_product_carries_through_the_steps_and_is_solved_alone_where_no_medium_couples():
    # Method: the beef joints' cook, rest and chill with 40 pork steaks loaded too: the steaks are solved with
    # the medium in the two loaded steps and alone in the rest (h given in the plan, applied as given: the
    # steaks are unwrapped, so h_eff = 8 W/m²K); their field carries from step to step; both loaded steps
    # balance within 0.5 %; in the 20 °C rest the steaks cool.
    d = read_toml(LIB.root / "plans" / "beef-joint-roast-chill.toml")
    d["load"] = {"second_product": {"product": "pork-loin-steak", "pieces": 40, "initial_temperature_C": 4}}
    res = run_plan(plan_from_dict(d, library=LIB), library=LIB, assess=False)
    cook, rest, chill = res.steps
    assert rest.machine_load is None and rest.second_alone is not None
    assert not any("is not solved" in w for w in res.warnings)
    a, r, b = cook.machine_load.second, rest.second_alone, chill.machine_load.second
    assert abs(r.h_W_m2K - 8.0) < 1e-9 and r.h_source.startswith("h given in the plan")
    assert abs(a.core_C[0] - 4.0) < 1e-9 and abs(r.core_C[0] - a.core_C[-1]) < 1e-6
    assert abs(b.core_C[0] - r.core_C[-1]) < 1e-6 and abs(b.mean_C[0] - r.mean_C[-1]) < 1e-6
    assert r.mean_C[-1] < r.mean_C[0] and abs(r.time_s[-1] - rest.duration_s) < 1e-6
    assert a.core_C[-1] > 70.0 and b.core_C[-1] < 10.0
    for sr in (cook, chill):
        assert sr.machine_load.energy_balance_error < 0.005
    d = summary_dict(res)["load"]["second_product"]
    hist = d["history"]
    assert hist["step"][0] == "steam cook" and "rest" in hist["step"] and hist["step"][-1] == "blast chill"
    assert np.all(np.diff(hist["time_s"]) >= 0)
    assert [s["solved_with_medium"] for s in d["steps"]] == [True, False, True]
    assert "alone in the step's medium" in summary_text(res)


def test_the_second_product_alone_at_the_set_point_equals_the_coupled_run_of_a_huge_plant():
    # Method: the empty-machine run (load model "set-point") solves the tubs alone at the set point; a 1 GW
    # plant holds the set point with the tubs coupled: the same discrete equations at a fixed time step
    # (≤ 1e-6 K but over the last two steps: the coupled step ends at the main product's stop, and the alone
    # solve splits its last steps to land on the step's end).
    import dataclasses
    import math

    eq = LIB.equipment["chiller-b2"]
    big = dataclasses.replace(
        LIB, equipment={**LIB.equipment, "chiller-b2": dataclasses.replace(eq, capacity_kW=1e6)}
    )
    plan = LIB.plan("roulade-sauce-blast-chill")
    coupled = run_plan(plan, library=big, dt_s=60.0, assess=False).steps[0]
    empty = run_plan(
        dataclasses.replace(plan, load=dataclasses.replace(plan.load, model="set-point")),
        library=LIB,
        dt_s=60.0,
        assess=False,
    ).steps[0]
    assert empty.machine_load is None and coupled.machine_load.held
    a, b = coupled.machine_load.second, empty.second_alone
    assert abs(a.h_W_m2K - b.h_W_m2K) <= 1e-12 * a.h_W_m2K
    end = 60.0 * math.floor(min(a.time_s[-1], b.time_s[-1]) / 60.0) - 60.0
    t = np.asarray(a.time_s)
    t = t[t <= end]
    assert np.max(np.abs(np.interp(t, a.time_s, a.core_C) - np.interp(t, b.time_s, b.core_C))) <= 1e-6
    assert abs(a.target_time_s - b.target_time_s) <= 1e-3
