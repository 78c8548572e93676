"""Drying to a weight loss: the dry-air step ends when the piece has lost a stated share of its mass.

A technologist dries a product (a jerky strip in a drying oven, a sausage in a drying room) until it has lost,
say, 35 % of its weight, and weighs pieces to follow it. The step key ``stop_when_weight_loss_percent`` asks
for that: the coupled heat and moisture solution (:func:`procplan.run.dry_oven.solve_dry_oven`) runs over
the step, the time the predicted loss reaches the target is estimated from its loss history, and the step
is solved again on the shortened span, so that the coupled waveform relaxation converges on the step as it is
run (the moisture diffusivity follows the step's mean surface temperature, which depends on its length: on
the jerky demo, the crossing read in the 6 h history lies 17 % before the stop of the step run to it, so
the history alone cannot end the step). The stop time is corrected (secant, or the loss rate at the end)
until the loss lies within :data:`WEIGHT_STOP_TOLERANCE` of the target (at most :data:`MAX_STOP_PASSES`
corrections). The whole step and the trial spans are settled only to :data:`TRIAL_SURFACE_TOLERANCE_K`,
each starting from the previous solve's surface waveform; the span that meets the loss is settled to the
coupling's own tolerance, and corrected again if that moved the loss out of the tolerance.

The largest loss a product can reach in the air is its water down to the equilibrium moisture content with
the air: (X₀ − X_e)/(1 + X₀) of the mass, X_e the GAB isotherm at the air's relative humidity
(:mod:`procplan.properties.sorption`); a stop at or above it is refused by name.

Unsafe direction: the weight loss is evaporation alone (no drip, no fat rendered), and the moisture
diffusivities are indicative; a product that in fact loses water faster reaches the stated loss sooner and is
drier than planned, one that loses it slower (a case-hardened surface) needs longer. Weigh pieces at the
checkpoints on the sheet and extend the step until the weighed loss reaches the target.

References
----------
Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975, ch. 4 (plane sheet with surface evaporation).
van den Berg, C. (1984), GAB model of sorption (see :mod:`procplan.properties.sorption`).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from procplan.errors import InvalidInputError
from procplan.properties.boiling import LATENT_VAPORISATION_J_KG

#: Relative tolerance of the weight loss at the stop (0.2 %: 0.09 points of a 45 % loss, below what a plant
#: scale shows on a piece); reruns of the shortened step at most.
WEIGHT_STOP_TOLERANCE = 2e-3
MAX_STOP_PASSES = 4
#: Settling tolerance of the coupling [K] on trial spans while the stop time is sought (the span found is
#: then settled to the coupling's own tolerance, :data:`procplan.run.dry_oven.SURFACE_TOLERANCE_K`).
TRIAL_SURFACE_TOLERANCE_K = 1.0
#: Shares of the step's end at which the sheet lists the predicted weight loss for weighing pieces.
CHECKPOINT_SHARES = (0.25, 0.5, 0.75, 1.0)


def largest_loss_fraction(model) -> float:
    """The largest share of a piece's mass the air can take: its water down to the equilibrium moisture
    content with the air, (X₀ − X_e)/(1 + X₀) [-] (``model`` a :class:`procplan.run.dry_oven.DryOvenModel`)."""
    x_e = float(model.isotherm.moisture_kg_kg(min(model.air.relative_humidity, 0.999)))
    x0 = model.initial_kg_kg
    return max(0.0, (x0 - x_e) / (1.0 + x0))


def check_weight_stop(step, index: int, surface) -> None:
    """Refuse ``stop_when_weight_loss_percent`` on a step where no moisture model runs, or at or above the
    largest loss the product's water allows in the step's air."""
    loss = step.stop_when_weight_loss_fraction
    if loss is None:
        return
    field = f"steps[{index}].stop_when_weight_loss_percent"
    model = getattr(surface, "drying_air", None)
    if model is None:
        raise InvalidInputError(
            field,
            round(100.0 * loss, 6),
            "only on a drying step: an unwrapped product of a category with a published isotherm (meat, "
            "fruit-vegetable) in an air machine with a dew_point_C setting",
            "no moisture model runs on this step (wrapped product, wet medium or no dew point)",
        )
    largest = largest_loss_fraction(model)
    if loss >= largest:
        raise InvalidInputError(
            field,
            round(100.0 * loss, 6),
            f"(0, {100.0 * largest:.1f}) %: the product's water down to its equilibrium with the air "
            f"(relative humidity {100.0 * model.air.relative_humidity:.0f} %)",
        )


def loss_history_kg(res, area_m2: float) -> tuple[np.ndarray, np.ndarray]:
    """Times [s] and water lost per piece [kg] so far of a dry-air result (a DryOvenResult)."""
    return lost_history_kg(res.moisture, res.boiled, area_m2)


def boiled_latent_J(steps) -> float:
    """Latent heat the water boiled off inside in a run's dry-air steps took with it, per piece [J]
    (``steps``: the run's step results; :mod:`procplan.properties.boiling`)."""
    boiled = sum(sr.drying.boiled_kg for sr in steps if getattr(sr, "drying", None) is not None)
    return LATENT_VAPORISATION_J_KG * boiled


def lost_history_kg(moisture, boiled, area_m2: float) -> tuple[np.ndarray, np.ndarray]:
    """Water a piece has lost so far [kg] at the moisture history's times: the larger of the surface
    evaporation the moisture problem solved and the water boiled off inside past the boiling point (``boiled``:
    (times [s], kg) or None; :mod:`procplan.properties.boiling`). Both count the crust's water, so their sum
    would count it twice; the larger of the two is a lower bound of the true loss (a weight-loss stop read from
    it comes late rather than early).

    >>> from types import SimpleNamespace
    >>> m = SimpleNamespace(time_s=[0.0, 60.0, 120.0], lost_kg_m2=[0.0, -0.01, 0.5])
    >>> lost_history_kg(m, ([0.0, 60.0, 120.0], [0.0, 0.0, 0.8]), 0.1)[1].round(3).tolist()  # condensing, boiling
    [0.0, -0.001, 0.8]
    """
    t = np.asarray(moisture.time_s, dtype=float)
    evaporated = np.asarray(moisture.lost_kg_m2, dtype=float) * area_m2
    if boiled is None:
        return t, evaporated
    inside = np.interp(t, boiled[0], boiled[1])
    # (a surface below the dew point at first gains water: with nothing boiled, the gain stands)
    return t, np.where(inside > np.maximum(evaporated, 0.0), inside, evaporated)


def crossing_s(time_s, lost_kg, loss_kg: float) -> float | None:
    """The time the loss history first reaches ``loss_kg``, linear between the bracketing points (None: not
    reached).

    >>> crossing_s([0.0, 10.0, 20.0], [0.0, 1.0, 3.0], 2.0)
    15.0
    """
    t, lost = np.asarray(time_s, dtype=float), np.asarray(lost_kg, dtype=float)
    hit = np.nonzero(lost >= loss_kg)[0]
    if not hit.size:
        return None
    j = int(hit[0])
    if j == 0:
        return float(t[0])
    return float(np.interp(loss_kg, lost[j - 1 : j + 1], t[j - 1 : j + 1]))


def solve_to_weight_loss(solve, geometry, end_time_s: float, loss_kg: float, first_stop=None):
    """Run ``solve(end_time_s)`` (a dry-air solve over a span) and end it at the weight loss ``loss_kg`` [kg]
    (see the module note); the result carries ``weight_stop_s`` (None: the loss is not reached in the step, or
    the core stop came first).

    ``solve(span_s, guess=None, settle_K=...)``: each rerun starts its coupling from the previous run's
    surface waveform (``guess``); the trial spans are settled only to :data:`TRIAL_SURFACE_TOLERANCE_K`, and
    the span that meets the loss is then settled to the coupling's own tolerance (and corrected again if
    that moved the loss beyond :data:`WEIGHT_STOP_TOLERANCE`). ``first_stop(result, loss_kg)`` may give a
    better first span than the crossing in the whole step's loss history."""
    res = solve(end_time_s, settle_K=TRIAL_SURFACE_TOLERANCE_K)
    t_stop = crossing_s(*loss_history_kg(res, geometry.area_m2), loss_kg)
    if t_stop is None:
        res = res if res.settled else solve(end_time_s, guess=res)
        t_stop = crossing_s(*loss_history_kg(res, geometry.area_m2), loss_kg)
        if t_stop is None:
            return res
    if first_stop is not None:
        t_stop = first_stop(res, loss_kg) or t_stop
    t_stop = max(t_stop, 1e-6 * end_time_s)
    tried: list[tuple[float, float]] = []
    settle = False
    for _ in range(2 * MAX_STOP_PASSES):
        res = (
            solve(t_stop, guess=res)
            if settle
            else solve(t_stop, guess=res, settle_K=TRIAL_SURFACE_TOLERANCE_K)
        )
        if res.heat.stopped_at_s is not None:  # the core stop ends the shortened step first
            if settle or res.settled:
                return res
            settle = True
            continue
        close = abs(res.lost_kg - loss_kg) <= WEIGHT_STOP_TOLERANCE * loss_kg
        if close and res.settled:
            break
        settle = settle or close
        if close:
            continue  # the same span, settled
        tried.append((t_stop, res.lost_kg))
        t_next = _next_stop_s(tried, res, geometry.area_m2, loss_kg, end_time_s, first_stop)
        if t_next is None or len(tried) > MAX_STOP_PASSES:
            break
        t_stop = t_next
    if not res.settled:  # the corrections ran out on a trial span: settle the last span run
        res = solve(float(res.heat.time_s[-1]), guess=res)
    return replace(res, weight_stop_s=float(res.heat.time_s[-1]))


def _next_stop_s(
    tried, res, area_m2: float, loss_kg: float, end_time_s: float, first_stop=None
) -> float | None:
    """The next stop time: the secant through the last two (stop time, loss) pairs, or from the first the
    crossing in its own history (too long; ``first_stop(res, loss_kg)`` when given) or its loss rate at the
    end (too short); None: no way on."""
    (t1, l1) = tried[-1]
    if len(tried) > 1 and tried[-2][1] != l1:
        t0, l0 = tried[-2]
        t_next = t1 + (loss_kg - l1) * (t1 - t0) / (l1 - l0)
    elif l1 > loss_kg:
        t_next = (first_stop and first_stop(res, loss_kg)) or crossing_s(
            *loss_history_kg(res, area_m2), loss_kg
        )
    else:
        t, lost = loss_history_kg(res, area_m2)
        rate = (lost[-1] - lost[-2]) / (t[-1] - t[-2])
        t_next = t1 + (loss_kg - l1) / rate if rate > 0.0 else None
    if t_next is None or not np.isfinite(t_next):
        return None
    return float(min(end_time_s, max(0.5 * t1, t_next)))


def weight_checkpoints(res, area_m2: float, piece_mass_kg: float) -> tuple[tuple[float, float], ...]:
    """(time from the step's start [s], predicted weight loss [% of the piece's mass]) at
    :data:`CHECKPOINT_SHARES` of the step: the run's own loss history, for weighing pieces."""
    t, lost = loss_history_kg(res, area_m2)
    end = float(t[-1])
    return tuple(
        (share * end, 100.0 * float(np.interp(share * end, t, lost)) / piece_mass_kg)
        for share in CHECKPOINT_SHARES
    )
