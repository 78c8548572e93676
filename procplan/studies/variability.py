"""Variability: Monte Carlo over uncertain inputs, percentiles of time to target and lethality.

Inputs (:data:`VARIABLES`) are drawn from distributions (:data:`DISTRIBUTIONS`: normal, uniform, triangular,
lognormal, each optionally truncated to bounds) by inverse-CDF sampling with a seeded
``numpy.random.Generator``, so the same seed gives the same numbers. Two paths:

* ``"exact"`` (fast): one step, uniform start, constant medium and h, and the engine's exact solver; the
  core history is the product of 1-D eigen-series (Incropera §5.5–5.8) evaluated for all samples at once
  (eigenvalues by vectorised bisection for every sample's Biot number, time to target by vectorised
  bisection in log time on the centre series θ_c(t) = Π_axes Σ_n C_n exp(−ζ_n² α t/L²)), with properties
  taken as the engine takes them (k at the mean of start and medium temperatures, secant c_p);
* ``"run"`` (general): :func:`procplan.run.engine.run_plan` for every sample, optionally through any
  ``concurrent.futures.Executor``.

The worst-case corner run evaluates every combination of the distributions' ends (their bounds, or P1 and
P99 when unbounded) with run_plan and keeps the one with the longest time to target (or, with a lethality
requirement and no target, the smallest F).

References
----------
Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §5.5–5.8.
Bigelow et al. (1920), general method for F (procplan.outcomes.lethality).
"""

from __future__ import annotations

import itertools
import math
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.model import Plan

PERCENTILES = (50.0, 95.0, 99.0)
#: Terms of each 1-D series in the fast path; with Fo ≥ FO_FLOOR the truncation is below 1e-8 in θ.
FAST_TERMS = 20
#: Below this Fo the centre of a slab, cylinder or sphere has not felt the surface (θ_c = 1 within 1e-10).
FO_FLOOR = 0.005


# --- distributions ----------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Distribution:
    """A distribution of one input, optionally truncated to [low, high].

    kind : a key of DISTRIBUTIONS; params : its parameters (see there)
    """

    kind: str
    params: tuple[float, ...]
    low: float | None = None
    high: float | None = None

    def frozen(self):
        return DISTRIBUTIONS[self.kind][0](*self.params)

    def _u_range(self) -> tuple[float, float]:
        d = self.frozen()
        a = 0.0 if self.low is None else float(d.cdf(self.low))
        b = 1.0 if self.high is None else float(d.cdf(self.high))
        return a, b

    def ppf(self, q) -> np.ndarray:
        """Quantiles of the (truncated) distribution."""
        a, b = self._u_range()
        return self.frozen().ppf(a + (b - a) * np.asarray(q, dtype=float))

    def sample(self, rng: np.random.Generator, n: int) -> np.ndarray:
        """``n`` draws by inverse-CDF sampling (exact for the truncated distribution)."""
        u = rng.random(n)
        tiny = 1e-15
        return self.ppf(np.clip(u, tiny, 1.0 - tiny))

    def ends(self) -> tuple[float, float]:
        """The corners used by the worst-case run: the bounds (or the support of a uniform or triangular
        distribution), else P1 and P99."""
        bounded = self.kind in ("uniform", "triangular")
        lo = self.low if self.low is not None else float(self.ppf(0.0 if bounded else 0.01))
        hi = self.high if self.high is not None else float(self.ppf(1.0 if bounded else 0.99))
        return float(lo), float(hi)


def _normal(mean, sd):
    return stats.norm(loc=mean, scale=sd)


def _uniform(low, high):
    return stats.uniform(loc=low, scale=high - low)


def _triangular(low, mode, high):
    return stats.triang(c=(mode - low) / (high - low), loc=low, scale=high - low)


def _lognormal(median, sigma_log):
    return stats.lognorm(s=sigma_log, scale=median)


#: name → (scipy constructor, parameter names). One registry for the API and the CLI.
DISTRIBUTIONS: dict[str, tuple[Callable[..., Any], tuple[str, ...]]] = {
    "normal": (_normal, ("mean", "sd")),
    "uniform": (_uniform, ("low", "high")),
    "triangular": (_triangular, ("low", "mode", "high")),
    "lognormal": (_lognormal, ("median", "sigma_log")),
}


def distribution(
    kind: str, *params: float, low: float | None = None, high: float | None = None
) -> Distribution:
    """A validated :class:`Distribution`.

    normal(mean, sd); uniform(low, high); triangular(low, mode, high); lognormal(median, sigma_log) with
    ln x ~ N(ln median, sigma_log²).

    >>> d = distribution("lognormal", 20.0, 0.2)
    >>> round(float(d.ppf(0.5)), 6)
    20.0
    """
    validate.choice("distribution", kind, DISTRIBUTIONS)
    names = DISTRIBUTIONS[kind][1]
    if len(params) != len(names):
        raise InvalidInputError(f"{kind} parameters", params, f"{len(names)} numbers: " + ", ".join(names))
    p = tuple(validate.number(f"{kind}.{n}", v) for n, v in zip(names, params, strict=True))
    if kind == "normal" and p[1] <= 0:
        raise InvalidInputError("normal.sd", p[1], "> 0")
    if kind == "uniform" and not p[0] < p[1]:
        raise InvalidInputError("uniform.high", p[1], f"> low = {p[0]:g}")
    if kind == "triangular" and not (p[0] <= p[1] <= p[2] and p[0] < p[2]):
        raise InvalidInputError("triangular", p, "low ≤ mode ≤ high, low < high")
    if kind == "lognormal" and (p[0] <= 0 or p[1] <= 0):
        raise InvalidInputError("lognormal", p, "median > 0 and sigma_log > 0")
    lo = None if low is None else validate.number(f"{kind}.low", low)
    hi = None if high is None else validate.number(f"{kind}.high", high)
    if lo is not None and hi is not None and not lo < hi:
        raise InvalidInputError(f"{kind}.high", hi, f"> low = {lo:g}")
    d = Distribution(kind, p, lo, hi)
    a, b = d._u_range()
    if not b - a > 1e-12:
        raise InvalidInputError(f"{kind} bounds", (lo, hi), "a range holding some probability")
    return d


def parse_distribution(text: str) -> Distribution:
    """Parse ``kind:p1,p2[,p3][@low,high]``, e.g. ``normal:74,2@68,80`` or ``lognormal:25,0.2``.

    >>> parse_distribution("normal:74,2@68,80")
    Distribution(kind='normal', params=(74.0, 2.0), low=68.0, high=80.0)
    """
    if not isinstance(text, str) or ":" not in text:
        raise InvalidInputError(
            "distribution", text, "kind:p1,p2[,p3][@low,high], kinds " + ", ".join(DISTRIBUTIONS)
        )
    kind, rest = text.split(":", 1)
    bounds = None
    if "@" in rest:
        rest, bounds = rest.split("@", 1)
    try:
        params = [float(x) for x in rest.split(",") if x.strip()]
        lo = hi = None
        if bounds is not None:
            lo_s, hi_s = bounds.split(",")
            lo = float(lo_s) if lo_s.strip() else None
            hi = float(hi_s) if hi_s.strip() else None
    except ValueError:
        raise InvalidInputError(
            "distribution", text, "numbers after the kind, e.g. normal:74,2@68,80"
        ) from None
    return distribution(kind.strip(), *params, low=lo, high=hi)


# --- inputs that vary --------------------------------------------------------------------------------------
def _apply_start(plan: Plan, v: float, i: int, ctx) -> Plan:
    return replace(plan, start_temperature_C=float(v))


def _apply_size(plan: Plan, v: float, i: int, ctx) -> Plan:
    g = plan.product.geometry
    dims = {
        k: getattr(g, k) * float(v)
        for k in ("thickness_m", "diameter_m", "length_m", "width_m", "height_m")
        if getattr(g, k) is not None
    }
    return replace(plan, product=replace(plan.product, geometry=replace(g, **dims)))


def _given_h(plan: Plan, i: int, h: float, ctx) -> Plan:
    step = plan.steps[i]
    if step.equipment is None:
        return plan.with_step(i, h_W_m2K=float(h))
    return plan.with_step(
        i, h_W_m2K=float(h), medium_C=ctx["medium_C"], equipment=None, settings=(), settings_profile=()
    )


def _apply_h(plan: Plan, v: float, i: int, ctx) -> Plan:
    return _given_h(plan, i, v, ctx)


def _apply_h_factor(plan: Plan, v: float, i: int, ctx) -> Plan:
    step = plan.steps[i]
    if step.equipment is None:
        return plan.with_step(i, h_W_m2K=float(step.h_W_m2K) * float(v))
    return _given_h(plan, i, ctx["h_W_m2K"] * float(v), ctx)


def _apply_water(plan: Plan, v: float, i: int, ctx) -> Plan:
    p = plan.product
    if not p.composition:
        raise InvalidInputError(
            "water_fraction", v, "a product described by its composition", f"{p.name} has fixed properties"
        )
    comp = dict(p.composition)
    w = float(v)
    if not 0.0 < w < 1.0:
        raise InvalidInputError("water_fraction", w, "(0, 1)")
    rest = 1.0 - comp.get("water", 0.0)
    scale = (1.0 - w) / rest if rest > 0 else 0.0
    new = {k: (w if k == "water" else x * scale) for k, x in comp.items()}
    new.setdefault("water", w)
    return replace(plan, product=replace(p, composition=tuple(sorted(new.items()))))


#: name → (description with unit, apply(plan, value, step_index, context) → plan).
VARIABLES: dict[str, tuple[str, Callable[..., Plan]]] = {
    "start_C": ("initial (uniform) product temperature [°C]", _apply_start),
    "size_factor": ("factor on every dimension of the product [-]", _apply_size),
    "h_W_m2K": ("surface coefficient of the step [W/m²K] (a machine step becomes a given-h step)", _apply_h),
    "h_factor": ("factor on the step's nominal surface coefficient [-]", _apply_h_factor),
    "water_fraction": (
        "water mass fraction, the other components scaled to keep the sum 1 [-]",
        _apply_water,
    ),
}


@dataclass(frozen=True, eq=False)
class VariabilityResult:
    """The outcome of a Monte Carlo study.

    samples : one row per sample: the inputs, time_to_target_min (NaN when not reached), lethality_F_min,
        rule_passed
    percentiles : {"time_to_target_min": {"P50", "P95", "P99"}, "lethality_F_min": {...}} (inf when more
        than the complement of the percentile is not reached)
    p_rule_fail, p_not_reached, p_lethality_fail : probabilities (None where not applicable)
    worst : the worst corner {"inputs", "metrics"} and its PlanResult in ``worst_result``
    corners : the corner runs' inputs and key figures
    """

    method: str
    n_samples: int
    seed: int
    samples: pd.DataFrame
    percentiles: dict[str, dict[str, float]]
    p_rule_fail: float | None
    p_not_reached: float | None
    p_lethality_fail: float | None
    worst: dict[str, Any] | None
    worst_result: Any
    corners: pd.DataFrame | None
    seconds: float
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        def clean(x):
            if isinstance(x, dict):
                return {k: clean(v) for k, v in x.items()}
            if isinstance(x, float) and not math.isfinite(x):
                return None
            return x

        return clean(
            {
                "method": self.method,
                "n_samples": self.n_samples,
                "seed": self.seed,
                "percentiles": self.percentiles,
                "p_rule_fail": self.p_rule_fail,
                "p_not_reached": self.p_not_reached,
                "p_lethality_fail": self.p_lethality_fail,
                "worst_corner": self.worst,
                "seconds": self.seconds,
                "notes": list(self.notes),
            }
        )


# --- vectorised exact solution -------------------------------------------------------------------------------
def eigen_vectorised(kind: str, bi: np.ndarray, n_terms: int = FAST_TERMS) -> tuple[np.ndarray, np.ndarray]:
    """Eigenvalues ζ_n and coefficients C_n of a slab, cylinder or sphere for many Biot numbers at once.

    Same eigen-conditions and brackets as :func:`procplan.conduction.series.eigenvalues` (Incropera eqs.
    5.39c, 5.50c, 5.51c; coefficients 5.39b, 5.50b, 5.51b), by bisection vectorised over samples and terms.

    Returns arrays of shape (len(bi), n_terms).

    >>> z, c = eigen_vectorised("slab", np.array([1.0, 10.0]), 1)
    >>> np.round(z[:, 0], 4).tolist(), np.round(c[:, 0], 4).tolist()
    ([0.8603, 1.4289], [1.1191, 1.262])
    """
    from procplan.conduction import series

    b = np.asarray(bi, dtype=float)[:, None]
    lo0, hi0 = series.eigen_brackets(kind, n_terms)
    lo = np.broadcast_to(lo0, (b.shape[0], n_terms)).copy()
    hi = np.broadcast_to(hi0, (b.shape[0], n_terms)).copy()
    s_lo = np.where(np.arange(1, n_terms + 1) % 2 == 0, 1.0, -1.0)
    for _ in range(14):  # bisection to a bracket of width ≤ π/2^14, where Newton converges
        mid = 0.5 * (lo + hi)
        same = np.sign(series.eigen_function(kind, mid, b)) == s_lo
        lo = np.where(same, mid, lo)
        hi = np.where(same, hi, mid)
    z = 0.5 * (lo + hi)
    for _ in range(4):  # safeguarded Newton on the singularity-free eigen-function
        f, df = _eigen_function_and_slope(kind, z, b)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = np.where(df != 0, f / df, 0.0)
        z_new = z - step
        eps = 1e-12 * hi
        z = np.where((z_new >= lo - eps) & (z_new <= hi + eps), z_new, z)
    big = b[:, 0] > series.BI_RANGE[1]
    if np.any(big):
        z[big] = hi0  # Bi → ∞: the bracket's upper end is the limit
    return z, series.coefficients_for_eigenvalues(kind, z)


def _eigen_function_and_slope(kind: str, z: np.ndarray, bi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The eigen-functions of :mod:`procplan.conduction.series` and their derivatives in ζ."""
    from scipy import special

    if kind == "slab":  # f = ζ sin ζ − Bi cos ζ
        s, c = np.sin(z), np.cos(z)
        return z * s - bi * c, s + z * c + bi * s
    if kind == "cylinder":  # f = ζ J1 − Bi J0, (ζ J1)' = ζ J0, J0' = −J1
        j0, j1 = special.j0(z), special.j1(z)
        return z * j1 - bi * j0, z * j0 + bi * j1
    # sphere: f = (1 − Bi) sin ζ/ζ − cos ζ
    s, c = np.sin(z), np.cos(z)
    return (1.0 - bi) * s / z - c, (1.0 - bi) * (z * c - s) / z**2 + s


@dataclass(frozen=True)
class _Fast:
    axes: list  # (z (S,N), c (S,N), alpha/L² (S,))
    start_C: np.ndarray
    medium_C: float

    def theta_core(self, t: np.ndarray) -> np.ndarray:
        """Centre θ for every sample at times t (shape (S,) or (S, M))."""
        out = np.ones_like(t)
        extra = (1,) * (t.ndim - 1)
        for z, c, rate in self.axes:
            fo = rate.reshape(rate.shape + extra) * t
            zz = z.reshape(z.shape[:1] + extra + z.shape[1:])
            cc = c.reshape(c.shape[:1] + extra + c.shape[1:])
            series_sum = np.sum(cc * np.exp(-(zz**2) * fo[..., None]), axis=-1)
            out = out * np.where(fo < FO_FLOOR, 1.0, series_sum)
        return out

    def core_C(self, t: np.ndarray) -> np.ndarray:
        d = (self.start_C - self.medium_C).reshape(self.start_C.shape + (1,) * (t.ndim - 1))
        return self.medium_C + d * self.theta_core(t)

    def time_to(self, target_C, t_max_s: float) -> np.ndarray:
        """First time the core reaches target_C [s] per sample (NaN when not within t_max_s)."""
        target = np.broadcast_to(np.asarray(target_C, dtype=float), self.start_C.shape)
        theta_star = (target - self.medium_C) / (self.start_C - self.medium_C)
        out = np.full(self.start_C.shape, np.nan)
        at_start = theta_star >= 1.0
        out[at_start] = 0.0
        ok = (~at_start) & (theta_star > 0.0)
        if not np.any(ok):
            return out
        rate_max = np.max(np.stack([r for _, _, r in self.axes]), axis=0)
        t_lo = np.full(self.start_C.shape, FO_FLOOR) / rate_max
        reach = ok & (self.theta_core(np.full(self.start_C.shape, float(t_max_s))) <= theta_star)
        lo, hi = np.log(t_lo), np.full(self.start_C.shape, math.log(t_max_s))
        lo = np.minimum(lo, hi)
        for _ in range(10):  # bisection in ln t
            mid = 0.5 * (lo + hi)
            above = self.theta_core(np.exp(mid)) > theta_star
            lo = np.where(above, mid, lo)
            hi = np.where(above, hi, mid)
        # Safeguarded Newton on ln θ(t) − ln θ*, nearly linear in t once the first term dominates.
        t = np.exp(0.5 * (lo + hi))
        ln_star = np.log(np.where(ok, theta_star, 0.5))
        for _ in range(8):
            th, dlnth = self._theta_and_log_slope(t)
            g = np.log(np.maximum(th, 1e-300)) - ln_star
            with np.errstate(divide="ignore", invalid="ignore"):
                t_new = t - np.where(dlnth < 0, g / dlnth, 0.0)
            inside = (t_new >= np.exp(lo) * (1 - 1e-12)) & (t_new <= np.exp(hi) * (1 + 1e-12))
            lo = np.where(g > 0, np.log(t), lo)
            hi = np.where(g <= 0, np.log(t), hi)
            t = np.where(inside, t_new, np.exp(0.5 * (lo + hi)))
        out[reach] = t[reach]
        return out

    def _theta_and_log_slope(self, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """θ_c(t) and d ln θ_c/dt for t of shape (S,)."""
        th = np.ones_like(t)
        slope = np.zeros_like(t)
        for z, c, rate in self.axes:
            fo = rate * t
            e = c * np.exp(-(z**2) * fo[:, None])
            s0 = np.sum(e, axis=1)
            s1 = -rate * np.sum(z**2 * e, axis=1)
            floor = fo < FO_FLOOR
            th = th * np.where(floor, 1.0, s0)
            slope = slope + np.where(floor, 0.0, s1 / np.where(s0 > 0, s0, 1.0))
        return th, slope


def _fast_model(plan: Plan, nominal, samples: dict[str, np.ndarray], ctx) -> _Fast:
    step = plan.steps[0]
    n = len(next(iter(samples.values())))
    props = nominal.properties
    start = np.broadcast_to(samples.get("start_C", plan.start_temperature_C), (n,)).astype(float)
    medium = ctx["medium_C"]
    h = np.full(n, ctx["h_W_m2K"])
    if "h_W_m2K" in samples:
        h = samples["h_W_m2K"].astype(float)
    if "h_factor" in samples:
        base = step.h_W_m2K if step.equipment is None else ctx["h_W_m2K"]
        h = base * samples["h_factor"] * (h / ctx["h_W_m2K"] if "h_W_m2K" in samples else 1.0)
    size = samples.get("size_factor", np.ones(n)).astype(float)
    t_mid = 0.5 * (start + medium)
    k = props.conductivity(t_mid)
    rho = props.mass_density_kg_m3
    dT = medium - start
    with np.errstate(invalid="ignore", divide="ignore"):
        cp = np.where(
            np.abs(dT) > 1e-9,
            (props.enthalpy(np.full(n, medium)) - props.enthalpy(start)) / dT,
            props.apparent_cp(start),
        )
    alpha = k / (rho * cp)
    axes = []
    for ax in plan.product.geometry.axes:
        length = ax.length_m * size
        z, c = eigen_vectorised(ax.kind, h * length / k)
        axes.append((z, c, alpha / length**2))
    return _Fast(axes, start, medium)


def _fast_path_blockers(plan: Plan, nominal, names: set[str]) -> list[str]:
    why = []
    if len(plan.steps) != 1:
        why.append("more than one step")
    elif nominal.steps[0].solver != "exact":
        why.append("the engine uses finite volumes for this plan")
    elif not nominal.steps[0].surface.constant:
        why.append("the medium or h changes during the step")
    if "water_fraction" in names:
        why.append("the composition varies")
    step = plan.steps[0]
    tgt = step.stop_when_core_C is not None or any(t.point == "core" for t in step.targets)
    if not tgt and plan.checks.lethality is None:
        why.append("no core target or lethality check to evaluate")
    if step.targets and step.stop_when_core_C is None and step.targets[0].point != "core":
        why.append("the reported target is not at the core")
    le = plan.checks.lethality
    if le is not None and le.point != "core":
        why.append("lethality is checked off the core")
    return why


def _rule_fast(rule, fast: _Fast, t_end: np.ndarray) -> np.ndarray:
    from procplan.outcomes.rules import RULE_KINDS

    if rule.bands or rule.point != "core" or RULE_KINDS[rule.kind] not in ("down", "up"):
        raise InvalidInputError("rule", rule.name, "stages only, at the core, for the fast path")
    n = fast.start_C.shape[0]
    passed = np.ones(n, dtype=bool)
    prev = np.zeros(n)
    rule_start = None
    t_cap = float(np.nanmax(t_end))
    for s in rule.stages:
        if s.from_C is None:
            start = prev
        else:
            start = fast.time_to(s.from_C, t_cap)
            start = np.where(np.isnan(start) | (start > t_end), np.nan, np.maximum(start, prev))
        if rule_start is None:
            rule_start = start
        end = fast.time_to(s.to_C, t_cap)
        end = np.where(end > t_end, np.nan, end)
        clock0 = rule_start if s.clock == "rule" else start
        ok = ~np.isnan(start) & ~np.isnan(end) & ((end - clock0) / 60.0 <= s.within_min)
        passed &= ok
        prev = np.where(np.isnan(start), prev, start)
    return passed


def monte_carlo(
    plan: Plan,
    distributions: Mapping[str, Distribution],
    *,
    n_samples: int = 1000,
    seed: int = 0,
    library=None,
    step_index: int = 0,
    method: str = "auto",
    executor=None,
    corners: bool = True,
    solver: str | None = None,
    n_nodes=None,
    dt_s: float | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> VariabilityResult:
    """Monte Carlo over the inputs of ``distributions`` (keys of :data:`VARIABLES`).

    Parameters
    ----------
    plan : the plan
    distributions : variable name → :class:`Distribution` (see :func:`distribution`)
    n_samples : number of samples (1 … 1e6)
    seed : seed of ``numpy.random.default_rng``; the same seed gives the same samples and results
    library : resolves machines and rules
    step_index : the step whose h the h variables change
    method : "auto" (the exact fast path when it applies), "exact" (fast path; refused when it does not
        apply) or "run" (run_plan per sample)
    executor : any concurrent.futures.Executor for the "run" path (default: sequential in-process)
    corners : also run the worst-case corners (2^k runs for k variables)
    solver, n_nodes, dt_s : passed to run_plan
    progress : progress(done, total) for the "run" path

    Returns
    -------
    VariabilityResult

    Notes
    -----
    On the fast path with a machine step the machine's h at the nominal plan is held for every sample
    unless h is itself sampled; the automatic choice therefore takes the fast path for a machine step only
    when ``h_W_m2K`` is sampled or only ``h_factor`` varies (the correlation's weak dependence on size and
    start temperature would otherwise be lost).
    """
    from procplan.run.engine import run_plan
    from procplan.studies.runner import make_job, run_jobs

    t0 = time.perf_counter()
    validate.choice("method", method, ("auto", "exact", "run"))
    n = int(validate.number("n_samples", n_samples, minimum=1, maximum=1e6))
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer):
        raise InvalidInputError("seed", seed, "an integer")
    if not distributions:
        raise InvalidInputError("distributions", {}, "at least one variable: " + ", ".join(VARIABLES))
    for name, d in distributions.items():
        validate.choice("variable", name, VARIABLES)
        if not isinstance(d, Distribution):
            raise InvalidInputError(f"distributions[{name}]", d, "a Distribution (see distribution())")
    if "h_W_m2K" in distributions and "h_factor" in distributions:
        raise InvalidInputError("distributions", sorted(distributions), "h_W_m2K or h_factor, not both")
    if not 0 <= step_index < len(plan.steps):
        raise InvalidInputError("step_index", step_index, f"0 … {len(plan.steps) - 1}")
    if library is None and (any(s.equipment for s in plan.steps) or plan.checks.cooling_rule):
        from procplan.files.library import load_library

        library = load_library()
    nominal = run_plan(plan, library=library, solver=solver, n_nodes=n_nodes, dt_s=dt_s)
    sr = nominal.steps[step_index]
    ctx = {"medium_C": float(np.mean(sr.surface.medium_C)), "h_W_m2K": float(np.mean(sr.surface.h_W_m2K))}
    rng = np.random.default_rng(seed)
    names = list(distributions)
    samples = {k: distributions[k].sample(rng, n) for k in names}
    blockers = _fast_path_blockers(plan, nominal, set(names))
    machine = plan.steps[step_index].equipment is not None
    if machine and not ("h_W_m2K" in names or set(names) <= {"h_factor"}):
        machine_block = "the machine's h depends on the sampled size or start temperature"
    else:
        machine_block = None
    notes: list[str] = []
    if method == "exact" and blockers:
        raise InvalidInputError("method", "exact", "auto or run for this plan", "; ".join(blockers))
    fast = method == "exact" or (method == "auto" and not blockers and machine_block is None)
    if method == "exact" and machine_block:
        notes.append(f"machine h held at its nominal {ctx['h_W_m2K']:.3g} W/m²K for every sample")
    frame = pd.DataFrame(samples)
    if fast:
        _fast_run(plan, nominal, samples, ctx, library, frame)
        used = "exact"
    else:
        if method == "auto" and (blockers or machine_block):
            notes.append(
                "run_plan per sample: " + "; ".join(blockers + ([machine_block] if machine_block else []))
            )
        jobs = []
        for j in range(n):
            p = plan
            for k in names:
                p = VARIABLES[k][1](p, float(samples[k][j]), step_index, ctx)
            jobs.append(make_job(j, p, library, solver=solver, n_nodes=n_nodes, dt_s=dt_s))
        outs = run_jobs(jobs, executor=executor, progress=progress)
        errors = [o["error"] for o in outs if o["error"]]
        if errors:
            notes.append(f"{len(errors)} sample(s) invalid, e.g. {errors[0]}")
        rows = [o["metrics"] or {} for o in outs]
        frame["time_to_target_min"] = [r.get("time_to_target_min", math.nan) for r in rows]
        frame["lethality_F_min"] = [r.get("lethality_F_min", math.nan) for r in rows]
        frame["lethality_passed"] = [r.get("lethality_passed") for r in rows]
        frame["rule_passed"] = [r.get("rule_passed") for r in rows]
        used = "run"
    pct = {}
    tt = frame["time_to_target_min"].to_numpy(dtype=float)
    has_target = not all(np.isnan(tt)) or _fast_target(plan) is not None
    if has_target:
        pct["time_to_target_min"] = _percentiles(np.where(np.isnan(tt), np.inf, tt))
    p_not = float(np.mean(np.isnan(tt))) if has_target else None
    fl = frame["lethality_F_min"].to_numpy(dtype=float)
    if plan.checks.lethality is not None:
        pct["lethality_F_min"] = _percentiles(fl, low=True)
    lp = frame["lethality_passed"].dropna()
    p_leth = float(1.0 - lp.astype(bool).mean()) if len(lp) else None
    rp = frame["rule_passed"].dropna()
    p_rule = float(1.0 - rp.astype(bool).mean()) if len(rp) else None
    worst = worst_res = corner_frame = None
    if corners:
        worst, worst_res, corner_frame = _corners(
            plan, distributions, step_index, ctx, library, solver, n_nodes, dt_s
        )
    return VariabilityResult(
        method=used,
        n_samples=n,
        seed=int(seed),
        samples=frame,
        percentiles=pct,
        p_rule_fail=p_rule,
        p_not_reached=p_not,
        p_lethality_fail=p_leth,
        worst=worst,
        worst_result=worst_res,
        corners=corner_frame,
        seconds=time.perf_counter() - t0,
        notes=tuple(notes),
    )


def _percentiles(x: np.ndarray, low: bool = False) -> dict[str, float]:
    """P50, P95, P99 (linear interpolation between order statistics; an infinite neighbour gives inf).

    For lethality the low tail matters: its P95 is the F exceeded by 95 % of samples (the 5th percentile).
    """
    x = np.sort(np.asarray(x, dtype=float)[~np.isnan(np.asarray(x, dtype=float))])
    out = {}
    for p in PERCENTILES:
        q = (100.0 - p) if low else p
        if x.size == 0:
            out[f"P{p:g}"] = math.nan
            continue
        pos = q / 100.0 * (x.size - 1)
        i, j = int(math.floor(pos)), int(math.ceil(pos))
        if not (math.isfinite(x[i]) and math.isfinite(x[j])):
            out[f"P{p:g}"] = math.inf
        else:
            out[f"P{p:g}"] = float(x[i] + (pos - i) * (x[j] - x[i]))
    return out


def _fast_target(plan: Plan) -> float | None:
    step = plan.steps[0]
    if step.stop_when_core_C is not None:
        return step.stop_when_core_C
    core = [t for t in step.targets if t.point == "core"]
    return core[0].temperature_C if core else None


def _fast_run(plan, nominal, samples, ctx, library, frame) -> None:
    fast = _fast_model(plan, nominal, samples, ctx)
    step = plan.steps[0]
    n = fast.start_C.shape[0]
    dur = step.duration_s
    target = _fast_target(plan)
    tt = fast.time_to(target, dur) if target is not None else np.full(n, np.nan)
    frame["time_to_target_min"] = tt / 60.0
    t_end = np.where(np.isnan(tt) | (step.stop_when_core_C is None), dur, tt)
    le = plan.checks.lethality
    if le is not None:
        from procplan.outcomes import lethality_basis

        basis = lethality_basis(le.preset, le.reference_C, le.z_C, le.required_F_min)
        req = basis.required_F_min
        grid = np.linspace(0.0, 1.0, 241)[None, :] * t_end[:, None]
        temp = fast.core_C(grid)
        seg = basis.segments(np.diff(grid, axis=1), temp[:, :-1], temp[:, 1:])
        f = seg.sum(axis=1)
        frame["lethality_F_min"] = f
        frame["lethality_passed"] = (f >= req) if req else None
    else:
        frame["lethality_F_min"] = np.nan
        frame["lethality_passed"] = None
    rule_name = plan.checks.cooling_rule
    if rule_name:
        rule = library.rules[rule_name]
        frame["rule_passed"] = _rule_fast(rule, fast, t_end)
    else:
        frame["rule_passed"] = None


def _corners(plan, distributions, step_index, ctx, library, solver, n_nodes, dt_s):
    from procplan.run.engine import run_plan
    from procplan.studies.metrics import result_metrics

    names = list(distributions)
    ends = [distributions[k].ends() for k in names]
    rows, results = [], []
    for combo in itertools.product(*ends):
        p = plan
        for k, v in zip(names, combo, strict=True):
            p = VARIABLES[k][1](p, v, step_index, ctx)
        try:
            res = run_plan(p, library=library, solver=solver, n_nodes=n_nodes, dt_s=dt_s)
        except InvalidInputError as exc:
            rows.append({**dict(zip(names, combo, strict=True)), "error": str(exc)})
            results.append(None)
            continue
        m = result_metrics(res)
        rows.append({**dict(zip(names, combo, strict=True)), **m, "error": None})
        results.append(res)

    def badness(r):
        if r.get("error"):
            return -math.inf
        t = r.get("time_to_target_min")
        if r.get("target_step"):
            return math.inf if t is None or not math.isfinite(t) else t
        f = r.get("lethality_F_min")
        return -f if f is not None and math.isfinite(f) else -math.inf

    j = max(range(len(rows)), key=lambda i: badness(rows[i]))
    worst = {
        "inputs": {k: rows[j][k] for k in names},
        "metrics": {k: v for k, v in rows[j].items() if k not in names},
    }
    return worst, results[j], pd.DataFrame(rows)


def bench_variability(n_samples: int = 10_000, seed: int = 1) -> dict[str, float]:
    """Timings of the Monte Carlo paths on a series case (a 60 mm cylinder of fixed properties chilled to
    5 °C with a given h, start temperature, size and h varying).

    Returns seconds of the exact fast path for ``n_samples`` samples (``fast_s``, without the corner runs),
    the per-sample cost of the run_plan path (``run_per_sample_s``, from 20 samples) and the samples per
    second of the fast path.
    """
    from procplan.geometry import Geometry
    from procplan.model import FixedProperties, Product, Step

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
