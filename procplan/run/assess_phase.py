"""Phase-change and cold-chain outcomes of a run: freezing and thawing times from the history beside
published estimates, and the mean kinetic temperature a plan asks for.

Like :mod:`procplan.run.assess`, this only wires the run's history to the pure functions of
:mod:`procplan.outcomes`; every model lives there.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from procplan import outcomes as oc
from procplan.errors import InvalidInputError
from procplan.model import Plan
from procplan.outcomes.cold_chain import MKT_DELTA_H_J_MOL
from procplan.outcomes.freezing_time import ehtd_of_dimensions
from procplan.properties.table import PropertyTable


@dataclass(frozen=True)
class FreezingOutcome:
    """Freezing times, from the history and from the Plank and Pham estimates.

    Attributes
    ----------
    initial_freezing_C : the product's initial freezing point [°C]
    from_history : onset, end of the latent plateau and time to the storage temperature from the core history
    plank_s : Plank's freezing time [s] (None when not applicable)
    pham : Pham's freezing time with its parts (None when not applicable)
    basis : the shape and dimension the estimates use, and their limits, in words
    """

    initial_freezing_C: float
    from_history: oc.FreezingFromHistory
    plank_s: float | None
    pham: oc.PhamFreezingTime | None
    basis: str


#: What each freezing time is, in the words every output shows.
FREEZING_TIMES_TEXT = (
    "the onset and end times are the numerical prediction (this run's history); "
    "Plank's equation counts the latent heat only and underestimates; Pham's method includes the sensible heat"
)


def freezing_shape(g, h: float, k_f: float) -> tuple[str, float, float | None, str]:
    """(shape, length [m], E or None, basis) of the Plank and Pham estimates for a geometry.

    Bricks and finite cylinders: a slab of the smallest dimension D with the equivalent heat-transfer
    dimensionality E (Cleland, Cleland & Earle 1987), t_shape = t_slab(D) / E.
    """
    if g.shape in ("finite-cylinder", "brick"):
        dims = (
            (g.diameter_m, g.diameter_m, g.length_m)
            if g.shape == "finite-cylinder"
            else (g.length_m, g.width_m, g.height_m)
        )
        e, d = ehtd_of_dimensions(dims, h, k_f)
        basis = (
            f"Plank and Pham for the {g.shape}: a slab of the smallest dimension ({d * 1000:.0f} mm) divided by the "
            f"equivalent heat-transfer dimensionality E = {e:.2f} (Cleland, Cleland & Earle 1987)"
        )
        return "slab", d, e, basis
    axis = min(g.axes, key=lambda a: a.length_m)
    length = 2 * axis.length_m if not (g.shape == "slab" and g.faces == 1) else 2 * g.thickness_m
    return (
        axis.kind,
        length,
        None,
        f"Plank and Pham for the {axis.kind}, characteristic dimension {length * 1000:.0f} mm",
    )


def freezing_outcome(result, tf: float, storage_C: float) -> FreezingOutcome:
    """Freezing times of a run (``result`` a :class:`procplan.run.assess._Run`) from its history and Plank's
    and Pham's estimates."""
    hist = result.history
    props = result.properties
    fh = oc.freezing_from_history(hist["time_s"].to_numpy(), hist["core_C"].to_numpy(), tf, storage_C)
    sr = next((s for s in result.steps if min(s.surface.medium_C) < tf), result.steps[0])
    seg = hist[hist["step_index"] == sr.index]
    t_init = float(seg["mean_C"].iloc[0]) if sr.index else result.plan.start_temperature_C
    medium = float(np.mean(sr.surface.medium_C))
    h = float(np.mean(sr.surface.h_W_m2K))
    end_C = storage_C
    rho = props.mass_density_kg_m3
    cp_f = float(props.apparent_cp(-39.0))
    cp_u = float(props.apparent_cp(tf + 1.0))
    latent = float(props.enthalpy(tf) - props.enthalpy(end_C)) - cp_f * (tf - end_C)
    k_f = float(props.conductivity(0.5 * (end_C + medium)))
    shape, length, e, basis = freezing_shape(result.plan.product.geometry, h, k_f)
    basis = f"{FREEZING_TIMES_TEXT}. {basis}"
    plank = pham = None
    if medium < end_C and latent > 0:
        try:
            plank = oc.freezing_time_plank(shape, length, rho, latent, tf, medium, h, k_f) / (e or 1.0)
            pham = oc.freezing_time_pham(
                shape, length, rho, cp_u, cp_f, latent, max(t_init, tf + 0.1), end_C, medium, h, k_f, E=e
            )
        except InvalidInputError as exc:
            basis += f"; estimates not available: {exc}"
    return FreezingOutcome(tf, fh, plank, pham, basis)


#: What the thawing times are, in the words every output shows.
THAWING_TIMES_TEXT = (
    "the time to the core target is the numerical prediction (this run's history); Plank's equation adapted "
    "to thawing counts the latent heat only, for complete thawing (core at the initial freezing point), and "
    "underestimates when the medium is well above it"
)


@dataclass(frozen=True)
class ThawingOutcome:
    """Thawing or tempering of a frozen product: the time to the core target from the history, and Plank's
    thawing time for complete thawing.

    Attributes
    ----------
    step : the thawing step's name
    initial_freezing_C : the product's initial freezing point [°C]
    target_C : the core temperature aimed at: the step's stop temperature, else the initial freezing point [°C]
    from_history : when the core reached ``target_C`` (times [s] from the start of the plan)
    thawed : the core target is at or above the initial freezing point (thawing; below it: tempering)
    plank_s : Plank's thawing time for complete thawing [s] (None when not applicable)
    basis : the shape, dimension and properties of the estimate, and its limits, in words
    """

    step: str
    initial_freezing_C: float
    target_C: float
    from_history: oc.TargetResult
    thawed: bool
    plank_s: float | None
    basis: str


def thawing_outcome(plan: Plan, history: pd.DataFrame, steps, props: PropertyTable) -> ThawingOutcome | None:
    """Thawing outcome of the first step that warms a frozen core through a medium above the initial freezing
    point (None when no step does)."""
    tf = props.initial_freezing_C
    if tf is None:
        return None
    for sr, step in zip(steps, plan.steps, strict=True):
        seg = history[history["step_index"] == sr.index]
        core0 = float(seg["core_C"].iloc[0]) if sr.index else plan.start_temperature_C
        medium = float(np.mean(sr.surface.medium_C))
        if len(seg) and core0 < tf - 0.05 and medium > tf:
            return _thawing(plan, history, sr, step, props, tf, core0, medium)
    return None


def _thawing(plan, history, sr, step, props, tf: float, core0: float, medium: float) -> ThawingOutcome:
    target = step.stop_when_core_C if step.stop_when_core_C is not None else tf
    seg = history[history["step_index"] == sr.index]
    if sr.index > 0:  # the previous step's last row: this step's starting state
        seg = pd.concat([history[history["step_index"] == sr.index - 1].iloc[-1:], seg])
    reached = oc.time_to_temperature(
        seg["time_s"].to_numpy(), seg["core_C"].to_numpy(), target, direction="up", start_s=sr.start_s
    )
    h = float(np.mean(sr.surface.h_W_m2K))
    k_u = float(props.conductivity(tf + 1.0))
    cp_f = float(props.apparent_cp(min(core0, tf - 5.0) - 1.0))
    latent = float(props.enthalpy(tf) - props.enthalpy(core0)) - cp_f * (tf - core0)
    shape, length, e, shape_basis = freezing_shape(plan.product.geometry, h, k_u)
    basis = f"{THAWING_TIMES_TEXT}. {shape_basis.replace('Plank and Pham', 'Plank')}"
    plank = None
    try:
        plank = oc.thawing_time_plank(shape, length, props.mass_density_kg_m3, latent, tf, medium, h, k_u) / (
            e or 1.0
        )
    except InvalidInputError as exc:
        basis += f"; estimate not available: {exc}"
    return ThawingOutcome(sr.name, tf, target, reached, target >= tf - 1e-9, plank, basis)


@dataclass(frozen=True)
class MeanKineticOutcome:
    """The mean kinetic temperature of the whole run at one point.

    Attributes
    ----------
    point : "core", "surface" or "mean"
    mean_kinetic_C : Haynes' mean kinetic temperature of the point's history [°C]
    max_C : the limit it is judged against [°C] (None: reported only)
    passed : mean_kinetic_C ≤ max_C (None without a limit)
    duration_s : the history's length [s]
    delta_h_J_mol : activation energy used [J/mol]
    basis : the formula, its weights and its source, in words
    """

    point: str
    mean_kinetic_C: float
    max_C: float | None
    passed: bool | None
    duration_s: float
    delta_h_J_mol: float
    basis: str


def mean_kinetic_outcome(plan: Plan, history: pd.DataFrame) -> MeanKineticOutcome | None:
    """The mean kinetic temperature the plan's checks ask for (None when they ask for none)."""
    point = plan.checks.mean_kinetic_point
    if point is None:
        return None
    t = history["time_s"].to_numpy()
    mkt = float(oc.mean_kinetic_temperature_C(t, history[f"{point}_C"].to_numpy()))
    limit = plan.checks.mean_kinetic_max_C
    basis = (
        f"Haynes' mean kinetic temperature of the {point} over the whole plan, ΔH = "
        f"{MKT_DELTA_H_J_MOL / 1000:g} kJ/mol (ΔH/R = 10 000 K), readings weighted by their time "
        "(United States Pharmacopeia <1079.2>)"
    )
    return MeanKineticOutcome(
        point=point,
        mean_kinetic_C=mkt,
        max_C=limit,
        passed=None if limit is None else bool(mkt <= limit),
        duration_s=float(t[-1] - t[0]),
        delta_h_J_mol=MKT_DELTA_H_J_MOL,
        basis=basis,
    )
