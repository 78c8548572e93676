"""Small input components that speak the display units and return library units (°C, minutes)."""

from __future__ import annotations

from collections.abc import Iterable

import streamlit as st

from procplan.caution import CAUTION
from procplan.ui import state
from procplan.ui.adapter import Problem


def _clamp(v: float, lo: float | None, hi: float | None) -> float:
    if lo is not None and v < lo:
        v = lo
    if hi is not None and v > hi:
        v = hi
    return v


def number(
    label: str,
    value: float,
    key: str,
    *,
    minimum: float | None = None,
    maximum: float | None = None,
    step: float = 1.0,
    fmt: str = "%g",
    help: str | None = None,
) -> float:
    """A number input whose start value is kept inside its limits (a stale value never raises)."""
    v = _clamp(float(value), minimum, maximum)
    return float(
        st.number_input(
            label,
            min_value=None if minimum is None else float(minimum),
            max_value=None if maximum is None else float(maximum),
            value=float(v),
            step=float(step),
            format=fmt,
            key=state.key(key),
            help=help,
        )
    )


def temperature(
    label: str,
    value_C: float,
    key: str,
    *,
    minimum_C: float | None = None,
    maximum_C: float | None = None,
    step: float = 0.5,
    help: str | None = None,
) -> float:
    """A temperature input in the display unit; returns °C (clamped to the °C limits)."""
    u = state.units()
    lo = None if minimum_C is None else round(u.t(minimum_C), 4)
    hi = None if maximum_C is None else round(u.t(maximum_C), 4)
    shown = number(
        f"{label} [{u.temperature}]",
        round(u.t(value_C), 4),
        key,
        minimum=lo,
        maximum=hi,
        step=step,
        fmt="%.1f",
        help=help,
    )
    return _clamp(u.t_in(shown), minimum_C, maximum_C)


def duration(
    label: str,
    minutes: float,
    key: str,
    *,
    minimum_min: float = 0.1,
    maximum_min: float = 10080.0,
    help: str | None = None,
) -> float:
    """A duration in minutes or hours (display); returns minutes."""
    u = state.units()
    step = 5.0 if u.time == "min" else 0.25
    shown = number(
        f"{label} [{u.time}]",
        round(u.minutes_to_shown(minutes), 6),
        key,
        minimum=round(u.minutes_to_shown(minimum_min), 6),
        maximum=round(u.minutes_to_shown(maximum_min), 6),
        step=step,
        fmt="%.2f" if u.time == "h" else "%.1f",
        help=help,
    )
    return _clamp(u.shown_to_minutes(shown), minimum_min, maximum_min)


def problems(items: Iterable[Problem], heading: str) -> None:
    """Show invalid-input problems, one line per field."""
    items = list(items)
    if not items:
        return
    lines = "\n".join(f"- {p.message()}" for p in items)
    st.error(f"{heading}\n\n{lines}", icon=":material/error:")


def caution() -> None:
    """The standing caution, shown on every page."""
    st.warning(CAUTION, icon=":material/gavel:")


class FieldErrors:
    """Places under the fields of an editor where their problems show, once the edit is validated.

    ``mark(field)`` right after a widget reserves its place; ``show(problems)`` puts each problem under the
    field it names (the longest marked field that starts its path) and returns those with no place.
    """

    def __init__(self) -> None:
        self._slots: dict[str, object] = {}

    def mark(self, field: str) -> None:
        self._slots[field] = st.empty()

    def hint(self, field: str, text: str) -> None:
        """A neutral note in a marked field's place (a field not yet filled in, before it counts as a fault)."""
        if field in self._slots:
            self._slots[field].caption(text)

    def show(self, items: Iterable[Problem]) -> list[Problem]:
        placed: dict[str, list[str]] = {}
        rest: list[Problem] = []
        for p in items:
            keys = [
                k
                for k in self._slots
                if p.field == k or p.field.startswith(k + ".") or p.field.startswith(k + "[")
            ]
            if keys:
                placed.setdefault(max(keys, key=len), []).append(p.message())
            else:
                rest.append(p)
        for k, messages in placed.items():
            self._slots[k].error("\n\n".join(messages), icon=":material/error:")
        return rest
