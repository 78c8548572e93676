"""Where the demo library of the invented Harrowgate Fields plant lives.

In a source checkout (editable install) it is the project's top-level ``product_library/`` folder; a built
wheel carries a copy of that folder as the package data ``procplan/demo_library`` (``setup.py`` maps it in at
build time), read through :mod:`importlib.resources`, so an installed ``procplan`` works from any directory.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

#: The library folder inside an installed wheel (package data of procplan).
PACKAGED_NAME = "demo_library"


def demo_library_path() -> Path:
    """The folder of the demo library: the source tree's ``product_library/`` or the wheel's packaged copy."""
    source = Path(__file__).resolve().parents[2] / "product_library"
    if (source / "site.toml").is_file():
        return source
    return Path(str(resources.files("procplan").joinpath(PACKAGED_NAME)))
