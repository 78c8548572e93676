"""Emissivity carried by the product (or its packaging): which value wins, old files unchanged, the direction
of an error, the product-file key."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.product import product_from_dict, product_to_dict
from procplan.run.engine import run_plan
from procplan.run.step_surface import product_emissivity
from procplan.surface.machines import equipment_h

LIB = load_library()


def _plan(emissivity=None):
    plan = LIB.plan("roulade-blast-chill")
    return replace(plan, product=replace(plan.product, emissivity=emissivity))


def test_demo_products_carry_no_emissivity_so_the_machines_setting_still_applies():
    # old files: no demo product states one, so every demo step in an air machine keeps the machine's setting
    assert LIB.products and all(p.emissivity is None for p in LIB.products.values())
    for name in LIB.plans:
        plan = LIB.plan(name)
        for step in plan.steps:
            if step.equipment is not None:
                assert product_emissivity(step, plan.product, LIB.equipment[step.equipment]) is None


def test_a_product_at_the_machines_default_gives_the_same_result():
    # Invariant: the chiller's default emissivity (0.9 in its file) stated on the product instead changes nothing.
    before, same = run_plan(_plan(), library=LIB), run_plan(_plan(0.9), library=LIB)
    np.testing.assert_array_equal(before.history["core_C"].to_numpy(), same.history["core_C"].to_numpy())
    assert before.steps[0].surface.h_W_m2K == same.steps[0].surface.h_W_m2K


def test_radiation_scales_with_the_products_emissivity():
    # Source: Incropera et al., Fundamentals of Heat and Mass Transfer, 7th ed., eq. 1.9:
    # h_r = ε σ (T_s + T_sur)(T_s² + T_sur²), linear in ε at a given surface and wall temperature.
    eq = LIB.equipment["chiller-b2"]
    geo = _plan().product.geometry
    machine = equipment_h(eq, {}, geo, surface_C=20.0)
    foil = equipment_h(eq, {}, geo, surface_C=20.0, emissivity=0.05)
    assert foil.h_rad_W_m2K == pytest.approx(machine.h_rad_W_m2K * 0.05 / 0.9, rel=1e-12)
    assert foil.h_conv_W_m2K == machine.h_conv_W_m2K


def test_a_shiny_wrap_cools_more_slowly_and_the_machine_record_says_what_was_used():
    # the unsafe direction: too high an emissivity shortens the predicted chill time
    base, foil = run_plan(_plan(), library=LIB), run_plan(_plan(0.05), library=LIB)
    t_base = base.outcomes.targets[0].target.time_s
    t_foil = foil.outcomes.targets[0].target.time_s
    assert t_foil > t_base
    assert foil.steps[0].surface.breakdown.machine.settings["emissivity"] == 0.05
    assert foil.steps[0].surface.breakdown.h_rad_W_m2K < 0.1 * base.steps[0].surface.breakdown.h_rad_W_m2K


def test_a_step_that_sets_the_machines_emissivity_wins_over_the_product():
    plan = _plan(0.05)
    step = replace(plan.steps[0], settings=(*plan.steps[0].settings, ("emissivity", 0.9)))
    assert product_emissivity(step, plan.product, LIB.equipment["chiller-b2"]) is None
    stepped = run_plan(replace(plan, steps=(step,)), library=LIB)
    base = run_plan(_plan(), library=LIB)
    assert stepped.steps[0].surface.h_W_m2K == base.steps[0].surface.h_W_m2K


def test_the_product_key_round_trips_and_is_validated():
    raw = {
        "name": "p",
        "shape": "slab",
        "thickness_mm": 20,
        "fixed_properties": {"k_W_mK": 0.5, "rho_kg_m3": 1000, "cp_J_kgK": 3600},
    }
    p = product_from_dict({**raw, "emissivity": 0.3})
    assert p.emissivity == 0.3 and product_to_dict(p)["emissivity"] == 0.3
    assert "emissivity" not in product_to_dict(product_from_dict(raw))
    with pytest.raises(InvalidInputError, match=r"product\.emissivity"):
        product_from_dict({**raw, "emissivity": 1.5})
