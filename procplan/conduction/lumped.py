"""Lumped-capacitance model: a product of uniform temperature cooled or heated by a medium at constant temperature.

Valid when the Biot number on L_c = V/A is small (Bi_c < 0.1, see :mod:`procplan.conduction.regime`).
With θ = T − T∞ and the time constant τ = ρ V c / (h A):

* temperature history  θ/θ_i = exp(−t/τ)                      (Incropera eq. 5.6)
* time to reach T       t = τ ln(θ_i/θ)                         (Incropera eq. 5.5)
* heat transferred      Q = ρ V c θ_i [1 − exp(−t/τ)]           (Incropera eq. 5.8)

Q is positive when the product gives heat to the medium (cooling), the sign convention of Incropera eq. 5.8.

References
----------
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat and Mass Transfer, 7th ed.,
Wiley, 2011, §5.2–5.3.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError


def _scalar_or_array(x: np.ndarray) -> float | np.ndarray:
    return float(x) if np.ndim(x) == 0 else x


def _temperature(field: str, value: Any) -> np.ndarray:
    return validate.array(field, value, minimum=-273.15, unit="°C")


def _positive_array(field: str, value: Any, unit: str) -> np.ndarray:
    a = validate.array(field, value, unit=unit)
    if np.any(a <= 0):
        raise InvalidInputError(field, float(a.min()), f"> 0 {unit}".rstrip())
    return a


def lumped_time_constant_s(
    h_W_m2K: Any, volume_m3: Any, area_m2: Any, rho_kg_m3: Any, cp_J_kgK: Any
) -> float | np.ndarray:
    """Thermal time constant of a lumped body.

    τ = ρ V c / (h A_s)

    Parameters
    ----------
    h_W_m2K : surface heat-transfer coefficient [W/m²K], > 0
    volume_m3 : volume V [m³], > 0
    area_m2 : area exposed to the medium A_s [m²], > 0
    rho_kg_m3 : density [kg/m³], > 0
    cp_J_kgK : specific heat [J/kgK], > 0

    Returns
    -------
    τ [s] (float, or an array when any input is an array)

    Examples
    --------
    Incropera Ex. 5.1, thermocouple junction of D = 0.706 mm (V/A = D/6):

    >>> import math
    >>> D = 0.706e-3
    >>> round(lumped_time_constant_s(400.0, math.pi * D**3 / 6, math.pi * D**2, 8500.0, 400.0), 3)
    1.0

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 5.7.
    """
    h = _positive_array("h_W_m2K", h_W_m2K, "W/m²K")
    v = _positive_array("volume_m3", volume_m3, "m³")
    a = _positive_array("area_m2", area_m2, "m²")
    rho = _positive_array("rho_kg_m3", rho_kg_m3, "kg/m³")
    cp = _positive_array("cp_J_kgK", cp_J_kgK, "J/kgK")
    return _scalar_or_array(rho * v * cp / (h * a))


def lumped_temperature_C(
    time_s: Any,
    initial_C: Any,
    medium_C: Any,
    h_W_m2K: Any,
    volume_m3: Any,
    area_m2: Any,
    rho_kg_m3: Any,
    cp_J_kgK: Any,
) -> float | np.ndarray:
    """Temperature history of a lumped body in a medium of constant temperature.

    (T − T∞)/(T_i − T∞) = exp[−(h A_s/(ρ V c)) t]

    Parameters
    ----------
    time_s : time since the product entered the medium [s], >= 0 (scalar or array, any order)
    initial_C : uniform initial temperature T_i [°C]
    medium_C : medium temperature T∞ [°C]
    h_W_m2K, volume_m3, area_m2, rho_kg_m3, cp_J_kgK : as in :func:`lumped_time_constant_s`

    Returns
    -------
    T [°C], broadcast over the inputs; a float when all inputs are scalars

    Notes
    -----
    Valid for Bi_c = h (V/A)/k < 0.1 with constant properties, h and T∞.

    Examples
    --------
    >>> round(lumped_temperature_C(60.0, 80.0, 20.0, 10.0, 1e-3, 0.06, 1000.0, 4000.0), 3)
    79.462

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 5.6.
    """
    t = validate.array("time_s", time_s, minimum=0.0, unit="s")
    ti = _temperature("initial_C", initial_C)
    tm = _temperature("medium_C", medium_C)
    tau = lumped_time_constant_s(h_W_m2K, volume_m3, area_m2, rho_kg_m3, cp_J_kgK)
    return _scalar_or_array(tm + (ti - tm) * np.exp(-t / np.asarray(tau)))


def lumped_time_to_temperature_s(
    target_C: Any,
    initial_C: Any,
    medium_C: Any,
    h_W_m2K: Any,
    volume_m3: Any,
    area_m2: Any,
    rho_kg_m3: Any,
    cp_J_kgK: Any,
) -> float | np.ndarray:
    """Time for a lumped body to reach a target temperature in a medium of constant temperature.

    t = (ρ V c / (h A_s)) ln[(T_i − T∞)/(T − T∞)]

    Parameters
    ----------
    target_C : temperature to reach [°C]; between the initial temperature (inclusive) and the medium
        temperature (exclusive), since the medium temperature itself is reached only as t → ∞
    initial_C, medium_C : initial and medium temperatures [°C]; they must differ
    h_W_m2K, volume_m3, area_m2, rho_kg_m3, cp_J_kgK : as in :func:`lumped_time_constant_s`

    Returns
    -------
    t [s]

    Examples
    --------
    Incropera Ex. 5.1: junction with τ = 1 s, from 25 °C in gas at 200 °C, to 199 °C:

    >>> import math
    >>> D = 6 * 400.0 * 1.0 / (8500.0 * 400.0)  # D = 6 h τ/(ρ c)
    >>> round(lumped_time_to_temperature_s(199.0, 25.0, 200.0, 400.0, math.pi * D**3 / 6, math.pi * D**2, 8500.0, 400.0), 1)
    5.2

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 5.5.
    """
    tt = _temperature("target_C", target_C)
    ti = _temperature("initial_C", initial_C)
    tm = _temperature("medium_C", medium_C)
    if np.any(ti == tm):
        raise InvalidInputError(
            "medium_C",
            _scalar_or_array(tm),
            "different from initial_C",
            "no heat transfer without a temperature difference",
        )
    ratio = (tt - tm) / (ti - tm)
    if np.any(ratio <= 0) or np.any(ratio > 1):
        bad = np.broadcast_to(tt, np.broadcast(tt, ratio).shape)[
            np.broadcast_to((ratio <= 0) | (ratio > 1), np.broadcast(tt, ratio).shape)
        ]
        raise InvalidInputError(
            "target_C",
            float(bad.flat[0]),
            "between initial_C (inclusive) and medium_C (exclusive)",
            "a lumped body approaches the medium temperature without reaching or passing it",
        )
    tau = lumped_time_constant_s(h_W_m2K, volume_m3, area_m2, rho_kg_m3, cp_J_kgK)
    return _scalar_or_array(np.asarray(tau) * -np.log(ratio))


def lumped_heat_J(
    time_s: Any,
    initial_C: Any,
    medium_C: Any,
    h_W_m2K: Any,
    volume_m3: Any,
    area_m2: Any,
    rho_kg_m3: Any,
    cp_J_kgK: Any,
) -> float | np.ndarray:
    """Heat given by a lumped body to the medium from t = 0 to t.

    Q = ρ V c (T_i − T∞) [1 − exp(−t/τ)]

    Positive when the body cools (gives heat to the medium), negative when it is heated.

    Parameters
    ----------
    time_s : time [s], >= 0
    initial_C, medium_C : initial and medium temperatures [°C]
    h_W_m2K, volume_m3, area_m2, rho_kg_m3, cp_J_kgK : as in :func:`lumped_time_constant_s`

    Returns
    -------
    Q [J]

    Examples
    --------
    >>> round(lumped_heat_J(1e9, 80.0, 20.0, 10.0, 1e-3, 0.06, 1000.0, 4000.0))  # all of ρVcΔT
    240000

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 5.8.
    """
    t = validate.array("time_s", time_s, minimum=0.0, unit="s")
    ti = _temperature("initial_C", initial_C)
    tm = _temperature("medium_C", medium_C)
    tau = np.asarray(lumped_time_constant_s(h_W_m2K, volume_m3, area_m2, rho_kg_m3, cp_J_kgK))
    v = np.asarray(volume_m3, dtype=float)
    rho = np.asarray(rho_kg_m3, dtype=float)
    cp = np.asarray(cp_J_kgK, dtype=float)
    return _scalar_or_array(rho * v * cp * (ti - tm) * -np.expm1(-t / tau))
