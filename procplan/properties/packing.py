"""Effective properties of a packed case, tray, stack or pallet: pieces of product with air voids between them.

A case of pieces is solved as one brick of effective properties (the pieces' own temperature lag behind the
effective medium is not modelled). Per m³ of case:

* density: rho = φ rho_product, φ the volume fraction of product (the air's mass, below 0.5 % of the case's
  for any void fraction up to 0.9, is neglected as in :mod:`procplan.properties.porosity`);
* enthalpy per kg of case: that of the product (the air carries no mass worth counting; the packaging's
  heat capacity is not carried, as for a single piece);
* conductivity: a two-phase effective-medium model of the pieces (with their own packaging) and the air in
  the voids, chosen from :data:`PACKED_CONDUCTIVITY_MODELS`.

Which model: Carson et al. (2005) show that the effective conductivity of an isotropic two-phase material
lies between the two Maxwell–Eucken forms (the Hashin–Shtrikman bounds), and that for "external porosity"
(particulate) materials — pieces touching at points with air around them, as in a packed case — it lies
between the Maxwell–Eucken form with air continuous (the lower bound) and the effective-medium theory (EMT,
Landauer 1952), which assumes neither phase continuous. EMT is the default here: it follows the measured
bulk conductivity of packed food beds (see tests/properties/test_packing.py) better than the lower bound;
the lower bound is the safe choice for a cooling or heating time (lower k, slower centre) and is reported
beside it. Heat carried across the voids by radiation and natural convection is not modelled; at
cold-room temperatures radiation across voids of centimetres is of the order of the air's own conduction,
so the effective conductivity errs low and the centre's time errs long (the safe side).

Measured against a published bed (tests/properties/test_packing.py): bulk canola seed (Yu et al. 2015) at 11 %
moisture and 90 °C lies within the EMT values over its porosity range, but at 5 % and 40 °C the dry bed lies
below even the lower Hashin–Shtrikman bound (0.06 against 0.07–0.08 W/mK): contact resistance between dry,
hard pieces, which no model here carries. For such loads the conductivity errs high and the centre's time
short (the unsafe side): confirm by probing the centre of a real load.

References
----------
Landauer, R. (1952), The electrical resistance of binary metallic mixtures, J. Appl. Phys. 23(7), 779–784
(effective-medium theory).
Maxwell, J.C. (1904), A Treatise on Electricity and Magnetism, 3rd ed.; Eucken, A. (1940), Forschung auf
dem Gebiete des Ingenieurwesens B-3, Forschungsheft 353.
Carson, J.K., Lovatt, S.J., Tanner, D.J., Cleland, A.C. (2005), Thermal conductivity bounds for isotropic,
porous materials, Int. J. Heat Mass Transfer 48(11), 2150–2158.
Carson, J.K. (2006), Review of effective thermal conductivity models for foods, Int. J. Refrigeration
29(6), 958–967.
Yu, D.U., Shrestha, B.L., Baik, O.D. (2015), Thermal conductivity, specific heat, thermal diffusivity, and
emissivity of stored canola seeds with their temperature and moisture content, J. Food Eng. 165, 156–165.
Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §3.1.3 and eq. 3.19
(resistances in series), Table A.3 (conductivity of common materials).
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.properties.mixing import conductivity_parallel, conductivity_series
from procplan.properties.porosity import conductivity_air, conductivity_maxwell_eucken_porous
from procplan.properties.table import PropertyTable

#: Accepted void (air) fraction of a packed case: below 0.02 the case is a solid block (use the product
#: itself); above 0.9 the pieces no longer form a bed.
VOID_FRACTION_RANGE: tuple[float, float] = (0.02, 0.9)

#: Conductivity of case-wall materials [W/mK] with their source.
WALL_MATERIALS: dict[str, tuple[float, str]] = {
    # Incropera 7th ed. Table A.3 "Cardboard, corrugated" 0.064 W/mK (from memory); 0.065 W/mK is quoted
    # for cardboard cases in food-cold-chain CFD work citing Kumar & Subhendu (2009).
    "corrugated-board": (0.064, "Incropera 7th ed., Table A.3, cardboard, corrugated"),
    # Incropera 7th ed. Table A.3 "Polystyrene, expanded, molded beads" 0.040 W/mK (from memory).
    "expanded-polystyrene": (0.040, "Incropera 7th ed., Table A.3, polystyrene, expanded (molded beads)"),
    # Polypropylene 0.1–0.22 W/mK in polymer data sheets; the upper value is used (common practice).
    "polypropylene": (0.22, "polymer data sheets, upper value (common practice)"),
}


def conductivity_emt(k_product_W_mK, void_fraction, k_air_W_mK):
    """Effective-medium-theory (Landauer) conductivity of pieces and air, neither phase continuous.

    The root of Σ_i v_i (k_i − k)/(k_i + 2k) = 0 for two phases:

        k = [B + sqrt(B² + 8 k_p k_a)] / 4,   B = (3 (1 − ε) − 1) k_p + (3 ε − 1) k_a

    Parameters
    ----------
    k_product_W_mK : conductivity of the pieces [W/mK]
    void_fraction : air volume fraction ε [m³/m³]
    k_air_W_mK : conductivity of the air [W/mK]

    References
    ----------
    Landauer (1952), J. Appl. Phys. 23, 779, eq. for a binary mixture; Carson (2006), Int. J. Refrigeration 29,
    958, Table 1 (EMT).

    Half pieces of 0.5 W/mK, half air of 0.025 W/mK: B = 0.2625, k = (0.2625 + sqrt(0.2625² + 0.1))/4:

    >>> round(float(conductivity_emt(0.5, 0.5, 0.025)), 4)
    0.1684
    """
    kp = np.asarray(k_product_W_mK, dtype=float)
    ka = np.asarray(k_air_W_mK, dtype=float)
    e = np.asarray(void_fraction, dtype=float)
    b = (3.0 * (1.0 - e) - 1.0) * kp + (3.0 * e - 1.0) * ka
    return (b + np.sqrt(b * b + 8.0 * kp * ka)) / 4.0


def conductivity_me_air_continuous(k_product_W_mK, void_fraction, k_air_W_mK):
    """Maxwell–Eucken with air continuous and the pieces dispersed in it: the lower (Hashin–Shtrikman)
    bound of an isotropic mixture, and the lower bound for particulate beds (Carson et al. 2005).

    Half pieces of 0.5 W/mK, half air of 0.025 W/mK: 0.025 (0.05 + 0.5 + 0.475)/(0.55 − 0.2375):

    >>> round(float(conductivity_me_air_continuous(0.5, 0.5, 0.025)), 4)
    0.082
    """
    e = np.asarray(void_fraction, dtype=float)
    return conductivity_maxwell_eucken_porous(k_air_W_mK, 1.0 - e, k_product_W_mK)


def conductivity_me_product_continuous(k_product_W_mK, void_fraction, k_air_W_mK):
    """Maxwell–Eucken with the product continuous and air dispersed: the upper (Hashin–Shtrikman) bound.

    >>> round(float(conductivity_me_product_continuous(0.5, 0.5, 0.025)), 4)
    0.2178
    """
    return conductivity_maxwell_eucken_porous(k_product_W_mK, void_fraction, k_air_W_mK)


def conductivity_series_bound(k_product_W_mK, void_fraction, k_air_W_mK):
    """Series (layers across the heat flow): the absolute lower bound, 1/k = (1 − ε)/k_p + ε/k_a."""
    e = np.asarray(void_fraction, dtype=float)
    return conductivity_series({"p": 1.0 - e, "a": e}, {"p": k_product_W_mK, "a": k_air_W_mK})


def conductivity_parallel_bound(k_product_W_mK, void_fraction, k_air_W_mK):
    """Parallel (layers along the heat flow): the absolute upper bound, k = (1 − ε) k_p + ε k_a."""
    e = np.asarray(void_fraction, dtype=float)
    return conductivity_parallel({"p": 1.0 - e, "a": e}, {"p": k_product_W_mK, "a": k_air_W_mK})


#: Registry of packed-bed conductivity models: name → f(k_product_W_mK, void_fraction, k_air_W_mK).
PACKED_CONDUCTIVITY_MODELS: dict[str, Callable] = {
    "emt": conductivity_emt,
    "maxwell-eucken-air-continuous": conductivity_me_air_continuous,
    "maxwell-eucken-product-continuous": conductivity_me_product_continuous,
    "series": conductivity_series_bound,
    "parallel": conductivity_parallel_bound,
}
#: The models in the planner's words (screens, sheets, warnings).
PACKED_MODEL_LABELS: dict[str, str] = {
    "emt": "effective-medium theory",
    "maxwell-eucken-air-continuous": "Maxwell–Eucken, air continuous",
    "maxwell-eucken-product-continuous": "Maxwell–Eucken, product continuous",
    "series": "series bound",
    "parallel": "parallel bound",
}
#: The model used when a plan names none, and the one reported as the safe lower value beside it.
DEFAULT_PACKED_MODEL = "emt"
SAFE_PACKED_MODEL = "maxwell-eucken-air-continuous"


def check_void_fraction(void_fraction: float, field: str = "packing.void_fraction") -> float:
    """A validated void fraction in :data:`VOID_FRACTION_RANGE`."""
    lo, hi = VOID_FRACTION_RANGE
    return validate.number(field, void_fraction, minimum=lo, maximum=hi, unit="(air volume fraction)")


def packed_conductivity(
    model: str, k_product_W_mK, void_fraction, k_air_W_mK, field="packing.conductivity_model"
):
    """Effective conductivity of a packed bed by the model named in :data:`PACKED_CONDUCTIVITY_MODELS`."""
    validate.choice(field, model, PACKED_CONDUCTIVITY_MODELS)
    return PACKED_CONDUCTIVITY_MODELS[model](k_product_W_mK, void_fraction, k_air_W_mK)


def void_fraction_from_count(
    piece_volume_m3: float, pieces: int, space_volume_m3: float, field: str = "packing.pieces_per_case"
) -> float:
    """Void fraction of a space holding ``pieces`` pieces of ``piece_volume_m3`` each: ε = 1 − N V_p / V.

    Raises InvalidInputError naming ``field`` when the pieces do not fit (or leave less than the smallest
    accepted void fraction).

    >>> round(void_fraction_from_count(1e-3, 6, 1e-2), 3)
    0.4
    """
    lo, hi = VOID_FRACTION_RANGE
    eps = 1.0 - pieces * piece_volume_m3 / space_volume_m3
    if not lo <= eps <= hi:
        most = int((1.0 - lo) * space_volume_m3 / piece_volume_m3)
        least = max(1, int(np.ceil((1.0 - hi) * space_volume_m3 / piece_volume_m3)))
        raise InvalidInputError(
            field,
            pieces,
            f"{least}…{most} pieces",
            f"{pieces} piece{'s' if pieces != 1 else ''} of {piece_volume_m3 * 1e6:.4g} ml in "
            f"{space_volume_m3 * 1e3:.4g} l leave a void "
            f"fraction of {eps:.3f}, outside {lo:g}…{hi:g}",
        )
    return float(eps)


def conductivity_through_walls(k_inside_W_mK, inner_lengths_m, wall_thickness_m: float, wall_k_W_mK: float):
    """Conductivity of a stack of cases homogenised with the case walls inside it, the safe (lowest) axis.

    Along each axis a case of inner length L_i with two walls of thickness t is a series path
    (Incropera 7th ed., eq. 3.19): k_axis = (L_i + 2 t) / (L_i / k + 2 t / k_w). The brick solvers take one
    conductivity, so the lowest axis value is used: the centre of the stack then cools (or heats) no faster
    than it would with the walls resolved.

    The 100 mm axis of a case with 4 mm board walls, 0.108 / (0.1/0.2 + 0.008/0.064):

    >>> round(float(conductivity_through_walls(0.2, (0.3, 0.2, 0.1), 0.004, 0.064)), 4)
    0.1728
    """
    k = np.asarray(k_inside_W_mK, dtype=float)
    vals = [
        (li + 2 * wall_thickness_m) / (li / k + 2 * wall_thickness_m / wall_k_W_mK) for li in inner_lengths_m
    ]
    return np.minimum.reduce(vals) if len(vals) > 1 else vals[0]


def packed_property_table(
    piece: PropertyTable,
    void_fraction: float,
    *,
    product_fraction: float | None = None,
    model: str = DEFAULT_PACKED_MODEL,
    walls: tuple[tuple[float, float, float], float, float] | None = None,
) -> PropertyTable:
    """The PropertyTable of a packed case (or stack) that the brick solvers run as one body.

    Parameters
    ----------
    piece : the product's own table
    void_fraction : air volume fraction ε between the pieces (their packaging counted with them)
    product_fraction : volume fraction of product (mass-bearing) in the case; default 1 − ε (the pieces'
        own packaging thin). It must not exceed 1 − ε.
    model : key of :data:`PACKED_CONDUCTIVITY_MODELS`
    walls : for a stack of cases, ((inner length, width, height) [m], wall thickness [m], wall k [W/mK]):
        the walls inside the stack in series (:func:`conductivity_through_walls`), and the density scaled
        by the inner over the outer volume

    Returns
    -------
    PropertyTable with the product's enthalpy per kg, the effective conductivity and density

    >>> p = PropertyTable.constant(0.5, 1000.0, 4000.0)
    >>> c = packed_property_table(p, 0.4)
    >>> float(c.density(5.0)), float(c.enthalpy(10.0) - c.enthalpy(0.0))
    (600.0, 40000.0)
    """
    eps = check_void_fraction(void_fraction)
    validate.choice("packing.conductivity_model", model, PACKED_CONDUCTIVITY_MODELS)
    phi = 1.0 - eps if product_fraction is None else float(product_fraction)
    if not 0.0 < phi <= 1.0 - eps + 1e-12:
        raise InvalidInputError(
            "packing.product_fraction", phi, f"(0, {1.0 - eps:.4g}], at most 1 − void fraction"
        )
    t = piece.temperature_C
    k = packed_conductivity(model, piece.conductivity_W_mK, eps, conductivity_air(t))
    rho = phi * piece.density_kg_m3
    note = ""
    if walls is not None:
        inner, t_wall, k_wall = walls
        k = conductivity_through_walls(k, inner, t_wall, k_wall)
        v_in = float(np.prod(inner))
        v_out = float(np.prod([x + 2 * t_wall for x in inner]))
        rho = rho * v_in / v_out
        note = f", case walls {t_wall * 1000:g} mm inside the stack"
    return PropertyTable(
        t,
        piece.enthalpy_J_kg,
        k,
        rho,
        piece.initial_freezing_C,
        piece.reference_C,
        f"packed load: {piece.source}; {PACKED_MODEL_LABELS[model]} with air fraction {eps:.3f}{note}",
        extra={"void_fraction": eps, "product_fraction": phi, "packed_model": model},
    )
