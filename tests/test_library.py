"""The product library: validation of every file, broken files listed, atomic and safe saving."""

from __future__ import annotations

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
