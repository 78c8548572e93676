"""Unit conversions at the edges (the library works in SI with °C for temperatures)."""

from __future__ import annotations

import numpy as np

ZERO_CELSIUS_K = 273.15


def c_to_f(temperature_C):
    """°C → °F.

    >>> c_to_f(100.0)
    212.0
    """
    return (
        np.asarray(temperature_C, dtype=float) * 9.0 / 5.0 + 32.0
        if np.ndim(temperature_C)
        else float(temperature_C) * 9.0 / 5.0 + 32.0
    )


def f_to_c(temperature_F):
    """°F → °C.

    >>> f_to_c(32.0)
    0.0
    """
    return (
        (np.asarray(temperature_F, dtype=float) - 32.0) * 5.0 / 9.0
        if np.ndim(temperature_F)
        else (float(temperature_F) - 32.0) * 5.0 / 9.0
    )
