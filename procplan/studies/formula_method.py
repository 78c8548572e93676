"""Ball's formula-method parameters from a measured heating or cooling curve.

After its curved start, the logarithm of the difference between the medium and the product's slowest point
is a straight line in time (the first term of the exact series dominates):

    log10(T_medium − T) = log10(j (T_medium − T_initial)) − (t − t_0)/f,

f is the time for the straight part to traverse one log cycle (f_h heating, f_c cooling) and j the lag
factor, j = (T_medium − T_pseudo-initial)/(T_medium − T_initial), where the pseudo-initial temperature is the
straight line extended back to the corrected zero t_0. For cooling the difference is T − T_coolant and
j_c = (T_pseudo-initial − T_coolant)/(T_initial − T_coolant), with the initial temperature that at the start
of cooling.

Come-up time
------------
While the medium comes up to temperature, Ball counts 42 % of the come-up time as process time at the
medium temperature: the corrected zero lies 0.58 of the come-up time after the medium started to come up.

The straight part
-----------------
Chosen automatically as the longest stretch that ends at the last usable reading (the last before the
difference first falls below ``min_difference_C``) whose least-squares line stays within ``tolerance_log10``
of every point, growing the stretch backwards until a point no longer fits; or given as a time window.

For the exact series solution of a slab, infinite cylinder or sphere (Incropera §5.5–5.6) the straight part
is the first term: f = ln(10) L²/(α ζ₁²) and, at the centre, j = C₁ (ASHRAE Refrigeration Handbook, chapter
on cooling and freezing times of foods, which uses the same f and j).

References
----------
Ball, C.O., "Thermal process time for canned food", Bull. Natl. Res. Council 7(37), 1923.
Ball, C.O., Olson, F.C.W., Sterilization in Food Technology, McGraw-Hill, New York, 1957.
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat and Mass Transfer, 7th ed.,
Wiley, 2011, §5.5–5.6.
ASHRAE Handbook—Refrigeration, chapter "Cooling and freezing times of foods".
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.conduction.series import coefficients, eigenvalues
from procplan.errors import InvalidInputError
from procplan.outcomes.targets import history_arrays

#: Fraction of the come-up time counted as process time at the medium temperature (Ball 1923).
BALL_COME_UP_FRACTION = 0.42

#: Curve kinds: heating (medium above the product) or cooling (medium below it).
CURVE_KINDS: tuple[str, ...] = ("heating", "cooling")


@dataclass(frozen=True)
class CurveFactors:
    """f and j of a semi-logarithmic heating or cooling curve.

    Attributes
    ----------
    kind : "heating" (f_h, j_h) or "cooling" (f_c, j_c)
    f_s : time for the straight part to traverse one log cycle [s]
    j : lag factor [-]
    medium_C : medium (retort, or coolant) temperature [°C]
    initial_C : initial product temperature [°C]
    pseudo_initial_C : the straight line extended back to the corrected zero [°C]
    zero_s : corrected zero in the curve's clock [s] (start + 0.58 × come-up time)
    come_up_s : come-up time [s]
    window_s : (first, last) time of the straight part fitted [s]
    n_points : readings in the fit
    max_residual_log10 : largest distance of a fitted point from the line [log10 cycles]
    chosen : "automatic" or "window"
    """

    kind: str
    f_s: float
    j: float
    medium_C: float
    initial_C: float
    pseudo_initial_C: float
    zero_s: float
    come_up_s: float
    window_s: tuple[float, float]
    n_points: int
    max_residual_log10: float
    chosen: str

    @property
    def f_min(self) -> float:
        """f in minutes, the unit of Ball's tables."""
        return self.f_s / 60.0


def _line(t: np.ndarray, y: np.ndarray) -> tuple[float, float, float]:
    """Least-squares y = a + b t: (a, b, max |residual|)."""
    tm, ym = t.mean(), y.mean()
    b = float(np.sum((t - tm) * (y - ym)) / np.sum((t - tm) ** 2))
    a = float(ym - b * tm)
    return a, b, float(np.max(np.abs(y - a - b * t)))


def _longest_straight_tail(t: np.ndarray, y: np.ndarray, tol: float, min_points: int) -> int:
    """First index of the longest tail whose fitted line stays within tol of every point (or -1)."""
    n = t.size
    # suffix sums give each tail's line in O(n); the max residual is checked on at most ~400 candidate starts
    st, sy = np.cumsum(t[::-1])[::-1], np.cumsum(y[::-1])[::-1]
    stt, sty = np.cumsum((t * t)[::-1])[::-1], np.cumsum((t * y)[::-1])[::-1]
    starts = np.unique(np.linspace(0, n - min_points, min(400, n - min_points + 1)).astype(int))[::-1]
    best = -1
    for i in starts:
        m = n - i
        den = m * stt[i] - st[i] ** 2
        b = (m * sty[i] - st[i] * sy[i]) / den
        a = (sy[i] - b * st[i]) / m
        if np.max(np.abs(y[i:] - a - b * t[i:])) > tol:
            break
        best = int(i)
    return best


def _fit_window(t, y, window_s, tolerance_log10, min_points):
    if window_s is not None:
        lo = validate.number("window_s[0]", window_s[0], unit="s")
        hi = validate.number("window_s[1]", window_s[1], minimum=lo, min_inclusive=False, unit="s")
        sel = (t >= lo) & (t <= hi)
        if np.count_nonzero(sel) < 3:
            raise InvalidInputError("window_s", (lo, hi), "a window holding at least 3 usable readings")
        return sel, "window"
    start = _longest_straight_tail(t, y, tolerance_log10, min_points)
    if start < 0:
        raise InvalidInputError(
            "tolerance_log10",
            tolerance_log10,
            "a tolerance the last readings fit within",
            f"the last {min_points} usable readings are not on a straight line; give window_s",
        )
    sel = np.zeros(t.size, dtype=bool)
    sel[start:] = True
    return sel, "automatic"


def curve_factors(
    time_s,
    temperature_C,
    medium_C: float,
    *,
    kind: str = "heating",
    initial_C: float | None = None,
    come_up_s: float = 0.0,
    window_s: tuple[float, float] | None = None,
    tolerance_log10: float = 0.002,
    min_difference_C: float = 0.5,
    min_points: int = 5,
) -> CurveFactors:
    """f and j of a heating (f_h, j_h) or cooling (f_c, j_c) curve by Ball's semi-logarithmic plot.

    log10|T_medium − T| = log10(j |T_medium − T_initial|) − (t − t_0)/f,  t_0 = t_start + 0.58 t_come-up.

    Parameters
    ----------
    time_s : reading times [s], strictly increasing; the first is the start (steam on, or cooling start)
    temperature_C : product readings at its slowest point [°C]
    medium_C : medium temperature after come-up [°C] (retort for heating, coolant for cooling)
    kind : "heating" (medium above the product) or "cooling" (medium below it)
    initial_C : initial product temperature [°C]; default the first reading
    come_up_s : time the medium took to reach medium_C [s] (0 for a step change); 42 % of it counts as
        process time, so the corrected zero is at the first time + 0.58 come_up_s (Ball 1923)
    window_s : (first, last) time [s] of the straight part, to override the automatic choice
    tolerance_log10 : largest distance [log10 cycles] of a point from the line for the automatic choice
    min_difference_C : readings are used only until |T_medium − T| first falls below this [K] (noise floor)
    min_points : fewest readings in an automatically chosen straight part

    Returns
    -------
    CurveFactors (f_s, f_min, j, pseudo-initial temperature, the stretch fitted and its residual)

    Examples
    --------
    A straight semi-log curve from the start (j = 1): the difference falls from 100 K by ten every 20 min.

    >>> t = [0.0, 600.0, 1200.0, 1800.0, 2400.0, 3000.0]
    >>> T = [121.0 - 100.0 * 10 ** (-s / 1200.0) for s in t]
    >>> r = curve_factors(t, T, 121.0)
    >>> round(r.f_min, 6), round(r.j, 6)
    (20.0, 1.0)

    References
    ----------
    Ball, C.O., Bull. Natl. Res. Council 7(37), 1923; Ball, C.O., Olson, F.C.W., Sterilization in Food
    Technology, McGraw-Hill, 1957.
    """
    t, temp = history_arrays(time_s, temperature_C)
    medium = validate.number("medium_C", medium_C, unit="°C")
    kind = validate.choice("kind", kind, CURVE_KINDS)
    initial = float(temp[0]) if initial_C is None else validate.number("initial_C", initial_C, unit="°C")
    come_up = validate.number("come_up_s", come_up_s, minimum=0.0, unit="s")
    tol = validate.positive("tolerance_log10", tolerance_log10)
    floor = validate.positive("min_difference_C", min_difference_C, unit="K")
    min_points = int(validate.number("min_points", min_points, minimum=3))
    sign = 1.0 if kind == "heating" else -1.0
    diff0 = sign * (medium - initial)
    if diff0 <= floor:
        allowed = "below medium_C" if kind == "heating" else "above medium_C"
        raise InvalidInputError(
            "initial_C", initial, f"{allowed} by more than {floor:g} K for a {kind} curve"
        )
    diff = sign * (medium - temp)
    low = np.flatnonzero(diff < floor)
    last = low[0] if low.size else t.size
    t, diff = t[:last], diff[:last]
    if t.size < max(3, min_points if window_s is None else 3):
        raise InvalidInputError(
            "temperature_C",
            f"{t.size} usable readings",
            f"at least {min_points} readings before the difference from the medium falls below {floor:g} K",
        )
    y = np.log10(diff)
    sel, chosen = _fit_window(t, y, window_s, tol, min_points)
    zero = float(t[0]) + (1.0 - BALL_COME_UP_FRACTION) * come_up
    a, b, resid = _line(t[sel] - zero, y[sel])
    if not b < 0:
        raise InvalidInputError(
            "temperature_C", "the fitted straight part", f"a {kind} curve approaching medium_C"
        )
    pseudo_diff = 10.0**a
    return CurveFactors(
        kind=kind,
        f_s=-1.0 / b,
        j=pseudo_diff / diff0,
        medium_C=medium,
        initial_C=initial,
        pseudo_initial_C=medium - sign * pseudo_diff,
        zero_s=zero,
        come_up_s=come_up,
        window_s=(float(t[sel][0]), float(t[sel][-1])),
        n_points=int(np.count_nonzero(sel)),
        max_residual_log10=resid,
        chosen=chosen,
    )


def heating_factors(time_s, temperature_C, medium_C: float, **options) -> CurveFactors:
    """f_h and j_h of a heating curve (see ``curve_factors``; Ball & Olson 1957).

    A straight line from the first reading with a 10 min come-up: the corrected zero is 5.8 min after the
    start, where the line has fallen to 10^(−5.8/20) of its start: j_h = 0.513.

    >>> t = [0.0, 600.0, 1200.0, 1800.0, 2400.0, 3000.0]
    >>> T = [121.0 - 100.0 * 10 ** (-s / 1200.0) for s in t]
    >>> r = heating_factors(t, T, 121.0, come_up_s=600.0)
    >>> round(r.f_min, 6), round(r.j, 4), round(r.zero_s, 6)
    (20.0, 0.5129, 348.0)
    """
    return curve_factors(time_s, temperature_C, medium_C, kind="heating", **options)


def cooling_factors(time_s, temperature_C, coolant_C: float, **options) -> CurveFactors:
    """f_c and j_c of a cooling curve; the first reading is the start of cooling (Ball & Olson 1957).

    From 90 °C into 10 °C water; after a curved start the difference is 50 × 10^(−t/20 min):
    j_c = 50/80 = 0.625.

    >>> t = [0.0, 600.0, 1200.0, 1800.0, 2400.0]
    >>> T = [90.0] + [10.0 + 50.0 * 10 ** (-s / 1200.0) for s in t[1:]]
    >>> r = cooling_factors(t, T, 10.0, min_points=3)
    >>> round(r.f_min, 6), round(r.j, 6), r.window_s
    (20.0, 0.625, (600.0, 2400.0))
    """
    if "come_up_s" in options:
        raise InvalidInputError(
            "come_up_s", options["come_up_s"], "not used for cooling (zero at cooling start)"
        )
    return curve_factors(time_s, temperature_C, coolant_C, kind="cooling", **options)


def series_factors(kind: str, bi: float, length_m: float, alpha_m2_s: float) -> tuple[float, float]:
    """f [s] and centre j of the exact series solution of a slab, infinite cylinder or sphere.

    f = ln(10) L²/(α ζ₁²), j = C₁ (centre), L the half-thickness or radius (Incropera §5.5–5.6; ASHRAE
    Refrigeration Handbook, chapter on cooling and freezing times of foods).

    A sphere of 50 mm radius, α = 1.4e-7 m²/s, Bi → ∞ (ζ₁ = π, C₁ = 2): f = ln(10) 0.05²/(1.4e-7 π²) = 4166 s.

    >>> f_s, j = series_factors("sphere", math.inf, 0.05, 1.4e-7)
    >>> round(f_s / 60, 1), round(j, 4)
    (69.4, 2.0)

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 5.39–5.51.
    """
    length = validate.positive("length_m", length_m, unit="m")
    alpha = validate.positive("alpha_m2_s", alpha_m2_s, unit="m²/s")
    z = float(eigenvalues(kind, bi)[0])
    return math.log(10.0) * length**2 / (alpha * z**2), float(coefficients(kind, bi)[0])
