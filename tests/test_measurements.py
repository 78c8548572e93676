"""A fitted h saved to the library as a measured value wins over the correlation for that product and machine."""

from __future__ import annotations

import shutil

import numpy as np
import pytest

from procplan.files.library import DEMO_LIBRARY, load_library, save_measurement
from procplan.files.plan import plan_from_dict
from procplan.run.engine import run_plan
from procplan.studies.calibrate import calibrate, fitted_h_record
from procplan.studies.logger import read_logger


def _plan(lib, settings):
    return plan_from_dict(
        {
            "title": "vials in the cold room",
            "product": {"library": "vaccine-vial-10ml"},
            "start": {"temperature_C": 22.0},
            "steps": [
                {"name": "cold room", "equipment": "pharma-cr1", "settings": settings, "duration_min": 90}
            ],
        },
        library=lib,
    )


def test_fitted_h_is_saved_and_then_used_by_the_machine_at_those_settings(tmp_path):
    root = tmp_path / "lib"
    shutil.copytree(DEMO_LIBRARY, root)
    lib = load_library(root)
    settings = {"air_C": 5.0, "air_speed_m_s": 0.3}
    plan = _plan(lib, settings)
    # Synthetic trial: the same plan with the surface given as h = 11 W/m²K (independent of the correlation),
    # sampled every minute with seeded 0.1 K noise; the fit must recover it within its interval.
    truth = plan_from_dict(
        {
            "title": "truth",
            "product": {"library": "vaccine-vial-10ml"},
            "start": {"temperature_C": 22.0},
            "steps": [{"name": "s", "h_W_m2K": 11.0, "medium_C": 5.0, "duration_min": 90}],
        },
        library=lib,
    )
    hist = run_plan(truth, library=lib).history
    t = np.arange(0, 90 * 60 + 1, 60.0)
    core = np.interp(t, hist["time_s"], hist["core_C"]) + np.random.default_rng(3).normal(0, 0.1, t.size)
    csv = "time_s,probe_C\n" + "\n".join(f"{a:.0f},{b:.3f}" for a, b in zip(t, core, strict=True))
    cal = calibrate(plan, read_logger(csv), library=lib)
    lo, hi = cal.h_ci95
    assert lo <= 11.0 <= hi, (cal.h_W_m2K, cal.h_ci95)
    rec = fitted_h_record(
        cal,
        product="vaccine-vial-10ml",
        equipment="pharma-cr1",
        settings=settings,
        date="2026-11-30",
        data_source="trial 30 Nov",
    )
    path = save_measurement(root, rec)
    assert path.name == "vaccine-vial-10ml--pharma-cr1--2026-11-30.toml"
    first = path.read_text()
    # a second trial of the same day gets its own file and never replaces the saved record
    again = save_measurement(root, rec)
    assert again.name == "vaccine-vial-10ml--pharma-cr1--2026-11-30-2.toml"
    assert path.read_text() == first
    lib2 = load_library(root)
    assert lib2.problems == [] and len(lib2.measurements) == 2
    res = run_plan(_plan(lib2, settings), library=lib2)
    assert res.steps[0].surface.h_W_m2K[0] == pytest.approx(cal.h_W_m2K)
    assert "measured h" in res.steps[0].surface.breakdown.source
    # at other settings the measurement does not apply and the correlation is used
    other = run_plan(_plan(lib2, {"air_C": 3.0, "air_speed_m_s": 0.8}), library=lib2)
    assert "measured" not in other.steps[0].surface.breakdown.source


def test_a_bad_measurement_file_is_listed_and_the_rest_loads(tmp_path):
    root = tmp_path / "lib"
    shutil.copytree(DEMO_LIBRARY, root)
    (root / "measurements").mkdir(exist_ok=True)
    (root / "measurements" / "bad.toml").write_text(
        'quantity = "h_W_m2K"\nvalue = -3\nproduct = "nothing"\ndate = "yesterday"\n'
    )
    lib = load_library(root)
    assert len(lib.products) >= 12
    [problem] = lib.problems
    assert "value" in problem.reason and "product" in problem.reason and "date" in problem.reason
