"""One-sided statistical tolerance bounds of a normal sample: the k-factor method.

A lower one-sided tolerance bound L = x̄ − k₁ s is, with confidence γ, below at least the proportion p of
the population (x̄ the sample mean, s the sample standard deviation with n − 1 in the denominator). The
exact factor comes from the noncentral t distribution:

    k₁ = t'_{n−1, γ}(δ) / √n,   δ = z_p √n,

t'_{ν, γ}(δ) the γ-quantile of the noncentral t distribution with ν degrees of freedom and noncentrality δ,
z_p the p-quantile of the standard normal distribution (scipy.stats.nct and scipy.stats.norm).

For a lethality, a lognormal model (the bound computed on log₁₀ F and raised back) keeps the bound
positive; the normal model on F itself is the textbook case.

References
----------
NIST/SEMATECH e-Handbook of Statistical Methods, §7.2.6.3 "Tolerance intervals for a normal distribution"
(https://www.itl.nist.gov/div898/handbook/prc/section2/prc263.htm).
Natrella, M.G., Experimental Statistics, NBS Handbook 91, 1963, ch. 2.
Meeker, W.Q., Hahn, G.J., Escobar, L.A., Statistical Intervals, 2nd ed., Wiley, 2017, ch. 4.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from procplan import validate
from procplan.errors import InvalidInputError

#: Models of the sample's distribution for the bound.
TOLERANCE_MODELS: dict[str, str] = {
    "normal": "normal distribution of the values themselves",
    "lognormal": "normal distribution of the base-10 logarithms of the values (positive values only)",
}

#: Default proportion covered and confidence of a lower tolerance bound (common practice in process
#: validation; say which in every report).
DEFAULT_PROPORTION = 0.99
DEFAULT_CONFIDENCE = 0.95


def one_sided_k_factor(n: int, proportion: float, confidence: float) -> float:
    """Exact one-sided normal tolerance factor k₁ = t'_{n−1, γ}(z_p √n)/√n (noncentral t).

    Parameters
    ----------
    n : sample size, ≥ 2
    proportion : proportion p of the population to lie above the lower bound, in (0, 1)
    confidence : confidence γ, in (0, 1)

    Examples
    --------
    NIST/SEMATECH e-Handbook §7.2.6.3: n = 43, p = 0.90, γ = 0.99 gives k₁ = 1.8752 by the handbook's
    approximation; the exact factor is within 0.2 % of it.

    >>> round(one_sided_k_factor(43, 0.90, 0.99), 2)
    1.87
    """
    n = int(validate.number("n", n, minimum=2))
    p = validate.number("proportion", proportion, minimum=0.0, maximum=1.0, min_inclusive=False)
    g = validate.number("confidence", confidence, minimum=0.0, maximum=1.0, min_inclusive=False)
    if p >= 1.0 or g >= 1.0:
        raise InvalidInputError("proportion and confidence", (p, g), "each below 1")
    delta = float(stats.norm.ppf(p)) * math.sqrt(n)
    return float(stats.nct.ppf(g, n - 1, delta)) / math.sqrt(n)


@dataclass(frozen=True)
class ToleranceBound:
    """A lower one-sided tolerance bound and the statistics it rests on.

    n : sample size; mean, sd : sample mean and standard deviation (n − 1) of the values; k : the factor;
    proportion, confidence : p and γ; model : a key of :data:`TOLERANCE_MODELS`; lower : the bound (in the
    values' unit); log_mean, log_sd : the statistics of log₁₀ values for the lognormal model (else None)
    """

    n: int
    mean: float
    sd: float
    k: float
    proportion: float
    confidence: float
    model: str
    lower: float
    log_mean: float | None = None
    log_sd: float | None = None

    @property
    def text(self) -> str:
        """One line for reports."""
        return (
            f"lower bound {self.lower:.4g} with {self.confidence:.0%} confidence for {self.proportion:.0%} of "
            f"units ({self.model} model, n = {self.n}, k = {self.k:.4f})"
        )


def lower_tolerance_bound(
    values,
    *,
    proportion: float = DEFAULT_PROPORTION,
    confidence: float = DEFAULT_CONFIDENCE,
    model: str = "normal",
) -> ToleranceBound:
    """Lower one-sided tolerance bound x̄ − k₁ s of a sample (or 10^(mean − k₁ sd) of its logarithms).

    >>> b = lower_tolerance_bound([10.0, 12.0, 11.0, 13.0, 9.0], proportion=0.9, confidence=0.95)
    >>> b.n, round(b.mean, 3), round(b.sd, 4), round(b.k, 3), round(b.lower, 3)
    (5, 11.0, 1.5811, 3.407, 5.613)
    """
    x = validate.array("values", values)
    x = x.ravel()
    validate.choice("model", model, TOLERANCE_MODELS)
    if x.size < 2:
        raise InvalidInputError("values", f"{x.size} value(s)", "at least 2 values (runs) for a spread")
    k = one_sided_k_factor(x.size, proportion, confidence)
    mean, sd = float(np.mean(x)), float(np.std(x, ddof=1))
    if model == "normal":
        return ToleranceBound(x.size, mean, sd, k, proportion, confidence, model, mean - k * sd)
    if np.any(x <= 0):
        raise InvalidInputError("values", float(x.min()), "> 0 for the lognormal model")
    lx = np.log10(x)
    lm, ls = float(np.mean(lx)), float(np.std(lx, ddof=1))
    return ToleranceBound(x.size, mean, sd, k, proportion, confidence, model, 10.0 ** (lm - k * ls), lm, ls)
