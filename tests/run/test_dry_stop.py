"""Drying to a weight loss: the stop ends the step at the stated loss, the loss is the water that left through
the surface (mass balance), the stop time converges as the grid is refined, and a stop where no moisture model
runs, or beyond what the product's water allows, is refused by name."""

from dataclasses import replace

import numpy as np
import pytest

from procplan.conduction.fv_boundary import SurfaceBoundary
from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.plan import load_plan, plan_from_dict, plan_to_dict
from procplan.files.steps import step_from_dict, step_to_dict
from procplan.geometry import Geometry
from procplan.output.report import summary_dict, summary_text
from procplan.output.sheet_data import weight_checkpoints
from procplan.properties.sorption import ISOTHERMS, MOISTURE_DIFFUSIVITIES, dry_basis
from procplan.properties.table import PropertyTable
from procplan.run.dry_oven import SURFACE_TOLERANCE_K, DryOvenModel, solve_dry_oven
from procplan.run.dry_stop import WEIGHT_STOP_TOLERANCE, largest_loss_fraction, solve_to_weight_loss
from procplan.run.engine import run_plan
from procplan.surface.oven_air import DryingAir

JERKY = "product_library/plans/beef-jerky-dry.toml"


@pytest.fixture(scope="module")
def library():
    return load_library()


@pytest.fixture(scope="module")
def jerky(library):
    plan = load_plan(JERKY, library=library)
    return plan, run_plan(plan, library=library)


# a 6 mm beef strip (72 % water) in 70 °C air with a 20 °C dew point, convection 16 W/m²K: the demo's drying
# air, solved directly on a short span so that refinement stays cheap
WATER = 0.72
RHO = 1067.0
STRIP = Geometry("slab", thickness_m=0.006, length_m=0.15, width_m=0.04)


def _model():
    air = DryingAir(70.0, 20.0, 16.0)
    return DryOvenModel(
        air, ISOTHERMS["beef"], MOISTURE_DIFFUSIVITIES["beef"], dry_basis(WATER), RHO * (1.0 - WATER)
    )


def _to_loss(fraction, n_nodes=21, moisture_nodes=41, end_s=5400.0):
    model = _model()
    props = PropertyTable.constant(0.5, RHO, 3500.0)
    mass = RHO * STRIP.volume_m3

    def solve(span_s, guess=None, **coupling):
        return solve_dry_oven(
            STRIP,
            props,
            4.0,
            SurfaceBoundary.constant(70.0, 22.0),
            model,
            span_s,
            n_nodes=n_nodes,
            moisture_nodes=moisture_nodes,
            guess=guess,
            **coupling,
        )

    return solve_to_weight_loss(solve, STRIP, end_s, fraction * mass), model, mass


@pytest.fixture(scope="module")
def strip_to_20():
    return _to_loss(0.20)


def test_the_stop_ends_the_step_at_the_stated_loss_with_the_coupling_settled(strip_to_20):
    res, _, mass = strip_to_20
    assert res.weight_stop_s is not None and 0.0 < res.weight_stop_s < 5400.0
    assert res.heat.time_s[-1] == pytest.approx(res.weight_stop_s)
    assert res.lost_kg / mass == pytest.approx(0.20, rel=WEIGHT_STOP_TOLERANCE)
    assert res.surface_change_K < SURFACE_TOLERANCE_K  # converged on the shortened step itself


def test_weight_loss_is_the_integrated_surface_flux_and_the_water_held(strip_to_20):
    # Invariant (mass balance): the water lost equals ∫ n″(T_s, a_w(X_s)) dt × area — the evaporation flux of
    # the surface history, integrated here independently of the solver — and the fall of the water held
    res, model, _ = strip_to_20
    m = res.moisture
    ts = np.interp(m.time_s, res.heat.time_s, res.heat.face_surface_C)
    flux = model.air.mass_flux_kg_m2s(ts, model.isotherm.water_activity(m.surface_kg_kg))
    integrated = np.trapezoid(flux, m.time_s) * STRIP.area_m2
    assert integrated == pytest.approx(res.lost_kg, rel=0.005)
    held = (model.initial_kg_kg - m.mean_kg_kg[-1]) * model.dry_matter_kg_m3 * STRIP.volume_m3
    assert held == pytest.approx(res.lost_kg, rel=0.005)


def test_the_stop_time_converges_under_refinement(strip_to_20):
    coarse = strip_to_20[0].weight_stop_s
    fine = _to_loss(0.20, n_nodes=41, moisture_nodes=81)[0].weight_stop_s
    # Invariant (convergence): doubling both grids moves the stop time by less than 2 %
    assert fine == pytest.approx(coarse, rel=0.02)


def test_a_loss_not_reached_runs_the_whole_step():
    res, _, mass = _to_loss(0.20, end_s=600.0)
    assert res.weight_stop_s is None and res.lost_kg / mass < 0.20


def test_demo_jerky_dries_to_its_loss_and_reports_it(jerky):
    plan, res = jerky
    sr = res.steps[0]
    d = sr.drying
    assert d.stop_weight_loss_percent == 45.0
    assert d.weight_loss_percent == pytest.approx(45.0, rel=WEIGHT_STOP_TOLERANCE)
    assert sr.stopped and sr.stop_time_s == pytest.approx(sr.end_s) and sr.end_s < 360 * 60
    assert d.mass_balance_error < 0.005 and d.converged
    # the yield is what is left of the evaporated piece
    assert d.yield_percent == pytest.approx(100.0 - d.weight_loss_percent)
    assert res.outcomes.yield_percent == pytest.approx(d.yield_percent)
    ws = summary_dict(res)["steps"][0]["weight_loss_stop"]
    assert ws["reached"] and ws["time_min"] == pytest.approx(sr.end_s / 60, abs=0.01)
    assert "weight-loss stop 45 %: reached after" in summary_text(res)
    cps = weight_checkpoints(res)
    losses = [c.weight_loss_percent for c in cps]
    assert len(cps) == 4 and losses == sorted(losses) and losses[-1] == pytest.approx(d.weight_loss_percent)
    # the expected piece weight is the piece less its loss
    assert cps[-1].piece_kg == pytest.approx(res.piece_mass_kg * (1 - losses[-1] / 100), rel=1e-9)


def test_demo_declared_mass_is_geometry_times_density(jerky):
    plan, res = jerky
    assert res.piece_mass_kg * 1000 == pytest.approx(39.0, rel=0.05)  # "about 39 g" in the description


def test_the_key_round_trips_and_is_checked_in_the_file():
    raw = {"name": "dry", "equipment": "dryer-d1", "duration_min": 60, "stop_when_weight_loss_percent": 30}
    step = step_from_dict(raw, 0)
    assert step.stop_when_weight_loss_fraction == pytest.approx(0.30)
    assert step_to_dict(step)["stop_when_weight_loss_percent"] == 30
    for bad in (0, 100, -5, "a lot"):
        with pytest.raises(InvalidInputError) as err:
            step_from_dict({**raw, "stop_when_weight_loss_percent": bad}, 0)
        assert "steps[0].stop_when_weight_loss_percent" in str(err.value)
    # the weight-loss stop alone ends a step (no duration needed)
    raw.pop("duration_min")
    assert step_from_dict(raw, 0).stop_when_weight_loss_fraction == pytest.approx(0.30)


def test_a_loss_above_the_products_water_is_refused_by_name(library):
    data = plan_to_dict(load_plan(JERKY, library=library))
    data["steps"][0]["stop_when_weight_loss_percent"] = 80  # the strip holds 72 % water
    with pytest.raises(InvalidInputError) as err:
        plan_from_dict(data, library=library)
    assert "steps[0].stop_when_weight_loss_percent" in str(err.value) and "72" in str(err.value)


def test_a_loss_beyond_the_equilibrium_with_the_air_is_refused(library):
    plan = load_plan(JERKY, library=library)
    largest = largest_loss_fraction(_model())
    # the air at 70 °C with a 20 °C dew point (RH 11 %) leaves the lean-beef isotherm's X_e in the product
    assert 0.6 < largest < WATER
    step = replace(plan.steps[0], stop_when_weight_loss_fraction=0.5 * (largest + WATER))
    with pytest.raises(InvalidInputError) as err:
        run_plan(replace(plan, steps=(step,)), library=library)
    assert err.value.field == "steps[0].stop_when_weight_loss_percent"
    assert "equilibrium with the air" in str(err.value)


def test_a_wrapped_product_refuses_the_stop(library):
    plan = load_plan(JERKY, library=library)
    wrapped = replace(plan, product=replace(plan.product, unwrapped=False))
    with pytest.raises(InvalidInputError) as err:
        run_plan(wrapped, library=library)
    assert err.value.field == "steps[0].stop_when_weight_loss_percent"
    assert "no moisture model runs" in str(err.value)


def test_a_wet_medium_refuses_the_stop():
    plan = plan_from_dict(
        {
            "title": "brine with a weight stop",
            "product": {
                "name": "strip",
                "shape": "slab",
                "thickness_mm": 6,
                "category": "meat",
                "unwrapped": True,
                "composition": {
                    "water": 0.72,
                    "protein": 0.21,
                    "fat": 0.04,
                    "carbohydrate": 0.01,
                    "ash": 0.02,
                },
            },
            "start": {"temperature_C": 4},
            "steps": [
                {
                    "name": "soak",
                    "h_W_m2K": 200,
                    "medium_C": 4,
                    "duration_min": 60,
                    "stop_when_weight_loss_percent": 10,
                }
            ],
        }
    )
    with pytest.raises(InvalidInputError, match="no moisture model runs"):
        run_plan(plan)


def test_sheet_lists_the_weight_checkpoints_and_the_cli_the_stop(jerky, capsys):
    import io

    from pypdf import PdfReader

    from procplan import cli
    from procplan.caution import CAUTION
    from procplan.files.site import load_site
    from procplan.output.sheet import MAX_PAGES, batch_sheet_pdf

    plan, res = jerky
    pdf = batch_sheet_pdf(res, site=load_site(), date="2026-03-02")
    pages = PdfReader(io.BytesIO(pdf)).pages
    text = " ".join(" ".join(p.extract_text().split()) for p in pages)
    assert len(pages) <= MAX_PAGES
    assert "Weight checkpoints (weigh pieces)" in text
    for c in weight_checkpoints(res):
        assert f"{c.weight_loss_percent:.1f} %" in text and f"{c.piece_kg * 1000:.0f} g" in text
    assert " ".join(CAUTION.split())[:60] in text
    assert "_" not in text.split("Weight checkpoints")[1].split("Weigh the same")[0]
    # the CLI's run prints the same summary line as summary_text
    assert cli.main(["run", JERKY]) == 0
    out = capsys.readouterr().out
    assert "weight-loss stop 45 %: reached after" in out and "yield" in out
