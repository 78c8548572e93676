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
from procplan.tomlio import check_name, dump_toml, read_toml, write_atomic

#: The demo library shipped with procplan (an invented plant).
DEMO_LIBRARY = Path(__file__).resolve().parent.parent / "product_library"

KINDS = ("products", "equipment", "rules", "plans")


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
    problems: list[FileProblem] = field(default_factory=list)

    def plan(self, name: str):
        """Load one of the library's plans by name (resolving its library references)."""
        from procplan.plan import load_plan

        if name not in self.plans:
            raise InvalidInputError("plan", name, "one of " + ", ".join(sorted(self.plans)))
        return load_plan(self.plans[name], library=self)


def _parsers() -> dict[str, Callable[[dict, str], Any]]:
    from procplan.equipment import equipment_from_dict
    from procplan.outcomes import rule_from_dict
    from procplan.plan import product_from_dict

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
    from procplan.plan import plan_from_dict

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
    from procplan.plan import product_from_dict, product_to_dict

    data = product_to_dict(product)
    data.pop("library", None)
    product_from_dict(data, "product", prefix="")  # what is written must load again
    return _save(root, "products", product.name, data, overwrite)


def save_equipment(root: str | os.PathLike, equipment, *, overwrite: bool = False) -> Path:
    """Save a machine as ``equipment/NAME.toml`` atomically; an existing record is kept unless ``overwrite``."""
    from procplan.equipment import equipment_from_dict, equipment_to_dict

    data = equipment_to_dict(equipment)
    equipment_from_dict(data, "equipment")
    return _save(root, "equipment", equipment.id, data, overwrite)


def save_rule(root: str | os.PathLike, rule, *, overwrite: bool = False) -> Path:
    """Save a rule as ``rules/NAME.toml`` atomically; an existing rule is kept unless ``overwrite``."""
    from procplan.outcomes import rule_from_dict, rule_to_dict

    data = rule_to_dict(rule)
    rule_from_dict(data, "rule")
    return _save(root, "rules", rule.name, data, overwrite)
