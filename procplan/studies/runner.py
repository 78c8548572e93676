"""Run many plans through any ``concurrent.futures.Executor`` (or in-process), returning key figures.

A job is plain, picklable data: the plan, the machines and rules it needs as plain dicts (the library's
records hold read-only mappings that do not pickle), and the solver options. The worker rebuilds a small
library from them, so a job runs unchanged in this process, in a ``ProcessPoolExecutor`` or on the workers
of a Dask distributed ``Client`` (which implements the Executor interface). By default (``executor="auto"``)
a study runs its first job here and, when the rest would take long enough for it to pay, the others in a
process pool on the machine's cores; a progress callback reports each finished run and a stop flag ends the
study between runs (:class:`StudyStopped`).
"""

from __future__ import annotations

import multiprocessing
import os
import sys
import threading
import time
from collections.abc import Callable, Iterable, Sequence
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures import TimeoutError as FuturesTimeout
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from procplan.errors import InvalidInputError

#: Start-up of a process pool of 2 workers [s]: forked from this process with the engine loaded (0.4–0.6 s
#: measured on a 2-core machine under load), or from a forkserver that already runs (0.5 s); and the first
#: forkserver pool, whose server loads the engine first (15–25 s measured there).
POOL_START_S = 1.0
POOL_START_FRESH_S = 25.0
_FORKSERVER_STARTED = False
#: The pool is used by default only when it is expected to be at least this many times faster.
POOL_MIN_GAIN = 1.3


@dataclass(frozen=True)
class Job:
    """One run: a key for the caller, the plan and the library records it needs."""

    key: Any
    plan: Any
    equipment: tuple[dict, ...] = ()
    rules: tuple[dict, ...] = ()
    solver: str | None = None
    n_nodes: Any = None
    dt_s: float | None = None


def make_job(key: Any, plan, library, *, solver=None, n_nodes=None, dt_s=None) -> Job:
    """A :class:`Job` carrying the machines and the rule ``plan`` refers to, taken from ``library``."""
    from procplan.files.machines import equipment_to_dict
    from procplan.files.rules import rule_to_dict

    eq, rules = [], []
    if library is not None:
        for s in plan.steps:
            if s.equipment is not None and s.equipment in library.equipment:
                eq.append(equipment_to_dict(library.equipment[s.equipment]))
        r = plan.checks.cooling_rule
        if r and r in library.rules:
            rules.append(rule_to_dict(library.rules[r]))
    return Job(key, plan, tuple(eq), tuple(rules), solver, n_nodes, dt_s)


def _library_of(job: Job):
    from procplan.files.library import Library
    from procplan.files.machines import equipment_from_dict
    from procplan.files.rules import rule_from_dict

    lib = Library(root=Path("."))
    for d in job.equipment:
        lib.equipment[d["id"]] = equipment_from_dict(d, source=f"equipment {d['id']}")
    for d in job.rules:
        lib.rules[d["name"]] = rule_from_dict(d, source=f"rule {d['name']}")
    return lib


def run_job(job: Job) -> dict[str, Any]:
    """Run one job and return ``{"key", "metrics", "error"}``; invalid input becomes an error text."""
    from procplan.run.engine import run_plan
    from procplan.studies.metrics import result_metrics

    try:
        res = run_plan(
            job.plan, library=_library_of(job), solver=job.solver, n_nodes=job.n_nodes, dt_s=job.dt_s
        )
        return {"key": job.key, "metrics": result_metrics(res), "error": None}
    except InvalidInputError as exc:
        return {"key": job.key, "metrics": None, "error": str(exc)}


class StudyStopped(Exception):
    """A study ended early by its stop flag: ``done`` of ``total`` runs had finished."""

    def __init__(self, done: int, total: int) -> None:
        super().__init__(f"stopped after {done} of {total} runs")
        self.done, self.total = done, total


def stop_requested(stop) -> bool:
    """True when ``stop`` (None, a ``threading.Event`` or anything with ``is_set()``, or a callable returning
    a bool) asks the study to end."""
    if stop is None:
        return False
    return bool(stop.is_set() if hasattr(stop, "is_set") else stop())


def check_stop(stop, done: int, total: int) -> None:
    """Raise :class:`StudyStopped` when ``stop`` is set."""
    if stop_requested(stop):
        raise StudyStopped(done, total)


def default_workers() -> int:
    """Worker processes of the default pool: the machine's cores (as this process may use them)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on every platform
        return max(1, os.cpu_count() or 1)


def estimate_study_s(per_run_s: float, n_runs: int, workers: int | None = None) -> float:
    """Expected seconds of ``n_runs`` runs of about ``per_run_s`` each: in-process when the pool would not
    pay (:func:`pool_pays`), else spread over ``workers`` processes plus the pool's start-up.

    >>> estimate_study_s(0.1, 10, workers=2)
    1.0
    >>> estimate_study_s(1.0, 100, workers=2) == 1.0 + 99 / 2 + pool_start_s()
    True
    """
    w = default_workers() if workers is None else max(1, int(workers))
    serial = per_run_s * n_runs
    if not pool_pays(per_run_s, n_runs, w):
        return serial
    return per_run_s + per_run_s * (n_runs - 1) / w + pool_start_s()


def pool_pays(per_run_s: float, n_runs: int, workers: int) -> bool:
    """True when a process pool of ``workers`` is expected to finish ``n_runs`` runs of ``per_run_s`` at least
    :data:`POOL_MIN_GAIN` faster than this process alone, counting its start-up (:func:`pool_start_s`)."""
    if workers < 2 or n_runs < 2:
        return False
    serial = per_run_s * (n_runs - 1)
    return serial / workers + pool_start_s() < serial / POOL_MIN_GAIN


def pool_start_s() -> float:
    """The expected start-up [s] of the next default pool: :data:`POOL_START_S` when forked or when a
    forkserver already runs, else :data:`POOL_START_FRESH_S`."""
    if pool_start_method() == "fork" or _FORKSERVER_STARTED:
        return POOL_START_S
    return POOL_START_FRESH_S


def time_one_run(plan, library=None, **run_options) -> float:
    """Seconds one ``run_plan`` of ``plan`` takes here (the basis of a study's time estimate)."""
    from procplan.run.engine import run_plan

    t0 = time.perf_counter()
    run_plan(plan, library=library, **run_options)
    return time.perf_counter() - t0


def _worker_start() -> None:
    """Load the engine once per worker process (not on its first job)."""
    import procplan.run.engine  # noqa: F401
    import procplan.studies.metrics  # noqa: F401


def process_pool(workers: int | None = None) -> ProcessPoolExecutor:
    """A process pool of ``workers`` (default: the machine's cores). Started by "fork" from a process with
    one thread (a script, the command line: the workers inherit the loaded engine), else by "forkserver"
    (safe from a threaded program such as the app; its workers load the engine once) or "spawn"."""
    global _FORKSERVER_STARTED
    method = pool_start_method()
    ctx = multiprocessing.get_context(method)
    if method == "forkserver":
        _FORKSERVER_STARTED = True
        ctx.set_forkserver_preload(["procplan.run.engine", "procplan.studies.metrics"])
    return ProcessPoolExecutor(
        max_workers=default_workers() if workers is None else workers,
        mp_context=ctx,
        initializer=_worker_start,
    )


def pool_start_method() -> str:
    """ "fork" from a process with one thread, else "forkserver" (or "spawn" where there is none)."""
    methods = multiprocessing.get_all_start_methods()
    if "fork" in methods and threading.active_count() == 1:
        return "fork"
    return "forkserver" if "forkserver" in methods else "spawn"


def run_jobs(
    jobs: Sequence[Job],
    *,
    executor: Any = "auto",
    progress: Callable[[int, int], None] | None = None,
    stop=None,
) -> list[dict[str, Any]]:
    """Run every job and return their results in the order of ``jobs``.

    ``executor``: ``"auto"`` (default) runs the first job here, and the rest in a process pool on the
    machine's cores when that is expected to pay (:func:`pool_pays`, from the first job's time), else here;
    None runs all here; or any object with ``submit`` returning futures with ``result()`` and ``cancel()``
    (concurrent.futures, Dask). ``progress(done, total)`` is called after each run; ``stop`` (a
    ``threading.Event``, or see :func:`stop_requested`) ends the study between runs with
    :class:`StudyStopped` (runs not started are cancelled).
    """
    jobs = list(jobs)
    n = len(jobs)
    out: list[dict[str, Any]] = []
    if executor == "auto" and n:
        check_stop(stop, 0, n)
        t0 = time.perf_counter()
        out.append(run_job(jobs[0]))
        per_run = time.perf_counter() - t0
        if progress is not None:
            progress(1, n)
        if pool_pays(per_run, n, default_workers()):
            with process_pool() as pool:
                return out + _run_on(pool, jobs[1:], 1, n, progress, stop)
        executor = None
    if executor is None:
        for job in jobs[len(out) :]:
            check_stop(stop, len(out), n)
            out.append(run_job(job))
            if progress is not None:
                progress(len(out), n)
        return out
    if not hasattr(executor, "submit"):
        raise InvalidInputError(
            "executor",
            type(executor).__name__,
            '"auto", None or a concurrent.futures.Executor (or Dask Client)',
        )
    return _run_on(executor, jobs, 0, n, progress, stop)


def _run_on(executor, jobs: Sequence[Job], done: int, total: int, progress, stop) -> list[dict[str, Any]]:
    """Submit ``jobs`` to ``executor``; results in order, progress as they finish, stop between them."""
    futures = [executor.submit(run_job, job) for job in jobs]
    try:
        for f in futures:
            while True:
                try:
                    f.result(timeout=0.2)
                    break
                except FuturesTimeout:
                    check_stop(stop, done, total)
            done += 1
            if progress is not None:
                progress(done, total)
            check_stop(stop, done, total)
    except BaseException:
        for f in futures:
            f.cancel()
        raise
    return [f.result() for f in futures]


def stderr_counter(every: int = 10, label: str = "runs") -> Callable[..., None]:
    """A progress callback printing ``label done/total`` on stderr every ``every`` runs and at the end."""

    def report(done: int, total: int, *args: Iterable[Any]) -> None:
        if done % every == 0 or done == total:
            print(f"  {label} {done}/{total}", file=sys.stderr, flush=True)

    return report
