"""The work a run may take, and what counts as a reliable energy balance.

Every valid plan ends: before any step is solved, :func:`check_work_budget` estimates the work of the
finite-volume steps (cells × time steps) and refuses a plan over :data:`WORK_BUDGET_CELL_STEPS`, naming the
step and what to change. During a run the finite-volume solver gives up after
:data:`MAX_TIME_STEPS_PER_STEP` time steps, and :func:`step_limit_error` turns that into the same kind of
error. A step whose energy balance is off by more than :data:`ENERGY_BALANCE_LIMIT` runs once more with a
time step :data:`TIME_REFINEMENT` times finer (:func:`refined_time_settings`); if it is still off, the run
is marked unreliable (:func:`unreliable_reason`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from procplan.conduction.fv_grid import build_grid
from procplan.errors import InvalidInputError
from procplan.model import Plan

#: Largest estimated work of one run [cell × time step]. Measured on the 2-core machine the project is
#: developed on: about 1e5 cell-steps per second for a 2-D step with phase change and its surface passes
#: (3.5e5 for constant properties in 2-D and 3-D), so the budget is about three minutes at worst.
WORK_BUDGET_CELL_STEPS = 20_000_000
#: Time steps expected of a step with the adaptive time step. The demo plans take 42…978 accepted steps per
#: step (the adaptive step aims at 0.5 K, or 2 % of the temperature span, per step and at 1/20 of the step).
ADAPTIVE_STEPS_ESTIMATE = 1000
#: Most time steps (accepted and rejected) one solve of a step may take: 20 times the largest adaptive count
#: of the demo plans; with the default 3-D grid (15³ cells) about the work budget.
MAX_TIME_STEPS_PER_STEP = 20_000
#: Largest relative energy-balance error of a step before it is run again with a finer time step, and, if
#: still above it, before the run is marked unreliable.
ENERGY_BALANCE_LIMIT = 0.01
#: How many times finer the time step of the rerun is (a fixed dt_s divided by it; for the adaptive step
#: the aimed change per step and the largest step are divided by it).
TIME_REFINEMENT = 4
#: The adaptive step's aimed largest node change per step [K] (the solver's default).
ADAPTIVE_STEP_CHANGE_K = 0.5

_WHAT_TO_CHANGE = (
    "use a coarser grid (fewer n_nodes), a longer fixed time step dt_s or the adaptive one, a shorter step, "
    'or the exact solver (solver = "exact") where it applies'
)


@dataclass(frozen=True)
class StepWork:
    """The estimated work of one finite-volume step: cells, time steps and their product."""

    label: str
    cells: int
    time_steps: int

    @property
    def cell_steps(self) -> int:
        return self.cells * self.time_steps


def expected_time_steps(duration_s: float, dt_s: float | None) -> int:
    """Time steps a step of ``duration_s`` is expected to take with a fixed ``dt_s`` (None: adaptive)."""
    if dt_s is None:
        return ADAPTIVE_STEPS_ESTIMATE
    return max(1, math.ceil(duration_s / float(dt_s) - 1e-9))


def estimate_work(plan: Plan, requested: str, n_nodes=None, dt_s: float | None = None) -> list[StepWork]:
    """The estimated work of every step that may run finite volumes (none when the exact solver is forced).

    A step the automatic choice later gives to the exact solution costs next to nothing, so the estimate
    is an upper bound.
    """
    if requested == "exact":
        return []
    cells = build_grid(plan.product.geometry, n_nodes, 0.5).n_cells
    return [
        StepWork(f"steps[{i}] ({s.name})", cells, expected_time_steps(s.duration_s, dt_s))
        for i, s in enumerate(plan.steps)
    ]


def check_work_budget(plan: Plan, requested: str, n_nodes=None, dt_s: float | None = None) -> int:
    """Refuse a plan whose estimated work is over the budget; return the estimate [cell-steps].

    Raises
    ------
    InvalidInputError : naming the largest step, when a step would take more than
        :data:`MAX_TIME_STEPS_PER_STEP` time steps or the run more than :data:`WORK_BUDGET_CELL_STEPS`
    """
    work = estimate_work(plan, requested, n_nodes, dt_s)
    total = sum(w.cell_steps for w in work)
    for w in work:
        if w.time_steps > MAX_TIME_STEPS_PER_STEP:
            raise InvalidInputError(
                w.label,
                f"{w.time_steps} time steps of dt_s = {dt_s:g} s",
                f"at most {MAX_TIME_STEPS_PER_STEP} time steps per step",
                _WHAT_TO_CHANGE,
            )
    if total > WORK_BUDGET_CELL_STEPS:
        big = max(work, key=lambda w: w.cell_steps)
        raise InvalidInputError(
            big.label,
            f"{big.cells} cells × {big.time_steps} time steps (the run {total:,} cell-steps)",
            f"a run of at most {WORK_BUDGET_CELL_STEPS:,} cell-steps (a few minutes on a 2-core machine)",
            _WHAT_TO_CHANGE,
        )
    return total


def step_limit_error(label: str, exc: InvalidInputError) -> InvalidInputError:
    """The solver's time-step limit, as an error naming the step and what to change."""
    return InvalidInputError(
        label,
        exc.detail or exc.value,
        f"at most {MAX_TIME_STEPS_PER_STEP} time steps per step",
        _WHAT_TO_CHANGE,
    )


def refined_time_settings(duration_s: float, dt_s: float | None, tolerance_K: float | None = None) -> dict:
    """The finite-volume time settings of the rerun, :data:`TIME_REFINEMENT` times finer (a time-integration
    tolerance too), or an empty dict when that rerun would take more than :data:`MAX_TIME_STEPS_PER_STEP` time
    steps (no rerun)."""
    if dt_s is not None:
        fine = float(dt_s) / TIME_REFINEMENT
        if expected_time_steps(duration_s, fine) > MAX_TIME_STEPS_PER_STEP:
            return {}
        return {"dt_s": fine}
    return {
        "max_step_change_K": ADAPTIVE_STEP_CHANGE_K / TIME_REFINEMENT,
        "max_dt_s": duration_s / 20.0 / TIME_REFINEMENT,
        "tolerance_K": None if tolerance_K is None else tolerance_K / TIME_REFINEMENT,
    }


def unreliable_reason(step_name: str, error: float, refined: bool) -> str:
    """Why a step's result cannot be relied on: its energy balance is off by more than the limit."""
    how = (
        f"even after a rerun with a {TIME_REFINEMENT}× finer time step"
        if refined
        else f"and a {TIME_REFINEMENT}× finer time step would exceed {MAX_TIME_STEPS_PER_STEP} time steps"
    )
    return (
        f"{step_name}: energy-balance error {error:.2%} exceeds {ENERGY_BALANCE_LIMIT:.0%} {how}; "
        "the run is unreliable: use a finer grid (n_nodes) or a shorter fixed time step (dt_s)"
    )
