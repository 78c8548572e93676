"""Moisture inside a drying product: Fick's second law with an evaporating surface, on finite volumes.

Inside, ρ_dm ∂X/∂t = ∇·(ρ_dm D(X) ∇X) with X the moisture content [kg water / kg dry matter], ρ_dm the dry-matter
density [kg/m³] (no shrinkage) and D the effective moisture diffusivity [m²/s]. At the surface the water leaves
at the evaporation flux n″(t, X_s) [kg/m²s], which the caller gives (the air's drive and the surface water
activity from the sorption isotherm):  −ρ_dm D ∂X/∂n = n″(t, X_s).

It runs on the one transport core, :func:`procplan.conduction.transport.solve_diffusion` (capacity ρ_dm, no
surface coefficient, the evaporation as the surface flux): the finite-volume solver with its implicit time
stepping, its surface-flux Newton iteration and its balance check, here the mass balance (water lost through
the surface against the change of the water held).

Effective moisture diffusivities are Arrhenius in temperature (:func:`arrhenius_m2_s`); the caller evaluates D
at the temperature of the layer it models.

References
----------
Crank, J., The Mathematics of Diffusion, 2nd ed., Oxford, 1975, ch. 4 (plane sheet, surface evaporation), ch. 9
(concentration-dependent D). Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th
ed., Wiley, 2011, §14.1 (analogy). Saravacos, G.D., Maroulis, Z.B., Transport Properties of Foods, Marcel
Dekker, 2001, ch. 8 (effective moisture diffusivity of foods, Arrhenius form).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.conduction.transport import solve_diffusion
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry

#: Universal gas constant [J/(mol K)].
GAS_CONSTANT_J_MOLK = 8.314462618


def arrhenius_m2_s(temperature_C, D_ref_m2_s: float, activation_J_mol: float, reference_C: float):
    """Effective diffusivity D = D_ref exp(−E_a/R (1/T − 1/T_ref)) [m²/s].

    >>> round(float(arrhenius_m2_s(60.0, 1e-10, 30e3, 20.0)) / 1e-10, 3)  # 30 kJ/mol: ×4.38 from 20 to 60 °C
    4.383
    """
    t = np.asarray(temperature_C, dtype=float) + 273.15
    return D_ref_m2_s * np.exp(
        -activation_J_mol / GAS_CONSTANT_J_MOLK * (1.0 / t - 1.0 / (reference_C + 273.15))
    )


@dataclass(frozen=True, eq=False)
class MoistureHistory:
    """Moisture of one product (or of its surface layer) over time; contents in kg water / kg dry matter.

    Attributes
    ----------
    time_s : times [s]
    surface_kg_kg, mean_kg_kg, centre_kg_kg : moisture content at the surface, its mean and at the inner end
    lost_kg_m2 : water lost through one m² of surface since the start [kg/m²]
    mass_balance_error : |∫ surface flux dt − Δ(water held)| / |Δ(water held)|
    depth_m : depth of the modelled layer (the half-thickness or radius when it is the whole product)
    profile_depth_m, profile_kg_kg : the moisture profile at the end against depth from the surface
    """

    time_s: np.ndarray
    surface_kg_kg: np.ndarray
    mean_kg_kg: np.ndarray
    centre_kg_kg: np.ndarray
    lost_kg_m2: np.ndarray
    mass_balance_error: float
    depth_m: float
    profile_depth_m: np.ndarray
    profile_kg_kg: np.ndarray


def solve_moisture(
    geometry: Geometry,
    D_m2_s: float | Callable,
    dry_matter_kg_m3: float,
    initial_kg_kg: float,
    surface_flux_kg_m2s: Callable,
    end_time_s: float,
    *,
    output_time_s=None,
    n_nodes: int = 41,
) -> MoistureHistory:
    """Moisture diffusion with a surface evaporation flux, implicit finite volumes (see the module note).

    Parameters
    ----------
    geometry : a 1-D shape: a slab (``faces=1`` for a layer with a sealed back), an infinite cylinder or a sphere
    D_m2_s : effective diffusivity [m²/s], a number or a function of X
    dry_matter_kg_m3 : dry matter per volume of product [kg/m³]
    initial_kg_kg : uniform initial moisture content [kg/kg dry matter]
    surface_flux_kg_m2s : ``n(t_s, X_surface) -> kg/m²s`` leaving the product (vectorised over X)
    end_time_s : duration [s]
    output_time_s : times of the history [s] (None: every accepted step)
    n_nodes : nodes through the depth (packed toward the surface)

    Examples
    --------
    A slab losing water at a constant flux loses exactly flux × time (mass balance):

    >>> g = Geometry("slab", thickness_m=0.01, faces=1)
    >>> h = solve_moisture(g, 1e-9, 200.0, 3.0, lambda t, x: np.full_like(x, 1e-4), 3600.0)
    >>> round(float(h.lost_kg_m2[-1]), 4), h.mass_balance_error < 1e-3
    (0.36, True)
    """
    if len(geometry.axes) != 1:
        raise InvalidInputError(
            "geometry", geometry.shape, "a 1-D shape (slab, cylinder, sphere) for moisture"
        )
    rho_dm = validate.number("dry_matter_kg_m3", dry_matter_kg_m3, minimum=1.0, maximum=2000.0, unit="kg/m³")
    x0 = validate.number("initial_kg_kg", initial_kg_kg, minimum=0.0, maximum=19.0, unit="kg/kg dry matter")

    def into(t, xs):
        return -np.asarray(surface_flux_kg_m2s(t, np.maximum(xs, 0.0)), dtype=float)

    res = solve_diffusion(
        geometry,
        D_m2_s,
        x0,
        0.0,
        end_time_s,
        k_m_m_s=None,
        capacity=rho_dm,
        surface_flux=into,
        concentration_range=(0.0, max(x0, 1e-3)),
        output_time_s=output_time_s,
        n_nodes=n_nodes,
        surface_refinement=0.8,
    )
    axis = geometry.axes[0]
    # the amount lost per m² of exposed surface (the transport core reports per piece: per m² of face for an
    # unbounded slab, per metre of an unbounded cylinder, the whole piece of a slab with its length and width)
    per_area = 1.0 / geometry.area_m2
    x_nodes = np.asarray(res.grid.axes[0].x_m)
    return MoistureHistory(
        time_s=np.asarray(res.time_s, dtype=float),
        surface_kg_kg=np.asarray(res.surface, dtype=float),
        mean_kg_kg=np.asarray(res.mean, dtype=float),
        centre_kg_kg=np.asarray(res.centre, dtype=float),
        lost_kg_m2=-np.asarray(res.uptake, dtype=float) * per_area,
        mass_balance_error=float(res.mass_balance_error),
        depth_m=axis.length_m,
        profile_depth_m=axis.length_m - x_nodes,
        profile_kg_kg=np.asarray(res.final_field, dtype=float).ravel(),
    )


def layer_depth_m(D_m2_s: float, end_time_s: float, half_thickness_m: float) -> float:
    """Depth of the surface layer that carries the moisture change: five penetration depths 5√(D t) (the
    change beyond it is below erfc(2.5) ≈ 4e-4 of the surface change), at least 2 mm, at most the half-thickness.

    >>> round(layer_depth_m(1e-10, 1e4, 0.065) * 1000, 2)
    5.0
    """
    return float(min(half_thickness_m, max(2e-3, 5.0 * math.sqrt(D_m2_s * end_time_s))))
