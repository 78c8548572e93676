"""End to end in a real headless browser: start `streamlit run app.py`, change a machine setting, see the
predicted time change, download the batch-plan sheet and check that it is a PDF."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from tests.ui.browser_helpers import app_page, go, idle, time_to_target, wait_time_to_target_changes


@pytest.mark.browser
def test_setting_change_and_sheet_download_in_a_real_browser(tmp_path):
    with app_page(tmp_path) as page:
        before = time_to_target(page)
        go(page, "Process")
        air = page.get_by_label(re.compile(r"^Air temperature")).first
        air.fill("-15")
        air.press("Enter")
        idle(page)
        after = wait_time_to_target_changes(page, before)
        assert after < before, (before, after)
        page.locator('[data-testid="stSidebar"]').get_by_text("Sheet & files", exact=True).click()
        page.wait_for_selector("text=/Download the batch-plan sheet/", timeout=120_000)
        button = page.get_by_role("button", name="Download the batch-plan sheet")
        if button.count() == 0:
            pytest.skip("procplan.output.sheet is not in this build")
        with page.expect_download(timeout=60_000) as info:
            button.click()
        pdf = Path(info.value.path()).read_bytes()
        assert pdf.startswith(b"%PDF")
