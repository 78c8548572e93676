"""Product tables of plan and library files (mm, °C) to and from :class:`procplan.model.Product` (SI)."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.fields import (
    T_HI,
    T_LO,
    check_keys,
    file_mm,
    file_number,
    optional,
    product_temperature,
    stated_temperature,
)
from procplan.geometry import SHAPES, Geometry, geometry_from_mm
from procplan.model import DIMENSION_KEYS, FOOD_CATEGORIES, FixedProperties, Product
from procplan.surface.layers import packaging_from_dicts, packaging_to_dicts

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
    "ice_model",
    "packaging",
    "unwrapped",
    "porosity",
    "overrun_percent",
    "emissivity",
)
#: Smallest piece dimension [mm] (thickness, diameter, or any side of a brick or finite cylinder): below about
#: 1 mm a food piece is a droplet or a powder grain, whose heating is not what the plant processes, and the
#: continuum conduction model with a surface heat-transfer coefficient stops describing it.
MIN_PIECE_MM = 1.0
#: Largest ratio of the longest to the shortest side of a brick or finite cylinder: beyond about 100 the far
#: faces no longer change the centre's history, and the piece is a slab or an infinite cylinder, which the
#: solvers treat in one dimension instead of on a needlessly extreme 3-D grid.
MAX_ASPECT_RATIO = 100.0
#: Shapes whose every dimension carries heat (the others' optional lengths only give the mass).
_CONDUCTING_KEYS = {
    "slab": ("thickness_mm",),
    "cylinder": ("diameter_mm",),
    "sphere": ("diameter_mm",),
    "finite-cylinder": ("diameter_mm", "length_mm"),
    "brick": ("length_mm", "width_mm", "height_mm"),
}
FIXED_PROPERTY_KEYS = (
    "k_W_mK",
    "rho_kg_m3",
    "cp_J_kgK",
    "latent_J_kg",
    "freezing_C",
    "frozen_k_W_mK",
    "frozen_cp_J_kgK",
    "valid_min_C",
    "valid_max_C",
)


def _geometry(c: Collector, data: Mapping[str, Any], prefix: str, base: Product | None) -> Geometry | None:
    """The product's geometry: the base's, with shape, faces and dimensions from ``data`` over it."""
    geometry = base.geometry if base else None
    if not ("shape" in data or any(k in data for k in DIMENSION_KEYS) or geometry is None):
        return geometry
    shape = data.get("shape", geometry.shape if geometry else None)
    if not isinstance(shape, str) or shape not in SHAPES:
        c.add(InvalidInputError(f"{prefix}shape", shape, "one of " + ", ".join(SHAPES)))
        return geometry
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
        check_proportions(geometry, prefix)
    return geometry


def check_proportions(g: Geometry, prefix: str = "product.") -> None:
    """Refuse pieces smaller than ``MIN_PIECE_MM`` or more elongated than ``MAX_ASPECT_RATIO``, naming the
    dimension ``prefix + KEY_mm``; for every path that makes a product (files, forms, variants, samples).

    >>> from procplan.geometry import Geometry
    >>> check_proportions(Geometry("sphere", diameter_m=0.0005))
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: product.diameter_mm = 0.5: allowed >= 1 mm (a smaller piece is a droplet or powder grain, outside the conduction model)
    """
    sizes = {k: getattr(g, k[:-3] + "_m") * 1000.0 for k in _CONDUCTING_KEYS[g.shape]}
    for key, mm in sizes.items():
        if mm < MIN_PIECE_MM:
            raise InvalidInputError(
                f"{prefix}{key}",
                file_number(mm),
                f">= {MIN_PIECE_MM:g} mm",
                "a smaller piece is a droplet or powder grain, outside the conduction model",
            )
    if len(sizes) > 1:
        longest = max(sizes, key=sizes.get)
        ratio = sizes[longest] / min(sizes.values())
        if ratio > MAX_ASPECT_RATIO:
            flat = "a slab" if g.shape == "brick" else "an infinite cylinder"
            raise InvalidInputError(
                f"{prefix}{longest}",
                file_number(sizes[longest]),
                f"at most {MAX_ASPECT_RATIO:g} times the shortest side ({min(sizes.values()):g} mm)",
                f"a longer piece conducts as {flat}: describe it as one",
            )


def _composition(c: Collector, raw: Any, prefix: str) -> tuple[tuple[str, float], ...] | None:
    """The validated composition as sorted pairs, or None when it is invalid."""
    if not isinstance(raw, Mapping):
        c.add(InvalidInputError(f"{prefix}composition", raw, "a table of mass fractions"))
        return None
    with c.catch():
        from procplan.properties import Composition

        comp = Composition.from_mapping(raw, field_prefix=f"{prefix}composition")
        return tuple(sorted(comp.to_dict().items()))
    return None


def _fixed_properties(c: Collector, fp: Any, prefix: str) -> FixedProperties | None:
    """Measured constant properties from a ``[fixed_properties]`` table, or None when it is invalid."""
    if not isinstance(fp, Mapping):
        c.add(InvalidInputError(f"{prefix}fixed_properties", fp, "a table with k_W_mK, rho_kg_m3, cp_J_kgK"))
        return None
    fpp = f"{prefix}fixed_properties."
    check_keys(c, fp, FIXED_PROPERTY_KEYS, fpp)
    vals = {}
    for key, unit in (("k_W_mK", "W/mK"), ("rho_kg_m3", "kg/m³"), ("cp_J_kgK", "J/kgK")):
        if key not in fp:
            c.add(InvalidInputError(fpp + key, None, f"> 0 {unit}", "required"))
        vals[key] = optional(c, fp, key, fpp, validate.positive, unit)
    vals["latent_J_kg"] = optional(
        c, fp, "latent_J_kg", fpp, validate.number, minimum=0.0, maximum=400e3, unit="J/kg", default=0.0
    )
    lo, hi = _stated_range(c, fp, fpp, vals)
    vals["freezing_C"] = optional(c, fp, "freezing_C", fpp, stated_temperature)
    vals["frozen_k_W_mK"] = optional(c, fp, "frozen_k_W_mK", fpp, validate.positive, "W/mK")
    vals["frozen_cp_J_kgK"] = optional(c, fp, "frozen_cp_J_kgK", fpp, validate.positive, "J/kgK")
    if vals["latent_J_kg"] and vals["freezing_C"] is not None:
        # the latent heat is released over a band below freezing_C that must fit inside the stated range
        # (procplan.properties.table.PropertyTable.constant: 0.5 K band, 1 K clearance at either end)
        with c.catch():
            validate.number(
                fpp + "freezing_C", vals["freezing_C"], minimum=lo + 1.5, maximum=hi - 1.0, unit="°C"
            )
    if vals["latent_J_kg"] and vals["freezing_C"] is None:
        c.add(
            InvalidInputError(
                fpp + "freezing_C", None, "a temperature in °C", "required when latent_J_kg > 0"
            )
        )
    if all(vals[k] is not None for k in ("k_W_mK", "rho_kg_m3", "cp_J_kgK")):
        return FixedProperties(**vals)
    return None


def _stated_range(c: Collector, fp: Mapping[str, Any], fpp: str, vals: dict) -> tuple[float, float]:
    """``valid_min_C`` and ``valid_max_C`` (the range the stated properties cover) into ``vals``; returns the
    range in force (the composition model's −40…150 °C for an end not given)."""
    vals["valid_min_C"] = optional(c, fp, "valid_min_C", fpp, stated_temperature)
    vals["valid_max_C"] = optional(c, fp, "valid_max_C", fpp, stated_temperature)
    lo = T_LO if vals["valid_min_C"] is None else vals["valid_min_C"]
    hi = T_HI if vals["valid_max_C"] is None else vals["valid_max_C"]
    if not hi - lo >= 10.0:
        c.add(
            InvalidInputError(
                fpp + "valid_max_C",
                hi,
                f">= valid_min_C + 10 °C ({lo + 10.0:g} °C)",
                "the stated properties must cover a range of temperatures",
            )
        )
        vals["valid_min_C"] = vals["valid_max_C"] = None
        return T_LO, T_HI
    return lo, hi


def _properties(
    c: Collector, data: Mapping[str, Any], prefix: str, base: Product | None
) -> tuple[tuple[tuple[str, float], ...], FixedProperties | None]:
    """The composition or the measured properties (exactly one of them), the base's unless ``data`` gives one."""
    comp: tuple[tuple[str, float], ...] = base.composition if base else ()
    fixed = base.fixed_properties if base else None
    if "composition" in data and "fixed_properties" in data:
        c.add(
            InvalidInputError(
                f"{prefix}fixed_properties", "both given", "either composition or fixed_properties, not both"
            )
        )
    if "composition" in data:
        new_comp = _composition(c, data["composition"], prefix)
        if new_comp is not None:
            comp, fixed = new_comp, None
    if "fixed_properties" in data:
        new_fixed = _fixed_properties(c, data["fixed_properties"], prefix)
        if new_fixed is not None:
            comp, fixed = (), new_fixed
    if not comp and fixed is None and "composition" not in data and "fixed_properties" not in data:
        c.add(
            InvalidInputError(
                f"{prefix}composition",
                None,
                "a [composition] table or a [fixed_properties] table",
                "the product needs one",
            )
        )
    return comp, fixed


def _model_choices(
    c: Collector, data: Mapping[str, Any], prefix: str, base: Product | None, comp: tuple
) -> tuple[float | None, str, str]:
    """Freezing point, food category and conductivity model, checked against each other."""
    freezing_C = optional(
        c, data, "freezing_C", prefix, product_temperature, default=base.freezing_C if base else None
    )
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
    if comp and freezing_C is None and isinstance(category, str) and category != "other":
        _check_estimated_freezing(c, comp, category, prefix)
    cond_model = data.get("conductivity_model", base.conductivity_model if base else "parallel")
    with c.catch():
        from procplan.properties import CONDUCTIVITY_MODELS

        validate.choice(f"{prefix}conductivity_model", cond_model, CONDUCTIVITY_MODELS)
    return freezing_C, category, cond_model


def _check_estimated_freezing(c: Collector, comp: tuple, category: str, prefix: str) -> None:
    """The freezing point the property model will estimate from the water content must be in its range
    (a low-water product gives none), so that a product that validates also runs."""
    from procplan.properties import Composition, initial_freezing_point_C

    try:
        initial_freezing_point_C(Composition.from_mapping(dict(comp)), category)
    except InvalidInputError as exc:
        c.add(InvalidInputError(f"{prefix}freezing_C", None, exc.allowed, exc.detail))


def _wrapping(
    c: Collector, data: Mapping[str, Any], source: str, prefix: str, base: Product | None
) -> tuple[tuple, bool]:
    """Packaging layers and the unwrapped flag (which excludes layers)."""
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
    return packaging, unwrapped


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


def product_from_dict(
    data: Mapping[str, Any], source: str = "product", prefix: str = "product.", base: Product | None = None
) -> Product:
    """Build a Product from a plan/library table (mm, kJ-free SI), collecting every problem.

    With ``base`` (a library product), keys in ``data`` override it.
    """
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError(prefix.rstrip("."), data, "a table of product keys")
    check_keys(c, data, PRODUCT_KEYS, prefix)
    name = data.get("name", base.name if base else None)
    if not isinstance(name, str) or not name.strip():
        c.add(InvalidInputError(f"{prefix}name", name, "a non-empty text"))
        name = "?"
    geometry = _geometry(c, data, prefix, base)
    comp, fixed = _properties(c, data, prefix, base)
    freezing_C, category, cond_model = _model_choices(c, data, prefix, base, comp)
    packaging, unwrapped = _wrapping(c, data, source, prefix, base)
    description = str(data.get("description", base.description if base else ""))
    library = data.get("library", base.library if base else None)
    porosity = base.porosity if base and "fixed_properties" not in data else 0.0
    with c.catch():
        porosity = _porosity(data, prefix, porosity, fixed is not None)
    ice_model = data.get("ice_model", base.ice_model if base else "chen")
    with c.catch():
        from procplan.properties import ICE_MODELS

        validate.choice(f"{prefix}ice_model", ice_model, ICE_MODELS)
    emissivity = base.emissivity if base else None
    if data.get("emissivity") is not None:
        with c.catch():
            emissivity = validate.fraction(f"{prefix}emissivity", data["emissivity"])
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
        emissivity=emissivity,
        ice_model=ice_model,
    )


def product_freezing_C(p: Product) -> float | None:
    """The initial freezing point [°C] the property model will use for ``p``, or None when it does not freeze
    (measured properties without latent heat, or no estimate for its water content)."""
    if p.fixed_properties is not None:
        fp = p.fixed_properties
        return fp.freezing_C if fp.latent_J_kg else None
    if p.freezing_C is not None:
        return p.freezing_C
    from procplan.properties import Composition, initial_freezing_point_C

    try:
        return initial_freezing_point_C(Composition.from_mapping(p.composition_dict), p.category)
    except InvalidInputError:
        return None


def product_to_dict(p: Product) -> dict[str, Any]:
    """The product as a TOML-ready table in file units (the inverse of :func:`product_from_dict`)."""
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
            d[k] = file_mm(v)
    d["category"] = p.category
    if p.conductivity_model != "parallel":
        d["conductivity_model"] = p.conductivity_model
    if p.ice_model != "chen":
        d["ice_model"] = p.ice_model
    if p.freezing_C is not None:
        d["freezing_C"] = file_number(p.freezing_C)
    if p.unwrapped:
        d["unwrapped"] = True
    if p.porosity:
        d["porosity"] = file_number(p.porosity)
    if p.emissivity is not None:
        d["emissivity"] = file_number(p.emissivity)
    if p.composition:
        d["composition"] = {k: file_number(v) for k, v in p.composition}
    if p.fixed_properties is not None:
        fp = p.fixed_properties
        d["fixed_properties"] = {k: file_number(v) for k, v in vars(fp).items() if v is not None}
    if p.packaging:
        d["packaging"] = packaging_to_dicts(p.packaging)
    return d
