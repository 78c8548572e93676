"""Excel workbooks: read back with openpyxl and pandas, the numbers equal the library's, units in headers.

°F values are checked against the definition t/°F = 1.8·t/°C + 32 (NIST SP 811, 2008, B.9).
"""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

openpyxl = pytest.importorskip("openpyxl")

from procplan.caution import CAUTION  # noqa: E402
from procplan.cli.main import main  # noqa: E402
from procplan.files.library import load_library  # noqa: E402
from procplan.output import xlsx  # noqa: E402
from procplan.run.engine import run_plan  # noqa: E402

FAST_PLAN = "vial-excursion"  # one step on the exact series: milliseconds


@pytest.fixture(scope="module")
def result():
    lib = load_library()
    return run_plan(lib.plan(FAST_PLAN), library=lib)


def _sheets(data: bytes) -> dict[str, pd.DataFrame]:
    return pd.read_excel(io.BytesIO(data), sheet_name=None)


def test_run_workbook_holds_the_history_with_units_in_the_headers(result):
    book = _sheets(xlsx.run_workbook(result))
    assert list(book) == ["About", "Summary", "History"]
    hist = book["History"]
    assert list(hist.columns[:6]) == [
        "time [s]",
        "time [min]",
        "core [°C]",
        "surface [°C]",
        "mean [°C]",
        "heat flow [W]",
    ]
    assert_allclose(hist["core [°C]"], result.history["core_C"], rtol=1e-12)
    assert_allclose(hist["time [min]"], result.history["time_s"] / 60.0, rtol=1e-12)
    assert not any("_" in str(c) for c in hist.columns)


def test_fahrenheit_and_hours_follow_the_definition(result):
    hist = _sheets(xlsx.run_workbook(result, "F", "h"))["History"]
    assert_allclose(hist["core [°F]"], 1.8 * result.history["core_C"] + 32.0, rtol=1e-12)
    assert_allclose(hist["time [h]"], result.history["time_s"] / 3600.0, rtol=1e-12)


def test_every_sheet_carries_the_caution(result):
    wb = openpyxl.load_workbook(io.BytesIO(xlsx.run_workbook(result)))
    about = wb["About"]
    assert any(row[1] == CAUTION for row in about.iter_rows(values_only=True))
    for ws in wb.worksheets[1:]:
        assert ws.oddFooter.center.text == CAUTION


def test_summary_numbers_are_the_outcomes(result):
    summary = _sheets(xlsx.run_workbook(result))["Summary"].set_index("quantity")
    en = result.outcomes.energy
    assert_allclose(
        float(summary.loc["heat removed per batch", "value"]), en.heat_removed_J_per_batch / 3.6e6
    )
    assert_allclose(float(summary.loc["piece mass", "value"]), result.piece_mass_kg)


def test_headers_and_sheet_names():
    assert xlsx.header("peak_duty_kW") == "peak duty [kW]"
    assert xlsx.header("packaging_resistance_m2K_W") == "packaging resistance [m²K/W]"
    long = pd.DataFrame({"a": [1.0, np.nan, np.inf], "b": ["x", "y", "z"]})
    sheets = [
        xlsx.Sheet("x" * 40, "long", long),
        xlsx.Sheet("x" * 40, "again", long),
        xlsx.Sheet("a/b:c", "odd", long),
    ]
    wb = openpyxl.load_workbook(io.BytesIO(xlsx.workbook_bytes("t", sheets)))
    names = wb.sheetnames
    assert len(set(n.lower() for n in names)) == len(names) == 4
    assert all(len(n) <= 31 and not set(n) & set("[]:*?/\\") for n in names)
    # NaN and infinity are empty cells, not text
    ws = wb[names[1]]
    assert [c.value for c in ws["A"]][:2] == ["a", 1] and ws["A3"].value is None and ws["A4"].value is None
    assert [c.value for c in ws["B"]] == ["b", "x", "y", "z"]


def test_cli_run_writes_a_workbook_atomically_and_refuses_to_overwrite(tmp_path, capsys):
    out = tmp_path / "run.xlsx"
    assert main(["run", FAST_PLAN, "--xlsx", str(out)]) == 0
    first = out.read_bytes()
    assert "History" in _sheets(first)
    assert main(["run", FAST_PLAN, "--xlsx", str(out)]) == 2
    assert "--force" in capsys.readouterr().err
    assert out.read_bytes() == first
    assert main(["run", FAST_PLAN, "--xlsx", str(out), "--force"]) == 0
    assert main(["run", FAST_PLAN, "--xlsx", str(tmp_path / "run.csv")]) == 2
    assert not list(tmp_path.glob("*.tmp*"))


def test_cli_compare_workbook_lists_the_differing_settings(tmp_path):
    from procplan.files.tomlfile import dump_toml, read_toml

    lib = load_library()
    data = read_toml(lib.plans[FAST_PLAN])
    data["start"]["temperature_C"] = float(data["start"]["temperature_C"]) + 2.0
    data["title"] = "warmer start"
    other = tmp_path / "warmer.toml"
    other.write_text(dump_toml(data))
    out = tmp_path / "cmp.xlsx"
    assert main(["compare", FAST_PLAN, str(other), "--xlsx", str(out), "--quiet"]) == 0
    book = _sheets(out.read_bytes())
    assert {"Comparison", "Differences"} <= set(book)
    diff = book["Differences"].set_index("input")
    assert list(diff.index) == ["start: temperature [°C]"]
    assert float(diff.iloc[0, 1]) - float(diff.iloc[0, 0]) == pytest.approx(2.0)
    assert "time to target [min]" in book["Comparison"].columns
