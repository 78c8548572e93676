"""Targets at a stated depth below the surface: the history column on the exact and finite-volume paths
(1-D, 2-D, 3-D), its bounds (depth 0 is the surface, the half-thickness is the core), the one-term series at an
interior point, the plan-file key and the reports."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from procplan.conduction.product import exact_temperature_at_C
from procplan.errors import InvalidInputError
from procplan.files.plan import plan_from_dict
from procplan.files.steps import step_from_dict, step_to_dict
from procplan.model import Target, depth_column
from procplan.output.report import summary_dict, summary_text
from procplan.output.result_schema import result_document
from procplan.run.engine import run_plan

K, RHO, CP = 0.5, 1000.0, 4000.0
FIXED = {"k_W_mK": K, "rho_kg_m3": RHO, "cp_J_kgK": CP}


def plan_dict(dims: dict, targets: list[dict], h=25.0, minutes=60.0, t0=70.0, medium=2.0) -> dict:
    return {
        "title": "depth check",
        "product": {"name": "fixed", **dims, "fixed_properties": FIXED},
        "start": {"temperature_C": t0},
        "steps": [
            {"name": "chill", "h_W_m2K": h, "medium_C": medium, "duration_min": minutes, "targets": targets}
        ],
    }


SLAB = {"shape": "slab", "thickness_mm": 40}


def one_term_slab(bi: float, x_star: float, fo):
    """θ(x*, Fo) = C1 exp(−ζ1² Fo) cos(ζ1 x*), ζ1 tan ζ1 = Bi, C1 = 4 sin ζ1 / (2ζ1 + sin 2ζ1)."""
    # Source: Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 5.40a-c
    # (plane wall, one-term approximation, Fo > 0.2), eigenvalue from eq. 5.39c, both computed here.
    z = brentq(lambda z: z * math.tan(z) - bi, 1e-9, math.pi / 2 - 1e-9)
    c1 = 4.0 * math.sin(z) / (2.0 * z + math.sin(2.0 * z))
    return c1 * np.exp(-(z**2) * np.asarray(fo)) * math.cos(z * x_star), z, c1


def test_one_term_eigenvalue_matches_the_published_table():
    # Source: Incropera et al., 7th ed., Table 5.1, plane wall, Bi = 1.0: ζ1 = 0.8603 rad, C1 = 1.1191 (from memory)
    _, z, c1 = one_term_slab(1.0, 0.0, 0.0)
    assert z == pytest.approx(0.8603, abs=1e-4) and c1 == pytest.approx(1.1191, abs=1e-4)


def test_exact_depth_column_follows_the_one_term_series_at_an_interior_point():
    # Slab 40 mm (L = 20 mm), k = 0.5 W/mK, h = 25 W/m²K: Bi = h L / k = 1.0; 10 mm below the surface: x* = 0.5.
    plan = plan_from_dict(plan_dict(SLAB, [{"point": "depth", "depth_mm": 10, "temperature_C": 40.0}]))
    res = run_plan(plan, solver="exact")
    h = res.history
    L, alpha = 0.02, K / (RHO * CP)
    fo = alpha * h["time_s"].to_numpy() / L**2
    theta = (h[depth_column(0.01)].to_numpy() - 2.0) / (70.0 - 2.0)
    ref, z, c1 = one_term_slab(1.0, 0.5, fo)
    late = fo >= 0.5  # the second term is below 1e-4 of θ at x* = 0.5 from here (ζ2 ≈ 3.43)
    assert late.sum() > 100
    np.testing.assert_allclose(theta[late], ref[late], atol=2e-4)  # measured 6e-5
    # the time to the target, inverted from the one-term series
    tg = res.outcomes.targets[0]
    assert tg.point == "depth" and tg.depth_mm == 10 and tg.label == "10 mm below the surface"
    t_ref = -math.log((40.0 - 2.0) / 68.0 / (c1 * math.cos(0.5 * z))) / z**2 * L**2 / alpha
    assert 0.5 * L**2 / alpha < t_ref  # inside the one-term range
    assert tg.target.time_s == pytest.approx(t_ref, rel=1e-4)  # measured 5e-6


SHAPES = [
    SLAB,
    {"shape": "sphere", "diameter_mm": 60},
    {"shape": "finite-cylinder", "diameter_mm": 60, "length_mm": 80},
    {"shape": "brick", "length_mm": 120, "width_mm": 80, "height_mm": 40},
]


@pytest.mark.parametrize("dims", SHAPES, ids=[d["shape"] for d in SHAPES])
@pytest.mark.parametrize("solver", ["exact", "finite-volume"])
def test_depth_zero_is_the_surface_and_the_half_thickness_is_the_core(dims, solver):
    plan = plan_from_dict(plan_dict(dims, []))
    half_mm = plan.product.geometry.conduction_length_m * 1000.0
    targets = [
        {"point": "depth", "depth_mm": 0, "temperature_C": 10.0},
        {"point": "depth", "depth_mm": half_mm, "temperature_C": 10.0},
    ]
    plan = plan_from_dict(plan_dict(dims, targets, minutes=20.0))
    res = run_plan(plan, solver=solver, n_nodes=9 if dims["shape"] == "brick" else None)
    h = res.history
    core = h[depth_column(half_mm / 1000.0)].to_numpy()
    np.testing.assert_allclose(core, h["core_C"].to_numpy(), atol=1e-9)
    face = h[depth_column(0.0)].to_numpy()
    g = plan.product.geometry
    if len(g.axes) == 1:  # one axis: the face centre is the surface
        np.testing.assert_allclose(face, h["surface_C"].to_numpy(), atol=1e-9)
    else:  # several: the centre of the face on the shortest axis, warmer on cooling than the corner or rim
        assert np.all(face >= h["surface_C"].to_numpy() - 1e-9)
    # bounds: every depth lies between the surface node and the core on cooling
    assert np.all(face <= core + 1e-9)


@pytest.mark.parametrize("dims", SHAPES, ids=[d["shape"] for d in SHAPES])
def test_finite_volume_depth_agrees_with_the_exact_series(dims):
    # Independent method: the field of the finite-volume solver, interpolated linearly between nodes, against the
    # exact eigen-series (Newman product in 2-D and 3-D) at the same point; 0.05 K bounds the default grids
    # (measured 0.002-0.014 K), 0.1 K the coarse 3-D grid of 15 nodes per axis (measured 0.03 K).
    plan = plan_from_dict(plan_dict(dims, [{"point": "depth", "depth_mm": 7.5, "temperature_C": 10.0}]))
    fv = run_plan(plan, solver="finite-volume")
    g = plan.product.geometry
    t = fv.history["time_s"].to_numpy()
    ref = exact_temperature_at_C(g, K, RHO, CP, 25.0, 70.0, 2.0, t, g.depth_position(0.0075))
    late = t > 0.05 * t[-1]
    tol = 0.1 if dims["shape"] == "brick" else 0.05
    assert np.max(np.abs(fv.history[depth_column(0.0075)].to_numpy()[late] - ref[late])) < tol


def test_depth_is_validated_with_the_field_named():
    plan = plan_from_dict(plan_dict(SLAB, []))
    step = plan.steps[0]
    from dataclasses import replace

    deep = replace(plan, steps=(replace(step, targets=(Target(10.0, "depth", 0.025),)),))
    with pytest.raises(InvalidInputError) as e:
        run_plan(deep)
    assert e.value.field == "steps[0].targets[0].depth_m" and "0.02" in e.value.allowed
    none = replace(plan, steps=(replace(step, targets=(Target(10.0, "depth"),)),))
    with pytest.raises(InvalidInputError, match="steps\\[0\\].targets\\[0\\].depth_m"):
        run_plan(none)
    # the plan file: too deep, missing, and given for another point
    with pytest.raises(InvalidInputError) as e:
        plan_from_dict(plan_dict(SLAB, [{"point": "depth", "depth_mm": 25, "temperature_C": 10.0}]))
    assert "steps[0].targets[0].depth_mm" in str(e.value) and "[0, 20] mm" in str(e.value)
    with pytest.raises(InvalidInputError, match="steps\\[0\\].targets\\[0\\].depth_mm"):
        plan_from_dict(plan_dict(SLAB, [{"point": "depth", "temperature_C": 10.0}]))
    with pytest.raises(InvalidInputError, match="steps\\[0\\].targets\\[0\\].depth_mm"):
        plan_from_dict(plan_dict(SLAB, [{"point": "core", "depth_mm": 5, "temperature_C": 10.0}]))
    with pytest.raises(InvalidInputError, match="steps\\[0\\].targets\\[0\\].depth_mm"):
        plan_from_dict(plan_dict(SLAB, [{"point": "depth", "depth_mm": -1, "temperature_C": 10.0}]))


def test_the_plan_file_key_round_trips():
    raw = {"name": "s", "h_W_m2K": 20, "medium_C": 2, "duration_min": 30}
    raw["targets"] = [
        {"point": "depth", "depth_mm": 12.5, "temperature_C": 8},
        {"point": "mean", "temperature_C": 6},
    ]
    step = step_from_dict(raw, 0)
    assert step.targets[0] == Target(8.0, "depth", 0.0125)
    assert step_to_dict(step)["targets"] == raw["targets"]


def test_reports_name_the_depth_and_the_json_carries_it():
    targets = [{"point": "depth", "depth_mm": 10, "temperature_C": 40.0}]
    res = run_plan(plan_from_dict(plan_dict(SLAB, targets)))
    text = summary_text(res)
    assert "chill: 10 mm below the surface reaches 40 °C after" in text
    d = summary_dict(res)
    assert d["depths"] == [
        {
            "depth_mm": 10.0,
            "label": "10 mm below the surface",
            "end_C": float(res.history[depth_column(0.01)].iloc[-1]),
        }
    ]
    tg = d["outcomes"]["targets"][0]
    assert tg["point"] == "depth" and tg["depth_mm"] == 10.0
    doc = result_document(res)
    assert depth_column(0.01) in doc["history"]


def test_the_sheet_asks_for_the_probe_at_its_depth():
    from procplan.files.site import SiteSettings
    from procplan.output.sheet import batch_sheet_pdf
    from procplan.output.sheet_data import checkpoints
    from procplan.output.xlsx import history_table

    targets = [{"point": "depth", "depth_mm": 10, "temperature_C": 40.0}]
    res = run_plan(plan_from_dict(plan_dict(SLAB, targets)))
    cps = [c for c in checkpoints(res) if c.point == "10 mm below the surface"]
    assert cps and "predicted time of 10 mm below the surface" in cps[-1].basis
    h = res.history
    for c in cps:  # the expected reading is the depth's own history, not the core's
        ref = float(np.interp(c.time_min * 60.0, h["time_s"], h[depth_column(0.01)]))
        assert c.expected_C == pytest.approx(ref, abs=1e-9)
    assert batch_sheet_pdf(res, site=SiteSettings("Test plant")).startswith(b"%PDF")
    assert "depth 10mm [°C]" in history_table(res).columns


def test_a_target_reached_before_the_stop_is_measured_against_the_steps_real_length():
    # Invariant: a step that runs to its stop condition has the stop's time as its cycle; a target reached
    # earlier (the surface before the core) is checked against that length, not against its own time.
    d = plan_dict(SLAB, [{"point": "surface", "temperature_C": 20.0}])
    del d["steps"][0]["duration_min"]
    d["steps"][0]["stop_when_core_C"] = 10.0
    res = run_plan(plan_from_dict(d), solver="exact")
    stop = next(t for t in res.outcomes.targets if t.kind == "stop")
    surf = next(t for t in res.outcomes.targets if t.kind == "target")
    step_min = res.steps[0].duration_s / 60.0
    assert stop.margin.cycle_min == pytest.approx(step_min, rel=1e-9)
    assert surf.margin.cycle_min == pytest.approx(step_min, rel=1e-9)
    assert (surf.target.time_s - res.steps[0].start_s) / 60.0 < 0.5 * step_min
