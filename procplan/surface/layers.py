"""Radiation in parallel with convection, and packaging layers and air gaps in series.

1/h_eff = 1/(h_conv + h_rad) + Σ t_i/k_i

With walls at another temperature than the fluid, the parallel pair exchanges heat with the sink temperature
(h_conv T_∞ + h_rad T_sur)/(h_conv + h_rad) (:func:`sink_temperature_C`); the packaging stays in series.

References
----------
Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 1.9 (radiation
coefficient), eq. 1.10 and §1.2.3 (surface energy balance), §3.1.3 and eq. 3.19 (thermal resistances in
series), Table A.3 (conductivity of common materials).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from procplan import validate
from procplan.errors import Collector, InvalidInputError

#: Stefan–Boltzmann constant [W/m²K⁴] (CODATA 2018).
STEFAN_BOLTZMANN_W_M2K4 = 5.670374419e-8
ZERO_CELSIUS_K = 273.15
#: Air gap thicker than this [m] may carry convection inside it; the still-air model then underestimates transfer.
AIR_GAP_CONDUCTION_LIMIT_M = 0.01
#: Largest layer thickness accepted [m].
MAX_LAYER_M = 0.1


def h_radiation_linearised(emissivity: Any, surface_C: Any, surroundings_C: Any) -> Any:
    """Linearised radiation coefficient of a small grey surface in large surroundings.

    h_r = ε σ (T_s + T_sur)(T_s² + T_sur²), temperatures in kelvin (Incropera 7th ed., eq. 1.9)

    Parameters
    ----------
    emissivity : emissivity of the exchange, 0–1 (the product's for a small body in a large enclosure)
    surface_C : surface temperature [°C]
    surroundings_C : temperature of the enclosing walls [°C]

    Examples
    --------
    A direct evaluation, 0.8 σ (473.15 + 298.15)(473.15² + 298.15²) for ε = 0.8, 200 °C surface, 25 °C walls:

    >>> round(h_radiation_linearised(0.8, 200.0, 25.0), 2)
    10.95

    References
    ----------
    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., eq. 1.9.
    """
    eps = np.asarray(emissivity, dtype=float)
    ts = np.asarray(surface_C, dtype=float) + ZERO_CELSIUS_K
    tsur = np.asarray(surroundings_C, dtype=float) + ZERO_CELSIUS_K
    h = eps * STEFAN_BOLTZMANN_W_M2K4 * (ts + tsur) * (ts**2 + tsur**2)
    return float(h) if np.ndim(h) == 0 else h


def sink_temperature_C(
    medium_C: float, surroundings_C: float, h_conv_W_m2K: float, h_rad_W_m2K: float
) -> float:
    """Temperature the surface exchanges heat with when it convects to a fluid and radiates to walls.

    The surface balance h_c (T_∞ − T_s) + h_r (T_sur − T_s) equals (h_c + h_r)(T_sink − T_s) with
    T_sink = (h_c T_∞ + h_r T_sur)/(h_c + h_r), written as T_∞ + h_r/(h_c + h_r) (T_sur − T_∞) so that equal
    fluid and wall temperatures give the fluid temperature exactly (Incropera 7th ed., eq. 1.10 and §1.2.3,
    with the radiation term linearised by eq. 1.9).

    >>> sink_temperature_C(20.0, 200.0, 5.0, 15.0)
    155.0
    >>> sink_temperature_C(20.0, 20.0, 5.0, 15.0)
    20.0
    """
    if h_rad_W_m2K == 0.0 or surroundings_C == medium_C:
        return float(medium_C)
    share = h_rad_W_m2K / (h_conv_W_m2K + h_rad_W_m2K)
    return float(medium_C + share * (surroundings_C - medium_C))


@dataclass(frozen=True)
class PackagingLayer:
    """One layer between the product and the medium: film, tray wall, carton, or a still-air gap.

    ``k_W_mK = None`` marks an air gap: conduction through still air at the film temperature.
    """

    name: str
    thickness_m: float
    k_W_mK: float | None = None

    def __post_init__(self) -> None:
        validate.number("packaging.thickness_m", self.thickness_m, minimum=0.0, maximum=MAX_LAYER_M, unit="m")
        if self.k_W_mK is not None:
            validate.number(
                "packaging.k_W_mK", self.k_W_mK, minimum=0.0, min_inclusive=False, maximum=500.0, unit="W/mK"
            )

    @property
    def is_air_gap(self) -> bool:
        return self.k_W_mK is None


def air_gap(thickness_m: float, name: str = "air gap") -> PackagingLayer:
    """A still-air gap of the given thickness [m]."""
    return PackagingLayer(name, thickness_m, None)


def as_layers(packaging: Iterable[Any]) -> tuple[PackagingLayer, ...]:
    """Accept PackagingLayer objects or (name, thickness_m, k_W_mK) tuples (k None for an air gap)."""
    layers = []
    for i, item in enumerate(packaging):
        if isinstance(item, PackagingLayer):
            layers.append(item)
            continue
        try:
            name, t, k = item
        except (TypeError, ValueError):
            raise InvalidInputError(
                f"packaging[{i}]", item, "(name, thickness_m, k_W_mK) or a PackagingLayer"
            ) from None
        layers.append(PackagingLayer(str(name), t, k))
    return tuple(layers)


def packaging_resistance_m2K_W(layers: Iterable[PackagingLayer], air_k_W_mK: float) -> float:
    """Series conduction resistance of the layers, R = Σ t_i/k_i [m²K/W] (Incropera 7th ed., eq. 3.19).

    Air gaps use ``air_k_W_mK`` (still air at the film temperature).

    >>> round(packaging_resistance_m2K_W([PackagingLayer("PE film", 50e-6, 0.33), air_gap(0.002)], 0.025), 5)
    0.08015
    """
    return float(
        sum(layer.thickness_m / (air_k_W_mK if layer.is_air_gap else layer.k_W_mK) for layer in layers)
    )


def h_effective(h_conv_W_m2K: Any, h_rad_W_m2K: Any, packaging_resistance_m2K_W: Any) -> Any:
    """Overall surface coefficient of convection and radiation in parallel, packaging in series.

    1/h_eff = 1/(h_conv + h_rad) + R_pack

    >>> h_effective(20.0, 5.0, 0.0)
    25.0
    >>> round(h_effective(20.0, 5.0, 0.04), 6)
    12.5
    """
    h = np.asarray(h_conv_W_m2K, dtype=float) + np.asarray(h_rad_W_m2K, dtype=float)
    out = 1.0 / (1.0 / h + np.asarray(packaging_resistance_m2K_W, dtype=float))
    return float(out) if np.ndim(out) == 0 else out


def packaging_from_dicts(
    items: Iterable[Mapping[str, Any]], source: str = "packaging", field_prefix: str = ""
) -> tuple[PackagingLayer, ...]:
    """Parse packaging layers as written in a plan file (user units), reporting every problem.

    Each item: ``{name = "PE film", thickness_mm = 0.05, k_W_mK = 0.33}``; an air gap is
    ``{name = "air gap", thickness_mm = 2, air_gap = true}`` (no k).

    >>> packaging_from_dicts([{"name": "tray", "thickness_mm": 1.0, "k_W_mK": 0.2}])[0].thickness_m
    0.001
    """
    collector = Collector(source)
    if isinstance(items, (str, bytes, Mapping)) or not isinstance(items, Iterable):
        raise InvalidInputError(
            f"{field_prefix}packaging",
            items,
            "a list of layers [[packaging]] with name, thickness_mm, k_W_mK",
        )
    layers = []
    for i, item in enumerate(items):
        field = f"{field_prefix}packaging[{i}]"
        if not isinstance(item, Mapping):
            collector.add(
                InvalidInputError(
                    field, item, "a table with name, thickness_mm and k_W_mK (or air_gap = true)"
                )
            )
            continue
        unknown = set(item) - {"name", "thickness_mm", "k_W_mK", "air_gap"}
        if unknown:
            collector.add(
                InvalidInputError(
                    f"{field}.{sorted(unknown)[0]}",
                    item[sorted(unknown)[0]],
                    "keys name, thickness_mm, k_W_mK, air_gap",
                )
            )
        gap = item.get("air_gap", False)
        if not isinstance(gap, bool):
            collector.add(InvalidInputError(f"{field}.air_gap", gap, "true or false"))
            continue
        t = k = None
        with collector.catch():
            t = validate.number(
                f"{field}.thickness_mm",
                item.get("thickness_mm"),
                minimum=0.0,
                min_inclusive=False,
                maximum=MAX_LAYER_M * 1000,
                unit="mm",
            )
        if gap:
            if item.get("k_W_mK") is not None:
                collector.add(
                    InvalidInputError(
                        f"{field}.k_W_mK", item["k_W_mK"], "not set for an air gap (still air is used)"
                    )
                )
        else:
            with collector.catch():
                k = validate.number(
                    f"{field}.k_W_mK",
                    item.get("k_W_mK"),
                    minimum=0.0,
                    min_inclusive=False,
                    maximum=500.0,
                    unit="W/mK",
                )
        if t is not None and (gap or k is not None):
            layers.append(
                PackagingLayer(
                    str(item.get("name", "air gap" if gap else f"layer {i + 1}")),
                    t / 1000.0,
                    None if gap else k,
                )
            )
    collector.raise_if_any()
    return tuple(layers)


def packaging_to_dicts(layers: Iterable[PackagingLayer]) -> list[dict[str, Any]]:
    """The inverse of :func:`packaging_from_dicts`."""
    out = []
    for layer in layers:
        # the thickness that reads back to exactly the stored metres (a file round trip loses nothing)
        mm = layer.thickness_m * 1000.0
        for _ in range(8):
            if mm / 1000.0 == layer.thickness_m:
                break
            mm = math.nextafter(mm, math.inf if mm / 1000.0 < layer.thickness_m else -math.inf)
        d: dict[str, Any] = {"name": layer.name, "thickness_mm": int(mm) if mm.is_integer() else mm}
        if layer.is_air_gap:
            d["air_gap"] = True
        else:
            d["k_W_mK"] = layer.k_W_mK
        out.append(d)
    return out
