"""The study sub-commands: exit codes, JSON equal to the Python API, readable output with the caution."""

from __future__ import annotations

import json

import numpy as np
import pytest

from procplan.caution import CAUTION
from procplan.cli import main
from procplan.conduction.product import exact_temperature_at_C
from procplan.files.plan import save_plan
from procplan.studies.inverse import required_setting

from .conftest import cylinder_plan, lumped_sphere_plan


@pytest.fixture()
def plans(tmp_path):
    ball = save_plan(lumped_sphere_plan(20.0), tmp_path / "ball.toml")
    cyl = save_plan(
        cylinder_plan("us-food-code-two-stage").with_step(0, stop_when_core_C=4.0), tmp_path / "cyl.toml"
    )
    return ball, cyl


def _json(capsys):
    return json.loads(capsys.readouterr().out)


def test_compare_json_csv_and_text(plans, tmp_path, capsys):
    ball, _ = plans
    csv = tmp_path / "cmp.csv"
    assert main(["compare", str(ball), "--vary", "h_W_m2K=40", "--json", "--csv", str(csv), "--quiet"]) == 0
    out = _json(capsys)
    assert out["ranking"][0] == "ball [h_W_m2K=40]" and len(out["table"]) == 2
    assert csv.read_text().startswith("scenario,")
    assert main(["compare", str(ball), "--vary", "name=fast,h_W_m2K=40"]) == 0
    text = capsys.readouterr()
    assert "1. ball [fast]" in text.out and CAUTION in text.out and "scenarios 2/2" in text.err


def test_required_matches_api_and_exit_code(plans, capsys):
    ball, _ = plans
    args = [
        "required",
        str(ball),
        "--parameter",
        "h_W_m2K",
        "--goal",
        "time",
        "--target-min",
        "10",
        "--bounds",
        "5",
        "200",
    ]
    assert main([*args, "--json", "--quiet"]) == 0
    out = _json(capsys)
    api = required_setting(
        lumped_sphere_plan(20.0),
        step_index=0,
        parameter="h_W_m2K",
        goal="time",
        target_min=10,
        bounds=(5, 200),
    )
    assert out["value"] == pytest.approx(api.value, rel=1e-9) and out["confirmed"]
    assert (
        main(
            [
                "required",
                str(ball),
                "--parameter",
                "h_W_m2K",
                "--goal",
                "time",
                "--target-min",
                "1",
                "--bounds",
                "1",
                "5",
                "--quiet",
            ]
        )
        == 1
    )
    assert "not achievable" in capsys.readouterr().out
    assert (
        main(
            [
                "required",
                str(ball),
                "--parameter",
                "h_W_m2K",
                "--goal",
                "rule",
                "--bounds",
                "1",
                "5",
                "--quiet",
            ]
        )
        == 2
    )


def test_variability_is_reproducible(plans, tmp_path, capsys):
    _, cyl = plans
    args = [
        "variability",
        str(cyl),
        "--vary",
        "h_W_m2K=lognormal:20,0.3",
        "--vary",
        "start_C=uniform:65,75",
        "--samples",
        "300",
        "--seed",
        "4",
        "--json",
        "--quiet",
    ]
    assert main(args) == 0
    a = _json(capsys)
    assert main(args) == 0
    b = _json(capsys)
    assert a["percentiles"] == b["percentiles"] and a["method"] == "exact"
    assert 0.0 <= a["p_rule_fail"] <= 1.0 and a["worst_corner"]["inputs"]["start_C"] == 75.0
    assert main(["variability", str(cyl), "--vary", "h_W_m2K=poisson:3", "--quiet"]) == 2


def test_calibrate_preview_fit_and_record(plans, tmp_path, capsys):
    t = np.arange(0.0, 3 * 3600.0 + 1, 120.0)
    temps = exact_temperature_at_C(
        cylinder_plan().product.geometry, 0.5, 1050.0, 3600.0, 18.0, 70.0, 0.0, t, (0.0,)
    )
    log = tmp_path / "studies_trial.csv"
    log.write_text(
        "time_min\tcore °F\n"
        + "\n".join(f"{a / 60:g}\t{b * 9 / 5 + 32:.5f}" for a, b in zip(t, temps, strict=True))
    )
    assert main(["calibrate", str(log), "--preview", "--json"]) == 0
    pv = _json(capsys)
    assert pv["mapping"]["temperature_unit"] == "F" and pv["mapping"]["time_unit"] == "min"
    plan = save_plan(cylinder_plan(), tmp_path / "c.toml")
    assert main(["calibrate", str(log), "--plan", str(plan), "--record", "cyl", "--json"]) == 0
    out = _json(capsys)
    assert out["h_W_m2K"] == pytest.approx(18.0, rel=1e-3) and out["record"]["product"] == "cyl"
    assert main(["calibrate", str(tmp_path / "missing.csv"), "--plan", str(plan)]) == 2


def test_help_lists_every_study_command(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    out = capsys.readouterr().out
    for cmd in ("compare", "required", "variability", "calibrate", "sweep"):
        assert cmd in out


def test_sweep_csv_and_json(tmp_path, capsys):
    csv = tmp_path / "sweep.csv"
    args = [
        "sweep",
        "--products",
        "vaccine-vial-10ml",
        "--kinds",
        "pharma-cold-room",
        "--csv",
        str(csv),
        "--json",
        "--quiet",
    ]
    assert main(args) == 0
    out = _json(capsys)
    assert [r["equipment"] for r in out["table"]] == ["pharma-cr1"] and out["table"][0]["target_reached"]
    assert "vaccine-vial-10ml" in csv.read_text()
    assert main(["sweep", "--products", "nope", "--quiet"]) == 2
