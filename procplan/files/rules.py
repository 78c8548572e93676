"""Rule files (``product_library/rules/*.toml``) to and from :class:`procplan.outcomes.rules.Rule`.

:func:`rule_from_dict` parses and validates the mapping read from a rule file and reports every problem at
once; :func:`rule_to_dict` writes it back. What the stages and bands mean is told in
:mod:`procplan.outcomes.rules`.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.fields import check_keys
from procplan.outcomes.cold_chain import StabilityBudget
from procplan.outcomes.rules import (
    RULE_KINDS,
    RULE_POINTS,
    STAGE_CLOCKS,
    Band,
    Published,
    Rule,
    Stage,
    stricter_C,
)
from procplan.units import c_to_f, f_to_c

RULE_KEYS = ("bands", "budget", "confirmed", "kind", "name", "notes", "point", "source", "stages", "title")
BUDGET_KEYS = ("allowance_above_h", "allowance_below_h", "high_C", "low_C")
#: Largest stability allowance a rule file may give [h] (about 11 years).
MAX_ALLOWANCE_H = 1.0e5
STAGE_KEYS = ("clock", "from_C", "from_F", "to_C", "to_F", "within_min")
BAND_KEYS = ("at_least_min", "at_most_min", "high_C", "high_F", "low_C", "low_F", "max_outside_min", "name")
#: Largest difference [K] between a limit's °C figure and the exact conversion of its °F figure: a figure
#: rounded to a whole degree Celsius is within 0.5 K of the exact value (1 °F is 0.56 K).
AGREE_WITHIN_K = 0.6
BAND_LIMITS = ("at_least_min", "at_most_min", "max_outside_min")


def _opt_number(c: Collector, fieldname: str, value: Any, **kw) -> float | None:
    if value is None:
        return None
    with c.catch():
        return validate.number(fieldname, value, **kw)
    return None


def _limit(
    c: Collector, w: str, data: Mapping[str, Any], key: str, keep: str | None
) -> tuple[float | None, Published | None]:
    """A limit given as ``key_C`` and/or ``key_F``: the °C value to compute with and the published figures
    (None when only °C is given: the value is the figure). Both given: they must agree within
    ``AGREE_WITHIN_K``; the stricter is kept (``keep`` "low" or "high"; None: the °C figure)."""
    value_C = _opt_number(c, w + key + "_C", data.get(key + "_C"), unit="°C")
    value_F = _opt_number(c, w + key + "_F", data.get(key + "_F"), unit="°F")
    if value_F is None:
        return value_C, None
    published = Published(value_C, value_F)
    if value_C is None:
        return float(f_to_c(value_F)), published
    if abs(value_C - float(f_to_c(value_F))) > AGREE_WITHIN_K:
        c.add(
            InvalidInputError(
                w + key + "_F",
                value_F,
                f"within {AGREE_WITHIN_K:g} K of {key}_C = {value_C:g} °C ({float(c_to_f(value_C)):.1f} °F)",
                "the °C and °F figures of one limit must agree within the source's rounding",
            )
        )
        return value_C, published
    return (value_C if keep is None else stricter_C(published, keep)), published


def _text(c: Collector, data: Mapping[str, Any], key: str, required: bool) -> str:
    v = data.get(key, "")
    if not isinstance(v, str) or (required and not v.strip()):
        c.add(InvalidInputError(key, v, "a non-empty text" if required else "a text"))
        return ""
    return v.strip()


def _stage_total_allowed(stages: list[Stage] | tuple[Stage, ...]) -> float | None:
    """Total allowed time from the first stage's start, when every stage so far counts from it (else None)."""
    total = 0.0
    for j, s in enumerate(stages):
        if j == 0:
            total = s.within_min
        elif s.clock == "rule":
            total = s.within_min
        else:
            return None
    return total


def _check_stage_order(
    c: Collector, w: str, kind: str, direction: str | None, frm, to, clock: str, within, stages: list[Stage]
) -> None:
    """A stage goes the rule's way, past the previous stage, and a rule clock allows more than before."""
    if frm is not None and to is not None and direction is not None:
        if direction == "down" and not to < frm:
            c.add(InvalidInputError(w + "to_C", f"{frm:g} → {to:g}", f"below from_C for a {kind} rule"))
        if direction == "up" and not to > frm:
            c.add(InvalidInputError(w + "to_C", f"{frm:g} → {to:g}", f"above from_C for a {kind} rule"))
    if stages and to is not None and direction is not None:
        prev = stages[-1]
        if (direction == "down" and not to < prev.to_C) or (direction == "up" and not to > prev.to_C):
            c.add(
                InvalidInputError(
                    w + "to_C",
                    to,
                    f"{'below' if direction == 'down' else 'above'} the previous stage's to_C ({prev.to_C:g} °C)",
                    "stages go one way",
                )
            )
    if stages and clock == "rule" and within is not None:
        prev_total = _stage_total_allowed(stages)
        if prev_total is not None and not within > prev_total:
            c.add(
                InvalidInputError(
                    w + "within_min",
                    within,
                    f"> {prev_total:g} min (the total already allowed before this stage)",
                    'clock = "rule" counts from the first stage',
                )
            )


def _stage(
    c: Collector, i: int, s: dict, kind: str, direction: str | None, stages: list[Stage]
) -> Stage | None:
    """One ``[[stages]]`` table, checked against the stages before it; None when incomplete."""
    w = f"stages[{i}]."
    check_keys(c, s, STAGE_KEYS, w)
    # Stricter: a later end and an earlier start of the clock (cooling: a lower to, a higher from).
    to_keep = {"down": "low", "up": "high"}.get(direction or "")
    from_keep = {"down": "high", "up": "low"}.get(direction or "")
    frm, frm_pub = _limit(c, w, s, "from", from_keep)
    if "to_C" not in s and "to_F" not in s:
        c.add(InvalidInputError(w + "to_C", None, "a temperature in °C (to_C) or °F (to_F)", "required"))
    to, to_pub = _limit(c, w, s, "to", to_keep)
    if "within_min" not in s:
        c.add(InvalidInputError(w + "within_min", None, "> 0 min", "required"))
    within = _opt_number(
        c, w + "within_min", s.get("within_min"), minimum=0.0, min_inclusive=False, unit="min"
    )
    clock = s.get("clock", "stage")
    with c.catch():
        validate.choice(w + "clock", clock, STAGE_CLOCKS)
    if i == 0 and clock == "rule":
        clock = "stage"  # the first stage's clock is the rule's clock
    _check_stage_order(c, w, kind, direction, frm, to, clock, within, stages)
    if to is not None and within is not None:
        return Stage(frm, to, within, clock, frm_pub, to_pub)
    return None


def _stages(c: Collector, raw_stages: Any, kind: Any) -> list[Stage]:
    """The rule's stages, in order."""
    direction = RULE_KINDS.get(kind) if isinstance(kind, str) else None
    stages: list[Stage] = []
    for i, s in enumerate(raw_stages):
        if not isinstance(s, dict):
            c.add(InvalidInputError(f"stages[{i}]", s, "a table with from_C, to_C, within_min"))
            continue
        stage = _stage(c, i, s, kind, direction, stages)
        if stage is not None:
            stages.append(stage)
    if direction is None and stages and isinstance(kind, str) and kind in RULE_KINDS:
        c.add(
            InvalidInputError("stages", f"{len(stages)} stage(s)", f"no stages for a {kind} rule (use bands)")
        )
    return stages


def _band(c: Collector, i: int, b: dict) -> Band:
    """One ``[[bands]]`` table: a range with at least one end and at least one time limit."""
    w = f"bands[{i}]."
    check_keys(c, b, BAND_KEYS, w)
    # Stricter: the narrower range, except for a band that only limits the time inside (at_most_min).
    widest = (
        b.get("at_most_min") is not None
        and b.get("at_least_min") is None
        and b.get("max_outside_min") is None
    )
    lo, lo_pub = _limit(c, w, b, "low", "low" if widest else "high")
    hi, hi_pub = _limit(c, w, b, "high", "high" if widest else "low")
    if lo is None and hi is None:
        c.add(
            InvalidInputError(
                w + "low_C", None, "low_C/low_F and/or high_C/high_F", "a band needs at least one end"
            )
        )
    if lo is not None and hi is not None and not lo < hi:
        c.add(InvalidInputError(w + "high_C", hi, f"> low_C ({lo:g} °C)"))
    limits = {k: _opt_number(c, w + k, b.get(k), minimum=0.0, unit="min") for k in BAND_LIMITS}
    if all(b.get(k) is None for k in limits):
        c.add(
            InvalidInputError(
                w + "at_least_min", None, "at least one of at_least_min, at_most_min, max_outside_min"
            )
        )
    bname = b.get("name", "")
    if not isinstance(bname, str):
        c.add(InvalidInputError(w + "name", bname, "a text"))
        bname = ""
    return Band(
        lo,
        hi,
        limits["at_least_min"],
        limits["at_most_min"],
        limits["max_outside_min"],
        bname,
        lo_pub,
        hi_pub,
    )


def _budget(c: Collector, raw: Any, kind: Any, name: str, citation: str) -> StabilityBudget | None:
    """The ``[budget]`` table of a stability-budget rule: the band and the hours allowed above and below it
    over the product's life (an allowance not given is 0 h: no time outside on that side, the safe side)."""
    if raw is None:
        if kind == "stability-budget":
            c.add(
                InvalidInputError(
                    "budget", None, "a [budget] table with low_C, high_C, allowance_above_h", "required"
                )
            )
        return None
    if kind != "stability-budget":
        c.add(InvalidInputError("budget", "given", 'only with kind = "stability-budget"'))
        return None
    if not isinstance(raw, dict):
        c.add(InvalidInputError("budget", raw, "a table with low_C, high_C, allowance_above_h"))
        return None
    check_keys(c, raw, BUDGET_KEYS, "budget.")
    for key in ("low_C", "high_C"):
        if raw.get(key) is None:
            c.add(InvalidInputError("budget." + key, None, "a temperature in °C", "required"))
    for key in ("allowance_above_h", "allowance_below_h"):
        if key in raw and raw[key] is None:
            c.add(InvalidInputError("budget." + key, None, f"[0, {MAX_ALLOWANCE_H:g}] h"))
    low = _opt_number(c, "budget.low_C", raw.get("low_C"), minimum=-80.0, maximum=100.0, unit="°C")
    high = _opt_number(c, "budget.high_C", raw.get("high_C"), minimum=-80.0, maximum=100.0, unit="°C")
    if low is not None and high is not None and not low < high:
        c.add(InvalidInputError("budget.high_C", high, f"> low_C ({low:g} °C)"))
        return None
    allow = {
        k: _opt_number(c, "budget." + k, raw.get(k, 0.0), minimum=0.0, maximum=MAX_ALLOWANCE_H, unit="h")
        for k in ("allowance_above_h", "allowance_below_h")
    }
    if low is None or high is None or None in allow.values():
        return None
    return StabilityBudget(low, high, allow["allowance_above_h"], allow["allowance_below_h"], name, citation)


def _list(c: Collector, data: dict, key: str, what: str) -> list:
    raw = data.get(key, [])
    if not isinstance(raw, list):
        c.add(InvalidInputError(key, raw, what))
        return []
    return raw


def rule_from_dict(data: dict, source: str = "rule") -> Rule:
    """Build a :class:`Rule` from a mapping (a parsed rule file), reporting every problem at once.

    Parameters
    ----------
    data : mapping with keys name, source, kind, point, title, notes, stages (list of mappings with
        from_C, to_C, within_min, clock) and bands (list of mappings with low_C, high_C, at_least_min,
        at_most_min, max_outside_min, name). Each temperature may be given in °F as well or instead
        (from_F, to_F, low_F, high_F: the figure the source publishes); see :func:`_limit`.
    source : where the mapping came from (a file name), used in error messages

    Raises
    ------
    InvalidInputError (or ValidationErrors, its subclass, for several problems), naming each field.

    >>> r = rule_from_dict({"name": "x", "source": "s", "kind": "cooling",
    ...                     "stages": [{"from_C": 57, "to_C": 21, "within_min": 120}]})
    >>> r.stages[0]
    Stage(from_C=57.0, to_C=21.0, within_min=120.0, clock='stage', from_published=None, to_published=None)
    >>> rule_from_dict({"name": "x", "source": "s", "kind": "cooling",
    ...                 "stages": [{"from_C": 21, "to_C": 57, "within_min": 120}]})
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: stages[0].to_C = '21 → 57': allowed below from_C for a cooling rule
    """
    c = Collector(source)
    if not isinstance(data, dict):
        raise InvalidInputError(source, type(data).__name__, "a table of rule keys")
    check_keys(c, data, RULE_KEYS)
    name = _text(c, data, "name", True)
    citation = _text(c, data, "source", True)
    title = _text(c, data, "title", False)
    notes = _text(c, data, "notes", False)
    if not isinstance(confirmed := data.get("confirmed", True), bool):
        c.add(InvalidInputError("confirmed", confirmed, "true or false (false: the rule is indicative)"))
    kind = data.get("kind", "cooling")
    with c.catch():
        validate.choice("kind", kind, RULE_KINDS)
    point = data.get("point", "core")
    with c.catch():
        validate.choice("point", point, RULE_POINTS)
    raw_stages = _list(c, data, "stages", "a list of stage tables")
    stages = _stages(c, raw_stages, kind)
    raw_bands = _list(c, data, "bands", "a list of band tables")
    bands: list[Band] = []
    for i, b in enumerate(raw_bands):
        if not isinstance(b, dict):
            c.add(InvalidInputError(f"bands[{i}]", b, "a table with low_C/high_C and a time limit"))
            continue
        bands.append(_band(c, i, b))
    budget = _budget(c, data.get("budget"), kind, name, citation)
    if not raw_stages and not raw_bands and "budget" not in data:
        c.add(InvalidInputError("stages", [], "at least one stage or band"))
    c.raise_if_any()
    return Rule(name, citation, kind, tuple(stages), tuple(bands), point, title, notes, confirmed, budget)


def _limit_to_dict(key: str, value_C: float, published: Published | None) -> dict[str, float]:
    """``{key_C: …, key_F: …}`` with the published figures (the °C value when only it is given)."""
    if published is None:
        return {key + "_C": value_C}
    out = {}
    if published.value_C is not None:
        out[key + "_C"] = published.value_C
    if published.value_F is not None:
        out[key + "_F"] = published.value_F
    return out


def rule_to_dict(rule: Rule) -> dict:
    """The mapping :func:`rule_from_dict` reads, omitting defaults and empty values (TOML-ready).

    >>> r = rule_from_dict({"name": "x", "source": "s", "kind": "storage",
    ...                     "bands": [{"low_C": 2, "high_C": 8, "max_outside_min": 0}]})
    >>> rule_from_dict(rule_to_dict(r)) == r
    True
    """
    d: dict[str, Any] = {"name": rule.name}
    if rule.title:
        d["title"] = rule.title
    d["source"] = rule.source
    d["kind"] = rule.kind
    if rule.point != "core":
        d["point"] = rule.point
    if rule.notes:
        d["notes"] = rule.notes
    if not rule.confirmed:
        d["confirmed"] = False
    if rule.stages:
        d["stages"] = []
        for s in rule.stages:
            sd: dict[str, Any] = {}
            if s.from_C is not None:
                sd.update(_limit_to_dict("from", s.from_C, s.from_published))
            sd.update(_limit_to_dict("to", s.to_C, s.to_published))
            sd["within_min"] = s.within_min
            if s.clock != "stage":
                sd["clock"] = s.clock
            d["stages"].append(sd)
    if rule.bands:
        d["bands"] = []
        for b in rule.bands:
            bd: dict[str, Any] = {}
            if b.name:
                bd["name"] = b.name
            if b.low_C is not None:
                bd.update(_limit_to_dict("low", b.low_C, b.low_published))
            if b.high_C is not None:
                bd.update(_limit_to_dict("high", b.high_C, b.high_published))
            for k in BAND_LIMITS:
                v = getattr(b, k)
                if v is not None:
                    bd[k] = v
            d["bands"].append(bd)
    if rule.budget is not None:
        b = rule.budget
        d["budget"] = {
            "low_C": b.low_C,
            "high_C": b.high_C,
            "allowance_above_h": b.allowance_above_h,
            "allowance_below_h": b.allowance_below_h,
        }
    return d
