"""Salt (and sugar) in a product's water phase: equilibrium with a brine, and the freezing point it lowers.

Concentrations of a product are solute mass fractions c [kg solute / kg product]. The product's water content
is taken as unchanged by salting (the effective-diffusivity model; in reality weak brines hydrate meat and
strong ones dehydrate it), so 1 kg of the unsalted product with water fraction x_w that has taken up S kg of
solute holds

    c = S/(1 + S),  water fraction x_w (1 − c),  water-phase concentration z = c / (c + x_w (1 − c)).

Equilibrium with a brine of mass fraction z_b: the water phase of the product reaches K z_b (K, the partition
coefficient, 1 by default: the product's water phase comes to the brine's concentration), so
S_eq = K z_b x_w/(1 − K z_b) and c_eq = S_eq/(1 + S_eq). Taking the water phase to equilibrate with the brine
is common practice in salting models (e.g. the liquid-phase formulations of meat salting in the Valencia
kinetics work listed below); the measured partition varies with the product and is a plan input.

The freezing point of the product's water phase is lowered by the salt in it: the depression ΔT_NaCl(z) of an
aqueous NaCl solution of the water phase's concentration z is added to the unsalted product's own depression
(the solutes act independently; common practice, since no single published model covers the product's own
solutes and added salt together). ΔT_NaCl is CoolProp's ``INCOMP::MNA`` freezing curve (Melinder 2007), checked
against the CRC Handbook table of freezing-point lowering by electrolytes (tests/properties/test_salting.py).

References
----------
Melinder, Å. (2007), Thermophysical properties of aqueous solutions used as secondary working fluids,
doctoral thesis, KTH Stockholm (CoolProp's incompressible mixture ``INCOMP::MNA``).
CRC Handbook of Chemistry and Physics, §15 "Freezing point lowering by electrolytes in aqueous solution"
(from Forsythe, W.E., Smithsonian Physical Tables, 9th ed., 1956).
Kinetics studies during NaCl and KCl pork meat brining, J. Food Eng. (2011) (salt concentration of the liquid
phase, equilibrium and surface coefficients; abstract read, values not used).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError

#: Solutes a brining step can carry, with their molar masses [kg/mol].
SOLUTES: dict[str, str] = {"salt": "sodium chloride (NaCl)", "sugar": "sucrose"}
#: Mass fraction of NaCl in the water phase of the eutectic [kg/kg]; CoolProp's MNA curve ends at 0.23.
NACL_CURVE_MAX = 0.23
#: Mass fraction of a saturated NaCl solution at 20 °C [kg/kg] (26.4 %; CRC Handbook solubility 35.9 g per
#: 100 g water, from memory), the water-phase concentration under a dry cure.
NACL_SATURATED_FRACTION = 0.264
_KELVIN = 273.15


def equilibrium_fraction(brine_fraction: float, water_fraction: float, partition: float = 1.0) -> float:
    """Solute mass fraction c_eq of a product whose water phase has come to K × the brine's concentration.

    c_eq = S/(1 + S), S = K z_b x_w/(1 − K z_b)

    Parameters
    ----------
    brine_fraction : solute mass fraction of the brine z_b [kg/kg], 0 … 0.7
    water_fraction : water mass fraction x_w of the unsalted product [kg/kg], 0.05 … 0.99
    partition : K, the product's water-phase concentration at equilibrium over the brine's (default 1)

    Examples
    --------
    Pork (x_w = 0.74) in an 18 % brine: S = 0.18 · 0.74/0.82 = 0.1624, c_eq = 0.1397.

    >>> round(equilibrium_fraction(0.18, 0.74), 4)
    0.1397
    """
    zb = validate.number("brine_fraction", brine_fraction, minimum=0.0, maximum=0.7)
    xw = validate.number("water_fraction", water_fraction, minimum=0.05, maximum=0.99)
    k = validate.number("partition", partition, minimum=0.05, maximum=2.0)
    z = k * zb
    if z >= 0.95:
        raise InvalidInputError("partition", partition, f"K z_b < 0.95 (K z_b = {z:g})")
    s = z * xw / (1.0 - z)
    return s / (1.0 + s)


def water_phase_fraction(solute_fraction, water_fraction: float) -> np.ndarray:
    """Solute concentration of the product's water phase, z = c/(c + x_w (1 − c)) [kg/kg].

    >>> round(float(water_phase_fraction(0.1397, 0.74)), 3)  # back to the brine of the example above
    0.18
    """
    c = validate.array("solute_fraction", solute_fraction, minimum=0.0, maximum=0.9)
    xw = validate.number("water_fraction", water_fraction, minimum=0.05, maximum=0.99)
    return c / (c + xw * (1.0 - c))


@lru_cache(maxsize=512)
def _mna_freezing_C(x: float) -> float:
    # CoolProp loads on first use: reading a plan needs only this module's tables
    from CoolProp.CoolProp import PropsSI

    return PropsSI("T_freeze", "T", 293.15, "P", 101325.0, f"INCOMP::MNA[{x}]") - _KELVIN


def nacl_freezing_depression_K(water_phase_fraction: float) -> float:
    """Freezing-point depression [K] of an aqueous NaCl solution of mass fraction z (the water phase).

    CoolProp ``INCOMP::MNA`` (Melinder 2007) for 0.01 ≤ z ≤ 0.23, linear to 0 below 0.01 (the dilute,
    colligative limit); refused above 0.23 (the eutectic: ice and salt freeze out together).

    >>> round(nacl_freezing_depression_K(0.2), 1)
    16.5
    >>> round(nacl_freezing_depression_K(0.0), 3)
    0.0

    References
    ----------
    Melinder, Å. (2007), KTH Stockholm (CoolProp ``INCOMP::MNA``).
    """
    z = validate.number("water_phase_fraction", water_phase_fraction, minimum=0.0, maximum=NACL_CURVE_MAX)
    if z < 0.01:
        return -_mna_freezing_C(0.01) * z / 0.01
    return -_mna_freezing_C(round(z, 4))


def salted_freezing_point_C(unsalted_freezing_C: float, salt_fraction: float, water_fraction: float) -> float:
    """Initial freezing point [°C] of a product after it has taken up salt to the mass fraction c.

    T_f = T_f,0 − ΔT_NaCl(z), z = c/(c + x_w (1 − c)) (the depressions of the product's own solutes and of the
    salt added; see the module notes). Salt above the eutectic concentration of the water phase is refused.

    Pork at −1.0 °C with 2 % salt (x_w = 0.74): z = 0.0265, ΔT = 1.6 K, so about −2.6 °C:

    >>> round(salted_freezing_point_C(-1.0, 0.02, 0.74), 1)
    -2.6
    """
    tf0 = validate.number("unsalted_freezing_C", unsalted_freezing_C, minimum=-35.0, maximum=0.0, unit="°C")
    z = float(water_phase_fraction(salt_fraction, water_fraction))
    if z > NACL_CURVE_MAX:
        raise InvalidInputError(
            "salt_fraction",
            salt_fraction,
            f"a water-phase NaCl fraction <= {NACL_CURVE_MAX:g}",
            f"{z:.3f} is past the eutectic",
        )
    return tf0 - nacl_freezing_depression_K(z)
