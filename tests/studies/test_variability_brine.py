"""Variability of salt uptake: a brining plan's core salt, mean salt and time to the salt stop over sampled
diffusivity, brine strength and size; samples at the nominal values reproduce the plain run, the time falls
as D rises, and it follows the Fourier number of Fick's second law."""

import math
from dataclasses import replace

import numpy as np
import pytest

from procplan import cli
from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.plan import load_plan, save_plan
from procplan.run.engine import run_plan
from procplan.studies.metrics import result_metrics
from procplan.studies.variability import distribution, monte_carlo
from procplan.studies.variability_brine import apply_brine_percent, apply_salt_D_factor


@pytest.fixture(scope="module")
def library():
    return load_library()


@pytest.fixture(scope="module")
def brining(library):
    """The demo's brining step alone (10 % brine at 5 °C until the core holds 1.2 % salt)."""
    plan = load_plan("product_library/plans/pork-loin-brine-freeze.toml", library=library)
    return replace(plan, steps=plan.steps[:1])


def _salt(plan, library):
    return result_metrics(run_plan(plan, library=library))


def test_samples_at_the_nominal_values_reproduce_the_plain_run(brining, library):
    plain = _salt(brining, library)
    assert plain["salt_core_percent"] == pytest.approx(1.2, abs=1e-4)  # the stop ends the step
    res = monte_carlo(
        brining,
        {
            "salt_D_factor": distribution("uniform", 1.0 - 1e-9, 1.0 + 1e-9),
            "brine_percent": distribution("uniform", 10.0 - 1e-9, 10.0 + 1e-9),
            "size_factor": distribution("uniform", 1.0 - 1e-9, 1.0 + 1e-9),
        },
        n_samples=3,
        seed=4,
        library=library,
        executor=None,
        corners=False,
    )
    assert res.method == "run" and any("brining" in n for n in res.notes)
    for col in ("salt_core_percent", "salt_mean_percent", "salt_time_min"):
        assert np.allclose(res.samples[col], plain[col], rtol=1e-6), col
        assert res.percentiles[col]["P50"] == pytest.approx(plain[col], rel=1e-6)


def test_time_to_the_salt_falls_as_D_rises(brining, library):
    res = monte_carlo(
        brining,
        {"salt_D_factor": distribution("uniform", 0.7, 1.5)},
        n_samples=6,
        seed=2,
        library=library,
        executor=None,
        corners=True,
    )
    s = res.samples.sort_values("salt_D_factor")
    # Invariant: a larger D carries salt to the core sooner (strictly monotonic)
    assert np.all(np.diff(s["salt_time_min"].to_numpy()) < 0)
    # the worst corner is the slowest uptake, the lowest D
    assert res.worst["inputs"]["salt_D_factor"] == pytest.approx(0.7)
    assert res.percentiles["salt_time_min"]["P95"] >= res.percentiles["salt_time_min"]["P50"]


def test_core_salt_at_a_fixed_time_rises_with_D_and_brine(brining, library):
    step = brining.steps[0]
    fixed = brining.with_step(
        0, brine=replace(step.brine, stop_when_core_fraction=None), duration_s=24 * 3600.0
    )
    cores = [
        _salt(apply_salt_D_factor(fixed, f, 0, None), library)["salt_core_percent"] for f in (0.5, 1.0, 2.0)
    ]
    assert cores[0] < cores[1] < cores[2]
    stronger = _salt(apply_brine_percent(fixed, 14.0, 0, None), library)
    assert stronger["salt_core_percent"] > cores[1] and stronger["salt_mean_percent"] > 0


def test_time_to_the_salt_follows_the_fourier_number(brining, library):
    # Source: Crank, The Mathematics of Diffusion, 2nd ed., §4.3 (plane sheet) and §5.3 (cylinder): with the
    # surface held at the brine's equilibrium the concentration depends on D t / L² alone, so the time to a
    # core content scales as 1/D and as L². The demo's mass Biot number is about 110, not infinite: the
    # surface resistance left adds about 2 % (tolerance 3 %).
    base = _salt(brining, library)["salt_time_min"]
    double_d = _salt(apply_salt_D_factor(brining, 2.0, 0, None), library)["salt_time_min"]
    assert double_d == pytest.approx(base / 2.0, rel=0.03)


def test_a_plan_without_brining_refuses_the_salt_variables(library):
    plan = load_plan("product_library/plans/roulade-blast-chill.toml", library=library)
    with pytest.raises(InvalidInputError, match="brining"):
        apply_salt_D_factor(plan, 1.1, 0, None)
    with pytest.raises(InvalidInputError):
        apply_brine_percent(plan, 10.0, 0, None)
    assert "salt_core_percent" not in result_metrics(run_plan(plan, library=library))


def test_cli_variability_on_a_brining_plan(brining, tmp_path, capsys):
    path = tmp_path / "brine.toml"
    save_plan(brining, path)
    code = cli.main(
        [
            "variability",
            str(path),
            "--vary",
            "salt_D_factor=uniform:0.8,1.2",
            "--vary",
            "brine_percent=uniform:9.5,10.5",
            "--samples",
            "4",
            "--workers",
            "1",
            "--no-corners",
            "--quiet",
        ]
    )
    out = capsys.readouterr().out
    assert code == 0
    assert "core salt at the end of brining (low tail)" in out and "time to the salt stop" in out
    assert not math.isnan(float(out.split("time to the salt stop or core target: P50 ")[1].split()[0]))
