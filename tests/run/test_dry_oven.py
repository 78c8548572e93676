"""Dry-air steps: the wet surface on the wet-bulb temperature, the crust after it, mass balance, coupling."""

import numpy as np
import pytest
from CoolProp.HumidAirProp import HAPropsSI

from procplan.conduction.fv_boundary import SurfaceBoundary
from procplan.geometry import Geometry
from procplan.properties.sorption import ISOTHERMS, MOISTURE_DIFFUSIVITIES, dry_basis
from procplan.properties.table import PropertyTable
from procplan.run.dry_oven import SURFACE_TOLERANCE_K, DryOvenModel, solve_dry_oven
from procplan.surface.oven_air import DryingAir


@pytest.fixture(scope="module")
def slice_in_dryer():
    # a 6 mm potato-like slice (80 % water) in air at 100 °C, dew point 40 °C, convection only (h = 15 W/m²K)
    air = DryingAir(100.0, 40.0, 15.0)
    model = DryOvenModel(
        air, ISOTHERMS["potato"], MOISTURE_DIFFUSIVITIES["potato"], dry_basis(0.8), 1050.0 * 0.2
    )
    props = PropertyTable.constant(0.5, 1050.0, 3600.0)
    g = Geometry("slab", thickness_m=0.006)
    return solve_dry_oven(g, props, 20.0, SurfaceBoundary.constant(100.0, 15.0), model, 2 * 3600.0), model


def test_wet_surface_plateau_on_coolprop_wet_bulb(slice_in_dryer):
    res, _ = slice_in_dryer
    # Source: CoolProp HAPropsSI('B') — wet-bulb temperature of air at 100 °C with a 40 °C dew point
    wb = HAPropsSI("B", "T", 373.15, "D", 313.15, "P", 101325.0) - 273.15
    assert res.wet_until_s is not None and res.wet_until_s > 3000.0
    t = np.asarray(res.heat.time_s)
    wet = (t > 900.0) & (t < res.wet_until_s - 300.0)  # after warming through, while the surface is wet
    assert wet.sum() > 20
    assert np.max(np.abs(np.asarray(res.heat.face_surface_C)[wet] - wb)) < 0.5


def test_surface_dries_into_a_crust_and_heats_towards_the_air(slice_in_dryer):
    res, model = slice_in_dryer
    t = np.asarray(res.heat.time_s)
    ts = np.asarray(res.heat.face_surface_C)
    assert ts[-1] > res.wet_bulb_C + 15.0 and ts[-1] < 100.0
    m = res.moisture
    # while the surface is below the air's dew point (40 °C) water condenses on it; after that it only dries
    above = np.interp(m.time_s, t, ts) > 40.0
    assert m.mean_kg_kg[1] > model.initial_kg_kg
    assert np.all(np.diff(m.mean_kg_kg[above]) <= 1e-9)
    assert m.surface_kg_kg.min() >= 0.0
    assert t[-1] == pytest.approx(7200.0)


def test_mass_balance_and_coupling_converged(slice_in_dryer):
    res, model = slice_in_dryer
    assert res.moisture.mass_balance_error < 0.005  # the bound: 0.5 %
    assert res.surface_change_K < SURFACE_TOLERANCE_K
    # the water lost equals the dry matter times the drop of the mean moisture (whole slab modelled)
    half = 0.003
    drop = model.dry_matter_kg_m3 * half * (model.initial_kg_kg - res.moisture.mean_kg_kg[-1])
    assert res.moisture.lost_kg_m2[-1] == pytest.approx(drop, rel=0.005)


def test_a_warm_start_settles_on_the_same_coupled_solution(slice_in_dryer):
    # Invariant (fixed point): the coupled solution does not depend on where the waveform relaxation starts.
    # Started from the converged waveform, a solve of the same step settles in fewer passes on the same
    # surface history (within the settling tolerance, twice over: each solve stops within it of the fixed
    # point) and the same loss (within the weight stop's 0.2 %).
    res, model = slice_in_dryer
    props = PropertyTable.constant(0.5, 1050.0, 3600.0)
    g = Geometry("slab", thickness_m=0.006)
    bnd = SurfaceBoundary.constant(100.0, 15.0)
    warm = solve_dry_oven(g, props, 20.0, bnd, model, 2 * 3600.0, guess=res)
    assert warm.settled and warm.passes < res.passes
    t = np.linspace(0.0, 2 * 3600.0, 301)
    drift = np.interp(t, warm.heat.time_s, warm.heat.face_surface_C) - np.interp(
        t, res.heat.time_s, res.heat.face_surface_C
    )
    assert np.max(np.abs(drift)) < 2 * SURFACE_TOLERANCE_K
    assert warm.lost_kg == pytest.approx(res.lost_kg, rel=2e-3)


def test_a_looser_settling_tolerance_stops_earlier_and_says_it_is_not_settled(slice_in_dryer):
    res, model = slice_in_dryer
    props = PropertyTable.constant(0.5, 1050.0, 3600.0)
    g = Geometry("slab", thickness_m=0.006)
    loose = solve_dry_oven(
        g, props, 20.0, SurfaceBoundary.constant(100.0, 15.0), model, 2 * 3600.0, settle_K=2.0
    )
    assert loose.surface_change_K < 2.0 and loose.passes <= res.passes
    assert loose.settled == (loose.surface_change_K < SURFACE_TOLERANCE_K)
