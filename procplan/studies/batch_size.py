"""The largest batch a machine can take and still meet a goal (time, rule or lethality).

A larger batch loads the machine more, so its medium drifts further from the set point once the plant is at
its limit and every piece takes longer: the goal's measure (:data:`procplan.studies.inverse.GOALS`, positive
when met) falls with the number of pieces. The answer is found by integer search on that monotone measure:
doubling from the plan's batch until the goal fails (or ``max_pieces``), then bisection between the last
batch that passes and the first that fails. Each evaluation is a forward run of the loaded plan; the answer's
run is kept (its step shows the medium warming and the time the plant ran at its limit).

A machine without a thermal description, or a plan run as an empty machine, cannot answer: the batch does
not change the result there, and the study says so.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from typing import Any

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.model import Plan
from procplan.studies.inverse import GOALS

__all__ = ["BatchSize", "largest_batch"]


@dataclass(frozen=True, eq=False)
class BatchSize:
    """The largest batch that meets the goal.

    Attributes
    ----------
    goal, target_min, step_index : what was asked
    pieces : the largest batch that meets it (None: not even one piece does)
    first_failing : the smallest batch found to fail (None: ``max_pieces`` still passes)
    evaluations : (pieces, measure) of every forward run, in order (measure in the goal's unit, ≥ 0 = met)
    result : the run of the answer (or of one piece when none passes)
    message : the answer in words
    """

    goal: str
    target_min: float | None
    step_index: int
    pieces: int | None
    first_failing: int | None
    evaluations: tuple[tuple[int, float], ...]
    result: Any
    message: str

    @property
    def machine_load(self):
        """How the machine carried the answer's batch in the step (None: set point held, no description)."""
        return self.result.steps[self.step_index].machine_load


def _goal_plan(plan: Plan, i: int, goal: str, target_min: float | None) -> Plan:
    """For the goal "time", only the steps up to the one meant, long enough to see the allowed time."""
    if goal != "time":
        return plan
    p = replace(plan, steps=plan.steps[: i + 1])
    need = 1.25 * 60.0 * float(target_min)
    return p.with_step(i, duration_s=need) if p.steps[i].duration_s < need else p


def largest_batch(
    plan: Plan,
    *,
    step_index: int,
    goal: str,
    library=None,
    target_min: float | None = None,
    max_pieces: int = 100_000,
    progress: Callable[[int, int, float], None] | None = None,
    **run_options: Any,
) -> BatchSize:
    """The largest number of pieces per batch for which ``plan`` still meets ``goal`` in step ``step_index``.

    Parameters
    ----------
    plan : the plan (its ``load.model`` must be "loaded" and the step's machine must have a thermal description)
    step_index : the step whose machine is loaded (and, for "time", whose stop condition is timed)
    goal : a key of :data:`procplan.studies.inverse.GOALS`
    target_min : the allowed time [min] for the goal "time"
    max_pieces : the largest batch tried
    progress : called as progress(evaluations, pieces, measure) after each forward run
    run_options : passed to :func:`procplan.run.engine.run_plan` (solver, n_nodes, dt_s)
    """
    from procplan.run.engine import run_plan

    validate.choice("goal", goal, GOALS)
    i = int(validate.number("step_index", step_index, minimum=0, maximum=len(plan.steps) - 1))
    gspec = GOALS[goal]
    if gspec.needs_target_min:
        target_min = validate.positive("target_min", target_min, "min")
    max_pieces = int(validate.number("max_pieces", max_pieces, minimum=1, maximum=10_000_000))
    if plan.load.model != "loaded":
        raise InvalidInputError("load.model", plan.load.model, "'loaded' (an empty machine takes any batch)")
    if library is None:
        from procplan.files.library import load_library

        library = load_library()
    step = plan.steps[i]
    eq = library.equipment.get(step.equipment) if step.equipment else None
    if eq is None or eq.thermal is None:
        raise InvalidInputError(
            f"steps[{i}].equipment", step.equipment, "a machine with a thermal description ([thermal] table)"
        )
    base = _goal_plan(plan, i, goal, target_min)
    evals: list[tuple[int, float]] = []
    runs: dict[int, Any] = {}

    def measure(n: int) -> float:
        res = run_plan(base.with_pieces(n), library=library, **run_options)
        m = float(gspec.measure(res, base, i, target_min))
        evals.append((n, m))
        runs[n] = res
        if progress is not None:
            progress(len(evals), n, m)
        return m

    best, fail = _search(measure, max(1, min(plan.pieces, max_pieces)), max_pieces)
    answer = best if best is not None else 1
    if answer not in runs:
        measure(answer)
    message = _message(best, fail, goal, target_min, max_pieces, eq.name)
    return BatchSize(goal, target_min, i, best, fail, tuple(evals), runs[answer], message)


def _search(measure: Callable[[int], float], start: int, max_pieces: int) -> tuple[int | None, int | None]:
    """(largest passing, smallest failing) by doubling from ``start`` and then bisection on integers."""
    lo, hi = None, None  # lo passes, hi fails
    n = start
    if measure(n) >= 0:
        lo = n
        while hi is None and lo < max_pieces:
            n = min(2 * lo, max_pieces)
            if measure(n) >= 0:
                lo = n
            else:
                hi = n
    else:
        hi = n
        while lo is None and hi > 1:
            n = max(hi // 2, 1)
            if measure(n) >= 0:
                lo = n
            else:
                hi = n
    if lo is None or hi is None:
        return lo, hi
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if measure(mid) >= 0:
            lo = mid
        else:
            hi = mid
    return lo, hi


def _message(best, fail, goal: str, target_min, max_pieces: int, machine: str) -> str:
    what = f"the {goal} goal" + (f" ({target_min:g} min)" if target_min is not None else "")
    if best is None:
        return f"not even one piece meets {what} in {machine}"
    if fail is None:
        return f"{max_pieces} pieces (the most tried) still meet {what} in {machine}"
    return f"at most {best} pieces per batch meet {what} in {machine}; {fail} do not"
