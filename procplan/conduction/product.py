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
