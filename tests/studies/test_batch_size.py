"""The largest batch a loaded machine takes and still meets a goal; batch size in compare and the metrics."""

from __future__ import annotations

import dataclasses
import math

import pytest

from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.machines import equipment_from_dict
from procplan.geometry import Geometry
from procplan.model import Checks, FixedProperties, Load, Plan, Product, Step
from procplan.run.engine import run_plan
from procplan.studies.batch_size import largest_batch
from procplan.studies.compare import compare_plans, variants_of
from procplan.studies.inverse import GOALS

LIB = load_library()
# A small reach-in cabinet (invented test machine): 1 kW at −5 °C air, UA = 1000/10 W/K.
CABINET = equipment_from_dict(
    {
        "id": "cabinet",
        "name": "test cabinet",
        "kind": "blast-chiller",
        "medium": "air",
        "capacity_kW": 1.0,
        "evaporating_C": -15.0,
        "condensing_C": 35.0,
        "settings": {
            "air_C": {"min": -10, "max": 5, "default": -5},
            "air_speed_m_s": {"min": 1, "max": 4, "default": 2},
        },
        "thermal": {"medium_volume_m3": 0.5, "structure_mass_kg": 40.0, "rated_medium_C": -5.0},
    }
)
TEST_LIB = dataclasses.replace(LIB, equipment={**LIB.equipment, "cabinet": CABINET})
BALL = Product(
    "ball", Geometry("sphere", diameter_m=0.04), fixed_properties=FixedProperties(0.5, 1050.0, 3600.0)
)
PLAN = Plan(
    "balls in a cabinet",
    BALL,
    70.0,
    (
        Step(
            "chill", 4 * 3600.0, 5.0, equipment="cabinet", settings=(("air_C", -5.0), ("air_speed_m_s", 2.0))
        ),
    ),
    Checks(pieces_per_batch=10),
)


def _measure(n: int, target_min: float) -> float:
    plan = PLAN.with_pieces(n).with_step(0, duration_s=1.25 * 60 * target_min)
    return GOALS["time"].measure(run_plan(plan, library=TEST_LIB), plan, 0, target_min)


def test_the_largest_batch_passes_and_one_more_piece_fails():
    # Method: the answer checked by independent forward runs at N and N + 1 (the goal's own measure).
    one = run_plan(PLAN.with_pieces(1), library=TEST_LIB)
    target = 1.3 * one.steps[0].duration_s / 60.0
    r = largest_batch(PLAN, step_index=0, goal="time", library=TEST_LIB, target_min=target, max_pieces=5000)
    assert r.pieces is not None and r.first_failing == r.pieces + 1
    assert _measure(r.pieces, target) >= 0 > _measure(r.pieces + 1, target)
    assert r.machine_load is not None and not r.machine_load.held  # the answer's plant ran at its limit
    measures = [m for _, m in sorted(r.evaluations)]
    assert all(a >= b - 1e-9 for a, b in zip(measures, measures[1:], strict=False))  # monotone in N


def test_an_empty_machine_or_a_machine_without_description_cannot_answer():
    with pytest.raises(InvalidInputError) as exc:
        largest_batch(
            dataclasses.replace(PLAN, load=Load("set-point")),
            step_index=0,
            goal="time",
            library=TEST_LIB,
            target_min=60,
        )
    assert "load.model" in str(exc.value)
    bare = dataclasses.replace(CABINET, thermal=None)
    lib = dataclasses.replace(LIB, equipment={**LIB.equipment, "cabinet": bare})
    with pytest.raises(InvalidInputError) as exc:
        largest_batch(PLAN, step_index=0, goal="time", library=lib, target_min=60)
    assert "steps[0].equipment" in str(exc.value)


def test_compare_varies_the_batch_and_reports_the_shortfall():
    # Invariant: more pieces in the same machine never cool faster; the shortfall appears with the load.
    plans = [PLAN.with_pieces(1), *variants_of(PLAN.with_pieces(1), [{"pieces": 400}], library=TEST_LIB)]
    cmp_ = compare_plans(plans, library=TEST_LIB)
    small, big = (cmp_.table.loc[p.title] for p in plans)
    assert big["pieces"] == 400 and small["pieces"] == 1
    assert big["time_to_target_min"] > small["time_to_target_min"]
    assert small["capacity_shortfall_kW"] == 0.0 and big["capacity_shortfall_kW"] > 0.0
    assert big["plant_limit_min"] > 0
    with pytest.raises(InvalidInputError):
        variants_of(PLAN, [{"pieces": 0}])
    empty = run_plan(dataclasses.replace(PLAN, load=Load("set-point")), library=TEST_LIB)
    from procplan.studies.metrics import result_metrics

    assert math.isnan(result_metrics(empty)["capacity_shortfall_kW"])


def test_the_warmest_loading_temperature_that_meets_the_time():
    # Method: the required loading temperature checked by forward runs 0.5 K either side; a warmer machine
    # at loading never cools the batch faster.
    from procplan.studies.inverse import required_setting

    plan = PLAN.with_pieces(200)
    at_set_point = run_plan(plan, library=TEST_LIB).steps[0].duration_s / 60.0
    warm = run_plan(plan.with_step(0, loading_medium_C=15.0), library=TEST_LIB).steps[0].duration_s / 60.0
    assert warm > at_set_point
    target = at_set_point + 0.5 * (warm - at_set_point)
    r = required_setting(
        plan,
        step_index=0,
        parameter="loading_medium_C",
        goal="time",
        library=TEST_LIB,
        target_min=target,
        bounds=(-5.0, 15.0),
        n_scan=3,
        xtol=0.05,
    )
    assert r.achievable and r.passes == "below" and r.confirmed

    def measure(v):
        p = plan.with_step(0, loading_medium_C=v, duration_s=1.25 * 60 * target)
        return GOALS["time"].measure(run_plan(p, library=TEST_LIB), p, 0, target)

    assert measure(r.value - 0.5) > 0 > measure(r.value + 0.5)
