"""Brining, curing, infusion and salt equalisation during a plan step: Fick's law beside the heat.

A step with a ``brine`` record (:class:`procplan.model.Brine`) runs the solute's diffusion in the product
(:func:`procplan.conduction.transport.solve_diffusion`, one piece, solute mass fraction of the product) before
its heat: at the brine temperature (the step's medium), with the surface at equilibrium with the brine (or a
saturated solution under a dry cure) through a surface coefficient, or with no exchange (equalisation).
A stop on the core or mean solute content sets the step's duration; the heat then runs for that time.

Choices and their direction of error:

* D is taken at the brine temperature: a product entering warmer than the brine takes salt slightly faster at
  first than planned (the plan errs long on brining time; the heat equilibrates in minutes to hours, the salt in
  days).
* The surface coefficient, when not given, comes from the heat–mass analogy of the brine flow (Chilton–Colburn,
  Incropera et al. 7th ed. eq. 6.92, h_m = h/(ρ c_p Le^⅔)) with the diffusivity of NaCl in water; it rarely
  matters (mass Biot numbers are in the hundreds), and the record says which one was used.
* The product's water content is held constant (no hydration or dehydration), so the salt content is the
  effective-diffusivity model's, as in the registry's sources.

Against published practice: semi-hard cheeses (Gouda type, 2–12 kg) reach 1.6–2.2 % NaCl after 1–3 days in
20–22 % brine at 10–15 °C (a dairy-technology text reproduced on the page "Brine Salting",
buffalobrewingstl.com; original book not identified). This model, with the white-cheese diffusivity at 12.5 °C, a
water fraction of 0.42 (from memory) and wheels of 200 × 60 mm and 350 × 110 mm (from memory), gives 2.6–3.0 %:
about 35 % high, the direction expected of a model without the water that leaves the cheese and without the
lower salt-in-moisture partition of a fatty matrix. The partition (``partition`` in the brine table) is the
plan's handle for a product measured to take up less.

References
----------
Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975.
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat and Mass Transfer, 7th ed.,
Wiley, 2011, eq. 6.92 and Table A.8 (binary diffusion in water).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from procplan.conduction.transport import DiffusionResult, solve_diffusion
from procplan.errors import InvalidInputError
from procplan.model import Brine, Product, Step
from procplan.properties import diffusivity as registry
from procplan.properties.salting import (
    NACL_SATURATED_FRACTION,
    equilibrium_fraction,
    salted_freezing_point_C,
)
from procplan.properties.table import PropertyTable

__all__ = [
    "MassStepResult",
    "SaltState",
    "brine_first",
    "brine_until",
    "run_mass_step",
    "salt_columns",
    "salted_properties",
]

#: Diffusivity of NaCl in water at 25 °C, infinite dilution [m²/s] (CRC Handbook, diffusion coefficients in
#: liquids, 1.61e-9, from memory), scaled to other temperatures by Stokes–Einstein, D ∝ T/μ.
NACL_IN_WATER_25C_M2_S = 1.61e-9
#: Points of a brining step's history.
HISTORY_POINTS = 241


@dataclass(frozen=True)
class SaltState:
    """The solute carried from step to step: the field of the last diffusion (None: uniform ``fraction``)."""

    solute: str
    fraction: float  # mean solute mass fraction [kg/kg]
    core_fraction: float
    water_fraction: float
    field: DiffusionResult | None = None


@dataclass(frozen=True)
class MassStepResult:
    """Solute in the product over one step (times from the step's start) and how it was computed.

    Fractions are solute mass fractions of the product [kg/kg]; ``uptake_kg`` is the solute taken up by one piece.
    """

    solute: str
    mode: str  # "brine", "dry cure" or "equalisation"
    time_s: np.ndarray
    core_fraction: np.ndarray
    surface_fraction: np.ndarray
    mean_fraction: np.ndarray
    uptake_kg: np.ndarray
    profile_fraction: np.ndarray
    positions_m: tuple[np.ndarray, ...]
    equilibrium_fraction: float | None
    brine_fraction: float | None
    temperature_C: float
    D_m2_s: float
    diffusivity_source: str
    k_m_m_s: float | None
    k_m_source: str
    mass_biot: float | None
    stopped_at_s: float | None
    stopped_on: str | None
    target_core_fraction: float | None
    target_mean_fraction: float | None
    target_core_reached_s: float | None
    target_mean_reached_s: float | None
    mass_balance_error: float
    method: str
    warnings: tuple[str, ...] = ()
    state: SaltState | None = None  # what the step leaves for the next one
    freezing_note: str | None = None  # how the salt changed the freezing point of the later steps


# --- inputs of the diffusion ---------------------------------------------------------------------------------
def _water_fraction(brine: Brine, product: Product, label: str) -> float:
    if brine.water_fraction is not None:
        return brine.water_fraction
    water = product.composition_dict.get("water")
    if water is None:
        raise InvalidInputError(
            f"{label}.brine.product_water_percent", None, "5 to 99 %", "the product gives no composition"
        )
    return float(water)


def _diffusivity(brine: Brine, temperature_C: float, label: str) -> tuple[float, str]:
    """D [m²/s] at the brine temperature and where it came from, times the brine's study factor."""
    d, source = _base_diffusivity(brine, temperature_C, label)
    if brine.D_factor == 1.0:
        return d, source
    return d * brine.D_factor, f"{source}; × {brine.D_factor:.3g} (sampled in a study)"


def _base_diffusivity(brine: Brine, temperature_C: float, label: str) -> tuple[float, str]:
    if brine.diffusivity is not None:
        rec = registry.DIFFUSIVITIES[brine.diffusivity]
        lo, hi = rec.range_C
        if not lo <= temperature_C <= hi:
            raise InvalidInputError(
                f"{label}.brine.diffusivity",
                brine.diffusivity,
                f"a record valid at the brine temperature {temperature_C:g} °C",
                f"{brine.diffusivity} is valid from {lo:g} to {hi:g} °C; give D_m2_s for this temperature",
            )
        d = float(registry.salt_diffusivity_m2_s(brine.diffusivity, temperature_C))
        how = "Arrhenius fit of the published values" if rec.activation_J_mol is not None else "single value"
        return d, f"{rec.source} ({how}, valid {lo:g}–{hi:g} °C)"
    if brine.activation_J_mol is not None:
        d = float(
            registry.diffusivity_arrhenius(
                brine.D_m2_s, brine.activation_J_mol, temperature_C, brine.reference_C
            )
        )
        return d, (
            f"given: {brine.D_m2_s:.3g} m²/s at {brine.reference_C:g} °C, E_a {brine.activation_J_mol / 1000:g} kJ/mol"
        )
    at = f" at {brine.reference_C:g} °C" if brine.reference_C is not None else ""
    return float(brine.D_m2_s), f"given: {brine.D_m2_s:.3g} m²/s{at}, no temperature dependence given"


def _nacl_in_water_m2_s(temperature_C: float) -> float:
    """D of NaCl in water [m²/s]: the 25 °C value scaled by Stokes–Einstein (D μ/T constant)."""
    from procplan.surface.media import water_properties

    mu25 = water_properties(25.0).mu_Pa_s
    mu = water_properties(max(temperature_C, 0.5)).mu_Pa_s
    return NACL_IN_WATER_25C_M2_S * (temperature_C + 273.15) / 298.15 * mu25 / mu


def _surface_coefficient(brine: Brine, surface, temperature_C: float, c_eq: float, rho_kg_m3: float):
    """(k_m [m/s] on the product side or math.inf, where it came from)."""
    if brine.k_m_m_s is not None:
        return brine.k_m_m_s, "given in the plan"
    if brine.dry_cure:
        return math.inf, "dry cure: the surface is held at a saturated solution"
    if brine.solute != "salt" or not 0.01 <= brine.brine_fraction <= 0.23:
        return (
            math.inf,
            "not given: the surface is held at equilibrium with the brine (upper bound of uptake)",
        )
    from procplan.surface.media import brine_properties

    try:
        b = brine_properties(temperature_C, brine.brine_fraction)
    except InvalidInputError:
        return math.inf, "not given, and the brine is outside its property range: surface at equilibrium"
    d_ab = _nacl_in_water_m2_s(temperature_C)
    alpha = b.k_W_mK / (b.rho_kg_m3 * b.cp_J_kgK)
    lewis = alpha / d_ab
    h_m = surface.breakdown.h_conv_W_m2K / (b.rho_kg_m3 * b.cp_J_kgK * lewis ** (2.0 / 3.0))
    km = h_m * b.rho_kg_m3 * brine.brine_fraction / (c_eq * rho_kg_m3)
    return km, (
        f"heat–mass analogy (Chilton–Colburn, Incropera eq. 6.92) from the convection h {surface.breakdown.h_conv_W_m2K:.0f} "
        f"W/m²K: mass-transfer coefficient {h_m:.3g} m/s in the brine (Le {lewis:.0f}), {km:.3g} m/s on the product side"
    )


# --- the step -----------------------------------------------------------------------------------------------
def _equilibrium(brine: Brine, water: float) -> float | None:
    if brine.equalise:
        return None
    z = NACL_SATURATED_FRACTION if brine.dry_cure else brine.brine_fraction
    return equilibrium_fraction(z, water, brine.partition)


def _check_targets(brine: Brine, start: float, c_eq: float | None, label: str) -> None:
    """Stops and targets must lie between the starting content and the equilibrium (or be reached already)."""
    lo, hi = (start, c_eq) if c_eq is not None else (start, start)
    lo, hi = min(lo, hi), max(lo, hi)
    for name, value in (
        ("stop_when_core_percent", brine.stop_when_core_fraction),
        ("stop_when_mean_percent", brine.stop_when_mean_fraction),
    ):
        if value is not None and not lo < value < hi:
            raise InvalidInputError(
                f"{label}.brine.{name}",
                round(value * 100, 6),
                f"between the content at the start ({lo * 100:.3g} %) and the equilibrium ({hi * 100:.3g} %)",
            )


def _first_time(t: np.ndarray, y: np.ndarray, target: float | None) -> float | None:
    if target is None:
        return None
    rising = y[-1] >= y[0]
    hit = np.nonzero(y >= target if rising else y <= target)[0]
    if hit.size == 0:
        return None
    i = int(hit[0])
    if i == 0:
        return 0.0
    return float(t[i - 1] + (t[i] - t[i - 1]) * (target - y[i - 1]) / (y[i] - y[i - 1]))


def run_mass_step(
    step: Step,
    index: int,
    product: Product,
    props: PropertyTable,
    surface,
    salt: SaltState | None,
    duration_s: float,
) -> tuple[MassStepResult, SaltState]:
    """Run the solute diffusion of one step; returns its record and the state carried on."""
    brine, label = step.brine, f"steps[{index}]"
    water = salt.water_fraction if salt is not None else _water_fraction(brine, product, label)
    start = salt.fraction if salt is not None else (brine.initial_fraction or 0.0)
    temperature = float(np.mean(surface.fluid_temperature_C))
    d, d_source = _diffusivity(brine, temperature, label)
    c_eq = _equilibrium(brine, water)
    _check_targets(brine, start, c_eq, label)
    rho = props.mass_density_kg_m3
    km, km_source = (None, "no exchange at the surface (equalisation)")
    if c_eq is not None:
        km, km_source = _surface_coefficient(brine, surface, temperature, c_eq, rho)
    initial = salt.field if salt is not None and salt.field is not None else start
    span = (
        0.0,
        max(c_eq or 0.0, start, float(np.max(getattr(initial, "final_field", start)))) * 1.001 + 1e-9,
    )
    res = solve_diffusion(
        product.geometry,
        d,
        initial,
        c_eq if c_eq is not None else start,
        duration_s,
        k_m_m_s=km,
        capacity=rho,
        surface_flux=None if c_eq is not None else (lambda t, c: 0.0 * c),
        concentration_range=span,
        output_time_s=np.linspace(0.0, duration_s, HISTORY_POINTS),
        stop_when_centre=brine.stop_when_core_fraction,
        stop_when_mean=brine.stop_when_mean_fraction,
    )
    state = SaltState(brine.solute, float(res.mean[-1]), float(res.centre[-1]), water, res)
    return replace(
        _record(brine, res, c_eq, temperature, d, d_source, km, km_source, product), state=state
    ), state


def _record(
    brine, res: DiffusionResult, c_eq, temperature, d, d_source, km, km_source, product
) -> MassStepResult:
    length = product.geometry.conduction_length_m
    warnings = []
    if product.packaging:
        warnings.append("the packaging is taken as no barrier to the solute")
    if res.mass_balance_error > 0.005:
        warnings.append(f"solute balance error {res.mass_balance_error:.2%} exceeds 0.5 %")
    mode = "equalisation" if brine.equalise else "dry cure" if brine.dry_cure else "brine"
    return MassStepResult(
        solute=brine.solute,
        mode=mode,
        time_s=res.time_s,
        core_fraction=res.centre,
        surface_fraction=res.surface,
        mean_fraction=res.mean,
        uptake_kg=res.uptake,
        profile_fraction=res.final_field,
        positions_m=res.positions_m,
        equilibrium_fraction=c_eq,
        brine_fraction=brine.brine_fraction,
        temperature_C=temperature,
        D_m2_s=d,
        diffusivity_source=d_source,
        k_m_m_s=km,
        k_m_source=km_source,
        mass_biot=None if km is None else km * length / d,
        stopped_at_s=res.stopped_at_s,
        stopped_on=res.stopped_on,
        target_core_fraction=brine.target_core_fraction,
        target_mean_fraction=brine.target_mean_fraction,
        target_core_reached_s=_first_time(res.time_s, res.centre, brine.target_core_fraction),
        target_mean_reached_s=_first_time(res.time_s, res.mean, brine.target_mean_fraction),
        mass_balance_error=res.mass_balance_error,
        method=res.method,
        warnings=tuple(warnings),
    )


# --- the engine's hooks --------------------------------------------------------------------------------------
def brine_first(
    step: Step, index: int, product: Product, props: PropertyTable, surface, salt: SaltState | None
):
    """Run the solute before the heat: (record, the step with its duration cut at a solute stop)."""
    mass, _ = run_mass_step(step, index, product, props, surface, salt, step.duration_s)
    if mass.stopped_at_s is not None:
        step = replace(step, duration_s=max(float(mass.stopped_at_s), 1e-6 * step.duration_s))
    return mass, step


def brine_until(
    mass: MassStepResult, step: Step, index: int, product: Product, props, surface, salt, end_s: float
) -> MassStepResult:
    """The record again to ``end_s`` [s] when the heat stopped before the solute did (a temperature stop)."""
    if end_s >= float(mass.time_s[-1]) * (1 - 1e-9):
        return mass
    cut = replace(step, brine=replace(step.brine, stop_when_core_fraction=None, stop_when_mean_fraction=None))
    again, _ = run_mass_step(cut, index, product, props, surface, salt, max(end_s, 1e-6 * step.duration_s))
    return again


# --- after the step: the freezing point, and the history columns -------------------------------------------
def salted_properties(
    product: Product, props: PropertyTable, salt: SaltState
) -> tuple[PropertyTable, str | None]:
    """The property table with the initial freezing point lowered by the salt taken up (mean content), and a
    note saying so (None when nothing changes: no salt, or a product that does not freeze in the model).

    The mean salt content is used: the core (less salt) really freezes at a higher temperature and the surface
    (more salt) at a lower one than planned, so a freezing step's core errs long (safe) and a chilling step's
    surface-freezing check errs early (safe)."""
    if salt.solute != "salt" or salt.fraction <= 0 or props.initial_freezing_C is None:
        return props, None
    tf0 = float(props.initial_freezing_C)
    tf = max(salted_freezing_point_C(tf0, salt.fraction, salt.water_fraction), -35.0)
    if product.fixed_properties is not None:
        new = replace(product, fixed_properties=replace(product.fixed_properties, freezing_C=tf))
    else:
        new = replace(product, freezing_C=tf)
    table = new.property_table()
    given = f"initial freezing point {tf:.2f} °C (given)"
    if given in table.source:
        table = replace(
            table, source=table.source.replace(given, f"initial freezing point {tf:.2f} °C (lowered by salt)")
        )
    note = (
        f"salt taken up ({salt.fraction * 100:.2f} % mean) lowers the initial freezing point from {tf0:.2f} °C to "
        f"{tf:.2f} °C for the later steps (NaCl depression of the water phase, CoolProp MNA / Melinder 2007)"
    )
    return table, note


def salt_columns(history, step_results, initial_fraction: float) -> dict[str, np.ndarray]:
    """``core_salt_percent`` and ``mean_salt_percent`` on the history's times: interpolated inside each step
    with a solute record, held between them (the salt does not move without one), ``initial_fraction`` before."""
    t = history["time_s"].to_numpy()
    idx = history["step_index"].to_numpy()
    core = np.full(t.shape, initial_fraction)
    mean = np.full(t.shape, initial_fraction)
    last_core = last_mean = initial_fraction
    for sr in step_results:
        rows = idx == sr.index
        m = getattr(sr, "mass", None)
        if m is not None:
            local = t[rows] - sr.start_s
            core[rows] = np.interp(local, m.time_s, m.core_fraction)
            mean[rows] = np.interp(local, m.time_s, m.mean_fraction)
            last_core, last_mean = float(m.core_fraction[-1]), float(m.mean_fraction[-1])
        else:
            core[rows], mean[rows] = last_core, last_mean
    return {"core_salt_percent": 100.0 * core, "mean_salt_percent": 100.0 * mean}
