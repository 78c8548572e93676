"""The app's °C/°F and min/h choice reaches the downloaded sheet and the CSV headers."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
from pypdf import PdfReader


def _plan_text(library_copy, monkeypatch) -> str:
    monkeypatch.setenv("PROCPLAN_LIBRARY", str(library_copy))
    from procplan.files.library import load_library
    from procplan.files.plan import plan_to_toml

    return plan_to_toml(load_library(library_copy).plan("roulade-blast-chill"))


def test_history_csv_in_the_chosen_units(library_copy, monkeypatch):
    from procplan.ui import adapter

    text = _plan_text(library_copy, monkeypatch)
    si = pd.read_csv(io.BytesIO(adapter.history_csv(text, 0, "C", "min")))
    us = pd.read_csv(io.BytesIO(adapter.history_csv(text, 0, "F", "h")))
    assert {"time_min", "core_C"} <= set(si.columns)
    assert {"time_h", "core_F", "surface_F", "mean_F"} <= set(us.columns) and "core_C" not in us.columns
    # Source: the Fahrenheit scale's definition, °F = 1.8 °C + 32 (NIST SP 811, 2008, §B.9).
    np.testing.assert_allclose(us["core_F"], 1.8 * si["core_C"] + 32.0, rtol=0, atol=1e-9)
    np.testing.assert_allclose(us["time_h"] * 60.0, si["time_min"], rtol=1e-12)


def test_sheet_in_the_chosen_units(library_copy, monkeypatch):
    from procplan.ui import adapter

    text = _plan_text(library_copy, monkeypatch)

    def text_of(**units) -> str:
        out = adapter.sheet_pdf(text, 0, **units)
        assert out.ok
        return "".join(p.extract_text() for p in PdfReader(io.BytesIO(out.value)).pages)

    assert "°F" not in text_of()  # the demo site prints °C
    assert "°F" in text_of(temperature_unit="F", time_unit="h")
