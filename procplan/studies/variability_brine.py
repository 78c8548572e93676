"""Variability of salt uptake: the brining inputs a Monte Carlo study can sample, and the solute figures it
reports.

A brining plan's uptake varies from batch to batch with the piece (its size: ``size_factor`` of
:mod:`procplan.studies.variability`), the brine (its strength drifts as the pieces take salt up and water is
added) and the meat itself (the effective salt diffusivity of published measurements scatters by tens of per
cent between muscles and animals). The two inputs here change every brining step of the plan:

* ``salt_D_factor``: a factor on the step's effective diffusivity (:attr:`procplan.model.Brine.D_factor`);
* ``brine_percent``: the brine's salt (or sugar) content [%].

Each sample runs :func:`procplan.run.engine.run_plan`; :func:`procplan.studies.metrics.salt_metrics` reads
the core and mean content at the end of the last brining step and the time to its solute stop (or core
target). The study reports the low tail of the contents (an under-salted core is the unsafe side for a cure
that must reach a salt level) and the high tail of the time.
"""

from __future__ import annotations

from dataclasses import replace

from procplan.errors import InvalidInputError
from procplan.files.brine import MAX_BRINE_PERCENT
from procplan.model import Plan

#: Range of a sampled diffusivity factor [-].
D_FACTOR_RANGE = (0.05, 20.0)


def _brining_steps(plan: Plan, field: str) -> list[int]:
    idx = [i for i, s in enumerate(plan.steps) if s.brine is not None and not s.brine.equalise]
    if not idx:
        raise InvalidInputError(field, None, "a plan with a brining or curing step ([steps.brine])")
    return idx


def apply_salt_D_factor(plan: Plan, v: float, i: int, ctx) -> Plan:
    """Every brining step's diffusivity times ``v``."""
    v = float(v)
    if not D_FACTOR_RANGE[0] <= v <= D_FACTOR_RANGE[1]:
        raise InvalidInputError("salt_D_factor", v, f"[{D_FACTOR_RANGE[0]:g}, {D_FACTOR_RANGE[1]:g}]")
    for j in _brining_steps(plan, "salt_D_factor"):
        b = plan.steps[j].brine
        plan = plan.with_step(j, brine=replace(b, D_factor=b.D_factor * v))
    return plan


def apply_brine_percent(plan: Plan, v: float, i: int, ctx) -> Plan:
    """Every brining step's brine at ``v`` % solute (a dry cure has no brine to vary)."""
    v = float(v)
    for j in _brining_steps(plan, "brine_percent"):
        b = plan.steps[j].brine
        if b.brine_fraction is None:
            raise InvalidInputError(
                "brine_percent", v, "a plan whose brining steps use a brine, not a dry cure"
            )
        top = MAX_BRINE_PERCENT.get(b.solute, 70.0)
        if not 0.1 <= v <= top:
            raise InvalidInputError("brine_percent", v, f"[0.1, {top:g}] %")
        plan = plan.with_step(j, brine=replace(b, brine_fraction=v / 100.0))
    return plan


#: name → (description with unit, apply(plan, value, step_index, context) → plan).
BRINE_VARIABLES = {
    "salt_D_factor": (
        "factor on the effective salt diffusivity of every brining step [-]",
        apply_salt_D_factor,
    ),
    "brine_percent": ("solute content of the brine of every brining step [%]", apply_brine_percent),
}

#: Solute figures summarised, and whether their low tail is the one reported.
SALT_SUMMARY = (("salt_core_percent", True), ("salt_mean_percent", True), ("salt_time_min", False))
