"""Brining steps in a plan: salt stops, the freezing point carried on, the history columns."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from procplan.conduction import diffusion
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.model import Brine, Plan, Product, Step
from procplan.properties.salting import equilibrium_fraction, salted_freezing_point_C
from procplan.run.engine import run_plan

PORK = (
    ("water", 0.73),
    ("protein", 0.22),
    ("fat", 0.04),
    ("carbohydrate", 0.0),
    ("fiber", 0.0),
    ("ash", 0.01),
)
SLAB = Geometry("slab", thickness_m=0.02, length_m=0.15, width_m=0.09)


def _plan(brine: Brine, *more: Step, start_C: float = 5.0, geometry=SLAB) -> Plan:
    product = Product("loin", geometry, composition=PORK)
    step = Step("brine", 3 * 24 * 3600.0, medium_C=5.0, h_W_m2K=150.0, brine=brine)
    return Plan("brining", product, start_C, (step, *more))


def test_core_salt_stop_matches_the_series_inverse():
    # Constant D and k_m: the stop time is the series' time to the core concentration (Crank's sheet through
    # procplan.conduction.diffusion, checked against Crank in tests/conduction/test_diffusion.py); 1 %.
    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10, k_m_m_s=2e-6, stop_when_core_fraction=0.012)
    r = run_plan(_plan(brine))
    m = r.steps[0].mass
    c_eq = equilibrium_fraction(0.1, 0.73)
    want = diffusion.time_to_centre_concentration(SLAB, 1.9e-10, 0.0, c_eq, 0.012, k_m_m_s=2e-6)
    assert m.stopped_at_s == pytest.approx(want, rel=1e-2)
    assert r.steps[0].duration_s == pytest.approx(m.stopped_at_s, rel=1e-9)
    assert m.core_fraction[-1] == pytest.approx(0.012, abs=1e-5)
    assert m.mass_balance_error < 5e-3
    # the uptake in kg per piece is the mean content change times the piece's mass
    assert m.uptake_kg[-1] == pytest.approx(m.mean_fraction[-1] * r.piece_mass_kg, rel=5e-3)


def test_mean_target_time_and_the_bounds():
    brine = Brine(brine_fraction=0.1, diffusivity="salt-pork-loin", target_mean_fraction=0.02)
    m = run_plan(_plan(brine)).steps[0].mass
    c_eq = equilibrium_fraction(0.1, 0.73)
    assert 0.0 < m.target_mean_reached_s < m.time_s[-1]
    assert np.all((m.core_fraction >= -1e-9) & (m.surface_fraction <= c_eq * (1 + 1e-6)))
    assert np.all(np.diff(m.mean_fraction) >= -1e-9)
    assert "analogy" in m.k_m_source and m.mass_biot > 10.0
    # the analogy's k_m lies between no surface resistance and a much smaller coefficient
    t = m.target_mean_reached_s
    fast = diffusion.uptake_fraction(SLAB, 1.9e-10, [t])[0] * c_eq
    assert 0.02 <= fast * (1 + 1e-3)


def test_salt_lowers_the_freezing_point_of_the_later_steps():
    freeze = Step("freeze", 4 * 3600.0, medium_C=-35.0, h_W_m2K=25.0, stop_when_core_C=-18.0)
    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10, stop_when_core_fraction=0.01)
    salted = run_plan(_plan(brine, freeze))
    plain = run_plan(
        replace(
            _plan(brine, freeze),
            steps=(replace(salted.plan.steps[0], brine=None, duration_s=salted.steps[0].duration_s), freeze),
        )
    )
    m = salted.steps[0].mass
    tf0 = plain.properties.initial_freezing_C
    want = salted_freezing_point_C(tf0, m.mean_fraction[-1], 0.73)
    assert salted.properties.initial_freezing_C == pytest.approx(want, abs=1e-9)
    assert want < tf0 - 1.0
    assert "lowers the initial freezing point" in m.freezing_note
    # with the freezing point lower, the latent heat comes out nearer the medium: the salted piece takes longer
    assert salted.steps[1].duration_s > plain.steps[1].duration_s


def test_history_columns_follow_the_salt_and_hold_after():
    rest = Step("rest", 3600.0, medium_C=5.0, h_W_m2K=10.0)
    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10, initial_fraction=0.001, stop_when_mean_fraction=0.02)
    r = run_plan(_plan(brine, rest))
    h = r.history
    assert h["mean_salt_percent"].iloc[0] == pytest.approx(0.1)
    b = h[h["step_index"] == 0]
    assert b["mean_salt_percent"].iloc[-1] == pytest.approx(2.0, abs=0.01)
    after = h[h["step_index"] == 1]
    assert np.allclose(after["mean_salt_percent"], b["mean_salt_percent"].iloc[-1])


def test_equalisation_keeps_the_salt_and_flattens_the_profile():
    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10, stop_when_core_fraction=0.005)
    eq = Step(
        "equalise", 3 * 24 * 3600.0, medium_C=5.0, h_W_m2K=10.0, brine=Brine(equalise=True, D_m2_s=1.9e-10)
    )
    r = run_plan(_plan(brine, eq))
    a, b = r.steps[0].mass, r.steps[1].mass
    assert b.mean_fraction[-1] == pytest.approx(a.mean_fraction[-1], rel=1e-3)  # no exchange
    spread = lambda m: float(np.ptp(m.profile_fraction))  # noqa: E731
    assert spread(b) < 0.2 * spread(a)


def test_a_temperature_stop_cuts_the_salt_too():
    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10)
    step = Step("brine", 24 * 3600.0, medium_C=2.0, h_W_m2K=150.0, stop_when_core_C=3.0, brine=brine)
    r = run_plan(replace(_plan(brine), steps=(step,), start_temperature_C=12.0))
    assert r.steps[0].mass.time_s[-1] == pytest.approx(r.steps[0].duration_s, rel=1e-6)


def test_a_product_already_at_the_brine_temperature_runs():
    # the heat side of a brining step often has nothing to do; it must not fail (regression)
    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10, stop_when_core_fraction=0.01)
    r = run_plan(_plan(brine, Step("hold", 600.0, medium_C=5.0, h_W_m2K=10.0)), solver="finite-volume")
    assert r.history["core_C"].iloc[-1] == pytest.approx(5.0)


@pytest.mark.parametrize(
    ("brine", "field"),
    [
        (
            Brine(brine_fraction=0.1, diffusivity="salt-white-cheese"),
            "steps[0].brine.diffusivity",
        ),  # 4-20 °C ok
        (
            Brine(brine_fraction=0.1, diffusivity="salt-pork-loin", stop_when_core_fraction=0.2),
            "steps[0].brine.stop_when_core_percent",
        ),
    ],
)
def test_inputs_the_run_refuses(brine, field):
    plan = _plan(brine)
    if brine.diffusivity == "salt-white-cheese":
        plan = replace(plan, steps=(replace(plan.steps[0], medium_C=25.0),))
    with pytest.raises(InvalidInputError) as err:
        run_plan(plan)
    assert err.value.field == field


def test_a_plan_without_brine_has_no_salt_columns():
    plan = replace(
        _plan(Brine(brine_fraction=0.1, D_m2_s=1.9e-10)),
        steps=(Step("chill", 600.0, medium_C=0.0, h_W_m2K=20.0),),
    )
    r = run_plan(plan)
    assert "core_salt_percent" not in r.history and r.steps[0].mass is None
    assert math.isfinite(r.history["core_C"].iloc[-1])


def test_report_text_and_json_carry_the_brine_section():
    from procplan.output.report import summary_dict, summary_text

    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10, stop_when_core_fraction=0.01, target_mean_fraction=0.5)
    r = run_plan(_plan(brine))
    section = summary_dict(r)["steps"][0]["brine"]
    m = r.steps[0].mass
    assert section["end"]["core_percent"] == pytest.approx(100 * m.core_fraction[-1], abs=1e-4)
    assert section["stopped_on"] == "centre" and section["target_mean_reached_min"] is None
    assert len(section["profile"]["percent"]) == len(section["profile"]["position_from_centre_mm"])
    text = summary_text(r)
    assert (
        "stopped when the core reached its salt target" in text and "mean target 50.00 % NOT reached" in text
    )


def test_sheet_salt_checkpoints_read_the_run():
    from procplan.output.sheet_data import salt_checkpoints

    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10, stop_when_core_fraction=0.01)
    r = run_plan(_plan(brine, Step("hold", 600.0, medium_C=5.0, h_W_m2K=10.0)))
    cps = salt_checkpoints(r)
    m = r.steps[0].mass
    assert len(cps) == 2 and cps[1].time_min == pytest.approx(m.stopped_at_s / 60.0)
    assert cps[1].core_percent == pytest.approx(1.0, abs=1e-3)
    assert cps[0].mean_percent < cps[1].mean_percent
    assert "target ends the step" in cps[1].basis


def test_required_brining_time_is_the_series_time_for_constant_coefficients():
    from procplan.studies.brining import required_brining_time_s

    brine = Brine(brine_fraction=0.1, D_m2_s=1.9e-10, k_m_m_s=2e-6)
    plan = _plan(brine)
    t = required_brining_time_s(plan, 0, core_percent=1.2)
    c_eq = equilibrium_fraction(0.1, 0.73)
    assert t == pytest.approx(
        diffusion.time_to_centre_concentration(SLAB, 1.9e-10, 0.0, c_eq, 0.012, k_m_m_s=2e-6), rel=1e-2
    )
    with pytest.raises(InvalidInputError, match="core_percent"):
        required_brining_time_s(
            replace(plan, steps=(replace(plan.steps[0], duration_s=600.0),)), 0, core_percent=1.2
        )


def test_brining_time_command_prints_the_same_time(tmp_path, capsys):
    import json

    from procplan.cli import main
    from procplan.files.plan import save_plan
    from procplan.studies.brining import required_brining_time_s

    plan = _plan(Brine(brine_fraction=0.1, D_m2_s=1.9e-10, k_m_m_s=2e-6))
    path = save_plan(plan, tmp_path / "brine.toml")
    assert main(["brining-time", str(path), "--core-percent", "1.2", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["time_min"] == pytest.approx(
        required_brining_time_s(plan, 0, core_percent=1.2) / 60.0, rel=1e-9
    )
    assert main(["brining-time", str(path), "--core-percent", "1.2"]) == 0
    assert "the core reaches 1.2 % salt" in capsys.readouterr().out
    assert main(["brining-time", str(path), "--core-percent", "9"]) == 2
