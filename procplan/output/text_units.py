"""Times and temperatures in the words of the summary text and the JSON summary (site units where given)."""

from __future__ import annotations


def _minutes(t_s: float | None) -> float | None:
    return None if t_s is None else round(t_s / 60.0, 2)


def _fmt_min(t_min: float | None) -> str:
    if t_min is None:
        return "—"
    if t_min >= 120:
        return f"{t_min:.0f} min ({t_min / 60:.1f} h)"
    return f"{t_min:.1f} min"


def _temp(site, value_C: float, digits: int | None = None) -> str:
    """A temperature in the site's unit (``site`` None: °C, ``digits`` None: as short as exact)."""
    if site is None:
        return f"{value_C:g} °C" if digits is None else f"{value_C:.{digits}f} °C"
    return site.format_temperature(value_C, 1 if digits is None else digits)


def _time(site, t_min: float | None) -> str:
    """A process time in the site's unit (``site`` None: minutes, with hours beside from 2 h)."""
    return _fmt_min(t_min) if site is None else site.format_time(t_min)
