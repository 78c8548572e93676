"""Fick's second law on the finite-volume path: Crank's series, mass balance, bounds, refinement, D(c), surfaces."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import integrate, optimize, sparse, special

from procplan.conduction import diffusion
from procplan.conduction.fv_boundary import TimeProfile
from procplan.conduction.transport import solve_diffusion, transport_table
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry

D = 2e-10  # m²/s, the order of salt in meat and cheese
HALF = 0.01  # m, half-thickness or radius
FO = np.geomspace(0.01, 1.0, 13)  # mass Fourier numbers D t / L²
TIMES = FO * HALF**2 / D

SHAPES = {
    "slab": Geometry("slab", thickness_m=2 * HALF),
    "cylinder": Geometry("cylinder", diameter_m=2 * HALF),
    "sphere": Geometry("sphere", diameter_m=2 * HALF),
}


# --- Crank's series (written here from the book's formulas, independent of the project's eigen-solver) ----------
def crank_sheet_4_18(fo):
    # Source: Crank, The Mathematics of Diffusion, 2nd ed., 1975, eq. 4.18 (p. 48), sheet of full thickness l:
    # M_t/M_∞ = 1 − Σ 8/((2n+1)²π²) exp(−D(2n+1)²π² t/l²); with the half-thickness L, D t/l² = Fo/4.
    k = (2 * np.arange(0, 400)[:, None] + 1) ** 2
    return 1.0 - np.sum(8.0 / (k * np.pi**2) * np.exp(-k * np.pi**2 * fo / 4.0), axis=0)


def crank_cylinder_5_23(fo):
    # Crank 1975, eq. 5.23 (from memory): 1 − Σ 4/(a²α_n²) exp(−D α_n² t), J0(a α_n) = 0 (scipy's Bessel zeros).
    aa = special.jn_zeros(0, 400)[:, None]
    return 1.0 - np.sum(4.0 / aa**2 * np.exp(-(aa**2) * fo), axis=0)


def crank_sphere_6_20(fo):
    # Source: Crank 1975, eq. 6.20 (p. 91): M_t/M_∞ = 1 − (6/π²) Σ (1/n²) exp(−D n²π² t/a²).
    n = np.arange(1, 400)[:, None]
    return 1.0 - 6.0 / np.pi**2 * np.sum(np.exp(-(n**2) * np.pi**2 * fo) / n**2, axis=0)


def crank_sheet_centre_4_17(fo):
    # Crank 1975, eq. 4.17 at x = 0 (from memory; the same series in polykin's profile_sheet citing Crank p. 47):
    # (C − C_0)/(C_s − C_0) = 1 − (4/π) Σ (−1)^n/(2n+1) exp(−(2n+1)²π² Fo/4).
    n = np.arange(0, 400)[:, None]
    return 1.0 - 4.0 / np.pi * np.sum(
        (-1.0) ** n / (2 * n + 1) * np.exp(-((2 * n + 1) ** 2) * np.pi**2 * fo / 4.0), axis=0
    )


def _roots(func, brackets):
    return np.array([optimize.brentq(func, a, b, xtol=1e-14) for a, b in brackets])


def crank_sheet_4_55(fo, big_l, n=200):
    # Crank 1975, eq. 4.55 (from memory): 1 − Σ 2L² exp(−β²T)/(β²(β² + L² + L)), β tan β = L, L = l α/D.
    b = _roots(
        lambda x: x * np.sin(x) - big_l * np.cos(x),
        [((k - 1) * np.pi, (k - 0.5) * np.pi) for k in range(1, n + 1)],
    )[:, None]
    return 1.0 - np.sum(2 * big_l**2 * np.exp(-(b**2) * fo) / (b**2 * (b**2 + big_l**2 + big_l)), axis=0)


def crank_cylinder_5_52(fo, big_l, n=200):
    # Crank 1975, eq. 5.52 (from memory): 1 − Σ 4L² exp(−β²T)/(β²(β² + L²)), β J1(β) = L J0(β).
    edges = np.concatenate(([1e-12], special.jn_zeros(1, n - 1)))
    b = _roots(
        lambda x: x * special.j1(x) - big_l * special.j0(x),
        list(zip(edges, special.jn_zeros(0, n), strict=True)),
    )[:, None]
    return 1.0 - np.sum(4 * big_l**2 * np.exp(-(b**2) * fo) / (b**2 * (b**2 + big_l**2)), axis=0)


def crank_sphere_6_43(fo, big_l, n=200):
    # Crank 1975, eqs. 6.41 and 6.43: β cot β + L − 1 = 0, 1 − Σ 6L² exp(−β²T)/(β²(β² + L(L − 1))).
    b = _roots(
        lambda x: x * np.cos(x) + (big_l - 1.0) * np.sin(x),
        [((k - 1) * np.pi + 1e-12, k * np.pi - 1e-12) for k in range(1, n + 1)],
    )[:, None]
    return 1.0 - np.sum(6 * big_l**2 * np.exp(-(b**2) * fo) / (b**2 * (b**2 + big_l * (big_l - 1))), axis=0)


CRANK = {"slab": crank_sheet_4_18, "cylinder": crank_cylinder_5_23, "sphere": crank_sphere_6_20}
CRANK_SURFACE = {"slab": crank_sheet_4_55, "cylinder": crank_cylinder_5_52, "sphere": crank_sphere_6_43}


def _at_times(r, times):
    """History values at the requested times (the history also holds t = 0)."""
    idx = np.searchsorted(r.time_s, times)
    assert_allclose(r.time_s[idx], times, rtol=1e-9)
    return idx


# --- Crank, constant surface concentration and surface coefficient, on finite volumes ---------------------------
@pytest.mark.parametrize("kind", list(SHAPES))
def test_fv_uptake_with_constant_surface_matches_crank(kind):
    # Tolerance 0.5 % (relative uptake) over Fo 0.01…1; measured 0.17 % (41 nodes) and 0.04 % (81 nodes).
    r = solve_diffusion(SHAPES[kind], D, 0.0, 100.0, TIMES[-1], output_time_s=TIMES, n_nodes=41)
    got = r.mean[_at_times(r, TIMES)] / 100.0
    assert_allclose(got, CRANK[kind](FO), rtol=5e-3)
    assert r.mass_balance_error < 5e-3


def test_fv_sheet_centre_matches_crank_4_17():
    # Tolerance: 0.5 % of the change C_s − C_0 (the centre value is ~0 at Fo = 0.01); measured 1e-4.
    r = solve_diffusion(SHAPES["slab"], D, 10.0, 110.0, TIMES[-1], output_time_s=TIMES)
    got = (r.centre[_at_times(r, TIMES)] - 10.0) / 100.0
    assert_allclose(got, crank_sheet_centre_4_17(FO), atol=5e-3)
    assert_allclose(got, crank_sheet_centre_4_17(FO), atol=1e-3)


@pytest.mark.parametrize("kind", list(SHAPES))
@pytest.mark.parametrize("bi_m", [0.1, 1.0, 10.0, 100.0])
def test_fv_uptake_with_surface_coefficient_matches_crank(kind, bi_m):
    # Tolerance 0.5 % over Fo 0.01…1 (the brief); measured at most 0.15 % with 41 nodes (Bi_m = 10).
    r = solve_diffusion(SHAPES[kind], D, 0.0, 1.0, TIMES[-1], k_m_m_s=bi_m * D / HALF, output_time_s=TIMES)
    got = r.mean[_at_times(r, TIMES)]
    assert_allclose(got, CRANK_SURFACE[kind](FO, bi_m), rtol=5e-3)
    # the series path agrees with the same references (tests/conduction/test_diffusion.py): the two paths agree
    series = diffusion.uptake_fraction(SHAPES[kind], D, TIMES, k_m_m_s=bi_m * D / HALF)
    assert_allclose(got, series, rtol=5e-3)


def test_fv_finite_cylinder_and_brick_match_newman_products_of_crank():
    # Independent: Newman's product of Crank's cylinder (eq. 5.23) and sheet (eq. 4.18) series; 2-D and 3-D grids
    # are coarser (25 and 11 nodes per axis): tolerance 1 % of uptake, measured below 0.6 % from Fo = 0.05.
    g = Geometry("finite-cylinder", diameter_m=0.02, length_m=0.03)
    fo = FO[FO >= 0.05]
    t = fo * 0.01**2 / D
    r = solve_diffusion(g, D, 0.0, 1.0, t[-1], output_time_s=t)
    want = 1.0 - (1.0 - crank_cylinder_5_23(fo)) * (1.0 - crank_sheet_4_18(fo * (0.01 / 0.015) ** 2))
    assert_allclose(r.mean[_at_times(r, t)], want, rtol=1e-2)
    b = Geometry("brick", length_m=0.04, width_m=0.03, height_m=0.02)
    r = solve_diffusion(b, D, 0.0, 1.0, t[-1], output_time_s=t, n_nodes=11, max_step_change=0.02)
    want = 1.0 - np.prod([1.0 - crank_sheet_4_18(fo * (0.01 / h) ** 2) for h in (0.02, 0.015, 0.01)], axis=0)
    assert_allclose(r.mean[_at_times(r, t)], want, rtol=1e-2)


# --- invariants -------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("kind", list(SHAPES))
@pytest.mark.parametrize("k_m", [1e-9, 1e-7, math.inf])
@pytest.mark.parametrize(("c0", "ceq"), [(0.0, 40.0), (60.0, 5.0)])
def test_mass_balance_and_bounds(kind, k_m, c0, ceq):
    g = SHAPES[kind]
    r = solve_diffusion(g, D, c0, ceq, 2e6, k_m_m_s=k_m)
    # mass balance: the amount taken up (∫ rate dt, trapezoidal) against the change of the amount in the piece
    assert r.mass_balance_error < 5e-3
    amount = g.volume_m3 * (r.mean[-1] - c0)
    assert r.uptake[-1] == pytest.approx(amount, rel=5e-3)
    lo, hi = min(c0, ceq), max(c0, ceq)
    slack = 1e-6 * (hi - lo)
    for arr in (r.centre, r.surface, r.mean, r.final_field.ravel()):
        assert np.all((arr >= lo - slack) & (arr <= hi + slack))
    # monotone approach to equilibrium
    assert np.all(np.diff(r.mean) * np.sign(ceq - c0) >= -slack)


def test_uptake_converges_under_refinement():
    # Error against Crank eq. 6.20 (sphere, Fo = 0.05) falls with the grid; second order in space roughly.
    fo = 0.05
    want = float(crank_sphere_6_20(np.array([fo]))[0])
    errs = []
    for n in (11, 21, 41, 81):
        r = solve_diffusion(SHAPES["sphere"], D, 0.0, 1.0, fo * HALF**2 / D, n_nodes=n, max_step_change=0.002)
        errs.append(abs(r.mean[-1] - want))
    assert errs[0] > errs[1] > errs[2] > errs[3]
    assert errs[-1] < 0.2 * errs[1]


# --- concentration-dependent D against an independent method of lines ----------------------------------------
def _mol_reference(d_of_c, c0, cs, half, t_end, n=801):
    """Cell-centred method of lines on a uniform grid of a slab half-thickness (symmetry at 0, c = cs at the
    surface), face D by the arithmetic mean of the two sides, integrated by scipy's BDF to rtol 1e-8."""
    dx = half / n

    def rhs(_t, c):
        ext = np.r_[c, cs]
        df = 0.5 * (d_of_c(ext[:-1]) + d_of_c(ext[1:]))
        flux = df * np.diff(ext) / dx
        flux[-1] *= 2.0  # the last face is half a cell from the surface
        return (np.r_[flux] - np.r_[0.0, flux[:-1]]) / dx

    pattern = sparse.diags([1.0, 1.0, 1.0], [-1, 0, 1], shape=(n, n))
    sol = integrate.solve_ivp(
        rhs, (0.0, t_end), np.full(n, c0), method="BDF", rtol=1e-8, atol=1e-10, jac_sparsity=pattern
    )
    c = sol.y[:, -1]
    return float(c.mean()), float(np.interp(0.0, (np.arange(n) + 0.5) * dx, c))


@pytest.mark.parametrize("beta", [math.log(5.0), -math.log(5.0)])
def test_concentration_dependent_diffusivity_against_method_of_lines(beta):
    # D = D0 exp(β c/c_s), a five-fold change over the range (Crank 1975, ch. 9, treats this exponential law;
    # his tabulated results could not be read, so the reference is an independent fine-grid method of lines).
    # Tolerance 0.5 % of the change (mean and centre); measured about 0.1 %.
    def d_of_c(c):
        return D * np.exp(beta * np.asarray(c) / 1.0)

    t_end = 0.3 * HALF**2 / D
    mean_ref, centre_ref = _mol_reference(d_of_c, 0.0, 1.0, HALF, t_end)
    r = solve_diffusion(SHAPES["slab"], d_of_c, 0.0, 1.0, t_end, n_nodes=81)
    assert r.mean[-1] == pytest.approx(mean_ref, abs=5e-3)
    assert r.centre[-1] == pytest.approx(centre_ref, abs=5e-3)
    assert r.mass_balance_error < 5e-3
    # and it differs clearly from a constant D at either end, so the test can tell
    r_const = solve_diffusion(SHAPES["slab"], D, 0.0, 1.0, t_end, n_nodes=81)
    assert abs(r_const.mean[-1] - mean_ref) > 0.05


# --- time-varying surface conditions ---------------------------------------------------------------------------
@pytest.mark.parametrize("k_m", [math.inf, 5 * D / HALF])
def test_step_change_of_the_surface_value_is_the_superposition_of_two_series(k_m):
    # Brine at 100 until t1, then fresh water (0): by linearity (Duhamel), C̄(t) = 100 [U(t) − U(t − t1)] with U the
    # series uptake of a unit step (Crank 1975, eq. 4.18 / 4.55 through procplan.conduction.diffusion).
    g = SHAPES["slab"]
    t1, t_end = 0.2 * HALF**2 / D, 0.6 * HALF**2 / D
    ceq = TimeProfile.steps([0.0, t1], [100.0, 0.0], hold_last=True)
    outs = np.linspace(0.0, t_end, 13)[1:]
    r = solve_diffusion(
        g, D, 0.0, ceq, t_end, k_m_m_s=k_m, output_time_s=outs, concentration_range=(0.0, 100.0)
    )
    u = diffusion.uptake_fraction(g, D, outs, k_m_m_s=k_m)
    u_late = np.where(
        outs > t1, diffusion.uptake_fraction(g, D, np.maximum(outs - t1, 0.0), k_m_m_s=k_m), 0.0
    )
    assert_allclose(r.mean[_at_times(r, outs)], 100.0 * (u - u_late), atol=0.5)


def test_time_varying_mass_transfer_coefficient_and_profiles():
    # k_m from a profile; the profile snapshots equal the field of a run that ends at that time.
    g = SHAPES["cylinder"]
    km = ([0.0, 1e5, 2e5], [1e-8, 1e-7, 1e-7])
    r = solve_diffusion(g, D, 0.0, 10.0, 2e5, k_m_m_s=km, profile_time_s=[1e5])
    r1 = solve_diffusion(g, D, 0.0, 10.0, 1e5, k_m_m_s=km)
    assert_allclose(r.profiles[0], r1.final_field, atol=1e-6)
    assert r.profile_time_s.tolist() == [1e5]
    # the surface coefficient rose tenfold: faster uptake than with the first value held
    r_slow = solve_diffusion(g, D, 0.0, 10.0, 2e5, k_m_m_s=1e-8)
    assert r.mean[-1] > r_slow.mean[-1] * 1.5
    assert r.mass_balance_error < 5e-3


def test_surface_flux_only_gives_the_exact_amount():
    # A constant flux j into the surface: the amount taken up is j A t exactly (no exchange with c_eq).
    g = SHAPES["sphere"]
    j = 1e-6  # amount per m² per s
    r = solve_diffusion(
        g,
        D,
        0.0,
        0.0,
        1e5,
        k_m_m_s=None,
        surface_flux=lambda t, c: j + 0.0 * c,
        concentration_range=(0.0, 50.0),
    )
    assert r.uptake[-1] == pytest.approx(j * g.area_m2 * 1e5, rel=1e-6)
    assert g.volume_m3 * r.mean[-1] == pytest.approx(j * g.area_m2 * 1e5, rel=5e-3)


# --- stops -------------------------------------------------------------------------------------------------------
@pytest.mark.parametrize("kind", list(SHAPES))
def test_stops_at_centre_and_mean_targets_match_the_series_inverses(kind):
    g = SHAPES[kind]
    t_c = diffusion.time_to_centre_concentration(g, D, 0.0, 10.0, 4.0)
    r = solve_diffusion(g, D, 0.0, 10.0, 5 * t_c, stop_when_centre=4.0)
    assert r.stopped_on == "centre"
    assert r.stopped_at_s == pytest.approx(t_c, rel=5e-3)
    assert r.centre[-1] == pytest.approx(4.0, abs=1e-3)
    t_m = diffusion.time_to_uptake(g, D, 0.6)
    r = solve_diffusion(g, D, 0.0, 10.0, 5 * t_m, stop_when_mean=6.0)
    assert r.stopped_on == "mean"
    assert r.stopped_at_s == pytest.approx(t_m, rel=5e-3)
    assert r.mean[-1] == pytest.approx(6.0, abs=0.03)


def test_carrying_a_result_on_continues_the_run():
    g = SHAPES["slab"]
    a = solve_diffusion(g, D, 0.0, 10.0, 1e5)
    b = solve_diffusion(g, D, a, 10.0, 1e5)
    whole = solve_diffusion(g, D, 0.0, 10.0, 2e5)
    assert b.mean[-1] == pytest.approx(whole.mean[-1], rel=2e-3)
    assert b.mean[0] == pytest.approx(a.mean[-1], rel=1e-5)


# --- the parametrisation and bad input -------------------------------------------------------------------------
def test_table_is_the_conduction_parametrisation():
    t = transport_table(lambda c: D * (1 + c), 2.0, (0.0, 1.0))
    # "conductivity" = capacity × D(c) on the mapped field u = 100 c; "density" = capacity; H = u
    assert float(t.conductivity(50.0)) == pytest.approx(2.0 * D * 1.5)
    assert float(t.density(50.0)) == 2.0
    assert float(t.apparent_cp(50.0)) == pytest.approx(1.0)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"D_m2_s": -1e-10}, "D_m2_s"),
        ({"D_m2_s": lambda c: 0.0 * c}, "D_m2_s"),
        ({"k_m_m_s": -1.0}, "k_m_m_s"),
        ({"k_m_m_s": None}, "k_m_m_s"),
        ({"capacity": 0.0}, "capacity"),
        ({"end_time_s": 0.0}, "end_time_s"),
        ({"geometry": "slab"}, "geometry"),
        ({"concentration_range": (1.0, 0.0)}, "concentration_range"),
        ({"stop_when_centre": 1.0, "stop_when_mean": 1.0}, "stop_when_mean"),
        ({"profile_time_s": [2e9]}, "profile_time_s"),
    ],
)
def test_bad_input_names_the_field(kwargs, field):
    args = {"geometry": SHAPES["slab"], "D_m2_s": D, "initial": 0.0, "equilibrium": 1.0, "end_time_s": 1e4}
    args.update(kwargs)
    with pytest.raises(InvalidInputError) as err:
        solve_diffusion(**args)
    assert err.value.field == field


@settings(max_examples=15, deadline=None)
@given(
    d=st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=3)),
    km=st.one_of(st.floats(max_value=0.0), st.text(max_size=3)),
)
def test_bad_numbers_raise_invalid_input(d, km):
    with pytest.raises(InvalidInputError):
        solve_diffusion(SHAPES["slab"], d, 0.0, 1.0, 1e3, k_m_m_s=km if km != 0.0 else -1.0)
