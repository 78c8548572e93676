"""The plan: a product, its starting state, ordered process steps and the checks to apply.

Plan files are TOML and speak the user's units (mm, min, °C); the dataclasses here hold SI values
(metres, seconds, °C). :func:`plan_from_dict` validates a whole file and reports every problem, each
naming its field, value and allowed range; :func:`plan_to_dict` writes it back so that
``plan_from_dict(plan_to_dict(p)) == p``.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.tomlfile import dump_toml, read_toml, write_atomic
from procplan.geometry import SHAPES, Geometry, geometry_from_mm
from procplan.properties.table import MODEL_RANGE_C, PropertyTable
from procplan.surface.layers import PackagingLayer, packaging_from_dicts, packaging_to_dicts

T_LO, T_HI = MODEL_RANGE_C
#: Longest step accepted [min] (a week): beyond this the unit is almost surely wrong.
MAX_STEP_MIN = 7 * 24 * 60.0
#: Duration used for a step that only gives a stop condition [min].
DEFAULT_STOP_CAP_MIN = 72 * 60.0
SOLVERS = ("auto", "exact", "finite-volume")
POINTS = ("core", "surface", "mean")
FOOD_CATEGORIES = ("meat", "fruit-vegetable", "juice", "other")
DIMENSION_KEYS = ("thickness_mm", "diameter_mm", "length_mm", "width_mm", "height_mm")


def _freeze(d: Mapping[str, Any] | None) -> tuple[tuple[str, Any], ...]:
    return tuple(sorted((d or {}).items()))


@dataclass(frozen=True)
class FixedProperties:
    """Measured constant properties that replace the composition model."""

    k_W_mK: float
    rho_kg_m3: float
    cp_J_kgK: float
    latent_J_kg: float = 0.0
    freezing_C: float | None = None
    frozen_k_W_mK: float | None = None
    frozen_cp_J_kgK: float | None = None


@dataclass(frozen=True)
class Product:
    """A product: name, shape and size, and either a composition or measured properties."""

    name: str
    geometry: Geometry
    composition: tuple[tuple[str, float], ...] = ()
    fixed_properties: FixedProperties | None = None
    freezing_C: float | None = None
    category: str = "meat"
    conductivity_model: str = "parallel"
    packaging: tuple[PackagingLayer, ...] = ()
    unwrapped: bool = False
    description: str = ""
    library: str | None = None
    porosity: float = 0.0

    @property
    def composition_dict(self) -> dict[str, float]:
        return dict(self.composition)

    def property_table(self):
        """The product's PropertyTable (composition model, or measured constants)."""
        from procplan.properties import property_table

        if self.fixed_properties is not None:
            fp = self.fixed_properties
            return PropertyTable.constant(
                fp.k_W_mK,
                fp.rho_kg_m3,
                fp.cp_J_kgK,
                latent_J_kg=fp.latent_J_kg,
                freezing_C=fp.freezing_C,
                frozen_k_W_mK=fp.frozen_k_W_mK,
                frozen_cp_J_kgK=fp.frozen_cp_J_kgK,
            )
        from procplan.properties import Composition

        comp = Composition.from_mapping(self.composition_dict)
        return property_table(
            comp,
            freezing_C=self.freezing_C,
            conductivity_model=self.conductivity_model,
            category=self.category,
            porosity=self.porosity,
        )


@dataclass(frozen=True)
class Target:
    """A temperature to reach at a monitored point during a step."""

    temperature_C: float
    point: str = "core"


@dataclass(frozen=True)
class Step:
    """One process step. The surface is either a given h with a medium temperature (constant or a
    time profile), or a machine from the equipment library with its settings (constant, or a profile)."""

    name: str
    duration_s: float
    stop_when_core_C: float | None = None
    medium_C: float | None = None
    medium_profile: tuple[tuple[float, float], ...] = ()  # (time_s, temperature_C)
    h_W_m2K: float | None = None
    equipment: str | None = None
    settings: tuple[tuple[str, Any], ...] = ()
    settings_profile: tuple[tuple[float, tuple[tuple[str, Any], ...]], ...] = ()  # (time_s, settings)
    emissivity: float | None = None
    surroundings_C: float | None = None
    targets: tuple[Target, ...] = ()
    duration_given: bool = True

    @property
    def settings_dict(self) -> dict[str, Any]:
        return dict(self.settings)


@dataclass(frozen=True)
class LethalityCheck:
    """A lethality requirement: a preset by name, or reference temperature, z and required F."""

    preset: str | None = None
    reference_C: float | None = None
    z_C: float | None = None
    required_F_min: float | None = None
    d_value_min: float | None = None
    point: str = "core"


@dataclass(frozen=True)
class Checks:
    """What the result is judged against, and batch data for energy."""

    cooling_rule: str | None = None
    lethality: LethalityCheck | None = None
    margin_percent: float = 0.0
    margin_min: float = 0.0
    pieces_per_batch: int = 1
    cop_fraction: float = 0.5
    energy_price_per_kWh: float | None = None
    frozen_storage_C: float = -18.0


@dataclass(frozen=True)
class Plan:
    """A whole plan: the unit every engine run, study and sheet starts from."""

    title: str
    product: Product
    start_temperature_C: float
    steps: tuple[Step, ...]
    checks: Checks = field(default_factory=Checks)
    solver: str = "auto"
    notes: str = ""

    def with_step(self, index: int, **changes: Any) -> Plan:
        """A copy with one step changed (used by studies)."""
        steps = list(self.steps)
        steps[index] = replace(steps[index], **changes)
        return replace(self, steps=tuple(steps))


# --------------------------------------------------------------------------------------------
# parsing


def _get(c: Collector, data: Mapping[str, Any], key: str, prefix: str, fn, *args, default=None, **kw):
    if key not in data or data[key] is None:
        return default
    with c.catch():
        return fn(f"{prefix}{key}", data[key], *args, **kw)
    return default


def _temperature(field_name: str, v: Any) -> float:
    return validate.number(field_name, v, minimum=T_LO, maximum=T_HI, unit="°C")


#: Medium temperatures accepted [°C]: ovens run above the product-property range, which bounds the product only.
MEDIUM_RANGE_C = (-80.0, 300.0)


def _medium_temperature(field_name: str, v: Any) -> float:
    return validate.number(field_name, v, minimum=MEDIUM_RANGE_C[0], maximum=MEDIUM_RANGE_C[1], unit="°C")


def _check_keys(c: Collector, data: Mapping[str, Any], allowed: tuple[str, ...], prefix: str) -> None:
    for k in data:
        if k not in allowed:
            c.add(
                InvalidInputError(
                    f"{prefix}{k}", data[k], "one of the keys " + ", ".join(allowed), "unknown key"
                )
            )


PRODUCT_KEYS = (
    "name",
    "description",
    "library",
    "shape",
    "faces",
    *DIMENSION_KEYS,
    "composition",
    "fixed_properties",
    "freezing_C",
    "category",
    "conductivity_model",
    "packaging",
    "unwrapped",
    "porosity",
    "overrun_percent",
)


def product_from_dict(
    data: Mapping[str, Any], source: str = "product", prefix: str = "product.", base: Product | None = None
) -> Product:
    """Build a Product from a plan/library table (mm, kJ-free SI), collecting every problem.

    With ``base`` (a library product), keys in ``data`` override it.
    """
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError(prefix.rstrip("."), data, "a table of product keys")
    _check_keys(c, data, PRODUCT_KEYS, prefix)
    name = data.get("name", base.name if base else None)
    if not isinstance(name, str) or not name.strip():
        c.add(InvalidInputError(f"{prefix}name", name, "a non-empty text"))
        name = "?"
    # geometry
    geometry = base.geometry if base else None
    if "shape" in data or any(k in data for k in DIMENSION_KEYS) or geometry is None:
        shape = data.get("shape", geometry.shape if geometry else None)
        if shape not in SHAPES:
            c.add(InvalidInputError(f"{prefix}shape", shape, "one of " + ", ".join(SHAPES)))
        else:
            dims: dict[str, Any] = {}
            if geometry is not None and shape == geometry.shape:
                for k in DIMENSION_KEYS:
                    v = getattr(geometry, k[:-3] + "_m")
                    if v is not None:
                        dims[k] = v * 1000.0
            for k in DIMENSION_KEYS:
                if k in data:
                    dims[k] = data[k]
            faces = data.get("faces", geometry.faces if geometry else 2)
            with c.catch():
                geometry = geometry_from_mm(shape, faces=faces, **dims)
    # properties
    comp: tuple[tuple[str, float], ...] = base.composition if base else ()
    fixed = base.fixed_properties if base else None
    if "composition" in data and "fixed_properties" in data:
        c.add(
            InvalidInputError(
                f"{prefix}fixed_properties", "both given", "either composition or fixed_properties, not both"
            )
        )
    if "composition" in data:
        raw = data["composition"]
        if not isinstance(raw, Mapping):
            c.add(InvalidInputError(f"{prefix}composition", raw, "a table of mass fractions"))
        else:
            with c.catch():
                from procplan.properties import Composition

                comp = tuple(
                    sorted(
                        Composition.from_mapping(raw, field_prefix=f"{prefix}composition").to_dict().items()
                    )
                )
                fixed = None
    if "fixed_properties" in data:
        fp = data["fixed_properties"]
        if not isinstance(fp, Mapping):
            c.add(
                InvalidInputError(f"{prefix}fixed_properties", fp, "a table with k_W_mK, rho_kg_m3, cp_J_kgK")
            )
        else:
            fpp = f"{prefix}fixed_properties."
            _check_keys(
                c,
                fp,
                (
                    "k_W_mK",
                    "rho_kg_m3",
                    "cp_J_kgK",
                    "latent_J_kg",
                    "freezing_C",
                    "frozen_k_W_mK",
                    "frozen_cp_J_kgK",
                ),
                fpp,
            )
            vals = {}
            for key, unit in (("k_W_mK", "W/mK"), ("rho_kg_m3", "kg/m³"), ("cp_J_kgK", "J/kgK")):
                if key not in fp:
                    c.add(InvalidInputError(fpp + key, None, f"> 0 {unit}", "required"))
                vals[key] = _get(c, fp, key, fpp, validate.positive, unit)
            vals["latent_J_kg"] = _get(
                c,
                fp,
                "latent_J_kg",
                fpp,
                validate.number,
                minimum=0.0,
                maximum=400e3,
                unit="J/kg",
                default=0.0,
            )
            vals["freezing_C"] = _get(c, fp, "freezing_C", fpp, _temperature)
            vals["frozen_k_W_mK"] = _get(c, fp, "frozen_k_W_mK", fpp, validate.positive, "W/mK")
            vals["frozen_cp_J_kgK"] = _get(c, fp, "frozen_cp_J_kgK", fpp, validate.positive, "J/kgK")
            if vals["latent_J_kg"] and vals["freezing_C"] is None:
                c.add(
                    InvalidInputError(
                        fpp + "freezing_C", None, "a temperature in °C", "required when latent_J_kg > 0"
                    )
                )
            if all(vals[k] is not None for k in ("k_W_mK", "rho_kg_m3", "cp_J_kgK")):
                fixed = FixedProperties(**vals)
                comp = ()
    if not comp and fixed is None and "composition" not in data and "fixed_properties" not in data:
        c.add(
            InvalidInputError(
                f"{prefix}composition",
                None,
                "a [composition] table or a [fixed_properties] table",
                "the product needs one",
            )
        )
    freezing_C = _get(c, data, "freezing_C", prefix, _temperature, default=base.freezing_C if base else None)
    category = data.get("category", base.category if base else "meat")
    with c.catch():
        validate.choice(f"{prefix}category", category, FOOD_CATEGORIES)
    if category == "other" and comp and freezing_C is None:
        c.add(
            InvalidInputError(
                f"{prefix}freezing_C",
                None,
                f"a measured initial freezing point in [{T_LO:g}, {T_HI:g}] °C",
                "the published freezing-point correlations cover meat, fruit-vegetable and juice only; "
                "for category 'other' give freezing_C",
            )
        )
    cond_model = data.get("conductivity_model", base.conductivity_model if base else "parallel")
    with c.catch():
        from procplan.properties import CONDUCTIVITY_MODELS

        validate.choice(f"{prefix}conductivity_model", cond_model, CONDUCTIVITY_MODELS)
    packaging = base.packaging if base else ()
    if "packaging" in data:
        with c.catch():
            packaging = packaging_from_dicts(data["packaging"], source, field_prefix=prefix)
    unwrapped = data.get("unwrapped", base.unwrapped if base else False)
    if not isinstance(unwrapped, bool):
        c.add(InvalidInputError(f"{prefix}unwrapped", unwrapped, "true or false"))
        unwrapped = False
    if unwrapped and packaging:
        c.add(InvalidInputError(f"{prefix}unwrapped", True, "false when packaging layers are given"))
    description = str(data.get("description", base.description if base else ""))
    library = data.get("library", base.library if base else None)
    porosity = base.porosity if base and "fixed_properties" not in data else 0.0
    with c.catch():
        porosity = _porosity(data, prefix, porosity, fixed is not None)
    c.raise_if_any()
    return Product(
        name=name,
        geometry=geometry,
        composition=comp,
        fixed_properties=fixed,
        freezing_C=freezing_C,
        category=category,
        conductivity_model=cond_model,
        packaging=packaging,
        unwrapped=unwrapped,
        description=description,
        library=library,
        porosity=porosity,
    )


def _porosity(data: Mapping[str, Any], prefix: str, default: float, fixed: bool) -> float:
    """Air volume fraction from ``porosity`` or ``overrun_percent`` (one of them), else ``default``."""
    from procplan.properties.porosity import OVERRUN_RANGE_PERCENT, check_porosity, porosity_from_overrun

    if "porosity" in data and "overrun_percent" in data:
        raise InvalidInputError(
            f"{prefix}overrun_percent", "both given", "either porosity or overrun_percent"
        )
    if "overrun_percent" in data:
        lo, hi = OVERRUN_RANGE_PERCENT
        value = validate.number(
            f"{prefix}overrun_percent", data["overrun_percent"], minimum=lo, maximum=hi, unit="%"
        )
        porosity = float(porosity_from_overrun(value))
    else:
        porosity = check_porosity(data.get("porosity", default), f"{prefix}porosity")
    if porosity > 0.0 and fixed:
        raise InvalidInputError(
            f"{prefix}porosity",
            porosity,
            "0 with fixed_properties",
            "measured properties already include the air",
        )
    return porosity


STEP_KEYS = (
    "name",
    "duration_min",
    "stop_when_core_C",
    "medium_C",
    "medium_profile",
    "h_W_m2K",
    "equipment",
    "settings",
    "settings_profile",
    "emissivity",
    "surroundings_C",
    "targets",
)


def step_from_dict(data: Mapping[str, Any], index: int, source: str = "plan") -> Step:
    """Build one Step from a ``[[steps]]`` table (minutes, °C), collecting every problem."""
    p = f"steps[{index}]."
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError(p.rstrip("."), data, "a table of step keys")
    _check_keys(c, data, STEP_KEYS, p)
    name = data.get("name")
    if not isinstance(name, str) or not name.strip():
        c.add(InvalidInputError(p + "name", name, "a non-empty text"))
        name = f"step {index + 1}"
    duration_min = _get(
        c,
        data,
        "duration_min",
        p,
        validate.number,
        minimum=0.0,
        min_inclusive=False,
        maximum=MAX_STEP_MIN,
        unit="min",
    )
    stop = _get(c, data, "stop_when_core_C", p, _temperature)
    if "duration_min" not in data and "stop_when_core_C" not in data:
        c.add(
            InvalidInputError(
                p + "duration_min",
                None,
                f"(0, {MAX_STEP_MIN:g}] min",
                "a step needs a duration_min or a stop_when_core_C",
            )
        )
    duration_given = "duration_min" in data
    duration_s = (duration_min if duration_min is not None else DEFAULT_STOP_CAP_MIN) * 60.0
    medium_C = _get(c, data, "medium_C", p, _medium_temperature)
    profile: tuple[tuple[float, float], ...] = ()
    if "medium_profile" in data:
        profile = _profile(c, data["medium_profile"], p + "medium_profile", duration_s)
    h = _get(
        c, data, "h_W_m2K", p, validate.number, minimum=0.0, min_inclusive=False, maximum=1e5, unit="W/m²K"
    )
    equipment = data.get("equipment")
    settings = data.get("settings", {})
    if not isinstance(settings, Mapping):
        c.add(
            InvalidInputError(p + "settings", settings, "a table such as { air_C = -4, air_speed_m_s = 3 }")
        )
        settings = {}
    for k, v in settings.items():
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            c.add(InvalidInputError(f"{p}settings.{k}", v, "a number"))
    settings_profile: list[tuple[float, tuple[tuple[str, Any], ...]]] = []
    if "settings_profile" in data:
        raw = data["settings_profile"]
        if not isinstance(raw, list) or not raw:
            c.add(
                InvalidInputError(
                    p + "settings_profile", raw, "a list of tables { time_min = ..., <setting> = ... }"
                )
            )
        else:
            last = -1.0
            for i, row in enumerate(raw):
                rp = f"{p}settings_profile[{i}]."
                if not isinstance(row, Mapping) or "time_min" not in row:
                    c.add(InvalidInputError(rp.rstrip("."), row, "a table with time_min and settings"))
                    continue
                t = _get(
                    c,
                    row,
                    "time_min",
                    rp,
                    validate.number,
                    minimum=0.0,
                    maximum=duration_s / 60.0,
                    unit="min",
                )
                if t is None:
                    continue
                if t <= last:
                    c.add(
                        InvalidInputError(
                            rp + "time_min", t, f"> {last:g} min", "profile times must increase"
                        )
                    )
                last = t
                settings_profile.append(
                    (t * 60.0, _freeze({k: v for k, v in row.items() if k != "time_min"}))
                )
    if equipment is not None:
        if not isinstance(equipment, str) or not equipment:
            c.add(
                InvalidInputError(
                    p + "equipment", equipment, "the name of a machine in the equipment library"
                )
            )
        if h is not None or medium_C is not None:
            c.add(
                InvalidInputError(
                    p + "equipment",
                    equipment,
                    "either equipment with settings, or h_W_m2K with medium_C / medium_profile",
                    "not both",
                )
            )
    else:
        if settings or settings_profile:
            c.add(InvalidInputError(p + "settings", dict(settings), "settings only with an equipment name"))
        if h is None and "h_W_m2K" not in data:
            c.add(
                InvalidInputError(
                    p + "h_W_m2K",
                    None,
                    "> 0 W/m²K",
                    "a step needs h_W_m2K with a medium temperature, or equipment",
                )
            )
        if medium_C is None and not profile and "medium_C" not in data:
            c.add(
                InvalidInputError(
                    p + "medium_C",
                    None,
                    f"[{MEDIUM_RANGE_C[0]:g}, {MEDIUM_RANGE_C[1]:g}] °C",
                    "a step needs medium_C or medium_profile",
                )
            )
        if medium_C is not None and profile:
            c.add(
                InvalidInputError(
                    p + "medium_profile", "given with medium_C", "medium_C or medium_profile, not both"
                )
            )
    emissivity = _get(c, data, "emissivity", p, validate.fraction)
    surroundings = _get(c, data, "surroundings_C", p, _medium_temperature)
    targets = []
    raw_targets = data.get("targets", [])
    if not isinstance(raw_targets, list):
        c.add(
            InvalidInputError(p + "targets", raw_targets, "a list of { point = 'core', temperature_C = ... }")
        )
        raw_targets = []
    for i, t in enumerate(raw_targets):
        tp = f"{p}targets[{i}]."
        if not isinstance(t, Mapping) or "temperature_C" not in t:
            c.add(InvalidInputError(tp.rstrip("."), t, "a table with temperature_C and optional point"))
            continue
        temp = _get(c, t, "temperature_C", tp, _temperature)
        point = t.get("point", "core")
        with c.catch():
            validate.choice(tp + "point", point, POINTS)
            if temp is not None:
                targets.append(Target(temp, point))
    c.raise_if_any()
    return Step(
        name=name,
        duration_s=duration_s,
        stop_when_core_C=stop,
        medium_C=medium_C,
        medium_profile=profile,
        h_W_m2K=h,
        equipment=equipment,
        settings=_freeze(settings),
        settings_profile=tuple(settings_profile),
        emissivity=emissivity,
        surroundings_C=surroundings,
        targets=tuple(targets),
        duration_given=duration_given,
    )


def _profile(c: Collector, raw: Any, field_name: str, duration_s: float) -> tuple[tuple[float, float], ...]:
    """A [[time_min, temperature_C], ...] list that starts at 0 and covers the whole step."""
    if not isinstance(raw, list) or len(raw) < 1:
        c.add(
            InvalidInputError(field_name, raw, "a list of [time_min, temperature_C] pairs starting at time 0")
        )
        return ()
    pts = []
    for i, pair in enumerate(raw):
        if not isinstance(pair, list) or len(pair) != 2:
            c.add(InvalidInputError(f"{field_name}[{i}]", pair, "a pair [time_min, temperature_C]"))
            return ()
        with c.catch():
            t = validate.number(
                f"{field_name}[{i}] time", pair[0], minimum=0.0, maximum=MAX_STEP_MIN, unit="min"
            )
            v = _medium_temperature(f"{field_name}[{i}] temperature", pair[1])
            pts.append((t * 60.0, v))
    if len(pts) != len(raw):
        return ()
    with c.catch():
        validate.increasing(f"{field_name} times", [t for t, _ in pts], unit="s")
    if pts and pts[0][0] != 0.0:
        c.add(
            InvalidInputError(
                f"{field_name}[0] time",
                pts[0][0] / 60.0,
                "0 min",
                "the profile must start at the step's start",
            )
        )
    return tuple(pts)


CHECK_KEYS = (
    "cooling_rule",
    "lethality",
    "margin_percent",
    "margin_min",
    "pieces_per_batch",
    "cop_fraction",
    "energy_price_per_kWh",
    "frozen_storage_C",
)


def checks_from_dict(data: Mapping[str, Any], source: str = "plan") -> Checks:
    p = "checks."
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError("checks", data, "a table")
    _check_keys(c, data, CHECK_KEYS, p)
    rule = data.get("cooling_rule")
    if rule is not None and not isinstance(rule, str):
        c.add(InvalidInputError(p + "cooling_rule", rule, "the name of a rule in the rule library"))
    leth = None
    if "lethality" in data:
        raw = data["lethality"]
        lp = p + "lethality."
        if isinstance(raw, str):
            leth = LethalityCheck(preset=raw)
        elif isinstance(raw, Mapping):
            _check_keys(
                c, raw, ("preset", "reference_C", "z_C", "required_F_min", "d_value_min", "point"), lp
            )
            point = raw.get("point", "core")
            with c.catch():
                validate.choice(lp + "point", point, POINTS)
            leth = LethalityCheck(
                preset=raw.get("preset"),
                reference_C=_get(c, raw, "reference_C", lp, _temperature),
                z_C=_get(
                    c,
                    raw,
                    "z_C",
                    lp,
                    validate.number,
                    minimum=0.0,
                    min_inclusive=False,
                    maximum=200.0,
                    unit="°C",
                ),
                required_F_min=_get(
                    c,
                    raw,
                    "required_F_min",
                    lp,
                    validate.number,
                    minimum=0.0,
                    min_inclusive=False,
                    unit="min",
                ),
                d_value_min=_get(c, raw, "d_value_min", lp, validate.positive, "min"),
                point=point,
            )
            if leth.preset is None and (leth.reference_C is None or leth.z_C is None):
                c.add(
                    InvalidInputError(
                        lp + "z_C",
                        leth.z_C,
                        "> 0 °C",
                        "a lethality check needs a preset or reference_C and z_C",
                    )
                )
        else:
            c.add(
                InvalidInputError(
                    p + "lethality", raw, "a preset name or a table with reference_C, z_C, required_F_min"
                )
            )
    ppb = data.get("pieces_per_batch", 1)
    if isinstance(ppb, bool) or not isinstance(ppb, int) or not (1 <= ppb <= 10_000_000):
        c.add(InvalidInputError(p + "pieces_per_batch", ppb, "a whole number from 1 to 10 000 000"))
        ppb = 1
    checks = Checks(
        cooling_rule=rule,
        lethality=leth,
        margin_percent=_get(
            c, data, "margin_percent", p, validate.number, minimum=0.0, maximum=500.0, unit="%", default=0.0
        ),
        margin_min=_get(
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
        cop_fraction=_get(
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
        energy_price_per_kWh=_get(
            c, data, "energy_price_per_kWh", p, validate.number, minimum=0.0, maximum=100.0
        ),
        frozen_storage_C=_get(c, data, "frozen_storage_C", p, _temperature, default=-18.0),
    )
    c.raise_if_any()
    return checks


PLAN_KEYS = ("title", "notes", "solver", "product", "start", "steps", "checks")


def plan_from_dict(data: Mapping[str, Any], source: str = "plan", library=None) -> Plan:
    """Build and validate a Plan from a parsed plan file; every problem is reported at once.

    ``library`` (a :class:`procplan.files.library.Library`) resolves ``product.library`` references and
    checks equipment names and settings.
    """
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError(source, data, "a TOML table")
    _check_keys(c, data, PLAN_KEYS, "")
    title = data.get("title", "untitled plan")
    if not isinstance(title, str):
        c.add(InvalidInputError("title", title, "a text"))
        title = str(title)
    solver = data.get("solver", "auto")
    with c.catch():
        validate.choice("solver", solver, SOLVERS)
    product = None
    raw_product = data.get("product")
    if not isinstance(raw_product, Mapping):
        c.add(InvalidInputError("product", raw_product, "a [product] table"))
    else:
        base = None
        ref = raw_product.get("library")
        if ref is not None:
            if library is None:
                c.add(InvalidInputError("product.library", ref, "a product name, with a library loaded"))
            elif ref not in library.products:
                c.add(
                    InvalidInputError("product.library", ref, "one of " + ", ".join(sorted(library.products)))
                )
            else:
                base = library.products[ref]
        if ref is None or base is not None:
            with c.catch():
                product = product_from_dict(raw_product, source, base=base)
    start = data.get("start")
    t0 = None
    if not isinstance(start, Mapping) or "temperature_C" not in start:
        c.add(
            InvalidInputError(
                "start.temperature_C",
                None,
                f"[{T_LO:g}, {T_HI:g}] °C",
                "a [start] table with temperature_C is required",
            )
        )
    else:
        _check_keys(c, start, ("temperature_C",), "start.")
        t0 = _get(c, start, "temperature_C", "start.", _temperature)
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
    checks = Checks()
    if "checks" in data:
        with c.catch():
            checks = checks_from_dict(data["checks"], source)
    if library is not None and checks.cooling_rule is not None and checks.cooling_rule not in library.rules:
        c.add(
            InvalidInputError(
                "checks.cooling_rule", checks.cooling_rule, "one of " + ", ".join(sorted(library.rules))
            )
        )
    if checks.lethality is not None and checks.lethality.preset is not None:
        with c.catch():
            from procplan.outcomes import LETHALITY_PRESETS

            validate.choice("checks.lethality.preset", checks.lethality.preset, LETHALITY_PRESETS)
    notes = str(data.get("notes", ""))
    c.raise_if_any()
    return Plan(
        title=title,
        product=product,
        start_temperature_C=t0,
        steps=tuple(steps),
        checks=checks,
        solver=solver,
        notes=notes,
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


# --------------------------------------------------------------------------------------------
# writing


def _inverse(value_si: float, to_si) -> float | int:
    """The file value x with ``to_si(x) == value_si`` exactly (searching the neighbouring floats), so that
    unit conversion at the edge never changes a saved value."""
    import math

    x = _num(value_si / to_si(1.0)) if to_si(1.0) != 0 else value_si
    if to_si(x) == value_si:
        return x
    x = float(x)
    for direction in (math.inf, -math.inf):
        y = x
        for _ in range(8):
            y = math.nextafter(y, direction)
            if to_si(y) == value_si:
                return y
    return x


def _mm(value_m: float) -> float | int:
    return _inverse(value_m, lambda x: x / 1000.0)


def _minutes(value_s: float) -> float | int:
    return _inverse(value_s, lambda x: x * 60.0)


def _num(x: float) -> float | int:
    """Round-trip-safe number for TOML: integers stay integers, floats keep their full repr."""
    return int(x) if float(x).is_integer() and abs(x) < 2**53 else float(x)


def product_to_dict(p: Product) -> dict[str, Any]:
    g = p.geometry
    d: dict[str, Any] = {"name": p.name}
    if p.library:
        d["library"] = p.library
    if p.description:
        d["description"] = p.description
    d["shape"] = g.shape
    if g.faces != 2:
        d["faces"] = g.faces
    for k in DIMENSION_KEYS:
        v = getattr(g, k[:-3] + "_m")
        if v is not None:
            d[k] = _mm(v)
    d["category"] = p.category
    if p.conductivity_model != "parallel":
        d["conductivity_model"] = p.conductivity_model
    if p.freezing_C is not None:
        d["freezing_C"] = _num(p.freezing_C)
    if p.unwrapped:
        d["unwrapped"] = True
    if p.porosity:
        d["porosity"] = _num(p.porosity)
    if p.composition:
        d["composition"] = {k: _num(v) for k, v in p.composition}
    if p.fixed_properties is not None:
        fp = p.fixed_properties
        d["fixed_properties"] = {k: _num(v) for k, v in vars(fp).items() if v is not None}
    if p.packaging:
        d["packaging"] = packaging_to_dicts(p.packaging)
    return d


def step_to_dict(s: Step) -> dict[str, Any]:
    d: dict[str, Any] = {"name": s.name}
    if s.duration_given:
        d["duration_min"] = _minutes(s.duration_s)
    if s.stop_when_core_C is not None:
        d["stop_when_core_C"] = _num(s.stop_when_core_C)
    if s.equipment is not None:
        d["equipment"] = s.equipment
        if s.settings:
            d["settings"] = {k: _num(v) for k, v in s.settings}
        if s.settings_profile:
            d["settings_profile"] = [
                {"time_min": _num(t / 60.0), **{k: _num(v) for k, v in row}} for t, row in s.settings_profile
            ]
    else:
        if s.h_W_m2K is not None:
            d["h_W_m2K"] = _num(s.h_W_m2K)
        if s.medium_C is not None:
            d["medium_C"] = _num(s.medium_C)
        if s.medium_profile:
            d["medium_profile"] = [[_minutes(t), _num(v)] for t, v in s.medium_profile]
    if s.emissivity is not None:
        d["emissivity"] = _num(s.emissivity)
    if s.surroundings_C is not None:
        d["surroundings_C"] = _num(s.surroundings_C)
    if s.targets:
        d["targets"] = [{"point": t.point, "temperature_C": _num(t.temperature_C)} for t in s.targets]
    return d


def checks_to_dict(ch: Checks) -> dict[str, Any]:
    d: dict[str, Any] = {}
    if ch.cooling_rule:
        d["cooling_rule"] = ch.cooling_rule
    if ch.lethality is not None:
        lt = {
            k: (_num(v) if isinstance(v, (int, float)) else v)
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
    ):
        v = getattr(ch, key)
        if v is not None and v != getattr(defaults, key):
            d[key] = _num(v)
    return d


def plan_to_dict(plan: Plan) -> dict[str, Any]:
    """The plan as a TOML-ready dict in file units; the product is written in full (self-contained)."""
    d: dict[str, Any] = {"title": plan.title}
    if plan.notes:
        d["notes"] = plan.notes
    if plan.solver != "auto":
        d["solver"] = plan.solver
    d["product"] = product_to_dict(plan.product)
    d["start"] = {"temperature_C": _num(plan.start_temperature_C)}
    d["steps"] = [step_to_dict(s) for s in plan.steps]
    ch = checks_to_dict(plan.checks)
    if ch:
        d["checks"] = ch
    return d


def load_plan(path: str | os.PathLike, library=None) -> Plan:
    """Read and validate a plan file. ``library`` resolves library references (default: none)."""
    return plan_from_dict(read_toml(path), source=str(path), library=library)


def plan_from_toml(text: str, source: str = "plan", library=None) -> Plan:
    """Parse and validate plan TOML text (for uploads)."""
    from procplan.files.tomlfile import parse_toml

    return plan_from_dict(parse_toml(text, source), source=source, library=library)


def plan_to_toml(plan: Plan) -> str:
    return dump_toml(plan_to_dict(plan))


def save_plan(plan: Plan, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write a plan file atomically; refuses to replace an existing file unless ``overwrite``."""
    return write_atomic(path, plan_to_toml(plan), overwrite=overwrite)
