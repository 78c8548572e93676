"""The product library: validation of every file, broken files listed, atomic and safe saving."""

from __future__ import annotations

import re
import shutil
import sys

import pytest

from procplan.errors import InvalidInputError
from procplan.files.library import DEMO_LIBRARY, load_library, save_product
from procplan.files.product import product_from_dict

SHAPES = {"slab", "cylinder", "sphere", "finite-cylinder", "brick"}


def test_demo_library_loads_clean_and_covers_all_shapes():
    lib = load_library()
    assert lib.problems == []
    assert len(lib.products) >= 12
    assert {p.geometry.shape for p in lib.products.values()} == SHAPES


def test_one_broken_file_is_listed_and_the_good_ones_still_load(tmp_path):
    root = tmp_path / "lib"
    shutil.copytree(DEMO_LIBRARY, root)
    n_good = len(load_library(root).products)
    (root / "products" / "broken.toml").write_text(
        "shape = 'slab'\nthickness_mm = -3\n[composition]\nwater = 2\n"
    )
    (root / "products" / "garbled.toml").write_text("this is = = not toml")
    lib = load_library(root)
    assert len(lib.products) == n_good
    bad = {p.path.rsplit("/", 1)[-1] for p in lib.problems}
    assert bad == {"broken.toml", "garbled.toml"}
    reasons = " ".join(p.reason for p in lib.problems)
    assert "thickness_mm" in reasons and "TOML" in reasons


def test_save_product_is_atomic_refuses_overwrite_and_bad_names(tmp_path):
    lib = load_library()
    prod = next(iter(lib.products.values()))
    path = save_product(tmp_path, prod)
    assert path.exists() and not list(path.parent.glob(".*.tmp"))
    with pytest.raises(InvalidInputError):
        save_product(tmp_path, prod)
    for name in ("../escape", "/abs", "UPPER", ""):
        bad = product_from_dict(
            {
                "name": "x",
                "shape": "sphere",
                "diameter_mm": 30,
                "composition": {"water": 1.0, "protein": 0.0, "fat": 0.0, "carbohydrate": 0.0},
            }
        )
        object.__setattr__(bad, "name", name)
        with pytest.raises(InvalidInputError):
            save_product(tmp_path, bad)
    again = load_library_product(path)
    assert again.geometry == prod.geometry and again.composition == prod.composition


def load_library_product(path):
    from procplan.files.tomlfile import read_toml

    return product_from_dict(read_toml(path), str(path), prefix="")


def test_import_procplan_does_not_import_streamlit():
    import subprocess

    code = "import procplan, procplan.run.engine, procplan.files.library, sys; assert 'streamlit' not in sys.modules"
    subprocess.run([sys.executable, "-c", code], check=True)


# --- declared quantities against geometry × density ---------------------------------------------------

#: A mass or a volume in a description: "400 g", "about 2.4 kg", "500 ml", "1 l".
QUANTITY = re.compile(r"(\d+(?:\.\d+)?)\s*(kg|g|ml|l)\b")
TO_SI = {"kg": 1.0, "g": 1e-3, "ml": 1e-6, "l": 1e-3}  # kg or m³


def declared_quantity(description: str) -> tuple[float, str]:
    """The product's declared net quantity: the last mass or volume in its description (a vial's
    "10 ml type I glass vial ... filled 8 ml" declares its 8 ml fill), as (kg or m³, "mass" or "volume")."""
    found = QUANTITY.findall(description)
    assert found, f"no declared mass or volume in {description!r}"
    value, unit = found[-1]
    return float(value) * TO_SI[unit], "volume" if unit in ("ml", "l") else "mass"


@pytest.mark.parametrize("name", sorted(load_library().products))
def test_declared_mass_or_volume_matches_geometry_within_5_percent(name):
    # Consistency of the demo data (labels a technologist reads against what the solver weighs): a declared
    # volume is compared with the shape's volume; a declared mass with volume × density, the density from
    # the product's property model (porosity included) at 20 °C, the temperature at which a label's net
    # quantity is stated. 5 % leaves room for a label's rounding ("about 2.5 kg").
    product = load_library().products[name]
    declared, kind = declared_quantity(product.description)
    volume_m3 = product.geometry.volume_m3
    if kind == "volume":
        actual = volume_m3
    else:
        actual = volume_m3 * float(product.property_table().density(20.0))
    assert abs(actual / declared - 1.0) <= 0.05, (name, kind, declared, actual)


def test_aerated_demo_products_carry_their_air():
    # The frozen dessert is whipped (overrun) and the loaf's crumb is porous: without air their density
    # and conductivity would be those of the unfrozen mix and of a bubble-free dough.
    lib = load_library()
    assert lib.products["vanilla-dessert-tub"].porosity > 0.3
    assert lib.products["sourdough-loaf"].porosity > 0.5


# --- porosity in product files ---------------------------------------------------------------------

MIX = {"water": 0.61, "protein": 0.04, "fat": 0.12, "carbohydrate": 0.22, "ash": 0.01}


def _tub(**extra):
    return {
        "name": "tub",
        "shape": "sphere",
        "diameter_mm": 80,
        "category": "other",
        "freezing_C": -2.7,
        "composition": MIX,
        **extra,
    }


def test_overrun_is_read_as_porosity_and_written_back_as_porosity(tmp_path):
    from procplan.files.plan import product_to_dict

    p = product_from_dict(_tub(overrun_percent=100), prefix="")
    assert p.porosity == pytest.approx(0.5)
    d = product_to_dict(p)
    assert d["porosity"] == pytest.approx(0.5) and "overrun_percent" not in d
    again = load_library_product(save_product(tmp_path, p))
    assert again.porosity == p.porosity
    assert product_from_dict(_tub(porosity=0.3), prefix="").porosity == 0.3
    assert product_from_dict(_tub(), prefix="").porosity == 0.0
    assert "porosity" not in product_to_dict(product_from_dict(_tub(), prefix=""))


@pytest.mark.parametrize(
    ("extra", "field", "allowed"),
    [
        ({"porosity": 0.95}, "porosity", "[0, 0.9]"),
        ({"overrun_percent": -10}, "overrun_percent", "[0, 900] %"),
        ({"porosity": 0.5, "overrun_percent": 100}, "overrun_percent", "either porosity or overrun_percent"),
    ],
)
def test_bad_porosity_names_the_field_and_the_allowed_range(extra, field, allowed):
    with pytest.raises(InvalidInputError) as err:
        product_from_dict(_tub(**extra), prefix="")
    assert field in str(err.value) and allowed in str(err.value)


def test_porosity_is_refused_with_measured_properties():
    fixed = {"k_W_mK": 0.2, "rho_kg_m3": 550, "cp_J_kgK": 3000}
    data = {k: v for k, v in _tub(porosity=0.5).items() if k != "composition"}
    with pytest.raises(InvalidInputError, match="measured properties already include the air"):
        product_from_dict({**data, "fixed_properties": fixed}, prefix="")
