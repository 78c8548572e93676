"""Units on the batch-plan sheet: a rule's limits print as its source publishes them in the site's unit
(the FDA Food Code's 70 °F, not 69.8 °F), and times of an hour or more read h:mm in every table."""

from __future__ import annotations

import dataclasses
import io
import re

import pytest
from pypdf import PdfReader

from procplan.files.library import load_library
from procplan.files.site import load_site
from procplan.output.sheet import batch_sheet_pdf
from procplan.run.engine import run_plan

#: Coarse grid: the sheet's texts, not the solver's accuracy, are under test here.
N_NODES = 12


def _text(pdf: bytes) -> str:
    return " ".join(" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(pdf)).pages)


@pytest.fixture(scope="module")
def roulade():
    lib = load_library()
    return run_plan(lib.plan("roulade-blast-chill"), library=lib, n_nodes=N_NODES)


@pytest.fixture(scope="module")
def sheets(roulade):
    site = load_site()
    out = {}
    for unit in ("C", "F"):
        s = dataclasses.replace(site, temperature_unit=unit)
        out[unit] = _text(batch_sheet_pdf(roulade, site=s, date="2026-03-02"))
    return out


def test_fahrenheit_sheet_prints_the_food_code_figures(roulade, sheets):
    # Source: US FDA Food Code 2022 §3-501.14(A): 135 °F → 70 °F within 2 h, → 41 °F within 6 h in total.
    assert roulade.outcomes.rule_check.rule_name == "us-food-code-two-stage"
    text = sheets["F"]  # the PDF font has no arrow: the sheet prints "to" (see output.sheet.printable)
    assert "135 °F to 70 °F" in text and "70 °F to 41 °F" in text
    assert "≤ 70 °F" in text and "≤ 41 °F" in text  # the rule checkpoints' action limits
    assert "69.8" not in text


def test_celsius_sheet_prints_the_food_code_figures(sheets):
    # Source: US FDA Food Code 2022 §3-501.14(A): 57 °C → 21 °C within 2 h, → 5 °C within 6 h in total.
    text = sheets["C"]
    assert "57 °C to 21 °C" in text and "21 °C to 5 °C" in text and "≤ 21 °C" in text
    assert "57.2" not in text


def test_times_of_an_hour_or_more_read_h_mm_in_every_table(roulade, sheets):
    for text in sheets.values():
        assert "within 2:00 h" in text and "within 6:00 h" in text
        minutes = [float(v) for v in re.findall(r"(-?\d+(?:\.\d+)?) min\b", text)]
        # minutes only below the hour; the chart's axis title says [min] without a number
        assert all(abs(v) < 60.0 for v in minutes), minutes
        assert re.search(r"\b\d+:\d\d h\b", text)
    used = roulade.outcomes.rule_check.stages[1].used_min
    assert used >= 60.0
    whole = round(used)
    assert f"{whole // 60}:{whole % 60:02d} h" in sheets["C"]
