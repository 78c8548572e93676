"""Dimensionless groups of transient conduction and the choice of solution regime from the Biot number.

The Biot number compares the internal conduction resistance of the product with the resistance of the
surface film. Food-engineering practice reads it in three bands (Singh & Heldman, ch. 4; Incropera §5.2):

* Bi (L = V/A) < 0.1: internal resistance negligible, the product is nearly isothermal → lumped model;
* 0.1 … 40 (Bi on the conduction length): internal conduction and surface both matter → distributed solution;
* Bi > 40: the surface film is negligible, the surface sits at the medium temperature → surface-controlled.

References
----------
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., Fundamentals of Heat and Mass Transfer, 7th ed.,
Wiley, 2011, §5.1–5.2 (eq. 5.10 Bi, eq. 5.12 Fo).
Singh, R.P., Heldman, D.R., Introduction to Food Engineering, 5th ed., Academic Press, 2014, ch. 4.
"""

from __future__ import annotations

from dataclasses import dataclass

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry

#: Lumped model when the Biot number on L = V/A is below this (Incropera eq. 5.10).
LUMPED_BI_MAX = 0.1
#: Surface-controlled when the Biot number on the conduction length exceeds this (Singh & Heldman, ch. 4).
SURFACE_CONTROLLED_BI_MIN = 40.0

#: The three regimes, with the plain-language reading a technologist sees.
REGIMES: dict[str, str] = {
    "lumped": "internal resistance negligible, product nearly uniform in temperature; lumped solution",
    "distributed": "internal conduction and surface both matter; distributed solution",
    "surface-controlled": "surface resistance negligible, surface at the medium temperature; conduction-controlled solution",
}


def biot_number(h_W_m2K: float, length_m: float, k_W_mK: float) -> float:
    """Biot number, the ratio of internal conduction to surface convection resistance.

    Bi = h L / k

    Parameters
    ----------
    h_W_m2K : surface heat-transfer coefficient [W/m²K], > 0
    length_m : characteristic conduction length [m], > 0
    k_W_mK : thermal conductivity of the product [W/mK], > 0

    Returns
    -------
    float : Bi [-]

    Examples
    --------
    >>> round(biot_number(120.0, 0.02, 110.0), 4)  # brass plate, Cengel & Ghajar Ex. 4-4
    0.0218

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 5.10.
    """
    h = validate.positive("h_W_m2K", h_W_m2K, "W/m²K")
    L = validate.positive("length_m", length_m, "m")
    k = validate.positive("k_W_mK", k_W_mK, "W/mK")
    return h * L / k


def fourier_number(alpha_m2_s: float, time_s: float, length_m: float) -> float:
    """Fourier number, dimensionless time of transient conduction.

    Fo = α t / L²

    Parameters
    ----------
    alpha_m2_s : thermal diffusivity k/(ρ c_p) [m²/s], > 0
    time_s : time since the step change [s], >= 0
    length_m : conduction length [m], > 0

    Returns
    -------
    float : Fo [-]

    Examples
    --------
    >>> round(fourier_number(33.9e-6, 420.0, 0.02), 1)  # brass plate, Cengel & Ghajar Ex. 4-4
    35.6

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 5.12.
    """
    a = validate.positive("alpha_m2_s", alpha_m2_s, "m²/s")
    t = validate.number("time_s", time_s, minimum=0.0, unit="s")
    L = validate.positive("length_m", length_m, "m")
    return a * t / L**2


@dataclass(frozen=True)
class Regime:
    """Which solution a product needs, and why.

    Attributes
    ----------
    bi_lumped : Biot number on the lumped length L_c = V/A [-]
    bi : Biot number on the conduction length (half-thickness or radius of the smallest axis) [-]
    regime : "lumped" | "distributed" | "surface-controlled"
    reason : one line a technologist can read
    lumped_length_m : V/A [m]
    conduction_length_m : the conduction length used for ``bi`` [m]
    """

    bi_lumped: float
    bi: float
    regime: str
    reason: str
    lumped_length_m: float
    conduction_length_m: float


def _length_word(geometry: Geometry) -> str:
    """Name of the smallest conduction length of a shape, e.g. 'half-thickness', 'radius'."""
    s = geometry.shape
    if s == "slab":
        return "thickness (one face exposed)" if geometry.faces == 1 else "half-thickness"
    if s in ("cylinder", "sphere"):
        return "radius"
    if s == "finite-cylinder":
        return "radius" if geometry.diameter_m <= geometry.length_m else "half-length"
    names = ("half-length", "half-width", "half-height")
    lengths = (geometry.length_m, geometry.width_m, geometry.height_m)
    return names[min(range(3), key=lambda i: lengths[i])]


def _g(x: float) -> str:
    """Readable number: 3 significant figures."""
    return f"{x:.3g}"


def classify_regime(h_W_m2K: float, geometry: Geometry, k_W_mK: float) -> Regime:
    """Classify a product's cooling or heating as lumped, distributed or surface-controlled.

    Bi_c = h (V/A) / k decides the lumped model (Bi_c < 0.1, Incropera eq. 5.10); otherwise
    Bi = h L / k with L the conduction length (half-thickness or radius, the smallest axis) decides
    between distributed (Bi <= 40) and surface-controlled (Bi > 40) (Singh & Heldman, ch. 4).

    Parameters
    ----------
    h_W_m2K : surface heat-transfer coefficient [W/m²K], > 0
    geometry : the product's shape and size
    k_W_mK : thermal conductivity of the product [W/mK], > 0

    Returns
    -------
    Regime

    Examples
    --------
    >>> from procplan.geometry import Geometry
    >>> r = classify_regime(50.0, Geometry("slab", thickness_m=0.06), 0.47)
    >>> r.regime, round(r.bi, 2)
    ('distributed', 3.19)
    >>> r.reason
    'Bi = 3.19 from h = 50 W/m²K, half-thickness 30 mm, k = 0.47 W/mK: internal conduction and surface both matter; distributed solution'

    References
    ----------
    Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §5.2.
    Singh, R.P., Heldman, D.R., Introduction to Food Engineering, 5th ed., Academic Press, 2014, ch. 4.
    """
    h = validate.positive("h_W_m2K", h_W_m2K, "W/m²K")
    k = validate.positive("k_W_mK", k_W_mK, "W/mK")
    if not isinstance(geometry, Geometry):
        raise InvalidInputError("geometry", geometry, "a procplan.geometry.Geometry")
    lc = geometry.lumped_length_m
    L = geometry.conduction_length_m
    bi_lumped = h * lc / k
    bi = h * L / k
    inputs = f"h = {_g(h)} W/m²K, {{length}}, k = {_g(k)} W/mK"
    if bi_lumped < LUMPED_BI_MAX:
        regime = "lumped"
        reason = (
            f"Bi = {_g(bi_lumped)} (on V/A) from "
            + inputs.format(length=f"V/A {_g(lc * 1000)} mm")
            + f": below {LUMPED_BI_MAX:g}, {REGIMES[regime]}"
        )
    else:
        regime = "surface-controlled" if bi > SURFACE_CONTROLLED_BI_MIN else "distributed"
        reason = (
            f"Bi = {_g(bi)} from "
            + inputs.format(length=f"{_length_word(geometry)} {_g(L * 1000)} mm")
            + f": {REGIMES[regime]}"
        )
    return Regime(
        bi_lumped=bi_lumped, bi=bi, regime=regime, reason=reason, lumped_length_m=lc, conduction_length_m=L
    )
