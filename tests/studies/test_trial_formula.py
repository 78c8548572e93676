"""Ball's process time with g from the idealised heating line: the closed form against direct numerical
integration of the lethal rate along the line, the inverse, and B by hand."""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as hs
from numpy.testing import assert_allclose
from scipy import integrate

from procplan.errors import InvalidInputError
from procplan.studies.formula_method import CurveFactors
from procplan.studies.trial_formula import fh_over_u_heating, formula_process_time, g_from_fh_over_u


@pytest.mark.parametrize(
    "g,z,f", [(0.1, 10.0, 20.0), (3.0, 10.0, 35.0), (10.0, 8.0, 50.0), (25.0, 18.0, 12.0)]
)
def test_closed_form_against_direct_integration(g, z, f):
    # Independent method: U = ∫_{-∞}^{B} 10^(−(T_R − T)/z) dt along T_R − T = g 10^((B − t)/f), by
    # scipy.integrate.quad over s = B − t ≥ 0; the closed form is f/U = ln10 / E₁(ln10 g/z)
    # (Abramowitz & Stegun §5.1 for E₁).
    # (beyond s_max the rate is below 10^-300: cut there to keep 10^(s/f) finite)
    s_max = f * math.log10(300.0 * z / g)
    u, _ = integrate.quad(
        lambda s: 10.0 ** (-g * 10.0 ** (s / f) / z), 0.0, s_max, limit=400, epsabs=0, epsrel=1e-11
    )
    assert_allclose(fh_over_u_heating(g, z), f / u, rtol=1e-7)


@given(hs.floats(0.01, 60.0), hs.floats(2.0, 30.0))
def test_inverse_round_trip(g, z):
    assert_allclose(g_from_fh_over_u(fh_over_u_heating(g, z), z), g, rtol=1e-8)


def test_b_by_hand():
    # Ball (1923): B = f_h (log10(j_h I_h) − log10 g), here f_h = 30 min, j_h = 1.6, I_h = 100 K, corrected
    # zero 3 min after the step start, F = 6 min at 121.1 °C with z 10 °C in a 118 °C medium:
    # U = 6 · 10^(3.1/10) min.
    cf = CurveFactors("heating", 1800.0, 1.6, 118.0, 18.0, -42.0, 180.0, 310.0, (0.0, 1.0), 5, 0.0, "window")
    r = formula_process_time(cf, 6.0, 121.1, 10.0, general_time_s=60.0 * 80.0)
    u = 6.0 * 10**0.31
    g = g_from_fh_over_u(30.0 / u, 10.0)
    b = 30.0 * (math.log10(1.6 * 100.0) - math.log10(g))
    assert_allclose([r.u_min, r.g_K, r.b_min, r.from_start_min], [u, g, b, 3.0 + b], rtol=1e-12)
    assert_allclose(r.difference_percent, 100.0 * (3.0 + b - 80.0) / 80.0, rtol=1e-12)


def test_bad_input():
    cool = CurveFactors("cooling", 1800.0, 1.6, 1.0, 80.0, 90.0, 0.0, 0.0, (0.0, 1.0), 5, 0.0, "window")
    with pytest.raises(InvalidInputError, match="factors"):
        formula_process_time(cool, 6.0, 121.1, 10.0)
    with pytest.raises(InvalidInputError, match="fh_over_u"):
        g_from_fh_over_u(1e60, 10.0)
    with pytest.raises(InvalidInputError, match="z_C"):
        fh_over_u_heating(1.0, 0.0)
