"""The product library: products, equipment, rules and plans as TOML files in one folder tree.

Loading validates every file; a broken file is listed by name with its reason and the good ones still
load. Saving writes atomically (temporary file and rename), never silently replaces another record and
refuses names that would leave the folder.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from procplan.errors import InvalidInputError
from procplan.files.demo import demo_library_path
from procplan.files.tomlfile import check_name, dump_toml, read_toml, write_atomic

#: The demo library shipped with procplan (an invented plant).
DEMO_LIBRARY = demo_library_path()
#: Environment variable naming the library folder the app and the command line open (default: the demo).
LIBRARY_ENV = "PROCPLAN_LIBRARY"
#: Saved measurements of one product in one machine on one day, each under its own numbered name.
MAX_MEASUREMENTS_PER_DAY = 999


@dataclass(frozen=True)
class FileProblem:
    """A library file that could not be loaded, and why."""

    path: str
    reason: str


@dataclass
class Library:
    """Everything loaded from one library folder."""

    root: Path
    products: dict[str, Any] = field(default_factory=dict)
    equipment: dict[str, Any] = field(default_factory=dict)
    rules: dict[str, Any] = field(default_factory=dict)
    plans: dict[str, Path] = field(default_factory=dict)
    measurements: list[dict[str, Any]] = field(default_factory=list)
    problems: list[FileProblem] = field(default_factory=list)

    def measured_h(self, product: str, equipment: str, settings: dict[str, float]) -> dict[str, Any] | None:
        """The newest measured h of this product in this machine at these settings, or None.

        Settings match when every setting stored with the measurement agrees within 1 % (or 0.1 in the
        setting's unit, whichever is larger); a measurement at other settings does not apply.
        """
        best = None
        for m in self.measurements:
            if m["product"] != product or m.get("equipment") != equipment:
                continue
            ms = m.get("settings", {})
            if all(k in settings and abs(settings[k] - v) <= max(0.01 * abs(v), 0.1) for k, v in ms.items()):
                if best is None or m["date"] > best["date"]:
                    best = m
        return best

    def plan(self, name: str):
        """Load one of the library's plans by name (resolving its library references)."""
        from procplan.files.plan import load_plan

        if name not in self.plans:
            raise InvalidInputError("plan", name, "one of " + ", ".join(sorted(self.plans)))
        return load_plan(self.plans[name], library=self)


def _parsers() -> dict[str, Callable[[dict, str], Any]]:
    from procplan.files.machines import equipment_from_dict
    from procplan.files.product import product_from_dict
    from procplan.files.rules import rule_from_dict

    return {
        "products": lambda d, src: product_from_dict(d, src, prefix=""),
        "equipment": equipment_from_dict,
        "rules": rule_from_dict,
    }


def load_library(path: str | os.PathLike | None = None) -> Library:
    """Load and validate a library folder (default: the demo library).

    Each of ``products/``, ``equipment/``, ``rules/`` holds one ``NAME.toml`` per record; the record's
    name is the file's stem. ``plans/`` holds plan files, validated against the loaded records.
    """
    root = Path(path) if path is not None else DEMO_LIBRARY
    if not root.is_dir():
        raise InvalidInputError(
            "library", str(root), "an existing folder with products/, equipment/, rules/, plans/"
        )
    lib = Library(root=root)
    parsers = _parsers()
    for kind in ("products", "equipment", "rules"):
        target = getattr(lib, kind)
        for f in sorted((root / kind).glob("*.toml")):
            try:
                check_name(f"{kind} file name", f.stem)
                data = read_toml(f)
                key = "id" if kind == "equipment" else "name"
                data.setdefault(key, f.stem)
                if data[key] != f.stem:
                    raise InvalidInputError(f"{f.name}: {key}", data[key], f"the file's stem {f.stem!r}")
                target[f.stem] = parsers[kind](data, str(f))
            except InvalidInputError as exc:
                lib.problems.append(FileProblem(str(f), str(exc)))
    for f in sorted((root / "measurements").glob("*.toml")):
        try:
            lib.measurements.append(measurement_from_dict(read_toml(f), str(f), lib))
        except InvalidInputError as exc:
            lib.problems.append(FileProblem(str(f), str(exc)))
    from procplan.files.plan import plan_from_dict

    for f in sorted((root / "plans").glob("*.toml")):
        try:
            plan_from_dict(read_toml(f), source=str(f), library=lib)
            lib.plans[f.stem] = f
        except InvalidInputError as exc:
            lib.problems.append(FileProblem(str(f), str(exc)))
    return lib


def _save(root: str | os.PathLike, kind: str, name: str, data: dict[str, Any], overwrite: bool) -> Path:
    check_name(f"{kind[:-1] if kind != 'equipment' else kind}.name", name)
    folder = Path(root) / kind
    target = (folder / f"{name}.toml").resolve()
    if folder.resolve() not in target.parents:
        raise InvalidInputError("name", name, "a name inside the library folder")
    return write_atomic(target, dump_toml(data), overwrite=overwrite)


def save_product(root: str | os.PathLike, product, *, overwrite: bool = False) -> Path:
    """Save a product as ``products/NAME.toml`` atomically; an existing product is kept unless ``overwrite``."""
    from procplan.files.product import product_from_dict, product_to_dict

    data = product_to_dict(product)
    data.pop("library", None)
    product_from_dict(data, "product", prefix="")  # what is written must load again
    return _save(root, "products", product.name, data, overwrite)


def save_rule(root: str | os.PathLike, rule, *, overwrite: bool = False) -> Path:
    """Save a rule as ``rules/NAME.toml`` atomically; an existing rule is kept unless ``overwrite``."""
    from procplan.files.rules import rule_from_dict, rule_to_dict

    data = rule_to_dict(rule)
    rule_from_dict(data, "rule")  # what is written must load again
    return _save(root, "rules", rule.name, data, overwrite)


def save_equipment(root: str | os.PathLike, equipment, *, overwrite: bool = False) -> Path:
    """Save a machine as ``equipment/ID.toml`` atomically; an existing machine is kept unless ``overwrite``."""
    from procplan.files.machines import equipment_from_dict, equipment_to_dict

    data = equipment_to_dict(equipment)
    equipment_from_dict(data, "equipment")
    return _save(root, "equipment", equipment.id, data, overwrite)


def measurement_from_dict(
    data: dict[str, Any], source: str = "measurement", library: Library | None = None
) -> dict[str, Any]:
    """Validate a measured-h record (as made by :func:`procplan.studies.calibrate.fitted_h_record`)."""
    import datetime as _dt

    from procplan import validate
    from procplan.errors import Collector

    c = Collector(source)
    if data.get("quantity") != "h_W_m2K":
        c.add(InvalidInputError("quantity", data.get("quantity"), "'h_W_m2K'"))
    with c.catch():
        validate.number(
            "value", data.get("value"), minimum=0.0, min_inclusive=False, maximum=1e5, unit="W/m²K"
        )
    product = data.get("product")
    if library is not None and (not isinstance(product, str) or product not in library.products):
        c.add(InvalidInputError("product", product, "a product of the library"))
    equipment = data.get("equipment")
    if (
        library is not None
        and equipment is not None
        and (not isinstance(equipment, str) or equipment not in library.equipment)
    ):
        c.add(InvalidInputError("equipment", equipment, "a machine of the library"))
    try:
        _dt.date.fromisoformat(str(data.get("date")))
    except ValueError:
        c.add(InvalidInputError("date", data.get("date"), "an ISO date YYYY-MM-DD"))
    settings = data.get("settings", {})
    if not isinstance(settings, dict) or not all(
        isinstance(v, (int, float)) and not isinstance(v, bool) for v in settings.values()
    ):
        c.add(InvalidInputError("settings", settings, "a table of numeric machine settings"))
    c.raise_if_any()
    return dict(data)


def save_measurement(root: str | os.PathLike, record: dict[str, Any], *, overwrite: bool = False) -> Path:
    """Save a measured-h record as ``measurements/PRODUCT--MACHINE--DATE[-N].toml`` atomically. A plan step in
    that machine at those settings then uses it.

    Several trials of one product in one machine on one day each keep their own file: the first is
    ``…--DATE.toml``, the next ``…--DATE-2.toml`` and so on. With ``overwrite`` the first name is replaced.
    The product and machine parts are shortened so that the name stays a valid library name.
    """
    lib = load_library(root)
    rec = measurement_from_dict(record, "measurement", lib)
    data = {k: v for k, v in rec.items() if v is not None}
    base = f"{rec['product'][:24]}--{(rec.get('equipment') or 'any')[:20]}--{rec['date']}"
    if overwrite:
        return _save(root, "measurements", base, data, overwrite=True)
    for n in range(1, MAX_MEASUREMENTS_PER_DAY + 1):
        name = base if n == 1 else f"{base}-{n}"
        if (Path(root) / "measurements" / f"{name}.toml").exists():
            continue
        try:
            return _save(root, "measurements", name, data, overwrite=False)
        except InvalidInputError as exc:  # another save took this name meanwhile
            if exc.value != "exists":
                raise
    raise InvalidInputError(
        "measurement",
        base,
        f"at most {MAX_MEASUREMENTS_PER_DAY} measurements of one product and machine a day",
    )
