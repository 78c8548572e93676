"""Exact temperature histories of products of every shape: 1-D series and Newman's product solutions.

A finite cylinder is the intersection of an infinite cylinder and an infinite slab, a brick the intersection
of three slabs; for a uniform initial temperature, a convective surface with one h and one medium temperature,
and constant properties, the dimensionless temperature is the product of the 1-D solutions (Newman 1936;
Incropera §5.8, eq. 5.64–5.66):

θ(x*, y*, z*, t) = Π_axes θ_axis(x*_axis, Fo_axis), Fo_axis = α t / L_axis², Bi_axis = h L_axis / k.

Points reported in a history:

* ``core_C``: the thermal centre, x* = 0 on every axis (the slowest point);
* ``surface_C``: the fastest point, x* = 1 on every axis: the surface of a slab, cylinder or sphere, the rim
  edge (where the side meets an end face) of a finite cylinder, the corner of a brick;
* ``mean_C``: the volume mean, the product of the axis means (exact, since the volume integral of a product of
  functions of separate coordinates over a product domain is the product of the integrals);
* ``heat_flow_W``: heat leaving the product per unit time [W], h Σ_faces A_face (T̄_face − T∞), with the face
  mean of the product solution (axis i at x* = 1 times the means of the other axes); this equals
  −m c_p dT̄/dt exactly and is positive while the product cools;
* ``heat_J``: heat given up since t = 0, m c_p (T_i − T̄) (Incropera eq. 5.44 form, Q = Q0 (1 − θ̄)).

Masses and areas are those of :class:`procplan.geometry.Geometry` (per m² of face for an unbounded slab, per
metre for an unbounded cylinder).

References
----------
Newman, A.B., "Heating and cooling rectangular and cylindrical solids", Ind. Eng. Chem. 28 (1936) 545–548.
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat and Mass Transfer, 7th ed.,
Wiley, 2011, §5.5–5.8.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from scipy import special

from procplan import validate
from procplan.conduction import series
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry

#: What the surface point is, per shape.
SURFACE_POINT: dict[str, str] = {
    "slab": "surface",
    "cylinder": "surface",
    "sphere": "surface",
    "finite-cylinder": "rim edge (side meets end face)",
    "brick": "corner",
}


@dataclass(frozen=True)
class AxisProvenance:
    """One 1-D factor of a product solution and how its series was evaluated."""

    kind: str  # "slab" | "cylinder" | "sphere"
    length_m: float  # half-thickness or radius
    bi: float  # h L / k (inf when above series.BI_RANGE)
    fo_min: float  # smallest positive Fo evaluated
    fo_max: float
    n_terms: int
    truncation_bound: float  # bound of |θ error| of this factor


@dataclass(frozen=True)
class ExactProvenance:
    """How an exact history was obtained."""

    solver: str
    axes: tuple[AxisProvenance, ...]
    truncation_bound: float  # bound of |θ error| of the product (sum of the axis bounds)
    surface_point: str
    alpha_m2_s: float
    mass_kg: float
    area_m2: float
    references: str


@dataclass(frozen=True)
class ExactHistory:
    """Exact temperature history of a product in a medium of constant temperature.

    All arrays have the shape of ``time_s``.
    """

    time_s: np.ndarray
    core_C: np.ndarray
    surface_C: np.ndarray
    mean_C: np.ndarray
    heat_flow_W: np.ndarray
    heat_J: np.ndarray
    provenance: ExactProvenance

    def to_frame(self) -> pd.DataFrame:
        """The history as a DataFrame with unit-suffixed columns."""
        return pd.DataFrame(
            {
                "time_s": self.time_s,
                "core_C": self.core_C,
                "surface_C": self.surface_C,
                "mean_C": self.mean_C,
                "heat_flow_W": self.heat_flow_W,
                "heat_J": self.heat_J,
            }
        )


# --- inputs -------------------------------------------------------------------------------------------------
def _geometry(geometry: Any) -> Geometry:
    if not isinstance(geometry, Geometry):
        raise InvalidInputError("geometry", geometry, "a procplan.geometry.Geometry")
    return geometry


def _times(time_s: Any) -> np.ndarray:
    t = validate.array("time_s", time_s, minimum=0.0, unit="s")
    if t.ndim != 1 or t.size < 1:
        raise InvalidInputError("time_s", time_s, "a non-empty 1-D list of times >= 0 s")
    if t.size > 1 and np.any(np.diff(t) < 0):
        i = int(np.argmax(np.diff(t) < 0))
        raise InvalidInputError(
            "time_s",
            time_s,
            "non-decreasing times >= 0 s",
            f"entry {i + 2} ({t[i + 1]:g} s) is before entry {i + 1} ({t[i]:g} s)",
        )
    return t


def _properties(
    k_W_mK: Any, rho_kg_m3: Any, cp_J_kgK: Any, h_W_m2K: Any
) -> tuple[float, float, float, float]:
    k = validate.positive("k_W_mK", k_W_mK, "W/mK")
    rho = validate.positive("rho_kg_m3", rho_kg_m3, "kg/m³")
    cp = validate.positive("cp_J_kgK", cp_J_kgK, "J/kgK")
    h = validate.positive("h_W_m2K", h_W_m2K, "W/m²K")
    return k, rho, cp, h


def _axis_bi(h: float, length_m: float, k: float) -> float:
    bi = h * length_m / k
    if bi > series.BI_RANGE[1]:
        return math.inf  # the surface is at the medium temperature to within 1e-8 of θ
    if bi < series.BI_RANGE[0]:
        raise InvalidInputError(
            "h_W_m2K",
            h,
            f"a Biot number h L/k >= {series.BI_RANGE[0]:g}",
            f"Bi = {bi:.3g} on {length_m * 1000:g} mm",
        )
    return bi


def _face_areas(g: Geometry) -> tuple[float, ...]:
    """Exposed area normal to each axis [m²], in the order of ``g.axes``."""
    s = g.shape
    if s in ("slab", "cylinder", "sphere"):
        return (g.area_m2,)
    if s == "finite-cylinder":
        return (math.pi * g.diameter_m * g.length_m, 2.0 * math.pi * g.diameter_m**2 / 4.0)
    ll, w, hh = g.length_m, g.width_m, g.height_m
    return (2.0 * w * hh, 2.0 * ll * hh, 2.0 * ll * w)


# --- the solution ----------------------------------------------------------------------------------------------
def exact_history(
    geometry: Geometry,
    k_W_mK: float,
    rho_kg_m3: float,
    cp_J_kgK: float,
    h_W_m2K: float,
    initial_C: float,
    medium_C: float,
    time_s: Any,
    *,
    tol: float = series.DEFAULT_TOL,
) -> ExactHistory:
    """Exact core, surface and mean temperatures and heat flow of a product cooled or heated by convection.

    T = T∞ + (T_i − T∞) Π_axes θ_axis, each θ_axis the exact eigen-series of its slab, cylinder or sphere
    (Incropera eqs. 5.39, 5.50, 5.51) and the product by Newman's method (Incropera §5.8).

    Parameters
    ----------
    geometry : the product's shape and size (its ``axes`` give the 1-D factors)
    k_W_mK : thermal conductivity [W/mK], > 0
    rho_kg_m3 : density [kg/m³], > 0
    cp_J_kgK : specific heat [J/kgK], > 0
    h_W_m2K : surface heat-transfer coefficient, the same on every face [W/m²K], > 0
    initial_C : uniform initial temperature [°C]
    medium_C : medium temperature [°C]
    time_s : times since the product entered the medium [s], 1-D, >= 0, non-decreasing
    tol : bound of the truncation error in θ of the product (split evenly over the axes)

    Returns
    -------
    ExactHistory (core at the thermal centre; surface at the fastest point, see ``SURFACE_POINT``)

    Notes
    -----
    Constant properties, h and T∞; uniform initial temperature. Every Bi from 1e-12 up is accepted (above
    1e8 the surface is taken at the medium temperature). At t = 0 the temperatures are the initial one and
    the heat flow is h A (T_i − T∞).

    Examples
    --------
    Brass plate 40 mm thick (Çengel & Ghajar Ex. 4-4: 20 °C into an oven at 500 °C, h = 120 W/m²K,
    k = 110 W/mK, α = 33.9e-6 m²/s) after 7 min: the book finds the surface at about 279 °C.

    >>> g = Geometry("slab", thickness_m=0.04)
    >>> hist = exact_history(g, 110.0, 8530.0, 380.0, 120.0, 20.0, 500.0, [0.0, 420.0])
    >>> round(float(hist.surface_C[-1]), 1)
    279.8

    References
    ----------
    Newman, A.B., Ind. Eng. Chem. 28 (1936) 545–548.
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §5.5–5.8.
    """
    g = _geometry(geometry)
    k, rho, cp, h = _properties(k_W_mK, rho_kg_m3, cp_J_kgK, h_W_m2K)
    ti = validate.number("initial_C", initial_C, minimum=-273.15, unit="°C")
    tm = validate.number("medium_C", medium_C, minimum=-273.15, unit="°C")
    t = _times(time_s)
    tol = validate.number("tol", tol, minimum=1e-14, maximum=0.1)
    alpha = k / (rho * cp)
    axes = g.axes
    histories = []
    prov = []
    for ax in axes:
        bi = _axis_bi(h, ax.length_m, k)
        fo = alpha * t / ax.length_m**2
        sh = series.series_history(ax.kind, bi, fo, tol=tol / len(axes))
        histories.append(sh)
        prov.append(
            AxisProvenance(
                kind=ax.kind,
                length_m=ax.length_m,
                bi=bi,
                fo_min=sh.info.fo_min,
                fo_max=float(fo[-1]),
                n_terms=sh.info.n_terms,
                truncation_bound=sh.info.truncation_bound,
            )
        )
    core = np.prod([s.theta_center for s in histories], axis=0)
    surf = np.prod([s.theta_surface for s in histories], axis=0)
    means = np.array([s.theta_mean for s in histories])
    mean = np.prod(means, axis=0)
    # Face means: axis i at its surface times the means of the other axes.
    face_theta = np.zeros_like(t)
    for i, (s, area) in enumerate(zip(histories, _face_areas(g), strict=True)):
        others = np.prod(np.delete(means, i, axis=0), axis=0) if len(axes) > 1 else 1.0
        face_theta = face_theta + area * s.theta_surface * others
    d0 = ti - tm
    mass = rho * g.volume_m3
    provenance = ExactProvenance(
        solver="exact eigen-series" + (" (Newman product)" if len(axes) > 1 else ""),
        axes=tuple(prov),
        truncation_bound=float(sum(p.truncation_bound for p in prov)),
        surface_point=SURFACE_POINT[g.shape],
        alpha_m2_s=alpha,
        mass_kg=mass,
        area_m2=g.area_m2,
        references="Incropera et al., Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 5.39-5.51, §5.8; Newman (1936)",
    )
    return ExactHistory(
        time_s=t,
        core_C=tm + d0 * core,
        surface_C=tm + d0 * surf,
        mean_C=tm + d0 * mean,
        heat_flow_W=h * d0 * face_theta,
        heat_J=mass * cp * d0 * (1.0 - mean),
        provenance=provenance,
    )


def _position(g: Geometry, position: Any) -> tuple[float, ...]:
    n = len(g.axes)
    pos = (
        np.atleast_1d(np.asarray(position, dtype=float))
        if not isinstance(position, list | tuple)
        else position
    )
    names = {"slab": "x*", "cylinder": "r*", "sphere": "r*"}
    if len(pos) != n:
        labels = ", ".join(names[a.kind] for a in g.axes)
        raise InvalidInputError(
            "position", position, f"{n} dimensionless coordinate(s) ({labels}) in [0, 1] for a {g.shape}"
        )
    return tuple(validate.number(f"position[{i}]", p, minimum=0.0, maximum=1.0) for i, p in enumerate(pos))


def exact_theta_at(
    geometry: Geometry,
    k_W_mK: float,
    rho_kg_m3: float,
    cp_J_kgK: float,
    h_W_m2K: float,
    time_s: Any,
    position: Any,
    *,
    tol: float = series.DEFAULT_TOL,
) -> np.ndarray:
    """Exact θ = (T − T∞)/(T_i − T∞) at one interior point over a time array.

    θ = Π_axes θ_axis(position_axis, α t / L_axis²)

    Parameters
    ----------
    geometry, k_W_mK, rho_kg_m3, cp_J_kgK, h_W_m2K, time_s : as in :func:`exact_history`
    position : one dimensionless coordinate per axis of ``geometry.axes``, each in [0, 1], 0 at the centre
        and 1 at the surface: (x*,) for a slab, (r*,) for a cylinder or sphere, (r*, z*) for a finite
        cylinder, (x*, y*, z*) along (length, width, height) for a brick

    Returns
    -------
    ndarray of θ, shape of ``time_s``

    Examples
    --------
    >>> g = Geometry("brick", length_m=0.1, width_m=0.1, height_m=0.1)
    >>> th = exact_theta_at(g, 0.5, 1000.0, 4000.0, 20.0, [0.0, 3600.0], (0.0, 0.0, 0.0))
    >>> float(th[0]), round(float(th[1]), 3)
    (1.0, 0.817)

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §5.8.
    """
    g = _geometry(geometry)
    k, rho, cp, h = _properties(k_W_mK, rho_kg_m3, cp_J_kgK, h_W_m2K)
    t = _times(time_s)
    pos = _position(g, position)
    alpha = k / (rho * cp)
    out = np.ones_like(t)
    for ax, x in zip(g.axes, pos, strict=True):
        bi = _axis_bi(h, ax.length_m, k)
        out = out * series.theta(ax.kind, bi, x, alpha * t / ax.length_m**2, tol=tol / len(g.axes))
    return out


def exact_temperature_at_C(
    geometry: Geometry,
    k_W_mK: float,
    rho_kg_m3: float,
    cp_J_kgK: float,
    h_W_m2K: float,
    initial_C: float,
    medium_C: float,
    time_s: Any,
    position: Any,
    *,
    tol: float = series.DEFAULT_TOL,
) -> np.ndarray:
    """Exact temperature [°C] at one interior point over a time array: T∞ + (T_i − T∞) θ (see :func:`exact_theta_at`).

    >>> g = Geometry("sphere", diameter_m=0.05)
    >>> float(exact_temperature_at_C(g, 0.5, 1000.0, 4000.0, 20.0, 70.0, 2.0, [0.0], (0.5,))[0])
    70.0
    """
    ti = validate.number("initial_C", initial_C, minimum=-273.15, unit="°C")
    tm = validate.number("medium_C", medium_C, minimum=-273.15, unit="°C")
    return tm + (ti - tm) * exact_theta_at(
        geometry, k_W_mK, rho_kg_m3, cp_J_kgK, h_W_m2K, time_s, position, tol=tol
    )


# --- many samples at once: the centre series, vectorised over samples ---------------------------------------
#: Terms of each 1-D series of :class:`CentreSeries`; with Fo ≥ FO_FLOOR the truncation is below 1e-8 in θ.
CENTRE_TERMS = 20
#: Below this Fo the centre of a slab, cylinder or sphere has not felt the surface (θ_c = 1 within 1e-10).
FO_FLOOR = 0.005


def eigen_vectorised(kind: str, bi: np.ndarray, n_terms: int = CENTRE_TERMS) -> tuple[np.ndarray, np.ndarray]:
    """Eigenvalues ζ_n and coefficients C_n of a slab, cylinder or sphere for many Biot numbers at once.

    Same eigen-conditions and brackets as :func:`procplan.conduction.series.eigenvalues` (Incropera eqs.
    5.39c, 5.50c, 5.51c; coefficients 5.39b, 5.50b, 5.51b), by bisection vectorised over samples and terms.

    Returns arrays of shape (len(bi), n_terms).

    >>> z, c = eigen_vectorised("slab", np.array([1.0, 10.0]), 1)
    >>> np.round(z[:, 0], 4).tolist(), np.round(c[:, 0], 4).tolist()
    ([0.8603, 1.4289], [1.1191, 1.262])
    """
    b = np.asarray(bi, dtype=float)[:, None]
    lo0, hi0 = series.eigen_brackets(kind, n_terms)
    lo = np.broadcast_to(lo0, (b.shape[0], n_terms)).copy()
    hi = np.broadcast_to(hi0, (b.shape[0], n_terms)).copy()
    s_lo = np.where(np.arange(1, n_terms + 1) % 2 == 0, 1.0, -1.0)
    for _ in range(14):  # bisection to a bracket of width ≤ π/2^14, where Newton converges
        mid = 0.5 * (lo + hi)
        same = np.sign(series.eigen_function(kind, mid, b)) == s_lo
        lo = np.where(same, mid, lo)
        hi = np.where(same, hi, mid)
    z = 0.5 * (lo + hi)
    for _ in range(4):  # safeguarded Newton on the singularity-free eigen-function
        f, df = _eigen_function_and_slope(kind, z, b)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = np.where(df != 0, f / df, 0.0)
        z_new = z - step
        eps = 1e-12 * hi
        z = np.where((z_new >= lo - eps) & (z_new <= hi + eps), z_new, z)
    big = b[:, 0] > series.BI_RANGE[1]
    if np.any(big):
        z[big] = hi0  # Bi → ∞: the bracket's upper end is the limit
    return z, series.coefficients_for_eigenvalues(kind, z)


def _eigen_function_and_slope(kind: str, z: np.ndarray, bi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The eigen-functions of :mod:`procplan.conduction.series` and their derivatives in ζ."""
    if kind == "slab":  # f = ζ sin ζ − Bi cos ζ
        s, c = np.sin(z), np.cos(z)
        return z * s - bi * c, s + z * c + bi * s
    if kind == "cylinder":  # f = ζ J1 − Bi J0, (ζ J1)' = ζ J0, J0' = −J1
        j0, j1 = special.j0(z), special.j1(z)
        return z * j1 - bi * j0, z * j0 + bi * j1
    # sphere: f = (1 − Bi) sin ζ/ζ − cos ζ
    s, c = np.sin(z), np.cos(z)
    return (1.0 - bi) * s / z - c, (1.0 - bi) * (z * c - s) / z**2 + s


@dataclass(frozen=True)
class CentreSeries:
    """The centre (core) temperature of many samples of one product at once: for each sample the product of
    its 1-D eigen-series, θ_c(t) = Π_axes Σ_n C_n exp(−ζ_n² α t/L²) (Incropera eqs. 5.40, 5.52b, 5.53b;
    Newman's product, eq. 5.64–5.66), with :data:`CENTRE_TERMS` terms per axis and θ_c = 1 on an axis
    while its Fo < :data:`FO_FLOOR`.

    Attributes
    ----------
    axes : per axis (ζ_n (S, N), C_n (S, N), α/L² (S,) [1/s]) for S samples and N terms
    start_C : uniform start temperature of every sample (S,) [°C]
    medium_C : the medium temperature [°C]

    Built by :func:`centre_series`.
    """

    axes: list
    start_C: np.ndarray
    medium_C: float

    def theta_core(self, t: np.ndarray) -> np.ndarray:
        """Centre θ for every sample at times t (shape (S,) or (S, M))."""
        out = np.ones_like(t)
        extra = (1,) * (t.ndim - 1)
        for z, c, rate in self.axes:
            fo = rate.reshape(rate.shape + extra) * t
            zz = z.reshape(z.shape[:1] + extra + z.shape[1:])
            cc = c.reshape(c.shape[:1] + extra + c.shape[1:])
            series_sum = np.sum(cc * np.exp(-(zz**2) * fo[..., None]), axis=-1)
            out = out * np.where(fo < FO_FLOOR, 1.0, series_sum)
        return out

    def core_C(self, t: np.ndarray) -> np.ndarray:
        """Centre temperature [°C] for every sample at times t [s] (shape (S,) or (S, M))."""
        d = (self.start_C - self.medium_C).reshape(self.start_C.shape + (1,) * (t.ndim - 1))
        return self.medium_C + d * self.theta_core(t)

    def time_to(self, target_C, t_max_s: float) -> np.ndarray:
        """First time the core reaches target_C [s] per sample (NaN when not within t_max_s)."""
        target = np.broadcast_to(np.asarray(target_C, dtype=float), self.start_C.shape)
        theta_star = (target - self.medium_C) / (self.start_C - self.medium_C)
        out = np.full(self.start_C.shape, np.nan)
        at_start = theta_star >= 1.0
        out[at_start] = 0.0
        ok = (~at_start) & (theta_star > 0.0)
        if not np.any(ok):
            return out
        rate_max = np.max(np.stack([r for _, _, r in self.axes]), axis=0)
        t_lo = np.full(self.start_C.shape, FO_FLOOR) / rate_max
        reach = ok & (self.theta_core(np.full(self.start_C.shape, float(t_max_s))) <= theta_star)
        lo, hi = np.log(t_lo), np.full(self.start_C.shape, math.log(t_max_s))
        lo = np.minimum(lo, hi)
        for _ in range(10):  # bisection in ln t
            mid = 0.5 * (lo + hi)
            above = self.theta_core(np.exp(mid)) > theta_star
            lo = np.where(above, mid, lo)
            hi = np.where(above, hi, mid)
        # Safeguarded Newton on ln θ(t) − ln θ*, nearly linear in t once the first term dominates.
        t = np.exp(0.5 * (lo + hi))
        ln_star = np.log(np.where(ok, theta_star, 0.5))
        for _ in range(8):
            th, dlnth = self._theta_and_log_slope(t)
            g = np.log(np.maximum(th, 1e-300)) - ln_star
            with np.errstate(divide="ignore", invalid="ignore"):
                t_new = t - np.where(dlnth < 0, g / dlnth, 0.0)
            inside = (t_new >= np.exp(lo) * (1 - 1e-12)) & (t_new <= np.exp(hi) * (1 + 1e-12))
            lo = np.where(g > 0, np.log(t), lo)
            hi = np.where(g <= 0, np.log(t), hi)
            t = np.where(inside, t_new, np.exp(0.5 * (lo + hi)))
        out[reach] = t[reach]
        return out

    def _theta_and_log_slope(self, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """θ_c(t) and d ln θ_c/dt for t of shape (S,)."""
        th = np.ones_like(t)
        slope = np.zeros_like(t)
        for z, c, rate in self.axes:
            fo = rate * t
            e = c * np.exp(-(z**2) * fo[:, None])
            s0 = np.sum(e, axis=1)
            s1 = -rate * np.sum(z**2 * e, axis=1)
            floor = fo < FO_FLOOR
            th = th * np.where(floor, 1.0, s0)
            slope = slope + np.where(floor, 0.0, s1 / np.where(s0 > 0, s0, 1.0))
        return th, slope


def centre_series(
    geometry: Any,
    k_W_mK,
    rho_kg_m3: float,
    cp_J_kgK,
    h_W_m2K,
    start_C,
    medium_C: float,
    size_factor=1.0,
) -> CentreSeries:
    """The :class:`CentreSeries` of many samples of one shape, each with its own k, cp, h, start temperature
    and a factor on every dimension (arrays of one length S, or scalars shared by every sample).

    For one sample it agrees with :func:`exact_history`'s ``core_C`` (tested in tests/conduction).

    >>> g = Geometry("slab", thickness_m=0.04)
    >>> cs = centre_series(g, 0.5, 1000.0, 4000.0, np.array([10.0, 20.0]), np.array([60.0, 60.0]), 0.0)
    >>> bool(cs.time_to(30.0, 36000.0)[0] > cs.time_to(30.0, 36000.0)[1])
    True
    """
    g = _geometry(geometry)
    start = np.atleast_1d(np.asarray(start_C, dtype=float))
    arrays = [np.asarray(x, dtype=float) for x in (k_W_mK, cp_J_kgK, h_W_m2K, size_factor)]
    n = max([start.size] + [x.size for x in arrays])
    start = np.broadcast_to(start, (n,)).astype(float)
    k, cp, h, size = (np.broadcast_to(x, (n,)).astype(float) for x in arrays)
    alpha = k / (rho_kg_m3 * cp)
    axes = []
    for ax in g.axes:
        length = ax.length_m * size
        z, c = eigen_vectorised(ax.kind, h * length / k)
        axes.append((z, c, alpha / length**2))
    return CentreSeries(axes, start, float(medium_C))
