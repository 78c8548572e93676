"""The dry-oven roast of the demo library: the engine picks heat and moisture together and says why; the
steam cook of the same joint has no evaporation in saturated steam (its drip: tests/run/test_drip.py)."""

from dataclasses import replace

import pytest

from procplan.files.library import load_library
from procplan.files.plan import load_plan
from procplan.properties.boiling import BOILING_C
from procplan.run.engine import run_plan

PLANS = "product_library/plans"


@pytest.fixture(scope="module")
def library():
    return load_library()


def _first_step(path, library):
    plan = load_plan(path, library=library)
    return replace(plan, steps=plan.steps[:1])


def test_dry_oven_roast_slower_than_without_evaporation_and_loses_weight(library):
    plan = _first_step(f"{PLANS}/beef-joint-oven-roast.toml", library)
    res = run_plan(plan, library=library)
    sr = res.steps[0]
    assert "heat and moisture are solved together" in sr.reason and "wet bulb" in sr.reason
    d = sr.drying
    assert d is not None and d.mass_balance_error < 0.005
    # an oven's air at 180 °C with a 45 °C dew point: Source: CoolProp HAPropsSI('B') gives 56.5 °C
    assert d.wet_bulb_C == pytest.approx(56.5, abs=0.5)
    assert 0.0 < d.weight_loss_percent < 30.0 and d.yield_percent == pytest.approx(
        100 - d.weight_loss_percent
    )  # the drying summary's yield: evaporation alone (the step's drip: sr.drip)
    assert res.outcomes.weight_loss_percent[0][1] == pytest.approx(d.weight_loss_percent)
    # the wet inside cannot heat past the boiling point of its water (an evaporation front; Purlis & Salvadori
    # 2009): the mean ends below 100 °C (it was 123.7 °C when only the surface evaporated), and the water boiled
    # off under the crust is within the loss, the larger of the two (the core, which stops this step at 75 °C,
    # is checked through the rest in tests/run/test_dry_air_lethality.py)
    assert float(res.history["mean_C"].iloc[-1]) < BOILING_C
    assert d.boiled_kg > 0.0 and d.weight_loss_kg == pytest.approx(max(d.boiled_kg, d.surface_evaporated_kg))
    # the heat that boiled the water left with it: the run's heat balances the enthalpy change of the piece
    assert res.outcomes.energy_balance < 0.01
    # the same joint wrapped (no evaporation) reaches 75 °C sooner: evaporation slows the heating
    dry = run_plan(replace(plan, product=replace(plan.product, unwrapped=False)), library=library)
    assert dry.steps[0].drying is None
    assert sr.stop_time_s > dry.steps[0].stop_time_s


def test_steam_cook_has_no_evaporation(library):
    plan = _first_step(f"{PLANS}/beef-joint-roast-chill.toml", library)
    res = run_plan(plan, library=library)
    wrapped = run_plan(replace(plan, product=replace(plan.product, unwrapped=False)), library=library)
    assert res.steps[0].drying is None and res.steps[0].surface.evaporation is None
    assert res.steps[0].stop_time_s == pytest.approx(wrapped.steps[0].stop_time_s, rel=1e-9)
    # no evaporation, but the unwrapped joint drips (run.drip); wrapped, its purge stays in the pack
    assert res.outcomes.weight_loss_percent == () and res.steps[0].drip.evaporative_loss_percent == 0.0
    # the yield keeps its meaning (evaporation alone: none here); the lower bound drains the juice
    assert res.outcomes.yield_percent is None
    assert res.outcomes.yield_lower_percent == pytest.approx(
        100.0 - res.steps[0].drip.drainable_juice_percent
    )
    assert wrapped.outcomes.yield_percent is None and wrapped.steps[0].drip is None
