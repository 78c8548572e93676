"""Thermal properties of the food components against temperature: Choi & Okos (1986).

Each property of each component is a polynomial in the temperature t [°C]:

    k(t) = k0 + k1 t + k2 t²        [W/mK]
    rho(t) = r0 + r1 t + r2 t²      [kg/m³]
    cp(t) = c0 + c1 t + c2 t²       [kJ/kgK in the source; J/kgK here]

valid for −40 ≤ t ≤ 150 °C. The coefficients are those of Choi & Okos (1986) as tabulated in the
ASHRAE Handbook—Refrigeration (2006), ch. 9, table 1. Copies with misprints circulate; the values used
here are checked term by term: fat k linear term −2.7604e-4 (not e-3), carbohydrate k linear term
+1.3874e-3, water k quadratic term −6.7036e-6, ice k quadratic term positive (+1.0154e-4).

Water cp
--------
Two forms are published: the original split form of Choi & Okos (−40…0 °C:
4.0817 − 5.3062e-3 t + 9.9516e-4 t²; 0…150 °C: 4.1762 − 9.0864e-5 t + 5.4731e-6 t²) and a later
handbook form with a constant term 4.1289 over the whole range. The split form is used here because it
reproduces IAPWS-95 liquid water within 0.3 % from 0 to 80 °C (4.177 vs 4.184 kJ/kgK at 20 °C), while
the 4.1289 form is 1.3 % low at 20 °C, which would bias every cooling time of a watery product. The
sub-zero branch describes the unfrozen (supercooled, solute-laden) water of a partly frozen food.

References
----------
Choi, Y. & Okos, M.R. (1986). Effects of temperature and composition on the thermal properties of
foods. In M. Le Maguer & P. Jelen (eds.), Food Engineering and Process Applications, vol. 1,
Transport Phenomena, pp. 93–101. London: Elsevier Applied Science.
ASHRAE Handbook—Refrigeration (2006), ch. 9 "Thermal properties of foods", table 1.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from functools import partial

import numpy as np

from procplan import validate
from procplan.properties.table import MODEL_RANGE_C

#: Polynomial coefficients (c0, c1, c2) in ascending powers of t [°C]; k in W/mK, rho in kg/m³, cp in kJ/kgK.
CONDUCTIVITY_COEFFICIENTS: dict[str, tuple[float, float, float]] = {
    "water": (0.57109, 1.7625e-3, -6.7036e-6),
    "ice": (2.2196, -6.2489e-3, 1.0154e-4),
    "protein": (0.17881, 1.1958e-3, -2.7178e-6),
    "fat": (0.18071, -2.7604e-4, -1.7749e-7),
    "carbohydrate": (0.20141, 1.3874e-3, -4.3312e-6),
    "fiber": (0.18331, 1.2497e-3, -3.1683e-6),
    "ash": (0.32962, 1.4011e-3, -2.9069e-6),
}
DENSITY_COEFFICIENTS: dict[str, tuple[float, float, float]] = {
    "water": (997.18, 3.1439e-3, -3.7574e-3),
    "ice": (916.89, -0.13071, 0.0),
    "protein": (1329.9, -0.5184, 0.0),
    "fat": (925.59, -0.41757, 0.0),
    "carbohydrate": (1599.1, -0.31046, 0.0),
    "fiber": (1311.5, -0.36589, 0.0),
    "ash": (2423.8, -0.28063, 0.0),
}
SPECIFIC_HEAT_COEFFICIENTS_KJ: dict[str, tuple[float, float, float]] = {
    "water": (4.1762, -9.0864e-5, 5.4731e-6),  # 0…150 °C branch
    "ice": (2.0623, 6.0769e-3, 0.0),
    "protein": (2.0082, 1.2089e-3, -1.3129e-6),
    "fat": (1.9842, 1.4733e-3, -4.8008e-6),
    "carbohydrate": (1.5488, 1.9625e-3, -5.9399e-6),
    "fiber": (1.8459, 1.8306e-3, -4.6509e-6),
    "ash": (1.0926, 1.8896e-3, -3.6817e-6),
}
#: Water cp below 0 °C (Choi & Okos 1986, −40…0 °C branch) [kJ/kgK].
WATER_CP_SUBZERO_COEFFICIENTS_KJ: tuple[float, float, float] = (4.0817, -5.3062e-3, 9.9516e-4)

#: Components of the model, in the order used for stacked arrays.
COMPONENTS: tuple[str, ...] = ("water", "ice", "protein", "fat", "carbohydrate", "fiber", "ash")


def _temperature(temperature_C) -> np.ndarray:
    lo, hi = MODEL_RANGE_C
    return validate.array("temperature_C", temperature_C, minimum=lo, maximum=hi, unit="°C")


def _check_component(component: str) -> None:
    validate.choice("component", component, COMPONENTS)


def _poly(c: tuple[float, float, float], t: np.ndarray) -> np.ndarray:
    return c[0] + t * (c[1] + t * c[2])


def _conductivity(component: str, t: np.ndarray) -> np.ndarray:
    return _poly(CONDUCTIVITY_COEFFICIENTS[component], t)


def _density(component: str, t: np.ndarray) -> np.ndarray:
    return _poly(DENSITY_COEFFICIENTS[component], t)


def _specific_heat(component: str, t: np.ndarray) -> np.ndarray:
    if component == "water":
        cp = np.where(
            t < 0.0,
            _poly(WATER_CP_SUBZERO_COEFFICIENTS_KJ, t),
            _poly(SPECIFIC_HEAT_COEFFICIENTS_KJ["water"], t),
        )
    else:
        cp = _poly(SPECIFIC_HEAT_COEFFICIENTS_KJ[component], t)
    return 1000.0 * cp


def conductivity_choi_okos(component: str, temperature_C) -> np.ndarray:
    """Thermal conductivity of one food component, Choi & Okos (1986).

    k(t) = k0 + k1 t + k2 t²

    Parameters
    ----------
    component : one of ``COMPONENTS`` (water, ice, protein, fat, carbohydrate, fiber, ash)
    temperature_C : temperature(s) t [°C], −40…150

    Returns
    -------
    k_W_mK : thermal conductivity [W/mK], same shape as ``temperature_C``

    Notes
    -----
    Valid −40…150 °C; outside, InvalidInputError names ``temperature_C``.

    References
    ----------
    Choi & Okos (1986), in Food Engineering and Process Applications, vol. 1, pp. 93–101;
    ASHRAE Handbook—Refrigeration (2006), ch. 9, table 1.

    >>> round(float(conductivity_choi_okos("water", 20.0)), 4)
    0.6037
    """
    _check_component(component)
    return _conductivity(component, _temperature(temperature_C))


def density_choi_okos(component: str, temperature_C) -> np.ndarray:
    """Density of one food component, Choi & Okos (1986).

    rho(t) = r0 + r1 t + r2 t²

    Parameters
    ----------
    component : one of ``COMPONENTS``
    temperature_C : temperature(s) t [°C], −40…150

    Returns
    -------
    rho_kg_m3 : density [kg/m³]

    References
    ----------
    Choi & Okos (1986); ASHRAE Handbook—Refrigeration (2006), ch. 9, table 1.

    >>> round(float(density_choi_okos("ice", 0.0)), 2)
    916.89
    """
    _check_component(component)
    return _density(component, _temperature(temperature_C))


def specific_heat_choi_okos(component: str, temperature_C) -> np.ndarray:
    """Specific heat of one food component, Choi & Okos (1986), in J/kgK.

    cp(t) = 1000 (c0 + c1 t + c2 t²); for water the −40…0 °C branch applies below 0 °C and the
    0…150 °C branch from 0 °C up (see the module notes for why this form was chosen).

    Parameters
    ----------
    component : one of ``COMPONENTS``
    temperature_C : temperature(s) t [°C], −40…150

    Returns
    -------
    cp_J_kgK : specific heat [J/kgK]

    References
    ----------
    Choi & Okos (1986); ASHRAE Handbook—Refrigeration (2006), ch. 9, table 1.

    >>> round(float(specific_heat_choi_okos("water", 20.0)), 1)
    4176.6
    """
    _check_component(component)
    return _specific_heat(component, _temperature(temperature_C))


@dataclass(frozen=True)
class ComponentFunctions:
    """The three Choi–Okos property functions of one component, each ``f(temperature_C) -> array``."""

    k_W_mK: Callable[[object], np.ndarray]
    rho_kg_m3: Callable[[object], np.ndarray]
    cp_J_kgK: Callable[[object], np.ndarray]


#: Registry: component name → its Choi–Okos property functions.
CHOI_OKOS: dict[str, ComponentFunctions] = {
    name: ComponentFunctions(
        k_W_mK=partial(conductivity_choi_okos, name),
        rho_kg_m3=partial(density_choi_okos, name),
        cp_J_kgK=partial(specific_heat_choi_okos, name),
    )
    for name in COMPONENTS
}


def component_properties(temperature_C) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """k, rho and cp of every component on one temperature grid, stacked in ``COMPONENTS`` order.

    Returns three arrays of shape ``(len(COMPONENTS),) + shape(temperature_C)``: k [W/mK], rho [kg/m³],
    cp [J/kgK]. One vectorised pass, used by the food-level models.
    """
    t = _temperature(temperature_C)
    return _stacked(t)


def _stacked(t: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    k = np.stack([_conductivity(c, t) for c in COMPONENTS])
    rho = np.stack([_density(c, t) for c in COMPONENTS])
    cp = np.stack([_specific_heat(c, t) for c in COMPONENTS])
    return k, rho, cp
