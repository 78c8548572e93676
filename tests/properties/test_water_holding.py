"""The water-holding curve of beef and the drip it gives: published curve, published cooking losses, bounds and
mass balance."""

import math

import numpy as np
import pytest

from procplan.properties.water_holding import (
    BEEF_WATER_HOLDING,
    drip_history_kg,
    mean_expelled_share,
)


def test_curve_follows_the_published_sigmoid():
    # Source: van der Sman (2007), Meat Sci. 76, 730–738: C_eq(T) = a1 − a2/(1 + a3 exp(−a4 (T − Tσ))) with
    # a1 = 0.745, a2 = 0.345, a3 = 30, a4 = 0.25 1/K, Tσ = 52 °C, as restated in the public implementation of
    # the Flory–Rehner cooking model of Ah Shehadeh et al. (2020), arXiv:1908.10787 (the paper's own table not
    # read); the values below are computed by hand from that expression
    w = BEEF_WATER_HOLDING
    assert (w.raw_kg_kg, w.drop_kg_kg, w.shape, w.slope_1_K, w.midpoint_C) == (0.745, 0.345, 30.0, 0.25, 52.0)
    for t_C in (20.0, 45.0, 52.0, 60.0, 70.0, 90.0):
        by_hand = 0.745 - 0.345 / (1.0 + 30.0 * math.exp(-0.25 * (t_C - 52.0)))
        assert float(w.held_kg_kg(t_C)) == pytest.approx(by_hand, rel=1e-12)
    assert float(w.held_kg_kg(52.0)) == pytest.approx(0.745 - 0.345 / 31.0, rel=1e-12)
    # the two ends: the raw value below the denaturation range, a1 − a2 = 0.40 when fully denatured
    assert float(w.held_kg_kg(-20.0)) == pytest.approx(0.745, abs=1e-9)
    assert float(w.held_kg_kg(150.0)) == pytest.approx(0.400, abs=1e-6)


def test_equilibrium_cooking_loss_of_lean_beef_lies_in_the_published_range():
    # Source: Honikel, K.O., Hamm, R. (1994), Measurement of water-holding capacity and juiciness, in Quality
    # Attributes and their Measurement in Meat, Poultry and Fish Products, Blackie, ch. 5 §5.1: "the cooking
    # loss [may amount] to 25–35 %" of the same piece of meat. A small lean sample (water 0.745) held until
    # its water is at equilibrium loses w0·s(T) of its mass:
    w0 = BEEF_WATER_HOLDING.raw_kg_kg
    loss_75 = 100.0 * w0 * float(BEEF_WATER_HOLDING.expelled_share(75.0))
    assert 25.0 <= loss_75 <= 35.0  # 31.5 %
    # the highest loss the curve allows (fully denatured) is a2 = 34.5 %, inside the range too
    assert 100.0 * w0 * float(BEEF_WATER_HOLDING.expelled_share(200.0)) == pytest.approx(34.5, abs=1e-3)


def test_no_drip_below_the_denaturation_range_and_never_less_with_heat():
    # Source: Bengtsson, Jakobsson, Dagerskog (1976), J. Food Sci. 41, 1047 (abstract): weight loss by liquid
    # drip becomes significant above 65 °C; the sigmoid is centred at Tσ = 52 °C (van der Sman 2007). Bounds:
    # raw meat (below 35 °C) expels under 0.1 % of its water; the share never falls as the temperature rises
    s = BEEF_WATER_HOLDING.expelled_share
    assert float(s(35.0)) < 1e-3 and float(s(4.0)) < 1e-6 and float(s(-18.0)) >= 0.0
    t = np.linspace(-20.0, 150.0, 1701)
    assert np.all(np.diff(s(t)) >= 0.0)
    assert float(s(65.0)) > 10.0 * float(s(40.0))


def test_volume_mean_share_weights_cells_by_volume():
    # Invariant: a uniform field gives the pointwise share; volumes weight the mean
    assert mean_expelled_share([70.0] * 4, [1.0, 2.0, 3.0, 4.0]) == pytest.approx(
        float(BEEF_WATER_HOLDING.expelled_share(70.0)), rel=1e-12
    )
    hot, cold = float(BEEF_WATER_HOLDING.expelled_share(80.0)), float(BEEF_WATER_HOLDING.expelled_share(20.0))
    assert mean_expelled_share([80.0, 20.0], [3.0, 1.0]) == pytest.approx(0.75 * hot + 0.25 * cold, rel=1e-12)
    with pytest.raises(ValueError):
        mean_expelled_share([80.0, 20.0], [1.0])


def test_drip_history_mass_balance_and_bounds():
    # Invariants: evaporated + dripped + held = initial water, held ≥ 0; the drip never falls (the expelled
    # water is not taken back), even when the share recorded is noisy; with no evaporation the drip is the
    # share of the raw water itself
    rng = np.random.default_rng(3)
    share = np.clip(np.cumsum(rng.uniform(-0.01, 0.03, 200)), 0.0, 0.46)
    evaporated = np.linspace(0.0, 0.12, 200)
    water = 0.71
    drip = drip_history_kg(share, water, evaporated)
    held = water - evaporated - drip
    assert drip[0] == 0.0 and np.all(np.diff(drip) >= 0.0) and np.all(held >= -1e-12)
    plain = drip_history_kg([0.0, 0.1, 0.3, 0.3, 0.46], water)
    assert plain == pytest.approx(water * np.array([0.0, 0.1, 0.3, 0.3, 0.46]), rel=1e-12)
    with pytest.raises(ValueError):
        drip_history_kg([0.0, 0.1], water, [0.0])


def test_drip_never_counts_evaporated_water_twice():
    # Invariant (no double count, the module's own basis): the water expelled at the peak share so far is
    # W0 max(s); evaporated water cannot also drip, so at every time the total lost, evaporation + drip, is no
    # more than the larger of the expelled water and the evaporation itself
    rng = np.random.default_rng(7)
    share = np.clip(np.cumsum(rng.uniform(-0.01, 0.03, 300)), 0.0, 0.46)
    water = 0.71
    for top in (0.05, 0.2, 0.4):  # evaporation well below, near and above the expelled water
        evaporated = np.linspace(0.0, top, 300)
        drip = drip_history_kg(share, water, evaporated)
        expelled = water * np.maximum.accumulate(share)
        assert np.all(evaporated + drip <= np.maximum(expelled, evaporated) + 1e-12)
        assert np.all(np.diff(drip) >= 0.0)
        # where the evaporation stays below the expelled water to the end, the step ends on the curve
        if top < expelled[-1]:
            assert evaporated[-1] + drip[-1] == pytest.approx(expelled[-1], rel=1e-12)
    # water lost before the step (an earlier step's evaporation and drip) counts the same way
    later = drip_history_kg([0.3, 0.4], water, None, lost_kg=water * 0.3)
    assert later == pytest.approx([0.0, water * 0.1], rel=1e-12)
