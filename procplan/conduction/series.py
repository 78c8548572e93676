"""Exact eigen-series solutions of 1-D transient conduction with a convective surface.

A body at uniform initial temperature T_i is put at t = 0 into a medium at T∞ with a constant surface
coefficient h. With θ = (T − T∞)/(T_i − T∞), x* = x/L (slab, L = half-thickness) or r* = r/r_o
(cylinder, sphere), Bi = h L/k and Fo = α t/L², the exact solutions are (Incropera §5.5–5.6):

=========  =============================  ====================================  ===============================
kind       eigen-condition                C_n                                   θ_n(x*) / Fo-decay exp(−ζ_n² Fo)
=========  =============================  ====================================  ===============================
slab       ζ tan ζ = Bi          (5.39c)  4 sin ζ / (2ζ + sin 2ζ)        (5.39b)  cos(ζ x*)              (5.39a)
cylinder   ζ J1(ζ)/J0(ζ) = Bi    (5.50c)  (2/ζ) J1(ζ) / (J0²(ζ) + J1²(ζ)) (5.50b) J0(ζ r*)               (5.50a)
sphere     1 − ζ cot ζ = Bi      (5.51c)  4 [sin ζ − ζ cos ζ]/(2ζ − sin 2ζ) (5.51b) sin(ζ r*)/(ζ r*)      (5.51a)
=========  =============================  ====================================  ===============================

θ(x*, Fo) = Σ C_n exp(−ζ_n² Fo) θ_n(x*), and the volume mean θ̄ = Σ C_n exp(−ζ_n² Fo) w_n with
w_n = sin ζ/ζ (slab), 2 J1(ζ)/ζ (cylinder), 3 (sin ζ − ζ cos ζ)/ζ³ (sphere); the heat fraction is
Q/Q0 = 1 − θ̄ (Incropera eqs. 5.46, 5.51, 5.52 in their one-term form).

Eigenvalues
-----------
The n-th root lies in a known interval where the (singularity-free) eigen-function changes sign once:
slab ((n−1)π, (n−½)π), cylinder (j1,(n−1), j0,n) (zeros of J1, with j1,0 = 0, and of J0), sphere
((n−1)π, nπ). Each is found by vectorised bisection to machine precision for 0 < Bi < ∞; Bi = ∞ gives the
limits (n−½)π, j0,n and nπ. Eigenvalues and coefficients are cached per (kind, Bi).

Truncation
----------
Every eigenvalue satisfies ζ_n ≥ (n−1)π and |C_n θ_n|, |C_n w_n| ≤ C_max for n ≥ 2 (C_max = 4/(2π−1) < 1 for
the slab, 1.07 for the cylinder (numerical supremum of 2|J1|/(ζ(J0²+J1²)) over ζ ≥ j1,1), 4(1+π)/(2π−1) < 3.2
for the sphere). The error after N terms is therefore at most
C_max [exp(−a N²) + √π/(2√a) erfc(N√a)], a = π² Fo_min,
and N is chosen so that this bound is below the tolerance (1e-8 in θ by default) at the smallest positive
Fo requested; N grows like 1/√Fo_min. At Fo = 0 the result is θ = 1 exactly (the initial condition).

Short times
-----------
For 0 < Fo < FO_SHORT (1e-7, where the series would need thousands of terms) the heat has penetrated less
than 1e-3 L, and the semi-infinite solid with convection (Incropera eq. 5.60) is used at the depth
(1 − x*) L, with its integral for the mean. It is exact for the slab (the far face is felt as erfc(1/√Fo));
for the cylinder and sphere curvature changes 1 − θ by a relative O(√Fo), an error reported as
√Fo · min(1, 2 Bi √(Fo/π)) (an estimate, not a bound).

References
----------
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat and Mass Transfer, 7th ed.,
Wiley, 2011, §5.5–5.6 (eqs. 5.39–5.52, Table 5.1).
Carslaw, H.S., Jaeger, J.C., Conduction of Heat in Solids, 2nd ed., Oxford, 1959, §3.11, §7.8, §9.4.
"""

from __future__ import annotations

import math
import threading
from collections import OrderedDict
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import special

from procplan import validate
from procplan.errors import InvalidInputError

#: The 1-D problems with a series solution.
KINDS: tuple[str, ...] = ("slab", "cylinder", "sphere")

#: Default bound on the truncation error in θ.
DEFAULT_TOL = 1e-8

#: Most terms ever used; reached only for Fo_min below about 5e-9 (the bound is then reported as achieved).
MAX_TERMS = 20000

#: Below this Fo the series (which would need more than ~5000 terms) gives way to the short-time solution of
#: the semi-infinite solid with convection (Incropera eq. 5.60) at the depth (1 − x*) L.
FO_SHORT = 1e-7

#: Bi range in which the eigenvalues are found by root-finding; Bi = inf is accepted as the limit.
BI_RANGE: tuple[float, float] = (1e-12, 1e8)

#: Upper bound of |C_n θ_n| and |C_n w_n| for n >= 2 (see the module notes).
_C_MAX: dict[str, float] = {
    "slab": 4.0 / (2.0 * math.pi - 1.0),
    "cylinder": 1.07,
    "sphere": 4.0 * (1.0 + math.pi) / (2.0 * math.pi - 1.0),
}

_CACHE_SIZE = 256
_cache: OrderedDict[tuple[str, float], tuple[np.ndarray, np.ndarray]] = OrderedDict()
_cache_lock = threading.Lock()


# --- inputs ------------------------------------------------------------------------------------------
def _kind(kind: str) -> str:
    return validate.choice("kind", kind, KINDS)


def _bi(bi: Any) -> float:
    if (
        isinstance(bi, int | float | np.floating | np.integer)
        and not isinstance(bi, bool)
        and math.isinf(bi)
        and bi > 0
    ):
        return math.inf
    return validate.number("bi", bi, minimum=BI_RANGE[0], maximum=BI_RANGE[1], unit="(or inf)")


def _n_terms(n: Any) -> int:
    if isinstance(n, bool) or not isinstance(n, int | np.integer) or not 1 <= n <= MAX_TERMS:
        raise InvalidInputError("n_terms", n, f"an integer from 1 to {MAX_TERMS}")
    return int(n)


def _fo(fo: Any) -> np.ndarray:
    return validate.array("fo", fo, minimum=0.0)


def _x_star(x_star: Any) -> np.ndarray:
    return validate.array("x_star", x_star, minimum=0.0, maximum=1.0)


# --- eigenvalues -------------------------------------------------------------------------------------
def _eigen_function(kind: str, z: np.ndarray, bi: float) -> np.ndarray:
    """Singularity-free forms of the eigen-conditions, negative at the left end of the n-th interval for odd n."""
    if kind == "slab":
        return z * np.sin(z) - bi * np.cos(z)
    if kind == "cylinder":
        return z * special.j1(z) - bi * special.j0(z)
    # sphere, divided by z so that the root near 0 for small Bi is not confused with z = 0
    return (1.0 - bi) * np.sinc(z / np.pi) - np.cos(z)


def _brackets(kind: str, n: int) -> tuple[np.ndarray, np.ndarray]:
    k = np.arange(1, n + 1, dtype=float)
    if kind == "slab":
        return (k - 1.0) * np.pi, (k - 0.5) * np.pi
    if kind == "cylinder":
        lo = np.concatenate(([0.0], special.jn_zeros(1, n - 1))) if n > 1 else np.array([0.0])
        return lo, special.jn_zeros(0, n)
    return (k - 1.0) * np.pi, k * np.pi


def _compute_eigenvalues(kind: str, bi: float, n: int) -> np.ndarray:
    if math.isinf(bi):
        k = np.arange(1, n + 1, dtype=float)
        if kind == "slab":
            return (k - 0.5) * np.pi
        if kind == "cylinder":
            return special.jn_zeros(0, n)
        return k * np.pi
    lo, hi = _brackets(kind, n)
    lo, hi = lo.copy(), hi.copy()
    # Sign of the eigen-function at the left end of interval n is (-1)^n for all three kinds.
    s_lo = np.where(np.arange(1, n + 1) % 2 == 0, 1.0, -1.0)
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        same = np.sign(_eigen_function(kind, mid, bi)) == s_lo
        lo = np.where(same, mid, lo)
        hi = np.where(same, hi, mid)
        if np.all(hi - lo <= 2.0 * np.spacing(hi)):
            break
    return 0.5 * (lo + hi)


def _compute_coefficients(kind: str, z: np.ndarray) -> np.ndarray:
    if kind == "slab":
        return 4.0 * np.sin(z) / (2.0 * z + np.sin(2.0 * z))
    if kind == "cylinder":
        j0, j1 = special.j0(z), special.j1(z)
        return 2.0 / z * j1 / (j0**2 + j1**2)
    return 4.0 * (np.sin(z) - z * np.cos(z)) / (2.0 * z - np.sin(2.0 * z))


def _eigen(kind: str, bi: float, n: int) -> tuple[np.ndarray, np.ndarray]:
    key = (kind, bi)
    with _cache_lock:
        hit = _cache.get(key)
        if hit is not None and hit[0].size >= n:
            _cache.move_to_end(key)
            return hit[0][:n], hit[1][:n]
    size = max(n, 64, 2 * hit[0].size if hit is not None else 0)
    size = min(size, MAX_TERMS) if n <= MAX_TERMS else n
    z = _compute_eigenvalues(kind, bi, size)
    c = _compute_coefficients(kind, z)
    z.setflags(write=False)
    c.setflags(write=False)
    with _cache_lock:
        _cache[key] = (z, c)
        _cache.move_to_end(key)
        while len(_cache) > _CACHE_SIZE:
            _cache.popitem(last=False)
    return z[:n], c[:n]


def eigenvalues(kind: str, bi: float, n_terms: int = 1) -> np.ndarray:
    """First ``n_terms`` positive roots ζ_n of the eigen-condition of a slab, cylinder or sphere.

    slab ζ tan ζ = Bi; cylinder ζ J1(ζ)/J0(ζ) = Bi; sphere 1 − ζ cot ζ = Bi.

    Parameters
    ----------
    kind : "slab" | "cylinder" | "sphere"
    bi : Biot number on the half-thickness or radius, 1e-12 … 1e8, or ``math.inf``
    n_terms : how many roots, 1 … MAX_TERMS

    Returns
    -------
    ndarray of ζ_n, increasing (read-only, cached)

    Examples
    --------
    >>> [round(float(z), 4) for z in eigenvalues("slab", 1.0, 2)]
    [0.8603, 3.4256]
    >>> round(float(eigenvalues("cylinder", float("inf"))[0]), 4)
    2.4048

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 5.39c, 5.50c, 5.51c.
    """
    return _eigen(_kind(kind), _bi(bi), _n_terms(n_terms))[0]


def coefficients(kind: str, bi: float, n_terms: int = 1) -> np.ndarray:
    """Series coefficients C_n of the slab, cylinder or sphere (Incropera eqs. 5.39b, 5.50b, 5.51b).

    Examples
    --------
    >>> round(float(coefficients("sphere", 1.0)[0]), 4)
    1.2732

    ζ1 and C1 at Bi = 0.1 and 10 (slab, cylinder, sphere) as in Incropera et al., 7th ed., Table 5.1:

    >>> [[round(float(eigenvalues(k, b)[0]), 4) for k in ("slab", "cylinder", "sphere")] for b in (0.1, 10.0)]
    [[0.3111, 0.4417, 0.5423], [1.4289, 2.1795, 2.8363]]
    >>> [[round(float(coefficients(k, b)[0]), 4) for k in ("slab", "cylinder", "sphere")] for b in (0.1, 10.0)]
    [[1.0161, 1.0246, 1.0298], [1.262, 1.5677, 1.9249]]

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 5.39b, 5.50b, 5.51b.
    """
    return _eigen(_kind(kind), _bi(bi), _n_terms(n_terms))[1]


# --- truncation ---------------------------------------------------------------------------------------
def truncation_bound(kind: str, n_terms: int, fo_min: float) -> float:
    """Upper bound of the error in θ (and θ̄) after ``n_terms`` terms at every Fo >= fo_min > 0.

    ε(N) = C_max [exp(−a N²) + √π/(2√a) erfc(N√a)], a = π² Fo_min (see the module notes).

    >>> truncation_bound("slab", 10, 0.01) < 1e-3
    True
    """
    kind = _kind(kind)
    n = _n_terms(n_terms)
    fo = validate.number("fo_min", fo_min, minimum=0.0, min_inclusive=False)
    a = math.pi**2 * fo
    sa = math.sqrt(a)
    return _C_MAX[kind] * (math.exp(-a * n * n) + math.sqrt(math.pi) / (2.0 * sa) * math.erfc(n * sa))


def terms_for(kind: str, fo_min: float, tol: float = DEFAULT_TOL) -> tuple[int, float]:
    """Fewest terms whose truncation bound at ``fo_min`` is below ``tol``, and that bound.

    When even MAX_TERMS are not enough (Fo_min below about 5e-9), MAX_TERMS is returned with the bound it
    achieves. ``fo_min = 0`` (only the initial instant) needs one term.

    >>> terms_for("slab", 0.2)[0]
    4
    """
    kind = _kind(kind)
    tol = validate.number("tol", tol, minimum=1e-15, maximum=0.1)
    fo = validate.number("fo_min", fo_min, minimum=0.0)
    if fo == 0.0:
        return 1, 0.0
    n = int(_terms_each(kind, np.array([fo]), tol)[0])
    return n, min(truncation_bound(kind, n, fo), 1.0)


# --- solutions -----------------------------------------------------------------------------------------
def _mode_shape(kind: str, z: np.ndarray, x: np.ndarray) -> np.ndarray:
    zx = z * x
    if kind == "slab":
        return np.cos(zx)
    if kind == "cylinder":
        return special.j0(zx)
    return np.sinc(zx / np.pi)


def _mean_weight(kind: str, z: np.ndarray) -> np.ndarray:
    if kind == "slab":
        return np.sin(z) / z
    if kind == "cylinder":
        return 2.0 * special.j1(z) / z
    return 3.0 * (np.sin(z) - z * np.cos(z)) / z**3


def _terms_each(kind: str, fo: np.ndarray, tol: float) -> np.ndarray:
    """Terms needed at each Fo (>= 1; 1 at Fo = 0) for a truncation bound below ``tol`` (module notes)."""
    a = np.pi**2 * np.maximum(fo, 1e-300)
    cmax = _C_MAX[kind]
    log_ratio = max(math.log(cmax / tol), 0.0)
    n = np.sqrt(log_ratio / a)
    for _ in range(3):  # the tail integral adds a factor 1 + 1/(2 a n) to exp(-a n²)
        n = np.sqrt((log_ratio + np.log1p(1.0 / (2.0 * a * np.maximum(n, 1.0)))) / a)
    n = np.floor(n)
    n = np.clip(np.nan_to_num(n, nan=MAX_TERMS, posinf=MAX_TERMS), 1, MAX_TERMS)
    for _ in range(50):
        sa = np.sqrt(a)
        bound = cmax * (np.exp(-a * n * n) + np.sqrt(np.pi) / (2.0 * sa) * special.erfc(n * sa))
        bad = (bound > tol) & (n < MAX_TERMS)
        if not np.any(bad):
            break
        n = np.where(bad, n + 1, n)
    return np.where(fo == 0.0, 1, n).astype(int)


def _sum_fixed(
    z: np.ndarray,
    c: np.ndarray,
    fo: np.ndarray,
    weights: np.ndarray,
    kind: str | None = None,
    tol: float | None = None,
) -> np.ndarray:
    """Σ_n c_n exp(−z_n² fo) W_kn for a flat fo array and k fixed weight rows W: shape (fo.size, k).

    With ``kind`` and ``tol`` the points are grouped by the terms each needs (powers of two, at most
    z.size), so that large Fo do not pay for the many terms the smallest Fo needs.
    """
    out = np.empty((fo.size, weights.shape[0]))
    cw = (weights * c).T  # (terms, k)
    z2 = z * z
    if kind is None or tol is None or z.size <= 8:
        groups = [(np.arange(fo.size), z.size)]
    else:
        need = _terms_each(kind, fo, tol)
        level = np.minimum(2 ** np.ceil(np.log2(np.maximum(need, 1))).astype(int), z.size)
        groups = [(np.flatnonzero(level == lv), int(lv)) for lv in np.unique(level)]
    for idx, n in groups:
        block = max(1, 2_000_000 // n)
        for i in range(0, idx.size, block):
            sel = idx[i : i + block]
            out[sel] = np.exp(-np.outer(fo[sel], z2[:n])) @ cw[:n]
    return out


def _sum_pointwise(z: np.ndarray, c: np.ndarray, fo: np.ndarray, weights: np.ndarray) -> np.ndarray:
    """Σ_n c_n exp(−z_n² fo_i) W_in for flat fo (size m) and weights (m, terms): shape (m,)."""
    out = np.empty(fo.size)
    z2 = z * z
    block = max(1, 2_000_000 // max(z.size, 1))
    for i in range(0, fo.size, block):
        out[i : i + block] = np.einsum(
            "ij,ij,j->i", np.exp(-np.outer(fo[i : i + block], z2)), weights[i : i + block], c
        )
    return out


@dataclass(frozen=True)
class SeriesInfo:
    """How a series result was obtained."""

    kind: str
    bi: float
    n_terms: int
    truncation_bound: float  # bound of |θ error| at every Fo >= fo_min
    fo_min: float  # smallest Fo evaluated by the series (>= FO_SHORT; 0 when none)
    tol: float
    short_time_points: int = 0  # points with 0 < Fo < FO_SHORT, from the semi-infinite solid
    short_time_error: float = 0.0  # estimated error of those points in θ (curvature neglected)


def plan_terms(kind: str, bi: float, fo: Any, tol: float = DEFAULT_TOL) -> SeriesInfo:
    """Terms needed for all the Fo values given (set by the smallest positive one) and the bound they reach."""
    kind = _kind(kind)
    b = _bi(bi)
    f = _fo(fo)
    pos = f[f >= FO_SHORT]
    fo_min = float(pos.min()) if pos.size else 0.0
    n, bound = terms_for(kind, fo_min, tol)
    short = f[(f > 0) & (f < FO_SHORT)]
    err = _short_time_error(kind, b, float(short.max())) if short.size else 0.0
    return SeriesInfo(
        kind=kind,
        bi=b,
        n_terms=n,
        truncation_bound=max(bound, err),
        fo_min=fo_min,
        tol=float(tol),
        short_time_points=int(short.size),
        short_time_error=err,
    )


# --- short times: the semi-infinite solid -------------------------------------------------------------------------------
_NU = {"slab": 1.0, "cylinder": 2.0, "sphere": 3.0}  # A L / V


def _short_time_error(kind: str, bi: float, fo: float) -> float:
    """Estimated error of the semi-infinite forms at Fo <= fo: the far face of a slab is felt as
    erfc(1/√Fo) (nil below FO_SHORT); curvature changes 1 − θ by a relative O(√Fo), and 1 − θ_s <= 2 Bi √(Fo/π)."""
    if kind == "slab":
        return float(special.erfc(1.0 / math.sqrt(fo)))
    sf = math.sqrt(fo)
    return sf * min(1.0, 2.0 * bi * sf / math.sqrt(math.pi))


def _short_theta(bi: float, depth: np.ndarray, fo: np.ndarray) -> np.ndarray:
    """θ of the semi-infinite solid with convection at a depth (in units of L), Incropera eq. 5.60.

    1 − θ = erfc(η) − exp(Bi d + Bi² Fo) erfc(η + Bi √Fo), η = d/(2√Fo), written as
    erfc(η) − exp(−η²) erfcx(η + Bi √Fo) so that nothing overflows.
    """
    sf = np.sqrt(fo)
    with np.errstate(
        over="ignore", divide="ignore"
    ):  # at sub-normal Fo, η² overflows to inf and exp(−η²) to 0
        eta = depth / (2.0 * sf)
        if math.isinf(bi):
            return special.erf(eta)
        return 1.0 - (special.erfc(eta) - np.exp(-(eta**2)) * special.erfcx(eta + bi * sf))


def _short_mean(kind: str, bi: float, fo: np.ndarray) -> np.ndarray:
    """Mean θ at short times: 1 − θ̄ = (A L/V) ∫ Bi θ_s dFo = (A L/V)(1/Bi)[erfcx(β) − 1 + 2β/√π], β = Bi √Fo."""
    nu = _NU[kind]
    sf = np.sqrt(fo)
    if math.isinf(bi):
        return 1.0 - nu * 2.0 * sf / math.sqrt(math.pi)
    beta = bi * sf
    small = beta < 1e-3
    g = np.where(
        small,
        beta**2 * (1.0 - 4.0 * beta / (3.0 * math.sqrt(math.pi)) + beta**2 / 2.0),
        special.erfcx(beta) - 1.0 + 2.0 * beta / math.sqrt(math.pi),
    )
    return 1.0 - nu / bi * g


def theta(
    kind: str, bi: float, x_star: Any, fo: Any, *, tol: float = DEFAULT_TOL, n_terms: int | None = None
) -> np.ndarray:
    """Dimensionless temperature θ = (T − T∞)/(T_i − T∞) at x* (or r*) and Fo, exact series.

    θ(x*, Fo) = Σ_n C_n exp(−ζ_n² Fo) θ_n(x*)

    Parameters
    ----------
    kind : "slab" | "cylinder" | "sphere"
    bi : Biot number on the half-thickness or radius (or inf)
    x_star : position, x/L or r/r_o, in [0, 1]; broadcasts with ``fo``
    fo : Fourier number α t/L², >= 0
    tol : truncation-error bound in θ used to choose the terms (ignored when ``n_terms`` is given)
    n_terms : fixed number of terms (for studies of convergence)

    Returns
    -------
    ndarray of θ, shape of broadcast(x_star, fo); θ = 1 where Fo = 0; clipped into [0, 1] (the exact
    solution lies there by the maximum principle, the clip removes only truncation and rounding error).

    Examples
    --------
    Centre of a slab at Bi = 1, Fo = 0.5; the one-term form with Table 5.1's ζ1 = 0.8603, C1 = 1.1191
    gives 1.1191 exp(−0.8603² · 0.5) = 0.7730; the second term (C2 = −0.1517, ζ2 = 3.4256) adds −0.0004:

    >>> round(float(theta("slab", 1.0, 0.0, 0.5)), 4)
    0.7725

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 5.39a, 5.50a, 5.51a.
    """
    kind = _kind(kind)
    b = _bi(bi)
    x = _x_star(x_star)
    f = _fo(fo)
    n = _n_terms(n_terms) if n_terms is not None else plan_terms(kind, b, f, tol).n_terms
    z, c = _eigen(kind, b, n)
    shape = np.broadcast_shapes(x.shape, f.shape)
    fb = np.broadcast_to(f, shape).reshape(-1)
    if n_terms is None:
        short = (fb > 0) & (fb < FO_SHORT)
        if np.any(short):
            xs = np.broadcast_to(x, shape).reshape(-1)
            out = np.ones(fb.size)
            out[short] = _short_theta(b, 1.0 - xs[short], fb[short])
            rest = ~short
            if np.any(rest):
                out[rest] = theta(kind, b, xs[rest], fb[rest], tol=tol)
            return np.clip(out, 0.0, 1.0).reshape(shape)
    if x.size == 1:
        out = _sum_fixed(
            z, c, fb, _mode_shape(kind, z, x.reshape(-1)[0])[None, :], kind, tol if n_terms is None else None
        )[:, 0]
    else:
        xb = np.broadcast_to(x, shape).reshape(-1)
        out = _sum_pointwise(z, c, fb, _mode_shape(kind, z[None, :], xb[:, None]))
    return np.where(fb == 0.0, 1.0, np.clip(out, 0.0, 1.0)).reshape(shape)


def mean_theta(
    kind: str, bi: float, fo: Any, *, tol: float = DEFAULT_TOL, n_terms: int | None = None
) -> np.ndarray:
    """Volume-mean dimensionless temperature θ̄(Fo), exact series.

    θ̄ = Σ_n C_n exp(−ζ_n² Fo) w_n, w_n = sin ζ_n/ζ_n (slab), 2 J1(ζ_n)/ζ_n (cylinder),
    3 (sin ζ_n − ζ_n cos ζ_n)/ζ_n³ (sphere).

    Examples
    --------
    Sphere at Bi = 1 (ζ1 = π/2, C1 = 4/π), Fo = 0.5; one-term: (4/π) e^{−π²/8} · 3/(π/2)³ = 0.2870:

    >>> round(float(mean_theta("sphere", 1.0, 0.5)), 4)
    0.287

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 5.46, 5.51, 5.52
    (series form of Q/Q0 = 1 − θ̄).
    """
    kind = _kind(kind)
    b = _bi(bi)
    f = _fo(fo)
    if n_terms is None:
        short = (f > 0) & (f < FO_SHORT)
        if np.any(short):
            out = np.ones(f.shape)
            out[short] = _short_mean(kind, b, f[short])
            out[~short] = mean_theta(kind, b, f[~short], tol=tol)
            return np.clip(out, 0.0, 1.0)
    n = _n_terms(n_terms) if n_terms is not None else plan_terms(kind, b, f, tol).n_terms
    z, c = _eigen(kind, b, n)
    out = _sum_fixed(
        z, c, f.reshape(-1), _mean_weight(kind, z)[None, :], kind, tol if n_terms is None else None
    )[:, 0].reshape(f.shape)
    return np.where(f == 0.0, 1.0, np.clip(out, 0.0, 1.0))


def heat_fraction(
    kind: str, bi: float, fo: Any, *, tol: float = DEFAULT_TOL, n_terms: int | None = None
) -> np.ndarray:
    """Fraction of the maximum heat transferred, Q/Q0 = 1 − θ̄, with Q0 = ρ c V (T_i − T∞).

    >>> round(float(heat_fraction("slab", 1.0, 0.0)), 6)
    0.0

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 5.46, 5.51, 5.52.
    """
    return 1.0 - mean_theta(kind, bi, fo, tol=tol, n_terms=n_terms)


@dataclass(frozen=True)
class SeriesHistory:
    """θ at the centre and the surface and the volume mean of one 1-D problem over a Fo array."""

    fo: np.ndarray
    theta_center: np.ndarray
    theta_surface: np.ndarray
    theta_mean: np.ndarray
    info: SeriesInfo


def series_history(kind: str, bi: float, fo: Any, *, tol: float = DEFAULT_TOL) -> SeriesHistory:
    """Centre, surface and mean θ of a slab, cylinder or sphere over a Fo array, with one term plan.

    >>> h = series_history("slab", 1.0, [0.0, 0.5])
    >>> [round(float(v), 4) for v in h.theta_center]
    [1.0, 0.7725]
    """
    kind = _kind(kind)
    b = _bi(bi)
    f = _fo(fo)
    info = plan_terms(kind, b, f, tol)
    z, c = _eigen(kind, b, info.n_terms)
    shapes = np.stack(
        [_mode_shape(kind, z, np.float64(0.0)), _mode_shape(kind, z, np.float64(1.0)), _mean_weight(kind, z)]
    )
    flat = f.reshape(-1)
    vals = _sum_fixed(z, c, flat, shapes, kind, info.tol)  # (times, 3)
    vals = np.where(flat[:, None] == 0.0, 1.0, np.clip(vals, 0.0, 1.0))
    if info.short_time_points:
        short = (flat > 0) & (flat < FO_SHORT)
        fs = flat[short]
        vals[short, 0] = _short_theta(b, np.ones_like(fs), fs)
        vals[short, 1] = _short_theta(b, np.zeros_like(fs), fs)
        vals[short, 2] = _short_mean(kind, b, fs)
        vals = np.clip(vals, 0.0, 1.0)
    center, surface, mean = (vals[:, i].reshape(f.shape) for i in range(3))
    return SeriesHistory(fo=f, theta_center=center, theta_surface=surface, theta_mean=mean, info=info)


# Public names for the building blocks of the eigenvalue problem, for solvers vectorised over many Biot numbers.
eigen_function = _eigen_function
eigen_brackets = _brackets
coefficients_for_eigenvalues = _compute_coefficients
