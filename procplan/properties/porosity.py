"""Air in a food: porosity (air volume fraction), overrun, and the effective density and conductivity.

Aerated foods (ice cream, mousse, bread crumb, cake) hold air bubbles dispersed in a continuous food
matrix. The air changes the product's density and conductivity a great deal and its specific heat per kg
hardly at all:

* density: rho = (1 − ε) rho_matrix + ε rho_air ≈ (1 − ε) rho_matrix; air (about 1.2 kg/m³) adds less
  than 0.5 % to the mass of a food with ε ≤ 0.8, so it is neglected;
* specific heat and enthalpy per kg: unchanged; the air's mass fraction is below 0.5 % for ε ≤ 0.8 (and
  its cp, 1.0 kJ/kgK, is below that of any food matrix), so its heat capacity is negligible;
* conductivity: Maxwell–Eucken with the food as the continuous phase and air as the dispersed phase
  (:func:`conductivity_maxwell_eucken_porous`).

Why that form: the ASHRAE chapter on thermal properties of foods lists the parallel, series,
Maxwell–Eucken, Levy and effective-medium-theory (EMT) models; Carson et al. (2005) show that for
"internal porosity" materials, bubbles suspended in a continuous condensed phase (foams and sponges:
ice cream, bread crumb), the effective conductivity lies between the Maxwell–Eucken form with the
condensed phase continuous (its upper bound, the Hashin–Shtrikman bound) and EMT; for closed bubbles in a
continuous matrix, as in ice cream and most of a bread crumb, the matrix-continuous Maxwell–Eucken form
is the structural model itself. Air-continuous (particulate, "external porosity") products such as
packed powders or loose piles need the other form or EMT and are not covered here.

Known limits: heat carried across pores by evaporation and condensation (significant in moist porous
foods above about 40 °C, Hamdami et al. 2004) and radiation across large pores are not modelled; the
air's conductivity is that of dry air.

References
----------
ASHRAE Handbook—Refrigeration (2006), ch. 9 "Thermal properties of foods" (models for porous foods).
Carson, J.K., Lovatt, S.J., Tanner, D.J., Cleland, A.C. (2005), Thermal conductivity bounds for
isotropic, porous materials, Int. J. Heat Mass Transfer 48(11), 2150–2158.
Carson, J.K. (2006), Review of effective thermal conductivity models for foods, Int. J. Refrigeration
29(6), 958–967.
Maxwell, J.C. (1904), A Treatise on Electricity and Magnetism, 3rd ed.; Eucken, A. (1940),
Forschung auf dem Gebiete des Ingenieurwesens B-3, Forschungsheft 353.
Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Table A.4 (air).
"""

from __future__ import annotations

import numpy as np

from procplan import validate

#: Accepted porosity (air volume fraction). Above 0.9 the air is usually the continuous phase (dry foams,
#: powders) and the matrix-continuous model no longer describes the structure.
POROSITY_RANGE: tuple[float, float] = (0.0, 0.9)
#: Accepted overrun [%]: the same range of air fractions (overrun 900 % is porosity 0.9).
OVERRUN_RANGE_PERCENT: tuple[float, float] = (0.0, 900.0)

# Dry air at 1 atm, Incropera et al. 7th ed., Table A.4: T [K] -> k [W/mK].
_AIR_T_K = np.array([200.0, 250.0, 300.0, 350.0, 400.0, 450.0])
_AIR_K_W_MK = np.array([0.0181, 0.0223, 0.0263, 0.0300, 0.0338, 0.0373])


def check_porosity(porosity: float, field: str = "porosity") -> float:
    """A validated porosity: a number in :data:`POROSITY_RANGE` (raises InvalidInputError)."""
    lo, hi = POROSITY_RANGE
    return validate.number(field, porosity, minimum=lo, maximum=hi, unit="(air volume fraction)")


def porosity_from_overrun(overrun_percent):
    """Porosity of a whipped or frozen dessert from its overrun.

    Overrun is the volume increase over the unaerated mix, OR = (V − V_mix)/V_mix, so the air volume
    fraction is

        ε = OR / (1 + OR)

    Parameters
    ----------
    overrun_percent : overrun [%], 0…900

    Returns
    -------
    porosity : air volume fraction [m³/m³]

    References
    ----------
    Goff, H.D. & Hartel, R.W. (2013), Ice Cream, 7th ed., Springer (overrun as the volume increase of the mix).

    >>> float(porosity_from_overrun(100.0))
    0.5
    """
    lo, hi = OVERRUN_RANGE_PERCENT
    r = validate.array("overrun_percent", overrun_percent, minimum=lo, maximum=hi, unit="%") / 100.0
    return r / (1.0 + r)


def overrun_from_porosity(porosity):
    """Overrun [%] of a product of given porosity, the inverse of :func:`porosity_from_overrun`.

    OR = ε / (1 − ε)

    >>> float(overrun_from_porosity(0.5))
    100.0
    """
    lo, hi = POROSITY_RANGE
    e = validate.array("porosity", porosity, minimum=lo, maximum=hi)
    return 100.0 * e / (1.0 - e)


def density_porous(rho_matrix_kg_m3, porosity):
    """Apparent density of a porous food, the air's own mass neglected.

    rho = (1 − ε) rho_matrix

    Parameters
    ----------
    rho_matrix_kg_m3 : density of the air-free food [kg/m³]
    porosity : air volume fraction ε [m³/m³]

    Returns
    -------
    rho_kg_m3 : apparent (bulk) density [kg/m³]

    References
    ----------
    ASHRAE Handbook—Refrigeration (2006), ch. 9, density of foods with porosity.

    >>> float(density_porous(1100.0, 0.5))
    550.0
    """
    return (1.0 - np.asarray(porosity, dtype=float)) * np.asarray(rho_matrix_kg_m3, dtype=float)


def conductivity_air(temperature_C):
    """Conductivity of dry air at 1 atm [W/mK], linear in Incropera et al. Table A.4 (200–450 K).

    Parameters
    ----------
    temperature_C : temperature(s) [°C]; beyond the table the end values hold

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., Table A.4.

    >>> round(float(conductivity_air(26.85)), 4)
    0.0263
    """
    return np.interp(np.asarray(temperature_C, dtype=float) + 273.15, _AIR_T_K, _AIR_K_W_MK)


def conductivity_maxwell_eucken_porous(k_matrix_W_mK, porosity, k_air_W_mK):
    """Effective conductivity of a food matrix with dispersed air bubbles (Maxwell–Eucken, food continuous).

        k = k_m [2 k_m + k_a − 2 ε (k_m − k_a)] / [2 k_m + k_a + ε (k_m − k_a)]

    with k_m the matrix (air-free food) conductivity, k_a the air's and ε the porosity. It equals k_m at
    ε = 0 and lies between the series (1/k = (1 − ε)/k_m + ε/k_a) and parallel
    (k = (1 − ε) k_m + ε k_a) bounds; it is the Hashin–Shtrikman upper bound for an isotropic two-phase
    material (Carson et al. 2005).

    Parameters
    ----------
    k_matrix_W_mK : conductivity of the air-free food [W/mK] (frozen or not: any composition model)
    porosity : air volume fraction ε [m³/m³], 0…0.9
    k_air_W_mK : conductivity of the air in the pores [W/mK]

    Returns
    -------
    k_W_mK : effective conductivity [W/mK]

    Notes
    -----
    Valid for closed or partly open bubbles in a continuous food phase (foams, sponges: ice cream,
    mousse, bread crumb). Not for particulate beds, where air is continuous.

    References
    ----------
    Maxwell (1904); Eucken (1940); ASHRAE Handbook—Refrigeration (2006), ch. 9, Maxwell–Eucken model;
    Carson, Lovatt, Tanner & Cleland (2005), Int. J. Heat Mass Transfer 48, 2150; Carson (2006),
    Int. J. Refrigeration 29, 958.

    A food matrix of 0.5 W/mK with half its volume air (0.025 W/mK) lies between the series value
    (0.048 W/mK) and the parallel value (0.2625 W/mK), near the parallel one as befits a continuous matrix:

    >>> round(float(conductivity_maxwell_eucken_porous(0.5, 0.5, 0.025)), 4)
    0.2178
    >>> float(conductivity_maxwell_eucken_porous(0.5, 0.0, 0.025))
    0.5
    """
    km = np.asarray(k_matrix_W_mK, dtype=float)
    ka = np.asarray(k_air_W_mK, dtype=float)
    e = np.asarray(porosity, dtype=float)
    return km * (2.0 * km + ka - 2.0 * e * (km - ka)) / (2.0 * km + ka + e * (km - ka))
