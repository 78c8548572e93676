"""Every download of the app in a real headless browser: the workbook (read back with openpyxl), the plan
file, the history CSV, the result JSON and a chart as PNG from the chart's own camera button."""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest

from tests.ui.browser_helpers import app_page, idle


def _download(page, name: str) -> bytes:
    with page.expect_download(timeout=120_000) as info:
        page.get_by_role("button", name=name).click()
    return Path(info.value.path()).read_bytes()


@pytest.mark.browser
def test_every_download_opens(tmp_path):
    import openpyxl

    from procplan.caution import CAUTION
    from procplan.files.tomlfile import parse_toml

    with app_page(tmp_path) as page:
        idle(page)
        # a chart as PNG through its own toolbar (plotly draws the image in the browser)
        chart = page.locator('[data-testid="stPlotlyChart"]').first
        chart.hover()
        with page.expect_download(timeout=60_000) as info:
            chart.locator('.modebar-btn[data-title^="Download plot"]').first.click()
        assert Path(info.value.path()).read_bytes().startswith(b"\x89PNG\r\n\x1a\n")
        assert info.value.suggested_filename == "temperatures.png"

        page.locator('[data-testid="stSidebar"]').get_by_text("Sheet & files", exact=True).click()
        page.wait_for_selector("text=/Download the workbook/", timeout=120_000)
        idle(page)
        book = openpyxl.load_workbook(io.BytesIO(_download(page, "Download the workbook")))
        assert book.sheetnames == ["About", "Summary", "History"]
        assert [c.value for c in book["History"][1]][:3] == ["time [s]", "time [min]", "core [°C]"]
        assert any(CAUTION in str(r[1]) for r in book["About"].iter_rows(values_only=True))
        plan = parse_toml(_download(page, "Download the plan file").decode(), "plan")
        assert plan["steps"][0]["equipment"] == "chiller-b2"
        csv = _download(page, "Download the history").decode()
        assert csv.splitlines()[0].startswith("time_s,time_min,core_C")
        doc = json.loads(_download(page, "Download the result"))
        assert doc["schema"] == "procplan-result" and doc["summary"]["steps"]
