"""Display units: the library computes in °C and seconds; the app shows °C or °F, minutes or hours.

Conversion happens here, at the edge, through :mod:`procplan.units`; nothing in the app converts a
temperature any other way.
"""

from __future__ import annotations

import math

import numpy as np

from procplan.units import c_to_f, f_to_c

TEMPERATURE_UNITS = ("°C", "°F")
TIME_UNITS = ("min", "h")


class Units:
    """The user's display units."""

    def __init__(self, temperature: str = "°C", time: str = "min") -> None:
        self.temperature = temperature if temperature in TEMPERATURE_UNITS else "°C"
        self.time = time if time in TIME_UNITS else "min"

    @property
    def fahrenheit(self) -> bool:
        return self.temperature == "°F"

    # temperatures -------------------------------------------------------------------------------
    def t(self, temperature_C):
        """°C → display unit (scalars or arrays)."""
        if temperature_C is None:
            return None
        return (
            c_to_f(temperature_C)
            if self.fahrenheit
            else (np.asarray(temperature_C, dtype=float) if np.ndim(temperature_C) else float(temperature_C))
        )

    def t_in(self, shown: float) -> float:
        """Display unit → °C (rounded to 1e-6 K so a converted limit does not creep past its range)."""
        return round(float(f_to_c(shown)) if self.fahrenheit else float(shown), 6)

    def dt(self, difference_K: float) -> float:
        """A temperature difference in the display unit."""
        return difference_K * 1.8 if self.fahrenheit else difference_K

    def temp(self, temperature_C, digits: int = 1) -> str:
        if temperature_C is None or (isinstance(temperature_C, float) and not math.isfinite(temperature_C)):
            return "—"
        return f"{self.t(temperature_C):.{digits}f} {self.temperature}"

    # times -----------------------------------------------------------------------------------------
    def time_value(self, time_s):
        """Seconds → display unit (scalars or arrays)."""
        div = 60.0 if self.time == "min" else 3600.0
        return np.asarray(time_s, dtype=float) / div if np.ndim(time_s) else float(time_s) / div

    def minutes_to_shown(self, minutes: float) -> float:
        return minutes if self.time == "min" else minutes / 60.0

    def shown_to_minutes(self, shown: float) -> float:
        return round(float(shown), 9) if self.time == "min" else round(float(shown) * 60.0, 9)

    def duration(self, time_s, digits: int | None = None) -> str:
        if time_s is None or (isinstance(time_s, float) and not math.isfinite(time_s)):
            return "—"
        v = self.time_value(time_s)
        if digits is None:
            digits = 0 if (self.time == "min" and abs(v) >= 100) else 1 if self.time == "min" else 2
        return f"{v:.{digits}f} {self.time}"

    def duration_min(self, minutes: float | None, digits: int | None = None) -> str:
        return "—" if minutes is None else self.duration(minutes * 60.0, digits)


def fraction(x: float, digits: int = 3) -> str:
    return f"{x:.{digits}f}"


def yes_no(flag: bool | None, yes: str = "pass", no: str = "FAIL") -> str:
    if flag is None:
        return "—"
    return yes if flag else no


#: Words of correlation names that describe the geometry or flow (the rest are authors' names).
_PLAIN_WORDS = {
    "flat", "plate", "laminar", "mixed", "turbulent", "cylinder", "sphere", "vertical", "horizontal",
    "unstable", "stable", "condensation",
}  # fmt: skip


def correlation_text(names: str) -> str:
    """'cylinder-churchill-bernstein + horizontal-cylinder-churchill-chu' → readable words with authors."""
    if not names or names == "user-entered":
        return "entered by the user" if names == "user-entered" else "—"
    parts = []
    names, paren, note = names.partition(" (")
    for name in names.split(" + "):
        words = name.strip().split("-")
        plain = [w for w in words if w in _PLAIN_WORDS]
        authors = [w.capitalize() for w in words if w not in _PLAIN_WORDS]
        text = " ".join(plain) or "correlation"
        parts.append(text + (f" ({' and '.join(authors)})" if authors else ""))
    return "; ".join(parts) + (f"; {note.removesuffix(')')}" if paren else "")


def round_to(value: float, step: float, direction: str = "nearest") -> float:
    """A value rounded to a step a machine can be set to; 'up' or 'down' rounds toward the safe side."""
    q = value / step
    n = (
        math.ceil(q - 1e-9)
        if direction == "up"
        else math.floor(q + 1e-9)
        if direction == "down"
        else round(q)
    )
    digits = max(0, -math.floor(math.log10(step))) if step < 1 else 0
    return round(n * step, digits)


#: File keys as the planner names them (the rest: the key in words with its unit, via the sheet's headers).
PLAIN_KEYS = {
    "steps": "step",
    "targets": "target",
    "stages": "stage",
    "bands": "band",
    "lines": "line",
    "settings": "setting",
    "equipment": "machine",
    "id": "file name",
    "temperature_C": "temperature",
    "stop_when_core_C": "stop when the core reaches",
    "duration_min": "step time",
    "medium_C": "medium temperature",
    "h_W_m2K": "surface coefficient h",
    "reference_C": "reference temperature",
    "z_C": "z-value",
    "required_F_min": "required F",
    "d_value_min": "D-value",
    "from_C": "from",
    "to_C": "down to",
    "within_min": "time allowed",
    "low_C": "lowest temperature",
    "high_C": "highest temperature",
    "max_outside_min": "time allowed outside",
    "at_least_min": "at least",
    "at_most_min": "at most",
    "price_per_kWh": "electricity price per kWh",
    "tolerance_K": "probe tolerance",
    "document_prefix": "document number prefix",
    "margin_percent": "safety margin",
    "margin_min": "fixed margin",
    "capacity_kW": "capacity",
    "evaporating_C": "evaporating temperature",
    "condensing_C": "condensing temperature",
    "conductivity_model": "conductivity model",
    "cooling_rule": "cooling rule",
    "pieces_per_batch": "pieces per batch",
    "loading_medium_C": "medium temperature at loading",
    "load": "load",
    "second_product": "second product",
    "initial_temperature_C": "temperature at loading",
    "cases_layout": "cases along length, width, height",
    "piece_layout": "pieces along length, width, height",
    "pieces_per_case": "pieces per case",
    "case_length_mm": "inner case length [mm]",
    "case_width_mm": "inner case width [mm]",
    "case_height_mm": "inner case height [mm]",
    "wall": "case wall",
    "wall_thickness_mm": "case wall thickness [mm]",
    "wall_k_W_mK": "case wall conductivity [W/mK]",
    "void_fraction": "air fraction between the pieces",
    "air_flow_factor": "share of the air speed at the load",
    "min": "lowest setting",
    "max": "highest setting",
    "default": "usual setting",
    "brine": "brining",
    "brine_percent": "brine concentration [%]",
    "initial_percent": "content at the start [%]",
    "diffusivity": "diffusivity record",
    "D_m2_s": "diffusivity D [m²/s]",
    "k_m_m_s": "surface mass-transfer coefficient [m/s]",
    "activation_kJ_mol": "activation energy [kJ/mol]",
    "partition": "partition coefficient",
    "stop_when_core_percent": "core content to stop at [%]",
    "stop_when_mean_percent": "mean content to stop at [%]",
    "target_core_percent": "core target [%]",
    "target_mean_percent": "mean target [%]",
    "dew_point_C": "dew point",
}


def plain_field(field: str) -> str:
    """A file key path in the planner's words.

    >>> plain_field("steps[0].targets[1].temperature_C")
    'Step 1, target 2, temperature'
    >>> plain_field("site.energy.price_per_kWh")
    'Energy, electricity price per kWh'
    >>> plain_field("checks.lethality.required_F_min")
    'Lethality, required F'
    >>> plain_field("equipment.settings.air_C.max")
    'Machine, setting, air [°C], highest setting'
    """
    import re

    from procplan.output.xlsx import header

    parts = []
    path = str(field).split(".")
    if len(path) > 1 and path[0] in ("site", "checks", "product"):
        path = path[1:]  # the page says which record; the first word names the section
    for part in path:
        m = re.fullmatch(r"([A-Za-z_]\w*)\[(\d+)\]", part)
        if m:
            word = PLAIN_KEYS.get(m.group(1), m.group(1).replace("_", " "))
            parts.append(f"{word} {int(m.group(2)) + 1}")
        elif part:
            parts.append(PLAIN_KEYS.get(part) or header(part))
    text = ", ".join(parts)
    return text[:1].upper() + text[1:]
