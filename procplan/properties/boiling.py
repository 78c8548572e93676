"""Water boiling off inside an unsealed product heated past 100 °C: the property table of a dry-air step.

A wet food in an open oven cannot heat above the boiling point of its water while the water is there: the heat
that reaches a layer at 100 °C boils its water off (the vapour leaves through the dried crust outside it), and
only a layer whose water has gone heats further, as dry matter. Baking and roasting are modelled this way as a
moving evaporation front between a crust above 100 °C and a moist inside at or below it (Zanoni, Peri and
Pierucci 1993; Purlis and Salvadori 2009). On the enthalpy grid of the finite-volume solver the front needs no
tracking: the enthalpy of a cell gains a plateau at the boiling point whose height is the latent heat of the
cell's water, exactly as freezing is carried, and the temperature field shows the front where the plateau is
crossed.

:func:`with_boiling` adds that plateau to a product's :class:`~procplan.properties.table.PropertyTable`:

* up to :data:`BOILING_C` the table is unchanged;
* from :data:`BOILING_C` to :data:`BOILING_C` + :data:`BOILING_BAND_K` the enthalpy rises by w h_fg (w the raw
  water fraction, h_fg :data:`LATENT_VAPORISATION_J_KG`) and by the product's sensible heat over the band;
* above, the cell is crust: conductivity that of the dense dry matter (:func:`dry_matter_conductivity`, Choi–Okos
  components in series); its heat capacity is kept at the wet product's (next point).

Modelling choices and their direction:

* Each cell boils its raw water content. Water the surface evaporation (the moisture model) removed from the
  outer layer before it reached 100 °C is boiled there once more in the heat problem: a latent heat taken twice
  near the surface, which slows the heating (the safe side for a cook time and for lethality). On the demo roast
  the core reaches 75 °C after 146.5 min, against 145.4 min with the surface evaporation stopped once the surface
  boils. For the weight loss the two are not added: the step loses the larger of the surface evaporation and
  the water boiled off (:func:`procplan.run.dry_stop.lost_history_kg`).
* The crust keeps the wet product's heat capacity per kg of raw product instead of its dry matter's, about
  (1 − w) c_p,dry, five times less: the crust warms more slowly and passes less heat inward (the safe side). On
  the demo roast the core reaches 75 °C 0.4 % later than with the dry matter's (146.5 against 145.9 min), and
  the solver needs fewer time steps (the thin crust's heat capacity sets them).
* The crust conducts as dense dry matter; a real crust holds pores of air and conducts less, so the heat reaches
  the inside a little faster here than through a real crust (the unsafe side, small beside the wet meat's k it
  replaces, which is about twice as large).
* The boiling point of the water with the product's solutes is taken as that of pure water at 101.325 kPa
  (a 2 % salt solution boils about 0.36 K higher: 2 × 0.512 K kg/mol × 0.35 mol/kg, with water's
  ebullioscopic constant), the oven at atmospheric pressure.

References
----------
Zanoni, B., Peri, C., Pierucci, S. (1993). A study of the bread-baking process. I: A phenomenological model.
J. Food Eng. 19(4), 389–398 (from memory). Purlis, E., Salvadori, V.O. (2009). Bread baking as a moving
boundary problem. Part 1: Mathematical modelling. J. Food Eng. 91(3), 428–433 (from memory). Wagner, W.,
Pruß, A. (2002). The IAPWS formulation 1995 for the thermodynamic properties of ordinary water substance.
J. Phys. Chem. Ref. Data 31, 387–535 (the latent heat at 100 °C, checked against CoolProp in the tests).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.properties.choi_okos import COMPONENTS, component_properties
from procplan.properties.table import PropertyTable

#: Boiling point of the product's water in an oven at atmospheric pressure [°C].
BOILING_C = 100.0
#: Band above the boiling point over which a cell's water boils off on the enthalpy grid [K] (the front's
#: width in temperature; the enthalpy solver carries the latent heat exactly whatever the band).
BOILING_BAND_K = 2.0
#: Latent heat of vaporisation of water at 100 °C [J/kg] (IAPWS-95: 2256.4 kJ/kg).
LATENT_VAPORISATION_J_KG = 2.2564e6


def _dry_fractions(composition: Mapping[str, float]) -> tuple[float, np.ndarray]:
    """The raw water fraction and the mass fractions of the dry matter's components (summing to 1)."""
    water = validate.number("composition.water", composition.get("water", 0.0), minimum=0.0, maximum=0.99)
    x = np.array([0.0 if c in ("water", "ice") else float(composition.get(c, 0.0)) for c in COMPONENTS])
    if x.sum() <= 0.0:
        raise InvalidInputError(
            "composition",
            dict(composition),
            "a dry matter (protein, fat, carbohydrate, fibre or ash) above 0",
        )
    return water, x / x.sum()


def dry_matter_conductivity(composition: Mapping[str, float], temperature_C) -> np.ndarray:
    """Conductivity [W/mK] of the product's dense dry matter at ``temperature_C``: its Choi–Okos components in
    series by volume (the lower bound of the dense mixture; pores of a real crust lower it further).

    Dry matter of protein alone is protein: Choi–Okos at 100 °C, k = 0.17881 + 1.1958e-3·100 − 2.7178e-6·100²
    = 0.2712 W/mK:

    >>> round(float(dry_matter_conductivity({"water": 0.7, "protein": 0.3}, 100.0)), 4)
    0.2712
    """
    _, x = _dry_fractions(composition)
    t = np.asarray(temperature_C, dtype=float)
    k, rho, _ = component_properties(np.clip(t, -40.0, 150.0))
    x = x.reshape((-1,) + (1,) * t.ndim)
    v = x / rho
    v = v / v.sum(axis=0)
    return 1.0 / (v / k).sum(axis=0)


def with_boiling(
    props: PropertyTable,
    composition: Mapping[str, float],
    *,
    boiling_C: float = BOILING_C,
    band_K: float = BOILING_BAND_K,
) -> PropertyTable:
    """``props`` with the water boiling off at ``boiling_C`` (the module note): the table of a dry-air step.

    >>> from procplan.properties.table import PropertyTable
    >>> wet = PropertyTable.constant(0.5, 1050.0, 3500.0)
    >>> hot = with_boiling(wet, {"water": 0.7, "protein": 0.3})
    >>> plateau = float(hot.enthalpy(100.0 + BOILING_BAND_K) - hot.enthalpy(100.0))  # w h_fg + c_p ΔT
    >>> round((plateau - 3500.0 * BOILING_BAND_K) / 0.7)
    2256400
    >>> float(hot.enthalpy(99.0) - wet.enthalpy(99.0))
    0.0
    """
    water, _ = _dry_fractions(composition)
    tb = validate.number("boiling_C", boiling_C, minimum=float(props.temperature_C[0]) + 1.0, unit="°C")
    band = validate.positive("band_K", band_K, "K")
    t = props.temperature_C
    below = t < tb
    top = max(float(t[-1]), tb + band + 1.0)
    above = np.unique(np.r_[tb, tb + band, t[t > tb + band], top])
    k_dry = dry_matter_conductivity(composition, above)
    # above the boiling point the wet product's sensible heat (module note: the crust's heat capacity)
    sensible = props.enthalpy(above) - props.enthalpy(tb)
    h_b = float(props.enthalpy(tb))
    h_above = h_b + sensible + water * LATENT_VAPORISATION_J_KG * (above > tb)
    k_above = np.where(above > tb, k_dry, float(props.conductivity(tb)))
    grid = np.r_[t[below], above]
    extra = {**props.extra, "boiling_C": tb, "boiling_band_K": band, "water_fraction": water}
    return PropertyTable(
        grid,
        np.r_[props.enthalpy_J_kg[below], h_above],
        np.r_[props.conductivity_W_mK[below], k_above],
        props.density(grid),
        props.initial_freezing_C,
        props.reference_C,
        props.source + f"; water boils off at {tb:g} °C (the crust's conductivity above)",
        extra,
    )


def boiled_share(peak_C, boiling_C: float = BOILING_C, band_K: float = BOILING_BAND_K) -> np.ndarray:
    """Share of a cell's raw water boiled off [-] from the hottest temperature it reached (0 below the boiling
    point, 1 once past the band; the enthalpy grid is linear across the band)."""
    return np.clip((np.asarray(peak_C, dtype=float) - boiling_C) / band_K, 0.0, 1.0)
