"""Drip of a meat product: the water its heated proteins expel, from the temperature field of each step.

The heat solution already gives the temperature of every cell; the water-holding curve of the product's
category (:mod:`procplan.properties.water_holding`) turns the hottest temperature each cell has reached into
the share of its raw water it can no longer hold. The finite-volume solver keeps that running peak field
(``peak_measure``) and records the volume-mean share at each time of the history; the water expelled follows
from it as the field heats (:func:`procplan.properties.water_holding.drip_history_kg`), never taken back when
the piece cools. The peak field is carried from step to step, so a rest after the oven (the core still rising)
expels more, and a chill expels nothing.

Where it applies: an unwrapped product of a category with a water-holding curve, in steps solved on finite
volumes (a temperature field), before any brining step (salt raises the water-holding capacity, which the curve
does not carry). The library's "meat" category holds red meat, poultry and fish; the curve is that of beef (Goñi and
Salvadori (2012) found a water-holding function of beef to predict the steam-cooking loss of tuna as well), so
for poultry and fish it is indicative. In a dry-air oven the expelled water reaches the surface, where part of it feeds the
evaporation the moisture model already counts and the rest drips; in steam (no evaporation) it all drips. A
wrapped product keeps its purge in the pack (not counted); a step that dries to a weight-loss stop (jerky) is a
drying, not a cook: the water its proteins release reaches the surface of the thin piece and is in the
evaporation the moisture model solves, so no drip is added there (the peak field still carries on).

The cook loss is given as a bracket, one definition for every output. Its lower bound is the evaporation the
moisture model solves (the step's weight loss and yield as before: the juice stays in the piece). Its upper bound
adds the drainable juice: all the water the heated meat can no longer hold on the curve, less what has already
evaporated (the expelled water reaches the surface and feeds the evaporation first, so it is not counted twice),
taken as draining at once. The total water lost in the upper bound is therefore the larger of the expelled water
and the evaporation (:func:`procplan.properties.water_holding.drip_history_kg`). No rate of flow of the juice
through the meat is taken (none is in hand): a joint keeps much of its expelled juice until it is carved, so the
plant's loss lies between the bounds, nearer the lower one for a large joint weighed hot, nearer the upper one for
small pieces or a joint carved and drained. The cap holds within each step; the evaporation of a later step
solved without a moisture field (a chill's surface evaporation, counted in the outcomes) is water the piece still
held after its juice drained, so over a whole plan the upper loss may exceed the expelled water by it.
Unsafe direction: none for heat or lethality (untouched); a yield planned from the upper bound of the yield is
optimistic by up to the drainable juice, one planned from the lower bound pessimistic by as much.

The drip leaves as liquid at the product's own temperature: it takes no latent heat and the heat problem is
solved as before, so cook times, temperature histories and lethality do not change; only the weight loss and
the yield do.

References
----------
Goñi, S.M., Salvadori, V.O. (2012). Prediction of weight losses during steam cooking of meat. 16th IUFOST World
Congress, Foz do Iguaçu (abstract: beef 10.9–21.6 % predicted against 15–18 % measured; tuna 15.2 % against
about 14.5 %). Honikel, K.O., Hamm, R. (1994), in Quality Attributes and their Measurement in Meat, Poultry and
Fish Products, Blackie, ch. 5 (cooking losses of meat 25–35 %). Lowe, B., Experimental Cookery, Wiley (roast beef
ribs 21.7–22.5 %). The water-holding curve: :mod:`procplan.properties.water_holding`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from procplan.properties.water_holding import (
    CATEGORY_WATER_HOLDING,
    WaterHolding,
    drip_history_kg,
    mean_expelled_share,
)

#: Why a step of an unwrapped meat product drips and how the bracket of its cook loss is taken, as the outputs say it.
BASIS = (
    "unwrapped meat: as it heats, its proteins denature and expel the water they can no longer hold (the "
    "water-holding curve of beef against the hottest temperature each part has reached). The lower cook loss is "
    "the evaporation alone (the juice stays in the piece); the upper one adds all the expelled juice that has not "
    "evaporated, as if it drained at once. A joint keeps much of its expelled juice until it is carved, so the "
    "loss the plant weighs lies between the two. The juice takes no heat with it: cook times and lethality are "
    "those of the heat solution alone"
)

#: The caution that goes with the bracket wherever it is shown (text, sheet, app).
CAUTION = (
    "A joint keeps much of the juice its heated proteins expel until it is carved, so the loss the plant weighs "
    "usually lies between the two values. Published losses of cooked beef: rib roasts 21.7–22.5 % (Lowe, "
    "Experimental Cookery) and steam-cooked beef 15–18 % (Goñi and Salvadori 2012) fall in such a range; "
    "cooking losses of meat of 25–35 % (Honikel and Hamm 1994) reach its upper end and beyond. Weigh a trial "
    "batch before planning on a yield."
)


@dataclass(frozen=True, eq=False)
class DripState:
    """What the drip of the next step starts from (the upper-bound piece: every loss so far taken away).

    Attributes
    ----------
    holding : the product's water-holding curve
    raw_mass_kg : mass of the raw piece [kg]
    mass_kg : mass of the piece at the step's start [kg] (the raw mass less the evaporation and drip so far)
    held_kg : water the piece holds at the step's start [kg]
    share : volume-mean share of the raw water expelled so far [-]
    peak_field : the hottest temperature each cell has reached so far [°C] (None: none yet)
    raw_water_kg : water of the raw piece [kg] (None: ``held_kg``, a raw piece)
    raw_share : the raw piece's own expelled share, the water it holds (None: taken from the first step's start)
    released_kg : water expelled in a drying step to a weight stop, counted in its evaporation, never a drip [kg]
    """

    holding: WaterHolding
    raw_mass_kg: float
    mass_kg: float
    held_kg: float
    share: float = 0.0
    peak_field: np.ndarray | None = field(default=None, repr=False)
    raw_water_kg: float | None = None
    raw_share: float | None = None
    released_kg: float = 0.0


@dataclass(frozen=True, eq=False)
class DripSummary:
    """The bracket of a meat product's cook loss in one step: evaporation alone (lower) and evaporation with all
    the juice the heated meat can no longer hold drained (upper); see the module note.

    Attributes
    ----------
    drainable_juice_kg, drainable_juice_percent : juice the heated proteins expelled in the step and that did not
        evaporate [kg] and as a share of the piece's mass at the step's start [%] (the upper bound's drip)
    evaporative_loss_percent : water evaporated in a dry-air step [% of the same mass] (0 elsewhere): the lower
        bound of the cook loss, the step's weight loss as before
    cook_loss_upper_percent : evaporation and drainable juice together [%]: the upper bound of the cook loss
    yield_percent : 100 − evaporative loss [%] (the upper bound of the yield, as before the drip)
    yield_lower_percent : 100 − cook_loss_upper_percent [%]
    expelled_share_percent : share of the raw water the piece can no longer hold at the step's end [%]
    holding : the water-holding curve and its source
    basis : why the drip applies and how the bracket is taken, in words
    time_s, drainable_juice_percent_history : times from the step's start [s] and the drainable juice so far [%]
    """

    drainable_juice_kg: float
    drainable_juice_percent: float
    evaporative_loss_percent: float
    cook_loss_upper_percent: float
    yield_percent: float
    yield_lower_percent: float
    expelled_share_percent: float
    holding: str
    basis: str = ""
    time_s: np.ndarray | None = field(default=None, compare=False, repr=False)
    drainable_juice_percent_history: np.ndarray | None = field(default=None, compare=False, repr=False)


def start_state(product, props) -> DripState | None:
    """The drip state of a raw piece (None when the product has no water-holding curve: see the module note)."""
    holding = CATEGORY_WATER_HOLDING.get(product.category)
    comp = product.composition_dict
    if holding is None or not product.unwrapped or "water" not in comp:
        return None
    mass = float(props.mass_density_kg_m3) * product.geometry.volume_m3
    water = float(comp["water"]) * mass
    return DripState(holding, mass, mass, water, raw_water_kg=water)


def drip_settings(state: DripState | None) -> dict[str, Any]:
    """The solver setting that keeps the running peak field and records the expelled share ({} without drip)."""
    if state is None:
        return {}
    prior = state.peak_field

    def measure(peak_C: np.ndarray, volume_m3: np.ndarray) -> float:
        p = peak_C if prior is None or prior.size != peak_C.size else np.maximum(peak_C, prior.ravel())
        return mean_expelled_share(p, volume_m3, state.holding)

    return {"peak_measure": measure}


def _evaporated_kg(state: DripState, time_s: np.ndarray, drying) -> np.ndarray:
    """Water evaporated since the step's start [kg] at the heat history's times (zeros without drying)."""
    if drying is None or drying.time_s is None or drying.loss_percent is None:
        return np.zeros_like(time_s)
    pct = np.interp(time_s, drying.time_s, drying.loss_percent, right=drying.weight_loss_percent)
    return pct / 100.0 * state.raw_mass_kg


def step_drip(state: DripState | None, fv, drying=None) -> tuple[DripSummary | None, DripState | None]:
    """The step's drip bracket (None where it does not apply) and the state the next step starts from.

    ``fv`` : the step's ConductionResult (None for a step without a temperature field); ``drying`` : its
    :class:`procplan.run.dry_oven.DryingSummary` (None: no evaporation counted)."""
    if state is None or fv is None or getattr(fv, "peak_measure", None) is None:
        return None, state
    t = np.asarray(fv.time_s, dtype=float)
    share = np.asarray(fv.peak_measure, dtype=float)
    # the raw piece's own share (its starting field, before any step) is the water it holds: not a drip
    raw_share = float(share[0]) if state.raw_share is None else state.raw_share
    raw_water = state.held_kg if state.raw_water_kg is None else state.raw_water_kg
    share = np.maximum(share, state.share if state.peak_field is not None else raw_share)
    evaporated = _evaporated_kg(state, t, drying)
    lost = raw_water - state.held_kg + state.released_kg
    drip = drip_history_kg(share, raw_water, evaporated, lost_kg=lost, raw_share=raw_share)
    released = state.released_kg
    weight_stop = drying is not None and drying.stop_weight_loss_percent is not None
    if weight_stop:
        # a drying step (weight stop): the released water is in the evaporation, never a drip later on
        released += float(drip[-1])
        drip = np.zeros_like(drip)
    d_kg, e_kg = float(drip[-1]), float(evaporated[-1])
    mass = state.mass_kg
    d_pct = 100.0 * d_kg / mass
    e_pct = 0.0 if drying is None else float(drying.weight_loss_percent)
    # the step's upper loss as the plan's outcomes sum it per step: its evaporation and its drainable juice
    upper = e_pct + d_pct
    summary = DripSummary(
        drainable_juice_kg=d_kg,
        drainable_juice_percent=d_pct,
        evaporative_loss_percent=e_pct,
        cook_loss_upper_percent=upper,
        yield_percent=100.0 - e_pct,
        yield_lower_percent=100.0 - upper,
        expelled_share_percent=100.0 * float(share[-1]),
        holding=state.holding.source,
        basis=BASIS,
        time_s=t,
        drainable_juice_percent_history=100.0 * drip / mass,
    )
    peak = fv.peak_field
    if state.peak_field is not None and peak is not None and state.peak_field.shape == peak.shape:
        peak = np.maximum(peak, state.peak_field)
    after = DripState(
        state.holding,
        state.raw_mass_kg,
        mass - d_kg - e_kg,
        max(state.held_kg - d_kg - e_kg, 0.0),
        float(share[-1]),
        peak,
        raw_water,
        raw_share,
        released,
    )
    return (None if weight_stop else summary), after


def cook_loss_text(evaporation_percent: float, upper_percent: float) -> str:
    """The cook-loss bracket in words, as every output gives it.

    >>> cook_loss_text(11.7, 32.8)
    'cook loss between 11.7 % (evaporation) and 32.8 % (with all the juice the heated meat can no longer hold draining out)'
    """
    return (
        f"cook loss between {evaporation_percent:.1f} % (evaporation) and {upper_percent:.1f} % (with all the juice "
        "the heated meat can no longer hold draining out)"
    )


def yield_text(yield_lower_percent: float, yield_upper_percent: float) -> str:
    """The yield bracket in words.

    >>> yield_text(67.2, 88.3)
    'yield between 67.2 % and 88.3 %'
    """
    return f"yield between {yield_lower_percent:.1f} % and {yield_upper_percent:.1f} %"


def run_bracket(oc) -> tuple[float, float, float, float] | None:
    """(lower cook loss, upper cook loss, lower yield, upper yield) of a run's outcomes [%], one definition for
    every output (None without a drip model): the lower loss is the evaporation alone (0 without any)."""
    if oc is None or getattr(oc, "cook_loss_upper_percent", None) is None:
        return None
    upper_yield = 100.0 if oc.yield_percent is None else float(oc.yield_percent)
    return 100.0 - upper_yield, float(oc.cook_loss_upper_percent), float(oc.yield_lower_percent), upper_yield
