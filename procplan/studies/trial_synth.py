"""Synthetic heat-penetration logger files generated from a plan, with stated noise: for demonstrations and
for tests of the trial analysis (never as a check value of a physical model).

Each product probe is the plan run from its own start temperature (the plan's plus ``start_offset_K``) on a
piece scaled by ``size_factor`` and read at its position; the medium probe is each step's medium
temperature. Readings are sampled every ``sample_s`` after ``lead_s`` of idle record before the step start,
with independent normal noise of standard deviation ``noise_K`` (seeded) and rounded to 0.01 K.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from procplan import validate
from procplan.model import Plan


@dataclass(frozen=True)
class SyntheticProbe:
    """A probe of a synthetic trial: channel name, position (core, surface or mean), piece size factor and
    start-temperature offset [K]."""

    channel: str
    position: str = "core"
    size_factor: float = 1.0
    start_offset_K: float = 0.0


def _scaled(plan: Plan, factor: float) -> Plan:
    g = plan.product.geometry
    dims = {
        k: getattr(g, k) * factor
        for k in ("thickness_m", "diameter_m", "length_m", "width_m", "height_m")
        if getattr(g, k) is not None
    }
    return replace(plan, product=replace(plan.product, geometry=replace(g, **dims)))


def synthetic_trial_csv(
    plan: Plan,
    probes: list[SyntheticProbe],
    *,
    medium_channel: str | None = "medium",
    noise_K: float = 0.1,
    sample_s: float = 60.0,
    lead_s: float = 120.0,
    seed: int = 0,
    library=None,
    header: tuple[str, ...] = (),
) -> str:
    """A logger CSV (``time_min`` and one °C column per probe) of a synthetic trial of ``plan``.

    ``header`` lines are written first as a preamble (the logger reader skips lines before the column
    header), e.g. to say that the file is synthetic and how it was made.
    """
    from procplan.run.engine import run_plan

    noise = validate.number("noise_K", noise_K, minimum=0.0, unit="K")
    dt = validate.positive("sample_s", sample_s, "s")
    lead = validate.number("lead_s", lead_s, minimum=0.0, unit="s")
    rng = np.random.default_rng(int(seed))
    columns: dict[str, np.ndarray] = {}
    end = None
    for p in probes:
        validate.choice(f"{p.channel}.position", p.position, ("core", "surface", "mean"))
        pl = replace(
            _scaled(plan, p.size_factor), start_temperature_C=plan.start_temperature_C + p.start_offset_K
        )
        res = run_plan(pl, library=library, assess=False)
        h = res.history
        end = float(h["time_s"].iloc[-1]) if end is None else min(end, float(h["time_s"].iloc[-1]))
        columns[p.channel] = (
            h["time_s"].to_numpy(),
            h[f"{p.position}_C"].to_numpy(),
            pl.start_temperature_C,
            res,
        )
    t = np.arange(0.0, lead + end + 0.5 * dt, dt)
    rel = t - lead
    out = {"time_min": t / 60.0}
    for ch, (ht, hy, start, res) in columns.items():
        y = np.where(rel < 0, start, np.interp(np.clip(rel, 0.0, None), ht, hy))
        out[ch] = y + rng.normal(0.0, noise, t.size) if noise > 0 else y
        last = res
    if medium_channel:
        m = np.full(t.size, plan.start_temperature_C)
        for sr in last.steps:
            inside = (rel >= sr.start_s) & (rel <= sr.end_s + 1e-9)
            m[inside] = float(np.mean(sr.surface.medium_C))
        out[medium_channel] = m + (rng.normal(0.0, noise, t.size) if noise > 0 else 0.0)
    cols = list(out)
    lines = [*header, ",".join(cols)]
    for i in range(t.size):
        lines.append(",".join(f"{out[c][i]:.2f}" if c != "time_min" else f"{out[c][i]:.3f}" for c in cols))
    return "\n".join(lines) + "\n"
