"""The benchmark of the dry-air coupling (``python -m procplan.bench`` prints it): the two demo plans that run
heat and moisture together, the oven roast (one dry-air step, its h evaluated twice) and the jerky dried to a
weight loss (the stop sought on trial spans), with the coupling passes they took."""

from __future__ import annotations

import time

__all__ = ["bench_dry_air"]

#: The demo plans timed, with what each exercises.
DRY_AIR_PLANS = (
    ("beef-joint-oven-roast", "dry-oven roast to 75 °C core, then rest and chill"),
    ("beef-jerky-dry", "jerky dried to 45 % weight loss"),
)


def bench_dry_air(repeats: int = 3) -> list[tuple[str, float, str]]:
    """Median seconds of ``run_plan`` over ``repeats`` runs of each plan of :data:`DRY_AIR_PLANS`, with the
    coupling passes of every solve of its dry-air steps (counted as the runs go), the weight loss and stop."""
    import statistics

    import procplan.run.dry_oven as dry_oven
    from procplan.files.library import load_library
    from procplan.run.engine import run_plan

    lib = load_library()
    rows = []
    for name, what in DRY_AIR_PLANS:
        plan = lib.plan(name)
        passes: list[int] = []
        inner = dry_oven.solve_dry_oven

        def counted(*args, _inner=inner, _passes=passes, **kw):
            res = _inner(*args, **kw)
            _passes.append(res.passes)
            return res

        times, res = [], None
        dry_oven.solve_dry_oven = counted
        try:
            for _ in range(repeats):
                passes.clear()
                t0 = time.perf_counter()
                res = run_plan(plan, library=lib)
                times.append(time.perf_counter() - t0)
        finally:
            dry_oven.solve_dry_oven = inner
        d = next(s.drying for s in res.steps if s.drying is not None)
        stop = "" if d.weight_stop_s is None else f", stop at {d.weight_stop_s / 60:.1f} min"
        rows.append(
            (
                f"dry air: {name}",
                statistics.median(times),
                f"{what}; median of {repeats}; {len(passes)} coupled solves, passes {'+'.join(map(str, passes))} "
                f"= {sum(passes)}; weight loss {d.weight_loss_percent:.2f} %{stop}",
            )
        )
    return rows
