"""Process time by Ball's formula method from f_h and j_h, beside the general method's time on the same curve.

Ball's formula method: the heating time from the corrected zero is

    B = f_h (log10(j_h I_h) − log10 g),   I_h = T_R − T_initial,

g = T_R − T at the end of heating, found from f_h/U with U = F · 10^((T_ref − T_R)/z) the sterilising value
in minutes at the medium temperature T_R. Ball's published f_h/U : g tables also count the lethality of the
cooling phase under his own assumptions (cooling water m + g = 180 °F below the retort, cooling lag 1.41).

Here g is derived numerically from the idealised heating curve itself (no table is read): the cold point
follows the straight line T_R − T = g · 10^((B − t)/f_h) up to B and lethality accrues only while heating, so

    U = ∫_{−∞}^{B} 10^(−(T_R − T)/z) dt = (f_h / ln 10) · E₁(ln 10 · g / z),

E₁ the exponential integral (scipy.special.exp1), solved for g with brentq. Leaving out the cooling lethality
gives a smaller g, so a longer B than Ball's tables: the safe side. At small f_h/U, where cooling adds little,
the two agree (see tests/studies/test_trial_formula.py against Ball's table as reprinted in a handbook).

The general method's time is the heating time at which the measured lethality reaches the requirement
(:func:`procplan.outcomes.lethality.time_to_lethality`), from the same step start. The formula time from the
step start is the corrected zero plus B.

References
----------
Ball, C.O., "Thermal process time for canned food", Bull. Natl. Res. Council 7(37), 1923.
Ball, C.O., Olson, F.C.W., Sterilization in Food Technology, McGraw-Hill, New York, 1957.
Abramowitz, M., Stegun, I.A., Handbook of Mathematical Functions, §5.1 (exponential integral E₁).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from scipy import optimize, special

from procplan import validate
from procplan.errors import InvalidInputError

LN10 = math.log(10.0)
#: How g is found from f_h/U here.
G_METHOD_TEXT = (
    "g derived numerically from the idealised heating line, heating lethality only (no table read; the "
    "cooling lethality is left out, so the time is on the safe side of Ball's tables)"
)


def fh_over_u_heating(g_K: float, z_C: float) -> float:
    """f_h/U of the idealised heating line that ends g below the medium, heating lethality only.

    f_h/U = ln 10 / E₁(ln 10 · g/z)

    >>> round(fh_over_u_heating(10.0, 10.0), 3)
    71.09
    """
    g = validate.positive("g_K", g_K, "K")
    z = validate.positive("z_C", z_C, "°C")
    return LN10 / float(special.exp1(LN10 * g / z))


def g_from_fh_over_u(fh_over_u: float, z_C: float) -> float:
    """g [K] at the end of heating for a given f_h/U (inverse of :func:`fh_over_u_heating`).

    >>> round(g_from_fh_over_u(71.0898441, 10.0), 6)
    10.0
    """
    r = validate.positive("fh_over_u", fh_over_u)
    z = validate.positive("z_C", z_C, "°C")
    # f_h/U grows monotonically with g, from 0 (g → 0) to ∞; bracket in log g.
    lo, hi = z * 1e-12, z * 50.0
    if r >= fh_over_u_heating(hi, z):
        raise InvalidInputError("fh_over_u", r, f"below {fh_over_u_heating(hi, z):.3g} (g beyond 50 z)")
    if r <= fh_over_u_heating(lo, z):
        raise InvalidInputError("fh_over_u", r, "a lethality that the heating can deliver (f_h/U too small)")
    x = optimize.brentq(
        lambda lg: fh_over_u_heating(math.exp(lg), z) - r, math.log(lo), math.log(hi), xtol=1e-13
    )
    return math.exp(x)


@dataclass(frozen=True)
class FormulaTime:
    """Process time by the formula method and by the general method on the same heating curve.

    u_min : sterilising value at the medium temperature [min]; g_K : g at the end of heating [K];
    b_min : Ball's B from the corrected zero [min]; from_start_min : corrected zero + B [min from the step
    start]; general_min : the general method's heating time to the requirement [min from the step start], or
    None when the measured heating never reached it; difference_percent : (formula − general)/general × 100;
    method : how g was found
    """

    u_min: float
    g_K: float
    b_min: float
    from_start_min: float
    general_min: float | None
    difference_percent: float | None
    method: str = G_METHOD_TEXT


def formula_process_time(
    factors,
    required_F_min: float,
    reference_C: float,
    z_C: float,
    *,
    general_time_s: float | None = None,
) -> FormulaTime:
    """Ball's heating time B for a required F from the heating factors of the slowest point.

    Parameters
    ----------
    factors : heating CurveFactors (:func:`procplan.studies.formula_method.heating_factors`)
    required_F_min : required lethality [min at reference_C]
    reference_C, z_C : reference temperature and z-value of the requirement [°C]
    general_time_s : the general method's heating time on the same curve [s from the step start], if known

    Examples
    --------
    f_h = 20 min, j_h = 1.4, initial 20 °C in a 121.1 °C medium, F0 = 3 min (U = 3 min at the medium):

    >>> from procplan.studies.formula_method import CurveFactors
    >>> cf = CurveFactors("heating", 1200.0, 1.4, 121.1, 20.0, -20.44, 0.0, 0.0, (0.0, 1.0), 5, 0.0, "window")
    >>> r = formula_process_time(cf, 3.0, 121.1, 10.0)
    >>> round(r.g_K, 3), round(r.b_min, 2)
    (3.223, 32.85)
    """
    if factors.kind != "heating":
        raise InvalidInputError("factors", factors.kind, "heating factors (f_h, j_h)")
    need = validate.positive("required_F_min", required_F_min, "min")
    ref = validate.number("reference_C", reference_C, unit="°C")
    z = validate.positive("z_C", z_C, "°C")
    u = need * 10.0 ** ((ref - factors.medium_C) / z)
    g = g_from_fh_over_u(factors.f_min / u, z)
    i_h = factors.medium_C - factors.initial_C
    b = factors.f_min * (math.log10(factors.j * i_h) - math.log10(g))
    from_start = factors.zero_s / 60.0 + b
    general = None if general_time_s is None else general_time_s / 60.0
    diff = None if general is None or general <= 0 else 100.0 * (from_start - general) / general
    return FormulaTime(u, g, b, from_start, general, diff)
