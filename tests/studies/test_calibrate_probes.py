"""Fitting one h (and the diffusivity) to several probes at once: curves generated here from the exact
product solution with a known h and diffusivity (an independent evaluation of the series at each probe's
position and start) are recovered within their intervals; the general (engine) model agrees."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.conduction.product import exact_temperature_at_C
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.model import FixedProperties, Plan, Product, Step
from procplan.studies.calibrate_probes import ProbeCurve, calibrate_probes

K, RHO, CP = 0.5, 1050.0, 3600.0


def _plan(h=25.0) -> Plan:
    prod = Product("cyl", Geometry("cylinder", diameter_m=0.06), fixed_properties=FixedProperties(K, RHO, CP))
    return Plan("cyl", prod, 70.0, (Step("chill", 4 * 3600.0, medium_C=0.0, h_W_m2K=h),))


def _curves(h_true, rho_factor=1.0, noise=0.05):
    g = Geometry("cylinder", diameter_m=0.06)
    t = np.arange(0.0, 3 * 3600.0, 60.0)
    rng = np.random.default_rng(5)
    out = []
    for label, start, pos in (("a", 70.0, 0.0), ("b", 66.0, 0.0), ("c", 70.0, 1.0)):
        y = exact_temperature_at_C(g, K, RHO / rho_factor, CP, h_true, start, 0.0, t, (pos,))
        out.append(ProbeCurve(label, t, y + rng.normal(0, noise, t.size), "core" if pos == 0 else "surface"))
    return out


def test_shared_h_of_three_probes_recovered():
    # Source: construction with the exact series (Incropera 7th ed. §5.6): h = 32 W/m²K on three probes
    # (two cores with different starts, one surface), 0.05 K noise; the fitted h's 95 % interval holds 32.
    cal = calibrate_probes(_plan(25.0), _curves(32.0))
    assert cal.h_ci95[0] <= 32.0 <= cal.h_ci95[1], cal
    assert_allclose(cal.h_W_m2K, 32.0, rtol=0.02)
    assert cal.rmse_K < 0.08 and set(cal.rmse_by_probe_K) == {"a", "b", "c"}
    assert cal.plan_h_W_m2K == pytest.approx(25.0)


def test_h_and_diffusivity_together():
    # Source: as above, with the diffusivity 1.2 times the plan's (ρ c_p divided by 1.2): both recovered.
    cal = calibrate_probes(_plan(25.0), _curves(32.0, rho_factor=1.2), fit=("h", "alpha_factor"))
    assert cal.h_ci95[0] <= 32.0 <= cal.h_ci95[1]
    assert cal.alpha_ci95[0] <= 1.2 <= cal.alpha_ci95[1]


def test_general_model_agrees_with_the_exact_model():
    # Independent method: the engine's finite-volume solver (forced) reads the same probes; h within 2 %.
    curves = _curves(32.0, noise=0.0)[:2]
    plan = replace(_plan(25.0), solver="finite-volume")
    cal = calibrate_probes(plan, curves, solver="finite-volume")
    assert cal.method.startswith("run_plan")
    assert_allclose(cal.h_W_m2K, 32.0, rtol=0.02)


def test_bad_input():
    with pytest.raises(InvalidInputError, match="position"):
        calibrate_probes(_plan(), [ProbeCurve("x", [0, 60, 120, 180, 240], [70, 60, 50, 45, 40], "lid")])
    with pytest.raises(InvalidInputError, match="fit"):
        calibrate_probes(_plan(), _curves(30.0), fit=("offset_mm",))
    with pytest.raises(InvalidInputError, match="x"):
        calibrate_probes(_plan(), [ProbeCurve("x", [0, 60], [70, 60])])
