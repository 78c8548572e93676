"""Cooling, holding and storage rules as data, and their check against a temperature history.

A :class:`Rule` is a list of **stages** (go from one temperature to another within a time) and **bands**
(stay inside, or keep out of, a temperature range for at least / at most a time), applied to one monitored
point of the product (core by default). Rules live in ``product_library/rules/*.toml``, read and written by
:mod:`procplan.files.rules`; nothing here does I/O.

Stage clocks. The first stage's clock starts when the monitored point first reaches its ``from_C`` (or at the
start of the history when ``from_C`` is omitted, or when the history already starts past ``from_C``). Each
later stage's clock starts, with ``clock = "stage"`` (default), when the point reaches that stage's ``from_C``;
with ``clock = "rule"``, ``within_min`` counts from the start of the first stage (a total time, as in the
US FDA Food Code's "within a total of 6 hours").

Histories are taken as piecewise linear in time: crossing times and time-in-band are exact for them.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from procplan.caution import INDICATIVE
from procplan.errors import InvalidInputError
from procplan.outcomes.targets import TargetResult, history_arrays, time_to_temperature

#: Kinds of rule, with the direction their stages go ("down": each stage cools, "up": each heats).
RULE_KINDS: dict[str, str | None] = {"cooling": "down", "heating": "up", "holding": None, "storage": None}
#: Monitored points: the history column each reads.
RULE_POINTS: dict[str, str] = {"core": "core_C", "surface": "surface_C", "mean": "mean_C"}
#: Stage clocks (see the module notes).
STAGE_CLOCKS: tuple[str, ...] = ("stage", "rule")


@dataclass(frozen=True)
class Stage:
    """Go from ``from_C`` to ``to_C`` within ``within_min`` minutes (``from_C`` None: from the start of the history)."""

    from_C: float | None
    to_C: float
    within_min: float
    clock: str = "stage"


@dataclass(frozen=True)
class Band:
    """A temperature range [low_C, high_C] (either end may be open) and limits on the time spent in it.

    at_least_min : the point must spend at least this long inside the band (e.g. a hold at ≥ 70 °C)
    at_most_min : the point may spend at most this long inside (e.g. a growth range to pass quickly)
    max_outside_min : the point may spend at most this long outside (0: never leave; a storage range)
    Times are totals over the history; the longest single excursion is reported as well.
    """

    low_C: float | None
    high_C: float | None
    at_least_min: float | None = None
    at_most_min: float | None = None
    max_outside_min: float | None = None
    name: str = ""

    def range_text(self) -> str:
        """The band's limits in words, with either end open.

        >>> Band(0.0, 3.0).range_text(), Band(0.0, None).range_text(), Band(None, 8.0).range_text()
        ('0…3 °C', '≥ 0 °C', '≤ 8 °C')
        """
        if self.low_C is not None and self.high_C is not None:
            return f"{self.low_C:g}…{self.high_C:g} °C"
        if self.low_C is not None:
            return f"≥ {self.low_C:g} °C"
        if self.high_C is not None:
            return f"≤ {self.high_C:g} °C"
        return "any temperature"

    def label(self) -> str:
        return self.name or self.range_text()


@dataclass(frozen=True)
class Rule:
    """A cooling, heating, holding or storage rule.

    name : registry key (the file name stem in the library)
    source : published source of the limits, in full
    confirmed : False when a limit was not confirmed in a source that was read: the rule is shown as indicative
    kind : a key of ``RULE_KINDS``
    stages : ordered stages
    bands : band limits
    point : monitored point, a key of ``RULE_POINTS``
    title : a readable title
    notes : anything a user should know (conditions not encoded, e.g. portion depth)
    """

    name: str
    source: str
    kind: str
    stages: tuple[Stage, ...] = ()
    bands: tuple[Band, ...] = ()
    point: str = "core"
    title: str = ""
    notes: str = ""
    confirmed: bool = True

    @property
    def column(self) -> str:
        """History column of the monitored point (e.g. ``core_C``)."""
        return RULE_POINTS[self.point]


# --- check ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class StageCheck:
    """Outcome of one stage.

    start_s : when the stage's clock started [s] (None: the stage never started)
    end_s : when the point reached ``to_C`` [s] (None: not reached)
    used_min : time counted against the limit [min] (from the rule's start for clock "rule"); when not
        reached, the time elapsed to the end of the history (a lower bound)
    allowed_min : the limit [min]
    margin_min : allowed − used [min]; None when the history ended before the limit without reaching to_C
    margin_percent : margin as % of allowed
    """

    index: int
    stage: Stage
    passed: bool
    reached: bool
    start_s: float | None
    end_s: float | None
    used_min: float | None
    allowed_min: float
    margin_min: float | None
    margin_percent: float | None
    reason: str


@dataclass(frozen=True)
class BandCheck:
    """Outcome of one band: time inside and outside [min], the longest excursion outside [min]."""

    index: int
    band: Band
    passed: bool
    inside_min: float
    outside_min: float
    longest_outside_min: float
    margin_min: float | None
    reason: str


@dataclass(frozen=True)
class RuleCheck:
    """Outcome of a rule: per-stage and per-band results and the overall verdict."""

    rule_name: str
    source: str
    point: str
    passed: bool
    stages: tuple[StageCheck, ...]
    bands: tuple[BandCheck, ...]
    reasons: tuple[str, ...] = field(default=())

    @property
    def margin_min(self) -> float | None:
        """Smallest margin over stages and bands [min] (None when none could be computed)."""
        ms = [s.margin_min for s in self.stages if s.margin_min is not None] + [
            b.margin_min for b in self.bands if b.margin_min is not None
        ]
        return min(ms) if ms else None


def _start_of_stage(
    t: np.ndarray, temp: np.ndarray, frm: float | None, direction: str, after_s: float
) -> tuple[float | None, str]:
    if frm is None:
        return after_s, "from the start of the history"
    r: TargetResult = time_to_temperature(t, temp, frm, direction=direction, start_s=after_s)
    if not r.reached:
        return None, f"never reached {frm:g} °C (closest {r.closest_C:.2f} °C)"
    if r.at_start:
        return r.time_s, f"already past {frm:g} °C at {r.time_s / 60:.1f} min; clock started then"
    return r.time_s, f"reached {frm:g} °C at {r.time_s / 60:.1f} min"


def _time_in_band(t: np.ndarray, temp: np.ndarray, lo: float | None, hi: float | None) -> tuple[float, float]:
    """Total time [s] inside [lo, hi] and the longest continuous time outside [s], exact for piecewise-linear T."""
    lo_v = -np.inf if lo is None else lo
    hi_v = np.inf if hi is None else hi
    # Split every interval at its crossings of lo and hi so that each piece is wholly inside or outside.
    inside = 0.0
    longest = 0.0
    run = 0.0
    for i in range(t.size - 1):
        ta, tb, ya, yb = t[i], t[i + 1], temp[i], temp[i + 1]
        cuts = [0.0, 1.0]
        for level in (lo_v, hi_v):
            if np.isfinite(level) and (ya - level) * (yb - level) < 0:
                cuts.append((level - ya) / (yb - ya))
        cuts.sort()
        for a, b in zip(cuts[:-1], cuts[1:], strict=False):
            if b <= a:
                continue
            ymid = ya + (yb - ya) * 0.5 * (a + b)
            dur = (b - a) * (tb - ta)
            if lo_v <= ymid <= hi_v:
                inside += dur
                run = 0.0
            else:
                run += dur
                longest = max(longest, run)
    return inside, longest


def check_rule(rule: Rule, time_s, temperature_C) -> RuleCheck:
    """Check a history of the rule's monitored point against every stage and band of ``rule``.

    A stage passes when the point reaches ``to_C`` no later than the limit; one that is not reached fails
    with a reason, as does every stage after a stage that never started.

    Parameters
    ----------
    rule : the rule
    time_s : sample times [s], strictly increasing
    temperature_C : the monitored point's temperature at each time [°C]

    >>> r = Rule("two-stage", "s", "cooling", stages=(Stage(57.0, 21.0, 120.0), Stage(21.0, 5.0, 360.0, "rule")))
    >>> chk = check_rule(r, [0, 3600, 7200, 18000], [57.0, 39.0, 21.0, 5.0])
    >>> chk.passed, [round(s.margin_min, 1) for s in chk.stages]
    (True, [0.0, 60.0])
    """
    t, temp = history_arrays(time_s, temperature_C, temperature_field=rule.column)
    stage_checks = _check_stages(rule, t, temp)
    total = float(t[-1]) - float(t[0])
    band_checks = [_check_band(i, b, t, temp, total) for i, b in enumerate(rule.bands)]
    passed = all(s.passed for s in stage_checks) and all(b.passed for b in band_checks)
    reasons = tuple(f"stage {s.index + 1}: {s.reason}" for s in stage_checks if not s.passed) + tuple(
        f"band {b.index + 1}: {b.reason}" for b in band_checks if not b.passed
    )
    cite = rule.source if rule.confirmed else f"{INDICATIVE}: {rule.source}"
    return RuleCheck(rule.name, cite, rule.point, passed, tuple(stage_checks), tuple(band_checks), reasons)


def _not_started(i: int, s: Stage, reason: str) -> StageCheck:
    """A stage whose clock never started: failed, nothing measured."""
    return StageCheck(i, s, False, False, None, None, None, s.within_min, None, None, reason)


def _check_stages(rule: Rule, t: np.ndarray, temp: np.ndarray) -> list[StageCheck]:
    """Every stage in turn; each starts searching where the previous stage started."""
    direction = RULE_KINDS[rule.kind]
    stage_checks: list[StageCheck] = []
    rule_start: float | None = None
    prev_start: float | None = float(t[0])
    for i, s in enumerate(rule.stages):
        if prev_start is None:
            stage_checks.append(_not_started(i, s, "not started: an earlier stage never started"))
            continue
        start, why = _start_of_stage(t, temp, s.from_C, direction, prev_start)
        if start is None:
            stage_checks.append(_not_started(i, s, f"not started: the {rule.point} {why}"))
            prev_start = None
            continue
        if rule_start is None:
            rule_start = start
        clock0 = rule_start if s.clock == "rule" else start
        stage_checks.append(_check_started_stage(rule, i, s, t, temp, start, clock0, why))
        prev_start = start
    return stage_checks


def _check_started_stage(
    rule: Rule, i: int, s: Stage, t: np.ndarray, temp: np.ndarray, start: float, clock0: float, why: str
) -> StageCheck:
    """A stage that started at ``start`` [s], its clock at ``clock0`` [s]: reached in time, late, not reached
    (failed once the allowed time is over) or undecided (the history ends first; counted as a failure)."""
    allowed = s.within_min
    r = time_to_temperature(t, temp, s.to_C, direction=RULE_KINDS[rule.kind], start_s=start)
    if r.reached:
        used = (r.time_s - clock0) / 60.0
        margin = allowed - used
        ok = margin >= 0
        verdict = "within" if ok else "over"
        reason = f"{rule.point} {why}; reached {s.to_C:g} °C after {used:.1f} min, {verdict} the {allowed:g} min allowed"
        return StageCheck(
            i, s, ok, True, start, r.time_s, used, allowed, margin, 100.0 * margin / allowed, reason
        )
    used = (float(t[-1]) - clock0) / 60.0
    if used > allowed:
        margin = allowed - used
        reason = f"not reached: {rule.point} did not reach {s.to_C:g} °C within {allowed:g} min (closest {r.closest_C:.2f} °C by the end of the history)"
        return StageCheck(
            i, s, False, False, start, None, used, allowed, margin, 100.0 * margin / allowed, reason
        )
    reason = f"not reached: the history ends {used:.1f} min into the {allowed:g} min allowed with the {rule.point} at {temp[-1]:.2f} °C, above {s.to_C:g} °C; undecided, counted as a failure"
    return StageCheck(i, s, False, False, start, None, used, allowed, None, None, reason)


def _check_band(i: int, b: Band, t: np.ndarray, temp: np.ndarray, total: float) -> BandCheck:
    """Time inside and outside one band [min] of a history lasting ``total`` seconds, against its limits."""
    inside_s, longest_s = _time_in_band(t, temp, b.low_C, b.high_C)
    inside, outside, longest = inside_s / 60.0, (total - inside_s) / 60.0, longest_s / 60.0
    margins: list[float] = []
    fails: list[str] = []
    if b.at_least_min is not None:
        margins.append(inside - b.at_least_min)
        if inside < b.at_least_min:
            fails.append(f"only {inside:.1f} min inside, at least {b.at_least_min:g} min required")
    if b.at_most_min is not None:
        margins.append(b.at_most_min - inside)
        if inside > b.at_most_min:
            fails.append(f"{inside:.1f} min inside, at most {b.at_most_min:g} min allowed")
    if b.max_outside_min is not None:
        margins.append(b.max_outside_min - outside)
        if outside > b.max_outside_min:
            fails.append(
                f"{outside:.1f} min outside (longest excursion {longest:.1f} min), at most {b.max_outside_min:g} min allowed"
            )
    ok = not fails
    reason = f"{b.label()}: " + (
        "; ".join(fails) if fails else f"{inside:.1f} min inside, {outside:.1f} min outside: within limits"
    )
    return BandCheck(i, b, ok, inside, outside, longest, min(margins) if margins else None, reason)


def check_rule_on_history(rule: Rule, history) -> RuleCheck:
    """:func:`check_rule` on a history table (a pandas DataFrame or a mapping of columns) with ``time_s`` and the
    rule's monitored column (``core_C``, ``surface_C`` or ``mean_C``)."""
    for col in ("time_s", rule.column):
        if col not in history:
            raise InvalidInputError(
                "history",
                f"columns {list(history.keys())}",
                f"a column {col!r}",
                f"needed by rule {rule.name!r}",
            )
    return check_rule(
        rule, np.asarray(history["time_s"], dtype=float), np.asarray(history[rule.column], dtype=float)
    )
