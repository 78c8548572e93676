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

The drip leaves as liquid at the product's own temperature: it takes no latent heat and the heat problem is
solved as before, so cook times, temperature histories and lethality do not change; only the weight loss and
the yield do (lower yield, closer to what the plant weighs).

References
----------
Goñi, S.M., Salvadori, V.O. (2012). Prediction of weight losses during steam cooking of meat. 16th IUFOST World
Congress, Foz do Iguaçu (abstract: beef 10.9–21.6 % predicted against 15–18 % measured; tuna 15.2 % against
about 14.5 %). The water-holding curve: :mod:`procplan.properties.water_holding`.
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

#: Why a step of an unwrapped meat product drips, as the outputs say it.
BASIS = (
    "unwrapped meat: as it heats, its proteins denature and expel the water they can no longer hold (the "
    "water-holding curve of beef against the hottest temperature each part has reached); the juice is taken "
    "as leaving at once, which overstates the drip of a thick piece while it cooks (lower yield); it takes no "
    "heat with it, so cook times and lethality are those of the heat solution alone"
)


@dataclass(frozen=True, eq=False)
class DripState:
    """What the drip of the next step starts from.

    Attributes
    ----------
    holding : the product's water-holding curve
    raw_mass_kg : mass of the raw piece [kg]
    mass_kg : mass of the piece at the step's start [kg] (the raw mass less the evaporation and drip so far)
    held_kg : water the piece holds at the step's start [kg]
    share : volume-mean share of the raw water expelled so far [-]
    peak_field : the hottest temperature each cell has reached so far [°C] (None: none yet)
    """

    holding: WaterHolding
    raw_mass_kg: float
    mass_kg: float
    held_kg: float
    share: float = 0.0
    peak_field: np.ndarray | None = field(default=None, repr=False)


@dataclass(frozen=True, eq=False)
class DripSummary:
    """Water a meat product expels in one step as its proteins denature, beside the step's evaporation.

    Attributes
    ----------
    drip_loss_kg, drip_loss_percent : water expelled in the step [kg] and as a share of the piece's mass at the
        step's start [%]
    evaporative_loss_percent : water evaporated in a dry-air step [% of the same mass] (0 elsewhere)
    cook_loss_percent : evaporation and drip together [%]
    yield_percent : mass at the step's end over the mass at its start [%] (100 − cook loss)
    expelled_share_percent : share of the raw water the piece can no longer hold at the step's end [%]
    holding : the water-holding curve and its source
    basis : why the drip applies and how it is taken, in words
    time_s, drip_percent_history : times from the step's start [s] and the drip so far [%]
    """

    drip_loss_kg: float
    drip_loss_percent: float
    evaporative_loss_percent: float
    cook_loss_percent: float
    yield_percent: float
    expelled_share_percent: float
    holding: str
    basis: str = ""
    time_s: np.ndarray | None = field(default=None, compare=False, repr=False)
    drip_percent_history: np.ndarray | None = field(default=None, compare=False, repr=False)


def start_state(product, props) -> DripState | None:
    """The drip state of a raw piece (None when the product has no water-holding curve: see the module note)."""
    holding = CATEGORY_WATER_HOLDING.get(product.category)
    comp = product.composition_dict
    if holding is None or not product.unwrapped or "water" not in comp:
        return None
    mass = float(props.mass_density_kg_m3) * product.geometry.volume_m3
    return DripState(holding, mass, mass, float(comp["water"]) * mass)


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
    """The step's drip (None where it does not apply) and the state the next step starts from.

    ``fv`` : the step's ConductionResult (None for a step without a temperature field); ``drying`` : its
    :class:`procplan.run.dry_oven.DryingSummary` (None: no evaporation counted)."""
    if state is None or fv is None or getattr(fv, "peak_measure", None) is None:
        return None, state
    t = np.asarray(fv.time_s, dtype=float)
    share = np.asarray(fv.peak_measure, dtype=float)
    # the raw piece's own share (its starting field, before any step) is the water it holds: not a drip
    base = state.share if state.peak_field is not None else float(share[0])
    share = np.maximum(share, base)
    evaporated = _evaporated_kg(state, t, drying)
    drip = drip_history_kg(np.r_[base, share], state.held_kg, np.r_[0.0, evaporated])[1:]
    if drying is not None and drying.stop_weight_loss_percent is not None:
        drip = np.zeros_like(drip)  # a drying step (weight stop): the released water is in the evaporation
    d_kg, e_kg = float(drip[-1]), float(evaporated[-1])
    mass = state.mass_kg
    d_pct, e_pct = 100.0 * d_kg / mass, 100.0 * e_kg / mass
    summary = DripSummary(
        drip_loss_kg=d_kg,
        drip_loss_percent=d_pct,
        evaporative_loss_percent=e_pct,
        cook_loss_percent=d_pct + e_pct,
        yield_percent=100.0 - d_pct - e_pct,
        expelled_share_percent=100.0 * float(share[-1]),
        holding=state.holding.source,
        basis=BASIS,
        time_s=t,
        drip_percent_history=100.0 * drip / mass,
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
    )
    return (None if drying is not None and drying.stop_weight_loss_percent is not None else summary), after
