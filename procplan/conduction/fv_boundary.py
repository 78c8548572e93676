"""Surface conditions for the finite-volume solver: medium temperature and h as functions of time.

A value is a constant, a piecewise-linear time profile ``(time_s, value)``, or a profile of step
changes (``TimeProfile.steps``). An optional extra surface heat flux ``q_extra_W_m2(t, T_surface)``
[W/m², positive into the product] carries evaporative cooling or radiation.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError

#: How a profile is read between its points.
INTERPOLATIONS: dict[str, str] = {
    "linear": "piecewise-linear between the points",
    "step": "each value holds from its time until the next point (a step change)",
}


@dataclass(frozen=True, eq=False)
class TimeProfile:
    """A quantity against time [s], starting at 0 s.

    Attributes
    ----------
    time_s : strictly increasing times [s], the first one 0
    value : values at those times (unit of the quantity it describes)
    interpolation : ``"linear"`` or ``"step"`` (see ``INTERPOLATIONS``)
    hold_last : keep the last value after the last time; without it a run longer than the profile is refused
    name : field name used in error messages

    Notes
    -----
    A step profile is read left-continuously at its own points: at ``time_s[i]`` it still gives
    ``value[i-1]``, so an implicit step that ends exactly on a change uses the old value and the
    next step the new one.

    >>> p = TimeProfile([0.0, 100.0], [10.0, 20.0])
    >>> float(p(50.0))
    15.0
    >>> s = TimeProfile.steps([0.0, 100.0], [10.0, 20.0], hold_last=True)
    >>> float(s(100.0)), float(s(100.1))
    (10.0, 20.0)
    """

    time_s: np.ndarray
    value: np.ndarray
    interpolation: str = "linear"
    hold_last: bool = False
    name: str = "profile"

    def __post_init__(self) -> None:
        validate.choice(f"{self.name}.interpolation", self.interpolation, INTERPOLATIONS)
        t = validate.increasing(f"{self.name}.time_s", self.time_s, "s")
        v = validate.array(f"{self.name}.value", self.value)
        if v.shape != t.shape:
            raise InvalidInputError(f"{self.name}.value", v.shape, f"one value per time ({t.size})")
        if t[0] != 0.0:
            raise InvalidInputError(
                f"{self.name}.time_s",
                float(t[0]),
                "a first time of 0 s",
                "the profile leaves a gap at the start of the run",
            )
        if t.size == 1 and not self.hold_last:
            raise InvalidInputError(
                f"{self.name}.time_s", t.tolist(), "at least two times, or hold_last=True"
            )
        t.setflags(write=False)
        v.setflags(write=False)
        object.__setattr__(self, "time_s", t)
        object.__setattr__(self, "value", v)

    @classmethod
    def constant(cls, value: float, name: str = "profile") -> TimeProfile:
        """A value that holds for ever."""
        return cls(np.array([0.0]), np.array([validate.number(name, value)]), "linear", True, name)

    @classmethod
    def steps(cls, time_s, value, *, hold_last: bool = False, name: str = "profile") -> TimeProfile:
        """Step changes: ``value[i]`` holds from ``time_s[i]`` until ``time_s[i+1]``."""
        return cls(np.asarray(time_s, dtype=float), np.asarray(value, dtype=float), "step", hold_last, name)

    def renamed(self, name: str) -> TimeProfile:
        return TimeProfile(self.time_s, self.value, self.interpolation, self.hold_last, name)

    @property
    def end_s(self) -> float:
        """Last time the profile defines (infinite when it holds its last value)."""
        return float("inf") if self.hold_last else float(self.time_s[-1])

    @property
    def breakpoints_s(self) -> np.ndarray:
        """Times where the profile has a kink or a jump (the solver lands a step on each)."""
        return self.time_s[1:] if self.time_s.size > 1 else np.empty(0)

    @property
    def jumps_s(self) -> np.ndarray:
        """Times of step changes (the time integrator restarts after each)."""
        if self.interpolation != "step" or self.time_s.size < 2:
            return np.empty(0)
        changed = np.diff(self.value) != 0
        return self.time_s[1:][changed]

    def check_covers(self, end_time_s: float) -> None:
        """Raise InvalidInputError when the profile stops before ``end_time_s``."""
        if end_time_s > self.end_s * (1 + 1e-12):
            raise InvalidInputError(
                f"{self.name}.time_s",
                float(self.time_s[-1]),
                f"a last time >= end_time_s = {end_time_s:g} s",
                "the profile ends before the run; add a point or set hold_last=True to keep its last value",
            )

    def __call__(self, time_s):
        t = np.asarray(time_s, dtype=float)
        if self.time_s.size == 1:
            return np.full(t.shape, self.value[0]) if t.ndim else float(self.value[0])
        if self.interpolation == "linear":
            out = np.interp(t, self.time_s, self.value)
        else:
            i = np.clip(np.searchsorted(self.time_s, t, side="left") - 1, 0, self.value.size - 1)
            out = self.value[i]
        return out if t.ndim else float(out)


def _as_profile(x, name: str, *, positive: bool) -> TimeProfile:
    if isinstance(x, TimeProfile):
        p = x.renamed(name)
    elif np.ndim(x) == 0:
        p = TimeProfile.constant(validate.number(name, x), name)
    else:
        try:
            t, v = x
        except (TypeError, ValueError):
            raise InvalidInputError(
                name, x, "a number, a (time_s, value) pair of arrays, or a TimeProfile"
            ) from None
        p = TimeProfile(np.asarray(t, dtype=float), np.asarray(v, dtype=float), "linear", False, name)
    if positive and np.any(p.value <= 0):
        raise InvalidInputError(
            name, float(p.value.min()), "> 0 W/m²K", "a surface heat-transfer coefficient must be positive"
        )
    return p


@dataclass(frozen=True, eq=False)
class SurfaceBoundary:
    """Convective surface condition q = h(t) (T_medium(t) − T_surface) + q_extra(t, T_surface) [W/m², into the product].

    Parameters
    ----------
    medium_C : medium temperature [°C]: a number, ``(time_s, value)`` arrays (piecewise linear), or a TimeProfile
    h_W_m2K : surface heat-transfer coefficient [W/m²K], > 0, in the same forms
    q_extra_W_m2 : optional callable ``q(t_s, T_surface_C) -> W/m²`` (vectorised over surface temperatures),
        positive into the product, e.g. evaporative cooling (negative)
    medium_node : optional :class:`procplan.conduction.fv_medium.MediumNode`: the medium is then solved with
        the pieces (``medium_C`` is its set point) instead of being given

    >>> b = SurfaceBoundary(2.0, ([0.0, 3600.0], [20.0, 40.0]))
    >>> b.h(1800.0)
    30.0
    """

    medium_C: TimeProfile | float | tuple
    h_W_m2K: TimeProfile | float | tuple
    q_extra_W_m2: Callable | None = None
    medium_node: Any = None
    _m: TimeProfile = field(init=False, repr=False)
    _h: TimeProfile = field(init=False, repr=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "_m", _as_profile(self.medium_C, "boundary.medium_C", positive=False))
        object.__setattr__(self, "_h", _as_profile(self.h_W_m2K, "boundary.h_W_m2K", positive=True))
        if self.q_extra_W_m2 is not None and not callable(self.q_extra_W_m2):
            raise InvalidInputError(
                "boundary.q_extra_W_m2", self.q_extra_W_m2, "a callable q(t_s, T_surface_C) or None"
            )

    @classmethod
    def constant(
        cls, medium_C: float, h_W_m2K: float, q_extra_W_m2: Callable | None = None
    ) -> SurfaceBoundary:
        """Constant medium temperature and h."""
        return cls(
            float(validate.number("boundary.medium_C", medium_C, unit="°C")),
            float(validate.positive("boundary.h_W_m2K", h_W_m2K, "W/m²K")),
            q_extra_W_m2,
        )

    def medium(self, time_s):
        """Medium temperature [°C] at ``time_s``."""
        return self._m(time_s)

    def h(self, time_s):
        """Surface heat-transfer coefficient [W/m²K] at ``time_s``."""
        return self._h(time_s)

    def q_extra(self, time_s: float, surface_C: np.ndarray) -> np.ndarray:
        """Extra surface heat flux [W/m²] (zero when none is given); checked finite."""
        if self.q_extra_W_m2 is None:
            return np.zeros_like(surface_C)
        q = np.broadcast_to(np.asarray(self.q_extra_W_m2(time_s, surface_C), dtype=float), surface_C.shape)
        if not np.all(np.isfinite(q)):
            raise InvalidInputError(
                "boundary.q_extra_W_m2",
                "non-finite value",
                "a finite heat flux [W/m²]",
                f"at t = {time_s:g} s",
            )
        return q

    def check_covers(self, end_time_s: float) -> None:
        self._m.check_covers(end_time_s)
        self._h.check_covers(end_time_s)

    @property
    def breakpoints_s(self) -> np.ndarray:
        return np.union1d(self._m.breakpoints_s, self._h.breakpoints_s)

    @property
    def jumps_s(self) -> np.ndarray:
        return np.union1d(self._m.jumps_s, self._h.jumps_s)
