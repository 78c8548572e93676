"""Required brining time: how long a plan's brining step must run for its core (or mean) salt target.

The plan is run up to that step with the target set as the step's salt stop; the time is the stop the run
finds (the same Fick's-law solution as the plan itself, :mod:`procplan.run.mass_step`).
"""

from __future__ import annotations

from dataclasses import replace

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.run.engine import run_plan


def required_brining_time_s(
    plan,
    step_index: int,
    *,
    core_percent: float | None = None,
    mean_percent: float | None = None,
    library=None,
) -> float:
    """Time [s] from the start of step ``step_index`` until its core (or mean) salt content reaches the target.

    Exactly one of ``core_percent`` and ``mean_percent`` [% of the product's mass]. Raises InvalidInputError
    when the step has no brine record or the target is not reached within the step's duration (its upper bound).
    """
    n = len(plan.steps)
    i = int(validate.number("step_index", step_index, minimum=0, maximum=n - 1))
    step = plan.steps[i]
    if step.brine is None:
        raise InvalidInputError(f"steps[{i}].brine", None, "a brining step (a brine table)")
    if (core_percent is None) == (mean_percent is None):
        raise InvalidInputError("core_percent", core_percent, "one of core_percent or mean_percent")
    core = (
        None
        if core_percent is None
        else validate.number("core_percent", core_percent, minimum=0, maximum=30) / 100
    )
    mean = (
        None
        if mean_percent is None
        else validate.number("mean_percent", mean_percent, minimum=0, maximum=30) / 100
    )
    brine = replace(step.brine, stop_when_core_fraction=core, stop_when_mean_fraction=mean)
    steps = (*plan.steps[:i], replace(step, brine=brine, stop_when_core_C=None))
    result = run_plan(replace(plan, steps=steps), library=library, assess=False)
    mass = result.steps[i].mass
    if mass.stopped_at_s is None:
        raise InvalidInputError(
            "core_percent" if core is not None else "mean_percent",
            core_percent if core is not None else mean_percent,
            f"a content reached within the step's {step.duration_s / 60:g} min",
            "lengthen the step's duration_min (the search bound)",
        )
    return float(mass.stopped_at_s)
