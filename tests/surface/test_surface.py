"""The surface_coefficient entry point: independent recomputation, radiation, packaging, bad input, invariants."""

import math

import pytest
from CoolProp.CoolProp import PropsSI
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.surface import (
    CORRELATIONS,
    PackagingLayer,
    air_gap,
    h_effective,
    h_radiation_linearised,
    surface_coefficient,
)
from procplan.surface.correlations import nusselt_mixed_convection

CYL = Geometry("cylinder", diameter_m=0.08)
SPHERE = Geometry("sphere", diameter_m=0.06)
SLAB = Geometry("slab", thickness_m=0.04, length_m=0.2, width_m=0.15)
BRICK = Geometry("brick", length_m=0.2, width_m=0.1, height_m=0.05)


def test_cylinder_in_air_recomputed_from_coolprop_directly():
    # Independent recomputation: film properties straight from CoolProp PropsSI, Churchill–Bernstein written
    # out here (Incropera 7th ed., eq. 7.54), Churchill–Chu eq. 9.34 for the free part, combined with n = 3
    # (eq. 9.64). Tolerance 0.1 %: the library rounds the film temperature to 0.01 K.
    t_inf, t_s, v, d = -2.0, 20.0, 3.0, 0.08
    T = 0.5 * (t_inf + t_s) + 273.15
    k, mu, rho, cp = (PropsSI(q, "T", T, "P", 101325, "Air") for q in "LVDC")
    nu, pr = mu / rho, cp * mu / k
    re = v * d / nu
    nu_f = (
        0.3
        + 0.62
        * re**0.5
        * pr ** (1 / 3)
        / (1 + (0.4 / pr) ** (2 / 3)) ** 0.25
        * (1 + (re / 282000) ** 0.625) ** 0.8
    )
    ra = 9.80665 * (1 / T) * (t_s - t_inf) * d**3 / (nu * k / (rho * cp))
    nu_n = (0.60 + 0.387 * ra ** (1 / 6) / (1 + (0.559 / pr) ** (9 / 16)) ** (8 / 27)) ** 2
    expected = nusselt_mixed_convection(nu_f, nu_n) * k / d
    r = surface_coefficient(
        "blast-chiller", CYL, medium_C=t_inf, surface_C=t_s, air_speed_m_s=v, emissivity=0.0
    )
    assert_allclose(r.h_conv_W_m2K, expected, rtol=1e-3)
    assert_allclose(r.re, re, rtol=1e-3)
    assert r.h_rad_W_m2K == 0.0
    assert r.correlation.startswith("cylinder-churchill-bernstein")


def test_radiation_linearisation_is_exact_for_the_fourth_power_law():
    # Source: Incropera 7th ed., eq. 1.9: h_r (T_s − T_sur) = ε σ (T_s⁴ − T_sur⁴) identically (algebra).
    eps, ts, tsur = 0.85, 40.0, 180.0
    hr = h_radiation_linearised(eps, ts, tsur)
    q = eps * 5.670374419e-8 * ((ts + 273.15) ** 4 - (tsur + 273.15) ** 4)
    assert_allclose(hr * (ts - tsur), q, rtol=1e-12)


def test_radiation_in_parallel_and_packaging_in_series():
    # Incropera 7th ed., eq. 3.19 (resistances in series): a 1 mm layer of k = 0.2 W/mK adds 0.005 m²K/W.
    bare = surface_coefficient("convection-oven", CYL, medium_C=180.0, surface_C=40.0, air_speed_m_s=3.0)
    wrapped = surface_coefficient(
        "convection-oven",
        CYL,
        medium_C=180.0,
        surface_C=40.0,
        air_speed_m_s=3.0,
        packaging=[("tray", 0.001, 0.2)],
    )
    assert bare.h_rad_W_m2K > 5.0
    assert_allclose(bare.h_eff_W_m2K, bare.h_conv_W_m2K + bare.h_rad_W_m2K, rtol=1e-12)
    assert_allclose(wrapped.packaging_resistance_m2K_W, 0.005, rtol=1e-12)
    assert_allclose(1 / wrapped.h_eff_W_m2K, 1 / (bare.h_conv_W_m2K + bare.h_rad_W_m2K) + 0.005, rtol=1e-12)


def test_air_gap_conducts_as_still_air():
    # Source: Incropera 7th ed., Table A.4 (from memory), air k ≈ 0.0263 W/mK at 300 K; a 2 mm gap at a film of
    # 27 °C adds 0.002/0.0263 = 0.076 m²K/W. Tolerance 2 % (the table-to-CoolProp difference, see test_air).
    r = surface_coefficient(
        "cold-room", CYL, medium_C=24.0, surface_C=30.0, air_speed_m_s=0.3, packaging=[air_gap(0.002)]
    )
    assert_allclose(r.packaging_resistance_m2K_W, 0.002 / 0.0263, rtol=0.02)


def test_liquid_media_have_no_radiation_and_zero_speed_is_free_convection():
    r0 = surface_coefficient("water-bath", CYL, medium_C=80.0, surface_C=70.0, liquid_speed_m_s=0.0)
    r1 = surface_coefficient("water-bath", CYL, medium_C=80.0, surface_C=70.0, liquid_speed_m_s=0.2)
    assert r0.h_rad_W_m2K == 0.0 and r0.re is None
    assert r0.correlation == "horizontal-cylinder-churchill-chu"
    assert r1.h_conv_W_m2K > r0.h_conv_W_m2K
    # Incropera Table 1.1: free convection of liquids 50–1000 W/m²K.
    assert 50.0 <= r0.h_conv_W_m2K <= 1000.0


def test_sphere_uses_whitaker_with_free_stream_properties():
    r = surface_coefficient("blast-chiller", SPHERE, medium_C=0.0, surface_C=30.0, air_speed_m_s=2.0)
    assert r.correlation.startswith("sphere-whitaker")
    # Re on free-stream (0 °C) viscosity, Whitaker's rule (Incropera §7.6).
    nu0 = PropsSI("V", "T", 273.15, "P", 101325, "Air") / PropsSI("D", "T", 273.15, "P", 101325, "Air")
    assert_allclose(r.re, 2.0 * 0.06 / nu0, rtol=1e-3)


def test_steam_condensation_in_typical_range():
    # Source: Incropera 7th ed., Table 1.1: boiling and condensation 2500–100 000 W/m²K; common practice for
    # saturated-steam cooking 5000–20 000 W/m²K (references.md).
    r = surface_coefficient("steam-oven", CYL, medium_C=100.0, surface_C=90.0)
    assert 5000.0 <= r.h_conv_W_m2K <= 20000.0 and r.h_rad_W_m2K == 0.0
    # Nusselt's h ∝ ΔT^-¼ (eq. 10.26): a 16× larger ΔT divides h by about 2 (within 15 %: property changes).
    hot = surface_coefficient("steam-oven", CYL, medium_C=100.0, surface_C=99.0).h_conv_W_m2K
    cold = surface_coefficient("steam-oven", CYL, medium_C=100.0, surface_C=84.0).h_conv_W_m2K
    assert_allclose(hot / cold, 2.0, rtol=0.15)


def test_user_entered_h_checked_against_typical_range():
    ok = surface_coefficient("blast-chiller", CYL, medium_C=0.0, surface_C=20.0, h_W_m2K=25.0)
    bad = surface_coefficient("blast-chiller", CYL, medium_C=0.0, surface_C=20.0, h_W_m2K=400.0)
    assert ok.warnings == () and ok.correlation == "user-entered" and ok.h_eff_W_m2K == 25.0
    assert any("outside the typical range 10–60" in w for w in bad.warnings)
    none = surface_coefficient(None, CYL, medium_C=0.0, surface_C=20.0, h_W_m2K=400.0)
    assert none.warnings == () and none.kind is None


def test_validity_warning_when_outside_range():
    # Whitaker's stated range is Re 3.5–7.6e4 (Incropera eq. 7.56): a 0.3 m sphere at 30 m/s is outside.
    r = surface_coefficient(
        "chill-tunnel", Geometry("sphere", diameter_m=0.3), medium_C=0.0, surface_C=10.0, air_speed_m_s=30.0
    )
    assert any("sphere whitaker correlation" in w and "Reynolds number" in w for w in r.warnings)


@pytest.mark.parametrize(
    "name", [n for n, c in CORRELATIONS.items() if c.mode == "forced" and "slab" in c.shapes]
)
def test_forced_override_through_the_registry(name):
    kw = {"medium_C": 0.0, "surface_C": 10.0, "air_speed_m_s": 4.0, "forced_correlation": name}
    if name == "flat-plate-mixed":
        # eq. 7.38 is negative far below its range (Re ≈ 6e4 here): refused, never a NaN.
        with pytest.raises(InvalidInputError) as exc:
            surface_coefficient("chill-tunnel", SLAB, **kw)
        assert exc.value.field == "forced_correlation" and "5e5 < Re_L" in str(exc.value)
        return
    r = surface_coefficient("chill-tunnel", SLAB, **kw)
    assert r.correlation.startswith(name)


# --- bad input --------------------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "kwargs, field, allowed",
    [
        ({"air_speed_m_s": -1.0}, "air_speed_m_s", "[0, 40] m/s"),
        ({"liquid_speed_m_s": -0.1}, "liquid_speed_m_s", "[0, 5] m/s"),
        ({"emissivity": 1.2}, "emissivity", "[0, 1]"),
        ({"emissivity": -0.1}, "emissivity", "[0, 1]"),
        ({"relative_humidity": 1.1}, "relative_humidity", "[0, 1]"),
        ({"h_W_m2K": -5.0}, "h_W_m2K", "(0, 100000] W/m²K"),
        ({"surface_C": float("nan")}, "surface_C", "°C"),
    ],
)
def test_bad_input_names_field_and_range(kwargs, field, allowed):
    args = {"medium_C": 0.0, "surface_C": 20.0, "air_speed_m_s": 2.0}
    args.update(kwargs)
    with pytest.raises(InvalidInputError) as exc:
        surface_coefficient("blast-chiller", CYL, **args)
    assert exc.value.field == field
    assert allowed in str(exc.value)


def test_unknown_equipment_kind():
    with pytest.raises(InvalidInputError) as exc:
        surface_coefficient("pizza-oven", CYL, medium_C=0.0, surface_C=20.0)
    assert exc.value.field == "equipment.kind" and "blast-chiller" in str(exc.value)


def test_bad_packaging_layer():
    with pytest.raises(InvalidInputError) as exc:
        surface_coefficient(
            "blast-chiller",
            CYL,
            medium_C=0.0,
            surface_C=20.0,
            air_speed_m_s=2.0,
            packaging=[("film", 0.001, -0.3)],
        )
    assert exc.value.field == "packaging.k_W_mK"


# --- invariants (hypothesis) ---------------------------------------------------------------------------------
shapes = st.sampled_from([CYL, SPHERE, SLAB, BRICK])
layer = st.tuples(st.floats(1e-5, 0.01), st.one_of(st.none(), st.floats(0.02, 50.0)))


@settings(max_examples=40, deadline=None)
@given(
    g=shapes,
    t_inf=st.floats(-30.0, 20.0),
    dt=st.floats(-10.0, 60.0),
    v=st.floats(0.0, 10.0),
    eps=st.floats(0.0, 1.0),
    layers=st.lists(layer, max_size=3),
)
def test_h_eff_never_exceeds_parallel_sum(g, t_inf, dt, v, eps, layers):
    pack = [PackagingLayer(f"l{i}", t, k) for i, (t, k) in enumerate(layers)]
    r = surface_coefficient(
        "chill-tunnel",
        g,
        medium_C=t_inf,
        surface_C=t_inf + dt,
        air_speed_m_s=v,
        emissivity=eps,
        packaging=pack,
    )
    assert math.isfinite(r.h_eff_W_m2K) and r.h_eff_W_m2K > 0
    assert r.h_eff_W_m2K <= r.h_conv_W_m2K + r.h_rad_W_m2K + 1e-12


@settings(max_examples=40, deadline=None)
@given(
    h=st.floats(1.0, 2e4),
    hr=st.floats(0.0, 20.0),
    layers=st.lists(layer, min_size=1, max_size=4),
    extra=layer,
)
def test_more_packaging_never_raises_h_eff(h, hr, layers, extra):
    g = SLAB
    base = [PackagingLayer(f"l{i}", t, k) for i, (t, k) in enumerate(layers)]
    more = [*base, PackagingLayer("extra", *extra)]
    r1 = surface_coefficient("blast-chiller", g, medium_C=0.0, surface_C=10.0, h_W_m2K=h, packaging=base)
    r2 = surface_coefficient("blast-chiller", g, medium_C=0.0, surface_C=10.0, h_W_m2K=h, packaging=more)
    assert r2.h_eff_W_m2K <= r1.h_eff_W_m2K
    assert h_effective(h, hr, r2.packaging_resistance_m2K_W) <= h_effective(
        h, hr, r1.packaging_resistance_m2K_W
    )


@settings(max_examples=30, deadline=None)
@given(
    g=shapes,
    t_inf=st.floats(-35.0, 10.0),
    dt=st.floats(1.0, 50.0),
    v=st.floats(0.0, 12.0),
    dv=st.floats(0.01, 5.0),
)
def test_h_increases_with_air_speed(g, t_inf, dt, v, dv):
    a = surface_coefficient("blast-chiller", g, medium_C=t_inf, surface_C=t_inf + dt, air_speed_m_s=v)
    b = surface_coefficient("blast-chiller", g, medium_C=t_inf, surface_C=t_inf + dt, air_speed_m_s=v + dv)
    assert b.h_conv_W_m2K > a.h_conv_W_m2K


def test_liquid_states_beyond_the_property_model_warn_not_fail():
    # A hot product dropped into cold brine: the surface (95 °C) lies beyond the brine fit (to 40 °C,
    # CoolProp MNA); the result is finite and says where it was evaluated. A medium outside its range is refused.
    r = surface_coefficient("brine-chiller", CYL, medium_C=-10.0, surface_C=95.0, liquid_speed_m_s=0.2)
    assert math.isfinite(r.h_eff_W_m2K) and any("outside the brine property range" in w for w in r.warnings)
    with pytest.raises(InvalidInputError) as exc:
        surface_coefficient("water-bath", CYL, medium_C=-3.0, surface_C=20.0, liquid_speed_m_s=0.1)
    assert exc.value.field == "medium_C" and "[0, 99] °C" in str(exc.value)


@pytest.mark.parametrize(
    "key, kind, kw",
    [
        ("air", "blast-chiller", {"medium_C": -2.0, "surface_C": 20.0, "air_speed_m_s": 3.0}),
        ("water", "water-bath", {"medium_C": 80.0, "surface_C": 40.0, "liquid_speed_m_s": 0.2}),
        ("brine", "brine-chiller", {"medium_C": -8.0, "surface_C": 10.0, "liquid_speed_m_s": 0.2}),
        ("steam", "steam-oven", {"medium_C": 100.0, "surface_C": 60.0}),
        ("user-entered", "blast-chiller", {"medium_C": -2.0, "surface_C": 20.0, "h_W_m2K": 25.0}),
    ],
)
def test_every_surface_model_is_reached_through_the_dispatcher(key, kind, kw):
    # Independent method: the registry's model called directly on the same conditions gives the same h.
    from procplan.surface.coefficient import SURFACE_MODELS
    from procplan.surface.conditions import SurfaceConditions
    from procplan.surface.ranges import EQUIPMENT_KINDS

    r = surface_coefficient(kind, CYL, **kw)
    c = SurfaceConditions(
        kind=kind,
        medium=EQUIPMENT_KINDS[kind].medium,
        geometry=CYL,
        medium_C=kw["medium_C"],
        surface_C=kw["surface_C"],
        surroundings_C=kw["medium_C"],
        emissivity=0.0 if "h_W_m2K" in kw else 0.9,
        air_speed_m_s=kw.get("air_speed_m_s"),
        liquid_speed_m_s=kw.get("liquid_speed_m_s"),
        relative_humidity=None,
        pressure_Pa=101325.0,
        nacl_mass_fraction=0.2,
        forced_correlation=None,
        natural_correlation=None,
        h_W_m2K=kw.get("h_W_m2K"),
    )
    direct = SURFACE_MODELS[key](c, [])
    assert r.medium == c.medium
    assert_allclose(r.h_conv_W_m2K, direct.h_conv_W_m2K, rtol=1e-12)
    assert_allclose(r.h_rad_W_m2K, direct.h_rad_W_m2K, rtol=1e-12)
    assert r.correlation == direct.correlation
