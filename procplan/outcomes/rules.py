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

Published figures. A limit may be published in °C, in °F or in both (the US FDA Food Code prints
"57 °C (135 °F)"). A :class:`Published` keeps the figures as printed so that a sheet in either unit shows
the regulation's own number (70 °F, not 69.8 °F); :func:`limit_text` formats a stage's or band's limits in a
display unit. The checks compute with one °C value per limit (``from_C``, ``to_C``, ``low_C``, ``high_C``):
the °C figure when only it is published, the exact conversion when only °F is, and the stricter of the two
when both are (see :func:`stricter_C`), so that a history that passes here passes either reading.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from procplan.caution import INDICATIVE
from procplan.errors import InvalidInputError
from procplan.outcomes.cold_chain import BudgetCheck, StabilityBudget, check_stability_budget
from procplan.outcomes.targets import TargetResult, history_arrays, time_to_temperature
from procplan.units import c_to_f, f_to_c

#: Kinds of rule, with the direction their stages go ("down": each stage cools, "up": each heats).
RULE_KINDS: dict[str, str | None] = {
    "cooling": "down",
    "heating": "up",
    "holding": None,
    "storage": None,
    "stability-budget": None,
    "thawing": "up",
}
#: Monitored points: the history column each reads.
RULE_POINTS: dict[str, str] = {"core": "core_C", "surface": "surface_C", "mean": "mean_C"}
#: Stage clocks (see the module notes).
STAGE_CLOCKS: tuple[str, ...] = ("stage", "rule")
#: Display units of a limit, with their symbols.
LIMIT_UNITS: dict[str, str] = {"C": "°C", "F": "°F"}


@dataclass(frozen=True)
class Published:
    """A limit temperature as its source prints it: in °C, in °F or both (None: not printed in that unit).

    >>> Published(21.0, 70.0).text("F"), Published(None, 80.0).text("C"), Published(3.0).text("F")
    ('70 °F', '26.7 °C', '37.4 °F')
    """

    value_C: float | None = None
    value_F: float | None = None

    def text(self, unit: str = "C") -> str:
        """The figure in ``unit`` ("C" or "F"): the published one, else the conversion to 0.1 degree."""
        if unit not in LIMIT_UNITS:
            raise InvalidInputError("unit", unit, "one of 'C', 'F'")
        own = self.value_C if unit == "C" else self.value_F
        if own is not None:
            return f"{own:g} {LIMIT_UNITS[unit]}"
        if unit == "C":
            converted = float(f_to_c(self.value_F))
        else:
            converted = float(c_to_f(self.value_C))
        return f"{round(converted, 1):g} {LIMIT_UNITS[unit]}"


def figure_text(value_C: float, published: Published | None, unit: str = "C") -> str:
    """A limit in ``unit``: its published figure when there is one, else ``value_C`` (°C) converted.

    >>> figure_text(21.0, Published(21.0, 70.0), "F"), figure_text(21.0, None, "F")
    ('70 °F', '69.8 °F')
    """
    return (published or Published(value_C)).text(unit)


def _figures(value_C: float, published: Published | None) -> str:
    """A limit in check reasons: its °C figure, and the °F one beside it when the source prints one."""
    if published is None or published.value_F is None:
        return figure_text(value_C, published, "C")
    return f"{published.text('C')} ({published.text('F')})"


def stricter_C(published: Published, keep: str) -> float:
    """The °C value to compute with for a limit published as ``published``.

    Only one figure: that figure (°F converted exactly). Both: the stricter of the °C figure and the exact
    conversion of the °F one, ``keep`` = "low" or "high" saying which way is stricter for this limit (a
    cooling stage's end: the lower; its start: the higher, which starts the clock earlier).

    >>> round(stricter_C(Published(57.0, 135.0), "high"), 3), stricter_C(Published(21.0, 70.0), "low")
    (57.222, 21.0)
    """
    values = [
        v
        for v in (published.value_C, None if published.value_F is None else f_to_c(published.value_F))
        if v is not None
    ]
    if not values:
        raise InvalidInputError("published", published, "a °C or °F figure")
    if keep not in ("low", "high"):
        raise InvalidInputError("keep", keep, "one of 'low', 'high'")
    return float(min(values) if keep == "low" else max(values))


@dataclass(frozen=True)
class Stage:
    """Go from ``from_C`` to ``to_C`` within ``within_min`` minutes (``from_C`` None: from the start of the history).

    from_published, to_published : the figures the source prints for the two limits, when it prints a °F
        figure (None: the °C value is the published figure)
    """

    from_C: float | None
    to_C: float
    within_min: float
    clock: str = "stage"
    from_published: Published | None = None
    to_published: Published | None = None

    def from_text(self, unit: str = "C") -> str:
        """The start limit in ``unit`` as published ("start" when the stage starts with the history)."""
        if self.from_C is None:
            return "start"
        return figure_text(self.from_C, self.from_published, unit)

    def to_text(self, unit: str = "C") -> str:
        """The end limit in ``unit`` as published."""
        return figure_text(self.to_C, self.to_published, unit)

    def limit_text(self, unit: str = "C") -> str:
        """``"57 °C → 21 °C"`` (or the °F figures), as published."""
        return f"{self.from_text(unit)} → {self.to_text(unit)}"


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
    low_published: Published | None = None
    high_published: Published | None = None

    def low_text(self, unit: str = "C") -> str:
        """The low end in ``unit`` as published ("" when open)."""
        return "" if self.low_C is None else figure_text(self.low_C, self.low_published, unit)

    def high_text(self, unit: str = "C") -> str:
        """The high end in ``unit`` as published ("" when open)."""
        return "" if self.high_C is None else figure_text(self.high_C, self.high_published, unit)

    def range_text(self, unit: str = "C") -> str:
        """The band's limits in words, with either end open, in ``unit`` as published.

        >>> Band(0.0, 3.0).range_text(), Band(0.0, None).range_text(), Band(None, 8.0).range_text()
        ('0…3 °C', '≥ 0 °C', '≤ 8 °C')
        >>> Band(2.0, 8.0).range_text("F")
        '35.6…46.4 °F'
        """
        lo, hi = self.low_text(unit), self.high_text(unit)
        if lo and hi:
            return f"{lo.rsplit(' ', 1)[0]}…{hi}"
        if lo:
            return f"≥ {lo}"
        if hi:
            return f"≤ {hi}"
        return "any temperature"

    def label(self, unit: str = "C") -> str:
        """The band's name (with its range in °F for a °F display), or its range in ``unit`` when it has none.

        >>> Band(2.0, 8.0, name="2–8 °C storage").label("F")
        '2–8 °C storage (35.6…46.4 °F)'
        """
        if not self.name:
            return self.range_text(unit)
        return self.name if unit == "C" else f"{self.name} ({self.range_text(unit)})"


def limit_text(item: Stage | Band, unit: str = "C") -> str:
    """The temperature limits of a rule stage or band in the display unit ``unit`` ("C" or "F"), with the
    figures the source publishes (70 °F, not the 69.8 °F of 21 °C): ``"57 °C → 21 °C"``, ``"≤ 8 °C"``.

    >>> limit_text(Stage(57.0, 21.0, 120.0, to_published=Published(21.0, 70.0)), "F")
    '134.6 °F → 70 °F'
    >>> limit_text(Band(None, 8.0), "C")
    '≤ 8 °C'
    """
    if isinstance(item, Stage):
        return item.limit_text(unit)
    if isinstance(item, Band):
        return item.range_text(unit)
    raise InvalidInputError("item", type(item).__name__, "a rule Stage or Band")


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
    budget : a stability budget (kind "stability-budget"): cumulative hours allowed outside a storage band
        over the product's life, checked on the monitored point with the remaining budget after each excursion
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
    budget: StabilityBudget | None = None

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
    """Outcome of a rule: per-stage and per-band results, the stability budget's, and the overall verdict."""

    rule_name: str
    source: str
    point: str
    passed: bool
    stages: tuple[StageCheck, ...]
    bands: tuple[BandCheck, ...]
    reasons: tuple[str, ...] = field(default=())
    budget: BudgetCheck | None = None

    @property
    def margin_min(self) -> float | None:
        """Smallest margin over stages and bands [min] (None when none could be computed)."""
        ms = [s.margin_min for s in self.stages if s.margin_min is not None] + [
            b.margin_min for b in self.bands if b.margin_min is not None
        ]
        return min(ms) if ms else None


def _start_of_stage(
    t: np.ndarray, temp: np.ndarray, stage: Stage, direction: str, after_s: float
) -> tuple[float | None, str]:
    frm = stage.from_C
    if frm is None:
        return after_s, "from the start of the history"
    shown = _figures(frm, stage.from_published)
    r: TargetResult = time_to_temperature(t, temp, frm, direction=direction, start_s=after_s)
    if not r.reached:
        return None, f"never reached {shown} (closest {r.closest_C:.2f} °C)"
    if r.at_start:
        return r.time_s, f"already past {shown} at {r.time_s / 60:.1f} min; clock started then"
    return r.time_s, f"reached {shown} at {r.time_s / 60:.1f} min"


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


def check_rule(
    rule: Rule, time_s, temperature_C, *, budget_used_h: tuple[float, float] = (0.0, 0.0)
) -> RuleCheck:
    """Check a history of the rule's monitored point against every stage and band of ``rule``, and its
    stability budget.

    A stage passes when the point reaches ``to_C`` no later than the limit; one that is not reached fails
    with a reason, as does every stage after a stage that never started.

    Parameters
    ----------
    rule : the rule
    time_s : sample times [s], strictly increasing
    temperature_C : the monitored point's temperature at each time [°C]
    budget_used_h : stability budget already spent above and below the band before this history [h]

    >>> r = Rule("two-stage", "s", "cooling", stages=(Stage(57.0, 21.0, 120.0), Stage(21.0, 5.0, 360.0, "rule")))
    >>> chk = check_rule(r, [0, 3600, 7200, 18000], [57.0, 39.0, 21.0, 5.0])
    >>> chk.passed, [round(s.margin_min, 1) for s in chk.stages]
    (True, [0.0, 60.0])
    """
    t, temp = history_arrays(time_s, temperature_C, temperature_field=rule.column)
    stage_checks = _check_stages(rule, t, temp)
    total = float(t[-1]) - float(t[0])
    band_checks = [_check_band(i, b, t, temp, total) for i, b in enumerate(rule.bands)]
    budget = None
    if rule.budget is not None:
        above, below = budget_used_h
        budget = check_stability_budget(rule.budget, [(t, temp)], used_above_h=above, used_below_h=below)
    passed = all(s.passed for s in stage_checks) and all(b.passed for b in band_checks)
    passed = passed and (budget is None or budget.passed)
    reasons = tuple(f"stage {s.index + 1}: {s.reason}" for s in stage_checks if not s.passed) + tuple(
        f"band {b.index + 1}: {b.reason}" for b in band_checks if not b.passed
    )
    if budget is not None and not budget.passed:
        reasons += (f"stability budget: {budget.reason}",)
    cite = rule.source if rule.confirmed else f"{INDICATIVE}: {rule.source}"
    return RuleCheck(
        rule.name, cite, rule.point, passed, tuple(stage_checks), tuple(band_checks), reasons, budget
    )


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
        start, why = _start_of_stage(t, temp, s, direction, prev_start)
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
    to = _figures(s.to_C, s.to_published)
    r = time_to_temperature(t, temp, s.to_C, direction=RULE_KINDS[rule.kind], start_s=start)
    if r.reached:
        used = (r.time_s - clock0) / 60.0
        margin = allowed - used
        ok = margin >= 0
        verdict = "within" if ok else "over"
        reason = (
            f"{rule.point} {why}; reached {to} after {used:.1f} min, {verdict} the {allowed:g} min allowed"
        )
        return StageCheck(
            i, s, ok, True, start, r.time_s, used, allowed, margin, 100.0 * margin / allowed, reason
        )
    used = (float(t[-1]) - clock0) / 60.0
    if used > allowed:
        margin = allowed - used
        reason = f"not reached: {rule.point} did not reach {to} within {allowed:g} min (closest {r.closest_C:.2f} °C by the end of the history)"
        return StageCheck(
            i, s, False, False, start, None, used, allowed, margin, 100.0 * margin / allowed, reason
        )
    reason = f"not reached: the history ends {used:.1f} min into the {allowed:g} min allowed with the {rule.point} at {temp[-1]:.2f} °C, above {to}; undecided, counted as a failure"
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
