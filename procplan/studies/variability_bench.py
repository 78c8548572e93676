"""The benchmarks of the variability study (``python -m procplan.bench`` prints them): the exact series path
on a fixed-property cylinder, the roulade plan on the full-model path, and the batched path (10,000 samples
of a 1-D temperature-dependent chill, batched against one engine run per sample)."""

from __future__ import annotations

import time

import numpy as np

from procplan.geometry import Geometry
from procplan.model import Plan, Product, Step
from procplan.studies.variability import distribution, monte_carlo

__all__ = ["bench_batch_chill", "bench_roulade_variability", "bench_variability"]


def bench_batch_chill(n_samples: int = 10_000, seed: int = 1, n_single: int = 10) -> dict[str, float]:
    """The batched path against one run_plan per sample on a 1-D temperature-dependent chill: a 60 mm cylinder
    of lean beef (Choi–Okos properties) from about 70 °C to a core of 5 °C in air at 0 °C, start temperature,
    size and h varying. Returns the batched seconds for ``n_samples``, the one-at-a-time seconds extrapolated
    from ``n_single`` run_plan runs, their ratio and the largest difference of the time to target between the
    batched and the one-at-a-time runs of ``n_single`` samples [min] (equal accuracy)."""
    beef = {"water": 0.74, "protein": 0.22, "fat": 0.03, "carbohydrate": 0.0, "ash": 0.01}
    prod = Product(
        "bench beef cylinder", Geometry("cylinder", diameter_m=0.06), composition=tuple(beef.items())
    )
    plan = Plan("bench", prod, 70.0, (Step("chill", 8 * 3600.0, 5.0, medium_C=0.0, h_W_m2K=25.0),))
    dists = {
        "start_C": distribution("normal", 70.0, 2.0, low=60.0, high=80.0),
        "size_factor": distribution("triangular", 0.9, 1.0, 1.15),
        "h_W_m2K": distribution("lognormal", 25.0, 0.2),
    }
    t = time.perf_counter()
    batched = monte_carlo(plan, dists, n_samples=n_samples, seed=seed, corners=False, method="batch")
    batch_s = time.perf_counter() - t
    t = time.perf_counter()
    single = monte_carlo(
        plan, dists, n_samples=n_single, seed=seed, corners=False, method="run", executor=None
    )
    single_s = (time.perf_counter() - t) / n_single
    few = monte_carlo(plan, dists, n_samples=n_single, seed=seed, corners=False, method="batch")
    same = few.samples["time_to_target_min"].to_numpy()
    diff = float(np.max(np.abs(same - single.samples["time_to_target_min"].to_numpy())))
    return {
        "n_samples": float(n_samples),
        "batch_s": batch_s,
        "one_at_a_time_s": single_s * n_samples,
        "ratio": single_s * n_samples / batch_s,
        "max_time_difference_min": diff,
        "p50_min": batched.percentiles["time_to_target_min"]["P50"],
    }


def bench_variability(n_samples: int = 10_000, seed: int = 1) -> dict[str, float]:
    """Timings of the Monte Carlo paths on a series case (a 60 mm cylinder of fixed properties chilled to
    5 °C with a given h, start temperature, size and h varying).

    Returns seconds of the exact fast path for ``n_samples`` samples (``fast_s``, without the corner runs),
    the per-sample cost of the run_plan path (``run_per_sample_s``, from 20 samples) and the samples per
    second of the fast path.
    """
    from procplan.model import FixedProperties

    prod = Product(
        "bench cylinder",
        Geometry("cylinder", diameter_m=0.06),
        fixed_properties=FixedProperties(0.5, 1050.0, 3600.0),
    )
    plan = Plan("bench", prod, 70.0, (Step("chill", 6 * 3600.0, 5.0, medium_C=0.0, h_W_m2K=25.0),))
    dists = {
        "start_C": distribution("normal", 70.0, 2.0, low=60.0, high=80.0),
        "size_factor": distribution("triangular", 0.9, 1.0, 1.15),
        "h_W_m2K": distribution("lognormal", 25.0, 0.2),
    }
    monte_carlo(plan, dists, n_samples=100, seed=seed, corners=False)  # warm caches and imports
    t = time.perf_counter()
    r = monte_carlo(plan, dists, n_samples=n_samples, seed=seed, corners=False)
    fast_s = time.perf_counter() - t
    t = time.perf_counter()
    monte_carlo(plan, dists, n_samples=20, seed=seed, method="run", corners=False)
    run_s = (time.perf_counter() - t) / 20
    return {
        "n_samples": float(n_samples),
        "fast_s": fast_s,
        "fast_samples_per_s": n_samples / fast_s,
        "run_per_sample_s": run_s,
        "p50_min": r.percentiles["time_to_target_min"]["P50"],
    }


def bench_roulade_variability(n_samples: int = 40) -> list[tuple[str, float, str]]:
    """Variability of the roulade plan on the full-model path (start temperature sampled): ``n_samples`` runs
    in one process and with the default (a process pool when it pays), and the 1,000-sample time extrapolated
    from them."""
    from procplan.files.library import load_library
    from procplan.studies.runner import default_workers
    from procplan.studies.variability import distribution, monte_carlo

    lib = load_library()
    plan = lib.plan("roulade-blast-chill")
    dist = {"start_C": distribution("uniform", 70.0, 78.0)}
    rows = []
    for executor, label in ((None, "one process"), ("auto", f"default ({default_workers()} cores)")):
        t0 = time.perf_counter()
        monte_carlo(
            plan, dist, n_samples=n_samples, library=lib, method="run", corners=False, executor=executor
        )
        t = time.perf_counter() - t0
        rows.append(
            (f"variability roulade, {n_samples} samples, {label}", t, f"{t / n_samples:.2f} s per sample")
        )
        rows.append((f"  1,000 samples extrapolated, {label}", t / n_samples * 1000, "from the run above"))
    return rows
