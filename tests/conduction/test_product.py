"""Exact histories of products (1-D series and Newman's product solutions): textbook answers, independent
methods (heat equation and surface condition by finite differences, volume quadrature, energy balance,
limiting shapes), invariants, bad input and speed."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import integrate

from procplan.conduction import series
from procplan.conduction.product import SURFACE_POINT, exact_history, exact_temperature_at_C, exact_theta_at
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry, geometry_from_mm
from procplan.units import f_to_c

# A chilled meat-like product (common practice order of magnitude, not a check value).
K, RHO, CP = 0.48, 1070.0, 3500.0
ALPHA = K / (RHO * CP)


# --- textbook answers -------------------------------------------------------------------------------------------
def test_cengel_example_4_4_brass_plate_in_oven():
    # Source: Çengel & Ghajar, Heat and Mass Transfer, ch. 4, Example 4-4 (inputs from memory; the answer,
    # a surface at about 279 °C, is also in the project's reference notes): plate 4 cm thick, 20 °C, oven
    # 500 °C, h = 120 W/m²K, k = 110 W/mK, rho = 8530 kg/m³, cp = 380 J/kgK (α = 33.9e-6 m²/s), 7 min.
    # Tolerance ±1 °C: the book's one-term solution with interpolated table constants, rounded to 1 °C.
    h = exact_history(
        Geometry("slab", thickness_m=0.04), 110.0, 8530.0, 380.0, 120.0, 20.0, 500.0, [0.0, 420.0]
    )
    assert_allclose(h.surface_C[-1], 279.0, atol=1.0)


def test_cengel_problem_4_36_brass_plate():
    # Source: Çengel & Ghajar, Heat and Mass Transfer, ch. 4, problem 4-36, published solution (as reproduced
    # on a public course-notes page): plate 3 cm thick, 25 °C, furnace 700 °C, h = 80 W/m²K, k = 110 W/mK,
    # α = 33.9e-6 m²/s, 10 min: Bi = 0.0109, λ1 = 0.1039, A1 = 1.0018, Fo = 90.4, surface 445 °C.
    # rho cp = k/α: rho = 8530, cp = 380 gives α = 33.94e-6.
    # Tolerance: the book interpolates λ1 linearly in its table between Bi = 0.01 and 0.02, where λ1 ∝ √Bi is
    # curved: 0.1039 against the root 0.1043 of λ tan λ = 0.0109; at Fo = 90 that shifts θ by 0.7 %, 3.5 °C.
    # So λ1 within 5e-4, A1 within 1e-4 (the book's 4 digits), and the surface within 4 °C.
    h = exact_history(
        Geometry("slab", thickness_m=0.03), 110.0, 8530.0, 380.0, 80.0, 25.0, 700.0, [0.0, 600.0]
    )
    bi = h.provenance.axes[0].bi
    assert_allclose(bi, 0.0109, atol=5e-5)
    assert_allclose(h.provenance.axes[0].fo_max, 90.4, atol=0.1)  # book rounds α to 33.9e-6
    assert_allclose(series.eigenvalues("slab", bi)[0], 0.1039, atol=5e-4)
    assert_allclose(series.coefficients("slab", bi)[0], 1.0018, atol=1e-4)
    assert_allclose(h.surface_C[-1], 445.0, atol=4.0)


# --- independent methods --------------------------------------------------------------------------------------------
def _fd_residual(g, pos, t, d=1e-3, dt_rel=1e-3):
    """Heat-equation residual of the product solution at one point by central differences (tol 1e-13)."""
    args = (g, K, RHO, CP, 30.0)

    def th(p, tt):
        return float(exact_theta_at(*args, [tt], p, tol=1e-13)[0])

    dt = dt_rel * t
    dth_dt = (th(pos, t + dt) - th(pos, t - dt)) / (2 * dt)
    lap = 0.0
    for i, ax in enumerate(g.axes):
        p_plus, p_minus = list(pos), list(pos)
        p_plus[i] += d
        p_minus[i] -= d
        second = (th(p_plus, t) - 2 * th(pos, t) + th(p_minus, t)) / (d * ax.length_m) ** 2
        lap += second
        if ax.kind == "cylinder":
            lap += (th(p_plus, t) - th(p_minus, t)) / (2 * d * ax.length_m) / (pos[i] * ax.length_m)
    return dth_dt, ALPHA * lap


@pytest.mark.parametrize(
    "g,pos",
    [
        (Geometry("finite-cylinder", diameter_m=0.08, length_m=0.12), (0.4, 0.7)),
        (Geometry("brick", length_m=0.2, width_m=0.1, height_m=0.06), (0.3, 0.5, 0.8)),
        (Geometry("sphere", diameter_m=0.07), (0.6,)),
    ],
)
def test_product_solution_satisfies_the_heat_equation(g, pos):
    # Independent method: the product solution must satisfy ∂T/∂t = α ∇²T (Incropera eq. 2.21 / 2.24 for
    # cylindrical coordinates). Central differences (step 1e-3 of each axis) with the series at 1e-13;
    # discretisation error ~1e-6 relative, so rtol 1e-4.
    if g.shape == "sphere":  # ∇² in spherical coordinates: θ'' + (2/r) θ'
        d = 1e-3
        R = g.axes[0].length_m

        def th(r, tt):
            return float(exact_theta_at(g, K, RHO, CP, 30.0, [tt], (r,), tol=1e-13)[0])

        t = 900.0
        dth_dt = (th(pos[0], t * 1.001) - th(pos[0], t * 0.999)) / (0.002 * t)
        r = pos[0]
        lap = (th(r + d, t) - 2 * th(r, t) + th(r - d, t)) / (d * R) ** 2 + 2 / (r * R) * (
            th(r + d, t) - th(r - d, t)
        ) / (2 * d * R)
        assert_allclose(dth_dt, ALPHA * lap, rtol=1e-4)
        return
    lhs, rhs = _fd_residual(g, pos, 1800.0)
    assert lhs < 0
    assert_allclose(lhs, rhs, rtol=1e-4)


@pytest.mark.parametrize(
    "g",
    [
        Geometry("finite-cylinder", diameter_m=0.08, length_m=0.12),
        Geometry("brick", length_m=0.2, width_m=0.1, height_m=0.06),
    ],
)
def test_product_solution_satisfies_the_convective_surface_condition(g):
    # Independent check of the boundary condition −k ∂T/∂n = h (T − T∞) on every face, at an off-centre point
    # of the face: one-sided second-order difference of θ (step 1e-4), rtol 1e-5.
    h = 30.0
    d = 1e-4
    t = 1200.0
    for i, ax in enumerate(g.axes):
        base = [0.3] * len(g.axes)

        def th(x, i=i, base=base):
            p = list(base)
            p[i] = x
            return float(exact_theta_at(g, K, RHO, CP, h, [t], p, tol=1e-13)[0])

        dth = (3 * th(1.0) - 4 * th(1.0 - d) + th(1.0 - 2 * d)) / (2 * d * ax.length_m)
        assert_allclose(-K * dth, h * th(1.0), rtol=1e-5)


def test_mean_equals_volume_integral_finite_cylinder():
    # Independent method: scipy.integrate.dblquad of θ(r*, z*) 2 r* over [0, 1]² against the product of the
    # axis means; tolerance 1e-7 (quadrature 1e-9, truncation 1e-8).
    g = Geometry("finite-cylinder", diameter_m=0.06, length_m=0.09)
    t = 1500.0
    hist = exact_history(g, K, RHO, CP, 45.0, 1.0, 0.0, [t])
    val, err = integrate.dblquad(
        lambda z, r: 2 * r * float(exact_theta_at(g, K, RHO, CP, 45.0, [t], (r, z))[0]),
        0,
        1,
        0,
        1,
        epsabs=1e-10,
    )
    assert_allclose(hist.mean_C[0], val, rtol=0, atol=1e-7)


def test_mean_equals_volume_integral_brick():
    # Independent method: 3-D Gauss–Legendre quadrature (12 points per axis; θ is smooth at t > 0) of θ(x*,y*,z*)
    # over the brick, against the product of the axis means; tolerance 1e-7.
    g = Geometry("brick", length_m=0.15, width_m=0.1, height_m=0.05)
    t = 2400.0
    hist = exact_history(g, K, RHO, CP, 25.0, 1.0, 0.0, [t])
    x, w = np.polynomial.legendre.leggauss(12)
    x, w = (x + 1) / 2, w / 2
    total = 0.0
    for xi, wi in zip(x, w, strict=True):
        for yj, wj in zip(x, w, strict=True):
            col = np.array([float(exact_theta_at(g, K, RHO, CP, 25.0, [t], (xi, yj, zk))[0]) for zk in x])
            total += wi * wj * float(col @ w)
    assert_allclose(hist.mean_C[0], total, rtol=0, atol=1e-7)


@pytest.mark.parametrize(
    "g",
    [
        Geometry("finite-cylinder", diameter_m=0.05, length_m=0.08),
        Geometry("brick", length_m=0.12, width_m=0.08, height_m=0.04),
        Geometry("sphere", diameter_m=0.06),
    ],
)
def test_energy_balance_surface_flow_against_stored_heat(g):
    # Independent method: the heat flow is computed from the surface (h Σ A (T_face − T∞)), the heat from the
    # volume mean (m cp (Ti − T̄)); ∫ flow dt by scipy.integrate.quad must equal the heat (rtol 1e-6), and the
    # flow must equal −m cp dT̄/dt by central differences of the mean (rtol 1e-5).
    args = (g, K, RHO, CP, 35.0, 70.0, 2.0)

    def flow(t):
        return float(exact_history(*args, [t]).heat_flow_W[0])

    t_end = 3600.0
    q, _ = integrate.quad(flow, 0.0, t_end, limit=200, epsrel=1e-10)
    hist = exact_history(*args, [0.0, t_end])
    assert_allclose(hist.heat_J[-1], q, rtol=1e-6)
    m = RHO * g.volume_m3
    t = np.array([1799.0, 1800.0, 1801.0])
    hh = exact_history(*args, t, tol=1e-13)
    assert_allclose(hh.heat_flow_W[1], -m * CP * (hh.mean_C[2] - hh.mean_C[0]) / 2.0, rtol=1e-5)
    # at t = 0 the surface is at the initial temperature: flow = h A (Ti − T∞)
    assert_allclose(hist.heat_flow_W[0], 35.0 * g.area_m2 * 68.0, rtol=1e-12)


def test_brick_with_two_very_long_sides_is_a_slab():
    # Independent method (limiting shape): a 3 m × 3 m × 40 mm brick, at its centre and at the centre of its
    # large face, against the 40 mm slab (a separate 1-D solution). The long axes have Fo <= 5e-4 and the
    # points are 1.5 m from their faces, where θ differs from 1 by erfc(1/(2√Fo)) < 1e-100; tolerance 1e-8·ΔT.
    brick = Geometry("brick", length_m=3.0, width_m=3.0, height_m=0.04)
    slab = Geometry("slab", thickness_m=0.04)
    t = np.linspace(0.0, 7200.0, 50)
    hb = exact_history(brick, K, RHO, CP, 20.0, 60.0, 0.0, t)
    hs = exact_history(slab, K, RHO, CP, 20.0, 60.0, 0.0, t)
    assert_allclose(hb.core_C, hs.core_C, rtol=0, atol=60 * 2e-8)
    face = exact_temperature_at_C(brick, K, RHO, CP, 20.0, 60.0, 0.0, t, (0.0, 0.0, 1.0))
    assert_allclose(face, hs.surface_C, rtol=0, atol=60 * 2e-8)


def test_long_finite_cylinder_is_an_infinite_cylinder():
    # Independent method (limiting shape): an 80 mm × 3 m finite cylinder at its centre and at the middle of
    # its side against the infinite cylinder; tolerance as above.
    fc = Geometry("finite-cylinder", diameter_m=0.08, length_m=3.0)
    cyl = Geometry("cylinder", diameter_m=0.08)
    t = np.linspace(0.0, 7200.0, 50)
    hf = exact_history(fc, K, RHO, CP, 20.0, 60.0, 0.0, t)
    hc = exact_history(cyl, K, RHO, CP, 20.0, 60.0, 0.0, t)
    assert_allclose(hf.core_C, hc.core_C, rtol=0, atol=60 * 2e-8)
    side = exact_temperature_at_C(fc, K, RHO, CP, 20.0, 60.0, 0.0, t, (1.0, 0.0))
    assert_allclose(side, hc.surface_C, rtol=0, atol=60 * 2e-8)


def test_one_face_slab_is_half_of_a_two_face_slab():
    # Symmetry: a slab of thickness L with one face insulated behaves like half of a 2L slab exposed on both
    # faces (Incropera §5.5, the adiabatic mid-plane). Heat flow per m² of product halves with the area.
    t = np.linspace(0.0, 5000.0, 30)
    one = exact_history(geometry_from_mm("slab", thickness_mm=30, faces=1), K, RHO, CP, 15.0, 70.0, 3.0, t)
    two = exact_history(geometry_from_mm("slab", thickness_mm=60), K, RHO, CP, 15.0, 70.0, 3.0, t)
    assert_allclose(one.core_C, two.core_C, rtol=1e-13)
    assert_allclose(one.surface_C, two.surface_C, rtol=1e-13)
    assert_allclose(2 * one.heat_flow_W, two.heat_flow_W, rtol=1e-13)


# --- invariants -------------------------------------------------------------------------------------------------------
SHAPES = st.sampled_from(
    [
        lambda s: geometry_from_mm("slab", thickness_mm=40 * s),
        lambda s: geometry_from_mm("cylinder", diameter_mm=50 * s),
        lambda s: geometry_from_mm("sphere", diameter_mm=60 * s),
        lambda s: geometry_from_mm("finite-cylinder", diameter_mm=85 * s, length_mm=240 * s),
        lambda s: geometry_from_mm("brick", length_mm=200 * s, width_mm=120 * s, height_mm=50 * s),
    ]
)


@settings(max_examples=30, deadline=None)
@given(
    shape=SHAPES,
    size=st.floats(0.2, 3.0),
    h=st.floats(0.5, 5000.0),
    ti=st.floats(-20.0, 120.0),
    tm=st.floats(-40.0, 130.0),
    times=st.lists(st.floats(0.0, 4e4), min_size=2, max_size=12),
)
def test_invariants(shape, size, h, ti, tm, times):
    g = shape(size)
    t = np.sort(np.array(times))
    hist = exact_history(g, K, RHO, CP, h, ti, tm, t)
    d = ti - tm
    slack = 2 * hist.provenance.truncation_bound * abs(d) + 1e-9 * (1 + abs(tm) + abs(ti))
    lo, hi = min(ti, tm), max(ti, tm)
    for arr in (hist.core_C, hist.surface_C, hist.mean_C):
        assert np.all((arr >= lo - slack) & (arr <= hi + slack))  # 0 <= θ <= 1
        assert np.all(np.diff(np.abs(arr - tm)) <= slack)  # θ decreasing in time
    if d != 0:
        th_core, th_mean, th_surf = ((a - tm) / d for a in (hist.core_C, hist.mean_C, hist.surface_C))
        s = slack / abs(d)
        assert np.all(th_core >= th_mean - s) and np.all(th_mean >= th_surf - s)
    assert np.all(np.sign(hist.heat_flow_W) * np.sign(d) >= 0)
    # The series part meets DEFAULT_TOL (checked in test_series); points below Fo = 1e-7 come from the
    # semi-infinite solid, whose neglected curvature is estimated below 1e-5 in θ for Bi <= 100, growing in
    # proportion to Bi beyond (series.py notes: 1 − θ_s <= 2 Bi √(Fo/π)).
    bi_max = max(ax.bi for ax in hist.provenance.axes)
    assert hist.provenance.truncation_bound <= 1e-5 * max(1.0, bi_max / 100.0)


@settings(max_examples=20, deadline=None)
@given(
    shape=SHAPES,
    size=st.floats(0.3, 2.0),
    h=st.floats(1.0, 500.0),
    t_h=st.floats(0.01, 6.0),
    scale=st.floats(0.5, 4.0),
)
def test_results_do_not_depend_on_units_or_scale(shape, size, h, t_h, scale):
    g = shape(size)
    # times given in hours and minutes, temperatures in °F, converted at the edge: same history
    ref = exact_history(g, K, RHO, CP, h, 72.0, 1.0, [0.0, t_h * 3600.0])
    in_min = exact_history(g, K, RHO, CP, h, f_to_c(161.6), f_to_c(33.8), [0.0, (t_h * 60.0) * 60.0])
    assert_allclose(in_min.core_C, ref.core_C, rtol=1e-12, atol=1e-10)
    assert_allclose(in_min.mean_C, ref.mean_C, rtol=1e-12, atol=1e-10)
    # similarity: lengths × s, h / s, times × s² keep Bi and Fo, so θ is unchanged
    dims = {
        k: getattr(g, k) * scale
        for k in ("thickness_m", "diameter_m", "length_m", "width_m", "height_m")
        if getattr(g, k) is not None
    }
    g2 = Geometry(g.shape, faces=g.faces, **dims)
    big = exact_history(g2, K, RHO, CP, h / scale, 72.0, 1.0, [0.0, t_h * 3600.0 * scale**2])
    assert_allclose(big.core_C, ref.core_C, rtol=1e-9, atol=1e-9)
    assert_allclose(big.surface_C, ref.surface_C, rtol=1e-9, atol=1e-9)


# --- interface ---------------------------------------------------------------------------------------------------------
def test_history_fields_frame_and_provenance():
    g = geometry_from_mm("finite-cylinder", diameter_mm=85, length_mm=240)
    t = np.linspace(0.0, 4 * 3600.0, 200)
    hist = exact_history(g, K, RHO, CP, 22.0, 74.0, -4.0, t)
    df = hist.to_frame()
    assert list(df.columns) == ["time_s", "core_C", "surface_C", "mean_C", "heat_flow_W", "heat_J"]
    assert len(df) == 200 and not df.isna().any().any()
    p = hist.provenance
    assert [a.kind for a in p.axes] == ["cylinder", "slab"]
    assert_allclose([a.bi for a in p.axes], [22.0 * 0.0425 / K, 22.0 * 0.12 / K], rtol=1e-12)
    assert all(a.n_terms >= 1 for a in p.axes) and p.surface_point == SURFACE_POINT["finite-cylinder"]
    assert hist.core_C[0] == 74.0 and hist.surface_C[0] == 74.0 and hist.mean_C[0] == 74.0
    # core equals the product solution at the origin, the surface point the rim edge
    assert_allclose(
        hist.core_C, exact_temperature_at_C(g, K, RHO, CP, 22.0, 74.0, -4.0, t, (0.0, 0.0)), atol=1e-12
    )
    assert_allclose(
        hist.surface_C, exact_temperature_at_C(g, K, RHO, CP, 22.0, 74.0, -4.0, t, (1.0, 1.0)), atol=1e-12
    )


def test_repeated_times_are_accepted():
    hist = exact_history(
        Geometry("sphere", diameter_m=0.05), K, RHO, CP, 10.0, 20.0, 80.0, [0.0, 60.0, 60.0, 120.0]
    )
    assert hist.core_C[1] == hist.core_C[2]


# --- bad input -------------------------------------------------------------------------------------------------------
SPHERE = Geometry("sphere", diameter_m=0.05)


@pytest.mark.parametrize(
    "call,field",
    [
        (lambda: exact_history(SPHERE, K, RHO, CP, 0.0, 70, 2, [0, 1]), "h_W_m2K"),
        (lambda: exact_history(SPHERE, K, RHO, CP, -10.0, 70, 2, [0, 1]), "h_W_m2K"),
        (lambda: exact_history(SPHERE, 0.0, RHO, CP, 10.0, 70, 2, [0, 1]), "k_W_mK"),
        (lambda: exact_history(SPHERE, -0.5, RHO, CP, 10.0, 70, 2, [0, 1]), "k_W_mK"),
        (lambda: exact_history(SPHERE, K, float("nan"), CP, 10.0, 70, 2, [0, 1]), "rho_kg_m3"),
        (lambda: exact_history(SPHERE, K, RHO, 0.0, 10.0, 70, 2, [0, 1]), "cp_J_kgK"),
        (lambda: exact_history(SPHERE, K, RHO, CP, 10.0, float("nan"), 2, [0, 1]), "initial_C"),
        (lambda: exact_history(SPHERE, K, RHO, CP, 10.0, 70, None, [0, 1]), "medium_C"),
        (lambda: exact_history(SPHERE, K, RHO, CP, 10.0, 70, 2, [0, 60, 30]), "time_s"),
        (lambda: exact_history(SPHERE, K, RHO, CP, 10.0, 70, 2, [-5, 0]), "time_s"),
        (lambda: exact_history(SPHERE, K, RHO, CP, 10.0, 70, 2, [0, float("nan")]), "time_s"),
        (lambda: exact_history(SPHERE, K, RHO, CP, 10.0, 70, 2, []), "time_s"),
        (lambda: exact_history("sphere", K, RHO, CP, 10.0, 70, 2, [0, 1]), "geometry"),
        (
            lambda: exact_history(
                Geometry("brick", length_m=0.1, width_m=-0.1, height_m=0.1), K, RHO, CP, 10.0, 70, 2, [0, 1]
            ),
            "product.width_mm",
        ),
        (lambda: exact_theta_at(SPHERE, K, RHO, CP, 10.0, [0, 1], (1.5,)), "position[0]"),
        (lambda: exact_theta_at(SPHERE, K, RHO, CP, 10.0, [0, 1], (0.1, 0.2)), "position"),
    ],
)
def test_bad_input_names_the_field(call, field):
    with pytest.raises(InvalidInputError) as e:
        call()
    assert e.value.field == field
    assert field in str(e.value)
