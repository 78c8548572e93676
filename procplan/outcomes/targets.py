"""Time for a temperature history to reach a target temperature.

Histories are sampled temperatures at strictly increasing times; between samples the temperature is taken
as linear in time (the same assumption the lethality and rule checks make), so a crossing time is found by
linear interpolation inside the sample interval in which it happens.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError

#: Directions a target can be approached from.
DIRECTIONS: tuple[str, ...] = ("down", "up", "either")


@dataclass(frozen=True)
class TargetResult:
    """When (and whether) a history reached a target temperature.

    Attributes
    ----------
    reached : True when the target was reached at or after ``start_s``
    time_s : crossing time [s], interpolated linearly; None when not reached
    target_C : the target [°C]
    direction : "down" (cooling to the target), "up" (heating to it) or the direction that "either" resolved to
    start_s : time from which the history was searched [s]
    at_start : True when the history was already at or beyond the target at ``start_s``
    closest_C : the temperature nearest the target reached from ``start_s`` on [°C] (the lowest for "down",
        the highest for "up"); equals the target when reached
    closest_time_s : when ``closest_C`` was reached [s]
    end_s : last time in the history [s]
    reason : one line saying what happened, for reports
    """

    reached: bool
    time_s: float | None
    target_C: float
    direction: str
    start_s: float
    at_start: bool
    closest_C: float
    closest_time_s: float
    end_s: float
    reason: str

    @property
    def elapsed_s(self) -> float | None:
        """Time from ``start_s`` to the crossing [s], or None when not reached."""
        return None if self.time_s is None else self.time_s - self.start_s


def history_arrays(
    time_s, temperature_C, *, time_field: str = "time_s", temperature_field: str = "temperature_C"
):
    """Validate a history: finite, equal-length 1-D arrays with strictly increasing times.

    >>> t, T = history_arrays([0, 60], [20.0, 10.0])
    >>> t.tolist(), T.tolist()
    ([0.0, 60.0], [20.0, 10.0])
    """
    t = validate.increasing(time_field, time_s, unit="s")
    temp = validate.array(temperature_field, temperature_C, unit="°C")
    if temp.shape != t.shape:
        raise InvalidInputError(temperature_field, f"{temp.size} values", f"one value per time ({t.size})")
    return t, temp


def _value_at(t: np.ndarray, y: np.ndarray, at_s: float) -> float:
    return float(np.interp(at_s, t, y))


def time_to_temperature(
    time_s,
    temperature_C,
    target_C: float,
    *,
    direction: str = "down",
    start_s: float | None = None,
) -> TargetResult:
    """First time a history reaches ``target_C``, interpolated linearly between samples.

    With temperature linear in time on each interval [t_i, t_i+1], the crossing of T* is

        t* = t_i + (T* − T_i)·(t_i+1 − t_i)/(T_i+1 − T_i)

    "down" looks for the first time T ≤ T*, "up" for T ≥ T*, "either" for the first time the history
    passes T* from whichever side it starts on. Not reaching the target is a result (``reached=False``
    with the closest temperature reached), not an error.

    Parameters
    ----------
    time_s : sample times [s], strictly increasing
    temperature_C : temperature at each time [°C]
    target_C : target temperature [°C]
    direction : "down", "up" or "either"
    start_s : search from this time [s] (default: the first sample); it may fall between samples

    Returns
    -------
    TargetResult

    Examples
    --------
    >>> r = time_to_temperature([0, 600, 1200], [60.0, 40.0, 20.0], 30.0)
    >>> r.reached, r.time_s
    (True, 900.0)
    >>> r = time_to_temperature([0, 600], [60.0, 40.0], 30.0)
    >>> r.reached, r.closest_C
    (False, 40.0)
    """
    t, temp = history_arrays(time_s, temperature_C)
    target = validate.number("target_C", target_C, unit="°C")
    validate.choice("direction", direction, DIRECTIONS)
    t0 = (
        float(t[0])
        if start_s is None
        else validate.number("start_s", start_s, minimum=float(t[0]), maximum=float(t[-1]), unit="s")
    )

    # The searched part of the history, starting exactly at t0.
    keep = t > t0
    ts = np.concatenate(([t0], t[keep]))
    ys = np.concatenate(([_value_at(t, temp, t0)], temp[keep]))

    if direction == "either":
        direction = "down" if ys[0] >= target else "up"
    if direction == "down":
        hit = ys <= target
        i_close = int(np.argmin(ys))
    else:
        hit = ys >= target
        i_close = int(np.argmax(ys))
    end_s = float(ts[-1])
    word = "cooled to" if direction == "down" else "heated to"

    if not np.any(hit):
        closest = float(ys[i_close])
        return TargetResult(
            False,
            None,
            target,
            direction,
            t0,
            False,
            closest,
            float(ts[i_close]),
            end_s,
            f"not {word} {target:g} °C by the end of the history at {end_s / 60:.1f} min "
            f"(closest {closest:.2f} °C at {ts[i_close] / 60:.1f} min)",
        )
    i = int(np.argmax(hit))
    if i == 0:
        return TargetResult(
            True,
            t0,
            target,
            direction,
            t0,
            True,
            target,
            t0,
            end_s,
            f"already at or beyond {target:g} °C at {t0 / 60:.1f} min",
        )
    ya, yb = ys[i - 1], ys[i]
    ta, tb = ts[i - 1], ts[i]
    crossing = float(ta + (target - ya) * (tb - ta) / (yb - ya))
    crossing = min(max(crossing, float(ta)), float(tb))
    return TargetResult(
        True,
        crossing,
        target,
        direction,
        t0,
        False,
        target,
        crossing,
        end_s,
        f"{word} {target:g} °C at {crossing / 60:.2f} min",
    )
