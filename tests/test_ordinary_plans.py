"""Ordinary plans that once failed: a product loaded at the medium temperature, and a rule band open at one end."""

from __future__ import annotations

from procplan.files.library import load_library
from procplan.files.plan import plan_from_dict
from procplan.output.report import summary_dict, summary_text
from procplan.run.engine import run_plan

LIB = load_library()


def _plan(start_C, step, checks=None):
    data = {"title": "t", "product": {"library": "vaccine-vial-10ml"}, "start": {"temperature_C": start_C}}
    data["steps"] = [step]
    if checks:
        data["checks"] = checks
    return plan_from_dict(data, library=LIB)


def test_a_product_loaded_at_the_medium_temperature_runs_and_balances():
    # Before: energy_summary refused enthalpy_change_J_kg = 0.0 and the run failed with an invalid-input error.
    # Check: nothing crosses the surface and the enthalpy does not change, so every temperature stays at 5 °C
    # and the energy balance is exactly closed (hand calculation: 0 J in, 0 J of enthalpy change).
    plan = _plan(
        5.0, {"name": "cold room", "equipment": "pharma-cr1", "settings": {"air_C": 5}, "duration_min": 60}
    )
    result = run_plan(plan, library=LIB)
    h = result.history
    for col in ("core_C", "surface_C", "mean_C"):
        assert abs(h[col] - 5.0).max() < 1e-9
    assert result.outcomes.energy.balance_error == 0.0


def test_a_band_open_at_one_end_reads_in_the_summary_text(tmp_path, capsys):
    # Before: the shipped uk-cook-chill-90-min rule (band "not below 0 °C", no upper limit) made summary_text
    # raise TypeError while JSON, sheet and app coped.
    plan = plan_from_dict(
        {
            "title": "roulade to the UK cook-chill rule",
            "product": {"library": "chicken-roulade"},
            "start": {"temperature_C": 70},
            "steps": [{"name": "chill", "h_W_m2K": 25, "medium_C": 0, "duration_min": 120}],
            "checks": {"cooling_rule": "uk-cook-chill-90-min"},
        },
        library=LIB,
    )
    result = run_plan(plan, library=LIB)
    text = summary_text(result)
    assert "band ≥ 0 °C" in text
    bands = summary_dict(result)["outcomes"]["rule_check"]["bands"]
    assert bands[0]["band"]["low_C"] == 0.0 and bands[0]["band"]["high_C"] is None
