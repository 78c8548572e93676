"""Water boiling off inside a product past 100 °C (procplan.properties.boiling): the latent heat against IAPWS-95,
the table's plateau, and the receding evaporation front against the Neumann solution of the one-phase Stefan
problem."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq
from scipy.special import erf

from procplan.conduction.finite_volume import solve_conduction
from procplan.conduction.fv_boundary import SurfaceBoundary
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.boiling import (
    BOILING_BAND_K,
    BOILING_C,
    LATENT_VAPORISATION_J_KG,
    boiled_share,
    dry_matter_conductivity,
    with_boiling,
)
from procplan.properties.choi_okos import conductivity_choi_okos
from procplan.properties.table import PropertyTable

MEAT = {"water": 0.70, "protein": 0.25, "fat": 0.04, "ash": 0.01}


def test_latent_heat_at_the_boiling_point_against_coolprop():
    # Source: IAPWS-95 through CoolProp (saturated liquid and vapour enthalpies of water at 100 °C)
    cp = pytest.importorskip("CoolProp.CoolProp")
    t = BOILING_C + 273.15
    h_fg = cp.PropsSI("H", "T", t, "Q", 1, "Water") - cp.PropsSI("H", "T", t, "Q", 0, "Water")
    assert LATENT_VAPORISATION_J_KG == pytest.approx(h_fg, rel=1e-3)


def test_dry_matter_conducts_as_its_choi_okos_components_in_series():
    # Source: Choi & Okos (1986) component functions; conductivities in series by volume fraction
    from procplan.properties.choi_okos import density_choi_okos

    k = float(dry_matter_conductivity(MEAT, 120.0))
    x = {c: MEAT[c] / 0.30 for c in ("protein", "fat", "ash")}
    v = {c: x[c] / float(density_choi_okos(c, 120.0)) for c in x}
    total = sum(v.values())
    k_series = 1.0 / sum(v[c] / total / float(conductivity_choi_okos(c, 120.0)) for c in x)
    assert k == pytest.approx(k_series, rel=1e-12)
    # the dry crust conducts much less than the wet meat it replaces (water 0.68 W/mK at 100 °C)
    assert k < 0.5 * float(conductivity_choi_okos("water", 100.0))


def test_the_table_holds_the_water_latent_heat_at_the_boiling_point_and_nothing_below():
    wet = PropertyTable.constant(0.5, 1050.0, 3500.0)
    hot = with_boiling(wet, MEAT)
    below = np.linspace(-40.0, BOILING_C, 50)
    np.testing.assert_array_equal(hot.enthalpy(below), wet.enthalpy(below))
    top = BOILING_C + BOILING_BAND_K
    plateau = float(hot.enthalpy(top) - hot.enthalpy(BOILING_C))
    assert plateau == pytest.approx(0.70 * LATENT_VAPORISATION_J_KG + 3500.0 * BOILING_BAND_K, rel=1e-12)
    # above the band: the wet product's heat capacity (the safe side, see the module note) and the dry k
    assert float(hot.apparent_cp(top + 10.0)) == pytest.approx(3500.0)
    # (linear between the table's points, here 102 °C and 150 °C)
    k_dry = float(dry_matter_conductivity(MEAT, top + 10.0))
    assert float(hot.conductivity(top + 10.0)) == pytest.approx(k_dry, rel=1e-2)
    np.testing.assert_allclose(boiled_share([99.0, BOILING_C + 0.5 * BOILING_BAND_K, 130.0]), [0.0, 0.5, 1.0])


def test_bad_composition_names_its_field():
    wet = PropertyTable.constant(0.5, 1050.0, 3500.0)
    with pytest.raises(InvalidInputError, match="composition"):
        with_boiling(wet, {"water": 1.0})
    with pytest.raises(InvalidInputError, match="composition"):
        with_boiling(wet, {"water": 0.0})


def test_receding_evaporation_front_against_the_neumann_solution():
    """A wet slab at its boiling point whose face is held hotter: the crust grows as s = 2λ√(α t), with
    λ exp(λ²) erf(λ) = St/√π, St = c_p (T_s − T_b)/L (the one-phase Stefan problem).
    Source: Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed. (1959), ch. XI, Neumann's solution;
    Crank, Free and Moving Boundary Problems (1984), ch. 1 (chapter numbers from memory). The crust's
    conductivity varies mildly with temperature: the Kirchhoff mean over the crust's range stands in for it.
    """
    rho, cp = 1050.0, 3500.0
    hot = with_boiling(PropertyTable.constant(0.5, rho, cp), MEAT)
    t_front = BOILING_C + 0.5 * BOILING_BAND_K  # the front: the middle of the band, half the water boiled off
    t_face = 140.0
    temps = np.linspace(t_front, t_face, 201)
    k_mean = float(np.trapezoid(hot.conductivity(temps), temps) / (t_face - t_front))
    latent = 0.70 * LATENT_VAPORISATION_J_KG
    stefan = cp * (t_face - t_front) / latent
    lam = brentq(lambda x: x * math.exp(x * x) * erf(x) - stefan / math.sqrt(math.pi), 1e-6, 2.0)
    alpha = k_mean / (rho * cp)
    depths = (0.004, 0.008, 0.012)
    geom = Geometry("slab", thickness_m=0.04, faces=1)
    res = solve_conduction(
        geom,
        hot,
        BOILING_C,
        SurfaceBoundary.constant(t_face, 1e6),
        5 * 3600.0,
        n_nodes=161,
        probe_depths_m=depths,
    )
    t = np.asarray(res.time_s)
    for j, d in enumerate(depths):
        probe = np.asarray(res.probe_C[:, j])
        i = int(np.argmax(probe >= t_front))
        assert i > 0, d
        crossed = np.interp(t_front, probe[i - 1 : i + 1], t[i - 1 : i + 1])
        expected = (d / (2.0 * lam)) ** 2 / alpha
        print(
            f"front at {d * 1000:.0f} mm: {crossed:.0f} s against {expected:.0f} s ({crossed / expected - 1:+.2%})"
        )
        assert crossed == pytest.approx(expected, rel=0.02), (d, crossed, expected)
    # behind the front the wet slab never rises above the band while it holds water
    assert float(np.max(res.core_C)) <= BOILING_C + BOILING_BAND_K + 1e-6


@settings(max_examples=60, deadline=None)
@given(
    water=st.floats(0.05, 0.95),
    protein=st.floats(0.0, 1.0),
    fat=st.floats(0.0, 1.0),
    band=st.floats(0.2, 10.0),
)
def test_any_composition_gives_a_plateau_of_its_water_and_leaves_the_rest(water, protein, fat, band):
    # invariants: H strictly increasing (the table refuses anything else), the table below the boiling point
    # untouched, the plateau the water's latent heat plus the wet sensible heat over the band
    dry = protein + fat
    if dry <= 1e-6:
        protein, dry = 1.0, 1.0
    comp = {"water": water, "protein": (1 - water) * protein / dry, "fat": (1 - water) * fat / dry}
    wet = PropertyTable.constant(0.5, 1050.0, 3500.0)
    hot = with_boiling(wet, comp, band_K=band)
    assert np.all(np.diff(hot.enthalpy_J_kg) > 0)
    t = np.linspace(-40.0, BOILING_C, 17)
    np.testing.assert_array_equal(hot.enthalpy(t), wet.enthalpy(t))
    plateau = float(hot.enthalpy(BOILING_C + band) - hot.enthalpy(BOILING_C))
    assert plateau == pytest.approx(water * LATENT_VAPORISATION_J_KG + 3500.0 * band, rel=1e-9)
