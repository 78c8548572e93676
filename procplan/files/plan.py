"""Plan files: TOML in the user's units (mm, min, °C) to and from :class:`procplan.model.Plan` (SI).

:func:`plan_from_dict` validates a whole file and reports every problem, each naming its field, value and
allowed range; :func:`plan_to_dict` writes it back so that ``plan_from_dict(plan_to_dict(p)) == p``.
The product and step tables are parsed by :mod:`procplan.files.product` and :mod:`procplan.files.steps`.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import replace
from pathlib import Path
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.fields import (
    T_HI,
    T_LO,
    check_keys,
    check_product_temperature,
    file_number,
    optional,
    product_temperature,
    stated_temperature,
)
from procplan.files.packing import packing_from_dict, packing_to_dict
from procplan.files.product import product_freezing_C, product_from_dict, product_to_dict
from procplan.files.second_product import second_product_from_dict, second_product_to_dict
from procplan.files.steps import step_from_dict, step_to_dict
from procplan.files.tomlfile import dump_toml, parse_toml, read_toml, write_atomic
from procplan.model import (
    LOAD_MODELS,
    MAX_STEP_MIN,
    POINTS,
    SOLVERS,
    Checks,
    LethalityCheck,
    Load,
    Plan,
    Product,
    Step,
)

CHECK_KEYS = (
    "cooling_rule",
    "lethality",
    "margin_percent",
    "margin_min",
    "pieces_per_batch",
    "cop_fraction",
    "energy_price_per_kWh",
    "frozen_storage_C",
    "budget_used_above_h",
    "budget_used_below_h",
    "mean_kinetic_point",
    "mean_kinetic_max_C",
)
#: Largest stability budget already spent that a plan may carry [h] (about 11 years).
MAX_BUDGET_USED_H = 1.0e5
LETHALITY_KEYS = ("preset", "reference_C", "z_C", "required_F_min", "d_value_min", "point")
PLAN_KEYS = ("title", "notes", "solver", "product", "start", "steps", "checks", "packing", "load")
LOAD_KEYS = ("pieces", "model", "second_product")


def _lethality_table(c: Collector, raw: Mapping[str, Any], lp: str) -> LethalityCheck:
    """A lethality requirement given as a table: a preset, or reference_C and z_C (and required F)."""
    check_keys(c, raw, LETHALITY_KEYS, lp)
    point = raw.get("point", "core")
    with c.catch():
        validate.choice(lp + "point", point, POINTS)
    leth = LethalityCheck(
        preset=raw.get("preset"),
        reference_C=optional(c, raw, "reference_C", lp, stated_temperature),
        z_C=optional(
            c, raw, "z_C", lp, validate.number, minimum=0.0, min_inclusive=False, maximum=200.0, unit="°C"
        ),
        required_F_min=optional(
            c, raw, "required_F_min", lp, validate.number, minimum=0.0, min_inclusive=False, unit="min"
        ),
        d_value_min=optional(c, raw, "d_value_min", lp, validate.positive, "min"),
        point=point,
    )
    if leth.preset is None and (leth.reference_C is None or leth.z_C is None):
        c.add(
            InvalidInputError(
                lp + "z_C", leth.z_C, "> 0 °C", "a lethality check needs a preset or reference_C and z_C"
            )
        )
    return leth


def _lethality(c: Collector, data: Mapping[str, Any], p: str) -> LethalityCheck | None:
    """The lethality requirement: a preset name, or a table; None when not given."""
    if "lethality" not in data:
        return None
    raw = data["lethality"]
    if isinstance(raw, str):
        return LethalityCheck(preset=raw)
    if isinstance(raw, Mapping):
        return _lethality_table(c, raw, p + "lethality.")
    c.add(
        InvalidInputError(
            p + "lethality", raw, "a preset name or a table with reference_C, z_C, required_F_min"
        )
    )
    return None


def checks_from_dict(data: Mapping[str, Any], source: str = "plan") -> Checks:
    """Build the plan's Checks from its ``[checks]`` table, collecting every problem."""
    p = "checks."
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError("checks", data, "a table")
    check_keys(c, data, CHECK_KEYS, p)
    rule = data.get("cooling_rule")
    if rule is not None and not isinstance(rule, str):
        c.add(InvalidInputError(p + "cooling_rule", rule, "the name of a rule in the rule library"))
    leth = _lethality(c, data, p)
    ppb = data.get("pieces_per_batch", 1)
    if isinstance(ppb, bool) or not isinstance(ppb, int) or not (1 <= ppb <= 10_000_000):
        c.add(InvalidInputError(p + "pieces_per_batch", ppb, "a whole number from 1 to 10 000 000"))
        ppb = 1
    checks = Checks(
        cooling_rule=rule,
        lethality=leth,
        margin_percent=optional(
            c, data, "margin_percent", p, validate.number, minimum=0.0, maximum=500.0, unit="%", default=0.0
        ),
        margin_min=optional(
            c,
            data,
            "margin_min",
            p,
            validate.number,
            minimum=0.0,
            maximum=MAX_STEP_MIN,
            unit="min",
            default=0.0,
        ),
        pieces_per_batch=ppb,
        cop_fraction=optional(
            c,
            data,
            "cop_fraction",
            p,
            validate.number,
            minimum=0.0,
            min_inclusive=False,
            maximum=1.0,
            default=0.5,
        ),
        energy_price_per_kWh=optional(
            c, data, "energy_price_per_kWh", p, validate.number, minimum=0.0, maximum=100.0
        ),
        frozen_storage_C=optional(c, data, "frozen_storage_C", p, product_temperature, default=-18.0),
        **_cold_chain_checks(c, data, p),
    )
    c.raise_if_any()
    return checks


def _cold_chain_checks(c: Collector, data: Mapping[str, Any], p: str) -> dict[str, Any]:
    """Stability budget already spent and the mean kinetic temperature asked for (its point and limit)."""
    out: dict[str, Any] = {}
    for key in ("budget_used_above_h", "budget_used_below_h"):
        out[key] = optional(
            c, data, key, p, validate.number, minimum=0.0, maximum=MAX_BUDGET_USED_H, unit="h", default=0.0
        )
    point = data.get("mean_kinetic_point")
    if point is not None:
        with c.catch():
            validate.choice(p + "mean_kinetic_point", point, POINTS)
    limit = optional(c, data, "mean_kinetic_max_C", p, product_temperature)
    out["mean_kinetic_point"] = point if isinstance(point, str) and point in POINTS else None
    if limit is not None and out["mean_kinetic_point"] is None and point is None:
        out["mean_kinetic_point"] = "core"
    out["mean_kinetic_max_C"] = limit
    return out


def _product(c: Collector, data: Mapping[str, Any], source: str, library) -> Product | None:
    """The plan's product, over the library product it names (``product.library``) when it names one."""
    raw_product = data.get("product")
    if not isinstance(raw_product, Mapping):
        c.add(InvalidInputError("product", raw_product, "a [product] table"))
        return None
    base = None
    ref = raw_product.get("library")
    if ref is not None:
        if library is None:
            c.add(InvalidInputError("product.library", ref, "a product name, with a library loaded"))
        elif not isinstance(ref, str) or ref not in library.products:
            c.add(InvalidInputError("product.library", ref, "one of " + ", ".join(sorted(library.products))))
        else:
            base = library.products[ref]
    if ref is None or base is not None:
        with c.catch():
            return product_from_dict(raw_product, source, base=base)
    return None


def _start(c: Collector, data: Mapping[str, Any]) -> float | None:
    """The starting product temperature [°C] from the ``[start]`` table."""
    start = data.get("start")
    if not isinstance(start, Mapping) or "temperature_C" not in start:
        c.add(
            InvalidInputError(
                "start.temperature_C",
                None,
                f"[{T_LO:g}, {T_HI:g}] °C",
                "a [start] table with temperature_C is required",
            )
        )
        return None
    check_keys(c, start, ("temperature_C",), "start.")
    return optional(c, start, "temperature_C", "start.", stated_temperature)


def _steps(c: Collector, data: Mapping[str, Any], source: str, library) -> list[Step]:
    """Every ``[[steps]]`` table, with machine names and settings checked against the library."""
    steps = []
    raw_steps = data.get("steps")
    if not isinstance(raw_steps, list) or not raw_steps:
        c.add(InvalidInputError("steps", raw_steps, "one or more [[steps]] tables"))
        raw_steps = []
    for i, s in enumerate(raw_steps):
        with c.catch():
            step = step_from_dict(s, i, source)
            steps.append(step)
            if library is not None and step.equipment is not None:
                _check_equipment(c, step, i, library)
    return steps


def _plan_checks(c: Collector, data: Mapping[str, Any], source: str, library) -> Checks:
    """The plan's checks, with the rule name and lethality preset checked against what exists."""
    checks = Checks()
    if "checks" in data:
        with c.catch():
            checks = checks_from_dict(data["checks"], source)
    rule = checks.cooling_rule
    if library is not None and isinstance(rule, str) and rule not in library.rules:
        c.add(
            InvalidInputError(
                "checks.cooling_rule", checks.cooling_rule, "one of " + ", ".join(sorted(library.rules))
            )
        )
    if checks.lethality is not None and checks.lethality.preset is not None:
        with c.catch():
            from procplan.outcomes import LETHALITY_PRESETS

            validate.choice("checks.lethality.preset", checks.lethality.preset, LETHALITY_PRESETS)
    return checks


def plan_from_dict(data: Mapping[str, Any], source: str = "plan", library=None) -> Plan:
    """Build and validate a Plan from a parsed plan file; every problem is reported at once.

    ``library`` (a :class:`procplan.files.library.Library`) resolves ``product.library`` references and
    checks equipment names and settings.
    """
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError(source, data, "a TOML table")
    check_keys(c, data, PLAN_KEYS)
    title = data.get("title", "untitled plan")
    if not isinstance(title, str):
        c.add(InvalidInputError("title", title, "a text"))
        title = str(title)
    solver = data.get("solver", "auto")
    with c.catch():
        validate.choice("solver", solver, SOLVERS)
    product = _product(c, data, source, library)
    t0 = _start(c, data)
    steps = _steps(c, data, source, library)
    checks = _plan_checks(c, data, source, library)
    load, pieces = _load(c, data, checks, library)
    if checks is not None and pieces is not None:
        checks = replace(checks, pieces_per_batch=pieces)
    notes = str(data.get("notes", ""))
    packing = None
    if "packing" in data:
        with c.catch():
            packing = packing_from_dict(data["packing"], source)
    if product is not None:
        _check_frozen_storage(c, product, checks, data.get("checks"))
    _check_product_range(c, product, data.get("product"), t0, steps)
    _check_weight_loss(c, product, steps)
    if t0 is not None and steps:
        _check_first_stop(c, steps[0], t0, library)
    c.raise_if_any()
    return Plan(
        title=title,
        product=product,
        start_temperature_C=t0,
        steps=tuple(steps),
        checks=checks,
        solver=solver,
        notes=notes,
        packing=packing,
        load=load,
    )


def _load(
    c: Collector, data: Mapping[str, Any], checks: Checks | None, library=None
) -> tuple[Load, int | None]:
    """The ``[load]`` table: the load model and the pieces per batch (the same number as
    ``checks.pieces_per_batch``, which older plans give; both given must agree)."""
    raw = data.get("load", {})
    if not isinstance(raw, Mapping):
        c.add(InvalidInputError("load", raw, 'a table such as { pieces = 60, model = "loaded" }'))
        return Load(), None
    check_keys(c, raw, LOAD_KEYS, "load.")
    model = raw.get("model", "loaded")
    with c.catch():
        validate.choice("load.model", model, LOAD_MODELS)
    pieces = raw.get("pieces")
    if pieces is not None:
        if isinstance(pieces, bool) or not isinstance(pieces, int) or not (1 <= pieces <= 10_000_000):
            c.add(InvalidInputError("load.pieces", pieces, "a whole number from 1 to 10 000 000"))
            pieces = None
        elif (
            isinstance(data.get("checks"), Mapping)
            and "pieces_per_batch" in data["checks"]
            and checks is not None
            and checks.pieces_per_batch != pieces
        ):
            c.add(
                InvalidInputError(
                    "load.pieces",
                    pieces,
                    f"checks.pieces_per_batch = {checks.pieces_per_batch} (one batch size)",
                )
            )
    second = second_product_from_dict(c, raw.get("second_product"), library)
    return Load(model if model in LOAD_MODELS else "loaded", second), pieces


def _check_product_range(
    c: Collector, product: Product | None, raw: Any, t0: float | None, steps: list[Step]
) -> None:
    """The start, stop and target temperatures inside what the product's properties cover (an invalid
    product without fixed properties: the composition model's range, so that every problem shows at once)."""
    if product is None:
        if not isinstance(raw, Mapping) or "fixed_properties" in raw or "library" in raw:
            return
        product = Product("?", None)
    named = [("start.temperature_C", t0)]
    for i, s in enumerate(steps):
        named.append((f"steps[{i}].stop_when_core_C", s.stop_when_core_C))
        named += [
            (f"steps[{i}].targets[{j}].temperature_C", t.temperature_C) for j, t in enumerate(s.targets)
        ]
    for name, value in named:
        if value is not None:
            with c.catch():
                check_product_temperature(product, name, value)
    if product.geometry is not None:
        _check_depths(c, product, steps)


def _check_depths(c: Collector, product: Product, steps: list[Step]) -> None:
    """A depth target lies between the surface and the thermal centre: 0 to the half-thickness or radius of the
    product's shortest axis."""
    length_mm = product.geometry.conduction_length_m * 1000.0
    for i, s in enumerate(steps):
        for j, t in enumerate(s.targets):
            if t.depth_m is not None and not 0.0 <= t.depth_m * 1000.0 <= length_mm + 1e-9:
                c.add(
                    InvalidInputError(
                        f"steps[{i}].targets[{j}].depth_mm",
                        file_number(t.depth_m * 1000.0),
                        f"[0, {length_mm:g}] mm (surface to centre of the {product.geometry.describe()})",
                    )
                )


def _check_weight_loss(c: Collector, product: Product | None, steps: list[Step]) -> None:
    """A weight-loss stop below the product's water content (only water evaporates)."""
    water = None if product is None else product.composition_dict.get("water")
    for i, s in enumerate(steps):
        loss = s.stop_when_weight_loss_fraction
        if loss is not None and water is not None and loss >= water:
            c.add(
                InvalidInputError(
                    f"steps[{i}].stop_when_weight_loss_percent",
                    round(100.0 * loss, 6),
                    f"(0, {100.0 * water:g}) %, below the product's water content",
                )
            )


def _check_frozen_storage(c: Collector, product: Product, checks: Checks, raw_checks: Any) -> None:
    """The frozen-storage temperature (end of freezing) must lie below the product's freezing point."""
    tf = product_freezing_C(product)
    if tf is None or checks.frozen_storage_C < tf:
        return
    given = isinstance(raw_checks, Mapping) and "frozen_storage_C" in raw_checks
    c.add(
        InvalidInputError(
            "checks.frozen_storage_C",
            checks.frozen_storage_C,
            f"< {tf:.2f} °C, the product's initial freezing point",
            None if given else "this is the default; give a lower checks.frozen_storage_C",
        )
    )


def _first_medium_C(step: Step, library) -> float | None:
    """The medium temperature [°C] at the start of ``step``, or None when it is not known before a run."""
    if step.medium_C is not None:
        return step.medium_C
    if step.medium_profile:
        return step.medium_profile[0][1]
    if library is None or step.equipment not in library.equipment:
        return None
    from procplan.surface.machines import resolve_settings

    eq = library.equipment[step.equipment]
    try:
        return resolve_settings(eq, step.settings_dict).get(eq.temperature_key)
    except InvalidInputError:
        return None


def _check_first_stop(c: Collector, step: Step, start_C: float, library) -> None:
    """A first step that ends on a core temperature (no duration) must not be there at the start: the step
    would end at once and its cycle time would be zero."""
    if step.duration_given:
        return
    medium = _first_medium_C(step, library)
    if medium is None:
        return
    cooling = medium < start_C
    wanted = [("steps[0].stop_when_core_C", step.stop_when_core_C)]
    wanted += [(f"steps[0].targets[{j}].temperature_C", t.temperature_C) for j, t in enumerate(step.targets)]
    for name, temp in wanted:
        if temp is not None and (temp >= start_C if cooling else temp <= start_C):
            c.add(
                InvalidInputError(
                    name,
                    temp,
                    f"{'below' if cooling else 'above'} the start temperature {start_C:g} °C "
                    f"(the medium is at {medium:g} °C)",
                    "reached at the start: the step would end at once with a cycle of 0 min",
                )
            )


def _check_equipment(c: Collector, step: Step, i: int, library) -> None:
    if step.equipment not in library.equipment:
        c.add(
            InvalidInputError(
                f"steps[{i}].equipment", step.equipment, "one of " + ", ".join(sorted(library.equipment))
            )
        )
        return
    from procplan.surface.machines import resolve_settings

    eq = library.equipment[step.equipment]
    with c.catch():
        resolve_settings(eq, step.settings_dict, field_prefix=f"steps[{i}].settings.")
    for j, (_, s) in enumerate(step.settings_profile):
        with c.catch():
            resolve_settings(
                eq, {**step.settings_dict, **dict(s)}, field_prefix=f"steps[{i}].settings_profile[{j}]."
            )


def checks_to_dict(ch: Checks) -> dict[str, Any]:
    d: dict[str, Any] = {}
    if ch.cooling_rule:
        d["cooling_rule"] = ch.cooling_rule
    if ch.lethality is not None:
        lt = {
            k: (file_number(v) if isinstance(v, (int, float)) else v)
            for k, v in vars(ch.lethality).items()
            if v is not None
        }
        if lt.get("point") == "core":
            lt.pop("point")
        d["lethality"] = lt
    defaults = Checks()
    for key in (
        "margin_percent",
        "margin_min",
        "pieces_per_batch",
        "cop_fraction",
        "energy_price_per_kWh",
        "frozen_storage_C",
        "budget_used_above_h",
        "budget_used_below_h",
        "mean_kinetic_max_C",
    ):
        v = getattr(ch, key)
        if v is not None and v != getattr(defaults, key):
            d[key] = file_number(v)
    if ch.mean_kinetic_point is not None:
        d["mean_kinetic_point"] = ch.mean_kinetic_point
    return d


def plan_to_dict(plan: Plan) -> dict[str, Any]:
    """The plan as a TOML-ready dict in file units; the product is written in full (self-contained)."""
    d: dict[str, Any] = {"title": plan.title}
    if plan.notes:
        d["notes"] = plan.notes
    if plan.solver != "auto":
        d["solver"] = plan.solver
    d["product"] = product_to_dict(plan.product)
    d["start"] = {"temperature_C": file_number(plan.start_temperature_C)}
    d["steps"] = [step_to_dict(s) for s in plan.steps]
    ch = checks_to_dict(plan.checks)
    if ch:
        d["checks"] = ch
    if plan.packing is not None:
        d["packing"] = packing_to_dict(plan.packing)
    if plan.load != Load():
        d["load"] = {"model": plan.load.model}
        sp = plan.load.second_product
        if sp is not None:
            d["load"]["second_product"] = second_product_to_dict(sp)
    return d


def load_plan(path: str | os.PathLike, library=None) -> Plan:
    """Read and validate a plan file. ``library`` resolves library references (default: none)."""
    return plan_from_dict(read_toml(path), source=str(path), library=library)


def plan_from_toml(text: str, source: str = "plan", library=None) -> Plan:
    """Parse and validate plan TOML text (for uploads)."""
    return plan_from_dict(parse_toml(text, source), source=source, library=library)


def plan_to_toml(plan: Plan) -> str:
    return dump_toml(plan_to_dict(plan))


def save_plan(plan: Plan, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write a plan file atomically; refuses to replace an existing file unless ``overwrite``."""
    return write_atomic(path, plan_to_toml(plan), overwrite=overwrite)
