"""Running many plans: the default choice of a process pool, progress, the stop flag and the time estimate."""

from __future__ import annotations

import threading
from concurrent.futures import ThreadPoolExecutor

import pytest

from procplan.errors import InvalidInputError
from procplan.studies import runner
from procplan.studies.compare import compare_plans
from procplan.studies.inverse import estimated_runs, required_setting
from procplan.studies.runner import (
    StudyStopped,
    estimate_study_s,
    make_job,
    pool_pays,
    run_jobs,
    stop_requested,
)
from procplan.studies.variability import distribution, monte_carlo

from .conftest import lumped_sphere_plan


def _jobs(n: int):
    return [make_job(i, lumped_sphere_plan(10.0 + i), None) for i in range(n)]


def test_pool_pays_only_for_long_studies():
    # short runs: the pool's start-up is never won back
    assert not pool_pays(0.001, 1000, 2)
    assert not pool_pays(1.0, 1, 8)
    assert not pool_pays(100.0, 10, 1)
    # long: with 2 workers the serial time halves, far more than the start-up
    assert pool_pays(1.0, 100, 2)
    # the break-even moves with the start-up (the bound of pool_pays, solved for the serial time)
    serial = runner.pool_start_s() / (1 / runner.POOL_MIN_GAIN - 1 / 2)
    assert not pool_pays(0.99 * serial, 2, 2) and pool_pays(1.01 * serial, 2, 2)


def test_estimate_is_serial_when_the_pool_does_not_pay_and_shared_when_it_does():
    assert estimate_study_s(0.01, 100, workers=4) == pytest.approx(1.0)
    assert estimate_study_s(2.0, 101, workers=4) == pytest.approx(2.0 + 200.0 / 4 + runner.pool_start_s())
    # never slower than one process by the pool's choice
    for per_run in (0.001, 0.1, 1.0, 10.0):
        assert estimate_study_s(per_run, 50, workers=2) <= per_run * 50 + 1e-12


def test_auto_runs_in_order_with_progress_as_sequential():
    seen = []
    auto = run_jobs(_jobs(5), progress=lambda d, t: seen.append((d, t)))
    seq = run_jobs(_jobs(5), executor=None)
    assert [o["key"] for o in auto] == list(range(5))
    assert [o["metrics"] for o in auto] == [o["metrics"] for o in seq]
    assert seen == [(i, 5) for i in range(1, 6)]


def test_auto_takes_the_pool_when_the_first_run_says_it_pays(monkeypatch):
    made = []

    def fake_pool(workers=None):
        pool = ThreadPoolExecutor(max_workers=2)  # stands in for the process pool (same interface)
        made.append(pool)
        return pool

    monkeypatch.setattr(runner, "process_pool", fake_pool)
    monkeypatch.setattr(runner, "default_workers", lambda: 2)
    monkeypatch.setattr(runner, "pool_pays", lambda per_run, n, w: True)
    out = run_jobs(_jobs(4))
    assert made and [o["key"] for o in out] == [0, 1, 2, 3]
    assert [o["metrics"] for o in out] == [o["metrics"] for o in run_jobs(_jobs(4), executor=None)]


def test_stop_flag_ends_between_runs_sequential():
    stop = threading.Event()

    def progress(done, total):
        if done == 2:
            stop.set()

    with pytest.raises(StudyStopped) as info:
        run_jobs(_jobs(6), executor=None, progress=progress, stop=stop)
    assert (info.value.done, info.value.total) == (2, 6)


def test_stop_flag_cancels_the_rest_on_an_executor():
    stop = threading.Event()
    stop.set()
    with ThreadPoolExecutor(max_workers=1) as ex, pytest.raises(StudyStopped):
        run_jobs(_jobs(6), executor=ex, stop=stop)


def test_stop_accepts_a_callable_and_none():
    assert stop_requested(None) is False
    assert stop_requested(lambda: True) is True
    ev = threading.Event()
    assert stop_requested(ev) is False


def test_bad_executor_names_the_field():
    with pytest.raises(InvalidInputError, match="executor"):
        run_jobs(_jobs(1), executor="threads")


def test_variability_run_path_stops():
    stop = threading.Event()
    stop.set()
    with pytest.raises(StudyStopped):
        monte_carlo(
            lumped_sphere_plan(),
            {"h_W_m2K": distribution("normal", 20.0, 2.0)},
            n_samples=20,
            method="run",
            corners=False,
            stop=stop,
        )


def test_compare_stops_and_the_comparison_runs_without():
    stop = threading.Event()
    plans = [lumped_sphere_plan(10.0), lumped_sphere_plan(30.0)]
    assert len(compare_plans(plans, names=["a", "b"], stop=stop).ranking) == 2
    stop.set()
    with pytest.raises(StudyStopped):
        compare_plans(plans, names=["a", "b"], stop=stop)


def test_required_setting_stops_before_its_next_run():
    calls = []
    stop = threading.Event()

    def progress(n, v, m):
        calls.append(n)
        if n == 3:
            stop.set()

    with pytest.raises(StudyStopped) as info:
        required_setting(
            lumped_sphere_plan(),
            step_index=0,
            parameter="h_W_m2K",
            goal="time",
            target_min=30.0,
            progress=progress,
            stop=stop,
        )
    assert calls == [1, 2, 3] and info.value.done == 3
    assert estimated_runs(5) > 5
