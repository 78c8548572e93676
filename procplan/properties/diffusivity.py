"""Published effective diffusivities of salt (and other solutes) in foods, with their temperature dependence.

Each record holds the values exactly as read in its source (temperature, D) and what was confirmed; where a
source gives values at two or more temperatures, the Arrhenius law

    D(T) = D_ref exp(−E_a/R (1/T − 1/T_ref))

is fitted to them here by least squares in ln D against 1/T (:func:`fit_arrhenius`), and the record says so.
A record with a single temperature has no temperature dependence and is valid only in its stated range.
Records are used only inside their validity range (:func:`salt_diffusivity_m2_s` refuses other temperatures).

Only values that could be read in a source are included: no record is given for beef, fish or sugar in
fruit, for which no value with its temperature could be confirmed. Effective diffusivities of salt depend on
the product's composition, structure (fibre direction, fat), brine concentration and method of identification;
a registry value is a starting estimate for planning, to be replaced by a measurement for the product in hand.

References
----------
Floury, J., et al. (corresponding author; the co-authors were not read), Determination of the diffusion coefficients of small solutes in
cheese: a review, Dairy Sci. Technol. 90 (2010) 477–508, doi:10.1051/dst/2010011, Table II.
Simal, S., Sánchez, E.S., Bon, J., Femenia, A., Rosselló, C., Water and salt diffusion during cheese ripening:
effect of the external and internal resistances to mass transfer, J. Food Eng. 48 (2001) 269–275.
Influence of brine concentration on moisture and NaCl transport during meat salting, in: Water Stress in
Biological, Chemical, Pharmaceutical and Food Systems, Food Engineering Series, Springer, 2015,
doi:10.1007/978-1-4939-2578-0_47.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError

#: Molar gas constant [J/(mol K)] (CODATA 2018, exact).
R_J_MOLK = 8.314462618

_KELVIN = 273.15


def diffusivity_arrhenius(
    D_ref_m2_s: float, activation_J_mol: float, temperature_C: Any, reference_C: float
) -> np.ndarray:
    """Effective diffusivity at a temperature by the Arrhenius law.

    D(T) = D_ref exp(−E_a/R (1/T − 1/T_ref)), T in kelvin

    Parameters
    ----------
    D_ref_m2_s : diffusivity at the reference temperature [m²/s], > 0
    activation_J_mol : activation energy E_a [J/mol], >= 0
    temperature_C : temperature(s) [°C]
    reference_C : reference temperature [°C]

    Examples
    --------
    With E_a = 30 kJ/mol a rise from 5 °C to 15 °C multiplies D by exp(30000/8.314 (1/278.15 − 1/288.15)) = 1.57:

    >>> round(float(diffusivity_arrhenius(1e-10, 30000.0, 15.0, 5.0)) / 1e-10, 2)
    1.57

    References
    ----------
    Floury et al., Dairy Sci. Technol. 90 (2010) 477–508 (the Arrhenius form used for salt in cheese).
    """
    d = validate.positive("D_ref_m2_s", D_ref_m2_s, "m²/s")
    ea = validate.number("activation_J_mol", activation_J_mol, minimum=0.0, unit="J/mol")
    t = validate.array("temperature_C", temperature_C, minimum=-273.0, unit="°C")
    tr = validate.number("reference_C", reference_C, minimum=-273.0, unit="°C")
    return d * np.exp(-ea / R_J_MOLK * (1.0 / (t + _KELVIN) - 1.0 / (tr + _KELVIN)))


def fit_arrhenius(points: Any, reference_C: float) -> tuple[float, float]:
    """Least-squares Arrhenius fit, ln D = ln D_ref − E_a/R (1/T − 1/T_ref), to (temperature_C, D_m2_s) points.

    Returns (D_ref_m2_s, activation_J_mol). Two points give the exact line through them.

    >>> d15 = float(diffusivity_arrhenius(1e-10, 30000.0, 15.0, 5.0))
    >>> d, ea = fit_arrhenius([(5.0, 1e-10), (15.0, d15)], 5.0)
    >>> round(d / 1e-10, 4), round(ea / 1000, 1)
    (1.0, 30.0)
    """
    arr = np.asarray(points, dtype=float)
    if arr.ndim != 2 or arr.shape[1] != 2 or arr.shape[0] < 2 or np.unique(arr[:, 0]).size < 2:
        raise InvalidInputError(
            "points", points, "two or more (temperature_C, D_m2_s) pairs at distinct temperatures"
        )
    if np.any(arr[:, 1] <= 0):
        raise InvalidInputError("points", points, "diffusivities > 0 m²/s")
    x = -(1.0 / (arr[:, 0] + _KELVIN) - 1.0 / (reference_C + _KELVIN)) / R_J_MOLK
    slope, intercept = np.polyfit(x, np.log(arr[:, 1]), 1)
    return float(math.exp(intercept)), float(slope)


@dataclass(frozen=True)
class DiffusivityRecord:
    """One published effective diffusivity and how far it was confirmed.

    ``points`` are the values as read (temperature [°C], D [m²/s]); ``range_C`` the temperatures the source
    covers; the Arrhenius parameters are fitted to ``points`` when there are two or more, else E_a is None
    and D is the single value, constant within ``range_C``.
    """

    solute: str
    product: str
    points: tuple[tuple[float, float], ...]
    range_C: tuple[float, float]
    source: str
    confirmed: str  # what was read in the source, and what was derived here
    conditions: str  # the process conditions of the measurement
    reference_C: float = field(init=False)
    D_ref_m2_s: float = field(init=False)
    activation_J_mol: float | None = field(init=False)

    def __post_init__(self) -> None:
        temps = [p[0] for p in self.points]
        ref = float(np.mean(temps))
        if len(self.points) >= 2:
            d, ea = fit_arrhenius(self.points, ref)
        else:
            d, ea = self.points[0][1], None
        object.__setattr__(self, "reference_C", ref)
        object.__setattr__(self, "D_ref_m2_s", d)
        object.__setattr__(self, "activation_J_mol", ea)


#: The registry: only values read in a source (see the module notes for what is missing).
DIFFUSIVITIES: dict[str, DiffusivityRecord] = {
    "salt-white-cheese": DiffusivityRecord(
        solute="NaCl",
        product="white cheese (semi-hard, Turkey; dry matter 450 g/kg, fat/DM 42 %, pH 5.3)",
        points=((4.0, 2.1e-10), (12.5, 3.0e-10), (20.0, 4.0e-10)),
        range_C=(4.0, 20.0),
        source="Floury et al., Dairy Sci. Technol. 90 (2010) 477-508, Table II, row citing their ref. [74]",
        confirmed=(
            "read: D = 2.1, 3 and 4 x 1e-10 m²/s at 4, 12.5 and 20 °C, no effect of brine concentration; "
            "activation energy fitted here to these three values (about 27 kJ/mol)"
        ),
        conditions="brining in 150-200 g/kg NaCl, finite slab, Fick 1-D",
    ),
    "salt-sbrinz": DiffusivityRecord(
        solute="NaCl",
        product="Sbrinz (hard cheese; dry matter 650 g/kg, fat/DM 48 %)",
        points=((7.0, 1.06e-10), (20.0, 1.88e-10)),
        range_C=(7.0, 20.0),
        source="Floury et al., Dairy Sci. Technol. 90 (2010) 477-508, Table II, row citing their ref. [29]",
        confirmed=(
            "read: 1.06 (± 0.15) to 1.88 (± 0.27) x 1e-10 m²/s for diffusion at 7, 11, 15 and 20 °C with a "
            "temperature coefficient of 0.063e-10 m²/s per °C; the end values are taken at 7 and 20 °C "
            "(their difference over 13 °C equals the stated coefficient); activation energy fitted here"
        ),
        conditions="brined at 12 °C for 4 days in 200 g/kg NaCl, then diffusion; touching semi-infinite cylinders",
    ),
    "salt-mahon-cheese": DiffusivityRecord(
        solute="NaCl",
        product="Mahon cheese (parallelepiped, ripening)",
        points=((12.0, 5.3e-10),),
        range_C=(12.0, 12.0),
        source="Simal et al., J. Food Eng. 48 (2001) 269-275",
        confirmed="read in the abstract: salt effective diffusivity 5.3e-10 m²/s at 12 °C; no temperature dependence",
        conditions="ripening at 12 °C and 85 % RH, external resistance included in the identification",
    ),
    "salt-pork-loin": DiffusivityRecord(
        solute="NaCl",
        product="pork loin slices",
        points=((5.0, 1.90e-10),),
        range_C=(4.0, 6.0),
        source=(
            "Influence of brine concentration on moisture and NaCl transport during meat salting, Water Stress "
            "in Biological, Chemical, Pharmaceutical and Food Systems, Springer Food Engineering Series (2015), "
            "doi:10.1007/978-1-4939-2578-0_47"
        ),
        confirmed=(
            "read in the abstract: NaCl effective diffusivity (1.90 ± 0.28) x 1e-10 m²/s at 5 ± 1 °C, constant "
            "over brines of 50-280 kg/m³; authors not read; no temperature dependence"
        ),
        conditions="brining at 5 ± 1 °C in 50-280 kg/m³ NaCl",
    ),
}


def salt_diffusivity_m2_s(key: str, temperature_C: Any) -> np.ndarray:
    """Effective diffusivity [m²/s] of a registry record at temperature(s) inside its validity range.

    D = D_ref exp(−E_a/R (1/T − 1/T_ref)) with the record's fitted parameters, or the single published value
    (constant) for a record measured at one temperature.

    >>> round(float(salt_diffusivity_m2_s("salt-white-cheese", 12.5)) / 1e-10, 2)
    2.99
    >>> float(salt_diffusivity_m2_s("salt-pork-loin", 5.0))
    1.9e-10

    References
    ----------
    See each record's ``source`` in :data:`DIFFUSIVITIES`.
    """
    rec = DIFFUSIVITIES.get(key) if isinstance(key, str) else None
    if rec is None:
        raise InvalidInputError("diffusivity", key, f"one of {', '.join(DIFFUSIVITIES)}")
    lo, hi = rec.range_C
    t = validate.array("temperature_C", temperature_C, minimum=lo, maximum=hi, unit=f"°C (validity of {key})")
    if rec.activation_J_mol is None:
        return np.full(t.shape, rec.D_ref_m2_s)
    return diffusivity_arrhenius(rec.D_ref_m2_s, rec.activation_J_mol, t, rec.reference_C)
