"""Freezing and thawing times: Plank's equation (and its thawing form), Pham's (1986) two-stage method, and
freezing onset/end from a history.

The two estimates are independent of the solvers: they give a quick second opinion on a predicted
freezing step, and the test suite checks them against Neumann's exact solution and each other.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.outcomes.targets import TargetResult, time_to_temperature

#: Plank's geometry factors (P, R) for a = full thickness (slab) or diameter (cylinder, sphere).
PLANK_SHAPE_FACTORS: dict[str, tuple[float, float]] = {
    "slab": (1.0 / 2.0, 1.0 / 8.0),
    "cylinder": (1.0 / 4.0, 1.0 / 16.0),
    "sphere": (1.0 / 6.0, 1.0 / 24.0),
}

#: Equivalent heat-transfer dimensionality E of the basic shapes (slab 1, infinite cylinder 2, sphere 3).
SHAPE_DIMENSIONALITY: dict[str, float] = {"slab": 1.0, "cylinder": 2.0, "sphere": 3.0}


def freezing_time_plank(
    shape: str,
    length_m: float,
    rho_kg_m3: float,
    latent_J_kg: float,
    freezing_C: float,
    medium_C: float,
    h_W_m2K: float,
    k_frozen_W_mK: float,
) -> float:
    """Freezing time by Plank's equation [s].

    t = (ρ L / (T_f − T_a)) · (P a / h + R a² / k_f)

    with P, R = 1/2, 1/8 (slab), 1/4, 1/16 (infinite cylinder), 1/6, 1/24 (sphere).

    Parameters
    ----------
    shape : "slab", "cylinder" (infinite) or "sphere"
    length_m : a, the full thickness of a slab cooled on both faces, or the diameter [m]
    rho_kg_m3 : density of the frozen product [kg/m³]
    latent_J_kg : latent heat of the product, i.e. its freezable water fraction × 333.6 kJ/kg [J/kg]
    freezing_C : initial freezing point T_f [°C]
    medium_C : cooling-medium temperature T_a [°C], below T_f
    h_W_m2K : surface heat-transfer coefficient [W/m²K]
    k_frozen_W_mK : thermal conductivity of the frozen product [W/mK]

    Notes
    -----
    Plank's assumptions: the product starts at its freezing point (no precooling), all the latent heat is
    released at T_f, the frozen layer's sensible heat is neglected (quasi-steady conduction) and k is
    constant. It underestimates real freezing times to a centre temperature well below T_f; see
    :func:`freezing_time_pham`.

    References
    ----------
    Plank, R. (1913). Die Gefrierdauer von Eisblöcken. Zeitschrift für die gesamte Kälte-Industrie 20(6):109–114.
    Singh, R.P. & Heldman, D.R., Introduction to Food Engineering, ch. 7 (Food freezing), Plank's equation and its
    worked example for a 7 cm sphere (from memory: t ≈ 0.72 h).

    Examples
    --------
    A 7 cm sphere, ρ 1000 kg/m³, L 250 kJ/kg, T_f −1.25 °C, air −40 °C, h 50 W/m²K, k_f 1.2 W/mK:

    >>> round(freezing_time_plank("sphere", 0.07, 1000.0, 250e3, -1.25, -40.0, 50.0, 1.2) / 3600, 3)
    0.723
    """
    validate.choice("shape", shape, PLANK_SHAPE_FACTORS)
    a = validate.positive("length_m", length_m, "m")
    rho = validate.positive("rho_kg_m3", rho_kg_m3, "kg/m³")
    lat = validate.positive("latent_J_kg", latent_J_kg, "J/kg")
    tf = validate.number("freezing_C", freezing_C, unit="°C")
    ta = validate.number("medium_C", medium_C, maximum=tf, max_inclusive=False, unit="°C")
    h = validate.positive("h_W_m2K", h_W_m2K, "W/m²K")
    k = validate.positive("k_frozen_W_mK", k_frozen_W_mK, "W/mK")
    p, r = PLANK_SHAPE_FACTORS[shape]
    return rho * lat / (tf - ta) * (p * a / h + r * a * a / k)


def thawing_time_plank(
    shape: str,
    length_m: float,
    rho_kg_m3: float,
    latent_J_kg: float,
    freezing_C: float,
    medium_C: float,
    h_W_m2K: float,
    k_thawed_W_mK: float,
) -> float:
    """Thawing time by Plank's equation adapted to thawing [s].

    t = (ρ L / (T_a − T_f)) · (P a / h + R a² / k_u)

    the freezing form with the heat flowing inwards: the thawed layer grows from the surface, so its
    conductivity k_u (not the frozen one) carries the heat to the melting front; P, R as for freezing.

    Parameters
    ----------
    shape : "slab", "cylinder" (infinite) or "sphere"
    length_m : a, the full thickness of a slab heated on both faces, or the diameter [m]
    rho_kg_m3 : density [kg/m³]
    latent_J_kg : latent heat to melt [J/kg]
    freezing_C : initial freezing point T_f [°C]
    medium_C : thawing-medium temperature T_a [°C], above T_f
    h_W_m2K : surface heat-transfer coefficient [W/m²K]
    k_thawed_W_mK : thermal conductivity of the thawed product [W/mK]

    Notes
    -----
    Same assumptions as :func:`freezing_time_plank`: the product starts at T_f, melts at T_f, and the sensible
    heat of the thawed layer is neglected. It tends to the exact (Neumann, quasi-steady) thawing time as the
    Stefan number c_u (T_a − T_f)/L goes to 0 and underestimates otherwise; Cleland et al. (1986) found no
    published simple formula within ±10 % of their 104 thawing measurements and fitted Plank-based formulae
    with Stefan- and Plank-number corrections that are (the corrections were not read here).

    References
    ----------
    Plank, R. (1913), as in :func:`freezing_time_plank`, with the heat flow reversed.
    Cleland, D.J., Cleland, A.C., Earle, R.L. & Byrne, S.J. (1986), Prediction of thawing times for foods of
    simple shape, Int. J. Refrig. 9:220–228 (abstract: Plank-based formulae within ±10 % at 95 % confidence).
    Góral, D., Kluza, F., Spiess, W.E.L. & Kozłowicz, K. (2016), Review of thawing time prediction models
    depending on process conditions and product characteristics, Food Technol. Biotechnol. 54(1):3–12.

    Examples
    --------
    A 40 mm slab of cod, ρ 1050 kg/m³, L 260 kJ/kg, T_f −1 °C, water at 10 °C, h 200 W/m²K, k_u 0.5 W/mK:
    1050 · 260e3 / 11 · (0.5 · 0.04/200 + 0.125 · 0.04²/0.5) = 24.82e6 · 5.0e-4 = 12 409 s = 3.447 h.

    >>> round(thawing_time_plank("slab", 0.04, 1050.0, 260e3, -1.0, 10.0, 200.0, 0.5) / 3600, 3)
    3.447
    """
    validate.choice("shape", shape, PLANK_SHAPE_FACTORS)
    a = validate.positive("length_m", length_m, "m")
    rho = validate.positive("rho_kg_m3", rho_kg_m3, "kg/m³")
    lat = validate.positive("latent_J_kg", latent_J_kg, "J/kg")
    tf = validate.number("freezing_C", freezing_C, unit="°C")
    ta = validate.number("medium_C", medium_C, minimum=tf, min_inclusive=False, unit="°C")
    h = validate.positive("h_W_m2K", h_W_m2K, "W/m²K")
    k = validate.positive("k_thawed_W_mK", k_thawed_W_mK, "W/mK")
    p, r = PLANK_SHAPE_FACTORS[shape]
    return rho * lat / (ta - tf) * (p * a / h + r * a * a / k)


def ehtd_cleland(beta1: float, beta2: float, bi: float) -> float:
    """Equivalent heat-transfer dimensionality E of a brick or finite cylinder (Cleland, Cleland & Earle 1987).

    E = 1 + (1 + 2/Bi) / (β₁² + 2β₁/Bi) + (1 + 2/Bi) / (β₂² + 2β₂/Bi)

    The freezing (or cooling) time of the shape is that of the infinite slab of its smallest dimension D
    divided by E. β₁ and β₂ are the other two dimensions over D (a finite cylinder of diameter d and length
    ℓ: D = min(d, ℓ), with the diameter counted in both β when it is the larger; an infinite cylinder is
    β₁ = 1, β₂ → ∞), Bi = h D / k_f with D the full smallest dimension, the convention of Plank's equation.

    Parameters
    ----------
    beta1, beta2 : second and third dimension over the smallest (≥ 1; ``math.inf`` for an infinite extent)
    bi : Biot number h D / k_f

    Returns
    -------
    E (1 for a slab, 2 for an infinite cylinder, up to 3 for a cube)

    Notes
    -----
    Limits: Bi → 0 gives 1 + 1/β₁ + 1/β₂, the ratio of the shape's surface-to-volume ratio to the slab's
    (the lumped limit; the ASHRAE chapter gives this E₀ for finite cylinders, bricks and rectangular rods);
    Bi → ∞ gives 1 + 1/β₁² + 1/β₂². Cleland et al. report the formula within a few per cent of numerical
    freezing times of regular multidimensional shapes.

    References
    ----------
    Cleland, D.J., Cleland, A.C. & Earle, R.L. (1987). Prediction of freezing and thawing times for
    multi-dimensional shapes by simple formulae. Part 1: regular shapes. Int. J. Refrigeration 10(3):156–164.
    ASHRAE Handbook—Refrigeration (2010), ch. 20, Cooling and freezing times of foods, eq. 20 (E₀ of bricks
    and finite cylinders).

    >>> round(ehtd_cleland(1.0, 1.0, 1e-9), 6), round(ehtd_cleland(1.0, 1.0, 1e12), 6)
    (3.0, 3.0)
    >>> round(ehtd_cleland(1.0, math.inf, 2.0), 6)
    2.0
    """
    bi = validate.positive("bi", bi)
    total = 1.0
    for name, beta in (("beta1", beta1), ("beta2", beta2)):
        if not beta >= 1.0:
            raise InvalidInputError(
                name, beta, "a dimension ratio ≥ 1 (a larger dimension over the smallest)"
            )
        if math.isinf(beta):
            continue
        total += (1.0 + 2.0 / bi) / (beta * beta + 2.0 * beta / bi)
    return total


def ehtd_of_dimensions(
    dimensions_m: tuple[float, ...], h_W_m2K: float, k_frozen_W_mK: float
) -> tuple[float, float]:
    """E (Cleland et al. 1987) and the smallest dimension D [m] of a brick (three edges) or a finite cylinder.

    A finite cylinder is given as (diameter, diameter, length): its cross-section counts in both directions.

    >>> E, D = ehtd_of_dimensions((0.1, 0.1, 0.1), 1e9, 1.0)
    >>> round(E, 4), D
    (3.0, 0.1)
    """
    dims = sorted(validate.positive(f"dimension {i + 1}", d, "m") for i, d in enumerate(dimensions_m))
    if len(dims) != 3:
        raise InvalidInputError(
            "dimensions_m", dimensions_m, "three dimensions (brick edges or d, d, length)"
        )
    small = dims[0]
    bi = (
        validate.positive("h_W_m2K", h_W_m2K, "W/m²K")
        * small
        / validate.positive("k_frozen_W_mK", k_frozen_W_mK, "W/mK")
    )
    return ehtd_cleland(dims[1] / small, dims[2] / small, bi), small


def pham_mean_freezing_temperature_C(center_end_C: float, medium_C: float) -> float:
    """Pham's (1986) mean freezing temperature T_fm = 1.8 + 0.263 T_c + 0.105 T_a [°C] (from memory).

    >>> round(pham_mean_freezing_temperature_C(-18.0, -40.0), 3)
    -7.134
    """
    tc = validate.number("center_end_C", center_end_C, unit="°C")
    ta = validate.number("medium_C", medium_C, unit="°C")
    return 1.8 + 0.263 * tc + 0.105 * ta


@dataclass(frozen=True)
class PhamFreezingTime:
    """Pham's two-stage estimate and its parts.

    time_s : total freezing time from ``initial_C`` to ``center_end_C`` at the centre [s]
    precooling_s, phase_change_s : the two terms of the sum (precooling; phase change with subcooling) [s]
    mean_freezing_C : T_fm [°C]
    bi : Biot number h R / k_f with R the half-thickness or radius
    E : equivalent heat-transfer dimensionality used
    """

    time_s: float
    precooling_s: float
    phase_change_s: float
    mean_freezing_C: float
    bi: float
    E: float


def freezing_time_pham(
    shape: str,
    length_m: float,
    rho_kg_m3: float,
    cp_unfrozen_J_kgK: float,
    cp_frozen_J_kgK: float,
    latent_J_kg: float,
    initial_C: float,
    center_end_C: float,
    medium_C: float,
    h_W_m2K: float,
    k_frozen_W_mK: float,
    *,
    E: float | None = None,
) -> PhamFreezingTime:
    """Freezing time by Pham's (1986) simplified two-stage method.

    T_fm = 1.8 + 0.263 T_c + 0.105 T_a
    ΔH₁ = ρ c_u (T_i − T_fm),          ΔT₁ = (T_i + T_fm)/2 − T_a
    ΔH₂ = ρ [L + c_f (T_fm − T_c)],    ΔT₂ = T_fm − T_a
    t = (R / (E h)) · (ΔH₁/ΔT₁ + ΔH₂/ΔT₂) · (1 + Bi/2),   Bi = h R / k_f

    R is the half-thickness of a slab or the radius (half of ``length_m``), E the equivalent heat-transfer
    dimensionality (1 slab, 2 infinite cylinder, 3 sphere; pass ``E`` for other shapes).

    Parameters
    ----------
    shape : "slab", "cylinder" or "sphere" (sets E unless given)
    length_m : full thickness or diameter [m] (the same convention as :func:`freezing_time_plank`)
    rho_kg_m3 : density [kg/m³]
    cp_unfrozen_J_kgK, cp_frozen_J_kgK : specific heats above and below freezing [J/kgK]
    latent_J_kg : latent heat of the product [J/kg]
    initial_C : uniform initial temperature T_i [°C]
    center_end_C : final centre temperature T_c [°C] (e.g. −18 °C)
    medium_C : medium temperature T_a [°C], below T_c
    h_W_m2K : surface heat-transfer coefficient [W/m²K]
    k_frozen_W_mK : frozen conductivity [W/mK]
    E : equivalent heat-transfer dimensionality (optional)

    Notes
    -----
    With T_i = T_fm = T_c the method reduces exactly to Plank's equation at T_f = T_fm, which the tests
    use. The coefficients of T_fm and the (1 + Bi/2) form are reproduced from memory of Pham (1986) and
    the ASHRAE chapter, not confirmed in the source. Pham reports the method within about ±10 % of
    measured freezing times of slabs, cylinders and spheres over 0.02 < Bi < 11 (from memory).

    References
    ----------
    Pham, Q.T. (1986). Simplified equation for predicting the freezing time of foodstuffs. J. Food Technol.
    21:209–219 (cited also as J. Food Sci. 1986); ASHRAE Handbook—Refrigeration, Cooling and freezing times
    of foods (2006: ch. 10).

    >>> r = freezing_time_pham("sphere", 0.07, 1000.0, 3600.0, 1800.0, 250e3, 10.0, -18.0, -40.0, 50.0, 1.2)
    >>> round(r.mean_freezing_C, 3), round(r.time_s / 3600, 2)
    (-7.134, 1.09)
    """
    validate.choice("shape", shape, SHAPE_DIMENSIONALITY)
    a = validate.positive("length_m", length_m, "m")
    rho = validate.positive("rho_kg_m3", rho_kg_m3, "kg/m³")
    cu = validate.positive("cp_unfrozen_J_kgK", cp_unfrozen_J_kgK, "J/kgK")
    cf = validate.positive("cp_frozen_J_kgK", cp_frozen_J_kgK, "J/kgK")
    lat = validate.positive("latent_J_kg", latent_J_kg, "J/kg")
    ti = validate.number("initial_C", initial_C, unit="°C")
    ta = validate.number("medium_C", medium_C, unit="°C")
    tc = validate.number("center_end_C", center_end_C, minimum=ta, min_inclusive=False, unit="°C")
    h = validate.positive("h_W_m2K", h_W_m2K, "W/m²K")
    k = validate.positive("k_frozen_W_mK", k_frozen_W_mK, "W/mK")
    e = SHAPE_DIMENSIONALITY[shape] if E is None else validate.number("E", E, minimum=1.0, maximum=3.0)
    tfm = 1.8 + 0.263 * tc + 0.105 * ta
    tol = 1e-9 * max(1.0, abs(tfm))  # round-off when T_i or T_c is set equal to T_fm
    if not ti >= tfm - tol:
        raise InvalidInputError("initial_C", ti, f">= the mean freezing temperature T_fm = {tfm:.2f} °C")
    if not tc <= tfm + tol:
        raise InvalidInputError("center_end_C", tc, f"<= the mean freezing temperature T_fm = {tfm:.2f} °C")
    if not tfm > ta:
        raise InvalidInputError("medium_C", ta, f"< T_fm = {tfm:.2f} °C")
    radius = a / 2.0
    bi = h * radius / k
    dh1 = rho * cu * max(ti - tfm, 0.0)
    dh2 = rho * (lat + cf * max(tfm - tc, 0.0))
    dt1 = (ti + tfm) / 2.0 - ta
    dt2 = tfm - ta
    scale = radius / (e * h) * (1.0 + bi / 2.0)
    pre = scale * dh1 / dt1
    phase = scale * dh2 / dt2
    return PhamFreezingTime(pre + phase, pre, phase, tfm, bi, e)


@dataclass(frozen=True)
class FreezingFromHistory:
    """Freezing onset and end read from a core history.

    onset : when the core reached the initial freezing point
    end : when the core reached the frozen-storage temperature
    freezing_s : end − onset [s], or None when either was not reached
    """

    onset: TargetResult
    end: TargetResult
    freezing_s: float | None


def freezing_from_history(
    time_s,
    core_C,
    initial_freezing_C: float,
    frozen_storage_C: float = -18.0,
    *,
    start_s: float | None = None,
) -> FreezingFromHistory:
    """Times at which the core reaches its initial freezing point and a frozen-storage temperature.

    Parameters
    ----------
    time_s : sample times [s]
    core_C : core temperature history [°C]
    initial_freezing_C : initial freezing point of the product [°C]
    frozen_storage_C : end-of-freezing core temperature [°C], below the freezing point (default −18 °C,
        the usual frozen-storage temperature: common practice)
    start_s : search from this time [s]

    >>> f = freezing_from_history([0, 3600, 7200], [5.0, -1.0, -19.0], -1.0)
    >>> f.onset.time_s, round(f.end.time_s, 1), round(f.freezing_s, 1)
    (3600.0, 7000.0, 3400.0)
    """
    tf = validate.number("initial_freezing_C", initial_freezing_C, unit="°C")
    ts = validate.number("frozen_storage_C", frozen_storage_C, maximum=tf, max_inclusive=False, unit="°C")
    onset = time_to_temperature(time_s, core_C, tf, direction="down", start_s=start_s)
    end = time_to_temperature(time_s, core_C, ts, direction="down", start_s=start_s)
    dur = end.time_s - onset.time_s if (onset.reached and end.reached) else None
    return FreezingFromHistory(onset, end, dur)
