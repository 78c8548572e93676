"""Calibration: recover known parameters from synthetic noisy curves within their confidence intervals;
measured-curve checks against procplan.outcomes."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.conduction.product import exact_temperature_at_C
from procplan.errors import InvalidInputError
from procplan.model import Checks, LethalityCheck
from procplan.outcomes import check_rule, f_value
from procplan.studies.calibrate import calibrate, fitted_h_record, measured_outcomes
from procplan.studies.logger import clean_logger, read_logger

from .conftest import cylinder_plan

T = np.arange(0.0, 4 * 3600.0 + 1, 60.0)


def _log(temps, decimal_comma=False):
    sep = ";" if decimal_comma else ","
    body = "\n".join(
        f"{a:.0f}{sep}" + (f"{b:.4f}".replace(".", ",") if decimal_comma else f"{b:.4f}")
        for a, b in zip(T, temps, strict=True)
    )
    return clean_logger(read_logger(f"time_s{sep}core\n" + body))


def test_recovers_known_h_within_its_interval():
    # Synthetic data: the exact cylinder solution (Incropera eq. 5.50, checked against Table 5.1 in
    # tests/conduction) with h = 18 W/m²K plus seeded N(0, 0.2 K) noise. The fit must hold h in its 95 %
    # interval, and the interval must be tight (< 1 % wide) for 241 points.
    g = cylinder_plan().product.geometry
    rng = np.random.default_rng(2)
    temps = exact_temperature_at_C(g, 0.5, 1050.0, 3600.0, 18.0, 70.0, 0.0, T, (0.0,)) + rng.normal(
        0, 0.2, T.size
    )
    cal = calibrate(cylinder_plan(), _log(temps, decimal_comma=True), start_C=70.0)
    lo, hi = cal.h_ci95
    assert lo < 18.0 < hi and (hi - lo) / 18.0 < 0.01
    assert cal.method.startswith("exact") and cal.plan_h_W_m2K == 25.0
    assert_allclose(cal.rmse_K, 0.2, rtol=0.15)  # residuals estimate the noise sd
    assert_allclose(cal.residuals["residual_K"].mean(), 0.0, atol=0.05)


def test_recovers_probe_offset_and_diffusivity_factor():
    g = cylinder_plan().product.geometry
    rng = np.random.default_rng(9)
    # probe 7.5 mm off centre (r* = 0.25), diffusivity 10 % high (rho cp / 1.1)
    temps = exact_temperature_at_C(g, 0.5, 1050.0 / 1.1, 3600.0, 18.0, 70.0, 0.0, T, (0.25,))
    temps = temps + rng.normal(0, 0.1, T.size)
    cal = calibrate(cylinder_plan(), _log(temps), fit=("h", "offset_mm", "alpha_factor"), start_C=70.0)
    assert cal.h_ci95[0] < 18.0 < cal.h_ci95[1]
    assert cal.offset_ci95[0] < 7.5 < cal.offset_ci95[1]
    assert cal.alpha_ci95[0] < 1.1 < cal.alpha_ci95[1]


def test_measured_outcomes_match_outcome_functions(rules_library):
    from dataclasses import replace

    g = cylinder_plan().product.geometry
    temps = exact_temperature_at_C(g, 0.5, 1050.0, 3600.0, 18.0, 70.0, 0.0, T, (0.0,))
    plan = replace(
        cylinder_plan("us-food-code-two-stage"),
        checks=Checks(
            cooling_rule="us-food-code-two-stage", lethality=LethalityCheck(preset="listeria-6log")
        ),
    )
    m = measured_outcomes(T, temps, plan, rules_library)
    rc = check_rule(rules_library.rules["us-food-code-two-stage"], T, temps)
    assert m["rule_passed"] == rc.passed and m["rule_margin_min"] == rc.margin_min
    assert m["F_min"] == pytest.approx(float(f_value(T, temps, 70.0, 7.5)[-1]))


def test_record_and_errors():
    g = cylinder_plan().product.geometry
    temps = exact_temperature_at_C(g, 0.5, 1050.0, 3600.0, 18.0, 70.0, 0.0, T, (0.0,))
    cal = calibrate(cylinder_plan(), _log(temps))
    rec = fitted_h_record(cal, product="cyl", data_source="trial 3, line 2", date="2026-01-15")
    assert (
        rec["value"] == cal.h_W_m2K
        and rec["date"] == "2026-01-15"
        and rec["data_source"] == "trial 3, line 2"
    )
    assert_allclose(rec["value"], 18.0, rtol=1e-4)  # noise-free: the fit returns the generating h
    with pytest.raises(InvalidInputError):
        fitted_h_record(cal, product="cyl", date="15/01/2026")
    with pytest.raises(InvalidInputError):
        calibrate(cylinder_plan(), _log(temps), fit=("k",))
    with pytest.raises(InvalidInputError):
        calibrate(cylinder_plan(), _log(temps), channel="nope")
