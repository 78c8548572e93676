"""Tabulated thermal properties of one product: the single interface every solver uses.

A :class:`PropertyTable` holds, on one strictly increasing temperature grid, the specific enthalpy
H(T) (from a stated reference temperature), the thermal conductivity k(T) and the density rho(T).
Solvers work on enthalpy, so latent heat released over the freezing range is carried exactly; the
apparent specific heat is dH/dT of the same table, so the two can never disagree.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError

#: Range of the Choi–Okos temperature functions (Choi & Okos 1986), and so of every table.
MODEL_RANGE_C: tuple[float, float] = (-40.0, 150.0)


def _interp_extrapolate(x: np.ndarray, xp: np.ndarray, fp: np.ndarray) -> np.ndarray:
    """Piecewise-linear interpolation that extends the end segments linearly instead of clamping."""
    y = np.interp(x, xp, fp)
    lo = x < xp[0]
    hi = x > xp[-1]
    if np.any(lo):
        s = (fp[1] - fp[0]) / (xp[1] - xp[0])
        y = np.where(lo, fp[0] + s * (x - xp[0]), y)
    if np.any(hi):
        s = (fp[-1] - fp[-2]) / (xp[-1] - xp[-2])
        y = np.where(hi, fp[-1] + s * (x - xp[-1]), y)
    return y


@dataclass(frozen=True, eq=False)
class PropertyTable:
    """Thermal properties of a product tabulated against temperature.

    Attributes
    ----------
    temperature_C : grid [°C], non-decreasing (a repeated value marks an isothermal phase change)
    enthalpy_J_kg : specific enthalpy on the grid [J/kg], strictly increasing, zero at ``reference_C``
    conductivity_W_mK : thermal conductivity on the grid [W/mK]
    density_kg_m3 : density on the grid [kg/m³]
    initial_freezing_C : initial freezing point [°C], or None when the product does not freeze in range
    reference_C : temperature at which the enthalpy is zero [°C]
    source : how the table was made (for provenance)
    """

    temperature_C: np.ndarray
    enthalpy_J_kg: np.ndarray
    conductivity_W_mK: np.ndarray
    density_kg_m3: np.ndarray
    initial_freezing_C: float | None
    reference_C: float
    source: str
    extra: dict = field(default_factory=dict)

    def __post_init__(self) -> None:
        t = np.asarray(self.temperature_C, dtype=float)
        h = np.asarray(self.enthalpy_J_kg, dtype=float)
        k = np.asarray(self.conductivity_W_mK, dtype=float)
        rho = np.asarray(self.density_kg_m3, dtype=float)
        if not (t.shape == h.shape == k.shape == rho.shape) or t.ndim != 1 or t.size < 2:
            raise InvalidInputError("property table", t.shape, "equal-length 1-D arrays of at least 2 points")
        if np.any(np.diff(t) < 0):
            raise InvalidInputError("property table temperature_C", "not sorted", "non-decreasing grid")
        if np.any(np.diff(h) <= 0):
            raise InvalidInputError(
                "property table enthalpy_J_kg", "not increasing", "strictly increasing enthalpy"
            )
        if np.any(k <= 0) or np.any(rho <= 0) or not np.all(np.isfinite(np.r_[t, h, k, rho])):
            raise InvalidInputError(
                "property table", "non-positive or non-finite k or rho", "k > 0, rho > 0, finite"
            )
        for name, arr in (
            ("temperature_C", t),
            ("enthalpy_J_kg", h),
            ("conductivity_W_mK", k),
            ("density_kg_m3", rho),
        ):
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)

    # --- look-ups (vectorised) -------------------------------------------------------------
    def enthalpy(self, temperature_C) -> np.ndarray:
        """Specific enthalpy H(T) [J/kg] relative to ``reference_C``."""
        return _interp_extrapolate(
            np.asarray(temperature_C, dtype=float), self.temperature_C, self.enthalpy_J_kg
        )

    def temperature(self, enthalpy_J_kg) -> np.ndarray:
        """Temperature [°C] at a specific enthalpy, the inverse of :meth:`enthalpy`."""
        return _interp_extrapolate(
            np.asarray(enthalpy_J_kg, dtype=float), self.enthalpy_J_kg, self.temperature_C
        )

    def conductivity(self, temperature_C) -> np.ndarray:
        """Thermal conductivity k(T) [W/mK]."""
        return np.interp(np.asarray(temperature_C, dtype=float), self.temperature_C, self.conductivity_W_mK)

    def density(self, temperature_C) -> np.ndarray:
        """Density rho(T) [kg/m³]."""
        return np.interp(np.asarray(temperature_C, dtype=float), self.temperature_C, self.density_kg_m3)

    def apparent_cp(self, temperature_C) -> np.ndarray:
        """Apparent specific heat dH/dT [J/kgK], latent heat included, from the same table."""
        t = self.temperature_C
        dt = np.diff(t)
        dh = np.diff(self.enthalpy_J_kg)
        with np.errstate(divide="ignore", invalid="ignore"):
            seg = np.where(dt > 0, dh / np.where(dt > 0, dt, 1.0), np.inf)
        x = np.asarray(temperature_C, dtype=float)
        i = np.clip(np.searchsorted(t, x, side="right") - 1, 0, len(seg) - 1)
        return seg[i]

    def diffusivity(self, temperature_C) -> np.ndarray:
        """Thermal diffusivity k/(rho cp_app) [m²/s]."""
        return self.conductivity(temperature_C) / (
            self.density(temperature_C) * self.apparent_cp(temperature_C)
        )

    @property
    def mass_density_kg_m3(self) -> float:
        """Density used to fix the mass of a control volume: the unfrozen value at the top of the freezing
        range (or at 20 °C for a product that does not freeze). Grids are fixed in space, so each cell keeps
        this mass through freezing and heating; the small volume change is not modelled."""
        t_ref = self.initial_freezing_C if self.initial_freezing_C is not None else 20.0
        return float(self.density(min(max(t_ref, self.temperature_C[0]), self.temperature_C[-1])))

    def check_in_range(self, field_name: str, temperature_C) -> None:
        """Raise InvalidInputError when a temperature lies outside the table."""
        validate.array(
            field_name,
            temperature_C,
            minimum=float(self.temperature_C[0]),
            maximum=float(self.temperature_C[-1]),
            unit="°C",
        )

    # --- constructors --------------------------------------------------------------------
    @classmethod
    def constant(
        cls,
        k_W_mK: float,
        rho_kg_m3: float,
        cp_J_kgK: float,
        *,
        latent_J_kg: float = 0.0,
        freezing_C: float | None = None,
        frozen_k_W_mK: float | None = None,
        frozen_cp_J_kgK: float | None = None,
        mushy_band_K: float = 0.5,
        temperature_range_C: tuple[float, float] = MODEL_RANGE_C,
        reference_C: float = -40.0,
    ) -> PropertyTable:
        """Measured constant properties, optionally with a latent heat released in a narrow band below ``freezing_C``.

        The latent heat is spread linearly over ``mushy_band_K`` below the freezing point so that the
        enthalpy stays strictly increasing; the enthalpy solver carries it exactly whatever the band.

        >>> p = PropertyTable.constant(0.5, 1000.0, 4000.0)
        >>> float(p.enthalpy(10.0) - p.enthalpy(0.0))
        40000.0
        """
        k = validate.positive("fixed_properties.k_W_mK", k_W_mK, "W/mK")
        rho = validate.positive("fixed_properties.rho_kg_m3", rho_kg_m3, "kg/m³")
        cp = validate.positive("fixed_properties.cp_J_kgK", cp_J_kgK, "J/kgK")
        lat = validate.number("fixed_properties.latent_J_kg", latent_J_kg, minimum=0.0, unit="J/kg")
        lo, hi = temperature_range_C
        if lat > 0 and freezing_C is None:
            raise InvalidInputError(
                "fixed_properties.freezing_C",
                None,
                f"a temperature in [{lo:g}, {hi:g}] °C",
                "needed when a latent heat is given",
            )
        if lat == 0:
            t = np.array([lo, hi])
            h = cp * (t - reference_C)
            return cls(
                t, h, np.full(2, k), np.full(2, rho), None, reference_C, "measured constant properties"
            )
        tf = validate.number(
            "fixed_properties.freezing_C",
            freezing_C,
            minimum=lo + mushy_band_K + 1.0,
            maximum=hi - 1.0,
            unit="°C",
        )
        kf = validate.positive(
            "fixed_properties.frozen_k_W_mK", frozen_k_W_mK if frozen_k_W_mK is not None else k, "W/mK"
        )
        cpf = validate.positive(
            "fixed_properties.frozen_cp_J_kgK",
            frozen_cp_J_kgK if frozen_cp_J_kgK is not None else cp,
            "J/kgK",
        )
        t0 = tf - mushy_band_K
        t = np.array([lo, t0, tf, hi])
        h_t0 = cpf * (t0 - reference_C)
        h = np.array([cpf * (lo - reference_C), h_t0, h_t0 + lat + 0.5 * (cpf + cp) * mushy_band_K, 0.0])
        h[3] = h[2] + cp * (hi - tf)
        kk = np.array([kf, kf, k, k])
        return cls(
            t, h, kk, np.full(4, rho), tf, reference_C, "measured constant properties with latent heat"
        )
