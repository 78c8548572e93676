"""Transient mass transfer by Fick's second law: uptake and centre concentration of products of every shape.

A product at uniform initial concentration C_0 is put at t = 0 into a medium that it would come to
equilibrium with at the concentration C_eq (the product-side concentration in equilibrium with the medium,
i.e. the medium concentration times the partition coefficient). Inside, ∂C/∂t = ∇·(D ∇C) with a constant
effective diffusivity D; at the surface either C = C_eq (constant surface concentration) or the flux is
−D ∂C/∂n = k_m (C_s − C_eq) with a surface mass-transfer coefficient k_m referred to the product-side
concentration (Crank 1975, ch. 4, with his surface rate constant α = k_m).

This is Fourier's problem with a unit capacity: ρ c_p → 1, k → D, h → k_m, so α → D, Fo → D t/L² and
Bi → Bi_m = k_m L/D; the dimensionless solutions of :mod:`procplan.conduction.series` (slab, cylinder, sphere)
and Newman's product of :mod:`procplan.conduction.product` (finite cylinder, brick) apply unchanged, with

* (C − C_eq)/(C_0 − C_eq) = θ, the fraction of the change not yet accomplished;
* M_t/M_∞ = (C̄ − C_0)/(C_eq − C_0) = 1 − θ̄, the uptake (or, for C_eq < C_0, loss) fraction;
* the uptake rate (amount per second entering the product) k_m Σ_faces A_face (C_eq − C̄_face).

Constant surface concentration (Bi_m → ∞) is given as ``k_m_m_s = math.inf``. The results agree with Crank's
series for the sheet, cylinder and sphere (eqs. 4.18 and 6.20 among them) with a constant surface
concentration and with a surface coefficient, and with the short-time forms; see
tests/conduction/test_diffusion.py.

References
----------
Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford University Press, 1975, ch. 4–6.
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat and Mass Transfer, 7th ed.,
Wiley, 2011, §5.5–5.8 and §14.1 (the heat and mass transfer analogy).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import optimize

from procplan import validate
from procplan.conduction import product, series
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry

#: Range of effective diffusivities accepted [m²/s] (salt in meat and cheese is ~1e-10, water in gels ~1e-9).
D_RANGE_M2_S: tuple[float, float] = (1e-16, 1e-6)


@dataclass(frozen=True)
class DiffusionHistory:
    """Concentrations and uptake of one product over a time array (all arrays have the shape of ``time_s``).

    Concentrations are in the unit of the inputs (kg/m³, mass fraction, mol/m³, …); the uptake rate is that
    unit times m³ per second (the amount entering per second; negative while the product loses solute).
    """

    time_s: np.ndarray
    centre: np.ndarray
    surface: np.ndarray  # at the fastest point: surface, rim edge of a finite cylinder, corner of a brick
    mean: np.ndarray
    uptake_fraction: np.ndarray  # M_t/M_∞ = (C̄ − C_0)/(C_eq − C_0)
    uptake_rate: np.ndarray  # k_m Σ A_face (C_eq − C̄_face); NaN when the surface is at C_eq (Bi_m = ∞)
    bi_m: tuple[float, ...]  # mass Biot number k_m L / D of each axis (inf for a constant surface value)
    truncation_bound: float  # bound of |θ error| of the series (see procplan.conduction.series)


# --- dimensionless groups ---------------------------------------------------------------------------------------
def mass_biot_number(k_m_m_s: float, length_m: float, D_m2_s: float) -> float:
    """Mass Biot number, the ratio of internal diffusion to surface mass-transfer resistance.

    Bi_m = k_m L / D

    Parameters
    ----------
    k_m_m_s : surface mass-transfer coefficient referred to the product-side concentration [m/s] (or inf)
    length_m : half-thickness of a slab or radius of a cylinder or sphere [m]
    D_m2_s : effective diffusivity in the product [m²/s]

    Examples
    --------
    >>> round(mass_biot_number(1e-7, 0.01, 2e-10), 6)
    5.0

    Notes
    -----
    Crank (1975, ch. 4) writes the same group as L = l α / D (sheet of half-thickness l, surface rate
    constant α). Because effective diffusivities in foods are small, Bi_m is often large and the surface
    concentration is then close to its equilibrium value from the start (the limit ``k_m_m_s = math.inf``).

    References
    ----------
    Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975, ch. 4.
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §14.1 (analogy).
    """
    km = _k_m(k_m_m_s)
    length = validate.positive("length_m", length_m, "m")
    d = _diffusivity(D_m2_s)
    return km * length / d


def mass_fourier_number(D_m2_s: float, time_s: Any, length_m: float) -> np.ndarray:
    """Mass Fourier number Fo_m = D t / L² (L half-thickness or radius).

    >>> float(mass_fourier_number(1e-10, 1e6, 0.01))
    1.0
    """
    d = _diffusivity(D_m2_s)
    t = validate.array("time_s", time_s, minimum=0.0, unit="s")
    length = validate.positive("length_m", length_m, "m")
    return d * t / length**2


# --- inputs -----------------------------------------------------------------------------------------------------
def _diffusivity(value: Any) -> float:
    return validate.number("D_m2_s", value, minimum=D_RANGE_M2_S[0], maximum=D_RANGE_M2_S[1], unit="m²/s")


def _k_m(value: Any) -> float:
    if isinstance(value, int | float | np.floating) and not isinstance(value, bool) and value == math.inf:
        return math.inf
    return validate.number("k_m_m_s", value, minimum=0.0, min_inclusive=False, unit="m/s (or inf)")


def _geometry(geometry: Any) -> Geometry:
    if not isinstance(geometry, Geometry):
        raise InvalidInputError("geometry", geometry, "a procplan.geometry.Geometry")
    return geometry


def _concentration(field: str, value: Any) -> float:
    return validate.number(field, value, minimum=0.0, unit="(concentration)")


def _surface_coefficient(g: Geometry, d: float, km: float) -> float:
    """The h of the heat problem: k_m, or for Bi_m = ∞ a value whose Biot number on every axis exceeds the
    series' range, which the product solution takes as the limit ∞ (surface at C_eq)."""
    if math.isinf(km):
        return 2.0 * series.BI_RANGE[1] * d / min(a.length_m for a in g.axes)
    bi_min = km * min(a.length_m for a in g.axes) / d
    if bi_min < series.BI_RANGE[0]:
        raise InvalidInputError(
            "k_m_m_s", km, f"a mass Biot number k_m L/D >= {series.BI_RANGE[0]:g}", f"Bi_m = {bi_min:.3g}"
        )
    return km


# --- the solution ----------------------------------------------------------------------------------------------
def diffusion_history(
    geometry: Geometry,
    D_m2_s: float,
    initial: float,
    equilibrium: float,
    time_s: Any,
    *,
    k_m_m_s: float = math.inf,
    tol: float = series.DEFAULT_TOL,
) -> DiffusionHistory:
    """Centre, surface and mean concentration, uptake fraction and uptake rate of a product by Fick's second law.

    θ = (C − C_eq)/(C_0 − C_eq) = Π_axes Σ_n C_n exp(−ζ_n² D t/L²) θ_n, the exact eigen-series of each axis with
    Bi_m = k_m L/D (Crank 1975, ch. 4–6; in heat-transfer form Incropera eqs. 5.39, 5.50, 5.51) and Newman's product for a finite cylinder or brick; M_t/M_∞ = 1 − θ̄.

    Parameters
    ----------
    geometry : the product's shape and size
    D_m2_s : effective diffusivity of the solute in the product [m²/s], 1e-16 … 1e-6
    initial : uniform initial concentration C_0 (any unit, >= 0)
    equilibrium : concentration C_eq in the product in equilibrium with the medium (same unit, >= 0)
    time_s : times since immersion [s], 1-D, >= 0, non-decreasing
    k_m_m_s : surface mass-transfer coefficient [m/s] referred to the product-side concentration, or
        ``math.inf`` for a constant surface concentration C_eq (the default)
    tol : bound of the series' truncation error in θ

    Returns
    -------
    DiffusionHistory

    Notes
    -----
    Constant D, k_m and C_eq; no shrinkage, no coupled water flow (effective-diffusivity model). With Bi_m
    above 1e8 on an axis its surface is taken at C_eq, and the uptake rate is then NaN (use the mean).

    Examples
    --------
    A 20 mm slab, D = 2e-10 m²/s, surface at 100, after D t/L² = 0.1 (50 000 s): Crank's eq. 4.18 gives
    M_t/M_∞ = 1 − Σ 8/((2n+1)²π²) exp(−(2n+1)²π² · 0.1/4) = 0.3568.

    >>> g = Geometry("slab", thickness_m=0.02)
    >>> h = diffusion_history(g, 2e-10, 0.0, 100.0, [0.0, 50000.0])
    >>> round(float(h.uptake_fraction[1]), 4), round(float(h.mean[1]), 2)
    (0.3568, 35.68)

    References
    ----------
    Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975, ch. 4–6.
    Newman, A.B., Ind. Eng. Chem. 28 (1936) 545–548.
    """
    g = _geometry(geometry)
    d = _diffusivity(D_m2_s)
    km = _k_m(k_m_m_s)
    c0 = _concentration("initial", initial)
    ceq = _concentration("equilibrium", equilibrium)
    hist = product.exact_history(g, d, 1.0, 1.0, _surface_coefficient(g, d, km), c0, ceq, time_s, tol=tol)
    bis = tuple(math.inf if math.isinf(km) else a.bi for a in hist.provenance.axes)
    rate = -hist.heat_flow_W if all(math.isfinite(b) for b in bis) else np.full(hist.time_s.shape, np.nan)
    if c0 == ceq:
        uptake = np.ones_like(hist.time_s)
    else:
        uptake = (hist.mean_C - c0) / (ceq - c0)
    return DiffusionHistory(
        time_s=hist.time_s,
        centre=hist.core_C,
        surface=hist.surface_C,
        mean=hist.mean_C,
        uptake_fraction=np.clip(uptake, 0.0, 1.0),
        uptake_rate=rate,
        bi_m=bis,
        truncation_bound=hist.provenance.truncation_bound,
    )


def uptake_fraction(
    geometry: Geometry, D_m2_s: float, time_s: Any, *, k_m_m_s: float = math.inf
) -> np.ndarray:
    """Uptake (or loss) fraction M_t/M_∞ = 1 − θ̄ over a time array (see :func:`diffusion_history`).

    Sphere of radius 10 mm, D = 1e-10 m²/s, constant surface value, at D t/a² = 0.1 (100 000 s); Crank's eq.
    6.20 gives 1 − (6/π²) Σ exp(−n²π² · 0.1)/n² = 0.7704:

    >>> round(float(uptake_fraction(Geometry("sphere", diameter_m=0.02), 1e-10, [1e5])[0]), 4)
    0.7704

    References
    ----------
    Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975, eqs. 4.18 and 6.20 (Bi_m = ∞), ch. 4–6.
    """
    return diffusion_history(geometry, D_m2_s, 0.0, 1.0, time_s, k_m_m_s=k_m_m_s).uptake_fraction


def centre_concentration(
    geometry: Geometry,
    D_m2_s: float,
    initial: float,
    equilibrium: float,
    time_s: Any,
    *,
    k_m_m_s: float = math.inf,
) -> np.ndarray:
    """Concentration at the centre over a time array, C_eq + (C_0 − C_eq) θ_centre (see :func:`diffusion_history`).

    Centre of a 20 mm slab at D t/L² = 0.1 with a constant surface value; Crank's sheet profile (ch. 4) at x = 0 gives
    (C − C_0)/(C_eq − C_0) = 1 − (4/π) Σ (−1)^n/(2n+1) exp(−(2n+1)²π² · 0.1/4) = 0.0507:

    >>> g = Geometry("slab", thickness_m=0.02)
    >>> round(float(centre_concentration(g, 2e-10, 0.0, 100.0, [50000.0])[0]), 2)
    5.07

    References
    ----------
    Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975, ch. 4–6.
    """
    return diffusion_history(geometry, D_m2_s, initial, equilibrium, time_s, k_m_m_s=k_m_m_s).centre


# --- time to a target -----------------------------------------------------------------------------------------
def _time_to(theta_at: Any, theta_target: float, scale_s: float) -> float:
    """First t with θ(t) = θ* for θ decreasing from 1 to 0 in t: bracket by doubling from the scale L²/D, then
    brentq in ln t."""
    lo = math.log(1e-9 * scale_s)
    hi = math.log(scale_s)
    for _ in range(80):
        if theta_at(math.exp(hi)) < theta_target:
            break
        lo, hi = hi, hi + math.log(2.0)
    else:  # pragma: no cover - θ ≤ e^{-ζ1² Fo} reaches any θ* > 0 long before 2^80 L²/D
        raise InvalidInputError("target", theta_target, "a value reached in finite time")
    if theta_at(math.exp(lo)) <= theta_target:
        return math.exp(lo)
    root = optimize.brentq(lambda s: theta_at(math.exp(s)) - theta_target, lo, hi, xtol=1e-12, rtol=1e-12)
    return math.exp(root)


def time_to_uptake(geometry: Geometry, D_m2_s: float, fraction: float, *, k_m_m_s: float = math.inf) -> float:
    """Time [s] for the uptake fraction M_t/M_∞ to reach ``fraction`` (0 < fraction < 1), by brentq on the series.

    Sheet of half-thickness 10 mm, D = 1e-10 m²/s, half uptake: the short-time form M_t/M_∞ ≈ 2 (Fo/π)^½
    (Fo = D t/L², leading term of Crank's eq. 4.24) gives Fo = π/16 = 0.1963; the exact series 0.1967:

    >>> round(time_to_uptake(Geometry("slab", thickness_m=0.02), 1e-10, 0.5) / 1e5, 3)
    1.967

    References
    ----------
    Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975, ch. 4–6.
    """
    g = _geometry(geometry)
    d = _diffusivity(D_m2_s)
    f = validate.number(
        "fraction", fraction, minimum=0.0, maximum=1.0, min_inclusive=False, max_inclusive=False
    )
    km = _k_m(k_m_m_s)

    def theta_mean(t: float) -> float:
        return 1.0 - float(uptake_fraction(g, d, [t], k_m_m_s=km)[0])

    return _time_to(theta_mean, 1.0 - f, max(a.length_m for a in g.axes) ** 2 / d)


def time_to_centre_concentration(
    geometry: Geometry,
    D_m2_s: float,
    initial: float,
    equilibrium: float,
    target: float,
    *,
    k_m_m_s: float = math.inf,
) -> float:
    """Time [s] for the centre concentration to reach ``target`` (strictly between initial and equilibrium).

    >>> g = Geometry("slab", thickness_m=0.02)
    >>> t = time_to_centre_concentration(g, 2e-10, 0.0, 100.0, 5.07)
    >>> round(t / 5e4, 2)  # the doctest of centre_concentration backwards
    1.0

    References
    ----------
    Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975, ch. 4–6.
    """
    g = _geometry(geometry)
    d = _diffusivity(D_m2_s)
    km = _k_m(k_m_m_s)
    c0 = _concentration("initial", initial)
    ceq = _concentration("equilibrium", equilibrium)
    target = validate.number("target", target, unit="(concentration)")
    theta_target = (target - ceq) / (c0 - ceq) if c0 != ceq else math.nan
    if not 0.0 < theta_target < 1.0:
        raise InvalidInputError(
            "target", target, f"strictly between initial ({c0:g}) and equilibrium ({ceq:g})"
        )

    def theta_centre(t: float) -> float:
        return float(centre_concentration(g, d, 1.0, 0.0, [t], k_m_m_s=km)[0])

    return _time_to(theta_centre, theta_target, max(a.length_m for a in g.axes) ** 2 / d)
