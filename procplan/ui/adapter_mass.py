"""The app's door to the library for brining, curing and drying steps: the published diffusivities (registry),
a record's value at a brine temperature, the oven air's water content. Pages never read the registries or the
air model directly; they call these."""

from __future__ import annotations

from dataclasses import dataclass

import streamlit as st

from procplan.errors import InvalidInputError

#: The solute of a plan's brine table as the registry names it.
REGISTRY_SOLUTE = {"salt": "NaCl", "sugar": "sucrose"}


@dataclass(frozen=True)
class DiffusivityChoice:
    """One registry record as the planner reads it."""

    key: str
    product: str
    source: str
    low_C: float
    high_C: float
    conditions: str
    confirmed: str
    temperature_dependent: bool


@st.cache_data(show_spinner=False)
def diffusivities(solute: str) -> tuple[DiffusivityChoice, ...]:
    """The registry's records for a plan solute ('salt' or 'sugar')."""
    from procplan.properties.diffusivity import DIFFUSIVITIES

    wanted = REGISTRY_SOLUTE.get(solute)
    return tuple(
        DiffusivityChoice(
            key,
            r.product,
            r.source,
            float(r.range_C[0]),
            float(r.range_C[1]),
            r.conditions,
            r.confirmed,
            r.activation_J_mol is not None,
        )
        for key, r in DIFFUSIVITIES.items()
        if r.solute == wanted
    )


@st.cache_data(show_spinner=False)
def published_activations(solute: str) -> tuple[tuple[str, float], ...]:
    """(product, activation energy [kJ/mol]) of the registry's records fitted over two or more temperatures:
    those of the solute, or of every solute when it has none."""
    from procplan.properties.diffusivity import DIFFUSIVITIES

    fitted = [r for r in DIFFUSIVITIES.values() if r.activation_J_mol is not None]
    own = [r for r in fitted if r.solute == REGISTRY_SOLUTE.get(solute)]
    return tuple(
        (f"{r.solute} in {r.product.split(' (')[0]}", r.activation_J_mol / 1000.0) for r in (own or fitted)
    )


@st.cache_data(show_spinner=False)
def diffusivity_at(key: str, temperature_C: float) -> float | None:
    """A record's diffusivity [m²/s] at a temperature, or None outside the record's validity range."""
    from procplan.properties.diffusivity import salt_diffusivity_m2_s

    try:
        return float(salt_diffusivity_m2_s(key, temperature_C))
    except InvalidInputError:
        return None


def max_brine_percent(solute: str) -> float:
    """The strongest brine or syrup the plan file accepts for a solute [%]."""
    from procplan.files.brine import MAX_BRINE_PERCENT

    return float(MAX_BRINE_PERCENT.get(solute, 70.0))


def humidity_ratio_g_kg(dew_point_C: float) -> float | None:
    """Water content of air of a given dew point at sea-level pressure [g water / kg dry air]."""
    from procplan.surface.oven_air import humidity_ratio

    try:
        return 1000.0 * float(humidity_ratio(dew_point_C))
    except (InvalidInputError, ValueError):
        return None


def dry_air_applies(product: dict, equipment) -> bool:
    """The step runs heat and moisture together: an unwrapped product in an air machine with a dew point."""
    return (
        bool(product.get("unwrapped")) and equipment.medium == "air" and "dew_point_C" in equipment.settings
    )
