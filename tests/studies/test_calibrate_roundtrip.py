"""Calibration round trip: fed with a plan's own predicted core curve, calibrate returns the plan's effective h
(packaging included, as the solvers apply it), and saving that h as a measurement leaves the rerun unchanged —
on the 1-D finite-volume, 2-D finite-volume and exact-solution paths."""

from __future__ import annotations

import json
import shutil
from dataclasses import replace

import numpy as np
import pytest

from procplan.cli import main
from procplan.errors import InvalidInputError
from procplan.files.library import DEMO_LIBRARY, load_library, save_measurement, save_product
from procplan.files.plan import save_plan
from procplan.geometry import Geometry
from procplan.model import FixedProperties, Load, Plan, Product, Step
from procplan.run.engine import run_plan
from procplan.studies.calibrate import calibrate, fitted_h_record
from procplan.studies.logger import clean_logger, read_logger
from procplan.surface.layers import PackagingLayer

from .conftest import cylinder_plan


@pytest.fixture()
def lib_root(tmp_path):
    root = tmp_path / "library"
    shutil.copytree(DEMO_LIBRARY, root)
    return root


def _first_step(lib, name):
    # The calibration fits h with the machine's medium at its set point, so the plan's own curve is the
    # empty-machine run (the loaded soup bath drifts below its set point; see test_loaded_plan_is_fitted_...).
    plan = lib.plan(name)
    return replace(plan, steps=plan.steps[:1], load=Load(model="set-point"))


def _own_curve_text(result) -> str:
    h = result.history
    return "time_s,core\n" + "\n".join(
        f"{a:.4f},{b:.6f}" for a, b in zip(h["time_s"], h["core_C"], strict=True)
    )


def _round_trip(plan, root, n_nodes=None):
    """Calibrate on the plan's own prediction, save the h, rerun: (calibration, record, largest change [K])."""
    lib = load_library(root)
    before = run_plan(plan, library=lib, n_nodes=n_nodes)
    log = clean_logger(read_logger(_own_curve_text(before)))
    cal = calibrate(plan, log, library=lib, n_nodes=n_nodes)
    step = plan.steps[0]
    rec = fitted_h_record(
        cal, product=plan.product.name, equipment=step.equipment, settings=step.settings_dict
    )
    save_measurement(root, rec)
    lib2 = load_library(root)
    after = run_plan(plan, library=lib2, n_nodes=n_nodes)
    assert after.steps[0].surface.breakdown.source.startswith("measured h")  # the record applies
    t = before.history["time_s"].to_numpy()
    moved = np.interp(t, after.history["time_s"].to_numpy(), after.history["core_C"].to_numpy())
    return cal, rec, float(np.max(np.abs(moved - before.history["core_C"].to_numpy())))


def test_packaged_soup_1d_finite_volume_round_trip(lib_root):
    # Regression: the fit ran the trial h as a convective h (packaging added again) while the plan's h and the
    # saved record are effective, so the plan's own curve gave h_conv (692) instead of h_eff (519.5).
    plan = _first_step(load_library(lib_root), "soup-pouch-pasteurise")
    cal, rec, change_K = _round_trip(plan, lib_root)
    surface = cal.prediction.steps[0].surface.breakdown
    assert cal.prediction.steps[0].solver == "finite-volume"
    assert plan.product.geometry.shape == "slab"
    assert surface.packaging_resistance_m2K_W > 0
    assert cal.h_W_m2K == pytest.approx(cal.plan_h_W_m2K, rel=0.01)
    assert cal.plan_h_W_m2K == pytest.approx(surface.h_eff_W_m2K)
    assert abs(cal.h_W_m2K - surface.h_conv_W_m2K) > 0.1 * surface.h_conv_W_m2K
    assert cal.h_outside_W_m2K == pytest.approx(surface.h_conv_W_m2K, rel=0.01)
    assert rec["h_basis"] == "effective" and "packaging" in rec["basis"]
    assert rec["packaging_resistance_m2K_W"] == pytest.approx(surface.packaging_resistance_m2K_W)
    assert change_K < 0.05


def test_packaged_roulade_2d_finite_volume_round_trip(lib_root):
    plan = _first_step(load_library(lib_root), "roulade-blast-chill")
    cal, rec, change_K = _round_trip(plan, lib_root, n_nodes=(10, 10))
    surface = cal.prediction.steps[0].surface.breakdown
    assert plan.product.geometry.shape == "finite-cylinder"
    assert cal.prediction.steps[0].solver == "finite-volume"
    assert surface.packaging_resistance_m2K_W > 0 and surface.h_rad_W_m2K > 0
    assert cal.h_W_m2K == pytest.approx(cal.plan_h_W_m2K, rel=0.01)
    assert change_K < 0.05


def test_exact_solution_round_trip_with_packaging(lib_root):
    product = Product(
        "test-slab",
        Geometry("slab", thickness_m=0.03),
        fixed_properties=FixedProperties(0.5, 1050.0, 3600.0),
        packaging=(PackagingLayer("film", 0.2e-3, 0.2),),
    )
    save_product(lib_root, product)
    lib = load_library(lib_root)
    step = Step(
        "bath", 1800.0, equipment="waterbath-w2", settings=(("water_C", 80.0), ("water_speed_m_s", 0.1))
    )
    plan = Plan("slab", lib.products["test-slab"], 10.0, (step,))
    cal, rec, change_K = _round_trip(plan, lib_root)
    assert cal.method.startswith("exact") and cal.packaging_resistance_m2K_W == pytest.approx(1e-3)
    assert cal.h_W_m2K == pytest.approx(cal.plan_h_W_m2K, rel=0.01)
    assert change_K < 0.05


def test_cli_states_the_h_basis_in_output_and_saved_record(lib_root, tmp_path, capsys):
    lib = load_library(lib_root)
    plan = _first_step(lib, "soup-pouch-pasteurise")
    log = tmp_path / "soup.csv"
    log.write_text(_own_curve_text(run_plan(plan, library=lib)))
    plan_file = save_plan(plan, tmp_path / "soup.toml")
    args = ["--library", str(lib_root), "calibrate", str(log), "--plan", str(plan_file), "--record"]
    assert main([*args, "soup-pouch", "--json", "--save"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["h_basis"] == "effective" and out["record"]["h_basis"] == "effective"
    assert out["h_W_m2K"] == pytest.approx(out["plan_h_W_m2K"], rel=0.01)
    saved = open(out["record_saved_to"], encoding="utf-8").read()
    assert 'h_basis = "effective"' in saved and "packaging_resistance_m2K_W" in saved
    assert main([*args, "soup-pouch"]) == 0
    assert "effective h" in capsys.readouterr().out


@pytest.mark.parametrize(
    "body, problem",
    [
        ("0,70\n60,69\n120,68\n", "samples"),  # short
        ("0,70\n60,70\n120,70.1\n180,70\n240,70\n300,70\n", "change"),  # flat
    ],
)
def test_short_or_flat_curve_names_the_channel(body, problem):
    with pytest.raises(InvalidInputError) as exc:
        calibrate(cylinder_plan(), clean_logger(read_logger("time_s,core\n" + body)))
    assert exc.value.field == "log.core" and problem in str(exc.value)


def test_curve_insensitive_to_h_raises_invalid_input():
    # Two minutes of a 60 mm cylinder: the core has not moved yet, whatever h is (the start transient only).
    t = np.arange(0.0, 121.0, 10.0)
    body = "\n".join(
        f"{a:g},{70.0 - 0.1 * (a / 120.0) + (0.6 if i == 6 else 0.0):.4f}" for i, a in enumerate(t)
    )
    with pytest.raises(InvalidInputError) as exc:
        calibrate(cylinder_plan(), clean_logger(read_logger("time_s,core\n" + body)), start_C=70.0)
    assert exc.value.field == "log.core"


def test_loaded_plan_is_fitted_at_the_set_point_and_says_so(lib_root):
    # A loaded bath that cannot hold its set point: the fit runs the empty machine and notes the drift it absorbs
    lib = load_library(lib_root)
    plan = _first_step(lib, "soup-pouch-pasteurise")
    loaded = replace(plan, load=Load(model="loaded"))
    before = run_plan(plan, library=lib)
    cal = calibrate(loaded, clean_logger(read_logger(_own_curve_text(before))), library=lib)
    assert cal.h_W_m2K == pytest.approx(cal.plan_h_W_m2K, rel=0.01)
    assert any("set point" in n for n in cal.notes)
