"""Safety margin on a predicted process time, and the check of an equipment cycle against it.

plan time = predicted time × (1 + margin_percent/100) + fixed minutes

The margin covers model error and product/equipment variability; its size is the site's decision
(common practice: 10–25 % on predicted chilling times, plus any fixed loading allowance).
"""

from __future__ import annotations

from dataclasses import dataclass

from procplan import validate


def plan_time_min(predicted_min: float, margin_percent: float, fixed_min: float = 0.0) -> float:
    """Planned time [min] = predicted × (1 + margin/100) + fixed.

    >>> plan_time_min(100.0, 20.0, 5.0)
    125.0
    """
    p = validate.number("predicted_min", predicted_min, minimum=0.0, unit="min")
    m = validate.number("margin_percent", margin_percent, minimum=0.0, unit="%")
    f = validate.number("fixed_min", fixed_min, minimum=0.0, unit="min")
    return p * (1.0 + m / 100.0) + f


@dataclass(frozen=True)
class MarginCheck:
    """An equipment cycle compared with the planned time.

    predicted_min : predicted process time [min]
    plan_min : predicted time with the margin [min]
    cycle_min : the equipment's cycle time [min]
    spare_min : cycle − plan [min] (negative: the cycle is too short)
    cycle_too_short : True when the cycle is shorter than the planned time
    message : one line for reports
    """

    predicted_min: float
    margin_percent: float
    fixed_min: float
    plan_min: float
    cycle_min: float
    spare_min: float
    cycle_too_short: bool
    message: str


def check_cycle(
    predicted_min: float, cycle_min: float, margin_percent: float, fixed_min: float = 0.0
) -> MarginCheck:
    """Flag an equipment cycle shorter than the predicted time plus the safety margin.

    Parameters
    ----------
    predicted_min : predicted process time [min], ≥ 0
    cycle_min : equipment cycle time [min], > 0
    margin_percent : safety margin [%], ≥ 0
    fixed_min : fixed allowance added after the margin [min], ≥ 0

    >>> c = check_cycle(100.0, 110.0, 20.0)
    >>> c.plan_min, c.cycle_too_short, c.spare_min
    (120.0, True, -10.0)
    """
    plan = plan_time_min(predicted_min, margin_percent, fixed_min)
    cyc = validate.positive("cycle_min", cycle_min, "min")
    spare = cyc - plan
    short = spare < 0
    if short:
        msg = f"cycle of {cyc:g} min is {-spare:.1f} min shorter than the planned {plan:.1f} min (predicted {predicted_min:g} min + {margin_percent:g} % + {fixed_min:g} min)"
    else:
        msg = f"cycle of {cyc:g} min covers the planned {plan:.1f} min with {spare:.1f} min to spare"
    return MarginCheck(
        float(predicted_min), float(margin_percent), float(fixed_min), plan, cyc, spare, short, msg
    )
