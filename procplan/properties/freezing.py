"""Freezing of a food: initial freezing point, bound water, ice fraction below the freezing point.

Below its initial freezing point t_f a food is a mixture of ice (x_ice), unfrozen water
(x_w − x_ice) and solids; the ice fraction grows as the temperature falls and the remaining solution
concentrates. Two published ice-fraction models are in the one registry :data:`ICE_MODELS`; the initial
freezing point, when the user gives none, comes from the Chang & Tao (1981) fits in
:data:`FREEZING_POINT_MODELS`. A freezing point given by the user always wins over the estimate.

References
----------
ASHRAE Handbook—Refrigeration (2006), ch. 9 "Thermal properties of foods": initial freezing point,
ice fraction and enthalpy sections.
Chang, H.D. & Tao, L.C. (1981). Correlations of enthalpies of food systems. J. Food Sci. 46:1493–1497.
Schwartzberg, H.G. (1976). Effective heat capacities for the freezing and thawing of food.
J. Food Sci. 41:152–156.
Chen, C.S. (1985). Thermodynamic analysis of the freezing and thawing of foods: ice content and Mollier
diagram. J. Food Sci. 50:1163–1166.
Tchigeov, G. (1979). Thermophysical processes in food refrigeration technology. Food Industry, Moscow.
Fricke, B.A. & Becker, B.R. (2001). Evaluation of thermophysical property models for foods.
HVAC&R Research 7(4):311–330 (ranks Chen, then Tchigeov, best for the ice fraction).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.properties.composition import Composition

#: Latent heat of fusion of water at 0 °C [J/kg] (ASHRAE Handbook—Refrigeration 2006, ch. 9: L0 = 333.6 kJ/kg).
LATENT_HEAT_WATER_J_KG: float = 333_600.0

#: Range accepted for an initial freezing point [°C]: strictly below 0 °C (the ice-fraction models are
#: written for a freezing-point depression) and far enough above −40 °C to leave a frozen range.
FREEZING_C_RANGE: tuple[float, float] = (-35.0, -0.05)

#: Bound-water coefficient of Schwartzberg (1976): x_b = 0.4 x_protein.
BOUND_WATER_PER_PROTEIN: float = 0.4


# --- initial freezing point --------------------------------------------------------------------
def initial_freezing_point_chang_tao_meat(water: float) -> float:
    """Initial freezing point of meats from the water content, Chang & Tao (1981).

    T_f = 271.18 + 1.47 x_w   [K]

    Parameters
    ----------
    water : mass fraction of water x_w [kg/kg]

    Returns
    -------
    freezing_C : initial freezing point [°C]

    Notes
    -----
    A crude one-variable fit; a measured freezing point should be preferred.

    References
    ----------
    Chang & Tao (1981), J. Food Sci. 46:1493; ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. (2).

    >>> round(initial_freezing_point_chang_tao_meat(0.74), 3)
    -0.882
    """
    return 271.18 + 1.47 * water - 273.15


def initial_freezing_point_chang_tao_fruit_vegetable(water: float) -> float:
    """Initial freezing point of fruits and vegetables from the water content, Chang & Tao (1981).

    T_f = 287.56 − 49.19 x_w + 37.07 x_w²   [K]

    Notes
    -----
    The fit lies below 0 °C only for 0.44 < x_w < 0.89; outside that range no estimate is made and the
    freezing point must be given.

    References
    ----------
    Chang & Tao (1981); ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. (3).

    >>> round(initial_freezing_point_chang_tao_fruit_vegetable(0.84), 3)
    -0.753
    """
    return 287.56 - 49.19 * water + 37.07 * water**2 - 273.15


def initial_freezing_point_chang_tao_juice(water: float) -> float:
    """Initial freezing point of fruit juices from the water content, Chang & Tao (1981).

    T_f = 120.47 + 327.35 x_w − 176.49 x_w²   [K]

    References
    ----------
    Chang & Tao (1981); ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. (4).

    >>> round(initial_freezing_point_chang_tao_juice(0.88), 3)
    -1.286
    """
    return 120.47 + 327.35 * water - 176.49 * water**2 - 273.15


#: Registry of initial-freezing-point estimates: food category → f(water fraction) -> °C.
FREEZING_POINT_MODELS: dict[str, Callable[[float], float]] = {
    "meat": initial_freezing_point_chang_tao_meat,
    "fruit-vegetable": initial_freezing_point_chang_tao_fruit_vegetable,
    "juice": initial_freezing_point_chang_tao_juice,
}


def check_freezing_C(freezing_C, field: str = "freezing_C") -> float:
    """Validate an initial freezing point [°C] against :data:`FREEZING_C_RANGE`."""
    lo, hi = FREEZING_C_RANGE
    return validate.number(field, freezing_C, minimum=lo, maximum=hi, unit="°C")


def initial_freezing_point_C(
    composition: Composition,
    category: str = "meat",
    *,
    freezing_C: float | None = None,
    field: str = "category",
) -> float:
    """Initial freezing point [°C]: the user's value when given, else the Chang & Tao (1981) fit of ``category``.

    Parameters
    ----------
    composition : the food's composition (only the water fraction is used by the fits)
    category : key of :data:`FREEZING_POINT_MODELS` (``"meat"``, ``"fruit-vegetable"``, ``"juice"``)
    freezing_C : a measured initial freezing point [°C]; when given it is returned (validated) as is

    Raises
    ------
    InvalidInputError
        when the category is unknown, or the fit gives no freezing point below −0.05 °C for this water
        content (then ``freezing_C`` must be given).

    >>> c = Composition(water=0.74, protein=0.22, fat=0.03, carbohydrate=0.0, ash=0.01)
    >>> round(initial_freezing_point_C(c), 3)
    -0.882
    >>> initial_freezing_point_C(c, freezing_C=-1.7)
    -1.7
    """
    if freezing_C is not None:
        return check_freezing_C(freezing_C)
    validate.choice(field, category, FREEZING_POINT_MODELS)
    estimate = FREEZING_POINT_MODELS[category](composition.water)
    lo, hi = FREEZING_C_RANGE
    if not (lo <= estimate <= hi):
        raise InvalidInputError(
            "freezing_C",
            None,
            f"a measured initial freezing point in [{lo:g}, {hi:g}] °C",
            f"the Chang & Tao {category} fit gives {estimate:+.2f} °C at water = {composition.water:g}, outside its "
            "useful range; give the freezing point",
        )
    return float(estimate)


# --- bound water ---------------------------------------------------------------------------------
def bound_water_schwartzberg(protein: float, water: float | None = None) -> float:
    """Bound (unfreezable) water fraction, Schwartzberg (1976).

    x_b = 0.4 x_protein   (never more than the water present)

    Parameters
    ----------
    protein : mass fraction of protein [kg/kg]
    water : mass fraction of water [kg/kg]; when given, x_b is limited to it

    Returns
    -------
    bound_water : mass fraction of bound water [kg/kg of food]

    References
    ----------
    Schwartzberg (1976), J. Food Sci. 41:152; ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. (8).

    >>> bound_water_schwartzberg(0.2)
    0.08000000000000002
    """
    xb = BOUND_WATER_PER_PROTEIN * protein
    return xb if water is None else min(xb, water)


# --- ice fraction ----------------------------------------------------------------------------------
def ice_fraction_chen(temperature_C, freezing_C: float, water: float, bound_water: float) -> np.ndarray:
    """Mass fraction of ice below the initial freezing point, Chen (1985) with Schwartzberg's bound water.

    x_ice = (x_w − x_b) (1 − t_f / t)   for t < t_f,   0 for t ≥ t_f

    (Chen's freezing-point-depression equation with the effective molecular mass of the solutes
    eliminated through the initial freezing point; ASHRAE eq. (7).)

    Parameters
    ----------
    temperature_C : food temperature(s) t [°C]
    freezing_C : initial freezing point t_f [°C], below 0
    water : total water mass fraction x_w [kg/kg]
    bound_water : bound water mass fraction x_b [kg/kg]

    Returns
    -------
    ice_fraction : x_ice [kg ice / kg food]; below ``water − bound_water`` everywhere in −40…t_f

    References
    ----------
    Chen (1985), J. Food Sci. 50:1163; ASHRAE Handbook—Refrigeration (2006), ch. 9, eqs. (5)–(7).

    >>> round(float(ice_fraction_chen(-20.0, -2.2, 0.49, 0.06)), 4)
    0.3827
    """
    t = np.asarray(temperature_C, dtype=float)
    freezable = max(water - bound_water, 0.0)
    frozen = t < freezing_C
    safe_t = np.where(frozen, t, freezing_C)
    return np.where(frozen, freezable * (1.0 - freezing_C / safe_t), 0.0)


def ice_fraction_slope_chen(temperature_C, freezing_C: float, water: float, bound_water: float) -> np.ndarray:
    """d x_ice / dt of :func:`ice_fraction_chen` [1/K]: (x_w − x_b) t_f / t² below t_f, 0 above."""
    t = np.asarray(temperature_C, dtype=float)
    freezable = max(water - bound_water, 0.0)
    frozen = t < freezing_C
    safe_t = np.where(frozen, t, freezing_C)
    return np.where(frozen, freezable * freezing_C / safe_t**2, 0.0)


TCHIGEOV_A = 1.105
TCHIGEOV_B = 0.7138


def ice_fraction_tchigeov(temperature_C, freezing_C: float, water: float, bound_water: float) -> np.ndarray:
    """Mass fraction of ice below the initial freezing point, Tchigeov (1979).

    x_ice = 1.105 x_w / (1 + 0.7138 / ln(t_f − t + 1))   for t < t_f,   0 for t ≥ t_f

    The empirical fit does not know about bound water and at −40 °C it freezes up to 93 % of the
    water; here it is limited to the freezable water x_w − x_b (Schwartzberg's bound water), so that the
    two ice models in the registry share one definition of unfreezable water.

    Parameters
    ----------
    temperature_C : food temperature(s) t [°C]
    freezing_C : initial freezing point t_f [°C]
    water : total water mass fraction x_w [kg/kg]
    bound_water : bound water mass fraction x_b [kg/kg], the cap's complement

    References
    ----------
    Tchigeov (1979); ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. (9); Fricke & Becker (2001).

    >>> round(float(ice_fraction_tchigeov(-20.0, -1.0, 0.8, 0.0)), 4)
    0.7139
    """
    t = np.asarray(temperature_C, dtype=float)
    freezable = max(water - bound_water, 0.0)
    d = np.maximum(freezing_C - t, 0.0)
    frozen = d > 0
    log = np.log1p(np.where(frozen, d, 1.0))
    x = TCHIGEOV_A * water / (1.0 + TCHIGEOV_B / log)
    return np.where(frozen, np.minimum(x, freezable), 0.0)


def ice_fraction_slope_tchigeov(
    temperature_C, freezing_C: float, water: float, bound_water: float
) -> np.ndarray:
    """d x_ice / dt of :func:`ice_fraction_tchigeov` [1/K] (zero above t_f and where the cap holds).

    d x_ice/dt = −A x_w B / ((Δ + 1)(ln(Δ + 1) + B)²),  Δ = t_f − t
    """
    t = np.asarray(temperature_C, dtype=float)
    freezable = max(water - bound_water, 0.0)
    d = freezing_C - t
    frozen = d > 0
    dd = np.where(frozen, d, 0.0)
    log = np.log1p(dd)
    slope = -TCHIGEOV_A * water * TCHIGEOV_B / ((1.0 + dd) * (log + TCHIGEOV_B) ** 2)
    x = TCHIGEOV_A * water * log / (log + TCHIGEOV_B)
    return np.where(frozen & (x < freezable), slope, 0.0)


def _tchigeov_cap_C(freezing_C: float, water: float, bound_water: float) -> float | None:
    """Temperature below which Tchigeov's ice fraction is held at the freezable water (a kink), or None."""
    freezable = max(water - bound_water, 0.0)
    if freezable <= 0.0:
        return None
    ratio = TCHIGEOV_A * water / freezable
    if ratio <= 1.0:
        return None
    exponent = TCHIGEOV_B / (ratio - 1.0)
    if exponent > 700.0:
        return None
    return freezing_C - math.expm1(exponent)


def _no_kink(freezing_C: float, water: float, bound_water: float) -> float | None:
    return None


@dataclass(frozen=True)
class IceModel:
    """One ice-fraction model: the fraction, its temperature slope, and what a tabulation grid must know.

    Attributes
    ----------
    fraction : f(temperature_C, freezing_C, water, bound_water) -> x_ice [kg/kg]
    slope : d x_ice/dt [1/K], same arguments
    kink_C : f(freezing_C, water, bound_water) -> temperature of a kink below t_f, or None
    curvature_scale_K : f(freezing_C) -> length s [K] such that x_ice'' ~ (s + t_f − t)^−3 near t_f
    reference : the published source
    """

    fraction: Callable[..., np.ndarray]
    slope: Callable[..., np.ndarray]
    kink_C: Callable[[float, float, float], float | None]
    curvature_scale_K: Callable[[float], float]
    reference: str


#: Registry of ice-fraction models (the dispatcher, the CLI and the UI read this one dict).
ICE_MODELS: dict[str, IceModel] = {
    "chen": IceModel(
        fraction=ice_fraction_chen,
        slope=ice_fraction_slope_chen,
        kink_C=_no_kink,
        curvature_scale_K=lambda freezing_C: abs(freezing_C),
        reference="Chen (1985), J. Food Sci. 50:1163, with Schwartzberg (1976) bound water",
    ),
    "tchigeov": IceModel(
        fraction=ice_fraction_tchigeov,
        slope=ice_fraction_slope_tchigeov,
        kink_C=_tchigeov_cap_C,
        curvature_scale_K=lambda freezing_C: TCHIGEOV_B,
        reference="Tchigeov (1979), limited to the freezable water x_w - x_b",
    ),
}


def ice_fraction(
    model: str, temperature_C, freezing_C: float, water: float, bound_water: float, field: str = "ice_model"
) -> np.ndarray:
    """Ice mass fraction [kg/kg] by the model named in :data:`ICE_MODELS`.

    >>> round(float(ice_fraction("chen", -20.0, -2.2, 0.49, 0.06)), 4)
    0.3827
    """
    validate.choice(field, model, ICE_MODELS)
    return ICE_MODELS[model].fraction(temperature_C, freezing_C, water, bound_water)


def unfrozen_water_fraction(water: float, ice_fraction_kg_kg) -> np.ndarray:
    """Unfrozen (liquid) water mass fraction x_w − x_ice [kg/kg]."""
    return water - np.asarray(ice_fraction_kg_kg, dtype=float)
