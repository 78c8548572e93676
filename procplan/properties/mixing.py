"""Properties of a food from those of its components: density, specific heat, volume fractions, conductivity.

All functions take mappings component name → mass fraction (or volume fraction) and component name →
property, where each value is a float or an array over temperature; the arrays broadcast.

The conductivity models live in ONE registry, :data:`CONDUCTIVITY_MODELS`, which the dispatcher
:func:`conductivity_mixture`, the command line and the user interface all read.

References
----------
ASHRAE Handbook—Refrigeration (2006), ch. 9 "Thermal properties of foods": density from the specific
volumes, mass-weighted specific heat, volume fractions, parallel, perpendicular (series) and
Maxwell–Eucken conductivity models.
Maxwell, J.C. (1904), A Treatise on Electricity and Magnetism, 3rd ed., Oxford; Eucken, A. (1940),
Forschung auf dem Gebiete des Ingenieurwesens, B-3, Forschungsheft 353.
Fricke, B.A. & Becker, B.R. (2001), Evaluation of thermophysical property models for foods,
HVAC&R Research 7(4), 311–330.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError

Fractions = Mapping[str, "np.ndarray | float"]


def density_mixture(mass_fractions: Fractions, rho_kg_m3: Fractions) -> np.ndarray:
    """Density of a mixture from the specific volumes of its components (no porosity).

    1/rho = Σ x_i / rho_i

    Parameters
    ----------
    mass_fractions : component → mass fraction x_i [kg/kg]
    rho_kg_m3 : component → density rho_i [kg/m³]

    Returns
    -------
    rho_kg_m3 : mixture density [kg/m³]

    References
    ----------
    ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. for density of foods (Choi & Okos 1986).

    >>> round(float(density_mixture({"water": 0.5, "fat": 0.5}, {"water": 1000.0, "fat": 900.0})), 2)
    947.37
    """
    return 1.0 / sum(np.asarray(mass_fractions[c]) / np.asarray(rho_kg_m3[c]) for c in mass_fractions)


def volume_fractions(mass_fractions: Fractions, rho_kg_m3: Fractions) -> dict[str, np.ndarray]:
    """Volume fractions of the components.

    v_i = (x_i / rho_i) / Σ_j (x_j / rho_j)

    Parameters
    ----------
    mass_fractions : component → mass fraction [kg/kg]
    rho_kg_m3 : component → density [kg/m³]

    Returns
    -------
    dict component → volume fraction [m³/m³]; they sum to 1

    References
    ----------
    ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. for volume fractions.
    """
    specific = {c: np.asarray(mass_fractions[c]) / np.asarray(rho_kg_m3[c]) for c in mass_fractions}
    total = sum(specific.values())
    return {c: s / total for c, s in specific.items()}


def specific_heat_mixture(mass_fractions: Fractions, cp_J_kgK: Fractions) -> np.ndarray:
    """Mass-weighted specific heat of a mixture (sensible heat only).

    cp = Σ x_i cp_i

    Parameters
    ----------
    mass_fractions : component → mass fraction [kg/kg]
    cp_J_kgK : component → specific heat [J/kgK]

    Returns
    -------
    cp_J_kgK : mixture specific heat [J/kgK]

    References
    ----------
    Choi & Okos (1986); ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. for specific heat of foods.
    """
    return sum(np.asarray(mass_fractions[c]) * np.asarray(cp_J_kgK[c]) for c in mass_fractions)


def conductivity_parallel(volume_fractions: Fractions, k_W_mK: Fractions) -> np.ndarray:
    """Parallel (volume-weighted arithmetic mean) conductivity: the upper bound for a mixture.

    k = Σ v_i k_i

    Parameters
    ----------
    volume_fractions : component → volume fraction [m³/m³]
    k_W_mK : component → conductivity [W/mK]

    Returns
    -------
    k_W_mK : effective conductivity [W/mK]

    References
    ----------
    ASHRAE Handbook—Refrigeration (2006), ch. 9, parallel model; Choi & Okos (1986).

    >>> float(conductivity_parallel({"a": 0.5, "b": 0.5}, {"a": 0.6, "b": 0.2}))
    0.4
    """
    return sum(np.asarray(volume_fractions[c]) * np.asarray(k_W_mK[c]) for c in volume_fractions)


def conductivity_series(volume_fractions: Fractions, k_W_mK: Fractions) -> np.ndarray:
    """Series (perpendicular, volume-weighted harmonic mean) conductivity: the lower bound for a mixture.

    1/k = Σ v_i / k_i

    Parameters
    ----------
    volume_fractions : component → volume fraction [m³/m³]
    k_W_mK : component → conductivity [W/mK]

    Returns
    -------
    k_W_mK : effective conductivity [W/mK]

    References
    ----------
    ASHRAE Handbook—Refrigeration (2006), ch. 9, perpendicular model.

    >>> round(float(conductivity_series({"a": 0.5, "b": 0.5}, {"a": 0.6, "b": 0.2})), 4)
    0.3
    """
    return 1.0 / sum(np.asarray(volume_fractions[c]) / np.asarray(k_W_mK[c]) for c in volume_fractions)


def _maxwell_eucken(v_c, k_c, dispersed: list[tuple[np.ndarray, np.ndarray]]) -> np.ndarray:
    """Maxwell–Eucken conductivity of a continuous phase (v_c, k_c) with several dispersed phases."""
    num = v_c * k_c
    den = v_c + 0.0 * k_c
    for v_d, k_d in dispersed:
        f = 3.0 * k_c / (2.0 * k_c + k_d)
        num = num + v_d * k_d * f
        den = den + v_d * f
    safe = np.where(den > 0, den, 1.0)
    return np.where(den > 0, num / safe, k_c)


def conductivity_maxwell_eucken(volume_fractions: Fractions, k_W_mK: Fractions) -> np.ndarray:
    """Maxwell–Eucken conductivity with water, and where there is ice, ice as the continuous phase.

    Two-phase form (continuous phase c, dispersed phase d, volume fraction v_d):

        k = k_c [2 k_c + k_d − 2 v_d (k_c − k_d)] / [2 k_c + k_d + v_d (k_c − k_d)]

    which, for several dispersed phases, is written (Eucken 1940)

        k = (v_c k_c + Σ_d v_d k_d F_d) / (v_c + Σ_d v_d F_d),   F_d = 3 k_c / (2 k_c + k_d).

    The model holds for two phases, so it is applied in stages, as the ASHRAE chapter does for frozen
    foods: (1) the non-ice part — unfrozen water as the continuous phase with every other non-ice
    component dispersed in it; (2) where ice is present, ice as the continuous phase with that non-ice
    mixture dispersed in it. At the initial freezing point (no ice yet) stage 2 returns the stage-1 value,
    so k is continuous across the freezing point.

    Parameters
    ----------
    volume_fractions : component → volume fraction [m³/m³]; must contain ``"water"``, may contain ``"ice"``
    k_W_mK : component → conductivity [W/mK]

    Returns
    -------
    k_W_mK : effective conductivity [W/mK]

    References
    ----------
    Maxwell (1904); Eucken (1940); ASHRAE Handbook—Refrigeration (2006), ch. 9, Maxwell–Eucken model;
    Fricke & Becker (2001), HVAC&R Research 7(4).

    >>> v = {"water": 0.8, "protein": 0.2}
    >>> k = {"water": 0.6, "protein": 0.2}
    >>> kc, kd, vd = 0.6, 0.2, 0.2
    >>> two_phase = kc * (2 * kc + kd - 2 * vd * (kc - kd)) / (2 * kc + kd + vd * (kc - kd))
    >>> bool(abs(float(conductivity_maxwell_eucken(v, k)) - two_phase) < 1e-12)
    True
    """
    if "water" not in volume_fractions:
        raise InvalidInputError(
            "volume_fractions", sorted(volume_fractions), "components that include 'water'"
        )
    others = [c for c in volume_fractions if c not in ("water", "ice")]
    v_w = np.asarray(volume_fractions["water"])
    k_w = np.asarray(k_W_mK["water"])
    k_nonice = _maxwell_eucken(
        v_w, k_w, [(np.asarray(volume_fractions[c]), np.asarray(k_W_mK[c])) for c in others]
    )
    if "ice" not in volume_fractions:
        return k_nonice
    v_ice = np.asarray(volume_fractions["ice"])
    v_nonice = v_w + sum((np.asarray(volume_fractions[c]) for c in others), 0.0 * v_w)
    return _maxwell_eucken(v_ice, np.asarray(k_W_mK["ice"]), [(v_nonice, k_nonice)])


#: Registry of effective-conductivity models: name → f(volume_fractions, k_W_mK) -> k_W_mK.
CONDUCTIVITY_MODELS: dict[str, Callable[[Fractions, Fractions], np.ndarray]] = {
    "parallel": conductivity_parallel,
    "series": conductivity_series,
    "maxwell-eucken": conductivity_maxwell_eucken,
}


def conductivity_mixture(
    model: str, volume_fractions: Fractions, k_W_mK: Fractions, field: str = "conductivity_model"
) -> np.ndarray:
    """Effective conductivity by the model named in :data:`CONDUCTIVITY_MODELS`.

    >>> float(conductivity_mixture("parallel", {"a": 0.5, "b": 0.5}, {"a": 0.6, "b": 0.2}))
    0.4
    """
    validate.choice(field, model, CONDUCTIVITY_MODELS)
    return CONDUCTIVITY_MODELS[model](volume_fractions, k_W_mK)
