"""Packed loads through the engine: mass and energy, limits, an independent solver, and the positions."""

from __future__ import annotations

import copy

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.plan import load_plan, plan_from_dict, plan_to_dict
from procplan.output.report import summary_dict, summary_text
from procplan.run.engine import run_plan
from procplan.run.packing import packed_plan, time_to_reach_s

LIB = load_library()


def _demo(name: str) -> dict:
    return plan_to_dict(load_plan(LIB.root / "plans" / f"{name}.toml", library=LIB))


PALLET = _demo("lasagne-pallet-cold-room")
VIALS = _demo("vial-cartons-cool-down")


def _plan(base: dict, **packing):
    d = copy.deepcopy(base)
    d["packing"].update(packing)
    for k, v in list(d["packing"].items()):
        if v is None:
            del d["packing"][k]
    return plan_from_dict(d, library=LIB)


@pytest.fixture(scope="module")
def pallet():
    return run_plan(plan_from_dict(PALLET, library=LIB), library=LIB)


def test_load_mass_is_the_pieces_and_energy_balances(pallet):
    # Balance: the load's product mass is pieces × one piece (walls and air carry none), and the heat removed
    # equals the enthalpy change (the engine's balance).
    load = pallet.packing.load
    assert load.pieces == 1200
    assert_allclose(pallet.piece_mass_kg, load.pieces * pallet.packing.single.piece_mass_kg, rtol=1e-9)
    assert pallet.outcomes.energy.balance_error < 0.005


def test_positions_are_ordered_centre_slowest(pallet):
    centre, corner, single = pallet.packing.positions
    assert centre.time_to_target_s > corner.time_to_target_s > single.time_to_target_s > 0
    assert "centre of the pallet" in centre.name and "corner piece" in corner.name
    # the centre row of the history is the stop temperature, reached
    assert_allclose(pallet.history["core_C"].iloc[-1], 5.0, atol=1e-6)


def test_summary_text_and_json_carry_the_positions(pallet):
    text = summary_text(pallet)
    assert "centre of the pallet (slowest)" in text and "single free piece" in text
    data = summary_dict(pallet)["packing"]
    assert [p["name"] for p in data["positions"]] == [p.name for p in pallet.packing.positions]
    assert data["load"]["pieces"] == 1200
    assert any("air voids" in w for w in pallet.warnings)


def test_exact_and_finite_volume_agree_on_a_packed_case():
    # Independent method: the same packed case on the finite-volume solver (forced) against the exact series.
    plan = _plan(VIALS)
    plan = plan.with_step(0, stop_when_core_C=None, duration_s=6 * 3600.0)
    ex = run_plan(plan, library=LIB)
    fv = run_plan(plan, library=LIB, solver="finite-volume")
    assert ex.steps[0].solver == "exact" and fv.steps[0].solver == "finite-volume"
    t = ex.history["time_s"].to_numpy()
    core_fv = np.interp(t, fv.history["time_s"], fv.history["core_C"])
    assert np.max(np.abs(core_fv - ex.history["core_C"].to_numpy())) < 0.1
    # without the exact solution, the fastest position falls back to the corner of the outer surface
    assert "outer surface" in fv.packing.positions[1].name


def test_a_case_filled_by_one_piece_behaves_as_the_piece():
    # Limit: one tray in a case just larger than it (void fraction 0.023), its tray wall as the case wall,
    # cools like the free tray: the effective k and density differ by a few per cent only.
    d = copy.deepcopy(PALLET)
    d["packing"] = {
        "arrangement": "case",
        "case_length_mm": 150,
        "case_width_mm": 100,
        "case_height_mm": 25.6,
        "pieces_per_case": 1,
        "wall": "polypropylene",
        "wall_thickness_mm": 0.5,
        "air_flow_factor": 1.0,
    }
    d["product"]["packaging"] = []
    d["start"]["temperature_C"] = 70
    d["steps"][0].update(
        equipment="chiller-b2", settings={"air_C": 0, "air_speed_m_s": 3.5}, duration_min=600
    )
    d["steps"][0]["stop_when_core_C"] = 5
    res = run_plan(plan_from_dict(d, library=LIB), library=LIB)
    centre, _, single = res.packing.positions
    assert abs(centre.time_to_target_s / single.time_to_target_s - 1) < 0.08


def test_less_air_at_the_load_and_the_safe_model_lengthen_the_centre_time():
    base = run_plan(_plan(VIALS), library=LIB).packing.positions[0].time_to_target_s
    full_air = run_plan(_plan(VIALS, air_flow_factor=1.0), library=LIB).packing.positions[0].time_to_target_s
    safe = run_plan(_plan(VIALS, conductivity_model="maxwell-eucken-air-continuous"), library=LIB)
    assert full_air < base < safe.packing.positions[0].time_to_target_s


def test_air_flow_below_the_machines_range_names_the_factor():
    plan = _plan(VIALS, air_flow_factor=0.2)
    with pytest.raises(InvalidInputError) as e:
        packed_plan(plan, LIB)
    assert e.value.field == "packing.air_flow_factor"
    assert ">= 0.333" in str(e.value)


def test_a_given_void_fraction_keeps_the_mass_of_the_count():
    counted = packed_plan(_plan(PALLET), LIB)[1]
    given = packed_plan(_plan(PALLET, void_fraction=0.5), LIB)[1]
    assert given.void_fraction == 0.5 and given.void_fraction_from == "given in the plan"
    assert given.k_W_mK < counted.k_W_mK
    assert given.load_mass_kg <= counted.load_mass_kg + 1e-9


def test_batch_counts_loads():
    plan, load = packed_plan(_plan(VIALS), LIB)
    assert plan.checks.pieces_per_batch == 25  # 5000 vials, 200 to a carton
    assert plan.packing is None and plan.product.name.endswith("(case)")


def test_time_to_reach_interpolates_and_handles_heating():
    assert time_to_reach_s([0, 10, 20], [20.0, 10.0, 4.0], 7.0, 20.0) == 15.0
    assert time_to_reach_s([0, 10, 20], [5.0, 50.0, 80.0], 72.0, 5.0) == pytest.approx(10 + 10 * 22 / 30)
    assert time_to_reach_s([0, 10], [20.0, 15.0], 7.0, 20.0) is None


def test_the_batch_sheet_shows_the_load_and_its_positions(pallet):
    import io

    from pypdf import PdfReader

    from procplan.files.site import load_site
    from procplan.output.sheet import batch_sheet_pdf

    pdf = batch_sheet_pdf(pallet, site=load_site(), date="2026-01-02")
    text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(pdf)).pages)
    assert "Packed load" in text and "1200 pieces" in text
    for p in pallet.packing.positions:
        assert p.name in text
    assert "emt" not in text  # planner's words, not model keys
