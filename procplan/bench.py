"""Timing benchmarks of the finite-volume conduction solver: ``python -m procplan.bench``.

(a) 1-D slab freezing, 100 nodes, 24 h: accuracy-time pairs of the finite volume at several step targets and
    of a method-of-lines baseline (``scipy.integrate.solve_ivp``, BDF, apparent-specific-heat formulation,
    tridiagonal Jacobian sparsity) at several rtol, and the time ratio at equal error, interpolated in
    log(error)-log(time) between measured pairs (never extrapolated);
(b) the 2-D demo plan (roulade blast chill, in-process ``run_plan``) and (c) a 3-D brick at 15³ nodes, each
    under the solver settings of :data:`SOLVER_SETTINGS` (present and earlier), with their factorisations;
(d) a brick history at 500 times from the exact series, (e) 2-D finite-cylinder chilling, (f) variability;
the error-controlled freezing runs against solve_ivp and FiPy (an implicit enthalpy formulation,
:mod:`procplan.conduction.fipy_baseline`, installed with the ``bench`` extra) at equal error.

Error of (a): the largest core-temperature difference at 97 times over 24 h from a reference run of the same
finite-volume discretisation with a very small step (0.02 K per step). The baseline discretises the latent
heat differently (apparent c_p on the same grid), so its error includes that difference and has a floor.
Times are medians of several repeats on whatever machine runs this (noisy under load). This module prints;
it is not imported by the library.
"""

from __future__ import annotations

import contextlib
import statistics
import time

import numpy as np
from scipy.integrate import solve_ivp
from scipy.sparse import diags

import procplan.conduction.fv_linear as fv_linear
from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.conduction.fv_grid import build_grid
from procplan.conduction.fv_model import FVModel
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

#: Food-like test material: lean-meat-like constant properties with 250 kJ/kg latent heat over 0.5 K (invented
#: round numbers for timing, not a product's data).
FOOD = PropertyTable.constant(
    0.5, 1050.0, 3600.0, latent_J_kg=250e3, freezing_C=-1.0, frozen_k_W_mK=1.6, frozen_cp_J_kgK=1900.0
)
#: Step targets [K] of the finite volume and rtol of the baseline for the accuracy-time pairs of (a).
FV_TARGETS_K = (2.0, 1.0, 0.5, 0.25, 0.1)
IVP_RTOLS = (1e-3, 1e-4, 1e-5, 1e-6, 1e-7)


def _median_time(fn, repeats: int) -> tuple[float, object]:
    out = None
    ts = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        ts.append(time.perf_counter() - t0)
    return statistics.median(ts), out


def mol_apparent_cp(
    geometry: Geometry,
    props: PropertyTable,
    initial_C: float,
    medium_C: float,
    h_W_m2K: float,
    end_s: float,
    n: int,
    rtol: float,
    t_eval: np.ndarray,
    surface_refinement: float = 0.5,
):
    """Method-of-lines baseline on the same vertex-centred grid: m c_app(T) dT/dt = F(T), solved by BDF."""
    grid = build_grid(geometry, n, surface_refinement)
    m = props.mass_density_kg_m3 * grid.volume_m3
    fg = grid.face_geometry_m
    area = grid.surface_area_m2[0]

    def rhs(_t, T):
        k = props.conductivity(T)
        G = fg * 2 * k[:-1] * k[1:] / (k[:-1] + k[1:])
        flux = G * (T[1:] - T[:-1])
        F = np.zeros_like(T)
        F[:-1] += flux
        F[1:] -= flux
        F[-1] += area * h_W_m2K * (medium_C - T[-1])
        return F / (m * props.apparent_cp(T))

    sparsity = diags([1.0, 1.0, 1.0], [-1, 0, 1], shape=(n, n))
    sol = solve_ivp(
        rhs,
        (0.0, end_s),
        np.full(n, float(initial_C)),
        method="BDF",
        rtol=rtol,
        atol=rtol * 10,
        t_eval=t_eval,
        jac_sparsity=sparsity,
    )
    return sol.y[0], sol.nfev


def time_at_error(pairs: list[tuple[float, float]], error: float) -> float:
    """Time [s] at ``error`` [K] interpolated in log-log between measured (error, time) pairs; NaN outside
    their range (no extrapolation)."""
    pts = sorted((e, t) for e, t in pairs if e > 0)
    es = np.log([e for e, _ in pts])
    if not pts or not (es[0] <= np.log(error) <= es[-1]):
        return float("nan")
    return float(np.exp(np.interp(np.log(error), es, np.log([t for _, t in pts]))))


def bench_freezing(repeats: int = 5) -> list[tuple[str, float, str]]:
    g = Geometry("slab", thickness_m=0.05)
    bc = SurfaceBoundary.constant(-30.0, 20.0)
    end = 24 * 3600.0
    t_eval = np.linspace(0.0, end, 97)
    ref = solve_conduction(g, FOOD, 10.0, bc, end, n_nodes=100, max_step_change_K=0.02, output_time_s=t_eval)
    rows, fv_pairs, ivp_pairs = [], [], []
    for target in FV_TARGETS_K:
        t_fv, fv = _median_time(
            lambda k=target: solve_conduction(g, FOOD, 10.0, bc, end, n_nodes=100, max_step_change_K=k),
            repeats,
        )
        err = float(np.max(np.abs(np.interp(t_eval, fv.time_s, fv.core_C) - ref.core_C)))
        fv_pairs.append((err, t_fv))
        rows.append(
            (
                f"1-D freezing, finite volume, target {target:g} K",
                t_fv,
                f"core error {err:.2e} K, {fv.n_steps} steps",
            )
        )
    for rtol in IVP_RTOLS:
        t_ivp, (core, nfev) = _median_time(
            lambda r=rtol: mol_apparent_cp(g, FOOD, 10.0, -30.0, 20.0, end, 100, r, t_eval),
            max(1, repeats // 2),
        )
        err = float(np.max(np.abs(core - ref.core_C)))
        ivp_pairs.append((err, t_ivp))
        rows.append(
            (
                f"1-D freezing, solve_ivp BDF apparent cp, rtol {rtol:g}",
                t_ivp,
                f"core error {err:.2e} K, {nfev} rhs calls",
            )
        )
    for err, t_fv in fv_pairs:
        t_ivp = time_at_error(ivp_pairs, err)
        note = (
            f"solve_ivp time interpolated at the finite volume's error {err:.2e} K"
            if t_ivp == t_ivp
            else f"no solve_ivp run brackets error {err:.2e} K (not compared)"
        )
        rows.append((f"  ratio solve_ivp / finite volume at equal error {err:.1e} K", t_ivp / t_fv, note))
    return rows


#: The solver settings compared by (b) and (c): (label, exact solves, LU reuse, separable solves). Exact solves
#: (a banded LU per Newton iteration on narrow 2-D grids, a kept LU used directly when it is of the very matrix)
#: with separable systems (one conductivity, one dT/dH, one h) solved by fast diagonalisation are the present
#: solver; without the latter, the solver before them; without exact solves, the kept LU serves as GMRES
#: preconditioner (the solver before those), and without reuse every Newton iteration factorises anew.
SOLVER_SETTINGS = (
    ("new LU every Newton iteration", False, False, False),
    ("LU kept, GMRES (before exact solves)", False, True, False),
    ("exact solves (before fast diagonalisation)", True, True, False),
    ("exact solves, fast diagonalisation (present)", True, True, True),
)


@contextlib.contextmanager
def _solver_setting(exact: bool, reuse: bool, separable: bool = True):
    """Collect the Factorisation of every finite-volume model built inside, with the solver set as given."""
    kept, kept_exact = dict(fv_linear.REUSE_SCALE_CHANGE), fv_linear.EXACT_SOLVES
    kept_separable = fv_linear.SEPARABLE_SOLVES
    made: list = []
    init = FVModel.__init__

    def recording_init(self, *args, **kwargs):
        init(self, *args, **kwargs)
        made.append(self.factors)

    FVModel.__init__ = recording_init
    fv_linear.EXACT_SOLVES = exact
    fv_linear.SEPARABLE_SOLVES = separable
    if not reuse:
        fv_linear.REUSE_SCALE_CHANGE.update({d: -1.0 for d in kept})
    try:
        yield made
    finally:
        FVModel.__init__ = init
        fv_linear.REUSE_SCALE_CHANGE.update(kept)
        fv_linear.EXACT_SOLVES = kept_exact
        fv_linear.SEPARABLE_SOLVES = kept_separable


def _solver_settings(name: str, fn, repeats: int, skip: tuple[str, ...] = ()) -> list[tuple[str, float, str]]:
    """``fn`` timed under each of :data:`SOLVER_SETTINGS` but those labelled in ``skip``, the settings
    interleaved run by run (medians), so that a shared machine's load falls alike on each; the ratios to the
    present solver."""
    times: dict[str, list[float]] = {label: [] for label, *_ in SOLVER_SETTINGS if label not in skip}
    counts: dict[str, object] = {}
    for _ in range(repeats):
        for label, exact, reuse, separable in SOLVER_SETTINGS:
            if label in skip:
                continue
            with _solver_setting(exact, reuse, separable) as made:
                t, _ = _median_time(fn, 1)
            times[label].append(t)
            counts[label] = made[-1]
    rows = []
    for label in times:
        last = counts[label]
        note = (
            f"{last.n_factorisations} factorisations, {last.n_reused} reused-LU solves "
            f"({last.n_gmres_iterations} GMRES iterations), {last.n_iterative} BiCGSTAB solves, "
            f"{last.n_separable} fast-diagonalisation solves per run"
        )
        rows.append((f"{name}, {label}", statistics.median(times[label]), note))
    now = rows[-1][1]
    rows += [
        (f"  ratio {name}: {r[0].split(', ', 1)[1]} / present", r[1] / now, "(in-process)") for r in rows[:-1]
    ]
    return rows


def bench_roulade(repeats: int = 5) -> list[tuple[str, float, str]]:
    """The 2-D demo plan, run in-process by the engine."""
    from procplan.files.library import load_library
    from procplan.run.engine import run_plan

    lib = load_library()
    plan = lib.plan("roulade-blast-chill")
    return _solver_settings("2-D plan roulade-blast-chill", lambda: run_plan(plan, library=lib), repeats)


def bench_loaded_batch(repeats: int = 3) -> list[tuple[str, float, str]]:
    """The roulade chill with the medium solved with the batch (the plan's 120 pieces, within the plant; and
    360 pieces, beyond it) against the single-piece run with the medium held at its set point."""
    from dataclasses import replace

    from procplan.files.library import load_library
    from procplan.model import Load
    from procplan.run.engine import run_plan

    lib = load_library()
    plan = lib.plan("roulade-blast-chill")
    single = replace(plan, load=Load("set-point"))
    t_single, _ = _median_time(lambda: run_plan(single, library=lib, assess=False), repeats)
    rows = [("roulade chill, one piece at the set point", t_single, "empty-machine run")]
    for n in (plan.pieces, 3 * plan.pieces):
        t_n, res = _median_time(lambda n=n: run_plan(plan.with_pieces(n), library=lib, assess=False), repeats)
        ml = res.steps[0].machine_load
        state = (
            "plant held the set point" if ml.held else f"plant at its limit {ml.time_at_limit_s / 60:.0f} min"
        )
        rows.append((f"roulade chill, batch of {n} with the medium", t_n, state))
        rows.append((f"  ratio batch of {n} / one piece", t_n / t_single, "(aim < 1.3)"))
    return rows


def _brick_run(n_nodes: int):
    """The 3-D brick case of (c): 4 h chilling with 500 output times on an n³ grid."""
    times = np.linspace(0.0, 4 * 3600.0, 500)
    g = Geometry("brick", length_m=0.04, width_m=0.05, height_m=0.06)
    props, bc = PropertyTable.constant(0.5, 1050.0, 3600.0), SurfaceBoundary.constant(2.0, 25.0)
    return solve_conduction(g, props, 60.0, bc, times[-1], n_nodes=n_nodes, output_time_s=times)


def bench_brick_15(repeats: int = 3) -> list[tuple[str, float, str]]:
    """3-D brick, 15³ nodes, 4 h chilling with 500 output times."""
    return _solver_settings("3-D brick 15^3", lambda: _brick_run(15), repeats)


def bench_brick(repeats: int = 3) -> list[tuple[str, float, str]]:
    from procplan.conduction.product import exact_history

    g = Geometry("brick", length_m=0.04, width_m=0.05, height_m=0.06)
    k, rho, cp, h = 0.5, 1050.0, 3600.0, 25.0
    times = np.linspace(0.0, 4 * 3600.0, 500)
    props, bc = PropertyTable.constant(k, rho, cp), SurfaceBoundary.constant(2.0, h)
    t_fv, fv = _median_time(
        lambda: solve_conduction(g, props, 60.0, bc, times[-1], output_time_s=times), repeats
    )
    t_ex, ex = _median_time(lambda: exact_history(g, k, rho, cp, h, 60.0, 2.0, times), repeats)
    return [
        ("brick, finite volume 15^3 (500 output times)", t_fv, f"{fv.n_steps} steps"),
        ("brick, exact series (500 times)", t_ex, "product.exact_history"),
        (
            "  FV vs series, max |core difference|",
            float(np.max(np.abs(np.asarray(ex.core_C) - fv.core_C))),
            "K",
        ),
    ]


def bench_finite_cylinder(repeats: int = 3) -> list[tuple[str, float, str]]:
    g = Geometry("finite-cylinder", diameter_m=0.085, length_m=0.24)
    props = PropertyTable.constant(0.48, 1070.0, 3500.0)
    t, r = _median_time(
        lambda: solve_conduction(g, props, 74.0, SurfaceBoundary.constant(-4.0, 22.0), 6 * 3600.0), repeats
    )
    return [
        (
            "2-D finite cylinder chilling 25x25, 6 h",
            t,
            f"{r.n_steps} steps, core {r.core_C[-1]:.1f} °C, balance {r.energy_balance_error:.1e}",
        )
    ]


def bench_studies() -> list[tuple[str, float, str]]:
    """Monte Carlo against one engine run per sample: exact path (series case), batched FV (1-D T-dependent)."""
    from procplan.studies.variability_bench import bench_batch_chill, bench_variability

    b, c = bench_variability(), bench_batch_chill()
    n, m = int(b["n_samples"]), int(c["n_samples"])
    baseline = b["run_per_sample_s"] * n
    return [
        (f"variability, {n} samples, vectorised series", b["fast_s"], "exact fast path"),
        (f"  baseline: {n} engine runs (extrapolated from 20)", baseline, "run_plan per sample"),
        ("  ratio baseline / vectorised", baseline / b["fast_s"], "(times faster)"),
        (f"variability, {m} samples, 1-D T-dependent chill, batched", c["batch_s"], "threads on the cores"),
        (f"  baseline: {m} engine runs (extrapolated from 10)", c["one_at_a_time_s"], "run_plan per sample"),
        (
            "  ratio baseline / batched",
            c["ratio"],
            f"time to 5 °C within {c['max_time_difference_min']:.3f} min",
        ),
    ]


def bench_generated_plans(n: int = 24, seed: int = 7) -> list[tuple[str, float, str]]:
    """The slowest of a generated set of valid plans: the demo plans with their pieces scaled (0.3–3×) and
    their steps lengthened or shortened (0.5–2×), each validated as a file would be and run in full."""
    import copy

    from procplan.errors import InvalidInputError
    from procplan.files.library import load_library
    from procplan.files.plan import plan_from_dict, plan_to_dict
    from procplan.model import DIMENSION_KEYS
    from procplan.run.engine import run_plan

    lib = load_library()
    rng = np.random.default_rng(seed)
    names = sorted(lib.plans)
    timings, refused = [], 0
    for i in range(n):
        name = names[i % len(names)]
        data = copy.deepcopy(plan_to_dict(lib.plan(name)))
        size, span = float(rng.uniform(0.3, 3.0)), float(rng.uniform(0.5, 2.0))
        product = lib.plan(name).product
        for key in DIMENSION_KEYS:
            value = getattr(product.geometry, key[:-3] + "_m")
            if value is not None:
                data["product"][key] = round(value * 1000.0 * size, 3)
        for step in data["steps"]:
            if "duration_min" in step:  # a step may end on its stop alone
                step["duration_min"] = round(step["duration_min"] * span, 3)
        try:
            plan = plan_from_dict(data, library=lib)
            t0 = time.perf_counter()
            run_plan(plan, library=lib)
            timings.append((time.perf_counter() - t0, f"{name}, size ×{size:.2f}, steps ×{span:.2f}"))
        except InvalidInputError:
            refused += 1
    slowest = max(timings) if timings else (float("nan"), "none ran")
    return [
        (
            f"generated plans: slowest of {len(timings)} run",
            slowest[0],
            f"{slowest[1]} ({refused} refused by name)",
        ),
        (
            "generated plans: median",
            statistics.median(t for t, _ in timings) if timings else float("nan"),
            "",
        ),
    ]


# --- error-controlled steps, equal-error ratios, the LAPACK floor (issue: honest benchmark) -----------------

#: Tolerances [K] of the error-controlled finite volume, and the errors [K] at which the methods are compared.
TOLERANCES_K = (0.5, 0.25, 0.1, 0.05, 0.01)
EQUAL_ERRORS_K = (0.25, 0.1, 0.05)


def _lapack_floor_s(n_solves: int, n: int = 100, repeats: int = 3) -> float:
    """Seconds of ``n_solves`` bare LAPACK gtsv solves of an n-cell tridiagonal system (the linear algebra a
    1-D run cannot avoid: one per Newton iteration)."""
    import scipy.linalg.lapack

    gtsv = scipy.linalg.lapack.dgtsv
    lower, upper = -np.ones(n - 1), -np.ones(n - 1)
    diag, rhs = np.full(n, 4.0), np.ones(n)

    def solves():
        for _ in range(n_solves):
            gtsv(lower, diag, upper, rhs)

    return _median_time(solves, repeats)[0]


def bench_error_control(repeats: int = 3) -> list[tuple[str, float, str]]:
    """1-D freezing (the case of :func:`bench_freezing`) with error-controlled steps: measured core error per
    tolerance (steps landing on the 97 comparison times) against a fixed 2 s step reference, the time, the
    bare LAPACK floor for the same number of Newton solves and the overhead factor; then the ratio
    solve_ivp / finite volume at equal error 0.25, 0.1 and 0.05 K (log-log interpolation, never extrapolated)."""
    g = Geometry("slab", thickness_m=0.05)
    bc = SurfaceBoundary.constant(-30.0, 20.0)
    end = 24 * 3600.0
    t_eval = np.linspace(0.0, end, 97)
    ref = solve_conduction(g, FOOD, 10.0, bc, end, n_nodes=100, dt_s=2.0, output_time_s=t_eval)
    rows, fv_pairs, ivp_pairs = [], [], []
    for tol in TOLERANCES_K:
        t_fv, fv = _median_time(
            lambda k=tol: solve_conduction(
                g, FOOD, 10.0, bc, end, n_nodes=100, tolerance_K=k, output_time_s=t_eval
            ),
            repeats,
        )
        err = float(np.max(np.abs(fv.core_C - ref.core_C)))
        floor = _lapack_floor_s(fv.n_iterations)
        fv_pairs.append((err, t_fv))
        rows.append(
            (
                f"1-D freezing, error-controlled, tolerance {tol:g} K",
                t_fv,
                f"core error {err:.3f} K, {fv.n_steps} steps ({fv.n_rejected} rejected), {fv.n_iterations} "
                f"Newton solves; LAPACK floor {floor * 1e3:.1f} ms, overhead ×{t_fv / floor:.0f}, "
                f"balance {fv.energy_balance_error:.1e}",
            )
        )
    for rtol in IVP_RTOLS:
        t_ivp, (core, nfev) = _median_time(
            lambda r=rtol: mol_apparent_cp(g, FOOD, 10.0, -30.0, 20.0, end, 100, r, t_eval),
            max(1, repeats // 2),
        )
        ivp_pairs.append((float(np.max(np.abs(core - ref.core_C))), t_ivp))
    rows += _fipy_rows(g, end, t_eval, ref.core_C, fv_pairs)
    rows += [_equal_error_row("solve_ivp", fv_pairs, ivp_pairs, err) for err in EQUAL_ERRORS_K]
    return rows


def _equal_error_row(other: str, fv_pairs, other_pairs, err: float) -> tuple[str, float, str]:
    """Time of ``other`` over the error-controlled FV's at equal error ``err`` [K] (log-log interpolation, never
    extrapolated); where every FV run was more accurate than ``err``, its fastest such run bounds the ratio."""
    t_fv, t_other = time_at_error(fv_pairs, err), time_at_error(other_pairs, err)
    how = "both interpolated"
    if t_fv != t_fv:
        within = [t for e, t in fv_pairs if e <= err]
        t_fv = min(within) if within else float("nan")
        how = "FV: its fastest run with a smaller error, so the ratio is a lower bound"
    return (
        f"  ratio {other} / error-controlled FV at equal error {err:g} K",
        t_other / t_fv,
        f"FV {t_fv:.3f} s, {other} {t_other:.3f} s ({how}; n/a outside the measured range)",
    )


#: Fixed steps [s] of the FiPy baseline (100 cells, as the other runs of the freezing case).
FIPY_STEPS_S = (900.0, 300.0, 100.0, 30.0)


def _fipy_rows(g: Geometry, end: float, t_eval: np.ndarray, ref_core_C: np.ndarray, fv_pairs) -> list:
    """FiPy (implicit enthalpy formulation, :mod:`procplan.conduction.fipy_baseline`) on the freezing case:
    accuracy-time pairs, and its time over the error-controlled FV's at equal error (log-log interpolation)."""
    from procplan.conduction.fipy_baseline import fipy_slab_freezing

    rows, pairs = [], []
    for dt in FIPY_STEPS_S:
        t_run, run = _median_time(
            lambda d=dt: fipy_slab_freezing(FOOD, g.thickness_m / 2, 100, 10.0, -30.0, 20.0, end, d), 1
        )
        err = float(np.max(np.abs(np.interp(t_eval, run.time_s, run.core_C) - ref_core_C)))
        pairs.append((err, t_run))
        rows.append(
            (
                f"1-D freezing, FiPy implicit enthalpy, step {dt:g} s",
                t_run,
                f"core error {err:.3f} K, {run.n_steps} steps, {run.n_solves} linear solves",
            )
        )
    rows += [_equal_error_row("FiPy", fv_pairs, pairs, err) for err in EQUAL_ERRORS_K]
    return rows


def bench_brick_21_31(repeats: int = 1) -> list[tuple[str, float, str]]:
    """3-D brick at 21³ and 31³ nodes (the case of :func:`bench_brick_15`): the present solver against the one
    before fast diagonalisation (Jacobi BiCGSTAB above ``fv_linear.DIRECT_MAX_CELLS``; at 31³ about a minute
    on a quiet machine, so timed once)."""
    quick = tuple(label for label, exact, *_ in SOLVER_SETTINGS if not exact)
    rows = []
    for n in (21, 31):
        rows += _solver_settings(f"3-D brick {n}^3", lambda n=n: _brick_run(n), repeats, skip=quick)
    return rows


def bench_app_recompute(repeats: int = 5) -> list[tuple[str, float, str]]:
    """The app's recompute after a setting change of the roulade plan (the default plan of the app; the
    AppTest in a separate interpreter): the median over ``repeats`` changes of the first air temperature, with
    the present solver and with the solver before its exact solves (the two interpreters one after the other)."""
    import os
    import subprocess
    import sys

    app_file = os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))), "app.py")
    if not os.path.exists(app_file):
        return [("app recompute after a setting change", float("nan"), "app.py not found beside the package")]
    rows = []
    for setting in ("before", "present"):
        out = subprocess.run(
            [sys.executable, "-m", "procplan.ui.bench_app", app_file, str(repeats), setting],
            capture_output=True,
            text=True,
            check=False,
        )
        value, _, label = (out.stdout.strip().splitlines() or ["nan"])[-1].partition(" ")
        rows.append(
            (
                f"app recompute after a setting change (AppTest, roulade), {setting} solver",
                float(value) if value.replace(".", "", 1).isdigit() else float("nan"),
                f"median of {repeats}, input {label}" if label else out.stderr.strip()[-200:],
            )
        )
    rows.append(("  ratio app recompute: before / present", rows[0][1] / rows[1][1], "(same run)"))
    return rows


def bench_cli_startup(repeats: int = 3) -> list[tuple[str, float, str]]:
    """Wall time of ``procplan --help``, ``procplan run vial-cool-down`` (exact series) and ``procplan run
    roulade-blast-chill`` (finite volume) in a fresh interpreter (medians), beside the bare interpreter and
    the libraries the vial run cannot start without (history, Bessel functions, air properties)."""
    floor = "import numpy, pandas, scipy.special, CoolProp.CoolProp"
    import subprocess
    import sys

    rows = []
    for args in (["--help"], ["run", "vial-cool-down"], ["run", "roulade-blast-chill"]):

        def call(a=args):
            subprocess.run([sys.executable, "-m", "procplan.cli.main", *a], capture_output=True, check=False)

        t, _ = _median_time(call, repeats)
        rows.append(
            (f"CLI start-up: procplan {' '.join(args)}", t, f"median of {repeats}, fresh interpreter")
        )
    t, _ = _median_time(
        lambda: subprocess.run([sys.executable, "-c", "pass"], capture_output=True, check=False), repeats
    )
    rows.append(("  bare interpreter start (floor)", t, "python -c pass"))
    t, _ = _median_time(lambda: subprocess.run([sys.executable, "-c", floor], capture_output=True), repeats)
    rows.append(("  libraries a run needs (floor of a run)", t, floor))
    return rows


def main() -> None:
    """Run every case and print its rows as soon as they are measured (a failing case loses only its own)."""
    from procplan.run.dry_bench import bench_dry_air
    from procplan.studies.variability_bench import bench_roulade_variability

    cases = (
        bench_freezing,
        bench_roulade,
        bench_loaded_batch,
        bench_brick_15,
        bench_brick,
        bench_finite_cylinder,
        bench_studies,
        bench_generated_plans,
        bench_error_control,
        bench_brick_21_31,
        bench_roulade_variability,
        bench_app_recompute,
        bench_cli_startup,
        bench_dry_air,
    )
    width = 72
    print(f"{'case':<{width}}  {'value':>10}  notes", flush=True)
    for case in cases:
        for name, value, note in case():
            # ratios and differences are indented lines that start with their kind ("iteration" has "ratio")
            unit = "" if name.lstrip().startswith(("ratio", "FV vs series")) else " s"
            text = "n/a" if value != value else (f"{value:.4f}{unit}" if unit else f"{value:.3f}")
            print(f"{name:<{width}}  {text:>10}  {note}", flush=True)


if __name__ == "__main__":
    main()
