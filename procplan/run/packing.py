"""Packed loads: a tray, case, stack or pallet of pieces run as one brick, beside the single free piece.

:func:`packed_plan` turns a plan with a ``[packing]`` table into the plan of its load: the product becomes a
brick of the load's outer size with the effective properties of :mod:`procplan.properties.packing` (pieces
and air voids; for a stack or pallet, the case walls inside it in series), the outer case wall becomes its
packaging layer, the air (or liquid) speed at the load is the machine's setting times the plan's
``air_flow_factor``, and the batch counts loads instead of pieces. :func:`packed_result` reads the slowest
(centre) and fastest (corner) positions of the load from its history and sets them beside the single free
piece. :func:`procplan.run.engine.run_plan` runs both when a plan has a packing.

Surface of a packed load: the load's outer faces exchange heat with the medium through the case wall; h is
that of the machine's correlation for a body of the load's size (h falls with the flow length), at the air
speed that reaches the load. The air-flow factor is that speed over the machine's setting: air bypasses a
dense load through the gaps beside it. Praeger et al. (2019) measured air speeds of at most 0.3 m/s between
the fruit in the bins of an apple store against 1.15 m/s in the gaps beside the bins at full fan power, and
about seven times less at the bottom of the stack than at the top: a factor of 0.25 or below inside a stack.
The factor is the plan's to give (from a measurement, or a site estimate); the default 1 is the unsafe side,
and the run says so.

References
----------
Praeger, U., Jedermann, R., Sellwig, M., Neuwald, D.A., Hartgenbusch, N., Borysov, M., Truppel, I., Scaar, H.,
Geyer, M., Airflow distribution in an apple storage room, J. Food Engineering (online 30 September 2019), abstract.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
import pandas as pd

from procplan.conduction.product import exact_temperature_at_C
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.model import Packing, Plan, Product, Step
from procplan.properties.packing import (
    PACKED_MODEL_LABELS,
    SAFE_PACKED_MODEL,
    WALL_MATERIALS,
    packed_property_table,
    void_fraction_from_count,
)
from procplan.properties.table import PropertyTable
from procplan.surface.layers import PackagingLayer


@dataclass(frozen=True, eq=False)
class PackedProduct(Product):
    """A packed load as a product: a brick whose properties are those of the load, not of its composition."""

    table: PropertyTable | None = None

    def property_table(self) -> PropertyTable:
        return self.table


@dataclass(frozen=True)
class PackedLoad:
    """What a packed load is, as solved (SI; conductivities at the start temperature).

    Attributes
    ----------
    arrangement : tray, case, stack or pallet
    description : the load in words
    geometry : the brick that is solved (outer size of the load)
    pieces_per_case, cases : pieces in one case, cases in the load
    void_fraction : air volume fraction between the pieces [-]; ``void_fraction_from`` says where it came from
    conductivity_model : effective-medium model of pieces and air
    k_W_mK : effective conductivity of the load [W/mK]; k_low_W_mK with the safe lower model
    rho_kg_m3 : effective density of the load [kg/m³]
    load_mass_kg : product in one load [kg]
    wall : the case wall on the load's faces (None without one)
    air_flow_factor : share of the machine's air speed that reaches the load [-]
    warnings : what the load model leaves out, and which way it moves the time
    """

    arrangement: str
    description: str
    geometry: Geometry
    pieces_per_case: int
    cases: int
    void_fraction: float
    void_fraction_from: str
    conductivity_model: str
    k_W_mK: float
    k_low_W_mK: float
    rho_kg_m3: float
    load_mass_kg: float
    wall: PackagingLayer | None
    air_flow_factor: float
    warnings: tuple[str, ...] = ()

    @property
    def pieces(self) -> int:
        return self.pieces_per_case * self.cases


@dataclass(frozen=True)
class LoadPosition:
    """One position in the load (or the single piece): its temperature at the end and its time to the target."""

    name: str
    end_C: float
    time_to_target_s: float | None


@dataclass(frozen=True, eq=False)
class PackedResult:
    """The packed load's positions beside the single free piece.

    ``single`` is the PlanResult of one free piece in the same steps; ``target_C`` the temperature the
    times are measured to (the first step's stop temperature, or its first target), None without one.
    """

    load: PackedLoad
    single: Any
    target_C: float | None
    positions: tuple[LoadPosition, ...]
    #: the corner piece's temperature over the load's history (``time_s``, ``corner_C``), for a chart; None
    #: when the load ran on finite volumes
    corner_history: pd.DataFrame | None = None


def piece_envelope_m3(product: Product) -> float:
    """Volume a piece takes in a case [m³]: its shape grown by its own packaging on every face."""
    g = product.geometry
    t = sum(layer.thickness_m for layer in product.packaging)
    if t == 0.0:
        return g.volume_m3
    grown = {k: getattr(g, k) for k in ("thickness_m", "diameter_m", "length_m", "width_m", "height_m")}
    grown = {k: (None if v is None else v + 2 * t) for k, v in grown.items()}
    return Geometry(g.shape, faces=g.faces, **grown).volume_m3


def _wall(pk: Packing) -> PackagingLayer | None:
    if pk.wall_thickness_m <= 0.0:
        return None
    k = pk.wall_k_W_mK if pk.wall_k_W_mK is not None else WALL_MATERIALS[pk.wall][0]
    name = pk.wall.replace("-", " ") if pk.wall else "case wall"
    return PackagingLayer(name, pk.wall_thickness_m, k)


def _void_fraction(product: Product, pk: Packing, inner_m3: float) -> tuple[float, str, float]:
    """(void fraction, where it came from, product volume fraction)."""
    env = piece_envelope_m3(product)
    eps_count = void_fraction_from_count(env, pk.pieces_per_case, inner_m3)
    phi = pk.pieces_per_case * product.geometry.volume_m3 / inner_m3
    if pk.void_fraction is None:
        return eps_count, f"from {pk.pieces_per_case} pieces in the case", phi
    if pk.void_fraction > eps_count + 1e-9:
        # more air than the pieces leave: the product fraction follows the given void fraction
        phi = min(phi, 1.0 - pk.void_fraction)
    else:
        phi = min(phi * (1.0 - pk.void_fraction) / (1.0 - eps_count), 1.0 - pk.void_fraction)
    return pk.void_fraction, "given in the plan", phi


def packed_product(plan: Plan) -> tuple[PackedProduct, PackedLoad]:
    """The load of ``plan.packing`` as a brick product of effective properties, and what it is."""
    pk = plan.packing
    product = plan.product
    inner = (pk.case_length_m, pk.case_width_m, pk.case_height_m)
    inner_m3 = float(np.prod(inner))
    eps, eps_from, phi = _void_fraction(product, pk, inner_m3)
    piece_table = product.property_table()
    wall = _wall(pk)
    cases = int(np.prod(pk.cases_layout))
    t_wall = pk.wall_thickness_m
    walls = (inner, t_wall, wall.k_W_mK) if (cases > 1 and wall is not None) else None
    table = packed_property_table(
        piece_table, eps, product_fraction=phi, model=pk.conductivity_model, walls=walls
    )
    low = packed_property_table(piece_table, eps, product_fraction=phi, model=SAFE_PACKED_MODEL, walls=walls)
    outer = [n * (d + 2 * t_wall) for n, d in zip(pk.cases_layout, inner, strict=True)]
    if cases == 1:  # one case: the brick is its inner space, its wall the packaging layer
        outer = list(inner)
    geometry = Geometry("brick", length_m=outer[0], width_m=outer[1], height_m=outer[2])
    t0 = plan.start_temperature_C
    unit = "pieces" if pk.arrangement == "tray" else "cases"
    description = (
        f"{pk.arrangement} of {pk.pieces_per_case} piece{'s' if pk.pieces_per_case > 1 else ''}"
        if cases == 1
        else f"{pk.arrangement} of {' × '.join(map(str, pk.cases_layout))} {unit} of {pk.pieces_per_case} pieces"
    )
    load = PackedLoad(
        arrangement=pk.arrangement,
        description=description,
        geometry=geometry,
        pieces_per_case=pk.pieces_per_case,
        cases=cases,
        void_fraction=eps,
        void_fraction_from=eps_from,
        conductivity_model=pk.conductivity_model,
        k_W_mK=float(table.conductivity(t0)),
        k_low_W_mK=float(low.conductivity(t0)),
        rho_kg_m3=table.mass_density_kg_m3,
        load_mass_kg=table.mass_density_kg_m3 * geometry.volume_m3,
        wall=wall,
        air_flow_factor=pk.air_flow_factor,
    )
    brick = PackedProduct(
        name=f"{product.name} ({pk.arrangement})",
        geometry=geometry,
        category=product.category,
        packaging=() if wall is None else (wall,),
        description=f"{load.description}: {product.description or product.name}",
        library=None,
        table=table,
    )
    return brick, load


def _speed_key(step: Step, library) -> tuple[Any, str | None]:
    if step.equipment is None or library is None or step.equipment not in library.equipment:
        return None, None
    eq = library.equipment[step.equipment]
    key = f"{eq.medium}_speed_m_s"
    return eq, (key if key in eq.settings else None)


def _slow_step(step: Step, i: int, factor: float, library) -> Step:
    """The step with the machine's air (or liquid) speed times the air-flow factor at the load's faces."""
    from procplan.surface.machines import resolve_settings

    eq, key = _speed_key(step, library)
    if key is None or factor == 1.0:
        return step
    r = eq.settings[key]

    def scaled(settings: dict) -> dict:
        speed = resolve_settings(eq, settings)[key]
        if speed * factor < r.minimum:
            raise InvalidInputError(
                "packing.air_flow_factor",
                factor,
                f">= {r.minimum / speed:.3g}",
                f"steps[{i}] ({step.name}): {speed:g} m/s × {factor:g} is below {eq.name}'s lowest speed "
                f"{r.minimum:g} m/s, which its correlation covers",
            )
        return {**settings, key: speed * factor}

    base = step.settings_dict
    profile = tuple((t, tuple(scaled({**base, **dict(s)}).items())) for t, s in step.settings_profile)
    return replace(step, settings=tuple(scaled(base).items()), settings_profile=profile)


def _load_warnings(plan: Plan, load: PackedLoad) -> tuple[str, ...]:
    pk = plan.packing
    out = [
        f"packed {load.arrangement}: effective conductivity {load.k_W_mK:.3f} W/mK "
        f"({PACKED_MODEL_LABELS[load.conductivity_model]}, "
        f"void fraction {load.void_fraction:.2f}); with pieces that touch less it may be as low as "
        f"{load.k_low_W_mK:.3f} W/mK (Maxwell–Eucken, air continuous), which would lengthen the time at the centre",
        f"packed {load.arrangement}: heat carried across the air voids by radiation and natural convection is not "
        "modelled (the centre's time errs long); the centre piece's own core lags the load's centre by about a "
        "single piece's cooling time, which is not added",
    ]
    if pk.air_flow_factor == 1.0 and any(s.equipment for s in plan.steps):
        out.append(
            f"packed {load.arrangement}: the air speed at the load's faces is taken as the machine's setting "
            "(packing.air_flow_factor = 1); measured speeds beside and inside stacks are a quarter of that or "
            "less (Praeger et al. 2019), which lengthens the time — give packing.air_flow_factor"
        )
    return tuple(out)


def packed_plan(plan: Plan, library=None) -> tuple[Plan, PackedLoad]:
    """The plan of the packed load (a brick of effective properties, no packing) and what the load is.

    ``library`` resolves the machines whose air speed the air-flow factor scales. A second product in the load
    (``[load.second_product]``) is not part of the packed load: it shares the medium with the packed loads
    (their heat and its own both enter the medium's balance) and its h is that of the machine's own setting.
    """
    if plan.packing is None:
        raise InvalidInputError("packing", None, "a [packing] table")
    brick, load = packed_product(plan)
    load = replace(load, warnings=_load_warnings(plan, load))
    steps = tuple(_slow_step(s, i, plan.packing.air_flow_factor, library) for i, s in enumerate(plan.steps))
    batch = max(1, math.ceil(plan.checks.pieces_per_batch / load.pieces))
    checks = replace(plan.checks, pieces_per_batch=batch)
    machine_load = plan.load
    if machine_load.second_product is not None:  # not in the packed load: it sees the machine's own setting
        second = replace(machine_load.second_product, machine_steps=plan.steps)
        machine_load = replace(machine_load, second_product=second)
    load_plan = replace(plan, product=brick, steps=steps, checks=checks, packing=None, load=machine_load)
    return load_plan, load


def _target_C(plan: Plan) -> float | None:
    first = plan.steps[0]
    if first.stop_when_core_C is not None:
        return first.stop_when_core_C
    return first.targets[0].temperature_C if first.targets else None


def time_to_reach_s(time_s, temperature_C, target_C: float, start_C: float) -> float | None:
    """First time [s] a temperature history reaches ``target_C`` from ``start_C`` (linear between points).

    >>> time_to_reach_s([0, 10, 20], [20.0, 10.0, 4.0], 7.0, 20.0)
    15.0
    """
    t = np.asarray(time_s, dtype=float)
    y = np.asarray(temperature_C, dtype=float)
    sign = 1.0 if target_C <= start_C else -1.0
    past = np.nonzero(sign * (y - target_C) <= 0.0)[0]
    if not past.size:
        return None
    j = int(past[0])
    if j == 0:
        return float(t[0])
    y0, y1 = y[j - 1], y[j]
    return float(t[j - 1] + (t[j] - t[j - 1]) * (y0 - target_C) / (y0 - y1))


def corner_piece_position(plan: Plan, load: PackedLoad) -> tuple[float, float, float]:
    """Dimensionless coordinates (x*, y*, z*; 0 centre, 1 face) of the centre of the corner piece of the load.

    A piece's cell along an axis is the case's inner length over the pieces along it (``piece_layout``), or
    the cube root of the case volume per piece; the corner piece's centre lies half a cell (and, in a stack,
    one case wall) inside each outer face.

    >>> from procplan.model import Packing
    >>> pk = Packing("case", 0.2, 0.2, 0.1, 8, piece_layout=(2, 2, 2))
    >>> g = Geometry("brick", length_m=0.2, width_m=0.2, height_m=0.1)
    >>> corner_piece_position(Plan("p", Product("x", g), 5.0, (), packing=pk), None)
    (0.5, 0.5, 0.5)
    """
    pk = plan.packing
    inner = (pk.case_length_m, pk.case_width_m, pk.case_height_m)
    if pk.piece_layout is not None:
        cells = [d / n for d, n in zip(inner, pk.piece_layout, strict=True)]
    else:
        cells = [float(np.prod(inner) / pk.pieces_per_case) ** (1.0 / 3.0)] * 3
        cells = [min(c, d) for c, d in zip(cells, inner, strict=True)]
    stacked = int(np.prod(pk.cases_layout)) > 1
    wall = pk.wall_thickness_m if stacked else 0.0
    outer = (
        inner if not stacked else [n * (d + 2 * wall) for n, d in zip(pk.cases_layout, inner, strict=True)]
    )
    return tuple(float(max(0.0, 1.0 - (wall + c / 2) / (d / 2))) for c, d in zip(cells, outer, strict=True))


def _corner_history(plan: Plan, load: PackedLoad, load_result) -> pd.DataFrame | None:
    """The corner piece's temperature over the load's history, when the load ran as one exact step."""
    if len(load_result.steps) != 1 or load_result.steps[0].solver != "exact":
        return None
    sr = load_result.steps[0]
    d = sr.details
    times = load_result.history["time_s"].to_numpy()
    temps = exact_temperature_at_C(
        load.geometry,
        d.k_W_mK,
        d.rho_kg_m3,
        d.cp_J_kgK,
        sr.surface.h_W_m2K[0],
        plan.start_temperature_C,
        sr.surface.medium_C[0],
        times,
        corner_piece_position(plan, load),
    )
    return pd.DataFrame({"time_s": times, "corner_C": temps})


def packed_result(plan: Plan, load: PackedLoad, load_result, single) -> PackedResult:
    """The slowest (centre) and fastest (corner piece) positions of the load, beside the single free piece.

    The corner piece is evaluated on the exact solution of a one-step load; a load solved by finite volumes
    reports the corner of its outer surface instead (a bound: no piece cools faster than that point).
    """
    target = _target_C(plan)
    t0 = plan.start_temperature_C
    unit = load.arrangement

    def position(name: str, hist: pd.DataFrame, col: str) -> LoadPosition:
        when = None if target is None else time_to_reach_s(hist["time_s"], hist[col], target, t0)
        return LoadPosition(name, float(hist[col].iloc[-1]), when)

    corner = _corner_history(plan, load, load_result)
    positions = (
        position(f"centre of the {unit} (slowest)", load_result.history, "core_C"),
        position(f"corner piece of the {unit} (fastest)", corner, "corner_C")
        if corner is not None
        else position(
            f"corner of the {unit}, outer surface (fastest bound)", load_result.history, "surface_C"
        ),
        position("single free piece, centre", single.history, "core_C"),
    )
    return PackedResult(load, single, target, positions, corner)


def packed_lines(packed: PackedResult) -> list[str]:
    """The packed load in words for the summary text (one definition for the CLI and the app)."""
    load = packed.load
    lines = [
        f"  packed load: {load.description}, {load.pieces} pieces, {load.load_mass_kg:.1f} kg, "
        f"{load.geometry.describe()}",
        f"    void fraction {load.void_fraction:.2f} ({load.void_fraction_from}); effective k "
        f"{load.k_W_mK:.3f} W/mK ({PACKED_MODEL_LABELS[load.conductivity_model]}; safe lower value "
        f"{load.k_low_W_mK:.3f}), "
        f"density {load.rho_kg_m3:.0f} kg/m³; air speed at the load × {load.air_flow_factor:g}",
    ]
    if load.wall is not None:
        lines.append(
            f"    case wall: {load.wall.name} {load.wall.thickness_m * 1000:g} mm, k {load.wall.k_W_mK:g} W/mK"
        )
    goal = "" if packed.target_C is None else f" (time to {packed.target_C:g} °C)"
    lines.append(f"    positions{goal}:")
    for p in packed.positions:
        when = "not reached" if p.time_to_target_s is None else _hours(p.time_to_target_s)
        lines.append(
            f"      {p.name}: {when if packed.target_C is not None else ''}, at the end {p.end_C:.1f} °C"
        )
    return lines


def _hours(t_s: float) -> str:
    m = t_s / 60.0
    return f"{m:.0f} min ({m / 60:.1f} h)" if m >= 120 else f"{m:.1f} min"
