"""Published Nusselt-number correlations for external flow, free convection and film condensation.

Each function is one published correlation, vectorised over NumPy arrays of its dimensionless groups.
``CORRELATIONS`` is the one registry of them by name; :func:`nusselt_by_name` (the dispatcher), the CLI and
the UI read it. Every entry states its inputs, validity range and reference.

References
----------
Incropera, F.P., DeWitt, D.P., Bergman, T.L., Lavine, A.S., *Fundamentals of Heat and Mass Transfer*, 7th ed.,
Wiley, 2011 (also issued as Bergman et al., 7th ed.). Chapter 7 (external forced flow), chapter 9 (free
convection), chapter 10 (film condensation).
Churchill, S.W., Bernstein, M. (1977), J. Heat Transfer 99, 300–306 (cylinder in cross-flow).
Whitaker, S. (1972), AIChE J. 18, 361–371 (sphere in forced flow).
Churchill, S.W., Chu, H.H.S. (1975), Int. J. Heat Mass Transfer 18, 1323–1329 (vertical plate) and
18, 1049–1053 (horizontal cylinder).
Churchill, S.W. (1983), "Free convection around immersed bodies", in *Heat Exchanger Design Handbook*,
section 2.5.7, Hemisphere (sphere).
Nusselt, W. (1916), Z. Ver. Dtsch. Ing. 60, 541–546 and 569–575 (laminar film condensation).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError

#: Critical Reynolds number for transition on a flat plate (Incropera §7.2, Re_x,c = 5e5).
RE_TRANSITION_FLAT_PLATE = 5e5


def _arr(x: Any) -> np.ndarray:
    return np.asarray(x, dtype=float)


def _out(x: np.ndarray) -> Any:
    return float(x) if np.ndim(x) == 0 else x


# --- forced convection ---------------------------------------------------------------------------------------
def nusselt_flat_plate_laminar(re: Any, pr: Any) -> Any:
    """Average Nusselt number of an isothermal flat plate in laminar parallel flow (Pohlhausen).

    Nu_L = 0.664 Re_L^½ Pr^⅓ (Incropera 7th ed., eq. 7.30)

    Parameters
    ----------
    re : Reynolds number u∞ L / ν, film properties
    pr : Prandtl number, film properties

    Notes
    -----
    Valid for Re_L < 5e5 and Pr ≥ 0.6.

    Examples
    --------
    Incropera 7th ed., Example 7.1 (air at 6 kPa, 300 °C over a 0.5 m plate): Re_L = 9597, Pr = 0.687 gives
    h̄ = 4.18 W/m²K with k = 0.0364 W/mK (from memory):

    >>> round(nusselt_flat_plate_laminar(9597, 0.687) * 0.0364 / 0.5, 2)
    4.18

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 7.30.
    """
    return _out(0.664 * np.sqrt(_arr(re)) * np.cbrt(_arr(pr)))


def nusselt_flat_plate_mixed(re: Any, pr: Any) -> Any:
    """Average Nusselt number of an isothermal flat plate with a laminar leading part and turbulent rest.

    Nu_L = (0.037 Re_L^⅘ − 871) Pr^⅓ (Incropera 7th ed., eq. 7.38, for Re_x,c = 5e5)

    Notes
    -----
    Valid for 5e5 < Re_L ≤ 1e8 and 0.6 < Pr < 60.

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 7.38.
    """
    return _out((0.037 * _arr(re) ** 0.8 - 871.0) * np.cbrt(_arr(pr)))


def nusselt_flat_plate_turbulent(re: Any, pr: Any) -> Any:
    """Average Nusselt number of a flat plate turbulent from the leading edge (tripped flow).

    Nu_L = 0.037 Re_L^⅘ Pr^⅓ (Incropera 7th ed., eq. 7.38 with A = 0, i.e. eq. 7.41)

    Notes
    -----
    Valid for Re_L ≤ 1e8 and 0.6 < Pr < 60, when a trip or a strongly turbulent free stream makes the whole
    boundary layer turbulent.

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §7.2.4.
    """
    return _out(0.037 * _arr(re) ** 0.8 * np.cbrt(_arr(pr)))


def nusselt_flat_plate(re: Any, pr: Any) -> Any:
    """Average flat-plate Nusselt number: eq. 7.30 below Re_L = 5e5, eq. 7.38 above (Incropera §7.2)."""
    re_a = _arr(re)
    return _out(
        np.where(
            re_a <= RE_TRANSITION_FLAT_PLATE,
            nusselt_flat_plate_laminar(re_a, pr),
            nusselt_flat_plate_mixed(np.maximum(re_a, RE_TRANSITION_FLAT_PLATE), pr),
        )
    )


def nusselt_cylinder_churchill_bernstein(re: Any, pr: Any) -> Any:
    """Average Nusselt number of a circular cylinder in cross-flow, Churchill & Bernstein (1977).

    Nu_D = 0.3 + 0.62 Re^½ Pr^⅓ / [1 + (0.4/Pr)^⅔]^¼ · [1 + (Re/282000)^⅝]^⅘  (Incropera 7th ed., eq. 7.54)

    Parameters
    ----------
    re : Reynolds number V D / ν, film properties
    pr : Prandtl number, film properties

    Notes
    -----
    Valid for all Re Pr > 0.2 (film temperature).

    Examples
    --------
    Bergman, Lavine, Incropera & DeWitt, *Introduction to Heat Transfer*, 6th ed., Wiley, 2011, Example 7.3:
    Re_D = 6071, Pr = 0.7 → Nu_D = 40.6 (as quoted in the ``ht`` package documentation, whose
    ``Nu_cylinder_Churchill_Bernstein(6071, 0.7)`` gives 40.637):

    >>> round(nusselt_cylinder_churchill_bernstein(6071, 0.7), 3)
    40.637

    References
    ----------
    Churchill, S.W., Bernstein, M. (1977), "A correlating equation for forced convection from gases and
    liquids to a circular cylinder in crossflow", J. Heat Transfer 99, 300–306.
    """
    re_a, pr_a = _arr(re), _arr(pr)
    nu = (
        0.3
        + 0.62
        * np.sqrt(re_a)
        * np.cbrt(pr_a)
        / (1.0 + (0.4 / pr_a) ** (2.0 / 3.0)) ** 0.25
        * (1.0 + (re_a / 282000.0) ** 0.625) ** 0.8
    )
    return _out(nu)


def nusselt_sphere_whitaker(re: Any, pr: Any, mu_ratio: Any = 1.0) -> Any:
    """Average Nusselt number of a sphere in forced flow, Whitaker (1972).

    Nu_D = 2 + (0.4 Re^½ + 0.06 Re^⅔) Pr^0.4 (μ/μ_s)^¼  (Incropera 7th ed., eq. 7.56)

    Parameters
    ----------
    re : Reynolds number V D / ν with properties at the free-stream temperature
    pr : Prandtl number at the free-stream temperature
    mu_ratio : μ(T∞)/μ(T_s)

    Notes
    -----
    Valid for 0.71 < Pr < 380, 3.5 < Re < 7.6e4, 1.0 < μ/μ_s < 3.2. Properties at T∞ except μ_s.

    Examples
    --------
    Re → 0 gives the conduction limit Nu = 2:

    >>> nusselt_sphere_whitaker(0.0, 0.7)
    2.0

    References
    ----------
    Whitaker, S. (1972), "Forced convection heat transfer correlations for flow in pipes, past flat plates,
    single cylinders, single spheres, and for flow in packed beds and tube bundles", AIChE J. 18, 361–371.
    """
    re_a = _arr(re)
    return _out(
        2.0 + (0.4 * np.sqrt(re_a) + 0.06 * re_a ** (2.0 / 3.0)) * _arr(pr) ** 0.4 * _arr(mu_ratio) ** 0.25
    )


# --- free convection -----------------------------------------------------------------------------------------
def nusselt_vertical_plate_churchill_chu(ra: Any, pr: Any) -> Any:
    """Average Nusselt number of an isothermal vertical plate in free convection, Churchill & Chu (1975).

    Nu_L = {0.825 + 0.387 Ra_L^⅙ / [1 + (0.492/Pr)^(9/16)]^(8/27)}²  (Incropera 7th ed., eq. 9.26)

    Notes
    -----
    Valid for the entire range of Ra_L (laminar and turbulent), all Pr.

    Examples
    --------
    Bergman, Lavine, Incropera & DeWitt, *Introduction to Heat Transfer*, 6th ed., Wiley, 2011, Example 9.2:
    Pr = 0.69, Gr_L = 2.63e9 (Ra_L = Gr_L Pr) → Nu_L = 147 (as quoted in the ``ht`` package documentation,
    whose ``Nu_vertical_plate_Churchill(0.69, 2.63E9)`` gives 147.16):

    >>> round(nusselt_vertical_plate_churchill_chu(0.69 * 2.63e9, 0.69), 2)
    147.16

    References
    ----------
    Churchill, S.W., Chu, H.H.S. (1975), "Correlating equations for laminar and turbulent free convection from a
    vertical plate", Int. J. Heat Mass Transfer 18, 1323–1329.
    """
    term = 0.825 + 0.387 * _arr(ra) ** (1.0 / 6.0) / (1.0 + (0.492 / _arr(pr)) ** (9.0 / 16.0)) ** (
        8.0 / 27.0
    )
    return _out(term * term)


def nusselt_horizontal_cylinder_churchill_chu(ra: Any, pr: Any) -> Any:
    """Average Nusselt number of an isothermal horizontal cylinder in free convection, Churchill & Chu (1975).

    Nu_D = {0.60 + 0.387 Ra_D^⅙ / [1 + (0.559/Pr)^(9/16)]^(8/27)}²  (Incropera 7th ed., eq. 9.34)

    Notes
    -----
    Valid for Ra_D ≲ 1e12.

    References
    ----------
    Churchill, S.W., Chu, H.H.S. (1975), "Correlating equations for laminar and turbulent free convection from a
    horizontal cylinder", Int. J. Heat Mass Transfer 18, 1049–1053.
    """
    term = 0.60 + 0.387 * _arr(ra) ** (1.0 / 6.0) / (1.0 + (0.559 / _arr(pr)) ** (9.0 / 16.0)) ** (8.0 / 27.0)
    return _out(term * term)


def nusselt_sphere_churchill(ra: Any, pr: Any) -> Any:
    """Average Nusselt number of an isothermal sphere in free convection, Churchill (1983).

    Nu_D = 2 + 0.589 Ra^¼ / [1 + (0.469/Pr)^(9/16)]^(4/9) · {1 + 7.44e-8 Ra / [1 + (0.469/Pr)^(9/16)]^(16/9)}^(1/12)

    Notes
    -----
    Without the last factor this is Incropera 7th ed. eq. 9.35 (Ra_D ≲ 1e11, Pr ≳ 0.7); the factor (≤ 2 % below
    Ra = 1e7) extends the fit into the turbulent range, Ra ≲ 1e13.

    References
    ----------
    Churchill, S.W. (1983), "Free convection around immersed bodies", Heat Exchanger Design Handbook, §2.5.7,
    Hemisphere; Incropera, DeWitt, Bergman & Lavine, 7th ed., eq. 9.35.
    """
    ra_a = _arr(ra)
    f = 1.0 + (0.469 / _arr(pr)) ** (9.0 / 16.0)
    return _out(
        2.0
        + 0.589 * ra_a**0.25 / f ** (4.0 / 9.0) * (1.0 + 7.44e-8 * ra_a / f ** (16.0 / 9.0)) ** (1.0 / 12.0)
    )


def nusselt_horizontal_plate_unstable(ra: Any) -> Any:
    """Free convection from the upper face of a hot plate or the lower face of a cold plate.

    Nu_L = 0.54 Ra_L^¼ for Ra_L ≤ 1e7 (eq. 9.30); Nu_L = 0.15 Ra_L^⅓ for Ra_L > 1e7 (eq. 9.31); L = A_s/P.

    Notes
    -----
    Valid for 1e4 ≲ Ra_L ≲ 1e11 (eq. 9.30 needs Pr ≳ 0.7). Equation numbers from the 7th edition (from memory).

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eqs. 9.29–9.31.
    """
    ra_a = _arr(ra)
    return _out(np.where(ra_a <= 1e7, 0.54 * ra_a**0.25, 0.15 * np.cbrt(ra_a)))


def nusselt_horizontal_plate_stable(ra: Any) -> Any:
    """Free convection from the lower face of a hot plate or the upper face of a cold plate.

    Nu_L = 0.52 Ra_L^⅕ (Incropera 7th ed., eq. 9.32, from memory), L = A_s/P.

    Notes
    -----
    Valid for 1e4 ≲ Ra_L ≲ 1e9, Pr ≳ 0.7.

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 9.32
    (after Radziemska & Lewandowski, 2001).
    """
    return _out(0.52 * _arr(ra) ** 0.2)


def nusselt_mixed_convection(nu_forced: Any, nu_natural: Any, n: float = 3.0) -> Any:
    """Combined forced and free convection, Nu^n = Nu_F^n + Nu_N^n (assisting or transverse flow).

    Notes
    -----
    n = 3 for vertical plates, spheres and cylinders; opposing flow subtracts, which the library does not use
    (the direction of the machine's air relative to buoyancy is not known).

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 9.64
    (after Churchill, 1977).
    """
    return _out((_arr(nu_forced) ** n + _arr(nu_natural) ** n) ** (1.0 / n))


# --- film condensation ---------------------------------------------------------------------------------------
def nusselt_condensation_vertical_plate(condensation_group: Any) -> Any:
    """Average Nusselt number of laminar film condensation on an isothermal vertical surface (Nusselt 1916).

    Nu_L = h̄ L / k_l = 0.943 X^¼, X = g ρ_l (ρ_l − ρ_v) h'_fg L³ / (μ_l k_l (T_sat − T_s)),
    h'_fg = h_fg (1 + 0.68 Ja), Ja = c_p,l (T_sat − T_s)/h_fg  (Incropera 7th ed., eqs. 10.26 and 10.9)

    Notes
    -----
    Wave-free laminar film, Re_δ ≤ 30, pure saturated vapour; non-condensable gas (air in an oven) lowers h
    strongly. Liquid properties at (T_sat + T_s)/2, vapour and h_fg at T_sat.

    References
    ----------
    Nusselt, W. (1916), "Die Oberflächenkondensation des Wasserdampfes", Z. Ver. Dtsch. Ing. 60, 541–546,
    569–575; Incropera, DeWitt, Bergman & Lavine, 7th ed., §10.6.
    """
    return _out(0.943 * _arr(condensation_group) ** 0.25)


def nusselt_condensation_horizontal_cylinder(condensation_group: Any) -> Any:
    """Average Nusselt number of laminar film condensation on a horizontal cylinder, Nu_D = 0.729 X^¼.

    X as for the vertical plate with L replaced by the diameter D (Incropera 7th ed., eq. 10.41, C = 0.729).

    References
    ----------
    Nusselt (1916); Incropera, DeWitt, Bergman & Lavine, 7th ed., eq. 10.41.
    """
    return _out(0.729 * _arr(condensation_group) ** 0.25)


def nusselt_condensation_sphere(condensation_group: Any) -> Any:
    """Average Nusselt number of laminar film condensation on a sphere, Nu_D = 0.826 X^¼.

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, 7th ed., eq. 10.41 with C = 0.826 (Dhir & Lienhard, 1971).
    """
    return _out(0.826 * _arr(condensation_group) ** 0.25)


# --- registry --------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Correlation:
    """One entry of :data:`CORRELATIONS`: the function, its inputs, where it applies and where it comes from."""

    function: Callable[..., Any]
    inputs: tuple[str, ...]
    mode: str  # "forced" | "natural" | "condensation"
    shapes: tuple[str, ...]
    validity: str
    reference: str
    bounds: tuple[tuple[str, float, float], ...] = ()

    def out_of_range(self, **groups: float) -> list[str]:
        """The groups that fall outside this correlation's stated validity range, in words with their values.

        >>> CORRELATIONS["flat-plate-laminar"].out_of_range(re=8e5, pr=0.7)
        ['Reynolds number 8e+05 (valid 0 to 5e+05)']
        """
        bad = []
        for name, lo, hi in self.bounds:
            v = groups.get(name)
            if v is not None and not (lo <= v <= hi):
                bad.append(f"{GROUP_WORDS.get(name, name)} {v:.4g} (valid {lo:.3g} to {hi:.3g})")
        return bad


#: The dimensionless groups of the validity ranges in words.
GROUP_WORDS = {
    "re": "Reynolds number",
    "pr": "Prandtl number",
    "ra": "Rayleigh number",
    "mu_ratio": "viscosity ratio",
}

_INC = "Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed."

#: The one registry of Nusselt-number correlations by name (dispatcher, CLI and UI read it).
CORRELATIONS: dict[str, Correlation] = {
    "flat-plate": Correlation(
        nusselt_flat_plate,
        ("re", "pr"),
        "forced",
        ("slab", "brick"),
        "laminar Re_L ≤ 5e5, mixed 5e5–1e8; Pr 0.6–60",
        f"{_INC}, eqs. 7.30 and 7.38",
        (("re", 0.0, 1e8), ("pr", 0.6, 60.0)),
    ),
    "flat-plate-laminar": Correlation(
        nusselt_flat_plate_laminar,
        ("re", "pr"),
        "forced",
        ("slab", "brick"),
        "Re_L < 5e5, Pr ≥ 0.6",
        f"{_INC}, eq. 7.30",
        (("re", 0.0, 5e5), ("pr", 0.6, 1e4)),
    ),
    "flat-plate-mixed": Correlation(
        nusselt_flat_plate_mixed,
        ("re", "pr"),
        "forced",
        ("slab", "brick"),
        "5e5 < Re_L ≤ 1e8, 0.6 < Pr < 60",
        f"{_INC}, eq. 7.38",
        (("re", 5e5, 1e8), ("pr", 0.6, 60.0)),
    ),
    "flat-plate-turbulent": Correlation(
        nusselt_flat_plate_turbulent,
        ("re", "pr"),
        "forced",
        ("slab", "brick"),
        "tripped boundary layer, Re_L ≤ 1e8, 0.6 < Pr < 60",
        f"{_INC}, §7.2.4 (eq. 7.38 with A = 0)",
        (("re", 0.0, 1e8), ("pr", 0.6, 60.0)),
    ),
    "cylinder-churchill-bernstein": Correlation(
        nusselt_cylinder_churchill_bernstein,
        ("re", "pr"),
        "forced",
        ("cylinder", "finite-cylinder"),
        "Re Pr > 0.2",
        f"Churchill & Bernstein (1977), J. Heat Transfer 99:300; {_INC}, eq. 7.54",
        (("repr", 0.2, 1e12),),
    ),
    "sphere-whitaker": Correlation(
        nusselt_sphere_whitaker,
        ("re", "pr", "mu_ratio"),
        "forced",
        ("sphere",),
        "0.71 < Pr < 380, 3.5 < Re < 7.6e4, 1 < μ/μ_s < 3.2",
        f"Whitaker (1972), AIChE J. 18:361; {_INC}, eq. 7.56",
        (("re", 3.5, 7.6e4), ("pr", 0.71, 380.0), ("mu_ratio", 1.0, 3.2)),
    ),
    "vertical-plate-churchill-chu": Correlation(
        nusselt_vertical_plate_churchill_chu,
        ("ra", "pr"),
        "natural",
        ("slab", "brick"),
        "all Ra_L",
        f"Churchill & Chu (1975), Int. J. Heat Mass Transfer 18:1323; {_INC}, eq. 9.26",
        (("ra", 0.0, 1e13),),
    ),
    "horizontal-cylinder-churchill-chu": Correlation(
        nusselt_horizontal_cylinder_churchill_chu,
        ("ra", "pr"),
        "natural",
        ("cylinder", "finite-cylinder"),
        "Ra_D ≲ 1e12",
        f"Churchill & Chu (1975), Int. J. Heat Mass Transfer 18:1049; {_INC}, eq. 9.34",
        (("ra", 0.0, 1e12),),
    ),
    "sphere-churchill": Correlation(
        nusselt_sphere_churchill,
        ("ra", "pr"),
        "natural",
        ("sphere",),
        "Ra_D ≲ 1e13, Pr ≳ 0.7",
        f"Churchill (1983), Heat Exchanger Design Handbook §2.5.7; {_INC}, eq. 9.35",
        (("ra", 0.0, 1e13), ("pr", 0.7, 1e5)),
    ),
    "horizontal-plate-unstable": Correlation(
        nusselt_horizontal_plate_unstable,
        ("ra",),
        "natural",
        ("slab", "brick"),
        "hot face up or cold face down, 1e4 ≲ Ra_L ≲ 1e11",
        f"{_INC}, eqs. 9.30–9.31",
        (("ra", 1e4, 1e11),),
    ),
    "horizontal-plate-stable": Correlation(
        nusselt_horizontal_plate_stable,
        ("ra",),
        "natural",
        ("slab", "brick"),
        "hot face down or cold face up, 1e4 ≲ Ra_L ≲ 1e9",
        f"{_INC}, eq. 9.32",
        (("ra", 1e4, 1e9),),
    ),
    "condensation-vertical-plate-nusselt": Correlation(
        nusselt_condensation_vertical_plate,
        ("condensation_group",),
        "condensation",
        ("slab", "brick"),
        "laminar wave-free film, Re_δ ≤ 30, pure saturated steam",
        f"Nusselt (1916); {_INC}, eq. 10.26",
        (),
    ),
    "condensation-horizontal-cylinder-nusselt": Correlation(
        nusselt_condensation_horizontal_cylinder,
        ("condensation_group",),
        "condensation",
        ("cylinder", "finite-cylinder"),
        "laminar film, pure saturated steam",
        f"Nusselt (1916); {_INC}, eq. 10.41 (C = 0.729)",
        (),
    ),
    "condensation-sphere-nusselt": Correlation(
        nusselt_condensation_sphere,
        ("condensation_group",),
        "condensation",
        ("sphere",),
        "laminar film, pure saturated steam",
        f"Dhir & Lienhard (1971); {_INC}, eq. 10.41 (C = 0.826)",
        (),
    ),
}

#: Correlation used by default for each (mode, shape).
DEFAULT_CORRELATION: dict[tuple[str, str], str] = {
    ("forced", "slab"): "flat-plate",
    ("forced", "brick"): "flat-plate",
    ("forced", "cylinder"): "cylinder-churchill-bernstein",
    ("forced", "finite-cylinder"): "cylinder-churchill-bernstein",
    ("forced", "sphere"): "sphere-whitaker",
    ("natural", "cylinder"): "horizontal-cylinder-churchill-chu",
    ("natural", "finite-cylinder"): "horizontal-cylinder-churchill-chu",
    ("natural", "sphere"): "sphere-churchill",
    ("condensation", "slab"): "condensation-vertical-plate-nusselt",
    ("condensation", "brick"): "condensation-vertical-plate-nusselt",
    ("condensation", "cylinder"): "condensation-horizontal-cylinder-nusselt",
    ("condensation", "finite-cylinder"): "condensation-horizontal-cylinder-nusselt",
    ("condensation", "sphere"): "condensation-sphere-nusselt",
}


def nusselt_by_name(name: str, **groups: Any) -> Any:
    """Evaluate the registered correlation ``name`` with the dimensionless groups it needs.

    >>> round(nusselt_by_name("cylinder-churchill-bernstein", re=6071, pr=0.7), 1)
    40.6
    """
    entry = CORRELATIONS[validate.choice("correlation", name, CORRELATIONS)]
    kwargs = {}
    for key in entry.inputs:
        if key not in groups or groups[key] is None:
            if key == "mu_ratio":
                continue
            raise InvalidInputError(
                f"correlation.{key}", None, f"a value: {name} needs {', '.join(entry.inputs)}"
            )
        kwargs[key] = groups[key]
    return entry.function(**kwargs)
