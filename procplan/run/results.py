"""What a run returns: the per-step provenance (StepSolverDetails, StepResult) and the PlanResult with its
history, properties and outcomes, with a short repr and an HTML view for notebooks."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import pandas as pd

from procplan.conduction.regime import Regime
from procplan.model import Plan
from procplan.properties.table import PropertyTable
from procplan.run import machine_load as ml
from procplan.run.assess import Outcomes
from procplan.run.step_surface import StepSurface

if TYPE_CHECKING:  # the series' provenance, named in an annotation only (a finite-volume run needs no series)
    from procplan.conduction.product import ExactProvenance

__all__ = ["PlanResult", "StepResult", "StepSolverDetails"]


@dataclass(frozen=True)
class StepSolverDetails:
    """How a step was solved, as a lab notebook would record it. Fields that do not apply to the step's
    solver are None (and left out of the JSON summary).

    Attributes
    ----------
    k_W_mK, rho_kg_m3, cp_J_kgK : exact solver: the constant properties used [W/mK], [kg/m³], [J/kgK]
    properties_at : exact solver: where the properties were taken
    series : exact solver: the series provenance (axes, Biot numbers, terms, truncation bound)
    grid : finite volumes: the grid in words (nodes per axis)
    time_steps, rejected_steps : finite volumes: accepted and rejected time steps [-]
    dt_min_s, dt_max_s : finite volumes: smallest and largest accepted time step [s]
    method : finite volumes: the discretisation in words
    time_tolerance_K, local_error_estimate_K : error-controlled steps: tolerance, largest local estimate [K]
    h_surface_C : surface temperature averaged over the step at which h was evaluated again [°C]
    h_change_on_second_pass : relative change of h at that temperature [-]; above
        :data:`H_SURFACE_TOLERANCE` the step ran again with the new h
    regime : the conduction regime of the step (from the Biot number)
    """

    k_W_mK: float | None = None
    rho_kg_m3: float | None = None
    cp_J_kgK: float | None = None
    properties_at: str | None = None
    series: ExactProvenance | None = None
    grid: str | None = None
    time_steps: int | None = None
    rejected_steps: int | None = None
    dt_min_s: float | None = None
    dt_max_s: float | None = None
    method: str | None = None
    time_tolerance_K: float | None = None
    local_error_estimate_K: float | None = None
    h_surface_C: float | None = None
    h_change_on_second_pass: float | None = None
    regime: str | None = None


@dataclass(frozen=True)
class StepResult:
    """Provenance and key numbers of one step (times [s] from the start of the plan)."""

    index: int
    name: str
    start_s: float
    end_s: float
    solver: str
    reason: str
    regime: Regime
    surface: StepSurface
    stopped: bool
    stop_time_s: float | None
    energy_balance_error: float
    details: StepSolverDetails = StepSolverDetails()
    warnings: tuple[str, ...] = ()
    #: why the step cannot be relied on (its energy balance), None when it can
    unreliable_reason: str | None = None
    #: solute taken up during the step (procplan.run.mass_step.MassStepResult), None without a brine record
    mass: Any = None
    machine_load: ml.MachineLoadResult | None = None  # how the machine carried the batch (None: set point)
    load_note: str | None = None  # why a step in a machine ran as an empty machine (set point held)
    drying: Any = None  # run.dry_oven.DryingSummary: moisture of an unwrapped product in hot dry air
    #: a second product solved alone in a step that couples no medium (run.second_product.SecondProductStep)
    second_alone: Any = None
    #: run.drip.DripSummary: the cook-loss bracket of an unwrapped meat product (evaporation, juice)
    drip: Any = None

    @property
    def duration_s(self) -> float:
        return self.end_s - self.start_s


@dataclass(frozen=True, eq=False)
class PlanResult:
    """The outcome of running a plan: history, per-step provenance and assessed outcomes."""

    plan: Plan
    history: pd.DataFrame
    steps: tuple[StepResult, ...]
    properties: PropertyTable
    piece_mass_kg: float
    outcomes: Outcomes | None = None
    warnings: tuple[str, ...] = ()
    #: why the run cannot be relied on (a step's energy balance off by more than 1 % after a finer rerun)
    unreliable_reasons: tuple[str, ...] = ()
    #: a packed load (plan.packing): its slowest and fastest positions beside the single free piece
    packing: Any = None

    def _overview(self) -> tuple[str, list[tuple[str, str, str, str]], str]:
        """Title, one row per step (name, solver, minutes, core and surface at its end) and the verdict."""
        h = self.history
        rows = []
        for sr in self.steps:
            end = h[h["time_s"] <= sr.end_s + 1e-9].iloc[-1]
            rows.append(
                (
                    sr.name,
                    sr.solver,
                    f"{sr.duration_s / 60.0:.1f} min",
                    f"core {end['core_C']:.1f} °C, surface {end['surface_C']:.1f} °C",
                )
            )
        oc = self.outcomes
        verdicts = []
        if oc is not None and oc.rule_check is not None:
            verdicts.append(f"rule {'PASS' if oc.rule_check.passed else 'FAIL'}")
        if oc is not None and oc.lethality is not None and oc.lethality.passed is not None:
            verdicts.append(f"lethality {'PASS' if oc.lethality.passed else 'FAIL'}")
        if oc is not None:
            reached = [t.target.reached for t in oc.targets]
            if reached:
                verdicts.append("targets reached" if all(reached) else "target NOT reached")
        return self.plan.title, rows, ", ".join(verdicts) or "no checks"

    def __repr__(self) -> str:
        title, rows, verdict = self._overview()
        lines = [f"PlanResult({title!r}: {len(rows)} step(s), {verdict})"]
        lines += [f"  {i + 1}. {n} [{s}] {d} -> {t}" for i, (n, s, d, t) in enumerate(rows)]
        return "\n".join(lines)

    def _repr_html_(self) -> str:
        from html import escape

        title, rows, verdict = self._overview()
        body = "".join(
            "<tr>" + "".join(f"<td>{escape(str(c))}</td>" for c in (i + 1, *r)) + "</tr>"
            for i, r in enumerate(rows)
        )
        head = "".join(f"<th>{c}</th>" for c in ("#", "step", "solver", "duration", "at the end"))
        return (
            f"<b>{escape(title)}</b> ({escape(verdict)})"
            f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"
        )
