"""Water-holding capacity of heated meat and the water it expels (drip, cook juice).

As muscle proteins denature (myosin from about 40–55 °C, actin near 70–80 °C) the protein network shrinks and
holds less water; the water it can no longer hold is expelled to the surface and leaves as drip (or feeds the
evaporation there). The equilibrium water content of beef against temperature follows a sigmoid
(van der Sman 2007):

    C_eq(T) = a₁ − a₂ / (1 + a₃ exp(−a₄ (T − T_σ)))        [kg water / kg raw meat]

with a₁ = 0.745 (raw lean beef), a₂ = 0.345, a₃ = 30, a₄ = 0.25 1/K and T_σ = 52 °C. C_eq falls from a₁ below
about 40 °C to a₁ − a₂ = 0.40 above about 85 °C. The curve is read here per kg of the raw meat: the share of
the raw water a heated piece can no longer hold is

    s(T) = (a₁ − C_eq(T)) / a₁ = (a₂/a₁) / (1 + a₃ exp(−a₄ (T − T_σ)))

and a product with another raw water content w₀ expels w₀ s(T) per kg. (Read as a mass fraction of the shrunken
meat instead, the same curve would expel half the mass of a piece held at 70 °C, far above the 25–35 % cooking
losses measured on meat (Honikel and Hamm 1994); read per kg raw meat it levels off at a₂ = 34.5 % of the raw
mass, inside that range.)

The drip is taken as set by the hottest temperature each part of the piece has reached (Bengtsson 1976: on
thin slices, temperature matters more than time to the drip loss; the expelled water is never taken back on
cooling), so it follows from the temperature field alone: the volume-mean share s̄(t) of the peak temperatures
so far, and the water expelled W₀ (s̄ − s₀)/(1 − s₀) as the field heats, less what evaporated (the expelled
water feeds the surface's evaporation first). Equilibrium is taken to be reached at once and all the expelled
water to drain: in a large joint the expelled water has to flow to the surface, which takes time, and much of it
stays in the piece until it is carved, so this drip is an upper bound of the cook loss (the lower-yield side);
the evaporation alone is its lower bound (:mod:`procplan.run.drip`).

Validity: beef (and, by its similar proteins, other red meat and pork); the curve does not hold for cured or
brined meat (salt and phosphate raise the water-holding capacity) nor for products whose water is not held by
muscle protein.

References
----------
van der Sman, R.G.M. (2007). Moisture transport during cooking of meat: an analysis based on Flory–Rehner
theory. Meat Science 76, 730–738 (the equilibrium water content sigmoid; parameters as restated in the public
implementation of the Flory–Rehner cooking model of Ah Shehadeh, H., Deyo, S., Granzier-Nakajima, S., Puente,
P., Tully, K., Webb, J. (2020). A mathematical model for meat cooking. Eur. Phys. J. Plus 135, 351;
arXiv:1908.10787). Goñi, S.M., Salvadori, V.O. (2010). Prediction of cooking times and weight losses during
meat roasting. J. Food Eng. 100, 1–11 (local moisture following the water-holding capacity of beef; dripping
plus evaporative loss). Bengtsson, N.E., Jakobsson, B., Dagerskog, M. (1976). Cooking of beef by oven roasting:
a study of heat and mass transfer. J. Food Sci. 41, 1047–1053. Honikel, K.O., Hamm, R. (1994). Measurement of
water-holding capacity and juiciness. In: Quality Attributes and their Measurement in Meat, Poultry and Fish
Products, Blackie, ch. 5.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from procplan import validate


@dataclass(frozen=True)
class WaterHolding:
    """The sigmoid of the equilibrium water content against temperature (see the module note)."""

    name: str
    raw_kg_kg: float  # a₁: water held by the raw meat [kg/kg raw meat]
    drop_kg_kg: float  # a₂: water lost between raw and fully denatured [kg/kg raw meat]
    shape: float  # a₃ [-]
    slope_1_K: float  # a₄ [1/K]
    midpoint_C: float  # T_σ [°C]
    source: str
    #: temperatures the curve was fitted over [°C]; outside it holds its end values
    valid_C: tuple[float, float] = (20.0, 100.0)

    def held_kg_kg(self, temperature_C):
        """Equilibrium water content C_eq(T) [kg water / kg raw meat].

        >>> round(float(BEEF_WATER_HOLDING.held_kg_kg(52.0)), 4)  # at T_σ: a₁ − a₂/(1 + a₃)
        0.7339
        """
        t = np.asarray(temperature_C, dtype=float)
        # the exponent is capped: a cold or frozen field gives exp(≤ 60), the raw value to the last digit
        e = np.exp(np.minimum(-self.slope_1_K * (t - self.midpoint_C), 60.0))
        return self.raw_kg_kg - self.drop_kg_kg / (1.0 + self.shape * e)

    def expelled_share(self, temperature_C):
        """Share of the raw water the meat can no longer hold at ``temperature_C`` [-], from 0 (raw) to a₂/a₁.

        >>> round(float(BEEF_WATER_HOLDING.expelled_share(75.0)), 3)
        0.423
        """
        return (self.raw_kg_kg - self.held_kg_kg(temperature_C)) / self.raw_kg_kg


BEEF_WATER_HOLDING = WaterHolding(
    name="beef",
    raw_kg_kg=0.745,
    drop_kg_kg=0.345,
    shape=30.0,
    slope_1_K=0.25,
    midpoint_C=52.0,
    source="van der Sman (2007), Meat Sci. 76, 730–738: equilibrium water content of beef against temperature",
)

#: The water-holding curve taken for a product category (meat: beef; none for other categories).
CATEGORY_WATER_HOLDING: dict[str, WaterHolding] = {"meat": BEEF_WATER_HOLDING}


def mean_expelled_share(peak_field_C, volume_m3, holding: WaterHolding = BEEF_WATER_HOLDING) -> float:
    """Volume-mean share of the raw water expelled over a field of peak temperatures [-].

    ``peak_field_C`` : the hottest temperature each cell has reached [°C]; ``volume_m3`` : the cells' volumes
    (same shape, or flat with as many entries).

    >>> round(mean_expelled_share([20.0, 75.0], [1.0, 1.0]), 4)  # half the piece at 75 °C
    0.2114
    """
    t = np.ravel(np.asarray(peak_field_C, dtype=float))
    v = np.ravel(np.asarray(volume_m3, dtype=float))
    if t.size != v.size or t.size == 0:
        raise ValueError("peak_field_C and volume_m3 need the same, non-zero number of cells")
    return float(np.dot(v, holding.expelled_share(t)) / v.sum())


def drip_history_kg(
    share, raw_water_kg: float, evaporated_kg=None, lost_kg: float = 0.0, raw_share: float = 0.0
) -> np.ndarray:
    """Juice drained so far [kg] if all the water the heated meat can no longer hold leaves at once (the upper
    bound of the drip), from the history of the volume-mean expelled share ``share`` [-] (the share of peak
    temperatures: taken non-decreasing).

    ``raw_water_kg`` : water of the raw piece W₀ [kg]; ``raw_share`` : the raw piece's own share s₀ (the water it
    holds: not a drip); ``lost_kg`` : water lost before the step L₀ [kg] (evaporated, drained, or released into
    a drying's evaporation); ``evaporated_kg`` : water evaporated since the step's start E(t) [kg] (same times;
    None: nothing).

    On the curve's basis the piece keeps W₀ (1 − s̄)/(1 − s₀) and has expelled X(t) = W₀ (s̄ − s₀)/(1 − s₀). The
    expelled water reaches the surface, where it feeds the evaporation first: water that evaporated cannot also
    drip, so the drip is what is expelled and not yet lost, D(t) = max(X(t) − L₀ − E(t), 0), taken at each time
    as the smallest value it reaches later in the step (never decreasing: juice counted as drained is not taken
    back by later evaporation). Hence the total loss never exceeds the larger of the expelled water and the
    evaporation: L₀ + E + D ≤ max(X, L₀ + E) at every time, and D ≤ the water still held (mass balance:
    W₀ = L₀ + E + D + held).

    >>> [round(float(x), 4) for x in drip_history_kg([0.0, 0.2, 0.4], 1.0)]
    [0.0, 0.2, 0.4]
    >>> [round(float(x), 4) for x in drip_history_kg([0.0, 0.2, 0.4], 1.0, [0.0, 0.3, 0.3])]
    [0.0, 0.0, 0.1]
    """
    s = np.maximum.accumulate(np.clip(np.asarray(share, dtype=float), 0.0, 0.999))
    w0 = validate.number("raw_water_kg", raw_water_kg, minimum=0.0, unit="kg")
    s0 = min(max(float(raw_share), 0.0), 0.999)
    e = np.zeros_like(s) if evaporated_kg is None else np.asarray(evaporated_kg, dtype=float)
    if e.shape != s.shape:
        raise ValueError("evaporated_kg needs one value per time of share")
    expelled = w0 * np.maximum(s - s0, 0.0) / (1.0 - s0)
    drip = np.maximum(expelled - float(lost_kg) - e, 0.0)
    return np.minimum.accumulate(drip[::-1])[::-1]
