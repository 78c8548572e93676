"""Invariants of the finite-volume solver, with hypothesis (small examples so the file stays fast)."""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

SETTINGS = settings(max_examples=8, deadline=None, suppress_health_check=[HealthCheck.too_slow])
FOOD = PropertyTable.constant(
    0.5, 1050.0, 3600.0, latent_J_kg=250e3, freezing_C=-1.0, frozen_k_W_mK=1.6, frozen_cp_J_kgK=1900.0
)

shapes = st.sampled_from(
    [
        Geometry("slab", thickness_m=0.03),
        Geometry("slab", thickness_m=0.02, faces=1),
        Geometry("cylinder", diameter_m=0.04),
        Geometry("sphere", diameter_m=0.05),
        Geometry("finite-cylinder", diameter_m=0.04, length_m=0.05),
    ]
)


@SETTINGS
@given(
    g=shapes,
    t0=st.floats(-20.0, 80.0),
    tm=st.floats(-35.0, 90.0),
    h=st.floats(5.0, 500.0),
    freezing=st.booleans(),
)
def test_bounds_monotone_core_and_energy(g, t0, tm, h, freezing):
    # Source: invariants of conduction with a constant medium (maximum principle; Incropera §5 energy balance):
    # every temperature stays within [min(T_i, T_m), max(T_i, T_m)], the core moves monotonically toward the
    # medium, and ∫Q dt equals the change of stored enthalpy within 0.5 %.
    props = FOOD if freezing else PropertyTable.constant(0.5, 1050.0, 3600.0)
    if abs(t0 - tm) < 1.0:
        tm = t0 + 5.0
    n = 9 if len(g.axes) > 1 else 21
    r = solve_conduction(g, props, t0, SurfaceBoundary.constant(tm, h), 4 * 3600.0, n_nodes=n)
    lo, hi = min(t0, tm), max(t0, tm)
    slack = 1e-6 * (hi - lo)
    for a in (r.core_C, r.surface_C, r.mean_C, r.final_field.ravel()):
        assert a.min() >= lo - slack and a.max() <= hi + slack
    step = np.diff(r.core_C) * np.sign(tm - t0)
    # Newton stops at a residual of about a micro-kelvin of sensible heat per step; 1e-5 K leaves room for
    # that noise to add up over a few steps without hiding a real overshoot.
    assert step.min() >= -1e-5, f"core moved away from the medium by {-step.min():.2e} K"
    assert r.energy_balance_error < 5e-3, r.energy_balance_error


@SETTINGS
@given(l_mm=st.floats(20.0, 60.0), h=st.floats(10.0, 300.0))
def test_symmetric_brick_gives_symmetric_field(l_mm, h):
    # Source: invariant (symmetry): a cube is unchanged by swapping axes, so the octant field is symmetric.
    g = Geometry("brick", length_m=l_mm / 1000, width_m=l_mm / 1000, height_m=l_mm / 1000)
    r = solve_conduction(
        g,
        PropertyTable.constant(0.5, 1050.0, 3600.0),
        40.0,
        SurfaceBoundary.constant(0.0, h),
        1800.0,
        n_nodes=7,
    )
    f = r.final_field
    for perm in ((1, 0, 2), (0, 2, 1), (2, 1, 0)):
        assert_allclose(f, f.transpose(perm), atol=1e-9)


@SETTINGS
@given(scale=st.sampled_from([1 / 60.0, 60.0, 3600.0]), h=st.floats(10.0, 200.0))
def test_time_unit_does_not_matter(scale, h):
    # Source: invariant (dimensional analysis, Fo = α t / L², Bi = h L / k): measuring time in another unit is
    # the same as dividing k and h by the factor; the history against Fo must be unchanged (rounding only).
    g = Geometry("slab", thickness_m=0.04)
    base = solve_conduction(
        g,
        PropertyTable.constant(0.5, 1050.0, 3600.0),
        50.0,
        SurfaceBoundary.constant(5.0, h),
        7200.0,
        n_nodes=21,
    )
    other = solve_conduction(
        g,
        PropertyTable.constant(0.5 / scale, 1050.0, 3600.0),
        50.0,
        SurfaceBoundary.constant(5.0, h / scale),
        7200.0 * scale,
        n_nodes=21,
    )
    assert_allclose(other.time_s / scale, base.time_s, rtol=1e-9)
    assert_allclose(other.core_C, base.core_C, atol=1e-8)
    assert_allclose(other.heat_J, base.heat_J / scale * scale, rtol=1e-6)


def test_end_time_does_not_change_earlier_history():
    # Source: invariant (causality): with the same step limits, results at a common output time do not depend
    # on how long the run goes on (identical step sequence up to 3600 s).
    g = Geometry("sphere", diameter_m=0.05)
    bc = SurfaceBoundary.constant(0.0, 30.0)
    a = solve_conduction(g, FOOD, 20.0, bc, 7200.0, output_time_s=[1800.0, 3600.0, 7200.0], max_dt_s=300.0)
    b = solve_conduction(g, FOOD, 20.0, bc, 3600.0, output_time_s=[1800.0, 3600.0], max_dt_s=300.0)
    assert_allclose(a.core_C[:2], b.core_C, atol=1e-9)
