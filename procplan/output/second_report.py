"""The second product in the load (``[load.second_product]``) in the summary (text and JSON) and the sheet.

One definition: :func:`second_product_texts` gives the words the summary text and the sheet print;
:func:`second_product_dict` the same facts as plain data. Per loaded step: its h (the machine's correlation for
its own shape and size), its end temperatures, the time to the step's stop temperature and to its own core
target; over the plan: when its core reached the target (:func:`procplan.run.second_product.second_target`).
"""

from __future__ import annotations

import math
from typing import Any

from procplan.output.text_units import _minutes, _temp, _time
from procplan.run.second_product import second_target, step_second

SECOND_PRODUCT_NOTE = "the plan's checks (targets, rules, lethality) apply to the main product only"


def _h(second) -> float | None:
    return None if not math.isfinite(second.h_W_m2K) else float(second.h_W_m2K)


def second_step_dict(second) -> dict[str, Any] | None:
    """The second product over one loaded step: its h, end temperatures, heat, time to the step's stop
    temperature and to its own core target (from the step start)."""
    if second is None:
        return None
    return {
        "product": second.name,
        "pieces": second.pieces,
        "end": {"core_C": second.core_C[-1], "surface_C": second.surface_C[-1], "mean_C": second.mean_C[-1]},
        "heat_kJ": second.heat_kJ,
        "stop_C": second.stop_C,
        "time_to_stop_min": _minutes(second.stop_time_s),
        "h_W_m2K": _h(second),
        "h_source": second.h_source,
        "target_core_C": second.target_C,
        "time_to_target_min": _minutes(second.target_time_s),
    }


def second_product_history(result) -> dict[str, list] | None:
    """The second product's history on the plan's clock over the loaded steps (``time_s``, ``core_C``,
    ``surface_C``, ``mean_C``, ``step``), or None without one."""
    rows: dict[str, list] = {"time_s": [], "core_C": [], "surface_C": [], "mean_C": [], "step": []}
    for sr in result.steps:
        second = step_second(sr)
        if second is None:
            continue
        first = 1 if rows["time_s"] else 0  # a step's first row repeats the previous step's last state
        rows["time_s"] += [sr.start_s + t for t in second.time_s[first:]]
        for k in ("core_C", "surface_C", "mean_C"):
            rows[k] += [float(v) for v in getattr(second, k)[first:]]
        rows["step"] += [sr.name] * (len(second.time_s) - first)
    return rows if rows["time_s"] else None


def _target_dict(result) -> dict[str, Any] | None:
    tg = second_target(result.plan, result.steps)
    if tg is None:
        return None
    return {
        "core_C": tg.target_C,
        "reached": tg.reached,
        "time_min": _minutes(tg.time_s),
        "step": tg.step,
        "at_loading": tg.at_loading,
        "end_core_C": tg.end_core_C,
    }


def second_product_dict(result) -> dict[str, Any] | None:
    """The plan's second product (``[load.second_product]``) as plain data, with its history, per step its h,
    end temperatures and times to the step's stop temperature and to its target, and over the plan when its
    core reached the target; None without one."""
    sp = result.plan.load.second_product
    if sp is None:
        return None
    return {
        "product": sp.product.name,
        "pieces": sp.pieces,
        "initial_temperature_C": sp.initial_temperature_C,
        "target_core_C": sp.target_core_C,
        "note": SECOND_PRODUCT_NOTE,
        "target": _target_dict(result),
        "steps": [
            {
                "name": sr.name,
                "solved_with_medium": sr.machine_load is not None,
                **second_step_dict(step_second(sr)),
            }
            for sr in result.steps
            if step_second(sr) is not None
        ],
        "history": second_product_history(result),
    }


def _stop_words(site, second) -> str:
    if second.stop_C is None:
        return ""
    if second.stop_time_s is None:
        return (
            f"; its core had not reached the step's stop temperature {_temp(site, second.stop_C)} when the "
            "step ended on the main product"
        )
    return f"; core at {_temp(site, second.stop_C)} after {_time(site, second.stop_time_s / 60)}"


def _target_words(result, site) -> str | None:
    """Its core target over the plan in words (None without a target)."""
    tg = second_target(result.plan, result.steps)
    if tg is None:
        return None
    goal = f"core target {_temp(site, tg.target_C)}"
    if tg.at_loading:
        return f"{goal}: already met at loading"
    if tg.reached:
        return f"{goal}: reached after {_time(site, tg.time_s / 60)} on the plan's clock (in '{tg.step}')"
    return (
        f"{goal}: NOT reached; core {_temp(site, tg.end_core_C, 1)} at the end of '{tg.last_step}' (the steps "
        "stop on the main product's core)"
    )


def second_product_texts(result, site=None) -> tuple[str, list[str]] | None:
    """The second product in words: what was loaded with the batch, and per loaded step its h, end
    temperatures and times to the step's stop temperature and its target, and the target over the plan (None
    without one). The summary text and the sheet both use it."""
    sp = result.plan.load.second_product
    if sp is None:
        return None
    what = (
        f"{sp.pieces} × {sp.product.name}, {sp.product.geometry.describe()}, loaded at "
        f"{_temp(site, sp.initial_temperature_C)} ({SECOND_PRODUCT_NOTE})"
    )
    ends = []
    tg = second_target(result.plan, result.steps)
    for sr in result.steps:
        second = step_second(sr)
        if second is None:
            continue
        h = _h(second)
        if h is None:
            h_words = ""
        elif second.h_source.startswith("h given"):
            h_words = f"h {h:.1f} W/m²K ({second.h_source}); "
        else:
            h_words = f"h {h:.1f} W/m²K for its own shape and size ({second.h_source}); "
        target = ""
        said_below = tg is not None and tg.reached and not tg.at_loading and tg.step == sr.name
        if second.target_time_s is not None and not said_below:
            target = f"; core at its target {_temp(site, second.target_C)} after {_time(site, second.target_time_s / 60)}"
        alone = "" if sr.machine_load is not None else "alone in the step's medium (not coupled); "
        ends.append(
            f"step {sr.index + 1} '{sr.name}': {alone}{h_words}end: core {_temp(site, second.core_C[-1], 1)}, surface "
            f"{_temp(site, second.surface_C[-1], 1)}, mean {_temp(site, second.mean_C[-1], 1)}"
            f"{_stop_words(site, second)}{target}"
        )
    words = _target_words(result, site)
    if words is not None:
        ends.append(words)
    return what, ends


def second_product_lines(result, site=None) -> list[str]:
    """The second product beside the main one in the summary text (nothing without one)."""
    texts = second_product_texts(result, site)
    if texts is None:
        return []
    return [f"  second product in the load: {texts[0]}", *(f"    {e}" for e in texts[1])]
