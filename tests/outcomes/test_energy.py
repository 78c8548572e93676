"""Energy: integrated heat flow against m·ΔH, peak duty, COP and cost."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.outcomes import (
    cop_carnot,
    cop_realistic,
    energy_summary,
    enthalpy_change_J_kg,
    heat_transferred_J,
    refrigeration_energy,
)
from procplan.properties.table import PropertyTable


def test_lumped_newton_cooling_heat_flow_matches_m_dH():
    # Independent method: a lumped piece cooling by Newton's law (Incropera 7th ed. eq. 5.6):
    # T(t) = Ta + (T0 − Ta) e^{−t/τ}, q = hA (Ta − T). Integrated q (sampled every 2 min) against
    # m cp (T_end − T0). Tolerance 0.5 % (the brief's limit; trapezoid error here ≈ (Δt/τ)²/12 ≈ 1e-4).
    m, cp, hA, Ta, T0 = 2.0, 3600.0, 4.0, -5.0, 70.0
    tau = m * cp / hA
    t = np.arange(0.0, 4 * 3600.0 + 1, 120.0)
    T = Ta + (T0 - Ta) * np.exp(-t / tau)
    q = hA * (Ta - T)
    props = PropertyTable.constant(0.5, 1050.0, cp)
    dh = enthalpy_change_J_kg(props, T0, T[-1])
    s = energy_summary(t, q, piece_mass_kg=m, pieces=40, enthalpy_change_J_kg=dh)
    assert abs(s.balance_error) < 0.005
    assert_allclose(s.heat_removed_J_per_piece, -m * dh, rtol=0.005)
    assert_allclose(s.heat_removed_J_per_batch, 40 * s.heat_removed_J_per_piece, rtol=1e-12)
    # Peak duty (largest 1-min mean) over the first minute of the sampled history: q is linear between the
    # 2-min samples, so the mean is (q(0) + q(60 s)) / 2 with q(60 s) = (q(0) + q(120 s)) / 2; 40 pieces.
    q60 = 0.5 * (q[0] + q[1])
    assert_allclose(s.peak_duty_kW_per_batch, 40 * 0.5 * abs(q[0] + q60) / 1000.0, rtol=1e-12)
    # and within 0.5 % of the exact mean of hA (T0 − Ta) e^{−t/τ} over the first minute
    exact = hA * (T0 - Ta) * tau / 60.0 * (1.0 - np.exp(-60.0 / tau))
    assert_allclose(s.peak_duty_kW_per_batch, 40 * exact / 1000.0, rtol=0.005)
    assert s.peak_time_s == 0.0


def test_freezing_history_with_latent_heat_balances():
    # Consistent synthetic history through freezing: constant removal q = −150 W on a 1 kg piece, the
    # temperature read back from the enthalpy table H(t) = H0 + q t / m. Integral vs m ΔH within 0.5 %.
    props = PropertyTable.constant(
        0.5, 1000.0, 3600.0, latent_J_kg=250e3, freezing_C=-1.0, frozen_cp_J_kgK=1800.0
    )
    m, q = 1.0, -150.0
    t = np.linspace(0.0, 3 * 3600.0, 181)
    H = props.enthalpy(10.0) + q * t / m
    T = props.temperature(H)
    s = energy_summary(
        t,
        np.full_like(t, q),
        piece_mass_kg=m,
        batch_mass_kg=500.0,
        enthalpy_change_J_kg=enthalpy_change_J_kg(props, 10.0, float(T[-1])),
    )
    assert abs(s.balance_error) < 0.005
    assert_allclose(s.pieces, 500.0, rtol=1e-12)
    assert_allclose(s.peak_duty_kW_per_batch, 75.0, rtol=1e-12)


def test_heat_transferred_is_exact_for_linear_heat_flow():
    # Source: construction (∫ of a line is the trapezoid): q from −200 W to 0 over 100 s removes 10 kJ.
    assert_allclose(heat_transferred_J([0.0, 50.0, 100.0], [-200.0, -100.0, 0.0])[-1], -10000.0, rtol=1e-12)


def test_carnot_cop_hand_values():
    # Source: Carnot COP of a refrigerator T_evap/(T_cond − T_evap) in kelvin (e.g. Çengel & Boles,
    # Thermodynamics, ch. 6): −30 °C / 35 °C → 243.15/65 = 3.7408; −10 °C / 30 °C → 263.15/40 = 6.5788.
    # Tolerance: round-off only.
    assert_allclose(cop_carnot(-30.0, 35.0), 243.15 / 65.0, rtol=1e-12)
    assert_allclose(cop_carnot(-30.0, 35.0), 3.74, atol=0.005)
    assert_allclose(cop_carnot(-10.0, 30.0), 6.5788, atol=5e-5)
    # Plant COP: 0.5 × Carnot by default (0.4–0.6 common practice).
    assert_allclose(cop_realistic(-30.0, 35.0), 0.5 * 243.15 / 65.0, rtol=1e-12)
    assert_allclose(cop_realistic(-30.0, 35.0, 0.4), 0.4 * 243.15 / 65.0, rtol=1e-12)


def test_electricity_and_cost():
    # 100 MJ removed at COP 0.5 × 3.7408 = 1.8704 → 53.46 MJ = 14.85 kWh; at 0.25 per kWh → 3.713.
    e = refrigeration_energy(100e6, -30.0, 35.0, price_per_kWh=0.25)
    assert_allclose(e.electricity_J, 100e6 / (0.5 * 243.15 / 65.0), rtol=1e-12)
    assert_allclose(e.electricity_kWh, e.electricity_J / 3.6e6, rtol=1e-12)
    assert_allclose(e.cost, 0.25 * e.electricity_kWh, rtol=1e-12)
    assert refrigeration_energy(1e6, -30.0, 35.0).cost is None


def test_bad_input_names_the_field():
    with pytest.raises(InvalidInputError, match="condensing_C"):
        cop_carnot(35.0, -30.0)
    with pytest.raises(InvalidInputError, match="condensing_C"):
        cop_carnot(-10.0, -10.0)
    with pytest.raises(InvalidInputError, match="carnot_fraction"):
        cop_realistic(-30.0, 35.0, 0.0)
    with pytest.raises(InvalidInputError, match="carnot_fraction"):
        cop_realistic(-30.0, 35.0, 1.2)
    with pytest.raises(InvalidInputError, match="time_s"):
        heat_transferred_J([0.0, 0.0], [1.0, 1.0])
    with pytest.raises(InvalidInputError, match="piece_mass_kg"):
        energy_summary([0, 1], [1.0, 1.0], piece_mass_kg=0.0)
    with pytest.raises(InvalidInputError, match="batch_mass_kg"):
        energy_summary([0, 1], [1.0, 1.0], piece_mass_kg=1.0, pieces=2, batch_mass_kg=2.0)
    with pytest.raises(InvalidInputError, match="price_per_kWh"):
        refrigeration_energy(1e6, -30.0, 35.0, price_per_kWh=-1.0)
