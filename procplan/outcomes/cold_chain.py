"""Cold-chain outcomes of a temperature history: mean kinetic temperature and a stability budget.

Histories are sampled temperatures at strictly increasing times; between samples the temperature is taken as
linear in time, the same assumption the target, rule and lethality checks make.

Mean kinetic temperature
------------------------
Haynes' single isothermal temperature that would cause the same total degradation as the history, for a
reaction whose rate follows Arrhenius' law with activation energy ΔH:

    T_MK = (ΔH/R) / (−ln( Σ w_i exp(−ΔH/(R T_i)) / Σ w_i )),   T in kelvin.

The weights w_i are the trapezoid weights of the sample times (``mode="trapezoid"``: the integral of
exp(−ΔH/RT) over time by the trapezoid rule, divided by the duration, so unequal intervals are allowed) or 1
for each reading (``mode="samples"``: equally spaced readings, the pharmacopoeia's usual form). ΔH defaults to
83.144 kJ/mol with R = 8.3144 J/(mol K), the pair the pharmacopoeia uses: ΔH/R is then exactly 10 000 K.

Stability budget
----------------
A product may spend a stated total time above (or below) its storage band over its life, e.g. a 2–8 °C
product allowed 24 h above 8 °C. Time outside the band is measured on the piecewise-linear history, with
the crossing times interpolated between samples (not counted in samples), and excursions of consecutive
histories (storage, transport, storage …) add up. A temperature exactly on a limit counts as inside.

References
----------
Haynes, J.D., "Worldwide virtual temperatures for product stability testing", J. Pharm. Sci. 60(6), 927–929
(1971).
United States Pharmacopeia, general chapter <1079.2> "Mean kinetic temperature in the evaluation of
temperature excursions during storage and transportation of drug products" (earlier in chapter <1150>
"Pharmaceutical stability").
Tong, C., Lock, A., "A computational procedure for mean kinetic temperature using unequally spaced data",
Joint Statistical Meetings, Biopharmaceutical Section, 2065–2070 (2015).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.outcomes.targets import history_arrays

#: Activation energy of the pharmacopoeia's mean kinetic temperature [J/mol].
MKT_DELTA_H_J_MOL = 83144.0

#: Gas constant as the pharmacopoeia writes it [J/(mol K)]; with 83.144 kJ/mol, ΔH/R = 10 000 K.
MKT_GAS_CONSTANT_J_MOLK = 8.3144

#: How readings are weighted in the mean kinetic temperature.
MKT_MODES: tuple[str, ...] = ("trapezoid", "samples")

_KELVIN = 273.15


def _weights(time_s, n: int, mode: str) -> np.ndarray:
    if mode == "samples":
        if time_s is not None:
            t = validate.increasing("time_s", time_s, unit="s")
            if t.size != n:
                raise InvalidInputError("temperature_C", f"{n} readings", f"one reading per time ({t.size})")
            dt = np.diff(t)
            if dt.size and np.ptp(dt) > 1e-6 * dt.mean():
                raise InvalidInputError(
                    "time_s",
                    "unequal intervals",
                    "equally spaced readings in mode 'samples'",
                    "use 'trapezoid'",
                )
        return np.ones(n)
    t = validate.increasing("time_s", time_s, unit="s")
    if t.size != n:
        raise InvalidInputError("temperature_C", f"{n} readings", f"one reading per time ({t.size})")
    if n < 2:
        raise InvalidInputError("time_s", t.tolist(), "at least two times in mode 'trapezoid'")
    dt = np.diff(t)
    w = np.zeros(n)
    w[:-1] += dt / 2.0
    w[1:] += dt / 2.0
    return w


def mean_kinetic_temperature_C(
    time_s,
    temperature_C,
    *,
    mode: str = "trapezoid",
    delta_h_J_mol: float = MKT_DELTA_H_J_MOL,
    gas_constant_J_molK: float = MKT_GAS_CONSTANT_J_MOLK,
):
    """Mean kinetic temperature of a temperature history (Haynes 1971), in °C.

    T_MK = (ΔH/R) / (−ln( Σ w_i exp(−ΔH/(R T_i)) / Σ w_i )) − 273.15, T_i = temperature_C + 273.15.

    Parameters
    ----------
    time_s : sample times [s], strictly increasing; may be None in mode "samples"
    temperature_C : readings [°C], shape (n,), or (n, k) for k loggers sharing the times
    mode : "trapezoid" (w_i = trapezoid weights of the times: ∫ exp(−ΔH/RT) dt / duration, unequal intervals
        allowed) or "samples" (w_i = 1: equally spaced readings; times, if given, must be equally spaced)
    delta_h_J_mol : activation energy ΔH [J/mol], default 83 144 J/mol (the pharmacopoeia's value)
    gas_constant_J_molK : R [J/(mol K)], default 8.3144 (so that ΔH/R = 10 000 K by default)

    Returns
    -------
    float [°C] for one logger, or an array of k values for (n, k) readings.

    Notes
    -----
    The mean kinetic temperature lies between the lowest and highest reading and is never below the mean
    with the same weights (exp(−ΔH/RT) is convex below ΔH/(2R) = 5000 K: Jensen's inequality). The sum is
    evaluated as a log-sum-exp, so no term underflows. The trapezoid mode integrates the Arrhenius factor at
    the samples, not along the interpolated line; refine the sampling where the temperature changes fast.

    Examples
    --------
    Half the time at 25 °C and half at 40 °C (equally spaced readings): ΔH/R = 10 000 K gives
    10 000 / (−ln((e^(−10000/298.15) + e^(−10000/313.15))/2)) − 273.15.

    >>> round(float(mean_kinetic_temperature_C(None, [25.0, 40.0], mode="samples")), 2)
    35.07
    >>> round(float(mean_kinetic_temperature_C([0, 3600, 7200], [5.0, 5.0, 5.0])), 6)
    5.0

    References
    ----------
    Haynes, J.D., J. Pharm. Sci. 60(6), 927–929 (1971).
    United States Pharmacopeia, general chapter <1079.2> (formerly in <1150>).
    """
    mode = validate.choice("mode", mode, MKT_MODES)
    dh = validate.positive("delta_h_J_mol", delta_h_J_mol, unit="J/mol")
    r = validate.positive("gas_constant_J_molK", gas_constant_J_molK, unit="J/(mol K)")
    temp = validate.array("temperature_C", temperature_C, minimum=-_KELVIN, unit="°C")
    if temp.ndim not in (1, 2) or temp.shape[0] < 1 or np.any(temp <= -_KELVIN):
        raise InvalidInputError(
            "temperature_C", temperature_C, "a list (or table) of readings above −273.15 °C"
        )
    w = _weights(time_s, temp.shape[0], mode)
    if temp.ndim == 2:
        w = w[:, None]
    b = dh / r
    x = -b / (temp + _KELVIN)
    m = x.max(axis=0)
    log_mean = m + np.log(np.sum(w * np.exp(x - m), axis=0) / np.sum(w, axis=0))
    mkt = b / (-log_mean) - _KELVIN
    return float(mkt) if temp.ndim == 1 else mkt


# --- stability budget ------------------------------------------------------------------------------------
@dataclass(frozen=True)
class StabilityBudget:
    """A product's cumulative allowance of time outside its storage band.

    Attributes
    ----------
    low_C, high_C : the band [°C], low_C < high_C; a reading exactly on a limit is inside
    allowance_above_h : total time allowed above high_C over the product's life [h], ≥ 0 (math.inf: no limit)
    allowance_below_h : total time allowed below low_C [h], ≥ 0 (math.inf: no limit)
    name : product or budget name, for reports
    source : where the allowance comes from (stability data, label, supplier statement)
    """

    low_C: float
    high_C: float
    allowance_above_h: float
    allowance_below_h: float
    name: str = ""
    source: str = ""

    def __post_init__(self) -> None:
        low = validate.number("low_C", self.low_C, unit="°C")
        high = validate.number("high_C", self.high_C, minimum=low, min_inclusive=False, unit="°C")
        for field in ("allowance_above_h", "allowance_below_h"):
            value = getattr(self, field)
            if not (isinstance(value, (int, float)) and value == math.inf):
                validate.number(field, value, minimum=0.0, unit="h")
        object.__setattr__(self, "low_C", low)
        object.__setattr__(self, "high_C", high)


@dataclass(frozen=True)
class Excursion:
    """One stretch of a history outside the band.

    Attributes
    ----------
    side : "above" or "below"
    history : index of the history (in the order given) it belongs to
    start_s, end_s : crossing times in that history's own clock [s], interpolated linearly
    duration_s : end_s − start_s [s]
    peak_C : the highest reading (above) or the lowest (below) during the excursion [°C]
    ongoing : True when the history ended outside the band (the excursion may go on)
    used_h : total time outside on this side up to the end of this excursion, with any allowance spent before
        the histories [h]
    remaining_above_h, remaining_below_h : allowances left after this excursion [h]; negative when overspent
    """

    side: str
    history: int
    start_s: float
    end_s: float
    duration_s: float
    peak_C: float
    ongoing: bool
    used_h: float
    remaining_above_h: float
    remaining_below_h: float


@dataclass(frozen=True)
class BudgetCheck:
    """Result of a stability-budget check over one or more consecutive histories.

    Attributes
    ----------
    budget : the budget checked
    passed : True when neither allowance is exceeded (using exactly the allowance passes)
    total_s, above_s, below_s, inside_s : durations summed over all histories [s]; above + inside + below = total
    remaining_above_h, remaining_below_h : allowances left at the end [h]; negative when overspent
    excursions : every excursion in time order (history, then start)
    exhausted : (side, history, time_s) when an allowance was first overspent, else None; time_s is the
        history's own clock, interpolated inside the excursion
    reason : one line saying what happened, for reports
    """

    budget: StabilityBudget
    passed: bool
    total_s: float
    above_s: float
    below_s: float
    inside_s: float
    remaining_above_h: float
    remaining_below_h: float
    excursions: tuple[Excursion, ...]
    exhausted: tuple[str, int, float] | None
    reason: str


def _pieces_above(t: np.ndarray, y: np.ndarray, level: float):
    """Intervals where the piecewise-linear y(t) > level: (starts, ends, peaks, ongoing), vectorised."""
    y0, y1, t0, t1 = y[:-1], y[1:], t[:-1], t[1:]
    in0, in1 = y0 > level, y1 > level
    with np.errstate(all="ignore"):  # used only where exactly one end is above, so y1 != y0
        cross = np.clip(t0 + (level - y0) / (y1 - y0) * (t1 - t0), t0, t1)
    a = np.where(in0, t0, cross)
    b = np.where(in1, t1, cross)
    keep = (in0 | in1) & (b > a)
    idx = np.flatnonzero(keep)
    if idx.size == 0:
        empty = np.empty(0)
        return empty, empty, empty, np.empty(0, dtype=bool)
    # a piece continues the previous one when they share a sample above the level
    first = (idx == 0) | ~in0[idx] | np.concatenate(([True], np.diff(idx) != 1))
    starts = np.flatnonzero(first)
    ends = np.concatenate((starts[1:], [idx.size])) - 1
    peak_piece = np.maximum(y0[idx], y1[idx])
    peaks = np.maximum.reduceat(peak_piece, starts)
    ongoing = (idx[ends] == t.size - 2) & in1[idx[ends]]
    return a[idx[starts]], b[idx[ends]], peaks, ongoing


def _histories(histories) -> list[tuple[np.ndarray, np.ndarray]]:
    if not isinstance(histories, Sequence) or len(histories) == 0:
        raise InvalidInputError("histories", histories, "a non-empty list of (time_s, temperature_C) pairs")
    out = []
    for i, h in enumerate(histories):
        if not isinstance(h, Sequence) or len(h) != 2:
            raise InvalidInputError(f"histories[{i}]", type(h).__name__, "a (time_s, temperature_C) pair")
        t, temp = history_arrays(h[0], h[1], time_field=f"histories[{i}].time_s")
        if t.size < 2:
            raise InvalidInputError(f"histories[{i}].time_s", t.tolist(), "at least two samples")
        out.append((t, temp))
    return out


def _excursions_of(t: np.ndarray, temp: np.ndarray, budget: StabilityBudget, k: int) -> list[tuple]:
    rows = []
    s, e, p, g = _pieces_above(t, temp, budget.high_C)
    rows += [("above", k, *r) for r in zip(s, e, p, g, strict=True)]
    s, e, p, g = _pieces_above(t, -temp, -budget.low_C)
    rows += [("below", k, a, b, -c, d) for a, b, c, d in zip(s, e, p, g, strict=True)]
    return sorted(rows, key=lambda r: r[2])


def check_stability_budget(
    budget: StabilityBudget, histories, *, used_above_h: float = 0.0, used_below_h: float = 0.0
) -> BudgetCheck:
    """Time above and below a storage band over consecutive histories, against a cumulative allowance.

    Parameters
    ----------
    budget : the product's band and allowances
    histories : list of (time_s, temperature_C) pairs, in the order the product lived them (each its own
        clock, ≥ 2 samples); excursions add up across them. An excursion that runs to the end of one history
        and one that starts the next are counted as two (the gap between histories is not assumed).
    used_above_h, used_below_h : allowance already spent earlier in the product's life [h], ≥ 0; the
        remaining budget after each excursion counts it, the durations (above_s, below_s) do not

    Returns
    -------
    BudgetCheck with the durations, each excursion with the allowance left after it, and pass/fail.

    Examples
    --------
    A 2–8 °C product allowed 2 h above 8 °C warms linearly from 6 to 12 °C over 3 h: above 8 °C from 1 h.

    >>> b = StabilityBudget(2.0, 8.0, allowance_above_h=2.0, allowance_below_h=0.0, name="vial")
    >>> r = check_stability_budget(b, [([0.0, 10800.0], [6.0, 12.0])])
    >>> r.above_s, r.passed, r.excursions[0].start_s, r.excursions[0].ongoing
    (7200.0, True, 3600.0, True)
    """
    if not isinstance(budget, StabilityBudget):
        raise InvalidInputError("budget", type(budget).__name__, "a StabilityBudget")
    rows = []
    total = 0.0
    for k, (t, temp) in enumerate(_histories(histories)):
        total += float(t[-1] - t[0])
        rows += _excursions_of(t, temp, budget, k)
    allowance = {"above": budget.allowance_above_h, "below": budget.allowance_below_h}
    before_s = {
        "above": 3600.0 * validate.number("used_above_h", used_above_h, minimum=0.0, unit="h"),
        "below": 3600.0 * validate.number("used_below_h", used_below_h, minimum=0.0, unit="h"),
    }
    used_s = dict(before_s)
    if exhausted_before := [k for k in ("above", "below") if used_s[k] / 3600.0 > allowance[k]]:
        exhausted_at_start = (exhausted_before[0], 0, 0.0)
    else:
        exhausted_at_start = None
    excursions = []
    exhausted = exhausted_at_start
    for side, k, start, end, peak, ongoing in rows:
        before_h = used_s[side] / 3600.0
        used_s[side] += float(end - start)
        after_h = used_s[side] / 3600.0
        if exhausted is None and after_h > allowance[side]:
            exhausted = (side, k, float(start) + (allowance[side] - before_h) * 3600.0)
        excursions.append(
            Excursion(
                side=side,
                history=k,
                start_s=float(start),
                end_s=float(end),
                duration_s=float(end - start),
                peak_C=float(peak),
                ongoing=bool(ongoing),
                used_h=after_h,
                remaining_above_h=allowance["above"] - used_s["above"] / 3600.0,
                remaining_below_h=allowance["below"] - used_s["below"] / 3600.0,
            )
        )
    above, below = used_s["above"] - before_s["above"], used_s["below"] - before_s["below"]
    passed = exhausted is None
    if passed:
        reason = f"within budget: {above / 3600:.3g} h above {budget.high_C:g} °C, {below / 3600:.3g} h below {budget.low_C:g} °C"
    elif exhausted_at_start is not None:
        reason = f"{exhausted_at_start[0]} allowance already used up before these histories"
    else:
        side, k, when = exhausted
        reason = f"{side} allowance used up in history {k + 1} at {when / 3600:.3g} h"
    return BudgetCheck(
        budget=budget,
        passed=passed,
        total_s=total,
        above_s=above,
        below_s=below,
        inside_s=total - above - below,
        remaining_above_h=allowance["above"] - used_s["above"] / 3600.0,
        remaining_below_h=allowance["below"] - used_s["below"] / 3600.0,
        excursions=tuple(excursions),
        exhausted=exhausted,
        reason=reason,
    )
