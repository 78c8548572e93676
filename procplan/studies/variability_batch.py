"""Variability on the batched finite-volume path: every sample of a 1-D, one-step plan in one stacked run.

A plan whose single step the engine solves by finite volumes (temperature-dependent properties, freezing) on a
slab, infinite cylinder or sphere, in a constant medium with a constant h, is run for all samples at once by
:func:`procplan.conduction.fv_batch_run.solve_conduction_batch`: the same discrete equations and Newton
iteration as the engine's solver, the samples stacked (split over threads on the machine's cores), time steps
shared by a batch and chosen for its worst sample. Each sample's time to the core target is interpolated in
its history; the lethality is integrated on the core history exactly as for the other paths (exact
integral of the lethal rate on each linear segment) and the cooling rule is checked by
:func:`procplan.outcomes.rules.check_rule` on each sample's core history.

Which way the errors go: the time to target is interpolated linearly between the batch's steps; a core
curve that flattens toward the medium lies below the chord (cooling) or above it (heating), so the chord
crosses the target later and the time comes out long — on the safe side for a cooling time, while a
lethality integrated up to that later stop counts a few extra seconds near the target (optimistic by as
much). At the batch's own steps the times to 5 °C of the benchmark chill were within 0.05 min of the engine's
one-at-a-time runs (``python -m procplan.bench``). A sample the engine would refuse (start outside the
property table, a size the product rules refuse) is left out and counted invalid, as on the run path.

References
----------
Voller, V.R. & Swaminathan, C.R. (1991), Numerical Heat Transfer B 19:175–189 (enthalpy-Newton iteration).
Bigelow et al. (1920), general method for F (procplan.outcomes.lethality).
"""

from __future__ import annotations

from concurrent.futures import ThreadPoolExecutor, as_completed

import numpy as np

from procplan.conduction.fv_batch import scaled_geometry
from procplan.conduction.fv_batch_run import BatchConductionResult, solve_conduction_batch
from procplan.errors import InvalidInputError
from procplan.files.product import check_proportions
from procplan.outcomes.rules import check_rule
from procplan.run.budget import ENERGY_BALANCE_LIMIT
from procplan.studies.runner import stop_requested

__all__ = ["batch_blockers", "batch_count", "batch_run"]


def batch_count(n_samples: int) -> int:
    """Batches of a study: one below 1,000 samples, else one per 2,500 samples, 2 to 4. Fixed by the number of
    samples, not the machine's cores, so that the same seed gives the same numbers everywhere (each batch
    chooses its own common steps); they run on threads, up to the machine's cores."""
    return 1 if n_samples < 1000 else min(4, max(2, n_samples // 2500))


def batch_blockers(plan, nominal, fast_blockers: list[str]) -> list[str]:
    """Why the batched path cannot run this plan ([] when it can). ``fast_blockers`` are the exact path's
    reasons (``variability._fast_path_blockers`` and the machine rule); the batch lifts the one about finite
    volumes and adds its own."""
    why = [b for b in fast_blockers if b != "the engine uses finite volumes for this plan"]
    if len(plan.steps) != 1 or not nominal.steps:
        return why
    step, sr = plan.steps[0], nominal.steps[0]
    if sr.solver != "finite-volume":
        why.append("the engine does not use finite volumes for this plan")
    if len(plan.product.geometry.axes) != 1:
        why.append("the product is not 1-D (a slab, infinite cylinder or sphere)")
    if plan.packing is not None:
        why.append("the plan is a packed load")
    if step.brine is not None:
        why.append("the step is a brining step")
    if not sr.surface.constant:
        why.append("the medium or h changes during the step, or the surface evaporates")
    if getattr(sr, "machine_load", None) is not None:
        why.append("the step runs in a loaded machine")
    return why


def _histories(plan, nominal, samples: dict, ctx, h: np.ndarray, n_nodes, dt_s, workers: int, running):
    """The batched runs of the samples (split over ``workers`` threads): a list of (indices, result) of the
    batches that ran, which samples are valid, the first refusal in words and whether the stop flag ended
    the study early.
    ``running`` = (progress, stop): progress(done, total) after each batch; a set stop ends the study after
    the batches then finished (batches not yet started are dropped)."""
    step = plan.steps[0]
    n = len(h)
    start = np.broadcast_to(samples.get("start_C", plan.start_temperature_C), (n,)).astype(float)
    size = np.asarray(samples.get("size_factor", np.ones(n)), dtype=float)
    ok, error = _valid(plan, nominal.properties, start, size)
    parts = [ix for ix in np.array_split(np.nonzero(ok)[0], batch_count(int(ok.sum()))) if ix.size]

    def run(ix):
        return ix, solve_conduction_batch(
            plan.product.geometry,
            nominal.properties,
            start[ix],
            ctx["medium_C"],
            h[ix],
            step.duration_s,
            size_factor=size[ix],
            n_nodes=41 if n_nodes is None else int(n_nodes),
            dt_s=dt_s,
            stop_when_core_C=_target(plan),
        )

    done, stopped = _run_parts(run, parts, min(len(parts), max(1, workers)), n - int(ok.sum()), n, running)
    return done, ok, error, stopped


def _run_parts(run, parts: list, workers: int, done: int, n: int, running):
    """``run`` on each part (on ``workers`` threads), progress and the stop flag after each: (results in the
    order of ``parts``, stopped early)."""
    progress, stop = running
    out: dict[int, tuple] = {}

    def finished(i: int, res) -> bool:
        nonlocal done
        out[i] = res
        done += res[0].size
        if progress is not None:
            progress(done, n)
        return len(out) < len(parts) and stop_requested(stop)

    if workers <= 1:
        for i, ix in enumerate(parts):
            if finished(i, run(ix)):
                break
    else:
        with ThreadPoolExecutor(max_workers=workers) as pool:
            futures = {pool.submit(run, ix): i for i, ix in enumerate(parts)}
            try:
                for f in as_completed(futures):
                    if finished(futures[f], f.result()):
                        break
            finally:  # a stop (or an error) drops the batches not started; the running ones end first
                for f in futures:
                    f.cancel()
        for f, i in futures.items():  # those that were running when the stop came are done too
            if i not in out and not f.cancelled() and f.exception() is None:
                out[i] = f.result()
    return [out[i] for i in sorted(out)], len(out) < len(parts)


def _valid(plan, props, start: np.ndarray, size: np.ndarray) -> tuple[np.ndarray, str | None]:
    """The samples the engine would run (a start inside the property table, a size the product rules allow)
    and the first refusal in words (None when every sample is valid)."""
    lo, hi = float(props.temperature_C[0]), float(props.temperature_C[-1])
    ok = (start >= lo) & (start <= hi)
    error = (
        None if ok.all() else f"start_C {start[~ok][0]:g} °C outside the property table ({lo:g} … {hi:g} °C)"
    )

    def refusal(f: float) -> str | None:
        try:
            g = scaled_geometry(plan.product.geometry, float(f))
            check_proportions(g, prefix=f"size_factor {float(f):g} gives product.")
        except InvalidInputError as exc:
            return str(exc)
        return None

    # scaling keeps the proportions, so the allowed sizes are an interval: its ends first
    if refusal(size.min()) or refusal(size.max()):
        refused = [refusal(f) for f in size]
        ok &= np.array([r is None for r in refused])
        error = error or next(r for r in refused if r)
    return ok, error


def _target(plan):
    step = plan.steps[0]
    if step.stop_when_core_C is not None:
        return step.stop_when_core_C
    core = [t for t in step.targets if t.point == "core"]
    return core[0].temperature_C if core else None


def _until(res: BatchConductionResult, t_end: np.ndarray, stop_C: np.ndarray):
    """Each history cut at its own end time: times and core temperatures (S, m), the last point at t_end; a
    history stopped on the core (``stop_C`` not NaN) ends on the stop temperature itself, as the engine's."""
    t = res.time_s[None, :]
    j = np.clip(np.searchsorted(res.time_s, t_end), 1, res.time_s.size - 1)
    rows = np.arange(t_end.size)
    t0, t1 = res.time_s[j - 1], res.time_s[j]
    c0, c1 = res.core_C[rows, j - 1], res.core_C[rows, j]
    core_end = c0 + (c1 - c0) * np.clip((t_end - t0) / (t1 - t0), 0.0, 1.0)
    core_end = np.where(np.isnan(stop_C), core_end, stop_C)
    inside = t <= t_end[:, None]
    return np.where(inside, t, t_end[:, None]), np.where(inside, res.core_C, core_end[:, None])


def batch_run(
    plan, nominal, samples: dict, ctx, h: np.ndarray, library, frame, options, running=(None, None)
) -> tuple[list[str], np.ndarray | None]:
    """Every sample on the batched path; fills the frame's metrics and returns the notes and, when the stop
    flag ended the study early, which samples were done (None when all were). ``options`` = (n_nodes, dt_s,
    workers); ``running`` = (progress, stop), see :func:`_histories`."""
    n_nodes, dt_s, workers = options
    step = plan.steps[0]
    n = len(h)
    tt, t_end = np.full(n, np.nan), np.full(n, float(step.duration_s))
    f_min, rule_ok = np.full(n, np.nan), np.full(n, None, dtype=object)
    parts, ok, error, ended_early = _histories(
        plan, nominal, samples, ctx, h, n_nodes, dt_s, workers, running
    )
    target, le, rule_name = _target(plan), plan.checks.lethality, plan.checks.cooling_rule
    basis = None
    if le is not None:
        from procplan.outcomes import lethality_basis

        basis = lethality_basis(le.preset, le.reference_C, le.z_C, le.required_F_min)
    worst_balance, n_steps = 0.0, []
    for ix, res in parts:
        if target is not None:
            tt[ix] = res.time_to_core(target)
            if step.stop_when_core_C is not None:
                t_end[ix] = np.where(np.isnan(tt[ix]), step.duration_s, tt[ix])
        stopped = np.full(ix.size, np.nan)
        if step.stop_when_core_C is not None:
            stopped = np.where(np.isnan(tt[ix]), np.nan, step.stop_when_core_C)
        times, core = _until(res, t_end[ix], stopped)
        if basis is not None:  # the exact integral of the lethal rate on each linear segment
            f_min[ix] = basis.segments(np.diff(times, axis=1), core[:, :-1], core[:, 1:]).sum(axis=1)
        if rule_name:
            rule = library.rules[rule_name]
            rule_ok[ix] = [check_rule(rule, *_distinct(times[k], core[k])).passed for k in range(ix.size)]
        worst_balance = max(worst_balance, float(res.energy_balance_error.max()))
        n_steps.append(res.n_steps)
    frame["time_to_target_min"] = tt / 60.0
    frame["lethality_F_min"] = f_min
    req = basis.required_F_min if basis is not None else None
    frame["lethality_passed"] = [None if np.isnan(f) else bool(f >= req) for f in f_min] if req else None
    frame["rule_passed"] = rule_ok if rule_name else None
    notes = [
        f"batched finite volumes: {n} samples in {len(parts)} batch(es) of {', '.join(map(str, n_steps))} "
        f"common time steps; largest energy-balance error {worst_balance:.2%}"
    ]
    kept = None
    if ended_early:  # the invalid samples and those of the finished batches
        kept = ~ok
        for ix, _ in parts:
            kept[ix] = True
        notes.append(
            f"stopped: {int(kept.sum())} of {n} samples done ({len(parts)} batch(es) finished); the results "
            "are those of the samples done"
        )
    n_bad = int((~ok).sum())
    if n_bad:
        notes.append(f"{n_bad} sample(s) invalid, e.g. {error}")
    if worst_balance > ENERGY_BALANCE_LIMIT:
        notes.append(
            f"some samples' energy balance is off by more than {ENERGY_BALANCE_LIMIT:.0%}: give a smaller dt_s"
        )
    return notes, kept


def _distinct(t: np.ndarray, c: np.ndarray):
    keep = np.r_[True, np.diff(t) > 0]
    return t[keep], c[keep]
