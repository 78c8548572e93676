"""Heat removed and heat added (gross, each direction), peak duty (largest 1-min mean), coefficient of performance and energy cost.

Sign convention: ``heat_flow_W`` in a history is the heat flow **into** one piece through its surface [W]
(negative while it is chilled, positive while it is heated). Heat removed is the negative of its integral.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.properties.table import PropertyTable
from procplan.units import ZERO_CELSIUS_K


def heat_transferred_J(time_s, heat_flow_W) -> np.ndarray:
    """Cumulative heat into one piece [J] at every sample, Q(t) = ∫ q dt (trapezoid rule: exact for q linear
    between samples).

    >>> heat_transferred_J([0, 10, 20], [-100.0, -100.0, 0.0]).tolist()
    [0.0, -1000.0, -1500.0]
    """
    t = validate.increasing("time_s", time_s, unit="s")
    q = validate.array("heat_flow_W", heat_flow_W, unit="W")
    if q.shape != t.shape:
        raise InvalidInputError("heat_flow_W", f"{q.size} values", f"one value per time ({t.size})")
    return np.concatenate(([0.0], np.cumsum(0.5 * (q[1:] + q[:-1]) * np.diff(t))))


def enthalpy_change_J_kg(properties: PropertyTable, start_C: float, end_C: float) -> float:
    """Specific enthalpy change H(T_end) − H(T_start) [J/kg] from a property table (negative on cooling).

    For a piece with a non-uniform field, pass the temperatures of a uniform state (start of a step from
    equilibrium, end after equalisation); H of the mean temperature is not the mean H where H(T) is curved.

    >>> p = PropertyTable.constant(0.5, 1000.0, 4000.0)
    >>> enthalpy_change_J_kg(p, 20.0, 5.0)
    -60000.0
    """
    t0 = validate.number("start_C", start_C, unit="°C")
    t1 = validate.number("end_C", end_C, unit="°C")
    return float(properties.enthalpy(t1) - properties.enthalpy(t0))


#: Window over which the peak duty is averaged [s]. The peak duty is the largest 1-minute mean rate: the
#: instantaneous flux at the moment a hot product meets the medium is unbounded in the model and never reaches a
#: refrigeration plant, whose capacity is judged against sustained (minute-average) loads.
PEAK_WINDOW_S = 60.0

#: The label of the peak duty wherever it is shown.
PEAK_DUTY_LABEL = "peak duty (largest 1-min mean)"


def heat_by_direction_J(time_s, heat_flow_W) -> tuple[float, float]:
    """Gross heat removed and gross heat added [J], each ≥ 0: ∫ max(−q, 0) dt and ∫ max(q, 0) dt.

    Exact for q linear between samples (an interval where q changes sign is split at its zero).

    >>> heat_by_direction_J([0, 10, 20], [-100.0, 100.0, 100.0])
    (250.0, 1250.0)
    """
    t = validate.increasing("time_s", time_s, unit="s")
    q = validate.array("heat_flow_W", heat_flow_W, unit="W")
    if q.shape != t.shape:
        raise InvalidInputError("heat_flow_W", f"{q.size} values", f"one value per time ({t.size})")
    q0, q1, dt = q[:-1], q[1:], np.diff(t)
    cross = q0 * q1 < 0
    # zero at fraction f = q0 / (q0 − q1) of the interval; each part is a triangle
    f = np.where(cross, q0 / np.where(cross, q0 - q1, 1.0), 0.0)
    pos = np.where(cross, 0.5 * dt * (np.maximum(q0, 0) * f + np.maximum(q1, 0) * (1 - f)), 0.0)
    neg = np.where(cross, 0.5 * dt * (np.minimum(q0, 0) * f + np.minimum(q1, 0) * (1 - f)), 0.0)
    same = 0.5 * (q0 + q1) * dt
    pos = np.where(cross, pos, np.maximum(same, 0.0))
    neg = np.where(cross, neg, np.minimum(same, 0.0))
    return abs(float(neg.sum())), float(pos.sum())


def _cumulative_at(t: np.ndarray, q: np.ndarray, cum: np.ndarray, x: np.ndarray) -> np.ndarray:
    """∫ q dt from t[0] to x for q linear between samples (exact: quadratic inside an interval)."""
    i = np.clip(np.searchsorted(t, x, side="right") - 1, 0, t.size - 2)
    dt = t[i + 1] - t[i]
    s = x - t[i]
    return cum[i] + q[i] * s + 0.5 * (q[i + 1] - q[i]) / dt * s * s


def peak_duty_W(time_s, heat_flow_W, window_s: float = PEAK_WINDOW_S) -> tuple[float, float]:
    """Peak duty: the largest mean |heat flow| over any window of ``window_s`` (the whole history if shorter)
    [W], and the start of that window [s]. Windows start or end at a sample; |q| is linear between samples.

    >>> peak_duty_W(np.array([0.0, 60.0, 120.0]), np.array([-100.0, -100.0, -40.0]))
    (100.0, 0.0)
    >>> peak_duty_W(np.array([0.0, 120.0]), np.array([-300.0, -180.0]))  # (300 + 240) / 2 over the first minute
    (270.0, 0.0)
    """
    t = np.asarray(time_s, dtype=float)
    q = np.abs(np.asarray(heat_flow_W, dtype=float))
    if t.size < 2:
        return (float(q.max()) if q.size else 0.0), (float(t[0]) if t.size else 0.0)
    cum = np.concatenate([[0.0], np.cumsum(0.5 * (q[1:] + q[:-1]) * np.diff(t))])
    w = min(window_s, t[-1] - t[0])
    if w <= 0:
        return float(q.max()), float(t[0])
    starts = np.union1d(t[t <= t[-1] - w], t[t >= t[0] + w] - w)
    means = (_cumulative_at(t, q, cum, starts + w) - _cumulative_at(t, q, cum, starts)) / w
    i = int(np.argmax(means))
    return float(means[i]), float(starts[i])


@dataclass(frozen=True)
class EnergySummary:
    """Heat exchanged by one piece and by the batch; removed and added are gross, each ≥ 0 (never netted).

    heat_in_J_per_piece : net ∫ q dt [J] (negative when cooled), for the energy balance only
    heat_removed_J_per_piece : gross heat removed, ∫ max(−q, 0) dt [J]
    pieces : pieces in the batch (may be fractional when given as batch mass / piece mass)
    heat_removed_J_per_batch : gross heat removed from the batch [J]
    peak_duty_kW_per_batch : peak duty (largest 1-min mean of |q|) for the whole batch [kW], ≥ 0
    peak_time_s : start of that minute [s]
    enthalpy_change_J_per_piece : m ΔH from the product's enthalpy [J], when given
    balance_error : (∫ q dt − m ΔH) / max(|m ΔH|, ∫ |q| dt), the energy-balance check of the history, when given
                    (0 when no heat crossed the surface and the enthalpy did not change)
    heat_added_J_per_piece, heat_added_J_per_batch : gross heat added, ∫ max(q, 0) dt [J]
    """

    heat_in_J_per_piece: float
    heat_removed_J_per_piece: float
    pieces: float
    heat_removed_J_per_batch: float
    peak_duty_kW_per_batch: float
    peak_time_s: float
    enthalpy_change_J_per_piece: float | None
    balance_error: float | None
    heat_added_J_per_piece: float = 0.0
    heat_added_J_per_batch: float = 0.0


def _pieces(m: float, pieces: float | None, batch_mass_kg: float | None) -> float:
    if pieces is not None and batch_mass_kg is not None:
        raise InvalidInputError("batch_mass_kg", batch_mass_kg, "either pieces or batch_mass_kg, not both")
    if batch_mass_kg is not None:
        return validate.positive("batch_mass_kg", batch_mass_kg, "kg") / m
    if pieces is not None:
        return validate.positive("pieces", pieces)
    return 1.0


def energy_summary(
    time_s,
    heat_flow_W,
    *,
    piece_mass_kg: float,
    pieces: float | None = None,
    batch_mass_kg: float | None = None,
    enthalpy_change_J_kg: float | None = None,
) -> EnergySummary:
    """Heat per piece and per batch from a heat-flow history, with the energy balance against m ΔH.

    Q = ∫ q dt (per piece);  Q_batch = n Q;  n = pieces, or batch mass / piece mass. Heat removed and heat
    added are reported separately (gross in each direction). Check: Q ≈ m (H(T_end) − H(T_0)).

    Parameters
    ----------
    time_s : sample times [s]
    heat_flow_W : heat flow into one piece at each time [W]
    piece_mass_kg : mass of one piece [kg]
    pieces : number of pieces in the batch (default 1, unless ``batch_mass_kg`` is given)
    batch_mass_kg : batch mass [kg], instead of ``pieces``
    enthalpy_change_J_kg : H(T_end) − H(T_0) of the product [J/kg] (see :func:`enthalpy_change_J_kg`)

    >>> s = energy_summary([0, 3600], [-100.0, -100.0], piece_mass_kg=2.0, pieces=10,
    ...                    enthalpy_change_J_kg=-180000.0)
    >>> s.heat_removed_J_per_batch, s.heat_added_J_per_batch, s.peak_duty_kW_per_batch, s.balance_error
    (3600000.0, 0.0, 1.0, 0.0)

    A piece already at the medium temperature exchanges nothing and balances exactly:

    >>> energy_summary([0, 600], [0.0, 0.0], piece_mass_kg=0.02, enthalpy_change_J_kg=0.0).balance_error
    0.0
    """
    m = validate.positive("piece_mass_kg", piece_mass_kg, "kg")
    n = _pieces(m, pieces, batch_mass_kg)
    q = validate.array("heat_flow_W", heat_flow_W, unit="W")
    t = np.asarray(time_s, dtype=float)
    q_in = float(heat_transferred_J(time_s, q)[-1])
    removed, added = heat_by_direction_J(t, q)
    peak_W, peak_t = peak_duty_W(t, q)
    dh = bal = None
    if enthalpy_change_J_kg is not None:
        dh = m * validate.number("enthalpy_change_J_kg", enthalpy_change_J_kg, unit="J/kg")
        # Relative to the larger of the enthalpy change and the heat that crossed the surface either way, so a
        # product loaded at the medium temperature (nothing exchanged) balances at 0 instead of dividing by 0,
        # and a step that heats then cools is not judged against its small net change.
        scale = max(abs(dh), removed + added)
        bal = (q_in - dh) / scale if scale > 0 else 0.0
    return EnergySummary(
        q_in, removed, n, removed * n, peak_W * n / 1000.0, peak_t, dh, bal, added, added * n
    )


def cop_carnot(evaporating_C: float, condensing_C: float) -> float:
    """Carnot coefficient of performance of a refrigerator, COP = T_evap / (T_cond − T_evap), in kelvin.

    >>> round(cop_carnot(-30.0, 35.0), 3)
    3.741

    References
    ----------
    Çengel & Boles, Thermodynamics: An Engineering Approach, ch. 6 (reversed Carnot cycle).
    """
    te = validate.number(
        "evaporating_C", evaporating_C, minimum=-ZERO_CELSIUS_K, min_inclusive=False, unit="°C"
    )
    tc = validate.number(
        "condensing_C", condensing_C, minimum=te, min_inclusive=False, unit="°C (above evaporating_C)"
    )
    te_k = te + ZERO_CELSIUS_K
    return te_k / (tc - te)


def cop_realistic(evaporating_C: float, condensing_C: float, carnot_fraction: float = 0.5) -> float:
    """Plant COP as a fraction of the Carnot COP (0.5 by default; 0.4–0.6 for industrial plants: common practice).

    >>> round(cop_realistic(-30.0, 35.0), 3)
    1.87
    """
    f = validate.number("carnot_fraction", carnot_fraction, minimum=0.0, maximum=1.0, min_inclusive=False)
    return f * cop_carnot(evaporating_C, condensing_C)


@dataclass(frozen=True)
class RefrigerationEnergy:
    """Electricity (and its cost) to remove a quantity of heat.

    heat_removed_J : heat removed [J]
    cop_carnot, cop : Carnot and plant COP used
    electricity_J, electricity_kWh : compressor electricity, heat/COP
    cost : electricity_kWh × price, in the price's currency (None without a price)
    """

    heat_removed_J: float
    cop_carnot: float
    cop: float
    electricity_J: float
    electricity_kWh: float
    cost: float | None


def refrigeration_energy(
    heat_removed_J: float,
    evaporating_C: float,
    condensing_C: float,
    *,
    carnot_fraction: float = 0.5,
    price_per_kWh: float | None = None,
) -> RefrigerationEnergy:
    """Electricity to remove ``heat_removed_J`` with a plant of COP = fraction × Carnot, and its cost.

    W = Q / COP;  cost = W [kWh] × price.

    >>> e = refrigeration_energy(3.6e6, -30.0, 35.0, price_per_kWh=0.2)
    >>> round(e.electricity_kWh, 4), round(e.cost, 4)
    (0.5347, 0.1069)
    """
    q = validate.number("heat_removed_J", heat_removed_J, minimum=0.0, unit="J")
    cc = cop_carnot(evaporating_C, condensing_C)
    cop = cop_realistic(evaporating_C, condensing_C, carnot_fraction)
    w = q / cop
    kwh = w / 3.6e6
    cost = None
    if price_per_kWh is not None:
        cost = kwh * validate.number("price_per_kWh", price_per_kWh, minimum=0.0, unit="per kWh")
    return RefrigerationEnergy(q, cc, cop, w, kwh, cost)
