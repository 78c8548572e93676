"""Run many plans through any ``concurrent.futures.Executor`` (or in-process), returning key figures.

A job is plain, picklable data: the plan, the machines and rules it needs as plain dicts (the library's
records hold read-only mappings that do not pickle), and the solver options. The worker rebuilds a small
library from them, so a job runs unchanged in this process, in a ``ProcessPoolExecutor`` or on the workers
of a Dask distributed ``Client`` (which implements the Executor interface).
"""

from __future__ import annotations

import sys
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from procplan.errors import InvalidInputError


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


def run_jobs(
    jobs: Sequence[Job],
    *,
    executor=None,
    progress: Callable[[int, int], None] | None = None,
) -> list[dict[str, Any]]:
    """Run every job, in order of ``jobs``; ``executor`` is any object with ``submit`` returning futures
    with ``result()`` (concurrent.futures, Dask). Default: sequentially in this process."""
    jobs = list(jobs)
    n = len(jobs)
    out: list[dict[str, Any]] = []
    if executor is None:
        for j, job in enumerate(jobs):
            out.append(run_job(job))
            if progress is not None:
                progress(j + 1, n)
        return out
    if not hasattr(executor, "submit"):
        raise InvalidInputError(
            "executor", type(executor).__name__, "a concurrent.futures.Executor (or Dask Client)"
        )
    futures = [executor.submit(run_job, job) for job in jobs]
    for j, f in enumerate(futures):
        out.append(f.result())
        if progress is not None:
            progress(j + 1, n)
    return out


def stderr_counter(every: int = 10, label: str = "runs") -> Callable[..., None]:
    """A progress callback printing ``label done/total`` on stderr every ``every`` runs and at the end."""

    def report(done: int, total: int, *args: Iterable[Any]) -> None:
        if done % every == 0 or done == total:
            print(f"  {label} {done}/{total}", file=sys.stderr, flush=True)

    return report
