"""Salt in the product's water phase: equilibrium with a brine and the freezing-point depression."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from procplan.errors import InvalidInputError
from procplan.properties import salting

NACL_KG_MOL = 0.058443  # molar mass of NaCl [kg/mol]


@pytest.mark.parametrize(
    ("molality", "depression_K"),
    # Source: CRC Handbook of Chemistry and Physics, §15 "Freezing point lowering by electrolytes in aqueous
    # solution" (from Forsythe, Smithsonian Physical Tables, 9th ed., 1956), NaCl row: 0.18, 0.35, 0.85, 1.68,
    # 2.60 K at 0.05, 0.10, 0.25, 0.50, 0.75 mol/kg (read in a reproduction of the table page).
    [(0.05, 0.18), (0.10, 0.35), (0.25, 0.85), (0.50, 1.68), (0.75, 2.60)],
)
def test_nacl_depression_matches_the_crc_table(molality, depression_K):
    # Tolerance: the table's last digit (0.005 K) plus the Melinder fit's deviation; measured at most 0.06 K (2 %).
    w = molality * NACL_KG_MOL / (1.0 + molality * NACL_KG_MOL)
    assert salting.nacl_freezing_depression_K(w) == pytest.approx(depression_K, abs=0.07)


def test_dilute_depression_tends_to_the_colligative_law():
    # Independent: ΔT = i K_f m with i = 2, the cryoscopic constant of water K_f = 1.86 K kg/mol (textbook
    # value, common practice) and an osmotic coefficient near 0.93 at 0.1 mol/kg (from memory): 0.346 K.
    m = 0.1
    w = m * NACL_KG_MOL / (1.0 + m * NACL_KG_MOL)
    assert salting.nacl_freezing_depression_K(w) == pytest.approx(2 * 1.86 * 0.93 * m, rel=0.03)


def test_equilibrium_round_trips_through_the_water_phase():
    for zb in (0.02, 0.1, 0.18, 0.26):
        for xw in (0.4, 0.74):
            c = salting.equilibrium_fraction(zb, xw)
            assert float(salting.water_phase_fraction(c, xw)) == pytest.approx(zb, rel=1e-12)


def test_salt_lowers_the_freezing_point_monotonically():
    tf = [salting.salted_freezing_point_C(-1.0, c, 0.74) for c in (0.0, 0.01, 0.02, 0.04)]
    assert tf[0] == pytest.approx(-1.0)
    assert all(a > b for a, b in zip(tf, tf[1:], strict=False))
    with pytest.raises(InvalidInputError, match="salt_fraction"):
        salting.salted_freezing_point_C(-1.0, 0.3, 0.5)  # water phase past the eutectic


@given(st.one_of(st.floats(max_value=-1e-9), st.floats(min_value=0.71), st.just(float("nan"))))
def test_bad_brine_fraction_is_refused(zb):
    with pytest.raises(InvalidInputError):
        salting.equilibrium_fraction(zb, 0.7)
