"""A plain (non-editable) install of the built wheel runs a demo plan from any directory.

The wheel is built from this checkout and installed without its dependencies into a fresh virtual environment
that sees this interpreter's packages (numpy, scipy, ... are the same); the test checks that the venv's own
procplan is the one that runs, so the demo library must come from inside the wheel.
"""

from __future__ import annotations

import json
import os
import pathlib
import subprocess
import sys
import venv

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[1]


@pytest.mark.slow
def test_wheel_runs_a_demo_plan_from_another_directory(tmp_path):
    wheel_dir = tmp_path / "wheel"
    build = subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(wheel_dir), str(ROOT)],
        capture_output=True,
        text=True,
        timeout=600,
    )
    if build.returncode != 0 and "Could not find a version that satisfies" in build.stderr:
        pytest.skip("the build backend could not be fetched (no package index reachable)")
    assert build.returncode == 0, build.stderr
    (wheel,) = wheel_dir.glob("procplan-*.whl")

    env_dir = tmp_path / "env"
    venv.EnvBuilder(system_site_packages=True, with_pip=False).create(env_dir)
    python = env_dir / "bin" / "python"
    install = subprocess.run(
        [
            sys.executable,
            "-m",
            "pip",
            "--python",
            str(python),
            "install",
            "--no-deps",
            "--ignore-installed",
            "-q",
            str(wheel),
        ],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert install.returncode == 0, install.stderr

    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "PROCPLAN_LIBRARY")}
    where = subprocess.run(
        [str(python), "-c", "import procplan, sys; print(procplan.__file__)"],
        cwd=elsewhere,
        capture_output=True,
        text=True,
        env=env,
        timeout=120,
    )
    assert where.returncode == 0, where.stderr
    assert str(env_dir) in where.stdout, f"the venv's procplan must run, not the checkout's: {where.stdout}"

    run = subprocess.run(
        [str(env_dir / "bin" / "procplan"), "run", "roulade-blast-chill", "--json"],
        cwd=elsewhere,
        capture_output=True,
        text=True,
        env=env,
        timeout=300,
    )
    assert run.returncode in (0, 1), run.stderr
    out = json.loads(run.stdout)
    assert len(out["history"]["time_s"]) > 10
