"""Distributions of uncertain inputs for the variability study, sampled by inverse CDF.

normal, uniform, triangular and lognormal (:data:`DISTRIBUTIONS`, one registry for the API and the CLI),
each optionally truncated to bounds; draws by inverse-CDF sampling with a seeded ``numpy.random.Generator``,
so the same seed gives the same numbers.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import stats

from procplan import validate
from procplan.errors import InvalidInputError


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
