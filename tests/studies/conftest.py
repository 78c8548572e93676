"""Small plans shared by the study tests: fixed properties and given h, so the engine's exact solver runs."""

from __future__ import annotations

from pathlib import Path

import pytest

from procplan.files.library import Library
from procplan.files.rules import rule_from_dict
from procplan.files.tomlfile import read_toml
from procplan.geometry import Geometry
from procplan.model import Checks, FixedProperties, Plan, Product, Step

ROOT = Path(__file__).resolve().parents[2]


def lumped_sphere_plan(h_W_m2K: float = 20.0, *, margin_percent: float = 0.0) -> Plan:
    """A 20 mm sphere with a very large k (Bi ≈ 1e-5: a lumped body) cooled from 80 °C in air at 20 °C."""
    prod = Product(
        "ball", Geometry("sphere", diameter_m=0.02), fixed_properties=FixedProperties(1.0e4, 8500.0, 400.0)
    )
    return Plan(
        "ball",
        prod,
        80.0,
        (Step("cool", 3600.0, 30.0, medium_C=20.0, h_W_m2K=h_W_m2K),),
        checks=Checks(margin_percent=margin_percent),
    )


def cylinder_plan(rule: str | None = None) -> Plan:
    """A 60 mm cylinder of water-like constant properties chilled from 70 °C in air at 0 °C, h = 25 W/m²K."""
    prod = Product(
        "cyl", Geometry("cylinder", diameter_m=0.06), fixed_properties=FixedProperties(0.5, 1050.0, 3600.0)
    )
    return Plan(
        "cyl",
        prod,
        70.0,
        (Step("chill", 6 * 3600.0, 5.0, medium_C=0.0, h_W_m2K=25.0),),
        checks=Checks(cooling_rule=rule),
    )


@pytest.fixture(scope="session")
def rules_library() -> Library:
    """A library holding only the demo rule files (no machines: nothing slow to load)."""
    lib = Library(root=ROOT / "product_library")
    for f in sorted((ROOT / "product_library" / "rules").glob("*.toml")):
        data = read_toml(f)
        data.setdefault("name", f.stem)
        lib.rules[f.stem] = rule_from_dict(data, str(f))
    return lib
