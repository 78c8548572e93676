"""The batched 1-D finite-volume solver against one-at-a-time runs, the exact series and the energy balance."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.conduction.fv_batch import scaled_geometry
from procplan.conduction.fv_batch_run import solve_conduction_batch
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.composition import Composition
from procplan.properties.food import property_table
from procplan.properties.table import PropertyTable
from tests.conduction.test_finite_volume import exact_history

# Lean beef by Choi–Okos (temperature-dependent k and cp, latent heat over the freezing range); the
# composition is a typical lean-beef one (common practice, no single source), used as an input, not a check.
BEEF = property_table(
    Composition(water=0.74, protein=0.22, fat=0.03, carbohydrate=0.0, ash=0.01), freezing_C=-1.7
)
SHAPES = {
    "slab": Geometry("slab", thickness_m=0.05),
    "cylinder": Geometry("cylinder", diameter_m=0.06),
    "sphere": Geometry("sphere", diameter_m=0.07),
}
SAME_STEPS_K = 1e-8  # the bound on batched against one-at-a-time runs with the same steps


def _samples(n: int, seed: int, freeze: bool):
    rng = np.random.default_rng(seed)
    start = rng.uniform(4.0, 40.0, n)
    medium = rng.uniform(-35.0, -25.0, n) if freeze else rng.uniform(-1.0, 3.0, n)
    return start, medium, rng.lognormal(np.log(30.0), 0.3, n), rng.uniform(0.8, 1.2, n)


def _single(g, props, start, medium, h, size, end, **kw):
    return solve_conduction(
        scaled_geometry(g, size), props, start, SurfaceBoundary.constant(medium, h), end, n_nodes=41, **kw
    )


@pytest.mark.parametrize("shape", list(SHAPES))
def test_same_fixed_steps_as_one_at_a_time(shape):
    # Source: invariant (the acceptance rule): batched samples follow the single-sample solver's Newton
    # iterates, so with the same steps they agree with it within 1e-8 K; media at −35…−25 °C freeze every
    # sample through the latent range of the Choi–Okos table, the slowest case for the Newton iteration.
    g = SHAPES[shape]
    start, medium, h, size = _samples(4, seed=11, freeze=True)
    end = 3 * 3600.0
    b = solve_conduction_batch(g, BEEF, start, medium, h, end, size_factor=size, dt_s=90.0)
    assert np.all(b.final_field[:, 0] < BEEF.initial_freezing_C)  # every core entered the latent range
    assert np.sum(b.final_field[:, 0] < -10.0) >= 2  # and some went through it
    for i in range(4):
        r = _single(g, BEEF, start[i], medium[i], h[i], size[i], end, dt_s=90.0)
        assert_allclose(b.time_s, r.time_s, rtol=0, atol=1e-9)
        for name in ("core_C", "surface_C", "mean_C"):
            assert_allclose(getattr(b, name)[i], getattr(r, name), rtol=0, atol=SAME_STEPS_K, err_msg=name)
        assert_allclose(b.final_field[i], r.final_field.ravel(), rtol=0, atol=SAME_STEPS_K)
        assert_allclose(b.heat_J[i], r.heat_J, rtol=1e-10)
        assert_allclose(b.energy_balance_error[i], r.energy_balance_error, rtol=1e-6, atol=1e-12)


def test_given_adaptive_steps_of_a_default_run():
    # Source: invariant, as above: a sample given the accepted step times of the single solver's default
    # (adaptive) run reproduces that run within 1e-8 K, whatever the other samples in the batch.
    g = SHAPES["cylinder"]
    start, medium, h, size = _samples(3, seed=5, freeze=False)
    end = 4 * 3600.0
    r = _single(g, BEEF, start[0], medium[0], h[0], size[0], end)
    b = solve_conduction_batch(g, BEEF, start, medium, h, end, size_factor=size, step_times_s=r.time_s)
    assert_allclose(b.time_s, r.time_s, rtol=0, atol=1e-9)
    assert_allclose(b.core_C[0], r.core_C, rtol=0, atol=SAME_STEPS_K)
    assert_allclose(b.surface_C[0], r.surface_C, rtol=0, atol=SAME_STEPS_K)


def test_property_scale_factors_match_a_scaled_table():
    # Source: invariant: k, enthalpy and density factors on one table are the same problem as a table with
    # k f_k, H f_c and rho f_rho (the single solver run on that table, same steps, within 1e-8 K).
    g = SHAPES["slab"]
    fk, fc, fr = np.array([0.9, 1.15]), np.array([1.1, 0.92]), np.array([0.95, 1.05])
    start, medium, h, size = _samples(2, seed=3, freeze=True)
    end = 2 * 3600.0
    b = solve_conduction_batch(
        g,
        BEEF,
        start,
        medium,
        h,
        end,
        size_factor=size,
        k_factor=fk,
        enthalpy_factor=fc,
        density_factor=fr,
        dt_s=120.0,
    )
    for i in range(2):
        table = PropertyTable(
            BEEF.temperature_C,
            BEEF.enthalpy_J_kg * fc[i],
            BEEF.conductivity_W_mK * fk[i],
            BEEF.density_kg_m3 * fr[i],
            BEEF.initial_freezing_C,
            BEEF.reference_C,
            "scaled",
        )
        r = _single(g, table, start[i], medium[i], h[i], size[i], end, dt_s=120.0)
        assert_allclose(b.core_C[i], r.core_C, rtol=0, atol=SAME_STEPS_K)
        assert_allclose(b.final_field[i], r.final_field.ravel(), rtol=0, atol=SAME_STEPS_K)


@pytest.mark.parametrize("shape", list(SHAPES))
def test_own_steps_agree_with_default_runs_and_stop_times(shape):
    # Source: the finite-volume accuracy the single solver's tests hold (test_finite_volume.py: stop time
    # within 0.3 % of the exact series). At its own (worst-sample) steps the batch's time for the core to reach
    # 5 °C, interpolated in each history, agrees with the single solver's default runs (secant stop) within it.
    g = SHAPES[shape]
    start, medium, h, size = _samples(5, seed=2, freeze=False)
    b = solve_conduction_batch(g, BEEF, start, medium, h, 8 * 3600.0, size_factor=size, stop_when_core_C=5.0)
    for i in range(5):
        r = _single(g, BEEF, start[i], medium[i], h[i], size[i], 8 * 3600.0, stop_when_core_C=5.0)
        assert r.stopped_at_s is not None
        assert_allclose(b.stop_time_s[i], r.stopped_at_s, rtol=3e-3)
    assert_allclose(b.time_to_core(5.0), b.stop_time_s, rtol=1e-12)


@pytest.mark.parametrize("shape", list(SHAPES))
def test_energy_balance_per_sample(shape):
    # Source: invariant (first law): the heat through each surface, integrated by the trapezoidal rule, equals
    # the change of the piece's enthalpy within 0.5 % (the engine's warning limit), freezing included.
    g = SHAPES[shape]
    start, medium, h, size = _samples(6, seed=7, freeze=True)
    b = solve_conduction_batch(g, BEEF, start, medium, h, 3 * 3600.0, size_factor=size)
    assert b.energy_balance_error.shape == (6,)
    assert np.all(b.energy_balance_error < 5e-3), b.energy_balance_error
    assert np.all(b.heat_J[:, -1] < 0)  # every piece lost heat


@pytest.mark.parametrize("shape", list(SHAPES))
def test_constant_properties_match_the_exact_series(shape):
    # Source: exact eigen-series, Incropera et al., 7th ed., §5.5-5.6 (written independently in
    # test_finite_volume.py); the same 0.05 K bound as the single solver's test at the default grid, from
    # Fo = 0.02 as there (before it the series itself needs more terms).
    k, rho, cp = 0.5, 1050.0, 3600.0
    props = PropertyTable.constant(k, rho, cp)
    g = SHAPES[shape]
    start, medium, h, size = (
        np.array([70.0, 60.0]),
        np.array([2.0, 10.0]),
        np.array([20.0, 80.0]),
        np.array([1.0, 0.9]),
    )
    b = solve_conduction_batch(g, props, start, medium, h, 4 * 3600.0, size_factor=size)
    for i in range(2):
        gi = scaled_geometry(g, size[i])
        late = b.time_s * k / (rho * cp) / gi.conduction_length_m**2 >= 0.02
        ex = exact_history(gi, k, rho, cp, h[i], start[i], medium[i], b.time_s[late])
        assert np.abs(b.core_C[i][late] - ex["core"]).max() < 0.05
        assert np.abs(b.mean_C[i][late] - ex["mean"]).max() < 0.05


def test_refuses_a_2d_shape_and_bad_samples():
    # Source: project rule (procplan/errors.py): invalid input raises InvalidInputError naming the field.
    with pytest.raises(InvalidInputError) as e:
        solve_conduction_batch(
            Geometry("brick", length_m=0.1, width_m=0.1, height_m=0.1), BEEF, 20.0, 0.0, 10.0, 60.0
        )
    assert e.value.field == "geometry"
    with pytest.raises(InvalidInputError) as e:
        solve_conduction_batch(SHAPES["slab"], BEEF, [20.0, 20.0], 0.0, [10.0, -1.0], 60.0)
    assert e.value.field == "h_W_m2K"


def test_refuses_step_times_that_miss_the_end_and_too_few_steps():
    # Source: project rule (procplan/errors.py): invalid input raises InvalidInputError naming the field.
    g = SHAPES["slab"]
    with pytest.raises(InvalidInputError) as e:
        solve_conduction_batch(g, BEEF, 20.0, 0.0, 10.0, 600.0, step_times_s=[100.0, 300.0])
    assert e.value.field == "step_times_s"
    with pytest.raises(InvalidInputError) as e:
        solve_conduction_batch(g, BEEF, 20.0, 0.0, 10.0, 3600.0, max_steps=3)
    assert e.value.field == "max_steps"
