"""Every valid plan ends: the work budget checked before a run, the time-step cap during it, and the energy
balance that reruns a step finer and marks the run unreliable when it stays off."""

from __future__ import annotations

import json

import pytest

from procplan import cli
from procplan.conduction import finite_volume
from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.plan import load_plan, plan_from_dict, save_plan
from procplan.output.report import summary_dict, summary_text
from procplan.output.sheet_layout import Styles
from procplan.output.sheet_outcomes import provenance_section
from procplan.run import budget, engine
from procplan.run.engine import run_plan

LIB = load_library()
FIXED = {"k_W_mK": 0.5, "rho_kg_m3": 1050.0, "cp_J_kgK": 3600.0}
SLAB = {"shape": "slab", "thickness_mm": 40}
BRICK = {"shape": "brick", "length_mm": 120, "width_mm": 80, "height_mm": 40}


def _plan(dims, h=500.0, minutes=90.0):
    return plan_from_dict(
        {
            "title": "budget check",
            "product": {"name": "fixed", **dims, "fixed_properties": FIXED},
            "start": {"temperature_C": 70.0},
            "steps": [{"name": "chill", "h_W_m2K": h, "medium_C": 2.0, "duration_min": minutes}],
        }
    )


def _no_solve(*args, **kwargs):
    raise AssertionError("the solver ran although the plan is over the budget")


def test_a_plan_over_the_work_budget_is_refused_by_name_before_any_solve(monkeypatch):
    # the engine imports the solver where it runs it, so the solver is replaced where it is defined
    monkeypatch.setattr(finite_volume, "solve_conduction", _no_solve)
    plan = _plan(BRICK)
    # 41³ = 68 921 cells × 1000 expected adaptive steps = 6.9e7 cell-steps > 2e7
    with pytest.raises(InvalidInputError) as err:
        run_plan(plan, solver="finite-volume", n_nodes=41)
    assert err.value.field == "steps[0] (chill)"
    assert "coarser grid" in str(err.value) and "exact" in str(err.value)
    # a fixed time step giving more steps than the per-step cap: 5400 s / 0.2 s = 27 000 > 20 000
    with pytest.raises(InvalidInputError, match="at most 20000 time steps") as err:
        run_plan(_plan(SLAB), solver="finite-volume", dt_s=0.2)
    assert err.value.field == "steps[0] (chill)"


def test_the_estimate_counts_cells_and_time_steps():
    plan = _plan(SLAB)
    (w,) = budget.estimate_work(plan, "finite-volume", n_nodes=21, dt_s=60.0)
    assert (w.cells, w.time_steps) == (21, 90)
    (w,) = budget.estimate_work(plan, "auto")
    assert (w.cells, w.time_steps) == (41, budget.ADAPTIVE_STEPS_ESTIMATE)
    assert budget.estimate_work(plan, "exact", n_nodes=401, dt_s=0.01) == []


@pytest.mark.parametrize("name", sorted(LIB.plans))
def test_demo_plans_stay_within_the_budget(name):
    plan = load_plan(LIB.plans[name], LIB)
    work = budget.check_work_budget(plan, plan.solver)
    assert 0 <= work <= budget.WORK_BUDGET_CELL_STEPS / 5


def test_the_time_step_cap_stops_a_run_with_the_same_clear_error(monkeypatch):
    # the cap as the engine passes it to the solver, lowered so that the adaptive run reaches it
    monkeypatch.setattr(engine, "MAX_TIME_STEPS_PER_STEP", 5)
    with pytest.raises(InvalidInputError, match="after 5 time steps") as err:
        run_plan(_plan(SLAB), solver="finite-volume")
    assert err.value.field == "chill"
    assert "coarser grid" in str(err.value)


def _coarse():
    # a 45-min fixed time step over a 90-min step with h = 500 W/m²K: the trapezoidal heat integral is far off,
    # and so it stays with the 4× finer rerun
    return run_plan(_plan(SLAB), solver="finite-volume", n_nodes=5, dt_s=2700.0)


def test_a_coarse_run_is_rerun_finer_and_marked_unreliable_in_every_output():
    res = _coarse()
    sr = res.steps[0]
    assert sr.details.time_steps == 2 * budget.TIME_REFINEMENT  # the rerun's steps
    assert sr.energy_balance_error > budget.ENERGY_BALANCE_LIMIT
    assert len(res.unreliable_reasons) == 1 and sr.unreliable_reason == res.unreliable_reasons[0]
    reason = res.unreliable_reasons[0]
    assert reason.startswith("chill: energy-balance error") and "finer time step" in reason
    assert reason in res.warnings  # the app's and the sheet's warnings list
    assert f"UNRELIABLE: {reason}" in summary_text(res)
    data = json.loads(json.dumps(summary_dict(res)))
    assert data["unreliable_reasons"] == [reason] and data["steps"][0]["unreliable_reason"] == reason
    texts = [getattr(f, "text", "") for f in provenance_section(res, None, Styles(8.0), 500.0, "0" * 64)]
    assert any(t.startswith("Unreliable run: ") and "energy-balance error" in t for t in texts)


def test_a_step_put_right_by_the_finer_rerun_is_not_marked():
    # 600 s fixed steps leave the balance off by more than 1 %; the rerun's 150 s steps bring it within
    plan = _plan(SLAB, h=25.0)
    first = run_plan(plan, solver="finite-volume", n_nodes=11, dt_s=600.0)
    assert first.steps[0].details.time_steps == 36  # 9 steps × 4: it was rerun
    assert first.steps[0].energy_balance_error <= budget.ENERGY_BALANCE_LIMIT
    assert first.unreliable_reasons == ()


def test_a_normal_demo_plan_is_not_marked():
    plan = load_plan(LIB.plans["soup-pouch-pasteurise"], LIB)
    res = run_plan(plan, library=LIB)
    assert res.unreliable_reasons == ()
    assert all(sr.unreliable_reason is None for sr in res.steps)
    assert summary_dict(res)["unreliable_reasons"] == []


def test_strict_run_exits_1_for_an_unreliable_run(tmp_path, monkeypatch, capsys):
    path = save_plan(_plan(SLAB), tmp_path / "p.toml")
    assert cli.main(["run", str(path), "--strict"]) == 0
    capsys.readouterr()

    def coarse_run(plan, **kwargs):
        return run_plan(plan, **kwargs, n_nodes=5, dt_s=2700.0)

    monkeypatch.setattr(engine, "run_plan", coarse_run)
    assert cli.main(["run", str(path), "--solver", "finite-volume"]) == 0
    assert "UNRELIABLE: chill" in capsys.readouterr().out
    assert cli.main(["run", str(path), "--solver", "finite-volume", "--strict"]) == 1
