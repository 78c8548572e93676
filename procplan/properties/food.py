"""Thermal properties of a food from its composition, and the property table the solvers use.

Above the initial freezing point t_f the food is water + protein + fat + carbohydrate + fiber + ash;
below it the water splits into ice (x_ice, from the chosen ice model) and unfrozen water
(x_w − x_ice). Each component's k, rho and cp come from Choi & Okos (1986); the mixture's density from
the specific volumes, its sensible cp mass weighted, its conductivity from the chosen model — all with
the ice included. The mass fractions are scaled to sum to exactly 1 before use. A porous food's
composition describes its air-free matrix; air (``porosity``) then lowers k and rho (module ``porosity``).

Enthalpy (reference: H = 0 at −40 °C, the usual reference for frozen foods, e.g. Chen 1985 and the
ASHRAE chapter's enthalpy tables):

    H(t) = ∫_{−40}^{t} cp_s(τ) dτ + L0 [x_ice(−40) − x_ice(t)]

with cp_s the sensible specific heat of the ice/water/solids mixture at τ and L0 = 333.6 kJ/kg. H is
continuous at t_f (x_ice(t_f) = 0 for both ice models, so the frozen and unfrozen branches meet) and
strictly increasing (cp_s > 0 and x_ice never increases with t). The apparent specific heat is its
exact derivative, cp_app = cp_s − L0 dx_ice/dt, so ∫ cp_app dt equals the enthalpy difference.

Known limits: L0 is held constant (the Kirchhoff decrease of the latent heat below 0 °C is not applied),
and the Choi–Okos sensible cp of the frozen mixture (ice + unfrozen water, whose −40…0 °C cp rises to
5.9 kJ/kgK at −40 °C, + solids) is higher than Chen's (1985) 1.55 + 1.26 x_s kJ/kgK. For lean beef the
enthalpy at t_f is 3 % below the Chang & Tao (1981) correlation of measured enthalpies and 7 % above
Chen's closed form; at −20 °C it is about 18 % above Chen's form (55 vs 47 kJ/kg).

References
----------
Choi & Okos (1986); ASHRAE Handbook—Refrigeration (2006), ch. 9; Chen (1985), J. Food Sci. 50:1158
(enthalpy with reference −40 °C); Schwartzberg (1976), J. Food Sci. 41:152 (apparent specific heat).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.properties import choi_okos
from procplan.properties.composition import Composition
from procplan.properties.freezing import (
    ICE_MODELS,
    LATENT_HEAT_WATER_J_KG,
    IceModel,
    bound_water_schwartzberg,
    initial_freezing_point_C,
)
from procplan.properties.mixing import (
    CONDUCTIVITY_MODELS,
    density_mixture,
    specific_heat_mixture,
    volume_fractions,
)
from procplan.properties.porosity import (
    check_porosity,
    conductivity_air,
    conductivity_maxwell_eucken_porous,
    density_porous,
)
from procplan.properties.table import MODEL_RANGE_C, PropertyTable

#: Temperature at which the enthalpy is zero [°C].
REFERENCE_C: float = -40.0

_SOLIDS = ("protein", "fat", "carbohydrate", "fiber", "ash")
_GL_NODES, _GL_WEIGHTS = np.polynomial.legendre.leggauss(4)

# Grid design (see _grid): spacing at t_f as a fraction of the ice model's curvature scale, the largest
# spacing in the frozen range and above the freezing point [K].
_SPACING_AT_FREEZING = 0.02
_MAX_SPACING_FROZEN_K = 0.25
_MAX_SPACING_UNFROZEN_K = 2.0


@dataclass(frozen=True, eq=False)
class FoodProperties:
    """Properties of a food on a temperature array (every array has the shape of ``temperature_C``).

    Attributes
    ----------
    temperature_C : temperatures [°C]
    k_W_mK : thermal conductivity [W/mK]
    rho_kg_m3 : density [kg/m³]
    cp_J_kgK : sensible specific heat of the ice/water/solids mixture [J/kgK]
    apparent_cp_J_kgK : apparent specific heat dH/dt, latent heat included [J/kgK]
    enthalpy_J_kg : specific enthalpy, zero at ``reference_C`` = −40 °C [J/kg]
    ice_fraction : mass fraction of ice [kg/kg]
    unfrozen_water_fraction : mass fraction of liquid water [kg/kg]
    diffusivity_m2_s : thermal diffusivity k / (rho cp_app) [m²/s]
    initial_freezing_C : initial freezing point used [°C]
    bound_water : bound-water mass fraction used [kg/kg]
    reference_C : enthalpy reference temperature [°C]
    """

    temperature_C: np.ndarray
    k_W_mK: np.ndarray
    rho_kg_m3: np.ndarray
    cp_J_kgK: np.ndarray
    apparent_cp_J_kgK: np.ndarray
    enthalpy_J_kg: np.ndarray
    ice_fraction: np.ndarray
    unfrozen_water_fraction: np.ndarray
    diffusivity_m2_s: np.ndarray
    initial_freezing_C: float
    bound_water: float
    reference_C: float = REFERENCE_C


@dataclass(frozen=True)
class _Food:
    """A composition with its models chosen: everything needed to evaluate properties at any temperature."""

    x: dict[str, float]
    freezing_C: float
    bound_water: float
    ice: IceModel
    conductivity_model: str
    porosity: float = 0.0

    # --- pointwise properties --------------------------------------------------------------
    def ice_fraction(self, t: np.ndarray) -> np.ndarray:
        return self.ice.fraction(t, self.freezing_C, self.x["water"], self.bound_water)

    def cp_sensible(self, t: np.ndarray) -> np.ndarray:
        x_ice = self.ice_fraction(t)
        cp = choi_okos._specific_heat
        total = (self.x["water"] - x_ice) * cp("water", t) + x_ice * cp("ice", t)
        for c in _SOLIDS:
            if self.x[c] > 0.0:
                total = total + self.x[c] * cp(c, t)
        return total

    def state(self, t: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Ice fraction, k, rho and sensible cp at temperatures ``t`` (already validated)."""
        x_ice = self.ice_fraction(t)
        k, rho, cp = choi_okos._stacked(t)
        names = choi_okos.COMPONENTS
        mass = {"water": self.x["water"] - x_ice, "ice": x_ice}
        mass.update({c: np.full_like(t, self.x[c]) for c in _SOLIDS})
        k_c = dict(zip(names, k, strict=True))
        rho_c = dict(zip(names, rho, strict=True))
        cp_c = dict(zip(names, cp, strict=True))
        rho_mix = density_mixture(mass, rho_c)
        v = volume_fractions(mass, rho_c)
        k_mix = CONDUCTIVITY_MODELS[self.conductivity_model](v, k_c)
        cp_mix = specific_heat_mixture(mass, cp_c)
        if self.porosity > 0.0:
            # air bubbles in the food matrix; cp per kg unchanged (module porosity)
            k_mix = conductivity_maxwell_eucken_porous(k_mix, self.porosity, conductivity_air(t))
            rho_mix = density_porous(rho_mix, self.porosity)
        return x_ice, k_mix, rho_mix, cp_mix

    # --- grid and enthalpy -------------------------------------------------------------------
    def grid(self) -> np.ndarray:
        """Temperature grid on −40…150 °C, fine just below t_f where the ice fraction changes fastest.

        Below t_f the points are uniform in w = (s + t_f − t)^(−1/2), s the ice model's curvature scale,
        so the spacing grows like (s + t_f − t)^(3/2) — the rate at which the curvature of x_ice, and so of
        H, decays — starting from 0.02 s at t_f (linear interpolation error of H there ≈ 1e-4 of the latent
        heat); spacing at most 0.25 K. Above t_f at most 2 K. The freezing point, 0 °C (water cp branch) and
        any kink of the ice model are grid points.
        """
        lo, hi = MODEL_RANGE_C
        tf = self.freezing_C
        s = self.ice.curvature_scale_K(tf)
        span = tf - lo
        w0, w1 = s**-0.5, (s + span) ** -0.5
        dw = _SPACING_AT_FREEZING / (2.0 * np.sqrt(s))
        n = int(np.ceil((w0 - w1) / dw))
        w = np.linspace(w0, w1, n + 1)
        below = tf - (w**-2 - s)
        # cap the spacing in the frozen range
        below = np.union1d(below, np.linspace(lo, tf, int(np.ceil(span / _MAX_SPACING_FROZEN_K)) + 1))
        above = np.linspace(tf, hi, int(np.ceil((hi - tf) / _MAX_SPACING_UNFROZEN_K)) + 1)
        extra = [lo, tf, hi]
        if lo < 0.0 < hi:
            extra.append(0.0)
        kink = self.ice.kink_C(tf, self.x["water"], self.bound_water)
        if kink is not None and lo < kink < tf:
            extra.append(kink)
        t = np.union1d(np.union1d(below, above), extra)
        t = t[(t >= lo) & (t <= hi)]
        # drop points closer than 1e-9 K to a neighbour (from the unions)
        keep = np.r_[True, np.diff(t) > 1e-9]
        return t[keep]

    def sensible_integral(self, grid: np.ndarray) -> np.ndarray:
        """∫_{−40}^{t_j} cp_s dt at every grid node, by 4-point Gauss–Legendre on each interval."""
        a, b = grid[:-1], grid[1:]
        mid, half = 0.5 * (a + b), 0.5 * (b - a)
        nodes = mid[:, None] + half[:, None] * _GL_NODES[None, :]
        pieces = half * (self.cp_sensible(nodes) @ _GL_WEIGHTS)
        return np.r_[0.0, np.cumsum(pieces)]

    def enthalpy_at_nodes(self, grid: np.ndarray, sensible: np.ndarray, x_ice: np.ndarray) -> np.ndarray:
        x_ice_ref = float(self.ice_fraction(np.array([REFERENCE_C]))[0])
        return sensible + LATENT_HEAT_WATER_J_KG * (x_ice_ref - x_ice)


def _food(
    composition: Composition | Mapping,
    freezing_C: float | None,
    conductivity_model: str,
    ice_model: str,
    category: str,
    porosity: float = 0.0,
) -> _Food:
    if isinstance(composition, Mapping):
        composition = Composition.from_mapping(composition)
    if not isinstance(composition, Composition):
        raise InvalidInputError(
            "composition", type(composition).__name__, "a Composition or a mapping of mass fractions"
        )
    validate.choice("conductivity_model", conductivity_model, CONDUCTIVITY_MODELS)
    validate.choice("ice_model", ice_model, ICE_MODELS)
    tf = initial_freezing_point_C(composition, category, freezing_C=freezing_C)
    x = composition.normalized()
    xb = bound_water_schwartzberg(x["protein"], x["water"])
    return _Food(x, tf, xb, ICE_MODELS[ice_model], conductivity_model, check_porosity(porosity))


def food_properties(
    composition: Composition | Mapping,
    temperature_C,
    *,
    freezing_C: float | None = None,
    conductivity_model: str = "parallel",
    ice_model: str = "chen",
    category: str = "meat",
    porosity: float = 0.0,
) -> FoodProperties:
    """Thermal properties of a food of given composition at the given temperatures.

    Parameters
    ----------
    composition : :class:`Composition` (or a mapping accepted by ``Composition.from_mapping``)
    temperature_C : temperature(s) [°C], −40…150 (the Choi–Okos range)
    freezing_C : measured initial freezing point [°C]; when None it is estimated by Chang & Tao (1981)
        for ``category``
    conductivity_model : key of ``CONDUCTIVITY_MODELS`` ("parallel", "series", "maxwell-eucken")
    ice_model : key of ``ICE_MODELS`` ("chen", "tchigeov")
    category : key of ``FREEZING_POINT_MODELS`` ("meat", "fruit-vegetable", "juice"), used only
        when ``freezing_C`` is None
    porosity : air volume fraction, 0…0.9; the composition describes the air-free matrix, whose k and
        rho are then corrected for the air (Maxwell–Eucken, food continuous; see ``porosity``)

    Returns
    -------
    FoodProperties
        k, rho, sensible and apparent cp, enthalpy (zero at −40 °C), ice fraction, diffusivity.

    References
    ----------
    Choi & Okos (1986); ASHRAE Handbook—Refrigeration (2006), ch. 9; Chen (1985); Schwartzberg (1976).

    >>> beef = Composition(water=0.74, protein=0.22, fat=0.03, carbohydrate=0.0, ash=0.01)
    >>> p = food_properties(beef, [-20.0, 5.0], freezing_C=-1.7)
    >>> [round(float(v), 3) for v in p.ice_fraction]
    [0.597, 0.0]
    """
    food = _food(composition, freezing_C, conductivity_model, ice_model, category, porosity)
    lo, hi = MODEL_RANGE_C
    t = validate.array("temperature_C", temperature_C, minimum=lo, maximum=hi, unit="°C")
    flat = t.reshape(-1)
    grid = food.grid()
    sensible_nodes = food.sensible_integral(grid)
    j = np.clip(np.searchsorted(grid, flat, side="right") - 1, 0, grid.size - 1)
    a = grid[j]
    mid, half = 0.5 * (a + flat), 0.5 * (flat - a)
    nodes = mid[:, None] + half[:, None] * _GL_NODES[None, :]
    sensible = sensible_nodes[j] + half * (food.cp_sensible(nodes) @ _GL_WEIGHTS)
    x_ice, k, rho, cp = food.state(flat)
    h = food.enthalpy_at_nodes(flat, sensible, x_ice)
    slope = food.ice.slope(flat, food.freezing_C, food.x["water"], food.bound_water)
    cp_app = cp - LATENT_HEAT_WATER_J_KG * slope
    shape = t.shape

    def r(v: np.ndarray) -> np.ndarray:
        out = np.asarray(v, dtype=float).reshape(shape)
        out.setflags(write=False)
        return out

    return FoodProperties(
        temperature_C=r(flat),
        k_W_mK=r(k),
        rho_kg_m3=r(rho),
        cp_J_kgK=r(cp),
        apparent_cp_J_kgK=r(cp_app),
        enthalpy_J_kg=r(h),
        ice_fraction=r(x_ice),
        unfrozen_water_fraction=r(food.x["water"] - x_ice),
        diffusivity_m2_s=r(k / (rho * cp_app)),
        initial_freezing_C=food.freezing_C,
        bound_water=food.bound_water,
    )


def property_table(
    composition: Composition | Mapping,
    *,
    freezing_C: float | None = None,
    conductivity_model: str = "parallel",
    ice_model: str = "chen",
    category: str = "meat",
    porosity: float = 0.0,
) -> PropertyTable:
    """The :class:`~procplan.properties.table.PropertyTable` of a food, −40…150 °C.

    Same models and arguments as :func:`food_properties`. The grid is fine just below the freezing point
    (see ``_Food.grid``) so that linear interpolation of the tabulated enthalpy stays within 0.1 % of
    the model's enthalpy; a table is built in about a millisecond.

    >>> beef = Composition(water=0.74, protein=0.22, fat=0.03, carbohydrate=0.0, ash=0.01)
    >>> table = property_table(beef, freezing_C=-1.7)
    >>> table.initial_freezing_C, table.reference_C
    (-1.7, -40.0)
    """
    food = _food(composition, freezing_C, conductivity_model, ice_model, category, porosity)
    grid = food.grid()
    x_ice, k, rho, _ = food.state(grid)
    h = food.enthalpy_at_nodes(grid, food.sensible_integral(grid), x_ice)
    source = (
        f"composition (Choi & Okos 1986), conductivity {conductivity_model}, ice fraction {ice_model} "
        f"({food.ice.reference}), initial freezing point {food.freezing_C:.2f} °C "
        f"({'given' if freezing_C is not None else 'Chang & Tao 1981, ' + category})"
    )
    if food.porosity > 0.0:
        source += f", porosity {food.porosity:.3g} (air dispersed in the food, Maxwell–Eucken)"

    extra = {
        "composition": dict(food.x),
        "bound_water": food.bound_water,
        "conductivity_model": conductivity_model,
        "ice_model": ice_model,
        "freezing_point_source": "given" if freezing_C is not None else f"chang-tao-{category}",
        "porosity": food.porosity,
    }
    return PropertyTable(grid, h, k, rho, food.freezing_C, REFERENCE_C, source, extra)


def fixed_property_table(
    k_W_mK: float,
    rho_kg_m3: float,
    cp_J_kgK: float,
    latent_J_kg: float = 0.0,
    freezing_C: float | None = None,
) -> PropertyTable:
    """A property table from measured constant properties (delegates to :meth:`PropertyTable.constant`).

    >>> t = fixed_property_table(0.5, 1050.0, 3600.0)
    >>> float(t.enthalpy(10.0) - t.enthalpy(0.0))
    36000.0
    """
    return PropertyTable.constant(k_W_mK, rho_kg_m3, cp_J_kgK, latent_J_kg=latent_J_kg, freezing_C=freezing_C)
