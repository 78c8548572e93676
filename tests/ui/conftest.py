"""Shared set-up of the app tests: one copy of the demo library per session, so saving never touches the
repository and every test shares the cached calculations."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

APP = Path(__file__).resolve().parents[2] / "app.py"


@pytest.fixture(scope="session")
def library_copy(tmp_path_factory) -> Path:
    from procplan.files.library import DEMO_LIBRARY

    root = tmp_path_factory.mktemp("library") / "product_library"
    shutil.copytree(DEMO_LIBRARY, root)
    return root


@pytest.fixture()
def app(library_copy, monkeypatch):
    """A fresh app session (the library copy is shared, the session state is not)."""
    from streamlit.testing.v1 import AppTest

    monkeypatch.setenv("PROCPLAN_LIBRARY", str(library_copy))
    at = AppTest.from_file(str(APP), default_timeout=180)
    at.run()
    assert not at.exception, at.exception
    return at
