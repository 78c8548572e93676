"""Solver choice for one step, with its reasons, and the effective properties of the exact solution.

One place holds the rules: the engine calls :func:`choose_solver` for every step, and the variability
study's fast path calls it (and :func:`exact_properties`) to know whether, and how, the exact solution
stands in for the engine.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.model import SOLVERS
from procplan.properties.table import PropertyTable
from procplan.run.step_surface import StepSurface

#: Largest relative spread of k and of the apparent cp over a step's temperature range for which the
#: exact (constant-property) solution is used in automatic mode.
PROPERTY_SPREAD_LIMIT = 0.10


@dataclass(frozen=True)
class SolverChoice:
    """The solver of one step and why.

    Attributes
    ----------
    solver : "exact" (series / product solution) or "finite-volume"
    reason : the reason in words a technologist can read
    blockers : what keeps the exact solution from applying (empty when nothing does)
    """

    solver: str
    reason: str
    blockers: tuple[str, ...] = ()


def _spread(values: np.ndarray) -> float:
    m = float(np.mean(values))
    return float((np.max(values) - np.min(values)) / m) if m > 0 else np.inf


def _blockers(
    requested: str,
    props: PropertyTable,
    uniform_start: bool,
    start_C: float,
    surface: StepSurface,
    field_carried_on: bool,
) -> tuple[list[str], bool, float, float]:
    """What keeps the exact solution from applying, whether the product freezes, and the temperature range."""
    lo, hi = min(start_C, *surface.medium_C), max(start_C, *surface.medium_C)
    grid = np.linspace(lo, hi, 41) if hi > lo else np.array([lo])
    tf = props.initial_freezing_C
    freezes = tf is not None and lo < tf
    k_spread = _spread(props.conductivity(grid))
    cp_spread = _spread(props.apparent_cp(grid))
    blockers = []
    if not uniform_start:
        blockers.append("the temperature field carried from the previous step is not uniform")
    elif field_carried_on and requested == "auto":
        blockers.append("the temperature field is carried into the following steps")
    if surface.drying_air is not None:
        air = surface.drying_air.air
        blockers.append(
            f"the unwrapped product's wet surface evaporates in dry air at {air.air_C:g} °C (wet bulb "
            f"{air.wet_bulb_C():.0f} °C) and dries into a crust, which slows the heating: heat and moisture are "
            "solved together"
        )
    elif not surface.constant:
        blockers.append("the medium temperature, h or surface evaporation changes during the step")
    if freezes:
        blockers.append(f"the product passes its initial freezing point {tf:.1f} °C (latent heat)")
    if k_spread > PROPERTY_SPREAD_LIMIT or cp_spread > PROPERTY_SPREAD_LIMIT:
        blockers.append(f"k varies {k_spread:.0%} and cp {cp_spread:.0%} over {lo:.0f}…{hi:.0f} °C")
    return blockers, freezes, lo, hi


def choose_solver(
    requested: str,
    *,
    props: PropertyTable,
    uniform_start: bool,
    start_C: float,
    surface: StepSurface,
    step_label: str,
    field_carried_on: bool = False,
) -> SolverChoice:
    """The solver for one step with the reasons, in words a technologist can read.

    Exact (series / product) solutions need a uniform start, a constant medium and h, no phase change
    and nearly constant properties (k and the apparent cp within :data:`PROPERTY_SPREAD_LIMIT`);
    otherwise the finite-volume enthalpy solver runs. In automatic mode a step whose field is carried
    into a following step (``field_carried_on``) also runs finite volumes, since an exact solution cannot
    start from a non-uniform field.

    Parameters
    ----------
    requested : "auto", "exact" or "finite-volume"
    props : the product's property table
    uniform_start : whether the step starts from a uniform temperature
    start_C : the step's starting (core) temperature [°C]
    surface : the step's resolved surface condition
    step_label : names the step in an error
    field_carried_on : whether the step's field is carried into a following step

    Raises
    ------
    InvalidInputError : "exact" requested where the exact solution cannot apply
    """
    validate.choice("solver", requested, SOLVERS)
    blockers, freezes, lo, hi = _blockers(requested, props, uniform_start, start_C, surface, field_carried_on)
    found = tuple(blockers)
    if requested == "exact":
        if not uniform_start or not surface.constant or freezes:
            raise InvalidInputError(
                "solver",
                "exact",
                "auto or finite-volume for this plan",
                f"{step_label}: " + "; ".join(blockers),
            )
        note = f" (note: {blockers[0]})" if blockers else ""
        return SolverChoice("exact", "exact solution as requested" + note, found)
    if requested == "finite-volume":
        return SolverChoice("finite-volume", "finite-volume solver as requested", found)
    if blockers:
        return SolverChoice("finite-volume", "finite-volume enthalpy solver: " + "; ".join(blockers), found)
    return SolverChoice(
        "exact",
        f"exact series solution: uniform start, constant medium and h, no phase change, k and cp vary ≤ {PROPERTY_SPREAD_LIMIT:.0%} over {lo:.0f}…{hi:.0f} °C",
    )


def exact_properties(props: PropertyTable, start_C, medium_C):
    """The constant properties the exact solution runs with: k at the mean of start and medium, the
    density, and the secant cp = ΔH/ΔT over the step (so the heat exchanged is exact).

    Works on a scalar start or an array of starts (one per sample).

    Returns
    -------
    (k_W_mK, rho_kg_m3, cp_J_kgK, t_mid_C) : floats for a scalar start, arrays for an array start
    """
    start = np.asarray(start_C, dtype=float)
    medium = float(medium_C)
    t_mid = 0.5 * (start + medium)
    k = props.conductivity(t_mid)
    rho = props.mass_density_kg_m3
    d_t = medium - start
    with np.errstate(invalid="ignore", divide="ignore"):
        cp = np.where(
            np.abs(d_t) > 1e-9,
            (props.enthalpy(np.full(start.shape, medium)) - props.enthalpy(start)) / d_t,
            props.apparent_cp(start),
        )
    if start.ndim == 0:
        return float(k), rho, float(cp), float(t_mid)
    return k, rho, cp, t_mid


def exact_sample_times(duration_s: float, points: int) -> np.ndarray:
    """Sample times [s] of an exact (series) step: ``points`` equally spaced, plus 61 geometrically spaced from
    1e-6 of the step, so that a thin or highly conductive piece in a liquid, which settles in seconds, has its
    surface heat flow integrated from resolved samples.

    >>> t = exact_sample_times(600.0, 601)
    >>> float(t[0]), float(t[1]) < 1e-3, float(t[-1]), bool((t[1:] > t[:-1]).all())
    (0.0, True, 600.0, True)
    """
    return np.unique(np.r_[np.linspace(0.0, duration_s, points), np.geomspace(1e-6, 1.0, 61) * duration_s])
