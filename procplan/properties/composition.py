"""Proximate composition of a food: mass fractions of water, protein, fat, carbohydrate, fiber and ash.

The six components are those of the Choi & Okos (1986) property model and of the composition tables in
the ASHRAE Handbook—Refrigeration, thermal properties of foods chapter (2006: ch. 9, table 3), where
"carbohydrate" is the carbohydrate *other than fiber*: a table that lists total carbohydrate including
fiber must have the fiber subtracted before it is entered here.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import InitVar, dataclass, fields
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError

#: Component names in the order used throughout ``procplan.properties``.
COMPONENT_NAMES: tuple[str, ...] = ("water", "protein", "fat", "carbohydrate", "fiber", "ash")

#: Components that must be stated (fiber and ash default to 0).
REQUIRED_COMPONENTS: tuple[str, ...] = ("water", "protein", "fat", "carbohydrate")

#: Largest allowed distance of the sum of the mass fractions from 1.
SUM_TOLERANCE: float = 0.005

DEFAULT_FIELD_PREFIX = "product.composition"


@dataclass(frozen=True)
class Composition:
    """Mass fractions [kg/kg] of the six proximate components of a food.

    Each fraction lies in [0, 1], the water fraction is above 0 and the fractions sum to 1 within
    0.005; otherwise :class:`~procplan.errors.InvalidInputError` names the field (all bad fields at once).

    >>> c = Composition(water=0.74, protein=0.22, fat=0.03, carbohydrate=0.0, ash=0.01)
    >>> c.solids
    0.26
    >>> Composition(water=0.70, protein=0.20, fat=0.05, carbohydrate=0.0)
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: product.composition = 0.95: allowed mass fractions summing to 1 within 0.005 (the fractions sum to 0.9500, 0.0500 below 1)
    """

    water: float
    protein: float
    fat: float
    carbohydrate: float
    fiber: float = 0.0
    ash: float = 0.0
    field_prefix: InitVar[str] = DEFAULT_FIELD_PREFIX

    def __post_init__(self, field_prefix: str) -> None:
        problems = Collector(field_prefix)
        values: dict[str, float] = {}
        for name in COMPONENT_NAMES:
            with problems.catch():
                values[name] = validate.fraction(f"{field_prefix}.{name}", getattr(self, name))
        problems.raise_if_any()
        for name, value in values.items():
            object.__setattr__(self, name, value)
        if values["water"] <= 0.0:
            raise InvalidInputError(
                f"{field_prefix}.water",
                values["water"],
                "(0, 1]",
                "the property and freezing models need some water",
            )
        total = sum(values.values())
        off = total - 1.0
        if abs(off) > SUM_TOLERANCE:
            side = "above" if off > 0 else "below"
            raise InvalidInputError(
                field_prefix,
                round(total, 6),
                f"mass fractions summing to 1 within {SUM_TOLERANCE:g}",
                f"the fractions sum to {total:.4f}, {abs(off):.4f} {side} 1",
            )

    # --- constructors and views ------------------------------------------------------------
    @classmethod
    def from_mapping(
        cls, mapping: Mapping[str, Any], field_prefix: str = DEFAULT_FIELD_PREFIX
    ) -> Composition:
        """Build a composition from a mapping such as a plan file's ``[product.composition]`` table.

        Unknown component names and missing required ones are reported together with the names allowed.

        >>> Composition.from_mapping({"water": 0.8, "protein": 0.2, "fat": 0, "carbohydrate": 0}).protein
        0.2
        >>> Composition.from_mapping({"water": 0.8, "protien": 0.2, "fat": 0, "carbohydrate": 0})
        Traceback (most recent call last):
        ...
        procplan.errors.ValidationErrors: 2 problem(s) in product.composition:
          - product.composition.protien = 0.2: allowed one of water, protein, fat, carbohydrate, fiber, ash (unknown component)
          - product.composition.protein = None: allowed a mass fraction in [0, 1] (missing: write 0 if the food has none)
        """
        if not isinstance(mapping, Mapping):
            raise InvalidInputError(
                field_prefix, mapping, "a table of mass fractions: " + ", ".join(COMPONENT_NAMES)
            )
        problems = Collector(field_prefix)
        allowed = "one of " + ", ".join(COMPONENT_NAMES)
        for key in mapping:
            if key not in COMPONENT_NAMES:
                problems.add(
                    InvalidInputError(f"{field_prefix}.{key}", mapping[key], allowed, "unknown component")
                )
        for key in REQUIRED_COMPONENTS:
            if key not in mapping:
                problems.add(
                    InvalidInputError(
                        f"{field_prefix}.{key}",
                        None,
                        "a mass fraction in [0, 1]",
                        "missing: write 0 if the food has none",
                    )
                )
        problems.raise_if_any()
        return cls(**{k: mapping[k] for k in COMPONENT_NAMES if k in mapping}, field_prefix=field_prefix)

    def to_dict(self) -> dict[str, float]:
        """The six mass fractions as a plain dict (component name → fraction)."""
        return {f.name: float(getattr(self, f.name)) for f in fields(self)}

    @property
    def total(self) -> float:
        """Sum of the six fractions (within 0.005 of 1)."""
        return float(sum(getattr(self, n) for n in COMPONENT_NAMES))

    @property
    def solids(self) -> float:
        """Mass fraction of everything but water [kg/kg]."""
        return round(self.total - self.water, 12)

    def normalized(self) -> dict[str, float]:
        """Fractions scaled to sum to exactly 1 (the property models use these)."""
        s = self.total
        return {n: float(getattr(self, n)) / s for n in COMPONENT_NAMES}
