"""Sorption isotherms of foods: water activity ↔ moisture content (dry basis), GAB model.

GAB (Guggenheim–Anderson–de Boer) isotherm, moisture content X [kg water / kg dry matter] against water
activity a_w:

    X = X_m C K a_w / ((1 − K a_w)(1 − K a_w + C K a_w))

with X_m the monolayer moisture content, C the Guggenheim constant (heat of the monolayer) and K the
multilayer factor (K = 1 gives the BET isotherm). The inverse is the positive root of a quadratic in
y = K a_w:

    X (C − 1) y² + (X_m C − X (C − 2)) y − X = 0   →   y = 2X / (b + √(b² + 4 X² (C − 1))),  b = X_m C − X (C − 2)

With K < 1 the isotherm reaches a finite X(a_w = 1) = X_m C K / ((1 − K)(1 − K + C K)); a product wetter
than that holds free water and its surface water activity is 1 (the "wet" surface of a drying product).

The parameter sets in :data:`ISOTHERMS` name their source and the temperatures they were measured at. None
could be read in its source while this module was written: their values are **from memory** and every
record carries ``confirmed = False`` (indicative — confirm against the source before relying on them).
Outside the measured temperatures the isotherm is used at its stated values (no temperature dependence); at
a given moisture content a food's water activity rises with temperature, so above the range the surface
water activity, and with it the evaporation, is underestimated (the surface runs slightly warm, the
unsafe direction for a cook time: the engine says so in a warning).

References
----------
van den Berg, C. (1984). Description of water activity of foods for engineering purposes by means of the GAB
model of sorption. In: Engineering and Food, vol. 1, Elsevier, 311–321.
Timmermann, E.O., Chirife, J., Iglesias, H.A. (2001). Water sorption isotherms of foods and foodstuffs: BET
or GAB parameters? J. Food Eng. 48, 19–31 (GAB → BET as K → 1; the BET monolayer point a_w = 1/(1 + √C)).
Brunauer, S., Emmett, P.H., Teller, E. (1938). Adsorption of gases in multimolecular layers. J. Am. Chem.
Soc. 60, 309–319.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError


@dataclass(frozen=True)
class GABIsotherm:
    """One GAB parameter set with its source.

    Attributes
    ----------
    name : registry key
    x_m_kg_kg : monolayer moisture content X_m [kg water / kg dry matter]
    c : Guggenheim constant C [-], > 0
    k : multilayer factor K [-], 0 < K ≤ 1
    measured_C : temperatures [°C] of the source's measurements (lowest, highest)
    source : the publication
    confirmed : whether the values were checked against the source (False: from memory, indicative)
    note : what the set describes (desorption or adsorption, product state)
    """

    name: str
    x_m_kg_kg: float
    c: float
    k: float
    measured_C: tuple[float, float]
    source: str
    confirmed: bool = False
    note: str = ""

    def __post_init__(self) -> None:
        validate.number("x_m_kg_kg", self.x_m_kg_kg, minimum=0.0, min_inclusive=False, maximum=1.0)
        validate.number("c", self.c, minimum=0.0, min_inclusive=False, maximum=1e4)
        validate.number("k", self.k, minimum=0.0, min_inclusive=False, maximum=1.0)

    @property
    def saturated_moisture_kg_kg(self) -> float:
        """X at a_w = 1 [kg/kg dry matter] (infinite for K = 1): above it the product holds free water."""
        if self.k >= 1.0:
            return float("inf")
        xm, c, k = self.x_m_kg_kg, self.c, self.k
        return xm * c * k / ((1 - k) * (1 - k + c * k))

    def moisture_kg_kg(self, water_activity: Any) -> Any:
        """Equilibrium moisture content X [kg water / kg dry matter] at a water activity (0 ≤ a_w < 1/K).

        >>> iso = GABIsotherm("t", 0.1, 10.0, 0.9, (20.0, 20.0), "test")
        >>> round(float(iso.moisture_kg_kg(0.5)), 4)
        0.162
        """
        aw = validate.array("water_activity", water_activity, minimum=0.0, maximum=1.0)
        xm, c, k = self.x_m_kg_kg, self.c, self.k
        with np.errstate(divide="ignore"):
            x = xm * c * k * aw / ((1 - k * aw) * (1 - k * aw + c * k * aw))
        return x if np.ndim(water_activity) else float(x)

    def water_activity(self, moisture_kg_kg: Any) -> Any:
        """Water activity [-] of a product at moisture content X [kg water / kg dry matter] (1 at and above
        :attr:`saturated_moisture_kg_kg`).

        >>> iso = GABIsotherm("t", 0.1, 10.0, 0.9, (20.0, 20.0), "test")
        >>> round(float(iso.water_activity(iso.moisture_kg_kg(0.5))), 9)
        0.5
        """
        x = validate.array("moisture_kg_kg", moisture_kg_kg, minimum=0.0, maximum=100.0, unit="kg/kg")
        aw = self._water_activity(x)
        return aw if np.ndim(moisture_kg_kg) else float(aw)

    def water_activity_one(self, x: float) -> float:
        """:meth:`water_activity` of one moisture content (a float, unchecked: the solver's inner loop on a
        1-D surface, where array calls cost more than the arithmetic; the same root as :meth:`_water_activity`).

        >>> iso = GABIsotherm("t", 0.1, 10.0, 0.9, (20.0, 20.0), "test")
        >>> round(iso.water_activity_one(float(iso.moisture_kg_kg(0.5))), 9)
        0.5
        """
        if x <= 0.0:
            return 0.0
        xm, c, k = self.x_m_kg_kg, self.c, self.k
        b = xm * c - x * (c - 2.0)
        root = b + math.sqrt(max(b * b + 4.0 * x * x * (c - 1.0), 0.0))
        y = 2.0 * x / root if root != 0.0 else 0.0
        if 0.0 < y <= k and x < self.saturated_moisture_kg_kg:
            return min(max(y / k, 0.0), 1.0)
        return 1.0

    def _water_activity(self, x: np.ndarray) -> np.ndarray:
        """:meth:`water_activity` on a checked array (the solver's inner loop)."""
        xm, c, k = self.x_m_kg_kg, self.c, self.k
        b = xm * c - x * (c - 2.0)
        disc = np.maximum(b * b + 4.0 * x * x * (c - 1.0), 0.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            y = np.where(x > 0, 2.0 * x / (b + np.sqrt(disc)), 0.0)
        # beyond the saturated moisture content the root leaves (0, K]: the product holds free water
        aw = np.where(
            (y > 0) & (y <= k) & (x < self.saturated_moisture_kg_kg), y / k, np.where(x > 0, 1.0, 0.0)
        )
        return np.clip(aw, 0.0, 1.0)


#: Published GAB parameter sets (values from memory, see the module note; ``confirmed = False``).
ISOTHERMS: dict[str, GABIsotherm] = {
    iso.name: iso
    for iso in (
        GABIsotherm(
            "beef",
            0.0683,
            14.1,
            0.913,
            (5.0, 40.0),
            "Trujillo, F.J., Yeow, P.C., Pham, Q.T. (2003). Moisture sorption isotherm of fresh lean beef and "
            "external beef fat. J. Food Eng. 60, 357–366 (GAB fit of lean beef, no significant temperature effect "
            "over 5–40 °C)",
            note="fresh lean beef, desorption",
        ),
        GABIsotherm(
            "potato",
            0.0783,
            10.8,
            0.83,
            (30.0, 60.0),
            "McMinn, W.A.M., Magee, T.R.A. (2003). Thermodynamic properties of moisture sorption of potato. "
            "J. Food Eng. 60, 157–165 (desorption at 30 °C)",
            note="potato, desorption",
        ),
        GABIsotherm(
            "apple",
            0.117,
            2.38,
            0.97,
            (30.0, 45.0),
            "Kaymak-Ertekin, F., Gedik, A. (2004). Sorption isotherms and isosteric heat of sorption for grapes, "
            "apricots, apples and potatoes. LWT 37, 429–438 (apple, 30 °C)",
            note="apple, adsorption",
        ),
    )
}

#: The isotherm taken for a product category when the product names none.
CATEGORY_ISOTHERM: dict[str, str] = {"meat": "beef", "fruit-vegetable": "potato"}


def isotherm(name: str) -> GABIsotherm:
    """The registered isotherm ``name`` (InvalidInputError naming the choices otherwise)."""
    validate.choice("isotherm", name, ISOTHERMS)
    return ISOTHERMS[name]


def dry_basis(water_mass_fraction: float) -> float:
    """Moisture content on a dry basis X = w/(1 − w) [kg/kg dry matter] from a wet-basis mass fraction w.

    >>> dry_basis(0.75)
    3.0
    """
    w = validate.number("water_mass_fraction", water_mass_fraction, minimum=0.0, maximum=0.995)
    return w / (1.0 - w)


def wet_basis(moisture_kg_kg: float) -> float:
    """Water mass fraction w = X/(1 + X) from a dry-basis moisture content X.

    >>> wet_basis(3.0)
    0.75
    """
    x = validate.number("moisture_kg_kg", moisture_kg_kg, minimum=0.0, maximum=200.0, unit="kg/kg")
    return x / (1.0 + x)


def check_isotherm_name(field: str, name: str) -> str:
    """``name`` when it is a registered isotherm; InvalidInputError on ``field`` otherwise."""
    if name not in ISOTHERMS:
        raise InvalidInputError(field, name, f"one of {', '.join(sorted(ISOTHERMS))}")
    return name


@dataclass(frozen=True)
class MoistureDiffusivity:
    """Effective moisture diffusivity of a food, Arrhenius in temperature: D = D_ref exp(−E_a/R (1/T − 1/T_ref)).

    Attributes
    ----------
    name : registry key (the food)
    D_ref_m2_s : D at ``reference_C`` [m²/s]
    activation_J_mol : activation energy E_a [J/mol]
    reference_C : reference temperature [°C]
    measured_C : temperatures of the source's measurements (lowest, highest) [°C]
    source : the publication
    confirmed : False: values from memory, indicative
    """

    name: str
    D_ref_m2_s: float
    activation_J_mol: float
    reference_C: float
    measured_C: tuple[float, float]
    source: str
    confirmed: bool = False


#: Published effective moisture diffusivities (values from memory, ``confirmed = False``).
MOISTURE_DIFFUSIVITIES: dict[str, MoistureDiffusivity] = {
    d.name: d
    for d in (
        MoistureDiffusivity(
            "beef",
            1.5e-10,
            30e3,
            30.0,
            (10.0, 80.0),
            "Trujillo, F.J., Wiangkaew, C., Pham, Q.T. (2007). Drying modeling and water diffusivity in beef meat. "
            "J. Food Eng. 78, 74–85 (lean beef, Arrhenius)",
        ),
        MoistureDiffusivity(
            "potato",
            1.0e-9,
            25e3,
            60.0,
            (40.0, 90.0),
            "Saravacos, G.D., Maroulis, Z.B. (2001). Transport Properties of Foods, Marcel Dekker, ch. 8 (potato, "
            "air drying)",
        ),
        MoistureDiffusivity(
            "apple",
            1.0e-9,
            25e3,
            60.0,
            (40.0, 80.0),
            "Saravacos, G.D., Maroulis, Z.B. (2001). Transport Properties of Foods, Marcel Dekker, ch. 8 (apple, "
            "air drying)",
        ),
    )
}
